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

import functools
import re
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..compass import DeviationCurve
from ..corrections import HIGHEST_READING_DEG
from ..errors import NavredError, api_boundary
from ..timescales import (
    utc_jd_to_datetime64,
    utc_jd_to_seconds_text,
)
from ..timework import (
    DATE_ORDERS,
    utc_offset_zone,
    watch_error_words,
)
from ..vocabulary import (
    BOOKKEEPING_HEADERS,
    COLUMN,
    COLUMNS,
    DR_CONTEXT_COLUMNS,
    OUTPUT_SUFFIX,
    OWN_COLUMN_HINT,
    RESULT_COLUMNS,
    UNIT_NAMES,
    declares_decimal_degrees,
    match_header,
    normalise_header,
    unknown_header_refusal,
)
from .logcells import (
    MAX_REASONS_PER_ROW,
    Problems,
    cell_text,
    chosen_texts,
    floats,
    gather,
    parse_key,
    texts_of,
    with_decimal_point,
    words,
    zoneless_utc,
)
from .logdr import (
    ENTRY_COLUMNS,
    ENTRY_ONLY,
    carried_dr,
    carried_motion,
    check_entries,
    motion_missing,
    read_entries,
)
from .loggroups import DEFAULT_GROUP_GAP_HOURS, automatic_fix_groups, observer_names
from .logtime import TIME_AGREEMENT_S, time_working
from .readers import (
    REJECTED_COLUMNS,
    LogbookError,
    LogSource,
    NotPlain,
    PlainBlocks,
    PlainPart,
    RawTable,
    ReadBudget,
    blank_mask,
    plain_csv_blocks,
    plain_csv_parts,
    read_table,
)
from .timesignals import Ratings

#: The parsed columns of every sight, in order (documented in docs/sight-log.md).
SIGHT_COLUMNS = [
    "source", "row", "sight_utc", "utc_jd1", "utc_jd2", "time_given", "time_as_read", "watch_error_applied_s",
    "watch_error_as_given", "watch_error_from", "watch_error_warning", "timepiece",
    "zone_date_used", "zone_time_corrected", "zone_description_used_h", "greenwich_date", "body_name", "limb",
    "hs_deg", "index_error_arcmin", "eye_height_m", "eye_height_as_given", "horizon", "waterline_distance_nm",
    "measured_dip_arcmin", "temperature_c",
    "temperature_as_given", "pressure_hpa", "pressure_as_given", "assumed", "sigma_arcmin", "dr_lat_deg", "dr_lon_deg", "course_deg",
    "speed_kn", "dut1_given_s", "fix_group", "fix_group_given", "chart_lat_deg", "chart_lon_deg", "vessel",
    "observer", "voyage", "series", "role", "mark", "mark_lat_deg", "mark_lon_deg", "bearing_deg", "range_nm",
    "bearing_sigma_deg", "range_sigma_nm", "read_problem", "read_problem_column", "dr_carried_from",
    "motion_carried_from",
]

#: navred's own output (``reduce --csv``) read back: its parsed columns that carry a sight, and their keys.
_OUTPUT_COLUMNS = {"sight_utc": "utc", "body_name": "body", "limb": "limb", "hs_deg": "hs",
                   "index_error_arcmin": "index_error", "eye_height_m": "eye_height", "horizon": "horizon",
                   "waterline_distance_nm": "waterline_distance", "measured_dip_arcmin": "measured_dip",
                   "temperature_c": "temperature", "pressure_hpa": "pressure", "dr_lat_deg": "dr_lat",
                   "dr_lon_deg": "dr_lon", "course_deg": "course", "speed_kn": "speed", "dut1_given_s": "dut1",
                   "fix_group": "fix_group", "chart_lat_deg": "chart_lat", "chart_lon_deg": "chart_lon",
                   "vessel": "vessel", "observer": "observer", "voyage": "voyage", "series": "series",
                   "role": "role", "sigma_arcmin": "sigma"}
_OUTPUT_UNITS = {"eye_height": "m", "temperature": "c", "pressure": "hpa", "index_error": "arcmin_on"}


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
        entries = len(self.entries)
        kept = f"{entries} entry row{'' if entries == 1 else 's'} (the DR), " if entries else ""
        return (f"{len(self.table) + entries} rows read{files}: {len(self.table) - self.n_rejected_rows} sights, "
                f"{kept}{self.n_rejected_rows} rejected{empty}")

@dataclass
class _Layout:
    """How one table's headers map onto the vocabulary."""

    keys: dict[str, list[int]]  # key -> indices of the headers that give it
    units: dict[int, str | None]  # header index -> the unit it is given in
    extras: list[int]  # headers navred does not know: carried through as text
    problems: list[str]  # headers refused (ambiguous, or a unit the column does not take)
    #: what the navigator should know of the headers: the columns navred does not read, the repeated ones
    notes: list[str] = field(default_factory=list)
    #: header indices whose angles the header declares decimal degrees ('Hs (deg)', navred's own output)
    decimal_degrees: set[int] = field(default_factory=set)


