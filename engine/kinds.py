"""Pointer kinds and dial frames: one table each. Adding a kind is adding a row to ``KINDS``.

A pointer's ``shows`` names a row of :data:`KINDS`. The row says, in one place, everything
the engine needs to know about what such a pointer shows:

* ``about``: what it shows, in plain words (messages, help, docs);
* ``period``: the key in :data:`engine.periods.PERIODS` of the mean period it should realise,
  per dial frame (the ratio report, the backwards check, drift's expected line, search): a
  longitude names its period against the equinox on an equinox dial and against the stars
  on a star dial (tropical and sidereal year, nodal regression and its sidereal twin...);
* ``true``: how its true value (degrees, 0-360, in the state's frame) is taken from an
  :class:`engine.sky.SkyState` (the readouts, drift, the interface, ``set = "sky"``);
* ``mean``: how its mean value (degrees, equinox of date) is taken from
  :func:`engine.periods.mean_elements` (``set = "mean"``), ``None`` when there is none;
* ``precesses``: whether a star dial reads it lower than an equinox dial by the accumulated
  general precession (a longitude does; a difference of two longitudes does not);
* ``swings``: the periodic inequalities the true sky puts into it, ``(name, period_days)``,
  fitted with the drift line so a part swing is not read as drift;
* ``sizes``: the amplitudes (degrees) of those of its swings whose size in this kind's value
  is known, by name: a drift line fitted over fewer than ``engine.drift.TERM_SURE_CYCLES`` of
  such a swing's periods puts the swing on trial (an orrery arm's and the Sun's equation of
  centre, 2e - e³/4 radians; the slow mutual swings of planets are in
  ``engine.periods.SLOW_SWINGS``);
* ``nutates``: whether an equinox dial's true value carries the nutation in longitude;
* ``bodies``: sky bodies beyond the Sun and Moon its true value needs (planet names, for
  ``Sky.at(..., planets=...)``; see :func:`sky_at`);
* ``in_days``: whether its error is also given as time, days early or late at its mean rate
  (the phase: a new moon shown a day late); see :func:`days_rate`.

Frames: :data:`FRAMES` names each dial frame in plain words. The one frame change the engine
makes by hand — a value of the equinox of date read on a star (J2000) dial — is
:func:`precession_deg`, used through :func:`to_frame`. Mean motions need no frame change: a
star dial's period is a row of its own in ``engine.periods`` (``tests/test_kinds.py`` checks
that it is the equinox one less the precession exactly when the kind ``precesses``).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field

import numpy as np

from .angles import mod
from .errors import TrainError, UnknownName
from .figures import figure
from .periods import (
    EARTH,
    J2000_JD,
    JULIAN_CENTURY_DAYS,
    PERIODS,
    PLANETS,
    PRECESSION_POLY_DEG,
    SLOW_SWINGS,
    MeanPeriod,
    SlowSwing,
)

# --- dial frames ---------------------------------------------------------------------------

#: dial frame -> what it is, in plain words. "equinox": longitudes from the true equinox of
#: date (a tropical zodiac dial); "stars": from a fixed star, the ecliptic of J2000.
FRAMES: dict[str, str] = {
    "equinox": "equinox of date",
    "stars": "fixed stars (J2000)",
}
DIAL_FRAMES = tuple(FRAMES)


def next_frame(frame: str) -> str:
    """The frame after ``frame`` in :data:`FRAMES` (wrapping round): an interface's toggle."""
    keys = list(FRAMES)
    return keys[(keys.index(frame) + 1) % len(keys)]


def precession_deg(jd_tt, frame: str):
    """Degrees a star dial reads lower than an equinox dial for a longitude of date at ``jd_tt``
    (the accumulated general precession in longitude since J2000, ``PRECESSION_POLY_DEG`` —
    its square term is 0.2° by 585 BC, 0.77° by 3000 BC — the correction that ignores the
    slow tilt of the ecliptic itself: within 0.04° of skyfield's J2000 ecliptic from 3000 BC
    to AD 3000); 0 on an equinox dial. Shaped like ``jd_tt``."""
    jd = np.asarray(jd_tt, dtype=float)
    if frame == "equinox":
        return np.zeros_like(jd)
    t = (jd - J2000_JD) / JULIAN_CENTURY_DAYS
    c0, c1, c2, c3 = PRECESSION_POLY_DEG
    return c0 + t * (c1 + t * (c2 + t * c3))


