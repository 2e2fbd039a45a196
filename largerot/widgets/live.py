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
from . import data
from ._errors import ErrorBox, shown_in_widget, show_error
from .explorer import Explorer

__all__ = ["Live", "live", "TARGETS", "STATES", "BUTTONS", "ENABLED", "TRANSITIONS",
           "enabled_buttons", "outcome"]

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

# -- the panel's states: a table, testable without a browser ------------------------------
#: idle: nothing traced yet; tracing: a run goes on; paused: stopped part way (step or
#: run go on); finished: the trace ended well (a word of lr.STATUS other than failed);
#: failed: the solver failed or an error was raised.
STATES = ("idle", "tracing", "paused", "finished", "failed")
#: The buttons. "previous" shows the point before the one shown (the trace is unchanged).
BUTTONS = ("step", "run", "pause", "previous", "reset")
#: Buttons that can act in each state ("previous" also needs a point before the one shown).
ENABLED = {
    "idle": ("step", "run"),
    "tracing": ("pause",),
    "paused": ("step", "run", "previous", "reset"),
    "finished": ("previous", "reset"),
    "failed": ("previous", "reset"),
}
#: (state, button) -> state right after the press; a step's or a run's end then moves a
#: paused or tracing panel on by :func:`outcome`. Buttons that cannot act leave the state.
TRANSITIONS = {
    (state, button): {("idle", "step"): "paused", ("idle", "run"): "tracing",
                      ("tracing", "pause"): "paused", ("paused", "step"): "paused",
                      ("paused", "run"): "tracing", ("paused", "reset"): "idle",
                      ("finished", "reset"): "idle", ("failed", "reset"): "idle",
                      }.get((state, button), state)
    for state in STATES for button in BUTTONS
}


def enabled_buttons(state: str, at_first_point: bool = False) -> tuple:
    """Buttons that can act in ``state`` (``previous`` not at the first point).

    >>> enabled_buttons("finished"), enabled_buttons("paused", at_first_point=True)
    (('previous', 'reset'), ('step', 'run', 'reset'))
    """
    return tuple(b for b in ENABLED[state] if not (b == "previous" and at_first_point))


