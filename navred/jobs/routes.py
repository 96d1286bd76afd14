"""Passage planning by the sailings: the rhumb line, the great circle and the composite great circle
between two positions, its waypoints, and the route as CSV, GPX and GeoJSON. Edge code over
:mod:`navred.sailings` (the core, on the WGS 84 ellipsoid).

The waypoints lie on the great circle (or on the composite route) at a chosen spacing; between two
waypoints the ship steers the rhumb line, whose course and distance each leg gives (common practice:
a great circle is sailed as a series of rhumb lines).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import format_angle, wrap_180, wrap_360
from ..constants import NS_PER_HOUR
from ..errors import NavredError
from ..io.cautions import ROUTE_CAUTION
from ..io.exports import GpxPoint, GpxRoute, line_feature, point_feature, write_geojson, write_gpx
from ..io.waypoints import MAX_WAYPOINTS
from ..reckoning import DRTrack
from ..sailings import (
    composite_great_circle,
    great_circle_destination,
    great_circle_inverse,
    great_circle_vertex,
    rhumb_inverse,
)

WAYPOINT_COLUMNS = ["waypoint", "lat", "lon", "lat_deg", "lon_deg", "from_start_nm", "part",
                    "rhumb_course_to_next_deg", "rhumb_distance_to_next_nm"]


@dataclass(frozen=True)
class Route:
    """A planned passage: both sailings compared, the vertex, and the waypoints."""

    start: tuple[float, float]
    end: tuple[float, float]
    rhumb_nm: float
    rhumb_course_deg: float
    great_circle_nm: float
    initial_course_deg: float
    final_course_deg: float
    vertex: tuple[float, float] | None
    vertex_from_start_nm: float
    vertex_on_route: bool
    composite: dict | None
    waypoints: pd.DataFrame
    spacing_nm: float

    def summary_lines(self) -> list[str]:
        def pos(p):
            return f"{format_angle(p[0], 'lat')} {format_angle(p[1], 'lon')}"

        saving = self.rhumb_nm - self.great_circle_nm
        lines = [f"From {pos(self.start)} to {pos(self.end)} (WGS 84 ellipsoid)",
                 f"rhumb line:   {self.rhumb_nm:9.1f} nm on {self.rhumb_course_deg:05.1f}°",
                 f"great circle: {self.great_circle_nm:9.1f} nm, initial course {self.initial_course_deg:05.1f}°, "
                 f"final course {self.final_course_deg:05.1f}°; {saving:.1f} nm shorter "
                 f"({100 * saving / self.rhumb_nm if self.rhumb_nm else 0:.1f} %)"]
        if self.vertex is not None:
            if self.vertex_on_route:
                lines.append(f"vertex: {pos(self.vertex)} (on the route, {self.vertex_from_start_nm:.1f} nm from "
                             "the start)")
            else:  # the great circle's vertex lies off this passage: its position does not matter to her
                high = self.start if abs(self.start[0]) >= abs(self.end[0]) else self.end
                lines.append(f"no vertex on the route: its highest latitude is at "
                             f"{'the start' if high is self.start else 'the destination'} ({format_angle(high[0], 'lat')})")
        if self.composite is not None:
            c = self.composite
            if c["kind"] == "composite":
                lines.append(
                    f"composite great circle within {format_angle(c['limit_deg'], 'lat')}: {c['distance_nm']:.1f} nm "
                    f"({c['distance_nm'] - self.great_circle_nm:.1f} nm longer than the great circle): "
                    f"{c['first_nm']:.1f} nm on the great circle from {self.initial_label(c)} to meet the limit at "
                    f"{pos(c['meets'])}, {c['parallel_nm']:.1f} nm along the parallel to {pos(c['leaves'])}, "
                    f"{c['last_nm']:.1f} nm on the great circle to the destination (final course "
                    f"{c['final_course_deg']:05.1f}°)")
            else:
                lines.append(f"the great circle keeps within {format_angle(c['limit_deg'], 'lat')}: no composite "
                             "route is needed")
        lines.append(f"{len(self.waypoints)} waypoints, every {self.spacing_nm:g} nm along the "
                     f"{'composite route' if self.composite and self.composite['kind'] == 'composite' else 'great circle'}"
                     "; steer the rhumb line between them, each leg checked on the chart first:")
        for r in self.waypoints.to_dict("records"):
            leg = (f"  then {r['rhumb_course_to_next_deg']:05.1f}° for {r['rhumb_distance_to_next_nm']:.1f} nm"
                   if r["rhumb_distance_to_next_nm"] == r["rhumb_distance_to_next_nm"] else "")
            lines.append(f"  {r['waypoint']:>4}  {r['lat']:>12} {r['lon']:>13}  {r['from_start_nm']:8.1f} nm{leg}")
        lines.append(ROUTE_CAUTION)
        return lines

    @staticmethod
    def initial_label(c) -> str:
        return f"the start (initial course {c['initial_course_deg']:05.1f}°)"


def plan_route(lat1_deg: float, lon1_deg: float, lat2_deg: float, lon2_deg: float, *, spacing_nm: float = 300.0,
               limit_lat_deg: float | None = None) -> Route:
    """Both sailings between two positions, the vertex, and waypoints every ``spacing_nm`` along the great
    circle (or the composite great circle within ``limit_lat_deg``)."""
    if not spacing_nm > 0:
        raise NavredError(f"the waypoint spacing {spacing_nm!r} nm must be more than 0")
    rhumb_nm, rhumb_course = (float(v) for v in rhumb_inverse(lat1_deg, lon1_deg, lat2_deg, lon2_deg))
    gc_nm, course1, course2 = (float(v) for v in great_circle_inverse(lat1_deg, lon1_deg, lat2_deg, lon2_deg))
    if gc_nm / spacing_nm > MAX_WAYPOINTS:
        raise NavredError(f"a spacing of {spacing_nm:g} nm gives {gc_nm / spacing_nm:,.0f} waypoints over {gc_nm:,.0f} "
                          f"nm; navred gives at most {MAX_WAYPOINTS:,}: choose a wider spacing")
    vlat, vlon, vdist = (float(v) for v in great_circle_vertex(lat1_deg, lon1_deg, course1))
    vertex = None if not np.isfinite(vlat) else (vlat, vlon)
    composite = None
    if limit_lat_deg is not None:
        composite = composite_great_circle(lat1_deg, lon1_deg, lat2_deg, lon2_deg, limit_lat_deg)
        composite["limit_deg"] = float(limit_lat_deg)
    waypoints = _waypoints(lat1_deg, lon1_deg, lat2_deg, lon2_deg, course1, gc_nm, spacing_nm, composite)
    return Route((lat1_deg, lon1_deg), (lat2_deg, lon2_deg), rhumb_nm, rhumb_course, gc_nm, course1, course2, vertex,
                 vdist, bool(vertex is not None and vdist < gc_nm), composite, waypoints, spacing_nm)


def _waypoints(lat1, lon1, lat2, lon2, course1, gc_nm, spacing, composite) -> pd.DataFrame:
    if composite is None or composite["kind"] != "composite":
        along = np.unique(np.concatenate([np.arange(0.0, gc_nm, spacing), [gc_nm]]))
        lat, lon, _ = great_circle_destination(lat1, lon1, course1, along)
        part = np.full(along.size, "great circle", dtype=object)
    else:
        c = composite
        total = c["distance_nm"]
        along = np.unique(np.concatenate([np.arange(0.0, total, spacing), [c["first_nm"],
                                                                             c["first_nm"] + c["parallel_nm"], total]]))
        lat, lon = np.empty(along.size), np.empty(along.size)
        part = np.empty(along.size, dtype=object)
        first = along <= c["first_nm"]
        lat[first], lon[first], _ = great_circle_destination(lat1, lon1, c["initial_course_deg"], along[first])
        part[first] = "great circle to the limit"
        run = (along > c["first_nm"]) & (along <= c["first_nm"] + c["parallel_nm"])
        if run.any():  # along the parallel: the longitude moves by the miles over ν cos φ
            from ..sailings import prime_vertical_radius_m

            limit = c["limit_deg"]
            per_deg = np.radians(1.0) * prime_vertical_radius_m(abs(limit)) * np.cos(np.radians(limit)) / 1852.0
            east = 1.0 if np.sin(np.radians(c["initial_course_deg"])) >= 0 else -1.0
            lat[run] = c["meets"][0]
            lon[run] = wrap_180(c["meets"][1] + east * (along[run] - c["first_nm"]) / per_deg)
            part[run] = "along the limiting parallel"
        last = along > c["first_nm"] + c["parallel_nm"]
        if last.any():  # back from the destination along its touching great circle
            back_course = float(wrap_360(c["final_course_deg"] + 180.0))
            lat[last], lon[last], _ = great_circle_destination(lat2, lon2, back_course, total - along[last])
            part[last] = "great circle from the limit"
        lat[-1], lon[-1] = lat2, lon2
    lat[0], lon[0] = lat1, lon1
    lat[-1], lon[-1] = lat2, lon2
    legs, courses = rhumb_inverse(lat[:-1], lon[:-1], lat[1:], lon[1:])
    return pd.DataFrame({
        "waypoint": np.arange(len(along)), "lat": [format_angle(v, "lat") for v in lat],
        "lon": [format_angle(v, "lon") for v in lon], "lat_deg": lat, "lon_deg": lon, "from_start_nm": along,
        "part": part, "rhumb_course_to_next_deg": np.append(courses, np.nan),
        "rhumb_distance_to_next_nm": np.append(legs, np.nan)})[WAYPOINT_COLUMNS]


@dataclass(frozen=True)
class RouteDR:
    """The DR of a ship sailing a route's waypoints in turn at one speed: the rhumb line of each leg (as a great
    circle's waypoints are sailed), her time of arrival at each waypoint, and the DR track.

    She lies at the first waypoint from ``since`` until she leaves it (``eta[0]``), and at the last from her
    arrival on; the track is restarted at every waypoint, so that she is at each one at its time."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    names: tuple[str, ...]
    speed_kn: float
    eta: np.ndarray  # datetime64[ns] UTC: leaving the first waypoint, then arriving at each of the others
    course_deg: np.ndarray  # the rhumb line of each leg (one fewer than the waypoints)
    distance_nm: np.ndarray
    track: DRTrack

    @property
    def total_nm(self) -> float:
        return float(self.distance_nm.sum())


