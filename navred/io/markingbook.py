"""The marking workbook and the empty sight book: what `navred mark -o marks.xlsx` and `--template` write.

Edge code. The workbook of a marked class: About (the safety caution, what was read, how each line
is judged), Class (per cadet), Mistakes (by cause and line), Fixes (each group's fix from the
cadet's own lines beside the fix plotted), Progress (each cadet day by day), Personal error (against
the ship's track, when given), a Marks sheet per cadet (each working's verdict, then every line
given, with the instructor's remarks), and Not read. Every column is labelled in words; text from a
working is stored as text, never as a formula. The template is the sight book of
:mod:`navred.io.sightbook`, a page per method.
"""

from __future__ import annotations

import re
from pathlib import Path

import pandas as pd

from ..marking import LINE_NAMES, LINES, TOLERANCES, UNITS
from .labels import LABELS
from .labels import labelled as labelled_columns
from .sightbook import (
    BLOCKS_PER_PAGE,
    COMPASS_SIGHT_LINES,
    PAGE_HEADER,
    PAGES,
    REMARKS_LINE,
    SIGHT_LINES,
)
from .workings import WORKED_FORMS

#: The words each table's column is shown under on a sheet (the library's tables keep snake_case names).
#: the marking's columns in words: the one table of display labels (navred.io.labels)
SHEET_LABELS = LABELS


def labelled(frame: pd.DataFrame, drop: tuple[str, ...] = ()) -> pd.DataFrame:
    """A table with its columns in words (:data:`SHEET_LABELS`), the identifier columns left out."""
    return labelled_columns(frame.drop(columns=[c for c in drop if c in frame.columns]))


def _sheet_name(name: str, taken: set[str]) -> str:
    base = re.sub(r"[\[\]:*?/\\']", " ", str(name)).strip()[:24] or "cadet"
    candidate, k = f"Marks {base}", 2
    while candidate.lower() in taken:
        candidate, k = f"Marks {base[:20]} {k}", k + 1
    taken.add(candidate.lower())
    return candidate


