"""Read a train file (TOML) into a :class:`engine.train.Train`, checking every item.

The file is data: it is parsed with ``tomllib`` and numbers with our own fraction reader;
nothing in it is ever evaluated. Every error names the file, the item and what is wrong.
The format is described in ``docs/train-format.md``.

Sizes are bounded before anything is built (see ``LIMITS``), so no file — however large, deep
or strange — makes the loader or the solver hang, run out of memory or overflow: only regular
files are read (never a device or a FIFO), at most ``MAX_FILE_BYTES`` of them, brackets nested
at most ``MAX_NESTING`` deep, and every count and number within bounds a real train keeps to.
"""

from __future__ import annotations

import datetime as _dt
import math
import os
import re
import stat
import tomllib
import unicodedata
from fractions import Fraction
from pathlib import Path

from .errors import (
    DateError,
    TrainError,
    decimal_comma,
    did_you_mean,
    unit_slip,
    unknown_name,
)
from .exact import parse_fraction
from .figures import figure
from .kinds import DIAL_FRAMES, KINDS, kind_key
from .periods import SECONDS_PER_DAY
from .train import (
    CROSSINGS_AUTO,
    EPHEMERIS_NAMES,
    FRAME,
    PIVOTS_IN,
    SET_MODES,
    TOOTH_FORMS,
    Arbor,
    Crank,
    EclipseSettings,
    Epoch,
    Mesh,
    PinSlot,
    Pointer,
    Train,
    Wheel,
    WheelShop,
    Workshop,
)

# Limits. A real train has tens of arbors and wheels of at most a few hundred teeth; these
# bounds are far beyond that and keep every computation on a file small and quick.
MAX_FILE_BYTES = 1_000_000       # a 2,000-arbor train is about 150 kB
MAX_NESTING = 8                  # brackets and braces inside one another (a train needs 2)
MAX_DEPTH = 8                    # tables inside tables, dotted keys included (a train needs 4)
MAX_NAME_CHARS = 200
MAX_TEXT_CHARS = 20_000          # about, note
MAX_TEETH = 10_000
MAX_ARBORS = 2_000
MAX_WHEELS = 10_000
MAX_MESHES = 5_000
MAX_PIN_SLOTS = 50
MAX_POINTERS = 200
# The fastest crank: 100 turns a second of the time shown (6000 rpm), so the shaft of a small
# electric motor driving a display in real time can be the crank (1500 and 3000 rpm are common
# motor speeds, common practice, no source); a faster figure is more likely a slip of units.
MAX_CRANK_TURNS_PER_SECOND = 100
MIN_DAYS_PER_TURN = Fraction(1, MAX_CRANK_TURNS_PER_SECOND * SECONDS_PER_DAY)
MAX_DAYS_PER_TURN = Fraction(1_000_000)   # one crank turn in about 2,700 years
MIN_PER_TURN = Fraction(1, 1_000_000)
MAX_PER_TURN = Fraction(1_000_000)
#: the bounds of [crank] days_per_turn in words, as every refusal of one says them
DAYS_PER_TURN_BOUNDS = (f"1/{MIN_DAYS_PER_TURN.denominator} ({MAX_CRANK_TURNS_PER_SECOND} "
                        f"turns a second, {MAX_CRANK_TURNS_PER_SECOND * 60:,} rpm) and "
                        f"{int(MAX_DAYS_PER_TURN):,} days")
MAX_MM = 1_000_000.0             # a kilometre: lengths and positions
# the unit a number key's name ends in (bore_mm, tilt_deg), as engine.errors.UNIT_WORDS names it
_KEY_UNITS = {"mm": "mm", "deg": "degrees", "days": "days", "years": "years"}
MAX_CROSSINGS = 64               # crossings (spokes) of one wheel
MAX_DEG = 1_000_000.0            # angles (any number of whole turns, then reduced)

LIMITS = {
    "file size": f"{MAX_FILE_BYTES:,} bytes", "nesting": f"{MAX_NESTING} levels",
    "teeth": f"1 to {MAX_TEETH:,}", "arbors": f"{MAX_ARBORS:,}", "wheels": f"{MAX_WHEELS:,}",
    "meshes": f"{MAX_MESHES:,}", "pin-and-slot stages": f"{MAX_PIN_SLOTS}",
    "pointers": f"{MAX_POINTERS}", "days_per_turn": DAYS_PER_TURN_BOUNDS,
    "per_turn": "1/1000000 to 1000000", "names": f"{MAX_NAME_CHARS} characters",
}

_TOP_KEYS = {"train", "crank", "epoch", "arbors", "meshes", "pin_slots", "pointers",
             "eclipses", "workshop"}
_KEYS = {
    "train": {"name", "about", "dial"},
    "crank": {"arbor", "days_per_turn"},
    "epoch": {"date", "set", "calendar", "ephemeris"},
    "arbor": {"wheels", "on", "fixed", "at_mm", "axis_with", "pivot_mm", "pivots_in", "plates",
              "note"},
    "mesh": {"wheels", "ring", "module_mm", "face_mm", "note"},
    "pin_slot": {"pin", "slot", "pin_radius_mm", "offset_mm", "offset_deg", "pin_deg",
                 "pin_diameter_mm", "arm_mm", "arm_deg", "note"},
    "pointer": {"shows", "seen_from", "arbor", "relative_to", "per_turn", "reversed",
                "set_deg", "note", "lunations", "solar_months", "lunar_months"},
    "eclipses": {"solar_limit_deg", "lunar_limit_deg", "penumbral", "note"},
    "workshop": {"tooth_form", "bore_mm", "crossings", "rim_mm", "pivot_mm", "backlash_mm",
                 "division", "eccentricity_mm", "end_shake_mm", "tilt_deg", "hole_mm",
                 "carrier_plate_mm", "wheels", "note"},
    "workshop_wheel": {"form", "bore_mm", "crossings", "rim_mm", "eccentricity_mm", "division",
                       "note"},
}


def _is_control(ch: str) -> bool:
    """Control and invisible format characters (escape codes, bidi overrides...)."""
    return unicodedata.category(ch) in ("Cc", "Cf", "Cs", "Co", "Cn") and ch not in "\n\t"


def safe_text(text: str) -> str:
    """``text`` with control and format characters written as escapes (``\\x1b``), so text
    from a file can be shown on a terminal without acting on it."""
    if not any(_is_control(ch) or ch in "\n\t" for ch in text):
        return text
    return "".join(ch.encode("unicode_escape").decode("ascii")
                   if _is_control(ch) or ch in "\n\t" else ch for ch in text)


