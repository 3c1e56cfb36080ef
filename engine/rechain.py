"""New tooth counts for one pointer's chain: the tooth search aimed at what the pointer shows,
and its answers as an edit of the train.

A pointer's *chain* is the run of meshes from the crank arbor to its arbor (the ratio report's
stages). Only meshes on the frame (not riding on a carrier) whose two wheels each appear once
on the way can be re-cut. Of those, a mesh is the pointer's *own* when changing either wheel
moves no other pointer; by default only the own meshes are searched, so the rest of the train
stays exactly as it is. With ``whole=True`` every re-cuttable mesh of the chain is searched,
and the other pointers those meshes also drive move with it (the before/after panel shows by
how much).

The answers keep the chain's shape: the same meshes, in the same places, with new tooth counts
(one result stage per mesh, in chain order), so the turning sense and the rest of the train are
unchanged. A different number of stages would mean new arbors and meshes in the file, which
the designer adds by hand (``wheelwork search --emit`` writes them).

Coaxial returns: where a searched mesh spans the same two axes as another mesh (the table
orrery's planets go out to a layshaft and come back to a tube on the centre, every pair 65 mm
apart), new teeth must keep the centre distance at the meshes' modules, or the check refuses
the train. A mesh whose axes another mesh (kept as it is) or the file's positions hold apart
must keep that distance: its tooth sum is fixed (``2 a / m``); two searched meshes that alone
span two axes must agree with each other. Such a chain is searched by its own enumeration,
mesh by mesh within those sums (:func:`_search_returns`), and says so (``PointerChain.returns``).

The search itself is otherwise :func:`engine.search.search`: exhaustive within the bounds. The target is
worked out exactly: the pointer's cycles per crank turn are an affine function ``a·P + b`` of
the product ``P`` of the searched meshes' ratios (``b`` is what the rest of the train adds, for
a pointer read against another arbor), found from the solver at two tooth sets and checked at a
third; the target product is then ``(T − b) / a`` for the mean motion ``T`` the pointer's kind
stands for on the chosen dial.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, replace
from fractions import Fraction

import numpy as np

from .checks import TOLERANCE_MM, centre_distance_mm
from .edit import forbidden_factors
from .errors import SearchCancelled, SearchError, TrainError
from .figures import figure
from .kinds import KINDS
from .kinematics import axis_groups, solve
from .mechanism import Mechanism
from .periods import JULIAN_CENTURY_DAYS
from .ratios import Stage, stage_path
from .readout import pointer_linear
from .search import (
    MAX_STAGES,
    MAX_TOP,
    Target,
    TrainResult,
    WheelPair,
    make_constraints,
    reach,
    search,
    train_result,
)
from .train import FRAME, Train


@dataclass(frozen=True)
class Return:
    """Searched meshes that must keep one centre distance (a coaxial return): ``stages``
    index the chain's searched meshes, each at its module; ``distance_mm`` is what other
    meshes or the file's positions hold the two axes at, None when the searched meshes alone
    span them (then they need only agree); ``band_mm`` the distances within the check's
    tolerance of every one of those."""

    stages: tuple[int, ...]
    labels: tuple[str, ...]  # the meshes as the file numbers them: "mesh 5 (drive_mars–…)"
    modules: tuple[float, ...]
    distance_mm: float | None
    axes: str  # the two axes, "drive and lay_mercury"
    band_mm: tuple[float, float] | None = None

    def text(self) -> str:
        meshes = " and ".join(label.split(" (")[0] for label in self.labels)
        if self.distance_mm is None:
            return f"{meshes} keep equal centre distances ({self.axes})"
        return f"{meshes} keep {figure(self.distance_mm, 5)} mm between {self.axes}"


@dataclass(frozen=True)
class PointerChain:
    """What can be searched for one pointer, and the exact target of the search."""

    pointer: str
    shows: str
    frame: str
    stages: tuple[Stage, ...]  # the meshes to re-cut, crank side first
    kept: tuple[Stage, ...]  # meshes on the way left as they are
    whole: bool  # True: meshes shared with other pointers are searched too
    own_count: int  # how many meshes of the chain are the pointer's own
    also_moves: tuple[str, ...]  # other pointers the searched meshes also drive
    target: Target  # for the product of the searched meshes' ratios (magnitude)
    ideal: Fraction  # the pointer's mean cycles per crank turn (signed, as the dial reads)
    a: Fraction  # pointer cycles per crank turn = a · P + b, P the signed product
    b: Fraction
    sign: int  # the sign of P (each external mesh reverses)
    target_name: str
    returns: tuple[Return, ...] = ()  # coaxial returns the answers keep

    def pointer_ratio(self, product: Fraction) -> Fraction:
        """The pointer's cycles per crank turn when the searched meshes multiply to
        ``product`` (a magnitude)."""
        return self.a * self.sign * product + self.b

    @property
    def ratio_now(self) -> Fraction:
        """The pointer's cycles per crank turn with the teeth the train has now: an answer
        with other teeth may give the very same (18/92 · 18/104 and 9/46 · 9/52)."""
        return self.pointer_ratio(abs(_product(self.stages, {})))


@dataclass(frozen=True)
class ChainAnswer:
    """One answer of the search, as the pointer would read it and as an edit."""

    result: TrainResult
    teeth: dict[str, int]  # wheel -> new teeth, the edit
    ratio: Fraction  # pointer cycles per crank turn with these teeth
    period_error_ppm: float  # (its period / the mean period − 1) · 1e6
    drift_deg_per_century: float  # pointer minus sky, mean rate

    def stages_text(self) -> str:
        return " · ".join(f"{s.driver}/{s.driven}" for s in self.result.stages)


def _own_result(chain: PointerChain, cons) -> TrainResult | None:
    """The chain's own tooth counts as an answer, when the bounds ``cons`` admit them: the
    search keeps each ratio once, by its fewest teeth, and would offer 10/76 · 11/112 · 25/118
    for the tide office's Sun in place of its own 10/59 · 11/128 · 25/133 (the same ratio)."""
    drivers, driven = (set(c) for c in cons.sides(chain.target))
    if not all(s.driver_teeth in drivers and s.driven_teeth in driven for s in chain.stages):
        return None
    if any(s.internal for s in chain.stages):
        return None
    return train_result(tuple(WheelPair(s.driver_teeth, s.driven_teeth) for s in chain.stages),
                        chain.target)


