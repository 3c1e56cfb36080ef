"""The errors wheelwork reports to a user: one line, naming the file, the item and the fault.

Every exception class of the engine lives here, with the words that answer a mistyped name
(:func:`unknown_name`, :func:`nearest`). The last section holds the control-flow
signals: exceptions that unwind a run on purpose (a cancelled drift run, argparse finishing
with ``--help``, a stop signal). They are not faults and are not ``WheelworkError``s, so no
``except WheelworkError`` meant for faults ever swallows one.
"""

from __future__ import annotations

SLIP = 0.75  # how alike (difflib's ratio, 0 to 1) a word must be to a known one to be offered


def nearest(name: str | None, known, cutoff: float = SLIP) -> str | None:
    """The one of ``known`` that ``name`` is a slip from (``year_out`` for ``year_output``),
    else None: every did-you-mean answer of wheelwork asks here, so a slip is judged alike
    everywhere. ``cutoff`` is stricter only where the names share a long common part that
    would make unrelated ones look alike (see the callers)."""
    if not name:
        return None
    import difflib  # only on the way to an error

    near = difflib.get_close_matches(str(name), [str(k) for k in known], n=1, cutoff=cutoff)
    return near[0] if near else None


def did_you_mean(name: str | None, known) -> str:
    """``; did you mean 'year_out'?`` when one of ``known`` is a slip from ``name`` (long
    names such as 'moon_s3_driven' are easily mistyped), else empty: the one way a mistyped
    name or word is answered, in train files and options alike (:func:`nearest`)."""
    near = nearest(name, known)
    return f"; did you mean '{near}'?" if near else ""


def decimal_comma(text: object) -> str:
    """``; a decimal is written with a point: 1.5`` for a number written with a decimal comma
    (``1,5``, as many countries write it), else empty."""
    import re

    if isinstance(text, str) and re.fullmatch(r"\s*[+-]?\d+,\d+\s*", text):
        return f"; a decimal is written with a point: {text.strip().replace(',', '.')}"
    return ""


#: the ways a number's unit is written after it, by the unit an option's value is in (the
#: option's name or help says it): '0.02mm' for --eccentricity-mm, '25y' for --years
UNIT_WORDS = {
    "mm": ("mm",),
    "degrees": ("deg", "degs", "degree", "degrees", "°"),
    "years": ("y", "yr", "yrs", "year", "years"),
    "days": ("d", "day", "days"),
    "turns per minute": ("rpm",),
}


def unit_slip(text: object, unit: str) -> str:
    """``; the unit is already mm: write 0.02`` for an option's number written with the unit
    it is in after it (``0.02mm``, ``0.25°``, ``25 years``), else :func:`decimal_comma`'s hint
    or empty. Only the option's own unit: '2cm' for a value in mm is not 2."""
    import re

    if isinstance(text, str):
        m = re.fullmatch(r"\s*([+-]?(?:\d+\.?\d*|\.\d+))\s*([^\d\s.]+)\s*", text)
        if m and m.group(2).lower() in UNIT_WORDS.get(unit, ()):
            return f"; the value is in {unit} already: write {m.group(1)}"
    return decimal_comma(text)


def unknown_name(what: str, name: str, known) -> str:
    """``unknown arbor 'year_output'; did you mean 'year_out'?``: the nearest of ``known``,
    when one is a slip away (:func:`did_you_mean`)."""
    return f"unknown {what} '{name}'" + did_you_mean(name, known)


class WheelworkError(Exception):
    """Base of every error meant for the user (the CLI prints it as one line, exit code 1)."""


class TrainError(WheelworkError):
    """A train file that cannot be read, or describes a train that cannot work."""

    def __init__(self, where: str, item: str, problem: str):
        self.where, self.item, self.problem = where, item, problem
        super().__init__(f"{where}: {item}: {problem}" if item else f"{where}: {problem}")


class DateError(WheelworkError):
    """A date that cannot be parsed or lies outside what can be computed."""


class SkyError(WheelworkError):
    """A sky computation that cannot be done (date outside the ephemeris, impossible site...)."""


class SearchError(WheelworkError):
    """A tooth-count search with a bad target or impossible constraints."""


class UsageError(WheelworkError):
    """A command-line option value that cannot be read, is out of range or does not fit the
    other options (the CLI prints it as one line, exit code 2). ``prog`` names the command
    (``wheelwork drift``) when known."""

    def __init__(self, message: str, prog: str | None = None):
        super().__init__(message)
        self.prog = prog


class OutputError(WheelworkError):
    """An output file that must not or cannot be written (exists, is a link, a device, the
    input itself, a missing folder...)."""


class DriftError(WheelworkError):
    """A drift run that cannot be done: bad step, empty or reversed span, too many dates."""


class UnknownName(WheelworkError, KeyError):
    """A name looked up that does not exist (a period, a pointer kind, an arbor, a pointer).
    Also a ``KeyError``, so code that looks names up keeps catching it as one; it prints as
    its plain one-line message (a bare ``KeyError`` prints quoted)."""

    def __str__(self) -> str:
        return str(self.args[0]) if self.args else ""


class ArgumentError(WheelworkError, ValueError):
    """An engine function called (from a script or notebook) with a value it cannot use; the
    message names the argument. Also a ``ValueError``."""


class PlacementError(TrainError):
    """No position of a plate's holes satisfies every centre distance the meshes demand."""


# --- control-flow signals, not errors ----------------------------------------------------------

class DriftCancelled(Exception):  # noqa: N818 - it is a request, not a fault
    """Raised between chunks of a drift run when its ``cancel`` callback asks to stop (not a
    fault: the command exits 130 quietly)."""


class SearchCancelled(Exception):  # noqa: N818 - it is a request, not a fault
    """Raised between steps of a tooth search when its ``cancel`` callback asks to stop."""


class ParserExit(Exception):  # noqa: N818 - argparse finished, nothing went wrong
    """The command-line parser finished on its own (``--help``, ``--version``): ``status`` is
    the exit code to return (``engine.commands.support.Parser`` raises it instead of
    ``SystemExit``)."""

    def __init__(self, status: int):
        super().__init__(status)
        self.status = status


class Terminated(BaseException):  # noqa: N818 - a signal, not a fault
    """SIGTERM or SIGHUP arrived (``engine.cli`` raises it from its signal handler): unwind,
    so every ``finally`` and part-file cleanup runs; ``signum`` gives the exit code 128 + N.
    A ``BaseException``, like ``KeyboardInterrupt``, so ``except Exception`` does not stop it."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signum
