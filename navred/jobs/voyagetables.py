"""The voyage's tables as its workbook shows them: every line of the working, the fixes, the rows rejected,
the sight series and the next sight plan, one row each, with the headers a navigator reads (units in them).

Built from a :class:`navred.jobs.voyage.VoyageResult`; written by :mod:`navred.jobs.voyagebook`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..io.workbook import utc_cell
from ..status import SightStatus
from .frames import row_labels


def _several(voyage) -> bool:
    return len(voyage.log.sources) > 1


def _row_columns(voyage, frame: pd.DataFrame) -> dict[str, object]:
    """The columns that name a row: its file (when several were read) and its row number in the log."""
    out: dict[str, object] = {}
    if _several(voyage):
        out["source file"] = [Path(s).name for s in frame["source"]]
    out["row in log"] = frame["row"].to_numpy()
    return out


def working_table(voyage) -> pd.DataFrame:
    """One row per reduced sight with every line of the working, units in the headers; the columns a log uses
    only sometimes (a value in other units, a waterline, a rated watch, a carried DR, its own extra columns)
    where it uses them."""
    reduced = voyage.reduced
    residual = np.full(len(reduced), np.nan)
    flagged = np.zeros(len(reduced), dtype=bool)
    left_out = np.zeros(len(reduced), dtype=bool)
    by_test = np.zeros(len(reduced), dtype=bool)
    for group in voyage.groups:
        if group.fix is not None:
            residual[group.rows] = group.fix.residual_arcmin
            flagged[group.rows] = group.fix.outlier
            if group.fix.left_out.size == len(group.rows):
                left_out[group.rows] = group.fix.left_out
            if group.fix.blunder_left_out.size == len(group.rows):
                by_test[group.rows] = group.fix.blunder_left_out
    ok = reduced.status.to_numpy() != SightStatus.ERROR
    r = reduced[ok].reset_index(drop=True)
    residual, flagged, left_out, by_test = residual[ok], flagged[ok], left_out[ok], by_test[ok]
    notes = [("; ".join(x for x in (("BLUNDER: a clear one by the blunder test, LEFT OUT of the fix" if t else
                                     "BLUNDER: a gross error, LEFT OUT of the fix" if g else
                                     "BLUNDER? flagged by the fix" if f else ""), m) if x))
             for f, g, t, m in zip(flagged, left_out, by_test, r.message.astype(str))]
    zone = r.zone_description_used_h.to_numpy(dtype=float)
    table = pd.DataFrame({
        **_row_columns(voyage, r),
        "fix group": r["fix_group"].astype(str),
        "body": r.body_name,
        "time as read": r.time_as_read,
        "watch error (s, fast +)": r.watch_error_applied_s,
        "zone date": r.zone_date_used,
        "zone time": r.zone_time_corrected,
        "ZD (h)": [f"{z:+.0f}" if np.isfinite(z) else "" for z in zone],
        "UTC": [utc_cell(v) for v in r.sight_utc.dt.tz_convert(None).to_numpy()],
        "Greenwich date": r.greenwich_date,
        "Hs (° ′)": format_angle(r.hs_deg.to_numpy(dtype=float), "signed"),
        "Hs (deg)": r.hs_deg,
        "horizon": r.horizon,
        "index error (′, on +)": r.index_error_arcmin,
        "height of eye (m)": r.eye_height_m,
        "temperature (°C)": r.temperature_c,
        "pressure (hPa)": r.pressure_hpa,
        "IC (′)": r.ic_arcmin,
        "horizon (′)": r.horizon_arcmin,
        "dip (′)": r.dip_arcmin,
        "Ha (° ′)": format_angle(r.ha_deg.to_numpy(dtype=float), "signed"),
        "refraction (′)": r.refraction_arcmin,
        "SD (′)": r.sd_arcmin,
        "parallax (′)": r.parallax_arcmin,
        "phase (′)": r.phase_arcmin,
        "total correction (′)": (r.ho_deg - r.hs_deg) * 60.0,
        "Ho (° ′)": format_angle(r.ho_deg.to_numpy(dtype=float), "signed"),
        "Ho (deg)": r.ho_deg,
        "GHA (° ′)": format_angle(r.gha_deg.to_numpy(dtype=float), "angle"),
        "GHA (deg)": r.gha_deg,
        "Dec (° ′)": format_angle(r.dec_deg.to_numpy(dtype=float), "dec"),
        "Dec (deg)": r.dec_deg,
        "DR lat (° ′)": format_angle(r.dr_lat_deg.to_numpy(dtype=float), "lat"),
        "DR lon (° ′)": format_angle(r.dr_lon_deg.to_numpy(dtype=float), "lon"),
        "LHA (° ′)": format_angle(r.lha_deg.to_numpy(dtype=float), "angle"),
        "Hc (° ′)": format_angle(r.hc_deg.to_numpy(dtype=float), "signed"),
        "Hc (deg)": r.hc_deg,
        "Zn (deg)": r.zn_deg,
        "intercept (nm)": r.intercept_nm.abs(),
        "TOWARD/AWAY": r.intercept_direction,
        "residual at fix (′)": residual,
        "DUT1 (s)": r.dut1_s,
        "UT1 source": r.ut1_source,
        "flags": notes,
    })
    return _with_columns_used(table, r, voyage.log.extra_columns)


def _with_columns_used(table: pd.DataFrame, r: pd.DataFrame, extra_columns) -> pd.DataFrame:
    """The Working sheet's columns that only some logs need, inserted beside their kin."""
    # a value given in other units (feet, °F, inHg, mmHg) is shown as given beside the value used
    for column, label, after in (("eye_height_as_given", "height of eye as given", "height of eye (m)"),
                                 ("temperature_as_given", "temperature as given", "temperature (°C)"),
                                 ("pressure_as_given", "pressure as given", "pressure (hPa)")):
        if (r[column] != "").any():
            table.insert(table.columns.get_loc(after), label, r[column].to_numpy())
    for column, label, after in (("waterline_distance_nm", "waterline (nm)", "IC (′)"),
                                 ("measured_dip_arcmin", "measured dip (′)", "IC (′)"),
                                 ("phase_angle_deg", "phase angle (deg)", "phase (′)")):
        if np.isfinite(r[column].to_numpy(dtype=float)).any():
            table.insert(table.columns.get_loc(after), label, r[column].to_numpy(dtype=float))
    rated = r.watch_error_from.astype(str).to_numpy()
    if ((rated != "") & (rated != "given")).any():
        table.insert(table.columns.get_loc("watch error (s, fast +)") + 1, "watch error from", rated)
    carried = r.dr_carried_from.astype(str).to_numpy()
    if (carried != "").any():
        table.insert(table.columns.get_loc("DR lon (° ′)") + 1, "DR", np.where(carried != "", carried, "as given"))
    motion = r["motion_carried_from"].astype(str).to_numpy() if "motion_carried_from" in r.columns else np.zeros(0)
    if (motion != "").any():
        where = table.columns.get_loc("speed (kn)") + 1 if "speed (kn)" in table.columns else len(table.columns)
        table.insert(where, "course and speed", np.where(motion != "", motion, "as given"))
    if not (r.time_given == "zone time").any() and not (r.watch_error_applied_s != 0).any():
        table = table.drop(columns=["watch error (s, fast +)", "zone date", "zone time", "ZD (h)"])
    # the log's own extra columns (a cadet's note, a sight number...) ride along at the end
    for column in extra_columns:
        if column in r.columns and column not in table:
            table[column] = r[column].astype(str).to_numpy()
    return table