def _layout(table: RawTable, also_reads: frozenset[str] = frozenset()) -> _Layout:
    """The table's headers matched with the vocabulary; ``also_reads``: normalised headers the caller reads
    itself (a hand working's lines), kept as extra columns without a note."""
    from .readers import column_letter

    normalised = [normalise_header(h) for h in table.header]
    # navred's own reduce output read back: its parsed columns carry the sight, the rest is computed again
    output = {"ho_deg", "hc_deg", "intercept_nm", "status", "sight_utc", "body_name"} <= set(normalised)
    layout = _Layout({}, {}, [], [])
    unread = []
    # a zone description's column, named in the refusal of a bare 'Time' beside it
    zoned = next((h for h in table.header if match_header(h).key == "zone_description"), None)
    for k, header in enumerate(table.header):
        name = normalised[k]
        if name in BOOKKEEPING_HEADERS:
            continue
        if output:
            if name in _OUTPUT_COLUMNS:
                key = _OUTPUT_COLUMNS[name]
                layout.keys.setdefault(key, []).append(k)
                layout.units[k] = _OUTPUT_UNITS.get(key, COLUMN[key].default_unit)
                layout.decimal_degrees.add(k)  # navred writes decimal degrees
            elif header.strip().endswith(OUTPUT_SUFFIX) or (name not in SIGHT_COLUMNS and name not in RESULT_NAMES):
                layout.extras.append(k)
            continue
        if name in also_reads and match_header(header).key in ENTRY_ONLY:
            layout.extras.append(k)  # the caller's own column (a compass working's variation), not a DR entry's
            continue
        match = match_header(header)
        if match.problem and name == "time" and zoned:
            layout.problems.append(
                f"header {header!r} is ambiguous: UTC, or the ship's zone time read with the zone description "
                f"column ({zoned!r}) beside it? a log may give UTC and note the ZD too, and the two readings are "
                f"hours apart: head it 'Zone time' (the ship's clock, with the date and ZD columns: ZT + ZD = UTC) or "
                f"'UTC' (each cell the whole instant, 2026-12-04T22:15Z; the ZD column is then not used)")
        elif match.problem:
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
            if declares_decimal_degrees(header):
                layout.decimal_degrees.add(k)
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
                   budget: ReadBudget | None = None, deviation: DeviationCurve | None = None) -> SightLog:
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
    (:class:`navred.readers.ReadBudget`; by default the bounds of one run). ``deviation`` (a
    :class:`navred.compass.DeviationCurve`, from the deviation card) gives the deviation of a compass course
    entered without one.
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
    return _parse(tables, layouts, dates, rates, deviation)


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

    def read_part(self, part: PlainPart) -> SightLog:
        """A block as the file was looked at (:class:`navred.io.readers.PlainPart`), read as :meth:`read` reads
        it: the same log whether the look at the whole file has ended or not."""
        return _parse([self.plain.read_part(part)], [self.layout], self.dates, self.rates)

    @property
    def parts(self) -> tuple:
        return self.plain.parts


def sight_log_blocks(source: LogSource, *, dates: str | None = None, block_rows: int = 100_000,
                     rates: Ratings | None = None) -> LogBlocks | None:
    """The blocks a log can be read in (see :func:`read_sight_log_blocks`), or None when it must be read
    whole with :func:`read_sight_log` (not a plain CSV file, no longer than one block, or rows that leave
    their fix group or their DR to be worked out from the whole log)."""
    if dates is not None and dates not in DATE_ORDERS:
        raise LogbookError(f"dates {dates!r} is not one of {', '.join(DATE_ORDERS)}")
    plain = plain_csv_blocks(source, block_rows) if isinstance(source, (str, Path)) and Path(source).is_file() \
        else None
    if plain is None or plain.n_lines <= block_rows:
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


class NotInBlocks(Exception):
    """(raised by :attr:`FoundBlocks.parts`) the look at the whole file found that the log must be read whole, or
    in blocks only after a closer look (:func:`sight_log_blocks` says which): what was made of the first blocks is
    to be dropped."""


@dataclass
class FoundBlocks:
    """A long plain log whose blocks are handed out as the file is looked at (:func:`sight_log_blocks_found`):
    :attr:`plan` reads any block it is given (:meth:`LogBlocks.read_part`); iterating :attr:`parts` gives the
    first ``early`` blocks as soon as they are found, then looks at the rest of the file and gives the other
    blocks, or raises :class:`NotInBlocks` when the file turns out not to be one to read in blocks (a blank fix
    group or DR, a line that is not plain, a log of one block): the same decision as :func:`sight_log_blocks`,
    taken before any block's result is used."""

    plan: LogBlocks
    parts: Iterator[PlainPart]

    @property
    def notes(self) -> list[str]:
        return self.plan.notes


