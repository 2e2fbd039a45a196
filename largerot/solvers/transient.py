"""Transient response: the nonlinear equations of motion integrated in time.

    M·a + C·v + f_int(u) = F(t) = λ(t)·F_ref + F_const

on the free DOFs, M the mass matrix (:func:`largerot.mass.mass_matrix`), C Rayleigh
damping, f_int the corotational internal forces of the static solver and λ(t) a
function of time scaling the reference loads (constant loads are held).

The scheme: generalised-α
    Chung & Hulbert 1993, "A time integration algorithm for structural dynamics with
    improved numerical dissipation: the generalized-α method", J. Appl. Mech. 60,
    371–375. Newmark's updates

        u₁ = u₀ + h·v₀ + h²·((½ − β)·a₀ + β·a₁),   v₁ = v₀ + h·((1 − γ)·a₀ + γ·a₁),

    with the balance taken between the ends of the step,

        M·a₁₋αm + C·v₁₋αf + f_int,₁₋αf = F₁₋αf,    x₁₋α = (1 − α)·x₁ + α·x₀,

    where the internal and external forces are interpolated between the step's ends
    (not evaluated at an interpolated u: the usual form for nonlinear problems, which
    keeps the scheme a balance of forces at the converged states). From the spectral
    radius at infinite frequency ρ∞: αm = (2ρ∞ − 1)/(ρ∞ + 1), αf = ρ∞/(ρ∞ + 1),
    γ = ½ − αm + αf, β = ¼·(1 − αm + αf)². Second-order accurate, unconditionally
    stable for linear problems, and among the schemes of its kind the one with the
    least low-frequency dissipation for a given high-frequency one.

Why this scheme for corotational beams
    In the plane a node's rotation is a plain additive scalar (the corotational
    kernels take the element's local rotations from its sine and cosine), so the
    Newmark family's additive updates of u, v and a are exact in form — no update on
    a rotation manifold is needed as in space. What the beams need is numerical
    dissipation at high frequency: a slender beam meshed finely has axial and
    bending modes far above anything of interest, which the mesh represents badly
    and which, undamped, ring through the Newton iterations of a snap. The default
    ``rho_inf = 0.9`` (``DEFAULT_RHO_INF``) damps those by 10 % per step while the
    low modes keep their amplitude to a fraction of a percent over many periods;
    ``rho_inf = 1`` is the trapezoidal rule (no dissipation: energy conserved for
    linear systems, and to O(h²) for nonlinear ones).

Newton in each step
    The unknown is u₁; a₁ and v₁ follow from it. The residual of the balance,
    divided by (1 − αf), is R(u₁) = r(u₁) + αf/(1 − αf)·r(u₀) − (M·a₁₋αm + C·v₁₋αf)/(1 − αf)
    with r = F − f_int the static residual (:class:`~largerot.solvers.problem.Problem`,
    follower loads and history included), and its tangent

        K_eff = K(u₁) + (1 − αm)/((1 − αf)·β·h²)·M + γ/(β·h)·C.

    It goes through the static :func:`~largerot.solvers.newton.newton` (line search,
    round-off floor, chord-consistent updates, factorisation by
    :func:`largerot.linalg.factor`) with λ held at λ(t₁). M, C and K share the
    tangent's sparsity pattern, so K_eff is one operation on the data array and its
    factorisation reuses the pattern's symbolic analysis. The history of yielding
    fibres and contacts is carried as the static stepper carries it: evaluated with
    the committed history of the last step, committed when a step converges.

Step size
    Nominal ``dt``; a step whose Newton fails is halved (down to ``min_dt``, at most
    ``MAX_CUTS`` times), and after an easy step (at most ``EASY_ITERATIONS``) it grows
    back by 2 up to ``dt``. Steps land exactly on the end time and on the breaks of
    the load function (``load.breaks``: the time of a step, the ends of a ramp).

The mass matrix
    Evaluated once, in the start configuration. Bars, cables, nodal masses and
    lumped beam masses are rotation-invariant, so that is exact for them; a
    consistent beam mass depends on the chord's direction, and the constant matrix
    is then an approximation that holds while elements turn little from the start
    (a snapping shallow arch; for a beam that swings through large angles, use
    ``lumped=True``).
"""
from __future__ import annotations

import copy
import logging
import math
from dataclasses import dataclass

