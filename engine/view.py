"""Pure helpers for drawing a train and its displays: a layout of arbors, lit-disc shading,
arbor turn counts. No UI imports; the interface (``tui/``) draws what these return.
"""

from __future__ import annotations

import math
from collections import deque
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from .exact import Turns
from .periods import J2000_JD, JULIAN_YEAR_DAYS
from .train import FRAME, Train

#: An arbor turning more than this (turns per frame) cannot be followed by eye: show a count.
TOO_FAST_TURNS_PER_FRAME = 1 / 8


@dataclass(frozen=True)
class ArborSpot:
    """Where an arbor sits in the drawing: a column (stages from the crank) and a row."""

    name: str
    col: int
    row: int
    teeth: int  # largest wheel on it (0 for an arbor with no wheels)
    mount: str


@dataclass(frozen=True)
class TrainLayout:
    """A grid layout of a train: spots by arbor, meshes and carrier links between arbors."""

    spots: dict[str, ArborSpot]
    meshes: tuple[tuple[str, str, bool], ...]  # (arbor1, arbor2, internal)
    carried: tuple[tuple[str, str], ...]  # (carrier, arbor on it)
    slots: tuple[tuple[str, str], ...]  # (pin arbor, slot arbor)
    ncols: int
    nrows: int
    max_teeth: int


def train_layout(train: Train) -> TrainLayout:
    """Lay arbors out in columns by their distance (in stages) from the crank arbor.

    Distance is counted over meshes, pin-and-slot couplings and carrier mounts by breadth-first
    search; arbors the search cannot reach go in a last column. Rows follow file order.
    """
    edges: dict[str, list[str]] = {a: [] for a in train.arbors}
    meshes = []
    for m in train.meshes:
        a1, a2 = train.wheels[m.driver].arbor, train.wheels[m.driven].arbor
        edges[a1].append(a2)
        edges[a2].append(a1)
        meshes.append((a1, a2, m.internal))
    slots = []
    for ps in train.pin_slots.values():
        edges[ps.pin_arbor].append(ps.slot_arbor)
        edges[ps.slot_arbor].append(ps.pin_arbor)
        slots.append((ps.pin_arbor, ps.slot_arbor))
    carried = []
    for a in train.arbors.values():
        if a.mount != FRAME:
            edges[a.mount].append(a.name)
            edges[a.name].append(a.mount)
            carried.append((a.mount, a.name))
    depth = {train.crank.arbor: 0}
    queue = deque([train.crank.arbor])
    while queue:
        a = queue.popleft()
        for b in edges[a]:
            if b not in depth:
                depth[b] = depth[a] + 1
                queue.append(b)
    last = max(depth.values(), default=-1) + 1
    rows: dict[int, int] = {}
    spots = {}
    for name, arbor in train.arbors.items():
        col = depth.get(name, last)
        row = rows.get(col, 0)
        rows[col] = row + 1
        teeth = max((train.wheels[w].teeth for w in arbor.wheels), default=0)
        spots[name] = ArborSpot(name, col, row, teeth, arbor.mount)
    ncols = max((s.col for s in spots.values()), default=-1) + 1
    nrows = max(rows.values(), default=0)
    max_teeth = max((s.teeth for s in spots.values()), default=0)
    return TrainLayout(spots, tuple(meshes), tuple(carried), tuple(slots), ncols, nrows,
                       max_teeth)


@dataclass(frozen=True)
class WheelPlace:
    """Where an arbor's wheel is drawn on a canvas of character cells (x right, y down; a
    cell is twice as tall as wide, so the rim is an ellipse of half-widths ``r`` and
    ``r / 2``), and its label: ``label`` from cell ``label_x`` on row ``label_row``."""

    x: float
    y: float
    r: float
    label: str
    label_x: int
    label_row: int
    col_left: float  # the arbor's column, for text placed beside the label
    col_right: float


def _fit_label(name: str, teeth: int, room: int) -> str:
    """``name teeth`` in at most ``room`` cells: a name too long is shortened (…), never the
    tooth count, which a cut would turn into another number (65 shown as 6)."""
    count = f" {teeth}" if teeth else ""
    if len(name) + len(count) <= room:
        return name + count
    keep = room - len(count) - 1
    if keep >= 1:
        return name[:keep] + "…" + count
    return count.strip() if count and len(count) - 1 <= room else name[:room]


