"""``wheelwork cut``: cutting files for every wheel with a module, the plates, and one sheet."""

from __future__ import annotations

import argparse
import os
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import OutputError, UsageError, WheelworkError, nearest
from ..train import TOOTH_FORMS
from . import support

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console

    from ..drawing import CutSet

FORMATS = ("svg", "dxf")
CARRIER_OUTLINES = ("box", "disc", "arm")  # engine.drawing.CARRIER_OUTLINES, without numpy
LIST_WHEELS = 60  # an unknown --wheel lists at most this many of the train's wheels


def add_arguments(parser: argparse.ArgumentParser) -> None:
    support.add_train(parser)
    parser.add_argument("--out", required=True, metavar="FOLDER",
                        type=support.out_name("folder to write into"),
                        help="folder to write into (made if missing)")
    parser.add_argument("--form", type=support.one_of("tooth form", TOOTH_FORMS),
                        choices=TOOTH_FORMS, default=None,
                        help="tooth form for wheels that do not choose their own (default: "
                        "the file's [workshop] tooth_form, else cycloidal)")
    parser.add_argument("--carrier-outline", type=support.one_of("carrier outline",
                                                                   CARRIER_OUTLINES),
                        choices=CARRIER_OUTLINES,
                        default="box", help="a carrier's plate as a rectangle round its holes "
                        "and wheels (box, the default), a disc centred on its axis, balanced "
                        "in itself as it turns (disc), or arms to its holes with a counterweight "
                        "balancing them and the wheels they carry (arm; needs [workshop] "
                        "carrier_plate_mm)")
    parser.add_argument("--formats", default="svg,dxf", type=_formats, metavar="LIST",
                        help="which files to write: svg, dxf or svg,dxf (default)")
    parser.add_argument("--wheel", action="append", default=None, metavar="NAME",
                        help="cut this wheel only (its files alone: no plates or sheet); "
                        "give it again for more wheels")
    support.add_force(parser, "drawings")
    parser.add_argument("--json", action="store_true", help="print machine-readable JSON only")


def _formats(text: str) -> tuple[str, ...]:
    got = tuple(dict.fromkeys(t.strip().lower() for t in text.split(",") if t.strip()))
    bad = [t for t in got if t not in FORMATS]
    if bad or not got:
        raise argparse.ArgumentTypeError(f"should be svg, dxf or svg,dxf, got {text!r}")
    return got


def run(args: argparse.Namespace, console: Console) -> int:
    from ..drawing import cut_parts, layout_sheet, to_dxf, to_svg
    from ..kinematics import solve
    from ..loader import load_train

    train = load_train(args.train)
    kin = solve(train)
    only = _wheels_asked(train, args.wheel) if args.wheel else None
    cut = cut_parts(train, kin, args.form, only, args.carrier_outline)
    if not any(p.kind == "wheel" for p in cut.parts):  # a plate alone has nothing to hold
        raise WheelworkError(f"{train.source}: no mesh has a module_mm, so there is nothing to "
                             "draw; add module_mm to the [[meshes]] tables")
    sheets = [] if only else [layout_sheet(cut.parts)]
    folder = Path(args.out)
    _make_folder(folder)
    # every file is checked (exists, link, device, the train itself...) before any is written
    outs = [(part, fmt, support.OutputFile(folder / f"{part.name}.{fmt}", option="--out",
                                           force=args.force, inputs=[args.train]))
            for part in [*cut.parts, *sheets] for fmt in args.formats]
    written = []
    for part, fmt, out in outs:
        text = to_svg(part) if fmt == "svg" else to_dxf(part)
        with out.open("w", encoding="utf-8", newline="") as fh:
            fh.write(text)
        written.append(str(out.path))
    if args.json:
        support.print_json(console, to_json(cut, written))
    else:
        _print(cut, written, folder, console, sheet=not only)
    return 0


def _wheels_asked(train, names: list[str]) -> list[str]:
    """The wheels ``--wheel`` names, each checked: an unknown name is a usage error listing
    the wheels there are (the nearest first); a wheel in no mesh with a module, a fault."""
    from ..drawing import wheel_modules

    cut = wheel_modules(train)
    out = []
    for name in names:
        name = name.strip()
        if name not in train.wheels:
            near = nearest(name, train.wheels)
            hint = f"did you mean '{near}'? " if near else ""
            names = list(train.wheels)
            listed = ", ".join(names[:LIST_WHEELS]) + (
                f" … ({len(names)} in all)" if len(names) > LIST_WHEELS else "")
            raise UsageError(f"argument --wheel: no wheel {name!r} in {train.source}; {hint}"
                             f"its wheels: {listed}", "wheelwork cut")
        if name not in cut:
            raise WheelworkError(f"{train.source}: wheel '{name}' is in no mesh with a "
                                 "module_mm, so it cannot be drawn; add module_mm to its "
                                 "[[meshes]] table (wheels with one: "
                                 f"{', '.join(cut) or 'none'})")
        if name not in out:
            out.append(name)
    return out


