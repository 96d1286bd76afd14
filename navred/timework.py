"""The navigator's time working as written: dates, times of day, zone descriptions, watch errors.

Each parser takes one value as a log holds it (text, or a spreadsheet's typed cell) and
returns numbers, or raises a :class:`~navred.errors.TimeInputError` that says what was
wrong and what is accepted. Forms with two plausible readings are refused with both named,
never guessed: a day-first or month-first date (unless the order is declared), a zone
description without its sign, or one written like an ISO 8601 offset (which means the
opposite), a zone letter that disagrees with the sign.

Conventions (common practice): ZT + ZD = UTC, so a ship east of Greenwich keeps a negative
zone description; a watch that is fast reads ahead of the time it keeps, so its error is
subtracted.
"""

from __future__ import annotations

import datetime as _dt
import re

from .errors import TimeInputError
from .vocabulary import COLUMN, WATCH_SIGN_WORDS, ZONE_LETTERS

#: The declared orders of a numeric date that is not ISO 8601.
DATE_ORDERS = ("day-first", "month-first")
MAX_WATCH_ERROR_S = float(COLUMN["watch_error"].high)

_ISO_DATE = re.compile(r"^\s*(\d{4})-(\d{1,2})-(\d{1,2})\s*$")
_YEAR_FIRST = re.compile(r"^\s*(\d{4})[/.](\d{1,2})[/.](\d{1,2})\s*$")
_NUMERIC_DATE = re.compile(r"^\s*(\d{1,2})[/.\-](\d{1,2})[/.\-](\d{2}|\d{4})\s*$")
_MONTHS = {m: i + 1 for i, m in enumerate(("jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct",
                                           "nov", "dec"))}
_NAMED_DAY_FIRST = re.compile(r"^\s*(\d{1,2})[\s\-]*([A-Za-z]{3,9})\.?[\s\-,]*(\d{4})\s*$")
_NAMED_MONTH_FIRST = re.compile(r"^\s*([A-Za-z]{3,9})\.?\s+(\d{1,2})(?:st|nd|rd|th)?,?\s+(\d{4})\s*$")
_TIME = re.compile(r"^\s*(\d{1,2})(?:[:h ]\s*(\d{2})(?:[:m ]\s*(\d{2}(?:[.,]\d+)?)\s*s?)?\s*m?)\s*$", re.IGNORECASE)
_COMPACT_TIME = re.compile(r"^\s*(\d{2})(\d{2})(\d{2}(?:[.,]\d+)?)?\s*$")
_ZONE_IN_TIME = re.compile(r"(?:[zZ]|UTC|GMT|[+-]\d{2}(?::?\d{2})?)\s*$")
_AM_PM = re.compile(r"(?<![A-Za-z])([ap])\.?\s?m\.?\s*$", re.IGNORECASE)

ACCEPTED_DATES = "ISO 8601 such as 2026-03-26, 26 Mar 2026, or a date cell"
ACCEPTED_TIMES = ("hh:mm:ss on the 24-hour clock (19:41:30, 19:41, 194130), a time cell, or the 12-hour clock with "
                  "am or pm (7:41:30 pm, 12:31 pm; not exactly 12:00, noon or midnight)")
ACCEPTED_ZONES = "a whole signed hour from -12 to +12, ZT + ZD = UTC: +3, -10, 0, with its letter if you like (+1 N, -1 A, Z)"
ACCEPTED_WATCH_ERRORS = ("'12 fast', '3 s slow', '1 m 05 s fast', '01:05 slow'; a number, signed or not, only under "
                         "a header that states the sign ('watch error (fast +)'): otherwise fast or slow?")


def _valid_date(year: int, month: int, day: int) -> bool:
    try:
        _dt.date(year, month, day)
    except ValueError:
        return False
    return True


def _reading(year: int, month: int, day: int) -> str:
    if not _valid_date(year, month, day):
        return "not a date"
    return f"{year:04d}-{month:02d}-{day:02d} ({day} {_dt.date(year, month, day).strftime('%B')})"


