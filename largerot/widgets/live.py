"""Live stepping: take steps along the path by hand or run to a target, and watch.

The trace runs in a background thread; the view is refreshed at most every
:data:`UPDATE_INTERVAL` seconds, so the notebook stays responsive and the browser is
not flooded. Steps come from the library's stepper objects through their public API
only (``control.stepper(structure, ...)``, :func:`largerot.iterate`,
``stepper.set_step``, ``stepper.set_target``); the status shown is the stepper's, a
word of :data:`largerot.STATUS`.
"""
from __future__ import annotations

import html
import logging
import threading
import time

import ipywidgets as w
import numpy as np
import traitlets as t

from ..model import DOFS
from ..solvers import iterate
from ._errors import shown_in_widget, show_error
from .explorer import Explorer

__all__ = ["Live", "live", "TARGETS"]

log = logging.getLogger(__name__)

#: Seconds between view refreshes while running (≈ 4 updates a second: smooth enough to
#: watch, while each refresh resends the grown path to the browser).
UPDATE_INTERVAL = 0.25
#: Solver messages kept in the widget's log.
MAX_MESSAGES = 200
#: Frames of a live path sent to the browser (it is resent on every refresh).
LIVE_FRAMES = 400
#: What "run" runs to.
TARGETS = ("load factor", "displacement", "points")


def reached(kind: str, target: float, lam: float, u: float, n_points: int) -> bool:
    """True once a run to ``target`` is done (a plain rule, testable on its own).

    >>> reached("load factor", 1.0, 1.0, 0.0, 5), reached("points", 10, 0.2, 0.0, 9)
    (True, False)
    """
    if kind == "load factor":
        return lam >= target - 1e-12 * max(1.0, abs(target)) if target >= 0 else lam <= target
    if kind == "displacement":
        return u >= target if target >= 0 else u <= target
    if kind == "points":
        return n_points >= target
    raise ValueError(f"`target_kind` must be one of {', '.join(TARGETS)}, got {kind!r}.")


def progress(kind: str, target: float, lam: float, u: float, n_points: int) -> float:
    """Fraction of the way to the target, in [0, 1]."""
    now = {"load factor": lam, "displacement": u, "points": n_points}[kind]
    return float(np.clip(now / target, 0.0, 1.0)) if target else 1.0


