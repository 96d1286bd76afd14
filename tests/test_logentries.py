"""A sailing ship's DR: the compass course made true, the leeway, the speed from the log's readings.

The reference is an example worked by hand here (the rules are the navigation manuals' common practice: true =
compass + deviation + variation, east + and west −; leeway sets the ship to leeward, away from the wind's side; the
log's run over the time between readings is the speed through the water), and the rhumb line it gives sailed by
fourth-order Runge-Kutta along the WGS 84 ellipsoid in tests/conftest.py (rhumb_integrated), independent of navred.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from geographiclib.geodesic import Geodesic

from navred import read_sight_log
from navred.jobs.voyage import process_log
from tests.conftest import rhumb_integrated

GEOD = Geodesic.WGS84
NM = 1852.0


def _log(tmp_path, rows: list[str]):
    path = tmp_path / "sailing.csv"
    path.write_text("\n".join(["utc,entry,dr_lat,dr_lon,compass_course,deviation,variation,leeway,wind_side,"
                               "log_reading,course,speed,body,hs,eye_height_m"] + rows) + "\n")
    return path


def test_a_compass_course_with_leeway_and_log_readings_against_a_hand_worked_example(tmp_path):
    """Worked by hand (common practice):

    08:00 departure 40° 00.0′ N 020° 00.0′ W; the log reads 1234.0.
    Course by compass 240° C; deviation 3° E; variation 12° W: true heading 240 + 3 − 12 = 231° T.
    The wind on the starboard side (starboard tack): leeway 5° to port: course through the water 231 − 5 = 226°.
    10:00 the log reads 1252.6: 18.6 nm in 2 h, 9.3 kn through the water.
    DR at 10:00 (mid-latitude sailing, on the sphere): d.lat = 18.6 cos 226° = 12.92′ S: 39° 47.08′ N;
    departure = 18.6 sin 226° = 13.38′ W; mean latitude 39° 53.5′; d.long = 13.38 / cos 39.892° = 17.44′ W:
    020° 17.44′ W.
    """
    path = _log(tmp_path, [
        "2026-07-01T08:00:00Z,departure,40 00.0 N,020 00.0 W,240,3 E,12 W,5,starboard,1234.0,,,,,",
        "2026-07-01T10:00:00Z,log,,,,,,,,1252.6,,,,,",
        "2026-07-01T12:00:00Z,,,,,,,,,,,,Sun,70,3"])
    log = read_sight_log(path)
    first = log.entries.iloc[0]
    assert first["course_deg"] == pytest.approx(226.0, abs=1e-9)  # by hand: 240 + 3 − 12 − 5
    assert first["speed_kn"] == pytest.approx(9.3, abs=1e-9)       # by hand: 18.6 nm / 2 h
    assert first["course_working"] == ("compass 240.0° + deviation 3° E + variation 12° W = 231.0° T; leeway 5° to "
                                       "port: 226.0° through the water")
    assert "18.6 nm in 2.00 h = 9.30 kn through the water" in first["speed_working"]
    days = process_log(log, plan=False).days_work()
    track = days.tracks[""]
    lat, lon, _ = track.positions(np.array([pd.Timestamp("2026-07-01T10:00:00Z").value]))
    # the hand-worked DR, on the sphere: within a tenth of a mile of navred's on the ellipsoid
    hand_lat, hand_lon = 39 + 47.08 / 60, -(20 + 17.44 / 60)
    assert GEOD.Inverse(hand_lat, hand_lon, lat[0], lon[0])["s12"] / NM < 0.1
    # the same rhumb line sailed by Runge-Kutta on the ellipsoid: within a hundredth of a mile
    true_lat, true_lon = rhumb_integrated(40.0, -20.0, 226.0, 18.6)
    assert GEOD.Inverse(true_lat, true_lon, lat[0], lon[0])["s12"] / NM < 0.01
    # shown with its working in the day's work's entries (the workbook's Day's work sheet)
    work = days.entries.set_index("row")
    assert work.loc[2, "course_working"].startswith("compass 240.0°") and "9.30 kn" in work.loc[2, "speed_working"]


def test_the_deviation_from_the_card_and_the_leeway_by_its_own_side(tmp_path):
    """The deviation left blank is the card's on that compass heading (a card of checks 3° E on every heading fits
    A = 3°); a leeway written with its side needs no wind side."""
    from navred.io.cards import deviation_curve

    card = tmp_path / "card.csv"
    pd.DataFrame({"utc": "2026-06-01T12:00:00Z", "body": "Sun", "lat_deg": 40.0, "lon_deg": -20.0,
                  "compass_heading_deg": [0.0, 60.0, 120.0, 180.0, 240.0, 300.0], "compass_bearing_deg": 100.0,
                  "true_bearing_deg": 91.0, "compass_error_deg": -9.0, "variation_deg": -12.0,
                  "deviation_deg": 3.0}).to_csv(card, index=False)
    path = _log(tmp_path, [
        "2026-07-01T08:00:00Z,departure,40 00.0 N,020 00.0 W,240,,12 W,4 stbd,,,,6,,,",
        "2026-07-01T12:00:00Z,,,,,,,,,,,,Sun,70,3"])
    log = read_sight_log(path, deviation=deviation_curve(card))
    first = log.entries.iloc[0]
    assert first["course_deg"] == pytest.approx(240 + 3 - 12 + 4, abs=1e-6)  # by hand: 235°
    assert "deviation 3° E (the card's)" in first["course_working"]


@pytest.mark.parametrize("row, fragment", [
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3,12 W,,,,,6,,,", "3 E or 3 W?"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3 E,,,,,,6,,,", "a compass course needs the variation"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,,12 W,,,,,6,,,", "a compass course needs its deviation"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,,,,,,,240,6,,,", None),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3 E,12 W,5,,,,6,,,", "a leeway needs its side"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3 E,12 W,5 port,port,,,6,,,",
     "the leeway sets the ship toward the side the wind blows on"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3 E,12 W,-5,,,,6,,,", "to port or to starboard"),
    ("2026-07-01T08:00:00Z,departure,40 N,20 W,240,3 E,12 W,,,,230,6,,,", "not both"),
])
def test_an_entry_s_compass_course_and_leeway_are_refused_with_both_readings(tmp_path, row, fragment):
    log = read_sight_log(_log(tmp_path, [row, "2026-07-01T12:00:00Z,,,,,,,,,,,,Sun,70,3"]))
    reasons = " | ".join(log.rejected[log.rejected.row == 2].reason)
    if fragment is None:
        assert reasons == ""
    else:
        assert fragment in reasons, reasons


def test_a_log_that_runs_back_is_refused_by_its_row(tmp_path):
    log = read_sight_log(_log(tmp_path, [
        "2026-07-01T08:00:00Z,departure,40 N,20 W,,,,,,1234.0,230,6,,,",
        "2026-07-01T10:00:00Z,log,,,,,,,,1220.0,,,,,",
        "2026-07-01T12:00:00Z,,,,,,,,,,,,Sun,70,3"]))
    reasons = " | ".join(log.rejected[log.rejected.row == 3].reason)
    assert "a log does not run back" in reasons and "1234 nm at row 2" in reasons
