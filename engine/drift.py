"""Drift: how far each pointer of a train strays from the true sky over a span of dates.

Two entry points:

* :func:`pointer_errors` — the error of every pointer at some dates (any array shape): the
  train's reading, the sky's value, their difference wrapped to ±180°, and for a phase pointer
  the same difference in days. It reads the train through :class:`engine.readout.Readout`
  itself, so an interface showing it shows exactly what the readout shows.
* :func:`drift_series` — the same on a uniform grid of dates over a span, processed in chunks,
  with a :class:`PointerSummary` of each pointer: largest error and when, RMS, secular drift
  rate, the periodic part left after the drift, the first date past a threshold, and the best
  constant re-setting. What it asks is a :class:`DriftRun` (the dates, the dial, the observer,
  the threshold); how it runs, a :class:`RunControl` (chunks, what is kept, callbacks).

Method (all angles in degrees):

* error = train - sky, wrapped to [-180, 180); phase error in days = error / (360° / mean
  synodic month), the elongation's mean daily gain (``engine.periods``).
* Secular drift: a straight line fitted by least squares to the unwrapped error, jointly with
  sinusoids at the periods the sky is known to put into such errors (:func:`sky_terms`, the
  ``swings`` of each kind's row: for the Sun its equation of centre; for the Moon its
  equation of centre, evection, variation and the annual equation; the nutation on an
  equinox dial), each once the span holds a whole
  period of it. Over a short span a partial swing would otherwise tilt the line: two years of
  a Sun hand that lacks the 1.9° equation of centre read +91° a century. The slope's standard
  error comes with it (:func:`fit_drift`), and the summary says when the span is too short
  for the drift to mean much. The error is unwrapped about the line expected from the mean
  rates (train rate minus the mean motion of what it shows): the difference from that line is
  the true sky's own irregularity plus the setting, a few degrees, so it is taken the short
  way round from its first value. This is ``np.unwrap`` whenever the grid is fine enough for
  it, and stays right for coarse steps (a year) too. The stored residual is small in
  magnitude, so float32 keeps it well.
* Periodic part: the residual about the fitted line, on the uniform grid, is Hann-windowed and
  Fourier transformed (averaged in bins first, see :mod:`engine.fitting`); the
  strongest bin (periods up to two thirds of the span) starts a local search for the
  frequency whose least-squares sinusoid leaves the least residual, and the amplitude is the
  least-squares sinusoid at that frequency over the full series.
* First crossing: the first grid date where |error| reaches the threshold, refined by linear
  interpolation from the date before (the span's start if the first date is already past).
* Best re-setting: the constant ``c`` minimising the RMS of wrap(error - c): started from the
  circular mean, then refined by ``c += mean(wrap(error - c))`` (the exact minimiser when no
  error crosses the half turn opposite ``c``). Errors all within less than a half turn of
  each other (nothing wraps) give their plain mean at once, where the refining ends; a run
  knows that case from its chunks' bounds and takes the mean and the RMS about it from sums
  kept chunk by chunk (see :class:`_Running`), without another pass over the errors.
  Turning the pointer back by ``c`` leaves ``rms_after_reset_deg``.

Memory: the grid is walked in chunks (``RunControl.chunk`` dates at a time: one sky computation, the
train's readings, the errors); running sums give the maxima, RMS, fit and threshold. What must
be kept for the whole span is two float32 series per pointer (wrapped error and the residual
about the expected line, 8 bytes a date each) plus the dates (float64); the train and sky
readings are kept as float32 only with ``RunControl.keep_series`` (another 8 bytes a date per
pointer). A 1000-year span at one-day steps with five pointers keeps about 18 MB; an
``RunControl.on_chunk`` callback can stream everything (e.g. into a CSV file) without keeping it.

Speed: on a uniform grid the train is read chunk by chunk from one exact reading at the
chunk's first date (:func:`engine.exact.turns_mod1`) plus the pointer's float rate times the
turns since then — the same sums as :class:`engine.readout.Readout`, equal to it within 1e-5°
(0.04 arcsecond; single-precision pin-and-slot geometry, checked in ``tests/test_drift.py``),
without exact integer work at every date (the exact readings at every chunk's first date are
made at once when the run starts). Every pointer is a row of the same arrays, so each step of
a chunk is one numpy call for all of them. The sky's true values are read (its derived fields
are worked out then) inside the time counted as the sky's; ``bench/drift_speed.py`` prints the
engine's share of it and its parts (219,000 six-hour dates, the tide office dial; see the
speed section of ``docs/drift.md``).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import numpy as np

from .angles import unwrap_deg, wrap_deg
from .dates import MIN_STEP_DAYS, as_jd, parse_step
from .errors import DriftCancelled, DriftError, WheelworkError
from .exact import turns_mod1
from .fitting import (
    LineFit,
    best_offset,
    fit_line_and_sinusoids,
    periodic_part,
    sum_sq,
)
from .kinds import (
    KINDS,
    MOON_SWINGS,
    days_rate,
    nutation_lon_deg,
    sky_at,
    slow_swing_name,
    true_value,
)
from .kinematics import pin_slot_lead_turns
from .mechanism import need_mechanism, need_sky
from .periods import JULIAN_CENTURY_DAYS, PERIODS, SECONDS_PER_DAY, SLOW_SWINGS

if TYPE_CHECKING:
    from .sky import Site

PHASE_DEG_PER_DAY = days_rate("phase")  # mean daily gain of elongation
MAX_DATES = 50_000_000  # beyond this the kept series alone pass ~2 GB: refuse, name a step

# The sky's own periodic inequalities (each kind's ``swings`` in engine.kinds) are fitted
# together with the drift line so that a short span's partial swing is not mistaken for drift.
# MINOR_TERMS are those whose amplitude is known (the slow mutual swings of planets,
# engine.periods.SLOW_SWINGS: Jupiter's and Saturn's great inequality, 883 years; Uranus's and
# Neptune's near 2 : 1 swing, 4,233 years). When the span is too short to fit one it does not
# make a drift "uncertain": its largest possible tilt of the line is added to the slope's
# standard error instead (Jupiter's 0.33° tilts a line by up to 0.23° a century, Saturn's
# 0.83° by up to 0.59°, Uranus's 0.87° by up to 0.13°, Neptune's 0.59° by up to 0.09°).
# Over fewer than TERM_SURE_CYCLES of its periods such a term is fitted on trial: a fitted
# amplitude more than TERM_AMPLITUDE_SLACK times its known one, or less than its inverse,
# means its column took up something else near its period (or the term was lost in it), and
# the term is left out as over a shorter span; a plausible one stays, and the ± takes in the
# largest tilt a swing the size of its amplitude's spread (MINOR_SPREAD) can give the line.
# The nutation (an equinox dial's longitudes) is not fitted but taken off by its formula.
MINOR_TERMS: dict[str, float] = {
    slow_swing_name(row, key): amp for row in SLOW_SWINGS
    for key, amp in row.amplitude_deg.items()}
MINOR_SPREAD: dict[str, float] = {
    slow_swing_name(row, key): spread for row in SLOW_SWINGS
    for key, spread in row.spread_deg.items()}
TERM_MIN_CYCLES = 1.0  # a term is fitted once the span holds this many of its periods
TERM_SURE_CYCLES = 3.0  # below this many, a term of known amplitude is fitted on trial
TERM_AMPLITUDE_SLACK = 2.0  # a trial fit this many times its known amplitude (or 1/this) fails


def sky_terms(shows: str, frame: str = "equinox") -> tuple[tuple[str, float], ...]:
    """The ``(name, period_days)`` inequalities fitted with the drift of a pointer of kind
    ``shows`` on a dial of ``frame`` (none for a series of no known kind)."""
    return KINDS[shows].swings_in(frame) if shows in KINDS else ()


# --- small helpers -------------------------------------------------------------------------

def _expected_deg_per_day(readout, name: str, frame: str) -> float:
    """Mean rate of the pointer's error from the mean motions: train rate minus sky rate."""
    p = readout.train.pointers[name]
    return readout.deg_per_day(name) - KINDS[p.shows].mean_period(frame).deg_per_day


