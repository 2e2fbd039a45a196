"""Newton–Raphson corrector with a scalar constraint on (u, λ) and a line search.

Every corrector solves the bordered system

    K·δu − F·δλ = r,      a·δu + b·δλ = −g

by two back-substitutions with one factorisation: δu = δu_r + δλ·δu_F with
δu_r = K⁻¹r and δu_F = K⁻¹F. The constraint object supplies δλ; load control,
displacement control and the arc-length rules differ only there. A problem that
offers ``moved(u, δu)`` (a :class:`~largerot.solvers.problem.Problem` does) moves the
beams' nodes along the correction with their chords kept whole to first order
(``CHORD_CORRECTION``), as the predictor does.

Line search (globalisation)
    The correction (δu, δλ) is applied as (u, λ) + η·(δu, δλ). Along it the
    projection of the residual on the correction, s(η) = δu·r(u + η·δu, λ + η·δλ),
    is the slope of the potential energy for conservative loads, and for any
    loading satisfies s(η) ≈ s(0)·(1 − η) to first order (so the Newton step is the
    root of its linear model). The full step is taken when |s(1)| ≤ ``LS_ACCEPT`` ·
    |s(0)| or the residual norm fell below ``LS_RESIDUAL_DROP`` of its value: then
    the trial point is the next iterate and the line search costs nothing (its
    residual and tangent are the next iteration's). Otherwise η is searched for
    the root of s by regula falsi (Illinois) on [0, 1], at most ``LS_TRIALS``
    more residual evaluations, never below ``LS_ETA_MIN``; the best trial (smallest
    |s|) is taken. No search is made once the residual is at its round-off level
    (below) or when s(0) is not positive-definite information (s(0) = 0).

Convergence (both must hold):
* residual: |r| ≤ tol · force level, or |r| ≤ ``FLOOR_FACTOR`` · ρ once the last
  iteration cut |r| by less than ``FLOOR_STALL`` (at its floor), where the force
  level is max(internal force level, |applied load|) (``Problem.residual``'s
  ``scale``) and ρ = eps·‖|K|·|u|‖ is the round-off level of the residual:
  internal forces come from strains that are differences of nodal displacements,
  so f_int(u) carries an error of about eps·|K|·|u| (the change of f for a
  perturbation of u by one ulp). Below ρ no iteration can reduce |r|; this
  matters for long chains of short, axially stiff elements, whose ρ lies far
  above tol times the force level. ρ is computed (one pass over K) only when the
  displacement test already holds and the residual test alone would fail.
  At rest (u = 0, no load) both sides are zero and the test holds.
* displacement: the next correction K⁻¹r, which is computed anyway because the
  factorisation at the converged point serves the next predictor and the stability
  check, is at most ``tol_u`` of the step's increment (weighted norm), or of
  ``INCREMENT_FLOOR`` × the structure's size when the step hardly moves u.

Relaxation when Newton cycles
    When ``STALL`` iterations in a row bring the residual no lower than the best
    before them, and one of their corrections went up the energy (s(0) = δu·r < 0,
    an indefinite tangent along it), the iterates are cycling about a local snap. Seen with perfectly plastic fibres (a
    fixed-base portal past its peak under P-Δ): fibres at a hinge switch between
    plastic loading and elastic unloading from one iterate to the next, and with
    the loading ones at zero stiffness and compression in the column the tangent
    turns indefinite (a negative eigenvalue of the constrained tangent, a Newton
    correction up the energy, s(0) < 0), so the iterates circle a local snap of the
    hinge zone instead of crossing it. Freezing the fibres' branches does not help
    there: each frozen branch set converges, to a state where other fibres must switch
    (measured). The corrector then relaxes: it solves (K + σ·W)·δu − F·δλ = r with
    the same constraint, W the norm's weights, σ starting at ``RELAX_START`` times
    K's largest diagonal entry, so the shifted matrix is definite and each move goes
    down the energy, and σ follows the residual, σ ← σ·|r_k|/|r_k−1| (switched
    evolution relaxation, as in :mod:`~largerot.solvers.equilibrium`), until
    σ < ``RELAX_END`` times that entry; Newton then goes on from there. The shift
    changes only the iteration matrix, never the residual, so the convergence test
    and the converged point are Newton's own.

A point whose corrections no longer change u (``STAGNATION`` relative to the
increment) while its relative residual is below ``STAGNATION_RESIDUAL`` is also
accepted: it has stopped moving, short of the tolerance.
"""
from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from ..linalg import Factorization, SingularTangent, factor, shifted, with_data
from .problem import Problem

