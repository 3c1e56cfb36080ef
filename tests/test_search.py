"""Tests of the tooth-count search (engine/search.py) and the ``search`` command."""

from __future__ import annotations

import itertools
import json
import math
import tomllib
from fractions import Fraction

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from engine.cli import main
from engine.errors import SearchError
from engine.search import (
    convergents,
    emit_fragment,
    exact_trains,
    make_constraints,
    make_target,
    parse_counts,
    search,
    split_ratio,
)

YEAR_DAYS = 365.25
SYNODIC_DAYS = 29.530588853  # mean synodic month in days, from memory (every almanac rounds to this)


def brute_force(target, counts_drv, counts_dvn, stages, no_repeat=False, top=5):
    """Nested loops over every ordered choice of counts: (|error|, teeth) of the best ratios."""
    best: dict[Fraction, int] = {}
    for k in stages:
        for drivers in itertools.product(counts_drv, repeat=k):
            num = math.prod(drivers)
            for driven in itertools.product(counts_dvn, repeat=k):
                if no_repeat and len(set(drivers + driven)) < 2 * k:
                    continue
                r = Fraction(num, math.prod(driven))
                teeth = sum(drivers) + sum(driven)
                if teeth < best.get(r, 10**9):
                    best[r] = teeth
    ranked = sorted((abs(r / target - 1), teeth) for r, teeth in best.items())
    return ranked[:top]


def ranked(report, target_ratio):
    return [(abs(r.ratio / target_ratio - 1), r.total_teeth) for r in report.results]


def all_counts(result):
    return [c for s in result.stages for c in (s.driver, s.driven)]


# --- exhaustiveness against brute force ------------------------------------------------------


@pytest.mark.parametrize(("k", "lo", "hi"), [(1, 8, 60), (2, 8, 22), (3, 8, 13)])
@pytest.mark.parametrize("period", ["29.530588853", "27.321661", "365.2422", "6940/235"])
def test_search_matches_brute_force(k, lo, hi, period):
    target = make_target(period=period)
    cons = make_constraints(stages=k, wheels=(lo, hi), pinions=(lo, hi))
    counts = range(lo, hi + 1)
    want = brute_force(target.ratio, counts, counts, [k])
    got = ranked(search(target, cons, top=5, with_convergents=False), target.ratio)
    assert got == want


@settings(max_examples=25, deadline=None)
@given(
    num=st.integers(1, 400), den=st.integers(1, 400),
    k=st.integers(1, 3), lo=st.integers(2, 20), width=st.integers(0, 6),
    no_repeat=st.booleans(),
)
def test_search_matches_brute_force_random(num, den, k, lo, width, no_repeat):
    target = make_target(ratio=f"{num}/{den}")
    hi = lo + width + (10 if k == 1 else 0)
    cons = make_constraints(stages=k, wheels=(lo, hi), pinions=(lo, hi), no_repeat=no_repeat)
    counts = range(lo, hi + 1)
    want = brute_force(target.ratio, counts, counts, [k], no_repeat=no_repeat)
    got = ranked(search(target, cons, top=5, with_convergents=False), target.ratio)
    assert got == want


def test_stage_range_merges_counts_and_matches_brute_force():
    target = make_target(cycle="synodic month")
    cons = make_constraints(stages="1-2", wheels=(8, 30), pinions=(8, 30))
    want = brute_force(target.ratio, range(8, 31), range(8, 31), [1, 2], top=8)
    assert ranked(search(target, cons, top=8, with_convergents=False), target.ratio) == want


def test_each_ratio_reported_once():
    report = search(make_target(ratio="1/4"), make_constraints(stages=2, wheels=(8, 40),
                                                               pinions=(8, 40)), top=10)
    ratios = [r.ratio for r in report.results]
    assert len(set(ratios)) == len(ratios)
    assert report.results[0].ratio == Fraction(1, 4)
    assert report.results[0].total_teeth == 8 + 8 + 16 + 16  # fewest teeth of all 1/4 trains


# --- exact trains -----------------------------------------------------------------------------


