"""The day's work around the fixes: the DR kept between them, estimated positions, set and drift, noon
positions and the day's run. Edge code over :mod:`navred.reckoning` (the core).

Known positions are the log's departure and position entries and every fix (a fix of two or more
lines that cross well; a line of position or a latitude is not a fix). Each vessel keeps one DR
track: through every course and speed (the entries, and the sights' own courses and speeds), every
current the log enters and, with ``carry_current``, the set and drift found at the last fix, restarted
at each known position.

- **Set and drift** at each fix: against the DR carried from the previous known position *through
  the water* (courses and speeds only, no current at all): the whole current met since, with its
  95 % uncertainty from the two fixes' covariances and the DR's own error over the run.
- **Estimated positions**: for a fix group of one sight, the foot of the perpendicular from its DR to
  its line; for a line of position or a latitude, the point of the line nearest the DR.
- **Noon**: 12:00 ship's time, the nautical zone of the DR's longitude (the log's own zone
  descriptions may be a chronometer's kept on Greenwich). The noon position is a fix within an hour of noon, else an estimated position within
  the hour, carried to noon along the DR's velocity; else the DR. The day's run is the rhumb line from
  noon to noon (distance, course and speed made good) beside the distance run through the water.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..constants import NS_PER_HOUR, NS_PER_SECOND
from ..fixstats import DR_ERROR_FRACTION, DR_ERROR_KN
from ..reckoning import (
    PAST_POLE,
    DRTrack,
    course_speed,
    days_run,
    dr_track,
    estimated_position,
    set_and_drift,
    ship_noon_ns,
    zone_description_h,
)
from ..sailings import rhumb_destination
from ..status import SightStatus
from .frames import utc64

#: A fix or an estimated position this close to noon (either side) gives the noon position.
NOON_WINDOW_HOURS = 1.0
#: The DR track is drawn and exported with a point at least this often (hours), and at every knot.
TRACK_STEP_HOURS = 1.0


@dataclass(frozen=True)
class DaysWork:
    """The day's work of a voyage: set and drift at each fix, estimated positions, noons, the DR track. The
    tables' columns are snake_case with units (:data:`SET_DRIFT_COLUMNS`, :data:`ESTIMATED_COLUMNS`,
    :data:`NOON_COLUMNS`); the workbook shows them with their labels (:mod:`navred.io.labels`)."""

    set_drift: pd.DataFrame
    estimated: pd.DataFrame
    noons: pd.DataFrame
    track_points: pd.DataFrame
    #: each vessel's DR (with its known positions, and its DR through the water beside it)
    tracks: dict[str, DRTrack] = field(default_factory=dict)
    carry_current: bool = False
    #: each fix's ellipse scale (FixResult.confidence_scale, the quantile its 95 % ellipse is drawn at), by the
    #: label of its known position on the track ('fix <group>'): a picture draws the ellipse the fix states
    ellipse_scales: dict[str, float] = field(default_factory=dict)
    #: each table split by vessel, made when first asked for (:meth:`of_vessel`)
    cache: dict = field(default_factory=dict, repr=False, compare=False)

    def of_vessel(self, vessel: str) -> tuple[pd.DataFrame, pd.DataFrame, pd.DataFrame, pd.DataFrame]:
        """One vessel's track points, set and drift, estimated positions and noons (split once, kept)."""
        tables = (self.track_points, self.set_drift, self.estimated, self.noons)
        if "by vessel" not in self.cache:
            def split(frame):
                return {v: part for v, part in frame.groupby("vessel", sort=False)} if len(frame) else {}

            self.cache["by vessel"] = [split(f) for f in tables]
        return tuple(parts.get(vessel, frame.iloc[:0]) for parts, frame in zip(self.cache["by vessel"], tables))

    @property
    def empty(self) -> bool:
        return not len(self.set_drift) and not len(self.estimated) and not len(self.noons)


SET_DRIFT_COLUMNS = ["vessel", "fix_group", "fix_utc", "fix", "from", "hours", "dr_at_fix",
                     "set_deg", "set_95_deg", "drift_kn", "drift_95_kn", "note",
                     "fix_lat_deg", "fix_lon_deg", "dr_lat_deg", "dr_lon_deg"]