def route_dr(lat_deg, lon_deg, depart_utc: object, speed_kn: float, *, since: object | None = None,
             names: tuple[str, ...] = ()) -> RouteDR:
    """The DR along waypoints (degrees, in the order sailed) leaving the first at ``depart_utc`` (datetime64 or
    ISO 8601 with a zone) at ``speed_kn`` through the water, on the rhumb line of each leg on the WGS 84
    ellipsoid; lying at the first waypoint from ``since`` (default: the departure) and at the last after her
    arrival."""
    from ..reckoning import dr_track
    from ..timescales import utc_datetime64

    lat = np.atleast_1d(np.asarray(lat_deg, dtype=float))
    lon = np.atleast_1d(np.asarray(lon_deg, dtype=float))
    if lat.size < 2 or lat.shape != lon.shape:
        raise NavredError(f"a route needs two waypoints or more, each with its latitude and longitude; given {lat.size}")
    if not (np.isfinite(speed_kn) and speed_kn > 0):
        raise NavredError(f"a route is sailed at a speed: {speed_kn!r} kn given; give the speed through the water "
                          "(more than 0)")
    depart = np.datetime64(utc_datetime64(depart_utc), "ns")
    start = depart if since is None else min(depart, np.datetime64(utc_datetime64(since), "ns"))
    distance, course = rhumb_inverse(lat[:-1], lon[:-1], lat[1:], lon[1:])
    distance, course = np.atleast_1d(distance), np.atleast_1d(course)
    hours = np.concatenate([[0.0], np.cumsum(distance / speed_kn)])
    eta = depart + np.round(hours * NS_PER_HOUR).astype(np.int64).astype("timedelta64[ns]")
    eta_ns = eta.astype(np.int64)
    # a change at each waypoint (the next leg's course; at the last, stopped); every waypoint a known position,
    # and the first from ``since`` on, before she leaves it (before any change the ship lies stopped)
    track = dr_track(eta_ns, np.append(course, 0.0), np.append(np.full(course.size, float(speed_kn)), 0.0),
                     np.concatenate([[start.astype(np.int64)], eta_ns]) if start < depart else eta_ns,
                     np.concatenate([[lat[0]], lat]) if start < depart else lat,
                     np.concatenate([[lon[0]], lon]) if start < depart else lon,
                     known_label=(((f"{_name(names, 0)}, before she leaves it",) if start < depart else ())
                                  + tuple(f"waypoint {_name(names, k)}" for k in range(lat.size))))
    return RouteDR(lat, lon, tuple(_name(names, k) for k in range(lat.size)), float(speed_kn), eta, course, distance,
                   track)


