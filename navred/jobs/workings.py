"""Marking hand workings: the job behind `navred mark` (read, mark, tabulate), in words a cadet reads.

Edge code. The workings are read by :mod:`navred.io.workings` (a table, or sight-book pages), marked
by :func:`navred.marking.mark` (the core), and put into tables: one row per working with its
verdict, its first wrong line and the cause, what should have been noticed and what the slip costs
in miles; one row per line; the class per cadet and per cause; each fix group's fix from the
cadet's own lines beside the fix they plotted (and navred's fix of the same sights unless in exam
mode); each cadet's progress over the voyage, and, given the ship's track, their personal error
(as `navred training` finds it). Lines are named as a sight book names them, values written in the
cadet's own form, sources by their file's name. The writers are :mod:`navred.io.markingbook` (the
workbook and the template) and :mod:`navred.io.markingpages` (the printed sight books).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..angles import format_angle
from ..errors import api_boundary
from ..io.markingbook import write_marking_workbook
from ..io.markingbook import write_template as write_template_workbook
from ..io.markingpages import marking_document, write_blank_sight_book, write_marking_pdf
from ..io.markingwords import (
    NOTICE_WORKING,
    RIGHT_WORKING,
    WRONG_WORKING,
    cost_text,
    describe,
    difference_text,
    value_text,
    z_names,
)
from ..io.workings import WORKED_FORMS, Workings, parse_worked, read_workings, source_name
from ..marking import (
    LINE_NAMES,
    LINES,
    METHODS,
    NOT_GIVEN,
    TOLERANCES,
    UNITS,
    WRONG,
    Marks,
    SightsToMark,
    catalogue_cause,
    mark,
)
from ..reckoning import zone_description_h
from ..status import SightStatus
from .sights import reduce_sights

ROW_COLUMNS = ["source", "row", "cadet", "body", "utc", "date", "method", "way", "verdict", "first_wrong_line",
               "first_wrong_line_name", "cause", "given", "expected", "difference", "unit", "cost_nm", "cost_deg", "noticed",
               "remarks", "lines_given", "lines_wrong"]
LINE_COLUMNS = ["source", "row", "cadet", "line", "line_name", "sheet_row", "given", "expected",
                "expected_from_tables", "difference", "unit", "tolerance", "verdict", "cause"]


@dataclass
class MarkingReport:
    """A class's workings marked: per working, per line, per cadet, per mistake, per fix and per day."""

    workings: Workings
    marks: Marks | None
    rows: pd.DataFrame  # one row per working that was marked (ROW_COLUMNS)
    lines: pd.DataFrame  # one row per (working, line given) (LINE_COLUMNS)
    by_cause: pd.DataFrame
    by_cadet: pd.DataFrame
    fixes: pd.DataFrame
    rejected: pd.DataFrame
    exam: bool = False
    provenance: dict[str, str] = field(default_factory=dict)
    progress: pd.DataFrame = field(default_factory=pd.DataFrame)  # per cadet and day
    personal: pd.DataFrame = field(default_factory=pd.DataFrame)  # per cadet, against the ship's track

    @property
    def share_right(self) -> float:
        return float((self.rows.verdict == RIGHT_WORKING).mean()) if len(self.rows) else float("nan")

    def summary(self) -> str:
        cadets = self.rows.cadet.nunique() if len(self.rows) else 0
        noticed = int((self.rows.verdict == NOTICE_WORKING).sum()) if len(self.rows) else 0
        return (f"{len(self.rows)} workings of {cadets} cadet{'s' if cadets != 1 else ''} marked: "
                f"{int((self.rows.verdict == RIGHT_WORKING).sum())} with no mistake"
                + (f", {noticed} with the arithmetic right but something that should have been noticed" if noticed
                   else "")
                + (f"; {len(self.rejected)} rows not read (see the list)" if len(self.rejected) else ""))


# --- marking ------------------------------------------------------------------------------------------

