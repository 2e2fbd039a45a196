"""Figures of a motion: where a snapping structure lands on its static path. Draw only."""
from __future__ import annotations

import numpy as np

from .plotting import LOAD, label_of, place_legend, plot_path

__all__ = ["landing", "time_history"]

#: Colour of the motion's trace (the static path keeps the colours of lr.plotting).
MOTION = "#7b3294"


def landing(motion, node: int | str, dof: str, path=None, ax=None):
    """The motion in the load–displacement plane, over the static path if given.

    The trace is (DOF(t), λ(t)): for a load held constant a horizontal line swept
    back and forth, which with damping closes in on the static equilibrium it lands
    on; the last state is marked. Returns the axes.
    """
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(6, 4))
    if path is not None:
        plot_path(path, node, dof, ax=ax, label="static path", legend=False)
    x = motion.displacement(node, dof)
    lam = motion.load_factor
    ax.plot(x, lam, color=MOTION, lw=0.8, alpha=0.7, label="motion")
    ax.plot([x[0]], [lam[0]], "o", color=MOTION, mfc="white", ms=7, zorder=7, label="start")
    ax.plot([x[-1]], [lam[-1]], "*", color=LOAD, ms=12, zorder=8,
            label=f"t = {motion.times[-1]:.3g}")
    ax.set_xlabel(label_of(motion.structure, dof, node))
    ax.set_ylabel(label_of(motion.structure, "lam"))
    ax.grid(alpha=0.3)
    place_legend(ax)
    return ax


def time_history(motion, node: int | str, dof: str, ax=None, level: float | None = None):
    """One DOF against time; ``level`` draws a horizontal line (e.g. the static landing value)."""
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(6, 3))
    ax.plot(motion.times, motion.displacement(node, dof), color=MOTION, lw=1.2)
    if level is not None and np.isfinite(level):
        ax.axhline(level, color=LOAD, lw=1.0, ls="--", label="static equilibrium")
        place_legend(ax)
    ax.set_xlabel("time t")
    ax.set_ylabel(label_of(motion.structure, dof, node))
    ax.grid(alpha=0.3)
    return ax
