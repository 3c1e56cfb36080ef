"""Screens: the bench (main screen), the drift chart, and the small dialogs."""

from __future__ import annotations

import asyncio
import math
import time
from dataclasses import replace
from fractions import Fraction
from pathlib import Path

import numpy as np
from rich.table import Table
from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.await_complete import AwaitComplete
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen, Screen
from textual.widget import Widget
from textual.widgets import (
    Button,
    Footer,
    Input,
    Label,
    OptionList,
    ProgressBar,
    RadioButton,
    RadioSet,
    Static,
)
from textual.widgets.option_list import Option
from textual.worker import get_current_worker
from textual_hires_canvas import HiResMode
from textual_plot import PlotWidget

from engine.dates import (
    AD_1_JD,
    calendar_date,
    format_day,
    format_jd,
    parse_crank_step,
    parse_when,
)
from engine.errors import WheelworkError
from engine.figures import (
    error_sigma_column,
    error_with_sigma,
    figure,
    fixed,
    table_cells,
)
from engine.kinds import shows_text
from engine.periods import JULIAN_YEAR_DAYS
from engine.view import chart_scale, decimal_year, is_arm, train_layout

from .session import FPS, FRAME_NAMES, MAX_STEP_TURNS, RESET_TO, SPEEDS, Session
from .small import SizeGuard
from .widgets import (
    CAUTION,
    EclipseInfo,
    Findings,
    OrreryPlan,
    PhaseDiscs,
    Readings,
    SkyDial,
    Status,
    TrainView,
    WholeTickLabels,
    ui,
)

_G1 = Binding.Group("±1", compact=True)
_G10 = Binding.Group("±10", compact=True)
_G100 = Binding.Group("±100")
_G1000 = Binding.Group("±1000", compact=True)
_GSTEP = Binding.Group("±step", compact=True)
_GSPEED = Binding.Group("speed", compact=True)
EDIT_KEYS = Binding.Group("↶↷", compact=True)
_GDECADE = Binding.Group("decades", compact=True)
_GTHRESHOLD = Binding.Group("threshold", compact=True)
_GECLIPSE = Binding.Group("eclipse", compact=True)
_GTABLE = Binding.Group("table", compact=True)


# What each action does, for help and the command palette (the footer keeps short labels).
LONG_HELP = {
    "crank(1)": "crank one turn forward", "crank(-1)": "crank one turn back",
    "crank(10)": "crank 10 turns forward", "crank(-10)": "crank 10 turns back",
    "crank(100)": "crank 100 turns forward", "crank(-100)": "crank 100 turns back",
    "crank(1000)": "crank 1000 turns forward", "crank(-1000)": "crank 1000 turns back",
    "crank_step(1)": "crank forward by the chosen step",
    "crank_step(-1)": "crank back by the chosen step",
    "choose_step": "choose the step for + and −: turns (3, 1/24) or a time (12h, 3d, 1y)",
    "run": "run forwards / pause continuous cranking",
    "run(-1)": "run backwards / pause continuous cranking",
    "now": "jump to now: the computer's clock, UT", "speed(1)": "crank faster when running",
    "speed(-1)": "crank slower when running",
    "go_to_date": "go to a date: turn the crank to it",
    "epoch": "back to the epoch (crank turn 0)",
    "reset_pointers": "re-set the pointers to the sky at this date, by hand",
    "choose_reset": "re-set one pointer (or all) to the sky or to its mean position…",
    "reset_pointers(None, 'mean')": "re-set the pointers to their mean positions at this date",
    "undo_reset": "undo the last re-set of the pointers",
    "toggle_frame": "switch frame: equinox of date ↔ fixed stars",
    "toggle_observer": "switch observer: geocentric ↔ site",
    "drift": "open the drift chart",
    "screenshot": "save a picture of the screen (SVG) to a path you choose…",
    "eclipse(1)": "jump to the next real eclipse (solar or lunar)",
    "eclipse(-1)": "jump to the previous real eclipse",
    "predicted": "jump to the next new or full moon the train predicts an eclipse at",
    "help": "help: keys and caution", "app.quit": "quit",
    "change_train": "change the train: teeth, pin-and-slot lengths, crank days per turn",
    "undo_edit": "undo the last change to the train",
    "redo_edit": "make again the last change undone",
    "save_train": "save the changed train (a new name unless you replace a file)",
    "open_train": "open another train file, or start a new train from a demo",
    "find_teeth": "search new tooth counts for one pointer's chain (answers put in as an edit)",
    "back": "back to the bench", "cancel": "cancel the drift computation",
    "decades(1)": "one decade more", "decades(-1)": "one decade less",
    "threshold(1)": "raise the threshold", "threshold(-1)": "lower the threshold",
    "scale": "drift chart's y scale: every curve whole ↔ fitted to the threshold band",
    "table(1)": "scroll the drift table down a row (when it does not fit)",
    "table(-1)": "scroll the drift table up a row",
    "table_page(1)": "scroll the drift table down a page",
    "table_page(-1)": "scroll the drift table up a page",
}


def long_help(b: Binding) -> str:
    return LONG_HELP.get(b.action, b.description)


#: the key to the red numbers in the train drawing
#: the drawing's key: an arbor too fast to follow by eye shows its turns as a red count (an
#: example figure here, +98.5, read as a real count at turn 0 beside wheels standing still)
TRAIN_KEY = "[bold #e06c75]+N[/] in red = turns since epoch, for arbors too fast to draw"

#: Bench keys the footer drops on narrower screens, by the width they need (every key stays
#: in help and the command palette). At 80 columns the footer keeps crank ±1, run, date,
#: epoch, re-set, undo, frame, observer, drift and help; ±10 and quit come back at 100
#: (↑ ↓ and q work at any width). Each key comes in where the footer has room for it beside
#: the command palette's key (tests/test_tui.py sweeps the widths).
FOOTER_FROM_WIDTH = {
    "crank(10)": 100, "crank(-10)": 100, "app.quit": 100,
    "crank(100)": 155, "crank(-100)": 155, "crank(1000)": 155, "crank(-1000)": 155,
    "speed(1)": 195, "speed(-1)": 195,
    "crank_step(1)": 130, "crank_step(-1)": 130, "choose_step": 130,
    "eclipse(1)": 185, "eclipse(-1)": 185, "predicted": 185,
    "change_train": 250, "undo_edit": 250, "redo_edit": 250, "save_train": 250,
    "open_train": 250, "run(-1)": 270, "now": 170, "choose_reset": 270,
    "reset_pointers(None, 'mean')": 270, "screenshot": 270,
}
#: On a train that predicts eclipses (a node hand, a draconic or eclipse-year dial, an
#: eclipse-cycle dial) the eclipse jump keys x z p are in the footer at any width, and epoch,
#: undo and observer make room for them on narrow screens (they stay in help and the palette).
FOOTER_ECLIPSE_TRAIN = {"eclipse(1)": 0, "eclipse(-1)": 0, "predicted": 0,
                        "epoch": 155, "undo_reset": 155, "toggle_observer": 155,
                        "crank(100)": 185, "crank(-100)": 185, "crank(1000)": 185,
                        "crank(-1000)": 185}
#: Shorter footer labels below 100 columns.
FOOTER_SHORT = {"toggle_observer": "site", "go_to_date": "date"}
#: The footer shows the palette key from this width; below it the title line names ctrl+p.
FOOTER_PALETTE_FROM_WIDTH = 120


class InfoPanel(Vertical):
    """The readings panel (status and readings): when its height changes after the screen
    was fitted (a resize's pass lays the status out again: shrunk to 80 x 24, the table
    orrery's turn folds onto a line of its own), the side column is fitted again, or the
    warnings below ran a row past the column's bottom."""

    def on_resize(self) -> None:
        fit = getattr(self.screen, "fit_side", None)
        if fit is not None:
            self.call_after_refresh(fit)


