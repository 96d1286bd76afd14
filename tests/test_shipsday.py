"""The ship's day in the Day's work: an ex-meridian latitude that cannot be trusted is flagged beside its number
and never taken for a latitude; the ship's day and noon follow the zone the log states (its ZD column), across
the date line both ways, with every noon time dated.

The references: sights made by skyfield at a true position (tests/conftest.py's skyfield_sight); the
ex-meridian limit's rule of thumb (minutes of time from meridian passage no more than the zenith distance in
degrees; from memory) and the ex-meridian tables' entry with whole degrees of latitude (from memory); ZT + ZD =
UTC and the date line's skipped and repeated dates (common practice).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from typer.testing import CliRunner

from navred.cli import app
from navred.jobs.latitudechecks import ex_meridian_flags
from navred.jobs.voyage import process_log
from tests.conftest import skyfield_sight


def test_an_ex_meridian_latitude_far_from_the_dr_or_beyond_the_limit_is_flagged_and_a_good_one_is_not():
    """The rule (from memory): no more minutes from meridian passage than the zenith distance has degrees, the
    zenith distance from the latitude found; and a latitude a degree or more from the DR it was reduced with."""
    flags = ex_meridian_flags(np.array([20.0, 6.0, 10.0]), np.array([20.0, 0.0, 20.0]), np.array([22.0, 0.5, 20.2]),
                              np.array([-10.5, -5.0, -10.0]))
    assert "CANNOT BE TRUSTED" in flags[0] and "120′ from the DR latitude" in flags[0]  # 2° = 120′ (from memory)
    assert "beyond the ex-meridian limit" not in flags[0]  # 20 min within 30.5° of zenith distance
    assert "beyond the ex-meridian limit" in flags[1] and "limit 5.0 min" in flags[1]  # zenith 5° -> 5 min
    assert "from the DR latitude" not in flags[1]  # 30′ off the DR: within the degree
    assert flags[2] == ""


def _ex_meridian_log(ts, eph, path, dr_lat_deg: float):
    """A ship stopped at 20° N 40° W (her departure written at ``dr_lat_deg``) and one Sun sight 20 minutes after
    meridian passage, its Hs from skyfield (the reference)."""
    sight = skyfield_sight(ts, eph, "Sun", "2026-10-20T14:45:00Z", 20.0, -40.0, limb="lower")
    path.write_text("utc,entry,dr_lat,dr_lon,course,speed,body,limb,hs,eye_height_m,fix_group\n"
                    f"2026-10-20T10:00:00Z,departure,{dr_lat_deg},-40.0,0,0,,,,,\n"
                    f"2026-10-20T14:45:00Z,,,,,,Sun,lower,{sight['hs']:.5f},3.0,exmer\n")
    return path


def test_the_days_work_flags_an_ex_meridian_latitude_two_degrees_off_the_dr_everywhere(ts, eph, tmp_path):
    """A Sun sight 20 minutes after meridian passage taken at 20° N 40° W (skyfield), the DR 2° north of it:
    the ex-meridian latitude is flagged in the notes, the Latitudes table, the EP's note and the noon report;
    the sight's line is kept as a line (its EP is one Sun line), never a latitude."""
    log = _ex_meridian_log(ts, eph, tmp_path / "exmer.csv", dr_lat_deg=22.0)
    days = process_log(log, plan=False).days_work()
    row = days.latitudes.iloc[0]
    assert row["method"] == "ex-meridian" and "CANNOT BE TRUSTED" in row["flag"]
    assert any("ex-meridian latitude" in n and "CANNOT BE TRUSTED" in n for n in days.notes)
    assert days.estimated.iloc[0]["ep"].startswith("EP from one Sun line")
    assert "CANNOT BE TRUSTED" in days.estimated.iloc[0]["note"]
    assert "CANNOT BE TRUSTED" in days.noons.iloc[0]["noon_from"]
    result = CliRunner().invoke(app, ["days", "--csv", str(log)])
    assert result.exit_code == 0, result.output
    assert "CANNOT BE TRUSTED" in result.stdout  # the CSV's noon_from
    text = CliRunner().invoke(app, ["fix", str(log)])
    assert "latitude 20° 0" in text.stdout and "CANNOT BE TRUSTED" in text.stdout  # beside the number


