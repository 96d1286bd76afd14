"""One way in, one answer: every command and the API read a log through the same reader and agree.

The logs here are the invented demo (sample_sights/) rewritten the ways navigators keep logs:
a chronometer error, zone time with the watch's error, no fix_group column, a chart position
on one row only, another unit system. Each must give the same Ho, intercept and fix from
`navred reduce --csv`, `navred fix --csv`, `navred workbook` and the Python API (to 0.01′),
and where the rewrite changes nothing physical, the same as the plain demo.
"""

from __future__ import annotations

import io

import numpy as np
import openpyxl
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred import process_log, read_sight_log, reduce_sights
from navred.cli import app

runner = CliRunner()
TOLERANCE_DEG = 0.01 / 60  # 0.01′


def demo():
    return pd.read_csv("sample_sights/demo_sights.csv", dtype=str, keep_default_na=False)


def with_chronometer_error(frame):
    # a chronometer 2 minutes fast reads 120 s ahead of UTC: the log gives the reading and its error
    out = frame.copy()
    reading = pd.to_datetime(out.utc) + pd.Timedelta(seconds=120)
    out["utc"] = reading.dt.strftime("%Y-%m-%dT%H:%M:%SZ")
    out["chronometer_error_s"] = "120 fast"  # a bare 120 is refused: fast or slow?
    return out


def with_zone_time(frame):
    # zone +1 (the ship near 13° W keeps UTC − 1 h), a deck watch 7 s slow: ZT + ZD = UTC (common practice)
    out = frame.drop(columns=["utc"]).copy()
    zone_time = pd.to_datetime(frame.utc) - pd.Timedelta(hours=1) - pd.Timedelta(seconds=7)
    out.insert(0, "date", zone_time.dt.strftime("%Y-%m-%d"))
    out.insert(1, "watch time", zone_time.dt.strftime("%H:%M:%S"))
    out.insert(2, "zone description", "+1 N")
    out.insert(3, "watch error", "7 s slow")
    return out


def without_fix_group(frame):
    return frame.drop(columns=["fix_group"])


def with_one_chart_position(frame):
    # sample_sights/demo_truth.csv: the true position at the fourth star sight, on that row only
    out = frame.copy()
    truth = pd.read_csv("sample_sights/demo_truth.csv")
    out["chart_lat"], out["chart_lon"] = "", ""
    out.loc[8, "chart_lat"] = f"{truth.true_lat_deg[8]:.5f}"
    out.loc[8, "chart_lon"] = f"{truth.true_lon_deg[8]:.5f}"
    return out


LOGS = {"chronometer error": with_chronometer_error, "zone time": with_zone_time,
        "no fix_group": without_fix_group, "chart on one row": with_one_chart_position}


def cli_csv(arguments):
    result = runner.invoke(app, arguments)
    assert result.exit_code == 0, result.output
    return pd.read_csv(io.StringIO(result.stdout))


def sheet(path, name):
    values = list(openpyxl.load_workbook(path)[name].values)
    return pd.DataFrame(values[1:], columns=values[0])


