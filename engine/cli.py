"""Command line: ``wheelwork COMMAND ...``; ``main(argv) -> int``, never ``SystemExit``.

Exit codes: 0 done; 1 a fault found while working (a train file, a span outside the
ephemeris, an output file that may not be written); 2 a usage error (an option value that
cannot be read, is out of range or does not fit the others); 130 Ctrl-C; 128 + N for signal N
(SIGTERM 143, SIGHUP 129); a closed output pipe is no error (0).

Commands are listed in :data:`COMMANDS` (name: one-line help) and live in
``engine/commands/NAME.py``, imported only when that command runs: ``wheelwork --help`` imports
none of them. A module provides ``add_arguments(parser)`` and ``run(args, console) -> int``
and uses :mod:`engine.commands.support` for what commands share. Commands from other packages
(the interface's ``crank``) are registered as entry points in the group
``wheelwork.commands``: the engine never imports them by name.
"""

from __future__ import annotations

import importlib
import os
import signal
import sys

# name: one-line help; the order is the order shown in --help (after the interface's commands).
COMMANDS = {
    "ratios": "exact ratio, realised period and period error of every pointer of a train",
    "drift": "how far a train's pointers wander from the true Sun and Moon over years or "
             "centuries",
    "search": "tooth counts whose ratio realises a period or ratio (exhaustive within bounds)",
    "check": "whether a train can be built: centre distances, positions, overlaps, arbor "
             "speeds and loads, tooth-count rules of thumb, pin-and-slot slots",
    "eclipses": "a train's eclipse predictions (node hand or eclipse-cycle dial) against the "
                "real solar and lunar eclipses: hits, misses, false alarms, first failure",
    "sky": "true Sun, Moon and planets at a date: longitudes, phase, distance, node and "
           "perigee, planets seen from the Earth and from the Sun",
    "cut": "cutting files (SVG and DXF, mm) for every wheel and pinion with a module, a plate "
           "drawing with each arbor's hole, and one sheet with everything",
    "play": "what workshop tolerances do to each pointer: dead play, once-per-turn errors of "
            "eccentric wheels, a Monte Carlo of hand-made trains beside the effect modelled",
    "guide": "the guides that come with wheelwork (the train file's format, each command's "
             "page): listed, or one printed",
}
ENTRY_POINTS = "wheelwork.commands"
DEFAULT_COMMAND = "crank"  # what a bare ``wheelwork`` runs (the interface, on the demo train)
STOP_SIGNALS = tuple(getattr(signal, n) for n in ("SIGTERM", "SIGHUP") if hasattr(signal, n))


def _plugins() -> dict:
    """Commands other packages register (entry points), name → entry point."""
    from importlib.metadata import entry_points

    return {ep.name: ep for ep in entry_points(group=ENTRY_POINTS)}


def _load(name: str, plugins: dict | None):
    """(module, help) of a command, importing only that command's module."""
    if name in COMMANDS:
        return importlib.import_module(f".commands.{name}", __package__), COMMANDS[name]
    plugins = _plugins() if plugins is None else plugins
    mod = plugins[name].load()
    return mod, mod.HELP


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("wheelwork")
    except PackageNotFoundError:
        return "unknown (not installed)"


def _top_parser(plugins: dict):
    import argparse

    from .commands.support import Parser
    from .demos import DEFAULT_DEMO, demo_names

    demos = ", ".join(demo_names())
    parser = Parser(
        prog="wheelwork", formatter_class=argparse.RawDescriptionHelpFormatter,
        description="Test a geared astronomical train against the real sky. With no command,\n"
        f"opens the interface on the demo train {DEFAULT_DEMO} (it needs a terminal).",
        epilog=f"demo trains (give the name instead of a file): {demos}\n"
        "e.g.  wheelwork ratios tide_office\n"
        "'wheelwork COMMAND --help' describes each command; 'wheelwork guide' lists the\n"
        "guides (the train file's format: wheelwork guide train-format).")
    parser.add_argument("--version", action="version", version=f"wheelwork {_version()}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", title="commands")
    for name, ep in plugins.items():
        try:
            helptext = ep.load().HELP
        except Exception:  # noqa: BLE001 - a broken plugin must not break --help
            continue
        sub.add_parser(name, help=helptext, add_help=False)
    for name, helptext in COMMANDS.items():
        sub.add_parser(name, help=helptext, add_help=False)
    return parser


def command_parser(name: str, plugins: dict | None = None):
    """(module, parser) of one command, ready to parse its arguments."""
    from .commands.support import Parser

    mod, helptext = _load(name, plugins)
    parser = Parser(prog=f"wheelwork {name}", description=helptext)
    mod.add_arguments(parser)
    parser.set_defaults(_prog=parser.prog)
    return mod, parser


