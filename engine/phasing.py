"""Pin-and-slot stages against the sky: is each stage's phase at the epoch the one that takes
the sky's inequality out, or does it put it in?

A stage reproduces an uneven motion (the Moon's equation of centre, say) only when its pin
stands at the right angle at the epoch (``pin_deg``). ``[epoch] set = "sky"`` sets the pointers
to the sky but leaves the pin where the file puts it, so a file whose epoch was moved (or whose
``pin_deg`` was worked out wrongly) adds the inequality instead of taking it out.

:func:`stage_phases` measures it, stage by stage: over a few turns of the stage's own pin from
the epoch, the error against the sky of every pointer driven through the stage, with the
file's ``pin_deg`` and with the pin turned to other angles round the circle (every 5°, then
finer about the best; the best leaves the least root-mean-square error about the mean). A
stage is *off* when some other angle cuts the largest swing of those
pointers (highest error less lowest) to under half and by more than :data:`OFF_BY_DEG`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .angles import wrap_deg
from .errors import SkyError
from .exact import Turns
from .kinds import sky_at, true_value
from .kinematics import Kinematics
from .readout import pointer_linear

PIN_TURNS = (27.0, 6.0)
"""Turns of the stage's own pin the check looks over, from the epoch: the first that the
ephemeris covers. 27 turns of a lunar anomaly pin are two years, long enough for the sky's
other swings near the stage's period (the Moon's evection, 31.8 days, beside the anomalistic
month's 27.6, and the year's own) to average out of the fit: on a train set in 250 BC the best
phase moved from 210.5° at six turns to 212.5° at 13 and settled at 214° from 26 turns on (214.0,
214.5 and 214.0 at 26, 53 and 133). Six turns, where two years would pass the ephemeris's end,
bring the best phase within about 3° of that."""
STEP_DAYS = 0.25
"""Time between the check's dates (6 h), widened for a slow pin so that a stage is checked on at
most :data:`MAX_DATES` dates."""
MAX_DATES = 2000
COARSE_DEG = 5.0
"""The first pass tries the pin every 5° round the circle, a second every 0.5° about the best;
the best is the angle with the least root-mean-square error of the worst pointer."""
OFF_RATIO = 0.5
OFF_BY_DEG = 2.0
"""A stage is off when another phase leaves under half the swing, and at least 2° less."""


@dataclass(frozen=True)
class StagePhase:
    """One pin-and-slot stage checked against the sky near the epoch.

    ``pointer``: of those driven through the stage, the one with the largest swing at the
    file's phase; ``low_deg``/``high_deg``: its lowest and highest error (train − sky) with the
    file's ``pin_deg``, ``best_low_deg``/``best_high_deg`` with ``best_pin_deg``, the angle
    that gives the smallest swing. ``off``: the file's phase is clearly wrong (see the module).
    ``from_jd``/``to_jd``/``step_days``: the span checked (UT).
    """

    stage: str
    pin_deg: float
    best_pin_deg: float
    pointer: str
    low_deg: float
    high_deg: float
    best_low_deg: float
    best_high_deg: float
    from_jd: float
    to_jd: float
    step_days: float

    @property
    def swing_deg(self) -> float:
        return self.high_deg - self.low_deg

    @property
    def best_swing_deg(self) -> float:
        return self.best_high_deg - self.best_low_deg

    @property
    def off(self) -> bool:
        return (self.best_swing_deg < OFF_RATIO * self.swing_deg
                and self.swing_deg - self.best_swing_deg > OFF_BY_DEG)

    def to_dict(self) -> dict:
        return {"stage": self.stage, "pin_deg": self.pin_deg, "best_pin_deg": self.best_pin_deg,
                "pointer": self.pointer, "low_deg": self.low_deg, "high_deg": self.high_deg,
                "best_low_deg": self.best_low_deg, "best_high_deg": self.best_high_deg,
                "swing_deg": self.swing_deg, "best_swing_deg": self.best_swing_deg,
                "off": self.off, "from_jd": self.from_jd, "to_jd": self.to_jd,
                "step_days": self.step_days}


def _pin_period_days(kin: Kinematics, name: str) -> float:
    """Days for the stage's pin (and, for a carried pin, its carrier) to turn once against the
    slot arbor's mount: the longer of the two, the period of the stage's lead. A slot arbor on
    the carrier's own axis (``offset_mm`` 0: a two-circle planet hand) leads by the angle between
    the carrier's arm and the pin alone, so its lead's period is the pin's turning against its
    carrier (the synodic period), however slowly the carrier goes round."""
    train = kin.train
    ps = train.pin_slots[name]
    mount = train.arbors[ps.slot_arbor].mount
    dpt = float(train.crank.days_per_turn)
    if ps.carrier and not ps.offset_mm:
        rate = kin.rate(ps.pin_arbor, ps.carrier)
        return dpt / abs(float(rate)) if rate else 0.0
    days = 0.0
    for arbor in (ps.pin_arbor,) + ((ps.carrier,) if ps.carrier else ()):
        rate = kin.rate(arbor, mount)
        if rate:
            days = max(days, dpt / abs(float(rate)))
    return days


def _spread(err: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Lowest, highest and root-mean-square about the mean of error series (the last axis),
    taken about each one's circular mean (so an error near ±180° does not wrap)."""
    rad = np.radians(err)
    centre = np.degrees(np.arctan2(np.sin(rad).mean(axis=-1), np.cos(rad).mean(axis=-1)))
    rel = wrap_deg(err - centre[..., None])
    return centre + rel.min(axis=-1), centre + rel.max(axis=-1), rel.std(axis=-1)


