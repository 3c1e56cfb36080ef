"""Speed of the tooth-count search, beside a straightforward brute force on a reduced range.

Run: ``python bench/search_speed.py``. Prints, in one run: the brute force (nested loops over
every ordered choice of counts) and our search on the same reduced bounds, their speed ratio
and whether their best trains agree; then the full-range 3-stage and 4-stage timings.
"""

from __future__ import annotations

import itertools
import math
import time
from fractions import Fraction

from engine.search import make_constraints, make_target, search

CYCLE = "synodic month"


def brute_force(target: Fraction, pinions: range, wheels: range, k: int
                ) -> tuple[Fraction, int]:
    """(|relative error|, teeth) of the best k-stage train, by nested loops (pinions drive)."""
    best = (Fraction(10**9), 0)
    for drivers in itertools.product(pinions, repeat=k):
        num = math.prod(drivers)
        for driven in itertools.product(wheels, repeat=k):
            r = Fraction(num, math.prod(driven))
            cand = (abs(r / target - 1), sum(drivers) + sum(driven))
            if cand < best:
                best = cand
    return best


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t0


def main() -> None:
    target = make_target(cycle=CYCLE)
    pinions, wheels, k = range(6, 16), range(20, 101), 2
    cons = make_constraints(stages=k, wheels=(wheels[0], wheels[-1]),
                            pinions=(pinions[0], pinions[-1]))
    (b_err, b_teeth), t_brute = timed(lambda: brute_force(target.ratio, pinions, wheels, k))
    report, t_ours = timed(lambda: search(target, cons, top=1, with_convergents=False))
    best = report.results[0]
    o_err = abs(best.ratio / target.ratio - 1)
    agree = (o_err, best.total_teeth) == (b_err, b_teeth)
    print(f"target: {CYCLE}, crank 1 day per turn")
    print(f"reduced bounds: {k} stages, pinions {pinions[0]}-{pinions[-1]}, wheels "
          f"{wheels[0]}-{wheels[-1]} ({(len(pinions) * len(wheels)) ** k:,} ordered choices)")
    print(f"  brute force  {t_brute:8.3f} s   best error {float(b_err) * 1e6:.6f} ppm, "
          f"{b_teeth} teeth")
    print(f"  search       {t_ours:8.3f} s   best error {float(o_err) * 1e6:.6f} ppm, "
          f"{best.total_teeth} teeth")
    print(f"  speed ratio  {t_brute / t_ours:8.0f} x   agree: {'yes' if agree else 'NO'}")
    print("full range 8-150 teeth, top 10 (first run, tables built):")
    for stages in (3, 4):
        cons = make_constraints(stages=stages)
        report, t = timed(lambda c=cons: search(target, c, top=10, with_convergents=False))
        r = report.results[0]
        print(f"  {stages} stages  {t:8.3f} s   best {r.ratio} ({r.error_ppm:+.3g} ppm)")
    cons = make_constraints(stages="1-3")
    report, t = timed(lambda: search(target, cons, top=10))
    print(f"  1-3 stages with convergents  {t:8.3f} s")


if __name__ == "__main__":
    main()
