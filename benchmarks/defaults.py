"""Path following with default options only, as a new user would trace.

    python benchmarks/defaults.py                      # every case, markdown table to stdout
    python benchmarks/defaults.py --quick              # a small subset (CI smoke test, < 60 s)
    python benchmarks/defaults.py --case truss --out DEFAULTS.md --json raw.json

Each standard problem of ``default_cases.py`` is traced with every control that
applies, each with its default options: ``lr.by_load(step)`` (a step is required:
the case says which), ``lr.by_displacement(node, dof, step)`` where a natural DOF
exists, and ``lr.by_arc_length(constraint=...)`` with each of the four constraints.
Every run goes to a forked subprocess with a timeout (a run that times out is a
*hang*). Only the public API is used.

Per run: status, points, step cuts, mean Newton iterations per point, wall time,
whether the goal (target or stop) was reached, the largest relative error against
the case's reference, and three signs of trouble (module constants below):

* **stall** — ``STALL_WINDOW`` successive increments that together move less than
  ``STALL_SHARE`` of the path's extent, or points that repeat;
* **hidden snap** — an increment whose displacement per unit of the control grows
  ``JUMP_FACTOR``-fold over the previous increments with no critical point or
  ``"snap"`` event reported between them while the path misses its reference (load
  and displacement control: a steep stretch that stays on the reference path, like
  an imperfect column near its Euler load, is not a snap), or the count of negative
  eigenvalues changing with no critical point;

Goal: the target or stop was reached; for load control on a problem with a limit
point, a stop with status ``"limit"`` at a located limit point is the right answer
(load control cannot pass it) and counts as reaching the goal.
* **doubling back** — an increment nearly opposite to the one before it
  (cosine < ``BACK_COSINE`` in the scaled (u, λ) space).

The benchmark reports failures; it does not fail on them (exit code 0).
"""
from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import argparse  # noqa: E402
import datetime  # noqa: E402
import json  # noqa: E402
import multiprocessing as mp  # noqa: E402
import platform  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
import traceback  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
# this checkout's largerot, not whichever one is installed
sys.path.insert(0, str(HERE.parent))

import largerot as lr  # noqa: E402

import default_cases  # noqa: E402

#: Cap on the points of every trace, so that nothing runs forever.
MAX_STEPS = 600
#: Seconds a run may take before it counts as a hang.
TIMEOUT = 60.0
#: Stall: this many successive increments moving together less than STALL_SHARE of
#: the path's extent (in u and λ scaled by their largest values along the path).
STALL_WINDOW, STALL_SHARE = 20, 1e-3
#: Two points closer than this (same scaled measure) repeat each other.
REPEAT_SHARE = 1e-10
#: Hidden snap: displacement per unit control this many times the previous steps'.
JUMP_FACTOR = 10.0
#: Doubling back: successive increments with a cosine below this.
BACK_COSINE = -0.5
#: Goals of the summary.
GOALS = {"failures": 0, "stalls": 0, "hangs": 0, "hidden_snaps": 0,
         "cuts_per_20_points": 1.0, "iterations_per_point": 4.0}
#: The quick subset (CI smoke test): case -> controls.
QUICK = {"two_bar_truss": None, "elastica": ("load", "cylindrical"),
         "pinned_triangle": ("load",)}
CONSTRAINTS = ("cylindrical", "spherical", "normal-plane", "updated-normal-plane")


def controls_of(setup) -> list[str]:
    out = []
    if setup.load_step is not None:
        out.append("load")
    if setup.disp is not None:
        out.append("displacement")
    if setup.arc:
        out.extend(CONSTRAINTS)
    return out


def make_control(setup, name):
    if name == "load":
        return lr.by_load(setup.load_step)
    if name == "displacement":
        node, dof, step = setup.disp
        return lr.by_displacement(node, dof, step)
    return lr.by_arc_length(constraint=name)


