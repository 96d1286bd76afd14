"""Degrees and minutes written as a decimal: '35.30' (35.30° or 35° 30′?) and '20.35 N' are refused naming both
readings and how to write each; the forms with one reading are read (degrees and minutes with a space, marks or a
hyphen; decimal degrees where the header declares them, where the number cannot be minutes, or in a DataFrame's
column of numbers).
Three decimals whose first two could be minutes are refused too: '76.380' keyed for 76° 38.0′ (degrees, minutes
and tenths with one point, as calculators and sight books take them). 1° = 60′ throughout  # common practice (sexagesimal degrees)
The logs are written by hand."""

from __future__ import annotations

import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.angles import parse_angle
from navred.cli import app
from navred.io.logbook import read_sight_log
from navred.io.logcells import minutes_as_decimal_refusal

runner = CliRunner()

ROW = "2026-12-04T22:15:00Z,Sun,LL,{hs},1.2 off,3.0,{lat},{lon}"


def log(tmp_path, rows, header="UTC,Body,Limb,Hs,IE,Eye height (m),DR lat,DR lon", name="log.csv"):
    path = tmp_path / name
    path.write_text("\n".join([header, *[ROW.format(**r) for r in rows]]) + "\n", encoding="utf-8")
    return path


def reasons(sight_log) -> list[str]:
    return sight_log.table.loc[sight_log.table.row.isin(sight_log.rejected.row), "read_problem"].tolist()


def test_the_refusal_names_both_readings_and_how_to_write_each():
    # 0.30° = 18.0′ and 0.35° = 21.0′  # common practice (1° = 60′)
    hs = minutes_as_decimal_refusal("35.30", "altitude")
    assert hs.startswith("'35.30' has two readings: 35.30° (= 35° 18.0′) or 35° 30.0′ written with a point?")
    assert "write '35 30.0' or '35° 30.0′'" in hs and "head the column 'Hs (deg)' (or hs_deg)" in hs
    assert "write it with four decimals ('35.3000')" in hs
    lat = minutes_as_decimal_refusal("20.35 N", "lat")
    assert lat.startswith("'20.35 N' has two readings: 20.35° N (= 20° 21.0′ N) or 20° 35.0′ N written with a point?")
    assert "'20 35.0 N'" in lat and "'DR lat (deg)' (or dr_lat_deg)" in lat
    lon = minutes_as_decimal_refusal("149.50 W", "lon")
    assert "149.50° W (= 149° 30.0′ W) or 149° 50.0′ W" in lon and "'DR lon (deg)'" in lon


def test_a_bare_or_signed_latitude_or_longitude_is_iso_6709_decimal_degrees():
    # ISO 6709: a signed decimal is decimal degrees, north and east positive  # ISO 6709 (published standard)
    assert minutes_as_decimal_refusal("-17.45", "lat") is None and minutes_as_decimal_refusal("20.45", "lat") is None
    assert minutes_as_decimal_refusal("-5.47", "lon") is None
    assert minutes_as_decimal_refusal("35.30", "altitude") is not None  # an Hs has no such rule


@pytest.mark.parametrize("text", ["35.7", "35.0", "35.3050", "35.30512", "35.755", "35.000", "35.75", "35.00", "35", "35 30.0", "35°30'",
                                  "35-30.0", "35° 30.0′"])
def test_a_form_with_one_reading_is_not_refused(text):
    assert minutes_as_decimal_refusal(text, "altitude") is None


@pytest.mark.parametrize(("text", "kind", "degrees"), [
    ("35 30.0", "angle", 35.5), ("35°30'", "angle", 35.5), ("35-30.0", "angle", 35.5),
    ("020-35.2 N", "lat", 20 + 35.2 / 60), ("149-30.0 W", "lon", -149.5)])
def test_degrees_and_minutes_with_a_space_marks_or_a_hyphen(text, kind, degrees):
    assert parse_angle(text, kind) == pytest.approx(degrees, abs=1e-12)  # common practice (1° = 60′)


