"""The ratio report: for each pointer, the exact ratio, the stages that make it, the period it
realises against the mean astronomical period it stands for, and the error that follows."""

from __future__ import annotations

import math
from collections import deque
from dataclasses import asdict, dataclass, field, replace
from fractions import Fraction

from .figures import figure
from .kinds import KINDS
from .kinematics import Kinematics
from .mechanism import Mechanism, train_and_kin
from .periods import J2000_JD, JULIAN_CENTURY_DAYS, JULIAN_YEAR_DAYS, PERIODS
from .readout import epicycle_sense_ok, pointer_linear
from .train import FRAME, Train


@dataclass(frozen=True)
class Stage:
    """One step on the way from the crank to a pointer's arbor."""

    kind: str  # "mesh", "pin_slot", "fixed"
    driver: str  # wheel (or arbor for pin_slot)
    driven: str
    driver_teeth: int | None = None
    driven_teeth: int | None = None
    internal: bool = False
    reference: str = FRAME  # the arbor that holds both axes (a carrier for epicyclic stages)

    @property
    def ratio(self) -> Fraction:
        if self.kind != "mesh":
            return Fraction(1)
        sign = 1 if self.internal else -1
        return sign * Fraction(self.driver_teeth, self.driven_teeth)

    def text(self) -> str:
        if self.kind == "pin_slot":
            return f"pin-and-slot {self.driver}→{self.driven} (1:1 mean)"
        if self.kind == "fixed":
            return f"{self.driver}→{self.driven} fixed together (1:1)"
        t = f"{self.driver_teeth}/{self.driven_teeth}"
        if self.internal:
            t += " internal"
        if self.reference != FRAME:
            t += f" on {self.reference}"
        return t


@dataclass(frozen=True)
class ToothNote:
    wheel: str
    teeth: int
    factors: str
    prime: bool


@dataclass(frozen=True)
class SynodicRatio:
    """A two-circle pointer's second circle: the epicycle arbor ``epicycle`` turning against its
    carrier ``deferent`` once per synodic period, judged against the planet's mean synodic
    period. ``drift_deg_per_century``: how far the epicycle's phase (the planet's elongation
    from the Sun, in effect) gains on the sky's."""

    pin_slot: str
    epicycle: str
    deferent: str
    ratio: Fraction  # epicycle turns against the carrier per crank turn
    period_days: float
    target_key: str
    target_name: str
    target_days: float
    target_source: str
    period_error_ppm: float  # (its period / mean synodic period - 1) * 1e6
    drift_deg_per_century: float
    #: an orrery arm judged against the Earth's arm (the pointer named here) rather than an
    #: epicycle against its carrier: ``epicycle`` and ``deferent`` are then the two arms'
    #: arbors, ``ratio`` the turns the arm gains on the Earth's per crank turn (negative:
    #: it falls behind, an outer planet), and ``pin_slot`` is empty
    earth_arm: str = ""
    #: the epicycle turns against its carrier the way two circles need (the shorter circle
    #: goes round faster than the longer, the same way: :func:`engine.readout.epicycle_sense_ok`);
    #: False: the other way, and the loops come at the wrong times
    direction_ok: bool = True


@dataclass(frozen=True)
class PointerRatio:
    pointer: str
    shows: str
    arbor: str
    relative_to: str | None
    ratio: Fraction  # cycles per crank turn, signed as the dial reads
    stages: tuple[Stage, ...]
    relative_stages: tuple[Stage, ...]
    stages_multiply_out: bool  # True when the product of the stage ratios is the ratio
    period_days: float
    target_key: str
    target_name: str
    target_days: float
    target_source: str
    period_error_ppm: float  # (realised period / mean period - 1) * 1e6: + too long, falls behind
    drift_deg_per_century: float  # pointer minus sky, mean rate
    # years until the pointer stands a day of its own mean motion off the mean sky (a phase
    # disc shows the day before's phase, a year hand the day before's date); None: no ratio
    years_to_one_day: float | None
    direction_ok: bool
    teeth: tuple[ToothNote, ...] = field(default=())
    route: str = ""  # when there are no stages: why (the crank arbor itself, no mesh path...)
    relative_route: str = ""
    # a geocentric planet pointer driven by a pin on an epicycle: the epicycle's turning
    # against its deferent carrier realises the synodic period (None otherwise)
    synodic: SynodicRatio | None = None

    def as_json(self) -> dict:
        d = asdict(self)
        d["ratio"] = f"{self.ratio.numerator}/{self.ratio.denominator}"
        d["stages"] = [s.text() for s in self.stages]
        d["relative_stages"] = [s.text() for s in self.relative_stages]
        if self.synodic:
            d["synodic"]["ratio"] = (f"{self.synodic.ratio.numerator}/"
                                     f"{self.synodic.ratio.denominator}")
        return d


