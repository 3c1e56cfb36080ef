"""Widgets of the main screen. Each draws a :class:`tui.session.Now` it is given; none computes
astronomy or kinematics."""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from rich.segment import Segment
from rich.style import Style as RichStyle
from rich.text import Text
from textual.geometry import Region, Size
from textual.message import Message
from textual.strip import Strip
from textual.visual import Visual
from textual.widget import Widget
from textual.widgets import Static
from textual_hires_canvas import Canvas, HiResMode
from textual_plot import NumericAxisFormatter

from engine.dates import AD_1_JD, calendar_date, format_jd, turn_days_text
from engine.figures import error_column, figure, fixed, fixed_to_sigma
from engine.view import (
    TrainLayout,
    arbor_at,
    ball_lit_fraction,
    body_of,
    hands_elongation_deg,
    is_arm,
    lit_disc,
    picked_wheel,
    place_train,
    plan_radii,
    short_names,
    too_fast,
    turns_label,
)

from .session import FRAME_NAMES, Now, Session

# Colours: a train hand and the true body it chases share a hue; the hand is a thin line,
# the body a solid badge on the ring.
SUN_HUE = "#f2b632"
MOON_HUE = "#7fd4ff"
# The Moon's node and perigee: short hands in their own hue and line style (dashed, dotted),
# the true mean node and perigee as small marks just inside the ring.
NODE_HUE = "#c792ea"
APSIS_HUE = "#5fd7a7"
#: kind -> (hue, hand length as a fraction of the radius, dash pattern (on, off) in dot steps,
#: mark inside the ring, name in the key). Only ecliptic longitudes go on the dial.
ELEMENT_HANDS = {
    "node": (NODE_HUE, 0.46, (3, 2), "☊", "node"),
    "apsis": (APSIS_HUE, 0.56, (1, 2), "◆", "perigee"),
}
# Planets: each its own hue and mark. Seen from the Earth, a dotted hand and a solid badge on
# the ring like the Sun and Moon; an orrery arm (seen from the Sun), a dashed hand and an open
# mark in its hue. In the plan view the arms go round the Sun, the true place a mark at the
# arm's radius.
PLANET_STYLE = {  # body -> (hue, mark, name in the key)
    "mercury": ("#c9b8a6", "☿", "Mercury"),
    "venus": ("#f7e08a", "♀", "Venus"),
    "earth": ("#5aa9ff", "♁", "Earth"),
    "mars": ("#ff7a5c", "♂", "Mars"),
    "jupiter": ("#e3b27a", "♃", "Jupiter"),
    "saturn": ("#cfc08e", "♄", "Saturn"),
    "uranus": ("#7fe0d8", "♅", "Uranus"),
    "neptune": ("#7f9cff", "♆", "Neptune"),
}
PLANET_HAND = 0.68  # hand length, a fraction of the dial's radius
# Eclipse limits: dotted arcs just outside the ring, around both true nodes, in dimmed Sun
# and Moon hues (solar limit outermost).
SOLAR_ARC = "#b8862a"
LUNAR_ARC = "#4f97bd"
ARC_RADII = {"solar": 1.9, "lunar": 1.2}  # outside the ring, in dial radius units
RING = "#6a7b8c"
RING_BRIGHT = "#b9c6d3"
UNLIT_RING = "#3d4754"  # orbits in the plan view
SIGN_TEXT = "#8fa3b8"
HUB = "#e8e8e8"
LIT = "#f4efd2"
UNLIT = "#2b3140"

SIGNS = ("ARI", "TAU", "GEM", "CNC", "LEO", "VIR", "LIB", "SCO", "SGR", "CAP", "AQR", "PSC")

COUNT = "bold #e06c75"  # an arbor's turn count, shown when it is too fast to draw
WHEEL_CRANK, WHEEL_HAND, WHEEL = "#e5c07b", "#98c379", "#7f8c99"  # rims in the train drawing
LABEL = "#9aa5b1"
DRAWN = (WHEEL_CRANK, WHEEL_HAND, WHEEL, LABEL)  # what a turn count must not cover

CAUTION = "⚠ Never look at the Sun without a proper solar filter."


def ui(widget: Widget) -> dict[str, str]:
    """Text colours for rich styles, from the app's current theme (so a light theme gets dark
    text): ``accent``, ``ok``, ``warn``, ``bad``, ``muted`` (four fifths of the way from the
    background to the foreground) and ``fg``."""
    v = widget.app.theme_variables
    key = (v.get("foreground"), v.get("background"))
    cached = _UI_CACHE.get(key)
    if cached is None:
        from textual.color import Color

        def plain(name: str, default: str) -> str:
            # an ANSI theme names terminal colours ("ansi_red"): rich calls them "red"
            c = v.get(name, default)
            return c[5:] if c.startswith("ansi_") else c

        fg, bg = v.get("foreground", "#e0e0e0"), v.get("background", "#121212")
        if fg.startswith("ansi_") or bg.startswith("ansi_"):
            muted = "default"
        else:
            muted = Color.parse(bg).blend(Color.parse(fg), 0.8).hex
        cached = {"accent": plain("text-accent", "#ffc473"),
                  "ok": plain("text-success", "#8ad4a1"),
                  "warn": plain("text-warning", "#ffc473"),
                  "bad": plain("text-error", "#d17e92"),
                  "muted": muted, "fg": plain("foreground", "#e0e0e0")}
        _UI_CACHE[key] = cached
    return cached


_UI_CACHE: dict[tuple, dict[str, str]] = {}

#: the dial's ring, graduations, sign names and hub under an ANSI theme (terminal colours,
#: nothing to blend) and the slate tint the themed ones lean towards
DIAL_FIXED = {"ring": RING, "ring_bright": RING_BRIGHT, "sign": SIGN_TEXT, "hub": HUB}
_SLATE = "#7f9fbf"
#: per dial colour: the least share of the way from the background to the (slate-tinted)
#: foreground, and the least contrast with the background it is pushed up to (WCAG ratios:
#: 4.5 for text, 3 for graphics; common practice, no source)
DIAL_SHARES = {"ring": (0.55, 3.0), "ring_bright": (0.8, 4.5), "sign": (0.65, 4.5)}


