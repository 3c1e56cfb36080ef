"""Train files: every error names the file, the item and what is wrong; warnings say how to fix."""

from __future__ import annotations

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


def test_good_file_loads_with_exact_fraction():
    train = parse_train(GOOD, "good.toml")
    assert train.crank.days_per_turn.numerator == 1388  # 6940/235 reduced to 1388/47
    assert solve(train).rates["b"] == -0.5


@pytest.mark.parametrize("old,new,words", [
    ('wheels = ["a1", "b1"]', 'wheels = ["a1", "zz"]', ["mesh 1", "unknown wheel 'zz'"]),
    ('arbor = "b"\nreversed', 'arbor = "nowhere"\nreversed', ["[pointers.p] arbor",
                                                             "unknown arbor 'nowhere'"]),
    ("a1 = 20", "a1 = 0", ["wheel 'a1'", "more than zero"]),
    ("a1 = 20", "a1 = -12", ["wheel 'a1'", "more than zero"]),
    ("a1 = 20", "a1 = 20.5", ["wheel 'a1'", "whole number"]),
    ('shows = "moon"', 'shows = "comet"', ["[pointers.p] shows", "unknown pointer kind",
                                           "phase"]),
    ('date = "2026-01-01 00:00"', 'date = "2026-13-45"', ["[epoch] date", "2026-13-45"]),
    ('date = "2026-01-01 00:00"', 'date = "next tuesday"', ["[epoch] date"]),
    ('"6940/235"', '"6940/0"', ["[crank] days_per_turn", "divides by zero"]),
    ('"6940/235"', '"69 40/235"', ["[crank] days_per_turn", "fraction like"]),
    ('"6940/235"', '"-3"', ["[crank] days_per_turn", "greater than zero"]),
    ('"6940/235"', '"__import__(\'os\')"', ["[crank] days_per_turn"]),
    ('arbor = "a"\ndays', 'arbor = "q"\ndays', ["[crank] arbor", "unknown arbor 'q'"]),
    ("[arbors.b]", "[arbors.b]\nwheel = 3", ["[arbors.b]", "unknown key 'wheel'"]),
    ("[arbors.b]", "[arbors.b]\non = \"b2\"", ["[arbors.b] on", "unknown arbor 'b2'"]),
    ('set = "angles"', 'set = "guess"', ["[epoch] set", "sky, mean, angles"]),
    ("set_deg = 0", "", ["[pointers.p]", "needs set_deg"]),
    ("[[meshes]]", "[[meshes]", ["not valid TOML", "line"]),
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
    assert "mesh 3 (c2–b1)" in msg and "wheel 'b1' is also in mesh 1" in msg
    assert "locks" in msg


def test_train_that_locks():
    """A fixed arbor meshed with the crank's wheel: nothing can turn."""
    msg = error_of(GOOD.replace("wheels = { b1 = 40 }", "fixed = true\nwheels = { b1 = 40 }"))
    assert "mesh 1 (a1–b1)" in msg and "locks" in msg


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
    assert "[pin_slots.s]" in msg and "same carrier" in msg


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
    with pytest.raises(SystemExit) as info:
        main(["ratios"])
    assert info.value.code == 2


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
