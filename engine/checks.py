"""Mechanical checks of a train: centre distances, positions, speeds, loads and tooth counts.

:func:`check` takes a loaded train and its solved kinematics and returns a :class:`CheckReport`
of plain dataclasses: one row per mesh, one per arbor, one per pin-and-slot stage, and a list of
:class:`Finding` (one line each, with what to change). It does no time series work and is cheap
enough to run on every edit. The rules are described, with their sources, in ``docs/checks.md``.

Geometry is standard spur-gear geometry (ISO 21771 notation): pitch diameter ``d = m z``, centre
distance ``a = m (z1 + z2) / 2`` for an external pair and ``m (z_ring - z_pinion) / 2`` for an
internal one, tip diameter ``d + 2 m`` (external, addendum 1 m). Speeds, torques and loads are
design estimates (see :data:`CAVEAT`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction

import numpy as np

from .defaults import DEFAULT_CRANK_RPM, DEFAULT_EFFICIENCY, FACE_M  # with their sources
from .figures import figure
from .kinematics import Kinematics, axis_groups
from .mechanism import Mechanism, train_and_kin
from .periods import PERIODS, SECONDS_PER_DAY
from .train import FRAME, PLATE_SIDES, Train

# --- defaults and rules of thumb (each with where it comes from) -----------------------------


DEFAULT_PIN_DIAMETER_MM = 1.0
"""Pin diameter assumed for a pin-and-slot stage whose file gives no ``pin_diameter_mm``."""

PRESSURE_ANGLE_DEG = 20.0
UNDERCUT_TEETH = 2.0 / math.sin(math.radians(PRESSURE_ANGLE_DEG)) ** 2
"""Fewest involute teeth cut without undercut at 20° and addendum 1 m: z_min = 2 / sin²α ≈ 17.1
(standard gear geometry). The usual rule rounds it to 17 teeth."""

UNDERCUT_RULE_TEETH = 17

MIN_LEAVES = 6
PREFERRED_LEAVES = 8
"""Clock pinions: 6 leaves is the least that runs at all smoothly, 8 or more is preferred
(rule of thumb, common practice, no source)."""

MAX_TEETH = 300
"""Largest practical tooth count on one blank (our rule): beyond it indexing needs compound
division and spacing errors pile up (common practice, no source)."""

MODULE_RANGE_MM = (0.05, 10.0)
"""Modules outside these are more likely a unit slip than a design (our rule): the finest
watch wheels are cut at about 0.05 mm (from memory), and past 10 mm a tooth is 22 mm deep,
heavy machinery rather than a display. A module written in inches (0.02 in is 0.508 mm) or a
diametral pitch (48 teeth per inch of diameter is 25.4 / 48 = 0.529 mm) lands outside them."""

FINE_MODULE_MM = 0.5
FINE_WHEEL_MAX_PITCH_MM = 120.0
"""A fine-toothed wheel (module 0.5 mm or less) larger than 120 mm across must be kept so flat
and true that its runout stays within a small part of its 2.25 m tooth depth (our rule, common
practice, no source)."""

FAST_ARBOR_X_CRANK = 10.0
"""A hand-cranked train that makes an arbor turn more than 10 times as fast as the crank is
heavy to turn and wears that arbor's pinions (rule of thumb, common practice, no source)."""

PITCH_SPEED_LIMIT_M_S = 1.0
"""Pitch-line speed above which small, unhardened instrument gears want lubrication and
accurate teeth (our rule of thumb, common practice, no source)."""

LOAD_SPREAD = 2.0
"""The heaviest-loaded stage is pointed out when its load index is at least twice the lightest."""

TOLERANCE_MM = 0.02
"""Centre distances and positions that agree within 0.02 mm are taken as equal (about the
backlash of fine clock wheels; common practice, no source)."""

MINUTES_PER_DAY = SECONDS_PER_DAY // 60

CAVEAT = ("Speeds, torques and tooth loads are design estimates from ideal geometry and rules "
          "of thumb; for anything that bears load or is shown to the public, size and check "
          "the parts by proper engineering practice and local rules.")

LEVELS = ("error", "warning", "note")


@dataclass(frozen=True)
class Finding:
    """One thing to look at: ``level`` (error|warning|note), the ``item`` it concerns (as the
    file names it), a one-line ``message`` and a one-line ``fix``."""

    level: str
    item: str
    message: str
    fix: str

    def line(self) -> str:
        return f"{self.level}: {self.item}: {self.message} — {self.fix}"


@dataclass(frozen=True)
class MeshCheck:
    """Geometry and load of one mesh. Lengths in mm; ``None`` where the module is not given.

    ``upstream`` is the wheel the power comes from (as the solver reaches the train from the
    crank); ``ratio`` is downstream turns per upstream turn relative to ``reference`` (the frame
    or the carrier holding both axes), signed. ``tooth_force_n`` is the tangential tooth force
    per N·m of torque at the crank when the arbor it loads most is the only load (virtual
    work, :func:`_mesh_loads`), and ``load_index`` that force over module × face width
    (N/mm²; the mesh's ``face_mm``, else :data:`~engine.defaults.FACE_M` modules; ``face_mm``
    is the width used) — for ranking the stages only.
    """

    index: int
    label: str
    driver: str
    driven: str
    driver_teeth: int
    driven_teeth: int
    internal: bool
    reference: str
    upstream: str
    downstream: str
    ratio: Fraction
    step_up: bool
    module_mm: float | None
    driver_pitch_mm: float | None
    driven_pitch_mm: float | None
    centre_mm: float | None
    pitch_speed_m_s: float | None
    tooth_force_n: float | None
    load_index: float | None
    face_mm: float | None = None


@dataclass(frozen=True)
class ArborCheck:
    """Speed and load of one arbor, relative to the frame.

    ``turns_per_crank`` is exact (mean, for arbors behind a pin-and-slot); ``speed_range`` the
    least and greatest turns per crank turn including pin-and-slot variation; ``rpm_max`` the
    highest speed at the report's crank rpm. Torques are relative to the crank's torque, when
    this arbor is the only load: ``torque_ideal = 1 / |turns_per_crank|`` (virtual work), and
    ``torque = efficiency / |turns_per_crank|`` with ``efficiency`` = (per-stage efficiency) to
    the power of ``stages``, the number of meshes and pin-and-slot stages its motion depends on.
    ``None`` for arbors that stand still (their torque is a reaction the train cannot give).
    """

    name: str
    mount: str
    turns_per_crank: Fraction
    turns_per_year: float
    direction: str
    speed_range: tuple[float, float]
    rpm_max: float
    stages: int
    efficiency: float
    torque_ideal: float | None
    torque: float | None
    step_up: bool


@dataclass(frozen=True)
class PinSlotCheck:
    """A pin-and-slot stage: the slot it needs and the speed variation it makes.

    The slot spans ``slot_inner_mm`` to ``slot_outer_mm`` from the slot arbor's axis
    (``r - e - d/2`` to ``r + e + d/2``), ``slot_length_mm = 2 e + d``. The slot arbor turns,
    relative to the mount, between ``speed_factor_min = r / (r + e)`` and
    ``speed_factor_max = r / (r - e)`` times the pin arbor's speed, and leads or lags it by up to
    ``max_lead_deg = asin(e / r)``.
    """

    name: str
    pin_arbor: str
    slot_arbor: str
    pin_radius_mm: float
    offset_mm: float
    pin_diameter_mm: float
    slot_length_mm: float
    slot_inner_mm: float
    slot_outer_mm: float
    max_lead_deg: float
    speed_factor_min: float
    speed_factor_max: float
    pin_diameter_assumed: bool = False  # True when the file gives no pin_diameter_mm


