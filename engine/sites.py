"""An observing place written as text: ``LAT,LON[,HEIGHT_M]`` in signed degrees (east
positive), or as a map or a guide book prints it, with compass letters.

Forms read (any case, spaces and commas between the parts as you like):

* ``51.48,-0.01`` and ``51.48,-0.01,45`` — signed decimal degrees, east longitude positive;
* ``51.48N 0.01W``, ``37.97 N, 23.72 E``, ``N51.48 W0.01`` — a compass letter after or before
  each number (S and W are negative), latitude and longitude in either order, since the
  letters say which is which;
* ``51°28'48"N 0°0'36"W``, ``51 28.8 N 0 0.6 W`` — degrees, minutes and seconds (the marks
  ``°'"`` optional; only the last part may have a fraction; minutes and seconds under 60);
* a height in metres after the two (``51.48N 0.01W 45`` or ``… 45m``).

A number with both a sign and a compass letter (``-33.87S``) is refused: it could mean either
hemisphere. Standard library only; :func:`site_numbers` gives the three numbers and
``engine.sky.Site`` checks their ranges.
"""

from __future__ import annotations

import re

from .errors import SkyError

EXAMPLE = "51.48,-0.01,45 or 51.48N 0.01W 45m"

_TOKEN = re.compile(r"""
    \s*(?:
      (?P<num>[-+]?(?:\d+(?:\.\d*)?|\.\d+))\s*(?P<mark>''|[°º'′"″])?
    | (?P<letter>north|south|east|west|[nsew])(?![a-z])
    | (?P<metres>m)(?![a-z])
    | (?P<comma>,)
    )""", re.VERBOSE | re.IGNORECASE)
# a compass letter, not the e of a number such as 5e1
_COMPASS = re.compile(r"(?<![a-z])(?:north|south|east|west|[nsw]|(?<!\d)e|e(?![-+]?\d))"
                      r"(?![a-z])", re.IGNORECASE)

_PLACE = {"°": 0, "º": 0, "'": 1, "′": 1, '"': 2, "″": 2, "''": 2}
_SIGN = {"N": 1, "S": -1, "E": 1, "W": -1}


def _fail(text: str, problem: str) -> SkyError:
    return SkyError(f"site {text!r}: {problem}; write it like {EXAMPLE}")


def _tokens(text: str) -> list[tuple[str, str, str]]:
    """(kind, value, mark) for each part of ``text``; a part not understood is an error."""
    out, pos, stripped = [], 0, text.rstrip()
    while pos < len(stripped):
        m = _TOKEN.match(stripped, pos)
        if m is None or m.end() == pos:
            bad = stripped[pos:].strip()
            raise _fail(text, f"cannot read {bad[:12]!r}")
        pos = m.end()
        if m["num"] is not None:
            out.append(("num", m["num"], m["mark"] or ""))
        elif m["letter"] is not None:
            out.append(("letter", m["letter"][0].upper(), ""))
        else:
            out.append(("metres" if m["metres"] else "comma", "", ""))
    return out


def _angle(text: str, parts: list[tuple[str, str]], letter: str) -> float:
    """Degrees from one coordinate's numbers (degrees, minutes, seconds) and its letter."""
    if not 1 <= len(parts) <= 3:
        raise _fail(text, f"the {letter} coordinate has {len(parts)} numbers; give degrees, "
                    "or degrees and minutes, or degrees, minutes and seconds")
    total = 0.0
    for place, (value, mark) in enumerate(parts):
        if mark and _PLACE[mark] != place:
            raise _fail(text, f"{value}{mark} is out of place in the {letter} coordinate")
        if value[0] in "+-":
            raise _fail(text, f"{value}{letter} has both a sign and a compass letter; "
                        "give one of them")
        number = float(value)
        if place < len(parts) - 1 and "." in value:
            raise _fail(text, f"only the last number of a coordinate may have a fraction "
                        f"({value} is followed by more)")
        if place and number >= 60:
            raise _fail(text, f"{value} {'minutes' if place == 1 else 'seconds'} is not under "
                        "60")
        total += number / 60 ** place
    return _SIGN[letter] * total + 0.0  # + 0.0: 0W is 0, not -0


