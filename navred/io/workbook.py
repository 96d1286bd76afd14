"""Workbooks in navred's own style (openpyxl): what every workbook navred writes has in common.

The safety caution on the first sheet and in every printed footer, headers in their style and frozen,
numbers shown to their unit's precision, text always stored as text (never a formula), big tables
written column by column (:mod:`navred.io.xlsxtables`), pictures embedded at the size they are shown,
every sheet's print setup, and the bound of a sheet's rows. What a workbook holds is its job's
(the voyage's :mod:`navred.jobs.voyagebook`, a class's marking, a lunar distance's working).
"""

from __future__ import annotations

import io
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import NavredError
from .xlsxtables import TableWriter, safe_text

SAFETY = ("SAFETY OF NAVIGATION: navred is an aid to navigation, not a sole means of navigation. "
          "Verify against the official nautical almanac and the publications of your flag state; "
          "keep a DR plot and cross-check every fix with every other means; low sights (below "
          "5° of altitude) and Moon sights carry larger errors; defer to local regulations, the "
          "ship's master and licensed practice.")

_HEADER_FILL = "1D3557"
_FLAG_FILL = "F4D6D9"


def utc_cell(value):
    """An instant as a spreadsheet date-time cell (naive UTC, to the second as the sheet shows it)."""
    import datetime as dt

    stamp = np.datetime64(value, "us")
    return None if np.isnat(stamp) else stamp.astype(dt.datetime)


def cell_value(value):
    """A value openpyxl can store: NaN and infinity as empty cells, numpy scalars as Python ones,
    instants with a zone as naive UTC, anything else that is not a plain value as its text."""
    import datetime as dt

    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not np.isfinite(value):
        return None
    if isinstance(value, dt.datetime) and value.tzinfo is not None:
        return value.astimezone(dt.timezone.utc).replace(tzinfo=None)
    if value is None or isinstance(value, (str, int, float, bool, dt.datetime, dt.date, dt.time)):
        return value
    return str(value)


def add_figure(sheet, figure, anchor: str, width: int, height: int) -> None:
    """Embed a picture in a sheet as a PNG drawn at the size it is shown (``width`` by ``height``
    pixels), anchored at a cell: a :class:`navred.figures.drawing.Canvas` or a matplotlib figure."""
    from openpyxl.drawing.image import Image

    if hasattr(figure, "to_png"):
        png = io.BytesIO(figure.to_png(width))
    else:
        png = io.BytesIO()
        dpi = width / figure.get_figwidth()  # drawn at the resolution it is shown, not scaled down
        figure.savefig(png, format="png", dpi=dpi, facecolor=figure.get_facecolor(), pil_kwargs={"compress_level": 3})
        png.seek(0)
    image = Image(png)
    image.width, image.height = width, height
    sheet.add_image(image, anchor)


#: How a column displays its numbers, by the unit in its header, while the cell keeps full precision: to 0.1′
#: for arcminutes; a true direction (Zn, a bearing, a course, a set, an axis) in three figures to 0.1° as the
#: trade writes it (040.7°); the angle of cut in whole degrees; Z to 0.1°; other decimal degrees to 0.0001°
#: (0.006′).
_NUMBER_FORMATS = (("(′", "0.0"), ("zn (deg", "000.0"), ("(deg true)", "000.0"), ("bearing", "000.0"),
                   ("course made good (deg)", "000.0"), ("set (deg)", "000.0"), ("±95 % (deg)", "0"),
                   ("angle of cut (deg)", "0"), ("z (deg)", "0.0"), ("z interpolated (deg)", "0.0"),
                   ("(deg", "0.0000"), ("(nm)", "0.0"), ("(s", "0.000"), ("(m)", "0.00"),
                   ("(°c)", "0.0"), ("(hpa)", "0.0"), ("(kn)", "0.0"), ("(h)", "0"),
                   ("(%)", "0"))
DATE_TIME_FORMAT = "yyyy-mm-dd hh:mm:ss"


def _number_format(name: str) -> str | None:
    lower = str(name).lower()
    return next((form for unit, form in _NUMBER_FORMATS if unit in lower), None)


