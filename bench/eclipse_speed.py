"""All eclipses 1900-2050 (DE421): wheelwork's search against a plain skyfield peer, one run.

wheelwork: syzygies on the fast Sun/Moon path (all at once), solar shadow geometry at the new
moons near a node (vectorised), lunar eclipses by skyfield's search. The peer: skyfield's
``almanac.moon_phases`` with ``find_discrete`` for the syzygies, skyfield's lunar eclipse
search, and the same solar criteria computed one new moon at a time with plain skyfield
calls (the straightforward way to write it). The peer takes minutes for the whole span, so it
runs over the first ``--peer-years`` (default 10) and its time is scaled to the span (both
searches grow linearly with the span); the lists must agree eclipse for eclipse over those
years. Target: wheelwork's whole search in at most 2 s.

    python bench/eclipse_speed.py [--repeat N] [--peer-years Y]
"""

from __future__ import annotations

import argparse
import time

import numpy as np
from skyfield import almanac, eclipselib

from engine import eclipses as E
from engine.dates import parse_date
from engine.periods import JULIAN_YEAR_DAYS
from engine.sky import Sky, _timescale, eclipse_vectors

START, END = "1900-01-02", "2049-12-30"


def _best(fn, repeat: int):
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def ours(sky):
    return E.sky_eclipses(sky, parse_date(START), parse_date(END)).eclipses()


def peer(sky, end_jd):
    ts = _timescale()
    kernel = sky._loaded.kernel
    t0, t1 = ts.ut1_jd(parse_date(START)), ts.ut1_jd(end_jd)
    t, phase = almanac.find_discrete(t0, t1, almanac.moon_phases(kernel))
    new = np.asarray(t.ut1)[np.asarray(phase) == 0]
    found = []
    for jd in new:  # one new moon at a time: golden-section search on the axis distance
        a, b = jd - 0.3, jd + 0.3

        def dist(x):
            return abs(E._axis_geometry(*eclipse_vectors(sky, x))["gamma"][0])

        g = (np.sqrt(5) - 1) / 2
        c, d = b - g * (b - a), a + g * (b - a)
        fc, fd = dist(c), dist(d)
        while b - a > 1e-4:
            if fc < fd:
                b, d, fd = d, c, fc
                c = b - g * (b - a)
                fc = dist(c)
            else:
                a, c, fc = c, d, fd
                d = a + g * (b - a)
                fd = dist(d)
        geo = E._axis_geometry(*eclipse_vectors(sky, (a + b) / 2))
        k = int(E.classify_solar(geo["r1"], geo["l1"], geo["l2"], geo["tan_f2"])[0])
        if k >= 0:
            found.append(((a + b) / 2, "solar", E.SOLAR_TYPES[k]))
    lt, code, _ = eclipselib.lunar_eclipses(t0, t1, kernel)
    found += [(float(j), "lunar", E.LUNAR_TYPES[int(c)]) for j, c in zip(lt.ut1, code,
                                                                           strict=True)]
    return sorted(found)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3, help="timed runs of wheelwork's search")
    ap.add_argument("--peer-years", type=float, default=10.0,
                    help="years the peer runs over (its time is scaled to the whole span)")
    args = ap.parse_args()
    sky = Sky()
    E.sky_eclipses(sky, parse_date("2000-01-01"), parse_date("2001-01-01"))  # warm caches
    t_ours, mine = _best(lambda: ours(sky), args.repeat)
    span = parse_date(END) - parse_date(START)
    peer_end = min(parse_date(END), parse_date(START) + args.peer_years * JULIAN_YEAR_DAYS)
    t_part, theirs = _best(lambda: peer(sky, peer_end), 1)
    t_peer = t_part * span / (peer_end - parse_date(START))
    a = [(e.kind, e.type) for e in mine if e.jd_ut <= peer_end]
    b = [(k, typ) for _, k, typ in theirs]
    times = max((abs(e.jd_ut - j) for e, (j, _, _) in zip(mine, theirs, strict=False)),
                default=0.0)
    print(f"{sky.name}, all eclipses {START} to {END}: {len(mine)} found "
          f"({sum(1 for e in mine if e.kind == 'solar')} solar, "
          f"{sum(1 for e in mine if e.kind == 'lunar')} lunar)")
    print(f"wheelwork (vectorised):             {t_ours:7.2f} s   (target <= 2 s)")
    print(f"peer (skyfield, one new moon a time): {t_peer:5.2f} s   "
          f"({t_part:.1f} s measured over {args.peer_years:g} years, scaled)")
    print(f"speed ratio:                        {t_peer / t_ours:7.1f} x")
    same = a == b
    print(f"same eclipses, same types over the peer's {len(b)}: {'yes' if same else 'NO'}; "
          f"greatest eclipse agrees within {times * 1440:.2f} min")
    return 0 if same else 1


if __name__ == "__main__":
    raise SystemExit(main())
