"""Arc-length control: λ and u advance together by a length Δl along the path.

Constraints (see :mod:`largerot.solvers.constraints` for the metric):

``"cylindrical"``  |Δu| = Δl, ψ = 0 (Crisfield 1981), the default;
``"spherical"``    |Δu|² + ψ²s²Δλ² = Δl² (Crisfield 1981), ψ = 1 unless given;
``"normal-plane"`` the iterations stay on the plane through the predicted point
                   normal to the predictor (Riks 1979, Int. J. Solids Struct. 15);
``"updated-normal-plane"`` linearised sphere, plane normal to the current increment
                   (Ramm 1981).

Predictor: the tangent δu_F = K⁻¹F at the last point, scaled to length Δl. Its sense
follows the path: **the new increment has a positive inner product with the previous
increment** (in the metric with ψ = 1, whatever the constraint's ψ, so that λ counts
when u hardly moves) (common practice, no source; the rule of Crisfield 1991,
vol. 1, §9.4.2 in spirit). Unlike the sign of det K it stays right through limit
points, snap-back and bifurcations. The first step goes toward increasing λ, or
decreasing λ for a negative ``step``.

A structure that hangs slack at rest (a sagging cable loaded only by scaled loads)
has no tangent there: its first point is found by relaxation at λ = (target or
1)/``AUTO_STEPS`` (``PathStepper.relax_to``) and the trace goes on from it.

First step (``step=None``): from the linear response u1 = K⁻¹F at the start, λ_c is
the smaller of the load factor at which |u1|·λ reaches ``GEOMETRIC_SHARE`` of the
structure's size, the lowest linear buckling factor, and the load factors at which
the linear response would close a contact or first yield; the first step then moves
λ by λ_c/``AUTO_STEPS`` on the linear path. No knowledge of the norm is needed.

Step adaptation (Ramm 1981): Δl ← Δl·(I_d/I)^½ after a point that took I iterations,
the factor kept within [``MIN_FACTOR``, ``MAX_FACTOR``], Δl within [min_step, max_step].
Defaults: min_step = the first step/2¹⁰; max_step = ``MAX_STEP_SHARE``·L·√n_free
(L the structure's size, n_free the free DOFs: the step moves the DOFs by at most
that share of L in the root mean square), whatever the first step, which is set by
the early response and may be far smaller than what a post-buckled path needs;
after a branch switch at least ``MAX_STEP_FACTOR`` switch steps. A failed step is
halved (down to ``min_step``).

Guard against doubling back: a converged point is rejected, and the step halved
like a failed one, when its increment has a negative inner product with the
previous increment (metric with ψ = 1), when it lies within ``REVISIT_SHARE`` of
the step's length of one of the last ``REVISIT_WINDOW`` points, or (normal-plane
and updated-normal-plane) when its increment makes an angle with the predictor whose
cosine is below ``MIN_PREDICTOR_COSINE`` (the corrector slid to another branch).
Each rejection is logged and counted (``path.counters["rejected_points"]``, part
of ``step_cuts``).

Branch switching (``follow="secondary"``): at the first bifurcation the point past it
is dropped, the located critical point becomes a path point, and the next step
starts from it along the critical mode φ (normalised to a largest translation of 1)
with amplitude ``BRANCH_AMPLITUDE`` × the structure's size, corrected on the plane
through that point normal to φ; so no imperfection needs adding. The sense of φ is
the one whose largest translation is positive; ``branch_sign=-1`` takes the other.
"""
from __future__ import annotations

import logging

import numpy as np

from ..errors import ModelError, checked_integer, is_real
from .constraints import LinearisedConstraint, Metric, PlaneConstraint, QuadraticConstraint
from .newton import NewtonResult
from .stepper import MAX_HALVINGS, PathStepper

__all__ = ["ArcLengthStepper", "CONSTRAINTS", "check_options"]

log = logging.getLogger(__name__)

