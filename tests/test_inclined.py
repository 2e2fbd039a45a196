"""Inclined rollers (``Structure.roller``): a node that moves only along a line."""
import math

import numpy as np
import pytest

import largerot as lr
from largerot.solvers.problem import Problem
from tests.helpers import residual_jacobian, saved_and_loaded

L, EI, EA = 2.0, 3.0, 3.0e4
SLOPE = math.radians(30.0)


def sloped_beam(P: float, segments: int = 4):
    """A beam A→B along x, pinned at A, B on a roller that rolls up a 30° slope;
    a point load P down at mid-span."""
    s = lr.Structure()
    A, B = s.node(0.0, 0.0), s.node(L, 0.0)
    m = s.beam(A, B, lr.Section(E=EI, A=EA / EI, I=1.0), segments=segments)
    s.fix(A, "ux", "uy")
    s.roller(B, (math.cos(SLOPE), math.sin(SLOPE)))
    s.load(m.nodes[segments // 2], fy=-P)
    return s, A, B, m


def test_a_roller_on_a_30_degree_slope_against_statics():
    """Small load: reactions and member forces of the statically determinate beam.

    Statics (common practice, no source): the roller pushes along the slope's
    normal n = (−sin 30°, cos 30°); moments about A give its size R = P/(2·cos 30°),
    so the beam is compressed by R·sin 30° = P·tan 30°/2, A takes P/2 up and
    P·tan 30°/2 along x, and the mid-span moment is PL/4. Linear to P·L²/EI ~ 1e-6.
    """
    P = 1e-6 * EI / L**2
    s, A, B, m = sloped_beam(P)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    assert path.status == "target"
    Rn = P / (2 * math.cos(SLOPE))
    assert path.model.inclined_nodes.tolist() == [B]
    assert path.inclined_reactions(-1) == pytest.approx([Rn], rel=1e-5)
    R = path.reaction_vector(-1)
    assert R[3 * B] == pytest.approx(-math.sin(SLOPE) * Rn, rel=1e-5)
    assert R[3 * B + 1] == pytest.approx(math.cos(SLOPE) * Rn, rel=1e-5)
    assert R[3 * A] == pytest.approx(P * math.tan(SLOPE) / 2, rel=1e-5)
    assert R[3 * A + 1] == pytest.approx(P / 2, rel=1e-5)
    f = path.member_forces(-1)["beam"]
    assert f["N"][m.elements] == pytest.approx(np.full(4, -P * math.tan(SLOPE) / 2), rel=1e-5)
    assert f["M"][m.elements[1], 1] == pytest.approx(P * L / 4, rel=1e-5)
    # B moved along the slope only (to round-off: its normal translation is no unknown)
    ux, uy = path.displacement(B, "ux")[-1], path.displacement(B, "uy")[-1]
    assert abs(-math.sin(SLOPE) * ux + math.cos(SLOPE) * uy) < 1e-15 * L
    assert ux != 0.0


def test_large_deflection_keeps_the_roller_on_its_slope_and_the_reaction_normal():
    """A large load: the node stays on the line and the support force stays along its
    normal (a frictionless roller, common practice); global balance of forces
    (statics) holds to the residual tolerance."""
    P = 2.0 * EI / L**2
    s, A, B, m = sloped_beam(P, segments=8)
    path = lr.trace(s, lr.by_arc_length(), target_load_factor=1.0, max_steps=200)
    assert path.status == "target"
    for i in range(len(path)):
        ux, uy = path.displacement(B, "ux")[i], path.displacement(B, "uy")[i]
        assert abs(-math.sin(SLOPE) * ux + math.cos(SLOPE) * uy) < 1e-15 * L
        R = path.reaction_vector(i)
        lam = path.load_factor[i]
        # ΣF = 0: supports against the load λP down (to 1e-8 of the force level)
        assert abs(R[3 * A] + R[3 * B]) < 1e-6 * P
        assert R[3 * A + 1] + R[3 * B + 1] == pytest.approx(lam * P, abs=1e-6 * P)
        # the roller's force is along its normal
        assert abs(math.cos(SLOPE) * R[3 * B] + math.sin(SLOPE) * R[3 * B + 1]) < 1e-12 * P
    assert abs(path.displacement(B, "ux")[-1]) > 1e-3 * L        # it did roll (measured 4.6e-3·L)


def test_the_tangent_with_rollers_matches_central_differences():
    # K = −∂r/∂u over the free DOFs, the roller's DOF along its slope among them
    # (central differences, h = 1e-6: error ~h² and eps·|f|/h, measured 1e-8)
    s = lr.Structure()
    A, B, C = s.node(0.0, 0.0), s.node(1.0, 0.3), s.node(2.0, 0.0)
    sec = lr.Section(E=1.0, A=50.0, I=1.0)
    s.beam(A, B, sec, segments=2)
    s.bar(B, C, sec)
    s.fix(A)
    s.roller(C, (math.cos(2.0), math.sin(2.0)))
    s.roller(B, (1.0, 1.0))
    s.load(B, fy=-0.4, follower=True)
    p = Problem(s.snapshot().assembly)
    u = 0.05 * np.random.default_rng(5).standard_normal(p.n)
    K, J = residual_jacobian(p, u, 0.8, 1e-6)
    assert np.abs(K - J).max() < 1e-6 * np.abs(J).max()


def test_a_horizontal_roller_is_a_vertical_support():
    # direction (1, 0): the same restraint as fix(node, "uy") (the definition of a
    # roller, common practice); the paths agree to round-off
    def build(inclined):
        s = lr.Structure()
        A, B = s.node(0.0, 0.0), s.node(L, 0.0)
        m = s.beam(A, B, lr.Section(E=EI, A=EA / EI, I=1.0), segments=6)
        s.fix(A, "ux", "uy")
        if inclined:
            s.roller(B, (1.0, 0.0))
        else:
            s.fix(B, "uy")
        s.load(m.nodes[3], fx=0.2, fy=-1.0)
        return s
    a = lr.trace(build(True), lr.by_load(0.25), target_load_factor=1.0)
    b = lr.trace(build(False), lr.by_load(0.25), target_load_factor=1.0)
    assert a.status == b.status == "target"
    np.testing.assert_allclose(a.u, b.u, rtol=0, atol=1e-12 * L)
    np.testing.assert_allclose(a.reaction_vector(-1), b.reaction_vector(-1), rtol=0, atol=1e-9)


def test_rollers_round_trip_through_save_and_load(tmp_path):
    s, _, B, _ = sloped_beam(0.1)
    path = lr.trace(s, lr.by_load(0.5), max_steps=2)
    s2, path2 = saved_and_loaded(tmp_path, s, path)
    np.testing.assert_array_equal(path2.inclined_reactions(-1), path.inclined_reactions(-1))
    np.testing.assert_array_equal(lr.trace(s2, lr.by_load(0.5), max_steps=2).u, path.u)


@pytest.mark.parametrize("build, match", [
    (lambda s: s.roller(1, (0.0, 0.0)), "non-zero"),
    (lambda s: s.roller(1, "x"), "pair"),
    (lambda s: (s.fix(1, "ux"), s.roller(1, (1.0, 1.0))), "is fixed"),
    (lambda s: (s.roller(1, (1.0, 1.0)), s.fix(1)), "inclined roller"),
    (lambda s: (s.roller(1, (1.0, 1.0)), s.roller(1, (1.0, 0.0))), "already"),
    (lambda s: (s.roller(1, (1.0, 1.0)), s.impose(1, "uy", 0.1)), "inclined roller"),
    (lambda s: (s.roller(1, (1.0, 1.0)), s.spring(1, "ux", 1.0)), "inclined roller"),
    (lambda s: s.roller(9, (1.0, 1.0)), "9"),
])
def test_misuse_of_rollers_is_refused_with_a_message(build, match):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    with pytest.raises((lr.ModelError, TypeError), match=match):
        build(s)
