"""The printed marking: each cadet's sight book as pages of one PDF (the printed-page model of
:mod:`navred.io.printed`).

Edge code. For each cadet, a first page with their progress over the voyage (day by day), their
personal error against the ship's track when it was given, their fixes, and what to look at again
in words; then every working laid out down the page as it was worked: each line given, what it
should be and the verdict, the probable cause of a wrong line, what the slip costs, what should
have been noticed, and the instructor's remarks. Lines are named as a sight book names them,
sources by their file's name; every page carries the caution. Built from a
:class:`navred.jobs.workings.MarkingReport`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import NavredError
from .cautions import CAUTION
from .markingwords import (
    NO_CATALOGUED_CAUSE,
    NOTICE_WORKING,
    RIGHT_WORKING,
    cost_text,
    describe,
    difference_text,
    where_text,
)
from .printed import Document, Page, Table, Text, pdf_bytes
from .workings import source_name

#: The columns of a working's table.
LINES_COLUMNS = ("line", "you wrote", "it should be", "verdict")


def _front(report, cadet: str, part) -> list:
    right = int((part.verdict == RIGHT_WORKING).sum())
    noticed = int((part.verdict == NOTICE_WORKING).sum())
    sources = sorted({source_name(s) for s in part.source})
    blocks: list = [Text(f"{len(part)} working{'s' if len(part) != 1 else ''} marked, {right} with no mistake"
                         + (f", {noticed} with something that should have been noticed" if noticed else "")
                         + f". From {', '.join(sources)}.")]
    if report.exam:
        blocks.append(Text("Exam mode: navred's fix and any reference position are left out.", "small"))
    progress = report.progress[report.progress.cadet == cadet] if len(report.progress) else report.progress
    if len(progress):
        blocks.append(Table(("date", "workings", "no mistake", "noticed", "mistakes"),
                            tuple((r["date"], str(r["workings"]), f"{r['no_mistake']} ({r['no_mistake_pct']:.0f} %)",
                                   str(r["noticed"]), r["mistakes"] or "none")
                                  for r in progress.to_dict("records")),
                            title="Progress over the voyage (by the ship's date)", widths=(1.0, 0.8, 1.0, 0.7, 6.0),
                            left_columns=5, wrap_columns=(4,)))
    personal = report.personal[report.personal.cadet == cadet] if len(report.personal) else report.personal
    if len(personal):
        p = personal.iloc[0]
        blocks += [Text("Against the ship's track", "subheading"),
                   Text(f"Personal error {p['personal_error_arcmin']:+.2f}′ ± {p['interval_95_arcmin']:.2f}′ (95 %), "
                        f"scatter {p['scatter_arcmin']:.2f}′, over {int(p['sights'])} sights, {int(p['blunders'])} of "
                        f"them blunders (over 5′, left out of the mean); trend {p['trend_arcmin_per_day']:+.3f}′ a day. "
                        "The error is Ho − Hc at the ship's position from the track: it covers the sextant, the "
                        "horizon and the observer, not the working.")]
    fixes = report.fixes[report.fixes.cadet == cadet] if len(report.fixes) else report.fixes
    if len(fixes):
        blocks.append(Text("Your rounds and fixes", "subheading"))
        for f in fixes.to_dict("records"):
            if f["note"]:
                words = f"{f['fix_group']}: {f['note']}."
            else:
                words = f"{f['fix_group']}: your lines cross at {f['fix_from_your_lines']}"
                if f["your_plotted_fix"]:
                    words += f"; you plotted {f['your_plotted_fix']}, {f['plotted_apart_nm']:.1f} nm from it"
                if not report.exam and isinstance(f.get("navred_fix"), str) and f["navred_fix"]:
                    words += f"; navred's fix of the same sights {f['navred_fix']}, {f['navred_apart_nm']:.1f} nm off"
                words += "."
            blocks.append(Text(words))
    flagged = part[part.verdict != RIGHT_WORKING]
    if len(flagged):
        blocks.append(Text("What to look at again", "subheading"))
        blocks += [Text(describe(r)) for r in flagged.to_dict("records")]
    return blocks


def _working(r: dict, lines) -> list:
    verdict = "every line right" if r["verdict"] == RIGHT_WORKING else r["verdict"]
    rows, notes = [], []
    for x in lines.to_dict("records"):
        shown = x["verdict"]
        if shown == "wrong":
            off = difference_text(x["line"], x["difference"])
            shown = "missing" if not x["given"] else f"wrong ({off})" if off else "wrong"
            notes.append(f"{x['line_name']}: " + (f"probable cause: {x['cause']}." if x["cause"] else
                                                   NO_CATALOGUED_CAUSE))
        rows.append((x["line_name"], x["given"], x["expected"] if x["verdict"] != "right" else "", shown))
    # the working's heading is its table's title, kept on the page with it
    where = where_text(r)
    blocks: list = [Table(LINES_COLUMNS, tuple(rows), title=f"{where[0].upper()}{where[1:]}: {r['body']}, {r['utc']} "
                          f"UTC; {r['way']}; {verdict}", widths=(3.2, 2.2, 2.2, 2.6), left_columns=4, compact=True,
                          wrap_columns=(0, 1, 2, 3))]
    blocks += [Text(note) for note in notes]
    cost = cost_text(r["method"], r.get("cost_nm", np.nan), r.get("cost_deg", np.nan), r["first_wrong_line"])
    if cost:
        blocks.append(Text(f"Left uncorrected, {cost}."))
    if r["noticed"]:
        blocks.append(Text(f"Should have been noticed: {r['noticed']}."))
    if r["remarks"]:
        blocks.append(Text(f"Instructor's remarks: {r['remarks']}"))
    return blocks


def marking_document(report) -> Document:
    """Every cadet's sight book as a printed document: their front page, then their workings (see the module)."""
    pages = []
    for cadet, part in report.rows.groupby("cadet", sort=True):
        pages.append(Page(f"Sight book: {cadet}", tuple(_front(report, cadet, part))))
        lines = report.lines[report.lines.cadet == cadet]
        blocks = []
        for r in part.to_dict("records"):
            blocks += _working(r, lines[(lines.source == r["source"]) & (lines.row == r["row"])])
        pages.append(Page(f"Sight book: {cadet}, every working", tuple(blocks)))
    if not pages:
        raise NavredError("no working was marked: nothing to print")
    dates = sorted(set(report.rows.date)) if len(report.rows) else []
    span = f"{dates[0]} to {dates[-1]}" if len(dates) > 1 else (dates[0] if dates else "")
    provenance = ("navred mark: an aid to instruction; the examiner's judgement, the official almanac and tables, "
                  f"and licensed practice decide. Workings: {report.provenance.get('workings', '')}.")
    return Document("navred sight books", span, provenance, CAUTION, tuple(pages), dates_label="workings of")


