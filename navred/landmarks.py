"""Lines of position from charted objects at landfall: a visual bearing or a radar range of a mark whose position
is on the chart, as a line the celestial fix can take beside its sights.

The fix (:mod:`navred.leastsquares`) works on the sphere of the celestial fix, one arcminute of great circle a
nautical mile, with the geodetic latitude and longitude as its coordinates (the zenith of a sight is the plumb
line). A mark's line is put on that same sphere as a circle of equal altitude of a body of its own, so the one
solver takes it with no change:

- a **range** r of a mark is a circle about the mark: a body over the mark at zenith distance r. The range,
  measured on the ellipsoid, is turned into the sphere's arc through the local radii of curvature, the
  meridian's M and the prime vertical's N (an arc of length d on the ellipsoid at azimuth α spans
  d·√(cos²α/M² + sin²α/N²) radians of the coordinates; any geodesy text, e.g. B. Hofmann-Wellenhof et al.,
  Navigation, 2003; from memory);
- a **bearing** B of a mark (true, from the ship) is the great circle through the mark along which the mark
  bears B near the ship: a body at its pole, 90° away, whose altitude is 0 on the line. The bearing, an azimuth
  on the ellipsoid, is turned into the sphere's azimuth the same way (tan B_sphere = tan B · M/N). Over the
  miles of a landfall bearing the great circle and the line of constant bearing part by less than 0.02 nm.

Each line carries its own standard error in nautical miles (arcminutes): a range's as given, a bearing's the
distance from the mark times the bearing's σ in radians. Core code: arrays in, arrays out.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, EARTH_EQUATORIAL_RADIUS_KM, EARTH_FLATTENING, METRES_PER_NM
from .triangle import destination, distance_bearing

#: The σ of a visual bearing taken with a bearing compass or a pelorus, degrees, where none is given
#: (common practice: a good bearing is good to a degree).
BEARING_SIGMA_DEG = 1.0
#: The σ of a radar range where none is given: this share of the range, and at least RANGE_SIGMA_MIN_NM
#: (the radar performance standard asks for 1 % of the range scale or 30 m; from memory).
RANGE_SIGMA_FRACTION = 0.01
RANGE_SIGMA_MIN_NM = 0.02
#: The quarter circle (nautical miles of the sphere) from a great circle to its pole.
_QUARTER_NM = 90.0 * ARCMIN_PER_DEG


def _radii_m(lat_deg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The WGS 84 meridian (M) and prime-vertical (N) radii of curvature at the latitudes, metres."""
    a = EARTH_EQUATORIAL_RADIUS_KM * 1000.0
    e2 = EARTH_FLATTENING * (2.0 - EARTH_FLATTENING)
    s2 = np.sin(np.radians(lat_deg)) ** 2
    w = np.sqrt(1.0 - e2 * s2)
    return a * (1.0 - e2) / w**3, a / w


def sphere_azimuth_deg(azimuth_deg: ArrayLike, lat_deg: ArrayLike) -> np.ndarray:
    """An azimuth on the ellipsoid as the azimuth on the fix's sphere (tan B_sphere = tan B · M/N)."""
    m, n = _radii_m(np.asarray(lat_deg, dtype=float))
    b = np.radians(np.asarray(azimuth_deg, dtype=float))
    return wrap_360(np.degrees(np.arctan2(np.sin(b) / n, np.cos(b) / m)))


def sphere_arc_nm(distance_nm: ArrayLike, azimuth_deg: ArrayLike, lat_deg: ArrayLike) -> np.ndarray:
    """A short distance on the ellipsoid (nautical miles) at an azimuth as the arc of the fix's sphere
    (arcminutes, the sphere's nautical miles)."""
    m, n = _radii_m(np.asarray(lat_deg, dtype=float))
    b = np.radians(np.asarray(azimuth_deg, dtype=float))
    radians = np.asarray(distance_nm, dtype=float) * METRES_PER_NM * np.sqrt(np.cos(b) ** 2 / m**2
                                                                              + np.sin(b) ** 2 / n**2)
    return np.degrees(radians) * ARCMIN_PER_DEG


