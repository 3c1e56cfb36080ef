"""Exact kinematics of a train: every arbor's turns per crank turn, and its angle at any turn.

Each arbor's angle (turns, relative to the frame) is a linear function of the crank's turns and
of one extra input per pin-and-slot stage — the slot arbor's lead or lag on the pin arbor::

    angle(arbor) = rate * crank_turns + sum_k weight_k * lag_k(crank_turns)

The coefficients come from solving the train's constraints exactly, in fractions (:func:`solve`):

* a mesh between wheels with ``z1`` and ``z2`` teeth, both axes held by the reference
  arbor ``R`` (the frame, or the carrier of an epicyclic stage) gives the Willis relation
  ``z1 (a1 - aR) = -z2 (a2 - aR)`` (external) or ``+z2 (...)`` (internal, one wheel a ring);
* a fixed arbor turns with its mount; the crank arbor turns once per crank turn;
* a pin-and-slot stage makes ``a_slot - a_followed = lag_k``, where the followed arbor is the
  pin arbor or, for a pin riding on a carrier with the longer arm, the carrier; ``lag_k`` is a
  bounded periodic function of the pin's (and carrier's) angle relative to the slot arbor's
  mount, solved by plane geometry (:func:`pin_slot_lead_turns`).

Whole crank turns are multiplied exactly (:func:`engine.exact.turns_mod1`), so angles after
millions of turns keep their precision.
"""

from __future__ import annotations

import heapq
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from .errors import ArgumentError, TrainError, UnknownName
from .exact import Turns, fraction_text, turns_mod1
from .train import FRAME, Train


@dataclass(frozen=True)
class LinearAngle:
    """``crank * turns + sum(slots[k] * lag_k)``: an angle in turns as the solver found it."""

    crank: Fraction
    slots: tuple[Fraction, ...]

    def __sub__(self, other: LinearAngle) -> LinearAngle:
        return LinearAngle(self.crank - other.crank,
                           tuple(a - b for a, b in zip(self.slots, other.slots, strict=True)))

    def scaled(self, k: Fraction) -> LinearAngle:
        return LinearAngle(self.crank * k, tuple(s * k for s in self.slots))


def pin_slot_lead_turns(pin_turns, pin_radius: float, offset: float, arm_turns=0.0,
                        arm: float = 0.0, follows: str = "pin", dtype=float) -> np.ndarray:
    """Lead of a slot arbor over the arbor it follows (turns, in (-1/2, 1/2]), by plane geometry.

    Lay the slot arbor's mount flat, with the carrier's axis (or, with no carrier, the pin
    arbor's axis) at the origin and the slot arbor's axis at ``(offset, 0)``. The pin arbor's
    axis is at ``arm * u(arm_turns)`` and the pin at ``pin_radius * u(pin_turns)`` from it
    (``u(x) = (cos 2πx, sin 2πx)``), so the slot arbor faces the direction of

        V = arm u(arm_turns) + pin_radius u(pin_turns) - (offset, 0).

    The lead is that direction less the followed angle (``pin_turns`` or ``arm_turns``): V turned
    back by the followed angle, then ``atan2``. It needs no series; with the followed length
    longer than the other two together, V never passes through the slot axis and the lead stays
    below ``asin((others) / followed)``. With ``arm = 0`` it is the classic eccentric
    pin-and-slot, ``atan2(e sin t, r - e cos t)``.
    """
    if follows not in ("pin", "carrier"):
        raise ArgumentError(f"pin_slot_lead_turns: follows should be 'pin' or 'carrier', "
                            f"got {follows!r}")
    for what, length in (("pin_radius", pin_radius), ("offset", offset), ("arm", arm)):
        if not (np.all(np.isfinite(length)) and np.all(np.asarray(length) >= 0)):
            raise ArgumentError(f"pin_slot_lead_turns: {what} should be a length of 0 or more "
                                f"(the same unit for all three), got {length!r}")
    two_pi = 2 * np.pi
    q = np.asarray(pin_turns, dtype=float)
    if follows == "pin" and not arm:
        # the classic stage: the pin's angle less the followed one is zero, so the sums below
        # reduce to these (the same arithmetic; ``+ 0.0`` as there, for the sign of a zero)
        th = (two_pi * q).astype(dtype, copy=False)
        x = pin_radius - offset * np.cos(th)
        y = offset * np.sin(th)
        y += 0.0
        return (np.arctan2(y, x) / two_pi).astype(float, copy=False)
    a = np.asarray(arm_turns, dtype=float)
    theta = q if follows == "pin" else a
    dq = (two_pi * (q - theta)).astype(dtype, copy=False)
    da = (two_pi * (a - theta)).astype(dtype, copy=False)
    th = (two_pi * theta).astype(dtype, copy=False)
    x = pin_radius * np.cos(dq) - offset * np.cos(th)
    y = pin_radius * np.sin(dq) + offset * np.sin(th)
    if arm:
        x = x + arm * np.cos(da)
        y = y + arm * np.sin(da)
    return (np.arctan2(y, x) / two_pi).astype(float, copy=False)


