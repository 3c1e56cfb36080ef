"""Eclipses: the real ones from the ephemeris, and what a train predicts.

Real eclipses
-------------
*Syzygies* (new and full moons) are the dates when the Moon's apparent ecliptic longitude
equals the Sun's (new) or differs from it by 180° (full), found on the engine's fast Sun/Moon
path: a mean lunation guess for every syzygy in the span at once, refined by Newton steps on
the true elongation (all syzygies together, as one array).

*Solar eclipses* are judged geocentrically at each new moon, in the manner of the eclipse
canons (the Besselian fundamental plane; Explanatory Supplement to the Astronomical Almanac,
and Meeus, *Astronomical Algorithms* 2nd ed., ch. 54 — the criteria below are stated from
memory of those texts):

* the shadow axis is the line from the Sun through the Moon (apparent geocentric positions);
  ``gamma`` is the least distance of that axis from the Earth's centre, in equatorial Earth
  radii, at the moment of greatest eclipse (when that distance is least); positive when the
  axis passes north of the centre;
* the penumbral and umbral cones have radii ``l1`` and ``l2`` (Earth radii) in the
  fundamental plane (through the Earth's centre, square to the axis); ``l2 < 0`` means the
  umbra's vertex lies beyond that plane;
* with the Earth's flattening, the axis' distance measured against the Earth's outline in the
  plane is ``r1 = sqrt(x² + (y/ρ1)²)``, ``ρ1 = sqrt(1 − e² cos² δ)``, ``δ`` the axis'
  declination;
* **no eclipse** when ``r1 ≥ 1 + l1`` (the penumbra misses the Earth);
* **central** when ``r1 < 1``: the axis meets the surface at height ``ζ = sqrt(1 − r1²)``
  above the plane, where the umbral radius is ``L2 = l2 − ζ tan f2``. Total when ``l2 < 0``
  (umbra reaches beyond the plane, so it covers the whole path); **hybrid** when ``l2 > 0``
  but ``L2 < 0`` (total at greatest eclipse, annular where the path meets the limb); annular
  otherwise (this is the test behind Meeus's ``0 < u < 0.0047``, ``ω = 0.00464 sqrt(1 − γ²)``);
* **non-central** umbral or antumbral when ``1 ≤ r1 < 1 + |l2|`` (total if ``l2 < 0``, else
  annular); otherwise **partial**.

Constants: Earth's equatorial radius 6378.137 km and flattening 1/298.257 (WGS84); the
Sun's radius 696 000 km (959.63" at 1 au, the solar radius of the eclipse canons); the Moon's
radius 0.2725076 Earth radii for the penumbra and 0.272281 for the umbra (the two values of
the NASA eclipse canons, to allow for the lunar limb's valleys) — all from memory.

*Lunar eclipses* come from skyfield's search (``skyfield.eclipselib.lunar_eclipses``), which
uses the Danjon enlargement of the Earth's shadow; each is tied to its full moon.

Predictions
-----------
:func:`check` compares them with the real ones, in one of two ways (:func:`methods`):
"pointers" — a node hand, draconic or eclipse-year dial read at the syzygies a phase hand
shows (:func:`shown_syzygies`, :func:`node_distance`); "cycle" — an eclipse-cycle dial
turning once per N lunations, with marks for the months that bear eclipses
(:func:`cycle_position`, :func:`derive_marks`).
"""

from __future__ import annotations

import weakref
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np

from .dates import as_jd
from .defaults import ECLIPSE_METHODS
from .errors import ArgumentError, SkyError
from .mechanism import need_mechanism, need_sky
from .periods import PERIODS

# --- constants (sources in the module docstring) -------------------------------------------
EARTH_RADIUS_KM = 6378.137
EARTH_FLATTENING = 1 / 298.257
_E2 = EARTH_FLATTENING * (2 - EARTH_FLATTENING)
SUN_RADIUS_KM = 696_000.0
MOON_K_PENUMBRA = 0.2725076
MOON_K_UMBRA = 0.272281
SYNODIC_DAYS = PERIODS["synodic_month"].days
# A new moon near the start of 2000 (2000-01-06 18:14 TT; Meeus ch. 49, from memory): lunation
# numbers count from it, so lunation 0 is the month of that new moon.
NEW_MOON_0_JD = 2451550.09766

SOLAR_TYPES = ("partial", "annular", "hybrid", "total")
LUNAR_TYPES = ("penumbral", "partial", "total")
KINDS = ("solar", "lunar")
# A solar eclipse needs the Moon within about 1.6° of the ecliptic at new moon (from memory);
# new moons beyond this latitude are not worth the full shadow geometry.
_SOLAR_LAT_SCREEN_DEG = 1.8


# --- syzygies ------------------------------------------------------------------------------

@dataclass(frozen=True)
class Syzygies:
    """New and full moons in time order: ``jd_ut`` (UT), ``number`` (twice the lunation
    number: even for a new moon, odd for the full moon after it), ``full`` (bool)."""

    jd_ut: np.ndarray
    number: np.ndarray

    @property
    def full(self) -> np.ndarray:
        return (self.number % 2) == 1

    @property
    def lunation(self) -> np.ndarray:
        """Lunation number (month count from the new moon of 2000-01-06) of each syzygy."""
        return self.number // 2

    def __len__(self) -> int:
        return int(self.jd_ut.size)


def _wrap180(deg):
    return np.mod(np.asarray(deg) + 180.0, 360.0) - 180.0


