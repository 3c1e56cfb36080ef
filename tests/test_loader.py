"""Train files: every error names the file, the item and what is wrong; warnings say how to fix."""

from __future__ import annotations

import re
from fractions import Fraction
from pathlib import Path

import pytest

from engine.cli import main
from engine.errors import TrainError
from engine.kinematics import solve
from engine.loader import load_train, parse_train
from engine.readout import backward_warnings

TRAINS = Path(__file__).resolve().parent.parent / "engine" / "trains"

GOOD = """
[train]
name = "test"
[crank]
arbor = "a"
days_per_turn = "6940/235"
[epoch]
date = "2026-01-01 00:00"
set = "angles"
[arbors.a]
wheels = { a1 = 20 }
[arbors.b]
wheels = { b1 = 40 }
[[meshes]]
wheels = ["a1", "b1"]
[pointers.p]
shows = "moon"
arbor = "b"
reversed = true
set_deg = 0
"""


def error_of(text: str) -> str:
    with pytest.raises(TrainError) as info:
        solve(parse_train(text, "bad.toml"))
    msg = str(info.value)
    assert msg.startswith("bad.toml: ") and "\n" not in msg
    return msg


NAMED = (GOOD.replace("[arbors.a]", "[arbors.hour_wheel]")
         .replace('arbor = "a"', 'arbor = "hour_wheel"')
         .replace("[arbors.b]", "[arbors.moon_out]").replace('arbor = "b"', 'arbor = "moon_out"')
         .replace("b1", "moon_s3_driven"))


@pytest.mark.parametrize("old, new, words", [
    ('wheels = ["a1", "moon_s3_driven"]', 'wheels = ["a1", "moon_s3_drivn"]',
     "mesh 1 (a1–moon_s3_drivn): unknown wheel 'moon_s3_drivn'; did you mean 'moon_s3_driven'? "
     "(wheels are named in"),
    ('arbor = "moon_out"', 'arbor = "moon_outt"',
     "[pointers.p] arbor: unknown arbor 'moon_outt'; did you mean 'moon_out'?"),
    ('arbor = "hour_wheel"', 'arbor = "hour_whel"',
     "[crank] arbor: unknown arbor 'hour_whel'; did you mean 'hour_wheel'?"),
    ('arbor = "moon_out"', 'arbor = "sun_hand"', "[pointers.p] arbor: unknown arbor 'sun_hand'"),
])
def test_a_name_one_slip_off_is_answered_with_the_files_own(old, new, words):
    """A maker's names are long ('moon_s3_driven', 'year_out'): a slip in one was answered
    only 'unknown wheel …'; the file's nearest name is offered, and none when none is near."""
    assert solve(parse_train(NAMED, "good.toml"))
    assert old in NAMED
    msg = error_of(NAMED.replace(old, new, 1))
    assert words in msg, msg
    assert "?" in words or "did you mean" not in msg, msg


def test_good_file_loads_with_exact_fraction():
    train = parse_train(GOOD, "good.toml")
    assert train.crank.days_per_turn.numerator == 1388  # 6940/235 reduced to 1388/47
    assert solve(train).rates["b"] == -0.5


