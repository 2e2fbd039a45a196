"""How a path is followed: the public ``by_*`` step controls and :func:`trace`."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from ..model import Structure
from ..results import EquilibriumPath, Point
from .displacement_control import DisplacementStepper
from .load_control import LoadStepper
from .stepper import PathStepper

__all__ = ["by_load", "by_displacement", "trace", "StepControl"]

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


def trace(structure: Structure, control: StepControl, *, target_load_factor: float | None = None,
          max_steps: int | None = None, stop: Callable[[Point], bool] | None = None,
          callback: Callable[[Point], None] | None = None, tol: float = 1e-8,
          tol_u: float = 1e-6, max_iterations: int = 25) -> EquilibriumPath:
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
    st = control.stepper(structure, tol=tol, tol_u=tol_u, max_iterations=max_iterations,
                         target_load_factor=target_load_factor)
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
