"""Play and errors of hand-made wheels: what workshop tolerances do to each pointer.

Every mesh passes motion through its pitch circles: ``z1 t1 ∓ z2 t2 = ε`` (turns; ``ε`` a
displacement along the pitch line in *pitches*). A perfect mesh has ``ε = 0``; a hand-made one
does not:

* **backlash** ``j`` (mm) lets ``ε`` move freely over ``j / (π m)`` pitches when the drive
  reverses — dead play;
* an **eccentric** wheel (its pitch circle ``e`` mm off its arbor's axis) displaces its pitch
  point by ``r asin((e / r) sin φ) ≈ e sin φ`` as it turns (``φ`` its angle from the line of
  centres): a once-per-turn error of ``e / (π m)`` pitches;
* **tooth division** errors place each tooth ``δ`` pitches off its place: ``ε`` jumps from
  tooth to tooth (standard deviation ``σ`` pitches).

The train turns any small ``ε`` into small turns of every arbor, linearly: solving the same
constraints as the kinematics with ``ε`` on the right gives each arbor's *sensitivity* to each
mesh (turns per pitch). A pointer's dead play is the sum of every mesh's backlash times its
sensitivity (all the slack taken up at once), its once-per-turn errors are each eccentric
wheel's amplitude carried the same way, with the period of that wheel's turning in its mesh,
and the Monte Carlo builds many trains with random eccentricities (magnitude uniform up to the
tolerance, random direction) and random division errors, and reads every pointer at random
times over a span. For independent errors the spread is the root-sum-square
``σ² = Σ (360 S)² (σ_div² + e² / (6 (π m)²))`` degrees², which the report gives beside it.

Simplifications (said in the report): a pin-and-slot stage passes small errors on 1:1 (its
speed ratio varies between ``r/(r+e)`` and ``r/(r−e)``, a few per cent in a lunar anomaly
stage; a stage swinging further is named in a note, :func:`slot_notes`); a wheel in two meshes
counts as two independent contributions; tilt and end-shake are judged by rules of thumb. The
figures are design estimates.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .defaults import (  # with their sources
    DEFAULT_DIVISION,
    DEFAULT_ECCENTRICITY_MM,
    DEFAULT_END_SHAKE_MM,
    DEFAULT_HOLE_MM,
    DEFAULT_TILT_DEG,
    FACE_M,
    LEVER_MM,
)
from .errors import ArgumentError
from .figures import figure
from .kinematics import Kinematics
from .periods import JULIAN_YEAR_DAYS
from .readout import pointer_linear
from .toothform import WHEEL_THICKNESS_M, leaf_form
from .train import FRAME, Train

# --- default tolerances (each with where it comes from) --------------------------------------

# The default tolerances (DEFAULT_DIVISION, DEFAULT_ECCENTRICITY_MM, DEFAULT_END_SHAKE_MM,
# DEFAULT_TILT_DEG) and LEVER_MM live in engine/defaults.py with their sources.

INVOLUTE_BACKLASH_M = 0.1
"""Backlash of an involute mesh as cut by hand or laser, in modules, at its drawn centre
distance (common practice, no source). Cycloidal meshes take the backlash their tooth
proportions leave (π − wheel tooth − pinion leaf, on the pitch circle)."""

MAX_BACKLASH_PITCH = 0.4
"""The most backlash taken as a workshop tolerance, as a fraction of the pitch π m: standard
cycloidal clock proportions leave 0.22 of the pitch (a 1.41 m wheel tooth against a 1.05 m
leaf), involute gearing a few hundredths; at 0.4 the mating tooth or leaf would be about half
its standard thickness, too thin to carry or wear (common practice, no source). Half a pitch
(1.5 mm at module 0.5 was once taken) is refused; a whole pitch is out of mesh."""

DEPTH_RULE_M = 0.25
"""Rule of thumb: a mesh whose centre distance can open by more than a quarter of the module
runs out of depth (the tips ride on the tips; common practice, no source)."""

HOLE_PRESSURE_ANGLE_DEG = 20.0
"""A mesh's centre distance opened by ``Δa`` widens its backlash on the pitch circle by
``2 Δa tan α`` (standard gear geometry, for the involute at its pressure angle α = 20°). The
cycloidal form's pressure angle runs from 0 at the pitch point to about this near the end of
contact, so the same rule at 20° is taken for it too: a rough estimate (common practice, no
source)."""

END_SHAKE_RULE = 0.5
"""Rule of thumb: end-shake more than half the face width lets a wheel ride off its pinion's
leaves (common practice, no source)."""

CHUNK_CELLS = 2_000_000
"""The Monte Carlo works through the builds in chunks of at most this many mesh readings
(16 MB of slips at a time)."""

CAVEAT = ("These figures are design estimates from a simple model of hand-made wheels (small "
          "independent errors, rules of thumb for depth); measure the parts you make, and "
          "follow proper engineering practice and local rules for anything that bears load "
          "or is shown to the public.")


@dataclass(frozen=True)
class Tolerances:
    """Workshop tolerances. ``backlash_mm`` None: from the tooth form (see
    :data:`INVOLUTE_BACKLASH_M`)."""

    backlash_mm: float | None = None
    division: float = DEFAULT_DIVISION
    eccentricity_mm: float = DEFAULT_ECCENTRICITY_MM
    end_shake_mm: float = DEFAULT_END_SHAKE_MM
    tilt_deg: float = DEFAULT_TILT_DEG
    lever_mm: float = LEVER_MM
    form: str | None = None  # override of the train's default tooth form
    hole_mm: float = DEFAULT_HOLE_MM  # largest error of a pivot hole's place in its plate

    @classmethod
    def of(cls, train: Train, **given) -> Tolerances:
        """The train's ``[workshop]`` tolerances, then the defaults; ``given`` (not None) win."""
        shop = train.workshop
        base = cls(backlash_mm=shop.backlash_mm,
                   division=DEFAULT_DIVISION if shop.division is None else shop.division,
                   eccentricity_mm=DEFAULT_ECCENTRICITY_MM if shop.eccentricity_mm is None
                   else shop.eccentricity_mm,
                   end_shake_mm=DEFAULT_END_SHAKE_MM if shop.end_shake_mm is None
                   else shop.end_shake_mm,
                   tilt_deg=DEFAULT_TILT_DEG if shop.tilt_deg is None else shop.tilt_deg,
                   hole_mm=DEFAULT_HOLE_MM if shop.hole_mm is None else shop.hole_mm)
        given = {k: v for k, v in given.items() if v is not None}
        for key, value in given.items():
            lo, hi = _TOLERANCE_RANGES.get(key, (None, None))
            if lo is None:
                continue
            if isinstance(value, bool) or not isinstance(value, int | float) \
                    or not lo <= value <= hi:
                raise ArgumentError(f"{key}: must be a number from {lo:g} to {hi:g}, "
                                    f"got {value!r}")
        return replace(base, **given)