class _Reader:
    def __init__(self, where: str):
        self.where = where

    def fail(self, item: str, problem: str) -> TrainError:
        return TrainError(self.where, safe_text(item), safe_text(problem))

    def table(self, value: object, item: str, kind: str) -> dict:
        if isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            raise self.fail(item, f"is written with double brackets, [{item}], which makes a "
                            f"list of tables; write it once with single brackets, {item}")
        if not isinstance(value, dict):
            raise self.fail(item, f"should be a table of keys, got {_show(value)}")
        unknown = sorted(set(value) - _KEYS[kind])
        if unknown:
            known = ", ".join(sorted(_KEYS[kind]))
            raise self.fail(item, f"unknown key {_show(unknown[0])}"
                            f"{did_you_mean(unknown[0], _KEYS[kind])} (known keys: {known})")
        if "note" in value:
            self.prose(value["note"], f"{item} note")
        return value

    def need(self, tbl: dict, key: str, item: str):
        if key not in tbl:
            raise self.fail(item, f"missing key '{key}'")
        return tbl[key]

    def name(self, value: str, item: str) -> str:
        """A name used as a key ([arbors.NAME], a wheel...): printable, not too long."""
        if not value.strip():
            raise self.fail(item, "the name is empty")
        if any(_is_control(ch) or ch in "\n\t" for ch in value):
            raise self.fail(item, f"the name {_show(value)} contains control characters; "
                            "use letters, digits, spaces and punctuation")
        if len(value) > MAX_NAME_CHARS:
            raise self.fail(item, f"the name is {len(value)} characters long; at most "
                            f"{MAX_NAME_CHARS} are allowed")
        return value

    def text(self, value: object, item: str) -> str:
        if not isinstance(value, str) or not value.strip():
            raise self.fail(item, f"should be a name in quotes, got {_show(value)}")
        return self.name(value, item).strip()

    def prose(self, value: object, item: str) -> str:
        """Free text (about, note): a string; line breaks and tabs allowed, no control codes."""
        if not isinstance(value, str):
            raise self.fail(item, f"should be text in quotes, got {_show(value)}")
        if any(_is_control(ch) for ch in value):
            raise self.fail(item, "contains control characters (only line breaks and tabs "
                            "are allowed in text)")
        if len(value) > MAX_TEXT_CHARS:
            raise self.fail(item, f"is {len(value):,} characters long; at most "
                            f"{MAX_TEXT_CHARS:,} are allowed")
        return value

    def number(self, value: object, item: str, *, positive=False, nonneg=False,
               limit: float = MAX_MM) -> float:
        if isinstance(value, bool) or not isinstance(value, int | float):
            # a key named for its unit (bore_mm, tilt_deg) written with it: "0.02mm" says to
            # write 0.02, as the options do (engine.errors.unit_slip)
            unit = _KEY_UNITS.get(item.rsplit("_", 1)[-1], "") if "_" in item else ""
            raise self.fail(item, f"should be a number, got {_show(value)}"
                            f"{unit_slip(value, unit)}")
        # the bounds as this value has them: a length that must be positive is never offered
        # a negative bound
        bounds = (f"above 0 and at most {figure(limit, 7)}" if positive else
                  f"between 0 and {figure(limit, 7)}" if nonneg else
                  f"between {figure(-limit, 7)} and {figure(limit, 7)}")
        if isinstance(value, int) and abs(value) > limit:
            raise self.fail(item, f"must be {bounds}, got {_show(value)}")
        if not math.isfinite(value):
            raise self.fail(item, f"should be a finite number, got {_show(value)}")
        if positive and value <= 0:
            raise self.fail(item, f"must be greater than zero, got {value}")
        if nonneg and value < 0:
            raise self.fail(item, f"must not be negative, got {value}")
        if abs(value) > limit:
            raise self.fail(item, f"must be {bounds}, got {_show(value)}")
        return float(value)

    def choice(self, value: object, item: str, choices: tuple[str, ...]) -> str:
        """One word of a fixed list, in any case and with spaces round it ("Involute" is
        involute); returned as the list spells it."""
        word = value.strip().lower() if isinstance(value, str) else None
        if word not in choices:
            raise self.fail(item, f"should be one of {', '.join(choices)}, got {_show(value)}"
                            + did_you_mean(word, choices))
        return word

    def flag(self, value: object, item: str) -> bool:
        if not isinstance(value, bool):
            raise self.fail(item, f"should be true or false, got {_show(value)}")
        return value

    def fraction(self, value: object, item: str, low: Fraction, high: Fraction,
                 bounds: str) -> Fraction:
        try:
            number = parse_fraction(value)
        except ValueError as exc:
            raise self.fail(item, str(exc)) from None
        if number <= 0:
            raise self.fail(item, f"must be greater than zero, got {_show(value)}")
        if not low <= number <= high:
            raise self.fail(item, f"must be between {bounds}, got {_show(value)}")
        return number


def _count_hint(name: str, value: object) -> str:
    """What to write for a tooth count TOML did not read as a whole number, where the count is
    plain in it: in quotes (``"59"``: ``; write it without quotes: name = 59``) or with a
    point (``59.0``: ``; write it without the point: name = 59``); else nothing."""
    if not re.fullmatch(r"[A-Za-z0-9_-]+", name):  # as TOML takes the name: bare or quoted
        name = f'"{name}"'
    if isinstance(value, str) and re.fullmatch(r"\s*\d+\s*", value):
        return f"; write it without quotes: {name} = {int(value)}"
    if isinstance(value, float) and value.is_integer() and 0 < value <= MAX_TEETH:
        return f"; write it without the point: {name} = {int(value)}"
    return ""


def _show(value: object) -> str:
    text = repr(value) if not isinstance(value, dict | list) else _short_repr(value)
    return text if len(text) < 40 else text[:37] + "..."


def _short_repr(value: dict | list) -> str:
    """A container's kind and size: never a repr (it could be nested deep or be huge)."""
    if isinstance(value, dict):
        return f"a table of {len(value)} key{'s' if len(value) != 1 else ''}"
    return f"a list of {len(value)} item{'s' if len(value) != 1 else ''}"


def regular_file_bytes(path: Path, where: str) -> bytes:
    """The bytes of a regular file, read only after ``stat`` says it is one (a FIFO, a device
    or a socket is refused before it is opened, so reading never blocks or runs forever)."""
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise TrainError(where, "", "no such file") from None
    except OSError as exc:
        raise TrainError(where, "", f"cannot be read ({exc.strerror})") from None
    if stat.S_ISDIR(info.st_mode):
        raise TrainError(where, "", "is a folder, not a train file")
    if not stat.S_ISREG(info.st_mode):
        raise TrainError(where, "", "is not a regular file (a device, a pipe or a socket); "
                         "give the path of a .toml train file")
    if info.st_size > MAX_FILE_BYTES:
        raise TrainError(where, "", f"is {info.st_size:,} bytes; a train file may be at most "
                         f"{MAX_FILE_BYTES:,} bytes")
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise TrainError(where, "", f"cannot be read ({exc.strerror})") from None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):  # replaced between stat and open
            raise TrainError(where, "", "is not a regular file")
        with os.fdopen(fd, "rb", closefd=False) as f:
            raw = f.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise TrainError(where, "", f"cannot be read ({exc.strerror})") from None
    finally:
        os.close(fd)
    if len(raw) > MAX_FILE_BYTES:
        raise TrainError(where, "", f"is larger than {MAX_FILE_BYTES:,} bytes, the most a "
                         "train file may be")
    return raw


