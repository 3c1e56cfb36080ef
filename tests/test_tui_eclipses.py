"""The interface's eclipse parts, driven by Textual's Pilot: the readout against the engine,
the jump keys, the limit arcs on the sky dial and the cycle dial's ribbon."""

from pathlib import Path

import pytest

from engine.dates import parse_date
from engine.eclipses import EclipseWatch
from tests.tui_support import sync, text_of, wait_for
from tui.app import make_app
from tui.screens import BenchScreen, long_help
from tui.widgets import EclipseInfo

SIZE = (120, 40)




@sync
async def test_readout_says_what_the_engine_says():
    app = make_app()  # the tide office dial: node hand
    app.session.go_to(parse_date("2026-03-02 12:00"))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        text = text_of(app.screen.query_one(EclipseInfo))
        engine = EclipseWatch(app.session.mech, app.session.sky).at(parse_date("2026-03-02 12:00"))
        # 2026-03-03: total lunar eclipse (canon, from memory), predicted by the node hand
        assert engine.sky_type == "total" and engine.predicted
        assert "full moon 2026-03-03" in text and "total lunar" in text
        assert f"{engine.gamma:+.3f}" in text and "hit" in text
        assert f"Sun {engine.detail:.1f}° from node" in text


@sync
async def test_jump_keys_go_to_real_and_predicted_eclipses():
    app = make_app()
    app.session.go_to(parse_date("2026-03-04 00:00"))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("x")  # next real eclipse: 2026-08-12 total solar (canon, from memory)
        await pilot.pause()
        assert abs(app.session.jd_now() - parse_date("2026-08-12 17:46")) < 0.01
        assert "total solar" in text_of(app.screen.query_one(EclipseInfo))
        await pilot.press("z")  # and back to the 2026-03-03 total lunar eclipse
        await pilot.pause()
        assert abs(app.session.jd_now() - parse_date("2026-03-03 11:34")) < 0.01
        await pilot.press("p")  # the next syzygy the train flags
        await pilot.pause()
        watch = app.session.eclipse_watch
        now = watch.at(app.session.jd_now())
        # the date the train shows that syzygy: within hours of the real one
        assert now.predicted and abs(now.days_away) < 0.5
        assert app.session.jd_now() > parse_date("2026-03-04")


@sync
async def test_train_without_predictions_says_so_and_p_warns():
    app = make_app("engine/trains/moon_disc_59.toml")
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        assert "predicts no eclipses" in text_of(app.screen.query_one(EclipseInfo))
        before = app.session.jd_now()
        await pilot.press("p")
        await pilot.pause()
        assert app.session.jd_now() == before  # nothing to jump to: a notice, no move


@sync
async def test_cycle_ribbon_and_limit_arcs():
    app = make_app("engine/trains/eclipse_board.toml")
    app.session.go_to(parse_date("2024-04-07 12:00"))
    async with app.run_test(size=(160, 50)) as pilot:
        await pilot.pause()
        now = app.session.now()
        text = text_of(app.screen.query_one(EclipseInfo))
        assert now.cycle is not None and now.cycle.lunations == 223
        # the ribbon's month is the 2024-04-08 new moon's, the one the panel names: the
        # pointer stands at 26.95 months, just short of the boundary it shows for that moon
        assert now.cycle.month == 28 and int(now.cycle.position) + 1 == 27
        assert "month 28/223" in text
        assert "▲" in text  # solar marks on the ribbon
        # the 2024-04-08 new moon is marked (its saros predecessor fell in the first turn)
        assert "eclipse (month 28 of the ring)" in text and "total solar" in text
        kinds = {k for k, _, _ in now.limit_arcs}
        assert kinds == {"solar", "lunar"} and len(now.limit_arcs) == 4


