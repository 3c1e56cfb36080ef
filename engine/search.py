"""Tooth-count search: which compound trains of cuttable wheels realise a given period.

A train of ``k`` stages (1-4) has a ratio ``prod(drivers) / prod(driven)`` output turns per crank
turn. The search is exhaustive within the bounds, by meeting in the middle: every product of
``k`` driver counts and every product of ``k`` driven counts is enumerated once (as multisets,
with numpy), both sorted, and for each numerator the denominators nearest ``numerator / target``
are found by ``searchsorted``. A threshold taken from those nearest neighbours then gathers
*every* pair at least as good, so the best result reported is the best that exists.

Results are distinct ratios, best first (smallest relative error, then fewest teeth); each is
shown by the realisation with the fewest teeth in total. Ratios and errors are exact
(:class:`fractions.Fraction`) until the final conversion to ppm.

Roles: in each stage the *pinion* is the smaller, faster member. When the output turns slower
than the crank (target ratio <= 1) the pinions drive; when it turns faster the wheels drive.
The ``pinions`` range applies to the pinions and the ``wheels`` range to the wheels.

Continued-fraction convergents of the target (sympy) are listed too, each marked by whether
the constraints admit it as a train.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from fractions import Fraction

import numpy as np

from .defaults import SEARCH_MAX_TEETH, SEARCH_MAX_TOP
from .errors import SearchCancelled, SearchError
from .exact import fraction_text, parse_fraction
from .figures import figure
from .kinds import FRAMES, KINDS
from .loader import DAYS_PER_TURN_BOUNDS, MAX_DAYS_PER_TURN, MIN_DAYS_PER_TURN
from .periods import JULIAN_CENTURY_DAYS, JULIAN_YEAR_DAYS, MeanPeriod, find_period

MAX_STAGES = 4
DEFAULT_WHEELS = (8, 150)
DEFAULT_PINIONS = (8, 150)
DEFAULT_STAGES = (1, 2, 3)
DIRECTIONS = ("any", "same", "reverse")
MAX_CONVERGENTS = 20

_BARE_KEY_RE = re.compile(r"^[A-Za-z0-9_-]+$")


# ---------------------------------------------------------------------------------------------
# Parsing


# Bounds of every number a search takes (each refused beyond, with what would work).
MIN_VALUE, MAX_VALUE = Fraction(1, 10**9), Fraction(10**12)  # period, ratio, crank days
MAX_TOP = SEARCH_MAX_TOP  # trains listed at most (engine/defaults.py)
HOPELESS = Fraction(101, 100)  # a target this far beyond what the bounds reach is refused


def _fraction(value: str | int | float | Fraction, what: str) -> Fraction:
    """A positive exact number read by the one fraction reader, its fault as a SearchError;
    between 1e-9 and 1e12."""
    try:
        number = parse_fraction(value, what, positive=True)
    except ValueError as exc:
        raise SearchError(str(exc)) from None
    if not MIN_VALUE <= number <= MAX_VALUE:
        raise SearchError(f"{what}: {value} is beyond what a train of wheels is searched for; "
                          f"give a value from {figure(float(MIN_VALUE))} to "
                          f"{figure(float(MAX_VALUE))}")
    return number


def parse_span(text: str, what: str) -> tuple[int, int]:
    """Read ``"8-150"`` (or a single ``"12"``) as an inclusive (min, max) pair of ints."""
    m = re.match(r"^\s*(\d+)\s*(?:-\s*(\d+)\s*)?$", str(text))
    if not m:
        raise SearchError(f"{what}: cannot read {text!r} (use MIN-MAX, e.g. 8-150)")
    lo = int(m.group(1))
    hi = int(m.group(2)) if m.group(2) is not None else lo
    if hi > MAX_TEETH and what != "stages":
        raise SearchError(f"{what}: {hi} teeth is more than the {MAX_TEETH:,} searched")
    return lo, hi


def parse_counts(text: str) -> tuple[int, ...]:
    """Read a list of tooth counts: ``"12,15,20-30"`` (commas, spaces and ranges)."""
    out: set[int] = set()
    parts = [p for p in re.split(r"[,\s]+", str(text).strip()) if p]
    if not parts:
        raise SearchError("allowed tooth counts: the list is empty")
    for part in parts:
        m = re.match(r"^(\d+)(?:-(\d+))?$", part)
        if not m:
            raise SearchError(f"allowed tooth counts: cannot read {part!r} (use e.g. 12,15,20-30)")
        lo = int(m.group(1))
        hi = int(m.group(2)) if m.group(2) is not None else lo
        if hi > MAX_TEETH:
            raise SearchError(f"allowed tooth counts: {hi} is more than the {MAX_TEETH:,} "
                              "teeth searched")
        if lo > hi:
            raise SearchError(f"allowed tooth counts: range {part} is empty (min > max)")
        out.update(range(lo, hi + 1))
    return tuple(sorted(out))


# ---------------------------------------------------------------------------------------------
# Target and constraints


@dataclass(frozen=True)
class Target:
    """What the output should do: ``ratio`` output turns per crank turn (exact)."""

    ratio: Fraction
    crank_days: Fraction
    label: str
    cycle: MeanPeriod | None = None

    @property
    def period_days(self) -> float:
        """Days per output turn."""
        return float(self.crank_days / self.ratio)

    @property
    def is_lunar_phase(self) -> bool:
        return self.cycle is not None and self.cycle.key == "synodic_month"


def make_target(period=None, ratio=None, cycle: str | None = None,
                crank_days: str | int | float | Fraction = 1) -> Target:
    """Build a target from exactly one of a period in days, a ratio or a mean-period name.

    ``period`` is days per output turn (``29.53`` or ``"6940/235"``); ``ratio`` is output turns
    per crank turn (``"19/235"``); ``cycle`` is a name known to
    :func:`engine.periods.find_period`. The crank turns once in ``crank_days`` days.
    """
    given = [x for x in (period, ratio, cycle) if x is not None]
    if len(given) != 1:
        raise SearchError("give exactly one target: a period in days, a ratio, or a cycle name")
    crank = _fraction(crank_days, "crank days per turn")
    if not MIN_DAYS_PER_TURN <= crank <= MAX_DAYS_PER_TURN:  # what a train file can hold
        raise SearchError(f"crank days per turn: {crank_days} is beyond what a train file's "
                          f"[crank] days_per_turn takes: give one between "
                          f"{DAYS_PER_TURN_BOUNDS}")
    if period is not None:
        days = _fraction(period, "period")
        return Target(crank / days, crank, f"period {period} days")
    if ratio is not None:
        r = _fraction(ratio, "ratio")
        return Target(r, crank, f"ratio {ratio}")
    try:
        mp = find_period(str(cycle))
    except KeyError as exc:
        raise SearchError(str(exc.args[0])) from None
    # a relation's own exact length; else the period as the published rate gives it (a
    # decimal), not the float's binary expansion
    days = mp.exact_days or Fraction(360) * Fraction(JULIAN_CENTURY_DAYS) / Fraction(
        repr(abs(mp.deg_per_century)))
    return Target(crank / days, crank, mp.name, mp)


@dataclass(frozen=True)
class Constraints:
    """Bounds of a search. Make one with :func:`make_constraints`, which checks them."""

    stages: tuple[int, ...] = DEFAULT_STAGES
    wheels: tuple[int, int] = DEFAULT_WHEELS
    pinions: tuple[int, int] = DEFAULT_PINIONS
    allowed: tuple[int, ...] | None = None
    max_prime: int | None = None
    no_repeat: bool = False
    direction: str = "any"
    exact_only: bool = False
    wheel_counts: tuple[int, ...] = field(default=(), compare=False)
    pinion_counts: tuple[int, ...] = field(default=(), compare=False)

    def sides(self, target: Target) -> tuple[tuple[int, ...], tuple[int, ...]]:
        """(driver counts, driven counts) for this target: pinions drive a reducing train."""
        if target.ratio <= 1:
            return self.pinion_counts, self.wheel_counts
        return self.wheel_counts, self.pinion_counts


def _largest_prime(n: int) -> int:
    import sympy  # here, not at the top: sympy is slow to import and most commands never need it

    return max(sympy.factorint(n)) if n > 1 else 1


def make_constraints(stages: int | Iterable[int] | str = DEFAULT_STAGES,
                     wheels: tuple[int, int] | str = DEFAULT_WHEELS,
                     pinions: tuple[int, int] | str = DEFAULT_PINIONS,
                     allowed: Iterable[int] | str | None = None,
                     max_prime: int | None = None, no_repeat: bool = False,
                     direction: str = "any", exact_only: bool = False) -> Constraints:
    """Check the bounds and work out which tooth counts each role may use.

    ``stages`` is a count, an iterable of counts or ``"1-3"``; ``wheels``/``pinions`` are
    inclusive (min, max) or ``"8-150"``; ``allowed`` limits every count to a list (e.g. what
    your cutters or dividing plate make); ``max_prime`` bounds every prime factor of a count;
    ``no_repeat`` forbids a count appearing twice in a train; ``direction`` is ``"any"``,
    ``"same"`` (output turns with the crank: an even number of external stages) or
    ``"reverse"`` (odd).
    """
    if isinstance(stages, str):
        lo, hi = parse_span(stages, "stages")
        stage_set = set(range(lo, hi + 1))
        if lo > hi:
            raise SearchError(f"stages: range {stages} is empty (min > max)")
    elif isinstance(stages, int):
        stage_set = {stages}
    else:
        stage_set = set(stages)
    if not stage_set:
        raise SearchError("stages: no stage count given")
    bad = sorted(s for s in stage_set if not 1 <= s <= MAX_STAGES)
    if bad:
        raise SearchError(f"stages: {bad[0]} is outside 1-{MAX_STAGES}")
    if direction not in DIRECTIONS:
        raise SearchError(f"direction: {direction!r} is not one of {', '.join(DIRECTIONS)}")
    if direction == "same":
        kept = {s for s in stage_set if s % 2 == 0}
        if not kept:
            raise SearchError(
                "keeping the direction needs an even number of stages: each external stage "
                "reverses the turning, so a 1-stage (or 3-stage) train turns the other way; "
                "search 2 or 4 stages, or add an idler (it does not change the ratio)")
        stage_set = kept
    elif direction == "reverse":
        kept = {s for s in stage_set if s % 2 == 1}
        if not kept:
            raise SearchError("reversing the direction needs an odd number of stages (1 or 3)")
        stage_set = kept

    def span(value, what):
        lo, hi = parse_span(value, what) if isinstance(value, str) else (int(value[0]),
                                                                           int(value[1]))
        if lo < 1:
            raise SearchError(f"{what}: tooth counts start at 1, got {lo}")
        if lo > hi:
            raise SearchError(f"{what}: range {lo}-{hi} is empty (min > max)")
        return lo, hi

    wheels = span(wheels, "wheels")
    pinions = span(pinions, "pinions")
    allow: tuple[int, ...] | None = None
    if allowed is not None:
        allow = parse_counts(allowed) if isinstance(allowed, str) else tuple(sorted(set(allowed)))
        if not allow:
            raise SearchError("allowed tooth counts: the list is empty")
        if allow[0] < 1:
            raise SearchError(f"allowed tooth counts: {allow[0]} is not a tooth count")
    if max_prime is not None and max_prime < 2:
        raise SearchError(f"max prime: must be at least 2, got {max_prime}")

    def counts(lo_hi, what):
        cs = range(lo_hi[0], lo_hi[1] + 1)
        if allow is not None:
            cs = [c for c in cs if c in set(allow)]
            if not cs:
                raise SearchError(f"{what}: no allowed tooth count lies in {lo_hi[0]}-{lo_hi[1]}")
        if max_prime is not None:
            cs = [c for c in cs if _largest_prime(c) <= max_prime]
            if not cs:
                raise SearchError(f"{what}: no tooth count in range is free of primes above "
                                  f"{max_prime}")
        return tuple(cs)

    wheel_counts, pinion_counts = counts(wheels, "wheels"), counts(pinions, "pinions")
    k = max(stage_set)
    for cs, what in ((wheel_counts, "wheels"), (pinion_counts, "pinions")):
        size = _n_multisets(len(cs), k, bool(no_repeat))
        if size > MAX_MULTISETS:
            fewer = max((j for j in range(1, k) if _n_multisets(len(cs), j, bool(no_repeat))
                         <= MAX_MULTISETS), default=None)
            hint = (f"search at most {fewer} stage{'s' if fewer > 1 else ''}, or "
                    if fewer else "")
            raise SearchError(
                f"{what}: {len(cs):,} tooth counts give {size:,} sets of {k}, more than the "
                f"{MAX_MULTISETS:,} searched; {hint}narrow the range (8-150 gives "
                f"{_n_multisets(143, 4, False):,} sets of 4)")
    return Constraints(tuple(sorted(stage_set)), wheels, pinions, allow, max_prime,
                       bool(no_repeat), direction, bool(exact_only), wheel_counts, pinion_counts)


def reach(target: Target, constraints: Constraints) -> tuple[Fraction, Fraction]:
    """The smallest and largest ratios (output turns per crank turn) the bounds can give."""
    drv, dvn = constraints.sides(target)
    ks = constraints.stages
    lo = min(Fraction(min(drv), max(dvn)) ** k for k in ks)
    hi = max(Fraction(max(drv), min(dvn)) ** k for k in ks)
    return lo, hi


def _with_sense(stages: int, direction: str) -> int:
    """The fewest stages, from ``stages`` up, that turn the output the way asked: an even
    count keeps the crank's direction (``"same"``), an odd one reverses it."""
    if direction == "same" and stages % 2:
        return stages + 1
    if direction == "reverse" and not stages % 2:
        return stages + 1
    return stages


