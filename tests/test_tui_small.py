"""A terminal smaller than the screens are laid out for (80 × 24, tui/small.py), driven by
Textual's Pilot: every screen shows one message naming the size and what it needs instead of
its widgets squashed, the keys keep working (quit too), and the screen comes back as it was,
focus included, when the window is enlarged.

80 × 24 is the size every screen is laid out for (docs/interface.md, "Small terminals").
"""

import pytest
from textual.widgets import Footer, Input

from engine.demos import demo_path
from tests.tui_support import sync, text_of
from tui.app import make_app
from tui.screens import BenchScreen, DriftScreen
from tui.small import MIN_COLUMNS, MIN_ROWS, TooSmall, too_small_text

ROOMY = (100, 30)


@pytest.fixture(autouse=True)
def _own_home(tmp_path, monkeypatch):
    """Never the real home (the open screen lists the current folder; recent files)."""
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    monkeypatch.chdir(tmp_path)


def shown_widgets(screen) -> list:
    """The screen's own widgets on display (the screen's direct children)."""
    return [w for w in screen.children if w.display]


def says_too_small(screen, size) -> bool:
    message = screen.query_one(TooSmall)
    return (message.display and message.region.height >= 1
            and f"{size[0]}×{size[1]}" in text_of(message)
            and f"{MIN_COLUMNS}×{MIN_ROWS}" in text_of(message)
            and all(isinstance(w, TooSmall | Footer) for w in shown_widgets(screen)))


async def settle(pilot, n: int = 3) -> None:
    for _ in range(n):
        await pilot.pause()


SCREENS = [
    ((), "BenchScreen"),
    (("d",), "DriftScreen"),
    (("question_mark",), "HelpScreen"),
    (("g",), "DateDialog"),
    (("s",), "StepDialog"),
    (("R",), "ResetDialog"),
    (("i",), "ScreenshotDialog"),
    (("w",), "PartsScreen"),
    (("w", "ctrl+f"), "TeethScreen"),
    (("w", "ctrl+s"), "SaveDialog"),
    (("ctrl+o",), "OpenScreen"),
    (("ctrl+p",), "Palette"),
]


@pytest.mark.parametrize("keys, screen_name", SCREENS)
@sync
async def test_every_screen_says_it_is_too_small_and_comes_back(keys, screen_name):
    """Below 80 columns or below 24 rows: the message (the size, the size needed) and the
    footer, nothing else; at 80 × 24 the screen's widgets and its focus come back."""
    app = make_app()
    async with app.run_test(size=ROOMY) as pilot:
        await pilot.press(*keys)
        await settle(pilot)
        screen = app.screen
        assert type(screen).__name__ == screen_name
        before = shown_widgets(screen)
        focused = screen.focused
        assert not screen.query_one(TooSmall).display
        for size in ((MIN_COLUMNS - 1, MIN_ROWS), (MIN_COLUMNS, MIN_ROWS - 1), (40, 12)):
            await pilot.resize_terminal(*size)
            await settle(pilot)
            assert app.screen is screen
            assert says_too_small(screen, size), (size, shown_widgets(screen))
            assert screen.focused is None  # nothing hidden takes the keys
        await pilot.resize_terminal(MIN_COLUMNS, MIN_ROWS)
        await settle(pilot)
        assert app.screen is screen
        assert not screen.query_one(TooSmall).display
        assert shown_widgets(screen) == before
        assert screen.focused is focused


def _focus_id(app):
    focused = app.screen.focused
    return None if focused is None else (type(focused).__name__, focused.id)