@pytest.mark.parametrize("old,new,words", [
    ('wheels = ["a1", "b1"]', 'wheels = ["a1", "zz"]', ["mesh 1", "unknown wheel 'zz' (wheels"]),
    ('arbor = "b"\nreversed', 'arbor = "nowhere"\nreversed', ["[pointers.p] arbor",
                                                             "unknown arbor 'nowhere'"]),
    ("a1 = 20", "a1 = 0", ["wheel 'a1'", "more than zero"]),
    ("a1 = 20", "a1 = -12", ["wheel 'a1'", "more than zero"]),
    ("a1 = 20", "a1 = 20.5", ["wheel 'a1'", "whole number"]),
    ("a1 = 20", 'a1 = "20"', ["wheel 'a1'", "got '20'; write it without quotes: a1 = 20"]),
    ("a1 = 20", "a1 = 20.0", ["wheel 'a1'", "got 20.0; write it without the point: a1 = 20"]),
    ("a1 = 20", 'a1 = "twenty"', ["wheel 'a1': teeth must be a whole number, got 'twenty'"]),
    ('shows = "moon"', 'shows = "comet"', ["[pointers.p] shows", "unknown pointer kind",
                                           "phase"]),
    # a slip, and a maker's own word for a kind named otherwise here (the tide office's
    # perigee hand shows "apsis"): the list alone left the reader to find it
    ('shows = "moon"', 'shows = "phases"', ["unknown pointer kind 'phases'; did you mean "
                                            "'phase'? (known: "]),
    ('shows = "moon"', 'shows = "perigee"', ["unknown pointer kind 'perigee'; the Moon's "
                                             'perigee is shows = "apsis" (known: ']),
    ('shows = "moon"', 'shows = "Moon Phase"', ["unknown pointer kind 'Moon Phase'; the "
                                                'Moon\'s phase is shows = "phase"']),
    ('date = "2026-01-01 00:00"', 'date = "2026-13-45"', ["[epoch] date", "2026-13-45"]),
    ('date = "2026-01-01 00:00"', 'date = "next tuesday"', ["[epoch] date"]),
    ('"6940/235"', '"6940/0"', ["[crank] days_per_turn", "divides by zero"]),
    ('"6940/235"', '"69 40/235"', ["[crank] days_per_turn", "fraction like"]),
    ('"6940/235"', '"-3"', ["[crank] days_per_turn", "greater than zero"]),
    ('"6940/235"', '"__import__(\'os\')"', ["[crank] days_per_turn"]),
    # a time with its unit, as the bench's step and --step take it: the days it is, in the
    # form to write (a decimal where one ends, else the exact fraction in quotes)
    ('"6940/235"', '"12h"', ["[crank] days_per_turn: is in days, written as a number alone: "
                             "'12h' is 0.5 days; write days_per_turn = 0.5"]),
    ('"6940/235"', '"8 hours"', ["'8 hours' is 1/3 days; write days_per_turn = \"1/3\""]),
    ('"6940/235"', '"1d"', ["'1d' is 1 day; write days_per_turn = 1"]),
    ('"6940/235"', '"1y"', ["'1y' is 365.25 days (a Julian year;", "= 365.25"]),
    ('"6940/235"', '"1 month"', ["[crank] days_per_turn", "a month has no fixed length"]),
    ('"6940/235"', '"5 turns"', ["[crank] days_per_turn", "fraction like"]),
    ('set = "angles"', 'set = "angles"\nephemeris = "de4O6"',
     ["[epoch] ephemeris: should be one of de421, de440, de406, got 'de4O6'; did you mean "
      "'de406'?"]),
    ('arbor = "a"\ndays', 'arbor = "q"\ndays', ["[crank] arbor", "unknown arbor 'q'"]),
    ("[arbors.b]", "[arbors.b]\nwheel = 3", ["[arbors.b]", "unknown key 'wheel'"]),
    ("[arbors.b]", "[arbors.b]\non = \"b2\"", ["[arbors.b] on", "unknown arbor 'b2'"]),
    ('set = "angles"', 'set = "guess"', ["[epoch] set", "sky, mean, angles"]),
    # a key or section one slip off, as a newcomer types them: the nearest, then the list
    ('days_per_turn = "6940/235"', 'days_per_trun = "6940/235"',
     ["[crank]: unknown key 'days_per_trun'; did you mean 'days_per_turn'? (known keys: "]),
    ("[crank]", "[cranck]", ["[cranck]: unknown section; did you mean 'crank'? (known: "]),
    # a number TOML cannot read, as a newcomer writes one: the reader said only "Unclosed
    # inline table" or "Expected newline or end of document after a statement"
    ('days_per_turn = "6940/235"', "days_per_turn = 1,5",
     ["not valid TOML", "line 6", "a decimal is written with a point: days_per_turn = 1.5"]),
    ("a1 = 20", "a1 = 2x0", ["not valid TOML", "line 11", "a1 = 2x0: a number is written in "
                             "figures alone, without units"]),
    ("a1 = 20", "a1 = 20 teeth", ["not valid TOML", "a1 = 20 teeth: a number is written"]),
    ('days_per_turn = "6940/235"', "days_per_turn = 1.5.2", ["days_per_turn = 1.5.2: a number"]),
    ('days_per_turn = "6940/235"', 'days_per_turn = "1,5"',
     ["[crank] days_per_turn", "got '1,5'; a decimal is written with a point: 1.5"]),
    ('days_per_turn = "6940/235"', "days_per_turn =",
     ["not valid TOML", "the value after 'days_per_turn =' is missing"]),
    # a misspelt calendar is the calendar's fault: it was named '[epoch] date'
    ('set = "angles"', 'set = "angles"\ncalendar = "julain"',
     ["[epoch] calendar: should be one of auto, julian, gregorian, got 'julain'; did you "
      "mean 'julian'?"]),
    # a word of a fixed list one slip off is answered with the nearest, as a name is
    ('set = "angles"', 'set = "angels"', ["[epoch] set", "got 'angels'; did you mean "
                                          "'angles'?"]),
    ("set_deg = 0", "", ["[pointers.p]", "needs set_deg"]),
    ("[[meshes]]", "[[meshes]", ["not valid TOML", "line"]),
    # names outside the letters TOML allows bare, and text without quotes, as makers write
    # them: the TOML reader's message, then what to write instead
    ("[arbors.b]", "[arbors.bé]", ["not valid TOML", "line", "in quotes", '[arbors."année"]']),
    ("a1 = 20", "ä1 = 20", ["not valid TOML", "line", "in quotes"]),
    ('name = "test"', "name = test train", ["not valid TOML", "line",
                                             'text goes in quotes: name = "test train"']),
    # a key or a table written twice (a second seen_from pasted under the first): the TOML
    # reader says only "Cannot overwrite a value" / "Cannot declare ('arbors', 'b') twice"
    ('shows = "moon"', 'shows = "moon"\nshows = "sun"',
     ["not valid TOML", "line", "'shows' is given twice in one table: keep one"]),
    ("[arbors.b]", "[arbors.b]\nnote = 'x'\n[arbors.b]",
     ["not valid TOML", "line", "[arbors.b] is written twice: put its keys in one table"]),
    ("[crank]", "[train]\n[crank]",  # a one-part name: the reader says "('train',)"
     ["not valid TOML", "line", "[train] is written twice: put its keys in one table"]),
    # single and double brackets mixed up, as a newcomer to TOML writes them: the reader
    # says only "Cannot overwrite a value" or "Cannot declare ('meshes',) twice", and for a
    # second mesh written [meshes] the hint for a table written twice was wrong advice
    ("[[meshes]]", "[meshes]\nwheels = [\"a1\", \"b1\"]\n[[meshes]]",
     ["not valid TOML", "line", "every mesh is its own [[meshes]] table, with double brackets"]),
    ("[[meshes]]", "[[meshes]]\nwheels = [\"a1\", \"b1\"]\n[meshes]",
     ["not valid TOML", "line", "every mesh is its own [[meshes]] table, with double brackets"]),
    ("[[meshes]]", "[meshes]", ["[meshes]: is written with single brackets", "[[meshes]]"]),
    ("[[meshes]]", "[meshes.first]", ["[meshes]: is written as named tables", "[[meshes]]"]),
    ("[arbors.b]", "[[arbors]]", ["not valid TOML", "line", "[[arbors]] with double brackets "
                                  "makes a list", "([arbors.NAME])"]),
    ("[pointers.p]", "[[pointers]]", ["[[pointers]]: is written with double brackets",
                                      "[pointers.moon]"]),
    ("[pointers.p]", "[[pointers.p]]", ["[pointers.p]: is written with double brackets, "
                                        "[[pointers.p]]", "single brackets, [pointers.p]"]),
    ("[crank]", "[[crank]]", ["[crank]: is written with double brackets", "[crank]"]),
    # an epoch in antiquity written bare, as TOML's own dates may be: TOML has no year
    # before 0001, no era and no month names, so the reader's words say nothing of quotes
    ('date = "2026-01-01 00:00"', "date = -0249-06-21",
     ["not valid TOML", "line", 'goes in quotes: date = "-0249-06-21"']),
    ('date = "2026-01-01 00:00"', "date = 0250-06-21 BC   # the feast",
     ["not valid TOML", "line", 'goes in quotes: date = "0250-06-21 BC"']),
    ('date = "2026-01-01 00:00"', "date = 0000-06-21",
     ["not valid TOML", "line", 'goes in quotes: date = "0000-06-21"']),
    ('date = "2026-01-01 00:00"', "date = 21 June 250 BC",
     ["not valid TOML", "line", 'goes in quotes: date = "21 June 250 BC"']),
    ('date = "2026-01-01 00:00"', "date = 20261203",  # year, month, day run together
     ["[epoch] date", 'for that day write "2026-12-03" (in quotes', '"JD 20261203"']),
    ('date = "2026-01-01 00:00"', 'date = "03/12/2026"',
     ["[epoch] date", "2026-12-03 (3 December 2026) or 2026-03-12 (12 March 2026)"]),
    ('date = "2026-01-01 00:00"', "date = 1630282.0",
     ["[epoch] date", 'a Julian Date in quotes, "JD 1630282.0"']),
    # a year alone, unquoted: TOML's whole number, which in quotes is that year's 1 January
    ('date = "2026-01-01 00:00"', "date = 1066",
     ["[epoch] date", 'a year in quotes, "1066" (its 1 January)', '"JD 1066"']),
])
def test_each_bad_item_is_named(old, new, words):
    assert old in GOOD
    msg = error_of(GOOD.replace(old, new, 1))
    for w in words:
        assert w in msg, msg