def _span(jd_start, jd_end, what: str) -> tuple[float, float]:
    """The span's ends as UT Julian Dates, earlier first: each a JD number or date text
    (``parse_date``); anything else is a one-line :class:`DateError`."""
    ends = []
    for value, end in ((jd_start, "start"), (jd_end, "end")):
        jd = as_jd(value, f"{what} {end}")
        if np.ndim(jd):
            raise ArgumentError(f"{what} {end}: wanted one date (a JD number or date text), "
                                f"got {np.size(jd)} of them")
        ends.append(float(jd))
    return min(ends), max(ends)


def syzygies(sky, jd_start: float | str, jd_end: float | str) -> Syzygies:
    """Every new and full moon between two UT dates (inclusive), in time order. Each date is
    a UT Julian Date or date text.

    Refined on the fast Sun/Moon path to well under a second of time (Newton steps on the
    elongation with its slope measured a minute apart, then chord steps with that slope; all
    syzygies at once)."""
    need_sky(sky, "syzygies")
    lo, hi = _span(jd_start, jd_end, "syzygies")
    sky.check_span(lo, hi)
    half = SYNODIC_DAYS / 2
    n0 = int(np.floor((lo - NEW_MOON_0_JD) / half)) - 1
    n1 = int(np.ceil((hi - NEW_MOON_0_JD) / half)) + 1
    number = np.arange(n0, n1 + 1)
    jd = NEW_MOON_0_JD + number * half
    target = np.where(number % 2 == 1, 180.0, 0.0)
    span_lo, span_hi = sky.span_jd
    keep = (jd > span_lo + 20) & (jd < span_hi - 20)
    # A syzygy close to the ephemeris' edges is refined from inside it.
    jd = np.clip(jd, span_lo + 0.01, span_hi - 0.02)
    dt = 1.0 / 1440.0
    for i in range(12):
        e0 = sky.at(jd).elongation_deg
        if i < 2:  # the slope from the first two steps serves the rest (chord steps)
            slope = _wrap180(sky.at(jd + dt).elongation_deg - e0) / dt
        step = _wrap180(e0 - target) / slope
        jd = np.clip(jd - step, span_lo + 0.01, span_hi - 0.02)
        if np.max(np.abs(step)) < 1e-7:
            break
    keep = (jd >= lo) & (jd <= hi) & (np.abs(_wrap180(sky.at(jd).elongation_deg - target))
                                      < 1e-3)
    return Syzygies(jd[keep], number[keep])


# --- solar eclipses ------------------------------------------------------------------------

def _axis_geometry(sun: np.ndarray, moon: np.ndarray) -> dict[str, np.ndarray]:
    """Shadow-axis geometry from apparent geocentric Sun and Moon vectors (km, (3, n))."""
    axis = moon - sun
    sun_moon_km = np.linalg.norm(axis, axis=0)
    d = axis / sun_moon_km
    along = np.einsum("in,in->n", moon, d)  # negative: the Moon is on the Sun's side
    closest = moon - along * d  # the axis' point nearest the Earth's centre (km)
    pole = np.array([0.0, 0.0, 1.0])[:, None] - d[2] * d
    pole /= np.linalg.norm(pole, axis=0)
    y = np.einsum("in,in->n", closest, pole) / EARTH_RADIUS_KM
    r = np.linalg.norm(closest, axis=0) / EARTH_RADIUS_KM
    x2 = np.maximum(r * r - y * y, 0.0)
    rho1 = np.sqrt(1.0 - _E2 * (1.0 - d[2] ** 2))
    r1 = np.sqrt(x2 + (y / rho1) ** 2)
    z_moon = -along / EARTH_RADIUS_KM
    sin_f1 = (SUN_RADIUS_KM + MOON_K_PENUMBRA * EARTH_RADIUS_KM) / sun_moon_km
    sin_f2 = (SUN_RADIUS_KM - MOON_K_UMBRA * EARTH_RADIUS_KM) / sun_moon_km
    cos_f1, cos_f2 = np.sqrt(1 - sin_f1 ** 2), np.sqrt(1 - sin_f2 ** 2)
    tan_f2 = sin_f2 / cos_f2
    l1 = z_moon * sin_f1 / cos_f1 + MOON_K_PENUMBRA / cos_f1
    l2 = z_moon * tan_f2 - MOON_K_UMBRA / cos_f2
    return {"closest": closest, "gamma": np.copysign(r, y), "r1": r1, "l1": l1, "l2": l2,
            "tan_f2": tan_f2}


def classify_solar(r1, l1, l2, tan_f2) -> np.ndarray:
    """Type of solar eclipse by the criteria of the module docstring: an index into
    ``SOLAR_TYPES``, or -1 for no eclipse."""
    r1, l1, l2, tan_f2 = (np.asarray(a, dtype=float) for a in (r1, l1, l2, tan_f2))
    out = np.full(r1.shape, -1, dtype=int)
    seen = r1 < 1.0 + l1
    out[seen] = 0
    central = r1 < 1.0
    zeta = np.sqrt(np.clip(1.0 - r1 * r1, 0.0, None))
    surface = l2 - zeta * tan_f2
    out[central & (surface >= 0)] = 1
    out[central & (surface < 0) & (l2 >= 0)] = 2
    out[central & (l2 < 0)] = 3
    edge = ~central & seen & (r1 < 1.0 + np.abs(l2))
    out[edge] = np.where(l2[edge] < 0, 3, 1)
    return out


