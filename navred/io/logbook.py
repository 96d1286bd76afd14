"""The one way in: read a sight log (or several) into parsed sights, the text as read, and the rejected rows.

Every command and the Python API read logs here, with the same rules, so the same log
gives the same sights whichever reads it. :func:`read_sight_log` takes a CSV file (comma,
semicolon or tab separated, with decimal commas where the separator allows them), an
.xlsx workbook (navred's own included), a list of files, a folder of logs, or a pandas
DataFrame; it reads each file once and parses each distinct value once.

Every data row is named by one number everywhere: its row number as a spreadsheet shows it
(the header is row 1 when it is the first line), with its file when several are read. Each
row ends up accepted (in ``sights``) or rejected, with every problem found naming its
column, its value and the reason; empty rows are skipped and counted. A row's verdict
depends on that row alone.

Edge code (pandas); every value is checked with the parsers of the core and of
:mod:`navred.timework`, and the words and units come from :mod:`navred.vocabulary`.
"""

from __future__ import annotations

import datetime as _dt
import functools
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import parse_angle, parse_angles_fast
from ..corrections import HIGHEST_READING_DEG, parse_index_error_arcmin
from ..errors import NavredError, api_boundary
from ..stars import canonical_body_name
from ..timescales import (
    instant_components,
    iso_z_datetime64,
    utc_jd_to_datetime64,
    utc_julian_date_from_components,
    utc_minus_seconds,
)
from ..timework import (
    DATE_ORDERS,
    iso_instant_text,
    parse_date,
    parse_time_of_day,
    parse_watch_error_s,
    parse_zone_description,
)
from ..vocabulary import (
    BOOKKEEPING_HEADERS,
    COLUMN,
    COLUMNS,
    ENTRIES,
    HORIZONS,
    LIMBS,
    NO_HORIZON,
    OUTPUT_SUFFIX,
    OWN_COLUMN_HINT,
    RESULT_COLUMNS,
    UNIT_CONVERSIONS,
    UNIT_NAMES,
    convert_to_working_unit,
    match_header,
    normalise_header,
    unknown_header_refusal,
)
from .readers import (
    REJECTED_COLUMNS,
    LogbookError,
    LogSource,
    MissingFormulaValue,
    RawTable,
    ReadBudget,
    blank_mask,
    plain_csv_blocks,
    read_table,
)
from .timesignals import Ratings

#: Sights closer together than this fall in one fix group when the log gives none (issue 5).
DEFAULT_GROUP_GAP_HOURS = 2.0
#: A utc and a zone time given for one sight must agree this closely (seconds).
TIME_AGREEMENT_S = 1.0

#: The parsed columns of every sight, in order (documented in docs/sight-log.md).
SIGHT_COLUMNS = [
    "source", "row", "sight_utc", "utc_jd1", "utc_jd2", "time_given", "time_as_read", "watch_error_applied_s",
    "watch_error_from", "timepiece",
    "zone_date_used", "zone_time_corrected", "zone_description_used_h", "greenwich_date", "body_name", "limb",
    "hs_deg", "index_error_arcmin", "eye_height_m", "eye_height_as_given", "horizon", "waterline_distance_nm",
    "measured_dip_arcmin", "temperature_c",
    "temperature_as_given", "pressure_hpa", "pressure_as_given", "dr_lat_deg", "dr_lon_deg", "course_deg",
    "speed_kn", "dut1_given_s", "fix_group", "fix_group_given", "chart_lat_deg", "chart_lon_deg", "vessel",
    "observer", "voyage", "series", "read_problem", "read_problem_column", "dr_carried_from", "motion_carried_from",
]
#: The columns of a log's entries (:attr:`SightLog.entries`).
ENTRY_COLUMNS = ["source", "row", "utc", "entry", "lat_deg", "lon_deg", "course_deg", "speed_kn", "set_deg",
                 "drift_kn", "vessel"]

#: navred's own output (``reduce --csv``) read back: its parsed columns that carry a sight, and their keys.
_OUTPUT_COLUMNS = {"sight_utc": "utc", "body_name": "body", "limb": "limb", "hs_deg": "hs",
                   "index_error_arcmin": "index_error", "eye_height_m": "eye_height", "horizon": "horizon",
                   "waterline_distance_nm": "waterline_distance", "measured_dip_arcmin": "measured_dip",
                   "temperature_c": "temperature", "pressure_hpa": "pressure", "dr_lat_deg": "dr_lat",
                   "dr_lon_deg": "dr_lon", "course_deg": "course", "speed_kn": "speed", "dut1_given_s": "dut1",
                   "fix_group": "fix_group", "chart_lat_deg": "chart_lat", "chart_lon_deg": "chart_lon",
                   "vessel": "vessel", "observer": "observer", "voyage": "voyage", "series": "series"}
_OUTPUT_UNITS = {"eye_height": "m", "temperature": "c", "pressure": "hpa"}


@dataclass(frozen=True)
class SightLog:
    """A read sight log: every data row parsed, the text as read, and the problems found."""

    #: every data row, in file order: the parsed columns (:data:`SIGHT_COLUMNS`) and the log's own
    #: extra columns as text; a row with a problem has its reasons in ``read_problem``
    table: pd.DataFrame
    #: one line per problem: source, row, column (as the log names it), value (as written), reason
    rejected: pd.DataFrame
    sources: tuple[str, ...]
    empty_rows: int
    dates: str | None = None
    extra_columns: tuple[str, ...] = field(default=())
    tables: tuple[RawTable, ...] = field(default=(), repr=False)
    #: the entries of the ship's progress read well (departure, position, course, current), in file order:
    #: :data:`ENTRY_COLUMNS`; they are not sights and are not in ``table``
    entries: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=ENTRY_COLUMNS))
    #: what the navigator should know of the files as a whole: the columns navred does not read (kept as
    #: text), columns repeated, a file read as Windows-1252; every command prints them, the workbook keeps them
    notes: tuple[str, ...] = field(default=())

    @functools.cached_property
    def as_read(self) -> pd.DataFrame:
        """Every data row exactly as read (text, or the spreadsheet's cells), with its file and row."""
        return _as_read(self.tables)

    @property
    def sights(self) -> pd.DataFrame:
        """The accepted rows: those with no problem."""
        return self.table[self.table["read_problem"] == ""].reset_index(drop=True)

    @property
    def n_rejected_rows(self) -> int:
        return int((self.table["read_problem"] != "").sum())

    def summary(self) -> str:
        files = f" from {len(self.sources)} files" if len(self.sources) > 1 else ""
        empty = f", {self.empty_rows} empty row{'s' if self.empty_rows > 1 else ''} skipped" if self.empty_rows else ""
        return (f"{len(self.table)} rows read{files}: {len(self.table) - self.n_rejected_rows} sights, "
                f"{self.n_rejected_rows} rejected{empty}")


class _Problems:
    """The problems found, one entry per (row, column), collected column by column; at most
    :data:`MAX_REASONS_PER_ROW` kept a row (the first found), the others counted by their columns (so that a
    log wrong in every cell costs a few entries a row, not a dozen)."""

    def __init__(self, n: int):
        self.n = n
        self.rows: list[np.ndarray] = []
        self.columns: list[np.ndarray] = []
        self.values: list[np.ndarray] = []
        self.reasons: list[np.ndarray] = []
        self.count = np.zeros(n, dtype=np.int32)
        self.more: dict[int, list[str]] = {}  # row -> the columns of its problems not kept

    def add(self, rows, column, value, reason) -> None:
        rows = np.asarray(rows, dtype=int).ravel()
        if rows.size == 0:
            return
        items = []
        for item in (column, value, reason):
            array = np.empty(rows.size, dtype=object)
            array[:] = item if isinstance(item, str) else list(np.asarray(item, dtype=object).ravel())
            items.append(array)
        before = self.count[rows]
        np.add.at(self.count, rows, 1)
        keep = before < MAX_REASONS_PER_ROW
        if not keep.all():
            for row, name in zip(rows[~keep].tolist(), items[0][~keep].tolist()):
                self.more.setdefault(row, []).append(str(name))
            rows = rows[keep]
            items = [a[keep] for a in items]
        self.rows.append(rows)
        for target, array in zip((self.columns, self.values, self.reasons), items):
            target.append(array)

    def mask(self) -> np.ndarray:
        """The rows with a problem so far."""
        return self.count > 0

    def frame(self) -> pd.DataFrame:
        """Every problem kept, in row order (within a row, in the order found); the last kept of a row with more
        counts the others and names their columns."""
        if not self.rows:
            return pd.DataFrame({"index": np.zeros(0, dtype=int), "column": [], "value": [], "reason": []})
        frame = pd.DataFrame({"index": np.concatenate(self.rows), "column": np.concatenate(self.columns),
                              "value": np.concatenate(self.values), "reason": np.concatenate(self.reasons)})
        frame = frame.sort_values(["index"], kind="stable").reset_index(drop=True)
        if self.more:
            index = frame["index"].to_numpy()
            last = np.flatnonzero(np.append(index[1:] != index[:-1], True))
            reasons = frame["reason"].to_numpy(dtype=object).copy()
            for at in last.tolist():
                others = self.more.get(int(index[at]))
                if others:
                    names = ", ".join(dict.fromkeys(others))
                    reasons[at] = (f"{reasons[at]} (and {len(others)} more column{'s' if len(others) > 1 else ''} "
                                   f"with a problem: {names})")
            frame["reason"] = reasons
        return frame


