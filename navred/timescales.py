"""UTC -> TAI -> TT -> TDB and UT1, the only place that knows leap seconds and IERS tables.

Instants are carried as two-part Julian dates (ERFA's convention: a single
float64 Julian date loses tens of microseconds). The leap-second table and the
IERS ``finals2000A.all`` table come from the installed ``astropy-iers-data``
package; nothing is downloaded.

Sources: IERS Conventions (2010) chapter 5; ERFA (the open implementation of
IAU SOFA) routines ``dtf2d``, ``utctai``, ``taitt``, ``utcut1``, ``dat``;
IERS Bulletin A file format (``ReadMe.finals2000A``).
"""

from __future__ import annotations

import datetime as _dt
import functools
import importlib.resources
import re
import warnings
from dataclasses import dataclass, field

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .constants import (
    DAYS_PER_JULIAN_YEAR,
    JD_J2000,
    JD_UNIX_EPOCH,
    NS_PER_DAY,
    NS_PER_SECOND,
    SECONDS_PER_DAY,
    SECONDS_PER_HOUR,
    SECONDS_PER_MINUTE,
    TT_MINUS_TAI_S,
)
from .errors import InstantsWarning, NavredWarning, TimeInputError, failed_elements

#: The span navred accepts: the JPL DE421 ephemeris covers 1899-07-29 to 2053-10-09.
FIRST_YEAR, LAST_YEAR = 1900, 2050
_END_JD = 2469807.5  # 2051-01-01 0h
_MJD0 = 2400000.5
_UTC_START_JD = 2436934.5  # 1960-01-01: ERFA's UTC (with its pre-1972 drift rates) starts here

UT1_MEASURED = "IERS measured"
UT1_PREDICTED = "IERS predicted"
UT1_BEYOND = "beyond the IERS table"
UT1_BEFORE = "before the IERS table"
UT1_GIVEN = "given by the caller"
UT1_PRE_UTC = "before 1960: time taken as UT"

#: One instant as navred takes it: ISO 8601 text with a zone ('2026-03-20T18:42:10Z'), a datetime with a zone,
#: or a numpy datetime64 (read as UTC); a pandas Timestamp is a datetime.
Instant = str | _dt.datetime | np.datetime64
_SOURCES = np.array([UT1_MEASURED, UT1_PREDICTED, UT1_BEYOND, UT1_BEFORE, UT1_GIVEN, UT1_PRE_UTC], dtype=object)
_SOURCE_CODE = {name: k for k, name in enumerate(_SOURCES)}

_ISO = re.compile(
    r"^\s*(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2}(?:[.,]\d+)?))?\s*"
    r"(Z|z|UTC|[+-]\d{2}(?::?\d{2})?)?\s*$")
_ACCEPTED = ("accepted: ISO 8601 with a zone such as 2026-03-20T18:42:10Z or "
             "2026-03-20T21:42:10+03:00, a timezone-aware datetime or pandas Timestamp, "
             "or numpy datetime64 (taken as UTC)")


@dataclass(frozen=True)
class Instants:
    """A batch of instants in every time scale navred needs (two-part Julian dates)."""

    utc1: np.ndarray
    utc2: np.ndarray
    tt1: np.ndarray
    tt2: np.ndarray
    ut11: np.ndarray
    ut12: np.ndarray
    dut1_s: np.ndarray
    ut1_source: np.ndarray
    #: work shared by every body at these instants (the almanac keeps its frame here); a new
    #: batch made by indexing, broadcasting or ravelling starts empty
    shared: dict = field(default_factory=dict, compare=False, repr=False)

    @property
    def shape(self) -> tuple[int, ...]:
        return np.shape(self.utc1)

    @property
    def tdb1(self) -> np.ndarray:
        return self.tt1

    @property
    def tdb2(self) -> np.ndarray:
        """Second part of TDB; TDB - TT is at most 1.7 ms (the periodic term below)."""
        return self.tt2 + tdb_minus_tt_s(self.tt1, self.tt2) / SECONDS_PER_DAY

    @property
    def tt_centuries(self) -> np.ndarray:
        """Julian centuries of TT since J2000.0."""
        return ((self.tt1 - JD_J2000) + self.tt2) / 36525.0

    def utc_datetime64(self) -> np.ndarray:
        """UTC as numpy datetime64[ns]; a leap second 23:59:60.x is shown as 23:59:59.999999999."""
        return utc_jd_to_datetime64(self.utc1, self.utc2)

    def utc_text(self, decimals: int = 3) -> np.ndarray:
        """UTC as ISO 8601 text ('2016-12-31T23:59:60.500', no zone), to ``decimals`` of a second; a leap
        second is written as the :60 it is (ERFA's d2dtf, the UTC calendar of the leap-second table), never
        as 23:59:59.999.

        >>> instants(np.array(["2016-12-31T23:59:60.5Z"], dtype=object)).utc_text(1).tolist()
        ['2016-12-31T23:59:60.5']
        """
        import erfa

        year, month, day, hmsf = erfa.d2dtf("UTC", decimals, np.atleast_1d(self.utc1), np.atleast_1d(self.utc2))
        fields = hmsf.view(np.int32).reshape(-1, 4) if hmsf.dtype.names is None else np.stack(
            [hmsf[name] for name in hmsf.dtype.names], axis=-1).reshape(-1, 4)
        texts = [f"{y:04d}-{m:02d}-{d:02d}T{h:02d}:{mi:02d}:{sec:02d}" + (f".{frac:0{decimals}d}" if decimals else "")
                 for y, m, d, (h, mi, sec, frac) in zip(year.ravel().tolist(), month.ravel().tolist(),
                                                         day.ravel().tolist(), fields.tolist())]
        return np.array(texts, dtype=object).reshape(np.shape(self.utc1))

    def __getitem__(self, index) -> Instants:
        return Instants(*(np.asarray(getattr(self, f))[index] for f in INSTANT_FIELDS))

    def broadcast_to(self, shape: tuple[int, ...]) -> Instants:
        return Instants(*(np.broadcast_to(getattr(self, f), shape) for f in INSTANT_FIELDS))

    def ravel(self) -> Instants:
        """The same instants as one flat batch, sharing this batch's :attr:`shared` work."""
        if len(self.shape) == 1:
            return self
        return Instants(*(np.ascontiguousarray(getattr(self, f)).ravel() for f in INSTANT_FIELDS),
                        shared=self.shared)