@pytest.mark.parametrize("kind", list(LOGS))
def test_every_command_and_the_api_give_the_same_answer(tmp_path, kind):
    path = tmp_path / "log.csv"
    LOGS[kind](demo()).to_csv(path, index=False)
    voyage = process_log(path)
    api = voyage.reduced
    assert (api.status != "error").all(), api.message.tolist()
    reduced = cli_csv(["reduce", str(path), "--csv"])
    assert np.allclose(reduced.ho_deg, api.ho_deg, atol=TOLERANCE_DEG, rtol=0)
    assert np.allclose(reduced.intercept_nm, api.intercept_nm, atol=0.01, rtol=0)
    fixes = cli_csv(["fix", str(path), "--csv"])
    book = tmp_path / "voyage.xlsx"
    result = runner.invoke(app, ["workbook", str(path), "-o", str(book)])
    assert result.exit_code == 0, result.output
    sheet_fixes = sheet(book, "Fixes")
    working = sheet(book, "Working")
    assert np.allclose(working["Ho (deg)"].astype(float), api.ho_deg, atol=TOLERANCE_DEG, rtol=0)
    api_fixes = [g for g in voyage.groups if g.fix is not None]
    assert len(voyage.groups) == len(fixes) == len(sheet_fixes)  # every group, fixed or not
    fixes = fixes[fixes.lat_deg.notna()].reset_index(drop=True)
    # a group with no fix has its reason in the latitude cell, never a number
    sheet_fixes = sheet_fixes[pd.to_numeric(sheet_fixes["latitude (deg)"], errors="coerce").notna()].reset_index(
        drop=True)
    assert len(api_fixes) == len(fixes) == len(sheet_fixes) >= 1
    by_name = sheet_fixes.set_index("fix group")  # the sheet lists the fixes by time: matched by group name
    for group, cli_row in zip(api_fixes, fixes.itertuples()):
        assert group.name == cli_row.fix_group and group.name in by_name.index
        for lat, lon in ((cli_row.lat_deg, cli_row.lon_deg), (by_name.loc[group.name, "latitude (deg)"],
                                                             by_name.loc[group.name, "longitude (deg)"])):
            assert abs(lat - group.fix.lat_deg) * 60 < 0.01 and abs(lon - group.fix.lon_deg) * 60 < 0.01
    if kind == "chart on one row":
        star = voyage.group("evening-stars")
        assert star.chart is not None and "row 10" in star.chart_note
        assert float(fixes.loc[fixes.fix_group == "evening-stars", "chart_distance_nm"].iloc[0]) == \
            pytest.approx(star.fix.chart_distance_nm)


@pytest.mark.parametrize("kind", ["chronometer error", "zone time", "chart on one row"])
def test_rewriting_the_time_or_adding_a_chart_changes_nothing_else(tmp_path, kind):
    path = tmp_path / "log.csv"
    LOGS[kind](demo()).to_csv(path, index=False)
    plain = process_log("sample_sights/demo_sights.csv")
    other = process_log(path)
    assert np.allclose(other.reduced.ho_deg, plain.reduced.ho_deg, atol=1e-9, rtol=0)
    assert (other.reduced.sight_utc == plain.reduced.sight_utc).all()
    for a, b in zip(plain.groups, other.groups):
        assert abs(a.fix.lat_deg - b.fix.lat_deg) < 1e-9 and abs(a.fix.lon_deg - b.fix.lon_deg) < 1e-9


def test_a_planted_blunder_is_named_by_its_row_everywhere(tmp_path):
    # Procyon is the sight on spreadsheet row 9 (the header is row 1): 15′ added to its Hs (it has a high
    # leverage in this fix, so the blunder test, at 5 % false alarms for the whole fix, needs more than 8′)
    frame = demo()
    assert frame.body[7] == "Procyon"
    frame.loc[7, "hs"] = "51 27.0"  # was 51 12.0
    path = tmp_path / "blunder.csv"
    frame.to_csv(path, index=False)
    result = runner.invoke(app, ["fix", str(path), "--group", "evening-stars"])
    assert result.exit_code == 0, result.output
    line = next(x for x in result.output.splitlines() if x.strip().startswith("row 9 "))
    assert "Procyon" in line and "BLUNDER" in line and "LEFT OUT" in line
    # a clear blunder leaves the headline, named loudly, the fix from every sight beside it
    assert "warning: LEFT OUT of this fix: row 9" in result.output and "from every sight (not to plot)" in result.output
    book = tmp_path / "v.xlsx"
    assert runner.invoke(app, ["workbook", str(path), "-o", str(book)]).exit_code == 0
    fixes = sheet(book, "Fixes").set_index("fix group")
    assert "row 9" in fixes.loc["evening-stars", "left out (gross errors, clear blunders)"]
    assert "LEFT OUT of this fix: row 9" in fixes.loc["evening-stars", "note"]
    working = sheet(book, "Working").set_index("row in log")
    assert "BLUNDER" in working.loc[9, "flags"] and "BLUNDER" not in str(working.loc[10, "flags"])


