"""Sailings: the great circle (the WGS 84 geodesic), its vertex and waypoints, the composite great circle,
the rhumb line, and navred route.

References: geographiclib (C. F. F. Karney's geodesic algorithms, a geodesy library) for every distance
and azimuth on the ellipsoid; J. P. Snyder, Map Projections: A Working Manual (USGS Professional Paper
1395, 1987), eq. 7-7 for the Mercator ordinate (meridional parts) in its log-tangent form.
"""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from typer.testing import CliRunner

from navred.cli import app
from navred.errors import NavredError
from navred.jobs.routes import plan_route
from navred.sailings import (
    GeodesicError,
    composite_great_circle,
    great_circle_destination,
    great_circle_inverse,
    great_circle_vertex,
    meridional_parts,
    rhumb_destination,
    rhumb_inverse,
)

GEOD = Geodesic.WGS84
NM = 1852.0
runner = CliRunner()


def _angle(a, b):
    return np.abs((np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0)


def _pairs(n=2000, seed=3):
    rng = np.random.default_rng(seed)
    lat1, lat2 = rng.uniform(-80, 80, n), rng.uniform(-80, 80, n)
    lon1, lon2 = rng.uniform(-180, 180, n), rng.uniform(-180, 180, n)
    # leave out pairs within 2° of being antipodal: refused by navred (tested below)
    keep = np.array([GEOD.Inverse(a, b, -c, d + 180)["a12"] > 2.0 for a, b, c, d in zip(lat1, lon1, lat2, lon2)])
    return lat1[keep], lon1[keep], lat2[keep], lon2[keep]


def test_great_circle_distance_and_courses_agree_with_geographiclib():
    """Within 0.01 nm and 0.01° (the brief's bound) on 2000 random pairs; in fact far closer."""
    lat1, lon1, lat2, lon2 = _pairs()
    distance, course1, course2 = great_circle_inverse(lat1, lon1, lat2, lon2)
    ref = [GEOD.Inverse(a, b, c, d) for a, b, c, d in zip(lat1, lon1, lat2, lon2)]
    assert np.max(np.abs(distance - np.array([r["s12"] for r in ref]) / NM)) < 0.01
    assert np.max(_angle(course1, [r["azi1"] for r in ref])) < 0.01
    assert np.max(_angle(course2, [r["azi2"] for r in ref])) < 0.01


def test_great_circle_destination_agrees_with_geographiclib():
    rng = np.random.default_rng(5)
    lat, lon = rng.uniform(-75, 75, 500), rng.uniform(-180, 180, 500)
    course, distance = rng.uniform(0, 360, 500), rng.uniform(0, 9000, 500)
    lat2, lon2, course2 = great_circle_destination(lat, lon, course, distance)
    ref = [GEOD.Direct(a, b, c, d * NM) for a, b, c, d in zip(lat, lon, course, distance)]
    miss = [GEOD.Inverse(r["lat2"], r["lon2"], la, lo)["s12"] / NM for r, la, lo in zip(ref, lat2, lon2)]
    assert max(miss) < 0.01
    assert np.max(_angle(course2, [r["azi2"] for r in ref])) < 0.01


def test_nearly_antipodal_points_are_refused_with_the_remedy():
    with pytest.raises(GeodesicError, match="nearly opposite each other.*give a waypoint"):
        great_circle_inverse(0.0, 0.0, 0.3, 179.8)


def test_the_vertex_is_where_the_great_circle_runs_east_west_and_highest():
    """geographiclib: the azimuth there is 90° or 270°, and no point of the line is further from the equator."""
    rng = np.random.default_rng(7)
    for lat, lon, course in zip(rng.uniform(-60, 60, 40), rng.uniform(-180, 180, 40), rng.uniform(5, 175, 40)):
        vlat, vlon, vdist = (float(v) for v in great_circle_vertex(lat, lon, course))
        to = GEOD.Inverse(lat, lon, vlat, vlon)
        assert to["s12"] / NM == pytest.approx(vdist, abs=0.01)
        assert abs(abs((to["azi2"] + 180) % 360 - 180) - 90.0) < 0.01
        line = GEOD.Line(lat, lon, course)
        highest = max(abs(line.Position(s * NM)["lat2"]) for s in np.linspace(0, 11000, 400))
        assert abs(vlat) >= highest - 1e-6


def test_rhumb_line_agrees_with_meridional_parts_and_the_meridian_arc():
    """Course from Snyder eq. 7-7 (ψ = ln[tan(π/4 + φ/2)((1 − e sin φ)/(1 + e sin φ))^(e/2)]); distance the
    meridian arc (geographiclib along a meridian) over cos C; an east-west course along the parallel."""
    f = 1 / 298.257223563
    e = np.sqrt(f * (2 - f))

    def psi(lat):
        p = np.radians(lat)
        return np.log(np.tan(np.pi / 4 + p / 2) * ((1 - e * np.sin(p)) / (1 + e * np.sin(p))) ** (e / 2))

    rng = np.random.default_rng(9)
    for lat1, lon1, lat2, lon2 in zip(rng.uniform(-70, 70, 60), rng.uniform(-180, 180, 60),
                                      rng.uniform(-70, 70, 60), rng.uniform(-180, 180, 60)):
        distance, course = (float(v) for v in rhumb_inverse(lat1, lon1, lat2, lon2))
        dlon = np.radians((lon2 - lon1 + 180) % 360 - 180)
        expected_course = np.degrees(np.arctan2(dlon, psi(lat2) - psi(lat1))) % 360
        meridian = GEOD.Inverse(lat1, 0.0, lat2, 0.0)["s12"] * np.sign(lat2 - lat1)
        assert course == pytest.approx(expected_course, abs=1e-7)
        assert distance == pytest.approx(meridian / np.cos(np.radians(expected_course)) / NM, rel=1e-9, abs=1e-6)
        # and sailing it arrives
        arrive = rhumb_destination(lat1, lon1, course, distance)
        assert GEOD.Inverse(lat2, lon2, float(arrive[0]), float(arrive[1]))["s12"] < 1.0
    # meridional parts are ψ in minutes of arc
    assert float(meridional_parts(45.0)) == pytest.approx(np.degrees(psi(45.0)) * 60, abs=1e-6)
    # along the parallel: ν cos φ Δλ (geographiclib's reduced length would differ: this is the rhumb line)
    distance, course = rhumb_inverse(50.0, 0.0, 50.0, 10.0)
    a = 6378137.0
    nu = a / np.sqrt(1 - f * (2 - f) * np.sin(np.radians(50)) ** 2)
    assert float(course) == 90.0
    assert float(distance) == pytest.approx(nu * np.cos(np.radians(50)) * np.radians(10) / NM, rel=1e-12)


def test_the_composite_great_circle_touches_the_limit_and_keeps_within_it():
    """New York approaches to the Lizard within 50° N: each great-circle part meets the parallel heading
    due east (geographiclib's azimuth there), the parts add up, and no waypoint passes the limit."""
    route = composite_great_circle(40.5, -73.0, 49.9, -5.2, 50.0)
    assert route["kind"] == "composite"
    meet = GEOD.Inverse(40.5, -73.0, *route["meets"])
    leave = GEOD.Inverse(*route["leaves"], 49.9, -5.2)
    assert meet["s12"] / NM == pytest.approx(route["first_nm"], abs=0.01)
    assert leave["s12"] / NM == pytest.approx(route["last_nm"], abs=0.01)
    assert abs(meet["azi2"] - 90.0) < 0.01 and abs(leave["azi1"] - 90.0) < 0.01
    assert route["meets"][0] == pytest.approx(50.0, abs=1e-9) and route["leaves"][0] == pytest.approx(50.0, abs=1e-9)
    assert route["distance_nm"] == pytest.approx(route["first_nm"] + route["parallel_nm"] + route["last_nm"])
    assert route["distance_nm"] > route["great_circle_nm"]
    plan = plan_route(40.5, -73.0, 49.9, -5.2, spacing_nm=100.0, limit_lat_deg=50.0)
    assert plan.waypoints["lat_deg"].max() <= 50.0 + 1e-9
    assert plan.waypoints["from_start_nm"].iloc[-1] == pytest.approx(route["distance_nm"])
    # a limit the great circle never reaches changes nothing
    assert composite_great_circle(40.5, -73.0, 49.9, -5.2, 60.0)["kind"] == "great circle"
    with pytest.raises(NavredError, match="beyond it"):
        composite_great_circle(40.5, -73.0, 55.0, -5.2, 50.0)


def test_waypoints_lie_on_the_great_circle_at_the_spacing():
    """Each waypoint 300 nm further along the great circle (geographiclib between them), the last the
    destination; each leg's rhumb course and distance between them as sailed."""
    plan = plan_route(-33.9, 18.4, -37.8, 144.9, spacing_nm=300.0)
    w = plan.waypoints
    assert (w.waypoint == np.arange(len(w))).all()
    for a, b in zip(w.iloc[:-2].itertuples(), w.iloc[1:-1].itertuples()):
        assert GEOD.Inverse(a[4], a[5], b[4], b[5])["s12"] / NM == pytest.approx(300.0, abs=0.01)
    assert (w["lat_deg"].iloc[-1], w["lon_deg"].iloc[-1]) == (-37.8, 144.9)
    legs = w["rhumb_distance_to_next_nm"].iloc[:-1].sum()
    assert plan.great_circle_nm < legs < plan.rhumb_nm  # sailing rhumb legs between waypoints, common practice
    with pytest.raises(NavredError, match="at most"):
        plan_route(0, 0, 10, 10, spacing_nm=0.1)


def test_route_command_prints_and_writes_csv_gpx_geojson(tmp_path):
    import gpxpy

    result = runner.invoke(app, ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W", "--limit", "50 N",
                                 "-o", str(tmp_path / "r.gpx"), "-o", str(tmp_path / "r.geojson")])
    assert result.exit_code == 0, result.output
    assert "rhumb line:" in result.output and "great circle:" in result.output and "vertex:" in result.output
    assert "composite great circle within 50° 00.0′ N" in result.output
    route = gpxpy.parse((tmp_path / "r.gpx").read_text()).routes[0]  # read back by gpxpy
    assert route.points[0].latitude == pytest.approx(40.5) and route.points[-1].longitude == pytest.approx(-5.2)
    features = json.loads((tmp_path / "r.geojson").read_text())["features"]
    assert features[0]["geometry"]["type"] == "LineString" and features[0]["properties"]["kind"] == "route"
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W",
                                                        "--csv"]).stdout))
    assert list(table.columns)[:3] == ["waypoint", "lat", "lon"]
    refused = runner.invoke(app, ["route", "40 30", "073 00 W", "49 57 N", "005 12 W"])
    assert refused.exit_code == 1 and "FROM_LAT" in refused.output
    # signed decimals (ISO 6709) as arguments: a west longitude's minus sign is a value, not an option
    decimal = runner.invoke(app, ["route", "40.5", "-73", "49.95", "-5.2", "--csv"])
    assert decimal.exit_code == 0, decimal.output
    assert pd.read_csv(io.StringIO(decimal.stdout)).equals(table)
    mistyped = runner.invoke(app, ["route", "40.5", "-73", "49.95", "-5.2", "--spacng", "100"])
    assert mistyped.exit_code == 2 and "--spacng" in mistyped.output  # a mistyped option is still named
