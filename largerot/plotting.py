"""Static matplotlib figures of shapes and equilibrium paths (no mechanics here).

Every figure keeps its text readable: legends go where they cover no curve (outside
the axes when no corner is free), critical-point labels beside their marker and off
the curve, and shapes whose true-scale motion would not show are magnified by a
round factor that the figure states ("displacements × 20"; ``scale=`` sets it).
"""
from __future__ import annotations

import math

import numpy as np
from matplotlib.collections import LineCollection
from matplotlib.text import Text

from .errors import ModelError, checked_number
from .model_figure import plot_model
from .results import EquilibriumPath, member_lines
from .model import DOFS, Structure

__all__ = ["plot_model", "plot_shape", "plot_path", "plot_overview", "path_segments", "critical_xy",
           "shape_path_figure", "displacement_scale", "structure_size", "label_of",
           "scale_note", "place_legend", "tidy", "finish_layout", "occupied_points",
           "plot_frequencies"]

DEFORMED = "#1f5fa8"
GHOST = "#b8b8b8"
SUPPORT = "#333333"
LOAD = "#c0392b"
UNSTABLE = "#e67e22"
CRITICAL = "#8e44ad"
SLACK = "#8a9bb0"
#: Line style of a slack cable segment: dashed and thin, so that it reads as "not carrying".
SLACK_STYLE = dict(colors=SLACK, lw=1.2, linestyles=(0, (3, 2.5)))

#: Shapes are magnified when the largest displacement along the path is below this
#: fraction of the structure's size: 3 % of a 30 m mast is 0.9 m, about 3 % of the
#: panel's height, which is where a shape starts to read as moved at all.
MAGNIFY_BELOW = 0.03
#: A magnified shape's largest displacement is drawn at about this fraction of the
#: structure's size (rounded down to a factor 1, 2 or 5 × 10^k): clearly visible, yet
#: small enough that the magnified shape still looks like the structure.
MAGNIFIED_TO = 0.15
#: Load arrows are this fraction of the structure's size long.
ARROW_LENGTH = 0.12
#: Pixels of clearance kept between a legend or label and the curves it avoids.
CLEARANCE_PX = 3.0
#: Curves are sampled every this many pixels when a legend or label is checked against them.
SAMPLE_PX = 2.0
#: Corners and edges tried for a legend inside the axes, in order of preference.
LEGEND_SPOTS = ("upper left", "upper right", "lower right", "lower left", "center left",
                "center right", "upper center", "lower center")
#: Margin above and below a path with critical points (fraction of its λ range): room
#: for the labels of a peak, which would otherwise have to go far from their marker.
HEADROOM = 0.12
#: Offsets (points) tried for a critical point's label: beside the marker first, then further.
LABEL_OFFSETS = ((7, 4), (7, -4), (-7, 4), (-7, -4), (0, 9), (0, -9),
                 (16, 12), (16, -12), (-16, 12), (-16, -12), (0, 22), (0, -22),
                 (30, 26), (30, -26), (-30, 26), (-30, -26))


def label_of(structure, quantity: str, node: int | str | None = None) -> str:
    """The text of an axis or readout label: every figure's wording passes through here.

    ``quantity`` is ``"x"``/``"y"`` (a coordinate), ``"lam"`` (the load factor) or a
    DOF name (``"ux"``, ``"uy"``, ``"rz"``) of ``node``. Units and node names come from
    the structure (a Structure or a path's Model); without one, none are written.

    >>> import largerot as lr
    >>> s = lr.Structure(units="kN-m"); tip = s.node(0.0, 8.0, name="tip")
    >>> label_of(s, "uy", "tip"), label_of(s, "x"), label_of(None, "uy", 16), label_of(s, "lam")
    ('uy of tip [m]', 'x [m]', 'uy of node 16', 'load factor λ')
    """
    if quantity == "lam":
        return "load factor λ"
    units = getattr(structure, "units", None)
    if quantity in ("x", "y"):
        return units.label(quantity, "length") if units is not None else quantity
    if hasattr(structure, "dof_label"):
        return structure.dof_label(node, quantity)
    return f"{quantity} of node {node}"


def structure_size(structure) -> float:
    """The structure's size: the larger side of its nodes' bounding box (1 for a point)."""
    xy = np.asarray(structure.xy, dtype=float)
    return float(np.ptp(xy, axis=0).max()) if len(xy) and np.ptp(xy, axis=0).max() > 0 else 1.0