class Live(w.VBox):
    """Buttons to step, run, pause, step back (view only) and reset a trace.

    Parameters
    ----------
    structure : Structure
    control : StepControl
        ``lr.by_load(...)``, ``lr.by_displacement(...)``...
    target_load_factor : float, optional
        Target of a run to a load factor (the stepper lands on it exactly).
    target_kind : str
        One of :data:`TARGETS`.
    target : float, optional
        Target value (default ``target_load_factor``, or 50 points).
    node, dof : int, str, optional
        Displacement plotted and used by displacement targets.
    stepper_options
        Passed to ``control.stepper`` (``tol``, ``max_iterations``...).
    """

    status = t.Unicode("running", help="The trace's status, a word of lr.STATUS ('running' until it ends).")
    busy = t.Bool(False, help="True while a run goes on in the background thread.")
    target_kind = t.Enum(TARGETS, default_value="load factor", help="What a run runs to.")
    target = t.Float(1.0, help="Value of the run's target.")
    step_size = t.Float(0.1, help="Step of the control, in its own measure.")
    n_points = t.Int(0, help="Points traced so far (including the unloaded state).")
    messages = t.List(t.Unicode(), help="Solver messages, oldest first (shown newest first).")
    error = t.Unicode("", help="The last error raised by a callback ('' if none).")

    def __init__(self, structure, control, *, target_load_factor: float | None = 1.0,
                 target_kind: str = "load factor", target: float | None = None,
                 node: int | None = None, dof: str | None = None,
                 update_interval: float = UPDATE_INTERVAL, **stepper_options) -> None:
        if target_kind not in TARGETS:
            raise ValueError(f"`target_kind` must be one of {', '.join(TARGETS)}, got {target_kind!r}.")
        if dof is not None and dof not in DOFS:
            raise ValueError(f"`dof` must be one of {', '.join(DOFS)}, got {dof!r}.")
        self.structure, self.control = structure, control
        self.stepper_options = dict(stepper_options)
        self.update_interval = float(update_interval)
        self._lock = threading.RLock()
        self._stop = threading.Event()
        self._thread = None
        self.path = None
        self.view = Explorer(max_frames=LIVE_FRAMES)
        b = dict(layout=w.Layout(width="88px"))
        self.step_button = w.Button(description="step", icon="step-forward", **b)
        self.run_button = w.Button(description="run", icon="play", button_style="success", **b)
        self.pause_button = w.Button(description="pause", icon="pause", disabled=True, **b)
        self.back_button = w.Button(description="back", icon="step-backward",
                                    tooltip="show the previous point (view only)", **b)
        self.reset_button = w.Button(description="reset", icon="undo", button_style="warning", **b)
        self.step_box = w.FloatText(description="step", layout=w.Layout(width="160px"))
        self.kind_menu = w.Dropdown(options=TARGETS, description="run to", layout=w.Layout(width="220px"))
        self.target_box = w.FloatText(layout=w.Layout(width="100px"))
        self.bar = w.FloatProgress(min=0.0, max=1.0, description="progress", layout=w.Layout(width="320px"))
        self.state_label = w.HTML("")
        self.log_view = w.HTML("", layout=w.Layout(max_height="120px", overflow="auto",
                                                   border="1px solid #ddd"))
        self.errors = w.Output(layout=w.Layout(display="none", border="1px solid #c0392b"))
        super().__init__(children=[
            w.HBox([self.step_button, self.run_button, self.pause_button, self.back_button,
                    self.reset_button]),
            w.HBox([self.step_box, self.kind_menu, self.target_box]),
            w.HBox([self.bar, self.state_label]),
            self.view, self.log_view, self.errors])
        t.link((self.kind_menu, "value"), (self, "target_kind"))
        t.link((self.target_box, "value"), (self, "target"))
        t.link((self.step_box, "value"), (self, "step_size"))
        self.step_button.on_click(lambda _: self.step())
        self.run_button.on_click(lambda _: self.run())
        self.pause_button.on_click(lambda _: self.pause())
        self.back_button.on_click(lambda _: self.back())
        self.reset_button.on_click(lambda _: self.reset())
        self._target_load_factor = target_load_factor
        self._curve = (node, dof)
        self.target_kind = target_kind
        if target is None:
            target = target_load_factor if target_kind == "load factor" and target_load_factor is not None \
                else (50 if target_kind == "points" else 1.0)
        self.target = float(target)
        self._reset()

    # -- actions -------------------------------------------------------------------
    @shown_in_widget
    def reset(self) -> None:
        """Throw the trace away and start again from the unloaded state."""
        self._reset()

    def _reset(self) -> None:
        self.pause()
        with self._lock:
            lam_target = self.target if self.target_kind == "load factor" else self._target_load_factor
            self.stepper = self.control.stepper(self.structure, target_load_factor=lam_target,
                                                **self.stepper_options)
            self.step_size = abs(float(self.stepper.h))
            self.messages = ["Started at the unloaded state."]
            self._checked = 0
            self._refresh()

    @shown_in_widget
    def step(self) -> str | None:
        """Take one step (not while running); return the solver's message."""
        if self._running():
            raise RuntimeError("A run is in progress; pause it before stepping by hand.")
        with self._lock:
            msg = self._step_once()
            self._refresh()
        return msg

    @shown_in_widget
    def run(self, block: bool = False) -> None:
        """Run to the target in a background thread (``block=True`` waits for the end)."""
        if self._running():
            return
        if not self.stepper.running:
            self._say(f"The trace has ended ({self.stepper.status}: {self.stepper.message}); "
                      "press reset to trace again.")
            self._refresh()
            return
        self._stop.clear()
        self._set_running(True)
        self._thread = threading.Thread(target=self._run_loop, name="largerot-live", daemon=True)
        self._thread.start()
        if block:
            self.wait()

    def pause(self) -> None:
        """Stop a run after its current step."""
        self._stop.set()
        self.wait()

    def wait(self, timeout: float | None = None) -> None:
        """Wait for a run to end."""
        th = self._thread
        if th is not None and th is not threading.current_thread():
            th.join(timeout)

    @shown_in_widget
    def back(self) -> None:
        """Show the previous point (the trace itself is unchanged)."""
        self.view.index = max(0, self.view.index - 1)

    # -- internals ---------------------------------------------------------------------
    def _running(self) -> bool:
        return self._thread is not None and self._thread.is_alive()

    def _set_running(self, running: bool) -> None:
        self.busy = running
        self.status = self.stepper.status
        self.pause_button.disabled = not running
        ended = not self.stepper.running
        for b in (self.step_button, self.run_button):
            b.disabled = running or ended
        self.reset_button.disabled = running

    def _now(self):
        """(λ, chosen displacement, points) of the last converged point."""
        p = self.stepper.last_point()
        node, dof = self._plotted()
        return p.load_factor, p.displacement(node, dof), p.index + 1

    def _plotted(self):
        node, dof = self._curve
        if node is None or dof is None:
            return self.view.curve_of
        return node, dof

    def _step_once(self) -> str:
        st = self.stepper
        msg = st.step()
        self._say(msg)
        if not st.running:
            self._say(f"Trace {st.status}: {st.message}")
        return msg

    def _run_loop(self) -> None:
        last = 0.0
        st = self.stepper
        try:
            for point in iterate(st):
                self._say(f"Point {point.index}: λ = {point.load_factor:.6g}, "
                          f"{point.iterations} iterations.")
                lam, u, n = self._now()
                if reached(self.target_kind, self.target, lam, u, n):
                    self._say(f"Reached the target {self.target_kind} {self.target:g}.")
                    break
                if self._stop.is_set():
                    break
                if time.monotonic() - last >= self.update_interval:
                    with self._lock:
                        self._refresh()
                    last = time.monotonic()
            if not st.running:
                self._say(f"Trace {st.status}: {st.message}")
        except Exception as exc:  # shown in the widget, the thread must not die silently
            show_error(self, exc)
        finally:
            with self._lock:
                self._refresh()
            self._set_running(False)

    def _say(self, msg: str) -> None:
        log.info("%s", msg)
        self.messages = (self.messages + [msg])[-MAX_MESSAGES:]

    def _refresh(self) -> None:
        """Send the path so far to the view (the last point shown) and the counters."""
        self.path = self.stepper.result()
        neg = self.path.n_negative
        for k in np.flatnonzero(np.diff(neg[max(0, self._checked - 1):]) != 0) + max(0, self._checked - 1):
            self._say(f"Stability changed at point {k + 1}: {neg[k]} → {neg[k + 1]} negative "
                      "eigenvalues of the tangent (a critical point was passed).")
        self._checked = len(neg)
        node, dof = self._curve
        with self.hold_sync():
            if self.view.path is None or self.view.path.structure is not self.path.structure:
                self.view.show(self.path, node=node, dof=dof, index="last")
            else:
                self.view.extend(self.path)              # only the new points are drawn
            self.n_points = len(self.path)
            lam, u, n = self._now()
            self.bar.value = progress(self.target_kind, self.target, lam, u, n)
            self.status = self.stepper.status
            self.state_label.value = (f"&nbsp;{n} points, λ = {lam:.4g}, step {self.stepper.h:.3g}, "
                                      f"<b>{'running' if self.busy else self.stepper.status}</b>")
            self.log_view.value = "<pre style='margin:2px'>" + html.escape(
                "\n".join(reversed(self.messages[-12:]))) + "</pre>"

    @t.observe("step_size")
    @shown_in_widget
    def _step_size_changed(self, change) -> None:
        st = getattr(self, "stepper", None)
        if st is None:                  # not started yet: the stepper's own step is used
            return
        v = float(change["new"])
        if not (np.isfinite(v) and v > 0):
            raise ValueError(f"The step size must be positive, got {v!r}.")
        if abs(st.h) != v:
            with self._lock:
                st.set_step(float(np.sign(st.h) or 1.0) * v)

    @t.observe("target", "target_kind")
    @shown_in_widget
    def _target_changed(self, change) -> None:
        st = getattr(self, "stepper", None)
        if st is None:
            return
        if self.target_kind == "load factor":
            if st.running:
                st.set_target(float(self.target))
            else:
                self._say("The trace has ended; press reset to trace to a new load factor.")
        elif st.running:
            st.set_target(self._target_load_factor)


def live(structure, control, **options) -> Live:
    """Step a trace live: step / run to a target / pause / back / reset, with messages.

    >>> import largerot as lr
    >>> from largerot.demo import lighting_pole
    >>> s, base, top = lighting_pole(segments=4)
    >>> lv = lr.widgets.live(s, lr.by_load(0.25), node=top, dof="ux")
    >>> lv.run(block=True); lv.n_points, lv.status
    (5, 'target')
    """
    return Live(structure, control, **options)
