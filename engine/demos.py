"""The demo trains shipped inside the package (``engine/trains/*.toml``), found through
:mod:`importlib.resources` so they load the same from a checkout, an editable install or a
wheel. A demo is named by its file's stem: ``tide_office``."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

DEFAULT_DEMO = "tide_office"


def _folder():
    return resources.files(__package__) / "trains"


def demo_names() -> list[str]:
    """Names of the bundled demo trains, sorted."""
    return sorted(p.name[:-5] for p in _folder().iterdir() if p.name.endswith(".toml"))


def demo_path(name: str) -> Path | None:
    """The file of the demo called ``name`` (``tide_office`` or ``tide_office.toml``), or
    None when there is no such demo."""
    stem = name[:-5] if name.endswith(".toml") else name
    if stem not in demo_names():
        return None
    return Path(str(_folder() / f"{stem}.toml"))


def closest_demo(name: str) -> str | None:
    """The demo whose name is nearest to ``name`` (a mistyped ``tide_ofice``), or None when
    none is near."""
    from .errors import nearest

    stem = name[:-5] if name.endswith(".toml") else name
    # a demo's first word alone ('planet', 'tide'): the one demo it begins, when only one does
    begun = [d for d in demo_names() if stem and d.lower().startswith(stem.lower())]
    return begun[0] if len(begun) == 1 else nearest(stem, demo_names())


def demo_hint(name: str) -> str:
    """One line for a name that is neither a file nor a demo: the nearest demo, if any, and
    every demo's name."""
    near = closest_demo(name)
    return (f"did you mean {near}? " if near else "") + f"demos: {', '.join(demo_names())}"


def default_train() -> Path:
    """The file of the default demo (opened by a bare ``wheelwork``)."""
    path = demo_path(DEFAULT_DEMO)
    assert path is not None, "the default demo train is missing from the package"
    return path