def _round_down(v: float) -> float:
    """The largest of 1, 2, 5 × 10^k not above ``v`` (``v`` ≥ 1)."""
    k = 10.0 ** math.floor(math.log10(v))
    return max(m * k for m in (1.0, 2.0, 5.0) if m * k <= v * (1 + 1e-12))


def displacement_scale(path: EquilibriumPath, points=None) -> float:
    """Magnification that makes the motion of ``points`` (all by default) visible.

    1 when the largest node translation reaches ``MAGNIFY_BELOW`` of the structure's
    size; otherwise a round factor (1, 2 or 5 × 10^k) that draws it at about
    ``MAGNIFIED_TO`` of the size.

    >>> import largerot as lr
    >>> s = lr.Structure(); a, b = s.node(0.0, 0.0), s.node(0.0, 30.0)
    >>> path = EquilibriumPath(s, np.array([3]), [0.0, 1.0], [[0.0], [0.11]], [0, 1],
    ...                        [[], []], [0, 0], "target", "")     # the top moves 0.11 m
    >>> displacement_scale(path)
    20.0
    """
    if not len(path):
        return 1.0
    u = path.u if points is None else path.u[np.asarray(points, dtype=int)]
    t = u.reshape(len(u), -1, 3)[:, :, :2]
    big = float(np.sqrt((t ** 2).sum(axis=2)).max()) if t.size else 0.0
    size = structure_size(path.structure)
    if not big > 0.0 or big >= MAGNIFY_BELOW * size:
        return 1.0
    return _round_down(MAGNIFIED_TO * size / big)


def scale_note(scale: float) -> str:
    """What a figure says about its magnification: ``"displacements × 20"`` or ``""``."""
    return "" if scale == 1.0 else f"displacements × {scale:g}"


def _resolved_scale(path, scale) -> float:
    """``scale`` checked, or the automatic magnification when it is None."""
    if scale is None:
        return displacement_scale(path) if isinstance(path, EquilibriumPath) else 1.0
    return checked_number("", "scale", scale, nonnegative=True)


def _axes(ax):
    if ax is None:
        import matplotlib.pyplot as plt
        _, ax = plt.subplots(figsize=(5, 5))
    return ax


def _draw_lines(ax, lines: dict, **style):
    segs = list(lines["beam"]) + list(lines["bar"])
    lc = LineCollection(segs, **style)
    ax.add_collection(lc)
    return lc


