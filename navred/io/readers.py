"""Reading a table from an untrusted file: CSV (any common separator and encoding), .xlsx, or a DataFrame.

Edge code: the only module that opens a sight-log file. It returns the cells as written,
row by row, with the row number a spreadsheet user sees (the header is row 1 when it is
the first line), and marks the rows that are malformed (the wrong number of fields, a NUL
byte or another control character, an over-long cell) so that each is rejected alone and
the rest of the file is still read. Nothing is interpreted here: that is the log reader's
job (:mod:`navred.io.logbook`).

What it reads is bounded (file size, rows, columns, cell length, the unzipped size of a
spreadsheet), so a crafted file is refused quickly instead of filling the memory.
"""

from __future__ import annotations

import csv
import functools
import hashlib
import io
import re
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from os import PathLike
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import NavredError
from ..vocabulary import match_header
from .sheetreader import (
    CellProblem,
    MissingFormulaValue,
    column_letters,
    open_workbook,
    read_sheet_cells,
)

#: Limits on what one file may hold (docs/security.md lists each with what it protects); a larger log is split.
MAX_FILE_BYTES = 128 * 1024 * 1024
#: rows of one plain CSV log read block by block (navred reduce --csv)
MAX_ROWS = 2_000_000
MAX_COLUMNS = 200
MAX_CELL_CHARS = 32_767  # the most a spreadsheet cell holds
MAX_UNZIPPED_BYTES = 512 * 1024 * 1024
MAX_ZIP_RATIO = 200.0
#: Limits on one run, across every file and sheet it reads (a folder of logs, a class workbook of many sheets):
#: the text of its files, the spreadsheet XML it parses, and the rows and cells it holds at once. Each keeps a
#: run within about a gigabyte of memory and its reading within seconds (docs/security.md, docs/speed.md).
MAX_RUN_BYTES = 256 * 1024 * 1024
MAX_RUN_XML_BYTES = 32 * 1024 * 1024
MAX_RUN_ROWS = 200_000
MAX_RUN_CELLS = 8_000_000
#: rows of a DataFrame an API caller passes (already in its memory: the bound of one long CSV log, MAX_ROWS)
MAX_FRAME_ROWS = MAX_ROWS

SEPARATORS = {",": "comma", ";": "semicolon", "\t": "tab"}
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_NUL_STANDIN = "\ue000"  # a NUL byte while the CSV is split (the csv module refuses NUL itself)
_CR_STANDIN = "\ue001"  # a carriage return alone inside a line, likewise

#: The columns of every table of rejected rows (a sight log's, a rating log's): the file, the row as a
#: spreadsheet shows it, the column, the value as written and why it was refused.
REJECTED_COLUMNS = ["source", "row", "column", "value", "reason"]

#: What a reader takes: a file (its path), a list of files, a folder of them, or a pandas DataFrame.
LogSource = str | PathLike[str] | Sequence[str | PathLike[str]] | pd.DataFrame


class LogbookError(NavredError):
    """A file that is not a readable sight log at all."""


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
    #: what the reader noted about the file as a whole (how it was decoded), for the navigator
    notes: list[str] = field(default_factory=list)
    #: the columns (by index) known to hold no blank cell: the file was looked at (a long plain log's blocks)
    filled_columns: frozenset[int] = frozenset()

    @property
    def n_rows(self) -> int:
        return len(self.row_numbers)


class ReadBudget:
    """What one run may read, across every file and sheet: bytes of text, bytes of spreadsheet XML, rows and
    cells held at once. Each ``take_*`` counts what a file is about to cost and refuses, in one line naming the
    file, what would go beyond the bound, before the expensive work is done."""

    def __init__(self, *, rows: int | None = None, cells: int | None = None, text_bytes: int | None = None,
                 xml_bytes: int | None = None):
        self.limits = {"rows": MAX_RUN_ROWS if rows is None else rows, "cells": MAX_RUN_CELLS if cells is None else cells,
                       "text": MAX_RUN_BYTES if text_bytes is None else text_bytes,
                       "xml": MAX_RUN_XML_BYTES if xml_bytes is None else xml_bytes}
        self.used = dict.fromkeys(self.limits, 0)

    def _take(self, what: str, amount: int, source: str, message) -> None:
        if self.used[what] + amount > self.limits[what]:
            raise LogbookError(message(self.used[what] + amount, self.limits[what]))
        self.used[what] += amount

    def take_text(self, size: int, source: str) -> None:
        self._take("text", size, source, lambda total, limit: (
            f"{source}: the logs of this run come to {total / 2**20:,.0f} MiB; navred reads at most "
            f"{limit // 2**20} MiB in one run: give the logs in several runs"))

    def take_xml(self, size: int, source: str) -> None:
        self._take("xml", size, source, lambda total, limit: (
            f"{source}: the spreadsheets of this run unzip to {total / 2**20:,.0f} MiB of cells; navred reads at "
            f"most {limit // 2**20} MiB of a spreadsheet's cells in one run (about a million cells): save a long "
            "log as CSV, or split it"))

    def check_rows(self, rows: int, source: str) -> None:
        """Refuse now, without counting them, rows that could not be held (a file's lines, before it is read)."""
        if self.used["rows"] + rows > self.limits["rows"] + 1:
            self.take_rows(rows, 1, source)

    def take_rows(self, rows: int, columns: int, source: str) -> None:
        self._take("rows", rows, source, lambda total, limit: (
            f"{source}: the logs of this run hold {total:,} rows or more; navred holds at most {limit:,} rows at "
            "once (about a gigabyte of memory): split the logs, or reduce a long plain CSV log with navred reduce "
            "--csv, which reads it in blocks when it is plain (no quoted cells, no control characters, one kind of line "
            "end) and every row gives its fix_group and its DR"))
        self.take_cells(rows * max(columns, 1), source)

    def take_cells(self, cells: int, source: str) -> None:
        self._take("cells", cells, source, lambda total, limit: (
            f"{source}: the logs of this run hold {total:,} cells or more; navred holds at most {limit:,} at once: "
            "split the logs, or leave out the columns navred does not use"))


def read_table(source: LogSource | RawTable, *, all_sheets: bool = False,
               budget: ReadBudget | None = None) -> list[RawTable]:
    """The tables of a source: one file, a list of files, a folder of logs, a pandas DataFrame, or a RawTable.

    ``all_sheets``: every sheet of a workbook that holds a table (a class's workings, a sheet per
    cadet), named ``file (sheet 'name')``; otherwise a workbook gives one table (navred's own from
    its 'Sights as read' sheet, else the first sheet). Everything read is counted against
    ``budget`` (one :class:`ReadBudget` for the whole call when none is given)."""
    budget = ReadBudget() if budget is None else budget
    if hasattr(source, "columns") and hasattr(source, "iloc"):
        # a DataFrame is already in the caller's memory (not a file from another ship): held to the rows of one
        # long CSV log, not to what a run may read from files (docs/security.md)
        if len(source) > MAX_FRAME_ROWS:
            raise LogbookError(f"the table holds {len(source):,} rows; navred reads at most {MAX_FRAME_ROWS:,} rows "
                               "of a DataFrame at once: give it in parts")
        return [_from_frame(source)]
    if isinstance(source, RawTable):  # a table already read (a sight-book page turned into a table): counted then
        return [source]
    if isinstance(source, (list, tuple)):
        tables = []
        for item in source:
            tables.extend(read_table(item, all_sheets=all_sheets, budget=budget))
        if not tables:
            raise LogbookError("no sight logs given")
        return tables
    if not isinstance(source, (str, Path)) or (isinstance(source, str) and not source.strip()) or "\x00" in str(source):
        raise LogbookError(f"cannot read {_shown(repr(source))[:80]} as a sight log: give a file name, a folder, a "
                           "list of them, or a pandas DataFrame")
    path = Path(source)
    if path.is_dir():
        files = sorted(p for p in path.iterdir()
                       if p.is_file() and p.suffix.lower() in (".csv", ".tsv", ".txt", ".xlsx", ".xlsm")
                       and not p.name.startswith((".", "~$")))
        if not files:
            raise LogbookError(f"{path} is a folder with no sight logs in it (.csv, .tsv, .txt or .xlsx)")
        return [table for file in files for table in read_table(file, all_sheets=all_sheets, budget=budget)]
    if all_sheets and path.suffix.lower() in (".xlsx", ".xlsm") and path.is_file():
        _check_file(path)
        return _read_xlsx_sheets(path, budget)
    return [_read_file(path, budget)]


