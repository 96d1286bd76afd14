"""Noon: the noon position by the ship's clocks and the noon report the master sends. Edge code over
:mod:`navred.reckoning` (the DR track, the lines crossed) and :mod:`navred.jobs.shipstime` (the clocks).

The noon position, in order of preference (each carried to noon along the DR track, through every change of
course, speed and current between, forward or back: :meth:`navred.reckoning.DRTrack.carried`):

1. one of the ship's fixes within :data:`NOON_WINDOW_HOURS` of noon;
2. a running fix at noon: the forenoon Sun line (taken within :data:`FORENOON_HOURS` before noon) run up to the
   latitude at noon (by meridian altitude or ex-meridian within the hour of noon, or by Polaris within the
   twelve hours before), crossing it at :data:`RUN_UP_CUT_DEG` or more (common practice: the noon position of the
   navigation manuals);
3. an estimated position within the hour;
4. the DR, named with the known position it was carried from.

A vessel whose rounds are combined (:mod:`navred.jobs.shipsfixes`) takes every line of the round chosen (the
least-squares crossing), and the mean of a round's estimated positions.

The report beside it: the day's run made good (distance, course, average speed) from the last noon, the distance
through the water, the day's current (the run made good less the run through the water, over the hours), the
distance to go and the ETA to the destination (a ``destination`` entry) or along the route's waypoints (``navred
route``'s, given with ``--route``), at the day's average speed, and the clock changes since the last noon.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..angles import wrap_180
from ..constants import NS_PER_HOUR, NS_PER_MINUTE, NS_PER_SECOND
from ..fixstats import DR_ERROR_FRACTION, DR_ERROR_KN
from ..reckoning import (
    PAST_POLE,
    DRTrack,
    days_run,
    estimated_position,
    lines_crossed,
    ship_noons,
)
from ..sailings import rhumb_inverse
from ..status import FixKind, SightStatus
from .frames import utc64
from .latitudechecks import latitude_checks, longitude_words
from .shipsfixes import ROUND_MINUTES, ShipsSights, combined_rounds
from .shipstime import (
    STATED_WORDS,
    clock_changes_text,
    clock_disagreements,
    stated_zones,
    uncertain_noons,
    vessel_clocks,
    zone_disagreements,
    zone_text,
)
from .shiptrack import (
    EP_PREFIX,
    NOON_WINDOW_HOURS,
    is_fix_label,
    is_reckoned,
    position_text,
    stamp,
    vessel_entries,
    water_run_nm,
    water_vector_nm,
)

#: The forenoon Sun line is taken at most this long before noon.
FORENOON_HOURS = 6.0
#: ... and at least this long before it (nearer noon the Sun bears near the meridian: a latitude, not a line to
#: run up).
FORENOON_LATEST_HOURS = 0.25
#: A Polaris latitude up to this long before noon is run up to it.
POLARIS_HOURS = 12.0
#: Lines run up to noon must cross at this angle or more (common practice: the Sun's bearing changed by 30°).
RUN_UP_CUT_DEG = 30.0


def vessel_lines(voyage, vessel: str, ships: ShipsSights) -> list[dict]:
    """The ship's lines of position of one vessel (not her fixes): each a line through ``foot`` square to ``zn``
    at ``utc_ns``; a latitude (by meridian altitude, ex-meridian or Polaris) has ``latitude`` True, its line the
    parallel of the latitude the method gives."""
    reduced = voyage.reduced
    if not len(reduced):
        return []
    status = reduced["status"].to_numpy()
    checks = latitude_checks(reduced)
    # an ex-meridian latitude that cannot be trusted is no latitude: its sight is a line of position like any other
    by_row = {int(r["index"]): r for r in checks.to_dict("records") if not r["flag"]}
    bodies = reduced["body_name"].to_numpy(dtype=object)
    when = utc64(reduced["sight_utc"]).astype(np.int64)
    lines = []
    for group in voyage.groups:
        if not ships.is_ship(group.name) or ships.vessel.get(group.name, "") != vessel:
            continue
        usable = group.rows[status[group.rows] != SightStatus.ERROR]
        if not usable.size:
            continue
        body = str(bodies[usable[0]]) if len({str(b) for b in bodies[usable]}) == 1 else "mixed"
        base = {"group": group.name, "body": body, "observer": ships.observer.get(group.name, "")}
        fix = group.fix
        if fix is not None and fix.is_fix:
            # a fix's own Sun lines and latitudes (a Sun-run-Sun group's forenoon line and meridian altitude) may
            # still give the noon by the run-up when the fix itself is hours from noon
            for k in usable.tolist():
                k = int(k)
                check = by_row.get(k)
                if str(bodies[k]) != "Sun" and check is None:
                    continue
                lines += _sight_lines(reduced, k, check, {**base, "body": str(bodies[k])}, int(when[k]),
                                      f" (in the fix {group.name})")
            continue
        if fix is not None and not fix.is_fix:
            toward = fix.line_toward_deg if fix.line_toward_deg is not None else (fix.line_bearing_deg or 0.0) + 90.0
            latitude = fix.kind == FixKind.LATITUDE
            method = ("Polaris" if body == "Polaris" else "meridian altitude" if body != "mixed" else "latitude")
            lines.append({**base, "utc_ns": int(np.datetime64(fix.utc, "ns").astype(np.int64)),
                          "foot_lat": fix.lat_deg, "foot_lon": fix.lon_deg, "zn": float(toward), "latitude": latitude,
                          "method": method if latitude else f"{body} line"})
        elif fix is None and usable.size == 1:
            k = int(usable[0])
            lines += _sight_lines(reduced, k, by_row.get(k), base, int(when[k]), "")
    return lines


def _sight_lines(reduced, k: int, check, base: dict, utc_ns: int, where: str) -> list[dict]:
    """One sight's own line of position (the intercept worked from the DR): exact, where the reductions to the
    meridian approximate it; a sight that gives a latitude by its method is a latitude line."""
    r = reduced.iloc[k]
    lat, lon = estimated_position(r["dr_lat_deg"], r["dr_lon_deg"], r["intercept_nm"], r["zn_deg"])
    method = f"{base['body']} line"
    if check is not None:
        method = {"meridian": "meridian altitude", "ex-meridian": "ex-meridian", "Polaris": "Polaris"}[
            check["method"]]
        if check["method"] == "ex-meridian":
            method += (f" ({check['minutes_from_meridian']:.0f} min from the meridian, within its "
                       f"{check['limit_minutes']:.0f} min; "
                       f"{longitude_words(check['lat_per_10_lon_arcmin'], check['dr_lon_deg'])})")
    return [{**base, "utc_ns": utc_ns, "foot_lat": float(lat), "foot_lon": float(lon), "zn": float(r["zn_deg"]),
             "latitude": check is not None, "method": method + where}]


def _round_of(chosen: dict, candidates: list[dict], ships: ShipsSights, vessel: str) -> list[dict]:
    """The line chosen, and in a vessel whose rounds are combined the other observers' lines of its round."""
    if vessel not in ships.combined:
        return [chosen]
    ordered = sorted(candidates, key=lambda c: c["utc_ns"])
    times = np.array([c["utc_ns"] for c in ordered], dtype=np.int64)
    for members in combined_rounds(times, [c["group"] for c in ordered], ships.observer):
        if any(ordered[m] is chosen for m in members):
            return [ordered[m] for m in members]
    return [chosen]


