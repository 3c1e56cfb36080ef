"""Bad option values thrown at every command: each is refused cleanly — exit 2 (a usage error;
1 where the fault is found while working), one line on stderr naming the option, nothing on
stdout, never a traceback or a hang.

``python -m tests.test_bad_options`` prints the count tried and the count refused cleanly.
"""

from __future__ import annotations

import io
import sys
from contextlib import redirect_stderr, redirect_stdout

import pytest

from engine.cli import main

T = "tide_office"
DISC = "moon_disc_59"

# (argv, words the one line must hold)
CASES: list[tuple[list[str], str]] = [
    # the entry point
    (["nosuch"], "unknown command"),
    (["--nosuch"], "unrecognized"),
    # ratios
    (["ratios"], "TRAIN"),
    (["ratios", T, "--bogus"], "unrecognized"),
    (["ratios", T, "--json=yes"], "--json"),
    # drift: span
    (["drift", DISC, "--years", "0"], "positive"),
    # a unit parted from its number, and a span not given: what to write, not argparse alone
    (["drift", DISC, "--years", "2", "--step", "6", "h"], "one word: write 6h"),
    (["drift", DISC, "--years", "2", "--step", "1.5", "days"], "one word: write 1.5days"),
    (["drift", DISC], "e.g. --years 50"),
    (["sky", "JD", "2451545"], "a date written with spaces goes in quotes"),
    (["drift", DISC, "--from", "15", "March", "44", "BC", "--years", "2"], "goes in quotes"),
    (["eclipses", DISC], "e.g. --years 50"),
    (["drift", DISC, "--years", "-1"], "positive"),
    (["drift", DISC, "--years", "nan"], "positive"),
    (["drift", DISC, "--years", "inf"], "positive"),
    (["drift", DISC, "--years", "1e400"], "positive"),
    (["drift", DISC, "--years", "abc"], "not a number"),
    (["drift", DISC, "--years", "1e9"], "at most"),
    (["drift", DISC], "--to --years"),
    (["drift", DISC, "--years", "1", "--to", "2030-01-01"], "not allowed with"),
    (["drift", DISC, "--years", "1", "--step", "0"], "step"),
    (["drift", DISC, "--years", "1", "--step", "-1d"], "must be positive"),
    (["drift", DISC, "--years", "1", "--step", "1x"], "step"),
    (["drift", DISC, "--years", "1", "--step", ""], "step"),
    (["drift", DISC, "--years", "1", "--step", "1e400d"], "step"),
    (["drift", DISC, "--years", "1", "--step", "2y"], "longer than the span"),
    (["drift", DISC, "--from", "2026-13-01", "--years", "1"], "date"),
    (["drift", DISC, "--from", "", "--years", "1"], "date"),
    (["drift", DISC, "--from", "2030-01-01", "--to", "2029-01-01"], "is not after"),
    # drift: comparison and output
    (["drift", DISC, "--years", "1", "--threshold", "0"], "positive"),
    (["drift", DISC, "--years", "1", "--threshold", "400"], "at most 180"),
    (["drift", DISC, "--years", "1", "--threshold", "nan"], "positive"),
    (["drift", DISC, "--years", "1", "--threshold-days", "20"], "at most"),
    (["drift", DISC, "--years", "1", "--threshold-days", "-1"], "positive"),
    (["drift", DISC, "--years", "1", "--frame", "sideways"], "unknown frame 'sideways' (choices: equinox, stars)"),
    (["drift", DISC, "--years", "1", "--site", "95,0"], "impossible"),
    (["drift", DISC, "--years", "1", "--site", "a,b"], "LAT,LON"),
    (["drift", DISC, "--years", "1", "--site", "1,2,3,4"], "LAT,LON"),
    (["drift", DISC, "--years", "1", "--site", "-33.87,200"], "impossible"),
    (["drift", DISC, "--years", "1", "--ephemeris", "/tmp"], "is a folder"),
    (["drift", DISC, "--years", "1", "--ephemeris", "nosuch.bsp"], "no such file"),
    (["sky", "2026-01-01", "--ephemeris", "de460"], "de421, de440 or de406"),  # all named
    (["drift", DISC, "--years", "1", "--png", "chart.txt"], ".png, .svg or .pdf"),
    # search
    (["search", "--cycle", "synodic month", "--top", "0"], "--top"),
    (["search", "--cycle", "synodic month", "--top", "-1"], "--top"),
    (["search", "--cycle", "synodic month", "--top", "5000"], "from 1 to 200"),
    (["search", "--cycle", "synodic month", "--top", "x"], "--top"),
    (["search", "--cycle", "synodic month", "--stages", "9"], "outside 1-4"),
    # refused before the search (it ran first, then exit 1): the names are written bare
    (["search", "--cycle", "synodic month", "--emit", "x.toml", "--prefix", "moon disc"],
     "A-Z, a-z, 0-9"),
    (["search", "--cycle", "synodic month", "--emit", "x.toml", "--prefix", "lune_année"],
     "--prefix"),
    (["search", "--cycle", "synodic month", "--prefix", "moon"], "give --emit FILE too"),
    (["search", "--cycle", "synodic month", "--stages", "0"], "outside 1-4"),
    (["search", "--cycle", "synodic month", "--stages", "3-1"], "empty"),
    (["search", "--cycle", "synodic month", "--stages", "x"], "cannot read"),
    (["search", "--cycle", "synodic month", "--max-prime", "1"], "--max-prime"),
    (["search", "--cycle", "synodic month", "--max-prime", "x"], "--max-prime"),
    (["search", "--period", "0"], "positive"),
    (["search", "--period", "-3"], "positive"),
    (["search", "--period", "1e-30"], "0.000000001 to 1,000,000,000,000"),
    (["search", "--period", "1e30"], "0.000000001 to 1,000,000,000,000"),
    (["search", "--period", "1e400"], "0.000000001 to 1,000,000,000,000"),
    (["search", "--period", "nan"], "period"),
    (["search", "--period", "1/0"], "period"),
    (["search", "--period", "2**10"], "period"),
    (["search", "--ratio", "1e12"], "out of reach"),
    (["search", "--ratio", "1e-19"], "0.000000001 to 1,000,000,000,000"),
    (["search", "--period", "1", "--crank-days", "0"], "positive"),
    (["search", "--period", "1", "--crank-days", "1e300"], "0.000000001 to 1,000,000,000,000"),
    # a crank no train file can hold: [crank] days_per_turn's own bounds, said in its words
    (["search", "--period", "1", "--crank-days", "1e-8"], "between 1/8640000 (100 turns a"),
    (["search", "--period", "1", "--crank-days", "2e6"], "and 1,000,000 days"),
    (["search", "--cycle", "synodic month", "--wheels", "150-8"], "empty"),
    (["search", "--cycle", "synodic month", "--wheels", "0-10"], "start at 1"),
    (["search", "--cycle", "synodic month", "--wheels", "8-20000"], "10,000"),
    (["search", "--cycle", "synodic month", "--pinions", "x"], "cannot read"),
    (["search", "--cycle", "synodic month", "--allowed", "12,x"], "cannot read"),
    (["search", "--cycle", "synodic month", "--allowed", "1-100000000"], "10,000"),
    (["search", "--cycle", "synodic month", "--pick", "0"], "--pick"),
    (["search", "--cycle", "synodic month", "--pick", "2"], "--emit"),
    (["search", "--cycle", "blue moon"], "unknown period"),
    (["search", "--period", "1", "--ratio", "1"], "not allowed with"),
    (["search", "--cycle", "synodic month", "--stages", "3", "--keep-direction"], "even"),
    # check
    (["check", T, "--crank-rpm", "0"], "positive"),
    (["check", T, "--crank-rpm", "-5"], "positive"),
    (["check", T, "--crank-rpm", "nan"], "positive"),
    (["check", T, "--crank-rpm", "1e300"], "at most"),
    (["check", T, "--crank-rpm", "x"], "not a number"),
    (["check", T, "--real-time", "--crank-rpm", "30"], "not allowed with"),
    (["check", T, "--efficiency", "1.5"], "at most 1"),
    (["check", T, "--efficiency", "0"], "above 0"),
    (["check", T, "--efficiency", "nan"], "above 0"),
    (["check", T, "--efficiency", "x"], "not a number"),
    # sky
    (["sky", "2025-02-30"], "day 30"),
    (["sky", ""], "date"),
    (["sky", "last week"], "; or now, today, yesterday or tomorrow"),  # yesterday and tomorrow are read; a span of days is not
    (["sky", "JD 1e308"], ""),
    (["sky", "JD -1e308"], ""),
    (["sky", "2026-01-01", "--calendar", "roman"], "unknown calendar 'roman'"),
    (["sky", "2026-01-01", "--site", "95,0"], "impossible"),
    (["sky", "2026-01-01", "--site", "95N 0E"], "impossible"),
    (["sky", "2026-01-01", "--site", "-33.87S 151.21E"], "both a sign and a compass letter"),
    (["sky", "2026-01-01", "--site", "51.48N 0.01N"], "two latitudes"),
    (["sky", "2026-01-01", "--site", "51,48N 0,01W"], "no compass letter before the comma"),
    (["sky", "2026-01-01", "--ephemeris", "/tmp"], "is a folder"),
    (["sky", "2026-01-01", "--ephemeris", ""], "an empty name"),  # not the current folder
    # crank (refused before the interface would need a terminal)
    (["crank", "--site", "95,0"], "impossible"),
    (["crank", "--ephemeris", "/tmp"], "is a folder"),
    (["crank", T, "--bogus"], "unrecognized"),
    # eclipses, cut, play
    (["eclipses", T, "--years", "0"], "positive"),
    (["eclipses", T, "--years", "1", "--by", "x"], "unknown method 'x'"),
    (["eclipses", T, "--years", "1", "--ephemeris", "/tmp"], "is a folder"),
    (["eclipses", T, "--years", "1", "--ephemeris", " "], "an empty name"),
    (["cut", T, "--out", "x", "--formats", "pdf"], "formats"),
    (["cut", T, "--out", "x", "--form", "square"], "unknown tooth form 'square'"),
    (["cut", T, "--out", "x", "--carrier-outline", "oval"], "unknown carrier outline 'oval'"),
    (["cut", T, "--out", "x", "--wheel", "sun_w33"], "did you mean 'sun_w3'"),
    (["cut", T], "--out"),
    (["play", T, "--builds", "0"], "builds"),
    (["play", T, "--years", "-1"], "years"),
    (["play", T, "--seed", "x"], "seed"),
    (["play", T, "--division", "nan"], "division"),
    (["play", T, "--lever-mm", "0"], "positive number of mm"),
    (["play", T, "--lever-mm", "1e6"], "at most 10,000 mm"),
    # a required argument left out: what it is, with an example
    (["cut", T], "required: --out; give --out (the folder to write into, e.g. --out parts)"),
    (["ratios"], "required: TRAIN; give TRAIN (a train file, or a demo's name such as "
                 "tide_office)"),
    (["search", "--stages", "2"], "say what to search for, e.g. --cycle 'synodic month', "
                                  "--period 29.53 or --ratio 19/235"),
    # bounds in figures as every number is written, thousands separated
    (["drift", DISC, "--years", "1e6"], "1e6: at most 100,000 years"),
    (["play", T, "--seed", "abc"], "give seed from 0 to 9,223,372,036,854,775,807"),
    (["play", T, "--builds", "0"], "0: builds must be from 10 to 100,000"),
    (["play", T, "--hole-mm", "nan"], "hole"),
    (["play", T, "--hole-mm", "x"], "hole: not a number"),
    # a decimal comma, as many countries write a decimal: what to write instead
    (["drift", DISC, "--years", "1,5"], "'1,5' is not a number of years; a decimal is "
                                        "written with a point: 1.5"),
    (["search", "--period", "29,53", "--stages", "2"], "a decimal is written with a point: "
                                                       "29.53"),
    (["check", T, "--efficiency", "0,9"], "a decimal is written with a point: 0.9"),
    (["play", T, "--division", "0,01"], "a decimal is written with a point: 0.01"),
    (["play", T, "--backlash-mm", "0,02"], "a decimal is written with a point: 0.02"),
    # the option's own unit written after the number: the number alone, since the option's
    # name or help gives the unit; another unit is not converted ('2cm' is not 2 mm)
    (["play", T, "--eccentricity-mm", "0.02mm"], "not a number: '0.02mm'; the value is in "
                                                  "mm already: write 0.02"),
    (["play", T, "--lever-mm", "10 mm"], "the value is in mm already: write 10"),
    (["play", T, "--tilt-deg", "0.25°"], "the value is in degrees already: write 0.25"),
    (["drift", DISC, "--years", "25y"], "'25y' is not a number of years; the value is in "
                                        "years already: write 25"),
    (["drift", DISC, "--years", "1", "--threshold", "1deg"], "the value is in degrees already: "
                                                            "write 1"),
    (["check", T, "--crank-rpm", "5rpm"], "already: write 5"),
    (["play", T, "--eccentricity-mm", "2cm"], "eccentricity: not a number: '2cm'\n"),
    # an ephemeris name one slip off (a letter O for a zero) is answered with the name
    (["sky", "--ephemeris", "de44O"], "de44O: no such file, and not de421, de440 or de406; "
                                      "did you mean 'de440'?"),
    (["drift", DISC, "--years", "1", "--ephemeris", "DE-406"], "did you mean 'de406'?"),
    (["sky", "--ephemeris", "mine.bsp"], "mine.bsp: no such file; give a JPL SPK file"),
    # an empty name to write to (an unset shell variable: --out "$DIR") names the current
    # folder: refused, never written there or passed over in silence
    (["cut", T, "--out", ""], "an empty name"),
    (["cut", T, "--out", " "], "an empty name"),
    (["search", "--ratio", "1/12", "--stages", "1", "--emit", ""], "an empty name"),
    (["drift", DISC, "--years", "1", "--csv", ""], "an empty name"),
    (["drift", DISC, "--years", "1", "--png", ""], "an empty name"),
    (["eclipses", T, "--years", "1", "--csv", ""], "an empty name"),
]


