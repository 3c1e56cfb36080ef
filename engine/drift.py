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
* Secular drift: a straight line fitted by least squares to the unwrapped error, jointly with
  sinusoids at the periods the sky is known to put into such errors (``SKY_TERMS``: for the
  Sun its equation of centre; for the Moon its equation of centre, evection, variation and
  the annual equation; the nutation on an equinox dial), each once the span holds a whole
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
  Fourier transformed (averaged in bins first when longer than ``FFT_MAX_POINTS``); the
  strongest bin (periods up to two thirds of the span) starts a local search for the
  frequency whose least-squares sinusoid leaves the least residual, and the amplitude is the
  least-squares sinusoid at that frequency over the full series.
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

from .errors import WheelworkError
from .exact import turns_mod1
from .kinds import KINDS, NUTATION, NUTATION_AMPLITUDE_DEG, sky_at, true_value
from .kinematics import pin_slot_lead_turns
from .periods import JULIAN_CENTURY_DAYS, PERIODS

PHASE_DEG_PER_DAY = PERIODS["synodic_month"].deg_per_day  # mean daily gain of elongation
YEAR_DAYS = 365.25  # the Julian year, for steps and spans written in years
MAX_DATES = 50_000_000  # beyond this the kept series alone pass ~2 GB: refuse, name a step

# The sky's own periodic inequalities (each kind's ``swings`` in engine.kinds) are fitted
# together with the drift line so that a short span's partial swing is not mistaken for drift.
# The nutation is fitted when the span allows, but being small it does not make a drift
# "uncertain" when left out: as a slope it is at most 17" x 2 pi / 18.6 years, 0.16° a century.
# Terms small enough not to make a drift "uncertain" when left out, with their amplitude:
# their largest possible tilt of the line is added to the slope's standard error instead
MINOR_TERMS: dict[str, float] = {NUTATION[0]: NUTATION_AMPLITUDE_DEG}
TERM_MIN_CYCLES = 1.0  # a term is fitted once the span holds this many of its periods


def sky_terms(shows: str, frame: str = "equinox") -> tuple[tuple[str, float], ...]:
    """The ``(name, period_days)`` inequalities fitted with the drift of a pointer of kind
    ``shows`` on a dial of ``frame`` (none for a series of no known kind)."""
    return KINDS[shows].swings_in(frame) if shows in KINDS else ()


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
    return readout.deg_per_day(name) - KINDS[p.shows].mean_period(frame).deg_per_day


