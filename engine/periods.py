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
* Planets: mean longitudes at J2000 and their rates, referred to the mean ecliptic and equinox of
  J2000 (so the rates are sidereal) — JPL, "Keplerian elements for approximate positions of the
  major planets", table 1 (1800 AD – 2050 AD). Recalled from memory, and agreeing digit for
  digit with the table's published text.
* Classical period relations (Venus 5 synodic periods in 8 years, ...) — standard history of
  astronomy, from memory; each is checked against the mean periods (:func:`relation_error_ppm`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING

from .errors import ArgumentError, UnknownName, nearest
from .figures import figure

if TYPE_CHECKING:  # numpy is imported by the two functions using it: commands' --help
    import numpy as np  # reads this module's constants without loading it

JULIAN_YEAR_DAYS = 365.25  # the Julian year: "years" in spans, steps and reports
JULIAN_CENTURY_DAYS = 100 * JULIAN_YEAR_DAYS  # 36525 days
SECONDS_PER_DAY = 86_400  # a day of the time scale in use (UT, TT or TDB), in its seconds
J2000_JD = 2451545.0  # 2000-01-01 12:00 TT

MEEUS = "Meeus, Astronomical Algorithms 2nd ed., ch. 47 (ELP-2000/82 mean elements)"
MEEUS_SUN = "Meeus, Astronomical Algorithms 2nd ed., ch. 25 (Sun's mean longitude)"
PRECESSION_SRC = "IAU 1976 general precession, 5029.0966\"/century (Meeus ch. 21)"

# degrees per Julian century
PRECESSION_DEG_PER_CY = 5029.0966 / 3600.0
# the accumulated general precession in longitude from J2000, p_A = 5029.0966" T +
# 1.11113" T^2 - 0.000006" T^3 (T in Julian centuries of TT; IAU 1976, as Meeus ch. 21
# gives it, from memory): its rate at J2000 is PRECESSION_DEG_PER_CY
PRECESSION_POLY_DEG = (0.0, PRECESSION_DEG_PER_CY, 1.11113 / 3600.0, -0.000006 / 3600.0)
SUN_MEAN_LON_RATE = 36000.76983
SUN_MEAN_ANOMALY_RATE = 35999.0502909
MOON_MEAN_LON_RATE = 481267.88123421
MOON_ELONGATION_RATE = 445267.1114034
MOON_ANOMALY_RATE = 477198.8675055
MOON_LATITUDE_ARG_RATE = 483202.0175233
MOON_NODE_RATE = -1934.1362891
MOON_PERIGEE_RATE = MOON_MEAN_LON_RATE - MOON_ANOMALY_RATE

JPL_PLANETS = ("JPL, Keplerian elements for approximate positions of the major planets, "
               "table 1 (1800-2050), mean longitude rate (J2000 ecliptic and equinox)")


@dataclass(frozen=True)
class Planet:
    """One planet's mean motion: heliocentric mean longitude at J2000 (degrees) and its rate
    (degrees per Julian century), both against the J2000 equinox; mean distance in au; the
    orbit's eccentricity at J2000."""

    key: str
    name: str
    lon_j2000_deg: float
    rate_deg_per_cy: float
    distance_au: float
    eccentricity: float

    @property
    def centre_deg(self) -> float:
        """The amplitude of the equation of centre's first harmonic in the heliocentric
        longitude, 2e - e³/4 radians (the elliptic expansion, from memory), in degrees: the
        most the true longitude stands from the mean one, once a year of the planet.
        ``tests/test_planets.py`` measures it from DE406 over three of the planet's years
        about J2000 (within 1%) and at other epochs (where e has changed)."""
        e = self.eccentricity
        return math.degrees(2 * e - e ** 3 / 4)

    @property
    def inner(self) -> bool:
        """Inside the Earth's orbit: seen from the Earth it keeps near the Sun."""
        return self.distance_au < 1.0


# JPL table 1 (1800-2050), from memory: L at J2000 (deg), L rate (deg/century), a (au), e.
EARTH = Planet("earth", "Earth", 100.46457166, 35999.37244981, 1.00000261,  # EM barycentre
               0.01671123)
PLANETS: dict[str, Planet] = {
    p.key: p
    for p in (
        Planet("mercury", "Mercury", 252.25032350, 149472.67411175, 0.38709927, 0.20563593),
        Planet("venus", "Venus", 181.97909950, 58517.81538729, 0.72333566, 0.00677672),
        Planet("mars", "Mars", -4.55343205, 19140.30268499, 1.52371034, 0.09339410),
        Planet("jupiter", "Jupiter", 34.39644051, 3034.74612775, 5.20288700, 0.04838624),
        Planet("saturn", "Saturn", 49.95424423, 1222.49362201, 9.53667594, 0.05386179),
        Planet("uranus", "Uranus", 313.23810451, 428.48202785, 19.18916464, 0.04725744),
        Planet("neptune", "Neptune", -55.12002969, 218.45945325, 30.06992276, 0.00859048),
    )
}


# The great inequality of Jupiter and Saturn: a term in each planet's longitude with the
# argument 2 L_J - 5 L_S (the two mean motions are near 5 : 2), Jupiter's about 0.33° and
# Saturn's about 0.83°, opposite in sign (the classical values, from memory; measured from
# DE406 by tests/test_planets.py). Its period comes from the mean motions over millennia:
# JPL's "Keplerian elements for approximate positions of the major planets", table 2a
# (3000 BC - AD 3000), mean longitude rates 3034.90371757 and 1222.11494724 deg/century
# (from memory; DE406's own, fitted over the same six millennia, agree within 0.01 in
# tests/test_planets.py) give 883 years. Table 1's rates above (1800-2050) give 838 years:
# over two centuries the inequality itself is in them. The amplitudes serve the geocentric
# rows too: the slow part of the geocentric longitude (its mean over the synodic period) is
# the heliocentric shift itself; DE406, AD 1000-3000, fitted alike: Jupiter 0.3121° geocentric
# against 0.3108° heliocentric, Saturn 0.7667° against 0.7655° (tests/test_planets.py).
JPL_TABLE_2A_RATES = {"jupiter": 3034.90371757, "saturn": 1222.11494724}
GREAT_INEQUALITY_DAYS = 360.0 * JULIAN_CENTURY_DAYS / abs(
    2 * JPL_TABLE_2A_RATES["jupiter"] - 5 * JPL_TABLE_2A_RATES["saturn"])
GREAT_INEQUALITY_DEG = {"jupiter": 0.33, "saturn": 0.83}
GREAT_INEQUALITY_SRC = ("JPL, Keplerian elements for approximate positions of the major "
                        "planets, table 2a (3000 BC-AD 3000): 2 L_J - 5 L_S")
# Uranus and Neptune: mean motions near 2 : 1, a term with the argument L_U - 2 L_N. Measured
# from JPL DE406 (tests/test_planets.py repeats it): each planet's heliocentric longitude on
# the J2000 ecliptic, 2990 BC-AD 2990 at 10-day steps, fitted by least squares with a line,
# its equation of centre (three harmonics, amplitudes changing linearly) and a sinusoid whose
# period comes from the two fitted rates (iterated until they agree): 428.4669 and
# 218.4857 deg/century, so 4,233 years; Uranus 0.871°, Neptune 0.594°, opposite in sign. The
# same fit over 2990 BC-AD 1500 and 1500 BC-AD 2990 (a little over one period each) gives
# 0.859 and 0.834°, 0.584 and 0.563°: the spread below. DE406 holds only 1.4 of its periods.
DE406_UN_RATES = {"uranus": 428.4669, "neptune": 218.4857}
URANUS_NEPTUNE_DAYS = 360.0 * JULIAN_CENTURY_DAYS / abs(
    DE406_UN_RATES["uranus"] - 2 * DE406_UN_RATES["neptune"])
URANUS_NEPTUNE_SRC = ("measured from JPL DE406, 2990 BC-AD 2990: a sinusoid in L_U - 2 L_N "
                      "fitted with each longitude's line and equation of centre")


@dataclass(frozen=True)
class SlowSwing:
    """A slow swing two planets put into each other's longitude (mean motions near a ratio of
    small whole numbers): its name, its period, its amplitude in each planet's heliocentric
    longitude (degrees) and how far that amplitude is known (``spread_deg``: half the range
    of amplitudes fitted over different stretches of the long ephemeris)."""

    name: str
    planets: tuple[str, str]
    period_days: float
    amplitude_deg: dict[str, float]
    spread_deg: dict[str, float]
    source: str


#: the slow mutual swings of planets, one row each (read by engine.kinds and engine.drift)
SLOW_SWINGS: tuple[SlowSwing, ...] = (
    # the great inequality's amplitude over different millennia of DE406: Jupiter 0.28-0.35°,
    # Saturn 0.69-0.86° (measured, tests/test_planets.py)
    SlowSwing("the great inequality", ("jupiter", "saturn"), GREAT_INEQUALITY_DAYS,
              GREAT_INEQUALITY_DEG, {"jupiter": 0.035, "saturn": 0.085},
              GREAT_INEQUALITY_SRC),
    SlowSwing("the near 2 : 1 swing", ("uranus", "neptune"), URANUS_NEPTUNE_DAYS,
              {"uranus": 0.87, "neptune": 0.59}, {"uranus": 0.02, "neptune": 0.015},
              URANUS_NEPTUNE_SRC),
)


@dataclass(frozen=True)
class MeanPeriod:
    """A mean astronomical period: its name, its rate and where the rate comes from."""

    key: str
    name: str
    deg_per_century: float
    source: str
    exact_days: Fraction | None = None  # a period relation's exact length, when it has one
    approximates: str | None = None  # the mean period a relation stands for (its key)

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
        MeanPeriod("sidereal_nodal_period", "nodal regression against the stars (lunar node)",
                   MOON_NODE_RATE - _P, f"{MEEUS}; less {PRECESSION_SRC}"),
        # the Sun's return to the Moon's node: the Sun's mean motion plus the node's regression
        MeanPeriod("eclipse_year", "eclipse year (Sun back at the same node)",
                   SUN_MEAN_LON_RATE - MOON_NODE_RATE, f"{MEEUS_SUN}; {MEEUS}"),
        MeanPeriod("apsidal_period", "apsidal precession (lunar perigee)", MOON_PERIGEE_RATE,
                   MEEUS),
        MeanPeriod("sidereal_apsidal_period",
                   "apsidal precession against the stars (lunar perigee)",
                   MOON_PERIGEE_RATE - _P, f"{MEEUS}; less {PRECESSION_SRC}"),
        # the lunisolar cycles of calendars and eclipse dials, as whole numbers of mean
        # synodic months (their counts: standard history of astronomy, from memory)
        MeanPeriod("metonic_cycle", "Metonic cycle (235 synodic months)",
                   MOON_ELONGATION_RATE / 235, f"{MEEUS}: 235 mean synodic months"),
        MeanPeriod("saros", "Saros (223 synodic months)", MOON_ELONGATION_RATE / 223,
                   f"{MEEUS}: 223 mean synodic months"),
    )
}


