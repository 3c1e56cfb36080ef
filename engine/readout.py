"""Pointers: what each one reads at any crank turn, once set at the epoch.

A pointer reads ``offset + sense * per_turn * (angle(arbor) - angle(relative_to))`` turns,
times 360°. ``sense`` is -1 when the dial is engraved against the arbor's turning
(``reversed = true``). The offset is chosen so that at the epoch each pointer shows the value
it was set to: the true sky, the mean longitudes, or explicit angles (``[epoch] set``).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from fractions import Fraction

import numpy as np

from .angles import mod
from .dates import as_jd
from .errors import ArgumentError, UnknownName
from .exact import Turns
from .kinds import KINDS, mean_value, sky_at, to_frame, true_value
from .kinematics import Kinematics, LinearAngle
from .periods import PLANETS, SECONDS_PER_DAY, mean_elements
from .train import Pointer, Train


@dataclass(frozen=True)
class PointerMotion:
    """A pointer's exact motion: its angle (turns) as a linear function of the inputs."""

    pointer: Pointer
    lin: LinearAngle  # already scaled by per_turn and the dial's sense
    offset_turns: float

    @property
    def cycles_per_turn(self) -> Fraction:
        """Mean cycles of what it shows per crank turn (signed: negative runs backwards)."""
        return self.lin.crank


def _as_float(value) -> float:
    try:
        return float(value)
    except (TypeError, ValueError):
        return float("nan")


def pointer_linear(kin: Kinematics, p: Pointer) -> LinearAngle:
    lin = kin.linear_of(p.arbor)
    if p.relative_to:
        lin = lin - kin.linear_of(p.relative_to)
    return lin.scaled(p.per_turn * (-1 if p.reversed else 1))


def backward_pointers(train: Train, kin: Kinematics) -> set[str]:
    """Names of the pointers whose arbor turns against the sense of what they show."""
    out = set()
    for p in train.pointers.values():
        rate = pointer_linear(kin, p).crank
        if rate != 0 and (rate > 0) != (KINDS[p.shows].mean_period(train.dial).sense > 0):
            out.add(p.name)
    return out


def backward_warnings(train: Train, kin: Kinematics) -> list[str]:
    """Pointers whose arbor turns against the sense of what they show, and planet hands whose
    epicycle turns against its carrier the wrong way (see :func:`backward_epicycles`), with
    the fix."""
    out = backward_epicycles(train, kin)
    for p in train.pointers.values():
        rate = pointer_linear(kin, p).crank
        want = KINDS[p.shows].mean_period(train.dial).sense
        if rate == 0:
            out.append(f"{train.source}: [pointers.{p.name}]: arbor '{p.arbor}' does not turn "
                       f"relative to {p.relative_to or 'the frame'}, so the pointer stands still")
        elif (rate > 0) != (want > 0):
            what = "regresses" if want < 0 else "advances"
            out.append(f"{train.source}: [pointers.{p.name}]: turns backwards — the {p.shows} "
                       f"{what}, but this pointer runs the other way; set reversed = "
                       f"{'false' if p.reversed else 'true'} (engrave the dial the other way) "
                       "or add an idler to reverse its arbor")
    return out


def unread_angles(train: Train) -> list[str]:
    """Pointers' ``set_deg`` where ``[epoch] set`` is not ``"angles"``: the angles are not
    read, so they do nothing (an unknown key is refused for the same reason); one line."""
    named = [p.name for p in train.pointers.values() if p.set_deg is not None]
    if train.epoch.set == "angles" or not named:
        return []
    more = f" (and {len(named) - 1} more)" if len(named) > 1 else ""
    how = "from the sky" if train.epoch.set == "sky" else "to their mean positions"
    return [f"{train.source}: [pointers.{named[0]}] set_deg{more}: read only with [epoch] "
            f"set = \"angles\"; this file's set = \"{train.epoch.set}\" sets the pointers "
            f"{how}, so set_deg does nothing — remove it, or set = \"angles\" to use it"]


