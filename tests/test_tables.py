"""Structures as tables: the round trip of every example structure, CSV, a hand-typed model.

The references: the structure itself (``Structure.from_tables(**s.to_tables())`` must
give a snapshot equal bit for bit, and a short trace of both must give the same
points bit for bit), and for a model typed as a spreadsheet would hold it, the
small-deflection cantilever tip deflection P·L³/(3EI) (common practice, no source).
"""
import dataclasses
import warnings

import numpy as np
import pandas as pd
import pytest

import largerot as lr
from largerot import demo, examples
from largerot.fibres import FibreSection
from largerot.tables import Tables


# -- exact comparison of two snapshots ---------------------------------------------------
def same(a, b, where="model"):
    """Assert a and b equal bit for bit (arrays, floats, nested tuples and objects)."""
    if isinstance(a, np.ndarray):
        assert isinstance(b, np.ndarray), where
        assert a.dtype == b.dtype and a.shape == b.shape, (where, a.dtype, b.dtype, a.shape, b.shape)
        if a.dtype == object:
            assert a.tolist() == b.tolist(), where
        else:
            assert a.tobytes() == b.tobytes(), (where, a, b)
    elif isinstance(a, (float, np.floating)) or isinstance(b, (float, np.floating)):
        # a Python float or a numpy one (the model keeps either): the same 64 bits
        assert isinstance(b, (float, np.floating)) and isinstance(a, (float, np.floating)), where
        assert np.float64(a).tobytes() == np.float64(b).tobytes(), (where, a, b)
    elif isinstance(a, (tuple, list)):
        assert type(a) is type(b) and len(a) == len(b), (where, a, b)
        for k, (x, y) in enumerate(zip(a, b)):
            same(x, y, f"{where}[{k}]")
    elif isinstance(a, dict):
        assert a.keys() == b.keys(), where
        for k in a:
            same(a[k], b[k], f"{where}[{k!r}]")
    elif dataclasses.is_dataclass(a) and not isinstance(a, type):
        assert type(a) is type(b), (where, type(a), type(b))
        for f in dataclasses.fields(a):
            same(getattr(a, f.name), getattr(b, f.name), f"{where}.{f.name}")
    else:
        assert type(a) is type(b) and a == b, (where, a, b)


def same_snapshot(s1, s2):
    m1, m2 = s1.snapshot(), s2.snapshot()
    same(m1, m2)
    # sections are shared by identity: the same member→section pattern
    for x, y in zip(m1.members, m2.members):
        assert m1.sections.index(x.section) == m2.sections.index(y.section)


def round_trip(s):
    return lr.Structure.from_tables(**s.to_tables())


def short_trace(s):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", lr.InputWarning)
        return lr.trace(s, lr.by_arc_length(), max_steps=3)


# -- structures using every feature -------------------------------------------------------
SEC = lr.Section.tube(E=210e9, diameter=0.1, wall=0.005, density=7850.0, fy=355e6)


def hinged_frame():
    """A portal with a hinge, a semi-rigid joint, a polyline and a spring; kN-m, names."""
    s = lr.Structure(units="kN-m", name="Portal, 6 m, with a hinge")
    a, b = s.node(0.0, 0.0, name="left foot"), s.node(0.0, 4.0, name="left knee")
    c, d = s.node(6.0, 4.0, name="right knee"), s.node(6.0, 0.0, name="right foot")
    s.beam(a, b, SEC, segments=4, name="left post")
    s.beam(b, c, SEC, segments=6, hinge="start", name="girder")
    s.beam(c, d, SEC, segments=4, hinge="end", hinge_stiffness=2.5e3)
    s.polyline([c, (8.0, 5.0), (9.0, 4.5)], SEC, segments=2, hinge="both", hinge_stiffness=1.0)
    s.fix(a)
    s.fix(d, "ux", "uy")
    s.spring(d, "rz", 1e4)
    s.spring(b, "ux", 3e3)
    s.load(c, fy=-10.0)
    s.load(b, fx=2.0, mz=0.5)
    s.load(c, fx=1.0)                 # a later fx on the same node: insertion order kept
    s.load(b, fy=-1.0, constant=True)
    s.load(b, fy=1.0, constant=True)  # cancels: a zero entry kept as given
    s.line_load("girder", qy=-1.5)
    s.line_load(0, normal=0.3, tangential=0.1, constant=True)
    return s


