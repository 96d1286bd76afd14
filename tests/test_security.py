"""Hostile files and unlucky moments: crafted inputs, formula injection, tracks checked like logs,
writes that survive a kill and a second run, no traceback and no network."""

from __future__ import annotations

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
    monkeypatch.setattr(readers, "MAX_ROWS", 10)
    book = openpyxl.Workbook()
    book.active.title = "Cadet A"
    book.active.append(["utc", "body", "zn_worked", "ho_worked", "intercept_worked"])
    long = book.create_sheet("Cadet B")
    for _ in range(30):
        long.append(["2026-03-26T09:10:00Z", "Sun", "113", "25 12.8", "3.2 T"])
    book.save(tmp_path / "class.xlsx")
    with pytest.raises(LogbookError, match="sheet 'Cadet B' has more than 10 rows"):
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
    message = refused_quickly(bomb, LogbookError, "cannot be opened as a spreadsheet")
    assert "laughs.xlsx" in message and "lol" not in message


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
    ["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--at", "18:42:30Z"],
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
    ["fix", DEMO, "--at", "tomorrow"], ["series", DEMO, "--threshold", "nan"],
    ["training", DEMO, "--track", "/no/track.gpx"],
    ["workbook", DEMO, "-o", "/proc/version"], ["workbook", DEMO, "--dates", "sideways"],
    ["mark"], ["mark", DEMO], ["mark", "sample_sights/class_workings.xlsx", "--pdf", "/proc/version"],
]


def test_output_cut_short_by_its_reader_is_one_line_never_a_traceback():
    """`navred reduce LOG | head -1`: the pipe closes early; navred says so in one line."""
    reader = subprocess.Popen([sys.executable, "-c", "import sys; sys.stdin.readline()"], stdin=subprocess.PIPE)
    done = subprocess.run([sys.executable, "-m", "navred", "reduce", "sample_sights/training_sights.csv"],
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


def test_every_command_runs_without_the_network(no_network, tmp_path):
    commands = [
        ["almanac", "Sun", "Vega", "--utc", "2026-03-20T18:42:10Z"], ["bodies"], ["reduce", DEMO],
        ["fix", DEMO], ["workbook", DEMO, "-o", str(tmp_path / "v.xlsx"), "--gpx", str(tmp_path / "f.gpx"),
                        "--geojson", str(tmp_path / "f.geojson")],
        ["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"],
        ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon", "013 10 W"],
        ["identify", "--utc", "2026-03-26T19:45:00Z", "--lat", "43 17 N", "--lon", "013 11 W", "--alt", "30",
         "--az", "186"],
        ["series", "sample_sights/training_sights.csv"],
        ["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z", "--lat", "30 N", "--lon", "040 W",
         "--moon-limb", "far"],
    ]
    for arguments in commands:
        result = runner.invoke(app, arguments)
        assert result.exit_code == 0, (arguments, result.output)


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
