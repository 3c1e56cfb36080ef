"""``wheelwork ratios TRAIN``: what each pointer's gearing realises, exactly, and how far off."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

from ..figures import error, error_column, table_cells
from ..periods import JULIAN_YEAR_DAYS, era_error_ppm, era_spread_note, era_spread_ppm
from . import support

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.epilog = support.PPM_MEANING
    support.add_train(parser)
    parser.add_argument("--json", action="store_true", help="print JSON only")


#: the most significant figures a period error or drift is written with: a slipped count's
#: error of hundreds of thousands of ppm needs no decimals, a near one keeps them (our choice)
ERROR_DIGITS = 4


def _years(y: float | None) -> str:
    if y is None:
        return ""
    if y == float("inf"):
        return "never"
    if y < 0.1:  # within weeks: '0.0 y' would read as at once
        return f"{support.figure(y * JULIAN_YEAR_DAYS, 3)} d"
    return f"{support.fixed(y, 1, digits=ERROR_DIGITS)} y"  # 128,500 y, not 128,499.5 y


def _nearer_than_the_era(rows) -> list:
    """``(row, spread)`` of each pointer whose period error is smaller than the spread of its
    mean period between eras (:func:`engine.periods.era_spread_ppm`: Jupiter's and Saturn's)."""
    out = []
    for r in rows:
        spread = era_spread_ppm(r.target_key)
        if spread is not None and abs(r.period_error_ppm) < abs(spread):
            out.append((r, spread))
    return out


def run(args: argparse.Namespace, console: Console) -> int:
    from rich import box
    from rich.markup import escape

    from ..exact import fraction_text
    from ..kinematics import solve
    from ..loader import load_train
    from ..ratios import era_note, far_notes, pointer_ratios, stage_path
    from ..readout import backward_pointers, backward_warnings, unread_angles

    train = load_train(args.train)
    kin = solve(train)
    rows = pointer_ratios(train, kin)
    warnings = backward_warnings(train, kin) + unread_angles(train) + far_notes(train, rows)
    if args.json:
        support.print_json(console, {
            "train": train.name, "file": train.source, "dial": train.dial,
            "crank": {"arbor": train.crank.arbor,
                      "days_per_turn": str(train.crank.days_per_turn)},
            "pointers": [r.as_json() for r in rows], "warnings": warnings,
            "era_note": era_note(train) or None,
            # Jupiter and Saturn pointers nearer their 1800-2050 periods than the periods of
            # other eras are to those (the great inequality)
            "era_spread_notes": [{"pointer": r.pointer, "period_error_ppm": r.period_error_ppm,
                                  "era_spread_ppm": spread,
                                  "note": era_spread_note(r.target_key)}
                                 for r, spread in _nearer_than_the_era(rows)],
        })
        return 0
    dpt = train.crank.days_per_turn
    console.print(f"[bold]{escape(train.name)}[/]  ({escape(train.source)}; crank on "
                  f"'{escape(train.crank.arbor)}', {fraction_text(dpt)} "
                  f"day{'' if dpt == 1 else 's'} per turn; {train.dial} dial)")
    table = support.plain_table(
        header_style="bold", box=box.SIMPLE_HEAD, pad_edge=False,
        caption="period ppm: (realised period / mean period - 1) × 10⁶, + too long (the "
        "pointer falls behind), − too short; °/century: the pointer's drift against the mean "
        "motion; 1 day off: years until it stands a day of its own motion off (a phase disc "
        "shows the day before's phase, a year hand the day before's date)")
    for col, just in (("pointer", "left"), ("period (d)", "right"), ("mean (d)", "right"),
                      ("period ppm", "right"), ("°/century", "right"), ("1 day off", "right")):
        table.add_column(col, justify=just, no_wrap=True)
    backwards = backward_pointers(train, kin)
    # the interface's rule: one number of decimals a column, whole from 1,000, points lined up
    ppms = error_column(r.period_error_ppm for r in rows)
    drifts = error_column(r.drift_deg_per_century for r in rows)
    # a Jupiter or Saturn pointer's ppm, °/century and "1 day off" are against JPL's
    # 1800-2050 mean, which the great inequality moves: marked, and said under the table
    marked = {r.pointer for r in rows if era_spread_ppm(r.target_key) is not None}

    def mark(text: str, r) -> str:
        return support.era_marked(text, r.pointer in marked, bool(marked))

    ppm_cells = table_cells([mark(c, r) for r, c in zip(rows, ppms, strict=True)])
    drift_cells = table_cells([mark(c, r) for r, c in zip(rows, drifts, strict=True)])
    for r, ppm, drift in zip(rows, ppm_cells, drift_cells, strict=True):
        # a pointer running the wrong way has its period right and its sense wrong: say so in
        # its own row, not only in the warning at the end
        name = r.pointer + (" (runs backwards)" if r.pointer in backwards else "")
        table.add_row(name, f"{support.figure(r.period_days, 10)}", f"{support.figure(r.target_days, 10)}",
                      ppm, drift, mark(_years(r.years_to_one_day), r))
    support.print_table(console, table)
    if marked:
        spreads = {r.pointer: era_spread_ppm(r.target_key) for r in rows if r.pointer in marked}
        support.print_indented(console, support.era_mark_said(spreads), 0, markup=False)
    note = era_note(train)
    if note:
        support.print_indented(console, f"note: {note}", 0)
    cell = {r.pointer: c.strip() for r, c in zip(rows, ppms, strict=True)}  # as in the table
    for r, _spread in _nearer_than_the_era(rows):
        other = era_error_ppm(r.target_key, r.period_error_ppm)
        gain = abs(1.0 / (1.0 + other * 1e-6) - 1.0)
        support.print_indented(console, f"note: {r.pointer} is "
                               f"{cell[r.pointer]} ppm off: "
                               f"{era_spread_note(r.target_key)}; against the mean of 3000 "
                               f"BC-AD 3000 it is {error(other)} ppm "
                               f"off, a day off in {_years(1.0 / gain / JULIAN_YEAR_DAYS)}",
                               0, markup=False)
    from ..kinds import shows_text

    for r in rows:
        sense = ", dial reversed" if train.pointers[r.pointer].reversed else ""
        what = f"'{r.arbor}'" + (f" against '{r.relative_to}'" if r.relative_to else "")
        seen = shows_text(r.shows) + ("," if r.shows != shows_text(r.shows) != "earth" else "")
        console.print(f"[bold]{escape(r.pointer)}[/] shows {seen} from arbor "
                      f"{escape(what)}{sense}; "
                      f"stands for the {r.target_name}")
        support.print_indented(console, f"ratio {r.ratio.numerator}/{r.ratio.denominator} "
                               f"cycles per crank turn = {support.figure(float(r.ratio), 10)}", 3)
        stages = " × ".join(s.text() for s in r.stages) or r.route
        support.print_indented(console, f"stages {stages}", 3)
        if r.relative_to:
            rel = " × ".join(s.text() for s in r.relative_stages) or r.relative_route
            support.print_indented(console, f"minus  {rel}", 3)
        if not r.stages_multiply_out:
            support.print_indented(console, "[dim]epicyclic or differential: the ratio is "
                                   "solved from the whole train, not from this product "
                                   "alone[/]", 3, markup=True)
        factors = ", ".join(f"{t.teeth}={t.factors}" for t in r.teeth)
        if factors:
            support.print_indented(console, f"teeth  {factors}", 3)
        if r.synodic and r.synodic.earth_arm:
            sy = r.synodic
            support.print_indented(
                console, f"laps the Earth arm '{escape(sy.earth_arm)}' every "
                f"{support.figure(sy.period_days, 10)} d ({abs(sy.ratio.numerator)}/{sy.ratio.denominator} turns "
                f"{'gained' if sy.ratio > 0 else 'lost'} per crank turn) against the "
                f"{sy.target_name} of {support.figure(sy.target_days, 10)} d: {error(sy.period_error_ppm)} ppm, "
                f"{error(sy.drift_deg_per_century)}°/century", 3, markup=True)
        elif r.synodic:
            sy = r.synodic
            found = stage_path(train, kin, sy.deferent)
            if found and found[0]:  # the chain a maker cuts for the hand's mean motion
                support.print_indented(
                    console, f"deferent '{escape(sy.deferent)}' by stages "
                    f"{' × '.join(s.text() for s in found[0])}", 3, markup=True)
            support.print_indented(
                console, f"epicycle '{escape(sy.epicycle)}' against '{escape(sy.deferent)}' "
                f"({escape(sy.pin_slot)}): {sy.ratio.numerator}/{sy.ratio.denominator} turns "
                f"per crank turn, {support.figure(sy.period_days, 10)} d against the {sy.target_name} of "
                f"{support.figure(sy.target_days, 10)} d: {error(sy.period_error_ppm)} ppm, "
                f"{error(sy.drift_deg_per_century)}°/century"
                + ("" if sy.direction_ok else "; [yellow]but it turns the wrong way against "
                   "its carrier[/] (see the warning below)"), 3, markup=True)
        primes = [f"{t.wheel} ({t.teeth})" for t in r.teeth if t.prime and t.teeth >= 11]
        if primes:
            # the cutter goes with the module; a prime count goes with the dividing plate,
            # which must have a row of that count or a multiple of it
            support.print_indented(console, "prime counts, each needing a dividing-plate row "
                                   f"of that count (or a multiple): {', '.join(primes)}", 3)
    sources: dict[str, list[str]] = {}
    for r in rows:
        for name, src in ((r.target_name, r.target_source),
                          *(((r.synodic.target_name, r.synodic.target_source),)
                            if r.synodic else ())):
            names = sources.setdefault(src, [])
            if name not in names:
                names.append(name)
    for src, names in sources.items():
        console.print(f"[dim]{', '.join(names)}: {escape(src)}[/]")
    for w in warnings:
        console.print(f"[yellow]warning:[/] {escape(w)}")
    return 0
