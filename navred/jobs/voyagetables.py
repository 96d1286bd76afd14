"""The voyage's tables as its workbook shows them: every line of the working, the fixes, the rows rejected,
the sight series and the next sight plan, one row each, with the headers a navigator reads (units in them).

Built from a :class:`navred.jobs.voyage.VoyageResult`; written by :mod:`navred.jobs.voyagebook`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..figures.plotsheet import is_running_fix
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
    no_residual = np.full(len(reduced), "not in a fix group", dtype=object)
    by_test = np.zeros(len(reduced), dtype=bool)
    weight_used = np.full(len(reduced), "not in a fix", dtype=object)
    sigma_taken = np.full(len(reduced), "not in a fix", dtype=object)
    for group in voyage.groups:
        no_residual[group.rows] = f"no fix: {group.problem}" if group.fix is None else "not used by the fix"
        if group.fix is not None:
            residual[group.rows] = group.fix.residual_arcmin
            flagged[group.rows] = group.fix.outlier
            if group.fix.left_out.size == len(group.rows):
                left_out[group.rows] = group.fix.left_out
            if group.fix.blunder_left_out.size == len(group.rows):
                by_test[group.rows] = group.fix.blunder_left_out
            if group.fix.weight.size == len(group.rows):
                used = np.asarray(group.fix.used, dtype=bool)
                weight_used[group.rows] = np.where(used, group.fix.weight.astype(object), "not used by the fix")
                sigma_taken[group.rows] = np.where(used, group.fix.sight_sigma_arcmin.astype(object),
                                                   "not used by the fix")
    ok = reduced.status.to_numpy() != SightStatus.ERROR
    r = reduced[ok].reset_index(drop=True)
    residual, flagged, left_out, no_residual, by_test = residual[ok], flagged[ok], left_out[ok], no_residual[ok], by_test[ok]
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
        "watch error": _watch_error_as_written(r),
        "zone date": r.zone_date_used,
        "zone time": r.zone_time_corrected,
        "ZD (h)": [f"{z:+.0f}" if np.isfinite(z) else "" for z in zone],
        "UTC": utc_second_cells(r),
        "Greenwich date": r.greenwich_date,
        "Hs (° ′)": format_angle(r.hs_deg.to_numpy(dtype=float), "signed"),
        "Hs (deg)": r.hs_deg,
        "horizon": r.horizon,
        "index error (′, on +)": assumed_cells(r.index_error_arcmin, r.assumed, "index error", "′"),
        "height of eye (m)": r.eye_height_m,
        "temperature (°C)": assumed_cells(r.temperature_c, r.assumed, "temperature", " °C"),
        "pressure (hPa)": assumed_cells(r.pressure_hpa, r.assumed, "pressure", " hPa"),
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
        "Zn (deg true)": r.zn_deg,
        "intercept (nm)": r.intercept_nm.abs(),
        "TOWARD/AWAY": r.intercept_direction,
        "residual at fix (′)": np.where(np.isfinite(residual), residual.astype(object), no_residual),
        "DUT1 (s)": r.dut1_s,
        "UT1 source": r.ut1_source,
        "flags": [n or "none" for n in notes],
    })
    table = _with_columns_used(table, r, voyage.log.extra_columns, (weight_used[ok], sigma_taken[ok]))
    if len(voyage.vessels) > 1:  # a log of several ships: each sight names its own
        table.insert(table.columns.get_loc("fix group"), "vessel", r["vessel"].astype(str).to_numpy())
    return _with_latitudes(table, r)


def utc_second_cells(r: pd.DataFrame) -> list:
    """Each sight's UTC as a date-time cell rounded to the second, as the sheet shows it (a time cut to the second
    shows a sight up to a second early); a leap second as the text '2016-12-31 23:59:60', which no date cell
    holds."""
    import datetime as dt

    from ..timescales import utc_jd_to_seconds_text

    texts = utc_jd_to_seconds_text(r.utc_jd1.to_numpy(dtype=float), r.utc_jd2.to_numpy(dtype=float)) \
        if len(r) else np.zeros(0, dtype=object)
    return [None if not t else t if t.endswith(":60") else dt.datetime.fromisoformat(t) for t in texts.tolist()]


def _watch_error_as_written(r: pd.DataFrame) -> list[str]:
    """The watch error as the log wrote it ('7 s slow'), or as a rating predicted it ('3.6 s fast'); 'none given'
    where the time was taken as read."""
    from ..timework import watch_error_words

    given = r["watch_error_as_given"].astype(str) if "watch_error_as_given" in r.columns else pd.Series([""] * len(r))
    applied = r.watch_error_applied_s.to_numpy(dtype=float)
    return [g if g else (watch_error_words(a) if a else "none given")
            for g, a in zip(given.tolist(), applied.tolist())]


def _with_latitudes(table: pd.DataFrame, r: pd.DataFrame) -> pd.DataFrame:
    """The latitude a sight on the meridian (or of Polaris) gives, beside its Ho, where the log has one: the
    noon latitude is the first figure a master looks for in the day's work (navred fix prints the same)."""
    from .fixing import latitude_checks
    from .latitudechecks import longitude_words

    checks = latitude_checks(r)
    if not len(checks):
        return table
    labels = row_labels(r)
    texts = np.full(len(r), "not on the meridian", dtype=object)
    where = {label: k for k, label in enumerate(labels.tolist())}
    for row in checks.itertuples():
        method = {"meridian": "meridian altitude"}.get(str(row.method), str(row.method))
        texts[where[row.row]] = f"{format_angle(float(row.lat_deg), 'lat')} ({method})" + (
            (f"; {longitude_words(row.lat_per_10_lon_arcmin, row.dr_lon_deg)}" if row.method == "ex-meridian" else "")
            + (f" {row.flag}" if getattr(row, "flag", "") else ""))
    table.insert(table.columns.get_loc("Hc (° ′)"), "latitude (° ′)", texts)
    return table


