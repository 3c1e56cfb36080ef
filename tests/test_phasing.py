"""A pin-and-slot stage's phase at the epoch, measured against the sky: `wheelwork drift` says
when a stage puts the sky's inequality in instead of taking it out, and which phase fits."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from engine.api import Sky, build, demo_path, load_train, open_train, parse_date
from engine.cli import main
from engine.phasing import stage_phases

TIDE = demo_path("tide_office")
BC300 = "-0299-03-01"


def _moved(tmp_path: Path, pin_deg: float | None = None) -> Path:
    """The tide office with its epoch moved to 300 BC on DE406 (its pin_deg left as is,
    unless given)."""
    text = TIDE.read_text().replace('date = "2026-01-01 00:00"',
                                    f'date = "{BC300}"\nephemeris = "de406"')
    if pin_deg is not None:
        text = text.replace("pin_deg = 6.68 ", f"pin_deg = {pin_deg} ")
    path = tmp_path / "tide_300bc.toml"
    path.write_text(text)
    return path


def test_tide_office_at_its_own_epoch_is_in_phase(capsys):
    (ph,) = stage_phases(open_train(TIDE), Sky())
    assert ph.stage == "anomaly" and ph.pin_deg == 6.68
    assert not ph.off
    # over two years every other inequality meets its extremes: the Sun's equation of centre
    # (the phase pointer is the Moon less the Sun), the Moon's evection, variation, annual
    # equation and reduction to the ecliptic, 1.92 + 1.27 + 0.66 + 0.19 + 0.11 = 4.15° (from
    # memory) either way: the swing stays within theirs, under the 12.6° of the equation of
    # centre the stage takes out
    assert ph.swing_deg < 2 * 4.15 + 0.5
    assert main(["drift", "tide_office", "--years", "1", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (entry,) = doc["pin_slot_phases"]
    assert entry["stage"] == "anomaly" and entry["off"] is False and entry["note"] is None
    assert main(["drift", "tide_office", "--years", "1"]) == 0
    assert "out of phase" not in capsys.readouterr().out


def test_a_train_with_no_stage_is_untouched(capsys):
    assert stage_phases(open_train(demo_path("nineteen_year_drum")), Sky()) == []
    assert main(["drift", "nineteen_year_drum", "--years", "1", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["pin_slot_phases"] == []


@pytest.fixture(scope="module")
def ancient():
    pytest.importorskip("de406", reason="the 'ancient' extra (DE406) is not installed")
    return Sky("de406")


class TestEpochMoved:
    def test_the_stage_is_off_and_the_phase_that_fits_is_the_mean_anomaly(self, tmp_path,
                                                                           ancient):
        sky = ancient
        (ph,) = stage_phases(build(load_train(_moved(tmp_path)), sky), sky)
        assert ph.off
        assert ph.swing_deg > 20 and ph.best_swing_deg < ph.swing_deg / 2
        # the stage's pin stands for the Moon's mean anomaly: the phase that fits the sky is
        # the mean anomaly at the epoch, within the other inequalities' pull
        anomaly = float(sky.at(np.array([parse_date(BC300)])).moon_mean_anomaly_deg[0])
        assert abs((ph.best_pin_deg - anomaly + 180) % 360 - 180) < 3

    def test_drift_says_so_and_what_to_set(self, tmp_path, capsys, ancient):
        path = _moved(tmp_path)
        assert main(["drift", str(path), "--years", "1", "--step", "6h"]) == 0
        out = " ".join(capsys.readouterr().out.split())  # the report wraps at the width
        assert "pin-and-slot stage 'anomaly' is out of phase with the sky" in out
        assert "with pin_deg = 6.68°" in out and "set pin_deg to about 20" in out
        assert "[pin_slots.anomaly]" in out and "(300 BC)" in out
        assert main(["drift", str(path), "--years", "1", "--step", "6h", "--json"]) == 0
        (entry,) = json.loads(capsys.readouterr().out)["pin_slot_phases"]
        assert entry["off"] is True and "set pin_deg to about" in entry["note"]
        assert 200 < entry["best_pin_deg"] < 207

    def test_the_phase_set_as_suggested_is_quiet(self, tmp_path, capsys, ancient):
        path = _moved(tmp_path, pin_deg=203.5)  # the Moon's mean anomaly then (wheelwork sky)
        sky = ancient
        (ph,) = stage_phases(build(load_train(path), sky), sky)
        assert not ph.off and ph.swing_deg < 10
        assert main(["drift", str(path), "--years", "1"]) == 0
        assert "out of phase" not in capsys.readouterr().out


def test_two_years_of_the_pin_and_six_turns_near_the_ephemeris_end(tmp_path):
    """27 turns of the anomaly pin (two years: the other inequalities average out of the fit)
    where the ephemeris covers them, six where it does not (DE421 ends in 2053)."""
    anomalistic = 27.5545  # days (from memory)
    (ph,) = stage_phases(open_train(TIDE), Sky())
    assert abs((ph.to_jd - ph.from_jd) - 27 * anomalistic) < 1.0
    late = tmp_path / "late.toml"
    late.write_text(TIDE.read_text().replace('date = "2026-01-01 00:00"',
                                             'date = "2053-01-01 00:00"'))
    (ph,) = stage_phases(open_train(late), Sky())
    assert abs((ph.to_jd - ph.from_jd) - 6 * anomalistic) < 1.0
