"""Static matplotlib figures of shapes and equilibrium paths (no mechanics here)."""
from __future__ import annotations

import numpy as np
from matplotlib.collections import LineCollection

from .results import EquilibriumPath, member_lines
from .model import DOFS, Structure

__all__ = ["plot_shape", "plot_path", "plot_overview", "path_segments", "critical_xy",
           "shape_path_figure"]

DEFORMED = "#1f5fa8"
GHOST = "#b8b8b8"
SUPPORT = "#333333"
LOAD = "#c0392b"
UNSTABLE = "#e67e22"
CRITICAL = "#8e44ad"


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
    """Support symbols: a hatched block (clamp), triangle (pin), triangle on wheels (roller)."""
    fixed = set(structure.fixed_dofs().tolist())
    xy = structure.xy
    h = 0.035 * size
    kw = dict(color=SUPPORT, lw=1.3, zorder=5, solid_capstyle="butt")
    for n in sorted({int(g) // 3 for g in fixed}):
        hx, hy, hr = (3 * n + k in fixed for k in range(3))
        x, y = xy[n]
        if hx and hy:
            if hr:
                ax.fill([x - h, x + h, x + h, x - h], [y, y, y - 0.4 * h, y - 0.4 * h],
                        color=SUPPORT, zorder=5)
                base = y - 0.4 * h
            else:
                ax.fill([x, x - 0.8 * h, x + 0.8 * h], [y, y - 1.3 * h, y - 1.3 * h],
                        facecolor="white", edgecolor=SUPPORT, lw=1.3, zorder=5)
                base = y - 1.3 * h
            ax.plot([x - 1.3 * h, x + 1.3 * h], [base, base], **kw)
            for t in np.linspace(-1.1, 1.3, 6):
                ax.plot([x + t * h, x + (t - 0.4) * h], [base, base - 0.5 * h], **kw)
        elif hx or hy:
            d = np.array([0.0, -1.0]) if hy else np.array([-1.0, 0.0])
            p = np.array([-d[1], d[0]])
            c = np.array([x, y])
            tri = np.array([c, c + 1.1 * h * d + 0.7 * h * p, c + 1.1 * h * d - 0.7 * h * p])
            ax.fill(tri[:, 0], tri[:, 1], facecolor="white", edgecolor=SUPPORT, lw=1.3, zorder=5)
            for q in (-0.4, 0.4):
                w = c + 1.4 * h * d + q * h * p
                ax.plot([w[0]], [w[1]], "o", ms=3.5, mfc="white", mec=SUPPORT, zorder=5)
            g = c + 1.75 * h * d
            ax.plot([g[0] - 1.1 * h * p[0], g[0] + 1.1 * h * p[0]],
                    [g[1] - 1.1 * h * p[1], g[1] + 1.1 * h * p[1]], **kw)
        if hr and not (hx and hy):
            ax.plot([x], [y], "s", ms=6, mfc=SUPPORT, mec=SUPPORT, zorder=6)


def plot_shape(path_or_structure, i: int = -1, ax=None, ghost: bool = True,
               scale: float = 1.0, supports: bool = True, loads: bool = True, **style):
    """Draw the deformed shape at point ``i`` of a path (true scale by default).

    Beams are drawn as their cubic deflected curves, bars as chords; the undeformed
    shape is ghosted. Returns the axes.
    """
    ax = _axes(ax)
    if isinstance(path_or_structure, EquilibriumPath):
        path = path_or_structure
        s = path.structure
        u = scale * path.u[range(len(path))[i]]
    else:
        path, s = None, path_or_structure
        u = np.zeros(3 * s.n_nodes)
    if ghost:
        _draw_lines(ax, member_lines(s, np.zeros(3 * s.n_nodes), 2), colors=GHOST, lw=1.0, ls="--")
    _draw_lines(ax, member_lines(s, u), colors=style.pop("color", DEFORMED), lw=style.pop("lw", 2.0), **style)
    xy = s.xy + u.reshape(-1, 3)[:, :2]
    allxy = np.vstack([s.xy, xy]) if len(xy) else np.zeros((1, 2))
    size = float(np.ptp(allxy, axis=0).max()) or 1.0
    if supports:
        _draw_supports(ax, s, size)
    if loads:
        F = s.load_vector()
        for n in np.flatnonzero(np.abs(F[0::3]) + np.abs(F[1::3])):
            f = np.array([F[3 * n], F[3 * n + 1]])
            d = 0.12 * size * f / np.linalg.norm(f)
            ax.annotate("", xy=xy[n], xytext=xy[n] - d,
                        arrowprops=dict(arrowstyle="-|>", color=LOAD, lw=1.8))
    lo, hi = allxy.min(axis=0) - 0.08 * size, allxy.max(axis=0) + 0.08 * size
    _draw_obstacles(ax, s)
    ax.set_xlim(lo[0], hi[0])
    ax.set_ylim(lo[1], hi[1])
    ax.set_aspect("equal")
    ax.set_xlabel("x")
    ax.set_ylabel("y")
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
    g = 3 * int(node) + DOFS.index(dof)
    x_all = path.displacement(node, dof)
    out = []
    for cp in path.critical_points:
        u = np.asarray(cp.u)
        x = float(u[g]) if u.shape == (3 * path.structure.n_nodes,) else float(x_all[cp.index])
        out.append((x, float(cp.load_factor), str(cp.kind)))
    return out


def plot_path(path: EquilibriumPath, node: int, dof: str, ax=None, marker: int | None = None,
              label: str | None = None, **style):
    """Draw load factor against one node's DOF; stable and unstable parts differ.

    Stable stretches are solid, unstable ones dashed in another colour; critical
    points are marked and labelled with their kind and load factor; ``marker`` marks
    one point. Returns the axes.
    """
    ax = _axes(ax)
    x = path.displacement(node, dof)
    lam = path.load_factor
    color = style.pop("color", DEFORMED)
    lw = style.pop("lw", 1.8)
    label = label or f"{dof} of node {node}"
    (xs, ys), (xu, yu) = path_segments(x, lam, path.stable)
    if len(x) == 1:
        ax.plot(x, lam, "o", color=color, label=label)
    if len(xs):
        ax.plot(xs, ys, color=color, lw=lw, label=label, **style)
    if len(xu):
        ax.plot(xu, yu, color=UNSTABLE, lw=lw, ls=(0, (4, 3)),
                label=f"{label}, unstable" if len(xs) else label, **style)
    for xc, lc, kind in critical_xy(path, node, dof):
        ax.plot([xc], [lc], marker="D" if kind == "limit" else "X", color=CRITICAL, ms=8,
                zorder=6, ls="none")
        ax.annotate(f"{kind}\nλ = {lc:.4g}", (xc, lc), textcoords="offset points", xytext=(7, 4),
                    fontsize=8, color=CRITICAL)
    if marker is not None:
        ax.plot([x[marker]], [lam[marker]], "o", color=LOAD, ms=7, zorder=7)
    ax.set_xlabel(f"{dof} of node {node}")
    ax.set_ylabel("load factor λ")
    ax.grid(alpha=0.3)
    return ax


def plot_overview(path: EquilibriumPath, node: int, dof: str, points=None, figsize=(10, 4.5)):
    """Deformed shapes at a few points next to the equilibrium path; returns the figure."""
    import matplotlib.pyplot as plt
    fig, (a1, a2) = plt.subplots(1, 2, figsize=figsize)
    n = len(path)
    if points is None:
        points = sorted({int(round(k)) for k in np.linspace(0, n - 1, min(n, 5))})
    cmap = plt.get_cmap("viridis")
    for k, i in enumerate(points):
        plot_shape(path, i, ax=a1, ghost=(k == 0), loads=(i == points[-1]),
                   color=cmap(k / max(1, len(points) - 1)))
    plot_path(path, node, dof, ax=a2)
    a2.plot(path.displacement(node, dof)[points], path.load_factor[points], "o", color=LOAD)
    fig.tight_layout()
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
                      dof: str | None = None, figsize=(10, 4.5), dpi: int = 100):
    """A new figure for reports: the shape at point ``i`` beside the path, marked there.

    The figure is a stand-alone :class:`matplotlib.figure.Figure` (not pyplot's), so
    saving it never touches a live figure: ``shape_path_figure(path).savefig("x.svg")``.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    if node is None or dof is None:
        node, dof = default_curve(path)
    i = range(len(path))[i]
    fig = Figure(figsize=figsize, dpi=dpi)
    FigureCanvasAgg(fig)
    a1, a2 = fig.subplots(1, 2)
    plot_shape(path, i, ax=a1)
    a1.set_title(f"point {i}: λ = {path.load_factor[i]:.4g}", fontsize=10)
    plot_path(path, node, dof, ax=a2, marker=i)
    fig.tight_layout()
    return fig
