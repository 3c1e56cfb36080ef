"""Drawing helpers: train layout, lit discs, arbor turn counts."""

from fractions import Fraction

import numpy as np
import pytest

from engine.demos import demo_path
from engine.exact import Turns
from engine.loader import load_train
from engine.mechanism import DEFAULT_TRAIN
from engine.view import (
    arbor_turns,
    ball_lit_fraction,
    decimal_year,
    hands_elongation_deg,
    lit_disc,
    too_fast,
    train_layout,
)

AREA = 0.02  # coverage tolerance of a 4 × 4-sampled disc (common practice, no source)


def test_layout_puts_crank_first_and_every_arbor_somewhere():
    train = load_train(DEFAULT_TRAIN)
    lay = train_layout(train)
    assert set(lay.spots) == set(train.arbors)
    assert lay.spots[train.crank.arbor].col == 0
    # a mesh joins arbors in neighbouring columns or the same column
    for a, b, _ in lay.meshes:
        assert abs(lay.spots[a].col - lay.spots[b].col) <= 1
    # no two arbors share a spot
    assert len({(s.col, s.row) for s in lay.spots.values()}) == len(lay.spots)
    assert ("perigee_carrier", "pin_arbor") in lay.carried
    assert lay.max_teeth == 133


def test_lit_disc_areas_follow_the_lit_fraction():
    # the lit share of the disc's area equals the lit fraction (terminator is a half-ellipse)
    for f in (0.0, 0.25, 0.5, 0.9, 1.0):
        disc, lit = lit_disc(f, True, 40, 40)
        assert lit.sum() / disc.sum() == pytest.approx(f, abs=AREA)
    disc, lit = lit_disc(0.5, True, 40, 40)
    assert lit[:, 20:].sum() > 0 and lit[:, :20].sum() == 0  # waxing: lit on the right
    disc, lit = lit_disc(0.5, False, 40, 40)
    assert lit[:, :20].sum() > 0 and lit[:, 20:].sum() == 0


def test_ball_lit_fraction():
    # a half-silvered ball: new 0, quarter 1/2, full 1 (geometry, common practice)
    assert ball_lit_fraction(0.0) == pytest.approx(0.0)
    assert ball_lit_fraction(90.0) == pytest.approx(0.5)
    assert ball_lit_fraction(180.0) == pytest.approx(1.0)
    assert hands_elongation_deg(10.0, 350.0) == pytest.approx(20.0)


def test_arbor_turns_are_exact_rate_times_turns():
    rates = {"a": Fraction(10, 59), "b": Fraction(-3, 7)}
    got = arbor_turns(rates, Turns.of(Fraction(59 * 1000 + 1, 2)))
    assert got["a"] == pytest.approx(10 / 59 * (59 * 1000 + 1) / 2, rel=1e-15)
    assert got["b"] == pytest.approx(-3 / 7 * (59 * 1000 + 1) / 2, rel=1e-15)
    assert too_fast(Fraction(1), 0.2) and not too_fast(Fraction(1, 100), 10)


def test_decimal_year():
    # J2000.0 is JD 2451545.0 (IAU definition)
    assert decimal_year(2451545.0) == pytest.approx(2000.0)
    assert np.allclose(decimal_year(np.array([2451545.0 + 365.25])), [2001.0])


def test_turns_label_fits_the_width():
    from engine.view import turns_label

    assert turns_label(98.5, 5) == "+98.5"
    assert turns_label(98.5, 3) == "+98"
    assert turns_label(-16.7, 4) == "-17"
    assert turns_label(-0.04, 5) == "0"  # no signed zero
    assert turns_label(-123456, 8) == "-123,456"
    assert turns_label(-123456, 5) == "-123k"
    assert turns_label(12345678, 6) == "+12.3M"
    assert turns_label(12345678, 2) is None
    for n in (0.3, 98.5, -1234.5, 5e7):
        for w in range(1, 10):
            got = turns_label(n, w)
            assert got is None or len(got) <= w


# --- where the train drawing puts each arbor, and which arbor a click lands on ---------------
def test_place_train_and_the_hit_test_agree_with_every_wheel():
    from engine.view import arbor_at, picked_wheel, place_train

    train = load_train(demo_path("tide_office"))
    layout = train_layout(train)
    for width, height in ((158, 14), (78, 8), (300, 40)):
        places = place_train(layout, width, height)
        assert set(places) == set(train.arbors)
        for name, p in places.items():
            assert 0 <= p.x <= width and 0 <= p.y <= height
            assert arbor_at(places, p.x, p.y) == name  # the centre of its wheel
            # the label's first and last cells
            assert arbor_at(places, p.label_x + 0.5, p.label_row + 0.5) == name
            assert arbor_at(places, p.label_x + len(p.label) - 0.5, p.label_row + 0.5) == name
    places = place_train(layout, 158, 14)
    sun = places["sun"]
    # the rim is an ellipse, half as tall as wide: a point just outside it is not the wheel
    assert arbor_at(places, sun.x, sun.y - sun.r / 2 - 0.8) != "sun"
    assert arbor_at(places, -5.0, -5.0) is None
    # a click picks the arbor's largest wheel, the one its label names
    assert picked_wheel(train, "sun_first") == "sun_w1"  # 59 teeth beside an 11-leaf pinion
    assert picked_wheel(train, "sun") == "sun_w3"
    assert picked_wheel(train, "nowhere") is None


