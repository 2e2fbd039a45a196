"""The documentation says what the code does: README snippets run as the demos they name,
notebooks hold no corrupted characters, the README tells how to open the notebooks."""
import ast
import json
import pathlib
import re

import numpy as np
import pytest

import largerot as lr
from largerot import demo

ROOT = pathlib.Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")
NOTEBOOKS = sorted((ROOT / "notebooks").glob("*.ipynb"))


def _python_blocks(text: str) -> list[str]:
    return re.findall(r"```python\n(.*?)```", text, flags=re.S)


@pytest.mark.parametrize("nb", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_cells_hold_no_control_characters(nb):
    # A LaTeX "\approx" or "\theta" written through a non-raw string becomes BEL or TAB.
    for i, cell in enumerate(json.loads(nb.read_text(encoding="utf-8"))["cells"]):
        src = "".join(cell["source"])
        bad = sorted({hex(ord(c)) for c in src if ord(c) < 32 and c != "\n"})
        assert not bad, f"{nb.name} cell {i} ({cell['cell_type']}) holds control characters {bad}"


def _documentation_texts():
    yield "README.md", README
    for name in ("DEVELOPERS.md",):
        yield name, (ROOT / name).read_text(encoding="utf-8")
    for p in sorted((ROOT / "docs").glob("*.md")):
        yield str(p.relative_to(ROOT)), p.read_text(encoding="utf-8")
    for nb in NOTEBOOKS:
        cells = json.loads(nb.read_text(encoding="utf-8"))["cells"]
        yield nb.name, "\n".join("".join(c["source"]) for c in cells)
    for p in sorted((ROOT / "largerot").rglob("*.py")):
        yield str(p.relative_to(ROOT)), p.read_text(encoding="utf-8")


def test_no_secant_form_of_equilibrium_is_claimed():
    # A corotational code solves the residual f_int(u) = λ·F_ref + F_const(u), not a
    # secant K(u)·u = F(u) (issue 16).
    for name, text in _documentation_texts():
        assert not re.search(r"K\(u\)\s*[·*]\s*u\s*=", text), name
    assert "f_int(u) = λ·F_ref + F_const(u)" in README


def test_readme_says_how_to_get_widgets_and_open_the_notebooks():
    assert 'pip install -e ".[lab]" && jupyter lab notebooks/' in README
    import tomllib
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    assert any(r.startswith("jupyterlab") for r in meta["optional-dependencies"]["lab"])
    assert any(r.startswith("anywidget") for r in meta["dependencies"])


def test_readme_lean_snippet_is_the_lean_demo():
    # The snippet the README says `python -m largerot demo lean` runs must build the
    # same structure and end where the demo ends, with the events it states.
    block = next(b for b in _python_blocks(README) if 'by_displacement(top, "ux", 0.05)' in b)
    scope = {"lr": lr}
    exec(compile(block, "README lean snippet", "exec"), scope)
    path = scope["path"]

    s, nodes, _ = demo.leaning_pole()
    top = nodes["top"]
    ref = lr.trace(s, lr.by_displacement(top, "ux", 0.05),
                   events=[demo.TopTravel(top, demo.LEAN_TOP_TRAVEL)], max_steps=demo.LEAN_MAX_STEPS)
    assert scope["s"].snapshot().n_nodes == s.snapshot().n_nodes
    np.testing.assert_array_equal(scope["s"].xy, s.xy)
    assert path.status == ref.status == "event"
    np.testing.assert_allclose(path.load_factor, ref.load_factor, rtol=1e-12, atol=1e-12)
    assert [e.kind for e in path.events][:-1] == [e.kind for e in ref.events][:-1]
    np.testing.assert_allclose([e.load_factor for e in path.events],
                               [e.load_factor for e in ref.events], rtol=1e-9)
    # the result the README prints in its comment
    said = re.search(r"# (\[\('first yield'.*?\])", block).group(1)
    assert ast.literal_eval(said) == [(e.kind, round(e.load_factor, 2)) for e in path.events]