def fixes_table(voyage) -> pd.DataFrame:
    labels = row_labels(voyage.reduced) if len(voyage.reduced) else np.zeros(0, dtype=str)
    rows = []
    # every position's text at once (one call per kind, not four per group)
    fixes = [g.fix for g in voyage.groups if g.fix is not None]
    checks = [g.fix.without_outliers for g in voyage.groups if g.fix is not None and g.fix.without_outliers]
    everies = [g.fix.all_sights for g in voyage.groups if g.fix is not None and g.fix.all_sights]
    charts = [g.chart for g in voyage.groups if g.fix is not None and g.chart]
    lat_text = iter(format_angle(np.array([f.lat_deg for f in fixes] + [c.lat_deg for c in checks]
                                          + [e.lat_deg for e in everies] + [c[0] for c in charts], dtype=float),
                                 "lat"))
    lon_text = iter(format_angle(np.array([f.lon_deg for f in fixes] + [c.lon_deg for c in checks]
                                          + [e.lon_deg for e in everies] + [c[1] for c in charts], dtype=float),
                                 "lon"))
    fix_texts = [(next(lat_text), next(lon_text)) for _ in fixes]
    check_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in checks]
    every_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in everies]
    chart_texts = [f"{next(lat_text)} {next(lon_text)}" for _ in charts]
    fix_texts, check_texts, every_texts, chart_texts = (iter(fix_texts), iter(check_texts), iter(every_texts),
                                                        iter(chart_texts))
    for group in voyage.groups:
        fix = group.fix
        if fix is None:
            rows.append({"fix group": group.name, "UTC": "", "note": f"no fix: {group.problem}"})
            continue
        left = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
        outliers = ", ".join(labels[group.rows[i]] for i in np.flatnonzero(fix.outlier & ~left))
        rows.append({
            "fix group": group.name,
            "UTC": utc_cell(fix.utc),
            "kind": fix.kind if fix.is_fix else f"{fix.kind} (not a fix)",
            "latitude (° ′)": (texts := next(fix_texts))[0],
            "longitude (° ′)": texts[1],
            "latitude (deg)": fix.lat_deg,
            "longitude (deg)": fix.lon_deg,
            "sights used": int(fix.used.sum()),
            "sight σ (′)": fix.sigma_arcmin,
            "σ from": fix.sigma_source,
            "standard error (nm)": fix.standard_error_nm,
            "95 % ellipse (full size)": fix.ellipse_text(),
            "95 % semi-major (nm)": fix.ellipse_semi_major_nm,
            "95 % semi-minor (nm)": fix.ellipse_semi_minor_nm,
            "major axis (deg true)": fix.ellipse_orientation_deg if fix.is_fix else None,
            "lines cross at (deg)": fix.spread_deg,
            "ellipse scaled by": f"{fix.quantile} quantile" + (", DR error over the run included"
                                                               if fix.dr_error_included else ""),
            "the ellipse's size": fix.ellipse_note,
            "run between the sights": fix.run_from,
            "blunder check": fix.blunder_note,
            "line bearing (deg true)": fix.line_bearing_deg,
            "line from DR (nm)": fix.line_offset_nm,
            "noon curve latitude (° ′)": (format_angle(fix.noon_curve_latitude_deg, "lat")
                                          if fix.noon_curve_latitude_deg is not None else ""),
            "left out (gross errors, clear blunders)": ", ".join(labels[group.rows[i]] for i in np.flatnonzero(left)),
            "fix from every sight (° ′)": next(every_texts) if fix.all_sights is not None else "",
            "flagged sights": outliers,
            "fix without flagged (° ′)": next(check_texts) if fix.without_outliers is not None else "",
            "from the DR (nm)": fix.dr_distance_nm,
            "chart position (° ′)": next(chart_texts) if group.chart else "",
            "chart distance (nm)": fix.chart_distance_nm,
            "chart bearing (deg true)": fix.chart_bearing_deg,
            "chart inside 95 % ellipse": ("" if fix.chart_inside_ellipse is None
                                          else "yes" if fix.chart_inside_ellipse else "NO"),
            "course made good (deg)": fix.course_made_good_deg,
            "speed made good (kn)": fix.speed_made_good_kn,
            "note": "; ".join(fix.warnings + ([group.chart_note] if group.chart_note else [])),
        })
    return pd.DataFrame(rows)