# -- measures of a path ---------------------------------------------------------------
def _scaled(path):
    """Points in (u, λ) scaled by their largest magnitude along the path, shape (n, m+1)."""
    u = path.u
    U = np.abs(u).max() or 1.0
    lam = path.load_factor
    L = np.abs(lam).max() or 1.0
    return np.column_stack([u / U, lam / L])


def path_measures(path, control) -> dict:
    n = len(path)
    out = {"stall": False, "repeats": 0, "hidden_snap": 0, "snap_at": None, "doubling_back": 0}
    if n < 3:
        return out
    x = _scaled(path)
    dx = np.diff(x, axis=0)
    d = np.linalg.norm(dx, axis=1)
    out["repeats"] = int(np.count_nonzero(d < REPEAT_SHARE))
    if n > STALL_WINDOW:
        window = np.convolve(d, np.ones(STALL_WINDOW), "valid")
        out["stall"] = bool(window.min() < STALL_SHARE) or out["repeats"] > 0
    else:
        out["stall"] = out["repeats"] > 0
    crit = {c.index for c in path.critical_points} | {e.index for e in path.events if e.kind == "snap"}
    du = np.linalg.norm(np.diff(path.u, axis=0), axis=1)
    if control == "load":
        dc = np.abs(np.diff(path.load_factor))
    elif control == "displacement":
        dc = None
    else:
        dc = None
    snaps = []
    if dc is not None:
        rate = du / np.maximum(dc, 1e-300)
        for i in range(2, len(rate)):
            before = max(rate[i - 1], rate[i - 2])
            if rate[i] > JUMP_FACTOR * before and not ({i - 2, i - 1, i} & crit):
                snaps.append(i)
    steep = list(snaps)
    nn = path.n_negative
    for i in range(1, n):
        if nn[i] != nn[i - 1] and (i - 1) not in crit:
            snaps.append(i - 1)
    out["hidden_snap"] = len(set(snaps))
    out["steep_only"] = bool(snaps) and set(snaps) == set(steep)
    out["snap_at"] = (float(path.load_factor[min(snaps)]) if snaps else None)
    if control in CONSTRAINTS:
        cos = np.einsum("ij,ij->i", dx[1:], dx[:-1]) / np.maximum(d[1:] * d[:-1], 1e-300)
        out["doubling_back"] = int(np.count_nonzero((cos < BACK_COSINE) & (d[1:] > REPEAT_SHARE)
                                                    & (d[:-1] > REPEAT_SHARE)))
    return out


# -- one run, in a child process -------------------------------------------------------
def _run_one(case: str, control: str, conn) -> None:
    out = {"case": case, "control": control}
    t0 = time.perf_counter()
    try:
        setup = default_cases.CASES[case]()
        t_build = time.perf_counter()
        ctrl = make_control(setup, control)
        path = lr.trace(setup.structure, ctrl, target_load_factor=setup.target,
                        stop=setup.stop, max_steps=MAX_STEPS)
        wall = time.perf_counter() - t_build
        it = path.iterations[1:]
        goal = path.status in ("target", "stopped") or (
            path.status == "limit" and any(c.kind == "limit" and c.located for c in path.critical_points))
        out.update(status=path.status, message=path.message, points=len(path),
                   step_cuts=int(path.counters.get("step_cuts", 0)),
                   iterations_per_point=float(it.mean()) if len(it) else float("nan"),
                   iterations=int(it.sum()), wall_s=wall, goal=bool(goal),
                   lam_last=float(path.load_factor[-1]), lam_max=float(path.load_factor.max()),
                   critical=[(c.kind, round(float(c.load_factor), 6)) for c in path.critical_points])
        out.update(path_measures(path, control))
        if setup.expect_error:
            out.update(ref_error=float("inf"), ref_note="expected a ModelError, traced instead",
                       matched=False)
        else:
            err, note = setup.check(path)
            out.update(ref_error=float(err), ref_note=note, tol=setup.tol,
                       matched=bool(np.isfinite(err) and err <= setup.tol) if np.isfinite(err) or np.isinf(err)
                       else None)
            if out["matched"] and out.get("steep_only"):
                out["hidden_snap"], out["snap_at"] = 0, None      # steep, on the reference path
    except lr.ModelError as exc:
        wall = time.perf_counter() - t0
        setup = default_cases.CASES[case]()
        expected = bool(setup.expect_error and setup.expect_error in str(exc))
        out.update(status="expected error" if expected else "error", message=str(exc),
                   points=0, step_cuts=0, iterations_per_point=float("nan"), iterations=0,
                   wall_s=wall, goal=expected, matched=expected,
                   ref_error=0.0 if expected else float("nan"), ref_note="ModelError")
    except Exception as exc:  # a crash is a result here, not the benchmark's failure
        out.update(status="exception", message=f"{type(exc).__name__}: {exc}",
                   traceback=traceback.format_exc(limit=4), points=0, step_cuts=0,
                   iterations_per_point=float("nan"), iterations=0,
                   wall_s=time.perf_counter() - t0, goal=False, matched=False,
                   ref_error=float("nan"), ref_note="")
    conn.send(out)
    conn.close()


