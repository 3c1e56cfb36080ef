"""Command line: ``wheelwork COMMAND ...``; ``main(argv) -> int`` (0 ok, 1 input error, 2 usage).

Each subcommand lives in its own module under :mod:`engine.commands` and provides ``NAME``,
``HELP``, ``add_arguments(parser)`` and ``run(args, console) -> int``. Errors meant for the user
are :class:`engine.errors.WheelworkError`; they are printed as one line, never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import re
import sys

from rich.console import Console

from .errors import WheelworkError

# Order is the order shown in --help.
COMMANDS = ("crank", "ratios", "drift", "search", "check", "sky")


# Besides negative numbers, dates with a negative (astronomical) year such as -0100-03-01 are
# values, not options: argparse consults this pattern to tell them apart.
_NEGATIVE_VALUE = re.compile(r"^-\d+$|^-\d*\.\d+$|^-\d+-\d")


class _Parser(argparse.ArgumentParser):
    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._negative_number_matcher = _NEGATIVE_VALUE

    def error(self, message: str):  # usage errors: one line, exit 2
        self.exit(2, f"{self.prog}: usage error: {message}\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="wheelwork",
        description="Test a geared astronomical train against the real sky. "
        "With no command, opens the interface on the bundled demo train.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        try:
            mod = importlib.import_module(f".commands.{name}", __package__)
        except ModuleNotFoundError as exc:  # a command still being written is simply absent
            if exc.name == f"{__package__}.commands.{name}":
                continue
            raise
        p = sub.add_parser(mod.NAME, help=mod.HELP, description=mod.HELP)
        mod.add_arguments(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else list(argv)
    try:
        parser = build_parser()  # imports the command modules: a Ctrl-C may land here
    except KeyboardInterrupt:
        print("wheelwork: stopped", file=sys.stderr)
        return 130
    if not argv:
        argv = ["crank"]
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    console = _Console(highlight=False)
    err = Console(stderr=True, highlight=False, soft_wrap=True)
    try:
        return int(args._run(args, console) or 0)
    except WheelworkError as exc:
        err.print(f"wheelwork: error: {exc}", markup=False)
        return 1
    except KeyboardInterrupt:
        err.print("wheelwork: stopped", markup=False)
        return 130
    except BrokenPipeError:  # output piped into e.g. `head`: stop quietly
        _silence_stdout()
        return 0


class _Console(Console):
    def on_broken_pipe(self) -> None:  # rich's own handler exits 1; a closed pipe is no error
        _silence_stdout()
        raise SystemExit(0)


def _silence_stdout() -> None:
    """After a broken pipe, point stdout at /dev/null so the exit flush cannot fail."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass
