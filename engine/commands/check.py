"""``wheelwork check``: can the train be built — centre distances, positions, speeds, loads."""

from __future__ import annotations

import argparse
import dataclasses
import math
from fractions import Fraction
from typing import TYPE_CHECKING

from ..defaults import DEFAULT_CRANK_RPM, DEFAULT_EFFICIENCY
from ..errors import decimal_comma
from . import support

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console

    from ..checks import CheckReport

# A crank (or a motor driving one) beyond this is no longer a display mechanism.
MAX_CRANK_RPM = 100_000

_STYLE = {"error": "bold red", "warning": "yellow", "note": "cyan"}


def _efficiency(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}{decimal_comma(text)}") from None
    if not 0 < value <= 1:
        raise argparse.ArgumentTypeError(f"must be above 0 and at most 1, got {text}")
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    support.add_train(parser)
    speed = parser.add_mutually_exclusive_group()
    speed.add_argument("--crank-rpm", type=support.positive("turns per minute", MAX_CRANK_RPM), default=None, metavar="N",
                       help=f"highest crank speed to evaluate, turns per minute (default "
                       f"{DEFAULT_CRANK_RPM:g}: one turn a second by hand)")
    speed.add_argument("--real-time", action="store_true",
                       help="evaluate at the train's own running speed instead: one crank turn "
                       "every [crank] days_per_turn, as a clock or motor drives it")
    parser.add_argument("--efficiency", type=_efficiency, default=None, metavar="E",
                        help="efficiency of each mesh and pin-and-slot stage, above 0 and at "
                        f"most 1 (default {DEFAULT_EFFICIENCY:g}, a common rule for cut spur "
                        "gears)")
    parser.add_argument("--strict", action="store_true",
                        help="exit 1 when any error is found (default: exit 0 and list them)")
    parser.add_argument("--json", action="store_true", help="print machine-readable JSON only")


def run(args: argparse.Namespace, console: Console) -> int:
    from ..checks import check
    from ..kinematics import solve
    from ..loader import load_train

    train = load_train(args.train)
    report = check(train, solve(train), crank_rpm=args.crank_rpm, efficiency=args.efficiency,
                   real_time=args.real_time)
    if args.json:
        support.print_json(console, report_to_dict(report))
    else:
        _print(report, console)
    return 1 if args.strict and report.has_errors else 0


def _jsonable(value):
    if isinstance(value, Fraction):
        return f"{value.numerator}/{value.denominator}" if value.denominator != 1 \
            else str(value.numerator)
    if isinstance(value, dict):
        return {k: _jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_jsonable(v) for v in value]
    return value


def report_to_dict(report: CheckReport) -> dict:
    """The report as JSON-ready data; exact fractions as "p/q" strings."""
    out = _jsonable(dataclasses.asdict(report))
    for a, row in zip(report.arbors, out["arbors"], strict=True):
        row["turns_per_crank_float"] = float(a.turns_per_crank)
    out["counts"] = {lv: report.count(lv) for lv in ("error", "warning", "note")}
    return out


def _opt(x: float | None, spec: str | int = 3) -> str:
    """A figure or a dash: ``spec`` significant figures in plain figures, or a format."""
    if x is None:
        return "—"
    return support.figure(x, spec) if isinstance(spec, int) else format(x, spec)


def _centre(a: float | None) -> str:
    """A length to the micrometre: a centre distance (where the holes go; 4 figures cut
    105.875 mm to 105.9, a 0.025 mm error past what a mesh takes up), a slot's ends."""
    if a is None:
        return "—"
    a = round(a, 3)
    return support.figure(a, max(1, math.floor(math.log10(abs(a))) + 1) + 3) if a else "0"


def _num(x: float | None) -> str:
    """An estimate (speed, torque, tooth force) to 4 significant figures, a large one rounded
    too: 190,000, not 190,019, which claims more than an estimate knows."""
    if x is None:
        return "—"
    return support.figure(float(f"{x:.4g}"), 4)



def _turn_time(days_per_turn) -> str:
    """``1 turn = 1 day``, ``1 turn = 0.04 seconds``: what a crank turn stands for, a turn
    under a day in the unit that suits it, in plain figures."""
    from ..dates import turn_days_text

    days = float(days_per_turn)
    if days >= 1:
        return turn_days_text(days_per_turn)
    size, unit = ((1 / 24, "hour") if days >= 1 / 24 else
                  (1 / 1440, "minute") if days >= 1 / 1440 else (1 / 86400, "second"))
    text = support.figure(days / size, 6)
    return f"1 turn = {text} {unit}" + ("" if text == "1" else "s")


