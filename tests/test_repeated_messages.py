"""Messages at a fleet's scale: a refusal repeated row after row, and warnings by the thousand, counted by kind
with the first few of each shown (never a kind hidden); each refused cell quoted as the file holds it."""

from __future__ import annotations

import pandas as pd
from typer.testing import CliRunner

from navred.cli import app

runner = CliRunner()

HEADER = "utc,body,limb,hs,index_error_arcmin,eye_height_m,dr_lat,dr_lon,fix_group"


def spreadsheet_log(tmp_path, days=(5, 6, 7, 8, 9, 10), name="xl.csv"):
    """Sun sights with the date-time as a spreadsheet exports it (dd/mm/yyyy hh:mm:ss, no zone), BOM and CR LF."""
    rows = [HEADER] + [f"{d:02d}/01/2025 1{k}:38:27,Sun,lower,38 02.1,1.4 on,2.8,03 36.7 N,110 57.6 E,g{d}"
                       for d in days for k in range(2)]
    path = tmp_path / name
    path.write_bytes(("\ufeff" + "\r\n".join(rows) + "\r\n").encode("utf-8"))
    return path


def test_a_refusal_repeated_row_after_row_is_given_in_full_a_few_times_then_counted(tmp_path):
    path = spreadsheet_log(tmp_path)
    out = runner.invoke(app, ["reduce", str(path)]).stdout
    lines = out.splitlines()
    # the cell quoted as the file holds it, not as navred rewrote it ('2025-01-05T12:38:27')
    assert "utc: '05/01/2025 10:38:27': date '05/01/2025' is not ISO 8601 and has two readings" in out
    assert "2025-01-05T" not in out
    full = [line for line in lines if "has two readings" in line]
    assert len(full) == 3  # rows 2-4 in full
    # the rest in short: the same kind of reason, each row's own cell quoted (none reads as taken)
    assert sum("not reduced: the same kind of reason as row 2 (utc); this row's own values: '" in line
               for line in lines) == 9
    assert "12 rows not reduced for the reason given in full at row 2 (rows 2-13)" in out


def test_the_column_named_utc_makes_a_zoneless_spreadsheet_date_time_utc(tmp_path):
    # one rule for text and cells (docs/sight-log.md): the column's name says UTC, the date order is declared
    result = runner.invoke(app, ["reduce", str(spreadsheet_log(tmp_path)), "--dates", "day-first"])
    assert "12 sights reduced" in result.stdout and "not reduced: " not in result.stdout
    assert "12 instants in the utc column give no zone" in result.stderr and "taken as UTC" in result.stderr


