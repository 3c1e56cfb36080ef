"""Faults found by using the interface as a user would, each pinned by a Pilot test."""

import shutil

import pytest
from textual.widgets import Footer, Input

from engine.demos import demo_path
from tests.tui_support import sync, wait_for
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
    assert span_years("-3000-02-24 (3001 BC) to 3000-03-02") == "3001 BC–AD 3000"
    assert span_years("-0500-01-01 (501 BC) to -0100-01-01 (101 BC)") == "501 BC–101 BC"
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


# --- found by a maker's session at 80 × 24 and 160 × 50 (common practice, no source) -------
@sync
async def test_typing_a_new_count_replaces_the_picked_part_s_value(tmp_path):
    """Picking sun_w1 (59) and typing 60 makes it 60 teeth, not 5960: the value shown for a
    picked part is selected, so typing replaces it, as in the step and date dialogs."""
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await pilot.press("w")
        await pilot.pause()
        await pilot.press("down", "down", "down")  # crank, two day pinions, then sun_w1
        await pilot.pause()
        value = app.screen.query_one("#parts-value", Input)
        assert value.value == "59"
        await pilot.press("6", "0")
        assert value.value == "60"
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60
        await pilot.press("6", "1", "enter")  # the value after an edit is selected too
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 61
        await pilot.press("backspace")  # a backspace clears it
        assert value.value == ""


@sync
async def test_a_terminal_made_too_small_after_a_change_of_train_still_says_so(tmp_path):
    """The bench is composed again for a changed train; the "terminal too small" message
    must survive it (the screen was blank but for its footer)."""
    from tui.small import TooSmall

    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await _change_sun_w1(pilot, app)
        for key in ("", "ctrl+z"):  # after the change, and after it is undone
            if key:
                await pilot.press(key)
                await pilot.pause()
            await pilot.resize_terminal(70, 20)
            message = app.screen.query_one(TooSmall)
            await wait_for(pilot, lambda message=message: message.display
                           and message.region.height > 1, "the too-small message at 70×20")
            assert "70×20" in str(message.render())
            await pilot.resize_terminal(80, 24)
            await wait_for(pilot, lambda message=message: not message.display,
                           "the message gone at 80×24")


@sync
async def test_a_resize_while_the_chart_covers_the_bench_is_laid_out_on_return(tmp_path):
    """Resized from 160 × 50 to 80 × 24 with the drift chart up: back on the bench, its
    title is one row (the long hint left out) and the footer shows the keys for 80 columns."""
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    app = make_app(path)
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        await _change_sun_w1(pilot, app)  # the title's "changed, not saved" makes it longer
        await pilot.press("d")
        await pilot.pause()
        await pilot.resize_terminal(80, 24)
        await pilot.pause()
        await pilot.press("escape")
        # the bench is laid out again on its return: wait for that, not for pauses
        await wait_for(pilot, lambda: isinstance(app.screen, BenchScreen)
                       and 0 < app.screen.query_one("#title").outer_size.width <= 80,
                       "the bench back and laid out at 80 columns")
        title = app.screen.query_one("#title")
        assert title.outer_size.height == 1
        assert "ctrl+p every key" not in _title(app)
        assert not app.screen.query_one(Footer).show_command_palette


def test_readings_write_large_drifts_whole_with_separators_and_360_as_0():
    from engine.figures import drift
    from tui.widgets import Readings

    assert drift(67987.93) == "+67,988" and drift(-35644.39) == "-35,644"
    assert Readings.angle_text(359.96, 1) == "0.0"
    assert Readings.angle_text(359.996, 2) == "0.00"
    assert Readings.angle_text(359.94, 1) == "359.9"


@sync
async def test_a_far_off_drift_stays_in_its_row_at_80_columns(tmp_path):
    """A sun hand drifting some 23,000°/cy: its drift stays on its row (was wrapped onto a
    line of its own, at the left edge) and every row of the readings is one line."""
    from tui.widgets import Readings

    train = (demo_path("moon_disc_59").read_text()
             .replace('[pointers.phase]', '[arbors.sun]\nwheels = { sun_wheel = 97 }\n\n'
                      '[arbors.sun_idle]\nwheels = { idle_w = 73, idle_p = 7 }\n\n'
                      '[[meshes]]\nwheels = ["pusher_pin", "idle_w"]\n\n'
                      '[[meshes]]\nwheels = ["idle_p", "sun_wheel"]\n\n'
                      '[pointers.sun_hand]\nshows = "sun"\narbor = "sun"\n\n'
                      '[pointers.phase]'))
    path = tmp_path / "far_off.toml"
    path.write_text(train)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        lines = [readings.render_line(y).text.rstrip() for y in range(readings.size.height)]
        row = next(line for line in lines if line.startswith("sun_hand"))
        drift = row.split()[-1]  # 1/73 · 7/97 a day, against the year: -23,002°/cy
        assert drift == "-23,002", row
        assert len(lines) == 1 + len(app.session.mech.train.pointers)


