"""The ship's reference track (satellite positions) read from GPX 1.1, NMEA 0183 or CSV, checked like a log.

Edge code: file reading. Every point is checked as a sight-log row is: a position outside
±90°/±180°, an impossible time, a time with no zone (CSV), a sentence that fails its
checksum or reports no fix (NMEA) is refused by point, with the reason, and the rest of the
track is read. XML is parsed with entity expansion and external entities refused
(defusedxml), the file's size and its number of points are bounded. Two different positions
for one instant are both refused. Between points the track is interpolated, except across
a gap longer than :data:`MAX_GAP_HOURS`, which is not bridged: a sight inside it is not
marked against the track, and says why.
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import parse_angle
from ..errors import NavredError
from ..timescales import instant_components, utc_jd_to_datetime64, utc_julian_date_from_components

MAX_TRACK_BYTES = 128 * 1024 * 1024
MAX_TRACK_POINTS = 2_000_000
#: A gap longer than this between two track points is not bridged by a straight line (common
#: practice: a vessel at 10 knots goes 20 miles in two hours, and may turn).
MAX_GAP_HOURS = 2.0
#: Two points of one instant farther apart than this are two different positions (nautical miles).
SAME_POSITION_NM = 0.01
PROBLEM_COLUMNS = ["point", "field", "value", "reason"]


class TrackError(NavredError):
    """A reference track that cannot be read or used."""


@dataclass(frozen=True)
class ReferenceTrack:
    """The checked points of a reference track, in time order, and every point refused."""

    utc: np.ndarray  # datetime64[ns], UTC
    lat_deg: np.ndarray
    lon_deg: np.ndarray
    source: str
    problems: pd.DataFrame  # point (1-based, in the file's order), field, value, reason
    max_gap_hours: float = MAX_GAP_HOURS

    def __len__(self) -> int:
        return int(self.utc.size)

    @property
    def span(self) -> tuple[str, str]:
        return str(self.utc[0])[:19], str(self.utc[-1])[:19]

    def gaps(self) -> list[tuple[np.datetime64, np.datetime64]]:
        """The stretches between two points longer than the gap limit (not bridged)."""
        hours = np.diff(self.utc).astype("timedelta64[ns]").astype(np.int64) / 3.6e12
        at = np.flatnonzero(hours > self.max_gap_hours)
        return [(self.utc[i], self.utc[i + 1]) for i in at]

    def positions_at(self, utc64: object) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Positions interpolated to the instants (linear in time, longitude unwrapped): (lat, lon, why not).

        ``why not`` is '' where a position was found, else the reason: outside the track's time
        span, or inside a gap of the track longer than the limit. Such positions are NaN.
        """
        t = self.utc.astype("datetime64[ns]").astype(np.int64).astype(float)
        when = np.asarray(utc64, dtype="datetime64[ns]").astype(np.int64).astype(float)
        reason = np.full(when.shape, "", dtype=object)
        outside = (when < t[0]) | (when > t[-1])
        reason[outside] = f"outside the reference track ({self.span[0]} to {self.span[1]} UTC): not marked"
        for start, end in self.gaps():
            a, b = float(start.astype("datetime64[ns]").astype(np.int64)), float(end.astype("datetime64[ns]").astype(np.int64))
            inside_gap = (when > a) & (when < b)
            hours = (b - a) / 3.6e12
            reason[inside_gap] = (f"inside a gap of {hours:.1f} h in the reference track ({str(start)[:16]} to "
                                  f"{str(end)[:16]} UTC), longer than the {self.max_gap_hours:g} h it bridges: not marked")
        lon = np.degrees(np.unwrap(np.radians(self.lon_deg)))
        lat = np.interp(when, t, self.lat_deg)
        lon_i = (np.interp(when, t, lon) + 180.0) % 360.0 - 180.0
        ok = reason == ""
        return np.where(ok, lat, np.nan), np.where(ok, lon_i, np.nan), reason


class _Points:
    """Points as they are read, and the refused ones."""

    def __init__(self):
        self.rows: list[tuple[float, float, float, float]] = []  # (jd1, jd2, lat, lon)
        self.index: list[int] = []
        self.problems: list[tuple[int, str, str, str]] = []

    def add(self, point: int, utc: tuple[float, float] | None, lat: float, lon: float) -> None:
        if utc is not None:
            self.rows.append((utc[0], utc[1], lat, lon))
            self.index.append(point)
        if len(self.rows) > MAX_TRACK_POINTS:
            raise TrackError(f"the track has more than {MAX_TRACK_POINTS:,} points: split it or thin it")

    def refuse(self, point: int, field: str, value: object, reason: str) -> None:
        self.problems.append((point, field, str(value)[:200], reason))


