"""``wheelwork eclipses TRAIN``: the train's eclipse predictions against the real eclipses.

For every new and full moon in the span: whether the train predicts an eclipse (by its node
hand, draconic or eclipse-year dial at the syzygies its phase hand shows, or by the marks of its
eclipse-cycle dial) and whether the sky has one; counts of hits, misses and false alarms per
kind, and the first failure. Option values that cannot be read are usage errors (exit 2); a
train file or span the ephemeris does not cover is an error (exit 1); Ctrl-C stops at once
(exit 130) and leaves no file.
"""

from __future__ import annotations

import argparse
import math
from typing import TYPE_CHECKING

from ..defaults import ECLIPSE_METHODS as METHODS
from ..errors import TrainError, UsageError
from ..periods import JULIAN_YEAR_DAYS
from . import support
from .drift import date_heading
from .support import SUN_CAUTION

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console

    from ..eclipses import Check

PROGRESS_MIN_DAYS = 30 * JULIAN_YEAR_DAYS  # shorter spans finish before a bar is worth drawing
STOPPED = "wheelwork: eclipses stopped; no file written"
ECLIPSE_CAUTION = f"{SUN_CAUTION} That holds during an eclipse too, however much is covered."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    support.add_train(parser)
    support.add_span(parser)
    how = parser.add_argument_group("prediction")
    how.add_argument("--by", type=support.one_of("method", METHODS), choices=METHODS,
                     help="predict by the pointers (node hand, draconic or eclipse-year dial) "
                          "or by the eclipse-cycle dial's marks (default: the cycle dial when "
                          "the train has one)")
    support.add_ephemeris(how)
    out = parser.add_argument_group("output")
    rows = out.add_mutually_exclusive_group()
    rows.add_argument("--all", action="store_true",
                      help="list every new and full moon, not only those with an eclipse "
                           "predicted or real")
    rows.add_argument("--summary", action="store_true",
                      help="leave out the list of new and full moons: the hits, misses and "
                           "false alarms, the first failure and the counts per turn of the "
                           "cycle dial only (a span of centuries lists thousands of rows)")
    out.add_argument("--csv", metavar="FILE", type=support.out_name("file to write"),
                     help="write every new and full moon of the span")
    out.add_argument("--json", action="store_true", help="print JSON only")
    support.add_force(out)


# --- rows ----------------------------------------------------------------------------------

def _num(x: float, places: int) -> float | None:
    return None if not math.isfinite(x) else round(float(x), places)


def _predicted_type(c: Check, i: int) -> str:
    """What the train says at a syzygy it flags: "marked" on a cycle dial; from the pointers
    "likely" within the classical certain limit, else "possible"."""
    if c.method == "cycle":
        return "marked"
    from ..eclipses import LUNAR_CERTAIN_DEG, SOLAR_CERTAIN_DEG

    certain = LUNAR_CERTAIN_DEG if c.full[i] else SOLAR_CERTAIN_DEG
    return "likely" if c.detail[i] < min(certain, c.limits[c.kind(i)]) else "possible"


def _detail_text(c: Check, i: int) -> str:
    if c.method == "cycle":
        return f"month {int(c.detail[i])}"
    return f"{c.detail[i]:.1f}°"


#: ΔT's uncertainty is pointed out once it reaches a minute (as ``wheelwork sky`` does)
DELTA_T_NOTE_S = 60.0


def delta_t_sigma_s(start: float, end: float) -> float:
    """The largest standard error of ΔT (seconds) over a span of UT dates: how far any time in
    UT printed for it may be off (σ grows away from the present, so the ends rule)."""
    import numpy as np

    from ..sky import delta_t_sigma_s as sigma  # at TT dates: hours of ΔT do not change it

    return float(np.max(sigma(np.linspace(float(start), float(end), 65))))


def delta_t_line(sigma_s: float) -> str:
    """The words for a span whose times ΔT leaves uncertain by ``sigma_s`` seconds."""
    scale = f"{sigma_s / 3600:.1f} h" if sigma_s >= 3600 else f"{sigma_s / 60:.1f} min"
    return (f"times are UT through ΔT, uncertain by up to ± {sigma_s:,.0f} s ({scale}, one "
            "standard error) in this span: each time may be off by that much (which eclipses "
            "happen, their types and γ do not depend on it)")