def test_undriven_arbor():
    msg = error_of(GOOD + "[arbors.idle]\nwheels = { idle = 30 }\n")
    assert "[arbors.idle]" in msg and "nothing drives" in msg


def test_two_arbors_meshing_only_with_each_other_are_undriven():
    msg = error_of(GOOD + """
[arbors.x]
wheels = { x1 = 30 }
[arbors.y]
wheels = { y1 = 30 }
[[meshes]]
wheels = ["x1", "y1"]
""")
    assert "nothing drives" in msg and ("x" in msg and "y" in msg)


def test_wheel_in_two_meshes_that_contradict():
    msg = error_of(GOOD + """
[arbors.c]
wheels = { c1 = 30, c2 = 20 }
[[meshes]]
wheels = ["a1", "c1"]
[[meshes]]
wheels = ["c2", "b1"]
""")
    assert msg.startswith("bad.toml: mesh 3 (c2–b1): arbor 'b' would turn at two speeds: ")
    assert "-0.5 turns per crank turn through the crank → mesh 1 (a1–b1)" in msg
    assert "1/3 turns per crank turn through the crank → mesh 2 (a1–c1) → mesh 3 (c2–b1)" in msg
    assert "locks" in msg


def test_lock_names_the_arbor_and_both_paths_through_different_wheels():
    """Two paths reach arbor 'b' through different wheels (b1 and b2): the error names 'b',
    both paths and both speeds, not a mesh that merely shares a wheel."""
    text = GOOD.replace("wheels = { a1 = 20 }", "wheels = { a1 = 20, a2 = 30 }").replace(
        "wheels = { b1 = 40 }", "wheels = { b1 = 40, b2 = 15 }")
    msg = error_of(text + """
[arbors.c]
wheels = { c1 = 45, c2 = 25 }
[arbors.d]
wheels = { d1 = 10, d2 = 12 }
[[meshes]]
wheels = ["a2", "c1"]
[[meshes]]
wheels = ["c2", "d1"]
[[meshes]]
wheels = ["d2", "b2"]
""")
    assert "arbor 'b' would turn at two speeds" in msg, msg
    # a: 1; b via mesh 1: -20/40; c: -30/45, d: +(2/3)(25/10) = 5/3, b via b2: -(5/3)(12/15)
    assert "-0.5 turns per crank turn through the crank → mesh 1 (a1–b1)" in msg
    assert "-4/3 turns per crank turn through the crank → mesh 2 (a2–c1) → mesh 3 (c2–d1) → " \
           "mesh 4 (d2–b2)" in msg


