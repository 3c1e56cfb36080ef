"""Dates: parsing, Julian and Gregorian calendars, Julian Day numbers (UT).

Pure Python and numpy; no astronomy library. Every date the engine handles is a Julian Date
on the UT scale (``jd_ut``); the sky module turns it into TT with its own ΔT.

Calendars: ``"auto"`` uses the proleptic Julian calendar before 1582-10-15 and the Gregorian
calendar from then on (so 1582-10-04 is followed by 1582-10-15, and the ten days between do
not exist); ``"julian"`` and ``"gregorian"`` force one calendar for every date.

Years are astronomical (year 0 = 1 BC, year -100 = 101 BC) unless a ``BC``/``AD`` marker says
otherwise. Accepted text forms (case-insensitive, surrounding spaces ignored):

* ISO 8601: ``2025-03-20``, ``2025-03-20 09:30``, ``2025-03-20T09:30:15``, seconds may have a
  fraction; an optional trailing ``Z``, ``UT``, ``UTC`` or ``GMT``, or after a time an offset
  from UT (``2026-03-20T09:30+01:00``, ``09:30-0500``: converted to UT, as TOML's own
  date-times are); a leading sign for astronomical
  years, ``-0100-03-01`` (= 101 BC); years need not have four digits (``333-01-27``).
* ISO with an era: ``44-03-15 BC``, ``44-03-15 12:00 BC``, ``1066-10-14 AD`` (also BCE/CE,
  and with full stops: ``B.C.``, ``A.D.``); AD may also stand before the year, as style
  guides write it: ``AD 1066-10-14``, ``14 October AD 1066``, ``June 21, AD 250``.
* Day, month name, year: ``15 March 44 BC``, ``4 Oct 1957``, ``15 Mar 44 BC 12:00 UT``; or
  the month name first: ``March 15, 44 BC``, ``Oct 4 1957``, ``January 1, 2026 06:30``.
* A year alone, read as 1 January 00:00 UT: ``250 BC``, ``AD 1066``, ``1066 AD``, ``1066``,
  ``-0249``; a month with its year, read as its 1st: ``June 250 BC``, ``June AD 250``,
  ``1066-10``, ``-0249-06`` (the same calendar rules as a full date). Refused as ambiguous: a
  bare number of 5 or more digits (``JD 2451545`` if a Julian Date), and a month or month
  number with a year of one or two digits and no era (``March 15``, ``12-10``).
* A raw Julian Date: ``JD 2451545.0`` (taken as UT).
* What wheelwork prints, read back: a trailing ``(Julian)`` or ``(Gregorian)`` names the
  date's calendar (``1582-10-10 (Julian)``; it overrides ``"auto"`` and must agree with a
  calendar asked for), and a trailing ``= 585 BC`` or ``(585 BC)`` must agree with the signed
  year before it: ``-0584-05-28 14:25 UT (Julian) = 585 BC``.

Source of the Julian Day algorithm: J. Meeus, *Astronomical Algorithms*, 2nd ed. (1998),
ch. 7, written here in exact integer arithmetic so it also holds for negative years and
negative Julian Days.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction

import numpy as np

from .errors import DateError, DriftError
from .periods import JULIAN_YEAR_DAYS, SECONDS_PER_DAY

CALENDARS = ("auto", "julian", "gregorian")
GREGORIAN_START_JD = 2299160.5  # 1582-10-15 00:00, first day of the Gregorian calendar
_GREGORIAN_START = (1582, 10, 15)
_JULIAN_LAST = (1582, 10, 4)

YEAR_LIMIT = 999_999  # years -999999 to 999999, the most six digits can write


def _jd_of_year(year: int, calendar: str) -> float:
    # Meeus eq. 7.1 for 1 January, in integers (the same as jd_from_calendar, scalar)
    y, m = year - 1, 13
    a = y // 100
    b = (2 - a + a // 4) if calendar == "gregorian" else 0
    return float(1461 * (y + 4716) // 4 + 306001 * (m + 1) // 10000 + 1 + b) - 1524.5


JD_MIN = _jd_of_year(-YEAR_LIMIT, "julian")          # -999999-01-01 00:00 (Julian)
JD_MAX = _jd_of_year(YEAR_LIMIT + 1, "gregorian")    # just after 999999-12-31 24:00
RANGE_TEXT = (f"JD {JD_MIN:,.1f} to {JD_MAX:,.1f}, years -{YEAR_LIMIT} to {YEAR_LIMIT}")
AD_1_JD = _jd_of_year(1, "julian")  # 0001-01-01 00:00 (Julian): earlier years are BC

FORMS_HINT = ("use e.g. 2025-03-20, 2025-03-20 09:30, -0100-03-01, 44-03-15 BC, "
              "15 March 44 BC, June 250 BC, 1066 or JD 2451545.0")

_MONTHS = {
    name: i + 1
    for i, names in enumerate((
        ("january", "jan"), ("february", "feb"), ("march", "mar"), ("april", "apr"),
        ("may",), ("june", "jun"), ("july", "jul"), ("august", "aug"),
        ("september", "sep", "sept"), ("october", "oct"), ("november", "nov"),
        ("december", "dec"),
    ))
    for name in names
}

_MONTH_NAMES = ("January", "February", "March", "April", "May", "June", "July", "August",
                "September", "October", "November", "December")

_TIME = r"(?:[ T](?P<h>\d{1,2}):(?P<mi>\d{2})(?::(?P<s>\d{2}(?:\.\d+)?))?)?"
_ZONE = r"(?:\s*(?:Z|UT|UTC|GMT))?"
# an ISO offset from UT after a time of day (+01:00, -0500), as clocks and TOML write it
_OFFSET = r"(?(h)(?:(?P<off>[+-])(?P<oh>\d{2}):?(?P<om>\d{2}))?)"
_ERA = r"(?:\s+(?P<era>B\.?C\.?(?:E\.?)?|A\.?D\.?|C\.?E\.?)(?=[\s,]|$))?"
_ISO = re.compile(
    rf"(?P<y>[+-]?\d{{1,6}})-(?P<m>\d{{1,2}})-(?P<d>\d{{1,2}}){_TIME}{_OFFSET}{_ZONE}{_ERA}{_ZONE}",
    re.IGNORECASE,
)
_NAMED = re.compile(
    r"(?P<d>\d{1,2})\s+(?P<mname>[A-Za-z]+)\.?\s+(?P<y>\d{1,6})" + _ERA
    + r"(?:,?\s+(?P<h>\d{1,2}):(?P<mi>\d{2})(?::(?P<s>\d{2}(?:\.\d+)?))?)?" + _ZONE,
    re.IGNORECASE,
)
_NAMED_FIRST = re.compile(  # month name first, as written in the US: Jan 1 2026, March 15, 44 BC
    r"(?P<mname>[A-Za-z]+)\.?\s+(?P<d>\d{1,2}),?\s+(?P<y>\d{1,6})" + _ERA
    + r"(?:,?\s+(?P<h>\d{1,2}):(?P<mi>\d{2})(?::(?P<s>\d{2}(?:\.\d+)?))?)?" + _ZONE,
    re.IGNORECASE,
)
# What format_jd and format_day add after a date, read back: the calendar it is in,
# "(Julian)" or "(Gregorian)", and before AD 1 the year in words, "= 585 BC" or "(585 BC)".
_PRINTED = re.compile(
    r"(?P<body>.*?)(?:\s*\((?P<cal>julian|gregorian)\))?"
    r"(?:\s*(?:=\s*(?P<bc>\d{1,7})\s*BCE?|\(\s*(?P<bc2>\d{1,7})\s*BCE?\s*\)))?",
    re.IGNORECASE,
)
_JD = re.compile(r"JD\s*(?P<jd>[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)", re.IGNORECASE)


def _check_calendar(calendar: str) -> str:
    cal = str(calendar).strip().lower()
    if cal not in CALENDARS:
        raise DateError(f"unknown calendar {calendar!r}; use one of: {', '.join(CALENDARS)}")
    return cal


def is_leap_year(year: int, calendar: str) -> bool:
    """Leap-year rule of the Julian or Gregorian calendar, astronomical year numbers."""
    if calendar == "julian":
        return year % 4 == 0
    return year % 4 == 0 and (year % 100 != 0 or year % 400 == 0)


def days_in_month(year: int, month: int, calendar: str) -> int:
    """Number of days in a month of the given calendar (``"julian"`` or ``"gregorian"``)."""
    if month == 2:
        return 29 if is_leap_year(year, calendar) else 28
    return 30 if month in (4, 6, 9, 11) else 31


def calendar_for(year: int, month: int, day: int, calendar: str = "auto") -> str:
    """Which calendar a civil date belongs to: ``"julian"`` or ``"gregorian"``."""
    cal = _check_calendar(calendar)
    if cal != "auto":
        return cal
    return "gregorian" if (year, month, day) >= _GREGORIAN_START else "julian"


def jd_from_calendar(year, month, day, calendar: str = "auto"):
    """Julian Day of a calendar date; ``day`` may carry a fraction (``4.81`` = 19:26:24).

    Takes scalars or numpy arrays (broadcast together); returns a float or an array.
    Meeus, *Astronomical Algorithms*, ch. 7, eq. 7.1, in integer arithmetic (exact floors), so
    it holds for negative years. No range checks here: use :func:`parse_date` for text.
    """
    cal = _check_calendar(calendar)
    y = np.asarray(year, dtype=np.int64)
    m = np.asarray(month, dtype=np.int64)
    d = np.asarray(day, dtype=float)
    early = m <= 2
    y = np.where(early, y - 1, y)
    m = np.where(early, m + 12, m)
    a = np.floor_divide(y, 100)
    b_greg = 2 - a + np.floor_divide(a, 4)
    if cal == "gregorian":
        b = b_greg
    elif cal == "julian":
        b = np.zeros_like(b_greg)
    else:
        key = (np.asarray(year, dtype=np.int64) * 10000 + np.asarray(month, dtype=np.int64) * 100
               + np.floor(d).astype(np.int64))
        b = np.where(key >= 15821015, b_greg, 0)
    whole = (np.floor_divide(1461 * (y + 4716), 4) + np.floor_divide(306001 * (m + 1), 10000)
             + b)
    jd = whole.astype(float) + d - 1524.5
    return float(jd) if jd.ndim == 0 else jd


def _civil_from_jd(jd: float, calendar: str) -> tuple[int, int, float, str]:
    """Inverse of :func:`jd_from_calendar` for one date: (year, month, day with fraction, cal)."""
    cal = calendar
    if cal == "auto":
        cal = "gregorian" if jd >= GREGORIAN_START_JD else "julian"
    # Meeus' inverse needs JD >= 0; shift by whole cycles of the calendar to get there.
    cycle_days, cycle_years = (146097, 400) if cal == "gregorian" else (1461, 4)
    shift = 0
    if jd < 0:
        shift = int(-jd // cycle_days) + 1
    jd_s = jd + shift * cycle_days
    z = math.floor(jd_s + 0.5)
    f = jd_s + 0.5 - z
    if cal == "gregorian":
        alpha = (4 * z - 7468865) // 146097  # floor((Z - 1867216.25) / 36524.25), exact
        a = z + 1 + alpha - alpha // 4
    else:
        a = z
    b = a + 1524
    c = (20 * b - 2442) // 7305  # floor((B - 122.1) / 365.25)
    dd = (1461 * c) // 4
    e = (10000 * (b - dd)) // 306001
    day = b - dd - (306001 * e) // 10000 + f
    month = e - 1 if e < 14 else e - 13
    year = c - 4716 if month > 2 else c - 4715
    return year - shift * cycle_years, month, day, cal


def calendar_date(jd: float, calendar: str = "auto") -> tuple[int, int, int, int, int, float, str]:
    """(year, month, day, hour, minute, second, calendar name) of a Julian Date.

    The year is astronomical (0 = 1 BC); the calendar name is ``"Julian"`` or ``"Gregorian"``.
    Seconds are rounded to the millisecond (so 23:59:59.9996 becomes the next day).
    """
    cal = _check_calendar(calendar)
    jd = float(jd)
    if not math.isfinite(jd):
        raise DateError(f"Julian Date {jd!r} is not a finite number")
    check_jd(jd)
    ms = round((jd + 0.5) * SECONDS_PER_DAY * 1000)
    whole_days, ms_of_day = divmod(ms, SECONDS_PER_DAY * 1000)
    year, month, day, cal = _civil_from_jd(whole_days - 0.5, cal)
    hour, rest = divmod(ms_of_day, 3_600_000)
    minute, rest = divmod(rest, 60_000)
    return year, month, int(round(day)), int(hour), int(minute), rest / 1000.0, cal.capitalize()


def format_jd(jd: float, calendar: str = "auto", *, seconds: bool = False) -> str:
    """``2025-03-20 09:30 UT (Gregorian)``; years before 1 AD add ``= 101 BC``.

    Rounded to the minute, or to the second with ``seconds=True``.
    """
    cal = _check_calendar(calendar)
    try:
        if isinstance(jd, bool):  # True is no date, though float(True) is 1.0
            raise TypeError
        jd = float(jd)
    except (TypeError, ValueError):
        raise DateError(f"format_jd: wanted a Julian Date (UT) as a number, got "
                        f"{type(jd).__name__} {jd!r}; parse_date reads date text") from None
    check_jd(jd)
    step = float(SECONDS_PER_DAY) if seconds else 1440.0
    jd_r = (round((float(jd) + 0.5) * step)) / step - 0.5
    year, month, day, hour, minute, second, name = calendar_date(jd_r, cal)
    ystr = f"-{-year:04d}" if year < 0 else f"{year:04d}"
    clock = f"{hour:02d}:{minute:02d}" + (f":{int(round(second)):02d}" if seconds else "")
    text = f"{ystr}-{month:02d}-{day:02d} {clock} UT ({name})"
    if year <= 0:
        text += f" = {1 - year} BC"
    return text


def format_day(jd: float, calendar: str = "auto", bc: bool = False) -> str:
    """The day of :func:`format_jd` alone: ``2025-03-20``, ``-0149-04-10`` (a year before 1
    AD has a sign, so the day is not always ten characters); with ``bc``, a year before AD 1
    also in words beside it: ``-0149-04-10 (150 BC)``."""
    text = format_jd(jd, calendar)
    day = text.split(" ", 1)[0]
    _, _, words = text.partition(" = ")
    return f"{day} ({words})" if bc and words else day


def check_jd(jd: float, what: str = "") -> float:
    """``jd`` itself when it lies in the range of dates wheelwork handles, else a DateError
    (one line) — so no date, however written, overflows a calculation later."""
    if not (math.isfinite(jd) and JD_MIN <= jd < JD_MAX):
        shown = f"{jd:.6g}" if math.isfinite(jd) else repr(jd)
        raise DateError(f"{what or 'Julian Date'} {shown} is outside the dates wheelwork "
                        f"handles ({RANGE_TEXT})")
    return jd


def _fail(text: str, problem: str) -> DateError:
    return DateError(f"cannot read date {text!r}: {problem}; {FORMS_HINT}")


def as_jd(value, what: str = "date"):
    """Julian Date(s) (UT) from what a caller gave: a number or array of numbers (taken as JD),
    date text (:func:`parse_date`), or a list of either. Anything else is a
    :class:`engine.errors.DateError` saying in plain words what is wanted."""
    if isinstance(value, str):
        return parse_date(value)
    if isinstance(value, (list, tuple)) and any(isinstance(v, str) for v in value):
        return np.array([as_jd(v, what) for v in value], dtype=float)
    try:
        if value is None or isinstance(value, bool):
            raise TypeError
        jd = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise DateError(f"{what}: wanted a Julian Date (UT) as a number or array, or date text "
                        f"such as '2025-03-20 12:00'; got {type(value).__name__} "
                        f"{str(value)[:40]!r}") from None
    return jd if jd.ndim else float(jd)


def parse_date(text: str, *, calendar: str = "auto") -> float:
    """Julian Date (UT) of a date written in one of the forms listed in the module docstring.

    Raises :class:`engine.errors.DateError` (one line: the text, the fault, the forms accepted).
    """
    cal = _check_calendar(calendar)
    if not isinstance(text, str):
        raise _fail(str(text), "a date must be text")
    s = " ".join(text.strip().split())
    if not s:
        raise _fail(text, "it is empty")
    printed = _PRINTED.fullmatch(s)
    written_cal, bc_words = printed["cal"], printed["bc"] or printed["bc2"]
    if written_cal or bc_words:
        s = printed["body"]
        if written_cal:
            written_cal = written_cal.lower()
            if cal not in ("auto", written_cal):
                raise _fail(text, f"it says {written_cal.capitalize()} but calendar "
                            f"{cal!r} was asked; give one of them")
            cal = written_cal
    jd = _parse(text, s, cal)
    if bc_words:
        _check_bc_words(text, s, jd, cal, int(bc_words))
    return jd


def _check_bc_words(text: str, s: str, jd: float, cal: str, bc: int) -> None:
    """A date printed with its BC year beside it (``-0584-05-28 = 585 BC``) must agree."""
    if re.search(r"\b(?:BC|BCE|AD|CE)\b", s, re.IGNORECASE):
        raise _fail(text, "write the era either after the date or as '= N BC', not both")
    year = calendar_date(jd, cal)[0]
    if 1 - year != bc:
        shown = f"-{-year:04d} is {1 - year} BC" if year <= 0 else f"{year:04d} is AD {year}"
        raise _fail(text, f"the year {shown}, not {bc} BC")


# AD written before the year, as style guides place it ("14 October AD 1066", "AD 1066-10-14"):
# at the start of the text, or before a year that ends the date or precedes its time
_AD_LEADING = re.compile(r"(?P<era>A\.?D\.?)\s+(?P<rest>\d.*)", re.IGNORECASE)
_AD_BEFORE_YEAR = re.compile(r"(?<![\w.])(?P<era>A\.?D\.?)\s+(?P<y>\d{1,6})(?=\s|$)",
                             re.IGNORECASE)


def _era_after_year(s: str) -> str:
    """``s`` with an AD written before the year moved after it, where the forms expect it."""
    m = _AD_LEADING.fullmatch(s)
    if m:
        return f"{m['rest']} {m['era']}"
    return _AD_BEFORE_YEAR.sub(lambda m: f"{m['y']} {m['era']}", s)


# A year alone, or a month and its year: read as the first day of it, 00:00 UT
_YEAR_ONLY = re.compile(r"(?P<y>(?P<sign>[+-]?)(?P<digits>\d+))" + _ERA, re.IGNORECASE)
_YEAR_MONTH = re.compile(r"(?P<y>(?P<sign>[+-]?)(?P<digits>\d{1,6}))-(?P<m>\d{1,2})" + _ERA,
                         re.IGNORECASE)
_MONTH_YEAR = re.compile(r"(?P<mname>[A-Za-z]+)\.?,?\s+(?P<y>(?P<sign>)(?P<digits>\d{1,6}))"
                         + _ERA, re.IGNORECASE)
_DECIMAL = re.compile(r"[+-]?(?:\d+\.\d*|\.\d+)")


def compact_date(digits: str) -> str | None:
    """``'2026-12-03'`` for eight digits that read as a year, month and day run together
    (``20261203``, as some programs write dates); ``None`` for any other text."""
    m = re.fullmatch(r"(\d{4})(\d\d)(\d\d)", digits)
    if not m or not (1 <= int(m[2]) <= 12 and 1 <= int(m[3]) <= 31):
        return None
    return f"{m[1]}-{m[2]}-{m[3]}"


# Day, month and year in figures with slashes or dots (03/12/2026, 3.12.2026, 2026/12/03)
_SLASHED = re.compile(r"(?P<a>\d{1,4})(?P<sep>[/.])(?P<b>\d{1,2})(?P=sep)(?P<c>\d{1,4})"
                      r"(?P<rest>(?:[ T,].*)?)")


def _slashed_hint(s: str) -> str | None:
    """How to write a date given in figures with slashes or dots, year first with hyphens:
    ``2026/12/03`` is plain; ``13/12/2026`` can only be a day first; ``03/12/2026`` may be
    3 December or 12 March, so both are named. ``None`` when the text is no such date."""
    m = _SLASHED.fullmatch(s)
    if not m:
        return None
    a, b, c = m["a"], m["b"], m["c"]
    rest = m["rest"].lstrip(" T,")
    tail = f" {rest}" if rest else ""
    if len(a) == 4 and len(c) <= 2:
        if not 1 <= int(b) <= 12:
            return None
        return f"write it year first with hyphens: {a}-{int(b):02d}-{int(c):02d}{tail}"
    if len(c) != 4:
        return ("write the year in full, year first with hyphens (1957-10-04 for 4 October "
                "1957)")
    options = []
    for day, month in ((a, b), (b, a)):
        if 1 <= int(month) <= 12 and 1 <= int(day) <= 31:
            name = _MONTH_NAMES[int(month) - 1]
            option = f"{c}-{int(month):02d}-{int(day):02d}{tail} ({int(day)} {name} {c})"
            if option not in options:
                options.append(option)
    if not options:
        return None
    if len(options) == 1:
        return f"write it year first with hyphens: {options[0]}"
    return (f"day and month could be either way round; write it year first with hyphens: "
            f"{options[0]} or {options[1]}")


def _first_day(text: str, s: str) -> str:
    """A year alone (``250 BC``, ``1066``, ``-0249``) or a month with its year (``June 250
    BC``, ``1066-10``) written as the full date of its first day (``250-01-01 BC``, ``1
    June 250 BC``), for :func:`_parse` to read with its own checks; a DateError for anything
    else, and for a number that may not be a year at all."""
    if _DECIMAL.fullmatch(s):
        raise _fail(text, f"a bare number is not a date; for a Julian Date write 'JD {s}'")
    m = _YEAR_ONLY.fullmatch(s) or _YEAR_MONTH.fullmatch(s)
    if not m:
        m = _MONTH_YEAR.fullmatch(s)
        if not m or m["mname"].lower() not in _MONTHS:
            raise _fail(text, _slashed_hint(s) or "not a date form I know")
    y, era = m["y"], f" {m['era']}" if m["era"] else ""
    short = not era and not m["sign"] and len(m["digits"]) <= 2
    if "m" in m.groupdict() and m["m"]:
        if short:  # 12-10: the 12th of October, or October of AD 12?
            raise _fail(text, f"it could be a month and day or a year and month; write the "
                        f"year with four digits ({int(y):04d}-{m['m']}) or with its era "
                        f"({y}-{m['m']} AD)")
        return f"{y}-{m['m']}-01{era}"
    if "mname" in m.groupdict():
        if short:  # March 15: the 15th of March, or March of AD 15?
            raise _fail(text, f"it could be a day of {m['mname']} or {m['mname']} of AD {y}; "
                        f"write the day and the year ({m['mname']} {y}, 2026) or the era "
                        f"({m['mname']} AD {y})")
        return f"1 {m['mname']} {y}{era}"
    if era and len(m["digits"]) > 6:
        raise _fail(text, f"it is outside the dates wheelwork handles ({RANGE_TEXT})")
    if not era and len(m["digits"]) >= 5:
        as_year = f", for a year '{y}-01-01'" if len(m["digits"]) <= 6 else ""
        compact = compact_date(y)
        if compact:  # 20261203: a date run together, far likelier than year 20261203's JD
            raise _fail(text, f"a bare number is not read as a date; for that day write "
                        f"'{compact}' (year, month, day with hyphens), for a Julian Date "
                        f"'JD {y}'")
        raise _fail(text, f"a bare number of 5 or more digits is not read as a year; for a "
                    f"Julian Date write 'JD {y}'{as_year}")
    return f"{y}-01-01{era}"


def _parse(text: str, s: str, cal: str) -> float:
    """:func:`parse_date` of ``s`` (``text`` tidied, without a printed calendar or BC year)."""
    s = _era_after_year(s)
    m = _JD.fullmatch(s)
    if m:
        jd = float(m["jd"])
        if not (math.isfinite(jd) and JD_MIN <= jd < JD_MAX):
            raise _fail(text, f"the Julian Date is outside the dates wheelwork handles "
                        f"({RANGE_TEXT})")
        return jd
    m = _ISO.fullmatch(s)
    if m:
        month = int(m["m"])
    else:
        m = _NAMED.fullmatch(s) or _NAMED_FIRST.fullmatch(s)
        if not m:
            return _parse(text, _first_day(text, s), cal)
        month = _MONTHS.get(m["mname"].lower())
        if month is None:
            raise _fail(text, f"unknown month name {m['mname']!r}")
    year_text = m["y"]
    year = int(year_text)
    era = (m["era"] or "").upper().replace(".", "")
    if era:
        if year_text.startswith(("+", "-")):
            raise _fail(text, "use either a signed year or BC/AD, not both")
        if year < 1:
            raise _fail(text, f"there is no year 0 {era}; 1 BC is followed by AD 1")
        if era in ("BC", "BCE"):
            year = 1 - year  # astronomical numbering: 1 BC = year 0
    day = int(m["d"])
    hour = int(m["h"]) if m["h"] else 0
    minute = int(m["mi"]) if m["mi"] else 0
    second = float(m["s"]) if m["s"] else 0.0
    if not 1 <= month <= 12:
        raise _fail(text, f"month {month} is not 1-12")
    if not (hour <= 23 and minute <= 59 and second < 60):
        raise _fail(text, f"time {hour:02d}:{minute:02d}:{second:02.0f} is not a time of day")
    which = calendar_for(year, month, day if day >= 1 else 1, cal)
    if cal == "auto" and _JULIAN_LAST < (year, month, day) < _GREGORIAN_START:
        raise _fail(text, "1582-10-05..14 do not exist: the Gregorian calendar began on "
                    "1582-10-15, the day after 1582-10-04 (for a date in the Julian calendar "
                    f"write {year:04d}-{month:02d}-{day:02d} (Julian); or give calendar = \"julian\" "
                    "in a train's [epoch], --calendar julian to wheelwork sky)")
    dim = days_in_month(year, month, which)
    if not 1 <= day <= dim:
        raise _fail(text, f"day {day} is not in 1-{dim} for that month ({which.capitalize()})")
    frac = (hour * 3600 + minute * 60 + second) / SECONDS_PER_DAY
    off = m.groupdict().get("off")
    if off:  # local time at an offset from UT: UT = local time - offset
        oh, om = int(m["oh"]), int(m["om"])
        if oh > 14 or om > 59:
            raise _fail(text, f"offset {off}{oh:02d}:{om:02d} from UT is not one clocks use "
                        "(-14:00 to +14:00)")
        frac -= (1 if off == "+" else -1) * (oh * 60 + om) / 1440
    jd = jd_from_calendar(year, month, day + frac, which)
    if not JD_MIN <= jd < JD_MAX:
        raise _fail(text, f"it is outside the dates wheelwork handles ({RANGE_TEXT})")
    return jd


# --- steps: lengths of time written with a unit ------------------------------------------

_STEP_UNITS = {
    "s": 1 / SECONDS_PER_DAY, "sec": 1 / SECONDS_PER_DAY, "second": 1 / SECONDS_PER_DAY,
    "seconds": 1 / SECONDS_PER_DAY,
    "m": 1 / 1440, "min": 1 / 1440, "minute": 1 / 1440, "minutes": 1 / 1440,
    "h": 1 / 24, "hr": 1 / 24, "hour": 1 / 24, "hours": 1 / 24,
    "d": 1.0, "day": 1.0, "days": 1.0,
    "w": 7.0, "week": 7.0, "weeks": 7.0,
    "y": JULIAN_YEAR_DAYS, "yr": JULIAN_YEAR_DAYS, "year": JULIAN_YEAR_DAYS,
    "years": JULIAN_YEAR_DAYS,
}
_STEP = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*([a-z]*)\s*$", re.IGNORECASE)
MIN_STEP_DAYS = 1 / SECONDS_PER_DAY


#: units a reader takes for months, which have no fixed length: refused with a hint (``M``
#: upper-case is a month in ISO 8601 durations and in much everyday writing; ``m`` is minutes)
_MONTH_UNITS = ("M", "mo", "mon", "month", "months", "mth", "mths")


def _no_month(text, unit: str) -> None:
    if unit == "M" or unit.lower() in _MONTH_UNITS[1:]:
        what = ("'M' could be minutes or months" if unit == "M"
                else "a month has no fixed length")
        raise DriftError(f"cannot read step {str(text).strip()!r}: {what}; write minutes as m "
                         "or min (30m), a month in days or weeks (30d, 4w)")


#: the units of :data:`_STEP_UNITS` as exact days (a year is the Julian year, 1461/4 days)
_EXACT_UNIT_DAYS = {1 / SECONDS_PER_DAY: Fraction(1, 86400), 1 / 1440: Fraction(1, 1440),
                    1 / 24: Fraction(1, 24), 1.0: Fraction(1), 7.0: Fraction(7),
                    JULIAN_YEAR_DAYS: Fraction(1461, 4)}


def time_in_days(text: str) -> Fraction | None:
    """Exact days in a length of time written with a unit as :func:`parse_step` reads it
    (``12h`` is 1/2, ``1y`` 1461/4); None for text that is not a number and a unit of time
    (a bare number included). A month (``1 month``, ``1M``) raises :class:`DriftError`: it
    has no fixed length. For a file key in days that was given a unit (``days_per_turn``)."""
    m = _STEP.match(str(text))
    if not m or not m.group(2):
        return None
    _no_month(text, m.group(2))
    unit = m.group(2).lower()
    if unit not in _STEP_UNITS:
        return None
    return Fraction(m.group(1)) * _EXACT_UNIT_DAYS[_STEP_UNITS[unit]]


def step_unit(word: str) -> bool:
    """True for a word that is a step's unit alone (``h``, ``days``, ``min``)."""
    return word.lower() in _STEP_UNITS