#: what each tolerance may be (as ``wheelwork play`` takes them; lever: above zero)
_TOLERANCE_RANGES = {"backlash_mm": (0, 100), "division": (0, 0.4999),
                     "eccentricity_mm": (0, 100), "end_shake_mm": (0, 100),
                     "tilt_deg": (0, 45), "lever_mm": (1e-9, 10_000), "hole_mm": (0, 100)}


@dataclass(frozen=True)
class MeshPlay:
    """One mesh's tolerances in pitches, and how each pointer feels it."""

    index: int
    label: str
    module_mm: float | None
    form: str
    backlash_pitch: float
    backlash_mm: float | None
    sensitivity: dict[str, float]  # pointer -> pointer degrees per pitch of slip in this mesh
    hole_open_mm: float = 0.0  # how far two pivot holes off their places can part its centres
    hole_backlash_pitch: float = 0.0  # the backlash that opening adds, in pitches


@dataclass(frozen=True)
class Periodic:
    """A once-per-turn error of an eccentric wheel at one pointer."""

    wheel: str
    mesh: str
    amplitude_deg: float
    period_days: float | None  # None: the wheel stands still in its mesh


@dataclass(frozen=True)
class Contribution:
    mesh: str
    deg: float


@dataclass(frozen=True)
class PointerPlay:
    pointer: str
    shows: str
    dead_play_deg: float
    contributions: tuple[Contribution, ...]  # largest first
    periodic: tuple[Periodic, ...]  # largest first
    rss_deg: float  # analytic standard deviation of the running error
    mc_std_deg: float
    mc_std_sigma_deg: float  # sampling error of mc_std_deg
    mc_p95_deg: float  # 95 % of readings are within this of the perfect train
    mc_max_deg: float
    mc_mean_deg: float
    inequality_deg: float | None  # amplitude of the pin-and-slot effect at this pointer
    drift_deg_per_century: float
    verdict: str
    dead_play_holes_deg: float = 0.0  # more dead play with every mesh's centres parted by
    # its pivot holes at their tolerance (hole_open_mm), the widest the holes make it
    per_turn: float = 1.0  # what it shows per turn of its arbor: the figures above are in
    # degrees of what it shows; its arbor (a 223-month ring's) moves per_turn times less