CONSTRAINTS = ("cylindrical", "spherical", "normal-plane", "updated-normal-plane")
#: Points the first λ_c is split into: coarse enough to be quick, fine enough that
#: the first steps cannot jump over an early critical point.
AUTO_STEPS = 20
#: Linear deflection (share of the structure's size) taken as "large" for λ_c.
GEOMETRIC_SHARE = 0.1
#: Ramm's exponent: Δl scales with the square root of the iteration ratio.
RAMM_EXPONENT = 0.5
#: Bounds on the change of Δl from one step to the next (avoid wild jumps).
MIN_FACTOR, MAX_FACTOR = 0.25, 2.0
#: Default largest step, as a share of the structure's size L in the metric: the
#: norm of a field that moves every free DOF by L (rotations by 1 rad) is L·√n_free,
#: and a step may move the DOFs by at most this share of L in the root mean square.
#: 1/20: a path along which the structure moves by its own size takes 20 points or
#: more, enough to draw it; the bound no longer depends on the first step, which is
#: set by the early (often stiff, axial) response and is far too small later on.
MAX_STEP_SHARE = 0.05
#: After a branch switch the bound is at least this many switch steps (post-buckled
#: paths are long in u while λ barely changes).
MAX_STEP_FACTOR = 4.0
#: A converged point is rejected (and the step cut) when it lies within this share
#: of the step's length of one of the last ``REVISIT_WINDOW`` points: the corrector
#: went back to a part of the path already traced.
REVISIT_SHARE = 0.1
#: Points looked back at for a revisit (the cost is one pass over each).
REVISIT_WINDOW = 20
#: Plane constraints: least cosine between the converged increment and the predictor.
#: On a path whose radius of curvature R exceeds the step h, the normal plane at
#: distance h along the tangent cuts the path within h²/(2R)·(1 + O(h²/R²)) of the
#: predicted point, and a chord of length h makes an angle asin(h/2R) with the
#: tangent: both keep the cosine above 1/√2 for h up to R. A lower cosine means the
#: corrector slid along the plane to another branch (or the step exceeds the
#: curvature radius, where the predictor tells nothing): cut the step.
MIN_PREDICTOR_COSINE = 2.0**-0.5
#: Branch switch: largest node translation along the mode, share of the size. Big
#: enough to clear the bifurcation's ill-conditioning, small next to the branch.
BRANCH_AMPLITUDE = 0.01


