"""Does a second core help the element kernels? (issue 13, item 5)

The beam kernel over the 100,440-element lattice of ``models.lattice``, once over all
elements in one thread, once in two halves on a two-thread pool (numpy releases the
GIL inside its array operations). Best of 7 each.

Usage: ``python benchmarks/second_core.py [n_elements]``.
"""
from __future__ import annotations

import sys
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

import models  # noqa: E402
from largerot.assembly import Assembly  # noqa: E402
from largerot.elements import beam  # noqa: E402


def best(fn, repeat: int = 7) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main(n: int = 100000) -> None:
    s, _ = models.lattice(n)
    A = Assembly.of(s)
    g = A.groups[0]
    u = np.random.default_rng(0).standard_normal(A.n_dof) * 1e-3
    ue = u[g.dofmap]
    half = len(ue) // 2
    pool = ThreadPoolExecutor(2)

    def one():
        beam.response(g.dX, g.L0, ue, g.EA, g.EI, True)

    def two():
        parts = [pool.submit(beam.response, g.dX[a:b], g.L0[a:b], ue[a:b], g.EA[a:b], g.EI[a:b], True)
                 for a, b in ((0, half), (half, len(ue)))]
        for p in parts:
            p.result()

    t1, t2 = best(one), best(two)
    print(f"{len(ue):,} beam elements: one thread {t1:.4f} s, two threads {t2:.4f} s, "
          f"speed-up {t1 / t2:.2f}×")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100000)
