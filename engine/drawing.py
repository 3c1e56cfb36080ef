"""Cutting drawings: each wheel's blank and teeth, each plate's holes, and one sheet with all.

:func:`cut_parts` decides, for every wheel with a module, its tooth form (the wheel's own choice
in ``[workshop.wheels.NAME]``, else the train's ``tooth_form``), its role in its meshes (in the
cycloidal form the smaller of two meshing wheels is cut as a pinion), its bore and crossings,
and returns :class:`Part` drawings — closed outlines and circles on named layers, in mm, centred
on the wheel's axis. :func:`plate_part` draws a plate placed by :mod:`engine.plate`;
:func:`layout_sheet` lays every part on one sheet without overlaps. :func:`to_svg` and
:func:`to_dxf` write a drawing (SVG for inspection and laser cutters, DXF for CNC and CAD, both
in millimetres). Nothing here touches the disk.

Layers: ``CUT`` (cut through), ``PITCH`` (pitch circles, for reference only), ``MARK`` (centre
marks and lines of centres, to scribe or ignore), ``NOTE`` (labels).
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Collection
from dataclasses import dataclass, field

import numpy as np

from .checks import (
    hole_mm,
    hole_overlap_text,
    holes_overlap,
    in_cocks,
    in_plate,
    split_plates,
)
from .errors import TrainError
from .figures import figure
from .kinematics import Kinematics
from .plate import (
    Plate,
    balance_text,
    carrier_balance,
    counterweight_sweep,
    on_plate,
    outline,
    place_plates,
    withheld_note,
)
from .toothform import (
    PINION_CLEARANCE_M,
    WHEEL_DEDENDUM_M,
    ToothForm,
    cycloidal_pinion,
    cycloidal_wheel,
    involute_ring,
    involute_wheel,
)
from .train import CROSSINGS_AUTO, FRAME, PLATE_SIDES, Train

LAYERS = {  # name: (SVG colour, DXF colour index, what it is)
    "CUT": ("#b3001b", 1, "cut through"),
    "PITCH": ("#1f5fbf", 5, "pitch circles, for reference"),
    "MARK": ("#2e7d32", 3, "centre marks and lines of centres"),
    "NOTE": ("#444444", 8, "labels"),  # ACI 8: grey, as the docs say (7 is black or white)
}

BORE_MAX_MM = 2.0
"""Default bore: 2 mm (a common arbor size for small clockwork; common practice, no source),
smaller on small pinions (:data:`BORE_ROOT_FRACTION`)."""

BORE_ROOT_FRACTION = 0.4
"""A default bore never exceeds this fraction of the root diameter, rounded down to 0.05 mm."""

# --- crossing out: proportions that follow the wheel's size --------------------------------
# A crossed-out clock wheel is a rim under the teeth, a hub (the boss riveted to the arbor's
# collet) and crossings (spokes) between them. Its rim, hub and crossings grow with the wheel,
# not with the tooth: a 300-tooth wheel held by crossings three modules wide is spindly.
# Sources looked for (published crossing-out guidance, 2026-12): the counts and the taper
# have pages that say so, cited beside them; no page giving the rim's depth, the hub's size
# or the crossings' width as figures was found, so those stay "common practice, no source",
# the fractions from memory. The crossing-out jig page below names a horological text as its
# own source (M. Wild, "Wheel and Pinion Cutting in Horology"): the figures to check these
# against when it is at hand.

RIM_FRACTION = 0.1
"""Default rim depth below the root circle: a tenth of the root radius (common practice, no
source found; the figure from memory of English clock wheels, whose rims are about a tenth
of their radius deep) ..."""

RIM_MIN_MODULES = 2.0
"""... and never under 2 modules, so a small wheel's rim still stands stiff under the tooth
spaces (common practice, no source)."""

HUB_FRACTION = 0.2
"""The hub's radius: a fifth of the root radius, and at least the rim's depth round the bore
(common practice, no source found; from memory)."""

CROSSING_SHARE = 1 / 12
"""The crossings together take this share of the rim's inner circle, so a wheel with fewer
crossings has stouter ones (common practice, no source found; from memory: about 3.5 mm for
each of four crossings of a 60 mm clock wheel)."""

CROSSING_TAPER = 1.5
"""A crossing is this many times wider at the hub than at the rim. Clockmakers taper their
crossings toward the rim (a crossing-out jig's pegs are turned to the sizes that give the
crossing its width at the hub and at the rim, and so its taper:
clickspringprojects.com, "Wheel Crossing Jig"; two clockmakers remarked on the lack of taper
in milled ones: raynerd.co.uk/1781); the ratio 1.5 itself is from memory, no source found."""

HUB_SHARE = 0.6
"""At the hub the crossings take at most this share of its circle, leaving room for the
windows' inner ends (our rule, no source)."""

CROSSING_COUNTS = ((50.0, 4), (100.0, 5), (160.0, 6), (math.inf, 8))
"""``crossings = "auto"``: (pitch diameter below, in mm; count). 4, 5, 6 and 8 are the
traditional counts of a clock wheel's crossings (the crossing-out jig above is indexed for them:
clickspringprojects.com, "Wheel Crossing Jig"); which count for which size is common
practice, no source found."""

CORNER_FRACTION = 0.25
"""The windows' corners are rounded to a quarter of the crossing's width at the rim: a rotary
cutter, a laser's kerf or a saw's blade leaves a round there anyway, and a sharp inside
corner is where a crossing would crack (common practice, no source; the fraction from
memory). Crossings filed out by hand are often finished with square corners at the rim (a
clockmaker filing a wheel's crossings aims for them: Clickspring, "How To Make A Clock In The
Home Machine Shop - Part 6 - Crossing Out The Wheels", read as reposted at ataksports.com):
file them square on the drawn line where that is wanted."""

MIN_CROSSING_MODULES = 1.0
"""A crossing narrower at the rim than a module is too frail to cut or to hold the rim true:
more crossings than leave that are refused and the wheel left solid (our rule, no source)."""

MIN_WINDOW_CROSSINGS = 2.0
"""A window shallower, from hub to rim, than this many crossing widths is not worth cutting:
the wheel is left solid (our rule, no source)."""

MIN_WALL_MODULES = 1.0
"""A bore leaving less than one module of metal below the root circle is pointed out."""

TEXT_MM = 2.5
GAP_MM = 4.0

CAVEAT = ("These drawings are design estimates from ideal geometry: check the first parts "
          "against the drawing and the mating wheel before cutting a set, and follow proper "
          "engineering practice and local rules for anything that bears load or is shown to "
          "the public.")


@dataclass
class Part:
    """One drawing: ``polylines`` and ``circles`` on layers, ``texts``; mm, y up."""

    name: str  # file stem
    title: str
    kind: str  # "wheel" or "plate"
    polylines: list[tuple[str, np.ndarray]] = field(default_factory=list)  # closed
    lines: list[tuple[str, np.ndarray]] = field(default_factory=list)  # open
    circles: list[tuple[str, float, float, float]] = field(default_factory=list)  # layer,x,y,r
    texts: list[tuple[float, float, float, str]] = field(default_factory=list)  # x,y,h,text
    info: dict = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)

    def bbox(self) -> tuple[float, float, float, float]:
        xs, ys = [], []
        for _, p in self.polylines + self.lines:
            xs += [p[:, 0].min(), p[:, 0].max()]
            ys += [p[:, 1].min(), p[:, 1].max()]
        for _, x, y, r in self.circles:
            xs += [x - r, x + r]
            ys += [y - r, y + r]
        for x, y, h, t in self.texts:
            xs += [x, x + _text_width(t, h)]
            ys += [y, y + h]
        return min(xs), min(ys), max(xs), max(ys)

    def moved(self, dx: float, dy: float) -> Part:
        return Part(self.name, self.title, self.kind,
                    [(layer, p + [dx, dy]) for layer, p in self.polylines],
                    [(layer, p + [dx, dy]) for layer, p in self.lines],
                    [(layer, x + dx, y + dy, r) for layer, x, y, r in self.circles],
                    [(x + dx, y + dy, h, t) for x, y, h, t in self.texts], self.info, self.notes)


