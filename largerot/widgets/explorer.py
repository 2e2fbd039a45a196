"""The path explorer: scrub or play along a traced path and watch the member move.

>>> import largerot as lr
>>> from largerot.demo import lighting_pole
>>> s, base, top = lighting_pole(segments=4)
>>> path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
>>> ex = lr.widgets.explore(path, node=top, dof="ux")
>>> ex.index = 2
>>> ex.canvas.index, round(ex.readout["λ"], 3)
(2, 0.5)

A :class:`~largerot.Motion` (``lr.transient``) is explored the same way: its curve
and readout show the time t in seconds, and it plays in real time. With
``frequencies=True`` the lowest natural frequency is computed once along the path
and offered in the curve's menu (shown first).
"""
from __future__ import annotations

import logging
import warnings

import ipywidgets as w
import numpy as np
import traitlets as t

from ..model import DOFS
from ..motion import Motion
from ..plotting import default_curve
from ..results import EquilibriumPath, member_lines
from . import data
from ._errors import ErrorBox, shown_in_widget
from .canvas import ShapeCanvas

__all__ = ["Explorer", "explore"]

log = logging.getLogger(__name__)



class Explorer(w.VBox):
    """Deformed shape beside the equilibrium path, a point slider with play, a readout.

    Parameters
    ----------
    path : EquilibriumPath
    node, dof : int, str, optional
        Abscissa of the path plot (default: the first loaded node's largest motion).
    scale : float
        Magnification of displacements in the shape (1: true scale).
    forces : str
        Force diagram shown: ``""``, ``"N"``, ``"V"`` or ``"M"``.
    max_frames : int
        Longer paths are subsampled evenly to this many frames.
    width, height : int
        Canvas size in pixels.
    play_seconds : float, optional
        Longest time a whole path takes to play (default
        :func:`largerot.widgets.data.play_seconds`: at most 8 s, frames skipped as
        needed). The browser draws once per display refresh.
    interval : int, optional
        Deprecated and ignored: playback is paced by the browser's animation frames.
    time : bool, optional
        The path is a motion's (:meth:`largerot.Motion.as_path`): its load factor
        column is the time, labelled "t [s]", and it plays in real time. Set by
        itself when a :class:`~largerot.Motion` is given.
    frequencies : bool
        Compute the lowest natural frequency along the path (:func:`largerot.frequencies`,
        one eigenproblem per point; at most
        :data:`~largerot.widgets.data.MAX_FREQUENCY_POINTS` points, evenly spread, joined
        by straight lines) and plot it against λ (the menu's first entry; the
        displacements stay in the menu). Needs masses (section density or nodal masses).
    """

    path = t.Instance(EquilibriumPath, allow_none=True, help="The path explored.")
    curve_of = t.Tuple(t.Int(), t.Unicode(), default_value=(0, "ux"),
                       help="(node, dof) plotted against the load factor.")
    scale = t.Float(1.0, help="Magnification of displacements in the shape drawing.")
    forces = t.Unicode("", help="Force diagram: '', 'N', 'V' or 'M'.")
    max_frames = t.Int(data.MAX_FRAMES, help="Most frames sent to the browser.")
    error = t.Unicode("", help="The last error raised by a callback ('' if none).")
    time = t.Bool(False, help="True when the path shown is a motion's (load factor column = time).")

    def __init__(self, path: EquilibriumPath | None = None, node: int | None = None,
                 dof: str | None = None, *, scale: float = 1.0, forces: str = "",
                 max_frames: int = data.MAX_FRAMES, width: int = 900, height: int = 400,
                 play_seconds: float | None = None, interval: int | None = None,
                 time: bool | None = None, frequencies: bool = False, **kwargs) -> None:
        if not isinstance(frequencies, (bool, np.bool_)):
            raise TypeError(f"`frequencies` must be True or False, got {frequencies!r}.")
        self._want_frequencies = bool(frequencies)
        self._frequency = None          # (path, (points, f)) once computed
        self._time_option = time
        if forces not in ("", *data.FORCE_NAMES):
            raise ValueError(f"`forces` must be '', 'N', 'V' or 'M', got {forces!r}.")
        if int(max_frames) < 2:
            raise ValueError(f"`max_frames` must be at least 2, got {max_frames!r}.")
        if interval is not None:
            warnings.warn("`interval` is ignored: playback is paced by the browser's animation "
                          "frames; use `play_seconds` for the length of a play.",
                          DeprecationWarning, stacklevel=3)
        if play_seconds is not None and not play_seconds > 0:
            raise ValueError(f"`play_seconds` must be positive, got {play_seconds!r}.")
        self._play_seconds = None if play_seconds is None else float(play_seconds)
        self.canvas = ShapeCanvas(width=int(width), height=int(height))
        self.play = w.ToggleButton(value=False, description="play", icon="play",
                                   tooltip="play the path (the browser skips frames so a "
                                           "whole path takes a few seconds)",
                                   layout=w.Layout(width="90px"))
        self.slider = w.IntSlider(min=0, max=0, description="point", continuous_update=True,
                                  layout=w.Layout(width="420px"))
        w.jslink((self.play, "value"), (self.canvas, "playing"))
        w.jslink((self.slider, "value"), (self.canvas, "index"))
        self.canvas.observe(self._playing_changed, "playing")
        self.menu = w.Dropdown(description="path of", options=[("ux of node 0", (0, "ux"))],
                               layout=w.Layout(width="220px"))
        self.force_buttons = w.ToggleButtons(
            options=[("off", ""), ("N", "N"), ("V", "V"), ("M", "M")], value=forces,
            style={"button_width": "46px"}, layout=w.Layout(width="auto"),
            tooltips=["no diagram", *data.FORCE_NAMES.values()])
        self.ghost_box = w.Checkbox(value=True, description="undeformed", indent=False,
                                    layout=w.Layout(width="110px"))
        w.jslink((self.ghost_box, "value"), (self.canvas, "show_ghost"))
        self.scale_box = w.BoundedFloatText(value=scale, min=1e-6, max=1e6, description="scale ×",
                                            layout=w.Layout(width="150px"))
        self.note = w.HTML("")
        self.about = w.HTML("", layout=w.Layout(margin="0 0 0 4px"))
        self.errors = ErrorBox()
        self._points = np.zeros(0, dtype=int)
        self._layout = None
        # frames and force tables already computed, by path point: reused while a
        # live trace grows (``extend``); cleared by ``show`` and a change of scale
        self._frame_cache: dict[int, np.ndarray] = {}
        self._force_cache: dict[tuple, np.ndarray] = {}
        self._growing = False
        super().__init__(children=[
            w.HBox([self.play, self.slider, self.menu]),
            self.canvas,
            w.HBox([w.Label("forces"), self.force_buttons, self.ghost_box, self.scale_box]),
            self.about, self.note, self.errors], **kwargs)
        self.max_frames = int(max_frames)
        t.link((self.menu, "value"), (self, "curve_of"))
        t.link((self.scale_box, "value"), (self, "scale"))
        t.link((self.force_buttons, "value"), (self, "forces"))
        if path is not None:
            self.show(path, node=node, dof=dof)

    # -- the point shown ------------------------------------------------------------
    @property
    def index(self) -> int:
        """Frame shown (equal to the path point unless the path was subsampled).

        The slider is the one source: in the browser it moves the canvas (jslink),
        so a move made there needs no echo from Python to fight a playing animation.
        """
        return int(self.slider.value)

    @index.setter
    def index(self, i: int) -> None:
        n = max(1, len(self._points))
        i = range(n)[int(i)]
        with self.hold_sync():
            self.slider.value = i
            self.canvas.index = i

    @property
    def point(self) -> int:
        """Path point shown."""
        return int(self._points[self.index]) if len(self._points) else 0

    @property
    def readout(self) -> dict:
        """What the readout shows at the current point: label -> value."""
        if self.path is None or not len(self.path):
            return {}
        return data.readout(self.path, self.point, self._node, **self._options())

    @property
    def _node(self) -> int:
        """The node of the readout: the curve's, or the last node chosen before the
        frequency curve (or the path's default)."""
        node = self.curve_of[0]
        if node >= 0:
            return node
        return getattr(self, "_last_node", None) or default_curve(self.path)[0]

    def _options(self) -> dict:
        freq = self._frequency[1] if self._frequency is not None and \
            self._frequency[0] is self.path else None
        return {"time": self.time, "frequency": freq}

    @property
    def frequency(self) -> tuple | None:
        """``(points, f)``: the lowest natural frequency (Hz) at the path points
        where it was computed, or None (``frequencies=False``)."""
        return self._options()["frequency"]

    # -- data -----------------------------------------------------------------------
    def show(self, path: EquilibriumPath | Motion, node: int | None = None, dof: str | None = None,
             index: int | str | None = None) -> None:
        """Explore ``path`` (a new one, or the same one grown; or a motion);
        ``index="last"`` jumps to its end."""
        time = bool(self._time_option)
        if isinstance(path, Motion):
            path, time = path.as_path(), True
        if not isinstance(path, EquilibriumPath):
            raise TypeError(f"`path` must be an EquilibriumPath or a Motion, got {type(path).__name__}.")
        if time and self._want_frequencies:
            raise ValueError("`frequencies=True` needs an equilibrium path; a motion's states are "
                             "not equilibria (explore the static path for its frequencies).")
        s = path.structure
        options = data.curve_options(s)
        if self._want_frequencies:
            if self._frequency is None or self._frequency[0] is not path:
                self._frequency = (path, data.lowest_frequencies(path))
            options.insert(0, ("frequency f1 [Hz]", data.FREQUENCY))
        same = self.path is not None and self.path.structure is s
        if node is None or dof is None:
            if same:
                node, dof = self.curve_of
            elif self._want_frequencies:
                node, dof = data.FREQUENCY
            else:
                node, dof = default_curve(path)
        if (node, dof) != data.FREQUENCY:
            node = s.node_id(node, "explore")              # a name stands for its node
            if dof not in DOFS:
                raise ValueError(f"`dof` must be one of {', '.join(DOFS)}, got {dof!r}.")
            if (node, dof) not in [v for _, v in options]:
                options.append((data.dof_label(path.structure, node, dof), (int(node), dof)))
        elif not self._want_frequencies:
            raise ValueError("The frequency curve needs `frequencies=True`.")
        old = self.index
        self.time = time
        self.path = path
        self._points = data.frame_points(len(path), self.max_frames)
        self._layout = data.layout(s, len(self._points))
        with self.hold_sync(), self.canvas.hold_sync():
            self.menu.options = options
            self.menu.value = (int(node), dof)
            self.curve_of = (int(node), dof)
            self._send_shape()
            self._send_curve()
            self._send_forces()
            n = len(self._points)
            self.play.max = self.slider.max = max(0, n - 1)
            i = n - 1 if index == "last" else (old if index is None else int(index))
            self.index = min(max(i, 0), max(0, n - 1))
            self.slider.description = "step" if time else "point"
            if time:
                t_pts = path.load_factor[self._points]
                duration = float(t_pts[-1] - t_pts[0]) if n else 0.0
                seconds = self._play_seconds or data.motion_play_seconds(duration)
                self.canvas.frame_times = data.play_times(t_pts, seconds).tobytes()
            else:
                seconds = self._play_seconds or data.play_seconds(n)
                self.canvas.frame_times = b""
            self.canvas.play_seconds = seconds
            self.about.value = self._about(path, seconds)

    def _about(self, path: EquilibriumPath, seconds: float) -> str:
        """The line above the notes: what the curve's axes and the play mean."""
        parts = []
        if self.time:
            t = path.load_factor
            duration = float(t[-1] - t[0]) if len(t) else 0.0
            if abs(seconds - duration) <= 1e-9 * max(1.0, duration):
                pace = "in real time"
            elif duration > 0:
                ratio = seconds / duration
                pace = (f"in {data.format_value(seconds)} s (slowed {data.format_value(ratio)}×)"
                        if ratio > 1 else
                        f"in {data.format_value(seconds)} s (sped up {data.format_value(1 / ratio)}×)")
            else:
                pace = f"in {data.format_value(seconds)} s"
            parts.append(f"Motion of {data.format_value(duration)} s; plays {pace}. Time in "
                         "seconds: the unit systems label force and length, and all are "
                         "consistent with seconds.")
        freq = self.frequency
        if freq is not None:
            pts, f = freq
            how = ("at every point" if len(pts) == len(path) else
                   f"at {len(pts)} of {len(path)} points, evenly spread, straight lines between")
            parts.append(f"Lowest natural frequency f1 computed {how} (negative past a loss "
                         "of stability, zero at a critical point).")
        return "<small>" + " ".join(parts) + "</small>" if parts else ""

    @property
    def stale(self) -> bool:
        """True when the drawing is greyed out as an old result."""
        return self.canvas.stale

    @stale.setter
    def stale(self, value: bool) -> None:
        self.canvas.stale = bool(value)

    def extend(self, path: EquilibriumPath, index: int | str | None = "last") -> None:
        """Show a grown version of the path shown (a live trace): points already drawn
        are not drawn again, only the new ones. Any other path goes to :meth:`show`."""
        same = (self.path is not None and path.structure is self.path.structure
                and len(path) >= len(self.path))
        self._growing = same
        try:
            self.show(path, index=index)
        finally:
            self._growing = False

    def _send_shape(self) -> None:
        path, lay, pts = self.path, self._layout, self._points
        if not self._growing:
            self._frame_cache.clear()
        missing = [int(i) for i in pts if int(i) not in self._frame_cache]
        if missing:
            for i, f in zip(missing, data.frames(path, np.array(missing), lay, self.scale)):
                self._frame_cache[i] = f
        fr = np.stack([self._frame_cache[int(i)] for i in pts]) if len(pts) else \
            np.zeros((0, lay.n_vertices, 2), np.float32)
        ghost = lay.vertices(member_lines(path.structure, np.zeros(3 * path.structure.n_nodes), lay.n_sub))
        c = self.canvas
        c.n_frames, c.n_vertices = fr.shape[0], fr.shape[1]
        c.frames = fr.tobytes()
        c.ghost = ghost.astype(np.float32).tobytes()
        c.starts = lay.starts.tobytes()
        c.kinds = lay.kinds.tobytes()
        c.element_ends = lay.element_ends.tobytes()
        c.points = pts.astype(np.int32).tobytes()
        c.bounds = data.bounds(fr, ghost)
        c.symbols = data.symbols(path.structure, lay)
        c.motion = self.time
        hover = data.hover_nodes(path.structure, lay)
        c.node_u = data.node_displacements(path, pts, hover).tobytes()
        c.hover_nodes = hover

    def _send_curve(self) -> None:
        node, dof = self.curve_of
        if node >= 0:
            self._last_node = node
        opts = self._options()
        cv = data.curve(self.path, node, dof, self._points, **opts)
        c = self.canvas
        c.curve_x, c.curve_y = cv["x"].tobytes(), cv["y"].tobytes()
        c.stable = cv["stable"].tobytes()
        c.critical = cv["critical"]
        c.x_label, c.y_label = cv["x_label"], cv["y_label"]
        c.readouts = data.readout_lines(self.path, self._node, self._points, **opts)

    def _send_forces(self) -> None:
        c = self.canvas
        name = self.forces
        if not name:
            c.force_kind, c.forces = "", b""
            self.note.value = ""
            return
        if not self._growing:
            self._force_cache.clear()
        missing = [int(i) for i in self._points if (name, int(i)) not in self._force_cache]
        if missing:
            table = data.member_force_table(self.path, np.array(missing), name)
            for k, i in enumerate(missing):
                self._force_cache[(name, i)] = None if table is None else table[k]
        rows = [self._force_cache[(name, int(i))] for i in self._points]
        values = None if not rows or rows[0] is None else np.stack(rows)
        if values is None:
            c.force_kind, c.forces = "", b""
            self.note.value = (f"<i>This path carries no member forces ({data.FORCE_NAMES[name]}); "
                               "no diagram drawn.</i>")
            return
        c.forces = values.astype(np.float32).tobytes()
        c.force_max = float(np.abs(values).max()) or 1.0
        c.force_legend = [data.FORCE_NAMES[name], *data.FORCE_SIGNS[name]]
        c.force_kind = name
        sign = " (tension positive)" if name == "N" else ""
        self.note.value = (f"{data.FORCE_NAMES[name]} diagram, extremes written on it; along the "
                           f"path {name} goes from {data.format_value(values.min())} to "
                           f"{data.format_value(values.max())}{sign}")

    # -- reactions --------------------------------------------------------------------
    def _playing_changed(self, change) -> None:
        self.play.description, self.play.icon = ("pause", "pause") if change["new"] else ("play", "play")

    @t.observe("curve_of")
    @shown_in_widget
    def _curve_changed(self, change) -> None:
        if self.path is not None and self._layout is not None:
            with self.canvas.hold_sync():
                self._send_curve()

    @t.observe("scale")
    @shown_in_widget
    def _scale_changed(self, change) -> None:
        if not change["new"] > 0:
            raise ValueError(f"`scale` must be positive, got {change['new']!r}.")
        if self.path is not None and self._layout is not None:
            self._frame_cache.clear()
            with self.canvas.hold_sync():
                self._send_shape()

    @t.observe("forces")
    @shown_in_widget
    def _forces_changed(self, change) -> None:
        if self.path is not None and self._layout is not None:
            with self.canvas.hold_sync():
                self._send_forces()


def explore(path: EquilibriumPath | Motion, node: int | None = None, dof: str | None = None,
            **options) -> Explorer:
    """Explore a traced path (or a motion): shape and load–displacement (or time)
    curve, slider, play, readout.

    ``node``/``dof`` choose the curve's abscissa; ``options`` go to :class:`Explorer`
    (``scale``, ``forces``, ``max_frames``, ``width``, ``height``, ``play_seconds``,
    ``time``, ``frequencies``).
    """
    return Explorer(path, node, dof, **options)
