"""Sextant altitude (Hs) to observed altitude (Ho): one function per correction, and the chain.

    Ha = Hs + IC − dip                         apparent altitude
    Ho = Ha − R ± SD + PA                      observed (geocentric) altitude

IC, the index correction, is minus the index error; dip is that of the sea horizon
(none for an artificial horizon); R is refraction at Ha; SD is the semi-diameter of the
Sun or Moon (lower limb +, upper limb −; the Moon's augmented for its nearness to the
observer); PA is parallax in altitude, computed rigorously for the observer's place on the
WGS 84 ellipsoid (so it includes the Earth's oblateness, which matters for the Moon).
Every function takes scalars or numpy arrays and broadcasts.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .constants import (
    ARCMIN_PER_DEG,
    DEFAULT_PRESSURE_HPA,
    DEFAULT_TEMPERATURE_C,
    EARTH_FLATTENING,
)
from .errors import SightInputError, failed_elements

#: Dip coefficients: dip′ = 1.76 √(h metres) = 0.97 √(h feet); the coefficients printed with
#: the nautical almanac's dip table (from memory). They include terrestrial refraction.
DIP_ARCMIN_PER_SQRT_M = 1.76
DIP_ARCMIN_PER_SQRT_FT = 0.97

LOW_ALTITUDE_DEG = 5.0  # below: refraction is uncertain; the sight is flagged (common practice)
LOWEST_ALTITUDE_DEG = -1.0  # below: no refraction model applies; refused

_INDEX = re.compile(r"^\s*([+-]?\d+(?:\.\d+)?)\s*[′']?\s*(on|off)?\s*(?:the\s+arc)?\s*$", re.IGNORECASE)


def parse_index_error_arcmin(value: object) -> float | np.ndarray:
    """Index error in arcminutes, positive ON the arc, from a number or ``'2.1 on'`` / ``'1.5 off'``.

    >>> parse_index_error_arcmin("2.1 on"), parse_index_error_arcmin("1.5 off"), parse_index_error_arcmin(-0.4)
    (2.1, -1.5, -0.4)
    """
    if np.ndim(value) and not isinstance(value, str):
        numeric = np.asarray(value)
        if numeric.dtype.kind in "fiu":
            numbers = numeric.astype(float)
            bad = ~np.isfinite(numbers) | (np.abs(numbers) > 30.0)
            if bad.any():
                raise SightInputError(f"index error outside ±30′ in {failed_elements(bad)}; a sextant "
                                      "with more should be adjusted")
            return numbers
        items = np.asarray(value, dtype=object)
        out = np.empty(items.shape)
        bad = np.zeros(items.shape, dtype=bool)
        for index, item in np.ndenumerate(items):
            try:
                out[index] = parse_index_error_arcmin(item)
            except SightInputError:
                bad[index] = True
        if bad.any():
            raise SightInputError(f"index error unreadable in {failed_elements(bad)}; accepted: "
                                  "arcminutes on the arc positive (2.1, -1.5) or '2.1 on' / '1.5 off'")
        return out
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        number = float(value)
    else:
        match = _INDEX.match(str(value))
        if not match:
            raise SightInputError(f"cannot read index error {value!r}; accepted: arcminutes on the arc "
                                  "positive (2.1, -1.5) or '2.1 on' / '1.5 off'")
        number = float(match.group(1))
        if match.group(2):
            if number < 0:
                raise SightInputError(f"index error {value!r}: give a sign or on/off, not both")
            number = number if match.group(2).lower() == "on" else -number
    if not np.isfinite(number) or abs(number) > 30.0:
        raise SightInputError(f"index error {value!r} is outside ±30′; a sextant with more should be adjusted")
    return number


def index_correction_arcmin(index_error_arcmin: ArrayLike) -> np.ndarray:
    """Index correction IC = −(index error), arcminutes (error ON the arc reads high).

    >>> float(index_correction_arcmin(2.1))
    -2.1
    """
    return -np.asarray(index_error_arcmin, dtype=float)


def dip_arcmin(eye_height_m: ArrayLike, horizon: ArrayLike = "sea") -> np.ndarray:
    """Dip of the sea horizon in arcminutes, 1.76′ √(height of eye in metres); 0 for an artificial horizon.

    ``horizon`` is ``'sea'`` or ``'artificial'`` (bubble or mercury), scalar or array.

    >>> round(float(dip_arcmin(10.0)), 2)
    5.57
    >>> float(dip_arcmin(10.0, "artificial"))
    0.0
    """
    height = np.asarray(eye_height_m, dtype=float)
    bad = ~np.isfinite(height) | (height < 0) | (height > 1000)
    if bad.any():
        raise SightInputError(f"height of eye must be 0-1000 m; refused: {failed_elements(bad)}")
    artificial = horizon_is_artificial(horizon)
    return np.where(artificial, 0.0, DIP_ARCMIN_PER_SQRT_M * np.sqrt(height))


def dip_arcmin_from_feet(eye_height_ft: ArrayLike) -> np.ndarray:
    """Dip in arcminutes from height of eye in feet, 0.97′ √h.

    >>> round(float(dip_arcmin_from_feet(36.0)), 2)
    5.82
    """
    return DIP_ARCMIN_PER_SQRT_FT * np.sqrt(np.asarray(eye_height_ft, dtype=float))


def horizon_is_artificial(horizon: ArrayLike) -> np.ndarray:
    """True where ``horizon`` names an artificial (bubble, mercury) horizon, False for the sea.

    Raises for anything else.
    """
    values = np.char.lower(np.char.strip(np.asarray(horizon, dtype=str)))
    artificial = np.isin(values, ["artificial", "bubble", "mercury", "art"])
    sea = np.isin(values, ["sea", "natural", "", "nan", "none"])
    if np.any(~(artificial | sea)):
        raise SightInputError(
            f"horizon must be 'sea' or 'artificial'; refused: {failed_elements(~(artificial | sea))}")
    return artificial


def apparent_altitude_deg(hs_deg: ArrayLike, ic_arcmin: ArrayLike, dip_arcmin_: ArrayLike) -> np.ndarray:
    """Apparent altitude Ha = Hs + IC − dip, degrees."""
    return np.asarray(hs_deg, dtype=float) + (np.asarray(ic_arcmin) - np.asarray(dip_arcmin_)) / ARCMIN_PER_DEG


def refraction_arcmin(ha_deg: ArrayLike, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C, pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA) -> np.ndarray:
    """Refraction in arcminutes at apparent altitude Ha (degrees), Bennett's formula.

    R = cot(Ha + 7.31 / (Ha + 4.4)) arcminutes at 10 °C and 1010 hPa (G. G. Bennett,
    "The calculation of astronomical refraction in marine navigation", Journal of
    Navigation 35, 1982; citation from memory), scaled by (P / 1010)·(283 / (273 + T)),
    the density ratio on which the almanac's additional refraction table rests (common
    practice). Good to about 0.1′ at sea level above 5°. Ha must lie in -1° to 90°.

    >>> round(float(refraction_arcmin(0.0)), 1), round(float(refraction_arcmin(10.0)), 2)
    (34.5, 5.39)
    """
    ha = np.asarray(ha_deg, dtype=float)
    bad = ~np.isfinite(ha) | (ha < LOWEST_ALTITUDE_DEG) | (ha > 90.0)
    if bad.any():
        raise SightInputError(f"apparent altitude must lie in -1° to 90° for refraction; "
                              f"refused: {failed_elements(bad)}")
    return bennett_refraction_arcmin(ha, temperature_c, pressure_hpa)


def bennett_refraction_arcmin(ha: ArrayLike, temperature_c: ArrayLike, pressure_hpa: ArrayLike) -> np.ndarray:
    """Bennett's refraction (arcminutes) at apparent altitude ``ha`` with no range check (see refraction_arcmin)."""
    temperature = np.asarray(temperature_c, dtype=float)
    pressure = np.asarray(pressure_hpa, dtype=float)
    # Bennett's cotangent dips 0.08″ below zero at the zenith: hold it at zero there
    standard = np.maximum(1.0 / np.tan(np.radians(ha + 7.31 / (ha + 4.4))), 0.0)
    return standard * (pressure / 1010.0) * (283.0 / (273.0 + temperature))


