"""Hand workings: navred's own format for a cadet's reduction, read through the one log reader, marked.

Edge code. A hand working is a sight log (the sight's own columns, read by
:func:`navred.read_sight_log` under the same rules as every log) with the cadet's lines beside
it, one column a line (:data:`WORKED_FORMS`, docs/marking.md). Each line is read here with
navred's usual parsers, marked by :func:`navred.marking.mark` (the core), and put into tables:
one row per sight with its first wrong line and the cause, one row per line with its verdict,
and a class summary. The workbook, the printable pages and the empty template are written
here too. A class is a folder of workings, or one workbook with a sheet per cadet.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import format_angle, parse_angle
from ..errors import NavredError, api_boundary
from ..io.logbook import SightLog, read_sight_log, with_decimal_point
from ..marking import (
    DEGREE_LINES,
    LINES,
    NOT_GIVEN,
    REQUIRED_LINES,
    TOLERANCES,
    UNITS,
    WRONG,
    Marks,
    SightsToMark,
    mark,
)
from ..timescales import utc_jd_to_datetime64, utc_julian_date_from_components

#: Each line of a working: how it is read, what it is, and the forms accepted (the template's header notes).
WORKED_FORMS: dict[str, tuple[str, str, str]] = {
    "utc_worked": ("utc", "UTC of the sight as worked, with the Greenwich date",
                   "2026-03-26 09:10:07 (a T between, and a Z at the end, are taken too)"),
    "gha_hour_worked": ("angle", "GHA at the whole hour (GHA Aries for a star)", "123° 45.6′, 123 45.6, 123.76"),
    "increment_worked": ("arcmin", "increment for the minutes and seconds, ′", "143.5 or 2° 23.5′"),
    "v_corr_worked": ("arcmin", "v correction, ′ (Moon and planets)", "+3.1"),
    "sha_worked": ("angle", "SHA of the star", "258° 31.2′"),
    "gha_worked": ("angle", "GHA of the body", "123° 45.6′"),
    "dec_hour_worked": ("dec", "Dec at the whole hour", "2° 14.7′ N"),
    "d_corr_worked": ("arcmin", "d correction, ′, signed as the declination moves (+ north)", "+0.2"),
    "dec_worked": ("dec", "Dec of the body", "2° 14.9′ N, 2 14.9 N"),
    "ic_worked": ("arcmin", "index correction, ′ (off the arc +)", "-1.4"),
    "dip_worked": ("arcmin", "dip, ′ (subtracted: negative)", "-2.9"),
    "ha_worked": ("signed", "apparent altitude Ha", "24° 58.8′"),
    "refraction_worked": ("arcmin", "refraction, ′ (negative)", "-2.1"),
    "sd_worked": ("arcmin", "semi-diameter, ′ (+ lower limb, - upper)", "+16.0"),
    "parallax_worked": ("arcmin", "parallax in altitude, ′ (the Moon's HP correction)", "+54.3"),
    "main_worked": ("arcmin", "a combined main correction, ′ (refraction, SD and parallax together)", "+14.0"),
    "additional_worked": ("arcmin", "additional correction, ′ (the phase of Venus or Mars)", "+0.1"),
    "ho_worked": ("signed", "observed altitude Ho", "25° 12.8′"),
    "ap_lat": ("lat", "assumed latitude", "44° N, 44 00.0 N"),
    "ap_lon": ("lon", "assumed longitude", "012° 04.7′ W"),
    "lha_worked": ("angle", "LHA (a whole degree)", "304, 304° 00.0′"),
    "tab_hc_worked": ("signed", "tabulated Hc at the whole degrees of Dec", "25° 03.1′"),
    "tab_d_worked": ("arcmin", "the tables' d, ′ for 1° of Dec, signed", "+42.6"),
    "tab_z_worked": ("degrees", "the tables' azimuth angle Z, degrees", "113.5"),
    "hc_correction_worked": ("arcmin", "the d correction of Hc, ′", "+9.8"),
    "hc_worked": ("signed", "computed altitude Hc", "25° 19.1′"),
    "zn_worked": ("degrees", "true azimuth Zn, degrees", "113.5, 113° 30′"),
    "intercept_worked": ("intercept", "intercept, nautical miles, TOWARD or AWAY", "3.2 toward, 3.2 T, 3.2 A, 6.3 away"),
}
assert tuple(WORKED_FORMS) == LINES

#: The line a sight's first mistake is named by, as the cadet wrote it (the column's own name).
ROW_COLUMNS = ["source", "row", "cadet", "body", "utc", "first_wrong_line", "cause", "given", "expected",
               "difference", "unit", "lines given", "lines wrong"]


@dataclass
class Workings:
    """Hand workings as read: the log (every sight, the rejected rows) and each line's values per row."""

    log: SightLog
    given: dict[str, np.ndarray]  # line -> values in mark()'s units, one per row of log.table
    text: dict[str, np.ndarray]  # line -> the cell as written
    unreadable: pd.DataFrame  # source, row, line, value, reason
    cadet: np.ndarray  # the cadet of each row: the observer, else the sheet or file


