"""The command line, driven through typer's test runner: exit codes and what a user sees."""

from __future__ import annotations

import io

import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app

runner = CliRunner()


def test_almanac_prints_navigational_form():
    result = runner.invoke(app, ["almanac", "Sun", "Vega", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 0, result.output
    assert "GHA Aries" in result.output
    lines = [line for line in result.output.splitlines() if line.startswith(("Sun", "Vega"))]
    assert len(lines) == 2
    assert "°" in lines[0] and "′" in lines[0] and (" N" in lines[0] or " S" in lines[0])
    assert "IERS" in result.output  # where UT1 came from is shown


def test_almanac_csv_is_machine_readable():
    result = runner.invoke(app, ["almanac", "Moon", "--utc", "2026-03-20T18:42:10Z", "--csv", "--dut1", "0.1"])
    assert result.exit_code == 0, result.output
    frame = pd.read_csv(io.StringIO(result.output))
    assert {"gha_deg", "dec_deg", "hp_arcmin", "sd_arcmin"} <= set(frame.columns)
    assert frame.ut1_source[0] == "given by the caller"


def test_errors_are_one_line_and_exit_1():
    result = runner.invoke(app, ["almanac", "Sirus", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 1
    assert "closest: Sirius" in result.output
    # a person's words: no program's element counts or indices, no numpy names
    assert result.output.startswith("navred: error: unknown body 'Sirus'; closest: Sirius")
    for leak in ("elements", "indices", "np.str_", "1 of 1"):
        assert leak not in result.output
    several = runner.invoke(app, ["almanac", "Sun", "Sirus", "--utc", "2026-03-20T18:42:10Z"])
    assert "(value 2 of 2)" in several.output and "indices" not in several.output
    assert "Traceback" not in result.output
    result = runner.invoke(app, ["almanac", "Sun", "--utc", "2026-03-20T18:42:10"])
    assert result.exit_code == 1
    assert "no time zone" in result.output


def test_warnings_are_printed_not_hidden():
    result = runner.invoke(app, ["almanac", "Sun", "--utc", "2045-03-20T18:42:10Z"])
    assert result.exit_code == 0
    assert "warning:" in result.output and "IERS table" in result.output


def test_bodies_lists_the_catalogue():
    result = runner.invoke(app, ["bodies"])
    assert result.exit_code == 0
    assert "Rigil Kentaurus" in result.output and "Jupiter" in result.output


def test_reduce_prints_one_line_per_sight():
    result = runner.invoke(app, ["reduce", "sample_sights/demo_sights.csv"])
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    sight_lines = [line for line in lines if line[:4].strip().isdigit()]
    assert len(sight_lines) == 11
    assert all(("TOWARD" in line) or ("AWAY" in line) for line in sight_lines)
    assert "11 sights reduced" in lines[-1]


def test_reduce_reads_xlsx_and_csv_output(tmp_path):
    result = runner.invoke(app, ["reduce", "sample_sights/demo_sights.xlsx", "--csv"])
    assert result.exit_code == 0, result.output
    frame = pd.read_csv(io.StringIO(result.stdout))  # the caution goes to stderr: the CSV is clean
    assert len(frame) == 11 and {"ho_deg", "hc_deg", "zn_deg", "intercept_nm"} <= set(frame.columns)


def test_reduce_explains_bad_rows_and_fails_only_when_nothing_reduced(tmp_path):
    log = tmp_path / "log.csv"
    log.write_text("utc,body,hs,eye_height_m,dr_lat,dr_lon\n"
                   "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W\n"
                   "2026-03-26T19:41:00Z,Sirus,30 02.4,2.8,43 14 N,13 04 W\n")
    result = runner.invoke(app, ["reduce", str(log)])
    assert result.exit_code == 0
    assert "not reduced" in result.output and "closest: Sirius" in result.output
    bad = tmp_path / "bad.csv"
    bad.write_text("utc,body,hs,eye_height_m,dr_lat,dr_lon\n2026-03-26T19:41:00,Sirus,95,2.8,43 14 N,13 04 W\n")
    result = runner.invoke(app, ["reduce", str(bad)])
    assert result.exit_code == 1
    missing = runner.invoke(app, ["reduce", str(tmp_path / "nope.csv")])
    assert missing.exit_code == 1 and "no such file" in missing.output


def test_fix_on_the_demo_prints_every_group_with_its_ellipse():
    result = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv"])
    assert result.exit_code == 0, result.output
    for group in ("sun-run-sun", "moon-planet", "evening-stars"):
        assert f'Fix "{group}"' in result.output
    assert result.output.count("  95 % ellipse   ") == 3
    # the full size where a navigator reads it, then the semi-axes; what it covers and cannot, once
    assert "2.8 × 1.9 nm, semi-axes 1.4 × 1.0 nm" in result.output
    assert "cannot cover an error common to every sight (the clock" in result.output
    assert "no redundancy" in result.output  # the two-sight Moon-Jupiter fix says so
    # three sights leave one redundant: what that does to the ellipse, and to the blunder check, in words
    assert "leave 1 redundant sight" in result.output and "cannot single out a bad sight" in result.output
    assert "on the meridian: latitude 43°" in result.output  # the noon sight as a latitude check


def test_fix_cross_checks_a_chart_position_for_one_group():
    # sample_sights/demo_truth.csv: the true position at the last star sight, 43.27463 N 13.19052 W
    result = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv", "--group", "evening-stars",
                                 "--chart-lat", "43 16.48 N", "--chart-lon", "013 11.43 W"])
    assert result.exit_code == 0, result.output
    assert "inside the 95 % ellipse" in result.output
    both = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv", "--chart-lat", "43 16.5 N",
                               "--chart-lon", "013 11.4 W"])
    assert both.exit_code == 1 and "--group" in both.output
    unknown = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv", "--group", "dawn"])
    assert unknown.exit_code == 1 and "evening-stars" in unknown.output