def load_train(path: str | Path) -> Train:
    """Read and check a train file. Raises :class:`TrainError` naming file, item and fault."""
    if not isinstance(path, (str, os.PathLike)):
        raise TrainError(safe_text(repr(path))[:60], "", f"is a {type(path).__name__}, not a "
                         "train file's path (text, or a pathlib.Path)")
    path = Path(path)
    where = safe_text(str(path))
    try:
        raw = regular_file_bytes(path, where)
    except TrainError as exc:
        from .demos import demo_path  # the commands take a demo's name; Python wants a file

        name = str(path)
        if exc.problem == "no such file" and path.name == name and demo_path(name):
            raise TrainError(where, "", f"no such file; {name} is a demo's name: its file is "
                             f"demo_path({name!r}) (engine.api)") from None
        raise
    return parse_train(train_text(raw, where), where)


def train_text(raw: bytes, where: str) -> str:
    """A train file's bytes as text (UTF-8, a byte-order mark kept for the parser to drop),
    or a one-line :class:`TrainError` saying what the file is instead and what to do: UTF-16
    (as some editors save "Unicode"), a binary file, or a letter in another encoding (the line
    it is on)."""
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
            problem = ("is UTF-16 text (what some editors save as \"Unicode\"); save it as "
                       "UTF-8")
        elif b"\x00" in raw[:4096]:
            problem = "is not a text file (it holds binary data); give a train file (TOML text)"
        else:
            line = raw.count(b"\n", 0, exc.start) + 1
            column = exc.start - raw.rfind(b"\n", 0, exc.start)
            problem = (f"line {line}, column {column}: a byte that is not UTF-8 (a letter saved "
                       f"in another encoding, such as Windows-1252 or Latin-1); save the file "
                       f"as UTF-8")
        raise TrainError(where, "", problem) from None


_TOKENS = re.compile(r'"""(?:[^\\]|\\.)*?"""|\'\'\'.*?\'\'\'|"(?:[^"\\\n]|\\.)*"'
                     r"|'[^'\n]*'|#[^\n]*|[\[\]{}]"
                     rf"|(?:[A-Za-z0-9_-]+[ \t]*\.[ \t]*){{{MAX_DEPTH},}}[A-Za-z0-9_-]+",
                     re.DOTALL)


def _nesting(text: str) -> tuple[int, int]:
    """Deepest nesting of brackets and braces (or parts of a dotted key) outside strings and
    comments, and its line.

    tomllib reads nested arrays and inline tables recursively, so a file nested thousands deep
    would exhaust the stack, and a dotted key thousands of parts long takes it seconds; this
    scan runs first, in one pass, without recursion.
    """
    depth = deepest = 0
    at = 0
    for m in _TOKENS.finditer(text):
        tok = m.group()
        if tok in "[{":
            depth += 1
            if depth > deepest:
                deepest, at = depth, m.start()
        elif tok in "]}":
            depth = max(depth - 1, 0)
        elif tok[0] not in "\"'#":  # a dotted key: each part is a table inside the last
            parts = tok.count(".") + 1
            if parts > deepest:
                deepest, at = parts, m.start()
    return deepest, text.count("\n", 0, at) + 1


def _table_depth(doc: dict) -> int:
    """How deep tables and arrays sit inside one another (iterative: no recursion)."""
    deepest = 0
    stack: list[tuple[object, int]] = [(doc, 1)]
    while stack:
        value, depth = stack.pop()
        deepest = max(deepest, depth)
        if deepest > MAX_DEPTH:
            return deepest
        if isinstance(value, dict):
            stack.extend((v, depth + 1) for v in value.values() if isinstance(v, dict | list))
        elif isinstance(value, list):
            stack.extend((v, depth + 1) for v in value if isinstance(v, dict | list))
    return deepest


_NAMED_SECTIONS = ("arbors", "pointers", "pin_slots", "workshop")
_QUOTED = re.compile(r'"(?:[^"\\]|\\.)*"|\'[^\']*\'')
_PLAIN_WORDS = re.compile(r"[^\W\d][\w .'-]*$")  # a word or words, as text written bare


def _number_hint(line: str) -> str:
    """For a line with a value TOML cannot read that a maker meant as a number — a decimal
    comma (``days_per_turn = 1,5``), a unit or a slip after the figures (``disc_teeth = 5x9``,
    ``59 teeth``, also inside ``{ ... }``), or no value at all (``days_per_turn =``) — what
    to write instead; empty otherwise."""
    if line.startswith("["):
        return ""
    key, _, value = line.partition("=")
    value = value.strip()
    if not value:
        return f"; the value after '{safe_text(key.strip()[:60])} =' is missing"
    inner = re.fullmatch(r"\{(.*)\}?", value)
    pairs = ([p.partition("=") for p in inner[1].rstrip("}").split(",")] if inner else
             [(key, "=", value)])
    for k, eq, v in pairs:
        k, v = k.strip(), v.strip()
        if not eq or not k:
            continue
        if not v:
            return f"; the value after '{safe_text(k[:60])} =' is missing"
        if not re.match(r"[+-]?\.?\d", v):
            continue
        try:
            tomllib.loads(f"x = {v}")
            continue
        except tomllib.TOMLDecodeError:
            pass
        shown = f"{safe_text(k[:60])} = {safe_text(v[:40])}"
        if not inner and decimal_comma(v):
            return f"; {shown}{decimal_comma(v).replace(': ', f': {safe_text(k[:60])} = ')}"
        return (f"; {shown}: a number is written in figures alone, without units (59, 29.5, "
                f"1.5e-3), an exact fraction in quotes (\"6940/235\")")
    return ""


def _toml_hint(text: str, message: str) -> str:
    """What to write instead, for the faults the TOML reader's words leave unclear to a maker:
    a name with letters TOML allows only in quotes (``[arbors.année]``), text written without
    quotes (``name = Nineteen drum``), a key given twice ("Cannot overwrite a value") and a
    table written twice ("Cannot declare ('arbors', 'sun') twice"); empty otherwise."""
    at = re.search(r"at line (\d+)", message)
    lines = text.splitlines()
    if not at or not 1 <= int(at[1]) <= len(lines):
        return ""
    line = lines[int(at[1]) - 1].split("#", 1)[0].strip()
    key, _, value = line.partition("=") if not line.startswith("[") else (line, "", "")
    if any(ord(ch) > 127 for ch in _QUOTED.sub("", line)):  # TOML has them only in quotes
        return ("; a name with letters other than A-Z, a-z, 0-9, _ and - goes in quotes, "
                'e.g. [arbors."année"] or "jahresräd" = 127')
    value = value.strip()
    header = re.fullmatch(r"(\[\[?)\s*([A-Za-z0-9_.-]+)\s*\]\]?", line)
    if header and not value:  # a table header clashing with another written otherwise
        double, name = header[1] == "[[", header[2]
        if name.split(".")[0] == "meshes":
            return ("; every mesh is its own [[meshes]] table, with double brackets ([meshes] "
                    "with single brackets is one table, which can be written once)")
        if double and name.split(".")[0] in _NAMED_SECTIONS:
            return (f"; [[{safe_text(name[:120])}]] with double brackets makes a list: write "
                    f"each as a named table in single brackets, as above "
                    f"([{safe_text(name[:120])}.NAME])")
    if key.strip() == "date" and value and value[0] not in "\"'":
        # TOML's own dates have years 0001-9999 and no era: a year before AD 1, BC, a month
        # name or a JD is text to TOML, so it goes in quotes
        return (f'; a date TOML cannot hold as it is (a year before AD 1, an era, a month '
                f'name) goes in quotes: date = "{safe_text(value[:60])}"')
    number = _number_hint(line)
    if number:
        return number
    if value and _PLAIN_WORDS.match(value) and value not in ("true", "false", "inf", "nan"):
        return f'; text goes in quotes: {safe_text(key.strip())} = "{safe_text(value[:60])}"'
    if message.startswith("Cannot overwrite a value") and value:
        return f"; '{safe_text(key.strip()[:60])}' is given twice in one table: keep one"
    declared = re.match(r"Cannot declare \(([^)]*)\) twice", message)
    if declared:
        name = ".".join(part for part in (p.strip().strip("'\"") for p in declared[1].split(","))
                        if part)  # a one-part name comes as "('train',)"
        return f"; [{safe_text(name[:120])}] is written twice: put its keys in one table"
    return ""