def sight_log_blocks_found(source: LogSource, *, dates: str | None = None, block_rows: int = 100_000,
                           rates: Ratings | None = None, early: int = 2) -> FoundBlocks | None:
    """A log's blocks handed out as the file is looked at (see :class:`FoundBlocks`), so that the first
    ``early`` blocks can be worked while the rest of the file is looked at; None when the file's header and first
    block already say it is not one to read so (then :func:`sight_log_blocks` decides, as for any log). The
    blocks are those :func:`sight_log_blocks` gives (tested)."""
    if dates is not None and dates not in DATE_ORDERS:
        raise LogbookError(f"dates {dates!r} is not one of {', '.join(DATE_ORDERS)}")
    found = plain_csv_parts(source, block_rows) if isinstance(source, (str, Path)) and Path(source).is_file() \
        else None
    if found is None:
        return None
    head, looked = found
    try:
        first = next(looked, None)
    except NotPlain:
        return None
    if first is None or first.count < block_rows:
        return None  # one block: read whole
    try:
        table = PlainBlocks.of_parts(head, [first]).block(0)
        layout = _layout(table)
        if layout.problems:
            return None
        _check_is_log(table, layout.keys)
    except LogbookError:
        return None  # refused as sight_log_blocks refuses it
    labels, dr_given = layout.keys.get("fix_group"), layout.keys.get("dr_lat")
    if not labels or "entry" in layout.keys or not dr_given:
        return None

    def clearly_given(part: PlainPart) -> bool:  # no line of the block leaves its fix group or its DR blank
        return not (part.blank_columns[labels].any() or part.blank_columns[dr_given].any())

    if not clearly_given(first):
        return None
    plan = LogBlocks(head, layout, dates, rates)

    def parts() -> Iterator[PlainPart]:
        yield first
        seen = [first]
        try:
            for part in looked:
                seen.append(part)
                if not clearly_given(part):
                    raise NotInBlocks
                if len(seen) <= early:
                    yield part
        except NotPlain:
            raise NotInBlocks from None
        if len(seen) == 1:
            raise NotInBlocks  # a log of exactly one block: read whole, as sight_log_blocks reads it
        plan.plain = PlainBlocks.of_parts(head, seen)  # (the whole file looked at)
        yield from seen[max(early, 1):]

    return FoundBlocks(plan, parts())


#: The sight's own columns a mark row (a bearing or range of a charted object) leaves blank.
MARK_FREE = frozenset({"body", "hs"})
#: The columns that belong to a mark row only.
MARK_COLUMNS = ("mark_lat", "mark_lon", "bearing", "range", "bearing_sigma", "range_sigma")


def check_marks(is_mark: np.ndarray, gathered, problems) -> None:
    """A mark row gives the mark's charted position and one of a bearing and a range, and no body or Hs; a
    sight gives none of a mark's columns."""
    for key in ("mark_lat", "mark_lon"):
        missing = is_mark & gathered[key].blank
        problems.add(np.flatnonzero(missing), key, "", f"a mark's {key.replace('_', ' ')} is needed: the charted "
                     "position of the object observed")
    bearing, ranged = ~gathered["bearing"].blank, ~gathered["range"].blank
    problems.add(np.flatnonzero(is_mark & ~bearing & ~ranged), "bearing", "",
                 "a mark row gives its bearing (degrees true) or its radar range (nm)")
    problems.add(np.flatnonzero(is_mark & bearing & ranged), "range", "",
                 "a mark row gives a bearing or a range, not both: write the range on a row of its own")
    for key in MARK_FREE:
        given = is_mark & ~gathered[key].blank
        problems.add(np.flatnonzero(given), gathered[key].headers[given], "",
                     f"a mark row is a bearing or range of a charted object, not a sight: leave {key} blank")
    for key in MARK_COLUMNS:
        stray = ~is_mark & ~gathered[key].blank
        problems.add(np.flatnonzero(stray), gathered[key].headers[stray], "",
                     f"{key.replace('_', ' ')} belongs to a mark row: name the charted object in the mark column")


#: the columns whose reading depends on the row alone (no DR or motion carried, no zone time worked from
#: another row, no entry of the ship's progress): a DataFrame of these alone can be read in row blocks
_ROW_LOCAL_KEYS = frozenset({"utc", "body", "limb", "hs", "index_error", "eye_height", "horizon", "waterline_distance",
                             "measured_dip", "temperature", "pressure", "dr_lat", "dr_lon", "course", "speed", "dut1",
                             "fix_group", "chart_lat", "chart_lon", "vessel", "observer", "voyage", "series"})


