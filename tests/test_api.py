"""The public face: every name in __all__ exists, the engine imports no UI, and the examples
in docs/api.md run."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

import engine.api as api

ROOT = Path(__file__).resolve().parent.parent


def test_all_names_exist():
    for name in api.__all__:
        assert hasattr(api, name), name


def _imports(tree: ast.AST):
    """Every module an import statement names, at any depth (inside functions, ``if``,
    ``try``...), as (line, module); relative imports as written (``..x``)."""
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                yield node.lineno, a.name
        elif isinstance(node, ast.ImportFrom):
            yield node.lineno, "." * node.level + (node.module or "")
        elif (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute | ast.Name)
              and getattr(node.func, "attr", getattr(node.func, "id", "")) in (
                  "import_module", "__import__")
              and node.args and isinstance(node.args[0], ast.Constant)):
            yield node.lineno, str(node.args[0].value)


def _is_ui(module: str) -> bool:
    top = module.split(".")[0]
    return top in ("tui", "textual", "textual_plot", "textual_hires_canvas")


def test_engine_has_no_ui_imports():
    """The engine never imports the interface: every import in every engine module, indented
    (lazy, in a function) or not, and importlib calls with a literal name."""
    for path in (ROOT / "engine").rglob("*.py"):
        for line, m in _imports(ast.parse(path.read_text())):
            assert not _is_ui(m), f"{path}:{line}: imports {m}"


def test_the_layering_check_sees_indented_imports():
    code = ("def f():\n    if True:\n        from tui.app import make_app\n"
            "def g():\n    import importlib\n    importlib.import_module('tui.command')\n")
    found = [m for _, m in _imports(ast.parse(code)) if _is_ui(m)]
    assert found == ["tui.app", "tui.command"]


def test_only_the_sky_module_imports_skyfield():
    for path in (ROOT / "engine").rglob("*.py"):
        if path.name == "sky.py":
            continue
        assert not re.search(r"^\s*(from|import) skyfield", path.read_text(), re.M), path


def test_every_exception_class_lives_in_errors():
    """All of the engine's exception classes, faults and control-flow signals alike, are
    defined in engine/errors.py (a class deriving from another exception counts too)."""
    defined = {}
    for path in (ROOT / "engine").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.ClassDef):
                defined[node.name] = (path.relative_to(ROOT).as_posix(), node)
    exceptions = {"Exception", "BaseException"}
    grew = True
    while grew:  # classes deriving from an exception class are exception classes
        bases = {n: {ast.unparse(b).split(".")[-1] for b in node.bases}
                 for n, (_, node) in defined.items()}
        new = {n for n, b in bases.items() if b & exceptions} - exceptions
        grew = bool(new)
        exceptions |= new
    elsewhere = sorted(f"{defined[n][0]}: {n}" for n in exceptions
                       if n in defined and defined[n][0] != "engine/errors.py")
    assert not elsewhere
    assert {"WheelworkError", "DriftCancelled", "ParserExit", "Terminated"} <= exceptions


EXAMPLES = re.findall(r"```python\n(.*?)```", (ROOT / "docs" / "api.md").read_text(), re.S)


# What the page shows an example printing (in its comments), each checked against what the
# example prints when run, so the figures on the page cannot drift from the engine's unseen.
SHOWN = (
    "Mechanism('Tide office dial', 14 arbors, pointers: ",
    "SkyState(equinox, 1 date(s): 2040-06-21 ",
    "DriftResult(366 dates every 1 d, equinox frame, ",
    "8.0 6.875 0.7854", "1.38", "1.453", "1.785",
    "drive 56.1922 26.6435", "middle 61.6 10.0", "hand 40.0 10.0",
    "0.1731 mesh 2 (middle_pinion–hand_wheel)", "0.092 0.096",
    "2024-03-25 07:13 UT (Gregorian) lunar penumbral 1.0603",
    "2024-04-08 18:17 UT (Gregorian) solar total 0.3431",
    "2024-09-18 02:44 UT (Gregorian) lunar partial -0.9786",
    "2024-10-02 18:45 UT (Gregorian) solar annular -0.3509",
    "{'hits': 356, 'misses': 8, 'false_alarms': 11}",
    "583.92",
    "-0584-05-13 15:05 UT (Julian) = 585 BC lunar penumbral 1.0776",
    "-0584-05-28 14:25 UT (Julian) = 585 BC solar total 0.3203",
    "ΔT 18213 s ± 462 s", "-0584-05-28 00:00 UT (Julian) = 585 BC",
)


def test_every_shown_output_is_on_the_page():
    for text in SHOWN:
        assert sum(text in code for code in EXAMPLES) == 1, text


@pytest.mark.parametrize("code", EXAMPLES, ids=[f"example{i}" for i in range(len(EXAMPLES))])
def test_docs_examples_run(code, monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    exec(compile(code, "docs/api.md", "exec"), {"__name__": "docs_example"})
    out = capsys.readouterr().out
    assert out or "assert" in code
    for text in SHOWN:
        if text in code:
            assert text in out, f"docs/api.md shows {text!r}; the example printed:\n{out}"


def test_format_doc_example_is_a_working_train():
    from engine.kinematics import solve
    from engine.loader import parse_train
    from engine.readout import backward_warnings

    text = (ROOT / "docs" / "train-format.md").read_text()
    block = re.search(r"```toml\n(.*?)```", text, re.S).group(1)
    train = parse_train(block, "docs/train-format.md")
    kin = solve(train)
    assert backward_warnings(train, kin) == []


def test_format_doc_moon_disc_and_tide_hand_read_as_it_says():
    """The moon disc and tide hand of docs/train-format.md: both show the synodic month in
    29.5 days (the disc's 118 teeth pushed twice a day), 1,036 ppm short, a day out in
    about 2.6 years, neither backwards (the page says so)."""
    from engine.loader import parse_train
    from engine.mechanism import build
    from engine.ratios import pointer_ratios

    text = (ROOT / "docs" / "train-format.md").read_text()
    part = text[text.index("## A moon disc and a tide hand"):]
    block = re.search(r"```toml\n(.*?)```", part, re.S).group(1)
    head = '[train]\nname = "doc tide"\n[epoch]\ndate = "2026-12-03"\nset = "mean"\n'
    mech = build(parse_train(head + block, "docs/train-format.md"))
    assert not mech.warnings  # neither runs backwards
    rows = {r.pointer: r for r in pointer_ratios(mech)}
    assert set(rows) == {"moon_phase", "high_water"}
    for r in rows.values():
        # 59 days a disc turn of two moons; 4 tide turns a disc turn of half a lunation each
        assert r.period_days == 29.5 and r.target_key == "synodic_month"
        assert round(r.period_error_ppm) == -1036 and round(r.years_to_one_day, 1) == 2.6
    assert "1,036 ppm short" in text and "about 2.6 years" in text


def test_returned_types_are_importable_from_the_api():
    """What the front door's functions return (and the items in it) is named in engine.api."""
    import engine.api as api
    from engine.sky import Sky

    mech = api.open_train(ROOT / "engine" / "trains" / "tide_office.toml")
    sky = Sky()
    got = [mech, mech.train, mech.kin, mech.readout, sky.at(2461000.5)]
    got += [*mech.train.arbors.values(), *mech.train.wheels.values(), *mech.train.meshes,
            *mech.train.pin_slots.values(), *mech.train.pointers.values(),
            mech.train.crank, mech.train.epoch, *mech.readout.motions.values()]
    rows = api.pointer_ratios(mech)
    got += [*rows, *rows[0].stages, *rows[0].teeth]
    report = api.check(mech)
    got += [report, *report.findings]
    got += list(api.pointer_errors(mech, sky, "2030-01-01").values())
    res = api.drift_series(mech, sky, api.DriftRun("2030-01-01", "2030-03-01", "1d"))
    got += [res, *res.summaries.values()]
    missing = {type(o).__name__ for o in got if type(o).__name__ not in api.__all__}
    assert not missing, missing


def test_same_first_argument_and_dates_as_text():
    import engine.api as api
    from engine.sky import Sky

    mech = api.open_train(ROOT / "engine" / "trains" / "nineteen_year_drum.toml")
    assert api.pointer_ratios(mech) == api.pointer_ratios(mech.train, mech.kin)
    assert api.check(mech) == api.check(mech.train, mech.kin)
    sky = Sky()
    jd = api.parse_date("2030-05-01 06:00")
    assert float(sky.at("2030-05-01 06:00").sun_lon_deg) == float(sky.at(jd).sun_lon_deg)
    both = sky.at(["2030-05-01 06:00", jd])
    assert both.sun_lon_deg[0] == both.sun_lon_deg[1]
    a = api.drift_series(mech, sky, api.DriftRun("2030-01-01", "2031-01-01", "1d"))
    b = api.drift_series(mech, sky, api.DriftRun(api.parse_date("2030-01-01"),
                                                 api.parse_date("2031-01-01"), 1.0))
    assert a.summaries_dict() == b.summaries_dict()
    with pytest.raises(TypeError, match="DriftRun"):  # the old form says what it wants now
        api.drift_series(mech, sky, "2030-01-01")
    for bad in (object(), {"jd": 1}, "next tuesday", None, [None, "2030-01-01"]):
        with pytest.raises(api.DateError) as e:
            sky.at(bad)
        assert "\n" not in str(e.value) and ("Julian Date" in str(e.value)
                                             or "2025-03-20" in str(e.value))
    with pytest.raises(TypeError, match="Mechanism"):
        api.pointer_ratios("engine/trains/tide_office.toml")


def test_eclipse_calls_take_dates_as_text():
    """The eclipse functions take date text as the other reports do (a notebook's first try)."""
    import engine.api as api
    from engine.sky import Sky

    sky = Sky()
    a, b = api.parse_date("2024-01-01"), api.parse_date("2025-01-01")
    by_jd = [(e.kind, e.type, e.jd_ut) for e in api.real_eclipses(sky, a, b)]
    by_text = [(e.kind, e.type, e.jd_ut) for e in api.real_eclipses(sky, "2024-01-01",
                                                                   "2025-01-01")]
    assert by_text == by_jd and len(by_jd) == 4
    assert len(api.syzygies(sky, "2024-01-01", "2024-03-01")) == len(api.syzygies(
        sky, a, api.parse_date("2024-03-01")))
    board = api.open_train("engine/trains/eclipse_board.toml", sky)
    c = api.check_eclipses(board, sky, "1950-01-01", "1960-01-01")
    assert c.counts() == api.check_eclipses(board, sky, api.parse_date("1950-01-01"),
                                            api.parse_date("1960-01-01")).counts()
    ro = board.readout
    assert float(ro.turns_at("1951-01-01").frac) == float(ro.turns_at(
        api.parse_date("1951-01-01")).frac)


def test_short_reprs():
    import engine.api as api
    from engine.sky import Sky

    mech = api.open_train(ROOT / "engine" / "trains" / "tide_office.toml")
    sky = Sky()
    res = api.drift_series(mech, sky, api.DriftRun("2030-01-01", "2030-02-01", "1d"))
    for obj in (mech, mech.train, mech.kin, sky.at([2461000.5, 2461001.5]), res):
        text = repr(obj)
        assert "\n" not in text and len(text) < 200, text
        assert text.startswith(type(obj).__name__ + "(")


# --- errors from a script or notebook: one line, a WheelworkError, never a deep traceback ----

def _bad_calls():
    """(label, call) for api calls with a value a notebook user could plausibly get wrong."""
    tide = api.open_train("engine/trains/tide_office.toml")
    disc = api.load_train("tests/trains/workshop_small.toml")
    disc_kin = api.solve(disc)
    return [
        ("find_period", lambda: api.find_period("vulcan synodic")),
        ("relation_error_ppm", lambda: api.relation_error_ppm("venus_8_in_5")),
        ("relation_error_ppm of a mean period", lambda: api.relation_error_ppm("venus_synodic")),
        ("kind_key", lambda: api.kind_key("vulcan")),
        ("Kinematics.rate", lambda: tide.kin.rate("vulcan")),
        ("Readout.read_deg of text", lambda: tide.readout.read_deg("ten")),
        ("format_jd of text", lambda: api.format_jd("tomorrow")),
        ("format_jd of True", lambda: api.format_jd(True)),
        ("Readout.reset_to", lambda: tide.readout.reset_to(0, {"vulcan": 1.0})),
        ("involute_wheel 0 teeth", lambda: api.involute_wheel(0, 0.5)),
        ("involute_wheel module < 0", lambda: api.involute_wheel(30, -1)),
        ("involute_ring module 0", lambda: api.involute_ring(60, 0)),
        ("cycloidal_wheel 0 leaves", lambda: api.cycloidal_wheel(64, 1.0, 0)),
        ("cycloidal_wheel 2.5 teeth", lambda: api.cycloidal_wheel(2.5, 1.0, 8)),
        ("cycloidal_pinion 0 leaves", lambda: api.cycloidal_pinion(0, 1.0, 1.4)),
        ("Tolerances.of negative", lambda: api.Tolerances.of(disc, eccentricity_mm=-1)),
        ("play years", lambda: api.play(disc, disc_kin, years=-1, builds=10, samples=8)),
        ("play builds", lambda: api.play(disc, disc_kin, years=1, builds=0, samples=8)),
        ("check_eclipses method", lambda: api.check_eclipses(
            tide, api.Sky(), api.parse_date("1950-01-01"), api.parse_date("1951-01-01"),
            method="saros")),
        ("real_eclipses of None", lambda: api.real_eclipses(api.Sky(), None, 2451545.0)),
        ("real_eclipses of a word", lambda: api.real_eclipses(api.Sky(), "soon", 2451545.0)),
        ("check_eclipses of a list", lambda: api.check_eclipses(
            tide, api.Sky(), [2451545.0, 2451546.0], 2451600.0)),
        ("Readout.turns_at of a word", lambda: tide.readout.turns_at("soon")),
        ("Readout.read_deg of NaN", lambda: tide.readout.read_deg(float("nan"))),
        ("Readout.read_deg of infinity", lambda: tide.readout.read_deg([0.0, float("inf")])),
        ("Readout.read_deg of text of a number", lambda: tide.readout.read_deg("10")),
        ("Readout.reset_to NaN", lambda: tide.readout.reset_to(0, {"moon": float("nan")})),
        ("Readout.reset_to text", lambda: tide.readout.reset_to(0, {"moon": "12"})),
        ("demo_path of no demo", lambda: api.demo_path("planet_dail")),
        ("mean_elements of no element", lambda: api.mean_elements(2451545.0, keys=["vulcan"])),
        ("mean_elements of date text", lambda: api.mean_elements("2030-01-01")),
        ("pin_slot_lead_turns follows", lambda: api.pin_slot_lead_turns(
            0.5, 7.23, 0.0, arm_turns=0.0, arm=10.0, follows="carier")),
        ("pin_slot_lead_turns arm < 0", lambda: api.pin_slot_lead_turns(
            0.5, 7.23, 0.0, arm_turns=0.0, arm=-10.0, follows="carrier")),
        ("SkyState.kind of a planet not asked", lambda: api.Sky().at(2461041.5).kind("mars")),
        ("planet_lon_deg of a planet not asked",
         lambda: api.Sky().at(2461041.5, planets=("venus",)).planet_lon_deg["mars"]),
        ("find_period of None", lambda: api.find_period(None)),
        ("a kind's period on no frame", lambda: api.KINDS["venus"].mean_period("star")),
        ("kind_key seen from the Moon", lambda: api.kind_key("venus", "moon")),
        ("the Earth seen from the Earth",
         lambda: api.Sky().at(2461041.5, planets=("earth",)).planet_lon_deg["earth"]),
        ("drift threshold of no pointer", lambda: api.drift_series(
            tide, api.Sky(), api.DriftRun("2030-01-01", "2030-02-01", "1d",
                                          threshold_deg={"vulcan": 1.0}))),
    ]


def test_a_sky_or_mechanism_of_the_wrong_type_is_named_in_one_line(monkeypatch):
    """A notebook's likely slips — the ephemeris's name for the sky, None, a path for the
    mechanism — answered with what is wanted, not an AttributeError from deep inside."""
    monkeypatch.chdir(ROOT)
    tide = api.open_train("engine/trains/tide_office.toml")
    sky = api.Sky()
    run = api.DriftRun("2030-01-01", "2030-02-01", "1d")
    calls = [
        ("open_train", lambda: api.open_train("engine/trains/tide_office.toml", "de421")),
        ("drift_series", lambda: api.drift_series(tide, None, run)),
        ("drift_series", lambda: api.drift_series("engine/trains/tide_office.toml", sky, run)),
        ("pointer_errors", lambda: api.pointer_errors(tide, "de421", 2461041.5)),
        ("real_eclipses", lambda: api.real_eclipses("de421", "2024-01-01", "2025-01-01")),
        ("check_eclipses", lambda: api.check_eclipses(tide, None, "2024-01-01", "2025-01-01")),
        ("check_eclipses", lambda: api.check_eclipses("engine/trains/tide_office.toml", sky,
                                                      "2024-01-01", "2025-01-01")),
    ]
    for label, call in calls:
        with pytest.raises(TypeError) as info:
            call()
        text = str(info.value)
        assert "\n" not in text and text.startswith(label) and (
            "Sky(" in text or "open_train" in text), (label, text)
    with pytest.raises(api.WheelworkError, match="threshold"):
        api.drift_series(tide, sky, api.DriftRun("2030-01-01", "2030-02-01", "1d",
                                                 threshold_deg="5"))
    with pytest.raises(api.TrainError):
        api.open_train(123)


def test_bad_api_calls_raise_one_line_wheelwork_errors(monkeypatch):
    monkeypatch.chdir(ROOT)
    for label, call in _bad_calls():
        with pytest.raises(api.WheelworkError) as info:
            call()
        text = str(info.value)
        assert text and "\n" not in text and not text.startswith(("'", '"')), (label, text)


def test_a_demos_name_given_for_a_file_says_how_to_open_the_demo(monkeypatch, tmp_path):
    """The commands take a demo's name for a train; from Python the name alone is no file,
    and the error says how to get the demo's file (which the api offers)."""
    monkeypatch.chdir(tmp_path)
    with pytest.raises(api.TrainError) as info:
        api.open_train("tide_office")
    assert "demo_path('tide_office')" in str(info.value)
    assert api.open_train(api.demo_path("tide_office")).train.name == "Tide office dial"
    assert "tide_office" in api.demo_names()
    with pytest.raises(api.TrainError) as info:  # not a demo: the plain message
        api.load_train("tide_offices.toml")
    assert str(info.value) == "tide_offices.toml: no such file"


def test_unknown_names_are_still_key_errors():
    """Code that looked a name up with ``except KeyError`` keeps working."""
    with pytest.raises(KeyError):
        api.find_period("vulcan synodic")
    with pytest.raises(KeyError):
        api.kind_key("vulcan")
    assert str(pytest.raises(KeyError, api.kind_key, "vulcan").value) == \
        "unknown pointer kind 'vulcan'"


def test_a_mistyped_demo_is_named_not_taken_for_the_default(monkeypatch):
    """open_train(None) opens the default train, so demo_path answering None for a mistyped
    name opened the tide office in place of the planet dial (common practice, no source)."""
    with pytest.raises(api.UnknownName, match="did you mean planet_dial"):
        api.demo_path("planet_dail")
    with pytest.raises(TypeError, match="demo_path"):
        api.demo_path(None)
    assert api.demo_path("planet_dial.toml") == api.demo_path("planet_dial")


def test_a_planet_not_asked_for_says_how_to_ask():
    """A state made without planets= holds none; asking one of it says so and how to ask
    (it said 'unknown pointer kind' for a known kind), and is still a KeyError."""
    sky = api.Sky()
    bare = sky.at(2461041.5)
    with pytest.raises(api.SkyError, match=r"planets=\('mars',\)") as info:
        bare.kind("mars")
    assert "unknown pointer kind" not in str(info.value)
    with pytest.raises(KeyError, match="planets asked for: venus"):
        sky.at(2461041.5, planets=("venus",)).planet_helio_lon_deg["earth"]
    with pytest.raises(api.SkyError, match="unknown pointer kind 'vulcan'"):
        bare.kind("vulcan")
    asked = sky.at([2461041.5, 2461042.5], planets=("mars",))
    assert asked.kind("mars").shape == (2,) and list(asked.planet_lon_deg) == ["mars"]


def test_planet_words_read_in_any_case_and_none_asked_is_none():
    """seen_from is read in any case, as a train file's words are (docs/train-format.md); a
    state asked for planets=None holds none, as the default (common practice, no source)."""
    assert api.kind_key("Venus", "Sun") == "venus_from_sun"
    state = api.Sky().at(2461041.5, planets=None)
    assert dict(state.planet_lon_deg) == {} and dict(state.planet_helio_lon_deg) == {}
