"""Cables, self-weight, line loads and follower loads against closed forms and scipy."""
from __future__ import annotations

import numpy as np
import pytest

import largerot as lr
from largerot import examples
from largerot.assembly import Assembly
from largerot.closed_form import (cable_joint, elastic_catenary, follower_tip_cantilever,
                                  heavy_cantilever)
from largerot.solvers.problem import Problem

from helpers import residual_jacobian

STEEL_ROPE = lr.Section(E=160e9, A=2.0e-4, density=7850.0)


def hanging_cable(rise: float, length_factor: float, segments: int = 80):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(100.0, rise)
    s.gravity()
    chord = np.hypot(100.0, rise)
    m = s.cable(a, b, STEEL_ROPE, segments=segments, unstretched_length=length_factor * chord)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    return s, m, a, length_factor * chord


@pytest.mark.parametrize("rise", [0.0, 30.0, -20.0])
def test_elastic_catenary_under_self_weight(rise):
    # Irvine 1981, Cable Structures, ch. 1 (section from memory): elastic catenary, H and mid-span sag.
    # Sag/span about 0.1. 80 segments with the weight lumped at the nodes: the
    # discrete chain differs from the continuous one by O(h²) ≈ 1e-4 relative.
    s, m, a, L0 = hanging_cable(rise, 1.027)
    path = lr.trace(s, lr.by_load(1.0), max_steps=0)
    assert path.status == "max_steps" and len(path) == 1
    ref = elastic_catenary(100.0, rise, L0, STEEL_ROPE.density * STEEL_ROPE.A * 9.81,
                           STEEL_ROPE.EA)
    assert 0.08 < ref["sag"] / 100.0 < 0.12
    R = path.reaction_vector(0)
    H = -R[3 * a]                      # the left support pulls the cable to the left
    assert H == pytest.approx(ref["H"], rel=5e-3)
    assert R[3 * a + 1] == pytest.approx(ref["V"], rel=5e-3)
    xy = path.coordinates(0)[list(m.nodes)]
    y_mid = np.interp(50.0, xy[:, 0], xy[:, 1])
    sag = 0.5 * rise - y_mid
    assert sag == pytest.approx(ref["sag"], rel=5e-3)
    assert not path.slack.any()


def test_taut_cable_with_one_point_load():
    # Exact statics of two straight elastic segments meeting at the loaded point
    # (common practice, no source): unknown position of the joint, each segment
    # N = EA·(l − l0)/l0 along its chord, joint in equilibrium. Weightless cable
    # segments stay straight, so the mesh adds no error.
    sc = examples.two_piece_cable(pretension=5e3, load=20e3)
    s, c, q = sc.structure, sc.joint, sc.parameters
    T0 = q["pretension"]
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0, tol=1e-12)
    assert path.status == "target"
    x, y = cable_joint(q["left_length"], q["right_length"], q["EA"], T0, q["load"])
    # exact up to Newton's residual tolerance 1e-8, which the small horizontal
    # movement feels most (relative 1e-7)
    assert path.displacement(c, "ux")[-1] == pytest.approx(x - 12.0, rel=1e-7)
    assert path.displacement(c, "uy")[-1] == pytest.approx(y, rel=1e-8)
    # at the start the pretension is the given one
    N0 = path.member_forces(0)["bar"]["N"]
    np.testing.assert_allclose(N0, T0, rtol=1e-9)