@dataclass
class CheckReport:
    """Everything :func:`check` found. ``caveat`` is the estimates line to show with it."""

    train: str
    source: str
    crank_arbor: str
    crank_rpm: float
    efficiency: float
    pin_diameter_mm: float
    meshes: list[MeshCheck] = field(default_factory=list)
    arbors: list[ArborCheck] = field(default_factory=list)
    pin_slots: list[PinSlotCheck] = field(default_factory=list)
    findings: list[Finding] = field(default_factory=list)
    caveat: str = CAVEAT
    real_time: bool = False  # True when crank_rpm is the train's own running speed
    days_per_turn: Fraction | None = None  # the file's [crank] days_per_turn

    def count(self, level: str) -> int:
        return sum(f.level == level for f in self.findings)

    @property
    def has_errors(self) -> bool:
        return any(f.level == "error" for f in self.findings)


# --- small geometry helpers ----------------------------------------------------------------

def pitch_diameter_mm(module_mm: float, teeth: int) -> float:
    """d = m z (standard spur-gear geometry)."""
    return module_mm * teeth


def centre_distance_mm(module_mm: float, z1: int, z2: int, internal: bool = False) -> float:
    """a = m (z1 + z2) / 2 external, m |z2 - z1| / 2 internal (standard spur-gear geometry)."""
    return module_mm * (abs(z2 - z1) if internal else z1 + z2) / 2.0


def undercut_shift(teeth: int) -> float:
    """Least profile shift coefficient avoiding undercut: x = 1 - z sin²α / 2 (standard)."""
    return 1.0 - teeth * math.sin(math.radians(PRESSURE_ANGLE_DEG)) ** 2 / 2.0


def slot_speed_factors(pin_radius_mm: float, offset_mm: float) -> tuple[float, float]:
    """Least and greatest slot-arbor speed over pin-arbor speed: r/(r+e), r/(r-e).

    From the follower angle φ = atan2(r sin t, r cos t - e): dφ/dt = r (r - e cos t) /
    (r² + e² - 2 r e cos t), which rises monotonically with cos t, so its extremes are at the
    pin nearest the slot axis (t = 0: r/(r-e)) and farthest from it (t = π: r/(r+e)).
    """
    r, e = pin_radius_mm, offset_mm
    return r / (r + e), r / (r - e)


def _fmt(x: float) -> str:
    return figure(x, 3)


def _about(x: float, digits: int = 3) -> str:
    """An estimate to ``digits`` significant figures, a large one rounded too (``190,000``,
    not ``190,019``, which claims a precision no estimate has)."""
    return figure(float(f"{x:.{digits}g}"), digits)


def _mm(x: float) -> str:
    return f"{x:.3f}".rstrip("0").rstrip(".") + " mm"


def _finder(parent: dict[str, str]):
    """Union-find lookup over ``parent`` (which the caller links)."""

    def find(n: str) -> str:
        while parent[n] != n:
            parent[n] = parent[parent[n]]
            n = parent[n]
        return n

    return find


# --- power flow ----------------------------------------------------------------------------

def _power_flow(train: Train, kin: Kinematics):
    """Reach the train from the crank: each arbor's upstream stages, each mesh's driving arbor.

    A mesh passes motion on when one of its arbors and its reference (frame or carrier) are
    reached; a pin-and-slot passes it from pin to slot; a fixed arbor follows its mount. Where
    nothing can pass alone (a differential adding two inputs), the unreached arbors joined by
    meshes are taken together, depending on every stage that touches them.
    """
    deps: dict[str, frozenset] = {FRAME: frozenset(), train.crank.arbor: frozenset()}
    upstream: dict[int, str] = {}
    frames = {f.mesh_index: f for f in kin.mesh_frames}
    while len(deps) < len(train.arbors) + 1:
        progress = True
        while progress:
            progress = False
            for a in train.arbors.values():
                if a.name not in deps and a.fixed and a.mount in deps:
                    deps[a.name] = deps[a.mount]
                    progress = True
            for f in frames.values():
                if f.reference not in deps:
                    continue
                have1, have2 = f.arbor1 in deps, f.arbor2 in deps
                if have1 != have2:
                    src, dst = (f.arbor1, f.arbor2) if have1 else (f.arbor2, f.arbor1)
                    deps[dst] = deps[src] | deps[f.reference] | {("mesh", f.mesh_index)}
                    upstream[f.mesh_index] = src
                    progress = True
            for ps in train.pin_slots.values():
                mount = train.arbors[ps.pin_arbor].mount
                if ps.slot_arbor not in deps and ps.pin_arbor in deps and mount in deps:
                    deps[ps.slot_arbor] = (deps[ps.pin_arbor] | deps[mount]
                                           | {("slot", ps.name)})
                    progress = True
        missing = [n for n in train.arbors if n not in deps]
        if not missing:
            break
        # Differential: group the unreached arbors linked by meshes (or by a carrier).
        parent = {n: n for n in missing}
        find = _finder(parent)
        for f in frames.values():
            ends = [x for x in (f.arbor1, f.arbor2, f.reference) if x in parent]
            for x in ends[1:]:
                parent[find(x)] = find(ends[0])
        for a in missing:
            if train.arbors[a].mount in parent:
                parent[find(a)] = find(train.arbors[a].mount)
        groups: dict[str, set[str]] = {}
        for n in missing:
            groups.setdefault(find(n), set()).add(n)
        for members in groups.values():
            got = frozenset()
            for f in frames.values():
                ends = {f.arbor1, f.arbor2, f.reference}
                if ends & members:
                    got |= {("mesh", f.mesh_index)}
                    for x in ends - members:
                        got |= deps.get(x, frozenset())
                    for x in (f.arbor1, f.arbor2):
                        if x not in members and f.mesh_index not in upstream:
                            upstream[f.mesh_index] = x
            for n in members:
                deps[n] = got
    return deps, upstream


# --- the check -----------------------------------------------------------------------------

def running_rpm(train: Train | Mechanism) -> float:
    """The crank's own running speed in turns per minute: one turn every ``[crank]
    days_per_turn`` days of the time shown, so ``1 / (days_per_turn × 1440)`` (a day has 1440
    minutes), worked exactly and rounded once."""
    train = getattr(train, "train", train)
    return float(1 / (Fraction(train.crank.days_per_turn) * MINUTES_PER_DAY))


def check(train: Train | Mechanism, kin: Kinematics | None = None, *, crank_rpm: float | None = None,
          efficiency: float | None = None,
          pin_diameter_mm: float = DEFAULT_PIN_DIAMETER_MM, real_time: bool = False) -> CheckReport:
    """Check a solved train's geometry, speeds and loads; see the module docstring.

    ``crank_rpm`` is the highest crank speed to evaluate (default :data:`DEFAULT_CRANK_RPM`);
    ``real_time=True`` evaluates at the train's own running speed instead (:func:`running_rpm`,
    from ``[crank] days_per_turn``) and cannot be given with ``crank_rpm``. ``efficiency`` is
    the efficiency of each mesh and pin-and-slot stage (default :data:`DEFAULT_EFFICIENCY`).
    """
    train, kin = train_and_kin(train, kin)
    if real_time:
        if crank_rpm is not None:
            raise ValueError("give crank_rpm or real_time, not both")
        crank_rpm = running_rpm(train)
    crank_rpm = DEFAULT_CRANK_RPM if crank_rpm is None else float(crank_rpm)
    efficiency = DEFAULT_EFFICIENCY if efficiency is None else float(efficiency)
    if not (math.isfinite(crank_rpm) and crank_rpm > 0):
        raise ValueError(f"crank rpm must be a positive number, got {crank_rpm}")
    if not (math.isfinite(efficiency) and 0 < efficiency <= 1):
        raise ValueError(f"efficiency must be above 0 and at most 1, got {efficiency}")
    report = CheckReport(train.name, train.source, train.crank.arbor, crank_rpm, efficiency,
                         pin_diameter_mm, real_time=bool(real_time),
                         days_per_turn=Fraction(train.crank.days_per_turn))
    findings = report.findings
    deps, upstream = _power_flow(train, kin)
    pin_checks = pin_slot_checks(train, pin_diameter_mm, findings, kin)
    report.pin_slots = pin_checks
    report.arbors = _arbors(train, kin, deps, upstream, pin_checks, crank_rpm, efficiency,
                            findings, real_time=bool(real_time))
    report.meshes = _meshes(train, kin, upstream, report.arbors, crank_rpm, findings,
                            real_time=bool(real_time))
    modules = _wheel_modules(train, findings)
    groups = axis_groups(train, kin)
    _shared_axes(train, groups, findings)
    _pivot_holes(train, kin, groups, findings)
    forms = _tooth_forms(train, findings) if modules else {}
    _positions(train, groups, modules, findings, forms)
    _carrier_balance(train, kin, forms, findings)
    _teeth_rules(train, modules, findings, forms)
    _module_rules(train, findings)
    from .play import backlash_finding  # here: play imports this module's Finding

    if (loose := backlash_finding(train)) is not None:
        findings.append(loose)
    _load_rules(train, report, findings)
    missing = [m.index for m in train.meshes if m.module_mm is None]
    if missing:
        nums = ", ".join(str(i) for i in missing)
        findings.append(Finding(
            "note", "meshes", f"mesh{'es' if len(missing) > 1 else ''} {nums} "
            f"{'have' if len(missing) > 1 else 'has'} no module_mm, so centre distances, "
            "positions, overlaps and tooth loads there are not checked",
            "add module_mm to each [[meshes]] table to check its geometry"))
    order = {lv: i for i, lv in enumerate(LEVELS)}
    findings.sort(key=lambda f: order[f.level])
    return report


