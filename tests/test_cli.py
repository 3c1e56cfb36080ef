"""The command line as a whole: dispatch, negative-year dates, closed pipes, markup safety."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from engine.cli import main
from tests.test_loader import GOOD

ROOT = Path(__file__).resolve().parent.parent


def test_negative_year_dates_are_values_not_options(capsys):
    """-0100-03-01 is 101 BC in astronomical numbering; argparse must not take it for an
    option. DE421 does not reach it, so the answer is the out-of-span error (exit 1)."""
    assert main(["sky", "-0100-03-01"]) == 1
    err = capsys.readouterr().err
    assert "101 BC" in err and "outside JPL DE421" in err and "usage" not in err


def test_help_lists_every_command(capsys):
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for name in ("crank", "ratios", "drift", "search", "check", "sky"):
        assert name in out


def test_closed_pipe_is_not_an_error():
    cmd = (f"{sys.executable} -m engine ratios {ROOT / 'engine' / 'trains' / 'tide_office.toml'} "
           "| head -1")
    done = subprocess.run(["bash", "-o", "pipefail", "-c", cmd], capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert done.stdout.startswith("Tide office dial") and done.stderr == ""


def test_item_names_in_brackets_survive_the_console(tmp_path, capsys):
    train = tmp_path / "wrongway.toml"
    train.write_text(GOOD.replace("reversed = true\n", ""))  # a Moon hand turning backwards
    assert main(["ratios", str(train)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "[pointers.p]: turns backwards" in out


def test_drift_past_the_ephemeris_says_how_much(capsys):
    train = str(ROOT / "engine" / "trains" / "tide_office.toml")
    assert main(["drift", train, "--years", "50", "--step", "6h"]) == 1
    err = capsys.readouterr().err
    assert "22.2 years of the span 2026-01-01 to 2076-01-01 lie outside JPL DE421" in err
    assert err.count("\n") == 1


def test_impossible_site_is_a_usage_error_before_the_interface_opens(capsys):
    assert main(["crank", "--site", "95,0"]) == 2
    assert "impossible" in capsys.readouterr().err


# --- the entry point: exit codes, never SystemExit -------------------------------------------

DEMO = ROOT / "engine" / "trains"


@pytest.mark.parametrize("argv", [["--help"], ["--version"], ["ratios", "--help"],
                                  ["drift", "--help"], ["search", "--help"], ["check", "--help"],
                                  ["sky", "--help"], ["crank", "--help"]])
def test_help_and_version_return_0_without_system_exit(argv, capsys):
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert out.strip()


def test_version_names_the_package(capsys):
    from importlib.metadata import version

    assert main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"wheelwork {version('wheelwork')}"


@pytest.mark.parametrize("argv, words", [
    (["search", "--cycle", "synodic month", "--top", "0"], "--top"),
    (["search", "--cycle", "synodic month", "--stages", "9"], "outside 1-4"),
    (["search", "--cycle", "synodic month", "--max-prime", "1"], "--max-prime"),
    (["nosuch"], "unknown command"),
    (["--nosuch"], "unrecognized"),
    (["ratios"], "TRAIN"),
])
def test_bad_option_values_are_usage_errors(argv, words, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "usage error" in err and words in err and err.count("\n") == 1, err


@pytest.mark.parametrize("argv", [
    ["sky", "2026-03-20", "--site", "-33.87,151.21", "--json"],
    ["sky", "2026-03-20", "--site", "-33.87,-70.6,500", "--json"],
    ["drift", "moon_disc_59", "--years", "0.2", "--site", "-33.87,151.21", "--json"],
])
def test_southern_and_western_sites_are_values(argv, capsys):
    """`--site -33.87,151.21` written with a space, as the docs show it."""
    assert main(argv) == 0, capsys.readouterr().err
    assert '"site"' in capsys.readouterr().out


def test_crank_takes_a_southern_site_then_wants_a_terminal(capsys):
    """Under pytest there is no terminal: the site is accepted, then the one-line refusal."""
    assert main(["crank", "--site", "-33.87,151.21"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "needs a terminal" in err and "wheelwork ratios" in err


def test_bare_wheelwork_without_a_terminal_says_what_to_run_instead():
    done = subprocess.run([sys.executable, "-m", "engine"], capture_output=True, text=True,
                          stdin=subprocess.DEVNULL, timeout=60)
    assert done.returncode == 2
    assert done.stdout == "" and done.stderr.count("\n") == 1
    assert "needs a terminal" in done.stderr and "\x1b" not in done.stderr


def test_demo_names_work_as_train_files(capsys):
    assert main(["ratios", "tide_office", "--json"]) == 0
    assert '"Tide office dial"' in capsys.readouterr().out
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for name in ("tide_office", "moon_disc_59", "nineteen_year_drum"):
        assert name in out


def test_help_imports_no_command_module():
    code = ("import sys; from engine.cli import main; assert main(['--help']) == 0; "
            "bad = [m for m in sys.modules if m.startswith(('engine.commands.', 'numpy', "
            "'skyfield', 'sympy', 'textual'))]; "
            "assert bad == ['engine.commands.support'], bad")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, cwd=ROOT)
    assert done.returncode == 0, done.stderr