def test_a_hand_kept_log_refuses_each_ambiguous_angle_by_its_row(tmp_path):
    path = log(tmp_path, [dict(hs="81.30", lat="17 30.0 S", lon="149 30.0 W"),
                          dict(hs="81 51.4", lat="17.30 S", lon="149 30.0 W"),
                          dict(hs="81 51.4", lat="17 30.0 S", lon="149.50 W"),
                          dict(hs="81 51.4", lat="17 30.0 S", lon="149 30.0 W")])
    sight_log = read_sight_log(path)
    assert list(sight_log.rejected.row) == [2, 3, 4]
    why = reasons(sight_log)
    assert why[0].startswith("Hs: '81.30' has two readings: 81.30° (= 81° 18.0′) or 81° 30.0′")
    assert why[1].startswith("DR lat: '17.30 S' has two readings")
    assert why[2].startswith("DR lon: '149.50 W' has two readings")
    result = runner.invoke(app, ["reduce", str(path)])
    assert "not reduced: Hs: '81.30' has two readings" in result.stdout


@pytest.mark.parametrize("header", ["UTC,Body,Limb,Hs (deg),IE,Eye height (m),DR lat (deg),DR lon (°)",
                                    "UTC,Body,Limb,hs_deg,IE,Eye height (m),dr_lat_deg,dr_lon_degrees",
                                    "UTC,Body,Limb,Hs (decimal degrees),IE,Eye height (m),DR lat (deg),dr_lon_deg"])
def test_a_header_that_declares_decimal_degrees_reads_them(tmp_path, header):
    path = log(tmp_path, [dict(hs="81.30", lat="-17.30", lon="-149.50")], header=header)
    sight_log = read_sight_log(path)
    assert sight_log.rejected.empty
    row = sight_log.table.iloc[0]
    assert row.hs_deg == 81.30 and row.dr_lat_deg == -17.30 and row.dr_lon_deg == -149.50


def test_degrees_minutes_and_tenths_keyed_with_one_point_are_refused(tmp_path):
    """The navigator's trial: a noon Sun keyed '76.380' for 76° 38.0′ was read as 76.380° (76° 22.8′), and the noon
    latitude moved 15′ without a word. 0.380° = 22.8′; 0.212° = 12.72′  # common practice (1° = 60′)"""
    hs = minutes_as_decimal_refusal("76.380", "altitude")
    assert hs.startswith("'76.380' has two readings: 76.380° (= 76° 22.8′) or 76° 38.0′ written with a point?")
    assert "write '76 38.0' or '76° 38.0′'" in hs and "('76.3800')" in hs
    assert "52.212° (= 52° 12.7′) or 52° 21.2′" in minutes_as_decimal_refusal("52.212", "altitude")
    assert "20.355° N (= 20° 21.3′ N) or 20° 35.5′ N" in minutes_as_decimal_refusal("20.355 N", "lat")


def test_a_column_is_judged_cell_by_cell_never_by_its_other_cells(tmp_path):
    """A program's decimals with trailing zeros dropped ('81.30' beside '81.85712') are refused as any '81.30' is:
    a long log read in blocks must read each cell as the log read whole, whatever block it falls in; the header
    that declares decimal degrees reads them all."""
    rows = [dict(hs="81.85712", lat="-17.45", lon="-149.50001"), dict(hs="81.30", lat="-17.45011", lon="-149.75")]
    sight_log = read_sight_log(log(tmp_path, rows))
    assert list(sight_log.rejected.row) == [3]
    assert reasons(sight_log)[0].startswith("Hs: '81.30' has two readings")
    declared = read_sight_log(log(tmp_path, rows, header="UTC,Body,Limb,Hs (deg),IE,Eye height (m),DR lat,DR lon",
                                  name="declared.csv"))
    assert declared.rejected.empty
    assert declared.table.hs_deg.tolist() == [81.85712, 81.30] and declared.table.dr_lat_deg.tolist() == [-17.45, -17.45011]