def test_an_ex_meridian_latitude_within_the_rule_is_used_at_noon(ts, eph, tmp_path):
    """The same sight from a DR 10′ off: the ex-meridian latitude is within the degree and the limit, not
    flagged, and is the latitude of the EP (within 1′ of the true 20° N: the reduction's accuracy, from memory)."""
    log = _ex_meridian_log(ts, eph, tmp_path / "exmer_ok.csv", dr_lat_deg=20.1667)
    days = process_log(log, plan=False).days_work()
    row = days.latitudes.iloc[0]
    assert row["method"] == "ex-meridian" and row["flag"] == ""
    assert abs(row["lat_deg"] - 20.0) * 60 < 1.0
    assert "ex-meridian altitude" in days.estimated.iloc[0]["ep"]


HEADER = "Date,Zone time,ZD,entry,DR lat,DR lon,Course,Speed\n"


def _noons(tmp_path, name, text):
    log = tmp_path / name
    log.write_text(HEADER + text)
    return process_log(log, plan=False).days_work()


def _noon_rule_holds(noons):
    """Every noon is 12:00 zone time on its ship's date: UTC = date 12:00 + ZD (ZT + ZD = UTC; common practice)."""
    for r in noons.to_dict("records"):
        expected = pd.Timestamp(r["date"]) + pd.Timedelta(hours=12 + r["zone_h"])
        assert pd.Timestamp(r["noon_utc"]) == expected, r


def test_westbound_over_the_date_line_the_log_s_zones_skip_a_date(tmp_path):
    """A hand log in zone time, ZD +11 at 170° W, 12 kn due west, ZD -11 six days on (at about 165° E): the
    clocks are changed at the ship's midnights as she enters each zone, +11, +12, then -12 (the date line:
    westbound the date is advanced, one date never lived; common practice) and -11. One noon a ship's date, each
    12:00 by its zone, the days of 24 or 25 hours (an hour retarded), and the skipped date has no noon."""
    days = _noons(tmp_path, "west.csv", "2026-10-05,08:00,+11,departure,20 00.0 N,170 00.0 W,270,12\n"
                                        "2026-10-11,08:00,-11,course,,,270,12\n")
    noons = days.noons
    dates = noons["date"].tolist()
    assert len(dates) == len(set(dates))
    skipped = [d for d in pd.date_range(dates[0], dates[-1]).strftime("%Y-%m-%d") if d not in dates]
    assert len(skipped) == 1  # the one date the clocks skip
    assert noons["zone_h"].tolist()[0] == 11.0 and noons["zone_h"].tolist()[-1] == -11.0
    assert {12.0, -12.0} <= set(noons["zone_h"])
    assert set(noons["hours"].dropna()) <= {24.0, 25.0}
    _noon_rule_holds(noons)
    text = " ".join(noons["clock_changes"])
    assert f"{skipped[0]} skipped (westbound)" in text
    assert any("the zone the log states" in n for n in days.notes)


def test_eastbound_over_the_date_line_the_log_s_zones_repeat_a_date_with_a_noon_each(tmp_path):
    """Eastbound from 170° E (ZD -11) to ZD +11: the date line repeats a date (common practice), and each of
    its two days has its noon, 12:00 by its own zone, the days of 23 or 24 hours (an hour advanced)."""
    days = _noons(tmp_path, "east.csv", "2026-10-05,08:00,-11,departure,20 00.0 N,170 00.0 E,090,12\n"
                                        "2026-10-10,08:00,+11,course,,,090,12\n")
    noons = days.noons
    dates = noons["date"].tolist()
    twice = [d for d in set(dates) if dates.count(d) == 2]
    assert len(twice) == 1 and len(dates) == len(set(dates)) + 1
    again = noons[noons["date"] == twice[0]]
    assert again["zone_h"].tolist() == [-12.0, 12.0]
    assert set(noons["hours"].dropna()) <= {23.0, 24.0}
    _noon_rule_holds(noons)
    assert f"{twice[0]} repeated (eastbound)" in " ".join(noons["clock_changes"])


