"""Arc-length path following through limit points and snap-back, against exact statics.

References: the two-bar truss is statically determinate, so its equilibrium path is
exact from statics (two-force members, equilibrium of the apex; common practice, no
source; ``largerot.closed_form.two_bar_truss_load``). A grounded spring at the apex
adds k_g·v to the load; a hanger of stiffness k_s between apex and load adds the
hanger's stretch P/k_s to the load point's travel (springs in series). The limit
loads are the extrema of the exact P(v), found here with scipy.optimize.
"""
import numpy as np
import pytest
from scipy.optimize import minimize_scalar

import largerot as lr
from largerot.closed_form import two_bar_truss_load
from largerot.examples import toggle_frame
from largerot.solvers.arc_length import CONSTRAINTS

from helpers import two_bar_truss

A, H, EA = 2.0, 0.5, 1.0e4          # half-span, rise, bar stiffness of the two-bar frame


def exact_load(v, k_g=0.0):
    """P(v) of the frame with a grounded spring k_g at the apex (statics)."""
    return two_bar_truss_load(v, A, H, EA) + k_g * np.asarray(v)


def exact_limit_loads(k_g=0.0):
    """(maximum, minimum) of P(v): the two limit loads, by bounded scalar minimisation."""
    hi = minimize_scalar(lambda v: -exact_load(v, k_g), bounds=(0.0, H), method="bounded",
                         options={"xatol": 1e-12})
    lo = minimize_scalar(lambda v: exact_load(v, k_g), bounds=(H, 2 * H), method="bounded",
                         options={"xatol": 1e-12})
    return -hi.fun, lo.fun


def assert_never_reverses(path, coords):
    """Arc length strictly increasing, and each increment points on from the last.

    ``coords``: shape (n_points, k) of quantities already scaled alike.
    """
    assert np.all(np.diff(path.arc_length) > 0.0)
    d = np.diff(coords, axis=0)
    inner = np.einsum("ij,ij->i", d[1:], d[:-1])
    assert np.all(inner > 0.0), f"the trace turned back after point(s) {np.flatnonzero(inner <= 0) + 1}"


def test_two_bar_truss_through_both_limit_points():
    # Exact statics (module docstring). Newton's tol 1e-10 on the force residual →
    # every point within 1e-8 of the peak load of the exact curve.
    s, apex = two_bar_truss(A, H, EA)
    path = lr.trace(s, lr.by_arc_length(), tol=1e-10,
                    stop=lambda p: -p.displacement(apex, "uy") > 2.4 * H)
    assert path.status == "stopped" and path.counters["step_cuts"] == 0
    v = -path.displacement(apex, "uy")
    P_max, P_min = exact_limit_loads()
    assert np.abs(path.load_factor - exact_load(v)).max() < 1e-8 * P_max
    assert np.allclose(path.displacement(apex, "ux"), 0.0, atol=1e-12)
    assert v.max() > 2 * H and path.load_factor.min() < 0.0       # through the snap
    # both limit points, located to 1e-6 of the exact limit loads (scipy.optimize)
    assert [c.kind for c in path.critical_points] == ["limit", "limit"]
    lam = [c.load_factor for c in path.critical_points]
    assert lam[0] == pytest.approx(P_max, rel=1e-6)
    assert lam[1] == pytest.approx(P_min, rel=1e-6)
    assert all(c.located for c in path.critical_points)
    # the located displacement is the exact one at the extremum of P(v)
    v_lim = -path.critical_points[0].u[3 * apex + 1]
    assert exact_load(v_lim) == pytest.approx(P_max, rel=1e-8)
    k_lin = -float(np.gradient(exact_load(np.array([-1e-6, 0.0, 1e-6])), 1e-6)[1])
    assert_never_reverses(path, np.column_stack([v, path.load_factor / abs(k_lin)]))


def frame_points(sc, path):
    """Apex drop v, load-point drop w, and the exact λ and w for v (statics)."""
    q = sc.parameters
    v = -path.displacement(sc.apex, "uy")
    w = -path.displacement(sc.load, "uy")
    P = exact_load(v, q["spring"])
    return v, w, P, v + P / q["hanger"]


