"""The printed marking: each cadet's sight book as A4 pages (matplotlib figures, one PDF).

Edge code (figures). For each cadet, a first page with their progress over the voyage (day by
day), their personal error against the ship's track when it was given, their fixes and the
mistakes in words; then every working laid out down the page as it was worked: each line given,
what it should be, the verdict and the cause, what should have been noticed, what the slip
costs, and the instructor's remarks. Lines are named as a sight book names them; sources by their
file's name. Drawn from a :class:`navred.jobs.workings.MarkingReport`.
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np

from ..errors import NavredError

#: The page's margins and line heights (fractions of an A4 page).
LEFT, RIGHT, TOP, BOTTOM = 0.07, 0.93, 0.955, 0.07
LINE_STEP, WRAP = 0.0155, 118
CAUTION = ("navred marking: an aid to instruction. The examiner's judgement, the official almanac and tables, and "
           "licensed practice decide.")


class _Pages:
    """A cadet's pages, written top to bottom; a new page starts when the next piece would not fit."""

    def __init__(self, title: str):
        import matplotlib

        matplotlib.use("Agg")
        from matplotlib.figure import Figure

        from .plotting import FIX, INK

        self.Figure, self.ink, self.alert = Figure, INK, FIX
        self.title = title
        self.figures: list = []
        self.y = 0.0
        self.new_page()

    def new_page(self) -> None:
        figure = self.Figure(figsize=(8.27, 11.69), dpi=100, facecolor="white")
        figure.text(LEFT, 0.035, CAUTION, fontsize=6.5, style="italic", color=self.ink)
        self.figures.append(figure)
        self.y = TOP
        if len(self.figures) > 1:
            figure.text(LEFT, self.y, f"{self.title} (continued)", fontsize=8, color=self.ink, style="italic")
            self.y -= 0.025

    def need(self, height: float) -> None:
        if self.y - height < BOTTOM:
            self.new_page()

    def text(self, x: float, words: str, *, size: float = 8, step: float = LINE_STEP, bold: bool = False,
             alert: bool = False, wrap: int = WRAP, italic: bool = False) -> None:
        pieces = textwrap.wrap(words, wrap) or [""]
        self.need(step * len(pieces))
        for k, piece in enumerate(pieces):
            self.y -= step
            self.figures[-1].text(x + (0.02 if k else 0.0), self.y, piece, fontsize=size, color=self.alert if alert
                                  else self.ink, weight="bold" if bold else "normal", style="italic" if italic
                                  else "normal")

    def row(self, cells: list[tuple[float, str]], *, bold: bool = False, alert_from: int | None = None,
            size: float = 7.5) -> None:
        self.need(LINE_STEP)
        self.y -= LINE_STEP * 0.95
        for k, (x, words) in enumerate(cells):
            self.figures[-1].text(x, self.y, words, fontsize=size, color=self.alert if alert_from is not None and
                                  k >= alert_from else self.ink, weight="bold" if bold else "normal")

    def rule(self) -> None:
        import matplotlib

        self.y -= 0.004
        self.figures[-1].add_artist(matplotlib.lines.Line2D([LEFT, RIGHT], [self.y, self.y], color=self.ink,
                                                            linewidth=0.5))

    def gap(self, height: float = 0.012) -> None:
        self.y -= height


def _short(text: str, width: int) -> str:
    text = str(text)
    return text if len(text) <= width else text[: width - 1] + "…"