def assumed_cells(values: pd.Series, assumed: pd.Series, name: str, unit: str) -> np.ndarray:
    """A column of the working whose default a sight took where the log left it blank: the number where the
    log gave it, the words '10 °C assumed' where the default was taken (never shown as observed)."""
    taken = assumed.astype(str).str.contains(f"{name} ", regex=False).to_numpy()
    numbers = values.to_numpy(dtype=float)
    if not taken.any():
        return numbers
    return np.array([f"{v:g}{unit} assumed" if t else v for v, t in zip(numbers.tolist(), taken.tolist())],
                    dtype=object)


def _with_columns_used(table: pd.DataFrame, r: pd.DataFrame, extra_columns, weighing=None) -> pd.DataFrame:
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
    sigma = r["sigma_arcmin"].to_numpy(dtype=float) if "sigma_arcmin" in r.columns else np.zeros(0)
    if np.isfinite(sigma).any():  # the log weights some sights: each one's σ, as the fix weighs it
        table.insert(table.columns.get_loc("residual at fix (′)"), "sight σ given (′)",
                     np.where(np.isfinite(sigma), sigma.astype(object), "not given: as any sight"))
        if weighing is not None:  # the weight (1′/σ)² and the σ the fix takes each sight to have
            table.insert(table.columns.get_loc("residual at fix (′)"), "weight in the fix", weighing[0])
            table.insert(table.columns.get_loc("residual at fix (′)"), "σ the fix takes (′)", weighing[1])
    limb = r["limb"].astype(str).to_numpy() if "limb" in r.columns else np.zeros(0, dtype=str)
    if (limb != "").any():  # the limb worked, whose semi-diameter the SD column applies
        table.insert(table.columns.get_loc("body") + 1, "limb", np.where(limb != "", limb, "none (a point of light)"))
    rated = r.watch_error_from.astype(str).to_numpy()
    if ((rated != "") & (rated != "given")).any():
        table.insert(table.columns.get_loc("watch error") + 1, "watch error from", rated)
    carried = r.dr_carried_from.astype(str).to_numpy()
    if (carried != "").any():
        table.insert(table.columns.get_loc("DR lon (° ′)") + 1, "DR", np.where(carried != "", carried, "as given"))
    motion = r["motion_carried_from"].astype(str).to_numpy() if "motion_carried_from" in r.columns else np.zeros(0)
    if (motion != "").any():
        where = table.columns.get_loc("speed (kn)") + 1 if "speed (kn)" in table.columns else len(table.columns)
        table.insert(where, "course and speed", np.where(motion != "", motion, "as given"))
    if not (r.time_given == "zone time").any() and not (r.watch_error_applied_s != 0).any():
        table = table.drop(columns=["watch error", "zone date", "zone time", "ZD (h)"])
    # the log's own extra columns (a cadet's note, a sight number...) ride along at the end
    for column in extra_columns:
        if column in r.columns and column not in table:
            table[column] = r[column].astype(str).to_numpy()
    return table


