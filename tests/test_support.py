"""What the commands share (engine/commands/support.py): output files that never harm what is
already there, clean-up on every way out, tables that never cut a number."""

from __future__ import annotations

import os
import shutil
import signal
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest

from engine.cli import main
from engine.commands.support import OutputFile
from engine.errors import OutputError

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "engine" / "trains"
SEARCH = ["search", "--ratio", "1/15", "--stages", "1", "--top", "1"]


def _one_line_error(capsys, *words):
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err, err
    for w in words:
        assert w in err, err


# --- refused targets, for every option that writes ------------------------------------------

def _drift_csv(path, *more):
    return ["drift", str(DEMO / "moon_disc_59.toml"), "--years", "0.1", "--csv", str(path),
            *more]


def _drift_png(path, *more):
    return ["drift", str(DEMO / "moon_disc_59.toml"), "--years", "0.1", "--png", str(path),
            *more]


def _emit(path, *more):
    return [*SEARCH, "--emit", str(path), *more]


WRITERS = [_drift_csv, _drift_png, _emit]


@pytest.mark.parametrize("argv", WRITERS)
def test_a_symbolic_link_is_refused_and_kept(argv, tmp_path, capsys):
    target = tmp_path / "kept.txt"
    target.write_text("mine")
    name = "out.png" if argv is _drift_png else "out.txt"
    link = tmp_path / name
    link.symlink_to(target)
    assert main(argv(link, "--force")) == 1
    _one_line_error(capsys, "symbolic link", str(link))
    assert link.is_symlink() and target.read_text() == "mine"
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(["kept.txt", name])


@pytest.mark.parametrize("argv", WRITERS)
def test_a_fifo_is_refused_and_kept(argv, tmp_path, capsys):
    fifo = tmp_path / ("pipe.svg" if argv is _drift_png else "pipe")
    os.mkfifo(fifo)
    assert main(argv(fifo, "--force")) == 1
    _one_line_error(capsys, "FIFO")
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


@pytest.mark.parametrize("argv", [_drift_csv, _emit])
def test_a_device_is_refused_and_kept(argv, capsys):
    before = os.stat(os.devnull)
    assert main(argv(os.devnull, "--force")) == 1
    _one_line_error(capsys, "is a device")
    after = os.stat(os.devnull)
    assert stat.S_ISCHR(after.st_mode) and after.st_ino == before.st_ino


@pytest.mark.parametrize("argv", WRITERS)
def test_a_folder_is_refused(argv, tmp_path, capsys):
    folder = tmp_path / ("d.png" if argv is _drift_png else "d")
    folder.mkdir()
    assert main(argv(folder, "--force")) == 1
    _one_line_error(capsys, "is a folder")
    assert folder.is_dir()


def test_the_train_being_read_is_never_an_output(tmp_path, capsys):
    train = tmp_path / "my_train.toml"
    shutil.copy(DEMO / "moon_disc_59.toml", train)
    text = train.read_text()
    argv = ["drift", str(train), "--years", "0.1", "--force"]
    assert main([*argv, "--csv", str(train)]) == 1
    _one_line_error(capsys, "is the input file")
    hard = tmp_path / "same_inode.csv"
    os.link(train, hard)
    assert main([*argv, "--csv", str(hard)]) == 1
    _one_line_error(capsys, "is the input file")
    os.chdir(tmp_path)  # the same file under another spelling
    try:
        assert main(["drift", "my_train.toml", "--years", "0.1", "--force", "--csv",
                     f"../{tmp_path.name}/my_train.toml"]) == 1
    finally:
        os.chdir(ROOT)
    _one_line_error(capsys, "is the input file")
    assert train.read_text() == text


@pytest.mark.parametrize("argv", WRITERS)
def test_an_existing_file_needs_force_and_keeps_its_mode(argv, tmp_path, capsys):
    path = tmp_path / ("chart.png" if argv is _drift_png else "out.txt")
    path.write_text("old")
    path.chmod(0o600)
    assert main(argv(path)) == 1
    _one_line_error(capsys, "file exists", "--force")
    assert path.read_text() == "old"
    assert main(argv(path, "--force")) == 0, capsys.readouterr().err
    assert path.read_bytes() != b"old"
    assert stat.S_IMODE(path.stat().st_mode) == 0o600
    assert [p.name for p in tmp_path.iterdir()] == [path.name]  # no part file left


def test_a_new_file_gets_the_usual_mode(tmp_path):
    out = OutputFile(tmp_path / "new.txt", option="--x")
    with out.open() as fh:
        fh.write("x")
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE((tmp_path / "new.txt").stat().st_mode) == 0o666 & ~umask


