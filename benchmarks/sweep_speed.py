"""A sweep of shallow arches on 2 local Dask workers against the same sweep serially.

200 cases (rise × segments × step) of the built-in shallow arch, each traced by arc
length for 40 points; the ratio of wall times is the speed-up (goal ≥ 1.7× on a
2-core machine), and the overhead per case is the parallel wall time × workers minus
the serial time, over the cases.

Usage: ``python benchmarks/sweep_speed.py [n_cases]``.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import largerot as lr  # noqa: E402
import sweep_cases  # noqa: E402


def main(n_cases: int = 200) -> None:
    import distributed
    rises = np.linspace(0.12, 0.4, max(1, n_cases // 4))
    cases = lr.grid(rise=[float(r) for r in rises], segments=[10, 12, 14, 16])[:n_cases]
    options = dict(max_steps=40, progress=False)
    t = time.perf_counter()
    serial = lr.sweep(sweep_cases.arch, cases, lr.by_arc_length(), **options)
    t_serial = time.perf_counter() - t
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        client.submit(sum, [1]).result()                   # workers up before the clock
        t = time.perf_counter()
        dask = lr.sweep(sweep_cases.arch, cases, lr.by_arc_length(), executor=client, **options)
        t_dask = time.perf_counter() - t
    same = serial.drop(columns="wall_time").equals(dask.drop(columns="wall_time"))
    per_case = (2 * t_dask - t_serial) / len(cases)
    print(f"{len(cases)} cases: serial {t_serial:.2f} s, 2 Dask workers {t_dask:.2f} s, "
          f"speed-up {t_serial / t_dask:.2f}× (goal ≥ 1.7×); overhead per case "
          f"{1e3 * per_case:.1f} ms; same table: {same}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 200)
