"""Imperfection sensitivity of the shallow arch: a few hundred cases, serial or on Dask.

The built-in pinned shallow arch (10 m span, 32 elements) for several rises, each moved
along its first buckling mode by amplitudes from 0 to 40 mm (``lr.imperfect``), traced
by arc length; the peak load of each case is its first critical load. Writes the table
to ``imperfection-sensitivity.csv`` and prints, per rise, the peak load over the
perfect arch's at each amplitude. The Koiter check of the small-amplitude exponent is
in ``tests/test_sweep.py``.

Usage: ``python benchmarks/imperfection_sensitivity.py [--dask N_WORKERS] [--cases N]``.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))            # this checkout's largerot
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import largerot as lr  # noqa: E402
import sweep_cases  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--dask", type=int, default=0, help="run on a local Dask cluster of N workers")
    ap.add_argument("--cases", type=int, default=240, help="about this many cases in all")
    ap.add_argument("--out", default="imperfection-sensitivity.csv")
    args = ap.parse_args()
    rises = [0.2, 0.3, 0.4, 0.5]
    n_amp = max(2, args.cases // len(rises))
    amplitudes = [0.0] + list(np.geomspace(1e-4, 0.04, n_amp - 1))
    cases = lr.grid(rise=rises, amplitude=[float(a) for a in amplitudes])
    t = time.perf_counter()
    if args.dask:
        import distributed
        with distributed.LocalCluster(n_workers=args.dask, threads_per_worker=1, host="127.0.0.1",
                                      dashboard_address=None) as cluster, \
                distributed.Client(cluster) as client:
            table = lr.sweep(sweep_cases.imperfect_arch, cases, lr.by_arc_length(), executor=client,
                             max_steps=80)
    else:
        table = lr.sweep(sweep_cases.imperfect_arch, cases, lr.by_arc_length(), max_steps=80)
    wall = time.perf_counter() - t
    table["peak"] = table["first_critical"]
    perfect = table[table.amplitude == 0].set_index("rise")["peak"]
    table["peak_ratio"] = table["peak"] / table["rise"].map(perfect)
    table.to_csv(args.out, index=False)
    print(f"{len(cases)} cases in {wall:.1f} s ({'Dask, %d workers' % args.dask if args.dask else 'serial'}); "
          f"statuses: {table.status.value_counts().to_dict()}")
    for rise, g in table.groupby("rise"):
        picks = g.iloc[np.linspace(0, len(g) - 1, 5).astype(int)]
        print(f"rise {rise:.2f} m: " + ", ".join(f"{a * 1e3:.2g} mm → {r:.3f}"
                                                for a, r in zip(picks.amplitude, picks.peak_ratio)))


if __name__ == "__main__":
    main()