def contrast(a, b) -> float:
    """WCAG contrast ratio of two textual Colors (common practice, no source)."""
    def lum(c) -> float:
        def ch(v: float) -> float:
            v = v / 255
            return v / 12.92 if v <= 0.03928 else ((v + 0.055) / 1.055) ** 2.4
        return 0.2126 * ch(c.r) + 0.7152 * ch(c.g) + 0.0722 * ch(c.b)
    hi, lo = sorted((lum(a), lum(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def dial_colours(widget: Widget) -> dict[str, str]:
    """The dial's own colours from the app's theme, each a share of the way from the
    background to the foreground leaning halfway towards slate (:data:`DIAL_SHARES`, more
    where the theme needs it to stand out): ``ring`` (faint), ``ring_bright`` (the 30°
    graduations), ``sign`` (sign names, degree figures) and ``hub`` (the foreground); where even
    the tinted foreground is too faint, the tint gives way. A light theme gets a dark ring, a
    dark theme a light one."""
    v = widget.app.theme_variables
    fg, bg = v.get("foreground", "#e0e0e0"), v.get("background", "#121212")
    if fg.startswith("ansi_") or bg.startswith("ansi_"):
        return DIAL_FIXED
    from textual.color import Color

    back, fore = Color.parse(bg), Color.parse(fg)
    tint = fore.blend(Color.parse(_SLATE), 0.5)
    out = {"hub": fore.hex}

    def at(share: float):  # past 1, the slate tint gives way to the plain foreground
        return back.blend(tint, share) if share <= 1.0 else tint.blend(fore, share - 1.0)

    for role, (share, least) in DIAL_SHARES.items():
        while share < 2.0 and contrast(at(share), back) < least:
            share = min(share + 0.05, 2.0)
        out[role] = at(share).hex
    return out


# braille dot bits by (row 0-3, column 0-1) inside a cell
_BRAILLE_BITS = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))


def _scalar(a) -> float:
    return float(a.reshape(-1)[0]) if hasattr(a, "reshape") else float(a)


#: The hi-res canvas's private attributes :func:`canvas_rows` reads (tests/test_tui.py checks
#: they are still there and still what the canvas draws).
CANVAS_INTERNALS = ("_buffer", "_styles")


def canvas_rows(canvas: Canvas) -> tuple[list[list[str]], list[list[str]]]:
    """The canvas's characters and styles, one list per row (``[y][x]``), live: what is
    written into them is what the canvas draws.

    The one place that reaches into textual-hires-canvas's private state. Its public
    ``get_pixel``/``set_pixel`` work a cell at a time, while :class:`LayeredCanvas` copies
    its static layer and compares frames whole rows at a time. pyproject.toml bounds the
    library's version (<0.15), and tests/test_tui.py fails loudly if a release changes these
    attributes. The rows are replaced when the canvas is reset: ask again after a resize."""
    return canvas._buffer, canvas._styles


class LayeredCanvas(Canvas):
    """A hi-res canvas that keeps a static layer (drawn once per size) under a moving one."""

    DEFAULT_CSS = "LayeredCanvas { width: 1fr; height: 1fr; }"
    _holding = False  # a moving frame is being drawn: its rows are repainted when it is done

    def __init__(self, **kwargs):
        super().__init__(1, 1, default_hires_mode=HiResMode.BRAILLE, **kwargs)
        self._static: tuple[list[list[str]], list[list[str]]] | None = None
        self._now: Now | None = None
        self.grid_size = Size(1, 1)  # cells, as last reset

    def on_canvas_resize(self, event: Canvas.Resize) -> None:
        event.stop()
        self.redraw()

    def on_mount(self) -> None:
        # rows are drawn (and kept) in the theme's colours: a new theme draws them again
        self.app.theme_changed_signal.subscribe(self, lambda _theme: self.redraw())

    def redraw(self) -> None:
        """Draw both layers again (a new size, or a new theme for a canvas whose colours
        come from it)."""
        size = self.size  # the content area (the event carries the outer size, with border)
        if size.width < 2 or size.height < 2:
            return
        self._lines: dict[int, tuple[tuple[str, str], Strip]] = {}
        self._base = None
        with self.batch_refresh():
            self.grid_size = Size(size.width, size.height)
            self.reset(size=self.grid_size, refresh=False)
            self.draw_static()
            chars, styles = canvas_rows(self)
            self._static = ([row[:] for row in chars], [row[:] for row in styles])
            if self._now is not None:
                self._draw_now(full=True)

    def show(self, now: Now) -> None:
        self._now = now
        if self._static is not None:
            self._draw_now()

    def refresh(self, *regions: Region, **kwargs) -> LayeredCanvas:
        if self._holding:  # the frame's changed rows are asked for once it is drawn
            return self
        return super().refresh(*regions, **kwargs)

    def _draw_now(self, full: bool = False) -> None:
        """Redraw the moving layer over the static one; repaint only the rows that changed."""
        chars, styles = canvas_rows(self)
        before = [row[:] for row in chars], [row[:] for row in styles]
        self._base = None
        self._holding = True
        try:
            for rows, static in zip((chars, styles), self._static, strict=True):
                for row, was in zip(rows, static, strict=True):
                    row[:] = was
            self.draw_moving(self._now)
        finally:
            self._holding = False
        if full:
            self.refresh()
            return
        w = self.grid_size.width
        changed = [Region(0, y, w, 1) for y in range(len(chars))
                   if chars[y] != before[0][y] or styles[y] != before[1][y]]
        if changed:
            self.refresh(*changed)

    def notify_style_update(self) -> None:
        super().notify_style_update()
        self._base = None

    _base: RichStyle | None = None  # rich_style, found once a frame (it walks the ancestors)
    _seg_styles: dict[str, RichStyle] = {}

    def _row_strip(self, text: str, styles: list[str]) -> Strip:
        """One row as the hi-res canvas draws it (runs of one style; a blank row is blank),
        with the widget's style found once a frame rather than once a row."""
        base = self._base
        if base is None:
            base = self._base = self.rich_style
            self._seg_styles = {}
        if not text.strip(" "):
            return Strip.blank(len(text), base)
        cache = self._seg_styles
        segs = []
        start, n = 0, len(styles)
        for x in range(1, n + 1):
            if x == n or styles[x] != styles[start]:
                name = styles[start]
                st = cache.get(name)
                if st is None:
                    st = cache[name] = base + (RichStyle.parse(name) if name else None)
                segs.append(Segment(text[start:x], st))
                start = x
        return Strip(segs).simplify()

    def render_line(self, y: int) -> Strip:
        chars, styles = canvas_rows(self)
        if y >= len(chars):
            return super().render_line(y)
        key = ("".join(chars[y]), "\0".join(styles[y]))
        cached = getattr(self, "_lines", {}).get(y)
        if cached is not None and cached[0] == key:
            return cached[1]
        strip = self._row_strip(key[0], styles[y])
        if hasattr(self, "_lines"):
            self._lines[y] = (key, strip)
        return strip

    def dots(self, points, style: str) -> None:
        """Set braille dots at cell coordinates (x right, y down; 2 × 4 dots a cell), merging
        with dots already in each cell; the cell takes the newest style."""
        w, h = self.grid_size
        buf, sty = canvas_rows(self)
        for x, y in points:
            hx, hy = math.floor(x * 2.0), math.floor(y * 4.0)
            cx, cy = hx >> 1, hy >> 2
            if not (0 <= cx < w and 0 <= cy < h):
                continue
            ch = buf[cy][cx]
            code = ord(ch) - 0x2800 if "\u2800" <= ch <= "\u28ff" else 0
            buf[cy][cx] = chr(0x2800 | code | _BRAILLE_BITS[hy & 3][hx & 1])
            sty[cy][cx] = style
        self.refresh()

    def line(self, x0: float, y0: float, x1: float, y1: float, style: str,
             dash: tuple[int, int] | None = None) -> None:
        """A braille line between two points in cell coordinates; ``dash`` = (on, off) dot
        steps for a dashed or dotted line."""
        n = int(max(abs(x1 - x0) * 2.0, abs(y1 - y0) * 4.0)) + 1
        steps = range(n + 1)
        if dash is not None:
            on, off = dash
            steps = [k for k in steps if k % (on + off) < on]
        self.dots([(x0 + (x1 - x0) * k / n, y0 + (y1 - y0) * k / n) for k in steps], style)

    def put(self, x: float, y: float, text: str, style: str) -> None:
        """Write plain text starting at cell (x, y) with one style, clipped to the canvas."""
        yi, xi = int(round(y)), int(round(x))
        w, h = self.grid_size
        if not 0 <= yi < h:
            return
        chars, styles = canvas_rows(self)
        for i, ch in enumerate(text):
            if 0 <= xi + i < w:
                chars[yi][xi + i] = ch
                styles[yi][xi + i] = style
        self.refresh()

    def draw_static(self) -> None:  # pragma: no cover - overridden
        pass

    def draw_moving(self, now: Now) -> None:  # pragma: no cover - overridden
        pass


class SkyDial(LayeredCanvas):
    """The ecliptic as a graduated ring; the train's Sun and Moon hands from the centre, the
    true Sun and Moon as badges on the ring; a train's node and perigee pointers as short
    hands, the true mean node and perigee as marks inside the ring. Longitude 0° at the top,
    increasing anticlockwise.
    """

    #: the pointer kinds the dial draws (ecliptic longitudes)
    KINDS = frozenset({"sun", "moon", *ELEMENT_HANDS})

    @classmethod
    def draws(cls, kind: str) -> bool:
        """True when the dial draws pointers of this kind (an ecliptic longitude)."""
        return kind in cls.KINDS or body_of(kind) in PLANET_STYLE

    def __init__(self, session: Session, **kwargs):
        super().__init__(**kwargs)
        self.session = session
        self._geom = (0.0, 0.0, 1.0)
        #: what the last frame drew for the node and perigee: kind -> (hand°, mark°)
        self.elements: dict[str, tuple[float, float]] = {}
        #: the true planet marks the last frame drew: (longitude°, style, seen from the Sun)
        self.planets: list = []
        #: the ring, graduation, sign-name and hub colours of the theme the dial was drawn in
        self.colours: dict[str, str] = DIAL_FIXED

    @staticmethod
    def key_text(kinds) -> Text:
        """The key under the dial; a second line for the node and perigee the train shows."""
        key = Text.assemble(("━ ", f"bold {SUN_HUE}"), ("━ ", f"bold {MOON_HUE}"),
                            "train hands   ", ("☉", f"#101418 on {SUN_HUE}"), " ",
                            ("☾", f"#101418 on {MOON_HUE}"), " true sky")
        planets = [b for b in PLANET_STYLE
                   if b in {body_of(k) for k in kinds if body_of(k) in PLANET_STYLE}]
        if planets:
            key.append("\n")
            for i, b in enumerate(planets):
                hue, mark, name = PLANET_STYLE[b]
                arm = any(is_arm(k) and body_of(k) == b for k in kinds)
                key.append_text(Text.assemble("  " if i else "", (mark, f"bold #101418 on {hue}"
                                                                 if not arm else f"bold {hue}"),
                                              (f"{name}", hue)))
            if any(is_arm(k) for k in kinds):
                key.append_text(Text("\nopen mark, dashed hand: seen from the Sun (an arm)",
                                     style="dim"))
        key.append("\n")
        key.append_text(Text.assemble(("⠒⠒ ", f"bold {SOLAR_ARC}"), "solar  ",
                                      ("⠒⠒ ", f"bold {LUNAR_ARC}"), "lunar eclipse limits"))
        extra = [k for k in ELEMENT_HANDS if k in kinds]
        if extra:
            key.append("\n")
            for i, k in enumerate(extra):
                hue, _, dash, mark, name = ELEMENT_HANDS[k]
                key.append_text(Text.assemble("   " if i else "", ("╍ " if dash[0] > 1 else "┈ ",
                                f"bold {hue}"), (mark, f"bold {hue}"), f" {name}"))
        return key

    @classmethod
    def about_text(cls, kinds, sky_name: str) -> str:
        """What the dial's hands and marks are, for help, for the train showing ``kinds``:
        the Sun and Moon badges always, and only the planets, arms, node and perigee it has
        (the help said "the true Sun and Moon" on an orrery ringed with planets' marks)."""
        kinds = set(kinds)
        if not any(cls.draws(k) for k in kinds):
            return ("This train has nothing for the sky dial (no pointer shows an ecliptic "
                    f"longitude); the readings compare each pointer with the sky from {sky_name}.")

        def listed(items: list[str]) -> str:
            return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]

        def named(bodies: list[str]) -> list[str]:
            return [f"{PLANET_STYLE[b][2]} ({PLANET_STYLE[b][1]})" for b in bodies]

        seen = [b for b in PLANET_STYLE if any(body_of(k) == b and not is_arm(k) for k in kinds)]
        arms = [b for b in PLANET_STYLE if any(body_of(k) == b and is_arm(k) for k in kinds)]
        text = ("The hands are the train; the marks are the true sky from "
                f"{sky_name}: the badges on the ring are "
                + listed(["the Sun (☉)", "the Moon (☾)", *named(seen)]))
        if arms:
            text += ("; the open marks just inside it are the arms' true places seen from the "
                     "Sun: " + listed(named(arms)))
        elements = [f"the mean {ELEMENT_HANDS[k][4]} ({ELEMENT_HANDS[k][3]})"
                    for k in ELEMENT_HANDS if k in kinds]
        if elements:
            text += "; the small marks inside it are " + listed(elements)
        return text + "."

    def _xy(self, lon_deg: float, r: float) -> tuple[float, float]:
        cx, cy, _ = self._geom
        t = math.radians(90.0 + lon_deg)
        return cx + r * math.cos(t), cy - 0.5 * r * math.sin(t)

    #: how far outside the ring the sign names sit (cells along the radius)
    SIGN_OFFSET = 3.2

    def _sign_cells(self, r: float, k: int) -> tuple[int, int, str]:
        """Where sign ``k``'s name goes at ring radius ``r``: (first cell, row, text)."""
        name = SIGNS[k] if r >= 8 else SIGNS[k][:2]
        x, y = self._xy(30 * k + 15, r + self.SIGN_OFFSET)
        return int(round(x - 1)), int(round(y)), name

    def fit_radius(self, w: int, h: int) -> float:
        """The largest ring whose twelve sign names all fit inside ``w`` × ``h`` cells: the
        ring is sized from both dimensions (a tall pane is limited by its width and a wide
        one by its height)."""
        cx, cy = w / 2.0, h / 2.0
        r = max(min(w / 2.0 - 4.5, (h / 2.0 - 1.2) * 2.0), 2.0)
        while r > 2.0:
            self._geom = (cx, cy, r)
            if all(0 <= x and x + len(t) <= w and 0 <= y < h
                   for x, y, t in (self._sign_cells(r, k) for k in range(12))):
                break
            r -= 0.25
        return max(r, 2.0)

    def draw_static(self) -> None:
        w, h = self.grid_size
        cx, cy = w / 2.0, h / 2.0
        r = self.fit_radius(w, h)
        self._geom = (cx, cy, r)
        c = self.colours = dial_colours(self)
        ring = [self._xy(a / 4.0, r) for a in range(0, 1440)]
        self.dots(ring, style=c["ring"])
        fine = []
        coarse = []
        dots_per_deg = r * math.pi / 180.0 * 2.0
        for deg in range(360):
            if deg % 30 == 0:
                coarse += [self._xy(deg, r - k * 0.25) for k in range(0, 13)]
                coarse += [self._xy(deg, r + k * 0.25) for k in range(1, 4)]
            elif deg % 10 == 0:
                fine += [self._xy(deg, r - k * 0.25) for k in range(0, 7)]
            elif deg % 5 == 0:
                fine += [self._xy(deg, r - k * 0.25) for k in range(0, 4)]
            elif dots_per_deg >= 0.9:
                fine.append(self._xy(deg, r - 0.5))
        self.dots(fine, style=c["ring"])
        self.dots(coarse, style=c["ring_bright"])
        for k in range(12):
            x, y, name = self._sign_cells(r, k)
            self.put(x, y, name, c["sign"])
        for deg in (0, 90, 180, 270):
            x, y = self._xy(deg, r - 5.0)
            if r >= 16:
                self.put(x - len(str(deg)) / 2, y, f"{deg}°", c["sign"])

    def _arcs(self, now: Now, r: float) -> None:
        """The ecliptic limits around both nodes, as dotted arcs outside the ring."""
        for kind, start, end in now.limit_arcs:
            span = (end - start) % 360.0
            radius = r + ARC_RADII[kind]
            n = max(int(span * radius * math.pi / 180.0 * 2.0), 2)
            pts = [self._xy(start + span * k / n, radius) for k in range(n + 1)]
            self.dots(pts, style=f"bold {SOLAR_ARC if kind == 'solar' else LUNAR_ARC}")

    def draw_moving(self, now: Now) -> None:
        cx, cy, r = self._geom
        self._arcs(now, r)
        for k in range(12):  # the sign names stay readable over the arcs
            x, y, name = self._sign_cells(r, k)
            self.put(x, y, name, self.colours["sign"])
        ptrs = now.pointers
        by_kind = {}
        for p in ptrs.values():
            by_kind.setdefault(p.shows, p)
        # node and perigee first, so the Sun and Moon hands keep their colour where they cross
        drawn = {}
        for kind, (hue, length, dash, _, _) in ELEMENT_HANDS.items():
            p = by_kind.get(kind)
            if p is None:
                continue
            x, y = self._xy(p.train_deg, r * length)
            self.line(cx, cy, x, y, style=f"bold {hue}", dash=dash)
            drawn[kind] = (p.train_deg, _scalar(now.sky.kind(kind)))
        self.elements = drawn
        planet_marks = []
        for p in ptrs.values():  # planet hands under the Sun's and Moon's
            style = PLANET_STYLE.get(body_of(p.shows))
            if style is None:
                continue
            arm = is_arm(p.shows)
            x, y = self._xy(p.train_deg, r * PLANET_HAND)
            self.line(cx, cy, x, y, style=f"bold {style[0]}", dash=(2, 2) if arm else (1, 1))
            planet_marks.append((p.sky_deg, style, arm))
        self.planets = planet_marks
        for kind, hue, length in (("moon", MOON_HUE, 0.78), ("sun", SUN_HUE, 0.92)):
            p = by_kind.get(kind)
            if p is None:
                continue
            x, y = self._xy(p.train_deg, r * length)
            self.line(cx, cy, x, y, style=f"bold {hue}")
        for kind, (_, sky) in drawn.items():  # the true mean node and perigee, inside the ring
            hue, _, _, mark, _ = ELEMENT_HANDS[kind]
            x, y = self._xy(sky, r - 2.0)
            self.put(x - 0.5, y - 0.25, mark, f"bold {hue}")
        self.put(cx - 0.5, cy - 0.25, "●", self.colours["hub"])
        sun = _scalar(now.sky.sun_lon_deg)
        moon = _scalar(now.sky.moon_lon_deg)
        for lon, (hue, mark, _), arm in planet_marks:  # true places: on the ring (seen from
            x, y = self._xy(lon, r - (1.6 if arm else 0.0))  # the Sun: just inside it)
            self.put(x - 0.5, y - 0.25, mark, f"bold {hue}" if arm else f"bold #101418 on {hue}")
        for lon, glyph, hue in ((moon, "☾", MOON_HUE), (sun, "☉", SUN_HUE)):
            x, y = self._xy(lon, r)
            self.put(x - 0.5, y - 0.25, glyph, f"bold #101418 on {hue}")


