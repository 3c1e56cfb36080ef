"""The ratio report: exact ratios, stages, errors and the figures that follow from them."""

import json
from fractions import Fraction
from pathlib import Path

import pytest

from engine.cli import main
from engine.kinematics import solve
from engine.loader import load_train, parse_train
from engine.ratios import factor_text, pointer_ratios

TRAINS = Path(__file__).resolve().parent.parent / "engine" / "trains"


def report(name):
    train = load_train(TRAINS / name)
    return {r.pointer: r for r in pointer_ratios(train, solve(train))}


def test_moon_disc_is_a_day_off_after_about_two_and_a_half_years():
    """Common practice, no source: a 59-tooth two-moon disc gains a day on the sky in about
    2.6 years (29.5 d against 29.530589 d)."""
    r = report("moon_disc_59.toml")["phase"]
    assert r.ratio == Fraction(2, 59)
    assert r.period_days == 29.5
    assert r.period_error_ppm == pytest.approx((29.5 / 29.530589 - 1) * 1e6, rel=1e-5)
    assert r.years_to_one_day == pytest.approx(1 / (29.530589 / 29.5 - 1) / 365.25, rel=1e-4)
    assert 2.5 < r.years_to_one_day < 2.7
    # runs fast: 360°/29.5 d - 360°/29.530589 d, per Julian century
    assert r.drift_deg_per_century == pytest.approx(
        (360 / 29.5 - 360 / 29.530588861) * 36525, rel=1e-6)


def test_drum_stages_multiply_out():
    rows = report("nineteen_year_drum.toml")
    moon = rows["moon"]
    assert moon.ratio == Fraction(254, 19)
    assert [s.text() for s in moon.stages] == ["127/38", "132/33"]
    assert moon.stages_multiply_out
    assert rows["phase"].ratio == Fraction(235, 19) and rows["phase"].stages_multiply_out
    notes = {t.teeth: t for t in moon.teeth}
    assert notes[127].prime and not notes[132].prime


def test_epicyclic_path_is_flagged():
    moon = report("tide_office.toml")["moon"]
    assert not moon.stages_multiply_out
    assert any(s.reference == "perigee_carrier" for s in moon.stages)
    assert any(s.kind == "pin_slot" for s in moon.stages)


def test_drift_is_the_rate_difference():
    for r in report("tide_office.toml").values():
        sense = 1 if r.shows != "node" else -1
        want = (360 / r.period_days - 360 / r.target_days) * 36525 * sense
        assert r.drift_deg_per_century == pytest.approx(want, rel=1e-6, abs=1e-9)
        assert r.direction_ok


def test_factor_text():
    assert factor_text(96) == "2^5·3"
    assert factor_text(127) == "127"