def test_train_that_locks():
    """A fixed arbor meshed with the crank's wheel: nothing can turn."""
    msg = error_of(GOOD.replace("wheels = { b1 = 40 }", "fixed = true\nwheels = { b1 = 40 }")
                   .replace('arbor = "b"\nreversed', 'arbor = "a"\nreversed'))
    assert msg.startswith("bad.toml: mesh 1 (a1–b1): arbor 'b' would turn at two speeds: 0 "
                          "turns per crank turn through [arbors.b] fixed, and -0.5 turns per "
                          "crank turn through the crank → mesh 1 (a1–b1)"), msg
    assert "locks" in msg


def test_mounting_loop():
    msg = error_of(GOOD + """
[arbors.c]
on = "d"
wheels = {}
[arbors.d]
on = "c"
wheels = {}
""")
    assert "loop" in msg and "c → d → c" in msg


def test_offset_not_smaller_than_pin_radius():
    msg = error_of(GOOD + """
[pin_slots.s]
pin = "a"
slot = "b"
pin_radius_mm = 3
offset_mm = 3
""")
    assert "[pin_slots.s] offset_mm" in msg and "smaller than the pin radius" in msg


def test_pin_and_slot_arbors_on_different_mounts():
    msg = error_of(GOOD + """
[arbors.c]
on = "b"
wheels = {}
[pin_slots.s]
pin = "a"
slot = "c"
pin_radius_mm = 3
offset_mm = 1
""")
    assert "[pin_slots.s]" in msg and "on one carrier" in msg


def test_meshing_across_unrelated_carriers():
    msg = error_of(GOOD + """
[arbors.c1]
wheels = {}
[arbors.c2]
wheels = {}
[arbors.p]
on = "c1"
wheels = { p1 = 10 }
[arbors.q]
on = "c2"
wheels = { q1 = 10 }
[[meshes]]
wheels = ["p1", "q1"]
""")
    assert "mesh 2 (p1–q1)" in msg and "cannot mesh" in msg


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(TrainError, match="no such file"):
        load_train(tmp_path / "nope.toml")
    with pytest.raises(TrainError, match="folder"):
        load_train(tmp_path)


def test_backwards_pointer_warning_says_how_to_fix():
    train = parse_train(GOOD.replace("reversed = true\n", ""), "w.toml")
    (warning,) = backward_warnings(train, solve(train))
    assert "[pointers.p]" in warning and "backwards" in warning
    assert "reversed = true" in warning and "idler" in warning


def test_demo_trains_have_no_warnings():
    for path in TRAINS.glob("*.toml"):
        train = load_train(path)
        assert backward_warnings(train, solve(train)) == [], path


