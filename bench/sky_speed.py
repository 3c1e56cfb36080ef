"""The sky fast path against skyfield, side by side in one run, on the same dates.

For each frame (equinox of date, fixed stars) it times three pipelines on three sets of 36,525
dates: regular (one a day at 07:12 UT, 1900-2000), 6-hourly (every six hours from 1960-01-01
01:47 UT, 25 years: the drift command's default step, four dates to each record of DE421's
4-day Moon) and scattered (uniformly random in 1900-2000, seeded, sorted). The three
pipelines:

* skyfield's default pipeline, ``observe().apparent().frame_latlon()``: IAU 2000A nutation and
  light bent by the Sun, Jupiter and Saturn (``apparent()``'s default deflectors) — the
  accuracy reference, and the peer of the 40x goal;
* the fair peer, skyfield's own code doing the physics of the fast path and nothing more:
  ``apparent(deflectors=())`` (the fast path bends no light for the Sun and Moon: below
  0.00001" for them) and, where the frame nutates, IAU 2000B nutation — skyfield's own
  ``iau2000b_radians``, given through the nutation hook its documentation describes (it is a
  little quicker than ``engine.sky.skyfield_2000b_nutation``, so the peer is the harder one).
  The peer of the 10x goal;
* our fast path, ``Sky.at``, on every set of dates: skyfield's time a date hardly depends on
  their spacing, ours does (the ephemeris is evaluated once per record on a regular grid, and
  nutation, precession and TDB come from coarse grids for dense dates), so each set has its
  own rows, ratios and goal lines, and each ratio divides a peer's time on the same dates by
  ours.

skyfield gets its dates in batches, as the fast path batches its own work: each of its
pipelines is timed on 2,048 and on 16,384 dates a call and keeps the quicker (small batches
keep to the cache; long ones make the 2000A series cheaper a date; one call on all 36,525
dates spends more in the system on memory). ``--peer-batch N`` times one size only (0: one
call). Row B1 times the fair peer in one call on the regular dates, to show what the batches
give it.

It prints CPU microseconds a date (CPU time of this process and its threads, best of N
interleaved rounds, so that a change in the load of a shared machine falls on every pipeline
alike; compare the ratios rather than the times), with BLAS held to one thread for every
pipeline: after each product its idle worker spins on a free core, and that spinning is
charged to whatever runs next (on a quiet 2-core machine it doubled skyfield's 2000A times
and our scattered ones; a second thread cannot lower CPU time, only add to it), the ratios (rounded down), the largest
difference of each pipeline from the 2000A reference on the same dates (Sun and Moon, the
larger of longitude and latitude; target under 0.003"), and each goal as met or MISSED for
each set of dates. In the stars frame (the fixed ecliptic of J2000) skyfield
computes no nutation at all — the bench checks this on its Time objects in the run — so there
the fair peer only leaves out the deflection (a 2000B hook would charge our nutation to a
peer that never reads it). Then the planets: the seven planets' geocentric apparent and
heliocentric longitudes (and the Earth's), fast path against skyfield's reference (default
pipeline, ``Sky.at(fast=False)``, at the same batch sizes, keeping the quicker), timed once
each, with the largest difference per planet (target: 0.01").

    python bench/sky_speed.py [--frame equinox|stars|both] [--repeat N] [--no-planets]
                              [--no-6h] [--no-scattered] [--peer-batch N]

A full run (both frames, three sets of dates, 3 rounds, the planets) takes one to two minutes
(73 s, 69 s of CPU, on the shared 2-core machine; it prints its own time at the end); ``--no-6h``, ``--no-scattered``, ``--no-planets`` and ``--frame`` shorten it.
"""

from __future__ import annotations

import argparse
import math
import textwrap
import time
from types import SimpleNamespace

import numpy as np

from engine.sky import PLANETS, Sky, _timescale

