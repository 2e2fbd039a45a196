"""Path steppers: advance along the equilibrium path one converged point at a time.

Modelled on scipy's ODE solver objects: a stepper has a public :meth:`PathStepper.step`,
a ``status`` (``"running"``, ``"finished"``, ``"failed"``), its current state
(``u``, ``lam``, the step size ``h``) and counters. The state is plain arrays and
numbers, so it can be saved, resumed or sent elsewhere; the factorisation it keeps
is only a cache.
"""
from __future__ import annotations

import logging

import numpy as np

from ..assembly import Assembly, dof_label
from ..errors import ModelError
from ..linalg import SingularTangent, factorize
from ..model import Structure
from ..elements import contact
from ..results import PATH_STATUS, CriticalPoint, EquilibriumPath, Event, Point
from .critical import locate
from .equilibrium import settle
from .newton import LoadConstraint, NewtonResult, newton
from .problem import Problem
from .stability import count_negative

__all__ = ["PathStepper"]

log = logging.getLogger(__name__)

#: Halve a failed step at most this many times before giving up (2⁻¹⁰ ≈ 1e-3 of it).
MAX_HALVINGS = 10
#: A point that took at most this many iterations lets a cut step grow back.
EASY_ITERATIONS = 4
#: Ramp constant loads in at most this many increments if one step does not converge.
CONSTANT_LOAD_RAMP = 64


