"""The ship's reference track (satellite positions) read from GPX 1.1, NMEA 0183 or CSV, checked like a log.

Edge code: file reading. Every point is checked as a sight-log row is: a position outside
±90°/±180°, an impossible time, a time with no zone (CSV), a sentence that fails its
checksum or reports no fix (NMEA) is refused by point, with the reason, and the rest of the
track is read. XML is parsed with entity expansion and external entities refused
(navred.io.safexml: a document type is refused before parsing), the file's size and its number of points are bounded. Two different positions
for one instant are both refused. Between points the track is interpolated, except across
a gap longer than :data:`MAX_GAP_HOURS`, which is not bridged: a sight inside it is not
marked against the track, and says why.
"""

from __future__ import annotations

import datetime as _dt
import io
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import parse_angle, wrap_180
from ..constants import NS_PER_HOUR
from ..errors import NavredError, api_boundary
from ..timescales import (
    instant_components,
    iso_z_datetime64,
    utc_jd_to_datetime64,
    utc_julian_date_from_components,
)

#: A track file's size and points: a reference track of a point every two seconds for a three-week passage, read
#: in a few seconds and well under a gigabyte (docs/security.md).
MAX_TRACK_BYTES = 128 * 1024 * 1024
MAX_TRACK_POINTS = 400_000
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
        hours = np.diff(self.utc).astype("timedelta64[ns]").astype(np.int64) / NS_PER_HOUR
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
            hours = (b - a) / NS_PER_HOUR
            reason[inside_gap] = (f"inside a gap of {hours:.1f} h in the reference track ({str(start)[:16]} to "
                                  f"{str(end)[:16]} UTC), longer than the {self.max_gap_hours:g} h it bridges: not marked")
        lon = np.degrees(np.unwrap(np.radians(self.lon_deg)))
        lat = np.interp(when, t, self.lat_deg)
        lon_i = wrap_180(np.interp(when, t, lon))
        ok = reason == ""
        return np.where(ok, lat, np.nan), np.where(ok, lon_i, np.nan), reason


class _Points:
    """Points as they are read (in bulk or one by one), and the refused ones, each named by its point number
    (GPX: the point's place among the file's points; NMEA and CSV: the line of the file, the header of a CSV
    being line 1, so a number never shifts past a blank line)."""

    def __init__(self, file: Path):
        self.file = file
        self.utc: list[np.ndarray] = []  # datetime64[ns]
        self.lat: list[np.ndarray] = []
        self.lon: list[np.ndarray] = []
        self.index: list[np.ndarray] = []
        self.count = 0
        self.problems: list[tuple[int, str, str, str]] = []

    def add(self, points: np.ndarray, utc64: np.ndarray, lat: np.ndarray, lon: np.ndarray) -> None:
        self.count += int(np.size(points))
        if self.count > MAX_TRACK_POINTS:
            raise TrackError(f"{self.file}: the track has more than {MAX_TRACK_POINTS:,} points: split it, or thin it "
                             "to a point every few seconds")
        self.index.append(np.atleast_1d(np.asarray(points, dtype=np.int64)))
        self.utc.append(np.atleast_1d(np.asarray(utc64, dtype="datetime64[ns]")))
        self.lat.append(np.atleast_1d(np.asarray(lat, dtype=float)))
        self.lon.append(np.atleast_1d(np.asarray(lon, dtype=float)))

    def refuse(self, point: int, field: str, value: object, reason: str) -> None:
        self.problems.append((int(point), field, _shown(value), reason))


def _shown(value: object) -> str:
    text = "".join(c if c.isprintable() else "\ufffd" for c in str(value)[:200])
    return text.encode("utf-8", "replace").decode("utf-8")


def _positions(points: _Points, numbers: np.ndarray, lat_text, lon_text, *, decimal_comma: bool = False,
               angles: bool = False) -> np.ndarray:
    """(ok, lat, lon) of the points' position texts, each bad one refused with its reason. ``angles``: read as the
    log reads a latitude and longitude (degrees and minutes with the hemisphere, or a signed decimal), else
    as the decimal degrees of GPX."""
    lat_text = np.asarray(lat_text, dtype=object)
    lon_text = np.asarray(lon_text, dtype=object)
    lat = pd.to_numeric(pd.Series(lat_text), errors="coerce").to_numpy(dtype=float)
    lon = pd.to_numeric(pd.Series(lon_text), errors="coerce").to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(lat) & np.isfinite(lon) & (np.abs(lat) <= 90.0) & (np.abs(lon) <= 180.0)
    for k in np.flatnonzero(~ok).tolist():
        values = []
        for field, text, limit in (("lat", lat_text[k], 90.0), ("lon", lon_text[k], 180.0)):
            try:
                if angles:
                    number = float(parse_angle(str(text).strip(), field, decimal_comma))
                else:
                    number = float(str(text).strip())
                    if not np.isfinite(number):
                        raise ValueError("not finite")
            except (NavredError, ValueError, TypeError) as exc:
                reason = str(exc) if isinstance(exc, NavredError) else f"{field} {text!r} is not a number"
                points.refuse(numbers[k], field, text, reason)
                break
            if abs(number) > limit:
                points.refuse(numbers[k], field, text, f"{field} {text!r} is outside ±{limit:g}°")
                break
            values.append(number)
        else:
            lat[k], lon[k] = values
            ok[k] = True
    return ok, lat, lon


