"""The ship's DR track and what is found along it: each vessel's known positions (her departure and position
entries, the ship's fixes, a training log's rounds combined), the track through every change, the set and drift at
each fix, the estimated positions, the exercises against the ship, the entries' working and the track's points.
Edge code over :mod:`navred.reckoning` (the core); :mod:`navred.jobs.dayswork` puts the day's work together.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..constants import NIL_DRIFT_KN, NS_PER_HOUR, NS_PER_MINUTE, NS_PER_SECOND
from ..fixstats import DR_ERROR_FRACTION, DR_ERROR_KN
from ..reckoning import DRTrack, dr_track, estimated_position, set_and_drift
from ..sailings import rhumb_inverse
from ..status import SightStatus
from ..triangle import distance_bearing
from .frames import utc64
from .latitudechecks import latitude_checks
from .shipsfixes import EXERCISE, ShipsSights, combined_rounds, ships_sights, weighted_mean_position

#: A fix or an estimated position this close to noon (either side) gives the noon position.
NOON_WINDOW_HOURS = 1.0
#: an exercise is marked against a position of the ship's own (fix, noon, estimated position) within this many
#: hours of it, carried along her DR; beyond, against her DR (the DR's own error grows with the hours run)
EXERCISE_REFERENCE_HOURS = 1.0
#: The DR track is drawn and exported with a point at least this often (hours), and at every knot.
TRACK_STEP_HOURS = 1.0
#: Set and drift are found only over a run at least this long between two of the ship's fixes: over less, a fix's
#: own error of a few tenths of a mile, divided by the hours, is more than any current (common practice).
SET_DRIFT_MIN_HOURS = 2.0
#: ... and only where the fixes' and the DR's errors over the run leave the drift known to this (95 %, knots).
SET_DRIFT_MAX_95_KN = 1.5
#: No current of the open sea runs faster than this (knots; the strongest, the Gulf Stream, the Kuroshio and the
#: Agulhas, run 4-5 kn: from memory): a fix this far from the DR says a fix or the DR is wrong, never a current.
MAX_CURRENT_KN = 8.0
#: Currents found either side of one fix that differ by more than this (knots, as vectors) and by more than their
#: own uncertainty put the fix between them in doubt (common practice: an ocean current does not turn about in a
#: few hours).
CURRENT_JUMP_KN = 3.0
NIL_SET = "nil: nothing unaccounted"


SET_DRIFT_COLUMNS = ["vessel", "fix_group", "fix_utc", "fix", "from", "hours", "dr_at_fix", "dr_to_fix_nm",
                     "set_deg", "set_95_deg", "drift_kn", "drift_95_kn", "note",
                     "fix_lat_deg", "fix_lon_deg", "dr_lat_deg", "dr_lon_deg", "current_in_dr",
                     "dr_set_deg", "dr_drift_kn", "unaccounted_set_deg", "unaccounted_drift_kn", "kept_dr_lat_deg",
                     "kept_dr_lon_deg"]
ESTIMATED_COLUMNS = ["vessel", "fix_group", "utc", "ep", "estimated_position", "from", "note", "lat_deg",
                     "lon_deg"]
NOON_COLUMNS = ["vessel", "date", "zone_h", "zone", "noon_utc", "noon_position", "noon_from", "run_nm",
                "course_made_good_deg", "speed_made_good_kn", "through_water_nm", "hours", "current_set_deg",
                "current_set_95_deg", "current_drift_kn", "current_95_kn", "current_note", "to", "to_go_nm", "eta_utc", "eta_ship_time", "eta_basis", "clock_changes",
                "fixes_that_day", "lat_deg", "lon_deg"]
EXERCISE_COLUMNS = ["vessel", "fix_group", "observer", "utc", "kind", "position", "ship_position", "ship_from",
                    "off_nm", "bearing_deg", "lat_deg", "lon_deg"]
ENTRY_WORK_COLUMNS = ["vessel", "row", "utc", "entry", "course_deg", "speed_kn", "set_deg", "drift_kn",
                      "course_working", "speed_working", "clocks"]


def is_fix_label(label: str) -> bool:
    """A known position that is one of the ship's fixes (not a departure or position entry)."""
    return label.startswith("fix ")


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


def vessel_entries(voyage, vessel: str) -> pd.DataFrame:
    """One vessel's entries (an entry that names none belongs to the log's one vessel)."""
    entries = voyage.log.entries
    if not len(entries):
        return entries
    return entries[_entry_vessels(voyage) == vessel]


def ships_of(voyage) -> ShipsSights:
    if "ships" not in voyage.cache:
        voyage.cache["ships"] = ships_sights(voyage, getattr(voyage, "navigators", ()))
    return voyage.cache["ships"]