def slot_follower_turns(pin_turns: np.ndarray, ratio: float) -> np.ndarray:
    """Lead of the slot arbor over the pin arbor (turns, in (-1/2, 1/2]), by plane geometry.

    ``pin_turns`` is the pin's angle measured from the direction pin-axis → slot-axis;
    ``ratio`` is axis offset / pin radius (< 1). The pin sits at ``r (cos t, sin t)`` from its
    own axis, so seen from the slot axis at ``(e, 0)`` it lies at angle
    ``atan2(r sin t, r cos t - e)``. The largest lead or lag is ``asin(e / r)``.
    """
    t = 2 * np.pi * np.asarray(pin_turns, dtype=float)
    follower = np.arctan2(np.sin(t), np.cos(t) - ratio)
    lead = np.mod(follower - t + np.pi, 2 * np.pi) - np.pi
    return lead / (2 * np.pi)


@dataclass(frozen=True)
class MeshFrame:
    """How the solver read a mesh: its two arbors and the arbor that holds both axes."""

    mesh_index: int
    arbor1: str
    arbor2: str
    reference: str
    sign: int  # -1 external (opposite senses relative to the reference), +1 internal


class Kinematics:
    """The solved train. Build with :func:`solve`."""

    def __init__(self, train: Train, linear: dict[str, LinearAngle],
                 slot_order: tuple[str, ...], mesh_frames: tuple[MeshFrame, ...]):
        self.train = train
        self.linear = linear
        self.slot_names = tuple(train.pin_slots)
        self.slot_order = slot_order
        self.mesh_frames = mesh_frames

    def __repr__(self):
        return (f"Kinematics({self.train.name!r}: {len(self.linear)} arbors, "
                f"{len(self.slot_names)} pin-and-slot)")

    @property
    def rates(self) -> dict[str, Fraction]:
        """Mean turns per crank turn of every arbor, relative to the frame (exact)."""
        return {name: lin.crank for name, lin in self.linear.items()}

    def rate(self, arbor: str, relative_to: str | None = None) -> Fraction:
        r = self.linear_of(arbor).crank
        return r - self.linear_of(relative_to).crank if relative_to else r

    def linear_of(self, arbor: str) -> LinearAngle:
        if arbor == FRAME:
            return LinearAngle(Fraction(0), tuple(Fraction(0) for _ in self.slot_names))
        try:
            return self.linear[arbor]
        except KeyError:
            raise UnknownName(f"no arbor {arbor!r} in {self.train.name!r} (its arbors: "
                              f"{', '.join(self.linear)})") from None

    def slot_lags_turns(self, turns: Turns | float | np.ndarray) -> dict[str, np.ndarray]:
        """Each pin-and-slot stage's lead (turns) at the given crank turns since the epoch."""
        turns = Turns.of(turns)
        lags: dict[str, np.ndarray] = {}
        index = {name: k for k, name in enumerate(self.slot_names)}
        for name in self.slot_order:
            ps = self.train.pin_slots[name]
            mount = self.train.arbors[ps.slot_arbor].mount
            pin = self._turns_against(ps.pin_arbor, mount, turns, lags) + ps.pin_deg / 360.0
            arm = 0.0
            if ps.carrier is not None:
                arm = self._turns_against(ps.carrier, mount, turns, lags) + ps.arm_deg / 360.0
            lags[name] = pin_slot_lead_turns(pin, ps.pin_radius_mm, ps.offset_mm, arm,
                                             ps.arm_mm, ps.follows)
        return {name: lags[name] for name in sorted(lags, key=index.__getitem__)}

    def _turns_against(self, arbor: str, mount: str, turns: Turns,
                       lags: dict[str, np.ndarray]) -> np.ndarray:
        """An arbor's turns relative to a mount since the epoch, with the lags known so far."""
        rel = self.linear_of(arbor) - self.linear_of(mount)
        out = turns_mod1(rel.crank, turns)
        for other, w in zip(self.slot_names, rel.slots, strict=True):
            if w and other in lags:
                out = out + float(w) * lags[other]
        return out

    def evaluate(self, lin: LinearAngle, turns: Turns | float | np.ndarray,
                 lags: dict[str, np.ndarray] | None = None) -> np.ndarray:
        """Angle in turns, in [0, 1), of a linear angle at crank turns since the epoch."""
        turns = Turns.of(turns)
        out = turns_mod1(lin.crank, turns)
        if any(lin.slots):
            lags = self.slot_lags_turns(turns) if lags is None else lags
            for name, w in zip(self.slot_names, lin.slots, strict=True):
                if w:
                    out = out + float(w) * lags[name]
            out = np.mod(out, 1.0)
        return out

    def angle_turns(self, arbor: str, turns, relative_to: str | None = None) -> np.ndarray:
        """An arbor's angle in turns [0, 1) (relative to the frame or to another arbor)."""
        lin = self.linear_of(arbor)
        if relative_to:
            lin = lin - self.linear_of(relative_to)
        return self.evaluate(lin, turns)

    def angles_turns(self, turns) -> dict[str, np.ndarray]:
        """Every arbor's angle in turns [0, 1) at the given crank turns since the epoch."""
        turns = Turns.of(turns)
        lags = self.slot_lags_turns(turns) if self.slot_names else {}
        return {name: self.evaluate(lin, turns, lags) for name, lin in self.linear.items()}


