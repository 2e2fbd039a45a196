"""Parameter studies: many traces, one row each, serially, on any executor, or on Dask.

``lr.sweep(build, cases, control)`` builds a structure for each parameter set
(``build(**params)``), traces it with ``control`` and reduces the path to one row of a
pandas DataFrame (``summary(path, params)``, by default :func:`default_summary`).
Work is shipped as (build function, parameters) and rebuilt where it runs; only rows
(and, with ``store``, files) come back, never live objects. Cases travel to an executor
in batches of about ``BATCH_SECONDS`` of work, sized from the cases already measured
and shrinking toward the end so that the workers finish together. A case that raises, has
bad parameters or runs past ``case_timeout`` becomes a row saying so; it never ends
the sweep.

Executors: ``None`` runs in this process; any :class:`concurrent.futures.Executor`
(e.g. a ``ProcessPoolExecutor``); or a Dask ``distributed.Client`` passed as it is
(``executor=client``), for a ``LocalCluster`` or a real cluster alike. Functions
defined in a notebook travel to Dask workers (cloudpickle) and to forked processes;
a ``ProcessPoolExecutor`` started with "spawn" needs ``build`` in an importable module.

With ``store=folder`` each case's path is saved (``lr.save``) with its row, and a
rerun of the same sweep skips the cases already stored: an interrupted sweep resumes.
"""
from __future__ import annotations

import concurrent.futures
import itertools
import json
import math
import os
import tempfile
import time
from pathlib import Path
from typing import Callable

import numpy as np

from .errors import ModelError

__all__ = ["sweep", "grid", "default_summary", "CASE_STATUSES"]

#: Seconds of work aimed at per batch shipped to an executor: a task costs the executor a
#: few ms (Dask: about 7 ms a task measured on 2 local workers, scheduler included, with
#: the cores shared), so a batch of about a second keeps that near 1 % while the progress
#: bar still moves.
BATCH_SECONDS = 1.0
#: Batches kept in flight per worker: one running and one queued behind it, so a worker
#: never waits for the next batch to be sent.
BATCHES_PER_WORKER = 2

#: Row statuses besides the trace's own (``target``, ``limit``, ``failed``...).
CASE_STATUSES = {
    "bad parameters": "build(**params) refused the parameters (ModelError, TypeError or ValueError).",
    "error": "building or tracing raised an exception; the message holds it.",
    "timeout": "the trace ran past case_timeout (checked after every point).",
}


def grid(**values) -> list[dict]:
    """Every combination of the given parameter values (a full factorial), in order.

    >>> grid(rise=[0.2, 0.4], load=[1, 2])
    [{'rise': 0.2, 'load': 1}, {'rise': 0.2, 'load': 2}, {'rise': 0.4, 'load': 1}, {'rise': 0.4, 'load': 2}]
    """
    if not values:
        raise ModelError("lr.grid needs at least one parameter, e.g. lr.grid(rise=[0.2, 0.4]).")
    lists = {}
    for name, v in values.items():
        if isinstance(v, (str, bytes)) or not hasattr(v, "__iter__"):
            raise TypeError(f"lr.grid: `{name}` must be a list of values, got {v!r}.")
        lists[name] = list(v)
        if not lists[name]:
            raise ModelError(f"lr.grid: `{name}` has no values.")
    names = list(lists)
    return [dict(zip(names, combo)) for combo in itertools.product(*lists.values())]


