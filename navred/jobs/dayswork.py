"""The day's work around the ship's fixes: the DR kept between them, estimated positions, set and drift, the noon
positions and the noon report. Edge code over :mod:`navred.reckoning` (the core).

Known positions are the log's departure and position entries and the **ship's** fixes (a fix of two or more
lines that cross well; :mod:`navred.jobs.shipsfixes` says whose fixes are the ship's and how a training log's
rounds are combined). Each vessel keeps one DR track: through every course and speed (the entries, with their
compass courses, leeways and log readings, and the sights' own courses and speeds), every current the log
enters and, with ``carry_current``, the set and drift found at the last fix, restarted at each known position.

- **Set and drift** at each of the ship's fixes, against the DR carried from the previous known position through
  the water: given only where it means something (:func:`current_verdict`), else "not determined" and why.
- **Estimated positions** from the ship's single lines.
- **Noon** by the ship's clocks (:mod:`navred.jobs.shipstime`), one per ship's day; the noon position
  (:mod:`navred.jobs.noons`): a ship's fix within the hour, or the forenoon Sun line run up to the latitude at
  noon, or an estimated position within the hour, each carried to noon along the DR through every change
  between; else the DR. The noon report beside it.
- **Exercises**: each exercise fix or line compared with the ship's best position at its time: her own fix, noon
  or estimated position nearest in time within the hour, carried along her DR; else her DR (``ship_from`` says which).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..reckoning import DRTrack
from .noons import current_sources, current_used, noon_rows, vessel_lines
from .positiontrust import EP_TRUST_COLUMNS, NOON_TRUST_COLUMNS, noon_trust, rework_estimated
from .shiptrack import (
    ENTRY_WORK_COLUMNS,
    ESTIMATED_COLUMNS,
    EXERCISE_COLUMNS,
    NOON_COLUMNS,
    NOON_WINDOW_HOURS,
    SET_DRIFT_COLUMNS,
    entry_work,
    estimated_positions,
    exercises,
    known_label_at,
    set_drift_rows,
    ship_latitudes,
    ships_of,
    track_points,
    untrusted_fixes,
    vessel_entries,
    vessel_tracks,
)


def _current_in_dr(voyage):
    """The words for the current a vessel's DR carries at an instant ('' where it carries none)."""
    def words(vessel: str, track: DRTrack, when: int) -> str:
        if track.through_water is None:
            return ""
        t = np.array([when - 30 * 10**9], dtype=np.int64)
        ground = np.array([np.atleast_1d(v)[0] for v in track.velocity_at(t)], dtype=float)
        water = np.array([np.atleast_1d(v)[0] for v in track.through_water.velocity_at(t)], dtype=float)
        if not np.isfinite(ground).all() or not np.isfinite(water).all() or np.hypot(*(ground - water)) < 0.05:
            return ""
        sources = current_sources(voyage, vessel, track, vessel_entries(voyage, vessel))
        return "with " + current_used(track, when, sources)

    return words


@dataclass(frozen=True)
class DaysWork:
    """The day's work of a voyage: set and drift at each of the ship's fixes, estimated positions, the noon report,
    the DR track, the exercises compared with the ship, the DR's entries with their working. The tables' columns
    are snake_case with units (:data:`SET_DRIFT_COLUMNS`, :data:`ESTIMATED_COLUMNS`, :data:`NOON_COLUMNS`,
    :data:`EXERCISE_COLUMNS`, :data:`ENTRY_WORK_COLUMNS`); the workbook shows them with their labels."""

    set_drift: pd.DataFrame
    estimated: pd.DataFrame
    noons: pd.DataFrame
    track_points: pd.DataFrame
    #: each vessel's DR (with its known positions, and its DR through the water beside it)
    tracks: dict[str, DRTrack] = field(default_factory=dict)
    carry_current: bool = False
    exercises: pd.DataFrame = field(default_factory=pd.DataFrame)
    entries: pd.DataFrame = field(default_factory=pd.DataFrame)
    latitudes: pd.DataFrame = field(default_factory=pd.DataFrame)
    #: what the output says about the day's work as a whole (whose fixes, the clocks, why there is no noon)
    notes: tuple[str, ...] = ()
    #: each vessel's clocks (navred.reckoning.ShipsClocks) and how they were found
    clocks: dict = field(default_factory=dict)
    #: each fix's ellipse scale (FixResult.confidence_scale, the quantile its 95 % ellipse is drawn at), by the
    #: label of its known position on the track ('fix <group>'): a picture draws the ellipse the fix states
    ellipse_scales: dict[str, float] = field(default_factory=dict)
    #: the ship's fixes left out because they cannot be trusted, by vessel: (group, why) each
    #: (:func:`navred.jobs.shiptrack.untrusted_fixes`)
    left_out: dict[str, tuple[tuple[str, str], ...]] = field(default_factory=dict)
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
        """No DR could be kept at all (no departure entry and no ship's fix)."""
        return not self.tracks and not len(self.estimated)