def hand_working_table(voyage) -> pd.DataFrame:
    """The Working sheet's second view: each reduced sight worked as a cadet works it by hand from an assumed
    position (:func:`navred.handworking.hand_working`), in the order of the sight book's lines and their
    rounding: the time, the almanac (GHA at the whole hour, of Aries for a star, increment, v, SHA, Dec at
    the whole hour, d, HP), the altitude (Hs, IC, dip, Ha, the main correction, Ho), the assumed position and
    LHA, the tables (tabulated Hc, d and Z), Hc, Zn and the intercept from the AP. The same sights, Ho and
    almanac as the Working sheet."""
    from ..handworking import hand_working
    from ..marking_judge import tenth

    reduced = voyage.reduced
    celestial = (reduced["mark"].fillna("").astype(str) == "").to_numpy() if "mark" in reduced.columns \
        else np.ones(len(reduced), dtype=bool)  # a mark's bearing or range is no sight worked from an almanac
    r = reduced[(reduced.status.to_numpy() != SightStatus.ERROR) & celestial].reset_index(drop=True)
    if not len(r):
        return pd.DataFrame()
    # the altitude as a sight book writes it (common practice): each line to 0.1′, Ha the sum of Hs, IC and dip
    # as written, Ho the sum of Ha and the main correction as written; the main correction (refraction, SD,
    # parallax and phase together, as the almanac's tables give them) is the reduction's own, rounded. The
    # exact values are the Working sheet's; the hand working goes on from the Ho written here.
    ic = tenth(r.ic_arcmin.to_numpy(dtype=float)) + 0.0  # (+ 0.0: never minus nought)
    dip = tenth(r.dip_arcmin.to_numpy(dtype=float) + r.horizon_arcmin.to_numpy(dtype=float))
    ha = (tenth(r.hs_deg.to_numpy(dtype=float) * 60.0) + ic + dip) / 60.0
    main = tenth((r.ho_deg.to_numpy(dtype=float) - r.ha_deg.to_numpy(dtype=float)) * 60.0) + 0.0
    w = hand_working(r.sight_utc.dt.tz_convert(None).to_numpy(dtype="datetime64[ns]"), r.body_name.to_numpy(),
                     ha + main / 60.0, r.dr_lat_deg.to_numpy(dtype=float),
                     r.dr_lon_deg.to_numpy(dtype=float), r.dut1_s.to_numpy(dtype=float))
    star = w.kind == "star"

    def angle(values, kind="angle"):
        return format_angle(np.asarray(values, dtype=float), kind)

    # a cell the body's working has no line for says so in two words: the almanac prints no v for the Sun or a
    # star, no SHA but a star's, no d or HP for a star (common practice)
    none_for = np.array([_NONE_FOR[k] for k in w.kind.tolist()], dtype=object)
    return pd.DataFrame({
        **_row_columns(voyage, r),
        "fix group": r["fix_group"].astype(str),
        "body": r.body_name,
        "UTC": utc_second_cells(r),
        "GHA at the whole hour (Aries for a star) (° ′)": angle(w.gha_hour_deg),
        "GHA increment (° ′)": angle(w.increment_arcmin / 60.0, "signed"),
        "v (′)": np.where(np.isfinite(w.v_arcmin), w.v_arcmin.astype(object), none_for),
        "v correction (′)": np.where(np.isfinite(w.v_correction_arcmin), w.v_correction_arcmin.astype(object),
                                     none_for),
        "SHA (° ′)": np.where(star, angle(w.sha_deg), none_for),
        "GHA (° ′)": angle(w.gha_deg),
        "Dec at the whole hour (° ′)": np.where(star, none_for, angle(w.dec_hour_deg, "dec")),
        "d (′, Dec growing north +)": np.where(star, none_for, w.d_arcmin.astype(object)),
        "d correction (′)": np.where(star, none_for, w.d_correction_arcmin.astype(object)),
        "Dec (° ′)": angle(w.dec_deg, "dec"),
        "HP (′)": np.where(star, none_for, w.hp_arcmin.astype(object)),
        "Hs (° ′)": angle(r.hs_deg, "signed"),
        "IC (′)": ic,
        "dip (′)": dip,
        "Ha (° ′)": angle(ha, "signed"),
        "main correction (′)": main,
        "Ho (° ′)": angle(w.ho_deg, "signed"),
        "AP lat (° ′)": angle(w.ap_lat_deg, "lat"),
        "AP lon (° ′)": angle(w.ap_lon_deg, "lon"),
        "LHA (°)": [f"{v:03.0f}°" for v in w.lha_deg.tolist()],
        "tables' Dec (°)": [f"{abs(v):.0f}° {'N' if v >= 0 else 'S'}" for v in w.tab_dec_deg.tolist()],
        "tabulated Hc (° ′)": angle(w.tab_hc_deg, "signed"),
        "tables' d (′)": w.tab_d_arcmin,
        "tabulated Z (deg)": w.tab_z_deg,
        "d correction of Hc (′)": w.hc_correction_arcmin,
        "Hc (° ′)": angle(w.hc_deg, "signed"),
        "Z interpolated (deg)": w.z_deg,
        "Zn (deg true)": w.zn_deg,
        "intercept (nm)": np.abs(w.intercept_nm),
        "TOWARD/AWAY": np.where(w.intercept_nm >= 0, "TOWARD", "AWAY"),
    })


