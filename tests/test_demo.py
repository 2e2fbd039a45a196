"""The built-in demo runs end to end and writes its figure."""
import subprocess
import sys


def test_demo_command_prints_table_and_writes_png(tmp_path):
    png = tmp_path / "demo.png"
    out = subprocess.run([sys.executable, "-m", "largerot", "demo", "--png", str(png)],
                         capture_output=True, text=True, check=True).stdout
    assert "tip ux" in out and "status: target" in out
    assert "licensed" in out
    assert png.stat().st_size > 10_000