ARCSEC = 1 / 3600
BODIES = {"Sun": ("sun_lon_deg", "sun_lat_deg"), "Moon": ("moon_lon_deg", "moon_lat_deg")}
KEYS = tuple(k for keys in BODIES.values() for k in keys)
N_DATES = 36525  # one Julian century of days (25 years at four dates a day)
JD_1900 = 2415020.5  # 1900-01-01 0h UT
JD_1960 = 2436934.5  # 1960-01-01 0h UT
SIX_HOURS = 0.25
SIX_HOUR_START = 0.0742  # 01:46:51 UT: no whole hour, so no date falls on a record's edge
SEED = 1900
# Dates per skyfield call, each pipeline timed at each and keeping the quicker: small batches
# keep to the cache, long ones make the 2000A series cheaper a date; one call on all 36,525
# dates spends more in the system on memory.
PEER_BATCHES = (2048, 16384)
GOAL_FAIR, GOAL_DEFAULT, GOAL_ARCSEC = 10.0, 40.0, 0.003
WIDTH = 98


def _best(fn, repeat: int) -> tuple[float, object]:
    """Best of ``repeat`` runs in CPU seconds of this process (all its threads): on a shared
    machine wall-clock time mostly measures the other users; CPU time measures the work."""
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.process_time()
        out = fn()
        best = min(best, time.process_time() - t0)
    return best, out


def _diff_arcsec(a, b) -> float:
    return float(np.max(np.abs((np.asarray(a) - b + 180.0) % 360.0 - 180.0)) / ARCSEC)


def _get(out, key):
    return out[key] if isinstance(out, dict) else getattr(out, key)


def _skyfield(sky: Sky, jd: np.ndarray, frame: str, fair: bool, nutates: bool,
              batch: int) -> dict:
    """skyfield's own pipeline on ``batch`` dates at a time (0: all in one call), the results
    joined as one would."""
    if not batch or jd.size <= batch:
        return _skyfield_call(sky, jd, frame, fair, nutates)
    parts = [_skyfield_call(sky, jd[i:i + batch], frame, fair, nutates)
             for i in range(0, jd.size, batch)]
    out = {k: np.concatenate([p[k] for p in parts]) for k in KEYS}
    out["nutation"] = all(p["nutation"] for p in parts)
    return out


def _skyfield_call(sky: Sky, jd: np.ndarray, frame: str, fair: bool, nutates: bool) -> dict:
    """skyfield's own pipeline, step by step: observe, apparent, frame_latlon. ``fair``: the
    physics of the fast path — no light deflection and (where the frame nutates) IAU 2000B."""
    from skyfield.framelib import ecliptic_frame, ecliptic_J2000_frame
    from skyfield.nutationlib import iau2000b_radians

    t = _timescale().ut1_jd(jd)
    if fair and nutates:
        # skyfield reads a Time's nutation angles from this cached attribute; its
        # documentation suggests setting it to swap in IAU 2000B.
        t._nutation_angles_radians = iau2000b_radians(t)
    deflectors = () if fair else (10, 599, 699)  # the second is apparent()'s default
    here = sky._earth.at(t)
    f = ecliptic_frame if frame == "equinox" else ecliptic_J2000_frame
    slat, slon, _ = here.observe(sky._sun).apparent(deflectors).frame_latlon(f)
    mlat, mlon, _ = here.observe(sky._moon).apparent(deflectors).frame_latlon(f)
    return {"sun_lon_deg": slon.degrees % 360.0, "sun_lat_deg": slat.degrees,
            "moon_lon_deg": mlon.degrees % 360.0, "moon_lat_deg": mlat.degrees,
            # skyfield keeps a Time's nutation angles once it has computed them
            "nutation": "_nutation_angles_radians" in vars(t)}


def _date_sets(six_hourly: bool, scattered: bool) -> dict[str, np.ndarray]:
    """Regular: one a day at 07:12 UT from 1900-01-01. 6-hourly: every six hours from
    1960-01-01 01:47 UT (25 years). Scattered: as many dates, uniformly random in 1900-2000,
    seeded, sorted."""
    sets = {"regular": JD_1900 + 0.3 + np.arange(N_DATES, dtype=float)}
    if six_hourly:
        sets["6-hourly"] = JD_1960 + SIX_HOUR_START + SIX_HOURS * np.arange(N_DATES, dtype=float)
    if scattered:
        rng = np.random.default_rng(SEED)
        sets["scattered"] = np.sort(rng.uniform(JD_1900, JD_1900 + N_DATES, N_DATES))
    return sets


