"""Before and beside the sight: twilight, the sight plan, meridian passage, compass checks,
identifying an unknown body.

Core code (numpy, and navred's own almanac and triangle). Times are numpy datetime64[ns]
UTC. A vessel's DR track is a rhumb line from a starting position at a course and speed
(mid-latitude sailing); every function that takes a position also takes the track.
Everything is vectorised over days and instants: a 60-day passage is planned in one go.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180
from .constants import ARCMIN_PER_DEG
from .corrections import DIP_ARCMIN_PER_SQRT_M, refraction_arcmin
from .errors import NavredError, api_boundary
from .fix import velocity_kn
from .sailings import rhumb_destination
from .stars import SOLAR_SYSTEM, known_bodies, star_table
from .timescales import utc_jd_to_datetime64, utc_julian_date
from .triangle import computed_altitude_azimuth

#: Geocentric altitude of the Sun's centre at sunrise and sunset seen from sea level:
#: refraction at the horizon 34′ and the semi-diameter 16′ (common practice; the almanac's value).
SUNRISE_ALTITUDE_DEG = -50.0 / 60.0
CIVIL_DEG, NAUTICAL_DEG = -6.0, -12.0
_NS_PER_HOUR = 3_600_000_000_000
SAMPLE_MINUTES = 10
EVENT_KEYS = ("nautical_dawn", "civil_dawn", "sunrise", "meridian_passage", "sunset", "civil_dusk",
              "nautical_dusk")


@dataclass(frozen=True)
class Track:
    """A DR track: a start position and time, and a course and speed (both may be zero)."""

    lat_deg: float
    lon_deg: float
    start: np.datetime64
    course_deg: float = 0.0
    speed_kn: float = 0.0

    def position(self, utc64):
        """DR latitude and longitude (degrees) at the instants ``utc64`` (datetime64 array)."""
        hours = (np.asarray(utc64, dtype="datetime64[ns]") - self.start).astype(np.int64) / _NS_PER_HOUR
        # the rhumb line steered, on the WGS 84 ellipsoid (hours before the start run it backwards)
        return rhumb_destination(self.lat_deg, self.lon_deg, np.where(hours >= 0, self.course_deg,
                                                                      self.course_deg + 180.0),
                                 np.abs(hours) * self.speed_kn)

    @property
    def lon_rate_deg_per_hour(self) -> float:
        _, ve = velocity_kn(self.course_deg, self.speed_kn)
        return float(ve / ARCMIN_PER_DEG / max(math.cos(math.radians(self.lat_deg)), 0.01))


def as_datetime64(value) -> np.datetime64:
    """One instant in any form navred accepts, as datetime64[ns] UTC (numpy datetime64 is UTC)."""
    if isinstance(value, np.datetime64):
        return value.astype("datetime64[ns]")
    return utc_jd_to_datetime64(*utc_julian_date(value))[()]


def _local_midnight(date, lon_deg: float) -> np.datetime64:
    """00:00 local mean time at the longitude on the civil ``date`` ('2026-03-26'), as UTC."""
    from .timework import parse_date

    if isinstance(date, np.datetime64):
        date = str(date.astype("datetime64[D]"))
    year, month, day_of_month = parse_date(date if isinstance(date, str) else date, declarable=False)
    day = np.datetime64(f"{year:04d}-{month:02d}-{day_of_month:02d}", "D").astype("datetime64[ns]")
    return day - np.timedelta64(int(round(lon_deg / 15.0 * _NS_PER_HOUR)), "ns")


def sun_altitude_deg(utc64: object, track: Track) -> np.ndarray:
    """Geocentric altitude (degrees) of the Sun's centre from the DR at the instants."""
    when = np.asarray(utc64, dtype="datetime64[ns]")
    lat, lon = track.position(when)
    sun = places("Sun", when.ravel())
    hc, _ = computed_altitude_azimuth(lat.ravel(), lon.ravel(), sun.gha_deg, sun.dec_deg)
    return np.asarray(hc).reshape(when.shape)


