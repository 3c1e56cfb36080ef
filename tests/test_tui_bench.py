"""The bench's own conveniences, driven by Textual's Pilot: jump to now, run backwards, steps
in days with "1 turn = N days" in view, re-setting one pointer or to mean positions, a
screenshot to a chosen path, and the open screen (recent files kept across runs, folders
above the start, a typed path).

Every test that could touch the user's config folder points XDG_CONFIG_HOME at a temporary one.
"""

from datetime import UTC, datetime
from fractions import Fraction
from pathlib import Path

import pytest

from engine.dates import parse_date
from engine.demos import demo_path
from tests.tui_support import sync, text_of, wait_for
from tui.app import make_app
from tui.screens import BenchScreen, StepDialog
from tui.widgets import Status

SMALL, LARGE = (80, 24), (160, 50)


@pytest.fixture(autouse=True)
def _own_home(tmp_path, monkeypatch):
    """Never the real home (tests/conftest.py gives each test its own config folder too)."""
    monkeypatch.setenv("HOME", str(tmp_path / "home"))




def status_lines(app) -> list[str]:
    return text_of(app.screen.query_one(Status)).splitlines()


# --- jump to now -------------------------------------------------------------------------------

@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_n_jumps_to_now(size):
    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.press("n")
        await pilot.pause()
        # the calendar route to this moment (UTC ≈ UT) gives the same date, within a minute
        want = parse_date(datetime.now(UTC).strftime("%Y-%m-%d %H:%M:%S"))
        assert abs(app.session.jd_now() - want) * 1440 < 1
        date_line = next(line for line in status_lines(app) if line.startswith("date"))
        assert datetime.now(UTC).strftime("%Y-%m-%d") in date_line


@sync
async def test_now_outside_the_ephemeris_is_refused_and_the_crank_stays(monkeypatch):
    import tui.session

    monkeypatch.setattr(tui.session, "jd_now", lambda clock=None: parse_date("2090-01-01"))
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("right")
        await pilot.press("n")
        await pilot.pause()
        assert app.session.turns.to_float() == 1
        assert any("outside the ephemeris" in str(n.message) for n in app._notifications)


# --- running backwards ---------------------------------------------------------------------------

@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_b_runs_backwards_and_the_status_says_so(size):
    app = make_app()
    async with app.run_test(size=size) as pilot:
        bench = app.screen
        await pilot.press("b")
        await pilot.pause(0.3)
        assert bench.running and app.session.direction == -1
        assert app.session.turns.to_float() < 0
        run = next(line for line in status_lines(app) if line.startswith("run"))
        assert "◀" in run and "back" in run
        await pilot.press("space")  # the other way round, without a pause
        await pilot.pause(0.3)
        assert bench.running and app.session.direction == 1
        before = app.session.turns.to_float()
        await pilot.pause(0.3)
        assert app.session.turns.to_float() > before
        run = next(line for line in status_lines(app) if line.startswith("run"))
        assert "▶" in run and "back" not in run
        await pilot.press("space")  # space pauses a forward run
        await pilot.pause()
        assert not bench.running
        await pilot.press("b", "b")  # b pauses a backward run
        await pilot.pause()
        assert not bench.running
        assert "paused" in next(line for line in status_lines(app) if line.startswith("run"))


# --- steps in days, and what one turn stands for ---------------------------------------------------