#: The error a line of position is taken to have at its time (nm, 1 σ) in the noon position's uncertainty: a mile
#: (common practice: a sextant line good to a mile or so at sea).
LINE_SIGMA_NM = 1.0


def _dr_sigma_nm(track: DRTrack, start: int, end: int) -> float:
    """The DR's own error (1 σ, nm, each way) over a run between two instants: the model navred's fixes use."""
    hours = abs(end - start) / NS_PER_HOUR
    miles = float(water_run_nm(track.through_water, min(start, end), max(start, end)))
    return DR_ERROR_KN * hours + DR_ERROR_FRACTION * miles


def _utc_words(ns: int, noon: int) -> str:
    """'HH:MM UTC' of an instant the noon rests on, with its UTC date where it is not the noon's ('21:00 UTC 6
    Oct': over the date line a time alone is read on the wrong day as easily as on the right one), as the
    passage paper's pages give it (:func:`navred.jobs.bridge.utc_stamp`)."""
    from .bridge import utc_stamp

    noon_date = np.datetime64(int(noon) + 30 * NS_PER_SECOND, "ns").astype("datetime64[D]")
    return utc_stamp(np.datetime64(int(ns), "ns"), noon_date)


def _changes_between(track: DRTrack, a: int, b: int) -> int:
    """The changes of the velocity over the ground strictly between two instants (a second apart from either)."""
    low, high = min(a, b) + NS_PER_SECOND, max(a, b) - NS_PER_SECOND
    north, east = track.north_kn, track.east_kn
    changed = np.concatenate([[False], (np.abs(np.diff(north)) + np.abs(np.diff(east))) > 1e-9])
    return int(((track.knot_ns > low) & (track.knot_ns < high) & changed).sum())