#: A leg is remarked when it is this many times the route's median leg (three legs or more), and over LONG_LEG_NM.
LONG_LEG_FACTOR, LONG_LEG_NM = 6.0, 300.0
#: Adjacent waypoints whose longitudes change from E to W (or W to E) with both at least this far from 0° and
#: from 180° are remarked: a sign forgotten in a route written by hand puts a leg across a continent.
SIGN_FLIP_DEG = 10.0


def route_remarks(lat_deg, lon_deg, names: tuple[str, ...] = ()) -> list[str]:
    """What looks wrong in a route written by hand, each naming its waypoints: a leg far longer than its
    neighbours (a waypoint she goes out to and back from, its two legs more than half :data:`LONG_LEG_FACTOR`
    times the leg that skips it and :data:`LONG_LEG_NM` longer; or one leg more than :data:`LONG_LEG_FACTOR`
    times the route's median leg and over :data:`LONG_LEG_NM`), and
    adjacent waypoints whose longitude changes sign far from 0° and 180° (both at least :data:`SIGN_FLIP_DEG`
    from them), with the leg it would be with that sign turned. Nothing is changed: the route is sailed as
    written."""
    lat = np.atleast_1d(np.asarray(lat_deg, dtype=float))
    lon = np.atleast_1d(np.asarray(lon_deg, dtype=float))
    if lat.size < 2:
        return []
    distance = np.atleast_1d(rhumb_inverse(lat[:-1], lon[:-1], lat[1:], lon[1:])[0])
    remarks = []

    def leg(k):
        return (f"{_name(names, k)} ({format_angle(lat[k], 'lat')} {format_angle(lon[k], 'lon')}) to "
                f"{_name(names, k + 1)} ({format_angle(lat[k + 1], 'lat')} {format_angle(lon[k + 1], 'lon')})")

    flips = [k for k in range(distance.size) if lon[k] * lon[k + 1] < 0 and min(
        abs(lon[k]), abs(lon[k + 1]), 180.0 - abs(lon[k]), 180.0 - abs(lon[k + 1])) >= SIGN_FLIP_DEG]
    # a waypoint she goes far out to and comes back from: its two legs much longer than the leg that skips it
    named = set()
    for i in range(1, lat.size - 1):
        if i - 1 in flips and i in flips:  # said below: its longitude's sign
            named.update((i - 1, i))
            continue
        skip = float(rhumb_inverse(lat[i - 1], lon[i - 1], lat[i + 1], lon[i + 1])[0])
        both = float(distance[i - 1] + distance[i])
        if both - skip > LONG_LEG_NM and both > LONG_LEG_FACTOR / 2.0 * max(skip, 1.0):
            named.update((i - 1, i))
            remarks.append(f"{_name(names, i)} ({format_angle(lat[i], 'lat')} {format_angle(lon[i], 'lon')}) takes "
                           f"her {both:,.0f} nm out and back where the leg past it is {skip:,.0f} nm: check its "
                           "position (a latitude's N/S or a longitude's E/W)")
    if distance.size >= 3:
        usual = float(np.median(distance))
        for k in range(distance.size):
            if k not in named and k not in flips and distance[k] > LONG_LEG_NM and distance[k] > LONG_LEG_FACTOR * usual:
                remarks.append(f"the leg {leg(k)} is {distance[k]:,.0f} nm, {distance[k] / usual:.0f} times the "
                               f"route's median leg ({usual:,.0f} nm): check both positions (a longitude's E/W or a "
                               "latitude's N/S)")
    done = set()
    for k in flips:
        if k in done:
            continue
        if k + 1 in flips:  # one waypoint whose longitude differs in sign from both its neighbours
            i = k + 1
            done.add(k + 1)
            turned = float(np.sum(rhumb_inverse(lat[i - 1:i + 1:1], np.array([lon[i - 1], -lon[i]]),
                                                lat[i:i + 2], np.array([-lon[i], lon[i + 1]]))[0]))
            remarks.append(f"{_name(names, i)}'s longitude {format_angle(lon[i], 'lon')} is {'E' if lon[i] > 0 else 'W'} "
                           f"between two {'W' if lon[i] > 0 else 'E'} ones, far from 0° and 180° (the legs {leg(i - 1)} "
                           f"and on to {_name(names, i + 1)}: {distance[i - 1] + distance[i]:,.0f} nm; with it "
                           f"{'W' if lon[i] > 0 else 'E'}, {turned:,.0f} nm): was an E or W forgotten?")
            continue
        turned = float(rhumb_inverse(lat[k], lon[k], lat[k + 1], -lon[k + 1])[0])
        remarks.append(f"the longitude changes from {'E' if lon[k] > 0 else 'W'} to {'E' if lon[k + 1] > 0 else 'W'} "
                       f"far from 0° and 180° on the leg {leg(k)} ({distance[k]:,.0f} nm; with one of the two "
                       f"the other way, {turned:,.0f} nm): was an E or W forgotten?")
    return remarks


