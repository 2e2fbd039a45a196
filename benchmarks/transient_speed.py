"""Speed of lr.transient: a 200-element shallow arch snapping from its limit point.

    python benchmarks/transient_speed.py [--steps 1000] [--json out.json]

The arch of ``largerot.examples.shallow_arch(segments=200)`` carries its steel
mass as nodal masses (ρ·A·element length at each node: the example's section has no
density); traced by load control to its limit point, then released there under
1.01 × the limit load for ``--steps`` steps of a fixed nominal dt. Reported: time
per transient step over the time of one Newton iteration of the static solver on
the same model (timed as benchmarks/run.py times it: ``newton`` from the linear
prediction at half the limit load, per residual evaluation, best of 5), and the
Newton iterations per step. Ratios in one run on one machine; absolute times are
indicative.
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import argparse  # noqa: E402
import json  # noqa: E402
import time  # noqa: E402

import numpy as np  # noqa: E402

import largerot as lr  # noqa: E402
from largerot import linalg  # noqa: E402
from largerot.examples import shallow_arch  # noqa: E402
from largerot.solvers.newton import LoadConstraint, newton  # noqa: E402
from largerot.solvers.problem import Problem  # noqa: E402

#: Steel density (kg/m³) of the arch's nodal masses.
DENSITY = 7850.0


def arch(segments: int = 200):
    sc = shallow_arch(segments=segments)
    s = sc.structure
    p = sc.parameters
    ids = p["node_ids"]
    xy = s.snapshot().xy
    A = 0.1 * 0.2
    for k, n in enumerate(ids):
        share = 0.0
        if k > 0:
            share += 0.5 * np.hypot(*(xy[n] - xy[ids[k - 1]]))
        if k < len(ids) - 1:
            share += 0.5 * np.hypot(*(xy[n] - xy[ids[k + 1]]))
        s.mass(n, DENSITY * A * share)
    return s, sc.nodes["crown"]


def static_iteration(s, lam: float, repeat: int = 5) -> float:
    """Seconds of one Newton iteration of the static solver (as benchmarks/run.py)."""
    P = Problem(s.snapshot().assembly)
    _, K0, _ = P.residual(np.zeros(P.n), 0.0)
    u = lam * linalg.factorize(K0).solve(P.F)
    best = np.inf
    for _ in range(repeat):
        n0 = P.n_evaluations
        t = time.perf_counter()
        newton(P, u, lam, LoadConstraint(lam), np.zeros(P.n), max_iterations=2)
        best = min(best, (time.perf_counter() - t) / (P.n_evaluations - n0))
    return best


def main(steps: int = 1000, segments: int = 200) -> dict:
    s, crown = arch(segments)
    path = lr.trace(s, lr.by_load(2.0))
    cp = path.critical_points[0]
    t_it = static_iteration(s, 0.5 * cp.load_factor)
    duration = 2.0                      # s: the crown snaps at about 0.2 s and swings between the wells
    dt = duration / steps
    t = time.perf_counter()
    mo = lr.transient(s, duration, dt=dt, start=(path, cp), load=lr.step_load(1.01 * cp.load_factor))
    wall = time.perf_counter() - t
    n = mo.counters["steps"]
    out = {"segments": segments, "steps": n, "status": mo.status, "wall_s": wall,
           "step_s": wall / n, "static_iteration_s": t_it,
           "step_over_static_iteration": wall / n / t_it,
           "newton_iterations_per_step": mo.counters["newton_iterations"] / n,
           "residual_evaluations_per_step": mo.counters["residual_evaluations"] / n,
           "step_cuts": mo.counters["step_cuts"],
           "crown_drop_end_m": float(-mo.displacement(crown, "uy")[-1]),
           "limit_load_kN": float(cp.load_factor)}
    return out


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--steps", type=int, default=1000)
    ap.add_argument("--segments", type=int, default=200)
    ap.add_argument("--json")
    a = ap.parse_args()
    res = main(a.steps, a.segments)
    for k, v in res.items():
        print(f"{k:32s} {v:.4g}" if isinstance(v, float) else f"{k:32s} {v}")
    if a.json:
        with open(a.json, "w") as fh:
            json.dump(res, fh, indent=1)