def test_ribbon_and_panel_name_the_same_month_at_every_syzygy():
    """At each new and full moon of 2024 the ribbon's month is the panel's "month k of the
    ring": a new moon a little before the boundary the dial shows (the 2024-04-08 total solar
    eclipse, NASA canon, from memory, at 26.99 months) once read "month 28 of the ring" above a
    ribbon saying "month 27/223", the floor of the pointer's position, for the same moment
    (common practice, no source: one month for one moment)."""
    import re

    app = make_app("engine/trains/eclipse_board.toml")
    session = app.session
    check = session.eclipse_watch._ensure(parse_date("2024-01-01"), parse_date("2024-12-31"))
    at_boundary = 0
    for jd in check.jd_ut:
        session.go_to(float(jd))
        now = session.now()
        text = EclipseInfo.text(now, 160).plain
        panel = re.search(r"month (\d+) of the ring", text)
        ribbon = re.search(r"month (\d+)/223", text)
        assert panel and ribbon, text
        assert panel.group(1) == ribbon.group(1), text
        at_boundary += int(now.cycle.position) + 1 != int(ribbon.group(1))
    assert at_boundary > 0  # the year has new moons just short of a boundary (the old split)


def test_keys_are_in_help_and_footer():
    actions = {b.action: b for b in BenchScreen.BINDINGS}
    for action in ("eclipse(1)", "eclipse(-1)", "predicted"):
        assert action in actions and long_help(actions[action]) != actions[action].description


@pytest.mark.parametrize("width", [80, 160])
def test_eclipse_text_fits_narrow_and_wide(width):
    from tui.session import Session  # noqa: F401  (the Now it draws comes from the session)

    app = make_app()
    app.session.go_to(parse_date("2026-03-02 12:00"))
    text = EclipseInfo.text(app.session.now(), width)
    assert "full moon" in text.plain and "total lunar" in text.plain


# --- a cycle dial's whole months off the real count ----------------------------------------------

FAST_RING = (Path(__file__).resolve().parent / "trains" / "fast_ring.toml").read_text(
    encoding="utf-8")


@pytest.mark.parametrize("size", [(80, 24), (160, 50)])
@sync
async def test_readings_say_the_whole_months_a_cycle_dial_is_off(tmp_path, size):
    """The readings' err° of a cycle dial is within the month; the whole months it stands
    from the real count are said under the table, as the engine gives them
    (engine.drift.whole_months_off): the ring of tests/test_drift.py, 223 months in 18 Julian
    years, is two lunations ahead in 2045 and one behind in 1905 (skyfield's own new moons
    there), none at its epoch."""
    from tui.widgets import Readings

    path = tmp_path / "fast_ring.toml"
    path.write_text(FAST_RING, encoding="utf-8")
    app = make_app(path)
    async with app.run_test(size=size) as pilot:
        said = {}
        for date in ("1950-01-02", "2045-01-01", "1905-01-01"):
            await pilot.press("g")
            await pilot.pause()
            app.screen.query_one("#date-input").value = date
            await pilot.press("enter")
            await pilot.pause()
            await pilot.pause()
            said[date] = " ".join(text_of(app.screen.query_one(Readings)).split())
        assert "real count" not in said["1950-01-02"]
        assert "months: 2 months ahead of the real count" in said["2045-01-01"]
        assert "months: 1 month behind the real count" in said["1905-01-01"]


@sync
async def test_a_jump_to_an_eclipse_says_which_when_its_panel_is_given_up():
    """At 80 x 24 the table orrery (no eclipse predictions, seven arms) gives its eclipses
    panel up: x turned the crank to the 2026-02-17 annular solar eclipse (NASA canon, from
    memory) with nothing on screen naming it, only a new date (common practice, no source:
    a jump says where it went); a solar one carries the filter caution. The lunation board
    keeps its panel (joined) and needs no notice."""
    from tui.screens import eclipse_notice

    for train, hidden in (("table_orrery", True), ("lunation_board", False)):
        app = make_app(f"engine/trains/{train}.toml")
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            await pilot.pause()
            said = []
            screen = app.screen
            screen.notify = lambda message, said=said, **kw: said.append(message)
            await pilot.press("x")
            await pilot.pause()
            panel = screen.query_one("#eclipse")
            e = app.session.eclipse_watch.at(app.session.jd_now())
            assert e is not None and e.sky_type
            assert panel.display != hidden, train
            if hidden:
                assert said == [eclipse_notice(e)], said
                assert e.kind == "solar" and "annular solar eclipse" in said[0]
                assert "2026-02-17" in said[0] and "solar filter" in said[0]
            else:
                assert not said  # the panel says it
                assert f"{e.sky_type} {e.kind}" in text_of(panel)


