"""A sweep of shallow arches on 2 local Dask workers (and a 2-process pool) against the
same sweep serially.

200 cases (rise × segments) of the built-in shallow arch, each traced by arc length for
40 points (about 80 ms a case). Each side is timed over the whole ``lr.sweep`` call:

- serial, in this process (largerot already imported, one BLAS thread);
- Dask, first sweep on a fresh ``LocalCluster`` of 2 worker processes ("cold": the
  workers import largerot on their first batch, as a user's first sweep does);
- Dask, a second sweep on the same cluster ("warm": every later sweep of a session);
- Dask warm with one case per task (``BATCH_SECONDS = 0``: how sweeps were shipped
  before batching), for the comparison;
- a ``ProcessPoolExecutor(2)`` (forked from this process, so largerot is imported).

The speed-up is serial time over parallel time (goal ≥ 1.7× on a 2-core machine); the
overhead per case is (workers × parallel time − serial time) / cases. The machine's
load average is printed with each repeat: other processes on the same cores lower the
parallel side's speed-up and not the serial one's. The CPU time per case (this process
with its Dask scheduler, plus the workers) does not depend on that load: its excess
over the serial CPU time is the overhead the executor adds.

Usage: ``python benchmarks/sweep_speed.py [--cases 200] [--finest 16] [--repeats 3]``.
"""
from __future__ import annotations

import os

# Dask's worker processes run with one BLAS thread (its nanny sets the variable): the
# serial run gets the same, so both do the same arithmetic on one core each.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from concurrent.futures import ProcessPoolExecutor  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))            # this checkout's largerot
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import importlib  # noqa: E402

import largerot as lr  # noqa: E402
import sweep_cases  # noqa: E402

sweep_module = importlib.import_module("largerot.sweep")   # lr.sweep is the function

WORKERS = 2


def _cpu_now(client) -> float:
    """CPU seconds used so far by this process (client and, for a LocalCluster, its
    scheduler) and by the Dask workers, if any."""
    workers = sum(client.run(time.process_time).values()) if client is not None else 0.0
    return time.process_time() + workers


def timed(cases, cpu: dict, side: str, client=None, **options):
    """Wall time of the whole ``lr.sweep`` call; its CPU time (here and on the Dask
    workers) goes into ``cpu[side]``: that one does not depend on other processes'
    load, so it shows the overhead even when the cores are shared."""
    c = _cpu_now(client)
    t = time.perf_counter()
    table = lr.sweep(sweep_cases.arch, cases, lr.by_arc_length(), max_steps=40, progress=False,
                     **options)
    wall = time.perf_counter() - t
    cpu[side] = _cpu_now(client) - c
    return wall, table


def one_repeat(cases) -> dict:
    import distributed
    load = os.getloadavg()[0]
    cpu: dict = {}
    t_serial, serial = timed(cases, cpu, "serial")
    out = {"serial": t_serial, "cpu": cpu}
    with ProcessPoolExecutor(WORKERS) as pool:
        out["pool"], pooled = timed(cases, cpu, "pool", executor=pool)
    with distributed.LocalCluster(n_workers=WORKERS, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        client.submit(sum, [1]).result()                   # workers up before the clock
        out["dask cold"], dask = timed(cases, cpu, "dask cold", client, executor=client)
        out["dask warm"], _ = timed(cases, cpu, "dask warm", client, executor=client)
        saved = sweep_module.BATCH_SECONDS
        sweep_module.BATCH_SECONDS = 0                     # one case per task
        try:
            out["dask warm, 1 case/task"], _ = timed(cases, cpu, "dask warm, 1 case/task", client,
                                                     executor=client)
        finally:
            sweep_module.BATCH_SECONDS = saved
    numbers = serial.drop(columns="wall_time")
    out["same"] = numbers.equals(dask.drop(columns="wall_time")) and numbers.equals(
        pooled.drop(columns="wall_time"))
    out["load"] = (load, os.getloadavg()[0])
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=200)
    ap.add_argument("--finest", type=int, default=16, help="elements of the finest of four meshes")
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()
    rises = np.linspace(0.12, 0.4, max(1, args.cases // 4))
    meshes = [args.finest - 6, args.finest - 4, args.finest - 2, args.finest]
    cases = lr.grid(rise=[float(r) for r in rises], segments=meshes)[:args.cases]
    n = len(cases)
    print(f"{n} cases ({min(meshes)}–{args.finest} elements), {WORKERS} workers, "
          f"batches of about {sweep_module.BATCH_SECONDS:g} s")
    ratios: dict = {}
    for k in range(args.repeats):
        r = one_repeat(cases)
        line = [f"repeat {k + 1}: serial {r['serial']:.2f} s"]
        for side in ("dask cold", "dask warm", "dask warm, 1 case/task", "pool"):
            ratio = r["serial"] / r[side]
            ratios.setdefault(side, []).append(ratio)
            overhead = (WORKERS * r[side] - r["serial"]) / n
            line.append(f"{side} {r[side]:.2f} s = {ratio:.2f}× ({1e3 * overhead:+.1f} ms/case)")
        print("; ".join(line) + f"; same tables: {r['same']}; load average "
              f"{r['load'][0]:.2f} → {r['load'][1]:.2f}")
        cpu = r["cpu"]
        print("    CPU per case: " + ", ".join(
            f"{side} {1e3 * cpu[side] / n:.1f} ms" for side in cpu if side != "pool")
            + " (Dask: workers + this process with its scheduler; the pool's workers not counted)")
    for side, v in ratios.items():
        print(f"{side}: speed-up {min(v):.2f}–{max(v):.2f}× over {len(v)} repeats "
              f"(median {float(np.median(v)):.2f}×; goal ≥ 1.7×)")


if __name__ == "__main__":
    main()