def frame_blocks(frame: pd.DataFrame, block_rows: int) -> list[tuple[int, int]] | None:
    """The spans of rows a DataFrame log can be read in, each on its own, giving what :func:`read_sight_log`
    gives the whole frame once the fix groups and the observers' spellings are made across them
    (:func:`whole_log_columns`): a frame longer than ``block_rows`` whose columns are all read row by row
    (:data:`_ROW_LOCAL_KEYS`) and whose utc, DR (and course and speed, where given) no row leaves blank.
    None otherwise: the frame is read whole."""
    if len(frame) <= block_rows:
        return None
    header = [str(c) for c in frame.columns]
    table = RawTable("(table)", header, [], np.zeros(0, dtype=int))
    try:
        layout = _layout(table)
    except NavredError:
        return None
    if layout.problems or layout.extras or set(layout.keys) - _ROW_LOCAL_KEYS \
            or any(len(v) > 1 for v in layout.keys.values()):
        return None
    for key in ("utc", "dr_lat", "dr_lon", "course", "speed"):
        if key in ("utc", "dr_lat", "dr_lon") and key not in layout.keys:
            return None
        if key in layout.keys and blank_mask(frame.iloc[:, layout.keys[key][0]]).any():
            return None
    return [(start, min(start + block_rows, len(frame))) for start in range(0, len(frame), block_rows)]


def frame_texts(frame: pd.DataFrame) -> dict[int, tuple[np.ndarray, np.ndarray]]:
    """Each column of text of a DataFrame log (every cell a text, or missing) by position: (each row's code, the
    distinct texts), for :func:`read_frame_block` to make a block's cells of. A process forked to read a block
    then touches only the few distinct objects: the frame's own cells, an object per row, would each be copied
    into every process that touches it (the count of references is written into the object), some 30 MB a
    process for a million rows of body names. A column mixing texts with numbers is left as it is."""
    out = {}
    for position in range(frame.shape[1]):
        column = frame.iloc[:, position]
        if not (column.dtype == object or pd.api.types.is_string_dtype(column.dtype)) \
                or pd.api.types.infer_dtype(column, skipna=True) != "string":
            continue
        codes, distinct = pd.factorize(column, use_na_sentinel=True)
        out[position] = (codes.astype(np.int32, copy=False) if len(distinct) < 2**31 else codes,
                         np.asarray(distinct, dtype=object))
    return out


def read_frame_block(frame: pd.DataFrame, start: int, stop: int,
                     texts: dict[int, tuple[np.ndarray, np.ndarray]] | None = None) -> SightLog:
    """Rows ``start`` to ``stop`` of a DataFrame log (:func:`frame_blocks`) read by :func:`read_sight_log`,
    each row numbered as in the whole frame. ``texts`` (:func:`frame_texts` of the frame) gives the block's
    cells of text as the same texts, made of the distinct ones; a missing cell is the frame's own."""
    block = frame.iloc[start:stop]
    if texts:
        block = block.copy(deep=False)
        for position, (codes, distinct) in texts.items():
            own = block.iloc[:, position]
            part = codes[start:stop]
            values = distinct[np.maximum(part, 0)]
            missing = part < 0
            if missing.any():
                values[missing] = own.to_numpy(dtype=object)[missing]
            block.isetitem(position, pd.Series(values, index=block.index, dtype=own.dtype, name=own.name))
    log = read_sight_log(block)
    if start:
        log.table["row"] += start
        log.rejected["row"] += start
    return log


def whole_log_columns(columns: dict[str, np.ndarray]) -> None:
    """The columns of a log read in row blocks (:func:`frame_blocks`) made what one reading of every row gives:
    one spelling per observer, and the automatic fix groups across the blocks (in place)."""
    columns["observer"] = observer_names(np.asarray(columns["observer"], dtype=object))
    if not np.asarray(columns["fix_group_given"], dtype=bool).all():
        table = pd.DataFrame({k: columns[k] for k in ("fix_group", "fix_group_given", "source", "vessel",
                                                      "observer")}, copy=False)
        table["sight_utc"] = columns["sight_utc"]
        ok = np.asarray(columns["read_problem"], dtype=object) == ""
        columns["fix_group"], columns["fix_group_given"] = automatic_fix_groups(table, ok)


def _check_is_log(table: RawTable, keys: dict) -> None:
    required = [c.key for c in COLUMNS if c.required]
    if len(set(keys) & ({"utc", "zone_time", "entry"} | set(required))) < 2:
        separator = f"; it is {_SEPARATOR_NAMES.get(table.separator, 'a spreadsheet')}-separated" \
            if table.separator else ""
        shown = ", ".join(repr(h) for h in table.header[:10]) + (", ..." if len(table.header) > 10 else "")
        raise LogbookError(
            f"{table.source} is not a sight log: none of its columns ({shown}) name a sight's time, body, "
            f"Hs or DR{separator}; required: utc (or date, zone_time and zone_description), body, hs, dr_lat, "
            "dr_lon (see docs/sight-log.md)")