def carried_slot_extremes(ps, carrier_rate: float, pin_rate: float,
                          samples: int = 256) -> tuple[float, float, float, float, float]:
    """For a pin riding on a carrier: the pin's least and greatest distance from the slot
    arbor's axis (mm), the largest lead or lag of the slot arbor on the arbor it follows
    (degrees), and its least and greatest speed over that arbor's speed.

    The follower faces ``V = arm u(a) + r u(q) - (e, 0)`` (see
    :func:`engine.kinematics.pin_slot_lead_turns`); the distances and the lead bound follow
    from the triangle inequality (the longest length less, or plus, the other two), the speeds
    from ``dφ/dt = (V × V') / |V|²`` over a grid of both angles (rates relative to the mount,
    turns per crank turn) — a design estimate, close to but not exactly the extremes.
    """
    arm, r, e = ps.arm_mm, ps.pin_radius_mm, ps.offset_mm
    followed, others = (arm, r + e) if ps.follows == "carrier" else (r, arm + e)
    w_follow = carrier_rate if ps.follows == "carrier" else pin_rate
    g = np.linspace(0, 2 * np.pi, samples, endpoint=False)
    a, q = np.meshgrid(g, g)
    vx = arm * np.cos(a) + r * np.cos(q) - e
    vy = arm * np.sin(a) + r * np.sin(q)
    dx = -arm * carrier_rate * np.sin(a) - r * pin_rate * np.sin(q)
    dy = arm * carrier_rate * np.cos(a) + r * pin_rate * np.cos(q)
    speed = (vx * dy - vy * dx) / (vx * vx + vy * vy)
    if w_follow == 0:
        lo = hi = 1.0
    else:
        lo, hi = float(np.min(speed / w_follow)), float(np.max(speed / w_follow))
    return (followed - others, arm + r + e, math.degrees(math.asin(others / followed)), lo, hi)


def pin_slot_checks(train: Train, pin_d: float, findings: list[Finding],
                    kin=None) -> list[PinSlotCheck]:
    """Each pin-and-slot stage's slot, lead and speed range (``pin_d``: the pin's diameter
    where the file gives none), its notes and warnings appended to ``findings``; read by the
    check and by ``wheelwork play`` (which passes the stage's speed range on)."""
    out = []
    default_d = pin_d
    for ps in train.pin_slots.values():
        r, e = ps.pin_radius_mm, ps.offset_mm
        pin_d = ps.pin_diameter_mm or default_d
        assumed = ", diameter assumed" if ps.pin_diameter_mm is None else ""
        if ps.carrier is None:
            lo, hi = slot_speed_factors(r, e)
            near, far, lead = r - e, r + e, math.degrees(math.asin(e / r))
            travel = f"2 × {_mm(e)} offset + {_mm(pin_d)} pin{assumed}"
            other_d = f"for another pin diameter d use 2 × {_mm(e)} + d"
            tune = "change offset_mm to tune it: lead asin(e/r), speed r/(r+e) to r/(r-e)"
        else:
            mount = train.arbors[ps.slot_arbor].mount
            rel = None if mount == FRAME else mount
            near, far, lead, lo, hi = carried_slot_extremes(
                ps, float(kin.rate(ps.carrier, rel)), float(kin.rate(ps.pin_arbor, rel)))
            travel = (f"the pin's distance from the slot arbor's axis runs from {_mm(near)} "
                      f"to {_mm(far)}, + {_mm(pin_d)} pin{assumed}")
            other_d = f"for another pin diameter d use {_mm(far - near)} + d"
            tune = ("arm_mm, pin_radius_mm and offset_mm set the loop: the lead is at most "
                    "asin(shorter lengths / longest)")
        c = PinSlotCheck(ps.name, ps.pin_arbor, ps.slot_arbor, r, e, pin_d,
                         far - near + pin_d, near - pin_d / 2, far + pin_d / 2, lead, lo, hi,
                         ps.pin_diameter_mm is None)
        out.append(c)
        item = f"[pin_slots.{ps.name}]"
        findings.append(Finding(
            "note", item, f"the slot must let the pin travel {_mm(c.slot_length_mm)} "
            f"({travel}), from "
            f"{_mm(c.slot_inner_mm)} to {_mm(c.slot_outer_mm)} from the slot arbor's axis",
            f"cut the slot at least {_mm(c.slot_length_mm)} long plus running clearance; "
            f"{other_d}"))
        findings.append(Finding(
            "note", item, f"'{ps.slot_arbor}' leads or lags '{ps.followed_arbor}' by up to "
            f"{figure(c.max_lead_deg, 3)}° and turns between {figure(lo, 4)} and "
            f"{figure(hi, 4)} times its speed "
            "(relative to their mount); every arbor it drives varies the same way", tune))
        if c.slot_inner_mm <= 0:
            findings.append(Finding(
                "warning", item, f"the slot would reach the slot arbor's axis (inner end "
                f"{_mm(c.slot_inner_mm)}): the pin passes over the arbor",
                f"make pin_radius_mm at least {_mm(e + pin_d / 2 + 0.5)} or use a slot "
                "plate clear of the arbor end"))
    return out


def _arbors(train, kin, deps, upstream, pin_checks, crank_rpm, eff, findings, *,
            real_time: bool = False):
    year_turns = PERIODS["tropical_year"].days / float(train.crank.days_per_turn)
    pins = {p.name: p for p in pin_checks}
    stepped = set()
    for f in kin.mesh_frames:
        src = upstream.get(f.mesh_index)
        if src is None:
            continue
        up, down = _ends(train, f.mesh_index, src)
        if up.teeth > down.teeth:
            stepped.add(down.arbor)
    out = []
    for name, a in train.arbors.items():
        lin = kin.linear_of(name)
        rate = lin.crank
        lo = hi = float(rate)
        for k, sname in enumerate(kin.slot_names):
            w = lin.slots[k]
            if not w:
                continue
            ps = train.pin_slots[sname]
            mount = train.arbors[ps.slot_arbor].mount
            pin_rel = float(kin.rate(ps.followed_arbor, mount if mount != FRAME else None))
            ends = [float(w) * (fac - 1.0) * pin_rel for fac in
                    (pins[sname].speed_factor_min, pins[sname].speed_factor_max)]
            lo += min(ends)
            hi += max(ends)
        n = len(deps.get(name, ()))
        e = eff ** n
        still = rate == 0
        direction = ("still" if still else "with the crank" if rate > 0 else
                     "against the crank")
        out.append(ArborCheck(
            name, a.mount, rate, float(rate) * year_turns, direction, (lo, hi),
            max(abs(lo), abs(hi)) * crank_rpm, n, e,
            None if still else float(1 / abs(rate)), None if still else e / abs(float(rate)),
            name in stepped))
        if abs(rate) > FAST_ARBOR_X_CRANK:
            findings.append(Finding(
                "warning", f"[arbors.{name}]", f"turns {_fmt(abs(float(rate)))} times as fast "
                f"as the crank ({_fmt(max(abs(lo), abs(hi)) * crank_rpm)} rpm at "
                f"{_fmt(crank_rpm)} rpm): a step-up of more than {FAST_ARBOR_X_CRANK:g}:1 "
                + ("multiplies the friction the clock or motor driving the crank must "
                   "overcome" if real_time else "is heavy to crank by hand")
                + " and wears its pinions (rule of thumb)",
                "move the crank to a faster arbor, or drive this arbor from a slower one"))
    return out


