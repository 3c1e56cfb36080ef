"""The public face: every name in __all__ exists, the engine imports no UI, and the examples
in docs/api.md run."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

import engine.api as api

ROOT = Path(__file__).resolve().parent.parent


def test_all_names_exist():
    for name in api.__all__:
        assert hasattr(api, name), name


def _imports(tree: ast.AST):
    """Every module an import statement names, at any depth (inside functions, ``if``,
    ``try``...), as (line, module); relative imports as written (``..x``)."""
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                yield node.lineno, a.name
        elif isinstance(node, ast.ImportFrom):
            yield node.lineno, "." * node.level + (node.module or "")
        elif (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute | ast.Name)
              and getattr(node.func, "attr", getattr(node.func, "id", "")) in (
                  "import_module", "__import__")
              and node.args and isinstance(node.args[0], ast.Constant)):
            yield node.lineno, str(node.args[0].value)


def _is_ui(module: str) -> bool:
    top = module.split(".")[0]
    return top in ("tui", "textual", "textual_plot", "textual_hires_canvas")


def test_engine_has_no_ui_imports():
    """The engine never imports the interface: every import in every engine module, indented
    (lazy, in a function) or not, and importlib calls with a literal name."""
    for path in (ROOT / "engine").rglob("*.py"):
        for line, m in _imports(ast.parse(path.read_text())):
            assert not _is_ui(m), f"{path}:{line}: imports {m}"


def test_the_layering_check_sees_indented_imports():
    code = ("def f():\n    if True:\n        from tui.app import make_app\n"
            "def g():\n    import importlib\n    importlib.import_module('tui.command')\n")
    found = [m for _, m in _imports(ast.parse(code)) if _is_ui(m)]
    assert found == ["tui.app", "tui.command"]


def test_only_the_sky_module_imports_skyfield():
    for path in (ROOT / "engine").rglob("*.py"):
        if path.name == "sky.py":
            continue
        assert not re.search(r"^\s*(from|import) skyfield", path.read_text(), re.M), path


EXAMPLES = re.findall(r"```python\n(.*?)```", (ROOT / "docs" / "api.md").read_text(), re.S)


@pytest.mark.parametrize("code", EXAMPLES, ids=[f"example{i}" for i in range(len(EXAMPLES))])
def test_docs_examples_run(code, monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    exec(compile(code, "docs/api.md", "exec"), {"__name__": "docs_example"})
    assert capsys.readouterr().out or "assert" in code


def test_format_doc_example_is_a_working_train():
    from engine.kinematics import solve
    from engine.loader import parse_train
    from engine.readout import backward_warnings

    text = (ROOT / "docs" / "train-format.md").read_text()
    block = re.search(r"```toml\n(.*?)```", text, re.S).group(1)
    train = parse_train(block, "docs/train-format.md")
    kin = solve(train)
    assert backward_warnings(train, kin) == []
