"""Mechanical checks: geometry against handbook formulas, loads, rules of thumb, the CLI."""

from __future__ import annotations

import json
import math
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

from engine.checks import (
    DEFAULT_EFFICIENCY,
    UNDERCUT_TEETH,
    centre_distance_mm,
    check,
    pitch_diameter_mm,
    slot_speed_factors,
    undercut_shift,
)
from engine.cli import main
from engine.errors import TrainError
from engine.kinematics import slot_follower_turns, solve
from engine.loader import load_train, parse_train
from engine.toothform import cycloidal_wheel

HERE = Path(__file__).resolve().parent
TRAINS = HERE / "trains"
DEMO = HERE.parent / "engine" / "trains"
MM = 1e-9  # geometry is exact arithmetic on floats: agree to a nanometre
REL = 1e-12


def run_check(path, **kw):
    train = load_train(path)
    return check(train, solve(train), **kw)


def levels(report, level, item=None):
    return [f for f in report.findings if f.level == level and (item is None or f.item == item)]


def said(text: str, words: str) -> list:
    """The check's findings on train ``text`` whose message holds ``words``."""
    train = parse_train(text, "t.toml")
    return [f for f in check(train, solve(train)).findings if words in f.message]


def header(crank: str) -> str:
    return (f'[crank]\narbor = "{crank}"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
            'set = "angles"\n')


# --- handbook geometry ---------------------------------------------------------------------

def test_pitch_and_centre_distance_handbook_examples():
    # Standard spur-gear formulas d = m z, a = m (z1 + z2) / 2 (ISO 21771 notation, any
    # machinery handbook); worked examples from memory.
    assert pitch_diameter_mm(3, 20) == pytest.approx(60, abs=MM)
    assert pitch_diameter_mm(3, 40) == pytest.approx(120, abs=MM)
    assert centre_distance_mm(3, 20, 40) == pytest.approx(90, abs=MM)
    # Internal pair: a = m (z_ring - z_pinion) / 2; m = 2, ring 60, pinion 20 -> 40 mm.
    assert centre_distance_mm(2, 60, 20, internal=True) == pytest.approx(40, abs=MM)
    assert centre_distance_mm(2, 20, 60, internal=True) == pytest.approx(40, abs=MM)


def test_report_rows_carry_the_handbook_numbers():
    text = header("drive") + """
[arbors.drive]
wheels = { small = 20 }
[arbors.big]
wheels = { large = 40 }
[arbors.ring]
wheels = { ring_teeth = 60, ring_pinion = 20 }
[arbors.inner]
wheels = { inner = 20 }
[[meshes]]
wheels = ["small", "large"]
module_mm = 3
[[meshes]]
wheels = ["large", "ring_pinion"]
module_mm = 3
[[meshes]]
wheels = ["ring_teeth", "inner"]
ring = "ring_teeth"
module_mm = 2
[pointers.hand]
shows = "sun"
arbor = "inner"
set_deg = 0
"""
    train = parse_train(text, "handbook.toml")
    report = check(train, solve(train))
    m1, _, m3 = report.meshes
    assert (m1.driver_pitch_mm, m1.driven_pitch_mm) == pytest.approx((60, 120), abs=MM)
    assert m1.centre_mm == pytest.approx(90, abs=MM)
    assert m3.internal and m3.centre_mm == pytest.approx(40, abs=MM)
    assert m3.reference == "frame"


def test_undercut_limit_standard_geometry():
    # z_min = 2 / sin²(20°) = 17.097... (standard involute geometry, addendum 1 m).
    assert UNDERCUT_TEETH == pytest.approx(17.097, abs=1e-3)
    # Least profile shift x = 1 - z sin²α / 2: zero at z_min, 0.12 or so at 15 teeth.
    assert undercut_shift(17) == pytest.approx(1 - 17 / UNDERCUT_TEETH, abs=REL)
    assert undercut_shift(round(UNDERCUT_TEETH)) == pytest.approx(0.0, abs=0.01)


# --- shared axes ---------------------------------------------------------------------------

def test_nineteen_year_drum_returns_to_its_axis():
    # 127 + 38 = 132 + 33 = 165 at module 0.8: both meshes 66 mm between the same two axes.
    report = run_check(DEMO / "nineteen_year_drum.toml")
    assert not levels(report, "error")
    assert [m.centre_mm for m in report.meshes] == pytest.approx([66, 66], abs=MM)


def test_coaxial_mismatch_reports_mm_and_the_tooth_fix():
    report = run_check(TRAINS / "coaxial_mismatch.toml")
    (err,) = levels(report, "error")
    assert err.item.startswith("mesh 2")
    assert "mesh 1" in err.message and "0.4 mm" in err.message
    assert "'moon_pinion' 34 teeth" in err.fix  # 131 + 34 = 165 = 127 + 38
    assert "0.8049 mm" in err.fix               # or a module keeping the ratio: 2·66/164


def test_all_demo_trains_have_no_geometry_errors():
    for path in sorted(DEMO.glob("*.toml")):
        assert not levels(run_check(path), "error"), path.name


def test_wheel_at_two_modules_is_an_error():
    report = run_check(TRAINS / "two_modules.toml")
    (err,) = levels(report, "error")
    assert "'idler'" in err.message and "module 1" in err.message


# --- positions and overlaps ----------------------------------------------------------------

def test_position_mismatch():
    report = run_check(TRAINS / "position_mismatch.toml")
    (err,) = levels(report, "error")
    assert "30.5 mm" in err.message and "0.5 mm too far" in err.message
    assert "[30.0, 0.0]" in err.fix and "'forty' 41 teeth" in err.fix


def test_overlaps_axis_and_wheel():
    report = run_check(TRAINS / "overlap.toml")
    warns = levels(report, "warning", "wheel 'sixty'")
    texts = " | ".join(f.message for f in warns)
    assert "reaches over the axis of 'small', 11 mm" in texts
    assert "overlaps that of 'ten'" in texts and "26 mm" in texts  # 31 + 6 - 11
    # Wheels on arbors that mesh with each other are taken to be in separate planes.
    assert not any("'forty'" in f.message for f in warns)


def test_overlap_advice_never_asks_for_fewer_than_one_tooth(tmp_path):
    """A module written 60 for 0.6 (a unit slip) makes a 14-leaf pinion's tip 468 mm out, over
    the axis of an arbor 24 mm away: the advice said "make 'moon_s1_driver' at most -1 teeth";
    a count under one is no advice, so only the other remedies are given."""
    hall = tmp_path / "hall.toml"
    hall.write_text(HALL_M60)
    warns = [f for f in run_check(hall).findings
             if f.level == "warning" and "reaches over the axis" in f.message]
    assert warns and all("at most -" not in f.fix and "at most 0 " not in f.fix for f in warns)
    assert all("end '" in f.fix and "part the axes" in f.fix for f in warns)


HALL_M60 = """
[crank]
arbor = "hour"
days_per_turn = "1/2"
[epoch]
date = "2026-01-01"
[arbors.hour]
wheels = { moon_p = 14, year_p = 8 }
[arbors.moon_a1]
wheels = { moon_w = 66 }
[arbors.year_a1]
wheels = { year_w = 88 }
[[meshes]]
wheels = ["moon_p", "moon_w"]
module_mm = 60
[[meshes]]
wheels = ["year_p", "year_w"]
module_mm = 0.5
[pointers.moon]
shows = "phase"
arbor = "moon_a1"
per_turn = 2
"""