def _ends(train: Train, mesh_index: int, src_arbor: str):
    m = train.meshes[mesh_index - 1]
    w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
    return (w1, w2) if w1.arbor == src_arbor else (w2, w1)


def _mesh_loads(train: Train, kin: Kinematics) -> list[float]:
    """Each mesh's tangential tooth force, in N per N·m at the crank and per mm of module,
    with no losses: the largest over the arbors it can load.

    By virtual work, with the crank held, a slip of ``ε`` pitches (``ε π m`` mm) along mesh
    ``i``'s pitch line turns arbor ``L`` by ``S_Li ε`` turns (:func:`engine.play.sensitivities`);
    a load ``T_L`` there is held by a tooth force ``F`` when ``F ε π m = 2 π T_L S_Li ε``, so
    ``F = 2 T_L |S_Li| / m``, and the crank's 1 N·m holds ``T_L = 1 / |turns of L per crank
    turn|``. Along a plain chain every arbor after the mesh gives the same ``2 T / d``; in an
    epicyclic train it is the load at the output that the planet's teeth carry, and a fixed
    sun's mesh carries it too, which the planet arbor's own torque against the frame does not
    say."""
    from .play import sensitivities  # here: play imports this module

    names, sens = sensitivities(train, kin)
    rates = np.array([abs(float(kin.rate(n))) for n in names])
    moving = rates > 0
    out = []
    for i in range(len(train.meshes)):
        col = np.abs(sens[:, i])
        per = np.where(moving, col / np.where(moving, rates, 1.0), 0.0)
        out.append(2.0 * float(per.max(initial=0.0)))
    return out


def _meshes(train, kin, upstream, arbors, crank_rpm, findings, *, real_time: bool = False):
    by_name = {a.name: a for a in arbors}
    frames = {f.mesh_index: f for f in kin.mesh_frames}
    loads = _mesh_loads(train, kin) if any(m.module_mm for m in train.meshes) else []
    out = []
    for m in train.meshes:
        f = frames[m.index]
        src = upstream.get(m.index, train.wheels[m.driver].arbor)
        up, down = _ends(train, m.index, src)
        ratio = Fraction(up.teeth, down.teeth) * f.sign
        step_up = up.teeth > down.teeth
        mod = m.module_mm
        d1 = d2 = a = v = force = load = face = None
        if mod is not None:
            face = m.face_width_mm
            d1 = pitch_diameter_mm(mod, train.wheels[m.driver].teeth)
            d2 = pitch_diameter_mm(mod, train.wheels[m.driven].teeth)
            a = centre_distance_mm(mod, train.wheels[m.driver].teeth,
                                   train.wheels[m.driven].teeth, m.internal)
            rel = abs(float(kin.rate(up.arbor, f.reference if f.reference != FRAME else None)))
            d_up = pitch_diameter_mm(mod, up.teeth)
            v = math.pi * d_up / 1000.0 * rel * crank_rpm / 60.0
            # the losses of the stages before this mesh (those its upstream arbor depends on)
            if loads[m.index - 1] > 0:
                force = loads[m.index - 1] / (mod / 1000.0) * by_name[up.arbor].efficiency
                load = force / (mod * face)
        out.append(MeshCheck(m.index, m.label, m.driver, m.driven, train.wheels[m.driver].teeth,
                             train.wheels[m.driven].teeth, m.internal, f.reference, up.name,
                             down.name, ratio, step_up, mod, d1, d2, a, v, force, load, face))
        if step_up:
            findings.append(Finding(
                "note", m.label, f"step-up stage: '{up.name}' ({up.teeth}) drives "
                f"'{down.name}' ({down.teeth}) {_fmt(up.teeth / down.teeth)} times faster; "
                "step-up stages multiply the friction "
                + ("the clock or motor driving the crank must overcome" if real_time
                   else "felt at the crank"),
                "fine if intended; otherwise drive the train from the faster side"))
        if v is not None and v > PITCH_SPEED_LIMIT_M_S:
            findings.append(Finding(
                "warning", m.label, f"pitch-line speed {_fmt(v)} m/s at {_fmt(crank_rpm)} rpm "
                f"crank, above {PITCH_SPEED_LIMIT_M_S:g} m/s for small unhardened gears "
                "(rule of thumb)", "lubricate and cut accurate teeth, use smaller wheels on the "
                "fast arbor, or crank more slowly"))
    return out


def _wheel_modules(train: Train, findings: list[Finding]) -> dict[str, float]:
    """The module of every wheel in a mesh with module_mm; a wheel with two modules is an error."""
    modules: dict[str, tuple[float, int]] = {}
    for m in train.meshes:
        if m.module_mm is None:
            continue
        for w in (m.driver, m.driven):
            if w in modules and abs(modules[w][0] - m.module_mm) > 1e-9:
                first, at = modules[w]
                findings.append(Finding(
                    "error", m.label, f"wheel '{w}' is cut at module {figure(first, 6)} mm "
                    f"for mesh {at} but meshes here at module {figure(m.module_mm, 6)} mm: one "
                    "wheel has one module", f"make this mesh's module_mm {figure(first, 6, group=False)}, or "
                    "give the two meshes separate wheels"))
            else:
                modules.setdefault(w, (m.module_mm, m.index))
    return {w: v[0] for w, v in modules.items()}


def _axis_names(train: Train, groups: dict[str, str], root: str) -> str:
    names = [n for n in train.arbors if groups[n] == root]
    return "/".join(names)


def _shared_axes(train: Train, groups: dict[str, str], findings: list[Finding]) -> None:
    """Every pair of axes has one distance: meshes (and pin offsets) between them must agree."""
    pairs: dict[frozenset, list[tuple[str, float, object]]] = {}
    for m in train.meshes:
        if m.module_mm is None:
            continue
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        g1, g2 = groups[w1.arbor], groups[w2.arbor]
        a = centre_distance_mm(m.module_mm, w1.teeth, w2.teeth, m.internal)
        if g1 == g2:
            findings.append(Finding(
                "error", m.label, f"'{w1.arbor}' and '{w2.arbor}' share one axis, yet this mesh "
                f"needs their axes {_mm(a)} apart", "remove the axis_with that puts them on one "
                "axis, or mesh the wheel with an arbor on another axis"))
            continue
        pairs.setdefault(frozenset((g1, g2)), []).append((m.label, a, m))
    for ps in train.pin_slots.values():
        g1, g2 = groups[ps.carrier or ps.pin_arbor], groups[ps.slot_arbor]
        if g1 == g2:
            if ps.offset_mm > TOLERANCE_MM:
                findings.append(Finding(
                    "error", f"[pin_slots.{ps.name}]", f"pin and slot arbors share one axis, "
                    f"yet their axes must be {_mm(ps.offset_mm)} apart",
                    "put the slot arbor on an axis of its own"))
            continue
        pairs.setdefault(frozenset((g1, g2)), []).append(
            (f"[pin_slots.{ps.name}]", ps.offset_mm, ps))
    _triangles(train, groups, {k: v[0] for k, v in pairs.items()}, findings)
    for key, items in pairs.items():
        if len(items) < 2:
            continue
        first_label, a0, _ = items[0]
        axes = " and ".join(_axis_names(train, groups, g) for g in sorted(key))
        for label, a, obj in items[1:]:
            gap = a - a0
            if abs(gap) <= TOLERANCE_MM:
                continue
            findings.append(Finding(
                "error", label, f"the axes of {axes} are {_mm(a0)} apart for {first_label} but "
                f"{_mm(a)} apart here: {_mm(abs(gap))} {'too far' if gap > 0 else 'too close'}",
                _distance_fix(train, obj, a0)))