ESTIMATED_COLUMNS = ["vessel", "fix_group", "utc", "estimated_position", "from", "note", "lat_deg", "lon_deg"]
NOON_COLUMNS = ["vessel", "date", "zone_h", "noon_utc", "noon_position", "noon_from", "run_nm",
                "course_made_good_deg", "speed_made_good_kn", "through_water_nm", "hours",
                "fixes_that_day", "lat_deg", "lon_deg"]


def _fix_vessels(voyage) -> dict[str, str]:
    """Each fix group's vessel (its first sight's)."""
    vessels = voyage.reduced["vessel"].to_numpy(dtype=object) if len(voyage.reduced) else np.zeros(0, dtype=object)
    return {g.name: str(vessels[g.rows[0]]) if len(g.rows) else "" for g in voyage.groups}


def _changes(voyage, vessel: str):
    """(instants, courses, speeds, sets, drifts) of one vessel: the log's entries and its sights' motion."""
    reduced, entries = voyage.reduced, voyage.log.entries
    parts = []
    if len(entries):
        mine = _entry_vessels(voyage) == vessel
        e = entries[mine]
        parts.append((utc64(e["utc"]).astype(np.int64), e["course_deg"].to_numpy(float), e["speed_kn"].to_numpy(float),
                      e["set_deg"].to_numpy(float), e["drift_kn"].to_numpy(float)))
    if len(reduced):
        rows = (reduced["vessel"].to_numpy(dtype=object) == vessel) & (reduced["status"].to_numpy() != SightStatus.ERROR)
        r = reduced[rows]
        moving = (np.isfinite(r["course_deg"].to_numpy(float)) | np.isfinite(r["speed_kn"].to_numpy(float)))
        r = r[moving]
        parts.append((utc64(r["sight_utc"]).astype(np.int64), r["course_deg"].to_numpy(float),
                      r["speed_kn"].to_numpy(float), np.full(len(r), np.nan), np.full(len(r), np.nan)))
    if not parts:
        return (np.zeros(0, np.int64),) + tuple(np.zeros(0) for _ in range(4))
    return tuple(np.concatenate(p) for p in zip(*parts))


def _entry_vessels(voyage) -> np.ndarray:
    """Each entry's vessel; entries that name none belong to the one vessel of a single-vessel log."""
    entries = voyage.log.entries
    names = entries["vessel"].to_numpy(dtype=object)
    vessels = set(voyage.reduced["vessel"].tolist()) - {""} if len(voyage.reduced) else set()
    if not (names != "").any() and len(vessels) == 1:
        return np.full(len(names), next(iter(vessels)), dtype=object)
    return names


def vessel_tracks(voyage, *, carry_current: bool = False) -> dict[str, DRTrack]:
    """Every vessel's DR track, restarted at its departure, its position entries and its fixes."""
    fix_vessel = _fix_vessels(voyage)
    entries = voyage.log.entries
    entry_vessel = _entry_vessels(voyage) if len(entries) else np.zeros(0, dtype=object)
    vessels = list(dict.fromkeys(list(fix_vessel.values()) + entry_vessel.tolist()))
    fixed_by_vessel: dict[str, list] = {}
    for group in voyage.groups:
        if group.fix is not None and group.fix.is_fix:
            fixed_by_vessel.setdefault(fix_vessel[group.name], []).append(group)
    tracks = {}
    for vessel in vessels:
        known = []  # (ns, lat, lon, label, covariance)
        if len(entries):
            mine = entries[(entry_vessel == vessel) & entries["entry"].isin(["departure", "position"]).to_numpy()]
            for item in mine.itertuples():
                known.append((int(utc64(pd.Series([item.utc]))[0].astype(np.int64)), item.lat_deg, item.lon_deg,
                              f"{item.entry} at row {item.row}", np.zeros((2, 2))))
        for group in fixed_by_vessel.get(vessel, []):
            fix = group.fix
            known.append((int(np.datetime64(fix.utc, "ns").astype(np.int64)), fix.lat_deg, fix.lon_deg,
                          f"fix {group.name}", np.asarray(fix.covariance_nm2, dtype=float)))
        if not known:
            continue
        known.sort(key=lambda k: k[0])
        k_ns = np.array([k[0] for k in known], dtype=np.int64)
        k_lat = np.array([k[1] for k in known], dtype=float)
        k_lon = np.array([k[2] for k in known], dtype=float)
        labels = [k[3] for k in known]
        covs = np.stack([k[4] for k in known])
        when, course, speed, set_, drift = _changes(voyage, vessel)
        water = dr_track(when, course, speed, k_ns, k_lat, k_lon, known_label=tuple(labels), known_cov_nm2=covs)
        kept_when, kept_set, kept_drift = when, set_, drift
        kept_course, kept_speed = course, speed
        if carry_current:
            found = _set_drift_at_known(water, k_ns, k_lat, k_lon, covs)
            carry = np.isfinite(found[0])
            kept_when = np.concatenate([when, k_ns[carry]])
            kept_course = np.concatenate([course, np.full(carry.sum(), np.nan)])
            kept_speed = np.concatenate([speed, np.full(carry.sum(), np.nan)])
            kept_set = np.concatenate([set_, found[0][carry]])
            kept_drift = np.concatenate([drift, found[1][carry]])
        tracks[vessel] = dr_track(kept_when, kept_course, kept_speed, k_ns, k_lat, k_lon, set_deg=kept_set,
                                  drift_kn=kept_drift, known_label=tuple(labels), known_cov_nm2=covs,
                                  through_water=water)
    return tracks