def axis_groups(train: Train, kin: Kinematics) -> dict[str, str]:
    """Which arbors share one axis: every arbor's name mapped to one name standing for its
    axis (the same for all arbors on that axis). Arbors share an axis by ``axis_with``, and
    an arbor meshing with a wheel on a carrier while sitting on the carrier's own mount
    shares the carrier's axis (a sun wheel on the carrier's axis: the solver reckons that
    mesh relative to the carrier). Read by the check, the plate and the re-chaining search."""
    parent = {n: n for n in train.arbors}

    def find(n: str) -> str:
        while parent[n] != n:
            parent[n] = parent[parent[n]]
            n = parent[n]
        return n

    for a in train.arbors.values():
        if a.axis_with:
            parent[find(a.name)] = find(a.axis_with)
    for f in kin.mesh_frames:
        if f.reference == FRAME:
            continue
        for x in (f.arbor1, f.arbor2):
            if x != f.reference and train.arbors[x].mount == train.arbors[f.reference].mount:
                parent[find(x)] = find(f.reference)
    return {n: find(n) for n in train.arbors}


def mesh_reference(train: Train, a1: str, a2: str) -> str | None:
    """The arbor (or frame) that holds both axes of a mesh between arbors ``a1`` and ``a2``.

    Both on one mount: that mount. One arbor on carrier ``C`` and the other on ``C``'s own mount
    (so coaxial with ``C``, like a sun wheel) or ``C`` itself: the carrier ``C``.
    """
    m1, m2 = train.arbors[a1].mount, train.arbors[a2].mount
    if m1 == m2:
        return m1
    for outer, m_in in ((a2, m1), (a1, m2)):
        if m_in == FRAME:
            continue
        if outer == m_in or train.arbors[outer].mount == train.arbors[m_in].mount:
            return m_in
    return None


