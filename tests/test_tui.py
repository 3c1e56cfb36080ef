"""The interface, driven by Textual's Pilot: every key, the readouts against the drift engine,
dialogs that keep bad input, resizing, and whole-screen snapshots.

The app is built by :func:`tui.app.make_app`, the same factory ``wheelwork crank`` uses.
"""

import asyncio
from dataclasses import replace
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

from engine.dates import format_jd, parse_date
from engine.drift import pointer_errors
from engine.figures import drift, drift_places
from tests.tui_support import sync, text_of, wait_for
from tui.app import make_app
from tui.screens import (
    FOOTER_FROM_WIDTH,
    BenchScreen,
    DateDialog,
    DriftScreen,
    HelpScreen,
    StepDialog,
    long_help,
)
from tui.session import SPEEDS
from tui.widgets import CAUTION, Readings, SkyDial, Status, canvas_rows

SIZE = (120, 40)



ARCSEC = 1 / 3600


def whole_turns(app) -> float:
    return float(app.session.turns.to_float())


def bench(app) -> BenchScreen:
    assert isinstance(app.screen, BenchScreen)
    return app.screen



def check_readout(app) -> None:
    """What the readings table shows is what the drift engine says for the same date."""
    s = app.session
    jd = s.jd_now()
    want = pointer_errors(s.mech, s.sky, np.array([jd]), frame=s.frame, site=s.observer)
    now = s.now()
    for name, e in want.items():
        p = now.pointers[name]
        assert p.train_deg == pytest.approx(float(e.train_deg[0]), abs=ARCSEC)
        assert p.sky_deg == pytest.approx(float(e.sky_deg[0]), abs=ARCSEC)
        assert p.error_deg == pytest.approx(float(e.error_deg[0]), abs=ARCSEC)
    table = text_of(app.screen.query_one(Readings))
    for name, e in want.items():
        err = float(e.error_deg[0])
        shown = f"{err if abs(err) >= 0.005 else 0.0:+.2f}"  # the table shows no "-0.00"
        # the row whose first word is the name: a pointer named "p" must not take the header
        # ("pointer train° sky° ..."), as it did when a key storm opened such a train
        lines = table.splitlines()
        at = next(i for i, line in enumerate(lines)
                  if [w.rstrip("*") for w in line.split()[:1]] == [name])
        # figures past the panel's edge are carried to lines under the row, each led by
        # Readings.CARRIED and its column's name (a panel left 12 wide by the key storm)
        carried = {}
        for line in lines[at + 1:]:
            if not line.startswith(Readings.CARRIED):
                break
            title, value = line[len(Readings.CARRIED):].rsplit(None, 1)
            carried[title.strip()] = value
        kept = lines[at].split()[1:]
        err_text = carried.get("err°") or kept[sum(t not in carried for t in ("train°", "sky°"))]
        assert shown in err_text, name


async def open_chart(pilot, app) -> None:
    """Press d on the bench and wait for the drift chart's run to finish."""
    await pilot.press("d")
    await app.workers.wait_for_complete()
    await pilot.pause()


@pytest.mark.parametrize("key,turns", [
    ("right", 1), ("left", -1), ("up", 10), ("down", -10), ("pageup", 100),
    ("pagedown", -100), ("right_square_bracket", 1000), ("left_square_bracket", -1000),
    ("plus", 1), ("minus", -1),
])
@sync
async def test_crank_keys(key, turns):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press(key)
        await pilot.pause()
        assert whole_turns(app) == turns
        check_readout(app)
        assert f"{turns:+,d} turns" in text_of(app.screen.query_one(Status))


@sync
async def test_step_dialog_sets_the_step_and_keeps_bad_input():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("s")
        await pilot.pause()
        assert isinstance(app.screen, StepDialog)
        app.screen.query_one("#step-input").value = "zero"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, StepDialog)  # still open, error shown
        assert "cannot read step 'zero'" in text_of(app.screen.query_one("#step-error"))
        app.screen.query_one("#step-input").value = "1/24"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.step == Fraction(1, 24)
        await pilot.press("plus", "plus")
        await pilot.pause()
        assert app.session.turns.to_float() == pytest.approx(2 / 24)
        check_readout(app)
        # a step no date of DE421 is one step from another is refused, not taken and refused
        # at every +; the crank stays where it was
        await pilot.press("s")
        await pilot.pause()
        app.screen.query_one("#step-input").value = "200y"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, StepDialog)
        said = " ".join(text_of(app.screen.query_one("#step-error")).split())
        assert "a step of 200y is longer than the whole of JPL DE421" in said, said
        assert app.session.step == Fraction(1, 24)


def test_a_date_beyond_every_calendar_is_named_in_words():
    """The bench's refusal of a date past year 999,999 says so in words, not as a Julian
    Date in e-notation ('Julian Date 3.67711e+08 is outside ...')."""
    from engine.errors import SkyError

    session = make_app().session
    with pytest.raises(SkyError) as caught:
        session.go_to(4e8)
    said = str(caught.value)
    assert "beyond the years wheelwork handles (-999,999 to 999,999)" in said, said
    assert "e+" not in said


@sync
async def test_run_pause_and_speed():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        start = app.session.speed_index
        await pilot.press("full_stop")
        assert app.session.speed_index == start + 1
        await pilot.press("comma", "comma")
        assert app.session.speed_index == start - 1
        await pilot.press("space")
        assert bench(app).running
        await wait_for(pilot, lambda: whole_turns(app) > 0, "a frame while running")
        await pilot.press("space")
        assert not bench(app).running
        moved = whole_turns(app)
        assert moved > 0
        # each frame adds speed / fps, so the crank moved a whole number of frames
        per_frame = SPEEDS[start - 1] / 25
        assert moved / per_frame == pytest.approx(round(moved / per_frame), abs=1e-6)
        await pilot.pause(0.2)
        assert whole_turns(app) == moved  # paused: nothing more
        check_readout(app)


@sync
async def test_date_dialog_takes_today_as_the_commands_do():
    """'today' (and 'now'), as `wheelwork sky` and `drift --from` take them, was 'not a date
    form I know' in the bench's date dialog: 00:00 UT of the clock's date."""
    from engine.dates import format_jd, jd_now

    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("g")
        await pilot.pause()
        app.screen.query_one("#date-input").value = "today"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        jd = app.session.jd_now()
        assert format_jd(jd).endswith("00:00 UT (Gregorian)")
        assert 0 <= jd_now() - jd < 1 + 1 / 1440  # a minute to spare across midnight


@sync
async def test_date_dialog_reports_errors_inside_and_jumps():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("g")
        await pilot.pause()
        assert isinstance(app.screen, DateDialog)
        for bad, words in (("31 Febtober", "not a date form"), ("1600-01-01", "outside")):
            app.screen.query_one("#date-input").value = bad
            await pilot.press("enter")
            await pilot.pause()
            assert isinstance(app.screen, DateDialog)
            assert words in text_of(app.screen.query_one("#date-error"))
        # a date outside DE421 says how to reach it: a longer ephemeris (de406 is installed
        # with the README's extras), as the commands say
        assert "--ephemeris de406" in text_of(app.screen.query_one("#date-error"))
        app.screen.query_one("#date-input").value = "2040-06-21 12:00"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        jd = parse_date("2040-06-21 12:00")
        assert app.session.jd_now() == pytest.approx(jd, abs=1e-6)
        want = app.session.readout.turns_at(jd)
        assert int(app.session.turns.whole) == int(want.whole)
        assert "2040-06-21 12:00 UT (Gregorian)" in text_of(app.screen.query_one(Status))
        check_readout(app)
        await pilot.press("e")
        await pilot.pause()
        assert whole_turns(app) == 0
        check_readout(app)


@sync
async def test_date_dialog_escape_changes_nothing():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("up", "g")
        await pilot.pause()
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert whole_turns(app) == 10


@sync
async def test_reset_pointers_and_undo():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("right_square_bracket")
        before = dict(app.session.readout.offsets_deg())
        errs = {n: p.error_deg for n, p in app.session.now().pointers.items()}
        assert max(abs(e) for e in errs.values()) > 0.5  # a thousand days out
        await pilot.press("r")
        await pilot.pause()
        assert app.session.readout.offsets_deg() != before
        for p in app.session.now().pointers.values():
            assert p.error_deg == pytest.approx(0.0, abs=ARCSEC), p.name
        check_readout(app)
        await pilot.press("u")
        await pilot.pause()
        assert app.session.readout.offsets_deg() == before
        for n, p in app.session.now().pointers.items():
            assert p.error_deg == pytest.approx(errs[n], abs=ARCSEC)
        await pilot.press("u")  # nothing left to undo: a note, not a crash
        await pilot.pause()
        assert app.session.readout.offsets_deg() == before


@sync
async def test_frame_and_observer_keys():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        assert app.session.frame == "equinox"
        await pilot.press("t")
        await pilot.pause()
        assert app.session.frame == "stars"
        assert "fixed stars" in text_of(app.screen.query_one(Status))
        check_readout(app)
        await pilot.press("o")
        await pilot.pause()
        assert app.session.observer is not None
        status = text_of(app.screen.query_one(Status))
        assert "default site 51.48°N 0.01°W" in status
        check_readout(app)
        await pilot.press("t", "o")
        await pilot.pause()
        assert app.session.frame == "equinox" and app.session.observer is None
        status = text_of(app.screen.query_one(Status))
        assert "geocentric" in status and "51.48°N 0.01°W" in status  # the site on offer


@sync
async def test_site_from_command_line_is_used():
    app = make_app(site="-33.86,151.21,10")
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("o")
        await pilot.pause()
        assert app.session.observer.lat_deg == -33.86
        assert "site 33.86°S 151.21°E 10 m" in text_of(app.screen.query_one(Status))
        check_readout(app)


@sync
async def test_drift_chart_runs_in_a_worker_and_returns():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, DriftScreen)
        await app.workers.wait_for_complete()
        await pilot.pause()
        result = app.screen.result
        assert result is not None
        assert set(result.error_deg) == set(app.session.mech.train.pointers)
        assert result.jd[0] == pytest.approx(app.session.jd_now())
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)