def run_case(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def clean(code: int, out: str, err: str, words: str) -> bool:
    return (code in (1, 2) and out == "" and err.count("\n") == 1
            and err.startswith("wheelwork") and "Traceback" not in err and words in err)


@pytest.mark.parametrize("argv, words", CASES, ids=[" ".join(a)[:60] for a, _ in CASES])
def test_bad_option_value_is_refused_cleanly(argv, words, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run_case(argv)
    assert clean(code, out, err, words), (code, out, err)
    assert code == 2 or argv[0] == "sky", (code, err)  # option values: usage errors


def test_every_choice_option_answers_with_the_nearest_word():
    """Every option of fixed words (argparse ``choices``), in every command, answers a slip as
    a train file does: one line naming the nearest word and the choices (argparse's own
    "invalid choice: ... (choose from ...)" named none). A new option of words that does not
    go through support.one_of fails here."""
    from engine.cli import COMMANDS, command_parser

    tried = 0
    for name in [*COMMANDS, "crank"]:
        _, parser = command_parser(name)
        for action in parser._actions:  # argparse has no public list of a parser's options
            if not action.choices or not action.option_strings:
                continue
            first = sorted(action.choices)[0]
            slip = first[:-1]  # 'involut', 'equino', 'aut': one letter short
            args = [name] + ([T] if name not in ("sky", "search") else []) + (
                ["--years", "1"] if name in ("drift", "eclipses") else []) + (
                ["--out", "x"] if name == "cut" else []) + [action.option_strings[0], slip]
            code, out, err = run_case(args)
            assert code == 2 and out == "" and err.count("\n") == 1, (args, err)
            assert f"did you mean '{first}'?" in err and "invalid choice" not in err, err
            assert ", ".join(action.choices) in err, err  # the choices, as the help names them
            tried += 1
    assert tried >= 5  # cut and play --form, drift --frame, eclipses --by, sky --calendar


def test_option_words_agree_with_the_engine_s_tables():
    """The words the commands offer (written out so --help loads no numpy) are the engine's."""
    from engine.commands.drift import FRAME_WORDS
    from engine.commands.sky import CALENDARS
    from engine.dates import CALENDARS as ENGINE_CALENDARS
    from engine.kinds import DIAL_FRAMES

    assert CALENDARS == ENGINE_CALENDARS and FRAME_WORDS == DIAL_FRAMES


def test_enough_cases_for_every_command():
    commands = {a[0] for a, _ in CASES}
    assert {"ratios", "drift", "search", "check", "sky", "crank", "eclipses", "cut",
            "play"} <= commands
    assert len(CASES) >= 90


if __name__ == "__main__":  # the counts for a report
    import os
    import tempfile

    os.chdir(tempfile.mkdtemp())
    refused = [clean(*run_case(argv), words) for argv, words in CASES]
    print(f"bad option values tried: {len(CASES)}; refused cleanly: {sum(refused)}")
    for ok, (argv, _) in zip(refused, CASES, strict=True):
        if not ok:
            print("  not clean:", " ".join(argv), file=sys.stderr)
