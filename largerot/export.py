"""Export a path for reports: animations (GIF, self-contained HTML) and static figures.

Every export draws on its own new figure, never on a live one; an animation updates
the artists of that figure in place frame by frame.
"""
from __future__ import annotations

import base64
import html
import io
import json
import logging
import pathlib

import numpy as np
from matplotlib.collections import LineCollection
from matplotlib.patches import FancyArrowPatch

from . import plotting
from .errors import ModelError, checked_integer, checked_number
from .results import EquilibriumPath, member_lines

__all__ = ["export_animation", "save_figure", "animation_points", "render_frames", "default_title",
           "frame_title", "animation_figure"]

log = logging.getLogger(__name__)

#: Most frames an animation may have (a GIF of more gets large and slow to open).
MAX_ANIMATION_FRAMES = 500


def animation_points(n_points: int, frames: int) -> np.ndarray:
    """Path points of an animation: ``frames`` of them spread evenly, both ends kept.

    >>> animation_points(11, 3).tolist()
    [0, 5, 10]
    """
    if not 1 <= checked_integer("", "frames", frames) <= MAX_ANIMATION_FRAMES:
        raise ModelError(f"`frames` must be an integer from 1 to {MAX_ANIMATION_FRAMES}, got {frames!r}.")
    if n_points < 1:
        raise ModelError("The path has no points to animate.")
    return np.unique(np.round(np.linspace(0, n_points - 1, min(int(frames), n_points))).astype(int))


def _checked(path, node, dof, scale=None) -> None:
    """The arguments every export shares: a path, a known node and DOF, a finite scale."""
    if not isinstance(path, EquilibriumPath):
        raise TypeError(f"`path` must be an EquilibriumPath, got {type(path).__name__}.")
    if node is not None or dof is not None:
        path._column(0 if node is None else node, "ux" if dof is None else dof)
    if scale is not None:
        checked_number("", "scale", scale, nonnegative=True)


def frame_title(path: EquilibriumPath, i: int) -> str:
    """The title of the frame of point ``i``."""
    return f"point {i}: λ = {path.load_factor[i]:.4g}"


def render_frames(path: EquilibriumPath, points, node=None, dof=None, figsize=(8, 3.6),
                  dpi: int = 80, scale: float | None = None):
    """Yield one RGB image (Pillow) per path point, drawn on one figure updated in place.

    The layout is fixed once for all frames (the longest title, every frame's shape,
    load arrows and slack cables taken into account), so nothing moves or is cut off
    from frame to frame. ``scale``: displacement magnification, automatic by default
    (:func:`largerot.plotting.displacement_scale`), stated in the shape's legend.
    """
    from PIL import Image

    fig, show = animation_figure(path, points, node, dof, figsize, dpi, scale)
    for k in range(len(points)):
        show(k)
        fig.canvas.draw()
        yield Image.fromarray(np.asarray(fig.canvas.buffer_rgba())[..., :3].copy())