def _carried_text(what: str, t: int, noon: int, track: DRTrack, *, timed: bool = False) -> str:
    """How the noon was found: ``what`` at its time (``timed``: ``what`` names its time already), and carried to
    noon along the DR where it was not at noon."""
    what = what if timed else f"{what} at {_utc_words(t, noon)}"
    if abs(noon - t) < 30 * NS_PER_SECOND:
        return what
    changes = _changes_between(track, t, noon)
    through = f" through {changes} change{'s' if changes != 1 else ''} of course, speed or current" if changes else ""
    return f"{what} carried {'back ' if t > noon else ''}to noon{through}"


def _from_fix(track: DRTrack, noon: int):
    fixes = [(int(t), la, lo, lab) for t, la, lo, lab in zip(track.known_ns, track.known_lat, track.known_lon,
                                                            track.known_label) if is_fix_label(lab)]
    near = [c for c in fixes if abs(c[0] - noon) <= NOON_WINDOW_HOURS * NS_PER_HOUR]
    if not near:
        return None
    t, lat, lon, label = min(near, key=lambda c: abs(c[0] - noon))
    cov = track.known_cov_nm2[int(np.searchsorted(track.known_ns, t))] if track.known_cov_nm2 is not None else 0.0
    sigma = float(np.sqrt(np.trace(np.atleast_2d(cov)) / 2.0 + _dr_sigma_nm(track, t, noon) ** 2))
    lat, lon = track.carried(lat, lon, t, noon)
    return float(lat), float(lon), _carried_text(label, t, noon, track), True, sigma


def _run_up(track: DRTrack, noon: int, lines: list[dict], ships: ShipsSights, vessel: str):
    """The forenoon Sun line run up to the latitude at noon (a running fix), or None."""
    window = NOON_WINDOW_HOURS * NS_PER_HOUR
    latitudes = [x for x in lines if x["latitude"] and (
        abs(x["utc_ns"] - noon) <= window if not x["method"].startswith("Polaris")
        else -POLARIS_HOURS * NS_PER_HOUR <= x["utc_ns"] - noon <= window)]
    if not latitudes:
        return None
    latitude = min(latitudes, key=lambda x: (x["method"].startswith("Polaris"), abs(x["utc_ns"] - noon)))
    suns = [x for x in lines if not x["latitude"] and x["body"] == "Sun"
            and -FORENOON_HOURS * NS_PER_HOUR <= x["utc_ns"] - noon <= -FORENOON_LATEST_HOURS * NS_PER_HOUR
            and abs((x["zn"] - latitude["zn"] + 90.0) % 180.0 - 90.0) >= RUN_UP_CUT_DEG]
    if not suns:
        return None
    sun = max(suns, key=lambda x: x["utc_ns"])
    chosen = _round_of(latitude, latitudes, ships, vessel) + _round_of(sun, suns, ships, vessel)
    dr_lat, dr_lon, origin = track.positions(np.array([noon]))
    if origin[0] < 0 or not np.isfinite(dr_lat[0]):
        return None
    feet_lat, feet_lon = track.carried(np.array([c["foot_lat"] for c in chosen]),
                                       np.array([c["foot_lon"] for c in chosen]),
                                       np.array([c["utc_ns"] for c in chosen]), noon)
    lat, lon, cut = lines_crossed(float(dr_lat[0]), float(dr_lon[0]), feet_lat, feet_lon,
                                  [c["zn"] for c in chosen])
    earliest = min(c["utc_ns"] for c in chosen)
    sigma = float(np.hypot(LINE_SIGMA_NM / np.sqrt(len(chosen) / 2.0), _dr_sigma_nm(track, earliest, noon)))
    several = f" ({len(chosen)} lines of the watch's rounds)" if len(chosen) > 2 else ""
    text = (f"forenoon Sun line at {_utc_words(sun['utc_ns'], noon)} run up to the latitude by {latitude['method']} "
            f"at {_utc_words(latitude['utc_ns'], noon)}: a running fix at noon, the lines crossing at {cut:.0f}°{several}")
    return lat, lon, text, True, sigma


