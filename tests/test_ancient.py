"""Ancient skies end to end: eclipses of antiquity found on the long-span ephemeris (DE406),
the eclipse geometry of the fast path against skyfield's pipeline, and skyfield's lunar
eclipse search reading DE406's arrays."""

from __future__ import annotations

import numpy as np
import pytest

from engine.dates import format_jd, parse_date
from engine.eclipses import real_eclipses
from engine.sky import Sky, eclipse_vectors, lunar_eclipse_search

ARCSEC = 1 / 3600
KM = 1.0

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
