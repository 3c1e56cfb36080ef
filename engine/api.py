"""wheelwork's public face: everything a script or notebook needs, in one import.

>>> from engine.api import open_train, Sky
>>> mech = open_train("engine/trains/nineteen_year_drum.toml")    # load, solve, set at the epoch
>>> mech.kin.rate("moon")
Fraction(254, 19)

See ``docs/api.md`` for worked examples.
"""

from __future__ import annotations

from .checks import ArborCheck, CheckReport, Finding, MeshCheck, PinSlotCheck, check
from .dates import as_jd, calendar_date, format_jd, parse_date, parse_step
from .demos import demo_hint, demo_names
from .demos import demo_path as _demo_path
from .drawing import cut_parts, layout_sheet, to_dxf, to_svg, tooth_forms
from .drift import (
    DriftResult,
    DriftRun,
    ErrorNow,
    PointerSummary,
    RunControl,
    drift_series,
    pointer_errors,
)
from .eclipses import Check as EclipseCheck
from .eclipses import Eclipse, real_eclipses, sky_eclipses, syzygies
from .eclipses import check as check_eclipses
from .errors import (
    ArgumentError,
    DateError,
    DriftCancelled,
    DriftError,
    OutputError,
    PlacementError,
    SearchCancelled,
    SearchError,
    SkyError,
    TrainError,
    UnknownName,
    UsageError,
    WheelworkError,
)
from .exact import Turns, parse_fraction
from .kinds import FRAMES, KINDS, POINTER_KINDS, PointerKind, kind_key
from .kinematics import (
    Kinematics,
    LinearAngle,
    MeshFrame,
    pin_slot_lead_turns,
    slot_follower_turns,
    solve,
)
from .loader import load_train, parse_train
from .mechanism import DEFAULT_TRAIN, Mechanism, build, open_train
from .periods import (
    PERIOD_RELATIONS,
    PERIODS,
    MeanPeriod,
    find_period,
    mean_elements,
    relation_error_ppm,
)
from .phasing import StagePhase, stage_phases
from .plate import place_plates
from .play import PlayReport, Tolerances, play
from .ratios import PointerRatio, Stage, SynodicRatio, ToothNote, pointer_ratios
from .readout import PointerMotion, Readout, backward_warnings, epoch_values
from .rechain import ChainAnswer, PointerChain, chain_search, pointer_chain
from .search import (
    Constraints,
    Convergent,
    SearchReport,
    Target,
    TrainResult,
    WheelPair,
    convergents,
    emit_fragment,
    make_constraints,
    make_target,
    search,
)
from .sky import Site, Sky, SkyState
from .toothform import (
    ToothForm,
    cycloidal_pinion,
    cycloidal_wheel,
    involute_ring,
    involute_wheel,
)
from .train import Arbor, Crank, Epoch, Mesh, PinSlot, Pointer, Train, Wheel


def demo_path(name: str):
    """The file of the demo called ``name`` (``"tide_office"`` or ``"tide_office.toml"``), a
    ``Path``. A name that is no demo is an :class:`UnknownName` naming the nearest demo and every
    demo (not ``None``, which :func:`open_train` would take for the default train)."""
    if not isinstance(name, str):
        raise TypeError(f"demo_path: wanted a demo's name as text, such as 'tide_office'; got "
                        f"{type(name).__name__} {name!r}")
    found = _demo_path(name)
    if found is None:
        raise UnknownName(f"no demo train {name!r}; {demo_hint(name)}")
    return found


__all__ = [
    # trains: load, solve, set
    "load_train", "parse_train", "demo_path", "demo_names", "Train", "solve", "Kinematics",
    "LinearAngle", "MeshFrame",
    "Arbor", "Wheel", "Mesh", "PinSlot", "Crank", "Epoch", "Pointer",
    "open_train", "build", "Mechanism", "DEFAULT_TRAIN",
    # turning and reading
    "Turns", "Readout", "PointerMotion", "epoch_values", "backward_warnings", "slot_follower_turns",
    "pin_slot_lead_turns", "parse_fraction",
    # ratios and periods
    "pointer_ratios", "PointerRatio", "Stage", "ToothNote", "PERIODS", "POINTER_KINDS", "MeanPeriod", "find_period",
    "mean_elements", "KINDS", "PointerKind", "FRAMES", "kind_key", "SynodicRatio",
    "PERIOD_RELATIONS", "relation_error_ppm",
    # sky truth and dates
    "Sky", "SkyState", "Site", "parse_date", "format_jd", "calendar_date",
    "as_jd",
    # drift
    "pointer_errors", "drift_series", "DriftRun", "RunControl", "DriftResult",
    "PointerSummary", "parse_step", "ErrorNow", "stage_phases", "StagePhase",
    # search
    "search", "make_target", "make_constraints", "convergents", "emit_fragment",
    "SearchReport", "TrainResult", "WheelPair", "Convergent", "Target", "Constraints",
    "pointer_chain", "chain_search", "PointerChain", "ChainAnswer", "SearchCancelled",
    # mechanical checks
    "check", "CheckReport", "Finding", "MeshCheck", "ArborCheck", "PinSlotCheck",
    # the workshop: cutting files, and what tolerances do to the pointers
    "tooth_forms", "cut_parts", "layout_sheet", "to_svg", "to_dxf", "place_plates",
    "cycloidal_wheel", "cycloidal_pinion", "involute_wheel", "involute_ring", "ToothForm",
    "play", "Tolerances", "PlayReport", "PlacementError",
    # eclipses: real ones, and a train's predictions against them
    "real_eclipses", "sky_eclipses", "syzygies", "Eclipse", "check_eclipses", "EclipseCheck",
    # errors
    "WheelworkError", "TrainError", "DateError", "SkyError", "SearchError",
    "DriftError", "DriftCancelled", "UsageError", "OutputError", "UnknownName", "ArgumentError",
]
