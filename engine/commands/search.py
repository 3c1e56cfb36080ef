"""``wheelwork search``: which tooth counts give a period, with wheels you can cut."""

from __future__ import annotations

import argparse
import math
from pathlib import Path
from typing import TYPE_CHECKING

from ..defaults import SEARCH_MAX_TEETH as MAX_TEETH
from ..defaults import SEARCH_MAX_TOP as MAX_TOP
from ..errors import SearchError
from ..figures import error_column, table_cells
from ..periods import PERIODS, era_spread_note, era_spread_ppm, relation_error_ppm
from . import support

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console

    from ..search import Convergent, SearchReport, TrainResult

FAR_PPM = 1e4  # a best train more than 1% off is worth a word: the bounds are too tight


def _number(what: str):
    """An argparse type: a positive decimal or fraction (a value that cannot be read or is out
    of range is a usage error, exit 2); the text itself is passed on, to be read exactly."""
    def check(text: str) -> str:
        from ..exact import parse_fraction

        try:
            parse_fraction(text, what, positive=True)
        except ValueError as exc:
            raise argparse.ArgumentTypeError(str(exc)) from None
        return text
    check.__name__ = what
    return check


def _engine_value(read, what: str):
    """An argparse type from one of the engine's readers: a value it refuses is a usage error;
    the text is passed on to :func:`make_constraints`."""
    def check(text: str) -> str:
        try:
            read(text)
        except SearchError as exc:
            raise argparse.ArgumentTypeError(str(exc)) from None
        return text
    check.__name__ = what
    return check


def _stage_counts(text: str) -> str:
    from ..search import make_constraints

    try:
        make_constraints(stages=text)
    except SearchError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None
    return text


def _constraints(**bounds):
    """One bound read alone, at one stage: the range itself (its form, its limits); how many
    sets of counts the stages asked give is judged in :func:`run`, with every bound known —
    parsed here at the default stages, ``--stages 1 --wheels 8-1000`` was refused for the
    sets of 3 it never asked for."""
    from ..search import make_constraints

    return make_constraints(**bounds)


def _prefix(text: str) -> str:
    from ..search import check_prefix

    return check_prefix(text)


def _counts(text: str):
    from ..search import parse_counts

    return parse_counts(text)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.epilog = support.PPM_MEANING
    want = parser.add_argument_group("target (exactly one)")
    one = want.add_mutually_exclusive_group(required=True)
    one.add_argument("--period", metavar="DAYS", type=_number("period"),
                     help="days per output turn: a decimal or a fraction, e.g. 6940/235")
    one.add_argument("--ratio", metavar="P/Q", type=_number("ratio"), help="output turns per crank turn, e.g. 19/235")
    one.add_argument("--cycle", metavar="NAME",
                     help="a mean period by name, e.g. 'synodic month', 'tropical year', "
                     "'venus synodic', 'mars sidereal', or a period relation, 'venus 5 in 8'")
    parser.add_argument("--crank-days", default="1", metavar="DAYS",
                        type=_number("crank days per turn"),
                        help="days per crank turn (default 1)")
    bounds = parser.add_argument_group("bounds")
    bounds.add_argument("--stages", default="1-3", metavar="N|MIN-MAX", type=_stage_counts,
                        help="number of stages, 1-4 (default 1-3)")
    bounds.add_argument("--wheels", default="8-150", metavar="MIN-MAX",
                        type=_engine_value(lambda t: _constraints(wheels=t, stages=1), "wheels"),
                        help="teeth of the wheels, the larger member of a stage (default 8-150)")
    bounds.add_argument("--pinions", default="8-150", metavar="MIN-MAX",
                        type=_engine_value(lambda t: _constraints(pinions=t, stages=1), "pinions"),
                        help="teeth of the pinions, the smaller, faster member (default 8-150)")
    bounds.add_argument("--allowed", metavar="LIST", type=_engine_value(_counts, "allowed"),
                        help="only these counts, e.g. 12,15,20-30 (your cutters or plate)")
    bounds.add_argument("--max-prime", type=support.whole("the largest prime factor", 2, MAX_TEETH),
                        metavar="P",
                        help="no count may have a prime factor above P")
    bounds.add_argument("--no-repeat", action="store_true",
                        help="no tooth count appears twice in a train")
    sense = bounds.add_mutually_exclusive_group()
    sense.add_argument("--keep-direction", action="store_true",
                       help="output turns with the crank (even number of stages)")
    sense.add_argument("--reverse-direction", action="store_true",
                       help="output turns against the crank (odd number of stages)")
    bounds.add_argument("--exact-only", action="store_true", help="only exact trains")
    out = parser.add_argument_group("output")
    out.add_argument("--top", type=support.whole("the number of trains", 1, MAX_TOP), default=10,
                     metavar="N", help=f"how many trains to list, 1-{MAX_TOP} (default 10)")
    out.add_argument("--json", action="store_true", help="print machine-readable JSON only")
    out.add_argument("--emit", metavar="FILE", type=support.out_name("file to write"),
                     help="write the chosen train as a TOML fragment")
    out.add_argument("--pick", type=support.whole("the result to write", 1, MAX_TOP), default=1,
                     metavar="K",
                     help="which result --emit writes (default 1, the best)")
    out.add_argument("--prefix", default="search", metavar="NAME",
                     type=_engine_value(_prefix, "prefix"),
                     help="prefix of arbor and wheel names in the fragment (default 'search')")
    support.add_force(out, "--emit file")


