"""``wheelwork drift``: how far a train's pointers stray from the true sky over a span.

Option values that are malformed or out of range (a date that cannot be read, a step, a
negative span or threshold, a chart name without a known extension, an end before the start)
are usage errors: one line, exit 2. Faults found while working (train file, ephemeris span,
an output file that exists or cannot be written) are ``WheelworkError``: one line, exit 1.
Ctrl-C stops a run at once: one line, exit 130, no output file left behind.
"""

from __future__ import annotations

import argparse
import csv
import math
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import UsageError, WheelworkError
from ..figures import error_with_sigma
from . import support
from .support import SUN_CAUTION

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console
    from rich.table import Table

    from ..drift import DriftResult

MAX_THRESHOLD_DAYS = 14.75  # half a synodic month: a phase is never further off than that
CHARTS_HINT = ("--png needs matplotlib: pip install 'wheelwork[charts]' "
               "(or pip install matplotlib)")
CHART_FORMATS = (".png", ".svg", ".pdf")
PROGRESS_MIN_DATES = 50_000  # shorter runs finish before a bar is worth drawing
STOPPED = "wheelwork: drift stopped; no file written"


# --- option values: malformed or out of range is a usage error (exit 2) ---------------------

def _step(text: str) -> str:
    from ..dates import parse_step

    if text.strip().startswith("-"):
        raise argparse.ArgumentTypeError(
            f"{text}: the step must be positive, e.g. 6h, 1d or 7d")
    try:
        parse_step(text)
    except WheelworkError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None
    return text


def _chart_name(text: str) -> str:
    support.out_name("chart file to write")(text)
    if Path(text).suffix.lower() not in CHART_FORMATS:
        raise argparse.ArgumentTypeError(
            f"{text}: a chart file's name must end in .png, .svg or .pdf")
    return text


#: the frames longitudes are measured in: engine.kinds.DIAL_FRAMES, written out so that
#: --help loads no numpy (tests/test_bad_options.py checks they agree)
FRAME_WORDS = ("equinox", "stars")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    support.add_train(parser)
    span = support.add_span(parser, "last date: the run goes on to the first step at or after it")
    span.add_argument("--step", default="1d", metavar="STEP", type=_step,
                      help="time between dates: 30m (minutes), 6h, 1d, 2.5d, 2w, 1y; a bare "
                      "number is days (default 1d)")
    cmp_ = parser.add_argument_group("comparison")
    cmp_.add_argument("--threshold", type=support.positive("degrees", 180), metavar="DEG",
                      help="report the first date each pointer is this many degrees off "
                           "(at most 180: no pointer is further off than that)")
    cmp_.add_argument("--threshold-days", type=support.positive("days", MAX_THRESHOLD_DAYS),
                      metavar="DAYS",
                      help="for phase pointers and eclipse-cycle dials: the first date they are "
                           "this many days off "
                           f"(others use --threshold; at most {MAX_THRESHOLD_DAYS:g}, half a "
                           "month)")
    cmp_.add_argument("--frame", type=support.one_of("frame", FRAME_WORDS), choices=FRAME_WORDS,
                      help="measure longitudes from the equinox of date or from the stars "
                           "(default: the train's dial)")
    support.add_site(cmp_, "compare with the sky seen from this place: degrees (north +, "
                     "east +) and metres, e.g. --site -33.87,151.21; default: from the Earth's "
                     "centre")
    support.add_ephemeris(cmp_)
    out = parser.add_argument_group("output")
    out.add_argument("--csv", metavar="FILE", type=support.out_name("file to write"),
                     help="write every date: date, jd, and each pointer's train/sky/error")
    out.add_argument("--png", metavar="FILE", type=_chart_name,
                     help="draw each pointer's error against date; the name must end in "
                          ".png, .svg or .pdf, which sets the format (needs wheelwork[charts])")
    out.add_argument("--json", action="store_true", help="print the summaries as JSON only")
    support.add_force(out)


def _usage_error(args: argparse.Namespace, message: str):
    raise UsageError(message, getattr(args, "_prog", None))


