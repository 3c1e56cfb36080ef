"""Tooth outlines for cutting: the cycloidal clock form and the involute form (ISO 53 rack).

A :class:`ToothForm` holds one wheel's tooth: its pitch, tip and root radii and one *half
flank* — points ``(radius_mm, half_angle_rad)`` from the root to the tip, the half-angle measured
from the tooth's centre line. :meth:`ToothForm.outline` turns it into the closed outline of the
whole wheel (x, y in mm). Everything is plain numpy; nothing here draws or writes files.

**Cycloidal form** — the clock and watch form, with the proportions of British Standard
BS 978 Part 2 (cycloidal type gears). The values below are *from memory* of that standard
(the tables were not at hand when this was written); the construction follows it:

* wheel: tooth thickness 1.41 m on the pitch circle, dedendum 1.57 m, radial flanks below the
  pitch circle; the addendum is the epicycloid traced by a generating circle of half the
  pinion's pitch radius (so the pinion's flanks are radial), taken to where the two flanks
  would meet in a point (the *theoretical* addendum), then made 0.95 of that and drawn as a
  circular arc tangent to the flank at the pitch circle through the epicycloid's meeting point
  (the *addendum radius*), cut off by the tip circle (the rounding);
* pinion leaves: radial flanks, a round or pointed top by leaf count (:data:`PINION_LEAVES`),
  dedendum = the wheel's addendum + 0.4 m clearance.

**Involute form** — generated exactly as a cutter shaped like the ISO 53 basic rack would cut
it (pressure angle 20°, addendum 1 m, dedendum 1.25 m, root fillet radius 0.38 m; profile A):
each point of the rack cutter's outline is carried to the wheel where its normal passes
through the pitch point (law of gearing), so the flank is the exact involute and the root
fillet the exact trochoidal envelope; undercut, when the rack's tip cuts into the flank of a
small pinion, is trimmed where the two curves cross. Teeth are drawn at the nominal thickness
π m / 2 (no backlash allowance). Internal (ring) wheels are drawn in involute form only: the
ring's tooth is the space of an external wheel of the same count, tip 1 m inside and root
1.25 m outside the pitch circle.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import ArgumentError
from .figures import figure

# --- the cycloidal standard (BS 978 Part 2), values from memory ------------------------------

WHEEL_THICKNESS_M = 1.41
"""Wheel tooth thickness on the pitch circle, in modules (BS 978-2, from memory)."""

WHEEL_DEDENDUM_M = 1.57
"""Wheel dedendum, in modules (BS 978-2, from memory)."""

PRACTICAL_ADDENDUM = 0.95
"""The wheel's practical addendum is this fraction of the theoretical (epicycloid) one
(BS 978-2, from memory)."""

DEEP_ADDENDUM_M = 1.75
"""A wheel addendum above this (large pinions: the generating circle grows with the pinion)
is pointed out (our rule)."""

DEEP_NOTE_START = "deep teeth ("
DEEP_ADVICE = ("the cycloidal form suits pinions of 6 to 16 leaves; for larger pinions the "
               "involute form gives shallower teeth")


def deep_teeth(forms: dict) -> list[tuple[str, float, int]]:
    """The cycloidal wheels of ``forms`` (name → :class:`ToothForm`) whose addendum is above
    :data:`DEEP_ADDENDUM_M`: (name, addendum in modules, leaves of the pinion it meets), in
    the order given."""
    return [(w, t.params["addendum_m"], t.params["mate_leaves"]) for w, t in forms.items()
            if t.form == "cycloidal" and t.role == "wheel"
            and t.params["addendum_m"] > DEEP_ADDENDUM_M]


def deep_teeth_text(deep: list[tuple[str, float, int]]) -> str:
    """One line for every deep-toothed wheel at once: 'sun_w3 (addendum 2.05 m against 25
    leaves), perigee_w1 (1.80 m against 19)'."""
    parts = [f"{w} ({'addendum ' if i == 0 else ''}{add:.2f} m against {leaves}"
             f"{' leaves' if i == 0 else ''})" for i, (w, add, leaves) in enumerate(deep)]
    return ", ".join(parts)


PINION_CLEARANCE_M = 0.4
"""Pinion dedendum = the wheel's addendum + this clearance, in modules (BS 978-2, from
memory)."""


@dataclass(frozen=True)
class LeafForm:
    """Pinion leaf proportions for a range of leaf counts, in modules."""

    most_leaves: int | None  # this row serves up to this many leaves (None: and above)
    thickness_m: float
    addendum_m: float
    radius_m: float
    shape: str


