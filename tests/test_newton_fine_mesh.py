"""Newton's line search: scaled back when the full correction overshoots, free otherwise."""
import numpy as np
import pytest
import scipy.sparse as sp

from largerot.solvers.newton import LoadConstraint, newton


class Scalar:
    """One-DOF problem r(u, λ) = λ·F − f(u) with the Problem interface newton uses."""

    symmetric = True
    length_scale = 1.0

    def __init__(self, f, df):
        self.f, self.df = f, df
        self.F = np.array([1.0])
        self.n_evaluations = 0

    def residual(self, u, lam, tangent=True):
        self.n_evaluations += 1
        r = lam * self.F - self.f(u)
        return r, sp.csc_matrix([[self.df(u[0])]]), max(abs(lam), abs(self.f(u)[0]), 1e-300)

    def norm(self, du):
        return float(np.linalg.norm(du))


def test_line_search_scales_back_overshooting_correction():
    # f(u) = arctan(u): from u = 3 the full Newton correction lands at u ≈ −9.5 and
    # the plain iteration diverges (common practice, no source: Newton on arctan
    # diverges from |u0| > 1.39). The root of λ = arctan(u) at λ = 0 is u = 0.
    p = Scalar(lambda u: np.arctan(u), lambda u: 1.0 / (1.0 + u * u))
    res = newton(p, np.array([3.0]), 0.0, LoadConstraint(0.0), np.array([3.0]), tol=1e-12)
    assert res.converged and res.line_searches >= 1
    assert res.u[0] == pytest.approx(0.0, abs=1e-9)


def test_good_full_step_costs_no_extra_evaluation():
    # Linear spring f(u) = 2u: one Newton step is exact, λ = 1 gives u = 0.5
    # (statics, exact); one evaluation per iteration plus the start, no search.
    p = Scalar(lambda u: 2.0 * u, lambda u: 2.0)
    res = newton(p, np.array([0.0]), 1.0, LoadConstraint(1.0), np.array([0.0]))
    assert res.converged and res.line_searches == 0
    assert res.u[0] == pytest.approx(0.5, rel=1e-14)
    assert p.n_evaluations == res.iterations + 1
