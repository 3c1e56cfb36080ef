"""Dates against published Julian Day examples and the calendar rules."""

from __future__ import annotations

from datetime import UTC

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from engine.dates import (
    calendar_date,
    format_day,
    format_jd,
    jd_from_calendar,
    parse_date,
    parse_step,
)
from engine.errors import DateError, DriftError

SECOND_DAYS = 1 / 86400


# Meeus, Astronomical Algorithms 2nd ed., ch. 7, examples 7.a, 7.b and the table that
# follows them (from memory).
@pytest.mark.parametrize("year, month, day, calendar, jd", [
    (1957, 10, 4.81, "auto", 2436116.31),     # example 7.a, Sputnik 1 launch
    (333, 1, 27.5, "auto", 1842713.0),        # example 7.b, Julian calendar
    (2000, 1, 1.5, "auto", 2451545.0),
    (1582, 10, 15.0, "auto", 2299160.5),      # first Gregorian day
    (1582, 10, 4.0, "auto", 2299159.5),       # last Julian day
    (-1000, 7, 12.5, "auto", 1356001.0),      # BC date, Julian calendar
    (-1000, 2, 29.0, "auto", 1355866.5),      # Julian leap day in 1001 BC
    (-4712, 1, 1.5, "auto", 0.0),             # the Julian Day epoch
    (1600, 12, 31.0, "auto", 2305812.5),
    (1988, 6, 19.5, "auto", 2447332.0),
])
def test_meeus_julian_days(year, month, day, calendar, jd):
    assert jd_from_calendar(year, month, day, calendar) == pytest.approx(jd, abs=1e-9)
    y, m, d, h, mi, s, _ = calendar_date(jd, calendar)
    assert (y, m) == (year, month)
    assert d + (h * 3600 + mi * 60 + s) / 86400 == pytest.approx(day, abs=1e-6)


def test_vectorised_matches_scalar():
    years = np.array([1957, 333, -1000, 2000])
    months = np.array([10, 1, 7, 1])
    days = np.array([4.81, 27.5, 12.5, 1.5])
    got = jd_from_calendar(years, months, days)
    want = [jd_from_calendar(int(y), int(m), float(d)) for y, m, d in
            zip(years, months, days, strict=True)]
    np.testing.assert_array_equal(got, want)


@pytest.mark.parametrize("text, jd", [
    ("2000-01-01 12:00", 2451545.0),
    ("2000-01-01T12:00:00Z", 2451545.0),
    ("2000-01-01 12:00 UT", 2451545.0),
    ("2000-01-01T12:00:00.000 UTC", 2451545.0),
    ("1957-10-04 19:26:24", 2436116.31),
    ("4 Oct 1957 19:26:24 UT", 2436116.31),
    ("333-01-27 12:00", 1842713.0),
    ("-1000-07-12 12:00", 1356001.0),
    ("1001-07-12 12:00 BC", 1356001.0),       # 1001 BC = astronomical -1000
    ("12 July 1001 BC 12:00", 1356001.0),
    ("JD 2451545.0", 2451545.0),
    ("jd2299160.5", 2299160.5),
    ("1582-10-15", 2299160.5),
    ("1582-10-04", 2299159.5),
    ("1066-10-14 AD", jd_from_calendar(1066, 10, 14, "julian")),
])
def test_parse_forms(text, jd):
    assert parse_date(text) == pytest.approx(jd, abs=1e-3 * SECOND_DAYS)


def test_bc_numbering():
    # 1 BC is astronomical year 0; 101 BC is -100 (common practice, no source)
    assert parse_date("-0100-03-01") == parse_date("101-03-01 BC") == parse_date("1 March 101 BC")
    assert parse_date("0000-06-01") == parse_date("1-06-01 BC")
    assert format_jd(parse_date("-0100-03-01 12:00")) == "-0100-03-01 12:00 UT (Julian) = 101 BC"


def test_calendar_choice():
    # 1582-10-05 Julian is 1582-10-15 Gregorian (the reform dropped ten days)
    assert parse_date("1582-10-05", calendar="julian") == parse_date("1582-10-15")
    assert parse_date("1582-10-10", calendar="gregorian") == parse_date("1582-10-10",
                                                                        calendar="gregorian")
    # 1700 is a leap year only in the Julian calendar
    assert parse_date("1700-02-29", calendar="julian") > 0
    with pytest.raises(DateError, match="day 29 is not in 1-28"):
        parse_date("1700-02-29")