def parse_train(text: str, where: str = "<train>") -> Train:
    """Build a :class:`Train` from TOML text (``where`` names it in errors)."""
    where = safe_text(where)
    text = text.removeprefix("\ufeff")  # a byte-order mark, as some editors write
    if len(text) > MAX_FILE_BYTES:
        raise TrainError(where, "", f"is {len(text):,} characters; a train file may be at most "
                         f"{MAX_FILE_BYTES:,}")
    deepest, line = _nesting(text)
    if deepest > MAX_NESTING:
        raise TrainError(where, f"line {line}", f"brackets or dotted keys nested {deepest} deep; "
                         f"a train file needs at most 3 and may use {MAX_NESTING}")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise TrainError(where, "", f"not valid TOML: {safe_text(str(exc))}"
                         f"{_toml_hint(text, str(exc))}") from None
    except RecursionError:  # cannot happen after the scan above; kept so it never escapes
        raise TrainError(where, "", "nested too deep to read") from None
    if _table_depth(doc) > MAX_DEPTH:
        raise TrainError(where, "", f"tables are nested more than {MAX_DEPTH} deep; a train "
                         "needs 4 ([arbors.NAME] wheels = { ... })")
    r = _Reader(where)
    if not doc:  # an empty file, or one of comments only: say so, not "no arbors"
        from .demos import demo_path  # local import keeps the loader light to import
        from .guides import pointer

        # the demos' folder as installed (inside site-packages after a plain pip install),
        # not the checkout's engine/trains/, which a newcomer may not have
        first = demo_path("moon_disc_59")
        raise TrainError(where, "", "is empty (no tables or keys, only blank lines or comments); "
                         "a train has [crank], [epoch], [arbors.NAME], [[meshes]] and "
                         f"[pointers.NAME] tables: see {pointer()}, or copy a demo "
                         f"and change it (the simplest is {first}; the others are beside it)")
    unknown = sorted(set(doc) - _TOP_KEYS)
    if unknown:
        raise r.fail(f"[{_show(unknown[0])[1:-1]}]", "unknown section"
                     + did_you_mean(unknown[0], _TOP_KEYS) + " (known: "
                     + ", ".join(sorted(_TOP_KEYS)) + ")")

    head = r.table(doc.get("train", {}), "[train]", "train")
    name = r.text(head.get("name", Path(where).stem or "train"), "[train] name")
    about = r.prose(head.get("about", ""), "[train] about")
    dial = r.choice(head.get("dial", "equinox"), "[train] dial", DIAL_FRAMES)

    arbors, wheels = _read_arbors(r, doc)
    _check_mounts(r, arbors)
    meshes = _read_meshes(r, doc, wheels)
    pin_slots = _read_pin_slots(r, doc, arbors)
    crank = _read_crank(r, doc, arbors)
    epoch = _read_epoch(r, doc)
    pointers = _read_pointers(r, doc, arbors, epoch)
    eclipses = _read_eclipses(r, doc)
    workshop = _read_workshop(r, doc, wheels)
    return Train(name=name, source=where, arbors=arbors, wheels=wheels, meshes=meshes,
                 pin_slots=pin_slots, crank=crank, epoch=epoch, pointers=pointers, dial=dial,
                 about=about.strip(), eclipses=eclipses, workshop=workshop)


def _read_eclipses(r: _Reader, doc: dict) -> EclipseSettings:
    """``[eclipses]``: ecliptic limits in degrees (0-30) and ``penumbral`` (true/false)."""
    tbl = r.table(doc.get("eclipses", {}), "[eclipses]", "eclipses")
    limits = {}
    for key in ("solar_limit_deg", "lunar_limit_deg"):
        if key in tbl:
            v = r.number(tbl[key], f"[eclipses] {key}", limit=MAX_DEG)
            if not 0 < v <= 30:
                raise r.fail(f"[eclipses] {key}", f"an ecliptic limit is a few degrees of the "
                             f"Sun from a node: give more than 0 and at most 30, got {_show(v)}")
            limits[key] = float(v)
    return EclipseSettings(**limits, penumbral=r.flag(tbl.get("penumbral", False),
                                                      "[eclipses] penumbral"))


def _read_cycle(r: _Reader, tbl: dict, item: str, shows: str):
    """A cycle dial's ``lunations`` (its per_turn) and its month marks (None: from the sky)."""
    keys = [k for k in ("lunations", "solar_months", "lunar_months") if k in tbl]
    if shows != "cycle":
        if keys:
            raise r.fail(f"{item} {keys[0]}", "only an eclipse-cycle dial (shows = \"cycle\") "
                         "has lunations and marked months")
        return None, None
    if "lunations" not in tbl:
        raise r.fail(item, "missing key 'lunations': how many lunations the cycle dial "
                     "counts in one turn (223 for the classical eclipse cycle)")
    if "per_turn" in tbl:
        raise r.fail(f"{item} per_turn", "a cycle dial's turn is set by lunations; "
                     "leave per_turn out")
    n = tbl["lunations"]
    if isinstance(n, bool) or not isinstance(n, int) or not 2 <= n <= 100_000:
        raise r.fail(f"{item} lunations", f"should be a whole number of lunations from 2 "
                     f"to 100000, got {_show(n)}")
    if not ("solar_months" in tbl or "lunar_months" in tbl):
        return Fraction(n), None
    marks = {}
    for kind in ("solar", "lunar"):
        key = f"{kind}_months"
        months = tbl.get(key, [])
        if not isinstance(months, list) or any(
                isinstance(m, bool) or not isinstance(m, int) for m in months):
            raise r.fail(f"{item} {key}", f"should be a list of month numbers like [1, 7, 12], "
                         f"got {_show(months)}")
        bad = [m for m in months if not 1 <= m <= n]
        if bad:
            raise r.fail(f"{item} {key}", f"month {bad[0]} is not on a dial of {n} months "
                         f"(1 to {n})")
        if len(set(months)) != len(months):
            dup = next(m for m in months if months.count(m) > 1)
            raise r.fail(f"{item} {key}", f"month {dup} is listed twice")
        marks[kind] = tuple(sorted(months))
    return Fraction(n), marks