def _text_width(text: str, height: float) -> float:
    return 0.62 * height * len(text)


def slug(name: str) -> str:
    """A file-name-safe form of a name from the train file."""
    s = re.sub(r"[^A-Za-z0-9_.-]+", "_", name).strip("._")
    return s or "part"


# --- which form, which role ---------------------------------------------------------------

def wheel_modules(train: Train) -> dict[str, tuple[float, int]]:
    """Each wheel's module and the first mesh giving it; two modules on one wheel is an error."""
    out: dict[str, tuple[float, int]] = {}
    for m in train.meshes:
        if m.module_mm is None:
            continue
        for w in (m.driver, m.driven):
            if w in out and abs(out[w][0] - m.module_mm) > 1e-12:
                raise TrainError(train.source, m.label, f"wheel '{w}' is cut at module "
                                 f"{figure(out[w][0], 6)} mm for mesh {out[w][1]} but at "
                                 f"{figure(m.module_mm, 6)} mm here: one wheel cannot be cut at two "
                                 "modules")
            out.setdefault(w, (m.module_mm, m.index))
    return out


def tooth_forms(train: Train, form: str | None = None) -> dict[str, ToothForm]:
    """The tooth form of every wheel with a module. ``form`` overrides the train's default
    (a wheel's own ``form`` in ``[workshop.wheels.NAME]`` still wins)."""
    modules = wheel_modules(train)
    chosen = {w: train.workshop.form_of(w, form) for w in modules}
    rings = {m.ring for m in train.meshes if m.ring}
    # an internal wheel is drawn involute only, so the wheel meshing inside it is too
    forced: dict[str, str] = {}  # wheel -> the internal wheel that makes it involute
    for m in train.meshes:
        if m.module_mm is not None and m.internal:
            inner = m.driven if m.ring == m.driver else m.driver
            if chosen[inner] == "cycloidal":
                chosen[inner] = "involute"
                forced[inner] = m.ring
    for m in train.meshes:
        if m.module_mm is None or m.internal:
            continue
        a, b = m.driver, m.driven
        if chosen[a] != chosen[b]:
            inv = a if chosen[a] == "involute" else b
            if inv in forced:
                other = b if inv == a else a
                raise TrainError(train.source, m.label, f"'{inv}' meshes the internal wheel "
                                 f"'{forced[inv]}', which is drawn involute only, and "
                                 f"'{other}' here, cut cycloidal: two wheels in mesh need one "
                                 f"tooth form (set form = \"involute\" in "
                                 f"[workshop.wheels.{other}])")
            raise TrainError(train.source, m.label, f"'{a}' is to be cut {chosen[a]} but "
                             f"'{b}' {chosen[b]}: two wheels in mesh need one tooth form "
                             "(set form in [workshop.wheels.NAME] for both)")
    # cycloidal: in each mesh the larger is cut as a wheel and the smaller as a pinion (equal
    # counts: the driver is the wheel); a wheel that is the larger in any mesh is a wheel
    smaller: dict[str, list[str]] = {}  # wheel -> its smaller mates
    larger: dict[str, list[str]] = {}  # wheel -> its larger mates
    for m in train.meshes:
        if m.module_mm is None or m.internal or chosen[m.driver] != "cycloidal":
            continue
        za, zb = train.wheels[m.driver].teeth, train.wheels[m.driven].teeth
        big, small = (m.driver, m.driven) if za >= zb else (m.driven, m.driver)
        smaller.setdefault(big, []).append(small)
        larger.setdefault(small, []).append(big)
    out: dict[str, ToothForm] = {}
    # largest first: a wheel's addendum sets the dedendum of the wheels it drives into
    for w in sorted(modules, key=lambda n: -train.wheels[n].teeth):
        mod = modules[w][0]
        z = train.wheels[w].teeth
        try:
            if w in rings:
                out[w] = involute_ring(z, mod)
                if chosen[w] == "cycloidal":
                    out[w] = _with_note(out[w], "an internal wheel: drawn in the involute "
                                        "form (the cycloidal form is for external wheels)")
            elif chosen[w] == "involute":
                out[w] = involute_wheel(z, mod)
                if w in forced:
                    out[w] = _with_note(out[w], f"meshes the internal wheel '{forced[w]}': "
                                        "drawn in the involute form, as that wheel is")
            else:
                room = [out[b].params["addendum_m"] + PINION_CLEARANCE_M
                        for b in larger.get(w, ()) if b in out]
                if w in smaller:
                    leaves = min(train.wheels[s].teeth for s in smaller[w])
                    out[w] = cycloidal_wheel(z, mod, leaves,
                                             max([WHEEL_DEDENDUM_M, *room]))
                else:
                    out[w] = cycloidal_pinion(z, mod, max(room) - PINION_CLEARANCE_M)
        except ValueError as exc:
            raise TrainError(train.source, f"wheel '{w}'", f"cannot be drawn: {exc}") from None
    return out


def _with_note(t: ToothForm, note: str) -> ToothForm:
    return ToothForm(t.form, t.role, t.teeth, t.module_mm, t.pitch_radius_mm, t.tip_radius_mm,
                     t.root_radius_mm, t.flank, t.params, t.notes + (note,))


# --- wheel blanks ------------------------------------------------------------------------------

def default_bore_mm(tooth: ToothForm) -> float:
    """The bore drawn when the file chooses none: :data:`BORE_MAX_MM`, or
    :data:`BORE_ROOT_FRACTION` of the root diameter when that is smaller, rounded down to
    0.05 mm — or, below 0.05 mm (a watch-size pinion), to a step of its own size (0.002 mm for
    a cap of 0.0024 mm) — and, where the root circle has room for it, small enough to leave
    :data:`MIN_WALL_MODULES` of metal under the teeth. It always fits inside the root circle,
    so no message ever names a bore the file did not choose as too wide."""
    inner = tooth.root_radius_mm if tooth.role != "ring" else tooth.tip_radius_mm
    cap = min(BORE_MAX_MM, BORE_ROOT_FRACTION * 2 * inner)
    walled = 2 * (inner - MIN_WALL_MODULES * tooth.module_mm)
    if walled >= 0.5 * cap:  # a module of metal under the teeth, where the blank allows it
        cap = min(cap, walled)
    step = 0.05 if cap >= 0.05 else 10.0 ** math.floor(math.log10(cap))
    return round(math.floor(cap / step * (1 + 1e-12)) * step, 12)