class TrainView(LayeredCanvas):
    """The train: each arbor a wheel sized by its largest tooth count, meshes as lines, carrier
    links dotted; a radius marker turns at the arbor's true rate, or its turn count shows when
    it moves too fast to follow."""

    def __init__(self, session: Session, layout: TrainLayout, **kwargs):
        super().__init__(**kwargs)
        self.session = session
        self.train_layout = layout
        self._spots: dict[str, tuple[float, float, float]] = {}
        # per arbor: its name label's first and last cell + 1, its row, its column's edges
        self._labels: dict[str, tuple[int, int, float, float, float]] = {}
        self._hands = {p.arbor for p in session.mech.train.pointers.values()}
        self._label_style, self._hand_style = LABEL, "bold #e6e6e6"  # till drawn in a theme

    def draw_static(self) -> None:
        w, h = self.grid_size
        lay = self.train_layout
        self._places = place_train(lay, w, h)
        if not self._places:
            return
        self._spots = {name: (p.x, p.y, p.r) for name, p in self._places.items()}
        for a, b, internal in lay.meshes:
            self.line(*self._between(a, b), style="#4d5a66" if not internal else "#8a6d3b")
        for carrier, arbor in lay.carried:
            x1, y1, x2, y2 = self._between(carrier, arbor)
            n = max(int(math.hypot(x2 - x1, (y2 - y1) * 2) * 1.5), 2)
            pts = [(x1 + (x2 - x1) * k / n, y1 + (y2 - y1) * k / n) for k in range(0, n + 1, 2)]
            self.dots(pts, style="#c678dd")
        for a, b in lay.slots:
            self.line(*self._between(a, b), style="#c678dd")
        crank = self.session.mech.train.crank.arbor
        for name, (x, y, r) in self._spots.items():
            pts = [(x + r * math.cos(t / 40 * math.tau), y + 0.5 * r * math.sin(t / 40 * math.tau))
                   for t in range(40)]
            style = WHEEL_CRANK if name == crank else (WHEEL_HAND if name in self._hands
                                                       else WHEEL)
            self.dots(pts, style=style)
        self._labels = {}
        c = dial_colours(self)  # labels and hands readable in the theme
        self._label_style, self._hand_style = c["sign"], f"bold {c['hub']}"
        for name, p in self._places.items():
            self.put(p.label_x, p.label_row, p.label, self._label_style)
            self._labels[name] = (p.label_x, p.label_x + len(p.label), p.label_row,
                                  p.col_left, p.col_right)

    class WheelPicked(Message):
        """A wheel was clicked in the train drawing: ``arbor`` and the ``wheel`` it picks
        (None for an arbor without wheels)."""

        def __init__(self, arbor: str, wheel: str | None):
            super().__init__()
            self.arbor, self.wheel = arbor, wheel

    def on_click(self, event) -> None:
        """Pick the wheel under the pointer: the cell's centre in canvas coordinates, and the
        engine's hit test (:func:`engine.view.arbor_at`) says which arbor is drawn there."""
        at = event.get_content_offset(self)
        if at is None or not getattr(self, "_places", None):
            return
        arbor = arbor_at(self._places, at.x + 0.5, at.y + 0.5)
        if arbor is not None:
            event.stop()
            self.post_message(self.WheelPicked(arbor,
                                               picked_wheel(self.session.mech.train, arbor)))

    def _free(self, x0: int, row: int, width: int, blank: bool) -> bool:
        """True when these cells of the static layer hold no wheel rim and no label (and,
        with ``blank``, nothing at all)."""
        if not (0 <= row < len(self._static[0]) and 0 <= x0
                and x0 + width <= len(self._static[0][row])):
            return False
        chars, styles = self._static[0][row], self._static[1][row]
        for x in range(x0, x0 + width):
            if styles[x] in DRAWN or styles[x] == self._label_style or (blank
                                                                        and chars[x] != " "):
                return False
        return True

    def _put_count(self, name: str, turns: float) -> None:
        """An arbor's turn count where it covers no wheel and no label: inside the wheel when
        it fits between the rims, else beside its name label, above the wheel or below the
        label; if nothing is free, over the wheel."""
        x, y, r = self._spots[name]
        row = math.floor(y)  # the row through the centre: its rim cells are at the two ends
        begin, end, y_label, left, right = self._labels.get(name, (0, 0, 0.0, 0.0, 0.0))
        lrow = round(y_label)
        width = max(int(right - left), 3)
        spots = [  # (first cell for a count of n characters, row, widest count)
            (lambda n: math.floor(x - n / 2.0 + 0.5), row, int(2.0 * r - 1.5)),
            (lambda n: end + 1, lrow, int(right - end)),
            (lambda n: begin - 1 - n, lrow, int(begin - left) - 1),
            (lambda n: math.floor(x - n / 2.0 + 0.5), math.floor(y - 0.5 * r) - 1, width),
            (lambda n: math.floor(x - n / 2.0 + 0.5), lrow + 1, width),
        ]
        for blank in (True, False):
            for first, at, most in spots:
                count = turns_label(turns, most) if most >= 1 else None
                if count is not None and self._free(first(len(count)), at, len(count), blank):
                    self.put(first(len(count)), at, count, COUNT)
                    return
        count = turns_label(turns, 12) or "fast"
        self.put(math.floor(x - len(count) / 2.0 + 0.5), row, count, COUNT)

    def _between(self, a: str, b: str) -> tuple[float, float, float, float]:
        """End points of a link between two wheels, from rim to rim (cells are 1:2)."""
        (x1, y1, r1), (x2, y2, r2) = self._spots[a], self._spots[b]
        dx, dy = x2 - x1, (y2 - y1) * 2.0
        d = math.hypot(dx, dy)
        if d <= r1 + r2:
            return x1, y1, x2, y2
        return (x1 + dx * r1 / d, y1 + dy * r1 / d / 2.0, x2 - dx * r2 / d, y2 - dy * r2 / d / 2.0)

    def draw_moving(self, now: Now) -> None:
        rates = self.session.mech.kin.rates
        for name, (x, y, r) in self._spots.items():
            if too_fast(rates[name], now.moved_turns):
                self._put_count(name, now.arbor_turns[name])
                continue
            a = now.angles_turns[name] * math.tau
            # angle 0 up, positive turning anticlockwise as seen from the dial side
            ex, ey = x - 0.9 * r * math.sin(a), y - 0.45 * r * math.cos(a)
            self.line(x, y, ex, ey, style=self._hand_style)


