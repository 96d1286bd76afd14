"""Sailings on the WGS 84 ellipsoid: the rhumb line steered leg by leg, and the great circle (the geodesic),
in nautical miles of 1852 m.

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
from .constants import ARCMIN_PER_DEG, EARTH_EQUATORIAL_RADIUS_KM, EARTH_FLATTENING, METRES_PER_NM
from .errors import NavredError

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
    close = None
    if near is not None:
        # each latitude is started for itself (near its own known one, or by the series), never by what others
        # in the same array need: a position's latitude is the same whatever it is worked with
        lat_near, arc_near = (np.asarray(v, dtype=float) for v in near)
        offset = arc - arc_near
        close = np.abs(offset) < 300.0 * METRES_PER_NM
        if close.any():
            # the linear start is off by about (3/2) e² sin 2φ (Δφ)² / 2 (under 1e-5 rad at 300 nm), and
            # Newton squares that: one step leaves less than 1e-10 rad (a millimetre)
            phi = np.radians(lat_near) + offset / meridian_radius_m(lat_near)
            rho = A_M * (1 - E2) / (1 - E2 * np.sin(phi) ** 2) ** 1.5
            from_near = np.degrees(phi + (arc - meridian_arc_m(np.degrees(phi))) / rho)
            if close.all():
                return from_near
    from_series = _latitude_by_series(arc)
    return from_series if close is None or not close.any() else np.where(close, from_near, from_series)


def _latitude_by_series(arc: np.ndarray) -> np.ndarray:
    """:func:`latitude_from_meridian_arc_deg` started by the footpoint series, two Newton steps."""
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
    s = np.sin(np.radians(_within_poles(np.asarray(lat_deg, dtype=float))))
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


def longitude_change_rad(lat1: ArrayLike, lat2: ArrayLike, course_rad: ArrayLike, distance_m: ArrayLike) -> np.ndarray:
    """λ2 − λ1 (radians) along a rhumb line from lat1 to lat2 (degrees) on the course (radians), of length
    ``distance_m``: tan C (ψ2 − ψ1), or along the parallel for an east-west course."""
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
    dlon = longitude_change_rad(np.asarray(lat_deg, dtype=float), lat2, course, distance_m)
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


def rhumb_track_through(lat_deg: ArrayLike, lon_deg: ArrayLike, at: ArrayLike, north_nm: ArrayLike,
                        course_deg: ArrayLike, distance_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Every point of a track of rhumb-line legs, given the position (lat, lon) of its point ``at``.

    The legs run along the last axis (k from point k to point k + 1, ``north_nm`` each leg's
    northing, distance × cos course); the points are one more than the legs. The track is sailed
    on and back from point ``at`` at once: each point's meridian arc is the reference point's plus
    the northings between them, and its longitude the reference's plus the legs' longitude
    changes between them (a rhumb line sailed the other way is the same line). Returns the
    latitudes and longitudes of all points, shape (..., legs + 1). The same track through other
    points again and again (a fix's every step): :class:`RhumbLegs`.
    """
    return RhumbLegs(north_nm, course_deg, distance_nm).through(lat_deg, lon_deg, at)


