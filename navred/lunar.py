"""Longitude by lunar distance: clearing the observed distance and finding UTC from it.

The navigator measures the distance between the Moon's limb and the Sun, a star or a
planet, and (if she can) the two altitudes. Clearing turns the observed distance into the
distance between the two bodies as seen from the Earth's centre, and the UTC is the instant
at which the almanac's geocentric distance equals it. With the UTC the chronometer's error
is known, and a time sight of either body gives the longitude.

The clearing here is rigorous, on the sphere, not by the old approximate tables:

1. The apparent (refracted, topocentric) distance of the centres is the observed distance
   corrected for index error and for the semi-diameters, the Moon's augmented for its
   nearness, each contracted by refraction along the line joining the bodies
   (SD·(1 − k cos² q), k = −dR/dh, q the angle between the vertical and that line).
2. From the apparent altitudes of the centres (observed, or computed at the DR for the
   approximate time) and the apparent distance, the difference of azimuth follows from the
   spherical triangle zenith-Moon-body. Refraction and parallax change altitudes, not
   azimuths, so that difference survives the clearing.
3. Each body's true topocentric direction (refraction removed) is turned into a geocentric
   one by adding the observer's radius vector on the WGS 84 ellipsoid (the Moon's distance
   from the almanac), which includes the oblateness exactly.
4. The cleared distance is the angle between the two geocentric directions.

A 0.1′ error in the distance is about 12 seconds of time, and so 3′ of longitude: the
result reports its own sensitivity.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180
from .constants import ARCMIN_PER_DEG, NS_PER_MINUTE, NS_PER_SECOND
from .corrections import (
    DEFAULT_PRESSURE_HPA,
    DEFAULT_TEMPERATURE_C,
    bennett_refraction_arcmin,
    observer_geometry,
    parallax_in_altitude_arcmin,
    topocentric_distance_ratio,
)
from .errors import NavredError, NavredWarning
from .stars import canonical_body_name
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth


@dataclass
class LunarResult:
    """The cleared distance, the UTC it gives, and what follows from it."""

    utc: np.datetime64
    cleared_distance_deg: float
    apparent_distance_deg: float
    chronometer_error_s: float  # the given time minus the found UTC: positive when the chronometer is fast
    seconds_per_tenth_arcmin: float
    longitude_deg: float | None
    longitude_from: str
    moon_apparent_altitude_deg: float
    other_apparent_altitude_deg: float
    iterations: int


def _refraction_deg(apparent_deg, temperature_c, pressure_hpa):
    return bennett_refraction_arcmin(np.asarray(apparent_deg, dtype=float), temperature_c, pressure_hpa) / ARCMIN_PER_DEG


def _apparent_from_true(true_deg, temperature_c, pressure_hpa):
    """Apparent altitude whose refraction brings it down to the true altitude (fixed-point iteration)."""
    apparent = np.asarray(true_deg, dtype=float)
    for _ in range(6):
        apparent = true_deg + _refraction_deg(apparent, temperature_c, pressure_hpa)
    return apparent


def _unit(alt_deg, az_deg):
    h, z = np.radians(alt_deg), np.radians(az_deg)
    return np.array([np.cos(h) * np.sin(z), np.cos(h) * np.cos(z), np.sin(h)])


def _angle(a, b) -> float:
    return float(np.degrees(np.arctan2(np.linalg.norm(np.cross(a, b)), np.dot(a, b))))


def _geocentric_distance_deg(moon, other) -> float:
    """Angle between the almanac's geocentric apparent places (RA/Dec of date) of two bodies."""
    a = _unit(moon.dec_deg[0], -moon.ra_hours[0] * 15.0)  # any consistent spherical frame will do
    b = _unit(other.dec_deg[0], -other.ra_hours[0] * 15.0)
    return _angle(a, b)