def test_exact_235_over_19_first():
    # 19 years = 235 synodic months (common practice, no source); 235 = 5 x 47
    for target in (make_target(ratio="19/235"), make_target(period="235/19"),
                   make_target(ratio="235/19")):
        best = search(target, make_constraints(stages="1-3"), top=3).results[0]
        assert best.exact and best.ratio == target.ratio
        assert best.period_error_ppm == 0.0 and math.isinf(best.one_day_off_years)


def test_exact_254_over_19_needs_127():
    # 19 years = 254 sidereal months (common practice, no source); 254 = 2 x 127
    target = make_target(ratio="19/254")
    best = search(target, make_constraints(stages="1-2", wheels=(8, 130)), top=3).results[0]
    assert best.exact and 127 in all_counts(best)
    without = make_constraints(stages="1-2", wheels=(8, 120))
    assert not search(target, without, top=3, with_convergents=False).results[0].exact
    train, reason = split_ratio(Fraction(19, 254), target, without)
    assert train is None and "127" in reason


def test_step_up_train_lets_wheels_drive():
    target = make_target(ratio="7")
    best = search(target, make_constraints(stages=1, wheels=(60, 100), pinions=(8, 12)),
                  top=1).results[0]
    assert best.exact and best.stages[0].driver >= 60 and best.stages[0].driven <= 12


def test_exact_only_lists_the_different_trains():
    report = search(make_target(ratio="19/235"),
                    make_constraints(stages="1-3", exact_only=True), top=5)
    assert len(report.results) == 5 and all(r.exact for r in report.results)
    teeth = [r.total_teeth for r in report.results]
    assert teeth == sorted(teeth)
    assert len({r.stages for r in report.results}) == 5


@pytest.mark.parametrize("no_repeat", [False, True])
def test_exact_trains_match_brute_force(no_repeat):
    target = make_target(ratio="1/4")
    cons = make_constraints(stages=2, wheels=(8, 40), pinions=(8, 40), no_repeat=no_repeat)
    want = set()
    for drivers in itertools.combinations_with_replacement(range(8, 41), 2):
        for driven in itertools.combinations_with_replacement(range(8, 41), 2):
            if no_repeat and len(set(drivers + driven)) < 4:
                continue
            if Fraction(math.prod(drivers), math.prod(driven)) == Fraction(1, 4):
                want.add((sum(drivers) + sum(driven), drivers, driven))
    got = exact_trains(Fraction(1, 4), target, cons, top=1000)
    assert sorted((r.total_teeth, tuple(s.driver for s in r.stages),
                   tuple(s.driven for s in r.stages)) for r in got) == sorted(want)
    report = search(make_target(cycle="synodic month"),
                    make_constraints(stages=2, exact_only=True), top=5)
    assert report.results == ()


# --- constraints ------------------------------------------------------------------------------


def test_allowed_list_limits_every_count():
    allowed = parse_counts("10, 12,15,20-24, 30,40,48,60")
    report = search(make_target(cycle="tropical year"),
                    make_constraints(stages="1-3", allowed=allowed), top=10)
    assert report.results
    for r in report.results:
        assert set(all_counts(r)) <= set(allowed)


def test_max_prime_limits_every_factor():
    target = make_target(cycle="synodic month")
    free = search(target, make_constraints(stages=2), top=5, with_convergents=False)
    assert any(max(sympy.factorint(c)) > 7 for r in free.results for c in all_counts(r))
    smooth = search(target, make_constraints(stages=2, max_prime=7), top=5)
    for r in smooth.results:
        for c in all_counts(r):
            assert max(sympy.factorint(c)) <= 7
    assert abs(smooth.results[0].period_error_ppm) > abs(free.results[0].period_error_ppm)


def test_no_repeat_changes_best():
    # the only exact 2-stage 1/4 train with counts 10-20 is 10/20 twice
    target = make_target(ratio="1/4")
    cons = {"stages": 2, "wheels": (10, 20), "pinions": (10, 20)}
    rep = search(target, make_constraints(**cons), top=3).results[0]
    assert rep.exact and all_counts(rep).count(10) == 2
    norep = search(target, make_constraints(**cons, no_repeat=True), top=3).results[0]
    assert not norep.exact
    assert len(set(all_counts(norep))) == 4


def test_no_repeat_can_leave_nothing():
    cons = make_constraints(stages=2, allowed="10,12", no_repeat=True)
    assert search(make_target(ratio="1/2"), cons).results == ()


