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
    try:
        main(["--help"])
    except SystemExit as exc:
        assert exc.code == 0
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
    with pytest.raises(SystemExit) as stop:
        main(["crank", "--site", "95,0"])
    assert stop.value.code == 2 and "impossible" in capsys.readouterr().err