def statics_residual(sc, path, i):
    """Out-of-balance force at the free DOFs of point i from the bar forces (numpy only)."""
    s = sc.structure
    xy = path.coordinates(i)
    X = s.xy
    f = np.zeros((s.n_nodes, 2))
    q = sc.parameters
    for (a, b), EA_ in (((0, 1), q["EA"]), ((1, 2), q["EA"]),
                        ((1, 3), q["hanger"] * q["hanger_length"])):
        L0 = np.linalg.norm(X[b] - X[a])
        d = xy[b] - xy[a]
        l = np.linalg.norm(d)
        N = EA_ * (l - L0) / L0                     # tension positive
        f[a] += N * d / l
        f[b] -= N * d / l
    f[sc.apex, 1] -= q["spring"] * path.displacement(sc.apex, "uy")[i]
    f[sc.load, 1] -= path.load_factor[i]           # the applied load, 1 downward per λ
    return np.array([f[sc.apex, 0], f[sc.apex, 1], f[sc.load, 1]])


@pytest.mark.parametrize("constraint", CONSTRAINTS)
def test_snap_back_frame_every_constraint(constraint):
    # Toggle frame with a grounded spring (k_g = 50) at the apex, loaded through a
    # hanger k_s = 100 softer than the frame's steepest negative stiffness (≈ 250):
    # the load point moves back up (snap-back). Exact curve by statics (module
    # docstring); Newton tol 1e-10 → 1e-8 of the peak load and of the largest travel.
    sc = toggle_frame()
    path = lr.trace(sc.structure, lr.by_arc_length(constraint=constraint), tol=1e-10,
                    **sc.trace_options)
    assert path.status == "stopped", path.message
    v, w, P, w_exact = frame_points(sc, path)
    P_max, P_min = exact_limit_loads(sc.parameters["spring"])
    assert np.abs(path.load_factor - P).max() < 1e-8 * P_max
    assert np.abs(w - w_exact).max() < 1e-8 * np.abs(w).max()
    # snap-back happened: the load point's travel went down, up, and down again
    dw = np.diff(w)
    assert dw.min() < 0.0 < dw.max()
    assert np.count_nonzero(np.diff(np.sign(dw[np.abs(dw) > 0]))) == 2
    # the two limit loads located to 1e-6 (exact extrema of P(v) by scipy.optimize)
    assert [c.kind for c in path.critical_points] == ["limit", "limit"]
    assert path.critical_points[0].load_factor == pytest.approx(P_max, rel=1e-6)
    assert path.critical_points[1].load_factor == pytest.approx(P_min, rel=1e-6)
    # every converged point in equilibrium: the solver's own residual history, and
    # the out-of-balance force recomputed from the bar forces (numpy statics)
    tol = 1e-10
    assert all(r[-1] <= tol for r in path.residuals[1:])
    for i in range(len(path)):
        assert np.abs(statics_residual(sc, path, i)).max() < 1e-8 * P_max
    # never doubles back: λ scaled by the initial stiffness of the whole system
    k_frame = (exact_load(1e-7, 50.0) - exact_load(-1e-7, 50.0)) / 2e-7
    k0 = 1.0 / (1.0 / k_frame + 1.0 / 100.0)
    assert_never_reverses(path, np.column_stack([v, w, path.load_factor / k0]))


def test_stability_of_frame_follows_sign_of_exact_stiffness():
    # Under dead load the frame-and-hanger system is stable iff dP/dv > 0 (springs
    # in series: det K = k_t·k_s; common practice, no source). dP/dv from the exact
    # curve by central differences; points within 1e-3 of a limit point skipped.
    sc = toggle_frame()
    path = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)
    v = -path.displacement(sc.apex, "uy")
    dP = (exact_load(v + 1e-7, 50.0) - exact_load(v - 1e-7, 50.0)) / 2e-7
    clear = np.abs(dP) > 1e-3 * np.abs(dP).max()
    assert np.array_equal(path.n_negative[clear] > 0, dP[clear] < 0)
    assert np.all(path.stable[: path.critical_points[0].index + 1])


