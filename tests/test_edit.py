"""Editing a train on the bench (engine.edit): edits re-solve, bad edits change nothing,
undo/redo, the "differs from its file" flag, before/after ratio rows, and saving with the
file's comments and layout kept."""

import re
import shutil
from fractions import Fraction
from pathlib import Path

import pytest

from engine.demos import demo_path
from engine.edit import TrainEditor
from engine.errors import OutputError, TrainError
from engine.loader import load_train
from engine.mechanism import build


@pytest.fixture
def tide(tmp_path):
    path = tmp_path / "tide_office.toml"
    shutil.copy(demo_path("tide_office"), path)
    return path


def rates(mech):
    return dict(mech.kin.rates)


def test_teeth_edit_resolves_at_once(tide, sky):
    ed = TrainEditor.open(tide, sky)
    old = rates(ed.mech)
    ed.set_teeth("sun_w1", "60")
    assert ed.mech.train.wheels["sun_w1"].teeth == 60
    # the sun chain is (10/59)(11/128)(25/133) turn/day in the file's comment; now 10/60
    ratio = Fraction(old["sun"]) * Fraction(59, 60)
    assert ed.mech.kin.rates["sun"] == ratio
    assert ed.mech.kin.rates["moon_first"] == old["moon_first"]  # another chain: untouched
    assert ed.differs and ed.can_undo and not ed.can_redo


@pytest.mark.parametrize("wheel, value, words", [
    ("sun_w1", "0", "more than zero"),
    ("sun_w1", "sixty", "whole number"),
    ("sun_w1", "12.5", "whole number"),
    ("sun_w1", "1e3", "whole number, got '1e3'"),  # as typed, not 'got 1000.0' (reads as whole)
    ("sun_w1", "1e400", "whole number, got '1e400'"),  # not 'got inf'
    ("sun_w1", "99999999", "10,000"),
    ("nowhere", "12", "no such wheel"),
])
def test_bad_teeth_leave_the_train_as_it_was(tide, sky, wheel, value, words):
    ed = TrainEditor.open(tide, sky)
    before_text, before_mech = ed.text, ed.mech
    with pytest.raises(TrainError) as exc:
        ed.set_teeth(wheel, value)
    msg = str(exc.value)
    assert "\n" not in msg and words in msg and str(tide) in msg
    assert ed.text == before_text and ed.mech is before_mech
    assert not ed.differs and not ed.can_undo


def test_an_edit_that_locks_the_train_is_refused(tmp_path, sky):
    # two parallel paths from one arbor to another; changing one mesh makes them disagree
    path = tmp_path / "loop.toml"
    path.write_text((Path(__file__).parent / "trains" / "two_paths.toml").read_text())
    ed = TrainEditor.open(path, sky)
    with pytest.raises(TrainError) as exc:
        ed.set_teeth("b2", "61")
    assert "\n" not in str(exc.value)
    assert ed.mech.train.wheels["b2"].teeth == 60 and not ed.differs
    ed.set_teeth("b2", "60")  # the same value: no edit at all
    assert not ed.can_undo


def test_pin_slot_and_crank_edits(tide, sky):
    ed = TrainEditor.open(tide, sky)
    ed.set_pin_slot("anomaly", "offset_mm", "1.1")
    assert ed.mech.train.pin_slots["anomaly"].offset_mm == 1.1
    ed.set_days_per_turn("1/2")
    assert ed.mech.train.crank.days_per_turn == Fraction(1, 2)
    with pytest.raises(TrainError, match="pin radius"):
        ed.set_pin_slot("anomaly", "offset_mm", "9.5")  # the pin would not go round
    with pytest.raises(TrainError, match="days_per_turn"):
        ed.set_days_per_turn("0")
    with pytest.raises(TrainError, match="days_per_turn"):
        ed.set_days_per_turn("ten")
    with pytest.raises(TrainError, match="got '1e9'"):  # past the bound, quoted as typed
        ed.set_days_per_turn("1e9")  # (it said 'got 1000000000.0')
    with pytest.raises(TrainError, match="got '2e7'"):
        ed.set_pin_slot("anomaly", "pin_radius_mm", "2e7")  # past ±1,000,000 mm
    with pytest.raises(TrainError, match="got '1e400'"):  # as typed, not 'got inf'
        ed.set_days_per_turn("1e400")
    with pytest.raises(TrainError, match=re.escape(  # the loader's bound, in its words
            "must be between 1/8640000 (100 turns a second, 6,000 rpm) and 1,000,000 days, "
            "got '1/9000000'")):
        ed.set_days_per_turn("1/9000000")
    with pytest.raises(TrainError, match="only offset_mm and pin_radius_mm"):
        ed.set_pin_slot("anomaly", "pin", "x")
    assert ed.mech.train.pin_slots["anomaly"].offset_mm == 1.1