def _blank(value) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


def _text(value) -> str:
    """A cell as text, the way a person typed it (a whole number without '.0')."""
    if value is None:
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if isinstance(value, _dt.datetime):
        return value.isoformat(sep=" ")
    return str(value)


def _cell_texts(values: pd.Series) -> np.ndarray:
    """Every cell of a column as text, as :func:`_text` writes it (each distinct value once)."""
    if pd.api.types.is_datetime64_any_dtype(values.dtype):
        stamps = values.dt.tz_convert(None) if values.dt.tz is not None else values
        text = np.datetime_as_string(stamps.to_numpy().astype("datetime64[us]")).astype(object)
        return np.where(values.isna().to_numpy(), "", np.char.replace(text.astype(str), "T", " ")).astype(object)
    codes, uniques = pd.factorize(values, use_na_sentinel=True)
    texts = np.array([_text(u) for u in uniques] + [""], dtype=object)
    return texts[codes]


def with_decimal_point(text: str, decimal_comma: bool) -> str:
    """A number's text with its decimal comma made a point, where the file's separator allows a decimal
    comma; elsewhere a comma is refused as ambiguous (a decimal comma, or two values?)."""
    if "," not in text:
        return text
    if not decimal_comma:
        raise NavredError(f"{text!r}: a comma here is ambiguous (a decimal comma, or two values?); write the "
                          "decimal with a point")
    if "." in text or text.count(",") > 1:
        raise NavredError(f"{text!r} has both a decimal comma and a point")
    return text.replace(",", ".")


def _number(value, decimal_comma: bool) -> float:
    if isinstance(value, bool) or isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r} is not a number")
    if isinstance(value, (int, float)):
        number = float(value)
    else:
        text = with_decimal_point(str(value).strip(), decimal_comma)
        try:
            number = float(text)
        except ValueError:
            raise NavredError(f"{value!r} is not a number") from None
    if not np.isfinite(number):
        raise NavredError(f"{value!r} is not a finite number")
    return number


def _word(value, table: dict, what: str) -> str:
    word = normalise_header(_text(value))
    if word not in table:
        accepted = ", ".join(sorted({k for k in table if k}))
        raise NavredError(f"{what} {value!r} is not one navred knows; accepted: {accepted}")
    return table[word]


def _horizon(value) -> str:
    """The horizon a sight was taken on; a word saying there was none is refused with what to write."""
    if normalise_header(_text(value)) in NO_HORIZON:
        raise NavredError(f"horizon {value!r}: every altitude is measured from a horizon of some kind: write bubble "
                          "(a bubble or other built-in horizon), artificial (a reflecting one), or sea (or leave the "
                          "cell blank) for the sea horizon")
    return _word(value, HORIZONS, "horizon")


def _ranged(number: float, key: str, unit: str | None) -> float:
    column = COLUMN[key]
    used = convert_to_working_unit(number, unit)
    if (column.low is not None and used < column.low) or (column.high is not None and used > column.high):
        working = UNIT_NAMES.get(column.units[0], "") if column.units else "°"
        shown = f"{number:g} {UNIT_NAMES[unit]} ({used:.4g} {working})" if unit and unit != column.units[0] \
            else f"{number:g}"
        raise NavredError(f"{key.replace('_', ' ')} {shown} is outside {column.low:g} to {column.high:g} {working}")
    return used


def _utc_components(value, dates):
    """(y, m, d, h, mi, s, offset minutes) of a value in the utc column."""
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}: the instant is unknown")
    if isinstance(value, _dt.datetime):
        if value.tzinfo is None:  # a spreadsheet date-time cell: the column's name says UTC
            value = value.replace(tzinfo=_dt.timezone.utc)
    elif isinstance(value, _dt.date):
        raise NavredError(f"{value} is a date without a time of day; give the instant in the utc column "
                          "(2026-03-26T19:41:00Z), or zone_time with zone_description")
    elif isinstance(value, (int, float)):
        raise NavredError(f"{value!r} is a number, not an instant: format the cell as a date-time, or write "
                          "2026-03-26T19:41:00Z")
    elif isinstance(value, str):
        value = iso_instant_text(value.strip(), dates)
    return tuple(float(np.asarray(c)) for c in instant_components(value))


def _parse_time_cell(value):
    """(h, m, s, y, mo, d) of a zone-time cell (a date-time cell carries its date; NaN for none)."""
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        raise NavredError(f"{value!r} is a number, not a time of day: write 19:41:30, or format the cell as a time")
    hour, minute, second = parse_time_of_day(value)
    if isinstance(value, _dt.datetime) and value.date() not in _SPREADSHEET_EPOCHS:
        return hour, minute, second, value.year, value.month, value.day
    return hour, minute, second, np.nan, np.nan, np.nan


#: A time typed into a date-time cell comes back on the spreadsheet's day zero: no date at all.
_SPREADSHEET_EPOCHS = (_dt.date(1899, 12, 30), _dt.date(1899, 12, 31), _dt.date(1904, 1, 1))


def _not_formula(value):
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}")
    return value


def _decimal_text(value, decimal_comma):
    return value if isinstance(value, (int, float)) else with_decimal_point(_text(value), decimal_comma)


#: One parser per kind of column: (value, decimal comma allowed, unit, declared date order) -> result.
_PARSERS = {
    "body": lambda v, dc, unit, dates: canonical_body_name(_text(_not_formula(v))),
    "limb": lambda v, dc, unit, dates: _word(_not_formula(v), LIMBS, "limb"),
    "entry": lambda v, dc, unit, dates: _word(_not_formula(v), ENTRIES, "entry"),
    "horizon": lambda v, dc, unit, dates: _horizon(_not_formula(v)),
    "altitude": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "angle", dc)),
    "lat": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "lat", dc)),
    "lon": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "lon", dc)),
    "index_error": lambda v, dc, unit, dates: float(parse_index_error_arcmin(_decimal_text(_not_formula(v), dc))),
    "number": lambda v, dc, unit, dates: _number(_not_formula(v), dc),
    "watch_error": lambda v, dc, unit, dates: parse_watch_error_s(_decimal_text(_not_formula(v), dc)),
    "utc": lambda v, dc, unit, dates: _utc_components(v, dates),
    "date": lambda v, dc, unit, dates: parse_date(_not_formula(v), dates),
    "time": lambda v, dc, unit, dates: _parse_time_cell(v),
    "zone": lambda v, dc, unit, dates: float(parse_zone_description(_not_formula(v))),
    "text": lambda v, dc, unit, dates: _text(_not_formula(v)).strip(),
    "name": lambda v, dc, unit, dates: " ".join(_text(_not_formula(v)).split()),
}
#: Kinds whose result is several numbers (a row of an array), and how many.
_TUPLE_KINDS = {"utc": 7, "date": 3, "time": 6}
#: Kinds whose result is one number.
_FLOAT_KINDS = {"altitude", "lat", "lon", "index_error", "number", "watch_error", "zone"}


def _parse_one(column, value, decimal_comma, unit, dates):
    """One value of a column parsed, converted to navred's unit and checked against the range; or raise."""
    result = _PARSERS[column.kind](value, decimal_comma, unit, dates)
    if column.kind in ("number", "altitude") and column.low is not None:
        result = _ranged(float(result), column.key, unit if column.kind == "number" else None)
    return result


def _parse_fast(column, originals: list, unit) -> list:
    """The values of an angle column in the common written forms, read in bulk
    (:func:`navred.angles.parse_angles_fast`: only what the careful parser reads to the same
    value); None where the careful parser must look. A decimal comma is left to the careful parser."""
    kind = {"altitude": "angle", "lat": "lat", "lon": "lon"}.get(column.kind)
    if kind is None:
        return [None] * len(originals)
    values, done = parse_angles_fast(originals, kind)
    out: list = [None] * len(originals)
    for k in np.flatnonzero(done).tolist():
        number = float(values[k])
        if column.kind == "altitude" and column.low is not None:
            try:
                number = _ranged(number, column.key, None)
            except NavredError:
                continue  # the careful parser gives the reason
        out[k] = number
    return out


@dataclass
class _Layout:
    """How one table's headers map onto the vocabulary."""

    keys: dict[str, list[int]]  # key -> indices of the headers that give it
    units: dict[int, str | None]  # header index -> the unit it is given in
    extras: list[int]  # headers navred does not know: carried through as text
    problems: list[str]  # headers refused (ambiguous, or a unit the column does not take)
    #: what the navigator should know of the headers: the columns navred does not read, the repeated ones
    notes: list[str] = field(default_factory=list)


