"""Arc-length constraint equations for the bordered Newton corrector.

All measure an increment (Δu, Δλ) from the last converged point in one metric,

    |Δx|² = Σ (w·Δu)² + ψ²·s²·Δλ²,

where ``w`` weighs rotations by the structure's size (see ``Problem.weights``) and
``s`` is the size of the linear displacement response to the reference load per
unit λ, so that ψ = 1 weighs load and displacement alike on the initial linear path.
This puts Crisfield's load-scaling parameter ψ (Crisfield 1981, Computers &
Structures 13, "A fast incremental/iterative solution procedure that handles
snap-through") on a scale free of units.

Each constraint returns the correction δλ given δu_r = K⁻¹r and δu_F = K⁻¹F at the
trial point; the displacement correction is then δu = δu_r + δλ·δu_F.
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["Metric", "QuadraticConstraint", "PlaneConstraint", "LinearisedConstraint"]


class Metric:
    """The inner product of increments: weights ``w2`` on Δu, ``s2`` = ψ²s² on Δλ."""

    def __init__(self, w2: np.ndarray, s2: float) -> None:
        self.w2, self.s2 = w2, float(s2)

    def dot(self, du1, dlam1, du2, dlam2) -> float:
        return float((du1 * self.w2) @ du2) + self.s2 * dlam1 * dlam2

    def norm(self, du, dlam) -> float:
        return math.sqrt(max(self.dot(du, dlam, du, dlam), 0.0))


class QuadraticConstraint:
    """|Δx| = Δl exactly: cylindrical (ψ = 0) or spherical (ψ > 0) (Crisfield 1981).

    Of the two roots δλ the one whose new increment makes the smaller angle with the
    current increment is taken (Crisfield's rule), so the corrector cannot double
    back along the path. Where the quadratic has no real root (a trial point too
    far off the path) the linearised update of :class:`LinearisedConstraint` is used
    for that iteration instead of failing outright.
    """

    def __init__(self, metric: Metric, u0: np.ndarray, lam0: float, dl: float) -> None:
        self.m, self.u0, self.lam0, self.dl = metric, u0, lam0, dl

    def delta_lam(self, du_r, du_F, u, lam):
        m = self.m
        Du, Dlam = u - self.u0, lam - self.lam0
        v = Du + du_r
        wF, wv = du_F * m.w2, v * m.w2
        a = float(wF @ du_F) + m.s2                          # |δu_F|² + ψ²s²
        b = 2.0 * (float(wv @ du_F) + m.s2 * Dlam)
        c = float(wv @ v) + m.s2 * Dlam**2 - self.dl**2
        disc = b * b - 4.0 * a * c
        if not (a > 0.0) or disc < 0.0:
            return LinearisedConstraint(m, self.u0, self.lam0, self.dl).delta_lam(du_r, du_F, u, lam)
        q = -0.5 * (b + math.copysign(math.sqrt(disc), b))   # roots without cancellation
        roots = [q / a, c / q] if q != 0.0 else [0.0, 0.0]
        if not (Dlam or Du.any()):
            return roots[0]
        # the angle of each new increment v + r·δu_F, Dlam + r with the current one
        vD, FD = float(wv @ Du), float(wF @ Du)
        s0, s1 = (vD + r * FD + m.s2 * (Dlam + r) * Dlam for r in roots)
        return roots[0] if s0 >= s1 else roots[1]


class PlaneConstraint:
    """A fixed hyperplane t·(x − x0) = target (Riks 1979, normal-plane method).

    Also used to locate critical points (plane across a secant) and to step off
    onto a secondary branch (plane across the critical mode).
    """

    def __init__(self, metric: Metric, u0, lam0: float, t_u, t_lam: float, target: float) -> None:
        self.m, self.u0, self.lam0 = metric, u0, lam0
        self.t_u, self.t_lam, self.target = t_u, t_lam, target

    def delta_lam(self, du_r, du_F, u, lam):
        m = self.m
        den = m.dot(self.t_u, self.t_lam, du_F, 1.0)
        if den == 0.0:
            return None
        now = m.dot(self.t_u, self.t_lam, u + du_r - self.u0, lam - self.lam0)
        return (self.target - now) / den


class LinearisedConstraint:
    """Linearised sphere about the current increment: Δx·δx = (Δl² − |Δx|²)/2.

    The iteration plane stays normal to the current increment (Ramm 1981, "Strategies
    for tracing the nonlinear response near limit points", updated normal plane),
    with a right-hand side that pulls the length back to Δl.
    """

    def __init__(self, metric: Metric, u0, lam0: float, dl: float) -> None:
        self.m, self.u0, self.lam0, self.dl = metric, u0, lam0, dl

    def delta_lam(self, du_r, du_F, u, lam):
        m = self.m
        Du, Dlam = u - self.u0, lam - self.lam0
        den = m.dot(Du, Dlam, du_F, 1.0)
        if den == 0.0:
            return None
        rhs = 0.5 * (self.dl**2 - m.dot(Du, Dlam, Du, Dlam)) - m.dot(Du, Dlam, du_r, 0.0)
        return rhs / den
