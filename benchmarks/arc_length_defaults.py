"""Arc-length control with default options: points, step cuts, iterations per problem.

    python benchmarks/arc_length_defaults.py

Problems: the cantilever column of ``examples.column`` with a lateral tip load of
1 % of the axial one (both scaled by λ) traced to λ = 1.5; the toggle frame with a
soft hanger (``examples.toggle_frame``, its own stop, up to 3000 steps); the plain
two-bar truss (through both limit points). Every constraint, default options.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import largerot as lr  # noqa: E402
from largerot.examples import column, toggle_frame  # noqa: E402
from largerot.solvers.arc_length import CONSTRAINTS  # noqa: E402
from helpers import two_bar_truss  # noqa: E402


def imperfect_column():
    sc = column("cantilever")
    sc.structure.load(sc.tip, fx=0.01 * sc.parameters["euler_load"])
    return sc.structure, {"stop": lambda p: p.load_factor >= 1.5, "max_steps": 600}


def frame():
    sc = toggle_frame()
    opts = dict(sc.trace_options)
    opts["max_steps"] = 3000
    return sc.structure, opts


def truss():
    s, apex = two_bar_truss()
    return s, {"stop": lambda p: -p.displacement(apex, "uy") > 1.2, "max_steps": 3000}


def describe(path):
    lam = path.load_factor
    u = path.u
    du = np.linalg.norm(np.diff(u, axis=0), axis=1)
    repeats = int(np.sum((du == 0) & (np.diff(lam) == 0)))
    it = np.asarray(path.iterations[1:], float)
    cps = ", ".join(f"{c.kind}@{c.load_factor:.6g}" for c in path.critical_points)
    return (f"{path.status:9s} pts {len(path) - 1:5d} cuts {path.counters['step_cuts']:4d} "
            f"rejected {path.counters.get('rejected_points', 0):3d} mean it {it.mean() if len(it) else 0:4.2f} λ_end {lam[-1]:9.4g} "
            f"λ_min {lam.min():9.4g} repeats {repeats:4d} crit [{cps}]")


if __name__ == "__main__":
    for name, build in (("column 1%", imperfect_column), ("toggle frame", frame), ("two-bar truss", truss)):
        for c in CONSTRAINTS:
            s, opts = build()
            t = time.perf_counter()
            path = lr.trace(s, lr.by_arc_length(constraint=c), **opts)
            print(f"{name:13s} {c:21s} {describe(path)} ({time.perf_counter() - t:.1f} s)", flush=True)
