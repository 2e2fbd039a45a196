"""The built-in demo runs end to end and writes its figure."""
import subprocess
import sys

import pytest


def test_demo_command_prints_table_and_writes_png(tmp_path):
    png = tmp_path / "demo.png"
    out = subprocess.run([sys.executable, "-m", "largerot", "demo", "--png", str(png)],
                         capture_output=True, text=True, check=True).stdout
    assert "tip ux" in out and "status: target" in out
    assert "licensed" in out
    assert png.stat().st_size > 10_000


def test_mast_demo_leeward_guy_goes_slack_and_stiffness_halves():
    # Horizontal stiffness of a taut guy at the mast top: EA·cos²α/L_guy (common
    # practice, no source; small displacements, pretension effects of order T/EA).
    # Both guys act until the leeward one goes slack; then only the windward one.
    import numpy as np

    import largerot as lr
    from largerot.demo import guyed_mast

    s, nodes = guyed_mast()
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=6.0)
    assert path.status == "target"
    slack = path.slack[:, 1]
    assert not slack[0] and slack[-1] and not path.slack[:, 0].any()
    lam, ux = path.load_factor, path.displacement(nodes["top"], "ux")
    k_both = 10e3 * (lam[4] - lam[1]) / (ux[4] - ux[1])
    k_one = 10e3 * (lam[-1] - lam[-4]) / (ux[-1] - ux[-4])
    L = np.hypot(15.0, 30.0)
    k_guy = 160e9 * 4e-4 * (15.0 / L) ** 2 / L
    assert k_both == pytest.approx(2 * k_guy, rel=0.05)
    assert k_one == pytest.approx(k_guy, rel=0.05)
    assert "slack" in lr.demo.run_mast_demo(png=None)
