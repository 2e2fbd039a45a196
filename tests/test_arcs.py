"""Curved members: s.arc, s.polyline and lr.geometry.arc_points. Sources beside each check."""
import math

import numpy as np
import pytest

import largerot as lr
from largerot import examples
from largerot.geometry import arc_points

SEC = lr.Section(E=2.0e11, A=1.0e-2, I=1.0e-4)


def _chord_frame(pts, p1, p2):
    d = np.subtract(p2, p1)
    c = float(np.hypot(*d))
    e = d / c
    rel = pts - p1
    return rel @ e, rel @ np.array([-e[1], e[0]]), c


@pytest.mark.parametrize("p1, p2, rise", [((0, 0), (10, 0), 2.0), ((1, 2), (-3, 5), 0.7),
                                           ((0, 0), (4, 0), -1.5), ((2, -1), (2, 3), 3.5)])
def test_circle_nodes_lie_on_the_circle(p1, p2, rise):
    # Every node at distance R from the centre, R = (c²/4 + f²)/(2f), the crown at
    # height f above the chord's middle, to the left of p1→p2 for f > 0 (circle
    # geometry, common practice, no source); round-off: 1e-14 of the size.
    s = lr.Structure()
    a, b = s.node(*p1), s.node(*p2)
    m = s.arc(a, b, SEC, rise=rise, segments=12)
    xy = s.xy[list(m.nodes)]
    x, y, c = _chord_frame(xy, p1, p2)
    R = (0.25 * c * c + rise * rise) / (2.0 * abs(rise))
    centre_y = math.copysign(1.0, rise) * (abs(rise) - R)
    assert np.abs(np.hypot(x - 0.5 * c, y - centre_y) - R).max() < 1e-14 * max(R, c)
    assert y[6] == pytest.approx(rise, rel=1e-14)         # the crown
    assert x[6] == pytest.approx(0.5 * c, abs=1e-14 * c)
    assert np.all(np.sign(y[1:-1]) == np.sign(rise))      # on the side the sign says
    # equal angles: equal element chords
    d = np.hypot(*np.diff(xy, axis=0).T)
    assert np.ptp(d) < 1e-13 * d.max()


def test_radius_gives_the_shorter_arc():
    # radius R through points a chord c apart: rise f = R − √(R² − c²/4) (circle
    # geometry, common practice, no source), to round-off.
    c, R = 6.0, 5.0
    pts = arc_points((0, 0), (c, 0), 8, radius=R)
    assert pts[4, 1] == pytest.approx(R - math.sqrt(R * R - c * c / 4), rel=1e-14)
    pts = arc_points((0, 0), (c, 0), 8, radius=-R)
    assert pts[4, 1] == pytest.approx(-(R - math.sqrt(R * R - c * c / 4)), rel=1e-14)


def test_deep_arc_is_more_than_a_semicircle():
    # rise above half the chord: the arc passes beyond the ends' abscissae (circle
    # geometry, common practice, no source).
    pts = arc_points((0, 0), (2, 0), 16, rise=1.8)
    assert pts[:, 0].min() < 0.0 and pts[:, 0].max() > 2.0
    R = (1 + 1.8**2) / 3.6
    assert np.abs(np.hypot(pts[:, 0] - 1.0, pts[:, 1] - (1.8 - R)) - R).max() < 1e-14


@pytest.mark.parametrize("shape", ["parabola", "sine"])
def test_parabola_and_sine_nodes_on_their_curves(shape):
    # y = 4f·x(c − x)/c² or y = f·sin(πx/c) in the chord frame (the shapes' definitions),
    # nodes at equal steps of x; to round-off.
    p1, p2, f = (1.0, 1.0), (7.0, 4.0), 1.2
    s = lr.Structure()
    a, b = s.node(*p1), s.node(*p2)
    m = s.arc(a, b, SEC, rise=f, segments=10, shape=shape)
    x, y, c = _chord_frame(s.xy[list(m.nodes)], p1, p2)
    ref = 4 * f * x * (c - x) / c**2 if shape == "parabola" else f * np.sin(np.pi * x / c)
    assert np.abs(y - ref).max() < 1e-14 * c
    assert np.allclose(np.diff(x), c / 10, rtol=1e-13)


