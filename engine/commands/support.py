"""What every command shares: the parser, option types, outputs, tables and the solar caution.

A command module (``engine/commands/NAME.py``) provides ``add_arguments(parser)`` and
``run(args, console) -> int`` and is listed in :data:`engine.cli.COMMANDS`. It uses:

- :class:`Parser` (made by the entry point): a value argparse cannot read is a
  :class:`~engine.errors.UsageError` (exit 2), never a ``SystemExit``; values starting with a
  minus sign and a digit (``-33.87,151.21``, ``-0100-03-01``, ``-5``) are values, not options.
- option types: :func:`date`, :func:`positive`, :func:`whole`, :func:`train_file`, and the
  shared options :func:`add_site`, :func:`add_ephemeris`, :func:`add_force`.
- :func:`usage_errors`: a ``with`` block in which any ``WheelworkError`` becomes a usage error
  (for checks of option values that need several options at once).
- :class:`OutputFile`: the one way to write a file the user named (``--csv``, ``--png``,
  ``--emit``...): regular files or new names only, never the input, mode kept, ``--force`` to
  replace, written whole to a hidden part file and renamed; the part file is removed on every
  way out (error, Ctrl-C, SIGTERM, SIGHUP).
- :func:`print_table`: a table whose every cell is shown whole; when it is wider than the
  console or its squeezed cells would stack their words line under line, up to three narrower
  tables of its columns, each repeating the columns that name a row, or else the same rows as
  a list; numbers are never cut.
- :data:`SUN_CAUTION`: the one solar caution; :func:`caution_for_file` says it on stderr
  for a file that compares with the real sky but has no room for it (a CSV).
"""

from __future__ import annotations

import argparse
import contextlib
import io
import math
import os
import re
import signal
import stat
import sys
import threading
from pathlib import Path

from ..errors import OutputError, ParserExit, UsageError, WheelworkError, nearest, unit_slip
from ..figures import figure, fixed, line_up  # noqa: F401 - the commands' ways to write a number

SUN_CAUTION = "Never look at the Sun, even briefly, without a proper solar filter."


def caution_for_file(path, caution: str, console, err, *, json: bool) -> None:
    """After writing ``path``, a file that compares a train with the real sky but cannot carry
    ``caution`` itself (a comment line would break CSV readers): the caution on stderr, where
    the terminal shows it, unless the report on stdout already shows it there (text, not
    --json, to a terminal)."""
    if json or not console.is_terminal:
        err.print(f"wheelwork: note: {path} compares with the real sky and has no room for a "
                  f"caution: {caution}", markup=False, highlight=False, soft_wrap=False)

# The one meaning of "ppm" in every command's text and JSON (key ``period_error_ppm``).
PPM_MEANING = ("period ppm (period_error_ppm in --json): (realised period / target period - 1) "
               "x 10^6; positive: the period is too long and the pointer falls behind")

LARGE_OUTPUT_BYTES = 50 * 1024 * 1024  # above this a file's estimated size is said first


# --- the parser ------------------------------------------------------------------------------

# A minus sign followed by a digit (or a point and a digit) starts a value: a negative number,
# a southern or western site (-33.87,151.21) or a date with a negative year (-0100-03-01).
_NEGATIVE_VALUE = re.compile(r"^-\.?\d")


#: what a required argument argparse names as missing is, with an example
_REQUIRED_HINTS = {
    "TRAIN": "a train file, or a demo's name such as tide_office",
    "--out": "the folder to write into, e.g. --out parts",
}


