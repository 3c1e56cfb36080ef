"""Speed of the train solver on large trains, beside the plainest exact peer.

Run: ``python bench/solve_speed.py``. Builds compound chains of 250, 1,000 and 2,000 arbors
(2,000 is the loader's limit), then in one run times

* ``engine.kinematics.solve`` — the full solver (every constraint checked, locks and undriven
  arbors found, carriers and pin-and-slot stages handled);
* the peer: the same rates by plain ``Fraction`` propagation along the meshes (a breadth-first
  walk from the crank, rate(driven) = -rate(driver) * z_driver / z_driven, no checks) — the
  least work any exact solver can do on this train;

and prints their times, the ratio (ours / peer: the price of the checks, which must stay a
small constant as the train grows, i.e. the solver is linear like the peer) and whether every
arbor's rate agrees exactly. Also times loading the 1,000-arbor file (TOML, checks). Figures
depend on the machine and its load; the ratio is measured side by side and survives load.
"""

from __future__ import annotations

import time
from collections import deque
from fractions import Fraction

from engine.kinematics import solve
from engine.loader import parse_train

HEAD = """[crank]
arbor = "x0"
days_per_turn = 1
[epoch]
date = "2026-01-01"
set = "angles"
[pointers.p]
shows = "sun"
arbor = "x0"
set_deg = 0
"""


def chain(n: int) -> str:
    parts = [HEAD]
    for i in range(n):
        parts.append(f"[arbors.x{i}]\nwheels = {{ w{i} = {12 + i % 5}, p{i} = {10 + i % 7} }}\n")
    for i in range(1, n):
        parts.append(f'[[meshes]]\nwheels = ["p{i - 1}", "w{i}"]\n')
    return "".join(parts)


def propagate(train) -> dict[str, Fraction]:
    """The peer: rates by a breadth-first walk along the meshes (external spur meshes only)."""
    links: dict[str, list[tuple[str, Fraction]]] = {a: [] for a in train.arbors}
    for m in train.meshes:
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        links[w1.arbor].append((w2.arbor, -Fraction(w1.teeth, w2.teeth)))
        links[w2.arbor].append((w1.arbor, -Fraction(w2.teeth, w1.teeth)))
    rates = {train.crank.arbor: Fraction(1)}
    todo = deque([train.crank.arbor])
    while todo:
        a = todo.popleft()
        for b, k in links[a]:
            if b not in rates:
                rates[b] = rates[a] * k
                todo.append(b)
    return rates


def best_of(fn, repeat: int) -> tuple[object, float]:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return out, min(times)


def main() -> None:
    print("solver on compound chains (best of 5; machine may be shared)")
    print(f"{'arbors':>7} {'solve s':>9} {'peer s':>9} {'ratio':>7}  exact agreement")
    solve_s = {}
    for n in (250, 1000, 2000):
        train = parse_train(chain(n), f"chain{n}.toml")
        kin, t_ours = best_of(lambda train=train: solve(train), 5)
        peer, t_peer = best_of(lambda train=train: propagate(train), 5)
        agree = kin.rates == peer
        solve_s[n] = t_ours
        print(f"{n:7,} {t_ours:9.4f} {t_peer:9.4f} {t_ours / t_peer:6.1f}x  "
              f"{'yes' if agree else 'NO'}")
    text = chain(1000)
    _, t_load = best_of(lambda: parse_train(text, "chain1000.toml"), 3)
    print(f"loading the 1,000-arbor file ({len(text):,} bytes): {t_load:.4f} s; "
          f"load + solve "
          f"{t_load + solve_s[1000]:.3f} s")


if __name__ == "__main__":
    main()
