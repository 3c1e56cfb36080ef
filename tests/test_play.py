"""Play and errors of hand-made wheels: hand calculations, plane geometry, the Monte Carlo."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from engine.checks import check
from engine.cli import main
from engine.kinematics import solve
from engine.loader import load_train, parse_train
from engine.play import (
    INVOLUTE_BACKLASH_M,
    Tolerances,
    depth_flags,
    mesh_backlash_pitch,
    play,
)

HERE = Path(__file__).resolve().parent
SMALL = HERE / "trains" / "workshop_small.toml"
DEMO = HERE.parent / "engine" / "trains" / "tide_office.toml"


def _small(**tol):
    train = load_train(SMALL)
    return train, play(train, solve(train), Tolerances.of(train, **tol), years=2.0,
                       builds=200, samples=128, seed=7)


def test_dead_play_of_a_two_mesh_train_by_hand():
    # drive pinion 10 → middle wheel 60 (module 0.5); middle pinion 8 → hand wheel 64
    # (module 0.6); 0.05 mm backlash in each mesh (the file's [workshop] backlash_mm).
    # By hand: the hand wheel (pitch radius 0.6 × 64 / 2 = 19.2 mm) turns freely by
    # 0.05 / 19.2 rad in mesh 2; the middle arbor (pitch radius 0.5 × 60 / 2 = 15 mm) by
    # 0.05 / 15 rad in mesh 1, which reaches the hand reduced by 8 / 64.
    mesh2 = math.degrees(0.05 / 19.2)
    mesh1 = math.degrees(0.05 / 15.0) * 8 / 64
    train, report = _small()
    (hand,) = report.pointers
    assert hand.dead_play_deg == pytest.approx(mesh1 + mesh2, rel=1e-12)
    assert [c.deg for c in hand.contributions] == pytest.approx([mesh2, mesh1], rel=1e-12)
    assert hand.contributions[0].mesh.startswith("mesh 2")


def test_a_pointer_on_the_crank_arbor_has_no_play_at_all():
    """The table orrery's Earth arm is on the crank's own arbor: no mesh stands between it
    and the crank, so its dead play and running error are nothing (common practice, no
    source). The meshes' sensitivities came from a least-squares solve whose rounding gave it
    7.2e-14° of dead play "from mesh 11" and a once-per-turn error of 1.77e-15°."""
    train = load_train(HERE.parent / "engine" / "trains" / "table_orrery.toml")
    report = play(train, solve(train), years=10.0, builds=20, samples=16)
    earth = next(p for p in report.pointers if p.pointer == "earth")
    assert earth.dead_play_deg == 0.0
    assert earth.contributions == () and earth.periodic == ()
    assert earth.rss_deg == 0.0 and earth.mc_max_deg == 0.0
    mercury = next(p for p in report.pointers if p.pointer == "mercury")
    assert len(mercury.contributions) == 2  # its own two meshes, not the moon's
    assert mercury.dead_play_deg > 1.0
    # its verdict said "the ratio's drift (0.00103° over 10 years) outgrows the workshop's
    # errors (±0°)", as if the tooth counts limited a pointer that no wheel can put out
    assert earth.verdict.startswith("no mesh between the crank and this pointer can err")
    assert "outgrows" not in earth.verdict and "±0°" not in earth.verdict


def test_eccentric_wheel_once_per_turn_against_plane_geometry():
    # The hand wheel's pitch circle (radius r) sits e off its arbor's axis. The line of
    # centres (the x axis from the arbor's axis) meets the circle at
    # x = e cos ψ + √(r² − e² sin² ψ); that point's angle about the circle's own centre,
    # minus the angle the wheel has turned, is the pitch-line error the mating pinion sees,
    # divided by r: the hand's angular error (plane geometry).
    e, r = 0.05, 0.6 * 64 / 2
    psi = np.linspace(0, 2 * np.pi, 100_001)
    cx, cy = e * np.cos(psi), e * np.sin(psi)
    x = cx + np.sqrt(r * r - (e * np.sin(psi)) ** 2)
    about_centre = np.arctan2(0 - cy, x - cx)  # the contact point, seen from the centre
    geometric = math.degrees(np.max(np.abs(about_centre)))
    text = SMALL.read_text() + "\n[workshop.wheels.hand_wheel]\neccentricity_mm = 0.05\n"
    train = parse_train(text, "ecc.toml")
    report = play(train, solve(train), Tolerances.of(train, eccentricity_mm=0.0),
                  years=1.0, builds=20, samples=16)
    (hand,) = report.pointers
    (once,) = [x for x in hand.periodic if x.wheel == "hand_wheel"]
    assert once.amplitude_deg == pytest.approx(geometric, rel=1e-5)  # first order in e / r
    assert once.period_days == pytest.approx(48.0)  # the hand turns once in 48 crank days
    assert [x.wheel for x in hand.periodic] == ["hand_wheel"]  # no other wheel is eccentric


def test_monte_carlo_spread_matches_root_sum_square():
    # independent errors: the Monte Carlo's σ must agree with Σ (360 S)² (σ² + e²/6) within
    # its own sampling error (four standard errors)
    for path in (SMALL, DEMO):
        train = load_train(path)
        report = play(train, solve(train), Tolerances.of(train, division=0.02,
                                                         eccentricity_mm=0.03),
                      years=50.0, builds=300, samples=96, seed=11)
        for p in report.pointers:
            assert p.mc_std_sigma_deg > 0
            assert abs(p.mc_std_deg - p.rss_deg) < 4 * p.mc_std_sigma_deg, p.pointer
            assert p.mc_p95_deg <= p.mc_max_deg


def test_monte_carlo_is_repeatable_by_seed():
    _, a = _small()
    _, b = _small()
    assert a.pointers[0].mc_std_deg == b.pointers[0].mc_std_deg
    train = load_train(SMALL)
    c = play(train, solve(train), years=2.0, builds=200, samples=128, seed=8)
    assert c.pointers[0].mc_std_deg != a.pointers[0].mc_std_deg


def test_no_errors_no_spread():
    train, report = _small(division=0.0, eccentricity_mm=0.0)
    assert report.pointers[0].mc_std_deg == 0.0
    assert report.pointers[0].rss_deg == 0.0


def test_default_backlash_from_the_tooth_forms():
    train = load_train(SMALL)
    forms = {w: "cycloidal" for w in train.wheels}
    m1 = train.meshes[0]  # 10-leaf pinion (1.05 m leaves) with a wheel (1.41 m teeth)
    assert mesh_backlash_pitch(train, m1, forms, None) == pytest.approx(
        (math.pi - 1.41 - 1.05) / math.pi)
    forms = {w: "involute" for w in train.wheels}
    assert mesh_backlash_pitch(train, m1, forms, None) == pytest.approx(
        INVOLUTE_BACKLASH_M / math.pi)


def test_pin_and_slot_effect_from_the_engine():
    # the demo's anomaly stage: lead up to asin(e / r) = asin(0.985 / 9) each way
    train = load_train(DEMO)
    report = play(train, solve(train), years=5.0, builds=20, samples=16)
    moon = next(p for p in report.pointers if p.pointer == "moon")
    assert moon.inequality_deg == pytest.approx(math.degrees(math.asin(0.985 / 9)), abs=1e-3)
    sun = next(p for p in report.pointers if p.pointer == "sun")
    assert sun.inequality_deg is None
    assert "inequality" in moon.verdict


def test_depth_flags_are_rules_of_thumb():
    train = load_train(SMALL)
    forms = {w: "cycloidal" for w in train.wheels}
    assert not depth_flags(train, Tolerances(tilt_deg=0.1, end_shake_mm=0.05), forms)
    # 2 × 10 mm × tan 1° = 0.349 mm > a quarter of module 0.5 and of 0.6
    flags = depth_flags(train, Tolerances(tilt_deg=1.0), forms)
    assert len(flags) == 2 and all("rule of thumb" in f.message for f in flags)
    flags = depth_flags(train, Tolerances(tilt_deg=0.0, end_shake_mm=1.0), forms)
    assert len(flags) == 2 and all("end-shake" in f.message for f in flags)


def test_eccentric_wheels_that_swing_a_mesh_out_of_depth_are_flagged():
    # An eccentric wheel moves its mesh's centre distance by up to its eccentricity once a
    # turn (plane geometry), both wheels together at worst: past a quarter module the same
    # rule as the tilt's (common practice, no source). 0.07 + 0.07 = 0.14 mm: over a quarter
    # of module 0.5 (0.125), under a quarter of 0.6 (0.15).
    train = load_train(SMALL)
    forms = {w: "cycloidal" for w in train.wheels}
    calm = dict(tilt_deg=0.0, end_shake_mm=0.0)
    assert not depth_flags(train, Tolerances(eccentricity_mm=0.06, **calm), forms)
    (flag,) = depth_flags(train, Tolerances(eccentricity_mm=0.07, **calm), forms)
    assert flag.item == "mesh 1 (drive_pinion–middle_wheel)"
    assert "by up to 0.14 mm once a turn" in flag.message and "(0.125 mm)" in flag.message
    assert "rule of thumb" in flag.message
    # a wheel measured off true in the file: its own figure beside the train's
    shop = SMALL.read_text().replace("[workshop.wheels.middle_pinion]",
                                     "[workshop.wheels.hand_wheel]\neccentricity_mm = 0.2\n\n"
                                     "[workshop.wheels.middle_pinion]")
    train = parse_train(shop, "shop.toml")
    tol = Tolerances.of(train, **calm)
    (flag,) = depth_flags(train, tol, forms)
    assert flag.item == "mesh 2 (middle_pinion–hand_wheel)"
    assert "'middle_pinion' 0.02 mm and 'hand_wheel' 0.2 mm" in flag.message
    assert "0.22 mm" in flag.message


def test_end_shake_rule_takes_the_face_width_the_file_gives():
    # half the face: 3 modules (1.5 mm at module 0.5) assumed, else the mesh's face_mm
    train = load_train(SMALL)
    forms = {w: "cycloidal" for w in train.wheels}
    tol = Tolerances(tilt_deg=0.0, eccentricity_mm=0.0, end_shake_mm=0.95)
    assert len(depth_flags(train, tol, forms)) == 2  # over half of 1.5 mm and of 1.8 mm
    text = SMALL.read_text().replace("module_mm = 0.5", "module_mm = 0.5\nface_mm = 2")
    wide = parse_train(text, "wide.toml")
    flags = depth_flags(wide, tol, forms)
    assert [f.item for f in flags] == ["mesh 2 (middle_pinion–hand_wheel)"]
    assert "face width assumed (1.8 mm = 3 modules)" in flags[0].message
    narrow = parse_train(text.replace("face_mm = 2", "face_mm = 1.2"), "narrow.toml")
    (flag, _) = depth_flags(narrow, tol, forms)
    assert "face width (1.2 mm, face_mm)" in flag.message


def test_play_command_text_and_json(capsys):
    assert main(["play", str(SMALL), "--years", "2", "--builds", "50", "--samples", "32"]) == 0
    out = capsys.readouterr().out
    assert "design estimates" in out and "local rules" in out
    assert "dead play from: mesh 2" in out
    assert main(["play", str(SMALL), "--json", "--builds", "50", "--samples", "32",
                 "--seed", "3", "--backlash-mm", "0.1"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["seed"] == 3 and data["tolerances"]["backlash_mm"] == 0.1
    assert "design estimates" in data["caveat"]
    hand = data["pointers"][0]
    assert hand["dead_play_deg"] == pytest.approx(
        2 * (math.degrees(0.05 / 19.2) + math.degrees(0.05 / 15.0) * 8 / 64))


def test_play_bad_options_are_usage_errors(capsys):
    for bad in (["--division", "0.6"], ["--builds", "3"], ["--tilt-deg", "90"],
                ["--backlash-mm", "-1"], ["--builds", "100000", "--samples", "100000"]):
        assert main(["play", str(SMALL), *bad]) == 2, bad
        err = capsys.readouterr().err
        assert "usage error" in err and "\n" not in err.strip()


def test_backlash_of_a_whole_pitch_is_refused(capsys, tmp_path):
    """Backlash is the tooth space less the mating tooth on the pitch circle, so it is always
    less than the pitch π m (common practice, no source): 50 mm in a mesh at module 0.5
    (pitch 1.571 mm) once gave dead play of 126° on a Sun hand with no word."""
    from engine.errors import ArgumentError
    from engine.play import backlash_fault, dead_play_findings

    train = load_train(SMALL)  # modules 0.5 and 0.6: the smaller pitch is 1.571 mm
    assert "0.99 of the pitch of mesh 1" in backlash_fault(train, 0.5 * math.pi - 0.001)
    assert "whole pitch or more of mesh 1" in backlash_fault(train, 0.5 * math.pi)
    assert backlash_fault(train, 0.4 * 0.5 * math.pi - 0.001) is None
    with pytest.raises(ArgumentError, match="whole pitch"):
        play(train, solve(train), Tolerances.of(train, backlash_mm=50), builds=10, samples=4)
    assert main(["play", str(SMALL), "--backlash-mm", "50"]) == 2
    err = capsys.readouterr().err.strip()
    assert "--backlash-mm" in err and "pitch 1.571 mm" in err and "\n" not in err
    loose = tmp_path / "loose.toml"
    loose.write_text(SMALL.read_text().replace("backlash_mm = 0.05", "backlash_mm = 2"))
    assert main(["play", str(loose)]) == 1
    err = capsys.readouterr().err.strip()
    assert "loose.toml: [workshop] backlash_mm: 2 mm is a whole pitch" in err
    assert "\n" not in err
    # the check says it (the bench's warnings panel shows the check), once: no dead play
    # is worked out from teeth that cannot mesh
    assert dead_play_findings(load_train(loose), solve(load_train(loose))) == []
    (finding,) = [f for f in check(load_train(loose), solve(load_train(loose))).findings
                  if f.item == "[workshop] backlash_mm"]
    assert finding.level == "error" and "whole pitch" in finding.message


@pytest.mark.parametrize("backlash_mm, refused", [
    (0.341, False),   # what cycloidal clock teeth leave at module 0.5 against 8 leaves
    (0.6, False),     # 0.38 of the pitch: generous, not absurd
    (0.63, True),     # 0.40 of the pitch (pitch 1.571 mm at module 0.5)
    (0.785, True),    # half a pitch
    (1.5, True),      # 0.95 of a pitch: once taken with no word
])
def test_backlash_past_two_fifths_of_a_pitch_is_refused(capsys, tmp_path, backlash_mm, refused):
    """Standard cycloidal clock proportions leave 0.22 of the pitch as backlash (π − 1.41 −
    1.05 modules against 6-10 leaves, BS 978-2 as engine/toothform.py has them); past 0.4 of
    a pitch the mating teeth would be about half their standard thickness (common practice,
    no source). Refused by play (an option: usage error; the file: its name and item) and an
    error in check, naming the mesh and the value."""
    from engine.checks import check
    from engine.play import MAX_BACKLASH_PITCH

    assert MAX_BACKLASH_PITCH == 0.4
    code = main(["play", str(SMALL), "--backlash-mm", str(backlash_mm), "--builds", "50",
                 "--samples", "32"])
    err = capsys.readouterr().err.strip()
    assert code == (2 if refused else 0), err
    if refused:
        assert "--backlash-mm" in err and f"{backlash_mm:g} mm" in err and "mesh 1" in err
        assert "\n" not in err
    loose = tmp_path / "loose.toml"
    loose.write_text(SMALL.read_text().replace("backlash_mm = 0.05",
                                               f"backlash_mm = {backlash_mm}"))
    assert main(["play", str(loose), "--builds", "50", "--samples", "32"]) == (
        1 if refused else 0)
    err = capsys.readouterr().err.strip()
    if refused:
        assert err.startswith("wheelwork: error: ") and "loose.toml: [workshop] backlash_mm: " \
            f"{backlash_mm:g} mm is" in err and "mesh 1 (drive_pinion–middle_wheel)" in err
    train = load_train(loose)
    said = [f for f in check(train, solve(train)).findings if f.item == "[workshop] backlash_mm"]
    assert [f.level for f in said] == (["error"] if refused else [])


def test_largest_contributor_per_pointer_reaches_the_warnings_panel():
    from engine.mechanism import open_train
    from engine.play import dead_play_findings
    from tui.app import engine_findings

    train = load_train(SMALL)
    (note,) = dead_play_findings(train, solve(train))
    assert note.item == "[pointers.hand]" and "mesh 2 (middle_pinion–hand_wheel)" in note.message
    assert "design estimate" in note.message
    mech = open_train(DEMO)
    items = engine_findings(mech)
    dead = [i for i in items if "dead play" in i[2]]
    assert {i[1] for i in dead} == {f"[pointers.{p}]" for p in mech.train.pointers}


def test_form_option_is_read_in_any_case(capsys):
    """--form Involute is involute, as a train file's tooth_form is; a word not in the list
    is still a usage error naming the list, and the nearest word."""
    assert main(["play", str(SMALL), "--json", "--builds", "50", "--samples", "32",
                 "--form", " Involute"]) == 0
    assert json.loads(capsys.readouterr().out)["tolerances"]["form"] == "involute"
    assert main(["play", str(SMALL), "--form", "Involut"]) == 2
    err = capsys.readouterr().err
    assert "usage error" in err and "(choices: cycloidal, involute)" in err
    assert "did you mean 'involute'?" in err


def test_pivot_holes_off_their_places_widen_the_dead_play_by_hand():
    # Each pivot hole up to 0.03 mm off its place: a mesh's centres part by up to 0.06 mm,
    # and its backlash on the pitch circle widens by 2 Δa tan 20° = 0.12 tan 20° = 0.04368 mm
    # (standard gear geometry, j = 2 Δa tan α). By hand, as the dead play test above: the hand
    # wheel (pitch radius 19.2 mm) turns freely that much more in mesh 2, the middle arbor
    # (15 mm) in mesh 1, reaching the hand reduced by 8 / 64.
    widen = 2 * 0.06 * math.tan(math.radians(20))
    more = math.degrees(widen / 19.2) + math.degrees(widen / 15.0) * 8 / 64
    train, report = _small(hole_mm=0.03)
    (hand,) = report.pointers
    assert hand.dead_play_holes_deg == pytest.approx(more, rel=1e-12)
    assert [m.hole_open_mm for m in report.meshes] == pytest.approx([0.06, 0.06], rel=1e-12)
    # the nominal dead play is the backlash alone, as before
    assert hand.dead_play_deg == pytest.approx(math.degrees(0.05 / 19.2)
                                               + math.degrees(0.05 / 15.0) * 8 / 64, rel=1e-12)
    _, none = _small(hole_mm=0.0)
    assert none.pointers[0].dead_play_holes_deg == 0.0


def test_pivot_holes_that_part_a_mesh_out_of_depth_are_flagged():
    # two holes 0.07 mm off: 0.14 mm, over a quarter of module 0.5 (0.125 mm), under a
    # quarter of 0.6 (0.15 mm); the same rule of thumb as the tilt's (common practice, no
    # source)
    train = load_train(SMALL)
    forms = {w: "cycloidal" for w in train.wheels}
    calm = dict(tilt_deg=0.0, end_shake_mm=0.0, eccentricity_mm=0.0)
    assert not depth_flags(train, Tolerances(hole_mm=0.06, **calm), forms)
    (flag,) = depth_flags(train, Tolerances(hole_mm=0.07, **calm), forms)
    assert flag.item == "mesh 1 (drive_pinion–middle_wheel)"
    assert "part the centres by up to 0.14 mm" in flag.message
    assert "(0.125 mm)" in flag.message and "rule of thumb" in flag.message


def test_play_hole_option(capsys):
    argv = ["play", str(SMALL), "--years", "2", "--builds", "20", "--samples", "16"]
    assert main([*argv, "--hole-mm", "0.03"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "pivot holes within 0.03 mm of their places" in out
    assert "pivot holes 0.03 mm off their places: up to" in out
    assert main([*argv, "--hole-mm", "0.03", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["tolerances"]["hole_mm"] == 0.03
    assert data["pointers"][0]["dead_play_holes_deg"] > 0
    assert main([*argv, "--hole-mm", "-1"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--hole-mm" in err


def test_a_wheel_turning_once_a_day_is_every_1_day(tmp_path, capsys):
    # the crank's own 96 stepping up to a fly: its once-per-turn error led the list, 'every 1
    # days'
    train = tmp_path / "fly.toml"
    train.write_text(
        '[crank]\narbor = "crank"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
        'set = "angles"\n[arbors.crank]\nwheels = { cw = 96 }\n[arbors.fly]\n'
        'wheels = { fp = 8 }\n[[meshes]]\nwheels = ["cw", "fp"]\nmodule_mm = 0.35\n'
        '[pointers.p]\nshows = "sun"\narbor = "fly"\nset_deg = 0\n')
    assert main(["play", str(train), "--builds", "10", "--samples", "8", "--years", "1"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "once per turn of 'cw' (mesh 1 (cw–fp)): ±" in out
    assert "every 1 day" in out and "every 1 days" not in out


def test_a_pin_and_slot_far_from_one_to_one_is_said(tmp_path):
    # pin radius 4 mm, offset 3.5 mm: the slot arbor turns r/(r+e) = 0.5333 to r/(r−e) = 8
    # times the pin's speed (plane geometry, docs/checks.md), so errors before it arrive up to
    # 8 times larger at its fastest, where the model passes them 1:1, and the report said
    # nothing; the tide office's stage (0.9014 to 1.123) stays unremarked
    text = DEMO.read_text().replace("pin_radius_mm = 9.0", "pin_radius_mm = 4.0") \
        .replace("offset_mm = 0.985", "offset_mm = 3.5")
    train = parse_train(text, "wide.toml")
    report = play(train, solve(train), years=1.0, builds=10, samples=8)
    (note,) = [n for n in report.notes if "pin_slots" in n]
    assert note.startswith("[pin_slots.anomaly]: turns its slot arbor at 0.5333 to 8 times")
    assert "up to 8 times as large" in note and "1:1" in note
    demo = load_train(DEMO)
    assert not [n for n in play(demo, solve(demo), years=1.0, builds=10, samples=8).notes
                if "pin_slots" in n]


def test_builds_bounded_by_the_tooth_errors_they_draw(capsys):
    # every build draws a division error for each tooth of each wheel in each mesh at once:
    # the table orrery's meshes hold 1,672 teeth (counted from its file), so 100,000 builds
    # drew 167 million (1.7 GB); refused in one line with the most that fits 40 million
    assert main(["play", "table_orrery", "--builds", "100000", "--samples", "40"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--builds" in err
    assert "1,672 teeth in its meshes" in err and "at most 23,923" in err


def test_small_tolerances_and_spans_are_plain_figures(capsys):
    # '{:g}' wrote a span of 0.00001 years as 'over 1e-05 years' in each verdict, and a tilt
    # of 0.00001° at 0.00001 mm likewise in the flags
    assert main(["play", "tide_office", "--years", "0.00001", "--builds", "10",
                 "--samples", "8", "--tilt-deg", "1", "--lever-mm", "0.00002"]) == 0
    out = capsys.readouterr().out
    assert "e-0" not in out and "e+0" not in out
    assert "over 0.00001 years" in " ".join(out.split())


def test_play_heading_reads_as_a_sentence(capsys):
    # 'backlash what the tooth form leaves' read as a slip; builds were '20000', unseparated
    assert main(["play", "tide_office", "--builds", "20000", "--samples", "16",
                 "--years", "1"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "in 20,000 builds × 16 times" in out
    assert "backlash as each mesh's tooth form leaves it;" in out


def test_the_file_can_give_the_pivot_holes_tolerance(capsys):
    # [workshop] hole_mm, as the other tolerances; the option still wins
    text = SMALL.read_text().replace("[workshop]", "[workshop]\nhole_mm = 0.05", 1)
    train = parse_train(text, "holes.toml")
    assert train.workshop.hole_mm == 0.05
    assert Tolerances.of(train).hole_mm == 0.05
    assert Tolerances.of(train, hole_mm=0.01).hole_mm == 0.01
    assert Tolerances.of(load_train(SMALL)).hole_mm == 0.02  # the default


def test_a_dial_of_many_cycles_a_turn_says_what_its_dead_play_is_on_its_arbor(capsys):
    # the eclipse board's 223-month ring reads the Moon's phase 223 times a turn: its figures
    # are in degrees of the phase (360° a month), and "143° of dead play" under a caption of
    # "degrees on the dial" read as the ring swinging 143°; on the ring it is 143 / 223 of a
    # degree, and 143 / 360 of a month (plain arithmetic)
    assert main(["play", "eclipse_board", "--builds", "20", "--samples", "16"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "degrees on the dial" not in out
    assert "degrees of what each pointer shows" in out
    import re

    m = re.search(r"its arbor turns once for 223 of what it shows: ([\d.]+)° of dead play is "
                  r"([\d.]+)° of the arbor's turn, ([\d.]+) of a month", out)
    assert m, out[-2000:]
    shown, arbor, month = (float(x) for x in m.groups())
    assert arbor == pytest.approx(shown / 223, rel=0.01)
    assert month == pytest.approx(shown / 360, rel=0.01)
    assert out.count("its arbor turns once for") == 1  # the other pointers read one a turn


def test_play_writes_its_drifts_as_ratios_does(capsys, tmp_path):
    """The drift column is a column of drifts by the one rule (engine.figures.error_column):
    each pointer's drift reads as in `wheelwork ratios`' °/century column (the Sun's +0.0008
    beside the Moon's -0.0248, where play wrote 0.0008 by three figures of its own), and a
    slipped count's whole figures line up with the others' points (common practice, no
    source)."""
    from engine.demos import demo_path

    slip = tmp_path / "slip.toml"
    slip.write_text(demo_path("tide_office").read_text(encoding="utf-8")
                    .replace("sun_w3 = 133", "sun_w3 = 134"), encoding="utf-8")
    for train in ("tide_office", str(slip)):
        assert main(["ratios", train]) == 0
        ratios = {line.split()[0]: line.split()[4] for line in capsys.readouterr().out
                  .splitlines() if len(line.split()) == 7 and line.split()[-1] == "y"}
        assert main(["play", train, "--years", "2", "--builds", "10", "--samples", "8"]) == 0
        out = capsys.readouterr().out.splitlines()
        head = next(i for i, line in enumerate(out) if line.startswith("pointer "))
        rows = out[head + 1:head + 1 + len(ratios)]
        played = {line.split()[0]: line.split()[-1] for line in rows}
        assert played == ratios and len(played) == 5, (played, ratios)
        ends = {line.rindex(d) + (d.index(".") if "." in d else len(d))
                for line, d in zip(rows, played.values(), strict=True)}
        assert len(ends) == 1, rows
    assert played["sun"] == "-268.662", played  # the slipped Sun: three decimals a column


def test_play_writes_each_sigma_to_the_decimals_of_its_own_error(capsys):
    """The σ column's running error and its Monte Carlo standard error by the one rule for
    a figure beside its σ (engine.figures.error_with_sigma): the σ's error to two figures and
    the σ to the same decimals; play wrote '0.3±0.004', the σ to three figures and its
    error to one by rules of their own (common practice, no source: a value carries no
    digits below its uncertainty's second, and drops none it knows)."""
    import re

    from engine.figures import error_with_sigma

    args = ["play", "tide_office", "--years", "2", "--builds", "10", "--samples", "8"]
    assert main([*args, "--json"]) == 0
    pointers = json.loads(capsys.readouterr().out)["pointers"]
    assert main(args) == 0
    out = capsys.readouterr().out
    cells = re.findall(r" ([\d.,]+)±([\d.,]+) ", out)
    assert len(cells) == sum(p["mc_std_sigma_deg"] > 0 for p in pointers) > 2, out
    for value, pm in cells:
        assert len(value.partition(".")[2]) == len(pm.partition(".")[2]), (value, pm)
        # two significant figures, trailing zero kept (0.0030; none under 0.0001 here)
        assert len(pm.replace(".", "").lstrip("0")) == 2, pm
    for p in pointers:
        if p["mc_std_sigma_deg"] > 0:
            assert "{}±{}".format(*error_with_sigma(p["mc_std_deg"], p["mc_std_sigma_deg"],
                                                    sign=False)) in out
