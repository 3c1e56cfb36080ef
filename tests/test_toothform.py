"""Tooth forms against the formulas and tables they come from."""

from __future__ import annotations

import math

import numpy as np
import pytest

from engine.toothform import (
    PINION_LEAVES,
    WHEEL_THICKNESS_M,
    cycloidal_pinion,
    cycloidal_wheel,
    epicycloid_addendum,
    involute_function,
    involute_half_angle,
    involute_ring,
    involute_wheel,
    leaf_form,
)

UM = 1e-3  # one micrometre, in mm


def involute_polar_angle(radius, base_radius):
    """The involute of a circle in polar form, as the gear handbooks give it (e.g.
    Machinery's Handbook, 'Gearing'; ISO 21771): at radius ρ the curve stands at angle
    inv(α_ρ) = tan α_ρ − α_ρ from where it leaves the base circle, cos α_ρ = r_b / ρ."""
    a = np.arccos(base_radius / np.asarray(radius))
    return np.tan(a) - a


@pytest.mark.parametrize("z", [12, 17, 25, 40, 133])
@pytest.mark.parametrize("m", [0.3, 0.5, 1.0])
def test_involute_flank_points_lie_on_the_involute(z, m):
    g = involute_wheel(z, m)
    r = m * z / 2
    rb = r * math.cos(math.radians(20))
    rho, eta = g.flank.T
    on = rho >= g.params["form_radius_mm"]
    assert on.sum() > 20
    # the flank is the involute from the base circle, turned so that the tooth is π m / 2
    # thick on the pitch circle (tooth thickness at any diameter, the handbooks' formula):
    # half-angle = s / d + inv α − inv α_ρ
    expect = math.pi / (2 * z) + involute_polar_angle(r, rb) - involute_polar_angle(rho[on], rb)
    assert np.max(np.abs(eta[on] - expect) * rho[on]) < UM
    # and the module's own helper agrees with the textbook form
    assert np.allclose(involute_half_angle(rho[on], z, m), expect, rtol=0, atol=1e-12)


def test_involute_sizes_follow_iso_53_basic_rack():
    # ISO 53 profile A: addendum 1 m, dedendum 1.25 m, tooth π m / 2 on the pitch line
    g = involute_wheel(30, 0.5)
    assert g.tip_radius_mm == pytest.approx(0.5 * 30 / 2 + 0.5, abs=1e-12)
    assert g.root_radius_mm == pytest.approx(0.5 * 30 / 2 - 1.25 * 0.5, abs=1e-12)
    assert g.thickness_at_pitch_mm() == pytest.approx(math.pi * 0.5 / 2, abs=UM)
    assert not g.notes


@pytest.mark.parametrize("z", [20, 40, 100])
def test_involute_root_fillet_is_the_rack_tips_envelope(z):
    # The fillet starts on the root circle and meets the involute on the form circle. The
    # rack's straight flank ends h = h_fP − ρ_fP (1 − sin α) below the pitch line, so it
    # touches the wheel h / sin α from the pitch point along the line of action:
    # r_F = √(r_b² + (r sin α − h / sin α)²) (standard generating geometry).
    m, alpha = 1.0, math.radians(20)
    r = m * z / 2
    rb = r * math.cos(alpha)
    h = 1.25 * m - 0.38 * m * (1 - math.sin(alpha))
    g = involute_wheel(z, m)
    assert g.flank[0, 0] == pytest.approx(r - 1.25 * m, abs=1e-9)
    assert g.params["form_radius_mm"] == pytest.approx(
        math.hypot(rb, r * math.sin(alpha) - h / math.sin(alpha)), abs=1e-9)
    assert np.all(np.diff(g.flank[:, 0]) > 0)  # rises steadily from root to tip


def test_involute_undercut_below_17_teeth():
    # z_min = 2 / sin²α ≈ 17.1 at 20° (standard gear geometry)
    assert "undercut" in " ".join(involute_wheel(12, 1.0).notes)
    assert not involute_wheel(18, 1.0).notes


def test_involute_function():
    # inv 20° = 0.014904 (involute function tables, e.g. Machinery's Handbook)
    assert involute_function(math.radians(20)) == pytest.approx(0.014904, abs=1e-6)