def clear_distance(apparent_distance_deg: ArrayLike, moon_apparent_deg: ArrayLike, other_apparent_deg: ArrayLike, moon_zn_deg: ArrayLike, other_zn_deg: ArrayLike,
                   moon_hp_arcmin: ArrayLike, other_hp_arcmin: ArrayLike, lat_deg: ArrayLike, *, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                   pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA, strict: bool = True) -> float:
    """The geocentric distance (degrees) from the apparent distance and apparent altitudes of the centres.

    Azimuths are needed only for the side of the other body and for the oblateness term, so
    the azimuths computed at the DR for the approximate time serve.
    """
    d = np.radians(apparent_distance_deg)
    a_m, a_o = np.radians(moon_apparent_deg), np.radians(other_apparent_deg)
    cos_dz = (np.cos(d) - np.sin(a_m) * np.sin(a_o)) / (np.cos(a_m) * np.cos(a_o))
    if abs(cos_dz) > 0.999:
        warnings.warn("the Moon and the other body stand nearly in one vertical: the distance then "
                      "depends on the altitudes alone, so clear it with both altitudes observed", NavredWarning,
                      stacklevel=3)
    if strict and abs(cos_dz) > 1.0 + 0.02:
        # beyond what rounding allows (about 0.1° of altitude with the bodies in line)
        raise NavredError("the distance and the two altitudes do not make a spherical triangle "
                          f"(cos ΔZ = {cos_dz:.4f}): check the distance, the altitudes and the body")
    dz = np.degrees(np.arccos(np.clip(cos_dz, -1.0, 1.0)))
    side = 1.0 if wrap_180(other_zn_deg - moon_zn_deg) >= 0 else -1.0
    true_m = moon_apparent_deg - _refraction_deg(moon_apparent_deg, temperature_c, pressure_hpa)
    true_o = other_apparent_deg - _refraction_deg(other_apparent_deg, temperature_c, pressure_hpa)
    rho, tilt = observer_geometry(lat_deg)
    observer = float(rho) * np.array([0.0, -np.sin(tilt), np.cos(tilt)])  # Earth radii, local E-N-U

    def geocentric(true_alt, zn, hp_arcmin):
        u = _unit(true_alt, zn)
        if hp_arcmin <= 0:
            return u
        distance = 1.0 / np.sin(np.radians(hp_arcmin / ARCMIN_PER_DEG))
        topocentric = distance * float(topocentric_distance_ratio(true_alt, hp_arcmin, lat_deg, zn))
        return topocentric * u + observer

    moon_geo = geocentric(true_m, moon_zn_deg, moon_hp_arcmin)
    other_geo = geocentric(true_o, moon_zn_deg + side * dz, other_hp_arcmin)
    return _angle(moon_geo, other_geo)


def _contraction(apparent_deg, temperature_c, pressure_hpa) -> float:
    """k = −dR/dh at an apparent altitude: the vertical shrinking of a disc by refraction."""
    step = 0.05
    r1 = _refraction_deg(apparent_deg - step, temperature_c, pressure_hpa)
    r2 = _refraction_deg(apparent_deg + step, temperature_c, pressure_hpa)
    return float((r1 - r2) / (2 * step))


def _position_angle_cos(h_self, h_other, distance):
    """cos of the angle at a body between its vertical and the great circle to the other body."""
    h1, h2, d = np.radians(h_self), np.radians(h_other), np.radians(distance)
    return float((np.sin(h2) - np.sin(h1) * np.cos(d)) / (np.cos(h1) * np.sin(d)))