def check_reachable(target: Target, constraints: Constraints) -> None:
    """Refuse, before any work, a target the bounds cannot come near (more than 1% beyond the
    smallest or largest ratio they give), saying what would work. The command calls it;
    :func:`search` itself still finds the nearest trains, however far."""
    lo, hi = reach(target, constraints)
    r = target.ratio
    if lo / HOPELESS <= r <= hi * HOPELESS:
        return
    drv, dvn = constraints.sides(target)
    per_stage = Fraction(max(drv), min(dvn)) if r > 1 else Fraction(max(dvn), min(drv))
    need = (math.ceil(math.log(float(r if r > 1 else 1 / r)) / math.log(float(per_stage)))
            if per_stage > 1 else None)
    k = max(constraints.stages)
    crank = target.crank_days
    reach_text = (f"{k} stage{'s' if k != 1 else ''} of these counts reach "
                  f"{figure(float(lo), 4)} to {figure(float(hi), 4)} turns per crank turn "
                  f"({figure(float(crank / hi), 4)} to {figure(float(crank / lo), 4)} days per "
                  f"output turn with the crank at {fraction_text(crank)} "
                  f"day{'' if crank == 1 else 's'} per turn)")
    counts = len(set(drv) | set(dvn))
    if (need is not None and need > k and constraints.no_repeat and 2 * need > counts
            and need <= MAX_STAGES):
        fix = (f"{need} stages with --no-repeat need {2 * need} different counts and these "
               f"bounds allow {counts}: allow more counts, or drop --no-repeat")
    elif need is not None and need > k and _with_sense(need, constraints.direction) <= MAX_STAGES:
        fix = f"search --stages {_with_sense(need, constraints.direction)}"
    else:
        mid = math.sqrt(float(lo) * float(hi))  # the middle of what the bounds reach
        period = float(target.crank_days / target.ratio)  # days per output turn
        # the crank that puts the target there, kept within what a train file takes
        days = min(max(period * mid, float(MIN_DAYS_PER_TURN)), float(MAX_DAYS_PER_TURN))
        if float(lo) / float(HOPELESS) <= days / period <= float(hi) * float(HOPELESS):
            fix = (f"turn the crank nearer the output's speed, e.g. --crank-days "
                   f"{figure(days, 4, group=False)}")
        else:
            fix = (f"no crank a train file takes (days_per_turn between {DAYS_PER_TURN_BOUNDS}) "
                   "brings it within their reach: widen --wheels and --pinions")
    raise SearchError(f"the target, {figure(float(r), 4)} turns per crank turn, is out of reach: "
                      f"{reach_text}; {fix}")