def to_json(cut: CutSet, written: list[str]) -> dict:
    return {"train": cut.train, "source": cut.source,
            "parts": [{"name": p.name, "kind": p.kind, "title": p.title, **p.info,
                       "notes": p.notes} for p in cut.parts],
            "notes": cut.notes, "files": written, "caveat": cut.caveat}


def _print(cut: CutSet, written: list[str], folder: Path, console: Console, *,
           sheet: bool = True) -> None:
    from rich.markup import escape
    from rich.table import Table

    console.print(f"[bold]{escape(cut.train)}[/] — cutting files in {escape(str(folder))}")
    table = Table(box=None, pad_edge=False, collapse_padding=True)
    for col, just in (("part", "left"), ("z", "right"), ("m", "right"), ("form", "left"),
                      ("tip Ø", "right"), ("root Ø", "right"), ("bore", "right"),
                      ("crossings", "right")):
        table.add_column(col, justify=just, overflow="fold")
    for p in cut.parts:
        if p.kind != "wheel":
            continue
        i = p.info
        table.add_row(escape(i["wheel"]), str(i["teeth"]), support.figure(i['module_mm'], 6),
                      f"{i['form']} {i['role']}", support.fixed(i['tip_diameter_mm'], 3),
                      support.fixed(i['root_diameter_mm'], 3),
                      _bore_text(i), _crossings_text(i))
    support.print_table(console, table)
    if any(p.kind == "wheel" and p.info.get("bore_chosen") is False for p in cut.parts):
        console.print("* bore: the tool's own (2 mm, less on a small pinion), the file "
                      "choosing none: set bore_mm in [workshop] to your arbors", markup=False)
    for p in cut.parts:
        if p.kind != "plate":
            continue
        console.print(f"[bold]{escape(p.title)}[/] — hole centres x, y in mm")
        for h in p.info["holes"]:
            fixed = " (fixed by the file)" if h["fixed"] else ""
            console.print(f"  {escape(h['axis'])}: {support.fixed(h['x_mm'], 4)}, "
                          f"{support.fixed(h['y_mm'], 4)}{fixed}")
        for c in p.info["cocks"]:  # a pivot in a cock or bridge: no hole in this plate
            console.print(f"  cock for {escape('/'.join(c['arbors']))} ({p.info['side']} "
                          f"pivot, no hole): {support.fixed(c['x_mm'], 4)}, "
                          f"{support.fixed(c['y_mm'], 4)}")
    from ..toothform import DEEP_ADVICE, DEEP_NOTE_START, deep_teeth_text

    # deep cycloidal teeth: one note for all the wheels that have them, not one each
    deep = [(p.info["wheel"], p.info["proportions_m"]["addendum_m"],
             p.info["proportions_m"]["mate_leaves"]) for p in cut.parts
            if any(n.startswith(DEEP_NOTE_START) for n in p.notes)]
    if deep:
        console.print(f"[cyan]note[/] deep teeth on {len(deep)} "
                      f"wheel{'s' if len(deep) > 1 else ''}: {escape(deep_teeth_text(deep))}: "
                      f"{DEEP_ADVICE}")
    notes = [(p.name, n) for p in cut.parts for n in p.notes
             if not n.startswith(DEEP_NOTE_START)]
    for name, n in notes:
        console.print(f"[cyan]note[/] {escape(name)}: {escape(n)}")
    for n in cut.notes:
        console.print(f"[cyan]note[/] {escape(n)}")
    console.print(f"wrote {len(written)} files (one per part{', plus sheet.*' if sheet else ''})")
    console.print(f"[dim]{escape(cut.caveat)}[/]")


def _bore_text(info: dict) -> str:
    """A wheel's bore as the table gives it: ``1.5``, or ``2*`` when the file chose none."""
    if "bore_mm" not in info:
        return "—"
    return support.figure(info["bore_mm"], 6) + ("" if info.get("bore_chosen") else "*")


def _crossings_text(info: dict) -> str:
    """A wheel's crossings as the table gives them: their count and the rim's depth
    (``5, rim 3.12``; the crossings' widths are in the drawing and ``--json``), else
    ``solid``."""
    if "crossings" not in info:
        return "solid" if info["role"] != "ring" else "—"
    return f"{info['crossings']}, rim {support.figure(info['rim_mm'], 3)}"


def _make_folder(folder: Path) -> None:
    if folder.is_symlink() and not folder.is_dir():
        raise OutputError(f"{folder}: is a broken symbolic link, not a folder")
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: is not a folder; --out names the folder to write into")
    demos = support._demo_folder()  # refused before a folder is made there, not after
    if demos is not None and (os.path.realpath(folder) + os.sep).startswith(demos):
        raise OutputError(f"{folder}: is in wheelwork's own demo folder; --out writes "
                          "elsewhere (the demos ship with the package: copy one out to "
                          "change it)")
    if not folder.exists():
        try:
            folder.mkdir(parents=True)
        except OSError as exc:
            raise OutputError(f"{folder}: cannot make the folder ({exc.strerror})") from None
