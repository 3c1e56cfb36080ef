"""The interface, driven by Textual's Pilot: every key, the readouts against the drift engine,
dialogs that keep bad input, resizing, and whole-screen snapshots.

The app is built by :func:`tui.app.make_app`, the same factory ``wheelwork crank`` uses.
"""

import asyncio
import functools
import io
from fractions import Fraction

import numpy as np
import pytest
from rich.console import Console

from engine.dates import parse_date
from engine.drift import pointer_errors
from tui.app import make_app
from tui.screens import (
    BenchScreen,
    DateDialog,
    DriftScreen,
    HelpScreen,
    StepDialog,
    long_help,
)
from tui.session import SPEEDS
from tui.widgets import CAUTION, Readings, Status

SIZE = (120, 40)


def sync(fn):
    """Run an async Pilot test on a fresh event loop (no async plugin needed)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        asyncio.run(fn(*args, **kwargs))
    return wrapper


ARCSEC = 1 / 3600


def whole_turns(app) -> float:
    return float(app.session.turns.to_float())


def bench(app) -> BenchScreen:
    assert isinstance(app.screen, BenchScreen)
    return app.screen


def text_of(widget) -> str:
    """A Static's content as plain text (tables rendered wide, no wrapping)."""
    console = Console(width=300, file=io.StringIO(), record=True)
    console.print(widget.content)
    return console.export_text()


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
        assert f"{float(e.error_deg[0]):+.2f}" in table, name


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
        assert "expected a number" in text_of(app.screen.query_one("#step-error"))
        app.screen.query_one("#step-input").value = "1/24"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.step == Fraction(1, 24)
        await pilot.press("plus", "plus")
        await pilot.pause()
        assert app.session.turns.to_float() == pytest.approx(2 / 24)
        check_readout(app)


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
        await pilot.pause(0.3)
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
async def test_drift_chart_cancel():
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("d", "c")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert isinstance(app.screen, DriftScreen)
        status = text_of(app.screen.query_one("#drift-status")).strip()
        assert status in ("cancelled", "done")
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)


def test_drift_failure_is_reported_on_the_chart_screen(monkeypatch):
    import engine.drift

    def broken(*args, **kwargs):
        raise engine.drift.DriftError("threshold nonsense")

    monkeypatch.setattr(engine.drift, "drift_series", broken)

    @sync
    async def run():
        app = make_app()
        async with app.run_test(size=SIZE) as pilot:
            await pilot.press("d")
            await app.workers.wait_for_complete()
            await pilot.pause()
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
        await pilot.pause(0.3)
        await pilot.press("enter")
        await pilot.pause(0.3)
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
        await pilot.pause()
        assert train.display and phase.display


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

    code = ("import sys, engine.cli, engine.commands.crank; "
            "engine.cli.build_parser(); "
            "assert 'textual' not in sys.modules and 'tui' not in sys.modules, 'UI imported'")
    subprocess.run([sys.executable, "-c", code], check=True)