def _crossings(day_starts, track: Track, thresholds_deg):
    """For each day and threshold: the first rising and the first setting crossing (NaT if none)."""
    steps = np.arange(0, 24 * 60 + SAMPLE_MINUTES, SAMPLE_MINUTES)
    times = day_starts[:, None] + (steps * 60_000_000_000).astype("timedelta64[ns]")[None, :]
    altitude = sun_altitude_deg(times, track)
    rising, setting = {}, {}
    for name, threshold in thresholds_deg.items():
        above = altitude > np.asarray(threshold)[..., None] if np.ndim(threshold) else altitude > threshold
        up = ~above[:, :-1] & above[:, 1:]
        down = above[:, :-1] & ~above[:, 1:]
        rising[name] = _refine(times, up, track, threshold, rising=True)
        setting[name] = _refine(times, down, track, threshold, rising=False)
    return rising, setting, times, altitude


def _refine(times, mask, track, threshold, rising: bool, iterations: int = 14):
    """Bisection of each day's first crossing to about a tenth of a second (NaT where none)."""
    has = mask.any(axis=1)
    first = np.argmax(mask, axis=1)
    rows = np.arange(times.shape[0])
    lo, hi = times[rows, first].copy(), times[rows, first + 1].copy()
    out = np.full(times.shape[0], np.datetime64("NaT"), dtype="datetime64[ns]")
    if not has.any():
        return out
    lo, hi = lo[has], hi[has]
    level = np.broadcast_to(np.asarray(threshold, dtype=float), times.shape[:1])[has]
    for _ in range(iterations):
        mid = lo + (hi - lo) // 2
        above = sun_altitude_deg(mid, track) > level
        # before a rising the Sun is below; before a setting it is above
        move_lo = ~above if rising else above
        lo = np.where(move_lo, mid, lo)
        hi = np.where(move_lo, hi, mid)
    out[has] = lo + (hi - lo) // 2
    return out


def meridian_passage_utc(body: str, day_starts: object, track: Track, lower: bool = False) -> np.ndarray:
    """UTC of a body's upper (or lower) meridian passage after each day start (datetime64 array).

    Newton's method on the local hour angle at the moving DR: the LHA changes at the body's
    GHA rate plus the vessel's rate in longitude.
    """
    starts = np.asarray(day_starts, dtype="datetime64[ns]")
    rate = 15.041 if body not in SOLAR_SYSTEM else 15.0  # degrees of LHA an hour (common practice)
    rate += track.lon_rate_deg_per_hour
    guess = starts + np.timedelta64(12 * _NS_PER_HOUR, "ns")
    target = 180.0 if lower else 0.0
    for _ in range(6):
        lat, lon = track.position(guess)
        p = places(body, guess)
        lha = wrap_180(p.gha_deg + lon - target)
        guess = guess - (lha / rate * _NS_PER_HOUR).astype(np.int64).astype("timedelta64[ns]")
    # bring each passage into its day (a body transits once in about 24 hours)
    day = np.timedelta64(24 * _NS_PER_HOUR, "ns") * (360.0 / 360.9856 if body not in SOLAR_SYSTEM else 1.0)
    early = guess < starts
    guess = np.where(early, guess + day.astype("timedelta64[ns]"), guess)
    return guess


@api_boundary
def sun_events(date: str | np.datetime64, lat_deg: float, lon_deg: float, eye_height_m: float = 0.0,
               course_deg: float = 0.0, speed_kn: float = 0.0) -> dict:
    """Twilights, sunrise, meridian passage and sunset on the local civil ``date`` (UTC instants).

    ``date`` is the civil date at the longitude (local mean time); the position is the DR at
    00:00 local time, moving on ``course_deg`` at ``speed_kn``. Sunrise and sunset are the
    Sun's upper limb on the visible horizon: its centre at −50′ (34′ refraction, 16′
    semi-diameter; common practice) less the dip for ``eye_height_m``. Civil and nautical
    twilight: the centre 6° and 12° below the horizon. A key is None when the event does
    not happen that day (midnight sun, polar night, white nights).
    """
    events = voyage_events(date, 1, lat_deg, lon_deg, eye_height_m=eye_height_m,
                           course_deg=course_deg, speed_kn=speed_kn)
    return {key: (None if np.isnat(events[key][0]) else events[key][0]) for key in EVENT_KEYS}