def _wrap(text: str, indent: str = "  ", more: str = "    ") -> None:
    print(textwrap.fill(text, WIDTH, initial_indent=indent, subsequent_indent=more,
                        break_on_hyphens=False))


def _floor_ratio(x: float) -> str:
    """A ratio to two decimals, rounded down: 9.996x reads 9.99x beside its MISSED."""
    return f"{math.floor(x * 100) / 100:.2f}x"


def _ratio(x: float | None) -> str:
    return f"{'':>8s}" if x is None else f"{math.floor(x * 10) / 10:7.1f}x"  # rounded down


def _frame(sky: Sky, sets: dict[str, np.ndarray], frame: str, repeat: int,
           batches: tuple[int, ...]) -> bool:
    """Time and check one frame; True when every goal is met."""
    reg = sets["regular"]
    # Warm every pipeline (imports, caches, ephemeris pages) on a few dates first; the fast
    # path on enough of each set to take its grid paths.
    for jd in sets.values():
        sky.at(jd[:1000], frame)
    for fair in (False, True):
        _skyfield(sky, reg[:100], frame, fair, True, 0)
    # Interleaved rounds: every pipeline is timed once per round at each batch size (the fast
    # path, which takes a few tens of milliseconds, three times), so a change in the machine's
    # load falls on all of them alike; each keeps its best, and skyfield its quickest size.
    # The fair peer gets the 2000B hook only where skyfield's own pipeline computed nutation
    # (found in the run, on its Time): the fixed J2000 ecliptic needs none, and the hook
    # would charge our nutation to it. B1 is B in one call, on the regular dates only, to show
    # what the batches give the peers.
    one_call = 0 not in batches
    times, outs, size = {}, {}, {}
    for _ in range(repeat):
        for name, jd in sets.items():
            runs = [("A", b, lambda jd=jd, b=b: _skyfield(sky, jd, frame, False, True, b), 1)
                    for b in batches]
            runs += [("B", b, lambda jd=jd, b=b, name=name: _skyfield(
                sky, jd, frame, True, outs["A", name]["nutation"], b), 1) for b in batches]
            if one_call and name == "regular":
                runs.append(("B1", 0, lambda jd=jd: _skyfield(
                    sky, jd, frame, True, outs["A", "regular"]["nutation"], 0), 1))
            runs.append(("C", None, lambda jd=jd: sky.at(jd, frame), 3))
            for row, b, fn, n in runs:
                t, outs[row, name] = _best(fn, n)
                if t < times.get((row, name), math.inf):
                    times[row, name], size[row, name] = t, b
    nutates = {name: outs["A", name]["nutation"] for name in sets}

    what = ("true ecliptic and equinox of date" if frame == "equinox"
            else "fixed ecliptic of J2000")
    print(f"\nframe {frame!r} ({what}): {N_DATES} dates in each set")
    any_nutation = any(nutates.values())
    fair_text = ("IAU 2000B nutation (skyfield's iau2000b_radians, through its nutation hook) "
                 "and apparent(deflectors=())" if any_nutation else "apparent(deflectors=())")
    _wrap("A = skyfield's default pipeline: IAU 2000A nutation, light bent by the Sun, Jupiter "
          "and Saturn; the accuracy reference and the peer of the >= 40x goal.")
    _wrap(f"B = the fair peer: skyfield's own code with the physics of the fast path, {fair_text}"
          "; the peer of the >= 10x goal.")
    _wrap("C = our fast path, Sky.at (no light deflection for the Sun and Moon: below "
          "0.00001\" for them).")
    if not any_nutation:
        _wrap("skyfield computed no nutation in this frame (checked on its Time objects in the "
              "run), so A and B differ only by the deflection.")
    elif not all(nutates.values()):
        _wrap("WARNING: skyfield computed nutation on some sets of dates and not on others.")
    _wrap("skyfield gets its dates in batches, as the fast path batches its own work: each "
          "of A and B is timed at "
          + (f"{len(batches)} sizes ({', '.join(map(str, batches))} dates a call, "
             "--peer-batch) and keeps the quicker; column 'call'" if len(batches) > 1
             else "one size (--peer-batch); column 'call'")
          + " gives the dates a call, 'all' for one call"
          + (" (row B1: B in one call)." if one_call else "."))
    described = {"regular": "regular = one a day at 07:12 UT from 1900-01-01 (to 2000)",
                 "6-hourly": "6-hourly = every six hours from 1960-01-01 01:47 UT (to 1985)",
                 "scattered": f"scattered = uniformly random in 1900-2000 (seed {SEED}), "
                              "sorted"}
    _wrap(f"dates: {'; '.join(described[name] for name in sets)}. Each ratio divides the "
          "peer's time on the same dates by the row's.")
    print(f"  {'':24s} {'':9s} {'':>6s} {'cpu':>8s} {'B':>8s} {'A':>8s}   "
          "largest difference from A")
    print(f"  {'pipeline':24s} {'dates':9s} {'call':>6s} {'us/date':>8s} {'/ this':>8s} "
          f"{'/ this':>8s}   {'Sun':>10s} {'Moon':>10s}")
    labels = {"A": "A skyfield default", "B": "B skyfield same physics",
              "B1": "B1 B in one call", "C": "C fast path (ours)"}
    worst = {}
    for row in labels:
        for name, jd in sets.items():
            if (row, name) not in times:
                continue
            t = times[row, name]
            vs_b = None if row not in ("C", "B1") else times["B", name] / t
            vs_a = None if row == "A" else times["A", name] / t
            if row == "A":
                diffs = f"{'reference':>21s}"
            else:
                by_body = [max(_diff_arcsec(_get(outs[row, name], k), outs["A", name][k])
                               for k in keys) for keys in BODIES.values()]
                diffs = " ".join(f"{d:9.6f}\"" for d in by_body)
                if row == "C":
                    worst[name] = max(by_body)
            b = size[row, name]
            call = "" if b is None else "all" if not 0 < b < jd.size else str(b)
            print(f"  {labels[row]:24s} {name:9s} {call:>6s} {t / jd.size * 1e6:8.2f} {_ratio(vs_b)} "
                  f"{_ratio(vs_a)}   {diffs}")

    def mark(ok: bool) -> str:
        return "met" if ok else "MISSED"

    goals = (
        (f"vs B (fair) >= {GOAL_FAIR:.0f}x", lambda n: times["B", n] / times["C", n],
         lambda x: x >= GOAL_FAIR, _floor_ratio),
        (f"vs A (default) >= {GOAL_DEFAULT:.0f}x", lambda n: times["A", n] / times["C", n],
         lambda x: x >= GOAL_DEFAULT, _floor_ratio),
        (f"within {GOAL_ARCSEC}\" of A", lambda n: worst[n], lambda x: x < GOAL_ARCSEC,
         "{:.6f}\""),
    )
    print("  goals of the fast path, C, against the peers timed on the same dates:")
    print((f"    {'goal':24s}" + "".join(f" {name + ' dates':>14s}{'':7s}" for name in sets))
          .rstrip())
    all_met = True
    for label, value, ok, fmt in goals:
        cells = []
        for name in sets:
            x = value(name)
            all_met &= ok(x)
            cells.append(f"{fmt(x) if callable(fmt) else fmt.format(x):>14s} {mark(ok(x)):6s}")
        print((f"    {label:24s}" + "".join(f" {c}" for c in cells)).rstrip())
    if not any_nutation:
        t_a = times["A", "regular"] / reg.size * 1e6
        _wrap(f"(no nutation to leave out here: {GOAL_DEFAULT:.0f}x A would be "
              f"{t_a / GOAL_DEFAULT:.2f} us a date for the ephemeris, light time, aberration "
              "and the frame alone)")
    return all_met