class Parser(argparse.ArgumentParser):
    """argparse without ``SystemExit``: errors raise :class:`UsageError`, ``--help`` raises
    :class:`ParserExit`; negative values are values."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._negative_number_matcher = _NEGATIVE_VALUE

    def error(self, message: str):
        raise UsageError(message + self._hint(message), self.prog)

    def _hint(self, message: str) -> str:
        """What to write instead, for slips argparse names without saying so: a unit parted
        from its number (``--step 6 h``), a date with spaces not in quotes (``sky JD 2451545``)
        and a span not given (``--years`` or ``--to`` missing); a search target, a train or
        an output folder not given, with an example of each."""
        from engine.dates import step_unit

        seen = getattr(self, "_seen", [])
        if message.startswith("unrecognized arguments: "):
            for option, before, word in zip(seen, seen[1:], seen[2:], strict=False):
                if (option == "--step" and step_unit(word)
                        and before.replace(".", "", 1).isdigit()):
                    return f"; a number and its unit are one word: write {before}{word}"
            if (any(a.dest == "date" for a in self._positionals._group_actions)
                    or {"--from", "--to"} & set(seen)):
                return ("; a date written with spaces goes in quotes, "
                        "e.g. 'JD 2451545.0' or '15 March 44 BC'")
        if message.startswith("one of the arguments --to --years is required"):
            return "; say how long a span, e.g. --years 50, or when it ends, e.g. --to 2100-01-01"
        if message.startswith("one of the arguments --period --ratio --cycle is required"):
            return ("; say what to search for, e.g. --cycle 'synodic month', --period 29.53 or "
                    "--ratio 19/235")
        if message.startswith("the following arguments are required: "):
            needed = message.split(": ", 1)[1].split(", ")
            said = [f"{word} ({_REQUIRED_HINTS[word]})" for word in needed
                    if word in _REQUIRED_HINTS]
            return f"; give {' and '.join(said)}" if said else ""
        return ""

    def parse_known_args(self, args=None, namespace=None):
        self._seen = sys.argv[1:] if args is None else list(args)
        self._known_options(self._seen)
        return super().parse_known_args(args, namespace)

    def _known_options(self, args: list[str]) -> None:
        """A mistyped option (``--yeras``) is named, with the nearest known one, before
        argparse can report something else in its place (a required ``--years`` missing).
        A prefix of a known option is left to argparse (it takes unique abbreviations)."""
        known = [s for s in self._option_string_actions if s.startswith("--")]
        for arg in args:
            if arg == "--":
                break
            name = arg.split("=", 1)[0]
            if not name.startswith("--") or any(k.startswith(name) for k in known):
                continue
            # a near miss only (errors.nearest): a looser rule offered an unrelated --to for --site
            near = nearest(name, known)
            raise UsageError(f"unrecognized option {name}"
                             + (f"; did you mean {near}?" if near else ""), self.prog)

    def exit(self, status: int = 0, message: str | None = None):
        if message:
            sys.stderr.write(message)
        raise ParserExit(status)


@contextlib.contextmanager
def usage_errors():
    """Inside this block, a ``WheelworkError`` about option values is a usage error."""
    try:
        yield
    except UsageError:
        raise
    except WheelworkError as exc:
        raise UsageError(str(exc)) from None


# --- option types ----------------------------------------------------------------------------

def _type_error(exc: Exception) -> argparse.ArgumentTypeError:
    return argparse.ArgumentTypeError(str(exc))


def date(text: str) -> float:
    """A date as the docs show it (UT), or ``now``, ``today``, ``yesterday`` or ``tomorrow``
    → JD."""
    from ..dates import parse_when

    try:
        return parse_when(text)
    except WheelworkError as exc:
        raise _type_error(exc) from None


def _number(text: str, what: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number of {what}"
                                         f"{unit_slip(text, what)}") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text}: must be a finite, positive number of {what}")
    return value


def positive(what: str, most: float | None = None):
    """An argparse type: a finite number above 0 (and at most ``most``)."""
    def check(text: str) -> float:
        value = _number(text, what)
        if value <= 0:
            raise argparse.ArgumentTypeError(f"{text}: must be a positive number of {what}")
        if most is not None and value > most:
            raise argparse.ArgumentTypeError(f"{text}: at most {figure(most, 15)} {what}")
        return value
    check.__name__ = what  # argparse names the type in its own messages
    return check


def whole(what: str, least: int, most: int):
    """An argparse type: a whole number from ``least`` to ``most``."""
    def check(text: str) -> int:
        try:
            value = int(text.strip())
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"{text!r} is not a whole number (give {what} from {least:,} to {most:,})"
            ) from None
        if not least <= value <= most:
            raise argparse.ArgumentTypeError(
                f"{value}: {what} must be from {least:,} to {most:,}")
        return value
    check.__name__ = what
    return check


def word(text: str) -> str:
    """A word of an option of fixed words: any case, spaces round it ignored (``--form
    Involute`` is ``involute``), as in a train file."""
    return text.strip().lower()


def one_of(what: str, choices: tuple[str, ...]):
    """An argparse type for an option of fixed words (give ``choices`` too, for the help): a
    :func:`word`, and one not in ``choices`` answered as a train file answers it, with the
    nearest (``unknown tooth form 'involut'; did you mean 'involute'?``) and the choices."""
    from ..errors import unknown_name

    def check(text: str) -> str:
        said = word(text)
        if said not in choices:
            raise argparse.ArgumentTypeError(
                f"{unknown_name(what, said, choices)} (choices: {', '.join(choices)})")
        return said
    check.__name__ = what
    return check


def out_name(what: str):
    """An argparse type for a name to write to (a file or folder): any text but an empty
    one, which would name the current folder (an unset shell variable, ``--out "$DIR"``)."""
    def check(text: str) -> str:
        if not text.strip():
            raise argparse.ArgumentTypeError(f"an empty name; give the {what}")
        return text
    check.__name__ = what
    return check


def site(text: str) -> str:
    """``LAT,LON[,HEIGHT_M]`` or with compass letters (``51.48N 0.01W``), checked; the text is
    passed on (``engine.sites.parse_site`` reads it)."""
    from ..sites import parse_site

    try:
        parse_site(text)
    except WheelworkError as exc:
        raise _type_error(exc) from None
    return text.strip()


def ephemeris(text: str) -> str:
    """``de421``, ``de440``, ``de406`` or an existing SPK file (not a folder)."""
    if text.strip().lower() in ("de421", "de440", "de406"):
        return text.strip()
    if not text.strip():  # Path("") is the current folder: say what is wrong instead
        raise argparse.ArgumentTypeError(
            f"{text!r}: an empty name; give de421, de440, de406 or a JPL SPK file (.bsp)")
    p = Path(text)
    if p.is_dir():
        raise argparse.ArgumentTypeError(
            f"{text}: is a folder; give a JPL SPK file (.bsp) inside it, or de421, de440 or de406")
    if not p.exists():
        # a name one slip off ('de44O' with a letter O, 'de460') is answered with the name
        near = nearest(text.strip().lower(), ("de421", "de440", "de406"))
        if near:
            raise argparse.ArgumentTypeError(
                f"{text}: no such file, and not de421, de440 or de406; did you mean "
                f"'{near}'? (or give a JPL SPK file, .bsp)")
        raise argparse.ArgumentTypeError(
            f"{text}: no such file; give a JPL SPK file (.bsp), or de421, de440 or de406")
    return text


def train_file(text: str) -> str:
    """A train file's path, or the name of a bundled demo train (``tide_office``). A bare
    name that is neither (no folder in it) is refused at once, with the nearest demo's name
    and the list of demos (:class:`TrainError`, exit 1 like any missing train file)."""
    from ..demos import demo_path

    if Path(text).is_dir() and "/" not in text and os.sep not in text \
            and demo_path(text) is not None:
        # a folder is never a train file: a demo's name that is also a folder here (the
        # cutting files of "wheelwork cut tide_office --out tide_office") names the demo
        return str(demo_path(text))
    if Path(text).exists() or not text:
        return text
    found = demo_path(text)
    if found is not None:
        return str(found)
    from ..errors import TrainError

    near = _near_train_file(Path(text))
    if "/" not in text and os.sep not in text:  # a bare name: a demo's, mistyped?
        from ..demos import demo_hint

        if not text.endswith(".toml") and Path(text + ".toml").is_file():
            raise TrainError(text, "", f"no such file, and no demo of that name; did you mean "
                             f"{text}.toml? (only a demo's name is given without .toml)")
        if near is not None:
            raise TrainError(text, "", f"no such file, and no demo of that name; did you mean "
                             f"{near} (in this folder)? {demo_hint(text)}")
        raise TrainError(text, "", f"no such file, and no demo of that name; {demo_hint(text)}")
    if near is not None:
        raise TrainError(text, "", f"no such file; did you mean {near}?")
    return text


def _near_train_file(path: Path) -> str | None:
    """A train file in the same folder whose name is one slip from ``path``'s (``hal.toml``
    for ``hall.toml``), as the path would be written; None when none is that near."""
    folder = path.parent
    try:
        names = [p.name for p in folder.iterdir() if p.suffix == ".toml" and p.is_file()]
    except OSError:
        return None
    # stricter than a slip elsewhere: every name here ends in '.toml', which alone makes two
    # unrelated short names look alike ('a.toml' and 'b.toml' are 0.83 alike)
    close = nearest(path.name, names, cutoff=0.85)
    if close is None and not path.name.endswith(".toml"):
        close = nearest(path.name + ".toml", names, cutoff=0.85)
    if close is None:
        return None
    return close if str(folder) == "." else str(folder / close)


MAX_YEARS = 100_000  # beyond any ephemeris; the span check says what the ephemeris covers


def add_span(parser: argparse.ArgumentParser,
             to_help: str = "last date") -> argparse._ArgumentGroup:
    """The span of a run over dates: ``--from`` (default: the train's epoch) and one of
    ``--to`` or ``--years``, in a group "span" the caller may add to (``args.start``,
    ``args.end``, ``args.years``)."""
    span = parser.add_argument_group("span")
    span.add_argument("--from", dest="start", metavar="DATE", type=date,
                      help="first date (default: the train's epoch); Julian before "
                           "1582-10-15, or say which: '1582-10-10 (Julian)'")
    end = span.add_mutually_exclusive_group(required=True)
    end.add_argument("--to", dest="end", metavar="DATE", type=date, help=to_help)
    end.add_argument("--years", type=positive("years", MAX_YEARS), metavar="N",
                     help="span length in years of 365.25 d")
    return span


def open_span(args: argparse.Namespace):
    """``(mech, sky, start, end)`` for a run over the span of :func:`add_span`: the train
    loaded and set against ``--ephemeris`` (else the one its file names), the span from
    ``--from`` (default: the epoch) to ``--to`` or ``--years`` later. A span that ends before
    it starts is a usage error."""
    import dataclasses

    from ..dates import format_jd, parse_step
    from ..loader import load_train
    from ..mechanism import build, sky_reaching
    from ..periods import JULIAN_YEAR_DAYS

    train = load_train(args.train)
    start = args.start if args.start is not None else train.epoch.jd_ut
    end = args.end if args.end is not None else start + args.years * JULIAN_YEAR_DAYS
    if end <= start:
        raise UsageError(f"--to {format_jd(end)} is not after "
                         + (f"--from {format_jd(start)}" if args.start is not None else
                            f"the train's epoch, {format_jd(start)}; give --from"),
                         getattr(args, "_prog", None))
    # nothing named and the bundled sky falls short: an installed longer one, said so
    # (a drift's last date may pass the end by up to a step)
    step = parse_step(args.step) if getattr(args, "step", None) else 0.0
    sky, note = sky_reaching(train, args.ephemeris, min(start, train.epoch.jd_ut), end + step)
    mech = build(train, sky)
    if note is not None:
        mech = dataclasses.replace(mech, warnings=(note, *mech.warnings))
    return mech, sky, start, end


def add_train(parser: argparse.ArgumentParser, optional: bool = False) -> None:
    from ..demos import DEFAULT_DEMO

    extra = {"nargs": "?", "default": None} if optional else {}
    parser.add_argument(
        "train", metavar="TRAIN", type=train_file,
        help="train file (TOML), or a demo's name (see wheelwork --help)"
        + (f"; default: the demo {DEFAULT_DEMO}" if optional else ""), **extra)


def add_site(parser, help_text: str | None = None) -> None:
    parser.add_argument(
        "--site", metavar="LAT,LON[,H]", type=site, default=None,
        help=help_text or "observe from this place: degrees (north +, east +) and metres, "
        "e.g. --site -33.87,151.21 or '33.87S 151.21E'; default: the Earth's centre")


def add_ephemeris(parser, *, train: bool = True, wider: bool = True) -> None:
    """``--ephemeris``; ``train``: the command reads a train (whose ``[epoch] ephemeris`` is
    the default); ``wider``: the command takes an installed longer ephemeris for a span the
    default cannot reach (:func:`engine.mechanism.wider_sky`)."""
    default = (("the train's [epoch] ephemeris, else " if train else "")
               + "the bundled DE421, 1900-2050"
               + ("; a span or date past it takes an installed longer one, with a note"
                  if wider else ""))
    parser.add_argument(
        "--ephemeris", metavar="FILE|de440|de406", type=ephemeris, default=None,
        help="JPL ephemeris: de440 (optional package, 1550-2650), de406 (the 'ancient' extra, "
        f"3000 BC-AD 3000) or an SPK .bsp file (default: {default})")


def add_force(parser, what: str = "output files") -> None:
    parser.add_argument("--force", action="store_true",
                        help=f"replace existing {what} (regular files only; never the input)")


# --- output files ----------------------------------------------------------------------------

_LIVE_PARTS: set[Path] = set()


def remove_part_files() -> None:
    """Remove every part file still open (called by the entry point on every way out)."""
    for part in list(_LIVE_PARTS):
        with contextlib.suppress(OSError):
            part.unlink()
        _LIVE_PARTS.discard(part)


def _kind(mode: int) -> str | None:
    """What a non-regular file is, in words (None for a regular file)."""
    for test, word in ((stat.S_ISLNK, "a symbolic link"), (stat.S_ISDIR, "a folder"),
                       (stat.S_ISCHR, "a device"), (stat.S_ISBLK, "a device"),
                       (stat.S_ISFIFO, "a FIFO (named pipe)"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return word
    return None if stat.S_ISREG(mode) else "not a regular file"


def _demo_folder() -> str | None:
    """The real path of the package's demo-train folder, ending in a separator (None if it
    cannot be found)."""
    from ..demos import DEFAULT_DEMO, demo_path

    found = demo_path(DEFAULT_DEMO)
    return None if found is None else os.path.realpath(found.parent) + os.sep


class OutputFile:
    """A file the user asked for, checked before any work and written whole.

    ``OutputFile(path, option="--csv", force=args.force, inputs=[args.train])`` refuses at once
    (one line, :class:`OutputError`) a symbolic link, folder, device, FIFO or socket, one of
    the ``inputs`` (the same file by device and inode, so also a hard link to it), a missing
    folder, any name in the package's own demo folder (even with ``force``), and an existing
    regular file unless ``force``. Then::

        with out.open("w") as fh:   # a hidden .NAME.part beside the target
            fh.write(...)
        # renamed over the target on leaving the block; removed on any exception

    The replaced file's permission bits are kept; a new file gets the usual ones (umask).
    ``estimate_bytes`` notes a large file's size on stderr before it is written.
    """

    def __init__(self, path: str | os.PathLike, *, option: str, force: bool = False,
                 inputs=()):
        self.path = Path(path)
        self.option = option
        self.force = force
        self.part = self.path.with_name(f".{self.path.name}.part")
        self.mode: int | None = None
        self._fh = None
        self.check(inputs)

    def _refuse(self, problem: str) -> OutputError:
        return OutputError(f"{self.path}: {problem}")

    def check(self, inputs=()) -> None:
        p = self.path
        if not p.name or p.name in (".", ".."):
            raise self._refuse(f"give a file name for {self.option}")
        demos = _demo_folder()
        if demos is not None and (os.path.realpath(p.parent) + os.sep).startswith(demos):
            raise self._refuse(f"is in wheelwork's own demo folder; {self.option} writes "
                               "elsewhere (the demos ship with the package: copy one out to "
                               "change it)")
        try:
            st = os.lstat(p)
        except FileNotFoundError:
            st = None
        except OSError as exc:
            raise self._refuse(f"cannot be used for {self.option} ({exc.strerror})") from None
        if st is not None:
            kind = _kind(st.st_mode)
            if kind == "a folder":
                raise self._refuse(f"is a folder; give a file name for {self.option}")
            if kind is not None:
                raise self._refuse(f"is {kind}; {self.option} writes only to a regular file "
                                   "or a new name")
            for given in inputs:
                if given is None:
                    continue
                try:
                    other = os.stat(given)
                except OSError:
                    continue
                if (other.st_dev, other.st_ino) == (st.st_dev, st.st_ino):
                    raise self._refuse(f"is the input file {given}; {self.option} must "
                                       "name another file")
            if not self.force:
                raise self._refuse("file exists; use --force to replace it")
            self.mode = stat.S_IMODE(st.st_mode)
        parent = p.parent
        if not parent.is_dir():
            raise self._refuse(f"folder '{parent}' does not exist")

    def same_as(self, other: OutputFile) -> bool:
        return os.path.abspath(self.path) == os.path.abspath(other.path)

    def note_size(self, estimate_bytes: float, console=None) -> None:
        """Say a large file's estimated size in one line before writing it."""
        if estimate_bytes > LARGE_OUTPUT_BYTES:
            line = (f"wheelwork: note: {self.path} will be about "
                    f"{_size_text(estimate_bytes)}")
            if console is not None:
                console.print(line, markup=False, highlight=False)
            else:
                print(line, file=sys.stderr)

    def open(self, mode: str = "w", **kwargs):
        """Open the hidden part file for writing (text by default); use as a context manager,
        or call :meth:`commit` / :meth:`discard` yourself."""
        return _Writing(self, mode, kwargs)

    def _open_part(self, mode: str, kwargs):
        with contextlib.suppress(FileNotFoundError):
            if _kind(os.lstat(self.part).st_mode) not in (None, "a symbolic link"):
                raise self._refuse(f"the part file {self.part} is in the way")
            self.part.unlink()  # left by a run killed beyond cleaning up
        # known before it exists: a Ctrl-C that lands just after the file is made (between
        # two bytecodes, when the process was descheduled there) must still find it to remove
        _LIVE_PARTS.add(self.part)
        try:
            fd = os.open(self.part, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)
        except OSError as exc:
            _LIVE_PARTS.discard(self.part)  # not ours: never remove what we did not make
            raise self._cannot(exc) from None
        try:
            self._fh = os.fdopen(fd, mode, **kwargs)
        except BaseException:
            os.close(fd)
            self.discard()
            raise
        return self._fh

    def _cannot(self, exc: OSError) -> OutputError:
        return self._refuse(f"cannot write it ({exc.strerror or exc})")

    def commit(self) -> None:
        """Close the part file and put it in place of the target."""
        try:
            if self._fh is not None:
                self._fh.close()
                self._fh = None
            try:  # the target may have changed since the check: look again
                st = os.lstat(self.path)
            except FileNotFoundError:
                st = None
            if st is not None and _kind(st.st_mode) is not None:
                raise self._refuse(f"became {_kind(st.st_mode)} while writing; not replaced")
            if self.mode is not None:
                os.chmod(self.part, self.mode)
            os.replace(self.part, self.path)
        except OSError as exc:
            self.discard()
            raise self._cannot(exc) from None
        except BaseException:
            self.discard()
            raise
        _LIVE_PARTS.discard(self.part)

    def discard(self) -> None:
        """Close and remove the part file (the target is left as it was)."""
        if self._fh is not None:
            with contextlib.suppress(OSError):
                self._fh.close()
            self._fh = None
        with contextlib.suppress(OSError):
            self.part.unlink()
        _LIVE_PARTS.discard(self.part)


class _Writing:
    def __init__(self, out: OutputFile, mode: str, kwargs):
        self.out = out
        self.fh = out._open_part(mode, kwargs)

    def __enter__(self):
        return self.fh

    def __exit__(self, exc_type, exc, tb):
        if exc_type is None:
            self.out.commit()
        else:
            self.out.discard()
            if isinstance(exc, OSError):
                raise self.out._cannot(exc) from None
        return False

    def __getattr__(self, name):  # used without ``with``: behaves as the file
        return getattr(self.fh, name)


def _size_text(n: float) -> str:
    for unit in ("bytes", "kB", "MB", "GB", "TB"):
        if n < 1000 or unit == "TB":
            return f"{n:.0f} {unit}" if unit == "bytes" else f"{n:.3g} {unit}"
        n /= 1000
    return f"{n:.3g} TB"


# --- tables ----------------------------------------------------------------------------------

def print_indented(console, text: str, indent: int, *, markup: bool = False) -> None:
    """Print ``text`` ``indent`` spaces in, its wrapped lines too: a line too long for the
    console keeps under its first, where at the left edge it would read as a new item."""
    from rich.text import Text

    body = Text.from_markup(text) if markup else Text(text)
    for line in body.wrap(console, max(console.width - indent, 20), overflow="fold"):
        line.rstrip()
        console.print(Text(" " * indent) + line, crop=False, soft_wrap=True)