def _named_tables(r: _Reader, section, key: str, example: str) -> None:
    """A section of named tables (``[arbors.NAME]``) written as a list, ``[[arbors]]``, as
    ``[[meshes]]`` is: say how it is written instead."""
    if isinstance(section, list) and section and all(isinstance(v, dict) for v in section):
        raise r.fail(f"[[{key}]]", f"is written with double brackets, which makes a list; "
                     f"each is a table with its name, in single brackets: [{key}.{example}]")


def _count(r: _Reader, section, item: str, most: int, what: str) -> None:
    if len(section) > most:
        raise r.fail(item, f"{len(section):,} {what}; a train may have at most {most:,}")
def _read_arbors(r: _Reader, doc: dict):
    section = doc.get("arbors")
    _named_tables(r, section, "arbors", "day")
    if not isinstance(section, dict) or not section:
        raise r.fail("[arbors]", "the train needs at least one arbor ([arbors.NAME] tables)")
    _count(r, section, "[arbors]", MAX_ARBORS, "arbors")
    arbors: dict[str, Arbor] = {}
    wheels: dict[str, Wheel] = {}
    for aname, tbl in section.items():
        item = f"[arbors.{aname}]"
        r.name(aname, item)
        if aname == FRAME:
            raise r.fail(item, f"'{FRAME}' is reserved for the fixed frame; rename the arbor")
        tbl = r.table(tbl, item, "arbor")
        wtbl = tbl.get("wheels", {})
        if not isinstance(wtbl, dict):
            raise r.fail(f"{item} wheels", "should be a table like { great = 96, pinion = 12 }")
        names = []
        for wname, teeth in wtbl.items():
            witem = f"{item} wheel '{wname}'"
            r.name(wname, witem)
            if isinstance(teeth, bool) or not isinstance(teeth, int):
                raise r.fail(witem, f"teeth must be a whole number, got {_show(teeth)}"
                             + _count_hint(wname, teeth))
            if teeth <= 0:
                raise r.fail(witem, f"teeth must be more than zero, got {_show(teeth)}")
            if teeth > MAX_TEETH:
                raise r.fail(witem, f"{_show(teeth)} teeth is beyond any wheel that can be cut; "
                             f"at most {MAX_TEETH:,} are allowed")
            if wname in wheels:
                raise r.fail(witem, f"a wheel of this name is already on arbor "
                             f"'{wheels[wname].arbor}'; wheel names must be unique")
            wheels[wname] = Wheel(wname, aname, teeth)
            names.append(wname)
            if len(wheels) > MAX_WHEELS:
                raise r.fail(witem, f"more than {MAX_WHEELS:,} wheels; a train may have at "
                             f"most {MAX_WHEELS:,}")
        mount = r.text(tbl.get("on", FRAME), f"{item} on")
        fixed = r.flag(tbl.get("fixed", False), f"{item} fixed")
        at = tbl.get("at_mm")
        if at is not None:
            if not (isinstance(at, list) and len(at) == 2):
                raise r.fail(f"{item} at_mm", "should be a position [x, y] in millimetres")
            at = (r.number(at[0], f"{item} at_mm"), r.number(at[1], f"{item} at_mm"))
        axis_with = tbl.get("axis_with")
        if axis_with is not None:
            axis_with = r.text(axis_with, f"{item} axis_with")
            if axis_with == aname:
                raise r.fail(f"{item} axis_with", "names the arbor itself; name the other arbor "
                             "it turns on or in (a tube on an arbor), or leave axis_with out")
        pivot = tbl.get("pivot_mm")
        if pivot is not None:
            pivot = r.number(pivot, f"{item} pivot_mm", positive=True)
        pivots_in = r.choice(tbl.get("pivots_in", "both"), f"{item} pivots_in", PIVOTS_IN)
        plates = tbl.get("plates")
        if plates is not None and (isinstance(plates, bool) or plates not in (1, 2)):
            raise r.fail(f"{item} plates", "should be 1 (the carrier's one plate or arm) or 2 "
                         f"(a cage of a front and a back plate), got {_show(plates)}")
        arbors[aname] = Arbor(aname, tuple(names), mount, fixed, at, axis_with, pivot,
                              pivots_in, plates)
    for a in arbors.values():
        if a.plates is not None and not any(b.mount == a.name for b in arbors.values()):
            raise r.fail(f"[arbors.{a.name}] plates", "is for a carrier, and no arbor is on "
                         f"'{a.name}': give plates on the carrier arbor that others are on, "
                         "or leave it out")
        if a.mount != FRAME and a.mount not in arbors:
            raise r.fail(f"[arbors.{a.name}] on", f"{unknown_name('arbor', a.mount, arbors)} "
                         f"(use \"{FRAME}\" or the name of a carrier arbor)")
        if a.axis_with is not None and a.axis_with not in arbors:
            raise r.fail(f"[arbors.{a.name}] axis_with", unknown_name("arbor", a.axis_with, arbors))
    return arbors, wheels


def _check_mounts(r: _Reader, arbors: dict[str, Arbor]) -> None:
    for a in arbors.values():
        seen = [a.name]
        m = a.mount
        while m != FRAME:
            if m in seen:
                loop = " → ".join([*seen, m])
                raise r.fail(f"[arbors.{a.name}] on", f"arbors are mounted on each other in a "
                             f"loop ({loop}); one of them must sit on the frame")
            seen.append(m)
            m = arbors[m].mount


