"""Faults found by using the interface as a user would, each pinned by a Pilot test."""

import shutil

from textual.widgets import Footer, Input

from engine.demos import demo_path
from tests.tui_support import sync
from tui.app import make_app
from tui.screens import BenchScreen


async def _change_sun_w1(pilot, app) -> None:
    await pilot.press("w")
    await pilot.pause()
    box = app.screen.query_one("#parts-list")
    labels = [str(box.get_option_at_index(i).prompt) for i in range(box.option_count)]
    box.highlighted = next(i for i, t in enumerate(labels) if t.startswith("sun_w1"))
    await pilot.pause()
    value = app.screen.query_one("#parts-value", Input)
    value.value = "60"
    value.focus()
    await pilot.press("enter")
    await pilot.pause()
    await pilot.press("escape")
    await pilot.pause()


@sync
async def test_the_bench_footer_keeps_its_keys_after_a_change_and_an_undo(tmp_path):
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await _change_sun_w1(pilot, app)
        assert isinstance(app.screen, BenchScreen)
        for key in ("ctrl+z", "ctrl+y"):
            await pilot.press(key)
            await pilot.pause()
            await pilot.pause()
            footer = app.screen.query_one(Footer)
            # at 80 columns the footer keeps its main keys and leaves the palette key out
            assert not footer.show_command_palette
            shown = {a.binding.action for a in app.screen.active_bindings.values()}
            assert "help" in shown
            assert len(footer.children) > 5, f"footer empty after {key}"


def _title(app) -> str:
    return str(app.screen.query_one("#title").render())


@sync
async def test_the_bench_title_fits_80_columns_and_names_the_file_saved(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert "ctrl+p every key" in _title(app)
        await _change_sun_w1(pilot, app)
        title = _title(app)
        assert "changed, not saved" in title and len(title) <= 78, title
        assert title.rstrip().endswith("? help"), title  # the hint shortened, not cut
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press("enter")  # the new name offered
        await pilot.pause()
        await pilot.pause()
        assert (tmp_path / "tide_office-edited.toml").exists()
        title = _title(app)
        assert "tide_office-edited.toml" in title and "changed" not in title, title


@sync
async def test_the_phase_name_under_the_discs_is_never_cut_at_80_columns():
    from tui.widgets import PhaseDiscs

    app = make_app(demo_path("moon_disc_59"))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("g")
        await pilot.pause()
        app.screen.query_one("#date-input").value = "2026-11-15 07:48"
        await pilot.press("enter")
        await pilot.pause()
        discs = app.screen.query_one(PhaseDiscs)
        lines = [discs.render_line(y).text for y in range(discs.size.height)]
        # the true Moon's phase that evening, named in full (checked against the sky reading)
        name = app.session.now().sky.phase_names()[0]
        assert name == "waxing crescent"
        assert any(name in line for line in lines), lines
        assert all(len(line) <= discs.size.width for line in lines)


@sync
async def test_quit_with_changes_not_saved_asks_first(tmp_path):
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await _change_sun_w1(pilot, app)
        await pilot.press("q")
        await pilot.pause()
        assert app.is_running and isinstance(app.screen, BenchScreen)
        assert any("not saved" in n.message for n in app._notifications)
        await pilot.press("q")  # the second q quits, without saving
        await pilot.pause()
    assert app.return_code == 0
    assert "sun_w1 = 59" in path.read_text()


@sync
async def test_opening_another_train_over_changes_not_saved_asks_first(tmp_path, monkeypatch):
    from textual.widgets import DirectoryTree

    from tui.editing import OpenScreen

    monkeypatch.chdir(tmp_path)
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    other = tmp_path / "moon.toml"
    shutil.copy(demo_path("moon_disc_59"), other)
    app = make_app(path)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await _change_sun_w1(pilot, app)
        await pilot.press("ctrl+o")
        await pilot.pause()
        tree = app.screen.query_one(DirectoryTree)
        tree.post_message(DirectoryTree.FileSelected(tree.root, other))
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        assert "not saved" in str(app.screen.query_one("#open-error").render())
        assert app.session.editor.path == path and app.session.editor.differs
        tree.post_message(DirectoryTree.FileSelected(tree.root, other))  # again: open it
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.editor.path == other


@sync
async def test_arrows_in_the_value_box_walk_the_parts_list(tmp_path):
    from textual.widgets import OptionList

    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        box = app.screen.query_one("#parts-value", Input)
        assert app.focused is box  # the screen opens ready to type
        parts = app.screen.query_one("#parts-list", OptionList)
        assert parts.highlighted == 0
        await pilot.press("down", "down", "down")
        await pilot.pause()
        assert parts.highlighted == 3 and app.focused is box
        assert str(parts.get_option_at_index(3).prompt).startswith("sun_w1")
        assert box.value == "59"
        await pilot.press("up")
        await pilot.pause()
        assert parts.highlighted == 2
        for _ in range(3):
            await pilot.press("up")
        await pilot.pause()
        assert parts.highlighted == 0  # stops at the top


@sync
async def test_the_editing_screens_take_the_light_theme():
    from textual.color import Color

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=(80, 24)) as pilot:
        app.theme = "textual-light"
        await pilot.pause()
        ground = Color.parse(app.current_theme.background)
        for key in ("w", "ctrl+f"):  # the parts screen, then the tooth search over it
            await pilot.press(key)
            await pilot.pause()
            assert app.screen.styles.background == ground, type(app.screen).__name__
        await pilot.press("escape", "escape")
        await pilot.pause()
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert app.screen.styles.background == ground, type(app.screen).__name__