#: the reduction's columns (a log of reduced rows read back)
RESULT_NAMES = frozenset((*RESULT_COLUMNS, *DR_CONTEXT_COLUMNS))

_SEPARATOR_NAMES = {",": "comma", ";": "semicolon", "\t": "tab"}


def _parse(tables: list[RawTable], layouts, dates, rates=None, deviation=None) -> SightLog:
    n = sum(t.n_rows for t in tables)
    problems = Problems(n)
    sources = np.concatenate([texts_of(t.n_rows, t.source) for t in tables]) if tables \
        else np.zeros(0, dtype=object)
    rows = np.concatenate([t.row_numbers for t in tables]) if tables else np.zeros(0, dtype=int)
    gathered = {c.key: gather(tables, layouts, c.key) for c in COLUMNS}
    # malformed rows (wrong field count, control characters, two values for one quantity), first
    offset = 0
    by_reader: dict[int, str] = {}  # rows the reader refused whole: their one reason stands alone
    for table in tables:
        for index, (header, reason) in sorted(table.row_problems.items()):
            problems.add([offset + index], header or "(row)", "", reason)
            by_reader[offset + index] = reason
        offset += table.n_rows
    parsed = {c.key: parse_key(gathered[c.key], c.key, problems, dates) for c in COLUMNS}
    entry = words(parsed["entry"])
    is_entry = parsed["entry"].ok
    is_mark = ~gathered["mark"].blank & ~is_entry
    for column in COLUMNS:
        cells = gathered[column.key]
        sightless = is_entry | (is_mark if column.key in MARK_FREE else False)
        if column.required and not cells.present:
            problems.add(np.flatnonzero(~sightless), column.key, "", f"required column {column.key} is missing")
        elif column.required:
            empty = cells.blank & ~sightless
            problems.add(np.flatnonzero(empty), cells.headers[empty], "", f"{column.key.replace('_', ' ')} is empty")
    check_marks(is_mark, gathered, problems)
    check_entries(entry, is_entry, parsed, gathered, problems, has_card=deviation is not None)
    horizon = words(parsed["horizon"], "sea")
    # the reading a horizon gives: to 90°, or to 180° for an artificial horizon or a back sight
    highest = np.array([HIGHEST_READING_DEG.get(h, 90.0) for h in horizon]) if n else np.zeros(0)
    hs = floats(parsed["hs"])
    too_high = parsed["hs"].ok & (hs > highest)
    problems.add(np.flatnonzero(too_high), gathered["hs"].headers[too_high],
                 [cell_text(v) for v in gathered["hs"].values[too_high]],
                 [f"Hs {v:g}° is outside 0-{h:g}° for a {k} horizon" for v, h, k in
                  zip(hs[too_high], highest[too_high], horizon[too_high])])
    dipped = np.isin(horizon, ["sea", "back", "waterline"]) & ~(parsed["measured_dip"].ok & (horizon != "waterline"))
    needs_eye = gathered["eye_height"].blank & dipped & ~is_entry & ~is_mark
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
    times = time_working(parsed, gathered, problems, rates)
    entries = read_entries(n, sources, rows, entry, is_entry, parsed, times, problems, deviation)
    dr = carried_dr(parsed, gathered, times, is_entry, entries, problems, rows)
    motion_note = carried_motion(dr, parsed, gathered, times, is_entry, entries, rows, problems)
    while True:
        table, found, message, sight_row = _tabled(n, sources, rows, parsed, gathered, times, problems, by_reader,
                                                    dr, motion_note, entry, is_entry)
        if not motion_missing(table, (message == "") & sight_row, gathered, problems):
            break  # (a sight refused for a running fix without its motion changes the groups: made again)
    extras, names = _extras(tables, layouts)
    for name, values in extras.items():
        table[name] = values
    rejected = found[REJECTED_COLUMNS].reset_index(drop=True)
    rejected["row"] = rejected["row"].astype(int)
    if not sight_row.all():
        table = table[sight_row].reset_index(drop=True)
    notes = tuple(dict.fromkeys([note for layout in layouts for note in layout.notes]
                                + [note for t in tables for note in t.notes]  # (a block's own: rows skipped)
                                + _zone_notes(gathered["utc"], parsed["utc"].ok & sight_row, dates, sources, rows)
                                + _assumed_notes(gathered, sources, rows, (message == "") & sight_row, times)
                                + _offset_zone_notes(gathered["zone_description"], parsed["zone_description"].ok
                                                     & sight_row, sources, rows)
                                + list(times.get("notes", []))))
    return SightLog(table, rejected, tuple(t.source for t in tables), sum(t.empty_rows for t in tables), dates,
                    tuple(names), tuple(tables), entries=entries, notes=notes)


