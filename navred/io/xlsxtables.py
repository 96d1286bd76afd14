"""Tables written into a workbook at the speed of the format: the rows of a sheet built column by column.

Edge code. openpyxl builds the workbook (its sheets, styles, column widths, frozen panes,
print settings, pictures, merged cells) and writes it; it spends about 15 µs on each cell it
writes, in write-only mode too (measured: 20,000 rows of 45 columns took 15 s, the
general-purpose alternative library 12 s), so a fleet's 20,000-sight log took over a minute.
Here a table's cells are made as the sheet's XML text one column at a time, from the column's
values as plain Python objects, and put into the sheet's ``sheetData`` element of the file
openpyxl wrote (ECMA-376 Part 1, 18.3.1.80 sheetData, 18.3.1.73 row, 18.3.1.4 c, 18.3.1.53
is, inline strings). The styles a table uses are made by openpyxl (on a scratch sheet that is
removed before the save) and referred to by their index, as openpyxl itself does.

Every text is written as an inline string: never a formula, whatever it begins with. A
control character the format cannot hold is shown as U+FFFD and a text longer than a cell
holds is cut with a note, as :func:`navred.io.workbook.write_text_safe` does for single cells.
"""

from __future__ import annotations

import datetime as dt
import heapq
import io
import itertools
import re
import tempfile
import xml.etree.ElementTree as ET
import zipfile
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..constants import NS_PER_DAY
from ..errors import NavredError
from .readers import MAX_CELL_CHARS

_ILLEGAL_IN_XML = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_EXCEL_EPOCH = np.datetime64("1899-12-30T00:00:00", "ns")  # serial date 0 of the 1900 date system
_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_RELS = "http://schemas.openxmlformats.org/package/2006/relationships"
_OFFICE_RELS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"


def safe_text(value: str) -> str:
    """Text as a cell may hold it: control characters shown as U+FFFD, cut with a note when too long."""
    value = _ILLEGAL_IN_XML.sub("\ufffd", value)
    if len(value) > MAX_CELL_CHARS:
        note = f" … [cut: {len(value):,} characters]"
        value = value[:MAX_CELL_CHARS - len(note)] + note
    return value


def _escaped(value: str) -> str:
    value = safe_text(value)
    if "&" in value or "<" in value or ">" in value:
        value = value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return value


def _serial(values: np.ndarray) -> np.ndarray:
    """Spreadsheet serial dates (days since 1899-12-30) of naive datetime64 values."""
    ns = (values.astype("datetime64[ns]") - _EXCEL_EPOCH).astype(np.int64)
    return ns / NS_PER_DAY


def _python_value(value):
    """One cell value as a plain Python number, bool, text, or a spreadsheet serial date (a tuple)."""
    if value is None or value is pd.NaT:
        return None
    if isinstance(value, np.generic):
        if isinstance(value, np.datetime64):
            return None if np.isnat(value) else ("date", float(_serial(np.array([value]))[0]))
        value = value.item()
    if isinstance(value, bool):
        return value
    if isinstance(value, (int, float)):
        return value if value == value and value not in (float("inf"), float("-inf")) else None
    if isinstance(value, str):
        return value
    if isinstance(value, pd.Timestamp):
        stamp = value.tz_convert("UTC").tz_localize(None) if value.tzinfo is not None else value
        return ("date", float(_serial(np.array([stamp.to_datetime64()]))[0]))
    if isinstance(value, dt.datetime):
        if value.tzinfo is not None:
            value = value.astimezone(dt.timezone.utc).replace(tzinfo=None)
        return ("date", float(_serial(np.array([np.datetime64(value, "ns")]))[0]))
    if isinstance(value, dt.date):
        return ("date", float(_serial(np.array([np.datetime64(value, "ns")]))[0]))
    return str(value)


@dataclass(frozen=True)
class Styles:
    """The style indices a table uses (each an index into the workbook's cell formats)."""

    plain: int
    header: int
    date: int
    flagged: int  # a flagged row's fill, for text and empty cells
    flagged_date: int
    #: number format -> (style, flagged style), for the float columns that have one
    numbers: dict[str, tuple[int, int]] = field(default_factory=dict)