#: the mark beside a figure read against a Jupiter or Saturn period of JPL's 1800-2050 mean
#: motion, which the great inequality moves (engine.periods.era_spread_ppm)
ERA_MARK = "*"


def era_marked(text: str, marked: bool, column_marked: bool = True) -> str:
    """A table cell ``text`` with :data:`ERA_MARK` when its figure is against a Jupiter or
    Saturn mean period of 1800-2050 (``marked``), else a space in its place so the column's
    points stay lined up; as it is when nothing in the column is marked."""
    if not column_marked:
        return text
    if not marked:
        return text + " "
    figure_text = text.rstrip()  # beside the figure, before the spaces lining up its point
    return figure_text + ERA_MARK + text[len(figure_text):]


def era_mark_said(spreads: dict[str, float]) -> str:
    """The line under a table saying what :data:`ERA_MARK` means, with how far the mean motion
    of 3000 BC-AD 3000 moves each marked period (``{what: ppm}``)."""
    return (f"{ERA_MARK}: against JPL's mean period of 1800-2050, which the great inequality "
            "of Jupiter and Saturn moves: the mean motion of 3000 BC-AD 3000 moves "
            + ("it" if len(spreads) == 1 else "them") + " by "
            + ", ".join(f"{figure(abs(v), 2)} ppm ({n})" for n, v in spreads.items())
            + "; figures for the centuries round 2000: wheelwork drift measures a pointer "
            "against the sky of any span")