@dataclass(frozen=True)
class SolarCircumstances:
    """Per new moon: greatest eclipse (UT), gamma (Earth radii, + north), ``l1``, ``l2``
    (cone radii in the fundamental plane, Earth radii) and ``type_index`` into
    ``SOLAR_TYPES`` (-1: no eclipse anywhere on Earth)."""

    jd_ut: np.ndarray
    gamma: np.ndarray
    l1: np.ndarray
    l2: np.ndarray
    type_index: np.ndarray


def solar_circumstances(sky, new_moon_jd) -> SolarCircumstances:
    """Greatest eclipse and its type at each new moon (UT dates of conjunction in longitude).

    New moons with the Moon more than 1.8° from the ecliptic are passed over (no eclipse is
    possible there; their gamma is left NaN). For the rest the least axis distance is found by
    two Newton steps on the axis' nearest point, which moves almost uniformly over hours."""
    from .sky import eclipse_vectors

    jd = np.atleast_1d(np.asarray(new_moon_jd, dtype=float))
    n = jd.size
    gamma, l1, l2 = np.full(n, np.nan), np.full(n, np.nan), np.full(n, np.nan)
    kind = np.full(n, -1, dtype=int)
    when = jd.copy()
    if n == 0:
        return SolarCircumstances(when, gamma, l1, l2, kind)
    near = np.abs(sky.at(jd).moon_lat_deg) < _SOLAR_LAT_SCREEN_DEG
    t = jd[near]
    lo, hi = sky.span_jd
    h = 0.02  # days: the nearest point's velocity from ± half an hour
    for _ in range(2):
        p0 = _axis_geometry(*eclipse_vectors(sky, np.clip(t - h, lo, hi)))["closest"]
        p1 = _axis_geometry(*eclipse_vectors(sky, np.clip(t + h, lo, hi)))["closest"]
        mid = (p0 + p1) / 2
        vel = (p1 - p0) / (2 * h)
        step = -np.einsum("in,in->n", mid, vel) / np.einsum("in,in->n", vel, vel)
        t = np.clip(t + np.clip(step, -0.5, 0.5), lo, hi)
    g = _axis_geometry(*eclipse_vectors(sky, t))
    when[near] = t
    gamma[near], l1[near], l2[near] = g["gamma"], g["l1"], g["l2"]
    found = classify_solar(g["r1"], g["l1"], g["l2"], g["tan_f2"])
    kind[near] = _changes_along_the_path(sky, t, g, found, vel)
    return SolarCircumstances(when, gamma, l1, l2, kind)


def _changes_along_the_path(sky, t, g, found, vel) -> np.ndarray:
    """A central eclipse found total or annular at greatest eclipse that is the other kind
    where its central line begins or ends is hybrid (total at one end and annular at the
    other: the canon's asymmetric hybrids). The ends are where the axis meets the Earth's
    limb, reached from greatest eclipse at the axis' speed across the fundamental plane
    (``vel``, km a day); there the ground is the fundamental plane itself, so the umbra
    reaches it if its radius ``l2`` is negative."""
    from .sky import eclipse_vectors

    out = found.copy()
    check = (g["r1"] < 1.0) & ((found == SOLAR_TYPES.index("total"))
                               | (found == SOLAR_TYPES.index("annular")))
    if not check.any():
        return out
    lo, hi = sky.span_jd
    speed = np.linalg.norm(vel[:, check], axis=0) / EARTH_RADIUS_KM  # Earth radii a day
    reach = np.sqrt(1.0 - g["r1"][check] ** 2) / speed  # to the limb, where zeta -> 0
    total_at_ends = []
    for sign in (-1.0, 1.0):
        e = _axis_geometry(*eclipse_vectors(sky, np.clip(t[check] + sign * reach, lo, hi)))
        zeta = np.sqrt(np.clip(1.0 - e["r1"] ** 2, 0.0, None))
        total_at_ends.append(e["l2"] - zeta * e["tan_f2"] < 0)
    was_total = found[check] == SOLAR_TYPES.index("total")
    hybrid = np.where(was_total, ~(total_at_ends[0] & total_at_ends[1]),
                      total_at_ends[0] | total_at_ends[1])
    idx = np.flatnonzero(check)
    out[idx[hybrid]] = SOLAR_TYPES.index("hybrid")
    return out


# --- real eclipses, one row per syzygy -----------------------------------------------------

@dataclass(frozen=True)
class Eclipse:
    """A real eclipse: ``kind`` ("solar"/"lunar"), ``type``, greatest eclipse ``jd_ut``,
    ``gamma`` (Earth radii: the shadow axis from the Earth's centre for a solar eclipse, the
    Moon's centre from the Earth's shadow axis for a lunar one; + north), ``number`` (the
    syzygy's number, see :class:`Syzygies`)."""

    jd_ut: float
    kind: str
    type: str
    gamma: float
    number: int


@dataclass(frozen=True)
class SkyEclipses:
    """Every syzygy in a span, and the real eclipse at each (if any).

    ``syz``: the :class:`Syzygies`; ``type`` per syzygy: "" (none) or the eclipse type;
    ``jd_greatest`` and ``gamma`` per syzygy (NaN where not computed)."""

    syz: Syzygies
    type: tuple[str, ...]
    jd_greatest: np.ndarray
    gamma: np.ndarray

    def eclipses(self, penumbral: bool = True) -> list[Eclipse]:
        """The eclipses in time order; ``penumbral=False`` leaves penumbral lunar ones out."""
        out = []
        for i, typ in enumerate(self.type):
            if not typ or (typ == "penumbral" and not penumbral):
                continue
            kind = "lunar" if self.syz.full[i] else "solar"
            out.append(Eclipse(float(self.jd_greatest[i]), kind, typ, float(self.gamma[i]),
                               int(self.syz.number[i])))
        return out

    def has_eclipse(self, penumbral: bool = True) -> np.ndarray:
        """Bool per syzygy: the sky has an eclipse there (penumbral lunar ones optional)."""
        t = np.array(self.type, dtype=object)
        out = t != ""
        if not penumbral:
            out &= t != "penumbral"
        return out