def _number(value, what: str) -> float:
    """One number given to the planner, or a NavredError naming it."""
    if isinstance(value, (bool, str, bytes)) or np.ndim(value) != 0:
        raise NavredError(f"{what} {value!r} is not a number")
    try:
        return float(value)
    except (TypeError, ValueError):
        raise NavredError(f"{what} {value!r} is not a number") from None


def _check_position(lat_deg, lon_deg):
    lat_deg, lon_deg = _number(lat_deg, "latitude"), _number(lon_deg, "longitude")
    if not (np.isfinite(lat_deg) and -90.0 <= lat_deg <= 90.0):
        raise NavredError(f"latitude {lat_deg!r} is outside -90 to 90°")
    if not (np.isfinite(lon_deg) and -180.0 <= lon_deg <= 360.0):
        raise NavredError(f"longitude {lon_deg!r} is outside -180 to 180°")


def voyage_events(first_date: object, days: int, lat_deg: float, lon_deg: float, *, eye_height_m: float = 0.0,
                  course_deg: float = 0.0, speed_kn: float = 0.0) -> dict:
    """:func:`sun_events` for ``days`` consecutive local dates along a DR track, as arrays."""
    _check_position(lat_deg, lon_deg)
    lat_deg, lon_deg = float(lat_deg), float(lon_deg)
    eye_height_m = _number(eye_height_m, "height of eye")
    course_deg, speed_kn = _number(course_deg, "course"), _number(speed_kn, "speed")
    if not 0.0 <= eye_height_m <= 1000.0:
        raise NavredError(f"height of eye {eye_height_m!r} m is outside 0-1000 m")
    start = _local_midnight(first_date, lon_deg)
    track = Track(lat_deg, lon_deg, start, course_deg, speed_kn)
    # each day starts at local midnight at that day's DR longitude (near enough: iterate once)
    day_starts = start + np.arange(days) * np.timedelta64(24 * _NS_PER_HOUR, "ns")
    _, lons = track.position(day_starts)
    shift = ((wrap_180(lons - lon_deg)) / 15.0 * _NS_PER_HOUR).astype(np.int64).astype("timedelta64[ns]")
    day_starts = day_starts - shift
    dip_deg = DIP_ARCMIN_PER_SQRT_M * math.sqrt(eye_height_m) / ARCMIN_PER_DEG
    rising, setting, _, _ = _crossings(day_starts, track, {
        "sunrise": SUNRISE_ALTITUDE_DEG - dip_deg, "civil": CIVIL_DEG, "nautical": NAUTICAL_DEG})
    noon = meridian_passage_utc("Sun", day_starts, track)
    return {"date": (day_starts + np.timedelta64(12 * _NS_PER_HOUR, "ns")).astype("datetime64[D]"),
            "nautical_dawn": rising["nautical"], "civil_dawn": rising["civil"], "sunrise": rising["sunrise"],
            "meridian_passage": noon, "sunset": setting["sunrise"], "civil_dusk": setting["civil"],
            "nautical_dusk": setting["nautical"], "track": track}


def noon_sight(date: object, lat_deg: float, lon_deg: float, course_deg: float = 0.0, speed_kn: float = 0.0) -> dict:
    """Local apparent noon at the moving DR and the Sun's predicted altitude then (for presetting).

    Returns ``utc``, ``lat_deg``, ``lon_deg`` (the DR then), ``hc_deg`` (geocentric altitude of
    the centre, 90° − |φ − δ|) and ``bearing`` ('N' or 'S', where to look).
    """
    events = voyage_events(date, 1, lat_deg, lon_deg, course_deg=course_deg, speed_kn=speed_kn)
    return body_meridian_passage("Sun", events["meridian_passage"][0], events["track"])


def body_meridian_passage(body: str, near_utc: object, track: Track) -> dict:
    """A body's upper meridian passage nearest ``near_utc`` at the DR, and its altitude then."""
    start = np.asarray([as_datetime64(near_utc) - np.timedelta64(12 * _NS_PER_HOUR, "ns")])
    utc = meridian_passage_utc(body, start, track)[0]
    lat, lon = track.position(np.array([utc]))
    p = places(body, np.array([utc]))
    hc, zn = computed_altitude_azimuth(lat, lon, p.gha_deg, p.dec_deg)
    return {"utc": utc, "lat_deg": float(lat[0]), "lon_deg": float(lon[0]), "hc_deg": float(hc[0]),
            "dec_deg": float(p.dec_deg[0]), "bearing": "N" if (zn[0] < 90 or zn[0] > 270) else "S"}


