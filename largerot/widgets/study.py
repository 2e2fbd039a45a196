"""Parameter studies: sliders rebuild the model, re-trace it and update the explorer.

The user writes ``build(**parameters)`` returning a Structure (traced here with the
library's :func:`~largerot.trace`) or an already traced EquilibriumPath.
"""
from __future__ import annotations

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
from ._errors import shown_in_widget
from .explorer import Explorer

__all__ = ["Study", "study", "parameter_widget"]

log = logging.getLogger(__name__)

#: Seconds of quiet after the last slider move before rebuilding (a drag of a slider
#: sends many values; only the last one is traced).
DEBOUNCE = 0.4
#: Slider positions between the ends of a (low, high) range.
SLIDER_STEPS = 100


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
    step = spec[2] if len(spec) == 3 else (1 if ints else (hi - lo) / SLIDER_STEPS)
    if ints:
        start = default if isinstance(default, int) and lo <= default <= hi else lo + ((hi - lo) // step // 2) * step
        return w.IntSlider(min=lo, max=hi, step=step, value=start, description=name,
                           continuous_update=True, style=style)
    start = default if isinstance(default, (int, float)) and lo <= default <= hi else (lo + hi) / 2
    return w.FloatSlider(min=lo, max=hi, step=step, value=start, description=name,
                         continuous_update=True, readout_format=".4g", style=style)


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
        self.errors = w.Output(layout=w.Layout(display="none", border="1px solid #c0392b"))
        super().__init__(children=[w.HBox(list(self.controls.values()),
                                          layout=w.Layout(flex_flow="row wrap")),
                                   self.status_label, self.explorer, self.errors])
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

    @shown_in_widget
    def rebuild(self) -> None:
        """Build, trace and show the model for the current slider values."""
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
                self.values = params
                self.error = ""
                self.errors.outputs = ()
                self.errors.layout.display = "none"
                self.status = (f"{len(path)} points in {time.perf_counter() - t0:.2f} s: "
                               f"{path.status} ({path.message})")
                self.status_label.value = self.status
            finally:
                if self.status_label.value == "<i>tracing…</i>":
                    self.status_label.value = "<b>failed</b>: the error is shown below."
                self.n_builds += 1

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