_ISO_UTC = re.compile(r"\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}:\d{2}(?:\.\d{1,9})?Z")


def _instants(points: _Points, numbers: np.ndarray, texts, *, naive_is_utc: bool) -> tuple[np.ndarray, np.ndarray]:
    """(ok, datetime64[ns] UTC) of the points' times: ISO 8601 UTC instants in bulk, any other form one by one;
    each bad one refused with its reason."""
    texts = np.asarray(texts, dtype=object)
    out = np.full(texts.size, np.datetime64("NaT"), dtype="datetime64[ns]")
    ok = np.zeros(texts.size, dtype=bool)
    strings = pd.Series(texts, dtype=object).map(lambda v: v.strip() if isinstance(v, str) else v)
    plain = strings.map(lambda v: isinstance(v, str) and _ISO_UTC.fullmatch(v) is not None).to_numpy(dtype=bool)
    if plain.any():
        stamps = iso_z_datetime64(strings[plain].to_numpy(dtype=object))
        if stamps is not None:
            stamps = stamps.astype("datetime64[ns]")
            inside = (stamps >= _FIRST) & (stamps < _LAST)  # the ephemeris' years, as every instant navred reads
            rows = np.flatnonzero(plain)
            out[rows[inside]] = stamps[inside]
            ok[rows[inside]] = True
    for k in np.flatnonzero(~ok).tolist():
        instant = _instant(points, int(numbers[k]), texts[k], naive_is_utc=naive_is_utc)
        if instant is not None:
            out[k] = utc_jd_to_datetime64(np.array([instant[0]]), np.array([instant[1]]))[0]
            ok[k] = True
    return ok, out


_FIRST, _LAST = np.datetime64("1900-01-01", "ns"), np.datetime64("2050-01-01", "ns")


def _instant(points: _Points, point: int, value, *, naive_is_utc: bool) -> tuple[float, float] | None:
    """An instant as a two-part UTC Julian date, or None with the reason noted."""
    text = "" if value is None else str(value).strip()
    if not text:
        points.refuse(point, "time", "", "the point has no time")
        return None
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


@api_boundary
def read_track(path: str | Path, *, max_gap_hours: float = MAX_GAP_HOURS) -> ReferenceTrack:
    """The reference track of a GPX 1.1, NMEA 0183 or CSV file, every point checked (see the module)."""
    from .readers import named_input_file

    file = named_input_file(path, "track file", "GPX, NMEA or CSV", TrackError, MAX_TRACK_BYTES,
                            "{file} is {mib:.0f} MiB; navred reads tracks of up to " f"{MAX_TRACK_BYTES // 2**20} MiB: "
                            "split it, or thin it to a point every few seconds")
    data = file.read_bytes()
    if data[:2] in (b"PK", b"\x1f\x8b"):
        raise TrackError(f"{file} is compressed (zip or gzip): unpack it first")
    suffix = file.suffix.lower()
    points = _Points(file)
    head = data[:500].lstrip()
    if suffix == ".gpx" or head.startswith(b"<?xml") or b"<gpx" in head:
        _read_gpx(data, file, points)
    elif suffix in (".nmea", ".nma", ".log", ".txt") or head.startswith(b"$"):
        _read_nmea(data.decode("utf-8", errors="replace"), file, points)
    else:
        del data
        _read_csv(file, points)
    return _checked_track(points, file, max_gap_hours)


