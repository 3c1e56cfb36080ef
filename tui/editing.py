"""Changing the train from inside the interface: the parts screen (teeth, pin-and-slot lengths,
the crank's days per turn) with its before/after ratio panel and readings, undo and redo, the
save dialog, and opening another train or a demo.

Every change is made by :class:`engine.edit.TrainEditor` (the loader and solver judge it); this
module only shows what the engine answers.
"""

from __future__ import annotations

import math
import os
import re
from pathlib import Path

from numpy import format_float_positional
from rich.table import Table
from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import (
    Button,
    Checkbox,
    DirectoryTree,
    Footer,
    Input,
    Label,
    OptionList,
    ProgressBar,
    Static,
)
from textual.widgets.option_list import Option
from textual.worker import get_current_worker

from engine.demos import demo_names, demo_path
from engine.edit import TrainEditor
from engine.errors import WheelworkError
from engine.exact import fraction_text
from engine.figures import drift, error_column, ppm, table_cells
from engine.loader import load_train

from .screens import EDIT_KEYS, ClosesOnce, Dialog, HelpScreen
from .session import recent_files, remember  # files opened or saved, kept across runs
from .small import SizeGuard
from .widgets import CAUTION, Readings, ui

#: the marker the title shows while the train differs from its file
CHANGED_MARK = "◆ changed, not saved"


def title_mark(session) -> tuple[str, str]:
    """The title's marker (text, style): empty while the train is as in its file."""
    ed = session.editor
    if ed is None or not ed.differs:
        return ("", "")
    return (f"  {CHANGED_MARK}", "bold #e06c75")


def adopt(app, mech) -> None:
    """Put ``mech`` on the bench at the date shown now; the engine's findings for it are
    worked out when the bench next shows them, not on every edit. Its pointers are set as its
    file says: a re-set made by hand is dropped, and the bench says so."""
    dropped = app.session.can_undo
    app.session.adopt(mech)
    if dropped:
        app.notify("the changed train's pointers are set as its file says: the re-set made "
                   "by hand is dropped (r re-sets them to the sky again)", timeout=6, markup=False)


#: what a step back or forward through the changes is called on screen
STEP_WORDS = {True: "undone", False: "made again"}


def step_edit(screen, undo: bool):
    """Undo (or redo) the last change to the train being edited and put the result on the
    bench; the change, or None (said on ``screen``) when there is nothing to undo or redo."""
    ed = screen.session.editor
    change = None if ed is None else (ed.undo() if undo else ed.redo())
    if change is None:
        screen.notify(f"nothing to {'undo' if undo else 'redo'}", timeout=2, markup=False)
        return None
    adopt(screen.app, ed.mech)
    return change


async def rebuild_bench(app) -> None:
    """Draw the bench again for the train now on it (title, train drawing, findings)."""
    from .screens import BenchScreen

    for screen in app.screen_stack:
        if isinstance(screen, BenchScreen):
            await screen.rebuild()


# --- text of the panels --------------------------------------------------------------------
def _ratio(r) -> str:
    return f"{r.ratio.numerator}/{r.ratio.denominator}"


def _pairs(pairs: list[tuple[float | None, float]]) -> list[str]:
    """``file → now`` cells of one column: the file's figures and the new ones written by the
    one rule as one column (:func:`engine.figures.error_column`: one number of decimals, points
    lined up), each side padded to the column's width, so that set flush right (as
    :func:`engine.figures.table_cells`) the points of both sides line up from row to row; a
    pointer new since the file has blanks before the arrow."""
    cells = error_column([x for p in pairs for x in p])
    wide = max(map(len, cells), default=0)
    out = []
    for i, (before, _) in enumerate(pairs):
        b, a = cells[2 * i], cells[2 * i + 1]
        out.append(f"{' ' * wide if before is None else b.rjust(wide)} → {a.rjust(wide)}")
    return out


def compare_table(rows, width: int = 200, colours: dict[str, str] | None = None
                  ) -> Table | Text:
    """Per pointer: ratio, period error and drift per century, as in the file and now (a
    table when ``width`` allows, else two lines a pointer); ``colours`` from the theme
    (:func:`tui.widgets.ui`): changed rows in its accent, labels in its muted colour."""
    accent = (colours or {}).get("accent", "#e5c07b")
    muted = (colours or {}).get("muted", "#9aa5b1")
    rows = list(rows)
    ppm_cells = _pairs([(c.before and c.before.period_error_ppm, c.after.period_error_ppm)
                        for c in rows])
    drift_cells = _pairs([(c.before and c.before.drift_deg_per_century,
                           c.after.drift_deg_per_century) for c in rows])
    if width < 90:
        out = Text()
        for c, ppm_cell, drift_cell in zip(rows, ppm_cells, drift_cells, strict=True):
            b, a = c.before, c.after
            style = f"bold {accent}" if b is None or b.ratio != a.ratio else ""
            if out:
                out.append("\n")
            out.append(f"{c.pointer}  ", style="bold")
            out.append(f"{_ratio(b) if b else 'new'} → {_ratio(a)}\n", style=style)
            out.append("  ppm ", style=muted)
            out.append(ppm_cell, style=style)
            out.append("\n  °/cy ", style=muted)
            out.append(drift_cell, style=style)
        return out
    t = Table(box=None, padding=(0, 1), show_edge=False, expand=False)
    t.add_column("pointer", style="bold", overflow="fold")
    t.add_column("ratio file → now", overflow="fold")
    t.add_column("period ppm file → now", justify="right", overflow="fold")
    t.add_column("drift °/cy file → now", justify="right", overflow="fold")
    for c, ppm_cell, drift_cell in zip(rows, ppm_cells, drift_cells, strict=True):
        b, a = c.before, c.after
        changed = b is None or b.ratio != a.ratio
        style = f"bold {accent}" if changed else ""
        t.add_row(c.pointer,
                  Text(f"{_ratio(b) if b else 'new'} → {_ratio(a)}", style=style),
                  *table_cells([ppm_cell, drift_cell], style))
    return t