def column_cells(values, letter: str, rows: np.ndarray, number_style: int, flagged: np.ndarray | None,
                 styles: Styles) -> list[str]:
    """The XML of one column's cells, one string per row ('' for an empty cell outside a flagged row).

    ``number_style`` is the style of the column's float cells (0 when it has no number format);
    ``flagged`` marks rows filled with the flag colour.
    """
    array = values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)
    n = len(array)
    rows_list = rows.tolist()
    flag = flagged.tolist() if flagged is not None else [False] * n
    if array.dtype.kind == "f":
        finite = np.isfinite(array)
        attribute = tuple(_s(style) for style in _number_pair(number_style, styles))  # by flag
        empty = ("", f' s="{styles.flagged}"')
        return [f'<c r="{letter}{r}"{attribute[f]}><v>{v!r}</v></c>' if ok
                else (f'<c r="{letter}{r}"{empty[f]}/>' if f else "")
                for r, v, ok, f in zip(rows_list, array.tolist(), finite.tolist(), flag)]
    if array.dtype.kind in "iu":
        return [_number(letter, r, str(v), styles.flagged if f else 0)
                for r, v, f in zip(rows_list, array.tolist(), flag)]
    if array.dtype.kind == "b":
        return [f'<c r="{letter}{r}"{_s(styles.flagged if f else 0)} t="b"><v>{int(v)}</v></c>'
                for r, v, f in zip(rows_list, array.tolist(), flag)]
    if array.dtype.kind == "M":
        serial = _serial(array)
        ok = ~np.isnat(array)
        return [_number(letter, r, repr(v), styles.flagged_date if f else styles.date) if good
                else _empty(letter, r, f, styles)
                for r, v, good, f in zip(rows_list, serial.tolist(), ok.tolist(), flag)]
    if isinstance(array.dtype, pd.DatetimeTZDtype) or str(array.dtype).startswith("datetime64["):
        return column_cells(pd.Series(array).dt.tz_convert(None).to_numpy(), letter, rows, number_style,
                            flagged, styles)
    values_list = array.tolist()
    if pd.api.types.infer_dtype(array, skipna=False) == "string":
        # a column of text (the common case): escaped only if some text needs it, checked once
        joined = "".join(values_list)
        if _ILLEGAL_IN_XML.search(joined) or "&" in joined or "<" in joined or ">" in joined \
                or any(len(v) > MAX_CELL_CHARS for v in values_list):
            values_list = [_escaped(v) for v in values_list]
        fill = styles.flagged
        return [f'<c r="{letter}{r}"{_s(fill if f else 0)} t="inlineStr"><is><t xml:space="preserve">{v}</t></is></c>'
                if v else _empty(letter, r, f, styles) for r, v, f in zip(rows_list, values_list, flag)]
    out = []
    number_pair = _number_pair(number_style, styles)
    for r, value, f in zip(rows_list, values_list, flag):
        value = _python_value(value)
        if value is None:
            out.append(_empty(letter, r, f, styles))
        elif isinstance(value, str):
            out.append(_text(letter, r, value, styles.flagged if f else 0) if value else _empty(letter, r, f, styles))
        elif isinstance(value, bool):
            out.append(f'<c r="{letter}{r}"{_s(styles.flagged if f else 0)} t="b"><v>{int(value)}</v></c>')
        elif isinstance(value, tuple):
            out.append(_number(letter, r, repr(value[1]), styles.flagged_date if f else styles.date))
        elif isinstance(value, float):
            out.append(_number(letter, r, repr(value), number_pair[f]))
        else:
            out.append(_number(letter, r, str(value), styles.flagged if f else 0))
    return out


def _number_pair(number_style: int, styles: Styles) -> tuple[int, int]:
    for plain, flagged in styles.numbers.values():
        if plain == number_style:
            return plain, flagged
    return 0, styles.flagged