# --- output files --------------------------------------------------------------------------


def _load_pyplot():
    """matplotlib's pyplot on the file-only backend, or a one-line error how to install it."""
    from ..drift import DriftError

    try:
        import matplotlib
    except ImportError:
        raise DriftError(CHARTS_HINT) from None
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


GREGORIAN_START_JD = 2299160.5  # 1582-10-15 00:00 UT, the first Gregorian day


def date_heading(first_jd: float, last_jd: float) -> str:
    """The CSV date column's heading: UT, and which calendar the dates are in."""
    if first_jd >= GREGORIAN_START_JD:
        cal = "Gregorian"
    elif last_jd < GREGORIAN_START_JD:
        cal = "Julian"
    else:
        cal = "Julian to 1582-10-04 then Gregorian"
    return f"date (UT; {cal} calendar)"


def csv_header(mech, first_jd: float, last_jd: float) -> list[str]:
    from ..kinds import days_rate

    head = [date_heading(first_jd, last_jd), "jd_ut"]
    for n, p in mech.train.pointers.items():
        head += [f"{n}_train_deg", f"{n}_sky_deg", f"{n}_error_deg"]
        if days_rate(p.shows):
            head.append(f"{n}_error_days")
        if p.shows == "cycle":  # the error is within the month: the whole months apart
            head.append(f"{n}_months_off")
    return head


def csv_bytes(mech, n_dates: int) -> int:
    """A close estimate of the CSV's size: the rows are of fixed format, bar signs and the
    width of angles (taken at their widest)."""
    cols = len(csv_header(mech, 0.0, 0.0)) - 2
    return n_dates * (len("2026-01-01 00:00,2461041.500000") + cols * len(",-359.999999") + 2)


class _CsvSink:
    """Streams each chunk into the output's part file; put in place when complete.

    Rows are formatted in Python (``%`` on lists), not by numpy's string functions, which can
    swallow a Ctrl-C arriving while they run."""

    def __init__(self, out: support.OutputFile, mech, first_jd: float, last_jd: float,
                 frame: str | None = None):
        from ..kinds import days_rate

        self.out = out
        self.fh = out.open("w", newline="", encoding="utf-8")
        self.names = list(mech.train.pointers)
        self.phase = {n for n, p in mech.train.pointers.items() if days_rate(p.shows)}
        self.cycle = {n for n, p in mech.train.pointers.items() if p.shows == "cycle"}
        self.readout, self.frame = mech.readout, frame or mech.train.dial
        head = csv_header(mech, first_jd, last_jd)
        self.row = "%s," + ",".join("%d" if h.endswith("_months_off") else "%.6f"
                                    for h in head[1:]) + "\r\n"
        self._write(lambda: csv.writer(self.fh).writerow(head))

    def _write(self, do):
        try:
            do()
        except OSError as exc:
            self.discard()
            raise self.out._cannot(exc) from None

    def __call__(self, jd, errors):
        from ..dates import format_jd

        cols = [jd.tolist()]
        for n in self.names:
            e = errors[n]
            cols += [e.train_deg.tolist(), e.sky_deg.tolist(), e.error_deg.tolist()]
            if n in self.phase:
                cols.append(e.error_days.tolist())
            if n in self.cycle:
                from ..drift import whole_months_off

                cols.append(whole_months_off(self.readout, n, self.frame, jd,
                                             e.error_deg).tolist())
        fmt = self.row
        text = "".join([fmt % (format_jd(row[0]).split(" UT")[0], *row)
                        for row in zip(*cols, strict=True)])
        # a value that rounds to nothing from below is written 0.000000, not -0.000000: the
        # fields are fixed at six places and only a field starts with a minus, so the text
        # "-0.000000" is only ever such a field
        text = text.replace("-0.000000", "0.000000")
        self._write(lambda: self.fh.write(text))

    def finish(self):
        self.out.commit()

    def discard(self):
        self.out.discard()


# --- chart ---------------------------------------------------------------------------------

def _year(jd):
    """Decimal years (Julian years from J2000; fine for a chart's axis)."""
    from ..view import decimal_year

    return decimal_year(jd)


