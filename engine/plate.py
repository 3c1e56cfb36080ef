"""Where the holes go: each axis placed so that every centre distance the meshes demand holds.

One :class:`Plate` per mount — the frame, and each carrier that holds arbors of its own. The
holes of a plate are its *axes* (arbors sharing one axis share one hole). Each mesh with a
module ties two axes at the centre distance ``a = m (z1 ± z2) / 2``; a pin-and-slot stage ties
its two axes at ``offset_mm`` in the direction ``offset_deg``. Positions the file fixes
(``at_mm``; a carrier's own axis is the centre of its plate) are kept; the others are placed one
at a time, each at the position (on the circle its distance allows, or where two circles
cross) that keeps its wheels clear of other arbors and keeps the plate small. When no position
can satisfy every distance, :func:`place_plates` raises :class:`PlacementError` saying which
distances disagree and by how much.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass, field

import numpy as np

from .checks import TOLERANCE_MM, centre_distance_mm, split_plates
from .errors import PlacementError
from .figures import figure
from .figures import fixed as places  # 'fixed' names the positions the file fixes
from .kinematics import Kinematics, axis_groups
from .train import FRAME, Train

EXACT_MM = 1e-6
"""Distances computed for placement agree to a nanometre; this is the test for 'equal'."""

FIXED_TOLERANCE_MM = TOLERANCE_MM
"""Positions the file fixes may differ from the centre distance by as much as the checks allow;
the plate keeps them as written and says by how much they are off."""

CLEARANCE_MM = 0.5
"""A wheel's tip circle should clear another axis's pivot by this much (our rule)."""

ANGLE_STEPS = 120

PLATE_MARGIN_MM = 6.0
"""Plate beyond its outermost pivot holes."""
PLATE_CLEAR_MM = 2.0
"""Plate beyond the tips of the wheels it carries (so the plate covers the wheelwork)."""

BRASS_G_PER_MM3 = 8.47e-3
"""Density of free-cutting brass (CZ121), 8.47 g/cm³ (azom.com, "Brass Alloys - Brass CZ121",
article 2822; shree-extrusion.com, CZ121Pb3: specific gravity 8.47): what plates and wheels
are commonly cut from. Read by the carrier balance estimate only."""

BALANCE_NOTE_GMM = 1.0
"""A carrier whose plate (per mm of its thickness) or wheels are out of balance by at least
this many gram-millimetres is pointed out (our rule, no source: a gram a millimetre off the
axis is about what a hand-finished part carries anyway)."""


@dataclass(frozen=True)
class Tie:
    """One distance the plate must keep between two axes."""

    label: str  # "mesh 3 (a–b)" or "[pin_slots.x]"
    axis1: str
    axis2: str
    distance_mm: float
    direction_deg: float | None = None  # pin-and-slot: from axis1 to axis2


@dataclass(frozen=True)
class Hole:
    axis: str  # a label: the arbors on this axis joined by "/"
    arbors: tuple[str, ...]
    x_mm: float
    y_mm: float
    fixed: bool  # the file (or the carrier's own axis) fixes it
    reach_mm: float  # largest tip radius of the wheels on this axis in this plate


@dataclass
class Plate:
    mount: str
    holes: dict[str, Hole] = field(default_factory=dict)
    ties: list[Tie] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    # axes not drawn: their place on this plate hangs on meshes without a module (label: the
    # labels of those meshes); a hole drawn there would be a guess, drilled as if measured
    withheld: dict[str, tuple[str, ...]] = field(default_factory=dict)
    # holes placed apart: groups of axes (labels) no measure ties to the rest of the plate, a
    # lone axis as a group of one; where they stand from the rest is the placement's choice
    apart: list[tuple[str, ...]] = field(default_factory=list)

    @property
    def name(self) -> str:
        return "frame" if self.mount == FRAME else self.mount

    def distance_mm(self, tie: Tie) -> float:
        a, b = self.holes[tie.axis1], self.holes[tie.axis2]
        return math.hypot(a.x_mm - b.x_mm, a.y_mm - b.y_mm)


def _axis_label(train: Train, groups: dict[str, str], root: str) -> str:
    return "/".join(n for n in train.arbors if groups[n] == root)


def place_plates(train: Train, kin: Kinematics, reach_mm: dict[str, float]) -> list[Plate]:
    """Place every plate's holes. ``reach_mm`` is each wheel's tip radius (wheels without a
    module are left out). Raises :class:`PlacementError` when no placement exists."""
    groups = axis_groups(train, kin)
    label = {g: _axis_label(train, groups, g) for g in set(groups.values())}
    # which plate each axis belongs to: the mount of its arbors (a sun arbor on the frame that
    # is coaxial with a carrier is the carrier plate's centre, and also a hole in the frame)
    plates: dict[str, Plate] = {}
    members: dict[str, dict[str, set[str]]] = {}
    for a in train.arbors.values():
        members.setdefault(a.mount, {}).setdefault(groups[a.name], set()).add(a.name)
    carriers = sorted({a.mount for a in train.arbors.values() if a.mount != FRAME},
                      key=list(train.arbors).index)
    for mount in [FRAME, *carriers]:
        axes = dict(members.get(mount, {}))
        if mount != FRAME:  # the carrier's own axis, the centre of its plate
            axes.setdefault(groups[mount], set()).add(mount)
        plates[mount] = Plate(mount)
        ties = _ties(train, kin, groups, mount)
        for t in ties:
            for ax in (t.axis1, t.axis2):
                axes.setdefault(ax, set())
        reach = {}
        for ax in axes:
            arbors = [n for n in train.arbors if groups[n] == ax]
            r = [reach_mm[w] for n in arbors for w in train.arbors[n].wheels if w in reach_mm]
            reach[ax] = max(r, default=0.0)
        fixed = _fixed(train, groups, mount, axes)
        plate = plates[mount]
        withheld = _unmeasured(train, kin, groups, mount, axes, ties, fixed)
        if withheld:
            plate.withheld = {label[ax]: tuple(m) for ax, m in withheld.items()}
            plate.notes.append(withheld_note(plate.withheld))
            axes = {ax: v for ax, v in axes.items() if ax not in withheld}
            ties = [t for t in ties if t.axis1 in axes and t.axis2 in axes]
        pos = _solve(train, plate, axes, ties, fixed, reach, label) if axes else {}
        plate.ties = ties
        for ax in axes:
            arbors = tuple(n for n in train.arbors if groups[n] == ax)
            plate.holes[ax] = Hole(label[ax], arbors, pos[ax][0], pos[ax][1], ax in fixed,
                                   reach[ax])
        _over_pivots(train, plate, reach_mm)
    return [p for p in plates.values() if p.holes or p.withheld]


def withheld_note(withheld: dict[str, tuple[str, ...]], whole_plate: str = "") -> str:
    """One line for holes not drawn (``withheld``: each axis's label and the meshes without a
    module its place hangs on); with ``whole_plate`` (``the frame``), for a plate with no
    other hole, so not drawn at all."""
    order = {}
    for ms in withheld.values():
        for m in ms:
            order.setdefault(m, int(m.split()[1]) if m.split()[1].isdigit() else 0)
    meshes = sorted(order, key=order.get)
    axes = ", ".join(withheld)
    many = len(meshes) > 1
    head = (f"no plate of {whole_plate} drawn: the places of its holes ({axes})"
            if whole_plate else f"hole{'s' if len(withheld) > 1 else ''} not drawn, {axes}: "
            f"{'their places' if len(withheld) > 1 else 'its place'}")
    return (f"{head} hang{'s' if not whole_plate and len(withheld) == 1 else ''} on "
            f"{', '.join(meshes)}, which {'have' if many else 'has'} no module_mm and so no "
            f"centre distance; give {'those meshes' if many else 'it'} a module_mm, or place "
            f"the axes {'they join' if many else 'it joins'} with at_mm, to have them drawn")


def on_plate(train: Train, plate: Plate, hole: Hole) -> list[str]:
    """The wheels turning over this plate at a hole: on arbors it mounts, or on the carrier."""
    return [w for a in hole.arbors for w in train.arbors[a].wheels
            if train.arbors[a].mount == plate.mount or a == plate.mount]


def outline(train: Train, plate: Plate, reach: dict[str, float], shape: str = "box",
            pitch: dict[str, float] | None = None,
            areas: dict[str, tuple[float, bool]] | None = None):
    """The plate's outline: ``("box", (x0, y0, x1, y1))``, a rectangle covering every hole by
    :data:`PLATE_MARGIN_MM` and every wheel over it (``reach``, its tip radius) by
    :data:`PLATE_CLEAR_MM`; or, with ``shape="disc"`` on a carrier, ``("disc", (0, 0, r))``, a
    disc round the carrier's own axis covering the same (balanced in itself as it turns); or,
    with ``shape="arm"`` on a carrier, ``("arm", Arm)``: arms from its axis to its holes and a
    counterweight that balances arms and carried wheels (:func:`carrier_arm`; ``pitch`` and
    ``areas`` weigh the wheels as :func:`carrier_balance` does)."""
    if shape == "arm" and plate.mount != FRAME:
        return "arm", carrier_arm(train, plate, pitch or {}, areas)
    boxes = [(h.x_mm, h.y_mm, PLATE_MARGIN_MM) for h in plate.holes.values()]
    for h in plate.holes.values():
        for w in on_plate(train, plate, h):
            if w in reach:
                boxes.append((h.x_mm, h.y_mm, reach[w] + PLATE_CLEAR_MM))
    if shape == "disc" and plate.mount != FRAME:
        return "disc", (0.0, 0.0, max(math.hypot(x, y) + r for x, y, r in boxes))
    return "box", (min(x - r for x, _, r in boxes), min(y - r for _, y, r in boxes),
                   max(x + r for x, _, r in boxes), max(y + r for _, y, r in boxes))


# --- a carrier drawn as an arm with a counterweight ------------------------------------------

ARM_HALF_WIDTH_MM = PLATE_MARGIN_MM
"""An arm is twice this wide, and its hub and the pads round its holes this much in radius:
the same metal round a pivot hole as a plate's margin."""