def tooth_factors(n: int) -> dict[int, int]:
    """Prime factors of a tooth count with their powers, ``96 -> {2: 5, 3: 1}``.

    Trial division: a tooth count is at most ``engine.loader.MAX_TEETH`` (10,000), so this
    takes at most 100 divisions and keeps sympy (half a second to import) out of the report.
    """
    out: dict[int, int] = {}
    p = 2
    while p * p <= n:
        while n % p == 0:
            out[p] = out.get(p, 0) + 1
            n //= p
        p += 1 if p == 2 else 2
    if n > 1:
        out[n] = out.get(n, 0) + 1
    return out


def factor_text(n: int) -> str:
    """``96 -> "2^5·3"``."""
    parts = tooth_factors(n)
    return "·".join(f"{p}^{e}" if e > 1 else f"{p}" for p, e in sorted(parts.items())) or "1"


def stage_path(train: Train, kin: Kinematics, target: str) -> tuple[list[Stage], bool] | None:
    """Stages from the crank arbor to ``target``, by breadth-first search over meshes,
    pin-and-slot couplings and fixed arbors. Returns (stages, all stages on the frame)."""
    start = train.crank.arbor
    frames = {f.mesh_index: f for f in kin.mesh_frames}
    edges: dict[str, list[tuple[str, Stage]]] = {a: [] for a in train.arbors}
    for m in train.meshes:
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        ref = frames[m.index].reference
        for a, b, x, y in ((w1, w2, m.driver, m.driven), (w2, w1, m.driven, m.driver)):
            edges[a.arbor].append((b.arbor, Stage("mesh", x, y, a.teeth, b.teeth,
                                                  m.internal, ref)))
    for a in train.arbors.values():
        if a.fixed and a.mount != FRAME:  # turns with its carrier
            edges[a.mount].append((a.name, Stage("fixed", a.mount, a.name)))
            edges[a.name].append((a.mount, Stage("fixed", a.name, a.mount)))
    for ps in train.pin_slots.values():
        edges[ps.pin_arbor].append((ps.slot_arbor, Stage("pin_slot", ps.pin_arbor,
                                                         ps.slot_arbor)))
        edges[ps.slot_arbor].append((ps.pin_arbor, Stage("pin_slot", ps.slot_arbor,
                                                         ps.pin_arbor)))
    prev: dict[str, tuple[str, Stage] | None] = {start: None}
    queue = deque([start])
    while queue:
        a = queue.popleft()
        if a == target:
            break
        for b, st in edges[a]:
            if b not in prev:
                prev[b] = (a, st)
                queue.append(b)
    if target not in prev:
        return None
    path: list[Stage] = []
    node = target
    while prev[node] is not None:
        a, st = prev[node]
        path.append(st)
        node = a
    path.reverse()
    return path, all(s.reference == FRAME for s in path)


def route_text(train: Train, kin: Kinematics, arbor: str, stages: list[Stage],
               found: bool) -> str:
    """What to say in place of the stages when there are none, or when no chain of meshes
    leads from the crank (the arbor's motion then comes from the whole train)."""
    if stages:
        return ""
    if arbor == train.crank.arbor:
        return "(the crank arbor itself)"
    if kin.rate(arbor) == 0 and all(train.arbors[a].fixed for a in train.mount_chain(arbor)):
        return "(fixed to the frame: it does not turn)"
    if not found:
        return "(no chain of meshes from the crank: solved from the whole train)"
    return "(turns with the crank arbor)"


#: an epoch further than this many years from AD 2000 gets :func:`era_note` (our own choice:
#: by then the perigee's mean motion differs by some 0.1°/century, the Moon's, through ΔT's
#: rate, by a few hundredths)
ERA_NOTE_YEARS = 500