def _planet_periods(p: Planet) -> tuple[MeanPeriod, ...]:
    return (
        MeanPeriod(f"{p.key}_sidereal", f"{p.name} sidereal period", p.rate_deg_per_cy,
                   JPL_PLANETS),
        MeanPeriod(f"{p.key}_tropical", f"{p.name} tropical period", p.rate_deg_per_cy + _P,
                   f"{JPL_PLANETS}; plus {PRECESSION_SRC}"),
        MeanPeriod(f"{p.key}_synodic", f"{p.name} synodic period",
                   abs(p.rate_deg_per_cy - EARTH.rate_deg_per_cy),
                   f"{JPL_PLANETS}: the planet's rate less the Earth's"),
    )


for _planet in PLANETS.values():
    PERIODS.update((mp.key, mp) for mp in _planet_periods(_planet))

# Classical period relations (standard history of astronomy, from memory): so many synodic
# periods of the planet in so many years. The years are taken as Julian years of 365.25 days,
# so that each relation is an exact fraction (on a crank turning once in 365.25 days, Venus's
# relation is exactly 5/8 of a turn per crank turn).
PERIOD_RELATIONS = (("mercury", 145, 46), ("venus", 5, 8), ("mars", 37, 79),
                    ("jupiter", 76, 83), ("saturn", 57, 59))