def _with_teeth(train: Train, teeth: dict[str, int]) -> Train:
    wheels = dict(train.wheels)
    for w, n in teeth.items():
        wheels[w] = replace(wheels[w], teeth=n)
    return replace(train, wheels=wheels)


def _ratios(train: Train) -> dict[str, Fraction] | None:
    """Every pointer's cycles per crank turn, None when the train then locks."""
    try:
        kin = solve(train)
    except TrainError:
        return None
    return {p.name: pointer_linear(kin, p).crank for p in train.pointers.values()}


def _product(stages, teeth: dict[str, int]) -> Fraction:
    out = Fraction(1)
    for s in stages:
        out *= -Fraction(teeth.get(s.driver, s.driver_teeth), teeth.get(s.driven, s.driven_teeth))
    return out


def pointer_chain(mech: Mechanism, pointer: str, frame: str | None = None,
                  whole: bool | None = None) -> PointerChain:
    """The searchable chain of ``pointer`` judged on a dial of ``frame`` (default: the
    train's). ``whole``: search the meshes shared with other pointers too; None (default)
    searches the pointer's own meshes when it has any, else the whole chain. Raises
    :class:`SearchError` saying why when nothing can be searched."""
    train, kin = mech.train, mech.kin
    frame = frame or train.dial
    if pointer not in train.pointers:
        raise SearchError(f"pointer '{pointer}': no such pointer in this train")
    p = train.pointers[pointer]
    found = stage_path(train, kin, p.arbor)
    path = found[0] if found else []
    meshes = [s for s in path if s.kind == "mesh"]
    count: dict[str, int] = {}
    for s in meshes:
        for w in (s.driver, s.driven):
            count[w] = count.get(w, 0) + 1
    cuttable = [s for s in meshes if s.reference == FRAME and not s.internal
                and count[s.driver] == 1 and count[s.driven] == 1]
    if not cuttable:
        two = [ps for ps in train.pin_slots.values()
               if ps.slot_arbor == p.arbor and ps.carrier is not None]
        if two:  # a two-circle hand: its motion is set by the circles that carry the pin
            ps = two[0]
            raise SearchError(
                f"pointer '{pointer}': a two-circle hand, driven by the pin-and-slot "
                f"'{ps.name}', whose pin rides the epicycle '{ps.pin_arbor}' on the deferent "
                f"'{ps.carrier}': its motion is set by the wheels that turn those two, not by a "
                "chain of its own; change those wheels in the parts list")
        raise SearchError(f"pointer '{pointer}': no plain mesh on the frame leads from the crank "
                          "to its arbor, so there is no chain to search; change its wheels in "
                          "the parts list")
    base = _ratios(train)
    others = [n for n in train.pointers if n != pointer]
    moves: dict[int, set[str]] = {}
    for i, s in enumerate(cuttable):
        moved: set[str] = set()
        for w in (s.driver, s.driven):
            r = _ratios(_with_teeth(train, {w: train.wheels[w].teeth + 1}))
            moved |= set(others) if r is None else {n for n in others if r[n] != base[n]}
        moves[i] = moved
    own = [s for i, s in enumerate(cuttable) if not moves[i]]
    if whole is None:
        whole = not own
    chosen = cuttable if whole else own
    if not chosen:
        raise SearchError(f"pointer '{pointer}': every mesh on its way also drives "
                          f"{', '.join(sorted(set().union(*moves.values())))}; search the "
                          "whole chain (those pointers then move too)")
    if len(chosen) > MAX_STAGES:
        raise SearchError(f"pointer '{pointer}': {len(chosen)} meshes to search, more than the "
                          f"{MAX_STAGES} stages the tooth search takes")
    also = sorted(set().union(*(moves[i] for i, s in enumerate(cuttable) if s in chosen)))
    # the pointer's ratio as an affine function of the searched product, from the solver
    first, last = chosen[0], chosen[-1]
    p0 = _product(chosen, {})
    r0 = base[pointer]
    t1 = {first.driven: first.driven_teeth + 1}
    r1 = _ratios(_with_teeth(train, t1))
    t2 = {last.driver: last.driver_teeth + 2}
    r2 = _ratios(_with_teeth(train, t2))
    if r1 is None or r2 is None:
        raise SearchError(f"pointer '{pointer}': the train locks when these meshes change, so "
                          "their tooth counts cannot be searched one chain at a time")
    p1, p2 = _product(chosen, t1), _product(chosen, t2)
    a = (r1[pointer] - r0) / (p1 - p0)
    b = r0 - a * p0
    if a == 0 or a * p2 + b != r2[pointer]:
        raise SearchError(f"pointer '{pointer}': its motion does not follow these meshes in "
                          "proportion (a differential or a carrier lies between), so the "
                          "search cannot aim at it")
    period = KINDS[p.shows].mean_period(frame)
    dpt = train.crank.days_per_turn
    ideal = Fraction(period.deg_per_day) / 360 * dpt
    want = (ideal - b) / a
    sign = 1 if p0 > 0 else -1
    if want == 0 or (want > 0) != (sign > 0):
        raise SearchError(f"pointer '{pointer}': with these meshes it turns the wrong way for "
                          f"the {period.name}; no tooth counts can change that (set reversed "
                          "in the file, or add an idler)")
    target = Target(abs(want), dpt, f"pointer {pointer}: {period.name}")
    return PointerChain(pointer, p.shows, frame, tuple(chosen),
                        tuple(s for s in meshes if s not in chosen), bool(whole), len(own),
                        tuple(also), target, ideal, a, b, sign, period.name,
                        coaxial_returns(mech, chosen))


