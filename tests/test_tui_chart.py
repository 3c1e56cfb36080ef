"""The drift chart's y scale at small sizes, driven by Textual's Pilot: the ±threshold band's
two lines never share a text row; when every curve in view would squeeze them together the
chart is fitted to the band (and says which curves run off it), or leaves the band out and
says so; `y` switches to every curve whole and back; a resize chooses again.

The rule is a layout choice (common practice, no source): two lines one text row apart or less
read as one line, so the band is drawn only when its lines stand two rows apart.
"""

from textual_hires_canvas import Canvas
from textual_plot import PlotWidget

from engine.demos import demo_path
from engine.view import BAND_ROWS
from tests.tui_support import sync, text_of, wait_for
from tui.app import make_app
from tui.screens import DriftScreen
from tui.widgets import canvas_rows, ui


def threshold_rows(screen) -> list[int]:
    """The text rows of the plot where the ±threshold lines are drawn (their own style)."""
    canvas = screen.query_one(PlotWidget).query_one("#plot", Canvas)
    style = f"bold {ui(screen)['fg']}"
    return sorted({y for y, row in enumerate(canvas_rows(canvas)[1]) if style in row})


async def open_chart(pilot, app) -> DriftScreen:
    await pilot.press("d")
    await app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.pause()
    assert isinstance(app.screen, DriftScreen)
    return app.screen


@sync
async def test_orrery_band_spans_rows_at_80x24_and_y_shows_every_curve():
    """The table orrery at 80 × 24: Mercury's ±30° swing beside the Venus and Earth arms near
    ±1° put both threshold lines in one row. Now the band's lines are two rows apart or more,
    Venus's and the Earth's curves are whole inside the chart, and the note under it names
    the arms that run off. `y` gives every curve whole: the band then cannot be drawn apart,
    so it is left out and the note says so; `y` again fits the band."""
    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_chart(pilot, app)
        result, plot = screen.result, screen.query_one(PlotWidget)
        note = screen.query_one("#drift-scale")
        rows = threshold_rows(screen)
        assert len(rows) == 2 and rows[1] - rows[0] >= BAND_ROWS, rows
        for arm in ("venus", "earth"):
            err = result.error_deg[arm]
            assert screen.scale.y_min < err.min() and err.max() < screen.scale.y_max, arm
        assert result.error_deg["mercury"].max() > screen.scale.y_max
        assert note.display
        said = text_of(note)
        assert "fitted to the ±1° band" in said and "mercury" in said and "venus" not in said
        # the note is in view under the plot, heading the table
        assert note.region.height >= 1 and note.region.y > plot.region.bottom - 1

        await pilot.press("y")
        await pilot.pause()
        await pilot.pause()
        assert threshold_rows(screen) == []
        assert screen.scale.y_max > result.error_deg["mercury"].max()
        said = text_of(note)
        assert "band not drawn" in said and "would share a row" in said and "y fits" in said

        await pilot.press("y")
        await pilot.pause()
        await pilot.pause()
        rows = threshold_rows(screen)
        assert len(rows) == 2 and rows[1] - rows[0] >= BAND_ROWS, rows


@sync
async def test_a_resize_chooses_the_scale_again_without_computing_again():
    """The nineteen-year drum at 80 × 24: its Moon and phase run off a chart fitted to the
    band; at 160 × 60 every curve fits with the band, so the chart shows them all again."""
    app = make_app(demo_path("nineteen_year_drum"))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_chart(pilot, app)
        result = screen.result
        note = screen.query_one("#drift-scale")
        assert "off the chart: moon, phase" in text_of(note)
        await pilot.resize_terminal(160, 60)
        await wait_for(pilot, lambda: not note.display, "the chart drawn again at 160×60")
        assert screen.result is result  # drawn again, not computed again
        assert not note.display
        rows = threshold_rows(screen)
        assert len(rows) == 2 and rows[1] - rows[0] >= BAND_ROWS, rows
        for err in result.error_deg.values():
            assert screen.scale.y_min < err.min() and err.max() < screen.scale.y_max


