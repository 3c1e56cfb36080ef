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


#: a drift column's decimals: at least hundredths of a degree a century, at most ten-thousandths
#: (0.0001 °/cy is 0.36″ a century, past what any dial shows), none when every drift is
#: 1,000 °/cy or more (a train that far off needs no hundredths); common practice, no source
DRIFT_PLACES = (2, 4)
DRIFT_WHOLE = 999.995  # rounds to 1,000.00


def drift_places(drifts, width: int | None = None) -> int:
    """The decimals of a column of drifts (degrees per century), one number for every row so
    the column lines up on the point: enough for its smallest drift to show two significant
    figures (+0.0008 beside +1.3977 said nothing as +0.00; -0.0255 reads -0.026, the same in
    every column it is in), between :data:`DRIFT_PLACES`, none when every drift is 1,000 °/cy
    or more (+67,988). Given the column's ``width`` (characters, sign included), fewer when a
    figure would not fit and none then reads as zero (+462 beside -23,002); failing that a
    figure too wide is written whole all the same: a number is never cut."""
    ds = [d for d in drifts if d is not None and math.isfinite(d)]
    if ds and all(abs(d) >= DRIFT_WHOLE for d in ds):
        places = 0
    else:
        lo, hi = DRIFT_PLACES
        small = min((abs(d) for d in ds if d != 0), default=None)
        need = lo if small is None else 1 - math.floor(math.log10(small))
        places = min(hi, max(lo, need))
    while width and places > 0 and any(len(fixed(d, places, sign=True)) > width for d in ds):
        fewer = places - 1
        if any(d != 0 and abs(d) < 0.5 * 10.0 ** -fewer for d in ds):
            break  # one would read +0.00 (or +0): wider rather than lose it
        places = fewer
    return places


def drift(x: float, places: int | None = None) -> str:
    """A drift in degrees per century with its sign, to ``places`` decimals (its column's,
    :func:`drift_places`; alone, its own), thousands separated; a dash for one that is not a
    number."""
    if not math.isfinite(x):
        return "—"
    return fixed(x, drift_places([x]) if places is None else places, sign=True)
