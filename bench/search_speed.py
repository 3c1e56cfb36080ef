"""Speed and memory of the tooth-count search, beside a plain numpy brute force.

Run: ``python bench/search_speed.py``. Prints, in one run:

1. On the same bounds for both (2 stages of 8-150 teeth; 3 stages of 8-45): a plain numpy
   brute force — every product of k pinion counts against every product of k wheel counts,
   the error of each pair computed in chunks — and our search; their times, speed ratio and
   whether their best trains agree (error and teeth).
2. The full 8-150 range at 3 and 4 stages, each in a fresh process: wall time and the
   process's peak resident memory, beside the peak of a process that only imports the search
   (the goals: 4 stages within 5 s and 300 MB).

Timings on a shared machine are noisy: read the ratio, measured side by side.
"""

from __future__ import annotations

import itertools
import json
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

from engine.figures import figure
from engine.search import make_constraints, make_target, search

CYCLE = "synodic month"
ROOT = Path(__file__).resolve().parent.parent
GOAL_S, GOAL_MB = 5.0, 300.0


def _multiset_products(counts: range, k: int) -> tuple[np.ndarray, np.ndarray]:
    combos = np.array(list(itertools.combinations_with_replacement(counts, k)), np.int64)
    return combos.prod(axis=1), combos.sum(axis=1)


def numpy_brute_force(target: float, pinions: range, wheels: range, k: int,
                      chunk: int = 512) -> tuple[float, int]:
    """(|relative error|, teeth) of the best k-stage train: every pair of a product of k
    pinion counts (driving) and a product of k wheel counts, all errors computed."""
    num, num_t = _multiset_products(pinions, k)
    den, den_t = _multiset_products(wheels, k)
    inv_den = 1.0 / den
    best_err, best_teeth = np.inf, 0
    for s in range(0, len(num), chunk):
        err = np.abs(np.outer(num[s:s + chunk], inv_den) / target - 1.0)
        lo = float(err.min())
        if lo > best_err * (1 + 1e-9):
            continue
        i, j = np.nonzero(err <= lo * (1 + 1e-9))
        teeth = int((num_t[s + i] + den_t[j]).min())
        if lo < best_err * (1 - 1e-9) or teeth < best_teeth:
            best_err, best_teeth = min(lo, best_err), teeth
    return best_err, best_teeth


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t0


_CHILD = """
import json, resource, sys, time
from engine.search import make_constraints, make_target, search
k = int(sys.argv[1])
out = {"import_peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}
if k:
    t = make_target(cycle=sys.argv[2])
    t0 = time.perf_counter()
    r = search(t, make_constraints(stages=k), top=10, with_convergents=False)
    out["seconds"] = time.perf_counter() - t0
    out["best"] = str(r.results[0].ratio)
    out["ppm"] = r.results[0].period_error_ppm
out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps(out))
"""


def fresh_process(k: int) -> dict:
    done = subprocess.run([sys.executable, "-c", _CHILD, str(k), CYCLE], capture_output=True,
                          text=True, cwd=ROOT, check=True)
    return json.loads(done.stdout)


def main() -> None:
    # the fresh processes first, while this one is small: a child's peak counts the parent's
    # memory it starts as a copy of
    base, full = fresh_process(0), {k: fresh_process(k) for k in (3, 4)}
    target = make_target(cycle=CYCLE)
    t = float(target.ratio)
    print(f"target: {CYCLE}, crank 1 day per turn")
    print("1. same bounds, numpy brute force beside our search (best of 10 trains kept):")
    for k, lo, hi in ((2, 8, 150), (3, 8, 45)):
        counts = range(lo, hi + 1)
        cons = make_constraints(stages=k, wheels=(lo, hi), pinions=(lo, hi))
        (b_err, b_teeth), t_brute = timed(lambda c=counts, k=k: numpy_brute_force(t, c, c, k))
        report, t_ours = timed(lambda c=cons: search(target, c, top=10, with_convergents=False))
        best = report.results[0]
        o_err = abs(float(best.ratio / target.ratio - 1))
        agree = abs(o_err - b_err) <= 1e-9 * max(b_err, 1e-300) and best.total_teeth == b_teeth
        pairs = len(list(itertools.combinations_with_replacement(counts, k))) ** 2
        print(f"  {k} stages of {lo}-{hi} teeth ({pairs:,} pairs of products)")
        print(f"    numpy brute force {t_brute:8.3f} s   best {figure(b_err * 1e6, 6)} ppm, "
              f"{b_teeth} teeth")
        print(f"    search            {t_ours:8.3f} s   best {figure(o_err * 1e6, 6)} ppm, "
              f"{best.total_teeth} teeth")
        print(f"    speed ratio       {t_brute / t_ours:8.1f} x   agree: "
              f"{'yes' if agree else 'NO'}")
    print("2. full range 8-150 teeth, top 10, each in a fresh process:")
    print(f"  import only                          peak {base['peak_mb']:7.1f} MB")
    for k in (3, 4):
        r = full[k]
        goal = (f"   (goal: {GOAL_S:g} s, {GOAL_MB:g} MB: "
                f"{'met' if r['seconds'] <= GOAL_S and r['peak_mb'] <= GOAL_MB else 'NOT met'})"
                if k == 4 else "")
        print(f"  {k} stages  {r['seconds']:8.3f} s   peak {r['peak_mb']:7.1f} MB   "
              f"best {r['best']} ({figure(r['ppm'], 3, sign=True)} ppm){goal}")


if __name__ == "__main__":
    main()