def check_input_file(path: Path, what: str = "file") -> None:
    """A file to be read: present and a regular file (not a folder, a pipe, a device or a socket)."""
    import stat

    try:
        mode = path.stat().st_mode
    except FileNotFoundError:
        raise LogbookError(f"no such {what}: {path}") from None
    except OSError as exc:
        raise LogbookError(f"cannot read the {what} {path}: {exc.strerror or exc}") from None
    except ValueError:  # a NUL byte in the name: no file has one
        raise LogbookError(f"no such {what}: {_shown(str(path))[:80]!r} (a name cannot hold a NUL byte)") from None
    if stat.S_ISDIR(mode):
        raise LogbookError(f"{path} is a folder, not a {what}")
    if not stat.S_ISREG(mode):
        kind = "a pipe" if stat.S_ISFIFO(mode) else "a socket" if stat.S_ISSOCK(mode) else "a device"
        raise LogbookError(f"{path} is {kind}, not a regular file: navred reads a {what} from a file saved on disk")


def named_input_file(path, what: str, kinds: str, error: type[NavredError], max_bytes: int, too_big: str) -> Path:
    """A file a reader is given by name (a track, a route): a name, a regular file (:func:`check_input_file`), not
    larger than ``max_bytes``; refused with ``error`` naming the ``what`` and the ``kinds`` of file it takes.
    ``too_big`` is what to say of a larger file ('{file}' and '{mib}' are filled in)."""
    if isinstance(path, str) and not path.strip():
        raise error(f"no {what} given (an empty name)")
    if not isinstance(path, (str, Path)):
        raise error(f"cannot read {str(path)[:60]!r} as a {what}: give the name of a {kinds} file")
    file = Path(path)
    try:
        check_input_file(file, what)
    except NavredError as exc:
        raise error(str(exc)) from None
    size = file.stat().st_size
    if size > max_bytes:
        raise error(too_big.format(file=file, mib=size / 2**20))
    return file


def _check_file(path: Path) -> None:
    """The bounds every file is read under: present, a regular file, not empty, not too large."""
    check_input_file(path)
    size = path.stat().st_size
    if size == 0:
        raise LogbookError(f"{path} is empty: a sight log needs a header row and one row per sight")
    if size > MAX_FILE_BYTES:
        raise LogbookError(f"{path} is {size / 2**20:.0f} MiB; navred reads logs of up to "
                           f"{MAX_FILE_BYTES // 2**20} MiB: split it into several files and give them all")


def _read_file(path: Path, budget: ReadBudget) -> RawTable:
    _check_file(path)
    with open(path, "rb") as handle:
        head = handle.read(8)
    if path.suffix.lower() in (".xlsx", ".xlsm"):
        if not head.startswith(b"PK"):
            raise LogbookError(f"{path} is named .xlsx but is not a spreadsheet file")
        return _read_xlsx(path, budget)
    if head.startswith(b"PK"):
        raise LogbookError(f"{path} is not a text CSV file: it is a zip archive (an .xlsx workbook named "
                           "otherwise?); give it its .xlsx name or save the log as CSV")
    if head.startswith(b"\x1f\x8b"):
        raise LogbookError(f"{path} is a compressed (gzip) file, not a text CSV file: unpack it first")
    budget.take_text(path.stat().st_size, str(path))
    data = path.read_bytes()
    budget.check_rows(data.count(b"\n"), str(path))  # before the text is decoded or split: a quick refusal
    return _read_csv(path, data, budget)


#: A byte sequence that can only be UTF-8: a lead byte and its continuation bytes.
_UTF8_SEQUENCE = re.compile(rb"[\xc2-\xdf][\x80-\xbf]|[\xe0-\xef][\x80-\xbf]{2}|[\xf0-\xf4][\x80-\xbf]{3}")
_NOT_UTF8 = "\udc80-\udcff"  # a byte that is not UTF-8, kept as a lone surrogate (Python's surrogateescape)


def _decode(data: bytes, path: Path) -> tuple[str, str]:
    """The file's text, and a note on how it was decoded ('' for UTF-8).

    UTF-8 (with or without its byte-order mark) and UTF-16 with its mark are read as such. A file
    with bytes that are not UTF-8 is read cell by cell: where the rest of it is UTF-8 (it holds
    UTF-8 sequences), each byte that is not is kept aside and the cell that holds it is refused,
    named; where nothing in it is UTF-8, it is an 8-bit file of the Windows code page 1252, read as
    such and noted."""
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="surrogateescape"), ""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        return data.decode("utf-16", errors="replace"), ""  # a spreadsheet's "Unicode text" export
    head = data[:4096]
    binary = sum(head.count(bytes([c])) for c in (*range(0, 9), *range(14, 32)))
    if binary > len(head) // 100:
        raise LogbookError(f"{path} is not a text CSV file (it looks binary, or is UTF-16 without a "
                           "byte-order mark); save the log as CSV (UTF-8) or .xlsx")
    try:
        return data.decode("utf-8"), ""
    except UnicodeDecodeError:
        pass
    if _UTF8_SEQUENCE.search(data):
        # mostly UTF-8: the odd byte that is not is kept aside, and refuses its own cell (named) alone
        return data.decode("utf-8", errors="surrogateescape"), ""
    return data.decode("cp1252", errors="surrogateescape"), (
        f"{path.name} is not UTF-8: it was read as Windows-1252 (the 8-bit text of a spreadsheet program on "
        "Windows); check its names and degree signs, or save it as UTF-8")


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


def _read_csv(path: Path, data: bytes, budget: ReadBudget | None = None) -> RawTable:
    text, decoding = _decode(data, path)
    del data
    text = text.replace("\x00", _NUL_STANDIN)
    if "\r" in text:
        if "\n" not in text:
            text = text.replace("\r", "\n")  # the old line ends of some spreadsheet programs
        else:
            # a carriage return alone inside a line is a control character there: the row is refused alone
            text = text.replace("\r\n", "\n").replace("\r", _CR_STANDIN)
    first, header_line = None, ""
    start, index = 0, 0
    while start < len(text):  # the first line that is not blank (without copying the text line by line)
        end = text.find("\n", start)
        end = len(text) if end < 0 else end + 1
        if text[start:end].strip().strip(",;\t"):
            first, header_line = index, text[start:end]
            break
        start, index = end, index + 1
    if first is None:
        raise LogbookError(f"{path} has no header row: a sight log needs one, naming its columns")
    separator = _choose_separator(header_line)
    if budget is not None:  # the rows the file may hold, counted before it is split
        budget.take_rows(max(text.count("\n", len(header_line)) - first, 1), len(_split(header_line, separator)),
                         str(path))
    quick = _plain_table(str(path), text, first, separator)
    if quick is not None:
        quick.notes.extend([decoding] if decoding else [])
        return quick
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
    # a file with no control character, NUL or lone carriage return anywhere needs no cell-by-cell look for
    # them (checked on the whole text at once); cell lengths are still checked column by column
    clean = not problems and _BAD_TEXT.search(text) is None
    table = _table(str(path), [_shown(h) for h in header], records[first + 1:], first + 2, problems, separator,
                   clean=clean)
    table.notes.extend([decoding] if decoding else [])
    return table