def short_names(names, width: int) -> dict[str, str]:
    """Each name in at most ``width`` cells, and two names never shown alike: a name too long
    keeps its start and an ellipsis, and where two would then read the same, its start and its
    end either side of the ellipsis (``eclipse_ring``, ``eclipse_hand`` in 9: ``ecli…ring``,
    ``ecli…hand``, not ``eclipse_…`` twice)."""
    names = list(names)
    if width < 2:
        return {n: n[:max(width, 0)] for n in names}
    cut = {n: n if len(n) <= width else n[: width - 1] + "…" for n in names}
    seen: dict[str, int] = {}
    for text in cut.values():
        seen[text] = seen.get(text, 0) + 1
    tail = (width - 1) // 2
    for n in names:
        if seen[cut[n]] > 1 and len(n) > width and tail:
            cut[n] = n[: width - 1 - tail] + "…" + n[-tail:]
    return cut


def place_train(layout: TrainLayout, width: int, height: int) -> dict[str, WheelPlace]:
    """Where each arbor of ``layout`` goes on a ``width`` × ``height`` cell canvas: columns
    share the width, rows the height; a wheel's radius grows with its largest tooth count."""
    if not layout.ncols or width < 1 or height < 1:
        return {}
    cw = width / layout.ncols
    rh = height / max(layout.nrows, 1)
    rmax = max(min(cw / 2.0 - 1.0, rh - 1.8), 1.0)
    # rows of arbors closer than three cells leave no row between a wheel and the one below
    # it for a label: the label then goes beside the wheel, on the row through its centre,
    # when it fits there whole
    beside = rh < 3.0
    out = {}
    for name, s in layout.spots.items():
        x = (s.col + 0.5) * cw
        y = s.row * rh + (rh - 1.2) / 2.0
        frac = s.teeth / layout.max_teeth if layout.max_teeth else 0.5
        r = max(rmax * (0.35 + 0.65 * frac), 1.0)
        left, right = s.col * cw + 0.5, (s.col + 1) * cw - 1.0
        label = f"{name} {s.teeth}" if s.teeth else name
        if beside and len(label) <= right - (math.ceil(x + r) + 1):  # whole, or below
            out[name] = WheelPlace(x, y, r, label, math.ceil(x + r) + 1, math.floor(y),
                                   left, right)
            continue
        label = _fit_label(name, s.teeth, max(int(cw) - 1, 1))
        x0 = round(x - len(label) / 2.0)
        out[name] = WheelPlace(x, y, r, label, x0, round(y + 0.5 * r + 0.6), left, right)
    return out


def arbor_at(places: dict[str, WheelPlace], x: float, y: float) -> str | None:
    """The arbor drawn at canvas point (x, y) (a cell's centre is (col + 0.5, row + 0.5)):
    one whose rim (half a cell of slack) or label holds the point, the nearest centre when
    two do; None over empty canvas."""
    best, best_d = None, math.inf
    for name, p in places.items():
        dx, dy = x - p.x, (y - p.y) * 2.0  # rows are twice as tall: back to a circle
        d = math.hypot(dx, dy)
        on_label = (math.floor(y) == p.label_row
                    and p.label_x <= x < p.label_x + len(p.label))
        if (d <= p.r + 0.5 or on_label) and d < best_d:
            best, best_d = name, d
    return best


def picked_wheel(train: Train, arbor: str) -> str | None:
    """The wheel a click on ``arbor``'s drawing picks: its largest (the one its label names;
    the first in the file on a tie), None for an arbor without wheels."""
    wheels = train.arbors[arbor].wheels if arbor in train.arbors else ()
    if not wheels:
        return None
    return max(wheels, key=lambda w: (train.wheels[w].teeth, -wheels.index(w)))