def rejected_table(voyage) -> pd.DataFrame:
    """Every problem of every row not reduced: the row, the column, the value and why."""
    rejected = voyage.rejected
    out = pd.DataFrame({"row in log": rejected["row"].to_numpy(), "column": rejected["column"].to_numpy(),
                        "value": rejected["value"].to_numpy(), "reason": rejected["reason"].to_numpy()})
    if _several(voyage):
        out.insert(0, "source file", [Path(s).name for s in rejected["source"]])
    return out



def series_table(voyage) -> pd.DataFrame:
    """One row per sight series of two or more sights, in the order the series first appear."""
    reduced = voyage.reduced
    if "series_size" not in reduced.columns:
        return pd.DataFrame()
    multi = reduced[reduced.series_size >= 2]
    if not len(multi):
        return pd.DataFrame()
    labels = pd.Series(row_labels(reduced), index=reduced.index)[multi.index]
    groups = multi.groupby("series", sort=False)
    names = list(groups.groups)
    flagged = labels[multi.series_flag.to_numpy(dtype=bool)].groupby(
        multi.series[multi.series_flag.to_numpy(dtype=bool)], sort=False).agg(", ".join)
    best = multi[multi.series_best.to_numpy(dtype=bool)].groupby("series", sort=False).head(1).set_index("series")
    best_label = labels[multi.series_best.to_numpy(dtype=bool)].groupby(
        multi.series[multi.series_best.to_numpy(dtype=bool)], sort=False).first()
    best = best.reindex(names)
    best_ho = best.series_best_ho_deg.to_numpy(dtype=float)
    observer = groups["observer"].first().reindex(names).fillna("").to_numpy() if "observer" in multi.columns \
        else np.full(len(names), "")
    return pd.DataFrame({
        "series": names, "body": groups.body_name.first().reindex(names).to_numpy(), "observer": observer,
        "sights": groups.size().reindex(names).to_numpy(),
        "offset from the curve (′)": groups.series_offset_arcmin.first().reindex(names).to_numpy(),
        "scatter (′)": groups.series_scatter_arcmin.median().reindex(names).to_numpy(),
        "flagged sights": flagged.reindex(names).fillna("").to_numpy(),
        "best sight": best_label.reindex(names).fillna("").to_numpy(),
        "best sight: UTC": best.sight_utc.dt.strftime("%Y-%m-%d %H:%M:%S").fillna("").to_numpy(),
        "best sight: Ho (° ′)": format_angle(best_ho, "signed"),
        "best sight: Ho (deg)": best_ho,
    })



def plan_table(plan) -> pd.DataFrame:
    """A sight plan as a table: one row per body, in order of bearing."""
    order = np.argsort(plan.zn_deg)
    return pd.DataFrame({
        "body": plan.body[order],
        "Hc to preset (° ′)": [format_angle(v, "signed") for v in plan.hc_deg[order]],
        "Hc (deg)": plan.hc_deg[order],
        "Zn (deg true)": plan.zn_deg[order],
        "magnitude": plan.magnitude[order],
        "from the Moon (deg)": plan.moon_separation_deg[order],
        "recommended": np.where(plan.recommended[order], "yes", ""),
    })