#: What each blank form is called on its page, by its sight-book page.
FORM_TITLES = {
    "Sun": "the Sun, by the intercept method", "Moon": "the Moon, by the intercept method",
    "Stars": "stars, by the intercept method", "Planets": "planets, by the intercept method",
    "Noon": "latitude by the noon Sun (meridian or ex-meridian altitude)", "Polaris": "latitude by Polaris",
    "Compass": "a compass check, by amplitude or azimuth",
}
#: Workings side by side on a blank form.
FORM_WORKINGS = 3
#: The height (points) the two halves of a blank form may fill on a landscape A4 page below its title and note.
FORM_HEIGHT_PT = 405.0


def blank_form_page(title: str, note: str = "") -> Page:
    """A sight-book page printed blank, for a pencil: every line of one working
    (:func:`navred.io.markingbook.block_lines`, the template's own) down the page, in two halves side by side,
    with :data:`FORM_WORKINGS` workings across; the method and body the page fills in already are printed.
    ``note`` goes above it (how the paper it is printed with gives each line)."""
    from .markingbook import block_lines
    from .printed import Side
    from .sightbook import PAGES

    lines = block_lines(PAGES[title])
    # the halves meet at the heading of a section, where they are most nearly equal
    starts = [k for k, line in enumerate(lines) if line.kind == "section"]
    split = min(starts, key=lambda k: max(k, len(lines) - k))
    halves = (lines[:split], lines[split:])
    rows = max(len(h) for h in halves)
    height = min(19.0, FORM_HEIGHT_PT / (rows + 1))
    columns = ("Line",) + tuple(f"Working {k}" for k in range(1, FORM_WORKINGS + 1))
    tables = tuple(Table(columns, tuple((line.label,) + (line.prefilled,) * FORM_WORKINGS for line in half),
                         widths=(1.9,) + (1.0,) * FORM_WORKINGS, font_size=6.9, row_height=height, left_columns=4,
                         wrap_columns=(0,), compact=True,
                         section_rows=tuple(k for k, line in enumerate(half) if line.kind == "section"))
                   for half in halves)
    blocks = (Text(note, "small"),) if note else ()
    return Page(f"Hand working: {FORM_TITLES[title]}", blocks + (Side(tables),), landscape=True)


def blank_sight_book_document() -> Document:
    """The empty sight book as printed pages: a blank form of each of its pages (:func:`blank_form_page`)."""
    from .. import __version__
    from .sightbook import PAGES

    pages = tuple(blank_form_page(title, f"The lines of the sight book's {title} page, {FORM_WORKINGS} workings side "
                                         "by side, in the order of a hand reduction. Type a working into the sight "
                                         "book (navred mark --template FILE.xlsx) to have it marked; docs/marking.md "
                                         "gives the forms each line accepts.")
                  for title in PAGES)
    return Document("navred sight book (blank)", "any date",
                    f"navred {__version__}: the sight book's pages, for hand workings marked by navred mark", CAUTION,
                    (Page("A sight book to fill by hand", (Text(
                        "A page for each way of working: the intercept method for the Sun, the Moon, stars and "
                        "planets, latitude by the noon Sun and by Polaris, and the compass check. Each has the lines "
                        "of the spreadsheet sight book in the same order and words."),)),) + pages,
                    dates_label="for")


def write_blank_sight_book(path: str | Path) -> Path:
    """The empty sight book as a PDF to print (:func:`blank_sight_book_document`)."""
    from .output import atomic_write

    data = pdf_bytes(blank_sight_book_document())
    return atomic_write(path, lambda p: Path(p).write_bytes(data))


def write_marking_pdf(report, path: str | Path) -> Path:
    """Every cadet's sight book, printed, as one PDF."""
    from .output import atomic_write

    data = pdf_bytes(marking_document(report))
    return atomic_write(path, lambda p: Path(p).write_bytes(data), inputs=report.workings.log.sources)


__all__ = ["marking_document", "write_marking_pdf", "blank_form_page", "blank_sight_book_document", "write_blank_sight_book",
           "FORM_TITLES", "FORM_WORKINGS"]
