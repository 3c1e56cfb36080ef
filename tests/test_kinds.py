"""The table of pointer kinds and the frame change: every row complete, one frame change, and a
new kind reaching the loader, the readouts, the ratio report and drift as a row alone."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from engine import kinds
from engine.kinds import (
    EVECTION_DAYS,
    FRAMES,
    KINDS,
    precession_deg,
    to_frame,
)
from engine.loader import parse_train
from engine.periods import J2000_JD, PERIODS, PRECESSION_DEG_PER_CY, mean_elements

ARCSEC = 1 / 3600
HERE = Path(__file__).resolve().parent
ROOT = HERE.parent


def test_every_row_is_complete():
    for key, row in KINDS.items():
        assert row.key == key and row.about
        assert set(row.period) == set(FRAMES), key  # a period on every dial frame
        for frame in FRAMES:
            assert row.mean_period(frame) is PERIODS[row.period[frame]]
        for _, days in row.swings_in("equinox"):
            assert days > 1.0  # periods in days, not cycles


def test_star_dial_reads_longitudes_lower_by_the_precession():
    """IAU 1976 general precession in longitude, p = 5029.0966" T + 1.11113" T^2 -
    0.000006" T^3 (Meeus ch. 21, from memory): a century after J2000 a star dial reads a
    longitude 1.3973° lower; a difference of two longitudes not at all."""
    jd = J2000_JD + 36525.0
    p1 = (5029.0966 + 1.11113 - 0.000006) / 3600
    assert float(precession_deg(jd, "stars")) == pytest.approx(p1, abs=1e-12)
    assert float(precession_deg(jd, "equinox")) == 0.0
    assert float(to_frame(10.0, jd, "stars")) == pytest.approx(10.0 - p1)
    assert float(to_frame(1.0, jd, "stars")) == pytest.approx(361.0 - p1)
    # the square term: 25.84 centuries before J2000 (585 BC) it is 0.206°
    t = -25.84
    assert float(precession_deg(J2000_JD + t * 36525.0, "stars")) == pytest.approx(
        (5029.0966 * t + 1.11113 * t * t - 0.000006 * t**3) / 3600, abs=1e-12)
    assert float(to_frame(10.0, jd, "stars", precesses=False)) == 10.0
    per_day = PRECESSION_DEG_PER_CY / 36525.0
    for key, row in KINDS.items():
        # the period a row names for a star dial is its equinox period's motion less the
        # precession exactly when the kind precesses (a longitude), and the same period when not
        eq, st = row.mean_period("equinox"), row.mean_period("stars")
        diff = eq.deg_per_day - st.deg_per_day
        assert diff == pytest.approx(per_day if row.precesses else 0.0, abs=1e-15), key
        assert (st.key != eq.key) == row.precesses, key


def test_star_dial_names_the_node_and_perigee_against_the_stars():
    """On a star dial the node and perigee pointers are judged against their periods against
    the stars: the draconic month is the Moon's return to a node regressing against the stars,
    the anomalistic month its return to a perigee advancing against them, so 1/node =
    1/draconic - 1/sidereal month and 1/perigee = 1/sidereal - 1/anomalistic month. With the
    almanac months (27.212221, 27.321662, 27.554550 days, from memory) that is 6793.46 and
    3232.61 days (18.5996 and 8.8505 years, from memory)."""
    from engine.ratios import pointer_ratios

    draconic, sidereal, anomalistic = 27.212221, 27.321662, 27.554550
    node = KINDS["node"].mean_period("stars")
    apsis = KINDS["apsis"].mean_period("stars")
    assert node.days == pytest.approx(1 / (1 / draconic - 1 / sidereal), abs=0.05)
    assert apsis.days == pytest.approx(1 / (1 / sidereal - 1 / anomalistic), abs=0.05)
    assert node.sense == -1 and apsis.sense == 1
    assert "stars" in node.name and "stars" in apsis.name
    assert "stars" not in KINDS["node"].mean_period("equinox").name
    # the ratio report names them, and judges the pointer by them
    text = (ROOT / "engine" / "trains" / "nineteen_year_drum.toml").read_text()
    assert 'shows = "moon"' in text
    train = parse_train(text.replace('shows = "moon"', 'shows = "node"'), "node.toml")
    name = next(n for n, p in train.pointers.items() if p.shows == "node")
    for frame, want in (("equinox", "nodal_period"), ("stars", "sidereal_nodal_period")):
        row = {r.pointer: r for r in pointer_ratios(train, frame=frame)}[name]
        assert row.target_key == want and row.target_name == PERIODS[want].name
        assert row.target_days == pytest.approx(PERIODS[want].days, rel=1e-12)


def test_true_values_come_from_the_sky_state(sky):
    jd = np.array([2451545.0, 2460000.5, 2470000.25])
    for frame in FRAMES:
        state = kinds.sky_at(sky, jd, KINDS, frame=frame)  # with every planet a kind needs
        for key in KINDS:
            v = np.asarray(kinds.true_value(key, state))
            assert v.shape == jd.shape and np.all((v >= 0) & (v < 360)), (key, frame)
            np.testing.assert_array_equal(v, state.kind(key))


def test_sky_node_and_perigee_use_the_one_frame_change(sky):
    jd = np.array([2415020.5, 2460000.5])
    eq, st = sky.at(jd, frame="equinox"), sky.at(jd, frame="stars")
    jd_tt = jd + eq.delta_t_s / 86400.0
    mean = mean_elements(jd_tt)
    np.testing.assert_allclose(st.node_deg, to_frame(mean["node"], jd_tt, "stars"), atol=1e-9)
    np.testing.assert_allclose(eq.perigee_deg, mean["apsis"], atol=1e-9)


def test_a_new_kind_is_a_row(monkeypatch, sky, tmp_path):
    """A kind added to the table alone is read by the loader, set from the sky and from the
    mean elements, reported by the ratio report and followed by drift."""
    from engine.drift import DriftRun, RunControl, drift_series, sky_terms
    from engine.loader import load_train
    from engine.mechanism import build
    from engine.ratios import pointer_ratios
    from engine.readout import epoch_values

    row = replace(KINDS["moon"], key="luna", about="the Moon's longitude, by another name")
    monkeypatch.setitem(KINDS, "luna", row)
    text = (ROOT / "engine" / "trains" / "nineteen_year_drum.toml").read_text()
    assert 'shows = "moon"' in text
    path = tmp_path / "luna.toml"
    path.write_text(text.replace('shows = "moon"', 'shows = "luna"'))
    train = load_train(path)
    name = next(n for n, p in train.pointers.items() if p.shows == "luna")
    mech = build(train, sky)
    for mode in ("sky", "mean"):
        t = replace(train, epoch=replace(train.epoch, set=mode))
        assert epoch_values(t, sky)[name] == pytest.approx(
            epoch_values(replace(t, pointers={**t.pointers, name: replace(
                t.pointers[name], shows="moon")}), sky)[name], abs=ARCSEC)
    ratios = {r.pointer: r for r in pointer_ratios(mech.train, mech.kin)}
    assert ratios[name].target_key == "tropical_month"
    assert sky_terms("luna") == sky_terms("moon")
    res = drift_series(mech, sky, DriftRun(2451545.0, 2451545.0 + 400, 1.0),
                       RunControl(keep_series=False))
    assert res.summaries[name].max_abs_deg > 0
    assert res.summaries[name].max_abs_days is None and name not in res.error_days
    assert "luna" not in kinds.bodies(["luna"])


def test_an_error_in_days_is_a_column_of_the_row(monkeypatch, sky, tmp_path):
    """Whether a kind's error is also given in days is the row's ``in_days``, not its name:
    the phase's is, at the synodic month's rate; a renamed phase row with it keeps it, and
    the phase row without it loses it, in drift's figures and in the drift command's CSV."""
    from engine.commands.drift import csv_header
    from engine.drift import DriftRun, RunControl, drift_series
    from engine.loader import load_train
    from engine.mechanism import build
    from engine.periods import PERIODS

    assert kinds.days_rate("phase") == pytest.approx(360.0 / PERIODS["synodic_month"].days)
    assert kinds.days_rate("moon") is None
    monkeypatch.setitem(KINDS, "lunation", replace(KINDS["phase"], key="lunation"))
    text = (ROOT / "engine" / "trains" / "moon_disc_59.toml").read_text()
    assert 'shows = "phase"' in text
    path = tmp_path / "lunation.toml"
    path.write_text(text.replace('shows = "phase"', 'shows = "lunation"'))
    mech = build(load_train(path), sky)
    name = next(n for n, p in mech.train.pointers.items() if p.shows == "lunation")
    run = DriftRun(2451545.0, 2451545.0 + 400, 1.0)
    res = drift_series(mech, sky, run, RunControl(keep_series=False))
    s = res.summaries[name]
    assert s.max_abs_days == pytest.approx(s.max_abs_deg / kinds.days_rate("phase"))
    assert f"{name}_error_days" in csv_header(mech, 2451545.0, 2451945.0)
    monkeypatch.setitem(KINDS, "lunation", replace(KINDS["phase"], key="lunation",
                                                   in_days=False))
    res = drift_series(mech, sky, run, RunControl(keep_series=False))
    assert res.summaries[name].max_abs_days is None
    assert f"{name}_error_days" not in csv_header(mech, 2451545.0, 2451945.0)


def test_an_eclipse_cycle_dials_error_is_given_in_days_as_the_phases_is(sky):
    """An eclipse-cycle dial counts lunations as the phase does; a day early or late decides
    which month a syzygy falls in, so its error is given in days too (common practice, no
    source): drift's largest error, and the ratio report's years until it is a day out."""
    from engine.api import DriftRun, RunControl, drift_series, open_train, pointer_ratios

    assert kinds.days_rate("cycle") == kinds.days_rate("phase")
    board = open_train(ROOT / "engine" / "trains" / "eclipse_board.toml", sky)
    row = {r.pointer: r for r in pointer_ratios(board)}["months"]
    assert row.years_to_one_day is not None and row.years_to_one_day > 0
    start = board.train.epoch.jd_ut
    res = drift_series(board, sky, DriftRun(start, start + 400, 1.0),
                       RunControl(keep_series=False))
    s = res.summaries["months"]
    assert s.max_abs_days == pytest.approx(s.max_abs_deg / kinds.days_rate("phase"))


def test_unknown_kind_in_a_train_names_the_known_ones(tmp_path):
    from engine.errors import TrainError
    from engine.loader import load_train

    text = (ROOT / "engine" / "trains" / "nineteen_year_drum.toml").read_text()
    path = tmp_path / "bad.toml"
    path.write_text(text.replace('shows = "moon"', 'shows = "tides"'))
    with pytest.raises(TrainError) as e:
        load_train(path)
    # every kind by the name a file writes (an arm is a planet with seen_from = "sun")
    written = ", ".join(k for k in KINDS if not k.endswith("_from_sun"))
    assert "tides" in str(e.value) and written in str(e.value) and "seen_from" in str(e.value)


def test_evection_period_from_the_mean_motions():
    """Evection's argument is 2D - M (standard lunar theory, from memory): its period from
    the mean synodic and anomalistic months is 31.81 days (from memory)."""
    assert EVECTION_DAYS == pytest.approx(31.812, abs=0.001)


def test_a_planet_mean_on_a_star_dial_is_its_j2000_mean_motion_in_antiquity_too():
    # mean_elements moves a planet's J2000 mean longitude to the equinox of date by the same
    # precession a star dial takes off again, so on a star dial it is the JPL table's
    # longitude plus its rate (in 585 BC too, where the precession's square term is 0.2°)
    from engine.periods import PLANETS

    t = -25.84
    jd = J2000_JD + t * 36525.0
    mean = mean_elements(jd)
    for key in ("mars", "saturn"):
        pl = PLANETS[key]
        want = (pl.lon_j2000_deg + pl.rate_deg_per_cy * t) % 360.0
        assert float(to_frame(mean[f"{key}_from_sun"], jd, "stars")) == pytest.approx(
            want, abs=1e-9), key


def test_the_nutation_taken_off_a_drift_line_is_skyfields():
    """kinds.nutation_lon_deg (the two node terms of the nutation in longitude, Meeus ch. 22,
    from memory) against the full IAU 2000A series as skyfield computes it
    (skyfield.nutationlib.iau2000a_radians), 1900-2100: within 2" (measured 1.75"), the terms
    left out (the Sun's -1.32" sin 2L, the Moon's -0.23" sin 2L' and smaller, all half a
    year or faster)."""
    from skyfield.api import load
    from skyfield.nutationlib import iau2000a_radians

    from engine.kinds import nutation_lon_deg

    jd = np.linspace(2415020.5, 2488069.5, 4001)
    t = load.timescale().tt_jd(jd)
    dpsi = np.degrees(iau2000a_radians(t)[0])
    assert np.max(np.abs(nutation_lon_deg(jd) - dpsi)) * 3600 < 2.0
    # and the largest term is there: 17" either way
    assert np.max(np.abs(dpsi)) * 3600 > 17