def sky_eclipses(sky, jd_start: float | str, jd_end: float | str) -> SkyEclipses:
    """Every syzygy between two UT dates (JD numbers or date text) and the real eclipse at
    each (see module docstring)."""
    from .sky import lunar_eclipse_search

    need_sky(sky, "sky_eclipses")
    syz = syzygies(sky, jd_start, jd_end)
    n = len(syz)
    types = [""] * n
    greatest = syz.jd_ut.copy()
    gamma = np.full(n, np.nan)
    new = ~syz.full
    solar = solar_circumstances(sky, syz.jd_ut[new])
    idx_new = np.flatnonzero(new)
    for j, i in enumerate(idx_new):
        if solar.type_index[j] >= 0:
            types[i] = SOLAR_TYPES[solar.type_index[j]]
        greatest[i] = solar.jd_ut[j]
        gamma[i] = solar.gamma[j]
    full_idx = np.flatnonzero(syz.full)
    if full_idx.size:
        lo, hi = sky.span_jd
        a = max(lo, float(syz.jd_ut[full_idx[0]]) - 1.0)
        b = min(hi, float(syz.jd_ut[full_idx[-1]]) + 1.0)
        lunar = lunar_eclipse_search(sky, a, b)
        if lunar["jd_ut"].size:
            state = sky.at(lunar["jd_ut"])
            g = (np.sin(np.radians(lunar["closest_approach_deg"])) * state.moon_km
                 / EARTH_RADIUS_KM)
            g = np.copysign(g, state.moon_lat_deg)
            full_jd = syz.jd_ut[full_idx]
            for k, jd in enumerate(lunar["jd_ut"]):
                j = int(np.argmin(np.abs(full_jd - jd)))
                if abs(full_jd[j] - jd) < 1.0:
                    i = full_idx[j]
                    types[i] = LUNAR_TYPES[int(lunar["code"][k])]
                    greatest[i] = jd
                    gamma[i] = g[k]
    return SkyEclipses(syz, tuple(types), greatest, gamma)


def real_eclipses(sky, jd_start: float | str, jd_end: float | str,
                  penumbral: bool = True) -> list[Eclipse]:
    """The real eclipses between two UT dates (JD numbers or date text), solar and lunar, in
    time order."""
    need_sky(sky, "real_eclipses")
    return sky_eclipses(sky, jd_start, jd_end).eclipses(penumbral)



# --- what a train predicts -----------------------------------------------------------------
# Ecliptic limits: how far the Sun may stand from a node of the Moon's orbit at a syzygy for an
# eclipse to be possible. The classical values (from memory; as given in eclipse canons and
# textbooks of spherical astronomy): solar eclipses possible within 18°31' and certain within
# 15°21'; umbral (partial or total) lunar eclipses possible within 12°15' and certain within
# 9°30'. For penumbral lunar eclipses we know no figure from the field; 17.5° is our own choice
# from the range measured 1900-2050 (see docs/eclipses.md). Defaults are the "possible" limits.
SOLAR_LIMIT_DEG = 18 + 31 / 60
SOLAR_CERTAIN_DEG = 15 + 21 / 60
LUNAR_LIMIT_DEG = 12 + 15 / 60
LUNAR_CERTAIN_DEG = 9 + 30 / 60
PENUMBRAL_LIMIT_DEG = 17.5

METHODS = ECLIPSE_METHODS  # the command's --by (engine/defaults.py)


def limits(train) -> dict[str, float]:
    """The ecliptic limits (degrees) a train's predictions use: its ``[eclipses]`` settings or
    the defaults."""
    s = train.eclipses
    lunar_default = PENUMBRAL_LIMIT_DEG if s.penumbral else LUNAR_LIMIT_DEG
    return {"solar": s.solar_limit_deg if s.solar_limit_deg is not None else SOLAR_LIMIT_DEG,
            "lunar": s.lunar_limit_deg if s.lunar_limit_deg is not None else lunar_default}


def _first(train, kind: str) -> str | None:
    return next((n for n, p in train.pointers.items() if p.shows == kind), None)


def cycle_pointer(train) -> str | None:
    """The name of the train's eclipse-cycle dial pointer, if it has one."""
    return _first(train, "cycle")


def methods(train) -> tuple[str, ...]:
    """Which ways this train can predict eclipses: "pointers" (a node hand, draconic or
    eclipse-year dial) and/or "cycle" (an eclipse-cycle dial)."""
    out = []
    if any(_first(train, k) for k in ("eclipse_year", "node", "draconic")):
        out.append("pointers")
    if cycle_pointer(train):
        out.append("cycle")
    return tuple(out)


def _readings(mech, jd) -> dict[str, np.ndarray]:
    return mech.readout.read_deg(mech.readout.turns_at(jd))


