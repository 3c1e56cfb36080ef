"""Mean periods derived from the mean-element rates agree with the rounded values almanacs
quote (values from memory, each a standard figure of positional astronomy)."""

import numpy as np
import pytest

from engine.periods import PERIODS, find_period, mean_elements

# days; from memory, the figures printed in almanacs and astronomy handbooks
QUOTED = {
    "tropical_year": 365.24219,
    "sidereal_year": 365.25636,
    "anomalistic_year": 365.25964,
    "tropical_month": 27.321582,
    "sidereal_month": 27.321662,
    "synodic_month": 29.530589,
    "anomalistic_month": 27.554550,
    "draconic_month": 27.212221,
    "nodal_period": 6798.38,
    "apsidal_period": 3231.50,
}


@pytest.mark.parametrize("key", sorted(QUOTED))
def test_periods_match_quoted_values(key):
    assert PERIODS[key].days == pytest.approx(QUOTED[key], rel=2e-7 if QUOTED[key] < 400
                                              else 2e-6)


def test_node_regresses_and_everything_else_advances():
    assert PERIODS["nodal_period"].sense == -1
    assert all(p.sense == 1 for k, p in PERIODS.items() if k != "nodal_period")


def test_find_period_by_name():
    assert find_period("Synodic month").key == "synodic_month"
    assert find_period("sidereal-months").key == "sidereal_month"
    assert find_period("lunation").key == "synodic_month"
    with pytest.raises(KeyError, match="known periods"):
        find_period("fortnight")


def test_mean_elements_at_j2000():
    """Constant terms of the polynomials (Meeus ch. 47 and ch. 25, from memory)."""
    m = mean_elements(2451545.0)
    assert float(m["moon"]) == pytest.approx(218.3164477)
    assert float(m["node"]) == pytest.approx(125.0445479)
    assert float(m["sun"]) == pytest.approx(280.46646)
    assert float(m["anomaly"]) == pytest.approx(134.9633964)


def test_mean_elements_example_47a():
    """Meeus, Astronomical Algorithms ch. 47, example 47.a (1992 April 12, 0h TD), from
    memory: L' = 134.290182°, D = 113.842304°, M = 97.643514°, M' = 5.150833°, F = 219.889721°."""
    m = mean_elements(2448724.5)
    assert float(m["moon"]) == pytest.approx(134.290182, abs=2e-6)
    assert float(m["phase"]) == pytest.approx(113.842304, abs=2e-6)
    assert float(m["sun_anomaly"]) == pytest.approx(97.643514, abs=2e-6)
    assert float(m["anomaly"]) == pytest.approx(5.150833, abs=2e-6)
    assert float(m["draconic"]) == pytest.approx(219.889721, abs=2e-6)


def test_mean_elements_broadcast():
    jd = np.array([[2451545.0, 2460000.5], [2400000.5, 2500000.5]])
    m = mean_elements(jd)
    assert m["moon"].shape == (2, 2)
    assert float(mean_elements(2460000.5)["moon"]) == pytest.approx(m["moon"][0, 1])