def dates_note(first_jd: float, last_jd: float) -> str:
    """What the table's dates need said before AD 1582: their calendar and, before AD 1, that
    the signed years are astronomical ('-0584' reads as 584 BC but is 585 BC); "" otherwise."""
    from ..dates import AD_1_JD, GREGORIAN_START_JD, calendar_date

    if first_jd >= GREGORIAN_START_JD:
        return ""
    cal = ("Julian calendar" if last_jd < GREGORIAN_START_JD
           else "Julian calendar to 1582-10-04, then Gregorian")
    text = f"dates: UT, {cal}"
    if first_jd < AD_1_JD:
        year = calendar_date(first_jd)[0]
        shown = f"-{-year:04d}" if year < 0 else f"{year:04d}"
        text += (f"; signed years are astronomical (0 = 1 BC): {shown} is {1 - year} BC")
    return text


def document(c: Check, mech, sky, args) -> dict:
    """The ``--json`` document."""
    import numpy as np

    from ..dates import format_jd

    counts = c.counts()
    real = [{"jd_ut": float(c.jd_greatest[i]), "kind": c.kind(i), "type": c.real_type[i],
             "date": format_jd(c.jd_greatest[i]), "gamma": _num(c.gamma[i], 4),
             "syzygy_jd_ut": float(c.jd_ut[i]), "outcome": c.outcome(i)}
            for i in range(len(c.jd_ut)) if c.real_type[i]]
    predicted = [{"jd_ut": float(c.jd_shown[i]), "kind": c.kind(i),
                  "type": _predicted_type(c, i), "date": format_jd(c.jd_shown[i]),
                  ("month" if c.method == "cycle" else "node_distance_deg"):
                      int(c.detail[i]) if c.method == "cycle" else _num(c.detail[i], 3),
                  "syzygy_jd_ut": float(c.jd_ut[i]), "outcome": c.outcome(i)}
                 for i in np.flatnonzero(c.predicted)]
    first = c.first_failure()
    fail = None
    if first is not None:
        fail = {"jd_ut": float(c.jd_ut[first]), "date": format_jd(c.jd_ut[first]),
                "kind": c.kind(first), "outcome": c.outcome(first),
                "real_type": c.real_type[first] or None, "cycle": c.cycle_of(first)}
    return {
        "train": mech.train.name, "file": str(args.train), "ephemeris": sky.name,
        "method": c.method, "how": c.how,
        "from_jd": float(args._start), "to_jd": float(args._end),
        "from": format_jd(args._start), "to": format_jd(args._end),
        "delta_t_sigma_s": round(delta_t_sigma_s(args._start, args._end), 3),
        "limits_deg": c.limits if c.method == "pointers" else None,
        "penumbral_counted": mech.train.eclipses.penumbral,
        "lunations": c.lunations, "marks": c.marks, "marks_from": c.marks_from,
        "syzygies": len(c.jd_ut),
        "real": real, "predicted": predicted,
        "hits": counts["all"]["hits"], "misses": counts["all"]["misses"],
        "false_alarms": counts["all"]["false_alarms"],
        "by_kind": {k: counts[k] for k in ("solar", "lunar")},
        "first_failure": fail, "cycles": c.per_cycle(),
        "caution": ECLIPSE_CAUTION,
    }


