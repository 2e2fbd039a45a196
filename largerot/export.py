"""Export a path for reports: animations (GIF, self-contained HTML) and static figures.

Every export draws on its own new figure, never on a live one; an animation updates
the artists of that figure in place frame by frame.
"""
from __future__ import annotations

import base64
import html
import io
import logging
import pathlib

import numpy as np
from matplotlib.collections import LineCollection
from matplotlib.patches import FancyArrowPatch

from . import plotting
from .errors import ModelError, checked_integer, checked_number
from .results import EquilibriumPath, member_lines

__all__ = ["export_animation", "save_figure", "animation_points", "render_frames"]

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


def _checked(path, node, dof, scale=1.0) -> None:
    """The arguments every export shares: a path, a known node and DOF, a finite scale."""
    if not isinstance(path, EquilibriumPath):
        raise TypeError(f"`path` must be an EquilibriumPath, got {type(path).__name__}.")
    if node is not None or dof is not None:
        path._column(0 if node is None else node, "ux" if dof is None else dof)
    checked_number("", "scale", scale)


def render_frames(path: EquilibriumPath, points, node=None, dof=None, figsize=(8, 3.6),
                  dpi: int = 80, scale: float = 1.0):
    """Yield one RGB image (Pillow) per path point, drawn on one figure updated in place."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from PIL import Image

    if node is None or dof is None:
        node, dof = plotting.default_curve(path)
    s = path.structure
    fig = Figure(figsize=figsize, dpi=dpi)
    canvas = FigureCanvasAgg(fig)
    a1, a2 = fig.subplots(1, 2)
    lines = [member_lines(s, scale * path.u[i]) for i in points]
    segs = [list(ln["beam"]) + list(ln["bar"]) for ln in lines]
    allxy = np.concatenate([np.concatenate([np.asarray(q).reshape(-1, 2) for q in sg]) for sg in segs]
                           + [s.xy])
    plotting.plot_shape(path, 0, ax=a1, loads=False, scale=0.0, lw=0.0)
    lo, hi = allxy.min(axis=0), allxy.max(axis=0)
    pad = 0.08 * float(max(hi - lo)) or 1.0
    a1.set_xlim(lo[0] - pad, hi[0] + pad)
    a1.set_ylim(lo[1] - pad, hi[1] + pad)
    deformed = LineCollection(segs[0], colors=plotting.DEFORMED, lw=2.0, zorder=4)
    a1.add_collection(deformed)
    F = s.load_vector()
    loaded = np.flatnonzero(np.abs(F[0::3]) + np.abs(F[1::3]))
    arrows = []
    for n in loaded:
        arr = FancyArrowPatch((0, 0), (0, 0), arrowstyle="-|>", mutation_scale=14,
                              color=plotting.LOAD, lw=1.8, zorder=6)
        a1.add_patch(arr)
        arrows.append((int(n), np.array([F[3 * n], F[3 * n + 1]]), arr))
    title = a1.set_title("", fontsize=10)
    plotting.plot_path(path, node, dof, ax=a2)
    x_all = path.displacement(node, dof)
    (marker,) = a2.plot([], [], "o", color=plotting.LOAD, ms=7, zorder=7)
    fig.tight_layout()
    size = float(max(hi - lo)) or 1.0
    for k, i in enumerate(points):
        deformed.set_segments(segs[k])
        pos = s.xy + scale * path.u[i].reshape(-1, 3)[:, :2]
        for n, f, arr in arrows:
            d = 0.12 * size * np.sign(path.load_factor[i]) * f / np.linalg.norm(f)
            arr.set_positions(tuple(pos[n] - d), tuple(pos[n]))
            arr.set_visible(bool(np.any(d)))
        title.set_text(f"point {i}: λ = {path.load_factor[i]:.4g}")
        marker.set_data([x_all[i]], [path.load_factor[i]])
        canvas.draw()
        yield Image.fromarray(np.asarray(canvas.buffer_rgba())[..., :3].copy())


def export_animation(path: EquilibriumPath, filename, frames: int = 60, fps: float = 12.0,
                     node: int | None = None, dof: str | None = None, figsize=(8, 3.6),
                     dpi: int = 80, scale: float = 1.0) -> np.ndarray:
    """Write an animation of the path: a GIF (``.gif``) or a self-contained HTML page (``.html``).

    The path is subsampled evenly to ``frames`` frames (all points if it has fewer).
    Each frame shows the deformed shape beside the path with the point marked.
    Returns the path points used, shape (n_frames,).
    """
    _checked(path, node, dof, scale)
    fn = pathlib.Path(filename)
    kind = fn.suffix.lower()
    if kind not in (".gif", ".html", ".htm"):
        raise ModelError(f"`filename` must end in .gif or .html, got {str(filename)!r}.")
    checked_number("", "fps", fps, positive=True)
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
        fn.write_text(_html_player(pngs, points, path, fps), encoding="utf-8")
    log.info("wrote %d frames to %s", len(images), fn)
    return points


def _html_player(pngs: list, points: np.ndarray, path: EquilibriumPath, fps: float) -> str:
    frames = ",\n".join(f'"data:image/png;base64,{p}"' for p in pngs)
    lam = ", ".join(f"{path.load_factor[i]:.6g}" for i in points)
    title = html.escape(repr(path))
    return f"""<!DOCTYPE html>
<html><head><meta charset="utf-8"><title>largerot animation</title>
<meta name="largerot-frames" content="{len(pngs)}">
<style>body{{font-family:sans-serif;margin:1em}} #bar{{display:flex;gap:.6em;align-items:center}}</style>
</head><body>
<div>{title}</div>
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
const img = document.getElementById("frame"), slider = document.getElementById("slider");
const label = document.getElementById("label"), button = document.getElementById("play");
let timer = null;
function show(k) {{ slider.value = k; img.src = FRAMES[k];
  label.textContent = "point " + POINTS[k] + ", \\u03bb = " + LAM[k]; }}
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
