"""Locating and classifying critical points between two converged points.

A change in the number of negative eigenvalues between points i and i+1 is an
event. The eigenvalue that changed sign, μ, is a smooth function along the path;
the path between the two points is parametrised by σ ∈ [0, 1] on hyperplanes
across their secant, (x − x_i)·t = σ·|t|² with t = x_{i+1} − x_i (x = (u, λ)), and
each trial σ is corrected onto the path by Newton's method. Brent's method on
μ(σ) then finds the critical point (a bracketing root finder: it cannot leave the
interval, and converges superlinearly on the smooth μ).

Accuracy: σ is found to ``SIGMA_TOL``; at a bifurcation λ varies linearly with σ,
so the load factor is found to about ``SIGMA_TOL``·|Δλ| (far below 1e-6 relative);
at a limit point λ is stationary and the error is quadratic in that of σ.

Classification by the critical mode φ (unit eigenvector of the singular tangent):
a *limit point* when φ has a component along the reference load F,
|φ·F| > ``LIMIT_COSINE``·|φ|·|F|, else a *bifurcation* (common practice, no source;
e.g. Thompson & Hunt 1973, *A General Theory of Elastic Stability*).
"""
from __future__ import annotations

import logging

import numpy as np
from scipy.optimize import brentq

from .constraints import Metric, PlaneConstraint
from .newton import newton
from .stability import eigenpair

__all__ = ["locate", "LIMIT_COSINE", "SIGMA_TOL"]

log = logging.getLogger(__name__)

#: Cosine between critical mode and reference load above which the point is a limit
#: point. At a true bifurcation it is round-off (~1e-12); at a limit point it is the
#: mode's share at the loaded DOFs, rarely below 1e-2. 1e-3 separates them with room.
LIMIT_COSINE = 1e-3
#: Bracket width in σ at which the search stops (σ runs over one step, 0…1).
SIGMA_TOL = 1e-11
#: Shift in σ to a neighbour when the tangent at a trial point is exactly singular
#: (it then *is* the critical point). Tried: ±1e-9, then ±1e-6, ±1e-4.5 if the
#: neighbour is still singular; λ there is off by ~1e-9·|Δλ| at a bifurcation (or
#: the square of the shift at a limit point, where λ is stationary).
ONE_SIDE = 1e-9


class _NoPoint(Exception):
    pass


def locate(problem, lam_scale: float, u_a, lam_a: float, u_b, lam_b: float, n_a: int, n_b: int,
           tol: float, tol_u: float, max_iterations: int) -> dict:
    """Find the critical point between two converged points a and b.

    Parameters
    ----------
    problem : Problem
    lam_scale : float
        Linear displacement response per unit λ (weighs λ in the secant metric).
    u_a, u_b : ndarray, shape (n_free,)
    lam_a, lam_b : float
    n_a, n_b : int
        Negative eigenvalues at a and b.

    Returns
    -------
    dict
        ``kind``, ``lam``, ``u`` (free DOFs), ``mode`` (free DOFs, unit), ``located``
        (False if the search failed and the values are interpolated), ``newton``
        (the NewtonResult at the located point, or None) and ``n_factorizations``.
    """
    metric = Metric(problem.weights**2, lam_scale**2)
    t_u, t_lam = u_b - u_a, lam_b - lam_a
    T2 = metric.dot(t_u, t_lam, t_u, t_lam)
    j = min(n_a, n_b)
    sym = problem.symmetric
    cache: dict[float, tuple] = {}
    count = [0]

    def solve(sigma: float):
        if sigma in cache:
            return cache[sigma]
        c = PlaneConstraint(metric, u_a, lam_a, t_u, t_lam, sigma * T2)
        # residual test only (tol_u = ∞): next to a bifurcation the tangent is nearly
        # singular along the critical mode, which the secant plane does not fix, so
        # the next correction K⁻¹r blows round-off in r up along the mode (it is
        # ~|r·φ|/μ) and the displacement test could never pass there
        res = newton(problem, u_a + sigma * t_u, lam_a + sigma * t_lam, c, u_a,
                     tol, np.inf, max_iterations)
        count[0] += res.iterations + 1
        if not res.converged and len(res.residuals) and res.residuals[-1] <= tol:
            # in equilibrium, but the tangent there is singular to working precision:
            # this is the critical point. Keep a converged neighbour for the state
            # (its factorisation serves the next step) and report μ = 0.
            for d in (x * ONE_SIDE ** (1.0 / k) for k in (1, 1.5, 2) for x in (1.0, -1.0)):
                c = PlaneConstraint(metric, u_a, lam_a, t_u, t_lam, (sigma + d) * T2)
                near = newton(problem, u_a + (sigma + d) * t_u, lam_a + (sigma + d) * t_lam, c,
                              u_a, tol, np.inf, max_iterations)
                count[0] += near.iterations + 1
                log.debug("singular tangent at σ = %.12g; neighbour σ%+.1e converged: %s",
                          sigma, d, near.converged)
                if near.converged:
                    cache[sigma] = (0.0, eigenpair(near.factorization.K, j, sym)[1], near)
                    return cache[sigma]
        if not res.converged:
            raise _NoPoint(res.message)
        mu, phi = eigenpair(res.factorization.K, j, sym)
        cache[sigma] = (mu, phi, res)
        return cache[sigma]

    try:
        mu_a = solve_end(problem, u_a, lam_a, j, sym)
        mu_b = solve_end(problem, u_b, lam_b, j, sym)
        if mu_a * mu_b > 0.0:
            raise _NoPoint("the tracked eigenvalue does not change sign")
        cache[0.0] = (mu_a, None, None)
        cache[1.0] = (mu_b, None, None)
        sigma = brentq(lambda s: solve(s)[0], 0.0, 1.0, xtol=SIGMA_TOL, rtol=4 * np.finfo(float).eps)
        if sigma in (0.0, 1.0):
            sigma = min(max(sigma, SIGMA_TOL), 1.0 - SIGMA_TOL)
        mu, phi, res = solve(sigma)
        u, lam, located = res.u, res.lam, True
    except (_NoPoint, ValueError, RuntimeError) as exc:
        log.warning("critical point between λ = %.6g and %.6g not located: %s", lam_a, lam_b, exc)
        u, lam, located, res = 0.5 * (u_a + u_b), 0.5 * (lam_a + lam_b), False, None
        f, K, _ = problem.residual(u, lam)
        mu, phi = eigenpair(K, j, sym)
    F = problem.F
    cos = abs(float(phi @ F)) / max(float(np.linalg.norm(phi) * np.linalg.norm(F)), 1e-300)
    kind = "limit" if cos > LIMIT_COSINE else "bifurcation"
    return {"kind": kind, "lam": float(lam), "u": u, "mode": phi, "located": located,
            "newton": res, "n_factorizations": count[0], "load_cosine": cos}


def solve_end(problem, u, lam: float, j: int, sym: bool) -> float:
    """Tracked eigenvalue at a converged end point."""
    _, K, _ = problem.residual(u, lam)
    return eigenpair(K, j, sym)[0]
