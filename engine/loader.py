"""Read a train file (TOML) into a :class:`engine.train.Train`, checking every item.

The file is data: it is parsed with ``tomllib`` and numbers with our own fraction reader;
nothing in it is ever evaluated. Every error names the file, the item and what is wrong.
The format is described in ``docs/train-format.md``.
"""

from __future__ import annotations

import math
import tomllib
from fractions import Fraction
from pathlib import Path

from .errors import DateError, TrainError
from .exact import parse_fraction
from .kinds import DIAL_FRAMES, KINDS
from .train import (
    FRAME,
    SET_MODES,
    Arbor,
    Crank,
    Epoch,
    Mesh,
    PinSlot,
    Pointer,
    Train,
    Wheel,
)

_TOP_KEYS = {"train", "crank", "epoch", "arbors", "meshes", "pin_slots", "pointers"}
_KEYS = {
    "train": {"name", "about", "dial"},
    "crank": {"arbor", "days_per_turn"},
    "epoch": {"date", "set", "calendar"},
    "arbor": {"wheels", "on", "fixed", "at_mm", "axis_with", "note"},
    "mesh": {"wheels", "ring", "module_mm", "note"},
    "pin_slot": {"pin", "slot", "pin_radius_mm", "offset_mm", "offset_deg", "pin_deg",
                 "pin_diameter_mm", "note"},
    "pointer": {"shows", "arbor", "relative_to", "per_turn", "reversed", "set_deg", "note"},
}


class _Reader:
    def __init__(self, where: str):
        self.where = where

    def fail(self, item: str, problem: str) -> TrainError:
        return TrainError(self.where, item, problem)

    def table(self, value: object, item: str, kind: str) -> dict:
        if not isinstance(value, dict):
            raise self.fail(item, f"should be a table of keys, got {_show(value)}")
        unknown = sorted(set(value) - _KEYS[kind])
        if unknown:
            known = ", ".join(sorted(_KEYS[kind]))
            raise self.fail(item, f"unknown key '{unknown[0]}' (known keys: {known})")
        return value

    def need(self, tbl: dict, key: str, item: str):
        if key not in tbl:
            raise self.fail(item, f"missing key '{key}'")
        return tbl[key]

    def text(self, value: object, item: str) -> str:
        if not isinstance(value, str) or not value.strip():
            raise self.fail(item, f"should be a name in quotes, got {_show(value)}")
        return value.strip()

    def number(self, value: object, item: str, *, positive=False, nonneg=False) -> float:
        if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(
            value
        ):
            raise self.fail(item, f"should be a number, got {_show(value)}")
        if positive and value <= 0:
            raise self.fail(item, f"must be greater than zero, got {value}")
        if nonneg and value < 0:
            raise self.fail(item, f"must not be negative, got {value}")
        return float(value)

    def flag(self, value: object, item: str) -> bool:
        if not isinstance(value, bool):
            raise self.fail(item, f"should be true or false, got {_show(value)}")
        return value

    def fraction(self, value: object, item: str) -> Fraction:
        try:
            return parse_fraction(value)
        except ValueError as exc:
            raise self.fail(item, str(exc)) from None


def _show(value: object) -> str:
    text = repr(value)
    return text if len(text) < 40 else text[:37] + "..."