def _sights(table: pd.DataFrame, workings: Workings, rows: np.ndarray) -> SightsToMark:
    def floats(name, default=np.nan):
        return table[name].to_numpy(dtype=float) if name in table else np.full(len(table), default)

    feet = np.array([_feet(v) for v in table["eye_height_as_given"].astype(str).tolist()]) \
        if "eye_height_as_given" in table else np.full(len(table), np.nan)
    return SightsToMark(
        body=table["body_name"].to_numpy(dtype=object), limb=table["limb"].to_numpy(dtype=object),
        horizon=table["horizon"].to_numpy(dtype=object), hs_deg=floats("hs_deg"),
        index_error_arcmin=np.nan_to_num(floats("index_error_arcmin")),
        eye_height_m=np.nan_to_num(floats("eye_height_m")), eye_height_ft=feet,
        temperature_c=floats("temperature_c", 10.0), pressure_hpa=floats("pressure_hpa", 1010.0),
        utc=table["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]"),
        zone_description_h=floats("zone_description_used_h"), watch_error_s=floats("watch_error_applied_s", 0.0),
        dr_lat_deg=floats("dr_lat_deg"), dr_lon_deg=floats("dr_lon_deg"), dut1_s=floats("dut1_given_s"),
        method=workings.method[rows], compass_bearing_deg=workings.compass_bearing_deg[rows],
        variation_deg=workings.variation_deg[rows],
        fix_group=_rounds(table, workings.cadet[rows]),
        fix_group_given=table["fix_group_given"].to_numpy(dtype=bool) if "fix_group_given" in table else None)


def _rounds(table: pd.DataFrame, cadets: np.ndarray) -> np.ndarray | None:
    """Each sight's round for the plotted fix: its fix group, within its cadet (each plots their own lines). A
    group the cadet did not name (sights close together, grouped by the log's reader) is a round only where
    the cadet plotted a fix from it (the core decides, :class:`navred.marking_checks.GroupFix`)."""
    if "fix_group" not in table:
        return None
    labels = table["fix_group"].astype(str).to_numpy(dtype=object)
    return np.where(labels != "", np.asarray(cadets, dtype=object) + "\x00" + labels, "")


def ship_dates(table: pd.DataFrame) -> np.ndarray:
    """Each sight's date at the ship (the zone date): the date written with a zone time, else the UTC date
    moved by the DR longitude's nautical zone (:func:`navred.reckoning.zone_description_h`, common practice), as YYYY-MM-DD."""
    utc = table["sight_utc"].dt.tz_convert(None)
    zone_h = zone_description_h(table["dr_lon_deg"].to_numpy(dtype=float)) if "dr_lon_deg" in table else 0.0
    if "zone_description_used_h" in table:
        given = table["zone_description_used_h"].to_numpy(dtype=float)
        zone_h = np.where(np.isfinite(given), given, zone_h)
    local = utc - pd.to_timedelta(np.nan_to_num(zone_h), unit="h")
    return local.dt.strftime("%Y-%m-%d").fillna("").to_numpy(dtype=object)


def _feet(text: str) -> float:
    """The number of a height of eye given in feet ('9.2 feet'), else NaN."""
    found = re.match(r"^\s*([\d.]+)\s*(feet|foot|ft)\b", text, re.IGNORECASE)
    return float(found.group(1)) if found else np.nan


