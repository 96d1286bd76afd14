"""The cells of a workbook's sheets read one by one, each damaged cell named by its row and column.

Edge code, under :mod:`navred.io.readers`. A workbook is a zip archive of XML parts (ECMA-376): its
list of sheets, their relationships, the shared text, the styles (which say which numbers are dates)
and one part per sheet. Each is read here, streamed through :mod:`navred.io.safexml` (a document
type, where entities would be declared, is refused; no entity is expanded), with openpyxl's own
rules for what is a date format; openpyxl still writes every workbook navred makes. Reading is done
here rather than by openpyxl because:

- openpyxl parses every sheet whole as it opens a workbook (to find each sheet's size), with a
  parser several times slower: one sheet of 500 MiB costs minutes and gigabytes before a cell is
  read; here nothing is parsed before the run's bound on XML has counted it;

- a cell that openpyxl cannot convert (``<v>NaN</v>`` in a number cell, text in a number cell, a
  shared string that does not exist, a date or a boolean that is not one, a cell reference that
  is not a cell) raises in the middle of openpyxl's row iteration and loses the whole sheet; here
  it becomes a :class:`CellProblem` in its own cell, and its row alone is rejected, named by row
  and column;
- openpyxl fills every missing row with an empty one, so one cell at row 1,048,576 makes a million
  rows; here only the rows the file holds are kept, with their own row numbers;
- it is several times quicker (about 3 µs a cell against 10-25 µs for openpyxl's rows), so the
  documented bound on the XML read in a run (docs/security.md) is read in seconds.

Cells are read as openpyxl's read-only mode reads them with ``data_only=True`` (the value a
spreadsheet program saved), with the same conversions (numbers, shared and inline strings,
booleans, dates by style, ISO dates), except that a formula cell with no saved value comes back as
a :class:`MissingFormulaValue` and a cell showing a spreadsheet error (#DIV/0!) as a
:class:`CellProblem`.
"""

from __future__ import annotations

import datetime as _dt
import math
import posixpath
import re
import warnings
from dataclasses import dataclass, field

from ..errors import NavredError
from .safexml import iterparse

_MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_TEXT, _SHARED, _RUN = (f"{_MAIN}{t}" for t in ("t", "si", "r"))
#: The same names as expat gives them with a namespace separator of one space.
_X_ROW, _X_CELL, _X_VALUE, _X_FORMULA, _X_INLINE, _X_TEXT, _X_PHONETIC = (
    f"{_MAIN[1:-1]} {t}" for t in ("row", "c", "v", "f", "is", "t", "rPh"))
_REFERENCE = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]{1,7})$")
#: The last row and column a sheet of the .xlsx format has (ECMA-376).
LAST_ROW = 1_048_576
LAST_COLUMN = 16_384


class MissingFormulaValue:
    """A spreadsheet formula cell with no saved value (its value is unknown until a spreadsheet program computes it)."""

    def __init__(self, formula: str):
        self.formula = formula

    def __repr__(self) -> str:
        return f"formula {self.formula} with no saved value"

    def __str__(self) -> str:
        return self.formula


class CellProblem:
    """A cell of a spreadsheet file that cannot be read as any value: why, and its text as stored."""

    def __init__(self, reason: str, text: str = ""):
        self.reason = reason
        self.text = text

    def __repr__(self) -> str:
        return f"unreadable cell ({self.reason})"

    def __str__(self) -> str:
        return self.text


@dataclass
class SheetCells:
    """One sheet's rows as the file holds them: (row number, the row's cells from column A)."""

    name: str
    rows: list[tuple[int, list]] = field(default_factory=list)
    #: rows whose own number could not be read or came twice: row number -> reason
    row_problems: dict[int, str] = field(default_factory=dict)
    cells: int = 0


def column_index(letters: str) -> int:
    """The 1-based column of its letters ('A' is 1, 'XFD' 16,384)."""
    index = 0
    for char in letters.upper():
        index = index * 26 + (ord(char) - 64)
    return index


def column_letters(index: int) -> str:
    """The letters of a 1-based column."""
    letters = ""
    while index:
        index, remainder = divmod(index - 1, 26)
        letters = chr(65 + remainder) + letters
    return letters


