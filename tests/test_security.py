"""Hostile files and unlucky moments: crafted inputs, formula injection, tracks checked like logs,
writes that survive a kill and a second run, no traceback and no network."""

from __future__ import annotations

import csv
import io
import os
import signal
import subprocess
import sys
import textwrap
import time
import zipfile

import openpyxl
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.io.cautions import CAUTION
from navred.io.logbook import LogbookError, read_sight_log
from navred.io.output import OutputError, atomic_write
from navred.io.track import TrackError, nmea_year, read_track

runner = CliRunner()
DEMO = "sample_sights/demo_sights.csv"


#: A crafted file is refused before it is read, in under a second (the issue's bound; each takes a few
#: milliseconds here, while reading one takes minutes and gigabytes).
REFUSED_WITHIN_S = 1.0


def refused_quickly(path, error=LogbookError, fragment="", reader=read_sight_log) -> str:
    """The reader's refusal of a crafted file, checked to come within REFUSED_WITHIN_S; its message returned."""
    started = time.perf_counter()
    with pytest.raises(error, match=fragment) as refusal:
        reader(path)
    assert time.perf_counter() - started < REFUSED_WITHIN_S
    return str(refusal.value)


# --- crafted files -----------------------------------------------------------------------

def test_a_zip_bomb_spreadsheet_is_refused_before_it_is_unzipped(tmp_path):
    # the zip bomb as the defences against it describe it: a tiny archive that inflates enormously
    # (defusedxml's and Python's zipfile documentation on decompression bombs); here 50 MB of zeros in 50 kB
    path = tmp_path / "bomb.xlsx"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
        with archive.open("xl/worksheets/sheet1.xml", "w") as member:
            block = b"\0" * (1 << 20)
            for _ in range(50):
                member.write(block)
    assert path.stat().st_size < 200_000
    refused_quickly(path, fragment="would unzip to")


def test_hand_workings_are_read_under_the_same_bounds(tmp_path, monkeypatch):
    """A class workbook (a sheet per cadet) is read through the one reader: the zip bomb is refused before it
    is unzipped, and each sheet is held to the row limit."""
    from navred.io import readers
    from navred.jobs.workings import mark_workings

    path = tmp_path / "bomb.xlsx"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
        with archive.open("xl/worksheets/sheet1.xml", "w") as member:
            for _ in range(50):
                member.write(b"\0" * (1 << 20))
    refused_quickly(path, fragment="would unzip to", reader=mark_workings)
    monkeypatch.setattr(readers, "MAX_RUN_ROWS", 10)
    book = openpyxl.Workbook()
    book.active.title = "Cadet A"
    book.active.append(["utc", "body", "zn_worked", "ho_worked", "intercept_worked"])
    long = book.create_sheet("Cadet B")
    for _ in range(30):
        long.append(["2026-03-26T09:10:00Z", "Sun", "113", "25 12.8", "3.2 T"])
    book.save(tmp_path / "class.xlsx")
    with pytest.raises(LogbookError, match="sheet 'Cadet B'.*hold 29 rows or more; navred holds at most 10"):
        mark_workings(tmp_path / "class.xlsx")


BILLION_LAUGHS = """<?xml version="1.0"?>
<!DOCTYPE lolz [<!ENTITY lol "lol"><!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">
<!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">
<!ENTITY lol4 "&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;">]>
"""


def test_xml_entity_bombs_are_refused_in_gpx_and_in_spreadsheets(tmp_path):
    # the "billion laughs" entity expansion, as defusedxml documents it: refused, never expanded
    gpx = tmp_path / "laughs.gpx"
    gpx.write_text(BILLION_LAUGHS + '<gpx><trk><trkseg><trkpt lat="1" lon="1"><time>&lol4;</time></trkpt>'
                   "</trkseg></trk></gpx>")
    message = refused_quickly(gpx, TrackError, "XML entities", read_track)
    assert "laughs.gpx" in message and "lol" not in message  # the file named; nothing of an entity expanded
    book = openpyxl.Workbook()
    book.active.append(["utc", "body", "hs", "eye_height_m", "dr_lat", "dr_lon"])
    book.active.append(["2026-03-26T19:41:00Z", "Sirius", "30 02.4", 2.8, "43 14 N", "13 04 W"])
    clean = tmp_path / "clean.xlsx"
    book.save(clean)
    bomb = tmp_path / "laughs.xlsx"
    with zipfile.ZipFile(clean) as source, zipfile.ZipFile(bomb, "w") as target:
        for item in source.infolist():
            data = source.read(item.filename)
            if item.filename in ("xl/worksheets/sheet1.xml", "xl/sharedStrings.xml"):
                body = data.split(b"?>", 1)[1] if data.startswith(b"<?xml") else data
                data = BILLION_LAUGHS.encode() + body.replace(b"Sirius", b"&lol4;")
            target.writestr(item, data)
    message = refused_quickly(bomb, LogbookError, "declares XML entities or a document type")
    assert "laughs.xlsx" in message and "lol" not in message
    # a route's waypoints (navred paper --route) read from GPX: the same refusal
    from navred.io.waypoints import WaypointError, read_waypoints

    route = tmp_path / "laughs-route.gpx"
    route.write_text(BILLION_LAUGHS + '<gpx><rte><rtept lat="1" lon="1"><name>&lol4;</name></rtept></rte></gpx>')
    message = refused_quickly(route, WaypointError, "XML entities", read_waypoints)
    assert "laughs-route.gpx" in message and "lol" not in message


def _demo_workbook(path):
    """The demo log as a workbook written by openpyxl: date-time cells for utc, numbers for the eye, text else."""
    import datetime as dt

    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(list(demo.columns))
    for row in demo.itertuples(index=False):
        cells = list(row)
        cells[0] = dt.datetime.strptime(cells[0], "%Y-%m-%dT%H:%M:%SZ")
        cells[5] = float(cells[5])
        sheet.append(cells)
    book.save(path)


#: Damaged cell XML (ECMA-376 cell types: n, s, str, inlineStr, b, e, d): the cell of each row (spreadsheet row,
#: column letter) replaced by one damaged cell; each such row is rejected alone, named by row and column.
DAMAGED_CELLS = [
    (2, "F", '<c r="F2" t="n"><v>NaN</v></c>', "eye_height_m", "not a finite number"),
    (3, "F", '<c r="F3" t="n"><v>two metres</v></c>', "eye_height_m", "marked as a number but holds"),
    (4, "B", '<c r="B4" t="s"><v>99999</v></c>', "body", "shared text '99999'"),
    (5, "A", '<c r="A5" t="d"><v>yesterday</v></c>', "utc", "marked as a date but holds"),
    (6, "G", '<c r="G6" t="b"><v>maybe</v></c>', "horizon", "marked TRUE/FALSE but holds"),
    (7, "B", '<c r="B0" t="inlineStr"><is><t>Moon</t></is></c>', "body", "reference 'B0' is not in row 7"),
    (8, "F", '<c r="F8" t="e"><v>#DIV/0!</v></c>', "eye_height_m", "shows the error #DIV/0!"),
    (9, "A", '<c r="A9" s="1" t="n"><v>1e20</v></c>', "utc", "outside the dates"),
    (10, "F", '<c r="F10" t="x"><v>2.8</v></c>', "eye_height_m", "unknown type 'x'"),
]