PINION_LEAVES = (
    LeafForm(7, 1.05, 0.855, 1.05, "pointed (ogival) top"),
    LeafForm(10, 1.05, 0.67, 0.70, "round top"),
    LeafForm(None, 1.25, 0.805, 0.82, "round top"),
)
"""Pinion leaves by count: 6–7, 8–10, 11 and more (BS 978-2, from memory). Fewer than 6
leaves take the 6–7 row."""

# --- the involute basic rack (ISO 53 profile A) ----------------------------------------------

PRESSURE_ANGLE_DEG = 20.0
RACK_ADDENDUM_M = 1.0
RACK_DEDENDUM_M = 1.25
RACK_FILLET_M = 0.38
"""ISO 53:1998 basic rack, profile A: α = 20°, h_aP = 1 m, h_fP = 1.25 m, ρ_fP = 0.38 m."""


def leaf_form(leaves: int) -> LeafForm:
    """The :data:`PINION_LEAVES` row for a pinion of ``leaves`` leaves."""
    for row in PINION_LEAVES:
        if row.most_leaves is None or leaves <= row.most_leaves:
            return row
    raise AssertionError("unreachable")  # pragma: no cover


def involute_function(alpha_rad):
    """inv α = tan α − α."""
    return np.tan(alpha_rad) - alpha_rad


def involute_half_angle(radius_mm, teeth: int, module_mm: float,
                        alpha_deg: float = PRESSURE_ANGLE_DEG):
    """Half the angle a tooth of nominal thickness π m / 2 spans at ``radius_mm`` (radians).

    η(ρ) = s / d + inv α − inv α_ρ, with d = m z, s = π m / 2, cos α_ρ = r_b / ρ — the tooth
    thickness at any diameter, as the gear handbooks give it.
    """
    r = module_mm * teeth / 2.0
    alpha = math.radians(alpha_deg)
    rb = r * math.cos(alpha)
    a_rho = np.arccos(np.clip(rb / np.asarray(radius_mm, dtype=float), -1.0, 1.0))
    return math.pi / (2.0 * teeth) + involute_function(alpha) - involute_function(a_rho)


#: how far a drawn outline may stand from the tooth form it follows: a thousandth of a
#: millimetre, well under what a wheel-cutting engine, a laser or a CNC mill holds (common
#: practice, no source)
OUTLINE_TOLERANCE_MM = 0.001


@dataclass(frozen=True)
class ToothForm:
    """One wheel's teeth. Radii in mm; ``flank`` is an (N, 2) array of (radius_mm,
    half_angle_rad) from root to tip; ``params`` the proportions used, in modules."""

    form: str  # one of engine.train.TOOTH_FORMS
    role: str  # "wheel", "pinion" or "ring"
    teeth: int
    module_mm: float
    pitch_radius_mm: float
    tip_radius_mm: float
    root_radius_mm: float
    flank: np.ndarray
    params: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()

    @property
    def pitch_angle(self) -> float:
        return 2.0 * math.pi / self.teeth

    def thickness_at_pitch_mm(self) -> float:
        """Arc thickness of a tooth on the pitch circle (for a ring: the space)."""
        rho, eta = self.flank[:, 0], self.flank[:, 1]
        order = np.argsort(rho)
        return 2.0 * self.pitch_radius_mm * float(np.interp(self.pitch_radius_mm, rho[order],
                                                              eta[order]))

    def outline(self, arc_step_rad: float = math.radians(2.0),
                tolerance_mm: float = OUTLINE_TOLERANCE_MM) -> np.ndarray:
        """The closed outline of the whole wheel, (M, 2) x, y in mm, tooth 0 on the +x axis.

        Tip and root arcs are drawn as points at most ``arc_step_rad`` apart; the first point
        is not repeated at the end. One tooth's points are thinned to those the outline needs
        to stay within ``tolerance_mm`` of the finely sampled form (:func:`thin`), and every
        tooth is that one turned.
        """
        rho, eta = self.flank[:, 0], self.flank[:, 1]
        step = self.pitch_angle
        tip_gap = eta[-1]  # half the land on top of the tooth
        root_gap = step / 2.0 - eta[0]  # half the space at the root
        parts = [np.column_stack([rho, -eta])]  # root → tip, right-hand flank
        n_tip = max(int(math.ceil(2 * tip_gap / arc_step_rad)), 1)
        if tip_gap > 1e-12:
            a = np.linspace(-tip_gap, tip_gap, n_tip + 1)[1:-1]
            parts.append(np.column_stack([np.full_like(a, rho[-1]), a]))
        parts.append(np.column_stack([rho[::-1], eta[::-1]]))  # tip → root
        n_root = max(int(math.ceil(2 * root_gap / arc_step_rad)), 1)
        if root_gap > 1e-12:
            a = np.linspace(eta[0], step - eta[0], n_root + 1)[1:-1]
            parts.append(np.column_stack([np.full_like(a, rho[0]), a]))
        tooth = np.concatenate(parts)  # (radius, angle) of tooth 0, up to the next one
        xy = np.column_stack([tooth[:, 0] * np.cos(tooth[:, 1]),
                              tooth[:, 0] * np.sin(tooth[:, 1])])
        keep = np.ones(len(xy), dtype=bool)  # drop repeated points where pieces meet
        keep[1:] = np.hypot(*(xy[1:] - xy[:-1]).T) > 1e-9
        tooth, xy = tooth[keep], xy[keep]
        nxt = [rho[0] * math.cos(step - eta[0]), rho[0] * math.sin(step - eta[0])]
        if tolerance_mm > 0:  # judged up to the next tooth's first point
            tooth = tooth[thin(np.vstack([xy, nxt]), tolerance_mm)[:-1]]
        angles = (tooth[:, 1][None, :] + step * np.arange(self.teeth)[:, None]).ravel()
        radii = np.tile(tooth[:, 0], self.teeth)
        return np.column_stack([radii * np.cos(angles), radii * np.sin(angles)])


