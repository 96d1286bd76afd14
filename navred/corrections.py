"""Sextant altitude (Hs) to observed altitude (Ho): one function per correction, and the chain.

One convention throughout: **a correction is signed and added**, so that a working adds up line
by line; a function named ``*_correction_arcmin`` returns that signed correction and fills the
line of the working (the column of :class:`AltitudeCorrections`) of the same name, and a function
named ``*_angle_arcmin`` returns an angle of the sky, positive (the dip of the horizon, the
refraction), for the tables and plans that need the angle itself:

    Ha = Hs + IC + horizon + dip             apparent altitude of the point observed
    Ho = Ha + refraction + SD + parallax + phase      observed (geocentric) altitude of the centre

IC, the index correction, is minus the index error. The horizon line turns the reading of a
reflecting artificial horizon (twice the altitude) or of a back sight (measured over the zenith
to the horizon behind) into an altitude; dip is that of the sea horizon (negative), added for a
back sight, that of a waterline nearer than the horizon, or a dip meter's measurement; none
for an artificial or a bubble horizon. Refraction (negative) is Bennett's at Ha. SD is the
semi-diameter of the Sun or Moon (lower limb +, upper limb −; the Moon's augmented for its
nearness to the observer). Parallax in altitude is computed rigorously for the observer's
place on the WGS 84 ellipsoid (so it includes the Earth's oblateness, which matters for the
Moon). Phase moves Venus's and Mars's centre of light back to the centre of the disc.
Every function takes scalars or numpy arrays and broadcasts.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_360
from .constants import ARCMIN_PER_DEG, EARTH_FLATTENING
from .errors import SightInputError, failed_elements
from .vocabulary import COLUMN, HORIZONS, LIMBS

#: The accepted ranges and the defaults, from the sight vocabulary (one table for the log reader, the
#: chain, the planner and the command line's options).
EYE_HEIGHT_M = COLUMN["eye_height"]
INDEX_ERROR_ARCMIN = COLUMN["index_error"]
MEASURED_DIP_ARCMIN = COLUMN["measured_dip"]
TEMPERATURE_C = COLUMN["temperature"]
PRESSURE_HPA = COLUMN["pressure"]
DEFAULT_TEMPERATURE_C = float(TEMPERATURE_C.default)
DEFAULT_PRESSURE_HPA = float(PRESSURE_HPA.default)

#: Dip coefficient: dip′ = 1.76 √(h metres) (= 0.97 √(h feet)); the coefficient printed with the
#: nautical almanac's dip table (from memory). It includes terrestrial refraction. A height in feet
#: is turned into metres by the vocabulary (international foot) before the dip is taken.
DIP_ARCMIN_PER_SQRT_M = 1.76

LOW_ALTITUDE_DEG = 5.0  # below: refraction is uncertain; the sight is flagged (common practice)
#: an index error beyond this is read but warned about: a sextant's index error is normally adjusted out when it
#: exceeds a few minutes, so a larger one is more likely a slip of the pen (14 for 1.4) (common practice)
LARGE_INDEX_ERROR_ARCMIN = 10.0
LOWEST_ALTITUDE_DEG = -1.0  # below: no refraction model applies; refused

_INDEX = re.compile(r"^\s*([+-]?\d+(?:\.\d+)?)\s*[′']?\s*(on|off)?\s*(?:(?:the\s+)?arc)?\s*$", re.IGNORECASE)
#: what an index error may be written as, and what on and off the arc mean (common practice)
INDEX_ERROR_ACCEPTED = (
    "accepted: the arcminutes with on or off, '2.1 on' or '1.5 off' (also '1.5′ off the arc', '1.5 off arc'). On "
    "the arc: with the horizon brought in line the index reads above zero, so every reading is too high and the "
    "error is subtracted (it is + in navred's sign, on the arc positive); off the arc: it reads below zero, on "
    "the arc's extension, every reading too low, added (−). A bare number (2.1, -1.5) only under a header that "
    "states the sign, 'IE (on +)' or 'IE (off +)', or in a column named index_error_arcmin (on the arc positive)")


def parse_index_error_arcmin(value: object, plus: str | None = "on") -> float | np.ndarray:
    """Index error in arcminutes, positive ON the arc, from a number or ``'2.1 on'`` / ``'1.5 off'``.

    ``plus`` is the sign convention the value's name states: 'on' (+ is on the arc: the API's
    ``index_error_arcmin``, the default), 'off' (+ is off the arc), or None (not stated: a log column headed
    only 'IE'). Textbooks write the sign both ways (common practice), so with None a nonzero number, signed
    or not, has two readings and is refused naming both; on/off words always win over the convention.

    >>> parse_index_error_arcmin("2.1 on"), parse_index_error_arcmin("1.5 off"), parse_index_error_arcmin(-0.4)
    (2.1, -1.5, -0.4)
    >>> parse_index_error_arcmin("1.2", "off"), parse_index_error_arcmin("1.2 on", "off")
    (-1.2, 1.2)
    """
    flip = -1.0 if plus == "off" else 1.0
    if np.ndim(value) and not isinstance(value, str):
        numeric = np.asarray(value)
        if numeric.dtype.kind in "fiu":
            numbers = numeric.astype(float) * flip + 0.0
            bad = ~np.isfinite(numbers) | (numbers < INDEX_ERROR_ARCMIN.low) | (numbers > INDEX_ERROR_ARCMIN.high)
            if bad.any():
                raise SightInputError(f"index error outside {_index_range()} in {failed_elements(bad)}; a "
                                      "sextant with more should be adjusted")
            unsigned = (numbers != 0.0) & (plus is None)
            if np.any(unsigned):
                raise SightInputError(f"index error with no on or off in {failed_elements(unsigned)}: "
                                      f"{_both_ways('1.4')}")
            return numbers
        items = np.asarray(value, dtype=object)
        out = np.empty(items.shape)
        bad = np.zeros(items.shape, dtype=bool)
        for index, item in np.ndenumerate(items):
            try:
                out[index] = parse_index_error_arcmin(item, plus)
            except SightInputError:
                bad[index] = True
        if bad.any():
            raise SightInputError(f"index error unreadable in {failed_elements(bad)}; {INDEX_ERROR_ACCEPTED}")
        return out
    worded = False
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        number = float(value)
        shown = f"{number:g}"
    else:
        match = _INDEX.match(str(value).replace("−", "-"))
        if not match:
            raise SightInputError(f"cannot read index error {value!r}; {INDEX_ERROR_ACCEPTED}")
        number = float(match.group(1))
        shown = match.group(1)
        if match.group(2):
            if match.group(1).startswith(("+", "-")):
                raise SightInputError(f"index error {value!r}: give a sign or on/off, not both")
            number = number if match.group(2).lower() == "on" else -number
            worded = True
    if not np.isfinite(number) or not INDEX_ERROR_ARCMIN.low <= number * (1.0 if worded else flip) \
            <= INDEX_ERROR_ARCMIN.high:
        raise SightInputError(f"index error {value!r} is outside {_index_range()}; a sextant with more should be "
                              "adjusted")
    if worded or number == 0.0:
        return number
    if plus is None:
        size = f"{abs(number):g}′"
        if shown.startswith(("+", "-")):
            readings = (f"{size} on the arc (read with on +) or {size} off the arc (read with off +)" if number > 0
                        else f"{size} off the arc (read with on +) or {size} on the arc (read with off +)")
        else:
            readings = f"{size} on the arc (+{abs(number):g}, subtracted) or {size} off the arc (−{abs(number):g}, added)"
        raise SightInputError(f"index error {shown} has no on or off: {readings}? {_both_ways(f'{abs(number):g}')}")
    return number * flip + 0.0  # no -0.0


def _both_ways(size: str) -> str:
    """What a bare index error is refused with: the ways to say which side of the arc it is."""
    return (f"write '{size} on' or '{size} off', or state the sign in the column's header: 'IE (on +)' or "
            "'IE (off +)', or name the column index_error_arcmin, ON the arc positive")


def _index_range() -> str:
    return f"±{INDEX_ERROR_ARCMIN.high:g}′"


def _range(column, unit: str) -> str:
    """A column's accepted range as a message gives it (``unit`` with its space, if any): '0-1000 m',
    '-50 to +60 °C', '0-60′'."""
    if column.low < 0:
        return f"{column.low:g} to +{column.high:g}{unit}"
    return f"{column.low:g}-{column.high:g}{unit}"


def _outside(values: np.ndarray, column) -> np.ndarray:
    """Where values are not finite or lie outside the column's range."""
    with np.errstate(invalid="ignore"):
        return ~np.isfinite(values) | (values < column.low) | (values > column.high)


