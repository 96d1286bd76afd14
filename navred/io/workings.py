"""Reading hand workings: a cadet's lines beside their sights, in a table or on sight-book pages.

Edge code. A hand working is a sight log (the sight's own columns, read by
:func:`navred.read_sight_log` under the same rules as every log) with the cadet's lines beside it,
one column a line (:data:`WORKED_FORMS`), or a sight-book page of navred's template
(:mod:`navred.io.sightbook`), which is turned into the same table first. Each line is read with
navred's usual parsers, each distinct cell once; a line that cannot be read is listed with the
reason. Beside the lines a working may give its method, the compass bearing and the variation (for
a compass check), and the instructor's remarks, which navred keeps.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import parse_angle
from ..errors import NavredError
from ..marking import FINAL_LINES, LINE_NAMES, LINES, METHODS
from ..timescales import utc_jd_to_datetime64, utc_julian_date_from_components
from ..vocabulary import normalise_header
from .logbook import SightLog, read_sight_log, with_decimal_point
from .readers import RawTable, read_table
from .sightbook import is_page, page_sights

#: Each line of a working: how it is read, what it is, and the forms accepted (the template's notes).
WORKED_FORMS: dict[str, tuple[str, str, str]] = {
    "utc_worked": ("utc", "UTC of the sight as worked, with the Greenwich date",
                   "2026-03-26 09:10:07 (a T between, and a Z at the end, are taken too)"),
    "gha_hour_worked": ("angle", "GHA at the whole hour (GHA Aries for a star)", "123° 45.6′, 123 45.6, 123.76"),
    "increment_worked": ("arcmin", "the GHA increment for the minutes and seconds", "2° 23.5′ or 143.5′"),
    "v_corr_worked": ("arcmin", "v correction, ′ (Moon and planets)", "+3.1"),
    "sha_worked": ("angle", "SHA of the star", "258° 31.2′"),
    "gha_worked": ("angle", "GHA of the body (GHA Aries for Polaris by its tables)", "123° 45.6′"),
    "dec_hour_worked": ("dec", "Dec at the whole hour", "2° 14.7′ N"),
    "d_corr_worked": ("arcmin", "d correction, ′, signed as the declination moves (+ north)", "+0.2"),
    "dec_worked": ("dec", "Dec of the body", "2° 14.9′ N, 2 14.9 N"),
    "ic_worked": ("arcmin", "index correction, ′ (off the arc +)", "-1.4"),
    "dip_worked": ("arcmin", "dip, ′ (subtracted: negative)", "-2.9"),
    "ha_worked": ("signed", "apparent altitude Ha", "24° 58.8′"),
    "refraction_worked": ("arcmin", "refraction, ′ (negative)", "-2.1"),
    "sd_worked": ("arcmin", "semi-diameter, ′ (+ lower limb, - upper)", "+16.0"),
    "parallax_worked": ("arcmin", "parallax in altitude, ′: HP × cos of the altitude (the Moon, Venus, Mars)",
                        "+54.3"),
    "main_worked": ("arcmin", "main correction, ′: refraction, SD and parallax together; for the Moon by the "
                              "two-part table, its first correction", "+14.0, +1° 02.3′"),
    "hp_corr_worked": ("arcmin", "the Moon's HP correction, ′ (the two-part table's second correction, the L or U "
                                 "column)", "+4.6"),
    "upper_limb_worked": ("arcmin", "the Moon's upper limb: −30′ (the two-part table)", "-30"),
    "additional_worked": ("arcmin", "additional correction, ′ (the phase of Venus or Mars)", "+0.1"),
    "ho_worked": ("signed", "observed altitude Ho", "25° 12.8′"),
    "amplitude_worked": ("amplitude", "amplitude, named N or S (E or W before it may be written)",
                         "E 12.3 N, 12.3 N, W 5° 06′ S"),
    "ap_lat": ("lat", "assumed latitude (the DR's, worked from the DR)", "44° N, 44 00.0 N"),
    "ap_lon": ("lon", "assumed longitude (the DR's, worked from the DR)", "012° 04.7′ W"),
    "lha_worked": ("angle", "LHA (LHA Aries for Polaris)", "304, 304° 00.0′"),
    "ex_meridian_a_worked": ("arcsec", "the change of altitude in one minute from meridian passage, ″", "6.4"),
    "reduction_worked": ("arcmin", "reduction to the meridian, ′ (added)", "+3.7"),
    "meridian_altitude_worked": ("signed", "meridian altitude", "52° 14.6′"),
    "bearing_worked": ("bearing", "the body's bearing at meridian passage, N or S", "S, N, bears S"),
    "zenith_distance_worked": ("dec", "zenith distance, named N or S (opposite to the body's bearing)",
                               "37° 45.4′ N"),
    "polaris_corr_worked": ("arcmin", "Polaris correction, ′: the tables' a0 + a1 + a2 − 1°", "-23.4"),
    "latitude_worked": ("lat", "latitude", "43° 12.3′ N"),
    "tab_hc_worked": ("signed", "tabulated Hc at the whole degrees of Dec", "25° 03.1′"),
    "tab_d_worked": ("arcmin", "the tables' d, ′ for 1° of Dec, signed", "+42.6"),
    "tab_z_worked": ("degrees", "the tables' azimuth angle Z, degrees", "113.5"),
    "z_interpolated_worked": ("degrees", "Z interpolated for the minutes of Dec, degrees", "113.9"),
    "hc_correction_worked": ("arcmin", "the d correction of Hc, ′", "+9.8"),
    "hc_worked": ("signed", "computed altitude Hc", "25° 19.1′"),
    "zn_worked": ("degrees", "true azimuth Zn (the true bearing), degrees", "113.5, 113° 30′"),
    "compass_error_worked": ("named", "compass error, named E or W", "2.5 E, 1° 30′ W"),
    "deviation_worked": ("named", "deviation, named E or W", "1.0 W"),
    "intercept_worked": ("intercept", "intercept, nautical miles, TOWARD or AWAY", "3.2 toward, 3.2 T, 3.2 A, 6.3 away"),
    "fix_lat_worked": ("lat", "the latitude of the fix you plotted", "43° 16.4′ N"),
    "fix_lon_worked": ("lon", "the longitude of the fix you plotted", "013° 11.2′ W"),
}
assert tuple(WORKED_FORMS) == LINES

#: Columns a working may give beside its lines: the method, the compass bearing and variation of a
#: compass check, and the instructor's remarks (each header's spellings, normalised).
OBSERVATION_COLUMNS = {
    "method": ("method", "method_used"),
    "compass_bearing": ("compass_bearing", "compass", "bearing_by_compass", "compass_bearing_deg"),
    "variation": ("variation", "var", "magnetic_variation"),
    "remarks": ("remarks", "instructors_remarks", "instructor_remarks", "instructor", "remark"),
}
#: The words a method is written in, as a working names it.
METHOD_WORDS = {**{m: m for m in METHODS}, "ex_meridian": "ex-meridian", "exmeridian": "ex-meridian",
                "meridian_altitude": "meridian", "noon": "meridian", "pole_star": "polaris",
                "intercept_method": "intercept", "marcq_st_hilaire": "intercept"}


@dataclass
class Workings:
    """Hand workings as read: the log (every sight, the rejected rows) and each line's values per row."""

    log: SightLog
    given: dict[str, np.ndarray]  # line -> values in mark()'s units, one per row of log.table
    text: dict[str, np.ndarray]  # line -> the cell as written
    unreadable: pd.DataFrame  # source, row, line, value, reason
    cadet: np.ndarray  # the cadet of each row: the observer, else the sheet or file
    method: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))  # as stated ("" if not)
    compass_bearing_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    variation_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    remarks: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    #: (source, row) -> line -> the spreadsheet row of that line on a sight-book page
    line_rows: dict = field(default_factory=dict)