_RELATION_SRC = "classical period relation, standard history of astronomy (from memory)"
for _key, _synodic, _years in PERIOD_RELATIONS:
    _days = _years * Fraction(JULIAN_YEAR_DAYS) / _synodic  # exactly 1461/4 days a year
    PERIODS[f"{_key}_{_synodic}_in_{_years}"] = MeanPeriod(
        f"{_key}_{_synodic}_in_{_years}",
        f"{PLANETS[_key].name} {_synodic} synodic periods in {_years} years",
        float(360 * JULIAN_CENTURY_DAYS / _days), f"{_RELATION_SRC}; years of 365.25 days",
        exact_days=_days, approximates=f"{_key}_synodic")


# The Metonic relation, 235 synodic months in 19 years, in the same form (Julian years).
PERIODS["synodic_month_235_in_19"] = MeanPeriod(
    "synodic_month_235_in_19", "235 synodic months in 19 years (the Metonic relation)",
    float(360 * JULIAN_CENTURY_DAYS / (19 * Fraction(JULIAN_YEAR_DAYS) / 235)),
    f"{_RELATION_SRC}; years of 365.25 days", exact_days=19 * Fraction(JULIAN_YEAR_DAYS) / 235,
    approximates="synodic_month")


def era_spread_ppm(key: str) -> float | None:
    """How far a Jupiter or Saturn period of :data:`PERIODS` (sidereal, tropical, synodic, or
    a period relation standing for one), made from JPL's 1800-2050 mean motion as every
    period here is, stands from the same period made from the 3000 BC - AD 3000 mean motion
    (:data:`JPL_TABLE_2A_RATES`), in ppm (positive: the 1800-2050 period is the longer).
    Two centuries hold a part of the great inequality (883 years): Jupiter's sidereal period
    +52 ppm, Saturn's -310. ``None`` for any other period (the Earth's rate, in a synodic
    period, moved under 0.001°/century between the two tables, from memory: it is taken
    as table 1's in both)."""
    mp = PERIODS[key]
    if mp.approximates is not None:
        key = mp.approximates
    planet, _, kind = key.partition("_")
    if planet not in JPL_TABLE_2A_RATES or kind not in ("sidereal", "tropical", "synodic"):
        return None
    now, long = PLANETS[planet].rate_deg_per_cy, JPL_TABLE_2A_RATES[planet]
    if kind == "tropical":
        now, long = now + _P, long + _P
    elif kind == "synodic":
        now, long = EARTH.rate_deg_per_cy - now, EARTH.rate_deg_per_cy - long
    return (long / now - 1.0) * 1e6  # periods go as 1 / rate