def test_ring_is_an_external_space():
    ring = involute_ring(60, 0.5)
    assert ring.tip_radius_mm == pytest.approx(15 - 0.5)
    assert ring.root_radius_mm == pytest.approx(15 + 0.625)
    assert ring.thickness_at_pitch_mm() == pytest.approx(math.pi * 0.5 / 2, abs=UM)


def test_epicycloid_addendum_tends_to_the_cycloid_on_a_straight_line():
    # On a very large wheel the epicycloid becomes the common cycloid of a circle of radius
    # a rolling on a line: x = a (φ − sin φ), y = a (1 − cos φ) (plane geometry). The tooth's
    # flanks meet where x = half the tooth thickness.
    a = 8 / 4  # generating circle: half the pitch radius of an 8-leaf pinion, in modules
    half = WHEEL_THICKNESS_M / 2
    lo, hi = 0.0, math.pi
    for _ in range(200):
        mid = (lo + hi) / 2
        lo, hi = (mid, hi) if a * (mid - math.sin(mid)) < half else (lo, mid)
    expect = a * (1 - math.cos(lo))
    assert epicycloid_addendum(10**7, 8) == pytest.approx(expect, rel=1e-5)


@pytest.mark.parametrize("z,leaves,addendum_m", [
    # BS 978 Part 2, wheel addendum for a wheel driving a pinion — from memory (the printed
    # table was not at hand): about 1.38 m at ratio 8 with 8 leaves, about 1.25 m at ratio
    # 12 with 6 leaves; the tolerance is wide because these are recalled, not read.
    (64, 8, 1.38),
    (72, 6, 1.25),
])
def test_cycloidal_wheel_addendum_against_the_standard_from_memory(z, leaves, addendum_m):
    w = cycloidal_wheel(z, 1.0, leaves)
    assert w.params["addendum_m"] == pytest.approx(addendum_m, abs=0.05)
    assert w.tip_radius_mm - w.pitch_radius_mm == pytest.approx(w.params["addendum_m"],
                                                                abs=1e-9)


@pytest.mark.parametrize("module_mm", [0.3, 0.5, 0.6, 2.0])
def test_cycloidal_wheel_scales_with_its_module(module_mm):
    """A tooth's shape is in modules: the same wheel at another module is the module-1 wheel
    scaled (geometric similarity: common practice, no source). The addendum arc was once
    sized in mm and then scaled by the module again, so clock wheels below module 1 were cut
    with short tips (addendum 0.89 m instead of 1.39 m at module 0.5 for 75 teeth against 8
    leaves)."""
    one, w = cycloidal_wheel(75, 1.0, 8), cycloidal_wheel(75, module_mm, 8)
    assert w.tip_radius_mm - w.pitch_radius_mm == pytest.approx(
        w.params["addendum_m"] * module_mm, abs=1e-9)
    assert w.params["addendum_radius_m"] == pytest.approx(one.params["addendum_radius_m"])
    assert w.outline(tolerance_mm=0) / module_mm == pytest.approx(one.outline(tolerance_mm=0),
                                                                 abs=1e-9)


def test_cycloidal_wheel_proportions():
    w = cycloidal_wheel(60, 0.5, 10)
    assert w.thickness_at_pitch_mm() == pytest.approx(1.41 * 0.5, abs=UM)
    assert w.pitch_radius_mm - w.root_radius_mm == pytest.approx(1.57 * 0.5)
    assert w.params["addendum_m"] == pytest.approx(0.95 * w.params["theoretical_addendum_m"])
    # radial flank below the pitch circle: the same half-angle at root and pitch
    assert w.flank[0, 1] == pytest.approx(w.flank[2, 1])


@pytest.mark.parametrize("leaves", [6, 7, 8, 10, 12, 16])
def test_pinion_leaves_by_count(leaves):
    row = leaf_form(leaves)
    p = cycloidal_pinion(leaves, 1.0, 1.4)
    assert p.thickness_at_pitch_mm() == pytest.approx(row.thickness_m, abs=UM)
    assert p.tip_radius_mm - p.pitch_radius_mm == pytest.approx(row.addendum_m, abs=1e-9)
    assert p.pitch_radius_mm - p.root_radius_mm == pytest.approx(1.4 + 0.4)
    assert row is PINION_LEAVES[0 if leaves <= 7 else 1 if leaves <= 10 else 2]