def test_a_refused_instant_quotes_the_cell_as_written(tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text(HEADER + "\n05/01/2025 01:38:27 PST,Sun,lower,38 02.1,1.4 on,2.8,03 36.7 N,110 57.6 E,a\n"
                    "05/01/2025 25:38:27,Sun,lower,38 02.1,1.4 on,2.8,03 36.7 N,110 57.6 E,a\n")
    out = runner.invoke(app, ["reduce", str(path), "--dates", "day-first"]).stdout
    assert "cannot read '05/01/2025 01:38:27 PST' as an instant" in out and "2025-01-05T" not in out
    assert "utc: '05/01/2025 25:38:27': not a valid calendar instant" in out


def test_almanac_utc_without_a_zone_is_named_by_its_option_with_no_element_count():
    result = runner.invoke(app, ["almanac", "Sun", "--utc", "2025-06-15 14:23:45"])
    assert result.exit_code == 1
    assert "--utc: '2025-06-15 14:23:45' has no time zone; write Z for UTC" in result.output
    assert "element" not in result.output and "indices" not in result.output and "the value" not in result.output


def test_rows_not_reduced_are_listed_by_kind_every_kind_shown():
    from navred.cli.format import rejected_lines

    same = [{"source": "a.csv", "row": r, "column": "utc", "reason": f"'0{r % 9}/01/2025': two readings"}
            for r in range(2, 40)]
    other = [{"source": "a.csv", "row": 40, "column": "hs", "reason": "Hs '95 00' is beyond 90°"}]
    lines = rejected_lines(pd.DataFrame(same + other), shown=20)
    assert lines[0] == "39 rows not reduced:"
    assert any("row 40 (hs): Hs '95 00' is beyond 90°" in line for line in lines)  # the rare kind is not hidden
    assert "  and 28 more like it (rows 12-39): 'navred reduce' lists every one" in lines


def test_a_wall_of_warnings_is_counted_by_kind_on_the_console_and_kept_whole_in_the_workbook(tmp_path):
    # the demo with every DR 2° of latitude north (120 nm): each sight's intercept is over 30 nm and each fix far
    # from its DR; the two-sight moon-planet fix's "no redundancy" is a kind met once, which must not be hidden
    import openpyxl

    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    demo["dr_lat"] = demo.dr_lat.str.replace(r"^(\d+)", lambda m: str(int(m.group(1)) + 2), regex=True)
    # four ships' days of it (over the 30 warnings a day's log lists in full), each ship's groups its own
    frame = pd.concat([demo.assign(vessel=f"Ship {k}") for k in range(4)], ignore_index=True)
    path, book = tmp_path / "far.csv", tmp_path / "far.xlsx"
    frame.to_csv(path, index=False)
    # the pictures left out (--pictures none): the warnings are the same with them, and drawing them is most of the
    # run (tests/test_drawing.py draws them); the note saying so is not a warning
    result = runner.invoke(app, ["workbook", str(path), "-o", str(book), "--pictures", "none"])
    assert result.exit_code == 0, result.output
    err = result.stderr
    intercept = "intercept over 30 nm: check body, time, Hs and DR"
    # each sight's warning adds what slip would account for it (or that none does): a kind each, the first 3 of
    # each kind shown, the rest counted
    shown = [line for line in err.splitlines() if line.startswith("warning: row") and intercept in line]
    kinds = pd.Series([line.split("): ", 1)[1] for line in shown]).value_counts()
    assert (kinds <= 4).all() and (kinds == 3).any(), kinds  # four of a kind are shown whole (never "1 more")
    more = [line for line in err.splitlines() if "more like it (rows" in line]
    assert len(more) >= 1
    counted = sum(int(line.split("and ")[1].split(" more")[0]) for line in more)
    assert len(shown) + counted == 4 * 10  # the demo's 10 sights over 30 nm, four ships
    assert "2 sights and 2 unknowns: no redundancy" in err  # a kind met once is shown
    assert "the first 3 of each kind shown above: every one is in the workbook" in err
    # the workbook keeps every one: each sight's warning in the Working sheet's flags
    working = openpyxl.load_workbook(book, read_only=True)["Working"]
    rows = list(working.iter_rows(values_only=True))
    flags = rows[0].index("flags")
    assert sum(intercept in str(r[flags]) for r in rows[1:]) == len(shown) + counted
    # a day's log (the demo alone, 14 warnings) lists every one by its row
    one = tmp_path / "one.csv"
    demo.to_csv(one, index=False)
    alone = runner.invoke(app, ["workbook", str(one), "-o", str(tmp_path / "one.xlsx"), "--pictures", "none"]).stderr
    assert "more like it" not in alone and alone.count(intercept) == 10


def test_by_kind_shows_every_kind_and_counts_the_rest():
    from navred.cli.format import by_kind

    entries = [(f"row {r}", f"warning: row {r}: high sight {r}", f"high sight (Hc {80 + r % 5}°)") for r in range(2, 30)]
    entries.insert(10, ("row 99", "warning: row 99: a rare one", "a rare one"))
    entries += [(f"row {r}", f"warning: row {r}: high sight {r}", f"high sight (Hc {80 + r % 5}°)") for r in range(30, 40)]
    lines = by_kind(entries, 3)
    assert lines == ["warning: row 2: high sight 2", "warning: row 3: high sight 3", "warning: row 4: high sight 4",
                     "  and 35 more like it (rows 5-39)", "warning: row 99: a rare one"]
    assert by_kind(entries[:30], 3) == [line for _, line, _ in entries[:30]]  # a short list: every one