def test_the_fixes_sheet_of_two_logs_is_in_time_order(tmp_path):
    # a master reads a fix list in time order (common practice): the later log given first on the command line
    frame = demo()
    early, late = frame[frame.fix_group == "sun-run-sun"], frame[frame.fix_group == "evening-stars"]
    first, second = tmp_path / "late.csv", tmp_path / "early.csv"
    late.to_csv(first, index=False)
    early.to_csv(second, index=False)
    book = tmp_path / "both.xlsx"
    assert runner.invoke(app, ["workbook", str(first), str(second), "-o", str(book)]).exit_code == 0
    fixes = sheet(book, "Fixes")
    assert list(fixes["fix group"]) == ["early.csv: sun-run-sun", "late.csv: evening-stars"]  # names kept
    assert list(pd.to_datetime(fixes["UTC"])) == sorted(pd.to_datetime(fixes["UTC"]))


def test_the_workbook_navred_wrote_reads_back_to_the_same_fixes(tmp_path):
    for source in ("sample_sights/demo_sights.csv", "sample_sights/training_sights.csv"):
        voyage = process_log(source, plan=False)
        book = tmp_path / "voyage.xlsx"
        from navred.jobs.voyagebook import write_workbook

        write_workbook(voyage, book, plots=False)
        again = process_log(book, plan=False)
        assert again.log.rejected.empty
        columns = ["sight_utc", "body_name", "hs_deg", "dr_lat_deg", "dr_lon_deg", "fix_group", "observer"]
        pd.testing.assert_frame_equal(again.log.sights[columns], voyage.log.sights[columns])
        assert again.log.sights.row.tolist() == voyage.log.sights.row.tolist()  # the original rows, kept
        assert [g.name for g in again.groups] == [g.name for g in voyage.groups]
        for a, b in zip(voyage.groups, again.groups):
            if a.fix is not None:
                assert abs(a.fix.lat_deg - b.fix.lat_deg) < 1e-9 and abs(a.fix.lon_deg - b.fix.lon_deg) < 1e-9


def test_feet_fahrenheit_and_inches_of_mercury_give_the_same_ho(tmp_path):
    # 1 ft = 0.3048 m, °C = (°F − 32) × 5/9, 1 inHg = 33.8639 hPa (NIST SP 811; from memory)
    metric = demo()
    metric["eye_height_m"], metric["temperature_c"], metric["pressure_hpa"] = "3.048", "-5", f"{29.5 * 33.8639}"
    imperial = metric.drop(columns=["eye_height_m", "temperature_c", "pressure_hpa"])
    imperial["Height of eye (ft)"], imperial["Temperature (°F)"], imperial["Pressure (inHg)"] = "10", "23", "29.5"
    mm = metric.drop(columns=["pressure_hpa"]).assign(pressure_mmhg=f"{29.5 * 33.8639 / 1.33322}")
    results = []
    for name, frame in (("metric", metric), ("imperial", imperial), ("mm", mm)):
        path = tmp_path / f"{name}.csv"
        frame.to_csv(path, index=False)
        results.append(reduce_sights(read_sight_log(path)))
    for other in results[1:]:
        assert np.allclose(other.ho_deg, results[0].ho_deg, atol=TOLERANCE_DEG, rtol=0)
    # and the values were used: the dip of 3.048 m and the cold, low-pressure refraction are not the demo's
    plain = reduce_sights(read_sight_log("sample_sights/demo_sights.csv"))
    assert np.all(np.abs(results[0].ho_deg - plain.ho_deg) * 60 > 0.05)


def test_the_csv_of_navred_reduce_reads_back_to_the_same_fixes(tmp_path):
    out = tmp_path / "reduced.csv"
    out.write_text(runner.invoke(app, ["reduce", "sample_sights/demo_sights_hand_kept.csv", "--csv"]).stdout)
    again = process_log(out, plan=False)
    plain = process_log("sample_sights/demo_sights.csv", plan=False)
    assert again.log.rejected.empty, again.log.rejected
    for a, b in zip(plain.groups, again.groups):
        # the CSV keeps decimal degrees to 1e-6° (0.00006′)
        assert a.name == b.name and abs(a.fix.lat_deg - b.fix.lat_deg) * 60 < 0.001
        assert abs(a.fix.lon_deg - b.fix.lon_deg) * 60 < 0.001