def check_weather(temperature_c: ArrayLike, pressure_hpa: ArrayLike) -> None:
    """Raise for temperatures outside -50 to +60 °C or pressures outside 850-1100 hPa."""
    t = np.asarray(temperature_c, dtype=float)
    p = np.asarray(pressure_hpa, dtype=float)
    bad_t = ~np.isfinite(t) | (t < -50) | (t > 60)
    bad_p = ~np.isfinite(p) | (p < 850) | (p > 1100)
    if bad_t.any():
        raise SightInputError(f"temperature must be -50 to +60 °C; refused: {failed_elements(bad_t)}")
    if bad_p.any():
        raise SightInputError(f"pressure must be 850-1100 hPa; refused: {failed_elements(bad_p)}")


_LIMBS = {"lower": 1.0, "ll": 1.0, "l": 1.0, "upper": -1.0, "ul": -1.0, "u": -1.0,
          "centre": 0.0, "center": 0.0, "c": 0.0, "": 0.0, "nan": 0.0, "none": 0.0}


def limb_sign(limb: ArrayLike) -> np.ndarray:
    """+1 for a lower limb, −1 for an upper limb, 0 for the centre (``LL``/``UL`` accepted)."""
    values = np.char.lower(np.char.strip(np.asarray(limb, dtype=str)))
    known = np.isin(values, list(_LIMBS))
    if not known.all():
        raise SightInputError(f"limb must be lower, upper or centre (LL/UL accepted); "
                              f"refused: {failed_elements(~known)}")
    return np.vectorize(_LIMBS.get, otypes=[float])(values) if values.ndim else np.array(_LIMBS[str(values)])