def outcome(stepper_status: str, error: bool = False) -> str:
    """The panel's state once a step or a run stops, from the stepper's status word.

    >>> outcome("running"), outcome("target"), outcome("failed"), outcome("running", error=True)
    ('paused', 'finished', 'failed', 'failed')
    """
    if error or stepper_status == "failed":
        return "failed"
    return "paused" if stepper_status == "running" else "finished"


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
    """Buttons to step, run, pause, show the previous point and reset a trace.

    The panel is in one of :data:`STATES` (``state``), shown as such; a button is
    enabled only where it can act (:data:`ENABLED`), and pressing one follows
    :data:`TRANSITIONS`. Errors show as one line with the traceback behind "details".

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

    state = t.Enum(STATES, default_value="idle", help="The panel's state, one of STATES.")
    status = t.Unicode("running", help="The stepper's status, a word of lr.STATUS ('running' until it ends).")
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
        b = dict(layout=w.Layout(width="96px"))
        self.buttons = {
            "step": w.Button(description="step", icon="step-forward",
                             tooltip="take one step of the trace", **b),
            "run": w.Button(description="run", icon="play", button_style="success",
                            tooltip="trace on to the target", **b),
            "pause": w.Button(description="pause", icon="pause",
                              tooltip="stop the run after its current step", **b),
            "previous": w.Button(description="previous", icon="chevron-left",
                                 tooltip="show the point before the one shown (the trace is unchanged)", **b),
            "reset": w.Button(description="reset", icon="undo", button_style="warning",
                              tooltip="throw the trace away and start again", **b),
        }
        self.step_button, self.run_button = self.buttons["step"], self.buttons["run"]
        self.pause_button, self.reset_button = self.buttons["pause"], self.buttons["reset"]
        self.previous_button = self.back_button = self.buttons["previous"]
        self.step_box = w.FloatText(description="step", layout=w.Layout(width="160px"))
        self.kind_menu = w.Dropdown(options=TARGETS, description="run to", layout=w.Layout(width="220px"))
        self.target_box = w.FloatText(layout=w.Layout(width="100px"))
        self.bar = w.FloatProgress(min=0.0, max=1.0, description="progress", layout=w.Layout(width="320px"))
        self.state_label = w.HTML("")
        self.state_label.add_class("largerot-state")
        self.log_view = w.HTML("", layout=w.Layout(max_height="120px", overflow="auto",
                                                   border="1px solid #ddd"))
        self.errors = ErrorBox()
        super().__init__(children=[
            w.HBox(list(self.buttons.values())),
            w.HBox([self.step_box, self.kind_menu, self.target_box]),
            w.HBox([self.bar, self.state_label]),
            self.errors, self.view, self.log_view])
        t.link((self.kind_menu, "value"), (self, "target_kind"))
        t.link((self.target_box, "value"), (self, "target"))
        t.link((self.step_box, "value"), (self, "step_size"))
        for name, button in self.buttons.items():
            button.on_click(lambda _, name=name: self.press(name))
        self.view.slider.observe(lambda _: self._show_state(), "value")
        self._target_load_factor = target_load_factor
        self._curve = (node, dof)
        self.target_kind = target_kind
        if target is None:
            target = target_load_factor if target_kind == "load factor" and target_load_factor is not None \
                else (50 if target_kind == "points" else 1.0)
        self.target = float(target)
        self._reset()

    # -- the buttons ---------------------------------------------------------------
    def enabled(self) -> tuple:
        """Buttons that can act now."""
        return enabled_buttons(self.state, at_first_point=self.view.index == 0)

    def press(self, button: str) -> None:
        """Press a button: it acts if it can (:meth:`enabled`), else nothing happens."""
        if button not in BUTTONS:
            raise ValueError(f"`button` must be one of {', '.join(BUTTONS)}, got {button!r}.")
        if button not in self.enabled():
            log.info("%s does nothing while the panel is %s.", button, self.state)
            return
        {"step": self.step, "run": self.run, "pause": self.pause,
         "previous": self.previous, "reset": self.reset}[button]()

    # -- actions -------------------------------------------------------------------
    @shown_in_widget
    def reset(self) -> None:
        """Throw the trace away and start again from the unloaded state."""
        self._reset()

    def _reset(self) -> None:
        self.pause()
        with self._lock:
            self.errors.clear()
            self.error = ""
            lam_target = self.target if self.target_kind == "load factor" else self._target_load_factor
            self.stepper = self.control.stepper(self.structure, target_load_factor=lam_target,
                                                **self.stepper_options)
            self.step_size = abs(float(self.stepper.h))
            self.messages = ["Started at the unloaded state."]
            self._checked = 0
            self.state = "idle"
            self._refresh()

    def step(self) -> str | None:
        """Take one step (when the panel can); return the solver's message."""
        if "step" not in ENABLED[self.state]:
            self._say(self._cannot("step"))
            self._show_state()
            return None
        msg, failed = None, False
        with self._lock:
            try:
                msg = self._step_once()
            except Exception as exc:  # shown in the widget as one line, the panel fails
                show_error(self, exc)
                failed = True
            self.state = outcome(self.stepper.status, error=failed)
            self._refresh()
        return msg

    def run(self, block: bool = False) -> None:
        """Run to the target in a background thread (``block=True`` waits for the end)."""
        if "run" not in ENABLED[self.state]:
            if self.state != "tracing":
                self._say(self._cannot("run"))
                self._show_state()
            return
        self._stop.clear()
        self.state = "tracing"
        self.busy = True
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

    def previous(self) -> None:
        """Show the point before the one shown (the trace itself is unchanged)."""
        self.view.index = max(0, self.view.index - 1)

    #: The old name of :meth:`previous`.
    back = previous

    # -- internals ---------------------------------------------------------------------
    def _cannot(self, button: str) -> str:
        if self.state in ("finished", "failed"):
            return (f"The trace has {self.state} ({self.stepper.status}: {self.stepper.message}); "
                    f"press reset to trace again.")
        return f"{button} does nothing while the panel is {self.state}."

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
        failed = False
        try:
            for point in iterate(st):
                self._say(f"Point {point.index}: λ = {data.format_value(point.load_factor)}, "
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
            failed = True
        finally:
            with self._lock:
                self.busy = False
                self.state = outcome(st.status, error=failed)
                self._refresh()

    def _say(self, msg: str) -> None:
        log.info("%s", msg)
        self.messages = (self.messages + [msg])[-MAX_MESSAGES:]

    def _show_state(self) -> None:
        """Buttons enabled where they can act; the state in words; the log."""
        on = self.enabled()
        with self.hold_sync():
            for name, button in self.buttons.items():
                button.disabled = name not in on
            st = self.stepper
            lam, u, n = self._now()
            words = {"idle": "idle", "tracing": "tracing…", "paused": "paused",
                     "finished": "finished", "failed": "failed"}[self.state]
            colour = {"failed": "#b03a2e", "finished": "#1e6b34", "tracing": "#1f5fa8"}.get(self.state, "#333")
            end = f" — {html.escape(st.status)}: {html.escape(st.message)}" if not st.running else ""
            self.state_label.value = (
                f"&nbsp;<b style='color:{colour}' data-state='{self.state}'>{words}</b>{end} · "
                f"{n} point{'s' if n != 1 else ''}, λ = {data.format_value(lam)}, "
                f"step {data.format_value(st.h)}")
            self.log_view.value = "<pre style='margin:2px'>" + html.escape(
                "\n".join(reversed(self.messages[-12:]))) + "</pre>"

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
            self._show_state()

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

    @t.observe("state")
    def _state_changed(self, change) -> None:
        if getattr(self, "stepper", None) is not None:
            self._show_state()


def live(structure, control, **options) -> Live:
    """Step a trace live: step / run to a target / pause / previous point / reset.

    >>> import largerot as lr
    >>> from largerot.demo import lighting_pole
    >>> s, base, top = lighting_pole(segments=4)
    >>> lv = lr.widgets.live(s, lr.by_load(0.25), node=top, dof="ux")
    >>> lv.run(block=True); lv.n_points, lv.status, lv.state
    (5, 'target', 'finished')
    """
    return Live(structure, control, **options)