@sync
async def test_drift_chart_gives_days_before_the_common_era_whole():
    """A train set in 150 BC (DE406): the chart's title and its table give whole days,
    -0149-04-10, where the first ten characters alone ("-0149-04-1") were shown."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    from engine.demos import demo_path

    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=SIZE) as pilot:
        await open_chart(pilot, app)
        screen = app.screen
        assert isinstance(screen, DriftScreen)
        title = text_of(screen.query_one("#drift-title"))
        assert "-0149-04-10 (150 BC) → -0099-04-" in title and "(100 BC)" in title
        summary = text_of(screen.query_one("#drift-summary"))
        dates = [w for w in summary.split() if w.startswith("-01") and w.count("-") == 3]
        assert dates and all(len(w) == 11 for w in dates), dates
        # the table's signed years and the axis's ticks (astronomical) are said to be so
        assert "-0149 is 150 BC" in " ".join(summary.split())
        # under the rows, which a short terminal shows first (the title gives each end's
        # BC year above the plot)
        assert " ".join(summary.split()).index("150 BC") > " ".join(summary.split()).index("sun")
        from textual_plot import PlotWidget
        assert "0 = 1 BC" in screen.query_one(PlotWidget)._x_label


@sync
async def test_drift_chart_names_its_own_first_year_before_the_common_era(tmp_path):
    """The table's note gave '-0149 is 150 BC' on every chart, whatever years it covered; it
    takes the chart's own first year (a board set in 585 BC: '-0584 is 585 BC')."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    from engine.demos import demo_path

    path = tmp_path / "thales.toml"
    path.write_text(demo_path("lunation_board").read_text().replace(
        'date = "-0149-04-10 06:00"', 'date = "-0584-05-20 06:00"'))
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await open_chart(pilot, app)
        summary = " ".join(text_of(app.screen.query_one("#drift-summary")).split())
        assert "-0584 is 585 BC" in summary and "-0149" not in summary


@sync
async def test_drift_chart_keeps_rows_for_its_curves_at_80_by_24():
    """At 80 × 24 the summary table (one row a pointer) and the plot's blank lines and
    "year" caption left the curves four rows (two for the seven-arm orrery); the plot now
    gives up its spare lines on a short terminal. On a tall one they stay."""
    from textual_plot import PlotWidget

    from engine.demos import demo_path

    for train, size, rows in ((None, (80, 24), 7), ("table_orrery", (80, 24), 5),
                              (None, (120, 40), 12)):
        app = make_app(demo_path(train) if train else None)
        async with app.run_test(size=size) as pilot:
            await open_chart(pilot, app)
            plot = app.screen.query_one(PlotWidget)
            inside = plot.size.height - plot.margin_top - plot.margin_bottom - 2  # its frame
            assert inside >= rows, (train, size, inside)
            assert (plot.margin_bottom == 3) == (size[1] >= 32)  # "year" kept when tall


def _slow_drift(monkeypatch):
    """Make drift runs take a while (small chunks, a pause before each), so a test can press
    keys while one is still going."""
    import time

    import engine.drift

    original = engine.drift.drift_series

    def slow(mech, sky, run, control=None):
        control = control or engine.drift.RunControl()

        def ask():
            time.sleep(0.1)
            return control.cancel() if control.cancel else False
        return original(mech, sky, run, replace(control, cancel=ask, chunk=50))

    monkeypatch.setattr(engine.drift, "drift_series", slow)


def test_drift_chart_cancel_says_where_and_clears_the_table(monkeypatch):
    _slow_drift(monkeypatch)

    @sync
    async def run():
        app = make_app()
        async with app.run_test(size=SIZE) as pilot:
            await pilot.press("d")
            screen = app.screen
            assert isinstance(screen, DriftScreen)
            await wait_for(pilot, lambda: screen._percent > 0, "some progress of the run")
            assert screen.computing
            await pilot.press("c")
            await app.workers.wait_for_complete()
            await pilot.pause()
            status = text_of(screen.query_one("#drift-status")).strip()
            assert status.startswith("cancelled at ") and status.endswith("%"), status
            assert 0 < float(status.split()[-1].rstrip("%")) < 100
            summary = text_of(screen.query_one("#drift-summary"))
            assert "cancelled at" in summary and "partial" in summary
            assert "max |err|" not in summary and screen.result is None
            await pilot.press("d")
            await pilot.pause()
            assert isinstance(app.screen, BenchScreen)

    run()


@sync
async def test_drift_chart_cancel_after_it_is_done_changes_nothing():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await open_chart(pilot, app)
        screen = app.screen
        assert screen.result is not None
        await pilot.press("c")
        await pilot.pause()
        assert text_of(screen.query_one("#drift-status")).startswith("done")
        assert "max |err|" in text_of(screen.query_one("#drift-summary"))
        assert any("nothing to cancel" in n.message for n in app._notifications)


async def _drift_from(pilot, app, date: str) -> DriftScreen:
    await pilot.press("g")
    await pilot.pause()
    app.screen.query_one("#date-input").value = date
    await pilot.press("enter")
    await pilot.pause()
    await open_chart(pilot, app)
    assert isinstance(app.screen, DriftScreen)
    return app.screen


@sync
async def test_drift_chart_minus_shortens_the_span():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _drift_from(pilot, app, "1920-01-01")
        start = app.session.jd_now()
        for decades in (4, 3):
            await pilot.press("minus")
            await app.workers.wait_for_complete()
            await pilot.pause()
            assert screen.decades == decades
            assert screen.result.jd[-1] == pytest.approx(start + decades * 3652.5, abs=1.0)
            assert f"({decades * 10}.0 years" in text_of(screen.query_one("#drift-title"))
        await pilot.press("plus")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert screen.decades == 4


@sync
async def test_drift_chart_minus_works_when_the_ephemeris_caps_the_span():
    # from 2026 DE421 holds under three decades: the default five are cut to what is there,
    # so the first − already makes the span shorter
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _drift_from(pilot, app, "2026-01-01")
        end = app.session.sky.span_jd[1]
        assert screen.decades == 3 and screen.result.jd[-1] == pytest.approx(end, abs=1.0)
        assert "capped" in text_of(screen.query_one("#drift-title"))
        assert "capped by the end of" in text_of(screen.query_one("#drift-status"))
        await pilot.press("minus")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert screen.decades == 2
        assert screen.result.jd[-1] == pytest.approx(app.session.jd_now() + 2 * 3652.5, abs=1.0)


@sync
async def test_drift_chart_plus_at_the_ephemeris_end_says_why():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _drift_from(pilot, app, "2026-01-01")
        runs = screen._run
        await pilot.press("plus")
        await pilot.pause()
        assert screen.decades == 3 and screen._run == runs  # nothing recomputed
        end = format_jd(app.session.sky.span_jd[1])[:10]
        notes = [n.message for n in app._notifications]
        assert any(end in m and "--ephemeris de440" in m and "capped" in m for m in notes), notes


@sync
async def test_drift_chart_plus_at_the_end_offers_only_a_longer_ephemeris():
    # the lunation board reads DE406 (3000 BC - AD 3000): near its end the chart's + must not
    # offer DE440, which ends in 2650, and names what the commands name for a longer span
    pytest.importorskip("de406", reason="the 'ancient' extra (de406) is not installed")
    from engine.demos import demo_path

    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=SIZE) as pilot:
        screen = await _drift_from(pilot, app, "2980-01-01")
        await pilot.press("plus")
        await pilot.pause()
        notes = [n.message for n in app._notifications if "capped" in n.message]
        assert notes and all("de440" not in m for m in notes), notes
        end = app.session.sky.span_jd[1]  # the dates past it: no installed ephemeris
        assert any(app.session.sky.hint_for(end + 1, end + 1) in m for m in notes), notes
        assert any("no ephemeris wheelwork installs reaches" in m for m in notes), notes
        assert screen.capped()


@sync
async def test_drift_chart_past_the_threshold_at_the_start():
    # on 2026-03-20 the demo's Sun is about 1.9° out (the 80x24 snapshot shows it): past the
    # default ±1° threshold from the first date
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        screen = await _drift_from(pilot, app, "2026-03-20 12:00")
        sm = screen.result.summaries["sun"]
        assert sm.first_crossing_jd == pytest.approx(screen.result.jd[0])
        rows = text_of(screen.query_one("#drift-summary")).splitlines()
        sun = next(r for r in rows if " sun " in f" {r} ")
        assert sun.rstrip().endswith("at start")
        labels = screen.query_one("#drift-plot")._v_lines_labels
        assert not any(lab and lab.startswith("sun ") for lab in labels)
        crossed_later = [n for n, m in screen.result.summaries.items()
                         if m.first_crossing_jd is not None
                         and m.first_crossing_jd > screen.result.jd[0]]
        for name in crossed_later:  # the others keep their line
            assert any(lab and lab.startswith(f"{name} ") for lab in labels)


def test_drift_failure_is_reported_on_the_chart_screen(monkeypatch):
    import engine.drift

    def broken(*args, **kwargs):
        raise engine.drift.DriftError("threshold nonsense")

    monkeypatch.setattr(engine.drift, "drift_series", broken)

    @sync
    async def run():
        app = make_app()
        async with app.run_test(size=SIZE) as pilot:
            await open_chart(pilot, app)
            assert isinstance(app.screen, DriftScreen)
            status = text_of(app.screen.query_one("#drift-status"))
            assert "cannot compute: threshold nonsense" in status

    run()


@sync
async def test_help_shows_keys_and_caution_and_quit():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("question_mark")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        texts = " ".join(text_of(w) for w in app.screen.query("Static"))
        assert "solar filter" in texts and "go to a date" in texts
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert "solar filter" in text_of(app.screen.query_one("#caution"))
        await pilot.press("q")
        await pilot.pause()
    assert app.return_code == 0


@sync
async def test_edge_of_the_ephemeris_is_a_notification():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        app.session.go_to(app.session.sky.span_jd[1] - 3)
        before = app.session.turns
        await pilot.press("up")  # ten days past the end of DE421
        await pilot.pause()
        assert app.session.turns == before
        assert any("outside the ephemeris" in n.message for n in app._notifications)


