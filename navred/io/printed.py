"""Printed pages: a small model of a document (pages of text, tables, pictures and drawings), written as a
PDF with reportlab and its tables as CSV files with the very same cell texts.

Edge code. A job builds a :class:`Document`; :func:`write_pdf` lays it out and :func:`write_tables`
writes every named table as ``NAME.csv``. Every page carries a heading of three lines: the
document's title and the dates it is valid for, the provenance of its data, and the caution; and
a foot with the page number and the day the file was made. Text is set in DejaVu Sans (the font
matplotlib ships), embedded, so that every character (° ′ − Δ) prints and the text can be
extracted and searched.
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass, field
from pathlib import Path

from ..angles import keep_angles_whole
from ..errors import NavredError
from .output import FORMULA_STARTS, atomic_write, atomic_write_many


@dataclass(frozen=True)
class Text:
    """A paragraph: ``style`` is heading (a page's title), subheading, body, small or mono (a fixed-width
    line, for a worked example)."""

    text: str
    style: str = "body"


@dataclass(frozen=True)
class Table:
    """A table: printed header labels, rows of cell texts, and for the CSV file its name (no CSV when empty)
    and snake_case headers. ``widths`` are relative column widths; ``spans`` are group labels above the
    header, (label, first column, number of columns)."""

    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    name: str = ""
    csv_columns: tuple[str, ...] = ()
    title: str = ""
    widths: tuple[float, ...] = ()
    spans: tuple[tuple[str, int, int], ...] = ()
    font_size: float = 7.5
    row_height: float | None = None
    shade_every: int = 0
    left_columns: int = 1
    width_fraction: float = 1.0
    compact: bool = False
    #: columns whose cells wrap within their width (long words in a narrow column), left-aligned
    wrap_columns: tuple[int, ...] = ()
    #: rows that head a section (a blank form's headings): their first cell across the whole row, bold and shaded
    section_rows: tuple[int, ...] = ()

    def __post_init__(self):
        if self.name and len(self.csv_columns) != len(self.columns):
            raise NavredError(f"table {self.name}: {len(self.columns)} columns but {len(self.csv_columns)} CSV headers")
        for row in self.rows:
            if len(row) != len(self.columns):
                raise NavredError(f"table {self.name or self.title}: a row of {len(row)} cells for "
                                  f"{len(self.columns)} columns")


@dataclass(frozen=True)
class Picture:
    """A PNG picture, drawn ``width_pt`` wide (its height in proportion)."""

    png: bytes
    width_pt: float


@dataclass(frozen=True)
class Drawing:
    """A :class:`navred.figures.drawing.Canvas`, drawn as vectors at ``scale`` (1: its own points)."""

    canvas: object
    scale: float = 1.0


@dataclass(frozen=True)
class Side:
    """Blocks set side by side, each in its share of the width (``shares`` relative)."""

    blocks: tuple
    shares: tuple[float, ...] = ()


@dataclass(frozen=True)
class Page:
    """A page (it may run onto more pages when its blocks are long)."""

    title: str
    blocks: tuple
    landscape: bool = False


@dataclass(frozen=True)
class Document:
    """The pages, and what heads every one: ``title``, ``valid_for`` (the dates), ``provenance`` and
    ``caution``."""

    title: str
    valid_for: str
    provenance: str
    caution: str
    pages: tuple[Page, ...] = field(default_factory=tuple)
    #: the word before the dates in every page's head ("valid" for tables of a period; "workings of" ...)
    dates_label: str = "valid"

    def tables(self) -> list[Table]:
        """Every named table, in page order (a table inside a :class:`Side` too)."""
        found = []

        def walk(blocks):
            for block in blocks:
                if isinstance(block, Table) and block.name:
                    found.append(block)
                elif isinstance(block, Side):
                    walk(block.blocks)

        for page in self.pages:
            walk(page.blocks)
        return found


#: a cell that is only a signed number (a spreadsheet reads it as that number, never as a formula)
_SIGNED_NUMBER = re.compile(r"[+-]\d+(\.\d+)?")


def table_csv(table: Table) -> str:
    """A table as CSV text: its snake_case headers and the printed cell texts, unchanged.

    A cell that a spreadsheet could take for a formula would have to be changed to be safe; navred's
    own tables never begin a cell so (negative numbers use the minus sign −, not the hyphen) but for a
    number signed + (a change northward, +15.8), which a spreadsheet reads as the number it is; any other
    is refused rather than written differently from the page.
    """
    import csv
    import io

    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(table.csv_columns)
    for row in table.rows:
        for cell in row:
            if cell.startswith(FORMULA_STARTS) and not _SIGNED_NUMBER.fullmatch(cell):
                raise NavredError(f"table {table.name}: the cell {cell!r} could be taken for a formula")
        writer.writerow(row)
    return out.getvalue()


def write_tables(document: Document, folder: str | Path, *, inputs=()) -> list[Path]:
    """Every named table of the document as ``NAME.csv`` in ``folder`` (created), written together."""
    tables = document.tables()
    names = [t.name for t in tables]
    if len(set(names)) != len(names):
        raise NavredError("two printed tables share a CSV name")
    return atomic_write_many(folder, {f"{t.name}.csv": table_csv(t).encode("utf-8") for t in tables}, inputs=inputs)


# --- The PDF ------------------------------------------------------------------------------------

INK = "#1d3557"
RULE = "#8d99ae"
SHADE = "#eef1f6"
_FONTS = {"regular": ("navred-sans", "DejaVuSans.ttf"), "bold": ("navred-sans-bold", "DejaVuSans-Bold.ttf"),
          "italic": ("navred-sans-italic", "DejaVuSans-Oblique.ttf"), "mono": ("navred-mono", "DejaVuSansMono.ttf")}
MARGIN_PT = 30.0
HEAD_PT = 52.0
FOOT_PT = 16.0


def _register_fonts() -> dict[str, str]:
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    from ..figures.drawing import font_folder

    folder = font_folder()
    names = {}
    for kind, (name, file) in _FONTS.items():
        if name not in pdfmetrics.getRegisteredFontNames():
            pdfmetrics.registerFont(TTFont(name, str(folder / file)))
        names[kind] = name
    return names


class _Pen:
    """Draws a canvas's primitives on a reportlab canvas (origin bottom left, y up) at a scale."""

    def __init__(self, pdf, x0: float, y_top: float, scale: float, fonts: dict[str, str]):
        self.pdf, self.x0, self.y_top, self.scale, self.fonts = pdf, x0, y_top, scale, fonts

    def _xy(self, x, y):
        return self.x0 + x * self.scale, self.y_top - y * self.scale

    def line(self, points, colour, width, dash):
        pdf = self.pdf
        pdf.setStrokeColor(colour)
        pdf.setLineWidth(width * self.scale)
        pdf.setDash([d * self.scale for d in dash] if dash else [])
        path = pdf.beginPath()
        path.moveTo(*self._xy(*points[0]))
        for point in points[1:]:
            path.lineTo(*self._xy(*point))
        pdf.drawPath(path, stroke=1, fill=0)
        pdf.setDash([])

    def polygon(self, points, fill, outline, width):
        pdf = self.pdf
        path = pdf.beginPath()
        path.moveTo(*self._xy(*points[0]))
        for point in points[1:]:
            path.lineTo(*self._xy(*point))
        path.close()
        if fill:
            pdf.setFillColor(fill)
        if outline:
            pdf.setStrokeColor(outline)
            pdf.setLineWidth(width * self.scale)
        pdf.drawPath(path, stroke=1 if outline else 0, fill=1 if fill else 0)

    def text(self, x, y, text, size, colour, anchor, baseline, rotation, bold, italic, box):
        pdf = self.pdf
        font = self.fonts["bold" if bold else "italic" if italic else "regular"]
        size = size * self.scale
        px, py = self._xy(x, y)
        pdf.saveState()
        pdf.translate(px, py)
        pdf.rotate(rotation)
        width = pdf.stringWidth(text, font, size)
        dx = {"start": 0.0, "middle": -width / 2, "end": -width}[anchor]
        dy = {"bottom": 0.0, "middle": -0.35 * size, "top": -0.8 * size}[baseline]
        if box:
            pdf.setFillColor(box)
            pdf.rect(dx - 1.5, dy - 0.25 * size, width + 3, size * 1.15, stroke=0, fill=1)
        pdf.setFillColor(colour)
        pdf.setFont(font, size)
        pdf.drawString(dx, dy, text)
        pdf.restoreState()