def arcs_and_timoshenko():
    """Arcs of three shapes, a shear-flexible section, imposed motion, an inclined roller."""
    deep = lr.Section.rectangle(E=10e9, width=0.2, depth=0.6, G=4e9)
    s = lr.Structure(units="N-mm", name="Arches")
    a, b, c = s.node(0.0, 0.0, name="a"), s.node(10.0, 0.0), s.node(20.0, 0.0)
    s.arc(a, b, deep, rise=2.5, segments=8, name="circle")
    s.arc(b, c, SEC, rise=1.0, segments=6, shape="parabola", hinge="both")
    s.arc(a, c, lr.Section(E=1e9, A=0.01, I=1e-5, G=3e8, shear_area=0.007), radius=-15.0, segments=5)
    s.arc(a, b, SEC, rise=-1.0, segments=2, shape="sine", kind="bar")
    s.fix(a, "ux", "uy")
    s.roller(c, direction=(1.0, 0.4))
    s.impose(a, "rz", 0.2)
    s.impose(b, "uy", -0.01, constant=True)
    s.impose(b, "uy", 0.003)
    s.load(s.members[0].nodes[4], fx=1.0, follower=True)
    s.load(s.members[1].nodes[2], fy=-0.5, follower=True, constant=True)
    s.mass(b, 120.0, inertia=3.5)                                  # a payload (dynamics)
    s.mass("a", 0.25)
    return s


def cables_and_contacts():
    """Sagging cables, gravity off the vertical, a fibre section, obstacles, a moved node."""
    s = lr.Structure(name="Cables")
    s.gravity(9.80665, direction=(0.1, -1.0))
    a, b, c = s.node(0.0, 0.0), s.node(10.0, 0.0), s.node(5.0, 3.0, name="top")
    rope = lr.Section(E=160e9, A=2e-4, density=7850.0)
    s.cable(a, b, rope, unstretched_length=10.7)                  # sags: hanging chain
    s.cable(a, c, rope, segments=3, pretension=1e3)
    s.cable(b, c, rope, segments=7, unstretched_length=5.83)
    fs = FibreSection.i_shape(E=210e9, fy=355e6, h=0.3, b=0.15, tw=0.007, tf=0.01, H=2e9, density=7850.0)
    post = s.beam(c, s.node(5.0, 8.0, name="mast top"), fs, segments=5)
    s.bar(b, "mast top", lr.Section(E=70e9, A=1e-4))
    s.fix(a)
    s.fix(b, "ux", "uy")
    s.fix(c, "ux", "uy")
    wall, stop = lr.Line(point=(6.0, 0.0), normal=(-1.0, 0.3)), lr.Circle(centre=(4.0, 6.0), radius=0.5)
    s.contact(post.nodes[2:], wall)
    s.contact(post.nodes[-1], stop)
    s.contact(post.nodes[-2], stop)
    s.load("mast top", fx=100.0)
    xy = s.xy
    xy[post.nodes[3]] += (1e-3, -2e-4)                             # an imperfection
    return s.moved(xy)


def _scenarios():
    out = {
        "two_bar_truss": examples.two_bar_truss().structure,
        "two_piece_cable": examples.two_piece_cable().structure,
        "inclined_cantilever": examples.inclined_cantilever(segments=8).structure,
        "toggle_frame": examples.toggle_frame().structure,
        "shallow_arch": examples.shallow_arch().structure,
        "shallow_arch_clamped": examples.shallow_arch(support="clamped", rise=0.5).structure,
        "deep_arch": examples.deep_arch().structure,
        "column_cantilever": examples.column().structure,
        "column_pinned": examples.column(kind="pinned").structure,
        "lighting_pole": demo.lighting_pole()[0],
        "guyed_mast": demo.guyed_mast()[0],
        "leaning_pole": demo.leaning_pole()[0],
        "hinged_frame": hinged_frame(),
        "arcs_and_timoshenko": arcs_and_timoshenko(),
        "cables_and_contacts": cables_and_contacts(),
    }
    return out


