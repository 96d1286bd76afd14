"""Lunar distances synthesized with skyfield at a true position and instant (independent of navred)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from navred.errors import NavredError
from navred.lunar import lunar_distance
from tests.conftest import sky_target


def synthesize_lunar(ts, eph, when, lat, lon, other, moon_limb="near", other_limb="centre"):
    """The distance a sextant would read from the true position (skyfield throughout):
    topocentric airless directions, the Moon's limb point toward the other body at skyfield's
    topocentric semi-diameter, the Sun's limb likewise, each point refracted by skyfield's own
    refract(), and the angle between the refracted points. Also the apparent altitudes of the
    centres and skyfield's geocentric apparent distance."""
    from skyfield.api import wgs84
    from skyfield.earthlib import refract

    t = ts.from_datetime(pd.Timestamp(when).to_pydatetime())
    observer = eph["earth"] + wgs84.latlon(lat, lon)

    def topocentric(name):
        alt, az, distance = observer.at(t).observe(sky_target(ts, eph, name)).apparent().altaz()
        return alt.degrees, az.degrees, distance.km

    def unit(alt, az):
        h, z = np.radians(alt), np.radians(az)
        return np.array([np.cos(h) * np.sin(z), np.cos(h) * np.cos(z), np.sin(h)])

    def toward(a, b, angle_deg):
        perpendicular = b - np.dot(a, b) * a
        perpendicular /= np.linalg.norm(perpendicular)
        r = np.radians(angle_deg)
        return np.cos(r) * a + np.sin(r) * perpendicular

    def refracted(v):
        alt = np.degrees(np.arcsin(v[2]))
        az = np.degrees(np.arctan2(v[0], v[1]))
        return unit(float(refract(alt, 10.0, 1010.0)), az)

    m_alt, m_az, m_km = topocentric("Moon")
    o_alt, o_az, o_km = topocentric(other)
    m, o = unit(m_alt, m_az), unit(o_alt, o_az)
    sd_m = np.degrees(np.arcsin(1737.4 / m_km))
    sd_o = np.degrees(np.arcsin(695700.0 / o_km)) if other == "Sun" else 0.0
    sign = {"near": 1.0, "far": -1.0, "centre": 0.0}
    m_point = toward(m, o, sign[moon_limb] * sd_m)
    o_point = toward(o, m, sign[other_limb] * sd_o) if sd_o else o
    a, b = refracted(m_point), refracted(o_point)
    observed = np.degrees(np.arctan2(np.linalg.norm(np.cross(a, b)), np.dot(a, b)))
    geo = eph["earth"].at(t)
    distance = geo.observe(eph["moon"]).apparent().separation_from(geo.observe(sky_target(ts, eph, other)).apparent())
    return {"observed_deg": float(observed), "moon_apparent_deg": float(refract(m_alt, 10.0, 1010.0)),
            "other_apparent_deg": float(refract(o_alt, 10.0, 1010.0)), "geocentric_deg": distance.degrees,
            "moon_alt": m_alt, "other_alt": o_alt}


CASES = [
    ("2024-09-12T19:30:00Z", 30.0, -40.0, "Antares", "far", "centre"),
    ("2024-09-12T19:30:00Z", 30.0, -40.0, "Vega", "far", "centre"),
    ("2024-10-06T08:00:00Z", 15.0, 120.0, "Sun", "near", "near"),
    ("2024-09-15T19:00:00Z", -20.0, 10.0, "Saturn", "near", "centre"),
    ("2024-11-20T04:30:00Z", 45.0, -30.0, "Regulus", "far", "centre"),
]


@pytest.mark.parametrize("when, lat, lon, other, moon_limb, other_limb", CASES)
def test_lunar_gives_utc_within_10_seconds_and_clears_within_005(ts, eph, when, lat, lon, other, moon_limb, other_limb):
    """Reference: skyfield. Without noise, from a chronometer 3 minutes fast: UTC within 10 s, and
    the cleared distance equals skyfield's geocentric distance within 0.05′."""
    s = synthesize_lunar(ts, eph, when, lat, lon, other, moon_limb, other_limb)
    assert s["moon_alt"] > 5 and s["other_alt"] > 5, s  # the cases are chosen with both bodies up
    truth = pd.Timestamp(when)
    chronometer = truth + pd.Timedelta(minutes=3)
    for observed in (True, False):  # altitudes observed, or computed at the DR
        result = lunar_distance(s["observed_deg"], other, chronometer, lat, lon, moon_limb=moon_limb,
                                other_limb=other_limb,
                                moon_apparent_altitude_deg=s["moon_apparent_deg"] if observed else None,
                                other_apparent_altitude_deg=s["other_apparent_deg"] if observed else None)
        found = pd.Timestamp(result.utc).tz_localize("UTC")
        assert abs((found - truth).total_seconds()) < 10.0, (observed, found)
        assert result.chronometer_error_s == pytest.approx(180.0, abs=10.0)
        if observed:
            # the cleared distance at the true instant
            exact = lunar_distance(s["observed_deg"], other, truth, lat, lon, moon_limb=moon_limb,
                                   other_limb=other_limb, moon_apparent_altitude_deg=s["moon_apparent_deg"],
                                   other_apparent_altitude_deg=s["other_apparent_deg"])
            assert abs(exact.cleared_distance_deg - s["geocentric_deg"]) * 60 < 0.05
            assert result.longitude_deg == pytest.approx(lon, abs=0.05)


def test_sensitivity_is_about_12_seconds_per_tenth_of_a_minute(ts, eph):
    # the Moon moves about 0.5′ of arc a minute against the stars (common practice): 0.1′ ≈ 12 s
    s = synthesize_lunar(ts, eph, *CASES[0][:4])
    result = lunar_distance(s["observed_deg"], "Antares", CASES[0][0], 30.0, -40.0, moon_limb="far")
    assert 8.0 < result.seconds_per_tenth_arcmin < 18.0


def test_bad_lunar_inputs():
    with pytest.raises(NavredError, match="not to itself"):
        lunar_distance(40.0, "Moon", "2024-09-12T19:30:00Z", 30.0, -40.0)
    with pytest.raises(NavredError, match="'near', 'far' or 'centre'"):
        lunar_distance(40.0, "Vega", "2024-09-12T19:30:00Z", 30.0, -40.0, moon_limb="upper")