def test_undo_redo_and_differs(tide, sky):
    ed = TrainEditor.open(tide, sky)
    first = ed.mech
    ed.set_teeth("sun_w1", 60)
    second = ed.mech
    ed.set_teeth("moon_w1", 27)
    assert ed.undo().item == "[arbors.moon_first] wheel 'moon_w1'"
    assert ed.mech is second
    assert ed.undo().text() == "[arbors.sun_first] wheel 'sun_w1': 59 → 60"
    assert ed.mech is first and not ed.differs and ed.undo() is None
    ed.redo()
    assert ed.mech is second and ed.differs
    ed.set_teeth("sun_w1", 61)  # a new edit forgets what could be redone
    assert not ed.can_redo and ed.redo() is None
    ed.set_teeth("sun_w1", 59)  # back to the file's value by hand: no longer differs
    assert not ed.differs


def test_before_after_rows(tide, sky):
    ed = TrainEditor.open(tide, sky)
    ed.set_teeth("sun_w1", 60)
    rows = {c.pointer: c for c in ed.compare()}
    sun = rows["sun"]
    assert sun.before.ratio * Fraction(59, 60) == sun.after.ratio
    # one tooth more on a 59 wheel: the Sun runs 1/60 slow, its period 1/59 longer
    assert sun.after.period_error_ppm == pytest.approx(
        ((1 + sun.before.period_error_ppm / 1e6) * 60 / 59 - 1) * 1e6, rel=1e-9)
    assert sun.after.drift_deg_per_century < sun.before.drift_deg_per_century
    assert rows["moon"].before.ratio == rows["moon"].after.ratio


def test_edit_save_reopen_same_rates(tide, sky, tmp_path):
    ed = TrainEditor.open(tide, sky)
    ed.set_teeth("sun_w1", 60)
    ed.set_pin_slot("anomaly", "pin_radius_mm", 9.5)
    ed.set_days_per_turn("1/24")
    target = ed.suggested_name()
    assert target != tide and target.parent == tide.parent and not target.exists()
    ed.save(target)
    assert not ed.differs and ed.path == target
    again = build(load_train(target), sky)
    assert again.kin.rates == ed.mech.kin.rates
    assert again.train.crank.days_per_turn == Fraction(1, 24)
    assert again.train.pin_slots["anomaly"].pin_radius_mm == 9.5
    assert load_train(tide).wheels["sun_w1"].teeth == 59  # the opened file is untouched


def test_comments_and_blank_lines_survive(tide, sky, tmp_path):
    original = tide.read_text()
    ed = TrainEditor.open(tide, sky)
    ed.set_teeth("sun_w1", 60)
    ed.set_pin_slot("anomaly", "offset_mm", 1.0)
    out = tmp_path / "out.toml"
    ed.save(out)
    saved = out.read_text()
    old_lines, new_lines = original.splitlines(), saved.splitlines()
    assert len(old_lines) == len(new_lines)
    changed = [(a, b) for a, b in zip(old_lines, new_lines, strict=True) if a != b]
    assert changed == [
        ("wheels = { sun_w1 = 59, sun_p2 = 11 }", "wheels = { sun_w1 = 60, sun_p2 = 11 }"),
        ("offset_mm = 0.985", "offset_mm = 1.0"),
    ]
    assert saved.count("#") == original.count("#")


def test_save_never_replaces_without_asking(tide, sky, tmp_path):
    ed = TrainEditor.open(tide, sky)
    ed.set_teeth("sun_w1", 60)
    with pytest.raises(OutputError, match="train's own file; confirm"):
        ed.save(tide)
    other = tmp_path / "other.toml"
    other.write_text("keep me")
    with pytest.raises(OutputError, match="exists; confirm"):
        ed.save(other)
    assert other.read_text() == "keep me"
    assert load_train(tide).wheels["sun_w1"].teeth == 59
    ed.save(tide, replace=True)
    assert load_train(tide).wheels["sun_w1"].teeth == 60 and not ed.differs
    assert not list(tmp_path.glob(".*.part"))


def test_a_file_changed_by_another_program_is_said_before_it_is_replaced(tide, sky):
    """A maker edits the train in a text editor while it is on the bench: saving over it from
    the bench would lose that writing, so the refusal says the file has changed; once saved,
    the file is what was written (no change seen), and a removed file counts as changed."""
    ed = TrainEditor.open(tide, sky)
    assert not ed.changed_on_disk()
    ed.set_teeth("sun_w1", 60)
    assert not ed.changed_on_disk()  # an edit on the bench is not a change on disk
    with tide.open("a", encoding="utf-8") as fh:
        fh.write("# a note written in the editor meanwhile\n")
    assert ed.changed_on_disk()
    with pytest.raises(OutputError, match="changed by another program since it was read"):
        ed.save(tide)
    ed.save(tide, replace=True)  # confirmed: replaced
    assert not ed.changed_on_disk() and "meanwhile" not in tide.read_text()
    tide.unlink()
    assert ed.changed_on_disk()
    assert not TrainEditor.new_from(demo_path("tide_office"), sky).changed_on_disk()