class _Converter:
    """Turns one cell (its type, style, value text, formula text and inline text) into its value, as openpyxl's
    read-only, data-only reading does."""

    def __init__(self, shared_strings, date_styles, timedelta_styles, epoch):
        self.shared = shared_strings
        self.dates = date_styles
        self.durations = timedelta_styles
        self.epoch = epoch

    def value(self, kind: str, style: str | None, text: str | None, formula: str | None, inline: list | None):
        from openpyxl.utils.datetime import from_excel, from_ISO8601

        if kind == "inlineStr":
            return None if inline is None else "".join(inline)
        if text is None or text == "":
            if formula is not None:
                return MissingFormulaValue("=" + formula.lstrip("="))
            return None
        if kind == "n":
            try:
                number = int(text)
            except ValueError:
                try:
                    number = float(text)
                except ValueError:
                    return CellProblem(f"the cell is marked as a number but holds {text[:40]!r} (a damaged file?)",
                                       text)
                if not math.isfinite(number):
                    return CellProblem(f"the number cell holds {text!r}, which is not a finite number", text)
            if not style:
                return number
            try:
                style_id = int(style)
            except ValueError:
                return CellProblem(f"the cell's style {style!r} is not a style number (a damaged file?)", text)
            if style_id in self.dates:
                try:
                    with warnings.catch_warnings():
                        warnings.simplefilter("ignore")
                        return from_excel(number, self.epoch, timedelta=style_id in self.durations)
                except (OverflowError, ValueError):
                    return CellProblem(f"the cell is formatted as a date but its serial number {text} is outside "
                                       "the dates a spreadsheet holds", text)
            return number
        if kind == "s":
            try:
                return self.shared[int(text)]
            except (ValueError, IndexError, TypeError):
                return CellProblem(f"the cell points to shared text {text!r}, which the file does not hold "
                                   "(a damaged file?)", text)
        if kind == "str":
            return text
        if kind == "b":
            if text.strip() in ("0", "1"):
                return text.strip() == "1"
            return CellProblem(f"the cell is marked TRUE/FALSE but holds {text!r} (a damaged file?)", text)
        if kind == "e":
            return CellProblem(f"the spreadsheet shows the error {text} in this cell: correct the cell", text)
        if kind == "d":
            try:
                return from_ISO8601(text)
            except (ValueError, TypeError, OverflowError):
                return CellProblem(f"the cell is marked as a date but holds {text!r} (a damaged file?)", text)
        return CellProblem(f"the cell has the unknown type {kind!r} (a damaged file?)", text)


_PACKAGE_RELS = "{http://schemas.openxmlformats.org/package/2006/relationships}Relationship"
_DOCUMENT_RELS = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}id"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/"
#: The first day of each date system a workbook may keep (ECMA-376 §18.17.4): the 1900 system counts from
#: 1899-12-30 (with the leap day of 1900 that never was), the 1904 system from 1904-01-01.
EPOCH_1900 = _dt.datetime(1899, 12, 30)
EPOCH_1904 = _dt.datetime(1904, 1, 1)


@dataclass(frozen=True)
class SheetEntry:
    """A worksheet of a workbook: its name, whether it is shown, and its part in the zip archive."""

    name: str
    state: str
    member: str


@dataclass
class Book:
    """What reading a workbook's cells needs: its worksheets, shared text, date styles and date system."""

    sheets: list[SheetEntry]
    shared: list[str]
    date_styles: set[int]
    duration_styles: set[int]
    epoch: _dt.datetime

    @property
    def sheetnames(self) -> list[str]:
        return [s.name for s in self.sheets]


def _part(archive, name: str, what: str):
    try:
        return archive.open(name)
    except KeyError:
        raise NavredError(f"the spreadsheet has no {what} ({name}): a damaged file?") from None


def _relationships(archive, path: str) -> list[tuple[str, str, str]]:
    """(id, type, target part) of a part's relationships (its _rels file), targets made whole."""
    folder = posixpath.dirname(path)
    rels = posixpath.join(folder, "_rels", posixpath.basename(path) + ".rels") if path else "_rels/.rels"
    if rels not in archive.namelist():
        return []
    out = []
    with archive.open(rels) as source:
        for _event, element in iterparse(source, rels):
            if element.tag == _PACKAGE_RELS:
                target = element.get("Target") or ""
                target = target.lstrip("/") if target.startswith("/") else posixpath.normpath(
                    posixpath.join(folder, target))
                out.append((element.get("Id") or "", element.get("Type") or "", target))
    return out


