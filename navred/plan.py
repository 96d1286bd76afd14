"""The Sun's day along the DR: twilights, sunrise, meridian passage and sunset, and any body's meridian passage.

Core code (numpy, and navred's own almanac and triangle). Times are numpy datetime64[ns] UTC. A
vessel's track is a :class:`navred.reckoning.DRTrack` (one course and speed: :func:`steady_track`);
every event is found at the moving DR by the one event search (:mod:`navred.events`), vectorised
over days: a 60-day passage is worked in one go. The sight plan for each twilight is
:mod:`navred.sightplan`; the compass checks :mod:`navred.compass`; identifying a body
:mod:`navred.identify`.
"""

from __future__ import annotations

import numpy as np

from .almanac import places
from .angles import wrap_180
from .constants import (
    ARCMIN_PER_DEG,
    NS_PER_HOUR,
    NS_PER_MINUTE,
)
from .corrections import dip_angle_arcmin
from .errors import NavredError, api_boundary
from .events import first_crossings
from .reckoning import DRTrack, steady_track
from .timescales import utc_datetime64
from .triangle import computed_altitude_azimuth
from .vocabulary import COLUMN

#: Geocentric altitude of the Sun's centre at sunrise and sunset seen from sea level:
#: refraction at the horizon 34′ and the semi-diameter 16′ (common practice; the almanac's value).
SUNRISE_ALTITUDE_DEG = -50.0 / 60.0


CIVIL_DEG, NAUTICAL_DEG = -6.0, -12.0


SAMPLE_MINUTES = 10


EVENT_KEYS = ("nautical_dawn", "civil_dawn", "sunrise", "meridian_passage", "sunset", "civil_dusk",
              "nautical_dusk")


def local_midnight(date, lon_deg: float) -> np.datetime64:
    """00:00 local mean time at the longitude on the civil ``date`` ('2026-03-26'), as UTC."""
    from .timework import parse_date

    if isinstance(date, np.datetime64):
        date = str(date.astype("datetime64[D]"))
    year, month, day_of_month = parse_date(date if isinstance(date, str) else date, declarable=False)
    day = np.datetime64(f"{year:04d}-{month:02d}-{day_of_month:02d}", "D").astype("datetime64[ns]")
    return day - np.timedelta64(int(round(_east_of_180(lon_deg) / 15.0 * NS_PER_HOUR)), "ns")


def _east_of_180(lon_deg: float) -> float:
    """A longitude given from 0 to 360° (as :func:`check_position` takes it) as −180 to 180°: 190° E is 170° W.
    180° itself is kept as given (ZD −12 by the zone rule)."""
    lon = float(lon_deg)
    return lon - 360.0 if lon > 180.0 else lon


def zone_midnight(date, lon_deg: float, zone_h: float | None = None) -> np.datetime64:
    """00:00 zone time (the ship's clock) on the civil ``date`` ('2026-12-10'), as UTC: ZT + ZD = UTC, with ZD the
    zone description given (``zone_h``, hours, + west), else the nautical zone of the longitude (:func:`navred.reckoning.zone_description_h`: a boundary to the zone farther from Greenwich),
    ±12 at the date line (common practice; :func:`navred.reckoning.zone_description_h`).

    It is the instant a DR "at 00:00 of the first date" is given for: a navigator reads the time as the ship's
    clock, not local mean time (which is off it by up to half an hour, or more with a zone kept far off; 12 minutes
    at 177° E, 2.4′ of a 12-knot DR)."""
    from .reckoning import zone_description_h

    zd = float(zone_description_h(_east_of_180(lon_deg))) if zone_h is None else planner_number(zone_h, "zone description")
    if not (np.isfinite(zd) and -12.0 <= zd <= 12.0):
        raise NavredError(f"zone description {zd!r} is outside −12 to +12 hours")
    midnight = local_midnight(date, 0.0)
    return midnight + np.timedelta64(int(round(zd * NS_PER_HOUR)), "ns")


def sun_altitude_deg(utc64: object, track: DRTrack) -> np.ndarray:
    """Geocentric altitude (degrees) of the Sun's centre from the DR at the instants."""
    when = np.asarray(utc64, dtype="datetime64[ns]")
    lat, lon = track.position(when)
    sun = places("Sun", when.ravel())
    hc, _ = computed_altitude_azimuth(lat.ravel(), lon.ravel(), sun.gha_deg, sun.dec_deg)
    return np.asarray(hc).reshape(when.shape)