class RhumbLegs:
    """The legs of tracks of rhumb lines (as :func:`rhumb_track_through` takes them), what depends on the legs
    alone worked once: each point's northing run from the first, each leg's course in radians, its tan and its
    length in metres, which legs run east or west. :meth:`through` gives the points through a given one, bit
    for bit as :func:`rhumb_track_through` (which is this), for a fix that sails the same track back from each
    step of its solution."""

    def __init__(self, north_nm: ArrayLike, course_deg: ArrayLike, distance_nm: ArrayLike) -> None:
        north_m = np.asarray(north_nm, dtype=float) * METRES_PER_NM
        self._zero = np.zeros(north_m.shape[:-1] + (1,))
        self._run = np.concatenate([self._zero, np.cumsum(north_m, axis=-1)], axis=-1)
        self._course_rad = np.radians(np.asarray(course_deg, dtype=float))
        self._distance_m = np.asarray(distance_nm, dtype=float) * METRES_PER_NM
        self._tan = np.tan(self._course_rad)
        self._east_west = np.abs(np.cos(self._course_rad)) < 1e-9
        self._any_east_west = bool(self._east_west.any())
        # the shape of the legs' longitude changes: where every leg's course and length are given in full (a
        # DR track's), the changes along the isometric latitudes alone have it
        points = self._run.shape
        legs = points[:-1] + (points[-1] - 1,)
        self._full = self._course_rad.shape == legs and self._distance_m.shape == legs
        self._points = np.arange(points[-1])
        self._rows = np.arange(points[0])[:, None] if len(points) == 2 else None

    def _at(self, values: np.ndarray, at: np.ndarray) -> np.ndarray:
        """``values`` (..., points) at point ``at`` (..., 1) of each track."""
        if self._rows is not None and at.shape == (self._rows.shape[0], 1):
            return values[self._rows, at]  # a batch of tracks: plain indexing, the same elements
        return np.take_along_axis(values, at, axis=-1)

    def through(self, lat_deg: ArrayLike, lon_deg: ArrayLike, at: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """Every point of each track (..., legs + 1) when its point ``at`` (...,) is at (lat, lon) (...,)."""
        at = np.asarray(at, dtype=np.intp)[..., None]
        lat = np.asarray(lat_deg, dtype=float)[..., None]
        lon = np.asarray(lon_deg, dtype=float)[..., None]
        run = self._run
        arc_at = meridian_arc_m(lat)
        arcs = arc_at + (run - self._at(run, at))
        lats = _within_poles(latitude_from_meridian_arc_deg(arcs, (lat, arc_at)))
        lats = np.where(self._points == at, lat, lats)  # the reference point exactly as given
        if self._full and not self._any_east_west:
            # longitude_change_rad's sloped legs, each point's isometric latitude worked once
            psi = isometric_latitude(lats)
            dlon = self._tan * (psi[..., 1:] - psi[..., :-1])
        else:
            dlon = longitude_change_rad(lats[..., :-1], lats[..., 1:], self._course_rad, self._distance_m)
        turned = np.concatenate([self._zero, np.cumsum(dlon, axis=-1)], axis=-1)
        lons = wrap_180(lon + np.degrees(turned - self._at(turned, at)))
        return lats, lons


def _within_poles(lat_deg: np.ndarray) -> np.ndarray:
    """Latitudes kept within POLAR_LIMIT_DEG of the equator (np.clip's values, NaN kept, in two calls)."""
    return np.minimum(np.maximum(lat_deg, -POLAR_LIMIT_DEG), POLAR_LIMIT_DEG)


def move_position(lat_deg: ArrayLike, lon_deg: ArrayLike, north_nm: ArrayLike, east_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Position moved by a small displacement in nautical miles north and east (mid-latitude sailing).

    For offsets of a few miles (a DR set off the truth, a step of the iteration); a run of the
    vessel is sailed on the rhumb line (:func:`navred.sailings.rhumb_destination`).
    """
    lat = np.asarray(lat_deg, dtype=float) + np.asarray(north_nm, dtype=float) / ARCMIN_PER_DEG
    lat = np.clip(lat, -89.999999, 89.999999)
    mid = np.radians((lat + np.asarray(lat_deg, dtype=float)) / 2.0)
    lon = np.asarray(lon_deg, dtype=float) + np.asarray(east_nm, dtype=float) / ARCMIN_PER_DEG / np.cos(mid)
    return lat, wrap_180(lon)


# --- the great circle: the geodesic on the ellipsoid ------------------------------------------------
#
# T. Vincenty, "Direct and inverse solutions of geodesics on the ellipsoid with application of nested
# equations", Survey Review 23 (176), 88-93 (1975): the geodesic mapped onto an auxiliary sphere of
# reduced latitudes β (tan β = (1 − f) tan φ), distance s = b A (σ − Δσ) and longitude λ on the sphere
# against L on the ellipsoid, iterated; good to half a millimetre. Clairaut's relation cos β sin α =
# sin α0 holds along the line: its vertex stands where cos β = |sin α0|. The iteration does not settle
# for points nearly opposite each other on the globe (the course there is barely defined): those are
# refused, with the remedy.

B_M = A_M * (1.0 - EARTH_FLATTENING)
_F = EARTH_FLATTENING
#: Vincenty's inverse iterates until λ changes by less than this (radians, about 0.006 mm).
_GEODESIC_TOLERANCE = 1e-12
_GEODESIC_ITERATIONS = 200


class GeodesicError(NavredError):
    """Points for which the great circle is not defined closely enough to steer by."""


def _reduced_latitude(lat_deg):
    return np.arctan((1.0 - _F) * np.tan(np.radians(np.asarray(lat_deg, dtype=float))))


def _series(cos2_alpha):
    """Vincenty's A and B for the geodesic whose equator azimuth α0 has cos²α0 = ``cos2_alpha``."""
    u2 = cos2_alpha * (A_M**2 - B_M**2) / B_M**2
    a = 1 + u2 / 16384 * (4096 + u2 * (-768 + u2 * (320 - 175 * u2)))
    b = u2 / 1024 * (256 + u2 * (-128 + u2 * (74 - 47 * u2)))
    return a, b


def _delta_sigma(b, sin_sigma, cos_sigma, cos_2sm):
    return b * sin_sigma * (cos_2sm + b / 4 * (cos_sigma * (-1 + 2 * cos_2sm**2) - b / 6 * cos_2sm
                                                * (-3 + 4 * sin_sigma**2) * (-3 + 4 * cos_2sm**2)))


def great_circle_inverse(lat1_deg: ArrayLike, lon1_deg: ArrayLike, lat2_deg: ArrayLike,
                         lon2_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Great-circle (geodesic) distance in nautical miles, initial course and final course (degrees true)
    from point 1 to point 2 on WGS 84 (Vincenty 1975). Coincident points give 0 nm and course 0°.

    >>> d, c1, c2 = great_circle_inverse(0.0, 0.0, 0.0, 1.0)  # one degree of the equator, of radius a
    >>> round(float(d), 4), float(c1), float(c2)
    (60.1077, 90.0, 90.0)
    """
    lat1, lon1, lat2, lon2 = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in
                                                   (lat1_deg, lon1_deg, lat2_deg, lon2_deg)))
    u1, u2 = _reduced_latitude(lat1), _reduced_latitude(lat2)
    big_l = np.radians(wrap_180(lon2 - lon1))
    su1, cu1, su2, cu2 = np.sin(u1), np.cos(u1), np.sin(u2), np.cos(u2)
    lam = big_l.copy()
    settled = np.zeros(lam.shape, dtype=bool)
    for _ in range(_GEODESIC_ITERATIONS):
        sin_lam, cos_lam = np.sin(lam), np.cos(lam)
        sin_sigma = np.hypot(cu2 * sin_lam, cu1 * su2 - su1 * cu2 * cos_lam)
        cos_sigma = su1 * su2 + cu1 * cu2 * cos_lam
        sigma = np.arctan2(sin_sigma, cos_sigma)
        with np.errstate(invalid="ignore", divide="ignore"):
            sin_alpha = np.where(sin_sigma > 0, cu1 * cu2 * sin_lam / np.where(sin_sigma > 0, sin_sigma, 1.0), 0.0)
            cos2_alpha = 1 - sin_alpha**2
            # on the equator cos²α = 0 and the term vanishes
            cos_2sm = np.where(cos2_alpha > 1e-15, cos_sigma - 2 * su1 * su2 / np.where(cos2_alpha > 1e-15,
                                                                                         cos2_alpha, 1.0), 0.0)
        c = _F / 16 * cos2_alpha * (4 + _F * (4 - 3 * cos2_alpha))
        new = big_l + (1 - c) * _F * sin_alpha * (sigma + c * sin_sigma * (cos_2sm + c * cos_sigma
                                                                            * (-1 + 2 * cos_2sm**2)))
        change = np.abs(new - lam)
        lam = np.where(settled, lam, new)
        settled |= change < _GEODESIC_TOLERANCE
        if settled.all():
            break
    bad = ~settled | (np.abs(lam) > np.pi)
    if bad.any():
        raise GeodesicError(f"the great circle between {_pairs(bad, lat1, lon1, lat2, lon2)} cannot be "
                            "computed closely: the points are nearly opposite each other on the globe, where "
                            "every course is nearly as short; give a waypoint between them")
    a, b = _series(cos2_alpha)
    distance_m = B_M * a * (sigma - _delta_sigma(b, sin_sigma, cos_sigma, cos_2sm))
    sin_lam, cos_lam = np.sin(lam), np.cos(lam)
    course1 = np.arctan2(cu2 * sin_lam, cu1 * su2 - su1 * cu2 * cos_lam)
    course2 = np.arctan2(cu1 * sin_lam, -su1 * cu2 + cu1 * su2 * cos_lam)
    return distance_m / METRES_PER_NM, wrap_360(np.degrees(course1)), wrap_360(np.degrees(course2))


def _pairs(bad, lat1, lon1, lat2, lon2) -> str:
    k = np.flatnonzero(np.ravel(bad))
    shown = ", ".join(f"({np.ravel(lat1)[i]:.4f}, {np.ravel(lon1)[i]:.4f}) and ({np.ravel(lat2)[i]:.4f}, "
                      f"{np.ravel(lon2)[i]:.4f})" for i in k[:3])
    return shown + (f" and {k.size - 3} more pairs" if k.size > 3 else "")


def great_circle_destination(lat_deg: ArrayLike, lon_deg: ArrayLike, course_deg: ArrayLike,
                             distance_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The point reached along the great circle (geodesic) that leaves (lat, lon) on the initial course,
    after ``distance_nm``; and the course there (degrees true). Vincenty's direct solution (1975).

    >>> lat, lon, course = great_circle_destination(0.0, 0.0, 90.0, 60.107714)
    >>> round(float(lat), 9), round(float(lon), 6), float(course)
    (0.0, 1.0, 90.0)
    """
    lat, lon, course, distance = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in
                                                       (lat_deg, lon_deg, course_deg, distance_nm)))
    alpha1 = np.radians(course)
    s = distance * METRES_PER_NM
    u1 = _reduced_latitude(lat)
    su1, cu1 = np.sin(u1), np.cos(u1)
    sin_a1, cos_a1 = np.sin(alpha1), np.cos(alpha1)
    sigma1 = np.arctan2(np.tan(u1), cos_a1)
    sin_alpha = cu1 * sin_a1
    cos2_alpha = 1 - sin_alpha**2
    a, b = _series(cos2_alpha)
    sigma = s / (B_M * a)
    for _ in range(10):  # the change falls by a factor of about 1/300 each time
        cos_2sm = np.cos(2 * sigma1 + sigma)
        sigma = s / (B_M * a) + _delta_sigma(b, np.sin(sigma), np.cos(sigma), cos_2sm)
    cos_2sm = np.cos(2 * sigma1 + sigma)
    sin_sigma, cos_sigma = np.sin(sigma), np.cos(sigma)
    lat2 = np.arctan2(su1 * cos_sigma + cu1 * sin_sigma * cos_a1,
                      (1 - _F) * np.hypot(sin_alpha, su1 * sin_sigma - cu1 * cos_sigma * cos_a1))
    lam = np.arctan2(sin_sigma * sin_a1, cu1 * cos_sigma - su1 * sin_sigma * cos_a1)
    c = _F / 16 * cos2_alpha * (4 + _F * (4 - 3 * cos2_alpha))
    big_l = lam - (1 - c) * _F * sin_alpha * (sigma + c * sin_sigma * (cos_2sm + c * cos_sigma
                                                                         * (-1 + 2 * cos_2sm**2)))
    course2 = np.arctan2(sin_alpha, -su1 * sin_sigma + cu1 * cos_sigma * cos_a1)
    return np.degrees(lat2), wrap_180(lon + np.degrees(big_l)), wrap_360(np.degrees(course2))


def _distance_to_arc_nm(lat_deg, course_deg, arc_rad):
    """Distance (nm) along the geodesic leaving lat on the course, to where its arc on the auxiliary sphere
    has grown by ``arc_rad`` (s = b A (σ − Δσ), Vincenty's relation, with no iteration)."""
    u1 = _reduced_latitude(lat_deg)
    alpha1 = np.radians(np.asarray(course_deg, dtype=float))
    sigma1 = np.arctan2(np.tan(u1), np.cos(alpha1))
    cos2_alpha = 1 - (np.cos(u1) * np.sin(alpha1)) ** 2
    a, b = _series(cos2_alpha)
    sigma = np.asarray(arc_rad, dtype=float)
    cos_2sm = np.cos(2 * sigma1 + sigma)
    return B_M * a * (sigma - _delta_sigma(b, np.sin(sigma), np.cos(sigma), cos_2sm)) / METRES_PER_NM


def great_circle_vertex(lat_deg: ArrayLike, lon_deg: ArrayLike, course_deg: ArrayLike
                        ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The vertex ahead on the great circle that leaves (lat, lon) on the course: its latitude and longitude
    (degrees) and its distance (nm) from the start. By Clairaut's relation the vertex's reduced latitude
    is ±acos|sin α0|, sin α0 = cos β1 sin α1; it lies a quarter of the auxiliary great circle from the
    node, ahead. A course due north or south has its vertex at the pole; a course along the equator
    has none (NaN)."""
    lat, lon, course = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (lat_deg, lon_deg, course_deg)))
    u1 = _reduced_latitude(lat)
    alpha1 = np.radians(course)
    sigma1 = np.arctan2(np.tan(u1), np.cos(alpha1))  # the arc from the northward node to the start
    ahead = np.mod(np.pi / 2 - sigma1, np.pi)  # the next vertex, north or south
    distance = _distance_to_arc_nm(lat, course, ahead)
    equatorial = (np.abs(lat) < 1e-12) & (np.abs(np.cos(alpha1)) < 1e-12)
    vlat, vlon, _ = great_circle_destination(lat, lon, course, np.where(equatorial, 0.0, distance))
    nan = np.where(equatorial, np.nan, 1.0)
    return vlat * nan, vlon * nan, distance * nan


def composite_great_circle(lat1_deg: float, lon1_deg: float, lat2_deg: float, lon2_deg: float,
                           limit_lat_deg: float) -> dict:
    """The shortest route that keeps equatorward of a limiting latitude (composite sailing).

    When the great circle's vertex between the points lies beyond the limit, the route is the great
    circle from the start that touches the limiting parallel (its vertex on it: by Clairaut's relation
    sin α1 = cos β_limit / cos β1), along the parallel, and the great circle that leaves the parallel
    for the destination (the same construction from the destination). Returns a dict: ``kind``
    ('great circle' when the limit is not reached, else 'composite'), the three parts' distances (nm),
    the initial and final courses, the points where the route meets and leaves the limit, and the
    total distance. Raises when an end lies beyond the limit.
    """
    lat1, lon1, lat2, lon2, limit = (float(v) for v in (lat1_deg, lon1_deg, lat2_deg, lon2_deg, limit_lat_deg))
    if limit == 0.0 or abs(limit) >= 90.0:
        raise NavredError(f"limiting latitude {limit:g}°: give one between the equator and a pole, with N or S")
    side = np.sign(limit)
    if side * lat1 > abs(limit) or side * lat2 > abs(limit):
        raise NavredError(f"the limiting latitude {abs(limit):g}° {'N' if side > 0 else 'S'} lies between an end "
                          "of the route and the pole: an end is beyond it")
    distance, course1, course2 = (float(v) for v in great_circle_inverse(lat1, lon1, lat2, lon2))
    vlat, vlon, vdist = (float(v) for v in great_circle_vertex(lat1, lon1, course1))
    plain = {"kind": "great circle", "distance_nm": distance, "initial_course_deg": course1,
             "final_course_deg": course2, "first_nm": distance, "parallel_nm": 0.0, "last_nm": 0.0,
             "meets": None, "leaves": None}
    if not (vdist < distance and side * vlat > abs(limit)):
        return plain
    east = np.sin(np.radians(course1)) >= 0  # the direction of travel in longitude
    beta_limit = float(_reduced_latitude(abs(limit)))

    def touching(lat, lon, heading_east):
        sin_a = np.cos(beta_limit) / np.cos(float(_reduced_latitude(lat)))
        alpha = np.degrees(np.arcsin(np.clip(sin_a, -1.0, 1.0)))  # toward the limit's pole and the way we go
        course = alpha if side > 0 else 180.0 - alpha
        course = course if heading_east else 360.0 - course
        tlat, tlon, tdist = (float(v) for v in great_circle_vertex(lat, lon, course))
        return float(wrap_360(course)), tlat, tlon, tdist

    first_course, meet_lat, meet_lon, first_nm = touching(lat1, lon1, east)
    back_course, leave_lat, leave_lon, last_nm = touching(lat2, lon2, not east)
    run = wrap_180(leave_lon - meet_lon) * (1.0 if east else -1.0)
    if run < 0:  # the two touching circles pass each other before the parallel: no run along it
        return plain
    parallel_nm = float(np.radians(run) * prime_vertical_radius_m(abs(limit)) * np.cos(np.radians(limit))
                        / METRES_PER_NM)
    _, _, arrive = (float(v) for v in great_circle_destination(lat2, lon2, back_course, last_nm))
    return {"kind": "composite", "distance_nm": first_nm + parallel_nm + last_nm,
            "initial_course_deg": first_course, "final_course_deg": float(wrap_360(back_course + 180.0)),
            "first_nm": first_nm, "parallel_nm": parallel_nm, "last_nm": last_nm,
            "meets": (meet_lat, meet_lon), "leaves": (leave_lat, leave_lon), "great_circle_nm": distance,
            "arrive_check_deg": arrive}


__all__ = ["meridian_arc_m", "latitude_from_meridian_arc_deg", "isometric_latitude", "meridional_parts",
           "prime_vertical_radius_m", "meridian_radius_m", "rhumb_destination", "rhumb_inverse", "rhumb_track_through", "RhumbLegs",
           "longitude_change_rad", "great_circle_inverse", "great_circle_destination", "great_circle_vertex",
           "composite_great_circle", "GeodesicError"]