def test_workbook_command_on_the_demo(tmp_path):
    out = tmp_path / "voyage.xlsx"
    result = runner.invoke(app, ["workbook", "sample_sights/demo_sights.csv", "-o", str(out),
                                 "--plots", str(tmp_path / "plots"), "-o", str(tmp_path / "f.gpx"),
                                 "-o", str(tmp_path / "f.geojson")])
    assert result.exit_code == 0, result.output
    assert "11 sights reduced, 3 fixes, 0 rejected" in result.output
    assert out.exists() and (tmp_path / "f.gpx").exists() and (tmp_path / "f.geojson").exists()
    assert len(list((tmp_path / "plots").glob("plot-*.png"))) == 3
    assert len(list((tmp_path / "plots").glob("track-*.png"))) == 1  # the voyage picture
    assert len(list((tmp_path / "plots").glob("plot-*.svg"))) == 3


def test_workbook_exit_codes(tmp_path):
    mixed = tmp_path / "mixed.csv"
    mixed.write_text("utc,body,hs,eye_height_m,dr_lat,dr_lon\n"
                     "2026-03-26T19:41:00Z,Sirius,30 02.4,2.8,43 14 N,13 04 W\n"
                     "2026-03-26T19:42:00Z,Sirus,30 02.4,2.8,43 14 N,13 04 W\n")
    result = runner.invoke(app, ["workbook", str(mixed), "-o", str(tmp_path / "a.xlsx")])
    assert result.exit_code == 0 and "1 sight reduced, 0 fixes, 1 rejected" in result.output
    strict = runner.invoke(app, ["workbook", str(mixed), "-o", str(tmp_path / "b.xlsx"), "--strict"])
    assert strict.exit_code == 1
    hopeless = tmp_path / "hopeless.csv"
    hopeless.write_text("utc,body,hs,eye_height_m,dr_lat,dr_lon\n2026-03-26T19:41:00,Sirus,95,2.8,43 14 N,13 04 W\n")
    nothing = runner.invoke(app, ["workbook", str(hopeless), "-o", str(tmp_path / "c.xlsx")])
    assert nothing.exit_code == 1 and "nothing could be reduced" in nothing.output
    assert (tmp_path / "c.xlsx").exists()  # the workbook with its Rejected sheet is still written
    binary = tmp_path / "log.csv"
    binary.write_bytes(b"\x00\x01\x02")
    refused = runner.invoke(app, ["workbook", str(binary)])
    assert refused.exit_code == 1 and "binary" in refused.output and "Traceback" not in refused.output


def test_python_dash_m_navred_works():
    import subprocess
    import sys

    done = subprocess.run([sys.executable, "-m", "navred", "--version"], capture_output=True, text=True, check=False)
    assert done.returncode == 0 and done.stdout.startswith("navred ")


def test_plan_command_prints_twilights_and_plans(tmp_path):
    result = runner.invoke(app, ["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W",
                                 "--course", "215", "--speed", "6.5", "--days", "2", "--count", "4",
                                 "-o", str(tmp_path / "plan.csv"), "-o", str(tmp_path / "sky.svg")])
    assert result.exit_code == 0, result.output
    assert "nautical dawn" in result.output and "Evening twilight, Friday 27 March 2026:" in result.output
    assert result.output.count("<- recommended") == 16
    events = pd.read_csv(tmp_path / "plan.csv")
    plans = pd.read_csv(tmp_path / "plan-plans.csv")
    assert len(events) == 2 and plans.recommended.sum() == 16
    assert (tmp_path / "sky.svg").read_text().count("<svg") == 1
    polar = runner.invoke(app, ["plan", "--date", "2024-06-21", "--lat", "78 N", "--lon", "15 E"])
    assert polar.exit_code == 0 and "does not happen" in polar.output