INSTANT_FIELDS = ("utc1", "utc2", "tt1", "tt2", "ut11", "ut12", "dut1_s", "ut1_source")


def tdb_minus_tt_s(tt1: ArrayLike, tt2: ArrayLike) -> np.ndarray:
    """TDB − TT in seconds, main periodic term (Explanatory Supplement 1992, eq. 2.222-1; from memory).

    Good to about 30 µs, far below anything navigational.
    """
    g = np.radians(357.53 + 0.98560028 * ((np.asarray(tt1) - JD_J2000) + tt2))
    return 0.001657 * np.sin(g) + 0.000014 * np.sin(2.0 * g)


# --- The tables ----------------------------------------------------------------

def _data_file(name: str):
    return importlib.resources.files("astropy_iers_data") / "data" / name


@dataclass(frozen=True)
class LeapSecondTable:
    year: np.ndarray
    month: np.ndarray
    tai_utc_s: np.ndarray
    expires: _dt.date
    source: str


@functools.lru_cache(maxsize=1)
def leap_second_table() -> LeapSecondTable:
    """The IERS leap-second table from astropy-iers-data, loaded into ERFA once."""
    text = _data_file("Leap_Second.dat").read_text()
    rows = [line.split() for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    data = np.array([[float(r[0]), int(r[2]), int(r[3]), float(r[4])] for r in rows])
    match = re.search(r"File expires on\s+(\d+)\s+(\w+)\s+(\d{4})", text)
    expires = (_dt.datetime.strptime(" ".join(match.groups()), "%d %B %Y").date()
               if match else _dt.date(1900, 1, 1))
    table = np.zeros(len(data), dtype=[("year", "i4"), ("month", "i4"), ("tai_utc", "f8")])
    table["year"], table["month"], table["tai_utc"] = data[:, 2], data[:, 1], data[:, 3]
    erfa.leap_seconds.update(table)
    return LeapSecondTable(table["year"].copy(), table["month"].copy(), table["tai_utc"].copy(),
                           expires, "astropy-iers-data Leap_Second.dat")


@dataclass(frozen=True)
class IersTable:
    mjd: np.ndarray
    ut1_minus_tai_s: np.ndarray
    dut1_s: np.ndarray
    last_measured_mjd: float
    last_predicted_mjd: float
    source: str

    @property
    def last_measured_date(self) -> str:
        return str(np.datetime64(int(self.last_measured_mjd) - 40587, "D"))

    @property
    def last_predicted_date(self) -> str:
        return str(np.datetime64(int(self.last_predicted_mjd) - 40587, "D"))


@functools.lru_cache(maxsize=1)
def iers_table() -> IersTable:
    """UT1 − UTC from the IERS finals2000A.all table (columns per ReadMe.finals2000A)."""
    leap_second_table()
    lines = _data_file("finals2000A.all").read_text().splitlines()
    mjd, flag, dut1 = [], [], []
    for line in lines:
        if len(line) < 68 or line[57] not in "IP":
            continue
        mjd.append(float(line[7:15]))
        flag.append(line[57])
        dut1.append(float(line[58:68]))
    mjd_a, dut1_a = np.array(mjd), np.array(dut1)
    flags = np.array(flag)
    y, m, d, _ = erfa.jd2cal(_MJD0, mjd_a)
    tai_utc = erfa.dat(y, m, d, 0.0)
    return IersTable(mjd_a, dut1_a - tai_utc, dut1_a,
                     float(mjd_a[flags == "I"].max()), float(mjd_a.max()),
                     "astropy-iers-data finals2000A.all")


# --- Reading instants ------------------------------------------------------------

def _components_from_datetime64(values: np.ndarray):
    ns = values.astype("datetime64[ns]")
    days = ns.astype("datetime64[D]")
    years = days.astype("datetime64[Y]")
    months = days.astype("datetime64[M]")
    year = years.astype(int) + 1970
    month = (months - years).astype(int) + 1
    day = (days - months).astype(int) + 1
    seconds_of_day = (ns - days).astype("timedelta64[ns]").astype(np.int64) / NS_PER_SECOND
    hour = (seconds_of_day // SECONDS_PER_HOUR).astype(int)
    minute = ((seconds_of_day - hour * SECONDS_PER_HOUR) // SECONDS_PER_MINUTE).astype(int)
    second = seconds_of_day - hour * SECONDS_PER_HOUR - minute * SECONDS_PER_MINUTE
    return year, month, day, hour, minute, second, np.zeros(values.shape)


#: The largest UTC offset in use is +14:00 (Kiribati) and the most negative −12:00; ISO 8601
#: offsets beyond ±14:00, or with 60 or more minutes, are refused (common practice).
MAX_OFFSET_MINUTES = 14 * 60


def offset_minutes(zone: str) -> float:
    """An ISO 8601 zone designator (``Z``, ``+03:00``, ``-0530``, ``+03``) in minutes east of UTC.

    >>> offset_minutes("+05:30"), offset_minutes("Z")
    (330.0, 0.0)
    """
    text = zone.strip()
    if text.upper() in ("Z", "UTC"):
        return 0.0
    match = re.fullmatch(r"([+-])(\d{2}):?(\d{2})?", text)
    if not match:
        raise TimeInputError(f"cannot read the zone {zone!r}; accepted: Z or an offset such as +03:00 or -05:30")
    hours, minutes = int(match.group(2)), int(match.group(3) or 0)
    if minutes >= 60 or hours * 60 + minutes > MAX_OFFSET_MINUTES:
        raise TimeInputError(f"UTC offset {zone!r} is not a real one: offsets lie within ±14:00 and their "
                             "minutes below 60")
    return float((hours * 60 + minutes) * (-1 if match.group(1) == "-" else 1))


def iso_zone_missing(text: str) -> bool:
    """Whether ISO 8601 date-time text gives no zone (no Z and no offset); False for anything else.

    >>> iso_zone_missing("2026-03-26 19:41:00"), iso_zone_missing("2026-03-26T19:41:00Z")
    (True, False)
    """
    match = _ISO.match(text)
    return bool(match) and match.group(7) is None


def _components_from_one(value, index) -> tuple:
    """(y, m, d, h, mi, s, offset_minutes) for one instant, or raise with the reason."""
    if isinstance(value, str):
        match = _ISO.match(value)
        if not match:
            raise TimeInputError(f"cannot read {value!r} as an instant; {_ACCEPTED}")
        y, mo, d, h, mi, s, zone = match.groups()
        if zone is None:
            raise TimeInputError(
                f"{value!r} has no time zone; write Z for UTC or an offset such as +03:00 "
                "(a wrong zone is a 15° per hour longitude error)")
        second = float(s.replace(",", ".")) if s else 0.0
        return int(y), int(mo), int(d), int(h), int(mi), second, offset_minutes(zone)
    if isinstance(value, _dt.datetime):
        if value.tzinfo is None or value.utcoffset() is None:
            raise TimeInputError(
                f"naive datetime {value!s} has no time zone; give a timezone-aware datetime "
                "(e.g. tzinfo=datetime.timezone.utc)")
        u = value.astimezone(_dt.timezone.utc)
        extra_ns = getattr(value, "nanosecond", 0)
        return (u.year, u.month, u.day, u.hour, u.minute,
                u.second + u.microsecond * 1e-6 + extra_ns * 1e-9, 0.0)
    if isinstance(value, np.datetime64):
        if np.isnat(value):
            raise TimeInputError(f"element {index} is NaT (not a time); {_ACCEPTED}")
        comps = _components_from_datetime64(np.array([value]))
        return tuple(c[0] for c in comps)
    if isinstance(value, _dt.date):
        raise TimeInputError(f"{value!s} is a date without a time of day; {_ACCEPTED}")
    raise TimeInputError(f"cannot read {value!r} (type {type(value).__name__}) as an instant; {_ACCEPTED}")


def _to_numpy_input(utc):
    """Turn pandas objects into numpy without importing pandas."""
    if hasattr(utc, "dt") and hasattr(utc, "dtype"):  # pandas Series
        tz = getattr(utc.dt, "tz", None) if str(utc.dtype).startswith("datetime64") else None
        if str(utc.dtype).startswith("datetime64"):
            if tz is None:
                raise TimeInputError(
                    "the pandas Series of times has no time zone; localize it to UTC "
                    "(series.dt.tz_localize('UTC')) or convert it (series.dt.tz_convert('UTC'))")
            return utc.dt.tz_convert("UTC").dt.tz_localize(None).to_numpy()
        return utc.to_numpy(dtype=object)
    if hasattr(utc, "tz") and hasattr(utc, "to_numpy") and hasattr(utc, "dtype"):  # DatetimeIndex
        if utc.tz is None:
            raise TimeInputError("the pandas DatetimeIndex has no time zone; localize it to UTC")
        return utc.tz_convert("UTC").tz_localize(None).to_numpy()
    return utc


def instant_components(utc: object) -> tuple[np.ndarray, ...]:
    """Calendar components as written (y, m, d, h, mi, s, offset minutes east of UTC) from any accepted form.

    Nothing is validated or shifted here: :func:`utc_julian_date_from_components` does both.
    """
    utc = _to_numpy_input(utc)
    if isinstance(utc, np.ndarray) and np.issubdtype(utc.dtype, np.datetime64):
        nat = np.isnat(utc)
        if nat.any():
            raise TimeInputError(f"NaT (not a time) in {failed_elements(nat)}; {_ACCEPTED}")
        return tuple(np.asarray(c) for c in _components_from_datetime64(utc))
    items = np.asarray(utc, dtype=object) if not isinstance(utc, (str, _dt.datetime)) else np.array(utc, dtype=object)
    if items.ndim == 0:
        items = np.empty((), dtype=object)
        items[()] = utc
    out = np.zeros((7,) + items.shape)
    bad = np.zeros(items.shape, dtype=bool)
    first = ""
    for index, value in np.ndenumerate(items):
        try:
            out[(slice(None),) + index] = _components_from_one(value, index)
        except TimeInputError as exc:
            bad[index] = True
            first = first or str(exc)
    if bad.any():
        if items.size == 1:  # one instant: its own reason, no count of elements
            raise TimeInputError(first)
        raise TimeInputError(f"instants that could not be read: {failed_elements(bad)}; first: {first}")
    return tuple(out)


def _date64(year, month, day):
    y = np.asarray(year, dtype=int)
    base = (y - 1970).astype("timedelta64[Y]") + np.datetime64("1970", "Y")
    months = base.astype("datetime64[M]") + (np.asarray(month, dtype=int) - 1).astype("timedelta64[M]")
    return months.astype("datetime64[D]") + (np.asarray(day, dtype=int) - 1).astype("timedelta64[D]")


def _ymd(dates):
    years = dates.astype("datetime64[Y]")
    months = dates.astype("datetime64[M]")
    return (years.astype(int) + 1970, (months - years).astype(int) + 1,
            (dates - months).astype(int) + 1)


CALENDAR_RULE = "month 1-12, day within the month, hour 0-23, minute 0-59, second 0-60.999"
_SPAN_TEXT = f"outside {FIRST_YEAR}-{LAST_YEAR}, the span of the JPL DE421 ephemeris navred uses"
_LEAP_TEXT = "second 60, but only 23:59:60 UTC on a day that ends with a leap second is a real instant"


def utc_julian_date_from_components(year: ArrayLike, month: ArrayLike, day: ArrayLike, hour: ArrayLike,
                                    minute: ArrayLike, second: ArrayLike, offset_minutes: ArrayLike = 0.0
                                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Two-part UTC Julian dates, and the reason each element is refused ('' where it is not).

    The components are a calendar date and time of day in a zone ``offset_minutes`` east
    of UTC. The date and time are checked as written (so 30 February is refused whatever
    the zone), then shifted to UTC by whole minutes, keeping the seconds so that a leap
    second written in any zone survives; a second 60 must then be 23:59:60 UTC on a day
    that ends with a leap second, and the instant must lie in 1900-2050 (the ephemeris).
    Refused elements have NaN dates. Vectorised; never raises for a bad element.
    """
    leap_second_table()
    year, month, day, hour, minute, second, offset = np.broadcast_arrays(
        *(np.asarray(v, dtype=float) for v in (year, month, day, hour, minute, second, offset_minutes)))
    reasons = np.full(year.shape, "", dtype=object)
    with np.errstate(invalid="ignore"):
        finite = np.isfinite(year) & np.isfinite(month) & np.isfinite(day) & np.isfinite(hour) \
            & np.isfinite(minute) & np.isfinite(second) & np.isfinite(offset)
        whole = finite & (year == np.round(year)) & (month == np.round(month)) & (day == np.round(day)) \
            & (hour == np.round(hour)) & (minute == np.round(minute))
        bad = ~whole | (month < 1) | (month > 12) | (day < 1) | (day > 31) | (hour < 0) | (hour > 23) \
            | (minute < 0) | (minute > 59) | (second < 0) | (second >= 61) | (year < 1) | (year > 9999)
    safe = [np.where(bad, fill, v).astype(int) for v, fill in ((year, 2000), (month, 1), (day, 1))]
    real = _ymd(_date64(*safe))
    bad |= (real[1] != safe[1]) | (real[2] != safe[2])
    reasons[bad] = f"not a valid calendar instant ({CALENDAR_RULE})"
    ok = ~bad
    y, mo, d = (np.where(ok, v, fill) for v, fill in zip(safe, (2000, 1, 1)))
    h, mi = np.where(ok, hour, 0).astype(int), np.where(ok, minute, 0).astype(int)
    s, off = np.where(ok, second, 0.0), np.where(ok, offset, 0.0)
    if np.any(off != 0.0):
        # shift by whole minutes of the zone offset, keeping the seconds (so a leap second survives)
        total = h * 60 + mi - off
        day_shift = np.floor(total / 1440.0)
        total = total - day_shift * 1440.0
        h, mi = (total // 60).astype(int), (total % 60).astype(int)
        y, mo, d = _ymd(_date64(y, mo, d) + day_shift.astype(int).astype("timedelta64[D]"))
    out_of_span = ok & ((y < FIRST_YEAR) | (y > LAST_YEAR))
    reasons[out_of_span] = [f"year {v} is {_SPAN_TEXT}" for v in y[out_of_span]]
    ok &= ~out_of_span
    leap = ok & (s >= 60.0)
    if leap.any():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)
            today = erfa.dat(y, mo, d, 0.0)
            tomorrow = erfa.dat(*_ymd(_date64(y, mo, d) + np.timedelta64(1, "D")), 0.0)
        not_leap = leap & ~((h == 23) & (mi == 59) & (tomorrow - today == 1.0))
        reasons[not_leap] = _LEAP_TEXT
        ok &= ~not_leap
    y, mo, d = (np.where(ok, v, fill) for v, fill in zip((y, mo, d), (2000, 1, 1)))
    h, mi, s = np.where(ok, h, 0), np.where(ok, mi, 0), np.where(ok, s, 0.0)
    pre_utc = _date64(y, mo, d) < np.datetime64("1960-01-01")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        jd1, jd2 = erfa.dtf2d("UTC", y, mo, d, h, mi, s)
        if pre_utc.any():
            # before UTC existed ERFA's dtf2d has no leap-second table: use plain calendar JDs
            p1, p2 = erfa.dtf2d("", y, mo, d, h, mi, s)
            jd1, jd2 = np.where(pre_utc, p1, jd1), np.where(pre_utc, p2, jd2)
    jd1 = np.where(ok, jd1, np.nan)
    jd2 = np.where(ok, jd2, np.nan)
    return np.asarray(jd1, dtype=float), np.asarray(jd2, dtype=float), reasons


def utc_julian_date(utc: object) -> tuple[np.ndarray, np.ndarray]:
    """Two-part UTC (quasi-)Julian date from any accepted instant form.

    Refuses instants with no zone, impossible calendar values (checked as written, before
    the zone is applied), a second 60 that is not a leap second, offsets beyond ±14:00, and
    instants outside 1900-2050 (the ephemeris).

    >>> jd1, jd2 = utc_julian_date("2000-01-01T12:00:00Z")
    >>> float(jd1 + jd2)
    2451545.0
    """
    utc = _to_numpy_input(utc)
    if isinstance(utc, (list, tuple, np.ndarray)) and len(utc) > 1:
        stamps = iso_z_datetime64(utc)
        if stamps is not None:
            utc = stamps
    if isinstance(utc, np.ndarray) and np.issubdtype(utc.dtype, np.datetime64):
        fast = _utc_julian_date_from_datetime64(utc)
        if fast is not None:
            return fast
    jd1, jd2, reasons = utc_julian_date_from_components(*instant_components(utc))
    bad = reasons != ""
    if bad.any():
        first = reasons[bad].ravel()[0]
        if first.startswith("not a valid"):
            raise TimeInputError(f"not a valid calendar instant: {failed_elements(bad)}; accepted: {CALENDAR_RULE}")
        if _SPAN_TEXT in first:
            years = [r.split()[1] for r in reasons[bad].ravel() if _SPAN_TEXT in r]
            raise TimeInputError(f"{_SPAN_TEXT}: {failed_elements(bad)} (first offending year {years[0]})")
        raise TimeInputError(f"{_LEAP_TEXT}: {failed_elements(bad)}")
    return jd1, jd2


_FAST_START_MJD = 41317.0  # 1972-01-01: from here TAI − UTC is a whole number of seconds


@functools.lru_cache(maxsize=1)
def _whole_second_steps() -> tuple[np.ndarray, np.ndarray]:
    """(MJD from which each TAI − UTC value holds, the value in s) for 1972 on, from the leap-second table."""
    table = leap_second_table()
    starts = erfa.cal2jd(table.year, table.month, np.ones_like(table.year))[1]
    keep = starts >= _FAST_START_MJD
    return np.asarray(starts[keep], dtype=float), np.asarray(table.tai_utc_s[keep], dtype=float)


def tai_minus_utc_fast_s(mjd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """TAI − UTC in seconds for UTC MJDs, and where that is exact without ERFA.

    From 1972 TAI − UTC is a whole number of seconds that changes only after a leap second,
    so it is one table lookup (IERS Bulletin C; the same table ERFA's ``dat`` holds). An instant
    before 1972, or on a day that ends with a leap second (ERFA stretches that day's quasi-JD to
    86,401 s), is not covered and goes through ERFA.
    """
    starts, values = _whole_second_steps()
    day = np.floor(mjd)
    following = np.searchsorted(starts, day, side="right")  # the next step's index
    at = np.clip(following - 1, 0, len(values) - 1)
    ends_with_leap = day + 1.0 == starts[np.minimum(following, len(starts) - 1)]
    covered = (day >= _FAST_START_MJD) & ~ends_with_leap
    return np.array(values[at], dtype=float), np.asarray(covered)


def _utc_julian_date_from_datetime64(values: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
    """Two-part UTC JDs straight from datetime64 (taken as UTC), or None when an element needs the
    careful path (NaT, outside 1972-2050, a day that ends with a leap second)."""
    ns = values.astype("datetime64[ns]")
    if np.isnat(ns).any():
        return None
    days, rest = np.divmod(ns.astype(np.int64), NS_PER_DAY)
    mjd = days + (JD_UNIX_EPOCH - _MJD0)
    _, covered = tai_minus_utc_fast_s(mjd.astype(float))
    if not covered.all() or (days > (_END_JD - JD_UNIX_EPOCH - 1)).any():
        return None
    # the layout of ERFA's dtf2d: the Julian date of 0h, and the fraction of the day
    return days + JD_UNIX_EPOCH, rest / NS_PER_DAY


_DIGITS = (0, 1, 2, 3, 5, 6, 8, 9, 11, 12, 14, 15, 17, 18)


def iso_z_datetime64(values) -> np.ndarray | None:
    """ISO 8601 UTC instants written ``YYYY-MM-DDTHH:MM:SS[.fff]Z`` (a T or a space between), read in
    bulk by numpy's date parser; None unless every element has exactly that form and is a real
    calendar instant (anything else, a leap second among them, is left to the careful reader)."""
    items = np.asarray(values)
    if items.ndim != 1 or items.dtype.kind not in "UO" or items.size == 0:
        return None
    if items.dtype.kind == "O":
        listed = items.tolist()
        try:
            "".join(listed)  # every element a text (told at once: the join refuses anything else)
        except TypeError:
            return None
        items = items.astype(str)
    lengths = np.strings.str_len(items) if hasattr(np, "strings") else np.char.str_len(items)
    width = int(lengths.max())
    if lengths.min() < 20 or width > 40:
        return None
    chars = np.ascontiguousarray(items.astype(f"U{width}")).view("U1").reshape(items.size, width)
    codes = chars.view(np.uint32)  # each character's code point: an ASCII digit is 48 to 57
    last = codes[np.arange(items.size), lengths - 1]
    fraction = lengths > 20
    digit = (codes - 48) < 10  # (unsigned: below 48 wraps round to a large number)
    shape_ok = ((codes[:, 4] == 45) & (codes[:, 7] == 45) & ((codes[:, 10] == 84) | (codes[:, 10] == 32))
                & (codes[:, 13] == 58) & (codes[:, 16] == 58) & (last == 90) & np.all(digit[:, _DIGITS], axis=1)
                & (~fraction | (codes[:, 19] == 46)))
    if fraction.any():
        inside = (np.arange(width)[None, :] >= 20) & (np.arange(width)[None, :] < (lengths - 1)[:, None])
        shape_ok &= ~np.any(inside & ~digit, axis=1) & (~fraction | (lengths > 21))
    if not shape_ok.all():
        return None
    chars[:, 10] = "T"
    chars[np.arange(items.size), lengths - 1] = ""
    text = chars.view(f"U{width}").ravel()
    try:
        return text.astype("datetime64[ns]")
    except ValueError:  # not a calendar instant (30 February, a leap second 23:59:60): the careful reader says why
        return None


def utc_minus_seconds(utc1: ArrayLike, utc2: ArrayLike, seconds: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """UTC Julian dates moved back by ``seconds`` of elapsed time (through TAI, so a leap second counts)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        tai1, tai2 = erfa.utctai(utc1, utc2)
        return erfa.taiutc(tai1, np.asarray(tai2) - np.asarray(seconds, dtype=float) / SECONDS_PER_DAY)


def delta_t_before_1960_s(year_fraction: ArrayLike) -> np.ndarray:
    """TT − UT in seconds for 1900-1960, Espenak & Meeus (2006) polynomials (NASA eclipse site; from memory)."""
    y = np.asarray(year_fraction, dtype=float)
    t1, t2, t3 = y - 1900.0, y - 1920.0, y - 1950.0
    a = -2.79 + 1.494119 * t1 - 0.0598939 * t1**2 + 0.0061966 * t1**3 - 0.000197 * t1**4
    b = 21.20 + 0.84493 * t2 - 0.076100 * t2**2 + 0.0020936 * t2**3
    c = 29.07 + 0.407 * t3 - t3**2 / 233.0 + t3**3 / 2547.0
    return np.where(y < 1920.0, a, np.where(y < 1941.0, b, c))


def _check_dut1(dut1_s, shape):
    dut1 = np.asarray(dut1_s, dtype=float)
    try:
        dut1 = np.broadcast_to(dut1, shape)
    except ValueError:
        raise TimeInputError(
            f"dut1_s has shape {np.shape(dut1_s)} but there are {shape} instants; give one value "
            "or one per instant") from None
    bad = ~np.isfinite(dut1) | (np.abs(dut1) > 100.0)
    if bad.any():
        raise TimeInputError(
            f"dut1_s must be finite seconds within ±100 s; refused: {failed_elements(bad)} "
            "(UT1 − UTC is kept within 0.9 s; radio time signals give it to 0.1 s)")
    large = np.abs(dut1) > 0.9
    if large.any():
        warnings.warn(
            f"dut1_s over 0.9 s in size ({failed_elements(large)}), which UT1 − UTC never is "
            f"since 1972 (first: {dut1[large].ravel()[0]:+.3f} s); check the value and its unit",
            NavredWarning, stacklevel=3)
    return dut1


def instants(utc: object, dut1_s: ArrayLike | None = None) -> Instants:
    """Every time scale for a batch of UTC instants.

    ``dut1_s`` (UT1 − UTC in seconds, a scalar or one per instant) overrides the
    IERS table, as at sea where it comes from radio time signals. Instants past
    the IERS table use the last predicted value and raise one
    :class:`NavredWarning` giving the possible GHA error; instants after the
    leap-second file's expiry date raise another.
    """
    if isinstance(utc, Instants):
        if dut1_s is None:
            return utc
        utc1, utc2 = utc.utc1, utc.utc2
    else:
        utc1, utc2 = utc_julian_date(utc)
    if dut1_s is not None:
        dut1_s = _check_dut1(dut1_s, np.shape(utc1)).astype(float)
    return instants_from_utc_jd(utc1, utc2, dut1_s)


def instants_from_utc_jd(utc1: ArrayLike, utc2: ArrayLike, dut1_s: ArrayLike | None = None) -> Instants:
    """Every time scale for instants given as two-part UTC Julian dates (already checked).

    ``dut1_s`` as in :func:`instants`, except that a NaN element takes DUT1 from the IERS
    table (a log whose rows give DUT1 on some sights and not on others).
    """
    utc1, utc2 = np.broadcast_arrays(np.asarray(utc1, dtype=float), np.asarray(utc2, dtype=float))
    pre_utc = (utc1 + utc2) < _UTC_START_JD
    table = iers_table()
    mjd = (utc1 - _MJD0) + utc2
    tai_utc, covered = tai_minus_utc_fast_s(mjd)
    if not covered.all():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)
            y, m, d, _ = erfa.jd2cal(utc1[~covered], utc2[~covered])
            tai_utc[~covered] = erfa.dat(y, m, d, 0.0)
    dut1, source = _dut1_s(mjd, tai_utc, dut1_s, pre_utc, table)
    _warn_leap_seconds_expired(utc1, utc2, pre_utc)
    tt1, tt2, ut11, ut12 = _tt_and_ut1(utc1, utc2, tai_utc, covered, dut1, pre_utc)
    return Instants(np.asarray(utc1), np.asarray(utc2), np.asarray(tt1), np.asarray(tt2),
                    np.asarray(ut11), np.asarray(ut12), np.asarray(dut1, dtype=float),
                    _SOURCES[np.ravel(source)].reshape(utc1.shape))


def _dut1_s(mjd: np.ndarray, tai_utc: np.ndarray, dut1_s: ArrayLike | None, pre_utc: np.ndarray, table):
    """DUT1 (seconds) at each instant and the code of its source: given (a radio time signal), the IERS table
    (measured or predicted), held at the table's last prediction beyond it (warned), 0 before it (warned), 0
    before UTC began."""
    shape = mjd.shape
    given = np.zeros(shape, dtype=bool)
    if dut1_s is not None:
        given_dut1 = np.broadcast_to(np.asarray(dut1_s, dtype=float), shape)
        given = np.isfinite(given_dut1)
    if dut1_s is not None and given.all():
        dut1 = np.array(given_dut1, dtype=float)
        source = np.full(shape, _SOURCE_CODE[UT1_GIVEN], dtype=np.int8)
    else:
        ut1_tai = np.interp(mjd, table.mjd, table.ut1_minus_tai_s)
        dut1 = ut1_tai + tai_utc
        beyond = (mjd > table.last_predicted_mjd) & ~given
        before = (mjd < table.mjd[0]) & ~given
        dut1 = np.where(beyond, table.dut1_s[-1], dut1)
        dut1 = np.where(before, 0.0, dut1)
        source = np.where(mjd <= table.last_measured_mjd, _SOURCE_CODE[UT1_MEASURED],
                          _SOURCE_CODE[UT1_PREDICTED]).astype(np.int8)
        source[beyond] = _SOURCE_CODE[UT1_BEYOND]
        source[before] = _SOURCE_CODE[UT1_BEFORE]
        if beyond.any():
            _warn_instants(beyond, f"after {table.last_predicted_date}, the end of the IERS table: DUT1 is held at "
                           f"its last predicted value {table.dut1_s[-1]:+.3f} s. Take DUT1 from a radio time signal if "
                           "you can (the log's dut1 column, --dut1 on the command line, dut1_s= in Python): every 0.9 s "
                           "of DUT1 error is 0.225′ of GHA, about 0.2 nautical mile of longitude at the equator.")
        before_utc_table = before & ~pre_utc
        if before_utc_table.any():
            _warn_instants(before_utc_table, "before the IERS table of 1973-01-02: DUT1 is "
                           "taken as 0 s, good to about 0.1 s from 1960 to 1972 when UTC was steered to UT1 "
                           "(at most 0.025′ of GHA).")
        if given.any():
            dut1 = np.where(given, given_dut1, dut1)
            source[given] = _SOURCE_CODE[UT1_GIVEN]
    dut1 = np.where(pre_utc, 0.0, dut1)
    source[pre_utc] = _SOURCE_CODE[UT1_PRE_UTC]
    return dut1, source


def _warn_leap_seconds_expired(utc1: np.ndarray, utc2: np.ndarray, pre_utc: np.ndarray) -> None:
    """A warning for instants after the expiry date of the installed leap-second table."""
    expires = leap_second_table().expires
    expiry_jd = erfa.cal2jd(expires.year, expires.month, expires.day)
    late = ~pre_utc & ((utc1 + utc2) > sum(expiry_jd))
    if late.any():
        _warn_instants(late,
            f"after {expires.isoformat()}, the expiry date of the installed leap-second "
            "table: a leap second may have been announced since. UTC as kept aboard is right whatever the table "
            "says (check the chronometer against a radio time signal), but the almanac's time scales may be 1 s "
            "out (TT: about 0.5″ of the Moon's place, which moves about 33′ an hour; UT1 and so GHA: 15″, 0.25′ of "
            "longitude, unless DUT1 is taken from a time signal). Update astropy-iers-data.")


def _instants(mask: np.ndarray) -> str:
    """The instants a warning is about, in words: 'the instant' for one, else which (counted from 1)."""
    return "the instant is" if np.asarray(mask).size == 1 else f"{failed_elements(mask).capitalize()} are instants"


def _warn_instants(mask: np.ndarray, about: str) -> None:
    """Warn about the instants of a batch where ``mask`` is true (:class:`navred.errors.InstantsWarning`: the
    words without them and their places, for a caller that names them by the rows of a log)."""
    mask = np.asarray(mask, dtype=bool)
    warnings.warn(InstantsWarning(f"{_instants(mask)} {about}", f"instants {about}", np.flatnonzero(mask.ravel())),
                  stacklevel=4)


def _tt_and_ut1(utc1, utc2, tai_utc, covered, dut1, pre_utc):
    """TT and UT1 (two-part Julian dates) from UTC.

    UTC -> TAI -> TT and UTC -> UT1 (IERS Conventions 2010, ch. 5): from 1972, away from the days that end with
    a leap second, TAI = UTC + (TAI − UTC) and UT1 = UTC + DUT1, as ERFA's utctai and utcut1 compute them; the
    other instants go through ERFA; before UTC (1960), TT = UT + ΔT and UT1 = UT.
    """
    tt1, ut11 = utc1, utc1
    tt2 = utc2 + (tai_utc + TT_MINUS_TAI_S) / SECONDS_PER_DAY
    ut12 = utc2 + dut1 / SECONDS_PER_DAY
    if not covered.all():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)
            u1, u2 = utc1[~covered], utc2[~covered]
            tai1, tai2 = erfa.utctai(u1, u2)
            slow_tt1, slow_tt2 = erfa.taitt(tai1, tai2)
            slow_ut11, slow_ut12 = erfa.utcut1(u1, u2, np.broadcast_to(dut1, utc1.shape)[~covered])
        tt1, tt2, ut11, ut12 = (np.array(a, dtype=float, copy=True) for a in (tt1, tt2, ut11, ut12))
        tt1[~covered], tt2[~covered] = slow_tt1, slow_tt2
        ut11[~covered], ut12[~covered] = slow_ut11, slow_ut12
    if pre_utc.any():
        year_fraction = 2000.0 + ((utc1 - JD_J2000) + utc2) / DAYS_PER_JULIAN_YEAR
        delta_t = delta_t_before_1960_s(year_fraction)
        tt1 = np.where(pre_utc, utc1, tt1)
        tt2 = np.where(pre_utc, utc2 + delta_t / SECONDS_PER_DAY, tt2)
        ut11, ut12 = np.where(pre_utc, utc1, ut11), np.where(pre_utc, utc2, ut12)
    return tt1, tt2, ut11, ut12


def utc_datetime64(utc: object) -> np.datetime64 | np.ndarray:
    """UTC instants in any form navred accepts (:func:`utc_julian_date`), as numpy datetime64[ns]: one
    instant for one given, an array for several. A numpy datetime64 is taken as UTC as it stands."""
    if isinstance(utc, (np.ndarray, np.datetime64)) and np.issubdtype(np.asarray(utc).dtype, np.datetime64):
        return np.asarray(utc).astype("datetime64[ns]")[()]
    return utc_jd_to_datetime64(*utc_julian_date(utc))[()]


def utc_jd_to_seconds_text(utc1: ArrayLike, utc2: ArrayLike, zone_h: ArrayLike = 0.0) -> np.ndarray:
    """UTC (or the zone time of a whole-hour zone, ZT = UTC − ZD) as 'YYYY-MM-DD hh:mm:ss' text, ROUNDED to the
    nearest second (ERFA's d2dtf, which knows the leap-second table), a leap second written as the :60 it is.

    A time cut to the second shows a sight up to a second early (0.25′ of longitude); 23:59:59.999 is not the
    leap second 23:59:60.

    >>> jd1, jd2 = utc_julian_date_from_components(2016, 12, 31, 23, 59, 60.4)[:2]
    >>> utc_jd_to_seconds_text(jd1, jd2).tolist(), utc_jd_to_seconds_text(jd1, jd2, -1.0).tolist()
    (['2016-12-31 23:59:60'], ['2017-01-01 00:59:60'])
    """
    utc1, utc2 = np.atleast_1d(np.asarray(utc1, dtype=float)), np.atleast_1d(np.asarray(utc2, dtype=float))
    known = np.isfinite(utc1) & np.isfinite(utc2)
    if not known.all():  # no instant: no text
        out = np.full(utc1.shape, "", dtype=object)
        if known.any():
            out[known] = utc_jd_to_seconds_text(utc1[known], utc2[known],
                                                np.broadcast_to(zone_h, utc1.shape)[known])
        return out
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        y, m, d, ihmsf = erfa.d2dtf("UTC", 0, utc1, utc2)
    ihmsf = np.asarray(ihmsf)
    hours = ihmsf["h"].astype(np.int64) - np.rint(np.broadcast_to(zone_h, utc1.shape)).astype(np.int64)
    start = _date64(y, m, d).astype("datetime64[h]") + hours.astype("timedelta64[h]")
    hour_text = np.datetime_as_string(start, unit="h")  # 'YYYY-MM-DDThh'
    seconds = ihmsf["s"].astype(np.int64)
    return np.array([f"{t[:10]} {t[11:13]}:{mi:02d}:{sec:02d}" for t, mi, sec in
                     zip(hour_text.tolist(), ihmsf["m"].tolist(), seconds.tolist())], dtype=object)


def utc_jd_to_datetime64(utc1: ArrayLike, utc2: ArrayLike) -> np.ndarray:
    """numpy datetime64[ns] for two-part UTC Julian dates (leap second clipped to :59.999999999)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        y, m, d, ihmsf = erfa.d2dtf("UTC", 9, utc1, utc2)
    ihmsf = np.asarray(ihmsf)
    h, mi, s, f = ihmsf["h"], ihmsf["m"], ihmsf["s"], ihmsf["f"]
    s = np.minimum(s, 59)
    f = np.where(ihmsf["s"] >= 60, 999999999, f)
    days = _date64(y, m, d).astype("datetime64[ns]")
    ns = ((h.astype(np.int64) * 60 + mi) * 60 + s) * NS_PER_SECOND + f
    return days + ns.astype("timedelta64[ns]")

