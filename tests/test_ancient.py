"""Ancient skies end to end: eclipses of antiquity found on the long-span ephemeris (DE406),
the eclipse geometry of the fast path against skyfield's pipeline, and skyfield's lunar
eclipse search reading DE406's arrays."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from engine.dates import format_jd, parse_date
from engine.eclipses import real_eclipses
from engine.sky import Sky, eclipse_vectors, lunar_eclipse_search

ARCSEC = 1 / 3600
KM = 1.0
DEMO = Path(__file__).resolve().parent.parent / "engine" / "trains" / "lunation_board.toml"

de406 = pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")


@pytest.fixture(scope="module")
def ancient():
    return Sky("de406")


def _found(sky, first: str, last: str, kind: str):
    return [e for e in real_eclipses(sky, parse_date(first), parse_date(last)) if e.kind == kind]


def test_solar_eclipse_of_585_bc_is_total(ancient):
    # The solar eclipse of 28 May 585 BC (Julian calendar) was total in the eastern
    # Mediterranean region; JD 1507900.13 is the worked example for that date in Meeus,
    # Astronomical Algorithms 2nd ed., ch. 7 (from memory).
    (ecl,) = _found(ancient, "-0584-05-20", "-0584-06-05", "solar")
    assert ecl.type == "total"
    assert format_jd(ecl.jd_ut).startswith("-0584-05-28")
    assert abs(ecl.jd_ut - 1507900.13) < 0.25  # same day, within a few hours (ΔT is uncertain)


def test_lunar_eclipse_of_331_bc_is_found(ancient):
    # The lunar eclipse of 20 September 331 BC (Julian calendar), seen in the Near East a few
    # days before a famous battle (from memory).
    (ecl,) = _found(ancient, "-0330-09-10", "-0330-09-30", "lunar")
    assert format_jd(ecl.jd_ut).startswith("-0330-09-20")
    assert ecl.type in ("partial", "total")


def test_fast_eclipse_geometry_matches_skyfields_pipeline():
    """The fast path's apparent Sun and Moon, which the eclipse geometry now uses, against
    skyfield's own ``observe().apparent()`` (the reference pipeline) over DE421's span."""
    from engine import sky as sky_module

    sky = Sky()
    jd = np.linspace(sky.span_jd[0] + 1, sky.span_jd[1] - 1, 400)
    sun, moon = eclipse_vectors(sky, jd)
    here = sky._earth.at(sky_module._timescale().ut1_jd(jd))
    ref_sun = here.observe(sky._sun).apparent().xyz.km
    ref_moon = here.observe(sky._moon).apparent().xyz.km

    def angle_arcsec(a, b):
        cos = np.einsum("in,in->n", a, b) / np.linalg.norm(a, axis=0) / np.linalg.norm(b, axis=0)
        return np.degrees(np.arccos(np.clip(cos, -1.0, 1.0))) * 3600

    assert angle_arcsec(sun, ref_sun).max() < 0.02
    assert angle_arcsec(moon, ref_moon).max() < 0.02
    assert np.abs(moon - ref_moon).max() < 0.01 * KM


def test_lunar_search_reads_de406_like_de421(ancient):
    """skyfield's lunar eclipse search on DE406's arrays finds the same eclipses, of the same
    type, as on DE421 (2020-2027)."""
    span = parse_date("2020-06-01"), parse_date("2027-06-01")
    a = lunar_eclipse_search(Sky(), *span)
    b = lunar_eclipse_search(ancient, *span)
    assert len(a["jd_ut"]) == len(b["jd_ut"]) > 10
    assert np.all(a["code"] == b["code"])
    assert np.abs(a["jd_ut"] - b["jd_ut"]).max() * 86400 < 60
    assert np.abs(a["umbral_magnitude"] - b["umbral_magnitude"]).max() < 1e-3


# --- a train set in antiquity -----------------------------------------------------------------

def test_epoch_names_its_ephemeris(tmp_path):
    from engine.errors import TrainError
    from engine.loader import load_train

    train = load_train(DEMO)
    assert train.epoch.ephemeris == "de406"
    bad = tmp_path / "bad.toml"
    bad.write_text(DEMO.read_text().replace('ephemeris = "de406"', 'ephemeris = "de999"'))
    with pytest.raises(TrainError, match=r"\[epoch\] ephemeris.*de421, de440, de406"):
        load_train(bad)


def test_a_sky_given_in_place_of_the_files_ephemeris_is_named_when_the_epoch_is_outside_it(
        capsys):
    """From Python, open_train(path, Sky()) sets the train against the sky given, not the one
    its [epoch] names; when that cannot reach the epoch the error says the file named another
    and how to use it (from the command line: --ephemeris given)."""
    from engine.api import TrainError, open_train
    from engine.cli import main

    with pytest.raises(TrainError) as info:
        open_train(DEMO, Sky())
    msg = str(info.value)
    assert "outside JPL DE421" in msg and "\n" not in msg
    assert 'names ephemeris = "de406"' in msg and "Sky('de406')" in msg
    assert main(["drift", "lunation_board", "--years", "1", "--ephemeris", "de421"]) == 1
    assert 'names ephemeris = "de406"' in capsys.readouterr().err


def test_a_file_set_in_antiquity_naming_no_ephemeris_is_told_how_to_name_one(tmp_path, capsys):
    """A train set in 150 BC whose [epoch] names no ephemeris is read against DE421, which
    cannot reach it; the error says which ephemeris the file may name to cover its epoch
    (DE406 alone before 1550; DE440 or DE406 after), so every command and the bench read it."""
    from engine.cli import main

    bare = tmp_path / "bare.toml"
    bare.write_text(DEMO.read_text().replace('ephemeris = "de406"', ""))
    assert main(["ratios", str(bare)]) == 0  # ratios reads no sky
    # with the bundled sky chosen (as the bench takes it) the error says what to name
    assert main(["drift", str(bare), "--years", "1", "--ephemeris", "de421"]) == 1
    err = " ".join(capsys.readouterr().err.split())
    assert 'or name it under [epoch] in the file: ephemeris = "de406" (3000 BC-AD 3000)' in err
    assert 'ephemeris = "de440"' not in err
    later = tmp_path / "later.toml"
    later.write_text(bare.read_text().replace('"-0149-04-10 06:00"', '"1700-04-10 06:00"'))
    assert main(["drift", str(later), "--years", "1", "--ephemeris", "de421"]) == 1
    assert ('ephemeris = "de440" (1550-2650) or ephemeris = "de406"'
            in " ".join(capsys.readouterr().err.split()))
    # with nothing chosen a command takes the installed DE406 for the epoch, and says so
    assert main(["drift", str(bare), "--years", "1"]) == 0
    assert "compared with JPL DE406" in " ".join(capsys.readouterr().err.split())


def test_a_span_past_every_ephemeris_from_an_ancient_epoch_names_the_span(tmp_path, capsys):
    """A train set in 150 BC, naming no ephemeris, run for 5,000 years (past AD 3000, where
    DE406 ends): the error is the part of the span past DE406, not the epoch with a hint to
    use DE406 (which the span then outruns all the same)."""
    from engine.cli import main

    bare = tmp_path / "bare.toml"
    bare.write_text(DEMO.read_text().replace('ephemeris = "de406"', ""))
    for command in ("drift", "eclipses"):
        assert main([command, str(bare), "--years", "5000"]) == 1
        err = " ".join(capsys.readouterr().err.split())
        assert "of the span -0149-04-10 (150 BC) to" in err and "lie outside JPL DE406" in err
        assert "[epoch] date" not in err and "use --ephemeris de406" not in err, err


def test_lunation_board_drifts_as_its_nineteen_year_relation_says(ancient):
    """Set in 150 BC, read over one 19-year cycle on DE406. The 19-year relation makes the
    year 235/19 mean synodic months = 365.2468 d against the tropical year's 365.2422 d, so the
    sun hand loses 360° × (1/365.2422 - 1/365.2468) a day, about 0.45° a century (calendar
    arithmetic, common practice, no source); the phase hand turns with the crank, one mean
    synodic month a turn, and does not drift."""
    from engine.drift import DriftRun, RunControl, drift_series
    from engine.mechanism import open_train

    mech = open_train(DEMO)
    start = mech.train.epoch.jd_ut
    r = drift_series(mech, ancient, DriftRun(start, start + 19 * 365.25, "1d"),
                     RunControl(keep_series=False))
    sun, phase = r.summaries["sun"], r.summaries["phase"]
    expected = -360.0 * (1 / 365.2422 - 1 / (235 / 19 * 29.530589)) * 36525
    assert expected == pytest.approx(-0.45, abs=0.01)
    assert sun.drift_deg_per_century == pytest.approx(expected, abs=0.06)
    assert abs(phase.drift_deg_per_century) < 0.2
    # the Sun's equation of centre (about 1.9°, from memory) on both sides of the setting
    assert 1.5 < sun.max_abs_deg < 4.5


def test_delta_t_uncertainty_flags_errors_it_cannot_resolve(ancient):
    """One standard error of ΔT moves the true Moon by σ × 13.176°/day (the Moon's mean
    motion, common practice, no source); an error smaller than that is flagged."""
    from engine.drift import delta_t_effect_deg, pointer_errors
    from engine.mechanism import open_train

    assert delta_t_effect_deg("moon", 3600.0) == pytest.approx(13.176 / 24, rel=1e-3)
    assert delta_t_effect_deg("sun", 3600.0) == pytest.approx(0.9856 / 24, rel=1e-3)
    mech = open_train(DEMO)
    now = pointer_errors(mech, ancient, mech.train.epoch.jd_ut)
    moon = now["moon"]
    state = ancient.at(mech.train.epoch.jd_ut)
    assert float(moon.delta_t_effect_deg) == pytest.approx(
        float(state.delta_t_sigma_s) * 13.176 / 86400, rel=1e-3)
    # set by the sky at this very date: the error is nil, within the uncertainty
    assert bool(moon.within_delta_t)
    later = pointer_errors(mech, ancient, mech.train.epoch.jd_ut + 10)
    assert not bool(later["moon"].within_delta_t)  # days later the Moon's swings show


def test_eclipse_times_in_antiquity_say_how_far_delta_t_leaves_them_uncertain(capsys):
    """A time in UT before the telescope rests on ΔT, uncertain by minutes (σ ≈ 0.8 t² s,
    t = (year − 1820)/100: about 462 s in 585 BC, Morrison & Stephenson 2004, as docs/sky.md
    gives it); the eclipse report says so where the times are printed, not for modern spans."""
    import json

    from engine.cli import main

    ask = ["eclipses", "eclipse_board", "--from", "1 May 585 BC", "--years", "1",
           "--ephemeris", "de406", "--by", "pointers"]
    assert main(ask) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "ΔT" in out and "± 462 s" in out and "7.7 min" in out
    assert main([*ask, "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["delta_t_sigma_s"] == pytest.approx(462, abs=2)
    assert main(["eclipses", "eclipse_board", "--from", "2024-01-01", "--years", "1"]) == 0
    assert "ΔT" not in capsys.readouterr().out


def test_drift_in_antiquity_says_how_uncertain_delta_t_is(capsys):
    """As the eclipse report: a drift run in 150 BC names σ(ΔT) in seconds (0.8 t² s,
    t = (year − 1820)/100: about 310 s, Morrison & Stephenson 2004) beside the degrees it
    moves each pointer, in the text and in --json; a modern run says nothing of it."""
    import json

    from engine.cli import main

    assert main(["drift", "lunation_board", "--years", "2"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "ΔT (UT to the sky's TT) is uncertain by up to ± 310 s (5.2 min" in out
    assert main(["drift", "lunation_board", "--years", "2", "--json"]) == 0
    sigma = json.loads(capsys.readouterr().out)["delta_t_sigma_s"]
    assert sigma == pytest.approx(0.8 * ((-149 - 1820) / 100) ** 2, rel=0.01)
    assert main(["drift", "moon_disc_59", "--years", "1"]) == 0
    assert "ΔT (UT" not in capsys.readouterr().out


def test_a_chart_before_ad_1_names_its_years_bc(tmp_path, capsys):
    """The chart's axis counts years astronomically (0 = 1 BC, -149 = 150 BC); a chart of an
    ancient span says so, and its title gives the BC year beside each signed date."""
    pytest.importorskip("matplotlib")
    from engine.cli import main

    chart = tmp_path / "bc.svg"
    assert main(["drift", "lunation_board", "--years", "2", "--png", str(chart)]) == 0
    text = chart.read_text(encoding="utf-8")
    assert "-0149-04-10 (150 BC)" in text and "0 = 1 BC, −149 = 150 BC" in text
    # the axis's example is the chart's own first year, not always the lunation board's
    thales = tmp_path / "thales.svg"
    assert main(["drift", "lunation_board", "--from", "1 May 585 BC", "--years", "2",
                 "--png", str(thales)]) == 0
    text = thales.read_text(encoding="utf-8")
    assert "0 = 1 BC, −584 = 585 BC" in text and "−149" not in text
    modern = tmp_path / "now.svg"
    assert main(["drift", "moon_disc_59", "--years", "1", "--png", str(modern)]) == 0
    assert " BC" not in modern.read_text(encoding="utf-8")


def test_the_eclipse_table_says_its_years_are_astronomical_and_its_calendar(capsys):
    """The table's dates are signed (-0584-05-28, which a reader takes for 584 BC, not 585)
    and, before 1582-10-15, Julian: the report says both beside the table, and neither for a
    modern span."""
    from engine.cli import main

    ask = ["eclipses", "eclipse_board", "--from", "1 May 585 BC", "--years", "1",
           "--ephemeris", "de406", "--by", "pointers"]
    assert main(ask) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "-0584-05-28" in out and "-0584 is 585 BC" in out and "0 = 1 BC" in out
    assert "Julian calendar" in out
    assert main(["eclipses", "eclipse_board", "--from", "1582-01-01", "--years", "2",
                 "--ephemeris", "de406"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "Julian calendar to 1582-10-04, then Gregorian" in out and "BC" not in out
    assert main(["eclipses", "eclipse_board", "--from", "2024-01-01", "--years", "1"]) == 0
    out = capsys.readouterr().out
    assert "Julian" not in out and "astronomical" not in out


# --- against the published eclipse canon --------------------------------------------------
# F. Espenak and J. Meeus, Five Millennium Catalog of Lunar Eclipses (NASA eclipse web site,
# pages LE-0599--0500, LE-0499--0400 and LE0401-0500 of LEcat5): the eclipses of a century,
# counted by their date in TD, Julian calendar, astronomical years.
LUNAR_CENTURIES = [  # (first year, penumbral, partial, total)
    (-599, 95, 100, 60),   # 600-501 BC
    (-499, 88, 90, 64),    # 500-401 BC
    (401, 83, 95, 66),     # AD 401-500
]


@pytest.mark.parametrize("first, penumbral, partial, total", LUNAR_CENTURIES)
def test_lunar_eclipses_of_a_century_as_the_canon_counts_them(ancient, first, penumbral,
                                                               partial, total):
    def ut(year):  # 1 January of a year in TD, as UT: the canon counts by the TD date
        jd = parse_date(f"{year:05d}-01-01" if year < 0 else f"{year:04d}-01-01")
        return jd - float(ancient.at(jd).delta_t_s) / 86400

    got = [e.type for e in real_eclipses(ancient, ut(first), ut(first + 100))
           if e.kind == "lunar"]
    assert (got.count("penumbral"), got.count("partial"), got.count("total")) == (
        penumbral, partial, total)


# F. Espenak and J. Meeus, Five Millennium Catalog of Asymmetric Hybrid Solar Eclipses (NASA
# eclipse web site, SEcat5/SEhybrid5a): TD of greatest eclipse and gamma. Total at one end of
# the central line and annular at the other (-1851 Jun 25 is total at greatest eclipse).
HYBRIDS = [  # (date, TD of greatest eclipse, gamma)
    ("-1935-12-18", "05:41:01", -0.5070),
    ("-1851-06-25", "00:33:02", -0.5598),
    ("-1794-11-19", "22:56:01", 0.7137),
    ("-1467-11-04", "13:16:02", 0.2581),
    ("-0241-06-15", "13:05:26", 0.1836),
]


@pytest.mark.parametrize("date, td, gamma", HYBRIDS)
def test_hybrid_solar_eclipses_of_the_canon(ancient, date, td, gamma):
    want_tt = parse_date(f"{date} {td}")
    found = [e for e in real_eclipses(ancient, want_tt - 2, want_tt + 2) if e.kind == "solar"]
    assert len(found) == 1
    e = found[0]
    tt = e.jd_ut + float(ancient.at(e.jd_ut).delta_t_s) / 86400
    assert e.type == "hybrid"
    assert abs(tt - want_tt) * 1440 < 2.0  # minutes: the ephemerides differ, not ΔT (TD)
    assert e.gamma == pytest.approx(gamma, abs=0.001)


# F. Espenak, Six Millennium Catalog of Solar Eclipses (EclipseWise), its index of centuries:
# eclipses, partial, annular, total and hybrid per century by TD date, for centuries where it
# lists no eclipse apart in brackets; and the 21st century's 224 (77, 72, 68, 7), as the list
# of that century's solar eclipses after Espenak gives them.
SOLAR_CENTURIES = [  # (first year, partial, annular, total, hybrid)
    (-2999, 88, 80, 59, 19),
    (-2399, 94, 88, 67, 0),
    (2001, 77, 72, 68, 7),
]


@pytest.mark.parametrize("first, partial, annular, total, hybrid", SOLAR_CENTURIES)
def test_solar_eclipses_of_a_century_as_the_canon_counts_them(ancient, first, partial, annular,
                                                              total, hybrid):
    def ut(year):  # 1 January of a year in TD, as UT
        jd = parse_date(f"{year:05d}-01-01" if year < 0 else f"{year:04d}-01-01")
        return jd - float(ancient.at(jd).delta_t_s) / 86400

    got = [e.type for e in real_eclipses(ancient, ut(first), ut(first + 100))
           if e.kind == "solar"]
    assert [got.count(t) for t in ("partial", "annular", "total", "hybrid")] == [
        partial, annular, total, hybrid]


# Solar eclipses of antiquity as dated by historians (BC years, Julian calendar), with the
# canon's type and gamma, from the list of solar eclipses in antiquity in Wikipedia (which
# quotes the NASA Five Millennium Canon): written as a historian writes them, found on the
# day named.
HISTORIANS_ECLIPSES = [
    ("3 May 1375 BC", "total", 0.7755),
    ("5 June 1302 BC", "total", 0.2982),
    ("16 Apr 1178 BC", "total", 0.5187),
    ("6 Apr 648 BC", "total", 0.6898),
    ("19 May 557 BC", "total", 0.3145),
]


@pytest.mark.parametrize("day, kind, gamma", HISTORIANS_ECLIPSES)
def test_eclipses_written_with_bc_years_are_found_on_their_day(ancient, day, kind, gamma):
    start = parse_date(day)
    found = [e for e in real_eclipses(ancient, day, start + 1) if e.kind == "solar"]
    assert [e.type for e in found] == [kind]
    assert found[0].gamma == pytest.approx(gamma, abs=0.001)
    assert format_jd(found[0].jd_ut).endswith(f"= {day.split()[2]} BC")


def test_a_star_dial_in_antiquity_takes_the_precession_whole(ancient):
    """skyfield gives the Sun on the true ecliptic of date and on the J2000 ecliptic: their
    difference is the precession (and the nutation, under 0.005°). A star dial's node and
    perigee are moved by wheelwork's own precession; with the linear 5029.0966" T alone they
    were 0.2° off by 585 BC and 0.74° by 3000 BC, so the Sun's distance from the node (the
    eclipse-year dial, what predictions by the pointers read) differed between the frames
    by as much. A difference of two longitudes reads the same on both (a fact of the trade,
    common practice, no source): within 0.04° (the ecliptic's own slow tilt is left out; the
    Moon, 5° off the ecliptic, feels it most: 0.08° at 3000 BC)."""
    from engine.kinds import precession_deg

    def off(a, b):
        return abs((float(a) - float(b) + 180.0) % 360.0 - 180.0)

    for text in ("1 Mar 2999 BC", "1 Jan 2000 BC", "28 May 585 BC", "1 Jan 1000", "2999-01-01"):
        eq, st = ancient.at(text), ancient.at(text, frame="stars")
        p = float(precession_deg(eq.jd_tt, "stars"))
        assert off(eq.sun_lon_deg - p, st.sun_lon_deg) < 0.04, text
        assert off(eq.kind("eclipse_year"), st.kind("eclipse_year")) < 0.04, text
        for kind in ("draconic", "anomaly"):
            assert off(eq.kind(kind), st.kind(kind)) < 0.08, (text, kind)
