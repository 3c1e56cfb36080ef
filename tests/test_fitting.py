"""General fitting: the joint line-and-sinusoids fit, the period search, the wrapped-angle
offset, and results that do not depend on how many threads the BLAS library uses."""

from __future__ import annotations

import numpy as np
import pytest

from engine.angles import wrap_deg
from engine.fitting import (
    best_offset,
    fit_line_and_sinusoids,
    periodic_part,
)


def test_periodic_part_pure_sine_short_and_long():
    for n, step, period, amp in ((500, 1.0, 31.8, 1.27), (300_000, 0.25, 14.77, 0.66)):
        k = np.arange(n)
        y = amp * np.cos(2 * np.pi * k * step / period - 1.0)
        a, p = periodic_part(y, step)
        assert p == pytest.approx(period, rel=2e-3)
        assert a == pytest.approx(amp, rel=5e-3)
    assert periodic_part(np.zeros(100), 1.0) == (0.0, None)


def test_best_offset_across_the_wrap():
    rng = np.random.default_rng(1)
    err = wrap_deg(179.0 + rng.normal(0, 1.5, 20_000))  # straddles +180/-180
    c, rms = best_offset(err)
    assert abs(wrap_deg(c - 179.0)) < 0.05
    assert rms == pytest.approx(1.5, rel=0.03)
    # a naive arithmetic mean of the wrapped values lands far from the true offset
    assert abs(wrap_deg(np.mean(err) - 179.0)) > 45


def test_line_and_sinusoids_recover_what_was_put_in():
    """Synthetic: a line of slope 0.002 a step and two sinusoids of known periods (days)."""
    k = np.arange(20_000, dtype=float)
    step = 0.5
    y = 1.5 + 0.002 * k + 0.8 * np.sin(2 * np.pi * k * step / 27.55 + 0.4) \
        - 0.3 * np.cos(2 * np.pi * k * step / 365.26)
    fit = fit_line_and_sinusoids(y, step, (("a", 27.55), ("b", 365.26)))
    assert fit.sigma_per_step < 1e-9
    fit = fit_line_and_sinusoids(y, step, (("a", 27.55), ("b", 365.26), ("c", 1e6)))
    assert fit.slope_per_step == pytest.approx(0.002, rel=1e-9)
    assert fit.line[0] == pytest.approx(1.5, abs=1e-6)
    assert fit.used == ("a", "b") and fit.left_out == ("c",)
    # "c", a hundredth of its cycle in the span, is not in the series: its amplitude fitted
    # with the line is the bins' float32 rounding, magnified, and tilts the line by nothing
    # that matters (under 1e-4 of the slope)
    assert fit.sigma_per_step < 2e-7


def test_a_swing_longer_than_the_span_widens_the_slope_error():
    """0.6 of a cycle of a 30,687-day swing of 5.4° (an outer planet's equation of centre
    over a 50-year span) and no drift: the line takes up part of the swing, and the standard
    error must cover the slope it reads. Counting the residual's values as independent gave
    a thirtieth of it. Common practice, no source."""
    step, period = 5.0, 30_687.0
    k = np.arange(3_654, dtype=float)
    for phase in (0.0, 1.0, 2.0, 3.0, 4.0, 5.0):
        y = 5.4 * np.sin(2 * np.pi * k * step / period + phase)
        fit = fit_line_and_sinusoids(y, step, (("year", period), ("half", period / 2)))
        assert fit.left_out == ("year",)
        assert abs(fit.slope_per_step) <= 1.5 * fit.sigma_per_step + 1e-12
        # and not beyond all use: at most the largest slope such a swing can give
        assert fit.sigma_per_step < 2 * 5.4 * 2 * np.pi * step / period


