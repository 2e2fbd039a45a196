"""Static matplotlib figures of shapes and equilibrium paths (no mechanics here)."""
from __future__ import annotations

import numpy as np
from matplotlib.collections import LineCollection

from .results import EquilibriumPath, member_lines
from .model import DOFS, Structure

__all__ = ["plot_shape", "plot_path", "plot_overview"]

DEFORMED = "#1f5fa8"
GHOST = "#b8b8b8"
SUPPORT = "#333333"
LOAD = "#c0392b"


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
    fixed = structure.fixed_dofs()
    xy = structure.xy
    for n in sorted({int(g) // 3 for g in fixed}):
        held = {DOFS[g % 3] for g in fixed if g // 3 == n}
        x, y = xy[n]
        marker = "s" if "rz" in held and {"ux", "uy"} <= held else ("^" if {"ux", "uy"} <= held else "o")
        ax.plot([x], [y], marker=marker, ms=9, mfc="white", mec=SUPPORT, mew=1.5, zorder=5)


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
    ax.set_xlim(lo[0], hi[0])
    ax.set_ylim(lo[1], hi[1])
    ax.set_aspect("equal")
    ax.set_xlabel("x")
    ax.set_ylabel("y")
    return ax


def plot_path(path: EquilibriumPath, node: int, dof: str, ax=None, marker: int | None = None,
              label: str | None = None, **style):
    """Draw load factor against one node's DOF; stable and unstable parts differ.

    Critical points, when the path has them, are marked and labelled.
    """
    ax = _axes(ax)
    x = path.displacement(node, dof)
    lam = path.load_factor
    stable = path.stable
    color = style.pop("color", DEFORMED)
    ax.plot(x, lam, color=color, lw=1.8, label=label or f"{dof} of node {node}", **style)
    if not stable.all():
        un = np.where(stable, np.nan, lam)
        # an unstable stretch includes the points on either side so it joins up
        edge = ~stable | np.r_[~stable[1:], False] | np.r_[False, ~stable[:-1]]
        ax.plot(np.where(edge, x, np.nan), np.where(edge, lam, np.nan), color="white", lw=1.0, ls=(0, (3, 3)))
        del un
    for cp in path.critical_points:
        g = 3 * node + DOFS.index(dof)
        xc = cp.u[g] if cp.u.shape[0] == 3 * path.structure.n_nodes else np.nan
        ax.plot([xc], [cp.load_factor], marker="D" if cp.kind == "limit" else "X",
                color="#e67e22", ms=8, zorder=6)
        ax.annotate(f"{cp.kind} λ={cp.load_factor:.4g}", (xc, cp.load_factor),
                    textcoords="offset points", xytext=(6, 6), fontsize=8)
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