def _sun_crossings(day_starts: np.ndarray, track: DRTrack, thresholds_deg: dict) -> tuple[dict, dict]:
    """For each day and threshold: the first rising and the first setting of the Sun's centre through it
    (NaT if none), by the one event search (:func:`navred.events.first_crossings`) on a grid every
    :data:`SAMPLE_MINUTES` of the day."""
    steps = np.arange(0, 24 * 60 + SAMPLE_MINUTES, SAMPLE_MINUTES)
    grid = day_starts.astype(np.int64)[:, None] + steps[None, :] * NS_PER_MINUTE

    def altitude(t_ns):
        return sun_altitude_deg(np.asarray(t_ns, dtype=np.int64).astype("datetime64[ns]"), track)

    names = list(thresholds_deg)
    rising, setting = first_crossings(altitude, grid, [thresholds_deg[n] for n in names])
    return ({n: rising[k].astype("datetime64[ns]") for k, n in enumerate(names)},
            {n: setting[k].astype("datetime64[ns]") for k, n in enumerate(names)})


#: A meridian passage is searched in the day after each day start and a little more (a ship running west
#: lengthens her day by up to about an hour), on a grid of this many hours: the hour angle moves 15° an hour,
#: so that one sample step never holds two passages.
PASSAGE_WINDOW_HOURS, PASSAGE_STEP_HOURS = 26, 2


def meridian_passage_utc(body: str, day_starts: object, track: DRTrack, lower: bool = False) -> np.ndarray:
    """UTC of a body's upper (or lower) meridian passage: the first after each day start (datetime64 array).

    The instant the local hour angle at the moving DR passes 0° (180° for the lower passage), found by
    the one event search (:func:`navred.events.first_crossings`) on LHA − 0° (or 180°) wrapped to ±180°,
    rising through zero.
    """
    starts = np.atleast_1d(np.asarray(day_starts, dtype="datetime64[ns]"))
    target = 180.0 if lower else 0.0
    hours = np.arange(0, PASSAGE_WINDOW_HOURS + PASSAGE_STEP_HOURS, PASSAGE_STEP_HOURS)
    grid = starts.astype(np.int64)[:, None] + hours[None, :] * NS_PER_HOUR

    def hour_angle(t_ns):
        when = np.asarray(t_ns, dtype=np.int64).astype("datetime64[ns]")
        _, lon = track.position(when.ravel())
        p = places(body, when.ravel())
        return wrap_180(p.gha_deg + lon - target).reshape(when.shape)

    passage, _ = first_crossings(hour_angle, grid, 0.0, falling=False)
    return passage.astype("datetime64[ns]")


@api_boundary
def sun_events(date: str | np.datetime64, lat_deg: float, lon_deg: float, eye_height_m: float = 0.0,
               course_deg: float = 0.0, speed_kn: float = 0.0, zone_h: float | None = None) -> dict:
    """Twilights, sunrise, meridian passage and sunset on the local civil ``date`` (UTC instants).

    ``date`` is the civil date at the longitude (the day searched runs from 00:00 local mean time); the
    position is the DR at 00:00 zone time of ``date`` (:func:`zone_midnight`: the zone ``zone_h`` given, else
    the longitude's), moving on ``course_deg`` at ``speed_kn``. Sunrise and sunset are the
    Sun's upper limb on the visible horizon: its centre at −50′ (34′ refraction, 16′
    semi-diameter; common practice) less the dip for ``eye_height_m``. Civil and nautical
    twilight: the centre 6° and 12° below the horizon. A key is None when the event does
    not happen that day (midnight sun, polar night, white nights).
    """
    events = voyage_events(date, 1, lat_deg, lon_deg, eye_height_m=eye_height_m,
                           course_deg=course_deg, speed_kn=speed_kn, zone_h=zone_h)
    return {key: (None if np.isnat(events[key][0]) else events[key][0]) for key in EVENT_KEYS}


def planner_number(value, what: str) -> float:
    """One number given to the planner, or a NavredError naming it."""
    if isinstance(value, (bool, str, bytes)) or np.ndim(value) != 0:
        raise NavredError(f"{what} {value!r} is not a number")
    try:
        return float(value)
    except (TypeError, ValueError):
        raise NavredError(f"{what} {value!r} is not a number") from None


def check_position(lat_deg, lon_deg):
    lat_deg, lon_deg = planner_number(lat_deg, "latitude"), planner_number(lon_deg, "longitude")
    if not (np.isfinite(lat_deg) and -90.0 <= lat_deg <= 90.0):
        raise NavredError(f"latitude {lat_deg!r} is outside -90 to 90°")
    if not (np.isfinite(lon_deg) and -180.0 <= lon_deg <= 360.0):
        raise NavredError(f"longitude {lon_deg!r} is outside -180 to 180°")