def _known_positions(voyage, vessel: str, ships: ShipsSights, fix_vessel: dict[str, str], ground: DRTrack | None):
    """One vessel's known positions in time order: (ns, lat, lon, label, covariance) of her departure and position
    entries and of the ship's fixes (a combined vessel's rounds merged, each carried to its last fix's time along
    ``ground``, the vessel's velocities)."""
    known = []
    entries = vessel_entries(voyage, vessel)
    if len(entries):
        for item in entries[entries["entry"].isin(["departure", "position"])].itertuples():
            known.append((int(utc64(pd.Series([item.utc]))[0].astype(np.int64)), float(item.lat_deg),
                          float(item.lon_deg), f"{item.entry} at row {item.row}", np.zeros((2, 2))))
    # a fix that cannot be trusted as the position to plot never restarts the DR (common practice: the DR is kept
    # on and the fix looked into); :func:`untrusted_fixes` names those left out
    fixes = [g for g in voyage.groups if g.fix is not None and g.fix.is_fix and fix_vessel[g.name] == vessel
             and ships.is_ship(g.name) and not g.fix.untrusted]
    fixes.sort(key=lambda g: np.datetime64(g.fix.utc, "ns"))
    times = np.array([np.datetime64(g.fix.utc, "ns").astype(np.int64) for g in fixes], dtype=np.int64)
    if vessel in ships.combined and len(fixes) > 1:
        for members in combined_rounds(times, [g.name for g in fixes], ships.observer):
            if len(members) == 1:
                g = fixes[members[0]]
                known.append((int(times[members[0]]), g.fix.lat_deg, g.fix.lon_deg, f"fix {g.name}",
                              np.asarray(g.fix.covariance_nm2, dtype=float)))
                continue
            at = int(times[members].max())
            lat = np.array([fixes[k].fix.lat_deg for k in members])
            lon = np.array([fixes[k].fix.lon_deg for k in members])
            if ground is not None:
                lat, lon = ground.carried(lat, lon, times[members], at)
            cov = np.stack([np.asarray(fixes[k].fix.covariance_nm2, dtype=float) for k in members])
            m_lat, m_lon, m_cov = weighted_mean_position(np.atleast_1d(lat), np.atleast_1d(lon), cov)
            when = str(np.datetime64(at, "ns").astype("datetime64[m]")).replace("T", " ")
            known.append((at, m_lat, m_lon, f"fix round {when} ({len(members)} observers combined)", m_cov))
    else:
        for t, g in zip(times.tolist(), fixes):
            known.append((int(t), g.fix.lat_deg, g.fix.lon_deg, f"fix {g.name}",
                          np.asarray(g.fix.covariance_nm2, dtype=float)))
    if not any(k[3].startswith(("departure", "position")) for k in known):
        start = _logged_dr_start(voyage, vessel, ships, min((k[0] for k in known), default=None))
        if start is not None:
            known.append(start)
    known.sort(key=lambda k: k[0])
    return known


#: The label of a DR track's start taken from the DR a sight's row carries (a log with no departure entry).
LOGGED_DR = "logged DR"
#: ... taken only this long (hours) or more before the ship's first fix
LOGGED_DR_LEAD_HOURS = 1.0


def _logged_dr_start(voyage, vessel: str, ships: ShipsSights, before: int | None):
    """A log with no departure entry whose ship's sights carry the navigator's DR (written on the row, not carried
    by the reader) starts her track there: the earliest such row at least LOGGED_DR_LEAD_HOURS before her first
    fix, (ns, lat, lon, label, covariance). It is a DR, not a known position: no set and drift is found from it."""
    reduced = voyage.reduced
    if not len(reduced) or "dr_carried_from" not in reduced.columns:
        return None
    written = reduced["dr_carried_from"].fillna("").astype(str).to_numpy() == ""
    lat = reduced["dr_lat_deg"].to_numpy(dtype=float)
    lon = reduced["dr_lon_deg"].to_numpy(dtype=float)
    vessel_ok = reduced["vessel"].fillna("").astype(str).to_numpy() == vessel
    groups = reduced["fix_group"].fillna("").astype(str).to_numpy()
    ship = np.array([ships.is_ship(g) for g in groups], dtype=bool)
    when = utc64(reduced["sight_utc"]).astype(np.int64)
    usable = written & np.isfinite(lat) & np.isfinite(lon) & vessel_ok & ship & (
        reduced["status"].to_numpy() != SightStatus.ERROR)
    if before is not None:  # a logged DR minutes before the first fix adds nothing the fix does not give
        usable &= when <= before - int(LOGGED_DR_LEAD_HOURS * NS_PER_HOUR)
    if not usable.any():
        return None
    k = int(np.flatnonzero(usable)[np.argmin(when[usable])])
    return (int(when[k]), float(lat[k]), float(lon[k]), f"{LOGGED_DR} at row {reduced['row'].iat[k]}",
            np.zeros((2, 2)))


def untrusted_fixes(voyage) -> dict[str, tuple[tuple[str, str], ...]]:
    """The ship's fixes that cannot be trusted as the position to plot (FixResult.untrusted), by vessel: (group,
    why) each. The day's work leaves them out: no DR restarts at one, no set and drift, noon or exercise rests on
    it."""
    ships = ships_of(voyage)
    fix_vessel = _fix_vessels(voyage)
    out: dict[str, list] = {}
    for g in voyage.groups:
        if g.fix is not None and g.fix.is_fix and g.fix.untrusted and ships.is_ship(g.name):
            out.setdefault(fix_vessel[g.name], []).append((g.name, g.fix.untrusted))
    return {vessel: tuple(items) for vessel, items in out.items()}