def era_note(train: Train | Mechanism) -> str:
    """For a train set more than :data:`ERA_NOTE_YEARS` from AD 2000, one line saying that the
    report's mean periods are AD 2000's and that the sky of the train's own era moved otherwise
    (the mean elements' slow terms; tidal braking and ΔT's rate, since a crank counts UT days);
    "" otherwise. ``wheelwork drift`` measures the train against that era's sky."""
    from .dates import format_day

    train = train.train if isinstance(train, Mechanism) else train
    years = (train.epoch.jd_ut - J2000_JD) / JULIAN_YEAR_DAYS
    if abs(years) <= ERA_NOTE_YEARS:
        return ""
    when = "before" if years < 0 else "after"
    return (f"the mean periods, ppm and °/century are those of AD 2000; this train is set on "
            f"{format_day(train.epoch.jd_ut, bc=True)}, {abs(years):,.0f} years {when}, when "
            "the sky's mean motions differed (the Moon's through tidal braking and ΔT, the "
            "perigee's and the node's through the slow terms of their motion), so its drift "
            "in its own era differs from these: wheelwork drift measures it against the sky "
            "of that era")


#: a pointer whose period is further than this factor from the one it stands for gets a
#: :func:`far_notes` line (our own choice: the slips it catches — per_turn left out, a wheel
#: of twice the count, a pointer on the wrong arbor — are factors of 2 and more, while a
#: tropical against a synodic month is 8% and shows plainly in the table)
FAR_FACTOR = 1.25


def far_notes(train: Train, rows) -> list[str]:
    """One line for each pointer of ``rows`` (:func:`pointer_ratios`) that goes round more
    than :data:`FAR_FACTOR` times faster or slower than what it shows: most likely a slip in
    the file, said with what to check."""
    out = []
    for r in rows:
        factor = abs(r.period_days / r.target_days) if r.target_days else math.nan
        if not math.isfinite(factor) or factor == 0 or 1 / FAR_FACTOR <= factor <= FAR_FACTOR:
            continue
        how = (f"{figure(1 / factor, 3)} times as fast" if factor < 1 else
               f"{figure(factor, 3)} times as slow")
        p = train.pointers[r.pointer]
        key = "lunations" if p.shows == "cycle" else "per_turn"
        cycles = f"{key} = {p.per_turn}, " if p.per_turn != 1 else ""
        out.append(f"{train.source}: [pointers.{r.pointer}]: shows its cycle in "
                   f"{figure(r.period_days, 6)} days where the {r.target_name} it stands for "
                   f"is {figure(r.target_days, 6)} days ({how}), most likely a slip: "
                   f"check its tooth counts, its arbor and {cycles or 'per_turn'}".rstrip(", "))
    return out