def _site(site):
    if site is None or not isinstance(site, str):
        return site
    from .sites import parse_site

    return parse_site(site)


# --- errors at dates -----------------------------------------------------------------------

@dataclass(frozen=True)
class ErrorNow:
    """One pointer at some dates: arrays shaped like the dates given.

    ``error_deg`` is train - sky wrapped to [-180, 180); ``error_days`` is the same for a phase
    pointer in days of the mean synodic month (``None`` for other kinds): positive when the
    pointer is ahead of the sky.
    """

    pointer: str
    shows: str
    train_deg: np.ndarray
    sky_deg: np.ndarray
    error_deg: np.ndarray
    error_days: np.ndarray | None
    delta_t_effect_deg: np.ndarray | float = 0.0

    @property
    def within_delta_t(self):
        """True where the error is no larger than what ΔT's uncertainty does to the sky's
        value (:func:`delta_t_effect_deg`): the comparison cannot tell it from zero."""
        return np.abs(self.error_deg) <= self.delta_t_effect_deg


def pointer_errors(mech, sky, jd_ut, *, frame: str | None = None,
                   site=None) -> dict[str, ErrorNow]:
    """Every pointer's reading, the true sky, and the error, at UT Julian dates (any shape).

    ``frame`` defaults to the train's dial; ``site`` is an :class:`engine.sky.Site` or
    ``"LAT,LON[,H]"``. A re-set train is a mechanism with another readout
    (``dataclasses.replace(mech, readout=...)``).
    """
    need_mechanism(mech, "pointer_errors")
    need_sky(sky, "pointer_errors")
    readout = mech.readout
    frame = frame or mech.train.dial
    jd = np.asarray(as_jd(jd_ut, "pointer_errors"), dtype=float)
    shows = [p.shows for p in mech.train.pointers.values()]
    state = sky_at(sky, jd, shows, frame=frame, site=_site(site))
    reading = readout.read_deg(readout.turns_at(jd))
    out = {}
    for name, p in mech.train.pointers.items():
        train = np.reshape(reading[name], jd.shape)
        true = np.reshape(true_value(p.shows, state), jd.shape)
        err = wrap_deg(train - true)
        rate = days_rate(p.shows)
        days = err / rate if rate else None
        effect = np.reshape(delta_t_effect_deg(p.shows, state.delta_t_sigma_s, frame), jd.shape)
        out[name] = ErrorNow(name, p.shows, train, true, err, days, effect)
    return out


def delta_t_effect_deg(shows: str, delta_t_sigma_s, frame: str = "equinox"):
    """Degrees the true value of a pointer of kind ``shows`` moves in one standard error of
    ΔT (``delta_t_sigma_s`` seconds): the uncertainty ΔT puts into the comparison itself.

    The sky is computed at TT = UT + ΔT, so an error of σ seconds in ΔT moves the true value by
    σ times its mean rate — for the Moon about 0.55″ a second, which before the common era
    (σ of many minutes) reaches a tenth of a degree and more. Shaped like ``delta_t_sigma_s``."""
    if shows not in KINDS:
        return np.zeros_like(np.asarray(delta_t_sigma_s, dtype=float))
    rate = abs(KINDS[shows].mean_period(frame).deg_per_day) / SECONDS_PER_DAY
    return np.asarray(delta_t_sigma_s, dtype=float) * rate