def _read_meshes(r: _Reader, doc: dict, wheels: dict[str, Wheel]) -> tuple[Mesh, ...]:
    section = doc.get("meshes", [])
    if isinstance(section, dict) and all(isinstance(v, dict) for v in section.values()) \
            and section:
        raise r.fail("[meshes]", "is written as named tables, [meshes.NAME]; a mesh has no "
                     "name: each is a table of its "
                     "own written with double brackets, [[meshes]], then its wheels = "
                     "[\"driver\", \"driven\"]")
    if isinstance(section, dict):
        raise r.fail("[meshes]", "is written with single brackets; each mesh is a table of its "
                     "own written with double brackets, [[meshes]], then its wheels = "
                     "[\"driver\", \"driven\"]")
    if not isinstance(section, list):
        raise r.fail("[[meshes]]", "should be a list of [[meshes]] tables")
    _count(r, section, "[[meshes]]", MAX_MESHES, "meshes")
    meshes = []
    seen: dict[frozenset, Mesh] = {}
    for i, tbl in enumerate(section, start=1):
        item = f"mesh {i}"
        tbl = r.table(tbl, item, "mesh")
        pair = r.need(tbl, "wheels", item)
        if not (isinstance(pair, list) and len(pair) == 2 and all(isinstance(w, str)
                                                                  for w in pair)):
            raise r.fail(f"{item} wheels", "should name two wheels, like [\"drive\", \"great\"]")
        a, b = pair
        item = f"mesh {i} ({a}–{b})"
        for w in pair:
            r.name(w, f"{item} wheels")
            if w not in wheels:
                raise r.fail(item, f"{unknown_name('wheel', w, wheels)} (wheels are named in "
                             "[arbors.NAME] wheels tables)")
        if a == b:
            raise r.fail(item, "a wheel cannot mesh with itself")
        if wheels[a].arbor == wheels[b].arbor:
            raise r.fail(item, f"both wheels are on arbor '{wheels[a].arbor}', so they "
                         "cannot drive one another")
        ring = tbl.get("ring")
        if ring is not None and not isinstance(ring, str):
            raise r.fail(f"{item} ring", f"should name one of this mesh's wheels, got {_show(ring)}")
        if ring is not None and ring not in pair:
            raise r.fail(f"{item} ring", f"names '{ring}', which is not one of this mesh's "
                         "two wheels")
        if ring is not None:
            other = b if ring == a else a
            if wheels[ring].teeth <= wheels[other].teeth:
                raise r.fail(f"{item} ring", f"the internal wheel '{ring}' "
                             f"({wheels[ring].teeth}) must have more teeth than the wheel "
                             f"inside it '{other}' ({wheels[other].teeth})")
        module = tbl.get("module_mm")
        if module is not None:
            module = r.number(module, f"{item} module_mm", positive=True, limit=1000.0)
        face = tbl.get("face_mm")
        if face is not None:
            face = r.number(face, f"{item} face_mm", positive=True, limit=1000.0)
        earlier = seen.get(frozenset(pair))
        if earlier is not None:
            raise r.fail(item, f"repeats {earlier.label}: the same two wheels are "
                         "listed in mesh twice; remove one")
        mesh = Mesh(i, a, b, ring, module, face)
        seen[frozenset(pair)] = mesh
        meshes.append(mesh)
    return tuple(meshes)


def _read_pin_slots(r: _Reader, doc: dict, arbors: dict[str, Arbor]) -> dict[str, PinSlot]:
    section = doc.get("pin_slots", {})
    _named_tables(r, section, "pin_slots", "anomaly")
    if not isinstance(section, dict):
        raise r.fail("[pin_slots]", "should be [pin_slots.NAME] tables")
    _count(r, section, "[pin_slots]", MAX_PIN_SLOTS, "pin-and-slot stages")
    out = {}
    for name, tbl in section.items():
        item = f"[pin_slots.{name}]"
        r.name(name, item)
        tbl = r.table(tbl, item, "pin_slot")
        pin = r.text(r.need(tbl, "pin", item), f"{item} pin")
        slot = r.text(r.need(tbl, "slot", item), f"{item} slot")
        for key, a in (("pin", pin), ("slot", slot)):
            if a not in arbors:
                raise r.fail(f"{item} {key}", unknown_name("arbor", a, arbors))
        if pin == slot:
            raise r.fail(item, "pin and slot must be on two different arbors")
        pin_mount, slot_mount = arbors[pin].mount, arbors[slot].mount
        carrier = None
        if pin_mount != slot_mount:
            if pin_mount == FRAME or arbors[pin_mount].mount != slot_mount:
                raise r.fail(item, f"the pin arbor '{pin}' is on '{pin_mount}' but the slot "
                             f"arbor '{slot}' is on '{slot_mount}'; mount both on one carrier "
                             "(or the frame), or the pin arbor on a carrier that turns on the "
                             "slot arbor's mount")
            carrier = pin_mount
        radius = r.number(r.need(tbl, "pin_radius_mm", item), f"{item} pin_radius_mm",
                          positive=True)
        offset = r.number(r.need(tbl, "offset_mm", item), f"{item} offset_mm", nonneg=True)
        arm = 0.0
        if carrier is None:
            for key in ("arm_mm", "arm_deg"):
                if key in tbl:
                    raise r.fail(f"{item} {key}", f"the pin arbor '{pin}' is on the slot "
                                 f"arbor's own mount ('{slot_mount}'), not on a carrier: "
                                 f"{key} is only for a pin riding on a carrier")
            if offset >= radius:
                raise r.fail(f"{item} offset_mm", f"the axis offset ({offset:g} mm) must be "
                             f"smaller than the pin radius ({radius:g} mm), or the pin would "
                             "not go round the slot arbor's axis")
        else:
            arm = r.number(r.need(tbl, "arm_mm", item), f"{item} arm_mm", positive=True)
            if not (arm > radius + offset or radius > arm + offset):
                raise r.fail(f"{item} arm_mm", f"the pin can come to the slot arbor's axis: "
                             f"make the carrier arm ({arm:g} mm) longer than pin radius and "
                             f"offset together ({radius + offset:g} mm), or the pin radius "
                             f"({radius:g} mm) longer than arm and offset together "
                             f"({arm + offset:g} mm)")
        pin_d = tbl.get("pin_diameter_mm")
        if pin_d is not None:
            pin_d = r.number(pin_d, f"{item} pin_diameter_mm", positive=True)
        out[name] = PinSlot(name, pin, slot, radius, offset,
                            r.number(tbl.get("offset_deg", 0.0), f"{item} offset_deg",
                                     limit=MAX_DEG),
                            r.number(tbl.get("pin_deg", 0.0), f"{item} pin_deg", limit=MAX_DEG),
                            pin_d, carrier, arm,
                            r.number(tbl.get("arm_deg", 0.0), f"{item} arm_deg", limit=MAX_DEG))
    return out


def _read_crank(r: _Reader, doc: dict, arbors: dict[str, Arbor]) -> Crank:
    tbl = r.table(doc.get("crank"), "[crank]", "crank") if "crank" in doc else None
    if tbl is None:
        # arbors and meshes alone: most likely a fragment, as `wheelwork search --emit` writes
        part = ("; this file has arbors and meshes but no [crank], [epoch] or [pointers]: a "
                "fragment (as wheelwork search --emit writes one) goes into a train file that "
                "has them" if "meshes" in doc and not {"epoch", "pointers"} & set(doc) else "")
        raise r.fail("[crank]", "missing: say which arbor the crank turns and days_per_turn"
                     + part)
    arbor = r.text(r.need(tbl, "arbor", "[crank]"), "[crank] arbor")
    if arbor not in arbors:
        raise r.fail("[crank] arbor", unknown_name("arbor", arbor, arbors))
    if arbors[arbor].fixed:
        raise r.fail("[crank] arbor", f"arbor '{arbor}' is fixed and cannot be cranked")
    value = r.need(tbl, "days_per_turn", "[crank]")
    try:
        days = r.fraction(value, "[crank] days_per_turn", MIN_DAYS_PER_TURN, MAX_DAYS_PER_TURN,
                          DAYS_PER_TURN_BOUNDS)
    except TrainError:
        if isinstance(value, str):  # "12h", "1 day", "1y": a time where days were wanted
            _time_for_days(r, value)
        raise
    return Crank(arbor, days)