def test_keep_direction_even_stages():
    target = make_target(cycle="synodic month")
    report = search(target, make_constraints(stages="1-3", direction="same"), top=5)
    assert {len(r.stages) for r in report.results} == {2}
    assert not any(r.reverses for r in report.results)
    report = search(target, make_constraints(stages="1-3", direction="reverse"), top=5)
    assert {len(r.stages) for r in report.results} <= {1, 3}
    with pytest.raises(SearchError, match="idler"):
        make_constraints(stages=1, direction="same")


# --- lunar-phase disc and convergents ---------------------------------------------------------


def test_moon_disc_59_teeth():
    # A 59-tooth moon disc advanced as 2/59 turn of phase a day is one day off after about
    # 2.6 years (common practice, no source).
    target = make_target(cycle="synodic month")
    assert target.is_lunar_phase
    best = search(target, make_constraints(stages=1, wheels=(59, 59), pinions=(1, 4)),
                  top=1).results[0]
    assert best.ratio == Fraction(2, 59)
    expected_years = 1 / (SYNODIC_DAYS / 29.5 - 1) / YEAR_DAYS
    assert best.one_day_off_years == pytest.approx(expected_years, rel=1e-4)
    assert best.one_day_off_years == pytest.approx(2.6, abs=0.05)
    assert best.period_error_ppm == pytest.approx((29.5 / SYNODIC_DAYS - 1) * 1e6, rel=1e-4)
    # drift: error x 360 deg x turns per century
    turns_per_century = 36525 / SYNODIC_DAYS
    assert best.drift_deg_per_century == pytest.approx(
        (SYNODIC_DAYS / 29.5 - 1) * 360 * turns_per_century, rel=1e-4)


def test_convergents_of_synodic_month():
    # 29, 30, 59/2, 443/15, 502/17 ... are convergents of the month in days (from memory)
    target = make_target(cycle="synodic month")
    convs = convergents(target, make_constraints(stages="1-3"))
    periods = [c.period_days for c in convs]
    assert periods[:6] == [29, 30, Fraction(59, 2), Fraction(443, 15), Fraction(502, 17),
                           Fraction(1447, 49)]
    by_period = {c.period_days: c for c in convs}
    assert by_period[Fraction(59, 2)].admitted
    assert by_period[Fraction(59, 2)].train.ratio == Fraction(2, 59)
    assert not by_period[Fraction(443, 15)].admitted  # 443 is prime, above 150
    assert "443" in by_period[Fraction(443, 15)].reason
    errs = [abs(c.period_error_ppm) for c in convs]
    assert errs[2] > errs[3] > errs[4]  # convergents close in on the target


def test_convergents_of_a_decimal_period_match_sympy():
    target = make_target(period="29.530588853")
    got = [c.period_days for c in convergents(target, make_constraints(stages=2))]
    x = sympy.Rational(29530588853, 10**9)
    want = list(sympy.continued_fraction_convergents(sympy.continued_fraction_iterator(x)))
    assert got == [Fraction(int(w.p), int(w.q)) for w in want[:len(got)]]


# --- fragment ---------------------------------------------------------------------------------


@pytest.mark.parametrize("ratio", ["19/235", "235/19"])
def test_fragment_is_valid_toml(ratio):
    target = make_target(ratio=ratio)
    best = search(target, make_constraints(stages=3), top=1).results[0]
    text = emit_fragment(best, target, prefix="lunar")
    doc = tomllib.loads(text)
    arbors, meshes = doc["arbors"], doc["meshes"]
    assert list(arbors) == ["lunar_crank", "lunar_a1", "lunar_a2", "lunar_out"]
    assert len(meshes) == 3
    teeth = {w: t for a in arbors.values() for w, t in a["wheels"].items()}
    r = Fraction(1)
    for m in meshes:
        drv, dvn = m["wheels"]
        r *= Fraction(teeth[drv], teeth[dvn])
    assert r == Fraction(ratio)
    assert text.startswith("#") and ratio in text


