"""Changing a train while it is on the bench: tooth counts, pin-and-slot lengths, the crank.

A :class:`TrainEditor` holds the train's TOML text as the file has it. An edit changes one
value in that text with tomlkit (so comments, blank lines and layout stay as the user wrote
them), then reads the result with the loader and solves and sets it: the loader and the solver
are the only judges, so a bad edit (zero teeth, text where a number belongs, a train that now
locks, a value out of range) is refused with their own one-line error, and the train stays as
it was. Primes the user cannot cut (:attr:`TrainEditor.forbidden_primes`, say a dividing
plate without 37, 41 or 43 divisions) are refused the same way when an edit brings in a tooth
count they divide. Every accepted edit can be undone and redone; :attr:`TrainEditor.differs` says whether
the train now differs from its file; :meth:`TrainEditor.save` writes it whole or not at all.

Values are given as the user typed them (text) or as numbers::

    ed = TrainEditor.open(path, sky)
    ed.set_teeth("sun_w1", "60")          # -> the new Mechanism; TrainError if refused
    ed.compare()                           # per pointer: ratio, period error, drift, before/after
    ed.save("tide_office_60.toml")         # a new name; replace=True to write over a file
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

import tomlkit
from tomlkit.exceptions import TOMLKitError

from .errors import OutputError, TrainError, WheelworkError
from .loader import (
    MAX_FILE_BYTES,
    MAX_TEETH,
    parse_train,
    regular_file_bytes,
    safe_text,
    train_text,
)
from .mechanism import Mechanism, build
from .ratios import PointerRatio, factor_text, pointer_ratios, tooth_factors

#: the keys of a pin-and-slot stage an edit may change
PIN_SLOT_KEYS = ("offset_mm", "pin_radius_mm")

#: the largest prime that may be forbidden (the loader's most teeth)
MAX_PRIME = MAX_TEETH

_INT = re.compile(r"^[+-]?\d+$")
_FLOAT = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$")


def _value(text: str | int | float | Fraction, fraction_ok: bool = False):
    """What the user typed, as the TOML value it would be in a file: a whole number, a
    decimal, a fraction text ``p/q`` (where the key takes one) or, failing those, the text
    itself (which the loader then refuses in its own words)."""
    if isinstance(text, bool):
        return text
    if isinstance(text, int | float):
        return text
    if isinstance(text, Fraction):
        return int(text) if text.denominator == 1 else f"{text.numerator}/{text.denominator}"
    t = str(text).strip().replace("_", "")
    if _INT.match(t) and len(t) <= 30:
        return int(t)
    if _FLOAT.match(t) and math.isfinite(float(t)):
        return float(t)  # (1e400, too large for a float, is refused as typed)
    if fraction_ok and "/" in t:
        return t
    return str(text)


def parse_primes(text: str) -> tuple[int, ...]:
    """The primes a user cannot cut, typed as ``"37, 41 43"`` (commas or spaces; empty: none),
    sorted. Anything that is not a prime from 2 to :data:`MAX_PRIME` is refused in one line."""
    out: set[int] = set()
    for part in (p for p in re.split(r"[,;\s]+", str(text).strip()) if p):
        if not re.fullmatch(r"\d{1,9}", part):
            raise WheelworkError(f"forbidden primes: cannot read {safe_text(part)!r} (give "
                                 "primes separated by commas or spaces, e.g. 37, 41, 43)")
        n = int(part)
        if not 2 <= n <= MAX_PRIME:
            raise WheelworkError(f"forbidden primes: {n} is not a prime from 2 to "
                                 f"{MAX_PRIME:,} (a tooth count is at most {MAX_TEETH:,})")
        if tooth_factors(n) != {n: 1}:
            raise WheelworkError(f"forbidden primes: {n} is not a prime ({factor_text(n)}); "
                                 "list the primes themselves")
        out.add(n)
    return tuple(sorted(out))


def forbidden_factors(teeth: int, primes) -> tuple[int, ...]:
    """The primes of ``primes`` that divide ``teeth`` (a whole count of at least 1)."""
    return tuple(p for p in sorted(primes) if teeth % p == 0)


@dataclass(frozen=True)
class Change:
    """One accepted edit: what it changed, from what to what (as the file writes them)."""

    item: str
    before: object
    after: object

    def text(self) -> str:
        return f"{self.item}: {self.before} → {self.after}"


@dataclass(frozen=True)
class Compared:
    """One pointer's ratio row before (the train as in its file) and now."""

    pointer: str
    before: PointerRatio | None  # None: the pointer is new
    after: PointerRatio