def _covers(sky, jd: float, days: float) -> bool:
    try:
        sky.check_span(jd, jd + days)
    except SkyError:
        return False
    return True


def stage_phases(mech, sky, *, frame: str | None = None) -> list[StagePhase]:
    """Each pin-and-slot stage that drives a pointer, checked against ``sky`` over
    :data:`PIN_TURNS` turns of its pin from the epoch (geocentric, on ``frame``, default the
    train's dial). A stage whose shortest span the sky does not cover, or whose pin does not turn, is
    left out; a train with no stage gives ``[]``."""
    train, kin = mech.train, mech.kin
    if not train.pin_slots:
        return []
    frame = frame or train.dial
    epoch = train.epoch.jd_ut
    values = {n: float(v[0]) for n, v in mech.readout.read_deg(np.zeros(1)).items()}
    zero = Turns.of(0.0)
    lins = {n: pointer_linear(kin, p) for n, p in train.pointers.items()}
    out = []
    for k, name in enumerate(kin.slot_names):
        driven = [n for n, lin in lins.items() if lin.slots[k]]
        period = _pin_period_days(kin, name)
        if not driven or not period:
            continue
        span = next((n * period for n in PIN_TURNS if _covers(sky, epoch, n * period)), None)
        if span is None:
            continue
        step = max(STEP_DAYS, span / MAX_DATES)
        jd = epoch + np.arange(int(span / step) + 1) * step
        state = sky_at(sky, jd, [train.pointers[n].shows for n in driven], frame=frame)
        true = {n: true_value(train.pointers[n].shows, state) for n in driven}
        turns = Turns.from_days(jd - epoch, train.crank.days_per_turn)
        ps = train.pin_slots[name]

        def spreads(pin_deg, ps=ps, name=name, driven=driven, true=true, turns=turns):
            """``{pointer: (lows, highs, rms)}`` for each candidate angle of the pin (all at once:
            the angles run down a leading axis, the dates along the last)."""
            pins = np.asarray(pin_deg, dtype=float).reshape(-1, 1)
            stage = replace(ps, pin_deg=pins)
            k2 = Kinematics(replace(train, pin_slots={**train.pin_slots, name: stage}),
                            kin.linear, kin.slot_order, kin.mesh_frames)
            lags = k2.slot_lags_turns(turns)
            out = {}
            for n in driven:
                start = k2.evaluate(lins[n], zero)  # each candidate set to the epoch's value
                reading = (k2.evaluate(lins[n], turns, lags) - start) * 360.0 + values[n]
                out[n] = _spread(wrap_deg(reading - true[n]))
            return out

        def best_of(candidates):
            s = spreads(candidates)
            worst = np.max([rms for _, _, rms in s.values()], axis=0)
            return float(candidates[int(np.argmin(worst))])

        best = best_of(np.arange(0.0, 360.0, COARSE_DEG))
        best = best_of(best + np.linspace(-COARSE_DEG, COARSE_DEG, 21))
        mine = {n: (float(lo[0]), float(hi[0])) for n, (lo, hi, _) in spreads(ps.pin_deg).items()}
        pointer = max(mine, key=lambda n: mine[n][1] - mine[n][0])
        lo, hi = mine[pointer]
        best_lo, best_hi = (float(x[0]) for x in spreads(best)[pointer][:2])
        out.append(StagePhase(name, float(ps.pin_deg), float(best % 360.0), pointer, lo, hi,
                              best_lo, best_hi, float(jd[0]), float(jd[-1]), step))
    return out