_INTERCEPT = re.compile(r"^\s*([+]?\d+(?:\.\d+)?)\s*(?:nm|n\.?m\.?|miles?|′|')?\s*"
                        r"(t|toward|towards|to|a|away|aw)?\s*$", re.IGNORECASE)
_ARCMIN = re.compile(r"^\s*([+\-−]?)\s*(\d+(?:\.\d+)?)\s*[′']?\s*$")
_ARCSEC = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*(?:″|\"|'')?\s*$")
_UTC = re.compile(r"^\s*(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2}(?:\.\d+)?))?\s*(Z|UTC|\+00:?00)?\s*$",
                  re.IGNORECASE)
_NAMED = re.compile(r"[EW]\s*$", re.IGNORECASE)
_AMPLITUDE = re.compile(r"^\s*([EW])\s*(?=\d)", re.IGNORECASE)
_BEARING = re.compile(r"^\s*(?:bears\s+)?(n|north|s|south)\s*$", re.IGNORECASE)


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
    if kind == "arcsec":
        found = _ARCSEC.match(with_decimal_point(value, decimal_comma))
        if not found:
            raise NavredError(f"cannot read {value!r} as seconds of arc; accepted: {example}")
        return float(found.group(1))
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
    if kind == "named":
        if not _NAMED.search(value):
            raise NavredError(f"{value!r} is not named: write E or W (compass least, error east), as {example}")
        return float(parse_angle(value, "lon", decimal_comma))
    if kind == "bearing":  # north 0°, south 180°
        found = _BEARING.match(value)
        if not found:
            raise NavredError(f"cannot read {value!r} as the body's bearing at meridian passage; accepted: {example}")
        return 0.0 if found.group(1).lower().startswith("n") else 180.0
    if kind == "amplitude":  # E or W before it says rising or setting; the value is its N or S
        return float(parse_angle(_AMPLITUDE.sub("", value), "dec", decimal_comma))
    if kind == "degrees":
        return float(parse_angle(value, "angle", decimal_comma))
    return float(parse_angle(value, kind, decimal_comma))