def _zone_notes(cells, ok, dates, sources, rows) -> list[str]:
    """The note on instants of the utc column that give no zone (taken as UTC, as the column's name says)."""
    if pd.api.types.is_datetime64_any_dtype(cells.values.dtype):  # a DataFrame's column of instants: its type
        zoneless = ok & (cells.values.dt.tz is None)                # says whether they carry a zone (no cell looked at)
    else:
        zoneless = zoneless_utc(cells.values, ok, dates)
    if not zoneless.any():
        return []
    several = len(set(sources.tolist())) > 1
    named = [f"{Path(str(s)).name} row {r}" if several else f"row {r}" for s, r in
             zip(sources[zoneless].tolist(), rows[zoneless].tolist())]
    shown = ", ".join(named[:5]) + (f" and {len(named) - 5} more" if len(named) > 5 else "")
    count = len(named)
    return [f"{count} instant{'s' if count > 1 else ''} in the utc column give{'' if count > 1 else 's'} no zone "
            f"({shown}): taken as UTC, as the column's name says, whether written as text or as a spreadsheet "
            "date-time cell; if the log holds zone time (the ship's clock), give date, zone_time and zone_description instead "
            "(write Z, 2026-03-26T19:41:00Z, to say UTC)"]


def _offset_zone_notes(cells, ok, sources, rows) -> list[str]:
    """How a zone description written as a UTC offset with its name ('UTC-10', 'GMT+3') was read: one note per
    distinct text, with its rows (the offset's sign is the opposite of the zone description's)."""
    if not cells.present or not ok.any():
        return []
    values = cells.values.to_numpy(dtype=object)
    read: dict[str, list] = {}
    for i in np.flatnonzero(ok).tolist():
        text = values[i]
        if isinstance(text, str) and text.strip()[:3].upper() in ("UTC", "GMT"):
            zd = utc_offset_zone(text)
            if zd is not None:
                read.setdefault(f"{text.strip()}\0{zd}", []).append(i)
    several = len(set(sources.tolist())) > 1
    notes = []
    for key, members in read.items():
        text, zd = key.split("\0")
        zd = int(zd)
        named = [f"{sources[i]} row {rows[i]}" if several else f"row {rows[i]}" for i in members[:8]]
        shown = ", ".join(named) + (f" and {len(members) - 8} more" if len(members) > 8 else "")
        clock = ("UTC itself" if zd == 0 else
                 f"a clock {abs(zd)} h {'behind' if zd > 0 else 'ahead of'} UTC, ZT {'+' if zd > 0 else '−'} "
                 f"{abs(zd)} h = UTC")
        notes.append(f"zone description {text!r} ({shown}) is a UTC offset: read as zone description {zd:+d} "
                     f"({clock}); a zone description has the offset's opposite sign")
    return notes


def _assumed_notes(gathered, sources, rows, sights: np.ndarray, times: dict) -> list[str]:
    """Where a value the navigator left blank is taken as its default, say so: a blank index error is 0′; a blank
    watch error on a sight kept in zone time (no rating log giving it) is 0 s."""
    several = len(set(sources.tolist())) > 1
    notes = []

    def named(blank: np.ndarray) -> str:
        shown = [f"{sources[i]} row {rows[i]}" if several else f"row {rows[i]}" for i in blank[:8].tolist()]
        return ", ".join(shown) + (f" and {blank.size - 8} more" if blank.size > 8 else "")

    cells = gathered["index_error"]
    if cells.present:
        blank = np.flatnonzero(cells.blank & sights)
        if blank.size:
            notes.append(f"index error blank on {named(blank)}: IE 0′ assumed (write 0 where it is nil)")
    cells = gathered["watch_error"]
    if cells.present:
        zone_kept = np.isfinite(np.asarray(times["zd"], dtype=float)) & (np.asarray(times["watch_error_from"]) == "")
        blank = np.flatnonzero(cells.blank & sights & zone_kept)
        if blank.size:
            notes.append(f"watch error blank on {named(blank)}: the time taken as read, 0 s fast or slow assumed "
                         "(write 0 s where the watch is right; 1 s of time is 0.25′ of longitude)")
    return notes


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
    message = texts_of(n, "")
    where = texts_of(n, "")
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
            # a reason the reader gave the row whole (its column '(row)') stands alone, as it names the row itself
            texts[k][index[at]] = [r if c == "(row)" else f"{c}: {r}"
                                   for c, r in zip(column_text[at].tolist(), reason_text[at].tolist())]
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
    unread_body = (message != "") & ~parsed["body"].ok & ~gathered["body"].blank
    if unread_body.any():  # a body navred does not know ('Sunn'): the row named by the body as written
        body = table["body_name"].to_numpy(dtype=object).copy()
        body[unread_body] = [" ".join(cell_text(v).split()) for v in gathered["body"].values[unread_body]]
        table["body_name"] = body
    bad_entry = is_entry & (message != "") & gathered["body"].blank
    if bad_entry.any():  # named by its kind, in brackets, where a sight names its body
        body = table["body_name"].to_numpy(dtype=object).copy()
        body[bad_entry] = np.char.add(np.char.add("(", entry[bad_entry].astype(str)), ")").astype(object)
        table["body_name"] = body
    table["fix_group"], table["fix_group_given"] = automatic_fix_groups(table, (message == "") & sight_row)
    return table, found, message, sight_row