@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_step_in_days_on_a_month_crank(size):
    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=size) as pilot:
        # one turn = 29.530589 days on this train, shown on the bench at all times
        assert any("1 turn = 29.530589 d" in line for line in status_lines(app))
        await pilot.press("s")
        await pilot.pause()
        assert isinstance(app.screen, StepDialog)
        assert "1 turn = 29.530589 days" in text_of(app.screen.query_one("#step-hint"))
        app.screen.query_one("#step-input").value = "3d"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.step == Fraction(3) / Fraction("29.530589")
        start = app.session.jd_now()
        await pilot.press("plus", "plus")
        await pilot.pause()
        assert app.session.jd_now() - start == pytest.approx(6.0, abs=1e-6)  # two steps, 6 days
        crank = next(line for line in status_lines(app) if line.startswith("crank"))
        assert "step 3d" in crank
        await pilot.press("minus")
        await pilot.pause()
        assert app.session.jd_now() - start == pytest.approx(3.0, abs=1e-6)
        # the dialog offers the step as it was written
        await pilot.press("s")
        await pilot.pause()
        assert app.screen.query_one("#step-input").value == "3d"
        # (the step that is taken comes last: each before it must be refused; 99,999,999,999
        # Julian years of 365.25 days are 1,236,853,081,380.6 turns of 29.530589 days)
        for typed, words in (("12x", "unknown unit"), ("0d", "too small"),
                             ("99999999999y", "at most 100,000,000,000 turns (99999999999y "
                                              "= 1,236,853,081,381 turns)"),
                             ("7000y", "longer than the whole of JPL DE406"), ("1y", None)):
            app.screen.query_one("#step-input").value = typed
            await pilot.press("enter")
            await pilot.pause()
            if words is None:
                break
            assert isinstance(app.screen, StepDialog)
            assert words in text_of(app.screen.query_one("#step-error")), typed
        assert isinstance(app.screen, BenchScreen)
        assert app.session.step == Fraction(1461, 4) / Fraction("29.530589")


@sync
async def test_turn_days_in_view_while_running_back_at_80_columns():
    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=SMALL) as pilot:
        for _ in range(8):
            app.session.faster()  # the widest speed figure
        await pilot.pause()
        bench, status = app.screen, app.screen.query_one(Status)
        app.session.set_direction(-1)
        bench.running = True  # draw the running state without running the clock
        bench.refresh_view()
        bench.running = False
        lines = status_lines(app)
        assert any("1 turn = 29.530589 d" in line for line in lines), lines
        assert any("◀" in line for line in lines), lines
        assert all(len(line.rstrip()) <= status.size.width for line in lines), lines
        assert not any("…" in line for line in lines), lines


# --- re-setting one pointer, or to mean positions ----------------------------------------------

ARCSEC = 1 / 3600


@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_re_set_one_pointer_to_the_sky_and_undo(size):
    from tui.screens import ResetDialog

    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.press("right_square_bracket")  # a thousand days out: errors of degrees
        await pilot.pause()
        before = {n: p.error_deg for n, p in app.session.now().pointers.items()}
        offsets = app.session.readout.offsets_deg()
        await pilot.press("R")
        await pilot.pause()
        assert isinstance(app.screen, ResetDialog)
        names = list(app.session.mech.train.pointers)
        moon = names.index("moon")
        await pilot.press(*["down"] * (moon + 1), "enter")  # past "all pointers"
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        after = {n: p.error_deg for n, p in app.session.now().pointers.items()}
        assert abs(before["moon"]) > 1 and after["moon"] == pytest.approx(0, abs=ARCSEC)
        for n in names:
            if n != "moon":
                assert after[n] == pytest.approx(before[n], abs=1e-9), n
        await pilot.press("u")
        await pilot.pause()
        assert app.session.readout.offsets_deg() == offsets


@sync
async def test_m_re_sets_every_pointer_to_its_mean_position_and_undo():
    from engine.readout import mean_values

    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("right_square_bracket")
        await pilot.pause()
        offsets = app.session.readout.offsets_deg()
        await pilot.press("m")
        await pilot.pause()
        s = app.session
        want = mean_values(s.mech.train, s.jd_now(), s.sky, s.frame)
        now = s.now()
        for n, value in want.items():
            got = now.pointers[n].train_deg
            assert (got - value + 180) % 360 - 180 == pytest.approx(0, abs=ARCSEC), n
        # mean, not true: the Moon's inequalities leave it degrees from the sky
        assert abs(now.pointers["moon"].error_deg) > 0.1
        await pilot.press("u")
        await pilot.pause()
        assert app.session.readout.offsets_deg() == offsets


