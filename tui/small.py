"""A terminal smaller than the screens are laid out for: one clear message instead of a
squashed screen, and the screen back as it was when the window is enlarged.

Every screen of the interface mixes in :class:`SizeGuard` (before the Textual screen class).
Below MIN_COLUMNS × MIN_ROWS the screen takes the CSS class ``-too-small``: the stylesheet
(``tui/wheelwork.tcss``) hides its own widgets and shows a :class:`TooSmall` message and the
footer in their place. The keys keep working (nothing focused is hidden: focus goes back to
the screen, whose bindings the footer shows; ``ctrl+q`` quits from any screen), and
whatever the screen was doing (a drift computation, a tooth search) goes on underneath.
"""

from __future__ import annotations

from rich.text import Text
from textual import events
from textual.geometry import Size
from textual.widget import Widget
from textual.widgets import Footer, Static

#: the smallest terminal the screens are laid out for (columns, rows); docs/interface.md
MIN_COLUMNS, MIN_ROWS = 80, 24


def too_small(columns: int, rows: int) -> bool:
    """True when a terminal of this size is below the smallest the screens are laid out for."""
    return columns < MIN_COLUMNS or rows < MIN_ROWS


def too_small_text(columns: int, rows: int, closes: bool = False) -> Text:
    """What the screen says instead of its widgets, naming the size and what is short;
    ``closes``: the screen (a dialog, help, the palette) has no footer and escape closes it."""
    short = []
    if columns < MIN_COLUMNS:
        short.append(f"{MIN_COLUMNS - columns} more column{'s' * (MIN_COLUMNS - columns > 1)}")
    if rows < MIN_ROWS:
        short.append(f"{MIN_ROWS - rows} more row{'s' * (MIN_ROWS - rows > 1)}")
    return Text.assemble(
        ("terminal too small: ", "bold"), (f"{columns}×{rows}", "bold"),
        f"\nwheelwork needs at least {MIN_COLUMNS}×{MIN_ROWS} ({', '.join(short)})",
        "\n\nenlarge the window or make the font smaller:\nthe screen comes back as it was",
        ("\n\nthe keys still work · " + ("escape closes this · " if closes else "")
         + "ctrl+q quits", "dim"))


class TooSmall(Static):
    """The message a screen shows in place of its widgets while the terminal is too small."""


class SizeGuard:
    """Mix into a screen (before the Textual class): below the smallest size it says so
    instead of drawing its widgets squashed, and comes back when the window is enlarged.

    The guard runs when the screen is mounted or comes back on top, and on every resize of
    the app (``WheelworkApp.on_resize`` guards each screen in the stack). Textual calls the
    ``_on_*`` handlers of every class in a screen's MRO, so these run beside the screen's own
    ``on_mount`` and ``on_screen_resume``."""

    #: what had focus when the screen became too small, focused again when it fits
    _guard_focus: Widget | None = None

    def _on_mount(self) -> None:
        self.mount(TooSmall(id="too-small"))
        self.guard_size()

    #: the terminal's size when another screen came over this one
    _guard_covered_at: Size | None = None

    def _on_screen_suspend(self) -> None:
        self._guard_covered_at = self.app.size

    def _on_screen_resume(self) -> None:
        self.guard_size()
        covered_at, self._guard_covered_at = self._guard_covered_at, None
        if covered_at is not None and covered_at != self.app.size:
            # the terminal was resized while another screen covered this one, and Textual
            # tells only the screen on top (and a dialog's background): lay it out now, as a
            # resize would (the bench's title, side column and footer keys, the chart's scale)
            size = self.app.size
            self.post_message(events.Resize(size, size))

    async def recompose(self) -> None:
        """Compose the screen again (the bench, for a changed train), the message kept: a
        recompose removes every child, and without it a terminal made too small afterwards
        showed a blank screen."""
        await super().recompose()
        if not self.query(TooSmall):
            await self.mount(TooSmall(id="too-small"))
        self.guard_size()

    def _on_descendant_focus(self, event: events.DescendantFocus) -> None:
        """A widget focused while the message shows (the screen's own on_mount, or its
        AUTO_FOCUS, on a screen opened while too small) gives the focus back to the screen
        at once, and takes it again when the screen fits: a key typed meanwhile must not
        go into a box nobody can see."""
        if self.is_too_small and event.widget is self.focused:
            self._guard_focus = event.widget
            self.set_focus(None)

    @property
    def is_too_small(self) -> bool:
        return self.has_class("-too-small")

    def guard_size(self, size: Size | None = None) -> None:
        """Hide the screen's widgets behind the message, or show them again, for the
        terminal's ``size`` (the app's size when not given)."""
        if not self.is_attached:
            return
        columns, rows = size if size is not None else self.app.size
        small = too_small(columns, rows)
        messages = self.query(TooSmall)
        if small and messages:
            messages.first().update(too_small_text(columns, rows,
                                                   closes=not self.query(Footer)))
        if small == self.is_too_small:
            return
        if small:
            focused = self.focused
            self._guard_focus = focused
            self.set_class(True, "-too-small")
            if focused is not None:
                self.set_focus(None)  # keys go to the screen's bindings, shown in the footer
        else:
            self.set_class(False, "-too-small")
            focused, self._guard_focus = self._guard_focus, None
            if focused is not None and focused.is_attached:
                self.call_after_refresh(focused.focus)
