"""A route's waypoints read from a file (navred.io.waypoints): navred route's own CSV and GPX, a list written by hand,
and the files refused whole, with the row that refuses them. The DR along the waypoints (navred.jobs.routes.route_dr)
reaches each at the time its legs take at the speed."""

from __future__ import annotations

import re

import numpy as np
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.io.waypoints import WaypointError, read_waypoints
from tests.conftest import ARCMIN, rhumb_integrated


@pytest.fixture(scope="module")
def route_files(tmp_path_factory):
    """navred route's CSV and GPX of a passage, made by the command line."""
    folder = tmp_path_factory.mktemp("route")
    result = CliRunner().invoke(app, ["route", "44 30 N", "012 00 W", "38 40 N", "027 10 W", "--spacing", "150",
                                      "-o", str(folder / "r.csv"), "-o", str(folder / "r.gpx")])
    assert result.exit_code == 0, result.output
    return folder


def test_navred_routes_own_csv_and_gpx_give_the_same_waypoints(route_files):
    csv, gpx = read_waypoints(route_files / "r.csv"), read_waypoints(route_files / "r.gpx")
    assert len(csv) == len(gpx) == 7
    assert csv.names == gpx.names == tuple(f"WP{k:03d}" for k in range(7))
    assert np.abs(csv.lat_deg - gpx.lat_deg).max() < 1e-6 and np.abs(csv.lon_deg - gpx.lon_deg).max() < 1e-6
    assert (csv.lat_deg[0], csv.lon_deg[0]) == (44.5, -12.0)
    assert abs(csv.lat_deg[-1] - (38 + 40 / 60)) < 1e-6 and abs(csv.lon_deg[-1] + (27 + 10 / 60)) < 1e-6


def test_the_paper_plans_along_navred_routes_files(route_files, tmp_path):
    """`navred route -o r.csv` then `navred paper --route r.csv`: the DR passes through every waypoint at the
    time its legs take at the speed (the legs' lengths: the test's own RK4 of the rhumb line on the course
    navred gives, which must end on the next waypoint)."""
    from navred.jobs.paper import passage_paper

    for name in ("r.csv", "r.gpx"):
        paper = passage_paper("2026-03-26", "2026-03-27", route=route_files / name, speed_kn=6.5)
        points = read_waypoints(route_files / name)
        table = paper.dr.table[2]
        lat, lon = paper.dr.track.position(np.array([np.datetime64(r[2].replace(" ", "T"), "ns") for r in table]))
        # at each printed time (to the minute) the DR is within the minute's run of the waypoint
        assert np.all(np.abs(lat - points.lat_deg) <= 6.5 / 60 / 60 / 2 * 1.01)
        for k, row in enumerate(table[:-1]):
            course, leg = float(row[3]), float(row[4])
            end = rhumb_integrated(points.lat_deg[k], points.lon_deg[k], course, leg)  # the test's RK4 on WGS 84
            assert abs(end[0] - points.lat_deg[k + 1]) / ARCMIN < 0.1 and abs(end[1] - points.lon_deg[k + 1]) / \
                ARCMIN < 0.15, k


def test_a_list_written_by_hand_in_any_of_the_logs_forms(tmp_path):
    path = tmp_path / "mine.csv"
    path.write_text("Name,Latitude,Longitude\nFastnet,51 23.3 N,009 36.2 W\nMid,48° 30′ N,15 W\n"
                    "Landfall,38.5,-28.25\n", encoding="utf-8")
    points = read_waypoints(path)
    assert points.names == ("Fastnet", "Mid", "Landfall")
    assert np.allclose(points.lat_deg, [51 + 23.3 / 60, 48.5, 38.5]) and np.allclose(points.lon_deg,
                                                                                     [-(9 + 36.2 / 60), -15, -28.25])
    gpx = tmp_path / "w.gpx"
    gpx.write_text('<?xml version="1.0"?><gpx version="1.1" xmlns="http://www.topografix.com/GPX/1/1">'
                   '<wpt lat="50.1" lon="-5.2"><name>A</name></wpt><wpt lat="49.0" lon="-7.0"></wpt></gpx>',
                   encoding="utf-8")
    points = read_waypoints(gpx)
    assert points.names == ("A", "WP001") and points.lat_deg.tolist() == [50.1, 49.0]


@pytest.mark.parametrize("text, words", [
    ("lat,lon\n40 N,20 W\n", "1 waypoint; a route needs two"),
    ("lat,lon\n40 N,20 W\n41 N,\n42 N,18 W\n", "row 3: the waypoint has no longitude"),
    ("lat,lon\n40 N,20 W\n41 20 N,19 30\n", "row 3"),
    ("lat,lon\n40 N,20 W\n95 N,19 W\n", "row 3"),
    ("name,where\nA,40 N 20 W\nB,41 N 19 W\n", "columns lat and lon"),
    ("lat,lon,lat_deg,lon_deg\n40 00.0 N,020 00.0 W,40.0,-20.0\n41 00.0 N,019 00.0 W,41.5,-19.0\n",
     "row 3: the waypoint's lat/lon"),
    ("lat,latitude,lon\n40 N,40 N,20 W\n41 N,41 N,19 W\n", "both name one thing"),
])
def test_a_route_that_cannot_be_read_whole_is_refused_with_its_row(tmp_path, text, words):
    """A waypoint is never skipped (the legs either side of it would join two others): the file is refused,
    naming the row."""
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(WaypointError, match=words.replace("(", r"\(")):
        read_waypoints(path)


