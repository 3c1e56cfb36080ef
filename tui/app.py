"""The wheelwork application, and the one factory that builds it (command line and tests)."""

from __future__ import annotations

import time
from functools import partial
from itertools import count
from pathlib import Path

from textual import events, on
from textual.app import App, SystemCommand
from textual.await_complete import AwaitComplete
from textual.command import CommandList, CommandPalette, SimpleProvider
from textual.screen import Screen
from textual.theme import ThemeProvider
from textual.widgets import Button, Input, OptionList

from engine.edit import TrainEditor
from engine.errors import WheelworkError
from engine.loader import load_train
from engine.mechanism import DEFAULT_TRAIN, sky_reaching
from engine.sites import parse_site
from engine.sky import Site

from .screens import BenchScreen, ClosesOnce, key_name, long_help
from .session import DEFAULT_SITE, DEFAULT_SITE_NAME, FRAME_NAMES, Session
from .small import SizeGuard


def engine_findings(mech) -> list[tuple[str, str, str, str]]:
    """(level, item, message, fix) from the engine: backwards pointers and mechanical checks,
    then the checks' caveat (level "caveat": their speeds and loads are design estimates)."""
    from engine.checks import check  # loaded when the bench opens, not at start-up

    items = [("warning", "", w, "") for w in mech.warnings]
    try:
        report = check(mech)
    except WheelworkError as exc:
        return [*items, ("error", "mechanical check", str(exc), "")]
    from engine.play import dead_play_findings  # the largest contributor per pointer

    items += [(f.level, f.item, f.message, f.fix or "")
              for f in [*report.findings, *dead_play_findings(mech.train, mech.kin)]]
    return [*items, ("caveat", "", report.caveat, "")]


#: Textual's CommandPalette has no public way to stop its list work once it is closing: the
#: Palette below overrides these private methods, one each. pyproject.toml bounds Textual's
#: version and tests/test_tui.py fails loudly if a release drops one of them.
PALETTE_INTERNALS = ("_refresh_command_list", "_watch__list_visible", "_watch__show_busy",
                     "_action_command_list")


class Palette(ClosesOnce, SizeGuard, CommandPalette):
    """The command palette, safe under fast keys: it closes (and runs its command) once, and
    list keys that arrive before the list has a size are ignored."""

    _ids = count(1)

    def __init__(self, **kwargs):
        # each its own id: a palette opened while the last one is still being removed
        # must not clash with it
        super().__init__(id=f"palette-{next(self._ids)}", **kwargs)

    @on(Input.Submitted)
    @on(Input.Changed)
    @on(Button.Pressed)
    @on(OptionList.OptionSelected)
    def _closed_already(self, event) -> None:
        """Runs before the palette's own handlers: once closing, what was typed behind the
        closing key is dropped: a second Enter (or the selection it made) would run the
        chosen command again, and a letter would start a search in a palette being taken
        apart."""
        if self.closing:
            event.stop()
            event.prevent_default()

    # a search that was already under way when the palette closed finds its list gone
    def _refresh_command_list(self, *args, **kwargs) -> None:
        if not self.closing:
            super()._refresh_command_list(*args, **kwargs)

    def _watch__list_visible(self) -> None:
        if not self.closing:
            super()._watch__list_visible()

    async def _watch__show_busy(self) -> None:
        if not self.closing:
            await super()._watch__show_busy()

    def _action_command_list(self, action: str) -> None:
        # PageDown and friends read the list's line map, which exists only once the list
        # has been laid out; a key typed in the first frames after ctrl+p comes earlier
        if self.closing or self.query_one(CommandList).scrollable_content_region.area == 0:
            return
        super()._action_command_list(action)