def thin(points: np.ndarray, tolerance: float) -> np.ndarray:
    """Which points of an open polyline (N, 2) to keep so that every dropped point lies
    within ``tolerance`` of the line drawn through the kept ones (the first and last always
    kept): a boolean mask. Each span is split at its point farthest from its chord until no
    point is farther than ``tolerance``."""
    n = len(points)
    keep = np.zeros(n, dtype=bool)
    keep[0] = keep[-1] = True
    spans = [(0, n - 1)]
    while spans:
        i, j = spans.pop()
        if j - i < 2:
            continue
        a, b = points[i], points[j]
        d = b - a
        inner = points[i + 1:j] - a
        length = math.hypot(*d)
        if length > 0:
            dist = np.abs(d[0] * inner[:, 1] - d[1] * inner[:, 0]) / length
        else:
            dist = np.hypot(inner[:, 0], inner[:, 1])
        k = int(np.argmax(dist))
        if dist[k] > tolerance:
            m = i + 1 + k
            keep[m] = True
            spans += [(i, m), (m, j)]
    return keep


# --- cycloidal -------------------------------------------------------------------------------

def epicycloid_addendum(teeth: int, mate_teeth: int, thickness_m: float = WHEEL_THICKNESS_M):
    """Theoretical addendum (modules) of a wheel tooth of ``thickness_m`` whose flanks are
    epicycloids of a generating circle of half the mate's pitch radius, and the point where
    they meet (x across, y along the centre line, in modules, wheel centre at the origin).

    A circle of radius a rolling outside the pitch circle R carries a point from the pitch
    circle along (R + a) (cos t, sin t) − a (cos((R + a) t / a), sin((R + a) t / a)).
    """
    big_r = teeth / 2.0
    a = mate_teeth / 4.0
    psi = thickness_m / 2.0 / big_r  # half-angle of the tooth at the pitch circle

    def point(t):
        k = (big_r + a) / a
        return ((big_r + a) * math.cos(t) - a * math.cos(k * t),
                (big_r + a) * math.sin(t) - a * math.sin(k * t))

    # the flank starts at angle 0 and sweeps towards the centre line at angle psi
    lo, hi = 0.0, 1e-3
    while math.atan2(point(hi)[1], point(hi)[0]) < psi:
        lo, hi = hi, hi * 2.0
        if hi > math.pi:
            raise ArgumentError("the epicycloid never reaches the tooth's centre line")
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if math.atan2(point(mid)[1], point(mid)[0]) < psi:
            lo = mid
        else:
            hi = mid
    x, y = point(0.5 * (lo + hi))
    return math.hypot(x, y) - big_r