def vessel_tracks(voyage, *, carry_current: bool = False) -> dict[str, DRTrack]:
    """Every vessel's DR track, restarted at its departure, its position entries and the ship's fixes."""
    ships = ships_of(voyage)
    fix_vessel = _fix_vessels(voyage)
    entries = voyage.log.entries
    entry_vessel = _entry_vessels(voyage) if len(entries) else np.zeros(0, dtype=object)
    vessels = list(dict.fromkeys(list(fix_vessel.values()) + entry_vessel.tolist()))
    tracks = {}
    for vessel in vessels:
        when, course, speed, set_, drift = _changes(voyage, vessel)
        ground = dr_track(when, course, speed, np.zeros(1, np.int64), [0.0], [0.0], set_deg=set_, drift_kn=drift) \
            if when.size else None
        known = _known_positions(voyage, vessel, ships, fix_vessel, ground)
        if not known:
            continue
        k_ns = np.array([k[0] for k in known], dtype=np.int64)
        k_lat = np.array([k[1] for k in known], dtype=float)
        k_lon = np.array([k[2] for k in known], dtype=float)
        labels = tuple(k[3] for k in known)
        covs = np.stack([k[4] for k in known])
        water = dr_track(when, course, speed, k_ns, k_lat, k_lon, known_label=labels, known_cov_nm2=covs)
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
                                  drift_kn=kept_drift, known_label=labels, known_cov_nm2=covs, through_water=water)
    return tracks


def current_verdict(hours, drift_kn, drift_95_kn, distance_nm) -> tuple[np.ndarray, list[str]]:
    """Whether each set and drift means something, and why not where it does not. The rule: a run of at least
    :data:`SET_DRIFT_MIN_HOURS` between the two fixes, a drift known to :data:`SET_DRIFT_MAX_95_KN` or better at 95 %
    (the two fixes' ellipses and the DR's own error over the run, 0.3 kn an hour and 2 % of the miles run, in
    miles, over the hours), and no drift beyond :data:`MAX_CURRENT_KN`, which no current of the sea runs."""
    hours, drift, spread, distance = (np.atleast_1d(np.asarray(v, dtype=float)) for v in
                                      (hours, drift_kn, drift_95_kn, distance_nm))
    reasons = []
    for h, d, s, m in zip(hours.tolist(), drift.tolist(), spread.tolist(), distance.tolist()):
        if not h >= SET_DRIFT_MIN_HOURS:
            # the position before may be the departure or a position entry, not a fix
            reasons.append(f"not determined: {h * 60:.0f} min from the position before, less than the "
                           f"{SET_DRIFT_MIN_HOURS:g} h a current needs to show against the positions' own errors")
        elif not d <= MAX_CURRENT_KN:
            reasons.append(f"not determined: the fix lies {m:.1f} nm from the DR after {h:.1f} h, more than any "
                           f"current of the sea ({MAX_CURRENT_KN:g} kn) carries a ship: check this fix, the one "
                           "before and the courses and speeds between")
        elif not s <= SET_DRIFT_MAX_95_KN:
            reasons.append(f"not determined: over {h:.1f} h the fixes and the DR may be off by {s * h:.1f} nm "
                           f"(95 %), a drift of ±{s:.1f} kn, more than the ±{SET_DRIFT_MAX_95_KN:g} kn a current "
                           "is worth stating to")
        else:
            reasons.append("")
    return np.array([r == "" for r in reasons], dtype=bool), reasons


def _set_drift_at_known(water: DRTrack, k_ns, k_lat, k_lon, covs):
    """Set and drift (and the rest) at each known position against the water DR from the one before; NaN where it
    does not mean something (:func:`current_verdict`)."""
    n = k_ns.size
    out_set, out_drift = np.full(n, np.nan), np.full(n, np.nan)
    if n < 2:
        return out_set, out_drift, None
    dr_lat, dr_lon, origin = water.positions(k_ns[1:], before_restart=True)
    hours = (k_ns[1:] - k_ns[:-1]) / NS_PER_HOUR
    # a run from the DR written on a sight's row (no departure entry) measures that DR, not a current
    from_dr = np.array([str(lab).startswith(LOGGED_DR) for lab in water.known_label[:-1]], dtype=bool) \
        if len(water.known_label) == n else np.zeros(n - 1, dtype=bool)
    ok = (origin >= 0) & (hours > 0) & ~from_dr
    result, verdict = None, (np.zeros(0, dtype=bool), [])
    if ok.any():
        run = water_run_nm(water, k_ns[:-1][ok], k_ns[1:][ok])
        result = set_and_drift(dr_lat[ok], dr_lon[ok], k_lat[1:][ok], k_lon[1:][ok], hours[ok], covs[1:][ok],
                               covs[:-1][ok], run, dr_error_kn=DR_ERROR_KN, dr_error_fraction=DR_ERROR_FRACTION)
        verdict = current_verdict(hours[ok], result.drift_kn, result.drift_95_kn, result.drift_kn * hours[ok])
        index = np.flatnonzero(ok) + 1
        good = verdict[0] & np.isfinite(result.set_95_deg)
        out_set[index[good]], out_drift[index[good]] = result.set_deg[good], result.drift_kn[good]
    return out_set, out_drift, (ok, dr_lat, dr_lon, hours, result, verdict)