class ArcLengthStepper(PathStepper):
    """Arc-length path following (see the module docstring for the rules).

    Parameters
    ----------
    structure : Structure
    step : float, optional
        First arc length Δl (in the metric of :mod:`~largerot.solvers.constraints`);
        chosen automatically when None.
    constraint : str
        One of :data:`CONSTRAINTS`.
    psi : float, optional
        Load-scaling parameter ψ ≥ 0 (0 for ``"cylindrical"``, default 1 otherwise).
    desired_iterations : int
        Newton iterations per point that Ramm's rule steers toward.
    min_step, max_step : float, optional
        Bounds on Δl.
    follow : str
        ``"primary"`` or ``"secondary"`` (switch at the first bifurcation).
    branch_sign : int
        +1 or −1: sense of the critical mode to switch along.
    **options
        Passed to :class:`~largerot.solvers.stepper.PathStepper`.
    """

    def __init__(self, structure, step: float | None = None, *, constraint: str = "cylindrical",
                 psi: float | None = None, desired_iterations: int = 4,
                 min_step: float | None = None, max_step: float | None = None,
                 follow: str = "primary", branch_sign: int = 1, **options) -> None:
        psi = check_options(step, constraint, psi, desired_iterations, min_step, max_step,
                            branch_sign)
        if follow not in ("primary", "secondary"):
            raise ValueError(f"`follow` must be 'primary' or 'secondary', got {follow!r}.")
        super().__init__(structure, 1.0, **options)
        p = self.problem
        if not p.F.any():
            raise ModelError("Arc-length control needs a reference load to scale; the structure has none.")
        if self.slack_start:
            # slack cables at rest: the first point by relaxation, a share of the way
            # to the target (or to λ = 1); the path goes on from there
            sign = -1.0 if step is not None and step < 0 else 1.0
            self.relax_to(sign * abs(self.target if self.target else 1.0) / AUTO_STEPS)
        self.constraint, self.psi = constraint, float(psi)
        self.desired_iterations = int(desired_iterations)
        self.follow, self.branch_sign = follow, int(branch_sign)
        self.metric = Metric(p.weights**2, (self.psi * self.lam_scale)**2)
        self._sense_metric = Metric(p.weights**2, self.lam_scale**2)
        self.direction = 1.0 if step is None or step > 0 else -1.0
        dl0 = abs(float(step)) if step is not None else self._auto_step()
        self.h = self.h_nominal = dl0
        # a bound the user gave wins over the default of the other one
        self._user_max_step = max_step is not None
        if min_step is None:
            min_step = min(dl0 / 2**MAX_HALVINGS, max_step if max_step is not None else np.inf)
        if max_step is None:
            max_step = max(MAX_STEP_SHARE * p.length_scale * np.sqrt(p.n), dl0, min_step)
        self.min_step, self.max_step = float(min_step), float(max_step)
        self.h = min(max(self.h, self.min_step), self.max_step)
        self.switched = False
        self._predictor: tuple[np.ndarray, float] | None = None   # (Δu, Δλ) of the last predictor
        self.n_rejected = 0                 # converged points rejected by the guards
        self._branch_mode: np.ndarray | None = None

    # -- first step -------------------------------------------------------------
    def _auto_step(self) -> float:
        p = self.problem
        u1 = self.tangent_direction()
        trans = p.assembly.free % 3 != 2
        peak = float(np.abs(u1[trans]).max()) if trans.any() else float(np.abs(u1).max())
        lam_c = GEOMETRIC_SHARE * p.length_scale / peak if peak > 0 else np.inf
        lam_c = min(lam_c, self._buckling_estimate(), self._event_estimate(u1))
        if not np.isfinite(lam_c) or lam_c <= 0.0:
            lam_c = 1.0
        return lam_c / AUTO_STEPS * self.metric.norm(u1, 1.0)

    def _event_estimate(self, u1) -> float:
        """Smallest λ at which the linear response raises an event of a group.

        Each event value (contact gap, yield margin, cable stretch) is taken as linear
        in λ between the start and the linear response to λ = 1, u0 + u1.
        """
        p = self.problem
        rec0 = self._points[0].record
        rec1 = p.with_states(self.history).record(self.u + u1, 1.0)
        out = np.inf
        for e in self.assembly.events:
            v0, v1 = e.values(rec0), e.values(rec1)
            toward = (v0 < 0.0) & (v1 > v0) if e.direction > 0 else (v0 > 0.0) & (v1 < v0)
            if toward.any():
                out = min(out, float(np.min(v0[toward] / (v0[toward] - v1[toward]))))
        return out

    def _buckling_estimate(self) -> float:
        from ..buckling import buckling
        try:
            res = buckling(self.structure, modes=1)
        except (ModelError, ArithmeticError, RuntimeError, ValueError) as exc:  # estimate only
            log.info("no buckling estimate for the first arc-length step: %s", exc)
            return np.inf
        return float(res.load_factors[0]) if len(res) else np.inf

    # -- stepping -------------------------------------------------------------------
    def _predict(self, h: float):
        m = self.metric
        if self._branch_mode is not None:
            return self._branch_predictor()
        v = self.tangent_direction()
        norm = m.norm(v, 1.0)
        if not np.isfinite(norm) or norm == 0.0:
            return None
        prev = self._previous_increment()
        if prev is None:
            sense = self.direction
        else:
            # λ always counts here (ψ = 1 even for the cylinder): when a stop takes
            # the load, u hardly moves and its increment alone carries no sense
            sense = 1.0 if self._sense_metric.dot(prev[0], prev[1], v, 1.0) >= 0.0 else -1.0
        dlam = sense * h / norm
        u_pred, lam_pred = self._along(dlam * v, dlam), self.lam + dlam
        self._predictor = (dlam * v, dlam)
        if self.constraint in ("cylindrical", "spherical"):
            c = QuadraticConstraint(m, self.u, self.lam, h)
        elif self.constraint == "normal-plane":
            c = PlaneConstraint(m, self.u, self.lam, dlam * v, dlam, h * h)
        else:
            c = LinearisedConstraint(m, self.u, self.lam, h)
        return u_pred, lam_pred, c

    def _attempt(self, h: float):
        res = super()._attempt(h)
        if res is None or not res.converged or self._branch_mode is not None:
            return res
        why = self._doubled_back(res)
        if why is None:
            return res
        self.n_rejected += 1
        log.info("converged point at λ = %.6g rejected (step %.3g): %s", res.lam, h, why)
        return NewtonResult(False, res.u, res.lam, res.iterations, res.residuals,
                            f"Converged point rejected: {why}")

    def _doubled_back(self, res) -> str | None:
        """Why a converged point is no continuation of the path, or None if it is.

        Rejected: an increment against the previous one (negative inner product in
        the metric with ψ = 1), a point on one of the last points, and for the plane
        constraints an increment far from the predictor (``MIN_PREDICTOR_COSINE``).
        """
        Du, Dlam = res.u - self.u, res.lam - self.lam
        sm = self._sense_metric
        length = sm.norm(Du, Dlam)
        prev = self._previous_increment()
        if prev is not None and sm.dot(prev[0], prev[1], Du, Dlam) < 0.0:
            return "the increment turns back against the previous one"
        n, near = self.n_points, REVISIT_SHARE * length
        for i in range(max(n - REVISIT_WINDOW, 0), n):
            pt = self._points[i]
            if sm.s2 * (res.lam - pt.lam) ** 2 > near * near:
                continue                      # its load factor alone is too far off
            if sm.norm(res.u - pt.u, res.lam - pt.lam) <= near:
                return f"it lands on point {i}"
        landed = self.target is not None and res.lam == self.target
        if self.constraint in ("normal-plane", "updated-normal-plane") and not landed \
                and self._predictor is not None:
            m, (t_u, t_lam) = self.metric, self._predictor
            den = m.norm(Du, Dlam) * m.norm(t_u, t_lam)
            cos = m.dot(Du, Dlam, t_u, t_lam) / den if den > 0.0 else 0.0
            if cos < MIN_PREDICTOR_COSINE:
                return f"the increment is {np.degrees(np.arccos(min(max(cos, -1.0), 1.0))):.0f}° off the predictor"
        return None

    def _branch_predictor(self):
        phi = self._branch_mode
        a = self.branch_sign * BRANCH_AMPLITUDE * self.problem.length_scale
        t = a * phi
        m = Metric(self.metric.w2, 0.0)
        return self.u + t, self.lam, PlaneConstraint(m, self.u, self.lam, t, 0.0, m.dot(t, 0.0, t, 0.0))

    def _accept(self, res) -> None:
        switching = self._branch_mode is not None
        if switching:
            self._branch_mode = None
            self.switched = True
        super()._accept(res)
        if switching:
            # the next steps start at the length of the switch step, and the bound
            # on them is re-based on it (the secondary branch has its own scale)
            h = self.metric.norm(*self._previous_increment())
            if not self._user_max_step:
                self.max_step = max(self.max_step, MAX_STEP_FACTOR * h)
            self.h = min(max(h, self.min_step), self.max_step)

    def _adapt(self, res) -> None:
        it = max(int(res.iterations), 1)
        f = (self.desired_iterations / it) ** RAMM_EXPONENT
        f = min(max(f, MIN_FACTOR), MAX_FACTOR)
        self.h = min(max(self.h * f, self.min_step), self.max_step)

    def _switch_point(self, a, critical, info):
        """At the first bifurcation with ``follow="secondary"``: the bifurcation point itself."""
        if self.follow != "secondary" or self.switched or not critical \
                or critical[0].kind != "bifurcation":
            return None
        cp, res = critical[0], info["newton"]
        if not cp.located or res is None:
            log.warning("bifurcation at λ = %.6g not located; staying on the primary path",
                        cp.load_factor)
            return None
        # the point past the bifurcation is replaced by the bifurcation point, which
        # is marginal: counted with the side of fewer negative eigenvalues
        rec = self._new_point(res, continuous=False, problem=self.problem.with_states(a.history))
        rec.n_negative = a.n_negative
        self._branch_mode = cp.mode[self.assembly.free]
        log.info("switching to the secondary branch at λ = %.9g", cp.load_factor)
        return rec, res.factorization

    def result(self):
        path = super().result()
        path.counters["rejected_points"] = self.n_rejected   # among the step cuts
        return path

    def state(self) -> dict:
        out = super().state()
        out.update(constraint=self.constraint, psi=self.psi, switched=self.switched)
        return out