import numpy as np

from ..errors import ModelError, checked_number, warn_input
from ..linalg import SingularTangent, factor
from ..results import CriticalPoint, EquilibriumPath
from ..motion import Motion
from .newton import LoadConstraint, newton
from .problem import Problem
from .status import STATUS

__all__ = ["transient", "step_load", "ramp_load", "rayleigh", "StepLoad", "RampLoad",
           "alpha_parameters", "DEFAULT_RHO_INF"]

log = logging.getLogger(__name__)

#: Spectral radius at infinite frequency (module docstring: 10 % damping per step of
#: the modes the mesh cannot resolve, a fraction of a percent over many periods for
#: the low ones).
DEFAULT_RHO_INF = 0.9
#: Steps over the duration when ``dt`` is not given.
DEFAULT_STEPS = 400
#: Halve a failed step at most this many times by default (min_dt = dt/2¹⁰).
MAX_HALVINGS = 10
#: Hard bound on the cuts of one step (the halving loop always ends).
MAX_CUTS = 60
#: A step that took at most this many Newton iterations lets a cut step grow back.
EASY_ITERATIONS = 4
#: Newton iterations per attempt: a time step starts close to its solution (the
#: constant-acceleration predictor is second order), so a step that needs more is
#: better cut than iterated.
MAX_ITERATIONS = 15
#: Steps taken at most, as a multiple of duration/dt (with min_dt steps all the way
#: a run would need 2¹⁰ times more; the bound ends a run that keeps cutting).
MAX_STEPS_FACTOR = 20
#: A step closer than this share of dt to a break or the end is stretched to it
#: (no sliver steps).
LAND_SHARE = 1e-6
#: Largest turn of a node in one step (rad). The corotational kernels take local
#: rotations from their sine and cosine, so the static forces repeat with every full
#: turn of a node; with a small rotary inertia the step's balance then has spurious
#: roots a multiple of 2π away, which Newton finds after a wild iteration (measured:
#: a released cantilever's tip turned by 8π in one step of T₁/50). No step of a useful
#: size turns a node by a radian; a larger turn is a failed step, and the step is cut.
MAX_STEP_ROTATION = 1.0
#: A mass-matrix diagonal entry below this share of the largest is a massless DOF.
MASSLESS = 1e-14


# -- load functions --------------------------------------------------------------------------
@dataclass(frozen=True)
class StepLoad:
    """λ(t) = ``before`` for t < ``t0``, ``level`` from ``t0`` on (a suddenly applied load)."""

    level: float
    t0: float = 0.0
    before: float = 0.0

    def __call__(self, t: float) -> float:
        return self.level if t >= self.t0 else self.before

    @property
    def breaks(self) -> tuple:
        return (self.t0,)


@dataclass(frozen=True)
class RampLoad:
    """λ(t) rising linearly from ``start`` at ``t0`` to ``level`` at ``t0 + rise``, then held."""

    level: float
    rise: float
    t0: float = 0.0
    start: float = 0.0

    def __call__(self, t: float) -> float:
        if t <= self.t0:
            return self.start
        if t >= self.t0 + self.rise:
            return self.level
        return self.start + (self.level - self.start) * (t - self.t0) / self.rise

    @property
    def breaks(self) -> tuple:
        return (self.t0, self.t0 + self.rise)


def step_load(level: float, t0: float = 0.0, before: float = 0.0) -> StepLoad:
    """A load factor jumping to ``level`` at time ``t0`` (``before`` until then).

    >>> f = step_load(2.0, t0=0.5)
    >>> f(0.0), f(0.5), f(3.0)
    (0.0, 2.0, 2.0)
    """
    return StepLoad(checked_number("", "level", level), checked_number("", "t0", t0),
                    checked_number("", "before", before))


def ramp_load(level: float, rise: float, t0: float = 0.0, start: float = 0.0) -> RampLoad:
    """A load factor rising linearly from ``start`` to ``level`` over ``rise`` from ``t0``.

    >>> f = ramp_load(1.0, rise=2.0)
    >>> f(1.0), f(5.0)
    (0.5, 1.0)
    """
    return RampLoad(checked_number("", "level", level), checked_number("", "rise", rise, positive=True),
                    checked_number("", "t0", t0), checked_number("", "start", start))