def _flowables(blocks, width: float, styles, fonts, *, nested: bool = False):
    """reportlab flowables for a page's blocks, ``width`` points wide."""
    from reportlab.lib import colors
    from reportlab.platypus import Flowable, Image, KeepTogether, Paragraph, Spacer, TableStyle
    from reportlab.platypus import Table as RLTable

    class _DrawingFlowable(Flowable):
        def __init__(self, canvas, scale):
            super().__init__()
            self.canvas_, self.scale = canvas, scale
            self.width, self.height = canvas.width * scale, canvas.height * scale

        def wrap(self, available_width, available_height):
            return self.width, self.height

        def draw(self):
            self.canv.saveState()
            self.canvas_.replay(_Pen(self.canv, 0.0, self.height, self.scale, fonts))
            self.canv.restoreState()

    out = []
    for block in blocks:
        if isinstance(block, Text):
            out.append(Paragraph(_escape(block.text), styles[block.style]))
        elif isinstance(block, Table):
            parts = []
            if block.title:
                parts.append(Paragraph(_escape(block.title), styles["tabletitle"]))
            header_rows = 1 + (1 if block.spans else 0)
            data = []
            if block.spans:
                row = [""] * len(block.columns)
                for label, first, _count in block.spans:
                    row[first] = label
                data.append(row)
            data.append(list(block.columns))
            if block.wrap_columns:
                from reportlab.lib.styles import ParagraphStyle

                cell = ParagraphStyle("cell", fontName=fonts["regular"], fontSize=block.font_size,
                                      leading=block.font_size * 1.25, textColor=colors.HexColor(INK))
                heading = ParagraphStyle("cellheading", parent=cell, fontName=fonts["bold"])
                data.extend([Paragraph(_escape(c), heading if j in block.section_rows else cell)
                             if k in block.wrap_columns else c for k, c in enumerate(r)]
                            for j, r in enumerate(block.rows))
            else:
                data.extend(list(r) for r in block.rows)
            total = width * block.width_fraction
            shares = block.widths or (1.0,) * len(block.columns)
            widths = [total * s / sum(shares) for s in shares]
            table = RLTable(data, colWidths=widths, repeatRows=header_rows,
                            rowHeights=None if block.row_height is None else
                            [block.font_size * 1.6] * header_rows + [block.row_height] * len(block.rows),
                            hAlign="LEFT")
            size = block.font_size
            style = [("FONT", (0, 0), (-1, -1), fonts["regular"], size),
                     ("FONT", (0, 0), (-1, header_rows - 1), fonts["bold"], size),
                     ("TEXTCOLOR", (0, 0), (-1, -1), colors.HexColor(INK)),
                     ("ALIGN", (0, 0), (-1, -1), "RIGHT"),
                     ("ALIGN", (0, 0), (block.left_columns - 1, -1), "LEFT"),
                     ("ALIGN", (0, 0), (-1, header_rows - 1), "CENTER"),
                     ("VALIGN", (0, 0), (-1, -1), "MIDDLE"),
                     ("TOPPADDING", (0, 0), (-1, -1), 0.3 if block.compact else 1.2),
                     ("BOTTOMPADDING", (0, 0), (-1, -1), 0.8 if block.compact else 1.6),
                     ("LEFTPADDING", (0, 0), (-1, -1), 2.5), ("RIGHTPADDING", (0, 0), (-1, -1), 2.5),
                     ("LINEBELOW", (0, header_rows - 1), (-1, header_rows - 1), 0.8, colors.HexColor(INK)),
                     ("LINEBELOW", (0, -1), (-1, -1), 0.8, colors.HexColor(INK)),
                     ("LINEABOVE", (0, 0), (-1, 0), 0.8, colors.HexColor(INK)),
                     ("BACKGROUND", (0, 0), (-1, header_rows - 1), colors.HexColor(SHADE))]
            for _label, first, count in block.spans:
                style.append(("SPAN", (first, 0), (first + count - 1, 0)))
                style.append(("LINEBEFORE", (first, 0), (first, -1), 0.4, colors.HexColor(RULE)))
            if block.row_height is not None:  # a blank form: every cell boxed, to be written in
                style.append(("GRID", (0, 0), (-1, -1), 0.4, colors.HexColor(RULE)))
            for r in block.section_rows:
                style += [("SPAN", (0, header_rows + r), (-1, header_rows + r)),
                          ("FONT", (0, header_rows + r), (-1, header_rows + r), fonts["bold"], size),
                          ("BACKGROUND", (0, header_rows + r), (-1, header_rows + r), colors.HexColor(SHADE))]
            if block.shade_every:
                for k in range(0, len(block.rows), 2 * block.shade_every):
                    for j in range(k + block.shade_every, min(k + 2 * block.shade_every, len(block.rows))):
                        style.append(("BACKGROUND", (0, header_rows + j), (-1, header_rows + j),
                                      colors.HexColor("#f6f7fa")))
            table.setStyle(TableStyle(style))
            parts.append(table)
            if nested:  # inside a side-by-side cell: no page breaking there
                out.extend(parts)
            elif len(block.rows) < 40:  # a short table stays on one page with its title
                out.append(KeepTogether(parts))
            else:
                out.extend(parts)
        elif isinstance(block, Picture):
            import io

            from reportlab.lib.utils import ImageReader

            reader = ImageReader(io.BytesIO(block.png))
            w, h = reader.getSize()
            out.append(Image(io.BytesIO(block.png), width=block.width_pt, height=block.width_pt * h / w))
        elif isinstance(block, Drawing):
            out.append(_DrawingFlowable(block.canvas, block.scale))
        elif isinstance(block, Side):
            shares = block.shares or (1.0,) * len(block.blocks)
            cells, widths = [], []
            for part, share in zip(block.blocks, shares):
                cell_width = width * share / sum(shares)
                inner = part if isinstance(part, tuple) else (part,)
                cells.append(_flowables(inner, cell_width - 8, styles, fonts, nested=True))
                widths.append(cell_width)
            holder = RLTable([cells], colWidths=widths, hAlign="LEFT")
            holder.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0),
                                        ("RIGHTPADDING", (0, 0), (-1, -1), 8)]))
            out.append(holder)
        else:
            raise NavredError(f"a page block navred cannot print: {type(block).__name__}")
        out.append(Spacer(1, 5))
    return out