def test_cli_prints_one_line_and_exits_1(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(GOOD.replace("a1 = 20", "a1 = 0"))
    assert main(["ratios", str(bad)]) == 1
    err = capsys.readouterr().err.strip()
    assert err.startswith("wheelwork: error: ") and len(err.splitlines()) == 1
    assert "Traceback" not in err


def test_cli_usage_error_exits_2(capsys):
    assert main(["ratios"]) == 2


def test_mesh_listed_twice():
    msg = error_of(GOOD + '[[meshes]]\nwheels = ["b1", "a1"]\n')
    assert "mesh 2 (b1–a1)" in msg and "repeats mesh 1 (a1–b1)" in msg


def test_epoch_outside_the_ephemeris_names_the_file(tmp_path):
    from engine.mechanism import open_train

    path = tmp_path / "old.toml"
    path.write_text(GOOD.replace('set = "angles"', 'set = "sky"')
                    .replace("2026-01-01 00:00", "1700-01-01"))
    with pytest.raises(TrainError) as info:
        open_train(path)
    msg = str(info.value)
    assert msg.startswith(f"{path}: [epoch] date: ") and "outside JPL DE421" in msg


# --- limits, special files, text hygiene (every refusal one line, no hang) -------------------

@pytest.mark.parametrize("value,words", [
    ('"1e400"', ["[crank] days_per_turn", "between 1/8640000 (100 turns a second",
                "6,000 rpm) and 1,000,000 days"]),
    ('"1e308"', ["[crank] days_per_turn", "between"]),
    ("1e300", ["[crank] days_per_turn", "between"]),
    ("1e-300", ["[crank] days_per_turn", "between"]),
    ('"1e999999999"', ["[crank] days_per_turn", "exponent"]),
    ('"' + "9" * 500 + '"', ["[crank] days_per_turn", "too long"]),
    ("nan", ["[crank] days_per_turn", "finite"]),
])
def test_days_per_turn_bounds(value, words):
    msg = error_of(GOOD.replace('"6940/235"', value))
    for w in words:
        assert w in msg, msg


def test_a_motor_shaft_can_be_the_crank():
    """A 1500 rpm motor shaft turns 1500 × 1440 = 2,160,000 times a day; 100 turns a second
    (8,640,000 a day) is the fastest crank, and a hair faster is refused in the same words as
    the parts screen's editor."""
    for days, rpm in (("1/2160000", 1500), ("1/8640000", 6000), ("1/86400", 60)):
        train = parse_train(GOOD.replace('"6940/235"', f'"{days}"'), "motor.toml")
        assert train.crank.days_per_turn == Fraction(days)
        assert 1 / (float(train.crank.days_per_turn) * 1440) == pytest.approx(rpm, rel=1e-12)
    msg = error_of(GOOD.replace('"6940/235"', '"1/8640001"'))
    assert "[crank] days_per_turn: must be between 1/8640000 (100 turns a second, 6,000 rpm) " \
        "and 1,000,000 days, got '1/8640001'" in msg, msg


@pytest.mark.parametrize("old,new,words", [
    # a length that must be positive is never offered a negative bound
    ('wheels = ["a1", "b1"]', 'wheels = ["a1", "b1"]\nmodule_mm = 1001',
     "mesh 1 (a1–b1) module_mm: must be above 0 and at most 1,000, got 1001"),
    ('wheels = ["a1", "b1"]', 'wheels = ["a1", "b1"]\nmodule_mm = 1e4',
     "module_mm: must be above 0 and at most 1,000, got 10000.0"),
    ('set_deg = 0', 'set_deg = 0\n[workshop]\nbacklash_mm = 2e7',
     "[workshop] backlash_mm: must be between 0 and 1,000,000, got 20000000.0"),
])
def test_positive_and_non_negative_bounds_say_so(old, new, words):
    msg = error_of(GOOD.replace(old, new))
    assert words in msg, msg


@pytest.mark.parametrize("depth", [400, 100_000])
def test_deep_nesting_is_refused_before_parsing(depth):
    msg = error_of(GOOD + "x = " + "[" * depth + "]" * depth + "\n")
    assert "nested" in msg and f"{depth} deep" in msg


def test_deep_inline_tables_and_dotted_keys_are_refused():
    assert "nested" in error_of(GOOD + "x = " + "{a = " * 2000 + "1" + "}" * 2000 + "\n")
    assert "dotted keys nested 5001 deep" in error_of("a." * 5000 + "b = 1\n" + GOOD)


def test_brackets_in_strings_and_comments_do_not_count():
    text = GOOD.replace('name = "test"', 'name = "' + "[" * 50 + '"  # ' + "{" * 50)
    assert parse_train(text, "ok.toml").name == "[" * 50


def test_huge_tooth_count_is_refused():
    msg = error_of(GOOD.replace("a1 = 20", f"a1 = {2**63 - 1}"))
    assert "wheel 'a1'" in msg and "at most 10,000" in msg


def test_symlink_to_device_and_fifo_are_refused_without_blocking(tmp_path):
    import os
    import subprocess
    import sys

    link = tmp_path / "zero.toml"
    link.symlink_to("/dev/zero")
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    for path in (link, fifo):
        code = (f"from engine.loader import load_train\n"
                f"from engine.errors import TrainError\n"
                f"try:\n    load_train({str(path)!r})\nexcept TrainError as e:\n    print(e)\n")
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                             timeout=60)
        assert "not a regular file" in out.stdout, out
        assert out.stdout.startswith(str(path)) and out.stderr == ""


def test_large_file_is_refused_unread(tmp_path):
    big = tmp_path / "big.toml"
    big.write_text(GOOD + "# " + "x" * 1_100_000 + "\n")
    with pytest.raises(TrainError, match="at most 1,000,000 bytes"):
        load_train(big)


def test_too_many_arbors_are_refused():
    extra = "".join(f"[arbors.x{i}]\nwheels = {{ w{i} = 10 }}\n" for i in range(2_001))
    assert "at most 2,000" in error_of(GOOD + extra)


