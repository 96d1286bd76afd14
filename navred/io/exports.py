"""Positions in open formats for a chart plotter: the one GPX writer and the one GeoJSON writer.

- GPX 1.1 (the Topografix schema, an open standard, one namespace): waypoints (``wpt``), routes (``rte``
  of ``rtept``) and tracks (``trk`` of segments of ``trkpt``), each point with its time, name, description
  and type where it has them.
- GeoJSON (RFC 7946): a FeatureCollection of the features given, coordinates as [longitude, latitude] in
  WGS 84 degrees; a number that is not finite is written as null (JSON has no NaN); a line or a ring that
  crosses the antimeridian is cut there into two parts (§3.1.9), none of whose coordinates jump across it.

Both carry the safety caution (GPX: the metadata's description and the comment of every waypoint, route and
track; GeoJSON: a ``navred`` member and every feature's ``navred_caution`` property) and are
written atomically. What is written is the job's: a voyage's fixes and DR (:mod:`navred.jobs.chartfiles`),
a route (:mod:`navred.jobs.routes`).
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import __version__
from ..angles import wrap_180
from .cautions import CAUTION, geojson_with_caution, gpx_with_caution
from .output import atomic_write

GPX_NAMESPACE = "http://www.topografix.com/GPX/1/1"


@dataclass(frozen=True)
class GpxPoint:
    """One point of a GPX file: a waypoint, a route point or a track point."""

    lat_deg: float
    lon_deg: float
    utc: str = ""  # ISO 8601 with Z, '' for none
    name: str = ""
    description: str = ""
    kind: str = ""  # the GPX <type>


@dataclass(frozen=True)
class GpxRoute:
    """A route (``rte``): its points in order."""

    name: str
    description: str
    points: Sequence[GpxPoint]


@dataclass(frozen=True)
class GpxTrack:
    """A track (``trk``): its segments, each a run of points."""

    name: str
    kind: str
    segments: Sequence[Sequence[GpxPoint]] = field(default_factory=tuple)


def iso_z(utc) -> str:
    """An instant (datetime64, Timestamp, or its text) as ISO 8601 to the second with Z."""
    return str(utc).replace(" ", "T")[:19] + "Z"


def ascii_text(text: str) -> str:
    """A description as plain text every chart plotter shows."""
    for a, b in (("×", "x"), ("±", "+-"), ("′", "'"), ("°", " deg"), ("σ", "sigma"), ("…", "...")):
        text = text.replace(a, b)
    return text


def _gpx_point(parent, tag: str, point: GpxPoint) -> None:
    element = ET.SubElement(parent, f"{{{GPX_NAMESPACE}}}{tag}", {"lat": f"{point.lat_deg:.6f}",
                                                                  "lon": f"{point.lon_deg:.6f}"})
    # the schema's order: time, name, cmt, desc, type; a waypoint carries the caution as its comment, so that a
    # plotter that imports the waypoints alone keeps it beside each
    caution = CAUTION if tag == "wpt" else ""
    for child, text in (("time", point.utc), ("name", point.name), ("cmt", caution), ("desc", point.description),
                        ("type", point.kind)):
        if text:
            ET.SubElement(element, f"{{{GPX_NAMESPACE}}}{child}").text = text


def write_gpx(path: str | Path, *, waypoints: Iterable[GpxPoint] = (), routes: Iterable[GpxRoute] = (),
              tracks: Iterable[GpxTrack] = (), inputs: Iterable[str] = ()) -> Path:
    """A GPX 1.1 file of waypoints, routes and tracks, with the caution in its metadata; ``inputs``: the
    files the run read (never written over). A route without points, a track without a segment of two
    points and an empty segment are left out: a chart plotter shows an empty element as a nameless item."""
    ET.register_namespace("", GPX_NAMESPACE)
    root = ET.Element(f"{{{GPX_NAMESPACE}}}gpx", {"version": "1.1", "creator": f"navred {__version__}"})
    gpx_with_caution(root, GPX_NAMESPACE)
    for point in waypoints:
        _gpx_point(root, "wpt", point)
    for route in (r for r in routes if len(r.points)):
        rte = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}rte")
        for child, text in (("name", route.name), ("cmt", CAUTION), ("desc", route.description)):
            if text:
                ET.SubElement(rte, f"{{{GPX_NAMESPACE}}}{child}").text = text
        for point in route.points:
            _gpx_point(rte, "rtept", point)
    for track in tracks:
        segments = [segment for segment in track.segments if len(segment) >= 2]
        if not segments:
            continue
        trk = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}trk")
        for child, text in (("name", track.name), ("cmt", CAUTION), ("type", track.kind)):
            if text:
                ET.SubElement(trk, f"{{{GPX_NAMESPACE}}}{child}").text = text
        for segment in segments:
            trkseg = ET.SubElement(trk, f"{{{GPX_NAMESPACE}}}trkseg")
            for point in segment:
                _gpx_point(trkseg, "trkpt", point)
    tree = ET.ElementTree(root)
    ET.indent(tree)
    return atomic_write(path, lambda p: tree.write(p, encoding="utf-8", xml_declaration=True), inputs=list(inputs))


def finite(value):
    """A number for JSON, or None where it is not finite (RFC 7946 JSON has no NaN)."""
    if value is None:
        return None
    value = float(value)
    return value if np.isfinite(value) else None


def point_feature(lat_deg: float, lon_deg: float, properties: dict) -> dict:
    """A GeoJSON Point feature."""
    return {"type": "Feature", "geometry": {"type": "Point", "coordinates": [float(lon_deg), float(lat_deg)]},
            "properties": properties}


def _unwrapped(lon_deg) -> np.ndarray:
    """Longitudes made continuous (each step the short way round, under 180°), from the first one."""
    lon = np.asarray(lon_deg, dtype=float)
    if lon.size < 2:
        return lon.copy()
    step = wrap_180(np.diff(lon))
    return np.concatenate([[lon[0]], lon[0] + np.cumsum(step)])


def _wrapped(lon: float, side: float) -> float:
    """A longitude of a part in −180..180, a point on the antimeridian kept on its part's ``side`` (±180)."""
    value = float(wrap_180(lon))
    return side if abs(abs(value) - 180.0) < 1e-9 else value