# ---------------------------------------------------------------------------------------------
# Results


@dataclass(frozen=True)
class WheelPair:
    """One mesh of the train: ``driver`` teeth driving ``driven`` teeth."""

    driver: int
    driven: int

    @property
    def ratio(self) -> Fraction:
        return Fraction(self.driver, self.driven)


@dataclass(frozen=True)
class TrainResult:
    """A train found by the search, with its exact ratio and its errors against the target."""

    stages: tuple[WheelPair, ...]
    ratio: Fraction  # output turns per crank turn
    # (realised period / target period - 1) * 1e6, the one meaning of "ppm" in wheelwork:
    # positive, the period is too long and the output falls behind; negative, it runs ahead
    period_error_ppm: float
    drift_deg_per_century: float  # signed, of the output pointer against the target
    one_day_off_years: float  # until the pointer is one day of its own motion off (inf: exact)
    total_teeth: int
    period_days: float  # days per output turn of this train

    @property
    def exact(self) -> bool:
        return self.period_error_ppm == 0.0

    @property
    def reverses(self) -> bool:
        """True when the output turns against the crank (odd number of external stages)."""
        return len(self.stages) % 2 == 1


@dataclass(frozen=True)
class Convergent:
    """A continued-fraction convergent of the target ratio and whether the bounds admit it."""

    ratio: Fraction  # output turns per crank turn
    period_days: Fraction  # days per output turn with the target's crank
    period_error_ppm: float  # (its period / target period - 1) * 1e6
    admitted: bool
    train: TrainResult | None  # fewest-teeth train of exactly this ratio, when admitted
    reason: str  # why not admitted ("" when admitted)


