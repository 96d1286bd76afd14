"""A voyage's fixes, DR positions and lines of position for a chart plotter, as GPX and GeoJSON.

- GPX 1.1: one waypoint per fix and per DR at the fix time, with the time, a name and the ellipse in the
  description; the fix from every sight where a gross error was left out; a waypoint per estimated
  position and per noon position; the DR track as a track (a segment from each known position).
- GeoJSON (RFC 7946): the fixes and DRs (Points), their 95 % ellipses (Polygons) or the line or latitude
  they give (LineStrings), every line of position, the set and drift at each fix, the estimated and noon
  positions (Points) and the DR track (a LineString per leg).

Written through the one GPX and GeoJSON writer, :mod:`navred.io.exports`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..fixstats import ELLIPSE_COVERS
from ..io.exports import (
    GpxPoint,
    GpxTrack,
    ascii_text,
    finite,
    iso_z,
    line_feature,
    point_feature,
    polygon_feature,
    write_geojson,
    write_gpx,
)
from ..triangle import destination


def _fixed(voyage) -> list:
    return [g for g in voyage.groups if g.fix is not None]


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
        text += (f"; LEFT OUT (a gross error or a clear blunder): {rows}; the fix from every sight is at "
                 f"{every.lat_deg:.4f}, {every.lon_deg:.4f}") if every is not None else f"; LEFT OUT: {rows}"
    text += f"; the ellipse {ELLIPSE_COVERS}"
    for warning in fix.warnings:
        text += f"; warning: {warning}"
    return ascii_text(text)


def _fix_waypoints(group) -> list[GpxPoint]:
    fix, when = group.fix, iso_z(group.fix.utc)
    if not fix.is_fix:  # a plotter shows only the name: the foot of a line (or a latitude) is an EP on it, no fix
        name, kind = f"EP {group.name} on the {fix.kind}, not a fix", f"EP on the {fix.kind}"
    else:
        name, kind = ((f"fix {group.name}", "fix") if fix.trusted else
                      (f"UNTRUSTED fix {group.name}", f"untrusted fix ({fix.untrusted_cause or 'see desc'})"))
    points = [GpxPoint(fix.lat_deg, fix.lon_deg, when, name, fix_description(group), kind),
              GpxPoint(fix.dr_lat_deg, fix.dr_lon_deg, when, f"DR {group.name}", "DR at the fix time", "DR")]
    if fix.all_sights is not None:
        every = fix.all_sights
        # a plotter shows only the name: it says plainly that this is not the fix
        points.append(GpxPoint(every.lat_deg, every.lon_deg, when, f"NOT THE FIX {group.name} (all sights)", ascii_text(
            f"NOT the fix: the {every.kind} from every sight of {group.name}, the sights left out included "
            f"(95% ellipse {every.ellipse_text()}); the fix leaves them out"), "every sight"))
    return points


def _days_waypoints(days) -> list[GpxPoint]:
    """The estimated positions and the noon positions of the day's work."""
    points = [GpxPoint(r["lat_deg"], r["lon_deg"], iso_z(r["utc"]), r["ep"],
                       f"{r['ep']} (fix group {r['fix_group']}): {r['from']}"
                       + (f"; {r['uncertainty']}" if r.get("uncertainty") else "")
                       + (f"; {r['check']}" if r.get("check") else "")
                       + (f"; warning: {r['note']}" if r["note"] else ""), "EP")
              for r in days.estimated.to_dict("records")]
    for r in days.noons[days.noons["lat_deg"].notna()].to_dict("records"):
        run = (f"; day's run {r['run_nm']:.1f} nm made good on {r['course_made_good_deg']:.0f} deg"
               if r["run_nm"] == r["run_nm"] else "")
        check = "".join(f"; {r[c]}" for c in ("noon_check", "run_check") if r.get(c))
        spread = f", within {r['noon_95_nm']:.1f} nm (95 %)" if r.get("noon_95_nm") == r.get("noon_95_nm") else ""
        points.append(GpxPoint(r["lat_deg"], r["lon_deg"], iso_z(r["noon_utc"]),
                               f"noon {r['date']}" + (" CANNOT BE TRUSTED" if r.get("noon_check") else ""),
                               f"noon position ({r['noon_from']}){spread}{run}{check}", "noon"))
    return points


def _dr_tracks(days) -> list[GpxTrack]:
    tracks = []
    for vessel, part in days.track_points.groupby("vessel", sort=False):
        # a known position the log ends at has no leg from it yet
        segments = [[GpxPoint(r["lat_deg"], r["lon_deg"], iso_z(r["utc"])) for r in leg.to_dict("records")]
                    for _, leg in part.groupby("leg", sort=False) if len(leg) >= 2]
        if segments:  # a vessel whose DR has no leg yet has no track (never an empty <trk>)
            tracks.append(GpxTrack(f"DR track {vessel}".strip(), "DR", segments))
    return tracks


def write_voyage_gpx(voyage, path: str | Path) -> Path:
    """GPX 1.1 waypoints of every fix and of the DR at each fix time, the estimated and noon positions, and the
    DR track, of a :class:`navred.jobs.voyage.VoyageResult`."""
    days = voyage.days_work()
    waypoints = [p for g in _fixed(voyage) for p in _fix_waypoints(g)] + _days_waypoints(days)
    return write_gpx(path, waypoints=waypoints, tracks=_dr_tracks(days), inputs=voyage.inputs)


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
        foot = (fix.lop_foot_lat_deg[i], fix.lop_foot_lon_deg[i])
        # great circles tangent to the circle of equal altitude at the foot, both ways
        ends = [destination(*foot, fix.lop_tangent_deg[i] + side, length) for side in (0.0, 180.0)]
        features.append(line_feature([lat for lat, _ in ends], [lon for _, lon in ends], {
            "kind": "line of position", "fix_group": group.name, "body": str(subset.body_name[i]),
            "utc": iso_z(subset.sight_utc[i].isoformat()), "zn_deg": float(fix.lop_zn_deg[i]),
            "intercept_nm": float(fix.lop_intercept_nm[i]), "from": "DR at the fix time",
            "flagged": bool(fix.outlier[i])}))
    return features


