"""Reading and validating a voyage's sight log (CSV or .xlsx): the good rows and the rejected ones.

Edge code: it does the file I/O and uses pandas; every value is checked with the core's
own parsers. Nothing is lost: each data row is either in ``sights`` or, with every problem
found in it, in ``rejected`` (row number in the file, column, value, reason).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd

from .angles import parse_angle
from .corrections import parse_index_error_arcmin
from .errors import NavredError
from .stars import canonical_body_name
from .timescales import utc_jd_to_datetime64, utc_julian_date

REJECTED_COLUMNS = ["row", "column", "value", "reason"]
REQUIRED = ("body", "hs", "dr_lat", "dr_lon")
KNOWN = ("utc", "date", "zone_time", "zone_description", "chronometer_error_s", "body", "limb", "hs",
         "index_error_arcmin", "eye_height_m", "horizon", "temperature_c", "pressure_hpa", "dr_lat",
         "dr_lon", "course_deg", "speed_kn", "fix_group", "vessel", "observer", "voyage", "chart_lat",
         "chart_lon", "dut1_s", "series")
#: Sights closer together than this fall in one fix group when the log gives none (issue 5).
DEFAULT_GROUP_GAP_HOURS = 2.0


class LogbookError(NavredError):
    """A file that is not a readable sight log at all."""


def _read_raw(path: Path) -> pd.DataFrame:
    if not path.is_file():
        raise LogbookError(f"no such file: {path}")
    if path.stat().st_size == 0:
        raise LogbookError(f"{path} is empty: a sight log needs a header row and one row per sight")
    head = path.read_bytes()[:4096]
    suffix = path.suffix.lower()
    if suffix in (".xlsx", ".xlsm"):
        if not head.startswith(b"PK"):
            raise LogbookError(f"{path} is named .xlsx but is not a spreadsheet file")
        return _read_xlsx(path)
    if b"\x00" in head or head.startswith(b"PK"):
        raise LogbookError(f"{path} is not a text CSV file (it looks binary); save the log as CSV or .xlsx")
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        text = path.read_text(encoding="latin-1")
    try:
        from io import StringIO

        frame = pd.read_csv(StringIO(text), dtype=str, keep_default_na=False, skip_blank_lines=True)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, ValueError) as exc:
        raise LogbookError(f"{path} cannot be read as CSV: {str(exc).splitlines()[0]}") from None
    return frame


def _read_xlsx(path: Path) -> pd.DataFrame:
    import openpyxl

    try:
        book = openpyxl.load_workbook(path, read_only=False, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds for a damaged file
        raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
    sheet = book["sights"] if "sights" in book.sheetnames else book.worksheets[0]
    merged_header = [str(r) for r in sheet.merged_cells.ranges if r.min_row == 1]
    if merged_header:
        raise LogbookError(f"{path}, sheet {sheet.title!r}: the header row has merged cells "
                           f"({', '.join(merged_header)}); give each column its own header cell")
    rows = list(sheet.iter_rows(values_only=True))
    if not rows:
        raise LogbookError(f"{path}, sheet {sheet.title!r} is empty")
    header = ["" if h is None else str(h) for h in rows[0]]
    while header and header[-1] == "":
        header.pop()
    body = [list(r[: len(header)]) for r in rows[1:] if any(v not in (None, "") for v in r)]
    frame = pd.DataFrame(body, columns=header, dtype=object)
    for column in frame.columns:
        frame[column] = frame[column].map(_cell_text)
    return frame


def _cell_text(value) -> str:
    """A spreadsheet cell as the text a navigator typed (dates and times in ISO form)."""
    if value is None:
        return ""
    if hasattr(value, "isoformat"):
        return value.isoformat()
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def _normalise_columns(frame: pd.DataFrame, path: Path) -> pd.DataFrame:
    names = [str(c).strip().lower().replace(" ", "_") for c in frame.columns]
    if any(n == "" or n.startswith("unnamed:") for n in names[: max(1, len(names))]) and \
            not any(n in KNOWN for n in names):
        raise LogbookError(f"{path} has no header row navred recognises; the first row must name the "
                           f"columns (required: utc or date/zone_time/zone_description, {', '.join(REQUIRED)})")
    duplicates = sorted({n for n in names if names.count(n) > 1 and n})
    if duplicates:
        raise LogbookError(f"{path}: column(s) {', '.join(duplicates)} appear more than once (names are "
                           "case-insensitive)")
    frame = frame.copy()
    frame.columns = names
    has_time = "utc" in names or {"date", "zone_time", "zone_description"} <= set(names)
    missing = [c for c in REQUIRED if c not in names]
    if not has_time:
        missing.insert(0, "utc (or date, zone_time and zone_description)")
    if missing and len(set(names) & set(KNOWN)) < 2:
        raise LogbookError(f"{path} is not a sight log: none of its columns ({', '.join(names[:8])}) are "
                           f"sight-log columns; required: {', '.join(missing)} (see docs/sight-log.md)")
    frame.attrs["missing_columns"] = missing
    return frame


_ZONE = re.compile(r"^\s*([+-]?)\s*(\d{1,2})(?::?(\d{2}))?\s*[a-z]?\s*$", re.IGNORECASE)


def _zone_hours(text: str) -> float:
    """Zone description in hours: '+3', '-10', '+5:30', '+3 C' (ZT + ZD = UTC)."""
    match = _ZONE.match(text)
    if not match:
        raise NavredError(f"zone description {text!r} is not a signed whole hour such as +3 or -10")
    hours = int(match.group(2)) + (int(match.group(3)) / 60 if match.group(3) else 0.0)
    if hours > 14:
        raise NavredError(f"zone description {text!r} is outside -12 to +14 hours")
    return -hours if match.group(1) == "-" else hours


def _iso_utc(row: pd.Series, columns: set[str]) -> str:
    """The row's instant as an ISO 8601 UTC string, or raise with the reason."""
    if "utc" in columns and str(row["utc"]).strip():
        text = str(row["utc"]).strip()
        utc_julian_date(text)  # checks zone, calendar, span
        stamp = _to_timestamp(text)
    else:
        date, zone_time, zone = (str(row.get(c, "")).strip() for c in ("date", "zone_time", "zone_description"))
        if not (date and zone_time and zone):
            raise NavredError("no time: give utc, or date with zone_time and zone_description")
        zd = _zone_hours(zone)
        local = pd.Timestamp(f"{date[:10]}T{zone_time}")
        stamp = (local + pd.Timedelta(hours=zd)).tz_localize("UTC")
        utc_julian_date(stamp)
    if "chronometer_error_s" in columns and str(row["chronometer_error_s"]).strip():
        error_s = float(row["chronometer_error_s"])
        if not np.isfinite(error_s) or abs(error_s) > 3600:
            raise NavredError(f"chronometer error {row['chronometer_error_s']!r} s is outside ±3600 s")
        stamp = stamp - pd.Timedelta(seconds=error_s)  # a fast chronometer reads ahead of UTC
    return stamp.strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def _to_timestamp(text: str) -> pd.Timestamp:
    if re.search(r":60(\.\d*)?", text):
        # a leap second: pandas has no 23:59:60; keep the last representable instant of the second
        text = re.sub(r":60(\.\d*)?", ":59.999999", text)
    return pd.Timestamp(text).tz_convert("UTC")