def era_error_ppm(key: str, period_error_ppm: float) -> float | None:
    """A realised period ``period_error_ppm`` off the Jupiter or Saturn period ``key`` (JPL's
    1800-2050 mean), read against the same period made from the 3000 BC - AD 3000 mean
    motion instead (:func:`era_spread_ppm`), in ppm; ``None`` for any other period."""
    spread = era_spread_ppm(key)
    if spread is None:
        return None
    return ((1.0 + period_error_ppm * 1e-6) * (1.0 + spread * 1e-6) - 1.0) * 1e6


def era_spread_note(key: str) -> str:
    """For a Jupiter or Saturn period: one line saying that it is the mean of 1800-2050 and
    how far the mean motion of six millennia moves it (:func:`era_spread_ppm`); "" for any
    other period."""
    spread = era_spread_ppm(key)
    if spread is None:
        return ""
    mp = PERIODS[PERIODS[key].approximates or key]
    return (f"the {mp.name} is JPL's mean for 1800-2050; the mean motion of 3000 BC-AD 3000 "
            f"makes it {figure(abs(spread), 2)} ppm {'longer' if spread < 0 else 'shorter'}"
            " (the great inequality of Jupiter and Saturn, 883 years), so a train closer than "
            "that is that close for the centuries round 2000 only: wheelwork drift measures it "
            "against the sky of any span")