ARM_STEPS = 2880
"""Directions the arm's outline is traced in (every 0.125°), its corners found exactly."""


@dataclass(frozen=True)
class Arm:
    """A carrier's plate cut as arms: from a hub round its axis, one arm to each hole (as wide
    as the hub, round-ended), and, opposite the heavy side, a counterweight arm widening to a
    round end of ``weight_r_mm`` centred at ``weight_at`` (None: nothing to balance).
    ``polygon`` is the outline; ``residual_gmm`` the out-of-balance left (plate and wheels,
    design estimate)."""

    polygon: np.ndarray
    weight_at: tuple[float, float] | None
    weight_r_mm: float
    residual_gmm: float

    @property
    def box(self) -> tuple[float, float, float, float]:
        p = self.polygon
        return (float(p[:, 0].min()), float(p[:, 1].min()), float(p[:, 0].max()),
                float(p[:, 1].max()))


def _disc_exit(u: np.ndarray, c: np.ndarray, r: float) -> np.ndarray:
    """How far from the origin each direction ``u`` (rows) leaves the disc (``c``, ``r``)
    (-inf where it misses): the larger root of |t u - c| = r."""
    b = u @ c
    disc = b * b - (float(c @ c) - r * r)
    out = np.full(len(u), -np.inf)
    ok = disc >= 0
    out[ok] = b[ok] + np.sqrt(disc[ok])
    return out


def _poly_exit(u: np.ndarray, poly: np.ndarray) -> np.ndarray:
    """How far from the origin each direction ``u`` leaves the convex polygon ``poly``."""
    out = np.full(len(u), -np.inf)
    for i in range(len(poly)):
        a, e = poly[i], poly[(i + 1) % len(poly)] - poly[i]
        den = -u[:, 0] * e[1] + u[:, 1] * e[0]
        safe = np.where(np.abs(den) > 1e-15, den, 1.0)
        t = (-a[0] * e[1] + a[1] * e[0]) / safe
        s = (u[:, 0] * a[1] - u[:, 1] * a[0]) / safe
        hit = (np.abs(den) > 1e-15) & (s >= -1e-12) & (s <= 1 + 1e-12) & (t >= 0)
        out = np.where(hit, np.maximum(out, t), out)
    return out


def _cone_pieces(r0: float, c: tuple[float, float], r1: float) -> list:
    """The convex hull of the disc of radius ``r0`` round the origin and the disc (``c``,
    ``r1``), as its two discs and the quadrilateral between their outer tangent points
    (plane geometry: the hull of two discs is those three together)."""
    c = np.asarray(c, dtype=float)
    length = math.hypot(*c)
    if length + r0 <= r1:
        return [("disc", c, r1)]
    if length + r1 <= r0:
        return [("disc", np.zeros(2), r0)]
    d = c / length
    p = np.array([-d[1], d[0]])
    ca = (r0 - r1) / length
    sa = math.sqrt(max(1.0 - ca * ca, 0.0))
    n1, n2 = ca * d + sa * p, ca * d - sa * p
    quad = np.array([r0 * n1, c + r1 * n1, c + r1 * n2, r0 * n2])
    return [("disc", np.zeros(2), r0), ("disc", c, r1), ("poly", quad, None)]


def _star_exit(theta: np.ndarray, pieces: list) -> tuple[np.ndarray, np.ndarray]:
    """The outline's distance from the axis in each direction, and which arm it is on: each
    arm is convex and holds the axis, so their union meets every ray from it in one stretch."""
    u = np.column_stack([np.cos(theta), np.sin(theta)])
    best = np.full(len(theta), -np.inf)
    who = np.full(len(theta), -1)
    for i, arm in enumerate(pieces):
        for kind, a, r in arm:
            t = _disc_exit(u, a, r) if kind == "disc" else _poly_exit(u, a)
            better = t > best
            best, who = np.where(better, t, best), np.where(better, i, who)
    return best, who


