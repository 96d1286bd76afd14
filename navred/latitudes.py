"""Latitude by the methods of the trade: the meridian altitude (upper and lower transit), Polaris solved
exactly, the ex-meridian reduction, and the maximum of the noon curve."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180
from .errors import NavredError, failed_elements
from .triangle import computed_altitude_azimuth


def latitude_by_meridian_altitude(ho_deg: ArrayLike, dec_deg: ArrayLike, body_bearing: ArrayLike = "S", lower_transit: ArrayLike = False) -> np.ndarray:
    """Latitude (degrees) from a body's observed altitude on the meridian (the noon sight).

    Upper transit: latitude = Dec + (90° − Ho) when the body bears south of the observer,
    Dec − (90° − Ho) when it bears north. Lower transit (a circumpolar body below the pole):
    latitude = Ho + (90° − |Dec|), toward the same pole as the declination; a body of
    declination 0 has no lower transit above the horizon, and is refused. (Every navigation
    manual; common practice.) Vectorised; ``body_bearing`` is 'N' or 'S'.

    >>> float(latitude_by_meridian_altitude(50.0, 10.0, "S"))
    50.0
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    lower = np.asarray(lower_transit, dtype=bool)
    bearing = np.char.upper(np.char.strip(np.asarray(body_bearing, dtype=str)))
    if not np.all(np.isin(bearing, ["N", "S"])):
        raise NavredError("body_bearing must be 'N' (body north of you) or 'S' (south)")
    no_pole = lower & (np.abs(dec) == 0.0)
    if no_pole.any():
        raise NavredError(f"a lower transit needs a declination north or south of the equator (a body of "
                          f"declination 0 crosses the lower meridian below the horizon): {failed_elements(no_pole)}")
    zenith = 90.0 - ho
    upper = np.where(bearing == "S", dec + zenith, dec - zenith)
    lower_latitude = np.sign(dec) * (ho + 90.0 - np.abs(dec))
    latitude = np.where(lower, lower_latitude, upper)
    bad = np.abs(latitude) > 90.0
    if bad.any():
        raise NavredError(f"no latitude fits Ho and Dec as given (check the bearing N/S): {failed_elements(bad)}")
    return latitude


