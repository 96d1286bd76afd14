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
from dataclasses import dataclass

import erfa
import numpy as np
from numpy.typing import ArrayLike

from .constants import JD_J2000, SECONDS_PER_DAY
from .errors import NavredWarning, TimeInputError, failed_elements

#: The span navred accepts: the JPL DE421 ephemeris covers 1899-07-29 to 2053-10-09.
FIRST_YEAR, LAST_YEAR = 1900, 2050
_FIRST_JD = 2415020.5  # 1900-01-01 0h
_END_JD = 2469807.5  # 2051-01-01 0h
_MJD0 = 2400000.5
_UTC_START_JD = 2436934.5  # 1960-01-01: ERFA's UTC (with its pre-1972 drift rates) starts here

UT1_MEASURED = "IERS measured"
UT1_PREDICTED = "IERS predicted"
UT1_BEYOND = "beyond the IERS table"
UT1_BEFORE = "before the IERS table"
UT1_GIVEN = "given by the caller"
UT1_PRE_UTC = "before 1960: time taken as UT"

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

    def __getitem__(self, index) -> Instants:
        return Instants(*(np.asarray(getattr(self, f))[index] for f in INSTANT_FIELDS))

    def broadcast_to(self, shape: tuple[int, ...]) -> Instants:
        return Instants(*(np.broadcast_to(getattr(self, f), shape) for f in INSTANT_FIELDS))

    def ravel(self) -> Instants:
        return Instants(*(np.ascontiguousarray(getattr(self, f)).ravel() for f in INSTANT_FIELDS))


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
    seconds_of_day = (ns - days).astype("timedelta64[ns]").astype(np.int64) / 1e9
    hour = (seconds_of_day // 3600).astype(int)
    minute = ((seconds_of_day - hour * 3600) // 60).astype(int)
    second = seconds_of_day - hour * 3600 - minute * 60
    return year, month, day, hour, minute, second, np.zeros(values.shape)


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
        offset = 0.0
        if zone[0] in "+-":
            digits = zone[1:].replace(":", "")
            offset = (int(digits[:2]) * 60 + (int(digits[2:]) if len(digits) > 2 else 0))
            offset *= -1 if zone[0] == "-" else 1
        second = float(s.replace(",", ".")) if s else 0.0
        return int(y), int(mo), int(d), int(h), int(mi), second, float(offset)
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


def utc_components(utc: object) -> tuple[np.ndarray, ...]:
    """UTC calendar components (y, m, d, h, mi, s) arrays from any accepted instant form."""
    utc = _to_numpy_input(utc)
    if isinstance(utc, np.ndarray) and np.issubdtype(utc.dtype, np.datetime64):
        nat = np.isnat(utc)
        if nat.any():
            raise TimeInputError(f"NaT (not a time) in {failed_elements(nat)}; {_ACCEPTED}")
        comps = _components_from_datetime64(utc)
    else:
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
            if items.ndim == 0:
                raise TimeInputError(first)
            raise TimeInputError(f"instants that could not be read: {failed_elements(bad)}; first: {first}")
        comps = tuple(out)
    year, month, day, hour, minute, second, offset = (np.asarray(c) for c in comps)
    if np.any(offset != 0.0):
        # shift by whole minutes of the zone offset, keeping the seconds (so a leap second survives)
        total = hour * 60 + minute - offset
        day_shift = np.floor(total / 1440.0)
        total = total - day_shift * 1440.0
        hour, minute = total // 60, total % 60
        dates = _date64(year, month, day) + day_shift.astype("timedelta64[D]")
        year, month, day = _ymd(dates)
    return (year.astype(int), month.astype(int), day.astype(int), hour.astype(int),
            minute.astype(int), second.astype(float))


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


def utc_julian_date(utc: object) -> tuple[np.ndarray, np.ndarray]:
    """Two-part UTC (quasi-)Julian date from any accepted instant form.

    Refuses instants with no zone, impossible calendar values, a second 60
    that is not a leap second, and instants outside 1900-2050 (the ephemeris).

    >>> jd1, jd2 = utc_julian_date("2000-01-01T12:00:00Z")
    >>> float(jd1 + jd2)
    2451545.0
    """
    leap_second_table()
    year, month, day, hour, minute, second = utc_components(utc)
    bad_calendar = ((month < 1) | (month > 12) | (day < 1) | (day > 31) | (hour > 23)
                    | (minute > 59) | (second < 0) | (second >= 61))
    if not bad_calendar.any():
        real_days = _ymd(_date64(year, month, day))
        bad_calendar |= (real_days[1] != month) | (real_days[2] != day)
    if bad_calendar.any():
        raise TimeInputError(
            f"not a valid calendar instant: {failed_elements(bad_calendar)}; accepted: month 1-12, "
            "day within the month, hour 0-23, minute 0-59, second 0-60.999")
    out_of_span = (year < FIRST_YEAR) | (year > LAST_YEAR)
    if out_of_span.any():
        raise TimeInputError(
            f"outside {FIRST_YEAR}-{LAST_YEAR}, the span of the JPL DE421 ephemeris navred uses: "
            f"{failed_elements(out_of_span)} (first offending year {int(year[out_of_span].ravel()[0])})")
    leap = second >= 60.0
    if leap.any():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)
            today = erfa.dat(year, month, day, 0.0)
            nxt = _ymd(_date64(year, month, day) + np.timedelta64(1, "D"))
            tomorrow = erfa.dat(*nxt, 0.0)
        not_leap = leap & ~((hour == 23) & (minute == 59) & (tomorrow - today == 1.0))
        if not_leap.any():
            raise TimeInputError(
                f"second 60 in {failed_elements(not_leap)}, but only 23:59:60 UTC on a day "
                "that ends with a leap second is a real instant")
    pre_utc = _date64(year, month, day) < np.datetime64("1960-01-01")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        jd1, jd2 = erfa.dtf2d("UTC", year, month, day, hour, minute, second)
        if pre_utc.any():
            # before UTC existed ERFA's dtf2d has no leap-second table: use plain calendar JDs
            p1, p2 = erfa.dtf2d("", year, month, day, hour, minute, second)
            jd1, jd2 = np.where(pre_utc, p1, jd1), np.where(pre_utc, p2, jd2)
    return np.asarray(jd1, dtype=float), np.asarray(jd2, dtype=float)


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
        utc = utc.utc_datetime64()
    utc1, utc2 = utc_julian_date(utc)
    shape = utc1.shape
    pre_utc = (utc1 + utc2) < _UTC_START_JD
    table = iers_table()
    mjd = (utc1 - _MJD0) + utc2
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        y, m, d, _ = erfa.jd2cal(utc1, utc2)
        tai_utc = erfa.dat(y, m, d, 0.0)
    if dut1_s is not None:
        dut1 = _check_dut1(dut1_s, shape).astype(float)
        source = np.full(shape, UT1_GIVEN, dtype=object)
    else:
        ut1_tai = np.interp(mjd, table.mjd, table.ut1_minus_tai_s)
        dut1 = ut1_tai + tai_utc
        beyond = mjd > table.last_predicted_mjd
        before = mjd < table.mjd[0]
        dut1 = np.where(beyond, table.dut1_s[-1], dut1)
        dut1 = np.where(before, 0.0, dut1)
        source = np.where(mjd <= table.last_measured_mjd, UT1_MEASURED, UT1_PREDICTED).astype(object)
        source = np.where(beyond, UT1_BEYOND, source)
        source = np.where(before, UT1_BEFORE, source)
        if beyond.any():
            warnings.warn(
                f"instants after {table.last_predicted_date}, the end of the IERS table "
                f"({failed_elements(beyond)}): DUT1 is held at its last predicted value {table.dut1_s[-1]:+.3f} s. Take DUT1 "
                "from a radio time signal (dut1_s=...) if you can: every 0.9 s of DUT1 error is "
                "0.225′ of GHA, about 0.2 nautical mile of longitude at the equator.",
                NavredWarning, stacklevel=2)
        before_utc_table = before & ~pre_utc
        if before_utc_table.any():
            warnings.warn(
                f"instants before the IERS table of 1973-01-02 ({failed_elements(before_utc_table)}): DUT1 is "
                "taken as 0 s, good to about 0.1 s from 1960 to 1972 when UTC was steered to UT1 "
                "(at most 0.025′ of GHA).", NavredWarning, stacklevel=2)
    dut1 = np.where(pre_utc, 0.0, dut1)
    source = np.where(pre_utc, UT1_PRE_UTC, source)
    expires = leap_second_table().expires
    expiry_jd = erfa.cal2jd(expires.year, expires.month, expires.day)
    late = ~pre_utc & ((utc1 + utc2) > sum(expiry_jd))
    if late.any():
        warnings.warn(
            f"instants after {expires.isoformat()}, the expiry date of the installed leap-second "
            f"table ({failed_elements(late)}): a leap second may have been announced since. Update "
            "astropy-iers-data; until then TT may be 1 s out (about 0.5′ of the Moon's place).",
            NavredWarning, stacklevel=2)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        tai1, tai2 = erfa.utctai(utc1, utc2)
        tt1, tt2 = erfa.taitt(tai1, tai2)
        ut11, ut12 = erfa.utcut1(utc1, utc2, dut1)
    if pre_utc.any():
        year_fraction = 2000.0 + ((utc1 - JD_J2000) + utc2) / 365.25
        delta_t = delta_t_before_1960_s(year_fraction)
        tt1 = np.where(pre_utc, utc1, tt1)
        tt2 = np.where(pre_utc, utc2 + delta_t / SECONDS_PER_DAY, tt2)
        ut11, ut12 = np.where(pre_utc, utc1, ut11), np.where(pre_utc, utc2, ut12)
    return Instants(np.asarray(utc1), np.asarray(utc2), np.asarray(tt1), np.asarray(tt2),
                    np.asarray(ut11), np.asarray(ut12), np.asarray(dut1, dtype=float),
                    np.asarray(source, dtype=object))


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
    ns = ((h.astype(np.int64) * 60 + mi) * 60 + s) * 1_000_000_000 + f
    return days + ns.astype("timedelta64[ns]")

