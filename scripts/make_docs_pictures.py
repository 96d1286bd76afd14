"""Draw the pictures and tables docs/workbook.md shows, from the invented demo (sample_sights/demo_sights.csv).

- docs/images/plotting-sheet-running-fix.png: the demo's Sun-run-Sun running fix;
- docs/images/plotting-sheet-star-fix.png: the demo's evening star fix;
- the Working sheet and its Working by hand view, a few sights each, written into docs/workbook.md between
  the markers <!-- working:start --> and <!-- working:end --> as Markdown tables with the cells' own texts.

Run from the top of the repository after changing the plotting sheet or the working's tables:

    python scripts/make_docs_pictures.py
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd

from navred.figures.plotting import write_canvas
from navred.jobs.plotfiles import plotting_figure
from navred.jobs.voyage import process_log
from navred.jobs.voyagetables import hand_working_table, working_table

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"
SHEETS = {"sun-run-sun": "plotting-sheet-running-fix.png", "evening-stars": "plotting-sheet-star-fix.png"}
WORKING = ["row in log", "body", "UTC", "Hs (° ′)", "IC (′)", "dip (′)", "refraction (′)", "SD (′)", "parallax (′)",
           "Ho (° ′)", "GHA (° ′)", "Dec (° ′)", "LHA (° ′)", "Hc (° ′)", "Zn (deg true)", "intercept (nm)",
           "TOWARD/AWAY"]
BY_HAND = ["row in log", "body", "GHA at the whole hour (Aries for a star) (° ′)", "GHA increment (° ′)",
           "v correction (′)", "SHA (° ′)", "GHA (° ′)", "Dec (° ′)", "HP (′)", "Ho (° ′)", "AP lat (° ′)",
           "AP lon (° ′)", "LHA (°)", "tabulated Hc (° ′)", "tables' d (′)", "tabulated Z (deg)",
           "d correction of Hc (′)", "Hc (° ′)", "Zn (deg true)", "intercept (nm)", "TOWARD/AWAY"]
#: how the sheet shows each kind of number (its number format), for the Markdown table
SHOWN = {"(′)": "{:.1f}", "(nm)": "{:.1f}", "Zn (deg true)": "{:05.1f}", "tabulated Z (deg)": "{:.1f}"}


def shown(column: str, value) -> str:
    if isinstance(value, float) and np.isfinite(value):
        form = next((f for unit, f in SHOWN.items() if column.endswith(unit) or column == unit), "{:g}")
        text = form.format(value)
        return text[1:] if text.startswith("-") and float(text) == 0.0 else text
    if isinstance(value, pd.Timestamp) or hasattr(value, "strftime"):
        return value.strftime("%H:%M:%S")
    return str(value)


def markdown(table: pd.DataFrame, columns: list[str], rows: list[int]) -> str:
    lines = ["| " + " | ".join(columns) + " |", "|" + "---|" * len(columns)]
    for k in rows:
        lines.append("| " + " | ".join(shown(c, table[c].iloc[k]) for c in columns) + " |")
    return "\n".join(lines)


def main() -> None:
    voyage = process_log(ROOT / "sample_sights" / "demo_sights.csv", plan=False)
    (DOCS / "images").mkdir(exist_ok=True)
    for group in voyage.groups:
        if group.name in SHEETS:
            write_canvas(plotting_figure(voyage, group), DOCS / "images" / SHEETS[group.name])
    working, by_hand = working_table(voyage), hand_working_table(voyage)
    rows = [0, 3, 5]  # a Sun, the Moon, a star
    block = ("<!-- working:start -->\n"
             "The Working sheet (a few of its columns; the demo's rows 2, 5 and 7):\n\n"
             f"{markdown(working, WORKING, rows)}\n\n"
             "The same sights on the Working by hand sheet (a few of its columns):\n\n"
             f"{markdown(by_hand, BY_HAND, rows)}\n"
             "<!-- working:end -->")
    page = DOCS / "workbook.md"
    text = page.read_text(encoding="utf-8")
    text = re.sub(r"<!-- working:start -->.*?<!-- working:end -->", lambda _: block, text, flags=re.S)
    page.write_text(text, encoding="utf-8")


if __name__ == "__main__":
    main()
