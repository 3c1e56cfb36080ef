"""``wheelwork drift``: how far a train's pointers stray from the true sky over a span."""

from __future__ import annotations

import argparse
import csv
import json
import os
from pathlib import Path

import numpy as np
from rich import box
from rich.console import Console
from rich.table import Table

from engine.dates import format_jd, parse_date
from engine.drift import (
    PHASE_DEG_PER_DAY,
    YEAR_DAYS,
    DriftError,
    DriftResult,
    drift_series,
    grid,
    parse_step,
)

NAME = "drift"
HELP = "how far a train's pointers wander from the true Sun and Moon over years or centuries"
SAFETY = ("Checking a pointer against the real sky? Never look at the Sun, even briefly, "
          "without a proper solar filter.")
CHARTS_HINT = ("--png needs matplotlib: pip install 'wheelwork[charts]' "
               "(or pip install matplotlib)")
PROGRESS_MIN_DATES = 50_000  # shorter runs finish before a bar is worth drawing


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("train", metavar="TRAIN", help="train file (TOML)")
    span = parser.add_argument_group("span")
    span.add_argument("--from", dest="start", metavar="DATE",
                      help="first date (default: the train's epoch)")
    end = span.add_mutually_exclusive_group(required=True)
    end.add_argument("--to", dest="end", metavar="DATE", help="last date")
    end.add_argument("--years", type=float, metavar="N", help="span length in years of 365.25 d")
    span.add_argument("--step", default="1d", metavar="STEP",
                      help="time between dates: 30m, 6h, 1d, 2.5d, 1y... (default 1d)")
    cmp_ = parser.add_argument_group("comparison")
    cmp_.add_argument("--threshold", type=float, metavar="DEG",
                      help="report the first date each pointer is this many degrees off")
    cmp_.add_argument("--threshold-days", type=float, metavar="DAYS",
                      help="for phase pointers: the first date they are this many days off "
                           "(others use --threshold)")
    cmp_.add_argument("--frame", choices=("equinox", "stars"),
                      help="measure longitudes from the equinox of date or from the stars "
                           "(default: the train's dial)")
    cmp_.add_argument("--site", metavar="LAT,LON[,H]",
                      help="compare with the sky seen from this place (degrees east, metres); "
                           "default: from the Earth's centre")
    cmp_.add_argument("--ephemeris", metavar="FILE|de440",
                      help="JPL ephemeris: de440 (optional package, 1550-2650) or an SPK file "
                           "(default: bundled DE421, 1900-2050)")
    out = parser.add_argument_group("output")
    out.add_argument("--csv", metavar="FILE",
                     help="write every date: date, jd, and each pointer's train/sky/error")
    out.add_argument("--png", metavar="FILE",
                     help="draw each pointer's error against date (needs wheelwork[charts])")
    out.add_argument("--json", action="store_true", help="print the summaries as JSON only")
    out.add_argument("--force", action="store_true", help="overwrite existing output files")


def _check_output(path: str | None, force: bool) -> Path | None:
    if not path:
        return None
    p = Path(path)
    if p.is_dir():
        raise DriftError(f"{path}: is a folder; give a file name")
    if p.exists() and not force:
        raise DriftError(f"{path}: file exists; use --force to overwrite it")
    if not p.parent.exists():
        raise DriftError(f"{path}: folder {str(p.parent)!r} does not exist")
    return p


def _load_pyplot():
    """matplotlib's pyplot on the file-only backend, or a one-line error how to install it."""
    try:
        import matplotlib
    except ImportError:
        raise DriftError(CHARTS_HINT) from None
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


