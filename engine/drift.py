"""Drift: how far each pointer of a train strays from the true sky over a span of dates.

Two entry points:

* :func:`pointer_errors` — the error of every pointer at some dates (any array shape): the
  train's reading, the sky's value, their difference wrapped to ±180°, and for a phase pointer
  the same difference in days. It reads the train through :class:`engine.readout.Readout`
  itself, so an interface showing it shows exactly what the readout shows.
* :func:`drift_series` — the same on a uniform grid of dates over a span, processed in chunks,
  with a :class:`PointerSummary` of each pointer: largest error and when, RMS, secular drift
  rate, the periodic part left after the drift, the first date past a threshold, and the best
  constant re-setting.

Method (all angles in degrees):

* error = train - sky, wrapped to [-180, 180); phase error in days = error / (360° / mean
  synodic month), the elongation's mean daily gain (``engine.periods``).
* Secular drift: a straight line fitted by least squares to the unwrapped error. The error is
  unwrapped about the line expected from the mean rates (train rate minus the mean motion of
  what it shows): the difference from that line is the true sky's own irregularity plus the
  setting, a few degrees, so it is taken the short way round from its first value. This is
  ``np.unwrap`` whenever the grid is fine enough for it, and stays right for coarse steps
  (a year) too. The stored residual is small in magnitude, so float32 keeps it well.
* Periodic part: the residual about the fitted line, on the uniform grid, is Hann-windowed and
  Fourier transformed (averaged in bins first when longer than ``FFT_MAX_POINTS``); the
  strongest bin (periods up to half the span) is refined by parabolic interpolation of the log
  magnitude, and the amplitude is the least-squares sinusoid at that frequency over the full
  series (so it does not depend on where the peak falls between bins).
* First crossing: the first grid date where |error| reaches the threshold, refined by linear
  interpolation from the date before (the span's start if the first date is already past).
* Best re-setting: the constant ``c`` minimising the RMS of wrap(error - c): started from the
  circular mean, then refined by ``c += mean(wrap(error - c))`` (the exact minimiser when no
  error crosses the half turn opposite ``c``). Turning the pointer back by ``c`` leaves
  ``rms_after_reset_deg``.

Memory: the grid is walked in chunks (``chunk`` dates at a time: one sky computation, the
train's readings, the errors); running sums give the maxima, RMS, fit and threshold. What must
be kept for the whole span is two float32 series per pointer (wrapped error and the residual
about the expected line, 8 bytes a date each) plus the dates (float64); the train and sky
readings are kept as float32 only with ``keep_series=True`` (another 8 bytes a date per
pointer). A 1000-year span at one-day steps with five pointers keeps about 18 MB; an
``on_chunk`` callback can stream everything (e.g. into a CSV file) without keeping it.

Speed: on a uniform grid the train is read chunk by chunk from one exact reading at the
chunk's first date (:func:`engine.exact.turns_mod1`) plus the pointer's float rate times the
turns since then — the same sums as :class:`engine.readout.Readout`, equal to it within 1e-5°
(0.04 arcsecond; single-precision pin-and-slot geometry, checked in ``tests/test_drift.py``),
without exact integer work at every date. 219,000 dates cost about a tenth of the sky's time.
"""

from __future__ import annotations

import functools
import math
import re
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from engine.errors import WheelworkError
from engine.exact import turns_mod1
from engine.periods import JULIAN_CENTURY_DAYS, PERIODS, POINTER_PERIOD

PHASE_DEG_PER_DAY = PERIODS["synodic_month"].deg_per_day  # mean daily gain of elongation
YEAR_DAYS = 365.25  # the Julian year, for steps and spans written in years
MAX_DATES = 50_000_000  # beyond this the kept series alone pass ~2 GB: refuse, name a step


class DriftError(WheelworkError):
    """A drift run that cannot be done: bad step, empty or reversed span, too many dates."""