def run_in_child(case: str, control: str, timeout: float) -> dict:
    ctx = mp.get_context("fork")
    recv, send = ctx.Pipe(duplex=False)
    proc = ctx.Process(target=_run_one, args=(case, control, send), daemon=True)
    t0 = time.perf_counter()
    proc.start()
    send.close()
    if recv.poll(timeout):
        try:
            res = recv.recv()
        except EOFError:
            res = None
    else:
        res = None
    proc.join(1.0)
    if proc.is_alive():
        proc.kill()
        proc.join()
    if res is None:
        hang = time.perf_counter() - t0 >= timeout
        res = {"case": case, "control": control,
               "status": "hang" if hang else "crash",
               "message": f"no answer within {timeout:g} s" if hang else f"exit code {proc.exitcode}",
               "points": 0, "step_cuts": 0, "iterations_per_point": float("nan"), "iterations": 0,
               "wall_s": time.perf_counter() - t0, "goal": False, "matched": False,
               "ref_error": float("nan"), "ref_note": ""}
    return res


# -- report ---------------------------------------------------------------------------
def _fmt(x, spec):
    if x is None or (isinstance(x, float) and not np.isfinite(x)):
        return "–" if x is None or np.isnan(x) else "∞"
    return format(x, spec)


def is_failure(r):
    return r["status"] in ("failed", "error", "exception", "crash")


def summary(results) -> dict:
    traced = [r for r in results if r.get("points", 0) > 0]
    pts = sum(max(r["points"] - 1, 0) for r in traced)
    cuts = sum(r["step_cuts"] for r in traced)
    its = sum(r["iterations"] for r in traced)
    return {
        "runs": len(results),
        "failures": sum(is_failure(r) for r in results),
        "hangs": sum(r["status"] == "hang" for r in results),
        "stalls": sum(bool(r.get("stall")) for r in results),
        "hidden_snaps": sum(bool(r.get("hidden_snap")) for r in results),
        "doubling_back": sum(bool(r.get("doubling_back")) for r in results),
        "goal_missed": sum(not r["goal"] for r in results),
        "reference_mismatch": sum(r.get("matched") is False for r in results),
        "cuts_per_20_points": 20.0 * cuts / pts if pts else float("nan"),
        "iterations_per_point": its / pts if pts else float("nan"),
        "runs_over_4_iterations": sum(r["iterations_per_point"] > 4.0 for r in traced),
        "wall_s": sum(r["wall_s"] for r in results),
    }


