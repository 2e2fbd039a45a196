"""Arc-length control with default options on problems it was not tuned for.

A user gives no step, no bounds and no tolerance: the trace must still reach the
end of the story in a sensible number of points, never double back or jump to
another branch, and stay on the exact equilibrium path.

References: the imperfect cantilever column against the elastica with a lateral tip
load (ODE integrated with scipy) and the perfect column's post-buckled elastica
(Timoshenko & Gere 1961, *Theory of Elastic Stability*, §2.7); the toggle frame
with a soft hanger against its exact statics (see tests/test_arc_length.py).
"""
import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

import largerot as lr
from largerot.closed_form import elastica_postbuckling
from largerot.examples import column, toggle_frame
from largerot.solvers.arc_length import CONSTRAINTS

from test_arc_length import exact_limit_loads, exact_load, frame_points, statics_residual

#: Lateral tip load of the imperfect column, share of the axial load.
ETA = 0.01


def imperfect_elastica_ratio(alpha, eta=ETA):
    """P/P_cr of a cantilever with tip loads P down and ηP sideways, at tip slope α.

    Inextensible elastica EI·θ'' = −P·sin θ − ηP·cos θ (θ from the vertical, s from
    the clamp; moment equilibrium of the part above s: Timoshenko & Gere 1961, §2.7,
    with the lateral load added), θ(0) = 0, θ'(L) = 0. Shot from the tip with
    scipy.integrate.solve_ivp (EI = L = 1) and P found by brentq below the perfect
    column's load (the imperfect column carries less at the same slope).
    """
    def shoot(P):
        f = lambda s, y: [y[1], -P * (np.sin(y[0]) + eta * np.cos(y[0]))]
        return solve_ivp(f, (1.0, 0.0), [alpha, 0.0], rtol=1e-11, atol=1e-12).y[0, -1]
    P_cr = np.pi**2 / 4
    P = brentq(shoot, 1e-9 * P_cr, elastica_postbuckling(alpha)[0] * P_cr, xtol=1e-13)
    return P / P_cr


@pytest.mark.parametrize("constraint", CONSTRAINTS)
def test_imperfect_column_into_the_post_buckled_range(constraint):
    # The tube column of examples.column (10 elements, reference load = Euler load)
    # with a lateral tip load of 1 % of it, traced with default options to
    # P/P_cr = 1.5. Before the step bounds were tied to the structure's size, the
    # step stayed at a few times the first (axial) one: 600 points reached 1.35.
    sc = column("cantilever")
    sc.structure.load(sc.tip, fx=ETA * sc.parameters["euler_load"])
    path = lr.trace(sc.structure, lr.by_arc_length(constraint=constraint),
                    stop=lambda p: p.load_factor >= 1.5, max_steps=100)
    assert path.status == "stopped", path.message      # reached 1.5 in ≤ 100 points
    alpha = -path.displacement(sc.tip, "rz")
    lam = path.load_factor
    assert np.all(np.diff(alpha) > 0.0)                 # sways one way, never back
    # Imperfect elastica (ODE above): 10 elements put the load up to 0.2 % high
    # (measured 0.01 %..0.21 % over the path, the same as the bifurcation's 0.2 %
    # in tests/test_buckling.py); tolerance 0.3 %.
    for i in range(1, len(path)):
        assert lam[i] == pytest.approx(imperfect_elastica_ratio(alpha[i]), rel=3e-3)
    # Perfect column's post-buckled elastica (Timoshenko & Gere 1961, §2.7): the
    # imperfect path approaches it from below as the slope grows; measured
    # −1.9 % at α = 0.56 rad, −0.67 % at 1.08 rad, +0.006 % at 1.8 rad: tolerance 1 %
    # beyond α = 1 rad.
    far = alpha > 1.0
    assert far.sum() >= 5
    for i in np.flatnonzero(far):
        assert lam[i] == pytest.approx(elastica_postbuckling(alpha[i])[0], rel=1e-2)


def assert_continuous(coords):
    """No repeated point, and no increment longer than a few typical ones.

    ``coords``: shape (n_points, k), quantities already scaled alike.
    """
    d = np.linalg.norm(np.diff(coords, axis=0), axis=1)
    assert d.min() > 0.0, f"point {np.argmin(d) + 1} repeats the one before"
    # Ramm's rule at most doubles a step per point; the jump to another branch was
    # 12 × the median step. Measured largest/median 1.9-3.5 over the constraints on
    # the toggle frame: tolerance 5 (common practice, no source: "a few steps")
    assert d.max() < 5.0 * np.median(d), f"jump of {d.max():.3g} after point {np.argmax(d)}"


@pytest.mark.parametrize("constraint", CONSTRAINTS)
def test_soft_hanger_frame_every_constraint_default_options(constraint):
    # examples.toggle_frame: two-bar frame, grounded spring 50 at the apex, load on
    # a hanger of stiffness 100 (snap-back at the load point). Default options,
    # default Newton tolerance 1e-8. Exact statics: tests/test_arc_length.py.
    sc = toggle_frame()
    path = lr.trace(sc.structure, lr.by_arc_length(constraint=constraint), **sc.trace_options)
    assert path.status == "stopped", path.message
    v, w, P, w_exact = frame_points(sc, path)
    P_max, P_min = exact_limit_loads(sc.parameters["spring"])
    # Newton's default relative residual 1e-8 of the internal force level (bar
    # forces up to a few times the peak load): measured worst errors 2.0-4.9e-8 of
    # the peak load in λ and in the statics residual, 3.4-8.7e-9 of the travel in w;
    # tolerance 1e-7
    assert np.abs(path.load_factor - P).max() < 1e-7 * P_max
    assert np.abs(w - w_exact).max() < 1e-7 * np.abs(w).max()
    for i in range(len(path)):
        assert np.abs(statics_residual(sc, path, i)).max() < 1e-7 * P_max
    # both limit points, at the exact extrema of P(v) (scipy.optimize) to 1e-6
    assert [c.kind for c in path.critical_points] == ["limit", "limit"]
    assert path.critical_points[0].load_factor == pytest.approx(P_max, rel=1e-6)
    assert path.critical_points[1].load_factor == pytest.approx(P_min, rel=1e-6)
    # continuous: λ scaled by the system's initial stiffness, so that the three
    # coordinates are lengths alike
    k_frame = (exact_load(1e-7, 50.0) - exact_load(-1e-7, 50.0)) / 2e-7
    k0 = 1.0 / (1.0 / k_frame + 1.0 / sc.parameters["hanger"])
    assert_continuous(np.column_stack([v, w, path.load_factor / k0]))


def test_normal_plane_finds_the_same_critical_points_as_the_cylinder():
    # The normal-plane constraint once slid along its plane onto another branch
    # (apex 0.675 → −0.061 in one step) and reported a limit point at the wrong
    # load. Both traces must locate the same limit points: they are properties of
    # the structure (exact extrema of P(v), scipy.optimize), not of the constraint.
    sc = toggle_frame()
    cyl = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)
    npl = lr.trace(sc.structure, lr.by_arc_length(constraint="normal-plane"), **sc.trace_options)
    assert npl.status == "stopped", npl.message
    assert [c.kind for c in npl.critical_points] == [c.kind for c in cyl.critical_points] \
        == ["limit", "limit"]
    for a, b in zip(npl.critical_points, cyl.critical_points):
        assert a.load_factor == pytest.approx(b.load_factor, rel=1e-6)
    P_max, P_min = exact_limit_loads(sc.parameters["spring"])
    assert npl.critical_points[1].load_factor == pytest.approx(P_min, rel=1e-6)