@api_boundary
def mark_workings(source: object, *, dates: str | None = None, exam: bool = False,
                  track: object | None = None, rates: object | None = None) -> MarkingReport:
    """Read and mark hand workings: every line judged, the first wrong one named with its cause.

    ``exam``: leave out navred's fix and any reference position (a marking sheet handed back in an
    examination shows the cadet's own lines and verdicts only). ``track``: the ship's reference track
    (a file, as `navred training` reads it): each cadet's personal error against it. ``rates``: a fitted
    rating log (:func:`navred.io.timesignals.read_rating_log`) for workings timed by a rated timepiece."""
    workings = read_workings(source, dates=dates, rates=rates)
    table = workings.log.table
    bad_method = np.array([str(m).startswith("?") for m in workings.method.tolist()], dtype=bool)
    ok = (table["read_problem"] == "").to_numpy() & ~bad_method
    rejected = workings.log.rejected.copy()
    if bad_method.any():
        extra = pd.DataFrame({"source": table["source"][bad_method], "row": table["row"][bad_method],
                              "column": "method", "value": [m[1:] for m in workings.method[bad_method].tolist()],
                              "reason": f"no such method; the methods are {', '.join(METHODS)}"})
        rejected = pd.concat([rejected, extra], ignore_index=True)
    rows = np.flatnonzero(ok)
    marked = table.iloc[rows].reset_index(drop=True)
    given = {line: values[rows] for line, values in workings.given.items()}
    marks = mark(_sights(marked, workings, rows), given) if len(marked) else None
    if marks is not None:  # a line that could not be read is wrong, for that reason
        position = {(s, r): i for i, (s, r) in enumerate(zip(marked["source"], marked["row"]))}
        for item in workings.unreadable.itertuples():
            i = position.get((item.source, item.row))
            if i is not None and item.line in LINES:
                k = LINES.index(item.line)
                marks.verdict[i, k], marks.cause[i, k] = WRONG, f"cannot be read: {item.reason}"
        marks.refresh_first()
    cadets = workings.cadet[rows]
    row_table, line_table = _tables(marked, marks, workings, rows, cadets)
    report = MarkingReport(workings, marks, row_table, line_table, _by_cause(row_table), _by_cadet(row_table),
                           _fixes(marked, marks, cadets, exam), rejected, exam)
    report.progress = _progress(row_table)
    if track is not None and len(marked):
        report.personal, errors = _personal(marked, marks, cadets, track)
        report.rows["error_vs_track_arcmin"] = errors
    report.provenance = {"workings": ", ".join(source_name(s) for s in workings.log.sources),
                         "read": workings.log.summary(), "marked": report.summary(),
                         "exam mode": "yes: navred's fix and reference positions are left out" if exam else "no"}
    return report