def parts(editor: TrainEditor) -> list[tuple[tuple, str]]:
    """What can be changed: ``(key, label)``; key is ("teeth", wheel), ("pin", stage, field)
    or ("crank",)."""
    out: list[tuple[tuple, str]] = []
    train = editor.mech.train
    days = fraction_text(train.crank.days_per_turn)  # 365.2422, as the file writes it
    out.append((("crank",), f"crank: days per turn {days}"))
    bad = editor.forbidden_in_train()
    for name, arbor, teeth in editor.wheels():
        mark = f"  ✗ prime {', '.join(map(str, bad[name]))}" if name in bad else ""
        out.append((("teeth", name), f"{name}: {teeth} teeth (on {arbor}){mark}"))
    for name, offset, radius in editor.pin_slots():
        out.append((("pin", name, "offset_mm"), f"{name}: axis offset {mm_text(offset)} mm"))
        out.append((("pin", name, "pin_radius_mm"), f"{name}: pin radius {mm_text(radius)} mm"))
    return out


def current_value(editor: TrainEditor, key: tuple) -> str:
    train = editor.mech.train
    if key[0] == "crank":
        return fraction_text(train.crank.days_per_turn)
    if key[0] == "teeth":
        return str(train.wheels[key[1]].teeth)
    return mm_text(getattr(train.pin_slots[key[1]], key[2]))


def mm_text(mm: float) -> str:
    """A length as the file holds it, in plain figures and every digit (10.58512, not the
    10.5851 a ``g`` format kept, which Enter on the unchanged box then wrote into the file;
    1000000, not 1e+06)."""
    return format_float_positional(mm, trim="-")


def prompt(key: tuple) -> str:
    if key[0] == "crank":
        return "days one crank turn stands for (a number or p/q):"
    if key[0] == "teeth":
        return f"teeth (or leaves) of {key[1]}:"
    words = {"offset_mm": "axis offset", "pin_radius_mm": "pin radius"}[key[2]]
    return f"{words} of {key[1]}, mm:"


def apply_edit(editor: TrainEditor, key: tuple, value: str):
    if key[0] == "crank":
        return editor.set_days_per_turn(value)
    if key[0] == "teeth":
        return editor.set_teeth(key[1], value)
    return editor.set_pin_slot(key[1], key[2], value)


class ListStepInput(Input):
    """A text box whose ↑ ↓ move the highlight of its screen's list (``LIST``, an id), so a
    user can walk the list and type without leaving the box."""

    LIST = ""
    BINDINGS = [Binding("up", "step(-1)", "above in the list", show=False),
                Binding("down", "step(1)", "below in the list", show=False)]

    def action_step(self, step: int) -> None:
        ol = self.screen.query_one(f"#{self.LIST}", OptionList)
        if ol.option_count:
            ol.highlighted = min(max((ol.highlighted or 0) + step, 0), ol.option_count - 1)


# --- the parts screen ----------------------------------------------------------------------
class PartValue(ListStepInput):
    """The value box of the parts screen: ↑ ↓ pick the part above or below in the list."""

    LIST = "parts-list"


