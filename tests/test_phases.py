"""Phase names: bands a person would accept, one table, said in the help."""

from __future__ import annotations

import numpy as np
import pytest

from engine.phases import HALF_WIDTH_DEG, PHASE_NAMES, phase_bands, phase_help, phase_names


@pytest.mark.parametrize("elongation,name", [
    (0.0, "new"), (11.0, "new"), (-11.0, "new"), (19.0, "waxing crescent"),
    (45.0, "waxing crescent"), (80.0, "first quarter"), (100.0, "first quarter"),
    (135.0, "waxing gibbous"), (170.0, "full"), (190.0, "full"), (225.0, "waning gibbous"),
    (270.0, "last quarter"), (300.0, "waning crescent"), (346.0, "waning crescent"),
    (350.0, "new"), (720.0 + 90.0, "first quarter"),
])
def test_names_by_elongation(elongation, name):
    assert phase_names(elongation) == [name]


def test_exact_phases_are_about_a_day_wide():
    """New, the quarters and full span a mean day of elongation on each side (12.19°/day,
    the mean synodic month 29.53 days: common practice, no source); the bands tile the circle."""
    assert HALF_WIDTH_DEG == pytest.approx(360 / 29.530589, rel=1e-5)
    bands = phase_bands()
    assert [b[0] for b in bands] == list(PHASE_NAMES)
    widths = [(b - a) % 360 for _, a, b in bands]
    assert sum(widths) == pytest.approx(360)
    for name, w in zip(PHASE_NAMES, widths, strict=True):
        if name in ("new", "first quarter", "full", "last quarter"):
            assert w == pytest.approx(2 * HALF_WIDTH_DEG)
    assert phase_names(np.array([[0.0, 180.0]])) == ["new", "full"]


def test_moon_a_day_and_a_half_old_is_a_crescent():
    """New Moon 2024-01-11 11:57 UT (from memory; checked here against our own sky, where the
    elongation must be within a degree of zero). 1.5 days later the Moon is about 19° from the
    Sun and about 3% lit: a waxing crescent, not "new"."""
    from engine.dates import parse_date
    from engine.sky import Sky

    sky = Sky()
    new = parse_date("2024-01-11 11:57")
    at_new = sky.at(new)
    assert min(float(at_new.elongation_deg), 360 - float(at_new.elongation_deg)) < 1.0
    later = sky.at(new + 1.5)
    assert 15 < float(later.elongation_deg) < 23 and float(later.illuminated) < 0.05
    assert later.phase_names() == ["waxing crescent"]


def test_help_says_the_bands(capsys):
    from engine.cli import main

    text = phase_help()
    assert "new 347.8°–12.2°" in text and "full 167.8°–192.2°" in text
    assert main(["sky", "--help"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "phase names" in out and text in out


def test_docs_table_matches_the_bands():
    from pathlib import Path

    doc = (Path(__file__).resolve().parent.parent / "docs" / "sky.md").read_text()
    for name, a, b in phase_bands():
        assert f"| {name} | {a:.1f}°–{b:.1f}° |" in doc, name