def _star_angles(pieces: list) -> np.ndarray:
    """The directions an outline of arms is traced in: every :data:`ARM_STEPS`-th of a turn,
    and the corners where one arm's edge meets another's, found by bisection."""
    theta = np.linspace(0.0, 2 * np.pi, ARM_STEPS, endpoint=False)
    _, who = _star_exit(theta, pieces)
    at = np.nonzero(who != np.roll(who, -1))[0]  # every corner bisected together
    lo, hi, side = theta[at], theta[at] + 2 * np.pi / ARM_STEPS, who[at]
    for _ in range(40):
        mid = (lo + hi) / 2
        same = _star_exit(mid, pieces)[1] == side
        lo, hi = np.where(same, mid, lo), np.where(same, hi, mid)
    return np.sort(np.concatenate([theta, np.mod((lo + hi) / 2, 2 * np.pi)]))


def _star_outline(arms: list[tuple[float, tuple[float, float], float]]) -> np.ndarray:
    """The outline of arms (each the hull of the hub and a round end), traced round the axis,
    with the corners where one arm's edge meets another's found exactly."""
    pieces = [_cone_pieces(*a) for a in arms]
    t = _star_angles(pieces)
    r, _ = _star_exit(t, pieces)
    return np.column_stack([r * np.cos(t), r * np.sin(t)])


def polygon_moment(p: np.ndarray) -> tuple[float, np.ndarray]:
    """A closed polygon's area and first moment about the origin (area times centroid)."""
    x, y = p[:, 0], p[:, 1]
    x2, y2 = np.roll(x, -1), np.roll(y, -1)
    cross = x * y2 - x2 * y
    area = float(cross.sum()) / 2
    return abs(area), np.array([float(((x + x2) * cross).sum()),
                                float(((y + y2) * cross).sum())]) / 6 * np.sign(area)


def carrier_arm(train: Train, plate: Plate, pitch: dict[str, float],
                areas: dict[str, tuple[float, bool]] | None = None) -> Arm:
    """A carrier's plate cut as arms with a counterweight: the arms' own out-of-balance and the
    wheels' (:func:`carrier_balance`'s weighing) are met by a counterweight arm opposite them,
    as far out as the farthest hole, its round end grown until the whole balances (at
    ``[workshop] carrier_plate_mm``, which it needs); a counterweight arm as narrow as the
    others that already outweighs them is shortened instead. Solved by Newton's method on the
    counterweight's direction and size; ``residual_gmm`` says what is left (design
    estimate, brass)."""
    from .errors import TrainError

    thick = train.workshop.carrier_plate_mm
    if thick is None:
        raise TrainError(train.source, "[workshop] carrier_plate_mm", "is needed by "
                         "--carrier-outline arm, which sizes the counterweight for the plate's "
                         "thickness: give the carrier plate's thickness in mm")
    w = ARM_HALF_WIDTH_MM
    arms = [(w, (h.x_mm, h.y_mm), w) for h in plate.holes.values()
            if math.hypot(h.x_mm, h.y_mm) > EXACT_MM]
    if not arms:
        arms = [(w, (0.0, 0.0), w)]
    rho_t = BRASS_G_PER_MM3 * thick * carrier_plates(train, plate.mount)
    wheels = np.array(_wheels_moment(train, plate, pitch, areas)[0])

    def total(extra=None):  # the outline as drawn, traced with every corner found
        poly = _star_outline(arms + ([extra] if extra else []))
        return poly, rho_t * polygon_moment(poly)[1] + wheels

    poly, rest = total()
    if math.hypot(*rest) < BALANCE_NOTE_GMM / 100:
        return Arm(poly, None, 0.0, float(math.hypot(*rest)))
    far = max(math.hypot(*a[1]) for a in arms) or 4 * w
    # while solving, the arms without the counterweight are traced once; a trial counterweight
    # only lifts the outline where it reaches further, in the same directions (its corners
    # with the other arms fall between two of them), so each trial costs one arm's exits
    t = _star_angles([_cone_pieces(*a) for a in arms])
    u = np.column_stack([np.cos(t), np.sin(t)])
    r_arms = np.hypot(poly[:, 0], poly[:, 1])
    bias = np.zeros(2)  # what the quick outline misses of the drawn one, at the last solution

    def weight(phi, size):  # size > 1: the round end's radius over w; else the arm's reach
        r, d = (size * w, far) if size >= 1 else (w, far * size)
        return (w, (d * math.cos(phi), d * math.sin(phi)), r), r, d

    def miss(phi, size):
        r = np.maximum(r_arms, _star_exit(t, [_cone_pieces(*weight(phi, size)[0])])[0])
        return rho_t * polygon_moment(u * r[:, None])[1] + wheels + bias

    phi = math.atan2(-rest[1], -rest[0])
    lo, hi = 0.05, 1.0  # the size along the heavy side's opposite: bisection first
    along = np.array([math.cos(phi), math.sin(phi)])
    if miss(phi, hi) @ along < 0:  # a narrow arm is not enough: grow its round end
        lo, hi = 1.0, 2.0
        while miss(phi, hi) @ along < 0:
            lo, hi = hi, hi * 2
            if hi > 64:
                raise TrainError(train.source, "[workshop] carrier_plate_mm",
                                 f"a counterweight for carrier '{plate.mount}' would be over "
                                 f"{figure(64 * w * 2, 3)} mm across at this thickness: "
                                 "carry its wheels in balance, or cut the plate as a disc")
    for _ in range(40):
        mid = (lo + hi) / 2
        lo, hi = (mid, hi) if miss(phi, mid) @ along < 0 else (lo, mid)
    size = (lo + hi) / 2
    for _ in range(4):  # the drawn outline checks the quick one's answer, which is corrected
        for _ in range(8):  # Newton on direction and size: the arms' overlap at the hub
            m = miss(phi, size)
            if math.hypot(*m) < 1e-7:
                break
            h = 1e-6
            jac = np.column_stack([(miss(phi + h, size) - m) / h,
                                   (miss(phi, size + h) - m) / h])
            try:
                dphi, dsize = np.linalg.solve(jac, -m)
            except np.linalg.LinAlgError:
                break
            phi, size = phi + dphi, max(size + dsize, 0.05)
        extra, r, d = weight(phi, size)
        poly, left = total(extra)
        if math.hypot(*left) < 1e-6:
            break
        bias = bias + left - miss(phi, size)
    return Arm(poly, (d * math.cos(phi), d * math.sin(phi)), r, float(math.hypot(*left)))


def counterweight_sweep(train: Train, plates: list[Plate], plate: Plate, arm: Arm,
                        reach: dict[str, float]) -> tuple[str, str] | None:
    """What the counterweight of a carrier cut as arms newly passes over as it turns, in plan:
    on the plate of the mount that carries the carrier, the other arbors' pivots and the tip
    circles of their wheels that the ring its round end sweeps reaches and the arms' own
    sweep (a disc round the axis out to the farthest arm's end) does not. What the arms pass
    over already stands out of the plate's plane, or the arms would strike it too; wheels on
    the carrier's own axis stand beside the plate, whose hub holds that axis. The file gives
    no planes, so each part found could share the counterweight's; None when none is found.
    The message and the fix, one line each (``wheelwork check`` and the plate's note)."""
    if arm.weight_at is None:
        return None
    d, r = math.hypot(*arm.weight_at), arm.weight_r_mm
    outer = d + r
    arms = max((math.hypot(h.x_mm, h.y_mm) for h in plate.holes.values()), default=0.0) \
        + ARM_HALF_WIDTH_MM
    mount = train.arbors[plate.mount].mount
    parent = next((p for p in plates if p.mount == mount), None)
    home = None if parent is None else next(
        (h for h in parent.holes.values() if plate.mount in h.arbors), None)
    if home is None or outer <= arms:
        return None
    from .checks import hole_mm  # plate imports checks at its top; this keeps it plain

    hit, room = [], math.inf
    for h in parent.holes.values():
        if h is home:
            continue
        far = math.hypot(h.x_mm - home.x_mm, h.y_mm - home.y_mm)
        near = [(far - hole_mm(train, h.arbors)[0] / 2, f"the pivot of {h.axis}")]
        near += [(far - reach[w], f"wheel '{w}' on {h.axis}") for w in on_plate(train, parent, h)
                 if w in reach]
        for edge, what in near:
            if arms <= edge < outer + CLEARANCE_MM:
                hit.append(f"{what} (its nearest {places(edge, 2)} mm from the axis)")
                room = min(room, edge - CLEARANCE_MM)
    if not hit:
        return None
    message = (f"carrier '{plate.mount}' cut as arms: its counterweight's round end "
               f"({places(2 * r, 2)} mm across, centred {places(d, 2)} mm out) sweeps out to "
               f"{places(outer, 2)} mm round the carrier's axis as it turns, past its arms' "
               f"{places(arms, 2)} mm, over {'; '.join(hit)}: the file gives no planes, so "
               "where one shares the counterweight's plane they strike")
    # the same moment nearer in (area times distance kept: r² d the same) that clears them
    best = (r * math.sqrt(d) / 2) ** (2 / 3)  # where d' + r sqrt(d / d') is least
    lo, hi = max(best, ARM_HALF_WIDTH_MM), d
    inward = ""
    if lo < hi and lo + r * math.sqrt(d / lo) <= room:
        for _ in range(60):
            mid = (lo + hi) / 2
            lo, hi = (mid, hi) if mid + r * math.sqrt(d / mid) <= room else (lo, mid)
        inward = (f", bring the counterweight in (a round end about "
                  f"{places(2 * r * math.sqrt(d / lo), 2)} mm across centred about "
                  f"{places(lo, 2)} mm out ends within {places(room, 2)} mm; weigh it again)")
    fix = ("keep each out of the counterweight's plane" + inward + ", or cut the carrier "
           "thicker ([workshop] carrier_plate_mm: a smaller round end) or as a disc "
           "(--carrier-outline disc)")
    return message, fix


@dataclass(frozen=True)
class Balance:
    """How far a carrier's plate and the wheels it carries are out of balance about its axis,
    as a design estimate from ideal shapes in brass (:data:`BRASS_G_PER_MM3`): the plate's
    ``plate_gmm_per_mm`` (its outline's area times its centre's distance from the axis, per
    mm of thickness; with ``thickness_mm``, ``[workshop] carrier_plate_mm``, the plate's
    whole figure too) and the wheels' ``wheels_gmm`` (each its face area as cut — the disc of
    its pitch circle, less the windows of its crossings where they are drawn — as thick as
    the widest face of its meshes, at its arbor's place); ``uncounted`` the wheels without a
    module, whose size is unknown; ``crossed`` the wheels weighed with their crossings out.
    ``plate_vec`` and ``wheels_vec`` are the same as vectors (g·mm per mm, g·mm), pointing to
    the heavy side. A carrier whose arbors' ``pivots_in`` part its plates into a front and a
    back (``plates`` 2) has both weighed, the two alike in outline."""

    carrier: str
    shape: str
    size_mm: tuple[float, float]  # the outline's width and height
    plate_offset_mm: float
    plate_gmm_per_mm: float
    wheels_gmm: float
    heavy_at_mm: float  # distance of the farthest carried wheel's axis (0: none)
    uncounted: tuple[str, ...] = ()
    thickness_mm: float | None = None
    crossed: tuple[str, ...] = ()
    plate_vec: tuple[float, float] = (0.0, 0.0)
    wheels_vec: tuple[float, float] = (0.0, 0.0)
    plates: int = 1  # 2: a front and a back plate alike (an arbor's pivots_in parts them)
    arm: Arm | None = None  # the arm outline and its counterweight (shape "arm")
    plates_given: bool = False  # the carrier's [arbors.NAME] plates says how many it has

    @property
    def plate_gmm(self) -> float | None:
        """The plate's out-of-balance at its thickness, when the file gives it."""
        return None if self.thickness_mm is None else self.plate_gmm_per_mm * self.thickness_mm

    @property
    def total_gmm(self) -> float | None:
        """Plate and wheels together (as vectors: they may pull opposite ways), when the
        file gives the plate's thickness."""
        if self.thickness_mm is None:
            return None
        return math.hypot(self.plate_vec[0] * self.thickness_mm + self.wheels_vec[0],
                          self.plate_vec[1] * self.thickness_mm + self.wheels_vec[1])

    @property
    def worth_saying(self) -> bool:
        if self.arm is not None:  # its counterweight is said, sized or not needed
            return True
        if self.thickness_mm is not None:
            return max(self.total_gmm, self.wheels_gmm) >= BALANCE_NOTE_GMM
        return max(self.plate_gmm_per_mm, self.wheels_gmm) >= BALANCE_NOTE_GMM


LEFT_OUT = ("arbors, collets, pins and screws, the teeth beyond the pitch circles and the "
            "plate's own holes are left out")
"""What the balance estimate does not weigh, said with it."""


def carrier_plates(train: Train, mount: str) -> int:
    """How many plates a carrier is weighed as: its ``[arbors.NAME] plates`` (1, or 2 for a
    cage of a front and a back plate, the two alike in outline), else two where its arbors'
    ``pivots_in`` part them into a front and a back (:func:`engine.checks.split_plates`), else
    one."""
    given = train.arbors[mount].plates
    if given is not None:
        return given
    return 2 if split_plates(train, mount) else 1


def cage_hint(b: Balance) -> str | None:
    """The words for a carrier weighed as one plate because the file does not say how many it
    has: a cage of two would weigh twice the plate's figure."""
    if b.plates_given or b.plates > 1:
        return None
    return (f"weighed as one plate (a cage of a front and a back plate alike would be twice "
            f"the plate's figure: say so with plates = 2 in [arbors.{b.carrier}])")