def run(args: argparse.Namespace, console: Console) -> int:
    from ..search import check_reachable, make_constraints, make_target, search

    with support.usage_errors():  # option values that do not fit together: exit 2
        target = make_target(period=args.period, ratio=args.ratio, cycle=args.cycle,
                             crank_days=args.crank_days)
        direction = ("same" if args.keep_direction else "reverse" if args.reverse_direction
                     else "any")
        cons = make_constraints(stages=args.stages, wheels=args.wheels, pinions=args.pinions,
                                allowed=args.allowed, max_prime=args.max_prime,
                                no_repeat=args.no_repeat, direction=direction,
                                exact_only=args.exact_only)
        check_reachable(target, cons)
        if args.pick != 1 and not args.emit:
            raise SearchError("--pick chooses which result --emit writes; give --emit FILE too")
        if args.prefix != "search" and not args.emit:  # it would name nothing, unsaid
            raise SearchError("--prefix names the arbors and wheels of the fragment --emit "
                              "writes; give --emit FILE too")
        if args.pick > args.top:
            raise SearchError(f"--pick {args.pick} is past the {args.top} trains --top asks "
                              f"for; give --top {args.pick} or more, or a smaller --pick")
    out = support.OutputFile(args.emit, option="--emit", force=args.force) if args.emit else None
    report = search(target, cons, top=args.top)
    written = _emit(report, args, out) if out else None
    if args.json:
        support.print_json(console, _to_json(report, written))
        return 0
    _print(report, console)
    if written:
        console.print(f"wrote train {args.pick} as a fragment to {written}", markup=False)
    return 0


def _emit(report: SearchReport, args: argparse.Namespace, out: support.OutputFile) -> Path:
    from ..search import emit_fragment

    if not report.results:
        raise SearchError("--emit: no train within these bounds to write")
    if not 1 <= args.pick <= len(report.results):
        raise SearchError(f"--pick: {args.pick} is not between 1 and {len(report.results)}")
    text = emit_fragment(report.results[args.pick - 1], report.target, prefix=args.prefix)
    with out.open("w", encoding="utf-8") as fh:
        fh.write(text)
    return out.path



def _to_json(report: SearchReport, written: Path | None) -> dict:
    from ..exact import ratio_text
    from ..search import result_to_dict

    t, c = report.target, report.constraints
    return {
        "target": {"label": t.label, "ratio": ratio_text(t.ratio), "ratio_float": float(t.ratio),
                   "period_days": t.period_days, "crank_days": ratio_text(t.crank_days),
                   **_relation_json(t)},
        "constraints": {"stages": list(c.stages), "wheels": list(c.wheels),
                        "pinions": list(c.pinions),
                        "allowed": list(c.allowed) if c.allowed else None,
                        "max_prime": c.max_prime, "no_repeat": c.no_repeat,
                        "direction": c.direction, "exact_only": c.exact_only},
        "results": [result_to_dict(r) for r in report.results],
        "convergents": [_conv_dict(v) for v in report.convergents],
        "fragment_file": str(written) if written else None,
    }


def _relation_json(t) -> dict:
    out = {}
    if t.cycle is not None and era_spread_ppm(t.cycle.key) is not None:
        out["era_spread_ppm"] = era_spread_ppm(t.cycle.key)
    if t.cycle is None or not t.cycle.approximates:
        return out
    return {"approximates": t.cycle.approximates,
            "relation_period_error_ppm": relation_error_ppm(t.cycle.key), **out}



def _conv_dict(v: Convergent) -> dict:
    from ..exact import ratio_text
    from ..search import result_to_dict

    return {"ratio": ratio_text(v.ratio), "period_days": ratio_text(v.period_days),
            "period_error_ppm": v.period_error_ppm, "admitted": v.admitted,
            "train": result_to_dict(v.train) if v.train else None, "reason": v.reason or None}