_CHECKS = {
    "hs": lambda v: _range(parse_angle(v, "angle"), 0.0, 90.0, "Hs must lie in 0-90°"),
    "dr_lat": lambda v: parse_angle(v, "lat"),
    "dr_lon": lambda v: parse_angle(v, "lon"),
    "chart_lat": lambda v: parse_angle(v, "lat"),
    "chart_lon": lambda v: parse_angle(v, "lon"),
    "index_error_arcmin": parse_index_error_arcmin,
    "eye_height_m": lambda v: _range(_number(v), 0.0, 1000.0, "height of eye must be 0-1000 m"),
    "temperature_c": lambda v: _range(_number(v), -50.0, 60.0, "temperature must be -50 to +60 °C"),
    "pressure_hpa": lambda v: _range(_number(v), 850.0, 1100.0, "pressure must be 850-1100 hPa"),
    "course_deg": lambda v: _range(_number(v), 0.0, 360.0, "course must be 0-360°"),
    "speed_kn": lambda v: _range(_number(v), 0.0, 60.0, "speed must be 0-60 knots"),
    "dut1_s": lambda v: _range(_number(v), -0.9, 0.9, "DUT1 must be within ±0.9 s"),
    "limb": lambda v: _word(v, {"lower", "ll", "l", "upper", "ul", "u", "centre", "center", "c"},
                            "limb must be lower, upper or centre (LL/UL accepted)"),
    "horizon": lambda v: _word(v, {"sea", "natural", "artificial", "bubble", "mercury"},
                               "horizon must be sea or artificial"),
}