def _layout(table: RawTable, also_reads: frozenset[str] = frozenset()) -> _Layout:
    """The table's headers matched with the vocabulary; ``also_reads``: normalised headers the caller reads
    itself (a hand working's lines), kept as extra columns without a note."""
    from .readers import column_letter

    normalised = [normalise_header(h) for h in table.header]
    # navred's own reduce output read back: its parsed columns carry the sight, the rest is computed again
    output = {"ho_deg", "hc_deg", "intercept_nm", "status", "sight_utc", "body_name"} <= set(normalised)
    layout = _Layout({}, {}, [], [])
    unread = []
    for k, header in enumerate(table.header):
        name = normalised[k]
        if name in BOOKKEEPING_HEADERS:
            continue
        if output:
            if name in _OUTPUT_COLUMNS:
                key = _OUTPUT_COLUMNS[name]
                layout.keys.setdefault(key, []).append(k)
                layout.units[k] = _OUTPUT_UNITS.get(key, COLUMN[key].default_unit)
            elif header.strip().endswith(OUTPUT_SUFFIX) or (name not in SIGHT_COLUMNS and name not in RESULT_NAMES):
                layout.extras.append(k)
            continue
        match = match_header(header)
        if match.problem:
            layout.problems.append(match.problem)
        elif match.key is None:
            layout.extras.append(k)
            if name in also_reads or header.strip().endswith(OUTPUT_SUFFIX):
                continue
            refusal = unknown_header_refusal(header)
            if refusal:
                layout.problems.append(refusal)
            else:
                unread.append(header)
        else:
            layout.keys.setdefault(match.key, []).append(k)
            layout.units[k] = match.unit
    file = Path(table.source).name if table.source != "(table)" else "the table"
    if unread:
        shown = ", ".join(repr(h) for h in unread[:12]) + (f" and {len(unread) - 12} more" if len(unread) > 12 else "")
        layout.notes.append(f"{file}: column{'s' if len(unread) > 1 else ''} navred does not read, kept as text: "
                            f"{shown}")
    for indices in layout.keys.values():
        same = [k for k in indices if normalised[k] == normalised[indices[0]]]
        if len(same) > 1:
            letters = " and ".join(column_letter(k) for k in same)
            layout.notes.append(f"{file}: columns {letters} are all headed {table.header[same[0]]!r}: read as one "
                                "where they agree; a row where they differ is rejected")
    layout.notes.extend(table.notes)
    return layout


@api_boundary
def read_sight_log(source: LogSource, *, dates: str | None = None, all_sheets: bool = False,
                   rates: Ratings | None = None, also_reads: Iterable[str] = (),
                   budget: ReadBudget | None = None) -> SightLog:
    """Read and check sight logs: a file (CSV or .xlsx), a list of files, a folder, or a DataFrame.

    ``dates`` declares the order of numeric dates that are not ISO 8601 for the whole log
    (``'day-first'`` or ``'month-first'``); without it such a date is refused with both of
    its readings. ``all_sheets`` reads every sheet of a workbook that holds a table (a class's
    hand workings, a sheet per cadet) instead of one. ``rates`` (a
    :class:`navred.io.timesignals.Ratings`, from the rating log) gives the watch error of a sight
    kept in zone time whose ``watch_error`` is blank: the error its timepiece's rating predicts.
    ``also_reads``: headers the caller reads itself (a hand working's lines), kept as extra columns.
    A column navred does not read is named in :attr:`SightLog.notes`; one that looks like a correction or a
    misspelt column is refused, naming the column navred expects. ``budget`` bounds what the run reads
    (:class:`navred.readers.ReadBudget`; by default the bounds of one run).
    Returns a :class:`SightLog`; a source that is not a sight log at all raises
    :class:`LogbookError` with one message.
    """
    if dates is not None and dates not in DATE_ORDERS:
        raise LogbookError(f"dates {dates!r} is not one of {', '.join(DATE_ORDERS)}")
    own = frozenset(normalise_header(h) for h in also_reads)
    tables = read_table(source, all_sheets=all_sheets, budget=budget)
    layouts = []
    for table in tables:
        layout = _layout(table, own)
        if layout.problems:
            hint = f" ({OWN_COLUMN_HINT})" if any("rename it" in p for p in layout.problems) else ""
            raise LogbookError(f"{table.source}: " + "; ".join(layout.problems) + hint)
        _check_is_log(table, layout.keys)
        layouts.append(layout)
    return _parse(tables, layouts, dates, rates)


def read_sight_log_blocks(source: LogSource, *, dates: str | None = None, block_rows: int = 100_000,
                          rates: Ratings | None = None) -> Iterator[SightLog]:
    """A sight log read in blocks of rows, each block by the same rules as :func:`read_sight_log`.

    For a log too long to hold whole in memory with all its working (``navred reduce --csv`` of a
    fleet's archive): a plain CSV file whose every row names its fix group is read ``block_rows``
    rows at a time, and the blocks together hold exactly the rows, values and rejections
    :func:`read_sight_log` gives (tested). Any other source is one block, the whole log: the
    automatic fix groups (and the rules across several files) need every row at once.
    """
    plan = sight_log_blocks(source, dates=dates, block_rows=block_rows, rates=rates)
    if plan is None:
        yield read_sight_log(source, dates=dates, rates=rates)
        return
    for k in range(len(plan)):
        yield plan.read(k)


@dataclass
class LogBlocks:
    """A long plain log to be read block by block (:func:`sight_log_blocks`): ``read(k)`` is block ``k``
    read by the rules of :func:`read_sight_log`, independently of the other blocks (so blocks may be read
    in any order, or by other processes)."""

    plain: object  # navred.io.readers.PlainBlocks
    layout: object
    dates: str | None
    rates: object | None

    @property
    def notes(self) -> list[str]:
        """What the navigator should know of the log's headers (as :attr:`SightLog.notes`)."""
        return list(self.layout.notes)

    def __len__(self) -> int:
        return len(self.plain)

    def read(self, k: int) -> SightLog:
        return _parse([self.plain.block(k)], [self.layout], self.dates, self.rates)


def sight_log_blocks(source: LogSource, *, dates: str | None = None, block_rows: int = 100_000,
                     rates: Ratings | None = None) -> LogBlocks | None:
    """The blocks a log can be read in (see :func:`read_sight_log_blocks`), or None when it must be read
    whole with :func:`read_sight_log` (not a plain CSV file, no longer than one block, or rows that leave
    their fix group or their DR to be worked out from the whole log)."""
    if dates is not None and dates not in DATE_ORDERS:
        raise LogbookError(f"dates {dates!r} is not one of {', '.join(DATE_ORDERS)}")
    plain = plain_csv_blocks(source, block_rows) if isinstance(source, (str, Path)) and Path(source).is_file() \
        else None
    if plain is None or len(plain.lines) <= block_rows:
        return None
    first = plain.block(0)
    layout = _layout(first)
    if layout.problems:
        raise LogbookError(f"{first.source}: " + "; ".join(layout.problems))
    _check_is_log(first, layout.keys)
    labels = layout.keys.get("fix_group")
    dr_given = layout.keys.get("dr_lat")
    # automatic fix groups, and DRs carried along the log's track, need the whole log at once
    if not labels or plain.any_blank(labels) or "entry" in layout.keys or not dr_given or plain.any_blank(dr_given):
        return None
    return LogBlocks(plain, layout, dates, rates)


def _check_is_log(table: RawTable, keys: dict) -> None:
    required = [c.key for c in COLUMNS if c.required]
    if len(set(keys) & ({"utc", "zone_time"} | set(required))) < 2:
        separator = f"; it is {_SEPARATOR_NAMES.get(table.separator, 'a spreadsheet')}-separated" \
            if table.separator else ""
        shown = ", ".join(repr(h) for h in table.header[:10]) + (", ..." if len(table.header) > 10 else "")
        raise LogbookError(
            f"{table.source} is not a sight log: none of its columns ({shown}) name a sight's time, body, "
            f"Hs or DR{separator}; required: utc (or date, zone_time and zone_description), body, hs, dr_lat, "
            "dr_lon (see docs/sight-log.md)")


#: the reduction's columns (a log of reduced rows read back)
RESULT_NAMES = frozenset(RESULT_COLUMNS)

_SEPARATOR_NAMES = {",": "comma", ";": "semicolon", "\t": "tab"}


@dataclass
class _Cells:
    """One column key across every table: the cells, their units and header names, row by row."""

    values: pd.Series  # index 0..n-1; None where the row gives nothing
    blank: np.ndarray
    units: np.ndarray
    headers: np.ndarray
    decimal_comma: np.ndarray
    present: bool


@dataclass
class _Parsed:
    """The parsed values of one key: a mask of the rows with a good value, and the values
    (n,) for one number or word per row, (k, n) for kinds that give several numbers."""

    ok: np.ndarray
    value: np.ndarray


