"""Path steppers: advance along the equilibrium path one converged point at a time.

Modelled on scipy's ODE solver objects: a stepper has a public :meth:`PathStepper.step`,
a ``status`` from the one table :data:`~largerot.solvers.status.STATUS`, its current
state (``u``, ``lam``, the step size ``h``, the history of yielding fibres and
contacts) and counters.

Who owns what
    The stepper works on a frozen snapshot of the structure (``structure.snapshot()``),
    so later edits of the structure never reach it or its path. Everything that
    changes along the trace is the stepper's own plain data: the converged points
    (one :class:`PointRecord` each, appended in one operation, so an interrupt
    cannot leave them half-written), the committed history (on the last point),
    the step size and the counters. The factorisation is a cache rebuilt on demand;
    a stepper pickles, and an unpickled one goes on to the same end point.
"""
from __future__ import annotations

import logging
from dataclasses import dataclass, field

import numpy as np

from ..assembly import dof_label
from ..errors import ModelError, checked_integer, checked_number, warn_input
from ..linalg import SingularTangent, factor, factorize
from ..results import CriticalPoint, EquilibriumPath, Event, Point
from ..snapshot import Model, check_traceable
from .critical import Bracket, locate
from .equilibrium import settle
from .events import crossings, locate_crossings, user_events
from .newton import FLOOR_FACTOR, LoadConstraint, NewtonResult, newton, roundoff_level
from .predictor import chord_consistent
from .problem import Problem
from .stability import count_negative
from .status import ENDED, STATUS

__all__ = ["PathStepper", "PointRecord", "checked_option"]

log = logging.getLogger(__name__)

#: Halve a failed step at most this many times by default (min_step = step/2¹⁰ ≈ 1e-3 of it).
MAX_HALVINGS = 10
#: Hard bound on the cuts of one step, whatever ``min_step`` says (2⁻⁶⁰ of a step is
#: below any meaningful increment): the halving loop always ends.
MAX_CUTS = 60
#: A point that took at most this many iterations lets a cut step grow back.
EASY_ITERATIONS = 4
#: Default of ``resume(target_load_factor=...)``: keep the target as it is.
KEEP = object()
#: Ramp constant loads in at most this many increments if one step does not converge.
CONSTANT_LOAD_RAMP = 64


def checked_option(name: str, value, *, positive: bool = False, nonzero: bool = False,
                   integer: bool = False, allow_none: bool = False, lower=None, upper=None):
    """A solver option as a float (or int), or a TypeError/ModelError naming it.

    The rules are :func:`largerot.errors.checked_number` and ``checked_integer``'s: a
    string is a TypeError, never converted; a whole number may be given as ``10.0``
    but ``2.5`` or ``inf`` for an integer option is a ModelError.
    """
    if integer:
        return checked_integer("", name, value, lower=lower, allow_none=allow_none)
    return checked_number("", name, value, positive=positive, nonzero=nonzero, lower=lower,
                          upper=upper, allow_none=allow_none)


@dataclass
class PointRecord:
    """One converged point as the stepper keeps it (plain data).

    ``continuous`` is False where the increment from the previous point is not a step
    along the path (a branch switch); ``history`` is the committed history of the
    groups, kept on the last point only.
    """

    lam: float
    u: np.ndarray
    iterations: int
    residuals: np.ndarray
    n_negative: int
    arc: float
    record: dict
    continuous: bool = True
    critical: tuple = ()
    events: tuple = ()
    history: list | None = field(default=None, repr=False)