def _plain_lines(text: str, first: int, separator: str, source: str) -> tuple[list[str], list[str]] | None:
    """(header, data lines) of a plain CSV text, or None when it is not plain.

    Plain: no quote character anywhere (so every separator ends a field and every line is one
    record, as the csv module would split it), no control character, NUL or lone carriage
    return, and a header of named columns."""
    if '"' in text or _BAD_TEXT.search(text) is not None:
        return None
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    header = [h.strip() for h in lines[first].split(separator)]
    if not header or header[-1] == "" or len(lines) - first - 1 > MAX_ROWS or len(lines) <= first + 1:
        return None
    _check_width(source, header)
    return header, lines[first + 1:]


#: Up to this many rows a plain table is split by str.split; above, by pandas' C parser.
SPLIT_BY_PYTHON_ROWS = 2000


def _plain_block(source: str, header: list[str], data: list[str], first_row_number: int,
                 separator: str, *, short_lines: bool = False, no_blank: bool = False) -> RawTable | None:
    """The table of plain CSV lines (see :func:`_plain_lines`), split by pandas' C parser; None when a
    line that is not blank holds more or fewer fields than the header (the csv module path names it).
    Both paths give the same table (tests/test_logbook.py compares them with the csv module of the
    standard library). ``short_lines``: the lines' fields were counted already and no line is longer
    than a cell may be, so no cell is (a plain file's cells never span lines). ``no_blank``: no line is blank
    (the file was looked at)."""
    width = len(header)
    blank = np.zeros(len(data), dtype=bool) if no_blank else \
        np.array([not line.replace(separator, "").strip() for line in data], dtype=bool)
    if not short_lines:  # (a PlainBlocks file had every line's fields counted when it was read)
        counts = np.array([line.count(separator) for line in data], dtype=int)
        if np.any(counts[~blank] != width - 1):
            return None
    kept = np.flatnonzero(~blank)
    numbers = first_row_number + kept
    if kept.size == 0:
        columns = [pd.Series([], dtype=object) for _ in header]
    elif kept.size <= SPLIT_BY_PYTHON_ROWS:
        # a short table: str.split gives the C parser's very cells here (no quotes, every line counted), sooner
        fields = [data[k].split(separator) for k in kept.tolist()]
        if any(len(f) != width for f in fields):
            return None
        columns = [pd.Series(list(column), dtype=object) for column in zip(*fields)]
    else:
        body = "\n".join(data[k] for k in kept.tolist()) if blank.any() else "\n".join(data)
        frame = pd.read_csv(io.StringIO(body), sep=separator, header=None, names=list(range(width)), dtype=object,
                            keep_default_na=False, na_values=[], quoting=csv.QUOTE_NONE, engine="c",
                            skip_blank_lines=False, skipinitialspace=False, comment=None)
        if len(frame) != kept.size:
            return None
        columns = [pd.Series(frame[k].to_numpy(dtype=object), dtype=object) for k in range(width)]
    if short_lines:
        problems: dict[int, tuple[str, str]] = {}
        malformed: dict[int, list[str]] = {}
        notes: list[str] = []
        columns, numbers, problems, malformed, _ = _skip_repeated_headers(source, header, columns, numbers,
                                                                          problems, malformed, notes)
        _refuse_other_headers(source, header, columns, numbers, problems, malformed)
        _blank_rows(columns, problems)
        return RawTable(source, header, columns, np.asarray(numbers, dtype=int), problems, separator,
                        separator in (";", "\t"), int(blank.sum()), malformed, notes=notes)
    return _finish(source, header, columns, np.asarray(numbers, dtype=int), {}, {}, separator, int(blank.sum()),
                   clean=True)


def _plain_table(source: str, text: str, first: int, separator: str) -> RawTable | None:
    """The whole table of a plain CSV text in one (see :func:`_plain_lines`), or None."""
    plain = _plain_lines(text, first, separator, source)
    if plain is None:
        return None
    header, data = plain
    return _plain_block(source, header, data, first + 2, separator)


@dataclass(frozen=True)
class PlainPart:
    """One block of a long plain CSV log as the file was looked at: where its lines are in the file, how many
    there are, its digest, and what the look found in them (its blank lines, its longest line, the columns
    some line of it that is not blank leaves blank). A block is read by these alone
    (:meth:`PlainBlocks.read_part`), so it can be handed to another process as soon as the look has passed it."""

    #: the block's number (from 0)
    k: int
    #: the byte offset of its first line, and of the line after its last
    start: int
    stop: int
    #: its lines
    count: int
    #: its bytes' digest (:func:`_block_digest`)
    digest: bytes
    #: its blank lines
    blank_lines: int
    #: its longest line, in bytes
    longest: int
    #: whether some line of it that is not blank leaves each column blank (columns by index)
    blank_columns: np.ndarray


