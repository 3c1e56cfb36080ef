"""Angles and turns wrapped: to ±180°, made continuous, and the remainder on a whole-number
modulus (0 ≤ x mod m < m) — numpy's own ``np.mod`` is exact but slow (fmod a value), and these
run on every date of a run.
"""

from __future__ import annotations

import numpy as np


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


def mod(x, m: float) -> np.ndarray:
    """``np.mod(x, m)`` for a whole-number modulus m > 0 (360 for degrees, 1 for turns):
    the same values bit for bit, eight to nine times quicker, as float64.

    x − m·⌊x/m⌋ (|x| < 2⁵³ − m; beyond, and for inf and NaN, np.mod itself) with ⌊x/m⌋
    from the correctly rounded quotient: never below the true floor,
    at most one above it (then the difference is just below 0 and m is added). m·⌊x/m⌋ is
    exact for a whole m, the difference is then exact where np.mod's remainder is, and where
    m is added both round the same exact value once (tests/test_angles.py checks the edges
    and random values against np.mod)."""
    x = np.asarray(x, dtype=float)
    q = np.divide(x, m, out=np.empty_like(x))
    np.floor(q, out=q)
    q *= m
    r = np.subtract(x, q, out=q)
    np.add(r, m, out=r, where=r < 0.0)
    lim = _EXACT - m  # beyond, m·⌊x/m⌋ is no longer exact: np.mod itself (and for inf, NaN)
    if x.size and not (-lim < x.min() and x.max() < lim):  # (a NaN fails both)
        far = ~(np.abs(x) < lim)
        r[far] = np.mod(x[far], m)
    return r if r.ndim else r[()]


_EXACT = 2.0 ** 53  # whole numbers below this are exact in double precision