def _from_estimated(track: DRTrack, noon: int, estimated: list[dict], ships: ShipsSights, vessel: str):
    eps = [{"utc_ns": int(pd.Timestamp(e["utc"]).value), "lat": e["lat_deg"], "lon": e["lon_deg"],
            "group": e["fix_group"], "name": e["ep"], "note": e.get("note") or ""} for e in estimated
           if e["vessel"] == vessel]
    near = [e for e in eps if abs(e["utc_ns"] - noon) <= NOON_WINDOW_HOURS * NS_PER_HOUR]
    if not near:
        return None
    chosen = min(near, key=lambda e: abs(e["utc_ns"] - noon))
    members = _round_of(chosen, near, ships, vessel)
    lat, lon = track.carried(np.array([m["lat"] for m in members]), np.array([m["lon"] for m in members]),
                             np.array([m["utc_ns"] for m in members]), noon)
    if len(members) == 1:
        text = _carried_text(chosen["name"], chosen["utc_ns"], noon, track, timed=True)
    else:
        text = _carried_text(f"the mean of the round's {len(members)} EPs from single lines", chosen["utc_ns"], noon,
                             track)
    # a noon resting on a sight with a warning says so where it is reported, naming the row (never hidden)
    warned = [w for m in members for w in _warned_rows(m["note"])]
    if warned:
        text += "; " + "; ".join(f"row {row} warns: {words}" for row, words in dict(warned).items())
    east = np.mean(wrap_180(np.atleast_1d(lon) - float(np.atleast_1d(lon)[0])))
    sigma = _from_dr(track, noon)[4]
    return float(np.mean(lat)), float(wrap_180(np.atleast_1d(lon)[0] + east)), text, False, sigma


def _warned_rows(note: str) -> list[tuple[str, str]]:
    """An estimated position's note ('row 4: high sight (Hc above 85°): ...; row 5: ...') as (row, the warning's
    first words) pairs."""
    import re

    out = []
    for row, words in re.findall(r"(?:^|; )row (\d+): ([^;]*)", note):
        words = words.split(": ")[0].strip()
        while words.count("(") > words.count(")"):  # a bracket the cut left open: up to it
            words = words[:words.rfind("(")].strip()
        out.append((row, words))
    return out


def _from_dr(track: DRTrack, noon: int, currents: tuple = ()):
    lat, lon, origin = track.positions(np.array([noon]))
    if origin[0] < 0:
        return np.nan, np.nan, "", False, np.nan
    index = track.known_index(int(origin[0]))
    label = track.known_label[index]
    if not np.isfinite(lat[0]):
        return np.nan, np.nan, f"none: {PAST_POLE.split(':')[0]} from the {label}", False, np.nan
    cov = track.known_cov_nm2[index] if track.known_cov_nm2 is not None else np.zeros((2, 2))
    sigma = float(np.sqrt(np.trace(cov) / 2.0 + _dr_sigma_nm(track, int(track.known_ns[index]), noon) ** 2))
    if _carries_current(track, int(track.known_ns[index]), noon):
        return (float(lat[0]), float(lon[0]), f"{EP_PREFIX}DR with {current_used(track, noon, currents)}) from the "
                f"{label}", False, sigma)
    return float(lat[0]), float(lon[0]), f"DR from the {label}", False, sigma


def current_sources(voyage, vessel: str, track: DRTrack, entries) -> tuple[tuple[int, str, str], ...]:
    """Where the DR's current comes from, in time order: (instant ns, 'logged', 'row N') for each current the log
    enters, and with ``carry_current`` (instant ns, 'carried', 'the fix NAME') for each fix whose set and drift
    are determined (:func:`navred.jobs.shiptrack.set_drift_rows`, the ones the DR carries)."""
    from .shiptrack import set_drift_rows

    out = []
    if len(entries):
        logged = entries[entries["entry"] == "current"]
        out += [(int(t), "logged", f"row {r}") for t, r in zip(utc64(logged["utc"]).astype(np.int64).tolist(),
                                                                 logged["row"].tolist())]
    if getattr(voyage, "carry_current", False):
        for row in set_drift_rows(vessel, track):
            if np.isfinite(row.get("drift_kn", np.nan)) and np.isfinite(row.get("set_deg", np.nan)):
                out.append((int(pd.Timestamp(row["fix_utc"]).value), "carried", f"the fix {row['fix_group']}"))
    return tuple(sorted(out))