@dataclass
class PlainBlocks:
    """A plain CSV log to be read in blocks of ``rows`` lines: the byte offset in the file where each block
    begins (the file was looked at once, a piece at a time, and is never held whole): each block is read from
    the file when it is asked for, by whichever process works it."""

    source: str
    header: list[str]
    separator: str
    #: the byte offset of each block's first line, and of the end of the last (one more than the blocks)
    offsets: np.ndarray
    #: the lines of each block (``rows`` but for the last)
    counts: np.ndarray
    first_row_number: int
    rows: int
    #: whether some line that is not blank leaves each column blank (columns by index), as looked at
    blank_columns: np.ndarray
    #: the longest line, in bytes (no cell of a plain file is longer than its line)
    longest_line: int = 0
    #: every line ends with a carriage return and a line feed (as a spreadsheet on Windows writes a CSV)
    crlf: bool = False
    #: each block's digest when the file was looked at (:func:`_block_digest`): a block read with the same
    #: digest is the very bytes looked at (plain, its lines counted), which need not be looked at again
    digests: tuple = ()
    #: each block's blank lines, as looked at
    blank_lines: np.ndarray | None = None
    #: each block as looked at (:class:`PlainPart`)
    parts: tuple = ()

    @classmethod
    def of_parts(cls, head: PlainBlocks, parts: Sequence[PlainPart]) -> PlainBlocks:
        """The blocks of a file whose header is ``head``'s, from its parts as looked at."""
        width = len(head.header)
        return cls(head.source, head.header, head.separator,
                   np.array([p.start for p in parts] + [parts[-1].stop if parts else 0], dtype=np.int64),
                   np.array([p.count for p in parts], dtype=np.int64), head.first_row_number, head.rows,
                   np.any([p.blank_columns for p in parts], axis=0) if parts else np.zeros(width, dtype=bool),
                   max((p.longest for p in parts), default=0), head.crlf, tuple(p.digest for p in parts),
                   np.array([p.blank_lines for p in parts], dtype=np.int64), tuple(parts))

    @property
    def n_lines(self) -> int:
        return int(self.counts.sum())

    def any_blank(self, columns: list[int]) -> bool:
        """Whether some line that is not blank has every one of these columns blank."""
        if len(columns) == 1:
            return bool(self.blank_columns[columns[0]])
        return bool(self.blank_columns[columns].all()) and self._all_blank_somewhere(columns)

    def _all_blank_somewhere(self, columns: list[int]) -> bool:
        for part in self.parts:
            for line in self._lines(part):
                if not line.replace(self.separator, "").strip():
                    continue
                cells = line.split(self.separator)
                if all(not cells[c].strip() for c in columns):
                    return True
        return False

    def __len__(self) -> int:
        """The number of blocks."""
        return len(self.counts)

    def _lines(self, part: PlainPart) -> list[str]:
        with open(self.source, "rb") as handle:
            handle.seek(part.start)
            data = handle.read(part.stop - part.start)
        # the very bytes looked at (the same digest) were found plain, their lines counted: not looked at again
        same = _block_digest_of(data) == part.digest
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError:
            text = None
        lines = text.split("\r\n" if self.crlf else "\n") if text is not None else []
        if lines and lines[-1] == "":
            lines.pop()
        if not same:
            raise LogbookError(f"{self.source} changed while it was being read: read it again")
        return lines

    def block(self, k: int) -> RawTable:
        """Block ``k`` (from 0) as a table of its rows, numbered as in the file, read from the file now."""
        return self.read_part(self.parts[k])

    def read_part(self, part: PlainPart) -> RawTable:
        """A block as looked at (:class:`PlainPart`) as a table of its rows, numbered as in the file, read from
        the file now (by its own look: the same table whatever the other blocks hold)."""
        lines = self._lines(part)
        table = _plain_block(self.source, list(self.header), lines, self.first_row_number + part.k * self.rows,
                             self.separator, short_lines=part.longest <= MAX_CELL_CHARS, no_blank=part.blank_lines == 0)
        if table is None:  # every line's fields were counted when the file was looked at
            raise LogbookError(f"{self.source} changed while it was being read: read it again")
        # the very bytes looked at: the columns no line of the block left blank hold no blank cell
        table.filled_columns = frozenset(np.flatnonzero(~part.blank_columns).tolist())
        return table

    def __iter__(self):
        for k in range(len(self)):
            yield self.block(k)


#: bytes of a long plain log looked at a time (the file is never held whole)
SCAN_BYTES = 2 * 1024 * 1024
_BAD_BYTES = re.compile(rb'["\r\x00-\x08\x0b\x0c\x0e-\x1f\x7f]')


class NotPlain(Exception):
    """(raised while a file is looked at by :func:`plain_csv_parts`) the file is not a plain CSV log to be read
    in blocks: read it whole."""


def plain_csv_blocks(path: str | Path, rows: int) -> PlainBlocks | None:
    """A plain CSV sight log to be read in blocks of ``rows`` lines (each a :class:`RawTable` with the
    rows' own numbers), under the same bounds as :func:`read_table`; None when the file is not a plain
    UTF-8 CSV (quoted cells, control characters, another encoding, an .xlsx) or a line has the wrong number
    of fields: read it whole with :func:`read_table` then. The file is looked at a piece at a time
    (:data:`SCAN_BYTES`): its lines' fields counted, the blank cells of each column noted, and where each
    block begins; no line of it is kept."""
    found = plain_csv_parts(path, rows)
    if found is None:
        return None
    head, looked = found
    try:
        parts = list(looked)
    except NotPlain:
        return None
    return PlainBlocks.of_parts(head, parts) if parts else None


def plain_csv_parts(path: str | Path, rows: int):
    """(the file's header as a :class:`PlainBlocks` of no block yet, its blocks as the look at the file finds
    them: an iterator of :class:`PlainPart`, which raises :class:`NotPlain` where the file is found not to be
    a plain CSV log or too long), or None when its first lines say so already. :func:`plain_csv_blocks` is
    the blocks found whole; a block may be handed out as soon as it is found (``navred reduce --csv``: the
    first blocks are worked while the rest of the file is looked at)."""
    path = Path(path)
    if not path.is_file() or path.suffix.lower() in (".xlsx", ".xlsm"):
        return None
    size = path.stat().st_size
    if size == 0 or size > MAX_FILE_BYTES:
        return None  # read_table gives the refusal
    with open(path, "rb") as handle:
        head = handle.read(min(size, SCAN_BYTES))
    if head.startswith((b"PK", b"\x1f\x8b", b"\xff\xfe", b"\xfe\xff")):
        return None
    start = 3 if head.startswith(b"\xef\xbb\xbf") else 0
    header_end, first, header_line = start, 0, None
    while True:  # the first line that is not blank is the header
        end = head.find(b"\n", header_end)
        if end < 0:
            return None
        line = head[header_end:end]
        if line.strip().strip(b",;\t"):
            header_line = line
            header_end = end + 1
            break
        header_end, first = end + 1, first + 1
    crlf = header_line.endswith(b"\r")  # every line must then end so (a file of mixed line ends is read whole)
    if crlf:
        header_line = header_line[:-1]
    if _BAD_BYTES.search(header_line):
        return None
    try:
        header_text = header_line.decode("utf-8")
    except UnicodeDecodeError:
        return None
    if not header_text.strip().strip(",;\t"):
        return None  # (a line of spaces beyond ASCII: the careful reader decides)
    separator = _choose_separator(header_text)
    header = [h.strip() for h in header_text.split(separator)]
    if not header or header[-1] == "":
        return None
    _check_width(str(path), header)
    blank = np.zeros(len(header), dtype=bool)
    plan = PlainBlocks(str(path), header, separator, np.zeros(1, dtype=np.int64), np.zeros(0, dtype=np.int64),
                       first + 2, rows, blank, 0, crlf, (), np.zeros(0, dtype=np.int64), ())
    return plan, _scan_plain_lines(path, separator.encode(), len(header), rows, header_end, crlf,
                                   sum(c.isdigit() for c in header_text), [h.casefold() for h in header])


