"""Exact kinematics: identities, epicyclic and differential trains, pin-and-slot geometry,
long-run exactness and properties."""

from __future__ import annotations

import math
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from engine.errors import TrainError
from engine.exact import Turns
from engine.kinematics import axis_groups, slot_follower_turns, solve
from engine.loader import load_train, parse_train

TRAINS = Path(__file__).resolve().parent.parent / "engine" / "trains"
TURN_TOL = 1e-9  # the long-run exactness bound, in turns

HEAD = """
[crank]
arbor = "{crank}"
days_per_turn = 1
[epoch]
date = "2026-01-01"
set = "angles"
"""


def train_text(body: str, crank: str = "a", pointer_arbor: str | None = None) -> str:
    ptr = pointer_arbor or crank
    return (HEAD.format(crank=crank) + body
            + f'\n[pointers.p]\nshows = "sun"\narbor = "{ptr}"\nset_deg = 0\n')


def rates_of(body: str, crank: str = "a"):
    return solve(parse_train(train_text(body, crank), "test.toml")).rates


# --- exact identities -------------------------------------------------------------------------

def test_nineteen_year_drum_is_exact():
    """235 synodic months = 254 sidereal months = 19 years: the Metonic identity (common
    practice, no source). The drum's moon makes exactly 254 turns and its phase exactly 235
    in 19 crank turns."""
    train = load_train(TRAINS / "nineteen_year_drum.toml")
    kin = solve(train)
    assert kin.rate("moon") == Fraction(254, 19)
    assert kin.rate("moon", relative_to="year") == Fraction(235, 19)
    assert kin.rate("moon") * 19 == 254 and kin.rate("moon", "year") * 19 == 235
    # after 19 crank turns the year wheel and moon tube are back where they started, to the
    # last bit; the intermediate arbor (-127/38) is half a turn round and needs 38
    angles = kin.angles_turns(19)
    assert float(angles["year"]) == float(angles["moon"]) == 0.0
    assert float(angles["intermediate"]) == 0.5
    assert float(kin.angles_turns(38)["intermediate"]) == 0.0


def test_compound_train_is_product_of_stages():
    """A compound train's ratio is the product of its stages' tooth ratios, each external
    mesh reversing the sense (common practice, no source)."""
    r = rates_of("""
[arbors.a]
wheels = { a1 = 12 }
[arbors.b]
wheels = { b1 = 60, b2 = 10 }
[arbors.c]
wheels = { c1 = 75 }
[[meshes]]
wheels = ["a1", "b1"]
[[meshes]]
wheels = ["b2", "c1"]
""")
    assert r["b"] == Fraction(-12, 60)
    assert r["c"] == Fraction(12, 60) * Fraction(10, 75)


PLANETARY = """
[arbors.a]
wheels = {{ sun = 20 }}
[arbors.carrier]
wheels = {{}}
[arbors.planet]
on = "carrier"
wheels = {{ planet = 30 }}
[arbors.ring]
fixed = {ring_fixed}
wheels = {{ ring = 80 }}
{extra}
[[meshes]]
wheels = ["sun", "planet"]
[[meshes]]
wheels = ["planet", "ring"]
ring = "ring"
"""


def test_planetary_train_matches_willis_formula():
    """Willis' train-value formula e = (n_last - n_arm) / (n_first - n_arm), worked by hand
    as in Shigley's Mechanical Engineering Design, section on planetary trains (from memory):
    sun 20, planet 30, ring 80 fixed, sun turning once: e = -(20/30)(30/80) = -1/4, so
    (0 - n_arm) / (1 - n_arm) = -1/4 and n_arm = 1/5. The planet turns relative to the arm
    at -(20/30)(1 - 1/5) = -8/15, i.e. -1/3 absolute."""
    body = PLANETARY.format(ring_fixed="true", extra="")
    # the carrier is left free: it must be driven by the sun through the planet
    r = rates_of(body)
    assert r["carrier"] == Fraction(1, 5)
    assert r["planet"] - r["carrier"] == Fraction(-8, 15)
    assert r["planet"] == Fraction(-1, 3)
    assert r["ring"] == 0


