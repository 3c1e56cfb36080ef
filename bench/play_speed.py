"""Speed of the workshop Monte Carlo (``wheelwork play``), beside a build-by-build loop.

Run: ``python bench/play_speed.py``. On the demo train (12 meshes, 5 pointers), the same
random draws are evaluated two ways in one run:

1. the engine's vectorised Monte Carlo (all builds of one wheel at once, numpy over builds ×
   times);
2. a plain loop over builds, each build's errors computed with numpy over the times only —
   the straightforward way to write it.

It prints both times, their ratio, and whether the two agree (same seed, same draws, so the
pointer spreads must match to rounding). Timings on a shared machine are noisy: read the
ratio, measured side by side.
"""

from __future__ import annotations

import math
import time
from pathlib import Path

import numpy as np

from engine.kinematics import solve
from engine.loader import load_train
from engine.periods import JULIAN_YEAR_DAYS
from engine.play import (
    Tolerances,
    _forms,
    _monte_carlo,
    _rate_in_mesh,
    pointer_sensitivity,
)

ROOT = Path(__file__).resolve().parent.parent
TRAIN = ROOT / "engine" / "trains" / "tide_office.toml"
YEARS, BUILDS, SAMPLES, SEED = 100.0, 2000, 256, 1


def terms_of(train, kin, tol):
    frames = {f.mesh_index: f for f in kin.mesh_frames}
    out = []
    for m in train.meshes:
        for w in (m.driver, m.driven):
            amp = tol.eccentricity_mm / (math.pi * m.module_mm)
            out.append((m, w, amp, tol.division,
                        _rate_in_mesh(train, kin, w, frames[m.index].reference)))
    return out


def loop_monte_carlo(train, terms, psens, years, builds, samples, seed):
    """The same draws as the engine's, in the same order, one build at a time."""
    rng = np.random.default_rng(seed)
    t_days = np.sort(rng.uniform(0.0, years * JULIAN_YEAR_DAYS, samples))
    crank = t_days / float(train.crank.days_per_turn)
    draws = []
    for _m, w, amp, div, _rate in terms:  # draw exactly as the engine does
        z = train.wheels[w].teeth
        mag = amp * rng.uniform(0.0, 1.0, builds) if amp else None
        phase = rng.uniform(0.0, 2 * np.pi, builds) if amp else None
        teeth = rng.normal(0.0, div, (builds, z)) if div else None
        draws.append((mag, phase, teeth))
    err = {p: np.zeros((builds, samples)) for p in psens}
    for b in range(builds):
        for (m, w, amp, div, rate), (mag, phase, teeth) in zip(terms, draws, strict=True):
            turns = rate * crank
            eps = np.zeros(samples)
            if amp:
                eps += mag[b] * np.sin(2 * np.pi * turns + phase[b])
            if div:
                z = train.wheels[w].teeth
                eps += teeth[b][np.floor(np.mod(turns, 1.0) * z).astype(np.int64) % z]
            for p, s in psens.items():
                if s[m.index - 1]:
                    err[p][b] += s[m.index - 1] * eps
    return {p: float(np.std(e)) for p, e in err.items()}


def main() -> None:
    train = load_train(TRAIN)
    kin = solve(train)
    tol = Tolerances.of(train)
    _forms(train, None)
    psens = pointer_sensitivity(train, kin)
    terms = terms_of(train, kin, tol)
    t0 = time.perf_counter()
    fast = _monte_carlo(train, terms, psens, YEARS, BUILDS, SAMPLES, SEED)
    t_fast = time.perf_counter() - t0
    t0 = time.perf_counter()
    slow = loop_monte_carlo(train, terms, psens, YEARS, BUILDS, SAMPLES, SEED)
    t_slow = time.perf_counter() - t0
    agree = all(math.isclose(fast[p][0], slow[p], rel_tol=1e-9) for p in psens)
    print(f"{TRAIN.name}: {len(train.meshes)} meshes, {len(psens)} pointers, "
          f"{BUILDS} builds x {SAMPLES} times over {YEARS:g} years")
    print(f"  vectorised Monte Carlo   {t_fast:8.3f} s")
    print(f"  build-by-build loop      {t_slow:8.3f} s")
    print(f"  ratio (loop / vectorised) {t_slow / t_fast:7.1f}x   same spreads: {agree}")
    for p in psens:
        print(f"    {p:8s} sigma {fast[p][0]:.5f} deg  (loop {slow[p]:.5f})")


if __name__ == "__main__":
    main()