def test_format_shows_calendar():
    assert format_jd(2460754.8958333) == "2025-03-20 09:30 UT (Gregorian)"
    assert format_jd(1842713.0) == "0333-01-27 12:00 UT (Julian)"
    assert format_jd(1842713.0, "gregorian").endswith("(Gregorian)")
    assert format_jd(2451545.0, seconds=True) == "2000-01-01 12:00:00 UT (Gregorian)"
    assert format_jd(2451544.99999999) == "2000-01-01 12:00 UT (Gregorian)"  # rounds up


@pytest.mark.parametrize("text, fragment", [
    ("hello", "not a date form"),
    ("", "empty"),
    ("2025-13-01", "month 13"),
    ("2025-02-30", "day 30"),
    ("2025-03-20 24:00", "not a time of day"),
    ("1582-10-10", "1582-10-05..14 do not exist"),
    ("0-01-01 BC", "no year 0"),
    ("-44-03-15 BC", "either a signed year or BC/AD"),
    ("15 Smarch 44 BC", "unknown month name"),
    ("JD nan", "not a date form"),
])
def test_malformed_dates(text, fragment):
    with pytest.raises(DateError) as err:
        parse_date(text)
    msg = str(err.value)
    assert fragment in msg and repr(text) in msg and "JD 2451545.0" in msg
    assert "\n" not in msg


def test_unknown_calendar():
    with pytest.raises(DateError, match="unknown calendar"):
        parse_date("2025-01-01", calendar="mayan")


@given(st.floats(min_value=-2e6, max_value=6e6, allow_nan=False))
def test_round_trip(jd):
    for cal in ("auto", "julian", "gregorian"):
        y, m, d, h, mi, s, name = calendar_date(jd, cal)
        back = jd_from_calendar(y, m, d + (h * 3600 + mi * 60 + s) / 86400, name.lower())
        assert back == pytest.approx(jd, abs=2e-3 * SECOND_DAYS)


# --- steps (common practice, no source: a Julian year is 365.25 days) ---

@pytest.mark.parametrize("text, days", [("6h", 0.25), ("1d", 1.0), ("30m", 30 / 1440),
                                        ("2.5d", 2.5), ("1y", 365.25), ("90s", 90 / 86400),
                                        ("2w", 14.0), ("3", 3.0), (" 12 H ", 0.5)])
def test_parse_step(text, days):
    assert parse_step(text) == pytest.approx(days, rel=1e-15)


@pytest.mark.parametrize("bad", ["", "h", "6x", "-1d", "0d", "1e400d", "abc", "0.1s"])
def test_parse_step_rejects(bad):
    with pytest.raises(DriftError, match="step"):
        parse_step(bad)


@pytest.mark.parametrize("bad, words", [
    ("1M", "'M' could be minutes or months"), ("1mo", "a month has no fixed length"),
    ("2 months", "a month has no fixed length"), ("1 Month", "a month has no fixed length"),
])
def test_a_month_step_is_refused_not_read_as_minutes(bad, words):
    """'1M' was read as one minute (the unit lower-cased), so `drift --step 1M` ran 525,961
    dates a year and the bench's + turned on a minute while its readings said 'step 1M'; a
    month has no fixed length, so it is refused with what to write, on both paths."""
    from engine.dates import parse_crank_step

    for parse in (parse_step, lambda t: parse_crank_step(t, 1)):
        with pytest.raises(DriftError) as err:
            parse(bad)
        assert words in str(err.value) and "30m" in str(err.value) and "30d" in str(err.value)
    assert parse_step("1m") == parse_step("1min") == 1 / 1440  # minutes, lower case