def epicycle_sense_ok(kin: Kinematics, ps) -> bool:
    """Whether a pin carried on an epicycle turns as two circles of a planet do: of the
    carrier's arm and the pin's radius, the shorter (the planet's orbit for an inner planet, the
    Earth's for an outer one) goes round faster than the longer and the same way, against the
    slot arbor's mount. With the epicycle turned against its carrier the other way, the shorter
    goes round at the difference of the two motions instead, and the hand's stations and loops
    come at the wrong times though the epicycle's period still matches the synodic period.
    (Either circle may be the carrier: on the arm or on the pin, the Sun's and the planet's
    motions give the same sum.)"""
    mount = kin.train.arbors[ps.slot_arbor].mount
    carrier, pin = kin.rate(ps.carrier, mount), kin.rate(ps.pin_arbor, mount)
    long_rate, short_rate = (carrier, pin) if ps.arm_mm >= ps.pin_radius_mm else (pin, carrier)
    if not long_rate:
        return True
    return (short_rate > 0) == (long_rate > 0) and abs(short_rate) > abs(long_rate)


def backward_epicycles(train: Train, kin: Kinematics) -> list[str]:
    """Planet hands seen from the Earth driven by a pin on an epicycle that turns against its
    carrier the wrong way (:func:`epicycle_sense_ok`), each as a line with the fix."""
    out = []
    for p in train.pointers.values():
        if p.shows not in PLANETS:  # a planet seen from the Earth
            continue
        for ps in train.pin_slots.values():
            if ps.slot_arbor != p.arbor or ps.carrier is None or epicycle_sense_ok(kin, ps):
                continue
            out.append(
                f"{train.source}: [pin_slots.{ps.name}]: the epicycle '{ps.pin_arbor}' turns "
                f"against its carrier '{ps.carrier}' the wrong way: the shorter of the arm and "
                "the pin radius goes round at the difference of the two motions, not their "
                f"sum, so pointer '{p.name}' shows its stations and loops at the wrong times; "
                "reverse the epicycle (an idler more or fewer between the fixed wheel and the "
                "epicycle's wheel)")
    return out


def epoch_values(train: Train, sky=None, frame: str | None = None) -> dict[str, float]:
    """What each pointer showed at the epoch, in degrees, by the train's ``[epoch] set``.

    ``sky`` (an :class:`engine.sky.Sky`) is needed for ``set = "sky"`` and gives ΔT for
    ``set = "mean"``; without it, mean elements are taken at UT (ΔT ignored).
    """
    frame = frame or train.dial
    mode = train.epoch.set
    jd = train.epoch.jd_ut
    if mode == "angles":
        return {n: float(p.set_deg) for n, p in train.pointers.items()}
    if mode == "sky":
        if sky is None:
            raise ValueError("set = \"sky\" needs a Sky to read the true sky at the epoch")
        shows = [p.shows for p in train.pointers.values()]
        state = sky_at(sky, np.array([jd]), shows, frame=frame)
        return {n: float(true_value(p.shows, state)[0]) for n, p in train.pointers.items()}
    return mean_values(train, jd, sky, frame)


def mean_values(train: Train, jd_ut: float, sky=None, frame: str | None = None,
                names=None) -> dict[str, float]:
    """What each pointer (or those ``names``) would show at ``jd_ut`` if it followed the
    mean motion exactly: its kind's mean value (``KINDS[...].mean``, from
    :func:`engine.periods.mean_elements`) in degrees on a dial of ``frame`` (default the
    train's). ``sky`` gives ΔT (the mean elements are taken at TT); without it, at UT."""
    frame = frame or train.dial
    names = list(train.pointers) if names is None else list(names)
    jd_tt = jd_ut
    if sky is not None:
        jd_tt = jd_ut + float(sky.at(np.array([jd_ut]), frame=frame).delta_t_s[0]) / SECONDS_PER_DAY
    mean = mean_elements(jd_tt)  # of date; a star dial reads from the J2000 equinox
    out = {}
    for n in names:
        circles = _two_circle_mean(train, train.pointers[n], mean)
        out[n] = float(mean_value(train.pointers[n].shows, mean, jd_tt, frame) if circles is None
                       else to_frame(circles, jd_tt, frame))
    return out


def _two_circle_mean(train: Train, p: Pointer, mean: dict) -> float | None:
    """The mean position of a planet hand seen from the Earth that points at a pin on an
    epicycle (the hand on the carrier's axis): where the two circles put the planet with both
    at their mean longitudes, the longer of the carrier's arm and the pin's radius along the
    planet's geocentric mean longitude (the Sun's for an inner planet, its own for an outer one)
    and the shorter along the other (the planet's heliocentric mean longitude for an inner
    planet, the Sun's for an outer). Not the planet's mean longitude, from which the hand
    stands off by the epicycle's angle (up to 47° for Venus); None for any other pointer."""
    if p.shows not in PLANETS:
        return None
    for ps in train.pin_slots.values():
        if ps.slot_arbor != p.arbor or ps.carrier is None or ps.offset_mm:
            continue
        slow = np.radians(mean[p.shows])
        other = np.radians(mean[f"{p.shows}_from_sun"] if PLANETS[p.shows].inner else mean["sun"])
        long_r, short_r = sorted((ps.arm_mm, ps.pin_radius_mm), reverse=True)
        x = long_r * np.cos(slow) + short_r * np.cos(other)
        y = long_r * np.sin(slow) + short_r * np.sin(other)
        return float(np.degrees(np.arctan2(y, x)) % 360.0)
    return None