def _file_name(train: Train) -> str:
    """The train file's name, without its folders (a finding is read beside the file)."""
    return str(train.source).replace("\\", "/").rsplit("/", 1)[-1]


def hole_mm(train: Train, arbors) -> tuple[float, str]:
    """The pivot hole of an axis holding ``arbors``: as wide as the widest of their pivots
    (an arbor's own ``pivot_mm``, else ``[workshop]``'s), and the arbor whose pivot that is."""
    return max(((train.pivot_of(a), a) for a in arbors), key=lambda x: x[0])


def holes_overlap(dist_mm: float, d1_mm: float, d2_mm: float) -> bool:
    """Two round holes run into one another when their centres stand closer than the sum of
    their radii (plane geometry): the one rule for pivot holes, read by the check and by the
    plate ``wheelwork cut`` draws."""
    return dist_mm < (d1_mm + d2_mm) / 2


def in_plate(train: Train, arbors, mount: str, side: str) -> list[str]:
    """The arbors of one axis that make a pivot hole in the ``side`` plate (``"front"`` or
    ``"back"``) of ``mount``: those it holds whose ``pivots_in`` puts a pivot there, and any
    arbor of the axis on another mount (a carrier's own arbor at its plate's centre) — an
    empty list when that plate has no hole for the axis (a cock or bridge holds its pivot)."""
    return [a for a in arbors
            if train.arbors[a].mount != mount or train.arbors[a].pivoted_in(side)]


def in_cocks(train: Train, arbors, mount: str, side: str) -> list[str]:
    """The arbors of one axis that ``mount`` holds whose pivot on ``side`` sits in a cock or
    bridge (``pivots_in``), not in that plate."""
    return [a for a in arbors
            if train.arbors[a].mount == mount and not train.arbors[a].pivoted_in(side)]


def split_plates(train: Train, mount: str) -> bool:
    """Whether ``mount``'s front and back plates differ: an arbor it holds pivots in one of
    them alone, or in neither (``pivots_in``). Else one drawing stands for both."""
    return any(a.mount == mount and a.pivots_in != "both" for a in train.arbors.values())


def hole_overlap_text(axes: tuple[str, str], dist_mm: float, holes: tuple[tuple[float, str],
                      tuple[float, str]], how: str, tail: str = "", where: str = ""
                      ) -> tuple[str, str]:
    """What to say of two pivot holes that run into one another: ``axes`` their names (the
    arbors on each axis joined by '/'), ``holes`` each one's (diameter, arbor setting it) from
    :func:`hole_mm`, ``how`` what holds them ``dist_mm`` apart (``offset_mm``, a mesh, the
    file's ``at_mm``, ``as drawn``); ``tail`` how the axes could be parted further, if they
    can; ``where`` the plate, when they meet in one only (``front``). The message and the fix,
    one line each, the same in ``wheelwork check`` and on the plate's notes."""
    (d1, a1), (d2, a2) = holes
    across = f"{_mm(d1)} across" if d1 == d2 else f"{_mm(d1)} and {_mm(d2)} across"
    plate = f" in the {where} plate" if where else ""
    message = (f"the pivot holes of '{axes[0]}' and '{axes[1]}'{plate} are {_mm(dist_mm)} "
               f"apart centre to centre ({how}) but {across} (pivot_mm): they run into one "
               "another and hold neither arbor")
    fix = (f"pivot one of the two in a cock or bridge of its own (pivots_in = \"front\" or "
           f"\"back\" in [arbors.{a1}] or [arbors.{a2}]: the plate it leaves has no hole for "
           f"it), give them smaller pivots (the two diameters averaging under {_mm(dist_mm)}: "
           f"[arbors.{a1}] and [arbors.{a2}] pivot_mm, or [workshop] pivot_mm)"
           + (f", or part the axes further ({tail})" if tail else ""))
    return message, fix


def _pivot_holes(train: Train, kin: Kinematics, groups: dict[str, str],
                 findings: list[Finding]) -> None:
    """Every two pivot holes on one plate whose distance the file settles, and which run into
    one another (:func:`holes_overlap`) in the same plate (front or back: :func:`in_plate`):
    a pin-and-slot's axes stand its offset apart (a carried
    pin's arbor its arm from the carrier's axis), a mesh's its centre distance, and arbors the
    file places with ``at_mm`` (a carrier's own axis at the centre of its plate) where it puts
    them. ``wheelwork cut`` says the same on the plate it draws; the check says it before
    anything is drawn. One warning for each pair of holes, naming the first item that sets
    their distance."""
    known: dict[tuple[str, frozenset], tuple] = {}

    def add(mount, g1, g2, dist, item, how, tail):
        if g1 != g2:
            known.setdefault((mount, frozenset((g1, g2))), (item, g1, g2, dist, how, tail))

    for ps in train.pin_slots.values():
        item = f"[pin_slots.{ps.name}]"
        slot_mount = train.arbors[ps.slot_arbor].mount
        if ps.carrier is not None:
            add(slot_mount, groups[ps.carrier], groups[ps.slot_arbor], ps.offset_mm, item,
                "offset_mm", "a longer offset_mm, which changes the stage's swing")
            add(ps.carrier, groups[ps.carrier], groups[ps.pin_arbor], ps.arm_mm, item, "arm_mm",
                "a longer arm_mm, which changes the stage's swing")
        else:
            add(slot_mount, groups[ps.pin_arbor], groups[ps.slot_arbor], ps.offset_mm, item,
                "offset_mm", "a longer offset_mm, which changes the stage's swing")
    for f in kin.mesh_frames:
        m = train.meshes[f.mesh_index - 1]
        if m.module_mm is None:
            continue
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        add(f.reference, groups[w1.arbor], groups[w2.arbor],
            centre_distance_mm(m.module_mm, w1.teeth, w2.teeth, m.internal), m.label,
            "its centre distance", "more teeth or a larger module")
    placed: dict[str, dict[str, tuple[tuple[float, float], str]]] = {}
    for c in {a.mount for a in train.arbors.values()} - {FRAME}:
        placed.setdefault(c, {})[groups[c]] = ((0.0, 0.0), f"the centre of carrier '{c}'")
    for a in train.arbors.values():
        if a.at_mm is not None:
            placed.setdefault(a.mount, {}).setdefault(groups[a.name],
                                                      (tuple(a.at_mm), f"[arbors.{a.name}]"))
    for mount, spots in placed.items():
        items = list(spots.items())
        for i, (g1, (p1, _)) in enumerate(items):
            for g2, (p2, who) in items[i + 1:]:
                item = who if who.startswith("[") else items[i][1][1]
                add(mount, g1, g2, math.dist(p1, p2), f"{item} at_mm", "at_mm",
                    "at_mm")
    for (mount, _), (item, g1, g2, dist, how, tail) in known.items():
        # only holes in one plate can run into one another: an arbor pivoted in a cock or
        # bridge on one side (pivots_in) has no hole in that plate
        met = []
        for side in PLATE_SIDES:
            s1 = in_plate(train, [n for n in train.arbors if groups[n] == g1], mount, side)
            s2 = in_plate(train, [n for n in train.arbors if groups[n] == g2], mount, side)
            if s1 and s2:
                h1, h2 = hole_mm(train, s1), hole_mm(train, s2)
                if holes_overlap(dist, h1[0], h2[0]):
                    met.append((side, h1, h2))
        if not met:
            continue
        side, h1, h2 = met[0]
        message, fix = hole_overlap_text((_axis_names(train, groups, g1),
                                          _axis_names(train, groups, g2)), dist, (h1, h2), how,
                                         tail, side if len(met) == 1 else "")
        findings.append(Finding("warning", item, f"{_file_name(train)}: {message}", fix))