def test_written_whole_or_not_at_all(tmp_path):
    path = tmp_path / "f.txt"
    path.write_text("before")
    out = OutputFile(path, option="--x", force=True)
    with pytest.raises(RuntimeError), out.open() as fh:
        fh.write("half")
        assert (tmp_path / ".f.txt.part").exists()
        raise RuntimeError
    assert path.read_text() == "before"
    assert [p.name for p in tmp_path.iterdir()] == ["f.txt"]


def test_ctrl_c_just_after_the_part_file_is_made_still_removes_it(tmp_path, monkeypatch):
    """A Ctrl-C that lands the moment the part file exists (the process descheduled right
    after making it, the handler run at the next bytecode) leaves no file behind: the entry
    point's clean-up knows the part before it is made."""
    import engine.commands.support as support

    real_open = os.open

    def open_then_interrupted(path, flags, mode=0o777):
        fd = real_open(path, flags, mode)
        os.close(fd)
        raise KeyboardInterrupt  # as the signal handler would, before the next line runs

    out = OutputFile(tmp_path / "f.csv", option="--csv")
    monkeypatch.setattr(support.os, "open", open_then_interrupted)
    with pytest.raises(KeyboardInterrupt):
        out.open()
    monkeypatch.setattr(support.os, "open", real_open)
    support.remove_part_files()  # what the entry point does on every way out
    assert list(tmp_path.iterdir()) == []


def test_a_part_file_in_the_way_is_never_removed_by_the_clean_up(tmp_path, monkeypatch):
    """When the part file cannot be made (another process made it first), the clean-up
    leaves that file alone: only what this run made is removed."""
    import engine.commands.support as support

    def refused(path, flags, mode=0o777):
        raise FileExistsError(17, "File exists")

    out = OutputFile(tmp_path / "f.csv", option="--csv")
    monkeypatch.setattr(support.os, "open", refused)
    with pytest.raises(OutputError):
        out.open()
    monkeypatch.undo()
    (tmp_path / ".f.csv.part").write_text("someone else's")
    support.remove_part_files()
    assert (tmp_path / ".f.csv.part").read_text() == "someone else's"


def test_a_missing_folder_is_one_line(tmp_path):
    with pytest.raises(OutputError, match="does not exist"):
        OutputFile(tmp_path / "no" / "f.csv", option="--csv")


# --- clean-up on every way out ----------------------------------------------------------------

@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGHUP])
def test_sigterm_and_sighup_remove_the_part_file(signum, tmp_path):
    """A long CSV run stopped by SIGTERM (or its terminal closing: SIGHUP) leaves neither the
    part file nor a half file; exit 128 + the signal's number, one line."""
    out = tmp_path / "long.csv"
    part = tmp_path / ".long.csv.part"
    argv = [sys.executable, "-m", "engine", "drift", str(DEMO / "tide_office.toml"), "--from",
            "1950-01-01", "--years", "90", "--step", "10m", "--csv", str(out)]
    proc = subprocess.Popen(argv, cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, start_new_session=True)
    deadline = time.monotonic() + 60
    while not part.exists() and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
    assert part.exists(), proc.communicate()
    time.sleep(0.5)
    assert part.stat().st_size > 0 or proc.poll() is None
    proc.send_signal(signum)
    try:
        _, err = proc.communicate(timeout=20)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.communicate()
        pytest.fail("still running 20 s after the signal")
    assert proc.returncode == 128 + signum, err
    said = [ln for ln in err.splitlines() if not ln.startswith("wheelwork: note:")]
    assert len(said) == 1 and "stopped" in said[0] and "Traceback" not in err, err
    assert list(tmp_path.iterdir()) == []


# --- the CSV says its date column's time scale and calendar, and a large one its size ---------

def test_csv_date_heading_names_ut_and_the_calendar():
    from engine.commands.drift import date_heading
    from engine.dates import parse_date

    # the Gregorian calendar's first day, 1582-10-15, followed 1582-10-04 (Julian)
    first = parse_date("1582-10-15")
    assert date_heading(first, first + 10) == "date (UT; Gregorian calendar)"
    assert date_heading(first - 400, first - 1) == "date (UT; Julian calendar)"
    assert "Julian to 1582-10-04 then Gregorian" in date_heading(first - 10, first + 10)