def test_fragment_suggests_a_pointer_for_a_cycle():
    target = make_target(cycle="synodic month")
    best = search(target, make_constraints(stages=1), top=1).results[0]
    text = emit_fragment(best, target, prefix="moon")
    uncommented = "\n".join(line[2:] if line.startswith("# ") and "=" in line or
                            line.startswith("# [") else line for line in text.splitlines())
    doc = tomllib.loads(uncommented)
    pointer = doc["pointers"]["moon_phase"]
    assert pointer["shows"] == "phase" and pointer["arbor"] == "moon_out"
    assert pointer["reversed"] is True  # one stage turns the output against the crank


@pytest.mark.parametrize(("cycle", "crank_days"), [
    ("synodic month", 1), ("tropical year", 1), ("sidereal month", 1),
    ("venus tropical", YEAR_DAYS), ("mars sidereal", YEAR_DAYS), ("jupiter tropical", YEAR_DAYS),
])
def test_suggested_pointer_is_judged_against_the_period_searched(cycle, crank_days):
    """The pointer the fragment suggests, uncommented as it says, is one a train file may hold
    (shows a planet with seen_from, never a table's row key) and the ratio report judges it
    against the very period that was searched (a sidereal period on a star dial)."""
    from engine.loader import parse_train
    from engine.ratios import pointer_ratios

    target = make_target(cycle=cycle, crank_days=crank_days)
    best = search(target, make_constraints(stages=2), top=1).results[0]
    text = emit_fragment(best, target)
    uncommented = "\n".join(line[2:] if line.startswith("# ") and "=" in line or
                            line.startswith("# [") else line for line in text.splitlines())
    doc = tomllib.loads(uncommented)
    (name, pointer), = doc["pointers"].items()
    assert "_from_sun" not in pointer["shows"], pointer
    head = (f'[crank]\narbor = "search_crank"\ndays_per_turn = "{Fraction(crank_days)}"\n'
            '[epoch]\ndate = "2026-01-01"\n')
    train = parse_train(head + uncommented, "fragment.toml")
    row, = pointer_ratios(train)
    assert row.pointer == name and row.target_key == target.cycle.key, (row.target_key, text)
    assert abs(row.period_error_ppm - best.period_error_ppm) < 1e-6


def test_fragment_rejects_bad_prefix():
    best = search(make_target(ratio="1/2"), make_constraints(stages=1), top=1).results[0]
    with pytest.raises(SearchError, match="prefix"):
        emit_fragment(best, prefix="a b")


# --- errors -----------------------------------------------------------------------------------


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"period": "0"}, "must be positive"),
    ({"period": "-29.5"}, "must be positive"),
    ({"period": 0.0}, "must be positive"),
    ({"period": "abc"}, "got 'abc'"),
    ({"period": "1/0"}, "divides by zero"),
    ({"period": "__import__('os')"}, "expected a number or a fraction"),
    ({"ratio": "3/-4"}, "expected a number or a fraction"),
    ({"period": float("nan")}, "expected a finite number"),
    ({"cycle": "blue moon"}, "known periods: tropical year"),
    ({}, "exactly one target"),
    ({"period": "29.5", "ratio": "1/2"}, "exactly one target"),
    ({"period": "29.5", "crank_days": "0"}, "crank days per turn: must be positive"),
])
def test_bad_targets(kwargs, message):
    with pytest.raises(SearchError, match=message.replace("(", r"\(").replace(")", r"\)")):
        make_target(**kwargs)


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"wheels": "150-8"}, "wheels: range 150-8 is empty"),
    ({"pinions": (0, 10)}, "pinions: tooth counts start at 1"),
    ({"wheels": "lots"}, "wheels: cannot read 'lots'"),
    ({"stages": 5}, "stages: 5 is outside 1-4"),
    ({"stages": "3-1"}, "stages: range 3-1 is empty"),
    ({"allowed": "59,61", "max_prime": 7}, "free of primes above 7"),
    ({"allowed": "200-210"}, "no allowed tooth count lies in 8-150"),
    ({"allowed": "12,x"}, "cannot read 'x'"),
    ({"allowed": " "}, "the list is empty"),
    ({"max_prime": 1}, "at least 2"),
    ({"stages": 3, "direction": "same"}, "even number of stages"),
    ({"stages": 2, "direction": "reverse"}, "odd number of stages"),
    ({"stages": 4, "wheels": (2, 2000)}, "narrow the range"),
    ({"stages": 4, "wheels": (2, 200), "pinions": (2, 200)}, "at most 3 stages"),
])
def test_impossible_constraints(kwargs, message):
    with pytest.raises(SearchError, match=message):
        cons = make_constraints(**kwargs)
        search(make_target(ratio="1/3"), cons)