# --- Magnitudes -----------------------------------------------------------------------------

#: V(1,0) and phase coefficients, J. Meeus, Astronomical Algorithms (2nd ed., 1998), ch. 41
#: (from memory). Saturn's rings are left out (up to about ±0.8 mag): these magnitudes only rank.
_PLANET_MAGNITUDE = {"Venus": (-4.40, 0.0009, 0.000239, -0.00000065), "Mars": (-1.52, 0.016, 0.0, 0.0),
                     "Jupiter": (-9.40, 0.005, 0.0, 0.0), "Saturn": (-8.88, 0.0, 0.0, 0.0)}
MOON_MAGNITUDE = -11.0  # a rough figure for ranking (common practice: -12.7 full, about -10 at quarter)
SUN_MAGNITUDE = -26.7
#: A planet this bright or brighter can be found in daylight with a preset sextant (common practice;
#: from memory): Venus always, Jupiter and Mars near opposition.
DAYLIGHT_MAGNITUDE = -2.0
#: Two lines of position crossing at less than this make a weak fix (common practice).
DAY_CROSSING_DEG = 30.0
#: The lowest true altitude at which a body's centre can still be seen on the horizon, degrees: the
#: refraction at the horizon (34′) and the dip of a high bridge (about 6′) (common practice).
LOWEST_VISIBLE_DEG = -1.0


def magnitudes(bodies: ArrayLike, utc64: object) -> np.ndarray:
    """Visual magnitude of each (body, instant): stars from the catalogue (Hipparcos Hp),
    planets from their distances and phase angle, the Sun and Moon as fixed figures."""
    names = np.asarray(bodies, dtype=object)
    when = np.broadcast_to(np.asarray(utc64, dtype="datetime64[ns]"), names.shape)
    table = star_table()
    index = {name: i for i, name in enumerate(table.name)}
    out = np.array([table.magnitude[index[n]] if n in index else np.nan for n in names.ravel()]).reshape(names.shape)
    out = np.where(names == "Sun", SUN_MAGNITUDE, np.where(names == "Moon", MOON_MAGNITUDE, out))
    for planet, (v10, a1, a2, a3) in _PLANET_MAGNITUDE.items():
        rows = names == planet
        if rows.any():
            geo = places(planet, when[rows])
            sun = places("Sun", when[rows])
            delta_au = geo.distance_km / 149597870.7
            earth_sun_au = sun.distance_km / 149597870.7
            # heliocentric distance from the triangle Sun-Earth-planet (elongation from the places)
            cos_e = (np.sin(np.radians(geo.dec_deg)) * np.sin(np.radians(sun.dec_deg))
                     + np.cos(np.radians(geo.dec_deg)) * np.cos(np.radians(sun.dec_deg))
                     * np.cos(np.radians(15.0 * (geo.ra_hours - sun.ra_hours))))
            r_au = np.sqrt(delta_au**2 + earth_sun_au**2 - 2 * delta_au * earth_sun_au * cos_e)
            cos_i = (r_au**2 + delta_au**2 - earth_sun_au**2) / (2 * r_au * delta_au)
            i = np.degrees(np.arccos(np.clip(cos_i, -1, 1)))
            out[rows] = v10 + 5 * np.log10(r_au * delta_au) + a1 * i + a2 * i**2 + a3 * i**3
    return out


# --- The sight plan ----------------------------------------------------------------------------

def position_dop(zn_deg: ArrayLike) -> np.ndarray:
    """Position dilution of precision of sets of sights from their azimuths, shape (..., k) -> (...).

    Each sight's line: [cos Zn, sin Zn, 1], the third unknown a common altitude error (the
    observer's personal error and any refraction anomaly), so that bodies spread round the
    whole horizon score best (common practice). DOP = √(trace of the position part of
    (HᵀH)⁻¹); infinite for a set that cannot be solved.
    """
    z = np.radians(np.asarray(zn_deg, dtype=float))
    h = np.stack([np.cos(z), np.sin(z), np.ones_like(z)], axis=-1)
    normal = np.einsum("...ki,...kj->...ij", h, h)
    det = np.linalg.det(normal)
    ok = det > 1e-9
    inverse = np.linalg.inv(np.where(ok[..., None, None], normal, np.eye(3)))
    dop = np.sqrt(np.maximum(inverse[..., 0, 0] + inverse[..., 1, 1], 0.0))
    return np.where(ok, dop, np.inf)