@dataclass(frozen=True)
class Flag:
    item: str
    message: str
    fix: str


@dataclass
class PlayReport:
    train: str
    source: str
    tolerances: Tolerances
    years: float
    builds: int
    samples: int
    seed: int
    meshes: list[MeshPlay] = field(default_factory=list)
    pointers: list[PointerPlay] = field(default_factory=list)
    flags: list[Flag] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    caveat: str = CAVEAT


# --- the linear model ----------------------------------------------------------------------------

def sensitivities(train: Train, kin: Kinematics) -> tuple[list[str], np.ndarray]:
    """Each arbor's turns (relative to the frame) per pitch of slip in each mesh: an
    (arbors × meshes) array, rows in ``train.arbors`` order, columns in mesh order."""
    names = list(train.arbors)
    col = {n: i for i, n in enumerate(names)}
    rows, rhs = [], []
    n_mesh = len(train.meshes)

    def add(coeffs: dict[str, float], mesh: int | None = None):
        row = np.zeros(len(names))
        for k, v in coeffs.items():
            if k != FRAME:
                row[col[k]] += v
        e = np.zeros(n_mesh)
        if mesh is not None:
            e[mesh] = 1.0
        rows.append(row)
        rhs.append(e)

    add({train.crank.arbor: 1.0})
    for a in train.arbors.values():
        if a.fixed:
            add({a.name: 1.0, a.mount: -1.0})
    for ps in train.pin_slots.values():  # small errors pass a pin-and-slot 1:1
        add({ps.slot_arbor: 1.0, ps.followed_arbor: -1.0})
    for f in kin.mesh_frames:
        m = train.meshes[f.mesh_index - 1]
        z1, z2 = train.wheels[m.driver].teeth, train.wheels[m.driven].teeth
        s = f.sign
        coeffs: dict[str, float] = {}
        for k, v in ((f.arbor1, z1), (f.arbor2, -s * z2), (f.reference, -z1 + s * z2)):
            coeffs[k] = coeffs.get(k, 0.0) + v
        add(coeffs, f.mesh_index - 1)
    a = np.array(rows)
    b = np.array(rhs)
    sens, *_ = np.linalg.lstsq(a, b, rcond=None)
    # The solve's rounding (about 1e-16 of the largest) would give an arbor no mesh reaches,
    # the crank's own, a trace of every mesh's play; a real sensitivity (1/teeth times the
    # ratio down the train) stays many orders of magnitude above this.
    sens[np.abs(sens) < 1e-10 * np.abs(sens).max(initial=0.0)] = 0.0
    return names, sens