def _round_top(pitch_r: float, half_thick: float, radius: float, top: float, n: int = 48):
    """Points (radius, half-angle) of an arc of ``radius`` tangent to a radial flank where the
    flank crosses the pitch circle (half-thickness ``half_thick`` there), rising towards the
    centre line, cut off at radius ``top`` (or where it meets the centre line). All in mm."""
    psi = half_thick / pitch_r
    p = np.array([pitch_r * math.sin(psi), pitch_r * math.cos(psi)])  # x across, y up
    inward = np.array([-math.cos(psi), math.sin(psi)])  # towards the centre line
    centre = p + radius * inward
    start = math.atan2(p[1] - centre[1], p[0] - centre[0])
    # sweep anticlockwise (up and over towards the centre line) until x = 0 or |.| = top
    gammas = np.linspace(start, start + math.pi, 2000)
    pts = centre + radius * np.column_stack([np.cos(gammas), np.sin(gammas)])
    rad = np.hypot(pts[:, 0], pts[:, 1])
    stop = np.argmax((pts[:, 0] <= 0) | (rad >= top))
    if stop == 0:
        raise ArgumentError("the addendum arc does not rise from the pitch circle")
    g_end = gammas[stop]
    # refine the end exactly between the last two samples
    lo, hi = gammas[stop - 1], g_end
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        q = centre + radius * np.array([math.cos(mid), math.sin(mid)])
        if q[0] <= 0 or math.hypot(*q) >= top:
            hi = mid
        else:
            lo = mid
    g = np.linspace(start, hi, n)
    pts = centre + radius * np.column_stack([np.cos(g), np.sin(g)])
    rho = np.hypot(pts[:, 0], pts[:, 1])
    eta = np.arctan2(np.maximum(pts[:, 0], 0.0), pts[:, 1])
    rho[0], eta[0] = pitch_r, psi
    return np.column_stack([rho, eta])


def _count(n, what: str) -> int:
    """A tooth or leaf count given to a form: a whole number of at least one."""
    if isinstance(n, bool) or not isinstance(n, int | np.integer) or n < 1:
        raise ArgumentError(f"{what}: must be a whole number of at least 1, got {n!r}")
    return int(n)


def _module(m, what: str = "module_mm") -> float:
    """A module (or other length) given to a form: a finite number above zero."""
    try:
        ok = math.isfinite(m) and m > 0
    except TypeError:
        ok = False
    if isinstance(m, bool) or not ok:
        raise ArgumentError(f"{what}: must be a number of millimetres above zero, got {m!r}")
    return float(m)


def cycloidal_wheel(teeth: int, module_mm: float, mate_leaves: int,
                    dedendum_m: float = WHEEL_DEDENDUM_M) -> ToothForm:
    """A cycloidal wheel driving (or driven by) a pinion of ``mate_leaves`` leaves."""
    teeth, mate_leaves = _count(teeth, "teeth"), _count(mate_leaves, "mate_leaves")
    m = _module(module_mm)
    theo = epicycloid_addendum(teeth, mate_leaves)
    add = PRACTICAL_ADDENDUM * theo
    r = m * teeth / 2.0
    half = WHEEL_THICKNESS_M * m / 2.0
    psi = half / r
    # addendum radius: the arc tangent to the flank at the pitch circle through the point
    # where the theoretical epicycloids meet on the centre line
    p = np.array([r * math.sin(psi), r * math.cos(psi)])
    e = np.array([0.0, r + theo * m])
    inward = np.array([-math.cos(psi), math.sin(psi)])
    d = p - e
    rad = -float(d @ d) / (2.0 * float(inward @ d))  # in mm, like p and e
    root = r - dedendum_m * m
    notes = []
    if root <= 0:
        raise ArgumentError(f"{teeth} teeth at dedendum {figure(dedendum_m, 3)} m leave no root circle")
    if add > DEEP_ADDENDUM_M:
        notes.append(f"{DEEP_NOTE_START}addendum {add:.2f} m against {mate_leaves} leaves): "
                     f"{DEEP_ADVICE}")
    flank = np.vstack([[[root, psi], [0.5 * (root + r), psi]],
                       _round_top(r, half, rad, r + add * m)])
    tip = float(flank[-1, 0])
    params = {"thickness_m": WHEEL_THICKNESS_M, "theoretical_addendum_m": theo,
              "addendum_m": add, "addendum_radius_m": rad / m, "dedendum_m": dedendum_m,
              "mate_leaves": mate_leaves}
    return ToothForm("cycloidal", "wheel", teeth, m, r, tip, root, flank, params, tuple(notes))