def test_targets_read_fractions_exactly_and_refuse_non_positive():
    assert make_target(period="6940/235").ratio == Fraction(235, 6940)
    assert make_target(period=" 29.530588853 ").ratio == Fraction(10**9, 29530588853)
    assert make_target(ratio="1.5e1/3").ratio == 5
    assert make_target(ratio=Fraction(19, 235), crank_days=Fraction(1, 2)).ratio == Fraction(
        19, 235)
    for bad in ("0", "-1/3", "1/0", "2**10", "1e99999999"):
        with pytest.raises(SearchError, match="^ratio: "):
            make_target(ratio=bad)


# --- command line -----------------------------------------------------------------------------


def test_cli_error_one_line(capsys):
    assert main(["search", "--cycle", "blue moon"]) == 2  # an option value: usage error
    err = capsys.readouterr().err.strip()
    assert err.startswith("wheelwork search: usage error: unknown period") and "\n" not in err
    assert "did you mean" not in err  # nothing near 'blue moon'


@pytest.mark.parametrize("typed,meant", [("sarros", "saros"), ("synodic mnth", "synodic month"),
                                         ("mars sidreal", "mars sidereal")])
def test_a_mistyped_cycle_is_answered_with_the_nearest(typed, meant, capsys):
    # as a mistyped demo, wheel or command name is: the nearest name the search reads
    assert main(["search", "--cycle", typed]) == 2
    err = capsys.readouterr().err
    assert f"unknown period '{typed}' (did you mean '{meant}'?); known periods:" in err
    assert err.count("\n") == 1


@pytest.mark.parametrize("typed, names", [
    ("synodic", ["'synodic month'", "'venus synodic period'"]),
    ("sidereal", ["'sidereal year'", "'sidereal month'", "'mars sidereal period'"]),
    ("mars", ["'mars sidereal period'", "'mars synodic period'"]),
])
def test_one_word_of_a_name_is_answered_with_the_names_holding_it(typed, names, capsys):
    """A new user types the word they know ('synodic'): that was answered 'unknown period'
    and forty names, or with one near name ('sidereal year') where the month was as likely."""
    assert main(["search", "--cycle", typed]) == 2
    err = capsys.readouterr().err
    assert f"unknown period '{typed}' (the periods named with that word: " in err
    assert "did you mean" not in err and err.count("\n") == 1
    for name in names:
        assert name in err.split("; known periods")[0], err


@pytest.mark.parametrize("typed, body, names, not_names", [
    ("moon", "Moon", ["'synodic month'", "'draconic month'"], ["year"]),
    ("Sun", "Sun", ["'tropical year'", "'anomalistic year'"], ["month"]),
])
def test_a_body_for_a_period_is_answered_with_its_periods(typed, body, names, not_names,
                                                          capsys):
    """'--cycle moon' was answered with forty names on one line and no pointer: a body is
    answered with its own periods' names, in the one line."""
    assert main(["search", "--cycle", typed]) == 2
    err = capsys.readouterr().err
    assert f"unknown period '{typed}' (a body, not a period; the {body}'s: " in err
    hint = err.split("; known periods")[0]
    assert all(n in hint for n in names), err
    assert not any(w in hint.split("the ")[-1] for w in not_names), err
    assert err.count("\n") == 1


def test_a_lunar_month_is_the_synodic_month():
    # as calendars use the words: the month of the phases (common practice, no source)
    from engine.periods import find_period

    assert find_period("lunar month") is find_period("synodic month")


def test_cli_table(capsys):
    assert main(["search", "--cycle", "synodic month", "--stages", "1", "--pinions", "1-4",
                 "--wheels", "59"]) == 0
    out = capsys.readouterr().out
    assert "2/59" in out and "convergents" in out