def _position(points: _Points, point: int, lat_value, lon_value) -> tuple[float, float] | None:
    values = []
    for field, value, limit in (("lat", lat_value, 90.0), ("lon", lon_value, 180.0)):
        try:
            number = float(value)
        except (TypeError, ValueError):
            points.refuse(point, field, value, f"{field} {value!r} is not a number")
            return None
        if not np.isfinite(number) or abs(number) > limit:
            points.refuse(point, field, value, f"{field} {value!r} is outside ±{limit:g}°")
            return None
        values.append(number)
    return values[0], values[1]


def _instant(points: _Points, point: int, value: str, *, naive_is_utc: bool) -> tuple[float, float] | None:
    """An instant as a two-part UTC Julian date, or None with the reason noted."""
    text = str(value).strip()
    if naive_is_utc and re.fullmatch(r"\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?", text):
        text += "Z"  # GPX 1.1 and NMEA 0183 give their times in UTC
    try:
        comps = instant_components(text)
    except NavredError as exc:
        points.refuse(point, "time", value, str(exc))
        return None
    jd1, jd2, reason = utc_julian_date_from_components(*comps)
    if str(reason) != "":
        points.refuse(point, "time", value, str(reason))
        return None
    return float(jd1), float(jd2)


def read_track(path: str | Path, *, max_gap_hours: float = MAX_GAP_HOURS) -> ReferenceTrack:
    """The reference track of a GPX 1.1, NMEA 0183 or CSV file, every point checked (see the module)."""
    file = Path(path)
    if not file.is_file():
        raise TrackError(f"no such track file: {path}")
    size = file.stat().st_size
    if size > MAX_TRACK_BYTES:
        raise TrackError(f"{file} is {size / 2**20:.0f} MiB; navred reads tracks of up to "
                         f"{MAX_TRACK_BYTES // 2**20} MiB: split it, or thin it to a point a minute")
    data = file.read_bytes()
    if data[:2] in (b"PK", b"\x1f\x8b"):
        raise TrackError(f"{file} is compressed (zip or gzip): unpack it first")
    text = data.decode("utf-8", errors="replace")
    suffix = file.suffix.lower()
    points = _Points()
    if suffix == ".gpx" or text.lstrip().startswith("<?xml") or "<gpx" in text[:500]:
        _read_gpx(text, file, points)
    elif suffix in (".nmea", ".nma", ".log", ".txt") or text.lstrip().startswith("$"):
        _read_nmea(text, file, points)
    else:
        _read_csv(file, points)
    return _checked_track(points, file, max_gap_hours)


def _checked_track(points: _Points, file: Path, max_gap_hours: float) -> ReferenceTrack:
    problems = pd.DataFrame(points.problems, columns=PROBLEM_COLUMNS)
    if len(points.rows) < 2:
        found = f"; refused: {problems.reason.iloc[0]}" if len(problems) else ""
        raise TrackError(f"{file}: the track has {len(points.rows)} usable position(s); at least two are needed{found}")
    table = np.array(points.rows, dtype=float)
    index = np.array(points.index)
    utc = utc_jd_to_datetime64(table[:, 0], table[:, 1])
    order = np.argsort(utc, kind="stable")
    utc, lat, lon, index = utc[order], table[order, 2], table[order, 3], index[order]
    # one instant, two positions: neither can be trusted
    same_time = np.concatenate([[False], utc[1:] == utc[:-1]])
    starts = np.flatnonzero(~same_time)
    keep = np.ones(utc.size, dtype=bool)
    for k, start in enumerate(starts):
        end = starts[k + 1] if k + 1 < starts.size else utc.size
        if end - start < 2:
            continue
        north = (lat[start:end] - lat[start]) * 60.0
        east = (((lon[start:end] - lon[start] + 180) % 360) - 180) * 60.0 * np.cos(np.radians(lat[start]))
        if np.hypot(north, east).max() > SAME_POSITION_NM:
            keep[start:end] = False
            for point in index[start:end]:
                points.refuse(int(point), "time", str(utc[start])[:19], "two different positions for one instant: "
                                                                         "neither is used")
        else:
            keep[start + 1:end] = False  # the same fix twice (RMC and GGA of one epoch)
    problems = pd.DataFrame(points.problems, columns=PROBLEM_COLUMNS).sort_values("point", kind="stable")
    if keep.sum() < 2:
        raise TrackError(f"{file}: fewer than two usable positions once duplicated instants are refused")
    return ReferenceTrack(utc[keep], lat[keep], lon[keep], str(file), problems.reset_index(drop=True), max_gap_hours)