def eclipse_notice(e) -> str:
    """One line for a real eclipse the crank was turned to (an ``EclipseNow``), with the
    caution for a solar one: its type and greatest eclipse in UT."""
    text = f"{e.sky_type} {e.kind} eclipse, greatest {format_jd(e.jd_greatest)}"
    return f"{text}\n{CAUTION}" if e.kind == "solar" else text


class BenchScreen(SizeGuard, Screen):
    """The main screen: sky dial, readings, phase, the train, warnings."""

    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (100, "-medium"), (120, "-wide")]
    VERTICAL_BREAKPOINTS = [(0, "-short"), (30, "-mid"), (42, "-tall")]

    BINDINGS = [
        Binding("right", "crank(1)", "crank +1", group=_G1),
        Binding("left", "crank(-1)", "crank −1", group=_G1),
        Binding("up", "crank(10)", "crank +10", group=_G10),
        Binding("down", "crank(-10)", "crank −10", group=_G10),
        Binding("pageup", "crank(100)", "crank +100", group=_G100),
        Binding("pagedown", "crank(-100)", "crank −100", group=_G100),
        Binding("right_square_bracket", "crank(1000)", "crank +1000", group=_G1000),
        Binding("left_square_bracket", "crank(-1000)", "crank −1000", group=_G1000),
        Binding("plus,equals_sign", "crank_step(1)", "crank +step", group=_GSTEP),
        Binding("minus", "crank_step(-1)", "crank −step", group=_GSTEP),
        Binding("s", "choose_step", "step…"),
        Binding("space", "run", "run"),
        Binding("b", "run(-1)", "run back"),
        Binding("full_stop", "speed(1)", "faster", group=_GSPEED),
        Binding("comma", "speed(-1)", "slower", group=_GSPEED),
        Binding("g", "go_to_date", "date…"),
        Binding("e", "epoch", "epoch"),
        Binding("n", "now", "now"),
        Binding("r", "reset_pointers", "re-set"),
        Binding("R", "choose_reset", "re-set…"),
        Binding("m", "reset_pointers(None, 'mean')", "mean"),
        Binding("u", "undo_reset", "undo"),
        Binding("t", "toggle_frame", "frame"),
        Binding("o", "toggle_observer", "observer"),
        Binding("d", "drift", "drift"),
        Binding("i", "screenshot", "picture…"),
        Binding("x", "eclipse(1)", "eclipse▸", group=_GECLIPSE),
        Binding("z", "eclipse(-1)", "◂eclipse", group=_GECLIPSE),
        Binding("p", "predicted", "predicted▸"),
        Binding("w", "change_train", "edit…"),
        Binding("ctrl+z", "undo_edit", "undo change", group=EDIT_KEYS),
        Binding("ctrl+y", "redo_edit", "redo change", group=EDIT_KEYS),
        Binding("ctrl+s", "save_train", "save…"),
        Binding("ctrl+o", "open_train", "open…"),
        Binding("question_mark,f1", "help", "help"),
        Binding("q", "app.quit", "quit"),
    ]

    def __init__(self, session: Session):
        super().__init__()
        self.session = session
        self.running = False
        self._layout = train_layout(session.mech.train)
        #: what the train's pointers show; a train with nothing for the sky dial (a moon-phase
        #: disc alone) gets its phase discs where the dial would be
        self.kinds = {p.shows for p in session.mech.train.pointers.values()}
        self.phase_only = not any(SkyDial.draws(k) for k in self.kinds)
        self._footer_tier = -1

    @property
    def active_bindings(self):
        """The keys the footer shows: less used ones drop out on narrow screens (every key
        still works, and is in help and the palette; key dispatch does not use this)."""
        active = super().active_bindings
        width = self.size.width or self.app.size.width
        shown = {}
        from_width = self.footer_from_width
        for k, a in active.items():
            if width < from_width.get(a.binding.action, 0):
                continue
            short = FOOTER_SHORT.get(a.binding.action) if width < 100 else None
            if short is not None:
                a = a._replace(binding=replace(a.binding, description=short))
            shown[k] = a
        return shown

    @property
    def footer_from_width(self) -> dict[str, int]:
        """The width from which the footer shows each key, for the train on the bench."""
        from engine.eclipses import methods

        train = self.session.mech.train
        if getattr(self, "_footer_train", None) is not train:
            self._footer_train = train
            self._footer_from = (FOOTER_FROM_WIDTH | FOOTER_ECLIPSE_TRAIN if methods(train)
                                 else FOOTER_FROM_WIDTH)
        return self._footer_from

    #: rows of the train drawing (the stylesheet's #train height, and the fewest it is drawn
    #: in), the fewest the phase discs or the orrery plan are drawn in (borders included),
    #: and the fewest the warnings panel keeps when there is anything in it: its border and
    #: one line
    TRAIN_ROWS, TRAIN_MIN_ROWS, FLEX_MIN_ROWS, FINDINGS_MIN_ROWS = 16, 14, 8, 3
    #: the orrery plan needs a little more to keep seven orbits apart (at 8 rows the planets'
    #: marks ran together)
    PLAN_MIN_ROWS = 10
    _eclipse_rows = 0  # the eclipses panel's height when last shown

    def fit_side(self) -> None:
        """Make the right-hand column fit the rows it has, so no panel runs off the bottom:
        the readings and the eclipses first, then the warnings (one line at least, scrolling
        for the rest), then the phase discs or the orrery plan (hidden when they would get
        fewer than FLEX_MIN_ROWS or PLAN_MIN_ROWS), and the train drawing only when all of that leaves it
        TRAIN_MIN_ROWS (it takes up to TRAIN_ROWS). A train that predicts no eclipses gives
        its eclipses panel up when the readings would leave the warnings no line even with the
        panel joined (the table orrery's seven arms at 80 x 24); one that does keeps it, and
        when that leaves the warnings short it gives up its bottom border (the class
        ``-joined``: the warnings' top border closes it; the tide office, and the planet dial
        that predicts none, at 80 x 24). Heights are measured from the
        panels' own content, which depends on the width only, so fitting again never changes
        what it measured."""
        from engine.eclipses import methods

        if not self.is_attached or not self.query("#side") or self.is_too_small:
            return
        info, eclipse = self.query_one("#info"), self.query_one("#eclipse")
        pane, findings = self.query_one("#findings-pane"), self.query_one(Findings)
        train = self.query_one("#train")
        flex = next(iter(self.query("#phase, #plan-pane")), None)
        rows = self.size.height - self.query_one("#title").outer_size.height - 1  # footer
        if eclipse.display:  # its lines and both borders (a hidden panel measures nothing):
            # not its laid-out height, which lags a -joined class just set or taken off
            self._eclipse_rows = (eclipse.lines + 2 if eclipse.lines else
                                  eclipse.outer_size.height + eclipse.has_class("-joined"))
        cap = {"-short": 5, "-mid": 10}.get(
            next((c for c in ("-short", "-mid") if self.has_class(c)), ""), 8)
        want = min(cap, findings.outer_size.height + 2)  # its lines and its border
        least = min(want, self.FINDINGS_MIN_ROWS)
        # a train that predicts none keeps the panel (its nearest syzygy, the sky's eclipse)
        # while it fits, joined if it must be: given up whole, the planet dial and the
        # lunation board at 80 x 24 left four and two rows blank under the warnings
        show_eclipse = (bool(methods(self.session.mech.train)) or info.outer_size.height
                        + self._eclipse_rows - 1 + least <= rows)
        eclipse.styles.display = "block" if show_eclipse else "none"
        joined = show_eclipse and info.outer_size.height + self._eclipse_rows + least > rows
        eclipse.set_class(joined, "-joined")
        base = info.outer_size.height + (self._eclipse_rows - joined if show_eclipse else 0)
        flex_rows = 0 if flex is None or self.has_class("-short") else (
            self.PLAN_MIN_ROWS if flex.id == "plan-pane" else self.FLEX_MIN_ROWS)
        train_rows = min(self.TRAIN_ROWS, rows - (base + least + flex_rows))
        show_train = (self.has_class("-tall") and self.has_class("-wide")
                      and train_rows >= self.TRAIN_MIN_ROWS)
        side = rows - (train_rows if show_train else 0)
        show_flex = flex_rows > 0 and side >= base + least + flex_rows
        # the warnings: all their lines up to the cap, within what the other panels leave
        shown = max(least, min(want, side - base - (flex_rows if show_flex else 0)))
        train.styles.display = "block" if show_train else "none"
        if show_train:
            train.styles.height = train_rows
        if flex is not None:
            flex.styles.display = "block" if show_flex else "none"
            if show_flex:  # the rest of the column, never less than its fewest rows
                flex.styles.min_height = min(self._flex_css_min(flex), side - base - shown)
        pane.styles.max_height = shown

    def _flex_css_min(self, flex) -> int:
        """The phase discs' or orrery plan's own least height on a tall screen (the
        stylesheet's), which fitting never asks more than."""
        if self.has_class("-tall"):
            return 13 if flex.id == "plan-pane" else 12
        return self.PLAN_MIN_ROWS if flex.id == "plan-pane" else self.FLEX_MIN_ROWS

    def on_resize(self) -> None:
        width = self.size.width
        self.call_after_refresh(self.fit_side)
        if self.query("#title"):
            self.query_one("#title", Static).update(self._title_text(width))
        tier = sum(width >= w for w in {100, FOOTER_PALETTE_FROM_WIDTH,
                                       *self.footer_from_width.values()})
        if tier != self._footer_tier:
            self._footer_tier = tier
            self.query_one(Footer).show_command_palette = width >= FOOTER_PALETTE_FROM_WIDTH
            self.refresh_bindings()

    def _title_text(self, width: int) -> Text:
        """The title line: the train, its file (the one last saved or opened), the changed
        marker, and as much of the keys hint as fits the width (never cut mid-word)."""
        from .editing import title_mark

        s = self.session
        train = s.mech.train
        ed = s.editor
        if ed is None:
            name = Path(train.source).name
        else:
            name = ed.path.name if ed.path else "new train, not saved yet"
        title = Text.assemble(("wheelwork ", "bold"), (train.name, "bold"), (f"  {name}", "dim"),
                              title_mark(s))
        for hint in ("? help · ctrl+p every key", "? help"):
            if title.cell_len + 3 + len(hint) <= width - 2:  # the line's padding
                title.append_text(Text.assemble(("   ", ""), (hint, "dim")))
                break
        return title

    def compose(self) -> ComposeResult:
        s = self.session
        train = s.mech.train

        yield Static(self._title_text(self.size.width or self.app.size.width), id="title")
        with Horizontal(id="top"):
            with Vertical(id="dial-pane"):
                if self.phase_only:  # nothing for the dial: the phase discs take its place
                    yield PhaseDiscs(s, id="phase-main")
                else:
                    yield SkyDial(s, id="dial")
                    yield Static(SkyDial.key_text(self.kinds), id="dial-key")
                yield Static(CAUTION, id="caution")
            with Vertical(id="side"):
                with InfoPanel(id="info"):
                    yield Status(s, id="status")
                    yield Readings(id="readings")
                if any(is_arm(p.shows) for p in train.pointers.values()):
                    with Vertical(id="plan-pane"):
                        yield OrreryPlan(s, id="plan")
                        yield Static(OrreryPlan.key_text(), id="plan-key")
                elif not self.phase_only:
                    yield PhaseDiscs(s, id="phase")
                yield EclipseInfo(id="eclipse")
                with VerticalScroll(id="findings-pane", can_focus=False):
                    yield Findings(id="findings")
        yield TrainView(s, self._layout, id="train")
        yield Footer(compact=True)

    @property
    def _views(self) -> list:
        """The widgets that draw a :class:`Now` (found once; none while the screen closes).
        A new display is one more widget with a ``show(now)`` method, listed here."""
        if self._view_list is None:  # the status line last: it also shows the run state
            self._view_list = [w for cls in (SkyDial, TrainView, PhaseDiscs, OrreryPlan,
                                             EclipseInfo, Readings, Status)
                               for w in self.query(cls)]
        return self._view_list

    _view_list: list | None = None

    def on_unmount(self) -> None:
        self._stop()

    def on_mount(self) -> None:
        self.query_one("#dial-pane").border_title = "sky dial"
        self.query_one("#info").border_title = "readings"
        if self.phase_only:
            self.query_one("#dial-pane").border_title = "phase: train │ sky"
        if self.query("#phase"):
            self.query_one("#phase").border_title = "phase: train │ sky"
        if self.query("#plan-pane"):
            self.query_one("#plan-pane").border_title = "orrery from above"
        self.query_one("#eclipse").border_title = "eclipses"
        self.query_one("#findings-pane").border_title = Findings.title(self.session.findings)
        self.query_one("#train").border_title = "train"
        self.query_one("#train").border_subtitle = TRAIN_KEY
        self.query_one(Findings).show_findings(self.session.findings)
        self.app.theme_changed_signal.subscribe(self, self._theme_changed)
        self.refresh_view()
        self.call_after_refresh(self.fit_side)

    def _theme_changed(self, _theme) -> None:
        """Text styles come from the theme: draw the text panels again in the new one."""
        self.query_one(Findings).show_findings(self.session.findings)
        if self.is_attached and self.children:
            self.refresh_view()

    async def rebuild(self) -> None:
        """Compose the screen again for the train now on the bench (after a change)."""
        self._stop()
        self._layout = train_layout(self.session.mech.train)
        self.kinds = {p.shows for p in self.session.mech.train.pointers.values()}
        self.phase_only = not any(SkyDial.draws(k) for k in self.kinds)
        self._view_list = None
        await self.recompose()
        self.on_mount()
        self._footer_tier = -1  # the new train may want other keys in the footer
        self.on_resize()

    # --- drawing -------------------------------------------------------------------------
    def refresh_view(self) -> None:
        if not self.is_attached or not self.children:  # the app is closing
            self._stop()
            return
        try:
            now = self.session.now()
        except WheelworkError as exc:
            self._stop()
            self.notify(str(exc), title="cannot read the sky", severity="error", markup=False)
            return
        except Exception as exc:  # noqa: BLE001 - an engine fault must not take the screen down
            self._stop()
            self.notify(f"{type(exc).__name__}: {exc}", title="internal error", severity="error",
                        markup=False)
            return
        views = self._views
        for view in views[:-1]:
            view.show(now)
        views[-1].show(now, self.running)

    async def _frames(self) -> None:
        """Crank continuously at FPS frames a second. A late frame runs at once and the
        schedule restarts from it, so a slow terminal drops frames instead of queueing them."""
        next_t = time.monotonic()
        while self.running:
            self._tick()
            next_t += 1.0 / FPS
            delay = next_t - time.monotonic()
            if delay < 0:
                next_t, delay = time.monotonic(), 0.0
            await asyncio.sleep(delay)

    def _tick(self) -> None:
        try:
            self.session.crank(self.session.direction * self.session.speed_turns_per_s / FPS)
        except WheelworkError as exc:
            self._stop()
            self.notify(f"stopped: {exc}", severity="warning", markup=False)
        self.refresh_view()

    def _stop(self) -> None:
        self.running = False
        self.session.running = False
        self.workers.cancel_group(self, "crank")

    def _guard(self, fn, *args) -> bool:
        try:
            fn(*args)
        except (WheelworkError, ValueError, ZeroDivisionError) as exc:
            self.notify(str(exc), severity="error", markup=False)
            return False
        except Exception as exc:  # noqa: BLE001 - report, keep the bench open
            self.notify(f"{type(exc).__name__}: {exc}", title="internal error", severity="error",
                        markup=False)
            return False
        return True

    # --- actions -------------------------------------------------------------------------
    def action_crank(self, turns: int) -> None:
        if self._guard(self.session.crank, int(turns)):
            self.refresh_view()

    def action_crank_step(self, sign: int) -> None:
        if self._guard(self.session.crank, self.session.step * int(sign)):
            self.refresh_view()

    def action_choose_step(self) -> None:
        def done(step: tuple[Fraction, Fraction | None, str] | None) -> None:
            if step is not None and self._guard(self.session.set_step, *step):
                self.refresh_view()

        self.app.push_screen(StepDialog(self.session), done)

    def action_run(self, direction: int = 1) -> None:
        """Run continuously in ``direction`` (+1 forwards, -1 backwards), or pause: the key
        of the way it runs pauses it, the other key turns it round without a pause."""
        direction = 1 if int(direction) >= 0 else -1
        if self.running and self.session.direction == direction:
            self._stop()
        else:
            self.session.set_direction(direction)
            if not self.running:
                self.running = True
                self.session.running = True
                self.run_worker(self._frames, group="crank", exclusive=True)
        self.refresh_view()

    def action_now(self) -> None:
        if self._guard(self.session.go_to_now):
            self.refresh_view()

    def action_speed(self, direction: int) -> None:
        if int(direction) > 0:
            self.session.faster()
        else:
            self.session.slower()
        self.refresh_view()

    def action_go_to_date(self) -> None:
        def done(jd: float | None) -> None:
            if jd is not None and self._guard(self.session.go_to, jd):
                self.refresh_view()

        self.app.push_screen(DateDialog(self.session), done)

    def action_epoch(self) -> None:
        self.session.to_epoch()
        self.refresh_view()

    def action_reset_pointers(self, names=None, to: str = "sky") -> None:
        if self._guard(self.session.reset_pointers, names, to):
            which = "pointers" if names is None else ", ".join(names)
            self.notify(f"{which} re-set to {RESET_TO[to]} at this date (u undoes)", timeout=3,
                        markup=False)
            self.refresh_view()

    def action_choose_reset(self) -> None:
        def done(choice: tuple[list[str] | None, str] | None) -> None:
            if choice is not None:
                self.action_reset_pointers(*choice)

        self.app.push_screen(ResetDialog(self.session), done)

    def action_undo_reset(self) -> None:
        if self.session.undo_reset():
            self.notify("pointer setting restored", timeout=3, markup=False)
            self.refresh_view()
        else:
            self.notify("nothing to undo: the pointers are as set at the epoch", timeout=3,
                        markup=False)

    def action_toggle_frame(self) -> None:
        self.session.toggle_frame()
        self.refresh_view()

    def action_toggle_observer(self) -> None:
        self.session.toggle_observer()
        self.refresh_view()

    def action_eclipse(self, direction: int) -> None:
        if self._guard(self.session.jump_to_eclipse, int(direction)):
            self.refresh_view()
            # a train that predicts no eclipses gives its panel up on a short screen (the
            # lunation board at 80 x 24): say which eclipse the crank went to, or the jump
            # only changed the date
            if not self.query_one("#eclipse").display:
                e = self.session.eclipse_watch.at(self.session.jd_now())
                if e is not None and e.sky_type:
                    self.notify(eclipse_notice(e), title="eclipse", markup=False)

    def action_predicted(self) -> None:
        if self._guard(self.session.jump_to_predicted):
            self.refresh_view()

    def action_drift(self) -> None:
        self._stop()
        self.app.push_screen(DriftScreen(self.session))

    def action_help(self) -> None:
        self.app.push_screen(HelpScreen(self.BINDINGS))

    def action_screenshot(self) -> None:
        from datetime import datetime

        def done(out) -> None:
            if out is not None:  # taken once the dialog has gone from the screen
                self.call_after_refresh(self._shoot, out)

        stamp = datetime.now().strftime("%Y-%m-%d_%H%M%S")
        name = f"{Path(self.session.mech.train.source).stem}-{stamp}.svg"
        default = self.app._screenshot_folder() / name
        self.app.push_screen(ScreenshotDialog(default), done)

    def _shoot(self, out) -> None:
        try:
            svg = self.app.export_screenshot()
            with out.open("w", encoding="utf-8") as fh:
                fh.write(svg)
        except (WheelworkError, OSError) as exc:
            self.notify(str(exc), title="screenshot not saved", severity="error", timeout=8,
                        markup=False)
            return
        self.notify(f"saved to {out.path}", title="screenshot", timeout=8, markup=False)

    # --- changing the train (tui/editing.py) ----------------------------------------------
    def action_change_train(self) -> None:
        from .editing import PartsScreen

        if self.session.editor is not None:
            self._stop()
            self.app.push_screen(PartsScreen(self.session))

    def on_train_view_wheel_picked(self, event: TrainView.WheelPicked) -> None:
        """A click on a wheel in the train drawing: the parts screen, on that wheel."""
        from .editing import PartsScreen

        if self.session.editor is None:
            return
        if event.wheel is None:
            self.notify(f"arbor {event.arbor} carries no wheel to change", timeout=3, markup=False)
            return
        self._stop()
        self.app.push_screen(PartsScreen(self.session, ("teeth", event.wheel), picked=True))

    async def _edit_step(self, undo: bool) -> None:
        from .editing import STEP_WORDS, step_edit

        change = step_edit(self, undo)
        if change is not None:
            await self.rebuild()
            self.notify(f"{STEP_WORDS[undo]}: {change.text()}", timeout=3, markup=False)

    async def action_undo_edit(self) -> None:
        await self._edit_step(True)

    async def action_redo_edit(self) -> None:
        await self._edit_step(False)

    def action_save_train(self) -> None:
        from .editing import SaveDialog, remember

        async def done(path) -> None:
            if path is not None:
                remember(path)
                self.notify(f"saved {path}", timeout=3, markup=False)
                await self.rebuild()

        if self.session.editor is not None:
            self.app.push_screen(SaveDialog(self.session.editor), done)

    def action_open_train(self) -> None:
        from .editing import OpenScreen

        self._stop()
        self.app.push_screen(OpenScreen(self.session))