def _s(style: int) -> str:
    return f' s="{style}"' if style else ""


def _number(letter: str, row: int, text: str, style: int) -> str:
    return f'<c r="{letter}{row}"{_s(style)}><v>{text}</v></c>'


def _text(letter: str, row: int, value: str, style: int) -> str:
    return f'<c r="{letter}{row}"{_s(style)} t="inlineStr"><is><t xml:space="preserve">{_escaped(value)}</t></is></c>'


def _empty(letter: str, row: int, flagged: bool, styles: Styles) -> str:
    return f'<c r="{letter}{row}" s="{styles.flagged}"/>' if flagged else ""


@dataclass
class _Block:
    first_row: int
    last_row: int
    first_column: int
    last_column: int
    #: the cells of each row, joined (a block kept in memory: a header, a title, a note)
    rows: list[str] = field(default_factory=list)
    #: a table's rows written to the spill file as they were made: where they begin, and each row's bytes
    spilled_at: int = -1
    lengths: np.ndarray | None = None


@dataclass
class _SheetPlan:
    blocks: list[_Block] = field(default_factory=list)
    heights: dict[int, float] = field(default_factory=dict)


#: rows of a table made into the sheet's XML at a time (and written to the spill file at once)
ROWS_AT_ONCE = 2_000


class TableWriter:
    """Tables of a workbook written to a temporary file as they are made, and into the workbook when it is
    saved.

    ``write`` puts a DataFrame on a sheet (a styled header row, then one row per record, numbers
    shown to their column's format, a flagged row filled): its rows' XML is made :data:`ROWS_AT_ONCE` at a
    time and written at once to a temporary file (unlinked, in the system's folder for them), so that a
    fleet's workbook costs memory for a few thousand rows, not for every sheet. Any cell written on such a
    sheet through openpyxl (a title, a note) is kept too. ``save`` writes the workbook with openpyxl and then
    streams each table sheet's rows from the temporary file into it.
    """

    def __init__(self, book, header_style: Callable, flag_fill: str, date_format: str):
        self.book = book
        self._header_style = header_style
        self._flag_fill = flag_fill
        self._date_format = date_format
        self._scratch = book.create_sheet("navred-styles")
        self._ids: dict[tuple, int] = {}
        self._plans: dict[str, _SheetPlan] = {}
        self._spill = None

    def style_id(self, *, number_format: str | None = None, fill: str | None = None, header: bool = False,
                 bold: bool = False) -> int:
        """The index of a cell format, made once (on the scratch sheet) and reused."""
        key = (number_format, fill, header, bold)
        if key not in self._ids:
            from openpyxl.styles import Font, PatternFill

            cell = self._scratch.cell(row=len(self._ids) + 1, column=1)
            if header:
                self._header_style(cell)
            if bold:
                cell.font = Font(bold=True)
            if fill:
                cell.fill = PatternFill("solid", fgColor=fill)
            if number_format:
                cell.number_format = number_format
            self._ids[key] = cell.style_id
        return self._ids[key]

    def styles(self, number_formats) -> Styles:
        numbers = {form: (self.style_id(number_format=form), self.style_id(number_format=form, fill=self._flag_fill))
                   for form in number_formats if form}
        return Styles(plain=0, header=self.style_id(header=True), date=self.style_id(number_format=self._date_format),
                      flagged=self.style_id(fill=self._flag_fill),
                      flagged_date=self.style_id(number_format=self._date_format, fill=self._flag_fill),
                      numbers=numbers)

    def _plan(self, sheet) -> _SheetPlan:
        return self._plans.setdefault(sheet.title, _SheetPlan())

    def write(self, sheet, frame: pd.DataFrame, *, first_row: int = 1, number_formats: list[str | None],
              flagged: np.ndarray | None = None, header_height: float = 32) -> None:
        """A table on ``sheet`` from ``first_row``: the header, then its records (written to the spill file a
        few thousand rows at a time)."""
        from openpyxl.utils import get_column_letter

        styles = self.styles(number_formats)
        names = [str(name) for name in frame.columns]
        letters = [get_column_letter(k) for k in range(1, len(names) + 1)]
        header = "".join(_text(letter, first_row, name, styles.header) for letter, name in zip(letters, names))
        plan = self._plan(sheet)
        width = max(len(names), 1)
        plan.blocks.append(_Block(first_row, first_row, 1, width, [header]))
        plan.heights[first_row] = header_height
        if not len(frame):
            return
        if self._spill is None:
            self._spill = tempfile.TemporaryFile(prefix="navred-sheets-")
        spill = self._spill
        spill.seek(0, io.SEEK_END)
        block = _Block(first_row + 1, first_row + len(frame), 1, width, spilled_at=spill.tell())
        lengths = []
        column_styles = [_number_pair_style(number_formats[k], styles) for k in range(len(names))]
        for start in range(0, len(frame), ROWS_AT_ONCE):
            stop = min(start + ROWS_AT_ONCE, len(frame))
            rows = np.arange(first_row + 1 + start, first_row + 1 + stop)
            part = frame.iloc[start:stop]
            marks = flagged[start:stop] if flagged is not None else None
            columns = [column_cells(part.iloc[:, k], letters[k], rows, column_styles[k], marks, styles)
                       for k in range(len(names))]
            encoded = ["".join(cells).encode("utf-8") for cells in zip(*columns)]
            del columns
            lengths.extend(len(row) for row in encoded)
            spill.write(b"".join(encoded))
        block.lengths = np.array(lengths, dtype=np.int64)
        plan.blocks.append(block)

    def width(self, sheet) -> int:
        """The columns a sheet uses, its tables' and openpyxl's cells together."""
        plan = self._plans.get(sheet.title)
        return max([sheet.max_column] + ([b.last_column for b in plan.blocks] if plan else []))

    def save(self, path: str) -> None:
        """Write the workbook to ``path``: openpyxl's file with the tables streamed into their sheets."""
        self.book.remove(self._scratch)
        for title, plan in self._plans.items():
            self._take_openpyxl_cells(self.book[title], plan)
        written = io.BytesIO()
        self.book.save(written)
        parts = _sheet_parts(written.getvalue())
        with zipfile.ZipFile(io.BytesIO(written.getvalue())) as source, \
                zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as target:
            for item in source.infolist():
                data = source.read(item.filename)
                title = parts.get(item.filename)
                if title in self._plans:
                    with target.open(item.filename, "w", force_zip64=True) as out:
                        _write_rows(out, data, self._plans[title], self._spill)
                else:
                    target.writestr(item.filename, data)
        if self._spill is not None:
            self._spill.close()
            self._spill = None

    def _take_openpyxl_cells(self, sheet, plan: _SheetPlan) -> None:
        """Cells written on a table sheet through openpyxl, carried into its rows (openpyxl's own
        rows of that sheet are replaced)."""
        for row in sheet.iter_rows():
            for cell in row:
                if cell.value is None and not cell.has_style:
                    continue
                value = _python_value(cell.value)
                letter, number = cell.column_letter, cell.row
                if value is None:
                    xml = f'<c r="{letter}{number}"{_s(cell.style_id)}/>'
                elif isinstance(value, str):
                    xml = _text(letter, number, value, cell.style_id)
                elif isinstance(value, bool):
                    xml = f'<c r="{letter}{number}"{_s(cell.style_id)} t="b"><v>{int(value)}</v></c>'
                elif isinstance(value, tuple):
                    xml = _number(letter, number, repr(value[1]), cell.style_id)
                else:
                    xml = _number(letter, number, repr(value) if isinstance(value, float) else str(value),
                                  cell.style_id)
                plan.blocks.append(_Block(number, number, cell.column, cell.column, [xml]))
        for number, dimension in sheet.row_dimensions.items():
            if dimension.height is not None and number not in plan.heights:
                plan.heights[number] = dimension.height