class _CsvSink:
    """Streams each chunk into a temporary file beside the target; renamed when complete."""

    def __init__(self, path: Path, mech):
        self.path = path
        self.tmp = path.with_name(f".{path.name}.part")
        self.fh = open(self.tmp, "w", newline="", encoding="utf-8")  # noqa: SIM115
        self.writer = csv.writer(self.fh)
        self.names = list(mech.train.pointers)
        self.phase = {n for n, p in mech.train.pointers.items() if p.shows == "phase"}
        head = ["date", "jd"]
        for n in self.names:
            head += [f"{n}_train_deg", f"{n}_sky_deg", f"{n}_error_deg"]
            if n in self.phase:
                head.append(f"{n}_error_days")
        self.writer.writerow(head)

    def __call__(self, jd, errors):
        cols = [np.char.mod("%.6f", jd)]
        for n in self.names:
            e = errors[n]
            cols += [np.char.mod("%.6f", e.train_deg), np.char.mod("%.6f", e.sky_deg),
                     np.char.mod("%.6f", e.error_deg)]
            if n in self.phase:
                cols.append(np.char.mod("%.6f", e.error_days))
        for i, row in enumerate(zip(*cols, strict=True)):
            self.writer.writerow([format_jd(jd[i]).split(" UT")[0], *row])

    def finish(self):
        self.fh.close()
        os.replace(self.tmp, self.path)

    def discard(self):
        self.fh.close()
        self.tmp.unlink(missing_ok=True)


def _year(jd: np.ndarray) -> np.ndarray:
    """Decimal years (Julian years from J2000; fine for a chart's axis)."""
    return 2000.0 + (np.asarray(jd, dtype=float) - 2451545.0) / YEAR_DAYS


def write_chart(result: DriftResult, path: Path, title: str) -> None:
    plt = _load_pyplot()
    names = list(result.summaries)
    fig, axes = plt.subplots(len(names), 1, figsize=(10, 2.4 * len(names) + 0.8), sharex=True,
                             squeeze=False)
    x = _year(result.jd)
    for ax, name in zip(axes[:, 0], names, strict=True):
        s = result.summaries[name]
        ax.plot(x, result.error_deg[name], lw=0.6, color="tab:blue")
        ax.axhline(0.0, color="0.6", lw=0.5)
        if s.threshold_deg is not None:
            for sign in (1, -1):
                ax.axhline(sign * s.threshold_deg, color="tab:red", lw=0.8, ls="--")
            if s.first_crossing_jd is not None:
                xc = float(_year(s.first_crossing_jd))
                ax.axvline(xc, color="tab:red", lw=0.8)
                ax.annotate(f"first past {s.threshold_deg:g}°: "
                            f"{format_jd(s.first_crossing_jd)[:10]}", (xc, s.threshold_deg),
                            xytext=(4, 4), textcoords="offset points", fontsize=8,
                            color="tab:red")
        ax.set_ylabel(f"{name} error (°)")
        ax.set_title(f"{name} ({s.shows})", fontsize=9, loc="left")
        if s.shows == "phase":
            sec = ax.secondary_yaxis("right", functions=(lambda d: d / PHASE_DEG_PER_DAY,
                                                         lambda d: d * PHASE_DEG_PER_DAY))
            sec.set_ylabel("days")
    axes[-1, 0].set_xlabel("year")
    fig.suptitle(title, fontsize=10)
    fig.tight_layout()
    fig.savefig(path, dpi=110)
    plt.close(fig)


def _deg(x: float) -> str:
    return f"{x:+.4f}°" if abs(x) < 100 else f"{x:+.2f}°"


def _date(jd: float | None) -> str:
    return "never" if jd is None else format_jd(jd)


def _summary_table(s, start_jd: float) -> Table:
    t = Table(title=f"{s.pointer} — shows {s.shows}", title_justify="left", box=box.SIMPLE,
              show_header=False, pad_edge=False)
    t.add_column("figure", style="bold")
    t.add_column("value")
    days = s.shows == "phase"

    def both(deg, d):
        return f"{deg:.4f}°" + (f"  ({d:.3f} days)" if days and d is not None else "")

    t.add_row("largest error", both(s.max_abs_deg, s.max_abs_days) + f"  on {_date(s.max_at_jd)}")
    t.add_row("root-mean-square error", both(s.rms_deg, s.rms_days))
    t.add_row("steady drift", f"{_deg(s.drift_deg_per_century)} per century"
              + (f"  ({s.drift_deg_per_century / PHASE_DEG_PER_DAY:+.3f} days per century)"
                 if days else ""))
    if s.periodic_period_days is None:
        t.add_row("swing about the drift", "none found (span too short)")
    elif s.periodic_amplitude_deg < 5e-5:  # below the last printed digit: no period to speak of
        t.add_row("swing about the drift", "none (under 0.0001°)")
    else:
        t.add_row("swing about the drift", f"±{s.periodic_amplitude_deg:.4f}° every "
                  f"{s.periodic_period_days:.2f} days")
    if s.threshold_deg is not None:
        lim = f"{s.threshold_deg:g}°" + (f" ({s.threshold_days:g} days)" if days else "")
        when = _date(s.first_crossing_jd)
        t.add_row(f"first {lim} off", when if s.first_crossing_jd is None else
                  f"{when}  (after {(s.first_crossing_jd - start_jd) / YEAR_DAYS:.2f} years)")
    t.add_row("best re-setting", f"turn back by {_deg(s.best_offset_deg)}; error then "
              f"{s.rms_after_reset_deg:.4f}° RMS")
    return t