def rayleigh(ratio: float, f1: float, f2: float) -> tuple[float, float]:
    """Rayleigh coefficients (a0, a1) giving the damping ratio ``ratio`` at frequencies
    ``f1`` and ``f2`` (Hz): C = a0·M + a1·K has ζ(ω) = a0/(2ω) + a1·ω/2, so
    a0 = 2ζ·ω1·ω2/(ω1 + ω2), a1 = 2ζ/(ω1 + ω2) (common practice, no source). Between
    the two frequencies the ratio is a little lower, outside them higher.

    >>> a0, a1 = rayleigh(0.05, 1.0, 10.0)
    >>> round(a0 / (2 * 2 * math.pi) + a1 * 2 * math.pi / 2, 6)   # ζ at 1 Hz
    0.05
    """
    ratio = checked_number("", "ratio", ratio, nonnegative=True)
    w1 = 2.0 * math.pi * checked_number("", "f1", f1, positive=True)
    w2 = 2.0 * math.pi * checked_number("", "f2", f2, positive=True)
    return 2.0 * ratio * w1 * w2 / (w1 + w2), 2.0 * ratio / (w1 + w2)


def alpha_parameters(rho_inf: float) -> tuple[float, float, float, float]:
    """(αm, αf, γ, β) of the generalised-α method for ρ∞ (Chung & Hulbert 1993, eq. 25).

    >>> alpha_parameters(1.0)       # the trapezoidal rule
    (0.5, 0.5, 0.5, 0.25)
    """
    r = float(rho_inf)
    am = (2.0 * r - 1.0) / (r + 1.0)
    af = r / (r + 1.0)
    gamma = 0.5 - am + af
    beta = 0.25 * (1.0 - am + af) ** 2
    return am, af, gamma, beta


# -- one time step as a Newton problem -------------------------------------------------------
class _StepProblem:
    """The balance of one time step as a function of u₁, in the form Newton solves.

    Offers what :func:`~largerot.solvers.newton.newton` asks of a problem:
    ``residual(u, lam) -> (R, K_eff, scale)``, ``F`` (zero: λ is held), ``symmetric``,
    ``norm``, ``weights``, ``length_scale`` and ``moved``.
    """

    def __init__(self, static: Problem, M, C, h: float, params, u0, v0, a0, r0) -> None:
        self.static = static
        self.M, self.C = M, C
        am, af, gamma, beta = params
        self.am, self.af, self.gamma, self.beta, self.h = am, af, gamma, beta, h
        self.u0, self.v0, self.a0 = u0, v0, a0
        self.r0_share = af / (1.0 - af) * r0
        self.cM = (1.0 - am) / ((1.0 - af) * beta * h * h)
        self.cC = gamma / (beta * h)
        self.F = np.zeros_like(u0)
        self.symmetric = static.symmetric
        self.weights, self.length_scale = static.weights, static.length_scale

    def kinematics(self, u):
        """(v₁, a₁) of the end displacement ``u`` by Newmark's updates."""
        h, beta, gamma = self.h, self.beta, self.gamma
        a = (u - self.u0 - h * self.v0) / (beta * h * h) - (0.5 - beta) / beta * self.a0
        v = self.v0 + h * ((1.0 - gamma) * self.a0 + gamma * a)
        return v, a

    def residual(self, u, lam, tangent: bool = True):
        r, K, scale = self.static.residual(u, lam, tangent)
        v, a = self.kinematics(u)
        inertia = self.M @ ((1.0 - self.am) * a + self.am * self.a0)
        if self.C is not None:
            inertia = inertia + self.C @ ((1.0 - self.af) * v + self.af * self.v0)
        inertia /= 1.0 - self.af
        R = r + self.r0_share - inertia
        scale = max(scale, float(np.linalg.norm(inertia)))
        if K is not None:
            K = _combined(K, ((self.cM, self.M), (self.cC, self.C)))
        return R, K, scale

    def norm(self, du) -> float:
        return self.static.norm(du)

    def moved(self, u, du, lam=0.0, dlam=0.0):
        return self.static.moved(u, du, lam, dlam)


def _shares(A, K) -> bool:
    """True when sparse A has K's sparsity pattern (canonical CSC both)."""
    if A.indices is K.indices and A.indptr is K.indptr:
        return True
    return (A.shape == K.shape and len(A.indices) == len(K.indices)
            and np.array_equal(A.indptr, K.indptr) and np.array_equal(A.indices, K.indices))


