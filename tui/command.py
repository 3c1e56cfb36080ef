"""``wheelwork crank``: open the interface on a train (the bundled demo when none is named).

Registered with the command line as an entry point (group ``wheelwork.commands``), so the
engine never imports the interface. Importing this module is cheap: Textual is imported only
when the command runs.
"""

from __future__ import annotations

import sys

from engine.commands import support
from engine.errors import UsageError

NAME = "crank"
HELP = "open the interactive bench: turn a train's crank and watch it against the true sky"
INTERACTIVE = True  # the interface handles its own signals

NO_TERMINAL = ("the interface needs a terminal; without one, run a command such as "
               "'wheelwork ratios {train}' or 'wheelwork drift {train} --years 10' "
               "(see wheelwork --help)")


def no_terminal(train: str | None) -> str:
    """The refusal without a terminal, suggesting commands on the train that was asked for
    (a demo by its name, a file as given, quoted for the shell when it needs it)."""
    import shlex
    from pathlib import Path

    from engine.demos import DEFAULT_DEMO, demo_path

    if not train:
        name = DEFAULT_DEMO
    elif demo_path(Path(train).stem) is not None and \
            Path(train).resolve() == Path(str(demo_path(Path(train).stem))).resolve():
        name = Path(train).stem
    else:
        name = shlex.quote(train)
    return NO_TERMINAL.format(train=name)


def add_arguments(parser) -> None:
    support.add_train(parser, optional=True)
    support.add_site(parser, "observer for topocentric positions: degrees (north +, east +) "
                     "and metres, e.g. --site -33.87,151.21 or '33.87S 151.21E'; default: a "
                     "built-in site, shown on screen")
    support.add_ephemeris(parser)


def has_terminal() -> bool:
    return sys.stdin.isatty() and sys.stdout.isatty()


def run(args, console) -> int:
    if not has_terminal():
        raise UsageError(no_terminal(args.train), args._prog)
    from .app import make_app  # Textual loads only now

    app = make_app(args.train, site=args.site, ephemeris=args.ephemeris)
    app.run()
    return int(app.return_code or 0)