def write_marking_workbook(report, path: str | Path) -> Path:
    """The marking of a class (a :class:`navred.jobs.workings.MarkingReport`) as a workbook (see the module)."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    from .output import atomic_write
    from .workbook import fit_pages, front_sheet, new_tables, write_table_sheet, write_text_safe

    book = Workbook()
    tables = new_tables(book)
    about = front_sheet(book, "About", "navred marking of hand workings")
    line = 5
    for key, value in report.provenance.items():
        write_text_safe(about.cell(row=line, column=1), key)
        write_text_safe(about.cell(row=line, column=2), value)
        line += 1
    line += 1
    about.cell(row=line, column=1, value="How each line is judged").font = Font(bold=True)
    for name in LINES:
        line += 1
        _, what, _ = WORKED_FORMS[name]
        about.cell(row=line, column=1, value=LINE_NAMES[name])
        unit = UNITS[name] if UNITS[name] in ("′", "°", "″") else f" {UNITS[name]}"
        about.cell(row=line, column=2, value=f"{what}: right within {TOLERANCES[name]:g}{unit} of the exact value "
                                             "or of the printed tables' (docs/marking.md)")
    about.column_dimensions["A"].width = 38
    about.column_dimensions["B"].width = 110
    write_table_sheet(tables, book.create_sheet("Class"), labelled(report.by_cadet))
    write_table_sheet(tables, book.create_sheet("Mistakes"), labelled(report.by_cause),
                      wide={"cadets": 60, "probable cause": 60})
    write_table_sheet(tables, book.create_sheet("Fixes"), labelled(report.fixes), wide={"note": 40})
    write_table_sheet(tables, book.create_sheet("Progress"), labelled(report.progress), wide={"mistakes": 80})
    taken = {"about", "class", "mistakes", "fixes", "progress", "not read", "personal error"}
    if len(report.personal):
        write_table_sheet(tables, book.create_sheet("Personal error"), labelled(report.personal))
    for cadet, part in report.lines.groupby("cadet", sort=True):
        sheet = book.create_sheet(_sheet_name(cadet, taken))
        rows = report.rows[report.rows.cadet == cadet]
        shown = labelled(rows, drop=("cadet", "first_wrong_line", "method"))
        write_table_sheet(tables, sheet, shown, wide={"probable cause": 50, "should have been noticed": 60,
                                                      "instructor's remarks": 40, "worked": 36})
        write_table_sheet(tables, sheet, labelled(part, drop=("cadet", "line")), first_row=len(rows) + 4,
                          wide={"probable cause": 50})
    rejected = report.rejected
    if len(report.workings.unreadable):
        unreadable = report.workings.unreadable.assign(
            column=lambda f: [LINE_NAMES.get(x, x) for x in f.line]).drop(columns=["line"])
        rejected = pd.concat([rejected, unreadable], ignore_index=True)
    if len(rejected):
        from .workings import source_name

        rejected = rejected.assign(source=[source_name(s) for s in rejected.source.astype(str)])
    write_table_sheet(tables, book.create_sheet("Not read"), labelled(rejected), wide={"reason": 90})
    fit_pages(book, tables)
    return atomic_write(path, tables.save, inputs=report.workings.log.sources)


def _template_lists(book) -> dict:
    """The hidden sheet of words to choose from (bodies, limbs, horizons, methods) and the list rule of each."""

    from ..stars import known_bodies
    from ..vocabulary import HORIZONS, LIMBS

    lists = book.create_sheet("Lists")
    words = {"body": known_bodies(), "limb": sorted({v for v in LIMBS.values() if v}),
             "horizon": sorted(set(HORIZONS.values())),
             "method": ["intercept", "meridian", "ex-meridian", "polaris", "amplitude", "azimuth"]}
    for column, values in enumerate(words.values(), start=1):
        for k, word in enumerate(values, start=1):
            lists.cell(row=k, column=column, value=word)
    lists.sheet_state = "hidden"
    return {name: (letter, len(values)) for (name, values), letter in zip(words.items(), "ABCD")}


def _template_page(book, title: str, method: str, sections, own: dict, lists: dict) -> None:
    """A page of the sight book: :data:`BLOCKS_PER_PAGE` workings down the sheet, one printed page each."""
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.worksheet.datavalidation import DataValidation
    from openpyxl.worksheet.pagebreak import Break

    from .workbook import header_row

    grey = Font(italic=True, color="666666", size=9)
    shade = PatternFill("solid", fgColor="EEF2F7")
    sheet = book.create_sheet(title)
    header_row(sheet, 1, list(PAGE_HEADER))
    for letter, width in (("A", 44), ("B", 26), ("C", 62)):
        sheet.column_dimensions[letter].width = width
    rules = {name: DataValidation(type="list", formula1=f"=Lists!${letter}$1:${letter}${count}", allow_blank=True,
                                  showErrorMessage=True, errorTitle="navred", error=f"choose a {name} from the list")
             for name, (letter, count) in lists.items()}
    # a compass check takes no altitude; Polaris has no limb
    left_out = {"amplitude": ("limb", "hs", "index_error", "eye_height_m", "horizon"), "polaris": ("limb",)}
    sight = [line for line in SIGHT_LINES if line[1] not in left_out.get(method, ())] + (
        list(COMPASS_SIGHT_LINES) if method == "amplitude" else [])
    row = 2
    for block in range(1, BLOCKS_PER_PAGE + 1):
        sheet.cell(row=row, column=1, value=f"Working {block}").font = Font(bold=True, size=12)
        row += 1
        for label, key, note in sight:
            sheet.cell(row=row, column=1, value=label)
            sheet.cell(row=row, column=3, value=note).font = grey
            prefilled = {"method": method, "body": "Polaris" if method == "polaris" else None}.get(key)
            if prefilled:
                sheet.cell(row=row, column=2, value=prefilled)
            if key in rules:
                rules[key].add(f"B{row}")
            row += 1
        for section, keys in sections:
            sheet.cell(row=row, column=1, value=section).font = Font(bold=True)
            for k in (1, 2, 3):
                sheet.cell(row=row, column=k).fill = shade
            row += 1
            for key in keys:
                _, what, example = WORKED_FORMS[key]
                sheet.cell(row=row, column=1, value=own.get(key, LINE_NAMES[key]))
                sheet.cell(row=row, column=3, value=f"{what}: {example}").font = grey
                row += 1
        sheet.cell(row=row, column=1, value=REMARKS_LINE[0]).font = Font(bold=True)
        sheet.cell(row=row, column=3, value=REMARKS_LINE[2]).font = grey
        sheet.cell(row=row, column=2).alignment = Alignment(wrap_text=True, vertical="top")
        sheet.row_dimensions[row].height = 45
        row += 2
        sheet.row_breaks.append(Break(id=row - 1))
    for rule in rules.values():
        sheet.add_data_validation(rule)
    sheet.freeze_panes = "A2"


#: How to fill the sight book in: its instructions sheet, line by line (the caution follows).
TEMPLATE_INSTRUCTIONS = (
    "Work each sight in a block of its page, down the page, as you would by hand: the sight, the time to UTC, "
    "the almanac, Hs to Ho, then the method's own lines. Fill what you wrote in your working; leave the rest.",
    "Intercept: from an assumed position with the tables (AP, LHA, tabulated Hc, d and Z) or from the DR with a "
    "calculator (write the DR as the position). Required: Ho, Zn and the intercept.",
    "Noon: the latitude by meridian altitude (method meridian), or by ex-meridian (method ex-meridian, with the "
    "LHA, a and the reduction). Required: Ho and the latitude.",
    "Polaris: LHA Aries and the Polaris correction (a0 + a1 + a2 − 1°). Required: Ho and the latitude.",
    "Compass: by amplitude at rising or setting (method amplitude) or by azimuth (method azimuth, with the LHA); "
    "the compass bearing and the variation. Required: the compass error.",
    "The Moon: one combined main correction, or the two-part table (the main correction, then the HP correction, "
    "and −30′ for the upper limb).",
    "The fix you plotted: on the last sight of the round, with the same fix group on every sight of it.",
    "The instructor writes remarks under each working; navred keeps them when it marks the book again.",
    "Each line's forms are beside it; docs/marking.md explains every line and how it is judged.",
)


def write_template(path: str | Path) -> Path:
    """An empty sight book: a page per method, each with :data:`BLOCKS_PER_PAGE` workings laid out down the
    page in the order of a hand reduction (one printed page each), lists to choose the body, limb, horizon
    and method from, and a sheet of instructions with the safety caution."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    from .output import atomic_write
    from .workbook import SAFETY, fit_pages

    book = Workbook()
    book.remove(book.active)
    lists = _template_lists(book)
    for title, (method, sections, own) in PAGES.items():
        _template_page(book, title, method, sections, own, lists)
    help_sheet = book.create_sheet("How to fill it in")
    help_sheet["A1"] = "A sight book for navred mark: a page per method, one working per block."
    help_sheet["A1"].font = Font(bold=True, size=13)
    for k, text in enumerate(TEMPLATE_INSTRUCTIONS, start=3):
        help_sheet.cell(row=k, column=1, value=text).alignment = Alignment(wrap_text=True)
    help_sheet.cell(row=len(TEMPLATE_INSTRUCTIONS) + 4, column=1, value=SAFETY).alignment = Alignment(wrap_text=True)
    help_sheet.column_dimensions["A"].width = 120
    book.move_sheet("Lists", offset=len(book.sheetnames))
    fit_pages(book)
    return atomic_write(path, book.save)


__all__ = ["write_marking_workbook", "write_template", "labelled", "SHEET_LABELS"]