@sync
async def test_notifications_show_brackets_as_written():
    """A notification is plain text: the engine's '[pointers.sun]' and the pip line's
    'wheelwork[de440]' are not style tags to drop (stepping 200 years past DE421 said
    "pip install 'wheelwork'" on the bench)."""
    from textual.widgets._toast import Toast

    app = make_app()
    async with app.run_test(size=SIZE, notifications=True) as pilot:
        app.session.go_to(app.session.sky.span_jd[1] - 3)
        await pilot.press("up")  # past the end of DE421: the message names the extras
        await pilot.pause()
        await pilot.press("ctrl+c")  # Textual's own hint, in its own markup, is left to it
        await wait_for(pilot, lambda: len(app.screen.query(Toast)) >= 2, "two toasts")
        shown = [t.render().plain for t in app.screen.query(Toast)]
        past = [n.message for n in app._notifications if "outside the ephemeris" in n.message]
        assert past and any(past[0] in s for s in shown), shown
        assert any("Press q to quit the app" in s for s in shown), shown  # no [b] left


def test_every_notification_of_ours_is_plain_text():
    """Every notify call in tui/ says markup=False: Textual reads a message as markup by
    default, and the engine's messages are full of brackets ('[pointers.sun]', a pip line's
    'wheelwork[de440]', a folder '[old]') that it would drop."""
    import ast

    missing = []
    for path in sorted((Path(__file__).parents[1] / "tui").glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr == "notify"
                    and not any(k.arg == "markup" and isinstance(k.value, ast.Constant)
                                and k.value.value is False for k in node.keywords)):
                missing.append(f"{path}:{node.lineno}")
    assert not missing, missing


@sync
async def test_every_binding_is_in_the_command_palette():
    app = make_app()
    async with app.run_test(size=SIZE):
        titles = {c.title for c in app.get_system_commands(app.screen)}
        for b in BenchScreen.BINDINGS:
            if b.action != "app.quit":
                assert long_help(b) in titles


@sync
async def test_command_palette_runs_an_action():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("ctrl+p")
        await pilot.pause()
        await pilot.press(*"crank 100 turns forward")
        await _palette_listed(app, pilot)
        await pilot.press("enter")
        await wait_for(pilot, lambda: whole_turns(app) != 0, "the palette's command to run")
        assert whole_turns(app) == 100


@sync
async def test_resizing_never_crashes():
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        for size in ((60, 18), (200, 60), (81, 25), (30, 10), (160, 50), (80, 24)):
            await pilot.resize_terminal(*size)
            await pilot.press("right")
            await pilot.pause()
        train = app.screen.query_one("#train")
        phase = app.screen.query_one("#phase")
        assert not train.display  # the train drawing collapses first at 80x24
        assert not phase.display
        await pilot.resize_terminal(160, 50)
        await wait_for(pilot, lambda: train.display and phase.display,
                       "the train drawing and phase back at 160×50")


@sync
async def test_session_turns_stay_exact():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        for _ in range(3):
            await pilot.press("right_square_bracket")
        assert int(app.session.turns.whole) == 3000
        assert float(app.session.turns.frac) == 0.0


# --- snapshots (deterministic: fixed dates, paused, no clock) ------------------------------

def _app_at(date: str):
    app = make_app()
    app.session.go_to(parse_date(date))
    return app


def test_snapshot_main_80x24(snap_compare):
    assert snap_compare(_app_at("2026-03-20 12:00"), terminal_size=(80, 24))


def test_snapshot_main_160x50(snap_compare):
    assert snap_compare(_app_at("2026-03-20 12:00"), terminal_size=(160, 50),
                        press=["up", "up"])


def test_snapshot_drift_chart(snap_compare):
    async def run_before(pilot):
        await pilot.press("d")
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()

    assert snap_compare(_app_at("2026-01-01 00:00"), terminal_size=(120, 40),
                        run_before=run_before)


def test_caution_text():
    assert "solar filter" in CAUTION


def test_engine_does_not_import_the_interface():
    import subprocess
    import sys

    code = ("import sys, engine.cli, engine.api, engine.commands.support; "
            "assert 'textual' not in sys.modules and 'tui' not in sys.modules, 'UI imported'; "
            "assert engine.cli.main(['--help']) == 0; "  # lists crank from tui/command.py
            "assert 'textual' not in sys.modules, 'Textual imported for --help'")
    subprocess.run([sys.executable, "-c", code], check=True)


# --- frame, worst error, footer, findings, train drawing ----------------------------------

def _row(app, name: str) -> list[str]:
    table = text_of(app.screen.query_one(Readings))
    return next(line for line in table.splitlines() if line.startswith(name)).split()


@sync
async def test_drift_column_follows_the_frame():
    from engine.ratios import pointer_ratios

    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        mech = app.session.mech
        for frame in ("stars", "equinox"):
            await pilot.press("t")
            await pilot.pause()
            assert app.session.frame == frame
            want = {r.pointer: r.drift_deg_per_century
                    for r in pointer_ratios(mech.train, mech.kin, frame=frame)}
            for name, p in app.session.now().pointers.items():
                assert p.drift_deg_per_century == pytest.approx(want[name])
            shown = float(_row(app, "sun")[5])
            # against the stars the Sun gains the precession, about 1.40°/cy (ratio report)
            assert shown == pytest.approx(want["sun"], abs=0.01 if frame == "stars" else 1e-4)
            assert (shown > 1.3) == (frame == "stars")


@sync
async def test_worst_restarts_on_frame_observer_and_setting_changes():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:

        def worst_and_now():
            now = app.session.now()
            return ({n: p.worst_deg for n, p in now.pointers.items()},
                    {n: abs(p.error_deg) for n, p in now.pointers.items()})

        await pilot.press("right_square_bracket", "left_square_bracket")  # out and back
        await pilot.pause()
        worst, now = worst_and_now()
        assert worst["moon"] > now["moon"] + 0.5  # the trip out is remembered
        for key in ("t", "o", "t", "o"):
            await pilot.press("right_square_bracket", "left_square_bracket")
            await pilot.pause()
            assert worst_and_now()[0]["moon"] > worst_and_now()[1]["moon"] + 0.5
            await pilot.press(key)
            await pilot.pause()
            worst, now = worst_and_now()
            for name in worst:  # only the date on screen since the change
                assert worst[name] == pytest.approx(now[name], abs=ARCSEC), (key, name)
        for key in ("r", "u"):
            await pilot.press("right_square_bracket")
            await pilot.pause()
            await pilot.press(key)
            await pilot.pause()
            worst, now = worst_and_now()
            for name in worst:
                assert worst[name] == pytest.approx(now[name], abs=ARCSEC), (key, name)
        subtitle = str(app.screen.query_one("#info").border_subtitle)
        assert "since start or last" in subtitle and "worst°" in subtitle


@sync
async def test_worst_key_names_the_narrow_column_at_80x24():
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        subtitle = str(app.screen.query_one("#info").border_subtitle)
        assert subtitle.startswith("max°") and "since start or" in subtitle
        assert "re-set" in subtitle  # r, R and m all start the column again
        assert "max°" in text_of(app.screen.query_one(Readings)).splitlines()[0]


def _footer_keys(app) -> dict[str, tuple[int, int]]:
    from textual.widgets._footer import FooterKey

    return {("palette" if k.has_class("-command-palette") else k.action):
            (k.region.x, k.region.right) for k in app.screen.query(FooterKey)}


@pytest.mark.parametrize("size", [(80, 24), (100, 30), (120, 40), (160, 50), (200, 60)])
@sync
async def test_footer_keeps_the_main_keys_in_view(size):
    """On the demo, which predicts eclipses."""
    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        keys = _footer_keys(app)
        right_edge = keys.pop("palette")[0] if "palette" in keys else size[0]
        # the demo predicts eclipses (a node hand): its jump keys are in view at any width,
        # epoch, undo and observer from 155 columns
        for action in ("crank(1)", "crank(-1)", "run", "go_to_date", "reset_pointers",
                       "toggle_frame", "drift", "help", "eclipse(1)", "eclipse(-1)",
                       "predicted") + (("epoch", "undo_reset", "toggle_observer")
                                       if size[0] >= 155 else ()):
            assert action in keys, (size, action)
        for action, (_, right) in keys.items():
            assert right <= right_edge, (size, action)  # in view, nothing under the palette
        if size[0] >= 190:
            assert {b.action for b in BenchScreen.BINDINGS  # the editing keys need 250
                    if FOOTER_FROM_WIDTH.get(b.action, 0) <= size[0]} <= set(keys)
        if "palette" not in _footer_keys(app):
            assert "ctrl+p" in text_of(app.screen.query_one("#title"))
    # keys left out of a narrow footer still work, and are in help and the palette
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("pageup", "e", "pagedown")
        await pilot.pause()
        assert whole_turns(app) == -100
        titles = {c.title for c in app.get_system_commands(app.screen)}
        await pilot.press("question_mark")
        await pilot.pause()
        help_text = " ".join(text_of(w) for w in app.screen.query("Static"))
        for b in BenchScreen.BINDINGS:
            assert long_help(b) in help_text, b.action
            if b.action != "app.quit":
                assert long_help(b) in titles, b.action


@pytest.mark.parametrize("train, said, unsaid", [
    ("table_orrery", ["the Sun (☉) and the Moon (☾);", "seen from the Sun: Mercury (☿)",
                      "Saturn (♄)"], ["node", "perigee"]),
    ("tide_office", ["the Sun (☉) and the Moon (☾);", "the mean node (☊) and the mean "
                     "perigee (◆)"], ["Venus", "seen from the Sun"]),
    ("planet_dial", ["the Sun (☉), the Moon (☾), Venus (♀) and Mars (♂)."], ["open marks"]),
    ("moon_disc_59", ["nothing for the sky dial"], ["badges"]),
])
@sync
async def test_help_names_the_marks_the_train_s_dial_shows(train, said, unsaid):
    """Help said the ring's badges were "the true Sun and Moon" on every train, an orrery's
    dial ringed with its arms' marks too (the dial draws them: tui.widgets.SkyDial.draw_moving);
    it names what this train's dial shows, and from which ephemeris."""
    from engine.demos import demo_path

    app = make_app(demo_path(train))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("question_mark")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        texts = [" ".join(text_of(w).split()) for w in app.screen.query("Static")]
        about = next(t for t in texts if "Errors are" in t).split("Errors are")[0]
        for words in said:
            assert words in about, (words, about)
        for words in unsaid:
            assert words not in about, (words, about)
        assert app.session.sky.name in about