def _tables(marked: pd.DataFrame, marks: Marks | None, workings: Workings, rows: np.ndarray, cadets):
    if marks is None:
        return pd.DataFrame(columns=ROW_COLUMNS), pd.DataFrame(columns=LINE_COLUMNS)
    n = len(marked)
    first = marks.first_wrong_line
    sources = np.array([source_name(s) for s in marked["source"].tolist()], dtype=object)
    utc_text = marked["sight_utc"].dt.strftime("%Y-%m-%d %H:%M:%S").fillna("").to_numpy(dtype=object)
    given_text = {line: workings.text[line][rows] if line in workings.text else np.full(n, "", dtype=object)
                  for line in LINES}
    records, line_records = [], []
    # a named line (a zenith distance, a latitude, an amplitude) the right size under the wrong name is "out" by
    # its name, not by twice its size: its difference is left out (its cause names it)
    named_lines = [k for k, name in enumerate(LINES) if WORKED_FORMS[name][0] in ("dec", "lat", "amplitude")]
    bearing = LINES.index("bearing_worked")  # a bearing is N or S: out by its name, no number
    marks.difference[marks.verdict[:, bearing] == WRONG, bearing] = np.nan
    for k in named_lines:
        name = LINES[k]
        given = marks.given[name]
        expected = marks.expected[name]
        scale = 1.0 if WORKED_FORMS[name][0] == "amplitude" else 60.0
        reversed_name = (marks.verdict[:, k] == WRONG) & (np.abs((given + expected) * scale) <= TOLERANCES[name]) & \
            (np.abs(given * scale) > TOLERANCES[name])
        marks.difference[reversed_name, k] = np.nan
    verdicts = np.where(first != "", WRONG_WORKING, np.where(marks.noticed != "", NOTICE_WORKING, RIGHT_WORKING))
    remarks = workings.remarks[rows] if len(workings.remarks) else np.full(n, "", dtype=object)
    dates = ship_dates(marked)
    # Z is named from the elevated pole (the latitude worked from) toward the body's side (the LHA worked)
    lat_worked = np.where(np.isfinite(marks.given["ap_lat"]), marks.given["ap_lat"], marks.expected["ap_lat"])
    lat_worked = np.where(np.isfinite(lat_worked), lat_worked, marked["dr_lat_deg"].to_numpy(dtype=float))
    lha_worked = np.where(np.isfinite(marks.given["lha_worked"]), marks.given["lha_worked"],
                          marks.expected["lha_worked"])
    names = [z_names(a, b) for a, b in zip(lat_worked.tolist(), lha_worked.tolist())]
    for i in range(n):
        line = first[i]
        k = LINES.index(line) if line else -1
        records.append({
            "source": sources[i], "row": int(marked["row"].iloc[i]), "cadet": cadets[i],
            "body": marked["body_name"].iloc[i], "utc": utc_text[i], "date": dates[i], "method": marks.method[i],
            "way": marks.way[i],
            "verdict": verdicts[i], "first_wrong_line": line, "first_wrong_line_name": LINE_NAMES.get(line, ""),
            "cause": marks.first_cause[i], "given": given_text[line][i] if line else "",
            "expected": value_text(line, marks.expected[line][i], given_text[line][i], names[i]) if line else "",
            "difference": round(float(marks.difference[i, k]), 2) if line else np.nan,
            "unit": UNITS[line] if line else "",
            "cost_nm": round(float(marks.cost_nm[i]), 1) if line else np.nan,
            "cost_deg": round(float(marks.cost_deg[i]), 1) if line else np.nan,
            "noticed": marks.noticed[i], "remarks": remarks[i],
            "lines_given": int((marks.verdict[i] != NOT_GIVEN).sum()),
            "lines_wrong": int((marks.verdict[i] == WRONG).sum())})
        key = (marked["source"].iloc[i], int(marked["row"].iloc[i]))
        sheet_rows = workings.line_rows.get(key, {})
        for k_, name in enumerate(LINES):
            if marks.verdict[i, k_] == NOT_GIVEN:
                continue
            line_records.append({
                "source": sources[i], "row": key[1], "cadet": cadets[i], "line": name, "line_name": LINE_NAMES[name],
                "sheet_row": sheet_rows.get(name, np.nan), "given": given_text[name][i],
                "expected": value_text(name, marks.expected[name][i], given_text[name][i], names[i]),
                "expected_from_tables": "" if name == "utc_worked" else
                value_text(name, marks.tabular[name][i], given_text[name][i], names[i]),
                "difference": round(float(marks.difference[i, k_]), 2), "unit": UNITS[name],
                "tolerance": TOLERANCES[name],
                "verdict": marks.verdict[i, k_], "cause": marks.cause[i, k_]})
    return pd.DataFrame(records, columns=ROW_COLUMNS), pd.DataFrame(line_records, columns=LINE_COLUMNS)


def commonest(causes: pd.Series) -> str:
    """The commonest cause, or the tied ones named as a tie; "" for none."""
    if not len(causes):
        return ""
    counts = causes.value_counts()
    top = counts[counts == counts.iloc[0]]
    if len(top) == 1:
        return str(top.index[0])
    return "; ".join(sorted(map(str, top.index))) + f" (tied, {int(counts.iloc[0])} each)"


#: How a wrong line that fits no catalogued mistake is counted among the causes.
UNCATALOGUED = "not one of the usual mistakes"


def _named_causes(wrong: pd.DataFrame) -> pd.Series:
    """Each wrong working's cause as the catalogue words it (the line a slip of the plot was made on left out)."""
    return wrong.cause.map(lambda c: catalogue_cause(c) if c else f"({UNCATALOGUED})")


def _by_cause(rows: pd.DataFrame) -> pd.DataFrame:
    wrong = rows[rows.verdict == WRONG_WORKING]
    table = (pd.DataFrame({"cause": _named_causes(wrong), "line_name": wrong.first_wrong_line_name,
                           "cadet": wrong.cadet})
             .groupby(["cause", "line_name"], sort=False).agg(workings=("cadet", "size"),
                                                              cadets=("cadet", lambda c: ", ".join(sorted(set(c)))))
             .reset_index().sort_values("workings", ascending=False, kind="stable"))
    return table.reset_index(drop=True)


