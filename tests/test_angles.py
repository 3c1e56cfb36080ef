"""Angle wrapping: to ±180°, made continuous, and the remainder on a whole-number modulus,
which must give numpy's own ``np.mod`` bit for bit (it replaces it on every date of a run)."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from engine.angles import mod, unwrap_deg, wrap_deg


def test_wrap_and_unwrap():
    x = np.array([0.0, 179.0, 181.0, -181.0, 540.0 + 10, -720.0 - 5])
    assert np.allclose(wrap_deg(x), [0, 179, -179, 179, -170, -5])
    assert wrap_deg(np.float32(359.5)).dtype == np.float32
    ramp = np.linspace(0, 3000, 4000)
    assert np.allclose(unwrap_deg(wrap_deg(ramp)), ramp)


def _same(a, b) -> bool:
    """Equal bit for bit (NaN where both are NaN, and the sign of zero)."""
    a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    return a.shape == b.shape and np.array_equal(a.view(np.int64), b.view(np.int64))


def test_mod_is_numpys_on_the_edges():
    for m in (360.0, 1.0, 7.0, 86400.0):
        k = np.arange(-50.0, 51.0)
        ulps = np.array([-3, -2, -1, 0, 1, 2, 3])
        on = k[:, None] * m
        # every multiple of m and the floats a few units of the last place either side
        edges = [on]
        for u in ulps[ulps != 0]:
            edge = on.copy()
            for _ in range(abs(u)):
                edge = np.nextafter(edge, np.inf if u > 0 else -np.inf)
            edges.append(edge)
        tiny = np.array([0.0, -0.0, 1e-300, -1e-300, 5e-324, -5e-324, 1e-17, -1e-17,
                         np.inf, -np.inf, np.nan, 2.0 ** 52, -(2.0 ** 52), 123456789.123])
        x = np.concatenate([np.ravel(e) for e in edges] + [tiny])
        with np.errstate(invalid="ignore"):  # inf and NaN, as np.mod
            assert _same(mod(x, m), np.mod(x, m)), m
            for value in x[::7]:
                assert _same(mod(value, m), np.mod(value, m))


@settings(max_examples=300, deadline=None)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True, width=64), min_size=1,
                max_size=50),
       st.sampled_from([360.0, 1.0, 2.0, 12.0, 29.0, 65536.0]))
def test_mod_is_numpys_on_any_floats(xs, m):
    x = np.array(xs, dtype=float)
    with np.errstate(invalid="ignore", over="ignore"):
        assert _same(mod(x, m), np.mod(x, m)), (x, mod(x, m), np.mod(x, m))


def test_mod_keeps_shape_and_gives_float64():
    x = np.arange(12, dtype=np.float32).reshape(3, 4) * 100.0
    out = mod(x, 360.0)
    assert out.shape == (3, 4) and out.dtype == np.float64
    assert np.ndim(mod(725.0, 360.0)) == 0 and float(mod(725.0, 360.0)) == 5.0
