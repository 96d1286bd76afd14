"""The navigational triangle: Hc, Zn and the intercept (Marcq St Hilaire).

    LHA = GHA + longitude (east positive)
    sin Hc = sin φ sin δ + cos φ cos δ cos LHA
    Zn = atan2(−cos δ sin LHA, cos φ sin δ − sin φ cos δ cos LHA), measured clockwise from true north
    intercept = 60·(Ho − Hc) nautical miles, positive TOWARD the body

(the cosine formula and the azimuth as in every navigation manual; atan2 makes Zn right in
every quadrant). Every function takes scalars or numpy arrays and broadcasts.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG
from .errors import AngleInputError, failed_elements

HIGH_ALTITUDE_DEG = 85.0  # above: the straight line of position is a poor approximation (common practice)


def _check_finite(**values) -> None:
    for name, value in values.items():
        bad = ~np.isfinite(np.asarray(value, dtype=float))
        if bad.any():
            raise AngleInputError(f"{name} must be finite; refused: {failed_elements(bad)}")


def computed_altitude_azimuth(lat_deg: ArrayLike, lon_deg: ArrayLike, gha_deg: ArrayLike, dec_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Computed altitude Hc and true azimuth Zn (degrees) of a body from a position.

    ``lat_deg`` north positive, ``lon_deg`` east positive; GHA and Dec of the body.

    >>> hc, zn = computed_altitude_azimuth(40.0, 0.0, 0.0, 10.0)
    >>> round(float(hc), 6), round(float(zn), 6)
    (60.0, 180.0)
    """
    lat = np.asarray(lat_deg, dtype=float)
    if np.any(np.abs(lat) > 90.0):
        raise AngleInputError(f"latitude must lie in -90 to 90°; refused: {failed_elements(np.abs(lat) > 90)}")
    dec = np.asarray(dec_deg, dtype=float)
    if np.any(np.abs(dec) > 90.0):
        # a declination past a pole is not one (a sign or a unit slip): never fold it back into range
        raise AngleInputError(f"declination must lie in -90 to 90°; refused: {failed_elements(np.abs(dec) > 90)}")
    lon = np.asarray(lon_deg, dtype=float)
    gha = np.asarray(gha_deg, dtype=float)
    same = lat.shape == lon.shape == gha.shape == dec.shape
    shape = lat.shape if same else np.broadcast_shapes(lat.shape, lon.shape, gha.shape, dec.shape)
    size = math.prod(shape)
    if size <= TRIANGLE_BLOCK:  # (arrays of one shape need no broadcasting: a small call's cost was most of it)
        hc, zn = _triangle(*(v.ravel() if same else np.broadcast_to(v, shape).ravel() for v in (lat, lon, gha, dec)))
        hc, zn = (hc.reshape(shape), zn.reshape(shape)) if shape else (hc[0], zn[0])
    else:
        # in blocks that stay in the processor's cache: each array is passed over once a block; a long
        # run of blocks shared among threads (numpy's functions release the interpreter's lock)
        flat = [np.broadcast_to(v, shape).ravel() for v in (lat, lon, gha, dec)]
        hc, zn = np.empty(size), np.empty(size)

        def work(start: int) -> None:
            part = slice(start, start + TRIANGLE_BLOCK)
            hc[part], zn[part] = _triangle(*(v[part] for v in flat))

        starts = range(0, size, TRIANGLE_BLOCK)
        threads = threads_for(len(starts))
        if threads > 1:
            from concurrent.futures import ThreadPoolExecutor

            with ThreadPoolExecutor(max_workers=threads) as pool:  # made for the call: nothing kept across a fork
                list(pool.map(work, starts))
        else:
            for start in starts:
                work(start)
        hc, zn = hc.reshape(shape), zn.reshape(shape)
    if not np.isfinite(hc).all():
        # NaN and infinity propagate through the trigonometry: find which input was at fault
        _check_finite(latitude=lat_deg, longitude=lon_deg, GHA=gha_deg, declination=dec_deg)
    return hc, zn