def coaxial_returns(mech: Mechanism, chosen) -> tuple[Return, ...]:
    """The centre distances the searched meshes ``chosen`` must keep (see the module's
    docstring): meshes with a module, grouped by the two axes they span (arbors on one axis,
    as the check reckons them)."""
    train, kin = mech.train, mech.kin
    groups = axis_groups(train, kin)
    by_wheels = {frozenset((m.driver, m.driven)): m for m in train.meshes}
    searched = {frozenset((s.driver, s.driven)): i for i, s in enumerate(chosen)}

    def axes_of(m) -> frozenset:
        return frozenset((groups[train.wheels[m.driver].arbor],
                          groups[train.wheels[m.driven].arbor]))

    spans: dict[frozenset, list[int]] = {}
    for key, i in searched.items():
        m = by_wheels[key]
        if m.module_mm is not None and not m.internal and len(axes_of(m)) == 2:
            spans.setdefault(axes_of(m), []).append(i)
    placed = {g: a.at_mm for a in train.arbors.values() for g in [groups[a.name]]
              if a.at_mm is not None and a.mount == FRAME}
    out = []
    for pair, idx in spans.items():
        kept = [m for m in train.meshes if m.module_mm is not None and not m.internal
                and frozenset((m.driver, m.driven)) not in searched and axes_of(m) == pair]
        g1, g2 = sorted(pair)
        held = [centre_distance_mm(k.module_mm, train.wheels[k.driver].teeth,
                                   train.wheels[k.driven].teeth) for k in kept]
        if g1 in placed and g2 in placed:
            held.append(math.dist(placed[g1], placed[g2]))
        if not held and len(idx) == 1:
            continue  # one mesh alone between two free axes: any distance will do
        meshes = [by_wheels[frozenset((chosen[i].driver, chosen[i].driven))] for i in idx]
        # each axis named by an arbor of these meshes on it (Mars's return runs to lay_mars,
        # on the axis every layshaft shares, which its first arbor, lay_mercury, named)
        arbors = [train.wheels[w].arbor for m in meshes for w in (m.driver, m.driven)]
        a1, a2 = (next((a for a in arbors if groups[a] == g), g) for g in (g1, g2))
        out.append(Return(
            tuple(idx), tuple(m.label for m in meshes), tuple(m.module_mm for m in meshes),
            (max(held) + min(held)) / 2 if held else None, f"{a1} and {a2}",
            (max(held) - TOLERANCE_MM, min(held) + TOLERANCE_MM) if held else None))
    return tuple(out)


