"""The ephemeris at scattered dates: engine.sky's gather path (`_ChebGroup.evaluate` with the
grid path off) against jplephem's own evaluation of the same Chebyshev records."""

from __future__ import annotations

import numpy as np
from jplephem.spk import S_PER_DAY
from jplephem.spk import T0 as J2000

# Positions: a millimetre is the fast path's own bound on its series (common practice, no
# source); measured 1e-7 km on DE421 and DE406 (the rounding of two sums of 13 terms of up to
# 1.5e8 km). Rates: relative to the series' largest rate, measured below 1e-15.
POSITION_KM = 1e-6
RATE_RELATIVE = 1e-12


def _gathered(group, whole, frac, cut=False, **kw):
    """The series through the gather path, the grid path switched off; every term of each
    record unless ``cut`` (the path as the pipeline takes it, each series cut to its budget);
    ``kw`` goes to ``evaluate`` (``mixed=True``: the mixed rows too)."""
    other = type(group).__new__(type(group))
    other.__dict__.update(group.__dict__)
    if not cut:
        other = other.uncut()
    other._evaluate_grid = lambda w, f: None
    return other.evaluate(whole, frac, **kw)


def _split(jd):
    whole = np.floor(jd)
    return whole, jd - whole


def _edges(group, count):
    """Whole and fraction at ``count`` record boundaries of ``group`` (the first date of a
    record, s = -1), the last of them the file's last instant (s = 1 of its last record)."""
    starts = J2000 + (group.init + group.intlen * np.linspace(1, group.nrec, count).round())\
        / S_PER_DAY
    whole = np.floor(starts) - 1.0
    return whole, starts - whole


def _layouts(group, span):
    rng = np.random.default_rng(1900)
    lo, hi = span
    dense = np.sort(rng.uniform(lo, lo + 36525.0, 5000))  # about a day apart: long runs
    sparse = np.sort(rng.uniform(lo, hi, 300))  # months apart: one date a record
    packed = np.sort(rng.uniform(lo + 100.0, lo + 200.0, 3000))  # runs of 100-500 dates
    return {
        "dense": _split(dense),
        "sparse": _split(sparse),
        "packed": _split(packed),
        "shuffled": _split(rng.permutation(dense[:2000])),
        "one": _split(dense[7:8]),
        "none": _split(dense[:0]),
        "edges": _edges(group, 50),
    }


def _check(group, key, layout, whole, frac, want_pos, want_vel):
    pos, vel = _gathered(group, whole, frac)[key]
    assert pos.shape == vel.shape == (3, whole.size), (key, layout)
    if whole.size:
        assert np.max(np.abs(pos - want_pos)) < POSITION_KM, (key, layout)
        assert np.max(np.abs(vel - want_vel)) < RATE_RELATIVE * np.max(np.abs(want_vel)), \
            (key, layout)


def test_gather_path_against_jplephem_spk(sky):
    # DE421 through jplephem's Segment.compute_and_differentiate (km, km/day): the Sun and the
    # Earth-Moon barycentre share one gather (16-day records), the Moon has its own (4 days).
    segments = {(s.center, s.target): s for s in sky._loaded.kernel.spk.segments}
    span = (2415020.5, 2469807.5)
    for group in sky._loaded.groups:
        for layout, (whole, frac) in _layouts(group, span).items():
            for key in group.keys:
                if whole.size:
                    want = segments[key].compute_and_differentiate(whole, frac)
                else:
                    want = (np.empty((3, 0)), np.empty((3, 0)))
                _check(group, key, layout, whole, frac, *want)


