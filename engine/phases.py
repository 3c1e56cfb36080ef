"""Names of the Moon's phases: one table of elongation bands, used by the sky command, the
interface and the API.

A person calls the Moon "new" only around conjunction, when it cannot be seen, and "full" or a
"quarter" only near the exact phase; crescent and gibbous fill the days between. So the exact
phases (0, 90, 180, 270° of elongation) get bands one mean day of elongation wide on each side
(about ±12.2°, from the mean synodic month), and the four in-between names take the rest. A Moon
1.5 days old (19° from the Sun, about 3% lit) is a waxing crescent, as most people would say.
"""

from __future__ import annotations

from .periods import JULIAN_CENTURY_DAYS, MOON_ELONGATION_RATE

EXACT_PHASE_HALF_WIDTH_DAYS = 1.0
"""How near an exact phase (in mean days) the Moon is still called new, a quarter or full.
About a day, as people speak of it (common practice, no source)."""

DEG_PER_DAY = MOON_ELONGATION_RATE / JULIAN_CENTURY_DAYS  # mean elongation, about 12.19°/day
HALF_WIDTH_DEG = EXACT_PHASE_HALF_WIDTH_DAYS * DEG_PER_DAY

# (name, centre of the band in degrees of elongation, half-width in degrees or None for "up to
# the neighbours"); in order of increasing elongation. A band with a half-width is an exact
# phase; the others run from one exact band to the next.
PHASES = (
    ("new", 0.0, HALF_WIDTH_DEG),
    ("waxing crescent", 45.0, None),
    ("first quarter", 90.0, HALF_WIDTH_DEG),
    ("waxing gibbous", 135.0, None),
    ("full", 180.0, HALF_WIDTH_DEG),
    ("waning gibbous", 225.0, None),
    ("last quarter", 270.0, HALF_WIDTH_DEG),
    ("waning crescent", 315.0, None),
)
PHASE_NAMES = tuple(name for name, _, _ in PHASES)

# Band edges: each exact phase covers centre ± half-width; the in-between band the rest.
# A tuple, not an array: the sky command's --help reads the bands without loading numpy.
_STARTS = tuple((c - w) % 360.0 if w is not None else (c - 45.0 + HALF_WIDTH_DEG)
                for _, c, w in PHASES)


def phase_bands() -> list[tuple[str, float, float]]:
    """(name, from °, to °) of each band of elongation, as the help and the docs say them."""
    ends = _STARTS[1:] + _STARTS[:1]
    return [(name, float(a), float(b)) for name, a, b in zip(PHASE_NAMES, _STARTS, ends,
                                                           strict=True)]


def phase_names(elongation_deg) -> list[str]:
    """Phase name of each elongation (the Moon's ecliptic longitude less the Sun's, degrees;
    flattened, a scalar gives a one-item list)."""
    import numpy as np

    from .angles import mod

    e = mod(np.ravel(np.asarray(elongation_deg, dtype=float)) + HALF_WIDTH_DEG, 360.0)
    # shifted so "new" starts at 0: the shifted starts are increasing
    starts = np.mod(np.array(_STARTS) + HALF_WIDTH_DEG, 360.0)
    band = np.searchsorted(starts, e, side="right") - 1
    return [PHASE_NAMES[int(b)] for b in band]


def phase_help() -> str:
    """One line saying every band, for help texts: ``new (347.8°–12.2°), ...``."""
    return ", ".join(f"{name} {a:.1f}°–{b:.1f}°" for name, a, b in phase_bands())