def chain_search(chain: PointerChain, wheels="8-150", pinions="8-150",
                 forbidden_primes=(), max_error_ppm: float | None = None, top: int = 20,
                 progress=None, cancel=None) -> list[ChainAnswer]:
    """The best ``top`` tooth sets for the chain's meshes (fewer if ``max_error_ppm`` leaves
    fewer), best first, none with a tooth count a forbidden prime divides. ``wheels`` and
    ``pinions`` are tooth ranges (``"8-150"``) for the larger and smaller member of each
    mesh. ``progress``/``cancel`` as for :func:`engine.search.search`."""
    if not 1 <= top <= MAX_TOP:
        raise SearchError(f"answers: must be from 1 to {MAX_TOP}, got {top}")
    if max_error_ppm is not None and not (math.isfinite(max_error_ppm) and max_error_ppm > 0):
        raise SearchError(f"max error: must be more than 0 ppm, got {max_error_ppm}")
    k = len(chain.stages)
    plain = make_constraints(stages=k, wheels=wheels, pinions=pinions)
    allowed = None
    if forbidden_primes:
        lo = min(plain.wheels[0], plain.pinions[0])
        hi = max(plain.wheels[1], plain.pinions[1])
        allowed = [n for n in range(lo, hi + 1) if not forbidden_factors(n, forbidden_primes)]
        if not allowed:
            raise SearchError("every tooth count in range has a forbidden prime factor")
    cons = make_constraints(stages=k, wheels=plain.wheels, pinions=plain.pinions,
                            allowed=allowed)
    lo, hi = reach(chain.target, cons)
    t = chain.target.ratio
    if not lo / 2 <= t <= hi * 2:
        raise SearchError(
            f"out of reach: {k} mesh{'es' if k > 1 else ''} of these counts give "
            f"{figure(float(lo), 4)} to {figure(float(hi), 4)} turns per crank turn, the "
            f"pointer needs {figure(float(t), 4)}; widen the tooth ranges"
            + ("" if chain.whole else ", or search the whole chain"))
    if chain.returns:
        results = _search_returns(chain, cons, top if max_error_ppm is None else MAX_TOP,
                                  cancel)
        if progress is not None:
            progress(1.0)
    else:
        results = search(chain.target, cons, top=MAX_TOP if max_error_ppm else top,
                         with_convergents=False, progress=progress, cancel=cancel).results
    dpt = chain.target.crank_days
    own = _own_result(chain, cons)
    out = []
    for res in results:
        if own is not None and res.ratio == own.ratio:
            res, own = own, None  # the train's own counts for its own ratio, when in bounds
        teeth = {}
        for st, pair in zip(chain.stages, res.stages, strict=True):
            teeth[st.driver] = pair.driver
            teeth[st.driven] = pair.driven
        ratio = chain.pointer_ratio(res.ratio)
        if ratio == 0:
            continue
        ppm = float(abs(chain.ideal) / abs(ratio) - 1) * 1e6
        drift = float((ratio - chain.ideal) / dpt) * 360.0 * JULIAN_CENTURY_DAYS
        if max_error_ppm is not None and abs(ppm) > max_error_ppm:
            continue
        out.append(ChainAnswer(res, teeth, ratio, ppm, drift))
        if len(out) >= top:
            break
    return out


MAX_RETURN_COMBINATIONS = 4_000_000
"""The most tooth sets a chain with a coaxial return is enumerated over (32 MB of floats)."""