def to_frame(value_deg, jd_tt, frame: str, precesses: bool = True):
    """A longitude of the equinox of date (degrees) as read on a dial of ``frame``, 0-360.

    ``precesses=False`` (a difference of two longitudes) leaves it as it is."""
    v = np.asarray(value_deg, dtype=float)
    if not precesses or frame == "equinox":
        return v
    return mod(v - precession_deg(jd_tt, frame), 360.0)


# --- the sky's known swings ----------------------------------------------------------------
# Periods from the mean motions in engine.periods; which inequalities matter, and evection's
# argument 2D - M (so its period is 1 / (2 / synodic - 1 / anomalistic month), about 31.81 d),
# are standard lunar theory, from memory. The Sun's equation of centre runs with the
# anomalistic year (and its half); the Moon's with the anomalistic month (and its half);
# variation with half the synodic month; the annual equation with the anomalistic year. The
# elongation (phase) carries both sets.
_ANOM_YEAR = PERIODS["anomalistic_year"].days
_ANOM_MONTH = PERIODS["anomalistic_month"].days
_SYNODIC = PERIODS["synodic_month"].days
EVECTION_DAYS = 1.0 / (2.0 / _SYNODIC - 1.0 / _ANOM_MONTH)
SUN_SWINGS = (("equation of centre (anomalistic year)", _ANOM_YEAR),
              ("equation of centre, second harmonic", _ANOM_YEAR / 2))
#: the Sun's equation of centre in its longitude (the Earth's arm's, in the Earth's): known
#: in size, so fitted on trial over a year or two (see ``sizes``). Seen with a planet from
#: the Earth its size is another (it does not turn the planet's direction round), not given.
SUN_SIZES = {SUN_SWINGS[0][0]: EARTH.centre_deg}
MOON_SWINGS = (("equation of centre (anomalistic month)", _ANOM_MONTH),
               ("equation of centre, second harmonic", _ANOM_MONTH / 2),
               ("evection", EVECTION_DAYS),
               ("variation (half the synodic month)", _SYNODIC / 2),
               ("annual equation (anomalistic year)", _ANOM_YEAR))
# On an equinox dial the true longitudes carry the nutation (about ±17.2", with the node's
# 18.6 years; from memory). The elongation does not (a difference of two longitudes), nor do
# the mean node and perigee, nor anything on a star dial. It is not fitted with a drift line
# but taken off by its formula (nutation_lon_deg): fitted as a free sinusoid over one or two
# of its cycles, its column took up whatever else the error held near 18.6 years (an orrery's
# Jupiter arm over 20 years read +1.21° ± 0.14° a century, its ratio drifting by nothing).
NUTATION = ("nutation (the node's 18.6 years)", PERIODS["nodal_period"].days)
NUTATION_AMPLITUDE_DEG = 17.2 / 3600
_NODE_J2000_DEG = 125.04452  # the Moon's mean ascending node at J2000 (Meeus ch. 22)


def nutation_lon_deg(jd):
    """The nutation in longitude (degrees) at Julian dates (TT, or UT: ΔT is nothing to an
    18.6-year term): its two terms in the Moon's node, -17.20" sin Ω + 0.21" sin 2Ω (Meeus,
    Astronomical Algorithms 2nd ed., ch. 22, from memory). The terms left out (-1.32" sin 2L
    of the Sun, -0.23" sin 2L of the Moon and smaller) are under 2" together and run in
    half a year or less, so they tilt no drift line; tests/test_kinds.py checks the two
    against the IAU 2000A series skyfield computes. Shaped like ``jd``."""
    t = (np.asarray(jd, dtype=float) - J2000_JD) / JULIAN_CENTURY_DAYS
    node = np.radians(_NODE_J2000_DEG + PERIODS["nodal_period"].deg_per_century * t)
    return (-17.20 * np.sin(node) + 0.21 * np.sin(2 * node)) / 3600.0


# --- pointer kinds -------------------------------------------------------------------------

