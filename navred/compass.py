"""For the watch's compass: azimuths along the DR, amplitudes at sunrise and sunset, the error of a gyro or a
magnetic compass from a body's bearing, and the deviation curve built from many.

Core code (numpy, and navred's own almanac, triangle and plan).

- :func:`azimuth_table`: the Sun's true azimuth (and any other body's) at a chosen interval along the
  DR, with its altitude: a bearing taken between two rows is compared with the row interpolated.
- :func:`amplitudes`: for each local date the instants the Sun's centre stands on the celestial
  horizon (true altitude 0°) at rising and setting, its true amplitude there, and the true bearing.
- :func:`twilight_bearing_bodies`: the body best for a compass bearing at each twilight: a bright
  star or planet low enough to be taken on the compass (3° to 25°; common practice: a low body is
  bearing-friendly on a compass whose sight vane tilts little).
- :func:`gyro_error_deg` (high or low), :func:`compass_error_deg` and
  :func:`deviation_deg` for a magnetic compass.
- :func:`deviation_coefficients`: the deviation on each compass heading by least squares to
  A + B sin h + C cos h + D sin 2h + E cos 2h, the approximate coefficients of the classical analysis
  of a ship's magnetism (Admiralty Manual of Navigation; Bowditch, "Magnetic compass adjustment";
  from memory), and :func:`deviation_card` the curve at every 15° of compass heading.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, NS_PER_MINUTE
from .corrections import dip_angle_arcmin, refraction_angle_arcmin
from .errors import NavredError
from .events import first_crossings
from .magnitudes import magnitudes
from .plan import sun_altitude_deg
from .reckoning import DRTrack
from .stars import known_bodies
from .triangle import computed_altitude_azimuth

#: A body is offered for a compass bearing between these altitudes (degrees; common practice).
BEARING_ALTITUDES_DEG = (3.0, 25.0)
#: The brightest bodies only (a compass's sight vane needs a star easy to find): magnitude 1.5 or brighter.
BEARING_MAGNITUDE = 1.5


def gyro_error_deg(gyro_bearing_deg: ArrayLike, true_bearing_deg: ArrayLike) -> np.ndarray:
    """The gyro compass's error (degrees): gyro − true, positive when the gyro reads HIGH (subtract it from a gyro
    reading), negative when LOW (add it) (common practice: "gyro high, subtract")."""
    return wrap_180(np.asarray(gyro_bearing_deg, dtype=float) - np.asarray(true_bearing_deg, dtype=float))


def azimuth_table(bodies: ArrayLike, track: DRTrack, start: object, end: object, step_minutes: float
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(instants datetime64[ns] (n,), Zn (bodies, n), Hc (bodies, n)) of ``bodies`` from the DR along
    ``track`` every ``step_minutes`` from ``start`` to ``end`` (both included when on the grid)."""
    if not 1.0 <= float(step_minutes) <= 240.0:
        raise NavredError(f"an interval of {step_minutes} minutes: give 1 to 240 minutes")
    first, last = np.datetime64(start, "ns"), np.datetime64(end, "ns")
    step = int(round(float(step_minutes) * NS_PER_MINUTE))
    count = int((last - first).astype(np.int64) // step) + 1
    if count < 1 or count > 10_000:
        raise NavredError("the azimuth table would have no row or more than 10,000: check the times and the interval")
    times = first + np.arange(count) * np.timedelta64(step, "ns")
    names = np.atleast_1d(np.asarray(bodies, dtype=object))
    lat, lon = track.position(times)
    p = places(np.repeat(names, count), np.tile(times, names.size))
    hc, zn = computed_altitude_azimuth(np.tile(lat, names.size), np.tile(lon, names.size), p.gha_deg, p.dec_deg)
    return times, zn.reshape(names.size, count), hc.reshape(names.size, count)


@dataclass(frozen=True)
class Amplitudes:
    """Per local date: the instants the Sun's centre is on the celestial horizon rising and setting (NaT when it
    is not), the DR latitude and the Sun's Dec then, the true amplitude (degrees, north +) and the true bearing."""

    rising_utc: np.ndarray
    setting_utc: np.ndarray
    rising_amplitude_deg: np.ndarray
    setting_amplitude_deg: np.ndarray
    rising_zn_deg: np.ndarray
    setting_zn_deg: np.ndarray


#: The Sun's centre is looked for on the celestial horizon within this many minutes of the sunrise or sunset
#: given, on a grid of this step (the one event search, :func:`navred.events.first_crossings`, refines it).
HORIZON_WINDOW_MINUTES, HORIZON_STEP_MINUTES = 120, 10


def _horizon_crossing(track: DRTrack, near: np.ndarray, rising: bool) -> np.ndarray:
    """The instant the Sun's centre crosses true altitude 0° within two hours of each instant (NaT where none)."""
    out = np.full(near.shape, np.datetime64("NaT"), dtype="datetime64[ns]")
    given = ~np.isnat(near)
    if not given.any():
        return out
    offsets = np.arange(-HORIZON_WINDOW_MINUTES, HORIZON_WINDOW_MINUTES + 1, HORIZON_STEP_MINUTES) * NS_PER_MINUTE
    grid = near[given].astype(np.int64)[:, None] + offsets[None, :]

    def altitude(t_ns):
        return sun_altitude_deg(np.asarray(t_ns, dtype=np.int64).astype("datetime64[ns]"), track)

    up, down = first_crossings(altitude, grid, 0.0, rising=rising, falling=not rising)
    out[given] = (up if rising else down).astype("datetime64[ns]")
    return out


def amplitudes(events: dict) -> Amplitudes:
    """True amplitudes of the Sun at rising and setting on each date of :func:`navred.plan.voyage_events`.

    The amplitude is measured when the Sun's centre is on the celestial horizon, a little above the
    visible horizon (its lower limb about half a diameter up; common practice); there sin A = sin δ /
    cos φ (:func:`navred.plan.amplitude_deg`). Rising bearing 090° − A, setting 270° + A.
    """
    track = events["track"]
    rising = _horizon_crossing(track, events["sunrise"], rising=True)
    setting = _horizon_crossing(track, events["sunset"], rising=False)
    out = {}
    for name, when in (("rising", rising), ("setting", setting)):
        ok = ~np.isnat(when)
        amplitude = np.full(when.shape, np.nan)
        if ok.any():
            lat, _ = track.position(when[ok])
            amplitude[ok] = amplitude_deg(places("Sun", when[ok]).dec_deg, lat, 0.0)
        out[name] = amplitude
    return Amplitudes(rising, setting, out["rising"], out["setting"],
                      np.asarray(wrap_360(90.0 - out["rising"])), np.asarray(wrap_360(270.0 + out["setting"])))


def twilight_bearing_bodies(utc64: ArrayLike, track: DRTrack) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For each instant: the brightest star or planet between :data:`BEARING_ALTITUDES_DEG` (magnitude
    :data:`BEARING_MAGNITUDE` or brighter), its Zn and Hc; '' and NaN where none."""
    when = np.atleast_1d(np.asarray(utc64, dtype="datetime64[ns]"))
    names = np.array([b for b in known_bodies() if b not in ("Sun", "Moon")], dtype=object)
    grid_names = np.broadcast_to(names[None, :], (when.size, names.size))
    grid_when = np.broadcast_to(when[:, None], grid_names.shape)
    lat, lon = track.position(when)
    p = places(grid_names.ravel(), grid_when.ravel())
    hc, zn = computed_altitude_azimuth(np.repeat(lat, names.size), np.repeat(lon, names.size), p.gha_deg, p.dec_deg)
    hc, zn = hc.reshape(grid_names.shape), zn.reshape(grid_names.shape)
    mag = magnitudes(grid_names.ravel(), grid_when.ravel()).reshape(grid_names.shape)
    low, high = BEARING_ALTITUDES_DEG
    usable = (hc >= low) & (hc <= high) & (mag <= BEARING_MAGNITUDE)
    score = np.where(usable, mag, np.inf)
    best = np.argmin(score, axis=1)
    rows = np.arange(when.size)
    found = np.isfinite(score[rows, best])
    return (np.where(found, names[best], ""), np.where(found, zn[rows, best], np.nan),
            np.where(found, hc[rows, best], np.nan))


@dataclass(frozen=True)
class DeviationCurve:
    """The deviation (degrees, east +) on compass heading h: A + B sin h + C cos h + D sin 2h + E cos 2h, the
    coefficients fitted (those the headings cannot determine are 0 and named in ``unfitted``), the residual of
    each observation and their RMS (degrees)."""

    a_deg: float
    b_deg: float
    c_deg: float
    d_deg: float
    e_deg: float
    residual_deg: np.ndarray
    rms_deg: float
    unfitted: tuple[str, ...]

    def deviation_deg(self, compass_heading_deg: ArrayLike) -> np.ndarray:
        h = np.radians(np.asarray(compass_heading_deg, dtype=float))
        return (self.a_deg + self.b_deg * np.sin(h) + self.c_deg * np.cos(h) + self.d_deg * np.sin(2 * h)
                + self.e_deg * np.cos(2 * h))


#: Headings closer than this (degrees) count as one heading when judging what the observations can determine.
_DISTINCT_DEG = 20.0


def deviation_coefficients(compass_heading_deg: ArrayLike, deviation: ArrayLike) -> DeviationCurve:
    """The deviation curve by least squares from observed deviations on compass headings.

    Five coefficients need observations on at least five headings spread round the card (at least
    20° apart); with three or four, A, B and C only (the semicircular and constant parts); with one
    or two, A only (their mean); none is refused.
    """
    h = np.radians(np.asarray(compass_heading_deg, dtype=float))
    d = np.asarray(deviation, dtype=float)
    ok = np.isfinite(h) & np.isfinite(d)
    if not ok.any():
        raise NavredError("no deviation observed on any heading: a deviation card needs magnetic compass "
                          "observations with the ship's compass heading and the variation")
    h, d = h[ok], d[ok]
    headings = np.sort(wrap_360(np.degrees(h)))
    gaps = np.diff(np.concatenate([headings, headings[:1] + 360.0]))
    distinct = max(int(np.sum(gaps >= _DISTINCT_DEG)), 1)
    columns = [np.ones_like(h), np.sin(h), np.cos(h), np.sin(2 * h), np.cos(2 * h)]
    names = ("A", "B", "C", "D", "E")
    used = 5 if distinct >= 5 else 3 if distinct >= 3 else 1
    solution = np.linalg.lstsq(np.column_stack(columns[:used]), d, rcond=None)[0]
    values = np.zeros(5)
    values[:used] = solution
    fitted = np.column_stack(columns) @ values
    residual = np.full(ok.shape, np.nan)
    residual[ok] = d - fitted
    rms = float(np.sqrt(np.mean((d - fitted) ** 2)))
    return DeviationCurve(*map(float, values), residual, rms, names[used:])


def true_course_deg(compass_deg: ArrayLike, deviation_deg: ArrayLike, variation_deg: ArrayLike) -> np.ndarray:
    """The true course (degrees) of a compass course: compass + deviation + variation, each east + and west −
    (the navigation manuals' rule, common practice).

    >>> float(true_course_deg(240.0, 3.0, -12.0))
    231.0
    """
    return wrap_360(np.asarray(compass_deg, dtype=float) + np.asarray(deviation_deg, dtype=float)
                    + np.asarray(variation_deg, dtype=float))


def deviation_card(curve: DeviationCurve, step_deg: float = 15.0) -> tuple[np.ndarray, np.ndarray]:
    """(compass headings every ``step_deg`` from 000°, the deviation on each, degrees east +)."""
    headings = np.arange(0.0, 360.0, step_deg)
    return headings, curve.deviation_deg(headings)



#: The lowest true altitude at which a body's centre can still be seen on the horizon, degrees: the
#: refraction at the horizon (34′) and the dip of a high bridge (about 6′) (common practice).
LOWEST_VISIBLE_DEG = -1.0


def amplitude_deg(dec_deg: ArrayLike, lat_deg: ArrayLike, altitude_deg: ArrayLike = 0.0) -> np.ndarray:
    """Amplitude (degrees, positive toward north) of a body at the given true altitude.

    At true rising or setting (altitude 0) sin A = sin δ / cos φ (common practice); at any
    altitude, exactly, cos Z = (sin δ − sin φ sin h) / (cos φ cos h) with A = 90° − Z.
    Rising bearing = 090° − A, setting bearing = 270° + A. NaN where the body does not
    reach that altitude.
    """
    phi = np.radians(np.asarray(lat_deg, dtype=float))
    dec = np.radians(np.asarray(dec_deg, dtype=float))
    h = np.radians(np.asarray(altitude_deg, dtype=float))
    cos_z = (np.sin(dec) - np.sin(phi) * np.sin(h)) / (np.cos(phi) * np.cos(h))
    with np.errstate(invalid="ignore"):
        return np.where(np.abs(cos_z) <= 1.0, 90.0 - np.degrees(np.arccos(np.clip(cos_z, -1, 1))), np.nan)


def visible_horizon_altitude_deg(eye_height_m: ArrayLike = 0.0) -> np.ndarray:
    """True altitude of a body's centre when it appears on the visible sea horizon (degrees).

    The apparent altitude is −dip; refraction there (Bennett at −dip) lowers the true
    altitude further: h = −dip − R(−dip). At sea level −34.5′.
    """
    apparent = -dip_angle_arcmin(eye_height_m) / ARCMIN_PER_DEG
    return apparent - refraction_angle_arcmin(np.maximum(apparent, -1.0)) / ARCMIN_PER_DEG


def true_azimuth(body: str, utc: object, lat_deg: ArrayLike, lon_deg: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """True azimuth Zn and computed altitude Hc (degrees) of a body at instants and positions."""
    p = places(body, utc)
    hc, zn = computed_altitude_azimuth(lat_deg, lon_deg, p.gha_deg, p.dec_deg)
    return zn, hc


def compass_check(body: str, utc: object, lat_deg: float, lon_deg: float) -> tuple[float, float]:
    """The true azimuth Zn and altitude Hc (degrees) of a body whose bearing was taken, or refuse it.

    A body below the horizon cannot have been seen: a bearing "of" it is of something else, or
    the time or DR is wrong. Refused below :data:`LOWEST_VISIBLE_DEG`.
    """
    zn, hc = true_azimuth(body, utc, lat_deg, lon_deg)
    zn, hc = float(np.ravel(zn)[0]), float(np.ravel(hc)[0])
    if hc < LOWEST_VISIBLE_DEG:
        raise NavredError(f"{body} is {abs(hc):.1f}° below the horizon at that time and position: it cannot have "
                          "been seen, so its bearing cannot check the compass; check the time (UTC), the DR and "
                          "the body")
    return zn, hc


def compass_error_deg(true_bearing_deg: ArrayLike, compass_bearing_deg: ArrayLike) -> np.ndarray:
    """Compass error (degrees, east positive): true − compass ("compass least, error east")."""
    return wrap_180(np.asarray(true_bearing_deg, dtype=float) - np.asarray(compass_bearing_deg, dtype=float))


def deviation_deg(compass_error: ArrayLike, variation_deg: ArrayLike) -> np.ndarray:
    """Deviation (degrees, east positive) = compass error − variation (variation east positive)."""
    return wrap_180(np.asarray(compass_error, dtype=float) - np.asarray(variation_deg, dtype=float))

__all__ = ["BEARING_ALTITUDES_DEG", "BEARING_MAGNITUDE", "gyro_error_deg", "azimuth_table", "Amplitudes", "amplitudes",
           "twilight_bearing_bodies", "DeviationCurve", "deviation_coefficients", "deviation_card", "true_course_deg"]