def index_correction_arcmin(index_error_arcmin: ArrayLike) -> np.ndarray:
    """Index correction IC = −(index error), arcminutes (error ON the arc reads high).

    >>> float(index_correction_arcmin(2.1))
    -2.1
    """
    return -np.asarray(index_error_arcmin, dtype=float)


def dip_angle_arcmin(eye_height_m: ArrayLike, horizon: ArrayLike = "sea") -> np.ndarray:
    """The dip of the sea horizon below the horizontal, arcminutes, positive: 1.76′ √(height of eye in
    metres); 0 for a horizon with no dip. The one dip formula of navred.

    ``horizon`` is any of :data:`HORIZONS` (scalar or array); the dip is the sea horizon's for
    ``sea``, ``back`` (the horizon behind is as low) and ``waterline`` (whose own, larger dip is
    :func:`dip_short_of_horizon_arcmin`), 0 for ``artificial`` and ``bubble``. The working's dip
    line, signed, is :func:`dip_correction_arcmin`.

    >>> round(float(dip_angle_arcmin(10.0)), 2)
    5.57
    >>> float(dip_angle_arcmin(10.0, "artificial"))
    0.0
    """
    height = np.asarray(eye_height_m, dtype=float)
    bad = _outside(height, EYE_HEIGHT_M)
    if bad.any():
        raise SightInputError(f"height of eye must be {_range(EYE_HEIGHT_M, ' m')}; refused: {failed_elements(bad)}")
    kinds = horizon_kind(horizon)
    return np.where(np.isin(kinds, ["sea", "back", "waterline"]), DIP_ARCMIN_PER_SQRT_M * np.sqrt(height), 0.0)