def run(args: argparse.Namespace, console: Console) -> int:
    from engine.mechanism import open_train
    from engine.sky import Site, Sky

    step = parse_step(args.step)
    csv_path = _check_output(args.csv, args.force)
    png_path = _check_output(args.png, args.force)
    if csv_path and png_path and csv_path.resolve() == png_path.resolve():
        raise DriftError(f"{args.csv}: --csv and --png name the same file")
    if png_path:
        _load_pyplot()  # say how to install it before any work is done
    for flag, v in (("--threshold", args.threshold), ("--threshold-days", args.threshold_days)):
        if v is not None and not (np.isfinite(v) and v > 0):
            raise DriftError(f"{flag} {v:g}: it must be a positive number")
    if args.years is not None and not (np.isfinite(args.years) and args.years > 0):
        raise DriftError(f"--years {args.years:g}: it must be a positive number of years")
    site = Site.parse(args.site) if args.site else None
    sky = Sky(args.ephemeris)
    mech = open_train(args.train, sky)
    start = parse_date(args.start) if args.start else mech.train.epoch.jd_ut
    end = parse_date(args.end) if args.end else start + args.years * YEAR_DAYS
    n = grid(start, end, step)
    thresholds = {}
    for name, p in mech.train.pointers.items():
        if p.shows == "phase" and args.threshold_days is not None:
            thresholds[name] = args.threshold_days * PHASE_DEG_PER_DAY
        else:
            thresholds[name] = args.threshold

    err = Console(stderr=True, highlight=False, soft_wrap=True)
    sink = _CsvSink(csv_path, mech) if csv_path else None
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

        result = drift_series(mech, sky, start, end, step, frame=args.frame, site=site,
                              threshold_deg=thresholds, progress=progress, on_chunk=sink,
                              keep_series=png_path is not None)
    except KeyboardInterrupt:
        if sink:
            sink.discard()
        err.print("wheelwork: drift stopped; no file written", markup=False)
        return 130
    except BaseException:
        if sink:
            sink.discard()
        raise
    finally:
        if bar:
            bar.stop()
    if sink:
        sink.finish()
    title = (f"{mech.train.name}: pointer error against {sky.name}, "
             f"{format_jd(start)[:10]} to {format_jd(result.jd[-1])[:10]}")
    if png_path:
        write_chart(result, png_path, title)

    if args.json:
        doc = {
            "train": mech.train.name, "file": str(args.train), "ephemeris": sky.name,
            "frame": result.frame, "site": args.site, "from_jd": float(start),
            "to_jd": float(result.jd[-1]), "step_days": step, "dates": int(n),
            "from": format_jd(start), "to": format_jd(result.jd[-1]),
            "pointers": result.summaries_dict(),
        }
        console.print_json(json.dumps(doc))
        return 0

    for w in mech.warnings:
        err.print(f"wheelwork: note: {w}", markup=False)
    console.print(f"[bold]{mech.train.name}[/] against {sky.name}, {result.frame} frame"
                  + (f", seen from {args.site}" if args.site else ", from the Earth's centre"))
    console.print(f"{format_jd(start)} to {format_jd(result.jd[-1])}: {n:,} dates, "
                  f"every {args.step} ({(result.jd[-1] - start) / YEAR_DAYS:.2f} years)")
    console.print("error = what the train shows minus the true sky (positive: ahead)\n")
    for s in result.summaries.values():
        console.print(_summary_table(s, start))
    if csv_path:
        console.print(f"wrote {csv_path}")
    if png_path:
        console.print(f"wrote {png_path}")
    console.print(f"[yellow]{SAFETY}[/]")
    return 0