def check_options(step, constraint, psi, desired_iterations, min_step, max_step,
                  branch_sign) -> float:
    """Validate the arc-length options; return ψ with its default filled in.

    A string for a number is a TypeError (:func:`largerot.errors.is_real`); a bad
    value a ModelError.
    """
    if not isinstance(constraint, str) or constraint not in CONSTRAINTS:
        raise ModelError(f"`constraint` must be one of {', '.join(map(repr, CONSTRAINTS))}, "
                         f"got {constraint!r}.")
    if psi is None:
        psi = 0.0 if constraint == "cylindrical" else 1.0
    for name, v in (("psi", psi), ("step", step), ("min_step", min_step), ("max_step", max_step)):
        if v is not None and not is_real(v):
            raise TypeError(f"The arc-length `{name}` must be a number, got {v!r}.")
    if not (np.isfinite(psi) and psi >= 0.0):
        raise ModelError(f"`psi` must be a finite non-negative number, got {psi!r}.")
    if constraint == "cylindrical" and psi != 0.0:
        raise ModelError(f"The cylindrical constraint has psi = 0; got psi = {psi!r} "
                         "(use constraint='spherical' for psi > 0).")
    if checked_integer("", "desired_iterations", desired_iterations) < 1:
        raise ModelError(f"`desired_iterations` must be a positive integer, got {desired_iterations!r}.")
    if isinstance(branch_sign, (bool, np.bool_)) or not is_real(branch_sign) or branch_sign not in (1, -1):
        raise ModelError(f"`branch_sign` must be +1 or -1, got {branch_sign!r}.")
    if step is not None and not (np.isfinite(step) and step != 0.0):
        raise ModelError(f"The arc-length `step` must be a non-zero finite number or None, got {step!r}.")
    for name, v in (("min_step", min_step), ("max_step", max_step)):
        if v is not None and not (np.isfinite(v) and v > 0.0):
            raise ModelError(f"`{name}` must be a positive number, got {v!r}.")
    if min_step is not None and max_step is not None and min_step > max_step:
        raise ModelError(f"`min_step` ({min_step!r}) exceeds `max_step` ({max_step!r}).")
    return float(psi)