def test_damaged_cells_inside_an_xlsx_reject_their_own_rows_by_row_and_column(tmp_path):
    # issue 20: openpyxl raised in the middle of its row iteration for 5 of these 9, losing the whole log;
    # navred reads the sheet cell by cell (navred.sheetreader) and names each damaged cell
    import re

    clean = tmp_path / "clean.xlsx"
    _demo_workbook(clean)
    damaged = tmp_path / "damaged.xlsx"
    with zipfile.ZipFile(clean) as source, zipfile.ZipFile(damaged, "w", zipfile.ZIP_DEFLATED) as target:
        for item in source.infolist():
            data = source.read(item.filename)
            if item.filename == "xl/worksheets/sheet1.xml":
                text = data.decode()
                for row, column, cell, _, _ in DAMAGED_CELLS:
                    text, count = re.subn(rf'<c r="{column}{row}"[^>]*?(?:/>|>.*?</c>)', cell, text, count=1)
                    assert count == 1, (row, column)
                data = text.encode()
            target.writestr(item, data)
    expected = read_sight_log(clean)
    assert len(expected.sights) == 11
    started = time.perf_counter()
    log = read_sight_log(damaged)
    assert time.perf_counter() - started < REFUSED_WITHIN_S
    rejected = log.rejected.set_index("row")
    assert sorted(rejected.index) == [row for row, *_ in DAMAGED_CELLS]  # one reason per row, no follow-on lines
    for row, _, _, column, fragment in DAMAGED_CELLS:
        assert rejected.loc[row, "column"] == column, (row, rejected.loc[row].to_dict())
        assert fragment in rejected.loc[row, "reason"], (row, rejected.loc[row, "reason"])
    good = log.sights.set_index("row")
    assert list(good.index) == [11, 12]
    clean_rows = expected.sights.set_index("row").loc[[11, 12]]
    for column in ("sight_utc", "hs_deg", "eye_height_m", "dr_lat_deg", "dr_lon_deg", "body_name"):
        assert (good[column] == clean_rows[column]).all(), column
    # the command shows each, by row, and exits 0 for the two it reduced
    result = runner.invoke(app, ["reduce", str(damaged)])
    assert result.exit_code == 0 and "Traceback" not in result.output
    assert all(f"\n{row:>3}" in result.output for row, *_ in DAMAGED_CELLS), result.output


@pytest.mark.parametrize("content, name, fragment", [
    (None, "huge.csv", "MiB; navred reads logs of up to"),  # a 200 MB log (sparse: nothing is written)
    (b"\x1f\x8b\x08\x00" + bytes(200), "log.csv", "gzip"),
    ("utc,body\n".encode("utf-16-le"), "utf16.csv", "UTF-16 without a byte-order mark"),
    (b"\x00" * 5000, "nul.csv", "binary"),
    (b"PK\x03\x04" + bytes(100), "zip.csv", "zip archive"),
])
def test_crafted_files_are_refused_quickly_with_one_message(tmp_path, content, name, fragment):
    path = tmp_path / name
    if content is None:
        with open(path, "wb") as handle:
            handle.truncate(200 * 1024 * 1024)
    else:
        path.write_bytes(content)
    message = refused_quickly(path, fragment=fragment)
    assert "\n" not in message and name in message  # one line, naming the file


# --- the crafted files of issue 20: within the old per-file limits, minutes and gigabytes each --------------

def _class_of_far_rows(path, sheets=30):
    """A class workbook (about 25 KB) of 30 sheets, each a header and one cell at the sheet's last row, 1,048,576:
    openpyxl filled every sheet with a million empty rows (7 min 16 s and 3.75 GB)."""
    book = openpyxl.Workbook()
    book.remove(book.active)
    for k in range(sheets):
        sheet = book.create_sheet(f"Cadet {k}")
        sheet.append(["utc", "body", "zn_worked", "ho_worked", "intercept_worked"])
        sheet.cell(row=1_048_576, column=1, value="2026-03-26T09:10:00Z")
    book.save(path)