#: Sights worked together by :func:`computed_altitude_azimuth` (a block's arrays fit the cache).
TRIANGLE_BLOCK = 32768
#: From this many blocks, the blocks are shared among threads (one per core this process may use, at most
#: TRIANGLE_THREADS); the result is the same whoever works a block.
THREADS_FROM_BLOCKS = 8
TRIANGLE_THREADS = 4


def threads_for(blocks: int) -> int:
    """How many threads work ``blocks`` blocks of the triangle: one below THREADS_FROM_BLOCKS, else one per
    core this process may use, at most TRIANGLE_THREADS."""
    import os

    if blocks < THREADS_FROM_BLOCKS:
        return 1
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)
    return max(1, min(cores, TRIANGLE_THREADS, blocks))


_D2R = np.pi / 180.0
_R2D = 180.0 / np.pi
#: Below this sine of the altitude (about 64°) Hc is the arcsine; above, the arctangent of the vertical
#: over the horizontal component, which keeps Hc exact to the zenith (both agree to 1e-15 there).
_ARCSIN_LIMIT = 0.9


def _triangle(lat, lon, gha, dec):
    """Hc and Zn (degrees) of one block (1-D arrays of one length), worked in place where it can be."""
    # |φ| and |δ| are at most 90°, so their cosines are the non-negative square roots (one
    # sine each instead of a sine and a cosine: the trigonometric calls dominate the cost)
    sin_phi = np.sin(np.multiply(lat, _D2R))
    sin_dec = np.sin(np.multiply(dec, _D2R))
    cos_phi = _cos_from_sin(sin_phi)
    cos_dec = _cos_from_sin(sin_dec)
    lha = np.add(gha, lon)
    lha *= _D2R
    across = np.cos(lha)
    across *= cos_dec  # cos δ cos LHA
    east = np.sin(lha, out=lha)
    east *= cos_dec
    np.negative(east, out=east)  # −cos δ sin LHA
    north = np.multiply(cos_phi, sin_dec)
    up = np.multiply(sin_phi, across)
    north -= up  # cos φ sin δ − sin φ cos δ cos LHA
    np.multiply(sin_phi, sin_dec, out=up)
    cos_phi *= across
    up += cos_phi  # sin φ sin δ + cos φ cos δ cos LHA
    hc = np.clip(up, -1.0, 1.0, out=cos_phi)
    np.arcsin(hc, out=hc)
    high = np.abs(up) > _ARCSIN_LIMIT
    if high.any():
        hc[high] = np.arctan2(up[high], np.hypot(north[high], east[high]))
    hc *= _R2D
    zn = np.arctan2(east, north, out=sin_dec)
    zn *= _R2D
    zn[zn < 0.0] += 360.0
    zn[zn >= 360.0] = 0.0
    return hc, zn


def _cos_from_sin(sine):
    """√(1 − sin²), never below zero."""
    cosine = np.multiply(sine, sine)
    np.subtract(1.0, cosine, out=cosine)
    np.maximum(cosine, 0.0, out=cosine)
    return np.sqrt(cosine, out=cosine)


def intercept_nm(ho_deg: ArrayLike, hc_deg: ArrayLike) -> np.ndarray:
    """Intercept in nautical miles, 60·(Ho − Hc): positive TOWARD the body, negative AWAY.

    >>> float(intercept_nm(30.5, 30.0))
    30.0
    """
    return (np.asarray(ho_deg, dtype=float) - np.asarray(hc_deg, dtype=float)) * ARCMIN_PER_DEG


def intercept_direction(intercept_nm_: ArrayLike) -> str | np.ndarray:
    """``'TOWARD'`` for a positive (or zero) intercept, ``'AWAY'`` for a negative one; '' for NaN."""
    value = np.asarray(intercept_nm_, dtype=float)
    # (one text object per word, shared by the rows: np.where between texts makes an object per row)
    out = np.array(["AWAY", "TOWARD", ""], dtype=object)[np.where(np.isfinite(value), value >= 0, 2).astype(np.intp)]
    return out  # (a text for one intercept, an array for several)