def _sight_table(n, sources, rows, parsed, gathered, times, message, where) -> pd.DataFrame:
    ok_time = times["ok"]
    stamps = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    if ok_time.any():
        stamps[ok_time] = utc_jd_to_datetime64(times["jd1"][ok_time], times["jd2"][ok_time])
    utc = pd.Series(stamps).dt.tz_localize("UTC")
    zd = times["zd"]
    shown = np.isfinite(zd) & ok_time
    corrected = texts_of(n, "")
    if shown.any():  # rounded to the second, a leap second kept as its :60 (ZT = UTC − ZD, whole hours)
        local = utc_jd_to_seconds_text(times["jd1"][shown], times["jd2"][shown], zd[shown])
        corrected[shown] = [text[11:19] for text in local.tolist()]
    greenwich = texts_of(n, "")
    if ok_time.any():  # each distinct date's text made once (and shared by its rows)
        days, each = np.unique(stamps[ok_time].astype("datetime64[D]"), return_inverse=True)
        greenwich[ok_time] = np.datetime_as_string(days).astype(object)[each]
    defaults = {c.key: c.default for c in COLUMNS}

    def numbers(key):
        return floats(parsed[key], np.nan if defaults[key] is None else defaults[key])

    def as_given(key):
        cells = gathered[key]
        other = parsed[key].ok & (cells.units != COLUMN[key].units[0])
        out = texts_of(n, "")
        if other.any():
            out[other] = [f"{cell_text(v)} {UNIT_NAMES[u]}" for v, u in zip(cells.values[other], cells.units[other])]
        return out

    def watch_error_as_given():
        """The watch error as the navigator wrote it ('7 s slow'); a bare number under a header that states the
        sign, with its meaning ('-7 (7 s slow)'); blank where none was given."""
        cells, ok = gathered["watch_error"], parsed["watch_error"].ok
        out = texts_of(n, "")
        shown: dict = {}  # each distinct (cell, seconds) once: a log repeats its watch error row after row
        for i in np.flatnonzero(ok & ~cells.blank):
            key = (cell_text(cells.values.iloc[i]).strip(), float(parsed["watch_error"].value[i]))
            if key not in shown:
                said = watch_error_words(key[1])
                worded = re.search(r"fast|slow|\d\s*(?:f|sl)\.?$", key[0], re.IGNORECASE)
                shown[key] = key[0] if worded else f"{key[0]} ({said})"
            out[i] = shown[key]
        return out

    return pd.DataFrame({
        "source": sources, "row": rows.astype(int), "sight_utc": utc,
        "utc_jd1": times["jd1"], "utc_jd2": times["jd2"], "time_given": times["time_given"],
        "time_as_read": times["as_read"], "watch_error_applied_s": times["watch_error_s"],
        "watch_error_as_given": watch_error_as_given(),
        "watch_error_from": times["watch_error_from"], "watch_error_warning": times["watch_error_warning"],
        "timepiece": words(parsed["timepiece"]),
        "zone_date_used": times["zone_date"], "zone_time_corrected": corrected,
        "zone_description_used_h": zd,
        "greenwich_date": greenwich,
        "body_name": _body_or_mark(words(parsed["body"]), words(parsed["mark"]), parsed["range"].ok),
        "limb": words(parsed["limb"]), "hs_deg": numbers("hs"),
        "index_error_arcmin": numbers("index_error"),
        "eye_height_m": numbers("eye_height"), "eye_height_as_given": as_given("eye_height"),
        "horizon": words(parsed["horizon"], "sea"), "waterline_distance_nm": numbers("waterline_distance"),
        "measured_dip_arcmin": numbers("measured_dip"),
        "temperature_c": numbers("temperature"), "temperature_as_given": as_given("temperature"),
        "pressure_hpa": numbers("pressure"), "pressure_as_given": as_given("pressure"),
        "assumed": assumed_defaults(parsed, n), "sigma_arcmin": numbers("sigma"),
        "dr_lat_deg": numbers("dr_lat"), "dr_lon_deg": numbers("dr_lon"),
        "course_deg": numbers("course"), "speed_kn": numbers("speed"), "dut1_given_s": numbers("dut1"),
        "fix_group": words(parsed["fix_group"]), "fix_group_given": parsed["fix_group"].ok,
        "chart_lat_deg": numbers("chart_lat"), "chart_lon_deg": numbers("chart_lon"),
        "vessel": words(parsed["vessel"]), "observer": observer_names(words(parsed["observer"])),
        "voyage": words(parsed["voyage"]), "series": words(parsed["series"]), "role": words(parsed["role"]),
        "mark": words(parsed["mark"]), "mark_lat_deg": numbers("mark_lat"), "mark_lon_deg": numbers("mark_lon"),
        "bearing_deg": numbers("bearing"), "range_nm": numbers("range"),
        "bearing_sigma_deg": numbers("bearing_sigma"), "range_sigma_nm": numbers("range_sigma"),
        "read_problem": message, "read_problem_column": where,
    })