def pointer_sensitivity(train: Train, kin: Kinematics) -> dict[str, np.ndarray]:
    """Each pointer's degrees per pitch of slip in each mesh (as the dial reads)."""
    names, sens = sensitivities(train, kin)
    row = {n: sens[i] for i, n in enumerate(names)}
    zero = np.zeros(len(train.meshes))
    out = {}
    for p in train.pointers.values():
        v = row[p.arbor] - (row[p.relative_to] if p.relative_to else zero)
        k = float(p.per_turn) * (-1.0 if p.reversed else 1.0)
        out[p.name] = 360.0 * k * v
    return out


def _forms(train: Train, form: str | None) -> dict[str, str]:
    return {w: train.workshop.form_of(w, form) for w in train.wheels}


def backlash_fault(train: Train, backlash_mm: float | None) -> str | None:
    """What is wrong with a backlash of ``backlash_mm`` in every mesh, or None: backlash is
    the space between teeth less the mating tooth, so it is always less than the pitch
    (π m; common practice, no source), and more than :data:`MAX_BACKLASH_PITCH` of it leaves
    teeth too thin; the mesh with a module it fits worst (the finest; the first of equals)."""
    if backlash_mm is None:
        return None
    meshes = [m for m in train.meshes if m.module_mm is not None]
    if not meshes:
        return None
    m = min(meshes, key=lambda m: m.module_mm)
    pitch = math.pi * m.module_mm
    if backlash_mm < MAX_BACKLASH_PITCH * pitch:
        return None
    leaves = (math.pi - WHEEL_THICKNESS_M - leaf_form(8).thickness_m) * m.module_mm
    where = f"(module {figure(m.module_mm, 4)} mm, pitch {figure(pitch, 4)} mm)"
    usual = (f"(cycloidal clock teeth leave about {figure(leaves)} mm at this module against 8 "
             "leaves)")
    given = figure(backlash_mm, 4)
    if backlash_mm >= pitch:
        return (f"{given} mm is a whole pitch or more of {m.label} {where}: teeth with "
                f"that much play are out of mesh; backlash is a small part of the pitch {usual}")
    part = math.floor(backlash_mm / pitch * 100 + 1e-9) / 100  # 0.999 of a pitch: not "1.00"
    return (f"{given} mm is {part:.2f} of the pitch of {m.label} "
            f"{where}, more than {MAX_BACKLASH_PITCH:g} of a pitch: teeth that thin are too "
            f"weak to carry {usual}")


def _eccentricity_mm(train: Train, w: str, tol) -> float:
    """Wheel ``w``'s eccentricity: its own in ``[workshop.wheels]``, else the tolerances'."""
    own = train.workshop.wheel(w).eccentricity_mm
    return tol.eccentricity_mm if own is None else own


def backlash_finding(train: Train):
    """The check's error for the file's ``[workshop] backlash_mm`` past what teeth can have
    (:func:`backlash_fault`), or None."""
    from .checks import Finding

    fault = backlash_fault(train, train.workshop.backlash_mm)
    if fault is None:
        return None
    finest = min(m.module_mm for m in train.meshes if m.module_mm is not None)
    most = MAX_BACKLASH_PITCH * math.pi * finest
    return Finding("error", "[workshop] backlash_mm", fault,
                   f"give the backlash measured or allowed, under {figure(most)} mm "
                   f"({MAX_BACKLASH_PITCH:g} of the pitch at module {figure(finest, 4)})")


def mesh_backlash_pitch(train: Train, mesh, forms: dict[str, str],
                        backlash_mm: float | None) -> float:
    """A mesh's backlash in pitches: the given millimetres, or what its tooth form leaves."""
    if backlash_mm is not None and mesh.module_mm is not None:
        return backlash_mm / (math.pi * mesh.module_mm)
    z1, z2 = train.wheels[mesh.driver].teeth, train.wheels[mesh.driven].teeth
    if mesh.internal or forms[mesh.driver] == "involute" or forms[mesh.driven] == "involute":
        return INVOLUTE_BACKLASH_M / math.pi
    small = min(z1, z2)
    thick = WHEEL_THICKNESS_M + (leaf_form(small).thickness_m if z1 != z2 else
                                 WHEEL_THICKNESS_M)
    return (math.pi - thick) / math.pi


