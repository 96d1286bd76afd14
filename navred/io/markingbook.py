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
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from ..marking import LINE_NAMES, LINES, TOLERANCES, UNITS
from .markingwords import difference_text
from .sightbook import (
    BLOCKS_PER_PAGE,
    COMPASS_SIGHT_LINES,
    HINTS,
    PAGE_HEADER,
    PAGES,
    REMARKS_LINE,
    SIGHT_LINES,
    SightBookPage,
)
from .workings import WORKED_FORMS

#: The words each table's column is shown under on a sheet (the library's tables keep snake_case names).
SHEET_LABELS = {
    "source": "file", "row": "row", "cadet": "cadet", "body": "body", "utc": "UTC", "method": "method", "way": "worked",
    "verdict": "verdict", "first_wrong_line_name": "first wrong line", "cause": "probable cause",
    "given": "you wrote", "expected": "it should be", "difference": "out by", "unit": "unit",
    "cost_nm": "the slip costs (nm)", "cost_deg": "line turned, or course out (°)",
    "noticed": "should have been noticed",
    "remarks": "instructor's remarks", "lines_given": "lines given", "lines_wrong": "lines wrong",
    "error_vs_track_arcmin": "error against the track (′)", "line_name": "line", "sheet_row": "sheet row",
    "expected_from_tables": "from the tables", "tolerance": "right within", "sights": "sights",
    "no_mistake": "no mistake", "no_mistake_pct": "no mistake (%)", "commonest_cause": "commonest cause",
    "cadets": "cadets", "fix_group": "round", "lines": "lines", "fix_from_your_lines": "fix from your lines",
    "fix_lat_deg": "fix lat (deg)", "fix_lon_deg": "fix lon (deg)", "your_plotted_fix": "your plotted fix",
    "plotted_apart_nm": "plotted fix off (nm)", "from_dr_nm": "from the DR (nm)", "note": "note",
    "navred_fix": "navred's fix", "navred_fix_lat_deg": "navred's fix lat (deg)",
    "navred_fix_lon_deg": "navred's fix lon (deg)", "navred_apart_nm": "navred's fix off (nm)",
    "reference_position": "reference position", "date": "ship's date", "workings": "workings", "mistakes": "mistakes",
    "column": "column", "value": "value", "reason": "reason", "line": "line",
}


def labelled(frame: pd.DataFrame, drop: tuple[str, ...] = ()) -> pd.DataFrame:
    """A table with its columns in words (:data:`SHEET_LABELS`), the identifier columns left out."""
    kept = frame.drop(columns=[c for c in drop if c in frame.columns])
    return kept.rename(columns={c: SHEET_LABELS.get(c, c) for c in kept.columns})


def _sheet_name(name: str, taken: set[str]) -> str:
    base = re.sub(r"[\[\]:*?/\\']", " ", str(name)).strip()[:24] or "cadet"
    candidate, k = f"Marks {base}", 2
    while candidate.lower() in taken:
        candidate, k = f"Marks {base[:20]} {k}", k + 1
    taken.add(candidate.lower())
    return candidate


def _unit(unit: str) -> str:
    return unit if unit in ("′", "°", "″") else f" {unit}"