def _wheels_moment(train: Train, plate: Plate, pitch: dict[str, float],
                   areas: dict[str, tuple[float, bool]] | None):
    """The wheels a carrier's arbors take round, weighed (:class:`Balance`): their moment about
    its axis as a vector (g·mm), the farthest one's distance, those not counted (no module),
    those weighed with their crossings out."""
    face: dict[str, float] = {}
    for m in train.meshes:
        if m.face_width_mm is not None:
            for w in (m.driver, m.driven):
                face[w] = max(face.get(w, 0.0), m.face_width_mm)
    ux = uy = far = 0.0
    uncounted, crossed = [], []
    for h in plate.holes.values():
        d = math.hypot(h.x_mm, h.y_mm)
        if d <= EXACT_MM:
            continue  # on the carrier's own axis: in balance
        for a in h.arbors:
            if train.arbors[a].mount != plate.mount:
                continue
            for w in train.arbors[a].wheels:
                if w not in pitch or w not in face:
                    uncounted.append(w)
                    continue
                wheel_area, out = (areas or {}).get(w, (math.pi * pitch[w] ** 2, False))
                if out:
                    crossed.append(w)
                grams = BRASS_G_PER_MM3 * wheel_area * face[w]
                ux, uy, far = ux + grams * h.x_mm, uy + grams * h.y_mm, max(far, d)
    return (ux, uy), far, uncounted, crossed


def carrier_balance(train: Train, plate: Plate, reach: dict[str, float],
                    pitch: dict[str, float], shape: str = "box",
                    area_mm2: dict[str, tuple[float, bool]] | None = None) -> Balance | None:
    """The out-of-balance of a carrier's plate (as :func:`outline` draws it) and of the wheels
    its arbors carry round; None for the frame. ``area_mm2``: each wheel's face area as cut
    and whether its crossings were taken out (:func:`engine.drawing.wheel_area_mm2`); a wheel
    missing there is weighed as the solid disc of its pitch circle."""
    if plate.mount == FRAME:
        return None
    kind, dims = outline(train, plate, reach, shape, pitch, area_mm2)
    arm = None
    if kind == "arm":
        arm = dims
        x0, y0, x1, y1 = arm.box
        area, moment = polygon_moment(arm.polygon)
        size, centre = (x1 - x0, y1 - y0), (moment[0] / area, moment[1] / area)
    elif kind == "disc":
        size, centre, area = (2 * dims[2], 2 * dims[2]), (0.0, 0.0), math.pi * dims[2] ** 2
    else:
        x0, y0, x1, y1 = dims
        size, centre = (x1 - x0, y1 - y0), ((x0 + x1) / 2, (y0 + y1) / 2)
        area = size[0] * size[1]
    offset = math.hypot(*centre)
    (ux, uy), far, uncounted, crossed = _wheels_moment(train, plate, pitch, area_mm2)
    count = carrier_plates(train, plate.mount)
    per_mm = BRASS_G_PER_MM3 * area * count
    return Balance(plate.mount, kind, size, offset, per_mm * offset, math.hypot(ux, uy), far,
                   tuple(uncounted), train.workshop.carrier_plate_mm, tuple(crossed),
                   (per_mm * centre[0], per_mm * centre[1]), (ux, uy), count, arm,
                   train.arbors[plate.mount].plates is not None)


def balance_text(b: Balance) -> tuple[str, str]:
    """What to say of a carrier out of balance: the message and the fix, one line each, the
    same in ``wheelwork check`` and on the plate ``wheelwork cut`` draws."""
    if b.arm is not None:
        return _arm_text(b)
    shape = (f"a {places(b.size_mm[0], 0)} mm disc" if b.shape == "disc" else
             f"{places(b.size_mm[0], 0)} × {places(b.size_mm[1], 0)} mm")
    thick = b.thickness_mm
    if thick is not None:
        shape += f", {figure(thick, 3)} mm thick"
    plate = ("its plate as wheelwork cut draws it" if b.plates == 1 else
             "its front and back plates as wheelwork cut draws them")
    if b.plates > 1:
        shape += " each"
    if b.plate_gmm_per_mm < BALANCE_NOTE_GMM:
        parts = [f"{plate} ({shape}) {'is' if b.plates == 1 else 'are'} in balance about its "
                 "axis"]
    elif thick is None:
        parts = [f"{plate} ({shape}) {'has its' if b.plates == 1 else 'have their'} centre "
                 f"{figure(b.plate_offset_mm, 3)} mm from the axis: about "
                 f"{figure(b.plate_gmm_per_mm, 3)} g·mm for each mm of brass plate (give its "
                 "thickness as [workshop] carrier_plate_mm for the whole figure)"]
    else:
        parts = [f"{plate} ({shape}) {'has its' if b.plates == 1 else 'have their'} centre "
                 f"{figure(b.plate_offset_mm, 3)} mm from the axis: about "
                 f"{figure(b.plate_gmm, 3)} g·mm"]
    if b.wheels_gmm >= BALANCE_NOTE_GMM / 100:
        how = ("brass discs of their pitch circles, their face wide"
               + (f", less the windows of the crossings drawn in {', '.join(b.crossed)}"
                  if b.crossed else ""))
        parts.append(f"the wheels it carries round, taken as {how}, about "
                     f"{figure(b.wheels_gmm, 3)} g·mm")
    if thick is not None and b.plate_gmm >= BALANCE_NOTE_GMM and \
            b.wheels_gmm >= BALANCE_NOTE_GMM / 100:
        parts.append(f"together about {figure(b.total_gmm, 3)} g·mm")
    if (hint := cage_hint(b)) and b.plate_gmm_per_mm >= BALANCE_NOTE_GMM:
        parts.append(hint)
    if b.uncounted:
        parts.append(f"{', '.join(b.uncounted)} not counted (no module)")
    parts.append(LEFT_OUT)
    message = (f"carrier '{b.carrier}' turns out of balance (design estimate, brass "
               f"{figure(BRASS_G_PER_MM3 * 1000, 3)} g/cm³): " + "; ".join(parts))
    weight = ""
    if b.total_gmm is not None and b.heavy_at_mm > 0:
        weight = (f" (about {figure(b.total_gmm / b.heavy_at_mm, 3)} g at "
                  f"{figure(b.heavy_at_mm, 3)} mm, the farthest wheel's distance)")
    fix = ("balance it before it runs: a counterweight opposite the heavy side, of as many "
           "grams as the g·mm above over its distance from the axis in mm" + weight
           + (", a round plate centred on its axis (wheelwork cut --carrier-outline disc), "
              "arms with a counterweight sized to balance them (--carrier-outline arm)"
              if b.shape != "disc" else "")
           + ", or lighter, crossed-out wheels; weigh the parts and balance the arm on its "
           "arbor as made")
    return message, fix


def _clean(v: float) -> float:
    """A coordinate written to 0.01 mm: one that rounds to nothing is written 0.00, not -0.00."""
    return v if abs(v) >= 0.005 else 0.0