def best_set(zn_deg: ArrayLike, magnitude: ArrayLike, count: int, valid: ArrayLike | None = None, tolerance: float = 0.05) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Indices of the recommended set of ``count`` bodies, its DOP and the least DOP found.

    Every set of ``count`` among the candidates is scored by :func:`position_dop`; of the sets
    within ``tolerance`` (5 %) of the least DOP the brightest (least summed magnitude) is
    chosen. ``zn_deg``, ``magnitude``, ``valid`` have shape (plans, candidates); the search is
    vectorised over plans.
    """
    zn = np.atleast_2d(np.asarray(zn_deg, dtype=float))
    mag = np.atleast_2d(np.asarray(magnitude, dtype=float))
    valid = np.ones_like(zn, dtype=bool) if valid is None else np.atleast_2d(valid)
    m = zn.shape[1]
    if m < count:
        raise NavredError(f"{m} candidate bodies: a set of {count} needs at least {count}")
    combos = np.array(list(itertools.combinations(range(m), count)), dtype=int)
    dop = position_dop(zn[:, combos])  # (plans, combos)
    usable = valid[:, combos].all(axis=-1)
    dop = np.where(usable, dop, np.inf)
    least = dop.min(axis=1)
    near = dop <= least[:, None] * (1.0 + tolerance)
    brightness = np.where(near, mag[:, combos].sum(axis=-1), np.inf)
    score = np.where(near, brightness + dop * 1e-6, np.inf)
    choice = np.argmin(score, axis=1)
    plans = np.arange(zn.shape[0])
    return combos[choice], dop[plans, choice], least


@dataclass
class SightPlan:
    """The bodies to shoot at one instant from the DR, and the recommended set."""

    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    body: np.ndarray
    hc_deg: np.ndarray
    zn_deg: np.ndarray
    magnitude: np.ndarray
    moon_separation_deg: np.ndarray
    recommended: np.ndarray  # bool per candidate
    dop: float
    explanation: str


def _separation_deg(dec1, ra1_h, dec2, ra2_h):
    d1, d2 = np.radians(dec1), np.radians(dec2)
    cos_s = np.sin(d1) * np.sin(d2) + np.cos(d1) * np.cos(d2) * np.cos(np.radians(15.0 * (ra1_h - ra2_h)))
    return np.degrees(np.arccos(np.clip(cos_s, -1, 1)))


def sight_plans(utc64: object, lat_deg: ArrayLike, lon_deg: ArrayLike, *, min_alt_deg: float = 15.0, max_alt_deg: float = 70.0,
                count: int = 3, moon_clear_deg: float = 15.0, max_candidates: int | None = None) -> list[SightPlan]:
    """A sight plan at each instant (vectorised over instants and bodies).

    Candidates: every navigational star, planet and the Moon with Hc within the limits;
    bodies within ``moon_clear_deg`` of the Moon are left out of the recommended set (its
    glare spoils the horizon and the star). The ``max_candidates`` brightest candidates
    (default 18 for sets of 3 or 4, 15 for sets of 5: 816, 3,060 and 3,003 sets) are
    searched exhaustively for the set of ``count`` (3, 4 or 5) with the least position DOP,
    preferring the brightest among near-equal sets (see :func:`best_set`).
    """
    if count not in (3, 4, 5):
        raise NavredError(f"a recommended set has 3, 4 or 5 bodies, not {count}")
    if max_candidates is None:
        max_candidates = 15 if count == 5 else 18
    if not 0.0 <= min_alt_deg < max_alt_deg <= 90.0:
        raise NavredError(f"altitude limits {min_alt_deg}-{max_alt_deg}° must satisfy 0 ≤ min < max ≤ 90")
    when = np.atleast_1d(np.asarray(utc64, dtype="datetime64[ns]"))
    lat = np.broadcast_to(np.asarray(lat_deg, dtype=float), when.shape)
    lon = np.broadcast_to(np.asarray(lon_deg, dtype=float), when.shape)
    names = np.array(known_bodies(), dtype=object)
    n_plans, n_bodies = when.size, names.size
    grid_names = np.broadcast_to(names[None, :], (n_plans, n_bodies))
    grid_when = np.broadcast_to(when[:, None], (n_plans, n_bodies))
    p = places(grid_names.ravel(), grid_when.ravel())
    hc, zn = computed_altitude_azimuth(np.repeat(lat, n_bodies), np.repeat(lon, n_bodies), p.gha_deg, p.dec_deg)
    hc, zn = hc.reshape(n_plans, n_bodies), zn.reshape(n_plans, n_bodies)
    dec, ra = p.dec_deg.reshape(n_plans, n_bodies), p.ra_hours.reshape(n_plans, n_bodies)
    moon = int(np.flatnonzero(names == "Moon")[0])
    sun = int(np.flatnonzero(names == "Sun")[0])
    moon_sep = _separation_deg(dec, ra, dec[:, [moon]], ra[:, [moon]])
    moon_sep[:, moon] = 0.0
    mag = magnitudes(grid_names.ravel(), grid_when.ravel()).reshape(n_plans, n_bodies)
    # by day (the Sun's centre above the horizon) no star is shown: only the Sun, the Moon and the
    # planets bright enough to find in daylight with a preset sextant
    day = hc[:, sun] > 0.0
    daylight = np.isin(names, ["Sun", "Moon"]) | ((mag <= DAYLIGHT_MAGNITUDE) & np.isin(names, list(SOLAR_SYSTEM.values())))
    shown = np.where(day[:, None], daylight, names[None, :] != "Sun")
    in_limits = (hc >= min_alt_deg) & (hc <= max_alt_deg) & shown
    moon_up = hc[:, [moon]] > -1.0
    clear = (moon_sep >= moon_clear_deg) | ~moon_up
    clear[:, moon] = True
    clear &= ~day[:, None]  # the twilight set is chosen at twilight; by day the pair is chosen below
    # candidate slots: the brightest bodies within the limits and clear of the Moon
    order = np.argsort(np.where(in_limits & clear, mag, np.inf), axis=1, kind="stable")[:, :max_candidates]
    slots_valid = np.take_along_axis(in_limits & clear, order, axis=1)
    plans = []
    if slots_valid.sum(axis=1).max() >= count:
        chosen, dop, least = best_set(np.take_along_axis(zn, order, axis=1),
                                      np.take_along_axis(mag, order, axis=1), count, slots_valid)
    else:
        chosen = dop = least = None
    partner, crossing = day_pairs(hc, zn, in_limits & day[:, None], names)
    for k in range(n_plans):
        visible = np.flatnonzero(in_limits[k])
        recommended = np.zeros(visible.size, dtype=bool)
        if day[k]:
            if partner[k] >= 0:
                recommended = np.isin(visible, [sun, partner[k]])
                explanation = (f"by day: the Sun and {names[partner[k]]}, whose lines cross at {crossing[k]:.0f}° "
                               f"(the best crossing of the Sun with the Moon or a planet bright enough to see in "
                               f"daylight, magnitude {DAYLIGHT_MAGNITUDE:g} or brighter); no star is shown while "
                               "the Sun is up")
            else:
                explanation = (f"by day, and no body stands with the Sun between {min_alt_deg:g}° and "
                               f"{max_alt_deg:g}° with their lines crossing at {DAY_CROSSING_DEG:g}° or more: "
                               "a Sun line alone (see the daytime fix windows); no star is shown while the Sun is up")
            plans.append(SightPlan(when[k], float(lat[k]), float(lon[k]), names[visible], hc[k, visible],
                                   zn[k, visible], mag[k, visible], moon_sep[k, visible], recommended,
                                   float("inf"), explanation))
            continue
        if chosen is not None and np.isfinite(dop[k]):
            picked = order[k, chosen[k]]
            recommended = np.isin(visible, picked)
            explanation = (f"{', '.join(names[picked])}: position dilution of precision {dop[k]:.2f}; "
                           f"every set of {count} of the {int(slots_valid[k].sum())} brightest bodies between "
                           f"{min_alt_deg:g}° and {max_alt_deg:g}°"
                           f"{f' and at least {moon_clear_deg:g}° from the Moon' if moon_up[k, 0] else ''} was "
                           f"scored; the least DOP was {least[k]:.2f} and among sets within 5 % of it the "
                           "brightest was taken (DOP counts a common altitude error, so bodies spread round "
                           "the horizon win)")
        else:
            explanation = (f"fewer than {count} bodies between {min_alt_deg:g}° and {max_alt_deg:g}° "
                           "clear of the Moon: no set recommended")
        plans.append(SightPlan(when[k], float(lat[k]), float(lon[k]), names[visible], hc[k, visible],
                               zn[k, visible], mag[k, visible], moon_sep[k, visible], recommended,
                               float(dop[k]) if chosen is not None else float("inf"), explanation))
    return plans


def day_pairs(hc_deg: np.ndarray, zn_deg: np.ndarray, valid: np.ndarray, names: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each plan (row), the body that crosses the Sun's line best, and the crossing angle (degrees).

    The crossing angle of two lines of position is the difference of their azimuths folded into
    0-90°; a pair is useful from :data:`DAY_CROSSING_DEG` (common practice: below 30° the fix is
    weak). Returns the column of the partner (−1 for none) and the angle.
    """
    sun = int(np.flatnonzero(names == "Sun")[0])
    difference = np.abs(wrap_180(zn_deg - zn_deg[:, [sun]]))
    crossing = np.minimum(difference, 180.0 - difference)
    ok = valid & valid[:, [sun]] & (names[None, :] != "Sun") & (crossing >= DAY_CROSSING_DEG)
    score = np.where(ok, crossing, -1.0)
    best = np.argmax(score, axis=1)
    found = score[np.arange(score.shape[0]), best] >= 0
    return np.where(found, best, -1), np.where(found, crossing[np.arange(score.shape[0]), best], np.nan)