@pytest.mark.parametrize("keys, screen_name", SCREENS)
@sync
async def test_a_screen_opened_while_too_small_takes_no_typing_and_fits_when_enlarged(
        keys, screen_name):
    """Opened while the terminal is too small, a screen shows the message, its text box
    (focused by the screen as it opens) gives the focus up, so a digit typed goes into no
    hidden box; enlarged, it has the focus it has when opened at a size that fits."""
    app = make_app()
    async with app.run_test(size=ROOMY) as pilot:
        await pilot.press(*keys)
        await settle(pilot)
        want_focus = _focus_id(app)
    app = make_app()
    async with app.run_test(size=(70, 20)) as pilot:
        await pilot.press(*keys)
        await settle(pilot)
        screen = app.screen
        assert type(screen).__name__ == screen_name
        assert says_too_small(screen, (70, 20))
        assert screen.focused is None
        boxes = {box: box.value for box in screen.query(Input)}
        await pilot.press("5")
        await settle(pilot)
        assert app.screen is screen and {b: b.value for b in boxes} == boxes
        await pilot.resize_terminal(*ROOMY)
        await settle(pilot)
        assert not screen.query_one(TooSmall).display
        assert _focus_id(app) == want_focus


def test_the_message_names_what_is_short():
    for size, short in (((79, 24), "1 more column)"), ((80, 20), "4 more rows)"),
                        ((60, 23), "20 more columns, 1 more row)")):
        text = too_small_text(*size).plain
        assert text.startswith(f"terminal too small: {size[0]}×{size[1]}"), text
        assert short in text and "enlarge the window" in text and "ctrl+q quits" in text
        assert "escape closes this" not in text
    assert "escape closes this" in too_small_text(70, 20, closes=True).plain


@sync
async def test_keys_work_while_too_small_and_q_quits():
    app = make_app()
    async with app.run_test(size=(70, 20)) as pilot:
        await settle(pilot)
        assert app.screen.has_class("-too-small")
        turns = app.session.turns.to_float()
        await pilot.press("right")
        await settle(pilot)
        assert app.session.turns.to_float() == turns + 1
        await pilot.press("d")
        await settle(pilot)
        assert isinstance(app.screen, DriftScreen) and app.screen.has_class("-too-small")
        await pilot.press("escape")
        await settle(pilot)
        assert isinstance(app.screen, BenchScreen)
        await pilot.press("q")
        await settle(pilot)
        assert not app.is_running


@sync
async def test_ctrl_q_quits_from_a_screen_with_a_text_box():
    """The parts screen's value box has the focus; while too small the box is hidden and
    unfocused, so q types nothing into it, and ctrl+q quits."""
    app = make_app()
    async with app.run_test(size=ROOMY) as pilot:
        await pilot.press("w")
        await settle(pilot)
        box = app.screen.focused
        value = box.value
        await pilot.resize_terminal(70, 20)
        await settle(pilot)
        await pilot.press("q", "7")
        await settle(pilot)
        assert box.value == value
        await pilot.press("ctrl+q")
        await settle(pilot)
        assert not app.is_running


@sync
async def test_a_chart_computed_while_too_small_is_drawn_for_its_rows_when_enlarged():
    """The drift worker goes on under the message; enlarged, the chart is drawn for the rows
    its plot has then, with the ±threshold band's lines apart."""
    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(70, 20)) as pilot:
        await pilot.press("d")
        await app.workers.wait_for_complete()
        await settle(pilot)
        screen = app.screen
        assert isinstance(screen, DriftScreen) and screen.result is not None
        await pilot.resize_terminal(80, 24)
        await settle(pilot, 5)
        assert not screen.has_class("-too-small")
        assert screen._curve_rows() >= 10
        assert screen._drawn_rows == screen._curve_rows()
        assert screen.scale.band


@sync
async def test_shrinking_to_a_sliver_while_running_never_crashes():
    app = make_app()
    async with app.run_test(size=ROOMY) as pilot:
        await pilot.press("space")
        for size in ((1, 1), (10, 3), (30, 6), (79, 40), (200, 23), (80, 24), (2, 50)):
            await pilot.resize_terminal(*size)
            await settle(pilot)
            assert app.is_running and isinstance(app.screen, BenchScreen)
        await pilot.press("space")
        await pilot.resize_terminal(*ROOMY)
        await settle(pilot)
        assert not app.screen.has_class("-too-small")
        assert app.screen.query_one("#dial").display