@sync
async def test_re_set_dialog_one_pointer_to_mean_and_escape_changes_nothing():
    from engine.readout import mean_values
    from tui.screens import ResetDialog

    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("right_square_bracket")
        offsets = app.session.readout.offsets_deg()
        await pilot.press("R", "m", "escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.readout.offsets_deg() == offsets
        await pilot.press("R", "m")
        await pilot.pause()
        assert isinstance(app.screen, ResetDialog) and app.screen.target == "mean"
        sun = list(app.session.mech.train.pointers).index("sun")
        await pilot.press(*["down"] * (sun + 1), "enter")
        await pilot.pause()
        s = app.session
        got = s.now().pointers["sun"].train_deg
        want = mean_values(s.mech.train, s.jd_now(), s.sky, s.frame, ["sun"])["sun"]
        assert (got - want + 180) % 360 - 180 == pytest.approx(0, abs=ARCSEC)
        new = s.readout.offsets_deg()
        assert [n for n in offsets if new[n] != offsets[n]] == ["sun"]


def test_re_set_refuses_an_unknown_pointer_or_target():
    from engine.errors import WheelworkError

    session = make_app().session
    with pytest.raises(WheelworkError, match="no pointer called 'hand'"):
        session.reset_pointers(["hand"])
    with pytest.raises(WheelworkError, match="re-set to 'average'"):
        session.reset_pointers(None, "average")
    assert not session.can_undo


# --- a screenshot to a chosen path ----------------------------------------------------------------

def _notes(app) -> list[str]:
    return [str(n.message) for n in app._notifications]


@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_screenshot_to_a_chosen_path_asks_before_replacing(size, tmp_path, monkeypatch):
    from tui.screens import ScreenshotDialog

    monkeypatch.chdir(tmp_path)
    app = make_app()
    app.screenshot_dir = tmp_path / "pictures"
    (tmp_path / "pictures").mkdir()
    async with app.run_test(size=size) as pilot:
        await pilot.press("i")
        await pilot.pause()
        assert isinstance(app.screen, ScreenshotDialog)
        default = app.screen.query_one("#shot-input").value
        assert default.startswith(str(tmp_path / "pictures")) and default.endswith(".svg")
        await pilot.press("enter")
        await pilot.pause(0.3)
        assert isinstance(app.screen, BenchScreen)
        saved = tmp_path / "pictures" / default.rsplit("/", 1)[1]
        svg = saved.read_text(encoding="utf-8")
        assert svg.startswith("<svg") and "readings" in svg and "ScreenshotDialog" not in svg
        assert "Save a picture" not in svg  # the bench itself, not the dialog over it
        assert any(str(saved) in n for n in _notes(app))

        # a bare name goes in the current folder; an existing file is replaced on a second Enter
        mine = tmp_path / "mine.svg"
        mine.write_text("the user's own file", encoding="utf-8")
        await pilot.press("i")
        await pilot.pause()
        app.screen.query_one("#shot-input").value = "mine.svg"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ScreenshotDialog)
        assert "exists: Enter again" in text_of(app.screen.query_one("#shot-error"))
        assert mine.read_text(encoding="utf-8") == "the user's own file"
        await pilot.press("escape")  # and Escape leaves it alone
        await pilot.pause()
        assert mine.read_text(encoding="utf-8") == "the user's own file"
        await pilot.press("i")
        await pilot.pause()
        app.screen.query_one("#shot-input").value = "mine.svg"
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause(0.3)
        assert isinstance(app.screen, BenchScreen)
        assert mine.read_text(encoding="utf-8").startswith("<svg")


@sync
async def test_hints_name_a_folder_with_brackets(tmp_path, monkeypatch):
    """The screenshot hint and the open screen name the current folder as it is: '[old]
    pictures' is not a style tag to drop."""
    from tui.screens import ScreenshotDialog

    here = tmp_path / "[old] pictures"
    here.mkdir()
    monkeypatch.chdir(here)
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("i")
        await pilot.pause()
        assert isinstance(app.screen, ScreenshotDialog)
        hint = " ".join(text_of(app.screen.query_one("#shot-hint")).split())
        assert str(here) in hint, hint
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("ctrl+o")  # the open screen's folder title, likewise
        await pilot.pause()
        title = app.screen.query_one("#open-files")._border_title.plain
        assert title == f"files in {here}", title