#: A Working by hand cell with no line for the body's kind: the reason in two words.
_NONE_FOR = {"sun": "none: Sun", "moon": "none: Moon", "planet": "none: planet", "star": "none: star"}


#: Why a cell of the Fixes sheet is blank, by column: a cell is never left blank without a word.
FIXES_BLANK = {
    "major axis (deg true)": "a line: no ellipse", "line bearing (deg true)": "a fix: not a line",
    "line from DR (nm)": "a fix: not a line", "the ellipse's size": "enough sights to judge their error by",
    "left out (gross errors, clear blunders)": "none", "rows not used (why)": "none: every row of the group used",
    "flagged sights": "none", "fix from every sight (° ′)": "nothing left out",
    "fix without flagged (° ′)": "nothing flagged", "chart position (° ′)": "none given",
    "chart distance (nm)": "no chart position", "chart bearing (deg true)": "no chart position",
    "chart inside 95 % ellipse": "no chart position", "noon curve latitude (° ′)": "no noon series",
    "course made good (deg)": "not solved (navred workbook --solve-motion)",
    "speed made good (kn)": "not solved (navred workbook --solve-motion)", "blunder check": "none",
    "angle of cut (deg)": "one line", "note": "none", "trusted to plot": "no fix",
}
#: Columns of the Fixes sheet that belong to a feature of some logs only: left out when no row has one.
FIXES_OPTIONAL = ("line bearing (deg true)", "line from DR (nm)", "noon curve latitude (° ′)",
                  "fix from every sight (° ′)", "fix without flagged (° ′)", "chart position (° ′)",
                  "chart distance (nm)", "chart bearing (deg true)", "chart inside 95 % ellipse",
                  "course made good (deg)", "speed made good (kn)")


def _blank(value) -> bool:
    return value is None or (isinstance(value, float) and not np.isfinite(value)) or value == ""


def with_reasons(table: pd.DataFrame, reasons: dict[str, str], optional=()) -> pd.DataFrame:
    """A sheet's table with every blank cell of a column in ``reasons`` saying why it is blank, and the
    ``optional`` columns that are blank in every row left out."""
    out = table.copy()
    for column in optional:
        if column in out and all(_blank(v) for v in out[column].tolist()):
            out = out.drop(columns=[column])
    for column, reason in reasons.items():
        if column in out:
            values = out[column].astype(object).tolist()
            out[column] = pd.Series([reason if _blank(v) else v for v in values], index=out.index, dtype=object)
    return out


