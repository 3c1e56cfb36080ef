"""``wheelwork play``: dead play, once-per-turn errors and a Monte Carlo of hand-made trains."""

from __future__ import annotations

import argparse
import dataclasses
from typing import TYPE_CHECKING

from ..defaults import (
    DEFAULT_DIVISION,
    DEFAULT_ECCENTRICITY_MM,
    DEFAULT_END_SHAKE_MM,
    DEFAULT_HOLE_MM,
    DEFAULT_TILT_DEG,
    LEVER_MM,
)
from ..errors import TrainError, UsageError, decimal_comma, unit_slip
from ..figures import error_column, error_with_sigma, table_cells
from ..periods import JULIAN_YEAR_DAYS
from ..train import TOOTH_FORMS
from . import support

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console

    from ..play import PlayReport

MAX_BUILDS = 100_000
MAX_SAMPLES = 100_000
MAX_CELLS = 4_000_000  # builds × samples: 32 MB of readings per pointer at most
MAX_TOOTH_DRAWS = 40_000_000  # builds × the teeth of every wheel in every mesh: each build's
# tooth-division errors are drawn at once (320 MB); table_orrery at --builds 100000 drew 1.7 GB


def add_arguments(parser: argparse.ArgumentParser) -> None:
    support.add_train(parser)
    parser.add_argument("--years", type=support.positive("years", 100_000), default=100.0,
                        metavar="Y", help="span the pointers are read over (default 100)")
    parser.add_argument("--builds", type=support.whole("builds", 10, MAX_BUILDS), default=400,
                        metavar="N", help="trains built at random (default 400)")
    parser.add_argument("--samples", type=support.whole("samples", 8, MAX_SAMPLES),
                        default=256, metavar="N",
                        help="random times each train is read at (default 256)")
    parser.add_argument("--seed", type=support.whole("seed", 0, 2**63 - 1), default=1,
                        metavar="S", help="random seed, for repeatable runs (default 1)")
    parser.add_argument("--backlash-mm", type=_nonneg("backlash"), default=None, metavar="MM",
                        help="backlash of every mesh with a module (default: the file's "
                        "[workshop] backlash_mm, else what the tooth form leaves)")
    parser.add_argument("--division", type=_fraction, default=None, metavar="F",
                        help="random tooth-division error, one standard deviation, as a "
                        f"fraction of the pitch (default {DEFAULT_DIVISION:g})")
    parser.add_argument("--eccentricity-mm", type=_nonneg("eccentricity"), default=None,
                        metavar="MM", help="largest eccentricity of a wheel on its arbor "
                        f"(default {DEFAULT_ECCENTRICITY_MM:g})")
    parser.add_argument("--end-shake-mm", type=_nonneg("end-shake"), default=None,
                        metavar="MM", help=f"axial play of an arbor (default "
                        f"{DEFAULT_END_SHAKE_MM:g})")
    parser.add_argument("--tilt-deg", type=_tilt, default=None, metavar="DEG",
                        help=f"tilt of an arbor in its pivots (default {DEFAULT_TILT_DEG:g})")
    parser.add_argument("--lever-mm", type=support.positive("mm", 10_000), default=None,
                        metavar="MM", help="distance from a pivot to the wheels it tilts "
                        f"(default {LEVER_MM:g})")
    parser.add_argument("--hole-mm", type=_nonneg("hole"), default=None, metavar="MM",
                        help="largest error of a pivot hole's place in its plate; two holes "
                        "part a mesh's centres by up to twice it, widening its backlash "
                        f"(default {DEFAULT_HOLE_MM:g})")
    parser.add_argument("--form", type=support.one_of("tooth form", TOOTH_FORMS),
                        choices=TOOTH_FORMS, default=None,
                        help="tooth form for wheels that do not choose their own (sets the "
                        "default backlash)")
    parser.add_argument("--json", action="store_true", help="print machine-readable JSON only")


