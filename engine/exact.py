"""Exact numbers: fractions parsed from text, and crank turns kept as whole + fraction.

A long run multiplies a ratio by millions of turns; done in floats, the angle of a slow arbor
would lose its last digits. Here whole turns stay integers, and ``rate * whole`` is reduced
modulo one turn with integer arithmetic, so only the fractional part of a turn is ever a float.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from .errors import ArgumentError, decimal_comma

_NUM = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"  # a plain decimal, exponent allowed
_FRACTION = re.compile(rf"^\s*([+-]?{_NUM})\s*/\s*({_NUM})\s*$")
_DECIMAL = re.compile(rf"^\s*[+-]?{_NUM}\s*$")
_EXPONENT = re.compile(r"[eE]([+-]?\d+)")
MAX_FRACTION_CHARS = 100  # text longer than this is not a number anyone means
MAX_EXPONENT = 1000       # 1e1000: beyond every bound a caller sets, and quick to make exact
_HINT = "a number or a fraction like \"6940/235\""


def parse_fraction(value: object, what: str = "", *, positive: bool = False) -> Fraction:
    """Read an exact number: an integer, a decimal, a ``Fraction``, or text ``"p/q"``/``"29.53"``.

    This is the one fraction reader: train files, command options and the interface all use
    it. Decimals are taken at their written value (``29.53`` is 2953/100, not the nearest
    binary float); nothing is ever evaluated. Text is at most ``MAX_FRACTION_CHARS`` long with
    exponents up to ``MAX_EXPONENT``, so no input makes it build a giant integer.
    ``positive=True`` also refuses zero and negative values. Raises ``ValueError`` with a short
    reason, prefixed by ``what`` when given; callers add the file and item.

    >>> parse_fraction("6940/235")
    Fraction(1388, 47)
    """
    prefix = f"{what}: " if what else ""
    number = _read_fraction(value, prefix)
    if positive and number <= 0:
        raise ValueError(f"{prefix}must be positive, got {_shown(value)}")
    return number


def _shown(value: object) -> str:
    text = repr(value) if not isinstance(value, Fraction) else str(value)
    return text if len(text) <= 40 else text[:37] + "..."


def _read_fraction(value: object, prefix: str) -> Fraction:
    if isinstance(value, bool):
        raise ValueError(f"{prefix}expected {_HINT}, got {_shown(value)}")
    if isinstance(value, Fraction):
        return value
    if isinstance(value, int):
        return Fraction(value)
    if isinstance(value, float):
        if not np.isfinite(value):
            raise ValueError(f"{prefix}expected a finite number, got {_shown(value)}")
        return Fraction(repr(value))
    if isinstance(value, str):
        if len(value) > MAX_FRACTION_CHARS:
            raise ValueError(f"{prefix}{len(value)} characters is too long for a number "
                             f"(at most {MAX_FRACTION_CHARS})")
        for exp in _EXPONENT.findall(value):
            if abs(int(exp)) > MAX_EXPONENT:
                raise ValueError(f"{prefix}exponent {exp} is out of range (at most "
                                 f"±{MAX_EXPONENT}), in {_shown(value)}")
        m = _FRACTION.match(value)
        if m:
            num, den = Fraction(m.group(1)), Fraction(m.group(2))
            if den == 0:
                raise ValueError(f"{prefix}fraction {_shown(value)} divides by zero")
            return num / den
        if _DECIMAL.match(value):
            return Fraction(value.strip())
    raise ValueError(f"{prefix}expected {_HINT}, got {_shown(value)}{decimal_comma(value)}")


def ratio_text(value: Fraction) -> str:
    """An exact ratio as ``p/q`` (``p`` alone for a whole number), as tables and JSON show it.

    >>> ratio_text(Fraction(1388, 47)), ratio_text(Fraction(4))
    ('1388/47', '4')
    """
    return f"{value.numerator}/{value.denominator}" if value.denominator != 1 else \
        str(value.numerator)


def fraction_text(value: Fraction) -> str:
    """An exact number as people write it: ``365.2422`` for a terminating decimal, else "p/q".

    >>> fraction_text(Fraction(1826211, 5000)), fraction_text(Fraction(1388, 47))
    ('365.2422', '1388/47')
    """
    q = value.denominator
    twos = fives = 0
    while q % 2 == 0:
        q //= 2
        twos += 1
    while q % 5 == 0:
        q //= 5
        fives += 1
    if q != 1:
        return f"{value.numerator}/{value.denominator}"
    digits = max(twos, fives)
    if digits == 0:
        return str(value.numerator)
    scaled = abs(value.numerator) * 10**digits // value.denominator
    sign = "-" if value < 0 else ""
    whole, frac = divmod(scaled, 10**digits)
    return f"{sign}{whole}.{frac:0{digits}d}".rstrip("0").rstrip(".")


@dataclass(frozen=True)
class Turns:
    """Crank turns as an exact whole part (int64) and a fraction in [0, 1), both arrays.

    Shapes broadcast like numpy; a scalar input gives 0-d arrays.
    """

    whole: np.ndarray
    frac: np.ndarray

    @staticmethod
    def of(value: Turns | float | int | np.ndarray | Fraction) -> Turns:
        """Turns from a float/int/array (split exactly) or a ``Fraction`` (scalar)."""
        if isinstance(value, Turns):
            return value
        if isinstance(value, Fraction):
            whole = value.numerator // value.denominator
            return Turns(np.asarray(whole, dtype=np.int64),
                         np.asarray(float(value - whole)))
        arr = np.asarray(value)
        if arr.dtype.kind in "iu":
            return Turns(arr.astype(np.int64), np.zeros(arr.shape))
        try:
            if arr.dtype.kind in "USV":  # text is no count of turns, even text of a number
                raise TypeError
            arr = arr.astype(float)
        except (TypeError, ValueError):
            raise ArgumentError(f"crank turns: wanted a number or an array of numbers, got "
                                f"{type(value).__name__} {value!r:.60}") from None
        if not np.all(np.abs(arr) < 2.0 ** 62):  # NaN, infinite, or past whole int64 turns
            bad = arr.flat[np.flatnonzero(~(np.abs(arr) < 2.0 ** 62))[0]]
            raise ArgumentError(f"crank turns: wanted finite numbers of turns (below 2^62), "
                                f"got {bad}")
        whole = np.floor(arr)
        return Turns(whole.astype(np.int64), arr - whole)

    @staticmethod
    def from_days(days: float | np.ndarray, days_per_turn: Fraction) -> Turns:
        """Crank turns that cover ``days`` (float array) at an exact ``days_per_turn``."""
        return Turns.of(np.asarray(days, dtype=float) / float(days_per_turn))

    def to_float(self) -> np.ndarray:
        return self.whole.astype(float) + self.frac

    def __add__(self, other: Turns | int) -> Turns:
        other = Turns.of(other)
        frac = self.frac + other.frac
        carry = np.floor(frac)
        return Turns(self.whole + other.whole + carry.astype(np.int64), frac - carry)

    def __neg__(self) -> Turns:
        carry = (self.frac > 0).astype(np.int64)
        return Turns(-self.whole - carry, np.where(self.frac > 0, 1.0 - self.frac, 0.0))

    def __sub__(self, other: Turns | int) -> Turns:
        return self + (-Turns.of(other))


def turns_mod1(rate: Fraction, turns: Turns) -> np.ndarray:
    """``rate * turns`` modulo one, in [0, 1), exact in the whole turns.

    ``(p * whole mod q) / q`` is computed in integers (Python ints when the numbers are too
    big for int64), then the fractional crank turn adds ``rate * frac`` as a float.
    """
    p, q = rate.numerator, rate.denominator
    whole = turns.whole
    if q < 3_000_000_000:
        w = np.mod(whole, q)
        part = np.mod((p % q) * w, q) / q if p % q else np.zeros(w.shape)
    else:  # denominators this large would overflow int64 products
        w = np.vectorize(lambda n: (p * int(n)) % q, otypes=[object])(whole)
        part = np.asarray(w, dtype=float) / q
    return np.mod(part + float(rate) * turns.frac, 1.0)