@dataclass(frozen=True)
class PointerKind:
    """One row of :data:`KINDS`: what a pointer of this kind shows (see the module docstring)."""

    key: str
    about: str
    period: dict[str, str]  # dial frame -> key in engine.periods.PERIODS
    true: Callable  # SkyState -> degrees 0-360 in the state's frame
    mean: Callable | None  # mean_elements(jd_tt) dict -> degrees, equinox of date
    precesses: bool
    swings: tuple[tuple[str, float], ...] = ()
    nutates: bool = False
    sizes: dict[str, float] = field(default_factory=dict)  # swing name -> amplitude (deg)
    bodies: tuple[str, ...] = ()
    in_days: bool = False

    def mean_period(self, frame: str) -> MeanPeriod:
        """The mean period a pointer of this kind should realise on a dial of ``frame``."""
        if frame not in self.period:
            raise UnknownName(f"unknown dial frame {frame!r}; the frames are "
                              f"{', '.join(self.period)}")
        return PERIODS[self.period[frame]]

    def swings_in(self, frame: str) -> tuple[tuple[str, float], ...]:
        """The sky's swings in its true value on a dial of ``frame``, fitted with a drift line
        (the same on both: the nutation an equinox dial adds is known, see
        :meth:`nutates_in`)."""
        return self.swings

    def nutates_in(self, frame: str) -> bool:
        """Whether its true value on a dial of ``frame`` carries the nutation in longitude
        (:func:`nutation_lon_deg`): an equinox dial's longitude."""
        return frame == "equinox" and self.nutates


def _both(key: str) -> dict[str, str]:
    return {frame: key for frame in FRAMES}