def _arm_text(b: Balance) -> tuple[str, str]:
    """What to say of a carrier cut as arms (``--carrier-outline arm``): its counterweight."""
    arm = b.arm
    head = (f"carrier '{b.carrier}' cut as arms (design estimate, brass "
            f"{figure(BRASS_G_PER_MM3 * 1000, 3)} g/cm³, plate {figure(b.thickness_mm, 3)} mm "
            f"thick{', front and back' if b.plates > 1 else ''})")
    wheels = ""
    if b.wheels_gmm >= BALANCE_NOTE_GMM / 100:
        wheels = (f"the wheels it carries round (brass discs of their pitch circles, their "
                  f"face wide{', less their crossings' if b.crossed else ''}), about "
                  f"{figure(b.wheels_gmm, 3)} g·mm, and ")
    if arm.weight_at is None:
        parts = [f"{wheels}its arms balance about its axis without a counterweight"]
    else:
        x, y = arm.weight_at
        parts = [f"{wheels}its arms to their holes are met by a counterweight arm opposite, "
                 f"widening to a round end {places(2 * arm.weight_r_mm, 2)} mm across centred "
                 f"{places(math.hypot(x, y), 2)} mm from the axis at ({places(_clean(x), 2)}, "
                 f"{places(_clean(y), 2)}) mm"]
    parts.append("left out of balance " + (f"about {places(arm.residual_gmm, 2)} g·mm"
                                           if arm.residual_gmm >= 0.005 else
                                           "by less than 0.01 g·mm"))
    if cage_hint(b):
        parts.append(f"its arms weighed as one plate (a cage of a front and a back plate alike "
                     f"asks another counterweight: say so with plates = 2 in "
                     f"[arbors.{b.carrier}])")
    if b.uncounted:
        parts.append(f"{', '.join(b.uncounted)} not counted (no module)")
    parts.append(LEFT_OUT)
    fix = ("weigh the parts and balance the arm on its arbor as made: trim the counterweight's "
           "round end, or add to it, until it stands still in any position")
    return f"{head}: " + "; ".join(parts), fix


def _unmeasured(train: Train, kin: Kinematics, groups, mount: str, axes, ties, fixed
                ) -> dict[str, list[str]]:
    """The axes of this plate whose place no measure sets: a mesh without a module joins them
    to the rest, so their distance from it is unknown. Axes tied by meshes with a module (or a
    pin-and-slot) form groups whose holes keep their distances among themselves; a group is
    anchored when it holds a position the file fixes (a carrier's own axis is one), else the
    largest group of two or more axes stands for the plate. A group that is not anchored and
    that a mesh without a module joins to another is withheld, each axis with the labels of
    those meshes. An axis no mesh ties at all is left to the placement (placed apart, with a
    note)."""
    blind = []
    for f in kin.mesh_frames:
        m = train.meshes[f.mesh_index - 1]
        if f.reference != mount or m.module_mm is not None:
            continue
        g1, g2 = groups[train.wheels[m.driver].arbor], groups[train.wheels[m.driven].arbor]
        if g1 != g2 and g1 in axes and g2 in axes:
            blind.append((m.label, g1, g2))
    if not blind:
        return {}
    root, comps = _tie_groups(axes, ties)
    anchored = {r for r, members in comps.items() if any(a in fixed for a in members)}
    if not anchored and (tied := [r for r, members in comps.items() if len(members) > 1]):
        anchored = {max(tied, key=lambda r: len(comps[r]))}
    out: dict[str, list[str]] = {}
    for mesh, g1, g2 in blind:
        r1, r2 = root[g1], root[g2]
        if r1 == r2:
            continue
        for r in (r1, r2):
            if r not in anchored:
                for ax in comps[r]:
                    if mesh not in out.setdefault(ax, []):
                        out[ax].append(mesh)
    return {ax: out[ax] for ax in axes if ax in out}


def _over_pivots(train: Train, plate: Plate, reach_mm: dict[str, float]) -> None:
    """A note for each wheel of the plate whose tip circle, as placed, reaches over the pivot
    of an axis it has no tie to (a mesh or pin-and-slot between the two axes is the check's
    business): the other arbor must end short of its plane. Placement avoids this where it
    can; a pin-and-slot's fixed offset, or the file's positions, can leave no choice."""
    tied = {frozenset((t.axis1, t.axis2)) for t in plate.ties}
    for ax, hole in plate.holes.items():
        wheels = [w for n in hole.arbors if train.arbors[n].mount == plate.mount
                  for w in train.arbors[n].wheels if w in reach_mm]
        for w in wheels:
            over = [(other.axis, d) for key, other in plate.holes.items()
                    if key != ax and frozenset((ax, key)) not in tied
                    and (d := math.hypot(hole.x_mm - other.x_mm, hole.y_mm - other.y_mm))
                    < reach_mm[w]]
            if over:
                where = ", ".join(f"{a} ({places(d, 2)} mm away)" for a, d in over)
                plate.notes.append(
                    f"as placed, wheel '{w}' (tip radius {places(reach_mm[w], 2)} mm) reaches over "
                    f"the pivot{'s' if len(over) > 1 else ''} of {where}: end "
                    f"{'those arbors' if len(over) > 1 else 'that arbor'} short of its plane "
                    "(a cock or bridge on that side: pivots_in in its [arbors.NAME]), or place "
                    "the axes yourself with at_mm")


def _ties(train: Train, kin: Kinematics, groups, mount: str) -> list[Tie]:
    out = []
    for f in kin.mesh_frames:
        if f.reference != mount:
            continue
        m = train.meshes[f.mesh_index - 1]
        if m.module_mm is None:
            continue
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        a = centre_distance_mm(m.module_mm, w1.teeth, w2.teeth, m.internal)
        out.append(Tie(m.label, groups[w1.arbor], groups[w2.arbor], a))
    for ps in train.pin_slots.values():
        label = f"[pin_slots.{ps.name}]"
        if ps.carrier is not None:  # the pin rides on a carrier: its axis is arm_mm out
            if ps.carrier == mount:
                out.append(Tie(label, groups[ps.carrier], groups[ps.pin_arbor], ps.arm_mm))
            if train.arbors[ps.slot_arbor].mount == mount:
                out.append(Tie(label, groups[ps.carrier], groups[ps.slot_arbor], ps.offset_mm,
                               ps.offset_deg))
            continue
        if train.arbors[ps.pin_arbor].mount != mount:
            continue
        out.append(Tie(label, groups[ps.pin_arbor], groups[ps.slot_arbor],
                       ps.offset_mm, ps.offset_deg))
    return [t for t in out if not (t.axis1 == t.axis2 and t.distance_mm <= EXACT_MM)]


def _fixed(train: Train, groups, mount: str, axes) -> dict[str, tuple[float, float]]:
    fixed: dict[str, tuple[float, float, str]] = {}
    if mount != FRAME:
        fixed[groups[mount]] = (0.0, 0.0, f"the centre of carrier '{mount}'")
    for a in train.arbors.values():
        if a.mount != mount or a.at_mm is None:
            continue
        g = groups[a.name]
        if g in fixed:
            x, y, who = fixed[g]
            if math.dist((x, y), a.at_mm) > FIXED_TOLERANCE_MM:
                raise PlacementError(train.source, f"[arbors.{a.name}] at_mm",
                                     f"is on one axis with {who} but placed "
                                     f"{places(math.dist((x, y), a.at_mm), 3)} mm from it: no "
                                     "placement of the plate can keep both")
            continue
        fixed[g] = (a.at_mm[0], a.at_mm[1], f"'{a.name}' at {list(a.at_mm)}")
    return {g: (v[0], v[1]) for g, v in fixed.items()}