def wheel_part(train: Train, wheel: str, tooth: ToothForm, stem: str) -> Part:
    shop = train.workshop
    own = shop.wheel(wheel)
    z, m = tooth.teeth, tooth.module_mm
    role = {"wheel": "wheel", "pinion": "pinion", "ring": "internal wheel"}[tooth.role]
    leaves = tooth.role == "pinion" and z < AUTO_SOLID_TEETH
    if tooth.role == "pinion" and not leaves:  # a wheel in body, the smaller of its mesh
        role = "wheel, pinion form (the smaller of its mesh)"
    title = f"{wheel}: {z} {'leaves' if leaves else 'teeth'}, module {figure(m, 6)}, " \
            f"{tooth.form} {role}"
    part = Part(stem, title, "wheel")
    part.notes.extend(tooth.notes)
    outline = tooth.outline()
    part.polylines.append(("CUT", outline))
    part.circles.append(("PITCH", 0.0, 0.0, tooth.pitch_radius_mm))
    tip_d, root_d = 2 * tooth.tip_radius_mm, 2 * tooth.root_radius_mm
    info = {"wheel": wheel, "arbor": train.wheels[wheel].arbor, "teeth": z, "module_mm": m,
            "form": tooth.form, "role": tooth.role, "pitch_diameter_mm": 2 * tooth.pitch_radius_mm,
            "tip_diameter_mm": tip_d, "root_diameter_mm": root_d,
            "tooth_thickness_mm": tooth.thickness_at_pitch_mm(),
            "proportions_m": {k: v for k, v in tooth.params.items()
                              if isinstance(v, int | float) and not k.endswith("_mm")}}
    if tooth.role == "ring":
        rim = own.rim_mm or shop.rim_mm or rim_depth_mm(tooth)
        outer = tooth.root_radius_mm + rim
        part.circles.append(("CUT", 0.0, 0.0, outer))
        info["outside_diameter_mm"] = 2 * outer
        part.info = info
        _label(part, title, -outer)
        return part
    blank = wheel_blank(train, wheel, tooth)
    part.notes.extend(blank.notes)
    info["bore_mm"] = blank.bore_mm
    info["bore_chosen"] = blank.chosen
    if not blank.bored:  # a pinion this small is cut on its arbor: nothing to bore
        del info["bore_mm"]
        part.circles.append(("MARK", 0.0, 0.0, blank.bore_mm / 2))
        part.info = info
        _label(part, title, -tooth.tip_radius_mm)
        return part
    part.circles.append(("CUT", 0.0, 0.0, blank.bore_mm / 2))
    if blank.crossed is not None:
        part.polylines.extend(("CUT", w) for w in blank.crossed.windows)
        info.update(blank.crossed.info())
    part.info = info
    _label(part, title, -tooth.tip_radius_mm)
    return part


@dataclass(frozen=True)
class Blank:
    """What is cut from a wheel's blank besides its teeth: its bore (``chosen`` by the file,
    else the tool's; ``bored`` false for a pinion too small to bore, cut on its arbor) and
    its crossings (``crossed``, None: solid), with the notes the drawing gives them."""

    bore_mm: float
    chosen: bool
    bored: bool
    crossed: CrossedBlank | None
    notes: tuple[str, ...] = ()


def wheel_blank(train: Train, wheel: str, tooth: ToothForm) -> Blank:
    """The bore and crossings of an external wheel's blank as :func:`wheel_part` draws them
    (the one place they are decided: the carrier balance weighs the same blank). Raises
    :class:`TrainError` for a bore the file chooses wider than the root circle."""
    shop, own = train.workshop, train.workshop.wheel(wheel)
    z, m = tooth.teeth, tooth.module_mm
    chosen = own.bore_mm or shop.bore_mm
    bore = chosen or default_bore_mm(tooth)
    wall = tooth.root_radius_mm - bore / 2
    where = (f"[workshop.wheels.{wheel}] bore_mm" if own.bore_mm else "[workshop] bore_mm")
    root_d = 2 * tooth.root_radius_mm
    if wall <= 0:  # only a chosen bore: the default always fits
        raise TrainError(train.source, f"wheel '{wheel}'", f"the bore of {figure(bore, 6)} mm "
                         f"({where}) is wider than the root circle ({figure(root_d, 6)} mm)")
    notes = []
    if wall < MIN_WALL_MODULES * m:
        if chosen is not None:
            notes.append(f"the bore ({figure(bore, 6)} mm, {where}) leaves "
                         f"{figure(wall, 3)} mm of metal below the teeth, less than one "
                         "module: cut the leaves on the arbor, or bore smaller")
        else:  # a pinion this small is cut on its arbor: nothing to bore, nothing cut
            notes.append(f"too small to bore and leave a module of metal below the "
                         f"teeth (root circle {figure(root_d, 6)} mm): cut the leaves on "
                         "the arbor; the file choosing no bore_mm, none is cut (the "
                         f"{figure(bore, 6)} mm circle on the MARK layer marks the centre)")
            return Blank(bore, False, False, None, tuple(notes))
    asked = own.crossings if own.crossings is not None else shop.crossings
    crossed = None
    if asked:
        auto = asked == CROSSINGS_AUTO
        count = crossing_count(tooth) if auto else asked
        # a count for the whole train is for its wheels: a pinion stays solid without a word
        quiet = auto or (own.crossings is None and z < AUTO_SOLID_TEETH)
        count = 0 if own.crossings is None and z < AUTO_SOLID_TEETH else count
        crossed = crossed_blank(tooth, bore, count, own.rim_mm or shop.rim_mm) if count else None
        if crossed is None and not quiet:
            rim = own.rim_mm or shop.rim_mm or rim_depth_mm(tooth)
            notes.append(f"too small for {asked} crossings with a {figure(rim, 3)} mm "
                         "rim: left solid")
    return Blank(bore, chosen is not None, True, crossed, tuple(notes))


def wheel_area_mm2(train: Train, wheel: str, tooth: ToothForm) -> tuple[float, bool]:
    """The area of a wheel's face as cut, for weighing it: the disc of its pitch circle (the
    teeth standing beyond it about fill the spaces cut within it; the bore counted full, its
    arbor filling it) less the windows between its crossings where :func:`wheel_blank` crosses
    it out; an internal wheel, the ring from its pitch circle to its rim. With it, whether
    crossings were taken out. A bore too wide to cut leaves the wheel weighed solid."""
    r = tooth.pitch_radius_mm
    if tooth.role == "ring":
        shop, own = train.workshop, train.workshop.wheel(wheel)
        outer = tooth.root_radius_mm + (own.rim_mm or shop.rim_mm or rim_depth_mm(tooth))
        return math.pi * (outer ** 2 - r ** 2), False
    try:
        crossed = wheel_blank(train, wheel, tooth).crossed
    except TrainError:  # said by wheelwork cut; weighed solid here
        crossed = None
    if crossed is None:
        return math.pi * r ** 2, False
    windows = sum(abs(_polygon_area(w)) for w in crossed.windows)
    return math.pi * r ** 2 - windows, True


def wheel_areas(train: Train, forms: dict[str, ToothForm], plates: list[Plate]
                ) -> dict[str, tuple[float, bool]]:
    """:func:`wheel_area_mm2` of every wheel a carrier's plate takes round (the frame's wheels
    are not weighed)."""
    carried = {w for p in plates if p.mount != FRAME for h in p.holes.values()
               for a in h.arbors if train.arbors[a].mount == p.mount
               for w in train.arbors[a].wheels if w in forms}
    return {w: wheel_area_mm2(train, w, forms[w]) for w in carried}