@pytest.mark.parametrize("days, text", [
    (6.0, "6 days"), (1.0, "1 day"), (2.5, "2.5 days"), (365.25, "365.25 days"), (0.25, "6 hours"),
    (1 / 24, "1 hour"), (1 / 1440, "1 minute"), (90 / 86400, "1.5 minutes"),
    (30 / 86400, "30 seconds"), (36525000.0, "36,525,000 days"),
])
def test_step_text_names_the_unit(days, text):
    """What drift's report says of its step: the unit always named (it printed the option as
    typed, 'every 6' for --step 6, which is six days)."""
    from engine.dates import step_text

    assert step_text(days) == text


@pytest.mark.parametrize("text", ["JD 1e308", "JD -1e308", "JD 4e8", "JD -4e8", "JD 1e20"])
def test_dates_beyond_the_range_are_refused_in_one_line(text):
    with pytest.raises(DateError) as info:
        parse_date(text)
    msg = str(info.value)
    assert "outside the dates wheelwork handles" in msg and "\n" not in msg
    assert "years -999999 to 999999" in msg


def test_the_ends_of_the_range_are_readable_and_printable():
    from engine.dates import JD_MAX, JD_MIN

    assert parse_date("-999999-01-01") == JD_MIN
    assert format_jd(JD_MIN).startswith("-999999-01-01 00:00 UT (Julian)")
    last = parse_date("999999-12-31 23:59")
    assert last < JD_MAX and format_jd(last).startswith("999999-12-31 23:59")
    for jd in (1e308, -1e308, JD_MAX, JD_MIN - 1):
        with pytest.raises(DateError, match="outside the dates wheelwork handles"):
            format_jd(jd)


def test_gregorian_gap_says_what_to_type():
    with pytest.raises(DateError) as info:
        parse_date("1582-10-10")
    msg = str(info.value)
    assert "--calendar julian" in msg and 'calendar = "julian"' in msg
    assert "calendar='julian'" not in msg
    # drift and eclipses have no --calendar: the date itself can say it
    assert "1582-10-10 (Julian)" in msg
    assert parse_date("1582-10-10 (Julian)") == parse_date("1582-10-10", calendar="julian")


@given(st.floats(min_value=-2e6, max_value=6e6, allow_nan=False))
def test_a_printed_date_reads_back(jd):
    """What format_jd and format_day print (a report's dates, the JSON's "date") is date text
    parse_date reads back, calendar and BC year included."""
    for cal in ("auto", "julian", "gregorian"):
        text = format_jd(jd, cal, seconds=True)
        back = parse_date(text, calendar="auto")
        assert back == pytest.approx(jd, abs=0.5 * SECOND_DAYS + 1e-9 * abs(jd)), text
        day = format_day(jd, cal, bc=True)  # -0149-04-10 (150 BC): the day alone
        assert parse_date(day, calendar=cal) == parse_date(day.split(" ")[0], calendar=cal)


@pytest.mark.parametrize("text, same_as", [
    ("-0584-05-28 14:25 UT (Julian) = 585 BC", "585-05-28 14:25 BC"),
    ("-0584-05-28 14:25:00 UT (Julian) = 585 BC", "585-05-28 14:25 BC"),
    ("-0149-04-10 (150 BC)", "150-04-10 BC"),
    ("1582-10-04 00:00 UT (Julian)", "1582-10-04"),
    ("1582-10-15 (Gregorian)", "1582-10-15"),
    ("1582-10-10 (julian)", "JD 2299165.5"),
    ("1582-10-10 (Gregorian)", "JD 2299155.5"),
    ("1000-03-01 12:00 UT (Gregorian)", "1000-02-24 12:00"),
    ("2026-01-01 00:00 UT (Gregorian)", "2026-01-01"),
    ("15 March 44 BC (Julian)", "44-03-15 BC"),
])
def test_dates_as_wheelwork_prints_them(text, same_as):
    # 1582-10-10 Julian is 1582-10-20 Gregorian, JD 2299165.5; proleptic Gregorian
    # 1582-10-10 is ten days earlier; 1000-03-01 Gregorian is 1000-02-24 Julian (Meeus,
    # Astronomical Algorithms, ch. 7: the calendars differ by 6 days in the 11th century,
    # from memory)
    assert parse_date(text) == parse_date(same_as)


