"""Helpers shared by the interface tests (tests/test_tui*.py)."""

from __future__ import annotations

import asyncio
import functools
import io

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