class _GridReader:
    """Readings of every pointer over a chunk of dates, anchored at the chunk's first date.

    The sums are those of ``Readout.read_deg`` and ``Kinematics.slot_lags_turns``: exact whole
    turns at the anchor (:func:`engine.exact.turns_mod1`), then the float rate times the turns
    since the anchor. The pin-and-slot lead is the same plane geometry written directly as the
    lead (:func:`engine.kinematics.pin_slot_lead_turns`), in single precision: the lead is
    bounded (at most ``asin(e / r)`` for the classic stage), so its rounding stays below 1e-5°.
    """

    def __init__(self, readout):
        kin = readout.kin
        train = readout.train
        self.readout = readout
        self.days_per_turn = float(train.crank.days_per_turn)
        self.slots = []
        for sname in kin.slot_order:
            ps = train.pin_slots[sname]
            mount = kin.linear_of(train.arbors[ps.slot_arbor].mount)
            moving = []  # (exact rate, float rate, angle at the epoch, lag weights)
            for arbor, at_deg in ((ps.pin_arbor, ps.pin_deg), (ps.carrier, ps.arm_deg)):
                if arbor is None:
                    continue
                rel = kin.linear_of(arbor) - mount
                weights = tuple((other, float(w)) for other, w in zip(kin.slot_names, rel.slots,
                                                                      strict=True) if w)
                moving.append((rel.crank, float(rel.crank), at_deg / 360.0, weights))
            self.slots.append((sname, ps, moving))
        self.pointers = {}
        for name, m in readout.motions.items():
            weights = tuple((s, 360.0 * float(w)) for s, w in zip(kin.slot_names, m.lin.slots,
                                                                  strict=True) if w)
            self.pointers[name] = (m.lin.crank, 360.0 * float(m.lin.crank), m.offset_turns,
                                   weights)
        # every exact rate read at an anchor: the pointers', then the stages' moving arbors'
        self._exact = [r for r, *_ in self.pointers.values()]
        self._exact += [r for _, _, moving in self.slots for r, *_ in moving]
        self._rates = None  # as arrays, when turns_mod1 would work in int64 for every one
        if all(r.denominator < 3_000_000_000 for r in self._exact):
            self._rates = (np.array([r.numerator % r.denominator for r in self._exact],
                                    dtype=np.int64),
                           np.array([r.denominator for r in self._exact], dtype=np.int64),
                           np.array([float(r) for r in self._exact]))

    def anchor(self, jd_first: float):
        """Turns at the chunk's first date, each pointer's exact reading there (degrees) and
        each pin-and-slot stage's moving angles there (turns): see :meth:`anchors`."""
        return self.anchors(np.array([jd_first]))[0]

    def anchors(self, jd_firsts: np.ndarray) -> list[tuple[list[float], dict[str, float]]]:
        """:meth:`anchor` at each of several dates (every chunk's first date of a run, read
        at once): ``turns_mod1`` for every rate and date together, its same integer and float
        steps on arrays of numerators, denominators and turns."""
        a = self.readout.turns_at(np.asarray(jd_firsts, dtype=float).reshape(-1))
        rates = self._rates
        if rates is None:
            at = np.array([turns_mod1(rate, a) for rate in self._exact]).reshape(
                len(self._exact), -1)
        else:
            num, den, rate_f = (r[:, None] for r in rates)
            w = np.mod(a.whole[None, :], den)
            at = np.mod(np.mod(num * w, den) / den + rate_f * a.frac[None, :], 1.0)
        out = []
        np_ = len(self.pointers)
        offsets = [offset for _, _, offset, _ in self.pointers.values()]
        for col in at.T.tolist():
            base = {name: 360.0 * (col[i] + offsets[i]) for i, name in enumerate(self.pointers)}
            out.append((col[np_:], base))
        return out

    def lags_turns(self, at, since: np.ndarray) -> dict[str, np.ndarray]:
        """Each stage's lead (turns) at ``since`` crank turns after the anchor; ``at``: the
        moving angles there, from :meth:`anchor`."""
        lags: dict[str, np.ndarray] = {}
        at = iter(at)
        for sname, ps, moving in self.slots:
            angles = []
            classic = ps.follows == "pin" and not ps.arm_mm  # its lead reads the pin alone
            for _, rate_f, at0, weights in moving:
                if classic and angles:
                    next(at)
                    continue
                x = rate_f * since
                x += next(at) + at0
                for other, w in weights:
                    if other in lags:
                        x += w * lags[other]
                x -= np.floor(x)
                angles.append(x)
            lags[sname] = pin_slot_lead_turns(angles[0], ps.pin_radius_mm, ps.offset_mm,
                                              angles[1] if len(angles) > 1 else 0.0,
                                              ps.arm_mm, ps.follows, dtype=np.float32)
        return lags

    def continuous_deg(self, name: str, base: dict, since: np.ndarray, lags: dict) -> np.ndarray:
        """Reading in degrees, not reduced to 0-360 (it equals the reading modulo 360)."""
        _, rate360, _, weights = self.pointers[name]
        v = rate360 * since
        v += base[name]
        for sname, w in weights:
            v += w * lags[sname]
        return v

    def read_deg(self, jd: np.ndarray) -> dict[str, np.ndarray]:
        """Every pointer's reading in degrees [0, 360) at these dates."""
        jd = np.asarray(jd, dtype=float).reshape(-1)
        a, base = self.anchor(jd[0])
        since = (jd - jd[0]) / self.days_per_turn
        lags = self.lags_turns(a, since)
        out = {}
        for name in self.pointers:
            v = self.continuous_deg(name, base, since, lags)
            out[name] = v - 360.0 * np.floor(v * (1 / 360))
        return out


# --- summaries -----------------------------------------------------------------------------

@dataclass(frozen=True)
class PointerSummary:
    """What a drift run found for one pointer. Degrees unless the name says days.

    ``drift_deg_per_century``: slope of the least-squares line through the unwrapped error,
    fitted jointly with sinusoids at the sky's known periods (:func:`sky_terms`).
    ``periodic_amplitude_deg`` / ``periodic_period_days``: the strongest sinusoid left once that
    line is removed: ``None`` period with a NaN amplitude when the span is too short to show
    one (or the step too coarse: ``step_note``), with 0 when none was found.
    ``drift_sigma_deg_per_century``: standard error of that slope (see :func:`fit_drift`);
    ``drift_uncertain``: the span is too short for the drift to mean much — shorter than two
    periods of the strongest swing, or a known sky inequality (``drift_terms_left_out``) has a
    period longer than the span, so it could not be separated from the drift. ``drift_terms``
    names the sky inequalities fitted together with the line. ``drift_terms_set_aside``:
    those of known amplitude whose fit over too few of their periods was refused (its size
    implausible), left out with their largest tilt in the ±; ``drift_terms_on_trial``: those
    of known amplitude fitted over too few of their periods to be sure, the uncertainty of
    their size in the ± (see :func:`fit_drift`).
    ``first_crossing_jd``: first date |error| reaches ``threshold_deg`` (``None``: never, or no
    threshold). ``best_offset_deg``: the constant error that re-setting should take out (turn
    the pointer back by it); ``rms_after_reset_deg`` is what remains. ``max_abs_days``,
    ``rms_days`` and ``threshold_days`` are for phase pointers only. ``step_note``: one line
    saying the grid's step is too coarse to follow what the pointer shows (see
    :func:`step_note`); then no swing is sought and the drift is uncertain.
    ``delta_t_effect_deg``: the most that one standard error of ΔT moves the true value over
    the span (:func:`delta_t_effect_deg`; large only far from the present);
    ``within_delta_t``: the largest error is no larger than that, so the comparison cannot
    tell the pointer from the sky.
    ``months_off_end``, ``months_off_least``, ``months_off_most``: for an eclipse-cycle dial
    only (else ``None``), the whole lunations its month stands from the real count at the
    span's last date, and the least and most over the span (positive: ahead); the errors above
    are taken within the month, as a phase disc's are (:func:`whole_months_off`).
    """

    pointer: str
    shows: str
    max_abs_deg: float
    max_at_jd: float
    rms_deg: float
    drift_deg_per_century: float
    periodic_amplitude_deg: float
    periodic_period_days: float | None
    first_crossing_jd: float | None
    threshold_deg: float | None
    best_offset_deg: float
    rms_after_reset_deg: float
    max_abs_days: float | None = None
    rms_days: float | None = None
    threshold_days: float | None = None
    drift_sigma_deg_per_century: float = float("nan")
    drift_uncertain: bool = False
    drift_terms: tuple[str, ...] = ()
    drift_terms_left_out: tuple[str, ...] = ()
    drift_terms_set_aside: tuple[str, ...] = ()
    drift_terms_on_trial: tuple[str, ...] = ()
    step_note: str | None = None
    delta_t_effect_deg: float = 0.0
    within_delta_t: bool = False
    months_off_end: int | None = None
    months_off_least: int | None = None
    months_off_most: int | None = None

    def to_dict(self) -> dict:
        return {k: (None if isinstance(v, float) and not math.isfinite(v) else
                    list(v) if isinstance(v, tuple) else v)
                for k, v in self.__dict__.items()}