def semi_diameter_correction_arcmin(sd_arcmin: ArrayLike, limb: ArrayLike, augmentation: ArrayLike = 1.0) -> np.ndarray:
    """Semi-diameter correction in arcminutes: +SD for the lower limb, −SD for the upper, 0 for the centre.

    ``augmentation`` multiplies the geocentric SD (the Moon's, see :func:`moon_augmentation`).
    """
    return limb_sign(limb) * np.asarray(sd_arcmin, dtype=float) * augmentation


def observer_geometry(lat_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Geocentric radius (Earth radii) and geodetic minus geocentric latitude (radians), WGS 84."""
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    e2 = EARTH_FLATTENING * (2.0 - EARTH_FLATTENING)
    n = 1.0 / np.sqrt(1.0 - e2 * np.sin(phi) ** 2)
    x = n * np.cos(phi)
    z = n * (1.0 - e2) * np.sin(phi)
    return np.hypot(x, z), phi - np.arctan2(z, x)


def topocentric_distance_ratio(altitude_deg: ArrayLike, hp_arcmin: ArrayLike, lat_deg: ArrayLike = 0.0, zn_deg: ArrayLike = 0.0) -> np.ndarray:
    """Topocentric over geocentric distance of a body seen at topocentric altitude and azimuth.

    Exact on the WGS 84 ellipsoid (observer at sea level), from the triangle of observer,
    geocentre and body.
    """
    lat, altitude, zn, hp = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in
                                                  (lat_deg, altitude_deg, zn_deg, hp_arcmin)))
    rho, tilt = observer_geometry(lat)
    h = np.radians(altitude)
    z = np.radians(zn)
    sin_hp = np.sin(np.radians(hp / ARCMIN_PER_DEG))
    with np.errstate(divide="ignore"):
        d = np.where(sin_hp > 0, 1.0 / np.where(sin_hp > 0, sin_hp, 1.0), np.inf)
    # unit topocentric direction (E, N, U) and the observer's radius vector in the same frame
    u = np.stack([np.cos(h) * np.sin(z), np.cos(h) * np.cos(z), np.sin(h)])
    r = rho * np.stack([np.zeros_like(tilt), -np.sin(tilt), np.cos(tilt)])
    ur = np.sum(u * r, axis=0)
    with np.errstate(invalid="ignore"):
        ratio = (-ur + np.sqrt(ur**2 - rho**2 + d**2)) / d
    return np.where(np.isfinite(d), ratio, 1.0)


def parallax_in_altitude_arcmin(altitude_deg: ArrayLike, hp_arcmin: ArrayLike, lat_deg: ArrayLike = 0.0, zn_deg: ArrayLike = 0.0) -> np.ndarray:
    """Parallax in altitude (arcminutes) of a body at topocentric altitude and azimuth.

    Rigorous for an observer on the WGS 84 ellipsoid: the geocentric direction is the
    topocentric one plus the observer's radius vector, whose tilt from the vertical (the
    geodetic minus geocentric latitude, up to 11.5′) gives the oblateness term. To first
    order PA = HP·ρ·(cos h + (φ − φ′) sin h cos Zn); with ``lat_deg=0`` it is the spherical
    sin PA = sin HP cos h. ``hp_arcmin = 0`` (stars) gives 0.

    >>> round(float(parallax_in_altitude_arcmin(0.0, 60.0)), 3)
    60.0
    """
    rho, tilt = observer_geometry(lat_deg)
    h = np.radians(np.asarray(altitude_deg, dtype=float))
    sin_hp = np.sin(np.radians(np.asarray(hp_arcmin, dtype=float) / ARCMIN_PER_DEG))
    ratio = topocentric_distance_ratio(altitude_deg, hp_arcmin, lat_deg, zn_deg)
    # geocentric vector = D u + r, in units of the geocentric distance d (so r is scaled by sin HP)
    up = ratio * np.sin(h) + rho * sin_hp * np.cos(tilt)
    geocentric_altitude = np.arcsin(np.clip(up, -1.0, 1.0))
    return np.degrees(geocentric_altitude - h) * ARCMIN_PER_DEG


def moon_augmentation(altitude_deg: ArrayLike, hp_arcmin: ArrayLike, lat_deg: ArrayLike = 0.0, zn_deg: ArrayLike = 0.0) -> np.ndarray:
    """Factor by which a body's semi-diameter grows as seen from the observer (≈ 1 + sin HP sin h)."""
    return 1.0 / topocentric_distance_ratio(altitude_deg, hp_arcmin, lat_deg, zn_deg)


