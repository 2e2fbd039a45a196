"""Where a point of the interactive trace goes: time per part, per point.

    python benchmarks/point_cost.py              # 40-element pole, 50 arc-length points

Times the latency benchmark's trace (``run.py`` section 5) with a timer around each
part of the path following (the best of 15 traces is shown): the evaluations, the
refactorisations, the solves, the chord fits, the constraint, Newton as a whole, the
predictor, the acceptance of a point with its inertia, the doubling-back guard. The
timers add about 0.3 µs per call; the parts nest (Newton contains the evaluations),
so they do not add up to the step.
"""
from __future__ import annotations

import collections
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parent))

import largerot as lr  # noqa: E402
from largerot import linalg  # noqa: E402
from largerot.solvers import arc_length, constraints, problem, stepper  # noqa: E402

import models  # noqa: E402

PARTS = [  # (owner, attribute, label)
    (problem.Problem, "residual", "evaluation (residual + tangent)"),
    (linalg.LDLFactorization, "__init__", "refactorisation"),
    (linalg.LDLFactorization, "solve", "solve"),
    (problem.Problem, "moved", "chord fit of a correction"),
    (constraints.QuadraticConstraint, "delta_lam", "arc-length constraint"),
    (stepper.PathStepper, "_correct", "Newton (all of the above in it)"),
    (arc_length.ArcLengthStepper, "_predict", "predictor (with its chord fit)"),
    (stepper, "count_negative", "inertia"),
    (stepper.PathStepper, "_new_point", "point record (with the inertia)"),
    (arc_length.ArcLengthStepper, "_doubled_back", "doubling-back guard"),
    (stepper.PathStepper, "step", "step"),
]


def main() -> int:
    spent, calls = collections.defaultdict(float), collections.Counter()
    clock = time.perf_counter

    def timed(fn, label):
        def wrapper(*args, **kwargs):
            t = clock()
            try:
                return fn(*args, **kwargs)
            finally:
                spent[label] += clock() - t
                calls[label] += 1
        return wrapper

    for owner, name, label in PARTS:
        setattr(owner, name, timed(getattr(owner, name), label))

    def retrace():
        s, _ = models.pole(40)
        return lr.trace(s, lr.by_arc_length(0.05), max_steps=50)

    retrace()
    np.ones(2_000_000).sum()        # the allocator in the state run.py measures in
    best = None
    for _ in range(15):
        spent.clear()
        calls.clear()
        t = clock()
        path = retrace()
        total = clock() - t
        if best is None or total < best[0]:
            best = (total, dict(spent), dict(calls))
    total, spent_b, calls_b = best
    n = len(path) - 1
    print(f"40-element pole, {n} arc-length steps: {1e3 * total:.2f} ms "
          f"({1e6 * total / n:.0f} µs a point; best of 15 traces)")
    for _, _, label in PARTS:
        if label in spent_b:
            print(f"  {label:34s} {1e6 * spent_b[label] / n:7.1f} µs a point  "
                  f"({calls_b[label] / n:.2f} calls of {1e6 * spent_b[label] / calls_b[label]:.1f} µs)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