def test_a_number_cell_is_decimal_degrees(tmp_path):
    frame = pd.DataFrame({"utc": ["2026-12-04T22:15:00Z"], "body": ["Sun"], "limb": ["LL"], "hs": [81.30],
                          "index_error_arcmin": [0.0], "eye_height_m": [3.0], "dr_lat": [-17.30], "dr_lon": [-149.50]})
    sight_log = read_sight_log(frame)
    assert sight_log.rejected.empty and sight_log.table.hs_deg.iloc[0] == 81.30


def test_a_position_on_the_command_line_follows_the_same_rule():
    refused = runner.invoke(app, ["plan", "--lat", "44.30 N", "--lon", "12 W", "--date", "2026-03-26"])
    assert refused.exit_code == 1
    assert ("--lat: '44.30 N' has two readings: 44.30° N (= 44° 18.0′ N) or 44° 30.0′ N written with a point? for "
            "degrees and minutes write '44 30.0 N'") in refused.stderr
    assert "write it with four decimals ('44.3000 N')" in refused.stderr
    assert runner.invoke(app, ["plan", "--lat", "44-30 N", "--lon", "12.3000 W", "--date", "2026-03-26"]).exit_code == 0
    assert runner.invoke(app, ["plan", "--lat", "44-30 N", "--lon", "12.300 W", "--date", "2026-03-26"]).exit_code == 1


def test_one_decimal_may_be_a_dropped_trailing_zero_and_is_refused():
    """A second trial: a noon Hs written '76.3' (76° 30′ as '76.30' with its trailing zero dropped, as spreadsheets
    write numbers) was read as 76.3° = 76° 18.0′. 0.3° = 18.0′, 0.2° = 12.0′  # common practice (1° = 60′)"""
    hs = minutes_as_decimal_refusal("76.3", "altitude")
    assert hs.startswith("'76.3' has two readings: 76.3° (= 76° 18.0′) or 76° 30.0′ written with a point ('76.30' "
                         "with its trailing zero dropped)?")
    assert "36.2° N (= 36° 12.0′ N) or 36° 20.0′ N" in minutes_as_decimal_refusal("36.2 N", "lat")
    assert minutes_as_decimal_refusal("76.7", "altitude") is None  # 70′ cannot be minutes
    assert minutes_as_decimal_refusal("76.0", "altitude") is None  # the same either way


def test_a_spreadsheets_number_cells_typed_by_hand_are_judged_as_written(tmp_path):
    """A second trial: the noon Sun typed into a spreadsheet as the number 76.38 (meaning 76° 38′) among text cells,
    and a sheet whose every Hs is a number, were read as decimal degrees without a word. A number cell keeps no
    trailing zero: it is judged by its shortest text, as a written cell is; a column the header declares is read."""
    import openpyxl

    def sheet(path, header, rows):
        book = openpyxl.Workbook()
        book.active.append(header)
        for row in rows:
            book.active.append(row)
        book.save(path)
        return path

    header = ["UTC", "Body", "Limb", "Hs", "IE", "Eye height (m)", "DR lat", "DR lon"]
    base = ["2026-12-04T22:15:00Z", "Sun", "LL"]
    tail = ["1.2 off", 3.0, "17 30.0 S", "149 30.0 W"]
    mixed = read_sight_log(sheet(tmp_path / "mixed.xlsx", header, [base + ["81 51.4"] + tail, base + [76.38] + tail]))
    assert list(mixed.rejected.row) == [3]
    assert reasons(mixed)[0].startswith("Hs: '76.38' has two readings: 76.38° (= 76° 22.8′) or 76° 38.0′")
    numbers = read_sight_log(sheet(tmp_path / "numbers.xlsx", header, [base + [81.857] + tail, base + [76.3] + tail,
                                                                       base + [76.8124] + tail]))
    assert list(numbers.rejected.row) == [3]  # 81.857 cannot be minutes; 76.8124 has four decimals
    declared = read_sight_log(sheet(tmp_path / "declared.xlsx", ["UTC", "Body", "Limb", "Hs (deg)"] + header[4:],
                                    [base + [76.38] + tail]))
    assert declared.rejected.empty and declared.table.hs_deg.iloc[0] == 76.38