def pointer_ratios(train: Train | Mechanism, kin: Kinematics | None = None,
                   frame: str | None = None) -> list[PointerRatio]:
    """The ratio report's rows, one per pointer, judged on a dial of ``frame`` (default: the
    train's own dial; "equinox" or "stars"). ``train``: a :class:`Mechanism`, or a
    :class:`Train` with its ``kin`` (solved here if not given)."""
    train, kin = train_and_kin(train, kin)
    frame = frame or train.dial
    rows = []
    dpt = train.crank.days_per_turn
    for p in train.pointers.values():
        lin = pointer_linear(kin, p)
        ratio = lin.crank
        target = KINDS[p.shows].mean_period(frame)
        true_deg_per_day = target.deg_per_day
        target_days = target.days
        period = float(dpt / abs(ratio)) if ratio else float("inf")
        found = stage_path(train, kin, p.arbor)
        stages, simple = found if found else ([], False)
        route = route_text(train, kin, p.arbor, stages, found is not None)
        rel_stages: list[Stage] = []
        rel_route = ""
        if p.relative_to:
            found_rel = stage_path(train, kin, p.relative_to)
            rel_stages, simple_rel = found_rel if found_rel else ([], False)
            simple = simple and simple_rel
            rel_route = route_text(train, kin, p.relative_to, rel_stages, found_rel is not None)
        if simple:
            prod = Fraction(1)
            for s in stages:
                prod *= s.ratio
            if p.relative_to:
                rel = Fraction(1)
                for s in rel_stages:
                    rel *= s.ratio
                prod -= rel
            simple = prod * p.per_turn * (-1 if p.reversed else 1) == ratio
        train_deg_per_day = float(ratio / dpt) * 360.0
        err_ppm = (period - target_days) / target_days * 1e6 if ratio else float("inf")
        years = None
        if ratio:  # a day of its own mean motion, as wheelwork search gives it for any target
            gain = abs(target_days / period - 1.0)
            years = (1.0 / gain / JULIAN_YEAR_DAYS) if gain else float("inf")
        wheels_seen: dict[str, ToothNote] = {}
        for s in [*stages, *rel_stages]:
            if s.kind != "mesh":
                continue
            for w, z in ((s.driver, s.driver_teeth), (s.driven, s.driven_teeth)):
                if w not in wheels_seen:
                    wheels_seen[w] = ToothNote(w, z, factor_text(z), tooth_factors(z) == {z: 1})
        rows.append(PointerRatio(
            pointer=p.name, shows=p.shows, arbor=p.arbor, relative_to=p.relative_to,
            ratio=ratio, stages=tuple(stages), relative_stages=tuple(rel_stages),
            stages_multiply_out=simple, period_days=period, target_key=target.key,
            target_name=target.name, target_days=target_days, target_source=target.source,
            period_error_ppm=err_ppm,
            drift_deg_per_century=(train_deg_per_day - true_deg_per_day) * JULIAN_CENTURY_DAYS,
            years_to_one_day=years,
            direction_ok=(ratio > 0) == (target.sense > 0) if ratio else False,
            teeth=tuple(wheels_seen.values()), route=route, relative_route=rel_route,
            synodic=synodic_ratio(train, kin, p),
        ))
    earth = next((r for r in rows if r.shows == "earth_from_sun" and r.ratio), None)
    if earth is not None:  # an orrery: each planet's arm laps the Earth's once a synodic period
        rows = [replace(r, synodic=arm_synodic(r, earth, dpt)) if r.synodic is None else r
                for r in rows]
    return rows


def arm_synodic(row: PointerRatio, earth: PointerRatio, days_per_turn) -> SynodicRatio | None:
    """An orrery's planet arm against its Earth arm: how often it laps it (its conjunctions
    and oppositions on the orrery), against the planet's mean synodic period; ``None`` for a
    pointer that is no planet's arm. Both ratios are signed as the dials read, so their
    difference is the arm's gain on the Earth's whatever the gearing's senses."""
    planet = row.shows.removesuffix("_from_sun")
    target = PERIODS.get(f"{planet}_synodic")
    ratio = row.ratio - earth.ratio
    if row is earth or planet == row.shows or target is None or not ratio:
        return None
    period = float(days_per_turn / abs(ratio))
    return SynodicRatio(
        "", row.arbor, earth.arbor, ratio, period, target.key, target.name, target.days,
        target.source, (period - target.days) / target.days * 1e6,
        (360.0 / period - 360.0 / target.days) * JULIAN_CENTURY_DAYS, earth_arm=earth.pointer)


def synodic_ratio(train: Train, kin: Kinematics, p) -> SynodicRatio | None:
    """The epicycle of a geocentric planet pointer (its arbor the slot arbor of a pin riding
    on a carrier), against the planet's synodic period; ``None`` for any other pointer."""
    target = PERIODS.get(f"{p.shows}_synodic")
    if target is None:
        return None
    for ps in train.pin_slots.values():
        if ps.slot_arbor == p.arbor and ps.carrier is not None:
            ratio = kin.rate(ps.pin_arbor, ps.carrier)
            if not ratio:
                return None
            dpt = train.crank.days_per_turn
            period = float(dpt / abs(ratio))
            return SynodicRatio(
                ps.name, ps.pin_arbor, ps.carrier, ratio, period, target.key, target.name,
                target.days, target.source, (period - target.days) / target.days * 1e6,
                (360.0 / period - 360.0 / target.days) * JULIAN_CENTURY_DAYS,
                direction_ok=epicycle_sense_ok(kin, ps))
    return None