def cycloidal_pinion(leaves: int, module_mm: float, wheel_addendum_m: float) -> ToothForm:
    """Cycloidal pinion leaves (radial flanks, top by leaf count); its dedendum makes room for
    the wheel's addendum ``wheel_addendum_m`` plus the standard clearance."""
    leaves, m = _count(leaves, "leaves"), _module(module_mm)
    row = leaf_form(leaves)
    r = m * leaves / 2.0
    dedendum = wheel_addendum_m + PINION_CLEARANCE_M
    root = r - dedendum * m
    if root <= 0:
        raise ArgumentError(f"{leaves} {'leaf' if leaves == 1 else 'leaves'} at module "
                            f"{figure(m, 6)}: the wheel's addendum "
                            f"({wheel_addendum_m:.2f} m) leaves no root circle")
    half = row.thickness_m * m / 2.0
    psi = half / r
    notes = []
    if leaves < 6:
        notes.append(f"{leaves} {'leaf' if leaves == 1 else 'leaves'}: drawn with the 6–7 leaf "
                     "form")
    space_at_root = root * (2 * math.pi / leaves - 2 * psi)
    if space_at_root <= 0.2 * m:
        notes.append("the spaces between leaves close up at the root: too few leaves for "
                     "this wheel's addendum")
    flank = np.vstack([[[root, psi], [0.5 * (root + r), psi]],
                       _round_top(r, half, row.radius_m * m, r + row.addendum_m * m)])
    tip = float(flank[-1, 0])
    params = {"thickness_m": row.thickness_m, "addendum_m": row.addendum_m,
              "addendum_radius_m": row.radius_m, "dedendum_m": dedendum, "shape": row.shape}
    return ToothForm("cycloidal", "pinion", leaves, m, r, tip, root, flank, params,
                     tuple(notes))


# --- involute --------------------------------------------------------------------------------

def _rack_cutter_half(m: float, alpha: float, n_fillet: int = 30, n_flank: int = 50):
    """The +u half of the rack cutter's tooth (the basic rack's space), from its tip fillet to
    beyond the wheel's tip: points (u, v) and unit normals (pointing out of the cutter), v
    measured from the pitch line, negative into the wheel; and the index of the point where
    the fillet meets the straight flank."""
    h_cut = RACK_DEDENDUM_M * m
    rho_f = RACK_FILLET_M * m
    half_pitch = math.pi * m / 4.0
    vc = -h_cut + rho_f
    uc = half_pitch + vc * math.tan(alpha) - rho_f / math.cos(alpha)
    beta = np.linspace(-math.pi / 2, -alpha, n_fillet)
    fil = np.column_stack([uc + rho_f * np.cos(beta), vc + rho_f * np.sin(beta)])
    fil_n = np.column_stack([np.cos(beta), np.sin(beta)])
    v0 = fil[-1, 1]
    v = np.linspace(v0, 1.2 * RACK_ADDENDUM_M * m, n_flank)[1:]
    fl = np.column_stack([half_pitch + v * math.tan(alpha), v])
    fl_n = np.tile([math.cos(alpha), -math.sin(alpha)], (len(v), 1))
    return np.vstack([fil, fl]), np.vstack([fil_n, fl_n]), n_fillet - 1


def _first_crossing(pts: np.ndarray):
    """The first self-crossing of a polyline: (i, j, point) with segment i crossing j > i + 1,
    or None."""
    a, b = pts[:-1], pts[1:]
    n = len(a)
    for i in range(n):
        p, r = a[i], b[i] - a[i]
        q, s = a[i + 2:], b[i + 2:] - a[i + 2:]
        if not len(q):
            break
        den = r[0] * s[:, 1] - r[1] * s[:, 0]
        qp = q - p
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (qp[:, 0] * s[:, 1] - qp[:, 1] * s[:, 0]) / den
            u = (qp[:, 0] * r[1] - qp[:, 1] * r[0]) / den
        hit = np.nonzero((den != 0) & (t >= 0) & (t <= 1) & (u >= 0) & (u <= 1))[0]
        if len(hit):
            j = i + 2 + int(hit[0])
            return i, j, p + t[hit[0]] * r
    return None