def test_mixed_rows_against_jplephem_spk(sky):
    # The Sun and Moon alone take DE421's 16-day layout as mixed rows (engine.sky's
    # _SunLessBarycentre): the Sun less the Earth-Moon barycentre, moved back along the Sun's
    # motion over its light time taken at each record's middle, and the barycentre's rate.
    # Against jplephem's segments, the light time from the Earth's centre worked out here
    # (0->10, 0->3 and 3->399; the Sun's acceleration over 500 s moves it by centimetres):
    # every term kept, within the 20 m the record's middle leaves (the class's bound; 18.5 m
    # measured on 200,000 dates 1900-2050, the Sun's speed 16.1 m/s at most); as the
    # pipeline cuts them, within that and the two series' budgets (engine.sky._CUT_KM). The
    # Sun's motion over its light time is 6.5 km: left out, moved by twice it, a row swapped
    # or the barycentre left in, this fails.
    from skyfield.constants import C

    from engine.sky import _CUT_KM, _CUT_KM_S, _MIXED, _SunLessBarycentre

    segments = {(s.center, s.target): s for s in sky._loaded.kernel.spk.segments}
    (group,) = [g for g in sky._loaded.groups if isinstance(g.mix, _SunLessBarycentre)]
    assert sorted(group.keys) == [(0, 3), (0, 10)]
    c_km_day = C * S_PER_DAY / 1000.0
    middle_km = 0.020
    for cut, budget in ((False, middle_km + POSITION_KM),
                        (True, middle_km + _CUT_KM[(0, 10)] + _CUT_KM[(0, 3)] + POSITION_KM)):
        for layout, (whole, frac) in _layouts(group, (2415020.5, 2469807.5)).items():
            rows = _gathered(group, whole, frac, cut=cut, mixed=True)[_MIXED]
            assert rows.shape == (6, whole.size), layout
            if not whole.size:
                continue
            sun, v_sun = segments[(0, 10)].compute_and_differentiate(whole, frac)
            emb, v_emb = segments[(0, 3)].compute_and_differentiate(whole, frac)
            earth = emb + segments[(3, 399)].compute(whole, frac)
            tau = np.sqrt(np.sum((sun - earth) ** 2, axis=0)) / c_km_day  # days
            want = sun - tau * v_sun - emb
            error = np.sqrt(np.sum((rows[0:3] - want) ** 2, axis=0))
            assert np.max(error) < budget, (cut, layout, np.max(error))
            rate_error = np.sqrt(np.sum((rows[3:6] - v_emb) ** 2, axis=0)) / S_PER_DAY
            assert np.max(rate_error) < _CUT_KM_S + 1e-9, (cut, layout, np.max(rate_error))


def test_gather_path_cut_to_its_budget(sky):
    # The pipeline's gather path keeps, in every record, only the terms whose rest adds up to
    # more than each series' budget (engine.sky._CUT_KM: 0.15 m for the Moon, 80 m for the Sun
    # and the Earth-Moon barycentre; rates 1 cm/s). Against jplephem's evaluation of every
    # term (the outside source), on dates all over DE421 and on record edges: within the
    # budget; and the budget decides it: one term fewer would break it somewhere (the tails
    # worked out here from the file's coefficients, not by engine.sky's code).
    from engine.sky import _CUT_KM, _CUT_KM_S

    segments = {(s.center, s.target): s for s in sky._loaded.kernel.spk.segments}
    rng = np.random.default_rng(11)
    dates = np.sort(rng.uniform(2415020.5, 2469807.5, 40_000))
    for group in sky._loaded.groups:
        k = group.gather_terms
        assert k < group.nterms, group.keys  # the cut is taken: DE421 keeps 6 and 10 of 13
        for whole, frac in (_split(dates), _edges(group, 200)):
            for key in group.keys:
                pos, vel = _gathered(group, whole, frac, cut=True)[key]
                want_pos, want_vel = segments[key].compute_and_differentiate(whole, frac)
                error = np.sqrt(np.sum((pos - want_pos) ** 2, axis=0))
                assert np.max(error) < _CUT_KM[key] + POSITION_KM, (key, np.max(error))
                rate_error = np.sqrt(np.sum((vel - want_vel) ** 2, axis=0)) / S_PER_DAY
                assert np.max(rate_error) < _CUT_KM_S + 1e-9, (key, np.max(rate_error))
        # one term fewer: the largest tail from k - 1 on (coefficient vectors' lengths, over
        # every record) is over some series' budget, in position or in rate
        coef = np.asarray(group.coef).reshape(group.nrec, len(group.keys), 3, group.nterms)
        size = np.sqrt(np.sum(coef ** 2, axis=2))  # (records, series, terms)
        j = np.arange(group.nterms)
        over = [np.max(np.sum(size[:, i, k - 1:], axis=1)) > _CUT_KM[key] or
                np.max(np.sum(size[:, i, k - 1:] * j[k - 1:] ** 2, axis=1)) * 2.0 /
                group.intlen > _CUT_KM_S
                for i, key in enumerate(group.keys)]
        assert any(over), group.keys