@pytest.mark.parametrize("old,new,words", [
    ("[arbors.b]", "[arbors.b]\nnote = 5", ["[arbors.b] note", "text in quotes"]),
    ("[[meshes]]", "[[meshes]]\nnote = [1, 2]", ["mesh 1 note", "text in quotes"]),
    ("[pointers.p]", "[pointers.p]\nnote = {a = 1}", ["[pointers.p] note", "text in quotes"]),
    ("[arbors.b]", "[arbors.b]\naxis_with = \"b\"", ["[arbors.b] axis_with", "arbor itself"]),
])
def test_accepted_but_wrong_items_are_refused(old, new, words):
    msg = error_of(GOOD.replace(old, new, 1))
    for w in words:
        assert w in msg, msg


@pytest.mark.parametrize("old,new", [
    ('name = "test"', 'name = "te\\u001b[2Jst"'),
    ("[arbors.b]", '[arbors."b\\u001b]0;x\\u0007"]\nwheels = { z = 3 }\n[arbors.b]'),
    ("[pointers.p]", '[pointers."p\\u202e"]\nshows = "sun"\narbor = "a"\nset_deg = 0\n'
     "[pointers.p]"),
    ('wheels = { a1 = 20 }', 'wheels = { "a1\\u0000" = 20, a1 = 20 }'),
])
def test_control_characters_in_names_are_refused_and_not_echoed(old, new):
    msg = error_of(GOOD.replace(old, new, 1))
    assert "control characters" in msg
    assert not any(ord(ch) < 32 or ch in "\x7f\u202e" for ch in msg), repr(msg)


def test_byte_order_mark_is_accepted(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + GOOD.encode())
    assert load_train(path).name == "test"


@pytest.mark.parametrize("value,hours", [
    ("2026-01-01T06:30:00Z", 6.5), ("2026-01-01T06:30:00+02:00", 4.5),
    ("2026-01-01T06:30:00-05:30", 12.0), ("2026-01-01T06:30:00", 6.5),
    ("2026-01-01 06:30:00.5Z", 6.5 + 0.5 / 3600), ("2026-01-01", 0.0),
])
def test_toml_datetimes_are_read_as_ut(value, hours):
    from engine.dates import jd_from_calendar

    train = parse_train(GOOD.replace('"2026-01-01 00:00"', value), "z.toml")
    assert train.epoch.jd_ut == pytest.approx(jd_from_calendar(2026, 1, 1 + hours / 24),
                                              abs=1e-9)


def test_toml_dates_are_refused_quoting_what_was_written():
    msg = error_of(GOOD.replace('"2026-01-01 00:00"', "1582-10-10T12:00:00+01:00"))
    assert "1582-10-10T12:00:00+01:00" in msg and "1582-10-05..14" in msg
    msg = error_of(GOOD.replace('"2026-01-01 00:00"', "06:30:00"))
    assert "[epoch] date" in msg and "without a date" in msg


def test_pointer_on_an_arbor_fixed_to_the_frame_is_refused():
    text = GOOD + '[arbors.f]\nfixed = true\nwheels = {}\n'
    msg = error_of(text.replace('arbor = "b"\nreversed', 'arbor = "f"\nreversed'))
    assert "[pointers.p] arbor" in msg and "fixed to the frame and never turns" in msg
    # relative to a turning arbor it does move, and reads as such
    text = text.replace('arbor = "b"\nreversed', 'arbor = "f"\nrelative_to = "b"\nreversed')
    assert solve(parse_train(text, "ok.toml")).rate("f", "b") == Fraction(1, 2)


def test_ratio_report_says_how_each_arbor_is_reached():
    """No stages: the crank arbor itself, a fixed arbor, or an arbor on a carrier reached
    through the carrier are each said as they are (never 'the crank arbor itself')."""
    from engine.ratios import pointer_ratios

    text = GOOD + """
[arbors.f]
fixed = true
wheels = {}
[arbors.planet]
on = "b"
fixed = true
wheels = {}
[pointers.crank]
shows = "sun"
arbor = "a"
set_deg = 0
[pointers.rel]
shows = "phase"
arbor = "f"
relative_to = "b"
set_deg = 0
[pointers.carried]
shows = "moon"
arbor = "planet"
reversed = true
set_deg = 0
"""
    train = parse_train(text, "r.toml")
    rows = {r.pointer: r for r in pointer_ratios(train, solve(train))}
    assert rows["crank"].route == "(the crank arbor itself)"
    assert rows["rel"].route == "(fixed to the frame: it does not turn)"
    assert rows["rel"].relative_stages and rows["rel"].relative_route == ""
    assert [s.kind for s in rows["carried"].stages] == ["mesh", "fixed"]
    assert rows["carried"].stages_multiply_out


