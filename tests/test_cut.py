"""Cutting files: DXF read back with ezdxf, plate distances, sheet layout, the command."""

from __future__ import annotations

import io
import json
import math
import os
import re
from pathlib import Path

import ezdxf
import numpy as np
import pytest

from engine.checks import centre_distance_mm, check
from engine.cli import main
from engine.drawing import cut_parts, layout_sheet, tooth_forms
from engine.errors import PlacementError, TrainError
from engine.figures import fixed
from engine.kinematics import solve
from engine.loader import load_train, parse_train
from engine.plate import place_plates
from engine.toothform import involute_half_angle

HERE = Path(__file__).resolve().parent
SMALL = HERE / "trains" / "workshop_small.toml"
DEMO = HERE.parent / "engine" / "trains" / "tide_office.toml"
UM = 1e-3  # a micrometre, in mm


def _cut(tmp_path, train=SMALL, *extra):
    out = tmp_path / "out"
    assert main(["cut", str(train), "--out", str(out), *extra]) == 0
    return out


def _outline(doc):
    msp = doc.modelspace()
    polys = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == "CUT" and e.closed]
    pts = [np.array([(p[0], p[1]) for p in e.get_points("xy")]) for e in polys]
    return max(pts, key=lambda p: np.hypot(*p.T).max())


@pytest.mark.parametrize("form", ["cycloidal", "involute"])
def test_dxf_read_back_teeth_tip_root_pitch(tmp_path, form):
    out = _cut(tmp_path, SMALL, "--form", form, "--force")
    train = load_train(SMALL)
    forms = tooth_forms(train, form)
    assert set(forms) == set(train.wheels)
    for name, wheel in train.wheels.items():
        doc = ezdxf.readfile(out / f"wheel-{name}.dxf")
        assert doc.units == ezdxf.units.MM
        t = forms[name]
        m, z = t.module_mm, wheel.teeth
        pitch = [c for c in doc.modelspace().query("CIRCLE") if c.dxf.layer == "PITCH"]
        assert len(pitch) == 1
        assert pitch[0].dxf.radius == pytest.approx(m * z / 2, abs=1e-12)  # d = m z
        xy = _outline(doc)
        r = np.hypot(*xy.T)
        assert 2 * r.max() == pytest.approx(2 * t.tip_radius_mm, abs=1e-9)
        assert 2 * r.min() == pytest.approx(2 * t.root_radius_mm, abs=1e-9)
        if form == "involute":  # ISO 53: tip d + 2 m, root d − 2.5 m
            assert 2 * r.max() == pytest.approx(m * z + 2 * m, abs=1e-9)
            assert 2 * r.min() == pytest.approx(m * z - 2.5 * m, abs=1e-9)
        # teeth: runs of outline points on the tip circle, one per tooth
        ang = np.sort(np.arctan2(*xy[r > r.max() - 1e-9][:, ::-1].T))
        gaps = np.diff(np.concatenate([ang, [ang[0] + 2 * math.pi]]))
        assert int((gaps > math.pi / z).sum()) == z
        # tooth thickness where the outline crosses the pitch circle
        rp = m * z / 2
        s = r >= rp - 1e-12
        idx = np.nonzero(s[:-1] != s[1:])[0]
        assert len(idx) == 2 * z
        k = (rp - r[idx]) / (r[idx + 1] - r[idx])
        cross = xy[idx] + k[:, None] * (xy[idx + 1] - xy[idx])
        a = np.unwrap(np.arctan2(cross[:, 1], cross[:, 0]))
        widths = np.abs(np.diff(a))[0::2] * rp  # rising then falling: one tooth each
        expect = {"involute": math.pi * m / 2}.get(form, t.params["thickness_m"] * m)
        assert np.allclose(widths, expect, atol=2 * UM)


def test_dxf_layers_as_the_docs_table_gives_them(tmp_path):
    # docs/workshop.md: CUT red, PITCH blue and dashed (as the SVG draws it), MARK green, NOTE grey;
    # every entity takes its layer's colour and line type
    out = _cut(tmp_path, SMALL)
    for path in [*out.glob("wheel-*.dxf"), out / "plate-frame.dxf", out / "sheet.dxf"]:
        doc = ezdxf.readfile(path)
        layers = {la.dxf.name: la for la in doc.layers}
        assert {n: layers[n].dxf.color for n in ("CUT", "PITCH", "MARK", "NOTE")} == {
            "CUT": 1, "PITCH": 5, "MARK": 3, "NOTE": 8}  # AutoCAD colour index: red, blue,
        # green, grey (NOTE was 7, black or white by the background, where the docs say grey)
        assert layers["CUT"].dxf.linetype == "Continuous"
        dashed = doc.linetypes.get(layers["PITCH"].dxf.linetype)
        assert dashed.pattern_tags.compile() == pytest.approx((1.0, 0.6))  # dash, gap in mm
        assert (out / path.name.replace(".dxf", ".svg")).read_text().count(
            'id="PITCH" fill="none" stroke="#1f5fbf" stroke-width="0.08" '
            'stroke-dasharray="1 0.6"') == 1
        for e in doc.modelspace():
            assert e.dxf.get("linetype", "BYLAYER") == "BYLAYER"


def test_dxf_involute_flank_points_within_a_micrometre(tmp_path):
    out = _cut(tmp_path, SMALL, "--form", "involute")
    train = load_train(SMALL)
    forms = tooth_forms(train, "involute")
    for name, wheel in train.wheels.items():
        t = forms[name]
        xy = _outline(ezdxf.readfile(out / f"wheel-{name}.dxf"))
        r = np.hypot(*xy.T)
        sel = (r >= t.params["form_radius_mm"]) & (r < t.tip_radius_mm - 1e-9)
        ang = np.arctan2(xy[sel, 1], xy[sel, 0])
        pitch = 2 * math.pi / wheel.teeth
        eta = np.abs((ang + pitch / 2) % pitch - pitch / 2)  # from the nearest tooth's centre
        # involute tooth thickness at any diameter (Machinery's Handbook, 'Gearing')
        err = np.abs(eta - involute_half_angle(r[sel], wheel.teeth, t.module_mm)) * r[sel]
        assert sel.sum() > 4 * wheel.teeth  # a few points on each flank at least
        assert err.max() < UM
        # and between them: points along each chord of the flank (the outline is thinned to
        # the points it needs to stay within 1 µm of the form; 0.2 µm for the form's samples)
        both = np.nonzero(sel[:-1] & sel[1:])[0]
        for f in (0.25, 0.5, 0.75):
            q = xy[both] + f * (xy[both + 1] - xy[both])
            rq = np.hypot(*q.T)
            ang = np.arctan2(q[:, 1], q[:, 0])
            eta = np.abs((ang + pitch / 2) % pitch - pitch / 2)
            err = np.abs(eta - involute_half_angle(rq, wheel.teeth, t.module_mm)) * rq
            assert err.max() < 1.2 * UM, (name, f, err.max())


def test_plate_hole_distances_equal_centre_distances(tmp_path):
    for train_path in (SMALL, DEMO):
        out = _cut(tmp_path / train_path.stem, train_path)
        train = load_train(train_path)
        kin = solve(train)
        for plate in place_plates(train, kin, {w: 0.0 for w in train.wheels}):
            doc = ezdxf.readfile(out / f"plate-{plate.name}.dxf")
            holes = [(c.dxf.center.x, c.dxf.center.y) for c in doc.modelspace().query("CIRCLE")
                     if c.dxf.layer == "CUT"]
            assert len(holes) == len(plate.holes)
        for f in kin.mesh_frames:
            m = train.meshes[f.mesh_index - 1]
            a = centre_distance_mm(m.module_mm, train.wheels[m.driver].teeth,
                                   train.wheels[m.driven].teeth, m.internal)
            name = "frame" if f.reference == "frame" else f.reference
            doc = ezdxf.readfile(out / f"plate-{name}.dxf")
            labels = {t.dxf.text: (t.dxf.insert.x, t.dxf.insert.y)
                      for t in doc.modelspace().query("TEXT")}
            centres = [(c.dxf.center.x, c.dxf.center.y) for c in doc.modelspace().query("CIRCLE")
                       if c.dxf.layer == "CUT"]

            def hole_of(arbor, labels=labels, centres=centres):
                lab = next(v for k, v in labels.items() if arbor in k.split("/"))
                return min(centres, key=lambda pt, lab=lab: math.dist(pt, lab))

            p1, p2 = hole_of(f.arbor1), hole_of(f.arbor2)
            assert math.dist(p1, p2) == pytest.approx(a, abs=UM), m.label
        # the file's own position is kept
        if train_path == SMALL:
            doc = ezdxf.readfile(out / "plate-frame.dxf")
            cs = [(c.dxf.center.x, c.dxf.center.y) for c in doc.modelspace().query("CIRCLE")
                  if c.dxf.layer == "CUT"]
            assert any(math.dist(c, (40.0, 10.0)) < 1e-12 for c in cs)


def test_pin_slot_offset_keeps_its_direction():
    train = load_train(DEMO)
    plates = {p.name: p for p in place_plates(train, solve(train), {})}
    carrier = plates["perigee_carrier"]
    pin, slot = carrier.holes["pin_arbor"], carrier.holes["slot_arbor"]
    ps = train.pin_slots["anomaly"]
    assert math.atan2(slot.y_mm - pin.y_mm, slot.x_mm - pin.x_mm) == pytest.approx(
        math.radians(ps.offset_deg), abs=1e-12)
    assert math.hypot(slot.x_mm - pin.x_mm, slot.y_mm - pin.y_mm) == pytest.approx(
        ps.offset_mm, abs=1e-12)