__all__ = ["NewtonResult", "newton", "LoadConstraint", "DisplacementConstraint"]

log = logging.getLogger(__name__)

_EPS = np.finfo(float).eps

#: Accept a point whose corrections no longer change u (relative 1e-13): the
#: residual is then at its round-off floor, not a convergence failure.
STAGNATION = 1e-13
#: ... provided the residual is still small in absolute terms.
STAGNATION_RESIDUAL = 1e-6
#: Smallest increment (share of the structure's size) that corrections are measured
#: against: far below any displacement of interest, far above round-off.
INCREMENT_FLOOR = 1e-9
#: Multiple of the round-off level ρ = eps·‖|K|·|u|‖ accepted as converged
#: (measured residuals of 10⁴-element chains stagnate at 0.1–0.5 ρ).
FLOOR_FACTOR = 4.0
#: ... and only once an iteration no longer cuts the residual by this factor (a
#: residual still falling fast is not at its floor yet: one more iteration is cheap).
FLOOR_STALL = 0.3
#: Full step accepted when |s(1)| ≤ LS_ACCEPT·|s(0)|, s the projection of the
#: residual on the correction (Crisfield's loose rule): 0.1 scaled back steps of
#: coarse models that converge anyway (64-element rolled-up cantilever: 489 instead
#: of 385 residual evaluations); 0.8 leaves them untouched and still catches the
#: wild corrections of 10⁴-element chains (s(1)/s(0) measured −2 to −1e4).
LS_ACCEPT = 0.8
#: ... or when the residual norm fell below this share of its value (a step that
#: halves the residual is kept whatever s says).
LS_RESIDUAL_DROP = 0.5
#: Further residual evaluations of one line search at most (each costs an assembly).
LS_TRIALS = 4
#: Smallest step length: a shorter step makes too little progress to be worth it;
#: Newton's next iteration from the scaled-back point does better.
LS_ETA_MIN = 0.1
#: The line search stops once |s(η)| ≤ LS_SETTLE·|s(0)|.
LS_SETTLE = 0.25


#: Iterations in a row whose residual is no lower than the best of the ones before
#: them, after which Newton relaxes (module docstring). The fibre cycles seen have
#: period 2–3 (1.0e-8 → 4.2e-6 → 4.2e-7 → 1.0e-8), so 3 catches them early, while
#: a residual that rises for an iteration or two before converging is left alone.
STALL = 3
#: Relaxations in one call at most.
MAX_RELAXATIONS = 3
#: First shift σ, as a share of K's largest diagonal entry: small next to the axial
#: stiffness of a beam, large next to the negative eigenvalue of a fully yielded
#: hinge zone (portal of 40 fibre elements a member: −8·10³ against 10¹⁰).
RELAX_START = 1e-6
#: Hand back to Newton once σ falls below this share of the largest diagonal entry.
RELAX_END = 1e-10
#: Relaxation steps of one call at most, all its relaxations together (the portal's
#: take 9–13 each): a step that fails anyway is cut after this many extra evaluations.
MAX_RELAX_STEPS = 50


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
    line_searches: int = 0              # iterations whose full step was scaled back


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
    r = [float(x) for x in res[-3:]]               # plain floats: called once per point
    if len(r) < 3 or min(r) <= 0.0 or r[1] >= r[0] or r[2] == r[1]:
        return float("nan")
    return math.log(r[2] / r[1]) / math.log(r[1] / r[0])


def roundoff_level(K, u: np.ndarray) -> float:
    """ρ = eps·‖|K|·|u|‖: the residual's round-off level at ``u``, shape (n_free,)."""
    if sp.issparse(K) and K.format in ("csc", "csr"):
        absK = with_data(K, np.abs(K.data))  # the pattern shared: no validated new matrix
    else:
        absK = abs(K)
    return _EPS * float(np.linalg.norm(absK @ np.abs(u)))


