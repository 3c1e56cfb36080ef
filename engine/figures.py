"""Numbers as text in plain figures: what every report, table and message writes a measured
value with, never in e-notation (a reader of a maker's report meets 3.44e-05 m/s or
-2.979e+04 ppm as a puzzle, not a figure). Standard library only, so a command's ``--help``
can import it."""

from __future__ import annotations

import math


def figure(x: float, digits: int = 3, sign: bool = False, group: bool = True) -> str:
    """A number in plain figures, never e-notation: ``digits`` significant figures (trailing
    zeros dropped, as ``g`` does), a number of ``10 ** digits`` or more whole, with thousands
    separated (``-29,790``, ``10,743.60653``, ``0.0001638``); ``sign``: a ``+`` before a
    positive number; ``group=False``: no separators, for a value the reader is told to type
    into a train file or an option."""
    if not math.isfinite(x):
        return str(x)
    if x == 0:
        return "+0" if sign else "0"
    comma = "," if group else ""
    mag = math.floor(math.log10(abs(x)))
    if mag >= digits - 1:
        text = f"{x:{comma}.0f}"
    else:
        text = f"{x:{comma}.{digits - 1 - mag}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
    return ("+" + text) if sign and x > 0 else text


def fixed(x: float, places: int, sign: bool = False, digits: int | None = None) -> str:
    """A number to ``places`` decimals with its thousands separated, as :func:`figure` writes
    a large one (``-94,033.333``, ``+0.028``), for a column whose figures line up on the
    point; ``sign``: a ``+`` before a positive number. ``digits``: no more significant
    figures than that where ``places`` would give more — a large value drops decimals, down
    to none, and its whole part is never rounded (``fixed(-752211.737, 3, digits=4)`` is
    ``-752,212``, ``fixed(-11.5414, 3, digits=4)`` ``-11.54``), while a small one keeps its
    ``places`` (``fixed(0.0008, 4, digits=4)`` is ``0.0008``)."""
    if not math.isfinite(x):
        return str(x)
    if digits is not None and x != 0:
        mag = math.floor(math.log10(abs(x)))
        if digits - 1 - mag < places:  # more figures than digits: drop decimals
            places = max(0, digits - 1 - mag)
            # 99.996 to 4 figures rounds up to 100.0, not 100.00
            if math.floor(math.log10(round(abs(x), places))) > mag:
                places = max(0, places - 1)
    return f"{x:{'+' if sign else ''},.{places}f}"


def line_up(cells: list[str]) -> list[str]:
    """Figures padded on the right with spaces so that, set flush right in a column, their
    decimal points line up (a whole number's last figure stands where the point would):
    ``["+0.250", "-11.54", "-752,212"]`` → ``["+0.250", "-11.54 ", "-752,212    "]``."""
    after = [len(c) - c.index(".") - 1 if "." in c else -1 for c in cells]
    most = max(after, default=-1)
    return [c + " " * (most - a) for c, a in zip(cells, after, strict=True)]