_LIT_RGB = (0xF4, 0xEF, 0xD2)
_UNLIT_RGB = (0x2B, 0x31, 0x40)
_SHADES = 16  # shading levels across a cell's lit share


class OrreryPlan(LayeredCanvas):
    """Looking down on an orrery: the Sun in the middle, each arm at its train angle out to its
    orbit (radii from :func:`engine.view.plan_radii`), and the true heliocentric place as a mark
    on the same orbit. Longitude 0° at the top, increasing anticlockwise, like the sky dial."""

    def __init__(self, session: Session, **kwargs):
        super().__init__(**kwargs)
        self.session = session
        kinds = {n: p.shows for n, p in session.mech.train.pointers.items()}
        self.radii = plan_radii(kinds)
        self._geom = (0.0, 0.0, 1.0)
        #: what the last frame drew: pointer -> (arm°, true°)
        self.arms: dict[str, tuple[float, float]] = {}

    def _xy(self, lon_deg: float, r: float) -> tuple[float, float]:
        cx, cy, _ = self._geom
        t = math.radians(90.0 + lon_deg)
        return cx + r * math.cos(t), cy - 0.5 * r * math.sin(t)

    def draw_static(self) -> None:
        w, h = self.grid_size
        cx, cy = w / 2.0, h / 2.0
        r = max(min(w / 2.0 - 2.0, (h / 2.0 - 1.0) * 2.0), 2.0)
        self._geom = (cx, cy, r)
        for frac in self.radii.values():
            n = max(90, int(r * frac * 12))
            self.dots([self._xy(360.0 * k / n, r * frac) for k in range(n)], style=UNLIT_RING)
        x, y = self._xy(0.0, r + 0.6)
        self.put(x - 1, y, "0°", RING)

    def draw_moving(self, now: Now) -> None:
        cx, cy, r = self._geom
        drawn = {}
        for name, frac in self.radii.items():  # the arms first, then every mark over them
            p = now.pointers.get(name)
            if p is None:
                continue
            x, y = self._xy(p.train_deg, r * frac)
            self.line(cx, cy, x, y, style=f"bold {PLANET_STYLE[body_of(p.shows)][0]}")
            drawn[name] = (p.train_deg, p.sky_deg)
        for name, (arm, true) in drawn.items():
            hue, mark, _ = PLANET_STYLE[body_of(now.pointers[name].shows)]
            tx, ty = self._xy(true, r * self.radii[name])
            self.put(tx - 0.5, ty - 0.25, "○", f"bold {hue}")
            x, y = self._xy(arm, r * self.radii[name])
            self.put(x - 0.5, y - 0.25, mark, f"bold #101418 on {hue}")
        self.arms = drawn
        self.put(cx - 0.5, cy - 0.25, "☉", f"bold #101418 on {SUN_HUE}")

    @staticmethod
    def key_text() -> Text:
        return Text.assemble(("━", "bold"), " arm (train)  ", ("○", "bold"), " true place  ",
                             ("☉", f"#101418 on {SUN_HUE}"), " Sun")