def parse_step(text: str | float) -> float:
    """Days in a step written ``6h``, ``30m`` (minutes), ``1d``, ``2.5d``, ``2w``, ``1y``
    (365.25 days) or ``90s``; a bare number is days. ``1M``, ``1mo`` or ``1 month`` is
    refused (minutes or months?). Raises :class:`DriftError`."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        days = float(text)
    else:
        m = _STEP.match(str(text))
        if m:
            _no_month(text, m.group(2))
        unit = m.group(2).lower() if m else ""
        if not m or (unit and unit not in _STEP_UNITS):
            raise DriftError(f"cannot read step {text!r}: write a number and a unit, "
                             "e.g. 30m, 6h, 1d, 2.5d, 2w or 1y (a bare number is days)")
        days = float(m.group(1)) * _STEP_UNITS.get(unit, 1.0)
    if not math.isfinite(days) or days < MIN_STEP_DAYS:
        raise DriftError(f"step {text!r} is too small: it must be at least one second")
    return days


def step_text(days: float) -> str:
    """A step as a reader takes it, in the unit that suits it: ``6 days``, ``1 day``,
    ``6 hours``, ``1 minute``, ``90 seconds``, ``365.25 days`` (never e-notation)."""
    from .figures import figure

    units = ((1.0, "day"), (1 / 24, "hour"), (1 / 1440, "minute"))
    size, unit = next(((s, u) for s, u in units if days >= s * (1 - 1e-9)),
                      (1 / SECONDS_PER_DAY, "second"))
    n = figure(days / size, 6)
    return f"{n} {unit}" + ("" if n == "1" else "s")


# --- the crank's step: turns, or a length of time ------------------------------------------

#: what marks a crank step written in turns rather than time (a bare number is turns too)
_TURN_UNITS = ("t", "turn", "turns")
_TURN_STEP = re.compile(r"^\s*(.+?)\s*(?:t|turns?)?\s*$", re.IGNORECASE)
#: the finest step a time is turned into: turns are kept as a fraction with at most this
#: denominator (a step in seconds on a crank of a year a turn is still exact to 1e-12 turn)
STEP_DENOMINATOR = 10**12


def parse_crank_step(text: str, days_per_turn) -> tuple[Fraction, Fraction | None]:
    """A crank step as ``(turns, days)``: ``text`` is turns (``3``, ``2.5``, ``1/24``,
    ``5t``, ``5 turns``) or a length of time with a unit as :func:`parse_step` reads it
    (``12h``, ``3d``, ``2w``, ``1y``), turned into crank turns at ``days_per_turn``
    (``days`` is None for a step in turns). Raises ``ValueError`` for a number it cannot
    read, :class:`DriftError` for a time it cannot read; both with a short reason."""
    from .exact import parse_fraction

    raw = str(text).strip()
    if raw[:1] in ("-", "−"):
        raise DriftError(f"cannot read step {raw!r}: a step is a length, without a sign; "
                         "the crank keys + and − turn on and back by it")
    m = _STEP.match(raw)
    if m:
        _no_month(raw, m.group(2))
    unit = m.group(2).lower() if m else ""
    if m and unit and unit not in _TURN_UNITS:  # a time: 12h, 3d, 1y
        if unit not in _STEP_UNITS:
            raise DriftError(f"cannot read step {raw!r}: unknown unit {unit!r}; write turns "
                             "(3, 2.5, 1/24, 5t) or a time (30m, 6h, 1d, 2w, 1y)")
        days = Fraction(parse_step(raw)).limit_denominator(STEP_DENOMINATOR)
        return days / Fraction(days_per_turn), days
    if not raw:
        raise ValueError("write a number of turns (3, 2.5, 1/24) or a time (12h, 3d, 1y)")
    number = _TURN_STEP.match(raw).group(1)
    try:
        turns = parse_fraction(number, "step")
    except ValueError as exc:
        if re.search(r"[a-z]", raw, re.IGNORECASE):
            raise DriftError(f"cannot read step {raw!r}: write turns (3, 2.5, 1/24, 5t) or "
                             "a number and a unit of time (30m, 6h, 1d, 2w, 1y)") from None
        raise exc
    return turns, None


def turn_days_text(days_per_turn, short: bool = False) -> str:
    """``"1 turn = 29.53 days"``: what one crank turn stands for (``short``: ``"= 29.53 d"``
    style unit). Whole and terminating decimals are shown exactly; others to 7 digits."""
    days = Fraction(days_per_turn)
    shown = _exact_or_7(days)
    unit = "d" if short else ("day" if days == 1 else "days")
    return f"1 turn = {shown} {unit}"


def _exact_or_7(x: Fraction) -> str:
    """A fraction as a decimal: exactly when it terminates within 7 places, else 7 significant
    figures in plain figures (a motor-shaft crank: ``0.000000462963``, never e-notation)."""
    from .figures import figure

    scaled = x * 10**7
    if scaled.denominator == 1:
        whole, rest = divmod(scaled.numerator, 10**7)
        return f"{whole}.{rest:07d}".rstrip("0").rstrip(".")
    return figure(float(x), 7)


_UNIX_EPOCH_JD = 2440587.5  # 1970-01-01 00:00 UTC as a Julian Date


def jd_now(clock=None) -> float:
    """The Julian Date (UT) of this moment by the computer's clock (UTC, which keeps within
    0.9 s of UT1). ``clock`` returns seconds since 1970-01-01 00:00 UTC (default
    :func:`time.time`)."""
    import time

    return (clock or time.time)() / SECONDS_PER_DAY + _UNIX_EPOCH_JD


def parse_when(text: str, *, calendar: str = "auto", clock=None) -> float:
    """:func:`parse_date`, and also ``now`` (this moment by the computer's clock, as
    :func:`jd_now`), ``today`` (its date at 00:00 UT) and ``yesterday`` and ``tomorrow`` (the
    day before and after it, 00:00 UT), as a command's date may be given; :func:`parse_date`
    itself stays free of the clock. ``clock`` as for :func:`jd_now`."""
    word = text.strip().lower() if isinstance(text, str) else None
    if word == "now":
        return jd_now(clock)
    if word in _DAY_WORDS:
        return math.floor(jd_now(clock) - 0.5) + 0.5 + _DAY_WORDS[word]
    try:
        return parse_date(text, calendar=calendar)
    except DateError as exc:  # the words read here, beside parse_date's forms
        if "not a date form I know" not in str(exc):
            raise
        raise DateError(f"{exc}; or now, today, yesterday or tomorrow") from None


_DAY_WORDS = {"yesterday": -1, "today": 0, "tomorrow": 1}  # days from today, each at 00:00 UT
