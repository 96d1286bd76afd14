"""A position printed on the paper or a picture keeps together on its line: a hemisphere letter never wraps onto
a line of its own, nor the minutes away from their degrees (the trial's printed paper showed an 'N' alone). The
layout is reportlab's (the PDF writer navred uses) and pypdf reads the text back."""

from __future__ import annotations

import io

from navred.angles import keep_angles_whole
from navred.figures.drawing import wrap_text
from navred.io.printed import Document, Page, Table, pdf_bytes

POSITION = "departure 44° 30.0′ N 012° 00.0′ W, course 235° at 6.5 kn, then 43° 55.2′ N 013° 10.4′ W"


def test_the_spaces_inside_an_angle_are_no_break_spaces():
    assert keep_angles_whole("44° 30.0′ N") == "44°\u00a030.0′\u00a0N"
    assert keep_angles_whole("17 S and 45 E") == "17\u00a0S and 45\u00a0E"
    assert keep_angles_whole("Sun Noon") == "Sun Noon"  # no angle: unchanged


def test_a_picture_note_wrapped_narrow_keeps_each_position_whole():
    lines = wrap_text(POSITION, 8, 50)
    assert "44° 30.0′ N" in lines and "43° 55.2′ N" in lines
    assert not any(line.strip() in ("N", "S", "E", "W") or line.startswith(("N ", "W ", "W,")) for line in lines)


def test_a_printed_table_cell_wrapped_narrow_keeps_each_position_whole():
    from pypdf import PdfReader

    table = Table(("when", "what"), (("0800", POSITION),), widths=(0.2, 1.0), width_fraction=0.2, wrap_columns=(1,))
    document = Document("test", "2026-12-04", "made for a test", "CAUTION: a test", (Page("A page", (table,)),))
    text = PdfReader(io.BytesIO(pdf_bytes(document))).pages[0].extract_text().replace("\u00a0", " ")
    lines = [line.strip() for line in text.splitlines()]
    assert not any(line in ("N", "S", "E", "W") or line.startswith(("N ", "W ", "W,")) for line in lines), lines
    assert any("44° 30.0′ N" in line for line in lines) and any("013° 10.4′ W" in line for line in lines)
