"""New tooth counts for one pointer's chain (engine.rechain): which meshes are searched, the
exact target, answers as the train reads them once put in, and the search's progress and
cancel hooks."""

import pytest

from engine.demos import demo_path
from engine.errors import SearchCancelled, SearchError
from engine.kinematics import solve
from engine.loader import load_train
from engine.mechanism import build
from engine.ratios import pointer_ratios
from engine.readout import pointer_linear
from engine.rechain import _with_teeth, chain_search, pointer_chain
from engine.search import make_constraints, make_target, search


@pytest.fixture(scope="module")
def tide():
    return build(load_train(demo_path("tide_office")), None)


def test_the_moon_chain_and_its_best_answer_is_the_demo_train(tide):
    chain = pointer_chain(tide, "moon")
    assert [(s.driver, s.driven) for s in chain.stages] == [
        ("day_moon_pinion", "moon_w1"), ("moon_p2", "moon_w2"), ("moon_p3", "moon_w3")]
    assert chain.whole and chain.own_count == 0 and chain.also_moves == ("phase",)
    # the demo file says its moon train, 9/26·15/34·29/121, was the search's first answer
    # for the tropical month with pinions of at least 9 leaves and wheels up to 133 teeth
    best = chain_search(chain, pinions="9-30", wheels="20-133", top=3)[0]
    assert best.stages_text() == "9/26 · 15/34 · 29/121"
    row = next(r for r in pointer_ratios(tide) if r.pointer == "moon")
    assert best.ratio == row.ratio
    assert best.period_error_ppm == pytest.approx(row.period_error_ppm, abs=1e-9)
    assert best.drift_deg_per_century == pytest.approx(row.drift_deg_per_century, abs=1e-9)


@pytest.mark.parametrize("pointer", ["moon", "phase", "perigee", "node"])
def test_every_answer_reads_as_listed_once_put_in(tide, pointer):
    """The pointer's ratio of each answer, worked out from the chain's affine form, is what
    the solver gives for the train with those teeth (the phase is read against the Sun, so
    the rest of the train adds a term there)."""
    chain = pointer_chain(tide, pointer)
    p = tide.train.pointers[pointer]
    for ans in chain_search(chain, pinions="8-30", wheels="20-140", top=5):
        kin = solve(_with_teeth(tide.train, ans.teeth))
        assert pointer_linear(kin, p).crank == ans.ratio
        # the turning sense is kept: the same meshes, only new teeth
        assert (ans.ratio > 0) == (pointer_linear(tide.kin, p).crank > 0)
        assert ans.ratio != chain.ideal or ans.period_error_ppm == 0


def test_own_meshes_by_default_and_what_cannot_be_searched(tide):
    perigee = pointer_chain(tide, "perigee")
    assert not perigee.whole and perigee.own_count == 2 and perigee.also_moves == ()
    with pytest.raises(SearchError, match="5 meshes to search, more than the 4"):
        pointer_chain(tide, "perigee", whole=True)
    planets = build(load_train(demo_path("planet_dial")), None)
    with pytest.raises(SearchError, match="no plain mesh on the frame"):
        pointer_chain(planets, "venus")
    with pytest.raises(SearchError, match="no such pointer"):
        pointer_chain(tide, "nowhere")
    with pytest.raises(SearchError, match="out of reach"):
        chain_search(pointer_chain(tide, "node"), pinions="8-10", wheels="11-12")


def test_forbidden_primes_and_max_error_bound_the_answers(tide):
    chain = pointer_chain(tide, "moon")
    answers = chain_search(chain, pinions="9-30", wheels="20-133", forbidden_primes=(29, 13),
                           max_error_ppm=1.0, top=20)
    assert answers
    for a in answers:
        assert all(n % 29 and n % 13 for n in a.teeth.values())
        assert abs(a.period_error_ppm) <= 1.0


def test_search_reports_progress_and_stops_when_asked():
    target = make_target(cycle="synodic month")
    cons = make_constraints(stages=(1, 2), wheels="20-100", pinions="8-20")
    seen: list[float] = []
    search(target, cons, progress=seen.append, with_convergents=False)
    assert seen == sorted(seen) and seen[0] == 0 and seen[-1] == 1 and len(seen) == 7
    asked = []

    def cancel():
        asked.append(1)
        return len(asked) > 2

    with pytest.raises(SearchCancelled):
        search(target, cons, cancel=cancel, with_convergents=False)



def test_the_ratio_now_is_the_pointers_ratio_with_the_trains_own_teeth(tide):
    for pointer in ("moon", "phase", "perigee", "node"):
        chain = pointer_chain(tide, pointer)
        assert chain.ratio_now == pointer_linear(tide.kin, tide.train.pointers[pointer]).crank