def _solve(train, plate, axes, ties, fixed, reach, label):
    where = train.source
    groups_of: dict[frozenset, list[Tie]] = {}
    for t in ties:
        if t.axis1 == t.axis2:
            raise PlacementError(where, t.label, f"needs its two axes {figure(t.distance_mm, 6)} mm "
                                 "apart, but they are one axis")
        groups_of.setdefault(frozenset((t.axis1, t.axis2)), []).append(t)
    by_pair: dict[frozenset, Tie] = {}
    for key, group in groups_of.items():
        lo = min(group, key=lambda t: t.distance_mm)
        hi = max(group, key=lambda t: t.distance_mm)
        first = group[0]
        if hi.distance_mm - lo.distance_mm > FIXED_TOLERANCE_MM:
            raise PlacementError(where, hi.label, f"needs the axes of {label[hi.axis1]} and "
                                 f"{label[hi.axis2]} {places(hi.distance_mm, 4)} mm apart, but "
                                 f"{lo.label} needs {places(lo.distance_mm, 4)} mm: no placement "
                                 "keeps both")
        if hi.distance_mm - lo.distance_mm <= EXACT_MM:
            by_pair[key] = first
            continue
        mid = (lo.distance_mm + hi.distance_mm) / 2
        by_pair[key] = Tie(first.label, first.axis1, first.axis2, mid, first.direction_deg)
        plate.notes.append(f"{len(group)} meshes between the axes of {label[first.axis1]} and "
                           f"{label[first.axis2]} need {places(lo.distance_mm, 4)} to "
                           f"{places(hi.distance_mm, 4)} mm: drilled at {places(mid, 4)} mm, each at most "
                           f"{places(mid - lo.distance_mm, 4)} mm off (within the "
                           f"{FIXED_TOLERANCE_MM:g} mm a mesh takes up)")
    nbrs: dict[str, list[Tie]] = {ax: [] for ax in axes}
    for t in by_pair.values():
        nbrs[t.axis1].append(t)
        nbrs[t.axis2].append(t)
    # positions the file fixes must already keep their distances
    for t in by_pair.values():
        if t.axis1 in fixed and t.axis2 in fixed:
            d = math.dist(fixed[t.axis1], fixed[t.axis2])
            if abs(d - t.distance_mm) > FIXED_TOLERANCE_MM:
                raise PlacementError(where, t.label, f"the file places {label[t.axis1]} and "
                                     f"{label[t.axis2]} {places(d, 4)} mm apart, but this needs "
                                     f"{places(t.distance_mm, 4)} mm: move one (at_mm) or change "
                                     "the teeth or module")
            if abs(d - t.distance_mm) > EXACT_MM:
                plate.notes.append(f"{t.label}: the file's positions are {d - t.distance_mm:+.4f}"
                                   f" mm off the centre distance {places(t.distance_mm, 4)} mm; kept "
                                   "as written")
    _triangles(where, by_pair, label)
    ties_u = [t for t in by_pair.values() if not (t.axis1 in fixed and t.axis2 in fixed)]
    rng = random.Random(0)  # repeatable: the same file always gives the same plate
    best = None
    for attempt in range(RESTARTS):
        pos, loose = _greedy(axes, nbrs, fixed, reach, rng if attempt else None)
        pos = _close(pos, ties_u, fixed)
        worst = max(((abs(_miss(pos, t)), t) for t in ties_u), default=(0.0, None),
                    key=lambda x: x[0])
        if best is None or worst[0] < best[0][0]:
            best = (worst, pos, loose)
        if worst[0] <= EXACT_MM:
            break
    (miss, tie), pos, loose = best
    if miss > EXACT_MM:
        raise PlacementError(where, tie.label, f"no placement keeps every centre distance: "
                             f"the closest found leaves the axes of {label[tie.axis1]} and "
                             f"{label[tie.axis2]} {places(miss, 4)} mm off the {places(tie.distance_mm, 4)} mm "
                             "this needs (a loop of meshes that cannot close, or positions "
                             "fixed by at_mm); change teeth or modules in the loop")
    if loose:
        plate.notes.append("not tied to another axis by any mesh with a module, so placed apart "
                           "(set at_mm, or module_mm on its meshes): "
                           + ", ".join(label[a] for a in loose))
        plate.apart.extend((label[a],) for a in loose)
    free = _free_groups(train, axes, by_pair.values(), fixed)
    if free:
        names = "; ".join(", ".join(label[a] for a in g) for g in free)
        many = len(free) > 1
        plate.notes.append(
            f"{'groups' if many else 'a group'} of holes tied by no mesh with a module to the "
            f"rest of this plate (joined only through another mount, or not at all), so placed "
            f"apart: where {'each stands' if many else 'it stands'} from the rest is the "
            f"tool's choice, not a measure; {'their' if many else 'its'} holes keep their "
            f"distances among themselves (set at_mm on an arbor of "
            f"{'each group' if many else 'the group'}, or a module_mm on a mesh joining "
            f"{'them' if many else 'it'} to the rest): {names}")
        plate.apart.extend(tuple(label[a] for a in g) for g in free)
    return pos


def _tie_groups(axes, ties) -> tuple[dict[str, str], dict[str, list[str]]]:
    """The groups ``ties`` join ``axes`` into: each axis's group (named by one of its axes),
    and each group's axes in the order of ``axes``."""
    parent = {ax: ax for ax in axes}

    def find(a: str) -> str:
        while parent[a] != a:
            a = parent[a]
        return a

    for t in ties:
        parent[find(t.axis1)] = find(t.axis2)
    root = {ax: find(ax) for ax in axes}
    comps: dict[str, list[str]] = {}
    for ax in axes:
        comps.setdefault(root[ax], []).append(ax)
    return root, comps


def _free_groups(train, axes, ties, fixed) -> list[list[str]]:
    """The groups of two or more axes that ``ties`` join among themselves but to none of the
    plate's anchored holes: an anchored group holds a position the file fixes (a carrier's
    own axis is one), else the largest group stands for the plate (the first in the file's
    order among equals), as :func:`_unmeasured` takes it. Each such group is placed where the
    placement chooses, its distance from the rest no measure; the axes of each in file order."""
    root, comps = _tie_groups(axes, ties)
    tied = [members for members in comps.values() if len(members) > 1]
    if not tied or (len(tied) == 1 and len(comps) == 1):
        return []
    order = list(train.arbors)

    def first(members):
        return min(order.index(n) for n in members if n in order)

    anchored = [m for m in comps.values() if any(a in fixed for a in m)]
    if not anchored:
        anchored = [max(tied, key=lambda m: (len(m), -first(m)))]
    return sorted((m for m in tied if not any(m is a for a in anchored)), key=first)


RESTARTS = 24


def _miss(pos, t: Tie) -> float:
    return math.dist(pos[t.axis1], pos[t.axis2]) - t.distance_mm