def test_save_into_a_missing_folder_writes_nothing(tide, sky, tmp_path):
    ed = TrainEditor.open(tide, sky)
    ed.set_teeth("sun_w1", 60)
    with pytest.raises(OutputError, match="does not exist"):
        ed.save(tmp_path / "no" / "such.toml")
    assert ed.differs


# --- primes the user cannot cut ------------------------------------------------------------
def test_parse_primes_reads_lists_and_refuses_what_is_not_a_prime():
    from engine.edit import parse_primes
    from engine.errors import WheelworkError

    assert parse_primes("43, 37 41,37") == (37, 41, 43)
    assert parse_primes("  ") == ()
    for bad, words in (("39", "not a prime (3·13)"), ("1", "not a prime from 2"),
                       ("forty-one", "cannot read"), ("10007", "not a prime from 2")):
        with pytest.raises(WheelworkError) as exc:
            parse_primes(bad)
        assert words in str(exc.value) and "\n" not in str(exc.value)


def test_a_forbidden_prime_is_refused_and_the_train_stays(tide, sky):
    ed = TrainEditor.open(tide, sky)
    ed.set_forbidden_primes("37, 41, 43")
    before_text, before_mech = ed.text, ed.mech
    for value in ("41", "82", "123"):  # 41, 2·41, 3·41
        with pytest.raises(TrainError) as exc:
            ed.set_teeth("sun_w1", value)
        msg = str(exc.value)
        assert "forbidden prime factor 41" in msg and "sun_w1" in msg and "\n" not in msg
        assert ed.text == before_text and ed.mech is before_mech and not ed.can_undo
    with pytest.raises(TrainError):  # one bad count refuses the whole multi-wheel edit
        ed.set_teeth_many({"sun_w1": 60, "sun_w2": 129}, "sun chain")  # 129 = 3·43
    assert ed.text == before_text and ed.mech is before_mech
    ed.set_teeth("sun_w1", "60")  # 2²·3·5: allowed
    assert ed.mech.train.wheels["sun_w1"].teeth == 60
    # a count already in the file is kept (only edits are judged): node_p2 has 37 leaves
    assert ed.forbidden_in_train() == {"node_p2": (37,)}


def test_many_teeth_in_one_edit_undo_as_one(tide, sky):
    ed = TrainEditor.open(tide, sky)
    old = rates(ed.mech)
    ed.set_teeth_many({"moon_w1": 27, "moon_p2": 16}, "pointer 'moon' chain")
    assert ed.mech.kin.rates["moon_first"] == old["moon_first"] * Fraction(26, 27)
    assert ed.last_change.text() == ("pointer 'moon' chain: moon_w1 26, moon_p2 15 → "
                                     "moon_w1 27, moon_p2 16")
    ed.undo()
    assert rates(ed.mech) == old and not ed.can_undo


def test_edits_in_a_row_write_what_one_edit_of_the_saved_text_writes(tide, sky):
    """The editor keeps the parsed text between edits (and after a refused one); each edit's
    text is the one a fresh editor on the previous text would write."""
    ed = TrainEditor.open(tide, sky)
    steps = [("sun_w1", "60"), ("sun_w1", "0"), ("moon_w1", "27"), ("sun_w1", "61"),
             ("sun_w1", "61")]
    for wheel, value in steps:
        fresh = TrainEditor(ed.text, str(tide), sky)
        try:
            ed.set_teeth(wheel, value)
        except TrainError:
            with pytest.raises(TrainError):
                fresh.set_teeth(wheel, value)
            continue
        fresh.set_teeth(wheel, value)
        assert ed.text == fresh.text
    ed.undo()
    ed.set_days_per_turn("2")
    fresh = TrainEditor(ed._undo[-1].text, str(tide), sky)
    fresh.set_days_per_turn("2")
    assert ed.text == fresh.text and "# " in ed.text


def test_a_file_with_a_byte_order_mark_opens_edits_and_keeps_its_mark(sky, tmp_path):
    """Some editors start a UTF-8 file with a byte-order mark; the loader reads such a file,
    so the bench must open it too (it refused: 'Empty key at line 1 col 0'), and saving it
    keeps the mark and the Windows line ends the maker's editor wrote."""
    path = tmp_path / "bom.toml"
    text = demo_path("nineteen_year_drum").read_text(encoding="utf-8")
    path.write_bytes(b"\xef\xbb\xbf" + text.replace("\n", "\r\n").encode("utf-8"))
    ed = TrainEditor.open(path, sky)
    assert not ed.differs
    ed.set_teeth("inter_pinion", "39")
    assert ed.differs
    out = ed.save(tmp_path / "bom-edited.toml")
    raw = out.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf") and raw.count(b"\r\n") == text.count("\n")
    assert load_train(out).wheels["inter_pinion"].teeth == 39