def _polygon_area(points: np.ndarray) -> float:
    """The signed area of a closed polyline (the shoelace formula)."""
    x, y = points[:, 0], points[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def rim_depth_mm(tooth: ToothForm) -> float:
    """The default rim below the root circle (outside it, for an internal wheel): a tenth of
    the root radius, at least :data:`RIM_MIN_MODULES` (3 modules round an internal wheel,
    whose rim is all that holds it)."""
    least = (3.0 if tooth.role == "ring" else RIM_MIN_MODULES) * tooth.module_mm
    return max(least, RIM_FRACTION * tooth.root_radius_mm)


AUTO_SOLID_TEETH = 20
"""``crossings = "auto"`` leaves a wheel of fewer teeth solid: a pinion is cut from the solid
(common practice, no source). A larger wheel cut to the pinion form (47 teeth driven by 127)
is crossed out like any wheel of its size."""

AUTO_SOLID_MM = 20.0
"""... and a wheel under this pitch diameter: its windows would be slots a few millimetres
long between crossings a module wide (common practice, no source)."""


def crossing_count(tooth: ToothForm) -> int:
    """How many crossings ``crossings = "auto"`` gives a wheel, by its pitch diameter
    (:data:`CROSSING_COUNTS`); 0 (solid) under :data:`AUTO_SOLID_TEETH` teeth or
    :data:`AUTO_SOLID_MM` across."""
    d = 2 * tooth.pitch_radius_mm
    if tooth.teeth < AUTO_SOLID_TEETH or d < AUTO_SOLID_MM:
        return 0
    return next(n for below, n in CROSSING_COUNTS if d < below)


@dataclass(frozen=True)
class CrossedBlank:
    """A crossed-out blank: ``count`` crossings from a hub of radius ``hub_mm`` to a rim
    ``rim_mm`` deep under the teeth, each ``width_rim_mm`` wide at the rim and
    ``width_hub_mm`` at the hub; ``windows`` the cut-outs between them."""

    count: int
    rim_mm: float
    hub_mm: float
    width_rim_mm: float
    width_hub_mm: float
    windows: list
    corner_mm: float = 0.0  # the rounds in the windows' corners (at most; halved to fit)

    def info(self) -> dict:
        return {"crossings": self.count, "rim_mm": self.rim_mm,
                "hub_diameter_mm": 2 * self.hub_mm,
                "crossing_width_mm": {"at_rim": self.width_rim_mm, "at_hub": self.width_hub_mm},
                "corner_radius_mm": self.corner_mm}


def crossed_blank(tooth: ToothForm, bore_mm: float, count: int,
                  rim_mm: float | None = None) -> CrossedBlank | None:
    """The crossings of a wheel, proportioned to its size: a rim of ``rim_mm`` (else
    :func:`rim_depth_mm`), a hub of :data:`HUB_FRACTION` of the root radius (at least the rim's
    depth round the bore), crossings together :data:`CROSSING_SHARE` of the rim's inner circle,
    :data:`CROSSING_TAPER` times wider at the hub (within :data:`HUB_SHARE` of its circle);
    ``None`` when the windows between them would be too small to cut."""
    root = tooth.root_radius_mm
    rim = rim_mm or rim_depth_mm(tooth)
    rim_inner = root - rim
    hub = max(bore_mm / 2 + rim, HUB_FRACTION * root)
    if rim_inner <= hub:
        return None
    w_rim = CROSSING_SHARE * 2 * math.pi * rim_inner / count
    w_hub = min(CROSSING_TAPER * w_rim, HUB_SHARE * 2 * math.pi * hub / count)
    w_rim = min(w_rim, w_hub)  # never wider at the rim than at the hub
    if w_rim < MIN_CROSSING_MODULES * tooth.module_mm:
        return None
    if rim_inner - hub < MIN_WINDOW_CROSSINGS * w_rim:
        return None
    corner = CORNER_FRACTION * w_rim
    windows = crossing_windows(rim_inner, hub, count, w_rim, width_hub=w_hub, corner=corner)
    if windows is None:
        return None
    return CrossedBlank(count, rim, hub, w_rim, w_hub, windows, corner)


def crossing_windows(rim_inner: float, hub_outer: float, n: int, width: float,
                     arc_step: float = math.radians(2.0), width_hub: float | None = None,
                     corner: float = 0.0):
    """The ``n`` windows between straight crossings from a hub to a rim, ``width`` wide at the
    rim and ``width_hub`` (default the same) at the hub, as closed polylines, their corners
    rounded to ``corner`` (halved until the rounds fit; sharp when none does); ``None`` when
    they do not fit."""
    width_hub = width if width_hub is None else width_hub
    if rim_inner - hub_outer < width or width_hub / 2 >= hub_outer or width / 2 >= rim_inner:
        return None
    d_out = math.asin(width / 2 / rim_inner)
    d_in = math.asin(width_hub / 2 / hub_outer)
    step = 2 * math.pi / n
    if step - 2 * d_in < math.radians(5):
        return None
    out = []
    for i in range(n):
        t0, t1 = i * step, (i + 1) * step
        pts = None
        rho = corner
        for _ in range(4):  # a corner radius too large for the window is halved
            if rho <= 0:
                break
            pts = _rounded_window(rim_inner, hub_outer, t0, t1, d_out, d_in, rho, arc_step)
            if pts is not None:
                break
            rho /= 2
        if pts is None:  # sharp corners
            a_out = np.linspace(t0 + d_out, t1 - d_out,
                                max(int((step - 2 * d_out) / arc_step), 2))
            a_in = np.linspace(t1 - d_in, t0 + d_in, max(int((step - 2 * d_in) / arc_step), 2))
            pts = np.vstack([_arc(0.0, 0.0, rim_inner, a_out), _arc(0.0, 0.0, hub_outer, a_in)])
        out.append(pts)
    return out


def _arc(cx: float, cy: float, r: float, angles: np.ndarray) -> np.ndarray:
    return np.column_stack([cx + r * np.cos(angles), cy + r * np.sin(angles)])


def _fillet(rc: float, inside: bool, p: np.ndarray, q: np.ndarray, into: np.ndarray,
            rho: float):
    """The round of radius ``rho`` in the corner between the circle of radius ``rc`` about the
    wheel's centre and the straight crossing edge from ``p`` (hub end) to ``q`` (rim end),
    on the window's side (``into``, a point inside the window): its centre, its tangent point
    on the circle and on the edge, and how far along the edge from ``p`` that is; ``None``
    when no such round exists."""
    u = (q - p) / np.hypot(*(q - p))
    nrm = np.array([-u[1], u[0]])
    if np.dot(into - p, nrm) < 0:
        nrm = -nrm
    r_c = rc - rho if inside else rc + rho
    start = p + rho * nrm
    b, c = float(np.dot(start, u)), float(np.dot(start, start)) - r_c * r_c
    disc = b * b - c
    if r_c <= 0 or disc < 0:
        return None
    s = -b + math.sqrt(disc)  # the centre outward of the hub end
    centre = start + s * u
    on_circle = centre * (rc / np.hypot(*centre))
    on_edge = centre - rho * nrm
    return centre, on_circle, on_edge, float(np.dot(on_edge - p, u))


def _fillet_arc(centre, a, b, step: float) -> np.ndarray:
    """Points of the round about ``centre`` from ``a`` to ``b``, the short way."""
    r = float(np.hypot(*(a - centre)))
    t0 = math.atan2(a[1] - centre[1], a[0] - centre[0])
    t1 = math.atan2(b[1] - centre[1], b[0] - centre[0])
    dt = (t1 - t0 + math.pi) % (2 * math.pi) - math.pi
    k = max(int(math.ceil(abs(dt) / step)), 2)
    return _arc(centre[0], centre[1], r, t0 + dt * np.linspace(0.0, 1.0, k + 1))


def _rounded_window(rim: float, hub: float, t0: float, t1: float, d_out: float, d_in: float,
                    rho: float, arc_step: float):
    """One window between the crossings at ``t0`` and ``t1`` with its four corners rounded to
    ``rho``; ``None`` when the rounds do not fit the window."""
    def pt(r, t):
        return np.array([r * math.cos(t), r * math.sin(t)])

    mid = pt((rim + hub) / 2, (t0 + t1) / 2)
    h0, r0 = pt(hub, t0 + d_in), pt(rim, t0 + d_out)  # the crossing at t0, its window side
    h1, r1 = pt(hub, t1 - d_in), pt(rim, t1 - d_out)  # the crossing at t1
    corners = [_fillet(rim, True, h0, r0, mid, rho), _fillet(rim, True, h1, r1, mid, rho),
               _fillet(hub, False, h1, r1, mid, rho), _fillet(hub, False, h0, r0, mid, rho)]
    if any(c is None for c in corners):
        return None
    a, b, c, d = corners
    ang = [math.atan2(x[1][1], x[1][0]) for x in corners]
    ang = [t0 + (t - t0) % (2 * math.pi) for t in ang]  # within this window's turn
    if not (ang[0] < ang[1] and ang[3] < ang[2]):  # rounds meeting on the rim or the hub
        return None
    for p_, q_, lo, hi in ((h0, r0, d, a), (h1, r1, c, b)):
        if lo[3] >= hi[3] or lo[3] < 0 or hi[3] > float(np.hypot(*(q_ - p_))):
            return None  # rounds meeting along a crossing, or past its ends
    fine = math.radians(10.0)
    return np.vstack([
        _arc(0.0, 0.0, rim, np.linspace(ang[0], ang[1],
                                        max(int((ang[1] - ang[0]) / arc_step), 2))),
        _fillet_arc(b[0], b[1], b[2], fine),
        _fillet_arc(c[0], c[2], c[1], fine),
        _arc(0.0, 0.0, hub, np.linspace(ang[2], ang[3],
                                        max(int((ang[2] - ang[3]) / arc_step), 2))),
        _fillet_arc(d[0], d[1], d[2], fine),
        _fillet_arc(a[0], a[2], a[1], fine)])


def _label(part: Part, text: str, below: float) -> None:
    """The part's label under it; smaller on small parts (1 to 2.5 mm high)."""
    h = min(TEXT_MM, max(1.0, -below / 6))
    part.texts.append((-_text_width(text, h) / 2, below - 2 * h, h, text))


# --- plates -----------------------------------------------------------------------------------

CARRIER_OUTLINES = ("box", "disc", "arm")
"""How a carrier's plate is drawn: a rectangle round its holes and wheels, a disc centred on
its own axis (balanced in itself as it turns), or arms from its axis to its holes with a
counterweight that balances them and the wheels they carry (:func:`engine.plate.carrier_arm`).
The frame's plate is always a rectangle."""


def _inside(poly: np.ndarray, x: float, y: float, inset: float = 0.0) -> bool:
    """Whether (x, y) lies inside the closed polygon (even-odd rule), at least ``inset`` from
    its edges."""
    a, b = poly, np.roll(poly, -1, axis=0)
    cross = (a[:, 1] > y) != (b[:, 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xs = a[:, 0] + (y - a[:, 1]) * (b[:, 0] - a[:, 0]) / (b[:, 1] - a[:, 1])
    if np.count_nonzero(cross & (xs > x)) % 2 == 0:
        return False
    e = b - a
    t = np.clip(((x - a[:, 0]) * e[:, 0] + (y - a[:, 1]) * e[:, 1])
                / np.maximum((e ** 2).sum(axis=1), 1e-30), 0.0, 1.0)
    gap = np.hypot(a[:, 0] + t * e[:, 0] - x, a[:, 1] + t * e[:, 1] - y)
    return bool(gap.min() >= inset)


COCK_REACH_MM = 12.0
"""A cock drawn on a plate runs this far from its pivot to the centre of its foot's screw (the
tool's own proportions, no source: shape the cock to your design)."""
COCK_RIM_MM = 2.5
"""Metal round a cock's pivot hole, beyond the hole's radius (the tool's own)."""
COCK_FOOT_MM = 4.0
"""The radius of a cock's round foot, round its one screw (the tool's own)."""
COCK_SCREW_MM = 2.0
"""The cock's screw, M2: its centre and its size marked on the plate, to be tapped there (the
tool's own choice)."""
COCK_DIRECTIONS = 24


def _two_circle_hull(c0: np.ndarray, r0: float, c1: np.ndarray, r1: float) -> np.ndarray:
    """The outline of the hull of two circles (plane geometry: an arc of each joined by their
    outer tangents), anticlockwise."""
    e = c1 - c0
    length = float(np.hypot(*e))
    phi = math.atan2(e[1], e[0])
    alpha = math.acos(max(-1.0, min(1.0, (r0 - r1) / length)))
    back = np.linspace(phi + alpha, phi + 2 * np.pi - alpha, 48)
    front = np.linspace(phi - alpha, phi + alpha, 24)
    return np.vstack([_arc(*c0, r0, back), _arc(*c1, r1, front)])


def cock_outline(pivot: tuple[float, float], hole_mm: float, others: list[tuple[float, float,
                 float]], fits) -> tuple[np.ndarray, tuple[float, float]]:
    """A cock as a bar from its pivot (a round end :data:`COCK_RIM_MM` beyond the hole) to a
    round foot :data:`COCK_REACH_MM` away with one screw: of :data:`COCK_DIRECTIONS` ways,
    the one whose bar beyond the pivot's end stays farthest from the other holes (``others``:
    x, y, radius) with its foot on the plate (``fits``, the plate's test for a box). Its
    outline and the screw's centre."""
    px, py = pivot
    r0 = hole_mm / 2 + COCK_RIM_MM
    best = None
    for k in range(COCK_DIRECTIONS):
        t = 2 * np.pi * k / COCK_DIRECTIONS
        u = np.array([math.cos(t), math.sin(t)])
        foot = np.array([px, py]) + COCK_REACH_MM * u
        room = math.inf
        for ox, oy, orad in others:
            rel = np.array([ox - px, oy - py])
            s = min(max(float(rel @ u), r0), COCK_REACH_MM)  # the bar beyond the pivot's end
            room = min(room, float(np.hypot(*(rel - s * u))) - orad - COCK_FOOT_MM)
        on = fits(foot[0] - COCK_FOOT_MM, foot[1] - COCK_FOOT_MM, 2 * COCK_FOOT_MM,
                  2 * COCK_FOOT_MM)
        score = (on, room)
        if best is None or score > best[0]:
            best = (score, foot)
    foot = best[1]
    return _two_circle_hull(np.array([px, py]), r0, foot, COCK_FOOT_MM), (float(foot[0]),
                                                                         float(foot[1]))


def plate_part(train: Train, plate: Plate, pitch: dict[str, float], stem: str,
               reach: dict[str, float] | None = None, carrier_outline: str = "box",
               areas: dict[str, tuple[float, bool]] | None = None,
               side: str | None = None, plates: list[Plate] | None = None) -> Part:
    """The plate: a pivot hole per axis, centre marks, lines of centres, pitch circles. Its
    outline (:func:`engine.plate.outline`) is a rounded rectangle covering every hole by
    ``PLATE_MARGIN_MM`` and the wheels over it (their ``reach``, the tip radius, else the pitch
    radius) by ``PLATE_CLEAR_MM``; a carrier's, with ``carrier_outline="disc"``, a disc round
    its axis covering the same. A carrier out of balance as it turns is said in a note (its
    wheels weighed by ``areas``, :func:`wheel_area_mm2`, else as solid discs). With ``side``
    (``"front"`` or ``"back"``: the mount's plates differ, :func:`engine.checks.split_plates`),
    that plate alone: an axis whose pivot on that side sits in a cock or bridge
    (``pivots_in``) gets no hole, only its centre marked and named as the cock's; the
    placement's and the balance's notes go with the front plate. ``plates``, all the train's,
    let a carrier cut as arms say what its counterweight sweeps over
    (:func:`engine.plate.counterweight_sweep`)."""
    pivot = train.workshop.pivot_mm
    # a hole is as wide as the widest pivot of the arbors it holds in this plate (an arbor's
    # own pivot_mm, else [workshop]'s)
    drilled = {h.axis: (in_plate(train, h.arbors, plate.mount, side) if side else
                        list(h.arbors)) for h in plate.holes.values()}
    holes = [h for h in plate.holes.values() if drilled[h.axis]]
    cocks = [h for h in plate.holes.values() if not drilled[h.axis]]
    size = {h.axis: hole_mm(train, drilled[h.axis] or h.arbors)[0]
            for h in plate.holes.values()}
    what = "the frame" if plate.mount == FRAME else f"carrier '{plate.mount}'"
    sizes = sorted({size[h.axis] for h in holes})
    title = (f"{side + ' ' if side else ''}plate of {what}: {len(holes)} holes"
             + (f", {len(cocks)} cock{'s' if len(cocks) > 1 else ''}" if cocks else "")
             + f", pivots {' / '.join(figure(s, 6) for s in sizes) or figure(pivot, 6)} mm")
    part = Part(stem, title, "plate")
    over = {**pitch, **(reach or {})}
    shape, dims = outline(train, plate, over, carrier_outline, pitch, areas)
    if shape == "arm":  # arms from the axis to the holes, and a counterweight
        poly = dims.polygon
        x0, y0, x1, y1 = dims.box
        part.polylines.append(("CUT", poly))
        if dims.weight_at is not None:
            cx, cy = dims.weight_at
            c = max(dims.weight_r_mm / 4, 2.0)
            part.lines.append(("MARK", np.array([[cx - c, cy], [cx + c, cy]])))
            part.lines.append(("MARK", np.array([[cx, cy - c], [cx, cy + c]])))

        def fits(tx, ty, w, h):  # every corner of the name's box inside the arms
            return all(_inside(poly, cx, cy, LABEL_INSET_MM)
                       for cx in (tx, tx + w) for cy in (ty, ty + h))
    elif shape == "disc":
        rad = dims[2]
        x0, y0, x1, y1 = -rad, -rad, rad, rad
        part.polylines.append(("CUT", _arc(0.0, 0.0, rad, np.linspace(
            0, 2 * np.pi, max(72, int(2 * np.pi * rad / 2)), endpoint=False))))

        def fits(tx, ty, w, h):  # every corner of the name's box inside the disc
            return all(math.hypot(cx, cy) <= rad - LABEL_INSET_MM
                       for cx in (tx, tx + w) for cy in (ty, ty + h))
    else:
        x0, y0, x1, y1 = dims
        part.polylines.append(("CUT", _rounded_rect(x0, y0, x1, y1, 3.0)))

        def fits(tx, ty, w, h):
            return (x0 + LABEL_INSET_MM <= tx and tx + w <= x1 - LABEL_INSET_MM
                    and y0 + LABEL_INSET_MM <= ty and ty + h <= y1 - LABEL_INSET_MM)
    keyed: list[tuple[str, str]] = []  # (key, hole name) for names too long for the plate
    feet = {}
    for h in cocks:  # each cock drawn as a bar to a screwed foot (MARK: it stands on the plate)
        others = [(o.x_mm, o.y_mm, size[o.axis] / 2) for o in plate.holes.values() if o is not h]
        bar, feet[h.axis] = cock_outline((h.x_mm, h.y_mm), size[h.axis], others, fits)
        part.polylines.append(("MARK", bar))
        part.circles.append(("MARK", *feet[h.axis], COCK_SCREW_MM / 2))
    for h in plate.holes.values():
        cock = not drilled[h.axis]
        # a cock's pivot: its centre marked (MARK), no hole through this plate
        part.circles.append(("MARK" if cock else "CUT", h.x_mm, h.y_mm, size[h.axis] / 2))
        c = max(size[h.axis], 2.0)
        part.lines.append(("MARK", np.array([[h.x_mm - c, h.y_mm], [h.x_mm + c, h.y_mm]])))
        part.lines.append(("MARK", np.array([[h.x_mm, h.y_mm - c], [h.x_mm, h.y_mm + c]])))
        marks = [(o.x_mm, o.y_mm) for o in plate.holes.values() if o is not h]
        name = f"cock: {h.axis}" if cock else h.axis
        at = _hole_label_at(h.x_mm, h.y_mm, size[h.axis], name, part.texts, marks, fits)
        if at is None:  # no room for the whole name on the plate: a key, named under it
            key = _key_name(len(keyed))
            keyed.append((key, name))
            at = _hole_label_at(h.x_mm, h.y_mm, size[h.axis], key, part.texts, marks,
                                fits) or (h.x_mm + size[h.axis], h.y_mm, False)
            part.texts.append((*at[:2], TEXT_MM * 0.8, key))
        else:
            part.texts.append((*at[:2], TEXT_MM * 0.8, name))
        if at[2]:  # stepped away from its hole: a line to say whose name it is
            _leader(part, h.x_mm, h.y_mm, part.texts[-1])
        for w in on_plate(train, plate, h):
            if w in pitch:
                part.circles.append(("PITCH", h.x_mm, h.y_mm, pitch[w]))
    for t in plate.ties:
        a, b = plate.holes[t.axis1], plate.holes[t.axis2]
        part.lines.append(("MARK", np.array([[a.x_mm, a.y_mm], [b.x_mm, b.y_mm]])))
    part.info = {
        "mount": plate.mount, "pivot_mm": pivot, "side": side or "both",
        "holes": [{"axis": h.axis, "arbors": list(h.arbors), "x_mm": h.x_mm, "y_mm": h.y_mm,
                   "fixed": h.fixed, "pivot_mm": size[h.axis]} for h in holes],
        "cocks": [{"axis": h.axis, "arbors": in_cocks(train, h.arbors, plate.mount, side),
                   "x_mm": h.x_mm, "y_mm": h.y_mm, "pivot_mm": size[h.axis],
                   "screw": {"x_mm": feet[h.axis][0], "y_mm": feet[h.axis][1],
                             "size_mm": COCK_SCREW_MM}} for h in cocks],
        "distances": [{"item": t.label, "axes": [plate.holes[t.axis1].axis,
                                                 plate.holes[t.axis2].axis],
                       "needed_mm": t.distance_mm, "drawn_mm": plate.distance_mm(t)}
                      for t in plate.ties],
        "not_drawn": [{"axis": ax, "meshes": list(ms)} for ax, ms in plate.withheld.items()]}
    first = side in (None, "front")
    if first:
        part.notes.extend(plate.notes)
        balance = carrier_balance(train, plate, over, pitch, carrier_outline, areas)
        if balance is not None and balance.worth_saying:
            message, fix = balance_text(balance)
            part.notes.append(f"{message}: {fix}")
        if shape == "arm" and (sweep := counterweight_sweep(train, plates or [plate], plate,
                                                            dims, over)):
            part.notes.append(f"{sweep[0]}: {sweep[1]}")
    else:
        part.notes.append(f"placed and outlined as the front plate of {what}; the notes on "
                          "the holes' places are with that plate")
    if cocks:
        part.notes.append(
            f"no hole for {'; '.join(h.axis for h in cocks)}: "
            f"{'a cock or bridge holds their' if len(cocks) > 1 else 'a cock or bridge holds its'}"
            f" {side} pivot{'s' if len(cocks) > 1 else ''} (pivots_in), at the marked "
            f"centre{'s' if len(cocks) > 1 else ''} "
            + ", ".join(f"({figure(h.x_mm, 6)}, {figure(h.y_mm, 6)}) mm" for h in cocks)
            + f"; each cock is drawn on the MARK layer as a bar {figure(COCK_REACH_MM, 3)} mm "
            f"from its pivot to a round foot with one M{figure(COCK_SCREW_MM, 3)} screw, its "
            "centre marked to tap (the tool's own proportions: shape the cock, its height "
            "and its screws to your design)")
    part.info["outline"] = shape
    if shape == "arm":
        part.info["counterweight"] = (None if dims.weight_at is None else
                                      {"x_mm": dims.weight_at[0], "y_mm": dims.weight_at[1],
                                       "radius_mm": dims.weight_r_mm})
        part.info["residual_gmm"] = dims.residual_gmm
    for i, a in enumerate(holes):  # the check's one rule for two holes that run into each other
        for b in holes[i + 1:]:
            d = math.hypot(a.x_mm - b.x_mm, a.y_mm - b.y_mm)
            ha, hb = hole_mm(train, drilled[a.axis]), hole_mm(train, drilled[b.axis])
            if holes_overlap(d, ha[0], hb[0]):
                message, fix = hole_overlap_text((a.axis, b.axis), d, (ha, hb), "as drawn",
                                                 where=side or "")
                part.notes.append(f"{message}: {fix}")
    shared = [h.axis for h in holes if len(h.arbors) > 1]
    if shared:
        part.notes.append(f"{'holes' if len(shared) > 1 else 'the hole'} for arbors sharing an "
                          f"axis ({'; '.join(shared)}) drawn at the pivot's {figure(pivot, 6)} mm: open "
                          f"{'each' if len(shared) > 1 else 'it'} to the outermost tube's "
                          "diameter where a tube passes through this plate (the file gives no "
                          "tube sizes)")
    _label_at(part, title, (x0 + x1) / 2, y0)
    width = max(x1 - x0, KEY_MIN_WIDTH_MM)
    bottom = _key_table(part, keyed, x0, y0 - 2 * TEXT_MM, width)
    part.info["keys"] = dict(keyed)
    part.info["placed_apart"] = [list(g) for g in plate.apart]
    if plate.apart and first:  # on the drawing too: these distances are no measure
        _text_lines(part, "placed apart, not measured from the rest of the plate (set at_mm): "
                    + "; ".join(", ".join(g) for g in plate.apart), x0, bottom, width)
    return part


def _text_lines(part: Part, text: str, x0: float, top: float, width: float) -> float:
    """``text`` on the NOTE layer under ``top``, wrapped at spaces to ``width`` mm (a word
    longer than a line broken anywhere: nothing is cut); returns the last line's foot."""
    import textwrap

    h = TEXT_MM * 0.8
    y = top - 0.6 * h
    chars = max(8, int(width / _text_width("x", h)))
    for line in textwrap.wrap(text, chars, break_on_hyphens=False):
        y -= 1.5 * h
        part.texts.append((x0, y, h, line))
    return y


KEY_MIN_WIDTH_MM = 60.0
"""The key under a small plate wraps its names to this width at least."""


def _key_name(i: int) -> str:
    """The ``i``-th key on a plate: A, B, ... Z, AA, AB, ..."""
    name = ""
    i += 1
    while i:
        i, r = divmod(i - 1, 26)
        name = chr(65 + r) + name
    return name


def _key_table(part: Part, keyed: list[tuple[str, str]], x0: float, top: float,
               width: float) -> float:
    """Under the plate's title, ``KEY = full name`` for each hole named by a key, the name
    wrapped after a '/' (or, for one part longer than a line, anywhere) to ``width`` mm: no
    name is ever cut. Returns the last line's foot (``top``'s own line without keys)."""
    h = TEXT_MM * 0.8
    y = top - 0.6 * h
    for key, name in keyed:
        head = f"{key} = "
        lines = _wrap_name(name, max(8, int(width / _text_width("x", h)) - len(head)))
        for i, line in enumerate(lines):  # lines after the first stand under the name's start
            y -= 1.5 * h
            part.texts.append((x0 + (_text_width(head, h) if i else 0.0), y, h,
                               (head if i == 0 else "") + line))
    return y if keyed else top


def _wrap_name(name: str, chars: int) -> list[str]:
    """``name`` in lines of at most ``chars`` characters, broken after a '/' where it can be
    (the arbors of one axis), else anywhere; joined again they give the name whole."""
    lines, line = [], ""
    for piece in re.split(r"(?<=/)", name):
        while len(piece) > chars:  # one arbor's name longer than a line
            if line:
                lines.append(line)
                line = ""
            lines.append(piece[:chars])
            piece = piece[chars:]
        if line and len(line) + len(piece) > chars:
            lines.append(line)
            line = ""
        line += piece
    return [*lines, line] if line else lines


def _hole_label_at(x: float, y: float, pivot: float, text: str, placed: list,
                   marks: list[tuple[float, float]] = (),
                   fits=None) -> tuple[float, float, bool] | None:
    """Where a hole's name goes: above right of the hole, else below right, above left or
    below left, centred over or under its mark, else stepped down or up beside it — the first
    place on the plate (``fits(x, y, width, height)``: the name's box inside its outline, by
    ``LABEL_INSET_MM``) and clear of
    the names already placed (two holes a millimetre apart, a pin-and-slot's, wrote their
    names over each other) and of the other holes' centre marks at ``marks`` (the table
    orrery's long name of seven tubes ran over the next hole's mark). The place, and whether it
    stands away from the hole (stepped: the caller draws a leader); None when there is no
    such place (the caller names the hole by a key)."""
    h = TEXT_MM * 0.8
    w = _text_width(text, h)
    c = max(pivot, 2.0)  # a centre mark's half length, as plate_part draws it

    def clear(tx, ty):
        if fits is not None and not fits(tx, ty, w, h):
            return False
        return all(tx + w <= px or px + _text_width(pt, ph) <= tx or ty + h <= py
                   or py + ph <= ty for px, py, ph, pt in placed) and \
            all(tx + w <= mx - c or mx + c <= tx or ty + h <= my - c or my + c <= ty
                for mx, my in marks)

    beside = [(x + pivot, y + pivot), (x + pivot, y - pivot - h), (x - pivot - w, y + pivot),
              (x - pivot - w, y - pivot - h), (x - w / 2, y + c + 0.2),
              (x - w / 2, y - c - 0.2 - h)]
    spots = [*beside[:4], *[(x + pivot, y - pivot - h * (1.2 * k + 1)) for k in range(1, 40)],
             *beside[4:]]
    for k in range(1, 40):
        step = h * 1.2 * k
        spots += [(x - pivot - w, y - pivot - h - step), (x + pivot, y + pivot + step),
                  (x - pivot - w, y + pivot + step)]
    at = next((s for s in spots if clear(*s)), None)
    return None if at is None else (*at, at not in beside)


def _leader(part: Part, x: float, y: float, text) -> None:
    """A thin line (NOTE layer) from the hole at (x, y) to the nearest point of its name, set
    away from it (stepped past its neighbours': the tide office's pin and slot arbors, 0.985 mm
    apart, had two names below them and nothing to say which was which)."""
    tx, ty, h, t = text
    w = _text_width(t, h)
    part.lines.append(("NOTE", np.array([[x, y], [min(max(x, tx), tx + w),
                                                  min(max(y, ty), ty + h)]])))


LABEL_INSET_MM = 1.0
"""A hole's name stands this far inside the plate's outline at least."""


def _label_at(part: Part, text: str, x: float, y: float) -> None:
    part.texts.append((x - _text_width(text, TEXT_MM) / 2, y - 2 * TEXT_MM, TEXT_MM, text))


def _rounded_rect(x0, y0, x1, y1, r, step_deg=10.0):
    pts = []
    for cx, cy, a0 in ((x1 - r, y0 + r, -90), (x1 - r, y1 - r, 0), (x0 + r, y1 - r, 90),
                       (x0 + r, y0 + r, 180)):
        a = np.radians(np.arange(a0, a0 + 90 + 1e-9, step_deg))
        pts.append(np.column_stack([cx + r * np.cos(a), cy + r * np.sin(a)]))
    return np.vstack(pts)


# --- all parts of a train ---------------------------------------------------------------------

@dataclass
class CutSet:
    train: str
    source: str
    parts: list[Part]
    plates: list[Plate]
    caveat: str = CAVEAT
    notes: list[str] = field(default_factory=list)  # of the set: a plate left undrawn


def cut_parts(train: Train, kin: Kinematics, form: str | None = None,
              wheels: Collection[str] | None = None, carrier_outline: str = "box") -> CutSet:
    """Every wheel with a module and every plate, ready to write; with ``wheels`` (names of
    wheels with a module), those wheels alone, named as in the whole set, and no plates.
    ``carrier_outline`` (:data:`CARRIER_OUTLINES`) shapes the carriers' plates."""
    forms = tooth_forms(train, form)
    used: set[str] = {"sheet"}
    parts = []
    for w in train.wheels:
        if w not in forms:
            continue
        stem = _unique(f"wheel-{slug(w)}", used)  # every wheel's, so a name never changes
        if wheels is None or w in wheels:
            parts.append(wheel_part(train, w, forms[w], stem))
    if wheels is not None:
        return CutSet(train.name, train.source, parts, [])
    reach = {w: (t.tip_radius_mm if t.role != "ring" else t.root_radius_mm)
             for w, t in forms.items()}
    plates = place_plates(train, kin, reach)
    pitch = {w: t.pitch_radius_mm for w, t in forms.items()}
    areas = wheel_areas(train, forms, plates)
    notes = []
    for p in plates:
        if p.holes and split_plates(train, p.mount):  # a front and a back plate that differ
            for side in PLATE_SIDES:
                stem = _unique(f"plate-{slug(p.name)}-{side}", used)
                parts.append(plate_part(train, p, pitch, stem, reach, carrier_outline, areas,
                                        side, plates))
            continue
        stem = _unique(f"plate-{slug(p.name)}", used)
        if p.holes:
            parts.append(plate_part(train, p, pitch, stem, reach, carrier_outline, areas,
                                    plates=plates))
        else:  # every hole withheld: nothing measured to drill
            what = "the frame" if p.mount == FRAME else f"carrier '{p.mount}'"
            notes.append(withheld_note(p.withheld, what))
    return CutSet(train.name, train.source, parts, plates, notes=notes)


def _unique(stem: str, used: set[str]) -> str:
    base, k = stem, 2
    while stem.lower() in used:
        stem = f"{base}-{k}"
        k += 1
    used.add(stem.lower())
    return stem


def layout_sheet(parts: list[Part], gap: float = GAP_MM) -> Part:
    """All parts on one sheet, rows of parts (tallest first), none overlapping."""
    boxes = [(p, p.bbox()) for p in parts]
    area = sum((b[2] - b[0] + gap) * (b[3] - b[1] + gap) for _, b in boxes)
    widest = max(b[2] - b[0] for _, b in boxes)
    row_w = max(widest, 1.4 * math.sqrt(area))
    order = sorted(boxes, key=lambda pb: -(pb[1][3] - pb[1][1]))
    sheet = Part("sheet", "all parts", "sheet")
    x = y = row_h = 0.0
    placed = []
    for p, (bx0, by0, bx1, by1) in order:
        w, h = bx1 - bx0, by1 - by0
        if x > 0 and x + w > row_w:
            x, y, row_h = 0.0, y - row_h - gap, 0.0
        moved = p.moved(x - bx0, y - by1)  # top-left of its box at (x, y)
        placed.append((p.name, (x, y - h, x + w, y)))
        for attr in ("polylines", "lines", "circles", "texts"):
            getattr(sheet, attr).extend(getattr(moved, attr))
        x += w + gap
        row_h = max(row_h, h)
    sheet.info = {"boxes": {n: list(b) for n, b in placed}}
    return sheet


# --- writers ----------------------------------------------------------------------------------

def to_svg(part: Part, margin: float = 2.0) -> str:
    """An SVG document of ``part`` in millimetres (1 user unit = 1 mm, y flipped)."""
    x0, y0, x1, y1 = part.bbox()
    x0, y0, x1, y1 = x0 - margin, y0 - margin, x1 + margin, y1 + margin
    w, h = x1 - x0, y1 - y0

    def f(v: float) -> str:
        return f"{v:.5f}".rstrip("0").rstrip(".")

    def pt(x, y):
        return f"{f(x - x0)},{f(y1 - y)}"

    out = ['<?xml version="1.0" encoding="UTF-8"?>',
           f'<svg xmlns="http://www.w3.org/2000/svg" width="{f(w)}mm" height="{f(h)}mm" '
           f'viewBox="0 0 {f(w)} {f(h)}">',
           f"<title>{_esc(part.title)}</title>"]
    for layer, (colour, _, what) in LAYERS.items():
        dash = ' stroke-dasharray="1 0.6"' if layer == "PITCH" else ""
        out.append(f'<g id="{layer}" fill="none" stroke="{colour}" stroke-width="0.08"{dash}>'
                   f"<desc>{_esc(what)}</desc>")
        for lay, p in part.polylines:
            if lay == layer:
                d = " L".join(pt(x, y) for x, y in p)
                out.append(f'<path d="M{d} Z"/>')
        for lay, p in part.lines:
            if lay == layer:
                d = " L".join(pt(x, y) for x, y in p)
                out.append(f'<path d="M{d}"/>')
        for lay, x, y, r in part.circles:
            if lay == layer:
                cx, cy = pt(x, y).split(",")
                out.append(f'<circle cx="{cx}" cy="{cy}" r="{f(r)}"/>')
        if layer == "NOTE":
            for x, y, hgt, t in part.texts:
                xx, yy = pt(x, y).split(",")
                out.append(f'<text x="{xx}" y="{yy}" font-size="{f(hgt)}" '
                           f'font-family="sans-serif" fill="{colour}" stroke="none">'
                           f"{_esc(t)}</text>")
        out.append("</g>")
    out.append("</svg>")
    return "\n".join(out) + "\n"


def _esc(text: str) -> str:
    return (text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace('"', "&quot;"))


DXF_CAP_SHARE = 0.7
"""A DXF text's height is that of its capitals, an SVG font size its whole em: the capitals of
a plain sans-serif face stand about 0.7 of the em (from memory). The layout reserves each
text's room by its em (:func:`_text_width`), so the DXF writes 0.7 of it: written at the whole
em, the sheet's wheel names came out about 1.4 times as wide as their room and ran into their
neighbours'."""


def to_dxf(part: Part) -> str:
    """A DXF document (R2010, millimetres) of ``part``, written with ezdxf."""
    import ezdxf  # only the cut command needs it
    from ezdxf import units

    doc = ezdxf.new("R2010", setup=False)
    doc.units = units.MM
    doc.header["$MEASUREMENT"] = 1
    # the pitch circles dashed as in the SVG: 1 mm dashes, 0.6 mm gaps (pattern length first)
    doc.linetypes.add("DASHED", pattern=[1.6, 1.0, -0.6], description="dashed __ __ __")
    for layer, (_, aci, what) in LAYERS.items():
        lay = doc.layers.add(layer, color=aci, linetype="DASHED" if layer == "PITCH" else
                             "Continuous")
        lay.description = what
    msp = doc.modelspace()
    for layer, p in part.polylines:
        msp.add_lwpolyline([(float(x), float(y)) for x, y in p], close=True,
                           dxfattribs={"layer": layer})
    for layer, p in part.lines:
        msp.add_lwpolyline([(float(x), float(y)) for x, y in p], dxfattribs={"layer": layer})
    for layer, x, y, r in part.circles:
        msp.add_circle((float(x), float(y)), float(r), dxfattribs={"layer": layer})
    for x, y, h, t in part.texts:  # h is the em the layout measured: DXF takes the capitals
        msp.add_text(t, height=DXF_CAP_SHARE * h, dxfattribs={"layer": "NOTE",
                                                              "insert": (x, y)})
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue()