def _bc_example(jd: float) -> str:
    """How to read the axis's signed years, with the chart's own first year as the example:
    '0 = 1 BC, −584 = 585 BC' (the minus sign as matplotlib ticks it)."""
    from ..dates import calendar_date

    year = calendar_date(float(jd))[0]
    return "0 = 1 BC" + (f", −{-year} = {1 - year} BC" if year < 0 else "")


def break_at_wraps(x, error_deg):
    """The series with a gap (NaN) wherever the wrapped error jumps by more than a half turn
    from one date to the next: a line drawn across the jump from +180° to -180° filled the
    chart with a solid band at every wrap."""
    import numpy as np

    x = np.asarray(x, dtype=float)
    y = np.asarray(error_deg, dtype=float)
    cut = np.flatnonzero(np.abs(np.diff(y)) > 180.0) + 1
    return np.insert(x, cut, np.nan), np.insert(y, cut, np.nan)


def write_chart(result: DriftResult, out: support.OutputFile, title: str) -> None:
    """Draw the chart into the output's part file (format from the name's extension); the
    caller commits it. A fault on writing is one line naming the file."""
    from ..dates import format_day
    from ..kinds import days_rate, shows_text

    plt = _load_pyplot()
    names = list(result.summaries)
    height_in = 2.4 * len(names) + 0.8
    fig, axes = plt.subplots(len(names), 1, figsize=(10, height_in), sharex=True,
                             squeeze=False)
    x = _year(result.jd)
    for ax, name in zip(axes[:, 0], names, strict=True):
        s = result.summaries[name]
        ax.plot(*break_at_wraps(x, result.error_deg[name]), lw=0.6, color="tab:blue")
        ax.axhline(0.0, color="0.6", lw=0.5)
        if s.threshold_deg is not None:
            for sign in (1, -1):
                ax.axhline(sign * s.threshold_deg, color="tab:red", lw=0.8, ls="--")
            if s.first_crossing_jd is not None:
                xc = float(_year(s.first_crossing_jd))
                ax.axvline(xc, color="tab:red", lw=0.8)
                ax.annotate(f"first past {s.threshold_deg:.4g}°: "
                            f"{format_day(s.first_crossing_jd)}", (xc, s.threshold_deg),
                            xytext=(4, 4), textcoords="offset points", fontsize=8,
                            color="tab:red")
        ax.set_ylabel(f"{name} error (°)")
        months = ("" if s.months_off_end is None else  # a cycle dial: its error is in-month
                  "; whole months off: none" if s.months_off_least == s.months_off_most == 0
                  else f"; whole months off: {_months(s.months_off_end)} at the end, "
                  f"{_months(s.months_off_least)} to {_months(s.months_off_most)} over the span")
        ax.set_title(f"{name} ({shows_text(s.shows)}){months}", fontsize=9, loc="left")
        g = days_rate(s.shows)
        if g:
            sec = ax.secondary_yaxis("right", functions=(lambda d, g=g: d / g,
                                                         lambda d, g=g: d * g))
            sec.set_ylabel("days")
    axes[-1, 0].set_xlabel("year" if float(x[0]) >= 1 else
                           f"year (astronomical numbering: {_bc_example(result.jd[0])})")
    fig.suptitle(title, fontsize=10)
    # the chart sets the train against the true Sun: the caution goes with it, under the plots
    fig.text(0.5, 0.06 / height_in, SUN_CAUTION, ha="center", va="bottom", fontsize=8,
             color="0.25")
    # the suptitle gets its own band at the top (tight_layout left it over the first title)
    fig.tight_layout(rect=(0, 0.22 / height_in, 1, 1 - 0.3 / height_in))
    try:
        fh = out.open("wb")
        with plt.rc_context({"svg.fonttype": "none"}):  # SVG text stays text: searchable
            fig.savefig(fh.fh, dpi=110, format=out.path.suffix.lower().lstrip("."))
    except OSError as exc:
        out.discard()
        raise out._cannot(exc) from None
    finally:
        plt.close(fig)