def ring(n: int = 64, R: float = 2.0, EI: float = 1.0e3, EA: float = 1.0e8):
    s = lr.Structure()
    t = 2 * np.pi * np.arange(n) / n
    nodes = [s.node(R * np.cos(a), R * np.sin(a)) for a in t]
    sec = lr.Section(E=EA, A=1.0, I=EI / EA)
    members = [s.beam(nodes[k], nodes[(k + 1) % n], sec) for k in range(n)]
    # symmetric supports that leave the cos 2θ ovalisation free
    s.fix(nodes[0], "uy")
    s.fix(nodes[n // 2], "uy")
    s.fix(nodes[n // 4], "ux")
    return s, members, nodes


def test_ring_under_hydrostatic_pressure_buckles_at_3EI_over_R3():
    # Timoshenko & Gere 1961, Theory of Elastic Stability, §7.4: a ring under uniform
    # pressure that stays normal to the deformed ring buckles at q = 3EI/R³.
    # 64 straight elements: discretisation error of the ring ≈ (2π/64)² ≈ 1 %/ 10.
    R, EI = 2.0, 1.0e3
    s, members, _ = ring(R=R, EI=EI)
    q_cr = 3 * EI / R**3
    for m in members:            # nodes run counter-clockwise: the left normal points in
        s.line_load(m, normal=q_cr)
    path = lr.trace(s, lr.by_load(0.1), target_load_factor=1.3)
    assert path.status == "target"
    assert path.critical_points, "the ring's buckling was not detected"
    cp = path.critical_points[0]
    assert cp.kind == "bifurcation"
    assert cp.load_factor == pytest.approx(1.0, rel=1e-2)
    # linear buckling with the pressure's load stiffness gives the same; without it
    # (a dead load pointing at the centre, as the load stands at rest) it would not
    res = lr.buckling(s, modes=1)
    assert res.load_factors[0] == pytest.approx(1.0, rel=1e-2)


def test_tangent_includes_the_load_stiffness_of_follower_loads():
    # The tangent must be the derivative of the residual (common practice, no
    # source), here with a follower tip force, a pressure on beams and on a bar,
    # constant and scaled parts, at a deformed state. Central differences: error
    # O(h²) ≈ 1e-10 of the entries.
    s = lr.Structure()
    a, b, c = s.node(0.0, 0.0), s.node(3.0, 0.5), s.node(5.0, 2.0)
    sec = lr.Section(E=1e3, A=1.0, I=0.2)
    m1 = s.beam(a, b, sec, segments=3)
    s.beam(b, c, sec, segments=2)
    bar = s.bar(a, c, lr.Section(E=1e3, A=0.5))
    s.fix(a)
    s.load(c, fx=2.0, fy=-5.0, follower=True)
    s.load(b, fx=1.0, follower=True, constant=True)
    s.line_load(m1, normal=3.0, tangential=-1.0)
    s.line_load(bar, normal=-2.0, constant=True)
    rng = np.random.default_rng(3)
    n = Assembly(s.snapshot()).n_free
    u = 0.3 * rng.standard_normal(n)
    p = Problem(Assembly(s.snapshot()))
    K, J = residual_jacobian(p, u, 1.7, h=1e-6)
    assert not p.symmetric
    assert np.abs(K - K.T).max() > 1e-3          # the load stiffness is not symmetric
    np.testing.assert_allclose(K, J, atol=1e-6 * np.abs(K).max())


def test_cantilever_under_a_follower_tip_force():
    # Reference: inextensible elastica with the tip force turning with the tip,
    # solved by scipy.integrate.solve_bvp (largerot.closed_form.follower_tip_cantilever).
    # 40 elements, EA large: discretisation error ~ (1/40)² ≈ 1e-3.
    L, EI = 1.0, 0.5
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section(E=EI * 1e6, A=1.0, I=1e-6), segments=40)
    s.fix(a)
    s.load(b, fy=1.0, follower=True)
    path = lr.trace(s, lr.by_load(0.1), target_load_factor=1.0)
    assert path.status == "target"
    ref = follower_tip_cantilever((0.0, 1.0), L, EI)
    assert path.displacement(b, "ux")[-1] == pytest.approx(ref["ux"], rel=1e-2)
    assert path.displacement(b, "uy")[-1] == pytest.approx(ref["uy"], rel=1e-2)
    assert path.displacement(b, "rz")[-1] == pytest.approx(ref["slope"], rel=1e-2)


def test_heavy_cantilever_under_dead_self_weight():
    # Reference: elastica under its own weight by scipy.integrate.solve_bvp
    # (largerot.closed_form.heavy_cantilever), q·L³/EI = 10: the tip drops by 70 % of L.
    # 40 elements, weight lumped at the nodes: O(h²) ≈ 1e-3.
    L, EI, q = 1.0, 0.1, 1.0
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    A = 1.0
    sec = lr.Section(E=EI * 1e6, A=A, I=1e-6, density=q / (A * 9.81))
    s.beam(a, b, sec, segments=40)
    s.fix(a)
    s.gravity(constant=False)
    path = lr.trace(s, lr.by_load(0.1), target_load_factor=1.0)
    assert path.status == "target"
    ref = heavy_cantilever(q, L, EI)
    assert path.displacement(b, "ux")[-1] == pytest.approx(ref["ux"], rel=1e-2)
    assert path.displacement(b, "uy")[-1] == pytest.approx(ref["uy"], rel=1e-2)
    assert path.displacement(b, "rz")[-1] == pytest.approx(ref["slope"], rel=1e-2)
    # base moment from the member forces: M at the root end of the first element
    M_root = path.member_forces(-1)["beam"]["M"][0, 0]
    assert M_root == pytest.approx(ref["M0"], rel=2e-2)


def guyed_mast(pretension: float = 20e3):
    s = lr.Structure()
    base, top = s.node(0.0, 0.0), s.node(0.0, 20.0)
    left, right = s.node(-12.0, 0.0), s.node(12.0, 0.0)
    mast = s.beam(base, top, lr.Section.tube(E=210e9, diameter=0.3, wall=0.01), segments=10)
    rope = lr.Section(E=160e9, A=3e-4)
    gl = s.cable(left, top, rope, pretension=pretension)     # straight, weightless: one segment
    gr = s.cable(right, top, rope, pretension=pretension)
    s.fix(base, "ux", "uy")
    for n in (left, right):
        s.fix(n, "ux", "uy")
    return s, mast, gl, gr, top


def test_guys_go_slack_and_taut_again_without_compression():
    # A cable carries no compression (definition of the tension-only member; common
    # practice, no source). A constant pull to the left and a growing push to the
    # right: the left guy is slack at the start, both are taut when the net load is
    # zero, and the right guy goes slack at the end; the path goes on through both.
    s, mast, gl, gr, top = guyed_mast()
    s.load(top, fx=-60e3, constant=True)
    s.load(top, fx=60e3)
    path = lr.trace(s, lr.by_load(0.05), target_load_factor=2.0)
    assert path.status == "target"
    N = path.member_forces()["bar"]["N"]
    assert N.min() >= 0.0
    slack = path.slack                      # (points, 2): left guy, right guy
    left, right = slack[:, 0], slack[:, 1]
    assert left[0] and not right[0]
    both_taut = ~slack.any(axis=1)
    at_one = np.argmin(abs(path.load_factor - 1.0))
    assert both_taut[at_one]
    assert right[-1] and not left[-1]
    # a slack cable has no force: the net load at λ = 1 is zero, the mast is straight
    assert abs(path.displacement(top, "ux")[at_one]) < 1e-9


def test_cable_errors_name_the_member():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(10.0, 0.0)
    with pytest.raises(lr.ModelError, match="Member 0: give `unstretched_length` or `pretension`"):
        s.cable(a, b, STEEL_ROPE, unstretched_length=11.0, pretension=1.0)
    with pytest.raises(lr.ModelError, match="pretension must be non-negative"):
        s.cable(a, b, STEEL_ROPE, pretension=-1.0)
    c = s.node(0.0, 10.0)
    with pytest.raises(lr.ModelError, match=r"nodes 0→2.*cannot sag"):
        s.cable(a, c, STEEL_ROPE, segments=4, unstretched_length=12.0)
    with pytest.raises(lr.ModelError, match="Unknown member 7"):
        s.line_load(7, qy=-1.0)
    with pytest.raises(lr.ModelError, match="follower load is a force"):
        s.load(b, mz=1.0, follower=True)


def test_follower_force_needs_a_rotation():
    s = lr.Structure()
    a, b, c = s.node(0.0, 0.0), s.node(1.0, 1.0), s.node(2.0, 0.0)
    sec = lr.Section(E=1.0, A=1.0)
    s.bar(a, b, sec)
    s.bar(b, c, sec)
    s.fix(a, "ux", "uy")
    s.fix(c, "ux", "uy")
    s.load(b, fy=-1.0, follower=True)
    with pytest.raises(lr.ModelError, match="Node 1 carries a follower force"):
        lr.trace(s, lr.by_load(0.1))


def test_dead_line_load_resultant_and_forces_table():
    # Statics of a simply supported beam under a uniform load (common practice, no
    # source): reactions q·L/2 each, mid-span moment q·L²/8 in small deflection.
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(8.0, 0.0)
    m = s.beam(a, b, lr.Section(E=210e9, A=1e-2, I=1e-4), segments=8)
    s.fix(a, "ux", "uy")
    s.fix(b, "uy")
    s.line_load(m, qy=-1e3)
    path = lr.trace(s, lr.by_load(1e-3), target_load_factor=1e-3)
    R = path.reaction_vector(-1)
    assert R[3 * a + 1] == pytest.approx(0.5 * 8.0 * 1.0, rel=1e-6)
    table = path.forces_table(-1)
    # element 3 ends at mid-span; sagging moment positive, q·L²/8 (× λ)
    assert table.loc[3, "M_2 [N·m]"] == pytest.approx(1e3 * 64 / 8 * 1e-3, rel=1e-4)
    frame = path.to_dataframe(forces=True)
    assert frame["max |M| [N·m]"].iloc[-1] == pytest.approx(1.0 * 8.0, rel=1e-4)