def dip_correction_arcmin(eye_height_m: ArrayLike, horizon: ArrayLike = "sea", *, waterline_nm: ArrayLike = np.nan,
                          measured_dip_arcmin: ArrayLike = np.nan) -> np.ndarray:
    """The dip line of the working (arcminutes, signed and added; the ``dip_arcmin`` column).

    − the dip for a sea horizon; + the dip for a back sight (the horizon behind lies as far below the
    horizontal: Ha = 180° − (Hs + IC) + dip); − the dip short of the horizon for a ``waterline``
    ``waterline_nm`` away (:func:`dip_short_of_horizon_arcmin`); 0 for an artificial or a bubble
    horizon. A dip meter's ``measured_dip_arcmin`` replaces the formula for a sea horizon or a back
    sight. Inputs broadcast; a value outside its range, a measured dip with another horizon or a
    waterline with no distance is refused.

    >>> round(float(dip_correction_arcmin(10.0)), 2), round(float(dip_correction_arcmin(10.0, "back")), 2)
    (-5.57, 5.57)
    """
    kind = horizon_kind(horizon)
    eye, measured, waterline = (np.asarray(v, dtype=float) for v in (eye_height_m, measured_dip_arcmin,
                                                                      waterline_nm))
    kind, eye, measured, waterline = np.broadcast_arrays(kind, eye, measured, waterline)
    has_measured = np.isfinite(measured)
    reflecting = np.isin(kind, ["sea", "back"])
    if (has_measured & ~reflecting).any():
        raise SightInputError("a measured dip applies to a sea horizon or a back sight; refused: "
                              f"{failed_elements(has_measured & ~reflecting)}")
    bad = has_measured & _outside(measured, MEASURED_DIP_ARCMIN)
    if bad.any():
        raise SightInputError(f"a measured dip must lie in {_range(MEASURED_DIP_ARCMIN, '′')}; refused: "
                              f"{failed_elements(bad)}")
    short = kind == "waterline"
    with np.errstate(invalid="ignore"):
        bad = short & ~(waterline > 0)
    if bad.any():
        raise SightInputError(f"a waterline horizon needs the waterline's distance (nm, above 0); refused: "
                              f"{failed_elements(bad)}")
    needs_eye = np.isin(kind, ["sea", "back", "waterline"]) & ~has_measured
    sea_dip = np.where(has_measured, measured, dip_angle_arcmin(np.where(needs_eye, eye, 0.0), kind))
    short_dip = dip_short_of_horizon_arcmin(np.where(short, eye, 0.0), np.where(short, waterline, 1.0))
    return np.select([kind == "sea", kind == "back", short], [-sea_dip, sea_dip, -short_dip], 0.0)


#: Dip short of the horizon: tan Ds = h / (1852 d) + d / 8268 (h the height of eye in metres, d the
#: distance of the waterline in nautical miles; the table of dip of the sea short of the horizon in
#: N. Bowditch, The American Practical Navigator, Pub. No. 9, with h/6076.1 ft per mile; from memory).
#: The second term is the Earth's curvature over a radius enlarged by terrestrial refraction.
SHORT_HORIZON_CURVATURE_NM = 8268.0
#: Distance of the visible sea horizon, 2.07 √(h metres) nautical miles (the same source; from memory).
HORIZON_DISTANCE_NM_PER_SQRT_M = 2.07