def plain_table(*, title: str | None = None, caption: str | None = None, **kwargs):
    """A rich ``Table`` whose title, caption and string cells are plain text, never markup
    (names from train files may hold ``[`` and ``]``). Style whole cells with ``Text``."""
    from rich.table import Table
    from rich.text import Text

    class PlainTable(Table):
        def add_row(self, *cells, **kw):
            super().add_row(*(Text(c) if isinstance(c, str) else c for c in cells), **kw)

    return PlainTable(title=None if title is None else Text(title, style="bold"),
                      caption=None if caption is None else Text(caption, style="dim"),
                      **kwargs)


def _cell_text(cell) -> str:
    from rich.padding import Padding
    from rich.text import Text

    if isinstance(cell, Padding):  # a lined-up figure (figures.table_cells): its spaces kept
        return _cell_text(cell.renderable) + " " * cell.right
    if isinstance(cell, Text):
        return cell.plain
    if isinstance(cell, str):  # a plain Table's str cell is markup (escaped by the caller)
        from rich.errors import MarkupError

        try:
            return Text.from_markup(cell).plain
        except MarkupError:
            return cell
    return str(cell)


def _fits(console, table) -> bool:
    """Whether ``table`` at the console's width shows every word of every cell whole (rich
    may wrap a cell between words, which loses nothing, but must not fold or cut one)."""
    from rich.console import Console

    probe = Console(width=console.width, file=io.StringIO(), color_system=None,
                    highlight=False, emoji=False)
    # The cells alone: a word of the title or the legend (caption) must not vouch for a cell
    # word that the table itself broke ("frame" in the legend, "fr/am/e" in the column).
    title, caption = table.title, table.caption
    table.title = table.caption = None
    try:
        with probe.capture() as cap:
            probe.print(table, crop=False)
    finally:
        table.title, table.caption = title, caption
    text = cap.get()
    if "…" in text or any(len(line.rstrip()) > console.width for line in text.splitlines()):
        return False
    if table.row_count and _body_lines(probe, table, text) > max(
            MOST_LINES_A_ROW * table.row_count, _own_lines(table)):
        return False  # squeezed columns: words stacked line under line are hard to read
    # every word as many times as the cells hold it: a word cut from one row ("y" of
    # "10,966.3 y") must not be vouched for by the same word in another row
    from collections import Counter

    seen = Counter(text.split())
    wanted = Counter(word for col in table.columns
                     for cell in ([col.header] if table.show_header else []) + list(col.cells)
                     for word in _cell_text(cell).split())
    return all(seen[word] >= n for word, n in wanted.items())