def test_automatic_first_step_is_free_of_units():
    # The same frame in millimetres (lengths ×1000, stiffness per length /1000) must
    # give the same path point by point: step=None needs no knowledge of the norm.
    a = toggle_frame()
    b = toggle_frame(half_span=2000.0, rise=500.0, spring=0.05, hanger=0.1, hanger_length=1000.0)
    pa = lr.trace(a.structure, lr.by_arc_length(), **a.trace_options)
    pb = lr.trace(b.structure, lr.by_arc_length(), **b.trace_options)
    assert len(pa) == len(pb) and 20 <= len(pa) <= 200
    assert np.allclose(pa.load_factor, pb.load_factor, rtol=1e-6, atol=1e-6 * abs(pa.load_factor).max())
    assert np.allclose(1000 * pa.displacement(a.load, "uy"), pb.displacement(b.load, "uy"), rtol=1e-6,
                       atol=1e-3)


def test_given_step_and_negative_step():
    s, apex = two_bar_truss(A, H, EA)
    # three points: the step grows (Ramm) toward the bound set by the structure's size
    # and the fourth or fifth point would already pass the limit point at λ ≈ 56.6
    up = lr.trace(s, lr.by_arc_length(step=0.01), max_steps=3)
    assert up.status == "max_steps" and np.all(np.diff(up.load_factor) > 0)
    down = lr.trace(s, lr.by_arc_length(step=-0.01), max_steps=3)
    assert np.all(np.diff(down.load_factor) < 0)
    # the cylindrical step measures |Δu| only: the first increment has length 0.01
    assert np.hypot(*up.u[1, 3 * apex:3 * apex + 2]) == pytest.approx(0.01, rel=1e-8)


def test_stepper_status_transitions():
    from largerot.solvers.controls import by_arc_length
    s, apex = two_bar_truss(A, H, EA)
    st = by_arc_length().stepper(s)
    assert st.status == "running"
    assert st.step().startswith("Point 1")
    st.finish("stopped")
    with pytest.raises(RuntimeError, match="trace that has ended"):
        st.step()


@pytest.mark.parametrize("options, match", [
    (dict(constraint="circular"), r"`constraint` must be one of .*got 'circular'"),
    (dict(psi=-1.0, constraint="spherical"), r"`psi` must be a finite non-negative number, got -1.0"),
    (dict(psi=0.5), r"cylindrical constraint has psi = 0"),
    (dict(desired_iterations=0), r"`desired_iterations` must be a positive integer, got 0"),
    (dict(branch_sign=2), r"`branch_sign` must be \+1 or -1, got 2"),
    (dict(step=0.0), r"`step` must be a non-zero finite number or None, got 0.0"),
    (dict(step=float("nan")), r"`step` must be a non-zero finite number or None, got nan"),
    (dict(min_step=-1.0), r"`min_step` must be a positive number, got -1.0"),
    (dict(min_step=1.0, max_step=0.1), r"`min_step` \(1.0\) exceeds `max_step` \(0.1\)"),
])
def test_option_errors(options, match):
    with pytest.raises(ValueError, match=match):
        lr.by_arc_length(**options)


def test_misuse_errors():
    s, apex = two_bar_truss(A, H, EA)
    with pytest.raises(ValueError, match=r"`follow` must be 'primary' or 'secondary', got 'both'"):
        lr.trace(s, lr.by_arc_length(), follow="both")
    with pytest.raises(ValueError, match=r"follow='secondary' needs lr.by_arc_length"):
        lr.trace(s, lr.by_load(1.0), follow="secondary")
    bare = lr.Structure()
    a, b = bare.node(0.0, 0.0), bare.node(1.0, 0.0)
    bare.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    bare.fix(a)
    with pytest.raises(lr.ModelError, match="needs a reference load"):
        lr.trace(bare, lr.by_arc_length())
