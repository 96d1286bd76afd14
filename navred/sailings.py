"""Sailings on the WGS 84 ellipsoid: the rhumb line steered, leg by leg, in nautical miles of 1852 m.

A rhumb line (loxodrome) crosses every meridian at the same angle, the course. On the
ellipsoid its northing is measured along the meridian and its easting follows from the
isometric latitude ψ (the Mercator ordinate):

    M(φ2) − M(φ1) = s cos C                 (M: the meridian arc from the equator)
    λ2 − λ1 = tan C (ψ(φ2) − ψ(φ1))          (ψ = atanh(sin φ) − e atanh(e sin φ))

and, on a course of 090° or 270°, λ2 − λ1 = s sin C / (ν cos φ), ν the radius of curvature
in the prime vertical (J. P. Snyder, "Map Projections: A Working Manual", USGS Professional
Paper 1395, 1987, eqs. 3-7, 3-21, 4-2 and 4-20; the meridional parts of the nautical tables
are ψ in minutes of arc). Because the northings add along a track, a whole DR track of legs
is one cumulative sum: every function here takes arrays and broadcasts, with no loop over
legs or positions.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import EARTH_EQUATORIAL_RADIUS_KM, EARTH_FLATTENING, METRES_PER_NM

A_M = EARTH_EQUATORIAL_RADIUS_KM * 1000.0
E2 = EARTH_FLATTENING * (2.0 - EARTH_FLATTENING)
E = np.sqrt(E2)
#: Latitudes are kept this far inside the poles, where a rhumb line spirals without end.
POLAR_LIMIT_DEG = 89.999

# Meridian arc coefficients (Snyder eq. 3-21, the series in e² to e⁸ is far below a millimetre)
_M0 = 1 - E2 / 4 - 3 * E2**2 / 64 - 5 * E2**3 / 256
_M2 = 3 * E2 / 8 + 3 * E2**2 / 32 + 45 * E2**3 / 1024
_M4 = 15 * E2**2 / 256 + 45 * E2**3 / 1024
_M6 = 35 * E2**3 / 3072
# footpoint latitude from the rectifying latitude (Snyder eq. 3-26, e1 = (1 − √(1 − e²)) / (1 + √(1 − e²)))
_E1 = (1 - np.sqrt(1 - E2)) / (1 + np.sqrt(1 - E2))
_F2 = 3 * _E1 / 2 - 27 * _E1**3 / 32
_F4 = 21 * _E1**2 / 16 - 55 * _E1**4 / 32
_F6 = 151 * _E1**3 / 96
_F8 = 1097 * _E1**4 / 512


def meridian_arc_m(lat_deg: ArrayLike) -> np.ndarray:
    """Length in metres of the meridian from the equator to the latitude (negative south).

    >>> round(float(meridian_arc_m(90.0)) / 1000, 3)  # the quarter meridian of WGS 84
    10001.966
    """
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    return A_M * (_M0 * phi - _M2 * np.sin(2 * phi) + _M4 * np.sin(4 * phi) - _M6 * np.sin(6 * phi))


def meridian_radius_m(lat_deg: ArrayLike) -> np.ndarray:
    """ρ, the radius of curvature in the meridian (metres): a(1 − e²)/(1 − e² sin²φ)^(3/2)."""
    s = np.sin(np.radians(np.asarray(lat_deg, dtype=float)))
    return A_M * (1 - E2) / (1 - E2 * s * s) ** 1.5


def latitude_from_meridian_arc_deg(arc_m: ArrayLike, near: tuple[ArrayLike, ArrayLike] | None = None) -> np.ndarray:
    """The latitude (degrees) whose meridian arc from the equator is ``arc_m`` metres.

    ``near`` = (a latitude in degrees, its meridian arc in metres) within 300 nautical miles of
    the answer starts Newton's method there, one step from the answer (a track sailed from a
    known position); otherwise the footpoint series starts it.

    >>> round(float(latitude_from_meridian_arc_deg(meridian_arc_m(60.0))), 12)
    60.0
    >>> round(float(latitude_from_meridian_arc_deg(meridian_arc_m(60.5), (60.0, meridian_arc_m(60.0)))), 12)
    60.5
    """
    arc = np.asarray(arc_m, dtype=float)
    if near is not None:
        lat_near, arc_near = (np.asarray(v, dtype=float) for v in near)
        offset = arc - arc_near
        if np.all(np.abs(offset) < 300.0 * METRES_PER_NM):
            # the linear start is off by about (3/2) e² sin 2φ (Δφ)² / 2 (under 1e-5 rad at 300 nm), and
            # Newton squares that: one step leaves less than 1e-10 rad (a millimetre)
            phi = np.radians(lat_near) + offset / meridian_radius_m(lat_near)
            rho = A_M * (1 - E2) / (1 - E2 * np.sin(phi) ** 2) ** 1.5
            return np.degrees(phi + (arc - meridian_arc_m(np.degrees(phi))) / rho)
    mu = arc / (A_M * _M0)
    phi = mu + _F2 * np.sin(2 * mu) + _F4 * np.sin(4 * mu) + _F6 * np.sin(6 * mu) + _F8 * np.sin(8 * mu)
    for _ in range(2):
        # Newton on M(φ) = arc, dM/dφ = ρ = a(1 − e²)/(1 − e² sin²φ)^(3/2), the meridian radius of curvature
        rho = A_M * (1 - E2) / (1 - E2 * np.sin(phi) ** 2) ** 1.5
        phi = phi + (arc - meridian_arc_m(np.degrees(phi))) / rho
    return np.degrees(phi)


def isometric_latitude(lat_deg: ArrayLike) -> np.ndarray:
    """The isometric latitude ψ (radians) on the ellipsoid: the Mercator ordinate; meridional parts
    are ψ in minutes of arc (Snyder eq. 3-7 in its atanh form)."""
    s = np.sin(np.radians(np.clip(np.asarray(lat_deg, dtype=float), -POLAR_LIMIT_DEG, POLAR_LIMIT_DEG)))
    return np.arctanh(s) - E * np.arctanh(E * s)


def meridional_parts(lat_deg: ArrayLike) -> np.ndarray:
    """Meridional parts (minutes of arc of the equator) of a latitude on WGS 84.

    >>> round(float(meridional_parts(60.0)), 1)
    4507.4
    """
    return np.degrees(isometric_latitude(lat_deg)) * 60.0


def prime_vertical_radius_m(lat_deg: ArrayLike) -> np.ndarray:
    """ν, the radius of curvature in the prime vertical (metres)."""
    s = np.sin(np.radians(np.asarray(lat_deg, dtype=float)))
    return A_M / np.sqrt(1 - E2 * s * s)


def _longitude_change_rad(lat1, lat2, course_rad, distance_m):
    """λ2 − λ1 (radians) along a rhumb line from lat1 to lat2 on the course (east-west legs apart)."""
    dpsi = isometric_latitude(lat2) - isometric_latitude(lat1)
    cos_c = np.cos(course_rad)
    east_west = np.abs(cos_c) < 1e-9
    mid = (np.asarray(lat1) + np.asarray(lat2)) / 2.0
    along_parallel = distance_m * np.sin(course_rad) / (prime_vertical_radius_m(mid) * np.cos(np.radians(mid)))
    with np.errstate(divide="ignore", invalid="ignore"):
        sloped = np.tan(course_rad) * dpsi
    return np.where(east_west, along_parallel, sloped)


def rhumb_destination(lat_deg: ArrayLike, lon_deg: ArrayLike, course_deg: ArrayLike,
                      distance_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Position reached from (lat, lon) along the rhumb line of a true course, distance in nautical miles.

    >>> lat, lon = rhumb_destination(0.0, 0.0, 90.0, 60.0)  # 111,120 m along the equator, of radius a
    >>> round(float(lat), 9), round(float(lon), 5)
    (0.0, 0.99821)
    """
    course = np.radians(np.asarray(course_deg, dtype=float))
    distance_m = np.asarray(distance_nm, dtype=float) * METRES_PER_NM
    lat2 = latitude_from_meridian_arc_deg(meridian_arc_m(lat_deg) + distance_m * np.cos(course))
    lat2 = np.clip(lat2, -POLAR_LIMIT_DEG, POLAR_LIMIT_DEG)
    dlon = _longitude_change_rad(np.asarray(lat_deg, dtype=float), lat2, course, distance_m)
    return lat2, wrap_180(np.asarray(lon_deg, dtype=float) + np.degrees(dlon))


