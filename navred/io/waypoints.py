"""A route's waypoints read from a file: the CSV or GPX that `navred route` writes, or a list written by hand.

Edge code: file reading. A route is read whole or refused: a waypoint that cannot be read is never
skipped, since the legs either side of it would then join two other waypoints and move the ship.

- **CSV** (through navred's bounded table reader): one row per waypoint, in the order sailed, with its
  latitude and longitude in ``lat`` and ``lon`` (degrees and minutes with N/S and E/W, ``49 57.0 N``,
  or signed decimal degrees) or ``lat_deg`` and ``lon_deg`` (signed decimal degrees, as `navred route`
  writes them beside the text); where both are given they must agree within 0.1′. A ``name`` (or
  ``waypoint``) column names each one.
- **GPX 1.1**: the points of its one route (``rtept``, as `navred route -o route.gpx` writes it), else its
  waypoints (``wpt``) in the file's order; a document type is refused before parsing
  (:mod:`navred.io.safexml`).
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..angles import parse_angle, wrap_180
from ..constants import ARCMIN_PER_DEG
from ..errors import NavredError, api_boundary
from ..vocabulary import normalise_header

#: The most waypoints `navred route` gives at a spacing (it refuses a spacing that would make more).
MAX_WAYPOINTS = 2000
#: The most a route file may hold: `navred route`'s most, with its ends and a composite route's turning points.
MAX_READ_WAYPOINTS = MAX_WAYPOINTS + 8
#: A route file's size: far more than 2,000 waypoints need.
MAX_WAYPOINT_BYTES = 4 * 1024 * 1024
#: The text and the decimal degrees of one waypoint must agree this closely (arcminutes): the text is
#: written to 0.1′.
AGREE_ARCMIN = 0.1

_LAT_COLUMNS = ("lat", "latitude")
_LON_COLUMNS = ("lon", "long", "longitude")
_NAME_COLUMNS = ("name", "waypoint", "wp")


class WaypointError(NavredError):
    """A route file that cannot be read as waypoints."""


@dataclass(frozen=True)
class Waypoints:
    """The waypoints of a route in the order sailed: positions (degrees, north and east +) and names."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    names: tuple[str, ...]
    source: str

    def __len__(self) -> int:
        return int(self.lat_deg.size)


@api_boundary
def read_waypoints(path: str | Path) -> Waypoints:
    """The waypoints of a route file (CSV or GPX 1.1; see the module), checked whole."""
    from .readers import named_input_file

    file = named_input_file(path, "route file", "CSV or GPX", WaypointError, MAX_WAYPOINT_BYTES,
                            "{file} is {mib:.1f} MiB; a route file of up to " f"{MAX_WAYPOINT_BYTES // 2**20} MiB "
                            f"({MAX_READ_WAYPOINTS:,} waypoints) is read")
    if file.stat().st_size == 0:
        raise WaypointError(f"{file} is empty: a route needs two waypoints or more")
    with open(file, "rb") as handle:
        head = handle.read(500)
    if head[:2] in (b"PK", b"\x1f\x8b"):
        raise WaypointError(f"{file} is compressed (zip or gzip) or a workbook: give the route as CSV or GPX")
    if file.suffix.lower() == ".gpx" or head.lstrip().startswith(b"<"):
        lat, lon, names = _read_gpx(file.read_bytes(), file)
    else:
        lat, lon, names = _read_csv(file)
    if lat.size < 2:
        raise WaypointError(f"{file}: {lat.size} waypoint; a route needs two or more (the first is where she "
                            "starts)")
    if lat.size > MAX_READ_WAYPOINTS:
        raise WaypointError(f"{file}: {lat.size:,} waypoints; a route of up to {MAX_READ_WAYPOINTS:,} is read")
    return Waypoints(lat, lon, tuple(names), str(file))


def read_route(path: str | Path):
    """The waypoints of a route file as a table (``lat_deg``, ``lon_deg`` in −180..180, ``name``), in order: the
    waypoints ahead for the noon report's distance to go and ETA, read by :func:`read_waypoints` like the
    paper's route (one reader of route files, the same refusals)."""
    import pandas as pd

    points = read_waypoints(path)
    return pd.DataFrame({"lat_deg": points.lat_deg, "lon_deg": wrap_180(points.lon_deg), "name": list(points.names)})