def lunar_distance(observed_distance_deg: float, other: str, utc_approx: object, lat_deg: float, lon_deg: float, *,
                   moon_limb: str = "near", other_limb: str = "centre", index_error_arcmin: float = 0.0,
                   moon_apparent_altitude_deg: float | None = None,
                   other_apparent_altitude_deg: float | None = None,
                   temperature_c: float = DEFAULT_TEMPERATURE_C, pressure_hpa: float = DEFAULT_PRESSURE_HPA) -> LunarResult:
    """UTC, chronometer error and longitude from a lunar distance.

    ``observed_distance_deg``: the sextant reading between the Moon's ``moon_limb`` ('near'
    or 'far' limb from the other body) and the other body's ``other_limb`` ('near', 'far' or
    'centre'; stars and planets are points), with its ``index_error_arcmin`` (on the arc
    positive). ``utc_approx``: the chronometer's time of the observation (any accepted instant
    form). The apparent altitudes of the two centres (corrected for index error, dip and
    semi-diameter, not for refraction or parallax) may be given; otherwise they are computed
    at the DR for the current estimate of UTC. The longitude is found by a time sight of the
    other body (or of the Moon) when its altitude was observed.
    """
    other = canonical_body_name(other)
    if other == "Moon":
        raise NavredError("a lunar distance is measured from the Moon to another body, not to itself")
    for name, limb in (("moon_limb", moon_limb), ("other_limb", other_limb)):
        if limb not in ("near", "far", "centre"):
            raise NavredError(f"{name} must be 'near', 'far' or 'centre', not {limb!r}")
    if not 0.0 < observed_distance_deg < 180.0:
        raise NavredError(f"observed distance {observed_distance_deg}° is outside 0-180°")
    given = utc_jd_to_datetime64(*utc_julian_date(utc_approx))[()]
    observed_altitudes = moon_apparent_altitude_deg is not None and other_apparent_altitude_deg is not None
    sign = {"near": 1.0, "far": -1.0, "centre": 0.0}

    def clearing_at(t):
        """(cleared − almanac distance, cleared, apparent, a_m, a_o, zn_o) at a trial UTC."""
        moon = places("Moon", np.array([t]))
        body = places(other, np.array([t]))
        hc_m, zn_m = (float(v[0]) for v in computed_altitude_azimuth(lat_deg, lon_deg, moon.gha_deg, moon.dec_deg))
        hc_o, zn_o = (float(v[0]) for v in computed_altitude_azimuth(lat_deg, lon_deg, body.gha_deg, body.dec_deg))
        if observed_altitudes:
            a_m, a_o = float(moon_apparent_altitude_deg), float(other_apparent_altitude_deg)
        else:
            a_m = float(_apparent_from_true(_topocentric(hc_m, moon.hp_arcmin[0], lat_deg, zn_m),
                                            temperature_c, pressure_hpa))
            a_o = float(_apparent_from_true(_topocentric(hc_o, body.hp_arcmin[0], lat_deg, zn_o),
                                            temperature_c, pressure_hpa))
        if min(a_m, a_o) < 3.0:
            raise NavredError(f"the Moon ({a_m:.1f}°) or the other body ({a_o:.1f}°) is below 3°: refraction "
                              "there spoils a lunar distance")
        # semi-diameters: the Moon's augmented, both contracted by refraction along the joining line
        rough = observed_distance_deg - index_error_arcmin / ARCMIN_PER_DEG
        true_m = a_m - _refraction_deg(a_m, temperature_c, pressure_hpa)
        sd_m = moon.sd_arcmin[0] / float(topocentric_distance_ratio(true_m, moon.hp_arcmin[0], lat_deg, zn_m))
        sd_m *= 1.0 - _contraction(a_m, temperature_c, pressure_hpa) * _position_angle_cos(a_m, a_o, rough) ** 2
        sd_o = body.sd_arcmin[0]
        if sd_o > 0:
            sd_o *= 1.0 - _contraction(a_o, temperature_c, pressure_hpa) * _position_angle_cos(a_o, a_m, rough) ** 2
        apparent = (observed_distance_deg + (-index_error_arcmin + sign[moon_limb] * sd_m
                                             + sign[other_limb] * sd_o) / ARCMIN_PER_DEG)
        # altitudes computed for a time still minutes out may not quite close the triangle with
        # the observed distance: then the azimuth difference is taken at its limit for this pass
        cleared = clear_distance(apparent, a_m, a_o, zn_m, zn_o, moon.hp_arcmin[0], body.hp_arcmin[0], lat_deg,
                                 temperature_c=temperature_c, pressure_hpa=pressure_hpa,
                                 strict=observed_altitudes)
        return cleared - _geocentric_distance_deg(moon, body), cleared, apparent, a_m, a_o, zn_o

    # Newton's method on f(t) = cleared(t) − almanac(t): with computed altitudes the clearing
    # itself changes with the trial time (the Moon's parallax), so both sides are differenced
    t = given
    step = np.timedelta64(NS_PER_MINUTE, "ns")
    iterations = 0
    for _ in range(10):
        iterations += 1
        f_now, cleared, apparent, a_m, a_o, zn_o = clearing_at(t)
        f_next = clearing_at(t + step)[0]
        slope = (f_next - f_now) / 60.0  # degrees per second
        if abs(slope) < 1e-7:
            raise NavredError("the distance is not changing (the bodies are near conjunction or opposition): "
                              "choose another body for the lunar")
        correction_s = -f_now / slope
        t = t + np.timedelta64(int(round(correction_s * NS_PER_SECOND)), "ns")
        if abs(correction_s) < 0.01:
            break
    f_now, cleared, apparent, a_m, a_o, zn_o = clearing_at(t)
    moon_t, body_t = places("Moon", np.array([t])), places(other, np.array([t]))
    moon_next, body_next = places("Moon", np.array([t + step])), places(other, np.array([t + step]))
    rate = (_geocentric_distance_deg(moon_next, body_next) - _geocentric_distance_deg(moon_t, body_t)) / 60.0
    longitude, source = None, "no altitude observed"
    if observed_altitudes:
        longitude = _time_sight_longitude(other, t, lat_deg, a_o, temperature_c, pressure_hpa, zn_o)
        source = f"time sight of {other} at the cleared UTC and the DR latitude"
    return LunarResult(utc=t, cleared_distance_deg=cleared, apparent_distance_deg=apparent,
                       chronometer_error_s=float((given - t).astype(np.int64)) / NS_PER_SECOND,
                       seconds_per_tenth_arcmin=abs((0.1 / ARCMIN_PER_DEG) / rate),
                       longitude_deg=longitude, longitude_from=source, moon_apparent_altitude_deg=a_m,
                       other_apparent_altitude_deg=a_o, iterations=iterations)


