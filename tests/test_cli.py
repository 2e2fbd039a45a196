"""The command line lists every demo, and each demo ends on the goal it sets itself."""
import inspect
import subprocess
import sys

import pytest

import largerot.demo
from largerot.__main__ import DEMOS, main


def _help(*args) -> str:
    return subprocess.run([sys.executable, "-m", "largerot", *args, "--help"],
                          capture_output=True, text=True, check=True).stdout


def test_every_demo_function_has_a_cli_name():
    runners = {n for n, f in inspect.getmembers(largerot.demo, inspect.isfunction)
               if n.startswith("run_") and n.endswith("demo")}
    assert runners == {"run_demo", "run_mast_demo", "run_lean_demo"}
    assert set(DEMOS) == {"pole", "mast", "lean"}


@pytest.mark.parametrize("args", [(), ("demo",)])
def test_help_lists_every_demo(args):
    text = " ".join(_help(*args).split())         # argparse wraps lines
    for name, what in DEMOS.items():
        assert f"{name} ({what})" in text


def test_an_unknown_demo_is_refused_with_the_list(capsys):
    with pytest.raises(SystemExit):
        main(["demo", "tower"])
    assert "choose from 'pole', 'mast', 'lean'" in capsys.readouterr().err


def test_lean_demo_ends_on_its_event_not_on_a_step_count():
    out = largerot.demo.run_lean_demo(png=None)
    status = [line for line in out.splitlines() if line.startswith("status:")]
    assert status == ["status: event (ended as planned: the top has passed 2.4 m of travel "
                      "toward the wall, the event above)"]
    assert "max_steps" not in out and "maximum" not in out
    assert "top reaches ux = 2.4 m at load" in out
    # the last row is the first point past 2.4 m: within one 0.05 m step of it
    last = [line for line in out.splitlines() if line[:10].strip().replace(".", "").isdigit()][-1]
    assert 2.4 <= float(last.split()[1]) < 2.4 + 0.05 + 1e-9


@pytest.mark.parametrize("run", [largerot.demo.run_demo, largerot.demo.run_mast_demo])
def test_pole_and_mast_demos_end_on_their_target(run):
    assert "status: target (Reached the target load factor.)" in run(png=None)