# --- the report ----------------------------------------------------------------------------

def _angle(x: float) -> str:
    return f"{support.fixed(x, 2)}°" if abs(x) >= 1 else f"{support.figure(x, 2)}°"


def _with_sigma(x: float, sigma: float, unit: str = "°") -> str:
    """``-0.224° ± 0.079°``: by the one rule's companion for a figure with its σ
    (:func:`engine.figures.error_with_sigma`)."""
    value, pm = error_with_sigma(x, sigma)
    return f"{value}{unit}" + ("" if pm is None else f" ± {pm}{unit}")


def _when(jd: float | None) -> str:
    from ..dates import format_jd

    return "never" if jd is None else format_jd(jd)


def _uncertain_why(s) -> str:
    from ..drift import MINOR_TERMS

    left = [t for t in s.drift_terms_left_out if t not in MINOR_TERMS]
    if s.step_note:
        return "the step is too coarse for this pointer (see the note)"
    if left:
        return "this span and step cannot tell it from: " + "; ".join(left)
    if s.periodic_period_days is None:
        return "the span is too short to show the swing"
    return f"the span holds under two of its {support.fixed(s.periodic_period_days, 1)}-day swings"


def _within_sigma(s) -> str:
    """The known swings whose part in the drift's ± is more than its residual's, in words:
    those longer than the span (the most each can tilt the line), those whose fit over too
    few of their periods was refused, and those fitted on trial (their size's uncertainty);
    empty when none."""
    from ..drift import MINOR_TERMS, TERM_SURE_CYCLES

    if not math.isfinite(s.drift_sigma_deg_per_century):
        return ""
    aside = set(s.drift_terms_set_aside)
    sure = support.figure(TERM_SURE_CYCLES)
    parts = [f"{t}: longer than the span, the most it can tilt the line"
             for t in s.drift_terms_left_out if t in MINOR_TERMS and t not in aside]
    parts += [f"{t}: fitted over under {sure} of its periods it came out far from its known "
              "size, so it is left out and the ± holds the most it can tilt the line"
              for t in s.drift_terms_set_aside]
    parts += [f"{t}: fitted over under {sure} of its periods, the ± holds what the "
              "uncertainty of its size can tilt the line" for t in s.drift_terms_on_trial]
    return "; ".join(parts)


def _months(k: int) -> str:
    """``3 months behind``, ``1 month ahead``, ``none``."""
    if k == 0:
        return "none"
    return f"{abs(k):,} month{'' if abs(k) == 1 else 's'} {'ahead' if k > 0 else 'behind'}"


def _months_off(s) -> str:
    """An eclipse-cycle dial's whole lunations off the real count (its errors are in-month)."""
    within = ("the errors here are taken within a month: for as many days as its error after "
              "or before each new moon, the dial still stands over the month before or already "
              "over the next")
    if s.months_off_least == s.months_off_most == 0:
        # not 'the right month throughout': a ring 11 days late is over the month before for
        # 11 days after every new moon, and keeps the sky's count all the same
        return f"none: it keeps the sky's count of months throughout ({within})"
    span = ("" if s.months_off_least == s.months_off_most else
            f"; over the span from {_months(s.months_off_least)} to {_months(s.months_off_most)}")
    return f"{_months(s.months_off_end)} at the end{span} ({within})"