def dip_short_of_horizon_arcmin(eye_height_m: ArrayLike, distance_nm: ArrayLike) -> np.ndarray:
    """Dip (arcminutes) of a waterline ``distance_nm`` away, nearer than the sea horizon: a shore, a ship.

    >>> round(float(dip_short_of_horizon_arcmin(10.0, 1.0)), 1)
    19.0
    """
    h = np.asarray(eye_height_m, dtype=float)
    d = np.asarray(distance_nm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.degrees(np.arctan(h / (1852.0 * d) + d / SHORT_HORIZON_CURVATURE_NM)) * ARCMIN_PER_DEG


def horizon_distance_nm(eye_height_m: ArrayLike) -> np.ndarray:
    """Distance (nautical miles) of the visible sea horizon from a height of eye."""
    return HORIZON_DISTANCE_NM_PER_SQRT_M * np.sqrt(np.asarray(eye_height_m, dtype=float))


#: The highest reading each horizon takes, degrees: a back sight reads 180° − h + dip, an
#: artificial horizon twice the altitude.
HIGHEST_READING_DEG = {"sea": 90.0, "bubble": 90.0, "waterline": 90.0, "artificial": 180.0, "back": 180.0}


def _each_word_once(words: ArrayLike, look_up):
    """``look_up`` (an array function) applied to each distinct word once, the result spread back."""
    values = np.asarray(words, dtype=str)
    if values.ndim == 0 or values.size < 64:
        return look_up(values)
    distinct, inverse = np.unique(values, return_inverse=True)
    try:
        return look_up(distinct)[inverse.reshape(values.shape)]
    except SightInputError:
        return look_up(values)  # a word refused: the message names the elements of the whole array


def horizon_kind(horizon: ArrayLike) -> np.ndarray:
    """The horizon each element names (``sea``, ``artificial``, ``bubble``, ``back`` or ``waterline``); raises for others."""
    return _each_word_once(horizon, _horizon_kind)


def _horizon_kind(horizon: np.ndarray) -> np.ndarray:
    values = np.char.replace(np.char.replace(np.char.lower(np.char.strip(np.asarray(horizon, dtype=str))), " ", "_"),
                             "-", "_")
    known = np.isin(values, list(HORIZONS))
    if not known.all():
        raise SightInputError(f"horizon must be one of sea, artificial, bubble, back, waterline; "
                              f"refused: {failed_elements(~known)}")
    return np.vectorize(HORIZONS.get, otypes=[object])(values) if values.ndim else np.array(HORIZONS[str(values)],
                                                                                             dtype=object)


def horizon_correction_arcmin(reading_deg: ArrayLike, horizon: ArrayLike = "sea") -> np.ndarray:
    """The horizon line of the working (arcminutes, signed and added; the ``horizon_arcmin`` column): what
    turns the reading with its index correction into an altitude above the point observed.

    An artificial (reflecting) horizon reads twice the altitude: − half the reading; a back sight reads
    over the zenith: 180° − 2 × the reading; every other horizon 0.

    >>> float(horizon_correction_arcmin(60.0, "artificial")), float(horizon_correction_arcmin(100.0, "back"))
    (-1800.0, -1200.0)
    """
    reading = np.asarray(reading_deg, dtype=float)
    return (_altitude_above_horizon_deg(reading, horizon_kind(horizon)) - reading) * ARCMIN_PER_DEG


def refraction_angle_arcmin(ha_deg: ArrayLike, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                            pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA) -> np.ndarray:
    """Refraction in arcminutes at apparent altitude Ha (degrees), positive, Bennett's formula; the
    working's line, signed, is :func:`refraction_correction_arcmin`.

    R = cot(Ha + 7.31 / (Ha + 4.4)) arcminutes at 10 °C and 1010 hPa (G. G. Bennett,
    "The calculation of astronomical refraction in marine navigation", Journal of
    Navigation 35, 1982; citation from memory), scaled by (P / 1010)·(283 / (273 + T)),
    the density ratio on which the almanac's additional refraction table rests (common
    practice). Good to about 0.1′ at sea level above 5°. Ha must lie in -1° to 90°.

    >>> round(float(refraction_angle_arcmin(0.0)), 1), round(float(refraction_angle_arcmin(10.0)), 2)
    (34.5, 5.39)
    """
    ha = np.asarray(ha_deg, dtype=float)
    bad = ~np.isfinite(ha) | (ha < LOWEST_ALTITUDE_DEG) | (ha > 90.0)
    if bad.any():
        raise SightInputError(f"apparent altitude must lie in -1° to 90° for refraction; "
                              f"refused: {failed_elements(bad)}")
    return bennett_refraction_arcmin(ha, temperature_c, pressure_hpa)


def refraction_correction_arcmin(ha_deg: ArrayLike, temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                                 pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA) -> np.ndarray:
    """The refraction line of the working (arcminutes, signed and added; the ``refraction_arcmin``
    column): minus :func:`refraction_angle_arcmin`.

    >>> round(float(refraction_correction_arcmin(10.0)), 2)
    -5.39
    """
    return -refraction_angle_arcmin(ha_deg, temperature_c, pressure_hpa)


def air_density_factor(temperature_c: ArrayLike, pressure_hpa: ArrayLike) -> np.ndarray:
    """The refraction at a temperature and pressure over the refraction at 10 °C and 1010 hPa:
    (P / 1010)·(283 / (273 + T)), the density ratio on which the almanac's additional refraction
    table rests (common practice)."""
    return (np.asarray(pressure_hpa, dtype=float) / 1010.0) * (283.0 / (273.0 + np.asarray(temperature_c, dtype=float)))


def bennett_refraction_arcmin(ha: ArrayLike, temperature_c: ArrayLike, pressure_hpa: ArrayLike) -> np.ndarray:
    """Bennett's refraction (arcminutes, positive) at apparent altitude ``ha`` with no range check (see
    :func:`refraction_angle_arcmin`)."""
    ha = np.asarray(ha, dtype=float)
    # Bennett's cotangent dips 0.08″ below zero at the zenith: hold it at zero there
    standard = np.maximum(1.0 / np.tan(np.radians(ha + 7.31 / (ha + 4.4))), 0.0)
    return standard * air_density_factor(temperature_c, pressure_hpa)


_LIMB_SIGNS = {"lower": 1.0, "upper": -1.0, "centre": 0.0, "": 0.0}
_LIMBS = {**{word: _LIMB_SIGNS[limb] for word, limb in LIMBS.items()}, "nan": 0.0, "none": 0.0}


def limb_sign(limb: ArrayLike) -> np.ndarray:
    """+1 for a lower limb, −1 for an upper limb, 0 for the centre (``LL``/``UL`` accepted)."""
    return _each_word_once(limb, _limb_sign)


def _limb_sign(limb: np.ndarray) -> np.ndarray:
    values = np.char.lower(np.char.strip(np.asarray(limb, dtype=str)))
    known = np.isin(values, list(_LIMBS))
    if not known.all():
        raise SightInputError(f"limb must be lower, upper or centre (LL/UL accepted); "
                              f"refused: {failed_elements(~known)}")
    return np.vectorize(_LIMBS.get, otypes=[float])(values) if values.ndim else np.array(_LIMBS[str(values)])


def semi_diameter_correction_arcmin(sd_arcmin: ArrayLike, limb: ArrayLike, augmentation: ArrayLike = 1.0,
                                    horizon: ArrayLike = "sea") -> np.ndarray:
    """Semi-diameter line of the working (arcminutes, signed and added; the ``sd_arcmin`` column): +SD for
    the lower limb, −SD for the upper, 0 for the centre and for any sight with a bubble horizon (on the
    body's centre whatever the limb).

    ``augmentation`` multiplies the geocentric SD (the Moon's, see :func:`moon_augmentation`).
    """
    sign = np.where(horizon_kind(horizon) == "bubble", 0.0, limb_sign(limb))
    return sign * np.asarray(sd_arcmin, dtype=float) * augmentation


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


#: The centre of light of a uniformly bright illuminated disc lies toward the Sun from the centre by
#: (4 / 3π)(1 − cos i) of the semi-diameter, i the phase angle: the centroid of the lune between the
#: lit half-disc and the terminator's half-ellipse (of semi-axis cos i), a standard integral.
PHASE_CENTROID_FACTOR = 4.0 / (3.0 * np.pi)


def phase_offset_arcmin(sd_arcmin: ArrayLike, phase_angle_deg: ArrayLike) -> np.ndarray:
    """Distance (arcminutes) from a planet's centre to its centre of light, toward the Sun.

    >>> round(float(phase_offset_arcmin(0.5, 90.0)), 4)  # a half-lit Venus of 30″ semi-diameter
    0.2122
    """
    return PHASE_CENTROID_FACTOR * (1.0 - np.cos(np.radians(np.asarray(phase_angle_deg, dtype=float)))) * \
        np.asarray(sd_arcmin, dtype=float)


def phase_correction_arcmin(sd_arcmin: ArrayLike, phase_angle_deg: ArrayLike, body_alt_deg: ArrayLike,
                            body_az_deg: ArrayLike, sun_alt_deg: ArrayLike, sun_az_deg: ArrayLike) -> np.ndarray:
    """Phase correction in altitude (arcminutes) of Venus or Mars: the centre of light brought back to the centre.

    The observer brings the planet's centre of light to the horizon; it lies
    :func:`phase_offset_arcmin` from the centre toward the Sun, so its altitude is too high by
    the offset times the cosine of the angle between the vertical and the direction to the Sun
    on the sky (by day and by night: below the horizon the Sun still lights the planet's side
    that faces it). That direction is the great-circle bearing from the planet to the Sun in
    the observer's altitude-azimuth frame.
    """
    cos_bearing = np.cos(np.radians(sun_bearing_from_up_deg(body_alt_deg, body_az_deg, sun_alt_deg, sun_az_deg)))
    return -phase_offset_arcmin(sd_arcmin, phase_angle_deg) * cos_bearing


def sun_bearing_from_up_deg(body_alt_deg: ArrayLike, body_az_deg: ArrayLike, sun_alt_deg: ArrayLike,
                            sun_az_deg: ArrayLike) -> np.ndarray:
    """The direction of the Sun seen from a body on the sky (degrees): 0° straight up toward the zenith,
    90° toward increasing azimuth, 180° straight down; the great-circle bearing from the body to the Sun
    in the observer's altitude-azimuth frame. The side of a disc the Sun lights faces this way.

    >>> round(float(sun_bearing_from_up_deg(20.0, 180.0, 60.0, 180.0)), 6)  # the Sun above: lit from above
    0.0
    """
    h1, z1 = np.radians(np.asarray(body_alt_deg, dtype=float)), np.radians(np.asarray(body_az_deg, dtype=float))
    h2, z2 = np.radians(np.asarray(sun_alt_deg, dtype=float)), np.radians(np.asarray(sun_az_deg, dtype=float))
    dz = z2 - z1
    # bearing measured from "up" (toward the zenith) through the direction of increasing azimuth
    up = np.cos(h1) * np.sin(h2) - np.sin(h1) * np.cos(h2) * np.cos(dz)
    across = np.cos(h2) * np.sin(dz)
    return wrap_360(np.degrees(np.arctan2(across, up)))


def planet_phases(bodies: ArrayLike, utc: object, lat_deg: ArrayLike, lon_deg: ArrayLike, hc_deg: ArrayLike,
                  zn_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Phase angle (degrees) and phase correction (arcminutes) of each sight of Venus or Mars (NaN and 0
    for other bodies), from the almanac at ``utc`` (instants, one per sight) seen from (lat, lon)
    with the body at (``hc_deg``, ``zn_deg``): :func:`phase_correction_arcmin`."""
    from .almanac import phase_angle_deg, places
    from .timescales import instants
    from .triangle import computed_altitude_azimuth

    bodies = np.asarray(bodies, dtype=object)
    angle = np.full(bodies.size, np.nan)
    phase = np.zeros(bodies.size)
    lit = np.isin(bodies, ["Venus", "Mars"])
    if lit.any():
        rows = np.flatnonzero(lit)
        inst = (utc if hasattr(utc, "tt1") else instants(utc))[rows]
        sun = places("Sun", inst)
        planet = places(bodies[rows], inst)
        angle[rows] = phase_angle_deg(planet, sun)
        lat, lon = np.broadcast_to(np.asarray(lat_deg, dtype=float), bodies.shape), \
            np.broadcast_to(np.asarray(lon_deg, dtype=float), bodies.shape)
        sun_hc, sun_zn = computed_altitude_azimuth(lat[rows], lon[rows], sun.gha_deg, sun.dec_deg)
        phase[rows] = phase_correction_arcmin(planet.sd_arcmin, angle[rows], np.asarray(hc_deg)[rows],
                                              np.asarray(zn_deg)[rows], sun_hc, sun_zn)
    return angle, phase


@dataclass
class AltitudeCorrections:
    """Every line of the Hs -> Ho working, one element per sight (arcminutes unless named _deg).

    Every ``*_arcmin`` correction is signed and added: Hs + IC + horizon + dip = Ha, and
    Ha + refraction + SD + parallax + phase = Ho.
    """

    hs_deg: np.ndarray
    ic_arcmin: np.ndarray
    horizon_arcmin: np.ndarray
    dip_arcmin: np.ndarray
    ha_deg: np.ndarray
    refraction_arcmin: np.ndarray
    sd_arcmin: np.ndarray
    parallax_arcmin: np.ndarray
    phase_arcmin: np.ndarray
    ho_deg: np.ndarray
    warning: np.ndarray = field(repr=False)
    error: np.ndarray = field(repr=False)
    #: which input each error is about: 'hs', 'eye_height', 'horizon', 'waterline_distance', ...
    error_column: np.ndarray = field(repr=False, default=None)

    def raise_errors(self) -> None:
        bad = self.error != ""
        if bad.any():
            first = self.error[bad].ravel()[0]
            raise SightInputError(f"sights that cannot be corrected: {failed_elements(bad)}; first: {first}")


def _note(messages: np.ndarray, mask, text: str) -> None:
    mask = np.broadcast_to(mask, messages.shape)
    messages[mask] = np.where(messages[mask] == "", text, messages[mask] + "; " + text)


def correct_altitudes(hs_deg: ArrayLike, *, index_error_arcmin: ArrayLike = 0.0, eye_height_m: ArrayLike = 0.0,
                      horizon: ArrayLike = "sea", temperature_c: ArrayLike = DEFAULT_TEMPERATURE_C,
                      pressure_hpa: ArrayLike = DEFAULT_PRESSURE_HPA, limb: ArrayLike = "centre",
                      sd_arcmin: ArrayLike = 0.0, hp_arcmin: ArrayLike = 0.0, augment_sd: ArrayLike = False,
                      lat_deg: ArrayLike = 0.0, zn_deg: ArrayLike = 0.0, waterline_nm: ArrayLike = np.nan,
                      measured_dip_arcmin: ArrayLike = np.nan, phase_arcmin: ArrayLike = 0.0) -> AltitudeCorrections:
    """Apply the whole chain Hs -> Ho and return every intermediate value.

    Inputs broadcast. ``horizon`` is ``sea``, ``artificial`` (a reflecting horizon: the reading
    is twice the altitude, halved after the index correction, no dip), ``bubble`` (no dip, the
    body's centre whatever the limb), ``back`` (a back sight: Ha = 180° − (Hs + IC) + dip) or
    ``waterline`` (dip short of the horizon, the waterline ``waterline_nm`` away).
    ``measured_dip_arcmin`` (a dip meter's value) replaces the dip formula for a sea horizon or a
    back sight. ``limb`` is the limb as it stands in the sky (lower: nearer the horizon in
    front); with an artificial horizon it is the direct image's limb brought to the reflected
    image's opposite limb (lower: the direct image's lower limb on the reflection's upper limb).
    ``sd_arcmin`` and ``hp_arcmin`` are the almanac's geocentric values (0 for stars);
    ``augment_sd`` is True for the Moon; ``lat_deg`` and ``zn_deg`` (the DR latitude and the
    body's azimuth) give the rigorous parallax; ``phase_arcmin`` is the phase correction of
    Venus or Mars (:func:`phase_correction_arcmin`).

    Each line is the function of its own correction (:func:`index_correction_arcmin`,
    :func:`horizon_correction_arcmin`, :func:`dip_correction_arcmin`,
    :func:`refraction_correction_arcmin`, :func:`semi_diameter_correction_arcmin`,
    :func:`parallax_in_altitude_arcmin`), each signed and added. Sights are not refused by raising: a
    sight that cannot be corrected gets NaN and a message in ``error`` (and the input it is about in
    ``error_column``); a usable sight with a caveat (Ha below 5°) gets one in ``warning``. Call
    :meth:`AltitudeCorrections.raise_errors` to turn errors into an exception.
    """
    arrays = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (
        hs_deg, index_error_arcmin, eye_height_m, temperature_c, pressure_hpa, sd_arcmin, hp_arcmin, lat_deg,
        zn_deg)), np.asarray(augment_sd, dtype=bool),
        *(np.asarray(v, dtype=float) for v in (waterline_nm, measured_dip_arcmin, phase_arcmin)))
    hs, ie, eye, temp, pres, sd, hp, lat, zn, augment, waterline, measured, phase = (np.array(a) for a in arrays)
    shape = hs.shape
    kind = np.broadcast_to(horizon_kind(horizon), shape)
    limb_sign(limb)  # an unknown limb is refused before any work
    notes = _Notes(shape)
    _refuse_inputs(notes, kind, hs, ie, eye, waterline, measured, temp, pres)
    ok = notes.error == ""
    _warn_large_index_error(notes, ok, ie)
    # the apparent altitude: the reading with its index correction, the horizon line and the dip
    ic = index_correction_arcmin(ie)
    reading = hs + ic / ARCMIN_PER_DEG
    altitude = _altitude_above_horizon_deg(reading, kind)
    horizon_line = (altitude - reading) * ARCMIN_PER_DEG
    short = kind == "waterline"
    dip = dip_correction_arcmin(np.where(ok & np.isfinite(eye), eye, 0.0), kind,
                                waterline_nm=np.where(short & ok, waterline, 1.0),
                                measured_dip_arcmin=np.where(ok, measured, np.nan))
    ha = altitude + dip / ARCMIN_PER_DEG
    _refuse_apparent(notes, ok, altitude, ha)
    ok = notes.error == ""
    notes.warn(ok & (ha < LOW_ALTITUDE_DEG), "low sight (Ha below 5°): refraction is uncertain by several arcminutes")
    # the centre's observed altitude: refraction, semi-diameter (the Moon's augmented), parallax, phase
    safe_ha = np.where(ok, ha, 45.0)
    refraction = refraction_correction_arcmin(safe_ha, np.where(ok, temp, DEFAULT_TEMPERATURE_C),
                                              np.where(ok, pres, DEFAULT_PRESSURE_HPA))
    topocentric_centre = safe_ha + refraction / ARCMIN_PER_DEG
    factor = np.where(augment, moon_augmentation(topocentric_centre, hp, lat, zn), 1.0)
    sd_corr = semi_diameter_correction_arcmin(sd, limb, factor, kind)
    topocentric_centre = topocentric_centre + sd_corr / ARCMIN_PER_DEG
    parallax = np.where(hp > 0, parallax_in_altitude_arcmin(topocentric_centre, hp, lat, zn), 0.0)
    ho = topocentric_centre + (parallax + phase) / ARCMIN_PER_DEG
    nan = ~ok

    def kept(values):
        return np.where(nan, np.nan, values)

    return AltitudeCorrections(
        hs_deg=hs, ic_arcmin=ic, horizon_arcmin=kept(horizon_line), dip_arcmin=kept(dip),
        ha_deg=kept(np.where(np.isfinite(ha), ha, np.nan)), refraction_arcmin=kept(refraction),
        sd_arcmin=kept(sd_corr), parallax_arcmin=kept(parallax), phase_arcmin=kept(phase), ho_deg=kept(ho),
        warning=notes.warning, error=notes.error, error_column=notes.column)


def _altitude_above_horizon_deg(reading_deg: np.ndarray, kind: np.ndarray) -> np.ndarray:
    """The altitude above the point observed that a reading (with its index correction) gives: half of it for
    an artificial horizon, 180° less it for a back sight, itself for the others."""
    return np.select([kind == "artificial", kind == "back"], [reading_deg / 2.0, 180.0 - reading_deg], reading_deg)


class _Notes:
    """The per-sight error, the input each error is about, and the warning, as the chain finds them."""

    def __init__(self, shape) -> None:
        self.error = np.full(shape, "", dtype=object)
        self.column = np.full(shape, "", dtype=object)
        self.warning = np.full(shape, "", dtype=object)

    def refuse(self, mask, text: str, where: str) -> None:
        _note(self.error, mask & (self.error == ""), text)
        self.column[mask & (self.column == "")] = where

    def warn(self, mask, text: str) -> None:
        _note(self.warning, mask, text)


def _refuse_inputs(notes: _Notes, kind, hs, ie, eye, waterline, measured, temp, pres) -> None:
    """Each sight's inputs checked against the readings its horizon gives and the vocabulary's ranges."""
    highest = np.vectorize(HIGHEST_READING_DEG.get, otypes=[float])(kind) if kind.size else np.zeros(kind.shape)
    notes.refuse(~np.isfinite(hs) | (hs < 0) | (hs > highest),
                 "Hs is outside the readings this horizon gives (0-90°; to 180° for an artificial horizon or a back "
                 "sight)", "hs")
    notes.refuse(_outside(ie, INDEX_ERROR_ARCMIN), f"index error is outside {_index_range()}", "index_error")
    has_measured = np.isfinite(measured)
    reflecting = np.isin(kind, ["sea", "back"])
    needs_eye = np.isin(kind, ["sea", "back", "waterline"]) & ~(has_measured & reflecting)
    notes.refuse(needs_eye & _outside(eye, EYE_HEIGHT_M), f"height of eye is outside {_range(EYE_HEIGHT_M, ' m')}",
                 "eye_height")
    notes.refuse(has_measured & ~reflecting,
                 "a measured dip applies to a sea horizon or a back sight, not to this horizon", "measured_dip")
    notes.refuse(has_measured & _outside(measured, MEASURED_DIP_ARCMIN),
                 f"a measured dip must lie in {_range(MEASURED_DIP_ARCMIN, '′')}", "measured_dip")
    short = kind == "waterline"
    with np.errstate(invalid="ignore"):
        notes.refuse(short & ~(waterline > 0), "a waterline horizon needs the waterline's distance (nm, above 0)",
                     "waterline_distance")
        beyond = short & (waterline >= horizon_distance_nm(np.where(np.isfinite(eye), eye, 0.0)))
    notes.refuse(beyond, "the waterline lies beyond the visible sea horizon: reduce it as a sea horizon",
                 "waterline_distance")
    notes.refuse(_outside(temp, TEMPERATURE_C), f"temperature is outside {_range(TEMPERATURE_C, ' °C')}",
                 "temperature")
    notes.refuse(_outside(pres, PRESSURE_HPA), f"pressure is outside {_range(PRESSURE_HPA, ' hPa')}", "pressure")


def _warn_large_index_error(notes: _Notes, ok, ie) -> None:
    """A sight whose index error exceeds :data:`LARGE_INDEX_ERROR_ARCMIN` is reduced with it, and warned about,
    naming the value (each distinct value once: a log's few sextants)."""
    with np.errstate(invalid="ignore"):
        large = ok & (np.abs(ie) > LARGE_INDEX_ERROR_ARCMIN)
    for value in np.unique(ie[large]):
        side = "on" if value > 0 else "off"
        notes.warn(large & (ie == value),
                   f"index error {abs(value):.1f}′ {side} the arc is unusually large (over "
                   f"{LARGE_INDEX_ERROR_ARCMIN:g}′; a sextant's index error is normally adjusted out when it is over a "
                   "few minutes): check the reading and how it was written (a decimal point left out?); the "
                   "sight is reduced with it")


def _refuse_apparent(notes: _Notes, ok, altitude, ha) -> None:
    """Sights whose apparent altitude no refraction model takes, and why: the dip's doing when the reading
    alone would have been fine."""
    out_of_range = ok & ((ha < LOWEST_ALTITUDE_DEG) | (ha > 90.0))
    dip_did_it = out_of_range & (altitude >= LOWEST_ALTITUDE_DEG) & (altitude <= 90.0)
    notes.refuse(out_of_range & dip_did_it, "apparent altitude is outside -1° to 90°: the dip for this height of "
                                            "eye takes it there", "eye_height")
    notes.refuse(out_of_range & ~dip_did_it, "apparent altitude is outside -1° to 90°: no refraction model applies",
                 "hs")