def relation_error_ppm(key: str) -> float:
    """How far a period relation's period is from the mean period it stands for (ppm: positive
    when the relation's period is the longer). ``key`` is a relation's key or, as
    :func:`find_period` reads it, its name (``"venus 5 in 8"``; ``"metonic"``, said of a
    relation, is the Metonic relation, 235 synodic months in 19 years)."""
    rel = PERIODS.get(key) if isinstance(key, str) else None
    if rel is None and isinstance(key, str):
        for said in (f"{key} relation", key):  # "metonic" alone names the 235-month cycle
            try:
                rel = find_period(said)
            except UnknownName:
                continue
            if rel.approximates is not None:
                break
    if rel is None or rel.approximates is None:
        relations = ", ".join(f"{k} ({p.name})" for k, p in PERIODS.items()
                              if p.approximates is not None)
        what = (f"is a mean period ({rel.name}), not a period relation" if rel
                else "is no period relation")
        raise UnknownName(f"period {key!r} {what}; the relations are {relations}")
    mean = PERIODS[rel.approximates].days
    return (float(rel.exact_days) / mean - 1.0) * 1e6


#: a body named where a period is asked for ('moon'): the word its periods' names share
_BODY_WORDS = {"moon": ("Moon", "month"), "lunar": ("Moon", "month"),
               "sun": ("Sun", "year"), "solar": ("Sun", "year"), "earth": ("Sun", "year")}


def find_period(text: str) -> MeanPeriod:
    """Look a period up by key or name, forgiving case, spaces, hyphens and a plural ``s``.

    >>> find_period("Synodic month").days  # doctest: +ELLIPSIS
    29.5305...
    """
    def norm(s: str) -> str:
        return " ".join(s.strip().lower().replace("-", " ").replace("_", " ").split())

    if not isinstance(text, str):
        raise UnknownName(f"find_period: wanted a period's name or key as text, such as "
                          f"'venus synodic', got {type(text).__name__} {text!r:.40}")
    said = norm(text)
    wants = {said, said[:-1] if said.endswith("s") else said}
    wants |= {w[: -len(" period")] for w in wants if w.endswith(" period")}
    for p in PERIODS.values():
        names = {norm(p.key), norm(p.name), norm(p.name.split(" (")[0])}
        if p.name.endswith(" period"):
            names.add(norm(p.name[: -len(" period")]))
        if wants & names:
            return p
    aliases = {"year": "tropical_year", "month": "synodic_month", "lunation": "synodic_month",
               "lunar_month": "synodic_month",  # the lunation, as calendars use the words
               "metonic": "metonic_cycle", "metonic_relation": "synodic_month_235_in_19",
               "node": "nodal_period", "apsis": "apsidal_period", "apse": "apsidal_period"}
    for w in wants:
        if w.replace(" ", "_") in aliases:
            return PERIODS[aliases[w.replace(" ", "_")]]
    known = ", ".join(p.name for p in PERIODS.values())
    spoken = {n for p in PERIODS.values()  # every way of naming a period that is read
              for n in (norm(p.key), norm(p.name.split(" (")[0]))} | {norm(n) for n in aliases}
    near = nearest(said, sorted(spoken))
    hint = f" (did you mean {near!r}?)" if near else ""
    words = said.split()
    holding = [norm(p.name.split(" (")[0]) for p in PERIODS.values()
               if words and all(w in norm(p.name.split(" (")[0]).split() for w in words)]
    if holding:  # a word of the name alone ('synodic', 'sidereal'): the names holding it
        more = f" and {len(holding) - 8} more" if len(holding) > 8 else ""
        hint = (f" (the periods named with {'that word' if len(words) == 1 else 'those words'}"
                f": {', '.join(repr(h) for h in holding[:8])}{more})")
    elif said in _BODY_WORDS:  # 'moon', 'sun': a body, not a period; its periods' names
        body, word = _BODY_WORDS[said]
        theirs = [norm(p.name.split(" (")[0]) for p in PERIODS.values()
                  if word in norm(p.name.split(" (")[0]).split()]
        hint = f" (a body, not a period; the {body}'s: {', '.join(repr(h) for h in theirs)})"
    raise UnknownName(f"unknown period {text!r}{hint}; known periods: {known}")