@dataclass
class MarkingReport:
    """A class's workings marked: per sight, per line, per cadet and per mistake."""

    workings: Workings
    marks: Marks | None
    rows: pd.DataFrame  # one row per sight that was marked
    lines: pd.DataFrame  # one row per (sight, line given)
    by_cause: pd.DataFrame
    by_cadet: pd.DataFrame
    fixes: pd.DataFrame
    rejected: pd.DataFrame
    exam: bool = False
    provenance: dict[str, str] = field(default_factory=dict)

    @property
    def share_right(self) -> float:
        return float((self.rows.first_wrong_line == "").mean()) if len(self.rows) else float("nan")

    def summary(self) -> str:
        cadets = self.rows.cadet.nunique() if len(self.rows) else 0
        return (f"{len(self.rows)} workings of {cadets} cadet{'s' if cadets != 1 else ''} marked: "
                f"{int((self.rows.first_wrong_line == '').sum())} with no mistake"
                + (f", {self.workings.log.n_rejected_rows} rows not read (see the rejected list)"
                   if self.workings.log.n_rejected_rows else ""))


# --- reading the lines ------------------------------------------------------------------------------

_INTERCEPT = re.compile(r"^\s*([+]?\d+(?:\.\d+)?)\s*(?:nm|n\.?m\.?|miles?|′|')?\s*"
                        r"(t|toward|towards|to|a|away|aw)?\s*$", re.IGNORECASE)
_ARCMIN = re.compile(r"^\s*([+\-−]?)\s*(\d+(?:\.\d+)?)\s*[′']?\s*$")
_UTC = re.compile(r"^\s*(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?\s*(Z|UTC|\+00:?00)?\s*$",
                  re.IGNORECASE)


def unit_text(unit: str) -> str:
    """A unit as it follows a number: the minute and degree marks close up to it, words after a space."""
    return str(unit) if unit in ("′", "°", "″") else f" {unit}"


def parse_worked(line: str, text: str, decimal_comma: bool = False) -> float | np.datetime64:
    """One cell of a worked line, in :func:`navred.marking.mark`'s units; raises with the forms accepted.

    ``decimal_comma``: the file's separator allows a decimal comma (as for every column of the log)."""
    kind, what, example = WORKED_FORMS[line]
    value = text.strip()
    if kind == "utc":
        found = _UTC.match(value)
        if not found:
            if re.fullmatch(r"\s*\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?\s*", value):
                raise NavredError(f"{value!r} has no date: write the Greenwich date with the time, as {example}")
            raise NavredError(f"cannot read {value!r} as the worked UTC; accepted: {example}")
        y, mo, d, h, mi, s, _ = found.groups()
        jd1, jd2, reason = utc_julian_date_from_components(int(y), int(mo), int(d), int(h), int(mi),
                                                           float(s) if s else 0.0)
        if str(np.asarray(reason).item()):
            raise NavredError(f"{value!r}: {np.asarray(reason).item()}")
        return np.datetime64(utc_jd_to_datetime64(jd1, jd2)[()], "ns")
    if kind == "arcmin":
        found = _ARCMIN.match(with_decimal_point(value, decimal_comma))
        if found:
            sign = -1.0 if found.group(1) in ("-", "−") else 1.0
            return sign * float(found.group(2))
        return float(parse_angle(value, "signed", decimal_comma)) * 60.0  # degrees and minutes, as 2° 23.5′
    if kind == "intercept":
        found = _INTERCEPT.match(with_decimal_point(value, decimal_comma))
        if not found:
            raise NavredError(f"cannot read {value!r} as an intercept; accepted: {example}")
        miles = float(found.group(1))
        direction = (found.group(2) or "").lower()
        if not direction:
            if miles == 0.0:
                return 0.0
            raise NavredError(f"{value!r} says no direction: write TOWARD or AWAY (T or A), as {example}")
        return -miles if direction.startswith("a") else miles
    if kind == "degrees":
        return float(parse_angle(value, "angle", decimal_comma))
    return float(parse_angle(value, {"angle": "angle", "signed": "signed", "lat": "lat", "lon": "lon",
                                     "dec": "dec"}[kind], decimal_comma))


def _worked_headers(log: SightLog) -> dict[str, str]:
    """The log's extra column that gives each worked line (its header normalised as navred compares)."""
    found = {}
    for column in log.extra_columns:
        key = re.sub(r"\s*\(.*\)$", "", column).strip("_")
        if key in WORKED_FORMS:
            found[key] = column
        elif f"{key}_worked" in WORKED_FORMS:
            found[f"{key}_worked"] = column
    return found