def _long_gpx(path, points=1_550_000):
    """A 120 MiB GPX of 1.55 million points over ten minutes (10 minutes at 0.42 ms a point)."""
    block = b"".join(b'<trkpt lat="36.%06d" lon="-10.%06d"><time>2026-10-05T00:%02d:%02dZ</time></trkpt>'
                     % (i, i, (i // 60) % 10, i % 60) for i in range(10_000))
    with open(path, "wb") as handle:
        handle.write(b'<?xml version="1.0"?><gpx version="1.1" xmlns="http://www.topografix.com/GPX/1/1"><trk>'
                     b"<trkseg>")
        for _ in range(points // 10_000):
            handle.write(block)
        handle.write(b"</trkseg></trk></gpx>")


def _sheet_of_505_mib(path):
    """An .xlsx whose one sheet unzips to 505 MiB of cells (80 times its size, within the 200 allowed): openpyxl
    parsed it whole on opening (7 min, 2.5 GB)."""
    skeleton = io.BytesIO()
    book = openpyxl.Workbook()
    book.active.append(["utc", "body", "hs", "eye_height_m", "dr_lat", "dr_lon"])
    book.save(skeleton)
    rows = b"".join(b'<row r="%d"><c r="A%d" t="inlineStr"><is><t>2026-03-26T19:41:00Z</t></is></c><c r="B%d" '
                    b't="inlineStr"><is><t>Sirius</t></is></c></row>' % (i, i, i) for i in range(2, 1002))
    with zipfile.ZipFile(skeleton) as source, zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as out:
        for item in source.infolist():
            if item.filename != "xl/worksheets/sheet1.xml":
                out.writestr(item, source.read(item.filename))
                continue
            with out.open(item.filename, "w") as member:
                member.write(b'<?xml version="1.0"?><worksheet xmlns="http://schemas.openxmlformats.org/'
                             b'spreadsheetml/2006/main"><sheetData>')
                written = 0
                while written < 505 * 2**20:
                    member.write(rows)
                    written += len(rows)
                member.write(b"</sheetData></worksheet>")


def _short_rows(path, rows=2_000_000):
    """A 108 MB CSV of two million short rows: refused by workbook only after 30 s and 4.3 GB."""
    with open(path, "wb") as handle:
        handle.write(b"utc,body,hs,eye_height_m,dr_lat,dr_lon,observer\n")
        handle.write(b"2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14.1 N,013 03.7 W,Cadet\n" * rows)


CRAFTED_RUN = textwrap.dedent("""
    import json, os, resource, sys, time
    from typer.testing import CliRunner
    from navred.cli import app
    from navred.io.logbook import read_sight_log
    from navred.io.track import read_track
    from navred.jobs.workings import mark_workings
    from navred.errors import NavredError

    folder = sys.argv[1]
    runs = {
        "class": lambda: mark_workings(folder + "/class.xlsx"),
        "gpx": lambda: read_track(folder + "/long.gpx"),
        "xlsx": lambda: read_sight_log(folder + "/wide.xlsx"),
        "csv": lambda: CliRunner().invoke(app, ["workbook", folder + "/short.csv", "-o", folder + "/w.xlsx"]),
    }
    out = {}
    for name, run in runs.items():
        started, cpu_started = time.perf_counter(), time.process_time()
        try:
            result = run()
            verdict = ("refused: " + result.output.strip()) if hasattr(result, "exit_code") and result.exit_code \
                else "read"
        except NavredError as exc:
            verdict = "refused: " + str(exc)
        out[name] = [time.process_time() - cpu_started, verdict, time.perf_counter() - started]
    # the peak of this process's own memory: VmHWM (Linux) starts afresh at exec, whereas ru_maxrss keeps the
    # resident size of the parent it was forked from (a test worker that has grown would be counted)
    peaks = [line.split()[1] for line in open("/proc/self/status") if line.startswith("VmHWM:")] \
        if os.path.exists("/proc/self/status") else []
    out["peak_mib"] = int(peaks[0]) / 1024 if peaks else resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps(out))
""")


def test_the_crafted_files_of_issue_20_are_refused_or_read_within_5_s_and_1_gb(tmp_path):
    # each file is made here (never committed), then read by navred in a process of its own, whose peak memory
    # (its maximum resident set) is measured with every file read
    import json

    _class_of_far_rows(tmp_path / "class.xlsx")
    _long_gpx(tmp_path / "long.gpx")
    _sheet_of_505_mib(tmp_path / "wide.xlsx")
    _short_rows(tmp_path / "short.csv")
    assert (tmp_path / "class.xlsx").stat().st_size < 40_000
    assert (tmp_path / "long.gpx").stat().st_size > 115 * 2**20
    assert sum(i.file_size for i in zipfile.ZipFile(tmp_path / "wide.xlsx").infolist()) > 505 * 2**20
    assert (tmp_path / "short.csv").stat().st_size > 100 * 10**6
    done = subprocess.run([sys.executable, "-c", CRAFTED_RUN, str(tmp_path)], capture_output=True, text=True,
                          timeout=120, cwd=os.getcwd())
    assert done.returncode == 0, done.stderr
    figures = json.loads(done.stdout)
    for name in ("class", "gpx", "xlsx", "csv"):
        # the 5 s is the processor time the read takes (what it would take on a free core); a loaded machine
        # stretches the wall time, which is only bounded against a hang
        seconds, verdict, wall_seconds = figures[name]
        assert seconds < 5.0, (name, seconds, verdict)
        assert wall_seconds < 60.0, (name, wall_seconds, verdict)
        assert verdict == "read" if name == "class" else verdict.startswith("refused"), (name, verdict)
    assert "holds at most" in figures["csv"][1] and "more than the 400,000" in figures["gpx"][1]
    assert "unzip to 505 MiB of cells" in figures["xlsx"][1]
    assert figures["peak_mib"] < 1024, figures


def test_a_spreadsheets_unicode_text_export_is_read(tmp_path):
    # UTF-16 with its byte-order mark and tabs: what a spreadsheet writes as "Unicode text" (common practice)
    text = open(DEMO, encoding="utf-8").read().replace(",", "\t")
    path = tmp_path / "unicode.txt"
    path.write_bytes(text.encode("utf-16"))
    assert len(read_sight_log(path).sights) == 11


def test_limits_on_rows_columns_and_cells(tmp_path):
    wide = tmp_path / "wide.csv"
    wide.write_text(",".join(f"c{k}" for k in range(250)) + "\n" + ",".join("1" for _ in range(250)) + "\n")
    with pytest.raises(LogbookError, match="navred reads at most 200"):
        read_sight_log(wide)
    long_cell = tmp_path / "cell.csv"
    lines = open(DEMO, encoding="utf-8").read().splitlines()
    header = lines[0] + ",remark"
    long_cell.write_text("\n".join([header, lines[1] + "," + "x" * 40_000, lines[2] + ",short"]) + "\n")
    log = read_sight_log(long_cell)
    assert list(log.sights.row) == [3] and "more than 32,767" in log.rejected.reason.iloc[0]


# --- formula injection -------------------------------------------------------------------------

def test_formula_like_text_is_neutralised_in_csv_output(tmp_path):
    # OWASP, "CSV Injection": cells beginning with = + - @ tab or CR get a leading '
    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    demo["remark"] = ["=1+1", "+cmd", "@SUM(A1)", "-2+3", "\tx", "plain"] + [""] * 5
    path = tmp_path / "log.csv"
    demo.to_csv(path, index=False)
    result = runner.invoke(app, ["reduce", str(path), "--csv"])
    out = pd.read_csv(io.StringIO(result.stdout), dtype=str, keep_default_na=False)
    assert list(out.remark[:6]) == ["'=1+1", "'+cmd", "'@SUM(A1)", "'-2+3", "'\tx", "plain"]
    assert (out.hs_deg.astype(float) > 0).all()  # numbers stay numbers


@pytest.mark.parametrize("command", [["reduce", "--csv"], ["series", "--csv"]])
def test_csv_headers_are_neutralised_like_cells(tmp_path, command):
    # issue 20: an extra column's header came from the file and was written live (OWASP, "CSV Injection")
    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    demo['=HYPERLINK("http://example.invalid")'] = "x"
    demo["@SUM(A1)"] = "y"
    path = tmp_path / "log.csv"
    demo.to_csv(path, index=False)
    result = runner.invoke(app, [command[0], str(path), *command[1:]])
    assert result.exit_code == 0, result.output
    header = next(csv.reader(io.StringIO(result.stdout)))
    assert "'=hyperlink(\"http:_example_invalid\")" in header and "'@sum(a1)" in header  # names as navred keeps them
    assert not [h for h in header if h.startswith(("=", "+", "-", "@"))]


def test_a_deviation_card_is_read_bounded_and_never_overwrites_a_log(tmp_path):
    check = ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon", "013 10 W",
             "--compass-bearing", "262", "--variation", "-4", "--heading", "215", "--card"]
    # a sight log given as the card is not a card: refused, and the log is untouched
    log = tmp_path / "log.csv"
    log.write_bytes(open(DEMO, "rb").read())
    before = log.read_bytes()
    result = runner.invoke(app, check + [str(log)])
    assert result.exit_code == 1 and "is not a deviation card" in result.output
    assert log.read_bytes() == before
    # a card whose body cell was edited into a formula keeps it as text (OWASP, "CSV Injection")
    card = tmp_path / "card.csv"
    assert runner.invoke(app, check + [str(card)]).exit_code == 0
    text = card.read_text().replace(",Sun,", ',"=HYPERLINK(""http://example.invalid"")",')
    card.write_text(text)
    assert runner.invoke(app, check + [str(card)]).exit_code == 0
    written = pd.read_csv(card, dtype=str, keep_default_na=False)
    assert written.body.tolist() == ["'=HYPERLINK(\"http://example.invalid\")", "Sun"]
    assert written.deviation_deg.astype(float).lt(0).all()  # negative numbers stay numbers, not quoted
    # a non-number where a number belongs is named by its row; a huge card is refused before reading
    lines = card.read_text().splitlines()
    lines[-1] = lines[-1].rsplit(",", 1)[0] + ",east-ish"
    card.write_text("\n".join(lines) + "\n")
    bad = runner.invoke(app, check + [str(card)])
    assert bad.exit_code == 1 and "row 3: deviation_deg 'east-ish' is not a number" in bad.output
    with open(card, "ab") as handle:
        handle.truncate(5 * 1024 * 1024)
    started = time.perf_counter()
    big = runner.invoke(app, check + [str(card)])
    assert big.exit_code == 1 and "start a new card file" in big.output
    assert time.perf_counter() - started < REFUSED_WITHIN_S


# --- tracks checked like logs --------------------------------------------------------------

def nmea(body):
    checksum = 0
    for char in body:
        checksum ^= ord(char)
    return f"${body}*{checksum:02X}"


def test_track_points_are_checked_like_log_rows(tmp_path):
    gpx = tmp_path / "t.gpx"
    gpx.write_text('<gpx xmlns="http://www.topografix.com/GPX/1/1"><trk><trkseg>'
                   '<trkpt lat="36.0" lon="-10.0"><time>2026-10-05T00:00:00Z</time></trkpt>'
                   '<trkpt lat="999" lon="-10.0"><time>2026-10-05T00:10:00Z</time></trkpt>'
                   '<trkpt lat="north" lon="-10.0"><time>2026-10-05T00:20:00Z</time></trkpt>'
                   '<trkpt lat="36.1" lon="-10.1"><time>yesterday</time></trkpt>'
                   '<trkpt lat="36.2" lon="-10.2"><time>2026-10-05T00:40:00Z</time></trkpt>'
                   "</trkseg></trk></gpx>")
    track = read_track(gpx)
    assert len(track) == 2
    assert list(track.problems.point) == [2, 3, 4]
    assert "outside ±90" in track.problems.reason[0] and "not a number" in track.problems.reason[1]
    lines = [nmea("GPRMC,000000.00,A,3600.0000,N,01000.0000,W,7.0,230.0,050126,,"),
             nmea("GPRMC,001000.00,A,9130.0000,N,01000.0000,W,7.0,230.0,050126,,"),  # 91.5° N
             nmea("GPRMC,256100.00,A,3601.0000,N,01000.0000,W,7.0,230.0,050126,,"),  # no such time
             nmea("GPRMC,002000.00,A,3602.0000,N,01000.0000,W,7.0,230.0,050126,,")]
    path = tmp_path / "t.nmea"
    path.write_text("\n".join(lines) + "\n")
    track = read_track(path)
    assert len(track) == 2 and len(track.problems) == 2
    assert "outside ±90" in track.problems.reason[0] and "not a time of day" in track.problems.reason[1]


def test_nmea_years_dates_across_midnight_and_duplicates(tmp_path):
    # two-digit years windowed as POSIX strptime %y: 69-99 are the 1900s, 00-68 the 2000s
    assert nmea_year(99) == 1999 and nmea_year(26) == 2026 and nmea_year(68) == 2068 and nmea_year(69) == 1969
    # a receiver that sends GGA before RMC: the GGA at 00:00:00 belongs to the new day, not the last RMC's
    lines = [nmea("GPRMC,235000.00,A,3600.0000,N,01000.0000,W,7.0,230.0,041026,,"),
             nmea("GPGGA,000000.00,3601.0000,N,01000.0000,W,1,09,0.9,12.0,M,50.0,M,,"),
             nmea("GPRMC,000000.00,A,3601.0000,N,01000.0000,W,7.0,230.0,051026,,"),
             nmea("GPGGA,001000.00,3602.0000,N,01000.0000,W,1,09,0.9,12.0,M,50.0,M,,"),
             nmea("GPRMC,001000.00,A,3602.0000,N,01000.0000,W,7.0,230.0,051026,,")]
    path = tmp_path / "midnight.nmea"
    path.write_text("\n".join(lines) + "\n")
    track = read_track(path)
    assert [str(t)[:19] for t in track.utc] == ["2026-10-04T23:50:00", "2026-10-05T00:00:00", "2026-10-05T00:10:00"]
    # one instant, two positions: both refused, by name
    csv = tmp_path / "dup.csv"
    csv.write_text("utc,lat,lon\n2026-10-05T00:00:00Z,36.0,-10.0\n2026-10-05T00:10:00Z,36.1,-10.0\n"
                   "2026-10-05T00:10:00Z,36.3,-10.0\n2026-10-05T00:20:00Z,36.2,-10.0\n")
    track = read_track(csv)
    assert len(track) == 2 and track.problems.reason.str.contains("two different positions").sum() == 2


def test_a_csv_track_must_declare_its_time_zone(tmp_path):
    path = tmp_path / "naive.csv"
    path.write_text("utc,lat,lon\n2026-10-05 00:00:00,36.0,-10.0\n2026-10-05 00:10:00,36.1,-10.0\n")
    with pytest.raises(TrackError, match="no time zone"):
        read_track(path)


def test_a_long_gap_in_the_track_is_not_bridged(tmp_path):
    # the invented training track (sample_sights/) with 66 hours cut out: sights inside the gap are not marked
    from navred.jobs.training import training_report
    from navred.jobs.voyage import process_log

    track = pd.read_csv("sample_sights/training_track.csv")
    times = pd.to_datetime(track.utc)
    cut = (times > times.iloc[0] + pd.Timedelta(hours=60)) & (times < times.iloc[0] + pd.Timedelta(hours=126))
    path = tmp_path / "gappy.csv"
    track[~cut].to_csv(path, index=False)
    reference = read_track(path)
    assert len(reference.gaps()) == 1
    voyage = process_log("sample_sights/training_sights.csv", plan=False)
    report = training_report(voyage.reduced, reference, voyage.groups)
    in_gap = report.sights.note.str.contains("inside a gap of 66.0 h")
    assert in_gap.sum() > 20 and report.sights.error_arcmin[in_gap].isna().all()
    assert report.sights.within_track[~in_gap].all()
    # the command names each sight it did not mark, with the gap (every fourth sight, to keep it quick)
    sights = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False)
    few = tmp_path / "few.csv"
    sights.iloc[::4].to_csv(few, index=False)
    result = runner.invoke(app, ["training", str(few), "--track", str(path)])
    assert result.exit_code == 0, result.output
    named = [line for line in result.output.splitlines() if "inside a gap of 66.0 h" in line]
    unmarked = int(result.output.split(" not marked:")[0].rsplit("; ", 1)[1])
    few_report = training_report(process_log(few, plan=False).reduced, reference)
    gap_rows = few_report.sights.row[few_report.sights.note.str.contains("inside a gap")]
    first, last = gap_rows.min(), gap_rows.max()
    assert unmarked == len(gap_rows) > 5 and len(gap_rows) == last - first + 1
    assert named == [f"  rows {first}-{last} ({unmarked} sights): {few_report.sights.note[gap_rows.index[0]]}"]


@pytest.mark.parametrize("field, value, fragment", [
    ("lat", "-500.0000", "latitude '-500.0000' is not written as NMEA 0183 writes it"),  # was 5° S
    ("lat", "nan", "latitude 'nan' is not written"),  # was 0°
    ("lat", "+3601.0000", "latitude '+3601.0000'"),
    ("lat", "3601.0000 ", "latitude '3601.0000 '"),
    ("ns", "n", "N/S 'n'"),
    ("lon", "1000.0000", "longitude '1000.0000'"),  # four digits of degrees and minutes where five belong
    ("time", "1e3", "time '1e3'"),
    ("date", "0510-26", "date '0510-26'"),
])
def test_nmea_fields_are_checked_by_pattern_behind_a_good_checksum(tmp_path, field, value, fragment):
    # NMEA 0183: ddmm.mm latitude, dddmm.mm longitude, N/S, E/W, hhmmss.ss, ddmmyy; a field of another form is
    # refused by its line even when the checksum (computed over it) is good
    fields = {"time": "001000.00", "lat": "3601.0000", "ns": "N", "lon": "01000.0000", "ew": "W", "date": "051026"}
    fields[field] = value
    bad = nmea(f"GPRMC,{fields['time']},A,{fields['lat']},{fields['ns']},{fields['lon']},{fields['ew']},7.0,230.0,"
               f"{fields['date']},,")
    lines = [nmea("GPRMC,000000.00,A,3600.0000,N,01000.0000,W,7.0,230.0,051026,,"), "", bad, "",
             nmea("GPRMC,002000.00,A,3602.0000,N,01000.0000,W,7.0,230.0,051026,,")]
    path = tmp_path / "t.nmea"
    path.write_text("\n".join(lines) + "\n")
    track = read_track(path)
    assert len(track) == 2 and list(track.problems.point) == [3]  # named by its line, past the blank line
    assert fragment in track.problems.reason[0], track.problems.reason[0]


def test_an_nmea_sentence_cut_short_is_refused_by_its_line(tmp_path):
    lines = [nmea("GPRMC,000000.00,A,3600.0000,N,01000.0000,W,7.0,230.0,051026,,"),
             nmea("GPRMC,001000.00,A,3601.0000,N,01000.0000,W,7.0,230.0,051026,,")[:30],
             "$GPGSV,3,1,11,03,03,111,00,04,15,270,00,06,01,010,00,13,06,292,00*74",  # another sentence: not a point
             nmea("GPRMC,002000.00,A,3602.0000,N,01000.0000,W,7.0,230.0,051026,,")]
    path = tmp_path / "t.nmea"
    path.write_text("\n".join(lines) + "\n")
    track = read_track(path)
    assert len(track) == 2 and list(track.problems.point) == [2]
    assert "without its checksum" in track.problems.reason[0]


def test_a_csv_track_line_with_a_field_missing_is_refused_by_its_line(tmp_path):
    # issue 20: a missing field raised AttributeError; the line numbers shifted past blank lines
    path = tmp_path / "track.csv"
    path.write_text("utc,lat,lon\n2026-10-05T00:00:00Z,36.0,-10.0\n\n2026-10-05T00:10:00Z,36.1\n\n"
                    "2026-10-05T00:20:00Z,north,-10.2\n2026-10-05T00:30:00Z,36.3,-10.3\n")
    track = read_track(path)
    assert len(track) == 2 and list(track.problems.point) == [4, 6]
    assert "row has 2 fields where the header has 3" in track.problems.reason[0]
    assert "cannot read 'north' as a latitude" in track.problems.reason[1]


def test_a_pipe_given_as_a_track_is_named_a_pipe(tmp_path):
    fifo = tmp_path / "track.gpx"
    os.mkfifo(fifo)
    started = time.perf_counter()
    with pytest.raises(TrackError, match="is a pipe, not a regular file"):
        read_track(fifo)
    assert time.perf_counter() - started < REFUSED_WITHIN_S
    result = runner.invoke(app, ["training", DEMO, "--track", str(fifo)])
    assert result.exit_code == 1 and "is a pipe" in result.output


def test_refused_track_points_are_shown_by_the_command_and_on_the_training_sheet(tmp_path):
    # the invented training track as NMEA, two sentences damaged behind good checksums
    lines = open("sample_sights/training_track.nmea", encoding="utf-8").read().splitlines()
    lines[10] = nmea("GPRMC,235000.00,A,-500.0000,N,01000.0000,W,7.0,230.0,051026,,")
    lines[20] = nmea("GPGGA,001000.00,nan,N,01000.0000,W,1,09,0.9,12.0,M,50.0,M,,")
    lines.insert(5, "")
    track = tmp_path / "track.nmea"
    track.write_text("\n".join(lines) + "\n")
    sights = pd.read_csv("sample_sights/training_sights.csv", dtype=str, keep_default_na=False)
    few = tmp_path / "few.csv"
    sights.iloc[::8].to_csv(few, index=False)
    out = tmp_path / "training.xlsx"
    result = runner.invoke(app, ["training", str(few), "--track", str(track), "-o", str(out)])
    assert result.exit_code == 0, result.output
    assert "2 points of the track refused (not used):" in result.output
    assert "  line 12: latitude '-500.0000' is not written as NMEA 0183 writes it" in result.output
    assert "  line 22: latitude 'nan'" in result.output
    book = openpyxl.load_workbook(out, read_only=True)
    cells = [str(v) for row in book["Training"].iter_rows(values_only=True) for v in row if v is not None]
    book.close()
    assert any(c.startswith("Points of the reference track refused (2; not used), by their line") for c in cells)
    assert "latitude '-500.0000' is not written as NMEA 0183 writes it" in cells


# --- writes ------------------------------------------------------------------------------

WRITER = textwrap.dedent("""
    import sys, time
    from navred.io.output import atomic_write
    def slow(path):
        with open(path, "w") as handle:
            handle.write("half a workb")
            handle.flush()
            time.sleep(30)
    atomic_write(sys.argv[1], slow)
""")


def test_a_write_killed_midway_leaves_the_old_file_and_the_next_write_clears_up(tmp_path):
    target = tmp_path / "voyage.xlsx"
    target.write_text("the good old log")
    process = subprocess.Popen([sys.executable, "-c", WRITER, str(target)], cwd=os.getcwd())
    deadline = time.time() + 20
    while time.time() < deadline and not any(p.name.endswith(".navred-tmp.xlsx") for p in tmp_path.iterdir()):
        time.sleep(0.05)
    time.sleep(0.2)
    os.kill(process.pid, signal.SIGKILL)
    process.wait()
    assert target.read_text() == "the good old log"
    leftovers = [p for p in tmp_path.iterdir() if p.name != "voyage.xlsx"]
    assert len(leftovers) == 1  # the dead run's temporary file, under another name
    atomic_write(target, lambda p: open(p, "w").write("the new log"))
    assert target.read_text() == "the new log"
    assert [p.name for p in tmp_path.iterdir()] == ["voyage.xlsx"]  # the stale temporary is gone


def test_two_runs_writing_one_file_never_corrupt_it(tmp_path):
    target = tmp_path / "same.csv"
    script = textwrap.dedent("""
        import sys
        from navred.io.output import atomic_write
        for k in range(40):
            atomic_write(sys.argv[1], lambda p: open(p, "w").write(sys.argv[2] * 20000))
    """)
    runs = [subprocess.Popen([sys.executable, "-c", script, str(target), letter]) for letter in "AB"]
    for run in runs:
        assert run.wait() == 0
    content = target.read_text()
    assert content in ("A" * 20000, "B" * 20000)
    assert [p.name for p in tmp_path.iterdir()] == ["same.csv"]


def test_outputs_that_are_not_regular_files_or_are_inputs_are_refused(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    for target, fragment in ((fifo, "not a regular file"), ("/dev/null", "not a regular file"),
                             (tmp_path, "is a folder"), (tmp_path / "log.csv" / "out.xlsx", "is a file, not a folder")):
        if str(target).endswith("log.csv/out.xlsx"):
            (tmp_path / "log.csv").write_text("x")
        with pytest.raises(OutputError, match=fragment):
            atomic_write(target, lambda p: None)
    log = tmp_path / "mine.csv"
    log.write_text(open(DEMO, encoding="utf-8").read())
    result = runner.invoke(app, ["workbook", str(log), "-o", str(log)])
    assert result.exit_code == 1 and "one of the inputs" in result.output
    assert log.read_text() == open(DEMO, encoding="utf-8").read()


def test_a_folder_that_cannot_be_written_is_one_line(tmp_path, monkeypatch):
    # as root every folder is writable; the refusal the operating system gives is simulated at os.open
    real_open = os.open

    def refuse(path, flags, *args):
        if str(path).endswith(".navred-tmp.xlsx"):
            raise PermissionError(13, "Permission denied", str(path))
        return real_open(path, flags, *args)

    monkeypatch.setattr(os, "open", refuse)
    result = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "v.xlsx")])
    assert result.exit_code == 1 and "Permission denied" in result.output and "Traceback" not in result.output