def animation_figure(path: EquilibriumPath, points, node=None, dof=None, figsize=(8, 3.6),
                     dpi: int = 80, scale: float | None = None):
    """The figure an animation is drawn on, laid out, and ``show(k)`` that sets frame ``k``.

    Returns ``(fig, show)``; ``show(k)`` moves the shape, arrows, title and marker to
    ``points[k]`` without drawing.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    if node is None or dof is None:
        node, dof = plotting.default_curve(path)
    points = [int(i) for i in points]
    s = path.structure
    scale = plotting._resolved_scale(path, scale)
    fig = Figure(figsize=figsize, dpi=dpi)
    FigureCanvasAgg(fig)
    a1, a2 = fig.subplots(1, 2)
    shapes = [plotting._split_lines(member_lines(s, scale * path.u[i]), plotting._slack_mask(path, i))
              for i in points]
    any_slack = any(len(loose) for _, loose in shapes)
    plotting.plot_shape(s, ax=a1, loads=False, lw=0.0, legend=False)      # ghost, supports, obstacles
    deformed = LineCollection([], colors=plotting.DEFORMED, lw=2.0, zorder=4)
    slack = LineCollection([], zorder=3, **plotting.SLACK_STYLE)
    a1.add_collection(deformed)
    a1.add_collection(slack)
    size = plotting.structure_size(s)
    F = s.load_vector()
    arrows = []
    for n in np.flatnonzero(np.abs(F[0::3]) + np.abs(F[1::3])):
        arr = FancyArrowPatch((0, 0), (0, 0), arrowstyle="-|>", mutation_scale=14,
                              color=plotting.LOAD, lw=1.8, zorder=6)
        a1.add_patch(arr)
        arrows.append((int(n), np.array([F[3 * n], F[3 * n + 1]]), arr))

    def arrow_ends(i):
        pos = s.xy + scale * path.u[i].reshape(-1, 3)[:, :2]
        d = plotting.ARROW_LENGTH * size * np.sign(path.load_factor[i])
        return [(pos[n] - d * f / np.linalg.norm(f), pos[n]) for n, f, _ in arrows]

    ends = [arrow_ends(i) for i in points]
    allxy = np.vstack([s.xy] + [np.concatenate([np.asarray(q).reshape(-1, 2) for q in taut + loose])
                                for taut, loose in shapes if taut or loose]
                      + [np.reshape(e, (-1, 2)) for e in ends])
    lo, hi = allxy.min(axis=0), allxy.max(axis=0)
    pad = 0.08 * (float(max(hi - lo)) or 1.0)
    a1.set_xlim(lo[0] - pad, hi[0] + pad)
    a1.set_ylim(lo[1] - pad, hi[1] + pad)
    handles = [Line2D([], [], color=plotting.GHOST, lw=1.0, ls="--", label="undeformed"),
               Line2D([], [], color=plotting.DEFORMED, lw=2.0, label="deformed")]
    if any_slack:
        handles.append(Line2D([], [], color=plotting.SLACK, lw=1.2, ls=(0, (3, 2.5)), label="slack cable"))
    titles = [frame_title(path, i) for i in points]
    title = a1.set_title(max(titles, key=len), fontsize=10)
    plotting.plot_path(path, node, dof, ax=a2)
    x_all = path.displacement(node, dof)
    (marker,) = a2.plot([], [], "o", color=plotting.LOAD, ms=7, zorder=7)
    # every frame's lines and arrows at once, so that the legend avoids them all
    deformed.set_segments([q for taut, _ in shapes for q in taut])
    slack.set_segments([q for _, loose in shapes for q in loose])
    for (n, f, arr), (tail, head) in zip(arrows, ends[int(np.argmax([abs(path.load_factor[i]) for i in points]))]):
        arr.set_positions(tuple(tail), tuple(head))
    if scale != 1.0 or any_slack:
        plotting.place_legend(a1, handles=handles, title=plotting.scale_note(scale) or None)
    plotting.finish_layout(fig)

    def show(k: int) -> None:
        i = points[k]
        deformed.set_segments(shapes[k][0])
        slack.set_segments(shapes[k][1])
        for (n, f, arr), (tail, head) in zip(arrows, ends[k]):
            arr.set_positions(tuple(tail), tuple(head))
            arr.set_visible(bool(np.any(tail != head)))
        title.set_text(titles[k])
        marker.set_data([x_all[i]], [path.load_factor[i]])

    return fig, show


def default_title(path: EquilibriumPath) -> str:
    """A heading for an exported path: the model's name when it has one, else what it is.

    >>> import largerot as lr
    >>> s = lr.Structure(); a, b = s.node(0.0, 0.0), s.node(0.0, 1.0)
    >>> default_title(EquilibriumPath(s, np.array([3]), [0.0], [[0.0]], [0], [[]], [0], "target", ""))
    'Equilibrium path of a structure of 2 nodes, 0 members (1 point, status target)'
    """
    m = path.structure
    name = str(getattr(m, "label", "") or getattr(m, "name", "") or "").strip()
    n = len(path)
    about = f"{n} point{'s' if n != 1 else ''}, status {path.status}"
    if name:
        return f"{name}: equilibrium path ({about})"
    return (f"Equilibrium path of a structure of {m.n_nodes} nodes, {len(m.members)} members "
            f"({about})")


def export_animation(path: EquilibriumPath, filename, frames: int = 60, fps: float = 12.0,
                     node: int | None = None, dof: str | None = None, figsize=(8, 3.6),
                     dpi: int = 80, scale: float | None = None, title: str | None = None) -> np.ndarray:
    """Write an animation of the path: a GIF (``.gif``) or a self-contained HTML page (``.html``).

    The path is subsampled evenly to ``frames`` frames (all points if it has fewer).
    Each frame shows the deformed shape beside the path with the point marked, and
    its point and load factor as a title inside the frame.

    Parameters
    ----------
    scale : float, optional
        Displacement magnification; automatic by default (true scale unless the
        motion would not show), stated in the frames ("displacements × 20").
    title : str, optional
        The HTML page's heading and title; default :func:`default_title` (the
        model's name when it has one). Under the frame the page reads the point, λ
        and the plotted DOF's value.

    Returns the path points used, shape (n_frames,).
    """
    _checked(path, node, dof, scale)
    fn = pathlib.Path(filename)
    kind = fn.suffix.lower()
    if kind not in (".gif", ".html", ".htm"):
        raise ModelError(f"`filename` must end in .gif or .html, got {str(filename)!r}.")
    checked_number("", "fps", fps, positive=True)
    if title is not None and not isinstance(title, str):
        raise TypeError(f"`title` must be a string, got {type(title).__name__}.")
    if node is None or dof is None:
        node, dof = plotting.default_curve(path)
    points = animation_points(len(path), frames)
    images = list(render_frames(path, points, node, dof, figsize, dpi, scale))
    if kind == ".gif":
        images[0].save(fn, save_all=True, append_images=images[1:], duration=int(round(1000 / fps)),
                       loop=0, optimize=False)
    else:
        pngs = []
        for im in images:
            buf = io.BytesIO()
            im.save(buf, format="PNG", optimize=True)
            pngs.append(base64.b64encode(buf.getvalue()).decode("ascii"))
        heading = default_title(path) if title is None else title
        fn.write_text(_html_player(pngs, points, path, fps, heading, node, dof), encoding="utf-8")
    log.info("wrote %d frames to %s", len(images), fn)
    return points


def _html_player(pngs: list, points: np.ndarray, path: EquilibriumPath, fps: float, heading: str,
                 node: int, dof: str) -> str:
    frames = ",\n".join(f'"data:image/png;base64,{p}"' for p in pngs)
    lam = ", ".join(f'"{path.load_factor[i]:.4g}"' for i in points)
    x = path.displacement(node, dof)
    values = ", ".join(f'"{x[i]:.4g}"' for i in points)
    quantity = json.dumps(plotting.label_of(path.structure, dof, node))
    title = html.escape(heading)
    return f"""<!DOCTYPE html>
