"""The whole job on sight logs: read, reduce, fix each group, keep every row.

Edge code gluing :func:`navred.read_sight_log` (the one reader), :func:`navred.reduce_sights`
and the fix; every command that fixes (``fix``, ``workbook``, ``series``, ``training``)
goes through :func:`process_log`, so one log gives one answer whichever command reads it.
The result feeds the workbook, the plotting sheets and the GPX/GeoJSON exports.

One rule for fix groups: the log's ``fix_group`` label, or, where a row has none, one
observer's sights of one vessel less than two hours apart (made by the reader). One rule for
a group's chart or GNSS position: the one on its latest usable sight (by time) that gives
both ``chart_lat`` and ``chart_lon``.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd

from .. import __version__
from ..angles import format_angle
from ..compass import DeviationCurve
from ..constants import DEG_PER_HOUR, NS_PER_HOUR
from ..ephemeris import EPHEMERIS_NAME
from ..errors import NavredError, api_boundary
from ..fix import FixResult, fixes_from_sights
from ..io.logbook import REJECTED_COLUMNS, LogSource, SightLog, read_sight_log
from ..io.timesignals import Ratings
from ..presets import SightPresets
from ..reckoning import PAST_POLE
from ..sightplan import SightPlan
from ..status import SightStatus
from ..timescales import Instant, iers_table, leap_second_table
from ..vocabulary import CURRENT_DRIFT_COLUMN, CURRENT_SET_COLUMN, DR_AGE_COLUMN
from .drcontext import dr_context
from .frames import row_labels, series_columns, utc64
from .shipsfixes import split_mixed_groups
from .sights import reduce_sights
from .zoneslips import drop_contradicted, name_zone_slips


@dataclass(frozen=True)
class GroupFix:
    """One fix group: its name, the rows of the reduced table it holds, and its fix (or why not)."""

    name: str
    rows: np.ndarray
    fix: FixResult | None
    problem: str = ""
    chart: tuple[float, float] | None = None
    #: where the chart position came from ('row 7'), and any note about it
    chart_note: str = ""


@dataclass(frozen=True)
class PlanSextant:
    """What a workbook's sight plan presets the sextant by: the height of eye, index error and horizon of the last
    sight of the fix the plan runs on from, and the presets worked with them (None when that horizon is not the
    sea's: no sea-horizon preset holds for it)."""

    eye_height_m: float
    index_error_arcmin: float
    horizon: str
    presets: SightPresets | None
    #: the position the plan is carried on from (:class:`PlanStart`): the latest fix, or the DR at its time when
    #: that fix cannot be trusted
    start: PlanStart | None = None


@dataclass(frozen=True)
class PlanStart:
    """The position a workbook's sight plan is carried on from, and why: the latest fix when it can be trusted,
    else the DR at that fix's time (the fix named, with why it was not used), else the latest trusted fix."""

    #: 'fix' or 'DR'
    kind: str
    #: the fix group the position belongs to (the untrusted one, for a DR at its time)
    group: str
    utc: np.datetime64
    lat_deg: float
    lon_deg: float
    #: the sheet's words: which position, at what time, and why an untrusted fix was passed over
    words: str


@dataclass(frozen=True)
class VoyageResult:
    """Everything a run on sight logs produced, built once by :func:`process_log`: the log as read, the
    reduced sights, the rows rejected, every fix group with its fix, the provenance, and what the workbook,
    the day's work and the exports take from it."""

    source: str
    log: SightLog
    reduced: pd.DataFrame
    rejected: pd.DataFrame
    groups: tuple[GroupFix, ...]
    provenance: dict[str, str] = field(default_factory=dict)
    #: the sight plan for the next twilight after the last fix, from it along the last course and speed
    next_plan: SightPlan | None = None
    #: the twilights and the Sun's events from the last fix on (navred.plan.track_events), with next_plan
    next_events: dict | None = None
    #: the set and drift found at each fix carried on in the DR (process_log's option)
    carry_current: bool = False
    #: the timepieces' rating when a rating log was given
    ratings: Ratings | None = None
    #: per reduced row, what the fix takes from the DR kept along the log (:func:`dr_context`): the current in
    #: force at each sight and the age of its DR
    context: dict | None = None
    #: the observers whose sights are the ship's (the rest are exercises: navred.jobs.shipsfixes)
    navigators: tuple[str, ...] = ()
    #: the waypoints ahead (lat_deg, lon_deg, name: navred route's), for the noon report's distance to go
    route: pd.DataFrame | None = None
    #: what the writers work out once a run and reuse (the day's work, labels of every sight)
    cache: dict = field(default_factory=dict, repr=False, compare=False)
    #: each vessel the log names, with the plan of its own next twilight after its own latest fix (next_plan is
    #: the plan of the vessel with the latest fix of all); empty when the log names no vessel
    vessel_plans: tuple[tuple[str, SightPlan], ...] = ()
    #: the Hs to preset of each plan's bodies (navred.presets.sight_presets, the function ``navred plan`` uses) with
    #: the height of eye and index error of the last sight of the fix it runs on from (PlanSextant), by vessel ("" for
    #: next_plan)
    plan_presets: dict = field(default_factory=dict)

    def days_work(self):
        """The day's work of the voyage (navred.jobs.dayswork): set and drift, estimated positions, noons, the DR
        track; worked out once and kept."""
        if "days_work" not in self.cache:
            from .dayswork import days_work

            self.cache["days_work"] = days_work(self, carry_current=self.carry_current)
        return self.cache["days_work"]

    @property
    def inputs(self) -> tuple[str, ...]:
        """Every file the run read (the logs, the rating log, a reference track): never to be written over."""
        ratings = self.ratings.sources if self.ratings is not None else ()
        return tuple(dict.fromkeys([*self.log.sources, *ratings]))

    @property
    def notes(self) -> tuple[str, ...]:
        """What the readers noted about the files as a whole (the log's and the rating log's)."""
        ratings = tuple(self.ratings.notes or ()) if self.ratings is not None else ()
        return tuple(dict.fromkeys([*self.log.notes, *ratings]))

    @property
    def raw(self) -> pd.DataFrame:
        """The log exactly as read (for the 'Sights as read' sheet)."""
        return self.log.as_read

    @property
    def n_reduced(self) -> int:
        return int((self.reduced.status != SightStatus.ERROR).sum()) if len(self.reduced) else 0

    @property
    def n_fixes(self) -> int:
        return sum(g.fix is not None for g in self.groups)

    @property
    def n_rejected_rows(self) -> int:
        if not len(self.rejected):
            return 0
        return int(self.rejected[["source", "row"]].drop_duplicates().shape[0])

    def summary(self) -> str:
        empty = f", {self.log.empty_rows} empty row{'s' if self.log.empty_rows > 1 else ''} skipped" if self.log.empty_rows else ""
        if not len(self.reduced) and len(self.log.entries):
            return (f"no sights: the log holds {len(self.log.entries)} entry row"
                    f"{'' if len(self.log.entries) == 1 else 's'} (the DR, the Day's work), "
                    f"{self.n_rejected_rows} rejected{empty}")
        lines = sum(g.fix is not None and not g.fix.is_fix for g in self.groups)
        not_fixes = f", {lines} line{'s' if lines > 1 else ''} of position or latitude{'s' if lines > 1 else ''} " \
            "(no fix)" if lines else ""
        fixes = self.n_fixes - lines
        return (f"{self.n_reduced} sight{'' if self.n_reduced == 1 else 's'} reduced, {fixes} "
                f"fix{'' if fixes == 1 else 'es'}{not_fixes}, "
                f"{self.n_rejected_rows} rejected{empty}")

    @property
    def vessels(self) -> tuple[str, ...]:
        """The vessels the log names, in the order first met."""
        if not len(self.reduced):
            return ()
        return tuple(v for v in dict.fromkeys(self.reduced["vessel"].astype(str).tolist()) if v)

    def vessel_of(self, group: str) -> str:
        """The vessel of a fix group (its first sight's), '' where the log names none."""
        if "group vessels" not in self.cache:
            vessels = self.reduced["vessel"].astype(str).to_numpy() if len(self.reduced) else np.zeros(0, dtype=str)
            self.cache["group vessels"] = {g.name: str(vessels[g.rows[0]]) if len(g.rows) else "" for g in self.groups}
        return self.cache["group vessels"].get(group, "")

    def group(self, name: str) -> GroupFix:
        for group in self.groups:
            if group.name == name:
                return group
        raise NavredError(f"no fix group {name!r}; the log has: {', '.join(g.name for g in self.groups)}")


@api_boundary
def process_log(source: LogSource | SightLog, *, dates: str | None = None, solve_motion: bool = False,
                progress: Callable[[int, int], None] | None = None, plan: bool = True,
                at_utc: Instant | None = None, carry_current: bool = False,
                rates: Ratings | None = None, navigators: tuple[str, ...] | list[str] = (),
                route: pd.DataFrame | None = None, deviation: DeviationCurve | None = None) -> VoyageResult:
    """Read sight logs and do the whole job; every input row ends up reduced or rejected.

    ``source`` is anything :func:`navred.read_sight_log` takes (a file, a list of files, a
    folder, a DataFrame); ``dates`` declares the order of non-ISO dates. ``progress``
    (optional) is called with (done, total) as blocks of sights are reduced. ``plan``: also
    plan the next twilight. ``at_utc``: the time of every fix (default: each group's last sight).
    A sight whose DR the reader carried along the log's track gets it again from the last fix
    before it (each fix restarts the DR; ``carry_current`` carries the set and drift found at
    each fix on in the DR). ``rates`` (a :class:`navred.io.timesignals.Ratings`) predicts the watch
    error of sights kept in zone time without one; it is kept for the workbook's Timepieces sheet.
    ``navigators``: the observers whose sights are the ship's, every other's an exercise that never restarts
    her DR (:mod:`navred.jobs.shipsfixes`; a log's own ``role`` column says it row by row). ``route``: the
    waypoints ahead (``lat_deg``, ``lon_deg``, ``name``; :func:`navred.io.waypoints.read_route`) for the noon
    report. ``deviation`` (a :class:`navred.compass.DeviationCurve`, from the deviation card) makes a compass
    course entered without its deviation true.
    """
    log = source if isinstance(source, SightLog) else read_sight_log(source, dates=dates, rates=rates,
                                                                     deviation=deviation)
    if navigators:
        from .shipsfixes import check_navigators

        observers = set(log.table["observer"].tolist()) if len(log.table) else set()
        navigators = check_navigators(observers, navigators)
    navigators = tuple(navigators)
    log = split_mixed_groups(log, navigators)
    reduced = _reduce_with_progress(log, progress)
    if len(reduced):
        for column, values in series_columns(reduced).items():
            reduced[column] = values
    context = dr_context(log, reduced, [])
    groups = fix_groups(reduced, solve_motion=solve_motion, at_utc=at_utc, context=context)
    log, reduced, groups, context = _restart_dr_at_fixes(log, reduced, groups, progress, carry_current, context,
                                                         navigators, solve_motion=solve_motion, at_utc=at_utc)
    if len(reduced):  # the DR's age each fix took, in the table, for the API to take the same (fix_positions)
        reduced[DR_AGE_COLUMN] = context["age_h"]
        reduced[CURRENT_SET_COLUMN], reduced[CURRENT_DRIFT_COLUMN] = context["set_deg"], context["drift_kn"]
    rejected = _rejected(log, reduced)
    usable = reduced.status.to_numpy() != SightStatus.ERROR if len(reduced) else np.zeros(0, dtype=bool)
    table = iers_table()
    dut1 = reduced.dut1_s[usable] if len(reduced) else pd.Series(dtype=float)
    provenance = {
        "navred version": __version__,
        "run at (UTC)": _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M:%S"),
        "sight log": ", ".join(log.sources),
        "read": log.summary(),
        "ephemeris": f"{EPHEMERIS_NAME} (skyfield-data package)",
        "stars": "Hipparcos 2 (van Leeuwen 2007), 57 navigational stars and Polaris",
        "precession-nutation": "IAU 2006 precession with IAU 2000B nutation (ERFA)",
        "IERS table": f"finals2000A.all (astropy-iers-data): measured to {table.last_measured_date}, "
                      f"predicted to {table.last_predicted_date}",
        "leap seconds": f"Leap_Second.dat, expires {leap_second_table().expires.isoformat()}",
        "DUT1 used": (f"{dut1.min():+.3f} s to {dut1.max():+.3f} s; sources: "
                      f"{', '.join(sorted(set(reduced.ut1_source[usable])))}") if len(dut1) else "none",
        "refraction": "Bennett (1982), scaled for temperature and pressure",
        "row numbers": "the row number a spreadsheet shows (the header is row 1), with the file when "
                       "several logs were read",
    }
    if log.dates:
        provenance["dates"] = f"numeric dates read {log.dates} (declared)"
    if (log.table["dr_carried_from"] != "").any() if len(log.table) else False:
        provenance["DR"] = ("carried along the log's track (its entries, and the sights' courses and speeds) from "
                            "the departure or last known position, restarted at each fix"
                            + ("; the set and drift found at each fix carried on" if carry_current else ""))
    if rates is not None:
        provenance["timepieces"] = "; ".join(p.summary() for p in rates.timepieces.values())
    events, next_plan, next_presets = _next_twilight_plan(groups, reduced) if plan else (None, None, None)
    vessel_plans, presets = _vessel_plans(groups, reduced, next_plan, next_presets) if plan else ((), {})
    presets = {"": next_presets, **presets} if next_plan is not None else {}
    return VoyageResult(", ".join(log.sources), log, reduced, rejected, tuple(groups), provenance, next_plan, events,
                        carry_current, rates, context, navigators, route, vessel_plans=vessel_plans,
                        plan_presets=presets)


def _restart_dr_at_fixes(log: SightLog, reduced: pd.DataFrame, groups: list[GroupFix], progress, carry_current,
                         context, navigators=(), **fixing):
    """The sights whose DR the reader carried from the departure get it again from the last known position
    before them, every fix included, and are reduced and fixed again (the fixes themselves do not depend on
    the DR they start from; their DR, intercepts and plots do; with ``carry_current``, the current found at
    each fix advances the lines of the fixes after it)."""
    if not len(log.table) or not (log.table["dr_carried_from"] != "").any():
        return log, reduced, groups, context
    if not any(g.fix is not None and g.fix.is_fix for g in groups) and not carry_current:
        return log, reduced, groups, context
    from .dayswork import known_label_at, vessel_tracks

    draft = VoyageResult("", log, reduced, log.rejected, groups, navigators=navigators)
    tracks = vessel_tracks(draft, carry_current=carry_current)
    table = log.table.copy()
    carried = np.flatnonzero((table["dr_carried_from"] != "").to_numpy() & (table["read_problem"] == "").to_numpy())
    when = utc64(table["sight_utc"]).astype(np.int64)
    vessels = table["vessel"].to_numpy(dtype=object)
    lat = table["dr_lat_deg"].to_numpy(dtype=float).copy()
    lon = table["dr_lon_deg"].to_numpy(dtype=float).copy()
    note = table["dr_carried_from"].to_numpy(dtype=object).copy()
    past_pole: list[tuple[int, str]] = []
    for vessel, track in tracks.items():
        rows = carried[vessels[carried] == vessel]
        if not rows.size:
            continue
        # a sight at the very instant of a fix is one of the sights that make it: its DR is the one carried
        # up to that instant, not the fix itself (but a sight at the departure's instant starts from it)
        t_lat, t_lon, origin = track.positions(when[rows], before_restart=True)
        at_start = origin < 0
        if at_start.any():
            s_lat, s_lon, s_origin = track.positions(when[rows][at_start])
            t_lat[at_start], t_lon[at_start], origin[at_start] = s_lat, s_lon, s_origin
        found = (origin >= 0) & np.isfinite(t_lat)
        lat[rows[found]], lon[rows[found]] = t_lat[found], t_lon[found]
        note[rows[found]] = [f"carried from the {known_label_at(track, o)}" for o in origin[found]]
        polar = rows[(origin >= 0) & ~np.isfinite(t_lat)]
        past_pole.extend((int(r), f"{PAST_POLE} (carried from the {known_label_at(track, o)})")
                         for r, o in zip(polar.tolist(), origin[(origin >= 0) & ~np.isfinite(t_lat)].tolist()))
    table["dr_lat_deg"], table["dr_lon_deg"], table["dr_carried_from"] = lat, lon, note
    rejected = log.rejected
    if past_pole:  # refused as the reader refuses a row, with its one reason, and kept in the Rejected sheet
        problem = table["read_problem"].to_numpy(dtype=object).copy()
        where = table["read_problem_column"].to_numpy(dtype=object).copy()
        extra = []
        for row, reason in past_pole:
            problem[row], where[row] = f"dr_lat: {reason}", "dr_lat"
            lat[row] = lon[row] = np.nan
            extra.append({"source": table["source"].iloc[row], "row": int(table["row"].iloc[row]),
                          "column": "dr_lat", "value": "", "reason": reason})
        table["read_problem"], table["read_problem_column"] = problem, where
        table["dr_lat_deg"], table["dr_lon_deg"] = lat, lon
        rejected = pd.concat([rejected, pd.DataFrame(extra, columns=REJECTED_COLUMNS)], ignore_index=True)
    log = replace(log, table=table, rejected=rejected)
    reduced = _reduce_with_progress(log, progress)
    if len(reduced):
        for column, values in series_columns(reduced).items():
            reduced[column] = values
    context = dr_context(log, reduced, groups, carry_current=carry_current, tracks=tracks, navigators=navigators)
    return log, reduced, fix_groups(reduced, context=context, **fixing), context


def _rejected(log: SightLog, reduced: pd.DataFrame) -> pd.DataFrame:
    """The reader's rejections, and the sights that read well but could not be reduced (apparent
    altitude below -1°, say), each under the column that caused it."""
    read_bad = log.table["read_problem"].to_numpy() != "" if len(log.table) else np.zeros(0, dtype=bool)
    failed = (reduced.status.to_numpy() == SightStatus.ERROR) & ~read_bad if len(reduced) else np.zeros(0, dtype=bool)
    rejected = log.rejected
    if failed.any():
        part = reduced[failed]
        value = np.where(part.error_column == "eye_height", part.eye_height_m.map("{:g} m".format),
                         part.time_as_read.astype(str))
        value = np.where(part.error_column == "hs", part.hs_deg.map(lambda v: format_angle(v, "signed")), value)
        extra = pd.DataFrame({"source": part.source.to_numpy(), "row": part.row.to_numpy(),
                              "column": part.error_column.to_numpy(), "value": value,
                              "reason": part.message.to_numpy()})
        rejected = pd.concat([rejected, extra], ignore_index=True)
    order = {s: k for k, s in enumerate(log.sources)}
    rejected = rejected.assign(_source=rejected.source.map(order)).sort_values(["_source", "row"], kind="stable")
    return rejected.drop(columns="_source").reset_index(drop=True)[REJECTED_COLUMNS]


def _reduce_with_progress(log: SightLog, progress) -> pd.DataFrame:
    block = 5000
    table = log.table
    if progress is None or len(table) <= block:
        return reduce_sights(table)
    parts = []
    for start in range(0, len(table), block):
        parts.append(reduce_sights(table.iloc[start:start + block]))
        progress(min(start + block, len(table)), len(table))
    return pd.concat(parts, ignore_index=True)


def chart_positions(reduced: pd.DataFrame, group: np.ndarray, count: int
                    ) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Each group's chart or GNSS position (NaN where none): the one on its latest usable sight that
    gives both, with a note naming that row (``group`` numbers each row's group, -1 for none)."""
    lat = np.full(count, np.nan)
    lon = np.full(count, np.nan)
    notes = [""] * count
    if not len(reduced) or count == 0:
        return lat, lon, notes
    row_lat = reduced["chart_lat_deg"].to_numpy(dtype=float)
    row_lon = reduced["chart_lon_deg"].to_numpy(dtype=float)
    usable = (reduced["status"].to_numpy() != SightStatus.ERROR) & np.isfinite(row_lat) & np.isfinite(row_lon) & (group >= 0)
    if not usable.any():
        return lat, lon, notes
    candidates = np.flatnonzero(usable)
    times = utc64(reduced["sight_utc"]).astype(np.int64)[candidates]
    # by group, then time, then row: the last of each group is its latest (the later row on a tie)
    order = np.lexsort((candidates, times, group[candidates]))
    ranked = candidates[order]
    ends = np.flatnonzero(np.diff(group[ranked], append=-2) != 0)
    latest = ranked[ends]
    owners = group[latest]
    lat[owners], lon[owners] = row_lat[latest], row_lon[latest]
    labels = row_labels(reduced)
    rounded = np.round(row_lat[ranked], 6) + 1j * np.round(row_lon[ranked], 6)
    starts = np.concatenate([[0], ends[:-1] + 1])
    for owner, first, end, row in zip(owners, starts, ends, latest):
        notes[owner] = f"chart position from {labels[row]}"
        given = end - first + 1
        if given > 1 and np.unique(rounded[first:end + 1]).size > 1:
            notes[owner] += f" (the latest of {given} rows that give one, and they differ)"
    return lat, lon, notes


#: A fix group whose sights span more than this (hours) is warned: a running fix is a matter of a few hours
#: (a Sun-run-Sun of three or four; common practice), and a longer one is most often two rounds under one name.
LONG_GROUP_HOURS = 8.0


#: a sight left out of its fix this many hours or more outside the span of the sights used is named as the cause
#: of the group's span (a date or hour slip; a round's sights are minutes apart: common practice)
LEFT_OUT_SPAN_HOURS = 0.5


def _say_span(result, times: np.ndarray, labels: np.ndarray) -> None:
    """The warning of a fix whose sights used span more than LONG_GROUP_HOURS; where only a sight left out of it
    made the group's span long, that row named as the cause (its time, most likely its date or hour, is wrong)."""
    used = result.used if result.used.size == times.size else np.ones(times.size, dtype=bool)
    left = result.left_out if result.left_out.size == times.size else np.zeros(times.size, dtype=bool)
    kept = times[used & ~left] if (used & ~left).any() else times
    span_h = float((kept.max() - kept.min()) / np.timedelta64(1, "h"))
    every_h = float((times.max() - times.min()) / np.timedelta64(1, "h"))
    if span_h > LONG_GROUP_HOURS:
        which = "sights used" if left.any() else "group's sights"
        result.warnings.append(
            f"the {which} span {span_h:.1f} h: a running fix over more than {LONG_GROUP_HOURS:.0f} h "
            "rests on the DR's run between them; is it two rounds under one name (a date repeated across "
            "the date line names two days alike)? give each round its own fix group")
    elif every_h > LONG_GROUP_HOURS or (left.any() and every_h - span_h >= LEFT_OUT_SPAN_HOURS):
        middle = kept.min() + (kept.max() - kept.min()) / 2
        apart = np.abs((times - middle) / np.timedelta64(1, "h"))
        culprits = [f"{labels[k]} ({apart[k]:.1f} h from them)" for k in np.flatnonzero(left)
                    if apart[k] > span_h / 2 + LEFT_OUT_SPAN_HOURS]
        if culprits:
            result.warnings.append(
                f"the group's sights span {every_h:.1f} h only because of {', '.join(culprits)}, left out: the "
                f"sights used span {f'{span_h * 60:.0f} min' if span_h < 1.0 else f'{span_h:.1f} h'}; check {'their' if len(culprits) > 1 else 'its'} time "
                "(the date, the hour, the zone description)")


def fix_groups(reduced: pd.DataFrame, *, solve_motion: bool = False, at_utc: object | None = None,
               only: str | None = None, chart: tuple[float, float] | None = None,
               context: dict | None = None) -> list[GroupFix]:
    """Fix every group of a reduced table (or ``only`` one), with the one rule for chart positions.

    Every group is solved in one batch (:func:`navred.fix.fixes_from_sights`). ``chart``
    overrides the chart position of the group (with ``only``). ``context``: the current in force at
    each sight and the age of its DR (:func:`dr_context`; the voyage's ``context``). A round whose Hs
    read as degrees and minutes written as a decimal (29.216 for 29° 21.6′) agree is marked as not to be
    trusted (:func:`navred.grosserrors.misread_rounds`).
    """
    if len(reduced) == 0:
        return []
    names = reduced["fix_group"].astype(str).to_numpy()
    codes, distinct = pd.factorize(pd.Series(np.where(names == "", None, names), dtype=object), sort=False)
    distinct = [str(d) for d in distinct]
    if only is not None:
        keep = distinct.index(only) if only in distinct else -1
        codes = np.where(codes == keep, 0, -1)
        distinct = [only] if keep >= 0 else []
    group = np.asarray(codes, dtype=np.intp)
    count = len(distinct)
    if chart is not None:
        chart_lat, chart_lon = np.full(count, float(chart[0])), np.full(count, float(chart[1]))
        notes = ["chart position given with the command"] * count
    else:
        chart_lat, chart_lon, notes = chart_positions(reduced, group, count)
    usable = reduced["status"].to_numpy() != SightStatus.ERROR

    def column(name):
        return reduced[name].to_numpy(dtype=float) if name in reduced.columns else None

    context = context or {}
    arguments = dict(usable=usable, course_deg=column("course_deg"), speed_kn=column("speed_kn"), at_utc=at_utc,
                     solve_motion=solve_motion, labels=row_labels(reduced), set_deg=context.get("set_deg"),
                     drift_kn=context.get("drift_kn"), dr_age_hours=context.get("age_h"))
    arrays = (reduced["gha_deg"].to_numpy(dtype=float), reduced["dec_deg"].to_numpy(dtype=float),
              reduced["ho_deg"].to_numpy(dtype=float), utc64(reduced["sight_utc"]),
              reduced["dr_lat_deg"].to_numpy(dtype=float), reduced["dr_lon_deg"].to_numpy(dtype=float))
    batch = fixes_from_sights(*arrays, group, chart_lat=chart_lat, chart_lon=chart_lon, hs_deg=column("hs_deg"),
                              sigma_arcmin=column("sigma_arcmin"), line_sigma_nm=column("line_sigma_nm"), **arguments)
    drop_contradicted(reduced, name_zone_slips(batch.results, reduced, group, arguments["labels"]))
    by_group = np.argsort(np.where(group >= 0, group, count), kind="stable")
    bounds = np.concatenate([[0], np.cumsum(np.bincount(group[group >= 0], minlength=count))]).tolist()
    usable_count = np.bincount(group[(group >= 0) & usable], minlength=count)
    groups: list[GroupFix] = []
    every_time = utc64(reduced["sight_utc"])  # (once for the table, not per group)
    for k, name in enumerate(distinct):
        rows = by_group[bounds[k]:bounds[k + 1]]
        position = (float(chart_lat[k]), float(chart_lon[k])) if np.isfinite(chart_lat[k]) else None
        problem = batch.problems[k]
        if usable_count[k] < 2:
            count_k = int(usable_count[k])
            problem = (f"{count_k} usable sight{'' if count_k == 1 else 's'}: a fix needs two or more"
                       + (" (one sight gives a line of position; on the meridian, a latitude: see the latitude "
                          "checks)" if count_k == 1 else ""))
        result = batch.results[k]
        if result is not None and rows.size > 1:
            _say_span(result, every_time[rows], arguments["labels"][rows])
        groups.append(GroupFix(name, rows, result, problem, position, notes[k] if position else ""))
    return groups


def _next_twilight_plan(groups: list[GroupFix], reduced: pd.DataFrame):
    """Plan the next twilight that begins after the latest fix, carried on by the last sight's course and speed
    from the fix, or from the DR at its time when the fix cannot be trusted (:func:`plan_start`)."""
    fixes = [g for g in groups if g.fix is not None]
    if not fixes:
        return None, None, None
    return _plan_after(max(fixes, key=lambda g: g.fix.utc), reduced, groups)


def _vessel_plans(groups: list[GroupFix], reduced: pd.DataFrame, next_plan: SightPlan | None,
                  next_presets) -> tuple[tuple[tuple[str, SightPlan], ...], dict]:
    """Each named vessel's own plan of its next twilight, after its own latest fix (vessels in the order the log
    first names them; none when the log names no vessel). ``next_plan``: the plan after the latest fix of all
    (:func:`_next_twilight_plan`), not worked twice. With each vessel's presets, by name."""
    fixes = [g for g in groups if g.fix is not None]
    if "vessel" not in reduced.columns or not fixes:
        return (), {}
    overall = max(fixes, key=lambda g: g.fix.utc)
    vessel = reduced["vessel"].to_numpy(dtype=object)
    latest: dict[str, GroupFix] = {}
    own: dict[str, list[GroupFix]] = {}
    for g in groups:
        name = str(vessel[g.rows[-1]]) if len(g.rows) else ""
        own.setdefault(name, []).append(g)
        if g.fix is not None and name and (name not in latest or g.fix.utc > latest[name].fix.utc):
            latest[name] = g
    order = list(dict.fromkeys(str(v) for v in vessel if v))
    plans, presets = [], {}
    for name in order:
        if name in latest:
            plan, preset = ((next_plan, next_presets) if latest[name] is overall else
                            _plan_after(latest[name], reduced, own[name])[1:])
            if plan is not None:
                plans.append((name, plan))
                presets[name] = preset
    return tuple(plans), presets


def plan_start(latest: GroupFix, groups: list[GroupFix] | tuple[GroupFix, ...]) -> PlanStart | None:
    """Where a plan after ``latest``'s fix starts: that fix when it can be trusted (:attr:`navred.FixResult.trusted`);
    else the DR at its time (the DR the log keeps, never restarted by an untrusted fix); else, without a DR there,
    the latest trusted fix of ``groups`` before it (of the same vessel when the caller passes only hers); None when
    there is none. A plan is never carried on from a position marked CANNOT BE TRUSTED (common practice: the DR is
    kept on and the fix looked into)."""
    fix = latest.fix
    if fix is None:
        return None
    when = np.datetime64(fix.utc, "ns")
    at = f"{str(when)[:16].replace('T', ' ')} UTC"
    if fix.trusted:
        return PlanStart("fix", latest.name, when, float(fix.lat_deg), float(fix.lon_deg),
                         f"the fix {latest.name!r} at {at}")
    cause = f"{fix.untrusted_cause}" if fix.untrusted_cause is not None else "untrusted"
    passed = (f"not from the fix {latest.name!r} at that time ({format_angle(fix.lat_deg, 'lat')} "
              f"{format_angle(fix.lon_deg, 'lon')}): it CANNOT BE TRUSTED ({cause}; the Fixes sheet's note says why)")
    if np.isfinite(fix.dr_lat_deg) and np.isfinite(fix.dr_lon_deg):
        check = ("; the DR itself is suspect (its hemisphere): check it as written"
                 if str(fix.untrusted_cause) == "DR hemisphere" else "")
        return PlanStart("DR", latest.name, when, float(fix.dr_lat_deg), float(fix.dr_lon_deg),
                         f"the DR at {at} ({format_angle(fix.dr_lat_deg, 'lat')} {format_angle(fix.dr_lon_deg, 'lon')}), "
                         f"{passed}{check}")
    earlier = [g for g in groups if g.fix is not None and g.fix.trusted and g.fix.utc <= fix.utc]
    if not earlier:
        return None
    before = max(earlier, key=lambda g: g.fix.utc)
    start = plan_start(before, groups)
    return replace(start, words=f"{start.words}, {passed}, and no DR at its time")


def _plan_after(latest: GroupFix, reduced: pd.DataFrame, groups: list[GroupFix] | None = None):
    """The twilights from ``latest``'s fix on, and the plan of the next one that begins after it, carried on by its
    last sight's course and speed from the fix, or from the position :func:`plan_start` takes instead of an
    untrusted one."""
    from ..plan import local_midnight, track_events
    from ..presets import sight_presets
    from ..reckoning import steady_track
    from ..sightplan import sight_plans
    from .bridge import to_minute

    last_row = reduced.iloc[latest.rows[-1]]
    course = float(np.nan_to_num(last_row.get("course_deg", 0.0)))
    speed = float(np.nan_to_num(last_row.get("speed_kn", 0.0)))
    start = plan_start(latest, [latest] if groups is None else groups)
    if start is None:
        return None, None, None
    when = start.utc
    date = str((when + np.timedelta64(int(start.lon_deg / DEG_PER_HOUR * NS_PER_HOUR), "ns")).astype("datetime64[D]"))
    # the events along the DR from the start at its own instant (not from its position at a midnight)
    track = steady_track(start.lat_deg, start.lon_deg, when, course, speed)
    events = track_events(track, local_midnight(date, start.lon_deg), 2)
    candidates = []
    for dawn, dusk in (("nautical_dawn", "civil_dawn"), ("civil_dusk", "nautical_dusk")):
        for a, b in zip(events[dawn], events[dusk]):
            # the next twilight that begins after the last fix (not the one just used)
            if not (np.isnat(a) or np.isnat(b)) and a > np.datetime64(latest.fix.utc, "ns"):
                candidates.append(a + (b - a) // 2)
    if not candidates:
        return events, None, None
    # to the whole minute, as ``navred plan`` gives it: a watch works to the minute
    at = to_minute(min(candidates))
    lat, lon = track.position(np.array([at]))
    plan = sight_plans(np.array([at]), lat, lon)[0]
    # the sextant of the last sight: its height of eye and index error set the Hs to preset
    horizon = str(last_row.get("horizon", "sea") or "sea")
    eye = float(np.nan_to_num(last_row.get("eye_height_m", 0.0)))
    ie = float(np.nan_to_num(last_row.get("index_error_arcmin", 0.0)))
    presets = None
    if horizon == "sea" and plan.body.size:
        presets = sight_presets(plan.body, plan.utc, plan.lat_deg, plan.lon_deg, eye_height_m=eye,
                                index_error_arcmin=ie)
    return events, plan, PlanSextant(eye, ie, horizon, presets, start)