def _print(report: CheckReport, console: Console) -> None:
    from rich import box
    from rich.markup import escape
    from rich.text import Text

    from ..exact import ratio_text

    rpm = support.figure(report.crank_rpm, 6)
    if report.real_time:  # the speed the clock or motor turns the crank at, from the file
        speed = (f" — mechanical check at the train's own running speed, {rpm} rpm on "
                 f"'{report.crank_arbor}' ({_turn_time(report.days_per_turn)})")
    else:
        speed = f" — mechanical check at up to {rpm} rpm on '{report.crank_arbor}'"
    console.print(Text.assemble((report.train, "bold"), speed,
                                f", {support.figure(report.efficiency, 6)} per stage"))
    # Every column, always: when the table is wider than the console it is split in narrower
    # tables (or, failing that, becomes a list).
    meshes = support.plain_table(
        title="meshes", box=box.SIMPLE_HEAD, collapse_padding=True, pad_edge=False,
        caption="d: pitch diameters m·z; a: centre distance; held by: the frame or carrier "
        "holding both axes; m/s: pitch-line speed at the "
        + ("train's own running speed" if report.real_time else "highest crank speed")
        + "; force: tangential tooth force per N·m at the crank (a design estimate)")
    cols = [("#", "right"), ("wheels", "left"), ("teeth", "right"), ("m", "right"),
            ("d mm", "right"), ("a mm", "right"), ("held by", "left"), ("ratio", "right"),
            ("m/s", "right"), ("force N", "right")]
    for col, just in cols:
        meshes.add_column(col, justify=just, no_wrap=col != "held by", overflow="fold")
    for m in report.meshes:
        kind = " int" if m.internal else ""
        d = "—" if m.driver_pitch_mm is None else \
            f"{_opt(m.driver_pitch_mm, 6)}\n{_opt(m.driven_pitch_mm, 6)}"
        row = [str(m.index), f"{m.driver}\n{m.driven}{kind}",
               f"{m.driver_teeth}\n{m.driven_teeth}", _opt(m.module_mm, 6), d,
               _centre(m.centre_mm), m.reference,
               ratio_text(m.ratio) + (" up" if m.step_up else ""),
               _opt(m.pitch_speed_m_s), _num(m.tooth_force_n)]
        meshes.add_row(*row)
    support.print_table(console, meshes, keys=2)  # a mesh is named by # and its wheels
    arbors = support.plain_table(
        title="arbors", box=box.SIMPLE_HEAD, collapse_padding=True, pad_edge=False,
        caption="turns per crank turn (exact) and per year, relative to the frame; torque: "
        "times the crank torque when this arbor is the only load, ideal and with losses over "
        "its stages; sense: + with the crank, − against it, 0 still, ↑ driven by a step-up "
        "stage")
    cols = [("arbor", "left"), ("turns/crank", "right"), ("turns/yr", "right"),
            ("sense", "left"), ("rpm max", "right"), ("torque ideal", "right"),
            ("torque", "right")]
    for col, just in cols:
        arbors.add_column(col, justify=just, no_wrap=col != "sense", overflow="fold")
    for a in report.arbors:
        sense = {"with the crank": "+", "against the crank": "−"}.get(a.direction, "0")
        row = [a.name, ratio_text(a.turns_per_crank), support.figure(a.turns_per_year, 6),
               sense + (" ↑" if a.step_up else ""), _num(a.rpm_max), _num(a.torque_ideal),
               _num(a.torque)]
        arbors.add_row(*row)
    support.print_table(console, arbors)
    for p in report.pin_slots:
        # lengths to the micrometre, as the findings give them (7.415 mm, not 7.42; and
        # never e-notation, which .3g wrote for a slot of 1,000 mm or more)
        console.print(f"pin-and-slot [bold]{escape(p.name)}[/]: slot {_centre(p.slot_length_mm)} "
                      f"mm long ({_centre(p.slot_inner_mm)}–{_centre(p.slot_outer_mm)} mm from "
                      f"the slot axis, pin Ø {_centre(p.pin_diameter_mm)} mm"
                      f"{' assumed' if p.pin_diameter_assumed else ''}); lead up to "
                      f"±{support.figure(p.max_lead_deg, 3)}°; speed "
                      f"×{support.figure(p.speed_factor_min, 4)} to "
                      f"×{support.figure(p.speed_factor_max, 4)}", markup=True)
    counts = ", ".join(f"{report.count(lv)} {lv}{'s' if report.count(lv) != 1 else ''}"
                       for lv in ("error", "warning", "note"))
    console.print(f"[bold]findings[/]: {counts}")
    for f in report.findings:
        console.print(Text.assemble((f.level, _STYLE[f.level]), f" {f.item}: {f.message}"))
        support.print_indented(console, f"→ {f.fix}", 4)
    console.print(report.caveat, style="dim", markup=False)