class PathStepper:
    """Base class of the steppers; subclasses implement :meth:`_predict`.

    Parameters
    ----------
    structure : Structure or Model
        Its snapshot is taken now; later edits do not reach the trace.
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
    events : callable or sequence of callables, optional
        ``f(point) -> float``; a sign change between two points is an event, located
        by root finding (attributes ``terminal`` and ``direction`` as in scipy).
    """

    #: what :func:`largerot.save` writes it as
    saved_kind = "checkpoint"

    def __init__(self, structure, step: float, *, min_step: float | None = None,
                 max_step: float | None = None, tol: float = 1e-8, tol_u: float = 1e-6,
                 max_iterations: int = 25, target_load_factor: float | None = None,
                 events=None) -> None:
        if not hasattr(structure, "snapshot"):
            raise TypeError(f"Expected a largerot.Structure, got {structure!r}.")
        for name, v in (("tol", tol), ("tol_u", tol_u)):
            checked_option(name, v, positive=True, upper=1.0)
        max_iterations = checked_option("max_iterations", max_iterations, integer=True, lower=1)
        self.h = checked_option("step", step, nonzero=True)
        self.h_nominal = abs(self.h)
        self.min_step = (checked_option("min_step", min_step, positive=True) if min_step is not None
                         else self.h_nominal / 2**MAX_HALVINGS)
        self.max_step = (checked_option("max_step", max_step, positive=True) if max_step is not None
                         else np.inf)
        self.target = checked_option("target_load_factor", target_load_factor, allow_none=True)
        self.model: Model = structure.snapshot()
        check_traceable(self.model)          # nothing to solve: error; no load: InputWarning
        self.assembly = self.model.assembly
        self.problem = Problem(self.assembly)
        self.tol, self.tol_u, self.max_iterations = float(tol), float(tol_u), int(max_iterations)
        self.user_events = user_events(events)
        self.status = "running"
        self.message = STATUS["running"].message
        self.n_steps = 0
        self.n_cuts = 0
        self.n_factorizations = 0
        self._points: list[PointRecord] = []
        self._fact = None
        self.lam_scale = 1.0
        self._start()

    @property
    def structure(self) -> Model:
        """The frozen model this stepper traces (kept for older code; see ``model``)."""
        return self.model

    # -- state, read from the last point -------------------------------------------
    @property
    def u(self) -> np.ndarray:
        """Free displacements at the last converged point, shape (n_free,)."""
        return self._points[-1].u

    @property
    def lam(self) -> float:
        return self._points[-1].lam

    @property
    def history(self) -> list:
        """The committed history of the groups at the last point (plain data)."""
        return self._points[-1].history

    @property
    def n_points(self) -> int:
        return len(self._points)

    @property
    def running(self) -> bool:
        return self.status == "running"

    def _previous_increment(self):
        """(Δu, Δλ) from the point before the last to the last, or None."""
        if len(self._points) < 2 or not self._points[-1].continuous:
            return None
        a, b = self._points[-2], self._points[-1]
        return b.u - a.u, b.lam - a.lam

    # -- start ------------------------------------------------------------------
    def _start(self) -> None:
        p = self.problem
        u = np.zeros(p.n)
        history = self.assembly.initial_states()
        r, K, scale = p.residual(u, 0.0)
        if np.linalg.norm(r) > self._rest_tolerance(K, scale):
            # constant loads, pretension or a cable's own length: out of balance at rest
            try:       # contact penalties from the structure at rest
                history = self.assembly.calibrated(history, p.evaluation(u, 0.0),
                                                   factorize(K, symmetric=p.symmetric))
                p.states = list(history)
            except SingularTangent:
                pass
            u = self._settle_constant_loads(u)
            self._warn_inverted(u)
            r, K, _ = p.residual(u, 0.0)
        ev = p.evaluation(u, 0.0)
        try:
            fact = factorize(K, symmetric=p.symmetric)
        except SingularTangent as exc:
            if not np.any(self.assembly.record(ev).get("slack", False)):
                raise self._mechanism_error(K, exc) from None
            # a sagging cable hangs slack until the scaled loads (its own weight
            # growing with λ, a hung load) stretch it: no tangent to predict with, so
            # the first point is found by relaxation (see relax_to)
            self.slack_start = True
            self._points.append(PointRecord(0.0, u, 0, np.array([]), 0, 0.0, self.assembly.record(ev),
                                            history=ev.states()))
            return
        self.n_factorizations += 1
        history = self.assembly.calibrated(ev.states(), ev, fact)
        if p.F.any():
            # displacement per unit λ of the linear response: weighs λ against u in
            # the arc-length metric (and in ``path.arc_length``)
            self.lam_scale = p.norm(fact.solve(p.F)) or 1.0
        self._fact = fact                  # factorize uses factor's back end, as Newton does
        rec = PointRecord(0.0, u, 0, np.array([]), count_negative(fact), 0.0, self.assembly.record(ev),
                          history=history)
        self._points.append(rec)

    slack_start = False

    def relax_to(self, lam: float) -> None:
        """Find the first point at load factor ``lam`` by relaxation (slack start only).

        The tangent at rest of a slack cable is singular, so Newton's method has no
        first step; pseudo-transient relaxation (:func:`~largerot.solvers.equilibrium.settle`)
        finds the hanging equilibrium at ``lam`` as it does under constant loads.
        """
        p = self.problem
        p.states = list(self.history)
        res = settle(p, self.u, lam, self.tol, self.tol_u, self.max_iterations)
        if not res.converged:
            raise ModelError(f"The slack structure finds no equilibrium at λ = {lam:.6g}: {res.message}")
        self.n_factorizations += res.iterations + 1
        self.slack_start = False
        self.lam_scale = p.norm(res.factorization.solve(p.F)) or 1.0
        rec, a = self._new_point(res), self._points[-1]
        # no path to follow from the slack state: events between are interpolated
        rec.events = tuple(self._locate_events(a, rec, search=False)[0])
        self._commit(rec, res.factorization)

    def _rest_tolerance(self, K, scale: float) -> float:
        """Largest residual at rest that is not an imbalance.

        The relative test against the forces and the reference load, or the round-off
        level of forces computed from node coordinates, eps·‖|K|·|X|‖ (X: each DOF's
        coordinate magnitude plus the structure's size, 1 for rotations), whichever is
        larger: a 1 N reference load on a steel arch must not read round-off as a load.
        """
        p, asm = self.problem, self.assembly
        free = asm.free
        xy = np.abs(asm.xy).ravel()
        node_size = np.where(free % 3 == 2, 1.0,
                             xy[2 * (free // 3) + np.minimum(free % 3, 1)] + p.length_scale)
        return max(self.tol * max(scale, float(np.linalg.norm(p.F))),
                   FLOOR_FACTOR * roundoff_level(K, node_size))

    def _settle_constant_loads(self, u: np.ndarray) -> np.ndarray:
        """Equilibrium under the constant loads alone at λ = 0 (ramped in if needed)."""
        p = self.problem
        done, frac = 0.0, 1.0
        while done < 1.0:                  # bounded: frac halves to 1/CONSTANT_LOAD_RAMP
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
        return u

    def _warn_inverted(self, u: np.ndarray) -> None:
        """Warn when the constant loads alone turned a beam or bar element inside out
        (its chord points against the undeformed one): legal, rarely meant."""
        m = self.model
        X = m.xy + self.assembly.full(u, 0.0).reshape(-1, 3)[:, :2]
        for kind, nodes, skip in (("beam", m.beam_nodes, None), ("bar", m.bar_nodes, m.bar_cable)):
            if not len(nodes):
                continue
            now, before = X[nodes[:, 1]] - X[nodes[:, 0]], m.xy[nodes[:, 1]] - m.xy[nodes[:, 0]]
            inverted = np.einsum("ei,ei->e", now, before) < 0.0
            if skip is not None:
                inverted &= ~skip                   # a slack cable may hang any way
            if inverted.any():
                e = int(np.flatnonzero(inverted)[0])
                kinds = ("beam",) if kind == "beam" else ("bar", "cable")
                member = next((mb.id for mb in m.members if mb.kind in kinds and e in mb.elements), "?")
                warn_input(f"The constant loads alone turn {int(inverted.sum())} {kind} element(s) "
                           f"inside out (first: {kind} element {e} of member {member}, between nodes "
                           f"{int(nodes[e, 0])} and {int(nodes[e, 1])}): check their size and direction.")

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
        An exception (an interrupt) leaves the stepper at its last converged point.
        """
        if self.status != "running":
            raise RuntimeError(f"Attempt to step on a trace that has ended ({self.status}: "
                               f"{self.message}); call resume() to go on.")
        if self.slack_start:
            raise RuntimeError("The structure hangs slack at rest: call relax_to(λ) for its first point.")
        for _ in range(MAX_CUTS + 1):
            self.problem.states = list(self.history)        # working copy of the history
            res = self._attempt(self.h)
            if res is not None and res.converged:
                self._accept(res)
                msg = f"Point {self.n_points - 1}: λ = {self.lam:.6g}, {res.message}"
                if self.status == "running" and self.target is not None and \
                        abs(self.lam - self.target) <= 1e-12 * max(1.0, abs(self.target)):
                    self.finish("target")
                return msg
            self.n_cuts += 1
            why = res.message if res is not None else "no predictor"
            h = self.h / 2.0
            log.debug("step cut to %.3g: %s", h, why)
            if not abs(h) >= self.min_step:          # also catches NaN
                return self._fail(why)
            self.h = h
        return self._fail(f"the step was cut {MAX_CUTS} times")

    def _fail(self, why: str) -> str:
        self.status = "failed"
        self.message = f"{STATUS['failed'].message} Last attempt: {why}"
        return self.message

    def set_step(self, h: float, min_step: float | None = None) -> None:
        """Set the step size (its sign sets the direction of load and displacement control).

        ``min_step`` (default ``|h|``/2¹⁰) is the smallest step tried after cuts.
        """
        h = checked_option("step", h, nonzero=True)
        self.h, self.h_nominal = h, abs(h)
        self.min_step = (checked_option("min_step", min_step, positive=True) if min_step is not None
                         else abs(h) / 2**MAX_HALVINGS)

    def set_target(self, target_load_factor: float | None) -> None:
        """Set (or with None remove) the load factor the trace ends on exactly."""
        self.target = checked_option("target_load_factor", target_load_factor, allow_none=True)

    def resume(self, step: float | None = None, target_load_factor=KEEP) -> None:
        """Go on with an ended trace: e.g. after an interrupt, or unload after a target.

        ``step`` replaces the step size (for load and displacement control its sign
        sets the direction); ``target_load_factor`` is the new target (None: none;
        left out: the same as before). The points traced so far, and the material
        and contact history, are kept.
        """
        if self.status == "failed":
            raise RuntimeError("A failed trace cannot be resumed; start a new one.")
        if step is not None:
            self.set_step(step)
        if target_load_factor is not KEEP:
            self.set_target(target_load_factor)
        self.status = "running"
        self.message = STATUS["running"].message

    def finish(self, status: str) -> None:
        """End the trace with one of the words of :data:`~largerot.solvers.status.STATUS`."""
        if status not in ENDED:
            raise ValueError(f"`status` must be one of {', '.join(ENDED)}, got {status!r}.")
        self.status = status
        self.message = STATUS[status].message

    def _attempt(self, h: float) -> NewtonResult | None:
        pred = self._predict(h)
        if pred is None:
            return None
        u_pred, lam_pred, constraint = pred
        if not (np.isfinite(u_pred).all() and np.isfinite(lam_pred)):
            return NewtonResult(False, self.u, self.lam, 0, np.array([]), "The predictor is not finite.")
        res = self._correct(u_pred, lam_pred, constraint)
        if res.converged and self.target is not None and self._crossed(res.lam):
            res = self._land(res)
        return res

    def _correct(self, u_pred, lam_pred, constraint) -> NewtonResult:
        res = newton(self.problem, u_pred, lam_pred, constraint, self.u, self.tol, self.tol_u,
                     self.max_iterations)
        self.n_factorizations += res.iterations + 1
        if res.converged and self.assembly.augments:
            res = self._augment(res)
        return res

    def _augment(self, res: NewtonResult) -> NewtonResult:
        """Update the constraint groups' multipliers (contacts) and solve the point again.

        Repeated, λ held, until every group is satisfied (for contacts: the exact
        conditions to ``GAP_TOL`` × the structure's size, :mod:`largerot.elements.contact`).
        """
        from ..elements.contact import MAX_UPDATES
        p = self.problem
        iterations = res.iterations
        for _ in range(MAX_UPDATES):
            states = self.assembly.augmented(p.evaluation(res.u, res.lam), p.states)
            if states is None:
                return NewtonResult(True, res.u, res.lam, iterations, res.residuals, res.message,
                                    res.factorization, res.rate)
            p.states = states
            res = newton(p, res.u, res.lam, LoadConstraint(res.lam), self.u, self.tol,
                         self.tol_u, self.max_iterations)
            self.n_factorizations += res.iterations + 1
            iterations += res.iterations
            if not res.converged:
                return res
        return NewtonResult(False, res.u, res.lam, iterations, res.residuals,
                            f"Contact conditions not met after {MAX_UPDATES} multiplier updates.")

    def _crossed(self, lam: float) -> bool:
        t = self.target
        return (self.lam - t) * (lam - t) < 0.0 and abs(lam - t) > 1e-12 * max(1.0, abs(t))

    def _land(self, res: NewtonResult) -> NewtonResult:
        """Redo a step that passed the target so that it ends exactly on it."""
        t = (self.target - self.lam) / (res.lam - self.lam)
        u_pred = self.u + t * (res.u - self.u)
        self.problem.states = list(self.history)
        return self._correct(u_pred, self.target, LoadConstraint(self.target))

    # -- accepting a point ----------------------------------------------------------
    def _new_point(self, res: NewtonResult, continuous: bool = True, problem=None) -> PointRecord:
        """The record of a converged point, from the evaluation Newton made there."""
        p = self.problem if problem is None else problem
        ev = p.evaluation(res.u, res.lam)
        fact = res.factorization
        history = self.assembly.calibrated(ev.states(), ev, fact)
        last = self._points[-1]
        du = p.norm(res.u - last.u)
        arc = last.arc + float(np.hypot(du, self.lam_scale * (res.lam - last.lam)))
        return PointRecord(float(res.lam), res.u.copy(), int(res.iterations),
                           np.asarray(res.residuals), count_negative(fact), arc,
                           self.assembly.record(ev), continuous, history=history)

    def _accept(self, res: NewtonResult) -> None:
        """Record a converged point with its critical points and events; one append commits it."""
        rec = self._new_point(res)
        a = self._points[-1]
        critical, info = (), None
        # a point reached from a marginal one (a branch switch) differs from it in
        # stability by construction: no new critical point there
        if rec.n_negative != a.n_negative and a.continuous:
            cp, info = self._critical_point(a, rec)
            critical = (cp,)
        terminal = None
        if self.user_events or self.assembly.events:
            events, terminal = self._locate_events(a, rec)
            rec.events = tuple(events)
        rec.critical = critical
        fact = res.factorization
        switch = self._switch_point(a, critical, info)
        if switch is not None:
            rec, fact = switch
            rec.critical = critical
        self._commit(rec, fact)
        self._adapt(res)
        if terminal is not None and self.status == "running":
            self.status, self.message = "event", f"{STATUS['event'].message} ({terminal})"

    def _commit(self, rec: PointRecord, fact) -> None:
        """Make ``rec`` the last point: one append commits it (interrupt-safe)."""
        last = self._points[-1]
        self._fact = fact
        self._points.append(rec)                     # the commit
        last.history = None                          # only the last point keeps it
        self.n_steps += 1

    def _critical_point(self, a: PointRecord, b: PointRecord):
        """Locate the critical point between the last point and a new one (an event)."""
        i = len(self._points) - 1
        info = locate(self.problem.with_states(a.history), self.lam_scale, a.u, a.lam, b.u, b.lam,
                      a.n_negative, b.n_negative, self.tol, self.tol_u, self.max_iterations)
        self.n_factorizations += info["n_factorizations"]
        cp = self._critical_from(info, i)
        log.info("%s point at λ = %.9g after point %d", cp.kind, cp.load_factor, i)
        return cp, info

    def _critical_from(self, info: dict, i: int) -> CriticalPoint:
        """A CriticalPoint after point ``i`` from what ``critical.locate`` found."""
        free = self.assembly.free
        return CriticalPoint(info["kind"], info["lam"], i, self.assembly.full(info["u"], info["lam"]),
                             self.assembly.expand(_normalised_mode(info["mode"], free)),
                             located=info["located"], load_cosine=info["load_cosine"])

    def _locate_events(self, a: PointRecord, b: PointRecord, search: bool = True):
        i = len(self._points) - 1
        pa, pb = self._point_of(i, a), self._point_of(i + 1, b)
        found = crossings(self.assembly.events, self.user_events, a.record, b.record, pa, pb)
        if not found:
            return [], None
        brackets: dict = {}

        def bracket_for(event):
            if not search:
                return None
            history = self.assembly.before_event(a.history, event)
            key = None if history is a.history else (event.kind, event.locate_key)
            if key not in brackets:
                brackets[key] = Bracket(self.problem.with_states(history), self.lam_scale, a.u,
                                        a.lam, b.u, b.lam, self.tol, self.max_iterations)
            return brackets[key]

        located = locate_crossings(found, bracket_for,
                                   lambda r: Point(self.model, i, r.lam, self.assembly.full(r.u, r.lam)),
                                   a.lam, b.lam)
        self.n_factorizations += sum(br.n_factorizations for br in brackets.values())
        events, terminal = [], None
        for c, sigma, lam, ok in located:
            detail = c.detail if ok else (c.detail + " (interpolated)").strip()
            events.append(Event(c.event.kind, i, lam, detail))
            if c.terminal and terminal is None:
                terminal = c.event.kind
        return events, terminal

    def _switch_point(self, a: PointRecord, critical: tuple, info):
        """Hook for branch switching: ``(record, factorisation)`` replacing the new point, or None."""
        return None

    def _adapt(self, res: NewtonResult) -> None:
        """After an easy point, let a cut step grow back toward its nominal size."""
        if res.iterations <= EASY_ITERATIONS and abs(self.h) < self.h_nominal:
            self.h = np.sign(self.h) * min(2 * abs(self.h), self.h_nominal, self.max_step)

    def _predict(self, h: float):
        """Return ``(u_pred, lam_pred, constraint)`` for a step ``h``, or None."""
        raise NotImplementedError

    def _along(self, du: np.ndarray, dlam: float = 0.0) -> np.ndarray:
        """The predicted displacements for the tangent increment (``du``, ``dlam``)
        from the last point.

        ``u + du`` with the beams' chords rebuilt to the increment's first-order
        length and direction (:func:`~largerot.solvers.predictor.chord_consistent`);
        imposed DOFs move by ``dlam``·ū_ref meanwhile.
        """
        return chord_consistent(self.assembly, self.u, self.u + du, self.lam, self.lam + dlam)

    # -- views ------------------------------------------------------------------------
    def factorization(self):
        """The factorised tangent at the last point (rebuilt if not cached)."""
        if self._fact is None:
            p = self.problem.with_states(self.history)
            _, K, _ = p.residual(self.u, self.lam)
            # the back end Newton uses, so a resumed (unpickled) stepper goes on bit
            # for bit like the original
            self._fact = factor(K, symmetric=p.symmetric)
            self.n_factorizations += 1
            if self.assembly.has_followers or self.assembly.has_prescribed:
                # F of the follower loads, and K_fp·ū_ref, at u
                self.problem.F, self.problem.F_loads, self.problem.F_const = p.F, p.F_loads, p.F_const
        return self._fact

    def tangent_direction(self) -> np.ndarray:
        """δu_F = K⁻¹·F at the current point, shape (n_free,)."""
        return self.factorization().solve(self.problem.F)

    def _point_of(self, i: int, rec: PointRecord) -> Point:
        return Point(self.model, i, rec.lam, self.assembly.full(rec.u, rec.lam), rec.iterations)

    def last_point(self) -> Point:
        return self._point_of(self.n_points - 1, self._points[-1])

    def state(self) -> dict:
        """The stepper's state as plain data (arrays and numbers)."""
        return {"u": self.u.copy(), "lam": self.lam, "h": self.h, "status": self.status,
                "n_steps": self.n_steps, "history": self.history}

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_fact"] = None                        # a cache of native factors: rebuilt
        return state

    def _saved_state(self) -> dict:
        """The state :func:`largerot.save` writes: the pickled one without the user's
        event functions (code, not data), whose names are kept so that
        :func:`largerot.resume` can ask for them again."""
        state = self.__getstate__()
        state["user_events"] = ()
        state["saved_event_names"] = tuple(e.kind for e in self.user_events)
        return state

    def result(self) -> EquilibriumPath:
        """The path traced so far."""
        pts = list(self._points)
        counters = {"steps": self.n_steps, "step_cuts": self.n_cuts,
                    "factorizations": self.n_factorizations,
                    "residual_evaluations": self.problem.n_evaluations}
        keys = pts[0].record.keys() if pts else ()
        return EquilibriumPath(
            self.model, self.assembly.free, [r.lam for r in pts], np.array([r.u for r in pts]),
            [r.iterations for r in pts], [r.residuals for r in pts], [r.n_negative for r in pts],
            self.status, self.message, status_code=STATUS[self.status].code,
            critical_points=[c for r in pts for c in r.critical],
            events=[e for r in pts for e in r.events], counters=counters,
            extra={k: np.array([r.record[k] for r in pts]) for k in keys},
            arc_length=np.array([r.arc for r in pts]))


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
