"""The whole job on a sight log: read, validate, reduce, fix each group, keep every row.

Edge code gluing :mod:`navred.logbook`, :func:`navred.reduce_sights` and
:func:`navred.fix.fix_position`; the result feeds the workbook, the plotting sheets and
the GPX/GeoJSON exports.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from . import __version__
from .angles import parse_angle
from .ephemeris import EPHEMERIS_NAME
from .errors import NavredError
from .fix import FixResult, fix_position
from .logbook import REJECTED_COLUMNS, read_sight_log
from .sights import reduce_sights
from .timescales import iers_table, leap_second_table


@dataclass
class GroupFix:
    """One fix group: its name, the rows of the reduced table it holds, and its fix (or why not)."""

    name: str
    rows: np.ndarray
    fix: FixResult | None
    problem: str = ""
    chart: tuple[float, float] | None = None


@dataclass
class VoyageResult:
    """Everything a run produced, for the workbook and the exports."""

    source: str
    raw: pd.DataFrame
    reduced: pd.DataFrame
    rejected: pd.DataFrame
    groups: list[GroupFix]
    provenance: dict[str, str] = field(default_factory=dict)
    #: the sight plan for the next twilight after the last fix, from it along the last course and speed
    next_plan: object | None = None
    next_events: dict | None = None
    #: a navred.training.TrainingReport when the run was marked against a reference track
    training: object | None = None

    @property
    def n_reduced(self) -> int:
        return int((self.reduced.status != "error").sum()) if len(self.reduced) else 0

    @property
    def n_fixes(self) -> int:
        return sum(g.fix is not None for g in self.groups)

    @property
    def n_rejected_rows(self) -> int:
        return int(self.rejected["row"].nunique()) if len(self.rejected) else 0

    def summary(self) -> str:
        return (f"{self.n_reduced} sights reduced, {self.n_fixes} fixes, "
                f"{self.n_rejected_rows} rejected")


def _raw_text(path) -> pd.DataFrame:
    """The log exactly as read, every cell as text, for the 'as read' sheet."""
    from pathlib import Path

    from .logbook import _read_raw

    return _read_raw(Path(path)).astype(str)


def process_log(path: str | Path, *, solve_motion: bool = False, progress: Callable[[int, int], None] | None = None) -> VoyageResult:
    """Read a sight log and do the whole job; every input row ends up reduced or rejected.

    ``progress`` (optional) is called with (done, total) as blocks of sights are reduced.
    """
    sights, rejected = read_sight_log(path)
    raw = _raw_text(path)
    reduced = _reduce_with_progress(sights, progress)
    # sights that read well but cannot be reduced (e.g. apparent altitude below -1°) are rejected too
    failed = reduced.status.to_numpy() == "error" if len(reduced) else np.zeros(0, dtype=bool)
    if failed.any():
        extra = pd.DataFrame({"row": reduced.loc[failed, "row"].to_numpy(), "column": "hs",
                              "value": reduced.loc[failed, "hs"].astype(str).to_numpy(),
                              "reason": reduced.loc[failed, "message"].to_numpy()})
        rejected = pd.concat([rejected, extra], ignore_index=True).sort_values("row", kind="stable")
        rejected = rejected.reset_index(drop=True)[REJECTED_COLUMNS]
    if len(reduced):
        from .series import series_of_log

        for column, values in series_of_log(reduced).items():
            reduced[column] = values
    groups = _fix_groups(reduced, solve_motion)
    table = iers_table()
    dut1 = reduced.dut1_s[~failed] if len(reduced) else pd.Series(dtype=float)
    provenance = {
        "navred version": __version__,
        "run at (UTC)": _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M:%S"),
        "sight log": str(path),
        "ephemeris": f"{EPHEMERIS_NAME} (skyfield-data package)",
        "stars": "Hipparcos 2 (van Leeuwen 2007), 57 navigational stars and Polaris",
        "precession-nutation": "IAU 2006 precession with IAU 2000B nutation (ERFA)",
        "IERS table": f"finals2000A.all (astropy-iers-data): measured to {table.last_measured_date}, "
                      f"predicted to {table.last_predicted_date}",
        "leap seconds": f"Leap_Second.dat, expires {leap_second_table().expires.isoformat()}",
        "DUT1 used": (f"{dut1.min():+.3f} s to {dut1.max():+.3f} s; sources: "
                      f"{', '.join(sorted(set(reduced.ut1_source[~failed])))}") if len(dut1) else "none",
        "refraction": "Bennett (1982), scaled for temperature and pressure",
    }
    result = VoyageResult(str(path), raw, reduced, rejected, groups, provenance)
    result.next_events, result.next_plan = _next_twilight_plan(result)
    return result


def _next_twilight_plan(voyage: VoyageResult):
    """Plan the next twilight that begins after the latest fix, carried on from the fix by the last
    sight's course and speed."""
    from .plan import Track, sight_plans, voyage_events

    fixes = [g for g in voyage.groups if g.fix is not None]
    if not fixes:
        return None, None
    latest = max(fixes, key=lambda g: g.fix.utc)
    last_row = voyage.reduced.iloc[latest.rows[-1]]
    course = float(pd.to_numeric(pd.Series([last_row.get("course_deg", 0.0)]), errors="coerce").fillna(0.0)[0])
    speed = float(pd.to_numeric(pd.Series([last_row.get("speed_kn", 0.0)]), errors="coerce").fillna(0.0)[0])
    fix = latest.fix
    when = np.datetime64(fix.utc, "ns")
    date = str((when + np.timedelta64(int(fix.lon_deg / 15 * 3.6e12), "ns")).astype("datetime64[D]"))
    events = voyage_events(date, 2, fix.lat_deg, fix.lon_deg, course_deg=course, speed_kn=speed)
    track = Track(fix.lat_deg, fix.lon_deg, when, course, speed)
    candidates = []
    for dawn, dusk in (("nautical_dawn", "civil_dawn"), ("civil_dusk", "nautical_dusk")):
        for a, b in zip(events[dawn], events[dusk]):
            # the next twilight that begins after the last fix (not the one just used)
            if not (np.isnat(a) or np.isnat(b)) and a > when:
                candidates.append(a + (b - a) // 2)
    if not candidates:
        return events, None
    at = min(candidates)
    lat, lon = track.position(np.array([at]))
    return events, sight_plans(np.array([at]), lat, lon)[0]


def _reduce_with_progress(sights: pd.DataFrame, progress) -> pd.DataFrame:
    block = 5000
    if progress is None or len(sights) <= block:
        return reduce_sights(sights)
    parts = []
    for start in range(0, len(sights), block):
        parts.append(reduce_sights(sights.iloc[start:start + block]))
        progress(min(start + block, len(sights)), len(sights))
    return pd.concat(parts, ignore_index=True)


def _fix_groups(reduced: pd.DataFrame, solve_motion: bool) -> list[GroupFix]:
    groups: list[GroupFix] = []
    if len(reduced) == 0:
        return groups
    names = reduced["fix_group"].astype(str).to_numpy()
    for name in dict.fromkeys(names):
        rows = np.flatnonzero(names == name)
        subset = reduced.iloc[rows].reset_index(drop=True)
        usable = int((subset.status != "error").sum())
        chart = _chart_position(subset)
        if usable < 2:
            groups.append(GroupFix(name, rows, None, f"{usable} usable sight(s): a fix needs two or more", chart))
            continue
        try:
            fix = fix_position(subset, chart_lat=chart[0] if chart else None,
                               chart_lon=chart[1] if chart else None, solve_motion=solve_motion)
        except NavredError as exc:
            groups.append(GroupFix(name, rows, None, str(exc), chart))
            continue
        groups.append(GroupFix(name, rows, fix, "", chart))
    return groups


def _chart_position(subset: pd.DataFrame) -> tuple[float, float] | None:
    if "chart_lat" not in subset.columns or "chart_lon" not in subset.columns:
        return None
    lat = subset["chart_lat"].astype(str).str.strip()
    lon = subset["chart_lon"].astype(str).str.strip()
    given = (lat != "") & (lon != "") & (lat != "nan")
    if not given.any():
        return None
    return parse_angle(lat[given].iloc[-1], "lat"), parse_angle(lon[given].iloc[-1], "lon")