class PartsScreen(ClosesOnce, SizeGuard, Screen):
    """Pick a wheel, pinion, pin-and-slot length or the crank; type the new value; the train
    is solved again at once and the ratio panel and readings answer."""

    BINDINGS = [
        Binding("escape", "back", "bench"),
        Binding("ctrl+z", "undo_edit", "undo change", group=EDIT_KEYS),
        Binding("ctrl+y", "redo_edit", "redo change", group=EDIT_KEYS),
        Binding("ctrl+s", "save", "save…"),
        Binding("ctrl+f", "find_teeth", "find teeth…"),
        Binding("f1", "help", "help"),
    ]

    def __init__(self, session, key: tuple | None = None, picked: bool = False):
        super().__init__()
        self.picked = picked
        self.session = session
        self.editor: TrainEditor = session.editor
        #: the part shown first: ("teeth", wheel) when a wheel was clicked in the drawing
        self.key: tuple = key or ("crank",)

    def compose(self) -> ComposeResult:
        yield Static(id="parts-title")
        with Horizontal(id="parts-top"):
            with Vertical(id="parts-pane"):
                yield OptionList(id="parts-list")
            with VerticalScroll(id="parts-side"):
                yield Label("", id="parts-what")
                yield PartValue(id="parts-value")
                with Horizontal(id="parts-primes-row"):
                    yield Label("primes you cannot cut: ", id="parts-primes-label")
                    yield Input(", ".join(map(str, self.editor.forbidden_primes)),
                                placeholder="none, e.g. 37, 41", id="parts-primes",
                                compact=True)
                yield Label("", id="parts-error")
                yield Label("", id="parts-done")
                yield Static(id="parts-compare")
                with Vertical(id="parts-readings"):
                    yield Readings(id="readings")
                yield Static(CAUTION, classes="caution")
        yield Footer(compact=True)

    def on_resize(self) -> None:
        if self.is_mounted and self.query("#parts-compare"):
            # the palette key would push "f1 help" off a narrow footer (ctrl+p still works)
            self.query_one(Footer).show_command_palette = self.size.width >= 100
            self._show_all()

    def on_mount(self) -> None:
        self.query_one("#parts-pane").border_title = "parts"
        self.query_one("#parts-readings").border_title = "readings at this date"
        self.query_one("#parts-compare").border_title = "ratios: file → now"
        self._fill_list()
        self._show_all()
        if self.picked and self.key[0] == "teeth":
            self._picked_note(self.key[1])
        self.query_one("#parts-value", Input).focus()

    def _picked_note(self, wheel: str) -> None:
        """Say which wheel a click in the drawing picked, and what else is on its arbor."""
        train = self.editor.mech.train
        arbor = train.wheels[wheel].arbor
        others = [f"{w} {train.wheels[w].teeth}" for w in train.arbors[arbor].wheels
                  if w != wheel]
        also = f"; also on it: {', '.join(others)} (↑ ↓ in the list)" if others else ""
        self.query_one("#parts-done", Label).update(
            Text(f"picked in the drawing: arbor {arbor}{also}", style=ui(self)["muted"]))

    def _fill_list(self, keep: int | None = None) -> None:
        ol = self.query_one("#parts-list", OptionList)
        before, self._parts = getattr(self, "_parts", None), parts(self.editor)
        if before is not None and [k for k, _ in before] == [k for k, _ in self._parts]:
            # the same parts: change only the rows whose text changed (no new layout)
            for i, ((_, old), (_, label)) in enumerate(zip(before, self._parts, strict=True)):
                if old != label:
                    ol.replace_option_prompt_at_index(i, Text(label))
        else:
            ol.clear_options()
            ol.add_options([Option(Text(label), id=str(i)) for i, (_, label) in
                            enumerate(self._parts)])
        index = keep
        if index is None:
            index = next((i for i, (k, _) in enumerate(self._parts) if k == self.key), 0)
        ol.highlighted = index

    @on(OptionList.OptionHighlighted, "#parts-list")
    def _picked(self, event: OptionList.OptionHighlighted) -> None:
        self.key = self._parts[event.option_index][0]
        self.query_one("#parts-what", Label).update(prompt(self.key))
        self._value(current_value(self.editor, self.key))
        self._error("")

    @on(OptionList.OptionSelected, "#parts-list")
    def _chosen(self) -> None:
        self.query_one("#parts-value", Input).focus()

    def _value(self, text: str) -> None:
        """Show the picked part's value selected, cursor at its end, ready to be typed over:
        typing replaces it (59, typed 60, was 5960 teeth), ← → keep it to change a digit,
        and a backspace clears it."""
        box = self.query_one("#parts-value", Input)
        box.value = text
        box.cursor_position = len(text)
        box.select_all()

    def _error(self, message: str) -> None:
        label = self.query_one("#parts-error", Label)
        label.update(Text(message))
        label.set_class(bool(message), "-shown")
        if message:
            self.query_one("#parts-done", Label).update("")

    def _title(self) -> None:
        ed = self.editor
        train = ed.mech.train
        name = ed.path.name if ed.path else "new train, not saved yet"
        self.query_one("#parts-title", Static).update(Text.assemble(
            ("change the train  ", f"bold {ui(self)['accent']}"), (train.name, "bold"), (f"  {name}", "dim"),
            title_mark(self.session)))

    def _show_all(self) -> None:
        self._title()
        width = self.query_one("#parts-side").size.width or self.app.size.width
        self.query_one("#parts-compare", Static).update(
            compare_table(self.editor.compare(self.session.frame), width, ui(self)))
        try:
            self.query_one(Readings).show(self.session.now())
        except WheelworkError as exc:
            self._error(str(exc))

    @on(Input.Submitted, "#parts-primes")
    def _primes(self, event: Input.Submitted) -> None:
        try:
            primes = self.editor.set_forbidden_primes(event.value)
        except WheelworkError as exc:
            self._error(str(exc))
            return
        self._error("")
        event.input.value = ", ".join(map(str, primes))
        listed = ", ".join(map(str, primes))
        said = (f"no new tooth count may have the prime{'s' if len(primes) > 1 else ''} "
                f"{listed} as a factor" if primes else "every prime may be cut")
        self.query_one("#parts-done", Label).update(Text(said))
        self._fill_list(keep=self.query_one("#parts-list", OptionList).highlighted)
        self.query_one("#parts-value", Input).focus()

    @on(Input.Submitted, "#parts-value")
    def _submit(self, event: Input.Submitted) -> None:
        try:
            mech = apply_edit(self.editor, self.key, event.value)
        except WheelworkError as exc:
            self._error(str(exc))  # the train stays as it was
            return
        self._adopted(mech, self.editor.last_change)

    def _adopted(self, mech, change, verb: str = "changed") -> None:
        adopt(self.app, mech)
        self._shown(change, verb)

    def _shown(self, change, verb: str) -> None:
        """The panels again after the train on the bench changed by ``change``."""
        self._error("")
        index = self.query_one("#parts-list", OptionList).highlighted
        self._fill_list(keep=index)
        self._value(current_value(self.editor, self.key))
        done = "" if change is None else f"{verb}: {change.text()}"
        self.query_one("#parts-done", Label).update(Text(done))
        self._show_all()

    def _edit_step(self, undo: bool) -> None:
        change = step_edit(self, undo)
        if change is not None:
            self._shown(change, STEP_WORDS[undo])

    def action_undo_edit(self) -> None:
        self._edit_step(True)

    def action_redo_edit(self) -> None:
        self._edit_step(False)

    def action_find_teeth(self) -> None:
        """The tooth search for one pointer; an answer put in comes back as an edit."""
        self.app.push_screen(TeethScreen(self.session), self._found_teeth)

    def _found_teeth(self, change) -> None:
        if change is not None:
            self._adopted(self.editor.mech, change, "put in")

    def action_save(self) -> None:
        self.app.push_screen(SaveDialog(self.editor), self._saved)

    def _saved(self, path: Path | None) -> None:
        if path is not None:
            remember(path)
            self.notify(f"saved {path}", timeout=3, markup=False)
            self.query_one("#parts-done", Label).update(Text(f"saved as {path.name}"))
            self._show_all()  # the saved file is now the "file" side of the comparison

    def action_help(self) -> None:
        self.app.push_screen(HelpScreen(self.BINDINGS))

    async def action_back(self) -> None:
        await rebuild_bench(self.app)
        self.dismiss(None)