def test_a_log_too_long_for_a_sheet_is_refused_before_the_work(monkeypatch, tmp_path):
    from navred.io import workbook

    monkeypatch.setattr(workbook, "SHEET_ROW_LIMIT", 10)
    result = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "v.xlsx")])
    assert result.exit_code == 1 and "more than a workbook sheet holds" in result.output
    assert not (tmp_path / "v.xlsx").exists()


# --- every input protected, every output checked before the work -----------------------------------------------

def test_every_file_a_run_reads_is_refused_as_an_output(tmp_path):
    # issue 20: the --rates file given as --gpx or -o was replaced; only the sight log was protected
    log = tmp_path / "log.csv"
    log.write_bytes(open(DEMO, "rb").read())
    rates = tmp_path / "rates.gpx"  # a rating log may have any name: it is an input all the same
    rates.write_text("timepiece,utc,reading\nA,2026-03-20T12:00:00Z,12:00:03\nA,2026-03-21T12:00:00Z,12:00:04\n")
    track = tmp_path / "track.xlsx"
    track.write_bytes(open("sample_sights/training_track.csv", "rb").read())
    cases = [
        ["workbook", str(log), "--rates", str(rates), "-o", str(rates)],
        ["days", str(log), "--rates", str(rates), "-o", str(log)],
        ["training", str(log), "--track", str(track), "-o", str(track)],
        ["mark", str(tmp_path), "-o", str(log)],
        ["paper", "--from", "2026-04-14", "--to", "2026-04-14", "--log", str(log), "-o", str(log)],
    ]
    before = {p: p.read_bytes() for p in (log, rates, track)}
    for arguments in cases:
        result = runner.invoke(app, arguments)
        assert result.exit_code == 1 and "one of the inputs of this run" in result.output, (arguments, result.output)
    assert {p: p.read_bytes() for p in before} == before


