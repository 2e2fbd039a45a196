"""How fine a beam chain the tangent resolves in double precision.

For the demo lighting pole (8 m, clamped, tip load) meshed into n elements:

* ``linear``: the tip deflection under a unit tip load from the assembled tangent at
  rest, K·u = F, against the exact P·L³/(3EI) (cubic Hermite elements are exact at
  the nodes for a tip load: common practice, no source); once solved by `factor` and
  once refined with residuals in extended precision (``numpy.longdouble``), which
  removes the solver's error and leaves that of the rounded matrix;
* ``trace``: default load control, P·L²/EI = 2.4 in 8 steps (the defaults benchmark's
  pole), points, cut steps and iterations per point within ``--max-seconds``.

Usage: ``python benchmarks/mesh_resolution.py [--sizes 1000,10000,...] [--no-trace]``.
"""
from __future__ import annotations

import argparse
import time
import warnings

import numpy as np
import scipy.sparse as sp

import largerot as lr
from largerot import closed_form as cf
from largerot import demo
from largerot.assembly import Assembly
from largerot.linalg import factor
from largerot.solvers.problem import Problem

L = 8.0


def linear_errors(n: int) -> tuple[float, float]:
    s, _, top = demo.lighting_pole(segments=n, tip_load=1.0)
    EI = s.members[0].section.EI
    a = Assembly.of(s)
    p = Problem(a)
    _, K, _ = p.residual(np.zeros(p.n), 0.0)
    j = int(np.flatnonzero(a.free == 3 * top)[0])
    exact = L**3 / (3 * EI)
    fact = factor(K)
    x = fact.solve(p.F)
    plain = x[j] / exact - 1.0
    Kl, b, xl = sp.csr_matrix(K).astype(np.longdouble), p.F.astype(np.longdouble), x.astype(np.longdouble)
    for _ in range(3):                  # refinement: bounded, a few steps settle or diverge
        xl = xl + fact.solve((b - Kl @ xl).astype(float))
    return float(plain), float(xl[j] / exact - 1.0)


def traced(n: int, max_seconds: float) -> dict:
    EI = lr.Section.tube(E=25e9, diameter=0.12, wall=0.006).EI
    s, _, top = demo.lighting_pole(segments=n, tip_load=2.4 * EI / L**2)
    st = lr.by_load(1 / 8).stepper(s, target_load_factor=1.0)
    t0 = time.perf_counter()
    for _ in lr.iterate(st, 200):
        if time.perf_counter() - t0 > max_seconds:
            break
    path = st.result()
    its = path.iterations[1:]
    lam = path.load_factor[-1]
    tip = path.displacement(top, "ux")[-1] / (cf.elastica_tip_load(2.4 * lam)[0] * L) - 1 if lam > 0 else np.nan
    return dict(points=len(path) - 1, cuts=st.n_cuts,
                iterations=float(np.mean(its)) if len(its) else np.nan, lam=lam,
                status=st.status, seconds=time.perf_counter() - t0, tip_error=tip)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="1000,10000,20000,30000,100000")
    ap.add_argument("--no-trace", action="store_true")
    ap.add_argument("--max-seconds", type=float, default=120.0)
    args = ap.parse_args()
    warnings.simplefilter("ignore", lr.MeshWarning)
    print("| elements | linear, LDLᵀ | linear, refined | points | cuts | it/point | λ reached | tip vs elastica | status | s |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---|---:|")
    for n in map(int, args.sizes.split(",")):
        plain, refined = linear_errors(n)
        row = f"| {n:,} | {plain:+.1e} | {refined:+.1e} |"
        if not args.no_trace:
            t = traced(n, args.max_seconds)
            row += (f" {t['points']} | {t['cuts']} | {t['iterations']:.1f} | {t['lam']:.3f} | "
                    f"{t['tip_error']:+.1e} | {t['status']} | {t['seconds']:.0f} |")
        print(row, flush=True)


if __name__ == "__main__":
    main()
