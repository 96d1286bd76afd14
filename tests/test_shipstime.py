"""Ship's time: noon by the ship's clocks, one a ship's day, across the date line both ways.

The references: the rule of zone time (ZT + ZD = UTC) and of the date line (westbound the date is advanced a day,
eastbound it is repeated; common practice), worked by hand in each test from the clock changes it enters; the
passages sailed by Runge-Kutta along the WGS 84 ellipsoid in scripts/make_passage.py's own code, and the rhumb
line between two positions by the meridian arc (geographiclib along a meridian) and the meridional parts
(Snyder, Map Projections: A Working Manual, eq. 7-7) for the days' runs.
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
from navred.reckoning import ShipsClocks, ship_noons
from tests.conftest import skyfield_sight

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_passage as passage  # noqa: E402  (sails the ship outside navred)

GEOD = Geodesic.WGS84
NM = 1852.0
H = 3_600_000_000_000


def _rhumb_nm(lat1, lon1, lat2, lon2) -> float:
    """The rhumb line's length: the meridian arc (geographiclib) over cos C, C from the meridional parts (Snyder
    eq. 7-7), the shorter way round in longitude."""
    e = np.sqrt(passage.E2)

    def psi(lat):
        p = np.radians(lat)
        return np.log(np.tan(np.pi / 4 + p / 2) * ((1 - e * np.sin(p)) / (1 + e * np.sin(p))) ** (e / 2))

    dlon = (lon2 - lon1 + 180.0) % 360.0 - 180.0
    course = np.arctan2(np.radians(dlon), psi(lat2) - psi(lat1))
    if abs(np.cos(course)) < 1e-9:  # along a parallel
        nu = passage.A_M / np.sqrt(1 - passage.E2 * np.sin(np.radians(lat1)) ** 2)
        return abs(np.radians(dlon)) * nu * np.cos(np.radians(lat1)) / NM
    meridian = GEOD.Inverse(lat1, 0.0, lat2, 0.0)["s12"] * np.sign(lat2 - lat1)
    return meridian / np.cos(course) / NM


def test_noons_by_the_clocks_skip_a_date_westbound_and_repeat_it_eastbound():
    # westbound: ZD +12 until 30 h, then -12 (the clocks advanced a day at that instant)
    noon, day, zone = ship_noons(ShipsClocks(np.array([0, 30 * H]), np.array([12.0, -12.0])), 0, 100 * H)
    dates = [str(np.datetime64(int(d), "ns").astype("datetime64[D]")) for d in day]
    # by hand: noon = date 12:00 + ZD, in force at that instant: 1 Jan 00:00 UTC is 31 Dec 12:00 in +12 ...
    assert dates == ["1969-12-31", "1970-01-01", "1970-01-03", "1970-01-04", "1970-01-05"]
    assert list(noon // H) == [0, 24, 48, 72, 96] and list(zone) == [12, 12, -12, -12, -12]
    # eastbound: ZD -12 until 30 h, then +12: 1 January twice
    noon, day, zone = ship_noons(ShipsClocks(np.array([0, 30 * H]), np.array([-12.0, 12.0])), 0, 100 * H)
    dates = [str(np.datetime64(int(d), "ns").astype("datetime64[D]")) for d in day]
    assert dates == ["1970-01-01", "1970-01-02", "1970-01-02", "1970-01-03", "1970-01-04"]
    assert list(noon // H) == [0, 24, 48, 72, 96]
    # clocks retarded an hour over noon do not make a second noon of one ship's day
    noon, _, _ = ship_noons(ShipsClocks(np.array([0, 12 * H + H // 2]), np.array([0.0, 1.0])), 0, 60 * H)
    assert list(noon // H) == [12, 37, 61][:noon.size] and np.all(np.diff(noon) >= 12 * H)


def _date_line_passage(ts, eph, direction: str):
    """Four days across 180° at 20° N, 15 knots, with the clocks changed as the master would: an hour at each
    ship's midnight when the zone changes, and the date at the midnight after the date line."""
    start = pd.Timestamp("2026-06-01T00:00:00Z")
    course, lon0, zone0 = (270.0, -172.0, 11.0) if direction == "west" else (90.0, 172.0, -11.0)
    days = 4
    track = passage.sail(start, 20.0, lon0, [(start, course, 15.0)], lambda t: (0.0, 0.0),
                         start + pd.Timedelta(days=days))
    # the clocks: at each ship's midnight the zone of the DR's longitude (ZD = −round(λ/15°)), worked by hand
    end = start + pd.Timedelta(days=days)
    changes, zone, t = [], zone0, start
    while True:
        ship = t - pd.Timedelta(hours=zone)  # ZT = UTC − ZD
        midnight = ship.floor("D") + pd.Timedelta(days=1) + pd.Timedelta(hours=zone)
        if midnight >= end:
            break
        lat, lon = passage.position_at(track, midnight)
        new = float(-np.round(lon / 15.0))
        if new != zone:
            changes.append((midnight, new))
            zone = new
        t = midnight
    rows = [{"utc": start.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "departure", "dr_lat": 20.0, "dr_lon": lon0,
             "course": course, "speed": 15.0}]
    rows += [{"utc": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "entry": "clocks", "clocks": f"{z:+.0f}"} for t, z in changes]
    when = start + pd.Timedelta(days=days) - pd.Timedelta(minutes=30)
    lat, lon = passage.position_at(track, when.round("min"))
    sun = skyfield_sight(ts, eph, "Sun", when.round("min"), lat, lon, limb="lower")
    rows.append({"utc": when.round("min").strftime("%Y-%m-%dT%H:%M:%SZ"), "body": "Sun", "limb": "lower",
                 "hs": sun["hs"], "eye_height_m": 3.0})
    return pd.DataFrame(rows), track, changes, zone0


