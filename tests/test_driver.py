"""The Newton solver and the path driver: convergence, statuses, events, results."""
import numpy as np
import pytest

import largerot as lr
from largerot.solvers.stepper import PathStepper


def small_cantilever(segments=8):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    s.beam(a, b, lr.Section(E=1e3, A=1.0, I=1e-3), segments=segments)
    s.fix(a)
    s.load(b, fy=-1.0)
    return s, a, b


def test_newton_converges_quadratically():
    # With the consistent tangent, r_{k+1} ≤ C·r_k² once r_k is small (common practice,
    # no source). A tangent missing its geometric part would converge linearly and
    # break the bound at small r_k. Large steps make several iterations per point.
    s, a, b = small_cantilever()
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=3.0, tol=1e-14)
    checked = 0
    for r in path.residuals[1:]:
        for rk, rk1 in zip(r[:-1], r[1:]):
            if 1e-11 < rk1 and rk < 1e-2:
                assert rk1 <= 1e4 * rk**2
                checked += 1
    assert checked >= 3


def test_trace_lands_exactly_on_target_and_keeps_history():
    s, a, b = small_cantilever()
    path = lr.trace(s, lr.by_load(0.3), target_load_factor=1.0)
    assert path.status == "target" and path.success
    assert path.load_factor[0] == 0.0 and path.load_factor[-1] == 1.0
    assert np.allclose(np.diff(path.load_factor)[:-1], 0.3)
    assert path.iterations[0] == 0 and np.all(path.iterations[1:] >= 1)
    assert len(path.residuals) == len(path) and len(path) == 5
    assert path.u.shape == (5, 3 * s.n_nodes)
    assert np.all(path.u[:, :3] == 0.0)                   # the clamp
    df = path.to_dataframe()
    assert list(df["load factor"]) == list(path.load_factor)
    assert f"uy of node {b} [m]" in df.columns


def test_displacement_control_reaches_target_load_factor_exactly():
    s, a, b = small_cantilever()
    path = lr.trace(s, lr.by_displacement(b, "uy", -0.2), target_load_factor=2.0)
    assert path.status == "target"
    assert path.load_factor[-1] == pytest.approx(2.0, abs=1e-12)


def test_stop_condition_ends_trace_on_the_point_that_met_it():
    s, a, b = small_cantilever()
    seen = []
    path = lr.trace(s, lr.by_load(0.1), stop=lambda p: p.displacement(b, "uy") < -0.5,
                    callback=seen.append)
    assert path.status == "stopped"
    uy = path.displacement(b, "uy")
    assert uy[-1] < -0.5 and np.all(uy[:-1] >= -0.5)
    assert [p.index for p in seen] == list(range(1, len(path)))


def test_load_control_stops_at_a_located_limit_point():
    # Load control cannot pass the limit point of a shallow two-bar truss. With a
    # tight iteration budget the step halves down to its floor at the limit; the trace
    # then ends with status "limit" and the critical point located on the exact
    # statics (Newton-level accuracy, 1e-8), keeping every point before it.
    from largerot.closed_form import two_bar_truss_load
    v = np.linspace(0.0, 0.5, 200001)
    P_limit = two_bar_truss_load(v, 2.0, 0.5, 1e4).max()     # exact statics, grid 2.5e-6
    s = lr.Structure()
    l, c, r = s.node(-2.0, 0.0), s.node(0.0, 0.5), s.node(2.0, 0.0)
    sec = lr.Section(E=1e4, A=1.0)
    s.bar(l, c, sec)
    s.bar(c, r, sec)
    s.fix(l, "ux", "uy")
    s.fix(r, "ux", "uy")
    s.load(c, fy=-1.0)
    path = lr.trace(s, lr.by_load(P_limit / 10), target_load_factor=3 * P_limit, max_iterations=4)
    assert path.status == "limit" and path.success and "limit point" in path.message
    cps = path.critical_points
    assert len(cps) == 1 and cps[0].kind == "limit" and cps[0].located
    assert cps[0].load_factor == pytest.approx(P_limit, rel=1e-8)
    assert np.all(np.isfinite(path.u)) and np.all(np.isfinite(path.load_factor))
    assert path.load_factor[-1] <= P_limit
    # every kept point is on the exact curve
    P = two_bar_truss_load(-path.displacement(c, "uy"), 2.0, 0.5, 1e4)
    assert np.allclose(path.load_factor, P, rtol=1e-7, atol=1e-9 * P_limit)


def test_load_control_on_the_shallow_arch_never_hides_the_snap():
    # The built-in arch under load control in steps of 10: the step from 230 to 240
    # would land on the inverted branch. It stops at the limit point instead, at the
    # load factor arc length finds (the same located point, 1e-7); asked to carry on
    # it keeps the far point and records the snap from the limit.
    from largerot.examples import shallow_arch
    sc = shallow_arch()
    ref = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options).critical_points[0]
    path = lr.trace(sc.structure, lr.by_load(10.0))
    assert path.status == "limit" and path.critical_points[0].load_factor == pytest.approx(
        ref.load_factor, rel=1e-7)
    crown = path.displacement(sc.curve[0], "uy")
    assert crown.min() > -0.2                              # still on the near branch
    jump = lr.trace(sc.structure, lr.by_load(10.0, at_limit="jump"), target_load_factor=260.0)
    snaps = [e for e in jump.events if e.kind == "snap"]
    assert jump.status == "target" and len(snaps) == 1
    assert snaps[0].load_factor == pytest.approx(ref.load_factor, rel=1e-7)
    assert jump.displacement(sc.curve[0], "uy")[-1] < -0.3  # landed on the inverted branch


def test_stepper_object_status_transitions():
    s, a, b = small_cantilever()
    st = lr.by_load(0.5).stepper(s, target_load_factor=1.0)
    assert isinstance(st, PathStepper) and st.status == "running"
    msg = st.step()
    assert "λ = 0.5" in msg and st.status == "running"
    st.step()
    assert st.status == "target" and not st.running
    with pytest.raises(RuntimeError, match="has ended"):
        st.step()
    state = st.state()
    assert set(state) >= {"u", "lam", "h", "status"} and state["lam"] == 1.0
    assert isinstance(state["u"], np.ndarray)


def test_bar_only_nodes_drop_rotation_automatically():
    # A pin-jointed triangle has no rotational stiffness at its nodes: no mechanism error.
    s = lr.Structure()
    p, q, t = s.node(0, 0), s.node(4, 0), s.node(2, 1)
    sec = lr.Section(E=1e5, A=1.0)
    for i, j in ((p, q), (q, t), (t, p)):
        s.bar(i, j, sec)
    s.fix(p, "ux", "uy")
    s.fix(q, "uy")
    s.load(t, fx=1.0, fy=-2.0)
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    assert path.status == "target"
    assert np.all(path.displacement(t, "rz") == 0.0)


def test_max_steps_status():
    s, a, b = small_cantilever()
    path = lr.trace(s, lr.by_load(0.01), max_steps=3)
    assert path.status == "max_steps" and len(path) == 4