def _run(argv: list[str], console_factory) -> int:
    from .errors import UsageError

    plugins = None
    if not argv:
        argv = [DEFAULT_COMMAND]
    name = argv[0]
    if name.startswith("-"):  # --help, --version, or an unknown option
        plugins = _plugins()
        _top_parser(plugins).parse_args(argv)
        _top_parser(plugins).print_help()  # no command given after the options
        return 2
    if name not in COMMANDS:
        plugins = _plugins()
        if name == DEFAULT_COMMAND and name not in plugins:
            from .errors import WheelworkError

            raise WheelworkError(
                "the interface's command is not registered in this installation; install "
                "wheelwork again (pip install . or pip install -e .)")
        if name not in plugins:
            raise UsageError(_unknown_command(name, [*plugins, *COMMANDS]), "wheelwork")
    mod, parser = command_parser(name, plugins)
    args = parser.parse_args(argv[1:])
    if not getattr(mod, "INTERACTIVE", False):
        _catch_stop_signals()
    try:
        return int(mod.run(args, console_factory()) or 0)
    except UsageError as exc:  # found by the command: still under the command's name
        exc.prog = exc.prog or parser.prog
        raise


def _unknown_command(name: str, known: list[str]) -> str:
    """One line for a first word that is no command: the nearest command, or, for a train
    (a demo's name, mistyped or not, or a file), how to open it."""
    from pathlib import Path

    from .demos import closest_demo, demo_names, demo_path
    from .errors import nearest

    text = f"unknown command {name!r}"
    near = nearest(name, known)
    if near:
        return f"{text}; did you mean {near!r}? (commands: {', '.join(known)})"
    if demo_path(name) or Path(name).is_file():
        return f"{text}; to open this train: wheelwork crank {name}"
    train = closest_demo(name)
    if train is not None:
        return (f"{text}, nor a demo's name: did you mean the demo {train} (wheelwork crank "
                f"{train})? demos: {', '.join(demo_names())}; commands: {', '.join(known)}")
    return f"{text} (choose from {', '.join(known)})"


def _catch_stop_signals() -> None:
    if not _main_thread():
        return
    for sig in STOP_SIGNALS:
        if signal.getsignal(sig) is signal.SIG_IGN:  # e.g. nohup: leave it ignored
            continue
        signal.signal(sig, _on_stop_signal)


def _on_stop_signal(signum, frame):
    from .errors import Terminated

    raise Terminated(signum)


def _main_thread() -> bool:
    import threading

    return threading.current_thread() is threading.main_thread()


def main(argv: list[str] | None = None) -> int:
    """Run ``wheelwork`` with ``argv`` (default: the process's arguments); the exit code."""
    argv = sys.argv[1:] if argv is None else list(argv)
    saved = {s: signal.getsignal(s) for s in STOP_SIGNALS} if _main_thread() else {}
    try:
        return _guarded(argv)
    finally:
        for sig, handler in saved.items():
            if handler is not None:
                signal.signal(sig, handler)


def _guarded(argv: list[str]) -> int:
    from .commands import support
    from .errors import ParserExit, Terminated, UsageError, WheelworkError

    def console():
        return _console()

    try:
        try:
            return _run(argv, console)
        finally:
            support.remove_part_files()
    except ParserExit as exc:
        return exc.status
    except UsageError as exc:
        _say(f"{exc.prog or 'wheelwork'}: usage error: {exc}")
        return 2
    except WheelworkError as exc:
        _say(f"wheelwork: error: {exc}")
        return 1
    except KeyboardInterrupt:
        _say("wheelwork: stopped")
        return 130
    except Terminated as exc:
        _say(f"wheelwork: stopped by {signal.Signals(exc.signum).name}")
        return 128 + exc.signum
    except BrokenPipeError:  # output piped into e.g. `head`: stop quietly
        _silence_stdout()
        return 0
    except SystemExit as exc:  # from a library: still an exit code, not an exception
        return exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)


def _say(line: str) -> None:
    """One line on stderr, exactly as written (no markup); silent if stderr is gone."""
    try:
        sys.stderr.write(line + "\n")
        sys.stderr.flush()
    except (OSError, ValueError):
        pass


def _console():
    from rich.console import Console

    class _Console(Console):
        def on_broken_pipe(self) -> None:  # rich's own handler exits 1: a closed pipe is no error
            _silence_stdout()
            raise BrokenPipeError

    return _Console(highlight=False)


def _silence_stdout() -> None:
    """After a broken pipe, point stdout at /dev/null so the exit flush cannot fail."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass


if __name__ == "__main__":  # ``python -m engine.cli ...`` runs the same as ``python -m engine``
    sys.exit(main())