@dataclass
class _Row:
    """One linear constraint: ``sum(coeffs[v] * x_v) = rhs`` (rhs a vector over the inputs)."""

    label: str
    coeffs: dict[str, int]
    rhs: tuple[Fraction, ...]
    ends: tuple[str, ...] = ()  # the arbors it links, the one it drives last (for errors)


def solve(train: Train) -> Kinematics:
    """Solve a train's rates exactly. Raises :class:`TrainError` for trains that cannot work.

    Each arbor's motion is a vector over the inputs (the crank, then one lag per pin-and-slot
    stage). Most constraints link two arbors, so the motion spreads from the crank along the
    mesh graph: a constraint with one arbor still unknown gives it at once, taken in the file's
    order (a heap of ready rows: the work grows as n log n with the train, and a lock is found
    at the last mesh of a contradicting loop, as the file lists them). Carriers can leave a few constraints with two or more
    unknowns (a differential driving its carrier); those few are solved together by exact
    Gaussian elimination over fractions. Constraints found with every arbor known must hold, or
    the train locks; arbors left undetermined are driven by nothing.
    """
    where = train.source
    names = list(train.arbors)
    slots = list(train.pin_slots)
    n_in = 1 + len(slots)
    zero = (Fraction(0),) * n_in
    rows: list[_Row] = []

    def unit(k: int) -> tuple[Fraction, ...]:
        return tuple(Fraction(int(j == k)) for j in range(n_in))

    def add(label, coeffs, rhs=zero, ends=()):
        clean: dict[str, int] = {}
        for k, v in coeffs.items():
            if k != FRAME:
                clean[k] = clean.get(k, 0) + v
        rows.append(_Row(label, {k: v for k, v in clean.items() if v}, rhs, ends))

    add("[crank]", {train.crank.arbor: 1}, unit(0), ends=(train.crank.arbor,))
    for a in train.arbors.values():
        if a.fixed:
            add(f"[arbors.{a.name}] fixed", {a.name: 1, a.mount: -1}, ends=(a.mount, a.name))
    for k, name in enumerate(slots, start=1):
        ps = train.pin_slots[name]
        add(f"[pin_slots.{name}]", {ps.slot_arbor: 1, ps.followed_arbor: -1}, unit(k),
            ends=(ps.followed_arbor, ps.slot_arbor))
    frames = []
    for m in train.meshes:
        w1, w2 = train.wheels[m.driver], train.wheels[m.driven]
        ref = mesh_reference(train, w1.arbor, w2.arbor)
        if ref is None:
            raise TrainError(where, m.label, f"arbors '{w1.arbor}' (on "
                             f"'{train.arbors[w1.arbor].mount}') and '{w2.arbor}' (on "
                             f"'{train.arbors[w2.arbor].mount}') cannot mesh: a wheel on a "
                             "carrier meshes only with wheels on the same carrier, on the "
                             "carrier itself, or on an arbor coaxial with the carrier")
        sign = 1 if m.internal else -1
        frames.append(MeshFrame(m.index, w1.arbor, w2.arbor, ref, sign))
        # z1 (a1 - aR) - sign * z2 (a2 - aR) = 0
        add(m.label, {w1.arbor: w1.teeth, w2.arbor: -sign * w2.teeth,
                      ref: -w1.teeth + sign * w2.teeth}, ends=(w1.arbor, w2.arbor))

    value: dict[str, tuple[Fraction, ...]] = {}
    cause: dict[str, int] = {}  # arbor -> the row that gave its motion
    rows_of: dict[str, list[int]] = {n: [] for n in names}
    unknown = [len(r.coeffs) for r in rows]
    for i, r in enumerate(rows):
        for v in r.coeffs:
            rows_of[v].append(i)
    queue = [i for i, n in enumerate(unknown) if n <= 1]  # already in order: a valid heap
    done = [False] * len(rows)
    while queue:
        i = heapq.heappop(queue)
        if done[i]:
            continue
        done[i] = True
        r = rows[i]
        todo = [v for v in r.coeffs if v not in value]
        if not todo:
            if _residual(r, value, n_in) != zero:
                raise _lock_error(train, rows, i, value, cause)
            continue
        (var,) = todo
        value[var] = _solve_for(r, var, value, n_in)
        cause[var] = i
        for j in rows_of[var]:
            unknown[j] -= 1
            if unknown[j] <= 1 and not done[j]:
                heapq.heappush(queue, j)
    rest = [i for i in range(len(rows)) if not done[i]]
    free: list[str] = []
    if rest:
        free = _eliminate(train, rows, rest, value, cause, n_in)
    undriven = [n for n in names if n not in value or n in free]
    if undriven:
        raise TrainError(where, f"[arbors.{undriven[0]}]", "nothing drives this arbor"
                         + (f" (nor {_names(undriven[1:])})" if len(undriven) > 1 else "")
                         + ": mesh one of its wheels with the train, make it fixed, or remove it")
    linear = {n: LinearAngle(value[n][0], tuple(value[n][1:])) for n in names}
    order = _slot_order(train, linear, slots)
    return Kinematics(train, linear, order, tuple(frames))