def plot_verdict(fix) -> str:
    """The Fixes sheet's 'trusted to plot' cell: 'yes', or 'NO (why, in short): see the note' for a position
    marked CANNOT BE TRUSTED (:attr:`navred.FixResult.trusted`, the one verdict every table reads)."""
    if fix.trusted:
        return "yes"
    return f"NO ({fix.untrusted_cause or 'untrusted'}): see the note"


def rows_not_used(voyage, group) -> list[str]:
    """Each row of a fix group its fix did not use, named by its row and body, with why: left out of the fix (a
    gross error, or by the blunder test, with how far its line lies from the fix) or refused (not reduced: the
    reason the Rejected sheet gives). One list for the Fixes sheet and the group's plotting sheet."""
    reduced = voyage.reduced
    if not len(group.rows):
        return []
    labels = row_labels(reduced)[group.rows]
    bodies = reduced["body_name"].astype(str).to_numpy()[group.rows]
    status = reduced["status"].to_numpy()[group.rows]
    messages = reduced["message"].astype(str).to_numpy()[group.rows]
    fix, n = group.fix, len(group.rows)

    def per_row(values):
        return np.asarray(values, dtype=bool) if np.size(values) == n else np.zeros(n, dtype=bool)

    left = per_row(fix.left_out) if fix is not None else np.zeros(n, dtype=bool)
    by_test = per_row(fix.blunder_left_out) if fix is not None else np.zeros(n, dtype=bool)
    out = []
    for k in range(n):
        body = f" {bodies[k]}" if bodies[k] and bodies[k] != "nan" else ""
        if status[k] == SightStatus.ERROR:
            out.append(f"{labels[k]}{body}: refused, not reduced ({messages[k]})")
        elif left[k]:
            off = abs(float(fix.residual_arcmin[k])) if np.size(fix.residual_arcmin) == n else float("nan")
            how = f"{off:.0f}′ off the fix, " if np.isfinite(off) else ""
            out.append(f"{labels[k]}{body}: left out of the fix ({how}"
                       f"{'by the blunder test' if by_test[k] else 'a gross error'})")
    return out


def _no_fix_row(voyage, group) -> dict:
    """A fix group with no fix: its time (its last sight's) and, in the kind, why there is none."""
    utc = voyage.reduced.sight_utc.iloc[group.rows].max() if len(group.rows) else None
    return {"fix group": group.name, "UTC": utc_cell(utc.tz_convert(None).to_datetime64()) if utc is not None else None,
            "kind": f"no fix: {group.problem}", "sights used": 0,
            "rows not used (why)": "; ".join(rows_not_used(voyage, group))}