def _set_drift_at_known(water: DRTrack, k_ns, k_lat, k_lon, covs):
    """Set and drift (and the rest) at each known position against the water DR from the one before."""
    n = k_ns.size
    out_set, out_drift = np.full(n, np.nan), np.full(n, np.nan)
    if n < 2:
        return out_set, out_drift, None
    dr_lat, dr_lon, origin = water.positions(k_ns[1:], before_restart=True)
    hours = (k_ns[1:] - k_ns[:-1]) / NS_PER_HOUR
    ok = (origin >= 0) & (hours > 0)
    result = None
    if ok.any():
        run = _water_run_nm(water, k_ns[:-1][ok], k_ns[1:][ok])
        result = set_and_drift(dr_lat[ok], dr_lon[ok], k_lat[1:][ok], k_lon[1:][ok], hours[ok], covs[1:][ok],
                               covs[:-1][ok], run, dr_error_kn=DR_ERROR_KN, dr_error_fraction=DR_ERROR_FRACTION)
        index = np.flatnonzero(ok) + 1
        out_set[index], out_drift[index] = result.set_deg, result.drift_kn
    return out_set, out_drift, (ok, dr_lat, dr_lon, hours, result)


def _water_run_nm(track: DRTrack, start_ns, end_ns) -> np.ndarray:
    """Distance run through the water (nm) between the instants: speed × time over the knots between."""
    speed = np.hypot(track.north_kn, track.east_kn)
    knots = track.knot_ns
    cumulative = np.concatenate([[0.0], np.cumsum(speed[:-1] * np.diff(knots) / NS_PER_HOUR)])

    def at(t):
        k = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, knots.size - 1)
        return cumulative[k] + speed[k] * np.maximum(t - knots[k], 0) / NS_PER_HOUR

    return at(np.asarray(end_ns, dtype=np.int64)) - at(np.asarray(start_ns, dtype=np.int64))


def days_work(voyage, *, carry_current: bool = False) -> DaysWork:
    """Set and drift, estimated positions, noon positions and the day's run of a processed voyage."""
    tracks = vessel_tracks(voyage, carry_current=carry_current)
    set_rows, noon_rows, point_rows = [], [], []
    estimated = _estimated_positions(voyage, tracks)
    for vessel, track in tracks.items():
        set_rows += _set_drift_rows(vessel, track)
        noon_rows += _noon_rows(voyage, vessel, track, estimated)
        point_rows += _track_points(voyage, vessel, track)
    return DaysWork(pd.DataFrame(set_rows, columns=SET_DRIFT_COLUMNS),
                    pd.DataFrame(estimated, columns=ESTIMATED_COLUMNS),
                    pd.DataFrame(noon_rows, columns=NOON_COLUMNS),
                    pd.DataFrame(point_rows, columns=["vessel", "utc", "lat_deg", "lon_deg", "leg", "kind"]),
                    tracks, carry_current,
                    {f"fix {g.name}": float(g.fix.confidence_scale) for g in voyage.groups
                     if g.fix is not None and g.fix.is_fix})