def read_workings(source: object, *, dates: str | None = None) -> Workings:
    """Read hand workings: a file, a folder of them, or a workbook with a sheet per cadet.

    The sight's own columns go through :func:`navred.read_sight_log` (every rule of the sight
    log); the worked lines are its extra columns, each distinct cell read once. A row whose
    sight cannot be read is rejected there; a line that cannot be read is listed in
    ``unreadable`` (and marked wrong, with the reason).
    """
    lines = [*WORKED_FORMS, *(line.removesuffix("_worked") for line in WORKED_FORMS)]
    log = read_sight_log(source, dates=dates, all_sheets=True, also_reads=lines)
    table = log.table
    n = len(table)
    headers = _worked_headers(log)
    missing = [line for line in REQUIRED_LINES if line not in headers]
    if missing:
        raise NavredError(f"the workings have no column for {', '.join(missing)} (every working gives Zn, Ho and the "
                          f"intercept; see docs/marking.md); their columns: {', '.join(log.extra_columns) or 'none'}")
    given: dict[str, np.ndarray] = {}
    text: dict[str, np.ndarray] = {}
    problems = []
    # a file whose separator allows a decimal comma gives every column, the worked lines too, with one
    commas = {t.source: t.decimal_comma for t in log.tables}
    comma = table["source"].map(commas).fillna(False).to_numpy(dtype=bool)
    for line, column in headers.items():
        cells = table[column].astype(str).to_numpy(dtype=object)
        text[line] = cells
        codes, distinct = pd.factorize(pd.Series(cells, dtype=object) + np.where(comma, "\x00,", "\x00."))
        values, reasons = [], {}
        for u, keyed in enumerate(distinct.tolist()):
            cell, flag = keyed[:-2], keyed[-1] == ","
            if not str(cell).strip():
                values.append(None)
                continue
            try:
                values.append(parse_worked(line, str(cell), flag))
            except (NavredError, ValueError) as exc:
                values.append(None)
                reasons[u] = str(exc)
        if line == "utc_worked":
            out = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
        else:
            out = np.full(n, np.nan)
        for u, value in enumerate(values):
            if value is not None:
                out[codes == u] = value
        given[line] = out
        for u, reason in reasons.items():
            for i in np.flatnonzero(codes == u).tolist():
                problems.append((table["source"].iloc[i], int(table["row"].iloc[i]), line, cells[i], reason))
    unreadable = pd.DataFrame(problems, columns=["source", "row", "line", "value", "reason"])
    return Workings(log, given, text, unreadable, _cadets(table))


def _cadets(table: pd.DataFrame) -> np.ndarray:
    """Each row's cadet: the observer as written, else the sheet of a class workbook, else the file."""
    observers = table["observer"].astype(str).to_numpy(dtype=object) if "observer" in table else \
        np.full(len(table), "", dtype=object)
    sources = table["source"].astype(str).to_numpy(dtype=object)
    named = []
    for source in sources.tolist():
        sheet = re.search(r"\(sheet '(.*)'\)$", source)
        named.append(sheet.group(1) if sheet else Path(source).stem)
    return np.where(observers != "", observers, np.array(named, dtype=object))


# --- marking ------------------------------------------------------------------------------------------

def _sights(table: pd.DataFrame) -> SightsToMark:
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
        dr_lat_deg=floats("dr_lat_deg"), dr_lon_deg=floats("dr_lon_deg"), dut1_s=floats("dut1_given_s"))


def _feet(text: str) -> float:
    """The number of a height of eye given in feet ('9.2 feet'), else NaN."""
    found = re.match(r"^\s*([\d.]+)\s*(feet|foot|ft)\b", text, re.IGNORECASE)
    return float(found.group(1)) if found else np.nan