def default_summary(path, params: dict) -> dict:
    """One row of a path: status, message, points, the load factor of its first critical
    point (the peak a structure reaches by load) and of its first limit point and first
    bifurcation, final λ, the largest displacement with its node and DOF.

    A critical point whose search failed (``located`` False: its λ is only the midpoint
    of the two converged points around it) gives no load factor: its column is NaN and
    ``first_critical_located`` is False. Such a bracket is typically a long arc-length
    step that jumped across a sharp turn of the path (an imperfect structure near its
    perfect twin's bifurcation) onto a neighbouring branch; a smaller ``max_step``
    locates it (``benchmarks/imperfection_sensitivity.py`` retraces those cases).
    """
    row = {"status": path.status, "message": path.message, "points": len(path),
           "final_load_factor": float(path.load_factor[-1]) if len(path) else math.nan}
    crit = path.critical_points

    def load(c) -> float:
        return float(c.load_factor) if c.located else math.nan
    row["first_critical"] = load(crit[0]) if crit else math.nan
    row["first_critical_located"] = bool(crit[0].located) if crit else True
    for kind in ("limit", "bifurcation"):
        first = [c for c in crit if c.kind == kind]
        row[f"first_{kind}"] = load(first[0]) if first else math.nan
    u = path.u
    trans = np.zeros(u.shape[1], bool)
    trans[0::3] = trans[1::3] = True
    if len(path) and trans.any():
        mag = np.abs(u[:, trans])
        i, j = np.unravel_index(int(np.argmax(mag)), mag.shape)
        g = np.flatnonzero(trans)[j]
        row.update(max_displacement=float(u[i, g]), max_node=int(g // 3),
                   max_dof=("ux", "uy")[g % 3])
    else:
        row.update(max_displacement=math.nan, max_node=-1, max_dof="")
    return row


def _case_file(store: Path, index: int, suffix: str) -> Path:
    return store / f"case-{index:05d}{suffix}"


def _write_json(target: Path, data: dict) -> None:
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", dir=target.parent)
    with os.fdopen(fd, "w") as f:
        json.dump(data, f, default=_plain)
    os.replace(tmp, target)


def _plain(x):
    if isinstance(x, np.generic):
        return x.item()
    raise TypeError(f"not JSON: {x!r}")


def run_case(build: Callable, params: dict, control, summary: Callable | None, trace_options: dict,
             case_timeout: float | None, store: str | None, index: int) -> dict:
    """Build, trace and summarise one case (runs wherever the executor puts it)."""
    from .solvers.controls import iterate
    from .storage import save
    t0 = time.perf_counter()
    try:
        structure = build(**params)
    except (ModelError, TypeError, ValueError) as exc:
        return {"status": "bad parameters", "message": f"{type(exc).__name__}: {exc}",
                "wall_time": time.perf_counter() - t0}
    except Exception as exc:
        return {"status": "error", "message": f"{type(exc).__name__}: {exc}",
                "wall_time": time.perf_counter() - t0}
    try:
        options = dict(trace_options)
        max_steps = options.pop("max_steps", None)
        stop = options.pop("stop", None)
        stepper = control.stepper(structure, **options)
        timed_out = False
        for point in iterate(stepper, max_steps if max_steps is not None else 500):
            if stepper.running and stop is not None and stop(point):
                stepper.finish("stopped")
            if stepper.running and case_timeout is not None and time.perf_counter() - t0 > case_timeout:
                stepper.finish("interrupted")
                timed_out = True
        path = stepper.result()
        row = (default_summary if summary is None else summary)(path, dict(params))
        if not isinstance(row, dict):
            raise TypeError(f"`summary` must return a dict, got {type(row).__name__}.")
        if timed_out:
            row = {**row, "status": "timeout",
                   "message": f"Stopped after {case_timeout:g} s (case_timeout) at point {len(path) - 1}."}
        if store is not None:
            save(path, _case_file(Path(store), index, ".lr"))
    except Exception as exc:
        return {"status": "error", "message": f"{type(exc).__name__}: {exc}",
                "wall_time": time.perf_counter() - t0}
    row["wall_time"] = time.perf_counter() - t0
    return row


def run_cases(build: Callable, batch: list, control, summary: Callable | None, trace_options: dict,
              case_timeout: float | None, store: str | None) -> list:
    """Run a batch of cases, ``[(index, params), ...]``, one after the other; returns
    ``[(index, row), ...]``. The unit shipped to an executor: one task per batch, not
    per case."""
    return [(i, run_case(build, params, control, summary, trace_options, case_timeout, store, i))
            for i, params in batch]


def _n_workers(executor) -> int:
    """Cases the executor runs at once: a Dask client's threads, a pool's workers."""
    try:
        if _is_dask_client(executor):
            return max(1, sum(executor.nthreads().values()))
        return max(1, int(getattr(executor, "_max_workers", None) or os.cpu_count() or 1))
    except Exception:                       # an executor that cannot say: treat as one
        return 1


def _batch_size(remaining: int, n_workers: int, case_seconds: float | None) -> int:
    """Cases in the next batch: about BATCH_SECONDS of work once a case's duration is
    known (one case until then), and never more than a share of what remains, so the
    batches shrink toward the end and the workers finish together (guided scheduling).

    >>> _batch_size(200, 2, 0.08), _batch_size(200, 2, None), _batch_size(10, 2, 0.08)
    (12, 1, 3)
    """
    share = max(1, math.ceil(remaining / (BATCHES_PER_WORKER * n_workers)))
    if case_seconds is None:
        return 1
    return max(1, min(share, int(BATCH_SECONDS / max(case_seconds, 1e-6))))


def _run_batched(executor, submit, wait_first, todo: list, args_of, done) -> None:
    """Keep BATCHES_PER_WORKER batches per worker in flight until ``todo`` is done,
    each sized by :func:`_batch_size` from the cases' measured wall times."""
    n_workers = _n_workers(executor)
    queue = list(todo)
    pending: dict = {}
    times: list = []
    for _ in range(len(todo) + 1):           # every pass submits or completes >= 1 case
        while queue and len(pending) < BATCHES_PER_WORKER * n_workers:
            mean = float(np.mean(times)) if times else None
            n = _batch_size(len(queue), n_workers, mean)
            batch, queue = queue[:n], queue[n:]
            pending[submit(args_of(batch))] = batch
        if not pending:
            return
        for fut in wait_first(list(pending)):
            batch = pending.pop(fut)
            for i, row in _batch_result(fut, batch):
                if np.isfinite(row.get("wall_time", math.nan)):
                    times.append(row["wall_time"])
                done(i, row)


def _is_dask_client(executor) -> bool:
    return type(executor).__module__.split(".")[0] == "distributed" and hasattr(executor, "gather")


def sweep(build: Callable, cases, control, *, summary: Callable | None = None, executor=None,
          progress: bool = True, store=None, case_timeout: float | None = None,
          **trace_options):
    """Trace one structure per parameter set and tabulate the results.

    Parameters
    ----------
    build : callable
        ``build(**params) -> Structure``.
    cases : list of dict
        Parameter sets, e.g. ``lr.grid(rise=[...], amplitude=[...])``.
    control : by_load, by_displacement or by_arc_length
        How every case is traced.
    summary : callable, optional
        ``summary(path, params) -> dict``, the row of a case (default
        :func:`default_summary`).
    executor : None, concurrent.futures.Executor or distributed.Client
        Where the cases run (module docstring).
    progress : bool
        A progress bar of cases done (``tqdm.auto``: in notebooks and terminals).
    store : str or path, optional
        A folder: each case's path (``case-00012.lr``) and row (``.json``) are saved
        there, and cases already stored with the same parameters are not run again.
    case_timeout : float, optional
        Seconds after which a case stops (checked after every point; one step is not
        interrupted) and becomes a ``"timeout"`` row.
    **trace_options
        Passed to the trace: ``target_load_factor``, ``max_steps``, ``stop``, ``tol``...

    Returns
    -------
    pandas.DataFrame
        One row per case, in case order: the parameters, then the summary columns and
        ``wall_time``. Statuses: the trace's own, or those of :data:`CASE_STATUSES`.
    """
    import pandas as pd
    from tqdm.auto import tqdm

    from .solvers.controls import StepControl
    if not callable(build):
        raise TypeError(f"`build` must be a function returning a Structure, got {build!r}.")
    if not isinstance(control, StepControl):
        raise TypeError(f"`control` must be lr.by_load(...), lr.by_displacement(...) or "
                        f"lr.by_arc_length(...), got {control!r}.")
    cases = list(cases)
    for i, c in enumerate(cases):
        if not isinstance(c, dict):
            raise TypeError(f"Case {i} must be a dict of parameters, got {c!r}.")
    if case_timeout is not None and not (isinstance(case_timeout, (int, float)) and case_timeout > 0):
        raise ModelError(f"`case_timeout` must be a positive number of seconds, got {case_timeout!r}.")
    folder = None
    if store is not None:
        folder = Path(store)
        folder.mkdir(parents=True, exist_ok=True)
    rows: list = [None] * len(cases)
    todo = []
    for i, params in enumerate(cases):
        if folder is not None and _case_file(folder, i, ".json").exists():
            saved = json.loads(_case_file(folder, i, ".json").read_text())
            if saved.get("params") == json.loads(json.dumps(params, default=_plain)):
                rows[i] = saved["row"]
                continue
        todo.append(i)
    store_arg = None if folder is None else str(folder)

    def args(i: int) -> tuple:
        return build, cases[i], control, summary, trace_options, case_timeout, store_arg, i

    def batch_args(batch: list) -> tuple:
        return build, [(i, cases[i]) for i in batch], control, summary, trace_options, case_timeout, store_arg
    bar = tqdm(total=len(cases), initial=len(cases) - len(todo), desc="cases", unit="case",
               disable=not progress)

    def done(i, row):
        rows[i] = row
        if folder is not None:
            _write_json(_case_file(folder, i, ".json"), {"params": cases[i], "row": row})
        bar.update(1)
        bar.set_postfix_str(f"last: {row.get('status')}")

    try:
        if executor is None:
            for i in todo:
                done(i, run_case(*args(i)))
        elif _is_dask_client(executor):
            import distributed
            _run_batched(executor, lambda a: executor.submit(run_cases, *a, pure=False),
                         lambda fs: distributed.wait(fs, return_when="FIRST_COMPLETED").done,
                         todo, batch_args, done)
        elif isinstance(executor, concurrent.futures.Executor):
            _run_batched(executor, lambda a: executor.submit(run_cases, *a),
                         lambda fs: concurrent.futures.wait(fs, return_when="FIRST_COMPLETED").done,
                         todo, batch_args, done)
        else:
            raise TypeError(f"`executor` must be None, a concurrent.futures.Executor or a Dask "
                            f"distributed.Client, got {executor!r}.")
    finally:
        bar.close()
    params_frame = pd.DataFrame(cases, index=range(len(cases)))
    summary_frame = pd.DataFrame([r if r is not None else {"status": "not run"} for r in rows],
                                 index=range(len(cases)))
    return pd.concat([params_frame, summary_frame], axis=1)


def _batch_result(fut, batch: list) -> list:
    """A batch's ``(index, row)`` pairs; a worker lost or a result that cannot come back
    makes every case of the batch an error row."""
    try:
        return fut.result()
    except Exception as exc:
        row = {"status": "error", "message": f"{type(exc).__name__}: {exc}", "wall_time": math.nan}
        return [(i, dict(row)) for i in batch]