def test_the_hand_kept_demo_is_the_demo():
    # sample_sights/demo_sights_hand_kept.csv: the same invented sights in zone time, feet and ° ′ (docs/sight-log.md)
    hand = process_log("sample_sights/demo_sights_hand_kept.csv", plan=False)
    plain = process_log("sample_sights/demo_sights.csv", plan=False)
    assert (hand.reduced.sight_utc == plain.reduced.sight_utc).all()
    assert np.allclose(hand.reduced.ho_deg, plain.reduced.ho_deg, atol=TOLERANCE_DEG, rtol=0)
    working = hand.reduced
    assert (working.time_given == "zone time").all() and (working.watch_error_applied_s == -7).all()
    assert (working.eye_height_as_given == "9.1864 feet").all()


@pytest.mark.parametrize("arguments, fragment", [
    (["plan", "--date", "2026-03-26", "--lat", "44 30", "--lon", "012 00 W"], "--lat: cannot read '44 30'"),
    (["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 S"], "S is a hemisphere of a latitude"),
    (["plan", "--date", "26/03/2026", "--lat", "44 30 N", "--lon", "012 00 W"], "not ISO 8601"),
    (["plan", "--date", "2026-02-30", "--lat", "44 30 N", "--lon", "012 00 W"], "not a date"),
    (["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon", "013 10 W",
      "--variation", "4 30"], "could be E or W"),
    (["fix", "sample_sights/demo_sights.csv", "--group", "evening-stars", "--chart-lat", "43 16.5",
      "--chart-lon", "013 11.4 W"], "--chart-lat"),
    (["reduce", "sample_sights/demo_sights.csv", "--dates", "dmy"], "day-first, month-first"),
])
def test_command_line_positions_and_dates_follow_the_logs_rules(arguments, fragment):
    result = runner.invoke(app, arguments)
    assert result.exit_code == 1 and fragment in result.output and "Traceback" not in result.output


def test_command_line_variation_with_its_letter():
    east = runner.invoke(app, ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon",
                               "013 10 W", "--compass-bearing", "262", "--variation", "3.5 E"])
    west = runner.invoke(app, ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon",
                               "013 10 W", "--compass-bearing", "262", "--variation", "-3.5"])
    assert "variation 3.5° E" in east.output and "variation 3.5° W" in west.output


def test_several_logs_on_the_command_line(tmp_path):
    frame = demo()
    frame.iloc[:5].to_csv(tmp_path / "first.csv", index=False)
    frame.iloc[5:].to_csv(tmp_path / "second.csv", index=False)
    result = runner.invoke(app, ["fix", str(tmp_path / "first.csv"), str(tmp_path / "second.csv")])
    assert result.exit_code == 0, result.output
    assert 'Fix "second.csv: evening-stars"' in result.output and "second.csv row 2" in result.output
    folder = runner.invoke(app, ["reduce", str(tmp_path)])
    assert folder.exit_code == 0 and "11 sights reduced" in folder.output


def test_row_lists_name_every_row_compactly():
    # common practice: consecutive rows as a range, each file named when there are several
    from navred.jobs.frames import row_list

    one = pd.DataFrame({"row": [9, 3, 4, 5, 12, 11], "source": ["a.csv"] * 6})
    assert row_list(one) == "rows 3-5, 9, 11-12"
    two = pd.DataFrame({"row": [3, 4, 2], "source": ["/x/a.csv", "/x/a.csv", "/y/b.csv"]})
    assert row_list(two) == "a.csv rows 3-4; b.csv row 2"
    assert row_list(one.iloc[:0]) == ""