def arbor_turns(rates: dict[str, Fraction], turns: Turns) -> dict[str, float]:
    """Turns each arbor has made since the epoch (signed), from exact rates and crank turns."""
    whole = int(np.asarray(turns.whole).reshape(-1)[0])
    frac = float(np.asarray(turns.frac).reshape(-1)[0])
    return {name: float(rate * whole) + float(rate) * frac for name, rate in rates.items()}


def too_fast(rate: Fraction, crank_turns_per_frame: float) -> bool:
    """True when an arbor moves more than ``TOO_FAST_TURNS_PER_FRAME`` in one frame."""
    return abs(float(rate) * crank_turns_per_frame) > TOO_FAST_TURNS_PER_FRAME


def turns_label(turns: float, width: int) -> str | None:
    """A signed turn count in at most ``width`` characters: one decimal below 100 turns, then
    whole turns with thousands separators, then shorter forms (``+12k``, ``+3.4M``); None when
    not even the shortest form fits."""
    n = float(turns)
    forms = [f"{n:+.1f}"] if abs(n) < 100 else []
    forms += [f"{n:+,.0f}", f"{n:+.0f}"]
    for div, unit in ((1e3, "k"), (1e6, "M"), (1e9, "G"), (1e12, "T")):
        if div * 0.95 <= abs(n) < div * 999.5:
            forms += [f"{n / div:+.1f}{unit}", f"{n / div:+.0f}{unit}"]
    for text in forms:
        if text in ("+0", "-0", "+0.0", "-0.0"):
            text = "0"
        if len(text) <= width:
            return text
    return None


def ball_lit_fraction(elongation_deg: float) -> float:
    """Lit fraction a half-silvered phase ball shows at this elongation: (1 − cos E) / 2."""
    return float((1.0 - np.cos(np.radians(elongation_deg))) / 2.0)


def hands_elongation_deg(moon_deg: float, sun_deg: float) -> float:
    """Elongation shown by a Moon hand and a Sun hand (Moon minus Sun), 0–360°."""
    return float((moon_deg - sun_deg) % 360.0)


def decimal_year(jd_ut):
    """Year with fraction (Julian years of 365.25 days from J2000.0), for chart axes."""
    return 2000.0 + (np.asarray(jd_ut, dtype=float) - J2000_JD) / JULIAN_YEAR_DAYS


def lit_disc(lit_fraction: float, waxing: bool, cols: int, rows: int,
             samples: int = 4) -> tuple[np.ndarray, np.ndarray]:
    """Coverage of a lit disc on a ``rows`` × ``cols`` grid of picture elements spanning the
    disc's bounding box: ``(disc, lit)``, each ``(rows, cols)``, the fraction 0–1 of each
    element inside the disc, and inside its lit part (``samples``² points per element).

    The terminator is the half-ellipse ``x = k·sqrt(1 − y²)`` with ``k = 1 − 2·lit_fraction``;
    the lit side is on the right while waxing, on the left while waning (as seen from the north).
    """
    k = 1.0 - 2.0 * float(np.clip(lit_fraction, 0.0, 1.0))
    # sample points at cell sub-positions, mapped to the unit disc (y up)
    sx = (np.arange(cols * samples) + 0.5) / (cols * samples) * 2.0 - 1.0
    sy = 1.0 - (np.arange(rows * samples) + 0.5) / (rows * samples) * 2.0
    x, y = np.meshgrid(sx, sy)
    inside = x * x + y * y <= 1.0
    half = np.sqrt(np.clip(1.0 - y * y, 0.0, 1.0))
    lit = inside & ((x > k * half) if waxing else (x < -k * half))
    shape = (rows, samples, cols, samples)
    disc_cov = inside.reshape(shape).mean(axis=(1, 3))
    lit_cov = lit.reshape(shape).mean(axis=(1, 3))
    return disc_cov, lit_cov



# --- planets: which body a kind shows, and where an orrery arm goes in a plan view -----------

def _arm_distances() -> dict[str, float]:
    from .periods import EARTH, PLANETS

    out = {f"{k}_from_sun": p.distance_au for k, p in PLANETS.items()}
    out["earth_from_sun"] = EARTH.distance_au
    return out


#: heliocentric arm kind -> the planet's mean distance from the Sun (au, engine.periods)
ARM_DISTANCE_AU = _arm_distances()