def _combined(K, parts):
    """K + Σ c·A, shape (n_free, n_free).

    When every A has K's sparsity pattern (the mass matrix and the damping have the
    tangent's) the sum is one operation on the data arrays and the result shares K's
    index arrays, so its factorisation reuses the pattern's symbolic analysis; a plain
    sparse sum otherwise.
    """
    parts = [(c, A) for c, A in parts if A is not None and c != 0.0]
    if all(_shares(A, K) for _, A in parts):
        out = copy.copy(K)
        out.data = K.data.copy()
        for c, A in parts:
            out.data += c * A.data
        return out
    out = K
    for c, A in parts:
        out = out + c * A
    return out.tocsc()


# -- the driver ------------------------------------------------------------------------------
def transient(structure, duration: float, *, dt: float | None = None, start=None, load=None,
              damping=None, lumped: bool = False, rho_inf: float = DEFAULT_RHO_INF,
              min_dt: float | None = None, tol: float = 1e-8, tol_u: float = 1e-6,
              max_iterations: int = MAX_ITERATIONS, max_steps: int | None = None,
              progress=None) -> Motion:
    """Integrate the equations of motion over ``duration`` (generalised-α, module docstring).

    Parameters
    ----------
    structure : Structure or Model
        Its snapshot is taken now. Its mass: the sections' ``density`` and the nodal
        masses (``s.mass``); the weight of a nodal mass is a load of its own.
    duration : float
        Time span, in the structure's time unit (seconds in SI).
    dt : float, optional
        Nominal time step (default ``duration/DEFAULT_STEPS``). Cut when Newton fails,
        grown back after easy steps; landed on the end and on the load's breaks.
    start : (EquilibriumPath, int or CriticalPoint) or PathStepper, optional
        Start at rest (zero velocity) from a traced point — its displacements and load
        factor — or from a stepper's last point (its displacements, load factor and
        material and contact history). Default: the undeformed structure at rest.
    load : callable, optional
        λ(t), the factor on the reference loads at time t (:func:`step_load`,
        :func:`ramp_load`, or any function of one float; an attribute ``breaks``,
        a sequence of times, makes steps land on them). Default: λ held at its
        start value. Constant loads (``constant=True``, gravity) are always on.
    damping : (a0, a1), optional
        Rayleigh damping C = a0·M + a1·K₀, K₀ the tangent at the start;
        :func:`rayleigh` gives (a0, a1) for a damping ratio at two frequencies.
    lumped : bool
        Lumped (diagonal) masses instead of consistent ones.
    rho_inf : float
        Spectral radius at infinite frequency, 0 ≤ ρ∞ ≤ 1 (1: no numerical
        dissipation; 0: the high frequencies annihilated in one step).
    min_dt : float, optional
        Smallest step tried after cuts (default ``dt/2¹⁰``); below it the run ends
        with status ``"failed"``, keeping every step computed.
    tol, tol_u, max_iterations
        Newton's residual and displacement tolerances and iterations per attempt
        (as in the static solvers).
    max_steps : int, optional
        Steps at most (default ``MAX_STEPS_FACTOR``·duration/dt); status
        ``"max_steps"`` when reached first.
    progress : callable, optional
        Called as ``progress(t, duration)`` after each step (a progress bar).

    Returns
    -------
    Motion
        Status ``"target"`` when it reached the end time, ``"failed"`` (Newton failed
        at ``min_dt``), ``"max_steps"`` or ``"interrupted"`` (KeyboardInterrupt): every
        converged step is kept.

    Examples
    --------
    A mass on a spring, released from rest under a suddenly applied load: the
    displacement swings between 0 and twice the static one.

    >>> import largerot as lr
    >>> s = lr.Structure()
    >>> a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    >>> _ = s.bar(a, b, lr.Section(E=100.0, A=1.0))
    >>> s.fix(a); s.fix(b, "uy"); s.mass(b, 1.0); s.load(b, fx=1.0)
    >>> m = lr.transient(s, 0.3142, dt=0.001, load=lr.step_load(1.0), rho_inf=1.0)
    >>> round(float(m.displacement(b, "ux").max()), 3)      # 2·F/k = 0.02
    0.02
    """
    from ..mass import mass_matrix
    from .stepper import checked_option

    if not hasattr(structure, "snapshot"):
        raise TypeError(f"Expected a largerot.Structure, got {structure!r}.")
    duration = checked_option("duration", duration, positive=True)
    dt = duration / DEFAULT_STEPS if dt is None else checked_option("dt", dt, positive=True)
    dt = min(dt, duration)
    min_dt = dt / 2**MAX_HALVINGS if min_dt is None else checked_option("min_dt", min_dt, positive=True)
    rho_inf = checked_option("rho_inf", rho_inf, lower=0.0)
    if rho_inf > 1.0:
        raise ModelError(f"`rho_inf` must be between 0 and 1, got {rho_inf!r}.")
    for name, v in (("tol", tol), ("tol_u", tol_u)):
        checked_option(name, v, positive=True, upper=1.0)
    max_iterations = checked_option("max_iterations", max_iterations, integer=True, lower=1)
    n_nominal = math.ceil(duration / dt - 1e-9)
    max_steps = (MAX_STEPS_FACTOR * n_nominal + 100 if max_steps is None
                 else checked_option("max_steps", max_steps, integer=True, lower=1))
    if not isinstance(lumped, (bool, np.bool_)):
        raise TypeError(f"`lumped` must be True or False, got {lumped!r}.")
    if load is not None and not callable(load):
        raise TypeError(f"`load` must be a function of time (e.g. lr.step_load(1.0)), got {load!r}.")
    if progress is not None and not callable(progress):
        raise TypeError(f"`progress` must be callable, got {progress!r}.")

    model = structure.snapshot()
    asm = model.assembly
    if asm.n_free == 0:
        raise ModelError("The structure has no free DOF: nothing moves.")
    if asm.has_prescribed and np.any(asm.U_ref):
        warn_input("Imposed displacements scaled by λ(t) are applied without the inertia "
                   "their motion would bring to the free DOFs (quasi-static support motion).")
    p = Problem(asm)
    u0, lam_start, history, start_info = _start_state(start, model, asm)
    p.states = list(history)
    lam_of = (StepLoad(lam_start) if load is None else load)
    lam0 = _lam(lam_of, 0.0)
    breaks = sorted(float(b) for b in getattr(lam_of, "breaks", ()) if 0.0 < float(b) < duration)

    r0, K0, _ = p.residual(u0, lam0)
    M = mass_matrix(model, u=asm.full(u0, lam0), lumped=bool(lumped))
    C, a0c, a1c = _damping(damping, M, K0)
    v0 = np.zeros(asm.n_free)
    acc0 = _initial_acceleration(M, r0, asm)
    params = alpha_parameters(rho_inf)
    ev = p.evaluation(u0, lam0)
    f0 = ev.f[asm.free]
    F0 = p.external(lam0)

    # one tuple per converged step, appended in one operation (interrupt-safe)
    steps = [(0.0, lam0, u0.copy(), v0, acc0, 0, 0.0, 0.0, 0.0, 0.0)]
    counters = {"steps": 0, "step_cuts": 0, "newton_iterations": 0, "factorizations": 0}
    state = {"u": u0, "v": v0, "a": acc0, "r": r0, "f": f0, "F": F0, "lam": lam0,
             "t": 0.0, "W_int": 0.0, "W_ext": 0.0, "W_damp": 0.0}
    status, why = "running", ""
    h = dt
    end_tol = LAND_SHARE * dt
    try:
        while status == "running":
            t = state["t"]
            if t >= duration - end_tol:
                status = "target"
                break
            if counters["steps"] >= max_steps:
                status = "max_steps"
                break
            for _ in range(MAX_CUTS + 1):
                t_stop = next((b for b in breaks if b > t + end_tol), duration)
                h_try = min(h, t_stop - t)
                landed = t_stop - (t + h_try) < end_tol
                if landed:
                    h_try = t_stop - t
                t1 = t_stop if landed else t + h_try
                lam1 = _lam(lam_of, t1)
                p.states = list(history)
                sp_ = _StepProblem(p, M, C, h_try, params, state["u"], state["v"], state["a"], state["r"])
                u_pred = state["u"] + h_try * state["v"] + 0.5 * h_try**2 * state["a"]
                res = newton(sp_, u_pred, lam1, LoadConstraint(lam1), state["u"], tol, tol_u,
                             max_iterations)
                counters["newton_iterations"] += res.iterations
                counters["factorizations"] += res.iterations + 1
                if res.converged:
                    turn = _largest_turn(asm, res.u - state["u"])
                    if turn > MAX_STEP_ROTATION:
                        res.converged = False
                        res.message = (f"A node turned by {turn:.3g} rad in one step "
                                       f"(more than {MAX_STEP_ROTATION:g}).")
                if res.converged:
                    res, history_new = _augmented(asm, p, sp_, res, lam1, state["u"], tol, tol_u,
                                                  max_iterations, counters)
                if res.converged:
                    break
                counters["step_cuts"] += 1
                why = res.message
                h = h_try / 2.0
                log.debug("time step cut to %.3g at t = %.6g: %s", h, t, why)
                if not h >= min_dt:
                    status = "failed"
                    break
            else:
                status, why = "failed", f"the step was cut {MAX_CUTS} times"
            if status != "running":
                break
            u1 = res.u
            v1, acc1 = sp_.kinematics(u1)
            ev = p.evaluation(u1, lam1)
            f1, F1 = ev.f[asm.free], p.external(lam1)
            r1 = F1 - f1
            du = u1 - state["u"]
            W_int = state["W_int"] + 0.5 * float(du @ (state["f"] + f1))
            W_ext = state["W_ext"] + 0.5 * float(du @ (state["F"] + F1))
            W_damp = state["W_damp"]
            if C is not None:
                # the work of the damping forces the balance applied, C·v₁₋αf
                W_damp += float(du @ (C @ ((1.0 - params[1]) * v1 + params[1] * state["v"])))
            kin = 0.5 * float(v1 @ (M @ v1))
            steps.append((t1, lam1, u1.copy(), v1, acc1, int(res.iterations), kin,
                          W_int, W_ext, W_damp))           # the commit
            history = history_new
            state = {"u": u1, "v": v1, "a": acc1, "r": r1, "f": f1, "F": F1, "lam": lam1,
                     "t": t1, "W_int": W_int, "W_ext": W_ext, "W_damp": W_damp}
            counters["steps"] += 1
            if res.iterations <= EASY_ITERATIONS and h < dt:
                h = min(2.0 * h, dt)
            if progress is not None:
                progress(t1, duration)
    except KeyboardInterrupt:
        status = "interrupted"
    message = STATUS[status].message
    if status == "target":
        message = f"Reached the end time t = {steps[-1][0]:.6g}."
    elif status == "failed":
        message = f"{message} Last attempt at t = {steps[-1][0]:.6g}: {why}"
    elif status == "max_steps":
        message = f"Took {counters['steps']} steps (max_steps) and stopped at t = {steps[-1][0]:.6g}."
    counters["residual_evaluations"] = p.n_evaluations
    return _motion(model, asm, steps, status, message, counters,
                   {"rho_inf": rho_inf, "dt": dt, "min_dt": min_dt, "lumped": bool(lumped),
                    "damping": (a0c, a1c), "duration": duration, **start_info})