def _nonneg(what: str):
    def check(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{what}: not a number: {text!r}"
                                             f"{unit_slip(text, 'mm')}") from None
        if not 0 <= value <= 100 or value != value:
            raise argparse.ArgumentTypeError(f"{what}: must be 0 to 100 mm, got {text}")
        return value
    return check


def _fraction(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}{decimal_comma(text)}") from None
    if not 0 <= value < 0.5:
        raise argparse.ArgumentTypeError(f"a fraction of the pitch, 0 to below 0.5, got {text}")
    return value


def _tilt(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}"
                                         f"{unit_slip(text, 'degrees')}") from None
    if not 0 <= value <= 45:
        raise argparse.ArgumentTypeError(f"degrees from 0 to 45, got {text}")
    return value


def run(args: argparse.Namespace, console: Console) -> int:
    from ..kinematics import solve
    from ..loader import load_train
    from ..play import Tolerances, backlash_fault, play

    if args.builds * args.samples > MAX_CELLS:
        raise UsageError(f"--builds × --samples is {args.builds * args.samples:,}; "
                                 f"keep it at most {MAX_CELLS:,}", "wheelwork play")
    train = load_train(args.train)
    teeth = sum(train.wheels[m.driver].teeth + train.wheels[m.driven].teeth
                for m in train.meshes)
    if args.builds * teeth > MAX_TOOTH_DRAWS:
        most = max(1, MAX_TOOTH_DRAWS // teeth)
        raise UsageError(f"argument --builds: {args.builds:,} builds of this train draw "
                         f"{args.builds * teeth:,} tooth errors ({teeth:,} teeth in its "
                         f"meshes); keep --builds at most {most:,} for it", "wheelwork play")
    kin = solve(train)
    tol = Tolerances.of(train, backlash_mm=args.backlash_mm, division=args.division,
                        eccentricity_mm=args.eccentricity_mm, end_shake_mm=args.end_shake_mm,
                        tilt_deg=args.tilt_deg, lever_mm=args.lever_mm, form=args.form,
                        hole_mm=args.hole_mm)
    fault = backlash_fault(train, tol.backlash_mm)
    if fault and args.backlash_mm is not None:
        raise UsageError(f"argument --backlash-mm: {fault}", "wheelwork play")
    if fault:
        raise TrainError(train.source or str(args.train), "[workshop] backlash_mm", fault)
    report = play(train, kin, tol, years=args.years, builds=args.builds, samples=args.samples,
                  seed=args.seed)
    if args.json:
        support.print_json(console, to_json(report))
    else:
        _print(report, console)
    return 0


def to_json(report: PlayReport) -> dict:
    return dataclasses.asdict(report)


def _deg(x: float | None) -> str:
    if x is None:
        return "—"
    return support.figure(x, 3)


def _spread(x: float, sigma: float | None) -> str:
    """The Monte Carlo σ with its own standard error (``0.3004±0.0042``), by the one rule for
    a figure beside its σ: it showed digits its σ did not know, or fewer than it did, by a
    rule of its own (``0.3±0.004``); alone where its σ is zero (``0``, a pointer without
    play)."""
    value, pm = error_with_sigma(x, sigma, sign=False)
    return _deg(x) if pm is None else f"{value}±{pm}"


def _days(d: float | None) -> str:
    if d is None:
        return "never (still in its mesh)"
    if d >= 3 * JULIAN_YEAR_DAYS:
        return f"{support.figure(d / JULIAN_YEAR_DAYS, 4)} years"
    text = support.figure(d, 4)
    return f"{text} {'day' if text == '1' else 'days'}"  # every 1 day, not every 1 days


def _print(report: PlayReport, console: Console) -> None:
    from rich.markup import escape
    from rich.table import Table

    from ..kinds import shows_text

    tol = report.tolerances

    def g(x: float) -> str:  # a tolerance as given, in plain figures (never 1e-07)
        return support.figure(x, 6)

    back = (f"{g(tol.backlash_mm)} mm" if tol.backlash_mm is not None
            else "as each mesh's tooth form leaves it")
    console.print(f"[bold]{escape(report.train)}[/] — play and errors of hand-made wheels, read "
                  f"over {g(report.years)} years in {report.builds:,} builds × {report.samples:,} "
                  f"times (seed {report.seed})")
    console.print(f"tolerances: backlash {back}; division σ {g(tol.division)} pitch; "
                  f"eccentricity up to {g(tol.eccentricity_mm)} mm; end-shake "
                  f"{g(tol.end_shake_mm)} mm; tilt {g(tol.tilt_deg)}° at {g(tol.lever_mm)} mm; "
                  f"pivot holes within {g(tol.hole_mm)} mm of their places",
                  markup=False)
    table = Table(box=None, pad_edge=False, collapse_padding=True,
                  caption="degrees of what each pointer shows (on a dial of one cycle a turn, "
                  "the dial's own); dead play: all backlash taken up on reversing; "
                  "running error: σ, 95 % and largest of the Monte Carlo, and the "
                  "root-sum-square σ; inequality: the pin-and-slot swing ±; drift: °/century")
    for col in ("pointer", "dead play", "σ", "95 %", "max", "RSS σ", "inequality",
                "drift/cy"):
        table.add_column(col, justify="left" if col == "pointer" else "right")
    # drifts as ratios and the interface write a column of them: one number of decimals
    drifts = table_cells(error_column(p.drift_deg_per_century for p in report.pointers))
    for p, drift in zip(report.pointers, drifts, strict=True):
        table.add_row(escape(p.pointer), _deg(p.dead_play_deg),
                      _spread(p.mc_std_deg, p.mc_std_sigma_deg), _deg(p.mc_p95_deg),
                      _deg(p.mc_max_deg), _deg(p.rss_deg),
                      "—" if p.inequality_deg is None else f"±{_deg(p.inequality_deg)}",
                      drift)
    support.print_table(console, table)
    for p in report.pointers:
        console.print(f"[bold]{escape(p.pointer)}[/] ({escape(shows_text(p.shows))}): "
                      f"{escape(p.verdict)}")
        if p.per_turn != 1 and p.dead_play_deg > 0:
            # 143° of a 223-month ring's month is 0.64° of the ring's turn: said, so that a
            # dead play larger than a dial's degrees allow is read as what it is
            support.print_indented(
                console, f"its arbor turns once for {support.figure(p.per_turn, 6)} of "
                f"what it shows: {_deg(p.dead_play_deg)}° of dead play is "
                f"{_deg(p.dead_play_deg / p.per_turn)}° of the arbor's turn, "
                f"{support.figure(p.dead_play_deg / 360, 3)} of "
                f"{'a month' if p.shows in ('cycle', 'phase') else 'a cycle'}", 2)
        top = ", ".join(f"{c.mesh} {_deg(c.deg)}°" for c in p.contributions[:3])
        if top:
            support.print_indented(console, f"dead play from: {top}", 2)
        if p.dead_play_holes_deg > 0:
            support.print_indented(
                console, f"pivot holes {g(tol.hole_mm)} mm off their places: up to "
                f"{_deg(p.dead_play_holes_deg)}° more dead play (each mesh's centres parted "
                f"{g(2 * tol.hole_mm)} mm)", 2)
        for x in p.periodic[:3]:
            support.print_indented(console, f"once per turn of '{x.wheel}' ({x.mesh}): "
                                   f"±{_deg(x.amplitude_deg)}° every {_days(x.period_days)}", 2)
    for f in report.flags:
        console.print(f"[yellow]flag[/] {escape(f.item)}: {escape(f.message)}")
        support.print_indented(console, f"→ {f.fix}", 4)
    for n in report.notes:
        console.print(f"[cyan]note[/] {escape(n)}")
    console.print(f"[dim]{escape(report.caveat)}[/]")