STRUCTURES = _scenarios()


def test_every_example_scenario_is_covered():
    # a new scenario of examples.py or a new demo structure must be added above
    wanted = [n for n in examples.__all__ if n != "Scenario"] + ["lighting_pole", "guyed_mast",
                                                                 "leaning_pole"]
    assert all(any(k.startswith(n) for k in STRUCTURES) for n in wanted), wanted


@pytest.mark.parametrize("key", list(STRUCTURES))
def test_round_trip_is_exact(key):
    s = STRUCTURES[key]
    back = round_trip(s)
    same_snapshot(s, back)
    # and the tables of the copy are the tables of the original
    for name, frame in s.to_tables().items():
        pd.testing.assert_frame_equal(frame, back.to_tables()[name], check_exact=True)


@pytest.mark.parametrize("key", ["shallow_arch", "guyed_mast", "leaning_pole", "hinged_frame",
                                 "arcs_and_timoshenko", "cables_and_contacts"])
def test_round_trip_traces_the_same_points(key):
    s = STRUCTURES[key]
    p1, p2 = short_trace(s), short_trace(round_trip(s))
    assert len(p1) == len(p2) >= 2
    if key == "cables_and_contacts":
        # two traces of this very structure (no tables involved) already differ in the
        # last bits of λ (measured: one ulp at the third point, depending on what was
        # traced before in the process): compare to round-off there
        np.testing.assert_allclose(p2.load_factor, p1.load_factor, rtol=1e-12)
        np.testing.assert_allclose(p2.u, p1.u, rtol=1e-10, atol=1e-12 * np.abs(p1.u).max())
        return
    assert p1.load_factor.tobytes() == p2.load_factor.tobytes()
    assert p1.u.tobytes() == p2.u.tobytes()


@pytest.mark.parametrize("key", list(STRUCTURES))
def test_csv_round_trip_is_exact(key, tmp_path):
    s = STRUCTURES[key]
    s.to_tables().to_csv(tmp_path)
    same_snapshot(s, lr.Structure.from_tables(**Tables.read_csv(tmp_path)))
    # each table given as the path of its file works too
    paths = {p.stem: str(p) for p in tmp_path.glob("*.csv")}
    same_snapshot(s, lr.Structure.from_tables(**paths))


def test_csv_read_by_plain_pandas_keeps_floats(tmp_path):
    # pandas' default parser (no round_trip option) also reads 17 digits back exactly here
    s = STRUCTURES["arcs_and_timoshenko"]
    s.to_tables().to_csv(tmp_path)
    frames = {p.stem: pd.read_csv(p) for p in tmp_path.glob("*.csv")}
    same_snapshot(s, lr.Structure.from_tables(**frames))


def test_the_tables_read_as_a_user_would_write_them():
    t = STRUCTURES["hinged_frame"].to_tables()
    assert list(t.structure.iloc[0]) == ["Portal, 6 m, with a hinge", "kN-m"]
    girder = t.members[t.members["name"] == "girder"].iloc[0]
    assert (girder["kind"], girder["hinge"], girder["segments"]) == ("beam", "start", 6)
    assert set(t.supports["kind"]) == {"fix", "spring"}
    assert t.supports.iloc[0]["dof"] == "ux uy rz"
    nodal = t.loads[t.loads["kind"] == "nodal"]
    assert len(nodal) == 4                   # b: fx, mz; c: fy; c: fx later; b constant fy
    assert set(t.loads["kind"]) == {"nodal", "line"}