def test_a_zd_changed_mid_day_gives_noon_by_the_zone_before_and_says_when_it_would_have_been(tmp_path):
    """The log keeps ZD +3 at 09:00 and ZD +4 at 14:00 the same day: the clocks were changed between, noon may
    have been by either zone, 15:00 UTC (by +3) or 16:00 UTC (by +4; ZT + ZD = UTC). The noon is taken by +3 and
    says so, with the other time, in the noon report and the notes."""
    days = _noons(tmp_path, "midday.csv", "2026-10-20,09:00,+3,departure,30 00.0 N,052 00.0 W,270,15\n"
                                          "2026-10-20,14:00,+4,course,,,270,15\n")
    row = days.noons.iloc[0]
    assert row["date"] == "2026-10-20" and row["noon_utc"].startswith("2026-10-20 15:00")
    assert "NOON TIME UNCERTAIN" in row["clock_changes"] and "2026-10-20 16:00 UTC" in row["clock_changes"]
    assert any("NOON TIME UNCERTAIN" in n for n in days.notes)


def test_a_fixed_zone_other_than_the_longitude_s_is_kept_and_noted(tmp_path):
    """The log keeps ZD +3 at 62° W (the nautical zone there is +4: -round(-62/15); common practice): noon is
    12:00 by ZD +3, 15:00 UTC, not 16:00, and a note names the rows and both zones."""
    days = _noons(tmp_path, "fixed.csv", "2026-10-20,06:00,+3,departure,30 00.0 N,062 00.0 W,090,5\n"
                                         "2026-10-20,18:00,+3,course,,,090,5\n")
    row = days.noons.iloc[0]
    assert row["zone"] == "ZD +3" and row["noon_utc"].startswith("2026-10-20 15:00")
    note = next(n for n in days.notes if "is not the zone of the DR's longitude" in n)
    assert "rows 2 to 3" in note and "ZD +3" in note and "ZD +4" in note


def test_every_noon_time_shown_is_dated(tmp_path):
    """Over the date line a noon's UTC falls on another date than the ship's: the text, the CSV, the report and
    the Noon report sheet give the UTC with its date."""
    from openpyxl import load_workbook

    from navred.jobs.voyagebook import write_workbook

    log = tmp_path / "west.csv"
    log.write_text(HEADER + "2026-10-05,08:00,+11,departure,20 00.0 N,170 00.0 W,270,12\n"
                            "2026-10-09,08:00,-11,course,,,270,12\n")
    result = CliRunner().invoke(app, ["days", str(log), "-o", str(tmp_path / "noon.txt")])
    assert result.exit_code == 0, result.output
    noon_lines = [line for line in result.stdout.splitlines() if " noon (ZD " in line]
    assert noon_lines and all(" UTC)" in line for line in noon_lines)
    # 12:00 on 2026-10-06 by ZD +12 is 2026-10-07 00:00 UTC (ZT + ZD = UTC)
    assert "2026-10-06 noon (ZD +12, 2026-10-07 00:00 UTC)" in result.stdout
    assert "NOON REPORT, 2026-10-06 (ZD +12; 2026-10-07 00:00:00 UTC)" in (tmp_path / "noon.txt").read_text()
    csv = CliRunner().invoke(app, ["days", "--csv", str(log)])
    assert ",2026-10-06,12.0" in csv.stdout.replace("12.000000", "12.0") and "2026-10-07 00:00:00" in csv.stdout
    write_workbook(process_log(log, plan=False), tmp_path / "w.xlsx", plots=False)
    sheet = load_workbook(tmp_path / "w.xlsx")["Noon report"]
    header = {sheet.cell(row=3, column=c).value: c for c in range(1, sheet.max_column + 1)}
    dated = [sheet.cell(row=r, column=header["noon (UTC)"]).value for r in range(4, sheet.max_row + 1)]
    assert any(str(v).startswith("2026-10-07 00:00") for v in dated)


def test_with_clocks_entries_a_row_whose_zd_is_not_the_clocks_is_named(tmp_path):
    """The clocks entered keep ZD +3 from the start; a later row is written in ZD +4: noon stays 12:00 by the
    clocks entered (15:00 UTC, ZT + ZD = UTC) and a note names the row and both zones."""
    log = tmp_path / "clocks.csv"
    log.write_text("Date,Zone time,ZD,entry,DR lat,DR lon,Course,Speed,Clocks\n"
                   "2026-10-20,06:00,+3,departure,30 00.0 N,045 00.0 W,090,5,\n"
                   "2026-10-20,06:00,+3,clocks,,,,,+3\n"
                   "2026-10-20,17:00,+4,course,,,090,5,\n")
    days = process_log(log, plan=False).days_work()
    assert days.noons.iloc[0]["noon_utc"].startswith("2026-10-20 15:00")
    note = next(n for n in days.notes if "is not the zone the clocks entered keep" in n)
    assert "row 4" in note and "ZD +4" in note and "(ZD +3)" in note


