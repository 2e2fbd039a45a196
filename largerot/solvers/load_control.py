"""Load control: the load factor advances by a fixed increment each step.

Load control cannot pass a limit point: past it there is no equilibrium nearby at a
higher load. Newton's method then either fails, or converges onto another branch far
away (the snap-through an engineer must not miss). Both are caught:

* a converged point whose correction is more than ``JUMP_FACTOR`` times the
  predicted increment, or whose increment is more than ``JUMP_FACTOR`` times the last
  one, is suspected of a jump (near a limit the tangent predictor itself blows up);
* a step cut ``LIMIT_SEARCH_AFTER_CUTS`` times in a row (or down to ``min_step``) is
  suspected of ending at a limit.

Either way a short arc-length search (spherical constraint, ψ = 1) starts from the
last point toward the load asked for, and if the tangent's inertia changes on the
way the critical point is located by :func:`~largerot.solvers.critical.locate`. A
limit point found so ends the trace with status ``"limit"`` (the critical point
recorded), or, with ``at_limit="jump"``, the far point is kept and the jump recorded
as a ``"snap"`` event from the limit. A suspected jump with no limit on the way is
an ordinary point.
"""
from __future__ import annotations

import logging

import numpy as np

from ..linalg import SingularTangent, factor
from ..results import Event
from .constraints import Metric, QuadraticConstraint
from .critical import locate
from .newton import LoadConstraint, NewtonResult, newton
from .stability import count_negative
from .status import STATUS
from .stepper import PathStepper

__all__ = ["LoadStepper", "AT_LIMIT"]

log = logging.getLogger(__name__)

#: What load control does at a limit point: stop there, or keep the far point.
AT_LIMIT = ("stop", "jump")
#: A correction this many times larger than the predicted increment, or an increment
#: this many times the last one, is a suspected jump. A continuous path with equal
#: load steps changes its increment gradually (the built-in arch: at most 2.5× per
#: step up to its limit); the snap onto the far branch is 12× the last increment.
#: A false suspicion costs only the limit search.
JUMP_FACTOR = 5.0
#: A step cut this many times in a row starts the search for a limit point (instead
#: of halving on down to ``min_step``, 10 cuts, before looking).
LIMIT_SEARCH_AFTER_CUTS = 3
#: Arc-length steps of the search for a limit point (each a short Newton solve).
LIMIT_SEARCH_STEPS = 40
#: ... and gives up after this many failed corrections in a row (its step halved each
#: time): a path that cannot be followed at 1/16 of the step will not be found by
#: halving further, and each failure costs a whole Newton run (minutes at 10⁵ elements).
LIMIT_SEARCH_FAILURES = 4
#: Its first arc length as a share of the last step of the path (in the metric).
LIMIT_SEARCH_SHARE = 0.25


class _LimitReached(Exception):
    def __init__(self, cp) -> None:
        self.cp = cp