@api_boundary
def mark_workings(source: object, *, dates: str | None = None, exam: bool = False) -> MarkingReport:
    """Read and mark hand workings: every line judged, the first wrong one named with its cause.

    ``exam``: leave out the expected fix and any reference position (a marking sheet handed back
    in an examination shows the cadet's own lines and verdicts only)."""
    workings = read_workings(source, dates=dates)
    table = workings.log.table
    ok = (table["read_problem"] == "").to_numpy()
    rows = np.flatnonzero(ok)
    marked = table.iloc[rows].reset_index(drop=True)
    given = {line: values[rows] for line, values in workings.given.items()}
    marks = mark(_sights(marked), given) if len(marked) else None
    unreadable = workings.unreadable
    verdict = marks.verdict.copy() if marks is not None else np.zeros((0, len(LINES)), dtype=object)
    cause = marks.cause.copy() if marks is not None else np.zeros((0, len(LINES)), dtype=object)
    # a line that could not be read is wrong, for that reason; a required line not given is wrong too
    position = {(s, r): i for i, (s, r) in enumerate(zip(marked["source"], marked["row"]))}
    for item in unreadable.itertuples():
        i = position.get((item.source, item.row))
        if i is not None:
            k = LINES.index(item.line)
            verdict[i, k], cause[i, k] = WRONG, f"cannot be read: {item.reason}"
    for line in REQUIRED_LINES:  # (a line that could not be read is wrong already)
        k = LINES.index(line)
        absent = verdict[:, k] == NOT_GIVEN
        verdict[absent, k], cause[absent, k] = WRONG, "not given: every working gives Zn, Ho and the intercept"
    if marks is not None:
        marks.verdict, marks.cause = verdict, cause
        wrong = verdict == WRONG
        first = np.where(wrong.any(axis=1), np.argmax(wrong, axis=1), -1)
        marks.first_wrong_line = np.array([LINES[f] if f >= 0 else "" for f in first.tolist()], dtype=object)
        marks.first_cause = np.array([cause[i, f] if f >= 0 else "" for i, f in enumerate(first.tolist())],
                                     dtype=object)
    cadets = workings.cadet[rows]
    row_table, line_table = _tables(marked, marks, workings, rows, cadets)
    report = MarkingReport(workings, marks, row_table, line_table, _by_cause(row_table), _by_cadet(row_table),
                           _fixes(marked, marks, cadets, exam), workings.log.rejected, exam)
    report.provenance = {"workings": ", ".join(workings.log.sources), "read": workings.log.summary(),
                         "marked": report.summary(),
                         "exam mode": "yes: the expected fix and reference positions are left out" if exam else "no"}
    return report


def _text_value(line: str, value) -> str:
    """A line's value written as a cadet writes it."""
    if line == "utc_worked":
        return "" if np.isnat(value) else str(np.datetime64(value, "s")).replace("T", " ")
    if value != value:
        return ""
    if line in ("ap_lat",):
        return format_angle(value, "lat")
    if line in ("ap_lon",):
        return format_angle(value, "lon")
    if line in ("dec_worked", "dec_hour_worked"):
        return format_angle(value, "dec")
    if line in ("zn_worked", "tab_z_worked"):
        return f"{value:.1f}°"
    if line == "intercept_worked":
        return f"{abs(value):.1f} {'TOWARD' if value >= 0 else 'AWAY'}"
    if line in DEGREE_LINES:
        return format_angle(value, "signed" if line in ("ha_worked", "ho_worked", "tab_hc_worked", "hc_worked")
                            else "angle")
    return f"{value:+.1f}′"


def _tables(marked: pd.DataFrame, marks: Marks | None, workings: Workings, rows: np.ndarray, cadets):
    if marks is None:
        return pd.DataFrame(columns=ROW_COLUMNS), pd.DataFrame(
            columns=["source", "row", "cadet", "line", "given", "expected", "expected from the tables",
                     "difference", "unit", "tolerance", "verdict", "cause"])
    n = len(marked)
    first = marks.first_wrong_line
    utc_text = marked["sight_utc"].dt.strftime("%Y-%m-%d %H:%M:%S").fillna("").to_numpy(dtype=object)
    record_given, record_expected, record_difference, record_unit = [], [], [], []
    line_records = []
    for i in range(n):
        line = first[i]
        if line:
            k = LINES.index(line)
            record_given.append(workings.text[line][rows[i]] if line in workings.text else "")
            record_expected.append(_text_value(line, marks.exact[line][i]))
            record_difference.append(round(float(marks.difference[i, k]), 2))
            record_unit.append(UNITS[line])
        else:
            record_given.append(""), record_expected.append(""), record_difference.append(np.nan)
            record_unit.append("")
        for k, line_name in enumerate(LINES):
            if marks.verdict[i, k] == NOT_GIVEN:
                continue
            tab = marks.tabular[line_name][i]
            line_records.append((
                marked["source"].iloc[i], int(marked["row"].iloc[i]), cadets[i], line_name,
                workings.text[line_name][rows[i]] if line_name in workings.text else "",
                _text_value(line_name, marks.exact[line_name][i]),
                "" if line_name == "utc_worked" else _text_value(line_name, tab),
                round(float(marks.difference[i, k]), 2), UNITS[line_name], TOLERANCES[line_name], marks.verdict[i, k],
                marks.cause[i, k]))
    given_count = (marks.verdict != NOT_GIVEN).sum(axis=1)
    wrong_count = (marks.verdict == WRONG).sum(axis=1)
    row_table = pd.DataFrame({
        "source": marked["source"].to_numpy(dtype=object), "row": marked["row"].to_numpy(dtype=int), "cadet": cadets,
        "body": marked["body_name"].to_numpy(dtype=object), "utc": utc_text, "first_wrong_line": first,
        "cause": marks.first_cause, "given": record_given, "expected": record_expected,
        "difference": record_difference, "unit": record_unit, "lines given": given_count,
        "lines wrong": wrong_count})
    line_table = pd.DataFrame(line_records, columns=[
        "source", "row", "cadet", "line", "given", "expected", "expected from the tables", "difference", "unit",
        "tolerance", "verdict", "cause"])
    return row_table, line_table