@pytest.mark.parametrize("text, same_as", [
    ("28 May 585 B.C.", "28 May 585 BC"),
    ("585-05-28 B.C.", "585-05-28 BC"),
    ("May 28, 585 B.C.E.", "28 May 585 BC"),
    ("14 October 1066 A.D.", "1066-10-14"),
    ("1066-10-14 C.E.", "1066-10-14"),
])
def test_eras_written_with_full_stops(text, same_as):
    # B.C. and A.D. with full stops, as many history books print them (common practice,
    # no source)
    assert parse_date(text) == parse_date(same_as)


@pytest.mark.parametrize("text, same_as", [
    ("14 October AD 1066", "1066-10-14"),
    ("14 October AD 1066 12:00 UT", "1066-10-14 12:00"),
    ("June 21, AD 250", "0250-06-21"),
    ("AD 1066-10-14", "1066-10-14"),
    ("A.D. 250-06-21 06:00", "0250-06-21 06:00"),
])
def test_ad_written_before_the_year(text, same_as):
    # style guides put AD before the year and BC after it (common practice, no source)
    assert parse_date(text) == parse_date(same_as)


@pytest.mark.parametrize("text, same_as", [
    ("28 May 585 BC, 14:25", "-0584-05-28 14:25"),
    ("May 28, 585 BC, 14:25", "-0584-05-28 14:25"),
    ("28 May 2026, 14:25 UT", "2026-05-28 14:25"),
])
def test_a_comma_before_the_time_of_day(text, same_as):
    # a date written out, then a comma and the time, as prose writes it (common practice,
    # no source); "May 28, 585 BC 14:25" was read and "28 May 585 BC, 14:25" refused
    assert parse_date(text) == parse_date(same_as)


@pytest.mark.parametrize("text", ["28 May 585 BC,", "250 BC,", "28 May 585, BC"])
def test_a_stray_comma_is_still_refused(text):
    with pytest.raises(DateError):
        parse_date(text)


@pytest.mark.parametrize("text, words", [
    ("AD 0-01-01", "no year 0 AD"),
    ("21 June AD 250 BC", "not a date form"),
    ("AD -5-01-01", "not a date form"),
])
def test_ad_before_the_year_keeps_its_checks(text, words):
    with pytest.raises(DateError) as info:
        parse_date(text)
    assert words in str(info.value)


@pytest.mark.parametrize("text, words", [
    ("-0584-05-28 = 584 BC", "-0584 is 585 BC"),
    ("0044-03-15 = 44 BC", "0044 is AD 44"),
    ("-0149-04-10 (149 BC)", "-0149 is 150 BC"),
    ("44-03-15 BC = 44 BC", "either"),
    ("2026-01-01 (Mayan)", "not a date form"),
])
def test_printed_forms_that_contradict_themselves_are_refused(text, words):
    with pytest.raises(DateError) as info:
        parse_date(text)
    assert words in str(info.value) and "\n" not in str(info.value)


def test_a_calendar_in_the_text_and_another_asked_is_refused():
    with pytest.raises(DateError, match="says Julian.*gregorian"):
        parse_date("1500-01-01 (Julian)", calendar="gregorian")
    assert parse_date("1500-01-01 (Julian)", calendar="julian") == parse_date("1500-01-01")


def test_sky_command_refuses_huge_julian_dates(capsys):
    from engine.cli import main

    for text in ("JD 1e308", "JD -1e308"):
        code = main(["sky", text])
        err = capsys.readouterr().err.strip()
        assert code == 2 and err.startswith("wheelwork sky: usage error: argument date: ")
        assert "outside the dates wheelwork handles" in err and len(err.splitlines()) == 1


# --- the crank's step and this moment --------------------------------------------------------

def test_crank_step_in_turns_or_time():
    from fractions import Fraction

    from engine.dates import parse_crank_step

    month = Fraction("29.530589")
    assert parse_crank_step("3", month) == (3, None)
    assert parse_crank_step("1/24", month) == (Fraction(1, 24), None)
    assert parse_crank_step("2.5 turns", month) == (Fraction(5, 2), None)
    assert parse_crank_step("5t", 1) == (5, None)
    # a Julian year is 365.25 days (IAU, the unit of light-years and Julian centuries)
    assert parse_crank_step("1y", month) == (Fraction(1461, 4) / month, Fraction(1461, 4))
    assert parse_crank_step("3d", month) == (3 / month, 3)
    assert parse_crank_step("12h", 1) == (Fraction(1, 2), Fraction(1, 2))
    assert parse_crank_step("30m", 1) == (Fraction(1, 48), Fraction(1, 48))  # exact, not binary
    assert parse_crank_step("2w", 7) == (2, 14)


