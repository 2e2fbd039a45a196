"""How a path is followed: the public ``by_*`` step controls and :func:`trace`."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from typing import Iterator

from ..errors import ModelError
from ..model import DOFS, Structure
from ..results import EquilibriumPath, Point
from ..storage import load, save
from .arc_length import ArcLengthStepper, check_options
from .displacement_control import DisplacementStepper
from .load_control import AT_LIMIT, LoadStepper
from .events import user_events
from .stepper import KEEP, PathStepper, checked_option

__all__ = ["by_load", "by_displacement", "by_arc_length", "trace", "run", "resume", "iterate",
           "StepControl"]

#: Steps taken when neither a target, a stop condition nor ``max_steps`` ends the trace.
DEFAULT_MAX_STEPS = 500
#: Points between checkpoints of ``trace(..., checkpoint=...)``: a save of a 1,000-element
#: trace takes a few milliseconds, a point several.
DEFAULT_CHECKPOINT_EVERY = 10
#: Attempts at assembling the path when interrupts keep arriving (the stop button held).
RESULT_ATTEMPTS = 3


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
    at_limit : {"stop", "jump"}
        Load control cannot pass a limit point. ``"stop"`` (default) ends the trace
        there with status ``"limit"`` and the located critical point; ``"jump"``
        keeps the point found on the far branch and records the jump as a
        ``"snap"`` event. Never a silent step onto another branch
        (:mod:`largerot.solvers.load_control`).
    """

    step: float
    min_step: float | None = None
    at_limit: str = "stop"

    def __post_init__(self) -> None:
        checked_option("step", self.step, nonzero=True)
        checked_option("min_step", self.min_step, positive=True, allow_none=True)
        if not isinstance(self.at_limit, str) or self.at_limit not in AT_LIMIT:
            raise ModelError(f"`at_limit` must be one of {', '.join(map(repr, AT_LIMIT))}, "
                             f"got {self.at_limit!r}.")

    def stepper(self, structure, **options) -> LoadStepper:
        return LoadStepper(structure, self.step, min_step=self.min_step, at_limit=self.at_limit,
                           **options)


