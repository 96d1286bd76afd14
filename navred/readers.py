"""Reading a table from an untrusted file: CSV (any common separator and encoding), .xlsx, or a DataFrame.

Edge code: the only module that opens a sight-log file. It returns the cells as written,
row by row, with the row number a spreadsheet user sees (the header is row 1 when it is
the first line), and marks the rows that are malformed (the wrong number of fields, a NUL
byte or another control character, an over-long cell) so that each is rejected alone and
the rest of the file is still read. Nothing is interpreted here: that is the log reader's
job (:mod:`navred.logbook`).

What it reads is bounded (file size, rows, columns, cell length, the unzipped size of a
spreadsheet), so a crafted file is refused quickly instead of filling the memory.
"""

from __future__ import annotations

import csv
import io
import re
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import NavredError
from .vocabulary import match_header

#: Limits on what one file may hold (documented in docs/sight-log.md); a larger log is split.
MAX_FILE_BYTES = 128 * 1024 * 1024
MAX_ROWS = 2_000_000
MAX_COLUMNS = 200
MAX_CELL_CHARS = 32_767  # the most a spreadsheet cell holds
MAX_UNZIPPED_BYTES = 512 * 1024 * 1024
MAX_ZIP_RATIO = 200.0

SEPARATORS = {",": "comma", ";": "semicolon", "\t": "tab"}
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_NUL_STANDIN = "\ue000"  # a NUL byte while the CSV is split (the csv module refuses NUL itself)
_CR_STANDIN = "\ue001"  # a carriage return alone inside a line, likewise


class LogbookError(NavredError):
    """A file that is not a readable sight log at all."""


class MissingFormulaValue:
    """A spreadsheet formula cell with no saved value (its value is unknown until a spreadsheet program computes it)."""

    def __init__(self, formula: str):
        self.formula = formula

    def __repr__(self) -> str:
        return f"formula {self.formula} with no saved value"

    def __str__(self) -> str:
        return self.formula


@dataclass
class RawTable:
    """One table as written: the header, the cells column by column, and each row's number."""

    source: str
    header: list[str]
    columns: list[pd.Series]  # one column of cells per header, index 0..n-1
    row_numbers: np.ndarray  # the spreadsheet row number of each data row
    #: malformed rows: data-row index -> (header of the offending column, or '', reason)
    row_problems: dict[int, tuple[str, str]] = field(default_factory=dict)
    separator: str | None = None
    decimal_comma: bool = False
    empty_rows: int = 0
    #: rows as read that are not in ``columns`` (too many or too few fields), for the as-read sheet
    malformed_cells: dict[int, list[str]] = field(default_factory=dict)

    @property
    def n_rows(self) -> int:
        return len(self.row_numbers)


def read_table(source: object) -> list[RawTable]:
    """The tables of a source: one file, a list of files, a folder of logs, or a pandas DataFrame."""
    if hasattr(source, "columns") and hasattr(source, "iloc"):
        return [_from_frame(source)]
    if isinstance(source, (list, tuple)):
        tables = []
        for item in source:
            tables.extend(read_table(item))
        if not tables:
            raise LogbookError("no sight logs given")
        return tables
    path = Path(source)
    if path.is_dir():
        files = sorted(p for p in path.iterdir()
                       if p.is_file() and p.suffix.lower() in (".csv", ".tsv", ".txt", ".xlsx", ".xlsm")
                       and not p.name.startswith((".", "~$")))
        if not files:
            raise LogbookError(f"{path} is a folder with no sight logs in it (.csv, .tsv, .txt or .xlsx)")
        return [table for file in files for table in read_table(file)]
    return [_read_file(path)]


