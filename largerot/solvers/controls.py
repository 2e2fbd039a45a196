"""How a path is followed: the public ``by_*`` step controls and :func:`trace`."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from ..model import Structure
from ..results import EquilibriumPath, Point
from .arc_length import ArcLengthStepper, check_options
from .displacement_control import DisplacementStepper
from .load_control import LoadStepper
from .stepper import PathStepper

__all__ = ["by_load", "by_displacement", "by_arc_length", "trace", "StepControl"]

#: Steps taken when neither a target, a stop condition nor ``max_steps`` ends the trace.
DEFAULT_MAX_STEPS = 500


class StepControl:
    """A recipe for a stepper; :meth:`stepper` builds one for a structure."""

    def stepper(self, structure: Structure, **options) -> PathStepper:
        raise NotImplementedError


@dataclass(frozen=True)
class by_load(StepControl):
    """Load control: λ advances by ``step`` per point.

    Parameters
    ----------
    step : float
        Load-factor increment (negative to unload).
    min_step : float, optional
        Smallest increment tried after cuts (default ``step/1024``).
    """

    step: float
    min_step: float | None = None

    def stepper(self, structure, **options) -> LoadStepper:
        return LoadStepper(structure, self.step, min_step=self.min_step, **options)


@dataclass(frozen=True)
class by_displacement(StepControl):
    """Displacement control: ``node``'s ``dof`` advances by ``step`` per point.

    Passes limit points in load; λ is solved for with a bordered system.
    """

    node: int
    dof: str
    step: float
    min_step: float | None = None

    def stepper(self, structure, **options) -> DisplacementStepper:
        return DisplacementStepper(structure, self.node, self.dof, self.step,
                                   min_step=self.min_step, **options)


@dataclass(frozen=True)
class by_arc_length(StepControl):
    """Arc-length control: u and λ advance together; passes limit points and snap-back.

    Parameters
    ----------
    step : float, optional
        First arc length; None (the default) chooses it from the linear response
        to the reference load, so no knowledge of the arc-length norm is needed.
        A negative value starts toward decreasing λ.
    constraint : str
        ``"cylindrical"`` (default; Crisfield 1981), ``"spherical"`` (Crisfield 1981,
        load scaled by ``psi``), ``"normal-plane"`` (Riks 1979) or
        ``"updated-normal-plane"`` (Ramm 1981).
    psi : float, optional
        Load-scaling parameter (0 for cylindrical; default 1 for the others), on a
        scale where 1 weighs λ like the linear displacement response to it.
    desired_iterations : int
        Newton iterations per point that the step adaptation (Ramm 1981) aims at.
    min_step, max_step : float, optional
        Bounds on the arc length (defaults: first step/1024 and 4 first steps; after a
        branch switch the bound is re-based on the switch step).
    branch_sign : int
        +1 or −1: which way along the critical mode ``follow="secondary"`` goes.

    See :mod:`largerot.solvers.arc_length` for the predictor and adaptation rules.

    Examples
    --------
    >>> import largerot as lr
    >>> from largerot.examples import toggle_frame
    >>> sc = toggle_frame()
    >>> path = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)
    >>> [c.kind for c in path.critical_points]
    ['limit', 'limit']
    """

    step: float | None = None
    constraint: str = "cylindrical"
    psi: float | None = None
    desired_iterations: int = 4
    min_step: float | None = None
    max_step: float | None = None
    branch_sign: int = 1

    def __post_init__(self) -> None:
        check_options(self.step, self.constraint, self.psi, self.desired_iterations,
                      self.min_step, self.max_step, self.branch_sign)

    def stepper(self, structure, follow: str = "primary", **options) -> ArcLengthStepper:
        return ArcLengthStepper(structure, self.step, constraint=self.constraint, psi=self.psi,
                                desired_iterations=self.desired_iterations,
                                min_step=self.min_step, max_step=self.max_step,
                                follow=follow, branch_sign=self.branch_sign, **options)


def trace(structure: Structure, control: StepControl, *, target_load_factor: float | None = None,
          max_steps: int | None = None, stop: Callable[[Point], bool] | None = None,
          callback: Callable[[Point], None] | None = None, tol: float = 1e-8,
          tol_u: float = 1e-6, max_iterations: int = 25,
          follow: str = "primary") -> EquilibriumPath:
    """Trace the equilibrium path of a structure.

    Parameters
    ----------
    structure : Structure
    control : by_load, by_displacement or by_arc_length
        How each step is taken.
    target_load_factor : float, optional
        End exactly on this load factor.
    max_steps : int, optional
        Most points to add (default 500 when nothing else ends the trace).
    stop : callable, optional
        ``stop(point) -> bool`` on each new converged point; True ends the trace.
    callback : callable, optional
        ``callback(point)`` on each new converged point (progress, live plots).
    tol, tol_u, max_iterations
        Newton's convergence criteria (see :mod:`largerot.solvers.newton`).
    follow : str
        ``"primary"`` stays on the path through bifurcations; ``"secondary"`` switches
        onto the secondary branch at the first bifurcation (arc-length control only).

    Returns
    -------
    EquilibriumPath
        Whatever was traced, with ``status`` and ``message``; a failed step never
        loses the points before it.
    """
    if not isinstance(control, StepControl):
        raise TypeError(f"`control` must be lr.by_load(...), lr.by_displacement(...) or "
                        f"lr.by_arc_length(...), got {control!r}.")
    if max_steps is None:
        max_steps = DEFAULT_MAX_STEPS
    if int(max_steps) < 0:
        raise ValueError(f"`max_steps` must be non-negative, got {max_steps!r}.")
    if follow not in ("primary", "secondary"):
        raise ValueError(f"`follow` must be 'primary' or 'secondary', got {follow!r}.")
    extra = {}
    if follow != "primary":
        if not isinstance(control, by_arc_length):
            raise ValueError(f"follow={follow!r} needs lr.by_arc_length(...) control, got {control!r}.")
        extra["follow"] = follow
    st = control.stepper(structure, tol=tol, tol_u=tol_u, max_iterations=max_iterations,
                         target_load_factor=target_load_factor, **extra)
    return run(st, max_steps=int(max_steps), stop=stop, callback=callback)


def run(stepper: PathStepper, max_steps: int, stop=None, callback=None) -> EquilibriumPath:
    """Run a stepper until it finishes, fails, ``stop`` says so, or ``max_steps``."""
    taken = 0
    while stepper.status == "running":
        if taken >= max_steps:
            stepper.finish("max_steps")
            break
        stepper.step()
        taken += 1
        if stepper.status == "failed":
            break
        point = stepper.last_point()
        if callback is not None:
            callback(point)
        if stepper.status == "running" and stop is not None and stop(point):
            stepper.finish("stopped")
    return stepper.result()