def _checked_track(points: _Points, file: Path, max_gap_hours: float) -> ReferenceTrack:
    problems = pd.DataFrame(points.problems, columns=PROBLEM_COLUMNS)
    usable = sum(a.size for a in points.index)
    if usable < 2:
        found = f"; refused: {problems.reason.iloc[0]}" if len(problems) else ""
        raise TrackError(f"{file}: the track has {usable} usable position(s); at least two are needed{found}")
    utc = np.concatenate(points.utc)
    lat, lon, index = np.concatenate(points.lat), np.concatenate(points.lon), np.concatenate(points.index)
    order = np.argsort(utc, kind="stable")
    utc, lat, lon, index = utc[order], lat[order], lon[order], index[order]
    # one instant, two positions: neither can be trusted
    same_time = np.concatenate([[False], utc[1:] == utc[:-1]])
    keep = np.ones(utc.size, dtype=bool)
    if same_time.any():
        starts = np.flatnonzero(~same_time)
        ends = np.append(starts[1:], utc.size)
        for start, end in zip(starts[ends - starts > 1].tolist(), ends[ends - starts > 1].tolist()):
            north = (lat[start:end] - lat[start]) * 60.0
            east = wrap_180(lon[start:end] - lon[start]) * 60.0 * np.cos(np.radians(lat[start]))
            if np.hypot(north, east).max() > SAME_POSITION_NM:
                keep[start:end] = False
                for point in index[start:end]:
                    points.refuse(int(point), "time", str(utc[start])[:19], "two different positions for one "
                                                                            "instant: neither is used")
            else:
                keep[start + 1:end] = False  # the same fix twice (RMC and GGA of one epoch)
    problems = pd.DataFrame(points.problems, columns=PROBLEM_COLUMNS).sort_values("point", kind="stable")
    if keep.sum() < 2:
        raise TrackError(f"{file}: fewer than two usable positions once duplicated instants are refused")
    return ReferenceTrack(utc[keep], lat[keep], lon[keep], str(file), problems.reset_index(drop=True), max_gap_hours)


def _read_gpx(data: bytes, file: Path, points: _Points) -> None:
    """GPX 1.1 points (trkpt, else rtept, else wpt), streamed: a document type (where entities would be declared)
    is refused before parsing (:mod:`navred.io.safexml`), and the points are let go as they are read, so memory
    holds the points' text, not the tree."""
    from .safexml import XmlRefused, iterparse

    found = sum(data.count(tag) for tag in (b"<trkpt", b"<rtept", b"<wpt", b":trkpt", b":rtept", b":wpt"))
    if found > MAX_TRACK_POINTS:
        raise TrackError(f"{file}: the track has about {found:,} points, more than the {MAX_TRACK_POINTS:,} navred "
                         "reads: split it, or thin it to a point every few seconds")
    kinds = {"trkpt": ([], [], [], []), "rtept": ([], [], [], []), "wpt": ([], [], [], [])}
    names: dict[str, str] = {}  # each tag as written ('{namespace}trkpt') -> its local name
    when = None  # the text of the last <time> ended: a point's own time ends before the point does
    try:
        for _event, element in iterparse(io.BytesIO(data), str(file)):
            tag = element.tag
            name = names.get(tag)
            if name is None:
                name = names[tag] = tag[tag.rfind("}") + 1:]
            if name == "time":
                when = element.text
            elif name in kinds:
                lats, lons, times, _ = kinds[name]
                lats.append(element.get("lat"))
                lons.append(element.get("lon"))
                times.append(when if len(element) and any(c.tag.endswith("time") for c in element) else None)
                when = None
                element.clear()  # the point's text is kept above; its elements are let go
    except XmlRefused as exc:
        raise TrackError(str(exc)) from None
    lats, lons, times, _ = next((v for v in kinds.values() if v[0]), ([], [], [], []))
    if not lats:
        raise TrackError(f"{file}: no GPX track, route or way points")
    numbers = np.arange(1, len(lats) + 1)
    ok_time, utc = _instants(points, numbers, times, naive_is_utc=True)
    ok_place, lat, lon = _positions(points, numbers[ok_time], np.asarray(lats, dtype=object)[ok_time],
                                    np.asarray(lons, dtype=object)[ok_time])
    rows = np.flatnonzero(ok_time)[ok_place]
    points.add(numbers[rows], utc[rows], lat[ok_place], lon[ok_place])


_SENTENCE = re.compile(r"\$(?P<body>[A-Z]{2}(?P<kind>RMC|GGA),[^*\r\n]*)\*(?P<sum>[0-9A-Fa-f]{2})")
_KIND = re.compile(r"\$[A-Z]{2}(?:RMC|GGA),")
#: The fields of an RMC or GGA sentence as NMEA 0183 writes them: each is checked against its pattern before it
#: is read, so that a sign, a NaN or a stray letter behind a good checksum is refused, never read as something
#: else (-500.0000,N is not 5° S).
_FIELDS = {
    "time": re.compile(r"\d{6}(?:\.\d+)?"),
    "lat": re.compile(r"\d{4}(?:\.\d+)?"), "lon": re.compile(r"\d{5}(?:\.\d+)?"),
    "ns": re.compile(r"[NS]"), "ew": re.compile(r"[EW]"), "date": re.compile(r"\d{6}"),
    "status": re.compile(r"[AV]"), "quality": re.compile(r"\d"),
}