def test_differential_averages_its_two_inputs():
    """A spur differential with equal suns: the carrier turns at the mean of the two suns
    (common practice, no source). Sun A is the crank (1), sun B is driven at -1/2."""
    r = rates_of("""
[arbors.a]
wheels = { sun_a = 30, drive = 20 }
[arbors.b]
wheels = { b_in = 40, sun_b = 30 }
[arbors.carrier]
wheels = {}
[arbors.p1]
on = "carrier"
wheels = { p1 = 15 }
[arbors.p2]
on = "carrier"
wheels = { p2 = 15 }
[[meshes]]
wheels = ["drive", "b_in"]
[[meshes]]
wheels = ["sun_a", "p1"]
[[meshes]]
wheels = ["p1", "p2"]
[[meshes]]
wheels = ["p2", "sun_b"]
""")
    assert r["b"] == Fraction(-1, 2)
    assert r["carrier"] == (1 + Fraction(-1, 2)) / 2


def test_wheel_fixed_to_a_carrier():
    """A wheel fixed to the carrier (a fixed arbor mounted on it) turns with the carrier."""
    r = rates_of("""
[arbors.a]
wheels = { a1 = 20 }
[arbors.carrier]
wheels = { c1 = 40 }
[arbors.stud]
on = "carrier"
fixed = true
wheels = { stud = 25 }
[[meshes]]
wheels = ["a1", "c1"]
""")
    assert r["stud"] == r["carrier"] == Fraction(-1, 2)


# --- pin and slot ------------------------------------------------------------------------------

def plane_geometry_follower(theta: np.ndarray, e: float, r: float) -> np.ndarray:
    """Follower angle by the law of cosines (an independent construction): the slot axis is
    at distance e from the pin axis; the pin at radius r and angle theta from that direction
    lies at distance s from the slot axis, and the follower's angle is fixed by cos and sin."""
    s = np.sqrt(r * r + e * e - 2 * r * e * np.cos(theta))
    cos_psi = (r * np.cos(theta) - e) / s
    sin_psi = r * np.sin(theta) / s
    return np.arctan2(sin_psi, cos_psi)


@pytest.mark.parametrize("e,r", [(0.985, 9.0), (1.0, 2.0), (0.2, 10.0), (4.5, 5.0)])
def test_pin_slot_largest_lead_is_asin_offset_over_radius(e, r):
    theta = np.linspace(0, 1, 200_001)
    lead = slot_follower_turns(theta, e / r) * 2 * math.pi
    assert abs(lead).max() == pytest.approx(math.asin(e / r), abs=1e-9)
    assert lead.max() == pytest.approx(-lead.min(), abs=1e-9)
    follower = plane_geometry_follower(theta * 2 * math.pi, e, r)
    diff = np.mod(follower - (theta * 2 * math.pi + lead) + math.pi, 2 * math.pi) - math.pi
    assert abs(diff).max() < 1e-12


def test_pin_slot_in_a_train_on_a_turning_carrier():
    """The tide office's slot arbor leads and lags its pin arbor, relative to the perigee
    carrier, by exactly asin(0.985/9) over an anomalistic month, and keeps its mean rate."""
    train = load_train(TRAINS / "tide_office.toml")
    kin = solve(train)
    assert kin.rate("slot_arbor") == kin.rate("pin_arbor")
    turns = np.linspace(0, 60, 600_001)  # about two anomalistic months, 1/10,000 day steps
    lag = kin.slot_lags_turns(turns)["anomaly"] * 360
    assert abs(lag).max() == pytest.approx(math.degrees(math.asin(0.985 / 9.0)), abs=1e-6)
    rel = np.mod(kin.angle_turns("slot_arbor", turns, "pin_arbor") + 0.5, 1.0) - 0.5
    assert np.allclose(rel * 360, lag, atol=1e-9)


# --- long runs --------------------------------------------------------------------------------

