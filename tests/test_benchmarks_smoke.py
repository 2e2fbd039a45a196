"""Smoke test of the benchmark suite: ``benchmarks/run.py --quick`` runs and writes its JSON.

No timing is asserted; the figures are for the README, measured by hand.
"""
import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SECTIONS = ["machine", "goals", "iteration", "baseline", "scaling", "conditioning", "efficiency",
            "latency", "build", "memory"]


def test_quick_benchmark_writes_results(tmp_path):
    out = tmp_path / "results.json"
    proc = subprocess.run([sys.executable, str(ROOT / "benchmarks" / "run.py"), "--quick",
                           "--json", str(out)], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    res = json.loads(out.read_text())
    assert res["mode"] == "quick"
    for key in SECTIONS:
        assert key in res, key
    for row in res["iteration"]:
        assert {"model", "n_elements", "kernel_s", "scatter_s", "factorize_s", "floor_s",
                "iteration_s", "ratio"} <= set(row)
    assert {"speedup", "tip_relative_difference"} <= set(res["baseline"][0])
    # the baseline is a check of the mechanics too: it must reproduce largerot's tip
    assert all(r["tip_relative_difference"] < 1e-8 for r in res["baseline"])
    assert "exponent" in res["scaling"]
    assert res["memory"]["path_shares_snapshot"] is True
    # the memory figures are the child's own (its VmHWM), never below what it started with
    m = res["memory"]
    assert m["interpreter_MB"] <= m["peak_model_MB"] <= m["peak_trace_MB"]
    assert {"build_s", "first_build_s", "iteration_s", "ratio"} <= set(res["build"])
    assert "Newton iteration" in proc.stdout


def test_point_cost_accounts_for_every_part_of_a_point():
    """``benchmarks/point_cost.py`` finds every part it times in the trace: a renamed
    solver method would otherwise drop out of the accounting silently."""
    proc = subprocess.run([sys.executable, str(ROOT / "benchmarks" / "point_cost.py")],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    for part in ("evaluation", "refactorisation", "solve", "chord fit", "arc-length constraint",
                 "Newton", "predictor", "inertia", "point record", "doubling-back guard", "step"):
        assert part in proc.stdout, part