def parts_opened_whole(archive) -> list[str]:
    """The parts of a workbook read whole before any sheet: its list of sheets, their relationships, the shared
    text and the styles (counted against a run's bound on XML before they are read)."""
    document = next((t for _, kind, t in _relationships(archive, "") if kind.endswith("/officeDocument")),
                    "xl/workbook.xml")
    parts = [document]
    for _, kind, target in _relationships(archive, document):
        if kind.endswith(("/sharedStrings", "/styles")):
            parts.append(target)
    return parts


def open_workbook(archive) -> Book:
    """The worksheets (in order, chart sheets left out), shared text, date styles and date system of a workbook
    open as a zip ``archive``, read with :mod:`navred.io.safexml` (openpyxl would parse every sheet whole to
    find its size as it opens a workbook, with a slower parser: a sheet of a million rows costs minutes there)."""
    from openpyxl.styles.numbers import BUILTIN_FORMATS, is_date_format, is_timedelta_format

    document = next((t for _, kind, t in _relationships(archive, "") if kind.endswith("/officeDocument")),
                    "xl/workbook.xml")
    targets = {rid: (kind, target) for rid, kind, target in _relationships(archive, document)}
    epoch = EPOCH_1900
    sheets = []
    with _part(archive, document, "list of sheets") as source:
        for _event, element in iterparse(source, document):
            name = element.tag[element.tag.rfind("}") + 1:]
            if name == "workbookPr" and (element.get("date1904") or "").lower() in ("1", "true"):
                epoch = EPOCH_1904
            elif name == "sheet":
                kind, target = targets.get(element.get(_DOCUMENT_RELS) or "", ("", ""))
                if kind.endswith("/worksheet"):
                    sheets.append(SheetEntry(element.get("name") or "", element.get("state") or "visible", target))
    shared: list[str] = []
    styles_part = None
    for kind, target in targets.values():
        if kind.endswith("/sharedStrings") and target in archive.namelist():
            with archive.open(target) as source:
                for _event, element in iterparse(source, target):
                    if element.tag == _SHARED:
                        text = "".join([t.text or "" for t in element.findall(_TEXT)]
                                       + [t.text or "" for r in element.findall(_RUN) for t in r.findall(_TEXT)])
                        shared.append(text.replace("x005F_", ""))  # as openpyxl reads it
                        element.clear()
        elif kind.endswith("/styles") and target in archive.namelist():
            styles_part = target
    dates, durations = set(), set()
    if styles_part is not None:
        custom: dict[int, str] = {}
        styles: list[int] = []
        inside_cell_styles = False
        with archive.open(styles_part) as source:
            for event, element in iterparse(source, styles_part, events=("start", "end")):
                name = element.tag[element.tag.rfind("}") + 1:]
                if name == "cellXfs":
                    inside_cell_styles = event == "start"
                elif event == "end" and name == "numFmt":
                    try:
                        custom[int(element.get("numFmtId") or "")] = element.get("formatCode") or ""
                    except ValueError:
                        continue
                elif event == "end" and name == "xf" and inside_cell_styles:
                    try:
                        styles.append(int(element.get("numFmtId") or 0))
                    except ValueError:
                        styles.append(0)
        for index, number in enumerate(styles):
            code = custom.get(number, BUILTIN_FORMATS.get(number))
            if code and is_date_format(code):
                dates.add(index)
            if code and is_timedelta_format(code):
                durations.add(index)
    return Book(sheets, shared, dates, durations, epoch)