@dataclass
class DayWindow:
    """A stretch of daylight when the Sun and one other body give a fix."""

    body: str
    start: np.datetime64
    end: np.datetime64
    best: np.datetime64
    crossing_deg: float  # at the best time
    sun_hc_deg: float
    body_hc_deg: float


def daytime_fix_windows(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                        speed_kn: float = 0.0, min_alt_deg: float = 15.0, max_alt_deg: float = 70.0,
                        min_crossing_deg: float | None = None, step_minutes: float = 10.0) -> list[DayWindow]:
    """When, over the coming days, the Sun and the Moon, Venus or a bright planet make a daytime fix.

    Along the DR track, every ``step_minutes`` from 00:00 local time on ``first_date``: the Sun
    and the body both between the altitude limits and their lines crossing at
    ``min_crossing_deg`` (default :data:`DAY_CROSSING_DEG`) or more. Jupiter and Mars count only
    when at magnitude :data:`DAYLIGHT_MAGNITUDE` or brighter. Vectorised over the time grid.
    """
    limit = DAY_CROSSING_DEG if min_crossing_deg is None else min_crossing_deg
    _check_position(lat_deg, lon_deg)
    start = _local_midnight(first_date, lon_deg)
    step = np.timedelta64(int(step_minutes * 60e9), "ns")
    grid = start + np.arange(int(days * 1440 / step_minutes) + 1) * step
    track = Track(lat_deg, lon_deg, start, course_deg, speed_kn)
    lat, lon = track.position(grid)
    bodies = ["Moon", "Venus", "Jupiter", "Mars"]
    names = np.array(["Sun"] + bodies, dtype=object)
    grid_names = np.broadcast_to(names[None, :], (grid.size, names.size))
    grid_when = np.broadcast_to(grid[:, None], grid_names.shape)
    p = places(grid_names.ravel(), grid_when.ravel())
    hc, zn = computed_altitude_azimuth(np.repeat(lat, names.size), np.repeat(lon, names.size), p.gha_deg, p.dec_deg)
    hc, zn = hc.reshape(grid_names.shape), zn.reshape(grid_names.shape)
    mag = magnitudes(grid_names.ravel(), grid_when.ravel()).reshape(grid_names.shape)
    bright = np.isin(names, ["Sun", "Moon", "Venus"])[None, :] | (mag <= DAYLIGHT_MAGNITUDE)
    up = (hc >= min_alt_deg) & (hc <= max_alt_deg) & bright
    difference = np.abs(wrap_180(zn - zn[:, [0]]))
    crossing = np.minimum(difference, 180.0 - difference)
    good = up & up[:, [0]] & (crossing >= limit)
    windows = []
    for column, body in enumerate(bodies, start=1):
        mask = good[:, column].astype(int)
        edges = np.diff(np.concatenate([[0], mask, [0]]))
        for first, after in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)):
            part = slice(first, after)
            best = first + int(np.argmax(crossing[part, column]))
            windows.append(DayWindow(body, grid[first], grid[after - 1], grid[best], float(crossing[best, column]),
                                     float(hc[best, 0]), float(hc[best, column])))
    return sorted(windows, key=lambda w: w.start)