LOOPS = """
[crank]
arbor = "a"
days_per_turn = 1
[epoch]
date = "2026-01-01"
set = "angles"
[arbors.a]
wheels = { a1 = 10, a2 = 10 }
[arbors.b]
wheels = { b1 = 40, b2 = 20 }
[arbors.c]
wheels = { c1 = 40, c2 = C2 }
[[meshes]]
wheels = ["a1", "b1"]
module_mm = 0.5
[[meshes]]
wheels = ["b2", "c1"]
module_mm = 0.5
[pointers.p]
shows = "sun"
arbor = "c"
set_deg = 0
"""

# a third path a → c: straight into a ring on c (a triangle of axes) ...
RING = LOOPS.replace("C2", "80") + """
[[meshes]]
wheels = ["a2", "c2"]
ring = "c2"
module_mm = MODULE
"""
# ... or through a fourth arbor d (a loop of four axes, one free angle to close it)
FOUR = LOOPS.replace("C2", "40") + """
[arbors.d]
wheels = { d1 = 20, d2 = 10 }
[[meshes]]
wheels = ["a2", "d1"]
module_mm = MODULE
[[meshes]]
wheels = ["d2", "c2"]
module_mm = 0.5
"""


def _plate(text):
    train = parse_train(text, "loops.toml")
    (plate,) = place_plates(train, solve(train), {})
    return plate


@pytest.mark.parametrize("text", [RING.replace("MODULE", "0.5"),
                                  FOUR.replace("MODULE", "0.5")])
def test_loops_of_meshes_close(text):
    # ring: a–b 12.5, b–c 15, a–c (80 − 10)/2 × 0.5 = 17.5 mm, a triangle;
    # four: a–b 12.5, b–c 15, a–d 7.5, d–c 12.5 mm, a four-sided loop
    plate = _plate(text)
    assert len(plate.ties) in (3, 4)
    for t in plate.ties:
        assert plate.distance_mm(t) == pytest.approx(t.distance_mm, abs=1e-9)


def test_no_placement_says_why():
    # a–c through the ring at module 2 is 70 mm, more than a–b and b–c together (27.5 mm)
    with pytest.raises(PlacementError, match="no position keeps both") as exc:
        _plate(RING.replace("MODULE", "2.0"))
    assert "70.0000 mm" in str(exc.value) and "27.5000 mm" in str(exc.value)
    # a–d at module 3 is 45 mm, more than the other three sides together (40 mm)
    with pytest.raises(PlacementError, match="no placement keeps every centre distance"):
        _plate(FOUR.replace("MODULE", "3.0"))


def test_fixed_positions_that_disagree_are_refused():
    text = SMALL.read_text().replace("[arbors.middle]", "[arbors.middle]\nat_mm = [0.0, 0.0]")
    train = parse_train(text, "fixed.toml")
    with pytest.raises(PlacementError, match="apart, but this needs"):
        place_plates(train, solve(train), {})


def test_sheet_has_no_overlaps():
    train = load_train(DEMO)
    parts = cut_parts(train, solve(train)).parts
    sheet = layout_sheet(parts)
    boxes = list(sheet.info["boxes"].values())
    assert len(boxes) == len(parts)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1]


def test_cut_never_overwrites_without_force(tmp_path, capsys):
    out = _cut(tmp_path)
    before = (out / "sheet.svg").read_bytes()
    (out / "sheet.svg").write_text("mine")
    os.chmod(out / "sheet.svg", 0o600)
    assert main(["cut", str(SMALL), "--out", str(out)]) == 1
    err = capsys.readouterr().err
    assert "file exists" in err and "--force" in err
    assert (out / "sheet.svg").read_text() == "mine"
    assert main(["cut", str(SMALL), "--out", str(out), "--force"]) == 0
    assert (out / "sheet.svg").read_bytes() == before
    assert os.stat(out / "sheet.svg").st_mode & 0o777 == 0o600  # permissions kept
    assert not list(out.glob(".*.part"))


def test_cut_refuses_links_and_the_train_file(tmp_path, capsys):
    out = _cut(tmp_path)
    target = tmp_path / "elsewhere.txt"
    target.write_text("keep")
    (out / "sheet.dxf").unlink()
    (out / "sheet.dxf").symlink_to(target)
    assert main(["cut", str(SMALL), "--out", str(out), "--force"]) == 1
    assert "symbolic link" in capsys.readouterr().err
    assert target.read_text() == "keep"