def test_gather_path_against_jplephem_arrays(sky406):
    # DE406's mapped arrays (turned record by record as they are gathered, not copied) through
    # jplephem's evaluator for that format; the fast path's Moon is the file's geocentric Moon
    # scaled to the Earth-Moon barycentre.
    import de406
    from jplephem.ephem import Ephemeris

    eph = Ephemeris(de406)
    names = {(0, 3): "earthmoon", (0, 10): "sun", (3, 301): "moon"}
    for group in sky406._loaded.groups:
        assert group.mapped and "_turned" not in vars(group)  # mapped, never copied
        assert group.gather_terms == group.nterms  # read as they are: never scanned, not cut
        span = (1538000.5, 1538000.5 + 400000)
        for layout, (whole, frac) in _layouts(group, span).items():
            key = group.keys[0]
            if whole.size:
                bundle = eph.compute_bundle(names[key], whole, frac)
                want = (eph.position_from_bundle(bundle) * group.scale,
                        eph.velocity_from_bundle(bundle) * group.scale)
            else:
                want = (np.empty((3, 0)), np.empty((3, 0)))
            _check(group, key, layout, whole, frac, *want)


def test_chunks_follow_the_runs():
    # A run of dates in one record is one chunk, a run longer than _MOST_SLOTS dates several of
    # at most that many; the chunks tile the dates in order, every run starting one. Each is
    # padded to the next chunk size: at most a quarter of its slots above eight. Dates months
    # apart take one slot each, unpadded.
    from engine.sky import _CHUNK_SIZES, _MOST_SLOTS, _SIZE_OF, _chunks

    rng = np.random.default_rng(2)
    for counts in (rng.poisson(16.0, 1000) + 1, rng.poisson(4.0, 1000) + 1,
                   np.array([100, 1, 33, 64, 32, 5, 200])):
        starts = np.concatenate(([0], np.cumsum(counts)[:-1]))
        firsts, sizes = _chunks(starts, counts)
        assert sizes.min() >= 1 and sizes.max() <= _MOST_SLOTS
        assert firsts[0] == 0 and np.array_equal(firsts[1:], firsts[:-1] + sizes[:-1])
        assert firsts[-1] + sizes[-1] == counts.sum() and np.isin(starts, firsts).all()
        assert sizes.size == np.sum(-(-counts // _MOST_SLOTS))
        slots = _CHUNK_SIZES[_SIZE_OF[sizes]]
        assert np.all(slots >= sizes) and np.all((slots <= 8) | (4 * (slots - sizes) < slots))
    ones = np.ones(300, dtype=np.intp)
    firsts, sizes = _chunks(np.arange(300), ones)
    assert np.array_equal(firsts, np.arange(300)) and np.all(_CHUNK_SIZES[_SIZE_OF[sizes]] == 1)


def test_records_turned_only_where_read(sky):
    # A fresh copy of the Moon's series: a month of dates turns the one block of records
    # holding them, and the results do not depend on which blocks were turned before.
    from engine.sky import _TURN_BLOCK

    moon = next(g for g in sky._loaded.groups if (3, 301) in g.keys)
    fresh = type(moon).__new__(type(moon))
    fresh.__dict__.update({k: v for k, v in vars(moon).items() if k != "_turned"})
    fresh._evaluate_grid = lambda w, f: None
    whole, frac = _split(np.sort(np.random.default_rng(4).uniform(2440000.5, 2440030.5, 40)))
    first = fresh.evaluate(whole, frac)[(3, 301)]
    table, turned = fresh._turned
    assert turned.sum() == 1 and table.shape[0] > 10 * _TURN_BLOCK
    fresh.evaluate(*_split(np.array([2469000.7, 2415100.3])))
    assert turned.sum() == turned.size  # dates out of order: every block between them
    again = fresh.evaluate(whole, frac)[(3, 301)]
    assert np.array_equal(first[0], again[0]) and np.array_equal(first[1], again[1])


def test_long_calls_keep_no_work_arrays(sky):
    # A call far longer than a pipeline's batch (skyfield's searches pass what they like) gets
    # fresh work arrays, and the results are the same as in short calls.
    import threading

    from engine import sky as sky_module

    group = sky._loaded.groups[0]
    jd = np.sort(np.random.default_rng(6).uniform(2415020.5, 2469000.5, 60_000))
    kept = {}

    def run():
        long = _gathered(group, *_split(jd))
        kept["sizes"] = [getattr(sky_module._gather_scratch, name).size
                         for name in ("basis", "series", "out")
                         if hasattr(sky_module._gather_scratch, name)]
        short = [_gathered(group, *_split(part)) for part in np.array_split(jd, 20)]
        kept["same"] = all(
            np.allclose(long[key][i], np.concatenate([s[key][i] for s in short], axis=1),
                        rtol=0.0, atol=POSITION_KM)
            for key in group.keys for i in (0, 1))

    thread = threading.Thread(target=run)  # a thread of its own: no work arrays before
    thread.start()
    thread.join()
    assert kept["same"] and all(size <= sky_module._SCRATCH_MOST for size in kept["sizes"])


def test_geocentric_rows_against_jplephem_spk(sky):
    # The Sun and Moon alone take DE421's 4-day layout as 9 rows (engine.sky's
    # _GeocentricRows; each 4-day record lies in one 16-day record): the Sun less the Earth's
    # centre moved back over its light time, the Moon from the Earth's centre moved back over
    # its own (to first order, τ = |d|/c − d·v/c², fitted per record), the Earth's centre's
    # rate. Against jplephem's segments (0->10, 0->3, 3->301, 3->399) with the light times
    # worked out here, within the budgets of the series the rows are made of
    # (engine.sky._CUT_KM: the Sun 20 m + 80 m + 80 m, as test_mixed_rows_against_jplephem_spk;
    # the Moon 1.0123 × 0.15 m, and 1.35 s of light time times the rates' 1 cm/s). The
    # Moon's motion over its light time is some 38 km, the Earth's centre 4,700 km from the
    # barycentre: without the Earth/Moon ratio, with a sign turned or the light time left out
    # or doubled, this fails.
    from skyfield.constants import C

    from engine.sky import _CUT_KM, _CUT_KM_S, _GEOCENTRIC, _GeocentricRows

    segments = {(s.center, s.target): s for s in sky._loaded.kernel.spk.segments}
    (group,) = [g for g in sky._loaded.groups if isinstance(g.mix, _GeocentricRows)]
    assert group.keys == [(3, 301)] and sky._loaded.groups[0] is group
    c_km_day = C * S_PER_DAY / 1000.0
    sun_km = 0.020 + _CUT_KM[(0, 10)] + _CUT_KM[(0, 3)] + POSITION_KM
    moon_km = 1.0123 * _CUT_KM[(3, 301)] + 1.35 * _CUT_KM_S + POSITION_KM
    for layout, (whole, frac) in _layouts(group, (2415020.5, 2469807.5)).items():
        rows = _gathered(group, whole, frac, cut=True, mixed=True)[_GEOCENTRIC]
        assert rows.shape == (9, whole.size), layout
        if not whole.size:
            continue
        sun, v_sun = segments[(0, 10)].compute_and_differentiate(whole, frac)
        emb, v_emb = segments[(0, 3)].compute_and_differentiate(whole, frac)
        moon, v_moon = segments[(3, 301)].compute_and_differentiate(whole, frac)
        earth, v_earth = segments[(3, 399)].compute_and_differentiate(whole, frac)
        to_sun = sun - emb - earth
        tau = np.sqrt(np.sum(to_sun ** 2, axis=0)) / c_km_day  # days
        error = np.sqrt(np.sum((rows[0:3] - (to_sun - tau * v_sun)) ** 2, axis=0))
        assert np.max(error) < sun_km, (layout, np.max(error))
        to_moon, v = moon - earth, v_emb + v_moon
        tau = (np.sqrt(np.sum(to_moon ** 2, axis=0)) / c_km_day
               - np.sum(to_moon * v, axis=0) / c_km_day ** 2)
        error = np.sqrt(np.sum((rows[3:6] - (to_moon - tau * v)) ** 2, axis=0))
        assert np.max(error) < moon_km, (layout, np.max(error))
        rate_error = np.sqrt(np.sum((rows[6:9] - (v_emb + v_earth)) ** 2, axis=0)) / S_PER_DAY
        assert np.max(rate_error) < _CUT_KM_S * 1.02 + 1e-9, (layout, np.max(rate_error))


def test_geocentric_rows_fit_the_light_time(sky):
    # The 9 rows' Moon holds its motion over its light time as a fit per record (engine.sky's
    # _GeocentricRows); against the same sum worked out date by date from the same (cut)
    # series — the Moon's 4-day rows and the 16-day mixed rows, each through its own gather —
    # what the fit leaves is within a millimetre (the fast path's bound on its series: common
    # practice, no source), on dates all over DE421 and on the records' edges; the Sun and the
    # Earth's rate, exact sums of the same polynomials, within the rounding of sums of 1.5e8 km
    # (POSITION_KM) and 1e-9 km/s.
    from engine.sky import _C_KM_DAY, _GEOCENTRIC, _MIXED, _GeocentricRows

    (group,) = [g for g in sky._loaded.groups if isinstance(g.mix, _GeocentricRows)]
    outer = group.mix.outer
    ratio = sky._loaded.earth_ratio
    c_km_day = _C_KM_DAY
    rng = np.random.default_rng(12)
    for whole, frac in (_split(np.sort(rng.uniform(2415020.5, 2469807.5, 40_000))),
                        _edges(group, 400)):
        rows = {}
        for g, key in ((group, _GEOCENTRIC), (outer, _MIXED)):
            rows[key] = _gathered(g, whole, frac, cut=True, mixed=True)[key]
        m, v_m = _gathered(group, whole, frac, cut=True)[(3, 301)]
        mixed = rows[_MIXED]
        sun = mixed[0:3] + ratio * m
        geo, v = (1.0 + ratio) * m, mixed[3:6] + v_m
        tau = (np.sqrt(np.sum(geo ** 2, axis=0)) / c_km_day
               - np.sum(geo * v, axis=0) / c_km_day ** 2)
        got = rows[_GEOCENTRIC]
        assert np.max(np.abs(got[0:3] - sun)) < POSITION_KM
        assert np.max(np.sqrt(np.sum((got[3:6] - (geo - tau * v)) ** 2, axis=0))) < 1e-6
        assert np.max(np.abs(got[6:9] - (mixed[3:6] - ratio * v_m))) / S_PER_DAY < 1e-9
