"""Positions in open formats for a chart plotter: the one GPX writer and the one GeoJSON writer.

- GPX 1.1 (the Topografix schema, an open standard, one namespace): waypoints (``wpt``), routes (``rte``
  of ``rtept``) and tracks (``trk`` of segments of ``trkpt``), each point with its time, name, description
  and type where it has them.
- GeoJSON (RFC 7946): a FeatureCollection of the features given, coordinates as [longitude, latitude] in
  WGS 84 degrees; a number that is not finite is written as null (JSON has no NaN).

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


def line_feature(lat_deg, lon_deg, properties: dict) -> dict:
    """A GeoJSON LineString feature through the points given (latitudes and longitudes in degrees)."""
    return {"type": "Feature", "geometry": {"type": "LineString", "coordinates": [
        [float(lon), float(lat)] for lat, lon in zip(lat_deg, lon_deg)]}, "properties": properties}


def write_geojson(path: str | Path, features: list[dict], *, inputs: Iterable[str] = ()) -> Path:
    """A GeoJSON FeatureCollection (RFC 7946) of ``features``, with the caution; ``inputs`` never written over."""
    # the caution also in every feature's properties: a plotter that imports the features alone keeps it
    features = [{**feature, "properties": {**(feature.get("properties") or {}), "navred_caution": CAUTION}}
                for feature in features]
    collection = geojson_with_caution({"type": "FeatureCollection", "features": features})
    text = json.dumps(collection, indent=1, allow_nan=False)
    return atomic_write(path, lambda p: Path(p).write_text(text, encoding="utf-8"), inputs=list(inputs))


__all__ = ["GPX_NAMESPACE", "GpxPoint", "GpxRoute", "GpxTrack", "write_gpx", "write_geojson", "point_feature",
           "line_feature", "finite", "iso_z", "ascii_text"]