def _rate_in_mesh(train: Train, kin: Kinematics, wheel: str, reference: str) -> float:
    arbor = train.wheels[wheel].arbor
    return float(kin.rate(arbor, None if reference == FRAME else reference))


def _effects(train: Train, kin: Kinematics, years: float) -> dict[str, float | None]:
    """Each pointer's pin-and-slot inequality: half its full swing over the span (degrees),
    from the engine's own slot geometry; None where no stage moves the pointer."""
    out: dict[str, float | None] = {}
    if not train.pin_slots:
        return {p: None for p in train.pointers}
    days = years * JULIAN_YEAR_DAYS
    turns = np.linspace(0.0, days / float(train.crank.days_per_turn), 200_001)
    lags = kin.slot_lags_turns(turns)
    for p in train.pointers.values():
        lin = pointer_linear(kin, p)
        if not any(lin.slots):
            out[p.name] = None
            continue
        wave = sum(float(w) * lags[name] for name, w in zip(kin.slot_names, lin.slots,
                                                             strict=True) if w)
        out[p.name] = 180.0 * float(np.max(wave) - np.min(wave))
    return out


# --- the report ----------------------------------------------------------------------------------

def play(train: Train, kin: Kinematics, tol: Tolerances | None = None, *, years: float = 100.0,
         builds: int = 400, samples: int = 256, seed: int = 1,
         frame: str | None = None) -> PlayReport:
    """Dead play, once-per-turn errors and a Monte Carlo of ``builds`` trains read at
    ``samples`` random times over ``years`` from the epoch, for every pointer."""
    from .ratios import pointer_ratios

    if isinstance(years, bool) or not isinstance(years, int | float) or \
            not 0 < years <= 100_000:
        raise ArgumentError(f"years: must be above 0 and at most 100,000, got {years!r}")
    for what, n in (("builds", builds), ("samples", samples)):
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            raise ArgumentError(f"{what}: must be a whole number of at least 1, got {n!r}")
    tol = tol or Tolerances.of(train)
    fault = backlash_fault(train, tol.backlash_mm)
    if fault:
        raise ArgumentError(f"backlash_mm: {fault}")
    report = PlayReport(train.name, train.source, tol, years, builds, samples, seed)
    forms = _forms(train, tol.form)
    psens = pointer_sensitivity(train, kin)
    frames = {f.mesh_index: f for f in kin.mesh_frames}
    pointers = list(train.pointers)
    no_module = [m.label for m in train.meshes if m.module_mm is None]
    if no_module:
        report.notes.append("no module_mm, so no eccentricity figures and backlash from the "
                            "tooth form: " + ", ".join(no_module))
    opened = 2.0 * tol.hole_mm  # two holes, each off by up to hole_mm along the centres
    widen = 2.0 * opened * math.tan(math.radians(HOLE_PRESSURE_ANGLE_DEG))
    for m in train.meshes:
        b = mesh_backlash_pitch(train, m, forms, tol.backlash_mm)
        report.meshes.append(MeshPlay(
            m.index, m.label, m.module_mm, forms[m.driver] if not m.internal else "involute",
            b, None if m.module_mm is None else b * math.pi * m.module_mm,
            {p: float(psens[p][m.index - 1]) for p in pointers},
            0.0 if m.module_mm is None else opened,
            0.0 if m.module_mm is None else widen / (math.pi * m.module_mm)))
    # per (wheel, mesh): eccentricity amplitude and division sigma in pitches, period
    terms = []
    periodic_of: dict[str, list[Periodic]] = {}
    for m in train.meshes:
        f = frames[m.index]
        for w in (m.driver, m.driven):
            own = train.workshop.wheel(w)
            ecc = _eccentricity_mm(train, w, tol)
            div = own.division if own.division is not None else tol.division
            amp = 0.0 if m.module_mm is None else ecc / (math.pi * m.module_mm)
            rate = _rate_in_mesh(train, kin, w, f.reference)
            period = None if rate == 0 else abs(float(train.crank.days_per_turn) / rate)
            terms.append((m, w, amp, div, rate))
            for p in pointers:
                s = abs(psens[p][m.index - 1])
                if amp and s:
                    periodic_of.setdefault(p, []).append(
                        Periodic(w, m.label, s * amp, period))
    effects = _effects(train, kin, min(years, 1000.0))
    drift = {r.pointer: r.drift_deg_per_century for r in pointer_ratios(train, kin, frame)}
    mc = _monte_carlo(train, terms, psens, years, builds, samples, seed)
    for p in pointers:
        s = np.abs(psens[p])
        contrib = sorted((Contribution(mp.label, float(s[i] * mp.backlash_pitch))
                          for i, mp in enumerate(report.meshes)), key=lambda c: -c.deg)
        dead = float(sum(c.deg for c in contrib))
        holes = float(sum(s[i] * mp.hole_backlash_pitch for i, mp in enumerate(report.meshes)))
        var = sum((psens[p][m.index - 1]) ** 2 * (div ** 2 + amp ** 2 / 6.0)
                  for m, _w, amp, div, _r in terms)
        std, sig, p95, mx, mean = mc[p]
        periodic = tuple(sorted(periodic_of.get(p, []), key=lambda x: -x.amplitude_deg))
        report.pointers.append(PointerPlay(
            p, train.pointers[p].shows, dead, tuple(c for c in contrib if c.deg > 0),
            periodic, math.sqrt(var), std, sig, p95, mx, mean, effects.get(p), drift[p],
            _verdict(p95, dead, effects.get(p), drift[p], years), holes,
            float(train.pointers[p].per_turn)))
    report.flags = depth_flags(train, tol, forms)
    report.notes.extend(slot_notes(train, kin))
    return report