def _largest_turn(asm, du) -> float:
    """Largest change of a free rotation in ``du``, shape (n_free,)."""
    rot = asm.free % 3 == 2
    return float(np.abs(du[rot]).max()) if rot.any() else 0.0


def _lam(f, t: float) -> float:
    try:
        lam = float(f(t))
    except (TypeError, ValueError) as exc:
        raise ModelError(f"The load function `load` failed at t = {t!r}: {exc}") from exc
    if not math.isfinite(lam):
        raise ModelError(f"The load function `load` gave λ = {lam!r} at t = {t!r}; it must be finite.")
    return lam


def _start_state(start, model, asm):
    """(u_free, λ, history, info) of the start."""
    from .stepper import PathStepper
    virgin = asm.initial_states()
    if start is None:
        return np.zeros(asm.n_free), 0.0, virgin, {"start": "rest"}
    if isinstance(start, PathStepper):
        _same_dofs(start.assembly.free, asm, "the stepper's model")
        return start.u.copy(), float(start.lam), list(start.history), {"start": "stepper"}
    if not (isinstance(start, tuple) and len(start) == 2 and isinstance(start[0], EquilibriumPath)):
        raise TypeError("`start` must be (path, i) — an EquilibriumPath and a point index or one of "
                        f"its critical points — or a path stepper, got {start!r}.")
    path, i = start
    _same_dofs(path.free, asm, "the path's model")
    if any(s is not None for s in virgin):
        raise ModelError("The structure has yielding fibres or contacts, whose history a path does "
                         "not keep: start from a stepper instead (start=stepper, e.g. the one "
                         "lr.iterate drives), which holds the history of its last point.")
    if isinstance(i, CriticalPoint):
        u = i.u[asm.free]
        return u.copy(), float(i.load_factor), virgin, {"start": "critical point",
                                                        "start_load_factor": float(i.load_factor)}
    k = path._index(i)
    return (path._u_free[k].copy(), float(path.load_factor[k]), virgin,
            {"start": "path point", "start_index": k, "start_load_factor": float(path.load_factor[k])})