def shown_syzygies(mech, real: Syzygies) -> np.ndarray:
    """When the train's phase pointer shows each real syzygy (new: 0°, full: 180°), UT; the
    real dates themselves when the train has no phase pointer. Newton steps from the real date
    with the pointer's mean rate, so each real syzygy is paired with the train's nearest."""
    name = _first(mech.train, "phase")
    jd = np.asarray(real.jd_ut, dtype=float).copy()
    if name is None or jd.size == 0:
        return jd
    rate = mech.readout.deg_per_day(name)
    if rate == 0:
        return np.full(jd.shape, np.nan)
    target = np.where(real.full, 180.0, 0.0)
    for _ in range(8):
        step = _wrap180(_readings(mech, jd)[name] - target) / rate
        jd = jd - step
        if np.max(np.abs(step)) < 1e-6:
            break
    return jd


def node_distance(mech, sky, jd_shown) -> tuple[np.ndarray, str]:
    """The Sun's distance (degrees, 0-90) from the nearer node as the train shows it at the
    given dates, and in words how it was read. Raises ValueError if the train has no node
    hand, draconic or eclipse-year dial."""
    train = mech.train
    jd = np.asarray(jd_shown, dtype=float)
    read = _readings(mech, jd) if jd.size else {n: jd for n in train.pointers}
    if (name := _first(train, "eclipse_year")) is not None:
        sep, how = read[name], f"eclipse-year dial '{name}'"
    elif (node := _first(train, "node")) is not None:
        if (sun := _first(train, "sun")) is not None:
            sep, how = read[sun] - read[node], f"Sun hand '{sun}' against node hand '{node}'"
        else:
            lo, hi = sky.span_jd
            true_sun = sky.at(np.clip(jd, lo, hi), frame=train.dial).sun_lon_deg
            sep, how = true_sun - read[node], f"the true Sun against node hand '{node}'"
    elif (name := _first(train, "draconic")) is not None:
        sep, how = read[name], f"draconic dial '{name}' (the Moon from the node at syzygy)"
    else:
        raise ValueError("no node hand, draconic or eclipse-year dial")
    d = np.mod(sep, 180.0)
    return np.minimum(d, 180.0 - d), how


def cycle_position(mech, name: str, jd) -> np.ndarray:
    """Where a cycle dial's pointer stands, in months from its zero (0 to N): month k (1-based)
    is the span k-1..k. Month boundaries are where the train shows new moon."""
    from fractions import Fraction

    readout = mech.readout
    m = readout.motions[name]
    n = int(m.pointer.per_turn)
    turns = readout.turns_at(jd)
    lags = readout.kin.slot_lags_turns(turns) if readout.kin.slot_names else None
    p = readout.kin.evaluate(m.lin.scaled(Fraction(1, n)), turns, lags) + m.offset_turns / n
    return np.mod(p, 1.0) * n


def months_at(position, full, n: int) -> np.ndarray:
    """The month (1..n) a syzygy falls in: a new moon belongs to the month starting at the
    nearest boundary, a full moon to the month whose middle it is in."""
    pos = np.asarray(position, dtype=float)
    month = np.where(full, np.floor(pos), np.round(pos))
    return (np.mod(month, n) + 1).astype(int)


def syzygy_months(mech, name: str, jd, full) -> np.ndarray:
    """The month (1..N) of cycle dial ``name`` each syzygy at ``jd`` (UT) falls in, by
    :func:`months_at` from where the pointer stands then: the month whose mark the train reads
    for it. What a check predicts from and what an interface shows as the pointer's month at
    a syzygy, so the two never name different months (a new moon a little before the
    boundary the dial shows belongs to the month starting there, not the one ending)."""
    n = int(mech.train.pointers[name].per_turn)
    return months_at(cycle_position(mech, name, jd), full, n)


def marks_span(train, name: str) -> tuple[float, float]:
    """The span (UT) a cycle dial's marks are read off the sky over: its first turn from the
    epoch."""
    start = train.epoch.jd_ut
    return start, start + int(train.pointers[name].per_turn) * SYNODIC_DAYS


def derive_marks(mech, sky, name: str, penumbral: bool = False,
                 table: SkyEclipses | None = None) -> dict[str, tuple[int, ...]]:
    """The months of a cycle dial that bore eclipses in its first turn from the epoch, as read
    off the sky: what a maker filling such a dial from observation would have engraved."""
    start, end = marks_span(mech.train, name)
    try:
        sky.check_span(start, end)
    except SkyError as exc:
        raise SkyError(f"the marks of cycle dial '{name}' come from the sky over its first "
                       f"turn from the epoch, which cannot be computed: {exc}; or list "
                       f"solar_months and lunar_months in the train file") from None
    if table is None:
        table = sky_eclipses(sky, start, end)
    syz = table.syz
    first = (syz.jd_ut >= start) & (syz.jd_ut < end)
    has = table.has_eclipse(penumbral) & first
    months = syzygy_months(mech, name, syz.jd_ut, syz.full)
    return {"solar": tuple(sorted({int(m) for m in months[has & ~syz.full]})),
            "lunar": tuple(sorted({int(m) for m in months[has & syz.full]}))}