def without_negative_zero(values, form: str | None):
    """A column's numbers with those that would show as "-0.0" in ``form`` (a negative zero, or a negative
    value smaller than half the last figure shown) stored as 0: the trade never writes a signed zero."""
    if form is None:
        return values
    half = 0.5 * 10.0 ** -(len(form.split(".")[1]) if "." in form else 0)
    if pd.api.types.is_float_dtype(values):
        array = np.asarray(values, dtype=float)
        return np.where((array > -half) & (array <= 0.0), 0.0, array)
    return [0.0 if isinstance(v, float) and -half < v <= 0.0 else v for v in values]


def style_header(cell) -> None:
    """A header cell in the workbook's own style (white on navy, wrapped)."""
    from openpyxl.styles import Alignment, Font, PatternFill

    cell.font = Font(bold=True, color="FFFFFF")
    cell.fill = PatternFill("solid", fgColor=_HEADER_FILL)
    cell.alignment = Alignment(wrap_text=True, vertical="center")


def header_row(sheet, row: int, names, *, height: float = 32) -> None:
    """Write a row of headers in the workbook's own style (white on navy, wrapped)."""
    for column, name in enumerate(names, start=1):
        cell = sheet.cell(row=row, column=column)
        write_text_safe(cell, str(name))  # an extra column of the log may be named like a formula
        style_header(cell)
    sheet.row_dimensions[row].height = height


def write_text_safe(cell, value) -> None:
    """Store a value; text is always stored as text, never as a formula (a log's '=…' stays words).

    A control character, which the format cannot hold, is shown as U+FFFD; text longer than a cell
    holds is cut with a note saying how long it was."""
    if isinstance(value, str):
        value = safe_text(value)
    cell.value = value
    if isinstance(value, str) and cell.data_type == "f":
        cell.data_type = "s"


def new_tables(book) -> TableWriter:
    """The writer of a workbook's tables (see :mod:`navred.io.xlsxtables`), in this workbook's style."""
    return TableWriter(book, style_header, _FLAG_FILL, DATE_TIME_FORMAT)


def write_table_sheet(tables: TableWriter, sheet, frame: pd.DataFrame, *, wide: dict[str, int] | None = None,
                 flag_column: str | None = None, first_row: int = 1):
    """A table as a sheet: styled headers, frozen, numbers shown to their unit's precision, text as text."""
    formats = [_number_format(name) for name in frame.columns]
    # a column of numbers held as objects (a table built row by row, NaN where a row has none) is written as
    # numbers, to its unit's precision, not as the General cells a spreadsheet shows to 15 digits
    mixed = [name for name, form in zip(frame.columns, formats) if form and frame[name].dtype == object]
    if mixed:
        frame = frame.copy()
        for name in mixed:
            numbers = pd.to_numeric(frame[name], errors="coerce")
            if (numbers.notna() | frame[name].isna()).all():
                frame[name] = numbers.astype(float)
    if any(formats):
        frame = frame.copy()
        for name, form in zip(list(frame.columns), formats):
            if form:
                frame[name] = without_negative_zero(frame[name], form)
    flagged = None
    if flag_column in frame.columns:
        flagged = frame[flag_column].astype(str).str.contains("BLUNDER", regex=False).to_numpy()
    tables.write(sheet, frame, first_row=first_row, number_formats=formats, flagged=flagged)
    if first_row == 1:
        sheet.freeze_panes = "A2"
    from openpyxl.utils import get_column_letter

    for index, name in enumerate(frame.columns, start=1):
        sample = [len(str(name)) * 0.6] + [len(str(v)) for v in frame[name].head(200)]
        width = (wide or {}).get(name) or min(max(sample) + 2, 60)
        if formats[index - 1]:
            width = min(width, 12)
        if first_row > 1:  # a table below another on the sheet: as wide as either needs
            width = max(width, sheet.column_dimensions[get_column_letter(index)].width or 0)
        sheet.column_dimensions[get_column_letter(index)].width = max(width, 8)


def front_sheet(book, title: str, heading: str):
    """The first sheet of a workbook: its heading and the safety caution, prominent at the top."""
    from openpyxl.styles import Alignment, Font

    sheet = book.active
    sheet.title = title
    sheet["A1"] = heading
    sheet["A1"].font = Font(bold=True, size=14)
    sheet["A3"] = SAFETY
    sheet["A3"].font = Font(bold=True, color="9B1D20")
    sheet["A3"].alignment = Alignment(wrap_text=True, vertical="top")
    sheet.merge_cells("A3:D3")
    sheet.row_dimensions[3].height = 75
    return sheet