def _topocentric(hc_deg, hp_arcmin, lat_deg, zn_deg):
    """Topocentric altitude of a centre whose geocentric altitude is Hc (parallax removed)."""
    h = hc_deg
    for _ in range(4):
        h = hc_deg - float(parallax_in_altitude_arcmin(h, hp_arcmin, lat_deg, zn_deg)) / ARCMIN_PER_DEG
    return h


def _time_sight_longitude(body, utc, lat_deg, apparent_deg, temperature_c, pressure_hpa, zn_deg) -> float:
    """Longitude from a body's altitude at a known UTC and latitude (the time sight)."""
    p = places(body, np.array([utc]))
    true = apparent_deg - _refraction_deg(apparent_deg, temperature_c, pressure_hpa)
    ho = true + float(parallax_in_altitude_arcmin(true, p.hp_arcmin[0], lat_deg, zn_deg)) / ARCMIN_PER_DEG
    phi, dec = np.radians(lat_deg), np.radians(p.dec_deg[0])
    cos_lha = (np.sin(np.radians(ho)) - np.sin(phi) * np.sin(dec)) / (np.cos(phi) * np.cos(dec))
    lha = np.degrees(np.arccos(np.clip(cos_lha, -1.0, 1.0)))
    lha = lha if zn_deg >= 180.0 else 360.0 - lha  # a body west of the meridian has LHA under 180°
    return float(wrap_180(lha - p.gha_deg[0]))
