"""GeoJSON and GPX as written: lines and rings cut at the antimeridian (RFC 7946 §3.1.9).

The reference is the RFC itself: "any geometry that crosses the antimeridian SHOULD be represented by cutting it
in two such that neither part's representation crosses the antimeridian"; the crossing point of a straight
segment between two [lon, lat] positions is worked here by hand (linear interpolation, as the RFC's
coordinates are joined)."""

from __future__ import annotations

import json

import numpy as np
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.io.exports import antimeridian_lines, line_feature, polygon_feature


def _no_jump(parts):
    """No part's consecutive coordinates are more than 180° apart in longitude (none crosses the map)."""
    return all(abs(b[0] - a[0]) < 180.0 for part in parts for a, b in zip(part, part[1:]))


def test_a_line_across_the_antimeridian_is_cut_there_with_the_crossing_interpolated():
    # 178° E, 10° N to 179° W, 11° N: 3° of longitude, the meridian 180° two thirds of the way: 10° 40′ N
    parts = antimeridian_lines([10.0, 11.0], [178.0, -179.0])
    assert parts == [[[178.0, 10.0], [180.0, pytest.approx(10.0 + 2 / 3)]],
                     [[-180.0, pytest.approx(10.0 + 2 / 3)], [-179.0, 11.0]]]
    # westbound the other way round
    parts = antimeridian_lines([10.0, 11.0], [-179.0, 179.0])
    assert parts[0][-1][0] == -180.0 and parts[1][0][0] == 180.0 and parts[0][-1][1] == pytest.approx(10.5)
    # a line that does not cross is one LineString, unchanged
    feature = line_feature([1.0, 2.0, 3.0], [10.0, 20.0, 30.0], {})
    assert feature["geometry"] == {"type": "LineString", "coordinates": [[10.0, 1.0], [20.0, 2.0], [30.0, 3.0]]}
    feature = line_feature([10.0, 10.5, 11.0, 11.5], [175.0, 179.5, -178.0, -170.0], {})
    assert feature["geometry"]["type"] == "MultiLineString" and _no_jump(feature["geometry"]["coordinates"])


def test_a_ring_across_the_antimeridian_is_two_polygons_each_on_its_side():
    theta = np.linspace(0.0, 2 * np.pi, 36, endpoint=False)
    lat, lon = 10.0 + np.sin(theta), 179.6 + np.cos(theta)
    lon = (lon + 180.0) % 360.0 - 180.0
    geometry = polygon_feature(lat, lon, {})["geometry"]
    assert geometry["type"] == "MultiPolygon" and len(geometry["coordinates"]) == 2
    east, west = (np.array(p[0]) for p in geometry["coordinates"])
    assert (east[:, 0] > 0).all() and (west[:, 0] < 0).all()
    assert east.max(axis=0)[0] == 180.0 and west.min(axis=0)[0] == -180.0
    for ring in (east, west):
        assert (ring[0] == ring[-1]).all()  # closed (RFC 7946 §3.1.6)
    # the two parts share the cut: the same latitudes on 180°
    assert set(east[east[:, 0] == 180.0][:, 1].round(9)) == set(west[west[:, 0] == -180.0][:, 1].round(9))
    away = polygon_feature(lat, lon - 10.0, {})["geometry"]
    assert away["type"] == "Polygon"


def test_a_route_across_the_pacific_is_cut_at_the_antimeridian(tmp_path):
    """navred route from Japan to California: its GeoJSON line is a MultiLineString whose parts meet at 180°."""
    out = tmp_path / "route.geojson"
    result = CliRunner().invoke(app, ["route", "35 N", "140 E", "37 N", "122 W", "-o", str(out)])
    assert result.exit_code == 0, result.output
    line = next(f for f in json.loads(out.read_text())["features"] if f["geometry"]["type"] != "Point")
    assert line["geometry"]["type"] == "MultiLineString"
    parts = line["geometry"]["coordinates"]
    assert len(parts) == 2 and _no_jump(parts)
    assert parts[0][-1][0] == 180.0 and parts[1][0][0] == -180.0 and parts[0][-1][1] == parts[1][0][1]
