"""Pointers: setting at the epoch (sky, mean, angles), reading, re-setting, dates and turns."""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

from engine.kinematics import solve
from engine.loader import load_train, parse_train
from engine.mechanism import build
from engine.periods import J2000_JD, JULIAN_CENTURY_DAYS, PRECESSION_DEG_PER_CY, mean_elements
from engine.readout import Readout, epoch_values

TRAINS = Path(__file__).resolve().parent.parent / "engine" / "trains"
ARCSEC = 1 / 3600


def tide_text(mode: str) -> str:
    return (TRAINS / "tide_office.toml").read_text().replace('set = "sky"', f'set = "{mode}"')


def test_set_to_the_sky(sky):
    mech = build(load_train(TRAINS / "tide_office.toml"), sky)
    now = mech.readout.read_deg(0)
    truth = sky.at(np.array([mech.train.epoch.jd_ut]))
    for name, p in mech.train.pointers.items():
        assert float(now[name]) == pytest.approx(float(truth.kind(p.shows)[0]), abs=ARCSEC)


def test_set_to_mean_longitudes_at_tt(sky):
    """Mean elements are polynomials in TT: the epoch (UT) is moved by ΔT first."""
    train = parse_train(tide_text("mean"), "mean.toml")
    mech = build(train, sky)
    jd = train.epoch.jd_ut
    dt = float(sky.at(np.array([jd])).delta_t_s[0])
    mean = mean_elements(jd + dt / 86400)
    now = mech.readout.read_deg(0)
    assert float(now["moon"]) == pytest.approx(float(mean["moon"]), abs=ARCSEC)
    assert float(now["node"]) == pytest.approx(float(mean["node"]), abs=ARCSEC)
    assert float(now["phase"]) == pytest.approx(float(mean["phase"]), abs=ARCSEC)


def test_mean_setting_on_a_star_dial_takes_off_the_precession(sky):
    text = tide_text("mean").replace('dial = "equinox"', 'dial = "stars"')
    train = parse_train(text, "stars.toml")
    values = epoch_values(train, sky)
    jd = train.epoch.jd_ut + float(sky.at(np.array([train.epoch.jd_ut])).delta_t_s[0]) / 86400
    shift = (jd - J2000_JD) / JULIAN_CENTURY_DAYS * PRECESSION_DEG_PER_CY
    mean = mean_elements(jd)
    assert values["sun"] == pytest.approx((float(mean["sun"]) - shift) % 360, abs=ARCSEC)
    assert values["phase"] == pytest.approx(float(mean["phase"]), abs=ARCSEC)


@pytest.mark.parametrize("mode, how", [("sky", "from the sky"),
                                       ("mean", "to their mean positions")])
def test_set_deg_the_epoch_does_not_read_is_said_to_do_nothing(mode, how, sky):
    """set_deg with set = "sky" (an angle a new user writes to turn the disc) was read and
    dropped without a word, where an unknown key is refused so that nothing does nothing."""
    text = (TRAINS / "moon_disc_59.toml").read_text().replace(
        'set = "sky"', f'set = "{mode}"').replace("reversed = true", "reversed = true\nset_deg = 10")
    mech = build(parse_train(text, "disc.toml"), sky)
    said = [w for w in mech.warnings if "set_deg" in w]
    assert said == [f'disc.toml: [pointers.phase] set_deg: read only with [epoch] set = '
                    f'"angles"; this file\'s set = "{mode}" sets the pointers {how}, so set_deg '
                    f'does nothing — remove it, or set = "angles" to use it'], mech.warnings
    angles = build(parse_train(text.replace(f'set = "{mode}"', 'set = "angles"'), "disc.toml"))
    assert not [w for w in angles.warnings if "set_deg" in w]
    plain = build(load_train(TRAINS / "moon_disc_59.toml"), sky)
    assert not [w for w in plain.warnings if "set_deg" in w]


def test_set_by_angles_and_read_forward():
    text = (TRAINS / "moon_disc_59.toml").read_text().replace(
        'set = "sky"', 'set = "angles"').replace("reversed = true", "reversed = true\nset_deg = 10")
    train = parse_train(text, "disc.toml")
    mech = build(train)
    ro = mech.readout
    assert float(ro.read_deg(0)["phase"]) == pytest.approx(10.0)
    # two lunations per disc turn, the disc 1/59 turn a day, read against its turning
    assert ro.motions["phase"].cycles_per_turn == Fraction(2, 59)
    assert float(ro.read_deg(59)["phase"]) == pytest.approx(10.0, abs=1e-9)
    assert float(ro.read_deg(59 / 4)["phase"]) == pytest.approx(190.0, abs=1e-9)
    assert ro.period_days("phase") == 29.5
    assert ro.deg_per_day("phase") == pytest.approx(360 / 29.5)


def test_reset_shifts_one_pointer_by_a_constant():
    train = load_train(TRAINS / "nineteen_year_drum.toml")
    ro = Readout(solve(train), {n: 0.0 for n in train.pointers})
    again = ro.reset_to(3.25, {"moon": 123.0})
    assert float(again.read_deg(3.25)["moon"]) == pytest.approx(123.0)
    before, after = ro.read_deg(np.arange(5.0)), again.read_deg(np.arange(5.0))
    shift = np.mod(after["moon"] - before["moon"], 360)
    assert np.allclose(shift, shift[0])
    assert np.array_equal(after["sun"], before["sun"])
    assert float(ro.read_deg(3.25)["moon"]) != pytest.approx(123.0)  # the original is kept


def test_dates_and_turns_round_trip():
    train = load_train(TRAINS / "nineteen_year_drum.toml")
    ro = Readout(solve(train), {n: 0.0 for n in train.pointers})
    jd = train.epoch.jd_ut + np.array([-1000.0, 0.0, 0.5, 6939.6018])
    turns = ro.turns_at(jd)
    assert np.allclose(ro.jd_at(turns), jd, atol=1e-6)
    assert float(turns.to_float()[3]) == pytest.approx(6939.6018 / 365.2422)


def test_mean_values_at_j2000():
    """Mean longitudes at J2000.0 (JD 2451545.0 TT), from memory: the Sun's 280.46646° (Meeus,
    Astronomical Algorithms, 2nd ed., eq. 25.2) and the Moon's 218.3164477° (eq. 47.1)."""
    from engine.demos import demo_path
    from engine.loader import load_train
    from engine.readout import mean_values

    train = load_train(demo_path("tide_office"))
    names = {p.shows: n for n, p in train.pointers.items()}
    got = mean_values(train, 2451545.0, frame="equinox")  # no sky: TT taken as given
    assert got[names["sun"]] == pytest.approx(280.46646, abs=1e-4)
    assert got[names["moon"]] == pytest.approx(218.3164477, abs=1e-4)
    # the mean elongation D, 297.8501921° (eq. 47.2, from memory)
    assert got[names["phase"]] == pytest.approx(297.8501921, abs=1e-4)
    one = mean_values(train, 2451545.0, frame="equinox", names=[names["moon"]])
    assert one == {names["moon"]: got[names["moon"]]}
