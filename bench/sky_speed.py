"""Fast sky pipeline against skyfield's reference pipeline on the same 36,525 dates.

Prints microseconds per date for each, their ratio (target: fast at least 20x quicker) and the
largest difference in Sun and Moon ecliptic longitude and latitude (target: under 0.01");
then the same for the seven planets (geocentric apparent and heliocentric longitude, the Earth
heliocentric too), timed once each, with the largest difference per planet (target: 0.01").

    python bench/sky_speed.py [--frame equinox|stars] [--repeat N]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from engine.sky import PLANETS, Sky

ARCSEC = 1 / 3600


def _best(fn, repeat: int) -> tuple[float, object]:
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def _diff_arcsec(a, b) -> float:
    return float(np.max(np.abs((np.asarray(a) - b + 180.0) % 360.0 - 180.0)) / ARCSEC)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--frame", default="equinox", choices=("equinox", "stars"))
    ap.add_argument("--repeat", type=int, default=3, help="timed runs of each (best is shown)")
    ap.add_argument("--no-planets", action="store_true", help="skip the planets' part")
    args = ap.parse_args()

    sky = Sky()
    # One date a day for a Julian century, at an hour that is not midnight.
    jd = 2415020.5 + 0.3 + np.arange(36525, dtype=float)
    # Warm both pipelines (imports, caches, ephemeris pages) on a few dates first.
    sky.at(jd[:100], args.frame)
    sky.at(jd[:100], args.frame, fast=False)

    t_fast, fast = _best(lambda: sky.at(jd, args.frame), args.repeat)
    t_slow, slow = _best(lambda: sky.at(jd, args.frame, fast=False), max(1, args.repeat - 1))

    n = jd.size
    print(f"{sky.name}, {n} dates from 1900 to 2000, frame {args.frame!r}")
    print(f"reference (skyfield step by step): {t_slow / n * 1e6:8.2f} us/date")
    print(f"fast (batched):                    {t_fast / n * 1e6:8.2f} us/date")
    print(f"speed ratio:                       {t_slow / t_fast:8.1f} x   (target >= 20)")
    print("largest difference, fast - reference (target < 0.01\"):")
    for key in ("sun_lon_deg", "sun_lat_deg", "moon_lon_deg", "moon_lat_deg"):
        print(f"  {key:14s} {_diff_arcsec(getattr(fast, key), getattr(slow, key)):.6f}\"")
    print(f"  moon_km        {float(np.max(np.abs(fast.moon_km - slow.moon_km))) * 1000:.3f} m")
    if args.no_planets:
        return 0
    names = PLANETS + ("earth",)
    t_fast, fast = _best(lambda: sky.at(jd, args.frame, planets=names), 1)
    t_slow, slow = _best(lambda: sky.at(jd, args.frame, planets=names, fast=False), 1)
    print(f"planets too ({len(PLANETS)} apparent + {len(names)} heliocentric), same dates:")
    print(f"reference (skyfield step by step): {t_slow / n * 1e6:8.2f} us/date")
    print(f"fast (batched):                    {t_fast / n * 1e6:8.2f} us/date")
    print(f"speed ratio:                       {t_slow / t_fast:8.1f} x")
    print("largest difference, fast - reference (target < 0.01\"):")
    print(f"  {'':8s} {'from Earth':>12s} {'from Sun':>12s}")
    for name in names:
        geo = ("" if name == "earth" else
               f"{_diff_arcsec(fast.planet_lon_deg[name], slow.planet_lon_deg[name]):.6f}\"")
        helio = _diff_arcsec(fast.planet_helio_lon_deg[name], slow.planet_helio_lon_deg[name])
        print(f"  {name:8s} {geo:>12s} {helio:11.6f}\"")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