def test_a_large_csv_is_announced_with_its_size(tmp_path, capsys, monkeypatch):
    import engine.commands.support as support

    out = tmp_path / "d.csv"
    assert main(_drift_csv(out)) == 0
    assert "will be about" not in capsys.readouterr().err
    monkeypatch.setattr(support, "LARGE_OUTPUT_BYTES", 1000)
    assert main(_drift_csv(out, "--force")) == 0
    err = capsys.readouterr().err
    assert err.count("will be about") == 1 and str(out) in err
    # the estimate is close: within a tenth of the file written
    said = err.split("will be about ")[1].split()[0:2]
    size = float(said[0]) * {"bytes": 1, "kB": 1e3, "MB": 1e6}[said[1]]
    assert abs(size - out.stat().st_size) < 0.1 * out.stat().st_size


def test_a_word_in_the_legend_does_not_vouch_for_a_broken_cell(capsys, monkeypatch):
    """At 80 columns the check's mesh table once broke "frame" into "fr/am/e" in its narrow
    "held by" column while the same word stood whole in the legend below: a legend's words
    must not vouch for a cell. The table is split in narrower ones then, every cell whole."""
    import re

    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", "lunation_board"]) == 0
    out = capsys.readouterr().out
    assert not re.search(r"(?m)\s(fr|he)\s*$", out)
    assert re.search(r"(?m)^ 1  month_sun_pinion .* frame ", out)  # "frame" whole in its row
    assert "held by: the frame or carrier" in out  # and the legend kept


def test_a_wide_table_is_split_in_narrower_ones_repeating_its_keys(capsys, monkeypatch):
    """At 80 columns the check's ten mesh columns do not fit: two tables, each naming the
    mesh (# and its wheels), every figure whole, every line within 80 columns; not a list of
    ten lines a mesh (265 lines for the tide office's 12 meshes and 14 arbors before)."""
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", "tide_office"]) == 0
    out = capsys.readouterr().out
    assert max(len(line.rstrip()) for line in out.splitlines()) <= 80
    meshes = out.split("\nmeshes\n")[1].split("\narbors\n")[0]
    heads = [line.split() for line in meshes.splitlines() if line.startswith("  #  wheels")]
    assert len(heads) == 2  # two parts, each headed by the keys
    assert "ratio" in heads[0] and "force" in heads[1] and "ratio" not in heads[1]
    assert " 7  node_p2 " in meshes.split("force N")[1]  # a row named again in the second
    # its figures whole, an estimate to four significant figures (190,019 N by the formula)
    assert "190,000" in meshes and "190,019" not in meshes and "-37/132" in meshes
    assert ": " not in meshes.split("d: pitch")[0]  # no "header: value" list
    assert len(out.splitlines()) < 160
    # A table that fits is one table; a column that fits beside no keys makes a list.
    import io

    from rich.console import Console

    from engine.commands import support
    table = support.plain_table(title="t")
    for name in ("key", "a", "b"):
        table.add_column(name)
    table.add_row("k1", "x" * 30, "y" * 30)
    for width, layout in ((80, "table"), (45, "two tables"), (30, "list")):
        console = Console(width=width, file=io.StringIO(), color_system=None)
        support.print_table(console, table)
        text = console.file.getvalue()
        assert text.count("key") == {"table": 1, "two tables": 2, "list": 1}[layout]
        assert ("   a: " in text) == (layout == "list"), (width, text)
        assert ("x" * 30 in text) and ("y" * 30 in text)


def test_squeezed_columns_become_a_list(capsys, monkeypatch):
    """At 60 columns the search's convergents once stacked the words of their reasons line
    under line in a narrow last column, every word whole but hard to read: rows that take more
    than two lines on average are not a table (at 60 columns, two narrower tables; at 80
    columns, where they wrap once, one table)."""
    import re

    argv = ["search", "--cycle", "synodic month", "--stages", "2"]
    monkeypatch.setenv("COLUMNS", "60")
    assert main(argv) == 0
    out = capsys.readouterr().out
    conv = out.split("convergents of the target")[1]
    # split in two narrower tables, the ratio naming each row in both: a reason on one line
    assert re.search(r"15/443 +no allowed driven count has the prime 443", conv)
    assert re.search(r"15/443 +443/15 +\+92\.937 +no", conv)  # the column's -0.021: three places
    monkeypatch.setenv("COLUMNS", "80")
    assert main(argv) == 0
    conv = capsys.readouterr().out.split("convergents of the target")[1]
    assert "train or reason" in conv.splitlines()[2]  # the header row of a table