def twilight_plans(first_date: object, days: int, lat_deg: float, lon_deg: float, *, course_deg: float = 0.0,
                   speed_kn: float = 0.0, eye_height_m: float = 0.0, **plan_options) -> tuple[dict, list[SightPlan]]:
    """Twilight times and a sight plan for every morning and evening of a passage.

    Star sights are planned midway between civil and nautical twilight, when stars and
    horizon are both in view (common practice). Returns the events (see
    :func:`voyage_events`) and the plans, morning then evening for each day, skipping
    twilights that do not happen.
    """
    events = voyage_events(first_date, days, lat_deg, lon_deg, eye_height_m=eye_height_m,
                           course_deg=course_deg, speed_kn=speed_kn)
    times = []
    for dawn, dusk in ((events["nautical_dawn"], events["civil_dawn"]), (events["civil_dusk"], events["nautical_dusk"])):
        ok = ~np.isnat(dawn) & ~np.isnat(dusk)
        middle = np.where(ok, dawn + (dusk - dawn) // 2, np.datetime64("NaT"))
        times.append(middle)
    when = np.stack(times, axis=1).ravel()
    when = when[~np.isnat(when)]
    if when.size == 0:
        return events, []
    lat, lon = events["track"].position(when)
    return events, sight_plans(when, lat, lon, **plan_options)


# --- Compass checks ------------------------------------------------------------------------

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
    dip_arcmin = DIP_ARCMIN_PER_SQRT_M * np.sqrt(np.asarray(eye_height_m, dtype=float))
    apparent = -dip_arcmin / ARCMIN_PER_DEG
    return apparent - refraction_arcmin(np.maximum(apparent, -1.0)) / ARCMIN_PER_DEG


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


# --- Identifying an unknown body -----------------------------------------------------------

def identify(altitude_deg: float, azimuth_deg: float, utc: object, lat_deg: float, lon_deg: float, *,
             altitude_sigma_deg: float = 1.0, azimuth_sigma_deg: float = 3.0) -> dict:
    """Catalogue bodies ranked by how well they match an observed altitude and azimuth.

    The score is √((ΔH/σH)² + (ΔZ/σZ)²) with the expected errors of a rough observation
    (1° in altitude from a sextant read roughly, 3° in azimuth from a hand bearing
    compass); the lowest score ranks first. Returns arrays ``body``, ``hc_deg``, ``zn_deg``,
    ``altitude_difference_deg``, ``azimuth_difference_deg`` and ``score``, best first.
    """
    names = np.array(known_bodies(), dtype=object)
    p = places(names, np.full(names.size, as_datetime64(utc)))
    hc, zn = computed_altitude_azimuth(lat_deg, lon_deg, p.gha_deg, p.dec_deg)
    d_alt = altitude_deg - hc
    d_az = wrap_180(azimuth_deg - zn)
    score = np.hypot(d_alt / altitude_sigma_deg, d_az / azimuth_sigma_deg)
    order = np.argsort(score, kind="stable")
    return {"body": names[order], "hc_deg": hc[order], "zn_deg": zn[order],
            "altitude_difference_deg": d_alt[order], "azimuth_difference_deg": d_az[order],
            "score": score[order]}