@dataclass(frozen=True)
class SearchReport:
    target: Target
    constraints: Constraints
    results: tuple[TrainResult, ...]
    convergents: tuple[Convergent, ...]


def _rel_error(ratio: Fraction, target: Target) -> Fraction:
    return ratio / target.ratio - 1


def _period_error_ppm(ratio: Fraction, target: Target) -> float:
    """(realised period / target period - 1) * 1e6, exact until the conversion."""
    return float(target.ratio / ratio - 1) * 1e6


def train_result(stages: tuple[WheelPair, ...], target: Target) -> TrainResult:
    """The search's answer for a chain of stages against ``target``: its exact ratio, period
    error and drift (read by the search and by the re-chaining of one pointer's chain)."""
    ratio = Fraction(1)
    for s in stages:
        ratio *= s.ratio
    err = _rel_error(ratio, target)
    err_f = float(err)
    per_century = JULIAN_CENTURY_DAYS / target.period_days
    days_off = math.inf if err == 0 else 1.0 / abs(err_f)
    return TrainResult(
        stages=stages,
        ratio=ratio,
        period_error_ppm=_period_error_ppm(ratio, target),
        drift_deg_per_century=err_f * 360.0 * per_century,
        one_day_off_years=days_off / JULIAN_YEAR_DAYS,
        total_teeth=sum(s.driver + s.driven for s in stages),
        period_days=float(target.crank_days / ratio),
    )


def _pair_stages(drivers: tuple[int, ...], driven: tuple[int, ...]) -> tuple[WheelPair, ...]:
    # The order of the pairs does not change the ratio; the canonical form pairs the counts in sorted order.
    return tuple(WheelPair(a, b) for a, b in zip(sorted(drivers), sorted(driven), strict=True))


# ---------------------------------------------------------------------------------------------
# Enumeration


MAX_TEETH = SEARCH_MAX_TEETH  # keeps every product of four counts inside int64
MAX_MULTISETS = 40_000_000  # products enumerated per role and stage count (memory bound)


def _n_multisets(m: int, k: int, distinct: bool) -> int:
    return math.comb(m, k) if distinct else math.comb(m + k - 1, k)


