"""The README's first command (``pip install -e .``) installs all that the widgets import.

A static check of ``pyproject.toml`` against the source: every module that
``import largerot.widgets`` imports at module level — through every largerot module
it reaches — is the standard library, largerot itself, or the import name of one of
the *core* dependencies (not an extra). Transitive dependencies do not count: a
module imported directly is declared directly (common practice, no source). The
fresh-venv check of the same thing runs in ``.ci/run``.
"""
from __future__ import annotations

import ast
import pathlib
import re
import sys

import pytest

tomllib = pytest.importorskip("tomllib") if sys.version_info >= (3, 11) else pytest.importorskip("tomli")

ROOT = pathlib.Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "largerot"

#: Import names that differ from the distribution's name (common practice, no source).
IMPORT_NAMES = {"pillow": "PIL", "pyyaml": "yaml", "dask": "dask"}


def _distribution(requirement: str) -> str:
    """'anywidget>=0.9' -> 'anywidget'; 'dask[distributed]>=1' -> 'dask'."""
    return re.split(r"[\s\[<>=!~;]", requirement.strip(), maxsplit=1)[0].lower().replace("_", "-")


def core_import_names(pyproject: pathlib.Path = ROOT / "pyproject.toml") -> set[str]:
    """Top-level import names of the core dependencies declared in ``pyproject``."""
    deps = tomllib.loads(pyproject.read_text())["project"]["dependencies"]
    names = set()
    for d in map(_distribution, deps):
        names.add(IMPORT_NAMES.get(d, d.replace("-", "_")))
    return names


def _guards_import_error(node: ast.Try) -> bool:
    for h in node.handlers:
        caught = [h.type] if not isinstance(h.type, ast.Tuple) else list(h.type.elts)
        if any(isinstance(c, ast.Name) and c.id in ("ImportError", "ModuleNotFoundError")
               for c in caught):
            return True
    return False


def _module_level_imports(tree: ast.Module):
    """(absolute name or None, relative level, names) of imports run when the module loads.

    Imports inside functions or classes run later and are skipped; so are those under
    ``if TYPE_CHECKING`` and those in a ``try`` that catches ImportError (optional).
    """
    stack = list(tree.body)
    while stack:
        node = stack.pop()
        if isinstance(node, ast.Import):
            for a in node.names:
                yield a.name, 0, ()
        elif isinstance(node, ast.ImportFrom):
            yield node.module, node.level, tuple(a.name for a in node.names)
        elif isinstance(node, ast.If):
            test = ast.unparse(node.test)
            if "TYPE_CHECKING" not in test:
                stack.extend(node.body + node.orelse)
        elif isinstance(node, ast.Try) and not _guards_import_error(node):
            stack.extend(node.body + node.finalbody + node.orelse)


def _file_of(module: str) -> pathlib.Path | None:
    rel = pathlib.Path(*module.split("."))
    for cand in (ROOT / rel / "__init__.py", ROOT / rel.with_suffix(".py")):
        if cand.exists():
            return cand
    return None


def external_imports(start: str = "largerot.widgets") -> dict[str, set[str]]:
    """Top-level external module -> the largerot modules that import it, from ``start`` on.

    Follows every largerot module imported at module level (and its parent packages,
    which Python runs first).
    """
    found: dict[str, set[str]] = {}
    todo = ["largerot"] + [".".join(start.split(".")[:i]) for i in range(2, start.count(".") + 2)]
    seen: set[str] = set()
    for _ in range(10_000):                               # bound: far above the module count
        if not todo:
            break
        mod = todo.pop()
        if mod in seen:
            continue
        seen.add(mod)
        path = _file_of(mod)
        if path is None:
            continue
        package = mod if path.name == "__init__.py" else mod.rpartition(".")[0]
        for name, level, names in _module_level_imports(ast.parse(path.read_text())):
            if level:
                base = package.split(".")
                base = base[: len(base) - (level - 1)]
                target = ".".join(base + ([name] if name else []))
                todo.append(target)
                todo.extend(f"{target}.{n}" for n in names)   # `from . import data`
                continue
            top = name.split(".")[0]
            if top == "largerot":
                todo.append(name)
                todo.extend(f"{name}.{n}" for n in names)
            elif top != "__future__" and top not in sys.stdlib_module_names:
                found.setdefault(top, set()).add(mod)
    return found


def missing_core_dependencies(pyproject: pathlib.Path = ROOT / "pyproject.toml") -> dict[str, set[str]]:
    declared = core_import_names(pyproject)
    return {m: users for m, users in external_imports().items() if m not in declared}


def test_widgets_import_only_core_dependencies():
    missing = missing_core_dependencies()
    assert not missing, ("`import largerot.widgets` imports modules that `pip install -e .` does "
                         f"not install (add them to [project] dependencies): {missing}")


def test_the_walk_reaches_the_widget_modules_and_their_imports():
    # The walk must see what is known to be there, or the check above proves nothing.
    found = external_imports()
    assert {"anywidget", "ipywidgets", "traitlets", "numpy", "scipy", "matplotlib"} <= set(found)
    assert any(m.startswith("largerot.widgets.") for m in found["anywidget"])


def test_the_check_fails_without_anywidget_in_the_core(tmp_path):
    # The state of issue 16: anywidget only in the [lab] extra. The check must catch it.
    text = (ROOT / "pyproject.toml").read_text()
    head, core, tail = re.split(r"(?ms)(^dependencies = \[.*?^\])", text, maxsplit=1)
    broken = head + re.sub(r'(?m)^\s*"anywidget[^"]*",?\n', "", core) + tail
    assert broken != text
    (tmp_path / "pyproject.toml").write_text(broken)
    assert "anywidget" in missing_core_dependencies(tmp_path / "pyproject.toml")