def _name(names: tuple[str, ...], k: int) -> str:
    return names[k] if k < len(names) and names[k] else f"WP{k:03d}"


def route_gpx(route: Route, path: str | Path) -> Path:
    """The route as a GPX 1.1 route (rte) of its waypoints."""
    kind = "composite great circle" if route.composite and route.composite["kind"] == "composite" else "great circle"
    points = [GpxPoint(r["lat_deg"], r["lon_deg"], name=f"WP{int(r['waypoint']):03d}",
                       description=f"{r['part']}, {r['from_start_nm']:.1f} nm from the start")
              for r in route.waypoints.to_dict("records")]
    return write_gpx(path, routes=[GpxRoute("navred route", f"{kind}, waypoints every {route.spacing_nm:g} nm; an "
                                                           f"aid to planning. {ROUTE_CAUTION}", points)])


def route_geojson(route: Route, path: str | Path) -> Path:
    """The route as GeoJSON (RFC 7946): the waypoints (Points) and the route through them (a LineString)."""
    w = route.waypoints
    features = [line_feature(w["lat_deg"], w["lon_deg"], {
        "kind": "route", "great_circle_nm": route.great_circle_nm, "rhumb_nm": route.rhumb_nm,
        "composite_nm": (route.composite or {}).get("distance_nm"), "spacing_nm": route.spacing_nm,
        "caution": ROUTE_CAUTION})]
    features += [point_feature(r["lat_deg"], r["lon_deg"], {"kind": "waypoint", "waypoint": int(r["waypoint"]),
                                                            "part": r["part"], "from_start_nm": r["from_start_nm"]})
                 for r in w.to_dict("records")]
    if route.vertex is not None and route.vertex_on_route:
        features.append(point_feature(route.vertex[0], route.vertex[1], {
            "kind": "vertex", "from_start_nm": route.vertex_from_start_nm}))
    return write_geojson(path, features)


__all__ = ["Route", "RouteDR", "route_dr", "route_remarks", "plan_route", "route_gpx", "route_geojson", "WAYPOINT_COLUMNS", "MAX_WAYPOINTS"]