class WheelworkApp(App):
    """A train on the bench against the true sky."""

    CSS_PATH = "wheelwork.tcss"
    TITLE = "wheelwork"
    ENABLE_COMMAND_PALETTE = True

    def __init__(self, session: Session):
        super().__init__()
        self.session = session

    def get_default_screen(self) -> Screen:
        return BenchScreen(self.session)

    def on_resize(self, event: events.Resize) -> None:
        """Every screen in the stack says so when the terminal is too small (tui/small.py),
        and comes back when it is enlarged (this runs before the app takes the new size)."""
        for screen in self.screen_stack:
            if isinstance(screen, SizeGuard):
                screen.guard_size(event.size)

    def pop_screen(self) -> AwaitComplete:
        """Never pop the bench: it is the base of the stack (a stray second dismissal would
        otherwise leave a blank app)."""
        if len(self.screen_stack) <= 1:
            return AwaitComplete.nothing()
        return super().pop_screen()

    #: when a first quit was refused because the train has changes not saved
    _quit_asked: float | None = None

    async def action_quit(self) -> None:
        """Quit; while the train has changes not saved, the first q only says so and a second
        one (within half a minute) quits without saving."""
        editor = self.session.editor
        now = time.monotonic()
        if (editor is not None and editor.differs
                and (self._quit_asked is None or now - self._quit_asked > 30)):
            self._quit_asked = now
            self.notify("the train has changes not saved: ctrl+s saves them; q again quits "
                        "without saving", title="not saved", severity="warning", timeout=10,
                        markup=False)
            return
        await super().action_quit()

    def action_command_palette(self) -> None:
        if self.use_command_palette and not CommandPalette.is_open(self):
            self.push_screen(Palette())

    # Textual's own searches (the palette's "Theme" command among them) open a plain
    # CommandPalette, which a PageDown typed before its list is laid out crashes: ours
    # instead, with the same lists.
    def search_commands(self, commands, placeholder: str = "Search for commands…"):
        return self.push_screen(Palette(providers=[SimpleProvider(self.screen, commands)],
                                        placeholder=placeholder))

    def search_themes(self) -> None:
        self.push_screen(Palette(providers=[ThemeProvider], placeholder="Search for themes…"))

    def get_system_commands(self, screen: Screen):
        yield from super().get_system_commands(screen)
        for b in getattr(screen, "BINDINGS", []):
            if b.action in ("app.quit",):
                continue
            keys = " or ".join(key_name(k) for k in b.key.split(","))
            yield SystemCommand(long_help(b), f"key {keys}", partial(screen.run_action, b.action))

    #: where the palette's screenshot goes; None: the Downloads folder when there is one,
    #: else the current folder (nothing is created but the file)
    screenshot_dir: Path | None = None

    def _screenshot_folder(self) -> Path:
        if self.screenshot_dir is not None:
            return Path(self.screenshot_dir)
        try:
            from platformdirs import user_downloads_path

            downloads = user_downloads_path()
        except Exception:  # noqa: BLE001 - no such folder on this system
            downloads = None
        return downloads if downloads is not None and downloads.is_dir() else Path.cwd()

    def deliver_screenshot(self, filename: str | None = None, path: str | None = None,
                           time_format: str | None = None) -> str | None:
        """Save an SVG of the screen as a new file and say where it went (in a notice)."""
        import re
        from datetime import datetime

        folder = Path(path) if path else self._screenshot_folder()
        now = datetime.now()
        stamp = now.isoformat() if time_format is None else now.strftime(time_format)
        # the title and the time, with what no file system takes in a name made "_"
        name = filename or re.sub(r'[\s<>:"/\\|?*.]', "_", f"{self.title} {stamp}") + ".svg"
        target = folder / name
        try:
            svg = self.export_screenshot()
            with open(target, "x", encoding="utf-8") as f:  # never over an existing file
                f.write(svg)
        except OSError as exc:
            self.notify(f"cannot save the screenshot to {target}: {exc.strerror or exc}",
                        title="screenshot", severity="error", timeout=8, markup=False)
            return None
        self.notify(f"saved to {target.resolve()}", title="screenshot", timeout=8, markup=False)
        return str(target)


def make_app(train: str | Path | None = None, *, site: str | Site | None = None,
             ephemeris: str | None = None) -> WheelworkApp:
    """Load the sky and the train (raising :class:`WheelworkError` for bad input) and build
    the app. ``site``: ``"LAT,LON[,H]"`` or a :class:`Site`; None uses a default site."""
    first = load_train(train or DEFAULT_TRAIN)
    jd = first.epoch.jd_ut  # the bench opens at the epoch: the sky must reach it
    sky, note = sky_reaching(first, ephemeris, jd, jd, what="the epoch lies outside")
    editor = TrainEditor.open(train or DEFAULT_TRAIN, sky)
    mech = editor.mech
    if site is None:
        where, name = DEFAULT_SITE, DEFAULT_SITE_NAME
    else:
        where = site if isinstance(site, Site) else parse_site(site)
        name = "site"
    session = Session(mech, sky, site=where, site_name=name, findings_of=engine_findings,
                      editor=editor, ephemeris_given=ephemeris, sky_note=note)
    if train is not None:
        from .editing import remember

        remember(Path(train))
    for frame in FRAME_NAMES:  # both frames now, so a frame switch costs no ratio report
        session.drift_per_century(frame)
    return WheelworkApp(session)
