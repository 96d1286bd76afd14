"""The cells of a workbook's sheets read one by one, each damaged cell named by its row and column.

Edge code, under :mod:`navred.readers`. openpyxl opens the workbook (its sheets, their names and
states, the shared strings, which styles are dates, the date system); the cells of each sheet are
then read here from the sheet's XML, streamed through defusedxml (no entity is expanded, no
document type accepted), because:

- a cell that openpyxl cannot convert (``<v>NaN</v>`` in a number cell, text in a number cell, a
  shared string that does not exist, a date or a boolean that is not one, a cell reference that
  is not a cell) raises in the middle of openpyxl's row iteration and loses the whole sheet; here
  it becomes a :class:`CellProblem` in its own cell, and its row alone is rejected, named by row
  and column;
- openpyxl fills every missing row with an empty one, so one cell at row 1,048,576 makes a million
  rows; here only the rows the file holds are kept, with their own row numbers;
- it is several times quicker (about 3 µs a cell against 10-25 µs), so the documented bound on the
  XML read (docs/security.md) is read in seconds.

Cells are read as openpyxl's read-only mode reads them with ``data_only=True`` (the value a
spreadsheet program saved), with the same conversions (numbers, shared and inline strings,
booleans, dates by style, ISO dates), except that a formula cell with no saved value comes back as
a :class:`~navred.readers.MissingFormulaValue` and a cell showing a spreadsheet error (#DIV/0!) as a
:class:`CellProblem`.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass, field

from ..errors import NavredError

_MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_ROW, _CELL, _VALUE, _FORMULA, _INLINE, _TEXT, _SHEET_DATA = (
    f"{_MAIN}{t}" for t in ("row", "c", "v", "f", "is", "t", "sheetData"))
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
    """Turns one ``<c>`` element into its value, as openpyxl's read-only, data-only reading does."""

    def __init__(self, shared_strings, date_styles, timedelta_styles, epoch):
        self.shared = shared_strings
        self.dates = date_styles
        self.durations = timedelta_styles
        self.epoch = epoch

    def value(self, element):
        from openpyxl.utils.datetime import from_excel, from_ISO8601

        kind = element.get("t", "n")
        if kind == "inlineStr":
            inline = element.find(_INLINE)
            if inline is None:
                return None
            return "".join(t.text or "" for t in inline.iter(_TEXT))
        text = element.findtext(_VALUE)
        if text is None or text == "":
            formula = element.find(_FORMULA)
            if formula is not None:
                return MissingFormulaValue("=" + (formula.text or "").lstrip("="))
            return None
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
        if kind != "n":
            return CellProblem(f"the cell has the unknown type {kind!r} (a damaged file?)", text)
        try:
            number = int(text) if re.fullmatch(r"[+-]?\d{1,18}", text.strip()) else float(text)
        except ValueError:
            return CellProblem(f"the cell is marked as a number but holds {text[:40]!r} (a damaged file?)", text)
        if isinstance(number, float) and not math.isfinite(number):
            return CellProblem(f"the number cell holds {text!r}, which is not a finite number", text)
        style = element.get("s")
        if style:
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


def open_workbook(path):
    """openpyxl's read-only, data-only workbook (its errors left to the caller)."""
    import openpyxl

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # openpyxl warns of parts it leaves out (data validation, extensions)
        return openpyxl.load_workbook(path, read_only=True, data_only=True)


def sheet_member(sheet) -> str:
    """The zip member of a read-only worksheet (openpyxl keeps it as ``_worksheet_path``)."""
    return str(getattr(sheet, "_worksheet_path", ""))


def read_sheet_cells(book, sheet, archive, *, take_cells) -> SheetCells:
    """The rows and cells of one sheet of a workbook opened with :func:`open_workbook`, whose file is open
    as the zip ``archive``.

    ``take_cells(n)`` is called as cells are read (the run's bound on cells; it raises to stop)."""
    from defusedxml.ElementTree import iterparse

    convert = _Converter(getattr(sheet, "_shared_strings", None) or [], getattr(book, "_date_formats", set()),
                         getattr(book, "_timedelta_formats", set()), book.epoch)
    out = SheetCells(sheet.title)
    seen: set[int] = set()
    previous = 0
    counted = 0
    sheet_data = None
    with archive.open(sheet_member(sheet)) as source:
        for event, element in iterparse(source, events=("start", "end")):
            if event == "start":
                if element.tag == _SHEET_DATA:
                    sheet_data = element
                continue
            if element.tag != _ROW:
                continue
            number_text = element.get("r")
            number = previous + 1
            if number_text is not None:
                try:
                    number = int(number_text)
                except ValueError:
                    out.row_problems[number] = f"the row's number {number_text!r} is not a number (a damaged file?)"
            if number in seen:
                out.row_problems[number] = f"row {number} comes twice in the sheet's file (a damaged file?)"
                number = max(seen) + 1
            elif not 1 <= number <= LAST_ROW:
                out.row_problems[number] = f"row number {number} is outside 1 to {LAST_ROW:,} (a damaged file?)"
            seen.add(number)
            previous = number
            cells: list = []
            column = 0
            for cell in element:
                if cell.tag != _CELL:
                    continue
                reference = cell.get("r")
                value = None
                if reference is None:
                    column += 1
                else:
                    found = _REFERENCE.match(reference)
                    index = column_index(found.group(1)) if found else 0
                    if not found or not 1 <= index <= LAST_COLUMN:
                        column += 1
                        value = CellProblem(f"the cell's reference {reference[:20]!r} is not a cell (a damaged "
                                            "file?)", "")
                    else:
                        column = index
                        if int(found.group(2)) != number:
                            value = CellProblem(f"the cell's reference {reference!r} is not in row {number}, where "
                                                "the file puts it (a damaged file?)", "")
                if value is None:
                    try:
                        value = convert.value(cell)
                    except (NavredError, ValueError, TypeError, IndexError, KeyError, OverflowError) as exc:
                        value = CellProblem(f"the cell cannot be read ({type(exc).__name__}: {exc})", "")
                if value is None:
                    continue
                if column > len(cells):
                    cells.extend([None] * (column - len(cells)))
                cells[column - 1] = value
                counted += 1
            element.clear()
            if sheet_data is not None:
                sheet_data.clear()  # the rows read so far are let go, so memory holds one row of XML at a time
            if cells:
                out.rows.append((number, cells))
            if counted >= 4096:
                take_cells(counted)
                out.cells += counted
                counted = 0
    take_cells(counted)
    out.cells += counted
    return out


__all__ = ["CellProblem", "MissingFormulaValue", "SheetCells", "read_sheet_cells", "open_workbook", "sheet_member", "column_index",
           "column_letters", "LAST_ROW", "LAST_COLUMN"]
