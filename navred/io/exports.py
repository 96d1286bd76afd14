"""Fixes, DR positions and lines of position in open formats for a chart plotter.

Both carry the safety caution (GPX: the metadata's description; GeoJSON: a ``navred`` member).

- GPX 1.1 (the Topografix schema, an open standard): one waypoint per fix and per DR at
  the fix time, with the time, a name and the ellipse in the description; a waypoint per
  estimated position and per noon position; the DR track as a track (a segment from each
  known position).
- GeoJSON (RFC 7946): a FeatureCollection of the fixes and DRs (Points), their 95 %
  ellipses (Polygons), every line of position (LineStrings), the estimated and noon
  positions (Points) and the DR track (a LineString per leg), coordinates as [longitude,
  latitude] in WGS 84 degrees.

Both are written atomically.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np

from .. import __version__
from ..fixstats import ELLIPSE_COVERS
from ..jobs.voyage import VoyageResult
from ..triangle import destination
from .cautions import geojson_with_caution, gpx_with_caution
from .output import atomic_write

GPX_NAMESPACE = "http://www.topografix.com/GPX/1/1"


def _fix_groups(voyage):
    return [g for g in voyage.groups if g.fix is not None]


def _iso(utc) -> str:
    return str(utc)[:19] + "Z"


def _ascii(text: str) -> str:
    """A description as plain text every chart plotter shows."""
    for a, b in (("×", "x"), ("±", "+-"), ("′", "'"), ("°", " deg"), ("σ", "sigma"), ("…", "...")):
        text = text.replace(a, b)
    return text


def fix_description(group) -> str:
    """What a navigator needs beside the fix's position: its 95 % ellipse's full size, what it covers, the
    sights left out with the fix from every sight, and every warning of the fix."""
    fix = group.fix
    if fix.is_fix:
        text = (f"celestial fix, {int(fix.used.sum())} sights, 95% ellipse {fix.ellipse_text()}, major axis "
                f"{fix.ellipse_orientation_deg:.0f} deg")
    else:
        text = (f"not a fix: a {fix.kind} through this point, bearing {fix.line_bearing_deg:.0f} deg, "
                f"95% band {fix.ellipse_text()} ({int(fix.used.sum())} sights)")
    if fix.left_out_names:
        rows = ", ".join(fix.left_out_names)
        every = fix.all_sights
        text += (f"; LEFT OUT as a gross error: {rows}; the fix from every sight is at "
                 f"{every.lat_deg:.4f}, {every.lon_deg:.4f}") if every is not None else f"; LEFT OUT: {rows}"
    text += f"; the ellipse {ELLIPSE_COVERS}"
    for warning in fix.warnings:
        text += f"; warning: {warning}"
    return _ascii(text)


def write_gpx(voyage: VoyageResult, path: str | Path) -> Path:
    """GPX 1.1 waypoints of every fix and of the DR at each fix time."""
    ET.register_namespace("", GPX_NAMESPACE)
    root = ET.Element(f"{{{GPX_NAMESPACE}}}gpx", {"version": "1.1", "creator": f"navred {__version__}"})
    gpx_with_caution(root, GPX_NAMESPACE)
    for group in _fix_groups(voyage):
        fix = group.fix
        for kind, lat, lon in (("fix", fix.lat_deg, fix.lon_deg), ("DR", fix.dr_lat_deg, fix.dr_lon_deg)):
            point = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}wpt", {"lat": f"{lat:.6f}", "lon": f"{lon:.6f}"})
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}time").text = _iso(fix.utc)
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}name").text = f"{kind} {group.name}"
            description = "DR at the fix time" if kind != "fix" else fix_description(group)
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}desc").text = description
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}type").text = kind
        if fix.all_sights is not None:
            every = fix.all_sights
            point = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}wpt", {"lat": f"{every.lat_deg:.6f}",
                                                                    "lon": f"{every.lon_deg:.6f}"})
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}time").text = _iso(fix.utc)
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}name").text = f"every sight {group.name}"
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}desc").text = _ascii(
                f"NOT the fix: the {every.kind} from every sight of {group.name}, a gross error included "
                f"(95% ellipse {every.ellipse_text()}); the fix leaves it out")
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}type").text = "every sight"
    days = voyage.days_work()
    for kind, frame, name_of, text_of in (
            ("EP", days.estimated, lambda r: f"EP {r['fix group']}", lambda r: f"estimated position: {r['from']}" + (f"; warning: {r['note']}" if r["note"] else "")),
            ("noon", days.noons[days.noons["lat (deg)"].notna()], lambda r: f"noon {r['date']}",
             lambda r: f"noon position ({r['noon from']})" + (f"; day's run {r['run (nm)']:.1f} nm made good on "
                                                              f"{r['course made good (deg)']:.0f} deg"
                                                              if r["run (nm)"] == r["run (nm)"] else ""))):
        for r in frame.to_dict("records"):
            point = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}wpt", {"lat": f"{r['lat (deg)']:.6f}",
                                                                    "lon": f"{r['lon (deg)']:.6f}"})
            stamp = r["UTC"] if kind == "EP" else r["noon (UTC)"]
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}time").text = _iso(str(stamp).replace(" ", "T"))
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}name").text = name_of(r)
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}desc").text = text_of(r)
            ET.SubElement(point, f"{{{GPX_NAMESPACE}}}type").text = kind
    for vessel, part in days.track_points.groupby("vessel", sort=False):
        track = ET.SubElement(root, f"{{{GPX_NAMESPACE}}}trk")
        ET.SubElement(track, f"{{{GPX_NAMESPACE}}}name").text = f"DR track {vessel}".strip()
        ET.SubElement(track, f"{{{GPX_NAMESPACE}}}type").text = "DR"
        for _, leg in part.groupby("leg", sort=False):
            if len(leg) < 2:
                continue  # a known position the log ends at: no leg from it yet
            segment = ET.SubElement(track, f"{{{GPX_NAMESPACE}}}trkseg")
            for r in leg.to_dict("records"):
                point = ET.SubElement(segment, f"{{{GPX_NAMESPACE}}}trkpt", {"lat": f"{r['lat_deg']:.6f}",
                                                                          "lon": f"{r['lon_deg']:.6f}"})
                ET.SubElement(point, f"{{{GPX_NAMESPACE}}}time").text = _iso(str(r["utc"]).replace(" ", "T"))
    tree = ET.ElementTree(root)
    ET.indent(tree)
    return atomic_write(path, lambda p: tree.write(p, encoding="utf-8", xml_declaration=True),
                        inputs=voyage.inputs)


def ellipse_polygon(fix, points: int = 72) -> list[list[float]]:
    """The 95 % ellipse as a closed ring of [lon, lat] points."""
    theta = np.linspace(0.0, 2 * np.pi, points, endpoint=False)
    a, b = fix.ellipse_semi_major_nm, fix.ellipse_semi_minor_nm
    axis = np.radians(fix.ellipse_orientation_deg)
    along, across = a * np.cos(theta), b * np.sin(theta)
    north = along * np.cos(axis) - across * np.sin(axis)
    east = along * np.sin(axis) + across * np.cos(axis)
    bearing = np.degrees(np.arctan2(east, north))
    lat, lon = destination(fix.lat_deg, fix.lon_deg, bearing, np.hypot(north, east))
    ring = [[float(x), float(y)] for x, y in zip(lon, lat)]
    return ring + [ring[0]]


def lop_lines(voyage, group, half_length_nm: float | None = None) -> list[dict]:
    """Lines of position of one fix, advanced to the fix time, as GeoJSON features."""
    fix = group.fix
    subset = voyage.reduced.iloc[group.rows].reset_index(drop=True)
    length = half_length_nm or max(10.0, 4 * (fix.ellipse_semi_major_nm if fix.is_fix else fix.ellipse_semi_minor_nm))
    features = []
    for i in np.flatnonzero(np.isfinite(fix.lop_intercept_nm)):
        zn = fix.lop_zn_deg[i]
        foot = (fix.lop_foot_lat_deg[i], fix.lop_foot_lon_deg[i])
        # great circles tangent to the circle of equal altitude at the foot, both ways
        ends = [destination(*foot, fix.lop_tangent_deg[i] + side, length) for side in (0.0, 180.0)]
        features.append({
            "type": "Feature",
            "geometry": {"type": "LineString", "coordinates": [[float(lon), float(lat)] for lat, lon in ends]},
            "properties": {"kind": "line of position", "fix_group": group.name,
                           "body": str(subset.body_name[i]), "utc": _iso(subset.sight_utc[i].isoformat()[:19]),
                           "zn_deg": float(zn), "intercept_nm": float(fix.lop_intercept_nm[i]),
                           "from": "DR at the fix time", "flagged": bool(fix.outlier[i])},
        })
    return features


def _finite(value):
    """A number for JSON, or None where it is not finite (RFC 7946 JSON has no NaN)."""
    value = float(value)
    return value if np.isfinite(value) else None


def write_geojson(voyage: VoyageResult, path: str | Path) -> Path:
    """GeoJSON (RFC 7946) of the fixes, DRs, ellipses and lines of position."""
    features = []
    for group in _fix_groups(voyage):
        fix = group.fix
        common = {"fix_group": group.name, "utc": _iso(fix.utc)}
        features.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": [fix.lon_deg, fix.lat_deg]},
                         "properties": {**common, "kind": "fix" if fix.is_fix else f"{fix.kind} (not a fix)",
                                        "sights": int(fix.used.sum()),
                                        "sigma_arcmin": fix.sigma_arcmin,
                                        "ellipse_semi_major_nm": (fix.ellipse_semi_major_nm if fix.is_fix else None),
                                        "ellipse_semi_minor_nm": fix.ellipse_semi_minor_nm,
                                        "ellipse_orientation_deg": fix.ellipse_orientation_deg,
                                        "ellipse": fix.ellipse_text(),
                                        "description": fix_description(group),
                                        "dr_distance_nm": _finite(fix.dr_distance_nm),
                                        "warnings": fix.warnings}})
        if fix.all_sights is not None:
            every = fix.all_sights
            features.append({"type": "Feature",
                             "geometry": {"type": "Point", "coordinates": [every.lon_deg, every.lat_deg]},
                             "properties": {**common, "kind": "from every sight (not the fix)",
                                            "ellipse": every.ellipse_text(),
                                            "note": "a gross error included: the fix leaves it out"}})
        features.append({"type": "Feature",
                         "geometry": {"type": "Point", "coordinates": [fix.dr_lon_deg, fix.dr_lat_deg]},
                         "properties": {**common, "kind": "DR"}})
        if fix.is_fix:
            features.append({"type": "Feature", "geometry": {"type": "Polygon", "coordinates": [ellipse_polygon(fix)]},
                             "properties": {**common, "kind": "95 % ellipse"}})
        else:
            length = max(20.0, 10 * fix.ellipse_semi_minor_nm)
            ends = [destination(fix.lat_deg, fix.lon_deg, fix.line_bearing_deg + side, length) for side in (0.0, 180.0)]
            features.append({"type": "Feature", "geometry": {"type": "LineString", "coordinates": [
                [float(lon), float(lat)] for lat, lon in ends]},
                "properties": {**common, "kind": fix.kind, "half_width_95_nm": fix.ellipse_semi_minor_nm}})
        features.extend(lop_lines(voyage, group))
    days = voyage.days_work()
    current = {(r["fix group"]): r for r in days.set_drift.to_dict("records")}
    for feature in features:
        found = current.get(feature["properties"].get("fix_group"))
        if found is not None and feature["properties"].get("kind") == "fix":
            feature["properties"].update({
                "set_deg": found["set (deg)"], "drift_kn": found["drift (kn)"],
                "set_95_deg": _finite(found["set ±95 % (deg)"]), "drift_95_kn": _finite(found["drift ±95 % (kn)"]),
                "current_from": found["from"]})
    for r in days.estimated.to_dict("records"):
        features.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": [r["lon (deg)"], r["lat (deg)"]]},
                         "properties": {"kind": "estimated position", "fix_group": r["fix group"],
                                        "utc": _iso(str(r["UTC"]).replace(" ", "T")), "from": r["from"],
                                        "warning": r["note"]}})
    for r in days.noons[days.noons["lat (deg)"].notna()].to_dict("records"):
        features.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": [r["lon (deg)"], r["lat (deg)"]]},
                         "properties": {"kind": "noon position", "vessel": r["vessel"], "date": r["date"],
                                        "utc": _iso(str(r["noon (UTC)"]).replace(" ", "T")), "from": r["noon from"],
                                        "days_run_nm": _finite(r["run (nm)"]),
                                        "course_made_good_deg": _finite(r["course made good (deg)"]),
                                        "speed_made_good_kn": _finite(r["speed made good (kn)"])}})
    for (vessel, _), leg in days.track_points.groupby(["vessel", "leg"], sort=False):
        if len(leg) >= 2:
            features.append({"type": "Feature", "geometry": {"type": "LineString", "coordinates": [
                [float(lon), float(lat)] for lat, lon in zip(leg.lat_deg, leg.lon_deg)]},
                "properties": {"kind": "DR track", "vessel": vessel,
                               "from_utc": _iso(str(leg.utc.iloc[0]).replace(" ", "T")),
                               "to_utc": _iso(str(leg.utc.iloc[-1]).replace(" ", "T"))}})
    collection = geojson_with_caution({"type": "FeatureCollection", "features": features})
    text = json.dumps(collection, indent=1, allow_nan=False)
    return atomic_write(path, lambda p: Path(p).write_text(text, encoding="utf-8"), inputs=voyage.inputs)