def test_outline_has_every_tooth():
    for t in (cycloidal_wheel(45, 0.5, 9), involute_wheel(45, 0.5)):
        xy = t.outline()
        r = np.hypot(*xy.T)
        assert r.max() == pytest.approx(t.tip_radius_mm, abs=1e-9)
        assert r.min() == pytest.approx(t.root_radius_mm, abs=1e-9)
        ang = np.sort(np.arctan2(xy[r > t.tip_radius_mm - 1e-9, 1],
                                 xy[r > t.tip_radius_mm - 1e-9, 0]))
        gaps = np.diff(np.concatenate([ang, [ang[0] + 2 * math.pi]]))
        assert (gaps > t.pitch_angle / 2).sum() == 45


def _distance_to_polyline(points: np.ndarray, line: np.ndarray) -> np.ndarray:
    """Each point's distance to the nearest segment of an open polyline."""
    a, b = line[:-1], line[1:]
    d = b - a
    t = np.clip(((points[:, None, :] - a) * d).sum(-1) / np.maximum((d * d).sum(-1), 1e-30),
                0.0, 1.0)
    near = a + t[..., None] * d
    return np.hypot(*(points[:, None, :] - near).transpose(2, 0, 1)).min(axis=1)


@pytest.mark.parametrize("make", [lambda: cycloidal_wheel(133, 0.5, 25),
                                  lambda: cycloidal_pinion(10, 0.5, 1.4),
                                  lambda: involute_wheel(45, 0.5),
                                  lambda: involute_wheel(12, 1.0)])
def test_outline_keeps_only_the_points_it_needs(make):
    """An outline thinned to within a micrometre of the finely sampled form: a 133-tooth wheel
    once wrote some 100 points a tooth (13,000 in all, twice over with the sheet), which made
    cutting files for a full train slow and large."""
    from engine.toothform import OUTLINE_TOLERANCE_MM

    t = make()
    fine, xy = t.outline(tolerance_mm=0), t.outline()
    assert len(xy) < 0.65 * len(fine)
    per_tooth = len(xy) // t.teeth
    # tooth 0 and the next tooth's first point: the fine points of tooth 0 lie within the
    # tolerance of the thinned line (the same for every tooth: each is tooth 0 turned)
    line = xy[:per_tooth + 1]
    fine0 = fine[:len(fine) // t.teeth]
    assert _distance_to_polyline(fine0, line).max() <= OUTLINE_TOLERANCE_MM + 1e-12
    r = np.hypot(*xy.T)
    assert r.max() == pytest.approx(t.tip_radius_mm, abs=1e-9)
    assert r.min() == pytest.approx(t.root_radius_mm, abs=1e-9)


def test_a_large_wheel_takes_a_third_of_the_points():
    t = cycloidal_wheel(133, 0.5, 25)
    assert len(t.outline()) <= 35 * 133 < len(t.outline(tolerance_mm=0)) / 2.5


def test_thin_keeps_corners_and_drops_points_on_a_line():
    from engine.toothform import thin

    pts = np.array([[0, 0], [1, 0], [2, 0], [3, 0], [3, 1], [3, 2], [2.5, 2.0004]], float)
    assert thin(pts, 0.001).tolist() == [True, False, False, True, False, True, True]
    assert thin(pts, 0.0).sum() == 7 - 3  # points exactly on a chord go even at no tolerance


def test_a_one_leaf_pinion_that_cannot_be_drawn_says_leaf():
    # '1 leaves at module 0.35' read as a slip
    with pytest.raises(ValueError, match="^1 leaf at module 0.35: "):
        cycloidal_pinion(1, 0.35, 0.47)


@pytest.mark.parametrize("teeth", range(5, 20))
def test_involute_flank_never_crosses_itself(teeth):
    # An outline for a cutter must be a simple curve (common practice, no source). At 10-12
    # teeth the undercut trim left the generated curve's run back to its cusp on the base
    # circle, and the flank crossed the root fillet once more (a loop 0.08 module long).
    t = involute_wheel(teeth, 1.0)
    rho, eta = t.flank[:, 0], t.flank[:, 1]
    pts = np.column_stack([rho * np.sin(eta), rho * np.cos(eta)])

    def side(a, b, c):
        return np.sign((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))

    for i in range(len(pts) - 1):
        for j in range(i + 2, len(pts) - 1):
            a, b, c, d = pts[i], pts[i + 1], pts[j], pts[j + 1]
            crossed = side(a, b, c) * side(a, b, d) < 0 and side(c, d, a) * side(c, d, b) < 0
            assert not crossed, (teeth, i, j)
