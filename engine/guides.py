"""The guides (``docs/*.md``): found where they are, in a checkout or inside an installed
package, so that a message can name a page the user has on the machine.

A wheel carries them as package data in ``engine/docs/`` (pyproject.toml maps the package
``engine.docs`` to the checkout's ``docs/``); a checkout or an editable install has them in
``docs/`` beside ``engine/``. A guide is named by its file's stem: ``train-format``.
``wheelwork guide`` lists them and prints one."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

#: the guide a newcomer is sent to from an error about a train file
TRAIN_FORMAT = "train-format"


def folder() -> Path | None:
    """The folder of the guides: inside the installed package when it has them, else the
    checkout's ``docs/``; None when neither is there."""
    inside = Path(str(resources.files(__package__) / "docs"))
    if inside.is_dir():
        return inside
    beside = Path(__file__).resolve().parents[1] / "docs"
    return beside if beside.is_dir() else None


def guide_names() -> list[str]:
    """The guides' names (file stems), sorted."""
    where = folder()
    return sorted(p.stem for p in where.glob("*.md")) if where else []


def guide_path(name: str) -> Path | None:
    """The file of guide ``name`` (``train-format`` or ``train-format.md``), or None."""
    stem = name[:-3] if name.endswith(".md") else name
    where = folder()
    if where is None or stem not in guide_names():
        return None
    return where / f"{stem}.md"


def title(name: str) -> str:
    """A guide's first heading, without its ``#`` marks and back-quotes."""
    path = guide_path(name)
    if path is None:
        return ""
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("#"):
            return line.lstrip("#").strip().replace("`", "")
    return ""


def pointer(name: str = TRAIN_FORMAT) -> str:
    """Words sending the reader to a guide: the command that prints it and the file where it
    is on this machine (``wheelwork guide train-format``, at ...)."""
    path = guide_path(name)
    return f"wheelwork guide {name}" + (f" (the file: {path})" if path else "")
