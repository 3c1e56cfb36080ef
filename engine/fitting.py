"""Least-squares fitting and period search on series over a uniform grid: no astronomy here.

* :func:`fit_line_and_sinusoids` — a straight line fitted jointly with sinusoids of known
  periods, with the slope's standard error;
* :func:`periodic_part` — the strongest sinusoid left in a series (a Hann-windowed transform,
  then a local least-squares search for its frequency);
* :func:`best_offset` — the constant that minimises the RMS of angles wrapped to ±180°;

Long series are averaged in bins of ``m`` grid steps (``FFT_MAX_POINTS`` bins at most) before
the fits: a bin's mean of a line or of a sinusoid is the line, or the sinusoid times a
constant, at the bin's centre, so the fits on the bins are exact for both. The bins are evenly
spaced, so the fit's normal matrix comes from geometric sums in closed form, not from summing
products of its columns, and the columns' sums against the bins and the fitted sinusoids are
made a block at a time from one table of phases and each block's turn, with no array of a
column (the columns are written out only where the closed form declines, for frequencies
less than about a third of a cycle over the span apart).

Every sum over a long array is an elementwise or ``einsum`` reduction, never a BLAS call
(``np.dot``, ``@``, ``lstsq``): BLAS may split a long product over threads, and its idle
workers then spin on the other cores while the caller does other work; the results also stay
the same whatever the thread count (``tests/test_fitting.py``). Only products of a few rows
and columns (normal matrices of at most a few dozen terms) go to numpy's linear algebra.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from .angles import wrap_deg


def sum_sq(x: np.ndarray) -> float:
    """Sum of squares, accumulated in float64 without BLAS."""
    return float(np.einsum("i,i->", x, x, dtype=np.float64))


def _line(y: np.ndarray) -> tuple[float, float]:
    """``(a, b)`` of the least-squares line ``a + b k`` through ``y`` (k = 0..n-1), in closed
    form about the middle index."""
    y = np.asarray(y, dtype=np.float64)
    n = len(y)
    u = np.arange(n, dtype=np.float64) - (n - 1) / 2.0
    b = float(np.einsum("i,i->", u, y)) / sum_sq(u)
    return float(y.mean()) - b * (n - 1) / 2.0, b


FFT_MAX_POINTS = 32_768  # longer residuals are averaged in bins of m dates before fit and FFT


@functools.lru_cache(maxsize=4)
def _hann(n: int) -> np.ndarray:
    return np.hanning(n).astype(np.float32)


@functools.lru_cache(maxsize=4)
def _index32(n: int) -> np.ndarray:
    """The grid index 0..n-1 as float32 (read only: it is shared)."""
    k = np.arange(n, dtype=np.float32)
    k.flags.writeable = False
    return k


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
    rows = y[:nd * m].reshape(nd, m)
    if m <= 8:  # a few columns added in turn: the same sums as ``mean`` (in order) at a
        # quarter of its cost, which reduces a short inner axis slowly
        yd = rows[:, 0].astype(np.float64)
        for i in range(1, m):
            yd += rows[:, i]
        yd /= m
    else:
        yd = rows.mean(axis=1, dtype=np.float64)
    return _Binned(yd, np.arange(nd) * float(m) + (m - 1) / 2.0, m)


@dataclass(frozen=True)
class LineFit:
    """The joint least-squares fit of :func:`fit_line_and_sinusoids`. ``line = (a, b)``: the fitted line
    ``a + b k`` in the grid index k; ``slope_per_step`` is ``b``, ``sigma_per_step`` its
    standard error; ``used`` / ``left_out`` name the periodic terms fitted and those whose
    period is longer than the span allows, or whose trial fit failed: those are also in
    ``set_aside``; ``on_trial`` names the terms of known amplitude fitted over too few of
    their periods to be sure, whose amplitude's spread the standard error takes in (a term
    of ``sized`` kept on trial, whose spread is not given, is not named there)."""

    line: tuple[float, float]
    slope_per_step: float
    sigma_per_step: float
    used: tuple[str, ...]
    left_out: tuple[str, ...]
    binned: _Binned
    set_aside: tuple[str, ...] = ()
    on_trial: tuple[str, ...] = ()


def _phasor(c: np.ndarray, w: float, block: int = 1024) -> np.ndarray:
    """``exp(i w c)`` on an evenly spaced ``c``: one table of ``block`` phases turned by each
    block's start phase (a complex multiply a point instead of a cosine and a sine)."""
    n = len(c)
    dc = float(c[1] - c[0]) if n > 1 else 1.0
    nb = -(-n // block)
    tab = np.exp(1j * w * (c[0] + dc * np.arange(block)))
    start = np.exp(1j * w * dc * block * np.arange(nb))
    return (start[:, None] * tab[None, :]).reshape(-1)[:n]


def _dirichlet(theta: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """``sum exp(i theta j)`` and ``sum j exp(i theta j)`` over the ``n`` centred indices
    ``j = k - (n - 1) / 2`` (k = 0..n-1), in closed form: the first is real,
    ``D = sin(n theta / 2) / sin(theta / 2)``, the second ``-i dD/dtheta`` (zero at theta 0)."""
    half = np.sin(theta / 2)
    big = np.sin(n * theta / 2)
    zero = half == 0
    safe = np.where(zero, 1.0, half)
    d = np.where(zero, float(n), big / safe)
    dd = (0.5 * n * np.cos(n * theta / 2) * safe - 0.5 * big * np.cos(theta / 2)) / safe ** 2
    return d, np.where(zero, 0.0, dd)


def _gram(c: np.ndarray, mid: float, half: float, ws: tuple[float, ...]) -> np.ndarray | None:
    """The normal matrix of the design [1, u, cos(w c), sin(w c)...] (see :func:`_design`) on
    the evenly spaced ``c``, from geometric sums in closed form: a product of two columns is
    a sum of sinusoids at the frequencies' sums and differences, each summed exactly. ``None``
    when two frequencies differ by less than about a third of a cycle over the span but are
    not equal (the closed forms lose precision there; the caller sums the products instead)."""
    n = len(c)
    dc = float(c[1] - c[0]) if n > 1 else 1.0
    w = np.asarray(ws, dtype=float)
    k = len(w)
    plus = (w[:, None] + w[None, :]).ravel()
    minus = (w[:, None] - w[None, :]).ravel()
    freqs = np.concatenate((w, plus, minus))
    theta = freqs * dc
    apart = n * np.abs(np.sin(theta / 2))  # about pi times the cycles over the span (mod n)
    if np.any((apart < 1.0) & (freqs != 0)):
        return None
    d, dd = _dirichlet(theta, n)
    turn = np.exp(1j * freqs * mid)  # the sums are about the middle of the span
    e = turn * d  # sum exp(i f c)
    f = turn * (-1j * dd) * (dc / half)  # sum u exp(i f c)
    ew, fw = e[:k], f[:k]
    ep, em = e[k:k + k * k].reshape(k, k), e[k + k * k:].reshape(k, k)
    g = np.empty((2 + 2 * k, 2 + 2 * k))
    g[0, 0] = n
    g[0, 1] = g[1, 0] = 0.0
    g[1, 1] = (dc / half) ** 2 * n * (n * n - 1) / 12.0
    cos_i, sin_i = slice(2, None, 2), slice(3, None, 2)
    g[0, cos_i] = g[cos_i, 0] = ew.real
    g[0, sin_i] = g[sin_i, 0] = ew.imag
    g[1, cos_i] = g[cos_i, 1] = fw.real
    g[1, sin_i] = g[sin_i, 1] = fw.imag
    g[cos_i, cos_i] = 0.5 * (em.real + ep.real)
    g[sin_i, sin_i] = 0.5 * (em.real - ep.real)
    cs = 0.5 * (ep.imag - em.imag)  # [a, b]: sum cos(a c) sin(b c)
    g[cos_i, sin_i] = cs
    g[sin_i, cos_i] = cs.T
    return g


def _normal(b: _Binned, ws: tuple[float, ...], all_ws: tuple[float, ...], cache: dict | None):
    """The inverse normal matrix of the columns [1, u, cos(w c), sin(w c)...] of ``ws`` among
    those of ``all_ws`` (their closed form, :func:`_gram`, made once a run with ``cache``),
    their rows in it, and the centre and half-width of the span; ``None`` when the closed
    form declines (then :func:`_design` sums the products)."""
    key = ("normal", len(b.y), b.m, all_ws)
    if cache is not None and key in cache:
        g, mid, half = cache[key]
    else:
        mid, half = (b.c[0] + b.c[-1]) / 2.0, max((b.c[-1] - b.c[0]) / 2.0, 1.0)
        g = _gram(b.c, mid, half, all_ws)
        if cache is not None:
            cache[key] = (g, mid, half)
    if g is None:
        return None
    idx = [0, 1]
    for w in ws:
        i = all_ws.index(w)
        idx += [2 + 2 * i, 3 + 2 * i]
    return idx, np.linalg.inv(g[np.ix_(idx, idx)]), mid, half


def _blocks(y: np.ndarray, block: int) -> tuple[np.ndarray, np.ndarray]:
    """``y`` as whole blocks of ``block`` values (rows) and the part block left."""
    whole = len(y) // block
    return y[:whole * block].reshape(whole, block), y[whole * block:]


def _phase_tables(c: np.ndarray, w: float, block: int) -> tuple[np.ndarray, np.ndarray]:
    """``exp(i w c)`` on the evenly spaced ``c`` as a table of ``block`` phases and each
    block's turn (the factors :func:`_phasor` multiplies)."""
    n = len(c)
    dc = float(c[1] - c[0]) if n > 1 else 1.0
    nb = -(-n // block)
    return (np.exp(1j * w * (c[0] + dc * np.arange(block))),
            np.exp(1j * w * dc * block * np.arange(nb)))


def _sums_against(y: np.ndarray, tab: np.ndarray, start: np.ndarray, block: int) -> complex:
    """``sum y exp(i w c)`` from the tables of :func:`_phase_tables`: each block's sums
    against the table's cosines and sines, turned by the block's phase."""
    rows, tail = _blocks(y, block)
    zc = np.einsum("ij,j->i", rows, tab.real)
    zs = np.einsum("ij,j->i", rows, tab.imag)
    if len(tail):
        zc = np.append(zc, np.einsum("j,j->", tail, tab.real[:len(tail)]))
        zs = np.append(zs, np.einsum("j,j->", tail, tab.imag[:len(tail)]))
    z = zc + 1j * zs
    return complex(np.einsum("i,i->", start[:len(z)], z))


def _fit_by_blocks(b: _Binned, ws: tuple[float, ...], idx, g_inv, mid: float, half: float,
                   block: int = 1024) -> tuple[np.ndarray, np.ndarray]:
    """The joint fit's coefficients (in the order of ``idx``: 1, u, then cos and sin of each
    of ``ws``) and its residual on the bins, without the design: each column's sum against
    the bins and the fitted sinusoids are made a block at a time from a table of phases and
    each block's turn (:func:`_phase_tables`), on the bins alone (no array of a column)."""
    y = b.y
    u = (b.c - mid) / half
    tables = [_phase_tables(b.c, w, block) for w in ws]
    xty = [float(y.sum()), float(np.einsum("i,i->", u, y))]
    for tab, start in tables:
        z = _sums_against(y, tab, start, block)
        xty += [z.real, z.imag]
    coef = g_inv @ np.array(xty)  # small: terms × terms
    res = y - (coef[0] + coef[1] * u)
    if tables:
        rows, tail = _blocks(res, block)
        # p cos + q sin = Re((p - i q) exp(i w c)), a block at a time: each block's turn
        # times the coefficient, by the table
        turns = np.array([(coef[2 + 2 * k] - 1j * coef[3 + 2 * k]) * start
                          for k, (_, start) in enumerate(tables)])  # terms × blocks
        tab = np.array([t for t, _ in tables])  # terms × block
        if len(rows):
            m = len(rows)
            rows -= np.einsum("kb,kj->bj", turns[:, :m].real, tab.real)
            rows += np.einsum("kb,kj->bj", turns[:, :m].imag, tab.imag)
        if len(tail):
            t = len(tail)
            tail -= np.einsum("k,kj->j", turns[:, -1].real, tab[:, :t].real)
            tail += np.einsum("k,kj->j", turns[:, -1].imag, tab[:, :t].imag)
    return coef, res


def _design(b: _Binned, ws: tuple[float, ...], all_ws: tuple[float, ...], cache: dict | None):
    """The design [1, u, cos(w c), sin(w c)...] on the bins (u the centred, scaled index) for
    the frequencies ``all_ws``, one row a column (its terms × bins), and its normal matrix
    (:func:`_gram`), built once a run (``cache``) for every pointer; then the rows of ``ws``
    among them and the inverse of their normal matrix."""
    key = (len(b.y), b.m, all_ws)
    if cache is not None and key in cache:
        x, g, mid, half = cache[key]
    else:
        mid, half = (b.c[0] + b.c[-1]) / 2.0, max((b.c[-1] - b.c[0]) / 2.0, 1.0)
        x = np.empty((2 + 2 * len(all_ws), len(b.c)))
        x[0] = 1.0
        x[1] = (b.c - mid) / half
        for i, w in enumerate(all_ws):
            z = _phasor(b.c, w)
            x[2 + 2 * i], x[3 + 2 * i] = z.real, z.imag
        g = _gram(b.c, mid, half, all_ws)
        if g is None:  # columns of order one: a well-conditioned matrix
            g = np.einsum("ik,jk->ij", x, x)
        if cache is not None:
            cache[key] = (x, g, mid, half)
    idx = [0, 1]
    for w in ws:
        i = all_ws.index(w)
        idx += [2 + 2 * i, 3 + 2 * i]
    return x, idx, np.linalg.inv(g[np.ix_(idx, idx)]), mid, half


def fit_line_and_sinusoids(resid: np.ndarray, step_days: float, terms=(), *,
                           cache: dict | None = None, all_terms=(), min_cycles: float = 1.0,
                           minor: dict[str, float] | None = None,
                           known=None, sure_cycles: float = 1.0, slack: float = 2.0,
                           spread: dict[str, float] | None = None,
                           sized: dict[str, float] | None = None,
                           _set_aside: tuple[tuple[str, float], ...] = ()) -> LineFit:
    """Straight line plus sinusoids at known periods, fitted jointly by least squares to a
    series on a uniform grid (``terms``: ``(name, period_days)`` pairs).

    A term is fitted when the span holds at least ``min_cycles`` of its periods (a line
    and a sinusoid separate cleanly once a whole cycle is seen; over less they trade places);
    the others are returned in ``left_out`` (also those the grid cannot show, see ``fits``). The fit is made on the bins of
    ``FFT_MAX_POINTS`` (exact for these functions, see :class:`_Binned`). ``cache`` and
    ``all_terms`` (the terms of every pointer of a run) let the design be built once a run.

    The slope's standard error is the least-squares one with the residual's degrees of
    freedom counted from its sign changes (one independent value per change, plus one):
    the residual of a real series is smooth, not independent from date to date, and this
    counts a leftover swing of period P as one value per half period. A left-out term of
    ``minor`` (``{name: amplitude}``) adds its largest possible tilt of the line. Any other
    term left out for being longer than the span adds the largest tilt a swing of its period
    can give the line at the amplitude fitted to it with the line (the line takes up part of
    such a swing, so the residual alone understates the error); infinite when the span shows
    too little of its curve to fit one. It is a guide
    to the size of the uncertainty, not a bound: other variations slower than the span are
    indistinguishable from the line's slope and not in it.

    ``known``: a part of the series known in advance, as a function of the grid index (an
    array of floats) — taken off the bins before anything is fitted, instead of fitted: a
    slow term fitted freely over a cycle or two takes up whatever else the series holds near
    its period, where its known shape cannot. It must vary slowly over a bin (the bins'
    centres stand for their means); the returned ``binned`` is without it.

    A term of ``minor`` fitted over fewer than ``sure_cycles`` of its periods is on trial: a
    line and a sinusoid over a cycle or two share much of their shape, so the sinusoid's
    column takes up whatever else the series holds near its period and can tilt the line
    far more than the term itself could. When its fitted amplitude is more than ``slack``
    times the known one, or less than the known one over ``slack``, the fit is refused and
    made again without the term, which then counts as a left-out minor term (its largest
    tilt added; named in ``set_aside``); else it stays, and the largest tilt a swing the size
    of its amplitude's uncertainty (``spread``, by name; none when not given) can give the
    line is added to the standard error (named in ``on_trial``). ``sized``
    (``{name: amplitude}``) are terms put on trial the same way, whose amplitude is known
    near their own epoch only (an equation of centre: the eccentricity changes over
    millennia): refused, they count as left out with that amplitude's largest tilt; left out
    for a span shorter than their period, as any other term (their amplitude fitted with the
    line).
    """
    b = _binned(resid)
    if known is not None:
        b = _Binned(b.y - np.asarray(known(b.c), dtype=np.float64), b.c, b.m)
    nd = len(b.y)
    span = (len(resid) - 1) * step_days

    def fits(period):
        """A whole period in the span, seen by the step (at least two steps a period: a faster
        term only shows as an alias, which could be anything), and on the bins a usable
        column: its frequency, neither slower than a cycle a span nor
        within a cycle a span of the bins' Nyquist frequency; not averaged away by the bins."""
        if span < min_cycles * period or period < 2 * step_days:
            return False  # not a whole period in the span, or too fast for the step to see
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
        return LineFit((float(b.y[0]) if nd else 0.0, 0.0), 0.0, float("nan"), (), tuple(left),
                        b)
    all_ws = sorted({*ws, *(2 * np.pi * step_days / p for _, p in all_terms if fits(p))})
    normal = _normal(b, tuple(ws), tuple(all_ws), cache)
    if normal is not None:
        idx, g_inv, mid, half = normal
        coef, res = _fit_by_blocks(b, tuple(ws), idx, g_inv, mid, half)
    else:  # near-equal frequencies: the design's columns and their summed products
        x, idx, g_inv, mid, half = _design(b, tuple(ws), tuple(all_ws), cache)
        x = x[:max(idx) + 1]  # the rows in use and those between them
        coef = np.zeros(len(x))
        coef[idx] = g_inv @ np.einsum("ik,k->i", x, b.y)[idx]  # small: terms × terms
        res = b.y - np.einsum("ik,i->k", x, coef)
        coef = coef[idx]
    minor = minor or {}
    sizes = {**(sized or {}), **minor}  # every term of known amplitude, for the trial
    trial = [(j, name, period) for j, (name, period) in
             enumerate((n, p) for n, p in terms if n in used)
             if name in sizes and span < sure_cycles * period]
    refused = []
    for j, name, period in trial:
        w = 2 * np.pi * step_days / period
        gain = 1.0 if b.m == 1 else abs(math.sin(b.m * w / 2) / (b.m * math.sin(w / 2)))
        amp = math.hypot(coef[2 + 2 * j], coef[3 + 2 * j]) / gain
        if not sizes[name] / slack <= amp <= sizes[name] * slack:
            refused.append((name, period))
    if refused:  # made again without them: they count as left-out minor terms
        return fit_line_and_sinusoids(
            resid, step_days, tuple((n, p) for n, p in terms
                                    if n not in {name for name, _ in refused}),
            cache=cache, all_terms=all_terms, min_cycles=min_cycles, minor=minor, known=known,
            sure_cycles=sure_cycles, slack=slack, spread=spread, sized=sized,
            _set_aside=(*_set_aside, *refused))
    rss = sum_sq(res)
    changes = int(np.count_nonzero(np.signbit(res[1:]) != np.signbit(res[:-1])))
    dof = max(min(changes + 1, nd) - ncol, 1)
    var_u = float(g_inv[1, 1])
    slope = float(coef[1]) / half
    sigma = math.sqrt(rss * var_u / dof) / half
    for name, period in terms:
        if name in left and name in minor:
            sigma = math.hypot(sigma, minor[name] * worst_tilt(len(resid), step_days, period))
        elif name in left and span < min_cycles * period and period >= 2 * step_days:
            # a swing longer than the span: the line takes up part of it, and the residual
            # about the line says nothing of how much. Its amplitude, fitted with the line,
            # and the most a swing of that size can tilt a line over the span
            amp = _unresolved_amplitude(b, res, tuple(ws), 2 * np.pi * step_days / period)
            sigma = math.hypot(sigma, amp * worst_tilt(len(resid), step_days, period))
    spread = spread or {}
    for j, name, _ in trial:  # fitted on trial and kept: its size's uncertainty
        if spread.get(name):
            sigma = math.hypot(sigma, spread[name] * _trial_tilt(b, tuple(ws), j) / half)
    for name, period in _set_aside:  # refused on trial: as a left-out minor term
        sigma = math.hypot(sigma, sizes[name] * worst_tilt(len(resid), step_days, period))
    aside = tuple(name for name, _ in _set_aside)
    a = float(coef[0]) - slope * mid
    return LineFit((a, slope), slope, sigma, tuple(used), (*left, *aside), b, aside,
                   tuple(name for _, name, _ in trial if spread.get(name)))


def _unresolved_amplitude(b: _Binned, res: np.ndarray, ws: tuple[float, ...],
                         w: float) -> float:
    """Amplitude of the sinusoid of frequency ``w`` (radians per grid step, less than a
    cycle over the span) fitted jointly with the line and the sinusoids ``ws`` to the bins,
    made from ``res``, the bins' residual about the fit of the line and ``ws`` alone (the
    added columns' coefficients are the same, with far less rounding to magnify): the design
    written out (a few columns) and its small normal matrix solved, the columns
    taken about the span's middle so that a part cycle stays well conditioned; infinite when
    the span holds too little of the cycle to tell the sinusoid from the line at all."""
    mid, half = (b.c[0] + b.c[-1]) / 2.0, max((b.c[-1] - b.c[0]) / 2.0, 1.0)
    t = b.c - mid
    cols = [np.ones_like(t), t / half]
    for v in ws:
        z = _phasor(b.c, v)
        cols += [z.real, z.imag]
    cols += [np.cos(w * t), np.sin(w * t)]
    x = np.array(cols)
    if len(b.y) < len(x) + 2:
        return math.inf
    g = np.einsum("ik,jk->ij", x, x)  # small: terms × terms
    scale = np.sqrt(np.diag(g))
    gs = g / np.outer(scale, scale)  # small: terms × terms
    if np.linalg.cond(gs) > 1e12:
        return math.inf
    coef = np.linalg.solve(gs, np.einsum("ik,k->i", x, res) / scale) / scale  # small
    return float(math.hypot(coef[-2], coef[-1]))


def _trial_tilt(b: _Binned, ws: tuple[float, ...], j: int) -> float:
    """Largest slope (per unit of the centred, scaled index u) the joint fit of the line and
    the sinusoids ``ws`` gives a swing at the frequency ``ws[j]`` whose amplitude changes
    by one unit from the span's middle to either end (``u cos``, ``u sin``, the worse phase):
    what a term fitted over a cycle or two passes on to the line when its size is not the
    same all through the span. The design written out (a few columns, on the bins)."""
    mid, half = (b.c[0] + b.c[-1]) / 2.0, max((b.c[-1] - b.c[0]) / 2.0, 1.0)
    u = (b.c - mid) / half
    cols = [np.ones_like(u), u]
    for v in ws:
        z = _phasor(b.c, v)
        cols += [z.real, z.imag]
    x = np.array(cols)
    g = np.einsum("ik,jk->ij", x, x)  # small: terms × terms
    z = _phasor(b.c, ws[j])
    tilt = [np.linalg.solve(g, np.einsum("ik,k->i", x, u * part))[1]  # small
            for part in (z.real, z.imag)]
    return float(math.hypot(*tilt))


def worst_tilt(n: int, step_days: float, period_days: float) -> float:
    """Largest slope (per grid step) that a unit sinusoid of ``period_days``, at its worst
    phase, gives a least-squares line over ``n`` grid dates."""
    t = np.linspace(-0.5, 0.5, 257) * (n - 1)  # grid steps about the middle
    w = 2 * np.pi * step_days / period_days
    suu = sum_sq(t)
    return math.hypot(float(np.einsum("i,i->", t, np.cos(w * t))),
                      float(np.einsum("i,i->", t, np.sin(w * t)))) / suu


def periodic_part(resid: np.ndarray, step_days: float, *, line: tuple[float, float] | None = None,
                  binned: _Binned | None = None) -> tuple[float, float | None]:
    """Amplitude (units of ``resid``) and period (days) of the strongest sinusoid in a series on
    a uniform grid, after removing ``line = (a, b)``, i.e. ``a + b k`` (default: its own
    least-squares line). ``(nan, None)`` when the series is too short to search;
    ``(0.0, None)`` when it was searched and holds no swing: it is flat, or what is strongest
    in the band is the edge of a change slower than the band (a curve, not a swing).

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
        return math.nan, None
    if line is None:
        line = _line(y)
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
        return math.nan, None
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
    if f <= (1.0 + 1e-6) / nd:
        # the best sinusoid wants one cycle a span or fewer: what is there is a change slower
        # than any swing the span can show (a curve the line leaves), not a swing
        return 0.0, None
    cycles_per_step = f / m
    if not 0 < cycles_per_step < 0.5:
        return 0.0, None
    full = np.multiply(_index32(n), np.float32(b))  # y less the line, in one array
    full += np.float32(a)
    np.subtract(y, full, out=full)
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
    whole = n // block
    rows = np.asarray(y, dtype=np.float32)[:whole * block].reshape(whole, block)
    ph = w * np.arange(block)
    c_tab, s_tab = np.cos(ph).astype(np.float32), np.sin(ph).astype(np.float32)
    # per block: sum y cos(w j), sum y sin(w j); the last, part block on its own
    zc, zs = np.einsum("ij,j->i", rows, c_tab), np.einsum("ij,j->i", rows, s_tab)
    if whole < nb:
        tail = np.asarray(y, dtype=np.float32)[whole * block:]
        zc = np.append(zc, np.einsum("j,j->", tail, c_tab[:len(tail)]))
        zs = np.append(zs, np.einsum("j,j->", tail, s_tab[:len(tail)]))
    start = w * block * np.arange(nb)
    cs, ss = np.cos(start), np.sin(start)
    # cos(w(kb + j)) = cos(w kb) cos(w j) - sin(w kb) sin(w j), and likewise for sin
    sc = float(np.einsum("i,i->", cs, zc) - np.einsum("i,i->", ss, zs))
    sn = float(np.einsum("i,i->", ss, zc) + np.einsum("i,i->", cs, zs))
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
    if float(e.max()) - float(e.min()) < 179.0:
        # within less than a half turn of each other: taken about any offset among them
        # nothing wraps, so the minimiser is the plain mean (what the iteration below
        # reaches from the circular mean, which lies among them)
        c = float(e.mean(dtype=np.float64))
        return float(wrap_deg(c)), math.sqrt(sum_sq(e - np.float32(c)) / e.size)
    sample = e[:: max(1, e.size // 8192)].astype(float)
    rad = np.radians(sample)
    c = math.degrees(math.atan2(np.sin(rad).sum(), np.cos(rad).sum()))
    for _ in range(6):
        move = float(wrap_deg(e - np.float32(c)).mean(dtype=float))
        c += move
        if abs(move) < 1e-7:
            break
    left = wrap_deg(e - np.float32(c))
    return float(wrap_deg(c)), float(math.sqrt(sum_sq(left) / e.size))