def load_train(path: str | Path) -> Train:
    """Read and check a train file. Raises :class:`TrainError` naming file, item and fault."""
    path = Path(path)
    where = str(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise TrainError(where, "", "no such file") from None
    except IsADirectoryError:
        raise TrainError(where, "", "is a folder, not a train file") from None
    except OSError as exc:
        raise TrainError(where, "", f"cannot be read ({exc.strerror})") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise TrainError(where, "", "is not a UTF-8 text file") from None
    return parse_train(text, where)


def parse_train(text: str, where: str = "<train>") -> Train:
    """Build a :class:`Train` from TOML text (``where`` names it in errors)."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise TrainError(where, "", f"not valid TOML: {exc}") from None
    r = _Reader(where)
    unknown = sorted(set(doc) - _TOP_KEYS)
    if unknown:
        raise r.fail(f"[{unknown[0]}]", "unknown section (known: " + ", ".join(
            sorted(_TOP_KEYS)) + ")")

    head = r.table(doc.get("train", {}), "[train]", "train")
    name = r.text(head.get("name", Path(where).stem), "[train] name")
    about = head.get("about", "")
    if not isinstance(about, str):
        raise r.fail("[train] about", "should be text in quotes")
    dial = head.get("dial", "equinox")
    if dial not in DIAL_FRAMES:
        raise r.fail("[train] dial", f"should be one of {', '.join(DIAL_FRAMES)}, got {_show(dial)}")

    arbors, wheels = _read_arbors(r, doc)
    meshes = _read_meshes(r, doc, wheels)
    pin_slots = _read_pin_slots(r, doc, arbors)
    crank = _read_crank(r, doc, arbors)
    epoch = _read_epoch(r, doc)
    pointers = _read_pointers(r, doc, arbors, epoch)
    _check_mounts(r, arbors)
    return Train(name=name, source=where, arbors=arbors, wheels=wheels, meshes=meshes,
                 pin_slots=pin_slots, crank=crank, epoch=epoch, pointers=pointers, dial=dial,
                 about=about.strip())


def _read_arbors(r: _Reader, doc: dict):
    section = doc.get("arbors")
    if not isinstance(section, dict) or not section:
        raise r.fail("[arbors]", "the train needs at least one arbor ([arbors.NAME] tables)")
    arbors: dict[str, Arbor] = {}
    wheels: dict[str, Wheel] = {}
    for aname, tbl in section.items():
        item = f"[arbors.{aname}]"
        if aname == FRAME:
            raise r.fail(item, f"'{FRAME}' is reserved for the fixed frame; rename the arbor")
        tbl = r.table(tbl, item, "arbor")
        wtbl = tbl.get("wheels", {})
        if not isinstance(wtbl, dict):
            raise r.fail(f"{item} wheels", "should be a table like { great = 96, pinion = 12 }")
        names = []
        for wname, teeth in wtbl.items():
            witem = f"{item} wheel '{wname}'"
            if isinstance(teeth, bool) or not isinstance(teeth, int):
                raise r.fail(witem, f"teeth must be a whole number, got {_show(teeth)}")
            if teeth <= 0:
                raise r.fail(witem, f"teeth must be more than zero, got {teeth}")
            if wname in wheels:
                raise r.fail(witem, f"a wheel of this name is already on arbor "
                             f"'{wheels[wname].arbor}'; wheel names must be unique")
            wheels[wname] = Wheel(wname, aname, teeth)
            names.append(wname)
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
        arbors[aname] = Arbor(aname, tuple(names), mount, fixed, at, axis_with)
    for a in arbors.values():
        if a.mount != FRAME and a.mount not in arbors:
            raise r.fail(f"[arbors.{a.name}] on", f"unknown arbor '{a.mount}' "
                         f"(use \"{FRAME}\" or the name of a carrier arbor)")
        if a.axis_with is not None and a.axis_with not in arbors:
            raise r.fail(f"[arbors.{a.name}] axis_with", f"unknown arbor '{a.axis_with}'")
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
    if not isinstance(section, list):
        raise r.fail("[[meshes]]", "should be a list of [[meshes]] tables")
    meshes = []
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
            if w not in wheels:
                raise r.fail(item, f"unknown wheel '{w}' (wheels are named in [arbors.NAME] "
                             "wheels tables)")
        if a == b:
            raise r.fail(item, "a wheel cannot mesh with itself")
        if wheels[a].arbor == wheels[b].arbor:
            raise r.fail(item, f"both wheels are on arbor '{wheels[a].arbor}', so they "
                         "cannot drive one another")
        ring = tbl.get("ring")
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
            module = r.number(module, f"{item} module_mm", positive=True)
        for earlier in meshes:
            if {earlier.driver, earlier.driven} == {a, b}:
                raise r.fail(item, f"repeats {earlier.label}: the same two wheels are "
                             "listed in mesh twice; remove one")
        meshes.append(Mesh(i, a, b, ring, module))
    return tuple(meshes)


def _read_pin_slots(r: _Reader, doc: dict, arbors: dict[str, Arbor]) -> dict[str, PinSlot]:
    section = doc.get("pin_slots", {})
    if not isinstance(section, dict):
        raise r.fail("[pin_slots]", "should be [pin_slots.NAME] tables")
    out = {}
    for name, tbl in section.items():
        item = f"[pin_slots.{name}]"
        tbl = r.table(tbl, item, "pin_slot")
        pin = r.text(r.need(tbl, "pin", item), f"{item} pin")
        slot = r.text(r.need(tbl, "slot", item), f"{item} slot")
        for key, a in (("pin", pin), ("slot", slot)):
            if a not in arbors:
                raise r.fail(f"{item} {key}", f"unknown arbor '{a}'")
        if pin == slot:
            raise r.fail(item, "pin and slot must be on two different arbors")
        if arbors[pin].mount != arbors[slot].mount:
            raise r.fail(item, f"the pin arbor '{pin}' is on '{arbors[pin].mount}' but the slot "
                         f"arbor '{slot}' is on '{arbors[slot].mount}'; both must be mounted "
                         "on the same carrier (or the frame)")
        radius = r.number(r.need(tbl, "pin_radius_mm", item), f"{item} pin_radius_mm",
                          positive=True)
        offset = r.number(r.need(tbl, "offset_mm", item), f"{item} offset_mm", nonneg=True)
        if offset >= radius:
            raise r.fail(f"{item} offset_mm", f"the axis offset ({offset:g} mm) must be smaller "
                         f"than the pin radius ({radius:g} mm), or the pin would not go round "
                         "the slot arbor's axis")
        pin_d = tbl.get("pin_diameter_mm")
        if pin_d is not None:
            pin_d = r.number(pin_d, f"{item} pin_diameter_mm", positive=True)
        out[name] = PinSlot(name, pin, slot, radius, offset,
                            r.number(tbl.get("offset_deg", 0.0), f"{item} offset_deg"),
                            r.number(tbl.get("pin_deg", 0.0), f"{item} pin_deg"), pin_d)
    return out


def _read_crank(r: _Reader, doc: dict, arbors: dict[str, Arbor]) -> Crank:
    tbl = r.table(doc.get("crank"), "[crank]", "crank") if "crank" in doc else None
    if tbl is None:
        raise r.fail("[crank]", "missing: say which arbor the crank turns and days_per_turn")
    arbor = r.text(r.need(tbl, "arbor", "[crank]"), "[crank] arbor")
    if arbor not in arbors:
        raise r.fail("[crank] arbor", f"unknown arbor '{arbor}'")
    if arbors[arbor].fixed:
        raise r.fail("[crank] arbor", f"arbor '{arbor}' is fixed and cannot be cranked")
    days = r.fraction(r.need(tbl, "days_per_turn", "[crank]"), "[crank] days_per_turn")
    if days <= 0:
        raise r.fail("[crank] days_per_turn", f"must be greater than zero, got {days}")
    return Crank(arbor, days)


def _read_epoch(r: _Reader, doc: dict) -> Epoch:
    if "epoch" not in doc:
        raise r.fail("[epoch]", "missing: give the date the pointers were set (date = ...)")
    tbl = r.table(doc["epoch"], "[epoch]", "epoch")
    text = r.need(tbl, "date", "[epoch]")
    if not isinstance(text, str):
        # TOML's own date values are accepted too; they are read as UT.
        text = str(text)
    calendar = tbl.get("calendar", "auto")
    from .dates import parse_date  # local import keeps the loader light to import

    try:
        jd = parse_date(text, calendar=calendar)
    except DateError as exc:
        raise r.fail("[epoch] date", str(exc)) from None
    mode = tbl.get("set", "sky")
    if mode not in SET_MODES:
        raise r.fail("[epoch] set", f"should be one of {', '.join(SET_MODES)}, got "
                     f"{_show(mode)}")
    return Epoch(jd, text, mode)


def _read_pointers(r, doc, arbors, epoch: Epoch) -> dict[str, Pointer]:
    section = doc.get("pointers")
    if not isinstance(section, dict) or not section:
        raise r.fail("[pointers]", "the train needs at least one pointer ([pointers.NAME])")
    out = {}
    for name, tbl in section.items():
        item = f"[pointers.{name}]"
        tbl = r.table(tbl, item, "pointer")
        shows = r.need(tbl, "shows", item)
        if shows not in KINDS:
            raise r.fail(f"{item} shows", f"unknown pointer kind {_show(shows)} (known: "
                         + ", ".join(KINDS) + ")")
        arbor = r.text(r.need(tbl, "arbor", item), f"{item} arbor")
        if arbor not in arbors:
            raise r.fail(f"{item} arbor", f"unknown arbor '{arbor}'")
        rel = tbl.get("relative_to")
        if rel is not None:
            rel = r.text(rel, f"{item} relative_to")
            if rel not in arbors:
                raise r.fail(f"{item} relative_to", f"unknown arbor '{rel}'")
            if rel == arbor:
                raise r.fail(f"{item} relative_to", "cannot be the pointer's own arbor")
        per_turn = r.fraction(tbl.get("per_turn", 1), f"{item} per_turn")
        if per_turn <= 0:
            raise r.fail(f"{item} per_turn", f"must be greater than zero, got {per_turn}")
        set_deg = tbl.get("set_deg")
        if set_deg is not None:
            set_deg = r.number(set_deg, f"{item} set_deg")
        elif epoch.set == "angles":
            raise r.fail(item, "the epoch sets pointers by angle (set = \"angles\"), so each "
                         "pointer needs set_deg")
        out[name] = Pointer(name, shows, arbor, rel, per_turn,
                            r.flag(tbl.get("reversed", False), f"{item} reversed"), set_deg)
    return out
