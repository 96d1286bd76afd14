"""The safety caution wherever navred shows a position, a course or a time: once on stderr in every command (so
that --csv stays clean), in every GPX and GeoJSON file, beside a route's legs, and in the footer of every printed
workbook sheet, with a print setup that keeps a printed sheet readable."""

from __future__ import annotations

import json

import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.io.cautions import CAUTION, ROUTE_CAUTION

DEMO = "sample_sights/demo_sights.csv"
runner = CliRunner()

COMMANDS = [
    ["almanac", "Sun", "--utc", "2026-03-20T18:42:10Z"],
    ["reduce", DEMO],
    ["fix", DEMO],
    ["days", "sample_sights/passage_log.csv"],
    ["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"],
    ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W"],
    ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon", "013 10 W"],
    ["identify", "--utc", "2026-03-26T19:45:00Z", "--lat", "43 17 N", "--lon", "013 11 W", "--alt", "30", "--az", "186"],
    ["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z", "--lat", "30 N", "--lon", "040 W",
     "--moon-limb", "far"],
    ["series", "sample_sights/training_sights.csv"],
    ["rate", "sample_sights/passage_time_signals.csv"],
    ["azimuths", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"],
    ["compass-book", "sample_sights/compass_book.csv"],
]


@pytest.mark.parametrize("arguments", COMMANDS, ids=[c[0] for c in COMMANDS])
def test_every_command_shows_the_caution_once_on_stderr(arguments):
    result = runner.invoke(app, arguments)
    assert result.exit_code == 0, result.output
    assert result.stderr.count(CAUTION) == 1
    assert CAUTION not in result.stdout


@pytest.mark.parametrize("arguments", [["reduce", DEMO, "--csv"], ["fix", DEMO, "--csv"],
                                       ["compass-book", "sample_sights/compass_book.csv", "--csv"]])
def test_csv_output_stays_clean(arguments):
    import io

    import pandas as pd

    result = runner.invoke(app, arguments)
    assert result.exit_code == 0
    assert CAUTION not in result.stdout and CAUTION in result.stderr
    assert len(pd.read_csv(io.StringIO(result.stdout))) > 0


@pytest.mark.parametrize(("arguments", "words"), [
    (["plan", "--date", "2026-02-30", "--lat", "44 N", "--lon", "12 W"], "--date"),
    (["almanac", "Sun", "--utc", "2026-03-20T18:42:10Z", "--dut1", "5"], "--dut1 5.0 is outside -0.9 to 0.9"),
    (["almanac", "Sun", "--utc", "2026-03-20T18:42:10Z", "--dut1", "abc"], "Invalid value for '--dut1'"),
    (["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--eye", "2.8"], "metres or feet"),
    (["plan", "--date", "2026-03-26", "--lat", "44 N", "--lon", "12 W", "--zone", "Q7"], "--zone: cannot read 'Q7'"),
    (["reduce", DEMO, "--eye-height", "3"], "No such option: --eye-height"),
    (["azimuths", "--date", "2026-03-26", "--lat", "44 N"], "--lon"),
], ids=["date", "dut1-range", "dut1-text", "eye", "zone", "unknown-option", "missing-option"])
def test_a_refused_option_is_its_error_then_the_caution(arguments, words):
    """Every refusal ends with the caution on stderr, an option refused before any work (by navred or by the
    command line itself) as a log refused: the navigator never meets a navred answer or refusal without it."""
    result = runner.invoke(app, arguments)
    assert result.exit_code in (1, 2) and words in result.stderr, result.output
    lines = result.stderr.splitlines()
    assert lines[-1] == CAUTION and result.stderr.count(CAUTION) == 1 and CAUTION not in result.stdout
    assert lines.index(CAUTION) > next(k for k, x in enumerate(lines) if words in x)


def test_a_command_navred_does_not_have_is_refused_without_the_caution():
    """No command ran: navred's own usage, as --help is, without the caution."""
    result = runner.invoke(app, ["reduec", DEMO])
    assert result.exit_code == 2 and "No such command 'reduec'" in result.stderr and CAUTION not in result.output


def test_every_gpx_and_geojson_carries_the_caution(tmp_path):
    """GPX files read back with gpxpy (a general-purpose GPX library): the caution is the metadata's description,
    the first element the GPX 1.1 schema allows; GeoJSON files carry it as a foreign member (RFC 7946 §6.1)."""
    import gpxpy

    files = {name: tmp_path / name for name in ("fixes.gpx", "fixes.geojson", "route.gpx", "route.geojson")}
    done = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "v.xlsx"), "-o", str(files["fixes.gpx"]),
                               "-o", str(files["fixes.geojson"]), "--pictures", "none"])
    assert done.exit_code == 0, done.output
    done = runner.invoke(app, ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W", "-o", str(files["route.gpx"]),
                               "-o", str(files["route.geojson"])])
    assert done.exit_code == 0, done.output
    for name in ("fixes.gpx", "route.gpx"):
        gpx = gpxpy.parse(files[name].read_text(encoding="utf-8"))
        assert gpx.description == CAUTION, name
        assert gpx.waypoints or gpx.routes
        # and beside every waypoint, route and track, for a plotter that imports them alone
        for item in [*gpx.waypoints, *gpx.routes, *gpx.tracks]:
            assert item.comment == CAUTION, (name, item.name)
    assert ROUTE_CAUTION in gpxpy.parse(files["route.gpx"].read_text(encoding="utf-8")).routes[0].description
    for name in ("fixes.geojson", "route.geojson"):
        collection = json.loads(files[name].read_text(encoding="utf-8"))
        assert collection["type"] == "FeatureCollection" and collection["navred"]["caution"] == CAUTION
        assert collection["features"] and all(f["properties"]["navred_caution"] == CAUTION
                                              for f in collection["features"])