def _out_by(frame: pd.DataFrame, line_column: str) -> pd.DataFrame:
    """The table with its difference written in words for a reader ("+1° 32.2′", "6 h 00 min 00 s early"): a
    sheet shows it as text, the CSV keeps the number and its unit."""
    return frame.assign(difference=[difference_text(line, d) if line else ""
                                    for line, d in zip(frame[line_column], frame["difference"])])


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
        judged = ("right when named as the body bears (docs/marking.md)" if name == "bearing_worked" else
                  f"right within {TOLERANCES[name]:g}{unit} of the exact value or of the printed tables' "
                  "(docs/marking.md)")
        about.cell(row=line, column=2, value=f"{what}: {judged}")
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
        shown = labelled(_out_by(rows, "first_wrong_line"), drop=("cadet", "first_wrong_line", "method", "unit"))
        write_table_sheet(tables, sheet, shown, wide={"probable cause": 50, "should have been noticed": 60,
                                                      "instructor's remarks": 40, "worked": 36})
        lines = _out_by(part, "line").assign(tolerance=[f"{t:g}{_unit(u)}" for t, u in zip(part.tolerance, part.unit)])
        write_table_sheet(tables, sheet, labelled(lines, drop=("cadet", "line", "unit")), first_row=len(rows) + 4,
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


def hint(page: SightBookPage, key: str) -> str:
    """The note beside a line on a page: the page's own, else the sight book's (:data:`HINTS`), else the
    line's general note (:data:`navred.io.workings.WORKED_FORMS`)."""
    if key in page.hints:
        return page.hints[key]
    if key in HINTS:
        return HINTS[key]
    _, what, example = WORKED_FORMS[key]
    return f"{what}: {example}"


@dataclass(frozen=True)
class BlockLine:
    """One line of a working (a block) of a sight-book page, top to bottom: ``kind`` is 'sight' (the sight's own
    line), 'section' (a heading), 'line' (a line of the working) or 'remarks'; its label as printed, its key
    (the table form's column, '' for a heading), the note of the forms accepted beside it, and what the page
    fills in already (the method and the body)."""

    kind: str
    label: str
    key: str = ""
    note: str = ""
    prefilled: str = ""


def block_lines(page: SightBookPage) -> tuple[BlockLine, ...]:
    """The lines of one working of a sight-book page, in order: the one definition the template's sheets and the
    printed blank forms (navred paper) are both laid out from."""
    sight = [line for line in SIGHT_LINES if line[1] not in page.leaves_out] + (
        list(COMPASS_SIGHT_LINES) if page.method == "amplitude" else [])
    prefilled = {"method": page.method, "body": page.body}
    lines = [BlockLine("sight", label, key, note, prefilled.get(key, "")) for label, key, note in sight]
    for section, keys in page.sections:
        lines.append(BlockLine("section", section))
        lines += [BlockLine("line", page.labels.get(key, LINE_NAMES[key]), key, hint(page, key)) for key in keys]
    lines.append(BlockLine("remarks", *REMARKS_LINE))
    return tuple(lines)


def _template_page(book, title: str, page: SightBookPage, lists: dict) -> None:
    """A page of the sight book: :data:`BLOCKS_PER_PAGE` workings down the sheet, one printed page each, each laid
    out from :func:`block_lines`."""
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
    lines = block_lines(page)
    row = 2
    for block in range(1, BLOCKS_PER_PAGE + 1):
        sheet.cell(row=row, column=1, value=f"Working {block}").font = Font(bold=True, size=12)
        row += 1
        for line in lines:
            sheet.cell(row=row, column=1, value=line.label)
            if line.kind == "section":
                sheet.cell(row=row, column=1).font = Font(bold=True)
                for k in (1, 2, 3):
                    sheet.cell(row=row, column=k).fill = shade
                row += 1
                continue
            sheet.cell(row=row, column=3, value=line.note).font = grey
            if line.prefilled:
                sheet.cell(row=row, column=2, value=line.prefilled)
            if line.key in rules:
                rules[line.key].add(f"B{row}")
            if line.kind == "remarks":
                sheet.cell(row=row, column=1).font = Font(bold=True)
                sheet.cell(row=row, column=2).alignment = Alignment(wrap_text=True, vertical="top")
                sheet.row_dimensions[row].height = 45
                row += 1
            row += 1
        sheet.row_breaks.append(Break(id=row - 1))
    for rule in rules.values():
        sheet.add_data_validation(rule)
    sheet.freeze_panes = "A2"


#: How to fill the sight book in: its instructions sheet, line by line (the caution follows).
TEMPLATE_INSTRUCTIONS = (
    "Work each sight in a block of its page, down the page, as you would by hand: the sight, the time to UTC, "
    "the almanac, Hs to Ho, then the method's own lines. Fill what you wrote in your working; leave the rest.",
    "The intercept method has a page for each kind of body (Sun, Moon, Stars, Planets), each with only the lines "
    "that body takes: from an assumed position with the tables (AP, LHA, tabulated Hc, d and Z, and Z "
    "interpolated if you interpolate it) or from the DR with a calculator (write the DR as the position). "
    "Required: Ho, Zn and the intercept.",
    "Noon: the latitude by meridian altitude (method meridian), or by ex-meridian (method ex-meridian, with the "
    "LHA, a and the reduction); the body's bearing at meridian passage (N or S) names the zenith distance. "
    "Required: Ho and the latitude.",
    "Polaris: LHA Aries and the Polaris correction (a0 + a1 + a2 − 1°). Required: Ho and the latitude.",
    "Compass: by amplitude at rising or setting (method amplitude) or by azimuth (method azimuth, with the LHA); "
    "the compass bearing and the variation. Required: the compass error.",
    "The Moon: by its two-part table (the first correction, the HP correction, and −30′ for the upper limb), or "
    "by calculator (refraction, semi-diameter and parallax).",
    "A round: write the same words on the Round line of every sight you cross as one fix, and the fix you "
    "plotted on the round's last sight. A sight in no round is marked on its own.",
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
    for title, page in PAGES.items():
        _template_page(book, title, page, lists)
    help_sheet = book.create_sheet("How to fill it in")
    help_sheet["A1"] = ("A sight book for navred mark: a page for each way of working (the intercept method by body, noon, "
                        "Polaris, the compass check), one working per block.")
    help_sheet["A1"].font = Font(bold=True, size=13)
    for k, text in enumerate(TEMPLATE_INSTRUCTIONS, start=3):
        help_sheet.cell(row=k, column=1, value=text).alignment = Alignment(wrap_text=True)
    help_sheet.cell(row=len(TEMPLATE_INSTRUCTIONS) + 4, column=1, value=SAFETY).alignment = Alignment(wrap_text=True)
    help_sheet.column_dimensions["A"].width = 120
    book.move_sheet("Lists", offset=len(book.sheetnames))
    fit_pages(book)
    return atomic_write(path, book.save)


__all__ = ["write_marking_workbook", "write_template", "labelled", "SHEET_LABELS", "BlockLine", "block_lines"]