# --- saving --------------------------------------------------------------------------------
class SaveDialog(Dialog):
    """Where to save: a new name by default. Replacing a file (the opened one included) takes
    a second Enter on the same name."""

    error_id = "save-error"

    def __init__(self, editor: TrainEditor):
        super().__init__()
        self.editor = editor
        self._confirmed: Path | None = None

    def compose(self) -> ComposeResult:
        opened = self.editor.path or "none (a new train)"
        yield from self.framed(
            "Save the train as:",
            Input(value=str(self.editor.suggested_name()), id="save-input"),
            Label(Text(f"opened from: {opened}"), id="save-hint"),
            ok="Save")

    def read(self) -> None:
        text = self.query_one("#save-input", Input).value.strip()
        if not text:
            self.reject("give a file name")
            return
        path = Path(text).expanduser()
        if path.is_dir():  # a folder: the name offered, in that folder
            path = path / self.editor.suggested_name().name
        elif path.suffix == "":
            path = path.with_suffix(".toml")
        elif path.suffix != ".toml":
            self.reject(f"{path}: a train file's name ends in .toml (the open screen lists "
                        "only those)")
            return
        replace = self._confirmed == path
        if not replace and path.exists() and path.is_file():
            self._confirmed = path
            what = ("is the file this train was opened from"
                    if self.editor.is_opened_file(path) else "exists")
            if self.editor.is_opened_file(path) and self.editor.changed_on_disk():
                what += (", and another program has changed it since (a text editor?): "
                         "replacing it loses those changes")
            self.reject(f"{path} {what}: press Enter again to replace it, or change the name")
            return
        try:
            saved = self.editor.save(path, replace=replace)
        except WheelworkError as exc:
            self._confirmed = None
            self.reject(str(exc))
            return
        self.accept(saved)

    @on(Input.Changed, "#save-input")
    def _edited(self) -> None:
        self._confirmed = None


# --- opening -------------------------------------------------------------------------------
class TrainFiles(DirectoryTree):
    """Folders and .toml files only."""

    def filter_paths(self, paths):
        return [p for p in paths if not p.name.startswith(".")
                and (p.is_dir() or p.suffix == ".toml")]


def folder_lines(folder: str, width: int) -> list[str]:
    """A folder's path as lines of at most ``width`` characters, each broken after a "/"
    where one falls in the line; a name longer than a line goes on over the next (never
    cut)."""
    sep = "/" if folder.endswith("/") or folder.endswith("\\") else os.sep
    folder = folder if folder.endswith(("/", "\\")) else folder + sep
    lines, line = [], ""
    for part in re.split(r"(?<=[/\\])", folder):
        if line and len(line) + len(part) > width:
            lines.append(line)
            line = ""
        while len(line) + len(part) > width:
            lines.append(part[:width])
            part = part[width:]
        line += part
    if line:
        lines.append(line)
    return lines


