"""The true sky against outside authorities: Meeus' worked examples, PyEphem, skyfield's almanac."""

from __future__ import annotations

import math

import ephem
import numpy as np
import pytest
from skyfield import almanac

from engine.dates import parse_date
from engine.errors import SkyError
from engine.periods import PRECESSION_DEG_PER_CY
from engine.sky import PHASE_NAMES, Site, Sky, _load, _timescale

ARCSEC = 1 / 3600
ARCMIN = 1 / 60
SECOND_DAYS = 1 / 86400


@pytest.fixture(scope="module")
def sky():
    return Sky()


def dang(a, b):
    """Signed smallest difference of angles in degrees."""
    return (np.asarray(a) - b + 180.0) % 360.0 - 180.0


def tt_to_ut(sky, jd_tt):
    jd = jd_tt
    for _ in range(3):
        jd = jd_tt - float(sky.at(jd).delta_t_s) * SECOND_DAYS
    return jd


def test_attributes(sky):
    assert sky.name == "JPL DE421"
    lo, hi = sky.span_jd
    assert lo < parse_date("1900-01-01") < parse_date("2050-12-31") < hi
    assert "1899" in sky.span_text and "2053" in sky.span_text
    assert Sky() is not sky and Sky()._loaded is sky._loaded  # loading is cached


def test_sun_meeus_25(sky):
    # Meeus, Astronomical Algorithms 2nd ed., example 25.b (full VSOP87, from memory):
    # 1992 Oct 13.0 TD, apparent longitude 199°54'21.818", latitude +0.72".
    s = sky.at(tt_to_ut(sky, 2448908.5))
    assert abs(dang(s.sun_lon_deg, 199 + 54 / 60 + 21.818 / 3600)) < 1 * ARCSEC
    assert abs(float(s.sun_lat_deg) - 0.72 * ARCSEC) < 0.5 * ARCSEC


def test_moon_meeus_47(sky):
    # Meeus example 47.a (from memory): 1992 Apr 12.0 TD, apparent λ 133.162655°,
    # β -3.229126°, Δ 368409.7 km. His series is truncated (about 10" in λ, a few tens of km).
    m = sky.at(tt_to_ut(sky, 2448724.5))
    assert abs(dang(m.moon_lon_deg, 133.162655)) < 20 * ARCSEC
    assert abs(float(m.moon_lat_deg) + 3.229126) < 4 * ARCSEC
    assert abs(float(m.moon_km) - 368409.7) < 50
    # Meeus example 48.a (from memory): the same instant, illuminated fraction k = 0.6786.
    assert float(m.illuminated) == pytest.approx(0.6786, abs=5e-4)


def test_new_moon_meeus_49(sky):
    # Meeus example 49.a (from memory): New Moon 1977 Feb 18, 3h37m42s TD.
    jd_tt = 2443192.5 + (3 + 37 / 60 + 42 / 3600) / 24
    guess = tt_to_ut(sky, jd_tt)
    jd = _crossings(sky, np.array([guess]), 0.0)[0]
    assert abs(jd - guess) < 60 * SECOND_DAYS


def _crossings(sky, guesses, target_deg, half_width_days=0.25):
    """Times near each guess where the elongation passes ``target_deg`` (bisection)."""
    lo = guesses - half_width_days
    hi = guesses + half_width_days
    for _ in range(40):
        mid = (lo + hi) / 2
        ahead = dang(sky.at(mid).elongation_deg, target_deg) > 0
        hi = np.where(ahead, mid, hi)
        lo = np.where(ahead, lo, mid)
    return (lo + hi) / 2


def test_phases_against_skyfield_almanac(sky):
    # skyfield's almanac.moon_phases, searched independently of our fast pipeline.
    ts = _timescale()
    eph = _load(sky.path).kernel
    t, phase = almanac.find_discrete(ts.utc(2024, 1, 1), ts.utc(2025, 1, 1),
                                     almanac.moon_phases(eph))
    guesses = np.asarray(t.ut1)
    ours = np.concatenate([_crossings(sky, guesses[phase == p], 90.0 * p) for p in range(4)])
    theirs = np.concatenate([guesses[phase == p] for p in range(4)])
    assert len(theirs) >= 48
    assert np.max(np.abs(ours - theirs)) < 2 * SECOND_DAYS


def _true_obliquity(jd):
    # Meeus ch. 22 (from memory): mean obliquity to first order in T and the four-term
    # nutation in obliquity, good to about 0.1".
    t = (jd - 2451545.0) / 36525
    om = math.radians(125.04452 - 1934.136261 * t)
    sun = math.radians(280.4665 + 36000.7698 * t)
    moon = math.radians(218.3165 + 481267.8813 * t)
    deps = (9.20 * math.cos(om) + 0.57 * math.cos(2 * sun) + 0.10 * math.cos(2 * moon)
            - 0.09 * math.cos(2 * om)) / 3600
    return math.radians(23.4392911 - 46.8150 / 3600 * t + deps)