@sync
async def test_help_scrolls_to_the_end_at_80x24():
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("question_mark")
        await pilot.pause()
        box = app.screen.query_one("#help")
        assert box.max_scroll_y > 0  # more than fits: it must scroll
        for key in ("down", "pagedown", "end"):
            before = box.scroll_y
            await pilot.press(key)
            await wait_for(pilot, lambda b=before: box.scroll_y > b
                           or box.scroll_y == box.max_scroll_y, f"help to scroll on {key}")
        await pilot.press("end")
        await wait_for(pilot, lambda: box.scroll_y == box.max_scroll_y, "help at its end")
        await pilot.press("home")
        await wait_for(pilot, lambda: box.scroll_y == 0, "help at its top")
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)


@sync
async def test_status_crank_line_does_not_wrap_at_80x24():
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        app.session.set_step(Fraction(1, 24))
        await pilot.press("right_square_bracket", "plus")
        await pilot.pause()
        status = app.screen.query_one(Status)
        lines = text_of(status).splitlines()
        crank = next(line for line in lines if line.startswith("crank"))
        assert "+1,000.042 turns" in crank and crank.rstrip().endswith("step 1/24 turn")
        assert status.size.height == len(lines)  # one line each: nothing wrapped
        assert len(crank.rstrip()) <= status.size.width


@sync
async def test_findings_show_level_per_line_warnings_first():
    from tui.widgets import Findings

    app = make_app()
    app.session.findings = [
        ("note", "[pin_slots.anomaly]", "the slot must let the pin travel 3.17 mm", "cut it"),
        ("warning", "pointer 'moon'", "turns backwards", ""),
        ("note", "wheel 'x'", "9 teeth", ""),
    ]
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        findings = app.screen.query_one(Findings)
        lines = text_of(findings).splitlines()
        assert lines[0].startswith("▲ warning pointer 'moon'")
        assert lines[1].startswith("· note [pin_slots.anomaly]")
        assert lines[2].startswith("· note wheel 'x'")
        styles = {span.style for span in findings.content.spans
                  if str(findings.content)[span.start:span.end].strip() in ("▲ warning",
                                                                             "· note")}
        assert len(styles) == 2  # each level its own colour
        title = str(app.screen.query_one("#findings-pane").border_title)
        assert title == "warnings & notes: 1 warning, 2 notes"


@pytest.mark.parametrize("demo", ["tide_office", "table_orrery", "planet_dial", "eclipse_board"])
@sync
async def test_the_side_column_fits_and_the_warnings_show(demo):
    """No panel of the right-hand column runs off its bottom, and the warnings panel keeps at
    least its border and one line, at every size from 100 x 30 up: the train drawing and the
    phase discs (or the orrery plan) give way first. At 160 x 50 the tide office's panel was
    pushed below the column whole, under the 16 rows of the train drawing; the orrery's
    eclipses panel was cut to one line. At 80 x 24 the orrery (no eclipse predictions) gives
    its eclipses panel up for the warnings; the tide office (it predicts them) keeps it
    without its bottom border, where the warnings' bottom border was under the footer; and
    back at 100 x 30 the column fits again."""
    from engine.demos import demo_path
    from engine.eclipses import methods

    app = make_app(demo_path(demo))
    predicts = bool(methods(app.session.mech.train))
    async with app.run_test(size=(100, 30)) as pilot:
        for size in ((100, 30), (80, 24), (100, 30), (120, 42), (160, 50), (200, 60),
                     (120, 40)):
            await pilot.resize_terminal(*size)
            screen = app.screen

            def fitted(screen=screen, size=size) -> bool:
                side = screen.query_one("#side").region
                return tuple(screen.size) == size and all(
                    p.region.bottom <= side.bottom for p in screen.query("#side > *")
                    if p.display)

            # the side column is fitted after the resize's layout: wait for it, not pauses
            await wait_for(pilot, fitted, f"every side panel in the column at {size}")
            side = screen.query_one("#side").region
            findings = screen.query_one("#findings-pane")
            assert findings.display and findings.region.height >= 3, (size, findings.region)
            train = screen.query_one("#train")
            footer = screen.query_one("Footer").region.y
            if train.display:
                assert train.region.height >= 14 and train.region.bottom <= footer, size
            # room for the drawing and every panel (the orrery's plan takes 10 rows at least,
            # its readings seven: its drawing from 51 rows)
            if size == (200, 60) or (size == (160, 50) and demo != "table_orrery"):
                assert train.display and train.region.height >= 14, size
            eclipse = screen.query_one("#eclipse")
            if predicts or demo == "table_orrery":
                assert eclipse.display == (size != (80, 24) or predicts), size
            assert eclipse.has_class("-joined") == (
                size == (80, 24) and demo in ("tide_office", "eclipse_board")), size
            if demo == "planet_dial":  # predicts none, yet keeps the panel where it fits
                assert eclipse.display, size
            # nothing left blank under the warnings when the eclipses panel could have the
            # rows (the planet dial at 80 x 24 left four)
            if size == (80, 24) and eclipse.display:
                assert findings.region.bottom == side.bottom, (size, findings.region, side)


@pytest.mark.parametrize("size", [(160, 50), (200, 60), (250, 70)])
@pytest.mark.parametrize("key", ["up", "right_square_bracket"])
@sync
async def test_train_counts_have_a_key_and_leave_wheels_and_labels_alone(size, key):
    from tui.widgets import COUNT, DRAWN, TrainView

    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.press(key)  # a big move: fast arbors show counts
        await pilot.pause()
        view = app.screen.query_one(TrainView)
        assert "turns since epoch" in str(app.screen.query_one("#train").border_subtitle)
        static_text, static_style = view._static
        counts = 0
        for y, row in enumerate(canvas_rows(view)[1]):
            for x, style in enumerate(row):
                if style != COUNT:
                    continue
                counts += 1
                under = static_style[y][x]
                # not over a wheel's rim (crank, pointer or plain arbor) nor a name label
                assert under not in DRAWN, (x, y)
        assert counts > 0


@sync
async def test_dial_shows_node_and_perigee_as_the_readings_give_them():
    """The demo's node and perigee pointers are hands on the dial at the readings' train°, with
    the true mean node and perigee (sky°) as marks; the key names them. A train without them
    (and its phase pointer, not a longitude) puts nothing more on the dial."""
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("up", "up")
        await pilot.pause()
        now = app.session.now()
        dial = app.screen.query_one(SkyDial)
        assert set(dial.elements) == {"node", "apsis"}
        for name, kind in (("node", "node"), ("perigee", "apsis")):
            p = now.pointers[name]
            assert p.shows == kind
            hand, mark = dial.elements[kind]
            assert hand == pytest.approx(p.train_deg, abs=ARCSEC)
            assert mark == pytest.approx(p.sky_deg, abs=ARCSEC)
        key = text_of(app.screen.query_one("#dial-key"))
        assert "☊ node" in key and "perigee" in key
    app = make_app(Path(__file__).parents[1] / "engine" / "trains" / "nineteen_year_drum.toml")
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("up")
        await pilot.pause()
        assert app.screen.query_one(SkyDial).elements == {}
        key = text_of(app.screen.query_one("#dial-key"))
        assert "node" not in key and "perigee" not in key


# --- fast keys: dialogs and the palette close once, the bench is never popped --------------

def _key_event(key: str):
    import unicodedata

    from textual import events
    from textual.keys import REPLACED_KEYS, _character_to_key, _get_unicode_name_from_key

    if len(key) == 1 and not key.isalnum():
        key = _character_to_key(key)
    try:
        char = unicodedata.lookup(_get_unicode_name_from_key(REPLACED_KEYS.get(key, key)))
    except KeyError:
        char = key if len(key) == 1 else None
    return events.Key(key, char)


async def _type_fast(app, keys, gaps_s) -> None:
    """Send keys as a terminal does: straight to the driver, not waiting for the app to
    handle one before the next (Pilot.press waits)."""
    for key, gap in zip(keys, gaps_s, strict=True):
        event = _key_event(key)
        event.set_sender(app)
        app._driver.send_message(event)
        await asyncio.sleep(gap)


async def _until(pilot, done, wait_s: float = 60.0) -> None:
    """Wait until ``done()`` (a palette command runs a moment after the palette closes, a
    long moment on a loaded machine)."""
    for _ in range(int(wait_s / 0.05)):
        if done():
            return
        await pilot.pause(0.05)


async def _palette_listed(app, pilot, wait_s: float = 60.0) -> None:
    """Wait until the palette's search has listed its matches (slow on a loaded machine)."""
    from textual.command import CommandList

    palette = app.screen
    for _ in range(int(wait_s / 0.05)):
        await pilot.pause(0.05)
        searching = any(w.is_running for w in app.workers if w.node is palette)
        if palette.query_one(CommandList).option_count and not searching:
            await pilot.pause(0.1)
            return


def _assert_bench_on_the_bottom(app) -> None:
    stack = app.screen_stack
    assert isinstance(stack[0], BenchScreen), stack
    assert sum(isinstance(s, BenchScreen) for s in stack) == 1, stack
    assert app.is_running


@pytest.mark.parametrize("opener,set_value", [
    ("g", ("#date-input", "2030-01-01")), ("s", ("#step-input", "3")), ("ctrl+p", None)])
@pytest.mark.parametrize("gap_s,cranking", [(0.0, False), (0.06, True)])
@sync
async def test_enter_twice_closes_a_dialog_once(opener, set_value, gap_s, cranking):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        if cranking:  # as a user found it: a 60 ms gap is enough while cranking
            await pilot.press("space")
        await pilot.press(opener)
        await wait_for(pilot, lambda: len(app.screen_stack) == 2, "the dialog to open")
        if set_value is not None:
            await wait_for(pilot, lambda: bool(app.screen.query(set_value[0])), "its input")
            app.screen.query_one(set_value[0]).value = set_value[1]
        else:
            text = list("crank 100 turns forward")
            await _type_fast(app, text, [0.01] * len(text))
            await _palette_listed(app, pilot)
        await _type_fast(app, ["enter", "enter"], [gap_s, 0.0])
        await wait_for(pilot, lambda: len(app.screen_stack) == 1, "the dialog to close")
        await pilot.pause()  # the second Enter handled too
        await pilot.pause()
        _assert_bench_on_the_bottom(app)
        assert len(app.screen_stack) == 1
        if cranking:
            await pilot.press("space")
            assert not bench(app).running
        elif opener == "g":
            assert app.session.jd_now() == pytest.approx(parse_date("2030-01-01"), abs=1e-6)
        elif opener == "s":
            assert app.session.step == 3
        else:
            await _until(pilot, lambda: whole_turns(app) != 0)
            assert whole_turns(app) == 100