def _stages_text(r: TrainResult, sep: str = "  ") -> str:
    return sep.join(f"{s.driver}→{s.driven}" for s in r.stages)


def _years(y: float) -> str:
    """Years until a pointer is a day out, with the unit, in plain figures (never e-notation)."""
    if math.isinf(y):
        return "never (exact)"
    return f"{y:,.0f} y" if y >= 100 else f"{y:.3g} y"


def _print(report: SearchReport, console: Console) -> None:
    from rich import box
    from rich.markup import escape

    from ..exact import fraction_text, ratio_text

    t = report.target
    days = fraction_text(t.crank_days)
    turns = support.figure(float(t.ratio), 12)
    console.print(f"[bold]target[/]: {escape(t.label)} — {turns} turn{'' if turns == '1' else 's'} "
                  f"per crank turn, {support.figure(float(t.period_days), 10)} days per turn "
                  f"(crank: {days} "
                  f"day{'' if t.crank_days == 1 else 's'} per turn)")
    if t.cycle is not None and t.cycle.approximates:
        mean = PERIODS[t.cycle.approximates]
        console.print(f"a period relation: against the mean {escape(mean.name)} of "
                      f"{support.figure(mean.days, 7)} days it is {support.figure(relation_error_ppm(t.cycle.key), 4, True)} ppm")
    note = era_spread_note(t.cycle.key) if t.cycle is not None else ""
    if note:
        support.print_indented(console, f"note: {note}", 0)
    # against a Jupiter or Saturn period of 1800-2050, which the great inequality moves: each
    # figure read against it is marked as the ratio report marks it, and the mark said
    spread = era_spread_ppm(t.cycle.key) if t.cycle is not None else None

    def mark(text: str) -> str:
        return support.era_marked(text, True, spread is not None)

    if not report.results:
        console.print("no train within these bounds")
    elif abs(report.results[0].period_error_ppm) > FAR_PPM:
        console.print(f"[yellow]the closest train within these bounds is "
                      f"{abs(report.results[0].period_error_ppm) / 1e4:.3g}% off the target:[/] widen "
                      "the tooth ranges or allow more stages")
    else:
        table = support.plain_table(title="trains, best first", box=box.SIMPLE_HEAD,
                                    collapse_padding=True,
                      pad_edge=False,
                      caption="stages: driver→driven; period ppm: (train's period / target - 1) "
                      "× 10⁶, + too long (falls behind), − too short; °/cy: drift of "
                      "the output pointer per century; 1 day off: years until it is a day out")
        for col, just in (("#", "right"), ("stages", "left"), ("ratio", "right"),
                          ("days/turn", "right"), ("period ppm", "right"), ("°/cy", "right"),
                          ("1 day off", "right"), ("teeth", "right")):
            table.add_column(col, justify=just, no_wrap=True)
        # period errors and drifts as ratios and the interface write a column of them
        ppms = table_cells([mark(c) for c in
                            error_column(r.period_error_ppm for r in report.results)])
        drifts = table_cells([mark(c) for c in
                              error_column(r.drift_deg_per_century for r in report.results)])
        for i, r in enumerate(report.results, start=1):
            table.add_row(str(i), _stages_text(r, "\n"), ratio_text(r.ratio), support.figure(r.period_days, 9),
                          ppms[i - 1], drifts[i - 1],
                          mark(_years(r.one_day_off_years)), str(r.total_teeth))
        support.print_table(console, table, keys=2)  # a train is named by # and its stages
    if report.convergents:
        table = support.plain_table(title="continued-fraction convergents of the target",
                                    box=box.SIMPLE_HEAD, collapse_padding=True, pad_edge=False)
        for col, just in (("ratio", "right"), ("days/turn", "right"), ("period ppm", "right"),
                          ("admitted", "left"), ("train or reason", "left")):
            table.add_column(col, justify=just, no_wrap=col != "train or reason")
        ppms = table_cells([mark(c) for c in
                            error_column(v.period_error_ppm for v in report.convergents)])
        for v, ppm in zip(report.convergents, ppms, strict=True):
            table.add_row(ratio_text(v.ratio), ratio_text(v.period_days), ppm,
                          "yes" if v.admitted else "no",
                          _stages_text(v.train) if v.train else v.reason)
        support.print_table(console, table)
    if spread is not None and (report.convergents or report.results):
        support.print_indented(console, support.era_mark_said({t.cycle.name: spread}), 0)