class DriftCancelled(Exception):  # noqa: N818 - it is a request, not a fault
    """Raised between chunks when the ``cancel`` callback asks to stop."""


# --- steps ---------------------------------------------------------------------------------

_STEP_UNITS = {
    "s": 1 / 86400, "sec": 1 / 86400, "second": 1 / 86400, "seconds": 1 / 86400,
    "m": 1 / 1440, "min": 1 / 1440, "minute": 1 / 1440, "minutes": 1 / 1440,
    "h": 1 / 24, "hr": 1 / 24, "hour": 1 / 24, "hours": 1 / 24,
    "d": 1.0, "day": 1.0, "days": 1.0,
    "w": 7.0, "week": 7.0, "weeks": 7.0,
    "y": YEAR_DAYS, "yr": YEAR_DAYS, "year": YEAR_DAYS, "years": YEAR_DAYS,
}
_STEP = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*([a-z]*)\s*$", re.IGNORECASE)
MIN_STEP_DAYS = 1 / 86400


def parse_step(text: str | float) -> float:
    """Days in a step written ``6h``, ``30m`` (minutes), ``1d``, ``2.5d``, ``2w``, ``1y``
    (365.25 days) or ``90s``; a bare number is days. Raises :class:`DriftError`."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        days = float(text)
    else:
        m = _STEP.match(str(text))
        unit = m.group(2).lower() if m else ""
        if not m or (unit and unit not in _STEP_UNITS):
            raise DriftError(f"cannot read step {text!r}: write a number and a unit, "
                             "e.g. 30m, 6h, 1d, 2.5d, 2w or 1y (a bare number is days)")
        days = float(m.group(1)) * _STEP_UNITS.get(unit, 1.0)
    if not math.isfinite(days) or days < MIN_STEP_DAYS:
        raise DriftError(f"step {text!r} is too small: it must be at least one second")
    return days


# --- small helpers -------------------------------------------------------------------------

def wrap_deg(x):
    """Angles wrapped to [-180, 180] degrees (any shape; float32 stays float32).

    ``x - 360 rint(x / 360)``: ten times faster than ``np.mod``; exactly ±180 may come out as
    either sign (rint rounds halves to even)."""
    x = np.asarray(x)
    turns = np.rint(x * (1 / 360))
    return x - turns * 360


def unwrap_deg(x: np.ndarray) -> np.ndarray:
    """Degrees made continuous along the last axis (each step taken the shortest way round)."""
    return np.unwrap(np.asarray(x, dtype=float), period=360.0)


def _expected_deg_per_day(readout, name: str, frame: str) -> float:
    """Mean rate of the pointer's error from the mean motions: train rate minus sky rate."""
    p = readout.train.pointers[name]
    return readout.deg_per_day(name) - PERIODS[POINTER_PERIOD[p.shows][frame]].deg_per_day


def _site(site):
    if site is None or not isinstance(site, str):
        return site
    from engine.sky import Site

    return Site.parse(site)


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


def pointer_errors(mech, sky, jd_ut, *, frame: str | None = None, site=None,
                   readout=None) -> dict[str, ErrorNow]:
    """Every pointer's reading, the true sky, and the error, at UT Julian dates (any shape).

    ``frame`` defaults to the train's dial; ``site`` is an :class:`engine.sky.Site` or
    ``"LAT,LON[,H]"``; ``readout`` (default ``mech.readout``) lets a re-set train be compared.
    """
    readout = readout or mech.readout
    frame = frame or mech.train.dial
    jd = np.asarray(jd_ut, dtype=float)
    state = sky.at(jd, frame=frame, site=_site(site))
    reading = readout.read_deg(readout.turns_at(jd))
    out = {}
    for name, p in mech.train.pointers.items():
        train = np.reshape(reading[name], jd.shape)
        true = np.reshape(state.kind(p.shows), jd.shape)
        err = wrap_deg(train - true)
        days = err / PHASE_DEG_PER_DAY if p.shows == "phase" else None
        out[name] = ErrorNow(name, p.shows, train, true, err, days)
    return out