def test_compass_and_identify_commands(tmp_path):
    card = tmp_path / "card.csv"
    for bearing in ("262", "263"):
        result = runner.invoke(app, ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N",
                                     "--lon", "013 10 W", "--compass-bearing", bearing, "--variation", "-4",
                                     "--heading", "215", "--card", str(card)])
        assert result.exit_code == 0, result.output
    assert "deviation" in result.output and "amplitude" in result.output
    assert len(pd.read_csv(card)) == 2
    found = runner.invoke(app, ["identify", "--utc", "2026-03-26T19:45:00Z", "--lat", "43 17 N", "--lon", "013 11 W",
                                "--alt", "30", "--az", "186"])
    assert found.exit_code == 0 and found.output.splitlines()[1].split()[1] == "Sirius"
    # each candidate's visual magnitude: Sirius about −1.5 in V (−1.1 in the catalogue's Hp), from memory
    assert found.output.splitlines()[0].split()[2] == "mag." and -1.6 <= float(found.output.splitlines()[1].split()[2]) <= -1.0
    ranked = pd.read_csv(io.StringIO(runner.invoke(app, [
        "identify", "--utc", "2026-03-26T19:45:00Z", "--lat", "43 17 N", "--lon", "013 11 W", "--alt", "30", "--az",
        "186", "--csv"]).stdout))
    venus = float(ranked.loc[ranked.body == "Venus", "magnitude"].iloc[0])
    assert -4.9 <= venus <= -3.7  # Venus is always about −4 (from memory)


def test_series_and_lunar_commands(tmp_path):
    result = runner.invoke(app, ["series", "sample_sights/training_sights.csv"])
    assert result.exit_code == 0, result.output
    assert "series of two or more sights" in result.output and "best sight" in result.output
    lunar = runner.invoke(app, ["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z",
                                "--lat", "30 N", "--lon", "040 W", "--moon-limb", "far"])
    assert lunar.exit_code == 0, lunar.output
    assert "chronometer is" in lunar.output and "fast" in lunar.output and "sensitivity" in lunar.output
    saved = runner.invoke(app, ["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z",
                                "--lat", "30 N", "--lon", "040 W", "--moon-limb", "far", "-o", str(tmp_path / "l.xlsx"),
                                "--csv"])
    assert saved.exit_code == 0 and "cleared_distance_deg" in saved.output
    import openpyxl

    cells = [c for row in openpyxl.load_workbook(tmp_path / "l.xlsx")["Lunar distance"].values for c in row if c]
    assert "cleared distance deg" in cells and "Result" in cells
    csv_series = runner.invoke(app, ["series", "sample_sights/training_sights.csv", "--csv"])
    assert csv_series.exit_code == 0 and "series_best_ho_deg" in csv_series.stdout.splitlines()[0]
    bad = runner.invoke(app, ["lunar", "29 44.7", "--other", "Moon", "--utc", "2024-09-12T19:33:00Z",
                              "--lat", "30 N", "--lon", "040 W"])
    assert bad.exit_code == 1 and "not to itself" in bad.output


def test_the_package_front_names_what_a_user_calls():
    import navred

    for name in navred.__all__:
        assert getattr(navred, name) is not None
    frame = navred.body_positions("Vega", "2026-03-26T19:45:00Z")
    assert frame.body[0] == "Vega"