def _poly(t: np.ndarray, coeffs: tuple[float, ...]) -> np.ndarray:
    import numpy as np

    out = np.full(np.shape(t), float(coeffs[-1]))  # Horner's rule in place: 0·t + c_n, ...
    for c in reversed(coeffs[:-1]):
        out *= t
        out += c
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


def mean_elements(jd_tt: np.ndarray | float, keys=None) -> dict[str, np.ndarray]:
    """Mean longitudes and arguments (degrees, 0-360, equinox of date) at TT Julian dates.

    Accepts a scalar or any array shape; every value has the input's shape. Keys: ``sun``,
    ``moon``, ``phase`` (mean elongation), ``anomaly`` (Moon's mean anomaly), ``sun_anomaly``,
    ``draconic`` (argument of latitude), ``node`` and ``apsis`` (mean perigee); for each planet
    ``NAME`` (its mean longitude seen from the Earth) and ``NAME_from_sun`` (heliocentric), and
    ``earth_from_sun``. ``keys`` limits the work to those keys (default: all).
    """
    import numpy as np

    from .angles import mod  # (numpy: not on the start-up path of commands without it)

    try:
        t = (np.asarray(jd_tt, dtype=float) - J2000_JD) / JULIAN_CENTURY_DAYS
    except (TypeError, ValueError):
        raise ArgumentError(f"mean_elements: wanted Julian Dates (TT) as a number or array, "
                            f"got {type(jd_tt).__name__} {jd_tt!r:.60}; for date text take "
                            "Sky().at(text).jd_tt") from None
    series = {"sun": _SUN_L0, "moon": _MOON_L, "phase": _MOON_D, "anomaly": _MOON_M,
              "sun_anomaly": _SUN_M, "draconic": _MOON_F, "node": _MOON_NODE}
    planet_keys = {*PLANETS, *(f"{k}_from_sun" for k in PLANETS), "earth_from_sun"}
    known = series.keys() | {"apsis"} | planet_keys
    if isinstance(keys, str):
        keys = (keys,)
    wanted = known if keys is None else set(keys)
    if wanted - known:
        raise UnknownName(f"mean_elements: no mean element {sorted(wanted - known)[0]!r}; "
                          f"known: {', '.join([*series, 'apsis', *sorted(planet_keys)])}")
    if wanted & ({*PLANETS, "earth_from_sun"} - {k for k, p in PLANETS.items() if not p.inner}):
        wanted.add("sun")  # an inner planet's geocentric mean and the Earth's arm need it
    out = {k: _poly(t, c) for k, c in series.items() if k in wanted}
    if "apsis" in wanted:
        out["apsis"] = _poly(t, _MOON_L) - (out["anomaly"] if "anomaly" in out else
                                            _poly(t, _MOON_M))
    # planets: heliocentric mean longitudes (JPL table 1, J2000 equinox) moved to the equinox
    # of date by the general precession; seen from the Earth, an outer planet's mean longitude
    # is its heliocentric one, an inner planet's the Sun's (it swings about the Sun)
    for key, pl in PLANETS.items():
        if key in wanted or f"{key}_from_sun" in wanted:
            helio = pl.lon_j2000_deg + pl.rate_deg_per_cy * t + _poly(t, PRECESSION_POLY_DEG)
            if f"{key}_from_sun" in wanted:
                out[f"{key}_from_sun"] = helio
            if key in wanted:
                out[key] = out["sun"] if pl.inner else helio
    if "earth_from_sun" in wanted:
        out["earth_from_sun"] = out["sun"] + 180.0
    return {k: mod(v, 360.0) for k, v in out.items()}
