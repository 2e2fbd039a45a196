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

__all__ = ["locate", "Bracket", "NoPoint", "LIMIT_COSINE", "SIGMA_TOL"]

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


class NoPoint(Exception):
    """The path between two points could not be followed to a trial σ."""


class Bracket:
    """The path between two converged points a and b, parametrised by σ ∈ [0, 1].

    Each σ is corrected onto the path on the hyperplane (x − x_a)·t = σ·|t|² across the
    secant t = x_b − x_a (x = (u, λ), λ weighed by ``lam_scale``), with the problem's
    history (that of point a). Results are cached by σ.
    """

    def __init__(self, problem, lam_scale: float, u_a, lam_a: float, u_b, lam_b: float,
                 tol: float, max_iterations: int) -> None:
        self.problem, self.tol, self.max_iterations = problem, tol, max_iterations
        self.metric = Metric(problem.weights**2, lam_scale**2)
        self.u_a, self.lam_a = u_a, lam_a
        self.t_u, self.t_lam = u_b - u_a, lam_b - lam_a
        self.T2 = self.metric.dot(self.t_u, self.t_lam, self.t_u, self.t_lam)
        self.n_factorizations = 0
        self._cache: dict[float, object] = {}

    def newton(self, sigma: float):
        """Newton's method on the plane at σ (residual test only), uncached."""
        c = PlaneConstraint(self.metric, self.u_a, self.lam_a, self.t_u, self.t_lam, sigma * self.T2)
        # residual test only (tol_u = ∞): next to a bifurcation the tangent is nearly
        # singular along the critical mode, which the secant plane does not fix, so
        # the next correction K⁻¹r blows round-off in r up along the mode (it is
        # ~|r·φ|/μ) and the displacement test could never pass there
        res = newton(self.problem, self.u_a + sigma * self.t_u, self.lam_a + sigma * self.t_lam,
                     c, self.u_a, self.tol, np.inf, self.max_iterations)
        self.n_factorizations += res.iterations + 1
        return res

    def solve(self, sigma: float):
        """The converged point at σ (cached); raises :class:`NoPoint` if Newton fails."""
        if sigma not in self._cache:
            res = self.newton(sigma)
            if not res.converged:
                raise NoPoint(res.message)
            self._cache[sigma] = res
        return self._cache[sigma]

    def root(self, fun, f_a: float, f_b: float, xtol: float = 0.0) -> float:
        """σ where ``fun(σ)`` changes sign, by Brent's method (f_a, f_b: values at the ends)."""
        if f_a * f_b > 0.0:
            raise NoPoint("the function does not change sign between the points")
        if f_a == 0.0 or f_b == 0.0:
            return 0.0 if f_a == 0.0 else 1.0
        return brentq(fun, 0.0, 1.0, xtol=xtol or SIGMA_TOL, rtol=4 * np.finfo(float).eps,
                      maxiter=MAX_ROOT_ITERATIONS)


#: Brent iterations before the search gives up (it needs ~10–40 at SIGMA_TOL).
MAX_ROOT_ITERATIONS = 100


def locate(problem, lam_scale: float, u_a, lam_a: float, u_b, lam_b: float, n_a: int, n_b: int,
           tol: float, tol_u: float, max_iterations: int) -> dict:
    """Find the critical point between two converged points a and b.

    Parameters
    ----------
    problem : Problem
        With the history of point a.
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
    br = Bracket(problem, lam_scale, u_a, lam_a, u_b, lam_b, tol, max_iterations)
    j = min(n_a, n_b)
    sym = problem.symmetric
    modes: dict[float, tuple] = {}

    def mu(sigma: float) -> float:
        if sigma in modes:
            return modes[sigma][0]
        try:
            res = br.solve(sigma)
        except NoPoint:
            res = br.newton(sigma)
            if not (len(res.residuals) and res.residuals[-1] <= tol):
                raise
            # in equilibrium, but the tangent there is singular to working precision:
            # this is the critical point. Keep a converged neighbour for the state
            # (its factorisation serves the next step) and report μ = 0.
            for d in (x * ONE_SIDE ** (1.0 / k) for k in (1, 1.5, 2) for x in (1.0, -1.0)):
                try:
                    near = br.solve(sigma + d)
                except NoPoint:
                    continue
                log.debug("singular tangent at σ = %.12g; neighbour σ%+.1e converged", sigma, d)
                br._cache[sigma] = near
                modes[sigma] = (0.0, eigenpair(near.factorization.K, j, sym)[1])
                return 0.0
            raise
        modes[sigma] = eigenpair(res.factorization.K, j, sym)
        return modes[sigma][0]

    try:
        sigma = br.root(mu, solve_end(problem, u_a, lam_a, j, sym), solve_end(problem, u_b, lam_b, j, sym))
        if sigma in (0.0, 1.0):
            sigma = min(max(sigma, SIGMA_TOL), 1.0 - SIGMA_TOL)
        mu(sigma)
        res = br.solve(sigma)
        phi = modes[sigma][1]
        u, lam, located = res.u, res.lam, True
    except (NoPoint, ValueError, RuntimeError) as exc:
        log.warning("critical point between λ = %.6g and %.6g not located: %s", lam_a, lam_b, exc)
        u, lam, located, res = 0.5 * (u_a + u_b), 0.5 * (lam_a + lam_b), False, None
        _, K, _ = problem.residual(u, lam)
        _, phi = eigenpair(K, j, sym)
    F = problem.F
    cos = abs(float(phi @ F)) / max(float(np.linalg.norm(phi) * np.linalg.norm(F)), 1e-300)
    kind = "limit" if cos > LIMIT_COSINE else "bifurcation"
    return {"kind": kind, "lam": float(lam), "u": u, "mode": phi, "located": located,
            "newton": res, "n_factorizations": br.n_factorizations + 2, "load_cosine": cos}


def solve_end(problem, u, lam: float, j: int, sym: bool) -> float:
    """Tracked eigenvalue at a converged end point."""
    _, K, _ = problem.residual(u, lam)
    return eigenpair(K, j, sym)[0]
