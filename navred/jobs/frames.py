"""Thin pandas wrappers around the core: the almanac as a table, the fix and the series check of reduced sights.

Edge code: the core functions take and return numpy arrays; these take the tables a user
holds (the output of :func:`navred.reduce_sights`) and hand their columns to the core,
so that the core never sees a DataFrame.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from ..almanac import places
from ..errors import NavredError, api_boundary
from ..fix import FixResult, fix_from_sights, fixes_from_sights
from ..series import SIGMAS, THRESHOLD_ARCMIN, check_series, series_ids
from ..status import SightStatus
from ..timescales import Instant
from ..vocabulary import CURRENT_DRIFT_COLUMN, CURRENT_SET_COLUMN, DR_AGE_COLUMN
from .zoneslips import name_zone_slips


@api_boundary
def body_positions(body: str | ArrayLike, utc: Instant | Sequence[Instant] | np.ndarray,
                   dut1_s: ArrayLike | None = None) -> pd.DataFrame:
    """Almanac data of bodies at instants, as a pandas DataFrame (one row per pair).

    ``body``: a name or a sequence of names (stars by their IAU names, Sun, Moon,
    Venus, Mars, Jupiter, Saturn); ``utc``: an instant or a sequence (ISO 8601 with
    a zone, timezone-aware datetime, pandas Timestamps, numpy datetime64 as UTC);
    sequences of equal length pair element-wise and a scalar broadcasts.
    ``dut1_s`` overrides the IERS UT1 − UTC (scalar or one per instant).

    Columns: ``body``, ``utc``, ``gha_aries_deg``, ``ra_hours``, ``sha_deg``,
    ``gha_deg``, ``dec_deg``, ``hp_arcmin`` (0 for stars), ``sd_arcmin`` (the Sun, Moon,
    Venus and Mars; 0 for stars and the outer planets), ``distance_km`` (NaN for stars), ``dut1_s`` and ``ut1_source``.
    The array form is :func:`navred.almanac.places`.

    >>> row = body_positions("Sun", "2026-06-21T12:00:00Z", dut1_s=0.0).iloc[0]
    >>> round(float(row.dec_deg), 2)
    23.44
    """
    if isinstance(body, (pd.DataFrame, dict)) or (not isinstance(body, str) and np.ndim(body) > 1):
        raise NavredError(f"body_positions takes a body's name or a list of names, not a {type(body).__name__}")
    result = places(body, utc, dut1_s)
    flat = {name: np.ravel(value) for name, value in {
        "body": result.body,
        "utc": result.instants.utc_datetime64(),
        "gha_aries_deg": result.gha_aries_deg,
        "ra_hours": result.ra_hours,
        "sha_deg": result.sha_deg,
        "gha_deg": result.gha_deg,
        "dec_deg": result.dec_deg,
        "hp_arcmin": result.hp_arcmin,
        "sd_arcmin": result.sd_arcmin,
        "distance_km": result.distance_km,
        "dut1_s": result.instants.dut1_s,
        "ut1_source": result.instants.ut1_source,
    }.items()}
    frame = pd.DataFrame(flat)
    frame["utc"] = pd.to_datetime(frame["utc"]).dt.tz_localize("UTC")
    return frame


def utc64(values: pd.Series) -> np.ndarray:
    """A column of timezone-aware instants as naive UTC datetime64[ns] (NaT kept)."""
    if isinstance(values.dtype, pd.DatetimeTZDtype):  # the instants in UTC, read straight (a twentieth of the time)
        return values.to_numpy(dtype="datetime64[ns]")
    return values.dt.tz_convert(None).to_numpy().astype("datetime64[ns]")


def row_labels(reduced: pd.DataFrame, *, several: bool | None = None) -> np.ndarray:
    """How a row is named in messages: its row number in the log, with its file when the table
    holds several files ('log.csv row 7'; ``several``: whether the whole table these rows came from does)."""
    if "row" not in reduced.columns:
        return np.arange(1, len(reduced) + 1).astype(str)
    rows = reduced["row"].astype(int).astype(str).to_numpy(dtype=object)
    if several is None:
        several = "source" in reduced.columns and reduced["source"].nunique() > 1
    if several and "source" in reduced.columns:
        from pathlib import Path

        names = np.array([Path(s).name for s in reduced["source"]], dtype=object)
        return (names + " row " + rows).astype(str)
    return ("row " + rows).astype(str)


def row_list(frame: pd.DataFrame) -> str:
    """Rows of a table named compactly, every one of them: 'rows 119-138, 140' or, when the table
    holds several files, 'a.csv rows 3-5; b.csv row 2'."""
    if not len(frame):
        return ""
    rows = frame["row"].astype(int).to_numpy() if "row" in frame.columns else np.arange(1, len(frame) + 1)
    sources = frame["source"].to_numpy(dtype=object) if "source" in frame.columns else np.full(len(frame), "")
    several = len(set(sources)) > 1
    parts = []
    for source in dict.fromkeys(sources):
        numbers = np.unique(rows[sources == source])
        breaks = np.flatnonzero(np.diff(numbers) != 1) + 1
        runs = [f"{r[0]}" if len(r) == 1 else f"{r[0]}-{r[-1]}" for r in np.split(numbers, breaks)]
        from pathlib import Path

        name = f"{Path(str(source)).name} " if several else ""
        parts.append(f"{name}row{'s' if len(numbers) > 1 else ''} {', '.join(runs)}")
    return "; ".join(parts)


#: a short list of rows stops once it is this long (characters), the rest counted
SHORT_ROWS_CHARS = 90


def short_row_list(frame: pd.DataFrame, limit_chars: int = SHORT_ROWS_CHARS) -> str:
    """Rows of a table named as :func:`row_list` names them, but short enough for one line of a long run's
    closing: the first runs of rows, then how many rows more ('rows 27-29, 34-36 … and 1,800 more')."""
    if not len(frame):
        return ""
    rows = frame["row"].astype(int).to_numpy() if "row" in frame.columns else np.arange(1, len(frame) + 1)
    sources = frame["source"].to_numpy(dtype=object) if "source" in frame.columns else np.full(len(frame), "")
    several = len(set(sources)) > 1
    total = 0
    runs: list[tuple[object, str, int]] = []  # (source, run, rows in it)
    for source in dict.fromkeys(sources):
        numbers = np.unique(rows[sources == source])
        total += numbers.size
        breaks = np.flatnonzero(np.diff(numbers) != 1) + 1
        for run in np.split(numbers, breaks):
            runs.append((source, f"{run[0]}" if len(run) == 1 else f"{run[0]}-{run[-1]}", len(run)))
            if len(runs) > 400:  # enough to fill a line; the rest are only counted
                break
    from pathlib import Path

    parts: list[str] = []
    shown = 0
    length = 0
    last = None
    for source, run, size in runs:
        if parts and length + len(run) > limit_chars:
            break
        if source != last:
            name = f"{Path(str(source)).name} " if several else ""
            plural = "s" if (rows[sources == source].size > 1) else ""
            parts.append(f"{'; ' if parts else ''}{name}row{plural} {run}")
            last = source
        else:
            parts.append(f", {run}")
        length += len(parts[-1])
        shown += size
    more = f" … and {total - shown:,} more" if total > shown else ""
    return "".join(parts) + more


@api_boundary
def fix_position(reduced: pd.DataFrame, at_utc: Instant | None = None, *, group: str | None = None,
                 chart_lat: float | None = None, chart_lon: float | None = None, solve_motion: bool = False,
                 set_deg: float | None = None, drift_kn: float | None = None, course_deg: float | None = None,
                 speed_kn: float | None = None) -> FixResult:
    """The least-squares fix of one fix group's reduced sights (the output of :func:`navred.reduce_sights`).

    Rows with ``status == 'error'`` are left out (their residual is NaN). Sights at
    different times make a running fix at ``at_utc`` (default: the last sight's time), using
    the ``course_deg`` and ``speed_kn`` columns, or the arguments of that name for the whole
    set, plus a current ``set_deg``/``drift_kn``. See :func:`navred.fix.fix_from_sights`.

    The sights of several fix groups (a whole log's) are refused, naming the groups: fixed as one they would
    make one running fix across hours. Give ``group`` to fix one of them, or fix every group at once with
    :func:`fix_positions` (or :func:`navred.process_log`).
    """
    needed = ("gha_deg", "dec_deg", "ho_deg", "sight_utc", "dr_lat_deg", "dr_lon_deg")
    if not isinstance(reduced, pd.DataFrame):
        raise NavredError(f"fix_position takes the table reduce_sights returns, not {type(reduced).__name__}")
    missing = [c for c in needed if c not in reduced.columns]
    if missing:
        raise NavredError(f"fix_position needs the columns of reduce_sights; missing: {', '.join(missing)}")
    several = "source" in reduced.columns and reduced["source"].nunique() > 1  # rows named as in the whole table
    reduced = one_fix_group(reduced, group)
    usable = (reduced["status"].to_numpy() != SightStatus.ERROR) if "status" in reduced.columns else None

    def column(name, given):
        if given is not None:
            return float(given)
        return reduced[name].to_numpy(dtype=float) if name in reduced.columns else None

    result = fix_from_sights(
        reduced["gha_deg"].to_numpy(dtype=float), reduced["dec_deg"].to_numpy(dtype=float),
        reduced["ho_deg"].to_numpy(dtype=float), utc64(reduced["sight_utc"]),
        reduced["dr_lat_deg"].to_numpy(dtype=float), reduced["dr_lon_deg"].to_numpy(dtype=float),
        usable=usable, course_deg=column("course_deg", course_deg), speed_kn=column("speed_kn", speed_kn),
        at_utc=at_utc, chart_lat=chart_lat, chart_lon=chart_lon, solve_motion=solve_motion,
        labels=row_labels(reduced, several=several), **_per_sight(reduced, set_deg, drift_kn))
    name_zone_slips([result], reduced, np.zeros(len(reduced), dtype=np.intp),
                    row_labels(reduced, several=several))  # as fix_positions does
    return result


#: The columns of a table of fixes (``navred fix --csv``, :meth:`GroupedFixes.table`), one row per fix group,
#: decimal degrees. ``trusted``: False for a position marked CANNOT BE TRUSTED as the position to plot
#: (:attr:`navred.FixResult.trusted`), ``untrusted_cause`` the kind of reason (:class:`navred.status.Distrust`:
#: 'Hs as a decimal', 'common error', 'scatter', 'DR hemisphere', 'far from the DR', 'a slip every sight fits',
#: 'a gross sight unchecked'; blank when trusted); both
#: blank for a group with no fix. ``run``: the run between the sights in words (:attr:`navred.FixResult.run_text`:
#: 'course and speed, 215° at 6.5 kn', 'course and speed, stopped (0 kn)'; 'none' for sights taken together).
FIX_COLUMNS = ("fix_group", "utc", "kind", "trusted", "untrusted_cause", "lat_deg", "lon_deg", "sights", "sigma_arcmin", "weighted", "quantile",
               "ellipse_length_nm", "ellipse_width_nm", "ellipse_semi_major_nm", "ellipse_semi_minor_nm",
               "ellipse_orientation_deg", "flagged", "left_out", "all_sights_lat_deg", "all_sights_lon_deg",
               "dr_distance_nm", "chart_distance_nm", "chart_inside_ellipse", "run", "note")


def fix_table_row(name: str, fix: FixResult | None, row_names: np.ndarray, problem: str = "") -> dict:
    """One fix group's row of a table of fixes (:data:`FIX_COLUMNS`): ``row_names`` are the names of the group's
    rows (in the order the fix holds them); a group with no fix says why in ``note``."""
    if fix is None:
        return {"fix_group": name, "note": f"no fix: {problem}"}
    n = len(row_names)
    left = fix.left_out if fix.left_out.size == n else np.zeros(n, dtype=bool)
    outlier = fix.outlier if fix.outlier.size == n else np.zeros(n, dtype=bool)
    weight = fix.weight if fix.weight.size == n else np.ones(n)
    every = fix.all_sights
    return {"fix_group": name, "utc": str(fix.utc)[:23] + "Z", "kind": fix.kind, "trusted": fix.trusted,
            "untrusted_cause": "" if fix.untrusted_cause is None else str(fix.untrusted_cause),
            "lat_deg": fix.lat_deg, "lon_deg": fix.lon_deg, "sights": int(fix.used.sum()),
            "sigma_arcmin": fix.sigma_arcmin,
            "weighted": " ".join(str(r) for r, u, w in zip(row_names.tolist(), fix.used.tolist(), weight.tolist())
                                 if u and w != 1.0),
            "quantile": fix.quantile,
            "ellipse_length_nm": 2 * fix.ellipse_semi_major_nm, "ellipse_width_nm": 2 * fix.ellipse_semi_minor_nm,
            "ellipse_semi_major_nm": fix.ellipse_semi_major_nm, "ellipse_semi_minor_nm": fix.ellipse_semi_minor_nm,
            "ellipse_orientation_deg": fix.ellipse_orientation_deg,
            "flagged": " ".join(str(r) for r, o in zip(row_names.tolist(), outlier.tolist()) if o),
            "left_out": " ".join(str(r) for r, o in zip(row_names.tolist(), left.tolist()) if o),
            "all_sights_lat_deg": every.lat_deg if every is not None else None,
            "all_sights_lon_deg": every.lon_deg if every is not None else None,
            "dr_distance_nm": fix.dr_distance_nm, "chart_distance_nm": fix.chart_distance_nm,
            "chart_inside_ellipse": fix.chart_inside_ellipse, "run": fix.run_text or str(fix.run_from),
            "note": "; ".join(fix.warnings)}


@dataclass(frozen=True)
class GroupedFixes:
    """The fixes of many fix groups (:func:`fix_positions`): each group's fix (or line of position, or latitude)
    by its name, in the order the table first names the groups, and why a group has none.

    ``fixes[name]`` is a :class:`navred.FixResult`; ``fixes.get(name)`` is None for a group with no fix, whose
    reason is ``problems[name]``; ``len`` and iteration go over every group asked for; :meth:`table` is one row
    per group."""

    groups: tuple[str, ...]
    results: Mapping[str, FixResult]
    problems: Mapping[str, str]
    #: the names of each group's rows (as every sheet and note names them), in the order its fix holds them
    rows: Mapping[str, tuple[str, ...]] = field(default_factory=dict)

    def __len__(self) -> int:
        return len(self.groups)

    def __iter__(self):
        return iter(self.groups)

    def __contains__(self, name: object) -> bool:
        return name in self.results or name in self.problems

    def __getitem__(self, name: str) -> FixResult:
        if name in self.results:
            return self.results[name]
        if name in self.problems:
            raise NavredError(f"fix group {name!r} has no fix: {self.problems[name]}")
        raise NavredError(f"no fix group {name!r} among these fixes")

    def get(self, name: str) -> FixResult | None:
        return self.results.get(name)

    def table(self) -> pd.DataFrame:
        """One row per group, the columns of ``navred fix --csv`` (:data:`FIX_COLUMNS`; ``utc`` as instants):
        its fix's time, position, kind, sights, σ and ellipse, the rows flagged and left out, the distances
        from the DR and the chart, and its notes, or why it has none (``note``)."""
        rows = [fix_table_row(name, self.results.get(name), np.asarray(self.rows.get(name, ()), dtype=object),
                              self.problems.get(name, "")) for name in self.groups]
        frame = pd.DataFrame(rows, columns=list(FIX_COLUMNS))
        frame["utc"] = pd.to_datetime(frame["utc"].str.rstrip("Z"), format="ISO8601").dt.tz_localize("UTC")
        return frame


@api_boundary
def fix_positions(reduced: pd.DataFrame, at_utc: Instant | Mapping[str, Instant] | None = None, *,
                  groups: Sequence[str] | None = None, chart: Mapping[str, tuple[float, float]] | None = None,
                  solve_motion: bool = False, set_deg: float | None = None, drift_kn: float | None = None,
                  course_deg: float | None = None, speed_kn: float | None = None) -> GroupedFixes:
    """The fix of every fix group of a reduced table at once (the output of :func:`navred.reduce_sights` with a
    ``fix_group`` column): each group gets what :func:`fix_position` gives it alone (tested), in one solve.

    ``groups``: the names of the groups to fix (default: every group a usable row names; rows with no group
    are in none). ``at_utc``: one fix time for every group, a mapping of group name to fix time, or None (each
    group's last sight). ``chart``: a chart or GNSS position per group name, cross-checked.
    ``solve_motion``, ``set_deg``, ``drift_kn``, ``course_deg`` and ``speed_kn`` as for :func:`fix_position`,
    for every group. Returns a :class:`GroupedFixes`.
    """
    needed = ("gha_deg", "dec_deg", "ho_deg", "sight_utc", "dr_lat_deg", "dr_lon_deg", "fix_group")
    if not isinstance(reduced, pd.DataFrame):
        raise NavredError(f"fix_positions takes the table reduce_sights returns, not {type(reduced).__name__}")
    missing = [c for c in needed if c not in reduced.columns]
    if missing:
        raise NavredError(f"fix_positions needs the columns of reduce_sights, fix_group among them; missing: "
                          f"{', '.join(missing)} (fix sights with no groups with fix_position)")
    usable = (reduced["status"].to_numpy() != SightStatus.ERROR) if "status" in reduced.columns \
        else np.ones(len(reduced), dtype=bool)
    names = reduced["fix_group"].astype(str).to_numpy(dtype=object)
    named = list(dict.fromkeys(names[usable & (names != "")].tolist()))
    if groups is None:
        chosen = named
    else:
        chosen = list(dict.fromkeys(str(g) for g in ([groups] if isinstance(groups, str) else groups)))
        unknown = [g for g in chosen if g not in named]
        if unknown:
            raise NavredError(f"no fix group {', '.join(repr(g) for g in unknown[:6])} among these sights; they "
                              f"hold: {', '.join(named[:12]) or 'none'}{' ...' if len(named) > 12 else ''}")
    index = {name: k for k, name in enumerate(chosen)}
    group = np.array([index.get(name, -1) for name in names.tolist()], dtype=np.intp)
    if isinstance(at_utc, Mapping):
        at_utc = [at_utc.get(name) for name in chosen]
    chart = chart or {}
    chart_lat = np.array([float(chart[g][0]) if g in chart else np.nan for g in chosen])
    chart_lon = np.array([float(chart[g][1]) if g in chart else np.nan for g in chosen])

    def column(name, given):
        if given is not None:
            return float(given)
        return reduced[name].to_numpy(dtype=float) if name in reduced.columns else None

    labels = row_labels(reduced)
    batch = fixes_from_sights(
        reduced["gha_deg"].to_numpy(dtype=float), reduced["dec_deg"].to_numpy(dtype=float),
        reduced["ho_deg"].to_numpy(dtype=float), utc64(reduced["sight_utc"]),
        reduced["dr_lat_deg"].to_numpy(dtype=float), reduced["dr_lon_deg"].to_numpy(dtype=float), group,
        usable=usable, course_deg=column("course_deg", course_deg), speed_kn=column("speed_kn", speed_kn),
        at_utc=at_utc, chart_lat=chart_lat, chart_lon=chart_lon, solve_motion=solve_motion,
        labels=labels, **_per_sight(reduced, set_deg, drift_kn))
    name_zone_slips(batch.results, reduced, group, labels)
    results = {name: batch.results[k] for k, name in enumerate(chosen) if batch.results[k] is not None}
    problems = {name: batch.problems[k] for k, name in enumerate(chosen) if batch.results[k] is None}
    order = np.argsort(group, kind="stable")
    bounds = np.searchsorted(group[order], np.arange(len(chosen) + 1))
    rows = {name: tuple(labels[order[bounds[k]:bounds[k + 1]]].tolist()) for k, name in enumerate(chosen)}
    return GroupedFixes(tuple(chosen), results, problems, rows)


def _per_sight(reduced: pd.DataFrame, set_deg: float | None, drift_kn: float | None) -> dict:
    """What the fix takes per sight beside the lines when the table holds it, as the commands give it: the Hs as
    read (the check for degrees and minutes written as a decimal), each sight's own σ (its weight), a landmark
    line's σ, its DR's age (``dr_age_h``, from reduce_sights or process_log: the check of the fix against its DR)
    and the current the log's DR keeps at it (``current_set_deg``, ``current_drift_kn``), unless the caller gives
    one current for all (``set_deg``, ``drift_kn``)."""
    def column(name):
        return reduced[name].to_numpy(dtype=float) if name in reduced.columns else None

    out = {name: column(name) for name in ("hs_deg", "sigma_arcmin", "line_sigma_nm")}
    out["dr_age_hours"] = column(DR_AGE_COLUMN)
    if set_deg is None and drift_kn is None and column(CURRENT_DRIFT_COLUMN) is not None:
        set_deg, drift_kn = column(CURRENT_SET_COLUMN), column(CURRENT_DRIFT_COLUMN)
    out["set_deg"], out["drift_kn"] = set_deg, drift_kn
    return out


def one_fix_group(reduced: pd.DataFrame, group: str | None = None) -> pd.DataFrame:
    """The sights of one fix group: ``group``'s, or all of them when they hold one group. The sights of several
    groups that the log names (its fix_group column) are refused, naming them: a whole log fixed as one would be
    one running fix across hours. Sights the log gave no group are the caller's to fix together (a running fix
    of sights taken hours apart falls in several automatic groups)."""
    if "fix_group" not in reduced.columns:
        if group is not None:
            raise NavredError(f"group {group!r}: these sights have no fix_group column")
        return reduced
    usable = (reduced["status"].to_numpy() != SightStatus.ERROR) if "status" in reduced.columns else np.ones(len(reduced), bool)
    labels = reduced["fix_group"].astype(str).to_numpy()
    names = list(dict.fromkeys(labels[usable].tolist()))
    if group is not None:
        if group not in names:
            raise NavredError(f"no fix group {group!r} among these sights; they hold: {', '.join(names) or 'none'}")
        return reduced[labels == group]
    labelled = reduced["fix_group_given"].to_numpy(dtype=bool)[usable] if "fix_group_given" in reduced.columns \
        else np.ones(int(usable.sum()), dtype=bool)
    if len(names) > 1 and labelled.any():
        times = utc64(reduced["sight_utc"])[usable]
        hours = float((times.max() - times.min()) / np.timedelta64(1, "h")) if times.size else 0.0
        shown = ", ".join(repr(n) for n in names[:6]) + (f" and {len(names) - 6} more" if len(names) > 6 else "")
        raise NavredError(f"these sights hold {len(names)} fix groups ({shown}) over {hours:.1f} hours: fixed as one "
                          "they would make one running fix across them all; give group= to fix one, or fix every "
                          "group at once with navred.fix_positions (or navred.process_log)")
    return reduced


def series_columns(reduced: pd.DataFrame, *, threshold_arcmin: float = THRESHOLD_ARCMIN,
                   sigmas: float = SIGMAS) -> dict[str, np.ndarray]:
    """The series check of a reduced sight table, as columns in row order.

    Uses the ``series`` column where given, otherwise groups each observer's sights of one
    body taken less than five minutes apart. Returns ``series``, ``series_size``,
    ``series_offset_arcmin``, ``series_deviation_arcmin``, ``series_scatter_arcmin``,
    ``series_flag``, ``series_best`` and ``series_best_ho_deg``. Rows with status ``error``
    are in no series.
    """
    usable = reduced["status"].to_numpy() != SightStatus.ERROR
    times_ns = utc64(reduced["sight_utc"])
    n = len(reduced)
    observer = reduced["observer"].astype(str).to_numpy(dtype=object) if "observer" in reduced.columns \
        else np.full(n, "", dtype=object)
    source = reduced["source"].astype(str).to_numpy(dtype=object) if "source" in reduced.columns \
        else np.full(n, "", dtype=object)
    given = reduced["series"].astype(str).to_numpy(dtype=object) if "series" in reduced.columns else None
    # series never span files: the same observer's name in two files is kept apart by the file
    labels = series_ids(np.where(usable, times_ns, np.datetime64(0, "ns")),
                        reduced["body_name"].to_numpy(dtype=object), source + "\x00" + observer, given)
    if given is not None and len(set(source)) > 1:
        from pathlib import Path

        names = np.array([Path(s).name for s in source], dtype=object)
        labels = np.where(np.char.str_len(given.astype(str)) > 0, names + ": " + labels.astype(str), labels)
    labels = np.where(usable, labels, "").astype(object)
    check = check_series(np.where(usable, labels, "-"), np.where(usable, reduced["ho_deg"], np.nan),
                         reduced["hc_deg"].to_numpy(dtype=float), threshold_arcmin=threshold_arcmin,
                         sigmas=sigmas, times_ns=times_ns)
    _, inverse, counts = np.unique(labels.astype(str), return_inverse=True, return_counts=True)
    size = np.where(usable, counts[inverse], 0)
    single = size < 2
    return {"series": labels, "series_size": size,
            "series_offset_arcmin": np.where(single, np.nan, check.offset_arcmin),
            "series_deviation_arcmin": np.where(single, np.nan, check.deviation_arcmin),
            "series_scatter_arcmin": np.where(single, np.nan, check.scatter_arcmin),
            "series_flag": check.flagged & ~single, "series_best": check.best & ~single,
            "series_best_ho_deg": np.where(single, np.nan, check.best_ho_deg)}


__all__ = ["FIX_COLUMNS", "fix_table_row", "body_positions", "fix_position", "fix_positions", "GroupedFixes",
           "one_fix_group", "series_columns", "row_labels", "row_list", "utc64"]
