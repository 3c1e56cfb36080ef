"""Eclipses: the real ones against published tables, and what trains predict."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest

from engine import eclipses as E
from engine.dates import parse_date
from engine.sky import Sky

MINUTE = 1 / 1440


@pytest.fixture(scope="module")
def sky():
    return Sky()


@pytest.fixture(scope="module")
def recent(sky):
    """Every syzygy 1999-2025 and its real eclipse."""
    return E.sky_eclipses(sky, parse_date("1999-01-01"), parse_date("2026-01-01"))


def _find(recent, date, kind):
    jd = parse_date(date)
    for e in recent.eclipses():
        if e.kind == kind and abs(e.jd_ut - jd) < 1.0:
            return e
    return None


# Greatest eclipse (UT) and gamma from the NASA eclipse canon (F. Espenak, NASA GSFC eclipse
# web site, Five Millennium Canon), recalled from memory: dates, types and gamma to 4 places.
SOLAR = [
    ("1999-08-11 11:04", "total", 0.5062),
    ("2017-08-21 18:26", "total", 0.4367),
    ("2024-04-08 18:18", "total", 0.3431),
    ("2023-10-14 18:00", "annular", 0.3753),
    ("2023-04-20 04:17", "hybrid", -0.3952),
]
# Lunar eclipses: date (UT of greatest eclipse, to the nearest few minutes) and type, same
# canon, from memory.
LUNAR = [
    ("2022-11-08 11:00", "total"),
    ("2025-03-14 06:59", "total"),
    ("2023-10-28 20:14", "partial"),
    ("2024-03-25 07:13", "penumbral"),
]


@pytest.mark.parametrize("date, typ, gamma", SOLAR)
def test_solar_eclipses_match_the_canon(recent, date, typ, gamma):
    e = _find(recent, date, "solar")
    assert e is not None, f"no solar eclipse found near {date}"
    assert e.type == typ
    assert e.gamma == pytest.approx(gamma, abs=0.002)
    assert e.jd_ut == pytest.approx(parse_date(date), abs=3 * MINUTE)


@pytest.mark.parametrize("date, typ", LUNAR)
def test_lunar_eclipses_match_the_canon(recent, date, typ):
    e = _find(recent, date, "lunar")
    assert e is not None, f"no lunar eclipse found near {date}"
    assert e.type == typ
    assert e.jd_ut == pytest.approx(parse_date(date), abs=5 * MINUTE)


def test_new_moons_without_eclipse_have_none(recent):
    # 2024-05-08 new moon and 2024-04-23 full moon: no eclipse (canon, from memory: the
    # 2024 eclipses are 03-25 N, 04-08 T, 09-18 P, 10-02 A)
    in_2024 = [e for e in recent.eclipses()
               if parse_date("2024-01-01") <= e.jd_ut < parse_date("2025-01-01")]
    assert [(e.kind, e.type) for e in in_2024] == [
        ("lunar", "penumbral"), ("solar", "total"), ("lunar", "partial"), ("solar", "annular")]


def test_syzygies_are_true_new_and_full_moons(sky, recent):
    syz = recent.syz
    assert np.all(np.diff(syz.jd_ut) > 13.5) and np.all(np.diff(syz.jd_ut) < 16.0)
    assert np.all(np.diff(syz.number) == 1)
    elong = sky.at(syz.jd_ut).elongation_deg
    target = np.where(syz.full, 180.0, 0.0)
    assert np.max(np.abs(E._wrap180(elong - target))) < 1e-4  # well under a second of time
    # 2024-04-08 new moon at 18:21 UT (almanac, from memory)
    i = int(np.argmin(np.abs(syz.jd_ut - parse_date("2024-04-08 18:21"))))
    assert syz.jd_ut[i] == pytest.approx(parse_date("2024-04-08 18:21"), abs=MINUTE)
    assert not syz.full[i]


def test_twentieth_century_lunar_count_matches_the_canon(sky):
    # 1901-2000: 229 lunar eclipses, 83 penumbral, 65 partial, 81 total (the list of lunar
    # eclipses of the 20th century after F. Espenak's canon, as summarised in the German
    # Wikipedia "Liste der Mondfinsternisse des 20. Jahrhunderts").
    se = E.sky_eclipses(sky, parse_date("1901-01-01"), parse_date("2001-01-01"))
    lunar = Counter(e.type for e in se.eclipses() if e.kind == "lunar")
    assert lunar == {"penumbral": 83, "partial": 65, "total": 81}
    solar = Counter(e.type for e in se.eclipses() if e.kind == "solar")
    # About 238 solar eclipses a century on average over five millennia (canon, from memory);
    # 2 to 5 a year.
    assert 220 <= sum(solar.values()) <= 240


def test_classification_criteria():
    # Central, umbra beyond the plane: total; antumbra at the surface: annular; between:
    # hybrid; axis missing the Earth but penumbra touching: partial; beyond: none.
    r1 = np.array([0.3, 0.3, 0.3, 1.2, 1.6, 1.003])
    l1 = np.full(6, 0.54)
    l2 = np.array([-0.01, 0.01, 0.002, -0.01, -0.01, -0.01])
    tan_f2 = np.full(6, 0.0046)
    got = [E.SOLAR_TYPES[i] if i >= 0 else "none" for i in E.classify_solar(r1, l1, l2, tan_f2)]
    assert got == ["total", "annular", "hybrid", "partial", "none", "total"]
