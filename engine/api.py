"""wheelwork's public face: everything a script or notebook needs, in one import.

>>> from engine.api import open_train, Sky
>>> mech = open_train("engine/trains/nineteen_year_drum.toml")    # load, solve, set at the epoch
>>> mech.kin.rate("moon")
Fraction(254, 19)

See ``docs/api.md`` for worked examples.
"""

from __future__ import annotations

from engine.dates import calendar_date, format_jd, parse_date
from engine.drift import DriftResult, PointerSummary, drift_series, parse_step, pointer_errors
from engine.errors import DateError, SearchError, SkyError, TrainError, WheelworkError
from engine.exact import Turns, parse_fraction
from engine.kinematics import Kinematics, LinearAngle, slot_follower_turns, solve
from engine.loader import load_train, parse_train
from engine.checks import check
from engine.mechanism import DEFAULT_TRAIN, Mechanism, build, open_train
from engine.periods import PERIODS, POINTER_KINDS, MeanPeriod, find_period, mean_elements
from engine.ratios import PointerRatio, pointer_ratios
from engine.readout import Readout, backward_warnings, epoch_values
from engine.search import (
    convergents,
    emit_fragment,
    make_constraints,
    make_target,
    search,
)
from engine.sky import Site, Sky, SkyState
from engine.train import Train

__all__ = [
    # trains: load, solve, set
    "load_train", "parse_train", "Train", "solve", "Kinematics", "LinearAngle",
    "open_train", "build", "Mechanism", "DEFAULT_TRAIN",
    # turning and reading
    "Turns", "Readout", "epoch_values", "backward_warnings", "slot_follower_turns",
    "parse_fraction",
    # ratios and periods
    "pointer_ratios", "PointerRatio", "PERIODS", "POINTER_KINDS", "MeanPeriod", "find_period",
    "mean_elements",
    # sky truth and dates
    "Sky", "SkyState", "Site", "parse_date", "format_jd", "calendar_date",
    # drift
    "pointer_errors", "drift_series", "DriftResult", "PointerSummary", "parse_step",
    # search
    "search", "make_target", "make_constraints", "convergents", "emit_fragment",
    # mechanical checks
    "check",
    # errors
    "WheelworkError", "TrainError", "DateError", "SkyError", "SearchError",
]