def _gather(tables, layouts, key) -> _Cells:
    """The cells of one key across all tables (blank where a table lacks it); two columns of one
    table that give the same key are combined row by row (one value at most).

    The tables' cells are joined first and looked at once, so a folder of many small logs costs
    about what one log of all their rows would."""
    values, units, headers = [], [], []
    present = False
    counts = np.array([t.n_rows for t in tables], dtype=int)
    for table, layout in zip(tables, layouts):
        n = table.n_rows
        indices = layout.keys.get(key, [])
        if not indices:
            values.append(np.full(n, None, dtype=object))
            units.append(COLUMN[key].default_unit)
            headers.append(key)
            continue
        present = True
        first = indices[0]
        column = table.columns[first].to_numpy(dtype=object)
        if len(indices) == 1:
            values.append(column)
            units.append(layout.units[first])
            headers.append(table.header[first])
            continue
        # two columns of one table give this key: combined row by row, with their units and names
        blank = blank_mask(pd.Series(column, dtype=object))
        unit = np.full(n, layout.units[first], dtype=object)
        header = np.full(n, table.header[first], dtype=object)
        for k in indices[1:]:
            cells = table.columns[k].to_numpy(dtype=object)
            filled = ~blank_mask(pd.Series(cells, dtype=object))
            for i in np.flatnonzero(filled & ~blank):
                if layout.units[k] == unit[i] and _text(cells[i]).strip() == _text(column[i]).strip():
                    continue  # the same value twice, in the same unit (a column repeated): one value
                table.row_problems.setdefault(int(i), (table.header[k], (
                    f"two values for {key.replace('_', ' ')}: {header[i]!r} {_text(column[i])!r} and "
                    f"{table.header[k]!r} {_text(cells[i])!r}; keep one")))
            column = np.where(filled, cells, column)
            unit = np.where(filled & blank, layout.units[k], unit)
            header = np.where(filled & blank, table.header[k], header)
            blank = blank & ~filled
        values.append(column)
        units.append(unit)
        headers.append(header)
    joined = pd.Series(np.concatenate(values) if values else np.zeros(0, dtype=object), dtype=object)

    def per_row(parts):
        if all(not isinstance(p, np.ndarray) for p in parts):
            return np.repeat(np.array(parts, dtype=object), counts)
        return np.concatenate([p if isinstance(p, np.ndarray) else np.full(c, p, dtype=object)
                               for p, c in zip(parts, counts)]) if parts else np.zeros(0, dtype=object)

    commas = np.repeat(np.array([t.decimal_comma for t in tables], dtype=bool), counts)
    return _Cells(joined, blank_mask(joined), per_row(units), per_row(headers), commas, present)