def test_the_lines_a_table_row_takes():
    import io

    from rich.console import Console

    from engine.commands import support

    table = support.plain_table()
    table.add_column("a")
    table.add_column("b")
    table.add_row("one", "two words")
    table.add_row("three", "four five six seven")
    probe = Console(width=12, file=io.StringIO(), color_system=None)
    with probe.capture() as cap:
        probe.print(table, crop=False)
    assert support._body_lines(probe, table, cap.get()) == 6  # 2 + 4: "four/five/six/seven"


@pytest.mark.parametrize("name, force", [("tide_office.toml", True), ("new_fragment.toml", False)])
def test_no_output_goes_into_the_package_demo_folder(name, force, capsys):
    """A demo shipped inside the package is never replaced (not even with --force), and
    nothing new is written among them."""
    target = DEMO / name
    before = target.read_bytes() if target.exists() else None
    argv = [*SEARCH, "--emit", str(target)] + (["--force"] if force else [])
    try:
        assert main(argv) == 1
        _one_line_error(capsys, str(target), "own demo folder")
        assert (target.read_bytes() if target.exists() else None) == before
        assert not list(DEMO.glob(".*.part"))
    finally:  # should the refusal ever fail, leave the checkout as it was
        if before is None:
            target.unlink(missing_ok=True)
        elif target.read_bytes() != before:
            target.write_bytes(before)


def test_drift_csv_into_the_demo_folder_is_refused_too(capsys, monkeypatch):
    monkeypatch.chdir(DEMO)
    try:
        assert main(["drift", "moon_disc_59", "--years", "0.2", "--csv", "out.csv"]) == 1
        _one_line_error(capsys, "out.csv", "own demo folder", "--csv")
    finally:
        (DEMO / "out.csv").unlink(missing_ok=True)


def test_a_row_of_several_lines_of_its_own_is_still_a_table(capsys, monkeypatch):
    """A search's trains of three stages are written one stage a line: every row takes three
    lines however wide the console, which is no squeeze. At 100 and 200 columns they were a
    list of eight lines a train; they are one table, and at 60 columns two narrower tables,
    each naming the train by its # and its stages."""
    import re

    argv = ["search", "--cycle", "synodic month"]
    for width in ("100", "200"):
        monkeypatch.setenv("COLUMNS", width)
        assert main(argv) == 0
        out = capsys.readouterr().out
        assert re.search(r"(?m)^ +# +stages +ratio +days/turn +period ppm .* teeth *$", out)
        assert not re.search(r"(?m)^# 1$", out)  # no "header: value" list
        assert re.search(r"(?m)^ +1 +13→62 +6097/180048 .* 310 *$", out)
    monkeypatch.setenv("COLUMNS", "60")
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert max(len(line.rstrip()) for line in out.splitlines()) <= 60
    trains = out.split("trains, best first")[1].split("stages: driver")[0]
    assert len(re.findall(r"(?m)^ +# +stages ", trains)) == 2
    assert re.search(r"(?m)^ +1 +13→62 .* 310 *$", trains)  # the second part names the train


def test_an_eclipse_row_split_in_two_keeps_its_kind(capsys, monkeypatch):
    """At 60 columns the eclipse table is split in two: γ (the shadow axis' distance for a
    solar eclipse, the Moon's for a lunar one) is read with its kind, so both parts give the
    date and the kind."""
    import re

    monkeypatch.setenv("COLUMNS", "60")
    assert main(["eclipses", "eclipse_board", "--years", "2"]) == 0
    out = capsys.readouterr().out
    assert max(len(line.rstrip()) for line in out.splitlines()) <= 60
    heads = re.findall(r"(?m)^ +date \(UT\) +kind +(\S+)", out)
    assert heads == ["train", "γ"], heads
    assert re.search(r"(?m)^ +1950-03-18 15:20 +solar +-0\.999 +hit *$", out)


