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


def test_engine_has_no_ui_imports():
    for path in (ROOT / "engine").rglob("*.py"):
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            if isinstance(node, ast.Import | ast.ImportFrom) and node.col_offset == 0:
                mods = [a.name for a in node.names] if isinstance(node, ast.Import) else [
                    node.module or ""]
                for m in mods:
                    assert not m.startswith(("textual", "tui")), f"{path}: imports {m}"


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
