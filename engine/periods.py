"""Mean motions of the Sun and Moon, the periods they define, and mean elements at a date.

Every rate is in degrees per Julian century of 36525 days (TT), the form in which the
mean-element polynomials are published. Periods are derived from the rates, so the table of
periods and the mean elements can never disagree.

Sources (values recalled from memory, then cross-checked in ``tests/test_periods.py`` against
the rounded periods every almanac quotes):

* Moon: mean longitude, elongation, anomaly, argument of latitude and node — the polynomials
  of J. Meeus, *Astronomical Algorithms*, 2nd ed. (1998), ch. 47 (after Chapront-Touzé &
  Chapront's ELP-2000/82).
* Sun: geometric mean longitude and mean anomaly — Meeus, ch. 25 and ch. 47.
* General precession in longitude, 5029.0966 arcsec per century — IAU 1976 value as given by
  Meeus, ch. 21.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

JULIAN_CENTURY_DAYS = 36525.0
J2000_JD = 2451545.0  # 2000-01-01 12:00 TT

MEEUS = "Meeus, Astronomical Algorithms 2nd ed., ch. 47 (ELP-2000/82 mean elements)"
MEEUS_SUN = "Meeus, Astronomical Algorithms 2nd ed., ch. 25 (Sun's mean longitude)"
PRECESSION_SRC = "IAU 1976 general precession, 5029.0966\"/century (Meeus ch. 21)"

# degrees per Julian century
PRECESSION_DEG_PER_CY = 5029.0966 / 3600.0
SUN_MEAN_LON_RATE = 36000.76983
SUN_MEAN_ANOMALY_RATE = 35999.0502909
MOON_MEAN_LON_RATE = 481267.88123421
MOON_ELONGATION_RATE = 445267.1114034
MOON_ANOMALY_RATE = 477198.8675055
MOON_LATITUDE_ARG_RATE = 483202.0175233
MOON_NODE_RATE = -1934.1362891
MOON_PERIGEE_RATE = MOON_MEAN_LON_RATE - MOON_ANOMALY_RATE


@dataclass(frozen=True)
class MeanPeriod:
    """A mean astronomical period: its name, its rate and where the rate comes from."""

    key: str
    name: str
    deg_per_century: float
    source: str

    @property
    def days(self) -> float:
        """Length of one cycle in days (positive, whatever the sense of motion)."""
        return 360.0 * JULIAN_CENTURY_DAYS / abs(self.deg_per_century)

    @property
    def deg_per_day(self) -> float:
        """Signed mean motion in degrees per day (negative for the retrograde node)."""
        return self.deg_per_century / JULIAN_CENTURY_DAYS

    @property
    def sense(self) -> int:
        """+1 for motion with the Sun and Moon (direct), -1 for retrograde."""
        return 1 if self.deg_per_century > 0 else -1


_P = PRECESSION_DEG_PER_CY
PERIODS: dict[str, MeanPeriod] = {
    p.key: p
    for p in (
        MeanPeriod("tropical_year", "tropical year", SUN_MEAN_LON_RATE, MEEUS_SUN),
        MeanPeriod("sidereal_year", "sidereal year", SUN_MEAN_LON_RATE - _P,
                   f"{MEEUS_SUN}; less {PRECESSION_SRC}"),
        MeanPeriod("anomalistic_year", "anomalistic year", SUN_MEAN_ANOMALY_RATE, MEEUS),
        MeanPeriod("tropical_month", "tropical month", MOON_MEAN_LON_RATE, MEEUS),
        MeanPeriod("sidereal_month", "sidereal month", MOON_MEAN_LON_RATE - _P,
                   f"{MEEUS}; less {PRECESSION_SRC}"),
        MeanPeriod("synodic_month", "synodic month", MOON_ELONGATION_RATE, MEEUS),
        MeanPeriod("anomalistic_month", "anomalistic month", MOON_ANOMALY_RATE, MEEUS),
        MeanPeriod("draconic_month", "draconic month", MOON_LATITUDE_ARG_RATE, MEEUS),
        MeanPeriod("nodal_period", "nodal regression (lunar node)", MOON_NODE_RATE, MEEUS),
        MeanPeriod("apsidal_period", "apsidal precession (lunar perigee)", MOON_PERIGEE_RATE,
                   MEEUS),
    )
}


def find_period(text: str) -> MeanPeriod:
    """Look a period up by key or name, forgiving case, spaces, hyphens and a plural ``s``.

    >>> find_period("Synodic month").days  # doctest: +ELLIPSIS
    29.5305...
    """
    want = text.strip().lower().replace("-", "_").replace(" ", "_").rstrip("s")
    for p in PERIODS.values():
        if want in (p.key, p.name.replace(" ", "_")):
            return p
    aliases = {"year": "tropical_year", "month": "synodic_month", "lunation": "synodic_month",
               "node": "nodal_period", "apsis": "apsidal_period", "apse": "apsidal_period"}
    if want in aliases:
        return PERIODS[aliases[want]]
    known = ", ".join(p.name for p in PERIODS.values())
    raise KeyError(f"unknown period {text!r}; known periods: {known}")


def _poly(t: np.ndarray, coeffs: tuple[float, ...]) -> np.ndarray:
    out = np.zeros_like(t)
    for c in reversed(coeffs):
        out = out * t + c
    return out


# Meeus ch. 47 (from memory): constant, T, T^2, T^3, T^4 terms in degrees.
_MOON_L = (218.3164477, MOON_MEAN_LON_RATE, -0.0015786, 1 / 538841, -1 / 65194000)
_MOON_D = (297.8501921, MOON_ELONGATION_RATE, -0.0018819, 1 / 545868, -1 / 113065000)
_SUN_M = (357.5291092, SUN_MEAN_ANOMALY_RATE, -0.0001536, 1 / 24490000)
_MOON_M = (134.9633964, MOON_ANOMALY_RATE, 0.0087414, 1 / 69699, -1 / 14712000)
_MOON_F = (93.2720950, MOON_LATITUDE_ARG_RATE, -0.0036539, -1 / 3526000, 1 / 863310000)
_MOON_NODE = (125.0445479, MOON_NODE_RATE, 0.0020754, 1 / 467441, -1 / 60616000)
# Meeus ch. 25 (from memory)
_SUN_L0 = (280.46646, SUN_MEAN_LON_RATE, 0.0003032)


def mean_elements(jd_tt: np.ndarray | float) -> dict[str, np.ndarray]:
    """Mean longitudes and arguments (degrees, 0-360, equinox of date) at TT Julian dates.

    Accepts a scalar or any array shape; every value has the input's shape. Keys: ``sun``,
    ``moon``, ``phase`` (mean elongation), ``anomaly`` (Moon's mean anomaly), ``sun_anomaly``,
    ``draconic`` (argument of latitude), ``node`` and ``apsis`` (mean perigee).
    """
    t = (np.asarray(jd_tt, dtype=float) - J2000_JD) / JULIAN_CENTURY_DAYS
    moon = _poly(t, _MOON_L)
    anomaly = _poly(t, _MOON_M)
    out = {
        "sun": _poly(t, _SUN_L0),
        "moon": moon,
        "phase": _poly(t, _MOON_D),
        "anomaly": anomaly,
        "sun_anomaly": _poly(t, _SUN_M),
        "draconic": _poly(t, _MOON_F),
        "node": _poly(t, _MOON_NODE),
        "apsis": moon - anomaly,
    }
    return {k: np.mod(v, 360.0) for k, v in out.items()}