def test_an_indented_line_wraps_under_itself(capsys, monkeypatch):
    """A pointer's or finding's indented detail lines too long for the console wrapped to the
    left edge, where 'dividing-plate row: …' or 'use a cycloidal clock profile …' read as an
    item of their own: their wrapped lines keep the indent, and no line is wider."""
    import re

    monkeypatch.setenv("COLUMNS", "60")
    assert main(["ratios", "tide_office"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"(?m)^   count \(or a multiple\): sun_w1 \(59\), sun_p2 \(11\)$", out)
    assert re.search(r"(?m)^   pin-and-slot pin_arbor→slot_arbor", out)
    assert not re.search(r"(?m)^(count|dividing-plate|pin-and-slot|48=|whole train)", out)
    assert max(len(line) for line in out.splitlines()) <= 60
    assert main(["play", "tide_office", "--builds", "20", "--samples", "8"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"(?m)^  \(sun_p2–sun_w2\) 0\.081°", out)
    assert not re.search(r"(?m)^\((sun|moon|node|perigee)", out)
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["check", "tide_office"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"(?m)^    diameter d use 2 × 0\.985 mm \+ d$", out)
    assert not re.search(r"(?m)^diameter d", out)


def test_figure_is_plain_figures_never_e_notation():
    from engine.figures import figure

    assert figure(-29787.3, 4, sign=True) == "-29,787"
    assert figure(10638.0, 4, sign=True) == "+10,638"
    assert figure(531.94, 4, sign=True) == "+531.9"
    assert figure(1.638e-4, 4, sign=True) == "+0.0001638"
    assert figure(3.44e-5) == "0.0000344" and figure(0.0157) == "0.0157"
    assert figure(12.5, 4) == "12.5" and figure(9.996) == "10" and figure(0.0) == "0"
    assert figure(0.0, sign=True) == "+0" and figure(-0.0735, 3) == "-0.0735"
    for x in (1e-12, 3.3e-7, 1e21, -4.4e-9):
        assert "e" not in figure(x), x
    # thousands separated whether or not the number has decimals (common practice, no source)
    assert figure(10743.60653, 10) == "10,743.60653" and figure(-94033.33, 6) == "-94,033.3"
    assert figure(10743.60653, 10, group=False) == "10743.60653"


def test_fixed_places_separate_thousands():
    from engine.figures import fixed

    assert fixed(-94033.3333, 3, sign=True) == "-94,033.333"
    assert fixed(0.0278, 3, sign=True) == "+0.028" and fixed(-0.0001, 4) == "-0.0001"
    assert fixed(31804.625, 2, sign=True) == "+31,804.62" and fixed(5.0, 0) == "5"


def test_fixed_to_significant_figures_keeps_small_values_decimals():
    """``digits``: a slipped wheel count's error (-752,211.737 ppm, +1,351,698.9965 °/cy) is
    written without the decimals that say nothing; a near one keeps them (common practice, no
    source: a figure carries the digits it can vouch for)."""
    from engine.figures import fixed, line_up

    assert fixed(-752211.737, 3, sign=True, digits=4) == "-752,212"
    assert fixed(1351698.9965, 4, sign=True, digits=4) == "+1,351,699"
    assert fixed(-11.5414, 3, sign=True, digits=4) == "-11.54"
    assert fixed(461.7022, 4, sign=True, digits=4) == "+461.7"
    assert fixed(0.0008, 4, sign=True, digits=4) == "+0.0008"  # small: its four places
    assert fixed(-0.02548, 4, digits=4) == "-0.0255" and fixed(0.0, 3, digits=4) == "0.000"
    assert fixed(99.996, 3, digits=4) == "100.0"  # rounded up: still four figures
    assert fixed(-0.0001, 4) == "-0.0001"  # no digits: places as before
    # the points of a column in one line, set flush right
    cells = line_up(["+0.250", "-11.54", "-752,212", "+0.0008"])
    assert cells == ["+0.250 ", "-11.54  ", "-752,212     ", "+0.0008"]
    assert len({len(c) - c.rstrip(" ").find(".") for c in cells if "." in c}) == 1
    assert line_up(["1", "22"]) == ["1", "22"] and line_up([]) == []


def test_a_drift_with_its_standard_error_is_written_to_the_sigmas_decimals():
    """A measured drift and its σ (wheelwork drift's "steady drift"): the σ to two significant
    figures and the drift to match, within the one rule's two to four decimals unless the σ
    would read zero; 1,000 or more whole; no σ, the drift alone as error() writes it (common
    practice, no source: a value carries no digits below its uncertainty's second)."""
    from engine.commands.drift import _with_sigma
    from engine.figures import error, error_with_sigma

    assert error_with_sigma(-0.2241, 0.0791) == ("-0.224", "0.079")
    assert error_with_sigma(-0.0125, 0.0085) == ("-0.0125", "0.0085")
    assert error_with_sigma(46.2, 0.8) == ("+46.20", "0.80")
    assert error_with_sigma(-25.3512, 28.37) == ("-25", "28")
    assert error_with_sigma(1234.56, 0.02) == ("+1,235", "0.020")  # whole from 1,000
    # it read "+0.0000° ± under 0.0001°": the σ's first figure is kept, the drift to match
    assert error_with_sigma(0.00001, 0.00003) == ("+0.00001", "0.00003")
    for sigma in (float("nan"), 0.0, None):  # no σ: the one rule's lone figure
        assert error_with_sigma(-0.2241, sigma) == (error(-0.2241), None) == ("-0.22", None)
    assert _with_sigma(-0.2241, 0.0791) == "-0.224° ± 0.079°"
    assert _with_sigma(-0.2241, float("nan")) == "-0.22°"  # was -0.2241°, four decimals
    # a spread (never negative) without its +
    assert error_with_sigma(0.30037, 0.0042, sign=False) == ("0.3004", "0.0042")


def _decimals(text: str) -> int:
    text = text.strip()
    return len(text) - text.index(".") - 1 if "." in text else 0


def test_a_column_of_drifts_with_their_sigmas_shows_no_digit_below_a_rows_sigma():
    """A column of trends each with its σ (the drift chart's table): each trend to its own
    σ's decimals, not one number of decimals for the column — the column's rule wrote a
    trend of σ 0.61 to four decimals beside one of σ 0.0018 — and still lined up on the
    point; a row without a σ by the one rule for those rows (common practice, no source: a
    value carries no digits below its uncertainty's second)."""
    from engine.figures import error_column, error_sigma_column, error_with_sigma, sigma_places

    assert [sigma_places(s) for s in (0.0791, 0.61, 8.2, 28.37, 114, 0.00003)] == \
        [3, 2, 1, 0, 0, 5]
    assert [sigma_places(s) for s in (None, 0.0, -1.0, float("nan"))] == [None] * 4
    xs = [-0.00012, -0.43127, 105.46, 0.5, float("nan")]
    sigmas = [0.0018, 0.61, 114.0, None, 0.1]
    values, pms = error_sigma_column(xs, sigmas)
    assert error_column(xs)[1].strip() == "-0.4313"  # the column's rule: four decimals
    assert values == ["-0.0001", "-0.43  ", "+105     ", "+0.50  ", "—     "]
    assert pms == ["0.0018", "0.61", "114", None, None]
    for x, s, v, pm in zip(xs, sigmas, values, pms, strict=True):
        if pm is not None:
            assert (v.strip(), pm) == error_with_sigma(x, s)
            assert _decimals(v) <= _decimals(pm), (v, pm)
    # set flush right, the points line up: each as far from the right edge
    assert len({len(v) - (v.index(".") if "." in v else len(v.rstrip())) for v in values}) == 1


def test_lined_up_figures_keep_their_padding_as_table_cells():
    """error_column's cells set flush right in a rich table: each whole figure's last digit
    stands where the others' points do (rich strips a plain cell's trailing spaces before it
    sets it right); a table too wide for the console, written as a list, gives each figure
    (common practice, no source)."""
    import io

    from rich.console import Console
    from rich.table import Table

    from engine.commands.support import print_table
    from engine.figures import error_column, table_cells

    figures = [7519.4, 0.0513, -602.953, 14.4377]
    cells = error_column(figures)
    assert cells == ["+7,519    ", "+0.051", "-602.953", "+14.438"]
    table = Table("name")
    table.add_column("ppm", justify="right")
    for name, cell in zip("abcd", table_cells(cells), strict=True):
        table.add_row(name, cell)
    out = io.StringIO()
    print_table(Console(file=out, width=60), table)
    rows = [line for line in out.getvalue().splitlines() if line[2:3] in "abcd" and "│" in line]
    assert len(rows) == 4, out.getvalue()
    ends = {line.index(c.strip()) + (c.index(".") if "." in c else len(c.strip()))
            for line, c in zip(rows, cells, strict=True)}
    assert len(ends) == 1, out.getvalue()
    wide = Table(*(f"column {i}" for i in range(8)))
    wide.add_row(*table_cells(cells), *("a word" for _ in range(4)))
    out = io.StringIO()
    print_table(Console(file=out, width=30), wide)
    text = out.getvalue()
    assert "column 0: " not in text and "column 1: +0.051" in text, text  # a list
    assert "+7,519" in text and "-602.953" in text and "Padding" not in text, text


def test_a_word_cut_from_one_row_is_not_vouched_for_by_another():
    """A table whose last column is cut at its width lost the "y" of "10,966.3 y" in one row
    while "y" stood whole in others, and was printed as one table: every word must be seen
    as often as the cells hold it."""
    import io

    from rich.console import Console

    from engine.commands import support
    table = support.plain_table()
    for name in ("key", "a", "b"):
        table.add_column(name, no_wrap=True)
    table.add_row("k1", "x" * 30, "10,966.3 y")
    table.add_row("k2", "z" * 30, "9.1 y")
    for width in range(44, 60):  # where rich cuts the one row's "y" (50 columns, rich 13)
        console = Console(width=width, file=io.StringIO(), color_system=None)
        support.print_table(console, table)
        text = console.file.getvalue()
        assert text.split().count("y") == 2, (width, text)


def test_one_rule_writes_a_column_of_drifts():
    """A column of drifts (°/cy) has one number of decimals, enough for its smallest drift to
    show two significant figures, from two to four, none when every one is 1,000 or more
    (common practice, no source: a column of figures is written to one number of decimals,
    aligned on the point, and a small figure is not written as 0.00). The tide office's
    phase drifts -0.0255 °/cy against the stars: the parts panel wrote -0.0255 and the
    readings -0.03."""
    from engine.figures import drift, drift_places

    assert drift_places([0.0008, -0.0255, 1.3977]) == 4  # the Sun's 0.00077 needs them
    assert drift_places([-0.02553, 1.3977]) == 3 and drift(-0.02553) == "-0.026"
    assert drift_places([-0.45, 0.95]) == 2 and drift_places([5.55, 0.0]) == 2
    assert drift_places([0.0]) == 2 and drift_places([]) == 2
    assert drift_places([67987.93, -35644.39]) == 0 and drift_places([461.7, 1000.0]) == 2
    assert drift(67987.93) == "+67,988" and drift(-999.996) == "-1,000"
    assert drift(999.99) == "+999.99" and drift(0.0008) == "+0.0008"
    # a figure too small for four decimals keeps its first significant figure, not -0.0000
    assert drift(0.00049) == "+0.0005" and drift(-0.0000004) == "-0.0000004"
    assert drift_places([0.00002, 1.5]) == 5
    assert drift(67987.93, 4) == "+67,988"  # from 1,000 whole, whatever the column's decimals
    assert drift(float("nan")) == "—"
    # a column 7 characters wide: fewer decimals for all while none then reads as zero
    assert drift_places([461.7022, -23002.39], 7) == 0
    assert drift_places([461.7022, -23002.39], 10) == 2
    assert drift_places([0.0008, -23002.39], 7) == 3  # +0.001; +0.00 would lose the Sun
    assert drift_places([0.0001, -23002.39], 7) == 4  # +0.000 would lose it: wider instead


def test_period_errors_and_drifts_read_the_same_in_ratios_and_the_interface():
    """One rule for a period error (ppm) and a drift (°/cy) in the ratio table and every panel
    of the interface (common practice, no source: one figure is written one way wherever it
    is read). The table orrery's slipped Moon read -11.541 ppm on the bench and -11.54 in
    ratios; a lone -0.02553 °/cy -0.026 on the bench and -0.0255 in ratios."""
    from engine.figures import drift, error_column, ppm, ppm_places

    assert ppm is drift and ppm_places([-11.5414]) == 2 and ppm(-11.5414) == "-11.54"
    assert ppm_places([-11.5414, 0.028]) == 3  # the orrery's column: its Earth's +0.028
    assert error_column([-0.02553]) == ["-0.026"]
    # a slipped count's error is whole beside near ones, the points still in one line
    assert error_column([0.0008, -168446.1, 1.3977]) == ["+0.0008", "-168,446     ",
                                                         "+1.3977"]
    assert error_column([float("nan"), 1.0]) == ["—   ", "+1.00"]
    assert error_column([461.7022, -23002.39], width=7) == ["+462", "-23,002"]


def test_command_tables_carry_no_e_notation(capsys, tmp_path):
    """A crude convergent of a search (-29,787 ppm), a slow mesh's pitch-line speed (a node
    stage at 3.44e-05 m/s) once printed in e-notation beside plain figures."""
    import re

    from engine.cli import main

    e_notation = re.compile(r"\de[+-]\d")
    hall = Path(__file__).resolve().parent / "trains" / "workshop_small.toml"
    for argv in (["search", "--ratio", "19/235", "--stages", "2", "--top", "3"],
                 ["check", "tide_office"], ["check", "table_orrery"], ["play", str(hall)],
                 ["search", "--cycle", "tropical year", "--stages", "3", "--top", "5"]):
        assert main(argv) == 0, argv
        out = capsys.readouterr().out
        assert not e_notation.search(out), (argv, e_notation.search(out))
    # a clock cranked from its minute arbor (1/1440 day a turn): the search's target line
    # ('2.35161055447e-05 turns per crank turn') and, at three stages, its refusal ('the
    # target, 2.352e-05 turns …, 1.053e-07 to 4.578 days per output turn')
    minute = ["search", "--cycle", "synodic month", "--crank-days", "1/1440"]
    assert main([*minute, "--stages", "4", "--top", "1"]) == 0
    out = capsys.readouterr().out
    assert "0.0000235161055447 turns per crank turn" in out and not e_notation.search(out)
    assert main(minute) == 2
    err = capsys.readouterr().err
    assert "the target, 0.00002352 turns" in err and not e_notation.search(err), err
    assert main(["search", "--period", "1e6", "--crank-days", "1/8640000"]) == 2
    err = capsys.readouterr().err
    assert "--crank-days 1000000" in err and not e_notation.search(err), err
    # a train cranked once a second by slip: ratios' '1 day off' ('2.31e-05 d') and play's
    # once-per-turn periods ('every 5.456e-05 days'); play's tolerances as given ('1e-07 mm')
    fast = tmp_path / "fast.toml"
    fast.write_text(hall.read_text().replace("days_per_turn = 1", 'days_per_turn = "1/86400"'))
    for argv in (["ratios", str(fast)], ["play", str(fast), "--builds", "10", "--samples", "10"],
                 ["play", str(hall), "--eccentricity-mm", "0.0000001", "--division",
                  "0.0000001", "--builds", "10", "--samples", "10"]):
        assert main(argv) == 0, argv
        out = capsys.readouterr().out
        assert not e_notation.search(out), (argv, e_notation.search(out))
    assert main(["ratios", str(fast)]) == 0 and " d " in capsys.readouterr().out
    # a year hand on a clock's seconds arbor: a ratio of 0.000002 ('= 2.083333333e-06')
    slow = tmp_path / "slow.toml"
    slow.write_text(hall.read_text().replace("middle_wheel = 60", "middle_wheel = 6000")
                    .replace("hand_wheel = 64", "hand_wheel = 6400"))
    assert main(["ratios", str(slow)]) == 0
    out = capsys.readouterr().out
    assert "cycles per crank turn = 0.000002083333333" in out and not e_notation.search(out)


def test_check_heading_and_mesh_columns_carry_no_e_notation(capsys, tmp_path):
    """A slow clock motor (--crank-rpm 0.000001) and a module typed far too small once gave
    '1e-06 rpm' in the heading and '1e-05', '0.00012' ... '1.2e-04' in the m and d columns."""
    import re

    from engine.cli import main

    hall = Path(__file__).resolve().parent / "trains" / "workshop_small.toml"
    tiny = tmp_path / "tiny.toml"
    tiny.write_text(hall.read_text().replace("module_mm = 0.5", "module_mm = 0.00001"))
    assert main(["check", str(tiny), "--crank-rpm", "0.000001", "--efficiency", "0.975"]) == 0
    out = capsys.readouterr().out
    assert not re.search(r"\de[+-]\d", out), re.search(r"\de[+-]\d", out)
    words = " ".join(out.split())  # the heading wraps at the console's width
    assert "at up to 0.000001 rpm" in words and "0.975 per stage" in words
    assert " 0.00001 " in out  # the module as given


def test_json_to_a_file_is_written_straight_and_is_riches_text():
    # --json to a file or pipe skips rich's pretty-printer (seconds on a long run's document)
    # and must write the very text it wrote: two-space indent, characters as they are
    import io
    import json

    from rich.console import Console

    from engine.commands.support import print_json

    doc = {"date": "-0584-05-28 14:25 UT (Julian)", "lon_deg": 123.456789012345, "n": 3,
           "caution": "never look at the Sun without a proper solar filter ±0.5°",
           "items": [{"kind": "total", "gamma": -0.2, "ok": True, "none": None}], "empty": []}
    plain = Console(file=io.StringIO(), width=40)
    print_json(plain, doc)
    reference = Console(file=io.StringIO(), width=40)
    reference.print_json(json.dumps(doc))
    assert plain.file.getvalue() == reference.file.getvalue()
    assert json.loads(plain.file.getvalue()) == doc and "±0.5°" in plain.file.getvalue()
    terminal = Console(file=io.StringIO(), width=40, force_terminal=True, color_system="standard")
    print_json(terminal, doc)  # on a terminal: highlighted by rich
    assert "\x1b[" in terminal.file.getvalue()
