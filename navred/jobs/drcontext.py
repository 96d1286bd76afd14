"""What a fix takes from the DR kept along a log, per reduced row: the current in force at each sight and the age
of its DR (the check of the fix against it). Used by the voyage job and by reduce_sights (the DR's age in its
table), so that the API and the commands date a DR alike."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..constants import NS_PER_HOUR
from ..io.logbook import SightLog
from ..status import SightStatus
from .frames import utc64


@dataclass(frozen=True)
class _Draft:
    """What the vessels' DR tracks are built from (navred.jobs.shiptrack.vessel_tracks reads these names of a
    VoyageResult): the log, its reduced sights, the fix groups so far, the navigators; not the voyage job's
    result, which is built from this module's context (and imports the reduction, which dates its DRs here)."""

    log: SightLog
    reduced: pd.DataFrame
    groups: list
    navigators: tuple[str, ...] = ()
    #: what the track's builders work out once and keep (as VoyageResult.cache)
    cache: dict = field(default_factory=dict, repr=False, compare=False)


def dr_context(log: SightLog, reduced: pd.DataFrame, groups: list, *, carry_current: bool = False,
               tracks: dict | None = None, navigators=()) -> dict:
    """What a fix takes from the DR kept along the log, per reduced row: the current in force at the sight
    (``set_deg``, ``drift_kn``: the log's current entries and, with ``carry_current``, the set and drift found
    at the last fix; the ground track less the track through the water) and the age of the sight's DR
    (``age_h``: hours since the known position it was carried from; for a DR given on the row, since the
    log's last known position or earlier fix group before the sight's group, :func:`written_dr_age`, NaN where
    the log gives neither). A DR given on the row takes no current: the run between such rows is the course
    and speed given, or their own DRs. ``tracks``: the vessels' tracks (:func:`navred.dayswork.vessel_tracks`) when worked out already."""
    n = len(reduced)
    out = {"set_deg": np.zeros(n), "drift_kn": np.zeros(n), "age_h": np.full(n, np.nan)}
    if not n or "dr_carried_from" not in reduced.columns:
        return out
    out["age_h"] = written_dr_age(log, reduced)
    carried = (reduced["dr_carried_from"].to_numpy(dtype=object) != "") & (reduced["status"].to_numpy() != SightStatus.ERROR)
    if not carried.any():
        return out
    from ..reckoning import course_speed
    from .dayswork import vessel_tracks

    if tracks is None:
        tracks = vessel_tracks(_Draft(log, reduced, groups, tuple(navigators)), carry_current=carry_current)
    when = utc64(reduced["sight_utc"]).astype(np.int64)
    vessels = reduced["vessel"].to_numpy(dtype=object)
    for vessel, track in tracks.items():
        rows = np.flatnonzero(carried & (vessels == vessel))
        if not rows.size:
            continue
        k = np.searchsorted(track.knot_ns, when[rows], side="right") - 1
        kw = np.searchsorted(track.through_water.knot_ns, when[rows], side="right") - 1
        valid = (k >= 0) & (kw >= 0)
        k, kw = np.maximum(k, 0), np.maximum(kw, 0)
        north = np.where(valid, track.north_kn[k] - track.through_water.north_kn[kw], 0.0)
        east = np.where(valid, track.east_kn[k] - track.through_water.east_kn[kw], 0.0)
        set_, drift = course_speed(north, east)
        out["set_deg"][rows], out["drift_kn"][rows] = np.nan_to_num(set_), np.where(drift > 1e-9, drift, 0.0)
        # the DR's age: a sight at the very instant of a known position is carried up to it
        _, _, origin = track.positions(when[rows], before_restart=True)
        at_start = origin < 0
        if at_start.any():
            origin[at_start] = track.positions(when[rows][at_start])[2]
        known = origin >= 0
        start = track.knot_ns[np.maximum(origin, 0)]
        out["age_h"][rows] = np.where(known, (when[rows] - start) / NS_PER_HOUR, np.nan)
    return out


def written_dr_age(log: SightLog, reduced: pd.DataFrame) -> np.ndarray:
    """The age (hours) of a DR written on a sight's own row, where the log says something of it: a log that keeps
    known positions (an entry row's departure or position) keeps its DR from them, so a DR written on a sight is
    no older than the latest known position before the sight's fix group. NaN where the log gives none (the
    sense check then takes it as a day old, and says so). An earlier fix in the log does not date it: nothing
    says the DR written was renewed from it."""
    n = len(reduced)
    age = np.full(n, np.nan)
    entries = log.entries
    usable = (reduced["status"].to_numpy() != SightStatus.ERROR) & (reduced["dr_carried_from"].to_numpy(dtype=object) == "")
    if not usable.any() or not len(entries):
        return age
    known = entries[entries["entry"].isin(["departure", "position"])]
    if not len(known):
        return age
    e_when = known["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64)
    e_vessel = known["vessel"].to_numpy(dtype=object)
    when = utc64(reduced["sight_utc"]).astype(np.int64)
    groups = reduced["fix_group"].astype(str).to_numpy(dtype=object)
    vessels = reduced["vessel"].to_numpy(dtype=object) if "vessel" in reduced.columns else np.full(n, "", object)
    for vessel in dict.fromkeys(vessels[usable].tolist()):
        mine = usable & (vessels == vessel)
        times = np.sort(e_when if not (e_vessel != "").any() else e_when[e_vessel == vessel])
        for g in dict.fromkeys(groups[mine].tolist()):
            rows = np.flatnonzero(mine & (groups == g))
            before = times[times <= when[rows].min()]
            if before.size:
                age[rows] = (when[rows] - before[-1]) / NS_PER_HOUR
    return age


__all__ = ["dr_context", "written_dr_age"]