def test_a_pin_and_slot_length_is_offered_in_every_digit():
    """The value box offers the length the file holds, so Enter on it unchanged changes
    nothing (a g format offered 10.5851 for 10.58512), and never in e-notation."""
    from tui.editing import mm_text

    for mm in (10.58512, 0.985, 9.0, 0.00001, 1_000_000.0, 123.456789012):
        text = mm_text(mm)
        assert float(text) == mm and "e" not in text, (mm, text)
    assert mm_text(9.0) == "9" and mm_text(0.00001) == "0.00001"


def test_the_parts_and_search_screens_write_far_off_errors_whole():
    """Errors of a train far from the sky in whole ppm and whole degrees a century, as the
    readings write drifts from 1,000°/cy (common practice, no source); close ones keep their
    decimals for comparing trains."""
    from engine.figures import drift as _drift
    from engine.figures import ppm as _ppm

    assert _ppm(100_016_947.0) == "+100,016,947" and _ppm(-653_801.143) == "-653,801"
    assert _ppm(-0.021) == "-0.021" and _ppm(1035.836) == "+1,036"
    assert _drift(-35_644.39) == "-35,644" and _drift(461.7022) == "+461.70"
    assert _drift(-0.0248) == "-0.025"  # two significant figures, as the readings write it


@pytest.mark.parametrize("size, days", [((80, 24), False), ((100, 30), True), ((160, 50), True)])
@sync
async def test_the_readings_keep_err_days_where_the_panel_has_room(size, days):
    """The phase's error in days was left out of every narrow panel, 9 columns to spare at
    100 × 30 included; at 80 × 24 the other columns take all 42. The columns line up with
    their headers (common practice, no source)."""
    from tui.widgets import Readings

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        lines = [readings.render_line(y).text.rstrip() for y in range(readings.size.height)]
        head, phase = lines[0], next(line for line in lines if line.startswith("phase"))
        assert (head.endswith("days") and phase.endswith("+0.00")) == days, lines
        sun = next(line for line in lines if line.startswith("sun"))
        assert len(head.split()) == len(phase.split()) + 2 * ("err days" in head)  # two words
        # the drift's right edge under its header's, at every size
        drift_head = "°/cy"
        end = head.index(drift_head) + len(drift_head)
        assert sun[:end].rstrip() == sun[:end] and sun[end:end + 1] in ("", " "), (head, sun)


@sync
async def test_a_short_pointer_name_leaves_the_header_its_gap():
    """The moon disc's one pointer, 'phase': the narrow header read "pointer train°", its
    first two words one space apart where every other gap is two (common practice, no
    source)."""
    from tui.widgets import Readings

    app = make_app(demo_path("moon_disc_59"))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        readings = app.screen.query_one(Readings)
        head = readings.render_line(0).text
        assert head.startswith("pointer  train°"), head


@sync
async def test_the_tooth_search_lists_a_long_pointer_name_on_one_line(tmp_path):
    """A pointer named phase_of_the_moon_disc (22 letters) was listed as 'phase_of_the_moo' /
    'n_disc' in the search's pointer list, 20 cells wide (common practice, no source)."""
    train = (demo_path("moon_disc_59").read_text()
             .replace("[pointers.phase]", "[pointers.phase_of_the_moon_disc]"))
    path = tmp_path / "long_name.toml"
    path.write_text(train)
    app = make_app(path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pilot.press("ctrl+f")
        await pilot.pause()
        await pilot.pause()
        pointers = app.screen.query_one("#teeth-pointers")
        lines = [pointers.render_line(y).text for y in range(pointers.size.height)]
        assert any("phase_of_the_moon_disc" in line for line in lines), lines
