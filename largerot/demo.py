"""Built-in demonstration: a slender lighting pole bent far by a growing tip load.

Invented scenario: an 8 m glass-fibre tube pole (E = 25 GPa), clamped at its base,
pulled sideways at its top by a horizontal load that grows to 4 kN (P·L²/EI ≈ 2.9).
"""
from __future__ import annotations

import numpy as np

from .model import Structure
from .sections import Section
from .solvers import by_load, trace

__all__ = ["lighting_pole", "run_demo"]


def lighting_pole(segments: int = 32, tip_load: float = 4.0e3):
    """The demo pole: returns ``(structure, base, top)``."""
    s = Structure()
    base, top = s.node(0.0, 0.0), s.node(0.0, 8.0)
    tube = Section.tube(E=25e9, diameter=0.12, wall=0.006)
    s.beam(base, top, tube, segments=segments)
    s.fix(base)
    s.load(top, fx=tip_load)
    return s, base, top


def run_demo(png: str | None = "largerot-demo.png") -> str:
    """Trace the demo pole, return a text table, and write a PNG figure."""
    s, base, top = lighting_pole()
    path = trace(s, by_load(0.05), target_load_factor=1.0)
    lines = ["largerot demo: 8 m glass-fibre pole, horizontal tip load (invented scenario)",
             f"{'load [kN]':>10} {'tip ux [m]':>11} {'tip uy [m]':>11} {'iterations':>11}"]
    for i in range(0, len(path), 4):
        lines.append(f"{4.0 * path.load_factor[i]:10.3f} {path.displacement(top, 'ux')[i]:11.4f}"
                     f" {path.displacement(top, 'uy')[i]:11.4f} {path.iterations[i]:11d}")
    lines.append(f"status: {path.status} ({path.message})")
    if png:
        import matplotlib
        matplotlib.use("Agg")
        from .plotting import plot_overview
        fig = plot_overview(path, top, "ux")
        fig.savefig(png, dpi=110)
        lines.append(f"figure written to {png}")
    lines.append("Results are for study; design and checking of real structures follow local "
                 "codes and licensed engineering practice.")
    return "\n".join(lines)
