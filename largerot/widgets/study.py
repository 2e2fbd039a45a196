"""Parameter studies: sliders rebuild the model, re-trace it and update the explorer.

The user writes ``build(**parameters)`` returning a Structure (traced here with the
library's :func:`~largerot.trace`) or an already traced EquilibriumPath.
"""
from __future__ import annotations

import html
import inspect
import logging
import threading
import time

import ipywidgets as w
import numpy as np
import traitlets as t

from ..model import Structure
from ..results import EquilibriumPath
from ..solvers import by_load, trace
from . import data
from ._errors import ErrorBox, show_error
from .explorer import Explorer

__all__ = ["Study", "study", "parameter_widget", "round_step"]

log = logging.getLogger(__name__)

#: Seconds of quiet after the last slider move before rebuilding (a drag of a slider
#: sends many values; only the last one is traced).
DEBOUNCE = 0.4
#: About this many slider positions between the ends of a (low, high) range.
SLIDER_STEPS = 100
#: Round steps: 1, 2, 2.5 and 5 times a power of ten (common practice for scales and
#: slider steps, no source).
ROUND_STEPS = (1.0, 2.0, 2.5, 5.0)
#: Finer round steps tried (down to range / (SLIDER_STEPS * FINEST)) so that the start
#: value lies on the slider's grid.
FINEST = 100


def _round_steps(low: float, high: float):
    """Round steps no longer than (high - low) / SLIDER_STEPS, coarsest first."""
    raw = (high - low) / SLIDER_STEPS
    k = int(np.floor(np.log10(raw))) + 1
    for _ in range(64):                      # bounded: 64 candidates span 16 decades
        for m in reversed(ROUND_STEPS):
            step = m * 10.0 ** k
            if step <= raw * (1 + 1e-9):
                if step < raw / FINEST:
                    return
                yield step
        k -= 1


def _on_grid(value: float, low: float, step: float) -> bool:
    q = (value - low) / step
    return abs(q - round(q)) <= 1e-6


def round_step(low: float, high: float, value: float | None = None) -> float:
    """A slider step for the range: a round number (1, 2, 2.5 or 5 × 10^k) of about a
    hundredth of it, fine enough that ``low`` + k·step lands on ``value`` when possible.

    >>> round_step(0.0, 1.0), round_step(0.01, 0.3, 0.07), round_step(0.0, 0.7)
    (0.01, 0.0025, 0.005)
    """
    steps = list(_round_steps(low, high))
    if not steps:
        return (high - low) / SLIDER_STEPS
    if value is not None:
        for step in steps:
            if _on_grid(value, low, step) and _on_grid(high, low, step):
                return step
        for step in steps:
            if _on_grid(value, low, step):
                return step
    return steps[0]