def parse_date(value: object, order: str | None = None, *, declarable: bool = True) -> tuple[int, int, int]:
    """(year, month, day) of a date as written; a numeric day/month form needs ``order`` declared.

    ``declarable``: whether the refusal of a numeric date may suggest declaring the order
    (a log can; a single date on the command line is simply written in ISO 8601).

    >>> parse_date("2026-03-05"), parse_date("05/03/2026", "day-first"), parse_date("26 Mar 2026")
    ((2026, 3, 5), (2026, 3, 5), (2026, 3, 26))
    """
    if isinstance(value, _dt.datetime):
        if value.time() != _dt.time(0, 0):
            raise TimeInputError(f"date {value} has a time of day; give the time in its own column")
        return value.year, value.month, value.day
    if isinstance(value, _dt.date):
        return value.year, value.month, value.day
    if not isinstance(value, str):
        raise TimeInputError(f"cannot read {value!r} as a date; accepted: {ACCEPTED_DATES}")
    text = value.strip()
    if order is not None and order not in DATE_ORDERS:
        raise TimeInputError(f"date order {order!r} is not one of {', '.join(DATE_ORDERS)}")
    for pattern in (_ISO_DATE, _YEAR_FIRST):
        match = pattern.match(text)
        if match:
            year, month, day = (int(g) for g in match.groups())
            break
    else:
        match = _NUMERIC_DATE.match(text)
        if match:
            a, b, year_text = match.groups()
            if len(year_text) == 2:
                raise TimeInputError(f"date {value!r} has a two-digit year: write the year in full "
                                     f"({ACCEPTED_DATES})")
            a, b, year = int(a), int(b), int(year_text)
            if order is None:
                day_first, month_first = _reading(year, b, a), _reading(year, a, b)
                valid = [r for r in (day_first, month_first) if r != "not a date"]
                what = ("has two readings" if len(valid) == 2 else
                        "is not a date either way" if not valid else
                        "is read by the order of the log's dates, which is not declared")
                raise TimeInputError(
                    f"date {value!r} is not ISO 8601 and {what}: day-first it is {day_first}, month-first "
                    f"{month_first}; write it as ISO 8601 (YYYY-MM-DD)" + (
                        ", or declare the order of the whole log (--dates day-first or --dates month-first: a log "
                        "writes all its dates one way)" if declarable else ""))
            day, month = (a, b) if order == "day-first" else (b, a)
            if not _valid_date(year, month, day):
                other = "month-first" if order == "day-first" else "day-first"
                raise TimeInputError(
                    f"date {value!r} read {order}, as declared (--dates {order}), is not a date (no day {day} in "
                    f"month {month} of {year}); {other} it would be {_reading(year, day, month)}, but a log writes "
                    "all its dates one way: check this one")
        else:
            named = _NAMED_DAY_FIRST.match(text) or _NAMED_MONTH_FIRST.match(text)
            if not named:
                raise TimeInputError(f"cannot read {value!r} as a date; accepted: {ACCEPTED_DATES}")
            parts = named.groups()
            day_text, month_text, year_text = (parts if named.re is _NAMED_DAY_FIRST
                                               else (parts[1], parts[0], parts[2]))
            month = _MONTHS.get(month_text[:3].lower())
            if month is None:
                raise TimeInputError(f"cannot read the month in {value!r}; accepted: {ACCEPTED_DATES}")
            day, year = int(day_text), int(year_text)
    if not _valid_date(year, month, day):
        raise TimeInputError(f"{value!r} is not a date (no day {day} in month {month} of {year})")
    return year, month, day