def rhumb_inverse(lat1_deg: ArrayLike, lon1_deg: ArrayLike, lat2_deg: ArrayLike,
                  lon2_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Rhumb-line distance (nautical miles) and true course (degrees) from point 1 to point 2,
    the shorter way round in longitude."""
    lat1, lat2 = (np.asarray(v, dtype=float) for v in (lat1_deg, lat2_deg))
    dlon = np.radians(wrap_180(np.asarray(lon2_deg, dtype=float) - np.asarray(lon1_deg, dtype=float)))
    dpsi = isometric_latitude(lat2) - isometric_latitude(lat1)
    dm = meridian_arc_m(lat2) - meridian_arc_m(lat1)
    course = np.arctan2(dlon, dpsi)
    along_parallel = np.abs(dpsi) < 1e-12
    mid = (lat1 + lat2) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        distance = np.where(along_parallel, np.abs(dlon) * prime_vertical_radius_m(mid) * np.cos(np.radians(mid)),
                            dm / np.cos(course))
    return distance / METRES_PER_NM, wrap_360(np.degrees(course))


def rhumb_track(lat0_deg: ArrayLike, lon0_deg: ArrayLike, north_nm: ArrayLike, course_deg: ArrayLike,
                distance_nm: ArrayLike, axis: int = -1) -> tuple[np.ndarray, np.ndarray]:
    """Positions along a track of rhumb-line legs that starts at (lat0, lon0), one per leg end.

    ``course_deg`` and ``distance_nm`` give the legs in order along ``axis`` (a leg of
    negative distance is sailed backwards: the track may run back in time); ``north_nm`` is
    each leg's northing, distance × cos course, passed in so that the caller's sums are used
    exactly. The start broadcasts against the legs without their axis. Returns the latitude
    and longitude at the end of every leg.
    """
    course = np.radians(np.asarray(course_deg, dtype=float))
    distance_m = np.asarray(distance_nm, dtype=float) * METRES_PER_NM
    north_m = np.asarray(north_nm, dtype=float) * METRES_PER_NM
    lat0 = np.expand_dims(np.asarray(lat0_deg, dtype=float), axis)
    lon0 = np.expand_dims(np.asarray(lon0_deg, dtype=float), axis)
    arcs = meridian_arc_m(lat0) + np.cumsum(north_m, axis=axis)
    ends = np.clip(latitude_from_meridian_arc_deg(arcs), -POLAR_LIMIT_DEG, POLAR_LIMIT_DEG)
    starts = np.concatenate([np.broadcast_to(lat0, ends.shape[:axis % ends.ndim] + (1,) +
                                             ends.shape[axis % ends.ndim + 1:]),
                             np.take(ends, np.arange(ends.shape[axis] - 1), axis=axis)], axis=axis)
    dlon = _longitude_change_rad(starts, ends, course, distance_m)
    return ends, wrap_180(lon0 + np.degrees(np.cumsum(dlon, axis=axis)))


def rhumb_track_through(lat_deg: ArrayLike, lon_deg: ArrayLike, at: ArrayLike, north_nm: ArrayLike,
                        course_deg: ArrayLike, distance_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Every point of a track of rhumb-line legs, given the position (lat, lon) of its point ``at``.

    The legs run along the last axis (k from point k to point k + 1, ``north_nm`` each leg's
    northing, distance × cos course); the points are one more than the legs. The track is sailed
    on and back from point ``at`` at once: each point's meridian arc is the reference point's plus
    the northings between them, and its longitude the reference's plus the legs' longitude
    changes between them (a rhumb line sailed the other way is the same line). Returns the
    latitudes and longitudes of all points, shape (..., legs + 1).
    """
    north_m = np.asarray(north_nm, dtype=float) * METRES_PER_NM
    at = np.asarray(at, dtype=np.intp)[..., None]
    lat = np.asarray(lat_deg, dtype=float)[..., None]
    lon = np.asarray(lon_deg, dtype=float)[..., None]
    zero = np.zeros(north_m.shape[:-1] + (1,))
    run = np.concatenate([zero, np.cumsum(north_m, axis=-1)], axis=-1)
    arc_at = meridian_arc_m(lat)
    arcs = arc_at + (run - np.take_along_axis(run, at, axis=-1))
    lats = np.clip(latitude_from_meridian_arc_deg(arcs, (lat, arc_at)), -POLAR_LIMIT_DEG, POLAR_LIMIT_DEG)
    lats = np.where(np.arange(lats.shape[-1]) == at, lat, lats)  # the reference point exactly as given
    dlon = _longitude_change_rad(lats[..., :-1], lats[..., 1:], np.radians(np.asarray(course_deg, dtype=float)),
                                 np.asarray(distance_nm, dtype=float) * METRES_PER_NM)
    turned = np.concatenate([zero, np.cumsum(dlon, axis=-1)], axis=-1)
    lons = wrap_180(lon + np.degrees(turned - np.take_along_axis(turned, at, axis=-1)))
    return lats, lons


__all__ = ["meridian_arc_m", "latitude_from_meridian_arc_deg", "isometric_latitude", "meridional_parts",
           "prime_vertical_radius_m", "meridian_radius_m", "rhumb_destination", "rhumb_inverse", "rhumb_track", "rhumb_track_through"]