def test_gpx_files_refused(tmp_path):
    bomb = tmp_path / "bomb.gpx"
    bomb.write_text('<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY a "aaaa">]><gpx><rte><rtept lat="1" lon="2"/>'
                    '</rte></gpx>', encoding="utf-8")
    with pytest.raises(WaypointError, match="document type"):
        read_waypoints(bomb)
    two = tmp_path / "two.gpx"
    two.write_text('<gpx><rte><rtept lat="1" lon="2"/><rtept lat="2" lon="2"/></rte><rte><rtept lat="1" lon="3"/>'
                   '</rte></gpx>', encoding="utf-8")
    with pytest.raises(WaypointError, match="2 routes"):
        read_waypoints(two)
    bad = tmp_path / "bad.gpx"
    bad.write_text('<gpx><rte><rtept lat="1" lon="2"/><rtept lat="nan" lon="2"/></rte></gpx>', encoding="utf-8")
    with pytest.raises(WaypointError, match="point 2"):
        read_waypoints(bad)
    none = tmp_path / "none.gpx"
    none.write_text('<gpx><trk><trkseg><trkpt lat="1" lon="2"/></trkseg></trk></gpx>', encoding="utf-8")
    with pytest.raises(WaypointError, match="no GPX route points"):
        read_waypoints(none)
    many = tmp_path / "many.csv"
    many.write_text("lat,lon\n" + "40 N,20 W\n" * 2100, encoding="utf-8")
    with pytest.raises(WaypointError, match="route"):
        read_waypoints(many)


def _paper_warnings(tmp_path, text: str) -> list[str]:
    (tmp_path / "hand.csv").write_text(text, encoding="utf-8")
    result = CliRunner().invoke(app, ["paper", "--from", "2026-12-10", "--to", "2026-12-10", "--route",
                                      str(tmp_path / "hand.csv"), "--speed", "6", "--eye", "3 m", "-o",
                                      str(tmp_path / "p.pdf")])
    assert result.exit_code == 0, result.output
    return [line for line in result.stderr.splitlines() if line.startswith("warning: route")]


def test_a_hand_route_with_a_longitude_sign_lost_is_remarked_naming_the_waypoint(tmp_path):
    """A route written by hand from Las Palmas to Mindelo with one waypoint's W written E (a leg across Africa):
    the paper warns naming that waypoint and the length with it turned; the route as meant is within 1 % of the
    legs' geodesics (geographiclib, WGS 84: rhumb and geodesic differ far less than that on legs this short)."""
    from geographiclib.geodesic import Geodesic

    warned = _paper_warnings(tmp_path, "name,lat,lon\nLas Palmas,28 08.0 N,015 25.0 W\noff Hierro,27 30.0 N,018 30.0 W\n"
                                       "WP3,24 00.0 N,021 00.0 E\nMindelo,16 53.0 N,024 59.0 W\n")
    assert len(warned) == 1, warned
    assert "WP3's longitude 021° 00.0′ E is E between two W ones" in warned[0] and "forgotten" in warned[0]
    meant = re.search(r"with it W, ([\d,]+) nm", warned[0]).group(1)
    geodesic = sum(Geodesic.WGS84.Inverse(a, b, c, d)["s12"] for a, b, c, d in
                   ((27.5, -18.5, 24.0, -21.0), (24.0, -21.0, 16 + 53 / 60, -(24 + 59 / 60)))) / 1852.0
    assert abs(float(meant.replace(",", "")) - geodesic) < 0.01 * geodesic


def test_a_leg_far_longer_than_its_neighbours_is_remarked_and_a_sound_route_is_not(tmp_path):
    """A latitude's N written S on a coastal route (legs of 5,600 nm among legs of about 70): remarked, naming
    the waypoint (or, for the last, the leg's two); the same route written right, a route over 0° near Greenwich and one over 180°: no remark."""
    warned = _paper_warnings(tmp_path, "lat,lon\n50 00 N,005 00 W\n48 30 N,006 00 W\n"
                                       "46 50 S,004 00 W\n45 20 N,002 00 W\n")
    assert len(warned) == 1 and "WP002 (46° 50.0′ S 004° 00.0′ W) takes her" in warned[0], warned
    warned = _paper_warnings(tmp_path, "lat,lon\n50 00 N,005 00 W\n48 30 N,006 00 W\n47 10 N,005 00 W\n"
                                       "46 50 S,004 00 W\n")
    assert len(warned) == 1 and "the leg WP002 (47° 10.0′ N 005° 00.0′ W) to WP003 (46° 50.0′ S" in warned[0], warned
    for sound in ("lat,lon\n50 00 N,005 00 W\n48 30 N,006 00 W\n46 50 N,004 00 W\n45 20 N,002 00 W\n",
                  "lat,lon\n49 00 N,004 00 W\n50 00 N,002 00 E\n51 00 N,008 00 E\n",
                  "lat,lon\n17 30 S,178 00 E\n17 30 S,179 30 W\n17 30 S,176 00 W\n"):
        assert _paper_warnings(tmp_path, sound) == [], sound


def test_a_vertex_beyond_the_route_is_not_printed_as_a_position():
    """navred route from Las Palmas to Mindelo: the great circle's vertex lies far off the passage (in the South
    Pacific), so the summary says there is none on the route instead of printing it."""
    result = CliRunner().invoke(app, ["route", "28 08 N", "015 25 W", "16 53 N", "024 59 W"])
    assert result.exit_code == 0, result.output
    assert "no vertex on the route: its highest latitude is at the start (28° 08.0′ N)" in result.stdout
    assert "vertex: " not in result.stdout and "126° 53.9′ W" not in result.stdout
