"""Yielding members and contact along traced paths, against plastic-hinge theory and statics."""
from __future__ import annotations

import numpy as np
import pytest

import largerot as lr
from largerot.elements import contact
from largerot.solvers.problem import Problem

from helpers import residual_jacobian

B, H, FY, E = 0.05, 0.1, 250e6, 200e9
MP = FY * B * H**2 / 4            # plastic moment of the rectangle
MY = FY * B * H**2 / 6            # first-yield moment


def plastic_rectangle(n_fibres: int = 40):
    return lr.FibreSection.rectangle(E=E, fy=FY, width=B, depth=H, n_fibres=n_fibres)


def beam_on_supports(support: str, L: float = 2.0, segments: int = 200):
    """A 2 m beam with a load at the tip (cantilever) or at mid-span."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    m = s.beam(a, b, plastic_rectangle(), segments=segments)
    s.fix(a)
    if support == "cantilever":
        return s, m, b
    if support == "propped":
        s.fix(b, "uy")
    elif support == "clamped":
        s.fix(b, "uy", "rz")          # free to slide: no membrane force in small rotation
    return s, m, m.nodes[segments // 2]


# Collapse loads from plastic-hinge theory in small rotations (Neal 1977, The Plastic
# Methods of Structural Analysis, ch. 2; from memory): cantilever P = Mp/L, propped
# cantilever with a central load P = 6·Mp/L, clamped–clamped with a central load
# P = 8·Mp/L. A displacement-based element spreads the hinge over its length, so the
# load approaches the collapse value from above as O(h) (measured: the excess halves
# from 100 to 200 elements, 1.4 % → 0.7 % for the clamped beam); 200 elements: < 1 %.
@pytest.mark.parametrize("support, factor", [("cantilever", 1.0), ("propped", 6.0),
                                             ("clamped", 8.0)])
def test_collapse_load_of_plastic_hinge_theory(support, factor):
    L = 2.0
    s, m, n = beam_on_supports(support, L)
    P_c = factor * MP / L
    s.load(n, fy=-P_c)
    EI = E * B * H**3 / 12
    delta_y = P_c * L**3 / (3 * EI) if support == "cantilever" else P_c * L**3 / (48 * EI)
    # push the load point to twice its elastic deflection at P_c: the mechanism has
    # formed, rotations are still small (< 0.06 rad)
    path = lr.trace(s, lr.by_displacement(n, "uy", -0.1 * delta_y), max_steps=20)
    assert path.status == "max_steps"
    assert path.load_factor[-1] == pytest.approx(1.0, rel=1e-2)
    assert path.load_factor[-1] > 0.99 and np.all(np.diff(path.load_factor) > -1e-9)
    assert path.yielded.max() > 0.8        # the hinge has yielded through most of the depth


def test_first_yield_event_at_the_elastic_limit():
    # First yield of a cantilever's root: M = My = fy·b·h²/6, i.e. λ = My/Mp = 2/3
    # of the collapse load (elastic bending, common practice, no source). The event is
    # interpolated between points 0.02 apart in λ on a linear stretch: exact there.
    L = 2.0
    s, m, tip = beam_on_supports("cantilever", L, segments=20)
    s.load(tip, fy=-MP / L)
    path = lr.trace(s, lr.by_load(0.02), target_load_factor=0.9)
    first = [e for e in path.events if e.kind == "first yield"]
    assert len(first) == 1
    assert first[0].load_factor == pytest.approx(2.0 / 3.0, rel=2e-3)
    assert path.yielded[: first[0].index + 1].max() == 0.0


def test_unloading_leaves_a_permanent_set_with_the_elastic_slope():
    # Elastic–plastic cantilever loaded past first yield and unloaded (common
    # practice, no source): the unloading branch has the elastic stiffness
    # 3EI/L³ and a permanent tip deflection remains at zero load.
    L = 2.0
    s, m, tip = beam_on_supports("cantilever", L, segments=20)
    s.load(tip, fy=-MP / L)
    st = lr.by_load(0.05).stepper(s, target_load_factor=0.9)
    lr.run(st, max_steps=100)
    st.resume(step=-0.05, target_load_factor=0.0)
    path = lr.run(st, max_steps=100)
    assert path.status == "target"
    lam, v = path.load_factor, -path.displacement(tip, "uy")
    top = int(np.argmax(lam))
    EI = E * B * H**3 / 12
    k_el = 3 * EI / L**3
    k_unload = (lam[top] - lam[top + 2]) * MP / L / (v[top] - v[top + 2])
    assert k_unload == pytest.approx(k_el, rel=1e-3)
    assert v[-1] > 0.05 * v[top]            # permanent set
    assert lam[-1] == pytest.approx(0.0, abs=1e-12)


def cantilever_and_stop(gap: float, L: float = 3.0):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section.rectangle(E=E, width=B, depth=H), segments=20)
    s.fix(a)
    stop = lr.Line(point=(L, -gap), normal=(0.0, 1.0))
    s.contact(b, stop)
    return s, b


def loaded_onto_stop(gap: float, L: float = 3.0):
    """The cantilever and stop with the tip load that just closes the gap as reference."""
    s, tip = cantilever_and_stop(gap, L)
    P_touch = 3 * E * B * H**3 / 12 * gap / L**3
    s.load(tip, fy=-P_touch)
    return s, tip, P_touch


def test_cantilever_meets_a_stop():
    # Small-deflection superposition (common practice, no source): the tip moves
    # by P·L³/3EI until it meets the stop at the gap δ0; beyond, the tip stays on the
    # stop and the stop carries R = P − 3EI·δ0/L³. Gap 2 mm on a 3 m cantilever:
    # rotations below 1e-3, so small-deflection theory holds to ~1e-6.
    L, gap = 3.0, 2e-3
    s, tip, P_touch = loaded_onto_stop(gap, L)
    path = lr.trace(s, lr.by_load(0.1), target_load_factor=2.0)
    assert path.status == "target"
    lam, v = path.load_factor, path.displacement(tip, "uy")
    R = path.contact_forces[:, 0]
    before, after = lam < 0.999, lam > 1.001
    np.testing.assert_allclose(v[before], -lam[before] * gap, rtol=1e-4)
    np.testing.assert_allclose(R[before], 0.0, atol=0.0)
    np.testing.assert_allclose(R[after], (lam[after] - 1.0) * P_touch, rtol=1e-4)
    tol_gap = contact.GAP_TOL * 3.0
    assert np.all(v >= -gap - tol_gap)                 # no penetration beyond tolerance
    np.testing.assert_allclose(v[after], -gap, atol=tol_gap)
    closes = [e for e in path.events if e.kind == "contact closes"]
    assert len(closes) == 1 and closes[0].load_factor == pytest.approx(1.0, rel=1e-3)


def test_contact_opens_again_on_unloading():
    # The stop can only push (unilateral contact): unloading below the touching
    # load lifts the tip off, the contact force is zero and the free response returns.
    L, gap = 3.0, 2e-3
    s, tip, _ = loaded_onto_stop(gap, L)
    st = lr.by_load(0.1).stepper(s, target_load_factor=1.6)
    lr.run(st, max_steps=50)
    st.resume(step=-0.1, target_load_factor=0.3)
    path = lr.run(st, max_steps=50)
    assert path.status == "target"
    kinds = [e.kind for e in path.events]
    assert kinds == ["contact closes", "contact opens"]
    assert path.contact_forces[-1, 0] == 0.0
    assert path.displacement(tip, "uy")[-1] == pytest.approx(-0.3 * gap, rel=1e-4)


def test_pole_leans_on_a_round_stop_at_large_rotation():
    # Geometry of contact with a circle: the node stays outside the disc to the gap
    # tolerance and, at a frictionless contact, the contact force points from the
    # centre to the node (the normal of the circle; common practice, no source).
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 4.0)
    s.beam(a, b, lr.Section.tube(E=70e9, diameter=0.06, wall=0.003), segments=16)
    s.fix(a)
    stop = lr.Circle(centre=(1.8, 3.0), radius=0.5)
    s.contact(b, stop)
    s.load(b, fx=2.0e3)
    path = lr.trace(s, lr.by_load(0.05), target_load_factor=1.0)
    assert path.status == "target"
    x = path.coordinates(-1)[b]
    d = x - np.array(stop.centre)
    assert np.hypot(*d) >= stop.radius - contact.GAP_TOL * 4.0
    assert path.contact_forces[-1, 0] > 0
    # the stop's push balances the part of the load the pole does not carry:
    # reaction at the base + contact force + load = 0
    R = path.reaction_vector(-1)
    n = d / np.hypot(*d)
    p = path.contact_forces[-1, 0]
    assert R[3 * a] + p * n[0] + 2.0e3 == pytest.approx(0.0, abs=1e-6 * 2.0e3)
    assert R[3 * a + 1] + p * n[1] == pytest.approx(0.0, abs=1e-6 * 2.0e3)


def test_global_tangent_with_yielded_fibres_and_active_contact():
    # The tangent must be the derivative of the residual (common practice, no
    # source) in a state with plastic history and a closed contact. Central
    # differences: truncation O(h²); h is small against the strain increments so no
    # fibre crosses its yield surface within ±h.
    L, gap = 2.0, 0.04          # yields first (tip at 0.033 m), then touches
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, plastic_rectangle(n_fibres=12), segments=6)
    s.fix(a)
    s.contact(b, lr.Line(point=(L, -gap), normal=(0.0, 1.0)))
    s.load(b, fy=-MP / L)
    st = lr.by_load(0.1).stepper(s, target_load_factor=1.2)
    lr.run(st, max_steps=200)
    path = st.result()
    assert path.status == "target" and path.yielded.max() > 0 and path.contact_forces[-1, 0] > 0
    asm = st.assembly
    p = Problem(asm, st.history)
    u0 = st.u + 1e-5 * np.random.default_rng(1).standard_normal(len(st.u))
    K, J = residual_jacobian(p, u0, st.lam, h=1e-9)
    np.testing.assert_allclose(K, J, atol=1e-5 * np.abs(K).max())


def test_contact_input_errors_name_the_node():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    with pytest.raises(lr.ModelError, match="Expected an obstacle"):
        s.contact(b, (0.0, 1.0))
    floor = lr.Line(point=(0.0, 0.5), normal=(0.0, 1.0))
    s.contact(b, floor)
    with pytest.raises(lr.ModelError, match="Node 1 is already in contact"):
        s.contact(b, floor)
    s.load(b, fy=-1.0)
    with pytest.raises(lr.ModelError, match="Node 0 starts inside its obstacle|Node 1 starts inside"):
        lr.trace(s, lr.by_load(0.1))


def test_cantilever_pressed_far_onto_a_floor_against_the_elastica():
    # Large gap: the tip meets a floor 0.3·L below after large rotation. Before
    # contact: the elastica under a dead tip load (Bisshopp & Drucker 1945, via
    # largerot.closed_form.elastica_tip_load); after: the floor force from scipy's
    # solve_bvp on the elastica with y(L) = −gap (largerot.closed_form.cantilever_on_stop).
    # 40 elements, EA large: discretisation O(h²) ≈ 1e-3.
    from largerot.closed_form import cantilever_on_stop, elastica_tip_load

    L, EI = 1.0, 1.0
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section(E=EI * 1e6, A=1.0, I=1e-6), segments=40)
    s.fix(a)
    gap = 0.3 * L
    s.contact(b, lr.Line(point=(0.0, -gap), normal=(0.0, 1.0)))
    s.load(b, fy=-1.0)
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=3.0)
    assert path.status == "target"
    lam, v = path.load_factor, path.displacement(b, "uy")
    free = path.contact_forces[:, 0] == 0.0
    i = np.flatnonzero(free & (lam > 0))[-1]
    along, _, _ = elastica_tip_load(lam[i] * L**2 / EI)
    assert -v[i] == pytest.approx(along * L, rel=2e-3)
    ref = cantilever_on_stop(3.0, gap, L, EI)
    assert path.contact_forces[-1, 0] == pytest.approx(ref["R"], rel=2e-3)
    assert ref["R"] < 0.97 * ref["R_small"] or ref["R"] > 1.03 * ref["R_small"]   # truly nonlinear
    assert path.displacement(b, "ux")[-1] == pytest.approx(ref["ux"], rel=5e-3)


def test_lean_demo_yields_then_touches():
    from largerot.demo import run_lean_demo

    out = run_lean_demo(png=None)
    assert "first yield" in out and "contact closes" in out and "licensed" in out


def test_obstacles_are_drawn_with_the_shape():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    s, tip = cantilever_and_stop(2e-3)
    s.contact(tip, lr.Circle(centre=(1.0, 1.0), radius=0.2))
    from matplotlib.patches import Circle as Disc

    ax = lr.plotting.plot_shape(s)
    assert sum(isinstance(p, Disc) for p in ax.patches) == 1   # the round stop
    assert len(ax.lines) > 5                           # the face and its hatching
    plt.close(ax.figure)


def test_arc_length_goes_on_once_a_stop_takes_the_load():
    # Once the tip rests on the stop, more load barely moves the structure: the
    # trace must go on (corrections judged against a floor, not a vanishing step)
    # and the stop's force follow small-deflection superposition, R = P − 3EI·δ0/L³
    # (common practice, no source).
    L, gap = 3.0, 2e-3
    s, tip, P_touch = loaded_onto_stop(gap, L)
    # (to λ = 8: the arc length grows as Newton converges in 1–3 iterations, and the
    # check wants several points resting on the stop)
    path = lr.trace(s, lr.by_arc_length(constraint="spherical"), max_steps=200,
                    stop=lambda p: p.load_factor > 8.0)
    assert path.status == "stopped"
    after = path.load_factor > 1.001
    assert after.sum() >= 3
    np.testing.assert_allclose(path.contact_forces[after, 0],
                               (path.load_factor[after] - 1.0) * P_touch, rtol=1e-4)


def test_arc_length_through_the_plastic_collapse_plateau():
    # By arc length with no tuning: first yield at My/Mp = 2/3 of the collapse load
    # and a plateau at P ≈ Mp/L (plastic-hinge theory, Neal 1977, from memory; 20
    # elements: the hinge spread over one element, within 3 %), the path going on
    # past it without turning back (increments keep a positive inner product).
    L = 2.0
    s, m, tip = beam_on_supports("cantilever", L, segments=20)
    s.load(tip, fy=-MP / L)
    EI = E * B * H**3 / 12
    d_c = MP / L * L**3 / (3 * EI)                # elastic deflection at the collapse load
    path = lr.trace(s, lr.by_arc_length(), max_steps=200,
                    stop=lambda p: -p.displacement(tip, "uy") > 3 * d_c)
    assert path.status == "stopped"
    v = -path.displacement(tip, "uy")
    assert np.all(np.diff(v) > 0) and np.all(np.diff(path.arc_length) > 0)
    assert np.interp(2 * d_c, v, path.load_factor) == pytest.approx(1.0, rel=3e-2)
    first = [e.load_factor for e in path.events if e.kind == "first yield"]
    assert first == [pytest.approx(2 / 3, rel=5e-3)]


def test_reactions_of_a_yielding_pole_at_every_point():
    # Statics of the deformed cantilever (common practice, no source): the clamp's
    # moment is P·(L + ux) at every point, whatever the history of the fibres
    # (the reactions must use each point's own fibre forces, not the last ones).
    L = 2.0
    s, m, tip = beam_on_supports("cantilever", L, segments=20)
    s.load(tip, fy=-MP / L)
    path = lr.trace(s, lr.by_displacement(tip, "uy", -0.01), max_steps=12)
    assert path.yielded[-1].max() > 0
    for i in range(1, len(path)):
        moment = path.load_factor[i] * MP / L * (L + path.displacement(tip, "ux")[i])
        assert abs(path.reaction_vector(i)[2]) == pytest.approx(moment, rel=1e-6)