@dataclass
class DriftResult:
    """A drift run: the grid ``jd`` (UT), per-pointer series and summaries.

    ``error_deg`` (float32, wrapped to ±180°) is always kept; ``train_deg`` and ``sky_deg``
    (float32) only with ``RunControl.keep_series`` (else empty dicts); ``error_days`` for phase
    pointers. ``timings`` holds seconds spent in the sky (``sky_s``) and in the rest of the
    run (``engine_s``: train readings, errors, summaries), of which the summaries
    (``summaries_s``), and of those the drift lines' fits (``fit_s``) and the swings' searches
    (``swing_s``); ``callbacks_s`` (progress, on_chunk) and ``total_s``.
    """

    jd: np.ndarray
    train_deg: dict[str, np.ndarray]
    sky_deg: dict[str, np.ndarray]
    error_deg: dict[str, np.ndarray]
    error_days: dict[str, np.ndarray]
    summaries: dict[str, PointerSummary]
    frame: str
    step_days: float = 0.0
    sky_name: str = ""
    timings: dict[str, float] = field(default_factory=dict)
    #: the largest one-standard-error uncertainty of ΔT met on the grid, in seconds (how far
    #: the UT dates may stand from the sky's TT; ``delta_t_effect_deg`` is what it moves)
    delta_t_sigma_s: float = 0.0

    @property
    def notes(self) -> list[str]:
        """One line per pointer whose figures the step cannot be trusted for."""
        return [s.step_note for s in self.summaries.values() if s.step_note]

    def __repr__(self):
        return (f"DriftResult({len(self.jd):,} dates every {self.step_days:g} d, {self.frame} "
                f"frame, pointers: {', '.join(self.summaries)})")

    def summaries_dict(self) -> dict[str, dict]:
        return {name: s.to_dict() for name, s in self.summaries.items()}


class _Running:
    """Running figures of one pointer's error over the chunks of a uniform grid.

    ``add`` takes a chunk's wrapped error ``err`` and ``resid``, the unwrapped error less the
    expected line ``expected_per_step * k`` (k the grid index), both float64, ``resid`` less
    the constant ``shift`` (added back as it is stored). A run's chunks come through
    :meth:`take` instead, with the error as ``kappa`` plus a series and that series' sum and
    sum of squares already worked out for every pointer at once (:class:`_Chunks`).

    The error's mean and its sum of squared deviations from the mean (the best re-setting
    when nothing wraps) are merged chunk by chunk from sums about each chunk's ``kappa``, so
    no sum loses the small spread to a large constant; ``lo``/``hi`` bound the errors met
    (``None`` once a chunk was wrapped).
    """

    def __init__(self, n: int, jd0: float, step: float, expected_per_step: float,
                 threshold_deg: float | None, *, error: np.ndarray | None = None,
                 resid: np.ndarray | None = None):
        self.n = n
        self.error = np.empty(n, dtype=np.float32) if error is None else error
        self.resid = np.empty(n, dtype=np.float32) if resid is None else resid
        self.jd0, self.step = jd0, step
        self.expected_per_step = expected_per_step
        self.threshold = threshold_deg
        self.max_abs, self.max_at = -1.0, jd0
        self.sum_sq = 0.0
        self.count, self.mean, self.m2 = 0, 0.0, 0.0
        self.lo: float | None = math.inf
        self.hi: float | None = -math.inf
        self.prev_abs = None
        self.crossing = None

    def add(self, i0: int, k: np.ndarray, err: np.ndarray, resid: np.ndarray,
            shift: float = 0.0, bound: float | None = None) -> None:
        """``bound``: no |err| in the chunk exceeds it (``None``: not known)."""
        n = len(err)
        self.sum_sq += sum_sq(err)
        self.lo = self.hi = None  # no bounds kept: the re-setting is sought in the series
        self.error[i0:i0 + n] = err
        np.add(resid, shift, out=self.resid[i0:i0 + n], casting="same_kind")
        self._peak(i0, n, lambda: err, float(err[-1]), bound)

    def take(self, i0: int, n: int, err, last: float, kappa: float, s1: float, s2: float,
             lo: float | None, hi: float | None, bound: float | None) -> None:
        """A chunk of ``n`` errors (already stored) whose differences from ``kappa`` sum to
        ``s1`` and their squares to ``s2``; ``err()`` gives the errors (float64, not to be
        kept) when they must be looked at, ``last`` is the last of them; ``lo``..``hi``
        hold them (``None``: they were wrapped)."""
        self.sum_sq += s2 + kappa * (2.0 * s1 + n * kappa)
        self._moments(n, kappa, s1, s2)
        if lo is None or self.lo is None:
            self.lo = self.hi = None
        else:
            self.lo, self.hi = min(self.lo, lo), max(self.hi, hi)
        self._peak(i0, n, err, last, bound)

    def _moments(self, n: int, kappa: float, s1: float, s2: float) -> None:
        """Merge a chunk's mean and squared deviations (from sums about ``kappa``)."""
        mean = kappa + s1 / n
        m2 = max(s2 - s1 * (s1 / n), 0.0)
        total = self.count + n
        delta = mean - self.mean
        self.mean += delta * (n / total)
        self.m2 += m2 + delta * delta * (self.count * n / total)
        self.count = total

    def _peak(self, i0: int, n: int, err, last: float, bound: float | None) -> None:
        """The largest |error| so far and when, and the first crossing of the threshold."""
        values = None
        if self.threshold is None and bound is not None and bound + 1e-9 <= self.max_abs:
            i = top = None  # nothing here beats the largest so far
        elif self.threshold is None:  # the first largest |err|: the first largest or smallest
            values = err()
            hi, lo = int(np.argmax(values)), int(np.argmin(values))
            big, small = float(values[hi]), -float(values[lo])
            i = hi if big > small else lo if small > big else min(hi, lo)
            top = max(big, small)
        else:
            ae = np.abs(err())
            i = int(np.argmax(ae))
            top = float(ae[i])
        if top is not None and top > self.max_abs:
            self.max_abs, self.max_at = top, self.jd0 + (i0 + i) * self.step
        if self.threshold is not None and self.crossing is None:
            past = ae >= self.threshold
            if past.any():
                j = int(np.argmax(past))
                before = self.prev_abs if j == 0 else float(ae[j - 1])
                at = self.jd0 + (i0 + j) * self.step
                if before is None:
                    self.crossing = at
                else:
                    f = (self.threshold - before) / (float(ae[j]) - before)
                    self.crossing = at - (1.0 - f) * self.step
        self.prev_abs = abs(last)

    def reset(self) -> tuple[float, float]:
        """The best re-setting and the RMS it leaves (:func:`engine.fitting.best_offset`):
        the errors' mean and their RMS about it when the bounds show them all within less
        than a half turn of each other (where ``best_offset`` takes the mean too), else
        sought in the stored series."""
        if self.lo is not None and self.count and self.hi - self.lo < 179.0 - 1e-3:
            return float(wrap_deg(self.mean)), math.sqrt(self.m2 / self.count)
        return best_offset(self.error)

    def summary(self, name: str, shows: str, terms=None, cache: dict | None = None,
                step_note: str | None = None, clock: dict[str, float] | None = None,
                frame: str = "equinox", uniform: bool = True) -> PointerSummary:
        """The pointer's figures. ``step_note``: the step cannot follow what the pointer shows
        (:func:`step_note`), so no swing is sought (it would be an alias) and the drift is
        uncertain. ``clock``: seconds spent fitting the line (``fit_s``) and seeking the
        swing (``swing_s``) are added to it. ``frame``: the dial's, for the nutation an
        equinox dial's longitude carries (taken off before the fit, see
        :func:`engine.kinds.nutation_lon_deg`). ``uniform``: the pointer turns at a constant
        rate (no pin-and-slot stage drives it), so its error holds the sky's swings at their
        full size and the kind's known sizes (``PointerKind.sizes``) put them on trial; a
        pin-and-slot may take a swing out (the tide office's Moon, its equation of centre)."""
        n = self.n
        terms = sky_terms(shows) if terms is None else tuple(terms)
        known = None
        if shows in KINDS and KINDS[shows].nutates_in(frame):
            jd0, step = self.jd0, self.step  # the error holds the sky's -nutation

            def known(k):
                return -nutation_lon_deg(jd0 + k * step)
        t0 = time.perf_counter()
        fit = fit_drift(self.resid, self.step, terms, cache=cache,
                        all_terms=() if cache is None else cache.get("terms", ()),
                        known=known,
                        sizes=KINDS[shows].sizes if uniform and shows in KINDS else None)
        t1 = time.perf_counter()
        drift = (self.expected_per_step + fit.slope_per_step) / self.step * JULIAN_CENTURY_DAYS
        sigma = fit.sigma_per_step / self.step * JULIAN_CENTURY_DAYS
        if step_note:
            amp, period = float("nan"), None
        else:
            amp, period = periodic_part(self.resid, self.step, line=fit.line, binned=fit.binned)
        if clock is not None:
            clock["fit_s"] = clock.get("fit_s", 0.0) + t1 - t0
            clock["swing_s"] = clock.get("swing_s", 0.0) + time.perf_counter() - t1
        span = (n - 1) * self.step
        # a swing too small to print cannot tilt the line by much
        short = period is not None and span < 2.0 * period and amp >= 5e-5
        too_short = period is None and math.isnan(amp)  # searched and found none: not so
        uncertain = (too_short or short or step_note is not None
                     or any(t not in MINOR_TERMS for t in fit.left_out))
        offset, rms_after = self.reset()
        thr = self.threshold
        extra = {}
        g = days_rate(shows)
        if g:
            extra = {"max_abs_days": self.max_abs / g, "rms_days": math.sqrt(self.sum_sq / n) / g,
                     "threshold_days": None if thr is None else thr / g}
        return PointerSummary(
            pointer=name, shows=shows, max_abs_deg=self.max_abs, max_at_jd=self.max_at,
            rms_deg=math.sqrt(self.sum_sq / n), drift_deg_per_century=drift,
            periodic_amplitude_deg=amp, periodic_period_days=period,
            first_crossing_jd=self.crossing, threshold_deg=thr, best_offset_deg=offset,
            rms_after_reset_deg=rms_after, drift_sigma_deg_per_century=sigma,
            drift_uncertain=uncertain, drift_terms=fit.used, drift_terms_left_out=fit.left_out,
            drift_terms_set_aside=fit.set_aside, drift_terms_on_trial=fit.on_trial,
            step_note=step_note, **extra)