@sync
async def test_a_resize_of_the_width_alone_words_the_header_and_note_again():
    """The nineteen-year drum at 80 × 24, widened to 100 × 24 (the plot's rows unchanged) and
    narrowed again: the table's header and the scale note are chosen for the width they are
    shown at (the short "max°" and "· y: all" under 100 columns, the full ones from 100), not
    kept from the width the chart was first drawn at; nothing is computed again."""
    app = make_app(demo_path("nineteen_year_drum"))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_chart(pilot, app)
        result, rows = screen.result, screen._curve_rows()
        note, table = screen.query_one("#drift-scale"), screen.query_one("#drift-summary")
        head = text_of(table).splitlines()[0]
        assert "max°" in head and "(vertical line)" not in head, head
        assert text_of(note).rstrip().endswith("· y: all"), text_of(note)
        await pilot.resize_terminal(100, 24)
        await wait_for(pilot, lambda: "max |err|°" in text_of(table), "the wide header")
        head = text_of(table).splitlines()[0]
        assert "first past ±1° (vertical line)" in head, head
        await wait_for(pilot, lambda: text_of(note).rstrip().endswith("· y: every curve"),
                       "the scale note in full words")
        assert screen._curve_rows() == rows and screen.result is result
        await pilot.resize_terminal(80, 24)
        await wait_for(pilot, lambda: "max°" in text_of(table), "the narrow header")
        await wait_for(pilot, lambda: text_of(note).rstrip().endswith("· y: all"),
                       "the scale note in fewer words")
        assert "(vertical line)" not in text_of(table) and screen.result is result


@sync
async def test_no_band_when_no_curve_stays_near_it():
    """The 59-tooth moon disc strays to over 100° in the span: no curve stays near a ±1°
    band, so every curve stays in view, the band is left out and the note says why."""
    app = make_app(demo_path("moon_disc_59"))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_chart(pilot, app)
        assert threshold_rows(screen) == []
        said = text_of(screen.query_one("#drift-scale"))
        assert "band not drawn" in said and "no pointer stays near it" in said


@sync
async def test_the_chart_s_trend_is_written_as_the_readings_write_a_drift():
    """The tide office's Sun trends some 0.0008°/cy over the span: "+0.00" said nothing, and
    a train far off gave +67987.93 beside the readings' +67,988 (common practice, no
    source: one way of writing a figure on every screen). A trend measured with its σ is
    written as `wheelwork drift` writes one (engine.figures.error_with_sigma: to its σ's
    decimals, whole and grouped from 1,000)."""
    from engine.figures import error_with_sigma

    app = make_app(demo_path("tide_office"))
    async with app.run_test(size=(160, 50)) as pilot:
        screen = await open_chart(pilot, app)
        table = text_of(screen.query_one("#drift-summary"))
        for name, sm in screen.result.summaries.items():
            row = next(line for line in table.splitlines() if f"━━ {name} " in line)
            trend, _ = error_with_sigma(sm.drift_deg_per_century,
                                        sm.drift_sigma_deg_per_century)
            assert f" {trend} " in row, row
        sun = screen.result.summaries["sun"]
        trend, _ = error_with_sigma(sun.drift_deg_per_century, sun.drift_sigma_deg_per_century)
        assert abs(sun.drift_deg_per_century) < 0.01 and len(trend) == 7, trend  # 4 decimals
    assert error_with_sigma(67987.93, 12.0)[0] == "+67,988"