def _summary_table(s, start_jd: float, threshold_days_given: bool, per_turn=1) -> Table:
    """One pointer's figures. ``per_turn``: cycles the pointer shows a turn of its own (a
    two-moon disc 2, a 223-month ring 223): its degrees are those of what it shows, so the
    re-setting also says the angle to turn the pointer itself."""
    from rich import box

    from ..kinds import days_rate, shows_text

    t = support.plain_table(title=f"{s.pointer} — shows {shows_text(s.shows)}",
                            title_justify="left",
                            box=box.SIMPLE, show_header=False, pad_edge=False)
    t.add_column("figure", style="bold")
    t.add_column("value")
    g = days_rate(s.shows)
    days = g is not None

    def both(deg, d):
        return f"{deg:.4f}°" + (f"  ({support.fixed(d, 3)} days)" if days and d is not None else "")

    t.add_row("largest error", both(s.max_abs_deg, s.max_abs_days) + f"  on {_when(s.max_at_jd)}")
    t.add_row("root-mean-square error", both(s.rms_deg, s.rms_days))
    if s.months_off_end is not None:  # an eclipse-cycle dial: the errors above are in-month
        t.add_row("whole months off", _months_off(s))
    if s.delta_t_effect_deg >= 0.0005:  # only where ΔT's uncertainty shows in the figures
        t.add_row("ΔT uncertainty", f"moves the sky's value by up to {s.delta_t_effect_deg:.4f}° "
                  "(one standard error)" + ("; the largest error is within it: the comparison "
                                            "cannot tell this pointer from the sky"
                                            if s.within_delta_t else ""))
    sigma = s.drift_sigma_deg_per_century
    t.add_row("steady drift", _with_sigma(s.drift_deg_per_century, sigma) + " per century")
    if days:
        t.add_row("", _with_sigma(s.drift_deg_per_century / g, sigma / g, " days")
                  .replace(" days ±", " ±") + " per century")
    if s.drift_uncertain:
        t.add_row("drift uncertain", _uncertain_why(s))
    longer = "" if s.drift_uncertain else _within_sigma(s)  # else the reason above is more
    if longer:
        t.add_row("± takes in", longer)
    if s.step_note:
        t.add_row("swing about the drift", "not sought: the step is too coarse")
    elif s.periodic_period_days is None:
        t.add_row("swing about the drift", "none found (span too short)"
                  if math.isnan(s.periodic_amplitude_deg) else "none found")
    elif s.periodic_amplitude_deg < 5e-5:  # below the last printed digit: no period to speak of
        t.add_row("swing about the drift", "none (under 0.0001°)")
    else:
        t.add_row("swing about the drift", f"±{s.periodic_amplitude_deg:.4f}° every "
                  f"{support.fixed(s.periodic_period_days, 2)} days")
    if s.threshold_deg is not None:
        if days and threshold_days_given:
            lim = f"{support.count_text(s.threshold_days, 'day')} ({s.threshold_deg:.2f}°)"
        elif days:
            lim = f"{s.threshold_deg:g}° ({support.duration_text(s.threshold_days)})"
        else:
            lim = f"{s.threshold_deg:g}°"
        if s.first_crossing_jd is None:
            when = "never"
        elif s.first_crossing_jd <= start_jd:
            when = f"{_when(s.first_crossing_jd)}  (at the start)"
        else:
            when = (f"{_when(s.first_crossing_jd)}  "
                    f"(after {support.duration_text(s.first_crossing_jd - start_jd)})")
        t.add_row(f"first {lim} off", when)
    off = s.best_offset_deg
    if abs(off) < 5e-5:
        move = "none needed"
    else:
        move = f"turn {'back' if off > 0 else 'forward'} by {_angle(abs(off))}"
        if days:
            move += f" ({support.count_text(abs(off) / g, 'day')})" if abs(off) / g >= 0.1 else \
                f" ({support.count_text(abs(off) / g * 24, 'hour')})"
        if per_turn != 1:  # its degrees are of what it shows: the hand itself turns less
            move += (f", the {s.pointer} pointer itself {_angle(abs(off) / float(per_turn))} "
                     f"(it shows {support.figure(float(per_turn), 7)} cycles a turn)")
    t.add_row("best re-setting", f"{move}; error then {s.rms_after_reset_deg:.4f}° RMS")
    return t


# --- the command ---------------------------------------------------------------------------

def run(args: argparse.Namespace, console: Console) -> int:
    from rich.console import Console

    from ..drift import DriftCancelled

    err = Console(stderr=True, highlight=False, soft_wrap=True)
    with support.CtrlC() as ctrl_c:
        try:
            done = _compute(args, err, ctrl_c)
        except (KeyboardInterrupt, DriftCancelled):
            ctrl_c.quiet()
            err.print(STOPPED, markup=False)
            return 130
    code = _report(args, console, err, *done)
    if done[6]:  # the CSV holds the true sky beside the train: say the caution it cannot
        support.caution_for_file(done[6], SUN_CAUTION, console, err, json=args.json)
    return code