@dataclass(frozen=True)
class by_displacement(StepControl):
    """Displacement control: ``node``'s ``dof`` advances by ``step`` per point.

    Passes limit points in load; λ is solved for with a bordered system. It cannot
    pass a turning point of its own DOF (snap-back): use :class:`by_arc_length`.

    Parameters
    ----------
    node : int or str
        The controlled node: its id or its name (resolved against the structure
        when the trace starts); its ``dof`` must be free.
    dof : {"ux", "uy", "rz"}
        The controlled DOF: ``"ux"``, ``"uy"`` (lengths) or ``"rz"`` (radians).
    step : float
        Increment of that DOF per point, in the structure's units; negative to move
        the other way. Not zero.
    min_step : float, optional
        Smallest increment tried when a failed step is halved (default ``|step|/1024``).

    A structure with no reference load, or a restrained ``dof``, is refused with a
    ModelError when the stepper starts.
    """

    node: int | str
    dof: str
    step: float
    min_step: float | None = None

    def __post_init__(self) -> None:
        if isinstance(self.node, str):
            if not self.node.strip():
                raise ModelError(f"by_displacement: `node` must be a node id or a node's name, "
                                 f"got {self.node!r}.")
        elif isinstance(self.node, (bool, np.bool_)) or not isinstance(self.node, (int, np.integer)):
            raise TypeError(f"by_displacement: `node` must be a node id (a non-negative integer) "
                            f"or a node's name, got {self.node!r}.")
        elif self.node < 0:
            raise ModelError(f"by_displacement: `node` must be a node id (a non-negative integer), "
                             f"got {self.node!r}.")
        if not isinstance(self.dof, str):
            raise TypeError(f"by_displacement: `dof` must be one of {', '.join(DOFS)}, got {self.dof!r}.")
        if self.dof not in DOFS:
            raise ModelError(f"by_displacement: `dof` must be one of {', '.join(DOFS)}, got {self.dof!r}.")
        checked_option("step", self.step, nonzero=True)
        checked_option("min_step", self.min_step, positive=True, allow_none=True)

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
        Bounds on the arc length (defaults: first step/1024, and a step that moves
        the free DOFs by 5 % of the structure's size in the root mean square).
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
          callback: Callable[[Point], None] | None = None, events=None, tol: float = 1e-8,
          tol_u: float = 1e-6, max_iterations: int = 25,
          follow: str = "primary", checkpoint=None,
          checkpoint_every: int = DEFAULT_CHECKPOINT_EVERY, progress: bool = False) -> EquilibriumPath:
    """Trace the equilibrium path of a structure.

    Parameters
    ----------
    structure : Structure
        Its frozen snapshot is traced: editing it afterwards leaves the path unchanged.
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
    events : callable or list of callables, optional
        ``f(point) -> float``; where it changes sign between two points an event is
        located by root finding and recorded in ``path.events``. As in scipy's
        ``solve_ivp``, ``f.terminal = True`` ends the trace there and ``f.direction``
        (+1, −1 or 0) picks rising, falling or both crossings.
    tol, tol_u, max_iterations
        Newton's convergence criteria (see :mod:`largerot.solvers.newton`).
    follow : str
        ``"primary"`` stays on the path through bifurcations; ``"secondary"`` switches
        onto the secondary branch at the first bifurcation (arc-length control only).
    checkpoint : str or path, optional
        Save the running trace to this file (:func:`largerot.save`) every
        ``checkpoint_every`` points and when it ends: a killed process loses at most
        that many points, and :func:`resume` goes on from the file.
    checkpoint_every : int
        Points between checkpoints.
    progress : bool
        Show a progress bar (``tqdm.auto``: notebooks and terminals) of the points
        traced, with λ.

    Returns
    -------
    EquilibriumPath
        Whatever was traced, with ``status`` and ``message``; a failed step never
        loses the points before it, and an interrupt (the notebook's stop button)
        returns the path so far with status ``"interrupted"``.
    """
    if not isinstance(control, StepControl):
        raise TypeError(f"`control` must be lr.by_load(...), lr.by_displacement(...) or "
                        f"lr.by_arc_length(...), got {control!r}.")
    max_steps = DEFAULT_MAX_STEPS if max_steps is None else max_steps
    max_steps = checked_option("max_steps", max_steps, integer=True, lower=0)
    if follow not in ("primary", "secondary"):
        raise ValueError(f"`follow` must be 'primary' or 'secondary', got {follow!r}.")
    for name, f in (("stop", stop), ("callback", callback)):
        if f is not None and not callable(f):
            raise TypeError(f"`{name}` must be a function of a point, got {f!r}.")
    extra = {}
    if follow != "primary":
        if not isinstance(control, by_arc_length):
            raise ValueError(f"follow={follow!r} needs lr.by_arc_length(...) control, got {control!r}.")
        extra["follow"] = follow
    st = control.stepper(structure, tol=tol, tol_u=tol_u, max_iterations=max_iterations,
                         target_load_factor=target_load_factor, events=events, **extra)
    return run(st, max_steps=max_steps, stop=stop, callback=callback, checkpoint=checkpoint,
               checkpoint_every=checkpoint_every, progress=progress)


def iterate(stepper: PathStepper, max_steps: int | None = None) -> Iterator[Point]:
    """Step until the trace ends (or ``max_steps`` points), yielding each converged point.

    The driver of live views: ``for point in lr.iterate(st): ...``. Ends with the
    stepper's status set (``"max_steps"`` when the count ran out). An interrupt
    leaves the stepper at its last converged point, able to go on.
    """
    for _ in _steps(stepper, max_steps):
        yield stepper.last_point()


def _steps(stepper: PathStepper, max_steps: int | None = None) -> Iterator[None]:
    """:func:`iterate` without building the points (a run that nobody watches)."""
    if max_steps is not None:
        max_steps = checked_option("max_steps", max_steps, integer=True, lower=0)
    taken = 0
    while stepper.running:
        if max_steps is not None and taken >= max_steps:
            stepper.finish("max_steps")
            return
        stepper.step()
        taken += 1
        if stepper.status != "failed":
            yield None