@dataclass
class _State:
    text: str
    mech: Mechanism
    change: Change | None
    #: the text parsed by tomlkit, kept for the next edit (parsing is most of an edit's
    #: time); None once an edit has started changing it
    doc: object | None = None


class TrainEditor:
    """A train with its file text, edited value by value; see the module's description."""

    def __init__(self, text: str, where: str | Path, sky=None, *, path: Path | None = None):
        self.sky = sky
        self.path = None if path is None else Path(path)
        self.where = safe_text(str(where))
        #: the file's text as read (or last written), byte-order mark and all: what
        #: :meth:`changed_on_disk` compares the file with
        self._disk_text = text if path is not None else None
        #: the file began with a byte-order mark, as some editors write: edited without it
        #: (tomlkit reads none), written back with it
        self.bom = text.startswith("\ufeff")
        text = text.removeprefix("\ufeff")
        mech = build(parse_train(text, self.where), sky)
        try:
            doc = tomlkit.parse(text)
        except TOMLKitError as exc:  # tomllib read it; tomlkit must too, to write it back
            raise TrainError(self.where, "", f"cannot be edited here: {exc}") from None
        self._state = _State(text, mech, None, doc)
        self._undo: list[_State] = []
        self._redo: list[_State] = []
        self.saved_text = text
        self._baseline = mech
        #: primes no new tooth count may have as a factor (see :func:`parse_primes`)
        self.forbidden_primes: tuple[int, ...] = ()

    @classmethod
    def open(cls, path: str | Path, sky=None) -> TrainEditor:
        """Read a train file (the loader's checks and errors) ready to edit."""
        path = Path(path)
        where = safe_text(str(path))
        text = train_text(regular_file_bytes(path, where), where)
        return cls(text, where, sky, path=path)

    @classmethod
    def new_from(cls, path: str | Path, sky=None) -> TrainEditor:
        """A new train starting as a copy of ``path`` (a demo): it has no file of its own
        until saved, so it differs from its file from the start."""
        ed = cls.open(path, sky)
        ed.path = None
        ed._disk_text = None
        ed.saved_text = ""
        return ed

    # --- what is on the bench ------------------------------------------------------------
    @property
    def mech(self) -> Mechanism:
        return self._state.mech

    @property
    def text(self) -> str:
        return self._state.text

    @property
    def differs(self) -> bool:
        """True when the train differs from its file (as last opened or saved)."""
        return self._state.text != self.saved_text

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    @property
    def last_change(self) -> Change | None:
        return self._state.change

    def wheels(self) -> list[tuple[str, str, int]]:
        """``(wheel, arbor, teeth)`` for every wheel and pinion, in file order."""
        return [(w.name, w.arbor, w.teeth) for w in self.mech.train.wheels.values()]

    def pin_slots(self) -> list[tuple[str, float, float]]:
        """``(name, offset_mm, pin_radius_mm)`` of every pin-and-slot stage."""
        return [(p.name, p.offset_mm, p.pin_radius_mm)
                for p in self.mech.train.pin_slots.values()]

    # --- edits -----------------------------------------------------------------------------
    def set_teeth(self, wheel: str, teeth) -> Mechanism:
        """Give ``wheel`` (a wheel or pinion's name) ``teeth`` teeth or leaves."""
        train = self.mech.train
        if wheel not in train.wheels:
            raise TrainError(self.where, f"wheel '{safe_text(wheel)}'", "no such wheel or pinion "
                             "in this train")
        arbor = train.wheels[wheel].arbor
        value = _value(teeth)
        if isinstance(value, float) and isinstance(teeth, str):
            value = teeth.strip()  # never a count: refused as typed ('1e3'), not as read (1000.0)
        item = f"[arbors.{arbor}] wheel '{wheel}'"
        self._check_primes(value, item)
        return self._apply(("arbors", arbor, "wheels", wheel), value, item)

    def set_forbidden_primes(self, text: str) -> tuple[int, ...]:
        """Read and keep the primes that cannot be cut (``"37, 41, 43"``; empty: none).
        Tooth counts already in the train stay; only edits are judged against them."""
        self.forbidden_primes = parse_primes(text)
        return self.forbidden_primes

    def forbidden_in_train(self) -> dict[str, tuple[int, ...]]:
        """``{wheel: forbidden primes dividing its teeth}`` for the train as it is now."""
        out = {}
        for name, _arbor, teeth in self.wheels():
            bad = forbidden_factors(teeth, self.forbidden_primes)
            if bad:
                out[name] = bad
        return out

    def _check_primes(self, value, item: str) -> None:
        if type(value) is not int or value < 1 or not self.forbidden_primes:
            return  # not a tooth count: the loader judges it
        bad = forbidden_factors(value, self.forbidden_primes)
        if bad:
            primes = ", ".join(map(str, bad))
            raise TrainError(self.where, item,
                             f"{value} teeth has the forbidden prime factor"
                             f"{'s' if len(bad) > 1 else ''} {primes} ({factor_text(value)}); "
                             f"the primes you cannot cut: "
                             f"{', '.join(map(str, self.forbidden_primes))}")

    def set_pin_slot(self, name: str, key: str, value) -> Mechanism:
        """Change a pin-and-slot stage's ``offset_mm`` or ``pin_radius_mm``."""
        if name not in self.mech.train.pin_slots:
            raise TrainError(self.where, f"[pin_slots.{safe_text(name)}]",
                             "no such pin-and-slot stage in this train")
        if key not in PIN_SLOT_KEYS:
            raise TrainError(self.where, f"[pin_slots.{name}] {safe_text(key)}",
                             f"only {' and '.join(PIN_SLOT_KEYS)} can be changed here")
        read = _value(value)
        return self._as_typed(value, read, lambda: self._apply(
            ("pin_slots", name, key), read, f"[pin_slots.{name}] {key}"))

    def set_days_per_turn(self, value) -> Mechanism:
        """Change how many days one crank turn stands for (a number or ``p/q``)."""
        read = _value(value, fraction_ok=True)
        return self._as_typed(value, read, lambda: self._apply(
            ("crank", "days_per_turn"), read, "[crank] days_per_turn"))

    @staticmethod
    def _as_typed(typed, read, edit) -> Mechanism:
        """Run ``edit``; a refusal quotes a decimal as the user typed it ('1e9'), not as it
        was read (1000000000.0)."""
        try:
            return edit()
        except TrainError as exc:
            said = f"got {read!r}"
            if isinstance(read, float) and isinstance(typed, str) and said in exc.problem:
                raise TrainError(exc.where, exc.item, exc.problem.replace(
                    said, f"got {safe_text(typed.strip())!r}")) from None
            raise

    def set_teeth_many(self, teeth: dict[str, int], item: str) -> Mechanism:
        """Give several wheels new tooth counts in one edit (one undo step), e.g. a search's
        answer for a pointer's chain; ``item`` names the edit in messages and undo."""
        train = self.mech.train
        edits = []
        for wheel, n in teeth.items():
            if wheel not in train.wheels:
                raise TrainError(self.where, f"wheel '{safe_text(wheel)}'",
                                 "no such wheel or pinion in this train")
            arbor = train.wheels[wheel].arbor
            value = _value(n)
            self._check_primes(value, f"[arbors.{arbor}] wheel '{wheel}'")
            edits.append((("arbors", arbor, "wheels", wheel), value))
        before = ", ".join(f"{w} {train.wheels[w].teeth}" for w in teeth)
        after = ", ".join(f"{w} {n}" for w, n in teeth.items())
        return self._apply_all(edits, item, before, after)

    def _apply(self, keys: tuple[str, ...], value, item: str) -> Mechanism:
        return self._apply_all([(keys, value)], item)

    def _apply_all(self, edits, item: str, before_text=None, after_text=None) -> Mechanism:
        doc = self._state.doc if self._state.doc is not None else tomlkit.parse(self.text)
        self._state.doc = None  # changed below: a refused edit parses the text again
        changed = False
        before = None
        for keys, value in edits:
            table = doc
            for k in keys[:-1]:
                table = table[k]
            before = table.get(keys[-1])
            before = before.unwrap() if hasattr(before, "unwrap") else before
            if before == value and type(before) is type(value):
                continue
            table[keys[-1]] = value
            changed = True
        if not changed:
            self._state.doc = doc
            return self.mech
        text = tomlkit.dumps(doc)
        if len(text) > MAX_FILE_BYTES:
            raise TrainError(self.where, item, "the file would grow past the loader's limit")
        mech = build(parse_train(text, self.where), self.sky)  # refuses: nothing changes
        self._undo.append(self._state)
        self._redo.clear()
        change = (Change(item, before, edits[-1][1]) if before_text is None
                  else Change(item, before_text, after_text))
        self._state = _State(text, mech, change, doc)
        return mech

    def undo(self) -> Change | None:
        """Go back one edit; returns the edit undone (None when there was none)."""
        if not self._undo:
            return None
        undone = self._state.change
        self._redo.append(self._state)
        self._state = self._undo.pop()
        return undone

    def redo(self) -> Change | None:
        """Make again the last edit undone; returns it (None when there was none)."""
        if not self._redo:
            return None
        self._undo.append(self._state)
        self._state = self._redo.pop()
        return self._state.change

    # --- before and after ------------------------------------------------------------------
    def compare(self, frame: str | None = None) -> list[Compared]:
        """Per pointer: the ratio row of the train as in its file, and as it is now."""
        before = {r.pointer: r for r in pointer_ratios(self._baseline, frame=frame)}
        return [Compared(r.pointer, before.get(r.pointer), r)
                for r in pointer_ratios(self.mech, frame=frame)]

    # --- saving ----------------------------------------------------------------------------
    def suggested_name(self) -> Path:
        """A new file name beside the opened one (``NAME-edited.toml``, then ``-2``...); in
        the current folder for a bundled demo or a folder that cannot be written."""
        base = self.path if self.path is not None else Path(f"{Path(self.where).stem}.toml")
        if not base.is_absolute():
            base = Path.cwd() / base
        package = Path(__file__).resolve().parent
        beside = os.access(base.parent, os.W_OK) and package not in base.resolve().parents
        folder = base.parent if beside else Path.cwd()  # never among the bundled demos
        stem = base.stem.removesuffix("-edited")
        stem = re.sub(r"-edited-\d+$", "", stem)
        candidate = folder / f"{stem}-edited.toml"
        n = 2
        while candidate.exists():
            candidate = folder / f"{stem}-edited-{n}.toml"
            n += 1
        return candidate

    def is_opened_file(self, path: str | Path) -> bool:
        """Whether ``path`` is the file this train was opened from (or last saved to)."""
        if self.path is None:
            return False
        try:
            return os.path.samefile(path, self.path)
        except OSError:
            return os.path.abspath(path) == os.path.abspath(self.path)

    def changed_on_disk(self) -> bool:
        """Whether the train's own file no longer holds what was read from it (or last written
        to it): another program — the maker's text editor — wrote to it, or removed it, while
        the train was on the bench. Saving over it then loses that writing."""
        if self.path is None or self._disk_text is None:
            return False
        try:
            now = self.path.read_bytes().decode("utf-8", errors="replace")
        except OSError:
            return True
        return now != self._disk_text

    def save(self, path: str | Path, *, replace: bool = False) -> Path:
        """Write the train as it is now to ``path``, whole or not at all (a hidden part file
        renamed into place). An existing file, the opened one included, is replaced only when
        ``replace`` is true. Afterwards the train's file is ``path``."""
        from .commands.support import OutputFile

        path = Path(path).expanduser()
        if not replace and os.path.lexists(path):
            what = "is the train's own file" if self.is_opened_file(path) else "exists"
            if self.is_opened_file(path) and self.changed_on_disk():
                what += ", changed by another program since it was read"
            raise OutputError(f"{path}: {what}; confirm to replace it")
        out = OutputFile(path, option="saving the train", force=True)
        written = ("\ufeff" if self.bom else "") + self.text
        with out.open("w", encoding="utf-8", newline="") as fh:
            fh.write(written)
        self._disk_text = written
        self.path = path
        self.where = safe_text(str(path))
        self.saved_text = self.text
        self._baseline = self.mech
        return path
