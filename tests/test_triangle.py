"""The navigational triangle: spherical-trigonometry identities and the line of position."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from navred.errors import AngleInputError
from navred.triangle import (
    assumed_position,
    computed_altitude_azimuth,
    destination,
    distance_bearing,
    intercept_direction,
    intercept_nm,
    line_of_position,
)
from tests.conftest import angle_diff_deg

lats = st.floats(min_value=-89.9, max_value=89.9)
decs = st.floats(min_value=-89.0, max_value=89.0)
lons = st.floats(min_value=-180.0, max_value=180.0)


@given(lats, lons)
def test_body_at_the_zenith_has_hc_90(lat, lon):
    # GP under the observer: Hc = 90° (spherical trigonometry)
    hc, _ = computed_altitude_azimuth(lat, lon, -lon, lat)
    assert float(hc) == pytest.approx(90.0, abs=1e-6)


@given(lats, decs)
def test_body_on_the_upper_meridian(lat, dec):
    # spherical trigonometry of the navigational triangle with LHA = 0 (common practice)
    # LHA = 0: Hc = 90° − |φ − δ|, Zn = 0° (body north of the observer) or 180° (south)
    hc, zn = computed_altitude_azimuth(lat, 20.0, -20.0, dec)
    assert float(hc) == pytest.approx(90.0 - abs(lat - dec), abs=1e-6)
    if abs(lat - dec) > 1e-6:
        assert float(zn) == pytest.approx(0.0 if dec > lat else 180.0, abs=1e-6) or float(zn) == pytest.approx(360.0)


@given(decs, st.floats(min_value=0.0, max_value=360.0), lons)
def test_at_the_north_pole_hc_equals_dec(dec, gha, lon):
    # spherical trigonometry: at the pole the horizon is the equator, so Hc = Dec (common practice)
    hc, zn = computed_altitude_azimuth(90.0, lon, gha, dec)
    assert float(hc) == pytest.approx(dec, abs=1e-6)
    assert 0.0 <= float(zn) < 360.0


@given(lats, decs)
def test_continuous_across_lha_0_360(lat, dec):
    # the cosine and atan2 formulas are continuous in LHA (spherical trigonometry; common practice)
    eps = 1e-7
    a = computed_altitude_azimuth(lat, 0.0, 360.0 - eps, dec)
    b = computed_altitude_azimuth(lat, 0.0, eps, dec)
    assert float(a[0]) == pytest.approx(float(b[0]), abs=1e-5)
    if abs(90.0 - abs(lat - dec)) < 89.99:  # away from the zenith, where Zn is undefined
        assert abs(angle_diff_deg(a[1], b[1])) < 1e-3


def test_azimuth_quadrants():
    # body due east on the equator at LHA 270°, due west at LHA 90° (common practice)
    assert float(computed_altitude_azimuth(0.0, 0.0, 270.0, 0.0)[1]) == pytest.approx(90.0)
    assert float(computed_altitude_azimuth(0.0, 0.0, 90.0, 0.0)[1]) == pytest.approx(270.0)
    # a southern observer sees a northern-declination body on the meridian to the north
    assert float(computed_altitude_azimuth(-30.0, 0.0, 0.0, 10.0)[1]) == pytest.approx(0.0, abs=1e-9)


def test_cosine_formula_is_met():
    # sin Hc = sin φ sin δ + cos φ cos δ cos LHA (the published cosine formula)
    rng = np.random.default_rng(1)
    lat, dec, lha = rng.uniform(-80, 80, 1000), rng.uniform(-60, 60, 1000), rng.uniform(0, 360, 1000)
    hc, _ = computed_altitude_azimuth(lat, 0.0, lha, dec)
    phi, d, t = np.radians(lat), np.radians(dec), np.radians(lha)
    expected = np.degrees(np.arcsin(np.sin(phi) * np.sin(d) + np.cos(phi) * np.cos(d) * np.cos(t)))
    assert np.allclose(hc, expected, atol=1e-9)


def test_broadcast_shapes():
    hc, zn = computed_altitude_azimuth(np.array([[10.0], [20.0]]), 0.0, np.array([0.0, 30.0, 60.0]), 5.0)
    assert hc.shape == zn.shape == (2, 3)


def test_a_long_run_worked_in_threads_is_the_run_worked_alone(monkeypatch):
    """Past THREADS_FROM_BLOCKS blocks the triangle's blocks are shared among threads: the same numbers, in the
    same places, as one thread working them, and both meet the cosine formula (as above); broadcasting and a
    bad input in the last block are handled as in one block."""
    import navred.triangle as triangle

    rng = np.random.default_rng(7)
    n = triangle.TRIANGLE_BLOCK * triangle.THREADS_FROM_BLOCKS + 123
    lat, dec, lha = rng.uniform(-80, 80, n), rng.uniform(-60, 60, n), rng.uniform(0, 360, n)
    monkeypatch.setattr(triangle, "threads_for", lambda blocks: 4)
    threaded = computed_altitude_azimuth(lat, 0.0, lha, dec)
    monkeypatch.setattr(triangle, "threads_for", lambda blocks: 1)
    alone = computed_altitude_azimuth(lat, 0.0, lha, dec)
    assert np.array_equal(threaded[0], alone[0]) and np.array_equal(threaded[1], alone[1])
    phi, d, t = np.radians(lat), np.radians(dec), np.radians(lha)
    expected = np.degrees(np.arcsin(np.sin(phi) * np.sin(d) + np.cos(phi) * np.cos(d) * np.cos(t)))
    assert np.allclose(threaded[0], expected, atol=1e-9)
    monkeypatch.setattr(triangle, "threads_for", lambda blocks: 4)
    assert computed_altitude_azimuth(lat.reshape(1, -1), np.zeros((2, 1)), lha, dec)[0].shape == (2, n)
    lat[-1] = np.nan
    with pytest.raises(AngleInputError, match="finite"):
        computed_altitude_azimuth(lat, 0.0, lha, dec)


def test_bad_inputs():
    with pytest.raises(AngleInputError, match="-90 to 90"):
        computed_altitude_azimuth(95.0, 0.0, 0.0, 0.0)
    with pytest.raises(AngleInputError, match="finite"):
        computed_altitude_azimuth(np.nan, 0.0, 0.0, 0.0)


def test_a_declination_past_a_pole_is_refused():
    # a declination of 91° is not 89°: a slip of sign or unit must not be folded back into range
    with pytest.raises(AngleInputError, match="declination must lie in -90 to 90"):
        computed_altitude_azimuth(40.0, 0.0, 10.0, 91.0)
    with pytest.raises(AngleInputError, match=r"value 2 of 2"):
        computed_altitude_azimuth(40.0, 0.0, 10.0, np.array([20.0, -90.5]))


def test_intercept_toward_and_away():
    # Marcq St Hilaire: intercept = 60 (Ho − Hc) nm, positive toward the body (common practice)
    assert float(intercept_nm(30.1, 30.0)) == pytest.approx(6.0)
    assert list(intercept_direction(np.array([6.0, -2.0, np.nan]))) == ["TOWARD", "AWAY", ""]


def test_line_of_position_is_perpendicular_to_zn_through_the_foot():
    # the LOP runs through the intercept point at right angles to Zn (common practice)
    lop = line_of_position(45.0, -10.0, 12.0, 60.0, half_length_nm=5.0)
    d, b = distance_bearing(45.0, -10.0, lop["foot_lat_deg"], lop["foot_lon_deg"])
    assert float(d) == pytest.approx(12.0, abs=1e-6) and float(b) == pytest.approx(60.0, abs=1e-6)
    _, b_end = distance_bearing(lop["foot_lat_deg"], lop["foot_lon_deg"], lop["end1_lat_deg"], lop["end1_lon_deg"])
    assert float(b_end) == pytest.approx(150.0, abs=1e-6)
    away = line_of_position(45.0, -10.0, -12.0, 60.0)
    _, b_away = distance_bearing(45.0, -10.0, away["foot_lat_deg"], away["foot_lon_deg"])
    assert float(b_away) == pytest.approx(240.0, abs=1e-6)


def test_destination_and_distance_are_inverse():
    # one nautical mile per arcminute of great circle (common practice)
    lat, lon = destination(10.0, 20.0, 33.0, 250.0)
    d, b = distance_bearing(10.0, 20.0, lat, lon)
    assert float(d) == pytest.approx(250.0, abs=1e-6) and float(b) == pytest.approx(33.0, abs=1e-6)


def test_assumed_position_makes_lha_whole():
    # the hand method's AP: whole-degree latitude, whole LHA, within 30′ of the DR (common practice)
    ap_lat, ap_lon, lha = assumed_position(np.array([47.6, -12.2]), np.array([-5.3, 150.6]),
                                           np.array([100.25, 10.9]))
    assert list(ap_lat) == [48.0, -12.0]
    assert np.allclose(lha, np.round(lha))
    assert np.all(np.abs(angle_diff_deg(ap_lon, [-5.3, 150.6])) <= 0.5 + 1e-9)