class _GridReader:
    """Readings of every pointer over a chunk of dates, anchored at the chunk's first date.

    The sums are those of ``Readout.read_deg`` and ``Kinematics.slot_lags_turns``: exact whole
    turns at the anchor (:func:`engine.exact.turns_mod1`), then the float rate times the turns
    since the anchor. The pin-and-slot lead is the same plane geometry written directly as the
    lead, ``atan2(e sin t, 1 - e cos t)`` (rotate ``(cos t - e, sin t)`` back by ``t``), in single
    precision: the lead is at most ``asin(e)``, so its rounding stays below 1e-5°.
    """

    def __init__(self, readout):
        kin = readout.kin
        train = readout.train
        self.readout = readout
        self.days_per_turn = float(train.crank.days_per_turn)
        self.slots = []
        for sname in kin.slot_order:
            ps = train.pin_slots[sname]
            rel = kin.linear_of(ps.pin_arbor) - kin.linear_of(train.arbors[ps.pin_arbor].mount)
            weights = tuple((other, float(w)) for other, w in zip(kin.slot_names, rel.slots,
                                                                  strict=True) if w)
            self.slots.append((sname, rel.crank, float(rel.crank), ps.pin_deg / 360.0,
                               np.float32(ps.offset_mm / ps.pin_radius_mm), weights))
        self.pointers = {}
        for name, m in readout.motions.items():
            weights = tuple((s, 360.0 * float(w)) for s, w in zip(kin.slot_names, m.lin.slots,
                                                                  strict=True) if w)
            self.pointers[name] = (m.lin.crank, 360.0 * float(m.lin.crank), m.offset_turns,
                                   weights)

    def anchor(self, jd_first: float):
        """Turns at the chunk's first date, and each pointer's exact reading there (degrees)."""
        a = self.readout.turns_at(jd_first)
        base = {name: 360.0 * (float(turns_mod1(rate, a)) + offset)
                for name, (rate, _, offset, _) in self.pointers.items()}
        return a, base

    def lags_turns(self, a, since: np.ndarray) -> dict[str, np.ndarray]:
        lags: dict[str, np.ndarray] = {}
        for sname, rate, rate_f, pin0, ratio, weights in self.slots:
            pin = rate_f * since
            pin += float(turns_mod1(rate, a)) + pin0
            for other, w in weights:
                if other in lags:
                    pin += w * lags[other]
            pin -= np.floor(pin)
            t = (pin * (2 * np.pi)).astype(np.float32)
            lead = np.arctan2(ratio * np.sin(t), 1 - ratio * np.cos(t))
            lags[sname] = lead.astype(float) * (1 / (2 * np.pi))
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

    ``drift_deg_per_century``: slope of the least-squares line through the unwrapped error.
    ``periodic_amplitude_deg`` / ``periodic_period_days``: the strongest sinusoid left once that
    line is removed (``None`` period when the span is too short to show one).
    ``first_crossing_jd``: first date |error| reaches ``threshold_deg`` (``None``: never, or no
    threshold). ``best_offset_deg``: the constant error that re-setting should take out (turn
    the pointer back by it); ``rms_after_reset_deg`` is what remains. ``max_abs_days``,
    ``rms_days`` and ``threshold_days`` are for phase pointers only.
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

    def to_dict(self) -> dict:
        return {k: (None if isinstance(v, float) and not math.isfinite(v) else v)
                for k, v in self.__dict__.items()}