def current_used(track: DRTrack, noon: int, currents: tuple = ()) -> str:
    """The current the DR carries into ``noon`` in words, with where it came from (the latest of ``currents``,
    :func:`current_sources`, at or before noon): 'the logged current 270° 0.8 kn, row 4', 'the current 297° 0.9
    kn carried from the fix 4 morning'. The current is the DR's velocity over the ground less its velocity through
    the water over the minute before noon."""
    water = track.through_water
    if water is None:
        return ""
    t = np.array([noon - NS_PER_MINUTE // 2], dtype=np.int64)
    ground_n, ground_e = (float(np.atleast_1d(v)[0]) for v in track.velocity_at(t))
    water_n, water_e = (float(np.atleast_1d(v)[0]) for v in water.velocity_at(t))
    north, east = ground_n - water_n, ground_e - water_e
    drift = float(np.hypot(north, east))
    set_ = float(np.degrees(np.arctan2(east, north)) % 360.0)
    value = f"{set_:03.0f}° {drift:.1f} kn"
    before = [c for c in currents if c[0] <= noon]
    if not before:
        return f"the current {value}"
    _, kind, where = before[-1]
    return f"the logged current {value}, {where}" if kind == "logged" else f"the current {value} carried from {where}"


def _carries_current(track: DRTrack, start: int, end: int) -> bool:
    """Whether the DR between two instants carries a current: its velocity over the ground differs from the one
    through the water (by 0.05 kn or more) anywhere between."""
    water = track.through_water
    if water is None:
        return False
    low, high = min(start, end), max(start, end)
    knots = np.concatenate([track.knot_ns, water.knot_ns]).astype(np.int64)
    times = np.unique(np.concatenate([[low], knots[(knots > low) & (knots < high)], [high]]))
    middles = times[:-1] + (times[1:] - times[:-1]) // 2 if times.size > 1 else times
    ground_n, ground_e = track.velocity_at(middles)
    water_n, water_e = water.velocity_at(middles)
    current = np.hypot(np.asarray(ground_n) - np.asarray(water_n), np.asarray(ground_e) - np.asarray(water_e))
    return bool((np.nan_to_num(current) >= 0.05).any())


def noon_position(track: DRTrack, noon: int, estimated: list[dict], lines: list[dict], ships: ShipsSights,
                  vessel: str, currents: tuple = ()) -> tuple[float, float, str, bool, float]:
    """(lat, lon, how it was found, observed, its error: 1 σ each way, nm) of the noon position (the module's order
    of preference). The error: a fix's own, or a mile a line (:data:`LINE_SIGMA_NM`), with the DR's error over the
    run to noon (0.3 kn an hour and 2 % of the miles, the model of navred's fixes)."""
    for found in (_from_fix(track, noon), _run_up(track, noon, lines, ships, vessel),
                  _from_estimated(track, noon, estimated, ships, vessel)):
        if found is not None:
            return found
    return _from_dr(track, noon, currents)


def _waypoints(voyage, vessel: str) -> list[tuple[float, float, str]]:
    """The waypoints ahead of the vessel: the route given with the run, else her destination entries."""
    route = getattr(voyage, "route", None)
    if route is not None and len(route):
        names = route["name"].astype(str).tolist() if "name" in route.columns else [""] * len(route)
        return [(float(a), float(b), n or f"waypoint {k + 1}") for k, (a, b, n) in
                enumerate(zip(route["lat_deg"], route["lon_deg"], names))]
    entries = vessel_entries(voyage, vessel)
    if not len(entries):
        return []
    ends = entries[entries["entry"] == "destination"]
    return [(float(r.lat_deg), float(r.lon_deg), f"the destination (row {r.row})") for r in ends.itertuples()]


#: A noon position farther than this from the route's leg (nautical miles) is said to be off the route.
OFF_ROUTE_NM = 10.0


def distance_to_go(lat: float, lon: float, waypoints: list[tuple[float, float, str]],
                   course_deg: float | None = None) -> tuple[float, str]:
    """Miles to go (rhumb lines) from a position along the waypoints to the last one, and the waypoint steered for:
    the next waypoint is the end of the leg the position lies nearest (a position beyond a leg's end is past it)."""
    if not waypoints:
        return np.nan, ""
    w_lat = np.array([w[0] for w in waypoints])
    w_lon = np.array([w[1] for w in waypoints])
    legs, _ = rhumb_inverse(w_lat[:-1], w_lon[:-1], w_lat[1:], w_lon[1:]) if len(waypoints) > 1 else (np.zeros(0), 0)
    after = np.concatenate([np.cumsum(np.asarray(legs)[::-1])[::-1], [0.0]]) if len(waypoints) > 1 else np.zeros(1)
    to_each, _ = rhumb_inverse(lat, lon, w_lat, w_lon)
    to_each = np.atleast_1d(to_each)
    nxt = 0
    if len(waypoints) > 1:
        # the leg whose ends' distances add up nearest its length: the one the ship is on
        excess = to_each[:-1] + to_each[1:] - np.asarray(legs)
        nxt = int(np.argmin(excess)) + 1
        if to_each[nxt] < 0.01 and nxt < len(waypoints) - 1:
            nxt += 1  # at a waypoint: the next one is steered for (the same distance to go)
    off = ""
    if len(waypoints) > 1:
        a = max(nxt - 1, 0)
        _, leg_course = rhumb_inverse(w_lat[a], w_lon[a], w_lat[a + 1], w_lon[a + 1])
        _, from_start = rhumb_inverse(w_lat[a], w_lon[a], lat, lon)
        across = float(to_each[a] * np.sin(np.radians(float(from_start) - float(leg_course))))
        heading = float(course_deg) if course_deg is not None and np.isfinite(course_deg) else float(leg_course)
        _, toward = rhumb_inverse(lat, lon, w_lat[nxt], w_lon[nxt])
        while nxt < len(waypoints) - 1 and abs(float(wrap_180(float(toward) - heading))) > 90.0:
            nxt += 1  # the waypoint lies abaft the ship's beam: it is past; steer for the next
            _, toward = rhumb_inverse(lat, lon, w_lat[nxt], w_lon[nxt])
        if abs(across) > OFF_ROUTE_NM:
            off = (f" (the noon position is {abs(across):.0f} nm {'right' if across > 0 else 'left'} of the route's "
                   "leg: the distance is to the next waypoint ahead and along the route from it)")
    name = waypoints[-1][2] if nxt == len(waypoints) - 1 else f"{waypoints[nxt][2]}, then on to {waypoints[-1][2]}"
    return float(to_each[nxt] + after[nxt]), name + off


def noon_rows(voyage, vessel: str, track: DRTrack, estimated: list[dict], lines: list[dict], ships: ShipsSights):
    """One vessel's noon report rows, the notes on it (the clocks, why there is no noon), and her clocks."""
    reduced = voyage.reduced
    mine = (reduced["vessel"].to_numpy(dtype=object) == vessel) & (reduced["status"].to_numpy() != SightStatus.ERROR) \
        if len(reduced) else np.zeros(0, dtype=bool)
    sight_ns = utc64(reduced["sight_utc"]).astype(np.int64)[mine] if mine.any() else np.zeros(0, np.int64)
    entries = vessel_entries(voyage, vessel)
    entry_ns = utc64(entries["utc"]).astype(np.int64) if len(entries) else np.zeros(0, np.int64)
    first = int(track.known_ns[0])
    last = int(max(sight_ns.max() if sight_ns.size else first, track.known_ns[-1],
                   entry_ns[entries["entry"].to_numpy() != "destination"].max() if len(entries) and
                   (entries["entry"] != "destination").any() else first))
    # a noon within the hour after the log's last row is the day's work of that morning (its fix run up to noon)
    log_end, last = last, last + int(NOON_WINDOW_HOURS * NS_PER_HOUR)
    sights = reduced[reduced["vessel"].to_numpy(dtype=object) == vessel] if len(reduced) else reduced
    stated = stated_zones(entries, sights)
    clocks, how, left = vessel_clocks(entries, track, first, last, stated)
    kept_as_stated = how.startswith(STATED_WORDS)
    label = vessel or "the ship"
    rejected = getattr(voyage, "rejected", None)
    if how.startswith("no clocks entry") and rejected is not None and len(rejected):
        refused = rejected[rejected["column"].astype(str).str.contains("clocks")]
        if len(refused):
            rows = ", ".join(f"row {r}" for r in refused["row"].drop_duplicates().tolist())
            how = (f"no clocks entry read ({rows} refused: see its reason), so " + how[len("no clocks entry: "):]
                   if how.startswith("no clocks entry: ") else how)
    notes = [f"{label}: zone time kept: {how}"]
    if kept_as_stated:
        notes += [f"{label}: {text}" for text in zone_disagreements(stated, track)]
    elif how.startswith("the clocks as entered"):
        notes += [f"{label}: {text}" for text in clock_disagreements(stated, clocks)]
    noon, day, zone = ship_noons(clocks, first, last)
    uncertain = uncertain_noons(left, noon, day)
    notes += [f"{label}: noon of {str(np.datetime64(int(day[k]), 'ns').astype('datetime64[D]'))}: {text}"
              for k, text in uncertain.items()]
    if not noon.size:
        start, end = clocks.ship_time_ns([first, log_end])
        if log_end - first < NS_PER_MINUTE:
            span = (f"the DR starts at {stamp(first)} UTC ({stamp(start)[11:16]} by the ship's clocks) and the log ends "
                    "there")
        else:
            span = (f"the DR runs from {stamp(first)} to {stamp(log_end)} UTC ({stamp(start)} to {stamp(end)} by the "
                    "ship's clocks)")
        notes.append(f"{label}: Noon positions: none: {span}, and no noon by her clocks falls within it")
        return [], notes, (clocks, how)
    currents = current_sources(voyage, vessel, track, entries)
    found = [noon_position(track, int(t), estimated, lines, ships, vessel, currents) for t in noon.tolist()]
    lat = np.array([f[0] for f in found], dtype=float)
    lon = np.array([f[1] for f in found], dtype=float)
    run = days_run(noon, lat, lon)
    through = water_run_nm(track.through_water, noon[:-1], noon[1:]) if noon.size > 1 else np.zeros(0)
    water_n, water_e = water_vector_nm(track.through_water, noon[:-1], noon[1:]) if noon.size > 1 else (
        np.zeros(0), np.zeros(0))
    fix_times = np.array([t for t, lab in zip(track.known_ns, track.known_label) if is_fix_label(lab)], dtype=np.int64)
    waypoints = _waypoints(voyage, vessel)
    unallowed = _current_not_allowed(voyage, vessel, track, entries)
    rows = []
    for k in range(noon.size):
        previous = int(noon[k - 1]) if k else first
        count = int(((fix_times > previous + 30 * NS_PER_SECOND) & (fix_times <= noon[k] + 30 * NS_PER_SECOND)).sum()
                    ) if fix_times.size else 0
        row = {"vessel": vessel, "date": str(np.datetime64(int(day[k]), "ns").astype("datetime64[D]")),
               "zone_h": float(zone[k]) + 0.0, "zone": zone_text(zone[k]), "noon_utc": stamp(noon[k]),
               "noon_position": position_text(lat[k], lon[k]) if np.isfinite(lat[k]) else "",
               "noon_from": found[k][2] + _current_words(found[k][2], unallowed, int(noon[k])), "run_nm": np.nan, "course_made_good_deg": np.nan,
               "speed_made_good_kn": np.nan, "through_water_nm": np.nan, "hours": np.nan,
               "current_set_deg": np.nan, "current_set_95_deg": np.nan, "current_drift_kn": np.nan, "current_95_kn": np.nan, "current_note": "", "to": "", "to_go_nm": np.nan,
               "eta_utc": "", "eta_ship_time": "", "eta_basis": "", "clock_changes": "; ".join(filter(None, [uncertain.get(k, ""), _clock_words(clocks, previous, int(noon[k]), k, zone[k])])),
               "fixes_that_day": count, "lat_deg": float(lat[k]), "lon_deg": float(lon[k]),
               "noon_sigma_nm": float(found[k][4])}
        if k:
            row.update(_days_run_columns(run, through, water_n, water_e, k, found))
            used = current_used(track, int(noon[k]), currents) if found[k][2].startswith(EP_PREFIX) else ""
            if used and used not in row["current_note"]:
                # the current line says which current the noon used, beside any the noons observed
                row["current_note"] = (f"{row['current_note']}; " if row["current_note"] else "") + \
                    f"this noon's EP used {used}"
        row.update(_to_go_columns(row, waypoints, track, int(noon[k]), clocks))
        rows.append(row)
    return rows, notes, (clocks, how)


def _current_not_allowed(voyage, vessel: str, track: DRTrack, entries) -> list[tuple[int, str]]:
    """Where the DR carries no current (none entered, none carried) but the ship's fixes found one: (the fix's
    time, what it found) of each fix whose set and drift are determined, in time order; else none."""
    from .shiptrack import set_drift_rows

    if getattr(voyage, "carry_current", False) or (len(entries) and (entries["entry"] == "current").any()):
        return []
    found = []
    for row in set_drift_rows(vessel, track):
        if np.isfinite(row.get("drift_kn", np.nan)) and np.isfinite(row.get("set_deg", np.nan)):
            when = int(pd.Timestamp(row["fix_utc"]).value)
            found.append((when, f"the fix {row['fix_group']} found a current of {row['set_deg']:03.0f}° "
                                f"{row['drift_kn']:.1f} kn"))
    return sorted(found)


def _current_words(noon_from: str, unallowed: list[tuple[int, str]], noon: int) -> str:
    """What a noon carried along a DR with no current must say when a fix before it found one."""
    if not unallowed or noon_from.startswith("fix ") or "running fix" in noon_from and "at noon" not in noon_from:
        return ""
    before = [text for when, text in unallowed if when <= noon]
    if not before:
        return ""
    return (f"; its DR allows no current, but {before[-1]} (enter it as a current, or --carry-current carries "
            "each fix's)")


#: What the day's current's ± covers: the rule of the set and drift at each fix (navred.reckoning.set_and_drift,
#: navred.jobs.shiptrack.current_verdict), stated with the figure.
CURRENT_95_COVERS = ("the ± covers both noon positions' errors and the DR's own over the run, 0.3 kn an hour and 2 % "
                     "of the miles, as at each fix")


def _days_run_columns(run, through, water_n, water_e, k: int, found) -> dict:
    """The day's run to noon ``k`` and the day's current: the run made good less the run through the water, its
    95 % interval and whether it is determined by the one rule of the set and drift at each fix
    (:func:`navred.reckoning.set_and_drift` from the noon positions' errors and the DR's own over the run,
    :func:`navred.jobs.shiptrack.current_verdict`)."""
    from ..reckoning import set_and_drift
    from ..sailings import rhumb_destination
    from .shiptrack import current_verdict

    hours = float(run.hours[k - 1])
    out = {"run_nm": float(run.distance_nm[k - 1]), "course_made_good_deg": float(run.course_deg[k - 1]),
           "speed_made_good_kn": float(run.speed_kn[k - 1]), "through_water_nm": float(through[k - 1]),
           "hours": hours}
    if not (np.isfinite(found[k - 1][0]) and np.isfinite(found[k][0]) and hours > 0):
        return out
    if is_reckoned(found[k - 1][2]) and found[k - 1][2] == found[k][2]:
        if found[k][2].startswith(EP_PREFIX):
            out["current_note"] = (f"none observed: both noons are reckoned from the {found[k][2].split(') from the ')[-1]}"
                                   ", so the noons show no current of their own")
        else:
            out["current_note"] = (f"none observed: both noons are the {found[k][2]} (its current is what the log "
                                   "enters or carries)")
        return out
    # the DR at this noon through the water from the last noon position: the fix's rule against it
    water = float(np.hypot(water_n[k - 1], water_e[k - 1]))
    course = float(np.degrees(np.arctan2(water_e[k - 1], water_n[k - 1])) % 360.0)
    dr_lat, dr_lon = rhumb_destination(found[k - 1][0], found[k - 1][1], course, water)
    covs = [np.eye(2) * float(found[j][4]) ** 2 if np.isfinite(found[j][4]) else np.zeros((2, 2)) for j in (k - 1, k)]
    result = set_and_drift(float(dr_lat), float(dr_lon), found[k][0], found[k][1], hours, covs[1], covs[0],
                           float(through[k - 1]), dr_error_kn=DR_ERROR_KN, dr_error_fraction=DR_ERROR_FRACTION)
    drift, spread = float(result.drift_kn), float(result.drift_95_kn)
    good, reasons = current_verdict(hours, drift, spread, drift * hours)
    observed = found[k - 1][3] and found[k][3]
    basis = ("the noon positions less the run through the water" if observed else
             "the noon positions are not both fixes: the current is only as good as the DR they rest on")
    out["current_95_kn"] = spread
    if not good[0]:
        out["current_note"] = reasons[0].replace("the fixes", "the noons").replace("the fix ", "the noon position ")
        return out
    if not np.isfinite(result.set_95_deg):
        out["current_note"] = f"under {drift + spread:.1f} kn, its set not determined ({basis}; {CURRENT_95_COVERS})"
        return out
    out.update({"current_set_deg": float(result.set_deg), "current_set_95_deg": float(result.set_95_deg),
                "current_drift_kn": drift,
                "current_note": f"{basis}; {CURRENT_95_COVERS}"})
    return out


def _clock_words(clocks, previous: int, noon: int, k: int, zone_h: float) -> str:
    """The clock changes since the last noon; at the first noon, which has none before it, since the log's start,
    or the zone kept ('' where a later noon's clocks are unchanged)."""
    changes = clock_changes_text(clocks, previous, noon)
    if k:
        return changes
    return (f"the first noon: since the start of the log, {changes}" if changes else
            f"the first noon: kept on {zone_text(zone_h)} since the start of the log")


def _to_go_columns(row: dict, waypoints, track: DRTrack, noon: int, clocks) -> dict:
    """Distance to go and the ETA at the day's average speed made good (else the speed in force at noon)."""
    if not waypoints or not np.isfinite(row["lat_deg"]):
        return {}
    north, east = track.velocity_at(np.array([noon]))
    course = float(np.degrees(np.arctan2(east[0], north[0])) % 360.0) if np.hypot(north[0], east[0]) > 0.1 else None
    to_go, name = distance_to_go(row["lat_deg"], row["lon_deg"], waypoints, course)
    speed = row["speed_made_good_kn"]
    basis = "the day's average speed"
    if not (np.isfinite(speed) and speed > 0.1):
        north, east = track.velocity_at(np.array([noon]))
        speed, basis = float(np.hypot(north[0], east[0])), "the speed in force at noon"
    out = {"to": name, "to_go_nm": to_go}
    if speed > 0.1 and np.isfinite(to_go):
        eta = noon + int(round(to_go / speed * NS_PER_HOUR / NS_PER_MINUTE)) * NS_PER_MINUTE
        ship = eta - int(round(clocks.zone_at(np.array([noon]))[0] * NS_PER_HOUR))
        out.update({"eta_utc": stamp(eta)[:16], "eta_ship_time": stamp(ship)[:16],
                    "eta_basis": f"{row['zone']}, at {basis} {speed:.1f} kn"})
    return out


__all__ = ["noon_rows", "noon_position", "vessel_lines", "distance_to_go", "FORENOON_HOURS", "RUN_UP_CUT_DEG",
           "POLARIS_HOURS", "ROUND_MINUTES"]