class LoadStepper(PathStepper):
    """Increment λ by ``h`` per step; at a limit point stop (``at_limit="stop"``) or jump."""

    def __init__(self, structure, step: float, *, at_limit: str = "stop", **options) -> None:
        if at_limit not in AT_LIMIT:
            raise ValueError(f"`at_limit` must be one of {', '.join(map(repr, AT_LIMIT))}, got {at_limit!r}.")
        self.at_limit = at_limit
        self._predicted = None
        self._snap = None
        self._searched = -1                   # point from which a limit was last sought
        super().__init__(structure, step, **options)
        if self.target is not None and (self.target - self.lam) * self.h < 0.0:
            raise ValueError(f"`target_load_factor` {self.target!r} lies behind the first load step "
                             f"({self.h!r} from λ = {self.lam!r}); give the step the sign of the way to the target.")

    def _predict(self, h: float):
        dlam = h
        if self.target is not None and (self.lam + h - self.target) * (self.lam - self.target) <= 0:
            dlam = self.target - self.lam          # shorten the last step to land on the target
        lam = self.lam + dlam
        u = self._along(dlam * self.tangent_direction(), dlam)
        self._predicted = u - self.u
        return u, lam, LoadConstraint(lam)

    # -- limit points ---------------------------------------------------------------
    def step(self) -> str:
        if self.slack_start:                   # slack cables: the first point by relaxation
            lam = self.target if self.target is not None and abs(self.target) < abs(self.h) else self.h
            self.relax_to(lam)
            if self.target is not None and self.lam == self.target:
                self.finish("target")
            return f"Point 1: λ = {self.lam:.6g}, found by relaxation from the slack start."
        try:
            return super().step()
        except _LimitReached as stop:
            return self._stop_at(stop.cp)

    def _stop_at(self, cp) -> str:
        last = self._points[-1]
        last.critical = (*last.critical, cp)
        self.status = "limit"
        self.message = f"{STATUS['limit'].message} (limit point at λ = {cp.load_factor:.9g})"
        log.info("load control stops at a limit point, λ = %.9g", cp.load_factor)
        return self.message

    def _attempt(self, h: float):
        res = super()._attempt(h)
        if (res is None or not res.converged) and abs(h) * 2**LIMIT_SEARCH_AFTER_CUTS <= self.h_nominal \
                and self._searched != self.n_points:
            # a step that keeps failing: look for a limit before halving any further
            self._searched = self.n_points
            cp, _ = self._find_limit(self.lam + np.sign(h) * self.h_nominal)
            if cp is not None:
                raise _LimitReached(cp)
        if res is None or not res.converged or self._predicted is None:
            return res
        p = self.problem
        prev = self._previous_increment()
        far = p.norm(res.u - self.u - self._predicted) > JUMP_FACTOR * p.norm(self._predicted)
        if prev is not None:
            # near a limit the tangent predictor itself blows up: compare with the last step
            far = far or p.norm(res.u - self.u) > JUMP_FACTOR * p.norm(prev[0])
        lost = count_negative(res.factorization) != self._points[-1].n_negative
        if not (far or lost):
            return res
        cp, passed = self._find_limit(res.lam)
        if cp is not None:
            if self.at_limit == "stop":
                raise _LimitReached(cp)
            self._snap = cp
        elif passed and lost:
            # the path itself reaches this load with its stability unchanged: Newton
            # landed on another branch (e.g. the unstable one of an imperfect column)
            return NewtonResult(False, res.u, res.lam, res.iterations, res.residuals,
                                "Converged onto another branch (its stability differs from the "
                                "path's at this load); the step is cut.")
        return res

    def _accept(self, res) -> None:
        super()._accept(res)
        if self._snap is not None:
            cp, self._snap = self._snap, None
            i = self.n_points - 2
            rec = self._points[-1]
            rec.critical = (*rec.critical, cp)
            rec.events = (*rec.events, Event("snap", i, cp.load_factor,
                                             f"from the limit point at λ = {cp.load_factor:.6g} "
                                             f"to point {i + 1} (λ = {rec.lam:.6g})"))

    def _fail(self, why: str) -> str:
        cp = None if self._searched == self.n_points else \
            self._find_limit(self.lam + np.sign(self.h) * self.h_nominal)[0]
        if cp is not None:
            return self._stop_at(cp)
        return super()._fail(why)

    def _find_limit(self, lam_end: float):
        """``(cp, passed)``: a limit point between the last point and λ = ``lam_end``,
        located (or None), and whether the path was followed past ``lam_end`` with its
        stability unchanged.

        Short arc-length continuation from the last point (spherical constraint,
        ψ = 1) until the inertia of the tangent changes (then located), λ passes
        ``lam_end`` or the search runs out of steps.
        """
        a = self._points[-1]
        prob = self.problem.with_states(a.history)
        metric = Metric(prob.weights**2, self.lam_scale**2)
        sign = 1.0 if lam_end >= a.lam else -1.0
        u, lam, n_now, prev = a.u, a.lam, a.n_negative, None
        dl = None
        failures = 0
        for _ in range(LIMIT_SEARCH_STEPS):
            _, K, _ = prob.residual(u, lam)
            try:
                v = factor(K, symmetric=prob.symmetric).solve(prob.F)
            except SingularTangent:
                return None, False
            norm = metric.norm(v, 1.0)
            if not np.isfinite(norm) or norm == 0.0:
                return None, False
            if dl is None:
                # sized by the last step of the path: next to a limit the tangent
                # K⁻¹F is huge, and a step sized by it would leap to another branch
                last = self._previous_increment()
                dl = LIMIT_SEARCH_SHARE * (metric.norm(*last) if last is not None
                                           else abs(lam_end - a.lam) * norm)
            sense = sign if prev is None else (1.0 if metric.dot(prev[0], prev[1], v, 1.0) >= 0 else -1.0)
            dlam = sense * dl / norm
            res = newton(prob, u + dlam * v, lam + dlam, QuadraticConstraint(metric, u, lam, dl), u,
                         self.tol, self.tol_u, self.max_iterations)
            self.n_factorizations += res.iterations + 1
            if not res.converged:
                failures += 1
                if failures == LIMIT_SEARCH_FAILURES:
                    return None, False
                dl /= 2.0
                continue
            failures = 0
            n = count_negative(res.factorization)
            if n != n_now:
                info = locate(prob, self.lam_scale, u, lam, res.u, res.lam, n_now, n,
                              self.tol, self.tol_u, self.max_iterations)
                self.n_factorizations += info["n_factorizations"]
                if info["kind"] != "limit":
                    return None, False
                return self._critical_from(info, self.n_points - 1), False
            if (res.lam - lam_end) * sign > 0.0:
                return None, True                 # past the load asked for: no limit on the way
            prev = (res.u - u, res.lam - lam)
            u, lam = res.u, res.lam
            dl *= 1.5
        return None, False