def test_json_output(capsys):
    assert main(["ratios", str(TRAINS / "nineteen_year_drum.toml"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    moon = next(p for p in data["pointers"] if p["pointer"] == "moon")
    assert moon["ratio"] == "254/19" and moon["stages"] == ["127/38", "132/33"]


def test_text_output_names_stages_and_primes(capsys):
    assert main(["ratios", str(TRAINS / "nineteen_year_drum.toml")]) == 0
    out = " ".join(capsys.readouterr().out.split())  # the console wraps at its width
    assert "127/38 × 132/33" in out and "year_wheel (127)" in out
    # a prime count asks for a dividing-plate row of its own (or a multiple); the cutter goes
    # with the module, not the count (common practice, no source): it said "its own cutter"
    assert "needing a dividing-plate row of that count (or a multiple): year_wheel (127)" in out
    assert "cutter" not in out


def test_star_dial_adds_the_precession():
    """Against the stars the Sun, Moon, node and perigee move slower by the general
    precession, 5029.0966"/century (IAU 1976, Meeus ch. 21, from memory); phase does not."""
    train = load_train(TRAINS / "tide_office.toml")
    kin = solve(train)
    eq = {r.pointer: r for r in pointer_ratios(train, kin)}
    st = {r.pointer: r for r in pointer_ratios(train, kin, frame="stars")}
    prec = 5029.0966 / 3600
    for name in ("sun", "moon", "perigee"):
        assert st[name].drift_deg_per_century - eq[name].drift_deg_per_century == \
            pytest.approx(prec, rel=1e-9)
    # the node regresses, and against the stars it regresses faster by the same amount, so
    # the same train's drift (train minus sky) grows by the precession here too
    assert st["node"].drift_deg_per_century - eq["node"].drift_deg_per_century == \
        pytest.approx(prec, rel=1e-9)
    assert st["phase"].drift_deg_per_century == eq["phase"].drift_deg_per_century
    assert st["sun"].target_days == pytest.approx(365.25636, rel=1e-7)  # sidereal year


def test_tooth_factors_agree_with_sympy():
    """Our trial division against sympy's factorint (the reference library) for every count a
    train may use."""
    import sympy

    from engine.loader import MAX_TEETH
    from engine.ratios import tooth_factors

    for n in range(1, MAX_TEETH + 1):
        assert tooth_factors(n) == sympy.factorint(n), n


@pytest.mark.parametrize("code", [
    "import engine.api",
    "from engine.api import open_train, pointer_ratios; m = open_train(); "
    "pointer_ratios(m.train, m.kin)",
    "from engine.cli import main; main(['ratios', 'tide_office'])",
    "from engine.cli import main; main(['ratios', 'tide_office', '--json'])",
    "from engine.cli import main; main(['check', 'tide_office'])",
    "from engine.cli import main; main(['--help'])",
    "from engine.cli import main; main(['drift', 'moon_disc_59', '--years', '1', '--json'])",
])
def test_sympy_stays_off_the_import_path(code):
    """sympy (with mpmath, about half a second to import) is loaded only by what needs it:
    factorising large ratios and continued fractions in the search."""
    import subprocess
    import sys

    probe = (f"import sys, io, contextlib\nwith contextlib.redirect_stdout(io.StringIO()):\n"
             f"    try:\n        {code}\n    except SystemExit:\n        pass\n"
             "print(sorted(m for m in ('sympy', 'mpmath') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                         timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().splitlines()[-1] == "[]", out


def test_a_year_hand_is_told_when_its_calendar_is_a_day_out(capsys):
    """A calendar hand turning once a tropical year shows the wrong date when it stands a day
    of its own motion off: ratios left that cell empty for every pointer but phase and cycle
    dials, while wheelwork search gives the same figure for the same target (the hall clock's
    year train 8/88 x 10/89 x 13/97 on a 12-hour crank: 8,468 y in search); the tide office's
    Sun hand, -0.021 ppm, is a day out in 1 / 0.021e-6 days, about 130,000 years."""
    r = report("tide_office.toml")["sun"]
    gain = abs(r.target_days / r.period_days - 1)
    assert r.years_to_one_day == pytest.approx(1 / gain / 365.25, rel=1e-12)
    assert 120_000 < r.years_to_one_day < 140_000
    assert main(["search", "--cycle", "tropical year", "--crank-days", "1/2", "--stages", "3",
                 "--pinions", "8-24", "--wheels", "30-144", "--top", "1", "--json"]) == 0
    best = json.loads(capsys.readouterr().out)["results"][0]
    assert best["stages"] == [[8, 88], [10, 89], [13, 97]]
    train = parse_train(HALL_YEAR)
    (row,) = pointer_ratios(train, solve(train))
    assert row.years_to_one_day == pytest.approx(best["one_day_off_years"], rel=1e-9)
    assert main(["ratios", "moon_disc_59"]) == 0
    assert "1 day off: years until it stands a day of its own motion off" in \
        " ".join(capsys.readouterr().out.split())


HALL_YEAR = """
[crank]
arbor = "hour"
days_per_turn = "1/2"
[epoch]
date = "2026-01-01"
[arbors.hour]
wheels = { p1 = 8 }
[arbors.a1]
wheels = { w1 = 88, p2 = 10 }
[arbors.a2]
wheels = { w2 = 89, p3 = 13 }
[arbors.year]
wheels = { w3 = 97 }
[[meshes]]
wheels = ["p1", "w1"]
[[meshes]]
wheels = ["p2", "w2"]
[[meshes]]
wheels = ["p3", "w3"]
[pointers.year_hand]
shows = "sun"
arbor = "year"
reversed = true
"""


def test_one_day_off_within_weeks_is_given_in_days(tmp_path, capsys):
    """A disc figured with 20 moons a turn instead of 2 (a slip in the file) is a day out
    after 1 / (29.530589 / 2.95 - 1) = 0.111 days: the column says so in days, not '0.0 y'."""
    text = (TRAINS / "moon_disc_59.toml").read_text().replace("per_turn = 2 ", "per_turn = 20 ")
    (tmp_path / "slip.toml").write_text(text)
    assert main(["ratios", str(tmp_path / "slip.toml")]) == 0
    # the row may be split over two narrower tables where it does not fit the width
    rows = [line for line in capsys.readouterr().out.splitlines()
            if line.strip().startswith("phase")]
    assert any(row.rstrip().endswith("0.111 d") for row in rows), rows
    assert not any("0.0 y" in row for row in rows)


def test_reports_name_an_orrery_arm_as_its_file_does(capsys):
    """An arm written shows = "mercury", seen_from = "sun" is named so in the text reports, not
    by the kind table's key (mercury_from_sun); the Earth's arm is 'earth' (common practice,
    no source: a report speaks the file's words)."""
    for argv in (["ratios", "table_orrery"], ["drift", "table_orrery", "--years", "1"],
                 ["play", "table_orrery", "--builds", "20", "--samples", "16"]):
        assert main(argv) == 0
        out = capsys.readouterr().out
        assert "_from_sun" not in out, argv
        assert "mercury, seen from the Sun" in out, argv


def test_a_train_of_another_era_is_told_its_mean_periods_are_ad_2000s(capsys):
    """The report judges every pointer against the mean periods of AD 2000; a train set in
    150 BC is told so, and that its own era's sky moved otherwise, which drift measures."""
    assert main(["ratios", "lunation_board"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "note: the mean periods, ppm and °/century are those of AD 2000" in out
    assert "-0149-04-10 (150 BC), 2,149 years before" in out
    assert main(["ratios", "tide_office", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["era_note"] is None
    assert main(["ratios", "tide_office"]) == 0
    assert "note:" not in capsys.readouterr().out


def test_the_era_note_holds_the_moon_drifts_otherwise_in_150_bc():
    # what the note says, measured: against the sky of 150 BC (DE406) the lunation board's
    # Moon hand drifts about 0.1°/century less than its AD 2000 figure (tidal braking, ΔT)
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    from engine.drift import DriftRun, drift_series
    from engine.mechanism import open_train
    from engine.sky import Sky

    sky = Sky("de406")
    mech = open_train(TRAINS / "lunation_board.toml", sky)
    start = mech.train.epoch.jd_ut
    run = drift_series(mech, sky, DriftRun(start, start + 76 * 365.25, "1d"))
    mean_rate = report("lunation_board.toml")["moon"].drift_deg_per_century
    assert abs(run.summaries["moon"].drift_deg_per_century - mean_rate) > 0.05


def test_a_pointer_far_from_what_it_shows_is_said_to_be_a_slip(capsys, tmp_path):
    """A two-moon disc on a 56-tooth wheel where 226 was meant shows a lunation in 7.32 days:
    the table said -752,211.737 ppm and nothing more. (15·25)/(98·56) turn a day, two
    lunations a turn: 7.3173 days against the mean synodic month of 29.5306 (4.04 times as
    fast); the demos, each close to its target, get no such line."""
    text = """[crank]
arbor = "day"
days_per_turn = 1
[epoch]
date = "2026-01-01"
[arbors.day]
wheels = { day_pinion = 15 }
[arbors.inter]
wheels = { inter_wheel = 98, inter_pinion = 25 }
[arbors.disc]
wheels = { disc_wheel = 56 }
[[meshes]]
wheels = ["day_pinion", "inter_wheel"]
[[meshes]]
wheels = ["inter_pinion", "disc_wheel"]
[pointers.moon_disc]
shows = "phase"
arbor = "disc"
per_turn = 2
"""
    path = tmp_path / "disc.toml"
    path.write_text(text)
    assert main(["ratios", str(path), "--json"]) == 0
    (line,) = [w for w in json.loads(capsys.readouterr().out)["warnings"] if "slip" in w]
    assert line == (f"{path}: [pointers.moon_disc]: shows its cycle in 7.31733 days where the "
                    "synodic month it stands for is 29.5306 days (4.04 times as fast), most "
                    "likely a slip: check its tooth counts, its arbor and per_turn = 2")
    path.write_text(text.replace("= 56", "= 226"))  # the count meant: +2.6 ppm, no line
    assert main(["ratios", str(path), "--json"]) == 0
    assert not json.loads(capsys.readouterr().out)["warnings"]
    # a set_deg the epoch does not read is said here too, the first command run on a file
    path.write_text(text.replace("= 56", "= 226").replace("per_turn = 2", "per_turn = 2\n"
                                                            "set_deg = 10"))
    assert main(["ratios", str(path)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "warning: " in out and "[pointers.moon_disc] set_deg: read only with [epoch] " in out
    for demo in sorted(TRAINS.glob("*.toml")):
        assert main(["ratios", str(demo), "--json"]) == 0
        assert not [w for w in json.loads(capsys.readouterr().out)["warnings"] if "slip" in w]


def test_a_slipped_count_is_written_to_sensible_figures(tmp_path, capsys):
    """The moon disc cut with 95 teeth for 59 (a slip): its phase runs +608,502 ppm long;
    the table wrote +608,502.xxx ppm and -168,446.xxxx °/cy, digits that say nothing. The
    figures are the realised 47.5 d against the mean 29.530589 d (Meeus's synodic month, as
    engine/periods.py gives it): 47.5 / 29.53058886 - 1 = 0.608502. A near pointer keeps its
    decimals (the demo's -0.021 ppm Sun)."""
    from engine.demos import demo_path

    text = demo_path("moon_disc_59").read_text(encoding="utf-8")
    slip = tmp_path / "slip.toml"
    slip.write_text(text.replace("disc_teeth = 59", "disc_teeth = 95"), encoding="utf-8")
    assert main(["ratios", str(slip)]) == 0
    row = next(line for line in capsys.readouterr().out.splitlines()
               if line.strip().startswith("phase "))
    assert row.split()[3:5] == ["+608,502", "-168,446"], row
    assert main(["ratios", "tide_office"]) == 0
    row = next(line for line in capsys.readouterr().out.splitlines()
               if line.strip().startswith("sun "))
    assert row.split()[3:5] == ["-0.021", "+0.0008"], row
    # years to a day off to four figures too: 128,500 y, not 128,499.5 (common practice, no
    # source); a short one keeps its tenth
    assert row.split()[5:] == ["128,500", "y"], row
    from engine.commands.ratios import _years

    assert _years(2.63) == "2.6 y" and _years(237.24) == "237.2 y" and _years(9870.7) == "9,871 y"


def _point_columns(lines: list[str], figures: list[str]) -> set[int]:
    """Where each line's figure (one of ``figures``, in that order) has its point, or the
    place after its last digit for a whole one: one place when the column lines up."""
    out = set()
    for line, fig in zip(lines, figures, strict=True):
        at = line.index(fig)
        out.add(at + (fig.index(".") if "." in fig else len(fig)))
    return out


def test_a_slipped_counts_whole_figures_line_up_with_the_others_points(tmp_path, capsys):
    """The tide office's last Sun wheel cut with 134 teeth for 133: Sun, perigee and node run
    about +7,520 ppm long, written whole beside the Moon's +0.051 and the phase's -602.953;
    set flush right the whole figures' last digits stand where the others' points do (common
    practice, no source). Rich strips a cell's trailing spaces before setting it right, which
    set +7,519 flush with +0.051's last decimal."""
    from engine.demos import demo_path

    text = demo_path("tide_office").read_text(encoding="utf-8")
    slip = tmp_path / "slip.toml"
    slip.write_text(text.replace("sun_w3 = 133", "sun_w3 = 134"), encoding="utf-8")
    assert main(["ratios", str(slip)]) == 0
    rows = [line for line in capsys.readouterr().out.splitlines()
            if line.split()[:1] in (["sun"], ["moon"], ["phase"], ["perigee"], ["node"])
            and line.split()[-1] == "y"]
    assert len(rows) == 5, rows
    ppms = [line.split()[3] for line in rows]
    drifts = [line.split()[4] for line in rows]
    assert any("." not in p for p in ppms) and any("." in p for p in ppms), ppms
    assert len(_point_columns(rows, ppms)) == 1, rows
    assert len(_point_columns(rows, drifts)) == 1, rows


STAR_PERIGEE = """[train]
name = "Star-dial perigee hand"
dial = "stars"

[crank]
arbor = "day"
days_per_turn = 1

[epoch]
date = "-0249-06-21 00:00"

[arbors.day]
wheels = { p1 = 8 }

[arbors.a1]
wheels = { w1 = 110, p2 = 9 }

[arbors.a2]
wheels = { w2 = 137, p3 = 9 }

[arbors.perigee]
wheels = { w3 = 139 }

[[meshes]]
wheels = ["p1", "w1"]

[[meshes]]
wheels = ["p2", "w2"]

[[meshes]]
wheels = ["p3", "w3"]

[pointers.perigee]
shows = "apsis"
arbor = "perigee"
reversed = true
"""


def test_the_era_figures_docs_drift_md_quotes(tmp_path):
    """docs/drift.md, *Drift in another era*: a star-dial perigee hand set in 250 BC (the
    search's best three stages for the perigee's advance against the stars, 8/110 · 9/137 ·
    9/139) reads -0.0033 °/century in ratios and -0.43 over 300 years of drift against DE406;
    the lunation board's Moon hand -0.45 and -0.36. Our own measurements, kept here so the
    page says what the tool does (it quoted -0.011 for a train not kept)."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    from engine.drift import DriftRun, drift_series
    from engine.mechanism import open_train
    from engine.sky import Sky

    path = tmp_path / "perigee_stars.toml"
    path.write_text(STAR_PERIGEE, encoding="utf-8")
    sky = Sky("de406")
    for train, pointer, in_ratios, in_drift in ((path, "perigee", -0.0033, -0.43),
                                                (TRAINS / "lunation_board.toml", "moon",
                                                 -0.45, -0.36)):
        rows = pointer_ratios(load_train(train), solve(load_train(train)))
        mean = next(r for r in rows if r.pointer == pointer).drift_deg_per_century
        assert mean == pytest.approx(in_ratios, abs=0.00005 if abs(in_ratios) < 0.01
                                     else 0.005), train
        mech = open_train(train, sky)
        start = mech.train.epoch.jd_ut
        run = drift_series(mech, sky, DriftRun(start, start + 300 * 365.25, "1d"))
        assert run.summaries[pointer].drift_deg_per_century == pytest.approx(
            in_drift, abs=0.005), train