def test_the_ephemeris_span_in_years_keeps_every_digit_and_the_bc_year():
    from tui.widgets import span_years

    assert span_years("1899-07-30 to 2053-10-08") == "1899–2053"
    # DE406's span, as engine.sky writes it (it was shown as "-300–3000" at 80 columns)
    assert span_years("-3000-02-24 (3001 BC) to 3000-03-02") == "3001 BC–3000"
    assert span_years("1549-12-21 to 2650-01-25") == "1549–2650"


@sync
async def test_the_parts_screen_prompt_wraps_at_80_columns():
    from textual.widgets import Label

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        what = app.screen.query_one("#parts-what", Label)
        prompt = str(what.render())
        assert prompt.endswith("p/q):")  # the crank's prompt, whole
        # every word of it is on screen: as many lines as it needs within the side pane
        assert what.size.width <= app.screen.query_one("#parts-side").size.width
        assert what.size.height * what.size.width >= len(prompt)
        primes = app.screen.query_one("#parts-primes", Input)
        assert len(primes.placeholder) <= primes.size.width


@sync
async def test_the_parts_screen_footer_keeps_help_at_80_columns():
    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pilot.pause()
        footer = app.screen.query_one(Footer)
        assert not footer.show_command_palette
        widths = sum(k.size.width for k in footer.children)
        assert widths <= 80


@sync
async def test_backspacing_a_newly_picked_value_starts_from_its_end(tmp_path):
    path = tmp_path / "moon.toml"
    shutil.copy(demo_path("moon_disc_59"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pilot.press("down", "down")  # from the crank's "1" to the disc's 59 teeth
        await pilot.pause()
        box = app.screen.query_one("#parts-value", Input)
        assert box.value == "59" and box.cursor_position == 2
        await pilot.press("backspace", "backspace", "5", "8", "enter")
        await pilot.pause()
        assert any(t == 58 for w, _, t in app.session.editor.wheels() if w == "disc_teeth")


@sync
async def test_saving_into_a_folder_uses_the_offered_name_and_a_name_must_end_in_toml(
        tmp_path, monkeypatch):
    from tui.editing import SaveDialog

    monkeypatch.chdir(tmp_path)
    path = tmp_path / "moon.toml"
    shutil.copy(demo_path("moon_disc_59"), path)
    folder = tmp_path / "kept"
    folder.mkdir()
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pilot.press("down", "down", "backspace", "backspace", "5", "8", "enter")
        await pilot.pause()
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, SaveDialog)
        box = app.screen.query_one("#save-input", Input)
        box.value = str(tmp_path / "moon.txt")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SaveDialog)
        assert ".toml" in str(app.screen.query_one("#save-error").render())
        assert not (tmp_path / "moon.txt").exists()
        box.value = str(folder)
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
    assert [p.name for p in folder.iterdir()] == ["moon-edited.toml"]
    assert "disc_teeth = 58" in (folder / "moon-edited.toml").read_text()
    assert not (tmp_path / "kept.toml").exists()


@sync
async def test_the_parts_screen_ratio_rows_take_the_theme_colours():
    """The file → now rows of a changed pointer and their labels are in the theme's accent and
    muted colours (they were a fixed pale gold and grey, faint on a light theme)."""
    from rich.text import Text
    from textual.widgets import Static

    from tui.widgets import ui

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=(80, 24)) as pilot:
        app.theme = "textual-light"
        await pilot.pause()
        await _change_sun_w1(pilot, app)  # a change, then back to the bench
        await pilot.press("w")
        await pilot.pause()
        shown = app.screen.query_one("#parts-compare", Static).content
        assert isinstance(shown, Text)  # two lines a pointer at 80 columns
        colours = ui(app.screen)
        styles = {str(span.style) for span in shown.spans}
        assert f"bold {colours['accent']}" in styles and colours["muted"] in styles
        assert not any("#e5c07b" in s or "#9aa5b1" in s for s in styles)
