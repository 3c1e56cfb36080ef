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


def default_train() -> Path:
    """The file of the default demo (opened by a bare ``wheelwork``)."""
    path = demo_path(DEFAULT_DEMO)
    assert path is not None, "the default demo train is missing from the package"
    return path
