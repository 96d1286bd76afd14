"""The DR a passage's paper is planned along: a departure with a course and speed (or a fixed position), a route
sailed at a speed, or a log's DR as the day's work keeps it.

Edge code: it reads the route or the log (through :mod:`navred.io.waypoints`, :func:`navred.jobs.voyage.process_log`)
and builds one :class:`navred.reckoning.DRTrack` from it, with the words and the table the paper prints about it.
Every kind is the same to what follows: the twilights, the noons, the sights planned and the plotting sheets are
worked along the track, wherever it goes.

- **a departure**: (lat, lon) at 00:00 zone time of the first date (the ship's clock: the zone kept, else the
  nautical zone of the longitude), then one course and speed (the rhumb line), carried back along it before then
  (a plan's steady track);
- **a route**: the waypoints in turn at one speed, on the rhumb line of each leg, leaving the first at the time
  given (default 00:00 zone time of the first date there); she lies at the first waypoint before she leaves it and at
  the last after she arrives;
- **a log**: the DR track of the day's work (:func:`navred.jobs.dayswork.vessel_tracks`): from the departure
  through every course, speed and current entered, restarted at each position entered and each fix; after the
  log's last change she is carried on as then; before its first known position she is taken to lie there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..angles import format_angle
from ..constants import NS_PER_HOUR
from ..errors import NavredError
from ..plan import (
    check_position,
    local_midnight,
    planner_number,
    track_local_midnight,
    zone_midnight,
)
from ..reckoning import DRTrack, course_speed, steady_track

#: The most changes of the DR a paper lists (the last ones before and during the passage).
MAX_LISTED = 40
#: A log's DR carried longer than this from its last known position to the paper's first day is warned of.
CARRIED_HOURS = 48.0


def _warn(message: str) -> str:
    """Issue ``message`` as a NavredWarning (the console prints it) and return it for the cover."""
    import warnings

    from ..errors import NavredWarning

    warnings.warn(message, NavredWarning, stacklevel=3)
    return message


@dataclass(frozen=True)
class PassageDR:
    """The DR a paper is planned along.

    ``track`` is the DR; ``start`` 00:00 local mean time of the first date at the DR's longitude (UTC), where the
    search for the first day's events begins (the DR's own instant is in ``summary``: 00:00 zone time); ``kind`` is 'departure', 'route' or 'log'; ``summary`` what the cover says of it; ``table`` the
    changes of the DR as printed (header, CSV header, rows), empty for a departure; ``course_deg``/``speed_kn``
    those of a departure (NaN otherwise); ``warnings`` what is wrong with it for the paper's dates (each also
    issued as a :class:`navred.errors.NavredWarning`), printed on the cover; ``zone_h`` the zone description a log
    keeps (its latest row's, as written), None otherwise."""

    track: DRTrack
    start: np.datetime64
    kind: str
    summary: str
    table: tuple
    course_deg: float = float("nan")
    speed_kn: float = float("nan")
    warnings: tuple[str, ...] = ()
    zone_h: float | None = None


def departure_words(first, lon_deg: float, zone_h: float | None) -> str:
    """00:00 zone time of the first date as the ship's clock and UTC (:func:`navred.jobs.bridge.departure_words`)."""
    from .bridge import departure_words as words

    return words(first, lon_deg, zone_h)


def _position(lat: float, lon: float) -> str:
    return f"{format_angle(float(lat), 'lat')} {format_angle(float(lon), 'lon')}"


def _utc(ns) -> str:
    """An instant to the minute, as printed: 2026-04-14 05:00."""
    minute = 60 * 10**9
    rounded = (int(ns) + minute // 2) // minute * minute
    return str(np.datetime64(rounded, "ns"))[:16].replace("T", " ")


def departure_dr(first: np.datetime64, lat_deg: float, lon_deg: float, course_deg: float = 0.0,
                 speed_kn: float = 0.0, *, depart: object | None = None, days: int = 1,
                 zone_h: float | None = None) -> PassageDR:
    """The DR from (lat, lon) at 00:00 zone time of the first date (the ship's clock: ``zone_h`` kept, else the
    nautical zone of the longitude; :func:`navred.plan.zone_midnight`) on one course and speed (0 for a fixed
    position): the rhumb line, carried back along it before then. With ``depart`` (ISO 8601 with a zone) she lies
    at (lat, lon) until then, and sails from there on the course and speed."""
    from ..reckoning import velocity_kn
    from ..timescales import utc_datetime64

    check_position(lat_deg, lon_deg)
    course_deg, speed_kn = planner_number(course_deg, "course"), planner_number(speed_kn, "speed")
    start = local_midnight(first, lon_deg)
    origin = zone_midnight(first, lon_deg, zone_h)
    moving = (f"then {course_deg:05.1f}° true at {speed_kn:.1f} kn along the rhumb line" if speed_kn > 0 else
              "a fixed position")
    if depart is None:
        summary = f"DR from {_position(lat_deg, lon_deg)} at {departure_words(first, lon_deg, zone_h)}, {moving}."
        return PassageDR(steady_track(lat_deg, lon_deg, origin, course_deg, speed_kn), start, "departure", summary,
                         (), float(course_deg), float(speed_kn))
    leave = np.datetime64(utc_datetime64(depart), "ns").astype(np.int64)
    north, east = velocity_kn(course_deg, speed_kn)
    # lying at the position (known there) from three days before the paper or the departure, then sailing
    since = min(leave, int(start.astype(np.int64))) - 3 * 24 * NS_PER_HOUR
    track = DRTrack(np.array([since, leave]), np.array([0.0, float(north)]), np.array([0.0, float(east)]),
                    np.array([since, leave]), np.array([float(lat_deg)] * 2), np.array([float(lon_deg)] * 2))
    summary = (f"DR from {_position(lat_deg, lon_deg)}, where she lies until she departs at {_utc(leave)} UTC, "
               f"{moving}.")
    start = track_local_midnight(first, track)
    warned: list[str] = []
    if leave >= start.astype(np.int64) + days * 24 * NS_PER_HOUR:
        warned.append(_warn(f"she departs at {_utc(leave)} UTC, after the paper's last day: every page is planned "
                            "at the position given; check --depart and the dates"))
    return PassageDR(track, start, "departure", summary, (), float(course_deg), float(speed_kn),
                     warnings=tuple(warned))


def route_passage_dr(first: np.datetime64, route, speed_kn: float, depart: object | None = None, *,
                     days: int = 1, zone_h: float | None = None) -> PassageDR:
    """The DR along a route's waypoints (a file `navred route` writes, a list written by hand, or
    :class:`navred.io.waypoints.Waypoints`) at ``speed_kn``, leaving the first waypoint at ``depart`` (ISO 8601
    with a zone; default 00:00 zone time of the first date there: ``zone_h`` kept, else the waypoint's nautical
    zone)."""
    from ..io.waypoints import Waypoints, read_waypoints
    from ..timescales import utc_datetime64
    from .routes import route_dr, route_remarks

    points = route if isinstance(route, Waypoints) else read_waypoints(route)
    check_position(float(points.lat_deg[0]), float(points.lon_deg[0]))
    leave = zone_midnight(first, float(points.lon_deg[0]), zone_h) if depart is None else np.datetime64(
        utc_datetime64(depart), "ns")
    since = min(leave, local_midnight(first, 0.0) - np.timedelta64(2 * 24 * NS_PER_HOUR, "ns"))
    dr = route_dr(points.lat_deg, points.lon_deg, leave, speed_kn, since=since, names=points.names)
    rows = []
    for k in range(len(dr.names)):
        leg = k < dr.course_deg.size
        rows.append((dr.names[k], _position(dr.lat_deg[k], dr.lon_deg[k]), _utc(dr.eta[k].astype(np.int64)),
                     f"{dr.course_deg[k]:05.1f}" if leg else "", f"{dr.distance_nm[k]:.1f}" if leg else "",
                     f"{float(dr.distance_nm[:k].sum()):.1f}"))
    table = (("Waypoint", "Position", "UTC (leave, arrive)", "Course to next °T", "Leg nm", "Run nm"),
             ("waypoint", "position", "utc", "course_to_next_deg", "leg_nm", "run_nm"), tuple(rows))
    leaves = (departure_words(first, float(points.lon_deg[0]), zone_h) if depart is None else
              f"{_utc(dr.eta[0].astype(np.int64))} UTC")
    summary = (f"DR along the route of {len(dr.names)} waypoints in {points.source}: {dr.total_nm:,.1f} nm at "
               f"{speed_kn:.1f} kn, on the rhumb line of each leg; she leaves {dr.names[0]} at {leaves} and arrives at {dr.names[-1]} at "
               f"{_utc(dr.eta[-1].astype(np.int64))} UTC. Before she leaves she is taken at the first waypoint, "
               "after she arrives at the last. The times are those of the speed given: keep the DR by the log "
               "and reprint when she falls behind.")
    start = track_local_midnight(first, dr.track)
    end = start + np.timedelta64(days * 24 * NS_PER_HOUR, "ns")
    warned: list[str] = [_warn(f"route {points.source}: {remark}")
                         for remark in route_remarks(dr.lat_deg, dr.lon_deg, dr.names)]
    if dr.eta[0] >= end:
        warned.append(_warn(
            f"she leaves {dr.names[0]} at {_utc(dr.eta[0].astype(np.int64))} UTC, after the paper's last day: "
            "every page is planned at that waypoint; check --depart and the dates"))
    elif dr.eta[-1] <= start:
        warned.append(_warn(
            f"she reaches {dr.names[-1]} at {_utc(dr.eta[-1].astype(np.int64))} UTC, before the paper's first "
            "day: every page is planned at that waypoint; check --depart, --speed and the dates"))
    return PassageDR(dr.track, start, "route", summary, table, warnings=tuple(warned))


def log_passage_dr(first: np.datetime64, days: int, source, *, vessel: str | None = None, dates: str | None = None,
                   rates=None, carry_current: bool = False) -> PassageDR:
    """The DR of a log as the day's work keeps it (see the module): its one vessel's, or ``vessel``'s."""
    from .dayswork import vessel_tracks
    from .voyage import process_log

    voyage = process_log(source, dates=dates, rates=rates, plan=False, carry_current=carry_current)
    tracks = vessel_tracks(voyage, carry_current=carry_current)
    where = voyage.source
    if not tracks:
        raise NavredError(f"{where}: the log gives no departure, position or fix, so it keeps no DR: add a "
                          "departure entry (docs/sight-log.md, Entry rows)")
    if vessel is None and len(tracks) > 1:
        raise NavredError(f"{where}: the log keeps the DR of {len(tracks)} vessels ({', '.join(sorted(tracks))}): "
                          "name the one to plan for with --vessel")
    name = next(iter(tracks)) if vessel is None else vessel
    if name not in tracks:
        raise NavredError(f"--vessel {vessel}: the log keeps no DR for it; it keeps {', '.join(sorted(tracks))}")
    kept = tracks[name]
    track = held_before_first_known(kept, local_midnight(first, 0.0) - np.timedelta64(2 * 24 * NS_PER_HOUR, "ns"))
    start = track_local_midnight(first, track)
    end = start + np.timedelta64((days + 1) * 24 * NS_PER_HOUR, "ns")
    table = _log_table(kept, start, end)
    known = np.flatnonzero(kept.known_ns <= end.astype(np.int64))
    last = int(known.max()) if known.size else 0
    course, speed = (float(v) for v in course_speed(kept.north_kn[-1], kept.east_kn[-1]))
    named = f" ({name})" if name else ""
    summary = (f"DR from the log {where}{named}, as the day's work keeps it: through every course, speed and current "
               "entered, restarted at each position entered and each fix. Its last known position before the "
               f"paper ends: the {kept.known_label[last]} at {_utc(kept.known_ns[last])} UTC; after the log's "
               f"last change she is carried on at {course:05.1f}° true, {speed:.1f} kn over the ground. Before "
               f"the {kept.known_label[0]} ({_utc(kept.known_ns[0])} UTC) she is taken to lie there.")
    warned: list[str] = []
    carried_days = (start.astype(np.int64) - kept.known_ns[last]) / NS_PER_HOUR / 24
    if kept.known_ns[0] >= end.astype(np.int64) - 24 * NS_PER_HOUR:
        warned.append(_warn(
            f"the log's first known position (the {kept.known_label[0]}, {_utc(kept.known_ns[0])} UTC) comes "
            "after the paper's last day: every page is planned there; check the dates"))
    elif carried_days * 24 > CARRIED_HOURS:
        warned.append(_warn(
            f"the DR is carried {carried_days:.1f} days from the log's last known position (the "
            f"{kept.known_label[last]}, {_utc(kept.known_ns[last])} UTC) to the paper's first day: a DR so old "
            "may be far from the ship; enter a newer position, or check the dates"))
    return PassageDR(track, start, "log", summary, table, warnings=tuple(warned),
                     zone_h=_zone_kept(voyage.log.table, name))


def _zone_kept(table, vessel: str) -> float | None:
    """The zone description the log keeps for ``vessel``: that of its latest row written in zone time, or None when
    the log is kept in UTC alone."""
    rows = table if not vessel or "vessel" not in table else table[table.vessel.fillna("") == vessel]
    if "zone_description_used_h" not in rows:
        return None
    zones = rows.zone_description_used_h.to_numpy(dtype=float)
    times = rows.sight_utc.to_numpy(dtype="datetime64[ns]") if "sight_utc" in rows else None
    given = np.isfinite(zones)
    if not given.any():
        return None
    if times is None:
        return float(zones[given][-1])
    k = np.flatnonzero(given)[np.argmax(times[given])]
    return float(zones[k])


def held_before_first_known(track: DRTrack, since: np.datetime64) -> DRTrack:
    """The track with the ship lying at its first known position from ``since`` until then (a log's DR has none
    before its departure)."""
    since_ns = int(np.datetime64(since, "ns").astype(np.int64))
    first = int(track.known_ns[0])
    if since_ns >= min(first, int(track.knot_ns.min())):
        return track
    before = track.knot_ns < first
    north = np.concatenate([[0.0], np.where(before, 0.0, track.north_kn)])
    east = np.concatenate([[0.0], np.where(before, 0.0, track.east_kn)])
    labels = ((f"{track.known_label[0]}, before it",) + tuple(track.known_label)) if track.known_label else ()
    cov = None if track.known_cov_nm2 is None else np.concatenate([np.zeros((1, 2, 2)), track.known_cov_nm2])
    return DRTrack(np.concatenate([[since_ns], track.knot_ns]), north, east,
                   np.concatenate([[since_ns], track.known_ns]), np.concatenate([[track.known_lat[0]], track.known_lat]),
                   np.concatenate([[track.known_lon[0]], track.known_lon]), labels, cov)


def _log_table(track: DRTrack, start: np.datetime64, end: np.datetime64) -> tuple:
    """The DR's changes from the one in force at the paper's start to its end: UTC, what, the DR, the course and
    speed over the ground from then (the last :data:`MAX_LISTED`)."""
    knots = track.knot_ns
    s, e = int(start.astype(np.int64)), int(end.astype(np.int64))
    first = max(int(np.searchsorted(knots, s, side="right")) - 1, 0)  # the change in force at the start
    chosen = np.arange(first, int(np.searchsorted(knots, e, side="right")))
    known = dict(zip(track.known_ns.tolist(), track.known_label))
    # a sight's own course and speed makes a knot too: only a known position or a real change is listed
    previous = np.maximum(chosen - 1, 0)
    changed = (np.hypot(track.north_kn[chosen] - track.north_kn[previous], track.east_kn[chosen]
                        - track.east_kn[previous]) > 0.01) | (chosen == first)
    listed = np.isin(knots[chosen], track.known_ns) | changed
    chosen = chosen[listed & (knots[chosen] >= track.known_ns[0])][-MAX_LISTED:]
    lat, lon, _ = track.positions(knots[chosen])
    course, speed = course_speed(track.north_kn[chosen], track.east_kn[chosen])
    rows = tuple((_utc(knots[k]), known.get(int(knots[k]), "course, speed or current"), _position(la, lo),
                  f"{c:05.1f}", f"{v:.1f}") for k, la, lo, c, v in zip(chosen.tolist(), lat, lon, course, speed))
    return (("UTC", "The DR from then", "Position", "Course °T", "Speed kn"),
            ("utc", "what", "position", "course_over_ground_deg", "speed_over_ground_kn"), rows)


__all__ = ["PassageDR", "departure_dr", "route_passage_dr", "log_passage_dr", "held_before_first_known"]