def range_body(mark_lat_deg: ArrayLike, mark_lon_deg: ArrayLike, range_nm: ArrayLike, near_lat_deg: ArrayLike,
               near_lon_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The body whose circle of equal altitude is a range's circle about its mark: (GHA, Dec, Ho) in degrees.
    ``near_*``: a position near the ship (the DR), for the azimuth at which the range is turned onto the sphere."""
    lat, lon = np.asarray(mark_lat_deg, dtype=float), np.asarray(mark_lon_deg, dtype=float)
    _, toward_ship = distance_bearing(lat, lon, near_lat_deg, near_lon_deg)
    arc = sphere_arc_nm(range_nm, toward_ship, lat)
    return wrap_360(-lon), lat, 90.0 - arc / ARCMIN_PER_DEG


def bearing_body(mark_lat_deg: ArrayLike, mark_lon_deg: ArrayLike, bearing_deg: ArrayLike, near_lat_deg: ArrayLike,
                 near_lon_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The body whose circle of equal altitude is a bearing's line: the pole of the great circle through the
    mark along which the mark bears ``bearing_deg`` (true, from the ship) at the ship's distance from it (taken
    from ``near_*``, the DR); (GHA, Dec, Ho = 0) in degrees."""
    lat, lon = np.asarray(mark_lat_deg, dtype=float), np.asarray(mark_lon_deg, dtype=float)
    wanted = sphere_azimuth_deg(bearing_deg, lat)
    distance, azimuth = distance_bearing(lat, lon, near_lat_deg, near_lon_deg)
    distance = np.maximum(distance, 0.1)
    azimuth = wrap_360(wanted + 180.0)  # leaving the mark, the way back to the ship
    for _ in range(4):  # the great circle's azimuth at the mark, so that at the ship's distance the mark bears B
        at_lat, at_lon = destination(lat, lon, azimuth, distance)
        _, seen = distance_bearing(at_lat, at_lon, lat, lon)
        azimuth = wrap_360(azimuth + wrap_180(wanted - seen))
    pole_lat, pole_lon = destination(lat, lon, wrap_360(azimuth + 90.0), _QUARTER_NM)
    return wrap_360(-np.asarray(pole_lon)), np.asarray(pole_lat), np.zeros(np.shape(pole_lat))


def line_sigma_nm(kind: ArrayLike, sigma: ArrayLike, measured: ArrayLike, distance_nm: ArrayLike) -> np.ndarray:
    """Each line's standard error across it (nautical miles): a bearing's (``kind`` 'bearing', ``sigma`` in
    degrees, default BEARING_SIGMA_DEG) is the distance from the mark times the σ in radians; a range's
    (``sigma`` in nautical miles) as given, by default RANGE_SIGMA_FRACTION of the range ``measured`` and at
    least RANGE_SIGMA_MIN_NM. NaN for any other kind."""
    kind = np.asarray(kind, dtype=object)
    sigma = np.asarray(sigma, dtype=float)
    measured = np.asarray(measured, dtype=float)
    bearing = kind == "bearing"
    ranged = kind == "range"
    bearing_sigma = np.where(np.isfinite(sigma), sigma, BEARING_SIGMA_DEG)
    range_sigma = np.where(np.isfinite(sigma), sigma, np.maximum(RANGE_SIGMA_FRACTION * np.abs(measured),
                                                                  RANGE_SIGMA_MIN_NM))
    across = np.asarray(distance_nm, dtype=float) * np.radians(bearing_sigma)
    return np.where(bearing, np.maximum(across, 0.001), np.where(ranged, range_sigma, np.nan))


__all__ = ["BEARING_SIGMA_DEG", "RANGE_SIGMA_FRACTION", "RANGE_SIGMA_MIN_NM", "bearing_body", "range_body",
           "line_sigma_nm", "sphere_azimuth_deg", "sphere_arc_nm"]