def _by_cadet(rows: pd.DataFrame) -> pd.DataFrame:
    columns = ["cadet", "workings", "no_mistake", "no_mistake_pct", "noticed", "commonest_cause"]
    if not len(rows):
        return pd.DataFrame(columns=columns)
    records = []
    for cadet, part in [*rows.groupby("cadet", sort=True), ("the class", rows)]:
        wrong = part[part.verdict == WRONG_WORKING]
        records.append({"cadet": cadet, "workings": len(part), "no_mistake": int((part.verdict == RIGHT_WORKING).sum()),
                        "no_mistake_pct": round(100.0 * float((part.verdict == RIGHT_WORKING).mean()), 1),
                        "noticed": int((part.verdict == NOTICE_WORKING).sum()),
                        "commonest_cause": commonest(_named_causes(wrong))})
    return pd.DataFrame(records, columns=columns)


def _progress(rows: pd.DataFrame) -> pd.DataFrame:
    """Each cadet's workings day by day: how many, how many right, and the mistakes made."""
    columns = ["cadet", "date", "workings", "no_mistake", "no_mistake_pct", "noticed", "mistakes"]
    if not len(rows):
        return pd.DataFrame(columns=columns)
    records = []
    for (cadet, day), part in rows.groupby(["cadet", "date"], sort=True):  # the ship's date
        wrong = part[part.verdict == WRONG_WORKING]
        records.append({"cadet": cadet, "date": day, "workings": len(part),
                        "no_mistake": int((part.verdict == RIGHT_WORKING).sum()),
                        "no_mistake_pct": round(100.0 * float((part.verdict == RIGHT_WORKING).mean()), 1),
                        "noticed": int((part.verdict == NOTICE_WORKING).sum()),
                        "mistakes": "; ".join(f"{c} ({n})" for c, n in _named_causes(wrong).value_counts().items())})
    return pd.DataFrame(records, columns=columns)


def _altitude_sights(marks: Marks | None, n: int) -> np.ndarray:
    """The workings whose Hs gives a position (not a compass check, which has no altitude)."""
    if marks is None:
        return np.zeros(n, dtype=bool)
    return ~np.isin(marks.method, ["amplitude", "azimuth"])


def _personal(marked: pd.DataFrame, marks: Marks | None, cadets: np.ndarray, track: object):
    """Each cadet's personal error against the ship's track (navred training's report) and each sight's error."""
    from ..io.track import read_track
    from .training import training_report
    from .voyage import fix_groups

    usable = _altitude_sights(marks, len(marked))
    sights = marked[usable].reset_index(drop=True).assign(observer=cadets[usable])
    reduced = reduce_sights(sights)
    report = training_report(reduced, read_track(track), fix_groups(reduced))
    errors = np.full(len(marked), np.nan)
    reduced_ok = (reduced.status != SightStatus.ERROR).to_numpy()  # the training report keeps these, in order
    errors[np.flatnonzero(usable)[reduced_ok]] = report.sights.error_arcmin.to_numpy(dtype=float)
    return report.observers.rename(columns={"observer": "cadet"}), errors


#: Sights of one fix group further apart than this are a running fix: each line is moved by the run between
#: its DR and the last sight's before they are crossed.
ROUND_MINUTES = 30.0