def test_the_route_says_to_check_the_chart_beside_its_legs():
    result = runner.invoke(app, ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W"])
    lines = result.stdout.splitlines()
    assert "each leg checked on the chart first" in result.stdout
    assert lines[-1] == ROUTE_CAUTION and "traffic separation" in lines[-1] and "dangers" in lines[-1]


def test_every_workbook_sheet_prints_one_page_wide_with_the_caution_in_its_footer(tmp_path):
    """Read back with openpyxl: every sheet of the voyage workbook, the marking workbook and its template has a
    print setup (fit to one page wide, landscape when wide, the header row repeated on table sheets) and a footer
    with the caution and the file's date; the footer within Excel's 255 characters."""
    import datetime as dt

    from openpyxl import load_workbook

    books = [tmp_path / "voyage.xlsx", tmp_path / "marking.xlsx", tmp_path / "template.xlsx"]
    assert runner.invoke(app, ["workbook", DEMO, "-o", str(books[0])]).exit_code == 0
    assert runner.invoke(app, ["mark", "sample_sights/class_workings.xlsx", "-o", str(books[1])]).exit_code == 0
    assert runner.invoke(app, ["mark", "--template", str(books[2])]).exit_code == 0
    today = dt.date.today().isoformat()
    for path in books:
        book = load_workbook(path)
        for sheet in book.worksheets:
            where = f"{path.name}: {sheet.title}"
            assert sheet.sheet_properties.pageSetUpPr.fitToPage and sheet.page_setup.fitToWidth == 1, where
            assert sheet.page_setup.fitToHeight == 0, where
            assert sheet.oddFooter.left.text == CAUTION, where
            assert today in sheet.oddFooter.right.text and "&P" in sheet.oddFooter.right.text, where
            footer = f"&L&7{sheet.oddFooter.left.text}&R&7{sheet.oddFooter.right.text}"
            assert len(footer) <= 255, where
            wide = sheet.max_column > 8
            assert sheet.page_setup.orientation == ("landscape" if wide else "portrait"), where
        working = book["Working"] if "Working" in book.sheetnames else None
        if working is not None:
            assert working.print_title_rows == "$1:$1"


def test_the_readme_and_the_workbook_name_the_low_sight_the_code_warns_of():
    # the altitude below which a sight is warned as low (navred.corrections.LOW_ALTITUDE_DEG) is the one the
    # README's safety section and the workbook's caution name, and the log column the README points to exists
    import re
    from pathlib import Path

    from navred.corrections import LOW_ALTITUDE_DEG
    from navred.io.workbook import SAFETY
    from navred.vocabulary import COLUMN

    readme = Path("README.md").read_text(encoding="utf-8")
    line = next(text for text in readme.splitlines() if "**Low sights**" in text)
    assert [float(v) for v in re.findall(r"below (\d+(?:\.\d+)?)°", line)] == [LOW_ALTITUDE_DEG]
    assert [float(v) for v in re.findall(r"below (\d+(?:\.\d+)?)° of altitude", SAFETY)] == [LOW_ALTITUDE_DEG]
    assert "`sigma` column" in line and "sigma" in COLUMN