def _diff(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return mod(a - b, 360.0)


KINDS: dict[str, PointerKind] = {k.key: k for k in (
    PointerKind("sun", "the Sun's ecliptic longitude",
                {"equinox": "tropical_year", "stars": "sidereal_year"},
                lambda s: s.sun_lon_deg, lambda m: m["sun"], precesses=True,
                swings=SUN_SWINGS, nutates=True, sizes=SUN_SIZES),
    PointerKind("moon", "the Moon's ecliptic longitude",
                {"equinox": "tropical_month", "stars": "sidereal_month"},
                lambda s: s.moon_lon_deg, lambda m: m["moon"], precesses=True,
                swings=MOON_SWINGS, nutates=True),
    PointerKind("phase", "the Moon's phase: its elongation from the Sun",
                _both("synodic_month"), lambda s: s.elongation_deg, lambda m: m["phase"],
                precesses=False,
                swings=(*MOON_SWINGS, ("Sun's equation of centre, second harmonic",
                                       _ANOM_YEAR / 2)), in_days=True),
    PointerKind("anomaly", "the Moon's anomaly: its longitude less the mean perigee's",
                _both("anomalistic_month"), lambda s: _diff(s.moon_lon_deg, s.perigee_deg),
                lambda m: m["anomaly"], precesses=False, swings=MOON_SWINGS, nutates=True),
    PointerKind("draconic", "the Moon's longitude less the mean node's",
                _both("draconic_month"), lambda s: _diff(s.moon_lon_deg, s.node_deg),
                lambda m: m["draconic"], precesses=False, swings=MOON_SWINGS, nutates=True),
    # the sky's node and perigee are the mean elements: nothing periodic
    PointerKind("node", "the longitude of the Moon's mean ascending node",
                {"equinox": "nodal_period", "stars": "sidereal_nodal_period"},
                lambda s: s.node_deg, lambda m: m["node"], precesses=True),
    PointerKind("apsis", "the longitude of the Moon's mean perigee",
                {"equinox": "apsidal_period", "stars": "sidereal_apsidal_period"},
                lambda s: s.perigee_deg, lambda m: m["apsis"], precesses=True),
    # eclipse dials (engine/eclipses.py reads them)
    PointerKind("eclipse_year", "the Sun's longitude less the mean node's (an eclipse-year "
                "dial: eclipses come when it stands near 0° or 180°)",
                _both("eclipse_year"), lambda s: _diff(s.sun_lon_deg, s.node_deg),
                lambda m: _diff(m["sun"], m["node"]), precesses=False, swings=SUN_SWINGS,
                nutates=True, sizes=SUN_SIZES),
    PointerKind("cycle", "lunations counted round a dial of N months (an eclipse-cycle dial; "
                "the pointer's `lunations` is N, its marks say which months bear eclipses)",
                _both("synodic_month"), lambda s: s.elongation_deg, lambda m: m["phase"],
                precesses=False,
                swings=(*MOON_SWINGS, ("Sun's equation of centre, second harmonic",
                                       _ANOM_YEAR / 2)), in_days=True),
)}


# --- planets ---------------------------------------------------------------------------------
# Two rows per planet. ``NAME`` is seen from the Earth (a clock or calendar dial: geocentric
# apparent ecliptic longitude, with light time and aberration like the Sun and Moon); its mean
# motion is the planet's own for an outer planet and the Sun's for an inner one, and its chief
# swing is the synodic period (the retrograde loops), with the planet's and the Earth's
# equations of centre. ``NAME_from_sun`` is an orrery arm (heliocentric ecliptic longitude,
# geometric); its swing is the planet's equation of centre over its own year. A train file says
# which with ``seen_from`` (see engine.loader). Which swings matter is standard planetary
# theory, from memory; their periods come from the mean motions in engine.periods.
# An arm's equation of centre has a known size (``sizes``: Planet.centre_deg, 2e - e³/4);
# its second harmonic does not (5e²/4 is joined by the orbit's tilt to the ecliptic, i²/4,
# larger for Venus and Neptune: measured from DE406, 0.05° against 0.003°, 0.014-0.022°
# against 0.005°). Seen from the Earth the sizes are not all the heliocentric ones (an inner
# planet's direction does not turn round with its orbit, the Earth's own equation of centre
# reaches it through the parallax): only an outer planet's loops and its own equation of
# centre are given, from Jupiter out (see _planet_rows); the others are fitted freely.
SEEN_FROM = ("earth", "sun")  # where a planet pointer is seen from; the first is the default


def slow_swing_name(row: SlowSwing, key: str) -> str:
    """The words naming ``row`` in the longitude of the planet ``key`` (one of its two):
    ``the great inequality with Saturn (883 years)``."""
    other = PLANETS[row.planets[1] if key == row.planets[0] else row.planets[0]].name
    return f"{row.name} with {other} ({figure(row.period_days / 365.25, 3)} years)"


def slow_swings(key: str) -> tuple[tuple[str, float], ...]:
    """The slow mutual swings (:data:`engine.periods.SLOW_SWINGS`) in the longitude of the
    planet ``key``, as ``(name, period_days)``: Jupiter's and Saturn's great inequality,
    Uranus's and Neptune's near 2 : 1 swing; none for another planet."""
    return tuple((slow_swing_name(row, key), row.period_days)
                 for row in SLOW_SWINGS if key in row.planets)


def great_inequality(key: str) -> tuple[str, float] | None:
    """The great inequality's swing ``(name, period_days)`` in the longitude of ``key``
    (Jupiter and Saturn; ``None`` for another planet): see ``engine.periods``."""
    row = SLOW_SWINGS[0]
    return (slow_swing_name(row, key), row.period_days) if key in row.planets else None


def _planet_rows(key: str, name: str, inner: bool) -> tuple[PointerKind, ...]:
    sid, syn = PERIODS[f"{key}_sidereal"].days, PERIODS[f"{key}_synodic"].days
    centre = f"{name}'s equation of centre (its year)"
    own = ((centre, sid),
           (f"{name}'s equation of centre, second harmonic", sid / 2))
    own = (*own, *slow_swings(key))  # Jupiter's and Saturn's 883 years, Uranus's and Neptune's
    geo_period = ({"equinox": "tropical_year", "stars": "sidereal_year"} if inner else
                  {"equinox": f"{key}_tropical", "stars": f"{key}_sidereal"})
    loops = f"{name}'s synodic period (retrograde loops)"
    # seen from the Earth: an outer planet's loops are 1/a radians (the first term of the
    # parallax's series in 1/a, from memory) and its own equation of centre the heliocentric
    # one; given only where the planet's year holds more than three synodic periods (Jupiter
    # and beyond), as the joint fit over a few periods tells the two apart there (DE406,
    # 1.1-2.9 periods, 2900 BC-AD 2400: 0.76-1.41 and 0.81-1.29 times the size), not
    # for Mars (0.5-1,600 times: 780 and 687 days) nor the inner planets
    geo_sizes = ({loops: math.degrees(1.0 / PLANETS[key].distance_au),
                  centre: PLANETS[key].centre_deg} if not inner and sid > 3 * syn else {})
    return (
        PointerKind(key, f"{name} seen from the Earth: its geocentric ecliptic longitude",
                    geo_period, lambda s, k=key: s.planet_lon_deg[k], lambda m, k=key: m[k],
                    precesses=True, sizes=geo_sizes,
                    swings=((loops, syn),
                            (f"{name}'s synodic period, second harmonic", syn / 2),
                            (f"{name}'s synodic period, third harmonic", syn / 3),
                            *own, SUN_SWINGS[0]),
                    nutates=True, bodies=(key,)),
        PointerKind(f"{key}_from_sun", f"{name} seen from the Sun: its heliocentric ecliptic "
                    "longitude (an orrery arm)",
                    {"equinox": f"{key}_tropical", "stars": f"{key}_sidereal"},
                    lambda s, k=key: s.planet_helio_lon_deg[k],
                    lambda m, k=key: m[f"{k}_from_sun"], precesses=True, swings=own,
                    nutates=True, bodies=(key,), sizes={centre: PLANETS[key].centre_deg}),
    )


for _p in PLANETS.values():
    KINDS.update((row.key, row) for row in _planet_rows(_p.key, _p.name, _p.inner))
KINDS["earth_from_sun"] = PointerKind(
    "earth_from_sun", "the Earth seen from the Sun: its heliocentric ecliptic longitude, the "
    "Sun's plus 180° (an orrery's Earth arm)", {"equinox": "tropical_year",
                                                "stars": "sidereal_year"},
    lambda s: s.planet_helio_lon_deg["earth"], lambda m: m["earth_from_sun"], precesses=True,
    swings=SUN_SWINGS, nutates=True, bodies=("earth",), sizes=SUN_SIZES)
POINTER_KINDS = tuple(KINDS)


def shows_text(key: str) -> str:
    """A pointer kind as a train file writes it, for reports: an orrery arm's row
    ``mars_from_sun`` is ``mars, seen from the Sun`` (``shows = "mars"``, ``seen_from =
    "sun"``), the Earth's arm ``earth``; every other kind its own key."""
    if key == "earth_from_sun":
        return "earth"
    if key.endswith("_from_sun"):
        return f"{key.removesuffix('_from_sun')}, seen from the Sun"
    return key


def kind_key(shows: str, seen_from: str | None = None) -> str:
    """The :data:`KINDS` key of a pointer that ``shows`` something ``seen_from`` the Earth or
    the Sun (``None``: where it is usually seen from — the Earth, or the Sun for the Earth
    itself). ``KeyError`` with a plain message when there is no such kind."""
    shows = str(shows).strip().lower()
    if shows.endswith("_from_sun") and shows in KINDS and seen_from is not None:
        # the row's own key already says where it is seen from: a seen_from beside it
        # either repeats it or contradicts it ("mars_from_sun" seen from the Earth)
        raise UnknownName(f"'{shows}' already says it is seen from the Sun: write shows = "
                          f"\"{shows.removesuffix('_from_sun')}\" with seen_from = "
                          f"\"{str(seen_from).strip().lower()}\"")
    if seen_from is None:
        seen_from = "sun" if shows == "earth" else "earth"
    seen_from = str(seen_from).strip().lower()  # read in any case, as the train file's word
    if seen_from not in SEEN_FROM:
        raise UnknownName(f"seen_from should be one of {', '.join(SEEN_FROM)}, got "
                          f"{seen_from!r}")
    key = shows if seen_from == "earth" else f"{shows}_from_sun"
    if key not in KINDS or (shows.endswith("_from_sun") and seen_from == "sun"):
        if shows == "earth":
            raise UnknownName("the Earth is shown seen from the Sun (an orrery arm): "
                           "seen_from = \"sun\"")
        if shows in KINDS:
            raise UnknownName(f"'{shows}' is shown only as seen from the Earth")
        raise UnknownName(f"unknown pointer kind '{shows}'")
    return key


def true_value(name: str, state) -> np.ndarray:
    """The true value (degrees 0-360, the state's frame) a pointer of kind ``name`` should show;
    ``KeyError`` for an unknown kind."""
    return KINDS[str(name).strip().lower()].true(state)


def days_rate(name: str) -> float | None:
    """Degrees a day by which an error of kind ``name`` is also read as days early or late
    (its mean rate, the same on every dial); ``None`` for a kind read in degrees only, or a
    series that is no pointer kind."""
    row = KINDS.get(name)
    return row.mean_period("equinox").deg_per_day if row is not None and row.in_days else None


def mean_value(name: str, mean: dict, jd_tt, frame: str):
    """The mean value of kind ``name`` on a dial of ``frame``, from ``mean_elements(jd_tt)``."""
    row = KINDS[name]
    if row.mean is None:
        raise TrainError("pointer kind", name, "has no mean value: set it from the sky or by "
                         "angles")
    return to_frame(row.mean(mean), jd_tt, frame, row.precesses)


def bodies(kinds: Iterable[str]) -> tuple[str, ...]:
    """Sky bodies beyond the Sun and Moon that pointers of these kinds need, in order."""
    out: dict[str, None] = {}
    for k in kinds:
        out.update(dict.fromkeys(KINDS[k].bodies))
    return tuple(out)


def sky_at(sky, jd_ut, kinds: Iterable[str] = (), frame: str = "equinox", site=None):
    """``sky.at`` for pointers of these kinds: asks for the planets they need, if any."""
    need = bodies(kinds)
    if need:
        return sky.at(jd_ut, frame=frame, site=site, planets=need)
    return sky.at(jd_ut, frame=frame, site=site)