def _fix_features(voyage, group, current: dict) -> list[dict]:
    """A fix (or the line it gives), its DR, the fix from every sight, its ellipse or band, and its lines."""
    fix = group.fix
    common = {"fix_group": group.name, "utc": iso_z(fix.utc)}
    properties = {**common, "kind": "fix" if fix.is_fix else f"{fix.kind} (not a fix)",
                  "trusted": fix.trusted,
                  "untrusted_cause": "" if fix.untrusted_cause is None else str(fix.untrusted_cause),
                  "sights": int(fix.used.sum()), "sigma_arcmin": fix.sigma_arcmin,
                  "ellipse_semi_major_nm": (fix.ellipse_semi_major_nm if fix.is_fix else None),
                  "ellipse_semi_minor_nm": fix.ellipse_semi_minor_nm,
                  "ellipse_orientation_deg": fix.ellipse_orientation_deg, "ellipse": fix.ellipse_text(),
                  "description": fix_description(group), "dr_distance_nm": finite(fix.dr_distance_nm),
                  "warnings": fix.warnings}
    found = current.get(group.name)
    if found is not None and fix.is_fix:
        properties.update({"set_deg": found["set_deg"], "drift_kn": found["drift_kn"],
                           "set_95_deg": finite(found["set_95_deg"]), "drift_95_kn": finite(found["drift_95_kn"]),
                           "current_from": found["from"]})
        if found.get("current_in_dr"):  # the current the DR carried and the rest it missed (the DR's gap to the fix)
            properties.update({"current_in_dr": found["current_in_dr"], "dr_set_deg": finite(found["dr_set_deg"]),
                               "dr_drift_kn": finite(found["dr_drift_kn"]),
                               "unaccounted_set_deg": finite(found["unaccounted_set_deg"]),
                               "unaccounted_drift_kn": finite(found["unaccounted_drift_kn"])})
    features = [point_feature(fix.lat_deg, fix.lon_deg, properties)]
    if fix.all_sights is not None:
        every = fix.all_sights
        features.append(point_feature(every.lat_deg, every.lon_deg, {
            **common, "kind": "from every sight (not the fix)", "ellipse": every.ellipse_text(),
            "note": "a gross error included: the fix leaves it out"}))
    features.append(point_feature(fix.dr_lat_deg, fix.dr_lon_deg, {**common, "kind": "DR"}))
    if fix.is_fix:
        ring = ellipse_polygon(fix)
        features.append(polygon_feature([p[1] for p in ring], [p[0] for p in ring], {**common, "kind": "95 % ellipse"}))
    else:
        length = max(20.0, 10 * fix.ellipse_semi_minor_nm)
        ends = [destination(fix.lat_deg, fix.lon_deg, fix.line_bearing_deg + side, length) for side in (0.0, 180.0)]
        features.append(line_feature([lat for lat, _ in ends], [lon for _, lon in ends], {
            **common, "kind": fix.kind, "half_width_95_nm": fix.ellipse_semi_minor_nm}))
    return features + lop_lines(voyage, group)


def _days_features(days) -> list[dict]:
    """The estimated positions, the noon positions and the DR track's legs."""
    features = [point_feature(r["lat_deg"], r["lon_deg"], {
        "kind": "estimated position", "ep": r["ep"], "fix_group": r["fix_group"], "utc": iso_z(r["utc"]),
        "from": r["from"], "uncertainty": r.get("uncertainty", ""), "check": r.get("check", ""),
        "warning": r["note"]}) for r in days.estimated.to_dict("records")]
    for r in days.noons[days.noons["lat_deg"].notna()].to_dict("records"):
        features.append(point_feature(r["lat_deg"], r["lon_deg"], {
            "kind": "noon position", "vessel": r["vessel"], "date": r["date"], "utc": iso_z(r["noon_utc"]),
            "from": r["noon_from"], "days_run_nm": finite(r["run_nm"]),
            "course_made_good_deg": finite(r["course_made_good_deg"]),
            "speed_made_good_kn": finite(r["speed_made_good_kn"]), "within_95_nm": finite(r.get("noon_95_nm")),
            "check": r.get("noon_check", ""), "run_check": r.get("run_check", "")}))
    for (vessel, _), leg in days.track_points.groupby(["vessel", "leg"], sort=False):
        if len(leg) >= 2:
            features.append(line_feature(leg.lat_deg, leg.lon_deg, {
                "kind": "DR track", "vessel": vessel, "from_utc": iso_z(leg.utc.iloc[0]),
                "to_utc": iso_z(leg.utc.iloc[-1])}))
    return features


def write_voyage_geojson(voyage, path: str | Path) -> Path:
    """GeoJSON (RFC 7946) of the fixes, DRs, ellipses and lines of position, the set and drift at each fix, the
    estimated and noon positions and the DR track, of a :class:`navred.jobs.voyage.VoyageResult`."""
    days = voyage.days_work()
    current = {r["fix_group"]: r for r in days.set_drift.to_dict("records")}
    features = [f for g in _fixed(voyage) for f in _fix_features(voyage, g, current)] + _days_features(days)
    return write_geojson(path, features, inputs=voyage.inputs)


__all__ = ["write_voyage_gpx", "write_voyage_geojson", "fix_description", "ellipse_polygon", "lop_lines"]