def _site(site):
    if site is None or not isinstance(site, str):
        return site
    from .sky import Site

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
    shows = [p.shows for p in mech.train.pointers.values()]
    state = sky_at(sky, jd, shows, frame=frame, site=_site(site))
    reading = readout.read_deg(readout.turns_at(jd))
    out = {}
    for name, p in mech.train.pointers.items():
        train = np.reshape(reading[name], jd.shape)
        true = np.reshape(true_value(p.shows, state), jd.shape)
        err = wrap_deg(train - true)
        days = err / PHASE_DEG_PER_DAY if p.shows == "phase" else None
        out[name] = ErrorNow(name, p.shows, train, true, err, days)
    return out


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

    def anchor(self, jd_first: float):
        """Turns at the chunk's first date, and each pointer's exact reading there (degrees)."""
        a = self.readout.turns_at(jd_first)
        base = {name: 360.0 * (float(turns_mod1(rate, a)) + offset)
                for name, (rate, _, offset, _) in self.pointers.items()}
        return a, base

    def lags_turns(self, a, since: np.ndarray) -> dict[str, np.ndarray]:
        lags: dict[str, np.ndarray] = {}
        for sname, ps, moving in self.slots:
            angles = []
            for rate, rate_f, at0, weights in moving:
                x = rate_f * since
                x += float(turns_mod1(rate, a)) + at0
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
    fitted jointly with sinusoids at the sky's known periods (``SKY_TERMS``).
    ``periodic_amplitude_deg`` / ``periodic_period_days``: the strongest sinusoid left once that
    line is removed (``None`` period when the span is too short to show one).
    ``drift_sigma_deg_per_century``: standard error of that slope (see :func:`fit_drift`);
    ``drift_uncertain``: the span is too short for the drift to mean much — shorter than two
    periods of the strongest swing, or a known sky inequality (``drift_terms_left_out``) has a
    period longer than the span, so it could not be separated from the drift. ``drift_terms``
    names the sky inequalities fitted together with the line.
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
    drift_sigma_deg_per_century: float = float("nan")
    drift_uncertain: bool = False
    drift_terms: tuple[str, ...] = ()
    drift_terms_left_out: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {k: (None if isinstance(v, float) and not math.isfinite(v) else
                    list(v) if isinstance(v, tuple) else v)
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
        self.prev_abs = None
        self.crossing = None

    def add(self, i0: int, k: np.ndarray, err: np.ndarray, resid: np.ndarray) -> None:
        n = len(err)
        ae = np.abs(err)
        i = int(np.argmax(ae))
        if ae[i] > self.max_abs:
            self.max_abs, self.max_at = float(ae[i]), self.jd0 + (i0 + i) * self.step
        self.sum_sq += float(np.dot(err, err))
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

    def summary(self, name: str, shows: str, terms=None, cache: dict | None = None,
                ) -> PointerSummary:
        n = self.n
        terms = sky_terms(shows) if terms is None else tuple(terms)
        fit = fit_drift(self.resid, self.step, terms, cache=cache,
                        all_terms=() if cache is None else cache.get("terms", ()))
        drift = (self.expected_per_step + fit.slope_per_step) / self.step * JULIAN_CENTURY_DAYS
        sigma = fit.sigma_per_step / self.step * JULIAN_CENTURY_DAYS
        amp, period = periodic_part(self.resid, self.step, line=fit.line, binned=fit.binned)
        span = (n - 1) * self.step
        # a swing too small to print cannot tilt the line by much
        short = period is not None and span < 2.0 * period and amp >= 5e-5
        uncertain = (period is None or short
                     or any(t not in MINOR_TERMS for t in fit.left_out))
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
            rms_after_reset_deg=rms_after, drift_sigma_deg_per_century=sigma,
            drift_uncertain=uncertain, drift_terms=fit.used, drift_terms_left_out=fit.left_out,
            **extra)


def summarise(jd: np.ndarray, error_deg: np.ndarray, *, threshold_deg: float | None = None,
              name: str = "series", shows: str = "series",
              terms: tuple[tuple[str, float], ...] | None = None) -> PointerSummary:
    """The summary figures of any error series on a uniform grid (degrees; ``np.unwrap``).

    The same arithmetic as :func:`drift_series` applies to each pointer, for series made
    elsewhere (and for tests on synthetic series). ``terms``: ``(name, period_days)`` pairs
    fitted with the drift line; default :func:`sky_terms` of ``shows`` on an equinox dial
    (none for a plain series)."""
    jd = np.asarray(jd, dtype=float)
    err = wrap_deg(np.asarray(error_deg, dtype=float))
    if jd.ndim != 1 or jd.shape != err.shape or len(jd) < 2:
        raise DriftError("a series needs matching one-dimensional dates and errors, "
                         "at least two of each")
    step = float(jd[1] - jd[0])
    run = _Running(len(jd), float(jd[0]), step, 0.0, threshold_deg)
    run.add(0, np.arange(len(jd), dtype=float), err, unwrap_deg(err))
    return run.summary(name, shows, terms)


FFT_MAX_POINTS = 32_768  # longer residuals are averaged in bins of m dates before fit and FFT


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


@dataclass(frozen=True)
class _Binned:
    """A series averaged in bins of ``m`` grid steps: the means ``y`` (float64) and the grid
    index of each bin's centre ``c`` (a bin's mean of a line or of a sinusoid is the line, or
    the sinusoid times a constant, at the bin's centre: fits on the bins are exact for both)."""

    y: np.ndarray
    c: np.ndarray
    m: int