def latitude_flag_notes(latitudes: pd.DataFrame) -> list[str]:
    """A note per latitude that cannot be trusted (an ex-meridian beyond its limit or far from the DR), beside its
    number: the day's work never takes it for a latitude, at noon or anywhere."""
    if not len(latitudes) or "flag" not in latitudes:
        return []
    return [f"{r['row']}: the {r['body']}'s {r['method']} latitude {format_angle(float(r['lat_deg']), 'lat')} "
            f"(DR {format_angle(float(r['dr_lat_deg']), 'lat')}) {r['flag']}"
            for r in latitudes.to_dict("records") if r["flag"]]


def days_work(voyage, *, carry_current: bool = False) -> DaysWork:
    """Set and drift, estimated positions, the noon report and the exercises of a processed voyage."""
    ships = ships_of(voyage)
    tracks = vessel_tracks(voyage, carry_current=carry_current)
    set_rows, noon_rows_all, point_rows, notes = [], [], [], list(ships.notes)
    clocks = {}
    # each EP worked from the DR carried from the last trusted fix, not the log's own DR column
    estimated = rework_estimated(voyage, estimated_positions(voyage, ships), tracks, _current_in_dr(voyage))
    for vessel, track in tracks.items():
        set_rows += set_drift_rows(vessel, track, current_in_dr="in the DR" if carry_current else "logged")
        lines = vessel_lines(voyage, vessel, ships)
        rows, vessel_notes, clocks[vessel] = noon_rows(voyage, vessel, track, estimated, lines, ships)
        noon_rows_all += rows
        notes += vessel_notes
        point_rows += track_points(voyage, vessel, track)
    left_out = untrusted_fixes(voyage)
    for vessel, items in left_out.items():
        for name, why in items:
            notes.append(f"{vessel or 'the ship'}: the fix {name} CANNOT BE TRUSTED ({why}): the DR is not restarted "
                         "from it, and no set and drift, noon or exercise rests on it")
    latitudes = ship_latitudes(voyage, ships)
    notes += latitude_flag_notes(latitudes)
    noons = noon_trust(voyage, noon_rows_all, tracks)
    # an exercise is never marked against a noon or EP that cannot be trusted (the DR, or a better one, instead)
    trusted_noons = [n for n, t in zip(noon_rows_all, noons) if not t["noon_check"]]
    trusted_eps = [e for e in estimated if not str(e.get("check", "")).startswith("CANNOT")]
    if not tracks:
        notes.append("Noon positions: none: the log gives no departure (an entry row) and none of the ship's fixes "
                      "to keep the DR from")
    return DaysWork(pd.DataFrame(set_rows, columns=SET_DRIFT_COLUMNS),
                    pd.DataFrame(estimated, columns=ESTIMATED_COLUMNS + EP_TRUST_COLUMNS),
                    pd.DataFrame(noons, columns=NOON_COLUMNS + NOON_TRUST_COLUMNS),
                    pd.DataFrame(point_rows, columns=["vessel", "utc", "lat_deg", "lon_deg", "leg", "kind"]),
                    tracks, carry_current, pd.DataFrame(exercises(voyage, ships, tracks, trusted_eps, trusted_noons),
                                                        columns=EXERCISE_COLUMNS),
                    entry_work(voyage), latitudes, tuple(dict.fromkeys(notes)), clocks,
                    {f"fix {g.name}": float(g.fix.confidence_scale) for g in voyage.groups
                     if g.fix is not None and g.fix.is_fix}, left_out)


__all__ = ["DaysWork", "days_work", "vessel_tracks", "known_label_at", "NOON_WINDOW_HOURS", "SET_DRIFT_COLUMNS",
           "NOON_COLUMNS", "ESTIMATED_COLUMNS", "EXERCISE_COLUMNS", "ENTRY_WORK_COLUMNS"]