def water_run_nm(track: DRTrack, start_ns, end_ns) -> np.ndarray:
    """Distance run through the water (nm) between the instants: speed × time over the knots between."""
    speed = np.hypot(track.north_kn, track.east_kn)
    knots = track.knot_ns
    cumulative = np.concatenate([[0.0], np.cumsum(speed[:-1] * np.diff(knots) / NS_PER_HOUR)])

    def at(t):
        k = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, knots.size - 1)
        return cumulative[k] + speed[k] * np.maximum(t - knots[k], 0) / NS_PER_HOUR

    return at(np.asarray(end_ns, dtype=np.int64)) - at(np.asarray(start_ns, dtype=np.int64))


def water_vector_nm(track: DRTrack, start_ns, end_ns) -> tuple[np.ndarray, np.ndarray]:
    """The run through the water between the instants as a vector (nm north, nm east): each velocity × its time."""
    knots = track.knot_ns
    dt = np.diff(knots) / NS_PER_HOUR
    north = np.concatenate([[0.0], np.cumsum(track.north_kn[:-1] * dt)])
    east = np.concatenate([[0.0], np.cumsum(track.east_kn[:-1] * dt)])

    def at(t):
        k = np.clip(np.searchsorted(knots, t, side="right") - 1, 0, knots.size - 1)
        h = np.maximum(t - knots[k], 0) / NS_PER_HOUR
        return north[k] + track.north_kn[k] * h, east[k] + track.east_kn[k] * h

    n1, e1 = at(np.asarray(end_ns, dtype=np.int64))
    n0, e0 = at(np.asarray(start_ns, dtype=np.int64))
    return n1 - n0, e1 - e0


def position_text(lat, lon) -> str:
    return f"{format_angle(lat, 'lat')} {format_angle(lon, 'lon')}"


def _positions_text(lat, lon) -> list[str]:
    lats = np.atleast_1d(format_angle(np.asarray(lat, dtype=float), "lat"))
    lons = np.atleast_1d(format_angle(np.asarray(lon, dtype=float), "lon"))
    return [f"{a} {b}" for a, b in zip(lats.tolist(), lons.tolist())]