@pytest.mark.parametrize("make", [examples.shallow_arch, examples.deep_arch])
def test_example_arches_rebuilt_with_arc_trace_the_same_path(make):
    # The examples' arches (nodes placed by hand on the circle) rebuilt with one s.arc:
    # the same nodes to round-off (1e-14 of the span; measured: identical) and the same
    # path: λ and the crown's deflection agree over the first 20 points to 1e-9 (only
    # the node numbering differs, so the solver's round-off: measured 4e-12).
    sc = make()
    p = sc.parameters
    s0 = sc.structure
    sec = s0.members[0].section
    s = lr.Structure()
    a, b = s.node(*s0.xy[sc.left]), s.node(*s0.xy[sc.right])
    m = s.arc(a, b, sec, rise=p["rise"], segments=p["segments"])
    ids = list(m.nodes)
    assert np.abs(s.xy[ids] - s0.xy[list(p["node_ids"])]).max() < 1e-14 * p["span"]
    crown = ids[p["segments"] // 2]
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    s.load(crown, fy=-p["load"])
    control = lr.by_arc_length()
    ref = lr.trace(s0, control, max_steps=20)
    new = lr.trace(s, control, max_steps=20)
    assert len(ref) == len(new) == 21
    scale = np.abs(ref.load_factor).max()
    assert np.abs(ref.load_factor - new.load_factor).max() < 1e-9 * scale
    v_ref, v_new = ref.displacement(sc.crown, "uy"), new.displacement(crown, "uy")
    assert np.abs(v_ref - v_new).max() < 1e-9 * np.abs(v_ref).max()


def test_polyline_builds_one_member_per_piece():
    # A portal frame as a polyline: corner nodes as given, pieces meshed, releases at
    # the chain's ends only. Under a small horizontal load P at the beam level the
    # portal, hinged at both feet by member releases on clamped nodes, has no moment
    # at the feet, the feet's thrusts add up to P and the vertical reactions are
    # ∓P·h/span (equilibrium of the whole frame, moments about a foot; common
    # practice, no source). The sway changes the lever arms by ~1e-7: tolerance 1e-6.
    s = lr.Structure()
    line = s.polyline([(0.0, 0.0), (0.0, 3.0), (4.0, 3.0), (4.0, 0.0)], SEC, segments=2,
                      hinge="both")
    assert len(line.members) == 3 and len(line.nodes) == 4
    assert np.allclose(s.xy[line.nodes], [[0, 0], [0, 3], [4, 3], [4, 0]])
    assert s.hinges() == {line.members[0].id: (0.0, math.inf), line.members[-1].id: (math.inf, 0.0)}
    s.fix(line.nodes[0])
    s.fix(line.nodes[-1])
    s.load(line.nodes[1], fx=1.0)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    r = path.reaction_vector(-1)
    A, D = line.nodes[0], line.nodes[-1]
    assert r[3 * A] + r[3 * D] == pytest.approx(-1.0, rel=1e-12)
    assert r[3 * D + 1] == pytest.approx(3.0 / 4.0, rel=1e-6)
    assert r[3 * A + 1] == pytest.approx(-3.0 / 4.0, rel=1e-6)
    assert r[3 * A + 2] == 0.0 and r[3 * D + 2] == 0.0


def test_two_arcs_between_the_same_nodes_are_allowed():
    # a lens of two arcs: curved members are not duplicates of each other
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(4.0, 0.0)
    up = s.arc(a, b, SEC, rise=1.0, segments=4)
    down = s.arc(a, b, SEC, rise=-1.0, segments=4)
    assert s.xy[up.nodes[2]][1] == pytest.approx(1.0) and s.xy[down.nodes[2]][1] == pytest.approx(-1.0)