def test_almanac_answers_aries_and_gives_v_and_d():
    result = runner.invoke(app, ["almanac", "Aries", "Moon", "Vega", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 0, result.output
    aries = next(line for line in result.stdout.splitlines() if line.startswith("Aries"))
    assert aries.count("°") == 1 and aries.split()[3:] == ["-"] * 6  # its GHA; no Dec or SHA, as an almanac
    header = next(line for line in result.stdout.splitlines() if line.startswith("body"))
    assert header.split()[:6] == ["body", "GHA", "v", "Dec", "d", "SHA"]
    frame = pd.read_csv(io.StringIO(runner.invoke(app, ["almanac", "Aries", "Moon", "Vega", "--utc",
                                                        "2026-03-20T18:42:10Z", "--csv"]).stdout))
    assert list(frame.body) == ["Aries", "Moon", "Vega"]
    assert frame.gha_deg[0] == pytest.approx(frame.gha_aries_deg[0])
    assert frame.v_arcmin.isna().tolist() == [True, False, True]
    assert frame.d_arcmin.isna().tolist() == [True, False, True]


@pytest.mark.parametrize("body", ["Sirus", "Arie", "Polaris B"])
def test_a_body_refused_is_named_as_written_never_as_a_numpy_repr(body):
    result = runner.invoke(app, ["almanac", body, "Sun", "--utc", "2026-03-20T18:42:10Z"])
    assert result.exit_code == 1
    assert f"'{body}'" in result.output
    assert "np." not in result.output and "str_" not in result.output


@pytest.mark.parametrize("argv", [
    ["almanac", "Sun", "Moon", "Venus", "Vega", "Aries", "--utc", "2026-03-20T18:42:10Z"],
    ["almanac", "--csv", "Moon", "-t", "2026-03-20T18:42:10Z", "--dut1", "0.1"],
    ["almanac", "Jupiter", "--utc=2026-03-20T18:42:10Z", "--dut1=-0.2", "--csv"],
])
def test_the_quick_almanac_prints_what_the_app_prints(argv, capsys):
    """``navred almanac`` written plainly is answered without the command-line library: the same text."""
    from navred.cli.quick import quick_answer

    assert quick_answer(argv)
    quick = capsys.readouterr()
    full = runner.invoke(app, argv)
    assert full.exit_code == 0
    assert quick.out == full.stdout
    assert quick.err.strip() == full.stderr.strip()


@pytest.mark.parametrize("argv", [
    ["almanac", "Sirus", "--utc", "2026-03-20T18:42:10Z"],  # an error: the app's message
    ["almanac", "Sun", "--utc", "2045-03-20T18:42:10Z"],  # a warning: the app prints it
    ["almanac", "Sun", "--utc", "2026-03-20T18:42:10Z", "--dut1", "2"],  # out of range
    ["almanac", "Sun", "--utc", ""], ["almanac", "--help"], ["almanac", "Sun"],
    ["almanac", "Sun", "--utc", "2026-03-20T18:42:10Z", "--utc", "2026-03-20T18:42:11Z"],
    ["reduce", "sample_sights/demo_sights.csv"],
])
def test_the_quick_almanac_leaves_everything_else_to_the_app(argv, capsys):
    from navred.cli.quick import quick_answer

    assert not quick_answer(argv)
    assert capsys.readouterr().out == ""


def test_fix_says_why_each_row_was_not_reduced_and_how_old_the_dr_is(tmp_path):
    # the navigator's trial: 'see navred reduce for why' named no reason; and a DR written on each row was taken
    # as a day old without a word (silent up to 60 nm). Now each rejected row's reason is printed, and the console
    # says how the DR is dated and how far a fix may lie from it unquestioned; an entry row dates it.
    frame = pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)
    frame.loc[2, "body"] = ""
    frame.to_csv(tmp_path / "log.csv", index=False)
    result = runner.invoke(app, ["fix", str(tmp_path / "log.csv"), "--group", "evening-stars"])
    assert result.exit_code == 0, result.output
    assert "row 4 (body): body is empty" in result.stdout and "see 'navred reduce'" not in result.stdout
    assert "the log does not date the DR, taken as 24 h old: up to" in result.stdout
    dated = pd.concat([pd.DataFrame([{"utc": "2026-03-26T17:00:00Z", "entry": "departure", "dr_lat": "43 20.0 N",
                                      "dr_lon": "013 00.0 W", "course_deg": "215", "speed_kn": "6.5"}]), frame])
    dated.fillna("").to_csv(tmp_path / "dated.csv", index=False)
    result = runner.invoke(app, ["fix", str(tmp_path / "dated.csv"), "--group", "evening-stars"])
    assert result.exit_code == 0, result.output
    line = next(x for x in result.stdout.splitlines() if x.strip().startswith("from the DR"))
    assert "a DR 2.8 h old: beyond" in line, line  # the stars at 19:48 UTC, the departure at 17:00


def test_fix_says_the_course_and_speed_its_run_was_carried_by():
    # a running fix's console says what the run between the sights was carried by, with the values the log gives
    # (the demo's course and speed columns, read here by the standard library's csv module)
    import csv
    from pathlib import Path

    log = Path(__file__).resolve().parents[1] / "sample_sights" / "demo_sights.csv"
    rows = list(csv.DictReader(log.open()))
    given = {f"{float(r['course_deg']):03.0f}° at {float(r['speed_kn']):.1f} kn" for r in rows}
    result = runner.invoke(app, ["fix", str(log)])
    assert result.exit_code == 0, result.output
    said = [line for line in result.output.splitlines() if "run between the sights" in line]
    assert said, result.output
    for line in said:
        assert "course and speed, " in line and line.split("course and speed, ")[1] in given, line