class ClosesOnce:
    """For screens on top of the bench: a screen closes once, and only while it is the one on
    top. Keys typed quickly can reach a screen after it has closed (two Enters, or Enter then
    Escape, both queued before the first is handled); without this each would pop a screen,
    the second one the bench itself. Mix in before the Textual screen class."""

    closing = False

    def dismiss(self, result=None) -> AwaitComplete:
        if self.closing or self.app.screen is not self:
            return AwaitComplete.nothing()
        self.closing = True
        return super().dismiss(result)


#: how much of a long entry an error message repeats: the start and the end
ECHO_HEAD, ECHO_TAIL = 24, 12


def shorten_echo(message: str, typed: str) -> str:
    """``message`` with a long echo of what was typed shortened to its start and end (and its
    length); everything else the message says (the limits, the numbers that matter) stays."""
    typed = typed.strip()
    if len(typed) <= ECHO_HEAD + ECHO_TAIL + 10 or typed not in message:
        return message
    short = f"{typed[:ECHO_HEAD]}…{typed[-ECHO_TAIL:]} ({len(typed):,} characters)"
    return message.replace(typed, short)


class Dialog(ClosesOnce, SizeGuard, ModalScreen):
    """A small dialog over the bench: Escape cancels (returns None); :meth:`accept` closes it
    with a result. Subclasses read their inputs in :meth:`submit` and call :meth:`accept` or
    :meth:`reject` (which shows the message in the label ``#<error_id>`` and keeps the dialog
    open, with what the user typed)."""

    BINDINGS = [Binding("escape", "cancel", "cancel")]
    error_id = "dialog-error"

    def framed(self, title: str, *body: Widget, ok: str = "OK") -> ComposeResult:
        """The usual dialog: ``title``, the widgets of ``body`` (an input and its hint), the
        error line and the accept (``ok``) and Cancel buttons."""
        with Vertical(id="dialog"):
            yield Label(title, classes="dialog-title")
            yield from body
            yield Label("", id=self.error_id)
            with Horizontal(classes="dialog-buttons"):
                yield Button(ok, variant="primary", id="ok")
                yield Button("Cancel", id="cancel")

    def accept(self, result) -> None:
        self.dismiss(result)

    def reject(self, message: str, typed: str = "") -> None:
        error = self.query_one(f"#{self.error_id}", Label)
        error.update(Text(shorten_echo(message, typed)))
        error.add_class("-shown")

    def read(self) -> None:  # pragma: no cover - overridden
        """Read the inputs; call accept() or reject()."""

    @on(Input.Submitted)
    @on(Button.Pressed, "#ok")
    def submit(self) -> None:
        if not self.closing:  # a second Enter queued behind the first does nothing
            self.read()

    @on(Button.Pressed, "#cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)


class DateDialog(Dialog):
    """Ask for a date; a bad or out-of-range date is reported here and the dialog stays."""

    error_id = "date-error"

    def __init__(self, session: Session):
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        yield from self.framed(
            "Turn the crank to the date (UT):",
            Input(placeholder="2040-06-21 12:00 · 15 March 1910 · 44-03-15 BC · JD 2451545.0",
                  id="date-input"),
            Label(Text(f"ephemeris {self.session.sky.name}: {self.session.sky.span_text}"),
                  id="date-hint"),
            ok="Go")

    def read(self) -> None:
        text = self.query_one("#date-input", Input).value
        try:
            jd = parse_when(text)  # also now, today, yesterday, tomorrow, as the commands
            self.session._check_jd(jd)
        except WheelworkError as exc:
            self.reject(str(exc), text)
            return
        self.accept(jd)


class StepDialog(Dialog):
    """Ask for the crank step used by +/−: turns (a whole number, a decimal or a fraction p/q)
    or a length of time (12h, 3d, 1y), which :func:`engine.dates.parse_crank_step` turns
    into crank turns for this train."""

    error_id = "step-error"

    def __init__(self, session: Session):
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        s = self.session
        shown = s.step_label if s.step_days is not None and s.step_label else str(s.step)
        yield from self.framed(
            "Crank step for + and − (turns, or a time):",
            Input(value=shown, id="step-input"),
            Label(f"turns: 3 · 2.5 · 1/24 · 5t    time: 30m · 12h · 3d · 2w · 1y\n"
                  f"{s.turn_days} on this train", id="step-hint"),
            ok="Set")

    def read(self) -> None:
        text = self.query_one("#step-input", Input).value
        try:
            step, days = parse_crank_step(text, self.session.mech.train.crank.days_per_turn)
            if step <= 0:
                raise ValueError("the step must be more than 0 turns")
            if step > MAX_STEP_TURNS:
                raise ValueError(f"the step must be at most {MAX_STEP_TURNS:,} turns"
                                 + (f" ({text.strip()} = {figure(float(step), 6)} turns)"
                                    if days is not None else ""))
            sky = self.session.sky
            lo, hi = sky.span_jd
            if float(step * Fraction(self.session.mech.train.crank.days_per_turn)) > hi - lo:
                # no date the bench can show is one step from another: + would only refuse
                raise ValueError(f"a step of {text.strip()} is longer than the whole of "
                                 f"{sky.name} ({sky.span_text}), so the crank could never take "
                                 f"it; {sky.longer_hint} (give it when opening the bench)")
        except (ValueError, WheelworkError) as exc:
            self.reject(str(exc), text)
            return
        self.accept((step, days, text.strip()))


class ResetDialog(Dialog):
    """Re-set pointers by hand: all or one (a list), to the true sky or to the mean position
    (a choice of two). Enter on a pointer, or the button, re-sets; Escape leaves them."""

    error_id = "reset-error"
    ALL = "\x00all"  # the list's id for "every pointer" (no pointer name starts so)
    BINDINGS = [Binding("escape", "cancel", "cancel"),
                Binding("m", "to('mean')", "to mean"), Binding("s", "to('sky')", "to sky")]

    def __init__(self, session: Session):
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        s = self.session
        with Vertical(id="dialog", classes="reset-dialog"):
            yield Label(f"Re-set by hand at {format_jd(s.jd_now())}", classes="dialog-title",
                        id="reset-dialog-title")
            with RadioSet(id="reset-to"):
                for key, words in RESET_TO.items():
                    yield RadioButton(f"to {words}", value=key == "sky", id=f"reset-{key}")
            width = max(len(n) for n in s.mech.train.pointers)
            options = [Option(Text("all pointers", style="bold"), id=self.ALL)]
            for name, p in s.mech.train.pointers.items():
                options.append(Option(Text.assemble(name.ljust(width + 2),
                                                    (shows_text(p.shows), "dim")),
                                      id=name))
            yield OptionList(*options, id="reset-list")
            yield Label("s sky · m mean · Enter re-sets the one picked · u on the bench undoes",
                        id="reset-hint")
            yield Label("", id="reset-error")
            with Horizontal(classes="dialog-buttons", id="reset-buttons"):
                yield Button("Re-set", variant="primary", id="ok", compact=True)
                yield Button("Cancel", id="cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#reset-list", OptionList).highlighted = 0
        self.query_one("#reset-list").focus()

    @property
    def target(self) -> str:
        pressed = self.query_one("#reset-to", RadioSet).pressed_button
        return "mean" if pressed is not None and pressed.id == "reset-mean" else "sky"

    def action_to(self, target: str) -> None:
        self.query_one(f"#reset-{target}", RadioButton).value = True

    @on(OptionList.OptionSelected, "#reset-list")
    def _picked(self) -> None:
        self.submit()

    def read(self) -> None:
        ol = self.query_one("#reset-list", OptionList)
        if ol.highlighted is None:
            self.reject("pick a pointer, or all pointers")
            return
        pick = ol.get_option_at_index(ol.highlighted).id
        self.accept((None if pick == self.ALL else [pick], self.target))


class ScreenshotDialog(Dialog):
    """Ask where to save a picture of the bench (SVG). A file that exists is replaced only
    after a second Enter on the same name; a missing folder, a folder or a link is refused
    here, in one line, and the dialog stays with what was typed."""

    error_id = "shot-error"

    def __init__(self, default: Path):
        super().__init__()
        self.default = Path(default)
        self._confirmed: Path | None = None

    def compose(self) -> ComposeResult:
        yield from self.framed(
            "Save a picture of the screen (SVG) to:",
            Input(value=str(self.default), id="shot-input"),
            Label(Text(f"~ is your home; a bare name goes in the current folder, {Path.cwd()}"),
                  id="shot-hint"),
            ok="Save")

    def read(self) -> None:
        from engine.commands.support import OutputFile

        text = self.query_one("#shot-input", Input).value
        if not text.strip():
            self.reject("give a file name ending in .svg")
            return
        path = Path(text.strip()).expanduser()
        path = path if path.is_absolute() else Path.cwd() / path
        if path.suffix.lower() != ".svg":
            self.reject(f"{path}: a screenshot is an SVG file; end the name with .svg", text)
            return
        exists = path.is_file() and not path.is_symlink()
        if exists and self._confirmed != path:
            self._confirmed = path
            self.reject(f"{path} exists: Enter again to replace it, or change the name", text)
            return
        try:
            out = OutputFile(path, option="the screenshot", force=exists)
        except WheelworkError as exc:
            self._confirmed = None
            self.reject(str(exc), text)
            return
        self.accept(out)

    @on(Input.Changed, "#shot-input")
    def _typed(self) -> None:
        self._confirmed = None  # a replacement is confirmed for the name shown, only


class HelpScreen(ClosesOnce, SizeGuard, ModalScreen[None]):
    """The keys, and the solar caution."""

    BINDINGS = [Binding("escape,q,question_mark,f1", "close", "close")]
    #: the text scrolls with ↑ ↓ PgUp PgDn Home End (the scroll container's own keys)
    AUTO_FOCUS = "#help"

    def __init__(self, bindings: list[Binding]):
        super().__init__()
        self.bindings_list = bindings

    def on_mount(self) -> None:
        box = self.query_one("#help")
        box.border_title = "wheelwork — keys"
        box.border_subtitle = "↑ ↓ PgUp PgDn Home End scroll · Escape closes"

    def compose(self) -> ComposeResult:
        t = Table(box=None, padding=(0, 2), show_header=False)
        t.add_column(style="bold #e5c07b", no_wrap=True)
        t.add_column()
        for b in self.bindings_list:
            keys = " / ".join(key_name(k) for k in b.key.split(","))
            t.add_row(keys, long_help(b))
        with VerticalScroll(id="help"):
            yield Static(CAUTION, classes="caution")
            yield Static(t)
            session = getattr(self.app, "session", None)
            about = SkyDial.about_text(
                (p.shows for p in session.mech.train.pointers.values()), session.sky.name
            ) if session is not None else ""
            yield Static(Text.assemble(
                f"\n{about} Errors are train minus sky, wrapped to ±180°. "
                "worst° (max° when narrow) is the largest |err| seen since the start or the "
                "last change of frame (t), observer (o) or pointer setting (r, R, m, u); drift °/cy "
                "is the ratio report's mean drift in the current frame (the drift chart's trend "
                "°/cy is another figure: the slope fitted to the errors over the chart's span, "
                "± its standard error, with ? where the span is too short to tell it from the "
                "sky's own swings). "
                "In the train drawing, "
                "a red number is an arbor's turns since the epoch, shown when it turns too fast "
                "to draw. Keys missing from a narrow footer still work. "
                "Every key is also in the command palette (ctrl+p). Escape closes.",
                style="#9aa5b1"))

    def action_close(self) -> None:
        self.dismiss(None)


_KEY_NAMES = {"right": "→", "left": "←", "up": "↑", "down": "↓", "pageup": "PgUp",
              "pagedown": "PgDn", "right_square_bracket": "]", "left_square_bracket": "[",
              "plus": "+", "equals_sign": "=", "minus": "−", "space": "space",
              "full_stop": ".", "comma": ",", "question_mark": "?", "f1": "F1",
              "escape": "Esc", "ctrl+p": "ctrl+p"}


def key_name(key: str) -> str:
    """A key as a person reads it (→, PgDn, ]) rather than Textual's name for it."""
    return _KEY_NAMES.get(key.strip(), key.strip())


DECADE_DAYS = 3652.5
MAX_DECADES = 60
PLOT_STYLES = ("#f2b632", "#7fd4ff", "#c678dd", "#98c379", "#e06c75", "#56b6c2", "#d19a66")
THRESHOLDS_DEG = (0.25, 0.5, 1.0, 2.0, 5.0, 10.0)
#: below this many rows the drift plot's margins shrink to a row above and a row below
PLOT_COMPACT_BELOW = 32
#: from this many columns the drift table's header is the wide one: under it "max°" and no
#: "(vertical line)", so the header stays on one line (at 80 the last one folded onto three)
WIDE_TABLE_FROM = 100


class DriftScreen(ClosesOnce, SizeGuard, Screen):
    """Each pointer's error over the coming decades, computed in a background worker."""

    AUTO_FOCUS = None

    BINDINGS = [
        Binding("escape,d", "back", "back"),
        Binding("c", "cancel", "cancel"),
        Binding("plus,equals_sign", "decades(1)", "+decade", group=_GDECADE),
        Binding("minus", "decades(-1)", "−decade", group=_GDECADE),
        Binding("right_square_bracket", "threshold(1)", "threshold↑", group=_GTHRESHOLD),
        Binding("left_square_bracket", "threshold(-1)", "threshold↓", group=_GTHRESHOLD),
        Binding("up", "table(-1)", "table↑", group=_GTABLE),
        Binding("down", "table(1)", "table↓", group=_GTABLE),
        Binding("pageup", "table_page(-1)", "table page↑", show=False),
        Binding("pagedown", "table_page(1)", "table page↓", show=False),
        Binding("y", "scale", "y scale", show=False),
        Binding("w", "change_train", "edit…", show=False),
        Binding("ctrl+z", "undo_edit", "undo change", group=EDIT_KEYS, show=False),
        Binding("ctrl+y", "redo_edit", "redo change", group=EDIT_KEYS, show=False),
        Binding("question_mark,f1", "help", "help"),
        Binding("q", "app.quit", "quit"),
    ]

    def __init__(self, session: Session, decades: int = 5, threshold_index: int = 2):
        super().__init__()
        self.session = session
        self.decades = decades
        self.threshold_index = threshold_index
        self.result = None
        self.computing = False
        self._run = 0  # which computation the screen is waiting for; older ones are ignored
        self._percent = 0.0
        #: the mechanism the chart is for: a changed train (an edit, undo or redo) on the
        #: bench makes the chart compute again when it is next on screen
        self.charted = session.mech
        #: the last change to the train seen here, named in the title
        self.changed = ""
        #: y: every curve whole, rather than fitted to the threshold band when it would not fit
        self.whole = False
        #: the y scale last drawn (engine.view.ChartScale), for the rows it was drawn for
        self.scale = None
        self._drawn_rows = 0
        #: the width the scale note was worded for, and whether the table's header was the
        #: wide one (WIDE_TABLE_FROM columns or more): a resize changing either draws again
        self._drawn_width = 0
        self._drawn_wide: bool | None = None

    def compose(self) -> ComposeResult:
        yield Static("", id="drift-title")
        plot = PlotWidget(id="drift-plot", allow_pan_and_zoom=False)
        plot.can_focus = False  # the screen's keys, not the plot's pan and zoom
        plot.set_x_formatter(WholeTickLabels(plot))  # no tick label cut at the edges
        yield plot
        with Horizontal(id="drift-progress-row"):
            yield ProgressBar(total=100, show_eta=False, id="drift-progress")
            yield Static("", id="drift-status")
        # the table takes what the plot leaves (a share of the screen, tui/wheelwork.tcss) and
        # scrolls when it needs more: ↑ ↓ PgUp PgDn, or the mouse wheel; the note of a change
        # to the train heads it, then the note of the y scale, so the plot keeps its rows
        with VerticalScroll(id="drift-table", can_focus=False):
            yield Static("", id="drift-changed")
            yield Static("", id="drift-scale")
            yield Static("", id="drift-summary")
        yield Static(CAUTION, id="drift-caution")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self._fit_margins()
        self.app.theme_changed_signal.subscribe(self, self._theme_changed)
        self.start()

    def on_resize(self) -> None:
        self._fit_margins()
        self.call_after_refresh(self.refresh_bindings)  # ↑ ↓ in the footer when it scrolls
        self.call_after_refresh(self._rescale)  # the y scale for the plot's new rows

    def _fit_margins(self) -> None:
        """On a short terminal (under PLOT_COMPACT_BELOW rows) the plot keeps the rows its
        blank lines and its "year" caption took (the tick labels name the years): at 80 × 24
        the summary table left the curves only two to four rows."""
        plot = self.query_one(PlotWidget)
        short = (self.size.height or self.app.size.height) < PLOT_COMPACT_BELOW
        plot.margin_top, plot.margin_bottom = (1, 1) if short else (2, 3)

    def _show_title(self) -> None:
        """The title line, in the theme's colours (the threshold's key is drawn as its lines)."""
        start, end = self.span()
        c = ui(self)
        self.query_one("#drift-title", Static).update(Text.assemble(
            ("drift  ", f"bold {c['accent']}"),
            f"{format_day(start, bc=True)} → {format_day(end, bc=True)}  ",
            (f"({(end - start) / JULIAN_YEAR_DAYS:.1f} years", "dim"),
            (", capped" if self.capped() else "", "dim"),
            (f", {FRAME_NAMES.get(self.session.frame)}", "dim"),
            (f", {'geocentric' if self.session.observer is None else self.session.site_name})",
             "dim"),
            ("  train − sky; ", c["muted"]), ("━━", f"bold {c['fg']}"),
            (f" ±{self.threshold_deg:g}° threshold", c["muted"])))

    def _theme_changed(self, _theme) -> None:
        """A new theme (the palette's theme command): title, threshold lines and table
        header drawn again in its colours, from the result already computed."""
        if not self.is_attached or not self.children:
            return
        self._show_title()
        if self.result is not None and not self.computing:
            self.show_result(self.result)

    def _table(self) -> VerticalScroll:
        return self.query_one("#drift-table", VerticalScroll)

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        """The table's scroll keys are in the footer only while the table does not fit."""
        if action in ("table", "table_page"):
            return self.is_mounted and self._table().max_scroll_y > 0
        return True

    def action_table(self, step: int) -> None:
        self._table().scroll_relative(y=int(step), animate=False)

    def action_table_page(self, step: int) -> None:
        table = self._table()
        table.scroll_relative(y=int(step) * max(1, table.scrollable_content_region.height - 1),
                              animate=False)

    def on_screen_resume(self) -> None:
        """Back from the parts screen: a changed train gets its chart computed again."""
        if self.is_mounted and self.session.mech is not self.charted:
            ed = self.session.editor
            change = ed.last_change if ed is not None else None
            self.changed = change.text() if change is not None else "another train"
            self.start()

    @property
    def threshold_deg(self) -> float:
        return THRESHOLDS_DEG[self.threshold_index]

    def max_decades(self) -> int:
        """The most decades worth asking for: the first that reaches the ephemeris' end."""
        avail = (self.session.sky.span_jd[1] - self.session.jd_now()) / DECADE_DAYS
        return int(np.clip(math.ceil(avail - 1e-9), 1, MAX_DECADES))

    def capped(self) -> bool:
        """True when the span is cut short by the end of the ephemeris."""
        return self.session.jd_now() + self.decades * DECADE_DAYS > self.session.sky.span_jd[1]

    def span(self) -> tuple[float, float]:
        start = self.session.jd_now()
        end = min(start + self.decades * DECADE_DAYS, self.session.sky.span_jd[1])
        return start, end

    def start(self) -> None:
        self.decades = min(self.decades, self.max_decades())
        self.charted = self.session.mech
        start, end = self.span()
        sky = self.session.sky
        self._show_title()
        self._run += 1
        self.result = None
        self.query_one(PlotWidget).clear()
        self.query_one("#drift-scale").display = False
        if end - start < 30:
            self.computing = False
            self._summary(Text(""))
            self._status(f"the ephemeris ends {format_day(sky.span_jd[1])}: "
                         "go back in time (g on the bench) for a drift chart")
            return
        self._percent = 0.0
        self.query_one("#drift-progress", ProgressBar).update(progress=0)
        self._status("computing…")
        self._changed_note()
        self._summary(Text("computing…", style="dim"))
        self.computing = True
        self.compute(start, end, self.threshold_deg, self._run)

    @work(thread=True, exclusive=True, group="drift", exit_on_error=False)
    def compute(self, start: float, end: float, threshold_deg: float, run: int) -> None:
        from engine.drift import DriftCancelled, DriftRun, RunControl, drift_series

        worker = get_current_worker()
        s = self.session
        step_days = max((end - start) / 3000.0, 0.25)

        def progress(fraction: float) -> None:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._progress, fraction, run)

        try:
            result = drift_series(
                s.mech, s.sky,
                DriftRun(start, end, step_days, frame=s.frame, site=s.observer,
                         threshold_deg=threshold_deg),
                RunControl(progress=progress, cancel=lambda: worker.is_cancelled))
        except DriftCancelled:
            return  # the screen said so when it cancelled (or started another run)
        except Exception as exc:  # noqa: BLE001 - a WheelworkError, or a fault to report
            self.app.call_from_thread(self._failed, f"cannot compute: {exc}", run)
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self.show_result, result, run)

    def _progress(self, fraction: float, run: int | None = None) -> None:
        if run is not None and run != self._run:
            return
        self._percent = 100 * fraction
        self.query_one("#drift-progress", ProgressBar).update(progress=self._percent)

    def _status(self, text: str) -> None:
        self.query_one("#drift-status", Static).update(Text(text))

    def _changed_note(self) -> None:
        """After a change to the train: say which one this chart is for (a line that wraps)."""
        note = self.query_one("#drift-changed", Static)
        note.update(Text(f"train changed — {self.changed}: this chart is for the train now "
                         "on the bench" if self.changed else ""))
        note.display = bool(self.changed)

    def _summary(self, content) -> None:
        self.query_one("#drift-summary", Static).update(content)
        self._table().scroll_home(animate=False)
        self.call_after_refresh(self.refresh_bindings)

    def _failed(self, text: str, run: int) -> None:
        if run == self._run:
            self.computing = False
            self._status(text)
            self._summary(Text(""))

    def _curve_rows(self) -> int:
        """The text rows between the plot's frame lines (its height less the margins above
        and below and the two frame rows)."""
        plot = self.query_one(PlotWidget)
        return plot.size.height - plot.margin_top - plot.margin_bottom - 2

    def _draw_plot(self, result) -> float:
        """The curves, the ±threshold band and the first crossings, on a y scale chosen for
        the rows the plot has now (``engine.view.chart_scale``): the band's two lines are
        drawn only when they stand rows apart; the note heading the table says what was
        fitted or left out. Returns the threshold drawn."""
        plot = self.query_one(PlotWidget)
        plot.clear()
        years = decimal_year(np.asarray(result.jd))
        thr = result.summaries[next(iter(result.summaries))].threshold_deg if result.summaries \
            else self.threshold_deg
        rows = self._curve_rows()
        self._drawn_rows, self._drawn_width = rows, self.size.width
        self.scale = scale = chart_scale(result.error_deg, thr, rows, whole=self.whole)
        # widest swings first, so the steadier pointers stay visible on top
        order = sorted(result.error_deg, key=lambda n: -result.summaries[n].max_abs_deg)
        colour = {n: PLOT_STYLES[k % len(PLOT_STYLES)] for k, n in enumerate(result.error_deg)}
        for name in order:
            err = result.error_deg[name]
            plot.plot(years, np.asarray(err), line_style=colour[name],
                      hires_mode=HiResMode.BRAILLE, label=name)
        c = ui(self)  # the threshold in the theme's text colour: white would vanish on light
        if scale.band:
            ends = [float(years[0]), float(years[-1])]
            for y in (thr, -thr):
                plot.plot(ends, [y, y], line_style=f"bold {c['fg']}",
                          hires_mode=HiResMode.BRAILLE)
        first_jd = float(result.jd[0])
        for name, sm in result.summaries.items():
            jd = sm.first_crossing_jd
            if jd is not None and np.isfinite(jd) and jd > first_jd:  # none at the left edge
                plot.add_v_line(float(decimal_year(jd)), colour[name],
                                f"{name} first past ±{thr:g}°")
        plot.set_xlimits(float(years[0]), float(years[-1]))
        plot.set_ylimits(scale.y_min, scale.y_max)
        # years before AD 1 are ticked as astronomers number them (0 is 1 BC)
        plot.set_xlabel("year (astronomical: 0 = 1 BC)" if result.jd[0] < AD_1_JD else "year")
        plot.set_ylabel("error °")
        # the key to the colours is the summary table below, so the curves stay uncovered
        plot.show_legend(is_visible=False)
        self._scale_note(scale, thr, chart_scale(result.error_deg, thr, rows,
                                                 whole=not self.whole))
        return thr

    def _scale_note(self, scale, thr: float, other) -> None:
        """Say how the y scale was chosen when the band or a curve is not all there."""
        note = self.query_one("#drift-scale", Static)
        per_row = f"{figure(scale.deg_per_row, 2)}° a row"
        # in fewer words when the full ones would take a second row from the table's
        # (80 columns: the lunation board's note took two of its five)
        room = (self.size.width or self.app.size.width) - 4  # padding, the table's scrollbar
        off = ", ".join(scale.off_chart)
        if scale.fitted:
            text = (f"y fitted to the ±{thr:g}° band ({per_row}); off the chart: {off}"
                    " · y: every curve")
            if len(text) > room:
                text = (f"y fitted to the ±{thr:g}° band ({figure(scale.deg_per_row, 2)}°/row);"
                        f" off the chart: {off} · y: all")
        elif not scale.band:
            text = (f"±{thr:g}° band not drawn: at this scale ({per_row}) its two lines "
                    "would share a row"
                    + ("; y fits the chart to it" if other.band else
                       "; no pointer stays near it (] [ change the threshold)"))
            if len(text) > room:
                text = (f"±{thr:g}° band not drawn: its lines would share a row "
                        f"({figure(scale.deg_per_row, 2)}°/row)"
                        + ("; y fits it" if other.band else
                           "; no pointer stays near it (] [ threshold)"))
        else:
            text = ""
        note.update(Text(text))
        note.display = bool(text)
        self.call_after_refresh(self.refresh_bindings)  # the table may fit, or not, now

    def _rescale(self) -> None:
        """After a resize: the chart drawn again for its new number of rows, and the scale
        note worded again for a new width; the table too when its header changes (a width
        alone, the rows unchanged, left the header and note chosen for the old one)."""
        if not (self.is_attached and self.result is not None and not self.computing):
            return
        if self._wide() != self._drawn_wide:
            self.show_result(self.result)
        elif (self._curve_rows() != self._drawn_rows
              or self.size.width != self._drawn_width):
            self._draw_plot(self.result)

    def _wide(self) -> bool:
        """Whether the table takes its wide header (``max |err|°``, ``(vertical line)``)."""
        return self.size.width >= WIDE_TABLE_FROM

    def action_scale(self) -> None:
        """y: every curve whole ↔ fitted to the threshold band (when it would not fit)."""
        self.whole = not self.whole
        if self.result is not None and not self.computing:
            self._draw_plot(self.result)

    def show_result(self, result, run: int | None = None) -> None:
        if run is not None and run != self._run:
            return
        self.computing = False
        self.result = result
        self._progress(1.0)
        sky = self.session.sky
        self._status("done" + (f" · capped by the end of {sky.name} "
                               f"({format_day(sky.span_jd[1])})" if self.capped() else ""))
        c = ui(self)
        colour = {n: PLOT_STYLES[k % len(PLOT_STYLES)] for k, n in enumerate(result.error_deg)}
        thr = self._draw_plot(result)
        first_jd = float(result.jd[0])

        def crossing(sm) -> str:
            jd = sm.first_crossing_jd
            if jd is None or not np.isfinite(jd):
                return "not in span"
            return "at start" if jd <= first_jd else format_day(jd)

        t = Table(box=None, padding=(0, 1), pad_edge=False, header_style=f"bold {c['muted']}",
                  caption_justify="left", caption_style=c["muted"])
        # the header on one line under 100 columns, as the narrow readings head theirs
        # (max°): at 80 the last one folded onto three rows, and with the notes above it
        # left no row of the table in view
        wide = self._drawn_wide = self._wide()
        first = f"first past ±{thr:g}°" + (" (vertical line)" if wide else "")
        for col in ("pointer", "max |err|°" if wide else "max°", "at", "rms°", "trend °/cy",
                    "±", first):
            t.add_column(col, justify="right" if "°" in col or col == "±" else "left")
        if first_jd < AD_1_JD:  # the table's days keep their signed years, said once here,
            # under the rows, which come first on a short screen (the title gives each end's
            # BC year, and the axis's label says it too where it has room)
            year = calendar_date(first_jd)[0]  # the chart's own first year as the example
            shown = f"-{-year:04d}" if year < 0 else f"{year:04d}"
            t.caption = f"years before AD 1 as astronomers number them: {shown} is {1 - year} BC"
        # each trend to its own σ's decimals (none shows digits its σ does not know), the
        # column lined up on the point
        drifts = table_cells(error_sigma_column(
            [sm.drift_deg_per_century for sm in result.summaries.values()],
            [sm.drift_sigma_deg_per_century for sm in result.summaries.values()])[0])
        for (name, sm), trend in zip(result.summaries.items(), drifts, strict=True):
            t.add_row(Text.assemble(("━━ ", f"bold {colour[name]}"), name),
                      fixed(sm.max_abs_deg, 2), format_day(sm.max_at_jd),
                      fixed(sm.rms_deg, 2), trend,
                      self.trend_sigma_text(sm),
                      crossing(sm))
        self._summary(t)

    @staticmethod
    def trend_sigma_text(sm) -> str:
        """A trend's standard error as the chart's table writes it (``0.61``, ``82``: to two
        figures, and the trend to its decimals, :func:`engine.figures.error_with_sigma`), with
        `` ?`` when the drift is uncertain; a dash when there is none (a span too short for
        the fit to show anything): the trend alone claimed more than the span holds (the
        table orrery's Saturn arm read +105.46 °/cy over 7.8 years, where the CLI says ± 114
        and uncertain)."""
        _, pm = error_with_sigma(sm.drift_deg_per_century, sm.drift_sigma_deg_per_century)
        return (pm or "–") + (" ?" if sm.drift_uncertain else "")

    def action_back(self) -> None:
        self._run += 1
        self.workers.cancel_group(self, "drift")
        self.dismiss()

    def action_cancel(self) -> None:
        if not self.computing:
            self.notify("nothing to cancel: the chart is complete" if self.result is not None
                        else "nothing to cancel", timeout=3, markup=False)
            return
        self._run += 1  # whatever the cancelled run still sends is ignored
        self.workers.cancel_group(self, "drift")
        self.computing = False
        pct = f"{self._percent:.0f}%"
        self._status(f"cancelled at {pct}")
        self._summary(Text(f"cancelled at {pct}: no summary for a partial span "
                           "(+ − ] [ compute again)", style=ui(self)["warn"]))

    def action_decades(self, step: int) -> None:
        step = int(step)
        if step > 0 and self.capped() or self.decades + step > self.max_decades():
            end = self.session.sky.span_jd[1]
            sky = self.session.sky
            # the same ways out the commands and the bench's crank give (engine.sky)
            self.notify(f"the span is capped by the end of the ephemeris {sky.name} on "
                        f"{format_day(end)}; {sky.hint_for(end + 1.0, end + 1.0)} (give it "
                        "when opening the bench)", title="no more decades", timeout=8, markup=False)
            return
        if self.decades + step < 1:
            self.notify("one decade is the shortest span", timeout=3, markup=False)
            return
        self.decades += step
        self.start()

    def action_change_train(self) -> None:
        """The parts screen over the chart; the chart computes again on return if the train
        was changed."""
        from .editing import PartsScreen

        if self.session.editor is not None:
            self.app.push_screen(PartsScreen(self.session))

    async def _edit_step(self, undo: bool) -> None:
        from .editing import STEP_WORDS, rebuild_bench, step_edit

        change = step_edit(self, undo)
        if change is None:
            return
        await rebuild_bench(self.app)
        self.changed = f"{STEP_WORDS[undo]}: {change.text()}"
        self.start()

    async def action_undo_edit(self) -> None:
        await self._edit_step(True)

    async def action_redo_edit(self) -> None:
        await self._edit_step(False)

    def action_threshold(self, step: int) -> None:
        self.threshold_index = int(np.clip(self.threshold_index + int(step), 0,
                                           len(THRESHOLDS_DEG) - 1))
        self.start()

    def action_help(self) -> None:
        self.app.push_screen(HelpScreen(self.BINDINGS))


__all__ = ["BenchScreen", "DateDialog", "DriftScreen", "HelpScreen", "ResetDialog",
           "ScreenshotDialog", "StepDialog", "SPEEDS"]