def _spellings() -> dict[str, str]:
    """Every header that names a line: its key (with or without _worked) and its sight-book name."""
    table = {}
    for key in LINES:
        table[key] = key
        table[key.removesuffix("_worked")] = key
        table[normalise_header(LINE_NAMES[key])] = key
    return table


_LINE_SPELLINGS = _spellings()
_OBSERVATION_SPELLINGS = {spelling: key for key, spellings in OBSERVATION_COLUMNS.items() for spelling in spellings}


def _column_key(header: str) -> str:
    """The line or observation a header names ('' for none): 'gha_worked', 'GHA increment', 'Remarks'."""
    name = normalise_header(re.sub(r"\s*\([^)]*\)\s*$", "", str(header)))
    return _LINE_SPELLINGS.get(name) or _OBSERVATION_SPELLINGS.get(name, "")


def _compass_checks_without_altitude(table: RawTable) -> RawTable:
    """A compass check takes no altitude, but the log's reader needs a sight's Hs and, for a sea horizon, its
    height of eye: a compass working's blank Hs and height of eye are read as 0 (no altitude line of a compass
    working is judged, and nothing is built on its Hs)."""
    keys = [_column_key(h) for h in table.header]
    compass = [k for k, key in enumerate(keys) if key in ("amplitude_worked", "compass_error_worked",
                                                           "deviation_worked")]
    methods = [k for k, key in enumerate(keys) if key == "method"]
    if not (compass or methods):
        return table
    header, columns = list(table.header), list(table.columns)

    def filled(k):
        return np.array([str(v).strip() not in ("", "nan", "None", "NaT") for v in columns[k].tolist()])

    is_compass = np.zeros(table.n_rows, dtype=bool)
    for k in compass:
        is_compass |= filled(k)
    for k in methods:
        words = np.array([METHOD_WORDS.get(normalise_header(v), "") for v in columns[k].astype(str).tolist()])
        is_compass |= np.isin(words, ["amplitude", "azimuth"])
    if not is_compass.any():
        return table
    changed = False
    for spellings, name in ((("hs", "sextant_altitude", "sextant_alt", "sextant_reading"), "hs"),
                            (("eye_height", "height_of_eye", "hoe", "eye"), "eye_height_m")):
        found = [k for k, h in enumerate(header)
                 if normalise_header(re.sub(r"\s*[(\[].*$", "", str(h))) in spellings or normalise_header(h) == name]
        if not found:  # no such column at all (a page of compass checks): one of blanks
            header.append(name)
            columns.append(pd.Series([None] * table.n_rows, dtype=object))
            found = [len(header) - 1]
        blank = is_compass & ~filled(found[0])
        if blank.any():
            column = columns[found[0]].astype(object).copy()
            column[blank] = "0"
            columns[found[0]] = column
            changed = True
    if not changed:
        return table
    return RawTable(table.source, header, columns, table.row_numbers, table.row_problems, table.separator,
                    table.decimal_comma, table.empty_rows, table.malformed_cells)