def _triangles(train: Train, groups, first: dict, findings: list[Finding]) -> None:
    """Three axes whose three distances are all fixed must form a triangle: c ≤ a + b."""
    roots = sorted({g for key in first for g in key})
    for i, g1 in enumerate(roots):
        for j in range(i + 1, len(roots)):
            g2 = roots[j]
            for g3 in roots[j + 1:]:
                sides = [first.get(frozenset(p)) for p in ((g1, g2), (g2, g3), (g1, g3))]
                if any(x is None for x in sides):
                    continue
                longest = max(sides, key=lambda x: x[1])
                rest = sum(x[1] for x in sides) - longest[1]
                if longest[1] > rest + TOLERANCE_MM:
                    names = ", ".join(_axis_names(train, groups, g) for g in (g1, g2, g3))
                    findings.append(Finding(
                        "error", longest[0], f"the axes of {names} cannot be placed: this "
                        f"distance ({_mm(longest[1])}) exceeds the other two together "
                        f"({_mm(rest)}) by {_mm(longest[1] - rest)}",
                        f"shorten it by at least {_mm(longest[1] - rest)} (fewer teeth or a "
                        "smaller module), or lengthen one of the other two"))


def _distance_fix(train: Train, obj, want_mm: float) -> str:
    """What to change in a mesh (or pin offset) to make its centre distance ``want_mm``."""
    if not hasattr(obj, "module_mm"):
        return f"set offset_mm to {figure(want_mm, 6, group=False)}, or change the meshes to suit this offset"
    m = obj
    w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
    need = 2.0 * want_mm / m.module_mm
    fixes = []
    if abs(need - round(need)) < 1e-6:
        s = round(need)
        if m.internal:
            ring, other = (w1, w2) if m.ring == w1.name else (w2, w1)
            z = s + other.teeth
            if z > other.teeth:
                fixes.append(f"make '{ring.name}' {z} teeth (ring minus pinion = {s})")
        else:
            z = s - w1.teeth
            if z > 0:
                fixes.append(f"make '{w2.name}' {z} teeth (tooth sum {s})")
    span = abs(w1.teeth - w2.teeth) if m.internal else w1.teeth + w2.teeth
    fixes.append(f"{'or ' if fixes else ''}cut this mesh at module "
                 f"{figure(2.0 * want_mm / span, 4)} mm, which keeps the ratio")
    return ", ".join(fixes) + (" (a tooth change alters the ratio: check it with ratios)"
                               if len(fixes) > 1 else "")


def _positions(train: Train, groups, modules, findings: list[Finding], forms: dict) -> None:
    """Compare given ``at_mm`` positions with the centre distances, and look for fouling."""
    pos: dict[str, tuple[float, float]] = {}
    for a in train.arbors.values():
        if a.at_mm is not None:
            pos[a.name] = a.at_mm
    for a in train.arbors.values():  # coaxial arbors without a position take their partner's
        if a.name not in pos and a.axis_with in pos and \
                train.arbors[a.axis_with].mount == a.mount:
            pos[a.name] = pos[a.axis_with]
    tips = _tips(train, modules, forms)
    if not pos:
        _fixed_overlaps(train, groups, modules, pos, findings, tips)
        return
    for a in train.arbors.values():
        b = a.axis_with
        if b and a.at_mm is not None and train.arbors[b].at_mm is not None and \
                train.arbors[b].mount == a.mount:
            gap = math.dist(a.at_mm, train.arbors[b].at_mm)
            if gap > TOLERANCE_MM:
                findings.append(Finding(
                    "error", f"[arbors.{a.name}]", f"is on the axis of '{b}' but placed "
                    f"{_mm(gap)} from it", f"set at_mm to {list(train.arbors[b].at_mm)} or "
                    "drop one of the two positions"))

    def placed(x: str, y: str) -> bool:
        return x in pos and y in pos and train.arbors[x].mount == train.arbors[y].mount

    for m in train.meshes:
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        if m.module_mm is None or not placed(w1.arbor, w2.arbor):
            continue
        a = centre_distance_mm(m.module_mm, w1.teeth, w2.teeth, m.internal)
        p1, p2 = pos[w1.arbor], pos[w2.arbor]
        dist = math.dist(p1, p2)
        gap = dist - a
        if abs(gap) <= TOLERANCE_MM:
            continue
        # move the driven wheel's arbor, unless its place is only its partner's (axis_with):
        # then the driver's, whose at_mm is its own
        anchor, mover = w1.arbor, w2.arbor
        if train.arbors[mover].at_mm is None and train.arbors[anchor].at_mm is not None:
            anchor, mover = mover, anchor
        p1, p2 = pos[anchor], pos[mover]
        if dist > 0:
            k = a / dist
            at = [round(p1[0] + (p2[0] - p1[0]) * k, 3), round(p1[1] + (p2[1] - p1[1]) * k, 3)]
            fix = f"move '{mover}' to at_mm = {at}"
        else:
            fix = f"move '{mover}' {_mm(a)} away from '{anchor}'"
        dz = 2.0 * gap / m.module_mm
        if abs(dz - round(dz)) < 0.05 and round(dz) != 0:
            z = w2.teeth + round(dz) * (-1 if m.internal and m.ring == w2.name else 1)
            if z > 0:
                fix += f", or make '{w2.name}' {z} teeth to close the {_mm(abs(gap))} " \
                       f"{'gap' if gap > 0 else 'overlap'}"
        findings.append(Finding(
            "error", m.label, f"the axes are placed {_mm(dist)} apart but the wheels need "
            f"{_mm(a)}: {_mm(abs(gap))} {'too far' if gap > 0 else 'too close'}", fix))
    for ps in train.pin_slots.values():
        axis = ps.carrier or ps.pin_arbor  # the axis offset_mm is measured from
        if placed(axis, ps.slot_arbor):
            dist = math.dist(pos[axis], pos[ps.slot_arbor])
            if abs(dist - ps.offset_mm) > TOLERANCE_MM:
                findings.append(Finding(
                    "error", f"[pin_slots.{ps.name}]", f"the axes are placed {_mm(dist)} apart "
                    f"but offset_mm is {figure(ps.offset_mm, 6)}", "make offset_mm match the "
                    "positions, or move the slot arbor"))
    _overlaps(train, groups, modules, pos, findings, tips)
    _fixed_overlaps(train, groups, modules, pos, findings, tips)


def _tips(train: Train, modules, forms) -> dict[str, float]:
    """Each wheel's tip radius as it will be cut (internal wheels left out)."""
    rings = {m.ring for m in train.meshes if m.ring}
    return {w: (forms[w].tip_radius_mm if w in forms
                else (pitch_diameter_mm(mod, train.wheels[w].teeth) + 2 * mod) / 2.0)
            for w, mod in modules.items() if w not in rings}


def _over_axis(train: Train, w: str, tip: float, other: str, dist: float, modules,
               mesh=None) -> Finding:
    """The warning for wheel ``w`` reaching over the axis of ``other``; ``mesh`` is the mesh
    that holds the two axes that far apart (the distance cannot be changed by moving one)."""
    mod = modules[w]
    addendum = tip - pitch_diameter_mm(mod, train.wheels[w].teeth) / 2.0
    zmax = math.floor(2 * (dist - addendum) / mod)
    why = f" (as {mesh.label} holds them)" if mesh is not None else ""
    part = (f"part the axes at least {_mm(tip - dist)} further ({mesh.label} at more teeth or "
            "a larger module)" if mesh is not None else
            f"move '{other}' at least {_mm(tip - dist)} further away")
    # fewer teeth only while some are left ('at most -1 teeth' for a module 100 times too big)
    fewer = f", make '{w}' at most {zmax} teeth" if zmax >= 1 else ""
    return Finding(
        "warning", f"wheel '{w}'", f"its tip circle (radius {_mm(tip)}) reaches over the axis "
        f"of '{other}', {_mm(dist)} from its own{why}",
        f"{part}{fewer}, or end '{other}' short of this wheel's plane")


