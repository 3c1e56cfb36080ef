"""A generator of malformed train files, and a runner that feeds them to a command.

``make_cases(folder)`` writes well over a hundred bad train files (wrong types, missing and
unknown keys, bad fractions and dates, limits, nesting, encodings, names with control
characters, trains that cannot work) and special files (a FIFO, a link to a device, a folder, a
missing path, a link loop), and returns ``(label, path)`` pairs. Every one must be refused by
the loader/solver and by every command that reads a train with one line naming the file: no
traceback, no hang.

Run as ``python -m tests.bad_trains COMMAND FOLDER [ARGS...]``: writes the cases into FOLDER,
runs ``wheelwork COMMAND CASE ARGS`` in this process for each (each under a 20 s alarm), and
prints one JSON line per case: label, exit code, what reached stderr, any exception.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
import signal
import sys
from pathlib import Path

GOOD = """[train]
name = "bad-file bench"
[crank]
arbor = "a"
days_per_turn = "6940/235"
[epoch]
date = "2026-01-01 00:00"
set = "angles"
[arbors.a]
wheels = { a1 = 20 }
[arbors.b]
wheels = { b1 = 40 }
[[meshes]]
wheels = ["a1", "b1"]
module_mm = 0.5
[pointers.p]
shows = "moon"
arbor = "b"
reversed = true
set_deg = 0
"""


def _sub(old: str, new: str) -> str:
    assert old in GOOD, old
    return GOOD.replace(old, new, 1)


def _texts() -> list[tuple[str, str | bytes]]:
    """(label, file content) of every malformed file that is a plain file."""
    cases: list[tuple[str, str | bytes]] = []

    def add(label, content):
        cases.append((label, content))

    # syntax and encodings
    add("empty file", "")
    add("only a comment", "# nothing here\n")
    add("toml: unclosed table", _sub("[[meshes]]", "[[meshes]"))
    add("toml: bare words", GOOD + "this is not toml\n")
    add("toml: duplicate key", _sub('arbor = "a"\n', 'arbor = "a"\narbor = "b"\n'))
    add("toml: table twice", _sub("[arbors.b]\n", "[arbors.b]\nnote = 'x'\n[arbors.b]\n"))
    add("toml: unterminated string", _sub('name = "bad-file bench"', 'name = "bad'))
    add("toml: truncated", GOOD[: len(GOOD) // 2])
    add("latin-1 bytes", GOOD.replace("bench", "b\u00e9nch").encode("latin-1"))
    add("utf-16 with BOM", GOOD.encode("utf-16"))
    add("NUL bytes", GOOD.encode() + b"\x00\x00\x00")
    add("random binary", bytes(range(256)) * 8)
    add("json instead of toml", '{"train": {"name": "x"}}')
    add("BOM then garbage", b"\xef\xbb\xbf" + b"[[[")
    # nesting
    add("arrays nested 400", GOOD + "x = " + "[" * 400 + "]" * 400 + "\n")
    add("arrays nested 100000", GOOD + "x = " + "[" * 100_000 + "]" * 100_000 + "\n")
    add("inline tables nested 2000", GOOD + "x = " + "{a = " * 2000 + "1" + "}" * 2000 + "\n")
    add("dotted keys 5000 deep", "a." * 5000 + "b = 1\n" + GOOD)
    add("unclosed brackets 100000", GOOD + "x = " + "[" * 100_000 + "\n")
    # sections
    add("unknown section", GOOD + "[gears]\nx = 1\n")
    add("[train] is a number", "train = 5\n" + GOOD.replace('[train]\nname = "bad-file bench"\n', ""))
    add("no arbors", GOOD.split("[arbors.a]")[0] + "[pointers.p]\nshows = \"sun\"\narbor = \"a\"\n")
    add("arbors is a list", _sub("[arbors.a]\nwheels = { a1 = 20 }\n[arbors.b]\nwheels = { b1 = 40 }\n",
                                 "arbors = [1, 2]\n"))
    add("no crank", _sub('[crank]\narbor = "a"\ndays_per_turn = "6940/235"\n', ""))
    add("crank is a list", _sub('[crank]\narbor = "a"\ndays_per_turn = "6940/235"\n', "crank = [1]\n"))
    add("no epoch", _sub('[epoch]\ndate = "2026-01-01 00:00"\nset = "angles"\n', ""))
    add("no pointers", GOOD.split("[pointers.p]")[0])
    add("meshes is a table", GOOD.replace('[[meshes]]\nwheels = ["a1", "b1"]\nmodule_mm = 0.5\n', "")
        + "[meshes]\nx = 1\n")
    add("pin_slots is a list", GOOD + "pin_slots = [1]\n")
    # unknown keys, one per kind of table
    add("unknown key in [train]", _sub('name = "bad-file bench"', 'name = "x"\ncolour = "red"'))
    add("unknown key in [crank]", _sub('arbor = "a"\n', 'arbor = "a"\nspeed = 3\n'))
    add("unknown key in [epoch]", _sub('set = "angles"', 'set = "angles"\nzone = "UTC"'))
    add("unknown key in an arbor", _sub("[arbors.b]\n", "[arbors.b]\nwheel = 3\n"))
    add("unknown key in a mesh", _sub("module_mm = 0.5", "module_mm = 0.5\nteeth = 3"))
    add("unknown key in a pointer", _sub("set_deg = 0", "set_deg = 0\ncolour = 'gold'"))
    add("unknown key in a pin-slot", GOOD + '[pin_slots.s]\npin = "a"\nslot = "b"\n'
        'pin_radius_mm = 3\noffset_mm = 1\nlength = 2\n')
    # [train]
    for label, value in [("int", "5"), ("empty", '""'), ("list", "[1]"), ("bool", "true"),
                         ("escape codes", '"x\\u001b[2J"'), ("300 chars", '"' + "n" * 300 + '"')]:
        add(f"train name {label}", _sub('name = "bad-file bench"', f"name = {value}"))
    add("about is a number", _sub('name = "bad-file bench"', 'name = "x"\nabout = 5'))
    add("about with control codes", _sub('name = "bad-file bench"', 'name = "x"\nabout = "a\\u0007"'))
    add("dial unknown", _sub('name = "bad-file bench"', 'name = "x"\ndial = "galactic"'))
    add("dial is a list", _sub('name = "bad-file bench"', 'name = "x"\ndial = ["stars"]'))
    # wheels and arbors
    for label, value in [("zero", "0"), ("negative", "-12"), ("float", "20.5"), ("string", '"20"'),
                         ("bool", "true"), ("2^63-1", str(2**63 - 1)), ("10001", "10001"),
                         ("list", "[20]"), ("inf", "inf"), ("nan", "nan")]:
        add(f"teeth {label}", _sub("a1 = 20", f"a1 = {value}"))
    add("wheels is a list", _sub("wheels = { a1 = 20 }", "wheels = [20]"))
    add("wheels is a number", _sub("wheels = { a1 = 20 }", "wheels = 20"))
    add("wheel name repeated", _sub("wheels = { b1 = 40 }", "wheels = { b1 = 40, a1 = 30 }"))
    add("arbor named frame", _sub("[arbors.b]", "[arbors.frame]\nwheels = {}\n[arbors.b]"))
    add("arbor name with escape", _sub("[arbors.b]", '[arbors."b\\u001b[31m"]\nwheels = {}\n[arbors.b]'))
    add("wheel name with NUL", _sub("wheels = { a1 = 20 }", 'wheels = { a1 = 20, "z\\u0000" = 3 }'))
    add("arbor name 300 chars", _sub("[arbors.b]", f"[arbors.{'q' * 300}]\nwheels = {{}}\n[arbors.b]"))
    add("on unknown arbor", _sub("[arbors.b]\n", '[arbors.b]\non = "nowhere"\n'))
    add("on is a number", _sub("[arbors.b]\n", "[arbors.b]\non = 3\n"))
    add("fixed is a string", _sub("[arbors.b]\n", '[arbors.b]\nfixed = "yes"\n'))
    add("at_mm one number", _sub("[arbors.b]\n", "[arbors.b]\nat_mm = [1]\n"))
    add("at_mm strings", _sub("[arbors.b]\n", '[arbors.b]\nat_mm = ["1", "2"]\n'))
    add("at_mm inf", _sub("[arbors.b]\n", "[arbors.b]\nat_mm = [inf, 0]\n"))
    add("at_mm 1e300", _sub("[arbors.b]\n", "[arbors.b]\nat_mm = [1e300, 0]\n"))
    add("arbor pivot_mm zero", _sub("[arbors.b]\n", "[arbors.b]\npivot_mm = 0\n"))
    add("arbor pivot_mm word", _sub("[arbors.b]\n", '[arbors.b]\npivot_mm = "thin"\n'))
    add("arbor pivots_in a word", _sub("[arbors.b]\n", '[arbors.b]\npivots_in = "top"\n'))
    add("arbor pivots_in a list", _sub("[arbors.b]\n", '[arbors.b]\npivots_in = ["front"]\n'))
    add("arbor plates three", _sub("[arbors.b]\n", "[arbors.b]\nplates = 3\n"))
    add("plates on no carrier", _sub("[arbors.b]\n", "[arbors.b]\nplates = 2\n"))
    add("axis_with itself", _sub("[arbors.b]\n", '[arbors.b]\naxis_with = "b"\n'))
    add("axis_with unknown", _sub("[arbors.b]\n", '[arbors.b]\naxis_with = "zz"\n'))
    add("axis_with a number", _sub("[arbors.b]\n", "[arbors.b]\naxis_with = 2\n"))
    add("note a number", _sub("[arbors.b]\n", "[arbors.b]\nnote = 5\n"))
    add("note a table", _sub("[arbors.b]\n", "[arbors.b]\nnote = { a = 1 }\n"))
    add("note with escape", _sub("[arbors.b]\n", '[arbors.b]\nnote = "\\u001b]0;title\\u0007"\n'))
    add("mounting loop", GOOD + '[arbors.c]\non = "d"\nwheels = {}\n[arbors.d]\non = "c"\nwheels = {}\n')
    add("mounted on itself", GOOD + '[arbors.c]\non = "c"\nwheels = {}\n')
    # meshes
    for label, value in [("one wheel", '["a1"]'), ("three wheels", '["a1", "b1", "a1"]'),
                         ("numbers", "[1, 2]"), ("a string", '"a1"'), ("unknown wheel", '["a1", "zz"]'),
                         ("same wheel", '["a1", "a1"]'), ("empty", "[]")]:
        add(f"mesh wheels {label}", _sub('wheels = ["a1", "b1"]', f"wheels = {value}"))
    add("mesh without wheels", _sub('wheels = ["a1", "b1"]\n', ""))
    add("mesh on one arbor", _sub("wheels = { a1 = 20 }", "wheels = { a1 = 20, a2 = 30 }")
        + '[[meshes]]\nwheels = ["a1", "a2"]\n')
    add("mesh listed twice", GOOD + '[[meshes]]\nwheels = ["b1", "a1"]\n')
    add("ring not in mesh", _sub("module_mm = 0.5", 'module_mm = 0.5\nring = "zz"'))
    add("ring smaller", _sub("module_mm = 0.5", 'module_mm = 0.5\nring = "a1"'))
    add("ring a number", _sub("module_mm = 0.5", "module_mm = 0.5\nring = 1"))
    for label, value in [("zero", "0"), ("negative", "-1"), ("string", '"0.5"'), ("huge", "1e9"),
                         ("nan", "nan")]:
        add(f"module_mm {label}", _sub("module_mm = 0.5", f"module_mm = {value}"))
    for label, value in [("zero", "0"), ("negative", "-3"), ("with its unit", '"3mm"'),
                         ("huge", "2000"), ("nan", "nan")]:
        add(f"face_mm {label}", _sub("module_mm = 0.5", f"module_mm = 0.5\nface_mm = {value}"))
    for label, value in [("negative", "-0.02"), ("with its unit", '"0.02mm"'), ("huge", "500"),
                         ("nan", "nan")]:
        add(f"workshop hole_mm {label}", GOOD + f"[workshop]\nhole_mm = {value}\n")
    for label, value in [("zero", "0"), ("negative", "-1.5"), ("with its unit", '"2mm"'),
                         ("huge", "500")]:
        add(f"workshop carrier_plate_mm {label}", GOOD + f"[workshop]\ncarrier_plate_mm = {value}\n")
    for label, value in [("a word", '"many"'), ("two", "2"), ("a fraction", "4.5"),
                         ("auto unquoted", "auto")]:
        add(f"workshop crossings {label}", GOOD + f"[workshop]\ncrossings = {value}\n")
    add("mesh across carriers", GOOD + '[arbors.c1]\nwheels = {}\n[arbors.c2]\nwheels = {}\n'
        '[arbors.p]\non = "c1"\nwheels = { p1 = 10 }\n[arbors.q]\non = "c2"\nwheels = { q1 = 10 }\n'
        '[[meshes]]\nwheels = ["p1", "q1"]\n')
    # trains that cannot work
    add("undriven arbor", GOOD + "[arbors.idle]\nwheels = { idle = 30 }\n")
    add("two arbors driving only each other", GOOD + "[arbors.x]\nwheels = { x1 = 30 }\n"
        '[arbors.y]\nwheels = { y1 = 30 }\n[[meshes]]\nwheels = ["x1", "y1"]\n')
    add("locked loop", GOOD + '[arbors.c]\nwheels = { c1 = 30, c2 = 20 }\n[[meshes]]\nwheels = '
        '["a1", "c1"]\n[[meshes]]\nwheels = ["c2", "b1"]\n')
    add("fixed arbor meshed with the crank", _sub("wheels = { b1 = 40 }", "fixed = true\nwheels = { b1 = 40 }")
        .replace('arbor = "b"\nreversed', 'arbor = "a"\nreversed'))
    # pin and slot
    ps = '[pin_slots.s]\npin = "a"\nslot = "c"\npin_radius_mm = {r}\noffset_mm = {e}\n'
    slot_arbor = '[arbors.c]\nwheels = {}\n'
    for label, r, e in [("offset = radius", "3", "3"), ("offset > radius", "3", "4"),
                        ("radius zero", "0", "0"), ("radius negative", "-3", "1"),
                        ("offset negative", "3", "-1"), ("radius string", '"3"', "1"),
                        ("radius inf", "inf", "1")]:
        add(f"pin-slot {label}", GOOD + slot_arbor + ps.format(r=r, e=e))
    add("pin-slot missing pin", GOOD + slot_arbor + '[pin_slots.s]\nslot = "c"\npin_radius_mm = 3\noffset_mm = 1\n')
    add("pin-slot unknown arbor", GOOD + '[pin_slots.s]\npin = "a"\nslot = "zz"\npin_radius_mm = 3\noffset_mm = 1\n')
    add("pin-slot on itself", GOOD + '[pin_slots.s]\npin = "a"\nslot = "a"\npin_radius_mm = 3\noffset_mm = 1\n')
    add("pin-slot is a number", GOOD + "[pin_slots]\ns = 3\n")
    # crank
    add("crank arbor unknown", _sub('arbor = "a"\ndays', 'arbor = "q"\ndays'))
    add("crank arbor a number", _sub('arbor = "a"\ndays', "arbor = 1\ndays"))
    add("crank arbor fixed", _sub("[arbors.a]\n", "[arbors.a]\nfixed = true\n"))
    add("crank without days_per_turn", _sub('days_per_turn = "6940/235"\n', ""))
    for value in ["0", "-1", '"-3"', '"1/0"', '"abc"', '"1e400"', '"1e308"', "1e-300", "1e300",
                  "nan", "inf", '"2**10"', "true", "[1]", "{ a = 1 }", '"1e999999999"',
                  '"' + "9" * 500 + '"', '"6940/235/2"', '"__import__(\'os\')"', '""',
                  "2000000", '"1/10000000"']:
        add(f"days_per_turn {value[:30]}", _sub('"6940/235"', value))
    # epoch
    for value in ['"2026-13-45"', '"next tuesday"', '"1582-10-10"', '"JD 1e308"', '"JD -1e308"',
                  '"JD nan"', "06:30:00", "12", "true", "[2026]", '""', '"2026-02-30"',
                  '"0-01-01 BC"', '"2026-01-01 25:00"', "1582-10-10T12:00:00+01:00"]:
        add(f"epoch date {value[:30]}", _sub('"2026-01-01 00:00"', value))
    add("epoch without date", _sub('date = "2026-01-01 00:00"\n', ""))
    add("epoch set unknown", _sub('set = "angles"', 'set = "guess"'))
    add("epoch set a number", _sub('set = "angles"', "set = 1"))
    add("epoch calendar unknown", _sub('set = "angles"', 'set = "angles"\ncalendar = "mayan"'))
    add("epoch calendar a list", _sub('set = "angles"', 'set = "angles"\ncalendar = ["julian"]'))
    # pointers
    for label, old, new in [
        ("shows unknown", 'shows = "moon"', 'shows = "comet"'),
        ("shows a number", 'shows = "moon"', "shows = 1"),
        ("shows a list", 'shows = "moon"', 'shows = ["moon"]'),
        ("shows missing", 'shows = "moon"\n', ""),
        ("shows an arm's key seen from the earth", 'shows = "moon"',
         'shows = "mars_from_sun"\nseen_from = "earth"'),
        ("arbor unknown", 'arbor = "b"\nreversed', 'arbor = "zz"\nreversed'),
        ("arbor missing", 'arbor = "b"\n', ""),
        ("relative_to itself", 'arbor = "b"\nreversed', 'arbor = "b"\nrelative_to = "b"\nreversed'),
        ("relative_to unknown", 'arbor = "b"\nreversed', 'arbor = "b"\nrelative_to = "q"\nreversed'),
        ("per_turn zero", "set_deg = 0", "set_deg = 0\nper_turn = 0"),
        ("per_turn negative", "set_deg = 0", 'set_deg = 0\nper_turn = "-1/2"'),
        ("per_turn 1e9", "set_deg = 0", "set_deg = 0\nper_turn = 1e9"),
        ("per_turn text", "set_deg = 0", 'set_deg = 0\nper_turn = "two"'),
        ("reversed a string", "reversed = true", 'reversed = "yes"'),
        ("set_deg missing", "set_deg = 0\n", ""),
        ("set_deg a string", "set_deg = 0", 'set_deg = "0"'),
        ("set_deg inf", "set_deg = 0", "set_deg = inf"),
        ("set_deg 1e300", "set_deg = 0", "set_deg = 1e300"),
        ("pointer name with escape", "[pointers.p]", '[pointers."p\\u202e"]'),
    ]:
        add(f"pointer {label}", _sub(old, new))
    add("pointer on an arbor fixed to the frame", GOOD.replace('arbor = "b"\nreversed', 'arbor = "f"\nreversed')
        + "[arbors.f]\nfixed = true\nwheels = {}\n")
    add("pointer is a number", GOOD.split("[pointers.p]")[0] + "[pointers]\np = 3\n")
    add("pointers table is a number", GOOD.split("[pointers.p]")[0] + "pointers = 3\n")
    # limits
    add("2001 arbors", GOOD + "".join(f"[arbors.x{i}]\nwheels = {{ w{i} = 10 }}\n" for i in range(2001)))
    add("201 pointers", GOOD + "".join(f'[pointers.p{i}]\nshows = "sun"\narbor = "a"\nset_deg = 0\n'
                                       for i in range(201)))
    add("51 pin-slots", GOOD + slot_arbor + "".join(
        f'[pin_slots.s{i}]\npin = "a"\nslot = "c"\npin_radius_mm = 3\noffset_mm = 1\n' for i in range(51)))
    add("file over 1 MB", GOOD + "# " + "x" * 1_100_000 + "\n")
    add("100,000 arbors (10 MB)", GOOD + "".join(f"[arbors.x{i}]\nwheels = {{ w{i} = 10 }}\n"
                                                for i in range(100_000)))
    return cases


def make_cases(folder: Path) -> list[tuple[str, Path]]:
    """Write every case into ``folder`` (created); (label, path) pairs."""
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    for i, (label, content) in enumerate(_texts()):
        path = folder / f"case{i:03d}.toml"
        if isinstance(content, str):
            path.write_text(content, encoding="utf-8")
        else:
            path.write_bytes(content)
        out.append((label, path))
    specials = folder / "specials"
    specials.mkdir(exist_ok=True)
    fifo = specials / "fifo.toml"
    if not fifo.exists():
        os.mkfifo(fifo)
    out.append(("a FIFO", fifo))
    for name, target in (("zero.toml", "/dev/zero"), ("null.toml", "/dev/null"),
                         ("urandom.toml", "/dev/urandom")):
        link = specials / name
        if not link.is_symlink():
            link.symlink_to(target)
        out.append((f"a link to {target}", link))
    loop = specials / "loop.toml"
    if not loop.is_symlink():
        loop.symlink_to(loop)
    out.append(("a link to itself", loop))
    dangling = specials / "dangling.toml"
    if not dangling.is_symlink():
        dangling.symlink_to(specials / "nowhere.toml")
    out.append(("a dangling link", dangling))
    out.append(("a folder", specials))
    out.append(("a missing file", specials / "missing.toml"))
    return out


class _Hung(Exception):
    pass


def _alarm(signum, frame):
    raise _Hung()


def run(command: str, folder: Path, extra: list[str]) -> None:
    """Run ``wheelwork COMMAND CASE EXTRA`` for every case; one JSON line each."""
    from engine.cli import main

    signal.signal(signal.SIGALRM, _alarm)
    for i, (label, path) in enumerate(make_cases(folder)):
        err, out = io.StringIO(), io.StringIO()
        args = [a.replace("{i}", str(i)) for a in extra]
        code, exc = None, None
        signal.alarm(20)
        try:
            with contextlib.redirect_stderr(err), contextlib.redirect_stdout(out):
                code = main([command, str(path), *args])
        except _Hung:
            exc = "hung for 20 s"
        except BaseException as e:  # noqa: BLE001 - a traceback is what this looks for
            exc = f"{type(e).__name__}: {e}"[:300]
        finally:
            signal.alarm(0)
        print(json.dumps({"label": label, "path": str(path), "code": code,
                          "stderr": err.getvalue(), "exception": exc}), flush=True)


if __name__ == "__main__":
    run(sys.argv[1], Path(sys.argv[2]), sys.argv[3:])