def test_overlap_takes_the_tip_of_the_tooth_form():
    """A cycloidal clock wheel stands about 1.38 modules above its pitch circle against 8
    leaves (the wheel addendum of engine.toothform, BS 978-2 from memory), more than the
    involute 1 module the overlap check once took for every wheel: two 60-tooth wheels
    62.5 mm apart foul when cut cycloidal (the default), not when cut involute."""
    theta = 2 * math.asin(62.5 / 2 / 34)
    c = [round(34 * math.cos(theta), 6), round(34 * math.sin(theta), 6)]
    text = header("a") + f"""
[arbors.a]
wheels = {{ pa = 8, qa = 8 }}
at_mm = [0.0, 0.0]
[arbors.b]
wheels = {{ wb = 60 }}
at_mm = [34.0, 0.0]
[arbors.c]
wheels = {{ wc = 60 }}
at_mm = {c}
[[meshes]]
wheels = ["pa", "wb"]
module_mm = 1.0
[[meshes]]
wheels = ["qa", "wc"]
module_mm = 1.0
[pointers.hand]
shows = "sun"
arbor = "b"
reversed = true
set_deg = 0
"""
    tip = cycloidal_wheel(60, 1.0, 8).tip_radius_mm
    assert 2 * tip - 62.5 > 0.2 and 62.5 - 2 * 31.0 > 0.2  # the forms differ by more than a hair
    for shop, fouls in (("", True), ('[workshop]\ntooth_form = "involute"\n', False)):
        assert bool(said(text + shop, "overlaps that of 'wc'")) == fouls, shop
        assert not said(text + shop, "reaches over")


FORCED = header("a") + """
[arbors.a]
wheels = { pa = 10 }
[arbors.b]
wheels = { wb = 73, pb = 8 }
[arbors.c]
wheels = { wc = 50 }
[[meshes]]
wheels = ["pa", "wb"]
module_mm = 0.5
[[meshes]]
wheels = ["pb", "wc"]
module_mm = 0.6
[pointers.hand]
shows = "sun"
arbor = "c"
set_deg = 0
"""


def test_tip_over_an_axis_a_mesh_holds_is_found_without_positions():
    """A compound arbor whose great wheel is wider than the distance to the next arbor: 73
    teeth at module 0.5 stand over 18.25 mm from their axis, the 8/50 mesh at module 0.6
    holds the next axis 0.6 × 58 / 2 = 17.4 mm away (a = m (z1 + z2) / 2, standard spur-gear
    geometry: common practice, no source), so the wheel reaches over that arbor wherever the axes are put; no at_mm is
    needed to know it."""
    warns = said(FORCED, "reaches over")
    assert len(warns) == 1
    (w,) = warns
    assert w.item == "wheel 'wb'" and "axis of 'c', 17.4 mm" in w.message
    assert "mesh 2 (pb–wc)" in w.message and "end 'c' short" in w.fix
    assert "part the axes" in w.fix  # moving one axis alone cannot help: a mesh holds it
    # With both axes placed the measured check speaks, once.
    placed = FORCED.replace("[arbors.b]\n", "[arbors.b]\nat_mm = [0, 0]\n").replace(
        "[arbors.c]\n", "[arbors.c]\nat_mm = [17.4, 0]\n")
    warns = said(placed, "reaches over")
    assert len(warns) == 1 and "move 'c'" in warns[0].fix
    # A wheel within the distance says nothing.
    assert not said(FORCED.replace("wb = 73", "wb = 60"), "reaches over")


# --- speeds, torques, step-up --------------------------------------------------------------

CHAIN = header("a") + """
[arbors.a]
wheels = { pa = 10 }
[arbors.b]
wheels = { wb = 50, pb = 10 }
[arbors.c]
wheels = { wc = 40 }
[[meshes]]
wheels = ["pa", "wb"]
module_mm = 0.5
[[meshes]]
wheels = ["pb", "wc"]
module_mm = 0.5
[pointers.hand]
shows = "sun"
arbor = "c"
set_deg = 0
"""


@pytest.mark.parametrize("eff", [None, 0.9])
def test_torque_is_inverse_speed_ratio_times_efficiencies(eff):
    train = parse_train(CHAIN, "chain.toml")
    report = check(train, solve(train), efficiency=eff, crank_rpm=30)
    e = DEFAULT_EFFICIENCY if eff is None else eff
    arb = {a.name: a for a in report.arbors}
    # Virtual work: 1/|speed ratio|; losses: the product of the stage efficiencies.
    assert arb["b"].turns_per_crank == Fraction(-1, 5)
    assert arb["c"].turns_per_crank == Fraction(1, 20)
    assert arb["b"].torque_ideal == pytest.approx(5, rel=REL)
    assert arb["c"].torque_ideal == pytest.approx(20, rel=REL)
    assert arb["b"].torque == pytest.approx(5 * e, rel=REL)
    assert arb["c"].torque == pytest.approx(20 * e * e, rel=REL)
    assert arb["c"].rpm_max == pytest.approx(30 / 20, rel=REL)
    assert arb["c"].turns_per_year == pytest.approx(365.242189 / 20, rel=1e-8)
    assert arb["b"].direction == "against the crank" and arb["c"].direction == "with the crank"
    assert not any(a.step_up for a in report.arbors)
    # Tooth force on pa: 2 T / d = 2 · 1 N·m / 5 mm = 400 N per N·m at the crank.
    assert report.meshes[0].tooth_force_n == pytest.approx(400, rel=REL)


def test_step_up_flags():
    report = run_check(TRAINS / "step_up.toml")
    arb = {a.name: a for a in report.arbors}
    assert arb["middle"].step_up and arb["fast"].step_up and not arb["drive"].step_up
    assert arb["fast"].turns_per_crank == 36
    assert all(m.step_up for m in report.meshes)
    assert len([f for f in levels(report, "note") if "step-up stage" in f.message]) == 2
    (fast,) = levels(report, "warning", "[arbors.fast]")
    assert "36 times" in fast.message


def test_heaviest_stage_figure_is_the_load_index_and_says_so():
    # A motor stepping down in two stages: 10 -> 60 at module 0.5, then 10 -> 60 at 0.4.
    # By hand (F = 2 T / d; an arbor's torque is the crank's times the speed ratio's inverse
    # and the efficiency of each stage, common practice, no source): mesh 1, 1 N·m on
    # d = 5 mm: 400 N; mesh 2, 6 · 0.98 N·m on d = 4 mm: 2,940 N. Load index F / m²: 1,600
    # and 18,375 with faces of 3 modules (F / (m b): 533.3 and 6,125), so the index is 11.5
    # times the first stage's while the force is 7.35 times: the figure must say which it is.
    text = header("motor") + (
        '[arbors.motor]\nwheels = { mp = 10 }\n[arbors.mid]\nwheels = { mw = 60, np = 10 }\n'
        '[arbors.slow]\nwheels = { sw = 60 }\n'
        '[[meshes]]\nwheels = ["mp", "mw"]\nmodule_mm = 0.5\n'
        '[[meshes]]\nwheels = ["np", "sw"]\nmodule_mm = 0.4\n'
        '[pointers.year]\nshows = "sun"\narbor = "slow"\nset_deg = 0\n')
    train = parse_train(text, "t.toml")
    report = check(train, solve(train))
    f1, f2 = (m.tooth_force_n for m in report.meshes)
    assert f1 == pytest.approx(400, rel=REL) and f2 == pytest.approx(2940, rel=REL)
    (note,) = [f for f in report.findings if "heaviest-loaded" in f.message]
    assert "2,940 N" in note.message and "module 0.4 mm" in note.message
    assert "load index (force / (module × face))" in note.message
    assert "face 1.2 mm (3 modules, assumed: no face_mm)" in note.message
    assert "is 11.5 times the lightest stage's" in note.message  # 18,375 / 1,600