def _fixed_overlaps(train: Train, groups, modules, pos, findings: list[Finding],
                    tips: dict[str, float]) -> None:
    """A tip circle over the axis of an arbor whose distance a mesh fixes, whether or not the
    file places the axes: a mesh holds two axes one centre distance apart, so a wheel on one
    of them wider than that reaches over the other's arbor at any placing (a compound
    arbor's great wheel over the next arbor's pivot, a dial wheel over an idler beside it).
    Axes both placed with ``at_mm`` are left to :func:`_overlaps`, which measures them."""
    done = set()
    for m in train.meshes:
        if m.module_mm is None or m.internal:
            continue
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        if train.arbors[w1.arbor].mount != train.arbors[w2.arbor].mount:
            continue
        dist = centre_distance_mm(m.module_mm, w1.teeth, w2.teeth, m.internal)
        for here, there in ((w1.arbor, w2.arbor), (w2.arbor, w1.arbor)):
            if groups[here] == groups[there] or (here in pos and there in pos):
                continue
            for w, tip in tips.items():
                wa = train.wheels[w].arbor
                if groups[wa] != groups[here] or train.arbors[wa].mount != \
                        train.arbors[here].mount or (w, groups[there]) in done:
                    continue
                if dist < tip - TOLERANCE_MM:
                    done.add((w, groups[there]))
                    findings.append(_over_axis(train, w, tip, there, dist, modules, m))


def _overlaps(train, groups, modules, pos, findings, tips: dict[str, float]) -> None:
    """Tip circles over another arbor's axis, and tip circles of wheels that may share a plane.

    Simplification (no planes in the file): wheels on two arbors that mesh with each other are
    taken to be stacked in separate planes (a wheel and a pinion on one arbor never share one);
    any other two wheels whose tip circles overlap would foul if they were in the same plane.
    Internal (ring) wheels enclose their pinions and are left out.
    """
    partners = set()
    for m in train.meshes:
        a1, a2 = groups[train.wheels[m.driver].arbor], groups[train.wheels[m.driven].arbor]
        partners.add(frozenset((a1, a2)))
    tips = {w: t for w, t in tips.items() if train.wheels[w].arbor in pos}
    mount = {n: train.arbors[n].mount for n in train.arbors}
    for w, tip in tips.items():
        wa = train.wheels[w].arbor
        for other, p in pos.items():
            if groups[other] == groups[wa] or mount[other] != mount[wa]:
                continue
            dist = math.dist(pos[wa], p)
            if dist < tip - TOLERANCE_MM:
                findings.append(_over_axis(train, w, tip, other, dist, modules))
    names = sorted(tips)
    meshing = {frozenset((m.driver, m.driven)) for m in train.meshes}
    for i, w1 in enumerate(names):
        a1 = train.wheels[w1].arbor
        for w2 in names[i + 1:]:
            a2 = train.wheels[w2].arbor
            if groups[a1] == groups[a2] or mount[a1] != mount[a2]:
                continue
            if frozenset((w1, w2)) in meshing or frozenset((groups[a1], groups[a2])) in partners:
                continue
            over = tips[w1] + tips[w2] - math.dist(pos[a1], pos[a2])
            if over > TOLERANCE_MM:
                findings.append(Finding(
                    "warning", f"wheel '{w1}'", f"its tip circle overlaps that of '{w2}' (on "
                    f"'{a2}') by {_mm(over)}: they foul if they run in the same plane",
                    f"put them in different planes, or move '{a2}' {_mm(over)} further from "
                    f"'{a1}'"))


def _carrier_balance(train: Train, kin: Kinematics, forms: dict,
                     findings: list[Finding]) -> None:
    """A carrier's plate, as ``wheelwork cut`` draws it (a rectangle round its holes and
    wheels), and the wheels it carries round, out of balance about its axis: a note with the
    estimate (:func:`engine.plate.carrier_balance`, the words :func:`engine.plate.balance_text`
    shared with the plate's note). Placed as the cut places it; a train the plate cannot be
    placed for (said by the other checks) gets no note."""
    if not forms or all(a.mount == FRAME for a in train.arbors.values()):
        return
    from .drawing import wheel_areas  # drawing imports plate, which imports this module
    from .errors import WheelworkError
    from .plate import balance_text, carrier_arm, carrier_balance, counterweight_sweep, place_plates

    reach = {w: (t.tip_radius_mm if t.role != "ring" else t.root_radius_mm)
             for w, t in forms.items()}
    pitch = {w: t.pitch_radius_mm for w, t in forms.items()}
    try:
        plates = place_plates(train, kin, reach)
    except WheelworkError:
        return
    areas = wheel_areas(train, forms, plates)
    for plate in plates:
        if not plate.holes:
            continue
        b = carrier_balance(train, plate, {**pitch, **reach}, pitch, "box", areas)
        if b is not None and b.worth_saying:
            message, fix = balance_text(b)
            findings.append(Finding("note", f"[arbors.{b.carrier}]",
                                    f"{_file_name(train)}: {message}", fix))
        if b is not None and train.workshop.carrier_plate_mm is not None:
            try:  # the arms --carrier-outline arm would cut, with the thickness given
                arm = carrier_arm(train, plate, pitch, areas)
            except WheelworkError:
                continue
            if sweep := counterweight_sweep(train, plates, plate, arm, {**pitch, **reach}):
                findings.append(Finding("warning", f"[arbors.{b.carrier}]",
                                        f"{_file_name(train)}: with --carrier-outline arm, "
                                        + sweep[0], sweep[1]))


def _tooth_forms(train: Train, findings: list[Finding]) -> dict:
    """Each wheel's tooth as it will be cut (the train's tooth_form or the wheel's own), for
    its tip circle: a cycloidal wheel stands 1.2-1.8 modules above its pitch circle and a
    pinion's leaves 0.67-0.86, not the involute 1. A train whose teeth cannot be cut (two
    forms in one mesh, a tooth with no root circle) is an error here as in ``wheelwork cut``;
    the forms are then empty and overlaps take the involute tip."""
    from .drawing import tooth_forms  # here: drawing imports plate, which imports this module
    from .errors import TrainError

    try:
        forms = tooth_forms(train)
    except TrainError as exc:
        fix = ("set one form for both in [workshop.wheels.NAME] (or neither, to take [workshop] "
               "tooth_form)" if "tooth form" in exc.problem else
               "wheelwork cut cannot draw it: change its module or tooth count")
        if not any(f.level == "error" and f.item == exc.item for f in findings):
            findings.append(Finding("error", exc.item, exc.problem, fix))  # not said already
        return {}
    _deep_teeth(train, forms, findings)
    shop = train.workshop
    for w, tooth in forms.items():  # a bore chosen in [workshop] (the default one always fits)
        bore = shop.wheel(w).bore_mm or shop.bore_mm
        if bore is not None and tooth.role != "ring" and bore / 2 >= tooth.root_radius_mm:
            findings.append(Finding(
                "error", f"wheel '{w}'", f"a bore of {figure(bore, 6)} mm is wider than the "
                f"root circle ({2 * tooth.root_radius_mm:.3f} mm): wheelwork cut cannot draw it",
                f"give it a bore_mm under {figure(2 * tooth.root_radius_mm, 3)} mm in "
                f"[workshop.wheels.{w}], or cut its leaves on the arbor"))
    return forms