def _scan_plain_lines(path: Path, separator: bytes, width: int, rows: int, position: int, crlf: bool = False,
                      header_digits: int = 0, header_cells: Sequence[str] = ()):
    """Each block of ``rows`` lines from ``position`` on (a :class:`PlainPart`) as the file is looked at
    (:data:`SCAN_BYTES` at a time), yielded as soon as its last line has been looked at; raises
    :class:`NotPlain` when a line is not plain or has another number of fields than the header, or the file
    holds more than :data:`MAX_ROWS` lines. ``crlf``: every line ends with a carriage return before its line
    feed (not plain when one does not)."""
    code = separator[0]
    least_digits = header_digits + HEADER_LIKE_DIGITS
    header_cells = list(header_cells)
    lines_seen, carry = 0, b""
    k, start, in_block, digest = 0, position, 0, _block_digest()
    blank_columns, longest, blanks = np.zeros(width, dtype=bool), 0, 0
    with open(path, "rb") as handle:
        handle.seek(position)
        while True:
            chunk = handle.read(SCAN_BYTES)
            data = carry + chunk
            added = 0
            if not chunk:
                if not data:
                    break
                added = 2 if crlf else 1
                data += b"\r\n" if crlf else b"\n"  # a last line without its line end (not in the file: not digested)
            cut = data.rfind(b"\n") + 1
            body, carry = data[:cut], data[cut:]
            if not body:
                continue
            codes = np.frombuffer(body, dtype=np.uint8)
            returns = body.count(b"\r\n") if crlf else 0
            if b'"' in body or b"\x7f" in body or (crlf and returns != body.count(b"\n")) or \
                    np.count_nonzero(codes < 32) != body.count(b"\n") + body.count(b"\t") + returns:
                raise NotPlain  # a quote, a lone carriage return or another control character: not plain
            try:
                body.decode("utf-8")
            except UnicodeDecodeError:
                raise NotPlain from None
            looked = _look_at_lines(codes, code, width, body, crlf)
            if looked is None:
                raise NotPlain
            feeds, empty, kept, lengths, blank_line = looked
            if _header_like_lines(body, codes, feeds, blank_line, crlf, least_digits, separator, header_cells):
                raise NotPlain  # a line that may be another header: read whole, where it is looked at cell by cell
            lines_seen += feeds.size
            if lines_seen > MAX_ROWS:
                raise NotPlain  # read_table gives the refusal
            line, at = 0, 0
            while line < feeds.size:  # the lines of this piece, block by block
                take = min(rows - in_block, feeds.size - line)
                end = int(feeds[line + take - 1]) + 1
                digest.update(body[at:min(end, len(body) - added)])
                first_kept, last_kept = np.searchsorted(kept, [line, line + take])
                if last_kept > first_kept:
                    blank_columns |= empty[first_kept:last_kept].any(axis=0)
                longest = max(longest, int(lengths[line:line + take].max()))
                blanks += int(np.count_nonzero(blank_line[line:line + take]))
                in_block, line, at = in_block + take, line + take, end
                if in_block == rows:
                    yield PlainPart(k, start, position + end, in_block, digest.digest(), blanks, longest,
                                    blank_columns)
                    k, start, in_block, digest = k + 1, position + end, 0, _block_digest()
                    blank_columns, longest, blanks = np.zeros(width, dtype=bool), 0, 0
            position += len(body)
            if not chunk:
                break
    if in_block:
        yield PlainPart(k, start, position, in_block, digest.digest(), blanks, longest, blank_columns)


#: a line with fewer digits than the header's and this many more may be another header (a sight's line holds a
#: date, a time, an altitude and a position: many more); such a file is read whole, its rows looked at cell by cell
HEADER_LIKE_DIGITS = 6


def _header_like_lines(body: bytes, codes: np.ndarray, feeds: np.ndarray, blank_line: np.ndarray, crlf: bool,
                       least: int, separator: bytes, header_cells: list[str]) -> bool:
    """Whether a line that is not blank holds fewer than ``least`` digits and is not the header again, cell for
    cell in any case (a whole repeat is skipped, with a note, block by block)."""
    digits = np.flatnonzero((codes >= 48) & (codes <= 57))
    starts = np.concatenate([[0], feeds[:-1] + 1])
    ends = feeds - (1 if crlf else 0)
    per_line = np.searchsorted(digits, ends) - np.searchsorted(digits, starts)
    for k in np.flatnonzero((per_line < least) & ~blank_line).tolist():
        cells = body[starts[k]:ends[k]].decode("utf-8").split(separator.decode())
        if [c.strip().casefold() for c in cells] != header_cells:
            return True
    return False


def _block_digest_of(data: bytes) -> bytes:
    digest = _block_digest()
    digest.update(data)
    return digest.digest()


def _block_digest():
    """The digest a block's bytes are known by between the look at the file and the block's reading (BLAKE2b)."""
    return hashlib.blake2b(digest_size=16)


def _look_at_lines(data: np.ndarray, separator: int, width: int, body: bytes, crlf: bool = False):
    """(each line's end, which fields of each line that is not blank are blank, those lines' indices, each
    line's length, whether each line is blank) of whole lines of
    bytes; None when a line that is not blank has another number of fields than ``width``. Bytes are
    counted between bounds from the sorted positions of the few kinds that matter (separators, spaces,
    bytes beyond ASCII), never byte by byte in Python. ``crlf``: each line feed follows a carriage return,
    which is no part of the line."""
    feeds = np.flatnonzero(data == 10)
    starts = np.concatenate([[0], feeds[:-1] + 1])
    ends = feeds - 1 if crlf else feeds  # where each line's text stops (before its carriage return)
    spaces = (data == 32) | (data == 9)  # (the other spaces str.strip() removes are control characters: refused)
    where = np.flatnonzero(data == separator)
    if spaces[where].any():
        spaces[where] = False  # (a tab separating fields is not a space inside one)
    blank_at = np.flatnonzero(spaces)
    wide_at = np.flatnonzero(data >= 128)  # a byte of a character beyond ASCII: str.strip() may take it for a space

    def count(positions, left, right):
        return np.searchsorted(positions, right) - np.searchsorted(positions, left)

    fields = count(where, starts, ends)
    lengths = ends - starts
    filled = lengths - fields - count(blank_at, starts, ends)  # bytes that are neither separators nor spaces
    blank_line = filled == 0
    if wide_at.size:  # lines of nothing but wide bytes and spaces: judged as text, as the careful reader does
        unsure = ~blank_line & (filled == count(wide_at, starts, ends))
        for k in np.flatnonzero(unsure).tolist():
            line = body[starts[k]:ends[k]].decode("utf-8")
            blank_line[k] = not line.replace(chr(separator), "").strip()
    if np.any(fields[~blank_line] != width - 1):
        return None
    kept = np.flatnonzero(~blank_line)
    empty = np.zeros((kept.size, width), dtype=bool)
    if kept.size and width > 1:
        # every kept line has width-1 separators: the fields' bounds line by line
        first_sep = np.searchsorted(where, starts[kept])
        bounds = where[first_sep[:, None] + np.arange(width - 1)[None, :]]
        left = np.column_stack([starts[kept], bounds + 1])
        right = np.column_stack([bounds, ends[kept]])
        size = right - left
        empty = size == 0
        # a field of spaces begins with one, and one beyond ASCII with a wide byte: only those are counted
        maybe = ~empty & (spaces[np.minimum(left, len(data) - 1)] | (data[np.minimum(left, len(data) - 1)] >= 128))
        if maybe.any():
            i, j = np.nonzero(maybe)
            a, b = left[i, j], right[i, j]
            empty[i, j] = (b - a) == count(blank_at, a, b)
            if wide_at.size:
                for i_, j_, a_, b_ in zip(i.tolist(), j.tolist(), a.tolist(), b.tolist()):
                    if not empty[i_, j_] and count(wide_at, a_, b_):
                        empty[i_, j_] = not body[a_:b_].decode("utf-8").strip()
    return feeds, empty, kept, lengths, blank_line


def _records(reader, path, first) -> list[list[str]]:
    records: list[list[str]] = []
    for record in reader:
        records.append(record)
        if len(records) > MAX_ROWS + first + 1:
            raise LogbookError(f"{path} has more than {MAX_ROWS:,} rows, the most navred reads from "
                               "one file: split it into several files and give them all")
    return records