def parse_time_of_day(value: object) -> tuple[int, int, float]:
    """(hour, minute, second) of a time of day as written (24-hour clock; second 60 for a leap second), or on
    the 12-hour clock with am or pm (12:31 am is 00:31, 12:31 pm is 12:31; exactly 12:00 am or pm is refused
    with both readings, noon or midnight).

    >>> parse_time_of_day("19:41:30"), parse_time_of_day("1941"), parse_time_of_day("7:15 pm")
    ((19, 41, 30.0), (19, 41, 0.0), (19, 15, 0.0))
    """
    if isinstance(value, _dt.datetime):
        value = value.time()
    if isinstance(value, _dt.time):
        if value.tzinfo is not None:
            raise TimeInputError(f"time {value} carries a zone of its own; the zone is zone_description's")
        return value.hour, value.minute, value.second + value.microsecond * 1e-6
    if not isinstance(value, str):
        raise TimeInputError(f"cannot read {value!r} as a time of day; accepted: {ACCEPTED_TIMES}")
    text = value.strip()
    half = _AM_PM.search(text)
    if half:
        return _twelve_hour_time(value, text[:half.start()].strip(), half.group(1).lower() == "p")
    match = _TIME.match(text) or _COMPACT_TIME.match(text)
    if not match:
        if _ZONE_IN_TIME.search(text) and _TIME.match(_ZONE_IN_TIME.sub("", text).strip()):
            raise TimeInputError(
                f"time {value!r} carries a zone of its own, but a zone time takes its zone from "
                "zone_description: drop the zone, or give the instant in the utc column")
        raise TimeInputError(f"cannot read {value!r} as a time of day; accepted: {ACCEPTED_TIMES}")
    hour, minute = int(match.group(1)), int(match.group(2) or 0)
    second = float((match.group(3) or "0").replace(",", "."))
    if hour > 23 or minute > 59 or second >= 61.0:
        raise TimeInputError(f"{value!r} is not a time of day (hour 0-23, minute 0-59, second below 60, "
                             "or 60 in a leap second)")
    return hour, minute, second


def _twelve_hour_time(value: str, clock: str, pm: bool) -> tuple[int, int, float]:
    """A time written on the 12-hour clock with am or pm (``clock`` without them): hours 1 to 11 read as the
    12-hour clock reads them (7:15 pm is 19:15), and 12 as the first hour of its half (12:31 am is 00:31, 12:31 pm
    is 12:31: every usage agrees); exactly 12:00 am or pm is refused with both readings (noon or midnight: usage
    differs), and an hour of 0 or over 12 beside am/pm as a contradiction."""
    half = "pm" if pm else "am"
    match = _TIME.match(clock) or _COMPACT_TIME.match(clock)
    if not match:
        raise TimeInputError(f"cannot read {value!r} as a time of day; accepted: {ACCEPTED_TIMES}")
    hour, minute = int(match.group(1)), int(match.group(2) or 0)
    second = float((match.group(3) or "0").replace(",", "."))
    rest = f"{minute:02d}" + (f":{match.group(3)}" if match.group(3) else "")
    if minute > 59 or second >= 61.0:
        raise TimeInputError(f"{value!r} is not a time of day (minute 0-59, second below 60, or 60 in a leap "
                             "second)")
    if hour == 12 and minute == 0 and second == 0.0:
        raise TimeInputError(
            f"time {value!r} has two readings: noon (12:00) or midnight (00:00 at the start of the date, or 24:00 at "
            f"its end): 12:00 {half} is said of both, by one usage and another; write it on the 24-hour clock")
    if hour == 0 or hour > 12:
        raise TimeInputError(
            f"time {value!r}: hour {hour} with {half}, but the 12-hour clock runs 1 to 12: write it on the 24-hour "
            f"clock ({hour:02d}:{rest}) without {half}")
    # past the hour, 12 is the 12-hour clock's first hour of its half: 12:31 am is 00:31, 12:31 pm is 12:31
    return hour % 12 + (12 if pm else 0), minute, second


_ZONE = re.compile(r"^([+-]?)\s*(\d{1,2})(?:[.,]0+)?\s*(?:\(?\s*([A-Za-z])\s*\)?)?$")
#: a zone written in hours: '+10h', '+10 h', '-3 hrs', '+5 hours' (a lower-case h: an upper-case H after the
#: number is the zone letter H, checked against the number as '+1 N' is)
_ZONE_HOURS = re.compile(r"^([+-]?)\s*(\d{1,2})(?:[.,]0+)?\s*(?:h|hrs?\.?|hours?|HRS?\.?|HOURS?|Hrs?\.?|Hours?)$")
_LETTER_ONLY = re.compile(r"^\(?\s*([A-Za-z])\s*\)?$")
_ISO_LIKE = re.compile(r"^(?:UTC|GMT)?\s*[+-]\s*\d{1,2}\s*[:h]\s*\d{2}$|^[+-]\d{4}$|^(?:UTC|GMT)\s*[+-]?\s*\d+$",
                       re.IGNORECASE)