def _numeric_checks(column, numbers: np.ndarray, units: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Plain numbers of a column checked (and converted) in bulk: (values used, refused mask).

    The refused ones are parsed again one by one, which gives their reasons."""
    kind = column.kind
    used = numbers.astype(float)
    if kind == "number" and column.units:
        factors = np.ones(numbers.size)
        offsets = np.zeros(numbers.size)
        for unit in set(units) - {None}:
            factors[units == unit], offsets[units == unit] = UNIT_CONVERSIONS[unit]
        used = numbers * factors + offsets
    bad = ~np.isfinite(used)
    with np.errstate(invalid="ignore"):
        if kind in ("number", "altitude") and column.low is not None:
            bad |= (used < column.low) | (used > column.high)
        elif kind == "lat":
            bad |= np.abs(used) > 90.0
        elif kind == "lon":
            bad |= (used < -180.0) | (used > 360.0)
            used = np.where(used >= 180.0, used - 360.0, used)
        elif kind == "index_error":
            bad |= np.abs(used) > 30.0
        elif kind == "watch_error":
            bad |= (np.abs(used) > 3600.0) | (used > 0.0)  # a positive number has lost its sign: judged one by one
        elif kind == "zone":
            bad |= True  # a number cell of a zone description: each is judged one by one
    return used, bad


_ISO_Z = r"^\s*(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2}(?:\.\d+)?)\s*Z\s*$"


def _parse_key(cells: _Cells, key: str, problems: _Problems, dates) -> _Parsed:
    """Parse one key: plain numbers and ISO instants in bulk, anything else each distinct
    (value, unit, comma rule) once; converted to navred's unit and checked against the range."""
    column = COLUMN[key]
    n = len(cells.values)
    width = _TUPLE_KINDS.get(column.kind)
    if width:
        value = np.full((width, n), np.nan)
    elif column.kind in _FLOAT_KINDS:
        value = np.full(n, np.nan)
    else:
        value = np.full(n, None, dtype=object)
    todo = ~cells.blank
    if not todo.any():
        return _Parsed(np.zeros(n, dtype=bool), value)
    values = cells.values
    rows = np.flatnonzero(todo)
    subset = values.iloc[rows]
    inferred = pd.api.types.infer_dtype(subset, skipna=True)
    if column.kind in _FLOAT_KINDS and inferred in ("floating", "integer", "mixed-integer-float"):
        used, bad = _numeric_checks(column, subset.to_numpy(dtype=float, na_value=np.nan), cells.units[rows])
        value[rows[~bad]] = used[~bad]
        todo[rows[~bad]] = False
    elif column.kind == "utc" and inferred == "string":
        stamps = iso_z_datetime64(subset.to_numpy(dtype=object))  # every cell a real 'Z' instant: numpy reads them
        if stamps is not None:
            value[:, rows] = np.vstack(instant_components(stamps))
            todo[rows] = False
        else:
            parts = subset.str.extract(_ISO_Z).to_numpy(dtype=object)
            matched = ~pd.isna(parts[:, 0])
            if matched.any():
                value[:6, rows[matched]] = parts[matched].astype(float).T
                value[6, rows[matched]] = 0.0
                todo[rows[matched]] = False
    elif column.kind == "utc" and inferred in ("datetime", "datetime64"):
        try:
            stamps = pd.to_datetime(subset)
            stamps = stamps.dt.tz_convert("UTC") if stamps.dt.tz is not None else stamps
        except (TypeError, ValueError):
            stamps = None  # naive and aware mixed: one by one below
        if stamps is not None:
            fraction = stamps.dt.microsecond.to_numpy() / 1e6 + stamps.dt.nanosecond.to_numpy() / 1e9
            value[:, rows] = np.vstack([stamps.dt.year, stamps.dt.month, stamps.dt.day, stamps.dt.hour,
                                        stamps.dt.minute, stamps.dt.second.to_numpy() + fraction,
                                        np.zeros(rows.size)])
            todo[rows] = False
    refused = np.zeros(n, dtype=bool)
    rows = np.flatnonzero(todo)
    if rows.size:
        units = cells.units[rows]
        commas = np.asarray(cells.decimal_comma[rows], dtype=bool)
        if (units == units[0]).all() and (commas == commas[0]).all():
            batches = [(units[0], bool(commas[0]), rows)]  # the usual case: one unit and one comma rule
        else:
            keys = np.array([f"{u}|{c}" for u, c in zip(units, commas)])
            batches = [(units[keys == k][0], bool(commas[keys == k][0]), rows[keys == k]) for k in dict.fromkeys(keys)]
        for unit, comma, members in batches:
            originals = values.iloc[members]
            # each distinct value once (TRUE/FALSE cells were made text by the reader, so that True is not 1)
            codes, uniques = pd.factorize(originals, use_na_sentinel=False)
            first = np.full(len(uniques), -1)
            first[codes[::-1]] = np.arange(codes.size)[::-1]
            distinct = originals.to_numpy(dtype=object)[first].tolist()
            quick = _parse_fast(column, distinct, unit)
            results, reasons = [], {}
            for u, original in enumerate(distinct):
                if quick[u] is not None:
                    results.append(quick[u])
                    continue
                try:
                    results.append(_parse_one(column, original, bool(comma), unit, dates))
                except (NavredError, ValueError, TypeError) as exc:
                    results.append(None)
                    reasons[u] = _reason(exc, original)
            good = np.array([r is not None for r in results], dtype=bool)
            if width:
                table = np.full((width, len(uniques)), np.nan)
                for u in np.flatnonzero(good):
                    table[:, u] = results[u]
                value[:, members] = table[:, codes]
            else:
                table = np.empty(len(uniques), dtype=value.dtype)
                table[:] = [r if r is not None else (np.nan if value.dtype == float else None) for r in results]
                value[members] = table[codes]
            refused[members[~good[codes]]] = True
            if reasons:  # every refused cell with its value as written and its reason, in one go
                bad = ~good[codes]
                where = members[bad]
                texts = np.array([_text(distinct[u]) if u in reasons else "" for u in range(len(distinct))],
                                 dtype=object)
                why = np.array([reasons.get(u, "") for u in range(len(distinct))], dtype=object)
                problems.add(where, cells.headers[where], texts[codes[bad]], why[codes[bad]])
    return _Parsed(~cells.blank & ~refused, value)


def _reason(exc: Exception, value) -> str:
    if isinstance(value, MissingFormulaValue):
        return (f"a formula ({value.formula}) with no saved value: open and save the file in a spreadsheet program "
                "so that its value is stored, or type the value")
    return str(exc)


def _floats(parsed: _Parsed, default=np.nan) -> np.ndarray:
    return np.where(parsed.ok, parsed.value, default).astype(float)


def _words(parsed: _Parsed, default="") -> np.ndarray:
    return np.where(parsed.ok, parsed.value, default).astype(object)


def _parse(tables: list[RawTable], layouts, dates, rates=None) -> SightLog:
    n = sum(t.n_rows for t in tables)
    problems = _Problems(n)
    sources = np.concatenate([np.full(t.n_rows, t.source, dtype=object) for t in tables]) if tables \
        else np.zeros(0, dtype=object)
    rows = np.concatenate([t.row_numbers for t in tables]) if tables else np.zeros(0, dtype=int)
    gathered = {c.key: _gather(tables, layouts, c.key) for c in COLUMNS}
    # malformed rows (wrong field count, control characters, two values for one quantity), first
    offset = 0
    by_reader: dict[int, str] = {}  # rows the reader refused whole: their one reason stands alone
    for table in tables:
        for index, (header, reason) in sorted(table.row_problems.items()):
            problems.add([offset + index], header or "(row)", "", reason)
            by_reader[offset + index] = reason
        offset += table.n_rows
    parsed = {c.key: _parse_key(gathered[c.key], c.key, problems, dates) for c in COLUMNS}
    entry = _words(parsed["entry"])
    is_entry = parsed["entry"].ok
    for column in COLUMNS:
        cells = gathered[column.key]
        if column.required and not cells.present:
            problems.add(np.flatnonzero(~is_entry), column.key, "", f"required column {column.key} is missing")
        elif column.required:
            empty = cells.blank & ~is_entry
            problems.add(np.flatnonzero(empty), cells.headers[empty], "", f"{column.key.replace('_', ' ')} is empty")
    _check_entries(entry, is_entry, parsed, gathered, problems)
    horizon = _words(parsed["horizon"], "sea")
    # the reading a horizon gives: to 90°, or to 180° for an artificial horizon or a back sight
    highest = np.array([HIGHEST_READING_DEG.get(h, 90.0) for h in horizon]) if n else np.zeros(0)
    hs = _floats(parsed["hs"])
    too_high = parsed["hs"].ok & (hs > highest)
    problems.add(np.flatnonzero(too_high), gathered["hs"].headers[too_high],
                 [_text(v) for v in gathered["hs"].values[too_high]],
                 [f"Hs {v:g}° is outside 0-{h:g}° for a {k} horizon" for v, h, k in
                  zip(hs[too_high], highest[too_high], horizon[too_high])])
    dipped = np.isin(horizon, ["sea", "back", "waterline"]) & ~(parsed["measured_dip"].ok & (horizon != "waterline"))
    needs_eye = gathered["eye_height"].blank & dipped & ~is_entry
    problems.add(np.flatnonzero(needs_eye), gathered["eye_height"].headers[needs_eye], "",
                 "height of eye is needed for the dip of a sea horizon")
    no_distance = (horizon == "waterline") & gathered["waterline_distance"].blank
    problems.add(np.flatnonzero(no_distance), "waterline_distance", "",
                 "a waterline horizon needs the distance to the waterline (waterline_distance, nm)")
    stray_dip = parsed["measured_dip"].ok & ~np.isin(horizon, ["sea", "back"])
    problems.add(np.flatnonzero(stray_dip), gathered["measured_dip"].headers[stray_dip], "",
                 "a measured dip applies to a sea horizon or a back sight, not to this horizon")
    for a, b in (("chart_lat", "chart_lon"), ("chart_lon", "chart_lat")):
        alone = parsed[a].ok & gathered[b].blank
        problems.add(np.flatnonzero(alone), gathered[b].headers[alone], "",
                     f"{a.replace('_', ' ')} is given without {b.replace('_', ' ')}: give both, or neither")
    times = _time_working(parsed, gathered, problems, rates)
    entries = _entries(n, sources, rows, entry, is_entry, parsed, times, problems)
    dr = _carried_dr(parsed, gathered, times, is_entry, entries, problems)
    motion_note = _carried_motion(dr, parsed, gathered, times, is_entry, entries, rows, problems)
    while True:
        table, found, message, sight_row = _tabled(n, sources, rows, parsed, gathered, times, problems, by_reader,
                                                    dr, motion_note, entry, is_entry)
        if not _motion_missing(table, (message == "") & sight_row, gathered, problems):
            break  # (a sight refused for a running fix without its motion changes the groups: made again)
    extras, names = _extras(tables, layouts)
    for name, values in extras.items():
        table[name] = values
    rejected = found[REJECTED_COLUMNS].reset_index(drop=True)
    rejected["row"] = rejected["row"].astype(int)
    if not sight_row.all():
        table = table[sight_row].reset_index(drop=True)
    notes = tuple(dict.fromkeys(note for layout in layouts for note in layout.notes))
    return SightLog(table, rejected, tuple(t.source for t in tables), sum(t.empty_rows for t in tables), dates,
                    tuple(names), tuple(tables), entries=entries, notes=notes)


def _tabled(n, sources, rows, parsed, gathered, times, problems, by_reader, dr, motion_note, entry, is_entry):
    """The sight table of the problems found so far: (table, the problems as rows, each row's message, which
    rows are sights)."""
    found = problems.frame()
    if by_reader:
        # a row refused as read (a damaged cell, the wrong number of fields, a control character) had its cells
        # set aside: what its other columns lack follows from that, and is not said
        reader_reason = found["index"].map(by_reader)
        keep = reader_reason.isna().to_numpy() | (found["reason"] == reader_reason).to_numpy()
        found = found[keep]
        found = found[~found.duplicated(["index"]) | ~found["index"].isin(list(by_reader))]
    index = found["index"].to_numpy(dtype=int)
    found["source"] = sources[index]
    found["row"] = rows[index]
    message = np.full(n, "", dtype=object)
    where = np.full(n, "", dtype=object)
    if len(found):
        # each row's reasons joined (at most MAX_REASONS_PER_ROW, in the order found), row by row
        starts = np.flatnonzero(np.concatenate([[True], index[1:] != index[:-1]]))
        rank = np.arange(index.size) - np.repeat(starts, np.diff(np.append(starts, index.size)))
        texts = [np.full(n, None, dtype=object) for _ in range(MAX_REASONS_PER_ROW)]
        names = [np.full(n, None, dtype=object) for _ in range(MAX_REASONS_PER_ROW)]
        column_text = found["column"].astype(str).to_numpy(dtype=object)
        reason_text = found["reason"].astype(str).to_numpy(dtype=object)
        for k in range(MAX_REASONS_PER_ROW):
            at = rank == k
            texts[k][index[at]] = [f"{c}: {r}" for c, r in zip(column_text[at].tolist(), reason_text[at].tolist())]
            names[k][index[at]] = column_text[at]
        rejected_rows = np.unique(index)
        message[rejected_rows] = ["; ".join(t for t in parts if t is not None)
                                  for parts in zip(*(t[rejected_rows].tolist() for t in texts))]
        where[rejected_rows] = [", ".join(dict.fromkeys(c for c in parts if c is not None))
                                for parts in zip(*(c[rejected_rows].tolist() for c in names))]
    table = _sight_table(n, sources, rows, parsed, gathered, times, message, where)
    table["dr_lat_deg"], table["dr_lon_deg"] = dr["lat"], dr["lon"]
    table["course_deg"], table["speed_kn"] = dr["course"], dr["speed"]
    table["dr_carried_from"] = dr["note"]
    table["motion_carried_from"] = motion_note
    sight_row = ~(is_entry & (message == ""))  # an entry read well is kept apart; a bad one is a rejected row
    bad_entry = is_entry & (message != "") & gathered["body"].blank
    if bad_entry.any():  # named by its kind, in brackets, where a sight names its body
        body = table["body_name"].to_numpy(dtype=object).copy()
        body[bad_entry] = np.char.add(np.char.add("(", entry[bad_entry].astype(str)), ")").astype(object)
        table["body_name"] = body
    table["fix_group"], table["fix_group_given"] = _fix_groups(table, (message == "") & sight_row)
    return table, found, message, sight_row


#: The reasons given for one row, at most: a row that is wrong in every column (a shifted or pasted line) is
#: named by its first few, and the rest counted, rather than by a dozen lines (and megabytes a row).
MAX_REASONS_PER_ROW = 3


#: A sight taken more than this before its fix's time is advanced to it along the course and speed in force
#: after it (a running fix): a blank course or speed there would be read as a ship stopped.
RUN_MINUTES = 2.0


def _carried_motion(dr, parsed, gathered, times, is_entry, entries, rows, problems) -> np.ndarray:
    """A sight's blank course or speed carried from the last row before it (of its vessel, in time) that gives
    one, a sight's or an entry's, and named in the note returned ('speed 6.5 kn carried from row 7'). The course
    and speed in ``dr`` are filled in place."""
    n = rows.size
    note = np.full(n, "", dtype=object)
    if not (gathered["course"].present or gathered["speed"].present or len(entries)):
        return note  # the log keeps no motion at all: nothing to carry (a fix warns of a run without one)
    course, speed = dr["course"], dr["speed"]
    given_course, given_speed = _floats(parsed["course"]), _floats(parsed["speed"])
    ok = times["ok"] & ~problems.mask()
    sight = ~is_entry
    when = np.full(n, np.iinfo(np.int64).min, dtype=np.int64)
    when[times["ok"]] = utc_jd_to_datetime64(times["jd1"][times["ok"]], times["jd2"][times["ok"]]).astype(np.int64)
    vessels = _words(parsed["vessel"])
    e_vessel = entries["vessel"].to_numpy(dtype=object) if len(entries) else np.zeros(0, dtype=object)
    named = set(vessels[sight].tolist()) - {""}
    if len(entries) and not (e_vessel != "").any() and len(named) == 1:
        e_vessel = np.full(len(entries), next(iter(named)), dtype=object)
    e_when = entries["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64) \
        if len(entries) else np.zeros(0, dtype=np.int64)
    blank = sight & ok & (np.isnan(given_course) | np.isnan(given_speed))
    for vessel in dict.fromkeys(vessels[blank].tolist()):
        mine = vessels == vessel
        own = sight & ok & mine
        e_mine = e_vessel == vessel
        change_ns = np.concatenate([e_when[e_mine], when[own]])
        change_row = np.concatenate([entries["row"].to_numpy(dtype=int)[e_mine], rows[own]])
        order = np.argsort(change_ns, kind="stable")
        t = change_ns[order]
        targets = np.flatnonzero(blank & mine)
        texts = [[] for _ in targets]
        for values, given, unit, name in ((np.concatenate([entries["course_deg"].to_numpy(dtype=float)[e_mine],
                                                           given_course[own]]), given_course, "°", "course"),
                                          (np.concatenate([entries["speed_kn"].to_numpy(dtype=float)[e_mine],
                                                           given_speed[own]]), given_speed, " kn", "speed")):
            values = values[order]
            last = np.maximum.accumulate(np.where(np.isfinite(values), np.arange(values.size), -1)) \
                if values.size else np.zeros(0, dtype=int)
            # the last value given strictly before the sight (its own row gives none), or at its instant by another
            k = np.searchsorted(t, when[targets], side="right") - 1
            source = np.where(k >= 0, last[np.maximum(k, 0)] if last.size else -1, -1)
            for j, (i, src) in enumerate(zip(targets.tolist(), source.tolist())):
                if np.isfinite(given[i]) or src < 0:
                    continue
                value = float(values[src])
                target = course if name == "course" else speed
                target[i] = value
                texts[j].append((name, f"{value:g}{unit}", int(change_row[order][src])))
        for j, i in enumerate(targets.tolist()):
            if texts[j]:
                from_rows = {r for _, _, r in texts[j]}
                if len(from_rows) == 1:
                    note[i] = " and ".join(f"{a} {b}" for a, b, _ in texts[j]) + f" carried from row {from_rows.pop()}"
                else:
                    note[i] = "; ".join(f"{a} {b} carried from row {r}" for a, b, r in texts[j])
    return note


def _motion_missing(table: pd.DataFrame, usable: np.ndarray, gathered, problems) -> bool:
    """Refuse the sights of a running fix (taken more than :data:`RUN_MINUTES` before their group's last sight)
    whose course or speed is blank with none to carry, where other sights of the group give one: read as 0 kn
    for that leg alone, their lines would be advanced wrongly. True when any was refused."""
    if not (gathered["course"].present or gathered["speed"].present) or not usable.any():
        return False
    ticks = table["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64)
    groups = table["fix_group"].to_numpy(dtype=object)
    frame = pd.DataFrame({"group": groups[usable], "t": ticks[usable]})
    last = frame.groupby("group", sort=False)["t"].transform("max").to_numpy()
    rows = np.flatnonzero(usable)
    early = (last - frame["t"].to_numpy()) > RUN_MINUTES * 60e9
    lacking = []
    for key, what in (("course", "course"), ("speed", "speed")):
        values = table[f"{key}_{'deg' if key == 'course' else 'kn'}"].to_numpy(dtype=float)[rows]
        # only where the group keeps this motion on some sight: a group that keeps none is run from its rows'
        # own DRs, or said to be taken as stopped, by the fix (navred.fix)
        kept = frame.assign(given=np.isfinite(values)).groupby("group", sort=False)["given"].transform("any")
        missing = rows[early & ~np.isfinite(values) & kept.to_numpy(dtype=bool)]
        for i in missing.tolist():
            lacking.append((i, key, what))
    if not lacking:
        return False
    for i, key, what in lacking:
        problems.add([i], gathered[key].headers[i] if gathered[key].present else key, "",
                     f"{what} is blank, and no row before gives one: this sight is advanced to its running fix "
                     f"({table['fix_group'].iloc[i]}) along the {what} in force, so give it (a speed of 0 if the "
                     "ship lay stopped)")
    return True

def _check_entries(entry, is_entry, parsed, gathered, problems) -> None:
    """An entry row holds no sight, and what its kind needs: a position, a course or speed, or a current."""
    sight_cells = is_entry & (~gathered["body"].blank | ~gathered["hs"].blank)
    problems.add(np.flatnonzero(sight_cells), "entry", entry[sight_cells],
                 "an entry row holds no sight: put the sight on a row of its own")
    for kind, needs, text in (("departure", ("dr_lat", "dr_lon"), "a departure needs its position (dr_lat, dr_lon)"),
                              ("position", ("dr_lat", "dr_lon"), "a position entry needs the position (dr_lat, "
                                                                 "dr_lon)"),
                              ("current", ("set", "drift"), "a current entry needs its set and drift")):
        lacking = is_entry & (entry == kind) & np.logical_or.reduce([gathered[k].blank for k in needs])
        problems.add(np.flatnonzero(lacking), "entry", entry[lacking], text)
    still = is_entry & (entry == "course") & gathered["course"].blank & gathered["speed"].blank
    problems.add(np.flatnonzero(still), "entry", entry[still], "a course entry needs a course, a speed or both")
    for a, b in (("dr_lat", "dr_lon"), ("dr_lon", "dr_lat"), ("set", "drift"), ("drift", "set")):
        alone = parsed[a].ok & gathered[b].blank
        problems.add(np.flatnonzero(alone), gathered[b].headers[alone], "",
                     f"{a.replace('_', ' ')} is given without {b.replace('_', ' ')}: give both, or neither"
                     if gathered[b].present else f"required column {b} is missing (it goes with {a})")
    stray = ~is_entry & (~gathered["set"].blank | ~gathered["drift"].blank)
    problems.add(np.flatnonzero(stray), "set", "", "a current is given on an entry row (entry: current), not on a sight")


def _entries(n, sources, rows, entry, is_entry, parsed, times, problems) -> pd.DataFrame:
    """The entries read well, as :data:`ENTRY_COLUMNS`."""
    good = is_entry & ~problems.mask() & times["ok"]
    if not good.any():
        return pd.DataFrame(columns=ENTRY_COLUMNS)
    stamps = utc_jd_to_datetime64(times["jd1"][good], times["jd2"][good])
    return pd.DataFrame({
        "source": sources[good], "row": rows[good].astype(int), "utc": pd.Series(stamps).dt.tz_localize("UTC"),
        "entry": entry[good], "lat_deg": _floats(parsed["dr_lat"])[good], "lon_deg": _floats(parsed["dr_lon"])[good],
        "course_deg": _floats(parsed["course"])[good], "speed_kn": _floats(parsed["speed"])[good],
        "set_deg": _floats(parsed["set"])[good], "drift_kn": _floats(parsed["drift"])[good],
        "vessel": _words(parsed["vessel"])[good]})


def _carried_dr(parsed, gathered, times, is_entry, entries: pd.DataFrame, problems) -> dict:
    """Each sight's DR: as given, or carried along the log's DR track (its departure or last known position,
    every course, speed and current since, the sights' own courses and speeds too) to the sight; and the
    course and speed in force where a sight gives none. Each vessel keeps its own track."""
    from ..reckoning import PAST_POLE, dr_track

    lat, lon = _floats(parsed["dr_lat"]), _floats(parsed["dr_lon"])
    course, speed = _floats(parsed["course"]), _floats(parsed["speed"])
    n = lat.size
    note = np.full(n, "", dtype=object)
    sight = ~is_entry
    wanted = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank & times["ok"] & ~problems.mask()
    also_course = sight & times["ok"] & (np.isnan(course) | np.isnan(speed)) & (len(entries) > 0)
    if not wanted.any() and not also_course.any():
        none = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank
        problems.add(np.flatnonzero(none), "dr_lat", "", "no DR: give dr_lat and dr_lon, or an entry row with the "
                     "departure or a known position before this sight (entry: departure)")
        return {"lat": lat, "lon": lon, "course": course, "speed": speed, "note": note}
    when = np.full(n, np.iinfo(np.int64).min, dtype=np.int64)
    ok = times["ok"]
    when[ok] = utc_jd_to_datetime64(times["jd1"][ok], times["jd2"][ok]).astype(np.int64)
    vessels = _words(parsed["vessel"])
    e_when = entries["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64) \
        if len(entries) else np.zeros(0, dtype=np.int64)
    e_vessel = entries["vessel"].to_numpy(dtype=object) if len(entries) else np.zeros(0, dtype=object)
    named = set(vessels[sight].tolist()) - {""}
    if len(entries) and not (e_vessel != "").any() and len(named) == 1:
        e_vessel = np.full(len(entries), named.pop(), dtype=object)  # one ship: her entries need not name her
    known_kind = entries["entry"].isin(["departure", "position"]).to_numpy() if len(entries) else np.zeros(0, bool)
    usable_sight = sight & ok & ~problems.mask()
    for vessel in dict.fromkeys(vessels[wanted | also_course].tolist()):
        mine = vessels == vessel
        e_mine = e_vessel == vessel
        # the sights' own courses and speeds are changes too (in force from each sight)
        own = usable_sight & mine & (np.isfinite(course) | np.isfinite(speed))
        change_ns = np.concatenate([e_when[e_mine], when[own]])
        change_course = np.concatenate([entries["course_deg"].to_numpy(dtype=float)[e_mine], course[own]])
        change_speed = np.concatenate([entries["speed_kn"].to_numpy(dtype=float)[e_mine], speed[own]])
        change_set = np.concatenate([entries["set_deg"].to_numpy(dtype=float)[e_mine], np.full(own.sum(), np.nan)])
        change_drift = np.concatenate([entries["drift_kn"].to_numpy(dtype=float)[e_mine], np.full(own.sum(), np.nan)])
        known = e_mine & known_kind
        if not known.any():
            continue  # no departure for this vessel: her sights without a DR are refused below
        track = dr_track(change_ns, change_course, change_speed, e_when[known],
                         entries["lat_deg"].to_numpy(dtype=float)[known],
                         entries["lon_deg"].to_numpy(dtype=float)[known], set_deg=change_set, drift_kn=change_drift)
        rows_here = np.flatnonzero(wanted & mine)
        if rows_here.size:
            t_lat, t_lon, origin = track.positions(when[rows_here])
            polar = (origin >= 0) & ~np.isfinite(t_lat)
            problems.add(rows_here[polar], "dr_lat", "", PAST_POLE)
            found = (origin >= 0) & ~polar
            lat[rows_here[found]], lon[rows_here[found]] = t_lat[found], t_lon[found]
            known_rows = entries["row"].to_numpy()[known]
            known_words = entries["entry"].to_numpy(dtype=object)[known]
            slots = np.searchsorted(track.knot_ns, e_when[known])
            by_knot = {int(k): f"the {w} at row {int(r)}" for k, w, r in zip(slots, known_words, known_rows)}
            note[rows_here[found]] = [f"carried from {by_knot[int(o)]}" for o in origin[found]]
            lost = rows_here[origin < 0]
            problems.add(lost, "dr_lat", "", "no DR: this sight comes before the log's first departure or known "
                         "position (an entry row); give dr_lat and dr_lon, or an earlier departure")
        # the course and speed in force, where a sight gives none (for the run between its sights)
        blank_motion = np.flatnonzero(also_course & mine)
        if blank_motion.size:
            k = np.searchsorted(track.knot_ns, when[blank_motion], side="right") - 1
            has = k >= 0
            water_course, water_speed = _water_motion(change_ns, change_course, change_speed, when[blank_motion])
            course[blank_motion] = np.where(np.isnan(course[blank_motion]) & has, water_course, course[blank_motion])
            speed[blank_motion] = np.where(np.isnan(speed[blank_motion]) & has, water_speed, speed[blank_motion])
    none = sight & gathered["dr_lat"].blank & gathered["dr_lon"].blank & np.isnan(lat) & ~problems.mask()
    problems.add(np.flatnonzero(none), "dr_lat", "", "no DR: give dr_lat and dr_lon, or an entry row with the "
                 "departure or a known position before this sight (entry: departure)")
    return {"lat": lat, "lon": lon, "course": course, "speed": speed, "note": note}


def _water_motion(change_ns, change_course, change_speed, when):
    """The course and speed through the water in force at each instant: the last given at or before it."""
    order = np.argsort(change_ns, kind="stable")
    t = change_ns[order]
    out = []
    for values in (change_course[order], change_speed[order]):
        index = np.maximum.accumulate(np.where(np.isfinite(values), np.arange(values.size), -1)) if values.size \
            else np.zeros(0, dtype=int)
        k = np.searchsorted(t, when, side="right") - 1
        last = np.where(k >= 0, index[np.maximum(k, 0)] if index.size else -1, -1)
        out.append(np.where(last >= 0, values[np.maximum(last, 0)] if values.size else np.nan, np.nan))
    return out[0], out[1]


def _time_working(parsed, gathered, problems, rates=None) -> dict:
    """Each row's instant from utc, or from date, zone_time and zone_description, less the watch error."""
    utc, zone_time, date, zd = parsed["utc"], parsed["zone_time"], parsed["date"], parsed["zone_description"]
    n = utc.ok.size
    has_utc = utc.ok
    utc_blank, zone_blank = gathered["utc"].blank, gathered["zone_time"].blank
    cell_date = np.isfinite(zone_time.value[3])
    day = np.where(date.ok[None, :], date.value, zone_time.value[3:6])
    day_known = date.ok | cell_date
    conflict = zone_time.ok & date.ok & cell_date & np.any(date.value != zone_time.value[3:6], axis=0)
    for i in np.flatnonzero(conflict):
        problems.add([i], gathered["zone_time"].headers[i], _text(gathered["zone_time"].values.iloc[i]),
                     f"the zone time's own date differs from the date column "
                     f"({_text(gathered['date'].values.iloc[i])})")
    wanted = zone_time.ok & ~has_utc & ~conflict
    missing_date = wanted & ~day_known & gathered["date"].blank
    problems.add(np.flatnonzero(missing_date), "date", "", "a zone time needs its date: give the date column")
    missing_zone = wanted & ~zd.ok & gathered["zone_description"].blank
    problems.add(np.flatnonzero(missing_zone), "zone_description", "",
                 "a zone time needs its zone description (ZT + ZD = UTC)")
    complete = zone_time.ok & day_known & zd.ok & ~conflict
    zone = np.vstack([day, zone_time.value[:3], -60.0 * zd.value[None, :]])
    if gathered["utc"].present or gathered["zone_time"].present:
        no_time = utc_blank & zone_blank
        problems.add(np.flatnonzero(no_time), "utc" if gathered["utc"].present else "zone_time", "",
                     "no time: give utc, or date with zone_time and zone_description")
    else:
        problems.add(np.arange(n), "utc", "", "required column utc (or date, zone_time and zone_description) "
                                              "is missing")
    use_zone = ~has_utc & complete
    usable = has_utc | use_zone
    chosen = np.where(use_zone[None, :], zone, utc.value)
    jd1, jd2, reasons = utc_julian_date_from_components(*np.where(usable[None, :], chosen, 0.0))
    refused = usable & (reasons != "")
    for i in np.flatnonzero(refused):
        key = "utc" if has_utc[i] else "zone_time"
        problems.add([i], gathered[key].headers[i], _text(gathered[key].values.iloc[i]), reasons[i])
    ok = usable & ~refused
    both = ok & has_utc & complete
    if both.any():
        z1, z2, _ = utc_julian_date_from_components(*zone[:, both])
        apart = np.abs(((jd1[both] - z1) + (jd2[both] - z2)) * 86400.0)
        for i in np.flatnonzero(both)[~(apart <= TIME_AGREEMENT_S)]:
            problems.add([i], gathered["zone_time"].headers[i], _text(gathered["zone_time"].values.iloc[i]),
                         f"utc {_text(gathered['utc'].values.iloc[i])} and the zone time disagree: give one, or "
                         "correct it")
    error = _floats(parsed["watch_error"], 0.0)
    error_from = np.where(parsed["watch_error"].ok, "given", "").astype(object)
    # a timepiece's error from its rating, where the log keeps zone time and gives no watch error
    piece = _words(parsed["timepiece"])
    unrated = use_zone & ~parsed["watch_error"].ok & ok
    if rates is not None and unrated.any():
        rows = np.flatnonzero(unrated)
        when = utc_jd_to_datetime64(jd1[rows], jd2[rows])
        predicted, _, note = rates.predict(piece[rows], when)
        found = np.isfinite(predicted)
        error[rows[found]] = predicted[found]
        error_from[rows[found]] = note[found]
        named = rows[~found & (piece[rows] != "")]
        problems.add(named, gathered["timepiece"].headers[named], piece[named],
                     "this timepiece has no time signals in the rating log: give its watch_error, or its signals")
    elif rates is None:
        named = np.flatnonzero(unrated & (piece != ""))
        problems.add(named, gathered["timepiece"].headers[named], piece[named],
                     "a timepiece is named but no rating log was given (--rates FILE): give its watch_error, or "
                     "the rating log of its time signals")
    jd1, jd2 = np.where(ok, jd1, np.nan), np.where(ok, jd2, np.nan)
    moved = ok & (error != 0.0)
    if moved.any():
        jd1[moved], jd2[moved] = utc_minus_seconds(jd1[moved], jd2[moved], error[moved])
    # the time as written, for the time working
    as_read = np.where(~utc_blank, _cell_texts(gathered["utc"].values), _cell_texts(gathered["zone_time"].values))
    shown_zone = use_zone | both
    zone_date = np.full(n, "", dtype=object)
    if shown_zone.any():
        zone_date[shown_zone] = [f"{int(y):04d}-{int(m):02d}-{int(d):02d}" for y, m, d in day[:, shown_zone].T]
    return {"jd1": jd1, "jd2": jd2, "ok": ok, "watch_error_s": error, "watch_error_from": error_from,
            "zd": np.where(shown_zone, zd.value, np.nan), "zone_date": zone_date,
            "time_given": np.where(has_utc, "utc", np.where(use_zone, "zone time", "")).astype(object),
            "as_read": as_read}


def _sight_table(n, sources, rows, parsed, gathered, times, message, where) -> pd.DataFrame:
    ok_time = times["ok"]
    stamps = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    if ok_time.any():
        stamps[ok_time] = utc_jd_to_datetime64(times["jd1"][ok_time], times["jd2"][ok_time])
    utc = pd.Series(stamps).dt.tz_localize("UTC")
    zd = times["zd"]
    shift = np.where(np.isfinite(zd), zd * 3600e9, 0).astype(np.int64).astype("timedelta64[ns]")
    shown = np.isfinite(zd) & ok_time
    corrected = np.full(n, "", dtype=object)
    if shown.any():
        local = (stamps[shown] - shift[shown]).astype("datetime64[s]")
        corrected[shown] = np.datetime_as_string(local).astype(object)
        corrected[shown] = [text[11:19] for text in corrected[shown]]
    greenwich = np.full(n, "", dtype=object)
    if ok_time.any():
        greenwich[ok_time] = np.datetime_as_string(stamps[ok_time].astype("datetime64[D]")).astype(object)
    defaults = {c.key: c.default for c in COLUMNS}

    def floats(key):
        return _floats(parsed[key], np.nan if defaults[key] is None else defaults[key])

    def as_given(key):
        cells = gathered[key]
        other = parsed[key].ok & (cells.units != COLUMN[key].units[0])
        out = np.full(n, "", dtype=object)
        if other.any():
            out[other] = [f"{_text(v)} {UNIT_NAMES[u]}" for v, u in zip(cells.values[other], cells.units[other])]
        return out

    return pd.DataFrame({
        "source": sources, "row": rows.astype(int), "sight_utc": utc,
        "utc_jd1": times["jd1"], "utc_jd2": times["jd2"], "time_given": times["time_given"],
        "time_as_read": times["as_read"], "watch_error_applied_s": times["watch_error_s"],
        "watch_error_from": times["watch_error_from"], "timepiece": _words(parsed["timepiece"]),
        "zone_date_used": times["zone_date"], "zone_time_corrected": corrected,
        "zone_description_used_h": zd,
        "greenwich_date": greenwich,
        "body_name": _words(parsed["body"]), "limb": _words(parsed["limb"]), "hs_deg": floats("hs"),
        "index_error_arcmin": floats("index_error"),
        "eye_height_m": floats("eye_height"), "eye_height_as_given": as_given("eye_height"),
        "horizon": _words(parsed["horizon"], "sea"), "waterline_distance_nm": floats("waterline_distance"),
        "measured_dip_arcmin": floats("measured_dip"),
        "temperature_c": floats("temperature"), "temperature_as_given": as_given("temperature"),
        "pressure_hpa": floats("pressure"), "pressure_as_given": as_given("pressure"),
        "dr_lat_deg": floats("dr_lat"), "dr_lon_deg": floats("dr_lon"),
        "course_deg": floats("course"), "speed_kn": floats("speed"), "dut1_given_s": floats("dut1"),
        "fix_group": _words(parsed["fix_group"]), "fix_group_given": parsed["fix_group"].ok,
        "chart_lat_deg": floats("chart_lat"), "chart_lon_deg": floats("chart_lon"),
        "vessel": _words(parsed["vessel"]), "observer": _observers(_words(parsed["observer"])),
        "voyage": _words(parsed["voyage"]), "series": _words(parsed["series"]),
        "read_problem": message, "read_problem_column": where,
    })


def _observers(names: np.ndarray) -> np.ndarray:
    """One spelling per observer: names equal but for case and spacing take the first one written."""
    codes, uniques = pd.factorize(names)
    first: dict[str, str] = {}
    spelled = np.array([first.setdefault(" ".join(str(u).split()).casefold(), " ".join(str(u).split()))
                        for u in uniques], dtype=object)
    return spelled[codes] if len(uniques) else np.full(len(names), "", dtype=object)


def _fix_groups(table: pd.DataFrame, ok: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The fix group of each row: the log's label, or, where it gives none, one observer's sights of
    one vessel less than two hours apart (named after the first sight's time and the observer).
    Labels are kept apart by file when several files are read."""
    has = table["fix_group_given"].to_numpy(dtype=bool)
    labels = np.where(has, table["fix_group"].to_numpy(dtype=object), "").astype(object)
    auto = ok & ~has
    if auto.any():
        rows = np.flatnonzero(auto)
        times = table["sight_utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]")[rows]
        who = table[["source", "vessel", "observer"]].iloc[rows]
        key_codes = who.groupby(list(who.columns), sort=False).ngroup().to_numpy()
        ticks = times.astype(np.int64)
        order = np.lexsort((ticks, key_codes))
        gap = np.diff(ticks[order]) > DEFAULT_GROUP_GAP_HOURS * 3600e9
        new = np.concatenate([[True], gap | (key_codes[order][1:] != key_codes[order][:-1])])
        ids = np.empty(rows.size, dtype=int)
        ids[order] = np.cumsum(new) - 1
        leads = order[new]  # the first sight of each group, in group order
        stamps = np.datetime_as_string(times[leads].astype("datetime64[m]"))
        observers = who["observer"].to_numpy(dtype=object)[leads]
        names = np.array([f"{t[:10]} {t[11:13]}{t[14:16]}Z" + (f" {o}" if o else "")
                          for t, o in zip(stamps, observers)], dtype=object)
        labels[rows] = names[ids]
    if table["source"].nunique() > 1:
        files = table["source"].map(lambda s: Path(s).name).to_numpy(dtype=object)
        labels = np.where(labels != "", files + ": " + labels.astype(str), labels).astype(object)
    return labels, has


def _extra_name(header: str) -> str:
    """The name a column navred does not know goes by: normalised, and marked when navred uses it."""
    if header.strip().endswith(OUTPUT_SUFFIX):
        return f"{normalise_header(header.strip()[:-len(OUTPUT_SUFFIX)])} {OUTPUT_SUFFIX}"
    name = normalise_header(header) or "column"
    return f"{name} {OUTPUT_SUFFIX}" if name in SIGHT_COLUMNS or name in RESULT_NAMES else name


def _extras(tables, layouts) -> tuple[dict[str, np.ndarray], list[str]]:
    """The log's own extra columns as text, one column per name across every table."""
    names = list(dict.fromkeys(_extra_name(t.header[k]) for t, layout in zip(tables, layouts)
                               for k in layout.extras))
    out = {}
    for name in names:
        parts = []
        for table, layout in zip(tables, layouts):
            column = np.full(table.n_rows, "", dtype=object)
            for k in layout.extras:
                if _extra_name(table.header[k]) == name:
                    column = table.columns[k].map(_text).to_numpy(dtype=object)
            parts.append(column)
        out[name] = np.concatenate(parts) if parts else np.zeros(0, dtype=object)
    return out, names


def _as_read(tables) -> pd.DataFrame:
    """Every data row as read: its file, its row number and its cells under the log's own headers."""
    frames = []
    for table in tables:
        header = _unique(table.header)
        data = {"source file": np.full(table.n_rows, table.source, dtype=object),
                "row in log": table.row_numbers}
        width = len(header)
        for k, name in enumerate(header):
            column = np.empty(table.n_rows, dtype=object)
            column[:] = table.columns[k].to_numpy(dtype=object)
            for index, cells in table.malformed_cells.items():
                # a row with the wrong number of fields, shown as it came: the overflow in the last column
                shown = cells[k:k + 1] if k < width - 1 else cells[k:]
                column[index] = (table.separator or " ").join(shown)
            data[name] = column
        frames.append(pd.DataFrame(data))
    frame = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
    if len(tables) == 1 and len(frame):
        frame = frame.drop(columns=["source file"])
    return frame


def _unique(header: list[str]) -> list[str]:
    seen: dict[str, int] = {}
    out = []
    for name in header:
        name = name or "(no header)"
        seen[name] = seen.get(name, 0) + 1
        out.append(name if seen[name] == 1 else f"{name} ({seen[name]})")
    return out


__all__ = ["read_sight_log", "read_sight_log_blocks", "sight_log_blocks", "LogBlocks", "SightLog", "LogbookError",
           "REJECTED_COLUMNS", "SIGHT_COLUMNS", "DEFAULT_GROUP_GAP_HOURS"]