def _shade_hex(k: float) -> str:
    r, g, b = (round(x + (y - x) * k) for x, y in zip(_UNLIT_RGB, _LIT_RGB, strict=True))
    return f"#{r:02x}{g:02x}{b:02x}"


_SHADE_HEX = tuple(_shade_hex(i / _SHADES) for i in range(_SHADES + 1))


def _shade(t: float) -> str:
    return _SHADE_HEX[round(t * _SHADES)]


@lru_cache(maxsize=512)
def _disc_cells(lit_fraction: float, waxing: bool, rows: int) -> list[list[tuple[str, str | None,
                                                                              str | None]]]:
    """A shaded disc ``rows`` cells tall and ``2 * rows`` wide in half-block cells (two picture
    elements a cell): per cell (glyph, foreground, background)."""
    cols = rows * 2
    disc, lit = lit_disc(lit_fraction, waxing, cols, rows * 2)
    share = np.where(disc > 0, lit / np.maximum(disc, 1e-9), 0.0)
    out = []
    for i in range(rows):
        line = []
        for j in range(cols):
            top = _shade(share[2 * i, j]) if disc[2 * i, j] >= 0.5 else None
            bottom = _shade(share[2 * i + 1, j]) if disc[2 * i + 1, j] >= 0.5 else None
            if top and bottom:
                line.append(("▀", top, bottom))
            elif top:
                line.append(("▀", top, None))
            elif bottom:
                line.append(("▄", bottom, None))
            else:
                line.append((" ", None, None))
        out.append(line)
    return out


def _disc_caption(elongation_deg: float, lit: float, width: int) -> str:
    """Elongation and lit share under a disc, in the longest form that fits ``width`` (a
    figure is never cut: the forms drop words, not digits)."""
    e, pc = f"{elongation_deg:.1f}°", f"{lit * 100:.0f}%"
    for form in (f"E {e:>6}  lit {pc:>4}", f"E {e} lit {pc}", f"{e} {pc}"):
        if len(form) <= width:
            return form
    return f"{e} {pc}"


def span_years(span: str) -> str:
    """An ephemeris span in years only: ``1899-07-30 to 2053-10-08`` → ``1899–2053``; a
    start before year 1 keeps its BC year, and then the end its AD (``-3000-02-24 (3001 BC)
    to 3000-03-02`` → ``3001 BC–AD 3000``: "3001 BC–3000" read as a span of BC years)."""
    def year(day: str) -> str:
        if "(" in day:
            return day[day.index("(") + 1:day.index(")")]
        return day.split(" ")[0].rsplit("-", 2)[0]

    start, _, end = span.partition(" to ")
    first, last = year(start), year(end)
    if first.endswith(" BC") and not last.endswith(" BC"):
        last = f"AD {last.lstrip('0') or '0'}"
    return f"{first}–{last}"


def _under_discs(left: str, right: str, width: int) -> str:
    """One line under the two discs: each text centred under its disc when it fits there,
    else the left one flush left and the right one flush right across the whole line (a
    phase name such as "waxing crescent" is never cut to the disc's width)."""
    if len(left) <= width and len(right) <= width:
        return f"{left:^{width}}   {right:^{width}}"
    return f"{left} {right:>{2 * width + 2 - len(left)}}"