class OpenScreen(ClosesOnce, SizeGuard, Screen):
    """Open a train file (folders from the current one, and above it; a typed path; files
    opened or saved, kept across runs), or start a new train from a demo. A file the loader
    refuses is reported here."""

    BINDINGS = [Binding("escape", "back", "bench"), Binding("alt+up", "up", "up a folder"),
                Binding("f1", "help", "help")]

    def __init__(self, session, start: Path | None = None):
        super().__init__()
        self.session = session
        self.start = Path(start or Path.cwd())

    def compose(self) -> ComposeResult:
        yield Static(id="open-title")
        with Horizontal(id="open-top"):
            with Vertical(id="open-files"):
                with Horizontal(id="open-where"):
                    yield Button("↑ up", id="open-up", compact=True)
                    yield Input(value=str(self.start), id="open-path",
                                placeholder="a folder to look in, or a train file to open")
                yield TrainFiles(self.start, id="open-tree")
            with Vertical(id="open-side"):
                yield OptionList(id="open-recent")
                yield OptionList(id="open-demos")
        yield Label("", id="open-error")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self.query_one("#open-title", Static).update(
            Text("open a train, or start one from a demo", style=f"bold {ui(self)['accent']}"))
        self._folder_title()
        # the end of a long path in view (the folder's own name), once the field has a width
        self.call_after_refresh(self._path_end)
        recent = self.query_one("#open-recent", OptionList)
        recent.border_title = "recent"
        self._recent_files = recent_files()
        self._fill_recent()
        self.call_after_refresh(self._fill_recent)  # again once the list has its width
        demos = self.query_one("#open-demos", OptionList)
        demos.border_title = "new train from a demo"
        demos.add_options([Option(name, id=name) for name in demo_names()])
        self.query_one("#open-tree").focus()

    def on_resize(self) -> None:
        self.call_after_refresh(self._fill_recent)  # the folders wrapped for the new width

    def _fill_recent(self) -> None:
        """Each recent file by its name, its folder under it, wrapped after a "/" to the
        list's width (at 80 x 24 a whole path broke mid-name, "tide_of / fice.toml")."""
        if not self.is_attached:
            return
        recent = self.query_one("#open-recent", OptionList)
        files = getattr(self, "_recent_files", [])
        # the options' padding and room for a scrollbar
        width = max(12, recent.scrollable_content_region.width - 4)
        highlighted = recent.highlighted
        recent.clear_options()
        if not files:
            recent.add_option(Option(Text("none yet", style="dim"), disabled=True))
            return
        muted = ui(self)["muted"]
        recent.add_options([
            Option(Text.assemble((p.name, "bold"), *(("\n  " + line, muted)
                                 for line in folder_lines(str(p.parent), width - 2))),
                   id=str(p)) for p in files])
        if highlighted is not None:
            recent.highlighted = min(highlighted, len(files) - 1)

    def _path_end(self) -> None:
        field = self.query_one("#open-path", Input)
        field.cursor_position = 0  # a move, so the field scrolls to the cursor at the end
        field.cursor_position = len(field.value)

    def _folder_title(self) -> None:
        tree = self.query_one("#open-tree", TrainFiles)
        self.query_one("#open-files").border_title = Text(f"files in {tree.path}")
        self.query_one("#open-files").border_subtitle = "↑ up / alt+↑: the folder above"

    def _look_in(self, folder: Path) -> None:
        """Show the files of ``folder`` (and say so in the path field)."""
        tree = self.query_one("#open-tree", TrainFiles)
        tree.path = folder
        field = self.query_one("#open-path", Input)
        field.value = str(folder)
        field.cursor_position = len(field.value)  # the end of a long path in view
        self._folder_title()
        self._error("")

    def action_up(self) -> None:
        folder = Path(self.query_one("#open-tree", TrainFiles).path).resolve()
        if folder.parent == folder:
            self._error(f"{folder} is the top folder")
            return
        self._look_in(folder.parent)

    @on(Button.Pressed, "#open-up")
    def _up_pressed(self) -> None:
        self.action_up()

    @on(Input.Submitted, "#open-path")
    def _typed(self, event: Input.Submitted) -> None:
        """A folder is looked in; a file is opened; anything else says what is wrong."""
        text = event.value.strip()
        if not text:
            self._error("type a folder to look in, or a train file to open")
            return
        here = Path(self.query_one("#open-tree", TrainFiles).path)
        path = Path(text).expanduser()
        path = path if path.is_absolute() else here / path
        try:
            is_dir, is_file = path.is_dir(), path.is_file()
        except OSError as exc:
            self._error(f"{path}: cannot look at it ({exc.strerror or exc})")
            return
        if is_dir:
            self._look_in(path.resolve())
        elif is_file:
            self._open(lambda: self._editor(path), str(path))
        else:
            self._error(f"{path}: no such file or folder")

    def _error(self, message: str) -> None:
        label = self.query_one("#open-error", Label)
        label.update(Text(message))
        label.set_class(bool(message), "-shown")

    #: the choice refused once because the train on the bench has changes not saved
    _unsaved_asked: str | None = None

    def _editor(self, path, new: bool = False):
        """The train at ``path`` (a copy to start from, with ``new``), read against the sky
        its file names, as the commands read it (or the ``--ephemeris`` given)."""
        sky = self.session.sky_for_train(load_train(path))
        return (TrainEditor.new_from if new else TrainEditor.open)(path, sky)

    def _open(self, make, what: str) -> None:
        old = self.session.editor
        if old is not None and old.differs and self._unsaved_asked != what:
            self._unsaved_asked = what
            self._error("the train on the bench has changes not saved (ctrl+s there saves "
                        "them): choose this again to open it anyway, losing them")
            return
        try:
            editor = make()
        except WheelworkError as exc:
            self._error(str(exc))
            return
        except OSError as exc:
            self._error(f"cannot read it: {exc.strerror or exc}")
            return
        if old is not None:  # the primes the user cannot cut hold for the whole session
            editor.forbidden_primes = old.forbidden_primes
        self.session.editor = editor
        self.session.frame = ""
        self.session.use_sky(editor.sky)
        adopt(self.app, editor.mech)
        remember(editor.path)
        self.run_worker(self._back(), exclusive=True)

    async def _back(self) -> None:
        await rebuild_bench(self.app)
        self.dismiss(None)

    @on(DirectoryTree.FileSelected, "#open-tree")
    def _file(self, event: DirectoryTree.FileSelected) -> None:
        self._open(lambda: self._editor(event.path), str(event.path))

    @on(OptionList.OptionSelected, "#open-recent")
    def _recent(self, event: OptionList.OptionSelected) -> None:
        path = Path(event.option.id)
        self._open(lambda: self._editor(path), str(path))

    @on(OptionList.OptionSelected, "#open-demos")
    def _demo(self, event: OptionList.OptionSelected) -> None:
        path = demo_path(event.option.id)
        self._open(lambda: self._editor(path, new=True), f"demo {path}")

    def action_help(self) -> None:
        self.app.push_screen(HelpScreen(self.BINDINGS))

    def action_back(self) -> None:
        self.dismiss(None)