def markdown(results, summ, command) -> str:
    met = lambda ok: "met" if ok else "**not met**"  # noqa: E731
    lines = [f"Command: `{command}`  ", f"Date: {datetime.date.today().isoformat()}; machine: "
             f"{platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}, "
             f"numpy {np.__version__}; largerot {lr.__version__}; timeout {TIMEOUT:g} s, "
             f"max_steps {MAX_STEPS}.", "",
             "| measure | goal | measured | |", "|---|---:|---:|---|"]
    for key in ("failures", "stalls", "hangs", "hidden_snaps"):
        lines.append(f"| {key.replace('_', ' ')} | 0 | {summ[key]} | {met(summ[key] == 0)} |")
    c, i = summ["cuts_per_20_points"], summ["iterations_per_point"]
    lines.append(f"| step cuts per 20 points | ≤ 1 | {c:.2f} | {met(c <= 1.0)} |")
    lines.append(f"| Newton iterations per point | ≤ 4 | {i:.2f} | {met(i <= 4.0)} |")
    lines += ["", f"Runs {summ['runs']}; goal missed {summ['goal_missed']}; reference mismatch "
              f"{summ['reference_mismatch']}; doubling back {summ['doubling_back']}; runs over 4 "
              f"iterations per point {summ['runs_over_4_iterations']}; total time {summ['wall_s']:.0f} s.",
              "", "| case | control | status | pts | cuts | it/pt | time s | goal | ref err (tol) | "
              "stall | snap | back | message |",
              "|---|---|---|---:|---:|---:|---:|---|---|---|---|---|---|"]
    for r in results:
        msg = (r.get("message") or "").replace("|", "/").replace("\n", " ")
        if len(msg) > 90:
            msg = msg[:87] + "..."
        tol = r.get("tol")
        ref = _fmt(r.get("ref_error"), ".2e") + (f" ({tol:.0e})" if tol else "")
        if r.get("matched") is False:
            ref = f"**{ref}**"
        snap = r.get("hidden_snap", 0)
        snap_s = (f"**{snap}** (λ={r['snap_at']:.3g})" if snap and r.get("snap_at") is not None
                  else (f"**{snap}**" if snap else ""))
        lines.append(
            f"| {r['case']} | {r['control']} | {r['status'] if not is_failure(r) and r['status'] != 'hang' else '**' + r['status'] + '**'}"
            f" | {r['points']} | {r['step_cuts']} | {_fmt(r['iterations_per_point'], '.2f')}"
            f" | {r['wall_s']:.1f} | {'yes' if r['goal'] else '**no**'} | {ref}"
            f" | {'**yes**' if r.get('stall') else ''} | {snap_s}"
            f" | {('**' + str(r['doubling_back']) + '**') if r.get('doubling_back') else ''} | {msg} |")
    return "\n".join(lines) + "\n"


def main(argv=None) -> int:
    global TIMEOUT
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small subset (CI smoke test)")
    ap.add_argument("--case", action="append", help="only cases whose name contains this")
    ap.add_argument("--control", action="append", help="only these controls")
    ap.add_argument("--out", help="write the markdown table to this file")
    ap.add_argument("--json", help="write the raw results to this file")
    ap.add_argument("--timeout", type=float, default=TIMEOUT, help="seconds per run")
    args = ap.parse_args(argv)
    TIMEOUT = args.timeout
    plan = []
    for name, build in default_cases.CASES.items():
        if args.quick and name not in QUICK:
            continue
        if args.case and not any(c in name for c in args.case):
            continue
        ctrls = controls_of(build())
        if args.quick and QUICK[name]:
            ctrls = [c for c in ctrls if c in QUICK[name]]
        if args.control:
            ctrls = [c for c in ctrls if c in args.control]
        plan += [(name, c) for c in ctrls]
    results = []
    for name, c in plan:
        r = run_in_child(name, c, TIMEOUT)
        results.append(r)
        print(f"{name:20s} {c:22s} {r['status']:15s} {r['points']:4d} pts "
              f"{r['wall_s']:6.1f} s", file=sys.stderr, flush=True)
    summ = summary(results)
    command = "python benchmarks/defaults.py " + " ".join(argv if argv is not None else sys.argv[1:])
    table = markdown(results, summ, command.strip())
    print(table)
    if args.out:
        Path(args.out).write_text(table)
    if args.json:
        Path(args.json).write_text(json.dumps({"summary": summ, "goals": GOALS, "results": results,
                                               "mode": "quick" if args.quick else "full"},
                                              indent=1, default=str))
    return 0


if __name__ == "__main__":
    sys.exit(main())