def _names(names: list[str], most: int = 8) -> str:
    shown = ", ".join(names[:most])
    return shown + (f" and {len(names) - most} more" if len(names) > most else "")


def _residual(r: _Row, value, n_in: int) -> tuple[Fraction, ...]:
    """``sum(coeffs * x) - rhs`` with every arbor known: all zeros when the row holds."""
    out = [-x for x in r.rhs]
    for v, c in r.coeffs.items():
        for j, x in enumerate(value[v]):
            if x:
                out[j] += c * x
    return tuple(out)


def _solve_for(r: _Row, var: str, value, n_in: int) -> tuple[Fraction, ...]:
    """The motion of ``var`` that makes row ``r`` hold, every other arbor in it known."""
    acc = list(r.rhs)
    for v, c in r.coeffs.items():
        if v != var:
            for j, x in enumerate(value[v]):
                if x:
                    acc[j] -= c * x
    c = r.coeffs[var]
    return tuple(x / c for x in acc)


def _eliminate(train, rows, rest, value, cause, n_in) -> list[str]:
    """Solve the rows propagation could not (each with two or more unknown arbors) together,
    by Gauss-Jordan elimination over fractions. Fills ``value``; returns the arbors left free
    (and those that depend on them). Raises the lock error when the rows contradict."""
    unknowns = sorted({v for i in rest for v in rows[i].coeffs if v not in value})
    system = []  # (coeffs over unknowns, rhs vector, row index)
    for i in rest:
        r = rows[i]
        acc = list(r.rhs)
        coeffs: dict[str, Fraction] = {}
        for v, c in r.coeffs.items():
            if v in value:
                for j, x in enumerate(value[v]):
                    acc[j] -= c * x
            else:
                coeffs[v] = Fraction(c)
        system.append((coeffs, acc, i))
    pivots: list[tuple[str, dict[str, Fraction], list[Fraction], int]] = []
    for coeffs, acc, i in system:
        coeffs, acc = dict(coeffs), list(acc)
        for pv, pc, pa, _ in pivots:  # reduce by the pivots found so far
            f = coeffs.pop(pv, None)
            if f:
                for v, c in pc.items():
                    if v != pv:
                        coeffs[v] = coeffs.get(v, Fraction(0)) - f * c
                acc = [a - f * b for a, b in zip(acc, pa, strict=True)]
                coeffs = {v: c for v, c in coeffs.items() if c}
        if not coeffs:
            if any(acc):
                raise _lock_error(train, rows, i, value, cause)
            continue
        pv = min(coeffs, key=unknowns.index)
        c0 = coeffs[pv]
        pc = {v: c / c0 for v, c in coeffs.items()}
        pa = [a / c0 for a in acc]
        for k, (qv, qc, qa, qi) in enumerate(pivots):  # keep earlier pivot rows reduced
            f = qc.get(pv)
            if f:
                for v, c in pc.items():
                    qc[v] = qc.get(v, Fraction(0)) - f * c
                pivots[k] = (qv, {v: c for v, c in qc.items() if c},
                             [a - f * b for a, b in zip(qa, pa, strict=True)], qi)
        pivots.append((pv, pc, pa, i))
    pivoted = {pv for pv, *_ in pivots}
    free = [v for v in unknowns if v not in pivoted]
    for pv, pc, pa, i in pivots:
        if any(v != pv for v in pc):
            free.append(pv)
        else:
            value[pv] = tuple(pa)
            cause[pv] = i
    return free