def _own_lines(table) -> int:
    """How many lines ``table``'s rows take at their cells' own line breaks (a search's three
    stages, one a line), however wide the console: that many never count as squeezed."""
    cells = [list(c.cells) for c in table.columns]
    return sum(max((_cell_text(col[i]).count("\n") + 1 for col in cells), default=1)
               for i in range(table.row_count))


#: a table whose rows take more lines than this on average, their cells wrapped in narrow
#: columns, is printed as a list instead
MOST_LINES_A_ROW = 2
#: a table too wide for the console is printed as at most this many narrower tables (more
#: would scatter a row's figures too far apart: a list keeps them together)
MOST_PARTS = 3


def _column_parts(console, table, keys: int) -> list | None:
    """``table``'s columns as narrower tables, each the first ``keys`` columns and as many of
    the next ones, in order, as fit (see :func:`_fits`), without title or caption; None when a
    column does not fit even beside the keys alone, or it would take more than
    :data:`MOST_PARTS` tables."""
    import copy
    import dataclasses

    def part(indices):
        t = copy.copy(table)
        t.title = t.caption = None
        t.columns = [dataclasses.replace(table.columns[i], _index=j,
                                         _cells=list(table.columns[i].cells))
                     for j, i in enumerate(indices)]
        return t

    if not 0 < keys < len(table.columns) - 1:
        return None
    parts, current = [], list(range(keys))
    for i in range(keys, len(table.columns)):
        if _fits(console, part(current + [i])):
            current.append(i)
            continue
        if len(current) == keys:  # not even beside the keys alone
            return None
        parts.append(current)
        current = list(range(keys)) + [i]
        if not _fits(console, part(current)):
            return None
    parts.append(current)
    return [part(p) for p in parts] if len(parts) <= MOST_PARTS else None


