"""Reading sight logs: every row accounted for, every problem explained, bad files refused clearly."""

from __future__ import annotations

import string

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from navred.logbook import LogbookError, read_sight_log

HEADER = "utc,body,limb,hs,index_error_arcmin,eye_height_m,dr_lat,dr_lon,cadet_note"
GOOD = "2026-03-26T19:41:00Z,Sirius,,30 02.4,1.4 on,2.8,43 14.1 N,013 03.7 W,first"


def write(tmp_path, lines, name="log.csv"):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.mark.parametrize("bad_row, column, fragment", [
    ("2026-03-26 19:41:00,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "no time zone"),
    ("yesterday,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "cannot read"),
    ("2026-03-26T19:41:00Z,Sirus,,30 02.4,0,2.8,43 14 N,13 04 W,x", "body", "closest: Sirius"),
    ("2026-03-26T19:41:00Z,Sirius,,95 00.0,0,2.8,43 14 N,13 04 W,x", "hs", "0-90"),
    ("2026-03-26T19:41:00Z,Sirius,,30 72.0,0,2.8,43 14 N,13 04 W,x", "hs", "below 60"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,93 14 N,13 04 W,x", "dr_lat", "outside -90 to 90"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 14 N,13 04 N,x", "dr_lon", "cannot read"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,two on,2.8,43 14 N,13 04 W,x", "index_error_arcmin", "cannot read"),
    ("2026-03-26T19:41:00Z,Sun,middle,30 02.4,0,2.8,43 14 N,13 04 W,x", "limb", "lower, upper or centre"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,-3,43 14 N,13 04 W,x", "eye_height_m", "0-1000 m"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,,43 14 N,13 04 W,x", "eye_height_m", "dip of a sea horizon"),
    ("2026-03-26T19:41:00Z,Sirius,,,0,2.8,43 14 N,13 04 W,x", "hs", "empty"),
    ("2060-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "1900-2050"),
])
def test_each_bad_row_gets_its_message_and_good_rows_survive(tmp_path, bad_row, column, fragment):
    path = write(tmp_path, [HEADER, GOOD, bad_row, GOOD.replace("first", "third")])
    sights, rejected = read_sight_log(path)
    assert list(sights["row"]) == [1, 3]
    assert list(sights["cadet_note"]) == ["first", "third"]  # unknown columns carried through
    hit = rejected[rejected.column == column]
    assert list(hit.row) == [2], rejected
    assert fragment in hit.reason.iloc[0]


def test_zone_time_and_chronometer_error(tmp_path):
    # ZT + ZD = UTC (common practice): 20:41:30 in zone +1 is 21:41:30 UTC; a chronometer 30 s fast
    path = write(tmp_path, ["date,zone_time,zone_description,chronometer_error_s,body,hs,eye_height_m,dr_lat,dr_lon",
                            "2026-03-26,20:41:30,+1,30,Sirius,30 02.4,2.8,43 14 N,13 04 W",
                            "2026-03-26,08:41:30,-10,0,Sirius,30 02.4,2.8,43 14 N,13 04 W",
                            "2026-03-26,08:41:30,+15,0,Sirius,30 02.4,2.8,43 14 N,13 04 W"])
    sights, rejected = read_sight_log(path)
    assert sights.utc.iloc[0].startswith("2026-03-26T21:41:00")
    assert sights.utc.iloc[1].startswith("2026-03-25T22:41:30")
    assert list(rejected.row) == [3] and "-12 to +14" in rejected.reason.iloc[0]


def test_column_names_are_case_insensitive_and_groups_default_to_two_hours(tmp_path):
    path = write(tmp_path, ["UTC,Body,HS,Eye_Height_M,DR_Lat,DR_Lon",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W",
                            "2026-03-26T20:41:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W"])
    sights, rejected = read_sight_log(path)
    assert len(sights) == 3 and rejected.empty
    assert sights.fix_group.iloc[0] == sights.fix_group.iloc[1] != sights.fix_group.iloc[2]


def test_leap_second_instant_is_read(tmp_path):
    path = write(tmp_path, [HEADER, GOOD.replace("2026-03-26T19:41:00Z", "2016-12-31T23:59:60.5Z")])
    sights, rejected = read_sight_log(path)
    assert rejected.empty and sights.utc.iloc[0].startswith("2016-12-31T23:59:59")


@pytest.mark.parametrize("content, fragment", [
    (b"", "empty"),
    (b"\x00\x01\x02binary\xff\xfe", "binary"),
    (b"name,age\nAnn,34\n", "not a sight log"),
    (b"PK\x03\x04not really a zip", "not a text CSV"),
])
def test_files_that_are_not_sight_logs_get_one_clear_message(tmp_path, content, fragment):
    path = tmp_path / "thing.csv"
    path.write_bytes(content)
    with pytest.raises(LogbookError, match=fragment):
        read_sight_log(path)


def test_missing_file_and_fake_xlsx(tmp_path):
    with pytest.raises(LogbookError, match="no such file"):
        read_sight_log(tmp_path / "absent.csv")
    fake = tmp_path / "log.xlsx"
    fake.write_text("utc,body\n")
    with pytest.raises(LogbookError, match="not a spreadsheet"):
        read_sight_log(fake)


def test_xlsx_with_merged_header_cells_is_refused(tmp_path):
    import openpyxl

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["Sights", None, None, "hs", "dr_lat", "dr_lon"])
    sheet.merge_cells("A1:C1")
    sheet.append(["2026-03-26T19:41:00Z", "Sirius", "", "30 02.4", "43 14 N", "13 04 W"])
    path = tmp_path / "merged.xlsx"
    book.save(path)
    with pytest.raises(LogbookError, match="merged cells"):
        read_sight_log(path)


def test_xlsx_and_csv_demo_read_the_same():
    csv_sights, _ = read_sight_log("sample_sights/demo_sights.csv")
    xlsx_sights, _ = read_sight_log("sample_sights/demo_sights.xlsx")
    for column in ("utc", "body", "hs", "dr_lat", "dr_lon", "fix_group"):
        assert list(csv_sights[column].astype(str)) == list(xlsx_sights[column].astype(str)), column


_cells = st.text(alphabet=string.printable + "°′″ÅØ", max_size=12)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.lists(_cells, min_size=8, max_size=8), min_size=1, max_size=6))
def test_random_garbage_rows_never_crash_and_never_lose_a_row(tmp_path, garbage):
    # hypothesis: random cells in every column; good rows around them are still read
    import csv
    import io

    out = io.StringIO()
    writer = csv.writer(out)
    writer.writerow(HEADER.split(",")[:8])
    writer.writerow(GOOD.split(",")[:8])
    for row in garbage:
        writer.writerow(row)
    writer.writerow(GOOD.split(",")[:8])
    path = tmp_path / "garbage.csv"
    path.write_text(out.getvalue(), encoding="utf-8")
    try:
        sights, rejected = read_sight_log(path)
    except LogbookError:
        return  # a file pandas itself cannot parse as CSV is refused with one clear message
    total_rows = len(pd.read_csv(path, dtype=str, keep_default_na=False))
    accounted = set(sights["row"]) | set(rejected["row"])
    assert accounted == set(range(1, total_rows + 1))
    assert not (set(sights["row"]) & set(rejected["row"]))
    assert {1, total_rows} <= set(sights["row"])
    assert rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    assert np.all(rejected.columns == ["row", "column", "value", "reason"])