def _deep_teeth(train: Train, forms: dict, findings: list[Finding]) -> None:
    """One note for every cycloidal wheel whose addendum is deep (a large pinion's generating
    circle), as ``wheelwork cut`` gives it, naming the meshes: cut them involute."""
    from .toothform import DEEP_ADVICE, deep_teeth, deep_teeth_text

    deep = deep_teeth(forms)
    if not deep:
        return
    where = {}
    for w, _add, leaves in deep:  # the mesh with the pinion that sets the addendum
        where[w] = next(m for m in train.meshes
                        if w in (m.driver, m.driven) and m.module_mm is not None
                        and not m.internal and train.wheels[
                            m.driven if w == m.driver else m.driver].teeth == leaves)
    deep.sort(key=lambda d: where[d[0]].index)
    meshes = sorted({where[w].index for w, *_ in deep})
    item = (where[deep[0][0]].label if len(meshes) == 1 else
            "meshes " + ", ".join(str(i) for i in meshes))
    findings.append(Finding(
        "note", item, f"deep cycloidal teeth, as wheelwork cut draws them, on {len(deep)} "
        f"wheel{'s' if len(deep) > 1 else ''}: {deep_teeth_text(deep)}: {DEEP_ADVICE}",
        'cut these meshes involute ([workshop] tooth_form = "involute", or form = "involute" '
        "for both wheels in [workshop.wheels.NAME]), or use pinions of 16 leaves or fewer"))


def _teeth_rules(train: Train, modules: dict[str, float], findings: list[Finding],
                 forms: dict | None = None) -> None:
    rings = {m.ring for m in train.meshes if m.ring}
    in_rings = {m.driver if m.ring == m.driven else m.driven for m in train.meshes if m.ring}
    mates: dict[str, str] = {}
    for m in train.meshes:
        mates.setdefault(m.driver, m.driven)
        mates.setdefault(m.driven, m.driver)
    for w, wheel in train.wheels.items():
        if w not in mates:
            continue
        z = wheel.teeth
        item = f"wheel '{w}'"
        mate = train.wheels[mates[w]]
        if z < PREFERRED_LEAVES and w not in rings:
            k = -(-PREFERRED_LEAVES // z)
            keep = f"'{w}' {k * z} and '{mate.name}' {k * mate.teeth} keep the ratio"
            if k * mate.teeth > MAX_TEETH:  # the cure must not break the largest-count rule
                keep += (f", but {k * mate.teeth} teeth is more than {MAX_TEETH} on one blank: "
                         "split the stage in two")
            if z < MIN_LEAVES:
                pin = (" (if it is a pin or finger that advances the wheel a tooth at a time, "
                       "this rule does not apply)" if z <= 2 else "")
                findings.append(Finding(
                    "warning", item, f"{z} {'leaf' if z == 1 else 'leaves'}: fewer than {MIN_LEAVES}, the least a "
                    f"pinion should have to run smoothly (rule of thumb, common practice, no "
                    f"source){pin}", f"give it {PREFERRED_LEAVES} leaves or more: {keep}"))
            else:
                findings.append(Finding(
                    "note", item, f"{z} leaves: it runs, but {PREFERRED_LEAVES} or more run "
                    "smoother (rule of thumb, common practice, no source)",
                    f"if there is room, {keep}"))
        # as cut draws it: a wheel meshing inside an internal wheel is involute like it
        form = forms[w].form if forms and w in forms else train.workshop.form_of(w)
        if MIN_LEAVES <= z < UNDERCUT_RULE_TEETH and w not in rings and form == "involute":
            x = undercut_shift(z)
            mod = modules.get(w)
            shift = f" ({figure(x * mod, 3)} mm at module {figure(mod, 6)})" if mod else ""
            findings.append(Finding(
                "note", item, f"{z} teeth: involute teeth at {PRESSURE_ANGLE_DEG:g}° are "
                f"undercut below {UNDERCUT_RULE_TEETH} (z_min = 2/sin²α ≈ "
                f"{UNDERCUT_TEETH:.1f}, standard gear geometry); cycloidal clock teeth are not",
                f"cut it with a profile shift of at least x = {x:.2f}{shift}, "
                f"{'' if w in in_rings else 'use a cycloidal clock profile, '}or give it "
                f"{UNDERCUT_RULE_TEETH} teeth"))
        if z > MAX_TEETH:
            findings.append(Finding(
                "warning", item, f"{z} teeth: more than {MAX_TEETH}, the most that is practical "
                "on one blank (our rule: indexing errors pile up and need compound division)",
                f"split the stage in two, e.g. {_split_hint(z)}"))
        mod = modules.get(w)
        if mod is not None and mod <= FINE_MODULE_MM:
            d = pitch_diameter_mm(mod, z)
            if d > FINE_WHEEL_MAX_PITCH_MM:
                zmax = math.floor(FINE_WHEEL_MAX_PITCH_MM / mod)
                findings.append(Finding(
                    "warning", item, f"{_mm(d)} across at module {figure(mod, 6)}: a "
                    f"fine-toothed wheel over {FINE_WHEEL_MAX_PITCH_MM:g} mm must be very flat "
                    "and true to keep its shallow teeth in mesh (our rule)", f"use module "
                    f"{FINE_MODULE_MM * 1.2:g} mm or more, or keep it to {zmax} teeth at "
                    f"module {figure(mod, 6)}"))


def _module_rules(train: Train, findings: list[Finding]) -> None:
    """A module far outside clock and watch work: likely inches or a diametral pitch."""
    lo, hi = MODULE_RANGE_MM
    for m in train.meshes:
        mod = m.module_mm
        if mod is None or lo <= mod <= hi:
            continue
        if mod < lo:
            why = (f"finer than the finest watch teeth (about {lo:g} mm); module_mm is in "
                   f"millimetres: {figure(mod, 6)} in would be {figure(mod * 25.4, 4)} mm")
        else:
            why = (f"coarser than {hi:g} mm, teeth {figure(2.25 * mod, 4)} mm deep; a "
                   f"diametral pitch of {figure(mod, 6)} teeth per inch would be module "
                   f"{figure(25.4 / mod, 4)} mm")
        findings.append(Finding(
            "warning", m.label, f"module {figure(mod, 6)} mm: {why} (our rule)",
            "give module_mm in millimetres (module = pitch diameter in mm / teeth; "
            "25.4 / diametral pitch)"))


def _split_hint(z: int) -> str:
    for f in range(math.isqrt(z), 1, -1):
        if z % f == 0:
            return f"{z} = {f} × {z // f}, two stages whose ratios multiply to the same"
    return f"{z} is prime: choose a nearby ratio that factors, or a larger module and blank"


def _load_rules(train: Train, report: CheckReport, findings: list[Finding]) -> None:
    """Point at the stage where the highest torque meets the smallest teeth."""
    loaded = [m for m in report.meshes if m.load_index is not None]
    if len(loaded) < 2:
        return
    worst = max(loaded, key=lambda m: m.load_index)
    least = min(loaded, key=lambda m: m.load_index)
    if worst.load_index < LOAD_SPREAD * least.load_index:
        return  # the stages are loaded alike: nothing stands out
    up = worst.upstream if worst.upstream == worst.driver else worst.driven
    teeth = worst.driver_teeth if up == worst.driver else worst.driven_teeth
    given = train.meshes[worst.index - 1].face_mm is not None
    assumed = "" if given else f" ({FACE_M:g} modules, assumed: no face_mm)"
    findings.append(Finding(
        "note", worst.label, f"the heaviest-loaded teeth in the train: about "
        f"{_about(worst.tooth_force_n)} N on the teeth of '{up}' ({teeth}) per N·m at the crank, "
        f"at module {figure(worst.module_mm, 6)} mm and face {figure(worst.face_mm, 4)} mm"
        f"{assumed}; its load index (force / (module × face)) is "
        f"{_fmt(worst.load_index / least.load_index)} times the lightest stage's (estimate)",
        "give this stage the largest module or the widest faces, and size it by gear rating "
        "if it bears load"))