def _draw_supports(ax, structure: Structure, size: float):
    """Support symbols of every restrained node (:func:`draw_support`)."""
    fixed = set(structure.fixed_dofs().tolist())
    xy = structure.xy
    for n in sorted({int(g) // 3 for g in fixed}):
        draw_support(ax, *xy[n], tuple(3 * n + k in fixed for k in range(3)), 0.035 * size)


def draw_support(ax, x: float, y: float, held: tuple, h: float, color: str = SUPPORT) -> None:
    """One support symbol at (x, y), ``h`` its size: a hatched block (clamp), a triangle
    (pin), a triangle on wheels (roller, toward the restrained direction), a square for
    a held rotation alone; ``held`` says which of ux, uy, rz are restrained."""
    hx, hy, hr = held
    kw = dict(color=color, lw=1.3, zorder=5, solid_capstyle="butt")
    if hx and hy:
        if hr:
            ax.fill([x - h, x + h, x + h, x - h], [y, y, y - 0.4 * h, y - 0.4 * h],
                    color=color, zorder=5)
            base = y - 0.4 * h
        else:
            ax.fill([x, x - 0.8 * h, x + 0.8 * h], [y, y - 1.3 * h, y - 1.3 * h],
                    facecolor="white", edgecolor=color, lw=1.3, zorder=5)
            base = y - 1.3 * h
        ax.plot([x - 1.3 * h, x + 1.3 * h], [base, base], **kw)
        for t in np.linspace(-1.1, 1.3, 6):
            ax.plot([x + t * h, x + (t - 0.4) * h], [base, base - 0.5 * h], **kw)
    elif hx or hy:
        d = np.array([0.0, -1.0]) if hy else np.array([-1.0, 0.0])
        p = np.array([-d[1], d[0]])
        c = np.array([x, y])
        tri = np.array([c, c + 1.1 * h * d + 0.7 * h * p, c + 1.1 * h * d - 0.7 * h * p])
        ax.fill(tri[:, 0], tri[:, 1], facecolor="white", edgecolor=color, lw=1.3, zorder=5)
        for q in (-0.4, 0.4):
            w = c + 1.4 * h * d + q * h * p
            ax.plot([w[0]], [w[1]], "o", ms=3.5, mfc="white", mec=color, zorder=5)
        g = c + 1.75 * h * d
        ax.plot([g[0] - 1.1 * h * p[0], g[0] + 1.1 * h * p[0]],
                [g[1] - 1.1 * h * p[1], g[1] + 1.1 * h * p[1]], **kw)
    if hr and not (hx and hy):
        ax.plot([x], [y], "s", ms=6, mfc=color, mec=color, zorder=6)


def _slack_mask(path: EquilibriumPath, i: int) -> np.ndarray:
    """Which bar elements are slack cable segments at point ``i``, shape (n_bar_elements,)."""
    cable = np.asarray(path.structure.tension_only(), dtype=bool)
    mask = np.zeros(len(cable), dtype=bool)
    slack = path.slack
    if len(slack) and slack.shape[1] == int(cable.sum()):
        mask[cable] = slack[i]
    return mask


def _split_lines(lines: dict, slack: np.ndarray) -> tuple:
    """Member lines as ``(carrying, slack)`` lists of polylines."""
    bars = list(lines["bar"])
    taut = list(lines["beam"]) + [b for b, k in zip(bars, slack) if not k]
    return taut, [b for b, k in zip(bars, slack) if k]


def _grow_limits(ax, pts: np.ndarray, size: float) -> None:
    """Set the limits to cover ``pts`` and every shape drawn before on these axes."""
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    old = getattr(ax, "_largerot_box", None)
    if old is not None:
        lo, hi = np.minimum(lo, old[0]), np.maximum(hi, old[1])
    ax._largerot_box = (lo, hi)
    pad = 0.08 * size
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad, hi[1] + pad)


def _load_arrows(ax, s, xy: np.ndarray, size: float, sign: float = 1.0) -> list:
    """Arrows of the reference loads ending at the nodes ``xy``; returns their tails."""
    F = s.load_vector()
    tails = []
    for n in np.flatnonzero(np.abs(F[0::3]) + np.abs(F[1::3])):
        f = np.array([F[3 * n], F[3 * n + 1]])
        d = ARROW_LENGTH * size * sign * f / np.linalg.norm(f)
        ax.annotate("", xy=xy[n], xytext=xy[n] - d,
                    arrowprops=dict(arrowstyle="-|>", color=LOAD, lw=1.8))
        tails.append(xy[n] - d)
    return tails


def plot_shape(path_or_structure, i: int = -1, ax=None, ghost: bool = True,
               scale: float | None = None, supports: bool = True, loads: bool = True,
               legend: bool | None = None, label: str | None = None, **style):
    """Draw the deformed shape at point ``i`` of a path (or a structure, undeformed).

    Beams are drawn as their cubic deflected curves, bars as chords; the undeformed
    shape is ghosted, slack cable segments are dashed and light.

    Parameters
    ----------
    scale : float, optional
        Displacement magnification. Default: automatic (:func:`displacement_scale`
        over the whole path, so every point of a path gets the same factor): true
        scale unless the motion would not show. ``scale=1`` forces true scale.
        A magnified figure says so in its legend's title ("displacements × 20").
    legend : bool, optional
        Add a legend (undeformed, deformed, slack cable), placed off the shape by
        :func:`place_legend`. Default: when the shape is magnified or a cable is slack.
    label : str, optional
        The deformed shape's legend entry (default ``"deformed"``).
    style
        Line options of the deformed shape (``color``, ``lw``...).

    Returns the axes.
    """
    ax = _axes(ax)
    sign = 1.0
    if isinstance(path_or_structure, EquilibriumPath):
        path = path_or_structure
        s = path.structure
        i = path._index(i)
        scale = _resolved_scale(path, scale)
        u = scale * path.u[i]
        slack = _slack_mask(path, i)
        sign = -1.0 if path.load_factor[i] < 0 else 1.0
    else:
        s = path_or_structure
        scale = 1.0 if scale is None else _resolved_scale(None, scale)
        u = np.zeros(3 * s.n_nodes)
        slack = np.zeros(len(s.element_table("bar")[0]), dtype=bool)
    if ghost:
        _draw_lines(ax, member_lines(s, np.zeros(3 * s.n_nodes), 2), colors=GHOST, lw=1.0, ls="--",
                    label="undeformed")
    taut, loose = _split_lines(member_lines(s, u), slack)
    ax.add_collection(LineCollection(taut, colors=style.pop("color", DEFORMED),
                                     lw=style.pop("lw", 2.0), label=label or "deformed", **style))
    if loose:
        ax.add_collection(LineCollection(loose, label="slack cable", zorder=3, **SLACK_STYLE))
    xy = s.xy + u.reshape(-1, 3)[:, :2]
    pts = [s.xy, xy] if len(xy) else [np.zeros((1, 2))]
    size = float(np.ptp(np.vstack(pts), axis=0).max()) or 1.0
    if supports:
        _draw_supports(ax, s, size)
    if loads:
        pts += [np.reshape(_load_arrows(ax, s, xy, size, sign), (-1, 2))]
    _draw_obstacles(ax, s)
    _grow_limits(ax, np.vstack(pts), size)
    ax.set_aspect("equal")
    ax.set_xlabel(label_of(s, "x"))
    ax.set_ylabel(label_of(s, "y"))
    if legend or (legend is None and (scale != 1.0 or loose)):
        place_legend(ax, title=scale_note(scale) or None)
    return ax

def obstacle_outlines(s) -> list:
    """Rigid obstacles of a structure's contacts as plain drawing data.

    A line is the stretch of its face that its nodes can meet (their undeformed
    positions projected on it; a little more for a single node):
    ``{"kind": "line", "a": (x, y), "b": (x, y), "normal": (nx, ny)}``, the normal
    pointing to the free side; a circle is ``{"kind": "circle", "centre", "radius"}``.
    """
    pairs = s.contact_table()
    if not pairs:
        return []
    xy = s.xy
    size = float(np.ptp(xy, axis=0).max()) or 1.0
    out, seen = [], []
    for _, ob in pairs:
        if any(ob is o for o in seen):
            continue
        seen.append(ob)
        if hasattr(ob, "radius"):
            out.append({"kind": "circle", "centre": tuple(map(float, ob.centre)),
                        "radius": float(ob.radius)})
            continue
        nodes = [n for n, o in pairs if o is ob]
        p, n = np.array(ob.point), np.array(ob.normal)
        t_ = np.array([-n[1], n[0]])
        proj = (xy[nodes] - p) @ t_
        pad = 0.05 * size if np.ptp(proj) == 0 else 0.0
        a, b = p + (proj.min() - pad) * t_, p + (proj.max() + pad) * t_
        out.append({"kind": "line", "a": tuple(map(float, a)), "b": tuple(map(float, b)),
                    "normal": tuple(map(float, n))})
    return out


def _draw_obstacles(ax, s) -> None:
    """Draw the structure's obstacles: a hatched face, a hatched disc."""
    from matplotlib.patches import Circle as Disc

    for ob in obstacle_outlines(s):
        if ob["kind"] == "circle":
            ax.add_patch(Disc(ob["centre"], ob["radius"], facecolor="0.85", edgecolor=SUPPORT,
                              hatch="////", lw=1.2, zorder=1))
            continue
        a, b, n = (np.array(ob[k]) for k in ("a", "b", "normal"))
        ax.plot([a[0], b[0]], [a[1], b[1]], color=SUPPORT, lw=1.6, zorder=1)
        length = float(np.hypot(*(b - a)))
        t_ = (b - a) / length
        h = 0.02 * (float(np.ptp(s.xy, axis=0).max()) or 1.0)
        for q in a + np.linspace(0.0, 1.0, max(int(length / h), 2))[:, None] * (b - a):
            r = q - h * (n + t_)                       # hatching on the solid side
            ax.plot([q[0], r[0]], [q[1], r[1]], color=SUPPORT, lw=0.8, zorder=1)


def path_segments(x: np.ndarray, lam: np.ndarray, stable: np.ndarray):
    """Split a curve into its stable and unstable stretches for drawing.

    A segment between two points is stable when both ends are. Returns two pairs
    ``(x, y)`` with NaN gaps, one for the stable and one for the unstable stretches.

    >>> xs, xu = path_segments(np.arange(4.0), np.arange(4.0), np.array([1, 1, 0, 0], bool))
    >>> bool(np.isnan(xs[0]).any()), float(np.nanmax(xu[0]))
    (True, 3.0)
    """
    x, lam, stable = np.asarray(x, float), np.asarray(lam, float), np.asarray(stable, bool)
    seg_stable = stable[1:] & stable[:-1]
    out = []
    for want in (True, False):
        xs, ys = [], []
        for k in np.flatnonzero(seg_stable == want):
            xs += [x[k], x[k + 1], np.nan]
            ys += [lam[k], lam[k + 1], np.nan]
        out.append((np.array(xs), np.array(ys)))
    return out[0], out[1]


def critical_xy(path: EquilibriumPath, node: int, dof: str) -> list:
    """``(x, λ, kind)`` of each critical point, x being the node's DOF there."""
    g = 3 * path.structure.node_id(node) + DOFS.index(dof)
    x_all = path.displacement(node, dof)
    out = []
    for cp in path.critical_points:
        u = np.asarray(cp.u)
        x = float(u[g]) if u.shape == (3 * path.structure.n_nodes,) else float(x_all[cp.index])
        out.append((x, float(cp.load_factor), str(cp.kind)))
    return out


def plot_path(path: EquilibriumPath, node: int, dof: str, ax=None, marker: int | None = None,
              label: str | None = None, legend: bool | None = None, **style):
    """Draw load factor against one node's DOF; stable and unstable parts differ.

    Stable stretches are solid, unstable ones dashed in another colour; critical
    points are marked and labelled with their kind and load factor, each label put
    beside its marker where it covers no curve; ``marker`` marks one point.

    Parameters
    ----------
    label : str, optional
        Prefix of the legend entries (``"<label>, stable"``...).
    legend : bool, optional
        Add a legend, placed off the curve by :func:`place_legend`. Default: when the
        path has both stable and unstable parts.

    Returns the axes. After changing the figure's layout, :func:`tidy` puts the
    labels and the legend off the curve again.
    """
    ax = _axes(ax)
    x = path.displacement(node, dof)
    lam = path.load_factor
    color = style.pop("color", DEFORMED)
    lw = style.pop("lw", 1.8)
    names = (f"{label}, stable", f"{label}, unstable") if label else ("stable", "unstable")
    (xs, ys), (xu, yu) = path_segments(x, lam, path.stable)
    if len(x) == 1:
        ax.plot(x, lam, "o", color=color, label=label or names[0])
    if len(xs):
        ax.plot(xs, ys, color=color, lw=lw, label=names[0], **style)
    if len(xu):
        ax.plot(xu, yu, color=UNSTABLE, lw=lw, ls=(0, (4, 3)), label=names[1], **style)
    for xc, lc, kind in critical_xy(path, node, dof):
        ax.plot([xc], [lc], marker="D" if kind == "limit" else "X", color=CRITICAL, ms=8,
                zorder=6, ls="none")
        # a thin leader line, shortened away at the marker: seen only when the label
        # has to sit further out than beside the marker
        ax.annotate(f"{kind}\nλ = {lc:.4g}", (xc, lc), textcoords="offset points", xytext=(7, 4),
                    fontsize=8, color=CRITICAL, gid=CRITICAL_GID,
                    arrowprops=dict(arrowstyle="-", color=CRITICAL, lw=0.6, shrinkA=1, shrinkB=6))
    if marker is not None:
        ax.plot([x[marker]], [lam[marker]], "o", color=LOAD, ms=7, zorder=7)
    ax.set_xlabel(label_of(path.structure, dof, node))
    ax.set_ylabel(label_of(path.structure, "lam"))
    ax.grid(alpha=0.3)
    if path.critical_points:
        ax.set_ymargin(HEADROOM)
    _place_labels(ax)
    if legend or (legend is None and len(xs) and len(xu)):
        place_legend(ax)
    return ax


def plot_overview(path: EquilibriumPath, node: int, dof: str, points=None, figsize=(10, 4.5),
                  scale: float | None = None):
    """Deformed shapes at a few points next to the equilibrium path; returns the figure.

    Each shape has its colour and its load factor in the legend, and the same colour
    on the path. ``scale`` as in :func:`plot_shape` (automatic by default, stated in
    the legend's title when the shapes are magnified).
    """
    import matplotlib.pyplot as plt
    fig, (a1, a2) = plt.subplots(1, 2, figsize=figsize)
    n = len(path)
    if points is None:
        points = sorted({int(round(k)) for k in np.linspace(0, n - 1, min(n, 5))})
    scale = _resolved_scale(path, scale)
    cmap = plt.get_cmap("viridis")
    colors = [cmap(k / max(1, len(points) - 1)) for k in range(len(points))]
    for k, i in enumerate(points):
        plot_shape(path, i, ax=a1, ghost=(k == 0), loads=(i == points[-1]), scale=scale,
                   legend=False, color=colors[k], label=f"λ = {path.load_factor[i]:.4g}")
    plot_path(path, node, dof, ax=a2)
    x = path.displacement(node, dof)
    for k, i in enumerate(points):
        a2.plot([x[i]], [path.load_factor[i]], "o", color=colors[k], mec="k", mew=0.6, ms=7, zorder=7)
    place_legend(a1, title=scale_note(scale) or None)
    finish_layout(fig)
    return fig

def default_curve(path: EquilibriumPath) -> tuple:
    """``(node, dof)`` worth plotting: the loaded node's translation that moves most."""
    s = path.structure
    F = s.load_vector() + s.load_vector(constant=True)
    loaded = sorted({int(g) // 3 for g in np.flatnonzero(F)}) or [s.n_nodes - 1]
    best, big = (loaded[0], "ux"), -1.0
    for n in loaded[:4]:
        for d in ("ux", "uy"):
            v = float(np.abs(path.displacement(n, d)).max()) if len(path) else 0.0
            if v > big:
                best, big = (n, d), v
    return best


def shape_path_figure(path: EquilibriumPath, i: int = -1, node: int | None = None,
                      dof: str | None = None, figsize=(10, 4.5), dpi: int = 100,
                      scale: float | None = None):
    """A new figure for reports: the shape at point ``i`` beside the path, marked there.

    The figure is a stand-alone :class:`matplotlib.figure.Figure` (not pyplot's), so
    saving it never touches a live figure: ``shape_path_figure(path).savefig("x.svg")``.
    ``scale`` as in :func:`plot_shape` (automatic by default).
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    if node is None or dof is None:
        node, dof = default_curve(path)
    i = path._index(i)
    fig = Figure(figsize=figsize, dpi=dpi)
    FigureCanvasAgg(fig)
    a1, a2 = fig.subplots(1, 2)
    plot_shape(path, i, ax=a1, scale=scale)
    a1.set_title(f"point {i}: λ = {path.load_factor[i]:.4g}", fontsize=10)
    plot_path(path, node, dof, ax=a2, marker=i)
    finish_layout(fig)
    return fig


# -- keeping text off the curves ------------------------------------------------------
#: ``gid`` of the critical-point labels that :func:`tidy` moves.
CRITICAL_GID = "largerot-critical"


def _renderer(fig):
    """The figure's renderer, after bringing every axes' limits and aspect up to date."""
    get = getattr(fig.canvas, "get_renderer", None)
    renderer = get() if get is not None else fig._get_renderer()
    for ax in fig.axes:
        ax.get_xlim(), ax.get_ylim()                 # resolve pending autoscaling
        ax.apply_aspect()
    return renderer


def _densified(xy: np.ndarray) -> np.ndarray:
    """Points every ``SAMPLE_PX`` along a polyline in display coordinates (NaN breaks it)."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    finite = np.isfinite(xy).all(axis=1)
    out = [xy[finite]]
    a, b = xy[:-1], xy[1:]
    ok = finite[:-1] & finite[1:]
    a, b = a[ok], b[ok]
    if len(a):
        n = np.clip(np.ceil(np.hypot(*(b - a).T) / SAMPLE_PX), 1, 5000).astype(int)
        seg = np.repeat(np.arange(len(a)), n)
        t = (np.arange(n.sum()) - np.repeat(np.cumsum(n) - n, n)) / np.repeat(n, n)
        out.append(a[seg] + t[:, None] * (b - a)[seg])
    return np.vstack(out)


def _filled(bb) -> np.ndarray:
    """A grid of points over a display bounding box (an arrow, a marker)."""
    gx = np.linspace(bb.x0, bb.x1, max(2, min(40, int(bb.width / SAMPLE_PX) + 1)))
    gy = np.linspace(bb.y0, bb.y1, max(2, min(40, int(bb.height / SAMPLE_PX) + 1)))
    return np.stack(np.meshgrid(gx, gy), axis=-1).reshape(-1, 2)


def occupied_points(ax, renderer=None, skip=()) -> np.ndarray:
    """Display coordinates of points along everything drawn in ``ax`` that text must not cover.

    Curves and chords sampled every ``SAMPLE_PX`` pixels, markers as small crosses,
    patches (supports, obstacles) along their outlines, arrows filled in; shape (n, 2).
    """
    renderer = renderer or _renderer(ax.figure)
    px = ax.figure.dpi / 72.0
    chunks = [np.zeros((0, 2))]
    for ln in ax.lines:
        if not ln.get_visible() or not len(ln.get_xydata()):
            continue
        xy = ln.get_transform().transform(ln.get_xydata())
        if ln.get_linestyle() not in ("None", "", " ", "none") and ln.get_linewidth() > 0:
            chunks.append(_densified(xy))
        if ln.get_marker() not in (None, "None", "", " ", "none"):
            r = 0.5 * ln.get_markersize() * px
            xy = xy[np.isfinite(xy).all(axis=1)]
            for d in ((0, 0), (r, 0), (-r, 0), (0, r), (0, -r), (r, r), (-r, -r), (r, -r), (-r, r)):
                chunks.append(xy + d)
    for c in ax.collections:
        if isinstance(c, LineCollection) and c.get_visible() and np.max(c.get_linewidth(), initial=0) > 0:
            tr = c.get_transform()
            chunks += [_densified(tr.transform(np.asarray(seg))) for seg in c.get_segments() if len(seg)]
    for p in ax.patches:
        if p.get_visible():
            chunks.append(_densified(p.get_transform().transform(p.get_path().vertices)))
    for t in ax.texts:
        arrow = getattr(t, "arrow_patch", None)
        if arrow is not None and t.get_visible() and all(t is not q for q in skip):
            t.update_positions(renderer)
            chunks.append(_filled(arrow.get_window_extent(renderer)))
    return np.vstack(chunks)


def _inside(pts: np.ndarray, bb, pad: float = CLEARANCE_PX) -> int:
    """How many of ``pts`` fall in the box ``bb`` grown by ``pad`` pixels."""
    x, y = pts[:, 0], pts[:, 1]
    return int(((x >= bb.x0 - pad) & (x <= bb.x1 + pad) & (y >= bb.y0 - pad) & (y <= bb.y1 + pad)).sum())


def _overlap(a, b) -> bool:
    return a.x0 < b.x1 and b.x0 < a.x1 and a.y0 < b.y1 and b.y0 < a.y1


def text_box(t, renderer):
    """Display box of a text's letters (an annotation's arrow left out)."""
    if hasattr(t, "update_positions"):
        t.update_positions(renderer)
    return Text.get_window_extent(t, renderer)


def _text_boxes(ax, renderer, skip=()) -> list:
    return [text_box(t, renderer) for t in ax.texts
            if t.get_visible() and t.get_text() and all(t is not s for s in skip)]


def _place_labels(ax) -> None:
    """Move each critical-point label to the offset where it covers the least.

    Tried in the order of ``LABEL_OFFSETS``; the first that covers no curve, marker or
    other label and stays inside the axes wins, else the one covering least.
    """
    anns = [t for t in ax.texts if t.get_gid() == CRITICAL_GID]
    if not anns:
        return
    renderer = _renderer(ax.figure)
    pts = occupied_points(ax, renderer, skip=anns)
    box = ax.get_window_extent(renderer)
    placed = _text_boxes(ax, renderer, skip=anns)
    anchors = np.array([ax.transData.transform(a.xy) for a in anns])
    for j, ann in enumerate(anns):
        best = None
        for dx, dy in LABEL_OFFSETS:
            ann.xyann = (dx, dy)
            ann.set_horizontalalignment("left" if dx > 0 else "right" if dx < 0 else "center")
            ann.set_verticalalignment("bottom" if dy > 0 else "top")
            bb = text_box(ann, renderer)
            outside = not (bb.x0 >= box.x0 and bb.x1 <= box.x1 and bb.y0 >= box.y0 and bb.y1 <= box.y1)
            # nearer another critical marker than its own, a label reads as that one's
            gap = np.hypot(np.clip(anchors[:, 0], bb.x0, bb.x1) - anchors[:, 0],
                           np.clip(anchors[:, 1], bb.y0, bb.y1) - anchors[:, 1])
            misread = bool(np.any(np.delete(gap, j) < gap[j]))
            cost = (_inside(pts, bb) + 100 * sum(_overlap(bb, q) for q in placed) + 10000 * outside
                    + 30 * misread)
            if best is None or cost < best[0]:
                best = (cost, dx, dy)
            if cost == 0:
                break
        dx, dy = best[1:]
        ann.xyann = (dx, dy)
        ann.set_horizontalalignment("left" if dx > 0 else "right" if dx < 0 else "center")
        ann.set_verticalalignment("bottom" if dy > 0 else "top")
        placed.append(text_box(ann, renderer))


def place_legend(ax, handles=None, **options):
    """Give ``ax`` a legend where it covers no curve, marker, arrow or label.

    Tries the corners and edges of ``LEGEND_SPOTS`` inside the axes; when every one
    covers something, the legend goes outside, right of the axes (a layout such as
    :func:`finish_layout` or ``fig.tight_layout()`` then makes room for it). Entries
    with the same label are shown once. ``handles``: the artists to list (default:
    every labelled artist of ``ax``); ``options`` go to
    :meth:`matplotlib.axes.Axes.legend`. Returns the legend, or None when nothing is
    labelled.
    """
    if handles is None:
        found, labels = ax.get_legend_handles_labels()
    else:
        found, labels = list(handles), [h.get_label() for h in handles]
    seen = {}
    for h, lb in zip(found, labels):
        seen.setdefault(lb, h)
    if not seen:
        return None
    seen = {lb: seen[lb] for lb in sorted(seen, key=lambda lb: lb == "slack cable")}   # last
    options = {"fontsize": 8, "title_fontsize": 8, **options}
    ax._largerot_legend = dict(options, handles=handles)
    old = ax.get_legend()
    if old is not None:
        old.remove()
    renderer = _renderer(ax.figure)
    pts = occupied_points(ax, renderer)
    texts = _text_boxes(ax, renderer)
    for loc in LEGEND_SPOTS:
        leg = ax.legend(list(seen.values()), list(seen), loc=loc, **options)
        bb = leg.get_window_extent(renderer)
        if _inside(pts, bb) == 0 and not any(_overlap(bb, t) for t in texts):
            return leg
        leg.remove()
    return ax.legend(list(seen.values()), list(seen), loc="upper left", bbox_to_anchor=(1.02, 1.0),
                     borderaxespad=0.0, **options)


def tidy(ax) -> None:
    """Put ``ax``'s critical-point labels and legend off the curves again (after a layout change)."""
    _place_labels(ax)
    options = getattr(ax, "_largerot_legend", None)
    if options is not None and ax.get_legend() is not None:
        place_legend(ax, **options)


def finish_layout(fig, rounds: int = 2) -> None:
    """Lay a figure out (``tight_layout``) with its labels and legends kept off the curves.

    Layout and placement depend on each other (a legend outside the axes needs room,
    room moves the curves), so they alternate ``rounds`` times, ending on a layout.
    """
    for _ in range(rounds):
        fig.tight_layout()
        for ax in fig.axes:
            tidy(ax)
    fig.tight_layout()


def plot_frequencies(path: EquilibriumPath, modes: int = 1, f=None, ax=None, lumped: bool = False,
                     **style):
    """Natural frequencies against the load factor along a path; returns the axes.

    One curve per mode, markers at the traced points; past a loss of stability the
    frequencies are negative (:func:`largerot.frequencies`), so the lowest curve
    crosses zero at the path's critical points, which are marked on the λ axis.

    Parameters
    ----------
    modes : int
        How many of the lowest frequencies to draw.
    f : ndarray, shape (n_points, ≥ modes), optional
        Frequencies already computed by :func:`largerot.frequencies` (every point of
        ``path``); computed here when not given.
    lumped : bool
        Lumped masses when computing them.
    """
    from .vibration import frequencies
    if f is None:
        f = frequencies(path, modes=modes, lumped=lumped)
    f = np.asarray(f, dtype=float)
    if f.ndim != 2 or len(f) != len(path):
        raise ModelError(f"`f` must have shape (n_points, modes) = ({len(path)}, ...), got {f.shape}.")
    ax = _axes(ax)
    lam = path.load_factor
    color = style.pop("color", DEFORMED)
    for k in range(min(modes, f.shape[1])):        # bounded by the columns given
        ax.plot(lam, f[:, k], marker="o", ms=3, color=color, alpha=1.0 if k == 0 else 0.55,
                label=f"mode {k + 1}", **style)
    for cp in path.critical_points:
        ax.plot([cp.load_factor], [0.0], marker="D" if cp.kind == "limit" else "X",
                color=CRITICAL, ms=8, ls="none", zorder=6)
    ax.axhline(0.0, color=GHOST, lw=0.8)
    ax.set_xlabel(label_of(path.structure, "lam"))
    ax.set_ylabel("natural frequency f [Hz]")
    ax.grid(alpha=0.3)
    if modes > 1:
        ax.legend(fontsize=8)
    return ax

