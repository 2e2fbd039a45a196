"""Smoke test of the defaults benchmark: ``benchmarks/defaults.py --quick`` runs, exits 0
and writes a table with a row per run and its JSON.

The benchmark reports failures of path following, it does not fail on them, so
nothing here checks the figures themselves; no timing is asserted.
"""
import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_quick_defaults_benchmark_writes_its_table(tmp_path):
    out, raw = tmp_path / "defaults.md", tmp_path / "defaults.json"
    proc = subprocess.run([sys.executable, str(ROOT / "benchmarks" / "defaults.py"), "--quick",
                           "--out", str(out), "--json", str(raw)],
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    table = out.read_text()
    assert table.strip() == proc.stdout.strip()
    res = json.loads(raw.read_text())
    assert res["mode"] == "quick" and res["results"]
    rows = [line for line in table.splitlines() if line.startswith("| ") and " | " in line]
    for r in res["results"]:                   # one table row per run, named by case and control
        assert any(line.startswith(f"| {r['case']} | {r['control']} |") for line in rows), r
    assert {"failures", "stalls", "hangs", "hidden_snaps", "cuts_per_20_points",
            "iterations_per_point"} <= set(res["summary"])
    # the mechanism case is in the quick subset: its ModelError is recorded, not raised
    assert any(r["case"] == "pinned_triangle" for r in res["results"])