def _same_dofs(free, asm, what: str) -> None:
    if len(free) != asm.n_free or not np.array_equal(free, asm.free):
        raise ModelError(f"`start`: {what} has other free DOFs than the structure "
                         f"({len(free)} against {asm.n_free}): start from a path of this structure.")


def _damping(damping, M, K0):
    if damping is None:
        return None, 0.0, 0.0
    if isinstance(damping, str) or not hasattr(damping, "__len__") or len(damping) != 2:
        raise TypeError(f"`damping` must be a pair (a0, a1) of Rayleigh coefficients "
                        f"(lr.rayleigh(ratio, f1, f2) gives them), got {damping!r}.")
    a0 = checked_number("", "damping a0", damping[0], nonnegative=True)
    a1 = checked_number("", "damping a1", damping[1], nonnegative=True)
    if a0 == 0.0 and a1 == 0.0:
        return None, 0.0, 0.0
    zero = copy.copy(K0)
    zero.data = np.zeros_like(K0.data)
    return _combined(zero, ((a0, M), (a1, K0))), a0, a1


def _initial_acceleration(M, r0, asm):
    """a₀ from M·a₀ = r(u₀) on the DOFs with mass (zero on massless ones)."""
    d = M.diagonal()
    if not d.size or d.max() <= 0.0:
        raise ModelError("The structure has no mass: give its sections a density "
                         "(Section(..., density=...)) or add nodal masses (s.mass(node, m)).")
    massive = d > MASSLESS * d.max()
    a = np.zeros_like(r0)
    Mm = M[massive][:, massive].tocsc()
    try:
        a[massive] = factor(Mm, symmetric=True).solve(r0[massive])
    except SingularTangent:
        raise ModelError("The mass matrix is singular on the DOFs that have mass.") from None
    if not np.all(np.isfinite(a)):
        raise ModelError("The initial acceleration is not finite: check the masses.")
    if not massive.all():
        log.debug("%d free DOFs without mass start with zero acceleration", int((~massive).sum()))
    return a