class PathStepper:
    """Base class of the steppers; subclasses implement :meth:`_predict`.

    Parameters
    ----------
    structure : Structure
    step : float
        Initial step in the control's own measure.
    min_step, max_step : float, optional
        Bounds on the step size (absolute value).
    tol : float
        Relative residual tolerance of Newton's method.
    tol_u : float
        Relative size of the next correction against the step increment.
    max_iterations : int
        Newton iterations per attempt.
    target_load_factor : float, optional
        The path ends exactly on this load factor.
    """

    def __init__(self, structure: Structure, step: float, *, min_step: float | None = None,
                 max_step: float | None = None, tol: float = 1e-8, tol_u: float = 1e-6,
                 max_iterations: int = 25, target_load_factor: float | None = None) -> None:
        if not isinstance(structure, Structure):
            raise ModelError(f"Expected a largerot.Structure, got {structure!r}.")
        for name, v in (("tol", tol), ("tol_u", tol_u)):
            if not (np.isfinite(v) and 0 < v < 1):
                raise ValueError(f"`{name}` must lie in (0, 1), got {v!r}.")
        if int(max_iterations) < 1:
            raise ValueError(f"`max_iterations` must be at least 1, got {max_iterations!r}.")
        self.structure = structure
        self.assembly = Assembly.of(structure)
        self.assembly.reset_state()          # a new trace starts from the virgin material
        self.problem = Problem(self.assembly)
        self.tol, self.tol_u, self.max_iterations = float(tol), float(tol_u), int(max_iterations)
        self.target = None if target_load_factor is None else float(target_load_factor)
        self.h = float(step)
        self.h_nominal = abs(self.h)
        self.min_step = abs(min_step) if min_step is not None else self.h_nominal / 2**MAX_HALVINGS
        self.max_step = abs(max_step) if max_step is not None else np.inf
        self.status = "running"
        self.path_status = "running"
        self.message = PATH_STATUS["running"]
        self.n_steps = 0
        self.n_cuts = 0
        self.n_factorizations = 0
        n = self.problem.n
        self.u = np.zeros(n)
        self.lam = 0.0
        self._fact = None
        self._points_lam: list[float] = []
        self._points_u: list[np.ndarray] = []
        self._iterations: list[int] = []
        self._residuals: list[np.ndarray] = []
        self._n_negative: list[int] = []
        self._arc: list[float] = []
        self._extra: dict[str, list] = {}
        self.critical_points: list[CriticalPoint] = []
        self.events: list[Event] = []
        self.lam_scale = 1.0
        self._start()

    # -- start ------------------------------------------------------------------
    def _start(self) -> None:
        p = self.problem
        r, K, scale = p.residual(self.u, self.lam)
        # measured against the reference load too: at rest the internal forces of a
        # stiff curved member are pure round-off, and so would be the yardstick
        if np.linalg.norm(r) > self.tol * max(scale, float(np.linalg.norm(p.F))):
            # constant loads, pretension or a cable's own length: out of balance at rest
            if self.assembly.has_contacts:   # penalties from the structure at rest
                try:
                    self.assembly.set_contact_penalty(factorize(K, symmetric=p.symmetric), p.full(self.u))
                except SingularTangent:
                    pass
            self._settle_constant_loads()
            r, K, _ = p.residual(self.u, self.lam)
        try:
            self._fact = factorize(K, symmetric=p.symmetric)
        except SingularTangent as exc:
            raise self._mechanism_error(K, exc) from None
        self.n_factorizations += 1
        if self.assembly.has_contacts:
            self.assembly.set_contact_penalty(self._fact, p.full(self.u))
        if p.F.any():
            # displacement per unit λ of the linear response: weighs λ against u in
            # the arc-length metric (and in ``path.arc_length``)
            self.lam_scale = p.norm(self._fact.solve(p.F)) or 1.0
        self._record(NewtonResult(True, self.u, 0.0, 0, np.array([]), "", self._fact))

    def _settle_constant_loads(self) -> None:
        """Equilibrium under the constant loads alone at λ = 0 (ramped in if needed)."""
        p = self.problem
        done, frac, u = 0.0, 1.0, self.u
        while done < 1.0:
            p.const_factor = min(1.0, done + frac)
            res = settle(p, u, 0.0, self.tol, self.tol_u, self.max_iterations)
            if res.converged:
                u, done = res.u, p.const_factor
                frac = min(2 * frac, 1.0)
            else:
                frac /= 2
                if frac < 1.0 / CONSTANT_LOAD_RAMP:
                    p.const_factor = 1.0
                    raise ModelError("The structure finds no equilibrium under its constant loads "
                                     f"alone (stalled at {done:.0%} of them): {res.message}")
        self.u = u

    def _mechanism_error(self, K, exc: SingularTangent) -> ModelError:
        free = self.assembly.free
        dofs = _null_dofs(K, exc)
        names = ", ".join(dof_label(int(free[j])) for j in dofs[:12])
        more = f" and {len(dofs) - 12} more" if len(dofs) > 12 else ""
        return ModelError("The structure is a mechanism: its stiffness is singular. "
                          f"Free DOFs that move without resistance: {names}{more}. "
                          "Add supports or members, or fix those DOFs.")

    # -- stepping -----------------------------------------------------------------
    def step(self) -> str:
        """Advance by one converged point; return a message about it.

        A step that does not converge is halved and tried again down to
        ``min_step``; past that the stepper fails, keeping every point traced.
        """
        if self.status != "running":
            raise RuntimeError(f"Attempt to step on a {self.status} stepper.")
        while True:
            res = self._attempt(self.h)
            if res is not None and res.converged:
                self._accept(res)
                msg = f"Point {len(self._points_lam) - 1}: λ = {res.lam:.6g}, {res.message}"
                if self.target is not None and abs(res.lam - self.target) <= 1e-12 * max(1.0, abs(self.target)):
                    self.finish("target")
                return msg
            self.assembly.restore_state()
            self.n_cuts += 1
            self.h /= 2.0
            why = res.message if res is not None else "no predictor"
            log.debug("step cut to %.3g: %s", self.h, why)
            if abs(self.h) < self.min_step:
                self.status = "failed"
                self.path_status = "failed"
                self.message = f"{PATH_STATUS['failed']} Last attempt: {why}"
                return self.message

    def resume(self, step: float | None = None, target_load_factor: float | None = None) -> None:
        """Go on with a finished trace: e.g. unload after reaching a target.

        ``step`` replaces the step size (for load and displacement control its sign
        sets the direction); ``target_load_factor`` is the new target (None: none).
        The points traced so far, and the material and contact history, are kept.
        """
        if self.status == "failed":
            raise RuntimeError("A failed trace cannot be resumed; start a new one.")
        if step is not None:
            if not (np.isfinite(step) and step != 0.0):
                raise ValueError(f"`step` must be non-zero and finite, got {step!r}.")
            self.h, self.h_nominal = float(step), abs(float(step))
            self.min_step = self.h_nominal / 2**MAX_HALVINGS
        self.target = None if target_load_factor is None else float(target_load_factor)
        self.status = self.path_status = "running"
        self.message = PATH_STATUS["running"]

    def finish(self, path_status: str) -> None:
        """End the trace with one of :data:`~largerot.results.PATH_STATUS`."""
        self.status = "finished"
        self.path_status = path_status
        self.message = PATH_STATUS[path_status]

    def _attempt(self, h: float) -> NewtonResult | None:
        pred = self._predict(h)
        if pred is None:
            return None
        u_pred, lam_pred, constraint = pred
        res = self._correct(u_pred, lam_pred, constraint)
        if res.converged and self.target is not None and self._crossed(res.lam):
            res = self._land(res)
        return res

    def _correct(self, u_pred, lam_pred, constraint) -> NewtonResult:
        res = newton(self.problem, u_pred, lam_pred, constraint, self.u, self.tol, self.tol_u,
                     self.max_iterations)
        self.n_factorizations += res.iterations + 1
        if res.converged and self.assembly.has_contacts:
            res = self._settle_contacts(res)
        return res

    def _settle_contacts(self, res: NewtonResult) -> NewtonResult:
        """Uzawa updates of the contact multipliers at a converged point.

        Each update sets the multipliers to the contact forces and solves the same
        point again (λ held) until every contact meets the exact conditions to
        within ``GAP_TOL`` × the structure's size (:mod:`largerot.elements.contact`).
        """
        asm, p = self.assembly, self.problem
        grp = next(g for g in asm.groups if g.kind == "contact")
        tol_gap = contact.GAP_TOL * p.length_scale
        iterations = res.iterations
        for _ in range(contact.MAX_UPDATES):
            cr = asm.contact_response(p.full(res.u))
            if contact.converged(cr, tol_gap):
                return NewtonResult(True, res.u, res.lam, iterations, res.residuals, res.message,
                                    res.factorization, res.rate)
            grp.state["lam"] = contact.updated_multipliers(cr)
            res = newton(p, res.u, res.lam, LoadConstraint(res.lam), self.u, self.tol,
                         self.tol_u, self.max_iterations)
            self.n_factorizations += res.iterations + 1
            iterations += res.iterations
            if not res.converged:
                return res
        return NewtonResult(False, res.u, res.lam, iterations, res.residuals,
                            f"Contact conditions not met after {contact.MAX_UPDATES} multiplier updates.")

    def _crossed(self, lam: float) -> bool:
        t = self.target
        return (self.lam - t) * (lam - t) < 0.0 and abs(lam - t) > 1e-12 * max(1.0, abs(t))

    def _land(self, res: NewtonResult) -> NewtonResult:
        """Redo a step that passed the target so that it ends exactly on it."""
        t = (self.target - self.lam) / (res.lam - self.lam)
        u_pred = self.u + t * (res.u - self.u)
        return self._correct(u_pred, self.target, LoadConstraint(self.target))

    def _accept(self, res: NewtonResult) -> None:
        self.u_prev, self.lam_prev = self.u, self.lam
        self.u, self.lam = res.u, res.lam
        self._fact = res.factorization
        self._record(res)
        self.n_steps += 1
        self._adapt(res)
        self._events()
        if self._n_negative[-1] != self._n_negative[-2]:
            self._critical_event()
        self.assembly.commit_state(self.problem.full(self.u))
        if self.assembly.has_contacts:
            self.assembly.set_contact_penalty(self._fact, self.problem.full(self.u))

    def _events(self) -> None:
        """Events between the last two points: first yield, contacts, cables.

        An event function that is smooth on the side before the event (the yield
        margin while elastic, the gap while open, the contact force while closed) is
        extrapolated from its two points before it to its zero.
        """
        ex, i = self._extra, len(self._points_lam) - 2
        lam = self._points_lam

        def crossing(f):           # f: the event function's history, last axis points
            if i < 1 or f[-3] == f[-2]:
                return lam[i + 1]
            t = f[-2] / (f[-3] - f[-2])
            x = lam[i] + t * (lam[i] - lam[i - 1]) if t >= 0 else lam[i + 1]
            return min(max(x, min(lam[i], lam[i + 1])), max(lam[i], lam[i + 1]))

        if "yield_margin" in ex:
            m = [float(v) for v in ex["yield_margin"][-3:]]
            if m[-2] < 0.0 <= m[-1]:
                self.events.append(Event("first yield", i, crossing(m)))
        if "contact_event" in ex:
            a, b = ex["contact_event"][-2], ex["contact_event"][-1]
            nodes = self.assembly.contact_nodes
            for kind, hit, f in (("contact closes", (a > 0) & (b <= 0), ex["gap"]),
                                 ("contact opens", (a <= 0) & (b > 0), ex["contact_force"])):
                for k in np.flatnonzero(hit):
                    self.events.append(Event(kind, i, crossing([v[k] for v in f[-3:]]),
                                             f"node {nodes[k]}"))
        if "slack" in ex:
            a, b = ex["slack"][-2], ex["slack"][-1]
            bars = np.flatnonzero(self.assembly.cable)
            for kind, hit in (("cable slack", ~a & b), ("cable taut", a & ~b)):
                for k in np.flatnonzero(hit):
                    self.events.append(Event(kind, i, lam[i + 1], f"bar element {bars[k]}"))

    def _critical_event(self) -> None:
        """Locate the critical point between the last two points (an event)."""
        i = len(self._points_lam) - 2
        info = locate(self.problem, self.lam_scale, self._points_u[i], self._points_lam[i],
                      self._points_u[i + 1], self._points_lam[i + 1], self._n_negative[i],
                      self._n_negative[i + 1], self.tol, self.tol_u, self.max_iterations)
        self.n_factorizations += info["n_factorizations"]
        cp = CriticalPoint(info["kind"], info["lam"], i, self.assembly.expand(info["u"]),
                           self.assembly.expand(_normalised_mode(info["mode"], self.assembly.free)),
                           located=info["located"], load_cosine=info["load_cosine"])
        self.critical_points.append(cp)
        log.info("%s point at λ = %.9g after point %d", cp.kind, cp.load_factor, i)
        self._on_critical(cp, info)

    def _on_critical(self, cp: CriticalPoint, info: dict) -> None:
        """Hook for subclasses (branch switching); nothing by default."""

    def _unrecord(self) -> None:
        """Drop the last recorded point (a branch switch replaces it)."""
        for lst in (self._points_lam, self._points_u, self._iterations, self._residuals,
                    self._n_negative, self._arc):
            lst.pop()
        for v in self._extra.values():
            v.pop()

    def _adapt(self, res: NewtonResult) -> None:
        """After an easy point, let a cut step grow back toward its nominal size."""
        if res.iterations <= EASY_ITERATIONS and abs(self.h) < self.h_nominal:
            self.h = np.sign(self.h) * min(2 * abs(self.h), self.h_nominal, self.max_step)

    def _record(self, res: NewtonResult) -> None:
        self._points_lam.append(float(res.lam))
        self._points_u.append(res.u.copy())
        self._iterations.append(int(res.iterations))
        self._residuals.append(np.asarray(res.residuals))
        self._n_negative.append(count_negative(res.factorization))
        if self._arc:
            du = self.problem.norm(res.u - self._points_u[-2])
            self._arc.append(self._arc[-1] + float(np.hypot(du, self.lam_scale * (res.lam - self._points_lam[-2]))))
        else:
            self._arc.append(0.0)
        for k, v in self.problem.point_data(res.u).items():
            self._extra.setdefault(k, []).append(v)

    def _predict(self, h: float):
        """Return ``(u_pred, lam_pred, constraint)`` for a step ``h``, or None."""
        raise NotImplementedError

    # -- views ------------------------------------------------------------------------
    def tangent_direction(self) -> np.ndarray:
        """δu_F = K⁻¹·F at the current point, shape (n_free,)."""
        return self._fact.solve(self.problem.F)

    def last_point(self) -> Point:
        i = len(self._points_lam) - 1
        return Point(self.structure, i, self.lam, self.assembly.expand(self.u), self._iterations[-1])

    def state(self) -> dict:
        """The stepper's state as plain data (arrays and numbers)."""
        return {"u": self.u.copy(), "lam": self.lam, "h": self.h, "status": self.status,
                "path_status": self.path_status, "n_steps": self.n_steps,
                "history": self.assembly.state_data()}

    def result(self) -> EquilibriumPath:
        """The path traced so far."""
        counters = {"steps": self.n_steps, "step_cuts": self.n_cuts,
                    "factorizations": self.n_factorizations,
                    "residual_evaluations": self.problem.n_evaluations}
        return EquilibriumPath(self.structure, self.assembly.free, self._points_lam,
                               np.array(self._points_u), self._iterations, self._residuals,
                               self._n_negative, self.path_status, self.message,
                               critical_points=list(self.critical_points),
                               events=list(self.events),
                               counters=counters,
                               extra={k: np.array(v) for k, v in self._extra.items()},
                               arc_length=np.array(self._arc))


def _normalised_mode(phi: np.ndarray, free: np.ndarray) -> np.ndarray:
    """Scale a mode (free DOFs) to a largest translation of 1, that entry positive."""
    trans = free % 3 != 2
    ref = phi[trans] if trans.any() else phi
    k = int(np.argmax(np.abs(ref)))
    big = ref[k]
    return phi / big if big != 0.0 else phi


def _null_dofs(K, exc: SingularTangent) -> np.ndarray:
    """Free DOFs with a share in the null space of a singular tangent."""
    n = K.shape[0]
    if n <= 3000:
        w, v = np.linalg.eigh(K.toarray())
        big = max(abs(w).max(), 1e-300)
        null = v[:, abs(w) <= 1e-10 * big]
        if null.shape[1]:
            share = np.abs(null).max(axis=1)
            return np.flatnonzero(share > 1e-3 * share.max())
    if exc.dofs is not None and len(exc.dofs):
        return np.sort(exc.dofs)
    return np.arange(n)