@dataclass
class DriftResult:
    """A drift run: the grid ``jd`` (UT), per-pointer series and summaries.

    ``error_deg`` (float32, wrapped to ±180°) is always kept; ``train_deg`` and ``sky_deg``
    (float32) only with ``keep_series=True`` (else empty dicts); ``error_days`` for phase
    pointers. ``timings`` holds seconds spent in the sky (``sky_s``) and in the rest of the
    run (``engine_s``: train readings, errors, summaries).
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

    def summaries_dict(self) -> dict[str, dict]:
        return {name: s.to_dict() for name, s in self.summaries.items()}


class _Running:
    """Running figures of one pointer's error over the chunks of a uniform grid.

    ``add`` takes a chunk's wrapped error ``err`` and ``resid``, the unwrapped error less the
    expected line ``expected_per_step * k`` (k the grid index), both float64.
    """

    def __init__(self, n: int, jd0: float, step: float, expected_per_step: float,
                 threshold_deg: float | None):
        self.n = n
        self.error = np.empty(n, dtype=np.float32)
        self.resid = np.empty(n, dtype=np.float32)
        self.jd0, self.step = jd0, step
        self.expected_per_step = expected_per_step
        self.threshold = threshold_deg
        self.max_abs, self.max_at = -1.0, jd0
        self.sum_sq = 0.0
        self.s_r = self.s_kr = 0.0  # sums for the straight-line fit against the grid index
        self.prev_abs = None
        self.crossing = None

    def add(self, i0: int, k: np.ndarray, err: np.ndarray, resid: np.ndarray) -> None:
        n = len(err)
        ae = np.abs(err)
        i = int(np.argmax(ae))
        if ae[i] > self.max_abs:
            self.max_abs, self.max_at = float(ae[i]), self.jd0 + (i0 + i) * self.step
        self.sum_sq += float(np.dot(err, err))
        self.s_r += float(resid.sum())
        self.s_kr += float(np.dot(k, resid))
        self.error[i0:i0 + n] = err
        self.resid[i0:i0 + n] = resid
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
        self.prev_abs = float(ae[-1])

    def summary(self, name: str, shows: str) -> PointerSummary:
        n = self.n
        # least squares resid = a + b k over k = 0..n-1 (closed-form sums of the grid index)
        sk = n * (n - 1) / 2.0
        skk = (n - 1) * n * (2 * n - 1) / 6.0
        den = n * skk - sk * sk
        b = (n * self.s_kr - sk * self.s_r) / den if den > 0 else 0.0
        a = (self.s_r - b * sk) / n
        drift = (self.expected_per_step + b) / self.step * JULIAN_CENTURY_DAYS
        amp, period = periodic_part(self.resid, self.step, line=(a, b))
        offset, rms_after = best_offset(self.error)
        thr = self.threshold
        extra = {}
        if shows == "phase":
            g = PHASE_DEG_PER_DAY
            extra = {"max_abs_days": self.max_abs / g, "rms_days": math.sqrt(self.sum_sq / n) / g,
                     "threshold_days": None if thr is None else thr / g}
        return PointerSummary(
            pointer=name, shows=shows, max_abs_deg=self.max_abs, max_at_jd=self.max_at,
            rms_deg=math.sqrt(self.sum_sq / n), drift_deg_per_century=drift,
            periodic_amplitude_deg=amp, periodic_period_days=period,
            first_crossing_jd=self.crossing, threshold_deg=thr, best_offset_deg=offset,
            rms_after_reset_deg=rms_after, **extra)


def summarise(jd: np.ndarray, error_deg: np.ndarray, *, threshold_deg: float | None = None,
              name: str = "series", shows: str = "series") -> PointerSummary:
    """The summary figures of any error series on a uniform grid (degrees; ``np.unwrap``).

    The same arithmetic as :func:`drift_series` applies to each pointer, for series made
    elsewhere (and for tests on synthetic series)."""
    jd = np.asarray(jd, dtype=float)
    err = wrap_deg(np.asarray(error_deg, dtype=float))
    if jd.ndim != 1 or jd.shape != err.shape or len(jd) < 2:
        raise DriftError("a series needs matching one-dimensional dates and errors, "
                         "at least two of each")
    step = float(jd[1] - jd[0])
    run = _Running(len(jd), float(jd[0]), step, 0.0, threshold_deg)
    run.add(0, np.arange(len(jd), dtype=float), err, unwrap_deg(err))
    return run.summary(name, shows)


FFT_MAX_POINTS = 32_768  # longer residuals are averaged in bins of m dates before the FFT


@functools.lru_cache(maxsize=4)
def _hann(n: int) -> np.ndarray:
    return np.hanning(n).astype(np.float32)


def _next_fast_len(n: int) -> int:
    """Smallest 2-3-5-smooth length >= n (fast for the FFT)."""
    best = 1 << max(0, (n - 1).bit_length())
    p5 = 1
    while p5 < best:
        p35 = p5
        while p35 < best:
            m = p35
            while m < n:
                m *= 2
            best = min(best, m)
            p35 *= 3
        p5 *= 5
    return best


def periodic_part(resid: np.ndarray, step_days: float, *, line: tuple[float, float] | None = None,
                  ) -> tuple[float, float | None]:
    """Amplitude (units of ``resid``) and period (days) of the strongest sinusoid in a series on
    a uniform grid, after removing ``line = (a, b)``, i.e. ``a + b k`` (default: its own
    least-squares line). ``(0.0, None)`` when the series is too short or flat.

    Periods from twice the analysis step to half the span are searched: the analysis step is
    the grid step, or ``m`` steps averaged when the series is longer than ``FFT_MAX_POINTS``
    (so a run of 219,000 six-hour dates looks for periods of 3.5 days and more). The amplitude
    is then fitted at the full resolution.
    """
    y = np.asarray(resid, dtype=np.float32)
    n = len(y)
    if n < 16:
        return 0.0, None
    k = np.arange(n, dtype=np.float32)
    if line is None:
        b, a = np.polyfit(np.arange(n, dtype=float), y.astype(float), 1)
    else:
        a, b = line
    y = y - (np.float32(a) + np.float32(b) * k)
    if not np.any(y):
        return 0.0, None
    m = max(1, -(-n // FFT_MAX_POINTS))
    nd = n // m
    yd = y[:nd * m].reshape(nd, m).mean(axis=1, dtype=float).astype(np.float32)
    yd -= np.float32(yd.mean(dtype=float))
    nfft = _next_fast_len(nd)
    mag = np.abs(np.fft.rfft(yd * _hann(nd), nfft))
    lo = max(2, int(math.ceil(2.0 * nfft / nd)))  # periods shorter than half the span
    if lo >= len(mag) - 1:
        return 0.0, None
    j = lo + int(np.argmax(mag[lo:]))
    shift = 0.0
    if j + 1 < len(mag):
        la, lb, lc = np.log(mag[j - 1:j + 2].astype(float) + 1e-300)
        den = la - 2 * lb + lc
        shift = 0.5 * (la - lc) / den if den < 0 else 0.0
    cycles_per_step = (j + shift) / (nfft * m)
    if not 0 < cycles_per_step < 0.5:
        return 0.0, None
    amp = _sinusoid_amplitude(y, 2 * np.pi * cycles_per_step)
    return amp, step_days / cycles_per_step


def _sinusoid_amplitude(y: np.ndarray, w: float, block: int = 4096) -> float:
    """Amplitude of the least-squares ``p cos(w k) + q sin(w k)`` through ``y`` (k = 0..n-1).

    The sums against cos and sin are taken block by block (one table of ``block`` phases, each
    block turned by its start phase), and the normal matrix in closed form (geometric sums of
    ``exp(2iwk)``)."""
    n = len(y)
    block = min(block, n)
    nb = -(-n // block)
    pad = np.zeros(nb * block, dtype=np.float32)
    pad[:n] = y
    rows = pad.reshape(nb, block)
    ph = w * np.arange(block)
    c_tab, s_tab = np.cos(ph).astype(np.float32), np.sin(ph).astype(np.float32)
    zc, zs = rows @ c_tab, rows @ s_tab  # per block: sum y cos(w j), sum y sin(w j)
    start = w * block * np.arange(nb)
    cs, ss = np.cos(start), np.sin(start)
    # cos(w(kb + j)) = cos(w kb) cos(w j) - sin(w kb) sin(w j), and likewise for sin
    sc = float(np.dot(cs, zc) - np.dot(ss, zs))
    sn = float(np.dot(ss, zc) + np.dot(cs, zs))
    z = complex(math.cos(2 * w), math.sin(2 * w))
    geo = n if abs(z - 1) < 1e-12 else (1 - z ** n) / (1 - z)
    cc = n / 2 + geo.real / 2
    snn = n / 2 - geo.real / 2
    cn = geo.imag / 2
    det = cc * snn - cn * cn
    if det <= 1e-9 * n * n:
        return 0.0
    p = (snn * sc - cn * sn) / det
    q = (cc * sn - cn * sc) / det
    return float(math.hypot(p, q))


def best_offset(error_deg: np.ndarray) -> tuple[float, float]:
    """(offset, RMS after): the constant minimising the RMS of wrap(error - offset), in
    degrees; the offset is in [-180, 180)."""
    e = np.asarray(error_deg, dtype=np.float32)
    if e.size == 0:
        return 0.0, 0.0
    sample = e[:: max(1, e.size // 8192)].astype(float)
    rad = np.radians(sample)
    c = math.degrees(math.atan2(np.sin(rad).sum(), np.cos(rad).sum()))
    for _ in range(6):
        move = float(wrap_deg(e - np.float32(c)).mean(dtype=float))
        c += move
        if abs(move) < 1e-7:
            break
    left = wrap_deg(e - np.float32(c))
    return float(wrap_deg(c)), float(math.sqrt(float(np.dot(left, left)) / e.size))


# --- the run -------------------------------------------------------------------------------

def grid(jd_start: float, jd_end: float, step_days: float) -> int:
    """How many dates ``jd_start + k * step_days`` lie in [jd_start, jd_end]."""
    if not (math.isfinite(jd_start) and math.isfinite(jd_end)):
        raise DriftError("the span's dates must be finite")
    if jd_end <= jd_start:
        raise DriftError("the span ends before it starts: the end date must be after the "
                         "start date")
    step = parse_step(step_days)
    n = int(math.floor((jd_end - jd_start) / step + 1e-9)) + 1
    if n < 2:
        raise DriftError(f"step {step:g} d is longer than the span "
                         f"({jd_end - jd_start:g} d): use a shorter step")
    if n > MAX_DATES:
        raise DriftError(f"{n:,} dates is too many (at most {MAX_DATES:,}): use a longer "
                         "step or a shorter span")
    return n


def drift_series(mech, sky, jd_start: float, jd_end: float, step_days: float, *,
                 frame: str | None = None, site=None,
                 threshold_deg: float | dict[str, float | None] | None = None,
                 progress: Callable[[float], None] | None = None,
                 cancel: Callable[[], bool] | None = None, chunk: int = 20_000,
                 keep_series: bool = True, readout=None,
                 on_chunk: Callable[[np.ndarray, dict[str, ErrorNow]], None] | None = None,
                 ) -> DriftResult:
    """Every pointer's error on the grid ``jd_start + k * step_days`` up to ``jd_end`` (UT).

    ``step_days``: days, or text for :func:`parse_step`. ``threshold_deg``: one value for every
    pointer, or ``{pointer: deg}``. ``progress(f)`` is called after each chunk with the
    fraction done; ``cancel()`` is asked before each chunk, and a true answer raises
    :class:`DriftCancelled`. ``on_chunk(jd, errors)`` receives each chunk's dates and
    :class:`ErrorNow` values (float64) as they are made, e.g. to stream them to a file.
    """
    readout = readout or mech.readout
    frame = frame or mech.train.dial
    site = _site(site)
    step = parse_step(step_days)
    n = grid(float(jd_start), float(jd_end), step)
    chunk = max(2, int(chunk))
    jd0 = float(jd_start)
    sky.at(np.array([jd0, jd0 + (n - 1) * step]), frame=frame, site=site)  # span check first
    pointers = dict(mech.train.pointers)
    if not isinstance(threshold_deg, dict):
        threshold_deg = {name: threshold_deg for name in pointers}
    runs, expected = {}, {}
    for name in pointers:
        thr = threshold_deg.get(name)
        if thr is not None and not (math.isfinite(thr) and thr > 0):
            raise DriftError(f"threshold {thr!r}° for pointer '{name}': it must be a "
                             "positive number of degrees")
        expected[name] = _expected_deg_per_day(readout, name, frame) * step
        runs[name] = _Running(n, jd0, step, expected[name], thr)
    train_keep = {name: np.empty(n, np.float32) for name in pointers} if keep_series else {}
    sky_keep = {name: np.empty(n, np.float32) for name in pointers} if keep_series else {}
    reader = _GridReader(readout)
    turns_per_step = step / reader.days_per_turn
    ref: dict[str, float] = {}
    sky_s = outside_s = 0.0
    t_start = time.perf_counter()
    j_full = np.arange(min(chunk, n), dtype=float)
    for i0 in range(0, n, chunk):
        if cancel is not None and cancel():
            raise DriftCancelled(f"drift run stopped after {i0:,} of {n:,} dates")
        j = j_full[:min(chunk, n - i0)]
        k = j + i0
        jd = jd0 + k * step
        t = time.perf_counter()
        state = sky.at(jd, frame=frame, site=site)
        sky_s += time.perf_counter() - t
        since = j * turns_per_step
        a, base = reader.anchor(jd[0])
        lags = reader.lags_turns(a, since)
        errors = {}
        for name, p in pointers.items():
            true = state.kind(p.shows)
            # the error less the line expected from the mean rates, then taken the short way
            # round from the first date's value: its unwrapped form (see module docstring)
            cont = reader.continuous_deg(name, base, since, lags)
            x = expected[name]
            resid = cont - true
            resid -= x * k
            if name not in ref:
                ref[name] = float(wrap_deg(resid[0]))
            resid -= 360.0 * np.rint((resid - ref[name]) * (1 / 360))
            err = wrap_deg(resid + x * k)
            runs[name].add(i0, k, err, resid)
            if keep_series or on_chunk is not None:
                reading = cont - 360.0 * np.floor(cont * (1 / 360))
                if keep_series:
                    train_keep[name][i0:i0 + len(k)] = reading
                    sky_keep[name][i0:i0 + len(k)] = true
                if on_chunk is not None:
                    days = err / PHASE_DEG_PER_DAY if p.shows == "phase" else None
                    errors[name] = ErrorNow(name, p.shows, reading, true, err, days)
        t = time.perf_counter()
        if on_chunk is not None:
            on_chunk(jd, errors)
        if progress is not None:
            progress(min(1.0, (i0 + len(k)) / n))
        outside_s += time.perf_counter() - t
    t = time.perf_counter()
    summaries = {name: runs[name].summary(name, p.shows) for name, p in pointers.items()}
    summaries_s = time.perf_counter() - t
    total = time.perf_counter() - t_start
    error = {name: r.error for name, r in runs.items()}
    days = {name: error[name] / np.float32(PHASE_DEG_PER_DAY) for name, p in pointers.items()
            if p.shows == "phase"}
    return DriftResult(jd=jd0 + np.arange(n) * step, train_deg=train_keep, sky_deg=sky_keep,
                       error_deg=error, error_days=days, summaries=summaries, frame=frame,
                       step_days=step, sky_name=getattr(sky, "name", ""),
                       timings={"sky_s": sky_s, "engine_s": total - sky_s - outside_s,
                                "summaries_s": summaries_s, "callbacks_s": outside_s,
                                "total_s": total})