def _path(rows, var: str, cause, most: int = 6) -> list[str]:
    """The constraints that carried the motion to ``var``, from the crank on: each step goes
    back through the row that fixed an arbor to the arbor it came from (through a mesh, the
    other wheel's arbor)."""
    steps: list[str] = []
    seen = set()
    while var in cause and var not in seen:
        seen.add(var)
        r = rows[cause[var]]
        steps.append("the crank" if r.label == "[crank]" else r.label)
        nxt = [v for v in r.ends if v != var and v != FRAME]
        if not nxt:
            break
        var = nxt[0]
    steps.reverse()
    if len(steps) > most:
        steps = steps[:2] + [f"… {len(steps) - most + 2} more …"] + steps[-(most - 3):]
    return steps


def _lock_error(train, rows, i, value, cause) -> TrainError:
    """Name the arbor that two paths would turn at different speeds, and both paths."""
    r = rows[i]
    arbors = list(r.coeffs)
    if not arbors:
        return TrainError(train.source, r.label, "contradicts the rest of the train, which "
                          "then cannot turn at all (it locks: over-constrained)")
    ends = [v for v in r.ends if v in r.coeffs]
    target = next((v for v in reversed(ends) if v != train.crank.arbor), arbors[-1])
    if all(v in value for v in arbors):
        n_in = len(r.rhs)
        here = _solve_for(r, target, value, n_in)
        there = value[target]
        first = " → ".join(_path(rows, target, cause)) or "the crank"
        source = next((v for v in ends if v != target), None)
        second = _path(rows, source, cause)[-5:] if source else []
        second = " → ".join([*second, r.label])
        return TrainError(train.source, r.label, f"arbor '{target}' would turn at two "
                          f"speeds: {_speed(there)} through {first}, and {_speed(here)} "
                          f"through {second}; the train locks: change a tooth count or "
                          "remove one of these meshes")
    return TrainError(train.source, r.label, "contradicts the rest of the train, which "
                      "then cannot turn at all (it locks: over-constrained); check "
                      "tooth counts, or remove a mesh")


def _speed(vec: tuple[Fraction, ...]) -> str:
    text = f"{fraction_text(vec[0])} turn{'s' if abs(vec[0]) != 1 else ''} per crank turn"
    if any(vec[1:]):
        text += " (plus a pin-and-slot motion)"
    return text


def _slot_order(train: Train, linear: dict[str, LinearAngle], slots: list[str]):
    """Pin-and-slot stages in an order where each pin's angle is known before it is used."""
    deps = {}
    zero = LinearAngle(Fraction(0), (Fraction(0),) * len(slots))
    for k, name in enumerate(slots):
        ps = train.pin_slots[name]
        mount = train.arbors[ps.slot_arbor].mount
        base = linear[mount] if mount != FRAME else zero
        deps[name] = set()
        for moving in (ps.pin_arbor, ps.carrier):
            if moving is None:
                continue
            rel = linear[moving] - base
            if rel.slots[k] != 0:
                raise TrainError(train.source, f"[pin_slots.{name}]", "the slot arbor drives "
                                 f"its own {'pin arbor' if moving == ps.pin_arbor else 'carrier'}"
                                 " back through the train (a loop); a pin-and-slot stage must "
                                 "only drive forward")
            deps[name] |= {slots[j] for j, w in enumerate(rel.slots) if w}
    order: list[str] = []
    while len(order) < len(slots):
        ready = [s for s in slots if s not in order and deps[s] <= set(order)]
        if not ready:
            stuck = next(s for s in slots if s not in order)
            raise TrainError(train.source, f"[pin_slots.{stuck}]", "pin-and-slot stages drive "
                             "each other in a loop")
        order.extend(ready)
    return tuple(order)