def body_of(kind: str) -> str:
    """The body a pointer kind shows: ``"venus_from_sun"`` and ``"venus"`` -> ``"venus"``."""
    return kind[: -len("_from_sun")] if kind.endswith("_from_sun") else kind


def is_arm(kind: str) -> bool:
    """An orrery arm: a planet (or the Earth) seen from the Sun."""
    return kind in ARM_DISTANCE_AU


def plan_radii(kinds: dict[str, str]) -> dict[str, float]:
    """For a plan view looking down on an orrery: each arm pointer's radius as a fraction of
    the largest, ``{pointer: kind}`` in. Real distances run from 0.39 to 30 au, so the radii
    go as the square root of the distance (an orrery's own compromise), then are spread so
    that neighbours keep at least 1/(n + 1) of the radius apart."""
    arms = sorted(((ARM_DISTANCE_AU[k], p) for p, k in kinds.items() if is_arm(k)))
    if not arms:
        return {}
    top = math.sqrt(arms[-1][0])
    gap = 1.0 / (len(arms) + 1)
    out, last = {}, 0.0
    for dist, p in arms:
        r = max(math.sqrt(dist) / top, last + gap)
        out[p] = r
        last = r
    scale = max(out.values())
    return {p: r / scale for p, r in out.items()}


#: The drift chart's ±threshold band is drawn only when it spans at least this many text rows:
#: closer, its two lines share a row (or touch) and read as one line.
BAND_ROWS = 2
#: the margin above and below the curves, a share of their range
CHART_PAD = 0.05


@dataclass(frozen=True)
class ChartScale:
    """The drift chart's y range for ``rows`` text rows of curves.

    ``band`` says whether the ±threshold lines are drawn (they are BAND_ROWS rows apart or
    more); ``fitted`` that the range was narrowed to the band and the curves near it, so
    ``off_chart`` names the pointers whose curves run off it; ``deg_per_row`` is the scale."""

    y_min: float
    y_max: float
    band: bool
    fitted: bool
    off_chart: tuple[str, ...]
    deg_per_row: float


def _padded(lo: float, hi: float) -> tuple[float, float]:
    pad = CHART_PAD * (hi - lo) or 1.0
    return lo - pad, hi + pad


def chart_scale(errors_deg: dict[str, np.ndarray], threshold_deg: float, rows: int,
                whole: bool = False) -> ChartScale:
    """Choose the drift chart's y range so the ±``threshold_deg`` band can be read.

    Every curve in view when the band then spans BAND_ROWS rows or more. Otherwise, unless
    ``whole`` is asked for, the range is fitted to the band and to the pointers whose errors
    stay within ±(rows × threshold) / (2 + 4 × CHART_PAD) — near enough to the band for its
    rows to matter — and the others run off the chart (``off_chart``). When no pointer stays
    that near (or ``whole``), every curve stays in view and the band is not drawn: its two
    lines would share a row."""
    rows = max(int(rows), 1)
    thr = abs(float(threshold_deg))
    ext = {}
    for name, err in errors_deg.items():
        err = np.asarray(err, dtype=float)
        if np.isfinite(err).any():
            ext[name] = (float(np.nanmin(err)), float(np.nanmax(err)))

    def scale(names, fitted: bool) -> ChartScale:
        lo, hi = _padded(min([ext[n][0] for n in names] + [-thr]),
                         max([ext[n][1] for n in names] + [thr]))
        per_row = (hi - lo) / rows
        band = thr > 0 and 2 * thr >= BAND_ROWS * per_row * (1 - 1e-9)
        off = tuple(n for n in ext if ext[n][0] < lo or ext[n][1] > hi)
        return ChartScale(lo, hi, band, fitted, off, per_row)

    every = scale(list(ext), False)
    if every.band or whole or thr == 0:
        return every
    reach = rows * thr / (BAND_ROWS * (1 + 2 * CHART_PAD))
    near = [n for n, (lo, hi) in ext.items() if -reach <= lo and hi <= reach]
    fitted = scale(near, True) if near else every
    return fitted if fitted.band else every  # too few rows for the band at any scale