def _ecliptic(ra, dec, eps):
    # Meeus eq. 13.1 and 13.2
    lam = math.atan2(math.sin(ra) * math.cos(eps) + math.tan(dec) * math.sin(eps), math.cos(ra))
    bet = math.asin(math.sin(dec) * math.cos(eps) - math.cos(dec) * math.sin(eps) * math.sin(ra))
    return math.degrees(lam) % 360, math.degrees(bet)


def test_against_pyephem(sky):
    # PyEphem (libastro): apparent geocentric RA/Dec of date (g_ra, g_dec), turned into
    # ecliptic coordinates with the true obliquity. PyEphem dates are Dublin JD (JD-2415020).
    jds = np.linspace(2415030.5, 2469800.5, 200) + 0.37
    st = sky.at(jds)
    worst = {"sun_lon": 0.0, "sun_lat": 0.0, "moon_lon": 0.0, "moon_lat": 0.0}
    for i, jd in enumerate(jds):
        date = ephem.Date(jd - 2415020.0)
        eps = _true_obliquity(jd)
        for name, body in (("sun", ephem.Sun()), ("moon", ephem.Moon())):
            body.compute(date, epoch=date)
            lam, bet = _ecliptic(float(body.g_ra), float(body.g_dec), eps)
            lon = getattr(st, f"{name}_lon_deg")[i]
            lat = getattr(st, f"{name}_lat_deg")[i]
            worst[f"{name}_lon"] = max(worst[f"{name}_lon"], abs(dang(lon, lam)))
            worst[f"{name}_lat"] = max(worst[f"{name}_lat"], abs(lat - bet))
    assert worst["sun_lon"] < 5 * ARCSEC and worst["sun_lat"] < 1 * ARCSEC
    assert worst["moon_lon"] < 1 * ARCMIN and worst["moon_lat"] < 0.5 * ARCMIN


@pytest.mark.parametrize("frame, site", [
    ("equinox", None), ("stars", None), ("equinox", Site(51.48, -0.01, 45.0)),
    ("stars", Site(-33.87, 151.21)),
])
def test_fast_matches_reference(sky, frame, site):
    # The batched pipeline against skyfield's own step-by-step one (common practice: the
    # reference is the authority here, within 0.01").
    n = 3000 if site is None else 600
    jd = np.linspace(sky.span_jd[0] + 1, sky.span_jd[1] - 1, n) + 0.123
    fast = sky.at(jd, frame, site)
    slow = sky.at(jd, frame, site, fast=False)
    for key in ("sun_lon_deg", "sun_lat_deg", "moon_lon_deg", "moon_lat_deg"):
        assert np.max(np.abs(dang(getattr(fast, key), getattr(slow, key)))) < 0.01 * ARCSEC, key
    assert np.max(np.abs(fast.moon_km - slow.moon_km)) < 0.001
    assert np.max(np.abs(fast.illuminated - slow.illuminated)) < 1e-9


def test_parallax(sky):
    # Seen from the ground the Moon shifts by up to its horizontal parallax, about 1°
    # (common practice, no source).
    jd = np.linspace(2451545.0, 2451575.0, 200)
    geo = sky.at(jd)
    topo = sky.at(jd, site=Site(0.0, 0.0, 0.0))
    shift = np.max(np.abs(dang(geo.moon_lon_deg, topo.moon_lon_deg)))
    assert 0.5 < shift < 1.05
    assert np.max(np.abs(dang(geo.sun_lon_deg, topo.sun_lon_deg))) < 10 * ARCSEC


def test_scalar_and_array_agree(sky):
    # Same numbers to 1e-8 degrees (36 microarcseconds) and 1 cm: single-precision
    # sines and BLAS sums round their last bits differently for one date and for a long
    # array (tolerance: common practice, no source).
    jd = np.array([[2451545.0, 2455000.25], [2440000.5, 2460754.9]])
    whole = sky.at(jd)
    for idx in np.ndindex(jd.shape):
        one = sky.at(float(jd[idx]))
        for key in ("sun_lon_deg", "moon_lon_deg", "moon_lat_deg", "elongation_deg",
                    "illuminated", "moon_km", "node_deg", "delta_t_s"):
            assert getattr(one, key).shape == ()
            assert getattr(whole, key).shape == jd.shape
            tol = 1e-5 if key == "moon_km" else 1e-8  # 1 cm; 36 microarcseconds
            assert float(getattr(one, key)) == pytest.approx(float(getattr(whole, key)[idx]),
                                                             rel=0, abs=tol), key


