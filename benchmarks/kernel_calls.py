"""Kernel evaluations per converged point, and the cost of one evaluation at scale.

Counts the calls of the element kernels (``beam.response``, ``fibre_beam.response``,
``contact.response``) and of ``Problem.residual`` (Newton's residual evaluations,
line searches and the searches that locate critical points and events included)
during a trace, by wrapping the module functions. A kernel called more often than the
residual means work repeated for a state already evaluated (recording a point,
committing its history); the goal is none (extra = 0).

Runs on any version of largerot with these module functions, so the same script
measures before and after a change (run it from each checkout's root)::

    python benchmarks/kernel_calls.py [--lattice N] [--repeat R]

Prints one JSON object.
"""
from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))   # this checkout's largerot
sys.path.insert(0, str(Path(__file__).resolve().parent))

import largerot as lr  # noqa: E402
from largerot.elements import beam, contact, fibre_beam  # noqa: E402
from largerot.solvers import problem as problem_module  # noqa: E402

import models  # noqa: E402


def counted_trace(run) -> dict:
    """Run ``run()`` with the kernels and the residual counted."""
    counts = {"beam": 0, "fibre": 0, "contact": 0, "residual": 0}
    originals = [(beam, "response"), (fibre_beam, "response"), (contact, "response"),
                 (problem_module.Problem, "residual")]
    saved = [getattr(o, n) for o, n in originals]

    def wrap(key, f):
        def inner(*a, **k):
            counts[key] += 1
            return f(*a, **k)
        return inner

    for (o, n), f, key in zip(originals, saved, ("beam", "fibre", "contact", "residual")):
        setattr(o, n, wrap(key, f))
    try:
        t = time.perf_counter()
        path = run()
        wall = time.perf_counter() - t
    finally:
        for (o, n), f in zip(originals, saved):
            setattr(o, n, f)
    pts = len(path) - 1
    return {"status": path.status, "points": pts, "iterations": int(path.iterations.sum()),
            "residual_calls": counts["residual"],
            "fibre_kernel_calls": counts["fibre"], "contact_kernel_calls": counts["contact"],
            "beam_kernel_calls": counts["beam"],
            "extra_fibre_per_point": (counts["fibre"] - counts["residual"]) / max(pts, 1),
            "extra_contact_per_point": (counts["contact"] - counts["residual"]) / max(pts, 1),
            "wall_s": wall}


#: The lean demo's own trace (``python -m largerot demo lean``).
LEAN_STEPS = 50


def LEAN_CONTROL(top):
    return lr.by_displacement(top, "ux", 0.05)


def lean() -> dict:
    from largerot.demo import leaning_pole
    s, nodes, _ = leaning_pole()
    return counted_trace(lambda: lr.trace(s, LEAN_CONTROL(nodes["top"]), max_steps=LEAN_STEPS))


def lattice(n: int, repeat: int) -> dict:
    s, _ = models.lattice(n)
    out = counted_trace(lambda: lr.trace(s, lr.by_load(0.25), target_load_factor=1.0))
    out["extra_beam_per_point"] = (out["beam_kernel_calls"] - out["residual_calls"]) / max(out["points"], 1)
    # one evaluation of the 100k-element beam kernel, alone (best of ``repeat``)
    nodes, sec = s.element_table("beam")
    xy = s.xy
    dX = xy[nodes[:, 1]] - xy[nodes[:, 0]]
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    EA = np.full(len(L0), s.sections[0].EA)
    EI = np.full(len(L0), s.sections[0].EI)
    ue = 1e-3 * np.random.default_rng(0).standard_normal((len(L0), 6))
    best = np.inf
    for _ in range(repeat):
        t = time.perf_counter()
        beam.response(dX, L0, ue, EA, EI, True)
        best = min(best, time.perf_counter() - t)
    out.update(n_elements=int(len(L0)), beam_kernel_s=best)
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lattice", type=int, default=100_000, help="elements of the lattice frame")
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    print(json.dumps({"version": lr.__file__, "lean_demo": lean(),
                      "lattice": lattice(args.lattice, args.repeat)}, indent=1))


if __name__ == "__main__":
    main()