def read_workings(source: object, *, dates: str | None = None, rates: object | None = None) -> Workings:
    """Read hand workings: a file, a folder of them, a workbook with a sheet per cadet, or sight-book pages.

    The sight's own columns go through :func:`navred.read_sight_log` (every rule of the sight
    log); the worked lines are its extra columns, each distinct cell read once. A row whose
    sight cannot be read is rejected there; a line that cannot be read is listed in
    ``unreadable`` (and marked wrong, with the reason). ``rates``: the rating log's fit, for workings kept in
    zone time by a rated timepiece (as for every log).
    """
    tables, line_rows, pages = [], {}, []
    for table in read_table(source, all_sheets=True):
        if is_page(table):
            pages.append(table.source)
            table, rows = page_sights(table)
            line_rows.update(rows)
            if table is None:  # a page of the sight book not filled in
                continue
        tables.append(_compass_checks_without_altitude(table))
    if not tables:
        raise NavredError(f"no working is filled in on the sight book's pages ({', '.join(map(source_name, pages))}): "
                          "fill a block of a page (the sight and your lines) and mark it again")
    # the lines, the method, the compass's and the remarks' columns are read here, not noted as unread
    own = [header for table in tables for header in table.header if _column_key(header)]
    log = read_sight_log(tables, dates=dates, rates=rates, also_reads=own)
    table = log.table
    n = len(table)
    headers: dict[str, str] = {}
    for column in log.extra_columns:
        key = _column_key(column)
        if key and key not in headers:
            headers[key] = column
    if not any(line in headers for line in FINAL_LINES):
        raise NavredError(f"the workings have no column for an intercept, a latitude or a compass error (every working "
                          f"ends in one; see docs/marking.md); their columns: {', '.join(log.extra_columns) or 'none'}")
    given: dict[str, np.ndarray] = {}
    text: dict[str, np.ndarray] = {}
    problems = []
    # a file whose separator allows a decimal comma gives every column, the worked lines too, with one
    commas = {t.source: t.decimal_comma for t in log.tables}
    comma = table["source"].map(commas).fillna(False).to_numpy(dtype=bool)
    for line, column in headers.items():
        if line not in WORKED_FORMS:
            continue
        cells = _cells(table[column])
        text[line] = cells
        codes, distinct = pd.factorize(pd.Series(cells, dtype=object) + np.where(comma, "\x00,", "\x00."))
        out = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]") if line == "utc_worked" else np.full(n, np.nan)
        for u, keyed in enumerate(distinct.tolist()):
            cell, flag = keyed[:-2], keyed[-1] == ","
            if not str(cell).strip():
                continue
            try:
                out[codes == u] = parse_worked(line, str(cell), flag)
            except (NavredError, ValueError) as exc:
                for i in np.flatnonzero(codes == u).tolist():
                    problems.append((table["source"].iloc[i], int(table["row"].iloc[i]), line, cells[i], str(exc)))
        given[line] = out
    method = np.full(n, "", dtype=object)
    if "method" in headers:
        for i, word in enumerate(_cells(table[headers["method"]]).tolist()):
            if word.strip():
                method[i] = METHOD_WORDS.get(normalise_header(word), "?" + word)
    bearing = _observations(table, headers.get("compass_bearing"), "angle", problems, "compass bearing", comma)
    variation = _observations(table, headers.get("variation"), "variation", problems, "variation", comma)
    remarks = _cells(table[headers["remarks"]]) if "remarks" in headers else np.full(n, "", dtype=object)
    unreadable = pd.DataFrame(problems, columns=["source", "row", "line", "value", "reason"])
    return Workings(log, given, text, unreadable, _cadets(table, set(pages)), method, bearing, variation, remarks,
                    line_rows)


def _cells(column: pd.Series) -> np.ndarray:
    return np.array(["" if v is None or (isinstance(v, float) and v != v) else str(v) for v in column.tolist()],
                    dtype=object)


def _observations(table: pd.DataFrame, column: str | None, kind: str, problems: list, name: str,
                  comma: np.ndarray) -> np.ndarray:
    """A compass bearing (degrees) or a variation (named E or W: east +) per row; NaN where not given."""
    out = np.full(len(table), np.nan)
    if column is None:
        return out
    for i, cell in enumerate(_cells(table[column]).tolist()):
        if not cell.strip():
            continue
        try:
            if kind == "variation":
                if not _NAMED.search(cell):
                    raise NavredError(f"{cell!r} is not named: write the variation E or W, as 4 W or 3° 30′ E")
                out[i] = float(parse_angle(cell, "lon", bool(comma[i])))
            else:
                out[i] = float(parse_angle(cell, "angle", bool(comma[i])))
        except (NavredError, ValueError) as exc:
            problems.append((table["source"].iloc[i], int(table["row"].iloc[i]), name, cell, str(exc)))
    return out


def _cadets(table: pd.DataFrame, pages: set[str] = frozenset()) -> np.ndarray:
    """Each row's cadet: the observer as written, else the sheet of a class workbook, else the file (a sight
    book's pages are its methods, not its cadets: the book's file names the cadet)."""
    observers = table["observer"].astype(str).to_numpy(dtype=object) if "observer" in table else \
        np.full(len(table), "", dtype=object)
    sources = table["source"].astype(str).to_numpy(dtype=object)
    named = []
    for source in sources.tolist():
        sheet = re.search(r"\s\(sheet '(.*)'\)$", source)
        if sheet and source not in pages:
            named.append(sheet.group(1))
        else:
            named.append(Path(source[: sheet.start()] if sheet else source).stem)
    return np.where(observers != "", observers, np.array(named, dtype=object))


def source_name(source: str) -> str:
    """A source as a cadet reads it: the file's name (and its sheet), never the folders it lies in."""
    sheet = re.search(r"\s\(sheet '.*'\)$", str(source))
    path = str(source)[: sheet.start()] if sheet else str(source)
    return Path(path).name + (sheet.group(0) if sheet else "") if path not in ("(table)", "") else path


__all__ = ["WORKED_FORMS", "OBSERVATION_COLUMNS", "METHOD_WORDS", "Workings", "parse_worked", "read_workings",
           "source_name"]