#: a zone written as a UTC offset with its name: 'UTC-10', 'GMT+3', 'UTC+05:00', 'UTC −3' (the sign required)
_NAMED_OFFSET = re.compile(r"^(UTC|GMT)\s*([+-])\s*(\d{1,2})(?:\s*[:h]?\s*(\d{2}))?$", re.IGNORECASE)


def utc_offset_zone(value: object) -> int | None:
    """The zone description of a clock written as its offset from UTC with the name UTC or GMT ('UTC-10' is a
    clock 10 h behind UTC: ZT + 10 h = UTC, zone description +10); None when the text is not written so. The
    name leaves one reading only: an offset is the zone description with the opposite sign. A bare '+10:30' or
    '-10' says neither, and is not read here. An offset of part of an hour, or beyond ±12 h, is refused: the
    zone descriptions navred keeps are whole hours from -12 to +12 (give such a sight's time in UTC)."""
    if not isinstance(value, str):
        return None
    match = _NAMED_OFFSET.match(value.strip().replace("\u2212", "-"))
    if not match:
        return None
    name, sign, hours, minutes = match.group(1).upper(), match.group(2), int(match.group(3)), match.group(4)
    zd = -hours if sign == "+" else hours
    written = f"{name}{sign}{hours}" + (f":{minutes}" if minutes else "")
    if minutes and int(minutes):
        raise TimeInputError(
            f"zone description {value!r} is a UTC offset of {sign}{hours}:{minutes}, zone description "
            f"{'-' if sign == '+' else '+'}{hours}:{minutes}, which is not a whole hour: navred keeps zone "
            "descriptions of whole hours only; give the sight's time in UTC (the utc column)")
    if hours > 12:
        raise TimeInputError(
            f"zone description {value!r} is a UTC offset of {written[3:]} h, zone description {zd:+d}, outside "
            f"-12 to +12 hours; give the sight's time in UTC (the utc column)")
    return zd


def parse_zone_description(value: object) -> int:
    """A zone description in whole hours (ZT + ZD = UTC) as written: ``+3``, ``-10``, ``+1 N``, ``Z``.

    >>> parse_zone_description("+1 N"), parse_zone_description("-1"), parse_zone_description("Z")
    (1, -1, 0)
    """
    if isinstance(value, bool):
        raise TimeInputError(f"cannot read {value!r} as a zone description; accepted: {ACCEPTED_ZONES}")
    if isinstance(value, (int, float)):
        if value != value or value != round(value):
            raise TimeInputError(f"zone description {value!r} is not a whole hour; accepted: {ACCEPTED_ZONES}")
        if value > 0:
            raise TimeInputError(
                f"zone description {value:g} is a number cell, which has lost its sign (a spreadsheet drops "
                f"a leading +): +{value:g} (west of Greenwich) or -{value:g} (east)? write it as text "
                f"('+{value:g}'), or with its zone letter")
        text = f"{int(value):+d}" if value else "0"
    elif isinstance(value, str):
        text = value.strip().replace("−", "-")
    else:
        raise TimeInputError(f"cannot read {value!r} as a zone description; accepted: {ACCEPTED_ZONES}")
    offset = utc_offset_zone(text)
    if offset is not None:
        return offset
    if _ISO_LIKE.match(text):
        raise TimeInputError(
            f"zone description {value!r} is written like a UTC offset, which means the opposite: an "
            "offset of +01:00 is zone description -1 (A). Write the zone description as a signed whole "
            "hour, ZT + ZD = UTC (-1 for a ship keeping UTC+1)")
    hours_written = _ZONE_HOURS.match(text)
    if hours_written:  # '+10h', '+10 h', '-3 hrs': hours, the sign and digits first (a zone letter is H alone)
        sign, number = hours_written.group(1), int(hours_written.group(2))
        if number > 12:
            raise TimeInputError(f"zone description {value!r} is outside -12 to +12 hours; accepted: {ACCEPTED_ZONES}")
        if number and not sign:
            raise TimeInputError(
                f"zone description {value!r} is {number} hours with no sign: +{number} (ZT + {number} h = UTC, west "
                f"of Greenwich) or -{number} (east)? write the sign ('+{number} h')")
        return -number if sign == "-" else number
    letter_only = _LETTER_ONLY.match(text)
    if letter_only:
        letter = letter_only.group(1).upper()
        if letter not in ZONE_LETTERS:
            raise TimeInputError(f"zone letter {letter!r} is not a zone (J is not used); accepted: {ACCEPTED_ZONES}")
        return ZONE_LETTERS[letter]
    match = _ZONE.match(text)
    if not match:
        raise TimeInputError(f"cannot read {value!r} as a zone description; accepted: {ACCEPTED_ZONES}")
    sign, number, letter = match.groups()
    hours = int(number)
    if hours > 12:
        raise TimeInputError(f"zone description {value!r} is outside -12 to +12 hours; accepted: {ACCEPTED_ZONES}")
    if hours and not sign:
        if not letter:
            raise TimeInputError(
                f"zone description {value!r} has no sign: +{hours} (ZT + {hours} h = UTC, west of Greenwich) "
                f"or -{hours} (east)? write the sign")
        sign = "+" if ZONE_LETTERS.get(letter.upper(), 0) > 0 else "-"
    zd = -hours if sign == "-" else hours
    if letter:
        letter = letter.upper()
        if letter not in ZONE_LETTERS:
            raise TimeInputError(f"zone letter {letter!r} is not a zone (J is not used); accepted: {ACCEPTED_ZONES}")
        if ZONE_LETTERS[letter] != zd:
            right = next(k for k, v in ZONE_LETTERS.items() if v == zd)
            raise TimeInputError(
                f"zone description {value!r}: the letter {letter} is zone {ZONE_LETTERS[letter]:+d}, but the "
                f"number says {zd:+d} (whose letter is {right}); check the sign"
                + (f" (for hours, write '{zd:+d} h' or '{zd:+d}')" if letter == "H" else ""))
    return zd