def test_a_misnamed_star_is_left_out_of_the_position_everywhere(tmp_path, ts, eph):
    """Reference: skyfield's altitudes of five stars in evening twilight at a known position (45° 15′ N
    20° 30′ W); Kochab is logged as Alkaid (a misidentified star, its line hundreds of miles off). The
    headline position is within 1 nm of the truth in the console, --csv, the Fixes sheet, GPX and GeoJSON,
    the row is named as left out everywhere, and the fix from every sight is kept beside it."""
    from tests.conftest import skyfield_sight

    when = pd.Timestamp("2024-09-15T19:50:00Z")
    truth = (45.25, -20.5)
    rows = []
    for k, name in enumerate(["Altair", "Arcturus", "Kochab", "Deneb", "Antares"]):
        sight = skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=2 * k), *truth)
        rows.append({"utc": sight["utc"].strftime("%Y-%m-%dT%H:%M:%SZ"), "body": name, "hs": round(sight["hs"], 5),
                     "eye_height_m": 3.0, "dr_lat": "45 20.0 N", "dr_lon": "020 38.0 W", "fix_group": "stars"})
    rows[2]["body"] = "Alkaid"  # row 4 of the file (the header is row 1)
    path = tmp_path / "misnamed.csv"
    pd.DataFrame(rows).to_csv(path, index=False)
    from navred.triangle import distance_bearing

    def off(lat, lon):
        return float(distance_bearing(lat, lon, *truth)[0])

    console = runner.invoke(app, ["fix", str(path)])
    assert console.exit_code == 0, console.output
    assert "1 left out" in console.output and "LEFT OUT of this fix: row 4" in console.output
    line = next(x for x in console.output.splitlines() if x.strip().startswith("row 4 "))
    assert "Alkaid" in line and "LEFT OUT" in line
    assert "from every sight (not to plot)" in console.output
    assert "plot this one" in console.output  # the two differ by more than a mile: a warning
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout))
    assert off(table.lat_deg[0], table.lon_deg[0]) < 1.0
    assert table.left_out[0] == "row 4" and off(table.all_sights_lat_deg[0], table.all_sights_lon_deg[0]) > 20
    book, plots = tmp_path / "m.xlsx", tmp_path / "plots"
    gpx, geojson = tmp_path / "m.gpx", tmp_path / "m.geojson"
    done = runner.invoke(app, ["workbook", str(path), "-o", str(book), "--plots", str(plots), "--plot-formats", "svg",
                               "-o", str(gpx), "-o", str(geojson)])
    assert done.exit_code == 0, done.output
    assert "LEFT OUT of this fix: row 4" in done.output  # the workbook's console says so too
    fixes = sheet(book, "Fixes").set_index("fix group")
    assert off(fixes.loc["stars", "latitude (deg)"], fixes.loc["stars", "longitude (deg)"]) < 1.0
    assert fixes.loc["stars", "left out (gross errors, clear blunders)"] == "row 4"
    assert fixes.loc["stars", "fix from every sight (° ′)"] and "LEFT OUT" in fixes.loc["stars", "note"]
    working = sheet(book, "Working").set_index("row in log")
    assert "LEFT OUT" in working.loc[4, "flags"] and "BLUNDER" not in str(working.loc[3, "flags"])
    import gpxpy

    waypoints = {w.name: w for w in gpxpy.parse(gpx.read_text()).waypoints}
    assert off(waypoints["fix stars"].latitude, waypoints["fix stars"].longitude) < 1.0
    assert "LEFT OUT (a gross error or a clear blunder): row 4" in waypoints["fix stars"].description
    assert "NOT THE FIX stars (all sights)" in waypoints  # a plotter shows only the name
    import json

    features = json.loads(geojson.read_text())["features"]
    fix = next(f for f in features if f["properties"].get("kind") == "fix")
    assert off(fix["geometry"]["coordinates"][1], fix["geometry"]["coordinates"][0]) < 1.0
    assert "LEFT OUT" in fix["properties"]["description"]
    assert any(f["properties"].get("kind") == "from every sight (not the fix)" for f in features)
    svg = next(plots.glob("*stars*.svg")).read_text()
    assert "LEFT OUT: row 4 Alkaid" in svg and "a gross error" in svg
    # the ellipse's full size, then its semi-axes, in the plot title, the GPX description and the console
    size = fixes.loc["stars", "95 % ellipse (full size)"]
    assert " × " in size and ", semi-axes " in size and f"95 % ellipse {size}" in svg
    assert size.replace("×", "x") in waypoints["fix stars"].description and size in console.output