def _body_lines(probe, table, text: str) -> int:
    """How many lines ``table``'s rows take in ``text`` (as ``probe`` printed it): its lines
    less those of the same table without rows (header, rules, edges)."""
    import copy
    import dataclasses

    empty = copy.copy(table)
    empty.rows = []
    empty.columns = [dataclasses.replace(c, _cells=[]) for c in table.columns]
    empty.title = empty.caption = None
    with probe.capture() as cap:
        probe.print(empty, crop=False)
    return len(text.splitlines()) - len(cap.get().splitlines())


def print_json(console, doc) -> None:
    """A ``--json`` document, indented by two, its characters as they are (not escaped). When
    the output is no terminal (a file or a pipe: a program reads it) it is written straight
    out — rich's pretty-printing took seconds on a long run's document (a 1,000-year eclipse
    list: 5.5 s of the command's 8.5); on a terminal rich highlights it. The same text either
    way."""
    import json

    text = json.dumps(doc, indent=2, ensure_ascii=False)
    if console.is_terminal:
        console.print_json(text)
    else:
        console.file.write(text + "\n")


def print_table(console, table, keys: int = 1) -> None:
    """Print ``table`` with every cell whole: as a table when every word of every cell fits
    whole at the console's width (cells may wrap between words, if the rows then take no more
    than :data:`MOST_LINES_A_ROW` lines on average, or than their cells' own line breaks ask);
    else as up to :data:`MOST_PARTS` narrower tables of its columns in order, each repeating
    the first ``keys`` columns (what names a row), when each fits so; otherwise the same rows
    as a list (``header: value``), one block per row. Nothing is cut, and the table's title and
    caption (its legend) are kept."""
    from rich.text import Text

    for col in table.columns:  # should a column ever wrap, fold it: never an ellipsis
        col.overflow = "fold"
    if _fits(console, table):
        console.print(table, crop=False)
        return
    parts = _column_parts(console, table, keys)
    if parts is not None:
        if table.title:
            console.print(Text(_cell_text(table.title), style="bold"), overflow="fold")
        for i, part in enumerate(parts):
            if i:
                console.print()
            console.print(part, crop=False)
        if table.caption:
            console.print(Text(_cell_text(table.caption), style="dim"), overflow="fold")
        return
    if table.title:
        console.print(Text(_cell_text(table.title), style="bold"), overflow="fold")
    headers = [_cell_text(c.header) if table.show_header else "" for c in table.columns]
    cells = [list(c.cells) for c in table.columns]
    for i in range(table.row_count):
        values = [_cell_text(col[i]).replace("\n", "  ") for col in cells]
        if not any(headers):  # a list of figures: "label: value"
            label, rest = values[0], "  ".join(v for v in values[1:] if v)
            line = Text.assemble((label, "bold"), ": " if label else "   ", rest)
            console.print(line, overflow="fold")
            continue
        console.print(Text.assemble((f"{headers[0]} " if headers[0] else "", "bold"),
                                    (values[0], "bold")), overflow="fold")
        for head, value in zip(headers[1:], values[1:], strict=True):
            console.print(Text(f"   {head}: {value}" if head else f"   {value}"),
                          overflow="fold")
    if table.caption:
        console.print(Text(_cell_text(table.caption), style="dim"), overflow="fold")