def latitude_by_polaris(ho_deg: ArrayLike, gha_deg: ArrayLike, dec_deg: ArrayLike, lon_deg: ArrayLike) -> np.ndarray:
    """Latitude (degrees) from the observed altitude of Polaris, solved exactly.

    No table: the latitude at which the computed altitude of Polaris (from its exact GHA and
    Dec at the sight and the DR longitude) equals Ho, by Newton's method on the spherical
    formula (∂Hc/∂φ = cos Zn). The DR longitude matters little: Polaris bears within about
    1.5° of north, so a 30′ error in longitude moves the latitude by at most about 0.8′ cos φ.
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    polar_distance = 90.0 - dec
    lha = np.radians(np.asarray(gha_deg, dtype=float) + np.asarray(lon_deg, dtype=float))
    lat = ho - polar_distance * np.cos(lha)  # the first-order start (the old Q correction)
    for _ in range(8):
        hc, zn = computed_altitude_azimuth(np.clip(lat, -89.9, 89.9), lon_deg, gha_deg, dec_deg)
        slope = np.cos(np.radians(zn))
        lat = lat + (ho - hc) / np.where(np.abs(slope) > 0.2, slope, 1.0)
    hc, _ = computed_altitude_azimuth(np.clip(lat, -89.9, 89.9), lon_deg, gha_deg, dec_deg)
    if np.any(np.abs(hc - ho) > 1e-6):
        raise NavredError("no latitude reproduces the Polaris altitude: check Ho, the time and the body")
    return lat


#: The ex-meridian reduction holds within as many minutes of time from meridian passage as the
#: meridian zenith distance has degrees (common practice; from memory).
def ex_meridian_limit_minutes(zenith_distance_deg: ArrayLike) -> np.ndarray:
    """The longest time (minutes) from meridian passage at which an ex-meridian sight is reduced."""
    return np.abs(np.asarray(zenith_distance_deg, dtype=float))


def ex_meridian_latitude(ho_deg: ArrayLike, dec_deg: ArrayLike, lha_deg: ArrayLike, dr_lat_deg: ArrayLike,
                         body_bearing: ArrayLike = "S") -> np.ndarray:
    """Latitude (degrees) from a sight a few minutes from meridian passage, reduced to the meridian.

    The reduction to the meridian: the altitude rises by a·t² between the sight and meridian
    passage, a = 1.9635″ cos φ cos δ / sin z per minute of time squared, t the minutes of time
    from meridian passage (the LHA, or 360° − LHA, at 15° an hour) and z the meridian zenith
    distance, from the DR latitude φ (the ex-meridian tables of the navigation manuals; from
    memory). Refused beyond its limit (:func:`ex_meridian_limit_minutes`): there the sight is
    reduced as any other line of position.
    """
    ho = np.asarray(ho_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    lat = np.asarray(dr_lat_deg, dtype=float)
    t_minutes = np.abs(wrap_180(np.asarray(lha_deg, dtype=float))) * 4.0
    zenith = np.abs(lat - dec)
    beyond = t_minutes > ex_meridian_limit_minutes(zenith)
    if beyond.any():
        raise NavredError(f"the sight is {float(np.max(t_minutes[beyond])):.1f} minutes from meridian passage, beyond "
                          f"the ex-meridian limit of as many minutes as the zenith distance has degrees "
                          f"({float(np.min(zenith[beyond])):.1f}): {failed_elements(beyond)}; reduce it as a line "
                          "of position")
    factor_arcsec = 1.9635 * np.cos(np.radians(lat)) * np.cos(np.radians(dec)) / np.sin(np.radians(zenith))
    meridian_altitude = ho + factor_arcsec * t_minutes**2 / 3600.0
    return latitude_by_meridian_altitude(meridian_altitude, dec, body_bearing)


#: An ex-meridian latitude is flagged as resting heavily on the DR longitude where 10′ of longitude error (a DR's
#: common uncertainty after a day's run) moves it by 1′ or more (the precision a noon latitude is used to), i.e.
#: 0.1′ of latitude per 1′ of longitude (common practice).
EX_MERIDIAN_SENSITIVE_LAT_PER_LON = 0.1


def ex_meridian_longitude_sensitivity(dec_deg: ArrayLike, lha_deg: ArrayLike, dr_lat_deg: ArrayLike,
                                      body_bearing: ArrayLike = "S") -> np.ndarray:
    """How far the ex-meridian latitude moves per unit of error in the DR longitude (arcminutes of latitude per
    arcminute of longitude, signed: + north for the longitude taken further east), the derivative of
    :func:`ex_meridian_latitude` with respect to the longitude.

    The hour angle comes from the DR longitude (LHA = GHA + λ, east positive), so t, the minutes of time from
    meridian passage, moves by 4 minutes per degree of longitude, and the reduction a·t² by 2·a·t per minute of
    time: d(lat)/dλ = ∓ 8·a·t / 3600 (arcminutes per arcminute; − for a body bearing south, whose latitude falls
    as its meridian altitude rises, times the sign of the hour angle east or west of the meridian). Zero on the
    meridian, largest at the limit and for a small zenith distance; it agrees with the slope of the sight's line
    of position, cos φ · tan Zn (the line's latitude per unit of longitude along it).
    """
    dec = np.asarray(dec_deg, dtype=float)
    lat = np.asarray(dr_lat_deg, dtype=float)
    hour_angle = wrap_180(np.asarray(lha_deg, dtype=float))
    t_minutes = np.abs(hour_angle) * 4.0
    zenith = np.abs(lat - dec)
    factor_arcsec = 1.9635 * np.cos(np.radians(lat)) * np.cos(np.radians(dec)) / np.sin(np.radians(zenith))
    # latitude by meridian altitude: φ = δ + (90° − H) for a body bearing south, δ − (90° − H) for one north
    bearing = np.char.upper(np.char.strip(np.asarray(body_bearing, dtype=str)))
    if not np.all(np.isin(bearing, ["N", "S"])):
        raise NavredError("body_bearing must be 'N' (body north of you) or 'S' (south)")
    toward = np.where(bearing == "N", 1.0, -1.0)
    return toward * np.sign(hour_angle) * 8.0 * factor_arcsec * t_minutes / 3600.0


def latitude_from_noon_curve(hours: ArrayLike, ho_deg: ArrayLike, dec_deg: float, body_bearing: str = "S",
                             ) -> float | None:
    """Latitude from a series of sights around meridian passage: the maximum of the noon curve.

    A parabola Ho = a + b·t + c·t² fitted by least squares to the series gives the maximum
    altitude (not the highest single sight); the latitude follows as for a meridian altitude
    (the noon curve of the navigation manuals, common practice). The ship's motion moves the
    maximum off meridian passage by a second-order amount. Returns None when the series does
    not bend (c ≥ 0), or its maximum lies outside the series' span.
    """
    t = np.asarray(hours, dtype=float)
    h = np.asarray(ho_deg, dtype=float)
    if t.size < 3 or np.ptp(t) <= 0:
        return None
    centre = t.mean()
    c, b, a = np.polyfit(t - centre, h, 2)
    if c >= 0:
        return None
    peak = -b / (2 * c)
    if not (t.min() - centre) <= peak <= (t.max() - centre):
        return None
    return float(latitude_by_meridian_altitude(a + b * peak + c * peak**2, dec_deg, body_bearing))


__all__ = ["latitude_by_meridian_altitude", "latitude_by_polaris", "ex_meridian_limit_minutes",
           "ex_meridian_latitude", "ex_meridian_longitude_sensitivity", "EX_MERIDIAN_SENSITIVE_LAT_PER_LON",
           "latitude_from_noon_curve"]