def _read_gpx(text: str, file: Path, points: _Points) -> None:
    from xml.etree.ElementTree import ParseError

    import defusedxml.ElementTree as safe_xml
    from defusedxml import DefusedXmlException

    try:
        root = safe_xml.fromstring(text)
    except DefusedXmlException as exc:
        raise TrackError(f"{file} declares XML entities or external references ({type(exc).__name__}), which a GPX "
                         "file does not need (an XML bomb?): refused") from None
    except ParseError as exc:
        raise TrackError(f"{file} is not well-formed GPX: {exc}") from None
    namespace = root.tag.split("}")[0] + "}" if root.tag.startswith("{") else ""
    found = root.findall(f".//{namespace}trkpt") or root.findall(f".//{namespace}rtept") or \
        root.findall(f".//{namespace}wpt")
    for number, element in enumerate(found, start=1):
        when = element.find(f"{namespace}time")
        if when is None or not (when.text or "").strip():
            points.refuse(number, "time", "", "a GPX point with no time")
            continue
        position = _position(points, number, element.get("lat"), element.get("lon"))
        if position is None:
            continue
        instant = _instant(points, number, when.text, naive_is_utc=True)
        points.add(number, instant, *position)
    if not found:
        raise TrackError(f"{file}: no GPX track, route or way points")


_SENTENCE = re.compile(r"\$(?P<body>[A-Z]{2}(?P<kind>RMC|GGA),[^*\r\n]*)\*(?P<sum>[0-9A-Fa-f]{2})")


def nmea_year(two_digits: int) -> int:
    """The year of an NMEA 0183 date's two digits, windowed as POSIX strptime's %y: 69-99 are 1969-1999,
    00-68 are 2000-2068."""
    return 1900 + two_digits if two_digits >= 69 else 2000 + two_digits


def _nmea_angle(value: str, hemisphere: str, degree_digits: int, letters: str) -> float:
    if hemisphere not in letters or len(value) < degree_digits + 2:
        raise ValueError(f"{value!r} {hemisphere!r} is not an NMEA angle with its hemisphere ({letters[0]}/{letters[1]})")
    degrees = int(value[:degree_digits])
    minutes = float(value[degree_digits:])
    if minutes >= 60.0:
        raise ValueError(f"{value!r}: minutes of 60 or more")
    number = degrees + minutes / 60.0
    if number > (90.0 if degree_digits == 2 else 180.0):
        raise ValueError(f"{value!r} {hemisphere} is outside ±{90 if degree_digits == 2 else 180}°")
    return -number if hemisphere in "SW" else number


def _nmea_time(value: str) -> tuple[int, int, float]:
    match = re.fullmatch(r"(\d{2})(\d{2})(\d{2}(?:\.\d+)?)", value)
    if not match:
        raise ValueError(f"{value!r} is not an NMEA time hhmmss")
    h, m, s = int(match.group(1)), int(match.group(2)), float(match.group(3))
    if h > 23 or m > 59 or s >= 61:
        raise ValueError(f"{value!r} is not a time of day (hour 0-23, minute 0-59, second below 60)")
    return h, m, s


def _read_nmea(text: str, file: Path, points: _Points) -> None:
    """RMC and GGA sentences; a GGA takes its date from the RMC of the same epoch, else from the last RMC,
    a day on when its time of day has wrapped past midnight."""
    sentences = []
    for number, match in enumerate(_SENTENCE.finditer(text), start=1):
        body = match.group("body")
        checksum = 0
        for char in body:
            checksum ^= ord(char)
        if checksum != int(match.group("sum"), 16):
            points.refuse(number, "checksum", match.group("sum"), "the sentence fails its checksum")
            continue
        sentences.append((number, match.group("kind"), body.split(",")))
    parsed = []
    for number, kind, fields in sentences:
        try:
            h, m, s = _nmea_time(fields[1])
            if kind == "RMC":
                # $xxRMC,hhmmss.ss,A,llll.ll,a,yyyyy.yy,a,speed,course,ddmmyy,...
                if fields[2] != "A":
                    continue  # void: no fix
                day = fields[9]
                if not re.fullmatch(r"\d{6}", day):
                    raise ValueError(f"date {day!r} is not ddmmyy")
                date = _dt.date(nmea_year(int(day[4:6])), int(day[2:4]), int(day[0:2]))
                lat, lon = _nmea_angle(fields[3], fields[4], 2, "NS"), _nmea_angle(fields[5], fields[6], 3, "EW")
            else:
                # $xxGGA,hhmmss.ss,llll.ll,a,yyyyy.yy,a,quality,...
                if fields[6] in ("", "0"):
                    continue  # no fix
                date = None
                lat, lon = _nmea_angle(fields[2], fields[3], 2, "NS"), _nmea_angle(fields[4], fields[5], 3, "EW")
        except (IndexError, ValueError) as exc:
            points.refuse(number, kind, ",".join(fields)[:80], str(exc))
            continue
        parsed.append((number, kind, (h, m, s), date, lat, lon))
    for k, (number, kind, (h, m, s), date, lat, lon) in enumerate(parsed):
        seconds = h * 3600 + m * 60 + s
        if kind == "GGA":
            date = _gga_date(parsed, k, seconds)
            if date is None:
                points.refuse(number, "GGA", f"{h:02d}{m:02d}{s:05.2f}", "a GGA with no RMC to give its date")
                continue
        jd1, jd2, reason = utc_julian_date_from_components(date.year, date.month, date.day, h, m, s)
        if str(reason):
            points.refuse(number, kind, f"{date} {h:02d}:{m:02d}", str(reason))
            continue
        points.add(number, (float(jd1), float(jd2)), lat, lon)
    if not parsed:
        raise TrackError(f"{file}: no usable NMEA RMC or GGA positions"
                         + (f" ({len(points.problems)} refused; the first: {points.problems[0][3]})"
                            if points.problems else ""))