def involute_wheel(teeth: int, module_mm: float) -> ToothForm:
    """An external involute wheel cut by the ISO 53 rack (profile A), no profile shift."""
    teeth, m = _count(teeth, "teeth"), _module(module_mm)
    alpha = math.radians(PRESSURE_ANGLE_DEG)
    r = m * teeth / 2.0
    pts, normals, tangent = _rack_cutter_half(m, alpha)
    u, v = pts[:, 0], pts[:, 1]
    # where this point's normal meets the pitch line; the rack has moved so that it is at
    # the pitch point, the wheel has turned s / r
    s = -(u - v * normals[:, 0] / normals[:, 1])
    x, y = u + s, r + v
    phi = s / r
    gx = x * np.cos(phi) - y * np.sin(phi)
    gy = x * np.sin(phi) + y * np.cos(phi)
    rho = np.hypot(gx, gy)
    # half-angle from the centre line of the tooth on the space's right, at pi/2 - pi/z
    eta = np.arctan2(gy, gx) - (math.pi / 2 - math.pi / teeth)
    # polar → plane (x across from the centre line) to trim undercut loops
    cart = np.column_stack([rho * np.sin(eta), rho * np.cos(eta)])
    notes = []
    form_radius = float(rho[tangent])  # where the fillet meets the straight flank
    cross = _first_crossing(cart)
    if cross is not None:
        i, j, pnt = cross
        form_radius = float(np.hypot(*pnt))
        e = float(involute_half_angle(form_radius, teeth, m))  # onto the involute itself
        pnt = form_radius * np.array([math.sin(e), math.cos(e)])
        # after the crossing, the flank goes on from where the involute rises past it: the
        # generated curve can first run back to its cusp on the base circle and out again
        # below the crossing (10-12 teeth), a sliver that crossed the trochoid once more
        tail = cart[j + 1:]
        above = np.nonzero(np.hypot(tail[:, 0], tail[:, 1]) > form_radius)[0]
        tail = tail[above[0]:] if len(above) else tail[:0]
        cart = np.vstack([cart[: i + 1], pnt, tail])
        notes.append(f"{teeth} teeth: the rack undercuts the flanks (fewer than about 17 "
                     "teeth at 20°); drawn as cut, weakened at the root")
    rho = np.hypot(cart[:, 0], cart[:, 1])
    eta = np.arctan2(cart[:, 0], cart[:, 1])
    tip = r + RACK_ADDENDUM_M * m
    root = r - RACK_DEDENDUM_M * m
    if eta[0] > 0 and rho[0] > root:  # start exactly on the root circle
        rho[0] = root
    inside = rho < tip
    last = int(np.nonzero(inside)[0][-1])
    rho, eta = rho[: last + 1], eta[: last + 1]
    eta_tip = float(involute_half_angle(tip, teeth, m))
    if eta_tip <= 0:
        notes.append("the teeth come to a point below the tip circle")
        eta_tip = 0.0
    flank = np.vstack([np.column_stack([rho, eta]), [[tip, eta_tip]]])
    params = {"pressure_angle_deg": PRESSURE_ANGLE_DEG, "addendum_m": RACK_ADDENDUM_M,
              "dedendum_m": RACK_DEDENDUM_M, "root_fillet_m": RACK_FILLET_M,
              "thickness_m": math.pi / 2, "form_radius_mm": form_radius}
    return ToothForm("involute", "wheel", teeth, m, r, tip, root, flank, params, tuple(notes))


def involute_ring(teeth: int, module_mm: float) -> ToothForm:
    """An internal (ring) wheel: tip 1 m inside, root 1.25 m outside the pitch circle. The
    ``flank`` describes the ring's *spaces* (which an external wheel's teeth would fill)."""
    teeth, m = _count(teeth, "teeth"), _module(module_mm)
    alpha = math.radians(PRESSURE_ANGLE_DEG)
    r = m * teeth / 2.0
    rb = r * math.cos(alpha)
    tip = r - RACK_ADDENDUM_M * m  # the ring's teeth point inwards
    root = r + RACK_DEDENDUM_M * m
    notes = []
    lo = max(tip, rb)
    rho = np.linspace(lo, root, 80)
    eta = involute_half_angle(rho, teeth, m)
    if tip < rb:
        notes.append(f"{teeth} teeth: the ring's tips reach inside the base circle; they are "
                     "drawn radial there and should be relieved")
        rho = np.concatenate([[tip], rho])
        eta = np.concatenate([[eta[0]], eta])
    flank = np.column_stack([rho, eta])
    params = {"pressure_angle_deg": PRESSURE_ANGLE_DEG, "addendum_m": RACK_ADDENDUM_M,
              "dedendum_m": RACK_DEDENDUM_M, "thickness_m": math.pi / 2}
    return ToothForm("involute", "ring", teeth, m, r, tip, root, flank, params, tuple(notes))
