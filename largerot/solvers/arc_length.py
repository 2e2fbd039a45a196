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

First step (``step=None``): from the linear response u1 = K⁻¹F at the start, λ_c is
the smaller of the load factor at which |u1|·λ reaches ``GEOMETRIC_SHARE`` of the
structure's size, the lowest linear buckling factor, and the load factors at which
the linear response would close a contact or first yield; the first step then moves
λ by λ_c/``AUTO_STEPS`` on the linear path. No knowledge of the norm is needed.

Step adaptation (Ramm 1981): Δl ← Δl·(I_d/I)^½ after a point that took I iterations,
the factor kept within [``MIN_FACTOR``, ``MAX_FACTOR``], Δl within [min_step, max_step]
(defaults: the first step/2¹⁰ and ``MAX_STEP_FACTOR`` first steps, re-based on the
switch step after a branch switch). A failed step is halved (down to ``min_step``).

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

from ..errors import ModelError
from .constraints import LinearisedConstraint, Metric, PlaneConstraint, QuadraticConstraint
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
#: Default largest step as a multiple of the first one (after a branch switch, of
#: the switch step: post-buckled paths are long in u while λ barely changes). Four
#: keeps 20-60 points on a path through its critical points, enough to draw it.
MAX_STEP_FACTOR = 4.0
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
            max_step = max(MAX_STEP_FACTOR * dl0, min_step)
        self.min_step, self.max_step = float(min_step), float(max_step)
        self.h = min(max(self.h, self.min_step), self.max_step)
        self.switched = False
        self._branch_mode: np.ndarray | None = None
        self._branch_index = -1          # path index of the switch point

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
        """Smallest λ at which the linear response closes a contact or first yields."""
        asm = self.problem.assembly
        out = np.inf
        if asm.has_contacts:
            g0 = asm.contact_response(np.zeros(asm.n_dof)).g
            g1 = asm.contact_response(asm.expand(u1)).g
            closing = g1 < g0
            if closing.any():
                out = min(out, float(np.min(g0[closing] / (g0[closing] - g1[closing]))))
        m1 = asm.point_data(asm.expand(u1)).get("yield_margin")
        if m1 is not None and float(m1) > -1.0:
            out = min(out, 1.0 / (float(m1) + 1.0))    # the margin is E·|ε|/fy − 1, linear in λ
        return out

    def _buckling_estimate(self) -> float:
        from ..buckling import buckling
        try:
            res = buckling(self.structure, modes=1)
        except (ModelError, ArithmeticError, RuntimeError, ValueError):  # estimate only
            return np.inf
        return float(res.load_factors[0]) if len(res) else np.inf

    # -- stepping -------------------------------------------------------------------
    def _previous_increment(self):
        if self.n_steps == 0 and not self.switched:
            return None
        return self.u - self.u_prev, self.lam - self.lam_prev

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
        u_pred, lam_pred = self.u + dlam * v, self.lam + dlam
        if self.constraint in ("cylindrical", "spherical"):
            c = QuadraticConstraint(m, self.u, self.lam, h)
        elif self.constraint == "normal-plane":
            c = PlaneConstraint(m, self.u, self.lam, dlam * v, dlam, h * h)
        else:
            c = LinearisedConstraint(m, self.u, self.lam, h)
        return u_pred, lam_pred, c

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
            h = self.metric.norm(self.u - self.u_prev, self.lam - self.lam_prev)
            if not self._user_max_step:
                self.max_step = max(self.max_step, MAX_STEP_FACTOR * h)
            self.h = min(max(h, self.min_step), self.max_step)

    def _adapt(self, res) -> None:
        it = max(int(res.iterations), 1)
        f = (self.desired_iterations / it) ** RAMM_EXPONENT
        f = min(max(f, MIN_FACTOR), MAX_FACTOR)
        self.h = min(max(self.h * f, self.min_step), self.max_step)

    def _on_critical(self, cp, info) -> None:
        if self.follow != "secondary" or self.switched or cp.kind != "bifurcation":
            return
        res = info["newton"]
        if not cp.located or res is None:
            log.warning("bifurcation at λ = %.6g not located; staying on the primary path",
                        cp.load_factor)
            return
        # replace the point past the bifurcation by the bifurcation point itself
        self._unrecord()
        self.u, self.lam = res.u, res.lam
        self.u_prev, self.lam_prev = self.u, self.lam
        self._fact = res.factorization
        self._record(res)
        # the point is marginal: count it with the side of fewer negative eigenvalues
        self._n_negative[-1] = min(self._n_negative[-2], self._n_negative[-1])
        self._branch_index = len(self._points_lam) - 1
        free = self.assembly.free
        self._branch_mode = cp.mode[free]
        log.info("switching to the secondary branch at λ = %.9g", cp.load_factor)

    def _critical_event(self) -> None:
        # the first branch point differs in stability from the (marginal) switch
        # point by construction; that is not a new critical point
        if len(self._points_lam) - 2 == self._branch_index:
            return
        super()._critical_event()

    def state(self) -> dict:
        out = super().state()
        out.update(constraint=self.constraint, psi=self.psi, switched=self.switched,
                   lam_prev=getattr(self, "lam_prev", 0.0),
                   u_prev=getattr(self, "u_prev", self.u).copy())
        return out


def check_options(step, constraint, psi, desired_iterations, min_step, max_step,
                  branch_sign) -> float:
    """Validate the arc-length options; return ψ with its default filled in."""
    if constraint not in CONSTRAINTS:
        raise ValueError(f"`constraint` must be one of {', '.join(map(repr, CONSTRAINTS))}, "
                         f"got {constraint!r}.")
    if psi is None:
        psi = 0.0 if constraint == "cylindrical" else 1.0
    if isinstance(psi, bool) or not isinstance(psi, (int, float, np.integer, np.floating)) \
            or not (np.isfinite(psi) and psi >= 0.0):
        raise ValueError(f"`psi` must be a finite non-negative number, got {psi!r}.")
    if constraint == "cylindrical" and psi != 0.0:
        raise ValueError(f"The cylindrical constraint has psi = 0; got psi = {psi!r} "
                         "(use constraint='spherical' for psi > 0).")
    if (isinstance(desired_iterations, bool) or not isinstance(desired_iterations, (int, np.integer))
            or desired_iterations < 1):
        raise ValueError(f"`desired_iterations` must be a positive integer, got {desired_iterations!r}.")
    if isinstance(branch_sign, bool) or branch_sign not in (1, -1):
        raise ValueError(f"`branch_sign` must be +1 or -1, got {branch_sign!r}.")
    if step is not None and (isinstance(step, bool) or not isinstance(step, (int, float, np.integer, np.floating))
                             or not (np.isfinite(step) and step != 0.0)):
        raise ValueError(f"The arc-length `step` must be a non-zero finite number or None, got {step!r}.")
    for name, v in (("min_step", min_step), ("max_step", max_step)):
        if v is not None and (isinstance(v, bool) or not isinstance(v, (int, float, np.integer, np.floating))
                              or not (np.isfinite(v) and v > 0.0)):
            raise ValueError(f"`{name}` must be a positive number, got {v!r}.")
    if min_step is not None and max_step is not None and min_step > max_step:
        raise ValueError(f"`min_step` ({min_step!r}) exceeds `max_step` ({max_step!r}).")
    return float(psi)