def _fixes(marked: pd.DataFrame, marks: Marks | None, cadets: np.ndarray, exam: bool) -> pd.DataFrame:
    """Each fix group's fix from the cadet's own lines beside the fix they plotted, and beside navred's fix of the
    same sights (left out in exam mode)."""
    columns = ["cadet", "fix_group", "sights", "lines", "fix_from_your_lines", "fix_lat_deg", "fix_lon_deg",
               "your_plotted_fix", "plotted_apart_nm", "from_dr_nm", "note"]
    if not exam:
        columns += ["navred_fix", "navred_fix_lat_deg", "navred_fix_lon_deg", "navred_apart_nm", "reference_position"]
    if marks is None or not len(marked) or not marks.fixes:
        return pd.DataFrame(columns=columns)
    from ..triangle import distance_bearing
    from .voyage import fix_groups

    expected = {}
    usable = _altitude_sights(marks, len(marked))
    if not exam and usable.any():
        reduced = reduce_sights(marked[usable].reset_index(drop=True))
        expected = {g.name: g for g in fix_groups(reduced)}
    records = []
    for fix in marks.fixes:
        rows = list(fix.rows)
        label = str(marked["fix_group"].iloc[rows[0]])
        prefix = f"{source_name(str(marked['source'].iloc[rows[0]]))}: "
        full_prefix = f"{marked['source'].iloc[rows[0]]}: "
        shown = label[len(full_prefix):] if label.startswith(full_prefix) else label
        shown = shown[len(prefix):] if shown.startswith(prefix) else shown
        if not fix.named:  # sights taken close together, plotted as a fix: named by their time
            first = marked["sight_utc"].iloc[rows].min()
            shown = f"your sights from {first:%H:%M} UTC on {first:%Y-%m-%d}"
        has_fix = fix.lat_deg == fix.lat_deg
        record = {"cadet": cadets[rows[0]], "fix_group": shown, "sights": len(rows), "lines": fix.lines,
                  "fix_from_your_lines": f"{format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}"
                  if has_fix else "", "fix_lat_deg": fix.lat_deg, "fix_lon_deg": fix.lon_deg,
                  "your_plotted_fix": f"{format_angle(fix.plotted_lat_deg, 'lat')} "
                                      f"{format_angle(fix.plotted_lon_deg, 'lon')}"
                  if fix.plotted_lat_deg == fix.plotted_lat_deg else "",
                  "plotted_apart_nm": round(fix.apart_nm, 1) if fix.apart_nm == fix.apart_nm else np.nan,
                  "from_dr_nm": round(fix.from_dr_nm, 1) if fix.from_dr_nm == fix.from_dr_nm else np.nan,
                  "note": fix.note}
        if not exam:
            group = expected.get(label)
            if group is not None and group.fix is not None and group.fix.is_fix and has_fix:
                miles, _ = distance_bearing(fix.lat_deg, fix.lon_deg, group.fix.lat_deg, group.fix.lon_deg)
                record.update({"navred_fix": f"{format_angle(group.fix.lat_deg, 'lat')} "
                                             f"{format_angle(group.fix.lon_deg, 'lon')}",
                               "navred_fix_lat_deg": group.fix.lat_deg, "navred_fix_lon_deg": group.fix.lon_deg,
                               "navred_apart_nm": round(float(miles), 1)})
            if "chart_lat_deg" in marked:
                chart = marked.iloc[rows][["chart_lat_deg", "chart_lon_deg"]].dropna()
                if len(chart):
                    record["reference_position"] = (f"{format_angle(chart.chart_lat_deg.iloc[-1], 'lat')} "
                                                    f"{format_angle(chart.chart_lon_deg.iloc[-1], 'lon')}")
        records.append(record)
    return pd.DataFrame(records, columns=columns)


def marking_csv(report: MarkingReport) -> pd.DataFrame:
    """The CSV form: one row per working with its verdict, its first wrong line (empty when every line is
    right), the cause, what should have been noticed and the remarks."""
    return report.rows.copy()


def write_template(path) -> object:
    """The empty sight book: a workbook to fill in (.xlsx, :func:`navred.io.markingbook.write_template`) or its
    pages printed blank for a pencil (.pdf, :func:`navred.io.markingpages.write_blank_sight_book`)."""
    from pathlib import Path

    if Path(path).suffix.lower() == ".pdf":
        return write_blank_sight_book(path)
    return write_template_workbook(path)


__all__ = ["MarkingReport", "mark_workings", "marking_csv", "describe", "value_text", "difference_text", "cost_text",
           "commonest", "write_marking_workbook", "write_marking_pdf", "marking_document", "write_template", "read_workings", "parse_worked", "WORKED_FORMS",
           "RIGHT_WORKING", "WRONG_WORKING", "NOTICE_WORKING", "ROW_COLUMNS", "LINE_COLUMNS"]
