"""Noon: the noon position carried through every change, the forenoon Sun run up to the noon latitude, the noon
report's distance to go and ETA.

The references: passages sailed in scripts/make_passage.py's own code (fourth-order Runge-Kutta along the WGS 84
ellipsoid's radii of curvature, one-minute steps, with the courses, speeds and currents of each test), sights from
skyfield at the true positions (tests/conftest.py), geographiclib for distances on the ellipsoid; the route's own
figures (navred route's CSV, its rhumb legs) for the distance to go.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic
from typer.testing import CliRunner

from navred.cli import app
from navred.jobs.voyage import process_log
from tests.conftest import skyfield_sight

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_passage as passage  # noqa: E402  (sails the ship outside navred)

GEOD = Geodesic.WGS84
NM = 1852.0


def _off_nm(lat1, lon1, lat2, lon2) -> float:
    return GEOD.Inverse(lat1, lon1, lat2, lon2)["s12"] / NM


def _iso(when: pd.Timestamp) -> str:
    return when.strftime("%Y-%m-%dT%H:%M:%SZ")


def _star_rows(ts, eph, when, track, group):
    lat, lon = passage.position_at(track, when)
    return [{"utc": _iso(when), "body": s["body"], "hs": s["hs"], "eye_height_m": 3.0, "fix_group": group}
            for s in passage.star_round(ts, eph, when, lat, lon)]


@pytest.mark.parametrize("case", ["forward", "backward"])
def test_the_noon_position_is_carried_through_every_change_between_the_fix_and_noon(ts, eph, case):
    """A fix 50 minutes from noon, and between them changes of course, speed and current (entered as they were):
    the noon position lies within 0.05 nm of the ship's true noon position, carried forward (a fix at 12:10 UTC,
    noon 13:00 in zone +1) or back (a fix at 13:50). The truth is sailed by Runge-Kutta in make_passage.sail."""
    start = pd.Timestamp("2026-04-14T10:00:00Z")
    noon = pd.Timestamp("2026-04-14T13:00:00Z")  # 12:00 in zone +1 (the ship at 14-15° W)
    if case == "forward":
        fix_at = pd.Timestamp("2026-04-14T12:10:00Z")
        plan = [(start, 270.0, 10.0), (pd.Timestamp("2026-04-14T12:40:00Z"), 0.0, 10.0)]
        current_change = pd.Timestamp("2026-04-14T12:50:00Z")
    else:
        fix_at = pd.Timestamp("2026-04-14T13:50:00Z")
        plan = [(start, 270.0, 10.0), (pd.Timestamp("2026-04-14T13:20:00Z"), 45.0, 6.0)]
        current_change = pd.Timestamp("2026-04-14T13:30:00Z")
    change_h = (current_change - start).total_seconds() / 3600.0

    def current(t_h):  # 1.5 kn setting 135°, then 0.5 kn setting 200°
        return (135.0, 1.5) if t_h < change_h - 1e-9 else (200.0, 0.5)

    track = passage.sail(start, 38.0, -14.0, plan, current, pd.Timestamp("2026-04-14T15:00:00Z"))
    rows = [{"utc": _iso(start), "entry": "departure", "dr_lat": "38 05.0 N", "dr_lon": "014 07.0 W",
             "course": 270, "speed": 10},  # a departure 6 miles off: only the fix puts the ship right
            {"utc": _iso(start), "entry": "current", "set": 135, "drift": 1.5},
            {"utc": _iso(plan[1][0]), "entry": "course", "course": plan[1][1], "speed": plan[1][2]},
            {"utc": _iso(current_change), "entry": "current", "set": 200, "drift": 0.5}]
    rows += _star_rows(ts, eph, fix_at, track, "the fix")
    days = process_log(pd.DataFrame(rows), plan=False).days_work()
    noons = days.noons
    assert list(noons["noon_utc"]) == ["2026-04-14 13:00:00"] and noons["zone"].iloc[0] == "ZD +1"
    row = noons.iloc[0]
    assert row["noon_from"].startswith("fix the fix at ")
    assert ("carried back to noon" if case == "backward" else "carried to noon") in row["noon_from"]
    assert "through 2 changes of course, speed or current" in row["noon_from"]
    true_lat, true_lon = passage.position_at(track, noon)
    assert _off_nm(true_lat, true_lon, row["lat_deg"], row["lon_deg"]) < 0.05
    # carried along the one velocity at the fix, as navred used to, it would be miles out
    fix = process_log(pd.DataFrame(rows), plan=False).group("the fix").fix
    hours = (noon - fix_at).total_seconds() / 3600.0
    n, e = passage.velocity(plan[0][1] if case == "forward" else plan[1][1], 10.0 if case == "forward" else 6.0)
    cn, ce = passage.velocity(*current(0.0 if case == "forward" else 10.0))
    one = GEOD.Direct(fix.lat_deg, fix.lon_deg, np.degrees(np.arctan2(e + ce, n + cn)),
                      np.hypot(n + cn, e + ce) * hours * NM)
    assert _off_nm(true_lat, true_lon, one["lat2"], one["lon2"]) > 1.0


def _sun_rows(ts, eph, when, track, group, **kwargs):
    lat, lon = passage.position_at(track, when)
    s = skyfield_sight(ts, eph, kwargs.pop("body", "Sun"), when, lat, lon, eye_height_m=3.0, **kwargs)
    return {"utc": _iso(when), "body": s["body"], "limb": s["limb"], "hs": s["hs"], "eye_height_m": 3.0,
            "fix_group": group}


def _meridian_passage(ts, eph, track, around: pd.Timestamp) -> pd.Timestamp:
    """The instant (to the minute) the Sun crosses the ship's meridian: skyfield's hour angle at the true track."""
    from skyfield.api import wgs84

    best, smallest = around, 99.0
    for minutes in range(-90, 91):
        when = around + pd.Timedelta(minutes=minutes)
        lat, lon = passage.position_at(track, when)
        t = ts.from_datetime(when.to_pydatetime())
        hour = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(eph["sun"]).apparent().hadec()[0].hours
        hour = (hour + 12.0) % 24.0 - 12.0
        if abs(hour) < smallest:
            best, smallest = when, abs(hour)
    return best


@pytest.fixture(scope="module")
def forenoon(ts, eph):
    """A ship steaming east at 12 kn near the Greenwich meridian on 13 June 2026, her course altered to 045° at
    11:00 UTC; her departure entered 4 miles off the truth and no fix all morning."""
    start = pd.Timestamp("2026-06-13T03:00:00Z")
    plan = [(start, 90.0, 12.0), (pd.Timestamp("2026-06-13T11:00:00Z"), 45.0, 12.0)]
    track = passage.sail(start, 40.0, -1.5, plan, lambda t: (0.0, 0.0), pd.Timestamp("2026-06-13T14:00:00Z"))
    entries = [{"utc": _iso(start), "entry": "departure", "dr_lat": "40 03.0 N", "dr_lon": "001 33.5 W",
                "course": 90, "speed": 12},
               {"utc": _iso(plan[1][0]), "entry": "course", "course": 45, "speed": 12}]
    return track, entries, _meridian_passage(ts, eph, track, pd.Timestamp("2026-06-13T12:00:00Z"))


@pytest.mark.parametrize("latitude_by", ["meridian altitude", "ex-meridian", "Polaris"])
def test_the_forenoon_sun_run_up_to_the_noon_latitude_gives_noon_within_a_fifth_of_a_mile(ts, eph, forenoon,
                                                                                         latitude_by):
    """The forenoon Sun line (09:00 UTC) run up along the DR through the alteration of course to the latitude at
    noon (a meridian altitude series around the Sun's meridian passage, a single ex-meridian sight within its
    limit, or Polaris at morning twilight): the running fix at noon lies within 0.2 nm of the true noon
    position, where the DR, from a departure entered 4 miles out, is miles away."""
    track, entries, passage_time = forenoon
    rows = list(entries) + [_sun_rows(ts, eph, pd.Timestamp("2026-06-13T09:00:00Z"), track, "forenoon",
                                      limb="lower")]
    if latitude_by == "meridian altitude":
        rows += [_sun_rows(ts, eph, passage_time + pd.Timedelta(minutes=m), track, "noon", limb="lower")
                 for m in (-2, 0, 2)]
    elif latitude_by == "ex-meridian":  # 9 minutes before; the Sun's zenith distance is 17°: a limit of 17 min
        rows += [_sun_rows(ts, eph, passage_time - pd.Timedelta(minutes=9), track, "noon", limb="lower")]
    else:
        rows += [_sun_rows(ts, eph, pd.Timestamp("2026-06-13T03:40:00Z"), track, "dawn", body="Polaris")]
    voyage = process_log(pd.DataFrame(rows), plan=False)
    days = voyage.days_work()
    noon = days.noons.iloc[0]
    assert noon["noon_utc"] == "2026-06-13 12:00:00" and noon["zone"] == "ZD 0"
    assert noon["noon_from"].startswith("forenoon Sun line at 09:00 UTC run up to the latitude by " + latitude_by)
    true_lat, true_lon = passage.position_at(track, pd.Timestamp("2026-06-13T12:00:00Z"))
    assert _off_nm(true_lat, true_lon, noon["lat_deg"], noon["lon_deg"]) < 0.2
    dr = voyage.days_work().tracks[""].positions(np.array([pd.Timestamp("2026-06-13T12:00:00Z").value]))
    assert _off_nm(true_lat, true_lon, dr[0][0], dr[1][0]) > 3.0
    # the latitude by its method is in the day's work and navred fix's checks
    method = {"meridian altitude": "meridian", "ex-meridian": "ex-meridian", "Polaris": "Polaris"}[latitude_by]
    assert method in set(days.latitudes["method"])


def test_noon_positions_none_always_says_why(tmp_path):
    """A log whose one fix falls after the ship's noon (a hand-kept evening round, no departure): navred days
    says there is no noon and why, and exits 0 (it made a fix, and the DR from it)."""
    log = tmp_path / "evening.csv"
    log.write_text("Date,Watch time,ZD,Body,Hs,IE,Height of eye (m),DR lat,DR lon,Course,Speed\n"
                   "2026-05-10,19:55:04,+2 O,Vega,16° 03.3′,1.2 off,18,46° 35.0′ N,027° 48.0′ W,075,12\n"
                   "2026-05-10,19:56:34,+2 O,Arcturus,44° 50.1′,1.2 off,18,46° 35.0′ N,027° 48.0′ W,075,12\n"
                   "2026-05-10,19:58:04,+2 O,Spica,25° 54.4′,1.2 off,18,46° 35.0′ N,027° 48.0′ W,075,12\n")
    result = CliRunner().invoke(app, ["days", str(log)])
    assert result.exit_code == 0, result.output
    # the rows' own DRs are minutes before the fix: no start of the DR (the fix starts it)
    assert "Noon positions: none: the DR starts at 2026-05-10 21:58:04 UTC (19:58 by the ship's clocks)" in result.stdout
    assert "no noon by her clocks falls within it" in result.stdout
    assert "no day's work" not in result.output


def test_the_noon_report_gives_the_distance_to_go_and_eta_by_the_routes_own_figures(ts, eph, tmp_path):
    """A ship on navred route's great circle, her position entered at a waypoint at noon: the distance to go is
    the route's own rhumb legs from that waypoint on, summed, and the ETA that distance at the day's average speed
    made good (the report's own figure) after noon. A destination entry instead gives the rhumb distance to it
    (the route's last leg figure, from its last waypoint but one)."""
    route = tmp_path / "route.csv"
    made = CliRunner().invoke(app, ["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W", "--spacing", "300",
                                    "-o", str(route)])
    assert made.exit_code == 0, made.output
    waypoints = pd.read_csv(route)
    k = 3
    log = pd.DataFrame([
        {"utc": "2026-06-01T16:00:00Z", "entry": "departure", "dr_lat": waypoints.lat_deg[k - 1],
         "dr_lon": waypoints.lon_deg[k - 1], "course": 60, "speed": 12},
        {"utc": "2026-06-02T16:00:00Z", "entry": "position", "dr_lat": waypoints.lat_deg[k],
         "dr_lon": waypoints.lon_deg[k]},
    ])
    sun = skyfield_sight(ts, eph, "Sun", pd.Timestamp("2026-06-01T18:00:00Z"), 42.0, -62.0, limb="lower")
    log = pd.concat([log, pd.DataFrame([{"utc": "2026-06-01T18:00:00Z", "body": "Sun", "limb": "lower",
                                         "hs": sun["hs"], "eye_height_m": 3.0}])], ignore_index=True)
    log.to_csv(tmp_path / "log.csv", index=False)
    from navred.jobs.daily import days_log

    report = days_log(str(tmp_path / "log.csv"), route=str(route))
    noons = report.days.noons
    at_waypoint = noons[noons["noon_utc"] == "2026-06-02 16:00:00"].iloc[0]  # 12:00 in zone +4 (near 60° W)
    expected = waypoints.rhumb_distance_to_next_nm[k:].sum()  # the route's own figures
    assert at_waypoint["to_go_nm"] == pytest.approx(expected, abs=0.01)
    from navred.io.waypoints import read_route

    named = read_route(route).name.tolist()  # the names the route reader gives (WP004 for navred route's 4)
    assert at_waypoint["to"].startswith(named[k + 1]) and named[k + 1].endswith(f"{waypoints.waypoint[k + 1]:03d}")
    hours = expected / at_waypoint["speed_made_good_kn"]
    eta = pd.Timestamp("2026-06-02T16:00:00") + pd.Timedelta(hours=hours)
    assert abs((pd.Timestamp(at_waypoint["eta_utc"]) - eta).total_seconds()) <= 30
    assert at_waypoint["eta_ship_time"].startswith(str(pd.Timestamp(at_waypoint["eta_utc"]) - pd.Timedelta(hours=4))[:16])
    # the report as text, as CSV, and as the master sends it
    result = CliRunner().invoke(app, ["days", str(tmp_path / "log.csv"), "--route", str(route), "-o",
                                      str(tmp_path / "reports.txt")])
    assert result.exit_code == 0, result.output
    assert f"to go             {expected:.0f} nm to {named[k + 1]}" in result.stdout
    text = (tmp_path / "reports.txt").read_text()
    assert text.count("NOON REPORT") == len(noons) and "ETA" in text
    csv = CliRunner().invoke(app, ["days", str(tmp_path / "log.csv"), "--route", str(route), "--csv"])
    table = pd.read_csv(pd.io.common.StringIO(csv.stdout))
    assert {"to_go_nm", "eta_utc", "current_set_deg", "clock_changes", "zone"} <= set(table.columns)
    # a destination entry: the distance to it along the rhumb line
    with_end = pd.concat([log, pd.DataFrame([{"utc": "2026-06-01T16:00:00Z", "entry": "destination",
                                              "dr_lat": waypoints.lat_deg.iloc[-1],
                                              "dr_lon": waypoints.lon_deg.iloc[-1]}])])
    last_leg = process_log(pd.concat([with_end, pd.DataFrame([{
        "utc": "2026-06-02T16:00:00Z", "entry": "position", "dr_lat": waypoints.lat_deg.iloc[-2],
        "dr_lon": waypoints.lon_deg.iloc[-2]}])]), plan=False).days_work().noons
    row = last_leg[last_leg["noon_utc"] == "2026-06-02 16:00:00"].iloc[0]
    assert row["to_go_nm"] == pytest.approx(waypoints.rhumb_distance_to_next_nm.iloc[-2], abs=0.01)
    assert row["to"].startswith("the destination (row")


def test_a_noon_on_a_dr_without_the_current_its_fixes_found_says_so():
    """Trial finding: the invented passage's noons lay 7-8 nm west of the truth (scripts/make_passage.py sails a
    current of 1.2 kn setting 060° the log does not enter), while every fix printed that current. Each noon says
    its DR allows no current and what the fix before it found; --carry-current brings it within 0.6 nm of the
    truth (sample_sights/passage_truth.csv, geographiclib)."""
    from geographiclib.geodesic import Geodesic

    plain = process_log("sample_sights/passage_log.csv", plan=False).days_work().noons
    assert plain.noon_from.str.contains("its DR allows no current, but the fix 14 0536 found a current of 06").any()
    assert plain.noon_from.str.contains("--carry-current carries each fix's").all()
    carried = process_log("sample_sights/passage_log.csv", plan=False, carry_current=True).days_work().noons
    assert not carried.noon_from.str.contains("allows no current").any()
    truth = pd.read_csv("sample_sights/passage_truth.csv")
    truth["utc"] = pd.to_datetime(truth.utc)
    for noon in carried.itertuples():
        true = truth[truth.utc == pd.Timestamp(noon.noon_utc + "Z")].iloc[0]
        assert Geodesic.WGS84.Inverse(true.lat, true.lon, noon.lat_deg, noon.lon_deg)["s12"] / 1852.0 < 0.6


def test_the_noon_report_sheet_shows_numbers_to_their_units_precision(tmp_path):
    """Trial finding: the Noon report sheet's run, set and drift were General cells (122.91477703460333)."""
    from openpyxl import load_workbook

    from navred.jobs.voyagebook import write_workbook

    voyage = process_log("sample_sights/passage_log.csv", plan=False)
    write_workbook(voyage, tmp_path / "p.xlsx", plots=False)
    sheet = load_workbook(tmp_path / "p.xlsx")["Noon report"]
    header = {sheet.cell(row=3, column=c).value: c for c in range(1, sheet.max_column + 1)}
    for name in ("run (nm)", "current set (deg)", "current drift (kn)", "speed made good (kn)"):
        cell = sheet.cell(row=5, column=header[name])
        assert isinstance(cell.value, float) and cell.number_format != "General", (name, cell.number_format)


def test_the_distance_to_go_steers_for_the_waypoint_ahead_and_says_when_off_the_route(tmp_path):
    """Trial finding: the passage's last noon, some 100 nm off a route made by navred route, counted 270 nm to go
    by a waypoint abaft her beam; the direct rhumb to the destination is 211 nm (geographiclib's geodesic 210.7)."""
    from navred.io.waypoints import read_route

    route = tmp_path / "route.csv"
    made = CliRunner().invoke(app, ["route", "38 00 N", "010 00 W", "32 40 N", "017 00 W", "-o", str(route)])
    assert made.exit_code == 0, made.output
    noons = process_log("sample_sights/passage_log.csv", plan=False,
                        route=read_route(route)).days_work().noons
    last = noons.iloc[-1]
    direct = Geodesic.WGS84.Inverse(last.lat_deg, last.lon_deg, 32 + 40 / 60, -17.0)["s12"] / 1852.0
    assert abs(last.to_go_nm - direct) < 1.0
    assert "nm right of the route's leg" in last.to
    # the ETA by the ship's clocks is a time, and what it rests on a column of its own (trial finding)
    assert str(pd.Timestamp(last.eta_ship_time))[:16] == last.eta_ship_time
    assert last.eta_basis.startswith("ZD +1, at the day's average speed")


def test_the_demo_log_gives_a_noon_from_its_forenoon_sun_and_meridian_altitude():
    """Trial finding: the demo sight log, every row carrying the navigator's DR and a meridian altitude at 12:56,
    gave "Noon positions: none: the DR runs from 15:40 UTC". With no departure entry, the DR starts at the first
    ship's row's own DR (written on the row, 09:10); the 09:10 Sun line and the 12:56 meridian altitude, though in
    the Sun-run-Sun fix group (whose running fix is at 15:40), give the noon (13:00 UTC by ZD +1) by the run-up.
    Reference: the demo's true track (scripts/make_demo_sights.py, a rhumb line at 215° 6.5 kn; its sights from
    skyfield, sample_sights/demo_truth.csv), the noon's distance from it by geographiclib: within 0.5 nm, where
    the logged DR is 6 nm out. No set and drift is found from a logged DR (it measures that DR, not a current)."""
    truth = pd.read_csv("sample_sights/demo_truth.csv")
    result = CliRunner().invoke(app, ["days", "sample_sights/demo_sights.csv"])
    assert result.exit_code == 0, result.output
    assert "forenoon Sun line at 09:10 UTC run up to the latitude by meridian altitude (in the fix sun-run-sun) at " \
           "12:56 UTC" in result.stdout
    assert "Noon positions: none" not in result.stdout
    days = process_log("sample_sights/demo_sights.csv", plan=False).days_work()
    (noon,) = days.noons.to_dict("records")
    assert noon["noon_utc"] == "2026-03-26 13:00:00"
    # the truth at 13:00 along the true rhumb line, from the 12:56:03 truth (the script's own track)
    at = truth[truth["utc"] == "2026-03-26T12:56:03Z"].iloc[0]
    line = GEOD.InverseLine(at["true_lat_deg"], at["true_lon_deg"],
                            *truth[truth["utc"] == "2026-03-26T15:40:00Z"][["true_lat_deg", "true_lon_deg"]].iloc[0])
    move = 6.5 * (3 * 60 + 57) / 3600.0 * 1852.0
    where = line.Position(move)
    assert GEOD.Inverse(where["lat2"], where["lon2"], noon["lat_deg"], noon["lon_deg"])["s12"] / 1852.0 < 0.5
    assert days.tracks["Moth Orchid (invented)"].known_label[0] == "logged DR at row 2"
    assert "sun-run-sun" not in set(days.set_drift["fix_group"])


def test_a_noon_from_a_dr_with_a_logged_current_is_named_so_everywhere(tmp_path):
    """Trial findings: a noon from a DR with an entered current was called plain "DR", then "DR with current"; the
    trade calls it an EP (estimated position: DR with a current; common practice), and its noon report's current
    line said "none observed" though the noon carried a current. A log of entry rows alone (invented: a departure,
    a current entered): each noon is "EP (DR with the logged current 135° 1.5 kn, row 3) from the departure" on
    the console, in days --csv, on the Noon report sheet and in the GPX; the current line says none was observed
    and which current the noon used; the same log without its current row gives plain "DR". Reference: the
    position by scripts/make_passage.py's own sailing (RK4 on WGS 84) with the same course, speed and current,
    within 0.1 nm (geographiclib)."""
    import xml.etree.ElementTree as ET

    from openpyxl import load_workbook

    start = pd.Timestamp("2026-04-14T06:00:00Z")
    rows = [{"utc": _iso(start), "entry": "departure", "dr_lat": "38 00.0 N", "dr_lon": "014 00.0 W",
             "course": 250, "speed": 8},
            {"utc": _iso(start), "entry": "current", "set": 135, "drift": 1.5},
            {"utc": _iso(start + pd.Timedelta(hours=31)), "entry": "course", "course": 250, "speed": 8}]
    log = tmp_path / "current.csv"
    pd.DataFrame(rows).to_csv(log, index=False)
    name = "EP (DR with the logged current 135° 1.5 kn, row 3) from the departure at row 2"
    noons = process_log(log, plan=False).days_work().noons
    assert len(noons) == 2 and (noons.noon_from == name).all()
    track = passage.sail(start, 38.0, -14.0, [(start, 250.0, 8.0)], lambda t_h: (135.0, 1.5),
                         pd.Timestamp(noons.noon_utc.iloc[-1] + "Z") + pd.Timedelta(minutes=1))
    for noon in noons.itertuples():
        lat, lon = passage.position_at(track, pd.Timestamp(noon.noon_utc + "Z"))
        assert _off_nm(lat, lon, noon.lat_deg, noon.lon_deg) < 0.1
    # the day's current: none observed, and the one the noon used named with where it came from
    note = noons.current_note.iloc[1]
    assert note.startswith("none observed") and note.endswith("this noon's EP used the logged current 135° 1.5 kn, "
                                                              "row 3")
    runner = CliRunner()
    console = runner.invoke(app, ["days", str(log)])
    assert console.exit_code == 0 and console.stdout.count(f"by {name}") == 2
    assert f"found by          {name}" in console.stdout
    assert "current           none observed" in console.stdout and "used the logged current 135° 1.5 kn" in \
        console.stdout
    assert "DR with current" not in console.stdout
    table = pd.read_csv(__import__("io").StringIO(runner.invoke(app, ["days", str(log), "--csv"]).stdout))
    assert (table.noon_from == name).all()
    assert runner.invoke(app, ["workbook", str(log), "-o", str(tmp_path / "c.xlsx"), "-o",
                               str(tmp_path / "c.gpx")]).exit_code == 0
    sheet = load_workbook(tmp_path / "c.xlsx")["Noon report"]
    cells = [str(c.value) for row in sheet.iter_rows() for c in row if c.value is not None]
    assert sum(c == name for c in cells) == 2
    gpx = [e.text or "" for e in ET.parse(tmp_path / "c.gpx").iter() if e.tag.endswith("desc") or
           e.tag.endswith("cmt") or e.tag.endswith("name")]
    assert sum(name in t for t in gpx) == 2, gpx
    # the same log with no current: plain DR
    pd.DataFrame([rows[0], rows[2]]).to_csv(tmp_path / "plain.csv", index=False)
    plain = process_log(tmp_path / "plain.csv", plan=False).days_work().noons
    assert plain.noon_from.str.startswith("DR from the departure").all()


def test_a_noon_on_a_current_carried_from_a_fix_names_that_fix(ts, eph, tmp_path):
    """Trial finding: with --carry-current the noon was named as with the logged current though its DR carried
    the one its last fix found. A log (invented) enters 270° 0.8 kn; the ship is sailed (scripts/make_passage.py,
    RK4 on WGS 84) in 300° 1.0 kn; a round of four stars from the true position (skyfield) fixes her. The next
    noon is an EP carried from that fix with the fix's own set and drift, named so with where it came from; the
    current line says which current the noon used; without --carry-current the same noon names the logged one
    (common practice: an EP names its current)."""
    log = _trial_passage(ts, eph, tmp_path)  # the same passage and log as the trial's (below)
    days = process_log(log, plan=False, carry_current=True).days_work()
    found = days.set_drift[days.set_drift.fix_group == "4 morning"].iloc[0]
    assert found.drift_kn == found.drift_kn  # determined over the 22.7 h from the departure
    current = f"the current {found.set_deg:03.0f}° {found.drift_kn:.1f} kn carried from the fix 4 morning"
    noon = days.noons[days.noons.noon_utc == "2026-12-05 22:00:00"].iloc[0]
    assert noon.noon_from.startswith(f"EP (DR with {current}) from the fix 4 morning"), noon.noon_from
    assert noon.current_note.endswith(f"this noon's EP used {current}")
    # without carrying it, the same noon is the EP on the logged current
    logged = process_log(log, plan=False).days_work().noons
    noon = logged[logged.noon_utc == "2026-12-05 22:00:00"].iloc[0]
    assert noon.noon_from.startswith("EP (DR with the logged current 270° 0.8 kn, row 4) from the fix 4 morning")


def test_the_days_current_at_noon_is_given_by_the_rule_of_the_set_and_drift_at_each_fix():
    """Trial finding: the noon report's current said ±0.4 kn where every fix said ±0.8 kn. Both now by one rule
    (navred.reckoning.set_and_drift): 1.96 × √(σ₁² + σ₂² + σ_DR²) / hours, σ_DR = 0.3 kn × hours + 2 % of the
    miles through the water (the DR model of the docs, common practice), σ₁, σ₂ the noon positions' errors each
    way; the note says what the ± covers. The invented passage's noons are 24 h apart: over ±0.8 kn as at
    the fixes (taken 10-14 h apart), the current 1.2 kn it was sailed in (scripts/make_passage.py) inside it."""
    from navred.jobs.noons import CURRENT_95_COVERS

    days = process_log("sample_sights/passage_log.csv", plan=False).days_work()
    noons = days.noons
    fixes = days.set_drift
    later = noons.iloc[1:]
    assert later.current_note.str.contains(CURRENT_95_COVERS, regex=False).all()
    through = later.through_water_nm.to_numpy()
    hours = later.hours.to_numpy()
    dr = 0.3 * hours + 0.02 * through
    assert (later.current_95_kn.to_numpy() >= 1.959964 * dr / hours - 1e-9).all()  # at least the DR's own part
    assert (later.current_95_kn >= fixes.drift_95_kn.min() - 0.05).all()
    assert (abs(later.current_drift_kn - 1.2) < later.current_95_kn).all()
    # the console says what each ± covers, at the fixes and at noon
    shown = CliRunner().invoke(app, ["days", "sample_sights/passage_log.csv"]).stdout
    assert ("the fix against the DR through the water (95 %: both fixes' errors and the DR's own over the run, 0.3 kn an "
            "hour and 2 % of the miles; the noon report's current by the same rule)") in shown
    assert f"±{later.current_95_kn.iloc[-1]:.1f} kn (95 %; the noon positions are not both fixes" in shown
    assert CURRENT_95_COVERS in shown


def test_the_noon_reports_set_carries_its_uncertainty():
    """Trial finding: the noon report gave the set as '296.3°' with no ± while its drift said ±0.9 kn. The set's
    ± (95 %, the across-track part of the same covariance: navred.reckoning.set_and_drift) is given beside it,
    and the set to whole degrees where that ± is 5° or more (# common practice: no digit inside the error). The
    invented passage (scripts/make_passage.py) was sailed in 060° 1.2 kn: the truth is inside the ±."""
    days = process_log("sample_sights/passage_log.csv", plan=False).days_work()
    later = days.noons.iloc[1:]
    spread = later.current_set_95_deg.to_numpy(dtype=float)
    assert np.isfinite(spread).all() and (spread > 0).all()
    assert (abs((later.current_set_deg - 60.0 + 180) % 360 - 180) < later.current_set_95_deg).all()
    shown = CliRunner().invoke(app, ["days", "sample_sights/passage_log.csv"]).stdout
    last = later.iloc[-1]
    places = 0 if last.current_set_95_deg >= 5 else 1
    width = 3 if places == 0 else 5
    assert (f"current           {last.current_set_deg:0{width}.{places}f}° ±{last.current_set_95_deg:.0f}° "
            f"{last.current_drift_kn:.1f} ±{last.current_95_kn:.1f} kn (95 %") in shown


def _trial_passage(ts, eph, tmp_path, clocks_utc: str = "2026-12-03T18:00:00Z"):
    """The trial's passage (invented): departure 21° 18.0′ N 157° 52.0′ W at 18:00 UTC, the clocks on +10 and a
    current of 270° 0.8 kn entered there; sailed (scripts/make_passage.py, RK4 on WGS 84) 240° 7 kn in a current
    of 300° 1.0 kn; a round of four stars (skyfield) from the true position fixes her the next morning."""
    start = pd.Timestamp("2026-12-03T18:00:00Z")
    track = passage.sail(start, 21.3, -157.0 - 52.0 / 60.0, [(start, 240.0, 7.0)], lambda t_h: (300.0, 1.0),
                         start + pd.Timedelta(hours=60))
    rows = [{"utc": _iso(start), "entry": "departure", "dr_lat": "21 18.0 N", "dr_lon": "157 52.0 W", "course": 240,
             "speed": 7},
            {"utc": clocks_utc, "entry": "clocks", "clocks": "+10"},
            {"utc": _iso(start), "entry": "current", "set": 270, "drift": 0.8}]
    when = pd.Timestamp("2026-12-04T16:40:00Z")
    lat, lon = passage.position_at(track, when)
    for s_ in passage.star_round(ts, eph, when, lat, lon):
        rows.append({"utc": _iso(when), "body": s_["body"], "hs": s_["hs"], "eye_height_m": 3.0,
                     "fix_group": "4 morning"})
    rows.append({"utc": "2026-12-05T23:00:00Z", "entry": "course", "course": 240, "speed": 7})
    log = tmp_path / "trial.csv"
    pd.DataFrame(rows).to_csv(log, index=False)
    return log


def test_the_clocks_entered_at_the_start_are_the_ones_named_and_the_first_noon_has_no_last(ts, eph, tmp_path):
    """Trial finding: a log whose clocks entry (+10) stands at the departure printed 'the clocks as entered (from
    ZD +11, the nautical zone of the first known position's longitude)', a zone the clocks never kept (157° 52′ W
    is in zone +11 by longitude), and the first noon report said 'clocks unchanged since the last noon' with no
    noon before it (common practice: the noon report's clocks line is the change since the last report)."""
    log = _trial_passage(ts, eph, tmp_path)
    days = process_log(log, plan=False).days_work()
    assert (days.noons.zone == "ZD +10").all()
    first, second = days.noons.iloc[0], days.noons.iloc[1]
    assert first.clock_changes == "the first noon: kept on ZD +10 since the start of the log"
    assert second.clock_changes == ""
    out = tmp_path / "noon.txt"
    shown = CliRunner().invoke(app, ["days", str(log), "-o", str(out)]).stdout
    assert "the clocks as entered (ZD +10 from the start, row 3)" in shown
    assert "ZD +11" not in shown
    reports = out.read_text(encoding="utf-8").split("\n\n")
    assert "clocks            the first noon: kept on ZD +10 since the start of the log" in reports[0]
    assert "unchanged since the last noon" not in reports[0]
    assert "clocks            unchanged since the last noon" in reports[1]


def test_clocks_entered_after_the_start_name_the_zone_kept_before_them(ts, eph, tmp_path):
    """The same log with its clocks entry (+10) 20 h after the departure: before it the clocks keep the nautical
    zone of the departure's longitude (+11, ZD = -round(λ/15°): 157.9°/15 = 10.5), named as such and until which
    row; the first noon after the change says it (common practice)."""
    log = _trial_passage(ts, eph, tmp_path, clocks_utc="2026-12-04T14:00:00Z")
    days = process_log(log, plan=False).days_work()
    shown = CliRunner().invoke(app, ["days", str(log)]).stdout
    assert ("the clocks as entered (from ZD +11, the nautical zone of the first known position's longitude, until "
            "the first clocks entry, row 3)") in shown
    assert days.noons.zone.iloc[0] == "ZD +11"
    assert "clocks advanced 1 h" in " ".join(days.noons.clock_changes)


def test_the_trial_passage_splits_its_current_into_the_logged_and_the_unaccounted(ts, eph, tmp_path):
    """The trial's days2: sailed in 300° 1.0 kn with 270° 0.8 kn logged (scripts/make_passage.py's truth), the
    fix's set and drift is the current experienced, about 300° 1.0 kn, split into the logged 270° 0.8 kn and the
    unaccounted vector difference, 352.5° 0.50 kn (the DR's gap to the fix)."""
    log = _trial_passage(ts, eph, tmp_path)
    found = process_log(log, plan=False).days_work().set_drift.iloc[0]
    assert abs((found.set_deg - 300.0 + 180) % 360 - 180) <= 2.0 and abs(found.drift_kn - 1.0) <= 0.05
    assert found.current_in_dr == "logged"
    assert found.dr_set_deg == pytest.approx(270.0, abs=0.5) and found.dr_drift_kn == pytest.approx(0.8, abs=0.02)
    north, east = 1.0 * np.cos(np.radians(300.0)), 1.0 * np.sin(np.radians(300.0)) + 0.8
    assert abs((found.unaccounted_set_deg - np.degrees(np.arctan2(east, north)) % 360 + 180) % 360 - 180) <= 5.0
    assert found.unaccounted_drift_kn == pytest.approx(np.hypot(north, east), abs=0.05)
    shown = CliRunner().invoke(app, ["days", str(log)]).stdout
    assert f"set {found.set_deg:03.0f}° ±{found.set_95_deg:.0f}°" in shown and "." not in f"{found.set_deg:03.0f}"