# --- runs and their lengths ---------------------------------------------------------------

class CtrlC:
    """Ctrl-C during a run: raises ``KeyboardInterrupt`` at once, and also keeps a flag that
    the run asks between chunks (``cancelled``), so a stop is honoured even when some library
    call swallows the interrupt. ``quiet()`` keeps only the flag while files are cleaned up.

    Installed only in the main thread, and not when Ctrl-C was ignored when we started (a
    background job, ``nohup``)."""

    def __init__(self):
        self.asked = False
        self.old = None

    def __enter__(self):
        if (threading.current_thread() is threading.main_thread()
                and signal.getsignal(signal.SIGINT) not in (signal.SIG_IGN, None)):
            self.old = signal.signal(signal.SIGINT, self._raise)
        return self

    def _raise(self, signum, frame):
        self.asked = True
        raise KeyboardInterrupt

    def _flag(self, signum, frame):
        self.asked = True

    def cancelled(self) -> bool:
        return self.asked

    def quiet(self):
        if self.old is not None:
            signal.signal(signal.SIGINT, self._flag)

    def __exit__(self, *exc):
        if self.old is not None:
            signal.signal(signal.SIGINT, self.old)
        return False


def count_text(x: float, unit: str) -> str:
    """``2.5 days``, ``1 day``, ``12 days``: one decimal under ten, none above."""
    text = f"{x:.1f}" if x < 9.95 else f"{x:.0f}"
    text = text.removesuffix(".0")
    return f"{text} {unit}" + ("" if text == "1" else "s")


def duration_text(days: float) -> str:
    """Hours under a day, days under a year, years beyond."""
    from ..periods import JULIAN_YEAR_DAYS
    if days < 1:
        return count_text(days * 24, "hour")
    if days < JULIAN_YEAR_DAYS:
        return count_text(days, "day")
    return f"{fixed(days / JULIAN_YEAR_DAYS, 2)} years"