def test_train_files_named_in_the_guides_exist():
    """Every train file path the contributor guide, README and docs name is there."""
    import re

    root = TRAINS.parent.parent
    named = 0
    for md in [root / "DEVELOPERS.md", root / "README.md", *sorted((root / "docs").glob("*.md"))]:
        for path in re.findall(r"(?<![\w/.-])((?:engine|tests)/[\w/.-]+\.toml)", md.read_text()):
            named += 1
            assert (root / path).is_file(), f"{md.name} names {path}, which does not exist"
    assert named >= 3


def test_an_ephemeris_the_file_names_but_cannot_be_had_names_the_file_and_key(
        tmp_path, monkeypatch, capsys):
    """A train whose [epoch] ephemeris is not installed: one line naming the file and the
    key (the ephemeris itself is stood in for, so the test holds with or without it)."""
    import engine.sky
    from engine.errors import SkyError

    def missing(ephemeris=None):
        if ephemeris == "de440":
            raise SkyError("the DE440 ephemeris is not installed; run `pip install "
                           "'wheelwork[de440]'`")
        return real(ephemeris)

    real = engine.sky.Sky
    monkeypatch.setattr(engine.sky, "Sky", missing)
    path = tmp_path / "wants_de440.toml"
    text = (Path(__file__).parent.parent / "engine" / "trains" / "moon_disc_59.toml").read_text()
    path.write_text(text.replace("[epoch]\n", '[epoch]\nephemeris = "de440"\n', 1))
    assert main(["drift", str(path), "--years", "1"]) == 1
    err = capsys.readouterr().err
    assert err.count("\n") == 1
    assert "wants_de440.toml: [epoch] ephemeris: the DE440 ephemeris is not installed" in err


@pytest.mark.parametrize("old,new,read", [
    ('name = "test"', 'name = "test"\ndial = "Stars"', lambda t: t.dial == "stars"),
    ('set = "angles"', 'set = " ANGLES "', lambda t: t.epoch.set == "angles"),
    ('shows = "moon"', 'shows = "Moon"', lambda t: t.pointers["p"].shows == "moon"),
    ('shows = "moon"', 'shows = "Mars"\nseen_from = "Sun"',
     lambda t: t.pointers["p"].shows == "mars_from_sun"),
    ('set_deg = 0', 'set_deg = 0\n[workshop]\ntooth_form = "Involute"\n'
     '[workshop.wheels.a1]\nform = "CYCLOIDAL"',
     lambda t: t.workshop.tooth_form == "involute"
     and t.workshop.form_of("a1") == "cycloidal" and t.workshop.form_of("b1") == "involute"),
])
def test_enumerated_values_are_read_in_any_case(old, new, read):
    """A word from a fixed list (a tooth form, the dial's frame, how the epoch sets the
    pointers, what a pointer shows) is the same word in capitals: 'Involute' is involute."""
    train = parse_train(GOOD.replace(old, new, 1), "ok.toml")
    assert read(train)


@pytest.mark.parametrize("old,new,item", [
    ('set_deg = 0', 'set_deg = 0\n[workshop]\ntooth_form = "Involut"', "[workshop] tooth_form"),
    ('set = "angles"', 'set = "skies"', "[epoch] set"),
    ('name = "test"', 'name = "test"\ndial = 3', "[train] dial"),
    ('shows = "moon"', 'shows = "Moone"', "[pointers.p] shows: unknown pointer kind 'Moone'"),
])
def test_an_enumerated_value_not_in_its_list_names_the_list(old, new, item):
    msg = error_of(GOOD.replace(old, new, 1))
    assert item in msg and ("should be one of" in msg or "(known: " in msg), msg


def test_a_search_fragment_read_as_a_train_is_said_to_be_a_fragment(tmp_path, capsys):
    """What `wheelwork search --emit` writes (arbors and meshes, no [crank], [epoch] or
    [pointers]) given to a command alone: the error says it is a fragment that goes into a
    train, not only that [crank] is missing."""
    frag = tmp_path / "frag.toml"
    assert main(["search", "--ratio", "1/12", "--stages", "1", "--emit", str(frag)]) == 0
    capsys.readouterr()
    assert main(["ratios", str(frag)]) == 1
    err = " ".join(capsys.readouterr().err.split())
    assert "[crank]: missing" in err and "a fragment (as wheelwork search --emit writes one) " \
        "goes into a train file that has them" in err, err
    # a train that forgot only its [crank] is not called a fragment
    msg = error_of(GOOD.replace('[crank]\narbor = "a"\ndays_per_turn = "6940/235"\n', ""))
    assert "[crank]: missing" in msg and "fragment" not in msg, msg


@pytest.mark.parametrize("text", ["", "\n\n   \n", "# a train, one day\n", "\ufeff\r\n"])
def test_an_empty_file_is_said_to_be_empty(text):
    """An empty file (or blank lines and comments only) was answered "[arbors]: the train
    needs at least one arbor", as if the file had the rest: it says the file is empty and
    where the format is described."""
    msg = error_of(text)
    assert msg.startswith("bad.toml: is empty") and "docs/train-format.md" in msg, msg
    # the demo to copy, by the path it has where wheelwork is installed (a plain pip install
    # has no engine/trains/ folder in sight)
    shown = re.search(r"the simplest is (\S+);", msg)
    assert shown and Path(shown.group(1)).is_file(), msg
    assert Path(shown.group(1)).read_text(encoding="utf-8").count("[pointers.") >= 1