def _number(value) -> float:
    try:
        number = float(str(value).replace(",", "."))
    except ValueError:
        raise NavredError(f"{value!r} is not a number") from None
    if not np.isfinite(number):
        raise NavredError(f"{value!r} is not a finite number")
    return number


def _range(number: float, low: float, high: float, message: str) -> float:
    if not low <= number <= high:
        raise NavredError(f"{message}; got {number:g}")
    return number


def _word(value, accepted: set[str], message: str) -> str:
    word = str(value).strip().lower()
    if word not in accepted:
        raise NavredError(f"{message}; got {value!r}")
    return word


def read_sight_log(path: str | Path) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Read and validate a sight log: (sights, rejected), two DataFrames.

    ``sights`` holds the rows with no problem, ready for :func:`navred.reduce_sights`:
    lower-case column names, ``utc`` as ISO 8601 UTC text (made from ``date``,
    ``zone_time`` and ``zone_description`` when the log keeps zone time, corrected for
    ``chronometer_error_s``), ``body`` in catalogue spelling, ``fix_group`` filled in
    (sights within two hours of each other when the log has none), every other column
    as read, and ``row``, the 1-based data row in the file. ``rejected`` has one line per
    problem: ``row``, ``column``, ``value`` and ``reason``. A file that is not a sight log
    at all raises :class:`LogbookError`.
    """
    file = Path(path)
    raw = _read_raw(file)
    if raw.shape[1] == 0 or (len(raw) == 0 and raw.shape[1] <= 1):
        raise LogbookError(f"{file} has no columns: a sight log needs a header row")
    frame = _normalise_columns(raw, file)
    columns = set(frame.columns)
    n = len(frame)
    problems: list[tuple[int, str, str, str]] = []
    for column in frame.attrs.get("missing_columns", []):
        for i in range(n):
            problems.append((i, column.split(" ")[0], "", f"required column {column} is missing"))
    utc = _utc_column(frame, columns, problems)
    bodies = np.full(n, "", dtype=object)
    if "body" in columns:
        names = frame["body"].astype(str).str.strip()
        for spelling, rows in _distinct(names):
            try:
                bodies[rows] = canonical_body_name(spelling)
            except NavredError as exc:
                problems.extend((i, "body", spelling, str(exc)) for i in rows)
    # every other column: each distinct value is checked once (a log repeats its heights of eye,
    # limbs and index errors), and its verdict applied to the rows that hold it
    for column, check in _CHECKS.items():
        if column not in columns:
            continue
        for value, rows in _distinct(frame[column].astype(str)):
            if value.strip() == "":
                if column in REQUIRED:
                    problems.extend((i, column, "", f"{column} is empty") for i in rows)
                continue
            try:
                check(value)
            except NavredError as exc:
                problems.extend((i, column, value, str(exc)) for i in rows)
    eye = frame["eye_height_m"].astype(str).str.strip() if "eye_height_m" in columns else pd.Series("", index=frame.index)
    horizon = frame["horizon"].astype(str).str.strip().str.lower() if "horizon" in columns else \
        pd.Series("sea", index=frame.index)
    no_eye = (eye == "").to_numpy() & ~horizon.isin(["artificial", "bubble", "mercury"]).to_numpy()
    problems.extend((i, "eye_height_m", "", "height of eye is needed for the dip of a sea horizon")
                    for i in np.flatnonzero(no_eye))
    rejected = pd.DataFrame(problems, columns=REJECTED_COLUMNS)
    rejected["row"] = rejected["row"] + 1
    bad_rows = set(rejected["row"] - 1)
    keep = ~np.isin(np.arange(n), list(bad_rows))
    sights = frame[keep].copy()
    sights["utc"] = utc[keep]
    sights["body"] = bodies[keep]
    sights.insert(0, "row", np.flatnonzero(keep) + 1)
    sights = sights.reset_index(drop=True)
    sights["fix_group"] = _fix_groups(sights)
    return sights, rejected.sort_values(["row"], kind="stable").reset_index(drop=True)


def _distinct(values: pd.Series):
    """(value, row numbers) for each distinct value of a column."""
    codes, uniques = pd.factorize(values, sort=False)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(len(uniques) + 1))
    for k, value in enumerate(uniques):
        yield value, order[bounds[k]:bounds[k + 1]]


def _utc_column(frame: pd.DataFrame, columns: set[str], problems: list) -> np.ndarray:
    """Every row's instant as ISO 8601 UTC text ('' where it cannot be read; the reason noted).

    The whole column is read at once; only when that fails are the rows read one by one
    to find which, and why.
    """
    n = len(frame)
    out = np.full(n, "", dtype=object)
    if not ("utc" in columns or {"date", "zone_time", "zone_description"} <= columns):
        return out
    if "utc" in columns and "chronometer_error_s" not in columns and "date" not in columns:
        text = frame["utc"].astype(str).str.strip().to_numpy(dtype=object)
        try:
            # a leap second 23:59:60.x comes back as 23:59:59.999999, as the row-by-row path gives it
            stamps = utc_jd_to_datetime64(*utc_julian_date(text))
            out[:] = [f"{v}Z" for v in np.datetime_as_string(stamps, unit="us")]
            return out
        except NavredError:
            pass  # some rows are bad: read them one by one below
    for i in range(n):
        row = frame.iloc[i]
        try:
            out[i] = _iso_utc(row, columns)
        except (NavredError, ValueError) as exc:
            column = "utc" if "utc" in columns and str(row.get("utc", "")).strip() else "zone_time"
            problems.append((i, column, str(row.get(column, "")), str(exc)))
    return out


def _fix_groups(sights: pd.DataFrame) -> pd.Series:
    """The log's fix groups; where a row has none, sights of one vessel within two hours of
    each other form a group, named after the time of its first sight."""
    if len(sights) == 0:
        return pd.Series([], dtype=object)
    given = (sights["fix_group"].astype(str).str.strip() if "fix_group" in sights.columns
             else pd.Series("", index=sights.index)).to_numpy(dtype=object)
    if (given != "").all():
        return pd.Series(given, index=sights.index)
    times = pd.to_datetime(sights["utc"], utc=True).to_numpy()
    vessel = (sights["vessel"].astype(str) if "vessel" in sights.columns
              else pd.Series("", index=sights.index)).to_numpy(dtype=object)
    order = np.lexsort((times, vessel))
    gap = np.diff(times[order]) > np.timedelta64(int(DEFAULT_GROUP_GAP_HOURS * 3600), "s")
    new_vessel = vessel[order][1:] != vessel[order][:-1]
    ids = np.empty(len(order), dtype=int)
    ids[order] = np.concatenate([[0], np.cumsum(gap | new_vessel)])
    first_time = {}
    for i in order:
        first_time.setdefault(ids[i], pd.Timestamp(times[i]).strftime("%Y-%m-%d %H%MZ"))
    automatic = np.array([first_time[g] for g in ids], dtype=object)
    return pd.Series(np.where(given != "", given, automatic), index=sights.index)