def _time_for_days(r: _Reader, text: str) -> None:
    """Refuse ``days_per_turn`` written as a time with a unit, saying the days it means in the
    form to write (``"12h"``: ``days_per_turn = 0.5``); nothing when it is not a time."""
    from .dates import time_in_days  # local import keeps the loader light to import
    from .errors import DriftError

    item = "[crank] days_per_turn"
    try:
        days = time_in_days(text)
    except DriftError:
        raise r.fail(item, f"is in days, written as a number alone, and a month has no fixed "
                     f"length: write its days (not {text.strip()!r})") from None
    if days is None or days <= 0:
        return
    # a decimal where it ends (0.5, 365.25: 10**places a multiple of the denominator), else
    # the exact fraction in quotes ("1/3")
    places = next((k for k in range(12) if 10**k % days.denominator == 0), None)
    shown = (f'"{days}"' if places is None else
             f"{days.numerator * 10**places // days.denominator}" if places == 0 else
             f"{days.numerator * 10**places // days.denominator:0{places + 1}d}")
    if places:
        shown = f"{shown[:-places]}.{shown[-places:]}"
    year = (" (a Julian year; the tropical year of the demo orreries is 365.2422 days)"
            if text.strip().lower().rstrip("s").endswith(("y", "yr", "year")) else "")
    raise r.fail(item, f"is in days, written as a number alone: {text.strip()!r} is "
                 f"{shown.strip(chr(34))} day{'' if days == 1 else 's'}{year}; write "
                 f"days_per_turn = {shown}")


def _read_epoch(r: _Reader, doc: dict) -> Epoch:
    if "epoch" not in doc:
        raise r.fail("[epoch]", "missing: give the date the pointers were set (date = ...)")
    tbl = r.table(doc["epoch"], "[epoch]", "epoch")
    value = r.need(tbl, "date", "[epoch]")
    calendar = tbl.get("calendar", "auto")
    if not isinstance(calendar, str):
        raise r.fail("[epoch] calendar", f"should be \"auto\", \"julian\" or \"gregorian\", "
                     f"got {_show(calendar)}")
    # the word is the calendar's fault, not the date's: named as its own item
    calendar = r.choice(calendar, "[epoch] calendar", ("auto", "julian", "gregorian"))
    from .dates import parse_date  # local import keeps the loader light to import

    try:
        text, jd = _epoch_date(value, calendar, parse_date)
    except DateError as exc:
        raise r.fail("[epoch] date", str(exc)) from None
    mode = r.choice(tbl.get("set", "sky"), "[epoch] set", SET_MODES)
    ephemeris = tbl.get("ephemeris")
    if ephemeris is not None and (not isinstance(ephemeris, str)
                                  or ephemeris.strip().lower() not in EPHEMERIS_NAMES):
        raise r.fail("[epoch] ephemeris", f"should be one of {', '.join(EPHEMERIS_NAMES)}, got "
                     f"{_show(ephemeris)}"
                     + (did_you_mean(ephemeris.strip().lower(), EPHEMERIS_NAMES)
                        if isinstance(ephemeris, str) else ""))
    return Epoch(jd, text, mode, None if ephemeris is None else ephemeris.strip().lower())


def _read_pointers(r, doc, arbors, epoch: Epoch) -> dict[str, Pointer]:
    section = doc.get("pointers")
    _named_tables(r, section, "pointers", "moon")
    if not isinstance(section, dict) or not section:
        raise r.fail("[pointers]", "the train needs at least one pointer ([pointers.NAME])")
    _count(r, section, "[pointers]", MAX_POINTERS, "pointers")
    out = {}
    for name, tbl in section.items():
        item = f"[pointers.{name}]"
        r.name(name, item)
        tbl = r.table(tbl, item, "pointer")
        written = r.need(tbl, "shows", item)
        # "Sun" is sun, as every enumerated value; a refusal quotes what was written
        shows = written.strip().lower() if isinstance(written, str) else written
        if not isinstance(shows, str) or shows not in KINDS and not any(
                f"{shows}_from_sun" == k for k in KINDS):
            raise r.fail(f"{item} shows", f"unknown pointer kind {_show(written)}"
                         f"{_kind_hint(shows)} (known: "
                         + ", ".join(k for k in KINDS if not k.endswith("_from_sun"))
                         + ", earth; planets seen from the Sun with seen_from = \"sun\")")
        seen_from = tbl.get("seen_from")
        if seen_from is not None:
            seen_from = r.text(seen_from, f"{item} seen_from").lower()
        try:
            shows = kind_key(shows, seen_from)
        except KeyError as exc:
            raise r.fail(f"{item} seen_from" if seen_from is not None else f"{item} shows",
                         str(exc.args[0])) from None
        arbor = r.text(r.need(tbl, "arbor", item), f"{item} arbor")
        if arbor not in arbors:
            raise r.fail(f"{item} arbor", unknown_name("arbor", arbor, arbors))
        rel = tbl.get("relative_to")
        if rel is not None:
            rel = r.text(rel, f"{item} relative_to")
            if rel not in arbors:
                raise r.fail(f"{item} relative_to", unknown_name("arbor", rel, arbors))
            if rel == arbor:
                raise r.fail(f"{item} relative_to", "cannot be the pointer's own arbor")
        if _still(arbors, arbor) and (rel is None or _still(arbors, rel)):
            raise r.fail(f"{item} arbor", f"arbor '{arbor}' is fixed to the frame and never "
                         "turns, so a pointer on it shows nothing; put the pointer on a turning "
                         "arbor (or read it relative_to one)")
        lunations, marks = _read_cycle(r, tbl, item, shows)
        per_turn = lunations or r.fraction(tbl.get("per_turn", 1), f"{item} per_turn",
                                           MIN_PER_TURN, MAX_PER_TURN, "1/1000000 and 1000000")
        set_deg = tbl.get("set_deg")
        if set_deg is not None:
            set_deg = r.number(set_deg, f"{item} set_deg", limit=MAX_DEG)
        elif epoch.set == "angles":
            raise r.fail(item, "the epoch sets pointers by angle (set = \"angles\"), so each "
                         "pointer needs set_deg")
        out[name] = Pointer(name, shows, arbor, rel, per_turn,
                            r.flag(tbl.get("reversed", False), f"{item} reversed"), set_deg,
                            marks)
    return out


# What a maker may call a pointer whose kind has another name here (our own list)
_KIND_WORDS = {
    "perigee": ("apsis", "the Moon's perigee"), "apogee": ("apsis", "the Moon's apsis line"),
    "apse": ("apsis", "the Moon's apsis line"), "moon phase": ("phase", "the Moon's phase"),
    "moonphase": ("phase", "the Moon's phase"), "lunar phase": ("phase", "the Moon's phase"),
    "lunation": ("phase", "the Moon's phase"), "age": ("phase", "the Moon's age"),
    "year": ("sun", "a year hand"), "zodiac": ("sun", "the Sun in the zodiac"),
    "saros": ("cycle", "an eclipse-cycle dial (with lunations = 223)"),
    "exeligmos": ("cycle", "an eclipse-cycle dial"),
    "eclipse": ("cycle", "an eclipse-cycle dial"),
    "lunar node": ("node", "the Moon's ascending node"),
}