def test_results_do_not_depend_on_blas_threads():
    """The fits and the period search give the same bits with BLAS held to one thread as with
    its default threads (they make no BLAS call on long arrays)."""
    threadpoolctl = pytest.importorskip("threadpoolctl")
    rng = np.random.default_rng(7)
    k = np.arange(300_000, dtype=float)
    y = (0.001 * k + 0.7 * np.sin(2 * np.pi * k * 0.25 / 27.55)
         + rng.normal(0, 0.05, k.size)).astype(np.float32)

    def run():
        fit = fit_line_and_sinusoids(y, 0.25, (("m", 27.55), ("y", 365.26)))
        return (fit.line, fit.sigma_per_step, periodic_part(y, 0.25, line=fit.line),
                best_offset(wrap_deg(y * 40)))

    default = run()
    with threadpoolctl.threadpool_limits(limits=1, user_api="blas"):
        single = run()
    assert single == default


@pytest.mark.parametrize("module", ["fitting", "drift"])
def test_no_blas_products_on_long_arrays(module):
    """Every product in the fits and the run is elementwise or einsum: no ``@``, ``np.dot``,
    ``lstsq``, ``polyfit``... except on a small matrix, marked ``# small`` on its line."""
    import ast
    from pathlib import Path

    path = Path(__file__).resolve().parent.parent / "engine" / f"{module}.py"
    text = path.read_text()
    lines = text.splitlines()
    blas = {"dot", "vdot", "inner", "matmul", "tensordot", "lstsq", "polyfit", "solve", "outer"}
    found = []
    for node in ast.walk(ast.parse(text)):
        if isinstance(node, ast.BinOp) and isinstance(node.op, ast.MatMult):
            found.append(node.lineno)
        elif (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
              and node.func.attr in blas):
            found.append(node.lineno)
    bad = [f"{path.name}:{n}: {lines[n - 1].strip()}" for n in found
           if "# small" not in lines[n - 1]]
    assert not bad, bad


def test_period_search_never_reports_a_period_under_two_steps():
    """A sine of 1.5 steps a period is seen only as its alias (3 steps): whatever is reported
    is at least two steps long (sampling limit; common practice, no source)."""
    k = np.arange(5000)
    for period_steps in (1.5, 1.9, 2.5, 7.0):
        _, p = periodic_part(np.sin(2 * np.pi * k / period_steps), 1.0)
        assert p is None or p >= 2.0


def test_normal_matrix_in_closed_form_equals_the_summed_products():
    """Guard for the closed-form normal matrix: it equals the design's products summed, for
    binned and unbinned grids; two distinct frequencies less than a cycle apart over the span
    are left to the summed products."""
    from engine.fitting import _binned, _design, _gram

    days = (27.5545, 13.7773, 31.812, 14.7653, 365.2596, 182.6298, 6798.4, 398.88)
    for n, step in ((219_151, 0.25), (54_000, 1.0), (3_000, 1.0)):
        b = _binned(np.zeros(n, dtype=np.float32))
        ws = tuple(sorted(2 * np.pi * step / d for d in days if d < n * step / 2))
        x = _design(b, ws, ws, None)[0]
        summed = np.einsum("ik,jk->ij", x, x)
        mid, half = (b.c[0] + b.c[-1]) / 2, max((b.c[-1] - b.c[0]) / 2, 1.0)
        closed = _gram(b.c, mid, half, ws)
        assert np.abs(closed - summed).max() < 1e-9 * np.abs(summed).max()
    c = np.arange(1000.0)
    assert _gram(c, 499.5, 499.5, (0.1, 0.1 + 1e-5)) is None


def test_best_offset_of_a_cluster_is_its_mean_and_least_rms():
    """Errors within a half turn of each other: the offset is their mean (no error wraps about
    it), and no other offset leaves a smaller RMS of the wrapped differences."""
    rng = np.random.default_rng(3)
    for centre in (-179.0, -40.0, 0.0, 95.0, 179.5):
        err = wrap_deg(centre + rng.normal(0.0, 20.0, 50_000).clip(-85, 85)).astype(np.float32)
        c, rms = best_offset(err)
        spread = float(err.max()) - float(err.min())
        if spread < 179:
            assert c == pytest.approx(float(err.mean(dtype=float)), abs=1e-9)
        for other in c + np.array([-1.0, -0.01, 0.01, 1.0]):
            left = wrap_deg(err.astype(float) - other)
            assert np.sqrt(np.mean(left ** 2)) > rms
        assert rms == pytest.approx(np.sqrt(np.mean(wrap_deg(err.astype(float) - c) ** 2)),
                                    rel=1e-6)