def _sums(r: Return, lo: int, hi: int) -> list[tuple[int, ...]]:
    """The tooth sums (one per mesh of the return, each from ``lo`` to ``hi``) that keep its
    centre distance within the check's tolerance at the meshes' modules."""
    def fitting(m: float, dist: float, band=None) -> list[int]:
        a, b = band or (dist - TOLERANCE_MM, dist + TOLERANCE_MM)
        return [s for s in range(max(lo, math.floor(2 * a / m)), min(hi, math.ceil(2 * b / m))
                                 + 1) if a <= m * s / 2.0 <= b]

    if r.band_mm is not None:
        each = [fitting(m, 0.0, r.band_mm) for m in r.modules]
        return list(itertools.product(*each))
    out = []
    # three or more meshes: each within half the tolerance of the first, so any two agree
    tol = TOLERANCE_MM if len(r.modules) == 2 else TOLERANCE_MM / 2
    for s in range(lo, hi + 1):  # the first mesh's sum sets the distance the others keep
        dist = r.modules[0] * s / 2.0
        each = [[s]] + [fitting(m, dist, (dist - tol, dist + tol)) for m in r.modules[1:]]
        out.extend(itertools.product(*each))
    return out


def _search_returns(chain: PointerChain, cons, top: int, cancel=None) -> list[TrainResult]:
    """The best ``top`` tooth sets for a chain with coaxial returns: every searched mesh a
    driver and a driven count of the bounds (pinions driving a reducing train, as the general
    search), the meshes of a return only at tooth sums keeping its centre distance; best
    first, each ratio once (its fewest teeth)."""
    drivers, driven = (np.array(c, dtype=np.int64) for c in cons.sides(chain.target))
    k = len(chain.stages)
    lo, hi = int(drivers.min() + driven.min()), int(drivers.max() + driven.max())
    free = np.stack(np.meshgrid(drivers, driven, indexing="ij"), -1).reshape(-1, 2)

    def pairs_with_sum(s: int) -> np.ndarray:
        return free[free.sum(axis=1) == s]

    # each part: (stage indices, array (n, len(stages), 2) of driver/driven counts)
    parts = []
    in_return = set()
    for r in chain.returns:
        options = []
        for sums in _sums(r, lo, hi):
            lists = [pairs_with_sum(s) for s in sums]
            if any(len(x) == 0 for x in lists):
                continue
            grids = np.meshgrid(*[np.arange(len(x)) for x in lists], indexing="ij")
            options.append(np.stack([x[g.ravel()] for x, g in zip(lists, grids, strict=True)],
                                    axis=1))
        if not options:
            raise SearchError(f"no tooth counts of these bounds let {r.text()} at their "
                              "modules; widen the tooth ranges, or change the modules in the "
                              "train file")
        parts.append((r.stages, np.concatenate(options)))
        in_return.update(r.stages)
    parts += [((i,), free[:, None, :]) for i in range(k) if i not in in_return]
    size = math.prod(len(p[1]) for p in parts)
    if size > MAX_RETURN_COMBINATIONS:
        raise SearchError(f"keeping {'; '.join(r.text() for r in chain.returns)} leaves "
                          f"{size:,} tooth sets to try, more than {MAX_RETURN_COMBINATIONS:,}; "
                          "narrow the tooth ranges")
    if cancel is not None and cancel():
        raise SearchCancelled()
    # log of each combination's ratio, part by part (the trailing axis the newest part)
    logs = np.zeros(1)
    for _, teeth in parts:
        part_log = np.log(teeth[..., 0]).sum(axis=1) - np.log(teeth[..., 1]).sum(axis=1)
        logs = (logs[:, None] + part_log[None, :]).ravel()
    miss = np.abs(logs - math.log(chain.target.ratio))
    keep = min(len(miss), 20 * top + 200)
    best = np.argpartition(miss, keep - 1)[:keep] if keep < len(miss) else np.arange(len(miss))
    sizes = [len(p[1]) for p in parts]
    found: dict[Fraction, TrainResult] = {}
    for flat in best[np.argsort(miss[best], kind="stable")]:
        stages: list[WheelPair | None] = [None] * k
        for (idx, teeth), j in zip(parts, np.unravel_index(int(flat), sizes), strict=True):
            for i, (a, b) in zip(idx, teeth[j], strict=True):
                stages[i] = WheelPair(int(a), int(b))
        res = train_result(tuple(stages), chain.target)
        old = found.get(res.ratio)
        if old is None or res.total_teeth < old.total_teeth:
            found[res.ratio] = res
    ranked = sorted(found.values(), key=lambda r: (abs(r.ratio / chain.target.ratio - 1),
                                                    r.total_teeth))
    return ranked[:top]


def chain_edit_name(chain: PointerChain) -> str:
    """How the edit that puts an answer in is named (undo, messages)."""
    return f"pointer '{chain.pointer}' chain (search)"