def nmea_year(two_digits: int) -> int:
    """The year of an NMEA 0183 date's two digits, windowed as POSIX strptime's %y: 69-99 are 1969-1999,
    00-68 are 2000-2068."""
    return 1900 + two_digits if two_digits >= 69 else 2000 + two_digits


def _field(fields: list[str], k: int, pattern: str, what: str) -> str:
    value = fields[k] if k < len(fields) else None
    if value is None:
        raise ValueError(f"the sentence ends before its {what} (field {k})")
    if not _FIELDS[pattern].fullmatch(value):
        shown = value[:20] if value else "an empty field"
        raise ValueError(f"{what} {shown!r} is not written as NMEA 0183 writes it")
    return value


def _nmea_angle(value: str, hemisphere: str, degree_digits: int) -> float:
    degrees = int(value[:degree_digits])
    minutes = float(value[degree_digits:])
    if minutes >= 60.0:
        raise ValueError(f"{value!r}: minutes of 60 or more")
    number = degrees + minutes / 60.0
    if number > (90.0 if degree_digits == 2 else 180.0):
        raise ValueError(f"{value!r} {hemisphere} is outside ±{90 if degree_digits == 2 else 180}°")
    return -number if hemisphere in "SW" else number


def _nmea_time(value: str) -> tuple[int, int, float]:
    h, m, s = int(value[0:2]), int(value[2:4]), float(value[4:])
    if h > 23 or m > 59 or s >= 61:
        raise ValueError(f"{value!r} is not a time of day (hour 0-23, minute 0-59, second below 60)")
    return h, m, s


def _checksums(bodies: list[str]) -> np.ndarray:
    """The XOR of every character of each body (NMEA 0183's checksum), at once."""
    if not bodies:
        return np.zeros(0, dtype=np.uint8)
    joined = np.frombuffer("".join(bodies).encode("latin-1", errors="replace"), dtype=np.uint8)
    lengths = np.fromiter((len(b) for b in bodies), dtype=np.int64, count=len(bodies))
    starts = np.concatenate([[0], np.cumsum(lengths)[:-1]])
    return np.bitwise_xor.reduceat(joined, starts) if joined.size else np.zeros(len(bodies), dtype=np.uint8)