def _table(source, header, records, first_row_number, problems, separator, *, clean: bool = False) -> RawTable:
    """Build a RawTable from text records (CSV): rows with the wrong number of fields noted, empty rows skipped.

    ``clean``: the text holds no control character and no over-long cell (the caller checked it whole)."""
    while header and header[-1] == "":
        header.pop()
    _check_width(source, header)
    width = len(header)
    if not problems and records and all(len(record) == width for record in records):
        # the usual file: every row has its fields; the columns are the records turned round, and a row
        # is empty when every one of its cells is
        turned = list(zip(*records))
        columns = [np.array(column, dtype=object) for column in turned]
        empty_rows = np.ones(len(records), dtype=bool)
        for column in turned:
            empty_rows &= np.array([not cell.strip() for cell in column], dtype=bool)
        numbers = first_row_number + np.flatnonzero(~empty_rows)
        if empty_rows.any():
            columns = [column[~empty_rows] for column in columns]
        series = [pd.Series(column, dtype=object) for column in columns]
        return _finish(source, header, series, numbers, {}, {}, separator, int(empty_rows.sum()), clean=clean)
    kept_records: list[list[str]] = []
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
        kept_records.append(record)
    turned = list(zip(*kept_records)) if kept_records else [()] * width
    series = [pd.Series(list(column), dtype=object) for column in turned]
    return _finish(source, header, series, np.asarray(numbers, dtype=int), kept, malformed, separator, empty)


def _check_width(source, header) -> None:
    if len(header) > MAX_COLUMNS:
        raise LogbookError(f"{source} has {len(header)} columns; navred reads at most {MAX_COLUMNS}: split the log")


def _shown(cell: str) -> str:
    """A cell's text made safe to show: control characters and bytes that are not UTF-8 replaced, length
    bounded."""
    text = _CONTROL.sub("\ufffd", cell.replace(_NUL_STANDIN, "\ufffd").replace(_CR_STANDIN, "\ufffd"))
    return _NOT_UTF8_TEXT.sub("\ufffd", text)[:MAX_CELL_CHARS]


_BAD_TEXT = re.compile(f"[{_NUL_STANDIN}{_CR_STANDIN}\x00-\x08\x0b\x0c\x0e-\x1f\x7f{_NOT_UTF8}]")
_NOT_UTF8_TEXT = re.compile(f"[{_NOT_UTF8}]")


def _text_problem(cell: str) -> str:
    odd = _NOT_UTF8_TEXT.search(cell)
    if odd:
        return (f"the cell holds the byte 0x{ord(odd.group()) - 0xDC00:02X}, which is not UTF-8 like the rest of "
                f"the file ({_shown(cell)[:40]!r}): retype the cell, or save the whole file as UTF-8")
    if _NUL_STANDIN in cell or "\x00" in cell:
        return "the cell holds a NUL byte (a damaged or binary file?)"
    if _CR_STANDIN in cell:
        return "the cell holds a carriage return in the middle of a line (code 13); retype it"
    found = _CONTROL.search(cell)
    if found:
        return f"the cell holds a control character (code {ord(found.group())}); retype it"
    return f"the cell holds {len(cell):,} characters, more than {MAX_CELL_CHARS:,}"


def _finish(source, header, columns, numbers, problems, malformed, separator, empty, *, clean: bool = False
            ) -> RawTable:
    """Mark the rows whose text cells hold a NUL byte, a control character or too many characters
    (each such row is rejected alone), column by column; each distinct text is looked at once.
    ``clean``: the caller has checked the whole text for control characters, and there are none. A row that
    repeats the header whole is skipped, with a note (:func:`_skip_repeated_headers`)."""
    notes: list[str] = []
    columns, numbers, problems, malformed, _ = _skip_repeated_headers(source, header, columns, numbers,
                                                                      problems, malformed, notes)
    for k, column in enumerate(columns):
        bad = _bad_text_rows(column, lengths_only=clean)
        if bad is None:
            continue
        for row in bad:
            if row in problems:
                continue
            problems[int(row)] = (header[k], _text_problem(str(column.iloc[row])))
            malformed[int(row)] = ["" if _is_blank(c.iloc[row]) else _shown(str(c.iloc[row])) for c in columns]
    _refuse_other_headers(source, header, columns, numbers, problems, malformed)
    _blank_rows(columns, problems)
    return RawTable(source, header, columns, numbers, problems, separator, separator in (";", "\t"), empty,
                    malformed, notes=notes)


def _header_row_matches(header, columns) -> tuple[list[int], list[tuple[int, str]]]:
    """(the rows whose first named cell is the first header's name: the rows that may repeat the header, the named
    headers as (index, casefolded name))."""
    named = [(k, str(h).strip().casefold()) for k, h in enumerate(header) if str(h).strip()]
    if not named or not len(columns) or not len(columns[0]):
        return [], named
    first, first_name = named[0]
    cells = columns[first].to_numpy(dtype=object)
    alike = [u for u in pd.unique(cells) if isinstance(u, str) and u.strip().casefold() == first_name]
    if not alike:
        return [], named
    return np.flatnonzero(pd.Series(cells, dtype=object).isin(alike).to_numpy()).tolist(), named


def _skip_repeated_headers(source, header, columns, numbers, problems, malformed, notes):
    """Rows that repeat the header whole, every named column's cell its own header (a page's header copied down a
    sheet, two logs of one layout joined one under the other), skipped with a note naming them: they are not
    sights, and the rows after them are read by the same columns. A row that repeats only some of the header
    (the rest blank), or another header, is left to :func:`_refuse_other_headers`. Returns the
    columns, row numbers, problems and malformed rows without the skipped rows (re-indexed), and whether any
    other row may repeat the header in part."""
    candidates, named = _header_row_matches(header, columns)
    whole = [row for row in candidates if row not in problems and all(
        not _is_blank(columns[k].iloc[row]) and str(columns[k].iloc[row]).strip().casefold() == name
        for k, name in named)]
    partial = len(candidates) > len(whole)
    if not whole:
        return columns, numbers, problems, malformed, partial
    keep = np.ones(len(numbers), dtype=bool)
    keep[whole] = False
    skipped = [int(numbers[row]) for row in whole]
    file = Path(str(source)).name if str(source) != "(table)" else "the table"
    shown = ", ".join(map(str, skipped[:12])) + (f" and {len(skipped) - 12} more" if len(skipped) > 12 else "")
    notes.append(f"{file}: row{'s' if len(skipped) > 1 else ''} {shown} repeat{'' if len(skipped) > 1 else 's'} "
                 f"the header: skipped (not {'sights' if len(skipped) > 1 else 'a sight'}; the rows after "
                 f"{'them' if len(skipped) > 1 else 'it'} are read by the same columns)")
    index = np.cumsum(keep) - 1
    columns = [column[keep].reset_index(drop=True) for column in columns]
    problems = {int(index[row]): value for row, value in problems.items() if keep[row]}
    malformed = {int(index[row]): value for row, value in malformed.items() if keep[row]}
    return columns, np.asarray(numbers)[keep], problems, malformed, partial


def _name_cells(header, columns) -> np.ndarray:
    """How many cells of each row are column names: a name of this header (as written, any case) or any
    spelling of the sight vocabulary (:func:`navred.vocabulary.match_header`). Only the distinct texts with no
    digit in them are looked at (a column name has none; a sight's numbers do), each once."""
    own = {str(h).strip().casefold() for h in header if str(h).strip()}
    counts = np.zeros(len(columns[0]) if columns else 0, dtype=np.int32)
    for column in columns:
        codes, uniques = _distinct_text(column)
        if uniques is None:
            continue
        names = [u for u, text in enumerate(uniques.tolist()) if not _DIGIT.search(text) and text.strip()
                 and (text.strip().casefold() in own or _is_column_name(text))]
        if names:
            counts += np.isin(codes, names)
    return counts


_DIGIT = re.compile(r"\d")