@pytest.mark.parametrize("gap_s", [0.0, 0.01, 0.02, 0.03])
@sync
async def test_palette_page_keys_right_after_opening(gap_s):
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        from textual.command import CommandPalette

        await _type_fast(app, ["ctrl+p", "pagedown", "pageup", "end", "down"],
                         [gap_s, 0.0, 0.0, 0.0, 0.0])
        await wait_for(pilot, lambda: isinstance(app.screen, CommandPalette), "the palette")
        await pilot.pause()  # the page keys handled
        await pilot.pause()
        _assert_bench_on_the_bottom(app)
        await pilot.press("escape")
        await wait_for(pilot, lambda: len(app.screen_stack) == 1, "the palette to close")


@sync
async def test_palette_runs_its_command_once_on_a_double_enter():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("ctrl+p")
        await pilot.pause()
        await pilot.press(*"crank 100 turns forward")
        await _palette_listed(app, pilot)
        await _type_fast(app, ["enter", "enter", "enter"], [0.0, 0.0, 0.0])
        await _until(pilot, lambda: whole_turns(app) != 0)
        await pilot.pause(0.3)
        _assert_bench_on_the_bottom(app)
        assert whole_turns(app) == 100


#: what a storm types: every key bound on any screen (but q, which quits), what dialogs and the
#: palette take, and keys that open and close them, weighted towards the openers
STORM_KEYS = sorted({k.strip() for screen in (BenchScreen, DriftScreen, HelpScreen)
                     for b in screen.BINDINGS for k in b.key.split(",")} - {"q"}
                    | {"enter", "escape", "tab", "backspace", "home", "end", "pageup",
                       "pagedown", "1", "2", "0", "/", "a", "n", "x", "ctrl+p"})
STORM_OPENERS = ["ctrl+p", "g", "s", "question_mark", "enter", "escape"]


def key_storm(seed: int, n: int = 2000) -> tuple[list[str], list[float]]:
    """A seeded storm of ``n`` keys with gaps of 0–60 ms (mostly a few ms); STORM_SEED in the
    environment picks another seed (to count runs survived)."""
    import random

    rng = random.Random(seed)
    keys = [rng.choice(STORM_OPENERS) if rng.random() < 0.3 else rng.choice(STORM_KEYS)
            for _ in range(n)]
    gaps = [rng.choice((0.0, 0.0, 0.0, 0.002, 0.005, 0.01, 0.03, 0.06)) for _ in range(n)]
    return keys, gaps


async def survive_storm(seed: int, n: int = 2000, size=(80, 24)) -> None:
    import tempfile

    app = make_app()
    keys, gaps = key_storm(seed, n)
    quits = []
    app.action_quit = lambda: quits.append(1)  # the palette's quit: a storm carries on
    shots = tempfile.TemporaryDirectory()
    app.screenshot_dir = Path(shots.name)  # the palette's screenshot, if a storm picks it
    with shots:
        await _storm(app, keys, gaps, size)


async def _storm(app, keys, gaps, size) -> None:
    n = len(keys)
    async with app.run_test(size=size) as pilot:
        for start in range(0, n, 100):
            await _type_fast(app, keys[start:start + 100], gaps[start:start + 100])
            await pilot.pause(0.05)
            _assert_bench_on_the_bottom(app)
        for _ in range(6):  # close whatever is open
            await pilot.press("escape")
            await pilot.pause(0.05)
        _assert_bench_on_the_bottom(app)
        bench(app).action_run() if bench(app).running else None
        await pilot.press("right")
        await pilot.pause()
        check_readout(app)
    assert app.return_code in (None, 0)


def test_key_storm_of_2000_keys_with_every_binding_and_the_palette():
    assert {"ctrl+p", "g", "s", "d", "space", "enter", "escape"} <= set(STORM_KEYS)
    import os
    import tempfile

    # the storm can change the train and save it (ctrl+s, enter): let it write in a scratch folder
    with tempfile.TemporaryDirectory() as scratch:
        cwd = os.getcwd()
        os.chdir(scratch)
        try:
            asyncio.run(survive_storm(seed=int(os.environ.get("STORM_SEED", "2026"))))
        finally:
            os.chdir(cwd)


ORRERY_TRAIN = Path(__file__).resolve().parent.parent / "engine" / "trains" / "table_orrery.toml"
PLANET_DIAL = Path(__file__).resolve().parent.parent / "engine" / "trains" / "planet_dial.toml"


@sync
async def test_orrery_plan_view_draws_each_arm_and_its_true_place():
    from tui.widgets import OrreryPlan, PhaseDiscs
    app = make_app(ORRERY_TRAIN)
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.press("right_square_bracket")  # a thousand years' worth of arms later
        await pilot.pause()
        plan = app.screen.query_one(OrreryPlan)
        assert not app.screen.query(PhaseDiscs)  # the orrery shows its arms instead
        now = app.screen.session.now()
        assert set(plan.arms) == {"mercury", "venus", "earth", "mars", "jupiter", "saturn"}
        for name, (arm, true) in plan.arms.items():
            assert arm == pytest.approx(now.pointers[name].train_deg)
            assert true == pytest.approx(now.pointers[name].sky_deg)
        # radii grow outward from Mercury to Saturn
        r = plan.radii
        assert r["mercury"] < r["venus"] < r["earth"] < r["mars"] < r["jupiter"] < r["saturn"]


@sync
async def test_sky_dial_marks_each_planet_and_keys_them():
    app = make_app(PLANET_DIAL)
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        dial = app.screen.query_one(SkyDial)
        now = app.screen.session.now()
        assert sorted(lon for lon, _, _ in dial.planets) == pytest.approx(
            sorted(now.pointers[n].sky_deg for n in ("venus", "mars")))
        key = text_of(app.screen.query_one("#dial-key"))
        assert "Venus" in key and "Mars" in key and "Jupiter" not in key
        assert CAUTION in text_of(app.screen.query_one("#caution"))


@sync
async def test_textual_own_searches_open_our_guarded_palette():
    # The palette's "Theme" command (Textual's search_themes) and search_commands open a
    # palette of their own; a plain CommandPalette crashed on a PageDown typed before its
    # list was laid out (found by the key storm). Ours, keys typed at once, no crash.
    from textual.app import App
    from textual.command import CommandPalette

    from tui.app import Palette
    assert "search_themes" in vars(App) and "search_commands" in vars(App)
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        for open_it in (app.search_themes,
                        lambda: app.search_commands([("a command", lambda: None)])):
            open_it()
            await pilot.press("pagedown", "pageup", "pagedown")
            await pilot.pause()
            assert isinstance(app.screen, Palette), type(app.screen)
            await pilot.press("escape")
            await pilot.pause()
            assert not CommandPalette.is_open(app)


def test_palette_private_methods_still_there():
    """tui/app.py's Palette overrides private methods of Textual's command palette
    (PALETTE_INTERNALS); if a release drops or renames one, the override would silently do
    nothing: this fails here instead."""
    import inspect

    from textual.command import CommandPalette

    from tui.app import PALETTE_INTERNALS, Palette

    for name in PALETTE_INTERNALS:
        assert callable(getattr(CommandPalette, name, None)), f"CommandPalette has no {name}"
        assert name in vars(Palette)  # and the palette's override is the one listed
        ours, theirs = getattr(Palette, name), getattr(CommandPalette, name)
        assert inspect.iscoroutinefunction(ours) == inspect.iscoroutinefunction(theirs), name


def test_canvas_private_internals_still_there():
    """tui/widgets.py reaches the hi-res canvas's private rows in one function, canvas_rows
    (CANVAS_INTERNALS); if a release of the library drops, renames or stops drawing from them,
    this fails here, loudly."""
    from textual_hires_canvas import Canvas

    from tui.widgets import CANVAS_INTERNALS, canvas_rows

    canvas = Canvas(4, 3)
    for name in CANVAS_INTERNALS:
        assert hasattr(canvas, name), f"textual_hires_canvas.Canvas has no {name} any more"
    chars, styles = canvas_rows(canvas)
    assert [len(row) for row in chars] == [4] * 3 and [len(row) for row in styles] == [4] * 3
    chars[2][1], styles[2][1] = "x", "bold red"  # written in place: the canvas shows it
    assert canvas.get_pixel(1, 2) == ("x", "bold red")
    assert "x" in canvas.render_line(2).text
    canvas.set_pixel(3, 0, "y", "blue")  # and the rows are the canvas's own
    assert canvas_rows(canvas)[0][0][3] == "y" and canvas_rows(canvas)[1][0][3] == "blue"


@pytest.mark.parametrize("size", [(80, 24), (100, 30), (120, 40), (160, 50), (200, 60),
                                  (250, 70), (120, 70)])
@sync
async def test_dial_shows_every_sign_label(size):
    from tui.widgets import SIGNS

    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        dial = app.screen.query_one(SkyDial)
        text = "\n".join("".join(row) for row in canvas_rows(dial)[0])
        short = dial._geom[2] < 8
        for name in SIGNS:
            assert (name[:2] if short else name) in text, (size, name)


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_readings_keep_numbers_apart_in_fixed_notation(size):
    """Every number has a space before it (a wide error once ran into the sky column:
    '0.00+461.70'), drifts are in fixed notation, and a row too long wraps, losing nothing."""
    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.press("right_square_bracket", "right_square_bracket")
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        narrow = readings.size.width < 61
        ncols = len(Readings.NARROW if narrow else Readings.WIDE)
        has_days = any(p.error_days is not None for p in app.session.now().pointers.values())
        table = text_of(readings)
        rows = [line for line in table.splitlines()[1:] if line.strip()]
        now = app.session.now()
        for name, p in now.pointers.items():
            row = next(r for r in rows if r.startswith(name[:7]))
            fields = row.split()
            assert len(fields) == ncols - (p.error_days is None and not narrow), row
            assert has_days
            assert not any("e-" in f or "e+" in f for f in fields), row
            d = p.drift_deg_per_century
            places = drift_places((q.drift_deg_per_century for q in now.pointers.values()),
                                  (Readings.NARROW if narrow else Readings.WIDE)[5][1] - 1)
            assert drift(d, places) in fields
        # a made-up wide error: still separated, still whole, wrapped if it must be
        p = next(iter(now.pointers.values()))
        from dataclasses import replace
        wide = replace(p, error_deg=-179.99, worst_deg=179.99, sky_deg=359.99,
                       train_deg=180.0, drift_deg_per_century=-12345.678)
        readings.show(replace(now, pointers={p.name: wide}))
        await pilot.pause()
        text = " ".join(text_of(readings).split())
        for number in ("-179.99", "179.99", "-12,346"):  # 1,000°/cy or more: whole degrees
            assert f" {number}" in text, text


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_the_drift_column_has_one_number_of_decimals_and_lines_up(size):
    """The tide office's drifts run from +0.0008 (its Sun) to -0.0255 °/cy (its phase): the
    column mixed four decimals and two (+0.0008 over -0.02), so its figures' points and
    right edges wandered (common practice, no source: a column of figures is written to one
    number of decimals, aligned on the point)."""
    import re

    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        narrow = readings.size.width < 61
        rows = [r for r in text_of(readings).splitlines()[1:] if r.strip()][:5]
        decimals, ends = set(), set()
        for row in rows:
            spans = [m.span() for m in re.finditer(r"\S+", row)]
            a, b = spans[5]  # pointer, train, sky, err, worst, drift
            drift = row[a:b]
            assert re.fullmatch(r"[+-][\d,]+\.\d+", drift), row
            decimals.add(len(drift.split(".")[1]))
            ends.add(b)
        assert decimals == {4}, rows  # one under 0.01 °/cy: four for all
        assert len(ends) == 1, rows  # right edges in line
        assert len(rows) == 5 and narrow == (size == (80, 24))
    # the rule itself (engine.figures.drift_places) is tested in tests/test_support.py