@pytest.mark.parametrize("typed, words", [
    ("/no/such/folder/x.svg", "folder '/no/such/folder' does not exist"),
    ("{tmp}", "is a folder"),
    ("{tmp}/x.png", "end the name with .svg"),
    ("   ", "give a file name"),
])
@sync
async def test_screenshot_refuses_a_bad_path_in_one_line(typed, words, tmp_path):
    from tui.screens import ScreenshotDialog

    folder = tmp_path / "pics.svg"  # a folder whose name ends in .svg
    folder.mkdir()
    typed = typed.replace("{tmp}", str(folder))
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("i")
        await pilot.pause()
        app.screen.query_one("#shot-input").value = typed
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ScreenshotDialog)  # still open, with what was typed
        error = text_of(app.screen.query_one("#shot-error")).strip()
        assert words in error and "\n" not in error, error
        assert app.screen.query_one("#shot-input").value == typed
    assert list(tmp_path.rglob("*")) == [folder]


# --- the open screen: recent files kept across runs, folders above, a typed path -----------------

@sync
async def test_recent_files_are_kept_across_runs(tmp_path, monkeypatch):
    import os
    import shutil

    from tui.editing import OpenScreen
    from tui.session import recent_path

    config = os.environ["XDG_CONFIG_HOME"]
    assert str(recent_path()).startswith(config) and not recent_path().exists()
    first, second = tmp_path / "first.toml", tmp_path / "second.toml"
    shutil.copy(demo_path("moon_disc_59"), first)
    shutil.copy(demo_path("tide_office"), second)
    make_app(first)  # a run on one train ...
    make_app(second)  # ... and another
    assert recent_path().read_text(encoding="utf-8").splitlines() == [str(second), str(first)]
    import tui.session

    monkeypatch.setattr(tui.session, "_RECENT_FROM", [None])  # a new run: read from the file
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        recent = app.screen.query_one("#open-recent")
        shown = [recent.get_option_at_index(i).id for i in range(recent.option_count)]
        assert shown == [str(second), str(first)]
        recent.focus()
        recent.highlighted = 1
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.editor.path == first
    assert recent_path().read_text(encoding="utf-8").splitlines()[0] == str(first)


def test_a_damaged_or_unwritable_recent_file_is_passed_over(tmp_path, monkeypatch):
    import tui.session
    from tui.session import recent_files, recent_path, remember

    train = tmp_path / "t.toml"
    train.write_text("", encoding="utf-8")
    recent_path().parent.mkdir(parents=True)
    recent_path().write_bytes(b"not a path\n\xff\xfe garbage\n\x00\n" + b"x" * 100_000
                              + f"\n{train}\n".encode())
    monkeypatch.setattr(tui.session, "_RECENT_FROM", [None])
    assert recent_files() == []  # nothing readable in its first 64 KB
    recent_path().write_text(f"relative.toml\n{train}\n{tmp_path / 'gone.toml'}\n")
    monkeypatch.setattr(tui.session, "_RECENT_FROM", [None])
    assert recent_files() == [train]  # a file gone since is not offered
    blocked = tmp_path / "config-is-a-file"  # the config folder cannot be made
    blocked.write_text("", encoding="utf-8")
    monkeypatch.setenv("XDG_CONFIG_HOME", str(blocked))
    remember(train)  # no error for the user
    assert recent_files() == [train]  # still listed for this run
    assert blocked.read_text(encoding="utf-8") == ""