def _read_nmea(text: str, file: Path, points: _Points) -> None:
    """RMC and GGA sentences, each named by its line; a GGA takes its date from the RMC of the same epoch, else
    from the last RMC, a day on when its time of day has wrapped past midnight."""
    if text.count("$") > 2 * MAX_TRACK_POINTS + 1000:
        raise TrackError(f"{file}: the track has more than {MAX_TRACK_POINTS:,} points: split it, or thin it to a "
                         "point every few seconds")
    found = []
    for number, line in enumerate(text.splitlines(), start=1):
        if "$" in line:
            matches = list(_SENTENCE.finditer(line))
            found.extend((number, match) for match in matches)
            if not matches and _KIND.search(line):  # an RMC or GGA with no checksum: cut short, or damaged
                points.refuse(number, "sentence", line.strip()[:80], "an RMC or GGA sentence without its checksum "
                                                                     "(*hh): cut short or damaged")
    sums = _checksums([m.group("body") for _, m in found])
    sentences = []
    for (number, match), checksum in zip(found, sums.tolist()):
        if checksum != int(match.group("sum"), 16):
            points.refuse(number, "checksum", match.group("sum"), "the sentence fails its checksum")
            continue
        sentences.append((number, match.group("kind"), match.group("body").split(",")))
    parsed = []
    for number, kind, fields in sentences:
        try:
            h, m, s = _nmea_time(_field(fields, 1, "time", "time"))
            if kind == "RMC":
                # $xxRMC,hhmmss.ss,A,llll.ll,a,yyyyy.yy,a,speed,course,ddmmyy,...
                if _field(fields, 2, "status", "status") != "A":
                    continue  # void: no fix
                day = _field(fields, 9, "date", "date")
                date = _dt.date(nmea_year(int(day[4:6])), int(day[2:4]), int(day[0:2]))
                lat = _nmea_angle(_field(fields, 3, "lat", "latitude"), _field(fields, 4, "ns", "N/S"), 2)
                lon = _nmea_angle(_field(fields, 5, "lon", "longitude"), _field(fields, 6, "ew", "E/W"), 3)
            else:
                # $xxGGA,hhmmss.ss,llll.ll,a,yyyyy.yy,a,quality,...
                if _field(fields, 6, "quality", "fix quality") == "0":
                    continue  # no fix
                date = None
                lat = _nmea_angle(_field(fields, 2, "lat", "latitude"), _field(fields, 3, "ns", "N/S"), 2)
                lon = _nmea_angle(_field(fields, 4, "lon", "longitude"), _field(fields, 5, "ew", "E/W"), 3)
        except (IndexError, ValueError) as exc:
            points.refuse(number, kind, ",".join(fields)[:80], str(exc))
            continue
        parsed.append((number, kind, (h, m, s), date, lat, lon))
    numbers, parts, lats, lons = [], [], [], []
    for k, (number, kind, (h, m, s), date, lat, lon) in enumerate(parsed):
        seconds = h * 3600 + m * 60 + s
        if kind == "GGA":
            date = _gga_date(parsed, k, seconds)
            if date is None:
                points.refuse(number, "GGA", f"{h:02d}{m:02d}{s:05.2f}", "a GGA with no RMC to give its date")
                continue
        numbers.append(number)
        parts.append((date.year, date.month, date.day, h, m, s))
        lats.append(lat)
        lons.append(lon)
    if numbers:
        jd1, jd2, reasons = utc_julian_date_from_components(*np.array(parts, dtype=float).T)
        good = reasons == ""
        for k in np.flatnonzero(~good).tolist():
            y, mo, d, h, mi, s = parts[k]
            points.refuse(numbers[k], "time", f"{int(y)}-{int(mo):02d}-{int(d):02d} {int(h):02d}:{int(mi):02d}",
                          str(reasons[k]))
        if good.any():
            points.add(np.array(numbers)[good], utc_jd_to_datetime64(jd1[good], jd2[good]), np.array(lats)[good],
                       np.array(lons)[good])
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
    """A CSV track through navred's bounded table reader: each point named by its line (the header is line 1), a
    line with a field missing or a control character refused alone."""
    from .readers import ReadBudget, read_table

    try:
        table = read_table(file, budget=ReadBudget(rows=MAX_TRACK_POINTS, cells=8 * MAX_TRACK_POINTS))[0]
    except NavredError as exc:
        raise TrackError(str(exc).replace("sight log", "track").replace("logs", "tracks")) from None
    columns = {c.strip().lower(): k for k, c in enumerate(table.header)}
    time_col = next((columns[c] for c in ("utc", "time", "timestamp") if c in columns), None)
    lat_col = next((columns[c] for c in ("lat", "latitude", "lat_deg") if c in columns), None)
    lon_col = next((columns[c] for c in ("lon", "longitude", "lon_deg", "long") if c in columns), None)
    if time_col is None or lat_col is None or lon_col is None:
        raise TrackError(f"{file}: a CSV track needs columns utc (or time), lat and lon; it has "
                         f"{', '.join(table.header)}")
    numbers = np.asarray(table.row_numbers, dtype=np.int64)
    bad = np.zeros(numbers.size, dtype=bool)
    for index, (header, reason) in sorted(table.row_problems.items()):
        points.refuse(int(numbers[index]), header or "line", "", reason)
        bad[index] = True
    keep = np.flatnonzero(~bad)
    texts = [table.columns[k].to_numpy(dtype=object)[keep] for k in (time_col, lat_col, lon_col)]
    texts = [np.array(["" if v is None else str(v) for v in t.tolist()], dtype=object) for t in texts]
    # a CSV track must say its zone: Z or an offset (a time without one is refused, never taken as UTC)
    ok_time, utc = _instants(points, numbers[keep], texts[0], naive_is_utc=False)
    ok_place, lat, lon = _positions(points, numbers[keep][ok_time], texts[1][ok_time], texts[2][ok_time],
                                    decimal_comma=table.decimal_comma, angles=True)
    rows = np.flatnonzero(ok_time)[ok_place]
    points.add(numbers[keep][rows], utc[rows], lat[ok_place], lon[ok_place])
    if not points.count:
        found = f"; the first refused: line {points.problems[0][0]}: {points.problems[0][3]}" if points.problems else ""
        raise TrackError(f"{file}: the track has no usable position{found}")


def positions_at(track: ReferenceTrack, utc64: object) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Track positions at the instants: (lat, lon, inside); see :meth:`ReferenceTrack.positions_at`."""
    lat, lon, reason = track.positions_at(utc64)
    return lat, lon, reason == ""


__all__ = ["read_track", "ReferenceTrack", "TrackError", "positions_at", "nmea_year", "MAX_GAP_HOURS"]