def test_epicyclic_tooth_forces_carry_the_output_load():
    # A carrier driven 12 -> 73 (module 0.4) round a fixed sun of 31 meshing a planet of 17,
    # whose 16 drives an output sun of 32 (module 0.5; 31 + 17 = 16 + 32). By hand: the output
    # turns 12/73 · (1 − 31/34) = 18/1241 per crank turn, so 1 N·m at the crank holds 1241/18 =
    # 68.94 N·m there (virtual work), and the output sun's teeth (d = 16 mm) carry
    # 2 · 68.94 / 0.016 = 8,618 N. The planet balances its two meshes about its own pivot,
    # F2 · 4.25 mm = F3 · 4 mm, so the fixed sun's teeth carry 8,111 N (statics, worked by
    # hand). The planet arbor's own torque against the frame (1241/576 N·m) gave 517 N, and
    # the fixed sun's mesh none.
    text = header("crank") + (
        '[arbors.crank]\nwheels = { cp = 12 }\n[arbors.carrier]\nwheels = { cw = 73 }\n'
        '[arbors.fixed_sun]\nwheels = { fs = 31 }\nfixed = true\naxis_with = "carrier"\n'
        '[arbors.planet]\non = "carrier"\nwheels = { pa = 17, pb = 16 }\n'
        '[arbors.out]\nwheels = { os = 32 }\naxis_with = "carrier"\n'
        '[[meshes]]\nwheels = ["cp", "cw"]\nmodule_mm = 0.4\n'
        '[[meshes]]\nwheels = ["fs", "pa"]\nmodule_mm = 0.5\n'
        '[[meshes]]\nwheels = ["pb", "os"]\nmodule_mm = 0.5\n'
        '[pointers.node]\nshows = "node"\narbor = "out"\nset_deg = 0\n')
    train = parse_train(text, "t.toml")
    report = check(train, solve(train), efficiency=1.0)
    arb = {a.name: a for a in report.arbors}
    assert arb["out"].turns_per_crank == Fraction(-18, 1241)
    f1, f2, f3 = (m.tooth_force_n for m in report.meshes)
    assert f1 == pytest.approx(2 / 0.0048, rel=1e-9)  # 2 T / d on the crank's 12 (4.8 mm)
    assert f3 == pytest.approx(2 * 1241 / 18 / 0.016, rel=1e-9)
    assert f2 == pytest.approx(f3 * 4.0 / 4.25, rel=1e-9)
    (note,) = [f for f in report.findings if "heaviest-loaded" in f.message]
    assert note.item == "mesh 3 (pb–os)"


# --- rules of thumb ------------------------------------------------------------------------

def test_face_width_of_a_mesh_enters_its_load_index():
    # The same two stages with face widths given (face_mm): the index is F / (m b), a
    # bending-stress figure up to the form factor (Lewis: σ = F / (b m Y), standard gear
    # geometry). Mesh 1: 400 / (0.5 · 4) = 200; mesh 2: 2,940 / (0.4 · 2) = 3,675: 18.4 times.
    text = header("motor") + (
        '[arbors.motor]\nwheels = { mp = 10 }\n[arbors.mid]\nwheels = { mw = 60, np = 10 }\n'
        '[arbors.slow]\nwheels = { sw = 60 }\n'
        '[[meshes]]\nwheels = ["mp", "mw"]\nmodule_mm = 0.5\nface_mm = 4\n'
        '[[meshes]]\nwheels = ["np", "sw"]\nmodule_mm = 0.4\nface_mm = 2\n'
        '[pointers.year]\nshows = "sun"\narbor = "slow"\nset_deg = 0\n')
    train = parse_train(text, "t.toml")
    report = check(train, solve(train))
    assert [m.face_mm for m in report.meshes] == [4.0, 2.0]
    assert [m.load_index for m in report.meshes] == pytest.approx([200, 3675], rel=REL)
    (note,) = [f for f in report.findings if "heaviest-loaded" in f.message]
    assert "at module 0.4 mm and face 2 mm;" in note.message and "18.4 times" in note.message
    # wider faces on the slow stage bring it level: 2,940 / (0.4 · 36.75) = 200, no note
    wide = parse_train(text.replace("face_mm = 2", "face_mm = 36.75"), "t.toml")
    report = check(wide, solve(wide))
    assert report.meshes[1].load_index == pytest.approx(200, rel=REL)
    assert not [f for f in report.findings if "heaviest-loaded" in f.message]


@pytest.mark.parametrize("module, words", [
    # 1 in = 25.4 mm exactly; a diametral pitch P is module 25.4 / P mm (standard gear
    # geometry, any machinery handbook)
    (0.02, "module 0.02 mm: finer than the finest watch teeth (about 0.05 mm); module_mm is "
           "in millimetres: 0.02 in would be 0.508 mm (our rule)"),
    (48, "module 48 mm: coarser than 10 mm, teeth 108 mm deep; a diametral pitch of 48 teeth "
         "per inch would be module 0.5292 mm (our rule)"),
    (0.05, None), (10, None), (0.8, None),
])
def test_a_module_in_inches_or_a_diametral_pitch_is_pointed_out(module, words):
    text = header("a") + (
        '[arbors.a]\nwheels = { a1 = 12 }\n[arbors.b]\nwheels = { b1 = 48 }\n'
        f'[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = {module}\n'
        '[pointers.p]\nshows = "moon"\narbor = "b"\nset_deg = 0\n')
    found = said(text, "(our rule)")
    found = [f for f in found if f.message.startswith("module ")]
    if words is None:
        assert not found
    else:
        (f,) = found
        assert f.level == "warning" and f.item == "mesh 1 (a1–b1)" and f.message == words


def test_small_pinion_rule():
    report = run_check(TRAINS / "small_pinion.toml")
    (warn,) = levels(report, "warning", "wheel 'five'")
    assert "rule of thumb" in warn.message and "'five' 10 and 'forty' 80" in warn.fix
    notes = levels(report, "note", "wheel 'seven'")
    assert any("8 or more" in f.message for f in notes)
    # The heaviest-loaded teeth: the slow stage's 7-leaf pinion.
    assert any("heaviest-loaded" in f.message and "'seven'" in f.message
               for f in levels(report, "note"))


def test_undercut_rule():
    report = run_check(TRAINS / "undercut.toml")
    (note,) = levels(report, "note", "wheel 'twelve'")
    assert "undercut below 17" in note.message and "x = 0.30" in note.fix
    assert not levels(report, "note", "wheel 'thirty_six'")


@pytest.mark.parametrize("shop,noted", [
    ("", False),  # the default form is cycloidal
    ('[workshop]\ntooth_form = "cycloidal"\n', False),
    ('[workshop]\ntooth_form = "involute"\n', True),
    ('[workshop.wheels.twelve]\nform = "involute"\n'
     '[workshop.wheels.thirty_six]\nform = "involute"\n', True),
    ('[workshop]\ntooth_form = "involute"\n[workshop.wheels.twelve]\nform = "cycloidal"\n'
     '[workshop.wheels.thirty_six]\nform = "cycloidal"\n', False),
])
def test_undercut_rule_only_for_wheels_cut_involute(shop, noted):
    """Cycloidal clock leaves are not undercut (standard gear geometry): the note is for a
    wheel the file has cut in the involute form, by the train's tooth_form or its own."""
    text = (TRAINS / "undercut.toml").read_text().split("[workshop]")[0] + "\n" + shop
    train = parse_train(text, "undercut.toml")
    report = check(train, solve(train))
    notes = [f for f in levels(report, "note", "wheel 'twelve'") if "undercut" in f.message]
    assert len(notes) == noted