@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_open_screen_goes_above_the_start_and_takes_a_typed_path(size, tmp_path,
                                                                      monkeypatch):
    import shutil

    from textual.widgets import DirectoryTree

    from engine.loader import load_train
    from tui.editing import OpenScreen

    start = tmp_path / "work" / "here"
    start.mkdir(parents=True)
    above = tmp_path / "work" / "moon.toml"
    shutil.copy(demo_path("moon_disc_59"), above)
    monkeypatch.chdir(start)
    app = make_app()
    async with app.run_test(size=size) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, OpenScreen)
        tree = screen.query_one(DirectoryTree)
        assert Path(tree.path) == start
        await pilot.press("alt+up")  # the folder above the start
        await pilot.pause()
        assert Path(tree.path) == start.parent
        assert screen.query_one("#open-path").value == str(start.parent)
        assert str(start.parent) in str(screen.query_one("#open-files").border_title)
        await pilot.click("#open-up")
        await pilot.pause()
        assert Path(tree.path) == tmp_path
        # a typed folder is looked in; a missing one is named; a typed file is opened
        path_field = screen.query_one("#open-path")
        path_field.value = "work/here"  # relative to the folder shown
        path_field.focus()
        await pilot.press("enter")
        await pilot.pause()
        assert Path(tree.path) == start
        path_field.value = "nowhere/at/all"
        await pilot.press("enter")
        await pilot.pause()
        assert "no such file or folder" in text_of(screen.query_one("#open-error"))
        assert isinstance(app.screen, OpenScreen)
        path_field.value = "../moon.toml"
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.mech.train.name == load_train(above).name


def test_a_step_in_time_follows_a_change_of_the_crank():
    """A step given as 3 days stays 3 days when the train on the bench turns its crank
    another number of days (an edit of days_per_turn, or another train)."""
    session = make_app().session  # one turn = 1 day
    session.set_step(Fraction(3), Fraction(3), "3d")
    assert session.step_text == "3d = 3 turns"
    month = make_app(demo_path("lunation_board")).session.mech
    session.adopt(month)
    assert session.step == Fraction(3) / Fraction("29.530589")
    assert session.step_text == "3d = 0.10159 turns"
    session.set_step(Fraction(1, 24))  # a step in turns stays in turns, and says so
    assert session.step_text == "1/24 turn"
    session.adopt(make_app().session.mech)
    assert session.step == Fraction(1, 24) and session.step_days is None


def test_a_step_in_turns_names_its_unit():
    """The readings said "step 1" (one what? a turn, a day, a month on this train?) beside
    "1 turn = 1 d" (common practice, no source: a figure with its unit)."""
    session = make_app().session
    assert session.step_text == "1 turn"
    session.set_step(Fraction(3))
    assert session.step_text == "3 turns"
    session.set_step(Fraction(12000))
    assert session.step_text == "12,000 turns"


def test_a_year_step_on_a_motor_shaft_crank(tmp_path):
    """A train whose crank is a 6000 rpm motor shaft (100 turns a second, the fastest a file may
    give) still steps by a year: 365.25 × 8,640,000 = 3,155,760,000 turns, whole."""
    text = demo_path("tide_office").read_text(encoding="utf-8")
    motor = tmp_path / "motor.toml"
    motor.write_text(text.replace("days_per_turn = 1", 'days_per_turn = "1/8640000"', 1),
                     encoding="utf-8")
    session = make_app(motor).session
    assert session.turn_days == "1 turn = 0.0000001157407 days"  # plain figures
    session.set_step(Fraction("365.25") * 8640000, Fraction("365.25"), "1y")
    assert session.step == 3_155_760_000
    assert session.step_text == "1y = 3,155,760,000 turns"  # figures grouped, as everywhere
    start = session.jd_now()
    session.crank(session.step)  # what + does
    assert session.jd_now() - start == pytest.approx(365.25, abs=1e-6)


# --- the run line's speed --------------------------------------------------------------------------

@pytest.mark.parametrize("size", [SMALL, LARGE])
@sync
async def test_run_line_speed_in_plain_figures_and_singular_for_one(size):
    """"1 turn/s", not "1 turns/s"; a quarter turn and a thousand in plain figures, never
    e-notation (common practice, no source)."""
    from tui.session import SPEEDS

    app = make_app()
    async with app.run_test(size=size) as pilot:
        seen = {}
        for speed in (1.0, 0.25, 1000.0):
            app.session.speed_index = SPEEDS.index(speed) + 1
            await pilot.press("comma")
            await pilot.pause()
            seen[speed] = next(line for line in status_lines(app) if line.startswith("run"))
        if size == LARGE:
            assert "  1 turn/s" in seen[1.0]
            assert "0.25 turns/s" in seen[0.25] and "1,000 turns/s" in seen[1000.0]
        else:
            assert "  1/s" in seen[1.0] or "  1 turn/s" in seen[1.0]
            assert "1,000" in seen[1000.0]
        assert not any("turns/s" in seen[1.0] or "e+" in line for line in seen.values())


