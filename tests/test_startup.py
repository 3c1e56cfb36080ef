"""What start-up imports, and the timescale built without skyfield's downloader.

Import cost is measured in ``bench/startup_speed.py``; these tests only check that the heavy
libraries a command does not use stay out of its process, each in a fresh interpreter.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from engine.cli import COMMANDS

HEAVY = ("sympy", "mpmath", "textual", "matplotlib", "ezdxf", "tomlkit")


def _modules_after(code: str) -> set[str]:
    """Names in sys.modules after running ``code`` in a fresh interpreter, with the top-level
    package of each."""
    probe = code + ("\nimport sys\n"
                     "print(' '.join({*sys.modules, *(m.split('.')[0] for m in sys.modules)}))")
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         check=True)
    return set(out.stdout.splitlines()[-1].split())


def test_drift_command_imports_no_heavy_library():
    # the whole command, run as a user runs it (demo train, JSON), in one process
    found = _modules_after(
        "import contextlib, io\nfrom engine.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    assert main(['drift', 'tide_office', '--years', '2', '--json']) == 0")
    assert not found & set(HEAVY), found & set(HEAVY)
    assert "skyfield" in found and "numpy" in found  # the probe did run the sky


def test_sky_needs_no_downloader():
    found = _modules_after("import engine.sky, engine.commands.drift")
    assert not found & {*HEAVY, "urllib.request", "ssl", "certifi", "skyfield.iokit"}, found


def test_help_imports_no_numpy():
    found = _modules_after(
        "import contextlib, io\nfrom engine.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    assert main(['--help']) == 0")
    assert not found & {*HEAVY, "numpy", "skyfield", "rich"}, found


@pytest.mark.parametrize("command", [*COMMANDS, "crank"])
def test_each_command_help_imports_no_numpy(command):
    # `wheelwork CMD --help` builds the command's parser only: the engine's computation (and
    # numpy, skyfield, rich with it) is imported when the command runs
    found = _modules_after(
        "import contextlib, io\nfrom engine.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()) as out:\n"
        f"    assert main([{command!r}, '--help']) == 0\n"
        f"assert out.getvalue().startswith('usage: wheelwork {command}'), out.getvalue()")
    assert not found & {*HEAVY, "numpy", "skyfield", "rich"}, found & {
        *HEAVY, "numpy", "skyfield", "rich"}


def test_timescale_is_skyfields_own():
    # the engine's timescale against skyfield's ``load.timescale(builtin=True)``: same ΔT and
    # leap seconds, from ancient dates through the leap-second era to beyond the tables
    from skyfield.api import load

    from engine.sky import _timescale

    ours, theirs = _timescale(), load.timescale(builtin=True)
    jd = np.linspace(1_000_000.5, 2_600_000.5, 4001)
    assert np.array_equal(ours.ut1_jd(jd).tt, theirs.ut1_jd(jd).tt)
    assert np.array_equal(ours.ut1_jd(jd).delta_t, theirs.ut1_jd(jd).delta_t)
    for y in (1972, 1999, 2017, 2024):
        assert ours.utc(y, 7, 1).tt == theirs.utc(y, 7, 1).tt


# a module's private names (a leading underscore) are its own: another module that needs one
# takes a public function instead (engine.kinematics.axis_groups, engine.checks.
# pin_slot_checks, engine.search.train_result, engine.loader.regular_file_bytes were private
# names imported elsewhere; the commands' Ctrl-C guard and duration words live in
# engine.commands.support, the interface's undo/redo key group is tui.screens.EDIT_KEYS).
PRIVATE_IMPORTS_LEFT: set = set()


def test_no_module_imports_another_modules_private_names():
    import ast

    root = Path(__file__).resolve().parent.parent
    found = set()
    for path in sorted([*(root / "engine").rglob("*.py"), *(root / "tui").rglob("*.py")]):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level > 0 and node.module:
                for alias in node.names:
                    if alias.name.startswith("_") and not alias.name.startswith("__"):
                        found.add((path.relative_to(root).as_posix(),
                                   node.module.split(".")[-1], alias.name))
    assert found == PRIVATE_IMPORTS_LEFT, sorted(found - PRIVATE_IMPORTS_LEFT)
