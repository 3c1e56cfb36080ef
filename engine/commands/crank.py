"""``wheelwork crank``: open the interface on a train (the bundled demo when none is named)."""

from __future__ import annotations

NAME = "crank"
HELP = "open the interactive bench: turn a train's crank and watch it against the true sky"


def add_arguments(parser) -> None:
    parser.set_defaults(_crank_parser=parser)
    parser.add_argument("train", nargs="?", default=None,
                        help="train file (TOML); default: the bundled tide office dial")
    parser.add_argument("--site", metavar="LAT,LON[,H]", default=None,
                        help="observer for topocentric positions (degrees, east +, metres); "
                             "default: a built-in site, shown on screen")
    parser.add_argument("--ephemeris", metavar="FILE|de440", default=None,
                        help="JPL ephemeris: an SPK .bsp file, or de440 (default DE421)")


def run(args, console) -> int:
    if args.site:  # an impossible site is a value out of range: a usage error, as elsewhere
        from ..errors import WheelworkError
        from ..sky import Site

        try:
            Site.parse(args.site)
        except WheelworkError as exc:
            args._crank_parser.error(str(exc))
    from tui.app import make_app  # the engine never imports the interface at module level

    app = make_app(args.train, site=args.site, ephemeris=args.ephemeris)
    app.run()
    return int(app.return_code or 0)