def test_a_fix_far_from_its_dr_is_warned_by_every_command_and_file(tmp_path):
    """The demo kept in zone time with the zone description's sign written the wrong way (−1 for +1: UTC two
    hours early, 30° of longitude): each fix lands about 1,300 nm from its DR, far beyond what a DR of a day
    at 6.5 kn could be out (common practice: 0.3 kn of unknown current and 2 % of the run, four times over).
    fix, workbook and days say so, and so do the Fixes sheet's note and the GPX and GeoJSON descriptions;
    the star sights, now in daylight, are warned too, by workbook as by fix."""
    frame = with_zone_time(demo())
    frame["zone description"] = "-1"
    path = tmp_path / "zone.csv"
    frame.to_csv(path, index=False)
    far = "nm from the DR, far more than the DR could be out"
    fix = runner.invoke(app, ["fix", str(path)])
    assert fix.exit_code == 0 and fix.output.count(far) == 3, fix.output
    assert "check the time (the zone description and its sign" in fix.output
    # the likely cause named, against the DR's nautical zone (ZD = longitude west / 15°: 12° W is +1; common
    # practice), in the fix's warning and in each far row's note
    cause = "likely cause: the zone description -1 is a zone east of Greenwich, but the DR, 1"
    assert "the DR, 12° W, is in zone +1: a ZD of the wrong sign puts the time 2 h out" in fix.output
    assert fix.output.count("warning: " + cause) == 3, fix.output
    reduced = reduce_sights(read_sight_log(path))
    assert reduced.message.str.contains(cause).sum() >= 6
    from navred import fix_positions

    grouped = fix_positions(reduced)
    assert all(any(cause in w for w in grouped.results[g].warnings) for g in grouped.results)
    book, gpx, geojson = tmp_path / "z.xlsx", tmp_path / "z.gpx", tmp_path / "z.geojson"
    work = runner.invoke(app, ["workbook", str(path), "-o", str(book), "-o", str(gpx), "-o", str(geojson)])
    assert work.exit_code == 0 and work.output.count(far) == 3, work.output
    assert "row 7 (Sirius)" in work.output and "taken in twilight" in work.output  # the sight warnings too
    days = runner.invoke(app, ["days", str(path)])
    assert days.exit_code == 0 and days.output.count(far) == 3, days.output
    fixes = sheet(book, "Fixes").set_index("fix group")
    assert all(far in fixes.loc[g, "note"] for g in ("sun-run-sun", "moon-planet", "evening-stars"))
    import json

    import gpxpy

    assert sum(far in (w.description or "") for w in gpxpy.parse(gpx.read_text()).waypoints) == 3
    features = json.loads(geojson.read_text())["features"]
    assert sum(far in f["properties"].get("description", "") for f in features) == 3
    # and the plain demo, its DRs a few miles out, has no such warning anywhere
    plain = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv"])
    assert far not in plain.output and "taken in twilight" not in plain.output and "cause:" not in plain.output
    assert not reduce_sights(read_sight_log(with_zone_time(demo()))).message.str.contains("cause:").any()


@pytest.mark.parametrize("command", [["reduce"], ["reduce", "--csv"], ["fix"], ["fix", "--csv"], ["days"],
                                     ["days", "--csv"]])
def test_every_form_of_reduce_fix_and_days_exits_1_when_nothing_could_be_done(tmp_path, command):
    # every sight of the demo with an Hs no sextant reads (a sight above 90° is refused)
    frame = demo()
    frame["hs"] = "95 00.0"
    path = tmp_path / "bad.csv"
    frame.to_csv(path, index=False)
    result = runner.invoke(app, [*command, str(path)])
    assert result.exit_code == 1, result.output
    assert "nothing" in result.output
    good = runner.invoke(app, [*command, "sample_sights/demo_sights.csv"])
    assert good.exit_code == 0, good.output