SLOT_SPEED_NOTE = 1.25
"""A pin-and-slot stage whose slot arbor runs up to more than this many times its follower's
speed (or backwards) is said to carry errors on larger than the model's 1:1."""


def slot_notes(train: Train, kin: Kinematics) -> list[str]:
    """The model passes small errors through a pin-and-slot 1:1; a stage whose speed ratio
    swings far from 1 (up to ``r / (r − e)``) carries them on that much larger at its fastest:
    one note per such stage, with its range (the check's figures)."""
    from .checks import pin_slot_checks

    out = []
    for c in pin_slot_checks(train, 1.0, [], kin):
        lo, hi = c.speed_factor_min, c.speed_factor_max
        most = max(abs(lo), abs(hi))
        if most > SLOT_SPEED_NOTE or lo < 0:
            back = "; it runs backwards for part of the turn" if lo < 0 else ""
            out.append(f"[pin_slots.{c.name}]: turns its slot arbor at {figure(lo, 4)} to "
                       f"{figure(hi, 4)} times its follower's speed{back}: errors of the wheels "
                       f"before it reach the pointers after it up to {figure(most, 3)} times "
                       "as large at its fastest, where these figures pass them on 1:1")
    return out


def _verdict(p95: float, dead: float, effect: float | None, drift: float, years: float) -> str:
    err = max(p95, dead / 2)
    if effect:
        ratio = effect / err if err else math.inf
        if ratio >= 10:
            return (f"the ±{figure(effect)}° inequality stands {figure(ratio)} times above the "
                    "workshop's errors: it survives")
        if ratio >= 2:
            return (f"the ±{figure(effect)}° inequality is {figure(ratio)} times the workshop's errors: "
                    "visible, but blurred")
        return (f"the ±{figure(effect)}° inequality is lost in the workshop's errors "
                f"(±{figure(err)}°): cut the largest contributors more carefully")
    span_drift = abs(drift) * years / 100.0
    if err == 0:  # a pointer on the crank's own arbor, or behind no mesh that can err
        return ("no mesh between the crank and this pointer can err: the workshop adds "
                f"nothing, and the ratio drifts {figure(span_drift)}° over "
                f"{figure(years, 6)} years")
    if span_drift > err:
        return (f"the ratio's drift ({figure(span_drift)}° over {figure(years, 6)} years) "
                "outgrows the "
                f"workshop's errors (±{figure(err)}°)")
    return (f"the workshop's errors (±{figure(err)}°) exceed the ratio's drift over "
            f"{figure(years, 6)} "
            f"years ({figure(span_drift)}°): the cutting, not the tooth counts, limits this pointer")