def whole_months_off(readout, name: str, frame: str, jd: np.ndarray,
                     error_deg: np.ndarray) -> np.ndarray:
    """Whole lunations an eclipse-cycle dial's month stands from the real count at each date
    (positive: ahead), given its error within the month (``error_deg``, wrapped to ±180° of
    phase, as :func:`pointer_errors` gives it). Taken round the dial's N months, as the dial
    shows them: -(N-1)//2 to N//2 (a 12-month dial 13 months ahead shows the next month).

    A cycle dial counts months from its epoch, so a dial that gains a lunation shows the next
    month although its error within the month is back near zero. The whole part is read off
    the line expected from the mean rates, anchored at the epoch on the pointer's reading less
    its kind's mean value there: the error stands within the sky's swings (some ten degrees,
    with ΔT's and the mean motions' slow change over millennia) of that line, far inside the
    half turn that rounding to whole lunations allows."""
    from .readout import mean_values

    epoch = readout.train.epoch.jd_ut
    at_epoch = float(readout.read_deg(readout.turns_at(epoch))[name])
    mean = mean_values(readout.train, epoch, frame=frame, names=[name])[name]
    line = (float(wrap_deg(at_epoch - mean))
            + _expected_deg_per_day(readout, name, frame) * (np.asarray(jd, float) - epoch))
    whole = np.rint((line - np.asarray(error_deg, float)) / 360.0).astype(np.int64)
    n = int(readout.train.pointers[name].per_turn)  # the dial's months: N off is no month off
    return (whole + (n - 1) // 2) % n - (n - 1) // 2  # -(N-1)//2 .. N//2


def summarise(jd: np.ndarray, error_deg: np.ndarray, *, threshold_deg: float | None = None,
              name: str = "series", shows: str = "series",
              terms: tuple[tuple[str, float], ...] | None = None,
              frame: str = "equinox") -> PointerSummary:
    """The summary figures of any error series on a uniform grid (degrees; ``np.unwrap``).

    The same arithmetic as :func:`drift_series` applies to each pointer, for series made
    elsewhere (and for tests on synthetic series). ``terms``: ``(name, period_days)`` pairs
    fitted with the drift line; default :func:`sky_terms` of ``shows`` on an equinox dial
    (none for a plain series); ``frame``: the dial's (on an equinox dial the nutation is
    taken off a longitude before the fit, as a run does). The series is read as a uniformly
    turning hand's: its kind's known sizes (``PointerKind.sizes``) put those swings on trial."""
    jd = np.asarray(jd, dtype=float)
    err = wrap_deg(np.asarray(error_deg, dtype=float))
    if jd.ndim != 1 or jd.shape != err.shape or len(jd) < 2:
        raise DriftError("a series needs matching one-dimensional dates and errors, "
                         "at least two of each")
    step = float(jd[1] - jd[0])
    run = _Running(len(jd), float(jd[0]), step, 0.0, threshold_deg)
    run.add(0, np.arange(len(jd), dtype=float), err, unwrap_deg(err))
    return run.summary(name, shows, terms, frame=frame)


def fit_drift(resid: np.ndarray, step_days: float, terms=(), *, cache: dict | None = None,
              all_terms=(), known=None, sizes: dict[str, float] | None = None) -> LineFit:
    """The drift line fitted jointly with the sky's known swings ``terms`` (see
    :func:`engine.fitting.fit_line_and_sinusoids`): a term is fitted once the span holds
    ``TERM_MIN_CYCLES`` of its periods, and a left-out one of ``MINOR_TERMS`` widens the
    slope's standard error by its largest possible tilt; any other left out for being longer
    than the span widens it by the largest tilt a swing of the size fitted to it can give.
    A term of ``MINOR_TERMS`` over fewer than ``TERM_SURE_CYCLES`` of its periods is fitted
    on trial (see the comment on ``MINOR_TERMS``): refused when its fitted amplitude is
    implausible, else kept with its amplitude's spread (``MINOR_SPREAD``) in the ±.
    ``sizes``: the pointer kind's other terms of known amplitude (``PointerKind.sizes``: an
    equation of centre), put on trial alike; refused, the term is left out (the drift then
    uncertain), else kept. ``known``: a part of the series known in advance (a function of
    the grid index; the nutation), taken off before the fit."""
    return fit_line_and_sinusoids(resid, step_days, terms, cache=cache, all_terms=all_terms,
                                  min_cycles=TERM_MIN_CYCLES, minor=MINOR_TERMS, known=known,
                                  sure_cycles=TERM_SURE_CYCLES, slack=TERM_AMPLITUDE_SLACK,
                                  spread=MINOR_SPREAD, sized=sizes)


# --- the run -------------------------------------------------------------------------------

def grid(jd_start: float, jd_end: float, step_days: float, *, include_end: bool = False) -> int:
    """How many dates ``jd_start + k * step_days`` lie in [jd_start, jd_end] — or, with
    ``include_end``, up to the first grid date at or after ``jd_end`` (so the span covers
    the end date; the last date passes it by less than a step)."""
    if not (math.isfinite(jd_start) and math.isfinite(jd_end)):
        raise DriftError("the span's dates must be finite")
    if jd_end <= jd_start:
        raise DriftError("the span ends before it starts: the end date must be after the "
                         "start date")
    step = parse_step(step_days)
    if step > (jd_end - jd_start) * (1 + 1e-12):
        raise DriftError(f"step {step:g} d is longer than the span "
                         f"({jd_end - jd_start:g} d): use a shorter step")
    steps = (jd_end - jd_start) / step
    n = int(math.ceil(steps - 1e-9) if include_end else math.floor(steps + 1e-9)) + 1
    if n < 2:
        raise DriftError(f"step {step:g} d is longer than the span "
                         f"({jd_end - jd_start:g} d): use a shorter step")
    if n > MAX_DATES:
        raise DriftError(f"{n:,} dates is too many (at most {MAX_DATES:,}): use a longer "
                         "step or a shorter span")
    return n


#: Seen from a place on the Earth rather than its centre, the Moon's parallax (up to about a
#: degree) swings its longitude once for each turn of the Earth under it: a sidereal day
#: (0.99726957 d) against the sidereal month, 1.0350 days (from memory).
DAILY_PARALLAX = ("daily parallax seen from the site",
                  1.0 / (1.0 / 0.99726957 - 1.0 / PERIODS["sidereal_month"].days))


def step_note(name: str, step: float, motions) -> str | None:
    """One line when a grid ``step`` (days) cannot follow the fastest of ``motions``
    (``(what, period_days)`` pairs): a sampled motion is seen only when the step is at most
    half its period (the sampling limit). ``None`` when it can."""
    what, period = min(motions, key=lambda m: m[1], default=("", math.inf))
    if not step > period / 2:
        return None
    what = what if what.startswith("the ") else f"the sky's {what}"  # not "the sky's the …"
    advice = (f"use a step under {_days_text(period / 2)}" if period / 2 >= MIN_STEP_DAYS else
              # a pointer on a motor-fast arbor: the finest step cannot follow it either
              f"no step can follow it (the finest is {_days_text(MIN_STEP_DAYS)})")
    return (f"pointer '{name}': a step of {_days_text(step)} cannot follow {what}, "
            f"every {_days_text(period)}; the errors between the dates are not seen and no swing is "
            f"sought: {advice}")


def _days_text(days: float) -> str:
    """``365.2 days``, ``1 day``, ``12.4 hours``, ``59 seconds``: the unit that suits it."""
    if days < 1:
        size, unit = ((1 / 24, "hour") if days >= 1 / 24 else
                      (1 / 1440, "minute") if days >= 1 / 1440 else (1 / 86400, "second"))
        text = f"{days / size:.3g}"
        return f"{text} {unit}" + ("" if text == "1" else "s")
    text = f"{days:.4g}"
    return f"{text} day" if text == "1" else f"{text} days"


def _span(sky, jd_start: float, jd_end: float, step: float, frame: str, site,
          include_end: bool) -> int:
    """How many grid dates a run has, checked against the sky first: the span (saying how much
    lies outside the ephemeris), the site, and with ``include_end`` whether the ephemeris
    reaches the first grid date at or after ``jd_end`` (else the run stops before it)."""
    n = grid(jd_start, jd_end, step)
    if hasattr(sky, "check_span"):
        sky.check_span(jd_start, jd_start + (n - 1) * step)
    sky.at(np.array([jd_start, jd_start + (n - 1) * step]), frame=frame, site=site)
    if include_end:
        n_end = grid(jd_start, jd_end, step, include_end=True)
        if n_end > n:
            try:
                sky.at(np.array([jd_start + (n_end - 1) * step]), frame=frame, site=site)
                n = n_end
            except WheelworkError:  # past the ephemeris' end: keep the date before jd_end
                pass
    return n


def _thresholds(pointers, threshold_deg) -> dict[str, float | None]:
    """``{pointer: degrees or None}`` from one value for all or a dict, each checked."""
    if not isinstance(threshold_deg, dict):
        threshold_deg = {name: threshold_deg for name in pointers}
    unknown = [name for name in threshold_deg if name not in pointers]
    if unknown:
        raise DriftError(f"threshold for pointer {unknown[0]!r}: the train has no such pointer "
                         f"(its pointers: {', '.join(pointers)})")
    out = {}
    for name in pointers:
        thr = threshold_deg.get(name)
        if thr is not None and (isinstance(thr, bool) or not isinstance(thr, (int, float))
                                or not (math.isfinite(thr) and thr > 0)):
            raise DriftError(f"threshold {thr!r}° for pointer '{name}': it must be a "
                             "positive number of degrees")
        out[name] = thr
    return out


class _Chunks:
    """One run's state, fed a chunk of the grid at a time: the train's reader, each pointer's
    running figures (:class:`_Running`) and, with ``keep_series``, the readings kept.

    Each chunk's error is taken less the line expected from the mean rates, then the short way
    round from the first date's value: its unwrapped form (see the module docstring)."""

    def __init__(self, mech, jd0: float, n: int, step: float, frame: str,
                 thresholds: dict[str, float | None], keep_series: bool, site=None):
        readout = mech.readout
        self.pointers = dict(mech.train.pointers)
        self.names = list(self.pointers)
        self.jd0, self.n, self.step, self.frame = jd0, n, step, frame
        self.site = site
        self.reader = _GridReader(readout)
        self.turns_per_step = step / self.reader.days_per_turn
        self.expected = {name: _expected_deg_per_day(readout, name, frame) * step
                         for name in self.pointers}
        self.x = np.array([self.expected[name] for name in self.names])
        # every pointer's stored series, one row each (a row is the pointer's own array)
        self.error = np.empty((len(self.names), n), np.float32)
        self.resid = np.empty((len(self.names), n), np.float32)
        self.runs = {name: _Running(n, jd0, step, self.expected[name], thresholds[name],
                                    error=self.error[p], resid=self.resid[p])
                     for p, name in enumerate(self.names)}
        keep = keep_series
        self.train_keep = {name: np.empty(n, np.float32) for name in self.pointers} if keep else {}
        self.sky_keep = {name: np.empty(n, np.float32) for name in self.pointers} if keep else {}
        self.ref: np.ndarray | None = None  # each pointer's first wrapped value
        # the sky's mean motion and the expected line at the steps of a chunk, one row a
        # pointer, and two work arrays of that shape: made once a run (see add)
        self.motion = self.work = None
        self.anchors: dict[int, tuple] = {}
        self.delta_t_sigma_s = 0.0  # largest one-sigma ΔT uncertainty met on the grid
        self.clock: dict[str, float] = {}  # seconds of the summaries' fits and swing searches

    def plan(self, starts: list[int]) -> None:
        """Read the train exactly at the first date of each chunk (grid indices ``starts``)
        at once, rather than chunk by chunk."""
        jd = np.array([self.jd0 + (0.0 + i0) * self.step for i0 in starts])
        self.anchors = dict(zip(starts, self.reader.anchors(jd), strict=True))

    def add(self, i0: int, j: np.ndarray, jd: np.ndarray, state, want_errors: bool,
            true: dict[str, np.ndarray] | None = None) -> dict[str, ErrorNow]:
        """Take in the chunk of grid dates ``i0 + j`` (``j`` = 0, 1, ...; ``jd``) with the sky
        ``state`` there (``true``: each pointer's true value from it, when already read); the
        chunk's :class:`ErrorNow` values when ``want_errors``.

        The unwrapped error less the expected line and less its first value's wrap ``ref`` is
        worked out directly: the pointer's reading less the expected line is the sky's mean
        motion a step times the steps since the chunk's start (made once a run), plus the
        exact reading there less the line, plus the pin-and-slot leads, less the sky's value,
        taken the short way round. The error is that plus the line and ``ref``, wrapped only
        when the chunk's extremes reach a half turn. Every pointer is one row of the same
        arrays, so each step is one numpy call for all of them; the error is stored (single
        precision) as it is made, and its sum and sum of squares about the chunk's first
        expected value are taken on the way (see :class:`_Running`)."""
        sigma = state.delta_t_sigma_s
        self.delta_t_sigma_s = max(self.delta_t_sigma_s, float(np.max(sigma)))
        size = len(j)
        since = j * self.turns_per_step
        a, base = self.anchors.get(i0) or self.reader.anchor(jd[0])
        lags = self.reader.lags_turns(a, since)
        last = i0 + size - 1
        x = self.x
        if self.work is None or self.work.shape[2] < size:
            rates = np.array([self.reader.pointers[name][1] for name in self.names])
            self.motion = (rates * self.turns_per_step - x)[:, None]  # a step, each pointer
            self.work = np.empty((2, len(self.names), size))
        v, t = self.work[0, :, :size], self.work[1, :, :size]
        first = self.ref is None
        ref = np.zeros(len(x)) if first else self.ref
        const = np.array([base[name] for name in self.names]) - x * i0 - ref
        np.multiply(j[None, :], self.motion, out=v)
        v += const[:, None]
        skies = []
        turned: dict[tuple[str, float], np.ndarray] = {}  # a stage's lead in degrees, once
        for p, (name, pointer) in enumerate(self.pointers.items()):
            sky = true_value(pointer.shows, state) if true is None else true[name]
            skies.append(sky)
            row = v[p]
            row -= sky
            for sname, w in self.reader.pointers[name][3]:
                if (sname, w) not in turned:
                    turned[sname, w] = w * lags[sname]
                row += turned[sname, w]
        if first:  # the first date's wrapped value: the unwrapping's centre
            ref = self.ref = np.array(wrap_deg(v[:, 0]), dtype=float)
            v -= ref[:, None]
        # the short way round from ref (the sky's value turns over)
        np.multiply(v, 1 / 360, out=t)
        np.rint(t, out=t)
        t *= 360.0
        v -= t
        # the error: v plus the line x k and ref, kappa = ref + x i0 at the chunk's start;
        # wrapped only where it may pass a half turn
        kappa = ref + x * i0
        ends = ref + x * last
        lo = v.min(axis=1) + np.minimum(kappa, ends)
        hi = v.max(axis=1) + np.maximum(kappa, ends)
        bounds = np.maximum(-lo, hi)
        np.multiply(j[None, :], x[:, None], out=t)  # the line
        t += v  # the error less kappa
        s1 = t.sum(axis=1)
        s2 = np.einsum("ij,ij->i", t, t)
        t += kappa[:, None]  # the error
        v += ref[:, None]
        self.resid[:, i0:i0 + size] = v
        store = self.error[:, i0:i0 + size]
        store[...] = t
        errors = {}
        for p, (name, pointer) in enumerate(self.pointers.items()):
            row, k = t[p], float(kappa[p])
            if bounds[p] >= 179.0:
                row[:] = wrap_deg(row)
                store[p] = row
                k, bound, lo_p, hi_p = 0.0, None, None, None  # the sums of the wrapped error
                s1[p], s2[p] = row.sum(), sum_sq(row)
            else:
                bound, lo_p, hi_p = float(bounds[p]), float(lo[p]), float(hi[p])
            self.runs[name].take(i0, size, lambda row=row: row, float(row[-1]), k, float(s1[p]),
                                 float(s2[p]), lo_p, hi_p, bound)
            if self.train_keep or want_errors:
                cont = self.reader.continuous_deg(name, base, since, lags)
                reading = cont - 360.0 * np.floor(cont * (1 / 360))
                if self.train_keep:
                    self.train_keep[name][i0:i0 + size] = reading
                    self.sky_keep[name][i0:i0 + size] = skies[p]
                if want_errors:
                    rate = days_rate(pointer.shows)
                    e = row.copy()  # the work rows are used again next chunk
                    days = e / rate if rate else None
                    errors[name] = ErrorNow(name, pointer.shows, reading, skies[p], e, days,
                                            delta_t_effect_deg(pointer.shows, sigma,
                                                               self.frame))
        return errors

    def summaries(self) -> dict[str, PointerSummary]:
        """Every pointer's summary; the fit's design is built once for the whole run."""
        terms = {name: sky_terms(p.shows, self.frame) for name, p in self.pointers.items()}
        cache: dict = {"terms": tuple({t for ts in terms.values() for t in ts})}
        out = {}
        self.clock = {"fit_s": 0.0, "swing_s": 0.0}
        for name, p in self.pointers.items():
            s = self.runs[name].summary(
                name, p.shows, terms[name], cache,
                step_note(name, self.step, self.motions(name, p.shows, terms[name])),
                self.clock, self.frame, uniform=not self.reader.pointers[name][3])
            effect = float(delta_t_effect_deg(p.shows, self.delta_t_sigma_s, self.frame))
            out[name] = replace(s, delta_t_effect_deg=effect,
                                within_delta_t=bool(s.max_abs_deg <= effect))
            if p.shows == "cycle":
                whole = whole_months_off(self.reader.readout, name, self.frame,
                                         self.jd0 + np.arange(self.n) * self.step,
                                         self.runs[name].error)
                out[name] = replace(out[name], months_off_end=int(whole[-1]),
                                    months_off_least=int(whole.min()),
                                    months_off_most=int(whole.max()))
        return out

    def motions(self, name: str, shows: str, terms) -> list[tuple[str, float]]:
        """``(what, period_days)`` of the motions a pointer's error is made of: the sky's
        swings in what it shows, the sky's own mean turning, and the pointer's turning."""
        out = list(terms)
        if shows in KINDS:
            out.append((f"the {shows}'s mean motion", KINDS[shows].mean_period(self.frame).days))
            if self.site is not None and MOON_SWINGS[0] in KINDS[shows].swings:
                out.append(DAILY_PARALLAX)  # seen from a place, the Moon swings once a day
        out.append(("the pointer's own turning", self.reader.readout.period_days(name)))
        return out

    def result(self, summaries: dict[str, PointerSummary], sky_name: str,
               timings: dict[str, float]) -> DriftResult:
        error = {name: r.error for name, r in self.runs.items()}
        days = {name: error[name] / np.float32(days_rate(p.shows))
                for name, p in self.pointers.items() if days_rate(p.shows)}
        return DriftResult(jd=self.jd0 + np.arange(self.n) * self.step,
                           train_deg=self.train_keep, sky_deg=self.sky_keep, error_deg=error,
                           error_days=days, summaries=summaries, frame=self.frame,
                           step_days=self.step, sky_name=sky_name, timings=timings,
                           delta_t_sigma_s=self.delta_t_sigma_s)


@dataclass(frozen=True)
class DriftRun:
    """What a drift run asks: the grid of dates, the dial, the observer and the threshold.

    ``start``, ``end``: UT Julian dates or date text (:func:`engine.dates.parse_date`); the
    grid is ``start + k * step`` up to ``end``. ``step``: days, or text for :func:`parse_step`
    (``"6h"``, ``"1d"``, ``"1y"``). ``frame``: the dial frame (default: the train's own dial).
    ``site``: an :class:`engine.sky.Site` or ``"LAT,LON[,H]"`` (default: the Earth's centre).
    ``threshold_deg``: one value for every pointer, or ``{pointer: deg}`` (the first date
    past it is reported). ``include_end``: run on to the first grid date at or after ``end``
    (see :func:`grid`) when the ephemeris reaches it, else stop at the last one before it.
    """

    start: float | str
    end: float | str
    step: float | str = "1d"
    frame: str | None = None
    site: Site | str | None = None
    threshold_deg: float | Mapping[str, float | None] | None = None
    include_end: bool = False


@dataclass(frozen=True)
class RunControl:
    """How a drift run is carried out and watched; no figure depends on it.

    ``chunk``: dates computed at a time (memory against speed). ``keep_series``: keep the
    train's and the sky's readings over the whole span (``DriftResult.train_deg``/``sky_deg``,
    8 bytes a date per pointer), not only the errors. ``progress(f)`` is called after each
    chunk with the fraction done; ``cancel()`` is asked before each chunk, and a true answer
    raises :class:`DriftCancelled`; ``on_chunk(jd, errors)`` receives each chunk's dates and
    :class:`ErrorNow` values (float64) as they are made, e.g. to stream them to a file.
    """

    chunk: int = 20_000
    keep_series: bool = True
    progress: Callable[[float], None] | None = None
    cancel: Callable[[], bool] | None = None
    on_chunk: Callable[[np.ndarray, dict[str, ErrorNow]], None] | None = None


def drift_series(mech, sky, run: DriftRun, control: RunControl | None = None) -> DriftResult:
    """Every pointer's error on the grid of dates ``run`` asks for (UT), run as ``control``
    says (default :class:`RunControl`: 20,000 dates a chunk, the readings kept)."""
    if not isinstance(run, DriftRun):
        raise TypeError("drift_series(mech, sky, run) wants a DriftRun as run, e.g. "
                        "DriftRun('2030-01-01', '2031-01-01', '1d'); got "
                        f"{type(run).__name__}")
    need_mechanism(mech, "drift_series")
    need_sky(sky, "drift_series")
    control = control or RunControl()
    frame = run.frame or mech.train.dial
    site = _site(run.site)
    step = parse_step(run.step)
    jd0 = float(as_jd(run.start, "drift start"))
    n = _span(sky, jd0, float(as_jd(run.end, "drift end")), step, frame, site, run.include_end)
    chunks = _Chunks(mech, jd0, n, step, frame,
                     _thresholds(mech.train.pointers, run.threshold_deg), control.keep_series,
                     site)
    shows = [p.shows for p in chunks.pointers.values()]
    size = max(2, int(control.chunk))
    j_full = np.arange(min(size, n), dtype=float)
    sky_s = outside_s = 0.0
    t_start = time.perf_counter()
    chunks.plan(list(range(0, n, size)))
    for i0 in range(0, n, size):
        if control.cancel is not None and control.cancel():
            raise DriftCancelled(f"drift run stopped after {i0:,} of {n:,} dates")
        j = j_full[:min(size, n - i0)]
        jd = jd0 + (j + i0) * step
        t = time.perf_counter()
        state = sky_at(sky, jd, shows, frame=frame, site=site)
        # the true values and ΔT's uncertainty are the sky's own: its derived fields
        # (elongation, mean node and perigee, ΔT's sigma) are worked out on their first read
        true = {name: true_value(p.shows, state) for name, p in chunks.pointers.items()}
        state.delta_t_sigma_s  # noqa: B018 (read here so that it is timed as the sky's)
        sky_s += time.perf_counter() - t
        errors = chunks.add(i0, j, jd, state, control.on_chunk is not None, true)
        t = time.perf_counter()
        if control.on_chunk is not None:
            control.on_chunk(jd, errors)
        if control.progress is not None:
            control.progress(min(1.0, (i0 + len(j)) / n))
        outside_s += time.perf_counter() - t
    t = time.perf_counter()
    summaries = chunks.summaries()
    summaries_s = time.perf_counter() - t
    total = time.perf_counter() - t_start
    return chunks.result(summaries, getattr(sky, "name", ""),
                         {"sky_s": sky_s, "engine_s": total - sky_s - outside_s,
                          "summaries_s": summaries_s, **chunks.clock,
                          "callbacks_s": outside_s, "total_s": total})
