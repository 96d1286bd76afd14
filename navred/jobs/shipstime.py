"""Ship's time as the master keeps it: the zone the clocks keep, from the log's clocks entries, and the noons by
them. Edge code over :mod:`navred.reckoning` (:class:`~navred.reckoning.ShipsClocks`, :func:`ship_noons`).

- **Clocks entries** (``entry: clocks``, the time the clocks were changed, and in ``clocks`` the zone they keep
  from then, ``-12``, or the change, ``retard 1 h``): the ship's clocks exactly as entered. Before the first,
  the clocks keep the zone of the departure's own time when it is written in zone time, else the nautical zone
  of the departure's longitude. Across the date line the zone goes from +12 to −12 westbound (the clocks
  advanced a day: a date skipped) and from −12 to +12 eastbound (retarded a day: a date repeated).
- **No clocks entry**: the ship is taken to keep the nautical zone of her DR (ZD = −round(λ/15°)), her clocks
  changed at each ship's midnight (:func:`navred.reckoning.clocks_at_midnights`; common practice). The output
  says so: a log's own zone descriptions may be a chronometer's kept on Greenwich, so they are not taken as
  the ship's.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import NS_PER_HOUR
from ..reckoning import DRTrack, ShipsClocks, clocks_at_midnights, zone_description_h
from .frames import utc64


def zone_text(zone_h: float) -> str:
    """A zone description as written: 'ZD 0', 'ZD +1', 'ZD -12' (never '-0')."""
    zone = float(zone_h) + 0.0
    return "ZD 0" if zone == 0 else f"ZD {zone:+.0f}"


def vessel_clocks(entries: pd.DataFrame, track: DRTrack, start_ns: int, end_ns: int) -> tuple[ShipsClocks, str]:
    """One vessel's clocks between two instants (``entries`` hers), and how they were found (a sentence)."""
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
    if not len(clocks):
        made = clocks_at_midnights(track, start_ns, end_ns, first_zone)
        return made, ("no clocks entry: the ship is taken to keep the nautical zone of her DR, the clocks changed at "
                      f"each ship's midnight (from {zone_text(first_zone)}, {first_from}); enter the clocks as the "
                      "master changed them (entry: clocks) to have noon by them")
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
    return ShipsClocks(change.astype(np.int64), np.array([first_zone, *zones]) + 0.0), how


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
            day = (np.datetime64(t - int(round(after * NS_PER_HOUR)), "ns").astype("datetime64[D]")
                   - np.timedelta64(1 if step > 0 else 0, "D"))
            what = "skipped (westbound)" if step > 0 else "repeated (eastbound)"
            texts.append(f"date line at {at} zone time: {day} {what} ({zone_text(before)} to {zone_text(after)})")
        else:
            texts.append(f"clocks {'advanced' if step > 0 else 'retarded'} {abs(step):g} h at {at} zone time "
                         f"({zone_text(before)} to {zone_text(after)})")
    return "; ".join(texts)


__all__ = ["vessel_clocks", "clock_changes_text", "zone_text"]
