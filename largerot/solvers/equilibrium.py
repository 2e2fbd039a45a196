"""Equilibrium at a fixed load factor from a state where the tangent may be singular.

A sagging cable starts slack (no tension, no stiffness across it), so Newton's
method cannot take its first step there. :func:`settle` first tries Newton and, if
that fails, relaxes toward equilibrium by pseudo-transient continuation: it solves
(K + μ·s·I)·Δu = r with a shift μ·s that makes the first move a small share of the
structure's size and shrinks as the residual falls (switched evolution relaxation,
μ ← μ·|r_k|/|r_k−1|; Mulder & van Leer 1985, Kelley & Keyes 1998, SIAM J. Numer.
Anal. 35). The shift changes only the iteration matrix, never the residual, so it
leaves no trace in the converged answer; Newton finishes from where it ends.
"""
from __future__ import annotations

import logging

import numpy as np

from ..linalg import SingularTangent, factor, shifted
from .newton import LoadConstraint, NewtonResult, newton

__all__ = ["settle"]

log = logging.getLogger(__name__)

#: First relaxation move, as a share of the structure's size: small enough that a
#: slack cable does not overshoot far past taut, large enough to get going.
FIRST_MOVE = 1e-3
#: Relaxation steps before giving up.
MAX_RELAXATION = 400
#: Hand over to Newton once the shift is this small next to the tangent's diagonal.
HANDOVER = 1e-6


def settle(problem, u: np.ndarray, lam: float, tol: float, tol_u: float,
           max_iterations: int) -> NewtonResult:
    """Equilibrium at load factor ``lam`` starting from ``u`` (free DOFs)."""
    res = newton(problem, u, lam, LoadConstraint(lam), u, tol, tol_u, max_iterations)
    if res.converged:
        return res
    u = u.copy()
    r, K, _ = problem.residual(u, lam)
    rn = float(np.linalg.norm(r))
    peak = float(np.abs(r / problem.weights).max())
    if rn == 0.0 or not np.isfinite(rn):
        return res
    shift = peak / (FIRST_MOVE * problem.length_scale)
    w2 = problem.weights**2                  # rotations weighed like the size
    mu = 1.0
    for k in range(MAX_RELAXATION):
        try:
            fact = factor(shifted(K, mu * shift * w2), symmetric=problem.symmetric)
        except SingularTangent:
            mu *= 10.0
            continue
        u_new = u + fact.solve(r)
        r_new, K_new, _ = problem.residual(u_new, lam)
        rn_new = float(np.linalg.norm(r_new))
        if not np.isfinite(rn_new):
            mu *= 10.0
            continue
        u, r, K = u_new, r_new, K_new
        mu *= min(max(rn_new / rn, 0.1), 10.0)
        rn = rn_new
        diag = float(np.abs(K.diagonal()).max()) or 1.0
        if mu * shift < HANDOVER * diag:
            res = newton(problem, u, lam, LoadConstraint(lam), u, tol, tol_u, max_iterations)
            if res.converged:
                log.info("settled after %d relaxation steps", k + 1)
                return NewtonResult(True, res.u, res.lam, res.iterations + k + 1, res.residuals,
                                    f"Settled in {k + 1} relaxation steps and "
                                    f"{res.iterations} Newton iterations.", res.factorization,
                                    res.rate)
            mu = max(mu, 1e-3)
    return NewtonResult(False, u, lam, MAX_RELAXATION, np.array([rn]),
                        "Relaxation toward equilibrium did not settle.")