def _by_cause(rows: pd.DataFrame) -> pd.DataFrame:
    wrong = rows[rows.first_wrong_line != ""]
    named = wrong.cause.where(wrong.cause != "", "(no catalogued cause: see the line's expected value)")
    table = (pd.DataFrame({"cause": named, "line": wrong.first_wrong_line, "cadet": wrong.cadet})
             .groupby(["cause", "line"], sort=False).agg(sights=("cadet", "size"),
                                                         cadets=("cadet", lambda c: ", ".join(sorted(set(c)))))
             .reset_index().sort_values("sights", ascending=False, kind="stable"))
    return table.reset_index(drop=True)


def _by_cadet(rows: pd.DataFrame) -> pd.DataFrame:
    if not len(rows):
        return pd.DataFrame(columns=["cadet", "sights", "no mistake", "no mistake (%)", "commonest cause"])
    records = []
    for cadet, part in rows.groupby("cadet", sort=True):
        wrong = part[part.first_wrong_line != ""]
        causes = wrong.cause.where(wrong.cause != "", "(no catalogued cause)")
        records.append({"cadet": cadet, "sights": len(part), "no mistake": int((part.first_wrong_line == "").sum()),
                        "no mistake (%)": round(100.0 * float((part.first_wrong_line == "").mean()), 1),
                        "commonest cause": causes.value_counts().index[0] if len(causes) else ""})
    table = pd.DataFrame(records)
    total = {"cadet": "the class", "sights": int(table.sights.sum()), "no mistake": int(table["no mistake"].sum()),
             "no mistake (%)": round(100.0 * float(table["no mistake"].sum() / max(table.sights.sum(), 1)), 1),
             "commonest cause": _commonest(rows)}
    return pd.concat([table, pd.DataFrame([total])], ignore_index=True)


def _commonest(rows: pd.DataFrame) -> str:
    wrong = rows[rows.first_wrong_line != ""]
    causes = wrong.cause.where(wrong.cause != "", "(no catalogued cause)")
    return causes.value_counts().index[0] if len(causes) else ""


#: Sights of one fix group further apart than this are a running fix: the cadet's own lines are then
#: not crossed here (the run between them is not in a working).
ROUND_MINUTES = 30.0