# --- tooth search for one pointer ------------------------------------------------------------
class TeethField(ListStepInput):
    """A bound of the tooth search: ↑ ↓ pick the pointer above or below in the list, so the
    pointer can be chosen from the box the screen opens in."""

    LIST = "teeth-pointers"


class TeethScreen(ClosesOnce, SizeGuard, Screen):
    """Search new tooth counts for one pointer's chain (engine.rechain): pick the pointer,
    set the bounds, Enter searches in a worker (progress bar; Escape stops it), Enter on an
    answer puts it in the train as one edit (ctrl+z undoes it)."""

    BINDINGS = [
        Binding("escape", "back", "stop / back"),
        Binding("f1", "help", "help"),
    ]

    def __init__(self, session, pointer: str | None = None):
        super().__init__()
        self.session = session
        self.editor: TrainEditor = session.editor
        names = list(self.editor.mech.train.pointers)
        self.pointer = pointer if pointer in names else (names[0] if names else None)
        self.chain = None
        self.answers: list = []
        self.searching = False
        self._run = 0
        self._bounds = ("", "")  # the pinion and wheel ranges of the last search

    def compose(self) -> ComposeResult:
        yield Static(id="teeth-title")
        with Horizontal(id="teeth-top"):
            yield OptionList(id="teeth-pointers")
            yield Static(id="teeth-chain")
        with Horizontal(classes="teeth-row"):
            yield Label("pinions ", classes="teeth-label")
            yield TeethField("8-30", id="teeth-pinions", compact=True, classes="teeth-short")
            yield Label(" wheels ", classes="teeth-label")
            yield TeethField("20-150", id="teeth-wheels", compact=True, classes="teeth-short")
            yield Label(" max error ppm ", classes="teeth-label")
            yield TeethField("", placeholder="any", id="teeth-ppm", compact=True,
                             classes="teeth-short")
        with Horizontal(classes="teeth-row"):
            yield Label("primes you cannot cut ", classes="teeth-label")
            yield TeethField(", ".join(map(str, self.editor.forbidden_primes)),
                             placeholder="none", id="teeth-primes", compact=True)
        yield Checkbox("search the whole chain (other pointers it drives move too)",
                       id="teeth-whole", compact=True)
        with Horizontal(id="teeth-progress-row"):
            yield ProgressBar(total=100, show_eta=False, id="teeth-progress")
            yield Label("Enter searches", id="teeth-status")
        yield Label("", id="teeth-error")
        yield Label("", id="teeth-note")
        yield OptionList(id="teeth-answers")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self.query_one("#teeth-pointers").border_title = "pointer"
        self.query_one("#teeth-answers").border_title = "answers: Enter puts one in the train"
        ol = self.query_one("#teeth-pointers", OptionList)
        names = list(self.editor.mech.train.pointers)
        ol.add_options([Option(Text(n), id=n) for n in names])
        # wide enough for the longest name (its border and margin, 4 cells), up to 32: a
        # name of 22 letters was broken over two lines in the stylesheet's 20
        ol.styles.width = min(max(20, max(map(len, names), default=0) + 4), 32)
        if self.pointer is not None:
            ol.highlighted = names.index(self.pointer)
        self._title()
        self._aim(whole=None)
        self.query_one("#teeth-pinions", Input).focus()

    def _title(self) -> None:
        self.query_one("#teeth-title", Static).update(Text.assemble(
            ("find teeth for a pointer  ", f"bold {ui(self)['accent']}"),
            (self.editor.mech.train.name, "bold"), title_mark(self.session)))

    def _error(self, message: str) -> None:
        label = self.query_one("#teeth-error", Label)
        label.update(Text(message))
        label.set_class(bool(message), "-shown")

    def _aim(self, whole: bool | None) -> None:
        """Work out the chain of the chosen pointer (cheap: a few solves) and show it."""
        from engine.rechain import pointer_chain

        self.chain = None
        self._clear_answers()
        box = self.query_one("#teeth-chain", Static)
        if self.pointer is None:
            box.update(Text("this train has no pointers"))
            return
        try:
            chain = pointer_chain(self.editor.mech, self.pointer, self.session.frame, whole)
        except WheelworkError as exc:
            box.update(Text(""))
            self._error(str(exc))
            return
        self._error("")
        self.chain = chain
        check = self.query_one("#teeth-whole", Checkbox)
        with check.prevent(Checkbox.Changed):
            check.value = chain.whole
        row = next((r for r in self.editor.compare(self.session.frame)
                    if r.pointer == self.pointer), None)
        t = Text()
        t.append(f"{chain.pointer}", style="bold")
        t.append(f" shows the {chain.target_name} ({chain.frame} dial)\n")
        t.append("meshes searched: ", style=ui(self)["muted"])
        t.append(" · ".join(f"{s.driver} {s.driver_teeth} → {s.driven} {s.driven_teeth}"
                            for s in chain.stages))
        if chain.kept:
            t.append("\nkept as they are: ", style=ui(self)["muted"])
            t.append(" · ".join(f"{s.driver_teeth}/{s.driven_teeth}" for s in chain.kept))
        for r in chain.returns:  # every answer keeps it (engine.rechain)
            t.append("\ncoaxial return: ", style=ui(self)["muted"])
            t.append(r.text())
        if row is not None:
            t.append("\nnow: ", style=ui(self)["muted"])
            t.append(f"{ppm(row.after.period_error_ppm)} ppm, "
                     f"{drift(row.after.drift_deg_per_century)} °/cy")
        if chain.also_moves:
            t.append(f"\nalso moves: {', '.join(chain.also_moves)}", style=ui(self)["accent"])
        box.update(t)

    def _note(self, message: str) -> None:
        label = self.query_one("#teeth-note", Label)
        label.update(Text(message))
        label.set_class(bool(message), "-shown")

    def _worse_note(self, answers: list, pinions: str, wheels: str) -> str:
        """A line when no answer beats the train as it is: its error now, and which of the
        chain's own counts the bounds leave out (the reason, usually: the table orrery's
        Mars return is 49/50 · 51/94, every member outside the default pinions 8-30)."""
        from engine.search import make_constraints

        row = next((r for r in self.editor.compare(self.session.frame)
                    if r.pointer == self.pointer), None)
        if not answers or row is None or self.chain is None:
            return ""
        now = abs(row.after.period_error_ppm)
        best = min(abs(a.period_error_ppm) for a in answers)
        if not math.isfinite(now) or best <= now * (1 + 1e-9) + 1e-9:  # the same, or better
            return ""
        text = (f"none beats the train as it is ({ppm(row.after.period_error_ppm)} ppm)")
        try:
            cons = make_constraints(stages=len(self.chain.stages), wheels=wheels,
                                    pinions=pinions)
        except WheelworkError:
            return text
        out = []
        for st in self.chain.stages:
            small, large = sorted((st.driver_teeth, st.driven_teeth))
            if not cons.pinions[0] <= small <= cons.pinions[1]:
                out.append(f"pinion {small} outside {cons.pinions[0]}-{cons.pinions[1]}")
            if not cons.wheels[0] <= large <= cons.wheels[1]:
                out.append(f"wheel {large} outside {cons.wheels[0]}-{cons.wheels[1]}")
        if out:
            text += f": its own counts are out of these bounds ({', '.join(out)})"
        return text

    def _clear_answers(self) -> None:
        self._note("")
        self.answers = []
        self.query_one("#teeth-answers", OptionList).clear_options()
        self.query_one("#teeth-status", Label).update("Enter searches")
        self.query_one("#teeth-progress", ProgressBar).update(progress=0)

    @on(OptionList.OptionHighlighted, "#teeth-pointers")
    def _pointer(self, event: OptionList.OptionHighlighted) -> None:
        if event.option.id != self.pointer:
            self._stop_search()
            self.pointer = event.option.id
            self._aim(whole=None)

    @on(Checkbox.Changed, "#teeth-whole")
    def _whole(self, event: Checkbox.Changed) -> None:
        self._stop_search()
        self._aim(whole=event.value)

    @on(Input.Submitted)
    def _go(self) -> None:
        from engine.edit import parse_primes

        if self.chain is None:
            return
        text = self.query_one("#teeth-ppm", Input).value.strip()
        try:
            primes = parse_primes(self.query_one("#teeth-primes", Input).value)
            max_ppm = None if not text else float(text)
        except WheelworkError as exc:
            self._error(str(exc))
            return
        except ValueError:
            self._error(f"max error ppm: cannot read {text!r} (a number, e.g. 0.5; empty: any)")
            return
        self.editor.forbidden_primes = primes  # the same primes as the parts screen
        self._error("")
        self._clear_answers()
        self._run += 1
        self.searching = True
        self.query_one("#teeth-progress", ProgressBar).update(progress=0)
        self.query_one("#teeth-status", Label).update("searching… (Escape stops)")
        self._bounds = (self.query_one("#teeth-pinions", Input).value,
                        self.query_one("#teeth-wheels", Input).value)
        self.search(self.chain, *self._bounds, primes, max_ppm, self._run)

    @work(thread=True, exclusive=True, group="teeth", exit_on_error=False)
    def search(self, chain, pinions: str, wheels: str, primes, max_ppm, run: int) -> None:
        from engine.errors import SearchCancelled
        from engine.rechain import chain_search

        worker = get_current_worker()

        def progress(fraction: float) -> None:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._progress, fraction, run)

        try:
            answers = chain_search(chain, wheels=wheels, pinions=pinions,
                                   forbidden_primes=primes, max_error_ppm=max_ppm,
                                   progress=progress, cancel=lambda: worker.is_cancelled)
        except SearchCancelled:
            return
        except Exception as exc:  # noqa: BLE001 - a WheelworkError, or a fault to report
            self.app.call_from_thread(self._failed, str(exc), run)
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._found, answers, run)

    def _progress(self, fraction: float, run: int) -> None:
        if run == self._run:
            self.query_one("#teeth-progress", ProgressBar).update(progress=100 * fraction)

    def _failed(self, message: str, run: int) -> None:
        if run == self._run:
            self.searching = False
            self.query_one("#teeth-status", Label).update("no search")
            self._error(message)

    def _found(self, answers: list, run: int) -> None:
        if run != self._run:
            return
        self.searching = False
        self.answers = answers
        self.query_one("#teeth-progress", ProgressBar).update(progress=100)
        self.query_one("#teeth-status", Label).update(
            f"{len(answers)} answer{'' if len(answers) == 1 else 's'}, best first"
            if answers else "no answer within these bounds")
        ol = self.query_one("#teeth-answers", OptionList)
        ol.clear_options()
        width = max((len(a.stages_text()) for a in answers), default=0)
        now = {w: t for w, _, t in self.editor.wheels()}
        ratio_now = self.chain.ratio_now if self.chain is not None else None
        # each column to one number of decimals, its points lined up
        cols = list(zip(error_column(a.period_error_ppm for a in answers),
                        error_column(a.drift_deg_per_century for a in answers), strict=True))
        ol.add_options([Option(self._answer_text(a, width, now, ratio_now, cols[i]), id=str(i))
                        for i, a in enumerate(answers)])
        self._note(self._worse_note(answers, *self._bounds))
        if answers:
            ol.highlighted = 0
            ol.focus()

    @staticmethod
    def _answer_text(a, width: int, now: dict, ratio_now=None,
                     cells: tuple[str, str] | None = None) -> Text:
        """One answer's line; "(as now)" for the train's own teeth, "(ratio as now)" for other
        teeth giving the very same ratio (picking it changes the wheels, not the reading);
        ``cells``: its ppm and °/cy as the list's columns write them
        (:func:`engine.figures.error_column`); alone, its own."""
        if cells is None:
            cells = (ppm(a.period_error_ppm), drift(a.drift_deg_per_century))
        same = all(now.get(w) == n for w, n in a.teeth.items())
        mark = ("  (as now)" if same else
                "  (ratio as now)" if ratio_now is not None and a.ratio == ratio_now else "")
        return Text.assemble((a.stages_text().ljust(width), "bold"),
                             f"  {cells[0]:>10} ppm  {cells[1]:>9} °/cy  "
                             f"{a.result.total_teeth:>4} teeth",
                             (mark, "#98c379"))

    @on(OptionList.OptionSelected, "#teeth-answers")
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        from engine.rechain import chain_edit_name

        answer = self.answers[int(event.option.id)]
        try:
            mech = self.editor.set_teeth_many(answer.teeth, chain_edit_name(self.chain))
        except WheelworkError as exc:
            self._error(str(exc))  # the train stays as it was
            return
        adopt(self.app, mech)
        self.notify(f"put in: {answer.stages_text()} (ctrl+z undoes)", timeout=4, markup=False)
        self.dismiss(self.editor.last_change)

    def _stop_search(self) -> bool:
        if not self.searching:
            return False
        self._run += 1
        self.workers.cancel_group(self, "teeth")
        self.searching = False
        self.query_one("#teeth-status", Label).update("stopped")
        return True

    def action_back(self) -> None:
        if not self._stop_search():
            self.dismiss(None)

    def action_help(self) -> None:
        self.app.push_screen(HelpScreen(self.BINDINGS))