def _number_pair_style(number_format: str | None, styles: Styles) -> int:
    return styles.numbers[number_format][0] if number_format in styles.numbers else 0


def _sheet_parts(workbook_file: bytes) -> dict[str, str]:
    """Each worksheet's part name in the package (xl/worksheets/sheetN.xml) and its sheet's title."""
    with zipfile.ZipFile(io.BytesIO(workbook_file)) as package:
        book = ET.fromstring(package.read("xl/workbook.xml"))
        links = ET.fromstring(package.read("xl/_rels/workbook.xml.rels"))
    targets = {rel.get("Id"): rel.get("Target") for rel in links.iter(f"{{{_RELS}}}Relationship")}
    parts = {}
    for sheet in book.iter(f"{{{_MAIN}}}sheet"):
        target = targets[sheet.get(f"{{{_OFFICE_RELS}}}id")]
        name = target.lstrip("/") if target.startswith("/") else "xl/" + target
        parts[name] = sheet.get("name")
    return parts


_SHEET_DATA = re.compile(rb"<sheetData\s*/>|<sheetData>.*?</sheetData>", re.S)
_DIMENSION = re.compile(rb'<dimension ref="[^"]*"\s*/>')


def _block_rows(block: _Block, spill) -> Iterator[tuple[int, int, int, bytes]]:
    """(row number, first column, last column, the row's cells) of a block, in order; a spilled block's rows
    read back from the spill file a few thousand at a time."""
    if block.lengths is None:
        for offset, cells in enumerate(block.rows):
            yield block.first_row + offset, block.first_column, block.last_column, cells.encode("utf-8")
        return
    ends = np.cumsum(block.lengths)
    starts = ends - block.lengths
    for first in range(0, len(block.lengths), ROWS_AT_ONCE):
        last = min(first + ROWS_AT_ONCE, len(block.lengths))
        spill.seek(block.spilled_at + int(starts[first]))
        data = spill.read(int(ends[last - 1] - starts[first]))
        base = int(starts[first])
        for k in range(first, last):
            yield (block.first_row + k, block.first_column, block.last_column,
                   data[int(starts[k]) - base:int(ends[k]) - base])