def test_two_tooth_forms_in_one_mesh_is_an_error():
    """wheelwork cut refuses a mesh of a cycloidal and an involute wheel (they cannot run
    together); the check, which says whether a train can be built, says so too."""
    text = (TRAINS / "undercut.toml").read_text().split("[workshop]")[0]
    train = parse_train(text + '[workshop.wheels.thirty_six]\nform = "involute"\n', "t.toml")
    (err,) = levels(check(train, solve(train)), "error")
    assert err.item == "mesh 1 (twelve–thirty_six)" and "one tooth form" in err.message
    assert "[workshop.wheels.NAME]" in err.fix


def test_a_bore_wider_than_the_root_circle_is_an_error():
    """wheelwork cut refuses a bore chosen wider than a wheel's root circle; so does the check.
    The 12-tooth involute pinion at module 1: root circle 12 - 2.5 = 9.5 mm (ISO 53)."""
    text = (TRAINS / "undercut.toml").read_text()
    train = parse_train(text + "[workshop.wheels.twelve]\nbore_mm = 10\n", "t.toml")
    (err,) = levels(check(train, solve(train)), "error")
    assert err.item == "wheel 'twelve'" and "9.500 mm" in err.message
    assert "[workshop.wheels.twelve]" in err.fix
    train = parse_train(text + "[workshop.wheels.twelve]\nbore_mm = 9\n", "t.toml")
    assert not levels(check(train, solve(train)), "error")


def test_big_tooth_count_rules():
    report = run_check(TRAINS / "big_wheels.toml")
    (count,) = levels(report, "warning", "wheel 'w1'")
    assert "320 teeth" in count.message and "our rule" in count.message
    (size,) = levels(report, "warning", "wheel 'w2'")
    assert "125 mm across at module 0.5" in size.message and "240 teeth" in size.fix


def test_missing_module_is_one_note():
    report = run_check(TRAINS / "no_module.toml")
    notes = [f for f in report.findings if "module_mm" in f.message]
    assert len(notes) == 1 and notes[0].level == "note" and "1, 2" in notes[0].message
    assert all(m.centre_mm is None for m in report.meshes)


# --- pin-and-slot --------------------------------------------------------------------------

def test_pin_slot_slot_length_and_lead():
    report = run_check(TRAINS / "pin_slot.toml", pin_diameter_mm=1.0)
    (ps,) = report.pin_slots
    assert ps.slot_length_mm == pytest.approx(2 * 1 + 1, abs=MM)
    assert (ps.slot_inner_mm, ps.slot_outer_mm) == pytest.approx((8.5, 11.5), abs=MM)
    assert ps.max_lead_deg == pytest.approx(math.degrees(math.asin(0.1)), abs=1e-12)
    assert any("3 mm" in f.message for f in levels(report, "note", "[pin_slots.unequal]"))


def test_slot_speed_factors_match_differentiated_geometry():
    r, e = 10.0, 1.0
    lo, hi = slot_speed_factors(r, e)
    assert (lo, hi) == pytest.approx((r / (r + e), r / (r - e)), rel=REL)
    t = np.linspace(0, 1, 20001)
    h = 1e-6
    rate = 1 + (slot_follower_turns(t + h, e / r) - slot_follower_turns(t - h, e / r)) / (2 * h)
    assert rate.max() == pytest.approx(hi, rel=1e-7)
    assert rate.min() == pytest.approx(lo, rel=1e-7)


def test_speed_range_downstream_matches_numerical_differentiation():
    for path in (TRAINS / "pin_slot.toml", DEMO / "tide_office.toml"):
        train = load_train(path)
        kin = solve(train)
        report = check(train, kin)
        name = "out" if "pin_slot" in path.name else "moon"
        row = next(a for a in report.arbors if a.name == name)
        ps = next(iter(train.pin_slots.values()))
        mount = train.arbors[ps.pin_arbor].mount
        pin_rel = kin.rate(ps.pin_arbor, None if mount == "frame" else mount)
        period = 1.05 / abs(float(pin_rel))  # a little over one turn of the pin on its mount
        turns = np.linspace(0, period, 40001)
        angle = np.unwrap(2 * np.pi * kin.angle_turns(name, turns)) / (2 * np.pi)
        speed = np.gradient(angle, turns)
        lo, hi = row.speed_range
        tol = 1e-4 * max(abs(lo), abs(hi))
        assert speed.min() == pytest.approx(lo, abs=tol), path.name
        assert speed.max() == pytest.approx(hi, abs=tol), path.name


# --- command line --------------------------------------------------------------------------