def _cadet_front(pages: _Pages, report, cadet: str, part) -> None:
    from ..io.markingwords import NOTICE_WORKING, RIGHT_WORKING, describe
    from ..io.workings import source_name

    right = int((part.verdict == RIGHT_WORKING).sum())
    noticed = int((part.verdict == NOTICE_WORKING).sum())
    pages.text(LEFT, f"Sight book: {cadet}", size=15, step=0.028, bold=True)
    sources = sorted({source_name(s) for s in part.source})
    pages.text(LEFT, f"{len(part)} working{'s' if len(part) != 1 else ''} marked, {right} with no mistake"
               + (f", {noticed} with something that should have been noticed" if noticed else "")
               + f". From {', '.join(sources)}.")
    if report.exam:
        pages.text(LEFT, "Exam mode: navred's fix and any reference position are left out.", italic=True)
    progress = report.progress[report.progress.cadet == cadet] if len(report.progress) else report.progress
    if len(progress):
        pages.gap()
        pages.text(LEFT, "Progress over the voyage", size=11, step=0.022, bold=True)
        columns = ((LEFT, "date"), (0.19, "workings"), (0.27, "no mistake"), (0.36, "noticed"), (0.44, "mistakes"))
        pages.row([(x, t) for x, t in columns], bold=True)
        pages.rule()
        for r in progress.to_dict("records"):
            pages.row([(LEFT, r["date"]), (0.19, str(r["workings"])), (0.27, f"{r['no_mistake']} ({r['no_mistake_pct']:.0f} %)"),
                       (0.36, str(r["noticed"])), (0.44, _short(r["mistakes"] or "none", 95))])
    personal = report.personal[report.personal.cadet == cadet] if len(report.personal) else report.personal
    if len(personal):
        p = personal.iloc[0]
        pages.gap()
        pages.text(LEFT, "Against the ship's track", size=11, step=0.022, bold=True)
        pages.text(LEFT, f"Personal error {p['personal error (′)']:+.2f}′ ± {p['95 % interval (′)']:.2f}′ (95 %), "
                   f"scatter {p['scatter (′)']:.2f}′, over {int(p['sights'])} sights, {int(p['blunders'])} of them "
                   f"blunders (over 5′, left out of the mean); trend {p['trend (′ per day)']:+.3f}′ a day. The error "
                   "is Ho − Hc at the ship's position from the track: it covers the sextant, the horizon and the "
                   "observer, not the working.")
    fixes = report.fixes[report.fixes.cadet == cadet] if len(report.fixes) else report.fixes
    if len(fixes):
        pages.gap()
        pages.text(LEFT, "Your fixes", size=11, step=0.022, bold=True)
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
            pages.text(LEFT, words)
    flagged = part[part.verdict != RIGHT_WORKING]
    if len(flagged):
        pages.gap()
        pages.text(LEFT, "What to look at again", size=11, step=0.022, bold=True)
        for r in flagged.to_dict("records"):
            pages.text(LEFT, describe(r), alert=r["first_wrong_line"] != "")


def _working(pages: _Pages, report, r: dict, lines) -> None:
    from ..io.markingwords import RIGHT_WORKING, cost_text, difference_text

    height = LINE_STEP * (len(lines) + 5)
    pages.need(min(height, 0.5))
    pages.gap(0.008)
    verdict = r["verdict"] if r["verdict"] != RIGHT_WORKING else "every line right"
    pages.text(LEFT, f"Row {r['row']}: {r['body']}, {r['utc']} UTC; {r['way']}; {verdict}", size=9, bold=True,
               alert=r["verdict"] != RIGHT_WORKING)
    columns = (LEFT, 0.36, 0.55, 0.74)
    pages.row(list(zip(columns, ("line", "you wrote", "it should be", "verdict"))), bold=True)
    pages.rule()
    for x in lines.to_dict("records"):
        verdict = x["verdict"]
        if verdict == "wrong":
            off = difference_text(x["line"], x["difference"])
            verdict = f"wrong ({off})" + (f": {x['cause']}" if x["cause"] else "")
        pages.row([(columns[0], _short(x["line_name"], 44)), (columns[1], _short(x["given"], 24)),
                   (columns[2], _short(x["expected"] if x["verdict"] != "right" else "", 24)),
                   (columns[3], _short(verdict, 48))], alert_from=3 if x["verdict"] == "wrong" else None)
    cost = cost_text(r["method"], r.get("cost_nm", np.nan), r.get("cost_deg", np.nan), r["first_wrong_line"])
    if cost:
        pages.text(LEFT, f"Left uncorrected, {cost}.", alert=True)
    if r["noticed"]:
        pages.text(LEFT, f"Should have been noticed: {r['noticed']}.", alert=True)
    if r["remarks"]:
        pages.text(LEFT, f"Instructor's remarks: {r['remarks']}", italic=True)


def marking_pages(report) -> list:
    """Each cadet's sight book as A4 figures: their front page, then every working (see the module)."""
    figures = []
    for cadet, part in report.rows.groupby("cadet", sort=True):
        pages = _Pages(f"Sight book: {cadet}")
        _cadet_front(pages, report, cadet, part)
        pages.new_page()
        pages.text(LEFT, "Every working", size=11, step=0.022, bold=True)
        lines = report.lines[report.lines.cadet == cadet]
        for r in part.to_dict("records"):
            _working(pages, report, r, lines[(lines.source == r["source"]) & (lines.row == r["row"])])
        figures.extend(pages.figures)
    return figures


def write_marking_pdf(report, path: str | Path) -> Path:
    """The printed pages, every cadet's sight book, as one PDF."""
    from matplotlib.backends.backend_pdf import PdfPages

    from ..io.output import atomic_write

    pages = marking_pages(report)
    if not pages:
        raise NavredError("no working was marked: nothing to print")

    def write(target):
        with PdfPages(target) as pdf:
            for page in pages:
                pdf.savefig(page)

    return atomic_write(path, write, inputs=report.workings.log.sources)


__all__ = ["marking_pages", "write_marking_pdf"]