def _read_file(path: Path) -> RawTable:
    if not path.exists():
        raise LogbookError(f"no such file: {path}")
    if not path.is_file():
        raise LogbookError(f"{path} is not a regular file")
    size = path.stat().st_size
    if size == 0:
        raise LogbookError(f"{path} is empty: a sight log needs a header row and one row per sight")
    if size > MAX_FILE_BYTES:
        raise LogbookError(f"{path} is {size / 2**20:.0f} MiB; navred reads logs of up to "
                           f"{MAX_FILE_BYTES // 2**20} MiB: split it into several files and give them all")
    with open(path, "rb") as handle:
        head = handle.read(8)
    if path.suffix.lower() in (".xlsx", ".xlsm"):
        if not head.startswith(b"PK"):
            raise LogbookError(f"{path} is named .xlsx but is not a spreadsheet file")
        return _read_xlsx(path)
    if head.startswith(b"PK"):
        raise LogbookError(f"{path} is not a text CSV file: it is a zip archive (an .xlsx workbook named "
                           "otherwise?); give it its .xlsx name or save the log as CSV")
    if head.startswith(b"\x1f\x8b"):
        raise LogbookError(f"{path} is a compressed (gzip) file, not a text CSV file: unpack it first")
    return _read_csv(path, path.read_bytes())


def _decode(data: bytes, path: Path) -> str:
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="replace")
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        return data.decode("utf-16", errors="replace")  # a spreadsheet's "Unicode text" export
    head = data[:4096]
    binary = sum(head.count(bytes([c])) for c in (*range(0, 9), *range(14, 32)))
    if binary > len(head) // 100:
        raise LogbookError(f"{path} is not a text CSV file (it looks binary, or is UTF-16 without a "
                           "byte-order mark); save the log as CSV (UTF-8) or .xlsx")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError:
        return data.decode("cp1252", errors="replace")


def _split(line: str, separator: str) -> list[str]:
    return next(csv.reader([line], delimiter=separator), [])


def _choose_separator(first_line: str) -> str:
    """The separator that makes most sight-log columns of the header line."""
    best, best_score = ",", (-1, 0)
    for separator in SEPARATORS:
        cells = _split(first_line, separator)
        known = sum(match_header(c).key is not None for c in cells)
        score = (known, len(cells))
        if score > best_score:
            best, best_score = separator, score
    return best


def _read_csv(path: Path, data: bytes) -> RawTable:
    text = _decode(data, path).replace("\x00", _NUL_STANDIN)
    if "\r" in text:
        if "\n" not in text:
            text = text.replace("\r", "\n")  # the old line ends of some spreadsheet programs
        else:
            # a carriage return alone inside a line is a control character there: the row is refused alone
            text = text.replace("\r\n", "\n").replace("\r", _CR_STANDIN)
    first, header_line = None, ""
    for index, line in enumerate(io.StringIO(text)):
        if line.strip().strip(",;\t"):
            first, header_line = index, line
            break
    if first is None:
        raise LogbookError(f"{path} has no header row: a sight log needs one, naming its columns")
    separator = _choose_separator(header_line)
    csv.field_size_limit(MAX_CELL_CHARS * 4)
    problems: dict[int, tuple[str, str]] = {}
    try:
        records = _records(csv.reader(io.StringIO(text), delimiter=separator), path, first)
    except csv.Error as exc:
        # the file cannot be split as one CSV (a cell larger than any cell can be, quotes that never
        # close): read it line by line instead, so that no row is lost, and refuse the rows that fail
        records = []
        for line in io.StringIO(text):
            try:
                records.append(next(csv.reader([line], delimiter=separator), []))
            except csv.Error as line_exc:
                problems[len(records) - first - 1] = ("", f"this line cannot be read as CSV ({line_exc})")
                records.append([])
        del exc
    header = [h.strip() for h in records[first]] if first < len(records) else []
    return _table(str(path), header, records[first + 1:], first + 2, problems, separator)


def _records(reader, path, first) -> list[list[str]]:
    records: list[list[str]] = []
    for record in reader:
        records.append(record)
        if len(records) > MAX_ROWS + first + 1:
            raise LogbookError(f"{path} has more than {MAX_ROWS:,} rows, the most navred reads from "
                               "one file: split it into several files and give them all")
    return records


