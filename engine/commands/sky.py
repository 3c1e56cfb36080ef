"""``wheelwork sky DATE``: the true Sun and Moon at one date, as a dial maker would read them."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

from ..errors import DateError, UsageError
from ..figures import fixed_to_sigma
from ..phases import phase_help
from . import support
from .support import SUN_CAUTION

if TYPE_CHECKING:  # the rest is imported when the command runs: --help loads no numpy
    from rich.console import Console


#: the calendars a date is read in: engine.dates.CALENDARS, written out so that --help loads
#: no numpy (tests/test_bad_options.py checks they agree)
CALENDARS = ("auto", "julian", "gregorian")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("date", nargs="?", default="now",
                        help="date (UT): 2025-03-20, '2025-03-20 09:30', -0100-03-01, "
                        "'44-03-15 BC', '15 March 44 BC', 'JD 2451545.0', today, yesterday or tomorrow (00:00 UT) "
                        "or now (the default: the computer's clock)")
    parser.add_argument("--calendar", default="auto", type=support.one_of("calendar", CALENDARS),
                        choices=CALENDARS,
                        help="calendar of DATE (auto: Julian before 1582-10-15, then Gregorian)")
    parser.add_argument("--stars", action="store_true",
                        help="longitudes on the fixed J2000 ecliptic instead of the equinox of date")
    support.add_site(parser)
    support.add_ephemeris(parser, train=False)
    parser.add_argument("--json", action="store_true", help="print JSON only")
    parser.epilog = ("phase names, by the Moon's elongation from the Sun (new, the quarters "
                     "and full within about a day of the exact phase): " + phase_help())


def _dms(deg: float) -> str:
    sign = "-" if deg < 0 else ""
    a = round(abs(deg) * 3600.0, 1)
    d, rest = divmod(a, 3600.0)
    m, s = divmod(rest, 60.0)
    return f"{sign}{int(d)}°{int(m):02d}′{s:04.1f}″"


def _sigma(seconds: float) -> str:
    """One standard error of ΔT, to a sensible number of figures."""
    if seconds >= 600:
        return f"{seconds / 60:.0f} min"
    return f"{seconds:.0f} s" if seconds >= 10 else f"{support.figure(seconds, 2)} s"


def run(args: argparse.Namespace, console: Console) -> int:
    from rich import box
    from rich.markup import escape

    from ..dates import calendar_date, format_jd, parse_when
    from ..sites import parse_site
    from ..sky import PLANETS

    try:
        jd = parse_when(args.date, calendar=args.calendar)
    except DateError as exc:  # read after --calendar is known, so not an argparse type
        raise UsageError(f"argument date: {exc}") from None
    site = parse_site(args.site) if args.site else None  # checked by the option's type
    from ..mechanism import sky_reaching

    # none named and the bundled sky falls short: an installed longer one, said so
    sky, note = sky_reaching(None, args.ephemeris, jd, jd, what="the date lies outside",
                             use="read from")
    if note is not None:
        from rich.console import Console

        Console(stderr=True, highlight=False).print(f"wheelwork: note: {note}", markup=False)
    frame = "stars" if args.stars else "equinox"
    st = sky.at(jd, frame=frame, site=site, planets=PLANETS + ("earth",))
    cal = calendar_date(jd, args.calendar)[-1]
    v = {k: float(getattr(st, k)) for k in (
        "delta_t_s", "delta_t_sigma_s", "sun_lon_deg", "sun_lat_deg", "moon_lon_deg",
        "moon_lat_deg", "elongation_deg", "illuminated", "moon_km", "node_deg", "perigee_deg",
        "moon_mean_anomaly_deg")}
    for name in PLANETS:
        v[f"{name}_lon_deg"] = float(st.planet_lon_deg[name])
    for name in PLANETS + ("earth",):
        v[f"{name}_helio_lon_deg"] = float(st.planet_helio_lon_deg[name])
    phase = st.phase_names()[0]
    if args.json:
        support.print_json(console, {
            "date": format_jd(jd, args.calendar, seconds=True), "jd_ut": jd, "calendar": cal,
            "frame": frame, "site": None if site is None else
            {"lat_deg": site.lat_deg, "lon_deg": site.lon_deg, "height_m": site.height_m},
            "ephemeris": sky.name, "span": sky.span_text, "phase": phase, **v,
            "caution": SUN_CAUTION,
        })
        return 0
    where = ("the Earth's centre" if site is None else
             f"{abs(site.lat_deg):.4f}°{'N' if site.lat_deg >= 0 else 'S'}, "
             f"{abs(site.lon_deg):.4f}°{'E' if site.lon_deg >= 0 else 'W'}, {site.height_m:g} m")
    frame_text = "fixed J2000 ecliptic (stars)" if args.stars else "true ecliptic and equinox of date"
    console.print(f"[bold]{format_jd(jd, args.calendar, seconds=True)}[/]  JD {jd:.6f} UT")
    # ΔT to the decimals its σ knows, a tenth of a second at most
    console.print(f"ΔT {fixed_to_sigma(v['delta_t_s'], v['delta_t_sigma_s'], 1)} s ± "
                  f"{_sigma(v['delta_t_sigma_s'])} · "
                  f"{escape(sky.name)} ({sky.span_text}) · {frame_text} · seen from {where}")
    table = support.plain_table(header_style="bold", box=box.SIMPLE_HEAD, pad_edge=False)
    for col, just in (("", "left"), ("degrees", "right"), ("", "right")):
        table.add_column(col, justify=just, no_wrap=True)
    rows = (
        ("Sun longitude", v["sun_lon_deg"], _dms(v["sun_lon_deg"])),
        ("Sun latitude", v["sun_lat_deg"], _dms(v["sun_lat_deg"])),
        ("Moon longitude", v["moon_lon_deg"], _dms(v["moon_lon_deg"])),
        ("Moon latitude", v["moon_lat_deg"], _dms(v["moon_lat_deg"])),
        ("elongation (phase)", v["elongation_deg"], phase),
        ("mean node", v["node_deg"], ""),
        ("mean perigee", v["perigee_deg"], ""),
        ("Moon's mean anomaly", v["moon_mean_anomaly_deg"], ""),
    )
    for label, deg, note in rows:
        table.add_row(label, f"{deg:.5f}", note)
    support.print_table(console, table)
    console.print(f"Moon {v['illuminated'] * 100:.1f}% lit, {v['moon_km']:,.0f} km away.")
    planets = support.plain_table(header_style="bold", box=box.SIMPLE_HEAD, pad_edge=False,
                    title="planets, ecliptic longitude in degrees", title_justify="left")
    planets.add_column("", justify="left", no_wrap=True)
    planets.add_column("from the Earth (apparent)", justify="right")
    planets.add_column("from the Sun (orrery arm)", justify="right")
    for name in PLANETS + ("earth",):
        geo = v.get(f"{name}_lon_deg")
        planets.add_row(name.capitalize(), "" if geo is None else f"{geo:.5f}",
                        f"{v[f'{name}_helio_lon_deg']:.5f}")
    support.print_table(console, planets)
    if v["delta_t_sigma_s"] >= 60:
        console.print(f"ΔT is uncertain by ± {_sigma(v['delta_t_sigma_s'])} (one standard error) "
                      f"at this date: the Moon moves about "
                      f"{support.figure(v['delta_t_sigma_s'] / 3600 * 0.55, 2)}° in that time, the Sun "
                      f"{support.figure(v['delta_t_sigma_s'] / 3600 * 0.041 * 60, 2)}′.")
    console.print(f"[yellow]{SUN_CAUTION}[/]")
    return 0