@sync
async def test_the_status_panel_keeps_every_line_when_the_window_shrinks():
    """Shrunk from 100 x 30 to 80 x 24 the table orrery's turn ("1 turn = 365.2422 d") folds
    onto a line of its own; the panel kept its seven rows and the observer's line was cut
    off the bottom, and once it took its eight the warnings below ran a row past the
    column (common practice, no source: nothing cut, nothing past the edge)."""
    from tests.tui_support import text_of
    from tui.widgets import Status

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        await pilot.resize_terminal(80, 24)
        status = app.screen.query_one(Status)

        def in_column() -> bool:
            side = app.screen.query_one("#side").region
            return all(p.region.bottom <= side.bottom for p in app.screen.query("#side > *")
                       if p.display)

        # the side column is fitted after the resize's layout: wait for it, not for pauses
        await wait_for(pilot, lambda: status.size.height == 8 and in_column()
                       and len(text_of(status).rstrip("\n").splitlines()) == 8,
                       "the status panel at eight rows and every pane in the column")
        lines = text_of(status).rstrip("\n").splitlines()
        assert len(lines) == 8 and lines[-1].startswith("observer"), lines
        assert status.size.height == 8
        side = app.screen.query_one("#side").region
        for pane in app.screen.query("#side > *"):
            if pane.display:
                assert pane.region.bottom <= side.bottom, (pane.id, pane.region, side)


@pytest.mark.parametrize("running", [False, True])
@sync
async def test_the_status_panel_takes_its_new_height_when_the_window_grows(running):
    """The table orrery at 80 x 24 folds "1 turn = 365.2422 d" onto a line of its own; grown
    to 160 x 50 it is back on the run line, but the panel kept the folded height and a blank
    line stood between "observer" and the pointers' header (common practice, no source: a
    panel as tall as its lines)."""
    from tests.tui_support import text_of
    from tui.widgets import Status

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        if running:
            await pilot.press("space")
        status = app.screen.query_one(Status)
        # the turn's days on a line of their own (waited for: on a loaded machine the first
        # layout can come before the readings' lines)
        await wait_for(pilot, lambda: status.size.height == 8, "the folded 8-row status", 20)
        await pilot.resize_terminal(160, 50)

        def lines():
            return text_of(status).rstrip("\n").splitlines()

        await wait_for(pilot, lambda: len(lines()) == 7, "7 lines at 160 x 50", 20)
        await wait_for(pilot, lambda: status.size.height == 7, "a 7-row panel", 20)
        if running:
            await pilot.press("space")


@sync
async def test_a_recent_file_is_named_first_and_its_folder_wrapped_after_a_slash(tmp_path):
    """At 80 × 24 the recent list broke a long path mid-name ("tide_of / fice.toml"): each
    file is now its name, then its folder under it, broken after a "/" (common practice,
    no source: a file list leads with the name), and nothing of either is cut."""
    import shutil

    from tui.editing import OpenScreen, folder_lines

    deep = tmp_path / "harbour_master_clock" / "trains_of_the_year_2026" / "drafts"
    deep.mkdir(parents=True)
    path = deep / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    make_app(path)  # opened once: remembered
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        recent = app.screen.query_one("#open-recent")
        lines = [recent.render_line(y).text.strip(" │▁▇▃▅") for y in range(recent.size.height)]
        at = lines.index("tide_office.toml")
        folder = [line for line in lines[at + 1:] if line]  # the only recent file
        assert "".join(folder) == str(deep) + "/", lines
        # broken after a slash: each folder that fits a line is whole on one
        assert "trains_of_the_year_2026/" in folder and folder[-1] == "drafts/", folder
    assert folder_lines("/a/bb/ccc", 5) == ["/a/", "bb/", "ccc/"]
    assert folder_lines("/" + "x" * 12, 5) == ["/", "xxxxx", "xxxxx", "xx/"]  # folded, not cut