@sync
async def test_the_wide_readings_head_no_empty_err_days_column():
    """The table orrery has no phase pointer nor cycle dial: its wide readings headed an "err
    days" column with nothing under it (common practice, no source: no column without
    figures); the tide office's phase keeps it."""
    for train, want in (("table_orrery", False), ("tide_office", True)):
        app = make_app(TRAINS / f"{train}.toml")
        async with app.run_test(size=(160, 50)) as pilot:
            await pilot.pause()
            readings = app.screen.query_one(Readings)
            assert readings.size.width >= 61  # the wide columns
            head = text_of(readings).splitlines()[0]
            assert ("err days" in head) == want, head
            assert head.rstrip().endswith("err days" if want else "drift °/cy"), head


TRAINS = Path(__file__).parents[1] / "engine" / "trains"


@pytest.mark.parametrize("size", [(80, 24), (120, 40)])
@sync
async def test_readings_tell_apart_pointers_whose_names_begin_alike(size, tmp_path):
    """Two pointers named eclipse_ring and eclipse_hand once both read 'eclipse_…'; the name
    column takes the panel's spare width, and a cut keeps the names apart."""
    text = (TRAINS / "eclipse_board.toml").read_text()
    text = text.replace("[pointers.sun]", "[pointers.eclipse_ring_sun]")
    text = text.replace("[pointers.node]", "[pointers.eclipse_ring_node]")
    path = tmp_path / "alike.toml"
    path.write_text(text)
    app = make_app(path)
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        rows = text_of(app.screen.query_one(Readings)).splitlines()[1:]
        names = [row.split()[0] for row in rows if row.strip()]
        assert len(names) == len(app.session.now().pointers)
        assert len(set(names)) == len(names), names
        for shown in names:
            head, _, tail = shown.partition("…")
            assert any(n.startswith(head) and n.endswith(tail)
                       for n in app.session.now().pointers), shown



@sync
async def test_palette_lines_name_keys_as_people_read_them():
    app = make_app()
    async with app.run_test(size=SIZE):
        helps = {c.title: c.help for c in app.get_system_commands(app.screen)}
        assert helps["crank 1000 turns forward"] == "key ]"
        assert helps["crank 100 turns back"] == "key PgDn"
        assert helps["help: keys and caution"] == "key ? or F1"
        for text in helps.values():
            assert "_" not in (text or ""), text  # no right_square_bracket, full_stop, ...


@sync
async def test_a_long_paste_is_shortened_in_the_error_but_the_limits_stay():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("g")
        await pilot.pause()
        paste = "2040-06-21 " + "x" * 5000
        app.screen.query_one("#date-input").value = paste
        await pilot.press("enter")
        await pilot.pause()
        error = text_of(app.screen.query_one("#date-error"))
        assert len(error) < 400 and "5,011 characters" in error, error
        assert app.screen.query_one("#date-input").value == paste  # nothing typed is lost
    from tui.screens import shorten_echo

    typed = "9" * 300
    msg = f"step {typed} turns: choose more than 0 and at most 1,000,000,000 turns"
    short = shorten_echo(msg, typed)
    assert "1,000,000,000" in short and "300 characters" in short and len(short) < 150
    assert shorten_echo("bad date '1e5'", "1e5") == "bad date '1e5'"


def test_screenshot_goes_to_a_folder_that_exists_and_says_where(tmp_path, monkeypatch):
    home = tmp_path / "home"  # a home with no Downloads folder
    home.mkdir()
    work = tmp_path / "work"
    work.mkdir()
    monkeypatch.setenv("HOME", str(home))
    monkeypatch.setenv("XDG_DOWNLOAD_DIR", str(home / "Downloads"))
    monkeypatch.chdir(work)

    @sync
    async def run():
        app = make_app()
        async with app.run_test(size=(80, 24)) as pilot:
            saved = app.deliver_screenshot()
            await pilot.pause()
            assert saved is not None and Path(saved).parent == work
            assert Path(saved).read_text().startswith("<svg")
            assert not (home / "Downloads").exists()  # nothing made that was not asked for
            assert any(str(work) in n.message for n in app._notifications)
            app.screenshot_dir = tmp_path / "missing"
            assert app.deliver_screenshot() is None
            await pilot.pause()
            assert any("cannot save" in n.message for n in app._notifications)

    run()


def test_default_speed_keeps_the_fastest_hand_from_strobing():
    from tui.session import FPS, default_speed_index

    for name in ("tide_office", "nineteen_year_drum", "moon_disc_59"):
        app = make_app(TRAINS / f"{name}.toml")
        s = app.session
        fastest = max(abs(float(m.cycles_per_turn)) for m in s.readout.motions.values())
        per_frame = fastest * s.speed_turns_per_s / FPS
        assert per_frame < 0.5, name  # a hand turning half a turn a frame seems to stand
        assert s.speed_index == default_speed_index(s.mech)
        assert per_frame <= 1 / 6 or s.speed_index == 0, name
        if name == "tide_office":
            assert s.speed_turns_per_s == 10  # a day a turn: the usual default
        if name == "nineteen_year_drum":  # a year a turn: 13.4 Moon turns per crank turn
            assert s.speed_turns_per_s < 1


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_a_phase_only_train_shows_its_phase_discs_where_the_dial_would_be(size):
    from tui.widgets import PhaseDiscs

    app = make_app(TRAINS / "moon_disc_59.toml")
    async with app.run_test(size=size) as pilot:
        await pilot.press("up")
        await pilot.pause()
        assert not app.screen.query(SkyDial)
        discs = app.screen.query_one("#phase-main", PhaseDiscs)
        assert discs.display and discs.size.height >= 6
        lines = [s.text for s in discs._strips]
        assert any("▀" in line or "▄" in line for line in lines)
        assert any("true Moon" in line for line in lines)
        assert "phase" in str(app.screen.query_one("#dial-pane").border_title)
        # both captions whole, however narrow the pane: elongation and lit share
        caption = next(line for line in lines if "°" in line)
        assert caption.count("%") == 2 and caption.count("°") == 2, caption


@pytest.mark.parametrize("train, size", [("tide_office", (160, 50)),
                                         ("nineteen_year_drum", (160, 50)),
                                         ("moon_disc_59", (80, 24)), ("moon_disc_59", (160, 50))])
@sync
async def test_each_phase_disc_stands_over_its_caption(train, size):
    """Each disc centred over its caption ("train: phase", "true Moon"): on a wide panel the
    sky's disc stood flush left in its half, 16 cells left of "true Moon" at 160 x 50 (common
    practice, no source: a caption is centred under what it names)."""
    from tui.widgets import PhaseDiscs

    app = make_app(TRAINS / f"{train}.toml")
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        await pilot.pause()
        discs = app.screen.query(PhaseDiscs).first()
        lines = [s.text for s in discs._strips]
        caption = next(line for line in lines if "true Moon" in line)
        disc_rows = [line for line in lines if line.strip() and not any(
            c.isalpha() or c.isdigit() for c in line)]
        assert disc_rows, lines
        half = (len(caption) - 3) // 2  # two halves, a gap of 3 between
        for lo, hi, word in ((0, half, caption[:half].strip()),
                             (half + 3, len(caption), "true Moon")):
            cells = [i for row in disc_rows for i, c in enumerate(row) if lo <= i < hi
                     and c != " "]
            if not cells:  # a disc wholly dark in a theme's colours still has its cells
                continue
            mid_disc = (min(cells) + max(cells)) / 2
            start = caption.index(word, lo)
            mid_caption = start + (len(word) - 1) / 2
            assert abs(mid_disc - mid_caption) <= 1.5, (word, mid_disc, mid_caption, lines)