def _escape(text: str) -> str:
    from xml.sax.saxutils import escape

    return escape(keep_angles_whole(text)).replace("\n", "<br/>")


def pdf_bytes(document: Document, *, made: _dt.date | None = None) -> bytes:
    """The document laid out as a PDF (A4; each page portrait or landscape), as bytes."""
    import io

    from reportlab.lib import colors
    from reportlab.lib.pagesizes import A4, landscape
    from reportlab.lib.styles import ParagraphStyle
    from reportlab.platypus import BaseDocTemplate, Frame, NextPageTemplate, PageBreak, PageTemplate

    from .. import __version__

    fonts = _register_fonts()
    made = made or _dt.date.today()
    ink = colors.HexColor(INK)
    styles = {
        "heading": ParagraphStyle("heading", fontName=fonts["bold"], fontSize=13, leading=16, textColor=ink,
                                  spaceAfter=4),
        "subheading": ParagraphStyle("subheading", fontName=fonts["bold"], fontSize=9.5, leading=12, textColor=ink,
                                     spaceBefore=3, spaceAfter=2),
        "tabletitle": ParagraphStyle("tabletitle", fontName=fonts["bold"], fontSize=8, leading=10, textColor=ink,
                                     spaceAfter=2),
        "body": ParagraphStyle("body", fontName=fonts["regular"], fontSize=8, leading=10.4, textColor=ink),
        "small": ParagraphStyle("small", fontName=fonts["regular"], fontSize=6.8, leading=8.6, textColor=ink),
        "mono": ParagraphStyle("mono", fontName=fonts["mono"], fontSize=7.6, leading=9.6, textColor=ink),
    }

    def heading(pdf, doc):
        from reportlab.lib.utils import simpleSplit

        pdf.saveState()
        width, height = pdf._pagesize
        inner = width - 2 * MARGIN_PT
        pdf.setFillColor(ink)
        pdf.setFont(fonts["bold"], 8)
        pdf.drawString(MARGIN_PT, height - 20, f"{document.title}   ·   {document.dates_label} {document.valid_for}")
        pdf.drawRightString(width - MARGIN_PT, height - 20, f"page {doc.page}")
        y = height - 28.5
        # the provenance and the caution are wrapped, never cut: two lines each at most on A4
        for text, font in ((document.provenance, fonts["regular"]), (document.caution, fonts["bold"])):
            pdf.setFont(font, 6.2)
            for line in simpleSplit(text, font, 6.2, inner):
                pdf.drawString(MARGIN_PT, y, line)
                y -= 7.4
        pdf.setStrokeColor(ink)
        pdf.setLineWidth(0.6)
        pdf.line(MARGIN_PT, y + 3.4, width - MARGIN_PT, y + 3.4)
        pdf.setFont(fonts["regular"], 6.2)
        pdf.drawString(MARGIN_PT, 14, f"made by navred {__version__} on {made.isoformat()}")
        pdf.drawRightString(width - MARGIN_PT, 14, f"{document.title}   ·   page {doc.page}")
        pdf.restoreState()

    templates = []
    for name, size in (("portrait", A4), ("landscape", landscape(A4))):
        frame = Frame(MARGIN_PT, MARGIN_PT + FOOT_PT - 10, size[0] - 2 * MARGIN_PT,
                      size[1] - 2 * MARGIN_PT - HEAD_PT - FOOT_PT + 22, id=name, leftPadding=0, rightPadding=0,
                      topPadding=0, bottomPadding=0)
        templates.append(PageTemplate(id=name, frames=[frame], onPage=heading, pagesize=size))
    buffer = io.BytesIO()
    doc = BaseDocTemplate(buffer, pagesize=A4, title=document.title, author=f"navred {__version__}",
                          subject=document.valid_for, creator=f"navred {__version__}")
    doc.addPageTemplates(templates)
    story = []
    if not document.pages:
        raise NavredError("nothing to print: the document has no page")
    for k, page in enumerate(document.pages):
        orientation = "landscape" if page.landscape else "portrait"
        width = (landscape(A4)[0] if page.landscape else A4[0]) - 2 * MARGIN_PT
        if k == 0:
            if page.landscape:
                raise NavredError("the first page of a document is portrait")
        else:
            story.append(NextPageTemplate(orientation))
            story.append(PageBreak())
        story.extend(_flowables(((Text(page.title, "heading"),) if page.title else ()) + tuple(page.blocks), width,
                                styles, fonts))
    doc.build(story)
    return buffer.getvalue()


def write_pdf(document: Document, path: str | Path, *, inputs=()) -> Path:
    """The document as a PDF file, written whole or not at all."""
    data = pdf_bytes(document)
    return atomic_write(path, lambda p: Path(p).write_bytes(data), inputs=inputs)


__all__ = ["Text", "Table", "Picture", "Drawing", "Side", "Page", "Document", "table_csv", "write_tables",
           "pdf_bytes", "write_pdf"]