def line_search(problem: Problem, u: np.ndarray, lam: float, du: np.ndarray, dlam: float,
                s0: float, trial: tuple, s1: float):
    """Step length η ∈ [``LS_ETA_MIN``, 1) along (δu, δλ) where s(η) = δu·r ≈ 0.

    ``trial`` is the evaluation ``(r, K, scale)`` at η = 1 and ``s1`` its s.
    Regula falsi with the Illinois modification on the bracket [0, 1] (or, when s
    keeps its sign, secant steps toward the root of the line through s(0) and s(1)),
    at most ``LS_TRIALS`` evaluations.

    Returns
    -------
    (eta, (r, K, scale), n_trials)
        The step length whose |s| is smallest, with its evaluation.
    """
    best = (abs(s1), 1.0, trial)
    a, sa, b, sb = 0.0, s0, 1.0, s1           # bracket ends (a < b)
    side = 0
    n = 0
    for n in range(1, LS_TRIALS + 1):
        if sa * sb < 0.0:
            eta = (a * sb - b * sa) / (sb - sa)
        else:                                 # no sign change: root of the chord from 0
            eta = b * s0 / (s0 - sb) if s0 != sb else 0.5 * b
        eta = float(min(max(eta, LS_ETA_MIN), 0.9 * b if sa * sb >= 0.0 else b))
        if not (a < eta < b) and sa * sb < 0.0:
            eta = 0.5 * (a + b)
        ev = problem.residual(u + eta * du, lam + eta * dlam)
        s = float(du @ ev[0])
        if not np.isfinite(s):
            b, sb = eta, sb                   # shorten and try again
            continue
        if abs(s) < best[0]:
            best = (abs(s), eta, ev)
        if abs(s) <= LS_SETTLE * abs(s0) or eta <= LS_ETA_MIN:
            break
        if sa * sb < 0.0:
            if s * sb < 0.0:                  # root in [eta, b]
                a, sa = eta, s
                if side == -1:
                    sb *= 0.5                 # Illinois: halve the stale end
                side = -1
            else:                             # root in [a, eta]
                b, sb = eta, s
                if side == 1:
                    sa *= 0.5
                side = 1
        else:
            b, sb = eta, s
    return best[1], best[2], n


def relaxed(problem: Problem, u: np.ndarray, lam: float, constraint, r: np.ndarray, K,
            max_steps: int = MAX_RELAX_STEPS):
    """Relax from (u, λ) by shifted corrections (module docstring).

    Parameters
    ----------
    u : ndarray, shape (n_free,)
    r, K : ndarray, shape (n_free,), and sparse matrix (n_free, n_free)
        Residual and tangent at (u, λ).
    max_steps : int
        Relaxation steps at most.

    Returns
    -------
    (u, lam, (r, K, scale), n_steps)
        The state reached with its evaluation (None if no step was taken), and the
        number of relaxation steps.
    """
    w2 = np.broadcast_to(getattr(problem, "weights", 1.0), u.shape) ** 2
    diag = float(np.abs(K.diagonal()).max()) or 1.0
    sigma = RELAX_START * diag
    rn = float(np.linalg.norm(r))
    ev = None
    n = 0
    for n in range(1, max_steps + 1):
        try:
            fact = factor(shifted(K, sigma * w2), symmetric=problem.symmetric)
        except SingularTangent:
            sigma *= 10.0
            continue
        sol = fact.solve(np.column_stack([r, problem.F]))
        dlam = constraint.delta_lam(sol[:, 0], sol[:, 1], u, lam)
        if dlam is None or not np.isfinite(dlam):
            break
        du = sol[:, 0] + dlam * sol[:, 1]
        trial = problem.residual(u + du, lam + dlam)
        rn1 = float(np.linalg.norm(trial[0]))
        if not np.isfinite(rn1):
            sigma *= 10.0
            continue
        u, lam, ev = u + du, lam + dlam, trial
        r, K = trial[0], trial[1]
        # a residual of exactly zero (before or after) must not divide: clamped anyway
        grew = rn1 / rn if rn > 0.0 else (0.0 if rn1 == 0.0 else np.inf)
        sigma *= min(max(grew, 0.1), 10.0)
        rn = rn1
        if sigma < RELAX_END * diag:
            break
    return u, lam, ev, n


