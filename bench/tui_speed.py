"""Interface speed: keystroke to repainted screen, and continuous cranking frame rate.

Drives the real app headless (Textual's ``run_test``) at 160×50 and 80×24 on the default demo
train and prints measured figures beside the targets:

* keystroke latency — from posting a key event until the first composed screen update after
  its action ran is handed to the (headless) driver: action, engine read, widgets drawn,
  screen composed; 95th percentile, target ≤ 50 ms;
* continuous cranking — frames per second reached while running at the fastest speed, the
  longest gap between frames, and whether the crank fell behind (a backlog would show as
  frames arriving in bursts or turns that do not match frames × turns per frame); target ≥ 20;
* the parts of one frame: the session read (one ``sky.at`` on one date) and each widget.

Run: ``python bench/tui_speed.py`` (takes about half a minute).
"""

from __future__ import annotations

import asyncio
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from textual import events  # noqa: E402

from tui.app import make_app  # noqa: E402
from tui.screens import FPS, BenchScreen  # noqa: E402
from tui.session import SPEEDS  # noqa: E402
from tui.widgets import PhaseDiscs, Readings, SkyDial, Status, TrainView  # noqa: E402

# keys whose moves cancel out, so a long run stays inside the ephemeris
KEYS = ("right", "left", "up", "down", "pageup", "pagedown", "t", "o", "right_square_bracket",
        "left_square_bracket", "plus", "minus")
CHARS = {"t": "t", "o": "o", "right_square_bracket": "]", "left_square_bracket": "[",
         "plus": "+", "minus": "-"}


def pct(values, q):
    values = sorted(v for v in values if v == v)
    return values[min(int(round(q / 100 * (len(values) - 1))), len(values) - 1)]


def _watch_paints(app):
    """Record the time at which each composed screen update is handed to the driver."""
    paints = []
    original = app._display

    def display(screen, renderable):
        original(screen, renderable)
        paints.append(time.perf_counter())

    app._display = display
    return paints


async def _latency(app, paints, key):
    """Post one key event; wait for the first screen update after the action has run."""
    ran = []
    screen = app.screen
    original = screen.refresh_view

    def counted():
        original()
        ran.append(time.perf_counter())

    screen.refresh_view = counted
    t0 = time.perf_counter()
    app.post_message(events.Key(key, CHARS.get(key)))
    deadline = t0 + 2.0
    while time.perf_counter() < deadline:
        await asyncio.sleep(0.0005)
        if ran and any(p >= ran[0] for p in paints):
            break
    screen.refresh_view = original
    done = next((p for p in paints if ran and p >= ran[0]), float("nan"))
    return (done - t0) * 1000


async def keystrokes(size, n=150):
    app = make_app()
    times = []
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        paints = _watch_paints(app)
        for i in range(n):
            times.append(await _latency(app, paints, KEYS[i % len(KEYS)]))
            await asyncio.sleep(0.01)
    return times


async def running(size, seconds=4.0):
    app = make_app()
    stamps = []
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        paints = _watch_paints(app)
        screen = app.screen
        assert isinstance(screen, BenchScreen)
        original = screen.refresh_view

        def counted():
            original()
            stamps.append(time.perf_counter())

        screen.refresh_view = counted
        app.session.speed_index = len(SPEEDS) - 1
        # start near the beginning of the ephemeris: the fastest speed covers 8 years a second
        app.session.go_to(app.session.sky.span_jd[0] + 30)
        await pilot.press("space")
        await asyncio.sleep(0.5)  # settle
        start_turns = float(app.session.turns.to_float())
        t_start = time.perf_counter()
        n0 = len(stamps)
        await asyncio.sleep(seconds)
        t_end = time.perf_counter()
        turns = float(app.session.turns.to_float()) - start_turns
        frames = len(stamps) - n0
        screen.refresh_view = original
        # a key press while running: still answered promptly?
        key_ms = await _latency(app, paints, "t")
        await pilot.press("space")
    window = [t for t in stamps if t_start <= t <= t_end]
    shown = [t for t in paints if t_start <= t <= t_end]
    gaps = [(b - a) * 1000 for a, b in zip(window, window[1:], strict=False)]
    fps = len(window) / (t_end - t_start)
    paint_fps = len(shown) / (t_end - t_start)
    ticks = turns / (SPEEDS[-1] / FPS)
    return fps, paint_fps, gaps, key_ms, ticks, frames


async def parts(size, n=200):
    app = make_app()
    out = {}
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        s = app.session
        screen = app.screen
        t0 = time.perf_counter()
        for _ in range(n):
            s.crank(1)
            now = s.now()
        out["session read (sky.at + readout)"] = (time.perf_counter() - t0) / n * 1000
        for cls in (SkyDial, TrainView, PhaseDiscs, Readings):
            w = screen.query_one(cls)
            t0 = time.perf_counter()
            for _ in range(n):
                w.show(now)
                if cls is PhaseDiscs:
                    w.render()
            out[cls.__name__] = (time.perf_counter() - t0) / n * 1000
        w = screen.query_one(Status)
        t0 = time.perf_counter()
        for _ in range(n):
            w.show(now, False)
        out["Status"] = (time.perf_counter() - t0) / n * 1000
    return out


def main():
    print("wheelwork interface speed (headless, default demo train)\n")
    for size in ((160, 50), (80, 24)):
        times = asyncio.run(keystrokes(size))
        missed = sum(1 for t in times if t != t)
        times = [t for t in times if t == t]
        p95 = pct(times, 95)
        print(f"{size[0]}x{size[1]}  keystroke → repainted: median {statistics.median(times):5.1f}"
              f" ms, p95 {p95:5.1f} ms, max {max(times):5.1f} ms   target p95 ≤ 50 ms  "
              f"{'ok' if p95 <= 50 else 'SLOW'}" + (f"  ({missed} keys without a repaint)" if missed else ""))
    for size in ((160, 50), (80, 24)):
        fps, paint_fps, gaps, key_ms, ticks, frames = asyncio.run(running(size))
        backlog = abs(ticks - frames) > 2  # turns moved ≠ frames drawn × turns per frame
        print(f"{size[0]}x{size[1]}  running at {SPEEDS[-1]:g} turns/s: {fps:5.1f} frames/s drawn, "
              f"{paint_fps:5.1f} screen updates/s (timer {FPS}/s), longest gap {max(gaps):5.1f} ms,"
              f" p95 gap {pct(gaps, 95):5.1f} ms, key while running {key_ms:5.1f} ms, "
              f"backlog: {'YES' if backlog else 'none'} ({frames} frames, {ticks:.0f} frames of "
              f"turns)   target ≥ 20 frames/s  {'ok' if fps >= 20 and not backlog else 'SLOW'}")
    print("\nparts of one frame at 160x50 (ms; widgets: drawing into their buffers, before the "
          "screen is composed):")
    for name, ms in asyncio.run(parts((160, 50))).items():
        print(f"  {name:<34} {ms:6.2f}")


if __name__ == "__main__":
    main()