def test_cli_nothing_found(capsys):
    assert main(["search", "--ratio", "5/6", "--stages", "2", "--allowed", "10,12",
                 "--no-repeat"]) == 0
    assert "no train within these bounds" in capsys.readouterr().out


def test_cli_json(capsys):
    assert main(["search", "--ratio", "19/235", "--stages", "2", "--top", "3", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["results"][0]["ratio"] == "19/235" and data["results"][0]["exact"]
    assert data["results"][0]["one_day_off_years"] is None
    assert data["target"]["ratio"] == "19/235"
    assert len(data["results"]) == 3 and data["convergents"]


def test_cli_emit_refuses_overwrite(tmp_path, capsys):
    path = tmp_path / "frag.toml"
    args = ["search", "--ratio", "19/235", "--stages", "2", "--emit", str(path)]
    assert main(args) == 0
    assert "wrote" in capsys.readouterr().out and str(path) in path.as_posix()
    first = path.read_text()
    tomllib.loads(first)
    assert main([*args, "--pick", "2"]) == 1
    assert "use --force" in capsys.readouterr().err
    assert path.read_text() == first
    assert main([*args, "--pick", "2", "--force"]) == 0
    assert path.read_text() != first
    # more than --top asks for is an option out of range, refused before the search (exit 2)
    assert main([*args, "--pick", "99", "--force"]) == 2
    err = capsys.readouterr().err
    assert "--pick" in err and "--top" in err and "usage error" in err
    # within --top but past the trains the bounds admit: found while working (exit 1)
    few = ["search", "--ratio", "1/2", "--stages", "1", "--exact-only", "--wheels", "8-20",
           "--pinions", "8-20", "--emit", str(path)]  # 8/16, 9/18 and 10/20 only
    assert main([*few, "--pick", "5", "--force"]) == 1
    assert "--pick" in capsys.readouterr().err
    assert path.read_text() != first


def test_emitted_fragment_says_day_or_days_per_crank_turn(tmp_path):
    one, two = tmp_path / "one.toml", tmp_path / "two.toml"
    assert main(["search", "--ratio", "19/235", "--stages", "2", "--emit", str(one)]) == 0
    assert "(crank 1 day per turn)" in one.read_text()
    assert main(["search", "--ratio", "19/235", "--stages", "2", "--crank-days", "7",
                 "--emit", str(two)]) == 0
    assert "(crank 7 days per turn)" in two.read_text()


def test_cli_emit_checks_and_far_off_note(tmp_path, capsys):
    from engine.cli import main

    assert main(["search", "--period", "29.530589", "--pick", "2"]) == 2
    assert "give --emit FILE too" in capsys.readouterr().err
    assert main(["search", "--period", "29.530589", "--emit", str(tmp_path)]) == 1
    assert "is a folder" in capsys.readouterr().err
    assert main(["search", "--period", "29.530589", "--emit",
                 str(tmp_path / "no" / "x.toml")]) == 1
    assert "does not exist" in capsys.readouterr().err
    # one stage of at most 150 teeth cannot come near a 29.5-day period from a daily crank:
    # refused up front, saying what would work
    assert main(["search", "--period", "29.530589", "--stages", "1", "--top", "1"]) == 2
    assert "search --stages 2" in capsys.readouterr().err
    # within reach, but the counts allowed leave a gap: the closest is far off, and said so
    assert main(["search", "--ratio", "0.7", "--stages", "1", "--allowed", "10,20",
                 "--top", "1"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "closest train within these bounds is 40% off" in out


def test_cycle_target_is_the_published_rate_as_a_decimal():
    from engine.search import make_target

    t = make_target(cycle="synodic month")
    assert t.ratio == Fraction(4452671114034, 10**7) / (360 * 36525)


def test_period_relation_is_an_exact_target():
    """Venus: 5 synodic periods in 8 years (standard history of astronomy, from memory): on a
    crank turning once in a Julian year the relation is exactly 5/8, and a 10→16 stage cuts it."""
    target = make_target(cycle="venus 5 in 8", crank_days="365.25")
    assert target.ratio == Fraction(5, 8)
    report = search(target, make_constraints(stages=1, wheels="8-40", pinions="8-40"), top=1)
    assert report.results[0].ratio == Fraction(5, 8) and report.results[0].exact


def test_planet_period_targets_by_name():
    """The Mars synodic period target is the JPL-rate period (779.936 d; handbooks, from memory,
    print 779.94 d)."""
    target = make_target(cycle="Mars synodic period")
    assert target.period_days == pytest.approx(779.94, rel=1e-5)


def test_search_reports_a_relations_error(capsys):
    # 399 days from a daily crank needs three stages of 8-150 teeth
    assert main(["search", "--cycle", "jupiter 76 in 83", "--stages", "3", "--top", "1",
                 "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["target"]["approximates"] == "jupiter_synodic"
    # 83 Julian years / 76 against 1 / (1/P_jupiter - 1/P_earth) from the JPL rates
    assert out["target"]["relation_period_error_ppm"] == pytest.approx(23.4, abs=0.1)
    assert main(["search", "--cycle", "jupiter 76 in 83", "--stages", "3", "--top", "1"]) == 0
    assert "+23.39 ppm" in capsys.readouterr().out


@pytest.mark.parametrize("values, k, distinct", [
    (tuple(range(8, 30)), 1, False), (tuple(range(8, 30)), 2, False),
    (tuple(range(8, 30)), 3, True), (tuple(range(8, 24)), 4, False),
    (tuple(range(8, 24)), 4, True), ((9, 12, 20), 4, True),
    ((7000, 8000, 9000, 9999), 4, False),  # keys would overflow int64: the other path
])
def test_product_tables_equal_a_plain_enumeration(values, k, distinct):
    """The preallocated, sorted-in-place product table against itertools (common practice,
    no source: a multiset of k counts, each product once with its smallest sum)."""
    import itertools

    from engine.search import _products

    pick = itertools.combinations if distinct else itertools.combinations_with_replacement
    want: dict[int, int] = {}
    for combo in pick(values, k):
        p = math.prod(combo)
        want[p] = min(want.get(p, 10**9), sum(combo))
    _products.cache_clear()
    prods, sums = _products(values, k, distinct)
    assert prods.tolist() == sorted(want)
    assert sums.tolist() == [want[p] for p in sorted(want)]


@pytest.mark.parametrize("argv, words", [
    (["--period", "1e-30"], "from 0.000000001 to 1,000,000,000,000"),
    (["--period", "1e30"], "from 0.000000001 to 1,000,000,000,000"),
    (["--period", "1e400"], "from 0.000000001 to 1,000,000,000,000"),
    (["--ratio", "1e-19"], "from 0.000000001 to 1,000,000,000,000"),
    (["--crank-days", "1e300", "--period", "1"], "from 0.000000001 to 1,000,000,000,000"),
    (["--crank-days", "1/9000000", "--period", "1"], "[crank] days_per_turn takes"),
    (["--ratio", "1e12"], "out of reach"),
    (["--period", "1e7"], "--crank-days"),
    (["--period", "3000", "--stages", "1"], "search --stages 3"),
    # a year hand from a clock's 12-hour wheel, turning with it: four stages, not a faster
    # crank (the advice was '--crank-days 365.2', which a clock's hour wheel cannot take)
    (["--cycle", "tropical year", "--crank-days", "0.5", "--keep-direction"], "search --stages 4"),
    (["--cycle", "tropical year", "--crank-days", "0.5", "--reverse-direction", "--stages",
      "1"], "search --stages 3"),
    (["--ratio", "1/2", "--allowed", "10,12", "--stages", "2"], "out of reach"),
    (["--cycle", "synodic month", "--top", "5000"], "from 1 to 200"),
    (["--cycle", "synodic month", "--wheels", "8-20000"], "10,000"),
    (["--cycle", "synodic month", "--allowed", "1-100000000"], "10,000"),
    (["--cycle", "synodic month", "--wheels", "8-1000"], "at most 2 stages"),
    (["--cycle", "synodic month", "--stages", "4", "--wheels", "8-1000"], "sets of 4"),
    (["--cycle", "synodic month", "--stages", "2", "--wheels", "8-10000"], "at most 1 stage,"),
    (["--cycle", "synodic month", "--stages", "3", "--pinions", "8-1000"], "sets of 3"),
])
def test_cli_hopeless_or_unbounded_searches_refused_up_front(argv, words, capsys):
    """Every search option is bounded, and a target the bounds cannot come near is refused
    before any work with what would work: one line, exit 2, never a traceback or a hang."""
    assert main(["search", *argv]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "usage error" in err and words in err, err


def test_wide_tooth_ranges_are_judged_at_the_stages_asked(capsys):
    """993 counts give 993 sets of 1 and 493,521 of 2: well within what is searched, so
    --stages 1 and 2 with --wheels 8-1000 search (the range was judged at the default three
    stages, 163,684,465 sets, and refused); a 1-stage 1/365 year wheel of 730 teeth on a
    2-leaf pinion is found."""
    assert main(["search", "--ratio", "1/365", "--stages", "1", "--wheels", "8-1000",
                 "--pinions", "2-8", "--top", "1", "--json"]) == 0
    best = json.loads(capsys.readouterr().out)["results"][0]
    assert best["stages"] == [[2, 730]] and best["period_error_ppm"] == 0
    assert main(["search", "--cycle", "synodic month", "--stages", "2", "--pinions", "8-1000",
                 "--top", "1"]) == 0


def test_out_of_reach_with_no_repeat_gives_advice_that_can_work(capsys):
    """Three allowed counts with --no-repeat cannot fill the 4 stages (8 different counts)
    that would reach the synodic month: the refusal says so, where it said 'search --stages 4'."""
    assert main(["search", "--cycle", "synodic month", "--allowed", "10,20,30", "--no-repeat",
                 "--stages", "3"]) == 2
    err = capsys.readouterr().err
    assert "need 8 different counts" in err and "allow 3" in err and "--stages 4" not in err


def test_ppm_has_one_meaning_in_ratios_and_search(capsys):
    """The 2/59 moon disc: its period error against the synodic month is the same figure under
    the same key in both commands (period 29.5 days; mean synodic month 29.530588853 days,
    the period in engine/periods.py)."""
    assert main(["ratios", "moon_disc_59", "--json"]) == 0
    ratios = json.loads(capsys.readouterr().out)["pointers"][0]
    assert main(["search", "--cycle", "synodic month", "--stages", "1", "--pinions", "2-2",
                 "--wheels", "59-59", "--top", "1", "--json"]) == 0
    found = json.loads(capsys.readouterr().out)["results"][0]
    assert "error_ppm" not in found and "error_ppm" not in ratios
    want = (29.5 / 29.530588853 - 1) * 1e6  # about -1035.8
    assert found["period_error_ppm"] == pytest.approx(want, rel=1e-6)
    assert ratios["period_error_ppm"] == pytest.approx(want, rel=1e-4)


def test_cli_years_to_a_day_off_read_as_years(capsys, monkeypatch):
    """The '1 day off' column gives years with their unit, in plain figures like the ratio
    report's (not 3.09e+03), so a maker can compare it with a lifetime."""
    from engine.search import make_constraints, make_target, search

    monkeypatch.setenv("COLUMNS", "200")
    target = make_target(cycle="draconic month", crank_days=1)
    best = search(target, make_constraints(stages=2), top=3).results[0]
    assert best.one_day_off_years > 1000
    assert main(["search", "--cycle", "draconic month", "--stages", "2", "--top", "3"]) == 0
    out = capsys.readouterr().out
    assert f"{best.one_day_off_years:,.0f} y" in out and "e+0" not in out


def test_emitted_fragment_comments_are_plain_figures(tmp_path, capsys):
    # the best 4-stage synodic month train is 0.0000018 ppm off: the fragment's comment wrote
    # '+1.818e-06 ppm, -8.097e-07 deg per century'; a whole ratio was '144/1'
    out = tmp_path / "f.toml"
    assert main(["search", "--cycle", "synodic month", "--stages", "4", "--top", "1",
                 "--emit", str(out)]) == 0
    text = out.read_text()
    assert "e-0" not in text and "period error +0.000001818 ppm" in text
    assert main(["search", "--ratio", "144", "--stages", "2", "--top", "1",
                 "--emit", str(tmp_path / "g.toml")]) == 0
    assert "ratio 144 output turns" in (tmp_path / "g.toml").read_text()
    capsys.readouterr()