@pytest.mark.parametrize("bad, words", [
    ("", "write a number"), ("zero", "cannot read step 'zero'"), ("12x", "unknown unit 'x'"),
    ("-3d", "cannot read step '-3d': a step is a length, without a sign"),
    ("-3", "without a sign"), ("−12h", "+ and − turn on and back"),
    ("1/0", "divides by zero"), ("0d", "too small"),
])
def test_crank_step_refuses_in_one_line(bad, words):
    from engine.dates import parse_crank_step
    from engine.errors import WheelworkError

    with pytest.raises((ValueError, WheelworkError)) as err:
        parse_crank_step(bad, 1)
    assert words in str(err.value) and "\n" not in str(err.value)


def test_turn_days_text():
    from fractions import Fraction

    from engine.dates import turn_days_text

    assert turn_days_text(1) == "1 turn = 1 day"
    assert turn_days_text(Fraction("365.2422")) == "1 turn = 365.2422 days"
    assert turn_days_text(Fraction("29.530589"), short=True) == "1 turn = 29.530589 d"
    assert turn_days_text(Fraction(1, 3)) == "1 turn = 0.3333333 days"
    # a crank once a second, and a 1500 rpm motor shaft: plain figures (it said 1.157407e-05)
    assert turn_days_text(Fraction(1, 86400)) == "1 turn = 0.00001157407 days"
    assert turn_days_text(Fraction(1, 2160000), short=True) == "1 turn = 0.000000462963 d"


def test_jd_now_from_the_clock():
    from datetime import datetime

    from engine.dates import jd_now

    # the Unix epoch, 1970-01-01 00:00 UTC, is JD 2440587.5 (common practice, no source);
    # 2000 January 1.5 is JD 2451545.0 (Meeus, Astronomical Algorithms, ch. 7)
    assert jd_now(lambda: 0.0) == 2440587.5
    assert jd_now(lambda: 946728000.0) == 2451545.0
    # the default clock is this moment: the calendar route gives the same date
    stamp = datetime.now(UTC)
    want = parse_date(stamp.strftime("%Y-%m-%d %H:%M:%S"))
    assert abs(jd_now() - want) * 86400 < 60


def test_format_day_is_the_whole_day_before_the_common_era_too():
    assert format_day(parse_date("-0149-04-10 06:00")) == "-0149-04-10"
    assert format_day(parse_date("2025-03-20 09:30")) == "2025-03-20"


@pytest.mark.parametrize("text, same_as", [
    ("Jan 1 2026", "2026-01-01"),
    ("January 1, 2026", "2026-01-01"),
    ("January 1, 2026 06:30", "2026-01-01 06:30"),
    ("Oct. 4 1957", "1957-10-04"),
    ("March 15, 44 BC", "15 March 44 BC"),
])
def test_month_name_first_is_read_as_day_first(text, same_as):
    assert parse_date(text) == parse_date(same_as)


def test_month_name_first_is_checked_like_the_rest():
    with pytest.raises(DateError, match="day 31 is not in 1-28"):
        parse_date("Feb 31 2026")
    with pytest.raises(DateError, match="unknown month name 'Febtember'"):
        parse_date("Febtember 3, 2026")


def test_an_iso_offset_from_ut_is_converted_as_toml_date_times_are():
    """ISO 8601 local time with an offset (what clocks and computers print): UT is the local
    time less the offset, as a train file's unquoted TOML date-time already read; written in
    quotes or on the command line it was 'not a date form I know'."""
    from engine.dates import format_jd, parse_date

    ut = parse_date("2026-03-20 08:30")
    assert parse_date("2026-03-20T09:30+01:00") == pytest.approx(ut, abs=1e-9)
    assert parse_date("2026-03-20 03:30:00-0500") == pytest.approx(ut, abs=1e-9)
    assert parse_date("2026-03-20 08:30 GMT") == pytest.approx(ut, abs=1e-9)
    # across a day, a month and the calendar change
    assert format_jd(parse_date("2026-03-01T00:30+01:00")).startswith("2026-02-28 23:30")
    assert format_jd(parse_date("1582-10-15T00:30+01:00")).startswith("1582-10-04 23:30")
    for bad in ("2026-03-20+01:00", "2026-03-20T09:30+15:00", "2026-03-20T09:30+01:61"):
        with pytest.raises(DateError):
            parse_date(bad)