def test_a_curve_is_not_a_swing():
    """A slow curve the line leaves (a quadratic over the span) is not reported as a swing of
    one cycle a span: the search finds none (0.0, None), and the drift is not called
    uncertain for it; a series too short to search gives a NaN amplitude instead."""
    from engine.drift import summarise

    k = np.arange(73_000)
    curve = 1e-3 * ((k - k.mean()) / k.size) ** 2  # a quarter of a millidegree across the span
    assert periodic_part(curve, 0.25) == (0.0, None)
    jd = 2451545.0 + 0.25 * k
    s = summarise(jd, 0.5 + 1e-4 * k / k.size + curve)
    assert s.periodic_period_days is None and s.periodic_amplitude_deg == 0.0
    assert not s.drift_uncertain
    a, p = periodic_part(np.ones(10), 1.0)
    assert p is None and np.isnan(a)


@pytest.mark.parametrize("periods", [(27.55, 31.81, 14.77, 205.9, 365.26),  # closed form
                                     (365.26, 365.2, 27.55)])  # near-equal: summed products
def test_joint_fit_equals_the_plain_least_squares_on_the_bins(periods):
    """Guard for the fit's quick paths (the normal matrix in closed form, the columns' sums and
    the fitted sinusoids made a block at a time from a table of phases, never an array of a
    column): the line, the slope's standard error and the residual's sign changes equal the
    plain least squares (numpy's lstsq on the design written out with cos and sin) on the same
    bins, over a series long enough to be binned and not a whole number of blocks."""
    from engine.fitting import _binned

    rng = np.random.default_rng(11)
    n, step = 100_003, 0.25
    k = np.arange(n, dtype=float)
    y = 3.0 - 2e-6 * k + rng.normal(0, 0.02, n)
    for p in periods[:3]:
        y += rng.uniform(0.1, 1.0) * np.sin(2 * np.pi * k * step / p + rng.uniform(0, 6))
    y = y.astype(np.float32)
    terms = tuple((f"t{i}", p) for i, p in enumerate(periods))
    fit = fit_line_and_sinusoids(y, step, terms)
    assert fit.used == tuple(name for name, _ in terms)
    b = _binned(y)
    mid, half = (b.c[0] + b.c[-1]) / 2, (b.c[-1] - b.c[0]) / 2
    cols = [np.ones_like(b.c), (b.c - mid) / half]
    for p in periods:
        w = 2 * np.pi * step / p
        cols += [np.cos(w * b.c), np.sin(w * b.c)]
    x = np.array(cols).T
    coef, *_ = np.linalg.lstsq(x, b.y, rcond=None)
    res = b.y - x @ coef
    slope = coef[1] / half
    assert fit.slope_per_step == pytest.approx(slope, rel=1e-9, abs=1e-15)
    assert fit.line[0] == pytest.approx(coef[0] - slope * mid, rel=1e-9)
    changes = int(np.count_nonzero(np.signbit(res[1:]) != np.signbit(res[:-1])))
    dof = max(min(changes + 1, len(b.y)) - x.shape[1], 1)
    var_u = np.linalg.inv(x.T @ x)[1, 1]
    sigma = np.sqrt(float(res @ res) * var_u / dof) / half
    assert fit.sigma_per_step == pytest.approx(sigma, rel=1e-6)