@functools.lru_cache(maxsize=4096)
def _is_column_name(text: str) -> bool:
    """Whether a text names a column of the sight vocabulary, or is too ambiguous a header to read (a body's name,
    a limb or a remark, the texts of a log's cells, come again and again: each is matched once)."""
    found = match_header(text)
    return found.key is not None or bool(found.problem)


def _refuse_other_headers(source, header, columns, numbers, problems, malformed) -> None:
    """Rows that look like a header (two or more cells are column names, and most of the row's cells are), other
    than a whole repeat of this header (skipped before this, :func:`_skip_repeated_headers`). One rule for every
    way a log is read (a file whole, a long file's blocks, a workbook's sheet, a DataFrame):

    - each name in its own column, the other cells blank or not names (a header copied down with columns left
      out): the row is refused by its number, it is not a sight (the rows after it are in this header's columns);
    - a name under another column, or a column this header does not have (two exports joined, the second in
      another order or with other columns): the whole log is refused (:class:`LogbookError`), naming the row and
      both orders; read by the first header, the rows after it would silently get the wrong columns."""
    if not columns or not len(columns[0]):
        return
    counts = _name_cells(header, columns)
    candidates = np.flatnonzero(counts >= 2).tolist()
    if not candidates:
        return
    own = [str(h).strip().casefold() for h in header]
    file = Path(str(source)).name if str(source) != "(table)" else "the table"
    for row in candidates:
        if row in problems:
            continue
        cells = ["" if _is_blank(c.iloc[row]) else str(c.iloc[row]).strip() for c in columns]
        filled = [k for k, cell in enumerate(cells) if cell]
        if 2 * int(counts[row]) <= len(filled) or sum(any(c.isdigit() for c in cells[k]) for k in filled) > counts[row]:
            continue  # a sight whose words happen to be column names (an observer called 'Navigator', the 'Ship')
        named = [k for k in filled if cells[k].casefold() in own or match_header(cells[k]).key is not None
                 or match_header(cells[k]).problem]
        if all(cells[k].casefold() == own[k] for k in named):
            problems[row] = ("", (
                f"row {int(numbers[row])} repeats the header row ({', '.join(repr(str(header[k])) for k in named[:3])}"
                f"{', ...' if len(named) > 3 else ''}) in part, its other cells "
                f"{'blank' if len(named) == len(filled) else 'not column names'}: it is not a sight, so it is "
                "refused; a header copied down the sheet or two logs joined? delete the row, and check that the "
                "rows after it were written in the first header's columns (they are read by them)"))
            malformed[row] = ["" if _is_blank(c.iloc[row]) else _shown(str(c.iloc[row])) for c in columns]
            continue
        first = [str(h) for h in header]
        second = [cells[k] if cells[k] else "(blank)" for k in range(len(cells))]

        def shown(names):
            return ", ".join(names[:24]) + (f", ... ({len(names)} columns)" if len(names) > 24 else "")

        differ = [k for k in range(len(first)) if first[k].strip().casefold() != second[k].casefold()]
        where = ", ".join(f"{column_letter(k)} {first[k]!r} / {second[k]!r}" for k in differ[:6]) + (
            f" and {len(differ) - 6} more" if len(differ) > 6 else "")

        raise LogbookError(
            f"{file}: row {int(numbers[row])} is another header row, not this log's: its columns are in another "
            f"order or are other columns (two logs joined?). The log's header: {shown(first)}; row "
            f"{int(numbers[row])}: {shown(second)} (they differ in column{'s' if len(differ) > 1 else ''} {where}). navred reads a log by one header, so the rows after row "
            f"{int(numbers[row])} would be read under the wrong columns: the log is refused. Split the file at row "
            f"{int(numbers[row])} into two logs, each with its own header, and give both (navred reads several "
            "logs at once), or put every row's cells in the first header's order and delete the row")


def _bad_text_rows(column: pd.Series, *, lengths_only: bool = False):
    """The rows whose text holds a NUL, a control character or too many characters; None when none do.

    The distinct texts are joined and searched at once; rows are looked for only when one is bad.
    ``lengths_only``: the text is known to hold no control character, so only lengths are checked."""
    if not len(column) or not (column.dtype == object or pd.api.types.is_string_dtype(column.dtype)):
        return None
    cells = column.to_numpy(dtype=object)
    if lengths_only and max(map(len, cells.tolist())) <= MAX_CELL_CHARS:  # every cell of a CSV is text
        return None
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


def _blank_rows(columns: list[pd.Series], problems: dict[int, tuple[str, str]]) -> None:
    """Empty every cell of the rows a problem rejects (in place), so that nothing of a rejected row is read."""
    if not problems:
        return
    rows = np.fromiter(problems, dtype=int)
    for k, column in enumerate(columns):
        cells = column.to_numpy(dtype=object, copy=True)
        cells[rows] = None
        columns[k] = pd.Series(cells, dtype=object)


def _is_blank(value) -> bool:
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def _check_zip(path: Path, budget: ReadBudget) -> zipfile.ZipFile:
    """The spreadsheet as a zip archive, after refusing one that would unzip to far more than it is (a zip
    bomb), or whose parts read whole (the list of sheets, the shared text, the styles) would take the run
    beyond its bound on XML read, before anything is unzipped."""
    from .sheetreader import parts_opened_whole

    try:
        archive = zipfile.ZipFile(path)
        members = archive.infolist()
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
    try:
        unzipped = sum(m.file_size for m in members)
        zipped = max(sum(m.compress_size for m in members), 1)
        if unzipped > MAX_UNZIPPED_BYTES or unzipped / zipped > MAX_ZIP_RATIO:
            raise LogbookError(f"{path} would unzip to {unzipped / 2**20:,.0f} MiB from {zipped / 2**20:,.1f} MiB; "
                               f"navred opens spreadsheets of up to {MAX_UNZIPPED_BYTES // 2**20} MiB unzipped "
                               f"and {MAX_ZIP_RATIO:.0f} times their size: split the log, or save it as CSV")
        sizes = {m.filename: m.file_size for m in members}
        relationships = sum(size for name, size in sizes.items() if name.endswith(".rels"))
        budget.take_xml(relationships, f"{path} (its relationships)")
        try:
            parts = parts_opened_whole(archive)
        except NavredError as exc:
            raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
        budget.take_xml(sum(sizes.get(p, 0) for p in parts), f"{path} (its list of sheets, shared text and styles)")
    except LogbookError:
        archive.close()
        raise
    return archive


def _read_xlsx(path: Path, budget: ReadBudget) -> RawTable:
    def chosen(names):
        lower = {n.lower(): n for n in names}
        # navred's own workbook is read from its 'Sights as read' sheet: the log exactly as it was
        return [lower.get("sights as read") or lower.get("sights") or names[0]]

    return _read_xlsx_sheets(path, budget, chosen, refuse_empty=True)[0]


