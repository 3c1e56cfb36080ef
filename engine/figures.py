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


def table_cells(cells: list[str], style: str = "") -> list:
    """Lined-up figures (:func:`line_up`, :func:`error_column`) as cells of a rich table
    column set flush right, each keeping the spaces after its figure: rich strips a cell's
    trailing spaces before it justifies it right, which set ``+16,949`` flush with
    ``+0.051``'s last decimal. Each is a ``rich.padding.Padding`` of the figure's text with
    those spaces on its right (rich is imported here, not at the top: this module is standard
    library only)."""
    from rich.padding import Padding
    from rich.text import Text

    out = []
    for c in cells:
        body = c.rstrip(" ")
        out.append(Padding(Text(body, style=style), (0, len(c) - len(body), 0, 0)))
    return out


#: one rule writes a period error (ppm) and a drift (°/cy) wherever it is shown, a table of the
#: command line or a panel of the interface: a column's decimals are enough for its smallest
#: figure to show two significant figures, at least two, at most four (0.0001 °/cy is 0.36″ a
#: century, past what any dial shows) unless that would write a small figure as zero, when
#: its first significant figure is kept; a figure of 1,000 or more is written whole (a train
#: that far off needs no hundredths); common practice, no source
ERROR_PLACES = (2, 4)
WHOLE_FROM = 1000.0
#: below a thousand-millionth a period error is a relative 1e-15, the rounding of a double
MOST_PLACES = 9
DRIFT_PLACES = ERROR_PLACES  # the name the interface's tests know


def _whole(x: float, places: int) -> bool:
    """Whether ``x`` is written whole: 1,000 or more once rounded (999.996 reads 1,000)."""
    return round(abs(x), places) >= WHOLE_FROM


def _text(x: float, places: int) -> str:
    return fixed(x, 0 if _whole(x, places) else places, sign=True)


def error_places(xs, width: int | None = None) -> int:
    """The decimals of a column of period errors or drifts, one number for every row so the
    column lines up on the point (:func:`error_column`): enough for its smallest figure under
    1,000 to show two significant figures (+0.0008 beside +1.3977 said nothing as +0.00;
    -0.0255 reads -0.026 and -11.5414 ppm -11.54 in every table it is in), between
    :data:`ERROR_PLACES` but never so few that a figure reads as zero; none when every figure
    is 1,000 or more (+67,988), which are written whole in any column. Given the column's
    ``width`` (characters, sign and lining up included), fewer when a figure would not fit
    and none then reads as zero (+462 beside -23,002); failing that a figure too wide is
    written whole all the same: a number is never cut."""
    ds = [d for d in xs if d is not None and math.isfinite(d)]
    lo, hi = ERROR_PLACES
    if ds and all(_whole(d, lo) for d in ds):
        return 0
    small = min((abs(d) for d in ds if d != 0 and not _whole(d, lo)), default=None)
    if small is None:
        places = lo
    else:
        places = min(hi, max(lo, 1 - math.floor(math.log10(small))))
        while places < MOST_PLACES and small < 0.5 * 10.0 ** -places:
            places += 1  # it would read +0.0000: its first significant figure
    while width and places > 0 and max(map(len, error_column(ds, places))) > width:
        fewer = places - 1
        if any(d != 0 and abs(d) < 0.5 * 10.0 ** -fewer for d in ds):
            break  # one would read +0.00 (or +0): wider rather than lose it
        places = fewer
    return places


def error(x: float, places: int | None = None) -> str:
    """A period error (ppm) or a drift (°/cy) with its sign, to ``places`` decimals (its
    column's, :func:`error_places`; alone, its own), whole from 1,000, thousands separated; a
    dash for one that is not a number (or None)."""
    if x is None or not math.isfinite(x):
        return "—"
    return _text(x, error_places([x]) if places is None else places)


def sigma_places(sigma: float | None) -> int | None:
    """The decimals of a figure measured with the standard error ``sigma``: the σ's to two
    significant figures (``0.079``: three), bounded as :func:`error_places` bounds a column's
    — at most four unless that would write the σ as zero, when its first significant figure is
    kept (``0.00003``: five) — and none for a σ of ten or more; None without a σ (none, zero
    or not a number). A figure written to more decimals than this shows digits its σ does
    not know."""
    if sigma is None or not math.isfinite(sigma) or sigma <= 0:
        return None
    places = min(ERROR_PLACES[1], max(0, 1 - math.floor(math.log10(sigma))))
    while places < MOST_PLACES and sigma < 0.5 * 10.0 ** -places:
        places += 1  # it would read 0.0000: its first significant figure
    return places


def fixed_to_sigma(x: float, sigma: float | None, most: int) -> str:
    """A measured value to the decimals its standard error knows (:func:`sigma_places`), at
    most ``most`` of them (the decimals it is given to), thousands separated: ΔT of
    ``12,817 s`` beside a σ of 328 s, where ``12,816.7`` showed a tenth of a second of a
    figure known to five minutes; ``69.1 s`` beside 0.001 s (a tenth is all it is given to).
    Without a σ, ``most`` decimals."""
    places = sigma_places(sigma)
    return fixed(x, most if places is None else min(most, places))


def error_with_sigma(x: float, sigma: float | None,
                     sign: bool = True) -> tuple[str, str | None]:
    """A drift (°/cy) or period error measured with its standard error ``sigma``, as
    ``(value, sigma)`` texts: the σ to two significant figures and the value to the same
    decimals (:func:`sigma_places`: ``-0.224``, ``0.079``), and a value of 1,000 or more
    whole (``+1,235``, its σ still to two figures). Without a σ (none, zero or not a number)
    the value alone by :func:`error`, and None for the σ. ``sign=False``: no ``+`` before a
    positive value, for a figure that is never negative (a spread)."""
    if x is None or not math.isfinite(x):
        return "—", None
    places = sigma_places(sigma)
    if places is None:
        text = error(x)
        return (text if sign else text.lstrip("+")), None
    whole = _whole(x, places)
    return fixed(x, 0 if whole else places, sign=sign), fixed(sigma, places)


def error_sigma_column(xs, sigmas) -> tuple[list[str], list[str | None]]:
    """A column of drifts (or period errors) each measured with its standard error, as
    :func:`error_with_sigma` writes each row — a value to its own σ's decimals, so none shows
    digits its σ does not know (-0.4312 beside 0.61 said more than it knew) — padded so that
    set flush right their points line up (:func:`line_up`), and each row's σ text (None
    without one). A row without a σ has its value to the decimals :func:`error_places` gives
    those rows together."""
    xs, sigmas = list(xs), list(sigmas)
    lone = error_places([x for x, s in zip(xs, sigmas, strict=True)
                         if sigma_places(s) is None])
    values, pms = [], []
    for x, s in zip(xs, sigmas, strict=True):
        value, pm = error_with_sigma(x, s)
        values.append(value if pm is not None or x is None or not math.isfinite(x)
                      else error(x, lone))
        pms.append(pm)
    return line_up(values), pms


def error_column(xs, places: int | None = None, width: int | None = None) -> list[str]:
    """A column of period errors or drifts as :func:`error` writes them, to the column's
    decimals, padded so that set flush right their points line up (a whole figure's last
    digit where the point stands); a dash for one that is not a number."""
    xs = list(xs)
    if places is None:
        places = error_places(xs, width)
    return line_up([error(x, places) for x in xs])


# a drift in °/cy and a period error in ppm are written by the one rule above
drift_places = ppm_places = error_places
drift = ppm = error