#: The most rows a worksheet holds (Excel and the Office Open XML format), the header among them.
SHEET_ROW_LIMIT = 1_048_576


def check_fits(rows: int) -> None:
    """Refuse, before any work, a log too long for one sheet of the workbook (its rows and a header)."""
    if rows + 1 > SHEET_ROW_LIMIT:
        raise NavredError(f"the log has {rows:,} rows, more than a workbook sheet holds ({SHEET_ROW_LIMIT - 1:,} "
                          "rows and a header): split it into several logs and make a workbook of each, or use "
                          "navred reduce --csv")


#: the most pictures of one kind a workbook embeds (each is about 60 kB); the rest are counted on
#: the sheet and written as files when a folder is given
MAX_EMBEDDED_PICTURES = 100


@dataclass(frozen=True)
class Pictures:
    """Which pictures a workbook embeds: ``embed`` False leaves them all out; at most ``limit`` of
    each kind are embedded; ``folder``, when given, is where every plotting sheet is written as a
    file (the sheets say so)."""

    embed: bool = True
    limit: int = MAX_EMBEDDED_PICTURES
    folder: str | None = None

    def note(self, what: str, shown: int, total: int) -> str:
        """The line a sheet carries when not every picture of a kind is in it ('' when all are)."""
        if shown == total:
            return ""
        where = (f"every one is in {self.folder}" if self.folder and what == "plotting sheets" else
                 "write every plotting sheet as a file with navred workbook --plots FOLDER"
                 if what == "plotting sheets" else "the table above lists every one")
        if not self.embed:
            return f"Pictures left out of this workbook ({total:,} {what}); {where}."
        left = total - shown
        return f"The first {shown:,} of {total:,} {what} are pictured here; {left:,} {'is' if left == 1 else 'are'} not: {where}."


def pictures_below(sheet, line: int, pictures: Pictures, what: str, names: list, draw, size: tuple[int, int],
                   rows_each: int) -> int:
    """Embed a picture of each name from ``line`` down, as many as ``pictures`` allows, saying how many are
    not; the next free line."""
    shown = names[:pictures.limit] if pictures.embed else []
    note = pictures.note(what, len(shown), len(names))
    if note:
        write_text_safe(sheet.cell(row=line, column=1), note)
        line += 2
    for name in shown:
        add_figure(sheet, draw(name), f"A{line}", *size)
        line += rows_each
    return line



#: A sheet wider than this many columns prints landscape.
LANDSCAPE_COLUMNS = 8
#: Sheets whose first row is not a table's header (a title, or a text above the tables): no row repeats.
NO_HEADER_ROW = ("About", "Training", "Lunar distance", "How to fill it in", "Lists")


def fit_pages(book, tables: TableWriter | None = None, *, made: str | None = None) -> None:
    """The print setup of every sheet: one page wide (as many tall as it takes), landscape when wider than
    :data:`LANDSCAPE_COLUMNS` columns, the header row repeated on every page of a table, and a footer with the
    safety caution, the day the file was made and the page number, so that no printed page shows bare positions."""
    import datetime as dt

    from .. import __version__
    from .cautions import CAUTION

    made = made or dt.date.today().isoformat()
    for sheet in book.worksheets:
        width = tables.width(sheet) if tables is not None else sheet.max_column
        sheet.page_setup.orientation = "landscape" if width > LANDSCAPE_COLUMNS else "portrait"
        sheet.print_title_rows = None if sheet.title in NO_HEADER_ROW else "1:1"
        sheet.sheet_properties.pageSetUpPr.fitToPage = True
        sheet.page_setup.fitToWidth = 1
        sheet.page_setup.fitToHeight = 0
        for footer in (sheet.oddFooter, sheet.evenFooter, sheet.firstFooter):
            footer.left.text = CAUTION
            footer.left.size = 7
            footer.right.text = f"navred {__version__}, made {made}; page &P of &N"
            footer.right.size = 7