@dataclass
class AltitudeCorrections:
    """Every line of the Hs -> Ho working, one element per sight (arcminutes unless named _deg)."""

    hs_deg: np.ndarray
    ic_arcmin: np.ndarray
    dip_arcmin: np.ndarray
    ha_deg: np.ndarray
    refraction_arcmin: np.ndarray
    sd_arcmin: np.ndarray
    parallax_arcmin: np.ndarray
    ho_deg: np.ndarray
    warning: np.ndarray = field(repr=False)
    error: np.ndarray = field(repr=False)

    def raise_errors(self) -> None:
        bad = self.error != ""
        if bad.any():
            first = self.error[bad].ravel()[0]
            raise SightInputError(f"sights that cannot be corrected: {failed_elements(bad)}; first: {first}")


def _note(messages: np.ndarray, mask, text: str) -> None:
    mask = np.broadcast_to(mask, messages.shape)
    messages[mask] = np.where(messages[mask] == "", text, messages[mask] + "; " + text)


def correct_altitudes(hs_deg: ArrayLike, *, index_error_arcmin: ArrayLike = 0.0, eye_height_m: ArrayLike = 0.0, horizon: ArrayLike = "sea",
                      temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C, pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA,
                      limb: ArrayLike = "centre", sd_arcmin: ArrayLike = 0.0, hp_arcmin: ArrayLike = 0.0, augment_sd: ArrayLike = False,
                      lat_deg: ArrayLike = 0.0, zn_deg: ArrayLike = 0.0) -> AltitudeCorrections:
    """Apply the whole chain Hs -> Ho and return every intermediate value.

    Inputs broadcast. ``sd_arcmin`` and ``hp_arcmin`` are the almanac's geocentric values
    (0 for stars; SD 0 for planets); ``augment_sd`` is True for the Moon; ``lat_deg`` and
    ``zn_deg`` (the DR latitude and the body's azimuth) give the rigorous parallax.

    Sights are not refused by raising: a sight that cannot be corrected (Ha below -1° or
    above 90°, Hs outside 0-90°, bad height of eye or weather) gets NaN and a message in
    ``error``; a usable sight with a caveat (Ha below 5°) gets one in ``warning``. Call
    :meth:`AltitudeCorrections.raise_errors` to turn errors into an exception.
    """
    hs = np.asarray(hs_deg, dtype=float)
    arrays = np.broadcast_arrays(hs, np.asarray(index_error_arcmin, dtype=float),
                                 np.asarray(eye_height_m, dtype=float), np.asarray(temperature_c, dtype=float),
                                 np.asarray(pressure_hpa, dtype=float), np.asarray(sd_arcmin, dtype=float),
                                 np.asarray(hp_arcmin, dtype=float), np.asarray(lat_deg, dtype=float),
                                 np.asarray(zn_deg, dtype=float), np.asarray(augment_sd, dtype=bool))
    hs, ie, eye, temp, pres, sd, hp, lat, zn, augment = (np.array(a) for a in arrays)
    shape = hs.shape
    artificial = np.broadcast_to(horizon_is_artificial(horizon), shape)
    sign = np.broadcast_to(limb_sign(limb), shape)
    error = np.full(shape, "", dtype=object)
    warning = np.full(shape, "", dtype=object)
    _note(error, ~np.isfinite(hs) | (hs < 0) | (hs > 90), "Hs is outside 0-90°")
    _note(error, ~np.isfinite(ie) | (np.abs(ie) > 30), "index error is outside ±30′")
    _note(error, ~np.isfinite(eye) | (eye < 0) | (eye > 1000), "height of eye is outside 0-1000 m")
    _note(error, ~np.isfinite(temp) | (temp < -50) | (temp > 60), "temperature is outside -50 to +60 °C")
    _note(error, ~np.isfinite(pres) | (pres < 850) | (pres > 1100), "pressure is outside 850-1100 hPa")
    ok = error == ""
    ic = -ie
    dip = np.where(artificial, 0.0, DIP_ARCMIN_PER_SQRT_M * np.sqrt(np.where(ok, eye, 0.0)))
    ha = hs + (ic - dip) / ARCMIN_PER_DEG
    out_of_range = ok & ((ha < LOWEST_ALTITUDE_DEG) | (ha > 90.0))
    _note(error, out_of_range, "apparent altitude is outside -1° to 90°: no refraction model applies")
    ok = error == ""
    _note(warning, ok & (ha < LOW_ALTITUDE_DEG),
          "low sight (Ha below 5°): refraction is uncertain by several arcminutes")
    safe_ha = np.where(ok, ha, 45.0)
    refraction = bennett_refraction_arcmin(safe_ha, np.where(ok, temp, 10.0), np.where(ok, pres, 1010.0))
    topocentric_centre = safe_ha - refraction / ARCMIN_PER_DEG
    # semi-diameter (augmented for the Moon at the topocentric altitude of its centre)
    factor = np.where(augment, moon_augmentation(topocentric_centre, hp, lat, zn), 1.0)
    sd_corr = sign * sd * factor
    topocentric_centre = topocentric_centre + sd_corr / ARCMIN_PER_DEG
    parallax = np.where(hp > 0, parallax_in_altitude_arcmin(topocentric_centre, hp, lat, zn), 0.0)
    ho = topocentric_centre + parallax / ARCMIN_PER_DEG
    nan = ~ok
    ha_out = np.where(np.isfinite(ha), ha, np.nan)
    return AltitudeCorrections(
        hs_deg=hs, ic_arcmin=ic, dip_arcmin=np.where(nan & ~np.isfinite(eye), np.nan, dip), ha_deg=ha_out,
        refraction_arcmin=np.where(nan, np.nan, refraction), sd_arcmin=np.where(nan, np.nan, sd_corr),
        parallax_arcmin=np.where(nan, np.nan, parallax), ho_deg=np.where(nan, np.nan, ho),
        warning=warning, error=error)