@pytest.mark.parametrize("text, jd", [
    # JD 0 is noon of 1 January 4713 BC in the Julian calendar, so its midnight is JD -0.5
    # (common practice, no source)
    ("4713 BC", -0.5),
    ("-4712", -0.5),
    # J2000.0 is JD 2451545.0 at noon of 2000-01-01, so its midnight is 2451544.5 (common
    # practice, no source)
    ("2000", 2451544.5),
    ("AD 2000", 2451544.5),
    ("2000 AD", 2451544.5),
    ("2000-01", 2451544.5),
    ("January 2000", 2451544.5),
    # 1582-10-15 (Gregorian, the first day of the reform) is JD 2299160.5 and 1582-10-04
    # (Julian) the day before (common practice, no source): 1583 begins 78 days after the
    # first, 1582 276 days before the second, October 1582 3 days before it
    ("1583", 2299160.5 + 78),
    ("1582", 2299159.5 - 276),
    ("October 1582", 2299159.5 - 3),
    ("1582-10", 2299159.5 - 3),
])
def test_a_year_or_month_alone_is_its_first_day(text, jd):
    assert parse_date(text) == jd


@pytest.mark.parametrize("text, same_as", [
    ("250 BC", "250-01-01 BC"),
    ("250 B.C.", "1 January 250 BC"),
    ("-0249", "-0249-01-01 00:00"),
    ("AD 1066", "1066-01-01"),
    ("1066 AD", "1066-01-01"),
    ("1066 CE", "1066-01-01"),
    ("1066", "1066-01-01"),
    ("333", "0333-01-01"),
    ("0", "0000-01-01"),                 # astronomical year 0 = 1 BC
    ("1 BC", "0000-01-01"),
    ("June 250 BC", "1 June 250 BC"),
    ("Jun. 250 BCE", "-0249-06-01"),
    ("June 1066", "1066-06-01"),
    ("June, 1066", "1066-06-01"),
    ("June AD 250", "0250-06-01"),
    ("June 44 BC", "-0043-06-01"),
    ("1066-10", "1066-10-01"),
    ("-0249-06", "-0249-06-01"),
    ("44-03 BC", "44-03-01 BC"),
    ("AD 1066-10", "1066-10-01"),
    ("123456 BC", "-123455-01-01"),
    ("-0584 = 585 BC", "-0584-01-01"),   # as wheelwork prints a year before AD 1
])
def test_a_year_or_month_alone_reads_as_the_full_date_of_its_first_day(text, same_as):
    assert parse_date(text) == parse_date(same_as)


def test_a_year_alone_keeps_the_calendar_rules():
    # 1700 is a leap year in the Julian calendar only, so the Gregorian calendar is then 11
    # days ahead from 1 March and 10 days before (common practice, no source)
    assert parse_date("1700", calendar="julian") - parse_date("1700") == 10
    assert parse_date("1700 (Julian)") == parse_date("1700-01-01", calendar="julian")
    assert parse_date("March 1700 (Julian)") - parse_date("March 1700") == 11
    assert parse_date("1500 (Gregorian)") == parse_date("1500-01-01", calendar="gregorian")
    assert parse_date("1066", calendar="gregorian") == parse_date("1066-01-01",
                                                                  calendar="gregorian")
    with pytest.raises(DateError, match="says Julian"):
        parse_date("1500 (Julian)", calendar="gregorian")
    # the printed form reads back to the year as written
    assert format_jd(parse_date("250 BC")) == "-0249-01-01 00:00 UT (Julian) = 250 BC"
    assert format_jd(parse_date("June 250 BC")) == "-0249-06-01 00:00 UT (Julian) = 250 BC"