def destination(lat_deg: ArrayLike, lon_deg: ArrayLike, bearing_deg: ArrayLike, distance_nm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Position reached from (lat, lon) along a great circle at initial true bearing, distance in nm.

    The sphere of radius one nautical mile per arcminute (common practice).

    >>> lat, lon = destination(0.0, 0.0, 90.0, 60.0)
    >>> round(float(lat), 9), round(float(lon), 9)
    (0.0, 1.0)
    """
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    lam = np.radians(np.asarray(lon_deg, dtype=float))
    theta = np.radians(np.asarray(bearing_deg, dtype=float))
    delta = np.radians(np.asarray(distance_nm, dtype=float) / ARCMIN_PER_DEG)
    sin_phi2 = np.sin(phi) * np.cos(delta) + np.cos(phi) * np.sin(delta) * np.cos(theta)
    phi2 = np.arcsin(np.clip(sin_phi2, -1.0, 1.0))
    lam2 = lam + np.arctan2(np.sin(theta) * np.sin(delta) * np.cos(phi),
                            np.cos(delta) - np.sin(phi) * sin_phi2)
    return np.degrees(phi2), wrap_180(np.degrees(lam2))


def distance_bearing(lat1_deg: ArrayLike, lon1_deg: ArrayLike, lat2_deg: ArrayLike, lon2_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Great-circle distance (nautical miles) and initial true bearing (degrees) from point 1 to point 2.

    >>> d, b = distance_bearing(0.0, 0.0, 1.0, 0.0)
    >>> round(float(d), 6), round(float(b), 6)
    (60.0, 0.0)
    """
    p1, p2 = np.radians(lat1_deg), np.radians(lat2_deg)
    dl = np.radians(np.asarray(lon2_deg, dtype=float) - np.asarray(lon1_deg, dtype=float))
    a = np.sin((p2 - p1) / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    distance = 2 * np.degrees(np.arcsin(np.sqrt(np.clip(a, 0.0, 1.0)))) * ARCMIN_PER_DEG
    bearing = np.degrees(np.arctan2(np.sin(dl) * np.cos(p2),
                                    np.cos(p1) * np.sin(p2) - np.sin(p1) * np.cos(p2) * np.cos(dl)))
    return distance, wrap_360(bearing)


def line_of_position(lat_deg: ArrayLike, lon_deg: ArrayLike, intercept_nm_: ArrayLike, zn_deg: ArrayLike, half_length_nm: ArrayLike = 10.0) -> dict[str, np.ndarray]:
    """The line of position: its foot (the intercept point) and two end points.

    The foot lies ``intercept`` nautical miles from the assumed position along Zn (back
    along Zn when AWAY); the line runs through it perpendicular to Zn. Returns a dict of
    arrays: ``foot_lat_deg``, ``foot_lon_deg``, ``end1_lat_deg``, ``end1_lon_deg``,
    ``end2_lat_deg``, ``end2_lon_deg``, ``bearing_deg`` (of the line, Zn + 90°).
    """
    foot_lat, foot_lon = destination(lat_deg, lon_deg, zn_deg, intercept_nm_)
    along = wrap_360(np.asarray(zn_deg, dtype=float) + 90.0)
    end1 = destination(foot_lat, foot_lon, along, half_length_nm)
    end2 = destination(foot_lat, foot_lon, along + 180.0, half_length_nm)
    return {"foot_lat_deg": foot_lat, "foot_lon_deg": foot_lon,
            "end1_lat_deg": end1[0], "end1_lon_deg": end1[1],
            "end2_lat_deg": end2[0], "end2_lon_deg": end2[1], "bearing_deg": along}


def assumed_position(lat_deg: ArrayLike, lon_deg: ArrayLike, gha_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The hand method's assumed position: whole-degree latitude, and the longitude within
    30′ of the DR that makes LHA a whole number of degrees.

    Returns (ap_lat_deg, ap_lon_deg, lha_deg). Optional: navred reduces from the DR by default,
    which is more accurate.

    >>> [float(x) for x in assumed_position(47.6, -5.3, 100.25)]
    [48.0, -5.25, 95.0]
    """
    lat = np.round(np.asarray(lat_deg, dtype=float))
    gha = np.asarray(gha_deg, dtype=float)
    lha_exact = gha + np.asarray(lon_deg, dtype=float)
    lha_whole = np.round(lha_exact)
    ap_lon = wrap_180(lha_whole - gha)
    return lat, ap_lon, wrap_360(lha_whole)