class PhaseDiscs(Widget):
    """The train's phase display beside the true Moon, each a shaded disc with its elongation
    and lit fraction. Drawn line by line; rebuilt only when what it shows changes."""

    def __init__(self, session: Session, **kwargs):
        super().__init__(**kwargs)
        self.session = session
        self._now: Now | None = None
        self._key = None
        self._strips: list[Strip] = []
        self._styles: dict[tuple, RichStyle] = {}

    def show(self, now: Now) -> None:
        self._now = now
        self._build()

    def on_resize(self) -> None:
        self._key = None
        self._styles = {}
        self._build()

    def on_mount(self) -> None:
        # the styles take the theme's background: a new theme builds them again
        self.app.theme_changed_signal.subscribe(self, lambda _theme: self.on_resize())

    def _style(self, fg: str | None, bg: str | None, bold: bool = False) -> RichStyle:
        key = (fg, bg, bold)
        st = self._styles.get(key)
        if st is None:
            st = self.rich_style + RichStyle(color=fg, bgcolor=bg, bold=bold or None)
            self._styles[key] = st
        return st

    def _build(self) -> None:
        now = self._now
        if now is None or not self.size.width:
            return
        width = max((self.size.width - 3) // 2, 8)
        rows = max(min(self.size.height - 3, width // 2), 2)
        ptrs = list(now.pointers.values())
        p = next((p for p in ptrs if p.shows == "phase"), None)
        sun = next((p for p in ptrs if p.shows == "sun"), None)
        moon = next((p for p in ptrs if p.shows == "moon"), None)
        if p is not None:
            e_train, label = p.train_deg, f"train: {p.name}"
        elif sun is not None and moon is not None:
            e_train, label = hands_elongation_deg(moon.train_deg, sun.train_deg), "train hands"
        else:
            e_train, label = None, "train"
        e_sky = _scalar(now.sky.elongation_deg)
        lit_sky = _scalar(now.sky.illuminated)
        if e_train is not None:
            lit_train = ball_lit_fraction(e_train)
            t1 = _disc_caption(e_train, lit_train, width)
        else:
            lit_train, t1 = None, "no phase display"
        t2 = _disc_caption(e_sky, lit_sky, width)
        name = now.sky.phase_names()[0]
        key = (width, rows, None if lit_train is None else round(lit_train * 400),
               e_train is not None and e_train < 180.0, round(lit_sky * 400), e_sky < 180.0,
               t1, t2, name, label)
        if key == self._key:
            return
        self._key = key
        # lit fractions to 1/400 (the key above): the shading has 16 levels, and repeated
        # states come from the cache
        left = (_disc_cells(round(lit_train * 400) / 400, e_train < 180.0, rows)
                if lit_train is not None
                else [[(" ", None, None)] * (rows * 2)] * rows)
        right = _disc_cells(round(lit_sky * 400) / 400, e_sky < 180.0, rows)
        pad = (width - rows * 2) // 2
        plain = self._style(None, None)
        strips = []
        for a, b in zip(left, right, strict=True):
            segs = [Segment(" " * pad, plain)]
            # the right disc starts its half's pad after the gap of 3, as the left does
            # (it stood flush left in its half: 16 cells off its caption at 160 x 50)
            for half, tail in ((a, width - rows * 2 + 3), (b, 0)):
                segs += [Segment(ch, self._style(fg, bg)) for ch, fg, bg in half]
                if tail:
                    segs.append(Segment(" " * tail, plain))
            strips.append(Strip(segs).simplify())
        bold = self._style(None, None, True)
        dim = self._style("#7f8c99", None)
        for (a, b), st in (((label, "true Moon"), bold), ((t1, t2), plain), (("", name), dim)):
            strips.append(Strip([Segment(_under_discs(a, b, width), st)]))
        old, self._strips = self._strips, strips
        # repaint only the rows that changed (the true Moon's disc often stays as it was)
        if len(old) != len(strips) or not self.size.width:
            self.refresh()
            return
        width = self.size.width
        changed = [Region(0, y, width, 1) for y, (a, b) in enumerate(zip(old, strips,
                                                                         strict=True))
                   if a.text != b.text or list(a) != list(b)]
        if changed:
            self.refresh(*changed)

    def render_line(self, y: int) -> Strip:
        if y < len(self._strips):
            return self._strips[y]
        return Strip.blank(self.size.width, self.rich_style)


class RowStatic(Static):
    """A Static showing a rich Text that changes a few rows at a time (a crank changes the
    date but not the frame or observer): it repaints only the rows whose text changed.

    The text is rendered as Textual renders a Static's content (so a long line wraps or is
    cut by the widget's styles as before), and its rows compared with those shown: only the
    rows that differ are repainted, which saves the screen's work on every row that stayed
    (tests/test_tui.py checks the rows are those of a Static). ``content`` is always the
    whole text, as :meth:`update` leaves it."""

    _rows: list[Strip] | None = None
    _rows_width = 0
    _holding = False

    def notify_style_update(self) -> None:
        super().notify_style_update()
        self._rows = None

    def refresh(self, *regions: Region, **kwargs) -> RowStatic:
        if self._holding:  # put_text asks for the rows that changed itself
            return self
        return super().refresh(*regions, **kwargs)

    def _render_rows(self, width: int) -> list[Strip]:
        """The rows of the whole text, as :meth:`textual.widget.Widget.render_line` makes
        them."""
        return Visual.to_strips(self, self.visual, width, None, self.visual_style)

    def put_text(self, text: Text, layout: bool = False) -> None:
        """Show ``text``; lay the screen out again when ``layout`` (the height may change)."""
        width = self.size.width
        old = self._rows
        if layout or old is None or width != self._rows_width or self.text_selection:
            self._rows = None
            self.update(text, layout=layout)
            return
        self._holding = True
        try:
            self.update(text, layout=False)
        finally:
            self._holding = False
        rows = self._render_rows(width)
        self._rows = rows
        if len(rows) != len(old):  # a line began or stopped wrapping: the height changes
            self.refresh(layout=True)
            return
        changed = [Region(0, y, width, 1) for y, (a, b) in enumerate(zip(old, rows, strict=True))
                   if a is not b and a != b]
        if changed:
            self.refresh(*changed)

    def render_line(self, y: int) -> Strip:
        content = self.content
        width = self.size.width
        if not isinstance(content, Text) or self.text_selection or not width:
            return super().render_line(y)
        if self._rows is None or self._rows_width != width:
            self._rows = self._render_rows(width)
            self._rows_width = width
        if y < len(self._rows):
            return self._rows[y]
        return Strip.blank(width, self.visual_style.rich_style)


def _err_style(err: float, colours: dict[str, str]) -> str:
    a = abs(err)
    return colours["ok"] if a < 1.0 else (colours["warn"] if a < 5.0 else f"bold {colours['bad']}")


class Readings(RowStatic):
    """Per pointer: train, sky, error now, worst error since the start or the last change of
    frame, observer or pointer setting, and the mean drift per century in the current frame."""

    _now: Now | None = None
    _laid_out = False

    #: what the worst column covers, longest first; the panel's subtitle takes one that fits
    WORST_KEYS = ("{col}: largest |err| since start or last frame, observer or re-set",
                  "{col}: since start or last frame/observer/re-set",
                  "{col} since start or t/o/re-set/u",  # a re-set: r, R or m
                  "{col} since t/o/re-set/u")

    def on_resize(self) -> None:
        self._laid_out = False
        if self._now is not None:
            self.show(self._now)
            # the rows of the old width (51 at 100 x 30, err days included) were measured at
            # the new one while the terminal shrank: lay out again once that pass is done,
            # or the panel kept their wrapped height and pushed the warnings off the column
            self.call_after_refresh(self.refresh, layout=True)

    def worst_key(self, narrow: bool, width: int) -> str:
        col = "max°" if narrow else "worst°"
        for form in self.WORST_KEYS:
            text = form.format(col=col)
            if len(text) <= width - 6:
                return text
        return ""

    #: (header, width) per column, narrow and wide; a negative width is left-aligned. Every
    #: number is written after at least one space, so two never run together: a value wider
    #: than its column pushes the rest of the row right, and a row too long wraps.
    NARROW = (("pointer", -7), ("train°", 7), ("sky°", 6), ("err°", 7), ("max°", 6),
              ("°/cy", 8))  # 41 wide, the parts screen's readings at 80 x 24 (the bench's
    # are 42, a name column of 8): the header's train° and a drift of +0.0008 or +67,988 in
    # their columns (one wider pushed its row right, so the headers stood a column off the
    # figures and the drifts' right edges ragged)
    NARROW_WIDTH = 41
    DAYS = ("days", 8)  # the narrow panel's err days, when it has the room
    WIDE = (("pointer", -9), ("train°", 8), ("sky°", 8), ("err°", 8), ("worst°", 8),
            ("drift °/cy", 11), ("err days", 9))

    @staticmethod
    def angle_text(deg: float, decimals: int) -> str:
        """A reading on the 0–360° dial to ``decimals``: one that rounds up to 360 reads 0
        (359.96° is 0.0, not 360.0)."""
        text = f"{deg:.{decimals}f}"
        return f"{0.0:.{decimals}f}" if float(text) >= 360 else text

    def show(self, now: Now) -> None:
        self._now = now
        narrow = bool(self.size.width) and self.size.width < 61  # the wide columns need 61
        cols = self.NARROW if narrow else self.WIDE
        # err days in a narrow panel too when it has the room (51 columns at 100 x 30; at
        # 80 x 24 the six columns take all 42) and a pointer has it (phase, eclipse ring)
        # and only when a pointer has it: the table orrery's wide panel headed an empty column
        has_days = any(p.error_days is not None for p in now.pointers.values())
        days_col = has_days and (not narrow
                                 or self.size.width >= self.NARROW_WIDTH + self.DAYS[1])
        if narrow and days_col:
            cols = cols + (self.DAYS,)
        elif not narrow and not days_col:
            cols = cols[:-1]
        w = [c[1] for c in cols]
        colours = ui(self)
        head = f"bold {colours['muted']}"
        t = Text(no_wrap=False, overflow="fold")

        def cell(text: str, width: int, style: str = "") -> None:
            t.append(" " + text.rjust(width - 1), style=style)

        # the name column takes what the panel has beyond the columns (61 wide, 41 narrow),
        # up to the longest name; names still too long are cut so that no two read alike
        spare = max(0, self.size.width - sum(abs(c[1]) for c in cols))
        shown = [p.name for p in now.pointers.values()]
        gap = 1 if narrow else 0  # a narrow panel's name column is one short of a gap
        longest = max([len(cols[0][0]), *map(len, shown)])  # the header's "pointer" too
        name_w = max(-w[0], min(-w[0] + spare, longest + gap))
        names = short_names(shown, name_w)
        # a Jupiter or Saturn pointer's drift is against JPL's 1800-2050 mean period, which
        # the great inequality moves: its name is marked, and a line under the table says so
        era = {p.name: p.era_spread_ppm for p in now.pointers.values()
               if p.era_spread_ppm is not None}
        for n in era:
            names[n] = names[n][:name_w - 1] + "*"
        t.append(f"{cols[0][0]:<{name_w}}", style=head)
        for title, width in cols[1:]:
            cell(title, width, head)
        decimals = 1 if narrow else 2
        # one number of decimals, the points lined up (a space before the column)
        drifts = iter(error_column((p.drift_deg_per_century for p in now.pointers.values()
                                    if p.drift_deg_per_century is not None), width=w[5] - 1))
        for p in now.pointers.values():
            t.append("\n")
            t.append(f"{names[p.name]:<{name_w}}")
            err = p.error_deg if abs(p.error_deg) >= 0.005 else 0.0  # no "-0.00"
            cells = [(self.angle_text(p.train_deg, decimals), ""),
                     (self.angle_text(p.sky_deg, decimals), ""),
                     (fixed(err, 2, sign=True), _err_style(err, colours)),
                     (fixed(p.worst_deg, 2), _err_style(p.worst_deg, colours)),
                     ("" if p.drift_deg_per_century is None else next(drifts), "")]
            if days_col:
                days = p.error_days
                if days is not None and abs(days) < 0.005:
                    days = 0.0
                cells.append(("" if days is None else fixed(days, 2, sign=True), ""))
            self._row(t, cells, cols, name_w, colours)
        # a cycle dial's err° is taken within the month: the whole months it stands from
        # the real count (the engine's figure) said under the table, when there are any
        for p in now.pointers.values():
            if p.months_off:
                k = p.months_off
                t.append("\n")
                t.append(f"{names[p.name]}: {abs(k)} month{'s' if abs(k) != 1 else ''} "
                         f"{'ahead of' if k > 0 else 'behind'} the real count",
                         style=colours["warn"])
        if era:  # the fullest form that takes one line of the panel (else the last, wrapped)
            ppm = [figure(abs(v), 2) for v in era.values()]
            forms = ("* °/cy against JPL's 1800-2050 mean period, which the great inequality "
                     "moves: " + ", ".join(f"{n} {v} ppm" for n, v in zip(era, ppm, strict=True)),
                     "* °/cy against 1800-2050 means; the great inequality moves "
                     f"{'them' if len(ppm) > 1 else 'it'} {'/'.join(ppm)} ppm",
                     f"* 1800-2050 mean; eras move it {'/'.join(ppm)} ppm")
            t.append("\n")
            t.append(next((f for f in forms if len(f) <= self.size.width), forms[-1]),
                     style=colours["muted"])
        # same rows every frame: lay out again only after a resize, or when a row starts or
        # stops wrapping (a value grew wider than its column)
        if not self._laid_out and self.parent is not None and self.size.width:
            self.parent.border_subtitle = self.worst_key(narrow, self.parent.size.width)
        width = max(self.size.width, 1)
        lines = sum(-(-max(len(line), 1) // width) for line in t.plain.split("\n"))
        relayout = not self._laid_out or lines != self._lines
        self._lines = lines
        self.put_text(t, layout=relayout)
        self._laid_out = bool(self.size.width)

    _lines = 0

    #: starts a line that carries on a pointer's row: a figure that did not fit beside the
    #: rest, under its column's name (a wide drift once wrapped to column 0, where it read
    #: as a row of another pointer)
    CARRIED = "  ↳ "

    def _row(self, t: Text, cells, cols, name_w: int, colours: dict[str, str]) -> None:
        """Append one pointer's figures after its name: each in its column (a wider one
        pushes the rest right, after a space); a figure that would run past the panel's edge
        goes on a line of its own under the row, led by :data:`CARRIED` and its column's
        name and ending where its column ends, while the row's other figures keep their
        places. Nothing is cut: a carried line too long for the panel wraps."""
        panel = self.size.width
        pos, kept, carried = name_w, 0, []
        column_end = name_w  # where the column ends under its header
        for (text, style), (title, width) in zip(cells, cols[1:], strict=True):
            column_end += width
            size = 1 + max(width - 1, len(text))
            if panel and text and pos + size > panel:
                carried.append((title, text, style, column_end))
                kept += width  # its place kept, so the figures after it stay in line
                pos += width
                continue
            t.append(" " * kept)
            t.append(" " + text.rjust(width - 1), style=style)
            kept, pos = 0, pos + size
        for title, text, style, end in carried:
            label = f"{self.CARRIED}{title}"
            end = min(end, panel)
            t.append("\n")
            t.append(label, style=colours["muted"])
            t.append(" " + text.rjust(max(end - len(label) - 1, len(text))), style=style)


def _fit(width: int, indent: int, *choices: tuple[str, ...]) -> tuple[str, ...]:
    """The first of ``choices`` (parts of one line) that fits ``width`` after ``indent``
    columns; the last when none does (or the width is not known yet)."""
    for parts in choices:
        if not width or indent + sum(len(p) for p in parts) <= width:
            return parts
    return choices[-1]


class Status(RowStatic):
    """Date, crank turns, ΔT, ephemeris and span, frame and observer, step and speed."""

    @staticmethod
    def delta_t_text(delta_t_s: float, sigma_s: float) -> str:
        """ΔT and its standard error in plain figures, thousands separated as the commands
        write them (``10,343 s ± 310 s`` in 150 BC, where ``10343.2`` was written), ΔT to the
        decimals its σ knows, a tenth at most (``10,343.2`` showed a tenth of a second of a
        figure known to five minutes)."""
        pm = (fixed(sigma_s, 0) if sigma_s >= 10 else f"{sigma_s:.1f}" if sigma_s >= 1
              else figure(sigma_s, 1))
        return f"{fixed_to_sigma(delta_t_s, sigma_s, 1)} s ± {pm} s"

    def __init__(self, session: Session, **kwargs):
        super().__init__(**kwargs)
        self.session = session

    _last: tuple[Now, bool] | None = None
    _laid_out = False

    def on_resize(self) -> None:
        self._laid_out = False
        if self._last is not None:
            self.show(*self._last)
            # the height asked during the resize's own layout pass was not taken: grown from
            # 80 x 24, the table orrery's panel kept the line its folded turn took, blank
            self.call_after_refresh(self.refresh, layout=True)

    def show(self, now: Now, running: bool) -> None:
        self._last = (now, running)
        s = self.session
        t = Text()
        t.append("date     ", style="dim")
        date = now.date_text
        if self.size.width and 9 + len(date) > self.size.width and " = " in date:
            # a long date (Julian calendar, BC) folds before its "= 150 BC" rather than lose it
            head, tail = date.split(" = ", 1)
            date = f"{head}\n{chr(0xA0) * 9}= {tail}"  # no-break spaces: kept as indent
        t.append(date + "\n", style="bold")
        width = self.size.width
        colours = ui(self)
        fold = f"\n{chr(0xA0) * 9}"  # the last resort: a part on a line of its own
        step = f"step {s.step_text}"
        short_step = f"step {s.step_label or s.step}"
        t.append("crank    ", style="dim")
        turns, step = _fit(width, 9, (f"{now.turns_text} turns since epoch  ", step),
                           (f"{now.turns_text} turns  ", step),  # keep the step on the line
                           (f"{now.turns_text} turns  ", short_step),
                           (f"{now.turns_text} turns", fold + step))
        t.append(turns)
        t.append(f"{step}\n", style=colours["accent"])
        t.append("run      ", style="dim")
        back = s.direction < 0
        state = ("◀ running back" if back else "▶ running") if running else "■ paused"
        brief = ("◀ back" if back else "▶ run") if running else "■ paused"
        rate = figure(s.speed_turns_per_s)
        noun = "turn" if s.speed_turns_per_s == 1 else "turns"
        speed, per_s = f"  {rate} {noun}/s", f"  {rate}/s"
        days = s.mech.train.crank.days_per_turn
        long_turn, short_turn = f"  {s.turn_days}", f"  {turn_days_text(days, short=True)}"
        # "1 turn = N days" always in view: shorter words first, then a line of its own
        state, speed, per_turn = _fit(width, 9, (state, speed, long_turn),
                                      (state, per_s, short_turn), (brief, per_s, short_turn),
                                      (brief, per_s, fold + short_turn.strip()))
        t.append(state, style=f"bold {colours['ok']}" if running else "")
        t.append(speed)
        t.append(f"{per_turn}\n", style=colours["accent"])
        t.append("ΔT       ", style="dim")
        t.append(self.delta_t_text(now.delta_t_s, now.delta_t_sigma_s) + "\n")
        t.append("sky      ", style="dim")
        # the dates of the span when the line holds them (with a cell to spare each side),
        # else years only: DE406's span is longer than DE421's and was cut with "…"
        name = f"{s.sky.name}, "
        (span,) = _fit(width - 2 if width else width, 9 + len(name), (s.sky.span_text,),
                       (span_years(s.sky.span_text),))
        t.append(f"{name}{span}\n")
        t.append("frame    ", style="dim")
        t.append(FRAME_NAMES.get(now.frame, now.frame) + "\n")
        t.append("observer ", style="dim")
        site = s.site
        ns = "N" if site.lat_deg >= 0 else "S"
        ew = "E" if site.lon_deg >= 0 else "W"
        where = f"{abs(site.lat_deg):.2f}°{ns} {abs(site.lon_deg):.2f}°{ew}"
        if now.site is None:
            t.append("geocentric")
            wide = self.size.width >= 60
            t.append(f"  (o: {s.site_name + ' ' if wide else ''}{where}"
                     f"{f' {site.height_m:.0f} m' if wide else ''})", style="dim")
        else:
            t.append(f"{s.site_name} {where} {site.height_m:.0f} m")
        t.no_wrap = True
        t.overflow = "ellipsis"
        lines = t.plain.count("\n")
        if lines != getattr(self, "_lines", lines):
            self._laid_out = False  # the date folded or unfolded: the height changes
        self._lines = lines
        self.put_text(t, layout=not self._laid_out)
        self._laid_out = bool(self.size.width)


class Findings(Static):
    """What the engine reports: errors and warnings first, then notes, each line with its
    level in its own colour; a "caveat" (the checks' design-estimates line) last, dim, and
    not counted in the title."""

    LEVELS = {"error": ("✖ error", "bold #e06c75"), "warning": ("▲ warning", "bold #e5c07b"),
              "note": ("· note", "#56b6c2")}
    ORDER = {"error": 0, "warning": 1, "note": 2, "caveat": 4}

    @classmethod
    def ordered(cls, items: list[tuple[str, str, str, str]]) -> list[tuple[str, str, str, str]]:
        return sorted(items, key=lambda f: cls.ORDER.get(f[0], 3))  # stable: engine order kept

    @staticmethod
    def title(items: list[tuple[str, str, str, str]]) -> str:
        """The panel's title: what it holds, with counts ("warnings & notes: 1 warning, 6
        notes")."""
        parts = []
        for level in ("error", "warning", "note"):
            n = sum(f[0] == level for f in items)
            if n:
                parts.append(f"{n} {level}{'s' if n != 1 else ''}")
        other = sum(f[0] not in ("error", "warning", "note", "caveat") for f in items)
        if other:
            parts.append(f"{other} other")
        return "warnings & notes" + (f": {', '.join(parts)}" if parts else "")

    def show_findings(self, items: list[tuple[str, str, str, str]]) -> None:
        t = Text()
        if not any(f[0] != "caveat" for f in items):
            t.append("no warnings or notes from the engine\n", style="dim")
        colours = ui(self)
        themed = {"error": f"bold {colours['bad']}", "warning": f"bold {colours['warn']}",
                  "note": colours["muted"]}
        for level, item, message, fix in self.ordered(items):
            if level == "caveat":
                t.append(f"{message}\n", style=f"italic {colours['muted']}")
                continue
            tag, style = self.LEVELS.get(level, (f"· {level}", ""))
            style = themed.get(level, style)
            t.append(f"{tag} ", style=style)
            if item:
                t.append(f"{item}: ", style="bold")
            t.append(message)
            if fix:
                t.append(f" → {fix}", style=f"italic {colours['ok']}")
            t.append("\n")
        self.update(t)


def _marks_glyph(month: int, marks: dict) -> tuple[str, str]:
    solar, lunar = month in marks["solar"], month in marks["lunar"]
    if solar and lunar:
        return "◆", "#e8e8e8"
    if solar:
        return "▲", SUN_HUE
    if lunar:
        return "▼", MOON_HUE
    return "·", RING


class EclipseInfo(Static):
    """The nearest new or full moon: what the train predicts there, what the sky has (type,
    gamma), and the eclipse-cycle dial as a ribbon of months when the train has one."""

    OUTCOME_STYLE = {"hit": "bold #98c379", "miss": "bold #e06c75",
                     "false alarm": "bold #e5c07b", "": ""}

    _now: Now | None = None
    _shown: Text | None = None

    def show(self, now: Now) -> None:
        self._now = now
        width = max(self.size.width, 20)
        self._put(self.text(now, width))
        self.border_title = self.title(now, width)

    def on_resize(self) -> None:
        self._shown = None
        if self._now is not None:
            self.show(self._now)

    @staticmethod
    def _syzygy(now: Now, width: int) -> tuple[str, str, str, bool]:
        """The nearest syzygy's line: its word, its date and time (with the BC year before
        AD 1), how far off, and whether that goes on the line (else in the panel's title: at
        80 columns "full moon -0149-04-05 15:11 UT (150 BC) · 4.6 d ago" is 51 characters in
        the panel's 42, and the panel's lines never wrap)."""
        e = now.eclipse
        word = "full moon" if e.kind == "lunar" else "new moon"
        when = format_jd(e.jd_syzygy).split(" UT")[0] + " UT"
        away = (f"in {e.days_away:.1f} d" if e.days_away > 0.05 else
                f"{-e.days_away:.1f} d ago" if e.days_away < -0.05 else "now")
        if e.jd_syzygy < AD_1_JD:  # its BC year, as the readings and the chart give it
            when += f" ({1 - calendar_date(e.jd_syzygy)[0]} BC)"  # -0149-04-05 is 150 BC
            return word, when, away, len(f"{word} {when} · {away}") <= width
        return word, when, away, True

    @classmethod
    def title(cls, now: Now, width: int) -> str:
        """The panel's title: "eclipses", and how far off the syzygy is when its line has no
        room for it ("eclipses · full moon 4.6 d ago")."""
        if now.eclipse is None:
            return "eclipses"
        word, _, away, on_line = cls._syzygy(now, width)
        return "eclipses" if on_line else f"eclipses · {word} {away}"

    @property
    def lines(self) -> int:
        """The lines shown (none wraps), 0 before anything is: the panel's height less its
        borders, known at once, where the laid-out height lags a change of class."""
        return 0 if self._shown is None else self._shown.plain.rstrip("\n").count("\n") + 1

    def _put(self, text: Text) -> None:
        """Show ``text`` unless it is what is shown (while cranking, the panel often stays
        as it was); lay the screen out again only when the number of lines changes (lines
        do not wrap here)."""
        old = self._shown
        if old is not None and text == old:
            return
        self._shown = text
        self.update(text, layout=old is None or text.plain.count("\n") != old.plain.count("\n"))

    @classmethod
    def text(cls, now: Now, width: int) -> Text:
        e = now.eclipse
        if e is None:
            return Text("waiting: cranking too fast to follow eclipses", style="dim")
        word, when, away, on_line = cls._syzygy(now, width)
        out = Text.assemble((f"{word} ", "bold"), f"{when}{' · ' + away if on_line else ''}\n")
        if e.predicted is None:
            out.append("train: predicts no eclipses\n", style="dim")
        else:
            detail = (f"month {int(e.detail)} of the ring" if now.cycle is not None and
                      not math.isnan(e.detail) and e.how.startswith("cycle") else
                      f"Sun {e.detail:.1f}° from node")
            out.append_text(Text.assemble(
                "train: ", ("eclipse " if e.predicted else "none ",
                            "bold" if e.predicted else ""), f"({detail})\n"))
        gap = "  " if e.outcome else ""  # spaces end a segment: a leading space is lost
        if e.sky_type:
            gamma = "" if math.isnan(e.gamma) else f", γ {e.gamma:+.3f}"
            note = "" if e.counted else " (not counted)"
            out.append_text(Text.assemble("sky:   ", (f"{e.sky_type} {e.kind}", "bold"),
                                          f"{gamma}{note}{gap}"))
        else:
            out.append(f"sky:   none{gap}")
        if e.outcome:
            out.append(e.outcome, style=cls.OUTCOME_STYLE[e.outcome])
        c = now.cycle
        if c is not None and c.marks is not None and c.month is not None:
            out.append("\n")
            out.append_text(cls.ribbon(c, max(width - 2, 10)))
        return out

    @staticmethod
    def ribbon(c, width: int) -> Text:
        """The cycle dial as a strip of months centred on the month the nearest syzygy falls
        in (``c.month``, the engine's, the one the panel's prediction reads): ▲ solar mark,
        ▼ lunar, ◆ both, · none; that month reversed."""
        here = c.month
        label = f" month {here}/{c.lunations}"
        cells = max(width - len(label), 5)
        half = cells // 2
        t = Text()
        for k in range(-half, cells - half):
            month = (here - 1 + k) % c.lunations + 1
            glyph, hue = _marks_glyph(month, c.marks)
            t.append(glyph, style=f"reverse bold {hue}" if k == 0 else hue)
        t.append(label, style="bold")
        return t


class WholeTickLabels(NumericAxisFormatter):
    """The drift chart's x axis ticks (years), leaving out a tick whose label the plot's edge
    would cut ("-20" for "-200"): a tick just inside the end of the span has its label
    centred on it, and half of it would run past the last column.

    Where a label lands mirrors textual-plot's drawing (the scale runs from the plot canvas's
    second cell to its last but one, right of ``margin_left``; a label is centred on its tick,
    one cell right when it has an even length, and right-aligned on a tick at the very end),
    read at each drawing from the widget's public size and margin, so a resize is followed.
    tests/test_tui_chart.py fails when a release draws them elsewhere."""

    def __init__(self, plot: Widget) -> None:
        self._plot = plot
        self._step: float | None = None

    def get_ticks(self, min_: float, max_: float, max_ticks: int = 8) -> list[float]:
        ticks = super().get_ticks(min_, max_, max_ticks)
        self._step = ticks[1] - ticks[0] if len(ticks) >= 2 else None
        width, left = self._plot.size.width, int(self._plot.margin_left)
        cells = width - left - 2  # the scale's cells
        if cells <= 0 or max_ <= min_:
            return ticks
        kept = []
        for tick, label in zip(ticks, self.get_labels_for_ticks(ticks), strict=True):
            x = left + math.floor(1 + (tick - min_) / (max_ - min_) * cells)
            n = len(label)
            if tick == max_:
                start = x - (n - 1)
            else:
                start = x - (1 if tick == min_ else 0) - n // 2 + (1 - n % 2)
            if 0 <= start and start + n <= width:
                kept.append(tick)
        return kept

    def get_labels_for_ticks(self, ticks) -> list[str]:
        """The labels at the decimals of the full set's spacing, even with an end left out."""
        if self._step is None or len(ticks) >= 2:
            return super().get_labels_for_ticks(ticks)
        decimals = -min(0, math.floor(math.log10(self._step)))
        return [f"{t:.{decimals}f}" for t in ticks]