def test_kinds_and_frames(sky):
    jd = np.array([2451545.0, 2469000.0])
    eq = sky.at(jd)
    stars = sky.at(jd, "stars")
    np.testing.assert_allclose(eq.kind("phase"), eq.elongation_deg)
    np.testing.assert_allclose(eq.kind("anomaly"), (eq.moon_lon_deg - eq.perigee_deg) % 360)
    np.testing.assert_allclose(eq.kind("draconic"), (eq.moon_lon_deg - eq.node_deg) % 360)
    for k in ("sun", "moon", "phase", "node", "apsis", "anomaly", "draconic"):
        assert np.all((eq.kind(k) >= 0) & (eq.kind(k) < 360))
    # In the stars frame longitudes lose the accumulated precession (~1.396°/century).
    t = (jd - 2451545.0) / 36525
    assert np.all(np.abs(dang(eq.sun_lon_deg - stars.sun_lon_deg, PRECESSION_DEG_PER_CY * t))
                  < 30 * ARCSEC)
    np.testing.assert_allclose(dang(eq.node_deg - stars.node_deg, PRECESSION_DEG_PER_CY * t),
                               0, atol=1e-6)  # TT vs UT in T
    with pytest.raises(SkyError, match="unknown pointer kind"):
        eq.kind("tides")


def test_phase_names(sky):
    # Full Moon 2024-01-25 17:54 UT, first quarter 2024-01-18 03:53 UT (skyfield almanac).
    st = sky.at(np.array([parse_date("2024-01-25 17:54"), parse_date("2024-01-18 03:53"),
                          parse_date("2024-01-21 12:00")]))
    assert st.phase_names() == ["full", "first quarter", "waxing gibbous"]
    assert len(PHASE_NAMES) == 8


def test_out_of_span(sky):
    with pytest.raises(SkyError) as err:
        sky.at(np.array([2451545.0, parse_date("1850-01-01")]))
    msg = str(err.value)
    assert "1850-01-01 00:00 UT (Gregorian) is outside JPL DE421" in msg
    assert "1899-07-30" in msg and "2053" in msg
    assert "wheelwork[de440]" in msg and "--ephemeris FILE" in msg and "1850-01-01" in msg
    with pytest.raises(SkyError, match="not finite"):
        sky.at(float("nan"))
    with pytest.raises(SkyError, match=r"3 dates are \(first: 1850-01-01"):
        sky.at(parse_date("1850-01-01") + np.arange(3.0))


def test_span_check_says_how_much_is_outside(sky):
    start = parse_date("2026-01-01")
    sky.check_span(start, start + 20 * 365.25)  # inside: no error
    with pytest.raises(SkyError) as err:
        sky.check_span(start, start + 50 * 365.25)
    msg = str(err.value)
    assert "22.2 years of the span 2026-01-01 to 2076-01-01" in msg
    assert "first date outside: 2053-10-08" in msg and "wheelwork[de440]" in msg


@pytest.mark.parametrize("args, fragment", [
    ((91.0, 0.0), "latitude 91.0° is impossible"),
    ((0.0, 181.0), "longitude 181.0° is impossible"),
    ((0.0, 0.0, 50_000.0), "not a place to stand"),
    ((0.0, float("nan")), "must be numbers"),
])
def test_impossible_site(args, fragment):
    with pytest.raises(SkyError, match=fragment):
        Site(*args)


def test_site_parse():
    assert Site.parse("51.48, -0.01, 45") == Site(51.48, -0.01, 45.0)
    with pytest.raises(SkyError, match="LAT,LON"):
        Site.parse("north pole")


def test_bad_ephemeris(tmp_path):
    with pytest.raises(SkyError, match="no such ephemeris file"):
        Sky(tmp_path / "missing.bsp")
    junk = tmp_path / "junk.bsp"
    junk.write_bytes(b"not an ephemeris" * 100)
    with pytest.raises(SkyError, match="cannot read as a JPL SPK"):
        Sky(junk)
    with pytest.raises(SkyError, match="unknown frame"):
        Sky().at(2451545.0, frame="galactic")


def test_sky_command(capsys):
    import json

    from engine.cli import main

    assert main(["sky", "2025-03-20 09:30", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["calendar"] == "Gregorian" and out["ephemeris"] == "JPL DE421"
    assert 0 <= out["sun_lon_deg"] < 360 and "solar filter" in out["caution"]
    assert main(["sky", "1850-01-01"]) == 1
    assert "outside JPL DE421" in capsys.readouterr().err
    with pytest.raises(SystemExit) as stop:  # a date that cannot be read: usage, exit 2
        main(["sky", "2025-02-30"])
    assert stop.value.code == 2
    assert "day 30 is not in 1-28" in capsys.readouterr().err
    with pytest.raises(SystemExit) as stop:
        main(["sky", "2025-03-20", "--site", "95,0"])
    assert stop.value.code == 2 and "latitude 95.0° is impossible" in capsys.readouterr().err
    assert main(["sky", "15 March 44 BC", "--calendar", "julian", "--stars"]) == 1  # out of span