@pytest.mark.parametrize("direction", ["west", "east"])
def test_across_the_date_line_one_noon_a_ship_s_day_at_noon_by_the_clocks(ts, eph, direction):
    """Westbound the date is skipped, eastbound repeated; every noon falls at 12:00 by the clocks as entered;
    every day's run is 23, 24 or 25 hours (never 0) and within 0.2 nm of the rhumb line between the true noon
    positions; no zone is written '-0'."""
    log, track, changes, zone0 = _date_line_passage(ts, eph, direction)
    assert any(abs(z) == 12 for _, z in changes)
    days = process_log(log, plan=False).days_work()
    noons = days.noons
    # the noons by hand: the zone in force at each noon, noon = the ship's date 12:00 + ZD
    zones = np.array([zone0] + [z for _, z in changes])
    bounds = [pd.Timestamp("2000-01-01T00:00:00Z")] + [t for t, _ in changes] + [pd.Timestamp("2100-01-01T00:00:00Z")]
    expected = []
    for date in pd.date_range("2026-05-31", "2026-06-05", freq="D", tz="UTC"):
        for k, z in enumerate(zones):
            at = date + pd.Timedelta(hours=12 + z)
            if bounds[k] <= at < bounds[k + 1] and pd.Timestamp("2026-06-01T00:00:00Z") <= at <= \
                    log.utc.map(pd.Timestamp).max() + pd.Timedelta(hours=1):
                expected.append((str(date.date()), at.strftime("%Y-%m-%d %H:%M:%S")))
    assert list(zip(noons["date"], noons["noon_utc"])) == expected
    dates = list(noons["date"])
    if direction == "west":
        assert len(set(dates)) == len(dates) and any(
            (pd.Timestamp(b) - pd.Timestamp(a)).days == 2 for a, b in zip(dates, dates[1:]))
        assert any("skipped (westbound)" in c for c in noons["clock_changes"])
    else:
        assert len(set(dates)) == len(dates) - 1  # one date twice
        assert any("repeated (eastbound)" in c for c in noons["clock_changes"])
    assert set(noons["hours"].dropna()) <= {23.0, 24.0, 25.0}
    for row, previous in zip(noons.iloc[1:].to_dict("records"), noons.iloc[:-1].to_dict("records")):
        a = passage.position_at(track, pd.Timestamp(previous["noon_utc"]).tz_localize("UTC"))
        b = passage.position_at(track, pd.Timestamp(row["noon_utc"]).tz_localize("UTC"))
        assert row["run_nm"] == pytest.approx(_rhumb_nm(*a, *b), abs=0.2)
        assert row["run_nm"] == pytest.approx(15.0 * row["hours"], abs=0.2)
    assert not any("-0" in z for z in noons["zone"]) and (noons["zone_h"].map(str) != "-0.0").all()