def stamps(ns) -> list[str]:
    """Times to the nearest second."""
    rounded = (np.asarray(ns, dtype=np.int64) + NS_PER_SECOND // 2) // NS_PER_SECOND * NS_PER_SECOND
    text = np.datetime_as_string(rounded.astype("datetime64[ns]").astype("datetime64[s]"))
    return [t.replace("T", " ") for t in text.tolist()]


def stamp(ns) -> str:
    """A time to the nearest second."""
    return stamps([int(ns)])[0]


#: The DR a current is carried in differs from the DR through the water by less than this (nm) over the run: no
#: current was carried in it.
CARRIED_MIN_NM = 0.05


def set_current_text(set_deg: float, set_95_deg: float) -> str:
    """A set to whole degrees where its ± is 5° or more (a tenth of a degree with ±52° says more than is known), to
    a tenth below."""
    places = 1 if np.isfinite(set_95_deg) and set_95_deg < 5.0 else 0
    return f"{set_deg:0{4 + places if places else 3}.{places}f}°"


def current_split_text(row: dict) -> str:
    """How the current found at a fix splits where the DR carried one: '(logged 270° 0.8 kn + unaccounted 352° 0.5
    kn)', the second the gap from the DR kept to the fix; '' where the DR carried none."""
    if not row.get("current_in_dr") or not row.get("dr_drift_kn") == row.get("dr_drift_kn"):
        return ""
    if row["unaccounted_drift_kn"] < NIL_DRIFT_KN:  # the DR's current was the whole of it: no set to name
        return (f"({row['current_in_dr']} {row['dr_set_deg']:03.0f}° {row['dr_drift_kn']:.1f} kn, nothing "
                "unaccounted: the DR's gap to the fix under 0.05 kn)")
    return (f"({row['current_in_dr']} {row['dr_set_deg']:03.0f}° {row['dr_drift_kn']:.1f} kn + unaccounted "
            f"{row['unaccounted_set_deg']:03.0f}° {row['unaccounted_drift_kn']:.1f} kn, the DR's gap to the fix)")


def set_drift_rows(vessel: str, track: DRTrack, *, current_in_dr: str = "logged") -> list[dict]:
    """The set and drift at each of the ship's fixes: the whole current (the fix against the DR through the water
    from the known position before). Where the DR kept carries a current (``current_in_dr`` names it: 'logged',
    or 'carried' with the found set and drift carried on), the current in the DR over the run and the rest, the
    gap from the DR kept to the fix ('unaccounted'), whose vector sum is the whole."""
    _, _, detail = _set_drift_at_known(track.through_water, track.known_ns, track.known_lat, track.known_lon,
                                       track.known_cov_nm2)
    rows = []
    if detail is None:
        return rows
    ok, dr_lat, dr_lon, hours, result, (good, reasons) = detail
    if result is None:
        return rows
    index = np.flatnonzero(ok)
    fix_text = _positions_text(track.known_lat[index + 1], track.known_lon[index + 1])
    dr_text = _positions_text(dr_lat[index], dr_lon[index])
    # the DR as kept (with any current it carries) at each fix, and the gap from it to the fix
    kept_lat, kept_lon, _ = track.positions(track.known_ns[index + 1], before_restart=True)
    carried_nm = rhumb_inverse(kept_lat, kept_lon, dr_lat[index], dr_lon[index])[0]
    gap_nm, gap_deg = rhumb_inverse(kept_lat, kept_lon, track.known_lat[index + 1], track.known_lon[index + 1])
    for j, k in enumerate(index):
        i = k + 1  # the known position the set and drift are found at
        label = track.known_label[i]
        if not is_fix_label(label):
            continue  # a position entry restarts the DR but is not a fix to judge the current by
        set_95 = result.set_95_deg[j]
        determined = bool(good[j])
        note = reasons[j]
        if determined and not np.isfinite(set_95):
            note = (f"drift under {result.drift_kn[j] + result.drift_95_kn[j]:.1f} kn, its set not determined (the "
                    "drift does not stand clear of its uncertainty)")
        shown = determined and np.isfinite(set_95)
        rows.append({"vessel": vessel, "fix_group": label[4:], "fix_utc": stamp(track.known_ns[i]),
                     "fix": fix_text[j], "from": track.known_label[k], "hours": round(float(hours[k]), 2),
                     "dr_at_fix": dr_text[j], "dr_to_fix_nm": float(result.drift_kn[j] * hours[k]),
                     "set_deg": float(result.set_deg[j]) if shown else np.nan,
                     "set_95_deg": float(set_95) if shown else np.nan,
                     "drift_kn": float(result.drift_kn[j]) if shown else np.nan,
                     "drift_95_kn": float(result.drift_95_kn[j]) if shown else np.nan,
                     "note": note, "fix_lat_deg": float(track.known_lat[i]),
                     "fix_lon_deg": float(track.known_lon[i]), "dr_lat_deg": float(dr_lat[k]),
                     "dr_lon_deg": float(dr_lon[k]), **_split_columns(
                         current_in_dr if shown and carried_nm[j] >= CARRIED_MIN_NM else "", result, j,
                         float(hours[k]), float(gap_nm[j]), float(gap_deg[j]), float(kept_lat[j]),
                         float(kept_lon[j]))})
    _suspect_fixes(rows)
    return rows


def _split_columns(current_in_dr: str, result, j: int, hours: float, gap_nm: float, gap_deg: float,
                   kept_lat: float, kept_lon: float) -> dict:
    """The current in the DR and the unaccounted rest at one fix (NaN and '' where the DR carried none): the
    unaccounted is the gap from the DR kept to the fix over the hours, the current in the DR the whole less it."""
    out = {"current_in_dr": "", "dr_set_deg": np.nan, "dr_drift_kn": np.nan, "unaccounted_set_deg": np.nan,
           "unaccounted_drift_kn": np.nan, "kept_dr_lat_deg": kept_lat, "kept_dr_lon_deg": kept_lon}
    if not current_in_dr:
        return out
    gap_n, gap_e = gap_nm * math.cos(math.radians(gap_deg)) / hours, gap_nm * math.sin(math.radians(gap_deg)) / hours
    whole_n = float(result.drift_kn[j]) * math.cos(math.radians(float(result.set_deg[j])))
    whole_e = float(result.drift_kn[j]) * math.sin(math.radians(float(result.set_deg[j])))
    dr_n, dr_e = whole_n - gap_n, whole_e - gap_e
    # a nil drift has no set: the direction of a gap of a few cables over the hours is noise, never a current
    out.update({"current_in_dr": current_in_dr, "dr_set_deg": math.degrees(math.atan2(dr_e, dr_n)) % 360.0,
                "dr_drift_kn": math.hypot(dr_n, dr_e),
                "unaccounted_set_deg": gap_deg % 360.0 if gap_nm / hours >= NIL_DRIFT_KN else np.nan,
                "unaccounted_drift_kn": gap_nm / hours})
    return out


def _suspect_fixes(rows: list[dict]) -> None:
    """Two currents found either side of one fix that differ by more than their uncertainty allows and by more
    than CURRENT_JUMP_KN (a current that turns about between fixes hours apart) point at the fix between them,
    not at the sea. The fix with the largest such jump among its neighbours is named on both its rows, whose set
    and drift are no longer given as found."""
    jumps = []
    for before, after in zip(rows, rows[1:]):
        jump = np.nan
        if before["drift_kn"] == before["drift_kn"] and after["drift_kn"] == after["drift_kn"] \
                and after["from"] == f"fix {before['fix_group']}":
            a = np.radians(before["set_deg"]), np.radians(after["set_deg"])
            north = after["drift_kn"] * np.cos(a[1]) - before["drift_kn"] * np.cos(a[0])
            east = after["drift_kn"] * np.sin(a[1]) - before["drift_kn"] * np.sin(a[0])
            limit = max(CURRENT_JUMP_KN, float(np.hypot(before["drift_95_kn"], after["drift_95_kn"])))
            jump = float(np.hypot(north, east)) if np.hypot(north, east) > limit else np.nan
        jumps.append(jump)
    size = np.nan_to_num(np.array(jumps, dtype=float), nan=0.0)
    suspects = [j for j in range(size.size) if size[j] > 0 and size[j] >= (size[j - 1] if j else 0.0)
                and size[j] >= (size[j + 1] if j + 1 < size.size else 0.0)]
    marks = []
    for j in suspects:
        before, after = rows[j], rows[j + 1]
        words = (f"{before['set_deg']:03.0f}° {before['drift_kn']:.1f} kn before the fix {before['fix_group']} and "
                 f"{after['set_deg']:03.0f}° {after['drift_kn']:.1f} kn after it, {size[j]:.1f} kn apart: not a "
                 f"current of the sea; the fix {before['fix_group']} is more likely wrong (its time, a body, an Hs): "
                 "check it")
        marks += [(before, words), (after, words)]
    for row, words in marks:
        row["note"] = f"not determined: {words}"
        for key in ("set_deg", "set_95_deg", "drift_kn", "drift_95_kn", "dr_set_deg", "dr_drift_kn",
                    "unaccounted_set_deg", "unaccounted_drift_kn"):
            row[key] = np.nan
        row["current_in_dr"] = ""


def estimated_positions(voyage, ships: ShipsSights, *, exercises: bool = False) -> list[dict]:
    """The estimated positions of the ship's single lines (``exercises``: of the exercises' instead)."""
    reduced = voyage.reduced
    vessels = _fix_vessels(voyage)
    status = reduced["status"].to_numpy() if len(reduced) else np.zeros(0, dtype=object)
    messages = reduced["message"].to_numpy(dtype=object) if len(reduced) else np.zeros(0, dtype=object)
    out = []
    # a single line that is a latitude (meridian, ex-meridian, Polaris) is named so: the noon EP of a meridian
    # altitude is the trade's noon latitude with the DR's longitude (common practice)
    latitudes = latitude_checks(reduced) if len(reduced) else None
    trusted = latitudes[latitudes["flag"] == ""] if latitudes is not None and len(latitudes) else None
    method = (dict(zip(trusted["index"].astype(int).tolist(), trusted["method"].tolist()))
              if trusted is not None and len(trusted) else {})
    # an ex-meridian latitude that cannot be trusted: its line is kept, the reason goes with the position
    refused = ({int(k): f"the {m} latitude {format_angle(float(a), 'lat')} {f}" for k, m, a, f in zip(
        latitudes["index"], latitudes["method"], latitudes["lat_deg"], latitudes["flag"]) if f}
        if latitudes is not None and len(latitudes) else {})
    for group in voyage.groups:
        if (group.fix is not None and group.fix.is_fix) or ships.is_ship(group.name) == exercises:
            continue
        usable = group.rows[status[group.rows] != SightStatus.ERROR]
        # the sights' own warnings go with the position built on them
        note = "; ".join([f"row {reduced['row'].iat[k]}: {messages[k]}" for k in usable.tolist()
                          if status[k] == SightStatus.WARNING and messages[k]]
                         + [f"row {reduced['row'].iat[k]}: {refused[k]}" for k in usable.tolist() if k in refused])
        rows = [int(reduced["row"].iat[k]) for k in usable.tolist()]
        if group.fix is not None and not group.fix.is_fix:
            fix = group.fix
            utc = stamp(np.datetime64(fix.utc, "ns").astype(np.int64))
            out.append({"vessel": vessels[group.name], "fix_group": group.name, "utc": utc,
                        "ep": ep_name(f"the {fix.kind}", rows, utc), "estimated_position": position_text(
                            fix.lat_deg, fix.lon_deg), "from": f"the {fix.kind} nearest the DR", "note": note,
                        "lat_deg": fix.lat_deg, "lon_deg": fix.lon_deg})
        elif group.fix is None and usable.size == 1:
            r = reduced.iloc[int(usable[0])]
            lat, lon = estimated_position(r["dr_lat_deg"], r["dr_lon_deg"], r["intercept_nm"], r["zn_deg"])
            utc = str(r["sight_utc"])[:19]
            out.append({"vessel": vessels[group.name], "fix_group": group.name, "utc": utc,
                        "ep": ep_name(_single_line_words(r["body_name"], method.get(int(usable[0]), "")), rows,
                                      utc),
                        "estimated_position": position_text(float(lat), float(lon)),
                        "from": "the foot of the perpendicular from the DR to the line",
                        "note": note, "lat_deg": float(lat), "lon_deg": float(lon)})
    return out


def _single_line_words(body: str, method: str) -> str:
    """What one sight's line is: 'the Sun's meridian altitude', 'the Sun's ex-meridian altitude', 'Polaris',
    else 'one Sun line'."""
    if method == "Polaris":
        return "Polaris"
    if method in ("meridian", "ex-meridian"):
        return f"the {body}'s {method} altitude"
    return f"one {body} line"


def ep_name(what: str, rows: list[int], utc: str) -> str:
    """An estimated position named by what it is, the log rows it rests on (the rows every warning names) and its
    time: 'EP from one Sun line (row 4), 22:00 UTC'; 'EP from the line of position (rows 7-8), 05:00 UTC'. The
    fix-group label is not a name: it says nothing of what the position rests on."""
    rows = sorted(rows)
    if len(rows) == 1:
        where = f"row {rows[0]}"
    elif rows == list(range(rows[0], rows[-1] + 1)):
        where = f"rows {rows[0]}-{rows[-1]}"
    else:
        where = "rows " + ", ".join(str(r) for r in rows)
    return f"EP from {what} ({where}), {pd.Timestamp(utc).round('min').strftime('%H:%M')} UTC"


#: A noon from a DR that carries a current (entered in the log, or each fix's carried) is the trade's estimated
#: position (EP) by course, speed and current, named so wherever the noon is shown, never plain "DR", with the
#: current it used and where that came from: "EP (DR with the logged current 270° 0.8 kn, row 4) from the departure
#: at row 2".
EP_PREFIX = "EP ("


def is_reckoned(noon_from: str) -> bool:
    """Whether a noon's "from" names a position by reckoning alone (a DR or an EP by DR and current), not one the
    ship's sights gave."""
    return str(noon_from).startswith(("DR ", EP_PREFIX))


def _ship_references(vessel: str, track: DRTrack, estimated: list[dict], noons: list[dict]):
    """The ship's own positions an exercise can be marked against: her fixes, her noon positions found by a fix
    or a Sun line (not those that are only her DR), her estimated positions; each (instant ns, lat, lon, words,
    rank), the rank breaking a tie in time (a fix first)."""
    refs = [(int(t), float(a), float(b), f"the ship's {label}", 0)
            for t, a, b, label in zip(track.known_ns.tolist(), track.known_lat.tolist(), track.known_lon.tolist(),
                                      track.known_label) if is_fix_label(label)]
    refs += [(pd.Timestamp(n["noon_utc"]).value, float(n["lat_deg"]), float(n["lon_deg"]),
              f"the ship's noon ({n['noon_from'].split(';')[0]})", 1)
             for n in noons if n.get("vessel", "") == vessel and np.isfinite(n.get("lat_deg", np.nan))
             and not is_reckoned(n["noon_from"])]
    refs += [(pd.Timestamp(e["utc"]).value, float(e["lat_deg"]), float(e["lon_deg"]),
              f"the ship's {e['ep']} (fix group {e['fix_group']})", 2)
             for e in estimated if e.get("vessel", "") == vessel]
    return refs


def exercises(voyage, ships: ShipsSights, tracks: dict[str, DRTrack], estimated: list[dict] | None = None,
              noons: list[dict] | None = None) -> list[dict]:
    """Each exercise fix (and estimated position) against the ship's best position at its time: the nearest in
    time, within EXERCISE_REFERENCE_HOURS, of her own fixes, noon positions (by a fix or a Sun line) and estimated
    positions (``estimated``, ``noons``: the ship's, as the day's work found them), carried to the exercise's
    instant along her DR (through every change of course, speed and current); with none within the hour, her DR
    from her last known position. ``ship_from`` says which."""
    if not any(r == EXERCISE for r in ships.role.values()):
        return []
    rows = []
    fixes = [(g.name, np.datetime64(g.fix.utc, "ns").astype(np.int64), g.fix.lat_deg, g.fix.lon_deg, "fix")
             for g in voyage.groups if g.fix is not None and g.fix.is_fix and not ships.is_ship(g.name)]
    lines = [(e["fix_group"], pd.Timestamp(e["utc"]).value, e["lat_deg"], e["lon_deg"], "estimated position")
             for e in estimated_positions(voyage, ships, exercises=True)]
    references = {v: _ship_references(v, track, estimated or [], noons or []) for v, track in tracks.items()}
    window = int(EXERCISE_REFERENCE_HOURS * NS_PER_HOUR)
    for name, t, lat, lon, kind in sorted(fixes + lines, key=lambda x: x[1]):
        vessel = ships.vessel.get(name, "")
        track = tracks.get(vessel)
        row = {"vessel": vessel, "fix_group": name, "observer": ships.observer.get(name, ""), "utc": stamp(t),
               "kind": kind, "position": position_text(lat, lon), "lat_deg": float(lat), "lon_deg": float(lon),
               "ship_position": "", "ship_from": "no DR kept", "off_nm": np.nan, "bearing_deg": np.nan}
        if track is not None:
            near = [r for r in references[vessel] if abs(r[0] - int(t)) <= window]
            if near:
                when, r_lat, r_lon, words, _ = min(near, key=lambda r: (abs(r[0] - int(t)), r[4]))
                s_lat, s_lon = track.carried(r_lat, r_lon, when, int(t))
                minutes = (int(t) - when) / NS_PER_MINUTE
                carried = (" at the same time" if abs(minutes) < 0.5 else
                           f" carried {'on' if minutes > 0 else 'back'} {abs(minutes):.0f} min along her DR")
                s_lat, s_lon, source = float(s_lat), float(s_lon), words + carried
            else:
                d_lat, d_lon, origin = track.positions(np.array([t]))
                if origin[0] < 0 or not np.isfinite(d_lat[0]):
                    rows.append(row)
                    continue
                label = track.known_label[track.known_index(int(origin[0]))]
                at_known = int(track.knot_ns[int(origin[0])]) == int(t)
                s_lat, s_lon = float(d_lat[0]), float(d_lon[0])
                source = label if at_known else (f"DR from the {label} (no position of the ship's own within "
                                                 f"{EXERCISE_REFERENCE_HOURS:g} h)")
            distance, bearing = distance_bearing(s_lat, s_lon, lat, lon)
            row.update({"ship_position": position_text(s_lat, s_lon), "ship_from": source,
                        "off_nm": float(distance), "bearing_deg": float(bearing)})
        rows.append(row)
    return rows


def entry_work(voyage) -> pd.DataFrame:
    """The DR's entries with their working: each course made true, each speed from the log, each clock change."""
    entries = voyage.log.entries
    if not len(entries):
        return pd.DataFrame(columns=ENTRY_WORK_COLUMNS)
    from .shipstime import zone_text

    vessels = _entry_vessels(voyage)
    clocks = [zone_text(z) if np.isfinite(z) else (f"{'advance' if c > 0 else 'retard'} {abs(c):g} h"
                                                   if np.isfinite(c) else "")
              for z, c in zip(entries["clocks_zone_h"].to_numpy(float), entries["clocks_change_h"].to_numpy(float))]
    utc = stamps(utc64(entries["utc"]).astype(np.int64))
    return pd.DataFrame({"vessel": vessels, "row": entries["row"].to_numpy(), "utc": utc,
                         "entry": entries["entry"].to_numpy(), "course_deg": entries["course_deg"].to_numpy(float),
                         "speed_kn": entries["speed_kn"].to_numpy(float), "set_deg": entries["set_deg"].to_numpy(float),
                         "drift_kn": entries["drift_kn"].to_numpy(float),
                         "course_working": entries["course_working"].to_numpy(dtype=object),
                         "speed_working": entries["speed_working"].to_numpy(dtype=object), "clocks": clocks},
                        columns=ENTRY_WORK_COLUMNS)


def ship_latitudes(voyage, ships: ShipsSights) -> pd.DataFrame:
    """The latitudes by meridian altitude, ex-meridian and Polaris of the ship's sights (and the exercises')."""
    table = latitude_checks(voyage.reduced)
    if not len(table):
        return table
    groups = voyage.reduced["fix_group"].to_numpy(dtype=object)[table["index"].to_numpy(dtype=int)]
    role = ["exercise" if not ships.is_ship(g) else "ship" for g in groups]
    return table.assign(fix_group=groups, role=role).drop(columns=["index"])


def known_label_at(track: DRTrack, knot: int) -> str:
    """What the known position restarting the track at a knot is ('fix sun-run-sun', 'departure at row 2')."""
    return track.known_label[track.known_index(knot)]


def track_points(voyage, vessel: str, track: DRTrack) -> list[dict]:
    """The DR track as points: every knot, and one an hour between, from the first known position to the last
    sight, each segment (from one known position to the next) its own leg; at each restart the leg that ends
    there closes on the DR carried to it."""
    reduced = voyage.reduced
    mine = (reduced["vessel"].to_numpy(dtype=object) == vessel) if len(reduced) else np.zeros(0, dtype=bool)
    entries = vessel_entries(voyage, vessel)
    logged = entries[entries["entry"] != "destination"] if len(entries) else entries
    # to the log's last row, a sight's or an entry's (a log of entries alone is a passage too)
    last = int(max(utc64(reduced["sight_utc"][mine]).astype(np.int64).max() if mine.any() else 0,
                   utc64(logged["utc"]).astype(np.int64).max() if len(logged) else 0, track.known_ns[-1]))
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
    when = stamps(t_all[order])
    return [{"vessel": vessel, "utc": u, "lat_deg": float(a), "lon_deg": float(b), "leg": int(g), "kind": k}
            for u, a, b, g, k in zip(when, lat_all[order].tolist(), lon_all[order].tolist(),
                                     leg_all[order].tolist(), kind_all[order].tolist())]


__all__ = ["vessel_tracks", "untrusted_fixes", "ep_name", "NIL_SET", "known_label_at", "NOON_WINDOW_HOURS", "SET_DRIFT_COLUMNS", "NOON_COLUMNS",
           "ESTIMATED_COLUMNS", "EXERCISE_COLUMNS", "ENTRY_WORK_COLUMNS", "current_verdict", "is_fix_label",
           "water_vector_nm", "water_run_nm", "vessel_entries", "SET_DRIFT_MIN_HOURS", "SET_DRIFT_MAX_95_KN",
           "MAX_CURRENT_KN", "position_text", "stamp", "stamps", "ships_of", "set_drift_rows", "set_current_text", "current_split_text", "estimated_positions",
           "exercises", "entry_work", "ship_latitudes", "track_points", "TRACK_STEP_HOURS"]