def _monte_carlo(train: Train, terms, psens, years: float, builds: int, samples: int,
                 seed: int) -> dict[str, tuple[float, float, float, float, float]]:
    """Pointer errors of ``builds`` random trains at ``samples`` random times: (std, its
    sampling error, 95th percentile of |error|, max |error|, mean) per pointer, degrees."""
    rng = np.random.default_rng(seed)
    days = years * JULIAN_YEAR_DAYS
    t_days = np.sort(rng.uniform(0.0, days, samples))
    crank = t_days / float(train.crank.days_per_turn)
    # every random draw first, term by term (the order fixes what a seed gives)
    draws = []
    for _m, w, amp, div, _rate in terms:
        z = train.wheels[w].teeth
        mag = amp * rng.uniform(0.0, 1.0, builds) if amp else None
        phase = rng.uniform(0.0, 2 * np.pi, builds) if amp else None
        teeth = rng.normal(0.0, div, (builds, z)) if div else None
        draws.append((mag, phase, teeth))
    names = list(psens)
    meshes = sorted({m.index for m, *_ in terms})
    col = {i: k for k, i in enumerate(meshes)}
    sens = np.array([[psens[p][i - 1] for i in meshes] for p in names])  # pointers × meshes
    err = np.empty((len(names), builds, samples))
    chunk = max(1, CHUNK_CELLS // max(1, len(meshes) * samples))
    for lo in range(0, builds, chunk):
        hi = min(builds, lo + chunk)
        eps = np.zeros((len(meshes), hi - lo, samples))  # slip of each mesh, in pitches
        # eccentricity: mag sin(θ + φ) = (mag cos φ) sin θ + (mag sin φ) cos θ, so each
        # mesh's once-per-turn errors are one matrix product (builds × 2k) @ (2k × times)
        left: dict[int, list] = {}
        right: dict[int, list] = {}
        for (m, w, amp, div, rate), (mag, phase, teeth) in zip(terms, draws, strict=True):
            turns = rate * crank  # the wheel's turns in its mesh
            if amp:
                k = col[m.index]
                left.setdefault(k, []).extend([mag[lo:hi] * np.cos(phase[lo:hi]),
                                               mag[lo:hi] * np.sin(phase[lo:hi])])
                right.setdefault(k, []).extend([np.sin(2 * np.pi * turns),
                                                np.cos(2 * np.pi * turns)])
            if div:
                z = train.wheels[w].teeth
                index = np.floor(np.mod(turns, 1.0) * z).astype(np.int64) % z
                eps[col[m.index]] += teeth[lo:hi][:, index]
        for k, cols in left.items():
            eps[k] += np.column_stack(cols) @ np.vstack(right[k])
        # pointers × (builds, samples) = sensitivities @ slips: one matrix product
        err[:, lo:hi, :] = np.tensordot(sens, eps, axes=1)
    err = dict(zip(names, err, strict=True))
    out = {}
    for p, e in err.items():
        std = float(np.std(e))
        # builds are independent; readings within a build are not: the sampling error of the
        # spread comes from the spread of the builds' own mean squares
        per_build = np.mean(e ** 2, axis=1)
        sig_var = float(np.std(per_build) / math.sqrt(builds))
        sig = sig_var / (2 * std) if std else 0.0
        a = np.abs(e)
        out[p] = (std, sig, float(np.quantile(a, 0.95)), float(a.max()), float(np.mean(e)))
    return out


def depth_flags(train: Train, tol: Tolerances, forms: dict[str, str]) -> list[Flag]:
    """Meshes that tilt or end-shake can take out of depth (rules of thumb, labelled)."""
    flags = []
    open_mm = 2.0 * tol.lever_mm * math.tan(math.radians(tol.tilt_deg))
    for m in train.meshes:
        if m.module_mm is None:
            continue
        limit = DEPTH_RULE_M * m.module_mm
        if open_mm > limit:
            flags.append(Flag(m.label, f"a tilt of {figure(tol.tilt_deg, 6)}° on both arbors, "
                              f"{figure(tol.lever_mm, 6)} mm from the pivots, can open the centre "
                              f"distance by {open_mm:.3f} mm, more than a quarter module "
                              f"({limit:.3f} mm): out of depth (rule of thumb)",
                              "bush the pivot holes closer, keep the wheels near the plates, "
                              "or use a larger module here"))
        # two pivot holes off their places part (or close) the centres by up to twice it
        if 2.0 * tol.hole_mm > limit:
            flags.append(Flag(m.label, f"pivot holes up to {figure(tol.hole_mm, 4)} mm off "
                              "their places can part the centres by up to "
                              f"{figure(2.0 * tol.hole_mm, 4)} mm, more than a quarter module "
                              f"({limit:.3f} mm): out of depth (rule of thumb)",
                              "mark out and drill the plate more closely (a depthing tool, or "
                              "the mill's handwheels), or use a larger module here"))
        # an eccentric wheel swings the centre distance by its eccentricity once a turn
        # (both wheels of the mesh at worst together): the same rule
        ecc = {w: _eccentricity_mm(train, w, tol) for w in (m.driver, m.driven)}
        swing = sum(ecc.values())
        if swing > limit:
            each = " and ".join(f"'{w}' {figure(e, 4)} mm" for w, e in ecc.items())
            flags.append(Flag(m.label, f"eccentricities of up to {each} swing the centre "
                              f"distance by up to {figure(swing, 4)} mm once a turn, more than "
                              f"a quarter module ({limit:.3f} mm): out of depth on part of the "
                              "turn (rule of thumb)",
                              "true the wheels on their arbors (turn the blank's teeth on its "
                              "own arbor), or use a larger module here"))
        face = m.face_width_mm
        given = (f"assumed ({figure(face, 3)} mm = {FACE_M:g} modules)" if m.face_mm is None
                 else f"({figure(face, 4)} mm, face_mm)")
        if tol.end_shake_mm > END_SHAKE_RULE * face:
            flags.append(Flag(m.label, f"end-shake of {figure(tol.end_shake_mm, 6)} mm is more "
                              "than "
                              f"half the face width {given}: the wheel can ride off its "
                              "pinion (rule of thumb)",
                              "reduce the end-shake, or make the pinion's leaves longer than "
                              "the wheel's face by twice the end-shake"))
    return flags


def dead_play_findings(train: Train, kin: Kinematics, form: str | None = None) -> list:
    """One note per pointer: its dead play at the default tolerances and the mesh that gives
    most of it (for the interface's warnings panel; cheap: no Monte Carlo)."""
    from .checks import Finding

    forms = _forms(train, form)
    tol = Tolerances.of(train)
    if backlash_fault(train, tol.backlash_mm):  # the check's error says it (backlash_finding)
        return []
    psens = pointer_sensitivity(train, kin)
    backlash = [mesh_backlash_pitch(train, m, forms, tol.backlash_mm) for m in train.meshes]
    out = []
    for p, s in psens.items():
        parts = np.abs(s) * np.array(backlash)
        if not len(parts) or parts.max() <= 0:
            continue
        i = int(np.argmax(parts))
        total = float(parts.sum())
        out.append(Finding(
            "note", f"[pointers.{p}]", f"dead play about {figure(total, 3)}° (design estimate), "
            f"{100 * parts[i] / total:.0f} % of it from {train.meshes[i].label}",
            "cut and depth that mesh most carefully; wheelwork play gives the whole picture"))
    return out