def test_without_clocks_entries_the_ship_keeps_her_dr_s_zone_changed_at_midnight(ts, eph):
    """No clocks entry: the clocks are the nautical zone of the DR's longitude, changed at each ship's midnight
    (common practice), and the output says so; across the date line a date is still skipped, one noon a day."""
    log, _, _, _ = _date_line_passage(ts, eph, "west")
    log = log[log["entry"] != "clocks"]
    days = process_log(log, plan=False).days_work()
    assert any("no clocks entry: the ship is taken to keep the nautical zone of her DR" in n for n in days.notes)
    noons = days.noons
    assert set(noons["hours"].dropna()) <= {23.0, 24.0, 25.0}
    assert len(set(noons["date"])) == len(noons)
    result = CliRunner().invoke(app, ["days", "--csv", "-"], input=log.to_csv(index=False))
    assert result.exit_code in (0, 1)  # (a '-' is not a file navred reads: refused, or read; either way no '-0')
    assert "ZD -0" not in result.output


def test_a_clocks_entry_is_read_as_a_zone_or_a_change_and_refused_without_one(tmp_path):
    path = tmp_path / "log.csv"
    path.write_text("utc,entry,dr_lat,dr_lon,course,speed,clocks,body,hs,eye_height_m\n"
                    "2026-06-01T00:00:00Z,departure,20 N,150 W,270,15,,,,\n"       # 2
                    "2026-06-01T10:00:00Z,clocks,,,,,retard 1 h,,,\n"             # 3
                    "2026-06-02T10:00:00Z,clocks,,,,,+12,,,\n"                    # 4
                    "2026-06-02T12:00:00Z,clocks,,,,,,,,\n"                       # 5 no zone and no change
                    "2026-06-02T13:00:00Z,clocks,,,,,sideways,,,\n"               # 6
                    "2026-06-02T14:00:00Z,,,,,,+3,Sun,40,3\n")                    # 7 clocks on a sight's row
    from navred import read_sight_log

    log = read_sight_log(path)
    reasons = log.rejected.groupby("row").reason.agg(" | ".join)
    assert "a clocks entry needs the zone the clocks keep from then" in reasons[5]
    assert "give the zone the clocks keep from then" in reasons[6]
    assert "clocks goes on an entry row" in reasons[7]
    clocks = log.entries[log.entries.entry == "clocks"]
    assert list(clocks["clocks_change_h"].fillna(99)) == [-1.0, 99]
    assert list(clocks["clocks_zone_h"].fillna(99)) == [99, 12.0]


def test_a_fix_group_spanning_many_hours_is_warned():
    """Trial finding: a group of two days' noon sights under one name (a date repeated eastbound across the date
    line) was one running fix over 27.6 h without a word. The demo's sights (sample_sights/demo_sights.csv, 09:10 to
    19:48 UTC) under one group name are warned (common practice: a running fix spans a few hours)."""
    import pandas as pd

    from navred.jobs.voyage import LONG_GROUP_HOURS, process_log

    assert LONG_GROUP_HOURS == 8.0
    demo = pd.read_csv("sample_sights/demo_sights.csv").assign(fix_group="all day")
    fix = process_log(demo, plan=False).group("all day").fix
    assert any(w.startswith("the group's sights span 10.6 h: a running fix over more than 8 h") for w in fix.warnings)
    rounds = process_log("sample_sights/demo_sights.csv", plan=False)
    assert not any("the group's sights span" in w for g in rounds.groups if g.fix for w in g.fix.warnings)


def test_days_prints_each_rejected_rows_reason(tmp_path):
    """Trial finding: a rejected clocks entry was summed up as '1 row(s) not read: navred reduce names each and
    why' while the output went on to assume the ship's time; navred days now prints each row and its reason."""
    from typer.testing import CliRunner

    from navred.cli import app

    log = tmp_path / "log.csv"
    log.write_text("utc,entry,dr_lat,dr_lon,course,speed,clocks,body,hs,eye_height_m\n"
                   "2026-03-26T06:00:00Z,departure,44 10.1 N,012 09.3 W,215,9,,,,\n"
                   "2026-03-26T06:00:00Z,clocks,,,,,sometime,,,\n"
                   "2026-03-26T12:56:03Z,,,,,,,Sun,48 16.0,2.8\n")
    result = CliRunner().invoke(app, ["days", str(log)])
    assert "1 row not reduced:" in result.output
    assert "row 3 (clocks): clocks 'sometime': give the zone the clocks keep from then" in result.output
    # and the ship's time does not say "no clocks entry" as if none were written
    assert "zone time kept: no clocks entry read (row 3 refused: see its reason), so the ship is taken" in result.output
