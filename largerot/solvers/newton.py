"""Newton–Raphson corrector with a scalar constraint on (u, λ).

Every corrector solves the bordered system

    K·δu − F·δλ = r,      a·δu + b·δλ = −g

by two back-substitutions with one factorisation: δu = δu_r + δλ·δu_F with
δu_r = K⁻¹r and δu_F = K⁻¹F. The constraint object supplies δλ; load control,
displacement control and the arc-length rules differ only there.

Convergence (both must hold):
* residual: |r| ≤ tol · max(internal force level, |applied load|);
* displacement: the next correction K⁻¹r, which is computed anyway because the
  factorisation at the converged point serves the next predictor and the stability
  check, is at most ``tol_u`` of the step's increment (weighted norm), or of
  ``INCREMENT_FLOOR`` × the structure's size when the step hardly moves u.

Round-off floor: internal forces come from strains that are differences of nodal
displacements, so f_int(u) carries an error of about eps·|K|·|u| (the change of f
for a perturbation of u by one ulp). A residual below ``FLOOR_FACTOR`` times that
level that has stopped decreasing cannot be reduced further and counts as converged; this matters for long
chains of short, axially stiff elements, whose floor lies far above eps·|f|.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..linalg import Factorization, SingularTangent
from .problem import Problem

__all__ = ["NewtonResult", "newton", "LoadConstraint", "DisplacementConstraint"]

#: Accept a point whose corrections no longer change u (relative 1e-13): the
#: residual is then at its round-off floor, not a convergence failure.
STAGNATION = 1e-13
#: ... provided the residual is still small in absolute terms.
STAGNATION_RESIDUAL = 1e-6
#: Smallest increment (share of the structure's size) that corrections are measured
#: against: far below any displacement of interest, far above round-off.
INCREMENT_FLOOR = 1e-9
#: Multiple of the round-off level eps·‖|K|·|u|‖ taken as "at the floor"
#: (measured residuals stagnate at 0.1–0.5 of that level).
FLOOR_FACTOR = 4.0
#: ... and only once an iteration no longer cuts the residual by this factor.
FLOOR_STALL = 0.3


@dataclass
class NewtonResult:
    converged: bool
    u: np.ndarray
    lam: float
    iterations: int
    residuals: np.ndarray
    message: str
    factorization: Factorization | None = field(default=None, repr=False)
    rate: float = float("nan")          # observed order of convergence (≈2 when quadratic)


class LoadConstraint:
    """λ held at a target value."""

    def __init__(self, lam: float) -> None:
        self.lam = lam

    def delta_lam(self, du_r, du_F, u, lam):
        return self.lam - lam


class DisplacementConstraint:
    """One free DOF held at a target value; λ follows from the bordered system."""

    def __init__(self, j: int, value: float) -> None:
        self.j, self.value = j, value

    def delta_lam(self, du_r, du_F, u, lam):
        d = du_F[self.j]
        if d == 0.0 or not np.isfinite(d):
            return None
        return (self.value - u[self.j] - du_r[self.j]) / d


def _rate(res: list[float]) -> float:
    r = np.asarray(res[-3:])
    if len(r) < 3 or np.any(r <= 0) or r[1] >= r[0]:
        return float("nan")
    return float(np.log(r[2] / r[1]) / np.log(r[1] / r[0]))


def newton(problem: Problem, u: np.ndarray, lam: float, constraint, u_start: np.ndarray,
           tol: float = 1e-8, tol_u: float = 1e-6, max_iterations: int = 25) -> NewtonResult:
    """Correct a predicted state (u, λ) onto the equilibrium path.

    Parameters
    ----------
    problem : Problem
    u : ndarray, shape (n_free,)
        Predicted displacements (not modified).
    lam : float
        Predicted load factor.
    constraint : object
        Has ``delta_lam(du_r, du_F, u, lam) -> float or None``.
    u_start : ndarray, shape (n_free,)
        The last converged point; the step's increment is measured from it.

    Returns
    -------
    NewtonResult
        On success ``factorization`` holds the tangent factorised at the converged
        point (for the next predictor and the stability check).
    """
    u = u.copy()
    history: list[float] = []
    for k in range(max_iterations + 1):
        r, K, scale = problem.residual(u, lam)
        ratio = float(np.linalg.norm(r)) / scale
        history.append(ratio)
        if not np.isfinite(ratio):
            return NewtonResult(False, u, lam, k, np.array(history), "The residual is not finite.")
        try:
            # no near-singularity test here: the tangent is nearly singular at every
            # limit point and bifurcation, and the path must go through them
            fact = Factorization(K, symmetric=problem.symmetric)
        except SingularTangent:
            return NewtonResult(False, u, lam, k, np.array(history),
                                "The tangent is singular at a trial point.")
        sol = fact.solve(np.column_stack([r, problem.F]))
        du_r, du_F = sol[:, 0], sol[:, 1]
        dlam = constraint.delta_lam(du_r, du_F, u, lam)
        if dlam is None or not np.isfinite(dlam):
            return NewtonResult(False, u, lam, k, np.array(history),
                                "The constraint equation has no solution at this trial point.")
        du = du_r + dlam * du_F
        # a step that barely moves u (load taken by a stop) is judged on a floor of
        # INCREMENT_FLOOR × the structure's size, not on its own vanishing increment
        step = max(problem.norm(u - u_start), INCREMENT_FLOOR * problem.length_scale, 1e-300)
        corr = problem.norm(du) / step
        # (the round-off level costs a pass over K: only estimated when it can decide)
        at_floor = (ratio > tol and corr <= tol_u and k > 0 and ratio > FLOOR_STALL * history[-2]
                    and ratio * scale <= FLOOR_FACTOR * np.finfo(float).eps
                    * float(np.linalg.norm(abs(K) @ abs(u))))
        if ((ratio <= tol or at_floor) and corr <= tol_u) or (
                k > 0 and corr <= STAGNATION and ratio <= STAGNATION_RESIDUAL):
            return NewtonResult(True, u, lam, k, np.array(history),
                                f"Converged in {k} iterations.", fact, _rate(history))
        if k == max_iterations:
            break
        u += du
        lam += dlam
    return NewtonResult(False, u, lam, max_iterations, np.array(history),
                        f"No convergence in {max_iterations} iterations "
                        f"(relative residual {history[-1]:.2e}).")