def _read_csv(file: Path) -> tuple[np.ndarray, np.ndarray, list[str]]:
    from .readers import ReadBudget, read_table

    lines = file.read_bytes().count(b"\n")
    if lines > MAX_READ_WAYPOINTS + 1:
        raise WaypointError(f"{file} has {lines:,} lines; a route of up to {MAX_READ_WAYPOINTS:,} waypoints is read "
                            "(a track of positions is not a route: give its waypoints)")
    try:
        table = read_table(file, budget=ReadBudget(rows=MAX_READ_WAYPOINTS + 1, cells=64 * (MAX_READ_WAYPOINTS + 1)))[0]
    except NavredError as exc:
        raise WaypointError(str(exc).replace("sight log", "route").replace("logs", "routes")) from None
    columns = {normalise_header(h): k for k, h in enumerate(table.header)}
    if table.row_problems:
        index, (header, reason) = sorted(table.row_problems.items())[0]
        raise WaypointError(f"{file} row {table.row_numbers[index]}: {reason}: every waypoint of a route must be "
                            "read (a leg would otherwise join two other waypoints)")
    rows = [int(r) for r in table.row_numbers]

    def column(names):
        found = [columns[n] for n in names if n in columns]
        if len(found) > 1:
            raise WaypointError(f"{file}: {' and '.join(table.header[k] for k in found)} both name one thing; keep "
                                "one")
        return table.columns[found[0]].tolist() if found else None

    text = (column(_LAT_COLUMNS), column(_LON_COLUMNS))
    decimal = (column(("lat_deg",)), column(("lon_deg",)))
    if (text[0] is None) != (text[1] is None) or (decimal[0] is None) != (decimal[1] is None) or (
            text[0] is None and decimal[0] is None):
        raise WaypointError(f"{file}: a route needs each waypoint's latitude and longitude, in columns lat and lon "
                            f"(49 57.0 N, 005 12.0 W) or lat_deg and lon_deg (signed degrees); it has "
                            f"{', '.join(table.header)}")
    read = [(_angles(file, rows, cells, kind, table.decimal_comma) if cells is not None else None)
            for cells, kind in zip(text + decimal, ("lat", "lon", "lat", "lon"))]
    lat, lon = (read[2], read[3]) if read[2] is not None else (read[0], read[1])
    if read[0] is not None and read[2] is not None:
        off = np.maximum(np.abs(read[0] - read[2]), np.abs(wrap_180(read[1] - read[3])) *
                         np.cos(np.radians(read[2]))) * ARCMIN_PER_DEG
        bad = np.flatnonzero(off > AGREE_ARCMIN)
        if bad.size:
            k = int(bad[0])
            raise WaypointError(f"{file} row {rows[k]}: the waypoint's lat/lon ({text[0][k]}, {text[1][k]}) and "
                                f"lat_deg/lon_deg ({decimal[0][k]}, {decimal[1][k]}) disagree by {off[k]:.1f}′: "
                                "which is meant? Correct one, or keep one pair of columns")
    names = column(_NAME_COLUMNS)
    labels = [("" if v is None or v != v else str(v).strip()) for v in names] if names is not None else [""] * len(rows)
    # a waypoint's number (navred route's CSV) is named as its GPX names it
    labels = [f"WP{int(label):03d}" if label.isdigit() else label for label in labels]
    return lat, lon, [label or f"WP{k:03d}" for k, label in enumerate(labels)]


def _angles(file: Path, rows: list[int], cells: list, kind: str, decimal_comma: bool) -> np.ndarray:
    """A column of latitudes or longitudes, each cell read as the log reads one; the first bad one refuses the
    route, with its row."""
    out = np.empty(len(cells))
    for k, cell in enumerate(cells):
        if cell is None or (isinstance(cell, float) and cell != cell) or not str(cell).strip():
            raise WaypointError(f"{file} row {rows[k]}: the waypoint has no {'latitude' if kind == 'lat' else 'longitude'}"
                                ": every waypoint of a route must be given")
        try:
            out[k] = float(parse_angle(cell if isinstance(cell, (int, float)) else str(cell).strip(), kind,
                                       decimal_comma))
        except NavredError as exc:
            raise WaypointError(f"{file} row {rows[k]}: {exc}") from None
    return out


def _read_gpx(data: bytes, file: Path) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """The points of the GPX file's one route, else its waypoints, in the file's order."""
    from .safexml import XmlRefused, iterparse

    if sum(data.count(tag) for tag in (b"<rtept", b"<wpt", b":rtept", b":wpt")) > MAX_READ_WAYPOINTS:
        raise WaypointError(f"{file}: more than {MAX_READ_WAYPOINTS:,} waypoints; a route of up to "
                            f"{MAX_READ_WAYPOINTS:,} is read")
    points: dict[str, list] = {"rtept": [], "wpt": []}
    routes = 0
    try:
        for _event, element in iterparse(io.BytesIO(data), str(file)):
            name = element.tag[element.tag.rfind("}") + 1:]
            if name in points:
                label = next((child.text or "" for child in element if child.tag.endswith("name")), "")
                points[name].append((element.get("lat"), element.get("lon"), label.strip()))
                element.clear()
            elif name == "rte":
                routes += 1
    except XmlRefused as exc:
        raise WaypointError(str(exc)) from None
    if routes > 1:
        raise WaypointError(f"{file} holds {routes} routes: give a file of the one route to plan along")
    chosen = points["rtept"] or points["wpt"]
    if not chosen:
        raise WaypointError(f"{file}: no GPX route points (rtept) or waypoints (wpt)")
    lat, lon = np.empty(len(chosen)), np.empty(len(chosen))
    for k, (la, lo, _) in enumerate(chosen):
        try:
            lat[k], lon[k] = float(la), float(lo)
        except (TypeError, ValueError):
            lat[k] = lon[k] = np.nan
        if not (np.isfinite(lat[k]) and np.isfinite(lon[k]) and abs(lat[k]) <= 90.0 and abs(lon[k]) <= 180.0):
            raise WaypointError(f"{file}: point {k + 1} has lat {la!r}, lon {lo!r}: GPX gives decimal degrees within "
                                "±90° and ±180°; every waypoint of a route must be read")
    return lat, lon, [label or f"WP{k:03d}" for k, (_, _, label) in enumerate(chosen)]


__all__ = ["read_route", "Waypoints", "WaypointError", "read_waypoints", "MAX_WAYPOINTS", "MAX_READ_WAYPOINTS"]