def test_a_known_part_is_taken_off_not_fitted():
    """A line, a swing fitted with it and a slow part of known shape (17" with the node's
    18.6 years over 20 years, like an equinox dial's nutation): ``known`` takes that part off
    before the fit, so the line and swing come back as put in, and the fit is the one of the
    series less the known part, made beforehand (common practice, no source). Why it is not
    fitted instead: tests/test_planets.py, the orrery's Jupiter arm."""
    step = 1.0
    k = np.arange(7_306, dtype=float)

    def known(c):
        return 17.2 / 3600 * np.sin(2 * np.pi * c * step / 6_798.4 + 0.7)

    swing = 5.5 * np.sin(2 * np.pi * k * step / 4_332.6 + 1.0)
    y = 1e-5 * k + known(k) + swing
    fit = fit_line_and_sinusoids(y, step, (("year", 4_332.6),), known=known)
    assert fit.slope_per_step == pytest.approx(1e-5, rel=1e-6)
    assert fit.sigma_per_step < 1e-10
    less = fit_line_and_sinusoids(y - known(k), step, (("year", 4_332.6),))
    assert fit.slope_per_step == pytest.approx(less.slope_per_step, rel=1e-9)
    # left in, the 17" tilts a line over 20 years by a good part of what it can
    plain = fit_line_and_sinusoids(y, step, (("year", 4_332.6),))
    assert abs(plain.slope_per_step - 1e-5) > 100 * abs(fit.slope_per_step - 1e-5)


def test_a_known_term_near_the_span_is_fitted_on_trial():
    """A term of known amplitude (0.005°, period 6,800 days) fitted over 1.07 of its periods
    beside an unfitted neighbour ten times its size (0.05°, 7,270 days), no drift: fitted
    freely its column takes up the neighbour (an amplitude some ten times its own) and tilts
    the line well outside its standard error; on trial that fit is refused, the term is left
    out with its largest tilt in the error, and the line reads no drift within two standard
    errors (common practice, no source; the case of an orrery's Jupiter arm over 20 years
    beside the nutation, tests/test_planets.py)."""
    step = 1.0
    k = np.arange(7_306, dtype=float)
    minor = {"known": 0.005}
    worst = 0.0
    for phase in np.linspace(0.0, 2 * np.pi, 8, endpoint=False):
        y = (0.005 * np.sin(2 * np.pi * k / 6_800 + 0.4)
             + 0.05 * np.sin(2 * np.pi * k / 7_270 + phase))
        free = fit_line_and_sinusoids(y, step, (("known", 6_800.0),), minor=minor)
        worst = max(worst, abs(free.slope_per_step) / free.sigma_per_step)
        fit = fit_line_and_sinusoids(y, step, (("known", 6_800.0),), minor=minor,
                                     sure_cycles=3.0, slack=2.0)
        assert fit.set_aside == ("known",) and fit.left_out == ("known",)
        assert fit.used == () and fit.on_trial == ()
        assert abs(fit.slope_per_step) <= 2 * fit.sigma_per_step
    assert worst > 3  # the free fit claimed a drift that is not there


def test_a_plausible_trial_fit_stays_with_its_spread_in_the_error():
    """The same term alone, its amplitude growing by 0.001° from the span's middle to its end
    (a term whose size is not the same all through the span), fitted over 1.5 of its
    periods: on trial its amplitude is plausible, so it stays fitted, and the error takes in
    what a swing of the given spread (0.001°) can pass on to the line, so the no-drift line
    lies within it (common practice, no source)."""
    step = 1.0
    k = np.arange(10_200, dtype=float)
    u = (k - k.mean()) / (k[-1] - k.mean())
    worst = 0.0
    for phase in np.linspace(0.0, 2 * np.pi, 8, endpoint=False):
        y = (0.005 + 0.001 * u) * np.sin(2 * np.pi * k / 6_800 + phase)
        fit = fit_line_and_sinusoids(y, step, (("known", 6_800.0),), minor={"known": 0.005},
                                     sure_cycles=3.0, slack=2.0, spread={"known": 0.001})
        assert fit.used == ("known",) and fit.on_trial == ("known",) and fit.set_aside == ()
        assert abs(fit.slope_per_step) <= fit.sigma_per_step
        bare = fit_line_and_sinusoids(y, step, (("known", 6_800.0),))
        assert bare.slope_per_step == fit.slope_per_step  # the same line, a wider error
        worst = max(worst, abs(bare.slope_per_step) / bare.sigma_per_step)
    assert worst > 2  # the residual alone said less than the slope read
