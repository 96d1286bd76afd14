"""A route's waypoints read back (the CSV ``navred route`` writes: ``-o route.csv`` or ``--csv``), for the noon
report's distance to go and ETA. Read through the bounded table reader like any file a user gives.

The table needs a latitude and a longitude per waypoint: navred's own ``lat_deg`` and ``lon_deg`` (signed decimal
degrees), or ``lat`` and ``lon`` as a navigator writes them (``49 57.0 N``, ``005 12.0 W``); a ``name`` or
``waypoint`` column names them. A row that cannot be read refuses the route, by its row: a route with a waypoint
missing would give a wrong distance to go.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..angles import parse_angle, wrap_180
from ..errors import NavredError, api_boundary
from ..vocabulary import normalise_header
from .readers import read_table

#: A route navred writes has at most 2,000 waypoints (navred.jobs.routes.MAX_WAYPOINTS); a file with more is not one.
MAX_ROUTE_WAYPOINTS = 2000


class RouteFileError(NavredError):
    """A route file that cannot be read as waypoints."""


@api_boundary
def read_route(path) -> pd.DataFrame:
    """The waypoints of a route file, in order: ``lat_deg``, ``lon_deg``, ``name``."""
    tables = read_table(path)
    if len(tables) != 1:
        raise RouteFileError(f"give one route file, not {len(tables)} tables")
    table = tables[0]
    names = {normalise_header(h): k for k, h in enumerate(table.header)}
    if table.n_rows > MAX_ROUTE_WAYPOINTS:
        raise RouteFileError(f"{table.source}: {table.n_rows:,} rows, more than the {MAX_ROUTE_WAYPOINTS:,} waypoints "
                             "of a route")
    if table.row_problems:
        index, (_, reason) = min(table.row_problems.items())
        raise RouteFileError(f"{table.source} row {table.row_numbers[index]}: {reason}")
    pairs = [("lat_deg", "lon_deg", "signed"), ("lat", "lon", "lat")]
    chosen = next(((a, b, kind) for a, b, kind in pairs if a in names and b in names), None)
    if chosen is None:
        raise RouteFileError(f"{table.source} is not a route: it has no lat_deg and lon_deg (or lat and lon) columns; "
                             "give the CSV navred route writes (-o route.csv)")
    a, b, kind = chosen
    lat, lon = np.full(table.n_rows, np.nan), np.full(table.n_rows, np.nan)
    for i in range(table.n_rows):
        cells = (table.columns[names[a]].iloc[i], table.columns[names[b]].iloc[i])
        try:
            if kind == "signed":
                lat[i], lon[i] = float(cells[0]), float(cells[1])
            else:
                lat[i], lon[i] = float(parse_angle(cells[0], "lat")), float(parse_angle(cells[1], "lon"))
        except (NavredError, ValueError, TypeError) as exc:
            raise RouteFileError(f"{table.source} row {table.row_numbers[i]}: cannot read the waypoint "
                                 f"{cells[0]!r} {cells[1]!r}: {exc}") from None
        if not (abs(lat[i]) <= 90.0 and abs(lon[i]) <= 360.0):
            raise RouteFileError(f"{table.source} row {table.row_numbers[i]}: waypoint {lat[i]:g}, {lon[i]:g} is not a "
                                 "position")
    if table.n_rows == 0:
        raise RouteFileError(f"{table.source} holds no waypoint")
    label = next((names[k] for k in ("name", "waypoint") if k in names), None)
    name = ([f"waypoint {str(v).strip()}" if label == names.get("waypoint") else str(v).strip()
             for v in table.columns[label]] if label is not None else [f"waypoint {k + 1}" for k in range(table.n_rows)])
    lon = wrap_180(lon)
    return pd.DataFrame({"lat_deg": lat, "lon_deg": lon, "name": name})


__all__ = ["read_route", "RouteFileError", "MAX_ROUTE_WAYPOINTS"]