def _compute(args, err: Console, ctrl_c: support.CtrlC):
    """Everything that can take long or write files, under the Ctrl-C guard."""
    from ..dates import format_day, parse_step
    from ..drift import DriftError, DriftRun, RunControl, drift_series, grid
    from ..kinds import days_rate
    from ..phasing import stage_phases
    from ..sites import parse_site

    step = parse_step(args.step)
    inputs = [args.train] + ([args.ephemeris] if args.ephemeris else [])
    csv_out = png_out = None
    if args.csv:
        csv_out = support.OutputFile(args.csv, option="--csv", force=args.force, inputs=inputs)
    if args.png:
        png_out = support.OutputFile(args.png, option="--png", force=args.force, inputs=inputs)
    if csv_out and png_out and csv_out.same_as(png_out):
        _usage_error(args, f"--csv and --png both name {args.csv}")
    if png_out:
        _load_pyplot()  # say how to install it before any work is done
    site = parse_site(args.site) if args.site else None  # checked by the option's type
    mech, sky, start, end = support.open_span(args)
    try:
        n = grid(start, end, step, include_end=True)  # dates, the end covered
    except DriftError as exc:  # step longer than the span, too many dates
        _usage_error(args, str(exc))
    if args.threshold_days is not None and not any(
            days_rate(p.shows) for p in mech.train.pointers.values()):
        _usage_error(args, "--threshold-days: this train has no phase pointer or eclipse-cycle "
                           "dial, the pointers read in days; give --threshold DEG")
    thresholds = {}
    for name, p in mech.train.pointers.items():
        if days_rate(p.shows) and args.threshold_days is not None:
            thresholds[name] = args.threshold_days * days_rate(p.shows)
        else:
            thresholds[name] = args.threshold

    if csv_out:
        csv_out.note_size(csv_bytes(mech, n), err)
    sink = (_CsvSink(csv_out, mech, start, start + (n - 1) * step, args.frame) if csv_out
            else None)
    bar = None
    try:
        progress = None
        if not args.json and n >= PROGRESS_MIN_DATES and err.is_terminal:
            from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

            bar = Progress(TextColumn("drift"), BarColumn(), TextColumn("{task.percentage:>3.0f}%"),
                           TimeRemainingColumn(), console=err, transient=True)
            bar.start()
            task = bar.add_task("drift", total=1.0)

            def progress(f):
                bar.update(task, completed=f)

        result = drift_series(
            mech, sky,
            DriftRun(start, end, step, frame=args.frame, site=site, threshold_deg=thresholds,
                     include_end=True),
            RunControl(keep_series=png_out is not None, progress=progress,
                       cancel=ctrl_c.cancelled, on_chunk=sink))
        if bar:
            bar.stop()
            bar = None
        if ctrl_c.cancelled():
            raise KeyboardInterrupt
        phases = stage_phases(mech, sky, frame=args.frame)  # a few ms: each stage's phase
        title = (f"{mech.train.name}: pointer error against {sky.name}, "
                 f"{format_day(start, bc=True)} to {format_day(result.jd[-1], bc=True)}")
        if png_out:
            write_chart(result, png_out, title)
        if ctrl_c.cancelled():
            raise KeyboardInterrupt
        # both files are complete: only now put them in place
        if sink:
            sink.finish()
        if png_out:
            png_out.commit()
    except BaseException:
        ctrl_c.quiet()
        if bar:
            bar.stop()
        for out in (csv_out, png_out):
            if out:
                out.discard()
        raise
    return (mech, sky, result, start, end, step, csv_out and csv_out.path,
            png_out and png_out.path, phases)