class _SheetHandlers:
    """The expat handlers that read a sheet's rows: a small state machine over row, c, v, f, is, r, t and rPh
    (ECMA-376 §18.3.1), no element tree built (several times quicker than ElementTree on a large sheet)."""

    def __init__(self, book: Book, out: SheetCells, take_cells):
        self.convert = _Converter(book.shared, book.date_styles, book.duration_styles, book.epoch)
        self.out = out
        self.take_cells = take_cells
        self.seen: set[int] = set()
        self.previous = 0
        self.counted = 0
        self.number = 0
        self.cells: list | None = None
        self.column = 0
        self.cell: list | None = None  # [reference, type, style, value text, formula text, inline parts]
        self.capture: list | None = None
        self.inline: list | None = None
        self.phonetic = 0

    def start(self, name, attrs):
        if name == _X_CELL:
            self.cell = [attrs.get("r"), attrs.get("t", "n"), attrs.get("s"), None, None, None]
        elif self.cell is not None:
            if name == _X_VALUE or name == _X_FORMULA:
                self.capture = []
            elif name == _X_INLINE:
                self.inline = []
            elif name == _X_TEXT and self.inline is not None and not self.phonetic:
                self.capture = []
            elif name == _X_PHONETIC:
                self.phonetic += 1
        elif name == _X_ROW:
            self.row(attrs.get("r"))

    def text(self, data):
        if self.capture is not None:
            self.capture.append(data)

    def end(self, name):
        cell = self.cell
        if cell is not None:
            if name == _X_CELL:
                self.finish(cell)
                self.cell = self.inline = None
            elif name == _X_VALUE:
                cell[3] = "".join(self.capture or ())
                self.capture = None
            elif name == _X_FORMULA:
                cell[4] = "".join(self.capture or ())
                self.capture = None
            elif name == _X_TEXT and self.capture is not None:
                self.inline.append("".join(self.capture))
                self.capture = None
            elif name == _X_INLINE:
                cell[5] = self.inline
            elif name == _X_PHONETIC:
                self.phonetic -= 1
        elif name == _X_ROW and self.cells is not None:
            if self.cells:
                self.out.rows.append((self.number, self.cells))
            self.cells = None
            if self.counted >= 4096:
                self.take_cells(self.counted)
                self.out.cells += self.counted
                self.counted = 0

    def row(self, number_text):
        out = self.out
        number = self.previous + 1
        if number_text is not None:
            try:
                number = int(number_text)
            except ValueError:
                out.row_problems[number] = f"the row's number {number_text!r} is not a number (a damaged file?)"
        if number in self.seen:
            out.row_problems[number] = f"row {number} comes twice in the sheet's file (a damaged file?)"
            number = max(self.seen) + 1
        elif not 1 <= number <= LAST_ROW:
            out.row_problems[number] = f"row number {number} is outside 1 to {LAST_ROW:,} (a damaged file?)"
        self.seen.add(number)
        self.previous = self.number = number
        self.cells = []
        self.column = 0

    def finish(self, cell):
        if self.cells is None:
            return  # a cell outside any row: not a sheet's cell
        reference, kind, style, text, formula, inline = cell
        value = None
        if reference is None:
            self.column += 1
        else:
            found = _REFERENCE.match(reference)
            index = _column_of(found.group(1)) if found else 0
            if not found or not 1 <= index <= LAST_COLUMN:
                self.column += 1
                value = CellProblem(f"the cell's reference {reference[:20]!r} is not a cell (a damaged file?)", "")
            else:
                self.column = index
                if int(found.group(2)) != self.number:
                    value = CellProblem(f"the cell's reference {reference!r} is not in row {self.number}, where the "
                                        "file puts it (a damaged file?)", "")
        if value is None:
            try:
                value = self.convert.value(kind, style, text, formula, inline)
            except (NavredError, ValueError, TypeError, IndexError, KeyError, OverflowError) as exc:
                value = CellProblem(f"the cell cannot be read ({type(exc).__name__}: {exc})", "")
            if value is None:
                return
        cells = self.cells
        column = self.column
        if column > len(cells):
            cells.extend([None] * (column - len(cells)))
        cells[column - 1] = value
        self.counted += 1


_COLUMNS: dict[str, int] = {}


def _column_of(letters: str) -> int:
    index = _COLUMNS.get(letters)
    if index is None:
        index = _COLUMNS[letters] = column_index(letters)
    return index


def read_sheet_cells(book: Book, sheet: SheetEntry, archive, *, take_cells) -> SheetCells:
    """The rows and cells of one sheet of a workbook opened with :func:`open_workbook`, whose file is open
    as the zip ``archive``.

    ``take_cells(n)`` is called as cells are read (the run's bound on cells; it raises to stop)."""
    from .safexml import parse_with

    out = SheetCells(sheet.name)
    handlers = _SheetHandlers(book, out, take_cells)
    with _part(archive, sheet.member, f"sheet {sheet.name!r}") as source:
        parse_with(source, f"sheet {sheet.name!r}", handlers.start, handlers.end, handlers.text)
    take_cells(handlers.counted)
    out.cells += handlers.counted
    return out


__all__ = ["CellProblem", "MissingFormulaValue", "SheetCells", "read_sheet_cells", "open_workbook", "Book", "SheetEntry",
           "parts_opened_whole", "column_index",
           "column_letters", "LAST_ROW", "LAST_COLUMN"]