@pytest.mark.parametrize("text, words", [
    ("2451545", "write 'JD 2451545'"),
    ("12345", "for a Julian Date write 'JD 12345', for a year '12345-01-01'"),
    ("-12000", "write 'JD -12000'"),
    ("2451545.0", "write 'JD 2451545.0'"),
    ("2451545.", "write 'JD 2451545.'"),
    ("AD 0", "no year 0 AD"),
    ("0 BC", "no year 0 BC"),
    ("June 0 BC", "no year 0 BC"),
    ("-250 BC", "either a signed year or BC/AD"),
    ("March 15", "could be a day of March or March of AD 15"),
    ("Oct 4", "(Oct AD 4)"),
    ("12-10", "could be a month and day or a year and month"),
    ("1066-13", "month 13 is not 1-12"),
    ("Smarch 1066", "not a date form"),
    ("hello 2025", "not a date form"),
    ("1234567 BC", "outside the dates wheelwork handles"),
    ("1000000 AD", "outside the dates wheelwork handles"),
])
def test_a_year_or_month_alone_refuses_what_stays_ambiguous(text, words):
    with pytest.raises(DateError) as info:
        parse_date(text)
    msg = str(info.value)
    assert words in msg and repr(text) in msg and "\n" not in msg


@pytest.mark.parametrize("text, words", [
    # figures with slashes or dots, as many countries write dates: the way round is named
    ("03/12/2026", ["either way round", "2026-12-03 (3 December 2026)",
                    "2026-03-12 (12 March 2026)"]),
    ("3.12.2026", ["either way round", "2026-12-03 (3 December 2026)"]),
    ("13/12/2026", ["year first with hyphens: 2026-12-13 (13 December 2026)"]),
    ("12/13/2026 06:30", ["year first with hyphens: 2026-12-13 06:30 (13 December 2026)"]),
    ("2026/05/01", ["year first with hyphens: 2026-05-01"]),
    ("03/12/26", ["write the year in full"]),
    # eight figures run together, as programs write dates: the day first, the JD after
    ("20261203", ["for that day write '2026-12-03'", "'JD 20261203'"]),
])
def test_a_date_in_another_order_is_answered_with_the_iso_form(text, words):
    """A new user writes the date the way their country does; the message said only 'not a
    date form I know' (and for 20261203 offered 'JD 20261203', a day 50,000 years ahead)."""
    with pytest.raises(DateError) as err:
        parse_date(text)
    msg = str(err.value)
    for w in words:
        assert w in msg, msg
    assert "\n" not in msg
    assert "either way round" not in msg or text.startswith(("03", "3."))


def test_eight_figures_that_are_no_date_keep_the_julian_date_hint():
    with pytest.raises(DateError, match="5 or more digits") as err:
        parse_date("20261303")  # month 13
    assert "JD 20261303" in str(err.value)


def test_now_and_today_are_read_by_the_commands_from_the_clock():
    """`wheelwork sky now` and `drift --from today` as a new user types them: 'not a date
    form I know'. The clock reading is the computer's UTC: 2026-12-03 06:30 UTC is
    1,796,279,400 s after 1970-01-01 (20,790 days and 6.5 hours: 20790 × 86400 + 23400,
    worked by hand), JD 2461377.770833 (2440587.5 + 20790.270833)."""
    from engine.dates import parse_when

    def clock():
        return 1_796_279_400.0

    assert parse_when("now", clock=clock) == pytest.approx(2461377.770833, abs=1e-6)
    assert parse_when(" Today ", clock=clock) == 2461377.5
    assert format_jd(parse_when("today", clock=clock)) == "2026-12-03 00:00 UT (Gregorian)"
    # `sky tomorrow` was 'not a date form I know': the day after and before, 00:00 UT
    assert format_jd(parse_when("Tomorrow", clock=clock)) == "2026-12-04 00:00 UT (Gregorian)"
    assert format_jd(parse_when("yesterday ", clock=clock)) == "2026-12-02 00:00 UT (Gregorian)"
    assert parse_when("2026-12-03") == parse_date("2026-12-03")
    with pytest.raises(DateError):
        parse_date("now")  # parse_date reads no clock: the same text gives the same day