def _read_xlsx_sheets(path: Path, budget: ReadBudget, choose=None, *, refuse_empty: bool = False) -> list[RawTable]:
    """The tables of a workbook's sheets (``choose`` picks the sheet names; default: every visible sheet
    that holds a table of two columns or more), each read cell by cell (:mod:`navred.io.sheetreader`) under the
    run's bounds, each sheet's XML counted before it is read."""
    archive = _check_zip(path, budget)
    tables = []
    try:
        try:
            book = open_workbook(archive)
        except NavredError as exc:
            raise LogbookError(f"{path} cannot be opened as a spreadsheet: {exc}") from None
        except Exception as exc:  # a part that cannot be unzipped, a damaged archive
            raise LogbookError(f"{path} cannot be opened as a spreadsheet: {_one_line(exc)}") from None
        names = book.sheetnames
        if not names:
            raise LogbookError(f"{path} has no worksheet")
        sizes = {m.filename: m.file_size for m in archive.infolist()}
        entries = {s.name: s for s in book.sheets}
        for name in (choose(names) if choose else names):
            sheet = entries[name]
            if choose is None and sheet.state != "visible":
                continue  # a hidden sheet (a template's lists) is not a table of sights
            label = f"{path} (sheet {name!r})" if len(names) > 1 else str(path)
            budget.take_xml(sizes.get(sheet.member, 0), label)
            try:
                cells = read_sheet_cells(book, sheet, archive, take_cells=lambda n, where=label:
                                         budget.take_cells(n, where))
            except LogbookError:
                raise
            except NavredError as exc:
                raise LogbookError(f"{label} cannot be read: {exc}") from None
            except Exception as exc:  # a member that cannot be unzipped (a damaged archive)
                raise LogbookError(f"{label} cannot be read: {_one_line(exc)} (a damaged file?)") from None
            table = _sheet_table(path, label, name, cells, refuse_empty or choose is not None, budget)
            if table is not None:
                tables.append(table)
    finally:
        archive.close()
    if not tables:
        raise LogbookError(f"{path} has no sheet with a table in it")
    return tables


def _one_line(exc: Exception) -> str:
    text = " ".join(str(exc).split())
    return (text[:200] + "...") if len(text) > 200 else text or type(exc).__name__


def _sheet_table(path: Path, label: str, name: str, cells, refuse_empty: bool, budget: ReadBudget) -> RawTable | None:
    """The table of one sheet's rows (as :mod:`navred.sheetreader` read them): its header is the first row
    with a value; the rows the file does not hold are empty rows."""
    rows = [(number, values) for number, values in cells.rows if any(_filled(v) for v in values)]
    if not rows:
        if not refuse_empty:
            return None  # an empty sheet of a class workbook: nothing to read
        raise LogbookError(f"{path}, sheet {name!r} is empty")
    header_number, header_cells = rows[0]
    header = ["" if v is None or isinstance(v, CellProblem) else str(v).strip() for v in header_cells]
    bad_header = next((k for k, v in enumerate(header_cells) if isinstance(v, CellProblem)), None)
    if bad_header is not None:
        raise LogbookError(f"{label}: the header cell {column_letter(bad_header)}{header_number} cannot be read: "
                           f"{header_cells[bad_header].reason}")
    while header and header[-1] == "":
        header.pop()
    if not refuse_empty and sum(1 for h in header if h) < 2:
        return None  # a sheet of notes in a class workbook (one column of text), not a table
    body = rows[1:]
    budget.take_rows(len(body), len(header), label)
    empty = (body[-1][0] - header_number - len(body)) if body else 0
    return _typed_table(label, header, body, empty, cells.row_problems)


def _filled(value) -> bool:
    return value is not None and not (isinstance(value, str) and not value.strip())


def _typed_table(source, header, body, empty, row_problems=None) -> RawTable:
    """A RawTable from a spreadsheet's typed rows ((row number, cells)); a cell that could not be read, a
    value right of the last header or a row the file numbers wrongly rejects its row alone."""
    _check_width(source, header)
    width = len(header)
    for k, name in enumerate(header):
        if name == "" and any(k < len(r) and _filled(r[k]) for _, r in body):
            raise LogbookError(f"{source}: column {column_letter(k)} holds values but has no header (merged "
                               "header cells?); give each column its own header cell")
    columns: list[list[object]] = [[] for _ in range(width)]
    numbers: list[int] = []
    problems: dict[int, tuple[str, str]] = {}
    malformed: dict[int, list[str]] = {}
    row_problems = row_problems or {}
    for index, (number, raw) in enumerate(body):
        cells = list(raw[:width]) + [None] * (width - len(raw))
        numbers.append(number)
        problem = None
        if number in row_problems:
            problem = ("(row)", row_problems[number])
        bad = next((k for k, v in enumerate(raw) if isinstance(v, CellProblem)), None)
        if problem is None and bad is not None:
            problem = (header[bad] if bad < width else column_letter(bad), raw[bad].reason)
        beyond = next((k for k in range(width, len(raw)) if _filled(raw[k])), None)
        if problem is None and beyond is not None:
            problem = (column_letter(beyond), (
                f"a value ({_shown(str(raw[beyond]))[:40]!r}) in column {column_letter(beyond)}, right of the last "
                f"header ({column_letter(width - 1)} {header[-1]!r}): a header is missing, or the value is in the "
                "wrong column"))
        if problem is not None:
            problems[index] = problem
            malformed[index] = ["" if v is None else _shown(str(v)) for v in raw]
        for k in range(width):
            value = cells[k]
            # a TRUE/FALSE cell is text to navred (True == 1 must not pass for a number)
            columns[k].append(("TRUE" if value else "FALSE") if isinstance(value, bool) else value)
    series = [pd.Series(column, dtype=object) for column in columns]
    return _finish(source, header, series, np.asarray(numbers, dtype=int), problems, malformed, None, empty)


def column_letter(index: int) -> str:
    """The letters of a 0-based column index: 0 is 'A'."""
    return column_letters(index + 1)


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
            column = column.map(_frame_cell).astype(object)
        columns.append(column)
    numbers = np.arange(1, len(frame) + 1)
    blank = np.column_stack([_blank_mask(c) for c in columns]) if columns else np.ones((len(frame), 0), bool)
    keep = ~blank.all(axis=1) if columns else np.zeros(len(frame), dtype=bool)
    if not keep.all():
        columns = [c[keep].reset_index(drop=True) for c in columns]
        numbers = numbers[keep]
    problems: dict[int, tuple[str, str]] = {}
    for k, column in enumerate(columns):  # a cell no log could hold rejects its row, named by its column
        if column.dtype == object:
            for index in np.flatnonzero(column.map(lambda v: isinstance(v, CellProblem)).to_numpy(dtype=bool)):
                problems.setdefault(int(index), (header[k], column.iloc[index].reason))
    malformed = {i: ["" for _ in header] for i in problems}
    _blank_rows(columns, problems)
    return _finish("(table)", header, columns, numbers, problems, malformed, None, int((~keep).sum()))


#: What a DataFrame cell may hold: a value a log's cell could (text, a number, an instant, nothing).
_CELL_TYPES = (str, int, float, np.integer, np.floating, pd.Timestamp, np.datetime64)


def _frame_cell(value):
    """A DataFrame cell as the reader takes it: TRUE/FALSE for a boolean, a value as it is, and a cell holding
    a list, a dictionary or another object (no log's cell could) marked unreadable, for its row alone."""
    import datetime as _dt

    if value is None or isinstance(value, MissingFormulaValue):
        return value
    if isinstance(value, (bool, np.bool_)):
        return "TRUE" if value else "FALSE"
    if isinstance(value, _CELL_TYPES + (_dt.date, _dt.time)):
        return value
    return CellProblem(f"the cell holds a {type(value).__name__}, not a value a log's cell holds (text, a number or "
                       "an instant)", "")


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


__all__ = ["RawTable", "read_table", "ReadBudget", "column_letter", "check_input_file", "plain_csv_blocks", "plain_csv_parts", "PlainBlocks", "PlainPart", "NotPlain", "blank_mask", "LogbookError", "MissingFormulaValue", "MAX_FILE_BYTES",
           "MAX_ROWS", "MAX_COLUMNS", "MAX_CELL_CHARS", "MAX_FRAME_ROWS"]