class Readout:
    """A set train: pointer readings at crank turns or dates. Immutable; re-setting gives a
    new one (so an interface can undo)."""

    def __init__(self, kin: Kinematics, values_at_epoch: dict[str, float],
                 motions: dict[str, PointerMotion] | None = None):
        self.kin = kin
        self.train = kin.train
        if motions is None:
            motions = {}
            zero = Turns.of(0)
            for name, p in self.train.pointers.items():
                lin = pointer_linear(kin, p)
                start = float(kin.evaluate(lin, zero))
                motions[name] = PointerMotion(p, lin, values_at_epoch[name] / 360.0 - start)
        self.motions = motions

    # time <-> turns -------------------------------------------------------------------
    def turns_at(self, jd_ut: float | np.ndarray) -> Turns:
        """Crank turns since the epoch that bring the train to these UT Julian dates (numbers,
        or date text)."""
        days = np.asarray(as_jd(jd_ut, "turns_at"), dtype=float) - self.train.epoch.jd_ut
        return Turns.from_days(days, self.train.crank.days_per_turn)

    def jd_at(self, turns: Turns | float | np.ndarray) -> np.ndarray:
        """UT Julian date that the train shows after these crank turns since the epoch."""
        t = Turns.of(turns)
        dpt = self.train.crank.days_per_turn
        return (self.train.epoch.jd_ut + t.whole.astype(float) * float(dpt)
                + t.frac * float(dpt))

    # readings -------------------------------------------------------------------------
    def read_deg(self, turns: Turns | float | np.ndarray) -> dict[str, np.ndarray]:
        """Every pointer's reading in degrees [0, 360) at crank turns since the epoch."""
        turns = Turns.of(turns)
        lags = self.kin.slot_lags_turns(turns) if self.kin.slot_names else {}
        out = {}
        for name, m in self.motions.items():
            v = self.kin.evaluate(m.lin, turns, lags) + m.offset_turns
            out[name] = mod(v, 1.0) * 360.0
        return out

    def period_days(self, name: str) -> float:
        """Mean days per cycle of what the pointer shows (inf if it stands still)."""
        rate = self.motions[name].cycles_per_turn
        return float(self.train.crank.days_per_turn / abs(rate)) if rate else float("inf")

    def deg_per_day(self, name: str) -> float:
        return float(self.motions[name].cycles_per_turn / self.train.crank.days_per_turn) * 360

    # re-setting -----------------------------------------------------------------------
    def reset_to(self, turns: Turns | float, values_deg: dict[str, float]) -> Readout:
        """A copy with pointers turned (as by hand) to show ``values_deg`` at ``turns``, each
        the shorter way round (at most half a cycle of what it shows). Whole cycles matter on
        an eclipse-cycle dial, whose position counts lunations: turned the long way, a ring
        set to the sky a little before a new moon went back a whole month."""
        unknown = [n for n in values_deg if n not in self.motions]
        if unknown:
            raise UnknownName(f"no pointer {unknown[0]!r} on this train (its pointers: "
                              f"{', '.join(self.motions)})")
        for name, value in values_deg.items():
            if isinstance(value, (str, bytes)) or not np.isfinite(_as_float(value)):
                raise ArgumentError(f"reset_to: pointer {name!r} should be set to a finite "
                                    f"angle in degrees, got {value!r:.40}")
        now = self.read_deg(turns)
        motions = dict(self.motions)
        for name, value in values_deg.items():
            m = motions[name]
            delta = (value - float(np.asarray(now[name]).reshape(-1)[0])) / 360.0
            delta -= float(np.floor(delta + 0.5))  # the shorter way: -1/2 <= delta < 1/2
            motions[name] = replace(m, offset_turns=m.offset_turns + delta)
        return Readout(self.kin, {}, motions)

    def offsets_deg(self) -> dict[str, float]:
        return {n: (m.offset_turns * 360.0) % 360.0 for n, m in self.motions.items()}
