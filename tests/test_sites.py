"""Observing places written as text: signed degrees, or with compass letters and
degrees-minutes-seconds as maps and guide books print them."""

from __future__ import annotations

import pytest

from engine.cli import main
from engine.errors import SkyError
from engine.sites import parse_site, site_numbers

# A thousandth of an arcsecond: the text forms below are the same place to this
MAS = 1 / 3600 / 1000


@pytest.mark.parametrize("text, want", [
    ("51.48,-0.01", (51.48, -0.01, 0.0)),
    ("51.48,-0.01,45", (51.48, -0.01, 45.0)),
    ("51.48N 0.01W", (51.48, -0.01, 0.0)),
    ("51.48N, 0.01W, 45", (51.48, -0.01, 45.0)),
    ("51.48N 0.01W 45m", (51.48, -0.01, 45.0)),
    ("37.97 N, 23.72 E", (37.97, 23.72, 0.0)),
    ("N37.97 E23.72", (37.97, 23.72, 0.0)),
    ("23.72E 37.97N", (37.97, 23.72, 0.0)),          # either order: the letters say which
    ("s33.87 e151.21", (-33.87, 151.21, 0.0)),        # any case; S and W are negative
    ("33.87 south, 151.21 east", (-33.87, 151.21, 0.0)),
    # degrees, minutes, seconds: 1° = 60' = 3600" (common practice, no source)
    ("51°28'48\"N 0°0'36\"W", (51.48, -0.01, 0.0)),
    ("51 28.8 N 0 0.6 W", (51.48, -0.01, 0.0)),
    ("33°52′12″S 151°12′36″E 60", (-33.87, 151.21, 60.0)),
    ("N51 28.8 W0 0.6, 45", (51.48, -0.01, 45.0)),
])
def test_a_place_in_each_form(text, want):
    got = site_numbers(text)
    assert got == pytest.approx(want, abs=MAS)


def test_greenwich_written_as_a_map_prints_it_is_west_of_the_meridian():
    """The Royal Observatory's Airy transit circle at about 51°28′40″N 0°00′05″W (from
    memory): just west of 0°, so the longitude is negative (east positive)."""
    site = parse_site("51°28′40″N 0°00′05″W 46m")
    assert site.lat_deg == pytest.approx(51 + 28 / 60 + 40 / 3600, abs=MAS)
    assert site.lon_deg == pytest.approx(-5 / 3600, abs=MAS) and site.lon_deg < 0
    assert site.height_m == 46


@pytest.mark.parametrize("text, words", [
    ("-33.87S 151.21E", "both a sign and a compass letter"),
    ("51.48N 0.01N", "two latitudes"),
    ("51.48N", "a latitude (N or S) and a longitude (E or W)"),
    ("51,48N 0,01W", "no compass letter before the comma"),
    ("51 61 N 0 W", "61 minutes is not under 60"),
    ("51.5 30 N 0 W", "only the last number"),
    ("51.48N x 0.01W", "cannot read 'x 0.01W'"),
    ("51.48N 0.01W 45 46", "only a height"),
    ("95N 0E", "impossible"),
    ("a,b", "LAT,LON"),
])
def test_a_place_that_cannot_be_read_is_one_line_naming_it(text, words):
    with pytest.raises(SkyError) as info:
        parse_site(text)
    msg = str(info.value)
    assert words in msg and repr(text) in msg and "\n" not in msg, msg


def test_the_sky_from_a_place_with_compass_letters_is_the_sky_from_its_numbers(capsys):
    assert main(["sky", "2026-01-01", "--site", "33.87S 151.21E 60"]) == 0
    letters = capsys.readouterr().out
    assert main(["sky", "2026-01-01", "--site", "-33.87,151.21,60"]) == 0
    assert capsys.readouterr().out == letters
    assert "33.8700°S, 151.2100°E" in letters  # written back with its compass letters