def run(stepper: PathStepper, max_steps: int = DEFAULT_MAX_STEPS, stop=None,
        callback=None, checkpoint=None,
        checkpoint_every: int = DEFAULT_CHECKPOINT_EVERY, progress: bool = False) -> EquilibriumPath:
    """Run a stepper until it ends, ``stop`` says so, or ``max_steps``; return the path.

    A KeyboardInterrupt ends the run with status ``"interrupted"`` and the path traced
    so far; ``stepper.resume()`` then goes on from the last converged point. With
    ``checkpoint`` (a file name) the stepper is saved every ``checkpoint_every``
    points and once more when the run ends (see :func:`trace`).
    """
    since, bar = 0, None
    try:                           # an interrupt anywhere in here ends the run cleanly
        if checkpoint is not None:
            checkpoint_every = checked_option("checkpoint_every", checkpoint_every, integer=True,
                                              lower=1)
            save(stepper, checkpoint)            # the start: a resume never finds no file
        if progress:
            from tqdm.auto import tqdm
            bar = tqdm(total=max_steps, desc="points", unit="pt")
        watched = bar is not None or callback is not None or stop is not None
        for _ in _steps(stepper, max_steps):
            point = stepper.last_point() if watched else None
            if bar is not None:
                bar.update(1)
                bar.set_postfix_str(f"λ = {point.load_factor:.4g}")
            if callback is not None:
                callback(point)
            if stepper.running and stop is not None and stop(point):
                stepper.finish("stopped")
            since += 1
            if checkpoint is not None and since >= checkpoint_every and stepper.running:
                save(stepper, checkpoint)
                since = 0
    except KeyboardInterrupt:
        if stepper.running:
            stepper.finish("interrupted")
    finally:
        if bar is not None:
            bar.set_postfix_str(f"{stepper.status}, λ = {stepper.lam:.4g}")
            bar.close()
    if checkpoint is not None:
        try:
            save(stepper, checkpoint)                # atomic: an interrupt keeps the last one
        except KeyboardInterrupt:
            pass
    # a second press of the stop button while the path is assembled: assemble it again
    for _ in range(RESULT_ATTEMPTS - 1):
        try:
            return stepper.result()
        except KeyboardInterrupt:
            if stepper.running:
                stepper.finish("interrupted")
    return stepper.result()


def resume(filename, *, max_steps: int | None = None, stop=None, callback=None, events=None,
           checkpoint=KEEP, checkpoint_every: int = DEFAULT_CHECKPOINT_EVERY,
           progress: bool = False) -> EquilibriumPath:
    """Go on with a trace from its checkpoint file (``trace(..., checkpoint=filename)``).

    The stepper is restored as saved — its points, control state (step, direction,
    target) and material and contact history — and run on: the path is the one an
    uninterrupted trace gives. A trace that had ended (target reached, a limit, a
    stop) is returned as it was; one interrupted or out of steps goes on.

    Parameters
    ----------
    filename : str or path
        A checkpoint written by :func:`trace` or ``lr.save(stepper, filename)``.
    max_steps, stop, callback
        As for :func:`trace` (functions are code and are not saved: pass them again).
    events : callable or list of callables
        The event functions the trace was started with, if any (required then).
    checkpoint : str, path or None
        Where to go on saving (default: the same file; None: nowhere).
    checkpoint_every : int
        Points between checkpoints.
    """
    stepper = load(filename, kind="checkpoint")
    names = stepper.__dict__.pop("saved_event_names", ())
    given = user_events(events)
    if len(given) != len(names):
        listed = ", ".join(names) if names else "none"
        raise ModelError(f"The checkpoint {filename} was traced with {len(names)} event "
                         f"function(s) ({listed}); pass the same to lr.resume(..., events=[...]), "
                         f"got {len(given)}.")
    stepper.user_events = given
    if stepper.status in ("interrupted", "max_steps"):
        stepper.resume()
    elif stepper.status != "running":
        return stepper.result()
    max_steps = DEFAULT_MAX_STEPS if max_steps is None else max_steps
    return run(stepper, max_steps=max_steps, stop=stop, callback=callback,
               checkpoint=filename if checkpoint is KEEP else checkpoint,
               checkpoint_every=checkpoint_every, progress=progress)