def test_cli_json_parses(capsys):
    assert main(["check", str(DEMO / "tide_office.toml"), "--json", "--crank-rpm", "30"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["crank_rpm"] == 30 and data["efficiency"] == DEFAULT_EFFICIENCY
    assert {"meshes", "arbors", "pin_slots", "findings", "caveat", "counts"} <= set(data)
    assert data["arbors"][0]["turns_per_crank"] == "1"
    assert all(set(f) == {"level", "item", "message", "fix"} for f in data["findings"])


def test_cli_tables_and_caveat(capsys):
    assert main(["check", str(TRAINS / "coaxial_mismatch.toml")]) == 0
    out = " ".join(capsys.readouterr().out.split())  # the console wraps at its width
    assert "meshes" in out and "arbors" in out and "design estimates" in out
    assert "0.4 mm too close" in out


def test_cli_strict_exits_1_on_errors(capsys):
    assert main(["check", str(TRAINS / "coaxial_mismatch.toml"), "--strict"]) == 1
    assert main(["check", str(DEMO / "nineteen_year_drum.toml"), "--strict"]) == 0
    capsys.readouterr()


def test_cli_bad_file_is_one_line(capsys, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[train\n", encoding="utf-8")
    assert main(["check", str(bad)]) == 1
    err = capsys.readouterr().err
    assert err.startswith("wheelwork: error:") and len(err.strip().splitlines()) == 1
    assert main(["check", str(tmp_path / "missing.toml")]) == 1


def test_cli_bad_efficiency_is_usage_error(capsys):
    assert main(["check", str(DEMO / "tide_office.toml"), "--efficiency", "1.5"]) == 2
    capsys.readouterr()


def test_engine_rejects_bad_parameters():
    train = load_train(DEMO / "nineteen_year_drum.toml")
    kin = solve(train)
    with pytest.raises(ValueError):
        check(train, kin, efficiency=0)
    with pytest.raises(ValueError):
        check(train, kin, crank_rpm=-1)


def test_three_axes_must_form_a_triangle():
    report = run_check(TRAINS / "triangle.toml")
    (err,) = levels(report, "error")
    assert err.item.startswith("mesh 1") and "exceeds the other two" in err.message
    assert "2 mm" in err.message  # 30 - (20 + 8)
    # The demo trains' axes all close.
    assert not levels(run_check(DEMO / "tide_office.toml"), "error")


def test_pin_diameter_from_the_file_sets_the_slot_length():
    """Slot length = 2 × offset + pin diameter (plane geometry of the pin's travel)."""
    root = Path(__file__).resolve().parent.parent
    text = (root / "engine" / "trains" / "tide_office.toml").read_text()
    assert "pin_diameter_mm = 1.2" in text
    train = parse_train(text.replace("pin_diameter_mm = 1.2", "pin_diameter_mm = 2.0"), "t")
    (ps,) = check(train, solve(train)).pin_slots
    assert ps.slot_length_mm == pytest.approx(2 * 0.985 + 2.0)
    assert ps.pin_diameter_mm == 2.0


def test_carried_pin_slot_extremes_by_hand():
    """A pin on an epicycle (arm 10 mm, pin radius 7.23 mm, slot arbor on the carrier's axis),
    the epicycle turning 1.6 times against the carrier: by hand, the pin comes within
    10 - 7.23 = 2.77 mm of the centre and goes out to 17.23 mm; the follower leads or lags the
    carrier by at most asin(7.23 / 10) = 46.3°; at the nearest approach it runs backwards at
    (10 - 7.23 × 2.6) / 2.77 = -3.18 times the carrier's speed, at the farthest forwards at
    (10 + 7.23 × 2.6) / 17.23 = 1.67 times."""
    from tests.test_kinematics import CARRIED, train_text
    train = parse_train(train_text(CARRIED.format(z=25, r=7.23, e=0.0, arm=10.0, arm_deg=0,
                                                  pin_deg=0)), "test.toml")
    report = check(train, solve(train))
    (c,) = report.pin_slots
    assert c.slot_inner_mm + c.pin_diameter_mm / 2 == pytest.approx(2.77)
    assert c.slot_outer_mm - c.pin_diameter_mm / 2 == pytest.approx(17.23)
    assert c.max_lead_deg == pytest.approx(math.degrees(math.asin(0.723)))
    assert c.speed_factor_min == pytest.approx((10 - 7.23 * 2.6) / 2.77, rel=1e-6)
    assert c.speed_factor_max == pytest.approx((10 + 7.23 * 2.6) / 17.23, rel=1e-6)
    assert any("leads or lags 'a'" in f.message for f in report.findings)


def test_pin_diameter_is_called_assumed_only_when_the_file_has_none(tmp_path, capsys):
    from engine.cli import main

    root = Path(__file__).resolve().parent.parent
    text = (root / "engine" / "trains" / "tide_office.toml").read_text()
    assert main(["check", str(root / "engine" / "trains" / "tide_office.toml")]) in (0, 1)
    out = " ".join(capsys.readouterr().out.split())
    assert "pin Ø 1.2 mm)" in out and "assumed" not in out.split("pin Ø 1.2 mm")[1][:10]
    without = tmp_path / "nopin.toml"
    without.write_text(text.replace("pin_diameter_mm = 1.2\n", ""))
    assert main(["check", str(without)]) in (0, 1)
    out = " ".join(capsys.readouterr().out.split())
    assert "pin Ø 1 mm assumed)" in out


def test_the_tide_office_demo_has_no_warning():
    """The bundled lunisolar demo is laid out clean: its idlers stand clear of the sun arbor's
    great wheel (no tip circle over another arbor's axis), its pin-and-slot's two arbors,
    0.985 mm apart, have pivots of their own small enough for both holes (0.45 mm), and
    nothing else is warned of; its notes (the slot's length, the pin-and-slot's lead) stay."""
    report = run_check(DEMO / "tide_office.toml")
    assert not levels(report, "warning"), [f.message for f in levels(report, "warning")]
    assert not levels(report, "error")


def test_no_demo_train_has_a_wheel_over_another_arbors_axis():
    """The bundled demos are laid out so that no tip circle reaches over another arbor's
    axis (the lunation board's moon_mid_driver, 33 mm to its tips, once stood 12.6 mm from
    the month arbor)."""
    for path in sorted(DEMO.glob("*.toml")):
        over = [f.message for f in run_check(path).findings if "reaches over" in f.message]
        assert not over, (path.name, over)


# --- the train's own running speed (--real-time) --------------------------------------------

def test_real_time_speeds_worked_by_hand(capsys):
    """The tide office's crank arbor turns once a day: 1/1440 rpm. Its first mesh's driver is
    on that arbor, 10 teeth at module 0.5 (d = 5 mm), so its pitch line runs at
    v = π d n = π × 0.005 m × (1/86400) turns a second (common practice, no source)."""
    path = DEMO / "tide_office.toml"
    report = run_check(path, real_time=True)
    assert report.real_time and report.days_per_turn == 1
    assert report.crank_rpm == pytest.approx(1 / 1440, rel=REL)
    first = report.meshes[0]
    assert (first.driver, first.driver_pitch_mm) == ("day_sun_pinion", pytest.approx(5.0))
    assert first.pitch_speed_m_s == pytest.approx(math.pi * 0.005 / 86400, rel=1e-9)
    # the same train at the hand default runs 86,400 times faster
    hand = run_check(path)
    assert not hand.real_time and hand.crank_rpm == 60
    assert hand.meshes[0].pitch_speed_m_s == pytest.approx(first.pitch_speed_m_s * 86400, rel=1e-9)
    for a, b in zip(report.arbors, hand.arbors, strict=True):
        assert b.rpm_max == pytest.approx(a.rpm_max * 86400, rel=1e-9)
    # a year-cranked orrery: one turn every 365.2422 days, 1 / (365.2422 × 1440) rpm
    orrery = run_check(DEMO / "table_orrery.toml", real_time=True)
    assert orrery.crank_rpm == pytest.approx(1 / (365.2422 * 1440), rel=REL)
    assert orrery.days_per_turn == Fraction(3652422, 10000)
    assert not [f for f in orrery.findings if "pitch-line speed" in f.message]


def test_real_time_cli_heading_and_json(capsys):
    path = str(DEMO / "tide_office.toml")
    assert main(["check", path, "--real-time"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "at the train's own running speed, 0.000694444 rpm on 'day' (1 turn = 1 day)" in out
    assert "pitch-line speed at the train's own running speed" in out
    assert "design estimates" in out
    assert main(["check", path, "--real-time", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["real_time"] is True and data["days_per_turn"] == "1"
    assert data["crank_rpm"] == pytest.approx(1 / 1440, rel=REL)
    assert "design estimates" in data["caveat"]
    assert main(["check", path, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["real_time"] is False and data["crank_rpm"] == 60


def test_real_time_and_crank_rpm_exclude_each_other(capsys):
    path = str(DEMO / "tide_office.toml")
    assert main(["check", path, "--real-time", "--crank-rpm", "30"]) == 2
    assert "not allowed with" in capsys.readouterr().err
    train = load_train(path)
    with pytest.raises(ValueError, match="not both"):
        check(train, solve(train), crank_rpm=30, real_time=True)


def test_real_time_on_a_motor_shaft(tmp_path, capsys):
    """The tide office driven from a 1500 rpm motor shaft (days_per_turn = 1/(1500 × 1440)):
    its first mesh's 5 mm pinion on the motor shaft runs at
    v = π d n = π × 0.005 m × 1500/60 turns a second = 0.3927 m/s (common practice, no source)."""
    text = (DEMO / "tide_office.toml").read_text(encoding="utf-8")
    motor = tmp_path / "motor.toml"
    motor.write_text(text.replace("days_per_turn = 1", 'days_per_turn = "1/2160000"', 1),
                     encoding="utf-8")
    report = run_check(motor, real_time=True)
    assert report.crank_rpm == pytest.approx(1500, rel=REL)
    assert report.meshes[0].pitch_speed_m_s == pytest.approx(math.pi * 0.005 * 1500 / 60,
                                                             rel=1e-9)
    assert report.arbors[0].rpm_max == pytest.approx(1500, rel=REL)
    assert main(["check", str(motor), "--real-time"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "own running speed, 1,500 rpm on 'day' (1 turn = 0.04 seconds)" in out, out[:300]


def test_deep_cycloidal_teeth_one_note_naming_every_mesh():
    # The tide office's cycloidal wheels against pinions of 19 to 48 leaves: cut draws their
    # addenda at 1.80-2.28 modules, above the 1.75 m the cycloidal form suits (our rule; the
    # addenda from the BS 978-2 construction, values from memory). The check says so once,
    # naming the eight meshes, where it said nothing; cut, once for the eight wheels.
    report = run_check(DEMO / "tide_office.toml")
    deep = [f for f in report.findings if "deep cycloidal teeth" in f.message]
    assert len(deep) == 1
    (note,) = deep
    assert note.level == "note" and note.item == "meshes 3, 4, 5, 6, 7, 10, 11, 12"
    assert "on 8 wheels: sun_w3 (addendum 2.05 m against 25 leaves), perigee_w1 (1.80 m " \
           "against 19)" in note.message
    assert 'tooth_form = "involute"' in note.fix
    # cut involute, nothing is deep
    text = (DEMO / "tide_office.toml").read_text() + '\n[workshop]\ntooth_form = "involute"\n'
    train = parse_train(text, "t.toml")
    assert not [f for f in check(train, solve(train)).findings if "deep" in f.message]


def test_the_meshes_table_gives_centre_distances_to_the_micrometre(tmp_path, capsys):
    # a = m (z1 + z2) / 2 = 0.35 × 605 / 2 = 105.875 mm (standard spur-gear geometry); four
    # significant figures printed 105.9, 0.025 mm from where the hole goes, more than the
    # 0.02 mm a mesh takes up
    text = header("crank") + (
        '[arbors.crank]\nwheels = { cp = 5 }\n[arbors.out]\nwheels = { ow = 600 }\n'
        '[[meshes]]\nwheels = ["cp", "ow"]\nmodule_mm = 0.35\n'
        '[pointers.p]\nshows = "sun"\narbor = "out"\nset_deg = 0\n')
    train = tmp_path / "wide.toml"
    train.write_text(text)
    assert main(["check", str(train)]) == 0
    out = capsys.readouterr().out
    assert " 105.875 " in out and "105.9 " not in out


def test_a_fast_arbor_at_running_speed_is_not_said_to_be_cranked_by_hand():
    # at the train's own running speed (a clock or motor turns the crank) the 10:1 rule is
    # about the friction the drive must overcome, not a hand on the crank
    report = run_check(TRAINS / "step_up.toml", real_time=True)
    (fast,) = levels(report, "warning", "[arbors.fast]")
    assert "by hand" not in fast.message and "clock or motor" in fast.message
    steps = [f for f in report.findings if "step-up stage" in f.message]
    assert steps and all("felt at the crank" not in f.message for f in steps)
    (hand,) = levels(run_check(TRAINS / "step_up.toml"), "warning", "[arbors.fast]")
    assert "heavy to crank by hand" in hand.message


def test_efficiency_help_says_what_is_taken(capsys):
    # the help said 0-1, and 0 is refused; the figure also counts each pin-and-slot stage
    assert main(["check", "--help"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "each mesh and pin-and-slot stage, above 0 and at most 1" in out
    assert main(["check", "tide_office", "--efficiency", "0"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_the_slot_line_gives_the_slot_ends_as_the_note_does(capsys):
    # r − e − d/2 = 9 − 0.985 − 0.6 = 7.415 mm and r + e + d/2 = 10.585 mm (docs/checks.md):
    # the summary line said 7.42–10.6 beside a note saying 7.415 to 10.585
    assert main(["check", "tide_office"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "slot 3.17 mm long (7.415–10.585 mm from the slot axis, pin Ø 1.2 mm)" in out


def test_a_misplaced_axis_is_moved_where_the_file_places_it():
    # 'c' has no position of its own: it is on the axis of 'a' (axis_with). Both meshes want
    # 'b' 20 mm from that axis (0.5 × (60 + 20) / 2 = 0.5 × (30 + 50) / 2, standard
    # spur-gear geometry), and the file puts 'b' at 19.9 mm: the fix for mesh 2 said to move
    # 'c' to [-0.1, 0], off the axis it shares with 'a'; both meshes say to move 'b'
    text = header("a") + (
        '[arbors.a]\nwheels = { a1 = 60 }\nat_mm = [0, 0]\n'
        '[arbors.b]\nwheels = { b1 = 20, b2 = 30 }\nat_mm = [19.9, 0]\n'
        '[arbors.c]\nwheels = { c1 = 50 }\naxis_with = "a"\n'
        '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.5\n'
        '[[meshes]]\nwheels = ["b2", "c1"]\nmodule_mm = 0.5\n'
        '[pointers.p]\nshows = "moon"\narbor = "c"\nset_deg = 0\n')
    fixes = [f.fix for f in said(text, "the axes are placed 19.9 mm apart")]
    assert len(fixes) == 2
    assert all(f.startswith("move 'b' to at_mm = [20.0, 0.0]") for f in fixes)


def test_the_pinion_fix_does_not_break_the_largest_count_rule():
    # 5 leaves into 600 teeth: doubling both keeps the ratio but makes a 1,200-tooth wheel,
    # four times the 300 the check itself allows on a blank (our rule); the fix said so not
    text = header("a") + (
        '[arbors.a]\nwheels = { cp = 5 }\n[arbors.b]\nwheels = { mw = 600 }\n'
        '[[meshes]]\nwheels = ["cp", "mw"]\nmodule_mm = 0.35\n'
        '[pointers.p]\nshows = "sun"\narbor = "b"\nset_deg = 0\n')
    (few,) = said(text, "5 leaves: fewer than 6")
    assert "'cp' 10 and 'mw' 1200 keep the ratio, but 1200 teeth is more than 300" in few.fix
    assert "split the stage in two" in few.fix


def _tide_office_pivots(own: str) -> str:
    """The tide office's text with its pin and slot arbors' own ``pivot_mm`` lines replaced by
    ``own`` (an empty string: the frame's, [workshop] pivot_mm, default 1 mm)."""
    text = (DEMO / "tide_office.toml").read_text()
    assert text.count("pivot_mm = 0.45\n") == 2
    return text.replace("pivot_mm = 0.45\n", own)


def test_pin_slot_pivot_holes_that_run_into_one_another_are_a_warning():
    # the tide office's pin and slot axes stand 0.985 mm apart (its offset_mm): at the default
    # 1 mm pivots two holes overlap, their centres closer than the sum of their radii (plain
    # geometry); wheelwork cut's plate note says the same
    train = parse_train(_tide_office_pivots(""), "tide_default_pivots.toml")
    (w,) = levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    assert w.message.startswith("tide_default_pivots.toml: ")
    assert "'pin_arbor' and 'slot_arbor' are 0.985 mm apart" in w.message
    assert "1 mm across" in w.message and "cock or bridge" in w.fix
    text = _tide_office_pivots("") + "\n[workshop]\npivot_mm = 0.9\n"
    train = parse_train(text, "tide_small_pivots.toml")
    assert not levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    text = _tide_office_pivots("") + "\n[workshop]\npivot_mm = 0.99\n"
    train = parse_train(text, "tide_big_pivots.toml")
    (w,) = levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    assert w.message.startswith("tide_big_pivots.toml: ")


def test_an_arbors_own_pivot_sets_its_hole_against_its_neighbours():
    # one arbor's own pivot_mm: 1.2 and 0.7 mm holes need 0.95 mm between centres (the sum of
    # the radii), so 0.985 mm clears them and 1.2 and 0.8 (1.0 mm) does not
    text = _tide_office_pivots("").replace(
        "wheels = { pin_wheel = 48 }\n", "wheels = { pin_wheel = 48 }\npivot_mm = 1.2\n")
    clear = text.replace("wheels = { slot_wheel = 40 }\n",
                         "wheels = { slot_wheel = 40 }\npivot_mm = 0.7\n")
    train = parse_train(clear, "tide_mixed.toml")
    assert train.pivot_of("pin_arbor") == 1.2 and train.pivot_of("moon") == 1.0
    assert not levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    tight = text.replace("wheels = { slot_wheel = 40 }\n",
                         "wheels = { slot_wheel = 40 }\npivot_mm = 0.8\n")
    train = parse_train(tight, "tide_mixed.toml")
    (w,) = levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    assert "1.2 mm and 0.8 mm across" in w.message
    assert "[arbors.pin_arbor] and [arbors.slot_arbor] pivot_mm" in w.fix


def _tide_office_cocks(pin: str, slot: str) -> str:
    """The tide office at the frame's 1 mm pivots, its pin and slot arbors pivoted as
    ``pivots_in`` says (an empty string: the default, both plates)."""
    text = _tide_office_pivots("")
    for wheel, where in (("pin_wheel = 48", pin), ("slot_wheel = 40", slot)):
        if where:
            text = text.replace(f"wheels = {{ {wheel} }}\n",
                                f"wheels = {{ {wheel} }}\npivots_in = \"{where}\"\n")
    return text


@pytest.mark.parametrize("pin, slot, plate", [
    ("", "", ""),  # both in both plates: they run into one another in both
    ("front", "", "front"),  # the slot arbor's hole meets the pin's in the front plate only
    ("", "back", "back"),
    ("front", "back", None),  # one hole in each plate, the other pivot in a cock: clear
    ("cocks", "", None),
    ("back", "front", None),
])
def test_arbors_pivoted_in_cocks_have_holes_only_where_they_say(pin, slot, plate):
    # [arbors.NAME] pivots_in: the overlapping-holes rule compares only holes in one plate;
    # the tide office's pin and slot arbors, 0.985 mm apart at 1 mm pivots (plane geometry:
    # 0.985 < 0.5 + 0.5), pivoted one in each plate with a cock for the other, need no
    # smaller pivots
    train = parse_train(_tide_office_cocks(pin, slot), "tide_cocks.toml")
    found = levels(check(train, solve(train)), "warning", "[pin_slots.anomaly]")
    if plate is None:
        assert not found
        return
    (w,) = found
    assert "run into one another" in w.message
    assert (f"in the {plate} plate" in w.message) == bool(plate)
    assert "in the front plate" not in w.message or plate == "front"
    assert 'pivots_in = "front" or "back"' in w.fix


def test_a_bad_pivots_in_is_one_line_naming_the_arbor():
    with pytest.raises(TrainError) as info:
        parse_train(_tide_office_cocks("fornt", ""), "bad.toml")
    assert str(info.value) == ("bad.toml: [arbors.pin_arbor] pivots_in: should be one of both, "
                               "front, back, cocks, got 'fornt'; did you mean 'front'?")
    with pytest.raises(TrainError, match=r"^bad.toml: \[arbors.pin_arbor\] pivots_in: should be "
                       "one of both, front, back, cocks, got 1$"):
        parse_train(_tide_office_pivots("").replace(
            "wheels = { pin_wheel = 48 }\n", "wheels = { pin_wheel = 48 }\npivots_in = 1\n"),
            "bad.toml")


def test_the_heaviest_load_is_written_as_the_estimate_it_is():
    # the tide office's node stage: 190,019 N per N·m at the crank by the formula; "about" a
    # figure of six digits claims a precision no estimate has (three significant figures)
    report = run_check(DEMO / "tide_office.toml")
    (note,) = [f for f in report.findings if "heaviest-loaded" in f.message]
    assert "about 190,000 N on the teeth of 'node_p2'" in note.message
    assert "(estimate)" in note.message


def _close_arbors(c_at: str) -> str:
    """Three frame arbors: 'a' and 'b' 15 mm apart (module 0.5, 20 + 40 teeth), 'c' placed by
    the file at ``c_at``; [workshop] pivot_mm left at its 1 mm."""
    return (header("a") + '[arbors.a]\nwheels = { a1 = 20 }\nat_mm = [0, 0]\n'
            '[arbors.b]\nwheels = { b1 = 40, b2 = 10 }\nat_mm = [15, 0]\n'
            f'[arbors.c]\nwheels = {{ c1 = 30 }}\nat_mm = {c_at}\n'
            '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.5\n'
            '[[meshes]]\nwheels = ["b2", "c1"]\n'
            '[pointers.p]\nshows = "sun"\narbor = "c"\nset_deg = 0\n')


def test_any_two_pivot_holes_that_run_into_one_another_are_a_warning(tmp_path, capsys):
    # two arbors the file places 0.8 mm apart (at_mm), at 1 mm pivots: their holes overlap
    # (0.8 < 0.5 + 0.5, plane geometry); once only a pin-and-slot's two holes were warned of,
    # and these were said by wheelwork cut's plate note alone. The check and the plate say it
    # in the same words (engine.checks.hole_overlap_text)
    (w,) = said(_close_arbors("[15.8, 0]"), "run into one another")
    assert w.level == "warning" and w.item == "[arbors.c] at_mm"
    assert w.message.startswith("t.toml: the pivot holes of 'b' and 'c' are 0.8 mm apart "
                                "centre to centre (at_mm) but 1 mm across")
    assert "cock or bridge" in w.fix and "[arbors.b] and [arbors.c] pivot_mm" in w.fix
    assert not said(_close_arbors("[16.1, 0]"), "run into one another")  # 1.1 mm: clear
    path = tmp_path / "close.toml"
    path.write_text(_close_arbors("[15.8, 0]"))
    assert main(["cut", str(path), "--out", str(tmp_path / "out"), "--json"]) == 0
    (plate,) = [p for p in json.loads(capsys.readouterr().out)["parts"] if p["kind"] == "plate"]
    (note,) = [n for n in plate["notes"] if "run into one another" in n]
    assert note.startswith(w.message.removeprefix("t.toml: ").replace("(at_mm)", "(as drawn)"))


def test_a_mesh_too_small_for_its_pivots_is_a_warning():
    # module 0.05 with 6 + 6 leaves: the axes stand m (z1 + z2) / 2 = 0.3 mm apart, so two
    # 1 mm holes overlap wherever the file puts them; 0.25 mm pivots clear them
    text = (header("a") + '[arbors.a]\nwheels = { a1 = 6 }\n[arbors.b]\nwheels = { b1 = 6 }\n'
            '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.05\n'
            '[pointers.p]\nshows = "sun"\narbor = "b"\nset_deg = 0\n')
    (w,) = said(text, "run into one another")
    assert w.item == "mesh 1 (a1–b1)" and "0.3 mm apart centre to centre (its centre " \
        "distance)" in w.message
    assert "more teeth or a larger module" in w.fix
    assert not said(text + "[workshop]\npivot_mm = 0.25\n", "run into one another")


ARM = ('[crank]\narbor = "arm"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
       'set = "angles"\n[arbors.arm]\nwheels = {}\n'
       '[arbors.sun]\nwheels = { sun = 40 }\nfixed = true\naxis_with = "arm"\n'
       '[arbors.planet]\nwheels = { pw = 20 }\non = "arm"\nat_mm = [30, 0]\n'
       '[[meshes]]\nwheels = ["sun", "pw"]\nmodule_mm = 1\n'
       '[pointers.p]\nshows = "sun"\narbor = "planet"\nset_deg = 0\n')


def test_a_carrier_out_of_balance_is_noted_as_an_estimate():
    """An arm carrying one planet 30 mm out turns out of balance, plate and wheel on one side:
    a note with the estimate. By hand (plane geometry, brass 8.47 g/cm³ as engine.plate takes
    it): the 20-leaf planet, a solid disc of its 10 mm pitch radius and 3 mm face (3 modules),
    weighs 8.47e-3 · π · 10² · 3 = 7.98 g at 30 mm: 239.5 g·mm. The plate, a rectangle from
    6 mm behind the axis to 2 mm past the planet's tips (10.805 mm: a cycloidal pinion of 11
    or more leaves stands 0.805 modules above its pitch circle, BS 978-2 as engine.toothform
    draws it), 48.8 by 25.6 mm, has its centre 18.4 mm out: 8.47e-3 · A · 18.4 g·mm per mm."""
    train = parse_train(ARM, "arm.toml")
    (note,) = [f for f in check(train, solve(train)).findings
               if "out of balance" in f.message]
    assert note.level == "note" and note.item == "[arbors.arm]"
    assert note.message.startswith("arm.toml: carrier 'arm' turns out of balance (design "
                                   "estimate, brass 8.47 g/cm³)")
    assert "about 239 g·mm" in note.message
    x1 = 30 + 10.805 + 2
    area, centre = (x1 + 6) * 2 * 12.805, (x1 - 6) / 2
    assert f"centre {centre:.1f} mm from the axis" in note.message
    assert f"about {round(8.47e-3 * area * centre)} g·mm for each mm" in note.message
    assert "counterweight" in note.fix and "--carrier-outline disc" in note.fix
    # the same arm with a second planet opposite carries its wheels in balance; its plate,
    # then as long one side as the other, too: no note
    twin = ARM.replace('[[meshes]]', '[arbors.twin]\nwheels = { tw = 20 }\non = "arm"\n'
                       'at_mm = [-30, 0]\n[[meshes]]\nwheels = ["sun", "tw"]\nmodule_mm = 1\n'
                       '[[meshes]]', 1)
    train = parse_train(twin, "twin.toml")
    assert not [f for f in check(train, solve(train)).findings if "out of balance" in f.message]


def _balance_note(text: str):
    train = parse_train(text, "arm.toml")
    (note,) = [f for f in check(train, solve(train)).findings if "out of balance" in f.message]
    return note


def test_a_carrier_plate_of_known_thickness_is_weighed_whole():
    """[workshop] carrier_plate_mm gives the plate's whole figure: the per-mm figure of the
    test above times the thickness, and plate and planet together, both on the planet's side
    (plane geometry: moments add as vectors, here along one line), with the counterweight
    that balances them at the planet's 30 mm. Said with what the estimate leaves out."""
    x1 = 30 + 10.805 + 2
    area, centre = (x1 + 6) * 2 * 12.805, (x1 - 6) / 2
    plate = 8.47e-3 * area * centre * 1.5
    wheel = 8.47e-3 * math.pi * 10 ** 2 * 3 * 30
    note = _balance_note(ARM + "[workshop]\ncarrier_plate_mm = 1.5\n")
    assert "1.5 mm thick" in note.message and "for each mm" not in note.message
    assert f"about {round(plate)} g·mm" in note.message
    assert f"together about {round(plate + wheel)} g·mm" in note.message
    assert f"about {(plate + wheel) / 30:.1f} g at 30 mm" in note.fix
    assert "arbors, collets, pins and screws" in note.message
    # the twin arm: wheels in balance, the plate too; a thicker plate does not change that
    twin = ARM.replace('[[meshes]]', '[arbors.twin]\nwheels = { tw = 20 }\non = "arm"\n'
                       'at_mm = [-30, 0]\n[[meshes]]\nwheels = ["sun", "tw"]\nmodule_mm = 1\n'
                       '[[meshes]]', 1) + "[workshop]\ncarrier_plate_mm = 3\n"
    train = parse_train(twin, "twin.toml")
    assert not [f for f in check(train, solve(train)).findings if "out of balance" in f.message]
    # without the key the note asks for it
    assert "[workshop] carrier_plate_mm" in _balance_note(ARM).message


def test_a_carrier_cage_of_two_plates_is_weighed_as_two():
    """[arbors.CARRIER] plates = 2 says the carrier is a cage of a front and a back plate
    alike: the plate's figure is twice the one plate's (the same outline, twice the metal:
    mass is density times volume), the wheels' unchanged, and plate and wheels added as
    vectors again. Without the key the note says it weighed one plate and names the key."""
    x1 = 30 + 10.805 + 2
    area, centre = (x1 + 6) * 2 * 12.805, (x1 - 6) / 2
    plate = 8.47e-3 * area * centre * 1.5
    wheel = 8.47e-3 * math.pi * 10 ** 2 * 3 * 30
    thick = "[workshop]\ncarrier_plate_mm = 1.5\n"
    one = _balance_note(ARM + thick)
    assert "weighed as one plate" in one.message and "plates = 2 in [arbors.arm]" in one.message
    cage = _balance_note(ARM.replace("[arbors.arm]\n", "[arbors.arm]\nplates = 2\n", 1) + thick)
    assert "its front and back plates" in cage.message and "weighed as one" not in cage.message
    assert f"about {round(2 * plate)} g·mm" in cage.message
    assert f"together about {round(2 * plate + wheel)} g·mm" in cage.message
    # said to be one plate: weighed as one, and no hint
    said = _balance_note(ARM.replace("[arbors.arm]\n", "[arbors.arm]\nplates = 1\n", 1) + thick)
    assert f"about {round(plate)} g·mm" in said.message and "weighed as one" not in said.message


def test_a_crossed_out_carried_wheel_is_weighed_without_its_windows():
    """A 60-tooth planet at module 1, 50 mm out, crossed out five ways: weighed as its pitch
    disc less the windows drawn in it. By hand, the windows are about the ring between hub
    and rim less the crossings, each a trapezium its widths at hub and rim wide (plane
    geometry; the rounded corners leave a little more metal, so within 3 %)."""
    from engine.drawing import crossed_blank, default_bore_mm, tooth_forms

    text = ARM.replace("pw = 20", "pw = 60").replace("[30, 0]", "[50, 0]")
    solid = _balance_note(text)
    crossed = _balance_note(text + "[workshop]\ncrossings = 5\n")
    assert "less the windows of the crossings drawn in pw" in crossed.message
    assert "windows" not in solid.message
    tooth = tooth_forms(parse_train(text, "arm.toml"))["pw"]
    blank = crossed_blank(tooth, default_bore_mm(tooth), 5)
    rim_in = tooth.root_radius_mm - blank.rim_mm
    windows = (math.pi * (rim_in ** 2 - blank.hub_mm ** 2)
               - 5 * (rim_in - blank.hub_mm) * (blank.width_rim_mm + blank.width_hub_mm) / 2)
    disc = math.pi * tooth.pitch_radius_mm ** 2

    def wheel_gmm(message):
        return float(message.split("their face wide")[1].split("about ")[1].split(" g·mm")[0]
                     .replace(",", ""))

    assert wheel_gmm(solid.message) == pytest.approx(8.47e-3 * disc * 3 * 50, rel=2e-3)
    assert wheel_gmm(crossed.message) == pytest.approx(8.47e-3 * (disc - windows) * 3 * 50,
                                                       rel=0.03)
    assert wheel_gmm(crossed.message) < 0.6 * wheel_gmm(solid.message)