def _augmented(asm, p, sp_, res, lam, u_start, tol, tol_u, max_iterations, counters):
    """Commit-ready history after a converged step: contact multipliers updated and the
    step solved again until the groups are satisfied (as the static stepper does)."""
    from ..elements.contact import MAX_UPDATES
    iterations = res.iterations
    for _ in range(MAX_UPDATES):
        ev = p.evaluation(res.u, lam)
        states = asm.augmented(ev, p.states)
        if states is None:
            res.iterations = iterations
            return res, ev.states()
        p.states = states
        res = newton(sp_, res.u, lam, LoadConstraint(lam), u_start, tol, tol_u, max_iterations)
        counters["newton_iterations"] += res.iterations
        counters["factorizations"] += res.iterations + 1
        iterations += res.iterations
        if not res.converged:
            return res, None
    res.converged = False
    res.message = f"Contact conditions not met after {MAX_UPDATES} multiplier updates."
    return res, None


def _motion(model, asm, steps, status, message, counters, options) -> Motion:
    cols = list(zip(*steps))
    return Motion(model, asm.free, times=np.array(cols[0]), load_factor=np.array(cols[1]),
                  u_free=np.array(cols[2]), v_free=np.array(cols[3]), a_free=np.array(cols[4]),
                  iterations=np.array(cols[5], dtype=int), kinetic=np.array(cols[6]),
                  strain=np.array(cols[7]), external=np.array(cols[8]), damping=np.array(cols[9]),
                  status=status, message=message, status_code=STATUS[status].code,
                  counters=counters, options=options)