_WATCH = re.compile(
    r"^(?P<sign>[+-])?\s*(?:(?P<min>\d+)\s*(?:m|min|mins|minutes)\.?\s*(?P<sec>\d+(?:[.,]\d+)?)?\s*"
    r"(?:s|sec|secs|seconds)?|(?P<mm>\d+):(?P<ss>\d{2}(?:[.,]\d+)?)|(?P<only>\d+(?:[.,]\d+)?)\s*"
    r"(?:s|sec|secs|seconds)?)\.?\s*(?P<way>fast|slow|f|sl)?\s*$", re.IGNORECASE)


def _two_signed_readings(shown: str, seconds: float) -> str:
    size = f"{abs(seconds):g}"
    fast_way, slow_way = ("fast", "slow") if seconds >= 0 else ("slow", "fast")
    return (f"watch error {shown!r} has a sign but no fast or slow: as an error (+ fast) it is {size} s {fast_way} "
            f"({'subtracted from' if fast_way == 'fast' else 'added to'} the watch's reading); as a correction "
            f"(+ added) it is {size} s {slow_way} ({'added to' if slow_way == 'slow' else 'subtracted from'} the "
            f"reading), {2 * abs(seconds):g} s apart? write '{size} s fast' or '{size} s slow', or state the sign "
            "in the column's header: 'watch error (fast +)' or 'watch error (slow +)'")


