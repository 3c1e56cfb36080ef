"""``wheelwork guide [NAME]``: the guides that come with wheelwork (the train file's format,
each command's page), listed, or one of them printed as its Markdown text."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from rich.console import Console


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("name", nargs="?", metavar="NAME",
                        help="the guide to print, e.g. train-format; none: list them")
    parser.add_argument("--path", action="store_true",
                        help="print only where the guide's file is (to open it in an editor "
                             "or a Markdown viewer)")


def run(args: argparse.Namespace, console: Console) -> int:
    from ..errors import UsageError, did_you_mean
    from ..guides import folder, guide_names, guide_path, title

    names = guide_names()
    if not names:  # an install made without them (package data left out)
        from ..errors import WheelworkError

        raise WheelworkError("the guides are not installed with this copy of wheelwork; "
                             "install it again with pip (they are package data)")
    if args.name is None:
        if args.path:
            console.print(str(folder()), markup=False, highlight=False, soft_wrap=True)
            return 0
        width = max(map(len, names))
        for name in names:
            console.print(f"{name:<{width}}  {title(name)}", markup=False, highlight=False,
                          soft_wrap=True)
        console.print(f"\nwheelwork guide NAME prints one; they are in {folder()}",
                      markup=False, highlight=False, soft_wrap=True)
        return 0
    path = guide_path(args.name.strip())
    if path is None:
        raise UsageError(f"argument NAME: no guide {args.name!r}"
                         f"{did_you_mean(args.name.strip(), names)} (guides: "
                         f"{', '.join(names)})", getattr(args, "_prog", None))
    if args.path:
        console.print(str(path), markup=False, highlight=False, soft_wrap=True)
        return 0
    console.print(path.read_text(encoding="utf-8").rstrip("\n"), markup=False,
                  highlight=False, soft_wrap=True, emoji=False)
    return 0