@pytest.mark.parametrize("width, in_line", [(84, True), (51, True), (42, False)])
def test_a_bc_syzygy_gives_its_bc_year_at_every_width(width, in_line):
    """The lunation board's first full moon, -0149-04-05, is 150 BC (astronomers' year -149
    is 150 BC; common practice, no source): the readings and the drift chart say so, the
    eclipses panel wrote only the signed date, and at 80 columns (the panel's 42 cells) it
    still did. There how far off it is goes in the panel's title, so the line keeps the BC
    year: nothing wraps, nothing is cut."""
    app = make_app("engine/trains/lunation_board.toml")
    now = app.session.now()
    line = EclipseInfo.text(now, width).plain.splitlines()[0]
    assert line.startswith("full moon -0149-04-05 15:11 UT (150 BC)"), line
    assert (" · 4.6 d ago" in line) == in_line, line
    title = EclipseInfo.title(now, width)
    assert title == ("eclipses" if in_line else "eclipses · full moon 4.6 d ago"), title
    assert len(line) <= width, line


@sync
async def test_at_80x24_the_bc_year_is_in_the_panel_and_how_far_off_in_its_title():
    """The bench at 80 × 24 on the lunation board: the eclipses panel shows 150 BC, and its
    title how far off that full moon is; back to "eclipses" once the line has room."""
    app = make_app("engine/trains/lunation_board.toml")
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        panel = app.screen.query_one(EclipseInfo)
        assert "(150 BC)" in text_of(panel).splitlines()[0]
        assert str(panel.border_title) == "eclipses · full moon 4.6 d ago"
        await pilot.resize_terminal(120, 30)
        await wait_for(pilot, lambda: str(panel.border_title) == "eclipses",
                       "the panel's title back to 'eclipses' at 120×30")
        assert "(150 BC) · 4.6 d ago" in text_of(panel).splitlines()[0]
        assert str(panel.border_title) == "eclipses"


def _board_set_half_a_month_off(tmp_path) -> Path:
    """The eclipse board set by angles at its epoch: every pointer on the sky but its 223-month
    ring, turned half a month on, so its new moons fall near the middle of its months and
    its marks (none in the file) come out as that setting reads them."""
    import numpy as np

    from engine.demos import demo_path
    from engine.drift import pointer_errors
    from engine.mechanism import open_train
    from engine.sky import Sky

    path = demo_path("eclipse_board")
    sky = Sky()
    mech = open_train(path, sky)
    assert mech.train.pointers["months"].marks is None  # read off the sky, not listed
    errors = pointer_errors(mech, sky, np.array([mech.train.epoch.jd_ut]))
    text = path.read_text(encoding="utf-8").replace('set = "sky"', 'set = "angles"')
    for name, e in errors.items():
        value = float(np.ravel(e.sky_deg)[0]) + (180.0 if name == "months" else 0.0)
        text = text.replace(f"[pointers.{name}]\n", f"[pointers.{name}]\nset_deg = {value:.4f}\n")
    off = tmp_path / "board_off.toml"
    off.write_text(text, encoding="utf-8")
    return off


@sync
async def test_a_re_set_turns_the_ring_and_leaves_its_marks_where_they_were_painted(tmp_path):
    """A cycle dial whose marks are read off the sky gets them once, as the first setting
    reads them, as a maker paints them once: r, m and u turn the ring, and the marks stay.
    They were read again with the ring as re-set: with the board's ring set half a month off,
    r in 1960 moved solar and lunar marks by a month (common practice, no source: a painted
    dial is not repainted when its pointer is set)."""
    from engine.eclipses import derive_marks

    app = make_app(_board_set_half_a_month_off(tmp_path))
    session = app.session
    first = session.eclipse_watch.marks
    assert first == derive_marks(session.mech, session.sky, "months")
    session.go_to(parse_date("1960-01-01"))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        for key in ("r", "m", "u", "u"):
            readout = session.mech.readout
            await pilot.press(key)
            await pilot.pause()
            assert session.mech.readout is not readout, key  # the ring was turned
            assert session.eclipse_watch.marks == first, key
            if key == "r":  # as re-set it reads other months than the painted ones
                assert derive_marks(session.mech, session.sky, "months") != first
        assert not session.can_undo