def parameter_widget(name: str, spec, default=None) -> w.ValueWidget:
    """A slider or menu for one parameter.

    ``spec`` is ``(low, high)`` or ``(low, high, step)`` (integers give an IntSlider),
    or a list of choices (a Dropdown). ``default`` (e.g. from ``build``'s signature)
    is the start value when it lies in the range, else the middle.

    >>> parameter_widget("n", (2, 10, 2)).value
    6
    """
    style = {"description_width": "initial"}
    if isinstance(spec, (list, dict)):
        if not spec:
            raise ValueError(f"Parameter {name!r} has no choices.")
        opts = list(spec.items()) if isinstance(spec, dict) else list(spec)
        values = [o[1] if isinstance(o, tuple) else o for o in opts]
        return w.Dropdown(options=opts, value=default if default in values else values[0],
                          description=name, style=style)
    if not (isinstance(spec, tuple) and len(spec) in (2, 3)):
        raise ValueError(f"Parameter {name!r} must be (low, high), (low, high, step) or a list "
                         f"of choices, got {spec!r}.")
    lo, hi = spec[0], spec[1]
    if not hi > lo:
        raise ValueError(f"Parameter {name!r} needs low < high, got {spec!r}.")
    ints = all(isinstance(v, (int, np.integer)) and not isinstance(v, bool) for v in spec)
    start = default if isinstance(default, (int, float)) and not isinstance(default, bool) \
        and lo <= default <= hi else None
    step = spec[2] if len(spec) == 3 else (1 if ints else round_step(lo, hi, start))
    if ints:
        start = default if isinstance(default, int) and lo <= default <= hi else lo + ((hi - lo) // step // 2) * step
        return w.IntSlider(min=lo, max=hi, step=step, value=start, description=name,
                           continuous_update=True, style=style)
    if start is None:
        mid = (lo + hi) / 2                 # the grid point nearest the middle
        start = lo + round((mid - lo) / step) * step
    start = float(np.round(start, 12))
    return w.FloatSlider(min=lo, max=hi, step=step, value=start, description=name,
                         continuous_update=True, style=style,
                         readout_format=".4")   # d3: 4 significant digits, no trailing zeros


class Study(w.VBox):
    """Sliders for the parameters of ``build``; each change rebuilds, re-traces, redraws.

    Parameters
    ----------
    build : callable
        ``build(**parameters) -> Structure | EquilibriumPath``.
    control : StepControl, optional
        How a returned Structure is traced (default ``lr.by_load(0.05)``).
    target_load_factor : float, optional
    max_steps : int, optional
    node, dof : optional
        The explorer's curve.
    debounce : float
        Seconds of quiet before a rebuild (0: rebuild at once, in the caller's thread).
    ranges
        One entry per parameter, see :func:`parameter_widget`.
    """

    values = t.Dict(help="The parameter values of the path shown.")
    status = t.Unicode("", help="What the last rebuild did.")
    error = t.Unicode("", help="The last error raised by a callback ('' if none).")
    n_builds = t.Int(0, help="Rebuilds completed (successful or not).")

    def __init__(self, build, *, control=None, target_load_factor: float | None = 1.0,
                 max_steps: int | None = None, node=None, dof=None, debounce: float = DEBOUNCE,
                 explorer_options=None, **ranges) -> None:
        if not callable(build):
            raise TypeError(f"`build` must be callable, got {build!r}.")
        if not ranges:
            raise ValueError("Give at least one parameter range, e.g. study(build, height=(4, 12)).")
        if debounce < 0:
            raise ValueError(f"`debounce` must be non-negative, got {debounce!r}.")
        self.build = build
        self.control = control if control is not None else by_load(0.05)
        self.trace_options = {"target_load_factor": target_load_factor, "max_steps": max_steps}
        self.debounce = float(debounce)
        self.values = {}
        self._curve = (node, dof)
        self._timer = None
        self._lock = threading.Lock()
        self._generation = 0
        try:
            defaults = {k: p.default for k, p in inspect.signature(build).parameters.items()
                        if p.default is not inspect.Parameter.empty}
        except (TypeError, ValueError):
            defaults = {}
        self.controls = {k: parameter_widget(k, spec, defaults.get(k)) for k, spec in ranges.items()}
        self.explorer = Explorer(**(explorer_options or {}))
        self.status_label = w.HTML("")
        self.errors = ErrorBox()
        super().__init__(children=[w.HBox(list(self.controls.values()),
                                          layout=w.Layout(flex_flow="row wrap")),
                                   self.status_label, self.errors, self.explorer])
        for c in self.controls.values():
            c.observe(self._moved, "value")
        self.rebuild()

    def parameters(self) -> dict:
        """Current slider values, by parameter name."""
        return {k: c.value for k, c in self.controls.items()}

    def _moved(self, change) -> None:
        if self.debounce == 0:
            self.rebuild()
            return
        if self._timer is not None:
            self._timer.cancel()
        self._timer = threading.Timer(self.debounce, self.rebuild)
        self._timer.daemon = True
        self._timer.start()

    def wait(self, timeout: float = 30.0) -> None:
        """Wait for a pending (debounced) rebuild to finish."""
        end = time.monotonic() + timeout
        timer = self._timer
        if timer is not None:
            timer.join(max(0.0, end - time.monotonic()))
        with self._lock:
            pass

    def rebuild(self) -> None:
        """Build, trace and show the model for the current slider values.

        A failed rebuild greys the last good result out and says why in one line (the
        traceback behind "details"); the next good one clears it.
        """
        with self._lock:
            self._generation += 1
            params = self.parameters()
            self.status_label.value = "<i>tracing…</i>"
            t0 = time.perf_counter()
            try:
                path = self._path(params)
                if self.explorer.path is None:          # first build: show the end of the path
                    self.explorer.show(path, *self._curve, index="last")
                else:                                   # later: keep the point in view
                    self.explorer.show(path)
            except Exception as exc:  # a build's error is shown in the panel, never lost
                show_error(self, exc)
                self.explorer.stale = self.explorer.path is not None
                shown = ", ".join(f"{k} = {data.format_value(v) if isinstance(v, float) else v}"
                                  for k, v in self.values.items())
                self.status = f"failed for {self._described(params)}"
                self.status_label.value = (
                    f"<b style='color:#b03a2e'>failed</b> for {html.escape(self._described(params))}"
                    + (f"; greyed out: the last good result ({html.escape(shown)})" if shown else ""))
            else:
                self.values = params
                self.error = ""
                self.errors.clear()
                self.explorer.stale = False
                self.status = (f"{len(path)} points in {time.perf_counter() - t0:.2f} s: "
                               f"{path.status} ({path.message})")
                self.status_label.value = html.escape(self.status)
            finally:
                self.n_builds += 1

    @staticmethod
    def _described(params: dict) -> str:
        return ", ".join(f"{k} = {data.format_value(v) if isinstance(v, float) else v}"
                         for k, v in params.items())

    def _path(self, params: dict) -> EquilibriumPath:
        got = self.build(**params)
        if isinstance(got, EquilibriumPath):
            return got
        if isinstance(got, Structure):
            return trace(got, self.control, **self.trace_options)
        raise TypeError(f"`build` must return a Structure or an EquilibriumPath, got "
                        f"{type(got).__name__} for {params}.")


def study(build, **ranges) -> Study:
    """A parameter panel: ``study(build, height=(4, 12), load=(1e3, 5e3))``.

    Reserved keywords (``control``, ``target_load_factor``, ``max_steps``, ``node``,
    ``dof``, ``debounce``, ``explorer_options``) go to :class:`Study`; all others are
    parameter ranges.
    """
    return Study(build, **ranges)