def _write_rows(out, sheet_xml: bytes, plan: _SheetPlan, spill) -> None:
    """A sheet's XML written to ``out`` with its sheetData made from the plan's blocks, rows in order."""
    from openpyxl.utils import get_column_letter

    # a table's rows go out as they are; a row that holds more than one block (a note beside a
    # table, say) has its parts put in column order, and parts that overlap are a defect
    last_row = max([b.last_row for b in plan.blocks] + [1])
    last_column = max([1] + [block.last_column for block in plan.blocks])
    found = _SHEET_DATA.search(sheet_xml)
    if found is None:
        raise NavredError("the workbook's sheet has no sheetData element: a navred defect")
    head = _DIMENSION.sub(f'<dimension ref="A1:{get_column_letter(last_column)}{last_row}"/>'.encode(),
                          sheet_xml[:found.start()], 1)
    out.write(head + b"<sheetData>")
    heights = plan.heights
    merged = heapq.merge(*(_block_rows(block, spill) for block in plan.blocks), key=lambda part: part[:2])
    lines: list[bytes] = []
    for number, parts in itertools.groupby(merged, key=lambda part: part[0]):
        row = list(parts)
        if len(row) > 1 and any(later[1] <= earlier[2] for earlier, later in zip(row, row[1:])):
            raise NavredError(f"two things written in one place of a sheet (row {number}): a navred defect")
        height = heights.get(number)
        attributes = f' ht="{height:g}" customHeight="1"' if height else ""
        lines.append(f'<row r="{number}"{attributes}>'.encode() + b"".join(p[3] for p in row) + b"</row>")
        if len(lines) >= ROWS_AT_ONCE:
            out.write(b"".join(lines))
            lines = []
    out.write(b"".join(lines) + b"</sheetData>" + sheet_xml[found.end():])


__all__ = ["TableWriter", "column_cells", "safe_text"]