def voyage_events(first_date: object, days: int, lat_deg: float, lon_deg: float, *, eye_height_m: float = 0.0,
                  course_deg: float = 0.0, speed_kn: float = 0.0, zone_h: float | None = None) -> dict:
    """:func:`sun_events` for ``days`` consecutive local dates along a DR track of one course and speed, as arrays
    (see :func:`track_events`): the ship at (``lat_deg``, ``lon_deg``) at 00:00 zone time of the first date
    (:func:`zone_midnight`, the zone ``zone_h`` given or the longitude's), the days searched from 00:00 local
    mean time there."""
    check_position(lat_deg, lon_deg)
    lat_deg, lon_deg = float(lat_deg), float(lon_deg)
    course_deg, speed_kn = planner_number(course_deg, "course"), planner_number(speed_kn, "speed")
    start = local_midnight(first_date, lon_deg)
    origin = zone_midnight(first_date, lon_deg, zone_h)
    return track_events(steady_track(lat_deg, lon_deg, origin, course_deg, speed_kn), start, days,
                        eye_height_m=eye_height_m)


def track_local_midnight(first_date: object, track: DRTrack) -> np.datetime64:
    """00:00 local mean time on the civil ``first_date`` at the DR's longitude then, as UTC: the ship's day
    starts where she is (found from the DR at 00:00 UTC, then once more at the midnight found)."""
    day = local_midnight(first_date, 0.0)
    for _ in range(2):
        _, lon = track.position(np.array([day]))
        if not np.isfinite(lon[0]):
            raise NavredError(f"the DR has no position at {str(day)[:16]} UTC: give the departure before the "
                              "passage's first date")
        day = local_midnight(first_date, float(lon[0]))
    return day


def track_events(track: DRTrack, start: object, days: int, *, eye_height_m: float = 0.0) -> dict:
    """Twilights, sunrise, the Sun's meridian passage and sunset for ``days`` consecutive local dates along any DR
    track (a route's legs, a log's day's work), as arrays.

    ``start`` is 00:00 local mean time of the first date (UTC; :func:`local_midnight` or
    :func:`track_local_midnight`), where the search for the first day's events begins (the DR's own instants are
    the track's); each later day starts at 00:00 local mean time at that day's DR longitude. Returns the keys of
    :data:`EVENT_KEYS` (NaT where an event does not happen), ``date`` (each local date) and ``track``.
    """
    eye_height_m = planner_number(eye_height_m, "height of eye")
    eye = COLUMN["eye_height"]
    if not eye.low <= eye_height_m <= eye.high:
        raise NavredError(f"height of eye {eye_height_m!r} m is outside {eye.low:g}-{eye.high:g} m")
    start = np.datetime64(start, "ns")
    _, lon0 = track.position(np.array([start]))
    # each day starts at local midnight at that day's DR longitude (near enough: iterate once)
    day_starts = start + np.arange(days) * np.timedelta64(24 * NS_PER_HOUR, "ns")
    _, lons = track.position(day_starts)
    if not np.all(np.isfinite(lons)):
        raise NavredError("the DR has no position at the start of every day of the passage (a DR carried past a "
                          "pole, or no known position before it)")
    shift = ((wrap_180(lons - lon0[0])) / 15.0 * NS_PER_HOUR).astype(np.int64).astype("timedelta64[ns]")
    day_starts = day_starts - shift
    dip_deg = float(dip_angle_arcmin(eye_height_m)) / ARCMIN_PER_DEG
    rising, setting = _sun_crossings(day_starts, track, {
        "sunrise": SUNRISE_ALTITUDE_DEG - dip_deg, "civil": CIVIL_DEG, "nautical": NAUTICAL_DEG})
    noon = meridian_passage_utc("Sun", day_starts, track)
    return {"date": (day_starts + np.timedelta64(12 * NS_PER_HOUR, "ns")).astype("datetime64[D]"),
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


def body_meridian_passage(body: str, near_utc: object, track: DRTrack) -> dict:
    """A body's upper meridian passage nearest ``near_utc`` at the DR, and its altitude then."""
    start = np.asarray([utc_datetime64(near_utc) - np.timedelta64(12 * NS_PER_HOUR, "ns")])
    utc = meridian_passage_utc(body, start, track)[0]
    lat, lon = track.position(np.array([utc]))
    p = places(body, np.array([utc]))
    hc, zn = computed_altitude_azimuth(lat, lon, p.gha_deg, p.dec_deg)
    return {"utc": utc, "lat_deg": float(lat[0]), "lon_deg": float(lon[0]), "hc_deg": float(hc[0]),
            "dec_deg": float(p.dec_deg[0]), "bearing": "N" if (zn[0] < 90 or zn[0] > 270) else "S"}