@dataclass(frozen=True)
class Check:
    """A train's eclipse predictions against the sky, one row per real syzygy in the span.

    ``method``: "pointers" or "cycle"; ``how``: what was read, in words; ``limits``: ecliptic
    limits used (pointers); ``marks``: the cycle dial's marked months and ``marks_from``
    ("file" or "sky"); per syzygy: ``jd_ut`` (real), ``full``, ``real_type`` ("" none; penumbral
    lunar eclipses only when they count), ``jd_greatest``, ``gamma``, ``predicted`` (bool),
    ``jd_shown`` (when the train shows it; the real date for a cycle dial), ``detail`` (the
    Sun's distance from the node as shown, degrees; or the cycle dial's month)."""

    method: str
    how: str
    limits: dict
    marks: dict | None
    marks_from: str | None
    lunations: int | None
    epoch_jd: float
    jd_ut: np.ndarray
    full: np.ndarray
    real_type: tuple[str, ...]
    jd_greatest: np.ndarray
    gamma: np.ndarray
    predicted: np.ndarray
    jd_shown: np.ndarray
    detail: np.ndarray
    sky_type: tuple[str, ...] = ()  # as real_type, with penumbral eclipses even when not counted

    @property
    def real(self) -> np.ndarray:
        return np.array([bool(t) for t in self.real_type], dtype=bool)

    def kind(self, i: int) -> str:
        return "lunar" if self.full[i] else "solar"

    def outcome(self, i: int) -> str:
        """"hit", "miss", "false alarm" or "" (rightly quiet) for syzygy ``i``."""
        real, pred = bool(self.real_type[i]), bool(self.predicted[i])
        return {(True, True): "hit", (True, False): "miss", (False, True): "false alarm",
                (False, False): ""}[(real, pred)]

    def counts(self) -> dict[str, dict[str, int]]:
        """Hits, misses and false alarms per kind ("solar", "lunar") and in all ("all")."""
        out = {k: {"hits": 0, "misses": 0, "false_alarms": 0} for k in (*KINDS, "all")}
        real, pred = self.real, self.predicted.astype(bool)
        for kind, sel in (("solar", ~self.full), ("lunar", self.full),
                          ("all", np.ones_like(self.full))):
            out[kind] = {"hits": int(np.sum(sel & real & pred)),
                         "misses": int(np.sum(sel & real & ~pred)),
                         "false_alarms": int(np.sum(sel & ~real & pred))}
        return out

    def first_failure(self) -> int | None:
        """Index of the first syzygy where the prediction and the sky disagree (None: never)."""
        bad = np.flatnonzero(self.real != self.predicted.astype(bool))
        return int(bad[0]) if bad.size else None

    def cycle_of(self, i: int) -> int | None:
        """Which turn of the cycle dial (1 = the first from the epoch) syzygy ``i`` is in."""
        if self.lunations is None:
            return None
        return int(np.floor((self.jd_ut[i] - self.epoch_jd) / (self.lunations * SYNODIC_DAYS))) + 1

    def per_cycle(self) -> list[dict]:
        """Counts per turn of the cycle dial: ``cycle``, ``hits``, ``misses``,
        ``false_alarms`` (cycle dials only; empty otherwise)."""
        if self.lunations is None or not len(self.jd_ut):
            return []
        cyc = np.floor((self.jd_ut - self.epoch_jd) / (self.lunations * SYNODIC_DAYS)) + 1
        real, pred = self.real, self.predicted.astype(bool)
        out = []
        for c in np.unique(cyc):
            sel = cyc == c
            out.append({"cycle": int(c), "hits": int(np.sum(sel & real & pred)),
                        "misses": int(np.sum(sel & real & ~pred)),
                        "false_alarms": int(np.sum(sel & ~real & pred))})
        return out


