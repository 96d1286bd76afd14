"""A long run's closing on stderr (finding 8 of the navigator's trial): rows named short, lines kept short."""

import pandas as pd

from navred.cli.common import folded
from navred.cli.format import by_kind
from navred.jobs.frames import short_row_list


def test_a_long_row_list_is_cut_short_and_the_rest_counted():
    # common practice: a list a terminal shows on one line, the rest counted ('… and N more')
    rows = pd.DataFrame({"row": [27, 28, 29, 34, 35, 36, *range(100, 20_000, 3)]})
    text = short_row_list(rows)
    assert text.startswith("rows 27-29, 34-36, 100, 103") and len(text) < 130
    shown = sum(len(range(int(a), int(b) + 1)) if "-" in part else 1 for part in text[5:].split(" … ")[0].split(", ")
                for a, _, b in [part.partition("-")])
    assert text.endswith(f" … and {len(rows) - shown:,} more")
    # short lists in full, several files each named
    assert short_row_list(pd.DataFrame({"row": [7]})) == "row 7"
    assert short_row_list(pd.DataFrame({"row": [3, 4, 5, 2], "source": ["a.csv"] * 3 + ["b.csv"]})) == \
        "a.csv rows 3-5; b.csv row 2"


def test_the_rest_of_a_kind_is_counted_on_a_line_under_200_characters():
    # common practice: 'and N more like it' no longer lists thousands of rows (72,390 characters in the trial)
    entries = [(f"row {r}", f"warning: row {r}: intercept over 30 nm", "intercept over 30 nm")
               for r in range(2, 50_000, 3)]
    lines = by_kind(entries, 3)
    assert len(lines) == 4 and max(map(len, lines)) < 200
    assert lines[3].startswith(f"  and {len(entries) - 3:,} more like it (rows 11, 14, 17")
    assert "… and " in lines[3]


def test_a_long_line_is_folded_never_cut():
    # common practice: a refusal says in full what was wrong; a long one goes on, indented, on the next line
    line = "not reduced: row 2 (Sun): " + "word " * 80
    parts = folded(line)
    assert len(parts) > 1 and all(len(p) <= 200 for p in parts)
    assert all(p.startswith("    ") for p in parts[1:])
    assert " ".join(p.strip() for p in parts) == line.strip()