def _extend(prod: np.ndarray, last: np.ndarray, tot: np.ndarray, v: np.ndarray,
            distinct: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One more count on every entry: entries stay in order of their largest index, so the
    entries that may take count ``j`` are a prefix of the arrays."""
    m = len(v)
    ends = np.searchsorted(last, np.arange(m, dtype=np.int32),
                           side="left" if distinct else "right")
    total = int(ends.sum())
    out_p = np.empty(total, np.int64)
    out_l = np.empty(total, np.int32)
    out_t = np.empty(total, np.int32)
    off = 0
    for j in range(m):
        n = int(ends[j])
        if n:
            np.multiply(prod[:n], v[j], out=out_p[off:off + n])
            np.add(tot[:n], np.int32(v[j]), out=out_t[off:off + n])
            out_l[off:off + n] = j
            off += n
    return out_p, out_l, out_t


_UNIQUE_CHUNK = 1 << 20  # entries per step when picking each product's first run


@functools.lru_cache(maxsize=8)
def _products(values: tuple[int, ...], k: int, distinct: bool) -> tuple[np.ndarray, np.ndarray]:
    """Every product of ``k`` counts from ``values`` (a multiset; a set if ``distinct``).

    Returns (sorted unique products int64, smallest sum of counts giving each product).

    Memory: the levels below ``k`` are small; the last level, which holds nearly all the
    entries (18.2 M for four of 143 counts), is written straight into one preallocated int64
    array of keys ``product * scale + sum``, sorted in place, and read back in chunks, so the
    peak is about 8 bytes an entry.
    """
    v = np.asarray(values, dtype=np.int64)
    m = len(v)
    empty = np.zeros(0, np.int64), np.zeros(0, np.int32)
    if m == 0 or (distinct and k > m):
        return empty
    prod, last, tot = v.copy(), np.arange(m, dtype=np.int32), v.astype(np.int32)
    if k == 1:
        return prod, tot
    for _ in range(k - 2):
        prod, last, tot = _extend(prod, last, tot, v, distinct)
        if len(prod) == 0:
            return empty
    scale = int(tot.max()) + int(v[-1]) + 1
    if int(prod.max()) * int(v[-1]) >= (2**62) // scale:  # keys would overflow: sort pairs
        prod, last, tot = _extend(prod, last, tot, v, distinct)
        del last
        order = np.lexsort((tot, prod))
        p, t = prod[order], tot[order]
        first = np.ones(len(p), bool)
        first[1:] = p[1:] != p[:-1]
        return p[first], t[first]
    ends = np.searchsorted(last, np.arange(m, dtype=np.int32),
                           side="left" if distinct else "right")
    key = np.empty(int(ends.sum()), np.int64)
    off = 0
    for j in range(m):
        n = int(ends[j])
        if n:
            seg = key[off:off + n]
            np.multiply(prod[:n], int(v[j]) * scale, out=seg)
            seg += tot[:n]
            seg += int(v[j])
            off += n
    del prod, last, tot
    if len(key) == 0:
        return empty
    key.sort()  # in place
    # each product's first entry has its smallest sum of counts
    out_p, out_t = [], []
    prev = -1
    for s in range(0, len(key), _UNIQUE_CHUNK):
        c = key[s:s + _UNIQUE_CHUNK]
        p = c // scale
        first = np.empty(len(p), bool)
        first[0] = p[0] != prev
        np.not_equal(p[1:], p[:-1], out=first[1:])
        pf = p[first]
        out_p.append(pf)
        out_t.append((c[first] - pf * scale).astype(np.int32))
        prev = int(p[-1])
    return np.concatenate(out_p), np.concatenate(out_t)


@functools.lru_cache(maxsize=64)
def _value_set(values: tuple[int, ...]) -> frozenset[int]:
    return frozenset(values)


def _factorisations(n: int, k: int, values: tuple[int, ...], distinct: bool,
                    start: int = 0) -> list[tuple[int, ...]]:
    """Every sorted k-tuple of counts from ``values`` (sorted) whose product is ``n``."""
    if k == 1:
        ok = n in _value_set(values) and start < len(values) and n >= values[start]
        return [(n,)] if ok else []
    out = []
    for i in range(start, len(values)):
        c = values[i]
        if c ** k > n:
            break
        if n % c == 0:
            for rest in _factorisations(n // c, k - 1, values, distinct, i + 1 if distinct else i):
                out.append((c, *rest))
    return out


class _Side:
    """Product tables of one stage count for drivers and driven."""

    def __init__(self, cons: Constraints, target: Target, k: int, between=None):
        self.k = k
        self.drv_vals, self.dvn_vals = cons.sides(target)
        self.distinct = cons.no_repeat
        for vals, role in ((self.drv_vals, "drivers"), (self.dvn_vals, "driven wheels")):
            if vals and vals[-1] > MAX_TEETH:
                raise SearchError(f"{role}: tooth counts above {MAX_TEETH} are not searched")
            size = _n_multisets(len(vals), k, self.distinct)
            if size > MAX_MULTISETS:
                raise SearchError(
                    f"{role}: {len(vals)} tooth counts give {size:,} sets of {k}, more than "
                    f"{MAX_MULTISETS:,}; narrow the tooth ranges or search fewer stages")
        self.num, self.num_sum = _products(self.drv_vals, k, self.distinct)
        if between is not None:
            between()
        self.den, self.den_sum = _products(self.dvn_vals, k, self.distinct)

    def best_train(self, pairs_n: np.ndarray, pairs_d: np.ndarray) -> tuple[WheelPair, ...] | None:
        """Fewest-teeth valid train among the given (numerator, denominator) index pairs."""
        lower = self.num_sum[pairs_n] + self.den_sum[pairs_d]
        order = np.argsort(lower, kind="stable")
        best, best_teeth = None, None
        for o in order:
            if best_teeth is not None and lower[o] >= best_teeth:
                break  # the lower bound can only grow
            n, d = int(self.num[pairs_n[o]]), int(self.den[pairs_d[o]])
            if not self.distinct:
                fn = min(_factorisations(n, self.k, self.drv_vals, False), key=sum)
                fd = min(_factorisations(d, self.k, self.dvn_vals, False), key=sum)
                return _pair_stages(fn, fd)
            for a in _factorisations(n, self.k, self.drv_vals, True):
                sa = set(a)
                for b in _factorisations(d, self.k, self.dvn_vals, True):
                    if sa.isdisjoint(b):
                        teeth = sum(a) + sum(b)
                        if best_teeth is None or teeth < best_teeth:
                            best, best_teeth = _pair_stages(a, b), teeth
        return best


def _group_ratios(n: np.ndarray, d: np.ndarray):
    """Reduce n/d and group equal ratios: (order, run starts, run ends, reduced p, q)."""
    g = np.gcd(n, d)
    p, q = n // g, d // g
    order = np.lexsort((q, p))
    p, q = p[order], q[order]
    new = np.ones(len(p), bool)
    new[1:] = (p[1:] != p[:-1]) | (q[1:] != q[:-1])
    begin = np.nonzero(new)[0]
    ends = np.append(begin[1:], len(p))
    return order, begin, ends, p[begin], q[begin]


def _threshold(num: np.ndarray, den: np.ndarray, ideal: np.ndarray, t: float, top: int
               ) -> float:
    """An upper bound on the error of the ``top``-th best distinct ratio (inf: take all)."""
    idx = np.searchsorted(den, ideal)
    k_near, pool = 1, 64 * top
    while True:
        cand_n, cand_d, cand_e = [], [], []
        for off in range(-k_near, k_near):
            j = np.clip(idx + off, 0, len(den) - 1)
            err = np.abs(num / den[j] / t - 1.0)
            if len(err) > pool:
                keep = np.argpartition(err, pool)[:pool]
            else:
                keep = np.arange(len(err))
            cand_n.append(num[keep])
            cand_d.append(den[j[keep]])
            cand_e.append(err[keep])
        n, d, e = np.concatenate(cand_n), np.concatenate(cand_d), np.concatenate(cand_e)
        order, begin, _, _, _ = _group_ratios(n, d)
        # every member of a run has the same ratio; its error is the run's smallest
        distinct = np.sort(np.minimum.reduceat(e[order], begin)) if len(begin) else begin
        if len(distinct) >= top:
            return float(distinct[top - 1])
        if pool < len(num):
            pool *= 8
        elif 2 * k_near < len(den):
            k_near *= 4
        else:
            return math.inf


def _search_k(side: _Side, target: Target, top: int) -> list[tuple[Fraction, int, tuple]]:
    """All distinct ratios of ``side.k`` stages at least as good as the ``top``-th best.

    Returns (exact |relative error|, total teeth, stages) per ratio.
    """
    num, den = side.num, side.den
    if len(num) == 0 or len(den) == 0:
        return []
    t = float(target.ratio)
    ideal = num / t
    limit = _threshold(num, den, ideal, t, top)
    while True:
        # every pair within the threshold (with a margin for float rounding)
        e = limit * (1 + 1e-9) + 1e-13
        lo = np.searchsorted(den, ideal / (1 + e), side="left")
        hi = (np.searchsorted(den, ideal / (1 - e), side="right") if e < 1
              else np.full(len(num), len(den)))
        cnt = hi - lo
        pn = np.repeat(np.arange(len(num)), cnt)
        pd = np.repeat(lo - np.cumsum(cnt) + cnt, cnt) + np.arange(len(pn))
        order, begin, ends, rp, rq = _group_ratios(num[pn], den[pd])
        pn, pd = pn[order], pd[order]
        ranked = sorted(
            (abs(_rel_error(Fraction(int(a), int(b)), target)), int(s), int(f))
            for a, b, s, f in zip(rp, rq, begin, ends, strict=True))
        found: list[tuple[Fraction, int, tuple]] = []
        cut = None
        for aerr, b, f in ranked:
            if cut is not None and aerr > cut:
                break
            stages = side.best_train(pn[b:f], pd[b:f])
            if stages is None:
                continue  # every realisation repeats a count
            found.append((aerr, sum(s.driver + s.driven for s in stages), stages))
            if len(found) >= top and cut is None:
                cut = aerr  # keep ties with the last one
        if cut is not None or math.isinf(limit):
            return found
        # some were refused (every realisation repeats a count): look further out
        limit = math.inf if e >= 1 else (limit * 16 if limit > 0 else 1e-12)


def search(target: Target, constraints: Constraints | None = None, top: int = 10,
           with_convergents: bool = True, progress=None, cancel=None) -> SearchReport:
    """Best ``top`` distinct trains for ``target`` within ``constraints``, best first.

    Exhaustive within the bounds: no train of the allowed stage counts and tooth counts comes
    closer to the target than the first result. Ties are broken by total teeth, then stages.
    With ``exact_only`` the results are instead the different trains of exactly the target
    ratio, fewest teeth first (see :func:`exact_trains`).

    ``progress(fraction)`` is called between steps (drivers' products, driven products,
    matching, for each stage count); ``cancel()`` is asked at the same points, and a true
    answer raises :class:`SearchCancelled`.
    """
    steps = 3 * len((constraints or make_constraints()).stages)

    def step(i: int) -> None:
        if cancel is not None and cancel():
            raise SearchCancelled(f"search stopped after {i} of {steps} steps")
        if progress is not None:
            progress(i / steps)

    cons = constraints or make_constraints()
    if not 1 <= top <= MAX_TOP:
        raise SearchError(f"top: must be from 1 to {MAX_TOP}, got {top}")
    if cons.exact_only:
        results = tuple(exact_trains(target.ratio, target, cons, top))
        convs = tuple(convergents(target, cons)) if with_convergents else ()
        return SearchReport(target, cons, results, convs)
    best: dict[Fraction, tuple[Fraction, int, int, tuple]] = {}
    for j, k in enumerate(cons.stages):
        step(3 * j)
        side = _Side(cons, target, k, between=lambda j=j: step(3 * j + 1))
        step(3 * j + 2)
        for aerr, teeth, stages in _search_k(side, target, top):
            ratio = math.prod((s.ratio for s in stages), start=Fraction(1))
            entry = (aerr, teeth, k, stages)
            if ratio not in best or entry[:3] < best[ratio][:3]:
                best[ratio] = entry
    step(steps)
    ranked = sorted(best.values(), key=lambda x: x[:3])[:top]
    results = tuple(train_result(stages, target) for *_, stages in ranked)
    convs = tuple(convergents(target, cons)) if with_convergents else ()
    return SearchReport(target, cons, results, convs)


# ---------------------------------------------------------------------------------------------
# Convergents and splitting an exact ratio into stages


def _prime_obstacle(ratio: Fraction, target: Target, constraints: Constraints) -> str:
    """Why the prime factors of ``ratio`` rule it out at once ("" if they do not)."""
    import sympy  # here, not at the top: sympy is slow to import and most commands never need it

    drv, dvn = constraints.sides(target)
    for value, vals, role in ((ratio.numerator, drv, "driver"),
                              (ratio.denominator, dvn, "driven")):
        for prime in sympy.factorint(value):
            if constraints.max_prime is not None and prime > constraints.max_prime:
                return f"prime {prime} is above the limit {constraints.max_prime}"
            if not any(c % prime == 0 for c in vals):
                return f"no allowed {role} count has the prime {prime}"
    return ""


def exact_trains(ratio: Fraction, target: Target, constraints: Constraints, top: int = 10
                 ) -> list[TrainResult]:
    """The different trains of exactly ``ratio`` within the bounds, fewest teeth first.

    Each multiset of drivers with its multiset of driven wheels is listed once. Prime factors
    (sympy ``factorint``) rule out most impossible ratios at once; otherwise every multiplier
    ``m`` with ``p*m`` a product of drivers and ``q*m`` a product of driven wheels is tried.
    """
    if _prime_obstacle(ratio, target, constraints):
        return []
    p, q = ratio.numerator, ratio.denominator
    found: dict[tuple, tuple[int, int]] = {}
    for k in constraints.stages:
        side = _Side(constraints, target, k)
        if len(side.num) == 0 or len(side.den) == 0:
            continue
        ni = np.nonzero(side.num % p == 0)[0]
        want = (side.num[ni] // p) * q
        j = np.clip(np.searchsorted(side.den, want), 0, len(side.den) - 1)
        ok = side.den[j] == want
        ni, j = ni[ok], j[ok]
        lower = side.num_sum[ni] + side.den_sum[j]
        for o in np.argsort(lower, kind="stable"):
            if len(found) >= top and lower[o] > sorted(found.values())[top - 1][0]:
                break  # no later pair can beat the trains kept
            n, d = int(side.num[ni[o]]), int(side.den[j[o]])
            for a in _factorisations(n, k, side.drv_vals, side.distinct):
                for b in _factorisations(d, k, side.dvn_vals, side.distinct):
                    if side.distinct and not set(a).isdisjoint(b):
                        continue
                    found.setdefault((a, b), (sum(a) + sum(b), k))
    ranked = sorted(found.items(), key=lambda item: (item[1], item[0]))[:top]
    return [train_result(_pair_stages(a, b), target) for (a, b), _ in ranked]


def split_ratio(ratio: Fraction, target: Target, constraints: Constraints
                ) -> tuple[TrainResult | None, str]:
    """Fewest-teeth train of exactly ``ratio`` within the bounds, or None and the reason."""
    reason = _prime_obstacle(ratio, target, constraints)
    if reason:
        return None, reason
    trains = exact_trains(ratio, target, constraints, top=1)
    if trains:
        return trains[0], ""
    drv, dvn = constraints.sides(target)
    kmax = max(constraints.stages)
    if ratio.numerator > max(drv) ** kmax or ratio.denominator > max(dvn) ** kmax:
        return None, "larger than any product of the allowed counts"
    return None, "no split into the allowed stages"


def convergents(target: Target, constraints: Constraints | None = None) -> list[Convergent]:
    """Continued-fraction convergents of the target ratio, each checked against the bounds.

    Listed up to the first one larger than any product the bounds allow (at most 20); the
    convergents of the period in crank turns are the reciprocals of these.
    """
    cons = constraints or make_constraints()
    drv, dvn = cons.sides(target)
    kmax = max(cons.stages)
    bound = max(max(drv) ** kmax, max(dvn) ** kmax)
    t = target.ratio
    out: list[Convergent] = []
    import sympy  # here, not at the top: sympy is slow to import and most commands never need it
    from sympy.ntheory.continued_fraction import (
        continued_fraction_convergents,
        continued_fraction_iterator,
    )

    cf = continued_fraction_iterator(sympy.Rational(t.numerator, t.denominator))
    for c in continued_fraction_convergents(cf):
        r = Fraction(int(c.p), int(c.q))
        if r == 0:
            continue
        train, reason = split_ratio(r, target, cons)
        err = _period_error_ppm(r, target)
        conv = Convergent(r, target.crank_days / r, err, train is not None, train, reason)
        out.append(conv)
        if max(r.numerator, r.denominator) > bound or r == t or len(out) >= MAX_CONVERGENTS:
            break
    return out


# ---------------------------------------------------------------------------------------------
# Train-file fragment


def check_prefix(prefix: str) -> str:
    """The fragment's names start with ``prefix`` and are written bare in TOML: A-Z, a-z, 0-9,
    ``_`` and ``-`` only (a train file takes other letters in quotes; rename after pasting)."""
    if not _BARE_KEY_RE.match(prefix):
        raise SearchError(f"prefix: {prefix!r} must be A-Z, a-z, 0-9, '_' or '-' (the "
                          "fragment's names are written bare; rename after pasting)")
    return prefix


def emit_fragment(result: TrainResult, target: Target | None = None, prefix: str = "search",
                  crank_arbor: str | None = None) -> str:
    """The train as TOML to paste into a train file: arbors and meshes, with comments.

    The crank arbor (``crank_arbor``, default ``<prefix>_crank``) carries the first driver;
    arbor ``<prefix>_a<i>`` carries the driven wheel of stage i and the driver of stage i+1;
    the last, ``<prefix>_out``, carries the output wheel.
    """
    check_prefix(prefix)
    crank = crank_arbor or f"{prefix}_crank"
    if not _BARE_KEY_RE.match(crank):
        raise SearchError(f"crank arbor: {crank!r} must be A-Z, a-z, 0-9, '_' or '-'")
    n = len(result.stages)
    r = result.ratio
    lines = [f"# {n}-stage train from wheelwork search: ratio {r} "
             "output turns per crank turn"]
    if target is not None:  # plain figures: '+1.818e-06 ppm' was no figure to read
        day_word = "day" if target.crank_days == 1 else "days"
        lines.append(f"# target: {target.label} (crank {fraction_text(target.crank_days)} "
                     f"{day_word} per turn); "
                     f"period error {figure(result.period_error_ppm, 4, sign=True)} ppm, "
                     f"{figure(result.drift_deg_per_century, 4, sign=True)} deg per century")
    lines.append(f"# period {figure(result.period_days, 9)} days per output turn; output turns "
                 + ("against" if result.reverses else "with") + " the crank")
    arbors = [crank] + [f"{prefix}_a{i}" for i in range(1, n)] + [f"{prefix}_out"]
    carried: list[dict[str, int]] = [{} for _ in arbors]
    meshes = []
    for i, st in enumerate(result.stages, start=1):
        drv, dvn = f"{prefix}_s{i}_driver", f"{prefix}_s{i}_driven"
        carried[i - 1][drv] = st.driver
        carried[i][dvn] = st.driven
        meshes.append((drv, dvn, st))
    for name, wheels in zip(arbors, carried, strict=True):
        lines.append("")
        lines.append(f"[arbors.{name}]")
        inner = ", ".join(f"{w} = {t}" for w, t in wheels.items())
        lines.append(f"wheels = {{ {inner} }}")
    for i, (drv, dvn, st) in enumerate(meshes, start=1):
        lines.append("")
        lines.append(f"[[meshes]]  # stage {i}: {st.driver} drives {st.driven}")
        lines.append(f'wheels = ["{drv}", "{dvn}"]')
    found = _pointer_kind(target)
    if found:
        kind, frame = found
        shows, orrery_arm = kind.removesuffix("_from_sun"), kind.endswith("_from_sun")
        if frame != "equinox":
            lines += ["", f"# target: {target.cycle.name}, measured against the fixed stars: "
                      "a star dial (uncomment and merge with your [train]):",
                      "# [train]", f'# dial = "{frame}"']
        lines += ["", "# a pointer for it (uncomment and merge with your [pointers]):",
                  f"# [pointers.{prefix}_{shows}]", f'# shows = "{shows}"']
        if orrery_arm and shows != "earth":
            lines.append('# seen_from = "sun"  # an orrery arm')
        lines.append(f'# arbor = "{arbors[-1]}"')
        if result.reverses:
            lines.append("# reversed = true  # odd stages: the output turns against the crank")
    return "\n".join(lines) + "\n"


def _pointer_kind(target: Target | None) -> tuple[str, str] | None:
    """The pointer kind that shows the target's cycle and the dial frame in which that cycle
    is its mean period, if the target is a named cycle: the default (equinox) dial when the
    cycle serves there, and of a planet's own period the orrery arm (seen from the Sun) rather
    than the hand seen from the Earth, which shares it."""
    if target is None or target.cycle is None:
        return None
    for frame in FRAMES:
        for kind in KINDS.values():
            if kind.period.get(frame) == target.cycle.key:
                arm = KINDS.get(f"{kind.key}_from_sun")
                if arm is not None and arm.period.get(frame) == target.cycle.key:
                    return arm.key, frame
                return kind.key, frame
    return None


def result_to_dict(res: TrainResult) -> dict:
    """A JSON-ready view of a result (ratios as "p/q" strings, inf as None)."""
    return {
        "stages": [[s.driver, s.driven] for s in res.stages],
        "ratio": f"{res.ratio.numerator}/{res.ratio.denominator}",
        "ratio_float": float(res.ratio),
        "period_days": res.period_days,
        "period_error_ppm": res.period_error_ppm,
        "drift_deg_per_century": res.drift_deg_per_century,
        "one_day_off_years": None if math.isinf(res.one_day_off_years) else res.one_day_off_years,
        "total_teeth": res.total_teeth,
        "exact": res.exact,
        "reverses": res.reverses,
    }