def check(mech, sky, jd_start: float | str, jd_end: float | str, method: str | None = None,
          progress=None, cancel=None, chunk_days: float = 3652.5, marks=None,
          table: SkyEclipses | None = None) -> Check:
    """Compare a train's eclipse predictions with the real eclipses between two UT dates
    (JD numbers or date text).

    ``method``: "pointers" or "cycle" (default: the cycle dial when the train has one, else
    its pointers). The span is worked in chunks of ``chunk_days``; ``progress(done, total)``
    is called after each, and ``cancel()`` returning true stops the work (raises
    ``KeyboardInterrupt``). ``marks`` overrides a cycle dial's marks (already derived, say);
    ``table`` is the sky's :func:`sky_eclipses` over exactly this span, when already computed
    (the sky does not depend on the train).
    Raises :class:`ArgumentError` (a ``ValueError``) when the train cannot predict eclipses
    the way asked, :class:`SkyError` for dates outside the ephemeris."""
    need_mechanism(mech, "check_eclipses")
    need_sky(sky, "check_eclipses")
    train = mech.train
    have = methods(train)
    if method is not None and method not in ECLIPSE_METHODS:
        raise ArgumentError(f"method {method!r}: choose one of {', '.join(ECLIPSE_METHODS)}"
                            + (f" (this train can predict by: {', '.join(have)})" if have else ""))
    if not have:
        raise ArgumentError("the train has no node hand, draconic or eclipse-year dial and no "
                         "eclipse-cycle dial (shows = \"cycle\"), so it predicts no eclipses")
    if method is None:
        method = "cycle" if "cycle" in have else "pointers"
    if method not in have:
        what = ("eclipse-cycle dial (shows = \"cycle\")" if method == "cycle" else
                "node hand, draconic or eclipse-year dial")
        raise ArgumentError(f"the train has no {what}; it can predict by: {', '.join(have)}")
    lo, hi = _span(jd_start, jd_end, "check_eclipses")
    sky.check_span(lo, hi)
    penumbral = train.eclipses.penumbral
    # the sky, in chunks
    parts, last = [], None
    total = hi - lo
    a = lo
    if table is not None:
        parts, a = [(table, np.ones(len(table.syz), dtype=bool))], np.inf
    while a <= hi:
        if cancel is not None and cancel():
            raise KeyboardInterrupt
        b = min(hi, a + chunk_days)
        part = sky_eclipses(sky, a, b)
        keep = np.ones(len(part.syz), dtype=bool) if last is None else part.syz.number > last
        if keep.any():
            parts.append((part, keep))
            last = int(part.syz.number[keep][-1])
        if progress is not None:
            progress(b - lo, total)
        if b >= hi:
            break
        a = b
    jd = np.concatenate([p.syz.jd_ut[k] for p, k in parts]) if parts else np.zeros(0)
    number = np.concatenate([p.syz.number[k] for p, k in parts]) if parts else np.zeros(0, int)
    types = tuple(t for p, k in parts for t, keep in zip(p.type, k, strict=True) if keep)
    sky_types = types
    types = tuple("" if (t == "penumbral" and not penumbral) else t for t in types)
    greatest = np.concatenate([p.jd_greatest[k] for p, k in parts]) if parts else np.zeros(0)
    gamma = np.concatenate([p.gamma[k] for p, k in parts]) if parts else np.zeros(0)
    syz = Syzygies(jd, number)
    lim = limits(train)
    given, marks, marks_from, lunations = marks, None, None, None
    if method == "pointers":
        shown = shown_syzygies(mech, syz)
        dist, how = node_distance(mech, sky, shown)
        limit = np.where(syz.full, lim["lunar"], lim["solar"])
        predicted = np.isfinite(shown) & (dist < limit)
        detail = dist
        phase = _first(train, "phase")
        how += (f"; syzygies as phase hand '{phase}' shows them" if phase else
                "; at the real syzygies (the train has no phase hand)")
    else:
        name = cycle_pointer(train)
        p = train.pointers[name]
        lunations = int(p.per_turn)
        marks_from = "file" if p.marks is not None else "sky"
        marks = given
        if marks is None:
            marks = p.marks if p.marks is not None else derive_marks(mech, sky, name, penumbral)
        shown = syz.jd_ut.copy()
        month = syzygy_months(mech, name, shown, syz.full)
        solar = np.isin(month, marks["solar"]) & ~syz.full
        lunar = np.isin(month, marks["lunar"]) & syz.full
        predicted = solar | lunar
        detail = month.astype(float)
        how = (f"cycle dial '{name}' of {lunations} lunations, marks "
               f"{'listed in the train file' if marks_from == 'file' else 'read off the sky over its first turn from the epoch'}")
    return Check(method, how, lim, marks, marks_from, lunations, train.epoch.jd_ut, jd,
                 syz.full, types, greatest, gamma, predicted.astype(bool), shown, detail,
                 sky_types)


# --- for an interface: the eclipse situation at a date, cached by the year ----------------

@dataclass(frozen=True)
class EclipseNow:
    """The syzygy nearest a date and what the train and the sky say of it.

    ``jd_syzygy`` (real), ``kind`` ("solar" at new moon, "lunar" at full), ``days_away``
    (syzygy minus the date), ``predicted`` (None when the train predicts no eclipses),
    ``detail`` (Sun's distance from the node as shown, degrees, or the cycle dial's month),
    ``sky_type`` ("" none; penumbral shown even when not counted), ``counted`` (the sky's
    eclipse counts for the comparison), ``gamma``, ``outcome`` ("hit"... or "")."""

    jd_syzygy: float
    kind: str
    days_away: float
    predicted: bool | None
    how: str
    detail: float
    sky_type: str
    counted: bool
    gamma: float
    jd_greatest: float
    outcome: str


def limit_arcs(node_deg: float, lims: dict[str, float]) -> list[tuple[str, float, float]]:
    """Arcs of ecliptic longitude (kind, start°, end°, anticlockwise) within the ecliptic
    limits of both nodes: where the Sun must stand at a syzygy for an eclipse of that kind."""
    out = []
    for kind in KINDS:
        for node in (node_deg, node_deg + 180.0):
            out.append((kind, (node - lims[kind]) % 360.0, (node + lims[kind]) % 360.0))
    return out


