"""Imposed displacements (``Structure.impose``): paths driven by a prescribed motion.

Sources beside each check. The imposed DOFs are eliminated; ∂r/∂λ = F_ref − K_fp·ū_ref
(largerot/solvers/problem.py) is checked against central differences.
"""
import math

import numpy as np
import pytest

import largerot as lr
from largerot.solvers.problem import Problem
from tests.helpers import saved_and_loaded

L, EI, EA = 1.0, 2.0, 2.0e4
N_EL = 40


def rolled_cantilever():
    """A straight cantilever clamped at the origin, its tip turned by 2π·λ, no load."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section(E=EI, A=EA / EI, I=1.0), segments=N_EL)
    s.fix(a)
    s.impose(b, "rz", 2.0 * math.pi)
    return s, a, b


def check_circle(path, b):
    """Every point: the arc of pure bending, κ = 2πλ/L, moment EI·κ at the tip.

    Exact elastica of a beam under a pure end moment: a circular arc of curvature
    M/EI (common practice, no source). The corotational elements each carry that
    constant moment exactly, so their chords (of unchanged length l0, no axial force)
    turn by φ = κ·l0 from one to the next: the nodes are the vertices of a regular
    polygon inscribed in a circle of radius l0/(2·sin(φ/2)) (elementary geometry),
    checked to Newton's tolerance (measured ≤ 2e-8·L). That radius exceeds the arc's
    1/κ by the factor 1 + φ²/24 + ...: the discretisation error of the positions,
    within φ²/12·L of the continuous arc.
    """
    l0 = L / N_EL
    for i in range(1, len(path)):
        theta = 2.0 * math.pi * path.load_factor[i]
        X = path.coordinates(i)
        phi = theta / N_EL
        R_poly = l0 / (2.0 * math.sin(phi / 2.0))
        k = np.arange(N_EL + 1)
        chain = [0] + list(path.model.members[0].nodes[1:-1]) + [b]
        vertices = R_poly * np.column_stack([np.sin(k * phi), 1.0 - np.cos(k * phi)])
        assert np.abs(X[chain] - vertices).max() < 1e-7 * L
        tip = np.array([math.sin(theta), 1.0 - math.cos(theta)]) * L / theta
        assert np.linalg.norm(X[b] - tip) < phi**2 / 12 * L
        assert path.reaction_vector(i)[3 * b + 2] == pytest.approx(EI * theta / L, rel=1e-7)
        assert path.displacement(b, "rz")[i] == pytest.approx(theta, rel=1e-14)


@pytest.mark.parametrize("control", ["load", "arc"])
def test_an_imposed_end_rotation_of_2pi_rolls_a_cantilever_into_a_circle(control):
    s, a, b = rolled_cantilever()
    ctl = lr.by_load(0.05) if control == "load" else lr.by_arc_length()
    path = lr.trace(s, ctl, target_load_factor=1.0)
    assert path.status == "target"
    check_circle(path, b)
    # full circle: the tip is back at the root (to the tolerance above), the
    # reaction moment EI·2π/L at both ends (pure bending, common practice)
    assert np.linalg.norm(path.coordinates(-1)[b]) < 1e-7 * L
    R = path.reaction_vector(-1)
    assert R[3 * b + 2] == pytest.approx(EI * 2 * math.pi / L, rel=1e-7)
    assert R[3 * a + 2] == pytest.approx(-EI * 2 * math.pi / L, rel=1e-7)
    # no force in pure bending, to the residual tolerance: 1e-8 of the force level,
    # made of element end forces ~M/l0 (measured 2.2e-6 against M·N/L = 503)
    assert abs(R[3 * a]) + abs(R[3 * a + 1]) < 1e-7 * EI * 2 * math.pi * N_EL / L**2


def test_displacement_control_of_a_tip_driven_by_its_imposed_rotation():
    # the tip's uy is stepped while its rotation θ = 2πλ is imposed: λ is solved for,
    # and every point lies on the arc of pure bending (check_circle)
    s, a, b = rolled_cantilever()
    path = lr.trace(s, lr.by_displacement(b, "uy", 0.05 * L), max_steps=10)
    assert path.status == "max_steps" and len(path) == 11
    # the chord fit moves the controlled DOF too in the last correction: the target
    # is met to the displacement tolerance (measured 1.2e-7 relative)
    assert path.displacement(b, "uy")[-1] == pytest.approx(0.5 * L, rel=1e-6)
    check_circle(path, b)


def test_a_settled_middle_support_against_the_three_moment_equation():
    """Two equal spans, the middle support settles by δ (small).

    Three-moment equation (Clapeyron) with support settlement (common practice, no
    source): M_B = 3EIδ/L² (sagging), end reactions 3EIδ/L³ up, the middle support
    pulls down with 6EIδ/L³. The cubic beam element is exact for end loads, so the
    only error is geometric nonlinearity, of order δ/L = 1e-6.
    """
    delta = 1e-6 * L
    s = lr.Structure()
    A, B, C = s.node(0.0, 0.0), s.node(L, 0.0), s.node(2 * L, 0.0)
    sec = lr.Section(E=EI, A=EA / EI, I=1.0)
    left = s.beam(A, B, sec, segments=4)
    s.beam(B, C, sec, segments=4)
    s.fix(A, "ux", "uy")
    s.fix(C, "uy")
    s.impose(B, "uy", -delta)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    assert path.status == "target"
    R = path.reaction_vector(-1)
    k = EI * delta / L**3
    assert R[3 * A + 1] == pytest.approx(3 * k, rel=1e-5)
    assert R[3 * C + 1] == pytest.approx(3 * k, rel=1e-5)
    assert R[3 * B + 1] == pytest.approx(-6 * k, rel=1e-5)
    M = path.member_forces(-1)["beam"]["M"]
    assert M[left.elements[-1], 1] == pytest.approx(3 * EI * delta / L**2, rel=1e-5)
    assert path.displacement(B, "uy")[-1] == -delta


def test_a_constant_settlement_plus_a_scaled_load_superpose():
    """Propped cantilever (clamped at A, roller at B), B settled by δ from the start
    (constant), a point load λ·P down at mid-span.

    Handbook reactions of a propped cantilever (common practice, no source): a mid-span
    load P gives R_B = 5P/16 up; a settlement δ of the prop gives R_B = 3EIδ/L³ down.
    Small load and settlement: linear to about 1e-6.
    """
    delta, P = 1e-6 * L, 1e-6 * EI / L**2
    s = lr.Structure()
    A, B = s.node(0.0, 0.0), s.node(L, 0.0)
    m = s.beam(A, B, lr.Section(E=EI, A=EA / EI, I=1.0), segments=4)
    mid = m.nodes[2]
    s.fix(A)
    s.fix(B, "ux")
    s.impose(B, "uy", -delta, constant=True)
    s.load(mid, fy=-P)
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    assert path.status == "target"
    assert np.allclose(path.displacement(B, "uy"), -delta, rtol=0, atol=0)   # held from point 0
    for i in range(len(path)):
        lam = path.load_factor[i]
        expected = 5 * lam * P / 16 - 3 * EI * delta / L**3
        assert path.reaction_vector(i)[3 * B + 1] == pytest.approx(expected, rel=1e-5, abs=1e-9 * P)


def test_the_load_vector_is_the_derivative_of_the_residual_in_lambda():
    """∂r/∂λ at a deformed state: Problem.F against central differences of r in λ.

    A frame with a scaled imposed rotation and translation, an inclined roller and a
    follower load (so K_fp holds load stiffness and roller frames). Central
    differences with h = 1e-6: truncation ~h², round-off ~eps·|f|/h ≈ 1e-10.
    """
    s = lr.Structure()
    A, B, C = s.node(0.0, 0.0), s.node(1.0, 0.2), s.node(2.0, -0.1)
    sec = lr.Section(E=1.0, A=100.0, I=1.0)
    m1 = s.beam(A, B, sec, segments=3)
    s.beam(B, C, sec, segments=2)
    s.fix(A, "ux", "uy")
    s.impose(A, "rz", 0.3)
    s.impose(C, "uy", -0.2)
    s.impose(C, "ux", 0.05, constant=True)
    s.roller(B, (math.cos(0.4), math.sin(0.4)))
    s.load(m1.nodes[1], fx=0.3, fy=-0.5, follower=True)
    asm = s.snapshot().assembly
    p = Problem(asm)
    rng = np.random.default_rng(3)
    u = 0.05 * rng.standard_normal(p.n)
    lam, h = 0.7, 1e-6
    p.residual(u, lam)
    F = p.F.copy()
    fd = (p.residual(u, lam + h, tangent=False)[0] - p.residual(u, lam - h, tangent=False)[0]) / (2 * h)
    assert np.abs(F - fd).max() < 1e-7 * np.abs(fd).max()
    assert np.abs(F - p.F_loads).max() > 1e-2 * np.abs(fd).max()    # the imposed part counts


def test_imposed_motion_alone_counts_as_a_load():
    s, _, _ = rolled_cantilever()
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("error", lr.InputWarning)     # no "no load at all" warning
        lr.by_load(0.1)
        lr.trace(s, lr.by_load(0.1), max_steps=1)


def test_imposed_displacements_round_trip_through_save_and_load(tmp_path):
    s, _, b = rolled_cantilever()
    s.impose(b, "ux", -0.01, constant=True)
    path = lr.trace(s, lr.by_load(0.25), max_steps=2)
    s2, path2 = saved_and_loaded(tmp_path, s, path)
    np.testing.assert_array_equal(path2.model.imposed_ref, path.model.imposed_ref)
    np.testing.assert_array_equal(path2.u, path.u)
    again = lr.trace(s2, lr.by_load(0.25), max_steps=2)
    np.testing.assert_array_equal(again.u, path.u)


@pytest.mark.parametrize("build, match", [
    (lambda s: (s.fix(1, "rz"), s.impose(1, "rz", 1.0)), "is fixed"),
    (lambda s: (s.impose(1, "rz", 1.0), s.fix(1)), "imposed displacement"),
    (lambda s: s.impose(1, "uz", 1.0), "Unknown DOF"),
    (lambda s: s.impose(1, "ux", float("nan")), "finite"),
    (lambda s: s.impose(7, "ux", 1.0), "7"),
])
def test_misuse_of_impose_is_refused_with_a_message(build, match):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    with pytest.raises((lr.ModelError, ValueError), match=match):
        build(s)


def test_an_imposed_rotation_where_no_beam_ends_is_refused():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.bar(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    s.fix(b, "uy")
    s.impose(b, "rz", 0.1)
    with pytest.raises(lr.ModelError, match="Node 1 has an imposed rz"):
        lr.trace(s, lr.by_load(0.1), max_steps=1)