def _binned(resid: np.ndarray) -> _Binned:
    y = np.asarray(resid, dtype=np.float32)
    n = len(y)
    m = max(1, -(-n // FFT_MAX_POINTS))
    nd = n // m
    yd = y[:nd * m].reshape(nd, m).astype(float) @ np.full(m, 1.0 / m)
    return _Binned(yd, np.arange(nd) * float(m) + (m - 1) / 2.0, m)


@dataclass(frozen=True)
class DriftFit:
    """The joint least-squares fit of :func:`fit_drift`. ``line = (a, b)``: the fitted line
    ``a + b k`` in the grid index k; ``slope_per_step`` is ``b``, ``sigma_per_step`` its
    standard error; ``used`` / ``left_out`` name the periodic terms fitted and those whose
    period is longer than the span allows."""

    line: tuple[float, float]
    slope_per_step: float
    sigma_per_step: float
    used: tuple[str, ...]
    left_out: tuple[str, ...]
    binned: _Binned


def _phasor(c: np.ndarray, w: float, block: int = 1024) -> np.ndarray:
    """``exp(i w c)`` on an evenly spaced ``c``: one table of ``block`` phases turned by each
    block's start phase (a complex multiply a point instead of a cosine and a sine)."""
    n = len(c)
    dc = float(c[1] - c[0]) if n > 1 else 1.0
    nb = -(-n // block)
    tab = np.exp(1j * w * (c[0] + dc * np.arange(block)))
    start = np.exp(1j * w * dc * block * np.arange(nb))
    return (start[:, None] * tab[None, :]).reshape(-1)[:n]


def _design(b: _Binned, ws: tuple[float, ...], all_ws: tuple[float, ...], cache: dict | None):
    """The design [1, u, cos(w c), sin(w c)...] on the bins (u the centred, scaled index) for
    the frequencies ``all_ws`` and its normal matrix, built once a run (``cache``) for every
    pointer; then the columns of ``ws`` among them and the inverse of their normal matrix."""
    key = (len(b.y), b.m, all_ws)
    if cache is not None and key in cache:
        x, g, mid, half = cache[key]
    else:
        mid, half = (b.c[0] + b.c[-1]) / 2.0, max((b.c[-1] - b.c[0]) / 2.0, 1.0)
        x = np.empty((len(b.c), 2 + 2 * len(all_ws)))
        x[:, 0] = 1.0
        x[:, 1] = (b.c - mid) / half
        for i, w in enumerate(all_ws):
            z = _phasor(b.c, w)
            x[:, 2 + 2 * i], x[:, 3 + 2 * i] = z.real, z.imag
        g = x.T @ x  # columns of order one: a well-conditioned normal matrix
        if cache is not None:
            cache[key] = (x, g, mid, half)
    idx = [0, 1]
    for w in ws:
        i = all_ws.index(w)
        idx += [2 + 2 * i, 3 + 2 * i]
    return x, idx, np.linalg.inv(g[np.ix_(idx, idx)]), mid, half


def fit_drift(resid: np.ndarray, step_days: float, terms=(), *, cache: dict | None = None,
              all_terms=()) -> DriftFit:
    """Straight line plus sinusoids at known periods, fitted jointly by least squares to a
    series on a uniform grid (``terms``: ``(name, period_days)`` pairs).

    A term is fitted when the span holds at least ``TERM_MIN_CYCLES`` of its periods (a line
    and a sinusoid separate cleanly once a whole cycle is seen; over less they trade places);
    the others are returned in ``left_out`` (also those the grid cannot show, see ``fits``). The fit is made on the bins of
    ``FFT_MAX_POINTS`` (exact for these functions, see :class:`_Binned`). ``cache`` and
    ``all_terms`` (the terms of every pointer of a run) let the design be built once a run.

    The slope's standard error is the least-squares one with the residual's degrees of
    freedom counted from its sign changes (one independent value per change, plus one):
    the residual of a real series is smooth, not independent from date to date, and this
    counts a leftover swing of period P as one value per half period. A left-out term of
    ``MINOR_TERMS`` adds its largest possible tilt of the line. It is a guide to the size of
    the uncertainty, not a bound: other sky variations slower than the span are
    indistinguishable from drift and not in it.
    """
    b = _binned(resid)
    nd = len(b.y)
    span = (len(resid) - 1) * step_days

    def fits(period):
        """A whole period in the span, and on the bins a usable column: its frequency,
        aliased by the step if need be (the columns are the true sinusoid at the grid dates,
        so an aliased term is still fitted exactly), neither slower than a cycle a span nor
        within a cycle a span of the bins' Nyquist frequency; not averaged away by the bins."""
        if span < TERM_MIN_CYCLES * period:
            return False
        w = 2 * np.pi * step_days / period
        wb = (w * b.m) % (2 * np.pi)
        wb = min(wb, 2 * np.pi - wb)
        per_span = nd / (2 * np.pi)
        gain = 1.0 if b.m == 1 else abs(math.sin(b.m * w / 2) / (b.m * math.sin(w / 2)))
        return wb * per_span >= 1 and (np.pi - wb) * per_span >= 1 and gain > 0.05

    used = [name for name, period in terms if fits(period)]
    left = [name for name, period in terms if not fits(period)]
    ws = [2 * np.pi * step_days / p for _, p in terms if fits(p)]  # radians per grid step
    ncol = 2 + 2 * len(ws)
    if nd < ncol + 2:  # too few bins for the terms: the line alone
        used, left, ws, ncol = [], [*used, *left], [], 2
    if nd < 2:
        return DriftFit((float(b.y[0]) if nd else 0.0, 0.0), 0.0, float("nan"), (), tuple(left),
                        b)
    all_ws = sorted({*ws, *(2 * np.pi * step_days / p for _, p in all_terms if fits(p))})
    x, idx, g_inv, mid, half = _design(b, tuple(ws), tuple(all_ws), cache)
    coef = np.zeros(x.shape[1])
    coef[idx] = g_inv @ (x.T @ b.y)[idx]
    res = b.y - x @ coef
    coef = coef[idx]
    rss = float(res @ res)
    changes = int(np.count_nonzero(np.signbit(res[1:]) != np.signbit(res[:-1])))
    dof = max(min(changes + 1, nd) - ncol, 1)
    var_u = float(g_inv[1, 1])
    slope = float(coef[1]) / half
    sigma = math.sqrt(rss * var_u / dof) / half
    for name, period in terms:
        if name in left and name in MINOR_TERMS:
            sigma = math.hypot(sigma, MINOR_TERMS[name] * _worst_tilt(len(resid), step_days,
                                                                     period))
    a = float(coef[0]) - slope * mid
    return DriftFit((a, slope), slope, sigma, tuple(used), tuple(left), b)


def _worst_tilt(n: int, step_days: float, period_days: float) -> float:
    """Largest slope (per grid step) that a unit sinusoid of ``period_days``, at its worst
    phase, gives a least-squares line over ``n`` grid dates."""
    t = np.linspace(-0.5, 0.5, 257) * (n - 1)  # grid steps about the middle
    w = 2 * np.pi * step_days / period_days
    suu = float(t @ t)
    return math.hypot(float(t @ np.cos(w * t)), float(t @ np.sin(w * t))) / suu


def periodic_part(resid: np.ndarray, step_days: float, *, line: tuple[float, float] | None = None,
                  binned: _Binned | None = None) -> tuple[float, float | None]:
    """Amplitude (units of ``resid``) and period (days) of the strongest sinusoid in a series on
    a uniform grid, after removing ``line = (a, b)``, i.e. ``a + b k`` (default: its own
    least-squares line). ``(0.0, None)`` when the series is too short or flat.

    Periods from twice the analysis step to two thirds of the span are searched: the
    analysis step is the grid step, or ``m`` steps averaged when the series is longer than
    ``FFT_MAX_POINTS`` (so a run of 219,000 six-hour dates looks for periods of 3.5 days and
    more). The strongest bin of a Hann-windowed transform is refined by a local search for
    the frequency whose least-squares sinusoid leaves the least residual (within a bin either side, periods
    at most the span); the amplitude is then fitted at the full resolution.
    """
    y = np.asarray(resid, dtype=np.float32)
    n = len(y)
    if n < 16:
        return 0.0, None
    if line is None:
        bb, aa = np.polyfit(np.arange(n, dtype=float), y.astype(float), 1)
        line = (float(aa), float(bb))
    a, b = line
    bins = binned if binned is not None else _binned(y)
    m = bins.m
    yd = (bins.y - (a + b * bins.c)).astype(np.float32)
    nd = len(yd)
    if not np.any(yd):
        return 0.0, None
    nfft = _next_fast_len(nd)
    # the transform sees the series less its mean; the local search does not (over a part
    # cycle a sinusoid's mean is not zero, and the given line already holds the constant)
    mag = np.abs(np.fft.rfft((yd - np.float32(yd.mean(dtype=float))) * _hann(nd), nfft))
    lo = max(2, int(math.ceil(1.5 * nfft / nd)))  # at least 1.5 cycles in the span
    if lo >= len(mag) - 1:
        return 0.0, None
    j = lo + int(np.argmax(mag[lo:]))
    shift = 0.0  # parabola through the log magnitudes: the starting point of the search
    if j + 1 < len(mag):
        la, lb, lc = np.log(mag[j - 1:j + 2].astype(float) + 1e-300)
        den = la - 2 * lb + lc
        shift = 0.5 * (la - lc) / den if den < 0 else 0.0
    # local search in cycles per bin: the least-squares sinusoid takes most out at the true
    # frequency; within one bin either side (and at least one cycle a span)
    f_lo = max((j - 1) / nfft, 1.0 / nd)
    f_hi = min((j + 1) / nfft, 0.5)
    f = _refine_frequency(yd, min(max((j + shift) / nfft, f_lo), f_hi), 0.25 / nfft, f_lo, f_hi)
    cycles_per_step = f / m
    if not 0 < cycles_per_step < 0.5:
        return 0.0, None
    k = np.arange(n, dtype=np.float32)
    full = y - (np.float32(a) + np.float32(b) * k)
    amp = _sinusoid_amplitude(full, 2 * np.pi * cycles_per_step)
    return amp, step_days / cycles_per_step


def _refine_frequency(y: np.ndarray, f0: float, h: float, f_lo: float, f_hi: float,
                      rel: float = 1e-5) -> float:
    """The frequency (cycles per step) near ``f0`` whose least-squares sinusoid takes the most
    out of ``y`` (least residual), within [f_lo, f_hi]: successive parabolas through three
    points ``h`` apart at first, moving the three outwards while an end one is best; stops
    when a step is below ``rel`` of the frequency (a period good to about 1e-5 of itself)."""
    def power(f):
        return _sinusoid_amplitude(y, 2 * np.pi * f, block=1024, explained=True)

    x0, x1, x2 = max(f0 - h, f_lo), f0, min(f0 + h, f_hi)
    if not x0 < x1 < x2:
        return f0
    v0, v1, v2 = power(x0), power(x1), power(x2)
    for _ in range(40):
        if v0 > v1 or v2 > v1:  # the peak is outside: step the triple towards it
            if v0 > v2:
                x_new = max(x0 - (x1 - x0), f_lo)
                if x_new >= x0:
                    return x0
                x0, x1, x2, v1, v2 = x_new, x0, x1, v0, v1
                v0 = power(x0)
            else:
                x_new = min(x2 + (x2 - x1), f_hi)
                if x_new <= x2:
                    return x2
                x0, x1, x2, v0, v1 = x1, x2, x_new, v1, v2
                v2 = power(x2)
            continue
        den = (x1 - x0) * (v1 - v2) - (x1 - x2) * (v1 - v0)
        if den == 0:
            return x1
        xv = x1 - 0.5 * ((x1 - x0) ** 2 * (v1 - v2) - (x1 - x2) ** 2 * (v1 - v0)) / den
        if not x0 < xv < x2 or abs(xv - x1) < rel * x1:
            return x1 if not x0 < xv < x2 else xv
        vv = power(xv)
        if xv < x1:
            (x0, x1, x2, v0, v1, v2) = ((x0, xv, x1, v0, vv, v1) if vv > v1 else
                                        (xv, x1, x2, vv, v1, v2))
        else:
            (x0, x1, x2, v0, v1, v2) = ((x1, xv, x2, v1, vv, v2) if vv > v1 else
                                        (x0, x1, xv, v0, v1, vv))
    return x1


def _sinusoid_amplitude(y: np.ndarray, w: float, block: int = 4096, *,
                        explained: bool = False) -> float:
    """Amplitude of the least-squares ``p cos(w k) + q sin(w k)`` through ``y`` (k = 0..n-1);
    with ``explained``, the sum of squares it takes out of ``y`` instead (largest at the best
    frequency, where the amplitude itself need not be).

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
    if explained:
        return float(p * sc + q * sn)
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


def drift_series(mech, sky, jd_start: float, jd_end: float, step_days: float, *,
                 frame: str | None = None, site=None,
                 threshold_deg: float | dict[str, float | None] | None = None,
                 progress: Callable[[float], None] | None = None,
                 cancel: Callable[[], bool] | None = None, chunk: int = 20_000,
                 keep_series: bool = True, readout=None,
                 on_chunk: Callable[[np.ndarray, dict[str, ErrorNow]], None] | None = None,
                 include_end: bool = False) -> DriftResult:
    """Every pointer's error on the grid ``jd_start + k * step_days`` up to ``jd_end`` (UT).

    ``step_days``: days, or text for :func:`parse_step`. ``threshold_deg``: one value for every
    pointer, or ``{pointer: deg}``. ``progress(f)`` is called after each chunk with the
    fraction done; ``cancel()`` is asked before each chunk, and a true answer raises
    :class:`DriftCancelled`. ``on_chunk(jd, errors)`` receives each chunk's dates and
    :class:`ErrorNow` values (float64) as they are made, e.g. to stream them to a file.
    ``include_end``: run on to the first grid date at or after ``jd_end`` (see :func:`grid`)
    when the ephemeris reaches it, else stop at the last grid date before ``jd_end``.
    """
    readout = readout or mech.readout
    frame = frame or mech.train.dial
    site = _site(site)
    step = parse_step(step_days)
    n = grid(float(jd_start), float(jd_end), step)
    chunk = max(2, int(chunk))
    jd0 = float(jd_start)
    if hasattr(sky, "check_span"):  # span check first, saying how much lies outside
        sky.check_span(jd0, jd0 + (n - 1) * step)
    sky.at(np.array([jd0, jd0 + (n - 1) * step]), frame=frame, site=site)  # and the site
    if include_end:
        n_end = grid(jd0, float(jd_end), step, include_end=True)
        if n_end > n:
            try:
                sky.at(np.array([jd0 + (n_end - 1) * step]), frame=frame, site=site)
                n = n_end
            except WheelworkError:  # past the ephemeris' end: keep the date before jd_end
                pass
    pointers = dict(mech.train.pointers)
    shows = [p.shows for p in pointers.values()]
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
        state = sky_at(sky, jd, shows, frame=frame, site=site)
        sky_s += time.perf_counter() - t
        since = j * turns_per_step
        a, base = reader.anchor(jd[0])
        lags = reader.lags_turns(a, since)
        errors = {}
        for name, p in pointers.items():
            true = true_value(p.shows, state)
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
    terms = {name: sky_terms(p.shows, frame) for name, p in pointers.items()}
    cache: dict = {"terms": tuple({t for ts in terms.values() for t in ts})}  # one design a run
    summaries = {name: runs[name].summary(name, p.shows, terms[name], cache)
                 for name, p in pointers.items()}
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