def _triangles(where, by_pair, label) -> None:
    """Three axes tied pairwise must form a triangle: the longest side at most the other two
    together (and so on): say so plainly when they cannot."""
    axes = sorted({a for k in by_pair for a in k})
    for i, a in enumerate(axes):
        for j in range(i + 1, len(axes)):
            b = axes[j]
            for c in axes[j + 1:]:
                sides = [by_pair.get(frozenset(p)) for p in ((a, b), (b, c), (a, c))]
                if any(x is None for x in sides):
                    continue
                sides.sort(key=lambda t: t.distance_mm)
                short = sides[0].distance_mm + sides[1].distance_mm
                if sides[2].distance_mm > short + EXACT_MM:
                    (via,) = {a, b, c} - {sides[2].axis1, sides[2].axis2}
                    raise PlacementError(
                        where, sides[2].label, f"needs {places(sides[2].distance_mm, 4)} mm between "
                        f"its axes, but {sides[0].label} and {sides[1].label} put them at most "
                        f"{places(short, 4)} mm apart through {label[via]}: no position keeps both; "
                        "change the teeth or module of one of the three meshes")


def _greedy(axes, nbrs, fixed, reach, rng):
    """A first placement: one axis at a time, at the best of the positions its placed
    neighbours allow (with ``rng``, at a random one of them: a fresh start)."""
    pos = dict(fixed)
    order = list(axes)
    loose = []
    while len(pos) < len(axes):
        todo = [ax for ax in order if ax not in pos]
        placed_n = {ax: [t for t in nbrs[ax] if _other(t, ax) in pos] for ax in todo}
        ax = max(todo, key=lambda a: (len(placed_n[a]), len(nbrs[a]), -order.index(a)))
        known = placed_n[ax]
        if not known:
            if not nbrs[ax] and len(axes) > 1:  # spaced by rule, not by a centre distance
                loose.append(ax)
            pos[ax] = _apart(pos, reach, ax)
            continue
        cands = _candidates(ax, known, pos)
        tied = {_other(t, ax) for t in nbrs[ax]}
        if rng is not None:
            pos[ax] = rng.choice(cands)
        else:
            pos[ax] = min(cands, key=lambda c: _score(c, ax, pos, reach, tied))
    return pos, loose


def _close(pos, ties, fixed, rounds: int = 100):
    """Move the free axes (least squares, Gauss–Newton with damping) until every tie holds."""
    free = [a for a in pos if a not in fixed]
    if not free or not ties:
        return pos
    col = {a: i for i, a in enumerate(free)}
    x = np.array([c for a in free for c in pos[a]], dtype=float)

    def at(a, x):
        return (x[2 * col[a]], x[2 * col[a] + 1]) if a in col else pos[a]

    def residuals(x):
        res, rows = [], []
        for t in ties:
            p, q = np.array(at(t.axis1, x)), np.array(at(t.axis2, x))
            if t.direction_deg is not None:
                th = math.radians(t.direction_deg)
                want = t.distance_mm * np.array([math.cos(th), math.sin(th)])
                for k in range(2):
                    row = np.zeros(len(x))
                    if t.axis2 in col:
                        row[2 * col[t.axis2] + k] += 1
                    if t.axis1 in col:
                        row[2 * col[t.axis1] + k] -= 1
                    res.append(q[k] - p[k] - want[k])
                    rows.append(row)
                continue
            d = q - p
            n = float(np.hypot(*d)) or 1e-12
            row = np.zeros(len(x))
            if t.axis2 in col:
                row[2 * col[t.axis2]: 2 * col[t.axis2] + 2] += d / n
            if t.axis1 in col:
                row[2 * col[t.axis1]: 2 * col[t.axis1] + 2] -= d / n
            res.append(n - t.distance_mm)
            rows.append(row)
        return np.array(res), np.array(rows)

    lam = 1e-6
    r, jac = residuals(x)
    for _ in range(rounds):
        if np.max(np.abs(r)) < 1e-11:
            break
        step = np.linalg.solve(jac.T @ jac + lam * np.eye(len(x)), -jac.T @ r)
        r2, j2 = residuals(x + step)
        if r2 @ r2 < r @ r:
            x, r, jac, lam = x + step, r2, j2, max(lam / 10, 1e-12)
        else:
            lam *= 10
            if lam > 1e6:
                break
    return {a: at(a, x) for a in pos}


def _other(t: Tie, ax: str) -> str:
    return t.axis2 if t.axis1 == ax else t.axis1


def _candidates(ax, known, pos):
    """Where ``ax`` may go given its placed neighbours (the first two of them): a ring of
    points on one circle, a pin-and-slot's one point, or where two circles cross (when they
    do not, the nearest point: the closing step then moves the free axes)."""
    t = known[0]
    p = pos[_other(t, ax)]
    if t.direction_deg is not None:  # pin-and-slot: the direction is fixed too
        sign = 1.0 if t.axis1 != ax else -1.0  # direction is from axis1 to axis2
        th = math.radians(t.direction_deg)
        return [(p[0] + sign * t.distance_mm * math.cos(th),
                 p[1] + sign * t.distance_mm * math.sin(th))]
    if len(known) == 1:
        return [(p[0] + t.distance_mm * math.cos(a), p[1] + t.distance_mm * math.sin(a))
                for a in (2 * math.pi * k / ANGLE_STEPS for k in range(ANGLE_STEPS))]
    t2 = known[1]
    q = pos[_other(t2, ax)]
    r1, r2 = t.distance_mm, t2.distance_mm
    d = math.dist(p, q)
    if d < EXACT_MM:
        return [(p[0] + r1, p[1])]
    ux, uy = (q[0] - p[0]) / d, (q[1] - p[1]) / d
    if d > r1 + r2 or d < abs(r1 - r2):
        toward = 1.0 if d > r1 + r2 or r1 < r2 else -1.0
        return [(p[0] + toward * r1 * ux, p[1] + toward * r1 * uy)]
    a = (r1 * r1 - r2 * r2 + d * d) / (2 * d)
    h = math.sqrt(max(r1 * r1 - a * a, 0.0))
    mx, my = p[0] + a * ux, p[1] + a * uy
    return [(mx - h * uy, my + h * ux), (mx + h * uy, my - h * ux)]


def _apart(pos, reach, ax):
    if not pos:
        return (0.0, 0.0)
    right = max(x + reach.get(a, 0.0) for a, (x, _) in pos.items())
    return (right + reach.get(ax, 0.0) + 5.0, 0.0)


def _score(c, ax, pos, reach, tied) -> float:
    """Lower is better: wheels reaching over other axes' pivots, wheels overlapping wheels
    they do not mesh with, then the plate's size."""
    foul = overlap = 0.0
    for other, p in pos.items():
        if other == ax:
            continue
        d = math.dist(c, p)
        if other not in tied:
            foul += max(0.0, reach[ax] + CLEARANCE_MM - d) + max(0.0, reach[other]
                                                                 + CLEARANCE_MM - d)
            overlap += max(0.0, reach[ax] + reach[other] - d)
    xs = [p[0] for p in pos.values()] + [c[0]]
    ys = [p[1] for p in pos.values()] + [c[1]]
    size = (max(xs) - min(xs)) + (max(ys) - min(ys))
    return 1000.0 * foul + 10.0 * overlap + size