def _gga_date(parsed, k: int, seconds: float):
    """A GGA's date: that of the RMC of the same epoch (a receiver sends the two together, in either
    order), else the nearest RMC's, a day on (or back) when the time of day has wrapped past midnight."""
    def rmc(j):
        item = parsed[j]
        return item[3], item[2][0] * 3600 + item[2][1] * 60 + item[2][2]

    near = [j for j in range(max(0, k - 3), min(len(parsed), k + 4)) if parsed[j][1] == "RMC"]
    for j in sorted(near, key=lambda j: abs(j - k)):
        date, rmc_seconds = rmc(j)
        if abs(rmc_seconds - seconds) < 0.5:
            return date
    before = next((j for j in range(k - 1, -1, -1) if parsed[j][1] == "RMC"), None)
    after = next((j for j in range(k + 1, len(parsed)) if parsed[j][1] == "RMC"), None)
    if before is None and after is None:
        return None
    date, rmc_seconds = rmc(before if before is not None else after)
    if seconds < rmc_seconds - 43200:
        return date + _dt.timedelta(days=1)  # past midnight since that RMC
    if seconds > rmc_seconds + 43200:
        return date - _dt.timedelta(days=1)
    return date


def _read_csv(file: Path, points: _Points) -> None:
    try:
        raw = pd.read_csv(file, dtype=str, keep_default_na=False, on_bad_lines="skip", engine="python")
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        raise TrackError(f"{file} cannot be read as a CSV track: {str(exc).splitlines()[0]}") from None
    if len(raw) > MAX_TRACK_POINTS:
        raise TrackError(f"the track has more than {MAX_TRACK_POINTS:,} points: split it or thin it")
    columns = {c.strip().lower(): c for c in raw.columns}
    time_col = next((columns[c] for c in ("utc", "time", "timestamp") if c in columns), None)
    lat_col = next((columns[c] for c in ("lat", "latitude", "lat_deg") if c in columns), None)
    lon_col = next((columns[c] for c in ("lon", "longitude", "lon_deg", "long") if c in columns), None)
    if not (time_col and lat_col and lon_col):
        raise TrackError(f"{file}: a CSV track needs columns utc (or time), lat and lon; it has {', '.join(raw.columns)}")
    for number, (when, lat_text, lon_text) in enumerate(zip(raw[time_col], raw[lat_col], raw[lon_col]), start=2):
        try:
            lat = float(parse_angle(lat_text.strip(), "lat"))
            lon = float(parse_angle(lon_text.strip(), "lon"))
        except NavredError as exc:
            points.refuse(number, "position", f"{lat_text} {lon_text}", str(exc))
            continue
        # a CSV track must say its zone: Z or an offset (a time without one is refused, never taken as UTC)
        points.add(number, _instant(points, number, when, naive_is_utc=False), lat, lon)


def positions_at(track: ReferenceTrack, utc64: object) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Track positions at the instants: (lat, lon, inside); see :meth:`ReferenceTrack.positions_at`."""
    lat, lon, reason = track.positions_at(utc64)
    return lat, lon, reason == ""


__all__ = ["read_track", "ReferenceTrack", "TrackError", "positions_at", "nmea_year", "MAX_GAP_HOURS"]