def _table(source, header, records, first_row_number, problems, separator) -> RawTable:
    """Build a RawTable from text records (CSV): rows with the wrong number of fields noted, empty rows skipped."""
    while header and header[-1] == "":
        header.pop()
    _check_width(source, header)
    width = len(header)
    columns: list[list[str]] = [[] for _ in range(width)]
    numbers: list[int] = []
    kept: dict[int, tuple[str, str]] = {}
    malformed: dict[int, list[str]] = {}
    empty = 0
    blank_row = [""] * width
    for index, record in enumerate(records):
        problem = problems.get(index)
        if len(record) != width or problem is not None:
            if problem is None and not any(cell.strip() for cell in record):
                empty += 1
                continue
            if problem is None and len(record) > width and not any(c.strip() for c in record[width:]):
                record = record[:width]  # trailing empty fields, as some spreadsheets write them
            else:
                kept[len(numbers)] = problem or ("", (
                    f"row has {len(record)} fields where the header has {width}: a missing or extra "
                    f"{SEPARATORS[separator]} shifts the values (quote a text that holds one, such as \"Smith, J\")"))
                malformed[len(numbers)] = [_shown(c) for c in record]
                record = blank_row
        elif not any(cell.strip() for cell in record):
            empty += 1
            continue
        numbers.append(first_row_number + index)
        for k in range(width):
            columns[k].append(record[k])
    series = [pd.Series(column, dtype=object) for column in columns]
    return _finish(source, header, series, np.asarray(numbers, dtype=int), kept, malformed, separator, empty)


def _check_width(source, header) -> None:
    if len(header) > MAX_COLUMNS:
        raise LogbookError(f"{source} has {len(header)} columns; navred reads at most {MAX_COLUMNS}: split the log")


def _shown(cell: str) -> str:
    """A cell's text made safe to show: control characters replaced, length bounded."""
    return _CONTROL.sub("\ufffd", cell.replace(_NUL_STANDIN, "\ufffd").replace(_CR_STANDIN, "\ufffd"))[:MAX_CELL_CHARS]