#: Each correction moves the beams' nodes with their chords kept whole to first order
#: (``Problem.moved``, :mod:`largerot.solvers.predictor`), as the predictor does: a
#: second-order change of the Newton step, so the convergence rate is kept, while a
#: straight-line update of a fine mesh stretches and overturns its short chords
#: (a 10 m steel strip in 10,000 elements: 8–13 iterations per point without, 3–4 with).
CHORD_CORRECTION = True


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
    tol, tol_u : float
        Residual and displacement tolerances (module docstring).
    max_iterations : int
        Newton iterations at most (line-search trials and relaxation steps not
        counted; the result's ``iterations`` includes the relaxation steps).

    Returns
    -------
    NewtonResult
        On success ``factorization`` holds the tangent factorised at the converged
        point (for the next predictor and the stability check).
    """
    u = u.copy()
    history: list[float] = []
    n_searches = 0
    n_relaxed, relaxations, last_relaxed = 0, 0, 0     # relaxation steps, relaxations
    uphill = -max_iterations - 1          # last iteration whose correction went up the energy
    r, K, scale = problem.residual(u, lam)
    for k in range(max_iterations + 1):
        norm_r = math.sqrt(float(r @ r))
        ratio = norm_r / scale
        history.append(ratio)
        if not math.isfinite(ratio):
            return NewtonResult(False, u, lam, k, np.array(history), "The residual is not finite.",
                                line_searches=n_searches)
        try:
            # no near-singularity test here: the tangent is nearly singular at every
            # limit point and bifurcation, and the path must go through them
            fact = factor(K, symmetric=problem.symmetric)
        except SingularTangent:
            return NewtonResult(False, u, lam, k, np.array(history),
                                "The tangent is singular at a trial point.", line_searches=n_searches)
        du_r, du_F = fact.solve(r), fact.solve(problem.F)
        dlam = constraint.delta_lam(du_r, du_F, u, lam)
        if dlam is None or not math.isfinite(dlam):
            return NewtonResult(False, u, lam, k, np.array(history),
                                "The constraint equation has no solution at this trial point.",
                                line_searches=n_searches)
        du = du_r + dlam * du_F
        # a step that barely moves u (load taken by a stop) is judged on a floor of
        # INCREMENT_FLOOR × the structure's size, not on its own vanishing increment
        step = max(problem.norm(u - u_start), INCREMENT_FLOOR * problem.length_scale, 1e-300)
        corr = problem.norm(du) / step
        floor = None                            # round-off level, computed when it decides
        if corr <= tol_u and ratio > tol:
            floor = FLOOR_FACTOR * roundoff_level(K, u)
        at_floor = (floor is not None and norm_r <= floor and k > 0
                    and ratio > FLOOR_STALL * history[-2])
        if corr <= tol_u and (ratio <= tol or at_floor) or (
                k > 0 and corr <= STAGNATION and ratio <= STAGNATION_RESIDUAL):
            return NewtonResult(True, u, lam, k + n_relaxed, np.array(history),
                                f"Converged in {k + n_relaxed} iterations.", fact, _rate(history),
                                n_searches)
        if k == max_iterations:
            break
        if (relaxations < MAX_RELAXATIONS and n_relaxed < MAX_RELAX_STEPS
                and k - last_relaxed >= STALL and k - uphill <= STALL
                and min(history[-STALL:]) >= min(history[:-STALL])):
            relaxations, last_relaxed = relaxations + 1, k
            u, lam, ev, n = relaxed(problem, u, lam, constraint, r, K,
                                    MAX_RELAX_STEPS - n_relaxed)
            n_relaxed += n
            log.debug("relaxed at iteration %d in %d steps", k, n)
            if ev is not None:
                r, K, scale = ev
                continue
        if CHORD_CORRECTION and hasattr(problem, "moved"):
            u_new = problem.moved(u, du, lam, dlam)
            du = u_new - u
        else:
            u_new = u + du
        trial = problem.residual(u_new, lam + dlam)
        eta = 1.0
        s0 = float(du @ r)
        if s0 < 0.0:
            uphill = k
        if s0 != 0.0 and math.isfinite(s0):
            s1 = float(du @ trial[0])
            n1 = math.sqrt(float(trial[0] @ trial[0]))
            if not (abs(s1) <= LS_ACCEPT * abs(s0) or n1 <= LS_RESIDUAL_DROP * norm_r):
                if floor is None:
                    floor = FLOOR_FACTOR * roundoff_level(K, u)
                if norm_r > floor:              # at the round-off level s is noise
                    eta, trial, n_trials = line_search(problem, u, lam, du, dlam, s0, trial, s1)
                    n_searches += eta < 1.0
                    log.debug("line search: η = %.3g after %d trials (s(1)/s(0) = %.2g)",
                              eta, n_trials, s1 / s0)
        u += eta * du
        lam += eta * dlam
        r, K, scale = trial
    return NewtonResult(False, u, lam, max_iterations + n_relaxed, np.array(history),
                        f"No convergence in {max_iterations} iterations "
                        f"(relative residual {history[-1]:.2e}).", line_searches=n_searches)