def _position_text(lat, lon) -> str:
    return f"{format_angle(lat, 'lat')} {format_angle(lon, 'lon')}"


def _positions_text(lat, lon) -> list[str]:
    lats = np.atleast_1d(format_angle(np.asarray(lat, dtype=float), "lat"))
    lons = np.atleast_1d(format_angle(np.asarray(lon, dtype=float), "lon"))
    return [f"{a} {b}" for a, b in zip(lats.tolist(), lons.tolist())]


def _stamps(ns) -> list[str]:
    """Times to the nearest second."""
    rounded = (np.asarray(ns, dtype=np.int64) + NS_PER_SECOND // 2) // NS_PER_SECOND * NS_PER_SECOND
    text = np.datetime_as_string(rounded.astype("datetime64[ns]").astype("datetime64[s]"))
    return [t.replace("T", " ") for t in text.tolist()]


def _stamp(ns) -> str:
    """A time to the nearest second."""
    return _stamps([int(ns)])[0]


def _set_drift_rows(vessel: str, track: DRTrack) -> list[dict]:
    _, _, detail = _set_drift_at_known(track.through_water, track.known_ns, track.known_lat, track.known_lon,
                                       track.known_cov_nm2)
    rows = []
    if detail is None:
        return rows
    ok, dr_lat, dr_lon, hours, result = detail
    if result is None:
        return rows
    index = np.flatnonzero(ok)
    fix_text = _positions_text(track.known_lat[index + 1], track.known_lon[index + 1])
    dr_text = _positions_text(dr_lat[index], dr_lon[index])
    for j, k in enumerate(index):
        i = k + 1  # the known position the set and drift are found at
        label = track.known_label[i]
        if not label.startswith("fix "):
            continue  # a position entry restarts the DR but is not a fix to judge the current by
        set_sigma = result.set_95_deg[j]
        note = ("the drift does not stand clear of its uncertainty: the set is not determined"
                if not np.isfinite(set_sigma) else "")
        rows.append({"vessel": vessel, "fix_group": label[4:], "fix_utc": _stamp(track.known_ns[i]),
                     "fix": fix_text[j],
                     "from": track.known_label[k], "hours": round(float(hours[k]), 2),
                     "dr_at_fix": dr_text[j],
                     "set_deg": float(result.set_deg[j]), "set_95_deg": float(set_sigma),
                     "drift_kn": float(result.drift_kn[j]), "drift_95_kn": float(result.drift_95_kn[j]),
                     "note": note, "fix_lat_deg": float(track.known_lat[i]),
                     "fix_lon_deg": float(track.known_lon[i]), "dr_lat_deg": float(dr_lat[k]),
                     "dr_lon_deg": float(dr_lon[k])})
    return rows


def _estimated_positions(voyage, tracks) -> list[dict]:
    reduced = voyage.reduced
    vessels = _fix_vessels(voyage)
    status = reduced["status"].to_numpy() if len(reduced) else np.zeros(0, dtype=object)
    messages = reduced["message"].to_numpy(dtype=object) if len(reduced) else np.zeros(0, dtype=object)
    out = []
    for group in voyage.groups:
        if group.fix is not None and group.fix.is_fix:
            continue
        usable = group.rows[status[group.rows] != SightStatus.ERROR]
        # the sights' own warnings go with the position built on them
        note = "; ".join(f"row {reduced['row'].iat[k]}: {messages[k]}" for k in usable.tolist()
                         if status[k] == SightStatus.WARNING and messages[k])
        if group.fix is not None and not group.fix.is_fix:
            fix = group.fix
            out.append({"vessel": vessels[group.name], "fix_group": group.name, "utc": _stamp(
                np.datetime64(fix.utc, "ns").astype(np.int64)), "estimated_position": _position_text(
                fix.lat_deg, fix.lon_deg), "from": f"the {fix.kind} nearest the DR", "note": note, "lat_deg": fix.lat_deg,
                "lon_deg": fix.lon_deg})
        elif group.fix is None and usable.size == 1:
            r = reduced.iloc[int(usable[0])]
            lat, lon = estimated_position(r["dr_lat_deg"], r["dr_lon_deg"], r["intercept_nm"], r["zn_deg"])
            out.append({"vessel": vessels[group.name], "fix_group": group.name,
                        "utc": str(r["sight_utc"])[:19], "estimated_position": _position_text(float(lat), float(lon)),
                        "from": f"one {r['body_name']} line: the foot of the perpendicular from the DR",
                        "note": note, "lat_deg": float(lat), "lon_deg": float(lon)})
    return out


def _noon_rows(voyage, vessel: str, track: DRTrack, estimated: list[dict]) -> list[dict]:
    reduced = voyage.reduced
    mine = (reduced["vessel"].to_numpy(dtype=object) == vessel) & (reduced["status"].to_numpy() != SightStatus.ERROR) \
        if len(reduced) else np.zeros(0, dtype=bool)
    sight_ns = utc64(reduced["sight_utc"]).astype(np.int64)[mine] if mine.any() else np.zeros(0, np.int64)
    first = int(track.known_ns[0])
    last = int(max(sight_ns.max() if sight_ns.size else first, track.known_ns[-1]))
    # every ship's date from the departure to the last sight (a day before it, for a zone east of Greenwich)
    day0 = np.datetime64(first - 14 * NS_PER_HOUR, "ns").astype("datetime64[D]")
    day1 = np.datetime64(last + 14 * NS_PER_HOUR, "ns").astype("datetime64[D]")
    days = np.arange(day0, day1 + np.timedelta64(1, "D")).astype("datetime64[ns]").astype(np.int64)
    # ship's time is the nautical zone of the DR's longitude at noon (the log's own zone descriptions may be
    # a chronometer's or a watch's kept on another zone); twice, so that the zone settles
    guess = np.zeros(days.size)
    for _ in range(2):
        _, lon, _ = track.positions(ship_noon_ns(days, guess))
        guess = np.where(np.isfinite(lon), zone_description_h(lon), guess)
    noon = ship_noon_ns(days, guess)
    inside = (noon >= first) & (noon <= last)
    days, noon, guess = days[inside], noon[inside], guess[inside]
    if not days.size:
        return []
    lat, lon, origin = track.positions(noon)
    source = [(f"DR from the {track.known_label[track.known_index(o)]}" if np.isfinite(la) else
               f"none: {PAST_POLE.split(':')[0]} from the {track.known_label[track.known_index(o)]}")
              if o >= 0 else "" for o, la in zip(origin, lat)]
    # a fix, else an estimated position, within the hour carried to noon along the DR's velocity
    fixes = [(int(t), la, lo, lab) for t, la, lo, lab in zip(track.known_ns, track.known_lat, track.known_lon,
                                                            track.known_label) if lab.startswith("fix ")]
    eps = [(int(pd.Timestamp(e["utc"]).value), e["lat_deg"], e["lon_deg"], f"estimated position {e['fix_group']}")
           for e in estimated if e["vessel"] == vessel]
    for k, t in enumerate(noon.tolist()):
        for candidates in (fixes, eps):
            near = [c for c in candidates if abs(c[0] - t) <= NOON_WINDOW_HOURS * NS_PER_HOUR]
            if near:
                c = min(near, key=lambda c: abs(c[0] - t))
                kk = np.searchsorted(track.knot_ns, c[0], side="right") - 1
                course, speed = course_speed(track.north_kn[max(kk, 0)], track.east_kn[max(kk, 0)])
                hours = (t - c[0]) / NS_PER_HOUR
                la, lo = rhumb_destination(c[1], c[2], course + (0.0 if hours >= 0 else 180.0),
                                           float(speed) * abs(hours))
                lat[k], lon[k] = float(la), float(lo)
                source[k] = (f"{c[3]} at {_stamp(c[0] + 30 * NS_PER_SECOND)[11:16]} UTC"
                             + (" carried to noon" if abs(hours) * 3600.0 >= 30.0 else ""))
                break
    run = days_run(noon, lat, lon)
    through = _water_run_nm(track.through_water, noon[:-1], noon[1:]) if noon.size > 1 else np.zeros(0)
    fix_times = np.array([f[0] for f in fixes], dtype=np.int64)
    rows = []
    for k in range(days.size):
        date = str(np.datetime64(int(days[k]), "ns").astype("datetime64[D]"))
        previous = noon[k - 1] if k else first
        # a fix within half a minute of noon is the noon fix (a chronometer's error moves it by a fraction of a second)
        count = (int(((fix_times > previous + 30 * NS_PER_SECOND) & (fix_times <= noon[k] + 30 * NS_PER_SECOND)).sum())
                 if fix_times.size else 0)
        rows.append({"vessel": vessel, "date": date, "zone_h": float(guess[k]), "noon_utc": _stamp(noon[k]),
                     "noon_position": _position_text(lat[k], lon[k]) if np.isfinite(lat[k]) else "",
                     "noon_from": source[k],
                     "run_nm": float(run.distance_nm[k - 1]) if k else np.nan,
                     "course_made_good_deg": float(run.course_deg[k - 1]) if k else np.nan,
                     "speed_made_good_kn": float(run.speed_kn[k - 1]) if k else np.nan,
                     "through_water_nm": float(through[k - 1]) if k else np.nan,
                     "hours": float(run.hours[k - 1]) if k else np.nan, "fixes_that_day": count,
                     "lat_deg": float(lat[k]), "lon_deg": float(lon[k])})
    return rows


def known_label_at(track: DRTrack, knot: int) -> str:
    """What the known position restarting the track at a knot is ('fix sun-run-sun', 'departure at row 2')."""
    return track.known_label[track.known_index(knot)]


def _track_points(voyage, vessel: str, track: DRTrack) -> list[dict]:
    """The DR track as points: every knot, and one an hour between, from the first known position to the last
    sight, each segment (from one known position to the next) its own leg; at each restart the leg that ends
    there closes on the DR carried to it."""
    reduced = voyage.reduced
    mine = (reduced["vessel"].to_numpy(dtype=object) == vessel) if len(reduced) else np.zeros(0, dtype=bool)
    last = int(max(utc64(reduced["sight_utc"][mine]).astype(np.int64).max() if mine.any() else 0,
                   track.known_ns[-1]))
    first = int(track.known_ns[0])
    step = int(TRACK_STEP_HOURS * NS_PER_HOUR)
    hourly = np.arange(first, last + 1, step, dtype=np.int64)
    knots = track.knot_ns[(track.knot_ns >= first) & (track.knot_ns <= last)]
    times = np.unique(np.concatenate([hourly, knots, [last]]))
    lat, lon, origin = track.positions(times)
    restart = np.isin(times, track.known_ns) & (times > first)
    b_lat, b_lon, b_origin = track.positions(times[restart], before_restart=True)
    closing = b_origin >= 0
    # the closing points go just before their restart in time order
    t_all = np.concatenate([times, times[restart][closing]])
    order_key = np.concatenate([np.ones(times.size), np.zeros(int(closing.sum()))])
    lat_all = np.concatenate([lat, b_lat[closing]])
    lon_all = np.concatenate([lon, b_lon[closing]])
    leg_all = np.concatenate([origin, b_origin[closing]])
    kind_all = np.concatenate([np.where(np.isin(times, track.known_ns), "known position", "DR"),
                               np.full(int(closing.sum()), "DR at a known position")]).astype(object)
    order = np.lexsort((order_key, t_all))
    keep = leg_all[order] >= 0
    order = order[keep]
    stamps = _stamps(t_all[order])
    return [{"vessel": vessel, "utc": u, "lat_deg": float(a), "lon_deg": float(b), "leg": int(g), "kind": k}
            for u, a, b, g, k in zip(stamps, lat_all[order].tolist(), lon_all[order].tolist(),
                                     leg_all[order].tolist(), kind_all[order].tolist())]


__all__ = ["DaysWork", "days_work", "vessel_tracks", "known_label_at", "NOON_WINDOW_HOURS", "SET_DRIFT_COLUMNS",
           "NOON_COLUMNS", "ESTIMATED_COLUMNS"]
