"""Exact numbers: the fraction reader never evaluates, Turns keep whole turns exact."""

from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from engine.exact import Turns, parse_fraction, turns_mod1


@pytest.mark.parametrize("value,want", [
    (1, Fraction(1)), ("6940/235", Fraction(1388, 47)), ("365.2422", Fraction(3652422, 10000)),
    (29.53, Fraction(2953, 100)), (" 29.5 / 2 ", Fraction(59, 4)), ("-3/4", Fraction(-3, 4)),
    ("1e3", Fraction(1000)),
])
def test_parse_fraction(value, want):
    assert parse_fraction(value) == want


@pytest.mark.parametrize("value", ["1/0", "abc", "2**10", "__import__('os')", "", True,
                                   float("inf"), "1/2/3", [1]])
def test_parse_fraction_rejects(value):
    with pytest.raises(ValueError):
        parse_fraction(value)


def test_parse_fraction_one_reader_for_every_caller():
    """The same reader serves files, options and the interface: Fractions pass through,
    ``positive`` refuses zero and below, ``what`` names the value, and no text builds a giant
    integer (a long exponent or a long string is refused at once)."""
    assert parse_fraction(Fraction(3, 7)) == Fraction(3, 7)
    assert parse_fraction("1.5e1/3") == 5 and parse_fraction(" 29.530588853 ") == Fraction(
        29530588853, 10**9)
    assert parse_fraction("-2", "x") == -2
    for bad in ("0", "-2", 0, Fraction(-1, 3)):
        with pytest.raises(ValueError, match="^period: must be positive"):
            parse_fraction(bad, "period", positive=True)
    with pytest.raises(ValueError, match="exponent"):
        parse_fraction("1e999999999")
    with pytest.raises(ValueError, match="too long"):
        parse_fraction("1" * 1000)


@given(st.integers(-10**12, 10**12), st.integers(1, 10**6), st.integers(1, 10**6))
def test_turns_mod1_is_exact_in_whole_turns(n, p, q):
    rate = Fraction(p, q)
    exact = rate * n
    want = float(exact - (exact.numerator // exact.denominator))
    got = float(turns_mod1(rate, Turns.of(n)))
    d = abs(got - want) % 1
    assert min(d, 1 - d) < 1e-12


def test_huge_denominators_fall_back_to_python_ints():
    rate = Fraction(7, 10**12 + 39)
    n = 10**15 + 3
    exact = rate * n
    want = float(exact - (exact.numerator // exact.denominator))
    assert float(turns_mod1(rate, Turns.of(n))) == pytest.approx(want, abs=1e-12)


def test_turns_arithmetic_and_shapes():
    t = Turns.of(np.array([-1.25, 0.0, 3.5]))
    assert t.whole.tolist() == [-2, 0, 3] and t.frac.tolist() == [0.75, 0.0, 0.5]
    back = (t + 7) - 7
    assert np.array_equal(back.whole, t.whole) and np.allclose(back.frac, t.frac)
    assert (-Turns.of(2.25)).to_float() == -2.25
    assert Turns.of(Fraction(9, 4)).to_float() == 2.25
    assert Turns.of(5).frac.shape == ()


def test_fraction_text():
    from engine.exact import fraction_text

    assert fraction_text(Fraction(1826211, 5000)) == "365.2422"
    assert fraction_text(Fraction(1388, 47)) == "1388/47"
    assert fraction_text(Fraction(-3, 4)) == "-0.75"
    assert fraction_text(Fraction(7)) == "7"