def parse_watch_error_s(value: object, plus: str | None = None) -> float:
    """A watch's error in seconds, fast positive (it is subtracted from the watch's reading).

    ``plus`` is the sign convention the column's header states (:data:`WATCH_SIGN_WORDS`): 'fast' (+ is a fast
    watch, an error), 'slow' (+ is a slow watch, a correction added), or None (not stated): then a signed
    error or a number cell has two readings and is refused, as an unsigned one is (common practice: both
    conventions are written in logs).

    >>> parse_watch_error_s("12 fast"), parse_watch_error_s("3 s slow"), parse_watch_error_s("1 m 05 s fast")
    (12.0, -3.0, 65.0)
    >>> parse_watch_error_s(-4.5, "fast"), parse_watch_error_s("+12", "fast"), parse_watch_error_s("+12", "slow")
    (-4.5, 12.0, -12.0)
    """
    flip = -1.0 if plus == "slow" else 1.0
    if isinstance(value, bool):
        raise TimeInputError(f"cannot read {value!r} as a watch error; accepted: {ACCEPTED_WATCH_ERRORS}")
    if isinstance(value, (int, float)):
        seconds = float(value)
        if seconds and plus is None:
            # a number cell has no sign to trust: a spreadsheet drops a leading +, and - is an error's slow or a
            # correction's fast
            if seconds > 0:
                raise TimeInputError(
                    f"watch error {value:g} is a number, which has no fast or slow: {value:g} s fast (+{value:g}, "
                    f"subtracted from the watch) or {value:g} s slow (-{value:g}, added)? write '{value:g} fast' or "
                    f"'{value:g} slow', or state the sign in the column's header: 'watch error (fast +)'")
            raise TimeInputError(_two_signed_readings(f"{value:g}", seconds))
        seconds *= flip
    elif isinstance(value, str):
        match = _WATCH.match(value.strip().replace("−", "-"))
        if not match:
            raise TimeInputError(f"cannot read {value!r} as a watch error; accepted: {ACCEPTED_WATCH_ERRORS}")
        parts = match.groupdict()
        if parts["min"] is not None:
            seconds = int(parts["min"]) * 60 + float((parts["sec"] or "0").replace(",", "."))
        elif parts["mm"] is not None:
            seconds = int(parts["mm"]) * 60 + float(parts["ss"].replace(",", "."))
        else:
            seconds = float(parts["only"].replace(",", "."))
        way = (parts["way"] or "").lower()
        if way and parts["sign"]:
            raise TimeInputError(f"watch error {value!r}: give a sign or fast/slow, not both")
        if not way and plus is None and seconds:
            shown = value.strip()
            if parts["sign"]:
                raise TimeInputError(_two_signed_readings(shown, -seconds if parts["sign"] == "-" else seconds))
            raise TimeInputError(
                f"watch error {value!r} has no fast or slow: {shown} fast (the watch is ahead; subtracted) or {shown} "
                f"slow (behind; added)? write '{shown} fast' or '{shown} slow', or state the sign in the column's "
                "header: 'watch error (fast +)'")
        if way:
            seconds = -seconds if way in ("slow", "sl") else seconds
        else:
            seconds = (-seconds if parts["sign"] == "-" else seconds) * flip
    else:
        raise TimeInputError(f"cannot read {value!r} as a watch error; accepted: {ACCEPTED_WATCH_ERRORS}")
    if not seconds == seconds or abs(seconds) > MAX_WATCH_ERROR_S:
        raise TimeInputError(f"watch error {value!r} is outside ±{MAX_WATCH_ERROR_S:.0f} s: a watch that far out "
                             "is keeping another zone; check the zone description")
    return seconds


def watch_error_words(seconds: float) -> str:
    """A watch error in the navigator's words: '7 s slow', '3.6 s fast', '0 s'.

    >>> watch_error_words(-7.0), watch_error_words(3.64), watch_error_words(0.0)
    ('7 s slow', '3.6 s fast', '0 s')
    """
    if not seconds == seconds:
        return ""
    size = f"{abs(seconds):.1f}".rstrip("0").rstrip(".")
    return "0 s" if size == "0" else f"{size} s {'fast' if seconds > 0 else 'slow'}"


_UTC_NUMERIC_DATE = re.compile(r"^\s*(\d{1,2}[/.\-]\d{1,2}[/.\-]\d{2,4})[T ]\s*(.+)$")


def iso_instant_text(value: str, order: str | None = None) -> str:
    """An instant written with a numeric day/month date ('05/03/2026 18:42:10Z') as ISO 8601 text.

    ISO 8601 text comes back unchanged; a numeric date is refused with both readings
    unless ``order`` is declared.
    """
    match = _UTC_NUMERIC_DATE.match(value)
    if not match:
        return value
    year, month, day = parse_date(match.group(1), order)
    return f"{year:04d}-{month:02d}-{day:02d}T{match.group(2).strip()}"


__all__ = ["parse_date", "parse_time_of_day", "parse_zone_description", "parse_watch_error_s",
           "watch_error_words", "WATCH_SIGN_WORDS",
           "iso_instant_text", "DATE_ORDERS"]