def fixes_table(voyage) -> pd.DataFrame:
    """One row per fix group as the Fixes sheet shows it: positions in degrees and minutes beside decimal
    degrees, the ellipse, the angle of cut (0°-90°), the checks; a blank cell says why it is blank."""
    labels = row_labels(voyage.reduced) if len(voyage.reduced) else np.zeros(0, dtype=str)
    sight_utc = (voyage.reduced["sight_utc"].dt.tz_convert(None).to_numpy(dtype="datetime64[ns]")
                 if len(voyage.reduced) else np.zeros(0, dtype="datetime64[ns]"))
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
            rows.append(_no_fix_row(voyage, group))
            continue
        left = fix.left_out if fix.left_out.size == len(group.rows) else np.zeros(len(group.rows), dtype=bool)
        outliers = ", ".join(labels[group.rows[i]] for i in np.flatnonzero(fix.outlier & ~left))
        rows.append({
            "fix group": group.name,
            "UTC": utc_cell(fix.utc),
            "kind": (("running fix" if is_running_fix(fix, sight_utc[group.rows]) else fix.kind) if fix.is_fix
                     else f"{fix.kind} (not a fix)"),
            "trusted to plot": plot_verdict(fix),
            "latitude (° ′)": (texts := next(fix_texts))[0],
            "longitude (° ′)": texts[1],
            "latitude (deg)": fix.lat_deg,
            "longitude (deg)": fix.lon_deg,
            "sights used": int(fix.used.sum()),
            "sight σ (′)": fix.sigma_arcmin,
            "σ from": fix.sigma_source,
            "standard error, 1σ radial (drms, nm)": fix.standard_error_nm,
            "95 % ellipse (full size)": fix.ellipse_text(),
            "95 % semi-major (nm)": fix.ellipse_semi_major_nm if fix.is_fix else None,
            "95 % semi-minor (nm)": fix.ellipse_semi_minor_nm,
            "major axis (deg true)": fix.ellipse_orientation_deg if fix.is_fix else None,
            "angle of cut (deg)": fix.angle_of_cut_deg,
            "ellipse scaled by": f"{fix.quantile} quantile" + (", DR error over the run included"
                                                               if fix.dr_error_included else ""),
            "the ellipse's size": fix.ellipse_note,
            "run between the sights": fix.run_text or fix.run_from,
            "blunder check": fix.blunder_note,
            "line bearing (deg true)": fix.line_bearing_deg,
            "line from DR (nm)": fix.line_offset_nm,
            "noon curve latitude (° ′)": (format_angle(fix.noon_curve_latitude_deg, "lat")
                                          if fix.noon_curve_latitude_deg is not None else ""),
            "left out (gross errors, clear blunders)": ", ".join(labels[group.rows[i]] for i in np.flatnonzero(left)),
            "rows not used (why)": "; ".join(rows_not_used(voyage, group)),
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
    # in the order of the fixes' times, as a master reads a fix list (two logs' groups came file by file); a
    # group keeps its name, and its sights their row names; stable, so groups at one time keep the log's order
    rows.sort(key=lambda row: (row["UTC"] is None, row["UTC"] or 0))
    table = pd.DataFrame(rows)
    if table.empty:
        return table
    if len(voyage.vessels) > 1:  # a log of several ships: each fix names its own
        table.insert(0, "vessel", [voyage.vessel_of(g.name) for g in voyage.groups])
    no_fix = table["kind"].astype(str).str.startswith("no fix").to_numpy()
    reasons = {column: reason for column, reason in FIXES_BLANK.items()}
    shown = with_reasons(table, reasons, FIXES_OPTIONAL)
    # a group with no fix: the kind says why; its other cells say so too
    if no_fix.any():
        for column in shown.columns:
            if column not in ("vessel", "fix group", "UTC", "kind", "sights used", "rows not used (why)"):
                shown[column] = shown[column].astype(object).where(~no_fix, "no fix")
    return shown


def rejected_table(voyage) -> pd.DataFrame:
    """Every problem of every row not reduced: the row, the column, the value and why."""
    rejected = voyage.rejected
    out = pd.DataFrame({"row in log": rejected["row"].to_numpy(), "column": rejected["column"].to_numpy(),
                        "value": [v if str(v).strip() else "(blank)" for v in rejected["value"].tolist()],
                        "reason": rejected["reason"].to_numpy()})
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



def plan_table(plan, presets=None) -> pd.DataFrame:
    """A sight plan as a table: one row per body, in order of bearing, with the Hs to preset of ``presets``
    (:func:`navred.presets.sight_presets` for the plan's bodies, instant and DR: the numbers ``navred plan``
    prints); None where the sextant's horizon was not the sea's (the cell says so)."""
    order = np.argsort(plan.zn_deg, kind="stable")
    if presets is None:
        hs, words, limb = np.full(order.size, np.nan), np.full(order.size, "no sea horizon", dtype=object), \
            np.full(order.size, "", dtype=object)
    else:
        hs = np.asarray(presets.hs_deg, dtype=float)[order]
        words = np.array([format_angle(v, "signed") if np.isfinite(v) else "below the horizon" for v in hs],
                         dtype=object)
        limb = np.array([{"lower": "lower", "upper": "upper"}.get(str(v), "") for v in presets.limb[order]],
                        dtype=object)
    return pd.DataFrame({
        "body": plan.body[order],
        "Hs to preset (° ′)": words,
        "Hs to preset (deg)": hs,
        "limb": np.where(limb == "", "centre (a star or planet)", limb),
        "Hc (° ′)": [format_angle(v, "signed") for v in plan.hc_deg[order]],
        "Hc (deg)": plan.hc_deg[order],
        "Zn (deg true)": plan.zn_deg[order],
        "magnitude": np.round(plan.magnitude[order], 1),  # as a star list prints it
        "from the Moon (deg)": np.round(plan.moon_separation_deg[order], 0),
        "recommended": np.where(plan.recommended[order], "yes", "no"),
    })
