"""The reader's first carry of the DR along a sight log's track: the entry rows (departure, position, course,
current) checked and read, each sight's DR carried from the departure or last known position where the row gives
none, and a blank course or speed carried from the last row that gives one. Each vessel keeps her own track
(:func:`navred.reckoning.dr_track`). The fixes restart it later (:func:`navred.jobs.voyage.process_log`).
Used by :mod:`navred.io.logbook`."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import NS_PER_MINUTE
from ..timescales import utc_jd_to_datetime64
from .logcells import floats, texts_of, words

#: The columns of a log's entries (:attr:`navred.io.logbook.SightLog.entries`).
ENTRY_COLUMNS = ["source", "row", "utc", "entry", "lat_deg", "lon_deg", "course_deg", "speed_kn", "set_deg",
                 "drift_kn", "vessel", "zone_h", "compass_course_deg", "deviation_deg", "variation_deg",
                 "leeway_deg", "log_reading_nm", "clocks_zone_h", "clocks_change_h", "course_working",
                 "speed_working"]
#: The columns only an entry row gives (the ship's progress): refused on a sight's row.
ENTRY_ONLY = ("compass_course", "deviation", "variation", "leeway", "wind_side", "log_reading", "clocks")

#: A sight taken more than this before its fix's time is advanced to it along the course and speed in force
#: after it (a running fix): a blank course or speed there would be read as a ship stopped.
RUN_MINUTES = 2.0


def carried_motion(dr, parsed, gathered, times, is_entry, entries, rows, problems) -> np.ndarray:
    """A sight's blank course or speed carried from the last row before it (of its vessel, in time) that gives
    one, a sight's or an entry's, and named in the note returned ('speed 6.5 kn carried from row 7'). The course
    and speed in ``dr`` are filled in place."""
    n = rows.size
    note = texts_of(n, "")
    if not (gathered["course"].present or gathered["speed"].present or len(entries)):
        return note  # the log keeps no motion at all: nothing to carry (a fix warns of a run without one)
    course, speed = dr["course"], dr["speed"]
    given_course, given_speed = floats(parsed["course"]), floats(parsed["speed"])
    ok = times["ok"] & ~problems.mask()
    sight = ~is_entry
    when = np.full(n, np.iinfo(np.int64).min, dtype=np.int64)
    when[times["ok"]] = utc_jd_to_datetime64(times["jd1"][times["ok"]], times["jd2"][times["ok"]]).astype(np.int64)
    vessels = words(parsed["vessel"])
    e_vessel = entries["vessel"].to_numpy(dtype=object) if len(entries) else np.zeros(0, dtype=object)
    named = set(vessels[sight].tolist()) - {""}
    if len(entries) and not (e_vessel != "").any() and len(named) == 1:
        e_vessel = np.full(len(entries), next(iter(named)), dtype=object)
    e_when = entries["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64) \
        if len(entries) else np.zeros(0, dtype=np.int64)
    blank = sight & ok & (np.isnan(given_course) | np.isnan(given_speed))
    for vessel in dict.fromkeys(vessels[blank].tolist()):
        mine = vessels == vessel
        own = sight & ok & mine
        e_mine = e_vessel == vessel
        change_ns = np.concatenate([e_when[e_mine], when[own]])
        change_row = np.concatenate([entries["row"].to_numpy(dtype=int)[e_mine], rows[own]])
        order = np.argsort(change_ns, kind="stable")
        t = change_ns[order]
        targets = np.flatnonzero(blank & mine)
        texts = [[] for _ in targets]
        for values, given, unit, name in ((np.concatenate([entries["course_deg"].to_numpy(dtype=float)[e_mine],
                                                           given_course[own]]), given_course, "°", "course"),
                                          (np.concatenate([entries["speed_kn"].to_numpy(dtype=float)[e_mine],
                                                           given_speed[own]]), given_speed, " kn", "speed")):
            values = values[order]
            last = np.maximum.accumulate(np.where(np.isfinite(values), np.arange(values.size), -1)) \
                if values.size else np.zeros(0, dtype=int)
            # the last value given strictly before the sight (its own row gives none), or at its instant by another
            k = np.searchsorted(t, when[targets], side="right") - 1
            source = np.where(k >= 0, last[np.maximum(k, 0)] if last.size else -1, -1)
            for j, (i, src) in enumerate(zip(targets.tolist(), source.tolist())):
                if np.isfinite(given[i]) or src < 0:
                    continue
                value = float(values[src])
                target = course if name == "course" else speed
                target[i] = value
                shown = f"{value:03.0f}°" if name == "course" and value == round(value) else f"{value:g}{unit}"
                texts[j].append((name, shown, int(change_row[order][src])))
        for j, i in enumerate(targets.tolist()):
            if texts[j]:
                from_rows = {r for _, _, r in texts[j]}
                if len(from_rows) == 1:
                    note[i] = " and ".join(f"{a} {b}" for a, b, _ in texts[j]) + f" carried from row {from_rows.pop()}"
                else:
                    note[i] = "; ".join(f"{a} {b} carried from row {r}" for a, b, r in texts[j])
    return note


def motion_missing(table: pd.DataFrame, usable: np.ndarray, gathered, problems) -> bool:
    """Refuse the sights of a running fix (taken more than :data:`RUN_MINUTES` before their group's last sight)
    whose course or speed is blank with none to carry, where other sights of the group give one: read as 0 kn
    for that leg alone, their lines would be advanced wrongly. True when any was refused."""
    if not (gathered["course"].present or gathered["speed"].present) or not usable.any():
        return False
    ticks = table["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64)
    groups = table["fix_group"].to_numpy(dtype=object)
    frame = pd.DataFrame({"group": groups[usable], "t": ticks[usable]})
    last = frame.groupby("group", sort=False)["t"].transform("max").to_numpy()
    rows = np.flatnonzero(usable)
    early = (last - frame["t"].to_numpy()) > RUN_MINUTES * NS_PER_MINUTE
    lacking = []
    for key, what in (("course", "course"), ("speed", "speed")):
        values = table[f"{key}_{'deg' if key == 'course' else 'kn'}"].to_numpy(dtype=float)[rows]
        # only where the group keeps this motion on some sight: a group that keeps none is run from its rows'
        # own DRs, or said to be taken as stopped, by the fix (navred.fix)
        kept = frame.assign(given=np.isfinite(values)).groupby("group", sort=False)["given"].transform("any")
        missing = rows[early & ~np.isfinite(values) & kept.to_numpy(dtype=bool)]
        for i in missing.tolist():
            lacking.append((i, key, what))
    if not lacking:
        return False
    for i, key, what in lacking:
        problems.add([i], gathered[key].headers[i] if gathered[key].present else key, "",
                     f"{what} is blank, and no row before gives one: this sight is advanced to its running fix "
                     f"({table['fix_group'].iloc[i]}) along the {what} in force, so give it (a speed of 0 if the "
                     "ship lay stopped)")
    return True

def check_entries(entry, is_entry, parsed, gathered, problems, *, has_card: bool = False) -> None:
    """An entry row holds no sight, and what its kind needs: a position, a course or speed, a current, the clocks'
    zone or change, a log reading; a compass course its variation and deviation (the row's, or the card's:
    ``has_card``), a leeway its side."""
    sight_cells = is_entry & (~gathered["body"].blank | ~gathered["hs"].blank)
    problems.add(np.flatnonzero(sight_cells), "entry", entry[sight_cells],
                 "an entry row holds no sight: put the sight on a row of its own")
    for kind, needs, text in (("departure", ("dr_lat", "dr_lon"), "a departure needs its position (dr_lat, dr_lon)"),
                              ("position", ("dr_lat", "dr_lon"), "a position entry needs the position (dr_lat, "
                                                                 "dr_lon)"),
                              ("current", ("set", "drift"), "a current entry needs its set and drift"),
                              ("destination", ("dr_lat", "dr_lon"), "a destination entry needs its position (dr_lat, "
                                                                    "dr_lon)")):
        lacking = is_entry & (entry == kind) & np.logical_or.reduce([gathered[k].blank for k in needs])
        problems.add(np.flatnonzero(lacking), "entry", entry[lacking], text)
    for kind, key, text in (("clocks", "clocks", "a clocks entry needs the zone the clocks keep from then, or the "
                                                "change (clocks: '+3', '-12 M', 'advance 1 h', 'retard 1 h')"),
                            ("log", "log_reading", "a log entry needs the log's reading (log_reading, nm)")):
        lacking = is_entry & (entry == kind) & gathered[key].blank
        problems.add(np.flatnonzero(lacking), "entry", entry[lacking], text)
    still = (is_entry & (entry == "course") & gathered["course"].blank & gathered["speed"].blank
             & gathered["compass_course"].blank & gathered["log_reading"].blank)
    problems.add(np.flatnonzero(still), "entry", entry[still], "a course entry needs a course (true or compass), a "
                 "speed or a log reading")
    for key in ENTRY_ONLY:
        stray = ~is_entry & ~gathered[key].blank
        problems.add(np.flatnonzero(stray), gathered[key].headers[stray], "",
                     f"{key.replace('_', ' ')} goes on an entry row (entry: course, log or clocks), not on a sight's")
    compass, true = ~gathered["compass_course"].blank, ~gathered["course"].blank
    both = is_entry & compass & true
    problems.add(np.flatnonzero(both), gathered["compass_course"].headers[both], "",
                 "a course entry gives the course true (course) or by compass (compass_course), not both")
    no_variation = is_entry & compass & gathered["variation"].blank
    problems.add(np.flatnonzero(no_variation), "variation", "",
                 "a compass course needs the variation to be made true ('12 W', '4 E')")
    if not has_card:
        no_deviation = is_entry & compass & gathered["deviation"].blank
        problems.add(np.flatnonzero(no_deviation), "deviation", "",
                     "a compass course needs its deviation: give it ('3 E', '0'), or the deviation card (--card FILE)")
    for key in ("deviation", "variation"):
        alone = is_entry & ~gathered[key].blank & ~compass
        problems.add(np.flatnonzero(alone), gathered[key].headers[alone], "",
                     f"{key} is given without a compass course (compass_course): it makes nothing true")
    leeway = parsed["leeway"]
    unsided = is_entry & leeway.ok & ~np.isfinite(leeway.value[1]) & (leeway.value[0] != 0) & ~parsed["wind_side"].ok
    problems.add(np.flatnonzero(unsided), gathered["leeway"].headers[unsided], "",
                 "a leeway needs its side: to port or to starboard ('5 port'), or the wind's side in wind_side "
                 "(the leeway is to the other side)")
    sided = leeway.ok & np.isfinite(leeway.value[1]) & parsed["wind_side"].ok
    if sided.any():
        wind = words(parsed["wind_side"])
        against = sided & (np.where(wind == "port", 1.0, -1.0) != leeway.value[1])
        problems.add(np.flatnonzero(against), gathered["leeway"].headers[against], "",
                     "the leeway sets the ship toward the side the wind blows on: it is to leeward, the other side "
                     "from wind_side")
    motionless = is_entry & ~gathered["leeway"].blank & gathered["course"].blank & gathered["compass_course"].blank
    problems.add(np.flatnonzero(motionless), gathered["leeway"].headers[motionless], "",
                 "a leeway goes with the course it is made on: give the course (true or compass) on the same row")
    for a, b in (("dr_lat", "dr_lon"), ("dr_lon", "dr_lat"), ("set", "drift"), ("drift", "set")):
        alone = parsed[a].ok & gathered[b].blank
        problems.add(np.flatnonzero(alone), gathered[b].headers[alone], "",
                     f"{a.replace('_', ' ')} is given without {b.replace('_', ' ')}: give both, or neither"
                     if gathered[b].present else f"required column {b} is missing (it goes with {a})")
    stray = ~is_entry & (~gathered["set"].blank | ~gathered["drift"].blank)
    problems.add(np.flatnonzero(stray), "set", "", "a current is given on an entry row (entry: current), not on a sight")


def read_entries(n, sources, rows, entry, is_entry, parsed, times, problems, deviation=None) -> pd.DataFrame:
    """The entries read well, as :data:`ENTRY_COLUMNS`: a compass course made true (through the row's deviation or
    the card's, ``deviation`` a :class:`navred.compass.DeviationCurve`, and the variation) and a leeway applied,
    the course through the water in ``course_deg`` and its working in ``course_working``; a speed from the log
    readings (``speed_working``); the clocks' new zone or change."""
    from .logentries import check_log_readings, entry_courses, log_speeds

    vessels = words(parsed["vessel"])
    check_log_readings(is_entry, floats(parsed["log_reading"]), times, vessels, rows, problems)
    good = is_entry & ~problems.mask() & times["ok"]
    if not good.any():
        return pd.DataFrame(columns=ENTRY_COLUMNS)
    stamps = utc_jd_to_datetime64(times["jd1"][good], times["jd2"][good])
    frame = pd.DataFrame({
        "source": sources[good], "row": rows[good].astype(int), "utc": pd.Series(stamps).dt.tz_localize("UTC"),
        "entry": entry[good], "lat_deg": floats(parsed["dr_lat"])[good], "lon_deg": floats(parsed["dr_lon"])[good],
        "course_deg": floats(parsed["course"])[good], "speed_kn": floats(parsed["speed"])[good],
        "set_deg": floats(parsed["set"])[good], "drift_kn": floats(parsed["drift"])[good],
        # the zone of an entry's time is the ship's clocks', unless a timepiece (a chronometer on Greenwich) kept it
        "vessel": vessels[good], "zone_h": np.where(words(parsed["timepiece"]) != "", np.nan,
                                                    np.asarray(times["zd"], dtype=float))[good] + 0.0,
        "compass_course_deg": floats(parsed["compass_course"])[good],
        "deviation_deg": floats(parsed["deviation"])[good], "variation_deg": floats(parsed["variation"])[good],
        "leeway_deg": _signed_leeway(parsed)[good], "log_reading_nm": floats(parsed["log_reading"])[good],
        "clocks_zone_h": np.asarray(parsed["clocks"].value[0], dtype=float)[good],
        "clocks_change_h": np.asarray(parsed["clocks"].value[1], dtype=float)[good],
        "course_working": "", "speed_working": ""})
    frame = entry_courses(frame, deviation)
    return log_speeds(frame)


def _signed_leeway(parsed) -> np.ndarray:
    """Each row's leeway, degrees, + to starboard (clockwise of the heading), − to port; from its own side, or the
    other side from the wind's (wind_side); NaN where none is given."""
    leeway = parsed["leeway"]
    degrees = np.where(leeway.ok, leeway.value[0], np.nan)
    side = leeway.value[1]
    wind = words(parsed["wind_side"])
    from_wind = np.where(wind == "port", 1.0, np.where(wind == "starboard", -1.0, np.nan))
    side = np.where(np.isfinite(side), side, from_wind)
    return np.where(np.isfinite(degrees) & (degrees == 0), 0.0, degrees * side)


def carried_dr(parsed, gathered, times, is_entry, entries: pd.DataFrame, problems, rows_of: np.ndarray) -> dict:
    """Each sight's DR: as given, or carried along the log's DR track (its departure or last known position, or
    the last DR given on one of her sights, and every course, speed and current since, the sights' own courses
    and speeds too) to the sight; and the course and speed in force where a sight gives none. Each vessel keeps
    its own track. ``rows_of``: each row's number, for the notes."""
    from ..reckoning import PAST_POLE, dr_track

    lat, lon = floats(parsed["dr_lat"]), floats(parsed["dr_lon"])
    course, speed = floats(parsed["course"]), floats(parsed["speed"])
    n = lat.size
    note = texts_of(n, "")
    sight = ~is_entry
    wanted = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank & times["ok"] & ~problems.mask()
    also_course = sight & times["ok"] & (np.isnan(course) | np.isnan(speed)) & (len(entries) > 0)
    if not wanted.any() and not also_course.any():
        none = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank
        problems.add(np.flatnonzero(none), "dr_lat", "", "no DR: give dr_lat and dr_lon, or an entry row with the "
                     "departure or a known position before this sight (entry: departure)")
        return {"lat": lat, "lon": lon, "course": course, "speed": speed, "note": note}
    when = np.full(n, np.iinfo(np.int64).min, dtype=np.int64)
    ok = times["ok"]
    when[ok] = utc_jd_to_datetime64(times["jd1"][ok], times["jd2"][ok]).astype(np.int64)
    vessels = words(parsed["vessel"])
    e_when = entries["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64) \
        if len(entries) else np.zeros(0, dtype=np.int64)
    e_vessel = entries["vessel"].to_numpy(dtype=object) if len(entries) else np.zeros(0, dtype=object)
    named = set(vessels[sight].tolist()) - {""}
    if len(entries) and not (e_vessel != "").any() and len(named) == 1:
        e_vessel = np.full(len(entries), named.pop(), dtype=object)  # one ship: her entries need not name her
    known_kind = entries["entry"].isin(["departure", "position"]).to_numpy() if len(entries) else np.zeros(0, bool)
    usable_sight = sight & ok & ~problems.mask()
    for vessel in dict.fromkeys(vessels[wanted | also_course].tolist()):
        mine = vessels == vessel
        e_mine = e_vessel == vessel
        # the sights' own courses and speeds are changes too (in force from each sight)
        own = usable_sight & mine & (np.isfinite(course) | np.isfinite(speed))
        change_ns = np.concatenate([e_when[e_mine], when[own]])
        change_course = np.concatenate([entries["course_deg"].to_numpy(dtype=float)[e_mine], course[own]])
        change_speed = np.concatenate([entries["speed_kn"].to_numpy(dtype=float)[e_mine], speed[own]])
        change_set = np.concatenate([entries["set_deg"].to_numpy(dtype=float)[e_mine], np.full(own.sum(), np.nan)])
        change_drift = np.concatenate([entries["drift_kn"].to_numpy(dtype=float)[e_mine], np.full(own.sum(), np.nan)])
        known = e_mine & known_kind
        # a sight's own DR is carried on to a later sight of hers whose DR is blank, as her course and speed are
        given_dr = usable_sight & mine & np.isfinite(lat) & np.isfinite(lon) & ~wanted
        if not known.any() and not given_dr.any():
            continue  # no departure for this vessel: her sights without a DR are refused below
        known_ns = np.concatenate([e_when[known], when[given_dr]])
        known_lat = np.concatenate([entries["lat_deg"].to_numpy(dtype=float)[known], lat[given_dr]])
        known_lon = np.concatenate([entries["lon_deg"].to_numpy(dtype=float)[known], lon[given_dr]])
        known_text = ([f"the {w} at row {int(r)}" for w, r in zip(entries["entry"].to_numpy(dtype=object)[known],
                                                                  entries["row"].to_numpy()[known])]
                      + [f"the DR at row {int(r)}" for r in rows_of[given_dr]])
        # at one instant an entry's known position holds (it comes first; np.unique keeps the first)
        _, first = np.unique(known_ns, return_index=True)
        known_ns, known_lat, known_lon = known_ns[first], known_lat[first], known_lon[first]
        known_text = [known_text[i] for i in first.tolist()]
        track = dr_track(change_ns, change_course, change_speed, known_ns, known_lat, known_lon,
                         set_deg=change_set, drift_kn=change_drift)
        rows_here = np.flatnonzero(wanted & mine)
        if rows_here.size:
            t_lat, t_lon, origin = track.positions(when[rows_here])
            polar = (origin >= 0) & ~np.isfinite(t_lat)
            problems.add(rows_here[polar], "dr_lat", "", PAST_POLE)
            found = (origin >= 0) & ~polar
            lat[rows_here[found]], lon[rows_here[found]] = t_lat[found], t_lon[found]
            slots = np.searchsorted(track.knot_ns, known_ns)
            by_knot = {int(k): text for k, text in zip(slots, known_text)}
            note[rows_here[found]] = [f"carried from {by_knot[int(o)]}" for o in origin[found]]
            lost = rows_here[origin < 0]
            problems.add(lost, "dr_lat", "", "no DR: this sight comes before the log's first departure or known "
                         "position (an entry row); give dr_lat and dr_lon, or an earlier departure")
        # the course and speed in force, where a sight gives none (for the run between its sights)
        blank_motion = np.flatnonzero(also_course & mine)
        if blank_motion.size:
            k = np.searchsorted(track.knot_ns, when[blank_motion], side="right") - 1
            has = k >= 0
            water_course, water_speed = _water_motion(change_ns, change_course, change_speed, when[blank_motion])
            course[blank_motion] = np.where(np.isnan(course[blank_motion]) & has, water_course, course[blank_motion])
            speed[blank_motion] = np.where(np.isnan(speed[blank_motion]) & has, water_speed, speed[blank_motion])
    none = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank & np.isnan(lat) & ~problems.mask()
    problems.add(np.flatnonzero(none), "dr_lat", "", "no DR: give dr_lat and dr_lon, or an entry row with the "
                 "departure or a known position before this sight (entry: departure)")
    return {"lat": lat, "lon": lon, "course": course, "speed": speed, "note": note}


def _water_motion(change_ns, change_course, change_speed, when):
    """The course and speed through the water in force at each instant: the last given at or before it."""
    order = np.argsort(change_ns, kind="stable")
    t = change_ns[order]
    out = []
    for values in (change_course[order], change_speed[order]):
        index = np.maximum.accumulate(np.where(np.isfinite(values), np.arange(values.size), -1)) if values.size \
            else np.zeros(0, dtype=int)
        k = np.searchsorted(t, when, side="right") - 1
        last = np.where(k >= 0, index[np.maximum(k, 0)] if index.size else -1, -1)
        out.append(np.where(last >= 0, values[np.maximum(last, 0)] if values.size else np.nan, np.nan))
    return out[0], out[1]