def _planets(sky: Sky, jd: np.ndarray, frame: str, batches: tuple[int, ...]) -> None:
    n = jd.size
    names = PLANETS + ("earth",)

    def slow_pipeline(batch: int):
        """The reference pipeline on ``batch`` dates a call (0: one call), joined."""
        step = batch if 0 < batch < n else n
        parts = [sky.at(jd[i:i + step], frame, planets=names, fast=False)
                 for i in range(0, n, step)]
        return SimpleNamespace(**{
            f: {k: np.concatenate([getattr(p, f)[k] for p in parts])
                for k in getattr(parts[0], f)}
            for f in ("planet_lon_deg", "planet_helio_lon_deg")})

    t_fast, fast = _best(lambda: sky.at(jd, frame, planets=names), 1)
    t_slow, slow, size = math.inf, None, None
    for b in batches:  # each size once; the quicker is kept, as for the Sun and Moon
        t, out = _best(lambda b=b: slow_pipeline(b), 1)
        if t < t_slow:
            t_slow, slow, size = t, out, b
    calls = f"{size} dates a call" if 0 < size < n else "one call"
    print(f"\nplanets ({len(PLANETS)} apparent + {len(names)} heliocentric, with the Sun and "
          f"Moon), frame {frame!r}, regular dates:")
    print(f"  skyfield (reference, default pipeline):  {t_slow / n * 1e6:8.2f} us/date "
          f"({calls})")
    print(f"  fast path:                               {t_fast / n * 1e6:8.2f} us/date "
          f"({t_slow / t_fast:.1f}x)")
    print("  largest difference, fast - reference (target < 0.01\"):")
    print(f"    {'':8s} {'from Earth':>12s} {'from Sun':>12s}")
    for name in names:
        geo = ("" if name == "earth" else
               f"{_diff_arcsec(fast.planet_lon_deg[name], slow.planet_lon_deg[name]):.6f}\"")
        helio = _diff_arcsec(fast.planet_helio_lon_deg[name], slow.planet_helio_lon_deg[name])
        print(f"    {name:8s} {geo:>12s} {helio:11.6f}\"")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--frame", default="both", choices=("equinox", "stars", "both"))
    ap.add_argument("--repeat", type=int, default=3,
                    help="timed rounds, interleaved: each round runs every skyfield pipeline "
                         "once and the fast path three times; the best is shown")
    ap.add_argument("--no-planets", action="store_true", help="skip the planets' part")
    ap.add_argument("--no-6h", action="store_true",
                    help="skip the 6-hourly set (every six hours, 25 years)")
    ap.add_argument("--no-scattered", action="store_true",
                    help="skip the scattered set (uniformly random dates)")
    ap.add_argument("--peer-batch", type=int, metavar="N",
                    help="dates per skyfield call, one size for both its pipelines (0: all in "
                         "one call; by default each is timed at "
                         f"{' and '.join(map(str, PEER_BATCHES))} and keeps the quicker)")
    args = ap.parse_args()
    if args.repeat < 1:
        ap.error(f"--repeat must be at least 1, not {args.repeat}")
    if args.peer_batch is not None and args.peer_batch < 0:
        ap.error(f"--peer-batch must be 0 or more, not {args.peer_batch}")

    from threadpoolctl import threadpool_limits

    threadpool_limits(limits=1, user_api="blas")  # every pipeline alike (see the docstring)
    wall, cpu = time.perf_counter(), time.process_time()
    sky = Sky()
    print(f"{sky.name}; BLAS on one thread for every pipeline; the machine may be shared, so "
          "read the ratios")
    sets = _date_sets(not args.no_6h, not args.no_scattered)
    frames = ("equinox", "stars") if args.frame == "both" else (args.frame,)
    batches = PEER_BATCHES if args.peer_batch is None else (args.peer_batch,)
    met = [_frame(sky, sets, frame, args.repeat, batches) for frame in frames]
    print(f"\nall speed and accuracy goals met: {'yes' if all(met) else 'no'}")
    if not args.no_planets:
        for frame in frames:
            _planets(sky, sets["regular"], frame, batches)
    print(f"\nthis run took {time.perf_counter() - wall:.0f} s ({time.process_time() - cpu:.0f} s "
          "of CPU)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