def test_cut_json_and_caveat(tmp_path, capsys):
    out = tmp_path / "j"
    assert main(["cut", str(SMALL), "--out", str(out), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert "design estimates" in data["caveat"] and "local rules" in data["caveat"]
    wheels = {p["wheel"]: p for p in data["parts"] if p["kind"] == "wheel"}
    assert wheels["middle_wheel"]["crossings"] == 4
    assert "crossings" not in wheels["middle_pinion"]
    assert wheels["hand_wheel"]["bore_mm"] == 1.5
    assert len(data["files"]) == 2 * (len(data["parts"]) + 1)
    assert main(["cut", str(SMALL), "--out", str(tmp_path / "t")]) == 0
    assert "design estimates" in capsys.readouterr().out


def test_cut_bad_input_is_one_line(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(SMALL.read_text().replace('tooth_form = "cycloidal"',
                                             'tooth_form = "square"'))
    assert main(["cut", str(bad), "--out", str(tmp_path / "o")]) == 1
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "[workshop] tooth_form" in err and "bad.toml" in err
    assert main(["cut", str(SMALL), "--out", str(tmp_path / "o"), "--formats", "png"]) == 2
    assert "usage error" in capsys.readouterr().err


def test_mixed_forms_in_one_mesh_are_refused():
    text = SMALL.read_text() + '\n[workshop.wheels.hand_wheel]\nform = "involute"\n'
    train = parse_train(text, "mixed.toml")
    with pytest.raises(TrainError, match="need one tooth form"):
        tooth_forms(train)


@pytest.mark.parametrize("fragment,item", [
    ("[workshop]\ncrossings = 2\n", "[workshop] crossings"),
    ("[workshop]\nbore_mm = -1\n", "[workshop] bore_mm"),
    ("[workshop]\ndivision = 0.7\n", "[workshop] division"),
    ("[workshop]\nhole_mm = -0.01\n", "[workshop] hole_mm"),
    ("[workshop]\nhole_mm = \"0.02mm\"\n", "[workshop] hole_mm"),
    ("[workshop]\nspokes = 4\n", "[workshop]"),
    ("[workshop.wheels.nowhere]\nform = \"involute\"\n", "[workshop.wheels.nowhere]"),
    ("[workshop.wheels.hand_wheel]\nform = \"square\"\n", "[workshop.wheels.hand_wheel] form"),
])
def test_workshop_keys_are_checked(fragment, item):
    text = SMALL.read_text().split("[workshop]")[0] + fragment
    with pytest.raises(TrainError) as exc:
        parse_train(text, "w.toml")
    assert exc.value.item == item


def test_workshop_keys_are_read():
    shop = load_train(SMALL).workshop
    assert (shop.tooth_form, shop.bore_mm, shop.crossings) == ("cycloidal", 1.5, 4)
    assert shop.wheel("middle_pinion").crossings == 0
    assert shop.wheel("hand_wheel").crossings is None


def test_every_demo_train_gets_a_plate():
    # carried pins (planet dial) and several meshes between one pair of axes whose centre
    # distances differ by a few micrometres (table orrery: drilled at the middle, with a note)
    for path in sorted((HERE.parent / "engine" / "trains").glob("*.toml")):
        train = load_train(path)
        for plate in place_plates(train, solve(train), {}):
            for t in plate.ties:
                assert plate.distance_mm(t) == pytest.approx(t.distance_mm, abs=0.02), t.label
    train = load_train(HERE.parent / "engine" / "trains" / "table_orrery.toml")
    (frame,) = [p for p in place_plates(train, solve(train), {}) if p.mount == "frame"]
    assert any("drilled at" in n for n in frame.notes)


def test_a_plate_covers_the_wheels_it_carries():
    """A plate's outline holds every wheel over it to its tips, with room to spare: it was the
    holes' box plus 6 mm, so a hall clock's 97- and 101-tooth wheels hung 25 mm past its
    edges, and the tide office's (every demo, and a carrier's own plate, checked)."""
    seen = 0
    for path in sorted((HERE.parent / "engine" / "trains").glob("*.toml")):
        train = load_train(path)
        forms = tooth_forms(train)
        for part in (p for p in cut_parts(train, solve(train)).parts if p.kind == "plate"):
            (outline,) = [xy for layer, xy in part.polylines if layer == "CUT"]
            (x0, y0), (x1, y1) = outline.min(axis=0), outline.max(axis=0)
            for hole in part.info["holes"]:
                x, y = hole["x_mm"], hole["y_mm"]
                assert x0 + 6 <= x + 1e-9 <= x1 - 6 + 2e-9 and y0 + 6 <= y + 1e-9 <= y1 - 6 + 2e-9
                for a in hole["arbors"]:
                    arbor = train.arbors[a]
                    if arbor.mount != part.info["mount"] and a != part.info["mount"]:
                        continue  # turning on another plate
                    for w in arbor.wheels:
                        if w in forms and forms[w].role != "ring":
                            tip = forms[w].tip_radius_mm
                            assert x0 + 2 - 1e-6 <= x - tip and x + tip <= x1 - 2 + 1e-6, w
                            assert y0 + 2 - 1e-6 <= y - tip and y + tip <= y1 - 2 + 1e-6, w
                            seen += 1
    assert seen > 50  # every demo's wheels with a module


def test_hole_names_on_a_plate_never_overlap():
    """The tide office's carrier plate has its pin and slot arbors 0.985 mm apart: their names
    were written over each other ('slot_arbor' on 'pin_arbor'); every demo's plates checked,
    each name's box (0.62 of the height a character) clear of every other."""
    from engine.drawing import _text_width

    for path in sorted((HERE.parent / "engine" / "trains").glob("*.toml")):
        train = load_train(path)
        for part in (p for p in cut_parts(train, solve(train)).parts if p.kind == "plate"):
            keys = {name: key for key, name in part.info["keys"].items()}
            names = {keys.get(h["axis"], h["axis"]) for h in part.info["holes"]}
            boxes = [(x, y, x + _text_width(t, h), y + h) for x, y, h, t in part.texts
                     if t in names]
            assert len(boxes) == len(names)
            for i, a in enumerate(boxes):
                for b in boxes[i + 1:]:
                    assert a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1], \
                        (path.name, part.name)
            # nor over another hole's centre mark (2 mm each way at 1 mm pivots): the table
            # orrery's name of its seven coaxial tubes ran across the lay arbor's hole
            c = max(max(train.pivot_of(a) for a in train.arbors), 2.0)
            for x, y, h, t in part.texts:
                if t not in names:
                    continue
                box = (x, y, x + _text_width(t, h), y + h)
                for hole in part.info["holes"]:
                    if keys.get(hole["axis"], hole["axis"]) == t:
                        continue
                    mx, my = hole["x_mm"], hole["y_mm"]
                    assert box[2] <= mx - c or mx + c <= box[0] or box[3] <= my - c or \
                        my + c <= box[1], (path.name, part.name, t, hole["axis"])


def test_hole_names_stay_inside_their_plate():
    """A hole's name is on the plate (NOTE layer), never past its outline: the table orrery's
    seven coaxial tubes joined by '/' ran 40 mm out of the drive carrier's plate. A name with
    no room is written as a key (A, B, ...) and given whole in a key under the title, wrapped
    after a '/' (every demo's plates, each name's box at 0.62 of its height a character)."""
    from engine.drawing import LABEL_INSET_MM, _text_width

    keyed = 0
    for path in sorted((HERE.parent / "engine" / "trains").glob("*.toml")):
        train = load_train(path)
        for part in (p for p in cut_parts(train, solve(train)).parts if p.kind == "plate"):
            (outline,) = [p for layer, p in part.polylines if layer == "CUT"]
            x0, y0 = outline.min(axis=0)
            x1, y1 = outline.max(axis=0)
            keys = part.info["keys"]
            shown = set(keys) | {h["axis"] for h in part.info["holes"]
                                 if h["axis"] not in keys.values()}
            for x, y, h, t in part.texts:
                if t in shown:
                    assert x0 + LABEL_INSET_MM - UM <= x and \
                        x + _text_width(t, h) <= x1 - LABEL_INSET_MM + UM, (part.name, t)
                    assert y0 <= y and y + h <= y1, (part.name, t)
            texts = part.texts
            for key, name in keys.items():  # the key's lines, joined, give the name whole
                head = f"{key} = "
                i = next(i for i, t in enumerate(texts) if t[3].startswith(head))
                joined = texts[i][3].removeprefix(head)
                for x, _, _, t in texts[i + 1:]:  # its next lines stand further right
                    if x <= texts[i][0]:
                        break
                    joined += t
                assert joined == name, (part.name, key, joined)
                keyed += 1
    assert keyed  # the table orrery's drive plate at least


def test_a_long_hole_name_is_wrapped_in_the_key_never_cut():
    from engine.drawing import _wrap_name

    name = "/".join(f"tube_{i}" for i in range(30)) + "/" + "x" * 50
    lines = _wrap_name(name, 20)
    assert "".join(lines) == name and max(map(len, lines)) <= 20
    assert all(line.endswith("/") for line in lines[:-4])  # broken after a '/', the long one not
    train = load_train(HERE.parent / "engine" / "trains" / "table_orrery.toml")
    (drive,) = [p for p in cut_parts(train, solve(train)).parts if p.name == "plate-drive"]
    assert drive.info["keys"] == {
        "A": "drive/sun_post/mercury_tube/venus_tube/mars_tube/jupiter_tube/saturn_tube"}


def test_a_plate_whose_axes_no_module_ties_is_not_drawn(tmp_path, capsys):
    # the planet dial's frame meshes give no module: its frame axes were drawn 5 mm apart in a
    # row (with a note), holes a maker would drill and that hold none of those wheels; no
    # distance between them is known, so no frame plate is drawn, and one line says why,
    # naming the meshes that need a module
    train = load_train(HERE.parent / "engine" / "trains" / "planet_dial.toml")
    (frame,) = [p for p in place_plates(train, solve(train), {}) if p.mount == "frame"]
    assert not frame.holes and not frame.ties
    assert set(frame.withheld) >= {"day", "venus_first", "mars_second"}
    assert main(["cut", "planet_dial", "--out", str(tmp_path / "p"), "--json"]) == 0
    got = json.loads(capsys.readouterr().out)
    assert not any(p["name"] == "plate-frame" for p in got["parts"])
    assert not (tmp_path / "p" / "plate-frame.dxf").exists()
    (note,) = got["notes"]
    assert note.startswith("no plate of the frame drawn: the places of its holes (day, ")
    assert "mesh 1 (day_sun_pinion–venus_w1), mesh 2 (venus_p2–venus_w2)" in note
    assert "no module_mm" in note and len(note.splitlines()) == 1
    # the carriers' plates, measured from their meshes with a module, are drawn
    assert {p["name"] for p in got["parts"] if p["kind"] == "plate"} == {
        "plate-venus_deferent", "plate-mars_deferent"}


def _half_measured(b_at: str = "", c_at: str = "") -> str:
    """Frame arbors 'a' and 'b' tied by a mesh with a module (15 mm apart), 'c' meshing 'b'
    with none; ``b_at``, ``c_at`` at_mm lines for 'b' and 'c'."""
    return ('[crank]\narbor = "a"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
            'set = "angles"\n[arbors.a]\nwheels = { a1 = 20 }\n'
            '[arbors.b]\nwheels = { b1 = 40, b2 = 10 }\n'
            f'{b_at}[arbors.c]\nwheels = {{ c1 = 30 }}\n{c_at}'
            '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.5\n'
            '[[meshes]]\nwheels = ["b2", "c1"]\n'
            '[pointers.p]\nshows = "sun"\narbor = "c"\nset_deg = 0\n')


def test_a_hole_no_module_places_is_left_off_the_plate(tmp_path, capsys):
    # 'a' and 'b' are a centre distance apart (0.5 (20 + 40) / 2 = 15 mm); 'c' hangs on
    # mesh 2, which has no module: its hole is not drawn, nor listed to drill, and the
    # plate's note says so; the two axes of mesh 2 placed by the file (at_mm), all are drawn
    # (placing 'c' alone would leave 'a' and 'b' hanging on mesh 2 instead)
    path = tmp_path / "half.toml"
    path.write_text(_half_measured())
    assert main(["cut", str(path), "--out", str(tmp_path / "h"), "--json"]) == 0
    (plate,) = [p for p in json.loads(capsys.readouterr().out)["parts"] if p["kind"] == "plate"]
    assert [h["axis"] for h in plate["holes"]] == ["a", "b"]
    assert plate["not_drawn"] == [{"axis": "c", "meshes": ["mesh 2 (b2–c1)"]}]
    (note,) = [n for n in plate["notes"] if "not drawn" in n]
    assert note.startswith("hole not drawn, c: its place hangs on mesh 2 (b2–c1), which has "
                           "no module_mm")
    doc = ezdxf.readfile(tmp_path / "h" / "plate-frame.dxf")
    assert len([c for c in doc.modelspace().query("CIRCLE") if c.dxf.layer == "CUT"]) == 2
    assert main(["cut", str(path), "--out", str(tmp_path / "h2")]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "  c:" not in out and "hole not drawn, c:" in out
    path.write_text(_half_measured("at_mm = [15, 0]\n", "at_mm = [40, 0]\n"))
    assert main(["cut", str(path), "--out", str(tmp_path / "f"), "--json"]) == 0
    (plate,) = [p for p in json.loads(capsys.readouterr().out)["parts"] if p["kind"] == "plate"]
    at = {h["axis"]: (h["x_mm"], h["y_mm"]) for h in plate["holes"]}
    assert at["c"] == (40.0, 0.0) and math.dist(at["a"], at["b"]) == pytest.approx(15, abs=UM)
    assert plate["not_drawn"] == [] and not any("not drawn" in n for n in plate["notes"])


def test_a_train_without_modules_has_nothing_to_cut(tmp_path, capsys):
    # the 59-tooth moon disc gives no module: no wheel to draw, so no plate or sheet either
    out = tmp_path / "out"
    assert main(["cut", "moon_disc_59", "--out", str(out)]) == 1
    err = capsys.readouterr().err
    assert "no mesh has a module_mm" in err and len(err.strip().splitlines()) == 1
    assert not out.exists() or not list(out.iterdir())


def test_cut_into_a_new_folder_in_the_demo_folder_makes_nothing(capsys):
    """--out a new folder inside the package's demo folder is refused before the folder is
    made (it was made, then every file refused, leaving an empty folder among the demos)."""
    inside = DEMO.parent / "cut-here" / "deeper"
    try:
        assert main(["cut", str(SMALL), "--out", str(inside)]) == 1
        err = capsys.readouterr().err
        assert "demo folder" in err and err.count("\n") == 1
        assert not (DEMO.parent / "cut-here").exists()
    finally:
        for leftover in (inside, inside.parent):
            if leftover.is_dir():
                leftover.rmdir()


def test_one_wheel_is_cut_alone_as_in_the_whole_set(tmp_path, capsys):
    """--wheel NAME writes that wheel's files only (no plates, no sheet), the same drawing as
    the whole set's (the SVG byte for byte; a DXF carries its time of writing, so its outline);
    given twice, two wheels."""
    whole = _cut(tmp_path, SMALL)
    capsys.readouterr()
    one = tmp_path / "one"
    assert main(["cut", str(SMALL), "--out", str(one), "--wheel", "middle_wheel"]) == 0
    out = capsys.readouterr().out
    assert sorted(p.name for p in one.iterdir()) == ["wheel-middle_wheel.dxf",
                                                      "wheel-middle_wheel.svg"]
    svg = "wheel-middle_wheel.svg"
    assert (one / svg).read_bytes() == (whole / svg).read_bytes()
    assert np.array_equal(_outline(ezdxf.readfile(one / "wheel-middle_wheel.dxf")),
                          _outline(ezdxf.readfile(whole / "wheel-middle_wheel.dxf")))
    assert "wrote 2 files (one per part)" in out and "plate" not in out
    doc = ezdxf.readfile(one / "wheel-middle_wheel.dxf")  # 60 teeth at module 0.5: d = m z
    (pitch,) = [c for c in doc.modelspace().query("CIRCLE") if c.dxf.layer == "PITCH"]
    assert pitch.dxf.radius == pytest.approx(0.5 * 60 / 2, abs=1e-12)
    two = tmp_path / "two"
    assert main(["cut", str(SMALL), "--out", str(two), "--wheel", "hand_wheel", "--wheel",
                 "drive_pinion", "--formats", "svg", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert [p["wheel"] for p in data["parts"]] == ["drive_pinion", "hand_wheel"]
    assert sorted(p.name for p in two.iterdir()) == ["wheel-drive_pinion.svg",
                                                      "wheel-hand_wheel.svg"]


def test_an_unknown_wheel_to_cut_is_a_usage_error_listing_the_wheels(tmp_path, capsys):
    out = tmp_path / "none"
    assert main(["cut", str(SMALL), "--out", str(out), "--wheel", "midle_wheel"]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "usage error: argument --wheel: no wheel 'midle_wheel'" in err
    assert "did you mean 'middle_wheel'?" in err
    assert "its wheels: drive_pinion, middle_wheel, middle_pinion, hand_wheel" in err
    assert not out.exists()  # refused before the folder is made
    bare = tmp_path / "bare.toml"  # a wheel in no mesh with a module cannot be drawn
    bare.write_text(SMALL.read_text().replace("module_mm = 0.6", "# no module"))
    assert main(["cut", str(bare), "--out", str(out), "--wheel", "hand_wheel"]) == 1
    err = capsys.readouterr().err.strip()
    assert "bare.toml: wheel 'hand_wheel' is in no mesh with a module_mm" in err, err


def test_deep_teeth_are_one_note_for_all_wheels(tmp_path, capsys):
    # eight deep-toothed cycloidal wheels in the tide office were eight two-line notes
    assert main(["cut", "tide_office", "--out", str(tmp_path / "t")]) == 0
    out = capsys.readouterr().out
    assert out.count("deep teeth") == 1
    assert "deep teeth on 8 wheels: sun_w3 (addendum 2.05 m against 25 leaves)" in " ".join(
        out.split())


RING_DRIVE = ('[crank]\narbor = "crank"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
        'set = "angles"\n[arbors.crank]\nwheels = { cp = 14 }\n[arbors.drum]\n'
        'wheels = { ring_w = 90 }\n[[meshes]]\nwheels = ["cp", "ring_w"]\nring = "ring_w"\n'
        'module_mm = 0.8\n[pointers.p]\nshows = "moon"\narbor = "drum"\nset_deg = 0\n')


def test_a_pinion_inside_an_internal_wheel_is_drawn_involute(tmp_path, capsys):
    # The internal wheel is drawn involute only, so its pinion is too, whatever the train's
    # form: with the default cycloidal form the pinion was refused as 'cannot be drawn: max()
    # arg is an empty sequence', by cut and by check. Involute geometry (ISO 53 rack):
    # tip d + 2 m = 11.2 + 1.6 = 12.8 mm, root d − 2.5 m = 9.2 mm.
    train = tmp_path / "ring.toml"
    train.write_text(RING_DRIVE)
    assert main(["cut", str(train), "--out", str(tmp_path / "o"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    cp = parts["wheel-cp"]
    assert cp["form"] == "involute"
    assert cp["tip_diameter_mm"] == pytest.approx(12.8, abs=1e-6)
    assert cp["root_diameter_mm"] == pytest.approx(9.2, abs=1e-6)
    assert any("meshes the internal wheel 'ring_w'" in n for n in cp["notes"])
    # the ring's rim outside its root circle (d + 2.5 m = 72 + 2 = 74 mm, ISO 53) follows its
    # size as a crossed-out wheel's does: a tenth of the root radius, 3.7 mm, where a fixed
    # 3 modules gave 2.4 mm whatever the ring's size (common practice, no source)
    assert parts["wheel-ring_w"]["outside_diameter_mm"] == pytest.approx(74 + 2 * 3.7)
    loaded = load_train(train)
    report = check(loaded, solve(loaded))
    assert not report.has_errors
    # the same pinion also meshing a cycloidal wheel cannot be cut: one line saying which
    both = RING_DRIVE.replace('wheels = { cp = 14 }\n', 'wheels = { cp = 14 }\n[arbors.side]\n'
                        'wheels = { sd = 40 }\n') + \
        '[[meshes]]\nwheels = ["cp", "sd"]\nmodule_mm = 0.8\n'
    train.write_text(both)
    assert main(["cut", str(train), "--out", str(tmp_path / "p")]) == 1
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "mesh 2 (cp–sd)" in err
    assert "[workshop.wheels.sd]" in err and "max()" not in err


def test_a_wheel_placed_over_another_pivot_is_said(tmp_path, capsys):
    # The slot arbor's place is fixed by its pin-and-slot (3.5 mm from the pin arbor, which
    # mesh 2 puts 9.525 mm from a1): its 22-tooth wheel at module 2.54 (tip radius 32.04 mm,
    # cycloidal) covers a1's pivot 13.03 mm away and the crank's 16.84 mm away, and cut said
    # nothing (plane geometry, by hand: 9.525 + 3.5 = 13.025; + 3.81 = 16.835)
    train = tmp_path / "ps.toml"
    train.write_text(PIN_COVERS)
    assert main(["cut", str(train), "--out", str(tmp_path / "o")]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "as placed, wheel 'sw' (tip radius 32.04 mm) reaches over the pivots of crank " \
           "(16.84 mm away), a1 (13.03 mm away)" in out
    # the pin and slot wheels reach over each other's axes by design: not said
    assert "wheel 'pw'" not in out


PIN_COVERS = """[crank]
arbor = "crank"
days_per_turn = 1
[epoch]
date = "2026-01-01"
set = "angles"
[arbors.crank]
wheels = { c1 = 7 }
[arbors.a1]
wheels = { a1w = 53, a1p = 13 }
[arbors.pin]
wheels = { pw = 47 }
[arbors.slot]
wheels = { sw = 22 }
[arbors.hand]
wheels = { hw = 22 }
[[meshes]]
wheels = ["c1", "a1w"]
module_mm = 0.127
[[meshes]]
wheels = ["a1p", "pw"]
module_mm = 0.3175
[[meshes]]
wheels = ["sw", "hw"]
module_mm = 2.54
[pin_slots.anom]
pin = "pin"
slot = "slot"
pin_radius_mm = 4.0
offset_mm = 3.5
offset_deg = 0
pin_deg = 0
[pointers.moon]
shows = "moon"
arbor = "hand"
set_deg = 0
"""


def test_a_shared_axis_hole_is_said_to_be_drawn_at_the_pivot_size(tmp_path, capsys):
    # the tide office's perigee carrier, mean Moon and Moon hand turn on one axis, tubes on
    # one another: their hole in the frame was drawn at the 1 mm pivot without a word
    assert main(["cut", "tide_office", "--out", str(tmp_path / "t"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    (note,) = [n for n in parts["plate-frame"]["notes"] if "sharing an axis" in n]
    assert "(perigee_carrier/mean_moon/moon) drawn at the pivot's 1 mm" in note
    assert "outermost tube" in note
    assert not any("sharing" in n for n in parts["wheel-sun_w1"]["notes"])


def test_a_watch_fine_module_is_written_in_plain_figures(tmp_path, capsys):
    # module 0.00005 mm (a slip for 0.05, which check warns of): the parts table and the
    # drawings' labels wrote 5e-05 ('{:g}')
    train = tmp_path / "tiny.toml"
    train.write_text(
        '[crank]\narbor = "a"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\nset = "angles"\n'
        '[arbors.a]\nwheels = { a1 = 40 }\n[arbors.b]\nwheels = { b1 = 200 }\n'
        '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.00005\n'
        '[pointers.p]\nshows = "moon"\narbor = "b"\nset_deg = 0\n'
        '[workshop.wheels.a1]\nbore_mm = 0.0001\n[workshop.wheels.b1]\nbore_mm = 0.0001\n')
    out = tmp_path / "o"
    assert main(["cut", str(train), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "e-0" not in text and "0.00005" in text
    assert "module 0.00005," in (out / "wheel-b1.svg").read_text()


def test_pivot_holes_that_run_into_one_another_are_said(tmp_path, capsys):
    # The tide office's pin-and-slot axes are its offset, 0.985 mm, apart on the carrier's
    # plate: at the frame's 1 mm pivot holes the two are one figure-of-eight hole holding
    # neither arbor (plane geometry: 0.985 < 0.5 + 0.5); drawn without a word. The demo gives
    # those two arbors 0.45 mm pivots of their own, and its plate draws them so, clear.
    text = DEMO.read_text()
    assert text.count("pivot_mm = 0.45\n") == 2
    train = tmp_path / "wide.toml"
    train.write_text(text.replace("pivot_mm = 0.45\n", ""))
    assert main(["cut", str(train), "--out", str(tmp_path / "t"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    (note,) = [n for n in parts["plate-perigee_carrier"]["notes"] if "run into" in n]
    # the check's own words (engine.checks.hole_overlap_text), the distance as drawn
    assert note.startswith("the pivot holes of 'pin_arbor' and 'slot_arbor' are 0.985 mm apart")
    assert "(as drawn) but 1 mm across" in note
    assert "[arbors.pin_arbor] and [arbors.slot_arbor] pivot_mm" in note
    assert not any("run into" in n for n in parts["plate-frame"]["notes"])
    assert main(["cut", "tide_office", "--out", str(tmp_path / "d"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    plate = parts["plate-perigee_carrier"]
    assert not any("run into" in n for n in plate["notes"])
    sizes = {h["axis"]: h["pivot_mm"] for h in plate["holes"]}
    assert sizes["pin_arbor"] == sizes["slot_arbor"] == 0.45
    svg = (tmp_path / "d" / "plate-perigee_carrier.svg").read_text()
    assert "pivots 0.45 / 1 mm" in svg


def test_an_arbor_pivoted_in_a_cock_has_no_hole_in_that_plate(tmp_path, capsys):
    # [arbors.NAME] pivots_in: the tide office's pin arbor pivoted in the carrier's front
    # plate and a cock behind, the slot arbor in the back plate and a cock in front, at the
    # frame's 1 mm pivots (0.985 mm apart: two holes in one plate would run into one another).
    # The carrier gets a front and a back plate, each drilling one of the two and marking the
    # other's cock; the frame, whose arbors all pivot in both, stays one drawing.
    text = DEMO.read_text().replace("pivot_mm = 0.45\n", "")
    text = text.replace("wheels = { pin_wheel = 48 }\n",
                        'wheels = { pin_wheel = 48 }\npivots_in = "front"\n')
    text = text.replace("wheels = { slot_wheel = 40 }\n",
                        'wheels = { slot_wheel = 40 }\npivots_in = "back"\n')
    train = tmp_path / "cocks.toml"
    train.write_text(text)
    out = tmp_path / "t"
    assert main(["cut", str(train), "--out", str(out), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    assert "plate-perigee_carrier" not in parts and "plate-frame" in parts
    front, back = parts["plate-perigee_carrier-front"], parts["plate-perigee_carrier-back"]
    for part, drilled, cocked in ((front, "pin_arbor", "slot_arbor"),
                                  (back, "slot_arbor", "pin_arbor")):
        holes = {h["axis"] for h in part["holes"]}
        assert drilled in holes and cocked not in holes
        (cock,) = part["cocks"]
        assert cock["arbors"] == [cocked]
        assert not any("run into" in n for n in part["notes"])
        assert any(n.startswith(f"no hole for {cocked}: a cock or bridge holds its "
                                f"{part['side']} pivot") for n in part["notes"])
        doc = ezdxf.readfile(out / f"{part['name']}.dxf")
        cut = [(c.dxf.center.x, c.dxf.center.y) for c in doc.modelspace().query("CIRCLE")
               if c.dxf.layer == "CUT"]
        assert not any(math.dist(c, (cock["x_mm"], cock["y_mm"])) < UM for c in cut)
        marks = [c for c in doc.modelspace().query("CIRCLE") if c.dxf.layer == "MARK"]
        assert any(math.dist((c.dxf.center.x, c.dxf.center.y),
                             (cock["x_mm"], cock["y_mm"])) < UM for c in marks)
        assert f"cock: {cocked}" in (out / f"{part['name']}.svg").read_text()
        # the cock drawn (MARK) as a bar from its pivot to a foot with an M2 screw 12 mm away
        # (the tool's own proportions): checked with matplotlib's point-in-polygon, its outline
        # holds 2.5 mm of metal round the pivot hole and 4 mm round the screw, the foot stands
        # on the plate (inside its CUT outline) and clear of the drilled hole
        from matplotlib.path import Path as MplPath

        screw = (cock["screw"]["x_mm"], cock["screw"]["y_mm"])
        assert cock["screw"]["size_mm"] == 2.0
        assert math.dist(screw, (cock["x_mm"], cock["y_mm"])) == pytest.approx(12.0)
        assert any(math.dist((c.dxf.center.x, c.dxf.center.y), screw) < UM
                   and c.dxf.radius == pytest.approx(1.0) for c in marks)
        (bar,) = [np.array([(x, y) for x, y, *_ in e.get_points()])
                  for e in doc.modelspace().query("LWPOLYLINE")
                  if e.dxf.layer == "MARK" and e.closed]
        rim = cock["pivot_mm"] / 2 + 2.45
        ring = [(cock["x_mm"] + rim * math.cos(a), cock["y_mm"] + rim * math.sin(a))
                for a in np.linspace(0, 6.28, 40)]
        foot = [(screw[0] + 3.95 * math.cos(a), screw[1] + 3.95 * math.sin(a))
                for a in np.linspace(0, 6.28, 40)]
        assert MplPath(bar).contains_points(ring).all()
        assert MplPath(bar).contains_points(foot).all()
        assert MplPath(_outline(doc)).contains_points(foot).all()
        (hole,) = [h for h in part["holes"] if h["axis"] == drilled]
        assert math.dist(screw, (hole["x_mm"], hole["y_mm"])) > 4.0 + hole["pivot_mm"] / 2
    # the pin and slot 0.985 mm apart (the demo's offset_mm), one above the other
    assert math.dist((front["cocks"][0]["x_mm"], front["cocks"][0]["y_mm"]),
                     (back["cocks"][0]["x_mm"], back["cocks"][0]["y_mm"])) == pytest.approx(0.985)
    # the balance is said once, for both plates
    assert any("front and back plates" in n for n in front["notes"])
    assert not any("out of balance" in n for n in back["notes"])
    # the text output lists each cock under its plate
    assert main(["cut", str(train), "--out", str(tmp_path / "u")]) == 0
    said = capsys.readouterr().out
    for part in (front, back):
        (c,) = part["cocks"]
        assert (f"cock for {c['arbors'][0]} ({part['side']} pivot, no hole): "
                f"{fixed(c['x_mm'], 4)}, {fixed(c['y_mm'], 4)}") in said


STUD_ON_CARRIER = ('[crank]\narbor = "k"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
                   'set = "angles"\n[arbors.k]\nwheels = {}\n'
                   '[arbors.st]\non = "k"\nfixed = true\nwheels = { sw = 30 }\n'
                   '[arbors.q]\non = "k"\nwheels = { qw = 24 }\n'
                   '[[meshes]]\nwheels = ["sw", "qw"]\nmodule_mm = 1\n'
                   '[pointers.p]\nshows = "sun"\narbor = "k"\nset_deg = 0\n')


def _cut_json(tmp_path, capsys, text: str, name: str) -> dict:
    path = tmp_path / f"{name}.toml"
    path.write_text(text)
    assert main(["cut", str(path), "--out", str(tmp_path / name), "--json"]) == 0
    return {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}


def test_a_group_of_holes_tied_to_nothing_fixed_is_said_to_be_placed_apart(tmp_path, capsys):
    # a stud fixed on carrier k and the arbor meshing it: their two holes keep their centre
    # distance (27 mm, module 1, 30 + 24 teeth), but no mesh ties them to the carrier's own
    # axis, so where the pair stands on the plate is the placement's choice, not a measure:
    # said in the notes and on the drawing, as a lone axis is
    parts = _cut_json(tmp_path, capsys, STUD_ON_CARRIER, "stud")
    plate = parts["plate-k"]
    assert plate["placed_apart"] == [["st", "q"]]
    (note,) = [n for n in plate["notes"] if "placed apart" in n]
    assert "tied by no mesh with a module to the rest of this plate" in note
    assert note.endswith(": st, q")
    (d,) = plate["distances"]
    assert d["drawn_mm"] == pytest.approx(27.0, abs=UM)
    # wrapped to the plate's width in lines under its title, read back whole
    words = "placed apart, not measured from the rest of the plate (set at_mm): st, q"
    svg = (tmp_path / "stud" / "plate-k.svg").read_text()
    assert words in " ".join(re.findall(r"<text[^>]*>([^<]*)</text>", svg))
    texts = [t.dxf.text for t in ezdxf.readfile(tmp_path / "stud" / "plate-k.dxf")
             .modelspace().query("TEXT")]
    assert words in " ".join(texts)
    # the stud placed by the file: the group stands where it is put, no note
    fixed_stud = STUD_ON_CARRIER.replace('fixed = true\n', 'fixed = true\nat_mm = [30, 0]\n')
    parts = _cut_json(tmp_path, capsys, fixed_stud, "placed")
    assert parts["plate-k"]["placed_apart"] == []
    assert not any("placed apart" in n for n in parts["plate-k"]["notes"])


def test_with_nothing_fixed_the_largest_group_stands_for_the_plate(tmp_path, capsys):
    # on the frame: a stud and its arbor (first in the file), and the crank's chain of three
    # axes; nothing placed by the file, so the larger group stands for the plate and the pair
    # is the one placed apart; a lone arbor tied to nothing is placed apart too, on its own
    text = ('[crank]\narbor = "a"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
            'set = "angles"\n[arbors.st]\nfixed = true\nwheels = { sw = 30 }\n'
            '[arbors.q]\nwheels = { qw = 24 }\n[arbors.a]\nwheels = { a1 = 20 }\n'
            '[arbors.b]\nwheels = { b1 = 40, b2 = 12 }\n[arbors.c]\nwheels = { c1 = 36 }\n'
            '[[meshes]]\nwheels = ["sw", "qw"]\nmodule_mm = 1\n'
            '[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.5\n'
            '[[meshes]]\nwheels = ["b2", "c1"]\nmodule_mm = 0.5\n'
            '[pointers.p]\nshows = "sun"\narbor = "c"\nset_deg = 0\n')
    plate = _cut_json(tmp_path, capsys, text, "frame")["plate-frame"]
    assert plate["placed_apart"] == [["st", "q"]]
    plate = _cut_json(tmp_path, capsys, text + "[arbors.lone]\nfixed = true\nwheels = {}\n",
                      "lone")["plate-frame"]
    assert plate["placed_apart"] == [["lone"], ["st", "q"]]
    # the demo trains' plates are every one measured: nothing placed apart
    assert main(["cut", "tide_office", "--out", str(tmp_path / "demo"), "--json"]) == 0
    demo = json.loads(capsys.readouterr().out)["parts"]
    assert all(p["placed_apart"] == [] for p in demo if p["kind"] == "plate")


@pytest.mark.parametrize("module", [0.001, 0.01, 0.05, 0.5, 5.0])
def test_the_default_bore_fits_every_blank_and_is_never_named_as_chosen(tmp_path, capsys,
                                                                        module):
    # Without a bore_mm in the file the drawn bore is the tool's own: at module 0.01 it was
    # 0.05 mm, wider than an 8-leaf pinion's 0.044 mm root circle, and cut stopped with "a
    # bore of 0.05 mm is wider than the root circle" about a bore nobody chose (plane
    # geometry: a hole fits inside a circle when its diameter is the smaller)
    text = SMALL.read_text().replace("bore_mm = 1.5\n", "").replace(
        "module_mm = 0.5", f"module_mm = {module}").replace("module_mm = 0.6",
                                                           f"module_mm = {module}")
    path = tmp_path / "fine.toml"
    path.write_text(text)
    assert main(["cut", str(path), "--out", str(tmp_path / "o"), "--json"]) == 0
    parts = [p for p in json.loads(capsys.readouterr().out)["parts"] if p["kind"] == "wheel"]
    for p in parts:
        assert p["bore_chosen"] is False
        if "bore_mm" not in p:  # a pinion too small to bore: cut on its arbor, nothing cut
            (note,) = [n for n in p["notes"] if "cut the leaves on the arbor" in n]
            assert "the file choosing no bore_mm, none is cut" in note
            assert p["root_diameter_mm"] / 2 < 1.25 * module  # no room for 0.4 of it
            continue
        assert 0 < p["bore_mm"] <= 0.4 * p["root_diameter_mm"] + 1e-12, p["wheel"]
        assert p["bore_mm"] <= 2.0
        wall = (p["root_diameter_mm"] - p["bore_mm"]) / 2
        assert wall >= module * (1 - 1e-9)  # a module of metal under the teeth
        assert not any("bore (" in n for n in p["notes"])


def test_a_chosen_bore_too_wide_names_where_it_was_chosen(tmp_path, capsys):
    path = tmp_path / "wide.toml"
    path.write_text(SMALL.read_text().replace("bore_mm = 1.5", "bore_mm = 4"))
    assert main(["cut", str(path), "--out", str(tmp_path / "o")]) == 1
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "wide.toml: wheel 'drive_pinion'" in err
    assert "the bore of 4 mm ([workshop] bore_mm) is wider than the root circle" in err


BIG_AND_SMALL = """
[train]
name = "Big and small"
[crank]
arbor = "a"
days_per_turn = 1
[epoch]
date = "2026-01-01"
set = "angles"
[arbors.a]
wheels = { a1 = 12 }
[arbors.b]
wheels = { b1 = 300, b2 = 10 }
[arbors.c]
wheels = { c1 = 40 }
[[meshes]]
wheels = ["a1", "b1"]
module_mm = 0.5
[[meshes]]
wheels = ["b2", "c1"]
module_mm = 0.5
[pointers.p]
shows = "sun"
arbor = "c"
set_deg = 0
[workshop]
crossings = CROSSINGS
"""


def _blanks(tmp_path, capsys, crossings):
    path = tmp_path / "big_small.toml"
    path.write_text(BIG_AND_SMALL.replace("CROSSINGS", crossings))
    out = tmp_path / "o"
    assert main(["cut", str(path), "--out", str(out), "--json", "--force"]) == 0
    parts = json.loads(capsys.readouterr().out)["parts"]
    return {p["wheel"]: p for p in parts if p["kind"] == "wheel"}, out


def _windows(dxf_path):
    """The crossing windows read back from a wheel's DXF: every closed CUT outline but the
    teeth (the one reaching farthest out), as arrays of points."""
    msp = ezdxf.readfile(dxf_path).modelspace()
    polys = [np.array([(p[0], p[1]) for p in e.get_points("xy")])
             for e in msp.query("LWPOLYLINE") if e.dxf.layer == "CUT" and e.closed]
    teeth = max(polys, key=lambda p: np.hypot(*p.T).max())
    return [p for p in polys if p is not teeth]


def test_a_crossed_out_wheel_is_proportioned_to_its_size(tmp_path, capsys):
    # The rim, hub and crossings grow with the wheel: at one module, the 300-tooth wheel's rim
    # is a tenth of its root radius (7.4 mm, not the 1.5 mm of a fixed 3 modules), and its
    # crossings 5.8 mm at the rim where a fixed width of 3 modules left 1.5 mm spokes across a
    # 150 mm wheel (proportions: common practice, no source; engine.drawing's constants)
    wheels, out = _blanks(tmp_path, capsys, "6")
    big, small = wheels["b1"], wheels["c1"]
    for w in (big, small):
        root_r, m = w["root_diameter_mm"] / 2, w["module_mm"]
        assert w["rim_mm"] == pytest.approx(max(0.1 * root_r, 2 * m))
        windows = _windows(out / f"wheel-{w['wheel']}.dxf")
        assert len(windows) == w["crossings"] == 6
        radii = np.concatenate([np.hypot(*p.T) for p in windows])
        assert radii.max() == pytest.approx(root_r - w["rim_mm"], abs=UM)  # the rim's inside
        assert radii.min() == pytest.approx(w["hub_diameter_mm"] / 2, abs=UM)
    assert big["rim_mm"] > 12 * big["module_mm"]  # 3 modules was spindly on 300 teeth
    assert big["crossing_width_mm"]["at_rim"] > 10 * big["module_mm"]
    ratio = big["root_diameter_mm"] / small["root_diameter_mm"]
    width = big["crossing_width_mm"]["at_rim"] / small["crossing_width_mm"]["at_rim"]
    assert width == pytest.approx(ratio, rel=0.15)  # widths follow the wheel, not the tooth
    assert big["hub_diameter_mm"] == pytest.approx(0.2 * big["root_diameter_mm"])


def test_crossings_taper_to_the_rim_and_the_windows_corners_are_rounded(tmp_path, capsys):
    # a crossing is wider at the hub than at the rim (clockmakers taper their crossings:
    # clickspringprojects.com, "Wheel Crossing Jig"); measured on the DXF, no window comes
    # nearer a crossing's centre line than half its width at the rim, and the windows' corners
    # are rounded (a quarter of that width, common practice, no source): the sharp corner
    # where a crossing's edge meets the rim is not cut
    wheels, out = _blanks(tmp_path, capsys, "6")
    big = wheels["b1"]
    w, rho = big["crossing_width_mm"], big["corner_radius_mm"]
    assert w["at_hub"] > 1.2 * w["at_rim"]
    assert rho == pytest.approx(0.25 * w["at_rim"])
    windows = _windows(out / "wheel-b1.dxf")
    rim_inner = big["root_diameter_mm"] / 2 - big["rim_mm"]
    hub = big["hub_diameter_mm"] / 2
    step = 2 * math.pi / 6
    pts = np.vstack(windows)
    r = np.hypot(*pts.T)
    assert r.max() <= rim_inner + UM and r.min() >= hub - UM  # within the rim and the hub
    ang = np.arctan2(pts[:, 1], pts[:, 0])
    centre = np.round(ang / step) * step  # the nearest crossing's centre line
    off = np.abs(pts[:, 0] * np.sin(centre) - pts[:, 1] * np.cos(centre))
    assert off.min() >= w["at_rim"] / 2 - UM  # no window eats into a crossing
    assert off.min() <= w["at_rim"] / 2 + rho  # and the crossing is no wider there
    d_out = math.asin(w["at_rim"] / 2 / rim_inner)
    for k in range(6):  # where the sharp corners were, the rounds stand clear
        for t in (k * step + d_out, (k + 1) * step - d_out):
            corner = np.array([rim_inner * math.cos(t), rim_inner * math.sin(t)])
            assert np.hypot(*(pts - corner).T).min() > 0.2 * rho


def test_auto_crossings_follow_the_wheels_size_and_leave_pinions_solid(tmp_path, capsys):
    # 4, 5, 6 and 8: the traditional counts (clickspringprojects.com, "Wheel Crossing Jig");
    # which for which size: engine.drawing.CROSSING_COUNTS (common practice, no source)
    wheels, _ = _blanks(tmp_path, capsys, '"Auto"')
    assert wheels["b1"]["crossings"] == 6  # 150 mm across
    assert wheels["c1"]["crossings"] == 4  # 20 mm across
    assert "crossings" not in wheels["a1"] and "crossings" not in wheels["b2"]  # pinions
    assert not any("left solid" in n for w in wheels.values() for n in w["notes"])
    text = BIG_AND_SMALL.replace("CROSSINGS", '"many"')
    with pytest.raises(TrainError) as exc:
        parse_train(text, "w.toml")
    assert exc.value.item == "[workshop] crossings" and '"auto"' in exc.value.problem


def test_a_count_asked_of_a_wheel_too_small_is_said_and_pinions_stay_solid(tmp_path, capsys):
    # a count for the whole train is for its wheels: its pinions (under 20 leaves) are cut
    # from the solid without a note each; a wheel too small for the count is said
    wheels, _ = _blanks(tmp_path, capsys, "16")
    assert wheels["b1"]["crossings"] == 16
    assert "crossings" not in wheels["c1"]
    assert any("too small for 16 crossings" in n for n in wheels["c1"]["notes"])
    for pinion in ("a1", "b2"):
        assert "crossings" not in wheels[pinion] and not wheels[pinion]["notes"], pinion
    path = tmp_path / "own.toml"  # a pinion's own count is its maker's choice: said
    path.write_text(BIG_AND_SMALL.replace("CROSSINGS", "0") + "[workshop.wheels.a1]\n"
                    "crossings = 5\n")
    assert main(["cut", str(path), "--out", str(tmp_path / "own"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    assert any("too small for 5 crossings" in n for n in parts["wheel-a1"]["notes"])


def test_a_large_wheel_cut_to_the_pinion_form_is_not_called_leaves(capsys, tmp_path):
    # the planet dial's 96-tooth mars_fixed is the smaller of its mesh with 109 and so takes
    # the cycloidal pinion form; its title said "96 leaves ... cycloidal pinion", the word for
    # the few leaves of a pinion cut on its arbor (common practice, no source)
    assert main(["cut", "planet_dial", "--out", str(tmp_path / "p"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    title = parts["wheel-mars_fixed"]["title"]
    assert title == ("mars_fixed: 96 teeth, module 0.5, cycloidal wheel, pinion form (the "
                     "smaller of its mesh)")
    assert parts["wheel-mars_fixed"]["role"] == "pinion"  # the form, as before


def test_the_table_marks_a_bore_the_file_did_not_choose(tmp_path, capsys):
    # the workshop test train chooses 1.5 mm for all; the lunation board chooses none, and its
    # 2 mm bores were listed as if they were the maker's
    assert main(["cut", str(SMALL), "--out", str(tmp_path / "s")]) == 0
    out = capsys.readouterr().out
    assert "1.5*" not in out and "* bore:" not in out
    assert main(["cut", "lunation_board", "--out", str(tmp_path / "l")]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert " 2* " in out and " 1.7* " in out
    assert "* bore: the tool's own (2 mm, less on a small pinion), the file choosing none: " \
        "set bore_mm in [workshop] to your arbors" in out


def test_auto_crossing_counts_by_diameter():
    # engine.drawing.CROSSING_COUNTS (4, 5, 6, 8: the traditional counts, clickspringprojects
    # .com "Wheel Crossing Jig"; the sizes common practice, no source): a wheel under 20 mm or
    # of fewer than 20 teeth is left solid
    from engine.drawing import crossing_count
    from engine.toothform import involute_wheel

    assert crossing_count(involute_wheel(26, 0.6)) == 0  # 15.6 mm: windows a few mm long
    assert crossing_count(involute_wheel(19, 2.0)) == 0  # a pinion, 38 mm across
    assert crossing_count(involute_wheel(40, 0.5)) == 4  # 20 mm
    assert crossing_count(involute_wheel(127, 0.5)) == 5  # 63.5 mm
    assert crossing_count(involute_wheel(300, 0.5)) == 6  # 150 mm
    assert crossing_count(involute_wheel(170, 1.0)) == 8  # 170 mm


def test_a_pinion_too_small_to_bore_is_cut_on_its_arbor_and_not_bored(tmp_path, capsys):
    # a 5-leaf cycloidal pinion's root circle is 0.83 of a module in radius (2.5 m less the
    # 1.67 m dedendum the 6-7 leaf row gives it, docs/workshop.md): no bore leaves a module of
    # metal under its leaves, so (the file choosing none) it is cut on its arbor and no bore
    # is drawn on the CUT layer
    path = tmp_path / "five.toml"
    path.write_text(BIG_AND_SMALL.replace("CROSSINGS", "0").replace("a1 = 12", "a1 = 5"))
    out = tmp_path / "o"
    assert main(["cut", str(path), "--out", str(out), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    six = parts["wheel-a1"]
    assert "bore_mm" not in six and six["bore_chosen"] is False
    assert any("cut the leaves on the arbor" in n for n in six["notes"])
    circles = ezdxf.readfile(out / "wheel-a1.dxf").modelspace().query("CIRCLE")
    assert not [c for c in circles if c.dxf.layer == "CUT"]
    assert [c for c in circles if c.dxf.layer == "MARK"]
    assert "bore_mm" in parts["wheel-b1"]  # the wheel it drives is bored as before


def test_a_carrier_plate_can_be_a_disc_round_its_axis(tmp_path, capsys):
    # --carrier-outline disc: the planet dial's Venus carrier as a disc centred on its own
    # axis (the rectangle ran 6 mm one side of it and 102 mm the other), covering the
    # epicycle wheel's tips by 2 mm, its names inside; the frame stays a rectangle, and the
    # balance note says the plate is in balance while its wheel is not
    assert main(["cut", "planet_dial", "--out", str(tmp_path / "d"), "--carrier-outline",
                 "disc", "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    venus = parts["plate-venus_deferent"]
    assert venus["outline"] == "disc"
    doc = ezdxf.readfile(tmp_path / "d" / "plate-venus_deferent.dxf")
    (edge,) = [e for e in doc.modelspace().query("LWPOLYLINE") if e.dxf.layer == "CUT"]
    radii = [math.hypot(x, y) for x, y, *_ in edge.get_points()]
    train = load_train(HERE.parent / "engine" / "trains" / "planet_dial.toml")
    tip = tooth_forms(train)["venus_epi"].tip_radius_mm
    assert min(radii) == pytest.approx(max(radii), abs=UM)  # a circle round the axis
    assert max(radii) == pytest.approx(61.2 + tip + 2, abs=UM)
    (note,) = [n for n in venus["notes"] if "out of balance" in n]
    assert "is in balance about its axis" in note and "venus_epi" not in note
    assert "--carrier-outline" not in note
    assert main(["cut", "planet_dial", "--out", str(tmp_path / "b"), "--json"]) == 0
    parts = {p["name"]: p for p in json.loads(capsys.readouterr().out)["parts"]}
    assert parts["plate-venus_deferent"]["outline"] == "box"
    (note,) = [n for n in parts["plate-venus_deferent"]["notes"] if "out of balance" in n]
    assert "for each mm of brass plate" in note and "--carrier-outline disc" in note


ARM_TRAIN = ('[crank]\narbor = "arm"\ndays_per_turn = 1\n[epoch]\ndate = "2026-01-01"\n'
             'set = "angles"\n[arbors.arm]\nwheels = {}\n'
             '[arbors.sun]\nwheels = { sun = 40 }\nfixed = true\naxis_with = "arm"\n'
             '[arbors.planet]\nwheels = { pw = 20 }\non = "arm"\nat_mm = AT\n'
             '[[meshes]]\nwheels = ["sun", "pw"]\nmodule_mm = 1\n'
             '[pointers.p]\nshows = "sun"\narbor = "planet"\nset_deg = 0\n')


def _cut_arm(tmp_path, capsys, text, name):
    path = tmp_path / f"{name}.toml"
    path.write_text(text)
    code = main(["cut", str(path), "--out", str(tmp_path / name), "--carrier-outline", "arm",
                 "--json"])
    out = capsys.readouterr()
    return code, out


@pytest.mark.parametrize("deg, plates", [(0.0, 1), (45.0, 1), (113.5, 1), (45.0, 2)])
def test_a_carrier_cut_as_an_arm_is_balanced_by_its_counterweight(tmp_path, capsys, deg,
                                                                   plates):
    # --carrier-outline arm: arms from the carrier's axis to its holes and a counterweight arm
    # opposite, sized so that plate and planet balance. Checked against the drawn outline
    # with matplotlib's point-in-polygon on a 0.05 mm grid (an outside library, area and
    # first moment by counting cells) and the planet weighed by hand: a solid brass disc of
    # its 10 mm pitch radius and 3 mm face (3 modules), 8.47e-3 · π · 10² · 3 g, at its axis
    from matplotlib.path import Path as MplPath

    at = (30 * math.cos(math.radians(deg)), 30 * math.sin(math.radians(deg)))  # the mesh's 30 mm
    text = ARM_TRAIN.replace("AT", f"[{at[0]!r}, {at[1]!r}]")
    if plates == 2:  # a cage: both plates cut alike, so the counterweight is sized for two
        text = text.replace("[arbors.arm]\n", "[arbors.arm]\nplates = 2\n", 1)
    code, out = _cut_arm(tmp_path, capsys, text + "[workshop]\ncarrier_plate_mm = 1.5\n",
                         "arm")
    assert code == 0, out.err
    parts = {p["name"]: p for p in json.loads(out.out)["parts"]}
    plate = parts["plate-arm"]
    assert plate["outline"] == "arm" and parts["plate-frame"]["outline"] == "box"
    cw = plate["counterweight"]
    doc = ezdxf.readfile(tmp_path / "arm" / "plate-arm.dxf")
    (edge,) = [e for e in doc.modelspace().query("LWPOLYLINE")
               if e.dxf.layer == "CUT" and e.closed]
    poly = np.array([(x, y) for x, y, *_ in edge.get_points()])
    step = 0.05
    xs = np.arange(poly[:, 0].min(), poly[:, 0].max(), step) + step / 2
    ys = np.arange(poly[:, 1].min(), poly[:, 1].max(), step) + step / 2
    gx, gy = np.meshgrid(xs, ys)
    pts = np.column_stack([gx.ravel(), gy.ravel()])
    inside = MplPath(poly).contains_points(pts)
    cells = pts[inside]
    plate_gmm = 8.47e-3 * 1.5 * plates * step ** 2 * cells.sum(axis=0)
    grams = 8.47e-3 * math.pi * 10 ** 2 * 3
    total = plate_gmm + grams * np.array(at)
    assert math.hypot(*total) < 0.5  # of some 240 g·mm the planet puts out
    # the counterweight stands opposite the planet, and the planet's pivot has 6 mm of metal
    along = -(cw["x_mm"] * at[0] + cw["y_mm"] * at[1]) / (
        math.hypot(cw["x_mm"], cw["y_mm"]) * math.hypot(*at))
    assert along > math.cos(0.02)
    ring = [(at[0] + 5.9 * math.cos(a), at[1] + 5.9 * math.sin(a))
            for a in np.linspace(0, 2 * math.pi, 36)]
    assert MplPath(poly).contains_points(ring).all()
    (note,) = [n for n in plate["notes"] if "cut as arms" in n]
    assert "counterweight arm opposite" in note and "design estimate" in note
    assert ("thick, front and back" in note) == (plates == 2)
    assert ("its arms weighed as one plate" in note) == (plates == 1)
    assert plate["residual_gmm"] < 0.01


def test_an_arm_needs_the_plate_thickness_and_a_balanced_one_no_counterweight(tmp_path,
                                                                             capsys):
    code, out = _cut_arm(tmp_path, capsys, ARM_TRAIN.replace("AT", "[30, 0]"), "thin")
    assert code == 1
    assert out.err.strip().endswith("[workshop] carrier_plate_mm: is needed by "
                                    "--carrier-outline arm, which sizes the counterweight for "
                                    "the plate's thickness: give the carrier plate's thickness "
                                    "in mm")
    assert out.err.count("\n") == 1
    # two planets opposite: arms and wheels balance already, no counterweight
    twin = ARM_TRAIN.replace("AT", "[30, 0]").replace(
        '[[meshes]]', '[arbors.twin]\nwheels = { tw = 20 }\non = "arm"\nat_mm = [-30, 0]\n'
        '[[meshes]]\nwheels = ["sun", "tw"]\nmodule_mm = 1\n[[meshes]]', 1)
    code, out = _cut_arm(tmp_path, capsys, twin + "[workshop]\ncarrier_plate_mm = 2\n", "twin")
    assert code == 0
    plate = {p["name"]: p for p in json.loads(out.out)["parts"]}["plate-arm"]
    assert plate["counterweight"] is None
    assert any("balance about its axis without a counterweight" in n for n in plate["notes"])


@pytest.mark.parametrize("post_x, fires", [(42.0, True), (50.0, False), (33.0, False)])
def test_a_counterweight_sweeping_past_its_arms_over_a_pivot_is_said(tmp_path, capsys, post_x,
                                                                    fires):
    # a frame arbor beside the carrier (a fixed post): its pivot (1 mm, [workshop] pivot_mm's default) is in
    # the counterweight's sweep when its near edge, post_x - 0.5 mm from the carrier's axis,
    # lies within the round end's far edge (its centre's distance plus its radius, from --json)
    # and outside the arms' own sweep (the planet's hole 30 mm out, plus its 6 mm round end):
    # 42 mm is in that ring, 50 mm beyond it, 33 mm within the arms' sweep already
    text = (ARM_TRAIN.replace("AT", "[30, 0]").replace(
        "[arbors.sun]", f"[arbors.post]\nwheels = {{}}\nfixed = true\nat_mm = [{post_x}, 0]\n"
        "[arbors.sun]")
        .replace('[arbors.arm]\n', '[arbors.arm]\nat_mm = [0, 0]\n')
        + "[workshop]\ncarrier_plate_mm = 1.5\n")
    code, out = _cut_arm(tmp_path, capsys, text, "post")
    assert code == 0, out.err
    plate = {p["name"]: p for p in json.loads(out.out)["parts"]}["plate-arm"]
    cw = plate["counterweight"]
    reach = math.hypot(cw["x_mm"], cw["y_mm"]) + cw["radius_mm"]
    assert (36.0 <= post_x - 0.5 < reach + 0.5) == fires
    said = [n for n in plate["notes"] if "sweeps out to" in n]
    assert bool(said) == fires
    path = tmp_path / "post.toml"
    assert main(["check", str(path), "--json"]) == 0
    found = [f for f in json.loads(capsys.readouterr().out)["findings"]
             if "sweeps out to" in f["message"]]
    assert bool(found) == fires
    if fires:
        assert "the pivot of post (its nearest 41.50 mm from the axis)" in said[0]
        assert found[0]["level"] == "warning" and found[0]["item"] == "[arbors.arm]"
        assert "--carrier-outline arm" in found[0]["message"]
        assert "keep each out of the counterweight's plane" in found[0]["fix"]


@pytest.mark.parametrize("demo", ["planet_dial", "table_orrery", "tide_office"])
def test_the_demos_counterweights_sweep_only_what_they_reach(tmp_path, capsys, demo):
    # each demo carrier cut as arms at 1.5 mm: measured here from the cut's --json (the plates'
    # holes and pivots, the counterweight), a pivot of the carrier's mount lying past the arms'
    # ends and within the round end's far edge must be said, and a carrier none of whose
    # mount's pivots or wheels is said must have none there. The planet dial's frame is not
    # drawn (meshes without a module), so nothing is measured from it; the table orrery's
    # counterweight reaches nothing its arms do not; the tide office's perigee counterweight
    # (39 mm across, 24 mm out) reaches the day arbor's pivot
    text = (HERE.parent / "engine" / "trains" / f"{demo}.toml").read_text()
    assert "[workshop]" not in text
    code, out = _cut_arm(tmp_path, capsys, text + "\n[workshop]\ncarrier_plate_mm = 1.5\n",
                         demo)
    assert code == 0, out.err
    parts = json.loads(out.out)["parts"]
    train = load_train(tmp_path / f"{demo}.toml")
    swept = {}
    for p in parts:
        if p.get("outline") != "arm" or p["counterweight"] is None:
            continue
        cw, mount = p["counterweight"], train.arbors[p["mount"]].mount
        arms = max(math.hypot(h["x_mm"], h["y_mm"]) for h in p["holes"]) + 6.0
        far_edge = math.hypot(cw["x_mm"], cw["y_mm"]) + cw["radius_mm"] + 0.5
        said = any("sweeps out to" in n for n in p["notes"])
        parent = [q for q in parts if q["kind"] == "plate" and q["mount"] == mount]
        if not parent:
            swept[p["mount"]] = False
            assert not said
            continue
        (home,) = [h for h in parent[0]["holes"] if p["mount"] in h["arbors"]]
        edges = [math.hypot(h["x_mm"] - home["x_mm"], h["y_mm"] - home["y_mm"])
                 - h["pivot_mm"] / 2 for h in parent[0]["holes"] if h is not home]
        swept[p["mount"]] = any(arms <= e < far_edge for e in edges)
        if swept[p["mount"]]:
            assert said
        assert said == (demo == "tide_office")
    assert swept and any(swept.values()) == (demo == "tide_office")


def test_dxf_text_takes_the_room_the_layout_gave_it(tmp_path):
    # a DXF text's height is its capitals', an SVG font size its em: the layout measures an
    # em (0.62 of it a character), so the DXF writes 0.7 of it, the capitals of a plain
    # sans-serif face (from memory); written at the whole em, the tide office sheet's wheel
    # names ran into their neighbours' when drawn
    from engine.drawing import DXF_CAP_SHARE, to_dxf

    train = load_train(DEMO)
    part = next(p for p in cut_parts(train, solve(train)).parts if p.kind == "wheel")
    doc = ezdxf.read(io.StringIO(to_dxf(part)))
    heights = {t.dxf.text: t.dxf.height for t in doc.modelspace().query("TEXT")}
    assert DXF_CAP_SHARE == 0.7
    for *_, h, t in part.texts:
        assert heights[t] == pytest.approx(0.7 * h, rel=1e-12)


def test_a_hole_name_set_away_from_its_hole_has_a_leader():
    # the tide office's pin and slot arbors stand 0.985 mm apart on the carrier: their names
    # are stepped down past each other, and each gets a line (NOTE layer) from its own hole
    # to its name, so the two can be told apart; a name beside its hole gets none
    from engine.drawing import _text_width

    train = load_train(DEMO)
    plate = next(p for p in cut_parts(train, solve(train)).parts
                 if p.name == "plate-perigee_carrier")
    holes = {h["axis"]: (h["x_mm"], h["y_mm"]) for h in plate.info["holes"]}
    leaders = [p for layer, p in plate.lines if layer == "NOTE"]
    led = set()
    for x, y, h, t in plate.texts:
        if t not in holes:
            continue
        hx, hy = holes[t]
        box = (x, y, x + _text_width(t, h), y + h)
        ends = [p for p in leaders if tuple(p[0]) == (hx, hy)
                and box[0] - UM <= p[1][0] <= box[2] + UM and box[1] - UM <= p[1][1] <= box[3] + UM]
        if ends:
            led.add(t)
    assert led == {"pin_arbor", "slot_arbor"}