def test_train_labels_are_whole_and_clear_of_other_wheels_in_every_demo():
    """The bench's train canvas is 14 rows high: with six arbors in a column (the table
    orrery) a label under its wheel fell on the next wheel's row, whose turning radius was
    drawn over the label's letters; in a narrow column a label was cut at its end, turning
    a tooth count of 65 into 6. Every label keeps its count whole and is clear of the other
    wheels' radius markers and labels."""
    import math

    from engine.demos import demo_names
    from engine.view import place_train

    def cells_of_marker(q):  # where the turning radius can be drawn
        return {(x, y) for y in range(math.floor(q.y - 0.45 * q.r), math.floor(q.y + 0.45 * q.r) + 1)
                for x in range(math.floor(q.x - 0.9 * q.r), math.floor(q.x + 0.9 * q.r) + 1)}

    for name in demo_names():
        train = load_train(demo_path(name))
        layout = train_layout(train)
        for width in (118, 158, 198):
            places = place_train(layout, width, 14)
            for a, p in places.items():
                teeth = max((train.wheels[w].teeth for w in train.arbors[a].wheels), default=0)
                # the count whole (a cut one reads as another number); the name may be cut
                whole = f"{a} {teeth}" if teeth else a
                assert p.label == whole or (p.label.endswith(f"… {teeth}")
                                            and whole.startswith(p.label[:-len(f"… {teeth}")])
                                            ), (name, width, a, p.label)
                cells = {(x, p.label_row) for x in range(p.label_x, p.label_x + len(p.label))}
                for b, q in places.items():
                    if b == a:
                        continue
                    other = {(x, q.label_row) for x in range(q.label_x, q.label_x + len(q.label))}
                    assert not cells & cells_of_marker(q), (name, width, a, b)
                    assert not cells & other, (name, width, a, b)


# --- the drift chart's y scale (engine.view.chart_scale) ------------------------------------
# The rule is a layout choice (common practice, no source): the ±threshold band is drawn only
# when its two lines stand BAND_ROWS text rows apart, so they never share a row.

def _band_rows(scale, thr: float, rows: int) -> float:
    return 2 * thr * rows / (scale.y_max - scale.y_min)


def test_chart_scale_keeps_every_curve_when_the_band_fits():
    from engine.view import BAND_ROWS, chart_scale

    errors = {"sun": np.linspace(-3, 2, 50), "moon": np.linspace(0, 4, 50)}
    scale = chart_scale(errors, 1.0, 10)
    assert scale.band and not scale.fitted and scale.off_chart == ()
    assert scale.y_min < -3 and scale.y_max > 4
    assert _band_rows(scale, 1.0, 10) >= BAND_ROWS


def test_chart_scale_fits_the_band_and_names_the_curves_it_leaves_off():
    """One pointer far off (±30°) and two near the band: at ten rows every curve in view
    would put the ±1° lines in one row; the fitted scale keeps the near ones whole and the
    band two rows or more, and names the far one."""
    from engine.view import BAND_ROWS, chart_scale

    t = np.linspace(0, 20, 400)
    errors = {"far": 30 * np.sin(t), "near": 0.8 * np.sin(3 * t), "edge": 2 * np.cos(t)}
    whole = chart_scale(errors, 1.0, 10, whole=True)
    assert not whole.band and not whole.fitted and whole.off_chart == ()
    assert _band_rows(whole, 1.0, 10) < BAND_ROWS
    scale = chart_scale(errors, 1.0, 10)
    assert scale.band and scale.fitted and scale.off_chart == ("far",)
    assert _band_rows(scale, 1.0, 10) >= BAND_ROWS
    for name in ("near", "edge"):
        assert scale.y_min < errors[name].min() and errors[name].max() < scale.y_max
    # with 66 rows or more the ±30° curve and the band fit together: nothing is left off
    tall = chart_scale(errors, 1.0, 70)
    assert tall.band and not tall.fitted


def test_chart_scale_leaves_the_band_out_when_no_curve_stays_near_it():
    from engine.view import chart_scale

    errors = {"a": np.linspace(-5, 140, 100), "b": np.full(100, np.nan)}
    scale = chart_scale(errors, 1.0, 10)
    assert not scale.band and not scale.fitted and scale.off_chart == ()
    assert scale.y_min < -5 and scale.y_max > 140
    # two rows of curves cannot hold a band two rows apart at any scale
    tiny = chart_scale({"a": np.linspace(-0.5, 0.5, 10)}, 1.0, 2)
    assert not tiny.band and not tiny.fitted


def test_short_names_never_show_two_names_alike():
    from engine.view import short_names

    names = ["sun", "eclipse_ring", "eclipse_hand", "calendar"]
    got = short_names(names, 9)
    assert got["sun"] == "sun" and got["calendar"] == "calendar"
    # a plain cut would show both as 'eclipse_…'
    assert got["eclipse_ring"] == "ecli…ring" and got["eclipse_hand"] == "ecli…hand"
    assert all(len(v) <= 9 for v in got.values())
    assert len(set(got.values())) == len(names)
    # a name cut alone keeps its start
    assert short_names(["perigee_hand", "sun"], 9)["perigee_hand"] == "perigee_…"
    assert short_names(["eclipse_ring"], 12) == {"eclipse_ring": "eclipse_ring"}
