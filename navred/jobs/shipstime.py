"""Ship's time as the master keeps it: the zone the clocks keep, from the log's clocks entries, and the noons by
them. Edge code over :mod:`navred.reckoning` (:class:`~navred.reckoning.ShipsClocks`, :func:`ship_noons`).

- **Clocks entries** (``entry: clocks``, the time the clocks were changed, and in ``clocks`` the zone they keep
  from then, ``-12``, or the change, ``retard 1 h``): the ship's clocks exactly as entered. Before the first,
  the clocks keep the zone of the departure's own time when it is written in zone time, else the nautical zone
  of the departure's longitude. Across the date line the zone goes from +12 to −12 westbound (the clocks
  advanced a day: a date skipped) and from −12 to +12 eastbound (retarded a day: a date repeated).
- **No clocks entry, the log kept in zone time** (its ``zone_description`` column, ZD, on the rows after the
  first): the clocks keep the zone the log states, each new zone from the first row that states it
  (:func:`stated_clocks`). A row read from a named timepiece (a chronometer kept on Greenwich) states no zone of
  the ship's. Where the log's ZD is not the nautical zone of the DR's longitude then, a note says so (a ship may
  keep another zone); where a noon falls between the last row of one zone and the first of the next, the noon
  says the clocks may have been changed before it, and when noon would then have been.
- **No clocks entry, no zone stated after the first row**: the ship is taken to keep the nautical zone of her
  DR (the one zone rule, navred.reckoning.zone_description_h), her clocks changed at each ship's midnight
  (:func:`navred.reckoning.clocks_at_midnights`; common practice). The output says so.

Either way the noons are :func:`navred.reckoning.ship_noons` of the clocks: the one mechanism of the ship's day
(a day of 23 or 25 hours at a change of an hour, a date skipped westbound across the date line, repeated
eastbound).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..constants import NS_PER_HOUR
from ..reckoning import DRTrack, ShipsClocks, clocks_at_midnights, zone_description_h
from .frames import utc64


def zone_text(zone_h: float) -> str:
    """A zone description as written: 'ZD 0', 'ZD +1', 'ZD -12' (never '-0')."""
    zone = float(zone_h) + 0.0
    return "ZD 0" if zone == 0 else f"ZD {zone:+.0f}"


@dataclass(frozen=True)
class StatedZones:
    """The zone descriptions a log states on its rows (ZT + ZD = UTC), in time order: each row's instant
    (``utc_ns``), ``zone_h`` and ``row`` label. Rows read from a named timepiece and rows in UTC state none."""

    utc_ns: np.ndarray
    zone_h: np.ndarray
    row: np.ndarray

    @property
    def changes(self) -> np.ndarray:
        """The indexes of the rows that state a new zone (the first row is not one)."""
        return np.flatnonzero(self.zone_h[1:] != self.zone_h[:-1]) + 1


def stated_zones(entries: pd.DataFrame, sights: pd.DataFrame) -> StatedZones:
    """The zones one vessel's log states: her entry rows' (``zone_h``) and her sights' (``zone_description_used_h``,
    where no ``timepiece`` is named), in time order (an entry before a sight at one instant)."""
    parts = []
    if len(entries) and "zone_h" in entries:
        parts.append((utc64(entries["utc"]).astype(np.int64), entries["zone_h"].to_numpy(dtype=float),
                      entries["row"].astype(str).to_numpy(dtype=object), np.zeros(len(entries))))
    if len(sights) and "zone_description_used_h" in sights:
        zd = sights["zone_description_used_h"].to_numpy(dtype=float)
        if "timepiece" in sights:
            zd = np.where(sights["timepiece"].astype(str).to_numpy() != "", np.nan, zd)
        parts.append((utc64(sights["sight_utc"]).astype(np.int64), zd, sights["row"].astype(str).to_numpy(dtype=object),
                      np.ones(len(sights))))
    if not parts:
        return StatedZones(np.zeros(0, np.int64), np.zeros(0), np.zeros(0, dtype=object))
    when, zone, row, kind = (np.concatenate(p) for p in zip(*parts))
    keep = np.isfinite(zone)
    when, zone, row, kind = when[keep], zone[keep], row[keep], kind[keep]
    order = np.lexsort((kind, when))
    return StatedZones(when[order].astype(np.int64), zone[order] + 0.0, row[order])


def zone_path(first_h: float, last_h: float) -> list[float]:
    """The zones a ship's clocks keep, an hour at a time, from one zone description to another: straight where
    they are 12 hours apart or less, else across the date line (+12 to −12 westbound, −12 to +12 eastbound, the
    date skipped or repeated and the hour kept)."""
    first, last = int(round(first_h)), int(round(last_h))
    if abs(last - first) <= 12:
        step = 1 if last >= first else -1
        return [float(z) for z in range(first, last + step, step)] if last != first else [float(first)]
    if last < first:  # westbound: up to +12, then from −12 up to the last
        return [float(z) for z in range(first, 13)] + [float(z) for z in range(-12, last + 1)]
    return [float(z) for z in range(first, -13, -1)] + [float(z) for z in range(12, last - 1, -1)]


@dataclass(frozen=True)
class StatedChange:
    """A change of zone the log states whose instant it does not: from ``old_h`` (last stated at row
    ``row_before``, ``before_ns``) to ``new_h`` (first stated at row ``row_after``, ``after_ns``), made at that row
    (the latest it can have been), the clocks kept unchanged since ``since_ns``: a noon between ``since_ns`` and
    ``after_ns`` may have been by either zone."""

    since_ns: int
    before_ns: int
    after_ns: int
    old_h: float
    new_h: float
    row_before: str
    row_after: str


def stated_clocks(stated: StatedZones, track: DRTrack, start_ns: int) -> tuple[ShipsClocks, list[StatedChange]]:
    """The clocks of a log kept in zone time: at each row the zone it states. Between two rows that state different
    zones the clocks are changed an hour at a time (:func:`zone_path`) at each ship's midnight at which the DR has
    entered the next zone (common practice: the clocks are altered in the night watches); a change still to make
    is made at the row that first states the new zone (the latest instant it can have been), and returned as a
    :class:`StatedChange`. Between rows that state one zone the ship keeps it, whatever her longitude."""
    day = 24 * NS_PER_HOUR
    change = [min(int(start_ns), int(stated.utc_ns[0])) - 1]
    zones = [float(stated.zone_h[0])]
    left: list[StatedChange] = []
    for c in stated.changes.tolist():
        before, after = int(stated.utc_ns[c - 1]), int(stated.utc_ns[c])
        path = zone_path(stated.zone_h[c - 1], stated.zone_h[c])
        at, here, since = before, 0, before
        for _ in range(int((after - before) // day) + 2):  # one ship's midnight a day between the two rows
            zone_ns = int(round(path[here] * NS_PER_HOUR))
            midnight = ((at - zone_ns) // day + 1) * day + zone_ns
            if midnight >= after:
                break
            _, lon, origin = track.positions(np.array([midnight], dtype=np.int64))
            at = midnight
            if origin[0] < 0 or not np.isfinite(lon[0]):
                continue
            dr_zone = float(zone_description_h(lon[0]))
            if dr_zone in path[here + 1:]:
                here = path.index(dr_zone, here + 1)
                change.append(midnight)
                zones.append(path[here])
                since = midnight
        if here < len(path) - 1:
            change.append(after)
            zones.append(path[-1])
            left.append(StatedChange(since, before, after, path[here], path[-1], str(stated.row[c - 1]),
                                     str(stated.row[c])))
    return ShipsClocks(np.array(change, dtype=np.int64), np.array(zones) + 0.0), left


#: How the ship's time is said where the clocks keep the zones the log states.
STATED_WORDS = "no clocks entry: the ship's clocks keep the zone the log states"

#: At most this many stretches of the log whose ZD is not the DR's zone are named (then how many more).
ZONE_NOTES_SHOWN = 5


def stretches(flagged: np.ndarray, *keys: np.ndarray) -> list[tuple[int, int]]:
    """The runs of consecutive flagged rows alike in every key, as (first, last) indexes (found at once, not row by
    row: a fleet's log has hundreds of thousands of rows)."""
    flagged = np.asarray(flagged, dtype=bool)
    if not flagged.any():
        return []
    alike = np.ones(flagged.size - 1, dtype=bool)
    for key in keys:
        alike &= np.asarray(key)[1:] == np.asarray(key)[:-1]
    joined = flagged[1:] & flagged[:-1] & alike
    first = np.flatnonzero(flagged & ~np.concatenate([[False], joined]))
    last = np.flatnonzero(flagged & ~np.concatenate([joined, [False]]))
    return list(zip(first.tolist(), last.tolist()))


def zone_disagreements(stated: StatedZones, track: DRTrack) -> list[str]:
    """Where the log's ZD is not the nautical zone of the DR's longitude at the row's time (navred.reckoning.zone_description_h;
    ±12 alike within 7.5° of 180°: common practice), one sentence per stretch of such rows."""
    if not stated.utc_ns.size:
        return []
    _, lon, origin = track.positions(stated.utc_ns)
    nautical = zone_description_h(np.where(np.isfinite(lon), lon, 0.0)) + 0.0
    with np.errstate(invalid="ignore"):
        by_180 = (np.abs(lon) > 172.5) & (np.abs(stated.zone_h) == 12.0)
    off = (origin >= 0) & np.isfinite(lon) & (stated.zone_h != nautical) & ~by_180
    texts = []
    for k, end in stretches(off, stated.zone_h, nautical):
        rows = f"row {stated.row[k]}" if end == k else f"rows {stated.row[k]} to {stated.row[end]}"
        texts.append(f"{rows}: the log's {zone_text(stated.zone_h[k])} is not the zone of the DR's longitude "
                     f"({format_angle(float(lon[k]), 'lon')}: {zone_text(nautical[k])}): the ship's day is kept by "
                     "the log's ZD (a ship may keep another zone; if she did not, correct the ZD: an hour of time is "
                     "15′ of longitude in every line)")
    if len(texts) > ZONE_NOTES_SHOWN:
        texts = texts[:ZONE_NOTES_SHOWN] + [f"and {len(texts) - ZONE_NOTES_SHOWN} more stretches of rows like these"]
    return texts


def clock_disagreements(stated: StatedZones, clocks: ShipsClocks) -> list[str]:
    """Where the log's ZD is not the zone the clocks entered keep at the row's time (the clocks entries are
    followed), one sentence per stretch of such rows. A row at the very instant of a change may state either."""
    if not stated.utc_ns.size:
        return []
    kept = clocks.zone_at(stated.utc_ns)
    before = clocks.zone_at(stated.utc_ns - 1)
    off = (stated.zone_h != kept) & (stated.zone_h != before)
    texts = []
    for k, end in stretches(off, stated.zone_h, kept):
        rows = f"row {stated.row[k]}" if end == k else f"rows {stated.row[k]} to {stated.row[end]}"
        texts.append(f"{rows}: the log's {zone_text(stated.zone_h[k])} is not the zone the clocks entered keep then "
                     f"({zone_text(kept[k])}): noon is kept by the clocks entries; check the ZD or the clocks entry")
    if len(texts) > ZONE_NOTES_SHOWN:
        texts = texts[:ZONE_NOTES_SHOWN] + [f"and {len(texts) - ZONE_NOTES_SHOWN} more stretches of rows like these"]
    return texts


def uncertain_noons(left: list[StatedChange], noon_ns: np.ndarray, day_ns: np.ndarray) -> dict[int, str]:
    """The noons (by index) that fall between a change of zone the log states and the last instant the clocks were
    known unchanged (:class:`StatedChange`): the clocks may have been changed before such a noon. Each with what
    the noon would then have been."""
    out: dict[int, str] = {}
    for change in left:
        for k in np.flatnonzero((noon_ns > change.since_ns) & (noon_ns < change.after_ns)).tolist():
            other = int(day_ns[k]) + 12 * NS_PER_HOUR + int(round(change.new_h * NS_PER_HOUR))
            then = (f"{stamp_minutes(other)} UTC" if abs(other - int(noon_ns[k])) < 12 * NS_PER_HOUR
                    else "on another ship's date (the date line)")
            out[k] = (f"NOON TIME UNCERTAIN: the log's ZD went from {zone_text(change.old_h)} (row "
                      f"{change.row_before}, {stamp_minutes(change.before_ns)} UTC) to {zone_text(change.new_h)} "
                      f"(row {change.row_after}, {stamp_minutes(change.after_ns)} UTC) and this noon falls before the "
                      f"change is known made: taken by {zone_text(change.old_h)}; had the clocks been changed before "
                      f"noon, it was {then}: enter the change (entry: clocks) to say when it was made")
    return out


def stamp_minutes(ns: int) -> str:
    """An instant to the minute, dated: '2026-10-07 23:00'."""
    return str(np.datetime64(int(ns), "ns").astype("datetime64[m]")).replace("T", " ")


def vessel_clocks(entries: pd.DataFrame, track: DRTrack, start_ns: int, end_ns: int,
                  stated: StatedZones | None = None) -> tuple[ShipsClocks, str, list[StatedChange]]:
    """One vessel's clocks between two instants (``entries`` hers), how they were found (a sentence), and the
    changes of zone the log states whose instant it does not (:func:`stated_clocks`). ``stated``: the zones her
    log states (:func:`stated_zones`), followed where there is no clocks entry and more than one row states one."""
    clocks = entries[entries["entry"] == "clocks"] if len(entries) else entries
    departures = entries[entries["entry"].isin(["departure", "position"])] if len(entries) else entries
    first_zone, first_from = None, ""
    if len(departures):
        d = departures.iloc[0]
        if np.isfinite(d["zone_h"]):
            first_zone, first_from = float(d["zone_h"]), f"the zone of the {d['entry']}'s time (row {d['row']})"
    if first_zone is None:
        lon = track.known_lon[0] if track.known_lon.size else 0.0
        first_zone = float(zone_description_h(lon))
        first_from = "the nautical zone of the first known position's longitude"
    if not len(clocks) and stated is not None and stated.utc_ns.size > 1:
        made, left = stated_clocks(stated, track, start_ns)
        if not stated.changes.size:
            return made, (f"{STATED_WORDS} (its ZD column): {zone_text(stated.zone_h[0])} on all its "
                          f"{stated.utc_ns.size} rows that state one (row {stated.row[0]} to row {stated.row[-1]})"), left
        said = ", ".join([f"{zone_text(stated.zone_h[0])} at row {stated.row[0]}"]
                         + [f"{zone_text(stated.zone_h[c])} from row {stated.row[c]}" for c in stated.changes.tolist()])
        return made, (f"{STATED_WORDS} (its ZD column): {said}; between rows of different zones the clocks are "
                      "taken as changed an hour at a time at the ship's midnight the DR entered each zone (common "
                      "practice), else at the row that states the new zone (enter the clocks as the master changed "
                      "them, entry: clocks, to say when)"), left
    if not len(clocks):
        made = clocks_at_midnights(track, start_ns, end_ns, first_zone)
        return made, ("no clocks entry: the ship is taken to keep the nautical zone of her DR, the clocks changed at "
                      f"each ship's midnight (from {zone_text(first_zone)}, {first_from}); enter the clocks as the "
                      "master changed them (entry: clocks) to have noon by them"), []
    when = utc64(clocks["utc"]).astype(np.int64)
    order = np.argsort(when, kind="stable")
    opening = clocks.iloc[int(order[0])]
    begins = min(int(start_ns), int(track.known_ns[0])) if track.known_ns.size else int(start_ns)
    if int(when[order[0]]) <= begins and np.isfinite(opening["clocks_zone_h"]):
        # the first clocks entry is in force from the start: the zone before it is never kept, so never named
        first_zone = float(opening["clocks_zone_h"])
        how = f"the clocks as entered ({zone_text(first_zone)} from the start, row {opening['row']})"
    else:
        how = (f"the clocks as entered (from {zone_text(first_zone)}, {first_from}, until the first clocks entry, "
               f"row {opening['row']})")
    zones, zone = [], first_zone
    for k in order.tolist():
        row = clocks.iloc[k]
        if np.isfinite(row["clocks_zone_h"]):
            zone = float(row["clocks_zone_h"])
        else:
            zone = zone - float(row["clocks_change_h"])  # clocks advanced: ZD less (ZT + ZD = UTC)
            if zone < -12:
                zone += 24.0
            elif zone > 12:
                zone -= 24.0
        zones.append(zone)
    change = np.concatenate([[min(int(start_ns), int(when.min()) - 1)], when[order]])
    return ShipsClocks(change.astype(np.int64), np.array([first_zone, *zones]) + 0.0), how, []


def clock_changes_text(clocks: ShipsClocks, after_ns: int, until_ns: int) -> str:
    """The clock changes between two instants in words: 'clocks retarded 1 h at 02:00 zone time (ZD +2 to +3);
    date line: 2026-10-07 skipped (ZD +12 to -12)'."""
    texts = []
    for k in range(1, clocks.change_ns.size):
        t = int(clocks.change_ns[k])
        if not after_ns < t <= until_ns:
            continue
        before, after = float(clocks.zone_h[k - 1]), float(clocks.zone_h[k])
        if before == after:
            continue
        shown = np.datetime64(t - int(round(before * NS_PER_HOUR)), "ns").astype("datetime64[m]")
        at = str(shown).replace("T", " ")
        step = before - after  # hours the clocks were advanced
        if abs(step) > 12:  # the date line: a day skipped or repeated, the hour kept
            new = np.datetime64(t - int(round(after * NS_PER_HOUR)), "ns").astype("datetime64[m]")
            zones = f"({zone_text(before)} to {zone_text(after)})"
            if new == new.astype("datetime64[D]"):  # at midnight: a whole date skipped or lived twice
                day = new.astype("datetime64[D]") - np.timedelta64(1 if step > 0 else 0, "D")
                what = "skipped (westbound)" if step > 0 else "repeated (eastbound)"
                texts.append(f"date line at {at} zone time: {day} {what} {zones}")
            else:  # within a day: the hours between the two readings of the clocks skipped or lived again
                first, last = (at, str(new).replace("T", " ")) if step > 0 else (str(new).replace("T", " "), at)
                what = ("the clocks put forward a day (westbound): " + first + " to " + last + " skipped"
                        if step > 0 else "the clocks put back a day (eastbound): " + first + " to " + last +
                        " lived again")
                texts.append(f"date line at {at} zone time: {what} {zones}")
        else:
            texts.append(f"clocks {'advanced' if step > 0 else 'retarded'} {abs(step):g} h at {at} zone time "
                         f"({zone_text(before)} to {zone_text(after)})")
    return "; ".join(texts)


__all__ = ["vessel_clocks", "clock_changes_text", "zone_text", "StatedZones", "stated_zones", "stated_clocks",
           "zone_disagreements", "clock_disagreements", "stretches", "uncertain_noons", "zone_path", "StatedChange", "stamp_minutes", "ZONE_NOTES_SHOWN", "STATED_WORDS"]
