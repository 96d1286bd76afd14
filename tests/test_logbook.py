"""Reading sight logs, the one way in: every row accounted for, every problem named, nothing guessed."""

from __future__ import annotations

import csv
import datetime as dt
import io
import re
import string

import numpy as np
import openpyxl
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from navred.io.logbook import LogbookError, read_sight_log
from navred.jobs.voyage import process_log

HEADER = "utc,body,limb,hs,index_error_arcmin,eye_height_m,dr_lat,dr_lon,cadet_note"
GOOD = "2026-03-26T19:41:00Z,Sirius,,30 02.4,1.4 on,2.8,43 14.1 N,013 03.7 W,first"


def write(tmp_path, lines, name="log.csv", encoding="utf-8"):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding=encoding)
    return path


def reasons(log, row):
    """Every reason given for one row, and the columns they name."""
    part = log.rejected[log.rejected.row == row]
    return " | ".join(part.reason), set(part.column)


# --- every bad value is named by its row and column --------------------------------------

@pytest.mark.parametrize("bad_row, column, fragment", [
    ("yesterday,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "cannot read"),
    ("2026-03-26T19:41:00Z,Sirus,,30 02.4,0,2.8,43 14 N,13 04 W,x", "body", "closest: Sirius"),
    ("2026-03-26T19:41:00Z,Sirius,,95 00.0,0,2.8,43 14 N,13 04 W,x", "hs", "outside 0-90° for a sea horizon"),
    ("2026-03-26T19:41:00Z,Sirius,,30 72.0,0,2.8,43 14 N,13 04 W,x", "hs", "below 60"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,93 14 N,13 04 W,x", "dr_lat", "outside -90 to 90"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 14 N,13 04 N,x", "dr_lon", "N is a hemisphere of a latitude"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,two on,2.8,43 14 N,13 04 W,x", "index_error_arcmin", "cannot read"),
    ("2026-03-26T19:41:00Z,Sun,middle,30 02.4,0,2.8,43 14 N,13 04 W,x", "limb", "lower"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,-3,43 14 N,13 04 W,x", "eye_height_m", "outside 0 to 1000"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,,43 14 N,13 04 W,x", "eye_height_m", "dip of a sea horizon"),
    ("2026-03-26T19:41:00Z,Sirius,,,0,2.8,43 14 N,13 04 W,x", "hs", "empty"),
    ("2060-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "1900-2050"),
    ("2026-02-30T19:41:00+01:00,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "not a valid calendar"),
    ("2026-03-26T19:41:00+25:00,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "not a real one"),
    ("2026-03-26T19:41:00+14:61,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x", "utc", "not a real one"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,44 10'.1 N,013 03.8,x", "dr_lon", "could be E or W"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,44 30,013 03.8 W,x", "dr_lat", "could be N or S"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 14 N,013 03.7 S,x", "dr_lon", "S is a hemisphere of a latitude"),
    ("2026-03-26T19:41:00Z,Sirius,,30 02.4,0,2.8,43 -14.1 N,013 03.7 W,x", "dr_lat", "sign inside the minutes"),
    ("2026-03-26T19:41:00Z,Sirius,,29 -53.4,0,2.8,43 14.1 N,013 03.7 W,x", "hs", "sign inside the minutes"),
])
def test_each_bad_row_gets_its_message_and_good_rows_survive(tmp_path, bad_row, column, fragment):
    log = read_sight_log(write(tmp_path, [HEADER, GOOD, bad_row, GOOD.replace("first", "third")]))
    # rows as a spreadsheet shows them: the header is row 1, so the sights are rows 2, 3 and 4
    assert list(log.sights["row"]) == [2, 4]
    assert list(log.sights["cadet_note"]) == ["first", "third"]  # unknown columns carried through
    hit = log.rejected[log.rejected.column == column]
    assert list(hit.row) == [3], log.rejected
    assert fragment in hit.reason.iloc[0]


def test_a_frames_column_of_instants_says_by_its_type_whether_they_carry_a_zone():
    """A DataFrame's column of instants without a zone (numpy's datetime64, naive) is taken as UTC with the same
    note, naming the same rows, as the same instants held as Python date-times (each cell looked at); a column
    with its zone (UTC) gets none."""
    base = {"body": "Sun", "limb": "lower", "hs": [30.0, 31.0, 32.0], "eye_height_m": 3.0,
            "dr_lat": 45.0, "dr_lon": -20.0}
    instants = pd.to_datetime(["2026-03-26 19:41:00", "2026-03-26 19:43:00", None])
    naive = read_sight_log(pd.DataFrame({"utc": instants, **base}))
    cells = read_sight_log(pd.DataFrame({"utc": pd.Series(list(instants.to_pydatetime()), dtype=object), **base}))
    aware = read_sight_log(pd.DataFrame({"utc": instants.tz_localize("UTC"), **base}))
    note = [n for n in naive.notes if "give no zone" in n]
    assert note == [n for n in cells.notes if "give no zone" in n] and "(row 1, row 2)" in note[0]
    assert not [n for n in aware.notes if "zone" in n]
    assert list(naive.sights.sight_utc) == list(aware.sights.sight_utc) == list(cells.sights.sight_utc)


def test_an_instant_without_a_zone_is_read_alike_as_text_and_as_a_cell(tmp_path):
    """The utc column's name says UTC: an instant written there without Z, as text or as a spreadsheet
    date-time cell (which cannot hold a zone), is taken as UTC alike, and the log's notes say so with its rows;
    the same log saved from the spreadsheet as CSV reads the same (one way in, one answer). A non-ISO date in
    it follows --dates like any other date."""
    import openpyxl

    text = read_sight_log(write(tmp_path, [HEADER, GOOD, GOOD.replace("2026-03-26T19:41:00Z", "2026-03-26 19:41:00")]))
    assert len(text.sights) == 2 and text.rejected.empty
    assert text.sights.sight_utc.iloc[1] == text.sights.sight_utc.iloc[0]
    assert any("1 instant in the utc column gives no zone (row 3): taken as UTC" in n for n in text.notes)
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(HEADER.split(","))
    for line in (GOOD, GOOD):
        cells = line.split(",")
        cells[0] = dt.datetime(2026, 3, 26, 19, 41)  # a date-time cell
        sheet.append(cells)
    book.save(tmp_path / "cells.xlsx")
    cells = read_sight_log(tmp_path / "cells.xlsx")
    assert list(cells.sights.sight_utc) == [text.sights.sight_utc.iloc[0]] * 2
    assert any("2 instants in the utc column give no zone (row 2, row 3)" in n for n in cells.notes)
    day_first = read_sight_log(write(tmp_path, [HEADER, GOOD.replace("2026-03-26T19:41:00Z", "26/03/2026 19:41:00")],
                                     "day.csv"), dates="day-first")
    assert day_first.sights.sight_utc.iloc[0] == text.sights.sight_utc.iloc[0] and day_first.notes
    undeclared = read_sight_log(write(tmp_path, [HEADER, GOOD.replace("2026-03-26T19:41:00Z", "26/03/2026 19:41:00")],
                                      "undeclared.csv"))
    reason = undeclared.rejected.reason.iloc[0]
    # 26/03 is only a date read day-first: the message does not call that two readings
    assert "two readings" not in reason and "month-first not a date" in reason and "--dates day-first" in reason
    wrong = read_sight_log(write(tmp_path, [HEADER, GOOD.replace("2026-03-26T19:41:00Z", "03/26/2026 19:41:00")],
                                 "wrong.csv"), dates="day-first")
    assert "read day-first, as declared (--dates day-first), is not a date" in wrong.rejected.reason.iloc[0]
    assert "month-first it would be 2026-03-26" in wrong.rejected.reason.iloc[0]


def test_the_minute_mark_before_the_point_is_read_as_tenths_of_a_minute(tmp_path):
    # 44° 10'.1 N is 44° 10.1′ N, as navigators write it (common practice), not 10′ 0.1″
    log = read_sight_log(write(tmp_path, [HEADER, GOOD.replace("43 14.1 N", "44° 10'.1 N")]))
    assert log.sights.dr_lat_deg[0] == pytest.approx(44 + 10.1 / 60, abs=1e-12)


def test_a_rows_verdict_does_not_depend_on_the_other_rows(tmp_path):
    bad = "2026-03-26T19:41:00+14:61,Sirius,,30 02.4,0,2.8,43 14 N,13 04 W,x"
    alone = read_sight_log(write(tmp_path, [HEADER, bad], "alone.csv"))
    mixed = read_sight_log(write(tmp_path, [HEADER, GOOD, bad, GOOD], "mixed.csv"))
    assert len(alone.sights) == 0 and len(mixed.sights) == 2
    assert list(alone.rejected.reason) == list(mixed.rejected.reason)
    good_alone = read_sight_log(write(tmp_path, [HEADER, GOOD], "good.csv")).sights
    columns = ["sight_utc", "hs_deg", "dr_lat_deg", "dr_lon_deg", "index_error_arcmin", "eye_height_m"]
    pd.testing.assert_frame_equal(good_alone[columns], mixed.sights[columns].iloc[:1])


# --- the time working ---------------------------------------------------------------

ZONE_HEADER = "date,zone_time,zone_description,watch_error,body,hs,eye_height_m,dr_lat,dr_lon"


def zone_row(date="2026-03-26", time="20:41:30", zone="+1", error="30 fast"):
    return f"{date},{time},{zone},{error},Sirius,30 02.4,2.8,43 14 N,13 04 W"


@pytest.mark.parametrize("row, expected", [
    # ZT + ZD = UTC, and a fast watch reads ahead (common practice)
    (zone_row(), "2026-03-26T21:41:00"),
    (zone_row(zone="+1 N", error="30 s fast"), "2026-03-26T21:41:00"),
    (zone_row(time="08:41:30", zone="-10", error=""), "2026-03-25T22:41:30"),
    (zone_row(time="08:41:30", zone="-10 K", error="12 slow"), "2026-03-25T22:41:42"),
    (zone_row(zone="0", error="1 m 05 s fast"), "2026-03-26T20:40:25"),
    (zone_row(time="1941", zone="+1", error=""), "2026-03-26T20:41:00"),
    (zone_row(date="26 Mar 2026", time="23:30:00", zone="+5", error=""), "2026-03-27T04:30:00"),
])
def test_zone_time_and_watch_error_forms(tmp_path, row, expected):
    log = read_sight_log(write(tmp_path, [ZONE_HEADER, row]))
    assert log.rejected.empty, log.rejected
    assert str(log.sights.sight_utc[0].tz_convert(None)) == expected.replace("T", " ")


@pytest.mark.parametrize("row, column, fragment", [
    (zone_row(zone="+1 A"), "zone_description", "letter A is zone -1"),
    (zone_row(zone="+01:00"), "zone_description", "means the opposite"),
    (zone_row(zone="UTC+1:30"), "zone_description", "which is not a whole hour"),  # ('UTC+1' is read: -1)
    (zone_row(zone="3"), "zone_description", "has no sign"),
    (zone_row(zone="+13"), "zone_description", "outside -12 to +12"),
    (zone_row(error="fast"), "watch_error", "cannot read"),
    (zone_row(error="-12 fast"), "watch_error", "a sign or fast/slow"),
    # issue 19: an unsigned watch error has two readings, as an unsigned zone description has
    (zone_row(error="12"), "watch_error", "'12' has no fast or slow: 12 fast (the watch is ahead; subtracted) or 12 slow"),
    (zone_row(error="12 s"), "watch_error", "12 s fast (the watch is ahead; subtracted) or 12 s slow"),
    (zone_row(error="01:05"), "watch_error", "no fast or slow"),
    # a sign alone is an error's (+ fast) or a correction's (+ added, the watch slow): 24 s, 6′ of longitude apart
    (zone_row(error="+12 s"), "watch_error", "as an error (+ fast) it is 12 s fast (subtracted from the watch's "
                                             "reading); as a correction (+ added) it is 12 s slow"),
    (zone_row(error="-3"), "watch_error", "as an error (+ fast) it is 3 s slow (added to the watch's reading); as a "
                                          "correction (+ added) it is 3 s fast"),
    (zone_row(time="18:42:30Z"), "zone_time", "carries a zone of its own"),
    (zone_row(time="12:00 pm"), "zone_time", "two readings: noon (12:00) or midnight"),
    (zone_row(date="05/03/2026"), "date", "day-first it is 2026-03-05 (5 March), month-first 2026-05-03 (3 May)"),
    (zone_row(date="05/03/26"), "date", "two-digit year"),
    (zone_row(date=""), "date", "needs its date"),
    (zone_row(zone=""), "zone_description", "needs its zone description"),
])
def test_ambiguous_or_wrong_time_working_is_refused_by_name(tmp_path, row, column, fragment):
    log = read_sight_log(write(tmp_path, [ZONE_HEADER, row, zone_row()]))
    assert list(log.sights.row) == [3]
    hit = log.rejected[log.rejected.column == column]
    assert list(hit.row) == [2], log.rejected
    assert fragment in hit.reason.iloc[0]


@pytest.mark.parametrize("header, error, expected", [
    # the header states the sign, so a signed or bare number has one reading (common practice: both are kept)
    ("watch error (s, fast +)", "-3", "2026-03-26T21:41:33"),
    ("watch error (s, fast +)", "+30", "2026-03-26T21:41:00"),
    ("watch error (fast +)", "30", "2026-03-26T21:41:00"),
    ("watch error (s, slow +)", "+12", "2026-03-26T21:41:42"),  # a correction: added
    ("watch error (slow −)", "-12", "2026-03-26T21:41:42"),
    ("watch error (s, slow +)", "30 fast", "2026-03-26T21:41:00"),  # words win over the header's sign
])
def test_a_header_that_states_the_sign_reads_signed_watch_errors(tmp_path, header, error, expected):
    log = read_sight_log(write(tmp_path, [ZONE_HEADER.replace("watch_error", f'"{header}"'), zone_row(error=error)]))
    assert log.rejected.empty, log.rejected
    assert str(log.sights.sight_utc[0].tz_convert(None)) == expected.replace("T", " ")


def test_number_cells_of_a_watch_error_need_the_sign_stated():
    frame = pd.DataFrame({"date": ["2026-03-26"] * 2, "zone_time": ["20:41:30"] * 2, "zone_description": ["+1"] * 2,
                          "watch_error": [-3.0, 0.0], "body": ["Sirius"] * 2, "hs": ["30 02.4"] * 2,
                          "eye_height_m": [2.8] * 2, "dr_lat": ["43 14 N"] * 2, "dr_lon": ["13 04 W"] * 2})
    log = read_sight_log(frame)
    assert list(log.rejected.row) == [1] and "as a correction (+ added) it is 3 s fast" in log.rejected.reason.iloc[0]
    stated = read_sight_log(frame.rename(columns={"watch_error": "watch error (s, fast +)"}))
    assert stated.rejected.empty and list(stated.sights.watch_error_applied_s) == [-3.0, 0.0]
    assert list(stated.sights.watch_error_as_given) == ["-3 (3 s slow)", "0 (0 s)"]
    slow = read_sight_log(frame.rename(columns={"watch_error": "watch error (s, slow +)"}))
    assert list(slow.sights.watch_error_applied_s) == [3.0, 0.0]


def test_a_watch_error_header_with_an_unknown_convention_is_refused(tmp_path):
    with pytest.raises(LogbookError, match="neither seconds nor a sign convention"):
        read_sight_log(write(tmp_path, [ZONE_HEADER.replace("watch_error", '"watch error (s, ahead)"'), zone_row()]))


def test_declared_date_order_applies_to_the_whole_log(tmp_path):
    path = write(tmp_path, [ZONE_HEADER, zone_row(date="05/03/2026"), zone_row(date="2026-03-07")])
    day_first = read_sight_log(path, dates="day-first").sights
    month_first = read_sight_log(path, dates="month-first").sights
    assert day_first.greenwich_date.tolist() == ["2026-03-05", "2026-03-07"]
    assert month_first.greenwich_date.tolist() == ["2026-05-03", "2026-03-07"]
    with pytest.raises(LogbookError, match="day-first, month-first"):
        read_sight_log(path, dates="dmy")


def test_the_working_is_kept_for_the_working_sheet(tmp_path):
    log = read_sight_log(write(tmp_path, [ZONE_HEADER, zone_row(time="23:59:50", zone="-2", error="12 slow")]))
    row = log.sights.iloc[0]
    assert row.time_given == "zone time" and row.time_as_read == "23:59:50"
    assert row.watch_error_applied_s == -12.0 and row.zone_description_used_h == -2
    assert row.zone_time_corrected == "00:00:02" and row.zone_date_used == "2026-03-26"
    assert row.greenwich_date == "2026-03-26"  # 00:00:02 zone time on the 27th is 22:00:02 UTC on the 26th


def test_a_leap_second_in_zone_time_is_a_real_instant(tmp_path):
    # 2016 December 31 ended with a leap second (IERS Bulletin C 52; common practice): 23:59:60 UTC is
    # 00:59:60 in zone -1, and 23:59:60.5 must come half a second after 23:59:60
    path = write(tmp_path, [ZONE_HEADER, zone_row(date="2017-01-01", time="00:59:60.5", zone="-1", error=""),
                            zone_row(date="2017-01-01", time="00:59:60", zone="-1", error="")])
    log = read_sight_log(path)
    assert log.rejected.empty, log.rejected
    seconds = ((log.sights.utc_jd1 - 2457754.0) + log.sights.utc_jd2) * 86400
    assert seconds[0] - seconds[1] == pytest.approx(0.5, abs=1e-4)
    leap = read_sight_log(write(tmp_path, [HEADER, GOOD.replace("2026-03-26T19:41:00Z", "2016-12-31T23:59:60.5Z")],
                                "leap.csv"))
    assert leap.rejected.empty and str(leap.sights.sight_utc[0]).startswith("2016-12-31 23:59:59")


def test_corrected_times_are_rounded_to_the_second_and_a_leap_second_is_written_60(tmp_path):
    # the Working sheet's corrected zone time and UTC, and reduce's UTC: rounded, not cut (05:35:59.96 was shown
    # 05:35:59, a second early: 0.25′ of longitude); 2016 December 31 ended with a leap second (IERS Bulletin C 52)
    from typer.testing import CliRunner

    from navred.cli import app
    from navred.jobs.voyagetables import utc_second_cells

    rows = [ZONE_HEADER, zone_row(date="2016-12-31", time="23:59:60", zone="0", error=""),
            zone_row(date="2017-01-01", time="00:59:60", zone="-1", error=""),
            zone_row(date="2026-04-14", time="05:36:03.6", zone="0", error="3.64 s fast"),
            zone_row(date="2026-04-14", time="05:36:03.0", zone="0", error="3.64 s fast")]
    path = write(tmp_path, rows)
    sights = read_sight_log(path).sights
    assert sights.zone_time_corrected.tolist() == ["23:59:60", "00:59:60", "05:36:00", "05:35:59"]
    assert utc_second_cells(sights)[:2] == ["2016-12-31 23:59:60"] * 2  # no date cell holds :60
    assert utc_second_cells(sights)[2:] == [dt.datetime(2026, 4, 14, 5, 36), dt.datetime(2026, 4, 14, 5, 35, 59)]
    out = CliRunner().invoke(app, ["reduce", str(path)]).stdout
    assert out.count("2016-12-31 23:59:60") == 2 and "2026-04-14 05:36:00" in out and "05:35:59 " in out


def test_utc_and_zone_time_given_together_must_agree(tmp_path):
    header = "utc,date,zone_time,zone_description,body,hs,eye_height_m,dr_lat,dr_lon"
    body = "Sirius,30 02.4,2.8,43 14 N,13 04 W"
    log = read_sight_log(write(tmp_path, [header, f"2026-03-26T21:41:30Z,2026-03-26,20:41:30,+1,{body}",
                                          f"2026-03-26T21:41:30Z,2026-03-26,20:41:30,-1,{body}"]))
    assert list(log.sights.row) == [2]
    assert "disagree" in reasons(log, 3)[0]


# --- files as they come: separators, decimal commas, spreadsheets, encodings ---------------

def demo_rows():
    return pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)


FIX_COLUMNS = ["sight_utc", "body_name", "hs_deg", "index_error_arcmin", "eye_height_m", "dr_lat_deg", "dr_lon_deg",
               "course_deg", "speed_kn", "fix_group", "observer"]


def test_semicolon_and_tab_files_with_decimal_commas_read_like_the_csv(tmp_path):
    # the usual spreadsheet export in much of Europe: ';' between fields and a decimal comma (common practice)
    plain = read_sight_log("sample_sights/demo_sights.csv").sights
    frame = demo_rows()
    european = frame.apply(lambda column: column.str.replace(r"(?<=\d)\.(?=\d)", ",", regex=True))
    assert european.eye_height_m[0] == "2,8" and european.dr_lat[0] == "44 10,1 N"
    european.to_csv(tmp_path / "semicolon.csv", sep=";", index=False)
    european.to_csv(tmp_path / "tab.tsv", sep="\t", index=False)
    plain_fixes = [(g.name, g.fix.lat_deg, g.fix.lon_deg) for g in process_log("sample_sights/demo_sights.csv").groups]
    for name in ("semicolon.csv", "tab.tsv"):
        read = read_sight_log(tmp_path / name)
        assert read.rejected.empty, read.rejected
        pd.testing.assert_frame_equal(read.sights[FIX_COLUMNS], plain[FIX_COLUMNS])
        assert [(g.name, g.fix.lat_deg, g.fix.lon_deg) for g in process_log(read).groups] == plain_fixes


def test_a_decimal_comma_in_a_comma_separated_file_is_refused(tmp_path):
    log = read_sight_log(write(tmp_path, [HEADER, GOOD.replace(",2.8,", ',"2,8",')]))
    assert "comma here is ambiguous" in reasons(log, 2)[0]


def test_spreadsheet_date_time_cells_read_as_their_column_says(tmp_path):
    plain = read_sight_log("sample_sights/demo_sights.csv").sights
    frame = demo_rows()
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(list(frame.columns))
    for values in frame.itertuples(index=False):
        cells = list(values)
        cells[0] = dt.datetime.fromisoformat(cells[0].replace("Z", ""))  # a date-time cell: in utc, it is UTC
        cells[5] = float(cells[5])
        sheet.append(cells)
    book.save(tmp_path / "cells.xlsx")
    read = read_sight_log(tmp_path / "cells.xlsx")
    assert read.rejected.empty, read.rejected
    pd.testing.assert_frame_equal(read.sights[FIX_COLUMNS], plain[FIX_COLUMNS])
    fixes = [(g.name, g.fix.lat_deg, g.fix.lon_deg) for g in process_log(read).groups]
    assert fixes == [(g.name, g.fix.lat_deg, g.fix.lon_deg) for g in process_log("sample_sights/demo_sights.csv").groups]
    # zone time kept in date and time cells, with the zone description as text
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["date", "zone time", "zone description", "body", "hs", "eye height (m)", "dr lat", "dr lon"])
    sheet.append([dt.datetime(2026, 3, 26), dt.time(20, 41, 30), "+1", "Sirius", 30.0412, 2.8, "43 14 N", "13 04 W"])
    sheet.append([None, dt.datetime(2026, 3, 26, 20, 41, 30), "+1", "Sirius", 30.0412, 2.8, "43 14 N", "13 04 W"])
    sheet.append([dt.datetime(2026, 3, 26, 20, 41, 30), None, "+1", "Sirius", 30.0412, 2.8, "43 14 N", "13 04 W"])
    book.save(tmp_path / "zone.xlsx")
    zone = read_sight_log(tmp_path / "zone.xlsx")
    assert set(zone.rejected.row) == {4}, zone.rejected  # a date cell that holds a time of day, and no zone time
    assert "has a time of day" in reasons(zone, 4)[0]
    assert [str(t) for t in zone.sights.sight_utc] == ["2026-03-26 21:41:30+00:00"] * 2


def test_a_zone_description_number_cell_has_lost_its_sign(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["date", "zone_time", "zone_description", "body", "hs", "eye_height_m", "dr_lat", "dr_lon"])
    sheet.append(["2026-03-26", "20:41:30", 1, "Sirius", 30.0412, 2.8, "43 14 N", "13 04 W"])
    sheet.append(["2026-03-26", "20:41:30", -1, "Sirius", 30.0412, 2.8, "43 14 N", "13 04 E"])
    book.save(tmp_path / "signs.xlsx")
    log = read_sight_log(tmp_path / "signs.xlsx")
    assert list(log.sights.row) == [3] and "lost its sign" in reasons(log, 2)[0]


def test_a_formula_with_no_saved_value_is_refused_by_name(tmp_path):
    book = openpyxl.Workbook()  # openpyxl saves formulas without computing them: no saved value
    sheet = book.active
    sheet.append(["utc", "body", "hs", "eye_height_m", "temperature_c", "dr_lat", "dr_lon"])
    sheet.append(["2026-03-26T19:41:00Z", "Sirius", "30 02.4", 2.8, "=10+2", "43 14 N", "13 04 W"])
    sheet.append(["2026-03-26T19:42:00Z", "Sirius", "30 02.4", 2.8, 12, "43 14 N", "13 04 W"])
    book.save(tmp_path / "formula.xlsx")
    log = read_sight_log(tmp_path / "formula.xlsx")
    assert list(log.sights.row) == [3]
    text, columns = reasons(log, 2)
    assert columns == {"temperature_c"} and "formula (=10+2) with no saved value" in text


def test_empty_rows_are_skipped_and_counted(tmp_path):
    log = read_sight_log(write(tmp_path, [HEADER, GOOD, ",,,,,,,,", "", GOOD, ",,,,,,,,"]))
    assert list(log.sights.row) == [2, 5] and log.rejected.empty
    assert log.empty_rows == 3 and "3 empty rows skipped" in log.summary()


@pytest.mark.parametrize("bad, fragment", [
    (GOOD.replace("first", "Smith, J"), "has 10 fields where the header has 9"),
    (GOOD.replace("first", "fir\x00st"), "NUL byte"),
    (GOOD.replace("first", "fir\x07st"), "control character"),
])
def test_a_malformed_row_is_rejected_alone(tmp_path, bad, fragment):
    path = tmp_path / "log.csv"
    path.write_bytes(("\n".join([HEADER, GOOD, bad, GOOD]) + "\n").encode("utf-8"))
    log = read_sight_log(path)
    assert list(log.sights.row) == [2, 4]
    assert fragment in reasons(log, 3)[0]
    assert len(log.as_read) == 3  # the malformed row is still shown as it was read


def test_encodings_a_spreadsheet_writes(tmp_path):
    plain = read_sight_log("sample_sights/demo_sights.csv").sights
    text = (open("sample_sights/demo_sights.csv", encoding="utf-8").read())
    (tmp_path / "bom.csv").write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    (tmp_path / "unicode.txt").write_bytes(text.replace(",", "\t").encode("utf-16"))  # "Unicode text": UTF-16, tabs
    for name in ("bom.csv", "unicode.txt"):
        read = read_sight_log(tmp_path / name)
        pd.testing.assert_frame_equal(read.sights[FIX_COLUMNS], plain[FIX_COLUMNS])


# --- headers and units -----------------------------------------------------------------

def test_headers_ignore_case_spacing_and_unit_suffixes(tmp_path):
    path = write(tmp_path, ["UTC,Body, Hs (° ′) ,Eye Height (m),DR Lat,DR-Lon,Index Error (′),Course (°T),Speed (kn)",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,1.4 on,215,6.5"])
    log = read_sight_log(path)
    assert log.rejected.empty, log.rejected
    row = log.sights.iloc[0]
    assert row.eye_height_m == 2.8 and row.index_error_arcmin == 1.4 and row.course_deg == 215


@pytest.mark.parametrize("header, fragment", [
    ("utc,body,hs,eye height,dr_lat,dr_lon", "gives no unit"),
    ("utc,body,hs,eye height (yd),dr_lat,dr_lon", "unit 'yd'"),
    ("utc,body,hs,eye_height_m,lat,lon", "DR latitude (dr_lat) or a chart/GNSS latitude"),
    ("time,body,hs,eye_height_m,dr_lat,dr_lon", "head it 'Zone time'"),
])
def test_ambiguous_headers_are_refused(tmp_path, header, fragment):
    with pytest.raises(LogbookError, match=re.escape(fragment)):
        read_sight_log(write(tmp_path, [header, "2026-03-26T19:41:00Z,Sirius,30,2.8,43 N,13 W"]))


def test_eye_height_in_feet_and_weather_in_other_units_are_converted(tmp_path):
    # 1 ft = 0.3048 m; °C = (°F − 32) × 5/9; 1 inHg = 33.8639 hPa; 1 mmHg = 1.33322 hPa (NIST SP 811; from memory)
    path = write(tmp_path, ["utc,body,hs,eye height (ft),temperature (°F),pressure (inHg),dr_lat,dr_lon",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,10,50,29.92,43 14 N,13 04 W"])
    row = read_sight_log(path).sights.iloc[0]
    assert row.eye_height_m == pytest.approx(3.048)
    assert row.temperature_c == pytest.approx(10.0)
    assert row.pressure_hpa == pytest.approx(1013.21, abs=0.01)
    assert row.eye_height_as_given == "10 feet" and row.pressure_as_given == "29.92 inHg"
    mm = read_sight_log(write(tmp_path, ["utc,body,hs,eye_height_m,pressure_mmhg,dr_lat,dr_lon",
                                         "2026-03-26T19:41:00Z,Sirius,30 02.4,3,760,43 14 N,13 04 W"], "mm.csv"))
    assert mm.sights.pressure_hpa[0] == pytest.approx(1013.25, abs=0.01)
    hot = read_sight_log(write(tmp_path, ["utc,body,hs,eye_height_ft,temperature_f,dr_lat,dr_lon",
                                          "2026-03-26T19:41:00Z,Sirius,30 02.4,4000,150,43 14 N,13 04 W"], "hot.csv"))
    text, columns = reasons(hot, 2)
    assert columns == {"eye_height_ft", "temperature_f"} and "4000 feet (1219 metres)" in text


def test_two_columns_for_one_quantity_take_one_value_per_row(tmp_path):
    path = write(tmp_path, ["utc,body,hs,eye_height_m,eye height (ft),dr_lat,dr_lon",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,,43 14 N,13 04 W",
                            "2026-03-26T19:42:00Z,Sirius,30 02.4,,10,43 14 N,13 04 W",
                            "2026-03-26T19:43:00Z,Sirius,30 02.4,2.8,10,43 14 N,13 04 W"])
    log = read_sight_log(path)
    assert log.sights.eye_height_m.tolist() == pytest.approx([2.8, 3.048])
    assert "two values for eye height" in reasons(log, 4)[0]


# --- several logs at once --------------------------------------------------------------

def test_several_logs_and_a_folder_keep_each_rows_file_and_number(tmp_path):
    folder = tmp_path / "class"
    folder.mkdir()
    header = "utc,body,hs,eye_height_m,dr_lat,dr_lon,observer,fix_group"
    write(folder, [header, "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,Cadet  ansel,stars",
                   "2026-03-26T19:43:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,cadet Ansel,stars"], "ansel.csv")
    write(folder, [header, "2026-03-26T19:41:30Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,Cadet Birch,stars",
                   "2026-03-26T19:42:00Z,Sirus,30 02.4,2.8,43 14 N,13 04 W,Cadet Birch,stars"], "birch.csv")
    log = read_sight_log(folder)
    assert len(log.sources) == 2 and len(log.table) == 4
    assert [(s.rsplit("/", 1)[-1], r) for s, r in zip(log.sights.source, log.sights.row)] == \
        [("ansel.csv", 2), ("ansel.csv", 3), ("birch.csv", 2)]
    assert log.rejected.source.str.endswith("birch.csv").all() and list(log.rejected.row) == [3]
    assert log.sights.observer.tolist() == ["Cadet ansel", "Cadet ansel", "Cadet Birch"]  # one cadet, one name
    # one label in two files is two fix groups
    assert log.sights.fix_group.tolist() == ["ansel.csv: stars", "ansel.csv: stars", "birch.csv: stars"]
    listed = read_sight_log([folder / "ansel.csv", folder / "birch.csv"])
    pd.testing.assert_frame_equal(listed.table, log.table)


def test_automatic_fix_groups_are_one_observers_sights_within_two_hours(tmp_path):
    path = write(tmp_path, ["UTC,Body,HS,Eye_Height_M,DR_Lat,DR_Lon,Observer",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,A",
                            "2026-03-26T20:41:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,A",
                            "2026-03-26T19:45:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,B",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,A"])
    groups = read_sight_log(path).sights.fix_group.tolist()
    assert groups[0] == groups[1] == "2026-03-26 1941Z A"
    assert groups[2] == "2026-03-26 1945Z B" and groups[3] == "2026-03-27 0500Z A"


def test_two_ships_sights_are_never_one_fix_group(tmp_path):
    # two ships' officers of the watch, both logged as "OOW", at the same minute with no fix group written:
    # two groups, named by their ship; a label written alike by both ships is two groups too
    path = write(tmp_path, ["UTC,Body,HS,Eye_Height_M,DR_Lat,DR_Lon,Observer,Vessel,Fix_Group",
                            "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,OOW,Alba,",
                            "2026-03-26T19:44:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,OOW,Alba,",
                            "2026-03-26T19:41:00Z,Sirius,40 02.4,2.8,12 14 S,80 04 E,OOW,Brise,",
                            "2026-03-26T19:43:00Z,Vega,20 02.4,2.8,12 14 S,80 04 E,OOW,Brise,",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,OOW,Alba,dawn",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,12 14 S,80 04 E,OOW,Brise,dawn"])
    groups = read_sight_log(path).sights.fix_group.tolist()
    assert groups[:4] == ["Alba: 2026-03-26 1941Z OOW"] * 2 + ["Brise: 2026-03-26 1941Z OOW"] * 2
    assert groups[4:] == ["Alba: dawn", "Brise: dawn"]
    # a label only one ship uses, or a row naming no ship, keeps its label as written
    path = write(tmp_path, ["UTC,Body,HS,Eye_Height_M,DR_Lat,DR_Lon,Observer,Vessel,Fix_Group",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,43 14 N,13 04 W,OOW,Alba,dawn",
                            "2026-03-27T05:02:00Z,Deneb,30 02.4,2.8,43 14 N,13 04 W,OOW,,dawn",
                            "2026-03-27T05:00:00Z,Vega,30 02.4,2.8,12 14 S,80 04 E,OOW,Brise,dusk"])
    assert read_sight_log(path).sights.fix_group.tolist() == ["dawn", "dawn", "dusk"]


# --- files that are not sight logs --------------------------------------------------------

@pytest.mark.parametrize("content, fragment", [
    (b"", "empty"),
    (b"\x00\x01\x02binary\xff\xfe", "binary"),
    (b"name,age\nAnn,34\n", "not a sight log: none of its columns \\('name', 'age'\\)"),
    (b"name;age\nAnn;34\n", "semicolon-separated"),
    (b"PK\x03\x04not really a zip", "zip archive"),
    (b"\x1f\x8b\x08\x00compressed", "gzip"),
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
    with pytest.raises(LogbookError, match="no sight logs in it"):
        read_sight_log(tmp_path / "nothing" if (tmp_path / "nothing").mkdir() is None else tmp_path)


def test_xlsx_with_merged_header_cells_is_refused(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["Sights", None, None, "hs", "dr_lat", "dr_lon"])
    sheet.merge_cells("A1:C1")
    sheet.append(["2026-03-26T19:41:00Z", "Sirius", "", "30 02.4", "43 14 N", "13 04 W"])
    path = tmp_path / "merged.xlsx"
    book.save(path)
    with pytest.raises(LogbookError, match="merged header"):
        read_sight_log(path)


def test_xlsx_and_csv_demo_read_the_same():
    csv_sights = read_sight_log("sample_sights/demo_sights.csv").sights
    xlsx_sights = read_sight_log("sample_sights/demo_sights.xlsx").sights
    pd.testing.assert_frame_equal(csv_sights[FIX_COLUMNS], xlsx_sights[FIX_COLUMNS])


def test_a_dataframe_is_read_by_the_same_rules():
    frame = demo_rows()
    from_frame = read_sight_log(frame).sights
    plain = read_sight_log("sample_sights/demo_sights.csv").sights
    pd.testing.assert_frame_equal(from_frame[FIX_COLUMNS], plain[FIX_COLUMNS])
    assert from_frame.row.tolist() == list(range(1, len(frame) + 1))  # a table's rows by position


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
    log = read_sight_log(path)
    records = list(csv.reader(io.StringIO(out.getvalue())))
    data_rows = {k + 1 for k, record in enumerate(records) if k > 0 and any(c.strip() for c in record)}
    accounted = set(log.sights["row"]) | set(log.rejected["row"])
    assert accounted == data_rows
    assert not (set(log.sights["row"]) & set(log.rejected["row"]))
    assert {2, len(records)} <= set(log.sights["row"])
    assert log.rejected.reason.map(lambda r: isinstance(r, str) and len(r) > 5).all()
    assert list(log.rejected.columns) == ["source", "row", "column", "value", "reason"]
    good = log.sights[log.sights.row.isin([2, len(records)])]
    assert np.allclose(good.hs_deg, 30 + 2.4 / 60)


@pytest.mark.parametrize("copies", [1, 400])  # a short table (str.split) and a long one (pandas' C parser)
@pytest.mark.parametrize("separator", [",", ";", "\t"])
def test_a_plain_file_splits_as_the_csv_module_splits_it(tmp_path, separator, copies):
    # issue 13: a file with no quote and no control character is split by str.split (up to
    # SPLIT_BY_PYTHON_ROWS rows) or pandas' C parser; every cell and every row number must be what Python's
    # csv module (the standard library's reference reader) gives, blank lines and lines of separators skipped,
    # spaces kept
    from navred.io.readers import SPLIT_BY_PYTHON_ROWS, read_table

    header = ["utc", "body", "hs", "dr_lat", "dr_lon", "remarks"]
    rows = [["2026-03-26T09:10:00Z", "Sun", "25 03.1", "44 10.1 N", "012 09.3 W", "  spaced  "],
            [], [""] * 6, ["2026-03-26T12:56:03Z", " Moon", "48 16.0", "43 50.1 N", "012 28.9 W", "a'b′c"],
            ["2026-03-26T15:40:00Z", "Vega", "", "", "", ""], ["  "], ["x", "y", "z", "1", "2", "#not a comment"]]
    rows = rows * copies
    assert (len(rows) > SPLIT_BY_PYTHON_ROWS) == (copies > 1)
    text = "\n".join(separator.join(r) for r in [header] + rows) + "\n"
    path = tmp_path / "plain.csv"
    path.write_text(text, encoding="utf-8")
    table = read_table(path)[0]
    expected = [(k + 1, r) for k, r in enumerate(csv.reader(io.StringIO(text), delimiter=separator))
                if k and any(c.strip() for c in r)]
    assert table.row_numbers.tolist() == [n for n, _ in expected]
    cells = [list(row) for row in zip(*(c.tolist() for c in table.columns))]
    assert cells == [r for _, r in expected]
    assert table.empty_rows == 3 * copies


def test_a_log_read_in_blocks_is_the_log_read_whole(tmp_path):
    # issue 13: navred reduce --csv reads a long log in blocks (logbook.read_sight_log_blocks); the blocks
    # together must hold exactly the rows, values and rejections the one reader gives. The training voyage
    # (every row names its fix group) in blocks of 50 rows, with a few bad rows planted; and a log whose
    # rows do not all name their group, which is read whole
    from navred.io.logbook import read_sight_log_blocks

    frame = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False)
    frame.loc[7, "hs"] = "95 00"
    frame.loc[120, "dr_lat"] = "44 30"
    frame.loc[300, "utc"] = "2026-02-30T10:00:00Z"
    path = tmp_path / "log.csv"
    frame.to_csv(path, index=False)
    whole = read_sight_log(path)
    blocks = list(read_sight_log_blocks(path, block_rows=50))
    assert len(blocks) == 9
    joined = pd.concat([b.table for b in blocks], ignore_index=True)
    pd.testing.assert_frame_equal(joined, whole.table, check_dtype=False)  # the values; text columns' dtype aside
    rejected = pd.concat([b.rejected for b in blocks], ignore_index=True)
    pd.testing.assert_frame_equal(rejected, whole.rejected.reset_index(drop=True), check_dtype=False)
    frame.loc[200, "fix_group"] = ""
    frame.to_csv(path, index=False)
    assert len(list(read_sight_log_blocks(path, block_rows=50))) == 1  # an automatic group: read whole


def _spreadsheet_with_shared_text(path):
    """A workbook as spreadsheet programs save one (ECMA-376): shared text (plain, in runs, with a phonetic
    guide), the 1904 date system, a built-in and a custom date format, a hidden sheet, a boolean, an error, a
    formula with its saved value, an ISO date cell."""
    import zipfile

    main = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'
    rel = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"'
    kinds = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
    parts = {
        "[Content_Types].xml": '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
                               '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
                               'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>'
                               '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-'
                               'officedocument.spreadsheetml.sheet.main+xml"/>'
                               + "".join(f'<Override PartName="/xl/{p}" ContentType="application/vnd.openxmlformats-'
                                         f'officedocument.spreadsheetml.{k}+xml"/>' for p, k in (
                                             ("worksheets/sheet1.xml", "worksheet"), ("worksheets/sheet2.xml",
                                                                                      "worksheet"),
                                             ("sharedStrings.xml", "sharedStrings"), ("styles.xml", "styles")))
                               + "</Types>",
        "_rels/.rels": '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                       f'<Relationship Id="rId1" Type="{kinds}/officeDocument" Target="xl/workbook.xml"/>'
                       "</Relationships>",
        "xl/workbook.xml": f'<workbook {main} {rel}><workbookPr date1904="1"/><sheets>'
                           '<sheet name="Log" sheetId="1" r:id="rId1"/>'
                           '<sheet name="Lists" sheetId="2" state="hidden" r:id="rId2"/></sheets></workbook>',
        "xl/_rels/workbook.xml.rels":
            '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            f'<Relationship Id="rId1" Type="{kinds}/worksheet" Target="worksheets/sheet1.xml"/>'
            f'<Relationship Id="rId2" Type="{kinds}/worksheet" Target="/xl/worksheets/sheet2.xml"/>'
            f'<Relationship Id="rId3" Type="{kinds}/sharedStrings" Target="sharedStrings.xml"/>'
            f'<Relationship Id="rId4" Type="{kinds}/styles" Target="styles.xml"/></Relationships>',
        "xl/sharedStrings.xml": f'<sst {main} count="4" uniqueCount="4"><si><t>utc</t></si><si><t>Sirius</t></si>'
                                '<si><r><t>Cadet </t></r><r><rPr><b/></rPr><t>Zoë</t></r></si>'
                                '<si><t>Kaito</t><rPh sb="0" eb="1"><t>カイト</t></rPh></si></sst>',
        "xl/styles.xml": f'<styleSheet {main}><numFmts count="1"><numFmt numFmtId="164" formatCode="yyyy-mm-dd hh:mm"/>'
                         '</numFmts><cellStyleXfs count="1"><xf numFmtId="14"/></cellStyleXfs><cellXfs count="3">'
                         '<xf numFmtId="0"/><xf numFmtId="14"/><xf numFmtId="164"/></cellXfs></styleSheet>',
        "xl/worksheets/sheet1.xml": f'<worksheet {main}><sheetData>'
                                    '<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c></row>'
                                    '<row r="3"><c r="A3" s="2"><v>44646.8201388889</v></c><c r="B3" s="1"><v>3</v>'
                                    '</c><c r="C3" t="s"><v>2</v></c><c r="D3" t="s"><v>3</v></c>'
                                    '<c r="E3" t="b"><v>1</v></c><c r="F3" t="e"><v>#N/A</v></c>'
                                    '<c r="G3"><f>1+1</f><v>2</v></c><c r="H3" t="str"><f>"a"</f><v>a</v></c>'
                                    '<c r="I3" t="d"><v>2026-03-26T19:41:00</v></c><c r="J3" s="0"><v>2.5</v></c>'
                                    '</row></sheetData></worksheet>',
        "xl/worksheets/sheet2.xml": f'<worksheet {main}><sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>x</t>'
                                    '</is></c></row></sheetData></worksheet>',
    }
    with zipfile.ZipFile(path, "w") as archive:
        for name, text in parts.items():
            archive.writestr(name, '<?xml version="1.0" encoding="UTF-8"?>' + text)


@pytest.mark.filterwarnings("ignore:Workbook contains no default style")  # openpyxl, of the hand-made workbook
def test_the_sheet_reader_reads_every_cell_as_openpyxl_does(tmp_path):
    # navred reads a workbook itself (navred.io.sheetreader) so that a damaged cell costs its row alone and a big
    # sheet is not parsed before it is counted; on sound workbooks (the demo, the class's workings, a workbook
    # navred wrote with dates, numbers and text, one saved with shared text and a hidden sheet) every sheet and
    # value is the one openpyxl's read-only, data-only reading gives (the general-purpose reference)
    import zipfile

    import openpyxl

    from navred.io.sheetreader import open_workbook, read_sheet_cells
    from navred.jobs.voyage import process_log
    from navred.jobs.voyagebook import write_workbook

    written = tmp_path / "demo.navred.xlsx"
    write_workbook(process_log("sample_sights/demo_sights.csv", plan=False), written, plots=False)
    saved = tmp_path / "shared.xlsx"
    _spreadsheet_with_shared_text(saved)
    compared = 0
    for path in ("sample_sights/demo_sights.xlsx", "sample_sights/class_workings.xlsx", written, saved):
        reference = openpyxl.load_workbook(path, read_only=True, data_only=True)
        with zipfile.ZipFile(path) as archive:
            book = open_workbook(archive)
            assert book.sheetnames == reference.sheetnames
            assert [s.state for s in book.sheets] == [reference[n].sheet_state for n in reference.sheetnames]
            assert book.epoch == reference.epoch
            entries = {s.name: s for s in book.sheets}
            for name in reference.sheetnames:
                expected = {}
                for number, row in enumerate(reference[name].iter_rows(values_only=True), start=1):
                    for column, value in enumerate(row, start=1):
                        if value is not None:
                            expected[(number, column)] = value
                cells = read_sheet_cells(book, entries[name], archive, take_cells=lambda n: None)
                got = {(number, column): value for number, values in cells.rows
                       for column, value in enumerate(values, start=1) if value is not None}
                if path == saved and name == "Log":  # an error cell is named as unreadable, not read as text
                    assert got.pop((3, 6)).reason.startswith("the spreadsheet shows the error #N/A")
                    assert expected.pop((3, 6)) == "#N/A"
                assert got == expected, (path, name)
                compared += len(got)
        reference.close()
    assert compared > 1500


# --- issue 19 item 6 and issue 20 item 2: every column named, nothing dropped without a word --------------

DEMO = "sample_sights/demo_sights.csv"


def demo_with(tmp_path, rename=None, extra=None, name="log.csv"):
    """The demo log with a column renamed or added (header: values for every row)."""
    frame = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    if rename:
        frame = frame.rename(columns=rename)
    for header, value in (extra or {}).items():
        frame[header] = value
    path = tmp_path / name
    frame.to_csv(path, index=False)
    return path


def test_columns_navred_does_not_read_are_named_in_a_note(tmp_path):
    log = read_sight_log(demo_with(tmp_path, extra={"remarks": "calm", "sextant": "No. 2"}))
    assert len(log.sights) == 11
    assert log.notes == ("log.csv: columns navred does not read, kept as text: 'remarks', 'sextant'",)
    assert "remarks" in log.extra_columns  # kept as text, for the Working sheet
    # a column of the navigator's own that looks like a correction is kept when its name says so
    kept = read_sight_log(demo_with(tmp_path, extra={"note sea temp": "14"}, name="own.csv"))
    assert kept.notes == ("own.csv: column navred does not read, kept as text: 'note sea temp'",)


@pytest.mark.parametrize("header, expected", [
    ("IC", "index_error (arcminutes with their side: '1.4 on'"),
    ("Index corr", "an index correction is the index error with its sign changed"),
    ("I.E.", "index_error"),
    ("Air temp F", "temperature (C) or temperature (F)"),
    ("index_eror_arcmin", "index_error"),
    ("temprature_c", "temperature (C)"),
    ("height", "eye_height (m) or eye_height (ft)"),
    ("Chrono err", "watch_error"),
    ("barometric_hpa", "pressure (hPa)"),
    ("obsever", "is it 'observer'?"),
    ("fix_gruop", "is it 'fix_group'?"),
])
def test_a_column_that_looks_like_a_correction_is_refused_with_the_name_navred_expects(tmp_path, header, expected):
    # read by no rule, such a column was dropped and its default used (0′ of index error, 10 °C): 1.4 nm
    with pytest.raises(LogbookError) as refusal:
        read_sight_log(demo_with(tmp_path, extra={header: "1.4"}))
    message = str(refusal.value)
    assert f"column {header!r}" in message and expected in message and "\n" not in message


@pytest.mark.parametrize("header", ["speed_made_good", "Speed made good (kn)", "SOG", "COG", "SMG", "CMG",
                                    "course made good", "Speed over ground", "ground speed", "GPS speed"])
def test_a_made_good_column_is_never_read_as_the_speed_or_course_through_the_water(tmp_path, header):
    """A speed made good already holds the current: read as the speed through the water with a current entered, the
    current would be counted twice (common practice: the current triangle). Refused, saying what to give."""
    with pytest.raises(LogbookError) as refusal:
        read_sight_log(demo_with(tmp_path, extra={header: "6.5"}))
    message = str(refusal.value)
    assert f"column {header!r}" in message and "made good over the ground" in message
    assert "speed (through the water)" in message and "\n" not in message


def test_no_spelling_of_a_column_through_the_water_names_a_made_good_quantity():
    from navred.vocabulary import COLUMN, MADE_GOOD_HEADERS

    for key in ("course", "speed"):
        for spelling in COLUMN[key].spellings:
            assert not MADE_GOOD_HEADERS.fullmatch(spelling), (key, spelling)


def test_a_repeated_column_reads_as_one_where_it_agrees(tmp_path):
    lines = ["utc,body,hs,eye_height_m,dr_lat,dr_lon,hs",
             "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,30 02.4",
             "2026-03-26T19:42:00Z,Sirius,30 03.4,2.8,43 14 N,13 04 W,30 09.9",
             "2026-03-26T19:43:00Z,Sirius,30 04.4,2.8,43 14 N,13 04 W,"]
    log = read_sight_log(write(tmp_path, lines))
    assert list(log.sights.row) == [2, 4]  # agreeing, and given once: read; disagreeing: refused by name
    assert "two values for hs: 'hs' '30 03.4' and 'hs' '30 09.9'" in reasons(log, 3)[0]
    assert log.notes == ("log.csv: columns C and G are all headed 'hs': read as one where they agree; a row where "
                         "they differ is rejected",)


def test_a_value_right_of_the_last_header_rejects_its_row_by_name(tmp_path):
    # the same row in CSV (a field too many) and in .xlsx (a cell with no header): both rejected, named
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["utc", "body", "hs", "eye_height_m", "dr_lat", "dr_lon"])
    sheet.append(["2026-03-26T19:41:00Z", "Sirius", "30 02.4", 2.8, "43 14 N", "13 04 W"])
    sheet.append(["2026-03-26T19:42:00Z", "Sirius", "30 03.4", 2.8, "43 14 N", "13 04 W", None, "13 05 W"])
    book.save(tmp_path / "log.xlsx")
    log = read_sight_log(tmp_path / "log.xlsx")
    assert list(log.sights.row) == [2]
    text, columns = reasons(log, 3)
    assert columns == {"H"} and "a value ('13 05 W') in column H, right of the last header (F 'dr_lon')" in text
    csv_log = read_sight_log(write(tmp_path, ["utc,body,hs,eye_height_m,dr_lat,dr_lon",
                                              "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W",
                                              "2026-03-26T19:42:00Z,Sirius,30 03.4,2.8,43 14 N,13 04 W,,13 05 W"]))
    assert list(csv_log.sights.row) == [2] and "row has 8 fields where the header has 6" in reasons(csv_log, 3)[0]


def test_text_is_decoded_cell_by_cell(tmp_path):
    # a UTF-8 log with one byte that is not UTF-8: that cell's row alone is refused, named, and every other
    # cell keeps its own text (Zoë stays Zoë, 44° 10.1′ N stays an angle)
    lines = ["utc,body,hs,eye_height_m,dr_lat,dr_lon,observer",
             "2026-03-26T19:41:00Z,Sirius,30° 02.4′,2.8,43° 14′ N,13° 04′ W,Zoë",
             "2026-03-26T19:42:00Z,Sirius,30° 03.4′,2.8,43° 14′ N,13° 04′ W,Zoë"]
    data = ("\n".join(lines) + "\n").encode("utf-8")
    data = data.replace("Zoë\n".encode(), b"Zo\xeb\n", 1)  # one cell typed in another code page
    path = tmp_path / "mixed.csv"
    path.write_bytes(data)
    log = read_sight_log(path)
    assert list(log.sights.row) == [3] and log.sights.observer.tolist() == ["Zoë"]
    assert log.sights.hs_deg.tolist() == pytest.approx([30 + 3.4 / 60])
    text, columns = reasons(log, 2)
    assert columns == {"observer"} and "the byte 0xEB, which is not UTF-8 like the rest of the file" in text
    # a file with nothing of UTF-8 in it is an 8-bit file of a spreadsheet on Windows: read, and noted
    legacy = tmp_path / "legacy.csv"
    legacy.write_bytes(("\n".join(lines) + "\n").replace("′", "'").encode("cp1252"))
    old = read_sight_log(legacy)
    assert old.sights.observer.tolist() == ["Zoë", "Zoë"] and len(old.rejected) == 0
    assert any("read as Windows-1252" in note for note in old.notes)


def test_horizon_none_is_refused_with_what_to_write(tmp_path):
    log = read_sight_log(write(tmp_path, ["utc,body,hs,eye_height_m,dr_lat,dr_lon,horizon",
                                          "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,none",
                                          "2026-03-26T19:42:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,"]))
    assert list(log.sights.row) == [3] and log.sights.horizon.tolist() == ["sea"]
    assert "write bubble" in reasons(log, 2)[0]


def test_a_blank_course_or_speed_is_carried_from_the_row_before_or_refused_by_name(tmp_path):
    # issue 20: a blank speed in a running fix was taken as 0 kn (a 191 x 174 nm ellipse, every sight flagged);
    # now it is carried from the last row that gives one, named, or refused where no row before gives one
    frame = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    frame.loc[1, "speed_kn"] = ""  # row 3, in the Sun-run-Sun: carried from row 2
    frame.loc[7, "course_deg"] = ""  # row 9, a star of the evening round: carried from row 8
    frame.to_csv(tmp_path / "carried.csv", index=False)
    log = read_sight_log(tmp_path / "carried.csv")
    assert len(log.sights) == 11
    notes = log.table.set_index("row").motion_carried_from
    assert notes[3] == "speed 6.5 kn carried from row 2" and notes[9] == "course 215° carried from row 8"
    assert (notes.drop([3, 9]) == "").all()
    plain = process_log(DEMO, plan=False).group("sun-run-sun").fix
    carried = process_log(log, plan=False).group("sun-run-sun").fix
    assert abs(carried.lat_deg - plain.lat_deg) < 1e-9 and abs(carried.lon_deg - plain.lon_deg) < 1e-9
    # the first sight of the run has nothing before it: refused, named, rather than read as a ship stopped
    frame.loc[0, "speed_kn"] = ""
    frame.to_csv(tmp_path / "refused.csv", index=False)
    refused = read_sight_log(tmp_path / "refused.csv")
    text, columns = reasons(refused, 2)
    assert columns == {"speed_kn"} and "no row before gives one" in text and "running fix (sun-run-sun)" in text
    assert refused.table.set_index("row").motion_carried_from[3] == ""  # row 3 is now refused too: nothing before
    assert set(refused.rejected.row) == {2, 3}


@pytest.mark.parametrize("scan_bytes,line_end", [(777, "\n"), (1 << 20, "\n"), (777, "\r\n"), (1 << 20, "\r\n")])
def test_a_long_log_is_looked_at_in_pieces_and_its_blocks_read_from_the_file(tmp_path, monkeypatch, scan_bytes,
                                                                             line_end):
    """navred reduce --csv never holds a long log whole: the file is looked at a piece at a time (pieces that
    cut lines in two here), and each block is read from the file by whoever works it. Blank lines (of
    separators, of spaces), a byte-order mark, blank lines before the header, names beyond ASCII, a last
    line without its line end and lines ended as a spreadsheet on Windows ends them (CR LF) read as the one
    reader reads the whole file; a fix group left blank (by a space beyond ASCII too) makes the log read
    whole, and so do line ends of both kinds in one file."""
    from navred.io import readers
    from navred.io.logbook import read_sight_log_blocks

    monkeypatch.setattr(readers, "SCAN_BYTES", scan_bytes)
    frame = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False).iloc[:230]
    frame.loc[11, "observer"] = "Zoë Ångström"
    frame.loc[40, "hs"] = "95 00"
    lines = frame.to_csv(index=False).splitlines()
    lines[60:60] = [",,,,", "   "]  # blank rows, kept in the rows' numbering
    text = "\ufeff" + line_end * 2 + line_end.join(lines)  # no line end after the last row
    path = tmp_path / "log.csv"
    path.write_bytes(text.encode("utf-8"))
    whole = read_sight_log(path)
    plain = readers.plain_csv_blocks(path, 50)
    assert not hasattr(plain, "lines") and len(plain.offsets) == len(plain) + 1
    blocks = list(read_sight_log_blocks(path, block_rows=50))
    assert len(blocks) == 5 and sum(b.empty_rows for b in blocks) == whole.empty_rows == 2
    joined = pd.concat([b.table for b in blocks], ignore_index=True)
    pd.testing.assert_frame_equal(joined, whole.table, check_dtype=False)
    rejected = pd.concat([b.rejected for b in blocks], ignore_index=True)
    pd.testing.assert_frame_equal(rejected, whole.rejected.reset_index(drop=True), check_dtype=False)
    for blank in ("", "\u00a0"):
        changed = frame.copy()
        changed.loc[150, "fix_group"] = blank
        path.write_text(changed.to_csv(index=False), encoding="utf-8")
        assert len(list(read_sight_log_blocks(path, block_rows=50))) == 1  # an automatic group: read whole
    mixed = text.replace(line_end, "\r\n" if line_end == "\n" else "\n", 7)
    path.write_bytes(mixed.encode("utf-8"))
    assert readers.plain_csv_blocks(path, 50) is None and len(list(read_sight_log_blocks(path, block_rows=50))) == 1


def test_a_blank_dr_is_carried_from_the_row_before_as_its_course_and_speed_are(tmp_path):
    # the navigator's trial: a blank course and speed were carried from the row above, a blank DR refused. Now the
    # DR given on the row before is carried on along the course and speed in force, and named. Reference: the
    # rhumb line sailed in the test (tests/conftest.py rhumb_integrated, RK4 on WGS 84) from row 2's DR.
    from tests.conftest import rhumb_integrated

    frame = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    frame.loc[1, ["dr_lat", "dr_lon"]] = ""  # row 3, the 12:56 Sun: its DR left blank
    frame.to_csv(tmp_path / "blank_dr.csv", index=False)
    log = read_sight_log(tmp_path / "blank_dr.csv")
    assert log.rejected.empty
    row = log.table.set_index("row").loc[3]
    assert row.dr_carried_from == "carried from the DR at row 2"
    hours = (pd.Timestamp("2026-03-26T12:56:03Z") - pd.Timestamp("2026-03-26T09:10:00Z")).total_seconds() / 3600
    lat, lon = rhumb_integrated(44 + 10.1 / 60, -(12 + 9.3 / 60), 215.0, 6.5 * hours)  # row 2: 44 10.1 N 012 09.3 W
    assert abs(row.dr_lat_deg - float(lat)) * 60 < 0.05
    assert abs(row.dr_lon_deg - float(lon)) * 60 * np.cos(np.radians(float(lat))) < 0.05


def test_a_blank_index_error_is_said_to_be_taken_as_nil(tmp_path):
    frame = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    frame.loc[[0, 4], "index_error_arcmin"] = ""
    frame.to_csv(tmp_path / "blank_ie.csv", index=False)
    log = read_sight_log(tmp_path / "blank_ie.csv")
    assert any("index error blank on row 2, row 6: IE 0′ assumed" in note for note in log.notes)
    assert not any("index error" in note for note in read_sight_log(DEMO).notes)


def test_a_blank_watch_error_in_zone_time_is_said_to_be_taken_as_nil(tmp_path):
    # trial finding: a blank watch-error cell was taken as 0 s without a word (a blank IE is said; so is this)
    path = write(tmp_path, [ZONE_HEADER, zone_row(), zone_row(error=""), zone_row(error="0 s")])
    log = read_sight_log(path)
    assert [n for n in log.notes if "watch error blank" in n] == [
        "watch error blank on row 3: the time taken as read, 0 s fast or slow assumed (write 0 s where the watch is "
        "right; 1 s of time is 0.25′ of longitude)"]
    assert not any("watch error blank" in n for n in read_sight_log(write(tmp_path, [ZONE_HEADER, zone_row()])).notes)


def test_hand_kept_slips_of_the_marks_and_the_index_error_are_refused_or_warned_by_row(tmp_path):
    """The demo's hand-kept log (invented) with two slips a navigator makes: Hs written 25° 03.1" (a double
    quote for the minutes mark) is refused by its row naming both readings, never read as 3.1 seconds; IE
    written '14 on' (for 1.4) is reduced with 14′ and warned about (common practice: an index error over a few
    minutes is adjusted out). The other rows reduce as before, every command reading them alike."""
    from navred.jobs.reducing import reduce_log

    log = pd.read_csv("sample_sights/demo_sights_hand_kept.csv", dtype=str, keep_default_na=False)
    log.loc[0, "Hs"] = '25° 03.1"'
    log.loc[1, "IE"] = "14 on"
    log.to_csv(tmp_path / "slips.csv", index=False)
    plain = reduce_log("sample_sights/demo_sights_hand_kept.csv").reduced
    done = reduce_log(tmp_path / "slips.csv").reduced
    assert done.loc[0, "status"] == "error" and done.loc[0, "row"] == 2 and done.loc[0, "error_column"] == "Hs"
    assert "25° 03.1′ (the mark meant for minutes) or 25° 00′ 03.1″ (the minutes left out)" in done.loc[0, "message"]
    assert done.loc[1, "status"] == "warning" and done.loc[1, "index_error_arcmin"] == 14.0
    assert "index error 14.0′ on the arc is unusually large" in done.loc[1, "message"]
    # 14′ on the arc instead of 1.4′: the index correction 12.6′ more, Ho about 12.6′ lower (refraction at the
    # lower altitude differs by a few hundredths of a minute)
    assert done.loc[1, "ic_arcmin"] == -14.0 and plain.loc[1, "ic_arcmin"] == -1.4
    assert (plain.loc[1, "ho_deg"] - done.loc[1, "ho_deg"]) * 60 == pytest.approx(12.6, abs=0.02)
    pd.testing.assert_series_equal(plain.ho_deg.iloc[2:], done.ho_deg.iloc[2:])


# --- an index error with no on or off --------------------------------------------------------------------------

IE_ROW = "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W,{}"


def ie_log(tmp_path, header, cells):
    return read_sight_log(write(tmp_path, [f"utc,body,hs,eye_height_m,dr_lat,dr_lon,{header}"]
                                + [IE_ROW.format(c) for c in cells]))


@pytest.mark.parametrize("cell", ["1.4", "+1.4", "-1.4", "1.4′", "−1.4"])
def test_a_bare_index_error_is_refused_naming_on_and_off_the_arc(tmp_path, cell):
    """Textbooks write the index error's sign both ways (common practice): a bare '1.4' is 1.4′ on or off the
    arc, 2.8′ apart (nearly 3 nm), so it is refused by its row naming both readings and how to say which."""
    log = ie_log(tmp_path, "IE", [cell])
    assert log.sights.empty and list(log.rejected.row) == [2]
    reason = log.rejected.iloc[0]["reason"]
    assert "has no on or off" in reason and "1.4′ on the arc" in reason and "1.4′ off the arc" in reason
    assert "'IE (on +)'" in reason and "index_error_arcmin, ON the arc positive" in reason


def test_a_bare_index_error_in_a_number_cell_is_refused_too(tmp_path):
    """A spreadsheet's number cell drops a written +: no sign to trust, refused the same way (common practice)."""
    frame = pd.DataFrame({"utc": ["2026-03-26T19:41:00Z"] * 3, "body": ["Sirius"] * 3, "hs": [30.04] * 3,
                          "eye_height_m": [2.8] * 3, "dr_lat": [43.23] * 3, "dr_lon": [-13.07] * 3,
                          "IE": [1.4, -0.5, 0.0]})
    log = read_sight_log(frame)
    assert list(log.sights.index_error_arcmin) == [0.0]  # zero needs no sign
    assert list(log.rejected.row) == [1, 2]  # a DataFrame's rows counted from 1
    assert "0.5′ off the arc (read with on +) or 0.5′ on the arc (read with off +)" in log.rejected.iloc[1]["reason"]
    assert "write '0.5 on' or '0.5 off'" in log.rejected.iloc[1]["reason"]
    # the API's name states the sign (ON the arc positive, as documented): read as it stands
    named = read_sight_log(frame.rename(columns={"IE": "index_error_arcmin"}))
    assert named.rejected.empty and list(named.sights.index_error_arcmin) == [1.4, -0.5, 0.0]


@pytest.mark.parametrize("header, expected", [
    ("IE (on +)", [1.4, -1.4, 0.0, 1.4, -0.8]),
    ("Index error (on+)", [1.4, -1.4, 0.0, 1.4, -0.8]),
    ("IE (off −)", [1.4, -1.4, 0.0, 1.4, -0.8]),
    ('"IE (′, off +)"', [-1.4, 1.4, 0.0, 1.4, -0.8]),
    ("Index error (on -)", [-1.4, 1.4, 0.0, 1.4, -0.8]),
    ("index_error_arcmin", [1.4, -1.4, 0.0, 1.4, -0.8]),
])
def test_an_index_error_header_that_states_the_sign_reads_numbers_and_words_win(tmp_path, header, expected):
    """Under a header that states the sign a bare or signed number is read by it; on/off words in a cell win
    over the header (common practice: IE on the arc is subtracted, so ON the arc is the + of an error)."""
    log = ie_log(tmp_path, header, ["1.4", "-1.4", "0", "1.4 on", "0.8 off"])
    assert log.rejected.empty, log.rejected
    assert list(log.sights.index_error_arcmin) == expected
    assert all(np.copysign(1.0, v) == 1.0 for v in log.sights.index_error_arcmin if v == 0)  # no −0.0


def test_an_index_error_header_with_an_unknown_bracket_is_refused(tmp_path):
    with pytest.raises(LogbookError, match="neither arcminutes nor a sign convention"):
        ie_log(tmp_path, "IE (plus)", ["1.4"])


def test_the_unstated_header_reads_on_off_words_and_zero(tmp_path):
    """The unsigned header still reads what has one reading: '1.4 on', '0.8 off' and 0."""
    log = ie_log(tmp_path, "Index error (′)", ["1.4 on", "0.8 off", "0", "1.4 on the arc"])
    assert log.rejected.empty and list(log.sights.index_error_arcmin) == [1.4, -0.8, 0.0, 1.4]


# --- a repeated header row ------------------------------------------------------------------------------------

HAND_HEADER = "Date,Zone time,ZD,Body,Hs,IE,Height of eye (m),DR lat,DR lon"
HAND_ROW = "2026-12-04,06:4{},+10h,Arcturus,42 12.9,0.0,3.0,20 27.7 N,160 19.3 W"


def test_a_repeated_header_row_is_skipped_with_a_note_naming_its_row(tmp_path):
    """Two logs of one layout joined one under the other: the second header (in any case, spaced) is skipped,
    named in a note by its row (not 'cannot read Date as a date', and not counted as a sight); the rows on
    either side are read, '+10h' as zone +10."""
    path = write(tmp_path, [HAND_HEADER, HAND_ROW.format("0:00"), HAND_HEADER, " " + HAND_HEADER.upper(),
                            HAND_ROW.format("1:00")])
    log = read_sight_log(path)
    assert log.rejected.empty and list(log.table.row) == [2, 5]
    assert any(note.endswith("rows 3, 4 repeat the header: skipped (not sights; the rows after them are read by "
                             "the same columns)") for note in log.notes), log.notes
    assert [str(u)[:19] for u in log.sights.sight_utc] == ["2026-12-04 16:40:00", "2026-12-04 16:41:00"]


def test_a_repeated_header_row_in_a_spreadsheet_is_skipped_the_same(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    for line in (HAND_HEADER, HAND_ROW.format("0:00"), HAND_HEADER, HAND_ROW.format("1:00")):
        sheet.append(line.split(","))
    book.save(tmp_path / "joined.xlsx")
    log = read_sight_log(tmp_path / "joined.xlsx")
    assert log.rejected.empty and any("row 3 repeats the header: skipped" in note for note in log.notes)
    assert len(log.sights) == 2 and list(log.sights.row) == [2, 4]


def test_a_row_that_merely_names_a_header_in_one_cell_is_not_a_repeated_header(tmp_path):
    """Only a row whose every filled cell is its column's header is one: a sight with 'Date' typed in its date
    cell is refused as a date, as before."""
    path = write(tmp_path, [HAND_HEADER, HAND_ROW.format("0:00").replace("2026-12-04", "Date", 1)])
    log = read_sight_log(path)
    assert list(log.rejected.row) == [2] and "repeats the header" not in log.rejected.reason.iloc[0]