def write_csv(c: Check, out: support.OutputFile) -> None:
    import csv

    from ..dates import format_jd

    with out.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow([date_heading(float(c.jd_ut[0]), float(c.jd_ut[-1])) if len(c.jd_ut)
                    else "date (UT)", "jd_ut", "syzygy", "kind", "predicted",
                    "cycle_month" if c.method == "cycle" else "node_distance_deg",
                    "train_shows_jd_ut", "real_type", "greatest_jd_ut", "gamma", "outcome"])
        for i in range(len(c.jd_ut)):
            w.writerow([format_jd(c.jd_ut[i]).split(" UT")[0], f"{c.jd_ut[i]:.6f}",
                        "full" if c.full[i] else "new", c.kind(i),
                        "yes" if c.predicted[i] else "no",
                        int(c.detail[i]) if c.method == "cycle" else f"{c.detail[i]:.4f}",
                        f"{c.jd_shown[i]:.6f}", c.real_type[i],
                        f"{c.jd_greatest[i]:.6f}" if c.real_type[i] else "",
                        f"{c.gamma[i]:.4f}" if c.real_type[i] and math.isfinite(c.gamma[i])
                        else "", c.outcome(i)])


# --- the command ---------------------------------------------------------------------------

def run(args: argparse.Namespace, console: Console) -> int:
    from rich.console import Console

    err = Console(stderr=True, highlight=False, soft_wrap=True)
    with support.CtrlC() as ctrl_c:
        try:
            done = _compute(args, err, ctrl_c)
        except KeyboardInterrupt:
            ctrl_c.quiet()
            err.print(STOPPED, markup=False)
            return 130
    code = _report(args, console, err, *done)
    if done[3]:  # the CSV lists real solar eclipses: say the caution it cannot hold
        support.caution_for_file(done[3], ECLIPSE_CAUTION, console, err, json=args.json)
    return code


def _compute(args, err: Console, ctrl_c: support.CtrlC):

    from ..eclipses import check

    inputs = [args.train] + ([args.ephemeris] if args.ephemeris else [])
    csv_out = (support.OutputFile(args.csv, option="--csv", force=args.force, inputs=inputs)
               if args.csv else None)
    mech, sky, start, end = support.open_span(args)
    args._start, args._end = start, end
    sky.check_span(start, end)
    bar = None
    try:
        progress = None
        if not args.json and end - start >= PROGRESS_MIN_DAYS and err.is_terminal:
            from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

            bar = Progress(TextColumn("eclipses"), BarColumn(),
                           TextColumn("{task.percentage:>3.0f}%"), TimeRemainingColumn(),
                           console=err, transient=True)
            bar.start()
            task = bar.add_task("eclipses", total=1.0)

            def progress(done, total):
                bar.update(task, completed=done / total if total else 1.0)

        try:
            result = check(mech, sky, start, end, method=args.by, progress=progress,
                           cancel=ctrl_c.cancelled)
        except ValueError as exc:
            if args.by is not None:
                raise UsageError(f"--by {args.by}: {exc}", getattr(args, "_prog", None)) from None
            raise TrainError(str(args.train), "[pointers]", str(exc)) from None
        if bar:
            bar.stop()
            bar = None
        if ctrl_c.cancelled():
            raise KeyboardInterrupt
        if csv_out:
            write_csv(result, csv_out)
    except BaseException:
        ctrl_c.quiet()
        if bar:
            bar.stop()
        if csv_out:
            csv_out.discard()
        raise
    return mech, sky, result, csv_out and csv_out.path


