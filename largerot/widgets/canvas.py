"""The drawing surface of the explorer: a small anywidget that owns one canvas.

Everything drawn is sent once as binary buffers; afterwards only ``index`` changes,
so scrubbing and playback redraw in the browser with no kernel round trip. Playback
runs in the browser (``playing``), paced by its animation frames: it shows the frame
due at each display refresh, skipping frames so a whole path takes ``play_seconds``,
and hands the index back to the kernel a few times a second.
"""
from __future__ import annotations

import pathlib

import anywidget
import traitlets as t

__all__ = ["ShapeCanvas"]

_ESM = pathlib.Path(__file__).with_name("canvas.js")


class ShapeCanvas(anywidget.AnyWidget):
    """Deformed shape beside the equilibrium path, with a readout, on one canvas."""

    _esm = _ESM

    index = t.Int(0, help="Frame shown (a row of `frames`).").tag(sync=True)
    n_frames = t.Int(0, help="Frames in `frames`.").tag(sync=True)
    n_vertices = t.Int(0, help="Stroke vertices per frame.").tag(sync=True)
    frames = t.Bytes(b"", help="float32, shape (n_frames, n_vertices, 2): deformed strokes.").tag(sync=True)
    ghost = t.Bytes(b"", help="float32, shape (n_vertices, 2): the undeformed strokes.").tag(sync=True)
    starts = t.Bytes(b"", help="int32, shape (n_strokes + 1,): first vertex of each stroke.").tag(sync=True)
    kinds = t.Bytes(b"", help="uint8, shape (n_strokes,): 0 beam, 1 bar.").tag(sync=True)
    element_ends = t.Bytes(b"", help="int32, shape (n_elements, 2): vertices of element ends.").tag(sync=True)
    bounds = t.List([-1.0, 1.0, -1.0, 1.0], help="[xmin, xmax, ymin, ymax] of all frames.").tag(sync=True)
    points = t.Bytes(b"", help="int32, shape (n_frames,): path point of each frame.").tag(sync=True)
    curve_x = t.Bytes(b"", help="float32, shape (n_frames,): the chosen displacement.").tag(sync=True)
    curve_y = t.Bytes(b"", help="float32, shape (n_frames,): the load factor.").tag(sync=True)
    stable = t.Bytes(b"", help="uint8, shape (n_frames,): 1 where the path is stable.").tag(sync=True)
    critical = t.List([], help="Critical points: dicts {x, y, kind, index}.").tag(sync=True)
    x_label = t.Unicode("", help="Abscissa of the path plot.").tag(sync=True)
    y_label = t.Unicode("load factor λ", help="Ordinate of the path plot.").tag(sync=True)
    readouts = t.List([], help="The readout text of each frame.").tag(sync=True)
    hover_nodes = t.List([], help="Nodes the pointer can hover: dicts {v, node, label, dofs}.").tag(sync=True)
    node_u = t.Bytes(b"", help="float32, shape (n_frames, n_hover, 3): hover nodes' displacements.").tag(sync=True)
    symbols = t.Dict({}, help="Supports and loads, see largerot.widgets.data.symbols.").tag(sync=True)
    forces = t.Bytes(b"", help="float32, shape (n_frames, n_elements, 2): force diagram values.").tag(sync=True)
    force_kind = t.Unicode("", help="'' (no diagram), 'N', 'V' or 'M'.").tag(sync=True)
    force_max = t.Float(1.0, help="Largest |value| of the diagram along the path (its scale).").tag(sync=True)
    force_legend = t.List(["", "", ""], help="[diagram name, positive, negative] for the legend.").tag(sync=True)
    playing = t.Bool(False, help="True while the browser plays the path (it stops at the end).").tag(sync=True)
    play_seconds = t.Float(8.0, help="Seconds a whole play takes (frames are skipped to keep it).").tag(sync=True)
    frame_times = t.Bytes(b"", help="float32, shape (n_frames,): when each frame is due in a play, "
                          "seconds from its start (a motion: its own time); empty: evenly.").tag(sync=True)
    motion = t.Bool(False, help="The frames are a motion's steps (time axis, no stability).").tag(sync=True)
    stale = t.Bool(False, help="Grey the drawing out: it shows an old result.").tag(sync=True)
    show_ghost = t.Bool(True, help="Draw the undeformed shape dashed.").tag(sync=True)
    width = t.Int(900, help="Canvas width in CSS pixels.").tag(sync=True)
    height = t.Int(400, help="Canvas height in CSS pixels.").tag(sync=True)