class EclipseWatch:
    """A train's eclipse predictions and the real eclipses around a moving date, computed a
    year or so at a time and kept, so an interface can ask at every frame.

    ``at(jd)`` gives an :class:`EclipseNow`; ``next_real(jd, +1|-1)`` and
    ``next_predicted(jd)`` the date of the next (or previous) real eclipse, or predicted one,
    after ``jd`` (None when the ephemeris ends first). A new readout (pointers re-set) needs a
    new watch. ``painted``: the same train with its pointers as first set, whose cycle dial
    reads the marks off the sky when the file lists none (default ``mech``): a maker paints
    them once, so a watch for a re-set pointer keeps them where the first setting put them."""

    WINDOW_DAYS = 400.0

    #: the sky's eclipse tables a watch computed, per sky, by span (the newest KEEP_WINDOWS):
    #: the sky does not depend on the train, so a watch made for a changed train (an edit, a
    #: re-set) or one moving back to dates already seen reuses them
    KEEP_WINDOWS = 8
    _tables: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()

    def __init__(self, mech, sky, painted=None):
        if painted is not None and painted.train is not mech.train:
            raise ArgumentError("painted: the marks are painted on this train, not another")
        self.mech, self.sky = mech, sky
        self.painted = mech if painted is None else painted
        self.method = None
        have = methods(mech.train)
        if have:
            self.method = "cycle" if "cycle" in have else "pointers"
        self._marks = None
        self._check: Check | None = None
        self._span = (np.inf, -np.inf)

    @property
    def marks(self):
        """The cycle dial's marks (from the file, or read off the sky once, with the dial as
        :attr:`painted` sets it), or None."""
        name = cycle_pointer(self.mech.train)
        if name is None:
            return None
        if self._marks is None:
            p = self.mech.train.pointers[name]
            if p.marks is not None:
                self._marks = p.marks
            else:
                start, end = marks_span(self.mech.train, name)
                self.sky.check_span(start, end)  # derive_marks says why it cannot
                self._marks = derive_marks(self.painted, self.sky, name,
                                           self.mech.train.eclipses.penumbral,
                                           table=self._table(start, end))
        return self._marks

    def _kept(self) -> OrderedDict:
        kept = self._tables.get(self.sky)
        if kept is None:
            kept = self._tables[self.sky] = OrderedDict()
        return kept

    def _table(self, a: float, b: float) -> SkyEclipses:
        """The sky's eclipses over exactly [a, b]: kept, or computed and kept."""
        kept = self._kept()
        table = kept.get((a, b))
        if table is None:
            table = kept[(a, b)] = sky_eclipses(self.sky, a, b)
            for arr in (table.syz.jd_ut, table.syz.number, table.jd_greatest, table.gamma):
                arr.setflags(write=False)  # shared by every watch on this sky
            while len(kept) > self.KEEP_WINDOWS:
                kept.popitem(last=False)
        kept.move_to_end((a, b))
        return table

    def _ensure(self, a: float, b: float) -> Check | None:
        """The comparison over at least [a, b] (clipped to the ephemeris): the kept one when
        it covers that, else a fresh one over [a, b] widened to a window around it."""
        lo, hi = self.sky.span_jd
        a, b = max(a, lo + 1.0), min(b, hi - 1.0)
        if a >= b:
            return None
        if not (self._span[0] <= a and b <= self._span[1]):
            pad = max(0.0, (self.WINDOW_DAYS - (b - a)) / 2)
            a0, b0 = max(lo + 1.0, a - pad), min(hi - 1.0, b + pad)
            # a window already computed for this sky that covers [a, b] serves as well
            a0, b0 = next(((x, y) for x, y in reversed(self._kept())
                           if x <= a and b <= y and y - x <= 2 * self.WINDOW_DAYS), (a0, b0))
            self._check = self._compute(a0, b0)
            self._span = (a0, b0)
        return self._check

    def _compute(self, a: float, b: float) -> Check:
        table = self._table(a, b)
        if self.method is None:
            n = len(table.syz)
            pen = self.mech.train.eclipses.penumbral
            counted = tuple("" if (t == "penumbral" and not pen) else t for t in table.type)
            return Check("none", "the train predicts no eclipses", limits(self.mech.train),
                         None, None, None, self.mech.train.epoch.jd_ut, table.syz.jd_ut,
                         table.syz.full, counted, table.jd_greatest, table.gamma,
                         np.zeros(n, dtype=bool), table.syz.jd_ut.copy(), np.full(n, np.nan),
                         table.type)
        return check(self.mech, self.sky, a, b, self.method, marks=self.marks, table=table)

    def at(self, jd: float) -> EclipseNow | None:
        half = SYNODIC_DAYS / 2
        c = self._ensure(jd - half, jd + half)
        if c is None or not len(c.jd_ut):
            c = self._ensure(jd - self.WINDOW_DAYS / 2, jd + self.WINDOW_DAYS / 2)
            if c is None or not len(c.jd_ut):
                return None
        i = int(np.argmin(np.abs(c.jd_ut - jd)))
        sky_type = c.sky_type[i] if c.sky_type else c.real_type[i]
        return EclipseNow(float(c.jd_ut[i]), c.kind(i), float(c.jd_ut[i] - jd),
                          None if self.method is None else bool(c.predicted[i]), c.how,
                          float(c.detail[i]), sky_type, bool(c.real_type[i]),
                          float(c.gamma[i]), float(c.jd_greatest[i]),
                          c.outcome(i) if self.method is not None else "")

    def _next(self, jd: float, direction: int, want) -> float | None:
        lo, hi = self.sky.span_jd
        step = self.WINDOW_DAYS
        a = jd
        while lo + 1.0 < a < hi - 1.0:
            b = a + direction * step
            c = self._ensure(min(a, b), max(a, b))
            if c is None:
                return None
            sel = want(c)
            when = c.jd_greatest if want is _real else c.jd_shown
            ok = sel & ((when > jd + 1e-6) if direction > 0 else (when < jd - 1e-6))
            if ok.any():
                idx = np.flatnonzero(ok)
                return float(when[idx[0]] if direction > 0 else when[idx[-1]])
            a = b
        return None

    def next_real(self, jd: float, direction: int = 1) -> float | None:
        """Greatest eclipse of the next (direction +1) or previous (-1) real eclipse."""
        return self._next(jd, 1 if direction > 0 else -1, _real)

    def next_predicted(self, jd: float, direction: int = 1) -> float | None:
        """When the train shows the next (or previous) syzygy it predicts an eclipse at."""
        if self.method is None:
            return None
        return self._next(jd, 1 if direction > 0 else -1, _predicted)


def _real(c: Check) -> np.ndarray:
    return np.array([bool(t) for t in (c.sky_type or c.real_type)], dtype=bool)


def _predicted(c: Check) -> np.ndarray:
    return c.predicted.astype(bool)
