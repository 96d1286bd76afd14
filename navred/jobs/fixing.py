"""navred fix as a job: a log's fix groups fixed (one, or each), a chart or GNSS position given with the command
checked against the fix it belongs to, the latitude checks its sights allow, and the fixes as a table.

Every decision is here, not in the command line: which group a chart position belongs to, the fix done again
with it, the sights that give a latitude by meridian altitude, ex-meridian or Polaris, and the columns of the fixes
table.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from ..errors import NavredError
from ..io.logbook import LogSource
from ..io.timesignals import Ratings
from ..timescales import Instant, utc_datetime64
from .frames import FIX_COLUMNS as GROUP_FIX_COLUMNS
from .frames import fix_table_row, row_labels
from .latitudechecks import MERIDIAN_LHA_DEG, latitude_checks
from .voyage import GroupFix, VoyageResult, fix_groups, process_log

#: The columns of the fixes table (:func:`fixes_table`), one row per fix group, decimal degrees: the vessel (when the
#: log holds two or more), then
#: a fix group's row (:data:`navred.jobs.frames.FIX_COLUMNS`).
FIX_COLUMNS = ("vessel", *GROUP_FIX_COLUMNS)


def fixes_table(voyage: VoyageResult, groups: tuple[GroupFix, ...] | None = None) -> pd.DataFrame:
    """One row per fix group (``groups``, default every one), decimal degrees, the columns :data:`FIX_COLUMNS`;
    a group with no fix says why in ``note``."""
    labels = row_labels(voyage.reduced)
    rows = [{"vessel": voyage.vessel_of(group.name), **fix_table_row(group.name, group.fix, labels[group.rows],
                                                                     group.problem)}
            for group in (voyage.groups if groups is None else groups)]
    frame = pd.DataFrame(rows)
    if len(voyage.vessels) <= 1 and "vessel" in frame.columns:
        frame = frame.drop(columns="vessel")  # one ship: the API's table of fixes, column for column
    return frame[[c for c in FIX_COLUMNS if c in frame.columns]] if len(frame) else frame


@dataclass(frozen=True)
class FixReport:
    """navred fix's result: the voyage (every sight reduced, every group fixed) and the groups shown."""

    voyage: VoyageResult
    groups: tuple[GroupFix, ...]

    @property
    def n_fixes(self) -> int:
        return sum(g.fix is not None for g in self.groups)

    def table(self) -> pd.DataFrame:
        """The groups shown as the fixes table (:func:`fixes_table`)."""
        return fixes_table(self.voyage, self.groups)

    def latitude_checks(self) -> pd.DataFrame:
        return latitude_checks(self.voyage.reduced)


def fix_log(source: LogSource, *, dates: str | None = None, rates: Ratings | None = None,
            at_utc: Instant | None = None, group: str | None = None,
            chart: tuple[float, float] | None = None, solve_motion: bool = False) -> FixReport:
    """Fix every group of a log (or only ``group``), at ``at_utc`` (default: each group's last sight).

    ``chart`` (latitude, longitude in degrees): a chart or GNSS position to check the fix against; it belongs
    to one fix, so a log of several groups needs ``group``. An unknown group is refused naming the log's."""
    if at_utc is not None:
        utc_datetime64(at_utc)  # refused now, with its reason, rather than group by group
    voyage = process_log(source, dates=dates, solve_motion=solve_motion, plan=False, at_utc=at_utc, rates=rates)
    names = [g.name for g in voyage.groups]
    if group is not None:
        voyage.group(group)  # refuses an unknown group, naming the log's groups
    if chart is not None and group is None and len(names) > 1:
        raise NavredError("a chart position belongs to one fix: give --group with --chart-lat/--chart-lon "
                          "(or chart_lat/chart_lon columns in the log)")
    if chart is not None and names:
        again = fix_groups(voyage.reduced, solve_motion=solve_motion, at_utc=at_utc, only=group or names[0],
                           chart=chart, context=voyage.context)
        return FixReport(voyage, tuple(again))
    if group is not None:
        return FixReport(voyage, (voyage.group(group),))
    return FixReport(voyage, voyage.groups)


__all__ = ["FixReport", "fix_log", "fixes_table", "latitude_checks", "FIX_COLUMNS", "MERIDIAN_LHA_DEG"]