def _contrast(a, b) -> float:
    """WCAG contrast ratio of two textual Colors (common practice, no source)."""
    def lum(c):
        def ch(v):
            v = v / 255
            return v / 12.92 if v <= 0.03928 else ((v + 0.055) / 1.055) ** 2.4
        return 0.2126 * ch(c.r) + 0.7152 * ch(c.g) + 0.0722 * ch(c.b)
    hi, lo = sorted((lum(a), lum(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


@sync
async def test_an_ansi_theme_draws_in_terminal_colours():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        app.theme = "ansi-dark"
        await pilot.pause()
        await pilot.press("right_square_bracket")
        await pilot.pause()
        app.save_screenshot("ansi-theme-check.svg", str(Path(__file__).parent))  # renders
        Path(__file__).with_name("ansi-theme-check.svg").unlink()
        assert isinstance(app.screen, BenchScreen)


@pytest.mark.parametrize("theme", ["textual-light", "textual-dark", "solarized-light"])
@sync
async def test_readings_stand_out_in_light_and_dark_themes(theme):
    from textual.color import Color

    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        app.theme = theme
        await pilot.pause()
        await pilot.press("right_square_bracket")
        await pilot.pause()
        screen_bg = app.screen.styles.background
        assert screen_bg.hex == Color.parse(app.theme_variables["background"]).hex
        fg = Color.parse(app.theme_variables["foreground"])
        assert _contrast(fg, screen_bg) >= 4.5
        for widget in (app.screen.query_one(Readings), app.screen.query_one(Status)):
            content = widget.content
            for span in content.spans:
                style = span.style if not isinstance(span.style, str) else None
                colour = str(span.style).replace("bold", "").replace("italic", "").strip()
                if style is None and colour.startswith("#"):
                    assert _contrast(Color.parse(colour), screen_bg) >= 3.0, (theme, colour)


def test_snapshot_main_light_theme(snap_compare):
    async def run_before(pilot):
        pilot.app.theme = "textual-light"
        await pilot.pause()

    assert snap_compare(_app_at("2026-03-20 12:00"), terminal_size=(100, 30),
                        run_before=run_before)


def test_snapshot_main_dark_theme(snap_compare):
    async def run_before(pilot):
        pilot.app.theme = "textual-dark"
        await pilot.pause()

    assert snap_compare(_app_at("2026-03-20 12:00"), terminal_size=(100, 30),
                        run_before=run_before)


@pytest.mark.parametrize("theme", ["textual-light", "textual-dark", "solarized-light",
                                   "catppuccin-latte"])
@sync
async def test_sky_dial_ring_signs_and_hub_stand_out_in_the_theme(theme):
    """The dial's hub, ring and sign names take their colours from the theme, so a light
    theme does not leave a white hub and a faint ring (WCAG ratios: 4.5 for text, 3 for
    graphics; common practice, no source)."""
    from textual.color import Color

    app = make_app()
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        app.theme = theme  # changed after the dial was first drawn, as from the palette
        await pilot.pause()
        await pilot.press("right")
        await pilot.pause()
        dial = app.screen.query_one(SkyDial)
        bg = Color.parse(app.theme_variables["background"])
        chars, styles = canvas_rows(dial)
        _, _, r = dial._geom
        for k in range(12):
            x, y, name = dial._sign_cells(r, k)
            assert "".join(chars[y][x:x + len(name)]) == name
            assert _contrast(Color.parse(styles[y][x]), bg) >= 4.5, (theme, name, styles[y][x])
        hub = [(y, x) for y, row in enumerate(chars) for x, ch in enumerate(row) if ch == "●"]
        assert len(hub) == 1
        assert _contrast(Color.parse(styles[hub[0][0]][hub[0][1]]), bg) >= 4.5, theme
        ring = {st for row, srow in zip(chars, styles, strict=True)
                for ch, st in zip(row, srow, strict=True)
                if "\u2800" < ch <= "\u28ff" and st.startswith("#")}  # hands and arcs: bold
        assert len(ring) == 2  # the ring and its brighter 30° graduations
        for st in ring:
            assert _contrast(Color.parse(st), bg) >= 3.0, (theme, st)


@sync
async def test_phase_discs_take_a_new_theme_background():
    """The discs' pane keeps no colours of the theme it was first drawn in."""
    from tui.widgets import PhaseDiscs

    app = make_app()
    async with app.run_test(size=(120, 40)) as pilot:  # at 100x30 the warnings take the rows
        await pilot.pause()
        app.theme = "textual-light"
        await pilot.pause()
        await pilot.pause()
        discs = app.screen.query_one(PhaseDiscs)
        assert discs.display and discs.size.height >= 4
        want = discs.rich_style.bgcolor
        for strip in discs._strips[-3:]:  # the caption rows
            for seg in strip:
                assert seg.style.bgcolor == want, seg


def _shown(widget) -> str:
    """What a widget shows on screen, line by line, without whitespace."""
    return "".join("".join(widget.render_line(y).text.split())
                   for y in range(widget.size.height))


def _content(widget) -> str:
    return "".join(str(getattr(widget.content, "plain", widget.content)).split())


@sync
async def test_a_long_train_name_folds_in_the_title_at_80_columns(tmp_path):
    """Outputs are never cut short: a long name (a long word too) folds onto more lines."""
    demo = Path(__file__).parents[1] / "engine" / "trains" / "tide_office.toml"
    name = ("The harbour master's great tide office wall dial with a long descriptive name "
            + "and_one_unbroken_part_" * 4)
    text = demo.read_text(encoding="utf-8").replace('name = "Tide office dial"',
                                                     f'name = "{name}"')
    train = tmp_path / "long_named_train.toml"
    train.write_text(text, encoding="utf-8")
    app = make_app(train)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        title = app.screen.query_one("#title")
        assert title.size.height >= 2
        shown = _shown(title)
        assert "".join(name.split()) in shown
        assert shown == _content(title)  # the file name and the help hint too


@sync
async def test_drift_chart_title_and_status_fold_at_80_columns():
    app = make_app(Path(__file__).parents[1] / "engine" / "trains" / "planet_dial.toml")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_chart(pilot, app)
        assert isinstance(app.screen, DriftScreen)
        for wid in ("#drift-title", "#drift-status"):
            widget = app.screen.query_one(wid)
            assert _shown(widget) == _content(widget), wid
        assert "threshold" in _shown(app.screen.query_one("#drift-title"))
        assert "capped" in _shown(app.screen.query_one("#drift-status"))


def _rows_of_curves(plot) -> int:
    """The text rows between the drift plot's frame lines: its height less the margins above
    (y label) and below (years, x label) and the two frame rows."""
    return plot.size.height - plot.margin_top - plot.margin_bottom - 2


@pytest.mark.parametrize("demo", ["tide_office", "table_orrery"])
@sync
async def test_drift_chart_at_80x24_keeps_ten_rows_of_curves_and_scrolls_the_table(demo):
    """At 80×24 the plot keeps at least ten rows of curves (common practice, no source: fewer
    and the ±threshold lines and y labels crowd onto neighbouring rows); the table takes what
    is left and ↑ ↓ scroll it until its last row is in view; the solar caution stays on screen.
    At 160×50 the table fits whole and the scroll keys stay out of the footer."""
    from engine.demos import demo_path

    app = make_app(demo_path(demo))
    async with app.run_test(size=(80, 24)) as pilot:
        await open_chart(pilot, app)
        screen = app.screen
        assert isinstance(screen, DriftScreen)
        plot, table = screen.query_one("#drift-plot"), screen.query_one("#drift-table")
        summary = screen.query_one("#drift-summary")
        assert _rows_of_curves(plot) >= 10, plot.size
        caution = screen.query_one("#drift-caution")
        footer_top = screen.query_one("Footer").region.y
        assert caution.region.height >= 1 and caution.region.bottom <= footer_top
        assert "solarfilter" in _shown(caution)  # (_shown drops the spaces)
        last_name = list(app.session.mech.train.pointers)[-1]
        last_line = summary.render_line(summary.size.height - 1).text
        assert last_name in last_line  # the table's last row is the last pointer's

        def last_row_in_view() -> bool:
            y = summary.region.bottom - 1
            view = table.scrollable_content_region
            return view.y <= y < view.bottom

        assert not last_row_in_view()  # too long to fit at 80×24: it must scroll
        await wait_for(pilot, lambda: {"table(1)", "table(-1)"} <= set(_footer_keys(app)),
                       "↑↓ table in the footer")
        for _ in range(summary.size.height):
            await pilot.press("down")
        await wait_for(pilot, last_row_in_view, "the table's last row to scroll into view")
        assert table.scroll_y == table.max_scroll_y
        page = table.scrollable_content_region.height - 1
        await pilot.press(*["pageup"] * -(-table.max_scroll_y // page))  # pages to the top
        await wait_for(pilot, lambda: table.scroll_y == 0, "PgUp to go back to the top")
        # a change to the train: its note heads the table, the plot keeps its rows
        screen.changed = "[arbors.x] wheel 'w': 59 → 60"
        screen.start()
        await app.workers.wait_for_complete()
        note = screen.query_one("#drift-changed")
        await wait_for(pilot, lambda: note.display and note.region.height >= 1
                       and note.region.y == table.scrollable_content_region.y,
                       "the note of the change to head the table")
        assert _rows_of_curves(plot) >= 10, plot.size
        await pilot.resize_terminal(160, 50)
        await wait_for(pilot, lambda: table.max_scroll_y == 0 and last_row_in_view()
                       and not {"table(1)", "table(-1)"} & set(_footer_keys(app)),
                       "the whole table in view at 160×50 and its scroll keys gone")


@sync
async def test_drift_chart_threshold_follows_the_theme():
    """The ±threshold lines and their key in the title are drawn in the theme's text colour:
    white lines vanished on a light theme. Switching theme with the chart open draws them
    again from the result already computed."""
    from rich.style import Style
    from textual.color import Color

    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await open_chart(pilot, app)
        screen = app.screen
        result = screen.result
        app.theme = "textual-light"
        v = app.theme_variables
        fg, bg = Color.parse(v["foreground"]), Color.parse(v["background"])
        assert abs(fg.brightness - bg.brightness) > 0.5  # a dark line on a light ground

        def key_colour():
            title = screen.query_one("#drift-title").content
            key = next(span for span in title.spans
                       if title.plain[span.start:span.end] == "━━")
            return Color.from_rich_color(Style.parse(str(key.style)).color)

        await wait_for(pilot, lambda: key_colour() == fg, "the title's key in the new theme")
        assert screen.result is result  # drawn again, not computed again
        lines = [d for d in screen.query_one("#drift-plot")._datasets
                 if len(d.x) == 2 and abs(float(d.y[0])) == result_threshold(result)]
        assert len(lines) == 2
        assert all(fg.hex.lower() in str(d.line_style).lower() for d in lines), lines


def result_threshold(result) -> float:
    return next(iter(result.summaries.values())).threshold_deg


@pytest.mark.parametrize("demo, eclipses", [("tide_office", True), ("planet_dial", False)])
@sync
async def test_footer_fits_at_every_width_and_shows_eclipse_keys_on_an_eclipse_train(
        demo, eclipses):
    """From 80 columns up, through every width where a key comes in, the footer's keys stay in
    view beside the palette key; a train that predicts eclipses has x z p at 80 columns, one
    that does not leaves them to help and the palette (they still work)."""
    from tui.screens import FOOTER_ECLIPSE_TRAIN

    app = make_app(Path(__file__).parents[1] / "engine" / "trains" / f"{demo}.toml")
    table = FOOTER_FROM_WIDTH | (FOOTER_ECLIPSE_TRAIN if eclipses else {})
    widths = sorted({80, 99, 119, 120, *(w for w in table.values() if w >= 80),
                     *(w - 1 for w in table.values() if w > 80)})
    async with app.run_test(size=(80, 24)) as pilot:
        for width in widths:
            await pilot.resize_terminal(width, 24)
            want = {b.action for b in BenchScreen.BINDINGS if table.get(b.action, 0) <= width}
            # the footer is laid out again after the resize: wait for its keys, not a pause
            await wait_for(pilot, lambda want=want, width=width: app.screen.size.width == width
                           and set(_footer_keys(app)) - {"palette"} == want,
                           f"the footer's keys for {width} columns")
            keys = _footer_keys(app)
            edge = keys.pop("palette")[0] if "palette" in keys else width
            for action, (_, right) in keys.items():
                assert right <= edge, (demo, width, action)
            assert want == set(keys), (demo, width)
            if width == 80:
                assert {"eclipse(1)", "eclipse(-1)", "predicted"} <= set(keys) or not eclipses
        await pilot.resize_terminal(80, 24)
        await pilot.pause()
        before = app.session.jd_now()
        await pilot.press("x")  # in a narrow footer or not, the key works
        await pilot.pause()
        assert app.session.jd_now() > before


@sync
async def test_readings_and_status_rows_are_what_a_static_draws():
    """Readings and Status repaint only the rows that changed; the rows they serve are those
    Textual draws for the whole text at once (wrapped and cut the same way), after cranks,
    a frame change, a narrow screen and a row too long for its width."""
    from textual.visual import Visual
    from textual.widgets import Static

    def whole(widget) -> list:
        w, h = widget.size
        return Visual.to_strips(widget, widget.visual, w, h, widget.visual_style)

    def served(widget) -> list:
        return [widget.render_line(y) for y in range(widget.size.height)]

    for size in ((160, 50), (80, 24)):
        app = make_app()
        async with app.run_test(size=size) as pilot:
            for keys in ((), ("right",), ("up", "t"), ("right_square_bracket", "o")):
                await pilot.press(*keys)
                await pilot.pause()
                for widget in (app.screen.query_one(Readings), app.screen.query_one(Status)):
                    rows = whole(widget)
                    assert served(widget)[:len(rows)] == rows, (size, keys, type(widget))
            readings = app.screen.query_one(Readings)
            assert isinstance(readings, Static)
            long = readings.content.copy()
            long.append("\n" + "9" * (readings.size.width * 2 + 3), style="bold")
            readings.put_text(long)
            await pilot.pause()
            assert served(readings) == whole(readings)
            assert readings.size.height == len(whole(readings))  # laid out again: taller


@sync
async def test_train_drawing_redrawn_in_a_new_theme():
    """A theme picked from the palette draws the train again: no rows kept in the old theme's
    background, hands and labels readable on the new one (contrast 3 at least; common
    practice, no source)."""
    from textual.color import Color

    from tui.widgets import TrainView

    app = make_app()
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.press("right")
        await pilot.pause()
        view = app.screen.query_one(TrainView)
        for y in range(view.size.height):  # rows drawn (and kept) in the dark theme
            view.render_line(y)
        app.theme = "textual-light"
        await pilot.pause()
        await pilot.pause()
        bg = Color.parse(app.theme_variables["background"])
        want = view.rich_style.bgcolor
        for y in range(view.size.height):
            for seg in view.render_line(y):
                if seg.style is not None and seg.style.bgcolor is not None:
                    assert seg.style.bgcolor == want, (y, seg)
        chars, styles = canvas_rows(view)
        hands = {st for row, srow in zip(chars, styles, strict=True)
                 for ch, st in zip(row, srow, strict=True) if st.startswith("bold #")}
        labels = {srow[x] for row, srow in zip(chars, styles, strict=True)
                  for x, ch in enumerate(row) if ch.isalpha()}
        for st in hands | labels:
            assert _contrast(Color.parse(st.replace("bold ", "")), bg) >= 3.0, st


@sync
async def test_findings_end_with_the_design_estimates_line_not_counted():
    """Speeds and loads in the warnings panel are design estimates, and the panel says so (the
    check's caveat, last, dim), without counting it as a finding."""
    from engine.checks import CAVEAT
    from engine.demos import demo_path
    from engine.mechanism import open_train
    from tui.app import engine_findings
    from tui.widgets import Findings

    items = engine_findings(open_train(demo_path("table_orrery")))
    assert items[-1] == ("caveat", "", CAVEAT, "")
    app = make_app()
    app.session.findings = [("warning", "[arbors.moon]", "turns 13.4 times as fast", ""),
                            ("caveat", "", CAVEAT, "")]
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        text = " ".join(text_of(app.screen.query_one(Findings)).split())
        assert text.startswith("▲ warning [arbors.moon]")
        assert text.endswith(" ".join(CAVEAT.split()))
        title = str(app.screen.query_one("#findings-pane").border_title)
        assert title == "warnings & notes: 1 warning"


def test_status_writes_delta_t_in_grouped_figures_as_the_commands_do():
    """In antiquity ΔT runs to five figures: the status line wrote 12816.7 s where
    `wheelwork sky` writes 12,816.7 s (numbers through engine.figures); and to the decimals
    its σ knows, where it wrote a tenth of a second beside a σ of 328 s (common practice, no
    source: a value carries no digits below its uncertainty's)."""
    from tui.widgets import Status

    assert Status.delta_t_text(12816.71, 328.4) == "12,817 s ± 328 s"
    assert Status.delta_t_text(172_000.0, 1860.2) == "172,000 s ± 1,860 s"
    assert Status.delta_t_text(12816.71, 0.0) == "12,816.7 s ± 0 s"  # no σ: a tenth
    assert Status.delta_t_text(69.13, 0.00101) == "69.1 s ± 0.001 s"  # as the demo shows
    assert Status.delta_t_text(69.13, 2.04) == "69.1 s ± 2.0 s"


@sync
async def test_jupiter_and_saturn_drifts_say_which_mean_they_are_against():
    """The table orrery's Jupiter and Saturn read -0.0008 and +0.0001 °/cy in the readings:
    against JPL's 1800-2050 mean periods, which the great inequality moves by 52 and 309 ppm
    (engine.periods.era_spread_ppm; astronomy-engine's periods, tests/test_planets.py). Their
    names are marked and a line under the table says so, whole at 80 x 24 and 160 x 50 (in
    its fullest form that takes one line: at 80 x 24 the panel has no room for a second);
    the tide office, with neither, has no mark."""
    for size in ((80, 24), (160, 50), (250, 70)):
        app = make_app(TRAINS / "table_orrery.toml")
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            readings = app.screen.query_one(Readings)
            text = text_of(readings)
            firsts = [line.split()[0] for line in text.splitlines() if line.split()]
            assert "jupiter*" in firsts and "saturn*" in firsts and "mars" in firsts, text
            note = " ".join(text[text.index("\n* ") + 1:].split())
            assert "1800-2050 mean" in note, note
            assert "52/309 ppm" in note or "jupiter 52 ppm, saturn 309 ppm" in note, note
            # wrapped, never cut: the panel is as tall as the wrapped lines, and on screen
            wide = readings.size.width
            rows = sum(-(-max(len(line.rstrip()), 1) // wide) for line in text.splitlines())
            await wait_for(pilot, lambda w=readings, r=rows: w.size.height == r,
                           "the readings laid out to their wrapped lines")
            assert readings.region.bottom <= app.screen.region.bottom
            if size == (250, 70):
                assert "jupiter 52 ppm, saturn 309 ppm" in note, note
    app = make_app(TRAINS / "tide_office.toml")
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert "*" not in text_of(app.screen.query_one(Readings))


TIDE_RING = """
[train]
name = "Tide ring"
[epoch]
date = "2026-01-01 00:00"
set = "sky"
[crank]
arbor = "twelve_hour"
days_per_turn = 0.5
[arbors.twelve_hour]
wheels = { pin = 1 }
[arbors.moon_disc]
wheels = { disc = 118, tide_driver = 60 }
[arbors.tide]
wheels = { tide_pinion = 15 }
[[meshes]]
wheels = ["pin", "disc"]
[[meshes]]
wheels = ["tide_driver", "tide_pinion"]
[pointers.moon_phase]
shows = "phase"
arbor = "moon_disc"
per_turn = 2
reversed = true
[pointers.high_water]
shows = "phase"
arbor = "moon_disc"
per_turn = "1/2"
"""


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_a_figure_too_wide_for_its_row_stays_with_its_pointer(size, tmp_path):
    """The tide ring of docs/train-format.md with its high-water hand on the disc's arbor
    drifts -556,699 °/cy; 3,000 turns on, its err° and max° are +176.04 and 176.04 and the
    drift no longer fits beside them at 80 x 24: it wrapped to column 0, where it read as a
    row of another pointer. It goes on a line led by the column's name, ending where the
    column ends; nothing is cut, and at 160 x 50 the row keeps it."""
    path = tmp_path / "tide_ring.toml"
    path.write_text(TIDE_RING)
    app = make_app(path)
    async with app.run_test(size=size) as pilot:
        await pilot.press(*["right_square_bracket"] * 3)
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        width = readings.size.width
        drift_value = app.session.now().pointers["high_water"].drift_deg_per_century
        assert round(drift_value) == -556_699  # the figure the user saw
        lines = text_of(readings).splitlines()
        assert all(len(line) <= width for line in lines), lines  # no line wraps on its own
        row = next(i for i, line in enumerate(lines) if line.startswith("high_wa"))
        head = lines[0]
        assert "+176.04" in lines[row].split() and "176.04" in lines[row].split()
        if size == (80, 24):
            carried = lines[row + 1]
            assert carried.startswith("  ↳ °/cy"), lines  # Readings.CARRIED and the column
            assert carried.split()[-1] == "-556,699", lines
            # right edge under the header's °/cy: the column the figure belongs to
            assert len(carried) == head.index("°/cy") + len("°/cy"), lines
            assert "-556,699" not in lines[row]
        else:
            assert "-556,699" in lines[row].split() and len(lines) == 3, lines
        # no line but the header and the pointers' rows begins at column 0 with a figure
        assert not any(line[:1] in "+-0123456789" for line in lines if line), lines
