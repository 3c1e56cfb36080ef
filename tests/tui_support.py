"""Helpers shared by the interface tests (tests/test_tui*.py)."""

from __future__ import annotations

import asyncio
import functools
import io
import time

from rich.console import Console


def sync(fn):
    """Run an async Pilot test on a fresh event loop (no async plugin needed)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        asyncio.run(fn(*args, **kwargs))
    return wrapper


def text_of(widget) -> str:
    """A Static's content as plain text (tables rendered wide, no wrapping)."""
    console = Console(width=300, file=io.StringIO(), record=True)
    console.print(widget.content)
    return console.export_text()


async def wait_for(pilot, done, what: str = "", wait_s: float = 60.0) -> None:
    """Wait until ``done()`` holds, letting the app work between looks; fail saying ``what``
    did not happen. Waiting on a state, not for a fixed time, keeps a test right on a
    loaded machine (a long wait only when the machine is slow)."""
    end = time.monotonic() + wait_s
    while not done():
        assert time.monotonic() < end, f"still waiting after {wait_s:g} s: {what}"
        await pilot.pause(0.02)
