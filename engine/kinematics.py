"""Exact kinematics of a train: every arbor's turns per crank turn, and its angle at any turn.

Each arbor's angle (turns, relative to the frame) is a linear function of the crank's turns and
of one extra input per pin-and-slot stage — the slot arbor's lead or lag on the pin arbor::

    angle(arbor) = rate * crank_turns + sum_k weight_k * lag_k(crank_turns)

The coefficients come from solving the train's constraints exactly (sympy over the rationals):

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

from dataclasses import dataclass
from fractions import Fraction

import numpy as np
import sympy

from .errors import TrainError
from .exact import Turns, turns_mod1
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
    two_pi = 2 * np.pi
    q = np.asarray(pin_turns, dtype=float)
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
        return self.linear[arbor]

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


def solve(train: Train) -> Kinematics:
    """Solve a train's rates exactly. Raises :class:`TrainError` for trains that cannot work."""
    where = train.source
    names = list(train.arbors)
    col = {n: i for i, n in enumerate(names)}
    slots = list(train.pin_slots)
    n_in = 1 + len(slots)
    rows: list[tuple[str, dict[str, int], dict[int, int]]] = []  # (label, var coeffs, input)

    def add(label, coeffs, inputs=None):
        clean: dict[str, int] = {}
        for k, v in coeffs.items():
            if k != FRAME:
                clean[k] = clean.get(k, 0) + v
        rows.append((label, clean, inputs or {}))

    add("[crank]", {train.crank.arbor: 1}, {0: 1})
    for a in train.arbors.values():
        if a.fixed:
            add(f"[arbors.{a.name}] fixed", {a.name: 1, a.mount: -1})
    for k, name in enumerate(slots, start=1):
        ps = train.pin_slots[name]
        add(f"[pin_slots.{name}]", {ps.slot_arbor: 1, ps.followed_arbor: -1}, {k: 1})
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
                      ref: -w1.teeth + sign * w2.teeth})

    mat = sympy.zeros(len(rows), len(names))
    rhs = sympy.zeros(len(rows), n_in)
    for i, (_, coeffs, inputs) in enumerate(rows):
        for k, v in coeffs.items():
            mat[i, col[k]] = v
        for j, v in inputs.items():
            rhs[i, j] = v

    rank = mat.rank()
    if mat.row_join(rhs).rank() > rank:
        raise _lock_error(train, rows, mat, rhs)
    if rank < len(names):
        free = set()
        for vec in mat.nullspace():
            free |= {names[i] for i in range(len(names)) if vec[i] != 0}
        undriven = [n for n in names if n in free]
        raise TrainError(where, f"[arbors.{undriven[0]}]", "nothing drives this arbor"
                         + (f" (nor {', '.join(undriven[1:])})" if len(undriven) > 1 else "")
                         + ": mesh one of its wheels with the train, make it fixed, or remove it")
    sol, params = mat.gauss_jordan_solve(rhs)
    if params.shape[0]:  # cannot happen at full column rank; kept as a guard for the solver
        raise TrainError(where, "", "the train's motion is not determined")
    linear = {
        n: LinearAngle(_frac(sol[col[n], 0]),
                       tuple(_frac(sol[col[n], k]) for k in range(1, n_in)))
        for n in names
    }
    order = _slot_order(train, linear, slots)
    return Kinematics(train, linear, order, tuple(frames))


def _frac(x) -> Fraction:
    x = sympy.Rational(x)
    return Fraction(int(x.p), int(x.q))


def _lock_error(train, rows, mat, rhs) -> TrainError:
    """Name the first constraint that contradicts those before it."""
    for i in range(1, len(rows) + 1):
        sub, subr = mat[:i, :], rhs[:i, :]
        if sub.row_join(subr).rank() > sub.rank():
            label = rows[i - 1][0]
            mesh_no = label.split()[1] if label.startswith("mesh") else None
            if mesh_no:
                m = train.meshes[int(mesh_no) - 1]
                for earlier in train.meshes[: int(mesh_no) - 1]:
                    shared = {m.driver, m.driven} & {earlier.driver, earlier.driven}
                    if shared:
                        w = shared.pop()
                        return TrainError(train.source, label, f"wheel '{w}' is also in "
                                          f"{earlier.label}, and the two meshes demand "
                                          "different speeds: the train locks")
            return TrainError(train.source, label, "contradicts the rest of the train, which "
                              "then cannot turn at all (it locks: over-constrained); check "
                              "tooth counts, or remove a mesh")
    return TrainError(train.source, "", "the train locks (over-constrained)")


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