_BAD_TEXT = re.compile(f"[{_NUL_STANDIN}{_CR_STANDIN}\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


def _text_problem(cell: str) -> str:
    if _NUL_STANDIN in cell or "\x00" in cell:
        return "the cell holds a NUL byte (a damaged or binary file?)"
    if _CR_STANDIN in cell:
        return "the cell holds a carriage return in the middle of a line (code 13); retype it"
    found = _CONTROL.search(cell)
    if found:
        return f"the cell holds a control character (code {ord(found.group())}); retype it"
    return f"the cell holds {len(cell):,} characters, more than {MAX_CELL_CHARS:,}"


def _finish(source, header, columns, numbers, problems, malformed, separator, empty) -> RawTable:
    """Mark the rows whose text cells hold a NUL byte, a control character or too many characters
    (each such row is rejected alone), column by column; each distinct text is looked at once."""
    for k, column in enumerate(columns):
        bad = _bad_text_rows(column)
        if bad is None:
            continue
        for row in bad:
            if row in problems:
                continue
            problems[int(row)] = (header[k], _text_problem(str(column.iloc[row])))
            malformed[int(row)] = ["" if _is_blank(c.iloc[row]) else _shown(str(c.iloc[row])) for c in columns]
    if problems:
        rows = np.fromiter(problems, dtype=int)
        for k, column in enumerate(columns):
            cells = column.to_numpy(dtype=object, copy=True)
            cells[rows] = None
            columns[k] = pd.Series(cells, dtype=object)
    return RawTable(source, header, columns, numbers, problems, separator, separator in (";", "\t"), empty,
                    malformed)


def _bad_text_rows(column: pd.Series):
    """The rows whose text holds a NUL, a control character or too many characters; None when none do.

    The distinct texts are joined and searched at once; rows are looked for only when one is bad."""
    if not len(column) or not (column.dtype == object or pd.api.types.is_string_dtype(column.dtype)):
        return None
    cells = column.to_numpy(dtype=object)
    texts = list({u for u in cells.tolist() if isinstance(u, str)})
    if not texts or (not _BAD_TEXT.search("\n".join(texts)) and max(map(len, texts)) <= MAX_CELL_CHARS):
        return None
    bad = {u for u in texts if _BAD_TEXT.search(u) or len(u) > MAX_CELL_CHARS}
    return np.flatnonzero([isinstance(v, str) and v in bad for v in cells])


def _distinct_text(column: pd.Series):
    """(codes, distinct texts) of a column's text cells: code -1 where a cell is not text; (None, None)
    when the column holds no text at all."""
    if not len(column) or not (column.dtype == object or pd.api.types.is_string_dtype(column.dtype)):
        return None, None
    codes, uniques = pd.factorize(column, use_na_sentinel=True)
    uniques = np.asarray(uniques, dtype=object)
    is_text = np.array([isinstance(u, str) for u in uniques], dtype=bool)
    if not is_text.any():
        return None, None
    if not is_text.all():
        remap = np.where(is_text, np.cumsum(is_text) - 1, -1)
        codes = np.where(codes >= 0, remap[codes], -1)
        uniques = uniques[is_text]
    return codes, uniques


def _is_blank(value) -> bool:
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def _check_zip(path: Path) -> None:
    """Refuse a spreadsheet that would unzip to far more than it is (a zip bomb), before parsing it."""
    try:
        with zipfile.ZipFile(path) as archive:
            members = archive.infolist()
    except zipfile.BadZipFile as exc:
        raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
    unzipped = sum(m.file_size for m in members)
    zipped = max(sum(m.compress_size for m in members), 1)
    if unzipped > MAX_UNZIPPED_BYTES or unzipped / zipped > MAX_ZIP_RATIO:
        raise LogbookError(f"{path} would unzip to {unzipped / 2**20:,.0f} MiB from {zipped / 2**20:,.1f} MiB; "
                           f"navred opens spreadsheets of up to {MAX_UNZIPPED_BYTES // 2**20} MiB unzipped "
                           f"and {MAX_ZIP_RATIO:.0f} times their size: split the log, or save it as CSV")


def _read_xlsx(path: Path) -> RawTable:
    import openpyxl

    _check_zip(path)
    try:
        book = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds for a damaged file
        raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
    try:
        names = book.sheetnames
        lower = {n.lower(): n for n in names}
        # navred's own workbook is read from its 'Sights as read' sheet: the log exactly as it was
        name = lower.get("sights as read") or lower.get("sights") or names[0]
        sheet = book[name]
        rows = []
        for row in sheet.iter_rows(values_only=True):
            rows.append(list(row))
            if len(rows) > MAX_ROWS + 1:
                raise LogbookError(f"{path}, sheet {name!r} has more than {MAX_ROWS:,} rows: split it")
    finally:
        book.close()
    label = f"{path} (sheet {name!r})" if len(names) > 1 else str(path)
    first = next((i for i, r in enumerate(rows) if any(_filled(v) for v in r)), None)
    if first is None:
        raise LogbookError(f"{path}, sheet {name!r} is empty")
    header = ["" if v is None else str(v).strip() for v in rows[first]]
    while header and header[-1] == "":
        header.pop()
    body = rows[first + 1:]
    last = max((i for i, r in enumerate(body) if any(_filled(v) for v in r)), default=-1)
    body = body[:last + 1]
    _mark_formulas(path, name, body, first + 1, len(header))
    return _typed_table(label, header, body, first + 2)


def _filled(value) -> bool:
    return value is not None and not (isinstance(value, str) and not value.strip())


def _mark_formulas(path, sheet_name, body, first_index, width) -> None:
    """Put a MissingFormulaValue where a formula cell has no saved value (openpyxl gives None)."""
    blanks = {(i, k) for i, row in enumerate(body) for k in range(min(width, len(row))) if row[k] is None}
    if not blanks:
        return
    import openpyxl

    book = openpyxl.load_workbook(path, read_only=True, data_only=False)
    try:
        for i, row in enumerate(book[sheet_name].iter_rows(min_row=first_index + 1,
                                                            max_row=first_index + len(body))):
            for k, cell in enumerate(row[:width]):
                if (i, k) in blanks and getattr(cell, "data_type", None) == "f":
                    body[i][k] = MissingFormulaValue(str(cell.value))
    finally:
        book.close()


def _typed_table(source, header, body, first_row_number) -> RawTable:
    """A RawTable from a spreadsheet's typed cells: empty rows skipped, bad text noted."""
    _check_width(source, header)
    width = len(header)
    for k, name in enumerate(header):
        if name == "" and any(k < len(r) and _filled(r[k]) for r in body):
            raise LogbookError(f"{source}: column {_column_letter(k)} holds values but has no header (merged "
                               "header cells?); give each column its own header cell")
    columns: list[list[object]] = [[] for _ in range(width)]
    numbers: list[int] = []
    empty = 0
    for index, raw in enumerate(body):
        cells = list(raw[:width]) + [None] * (width - len(raw))
        if not any(_filled(v) for v in cells):
            empty += 1
            continue
        numbers.append(first_row_number + index)
        for k in range(width):
            value = cells[k]
            # a TRUE/FALSE cell is text to navred (True == 1 must not pass for a number)
            columns[k].append(("TRUE" if value else "FALSE") if isinstance(value, bool) else value)
    series = [pd.Series(column, dtype=object) for column in columns]
    return _finish(source, header, series, np.asarray(numbers, dtype=int), {}, {}, None, empty)


def _column_letter(index: int) -> str:
    letters = ""
    index += 1
    while index:
        index, remainder = divmod(index - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


def _from_frame(frame) -> RawTable:
    """A RawTable from a DataFrame: its columns kept with their types, a row named by its position."""
    header = [str(c) for c in frame.columns]
    _check_width("(table)", header)
    columns = []
    for k in range(frame.shape[1]):
        column = frame.iloc[:, k].reset_index(drop=True)
        if column.dtype == bool:
            column = column.map({True: "TRUE", False: "FALSE"}).astype(object)
        elif column.dtype == object:
            column = column.map(lambda v: ("TRUE" if v else "FALSE") if isinstance(v, (bool, np.bool_)) else v)
        columns.append(column)
    numbers = np.arange(1, len(frame) + 1)
    blank = np.column_stack([_blank_mask(c) for c in columns]) if columns else np.ones((len(frame), 0), bool)
    keep = ~blank.all(axis=1) if columns else np.zeros(len(frame), dtype=bool)
    if not keep.all():
        columns = [c[keep].reset_index(drop=True) for c in columns]
        numbers = numbers[keep]
    return _finish("(table)", header, columns, numbers, {}, {}, None, int((~keep).sum()))


def blank_mask(column: pd.Series) -> np.ndarray:
    """Cells with no value: missing (None, NaN, NaT) or only spaces."""
    return _blank_mask(column)


def _blank_mask(column: pd.Series) -> np.ndarray:
    missing = column.isna().to_numpy(dtype=bool).copy()
    codes, uniques = _distinct_text(column)
    if codes is not None:
        spaces = np.array([not u.strip() for u in uniques], dtype=bool)
        if spaces.any():
            missing[codes >= 0] |= spaces[codes[codes >= 0]]
    return missing


__all__ = ["RawTable", "read_table", "blank_mask", "LogbookError", "MissingFormulaValue", "MAX_FILE_BYTES",
           "MAX_ROWS", "MAX_COLUMNS", "MAX_CELL_CHARS"]
