"""navred fix as a job: a log's fix groups fixed (one, or each), a chart or GNSS position given with the command
checked against the fix it belongs to, the latitude checks its sights allow, and the fixes as a table.

Every decision is here, not in the command line: which group a chart position belongs to, the fix done again
with it, the sights that give a latitude by meridian altitude or by Polaris, and the columns of the fixes table.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import NavredError
from ..io.logbook import LogSource
from ..io.timesignals import Ratings
from ..latitudes import latitude_by_meridian_altitude, latitude_by_polaris
from ..status import SightStatus
from ..timescales import Instant, utc_datetime64
from .frames import row_labels
from .voyage import GroupFix, VoyageResult, fix_groups, process_log

#: A sight within this many degrees of LHA 0 (either side) is on the meridian: its Ho gives the latitude
#: (a fixed arc is common practice: the altitude changes by under 0.1′ within about 1° of LHA at sea).
MERIDIAN_LHA_DEG = 0.25

#: The columns of the fixes table (:func:`fixes_table`), one row per fix group, decimal degrees.
FIX_COLUMNS = ("fix_group", "utc", "kind", "lat_deg", "lon_deg", "sights", "sigma_arcmin", "weighted", "quantile",
               "ellipse_length_nm", "ellipse_width_nm", "ellipse_semi_major_nm", "ellipse_semi_minor_nm",
               "ellipse_orientation_deg", "flagged", "left_out", "all_sights_lat_deg", "all_sights_lon_deg",
               "dr_distance_nm", "chart_distance_nm", "chart_inside_ellipse", "note")


def latitude_checks(reduced: pd.DataFrame) -> pd.DataFrame:
    """Latitude by meridian altitude (a sight within :data:`MERIDIAN_LHA_DEG` of LHA 0, Polaris apart) and by
    Polaris, as checks on the fix: one row per such sight with its ``row`` label, ``body``, ``method``
    ('meridian' or 'Polaris'), ``lat_deg`` and the sight's ``dr_lat_deg``."""
    columns = ["row", "body", "method", "lat_deg", "dr_lat_deg"]
    if not len(reduced):
        return pd.DataFrame(columns=columns)
    usable = reduced.status.to_numpy() != SightStatus.ERROR
    lha = reduced.lha_deg.to_numpy(dtype=float)
    bodies = reduced.body_name.to_numpy(dtype=object)
    on_meridian = usable & ((lha < MERIDIAN_LHA_DEG) | (lha > 360.0 - MERIDIAN_LHA_DEG)) & (bodies != "Polaris")
    polaris = usable & (bodies == "Polaris")
    ho, dec = reduced.ho_deg.to_numpy(dtype=float), reduced.dec_deg.to_numpy(dtype=float)
    meridian = np.flatnonzero(on_meridian)
    zn = reduced.zn_deg.to_numpy(dtype=float)[meridian]
    by_meridian = latitude_by_meridian_altitude(ho[meridian], dec[meridian],
                                                np.where((zn > 90.0) & (zn < 270.0), "S", "N"))
    north = np.flatnonzero(polaris)
    by_polaris = latitude_by_polaris(ho[north], reduced.gha_deg.to_numpy(dtype=float)[north], dec[north],
                                     reduced.dr_lon_deg.to_numpy(dtype=float)[north])
    rows = np.concatenate([meridian, north])
    labels = row_labels(reduced)
    return pd.DataFrame({"row": labels[rows], "body": bodies[rows],
                         "method": ["meridian"] * meridian.size + ["Polaris"] * north.size,
                         "lat_deg": np.concatenate([np.atleast_1d(by_meridian), np.atleast_1d(by_polaris)]),
                         "dr_lat_deg": reduced.dr_lat_deg.to_numpy(dtype=float)[rows]}, columns=columns)


def fixes_table(voyage: VoyageResult, groups: tuple[GroupFix, ...] | None = None) -> pd.DataFrame:
    """One row per fix group (``groups``, default every one), decimal degrees, the columns :data:`FIX_COLUMNS`;
    a group with no fix says why in ``note``."""
    labels = row_labels(voyage.reduced)
    rows = []
    for group in voyage.groups if groups is None else groups:
        fix = group.fix
        if fix is None:
            rows.append({"fix_group": group.name, "note": f"no fix: {group.problem}"})
            continue
        left = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
        every = fix.all_sights
        rows.append({"fix_group": group.name, "utc": str(fix.utc)[:23] + "Z", "kind": fix.kind,
                     "lat_deg": fix.lat_deg, "lon_deg": fix.lon_deg, "sights": int(fix.used.sum()),
                     "sigma_arcmin": fix.sigma_arcmin,
                     "weighted": " ".join(labels[group.rows[i]] for i in range(len(group.rows))
                                          if fix.used[i] and fix.weight.size == len(group.rows)
                                          and fix.weight[i] != 1.0),
                     "quantile": fix.quantile,
                     "ellipse_length_nm": 2 * fix.ellipse_semi_major_nm,
                     "ellipse_width_nm": 2 * fix.ellipse_semi_minor_nm,
                     "ellipse_semi_major_nm": fix.ellipse_semi_major_nm,
                     "ellipse_semi_minor_nm": fix.ellipse_semi_minor_nm,
                     "ellipse_orientation_deg": fix.ellipse_orientation_deg,
                     "flagged": " ".join(labels[group.rows[i]] for i in range(len(group.rows)) if fix.outlier[i]),
                     "left_out": " ".join(labels[group.rows[i]] for i in range(len(group.rows)) if left[i]),
                     "all_sights_lat_deg": every.lat_deg if every is not None else None,
                     "all_sights_lon_deg": every.lon_deg if every is not None else None,
                     "dr_distance_nm": fix.dr_distance_nm,
                     "chart_distance_nm": fix.chart_distance_nm, "chart_inside_ellipse": fix.chart_inside_ellipse,
                     "note": "; ".join(fix.warnings)})
    frame = pd.DataFrame(rows)
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