def _body_or_mark(body: np.ndarray, mark: np.ndarray, ranged: np.ndarray) -> np.ndarray:
    """Each row's body, or on a mark row the mark and what was taken of it ('Carn light (bearing)'), so that
    every table and message names the line by what it is."""
    out = body.copy()
    marked = mark != ""
    if marked.any():
        out[marked] = [f"{m} ({'range' if r else 'bearing'})" for m, r in zip(mark[marked], ranged[marked])]
    return out


#: The log's quantities whose default a sight may take (vocabulary.COLUMNS), as a working names them and
#: the unit it writes
ASSUMED = (("index_error", "index error", "′"), ("temperature", "temperature", " °C"), ("pressure", "pressure", " hPa"))


def assumed_defaults(parsed, n: int) -> np.ndarray:
    """What each sight took as its default because the log left it blank, in words ('index error 0′;
    temperature 10 °C'), '' where nothing was assumed: a value assumed is never shown as observed. Each of the
    few distinct texts is one object shared by its rows (a long log would otherwise hold a copy per row)."""
    which = np.zeros(n, dtype=np.intp)  # bit k: the k-th of ASSUMED taken as its default
    for bit, (key, _, _) in enumerate(ASSUMED):
        which |= (~np.asarray(parsed[key].ok, dtype=bool)).astype(np.intp) << bit
    said = [f"{name} {COLUMN[key].default:g}{unit}" for key, name, unit in ASSUMED]
    texts = ["; ".join(w for bit, w in enumerate(said) if code >> bit & 1) for code in range(1 << len(ASSUMED))]
    return chosen_texts(which, texts)


def _extra_name(header: str) -> str:
    """The name a column navred does not know goes by: normalised, and marked when navred uses it."""
    if header.strip().endswith(OUTPUT_SUFFIX):
        return f"{normalise_header(header.strip()[:-len(OUTPUT_SUFFIX)])} {OUTPUT_SUFFIX}"
    name = normalise_header(header) or "column"
    return f"{name} {OUTPUT_SUFFIX}" if name in SIGHT_COLUMNS or name in RESULT_NAMES else name


def _extras(tables, layouts) -> tuple[dict[str, np.ndarray], list[str]]:
    """The log's own extra columns as text, one column per name across every table (where two columns of a table
    go by one name, the later one)."""
    # each column's name worked once (a hand working has some forty such columns: named again for every name, they
    # took a read of a class's workings 20 ms)
    columns_by_name = [{_extra_name(table.header[k]): k for k in layout.extras} for table, layout in zip(tables, layouts)]
    names = list(dict.fromkeys(name for by_name in columns_by_name for name in by_name))
    out = {}
    for name in names:
        parts = []
        for table, by_name in zip(tables, columns_by_name):
            k = by_name.get(name)
            parts.append(texts_of(table.n_rows, "") if k is None else table.columns[k].map(cell_text).to_numpy(dtype=object))
        out[name] = np.concatenate(parts) if parts else np.zeros(0, dtype=object)
    return out, names


def _as_read(tables) -> pd.DataFrame:
    """Every data row as read: its file, its row number and its cells under the log's own headers."""
    frames = []
    for table in tables:
        header = _unique(table.header)
        data = {"source file": texts_of(table.n_rows, table.source),
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


__all__ = ["read_sight_log", "read_sight_log_blocks", "sight_log_blocks", "LogBlocks", "sight_log_blocks_found",
           "FoundBlocks", "NotInBlocks", "frame_blocks",
           "frame_texts", "read_frame_block", "whole_log_columns", "SightLog", "LogbookError",
           "LogSource", "REJECTED_COLUMNS", "SIGHT_COLUMNS", "ENTRY_COLUMNS", "DEFAULT_GROUP_GAP_HOURS",
           "TIME_AGREEMENT_S", "MAX_REASONS_PER_ROW", "with_decimal_point"]