<html><head><meta charset="utf-8"><title>{title}</title>
<meta name="largerot-frames" content="{len(pngs)}">
<style>body{{font-family:sans-serif;margin:1em}} h1{{font-size:1.2em}}
#bar{{display:flex;gap:.6em;align-items:center}}</style>
</head><body>
<h1>{title}</h1>
<img id="frame" alt="animation frame">
<div id="bar"><button id="play">play</button>
<input id="slider" type="range" min="0" max="{len(pngs) - 1}" value="0" style="width:360px">
<span id="label"></span></div>
<script>
const FRAMES = [
{frames}
];
const POINTS = [{", ".join(str(int(i)) for i in points)}];
const LAM = [{lam}];
const VALUE = [{values}];
const QUANTITY = {quantity};
const img = document.getElementById("frame"), slider = document.getElementById("slider");
const label = document.getElementById("label"), button = document.getElementById("play");
let timer = null;
function show(k) {{ slider.value = k; img.src = FRAMES[k];
  label.textContent = "point " + POINTS[k] + ": \\u03bb = " + LAM[k] + ", " + QUANTITY + " = " + VALUE[k]; }}
slider.oninput = () => show(+slider.value);
button.onclick = () => {{
  if (timer) {{ clearInterval(timer); timer = null; button.textContent = "play"; return; }}
  button.textContent = "pause";
  timer = setInterval(() => show((+slider.value + 1) % FRAMES.length), {1000 / fps:.1f});
}};
show(0);
</script></body></html>
"""


def save_figure(path: EquilibriumPath, filename, i: int = -1, node: int | None = None,
                dof: str | None = None, **options) -> pathlib.Path:
    """Save a static figure of the shape at point ``i`` beside the path (PNG, SVG, PDF).

    ``options`` go to :func:`largerot.plotting.shape_path_figure` (``figsize``, ``dpi``).
    """
    _checked(path, node, dof)
    i = path._index(i)
    fig = plotting.shape_path_figure(path, i, node, dof, **options)
    fig.savefig(filename)
    return pathlib.Path(filename)