def phase_note(mech, ph) -> str:
    """One line for a pin-and-slot stage whose phase at the epoch puts the sky's inequality in
    instead of taking it out: what it does, the phase that fits, and what to do."""
    from ..dates import format_day

    def swing(lo, hi):
        return f"{lo:+.2f}° to {hi:+.2f}°"

    return (f"pin-and-slot stage '{ph.stage}' is out of phase with the sky: with pin_deg = "
            f"{ph.pin_deg:g}° the pointer '{ph.pointer}' errs {swing(ph.low_deg, ph.high_deg)} "
            f"over the {support.duration_text(ph.to_jd - ph.from_jd)} from the epoch, with pin_deg = "
            f"{ph.best_pin_deg:.0f}° only {swing(ph.best_low_deg, ph.best_high_deg)}; "
            f"set pin_deg to about {ph.best_pin_deg:.0f}° in [pin_slots.{ph.stage}] of "
            f"{mech.train.source} for the epoch {format_day(ph.from_jd, bc=True)}")


def _report(args, console: Console, err: Console, mech, sky, result, start, end, step,
            csv_path, png_path, phases=()) -> int:
    from rich.text import Text

    from ..dates import format_jd, step_text

    last = float(result.jd[-1])
    n = len(result.jd)
    if args.json:
        from ..sites import parse_site

        place = parse_site(args.site) if args.site else None  # as sky --json gives it
        doc = {
            "train": mech.train.name, "file": str(args.train), "ephemeris": sky.name,
            "frame": result.frame, "site": None if place is None else
            {"lat_deg": place.lat_deg, "lon_deg": place.lon_deg, "height_m": place.height_m},
            "from_jd": float(start),
            "to_jd": last, "asked_to_jd": float(end), "step_days": step, "dates": int(n),
            "from": format_jd(start), "to": format_jd(last),
            "delta_t_sigma_s": round(result.delta_t_sigma_s, 3),
            "pointers": result.summaries_dict(), "notes": result.notes,
            "pin_slot_phases": [{**ph.to_dict(), "note": phase_note(mech, ph) if ph.off else None}
                                for ph in phases],
            "caution": SUN_CAUTION,  # as sky and eclipses: the JSON invites comparison too
        }
        support.print_json(console, doc)
        return 0

    def line(text, style=None):  # wrapped at the console's width whatever its soft_wrap
        console.print(Text(text, style=style or ""), soft_wrap=False)

    for w in mech.warnings:
        err.print(f"wheelwork: note: {w}", markup=False, soft_wrap=False)
    line(f"{mech.train.name} against {sky.name}, {result.frame} frame, "
         + (f"seen from {args.site}" if args.site else "from the Earth's centre"))
    line(f"from {format_jd(start)}")
    to = f"  to {format_jd(last)}"
    if last - end > 0.5 / 1440:  # the grid runs on to the first step at or after the end
        to += f", {support.duration_text(last - end)} past the end asked"
    elif end - last > 0.5 / 1440:
        to += f", {support.duration_text(end - last)} short of the end asked (the ephemeris ends)"
    line(to)
    line(f"{n:,} dates, every {step_text(step)} ({support.duration_text(last - start)})")  # 0.00 years no more
    line("error = what the train shows minus the true sky (positive: ahead)")
    sigma = result.delta_t_sigma_s
    if sigma >= 60:  # as the eclipses report: said where ΔT's uncertainty reaches a minute
        line(f"ΔT (UT to the sky's TT) is uncertain by up to ± {sigma:,.0f} s "
             f"({sigma / 60:.1f} min, one standard error) in this span: each pointer's "
             "'ΔT uncertainty' says how far that moves its true value")
    for note in result.notes:
        line(f"note: {note}", "yellow")
    for ph in phases:
        if ph.off:
            line(f"note: {phase_note(mech, ph)}", "yellow")
    line("")
    for s in result.summaries.values():
        support.print_table(console, _summary_table(
            s, start, args.threshold_days is not None,
            mech.train.pointers[s.pointer].per_turn))
    if csv_path:
        line(f"wrote {csv_path}")
    if png_path:
        line(f"wrote {png_path}")
    line(SUN_CAUTION, "yellow")
    return 0
