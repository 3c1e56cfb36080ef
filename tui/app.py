"""The wheelwork application, and the one factory that builds it (command line and tests)."""

from __future__ import annotations

from functools import partial
from pathlib import Path

from textual.app import App, SystemCommand
from textual.screen import Screen

from engine.errors import WheelworkError
from engine.mechanism import open_train
from engine.sky import Site, Sky

from .screens import BenchScreen, long_help
from .session import DEFAULT_SITE, DEFAULT_SITE_NAME, FRAME_NAMES, Session


def engine_findings(mech) -> list[tuple[str, str, str, str]]:
    """(level, item, message, fix) from the engine: backwards pointers, loader warnings and
    mechanical checks (when the checker is present)."""
    items = [("warning", "", w, "") for w in mech.warnings]
    items += [("warning", "", w, "") for w in mech.train.warnings]
    try:
        from engine.checks import check
    except ImportError:
        return items
    try:
        report = check(mech.train, mech.kin)
    except WheelworkError as exc:
        return [*items, ("error", "mechanical check", str(exc), "")]
    for f in report.findings:
        items.append((str(getattr(f, "level", "info")), str(getattr(f, "item", "")),
                      str(getattr(f, "message", f)), str(getattr(f, "fix", "") or "")))
    return items


class WheelworkApp(App):
    """A train on the bench against the true sky."""

    CSS_PATH = "wheelwork.tcss"
    TITLE = "wheelwork"
    ENABLE_COMMAND_PALETTE = True

    def __init__(self, session: Session):
        super().__init__()
        self.session = session

    def on_mount(self) -> None:
        self.push_screen(BenchScreen(self.session))

    def get_system_commands(self, screen: Screen):
        yield from super().get_system_commands(screen)
        for b in getattr(screen, "BINDINGS", []):
            if b.action in ("app.quit",):
                continue
            yield SystemCommand(long_help(b), f"key {b.key.split(',')[0]}",
                                partial(screen.run_action, b.action))


def make_app(train: str | Path | None = None, *, site: str | Site | None = None,
             ephemeris: str | None = None) -> WheelworkApp:
    """Load the sky and the train (raising :class:`WheelworkError` for bad input) and build
    the app. ``site``: ``"LAT,LON[,H]"`` or a :class:`Site`; None uses a default site."""
    sky = Sky(ephemeris)
    mech = open_train(train, sky)
    if site is None:
        where, name = DEFAULT_SITE, DEFAULT_SITE_NAME
    else:
        where = site if isinstance(site, Site) else Site.parse(site)
        name = "site"
    session = Session(mech, sky, site=where, site_name=name, findings=engine_findings(mech))
    for frame in FRAME_NAMES:  # both frames now, so a frame switch costs no ratio report
        session.drift_per_century(frame)
    return WheelworkApp(session)