@pytest.mark.parametrize("arguments, fragment", [
    (["mark", "sample_sights/class_workings.xlsx", "-o", "{tmp}/m.txt"], "-o {tmp}/m.txt: navred does not write .txt"),
    (["mark", "--template", "{tmp}/t.csv"], "--template {tmp}/t.csv: navred writes XLSX"),
    (["workbook", DEMO, "-o", "{tmp}/w.pdf"], "-o {tmp}/w.pdf: navred does not write .pdf here; accepted: .xlsx"),
    (["workbook", DEMO, "-o", "{tmp}/w.xlsx", "-o", "{tmp}/w.kml"], "-o {tmp}/w.kml: navred does not write .kml"),
    (["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "-o", "{tmp}/sky.gif"], "accepted: .pdf"),
    (["training", DEMO, "--track", "sample_sights/training_track.csv", "-o", "{tmp}/s.txt"], "accepted: .xlsx"),
    (["days", "sample_sights/passage_log.csv", "-o", "{tmp}/p.jpg"], "-o {tmp}/p.jpg: navred does not write .jpg"),
    (["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z", "--lat", "30 N", "--lon", "40 W",
      "-o", "{tmp}/l.csv"], "-o {tmp}/l.csv: navred does not write .csv here; accepted: .xlsx"),
    (["route", "40 N", "73 W", "49 N", "5 W", "-o", "{tmp}/r.kml"], "accepted: .gpx"),
    (["workbook", DEMO, "-o", "{tmp}/" + "v" * 240 + ".xlsx"], "the name is too long for this folder"),
    (["workbook", DEMO, "-o", "{tmp}/no/such/" + "v" * 250 + ".xlsx"], "the name is too long"),
    (["training", DEMO, "--track", "sample_sights/training_track.csv", "--plots", "{log}"], "that is a file"),
    (["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "-o", "{tmp}/no/such/plan.pdf"],
     "the folder {tmp}/no/such does not exist"),
])
def test_outputs_are_checked_for_suffix_name_and_folder_before_the_work(tmp_path, arguments, fragment):
    # issue 20: --sky/--summary with an unsupported suffix failed after the whole job; a temporary name too long
    # failed after the job; mark -o m.csv wrote a workbook named .csv. Each is refused first, in a moment.
    log = tmp_path / "log.csv"
    log.write_text("x")
    arguments = [a.replace("{tmp}", str(tmp_path)).replace("{log}", str(log)) for a in arguments]
    started = time.perf_counter()
    result = runner.invoke(app, arguments)
    assert result.exit_code == 1, result.output
    assert fragment.replace("{tmp}", str(tmp_path)) in result.output, result.output
    # the one error line, then the caution, as every refusal ends
    assert result.output.count("\n") == 2 and "Traceback" not in result.output
    assert result.output.splitlines()[-1] == CAUTION
    assert time.perf_counter() - started < 2.0  # refused before any reading or reducing
    assert sorted(p.name for p in tmp_path.iterdir()) == ["log.csv"]  # nothing written


@pytest.mark.parametrize("arguments, name", [
    (["workbook", DEMO, "-o", ""], "--output"),
    (["reduce", DEMO, "--rates", ""], "--rates"),
    (["fix", DEMO, "--group", "  "], "--group"),
    (["days", DEMO, "-o", ""], "--output"),
    (["training", DEMO, "--track", ""], "--track"),
    (["workbook", DEMO, "--plots", ""], "--plots"),
    (["mark", "--template", ""], "--template"),
    (["reduce", ""], "SIGHTS"),
    (["almanac", "Sun", "--utc", ""], "--utc"),
    (["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--csv", ""], "--csv"),
])
def test_an_empty_option_value_is_refused_by_name_never_taken_as_not_given(arguments, name):
    # issue 20: -o '' and --rates '' were treated as not given (an unset shell variable, say)
    result = runner.invoke(app, arguments)
    assert result.exit_code == 1, result.output
    assert result.output == (f"navred: error: {name}: an empty value was given; give a value, or leave the option "
                             f"out\n{CAUTION}\n")


# --- exit codes and the lines that go with them --------------------------------------------------------

def _all_rejected(tmp_path):
    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    demo["hs"] = "ninety"
    path = tmp_path / "rejected.csv"
    demo.to_csv(path, index=False)
    header_only = tmp_path / "header.csv"
    header_only.write_text(open(DEMO, encoding="utf-8").readline())
    return path, header_only


@pytest.mark.parametrize("command", [["reduce"], ["reduce", "--csv"], ["fix"], ["fix", "--csv"], ["days"],
                                     ["series"], ["training", "--track", "sample_sights/training_track.csv"],
                                     ["workbook", "-o", "{tmp}/w.xlsx"]])
def test_every_command_exits_1_with_a_line_when_nothing_was_reduced(tmp_path, command):
    # issue 20: days, series and training exited 0 with nothing reduced; reduce on a header-only log exited 1
    # with no line; workbook pointed to an empty Rejected sheet
    rejected, header_only = _all_rejected(tmp_path)
    command = [c.replace("{tmp}", str(tmp_path)) for c in command]
    for log, fragment in ((rejected, "rows was rejected"), (header_only, "the log holds no sight")):
        result = runner.invoke(app, [command[0], str(log), *command[1:]])
        assert result.exit_code == 1, (command, result.output)
        lines = [line for line in result.output.splitlines() if line.startswith("navred: error:")]
        assert len(lines) == 1, result.output
        if command[0] == "workbook" and log == rejected:
            assert "the Rejected sheet of" in lines[0]
            book = openpyxl.load_workbook(tmp_path / "w.xlsx", read_only=True)
            rows = list(book["Rejected"].iter_rows(values_only=True))
            book.close()
            assert len(rows) == 12  # the header and the 11 rows, each with its reason
        else:
            assert fragment in lines[0], result.output
    if command[0] == "workbook":
        assert (tmp_path / "w.xlsx").exists()  # written for the rejected log (its Rejected sheet); not for none


def test_every_command_names_the_columns_it_does_not_read(tmp_path):
    demo = pd.read_csv(DEMO, dtype=str, keep_default_na=False)
    demo["sextant"] = "No. 2"
    path = tmp_path / "log.csv"
    demo.to_csv(path, index=False)
    note = "note: log.csv: column navred does not read, kept as text: 'sextant'"
    for arguments in (["reduce", str(path)], ["reduce", str(path), "--csv"], ["fix", str(path)],
                      ["series", str(path)], ["days", str(path)],
                      ["workbook", str(path), "-o", str(tmp_path / "w.xlsx")]):
        result = runner.invoke(app, arguments)
        assert result.exit_code == 0 and note in result.output, (arguments, result.output)
    book = openpyxl.load_workbook(tmp_path / "w.xlsx", read_only=True)
    cells = [v for row in book["About"].iter_rows(values_only=True) for v in row if v]
    book.close()
    assert "Notes on the files" in cells and note.removeprefix("note: ") in cells


# --- no traceback, no network ------------------------------------------------------------------

BAD_OPTIONS = [
    ["plan", "--date", "26/03/2026", "--lat", "44 N", "--lon", "12 W"],
    ["plan", "--date", "2026-02-30", "--lat", "44 N", "--lon", "12 W"],
    ["plan", "--date", "", "--lat", "44 N", "--lon", "12 W"],
    ["plan", "--date", "2026-03-26", "--lat", "", "--lon", "12 W"],
    ["plan", "--date", "2026-03-26", "--lat", "nan", "--lon", "12 W"],
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--course", "nan"],
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--speed", "1e308"],
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--eye", "-inf"],
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--count", "9"],
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--utc", "18:42:30Z"],
    ["almanac", "Sun", "--utc", ""], ["almanac", "", "--utc", "2026-03-26T00:00Z"],
    ["almanac", "Sun", "--utc", "2026-03-26T00:00Z", "--dut1", "nan"],
    ["compass", "Sun", "--utc", "2026-03-26T17:30Z", "--lat", "43 N", "--lon", "13 W", "--compass-bearing", "inf"],
    ["compass", "Sun", "--utc", "2026-03-26T17:30Z", "--lat", "43 N", "--lon", "13 W", "--variation", "x"],
    ["identify", "--utc", "2026-03-26T19:45Z", "--lat", "43 N", "--lon", "13 W", "--alt", "nan", "--az", "186"],
    ["identify", "--utc", "2026-03-26T19:45Z", "--lat", "43 N", "--lon", "13 W", "--alt", "30", "--az", "1e9"],
    ["lunar", "", "--other", "Antares", "--utc", "2024-09-12T19:33Z", "--lat", "30 N", "--lon", "40 W"],
    ["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33Z", "--lat", "30 N", "--lon", "40 W",
     "--index-error", "nan"],
    ["reduce", "/no/such/file.csv"], ["reduce", "sample_sights"], ["fix", DEMO, "--group", ""],
    ["fix", DEMO, "--utc", "tomorrow"], ["series", DEMO, "--threshold", "nan"],
    ["training", DEMO, "--track", "/no/track.gpx"],
    ["workbook", DEMO, "-o", "/proc/version"], ["workbook", DEMO, "--dates", "sideways"],
    ["mark"], ["mark", DEMO], ["mark", "sample_sights/class_workings.xlsx", "-o", "/proc/version"],
]


def test_output_cut_short_by_its_reader_is_one_line_never_a_traceback(tmp_path):
    """`navred reduce LOG | head -1`: the pipe closes early; navred says so in one line. The log is long enough
    that its lines overfill the pipe's buffer (64 KiB), so that navred is still writing when its reader goes,
    whatever the machine's load."""
    text = open("sample_sights/training_sights.csv", encoding="utf-8").read().splitlines()
    log = tmp_path / "long.csv"
    log.write_text("\n".join([text[0]] + text[1:] * 4) + "\n", encoding="utf-8")
    reader = subprocess.Popen([sys.executable, "-c", "import sys; sys.stdin.readline()"], stdin=subprocess.PIPE)
    done = subprocess.run([sys.executable, "-m", "navred", "reduce", str(log)],
                          stdout=reader.stdin, stderr=subprocess.PIPE, text=True, timeout=120)
    reader.stdin.close()
    reader.wait(timeout=30)
    assert "Traceback" not in done.stderr and "Exception ignored" not in done.stderr
    assert "cut short" in done.stderr and done.returncode == 1


@pytest.mark.parametrize("arguments", BAD_OPTIONS, ids=lambda a: " ".join(a)[:60])
def test_bad_options_give_one_line_never_a_traceback(arguments):
    result = runner.invoke(app, arguments)
    assert result.exit_code in (1, 2), (result.exit_code, result.output)
    assert "Traceback" not in result.output and result.exception is None or isinstance(result.exception, SystemExit)
    assert result.output.strip().count("\n") < 6


def test_csv_text_is_what_pandas_writes_of_the_neutralised_table():
    # issue 13: navred's CSV output is made column by column (navred.io.output.csv_text); it must be the very
    # text pandas' to_csv writes (the general-purpose reference) of the table after csv_safe (OWASP): quotes,
    # separators and line breaks quoted, formula-like text neutralised, gaps empty, instants with a zone
    import pandas as pd

    from navred.io.output import csv_safe, csv_text

    frame = pd.DataFrame({
        "text": ["plain", "a, b", 'say "hi"', "two\nlines", "=HYPERLINK(1)", "-5", "", "@x"],
        "number": [1.5, float("nan"), -0.0, 1e20, 2.25, float("inf"), 3.0, 1 / 3],
        "gaps": [float("nan")] * 8,
        "count": list(range(8)),
        "flag": [True, False] * 4,
        "when": pd.to_datetime(["2026-03-26T09:10:00Z"] * 7 + [None], utc=True),
        "mixed": [None, 1.5, "x", float("nan"), "y,z", 2.0, "", "=1"],
    })
    assert csv_text(frame) == csv_safe(frame).to_csv(index=False, float_format="%.6f")
    assert csv_text(frame.iloc[:0]) == csv_safe(frame.iloc[:0]).to_csv(index=False, float_format="%.6f")
    fractions = frame.assign(when=pd.to_datetime(["2026-03-26T09:10:00.25Z"] * 8, utc=True))
    assert csv_text(fractions) == csv_safe(fractions).to_csv(index=False, float_format="%.6f")


def test_csv_text_of_constant_and_few_valued_columns_is_what_pandas_writes():
    # issue 26: a column holding one value is written as part of each row's form, and a column of few distinct
    # numbers is formatted each distinct number once; the text must still be pandas' to_csv's (the general-purpose
    # reference) of the neutralised table, -0.0 apart from 0.0, a gap empty, a % or a comma in a constant kept
    import numpy as np
    import pandas as pd

    from navred.io.output import csv_safe, csv_text

    n = 6000  # more rows than the first look at a column takes
    rng = np.random.default_rng(26)
    few = rng.choice([0.0, -0.0, 1.5, np.nan, 1e-7, -2.5e-7, 359.9999995], n)
    frame = pd.DataFrame({
        "one_text": ["10 % off, said he"] * n, "one_formula": ["=1+1"] * n, "one_float": [12.25] * n,
        "one_gap_free": [-0.0] * n, "one_int": [7] * n, "one_flag": [True] * n, "few": few,
        "many": rng.normal(0, 100, n), "rare_gaps": np.where(rng.random(n) < 0.01, np.nan, rng.random(n)),
        "late_few": np.r_[np.zeros(4096), rng.normal(0, 1, n - 4096)],
        "counts": rng.integers(0, 3, n), "words": rng.choice(["a", "b,c", 'd"e'], n),
    })
    for form in ("%.6f", "%.2f"):
        assert csv_text(frame, float_format=form) == csv_safe(frame).to_csv(index=False, float_format=form)
        assert csv_text(frame.iloc[:1], float_format=form) == csv_safe(frame.iloc[:1]).to_csv(index=False,
                                                                                            float_format=form)