def exact_mod1(rate: Fraction, n: Fraction) -> float:
    x = rate * n
    return float(x - (x.numerator // x.denominator))


def turn_distance(a, b):
    d = np.abs(np.asarray(a) - np.asarray(b)) % 1.0
    return np.minimum(d, 1.0 - d)


@pytest.mark.parametrize("name", ["nineteen_year_drum.toml", "tide_office.toml",
                                  "moon_disc_59.toml"])
def test_ten_million_turns_are_exact(name):
    """After 10,000,000 crank turns (and a quarter) every arbor agrees with exact rational
    arithmetic to 1e-9 turn; for the pin-and-slot arbors the exact pin angle is fed to the
    same geometry."""
    kin = solve(load_train(TRAINS / name))
    n = Fraction(10_000_000) + Fraction(1, 4)
    got = kin.angles_turns(Turns.of(n))
    slots = kin.train.pin_slots
    lags = {}
    for sname in kin.slot_order:
        ps = slots[sname]
        rel = kin.linear_of(ps.pin_arbor) - kin.linear_of(kin.train.arbors[ps.pin_arbor].mount)
        pin = exact_mod1(rel.crank, n) + ps.pin_deg / 360
        lags[sname] = float(slot_follower_turns(pin, ps.offset_mm / ps.pin_radius_mm))
    for arbor, lin in kin.linear.items():
        want = exact_mod1(lin.crank, n) + sum(float(w) * lags[s] for s, w in
                                              zip(kin.slot_names, lin.slots, strict=True))
        assert turn_distance(got[arbor], want) < TURN_TOL, arbor


# --- properties -------------------------------------------------------------------------------

teeth = st.integers(min_value=6, max_value=200)


@settings(max_examples=60, deadline=None)
@given(teeth, teeth, teeth, teeth, st.booleans())
def test_ratios_compose(z1, z2, z3, z4, internal):
    """A two-stage train's rate is the product of the stages solved on their own."""
    if internal and z4 <= z3:
        z3, z4 = min(z3, z4) - 1 if min(z3, z4) > 6 else 5, max(z3, z4) + 1
    ring = '\nring = "c1"' if internal else ""
    r = rates_of(f"""
[arbors.a]
wheels = {{ a1 = {z1} }}
[arbors.b]
wheels = {{ b1 = {z2}, b2 = {z3} }}
[arbors.c]
wheels = {{ c1 = {z4} }}
[[meshes]]
wheels = ["a1", "b1"]
[[meshes]]
wheels = ["b2", "c1"]{ring}
""")
    stage1 = Fraction(-z1, z2)
    stage2 = Fraction(z3, z4) * (1 if internal else -1)
    assert r["b"] == stage1
    assert r["c"] == stage1 * stage2


@settings(max_examples=60, deadline=None)
@given(st.integers(-10**9, 10**9), st.floats(0, 1, exclude_max=True),
       st.integers(-10**7, 10**7))
def test_forward_then_back_restores_every_angle(whole, frac, k):
    kin = solve(load_train(TRAINS / "tide_office.toml"))
    t = Turns.of(whole) + Turns.of(frac)
    there = (t + k) - k
    a, b = kin.angles_turns(t), kin.angles_turns(there)
    for arbor in a:
        assert turn_distance(a[arbor], b[arbor]) < 1e-12


def test_scalar_and_array_inputs_agree():
    kin = solve(load_train(TRAINS / "tide_office.toml"))
    arr = np.array([0.0, 12.5, 1e6 + 0.3])
    many = kin.angles_turns(arr)
    for i, x in enumerate(arr):
        one = kin.angles_turns(float(x))
        for arbor in one:
            assert float(one[arbor]) == pytest.approx(float(many[arbor][i]), abs=1e-12)


# --- a pin carried round on an epicycle ---------------------------------------------------------

# A deferent carrier turned by the crank; an epicycle arbor on it, `arm` mm out, turned by a
# 40-tooth wheel fixed to the frame on the carrier's axis meshing with the epicycle's own wheel
# (so it turns against the carrier at +40/z turns per carrier turn); a slot arbor on the frame,
# `offset` mm from the carrier's axis along the x direction, faces the pin on the epicycle.
CARRIED = """
[arbors.a]
wheels = {{}}
[arbors.fixed_sun]
wheels = {{ sun = 40 }}
fixed = true
axis_with = "a"
[arbors.epi]
on = "a"
wheels = {{ epi_w = {z} }}
[arbors.follower]
wheels = {{}}
[[meshes]]
wheels = ["sun", "epi_w"]
[pin_slots.s]
pin = "epi"
slot = "follower"
pin_radius_mm = {r}
offset_mm = {e}
arm_mm = {arm}
arm_deg = {arm_deg}
pin_deg = {pin_deg}
"""


def by_hand(turns, z, r, e, arm, arm_deg, pin_deg):
    """Plane geometry worked directly: the carrier's arm at arm_deg + 360 t; the epicycle turns
    with the carrier plus 40/z of a turn against it per crank turn (Willis, one external mesh
    with the 40-tooth fixed wheel: against the carrier the fixed wheel turns back once), so the
    pin's direction is pin_deg + 360 t (1 + 40/z); the
    pin is at arm (cos, sin)(arm) + r (cos, sin)(pin); the follower points from (e, 0) to it."""
    a = np.radians(arm_deg + 360 * turns)
    q = np.radians(pin_deg + 360 * turns * (1 + 40 / z))
    x = arm * np.cos(a) + r * np.cos(q) - e
    y = arm * np.sin(a) + r * np.sin(q)
    return np.degrees(np.arctan2(y, x))


@pytest.mark.parametrize("z,r,e,arm,arm_deg,pin_deg", [
    (25, 7.23, 0.0, 10.0, 0.0, 0.0),      # two circles on one centre (a Venus-like dial)
    (64, 10.0, 0.0, 15.24, 30.0, 200.0),  # a Mars-like dial, arms at other angles
    (25, 4.0, 2.5, 10.0, 0.0, 90.0),      # slot arbor off the carrier's axis
    (33, 12.0, 1.5, 5.0, 0.0, 45.0),      # the pin radius the longer: follows the epicycle
])
def test_carried_pin_follower_points_at_the_pin(z, r, e, arm, arm_deg, pin_deg):
    train = parse_train(train_text(CARRIED.format(z=z, r=r, e=e, arm=arm, arm_deg=arm_deg,
                                                  pin_deg=pin_deg)), "test.toml")
    kin = solve(train)
    ps = train.pin_slots["s"]
    assert ps.carrier == "a"
    follows = "a" if arm > r + e else "epi"
    assert ps.followed_arbor == follows
    assert kin.rate("follower") == kin.rate(follows)
    turns = np.linspace(0, 7.3, 20_001)
    got = kin.angle_turns("follower", turns) * 360
    # the solver's angles start at 0 at the epoch: the followed arbor's angle at the epoch
    # (arm_deg or pin_deg) is the constant between the two
    want = by_hand(turns, z, r, e, arm, arm_deg, pin_deg) - (arm_deg if follows == "a"
                                                            else pin_deg)
    diff = np.mod(got - want + 180, 360) - 180
    assert abs(diff).max() < 1e-9


def test_carried_pin_goes_retrograde_and_keeps_the_carriers_mean_rate():
    """Venus-like proportions: the follower's speed goes negative near the pin's nearest
    approach (retrograde), and after whole turns of both it is back where it started."""
    train = parse_train(train_text(CARRIED.format(z=25, r=7.23, e=0.0, arm=10.0, arm_deg=0.0,
                                                  pin_deg=0.0)), "test.toml")
    kin = solve(train)
    turns = np.linspace(0, 5, 50_001)  # the epicycle turns 40/25 = 1.6 against the carrier
    ang = np.unwrap(kin.angle_turns("follower", turns) * 2 * np.pi) / (2 * np.pi)
    speed = np.diff(ang) / np.diff(turns)
    assert speed.min() < 0 < speed.max()
    # by hand: at the nearest approach (pin pointing at the centre) the pin moves at
    # 10 * 1 - 7.23 * 2.6 = -8.8 mm per turn, 2.77 mm from the centre: -3.18 turns per turn
    assert speed.min() == pytest.approx((10 - 7.23 * 2.6) / (10 - 7.23), rel=1e-3)
    # after 5 crank turns the epicycle has made 8 turns against the carrier, a whole number,
    # so the follower has made exactly the carrier's 5 turns
    assert ang[-1] - ang[0] == pytest.approx(5.0, abs=1e-9)


@pytest.mark.parametrize("extra,msg", [
    ('arm_mm = 3', "arm_mm is only for a pin riding on a carrier"),
])
def test_arm_keys_need_a_carrier(extra, msg):
    from engine.errors import TrainError
    text = train_text("""
[arbors.a]
wheels = { g = 20 }
[arbors.b]
wheels = { h = 20 }
[[meshes]]
wheels = ["g", "h"]
[arbors.c]
wheels = {}
[pin_slots.s]
pin = "b"
slot = "c"
pin_radius_mm = 5
offset_mm = 1
""" + extra + "\n")
    with pytest.raises(TrainError, match=msg):
        parse_train(text, "test.toml")


def test_carried_pin_that_can_reach_the_slot_axis_is_refused():
    from engine.errors import TrainError
    text = train_text(CARRIED.format(z=25, r=7.0, e=0.0, arm=8.0, arm_deg=0, pin_deg=0)
                      .replace("pin_radius_mm = 7.0", "pin_radius_mm = 7.0"))
    parse_train(text, "test.toml")  # 8 > 7: fine
    bad = text.replace("arm_mm = 8.0", "arm_mm = 6.0")  # 6 < 7 but 7 < 6 + 0: the pin wins
    parse_train(bad, "test.toml")
    worse = CARRIED.format(z=25, r=7.0, e=2.0, arm=8.0, arm_deg=0, pin_deg=0)
    with pytest.raises(TrainError, match=r"\[pin_slots.s\] arm_mm.*can come to the slot"):
        parse_train(train_text(worse), "test.toml")


def chain_text(n: int, reverse: bool = False) -> tuple[str, Fraction]:
    """A compound chain of ``n`` arbors (meshes listed forwards or backwards) and the rate of
    its last arbor as the product of the stages (common practice, no source)."""
    arbors, meshes = [], []
    rate = Fraction(1)
    for i in range(n):
        drive, driven = 10 + i % 7, 12 + i % 5
        arbors.append(f"[arbors.x{i}]\nwheels = {{ w{i} = {driven}, p{i} = {drive} }}\n")
        if i:
            meshes.append(f'[[meshes]]\nwheels = ["p{i - 1}", "w{i}"]\n')
            rate *= -Fraction(10 + (i - 1) % 7, driven)
    if reverse:
        meshes.reverse()
    return train_text("".join(arbors) + "".join(meshes), crank="x0"), rate


@pytest.mark.parametrize("reverse", [False, True])
def test_thousand_arbor_chain_solves_exactly(reverse):
    """A 1,000-arbor train solves (in linear time: timing lives in bench/solve_speed.py), and
    the last arbor's rate is the product of the 999 stages."""
    text, rate = chain_text(1000, reverse)
    kin = solve(parse_train(text, "chain.toml"))
    assert kin.rate("x999") == rate
    assert len(kin.rates) == 1000


def test_undriven_carrier_of_a_differential_is_named():
    """A differential whose carrier is free: its planet and carrier are driven by nothing."""
    with pytest.raises(TrainError, match=r"\[arbors\.carrier\]: nothing drives this arbor "
                                         r"\(nor planet\)"):
        rates_of("""
[arbors.a]
wheels = { s1 = 20 }
[arbors.carrier]
wheels = {}
[arbors.planet]
on = "carrier"
wheels = { pl = 10 }
[[meshes]]
wheels = ["s1", "pl"]
""")


def test_axis_groups_by_axis_with_and_by_a_sun_wheel_on_a_carrier_axis():
    # the demo files say which arbors are tubes on one axis (axis_with), and the tide office's
    # mean Moon and Moon hand turn on the perigee carrier's axis, as its comments say
    tide = load_train(TRAINS / "tide_office.toml")
    groups = axis_groups(tide, solve(tide))
    assert groups["mean_moon"] == groups["moon"] == groups["perigee_carrier"]
    assert groups["pin_arbor"] != groups["slot_arbor"]  # a pin-and-slot's axes stand apart
    assert len({groups[a] for a in ("sun", "node", "day", "pin_arbor", "mean_moon")}) == 5
    orrery = load_train(TRAINS / "table_orrery.toml")
    groups = axis_groups(orrery, solve(orrery))
    tubes = [n for n, a in orrery.arbors.items() if a.axis_with == "drive"]
    assert tubes and {groups[t] for t in tubes} == {groups["drive"]}
    assert groups["lay_mercury"] != groups["drive"]