def test_cable_lengths_survive_for_every_segment_count():
    # the whole unstretched length written divides back to the segment length exactly
    rope = lr.Section(E=160e9, A=2e-4)
    rng = np.random.default_rng(3)
    for n in range(1, 40):
        s = lr.Structure()
        a, b = s.node(0.0, 0.0), s.node(float(rng.uniform(1, 100)), float(rng.uniform(-5, 5)))
        s.cable(a, b, rope, segments=n, pretension=float(rng.uniform(0, 1e5)))
        same_snapshot(s, round_trip(s))


def test_sections_given_as_objects():
    s = STRUCTURES["leaning_pole"]
    t = s.to_tables()
    objects = {k: sec for k, sec in enumerate(s.sections)}
    back = lr.Structure.from_tables(t.nodes, t.members, t.supports, t.loads, sections=objects,
                                    contacts=t.contacts, structure=t.structure)
    same_snapshot(s, back)
    assert back.sections[0] is s.sections[0]


# -- a model typed as a spreadsheet would hold it ------------------------------------------------
def test_hand_typed_cantilever_against_PL3_over_3EI():
    """A 3 m steel cantilever, sections inline, 1-based thinking avoided by names."""
    E, b, h, L, P = 210e9, 0.05, 0.1, 3.0, 100.0
    I = b * h**3 / 12
    nodes = pd.DataFrame({"id": [0, 1], "x": [0.0, L], "y": [0.0, 0.0], "name": ["wall", "tip"]})
    members = pd.DataFrame({"start": ["wall"], "end": ["tip"], "segments": [10],
                            "section": ["flat bar"]})
    sections = pd.DataFrame({"id": ["flat bar"], "E": [E], "A": [b * h], "I": [I]})
    supports = pd.DataFrame({"node": ["wall"], "kind": ["fix"], "dof": [""]})
    loads = pd.DataFrame({"kind": ["nodal"], "node": ["tip"], "fy": [-P]})
    s = lr.Structure.from_tables(nodes, members, supports, loads, sections=sections)
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    assert path.status == "target"
    v = -path.displacement("tip", "uy")[-1]
    # common practice, no source: δ = P·L³/(3EI) for small deflections. Here
    # δ/L ≈ 1.2e-4, so the large-rotation answer differs from the linear one by
    # O((δ/L)²) ≈ 1e-8 relative; the beam element is exact for end loads.
    assert v == pytest.approx(P * L**3 / (3 * E * I), rel=1e-6)


def test_hand_typed_csv_with_arc_and_blank_cells(tmp_path):
    """A CSV typed by hand: blank cells, a roller, an arc by its rise, 0/1 flags."""
    (tmp_path / "nodes.csv").write_text("id,x,y,name\n0,0,0,left\n1,8,0,right\n")
    (tmp_path / "members.csv").write_text(
        "id,kind,start,end,segments,E,A,I,rise,hinge\n0,beam,left,right,12,2e11,0.01,1e-5,2,\n")
    (tmp_path / "supports.csv").write_text("node,kind,dof,value,dx,dy\nleft,fix,\"ux,uy\",,,\n"
                                           "right,roller,,,1,0\n")
    (tmp_path / "loads.csv").write_text("kind,node,fx,fy,constant\nnodal,7,,-1000,0\n")
    s = lr.Structure.from_tables(**{p.stem: str(p) for p in tmp_path.glob("*.csv")})
    # the crown: the 6th interior node of the arc, made after the two listed nodes (id 7)
    assert s.members[0].nodes[6] == 7
    assert s.xy[7].tolist() == pytest.approx([4.0, 2.0], abs=1e-12)
    assert s.snapshot().inclined_nodes.tolist() == [1]
    assert s.load_vector()[3 * 7 + 1] == -1000.0


def test_units_and_name_as_keywords():
    t = STRUCTURES["two_bar_truss"].to_tables()
    s = lr.Structure.from_tables(t.nodes, t.members, t.supports, t.loads, sections=t.sections,
                                 units="kip-in", name="Truss")
    assert (s.units.system, s.name) == ("kip-in", "Truss")
