"""Unbranched beam chains and the warning for meshes finer than the tangent resolves."""
import warnings

import pytest

import largerot as lr
from largerot import demo
from largerot.assembly import Assembly
from largerot.mesh_check import CHAIN_LIMIT, beam_chains


def _portal(segments):
    s = lr.Structure()
    sec = lr.Section(E=210e9, A=1e-2, I=1e-4)
    a, b, c, d = s.node(0, 0), s.node(0, 4), s.node(6, 4), s.node(6, 0)
    for p, q in ((a, b), (b, c), (c, d)):
        s.beam(p, q, sec, segments=segments)
    s.fix(a)
    s.fix(d)
    return s


def test_a_portal_between_its_supports_is_one_chain():
    # a chain runs through every node that joins exactly two elements, the rigid
    # corners included (the frame bends as one line between its supports)
    labels, sizes = beam_chains(_portal(5).snapshot())
    assert sizes.tolist() == [15]
    assert len(labels) == 15


def test_supports_springs_branches_and_contacts_end_chains():
    s = lr.Structure()
    sec = lr.Section(E=210e9, A=1e-2, I=1e-4)
    a, b, c = s.node(0, 0), s.node(4, 0), s.node(8, 0)
    s.beam(a, b, sec, segments=4)
    s.beam(b, c, sec, segments=6)
    s.fix(a)
    s.fix(b, "uy")                                  # a support in the middle
    assert sorted(beam_chains(s.snapshot())[1].tolist()) == [4, 6]
    top = s.node(4, 3)
    s.beam(b, top, sec, segments=3)                 # a branch at the same node
    assert sorted(beam_chains(s.snapshot())[1].tolist()) == [3, 4, 6]
    s2 = lr.Structure()
    a, c = s2.node(0, 0), s2.node(8, 0)
    s2.beam(a, c, sec, segments=8)
    s2.fix(a)
    mid = s2.members[0].nodes[4]
    s2.spring(mid, "uy", 1e3)
    assert sorted(beam_chains(s2.snapshot())[1].tolist()) == [4, 4]


@pytest.mark.parametrize("segments, warns", [(CHAIN_LIMIT, False), (CHAIN_LIMIT + 1, True)])
def test_a_chain_beyond_the_limit_warns_naming_its_member(segments, warns):
    s, _, _ = demo.lighting_pole(segments=segments)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        Assembly.of(s)
    found = [w for w in caught if issubclass(w.category, lr.MeshWarning)]
    assert bool(found) == warns
    if warns:
        assert "member(s) 0" in str(found[0].message)
        assert f"{CHAIN_LIMIT + 1:,}" in str(found[0].message)


def test_cables_at_a_node_end_the_chain():
    # the mast's top joins its last beam element and two guys
    s, _ = demo.guyed_mast(segments=12)
    assert beam_chains(s.snapshot())[1].tolist() == [12]