@pytest.mark.parametrize("raw, words", [
    # Windows Notepad's "Unicode" is UTF-16 with a byte-order mark
    (GOOD.encode("utf-16"), "is UTF-16 text (what some editors save as \"Unicode\"); save it "
                            "as UTF-8"),
    # a name with an accent saved as Latin-1: line 3 of GOOD holds the name
    (GOOD.replace('"test"', '"t\u00e9st"').encode("latin-1"),
     "line 3, column 10: a byte that is not UTF-8 (a letter saved in another encoding"),
    (b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR", "is not a text file (it holds binary data)"),
])
def test_a_file_not_in_utf8_says_what_it_is_and_what_to_do(tmp_path, raw, words):
    """Such a file was answered "is not a UTF-8 text file (byte 0 cannot be read as UTF-8)":
    true, but no help to a maker whose editor saved it so. The loader and the interface's
    editor (which opens the file itself) say the same."""
    from engine.edit import TrainEditor

    path = tmp_path / "t.toml"
    path.write_bytes(raw)
    for read in (load_train, TrainEditor.open):
        with pytest.raises(TrainError) as caught:
            read(path)
        assert str(caught.value).startswith(f"{path}: {words}"), str(caught.value)


def test_a_carriers_plates_are_read_and_checked():
    # [arbors.NAME] plates: 1 or 2 (a cage), on a carrier only (docs/train-format.md)
    carrier = GOOD.replace("[arbors.b]\n", "[arbors.b]\nplates = 2\n", 1) + (
        '[arbors.c]\nwheels = {}\non = "b"\n')
    assert parse_train(carrier, "t.toml").arbors["b"].plates == 2
    assert parse_train(GOOD, "t.toml").arbors["b"].plates is None
    for bad in ("3", "0", "true", '"two"', "1.5"):
        assert error_of(carrier.replace("plates = 2", f"plates = {bad}")).startswith(
            "bad.toml: [arbors.b] plates: should be 1 (the carrier's one plate or arm) or 2 "
            "(a cage of a front and a back plate), got ")
    assert error_of(GOOD.replace("[arbors.b]\n", "[arbors.b]\nplates = 2\n", 1)) == (
        "bad.toml: [arbors.b] plates: is for a carrier, and no arbor is on 'b': give plates "
        "on the carrier arbor that others are on, or leave it out")


def test_workshop_carrier_plate_thickness_is_read_and_checked():
    # [workshop] carrier_plate_mm: a carrier plate's thickness, for its balance (docs/workshop.md)
    assert parse_train(GOOD, "t.toml").workshop.carrier_plate_mm is None
    train = parse_train(GOOD + "[workshop]\ncarrier_plate_mm = 1.2\n", "t.toml")
    assert train.workshop.carrier_plate_mm == 1.2
    assert error_of(GOOD + "[workshop]\ncarrier_plate_mm = 0\n") == (
        "bad.toml: [workshop] carrier_plate_mm: must be greater than zero, got 0")
    assert "[workshop] carrier_plate_mm: must be above 0 and at most 100" in error_of(
        GOOD + "[workshop]\ncarrier_plate_mm = 500\n")
    assert "[workshop] carrier_plate_mm: should be a number" in error_of(
        GOOD + '[workshop]\ncarrier_plate_mm = "1.5mm"\n')


@pytest.mark.parametrize("key, text, words", [
    ("eccentricity_mm", '"0.02mm"', "got '0.02mm'; the value is in mm already: write 0.02"),
    ("bore_mm", '"3 mm"', "got '3 mm'; the value is in mm already: write 3"),
    ("tilt_deg", '"0.5°"', "got '0.5°'; the value is in degrees already: write 0.5"),
    # another unit is not this one: '2cm' is no 2 mm, so no number is offered
    ("backlash_mm", '"2cm"', "should be a number, got '2cm'"),
])
def test_a_workshop_number_written_with_its_unit_is_answered_with_the_number(key, text, words):
    # the keys' own unit, as the matching options answer it (engine.errors.unit_slip)
    message = error_of(GOOD + f"[workshop]\n{key} = {text}\n")
    assert message.startswith(f"bad.toml: [workshop] {key}: should be a number"), message
    assert message.endswith(words), message


def test_a_per_wheel_workshop_number_with_its_unit_is_answered_too():
    wheel = re.search(r"wheels = \{ *(\w+)", GOOD).group(1)
    message = error_of(GOOD + f'[workshop.wheels.{wheel}]\neccentricity_mm = "0.05 mm"\n')
    assert message == (f"bad.toml: [workshop.wheels.{wheel}] eccentricity_mm: should be a "
                       "number, got '0.05 mm'; the value is in mm already: write 0.05"), message
