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
See :func:`pointer_predictions` (a node hand, draconic or eclipse-year dial read at the
syzygies a phase hand shows) and :class:`CycleDial` (a dial turning once per N lunations with
marks for the months that bear eclipses).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

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


def syzygies(sky, jd_start: float, jd_end: float) -> Syzygies:
    """Every new and full moon between two UT dates (inclusive), in time order.

    Refined on the fast Sun/Moon path to well under a second of time (Newton steps on the
    elongation with its slope measured a minute apart, all syzygies at once)."""
    lo, hi = float(min(jd_start, jd_end)), float(max(jd_start, jd_end))
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
    for _ in range(8):
        e0 = sky.at(jd).elongation_deg
        e1 = sky.at(jd + dt).elongation_deg
        slope = _wrap180(e1 - e0) / dt
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
    kind[near] = classify_solar(g["r1"], g["l1"], g["l2"], g["tan_f2"])
    return SolarCircumstances(when, gamma, l1, l2, kind)


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

    def as_dict(self) -> dict:
        return {"jd_ut": self.jd_ut, "kind": self.kind, "type": self.type,
                "gamma": self.gamma, "lunation": self.number // 2}


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


def sky_eclipses(sky, jd_start: float, jd_end: float) -> SkyEclipses:
    """Every syzygy between two UT dates and the real eclipse at each (see module docstring)."""
    from .sky import lunar_eclipse_search

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


def real_eclipses(sky, jd_start: float, jd_end: float, penumbral: bool = True) -> list[Eclipse]:
    """The real eclipses between two UT dates, solar and lunar, in time order."""
    return sky_eclipses(sky, jd_start, jd_end).eclipses(penumbral)