def _kind_hint(shows: object) -> str:
    """``; did you mean 'phase'?`` for a slip ('phases'), or the kind a maker's own word
    stands for ('perigee': apsis); empty when neither."""
    if not isinstance(shows, str):
        return ""
    word = " ".join(shows.replace("_", " ").replace("-", " ").split())
    if word in _KIND_WORDS:
        kind, what = _KIND_WORDS[word]
        return f"; {what} is shows = \"{kind}\""
    names = [k for k in KINDS if not k.endswith("_from_sun")] + ["earth"]
    return did_you_mean(word.replace(" ", "_"), names)


def _still(arbors: dict[str, Arbor], arbor: str) -> bool:
    """True when an arbor is fixed to the frame, directly or through fixed carriers."""
    while arbor != FRAME:
        if not arbors[arbor].fixed:
            return False
        arbor = arbors[arbor].mount
    return True


def _epoch_date(value: object, calendar: str, parse_date) -> tuple[str, float]:
    """(text as written, JD UT) of ``[epoch] date``: text, or a TOML date or date-time.

    A TOML date-time with a zone (``2026-01-01T06:30:00Z``, ``...+02:00``) is converted to UT;
    one without a zone, and a bare TOML date, are read as UT.
    """
    if isinstance(value, str):
        return value, parse_date(value, calendar=calendar)
    if isinstance(value, _dt.datetime):
        written = value.isoformat()
        local = value.replace(tzinfo=None).isoformat(sep=" ")
        offset = value.utcoffset()
        try:
            jd = parse_date(local, calendar=calendar)
        except DateError as exc:  # quote the date as the file wrote it, not our rewriting
            raise DateError(str(exc).replace(repr(local), repr(written))) from None
        if offset is not None:
            jd -= offset.total_seconds() / SECONDS_PER_DAY
        return written, jd
    if isinstance(value, _dt.date):
        written = value.isoformat()
        return written, parse_date(written, calendar=calendar)
    if isinstance(value, _dt.time):
        raise DateError(f"{value.isoformat()} is a time of day without a date; write the date "
                        "too, like 2026-01-01T06:30:00Z")
    number = isinstance(value, (int, float)) and not isinstance(value, bool)
    jd_hint = (f', or a Julian Date in quotes, "JD {value}"' if number else "")
    if isinstance(value, int) and not isinstance(value, bool) and -9999 <= value <= 9999:
        # a year written bare: TOML reads it as a whole number; in quotes it is that year
        jd_hint = f', or a year in quotes, "{value}" (its 1 January){jd_hint}'
    from .dates import compact_date

    compact = compact_date(str(value)) if isinstance(value, int) else None
    if compact:  # 20261203: year, month and day run together
        raise DateError(f'a number is not read as a date: for that day write "{compact}" '
                        f'(in quotes, with hyphens), for a Julian Date "JD {value}"; got '
                        f'{_show(value)}')
    raise DateError(f"should be a date like \"2026-01-01 06:30\" (UT){jd_hint}, got "
                    f"{_show(value)}")


def _read_workshop(r: _Reader, doc: dict, wheels: dict[str, Wheel]) -> Workshop:
    """``[workshop]``: how the parts are cut (``wheelwork cut``) and how well (``play``)."""
    if "workshop" not in doc:
        return Workshop()
    tbl = r.table(doc["workshop"], "[workshop]", "workshop")

    def form(value, item):
        return r.choice(value, item, TOOTH_FORMS)

    def count(value, item):
        if isinstance(value, str) and value.strip().lower() == CROSSINGS_AUTO:
            return CROSSINGS_AUTO  # as many as the wheel's size asks (engine.drawing)
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            raise r.fail(item, f"should be a whole number of crossings (0 for a solid "
                         f"wheel) or \"{CROSSINGS_AUTO}\" (as many as the wheel's size "
                         f"asks), got {_show(value)}")
        if value in (1, 2):
            raise r.fail(item, f"{value} crossing{'s' if value > 1 else ''} cannot hold a rim "
                         "true: give 0 (solid) or 3 or more")
        if value > MAX_CROSSINGS:
            raise r.fail(item, f"at most {MAX_CROSSINGS} crossings, got {value}")
        return value

    def opt(t, key, item, **kw):
        return None if key not in t else r.number(t[key], f"{item} {key}", **kw)

    def fraction_of_pitch(t, key, item):
        value = opt(t, key, item, nonneg=True)
        if value is not None and value >= 0.5:
            raise r.fail(f"{item} {key}", f"is a fraction of the tooth pitch and must be below "
                         f"0.5, got {value:g}")
        return value

    item = "[workshop]"
    per_wheel = {}
    section = tbl.get("wheels", {})
    _named_tables(r, section, "workshop.wheels", "sun_w1")
    if not isinstance(section, dict):
        raise r.fail(f"{item} wheels", "should be [workshop.wheels.NAME] tables")
    for wname, wt in section.items():
        witem = f"[workshop.wheels.{wname}]"
        if wname not in wheels:
            raise r.fail(witem, f"{unknown_name('wheel', wname, wheels)} (wheels are named in "
                         "[arbors.NAME] wheels tables)")
        wt = r.table(wt, witem, "workshop_wheel")
        per_wheel[wname] = WheelShop(
            form=form(wt["form"], f"{witem} form") if "form" in wt else None,
            bore_mm=opt(wt, "bore_mm", witem, positive=True),
            crossings=count(wt["crossings"], f"{witem} crossings") if "crossings" in wt
            else None,
            rim_mm=opt(wt, "rim_mm", witem, positive=True),
            eccentricity_mm=opt(wt, "eccentricity_mm", witem, nonneg=True),
            division=fraction_of_pitch(wt, "division", witem))
    return Workshop(
        tooth_form=form(tbl.get("tooth_form", "cycloidal"), f"{item} tooth_form"),
        bore_mm=opt(tbl, "bore_mm", item, positive=True),
        crossings=count(tbl.get("crossings", 0), f"{item} crossings"),
        rim_mm=opt(tbl, "rim_mm", item, positive=True),
        pivot_mm=opt(tbl, "pivot_mm", item, positive=True) or 1.0,
        backlash_mm=opt(tbl, "backlash_mm", item, nonneg=True),
        division=fraction_of_pitch(tbl, "division", item),
        eccentricity_mm=opt(tbl, "eccentricity_mm", item, nonneg=True),
        end_shake_mm=opt(tbl, "end_shake_mm", item, nonneg=True),
        tilt_deg=opt(tbl, "tilt_deg", item, nonneg=True, limit=45.0),
        hole_mm=opt(tbl, "hole_mm", item, nonneg=True, limit=100.0),
        carrier_plate_mm=opt(tbl, "carrier_plate_mm", item, positive=True,
                             limit=100.0),
        wheels=per_wheel)
