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


def test_the_days_work_flags_an_ex_meridian_latitude_two_degrees_off_the_dr_everywhere(ts, eph, tmp_path):
    """A Sun sight 20 minutes after meridian passage taken at 20° N 40° W (skyfield), the DR 2° north of it:
    the ex-meridian latitude is flagged in the notes, the Latitudes table, the EP's note and the noon report;
    the sight's line is kept as a line (its EP is one Sun line), never a latitude."""
    sight = skyfield_sight(ts, eph, "Sun", "2026-10-20T14:45:00Z", 20.0, -40.0, limb="lower")
    log = tmp_path / "exmer.csv"
    log.write_text("utc,entry,dr_lat,dr_lon,course,speed,body,limb,hs,eye_height_m,fix_group\n"
                   "2026-10-20T10:00:00Z,departure,22.0,-40.0,0,0,,,,,\n"
                   f"2026-10-20T14:45:00Z,,,,,,Sun,lower,{sight['hs']:.5f},3.0,exmer\n")
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
    sight = skyfield_sight(ts, eph, "Sun", "2026-10-20T14:45:00Z", 20.0, -40.0, limb="lower")
    log = tmp_path / "exmer_ok.csv"
    log.write_text("utc,entry,dr_lat,dr_lon,course,speed,body,limb,hs,eye_height_m,fix_group\n"
                   "2026-10-20T10:00:00Z,departure,20.1667,-40.0,0,0,,,,,\n"
                   f"2026-10-20T14:45:00Z,,,,,,Sun,lower,{sight['hs']:.5f},3.0,exmer\n")
    days = process_log(log, plan=False).days_work()
    row = days.latitudes.iloc[0]
    assert row["method"] == "ex-meridian" and row["flag"] == ""
    assert abs(row["lat_deg"] - 20.0) * 60 < 1.0
    assert "ex-meridian altitude" in days.estimated.iloc[0]["ep"]