def test_a_noon_over_the_date_line_dates_the_sight_times_it_rests_on(ts, eph, tmp_path):
    """Lying at 20° N 179° W (ZD +12), noon of 5 Oct is 00:00 UTC 6 Oct (ZT + ZD = UTC): the forenoon Sun at
    21:00 UTC 5 Oct run up to the noon latitude (a Sun at 23:55 UTC, skyfield) is named with its UTC date, as the
    passage paper's pages name a UTC time of another date (common practice: a time alone is read on the wrong
    day)."""
    rows = ["Date,Zone time,ZD,entry,DR lat,DR lon,Course,Speed,Body,Limb,Hs,Height of eye (m),Fix group"]
    rows.append("2026-10-05,06:00,+12,departure,20 00.0 N,179 00.0 W,000,0,,,,,")
    for utc, zone_time, group in (("2026-10-05T21:00:00Z", "09:00", "forenoon"), ("2026-10-05T23:55:00Z", "11:55",
                                                                                  "noon")):
        hs = skyfield_sight(ts, eph, "Sun", utc, 20.0, -179.0, limb="lower")["hs"]
        rows.append(f"2026-10-05,{zone_time},+12,,,,,,Sun,lower,{hs:.5f},3.0,{group}")
    log = tmp_path / "line.csv"
    log.write_text("\n".join(rows) + "\n")
    noon = process_log(log, plan=False).days_work().noons.iloc[0]
    assert noon["date"] == "2026-10-05" and noon["noon_utc"].startswith("2026-10-06 00:00")
    assert noon["noon_from"].startswith("forenoon Sun line at 21:00 UTC 5 Oct run up to the latitude")
    assert "at 23:55 UTC 5 Oct" in noon["noon_from"]


def test_stretches_of_flagged_rows_alike_are_found_at_once():
    """Worked by hand: rows 1-2 flagged with one zone, row 3 with another, rows 5 and 6 apart by their key."""
    from navred.jobs.shipstime import stretches

    assert stretches(np.array([0, 1, 1, 1, 0, 1, 1]), np.array([3, 3, 3, 4, 4, 4, 5])) == [(1, 2), (3, 3), (5, 5),
                                                                                          (6, 6)]
    assert stretches(np.zeros(3, dtype=bool), np.zeros(3)) == []


def test_a_date_line_crossed_within_the_day_says_which_hours_are_skipped_or_lived_again():
    """A second navigator's trial: clocks put back a day at 15:06 (ZD -12 to +12) were reported as '2026-06-09
    repeated' while the noon of 06-10 came twice. Crossing eastward the clocks go back 24 h, westward forward
    24 h, the hour kept (common practice); at midnight a whole date is repeated or skipped, within the day the
    hours between the two readings of the clocks are."""
    from navred.jobs.shipstime import clock_changes_text
    from navred.reckoning import ShipsClocks

    hour = 3_600_000_000_000
    at = int(pd.Timestamp("2026-06-10T03:06:00").value)  # 15:06 at ZD -12
    east = ShipsClocks(np.array([at - 100 * hour, at], dtype=np.int64), np.array([-12.0, 12.0]))
    assert clock_changes_text(east, at - hour, at + hour) == (
        "date line at 2026-06-10 15:06 zone time: the clocks put back a day (eastbound): 2026-06-09 15:06 to "
        "2026-06-10 15:06 lived again (ZD -12 to ZD +12)")
    west = ShipsClocks(np.array([at - 100 * hour, at], dtype=np.int64), np.array([12.0, -12.0]))
    assert clock_changes_text(west, at - hour, at + hour) == (
        "date line at 2026-06-09 15:06 zone time: the clocks put forward a day (westbound): 2026-06-09 15:06 to "
        "2026-06-10 15:06 skipped (ZD +12 to ZD -12)")
    midnight = int(pd.Timestamp("2026-06-09T12:00:00").value)  # 00:00 of 06-10 at ZD -12, of 06-09 at ZD +12
    at_midnight = ShipsClocks(np.array([midnight - 100 * hour, midnight], dtype=np.int64), np.array([-12.0, 12.0]))
    assert clock_changes_text(at_midnight, midnight - hour, midnight + hour) == (
        "date line at 2026-06-10 00:00 zone time: 2026-06-09 repeated (eastbound) (ZD -12 to ZD +12)")
