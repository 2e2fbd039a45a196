"""A sweep of shallow arches on 2 local Dask workers against the same sweep serially.

200 cases (rise × segments × step) of the built-in shallow arch, each traced by arc
length for 40 points; the ratio of wall times is the speed-up (goal ≥ 1.7× on a
2-core machine), and the overhead per case is the parallel wall time × workers minus
the serial time, over the cases.

Usage: ``python benchmarks/sweep_speed.py [n_cases] [segments]`` (segments: the finest
of the four meshes, default 16; larger cases show the speed-up with less overhead).
"""
from __future__ import annotations

import os

# Dask's worker processes run with one BLAS thread (its nanny sets the variable): the
# serial run gets the same, so both do the same arithmetic on one core each.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import largerot as lr  # noqa: E402
import sweep_cases  # noqa: E402


def main(n_cases: int = 200, finest: int = 16) -> None:
    import distributed
    rises = np.linspace(0.12, 0.4, max(1, n_cases // 4))
    meshes = [finest - 6, finest - 4, finest - 2, finest]
    cases = lr.grid(rise=[float(r) for r in rises], segments=meshes)[:n_cases]
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
    print(f"{len(cases)} cases ({min(meshes)}–{finest} elements): serial {t_serial:.2f} s, 2 Dask workers {t_dask:.2f} s, "
          f"speed-up {t_serial / t_dask:.2f}× (goal ≥ 1.7×); overhead per case "
          f"{1e3 * per_case:.1f} ms; same table: {same}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