def _report(args, console: Console, err: Console, mech, sky, c: Check, csv_path) -> int:
    from rich import box
    from rich.table import Table
    from rich.text import Text

    from ..dates import format_jd

    if args.json:
        support.print_json(console, document(c, mech, sky, args))
        return 0

    def line(text, style=None):
        console.print(Text(text, style=style or ""), soft_wrap=False)

    for w in mech.warnings:
        err.print(f"wheelwork: note: {w}", markup=False, soft_wrap=False)
    line(f"{mech.train.name}: eclipses predicted against {sky.name}")
    line(f"from {format_jd(args._start)}")
    days = args._end - args._start
    span = f"{days / JULIAN_YEAR_DAYS:.1f} years" if days >= JULIAN_YEAR_DAYS else support.duration_text(days)
    line(f"  to {format_jd(args._end)}  ({span}, {len(c.jd_ut):,} new and full moons)")
    line(f"predicted by {c.how}")
    if c.method == "pointers":
        line(f"ecliptic limits: solar {c.limits['solar']:.2f}°, lunar {c.limits['lunar']:.2f}° "
             "of the Sun from a node")
    else:
        line(f"marked months: solar {', '.join(map(str, c.marks['solar'])) or 'none'}; "
             f"lunar {', '.join(map(str, c.marks['lunar'])) or 'none'}")
    line("lunar eclipses counted: " + ("all, penumbral too" if mech.train.eclipses.penumbral
                                        else "partial and total (penumbral ones left out)"))
    sigma = delta_t_sigma_s(args._start, args._end)
    if sigma >= DELTA_T_NOTE_S:
        line(delta_t_line(sigma), "yellow")
    line("")
    rows = [i for i in range(len(c.jd_ut))
            if args.all or c.predicted[i] or c.real_type[i]]
    table = Table(box=box.SIMPLE_HEAD, title="new and full moons"
                  + ("" if args.all else " with an eclipse predicted or real"))
    table.add_column("date (UT)", no_wrap=True)
    table.add_column("kind")
    table.add_column("train", no_wrap=True)
    table.add_column("sky")
    table.add_column("γ", justify="right")
    table.add_column("outcome")
    style = {"hit": "green", "miss": "red", "false alarm": "yellow", "": ""}
    for i in rows:
        said = ("yes" if c.predicted[i] else "no") + f" {_detail_text(c, i)}"
        shown = c.sky_type[i] if c.sky_type else c.real_type[i]
        gamma = f"{c.gamma[i]:+.3f}" if shown and math.isfinite(c.gamma[i]) else ""
        if shown and not c.real_type[i]:
            shown += " (not counted)"
        outcome = c.outcome(i)
        table.add_row(format_jd(c.jd_ut[i]).split(" UT")[0], c.kind(i), said,
                      shown or "none", gamma, Text(outcome, style=style[outcome]))
    caption = ("train: does it predict an eclipse, and " + (
        "the cycle dial's month" if c.method == "cycle" else
        "how far the Sun stands from the nearer node as the train shows it")
        + "; γ: gamma, the shadow axis' least distance from the Earth's centre (solar) or the "
        "Moon's from the Earth's shadow axis (lunar), in Earth radii, + north")
    if args.summary:
        pass  # the rows are left out as asked; the summary below says how they came out
    elif rows:
        note = dates_note(float(c.jd_ut[rows[0]]), float(c.jd_ut[rows[-1]]))
        if note:
            line(note)
        support.print_table(console, table, keys=2)  # a row is named by its date and kind
        line(caption, "dim")
    else:
        line("no eclipse predicted or real in the span")
    counts = c.counts()
    summary = Table(box=box.SIMPLE_HEAD, title="summary")
    for col in ("", "hits", "misses", "false alarms"):
        summary.add_column(col, justify="right" if col else "left")
    for kind in ("solar", "lunar", "all"):
        k = counts[kind]
        summary.add_row(kind, f"{k['hits']:,}", f"{k['misses']:,}", f"{k['false_alarms']:,}")
    support.print_table(console, summary)
    first = c.first_failure()
    if first is None:
        line("first failure: none in the span — every prediction held")
    else:
        where = f", turn {c.cycle_of(first)} of the cycle dial" if c.lunations else ""
        real = f"{c.real_type[first]} {c.kind(first)}"
        what = (f"{'an' if real[0] in 'aeiou' else 'a'} {real} eclipse missed"
                if c.outcome(first) == "miss" else f"a {c.kind(first)} eclipse predicted, none "
                "came")
        line(f"first failure: {format_jd(c.jd_ut[first])}{where}: {what}")
    cycles = c.per_cycle()
    if len(cycles) > 1:
        t = Table(box=box.SIMPLE_HEAD, title="per turn of the cycle dial")
        for col in ("turn", "hits", "misses", "false alarms"):
            t.add_column(col, justify="right")
        for row in cycles:
            t.add_row(f"{row['cycle']:,}", f"{row['hits']:,}", f"{row['misses']:,}",
                      f"{row['false_alarms']:,}")
        support.print_table(console, t)
    if csv_path:
        line(f"wrote {csv_path}")
    line(ECLIPSE_CAUTION, "yellow")
    return 0