def _compass(text: str, tokens: list[tuple[str, str, str]]) -> tuple[float, float, float]:
    height: list[tuple[str, str, str]] = []
    if len(tokens) > 2 and tokens[-1][0] == "metres" and tokens[-2][0] == "num":
        height, tokens = tokens[-2:], tokens[:-2]  # "… 45m" is a height wherever it stands
    prefix = tokens[0][0] == "letter"
    coords: dict[str, float] = {}
    pending: list[tuple[str, str]] = []
    letter = None
    rest: list[tuple[str, str, str]] = []

    def close(at: str) -> None:
        nonlocal pending, letter
        axis = "lat" if at in "NS" else "lon"
        if axis in coords:
            twice = "latitudes (N or S)" if axis == "lat" else "longitudes (E or W)"
            raise _fail(text, f"two {twice}")
        coords[axis] = _angle(text, pending, at)
        pending, letter = [], None

    for i, (kind, value, mark) in enumerate(tokens):
        if len(coords) == 2 and not pending and letter is None:
            rest = tokens[i:]
            break
        if kind == "letter":
            if prefix:
                if letter is not None:
                    close(letter)
                letter = value
            else:
                if not pending:
                    raise _fail(text, f"{value} follows no number")
                close(value)
        elif kind == "num":
            if prefix and letter is None:
                raise _fail(text, f"{value} has no compass letter")
            pending.append((value, mark))
            # a fraction ends a coordinate, so a height may follow the second one
            if prefix and len(coords) == 1 and ("." in value or mark in ('"', "″", "''")):
                close(letter)
        elif kind == "comma":
            if prefix and letter is not None and pending:
                close(letter)
            elif pending:
                raise _fail(text, f"{pending[-1][0]} has no compass letter before the comma "
                            "(a decimal is written with a point: 51.48N)")
        else:
            raise _fail(text, "m (metres) goes after the height only")
    if prefix and letter is not None:
        if not pending:
            raise _fail(text, f"{letter} is followed by no number")
        close(letter)
    if pending:
        raise _fail(text, f"{pending[-1][0]} has no compass letter")
    if set(coords) != {"lat", "lon"}:
        raise _fail(text, "give a latitude (N or S) and a longitude (E or W)")
    if height and [t for t in rest if t[0] != "comma"]:
        raise _fail(text, "two heights")
    return coords["lat"], coords["lon"], _height(text, rest or height)


def _height(text: str, rest: list[tuple[str, str, str]]) -> float:
    rest = [t for t in rest if t[0] != "comma"]
    if not rest:
        return 0.0
    if rest[0][0] != "num" or rest[0][2] or len(rest) > 2 or (
            len(rest) == 2 and rest[1][0] != "metres"):
        raise _fail(text, "after the latitude and longitude only a height in metres may follow")
    return float(rest[0][1])


def site_numbers(text: str) -> tuple[float, float, float]:
    """Latitude, longitude (east positive) in degrees and height in metres, from any form in
    the module's docstring; :class:`SkyError` in one line naming the text otherwise."""
    text = str(text)
    if _COMPASS.search(text):
        return _compass(text, _tokens(text))
    parts = [p.strip() for p in text.split(",")]
    try:
        if len(parts) not in (2, 3):
            raise ValueError
        nums = [float(p) for p in parts]
    except ValueError:
        raise SkyError(f"site {text!r}: write LAT,LON or LAT,LON,HEIGHT_M in degrees and "
                       f"metres, e.g. 51.48,-0.01,45, or with compass letters, e.g. "
                       f"51.48N 0.01W 45m") from None
    return (nums[0], nums[1], nums[2] if len(nums) == 3 else 0.0)


def parse_site(text: str):
    """An ``engine.sky.Site`` from text (:func:`site_numbers`); its ranges checked there."""
    from .sky import Site  # here: the sky loads skyfield, which reading the text does not need

    numbers = site_numbers(text)
    try:
        return Site(*numbers)
    except SkyError as exc:  # "site latitude 95.0° is impossible …": say which text
        problem = str(exc).removeprefix("site ")
        raise SkyError(f"site {str(text)!r}: {problem}") from None