@sync
async def test_the_chart_s_trend_comes_with_its_standard_error():
    """The table orrery from its epoch to DE421's end (27.8 years, under one of Saturn's
    years): the trend column alone read Saturn's arm drifting +100 °/cy and more, which
    `wheelwork drift` gives with ± 100 or so and calls uncertain. Each row now has its ±
    beside the trend and a ? where the drift is uncertain, which the help explains (common
    practice, no source: a figure says how well it is known)."""
    from engine.figures import error_with_sigma, figure

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(160, 50)) as pilot:
        screen = await open_chart(pilot, app)
        table = text_of(screen.query_one("#drift-summary"))
        sums = screen.result.summaries
        for name, sm in sums.items():
            row = next(line for line in table.splitlines() if f"━━ {name} " in line)
            assert f" {DriftScreen.trend_sigma_text(sm)} " in f"{row} ", row
            # the trend to its σ's decimals, none below (it had the column's four beside a
            # σ of 0.61; common practice, no source: no digits below a value's uncertainty)
            trend, pm = error_with_sigma(sm.drift_deg_per_century,
                                         sm.drift_sigma_deg_per_century)
            assert f" {trend} " in f"{row} " and pm is not None, row
            assert len(trend.partition(".")[2]) == len(pm.partition(".")[2]), row
        saturn = sums["saturn"]
        assert saturn.drift_uncertain and saturn.drift_sigma_deg_per_century > 10
        assert DriftScreen.trend_sigma_text(saturn) == \
            f"{figure(saturn.drift_sigma_deg_per_century, 2)} ?"
        assert not sums["venus"].drift_uncertain
        assert "?" not in DriftScreen.trend_sigma_text(sums["venus"])
        await pilot.press("question_mark")
        await pilot.pause()
        helped = " ".join(text_of(w) for w in app.screen.query("Static"))
        assert "± its standard error, with ? where the span is too short" in \
            " ".join(helped.split())


# --- the x axis's tick labels ------------------------------------------------------------------

def x_tick_labels(screen) -> list[str]:
    """The words on the x axis's tick row (the plot's bottom margin), as drawn."""
    margin = screen.query_one(PlotWidget).query_one("#margin-bottom", Canvas)
    return "".join(canvas_rows(margin)[0][0]).split()


@sync
async def test_x_tick_labels_are_never_cut_at_the_chart_edges():
    """At every width from 80 to 160 columns each label on the x axis is a whole tick label
    (a year the axis ticks), never one cut at the chart's edge ("-20" for "-200"): a label
    that would run off is left out (a layout choice, common practice, no source)."""
    from textual_plot import NumericAxisFormatter

    from engine.dates import parse_date
    from engine.view import decimal_year

    app = make_app(demo_path("table_orrery"))
    async with app.run_test(size=(80, 24)) as pilot:
        # a span ending a month past a round year: that year's tick stands at the right edge
        app.session.go_to(parse_date("1950-02-01"))
        screen = await open_chart(pilot, app)
        years = decimal_year(screen.result.jd)
        _, whole = NumericAxisFormatter().get_ticks_and_labels(float(years[0]),
                                                               float(years[-1]))
        for width in range(80, 161):
            await pilot.resize_terminal(width, 24)
            await wait_for(pilot, lambda width=width: screen.size.width == width
                           and x_tick_labels(screen), f"the axis drawn at {width} columns")
            drawn = x_tick_labels(screen)
            assert drawn, width
            assert set(drawn) <= set(whole), (width, drawn, whole)


@sync
async def test_the_lunation_board_s_table_rows_are_in_view_at_80x24():
    """At 80 × 24 the lunation board's chart showed none of its table's rows without
    scrolling: the scale note took two rows, the BC line one and the last header, folded, three
    of the table's five (common practice, no source: a table shows its first rows before
    its notes). Now the note is one row, the header one, every pointer's row is in view and
    the BC line comes under them (the title gives each end's BC year)."""
    import pytest

    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    app = make_app(demo_path("lunation_board"))
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_chart(pilot, app)
        table = screen.query_one("#drift-table")
        note = screen.query_one("#drift-scale")
        assert note.display and note.region.height == 1, text_of(note)
        assert "off the chart: moon, phase" in text_of(note)
        summary = screen.query_one("#drift-summary")
        lines = [summary.render_line(y).text for y in range(summary.size.height)]
        assert "first past ±1°" in lines[0]  # the header on one line
        for name in screen.result.summaries:
            row = next(k for k, line in enumerate(lines) if f"━━ {name} " in line)
            assert summary.region.y + row < table.region.bottom, (name, lines)
        assert "-0149 is 150 BC" in " ".join(lines[-1].split())