def test_the_api_dates_the_dr_as_the_commands_do(tmp_path):
    """The demo with a known position logged at 06:00 (an entry row) and every DR written 36′ of latitude off: the
    log dates each DR (3 to 14 h old), and a DR that young cannot be some 33 nm out (common practice: 0.3 kn of unknown
    current and 2 % of the run, four times over, navred.sensechecks). reduce_sights carries each DR's age in its
    table (dr_age_h), and fix_positions takes it: the API gives the same DR ages, allowances and notes as
    process_log and `navred fix --csv`, the far-from-DR warning among them."""
    from navred import fix_positions
    from navred.vocabulary import DR_AGE_COLUMN

    frame = demo()
    frame["dr_lat"] = (reduce_sights(demo()).dr_lat_deg + 0.6).round(5).astype(str)
    entry = dict.fromkeys(frame.columns, "") | {"utc": "2026-03-26T06:00:00Z", "entry": "position",
                                                 "dr_lat": "44 20.0 N", "dr_lon": "012 00.0 W",
                                                 "vessel": frame.vessel[0]}
    log = pd.concat([pd.DataFrame([entry]), frame.assign(entry="")], ignore_index=True)
    path = tmp_path / "dated.csv"
    log.to_csv(path, index=False)
    reduced = reduce_sights(path)
    assert reduced[DR_AGE_COLUMN].notna().sum() == len(demo())  # every sight's DR dated, the entry row not a sight
    voyage = process_log(path)
    api = fix_positions(reduced)
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout)).set_index("fix_group")
    far = "nm from the DR, far more than the DR could be out"
    for group in voyage.groups:
        mine = api[group.name]
        assert mine.dr_age_known and group.fix.dr_age_known
        assert mine.dr_age_h == pytest.approx(group.fix.dr_age_h) and mine.dr_age_h < 15
        assert mine.dr_allowed_nm == pytest.approx(group.fix.dr_allowed_nm)
        assert mine.warnings == group.fix.warnings
        assert "; ".join(mine.warnings) == table.loc[group.name, "note"]
        assert any(far in w and " h old at " in w for w in mine.warnings)
    # without the column the API cannot date the DR: it takes it as a day old, says so, and lets 33 nm pass
    undated = fix_positions(reduced.drop(columns=[DR_AGE_COLUMN]))
    assert all(not undated[g.name].dr_age_known and not any(far in w for w in undated[g.name].warnings)
               for g in voyage.groups)


def test_the_api_runs_the_lines_through_the_logs_current_as_the_commands_do(tmp_path):
    """The invented day at sea's forenoon and noon Sun as one running fix, with a current entry in the
    log (090°, 1.3 kn, along the forenoon Sun's azimuth): reduce_sights carries the current in force at each sight
    (current_set_deg, current_drift_kn) as the day's work keeps it, and fix_positions advances the lines through
    it, as process_log and `navred fix --csv` do; without the columns the API runs the lines by course and speed
    alone, a fix miles off (the current's run over the 3.2 h between the sights is 4.1 nm, most of it along the
    advanced line's azimuth; common practice)."""
    from navred import fix_positions
    from navred.triangle import distance_bearing
    from navred.vocabulary import CURRENT_DRIFT_COLUMN, CURRENT_SET_COLUMN

    frame = pd.read_csv("sample_sights/day_at_sea.csv", dtype=str, keep_default_na=False)
    frame = frame[frame.fix_group.isin(["", "forenoon Sun", "noon Sun"]) & (frame.entry != "destination")]
    frame.loc[frame.fix_group != "", "fix_group"] = "sun-run-sun"
    current = dict.fromkeys(frame.columns, "") | {"utc": "2026-06-20T04:00:00Z", "entry": "current",
                                                   "vessel": frame.vessel.iloc[0]}
    frame = pd.concat([frame.iloc[:1], pd.DataFrame([current]), frame.iloc[1:]], ignore_index=True)
    frame["set"], frame["drift"] = "", ""
    frame.loc[1, ["set", "drift"]] = ["090", "1.3"]
    path = tmp_path / "current.csv"
    frame.to_csv(path, index=False)
    reduced = reduce_sights(path)
    assert len(reduced) == 2 and np.allclose(reduced[CURRENT_DRIFT_COLUMN], 1.3)
    assert np.allclose(reduced[CURRENT_SET_COLUMN], 90.0)
    api = fix_positions(reduced)["sun-run-sun"]
    commands = process_log(path).group("sun-run-sun").fix
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout)).set_index("fix_group")
    assert (api.lat_deg, api.lon_deg) == pytest.approx((commands.lat_deg, commands.lon_deg), abs=1e-9)
    assert (table.loc["sun-run-sun", "lat_deg"], table.loc["sun-run-sun", "lon_deg"]) == pytest.approx(
        (api.lat_deg, api.lon_deg), abs=1e-6)
    without = fix_positions(reduced.drop(columns=[CURRENT_SET_COLUMN, CURRENT_DRIFT_COLUMN]))["sun-run-sun"]
    assert 2.0 < float(distance_bearing(without.lat_deg, without.lon_deg, api.lat_deg, api.lon_deg)[0]) < 6.0