def antimeridian_lines(lat_deg, lon_deg) -> list[list[list[float]]]:
    """The line through the points as [lon, lat] parts, cut where it crosses the antimeridian (RFC 7946 §3.1.9):
    each part ends on 180° on its own side (the crossing interpolated linearly, as GeoJSON draws the line), so
    that no part's coordinates jump across the map. A line that does not cross is one part."""
    lat = np.asarray(lat_deg, dtype=float)
    lon = _unwrapped(lon_deg)
    parts: list[list[list[float]]] = [[]]
    for k in range(lat.size):
        if k:
            a, b = lon[k - 1], lon[k]
            # each odd multiple of 180° between the two points is a crossing of the antimeridian
            low, high = sorted((a, b))
            first = np.ceil((low - 180.0) / 360.0)
            last = np.floor((high - 180.0) / 360.0)
            crossings = [180.0 + 360.0 * m for m in np.arange(first, last + 1)]
            for cross in (crossings if b >= a else crossings[::-1]):
                if cross in (a, b):
                    continue
                t = (cross - a) / (b - a)
                at_lat = float(lat[k - 1] + t * (lat[k] - lat[k - 1]))
                side = 180.0 if b > a else -180.0
                parts[-1].append([side, at_lat])
                parts.append([[-side, at_lat]])
        side = 180.0 if (k + 1 < lat.size and lon[k + 1] > lon[k]) else -180.0
        parts[-1].append([_wrapped(float(lon[k]), side if k + 1 < lat.size else -side), float(lat[k])])
    return [p for p in parts if len(p) >= 2] or [parts[0]]


def line_feature(lat_deg, lon_deg, properties: dict) -> dict:
    """A GeoJSON LineString feature through the points given (latitudes and longitudes in degrees); a line that
    crosses the antimeridian is a MultiLineString cut there (RFC 7946 §3.1.9)."""
    parts = antimeridian_lines(lat_deg, lon_deg)
    geometry = ({"type": "LineString", "coordinates": parts[0]} if len(parts) == 1
                else {"type": "MultiLineString", "coordinates": parts})
    return {"type": "Feature", "geometry": geometry, "properties": properties}


def _clipped(ring: list[tuple[float, float]], boundary: float, keep_below: bool) -> list[list[float]]:
    """A ring (unwrapped [lon, lat]) clipped to one side of the meridian ``boundary`` (Sutherland-Hodgman)."""
    inside = (lambda p: p[0] <= boundary) if keep_below else (lambda p: p[0] >= boundary)
    out = []
    for k in range(len(ring)):
        current, previous = ring[k], ring[k - 1]
        if inside(current) != inside(previous):
            t = (boundary - previous[0]) / (current[0] - previous[0])
            out.append([boundary, previous[1] + t * (current[1] - previous[1])])
        if inside(current):
            out.append(list(current))
    return out


def polygon_feature(lat_deg, lon_deg, properties: dict) -> dict:
    """A GeoJSON Polygon feature of one ring (latitudes and longitudes in degrees, closed or not); a ring that
    crosses the antimeridian is a MultiPolygon of its two parts, cut there (RFC 7946 §3.1.9). A ring around a
    pole is not cut (navred's rings, the 95 % ellipses, are small)."""
    lat = np.asarray(lat_deg, dtype=float)
    lon = _unwrapped(lon_deg)
    ring = list(zip(lon.tolist(), lat.tolist()))
    if ring and ring[0] == ring[-1]:
        ring = ring[:-1]
    low, high = float(np.min(lon)), float(np.max(lon))
    boundary = float(180.0 + 360.0 * np.floor((high - 180.0) / 360.0))
    if not (low < boundary < high):
        coordinates = [[_wrapped(x, 180.0), y] for x, y in ring]
        return {"type": "Feature", "geometry": {"type": "Polygon", "coordinates": [coordinates + [coordinates[0]]]},
                "properties": properties}
    polygons = []
    for keep_below, side in ((True, 180.0), (False, -180.0)):
        part = _clipped(ring, boundary, keep_below)
        coordinates = [[_wrapped(x, side), y] for x, y in part]
        polygons.append([coordinates + [coordinates[0]]])
    return {"type": "Feature", "geometry": {"type": "MultiPolygon", "coordinates": polygons},
            "properties": properties}


def write_geojson(path: str | Path, features: list[dict], *, inputs: Iterable[str] = ()) -> Path:
    """A GeoJSON FeatureCollection (RFC 7946) of ``features``, with the caution; ``inputs`` never written over."""
    # the caution also in every feature's properties: a plotter that imports the features alone keeps it
    features = [{**feature, "properties": {**(feature.get("properties") or {}), "navred_caution": CAUTION}}
                for feature in features]
    collection = geojson_with_caution({"type": "FeatureCollection", "features": features})
    text = json.dumps(collection, indent=1, allow_nan=False)
    return atomic_write(path, lambda p: Path(p).write_text(text, encoding="utf-8"), inputs=list(inputs))


__all__ = ["GPX_NAMESPACE", "GpxPoint", "GpxRoute", "GpxTrack", "write_gpx", "write_geojson", "point_feature",
           "line_feature", "polygon_feature", "antimeridian_lines", "finite", "iso_z", "ascii_text"]
