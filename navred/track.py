"""The ship's reference track (satellite positions) read from GPX 1.1, NMEA 0183 or CSV.

Edge code: file reading. GPX track points (and route/way points if a file has no track)
are read with the standard XML parser; NMEA ``RMC`` and ``GGA`` sentences (any talker, ``GP``,
``GN``, ...) are checked against their checksums and status fields (a sentence flagged
void or with no fix is skipped); a CSV needs columns for time (ISO 8601 with a zone),
latitude and longitude. :func:`positions_at` interpolates the track to sight times and
refuses, with a message, times outside the track.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pandas as pd

from .angles import parse_angle
from .errors import NavredError


class TrackError(NavredError):
    """A reference track that cannot be read or used."""


def read_track(path: str | Path) -> pd.DataFrame:
    """The reference track as a DataFrame ``utc`` (datetime64[ns], UTC), ``lat_deg``, ``lon_deg``,
    sorted by time, duplicates removed."""
    file = Path(path)
    if not file.is_file():
        raise TrackError(f"no such track file: {path}")
    text = file.read_text(encoding="utf-8", errors="replace")
    suffix = file.suffix.lower()
    if suffix == ".gpx" or text.lstrip().startswith("<?xml") or "<gpx" in text[:500]:
        frame = _read_gpx(text, file)
    elif suffix in (".nmea", ".nma", ".log", ".txt") or text.lstrip().startswith("$"):
        frame = _read_nmea(text, file)
    else:
        frame = _read_csv(file)
    if len(frame) < 2:
        raise TrackError(f"{path}: the track has {len(frame)} usable position(s); at least two are needed")
    frame = frame.sort_values("utc").drop_duplicates("utc").reset_index(drop=True)
    return frame


def _read_gpx(text: str, file: Path) -> pd.DataFrame:
    try:
        root = ET.fromstring(text)
    except ET.ParseError as exc:
        raise TrackError(f"{file} is not well-formed GPX: {exc}") from None
    namespace = root.tag.split("}")[0] + "}" if root.tag.startswith("{") else ""
    points = root.findall(f".//{namespace}trkpt") or root.findall(f".//{namespace}rtept") or \
        root.findall(f".//{namespace}wpt")
    rows = []
    for point in points:
        when = point.find(f"{namespace}time")
        if when is None or not (when.text or "").strip():
            continue
        rows.append((when.text.strip(), float(point.get("lat")), float(point.get("lon"))))
    if not rows:
        raise TrackError(f"{file}: no GPX track points with a time")
    frame = pd.DataFrame(rows, columns=["utc", "lat_deg", "lon_deg"])
    frame["utc"] = pd.to_datetime(frame["utc"], utc=True).dt.tz_convert(None).astype("datetime64[ns]")
    return frame


_SENTENCE = re.compile(r"\$(?P<body>[A-Z]{2}(?P<kind>RMC|GGA),[^*]*)\*(?P<sum>[0-9A-Fa-f]{2})")


def _nmea_angle(value: str, hemisphere: str, degree_digits: int) -> float:
    degrees = float(value[:degree_digits])
    minutes = float(value[degree_digits:])
    sign = -1.0 if hemisphere in ("S", "W") else 1.0
    return sign * (degrees + minutes / 60.0)


def _read_nmea(text: str, file: Path) -> pd.DataFrame:
    rows = []
    last_date = None
    bad_checksums = 0
    for match in _SENTENCE.finditer(text):
        body = match.group("body")
        checksum = 0
        for char in body:
            checksum ^= ord(char)
        if checksum != int(match.group("sum"), 16):
            bad_checksums += 1
            continue
        fields = body.split(",")
        try:
            if match.group("kind") == "RMC":
                # $xxRMC,hhmmss.ss,A,llll.ll,a,yyyyy.yy,a,speed,course,ddmmyy,...
                if fields[2] != "A" or not fields[9]:
                    continue
                day = fields[9]
                last_date = f"20{day[4:6]}-{day[2:4]}-{day[0:2]}"
                rows.append((f"{last_date}T{fields[1][0:2]}:{fields[1][2:4]}:{fields[1][4:]}",
                             _nmea_angle(fields[3], fields[4], 2), _nmea_angle(fields[5], fields[6], 3)))
            else:
                # $xxGGA,hhmmss.ss,llll.ll,a,yyyyy.yy,a,quality,...: the date comes from the last RMC
                if last_date is None or fields[6] in ("", "0"):
                    continue
                rows.append((f"{last_date}T{fields[1][0:2]}:{fields[1][2:4]}:{fields[1][4:]}",
                             _nmea_angle(fields[2], fields[3], 2), _nmea_angle(fields[4], fields[5], 3)))
        except (IndexError, ValueError):
            continue
    if not rows:
        extra = f" ({bad_checksums} failed their checksum)" if bad_checksums else ""
        raise TrackError(f"{file}: no usable NMEA RMC or GGA positions{extra}")
    frame = pd.DataFrame(rows, columns=["utc", "lat_deg", "lon_deg"])
    frame["utc"] = pd.to_datetime(frame["utc"]).astype("datetime64[ns]")
    return frame


def _read_csv(file: Path) -> pd.DataFrame:
    try:
        raw = pd.read_csv(file, dtype=str, keep_default_na=False)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        raise TrackError(f"{file} cannot be read as a CSV track: {exc}") from None
    columns = {c.strip().lower(): c for c in raw.columns}
    time_col = next((columns[c] for c in ("utc", "time", "timestamp") if c in columns), None)
    lat_col = next((columns[c] for c in ("lat", "latitude", "lat_deg") if c in columns), None)
    lon_col = next((columns[c] for c in ("lon", "longitude", "lon_deg", "long") if c in columns), None)
    if not (time_col and lat_col and lon_col):
        raise TrackError(f"{file}: a CSV track needs columns utc (or time), lat and lon; it has {', '.join(raw.columns)}")
    times = pd.to_datetime(raw[time_col], utc=True, errors="coerce", format="ISO8601")
    if times.isna().any():
        first = raw[time_col][times.isna()].iloc[0]
        raise TrackError(f"{file}: time {first!r} is not ISO 8601 with a zone")
    return pd.DataFrame({"utc": times.dt.tz_convert(None).astype("datetime64[ns]"),
                         "lat_deg": parse_angle(raw[lat_col].to_numpy(), "lat"),
                         "lon_deg": parse_angle(raw[lon_col].to_numpy(), "lon")})


def positions_at(track: pd.DataFrame, utc64: object) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Track positions interpolated to the instants (linear in time, longitude unwrapped).

    Returns (lat_deg, lon_deg, inside): ``inside`` is False for instants outside the track's
    time span, whose positions are NaN.
    """
    t = track["utc"].to_numpy().astype("datetime64[ns]").astype(np.int64).astype(float)
    when = np.asarray(utc64, dtype="datetime64[ns]").astype(np.int64).astype(float)
    inside = (when >= t[0]) & (when <= t[-1])
    lon = np.degrees(np.unwrap(np.radians(track["lon_deg"].to_numpy(dtype=float))))
    lat = np.interp(when, t, track["lat_deg"].to_numpy(dtype=float))
    lon_i = (np.interp(when, t, lon) + 180.0) % 360.0 - 180.0
    return np.where(inside, lat, np.nan), np.where(inside, lon_i, np.nan), inside