def _fixes(marked: pd.DataFrame, marks: Marks | None, cadets: np.ndarray, exam: bool) -> pd.DataFrame:
    """Each cadet's fix from the cadet's own lines (AP, intercept, Zn) for each round of sights, beside navred's
    fix of the same sights (left out in exam mode)."""
    columns = ["cadet", "fix group", "sights", "your fix", "your fix lat (deg)", "your fix lon (deg)"]
    if not exam:
        columns += ["expected fix", "expected fix lat (deg)", "expected fix lon (deg)", "miles apart (nm)",
                    "reference position"]
    if marks is None or not len(marked):
        return pd.DataFrame(columns=columns)
    from ..triangle import destination, distance_bearing
    from .sights import reduce_sights
    from .voyage import fix_groups

    reduced = reduce_sights(marked) if not exam else None
    expected = {g.name: g for g in fix_groups(reduced)} if reduced is not None else {}
    groups = marked["fix_group"].astype(str).to_numpy(dtype=object)
    lat = marks.given["ap_lat"]
    lon = marks.given["ap_lon"]
    zn = marks.given["zn_worked"]
    intercept = marks.given["intercept_worked"]
    times = marked["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64) / 6e10
    records = []
    for name in dict.fromkeys(groups[groups != ""].tolist()):
        rows = np.flatnonzero(groups == name)
        usable = rows[np.isfinite(lat[rows]) & np.isfinite(lon[rows]) & np.isfinite(zn[rows])
                      & np.isfinite(intercept[rows])]
        prefix = f"{Path(str(marked['source'].iloc[rows[0]])).name}: "  # the reader keeps files' labels apart
        shown = name[len(prefix):] if name.startswith(prefix) else name
        record = {"cadet": cadets[rows[0]], "fix group": shown, "sights": int(rows.size)}
        if usable.size >= 2 and np.ptp(times[usable]) <= ROUND_MINUTES:
            # each line through its foot (the intercept along Zn from its AP), crossed by least squares on a
            # plane about the first AP (the plotting sheet, common practice)
            feet_lat, feet_lon = destination(lat[usable], lon[usable], zn[usable], intercept[usable])
            origin_lat, origin_lon = float(feet_lat[0]), float(feet_lon[0])
            east = ((feet_lon - origin_lon + 180.0) % 360.0 - 180.0) * 60.0 * np.cos(np.radians(origin_lat))
            north = (feet_lat - origin_lat) * 60.0
            normal = np.stack([np.sin(np.radians(zn[usable])), np.cos(np.radians(zn[usable]))], axis=1)
            offsets = normal[:, 0] * east + normal[:, 1] * north
            solution, *_ = np.linalg.lstsq(normal, offsets, rcond=None)
            if np.linalg.matrix_rank(normal) == 2:
                fix_lat = origin_lat + solution[1] / 60.0
                fix_lon = (origin_lon + solution[0] / 60.0 / np.cos(np.radians(origin_lat)) + 180.0) % 360.0 - 180.0
                record.update({"your fix": f"{format_angle(fix_lat, 'lat')} {format_angle(fix_lon, 'lon')}",
                               "your fix lat (deg)": fix_lat, "your fix lon (deg)": fix_lon})
                group = expected.get(name)
                if group is not None and group.fix is not None and group.fix.is_fix:
                    miles, _ = distance_bearing(fix_lat, fix_lon, group.fix.lat_deg, group.fix.lon_deg)
                    record.update({"expected fix": f"{format_angle(group.fix.lat_deg, 'lat')} "
                                                   f"{format_angle(group.fix.lon_deg, 'lon')}",
                                   "expected fix lat (deg)": group.fix.lat_deg,
                                   "expected fix lon (deg)": group.fix.lon_deg, "miles apart (nm)": float(miles)})
        elif usable.size >= 2:
            record["your fix"] = "a running fix: the run is not in the working, so the lines are not crossed here"
        if not exam and "chart_lat_deg" in marked:
            chart = marked.iloc[rows][["chart_lat_deg", "chart_lon_deg"]].dropna()
            if len(chart):
                record["reference position"] = (f"{format_angle(chart.chart_lat_deg.iloc[-1], 'lat')} "
                                                f"{format_angle(chart.chart_lon_deg.iloc[-1], 'lon')}")
        records.append(record)
    return pd.DataFrame(records, columns=columns)


def marking_csv(report: MarkingReport) -> pd.DataFrame:
    """The CSV form: one row per sight with its first wrong line (empty when every line is right) and the cause."""
    return report.rows.copy()


# --- the workbook, the printable pages and the template ---------------------------------------------

def _sheet_name(name: str, taken: set[str]) -> str:
    base = re.sub(r"[\[\]:*?/\\']", " ", str(name)).strip()[:24] or "cadet"
    candidate, k = f"Marks {base}", 2
    while candidate.lower() in taken:
        candidate, k = f"Marks {base[:20]} {k}", k + 1
    taken.add(candidate.lower())
    return candidate


def write_marking_workbook(report: MarkingReport, path: str | Path) -> Path:
    """The marking as a workbook: About (the caution, the tolerances), the class summary, the mistakes,
    the fixes, a marking sheet per cadet, and the rows not read."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    from ..io.output import atomic_write
    from ..io.workbook import fit_pages, front_sheet, new_tables, write_table_sheet, write_text_safe

    book = Workbook()
    tables = new_tables(book)
    about = front_sheet(book, "About", "navred marking of hand workings")
    line = 5
    for key, value in report.provenance.items():
        write_text_safe(about.cell(row=line, column=1), key)
        write_text_safe(about.cell(row=line, column=2), value)
        line += 1
    line += 1
    about.cell(row=line, column=1, value="How each line is judged").font = Font(bold=True)
    for name in LINES:
        line += 1
        kind, what, example = WORKED_FORMS[name]
        about.cell(row=line, column=1, value=name)
        about.cell(row=line, column=2, value=f"{what}: right within {TOLERANCES[name]:g} {UNITS[name]} of the exact "
                                             "value or of the printed tables' (docs/marking.md)")
    about.column_dimensions["A"].width = 24
    about.column_dimensions["B"].width = 110
    write_table_sheet(tables, book.create_sheet("Class"), report.by_cadet)
    write_table_sheet(tables, book.create_sheet("Mistakes"), report.by_cause, wide={"cadets": 60, "cause": 60})
    write_table_sheet(tables, book.create_sheet("Fixes"), report.fixes)
    taken = {"about", "class", "mistakes", "fixes", "not read"}
    for cadet, part in report.lines.groupby("cadet", sort=True):
        sheet = book.create_sheet(_sheet_name(cadet, taken))
        rows = report.rows[report.rows.cadet == cadet]
        write_table_sheet(tables, sheet, rows.drop(columns=["cadet"]), wide={"cause": 50})
        write_table_sheet(tables, sheet, part.drop(columns=["cadet"]), first_row=len(rows) + 4,
                     wide={"cause": 50}, flag_column="verdict")
    rejected = pd.concat([report.rejected.assign(line=""),
                          report.workings.unreadable.rename(columns={"line": "line"}).assign(column="")],
                         ignore_index=True) if len(report.workings.unreadable) else report.rejected
    write_table_sheet(tables, book.create_sheet("Not read"), rejected, wide={"reason": 90})
    fit_pages(book, tables)
    return atomic_write(path, tables.save, inputs=report.workings.log.sources)


def marking_pages(report: MarkingReport) -> list:
    """One printable page (a matplotlib figure, A4 portrait) per cadet: every sight's verdict, each mistake
    spelled out (the line, what was given, what it should be, the difference and the probable cause), and
    the cadet's fixes (beside navred's unless in exam mode)."""
    import textwrap

    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from ..figures.plotting import FIX, INK

    pages = []
    for cadet, part in report.rows.groupby("cadet", sort=True):
        figure = Figure(figsize=(8.27, 11.69), dpi=100, facecolor="white")
        right = int((part.first_wrong_line == "").sum())
        y = 0.955
        figure.text(0.07, y, f"Marking: {cadet}", fontsize=15, weight="bold", color=INK)
        y -= 0.025
        figure.text(0.07, y, f"{len(part)} sight{'s' if len(part) != 1 else ''} worked, {right} with no mistake. "
                    f"Sources: {', '.join(sorted(set(map(str, part.source))))}", fontsize=8, color=INK)
        if report.exam:
            y -= 0.018
            figure.text(0.07, y, "Exam mode: no expected fix or reference position is shown.", fontsize=8,
                        color=INK, style="italic")
        y -= 0.035
        shown = part.head(MAX_SIGHTS_ON_PAGE)
        columns = (("row", 0.07), ("body", 0.13), ("UTC", 0.25), ("verdict", 0.45), ("lines", 0.80))
        for title, x in columns:
            figure.text(x, y, title, fontsize=8, weight="bold", color=INK)
        y -= 0.004
        figure.add_artist(matplotlib.lines.Line2D([0.07, 0.93], [y, y], color=INK, linewidth=0.6))
        for r in shown.to_dict("records"):
            y -= 0.017
            verdict = "all right" if not r["first_wrong_line"] else f"first wrong line: {r['first_wrong_line']}"
            colour = INK if not r["first_wrong_line"] else FIX
            for (title, x), text in zip(columns, (str(r["row"]), str(r["body"]), f"{r['utc']} UTC", verdict,
                                                  f"{r['lines given']} given, {r['lines wrong']} wrong")):
                figure.text(x, y, text, fontsize=8, color=colour if title == "verdict" else INK)
        if len(part) > len(shown):
            y -= 0.017
            figure.text(0.07, y, f"and {len(part) - len(shown)} more sights: see the workbook", fontsize=8, color=INK)
        wrong = shown[shown.first_wrong_line != ""]
        if len(wrong):
            y -= 0.04
            figure.text(0.07, y, "The mistakes", fontsize=11, weight="bold", color=INK)
            for r in wrong.to_dict("records"):
                off = r["difference"]
                difference = "" if off != off else f" (off by {off:+.1f}{unit_text(r['unit'])})"
                later = int(r["lines wrong"]) - 1
                text = (f"Row {r['row']}, {r['body']}: {r['first_wrong_line']} was given as "
                        f"{r['given'] or '(nothing)'}, it should be {r['expected'] or 'given'}{difference}. "
                        + (f"Probable cause: {r['cause']}." if r["cause"] else "No catalogued cause: check this line.")
                        + (" Every later line follows from it: the slip is counted once." if not later else
                           f" {later} later line{'s' if later > 1 else ''} wrong as well: see the workbook."))
                for k, piece in enumerate(textwrap.wrap(text, 110)):
                    y -= 0.016 if k else 0.022
                    figure.text(0.07 if not k else 0.09, y, piece, fontsize=8, color=INK)
                if y < 0.2:
                    y -= 0.018
                    figure.text(0.07, y, "more mistakes: see the workbook", fontsize=8, color=INK)
                    break
        fixes = report.fixes[report.fixes.cadet == cadet] if len(report.fixes) else report.fixes
        fixes = fixes[fixes["your fix"].notna()] if "your fix" in fixes else fixes
        if len(fixes) and y > 0.12:
            y -= 0.04
            figure.text(0.07, y, "Your fixes", fontsize=11, weight="bold", color=INK)
            for f in fixes.head(6).to_dict("records"):
                line = f"{f['fix group']}: {f['your fix']}"
                if not report.exam and isinstance(f.get("expected fix"), str):
                    line += f"; navred's fix of the same sights {f['expected fix']}, {f['miles apart (nm)']:.1f} nm apart"
                for k, piece in enumerate(textwrap.wrap(line, 110)):
                    y -= 0.016 if k else 0.022
                    figure.text(0.07 if not k else 0.09, y, piece, fontsize=8, color=INK)
        figure.text(0.07, 0.035, "navred marking: an aid to instruction. The examiner's judgement, the official almanac "
                    "and tables, and licensed practice decide.", fontsize=7, style="italic", color=INK)
        pages.append(figure)
    return pages


#: Sights listed on a cadet's printed page (the workbook has them all).
MAX_SIGHTS_ON_PAGE = 24


def write_marking_pdf(report: MarkingReport, path: str | Path) -> Path:
    """The printable pages, one per cadet, as one PDF."""
    from matplotlib.backends.backend_pdf import PdfPages

    from ..io.output import atomic_write

    pages = marking_pages(report)
    if not pages:
        raise NavredError("no working was marked: nothing to print")

    def write(target):
        with PdfPages(target) as pdf:
            for page in pages:
                pdf.savefig(page)

    return atomic_write(path, write, inputs=report.workings.log.sources)


#: The sight's own columns a template offers before the cadet's lines (the sight log's names).
TEMPLATE_SIGHT_COLUMNS = ("date", "zone_time", "zone_description", "watch_error", "body", "limb", "hs",
                          "index_error", "eye_height_m", "horizon", "dr_lat", "dr_lon", "observer", "fix_group")
_SIGHT_NOTES = {
    "date": "the zone date, 2026-03-26", "zone_time": "the watch or zone time, 08:09:53",
    "zone_description": "+1 (or +1 N): UTC = zone time + ZD", "watch_error": "12 fast, 3 s slow, or seconds (fast +)",
    "body": "Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star", "limb": "lower, upper or centre",
    "hs": "sextant altitude, 25° 03.1′ or 25 03.1", "index_error": "1.4 on, 0.8 off, or ′ (on +)",
    "eye_height_m": "height of eye in metres (a header 'eye height (ft)' takes feet)",
    "horizon": "sea, artificial, bubble, back or waterline", "dr_lat": "44° 10.1′ N", "dr_lon": "012° 09.3′ W",
    "observer": "the cadet's name", "fix_group": "a label shared by the sights of one fix",
}


def write_template(path: str | Path) -> Path:
    """An empty hand-working workbook: the sight's columns and every line's column, each header noting the
    forms accepted, lists for the word columns, and an instructions sheet."""
    from openpyxl import Workbook
    from openpyxl.comments import Comment
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation

    from ..io.output import atomic_write
    from ..io.workbook import SAFETY, fit_pages, header_row
    from ..stars import known_bodies
    from ..vocabulary import HORIZONS, LIMBS

    book = Workbook()
    sheet = book.active
    sheet.title = "Working"
    headers = list(TEMPLATE_SIGHT_COLUMNS) + list(LINES)
    header_row(sheet, 1, headers)
    for k, name in enumerate(headers, start=1):
        cell = sheet.cell(row=1, column=k)
        if name in WORKED_FORMS:
            kind, what, example = WORKED_FORMS[name]
            needed = "required" if name in REQUIRED_LINES else "optional"
            note = f"{what} ({needed}). Accepted: {example}."
        else:
            note = _SIGHT_NOTES.get(name, "")
        cell.comment = Comment(note, "navred")
        sheet.column_dimensions[get_column_letter(k)].width = max(12, min(len(name) + 4, 24))
    lists = book.create_sheet("Lists")
    bodies = known_bodies()
    for k, body in enumerate(bodies, start=1):
        lists.cell(row=k, column=1, value=body)
    limbs = sorted(set(LIMBS.values()))
    for k, word in enumerate(limbs, start=1):
        lists.cell(row=k, column=2, value=word)
    horizons = sorted(set(HORIZONS.values()))
    for k, word in enumerate(horizons, start=1):
        lists.cell(row=k, column=3, value=word)
    lists.sheet_state = "hidden"
    for name, letter, count in (("body", "A", len(bodies)), ("limb", "B", len(limbs)), ("horizon", "C", len(horizons))):
        column = get_column_letter(headers.index(name) + 1)
        rule = DataValidation(type="list", formula1=f"=Lists!${letter}$1:${letter}${count}", allow_blank=True,
                              showErrorMessage=True, errorTitle="navred", error=f"choose a {name} from the list")
        rule.add(f"{column}2:{column}1000")
        sheet.add_data_validation(rule)
    sheet.freeze_panes = "A2"
    help_sheet = book.create_sheet("How to fill it in")
    help_sheet["A1"] = "A hand working for navred mark: one row per sight."
    help_sheet["A3"] = ("Fill in the sight (as in a sight log) and the lines of your working. The last three lines "
                        "(Zn, Ho and the intercept) are required; give the others as you wrote them. Each header "
                        "has a note with the forms accepted; docs/marking.md explains every line.")
    help_sheet["A5"] = SAFETY
    help_sheet.column_dimensions["A"].width = 120
    fit_pages(book)
    return atomic_write(path, book.save)


__all__ = ["WORKED_FORMS", "Workings", "MarkingReport", "read_workings", "mark_workings", "marking_csv",
           "write_marking_workbook", "write_marking_pdf", "marking_pages", "write_template", "parse_worked"]
