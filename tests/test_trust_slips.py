"""A fix's trust where one sight carries a slip: the slip a fix with no sight to spare cannot check, the time a
sight left out must not set, and the DR (not a slip) named when the latest fix explains a large intercept.

Reference: skyfield's altitudes (tests/conftest.py skyfield_sight: DE421, skyfield's refraction) of stars at a
true position; the log is then written as a navigator writes it, in zone time (ZD +1 at 20° 30′ W, the DR's
nautical zone: common practice), with one slip made in it by hand.
"""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
from typer.testing import CliRunner

from navred import process_log, reduce_sights
from navred.cli import app
from navred.io.logbook import read_sight_log
from navred.jobs.chartfiles import write_voyage_geojson, write_voyage_gpx
from navred.status import Distrust
from navred.triangle import distance_bearing
from tests.conftest import offset_position, skyfield_sight

runner = CliRunner()

#: evening twilight at 45° 15′ N 20° 30′ W, 2024-09-15 (the stars and instants of tests/test_fix_trust.py)
LAT, LON, WHEN = 45.25, -20.5, pd.Timestamp("2024-09-15T19:50:00Z")
STARS = ["Altair", "Arcturus", "Deneb", "Antares", "Vega", "Alkaid"]


def write_log(ts, eph, path, *, dr_north_nm=0.0, names=STARS[:4], groups=None, hs_slip_deg=None, time_slip_h=None,
              dr_south_rows=()):
    """``names`` taken 2 minutes apart at the true position, logged in zone time +1 with the Hs in degrees and
    minutes to 0.1′; the DR ``dr_north_nm`` north of the truth; ``groups`` each row's fix group (default all
    'stars'); ``hs_slip_deg`` {row index: whole degrees written off}; ``time_slip_h`` {row index: hours the zone
    time is written late}; ``dr_south_rows``: the row indices whose DR latitude is written S for N."""
    dr_lat, dr_lon = offset_position(LAT, LON, dr_north_nm, 0.0)
    groups = groups or ["stars"] * len(names)
    rows = []
    for k, body in enumerate(names):
        utc = WHEN + pd.Timedelta(minutes=2 * k)
        sight = skyfield_sight(ts, eph, body, utc, LAT, LON)
        hs = sight["hs"] + (hs_slip_deg or {}).get(k, 0)
        zone_time = utc.tz_convert(None) - pd.Timedelta(hours=1) + pd.Timedelta(hours=(time_slip_h or {}).get(k, 0))
        degrees = int(hs)
        rows.append({"date": zone_time.strftime("%Y-%m-%d"), "zone time": zone_time.strftime("%H:%M:%S"),
                     "zone description": "+1", "body": body, "hs": f"{degrees} {(hs - degrees) * 60:04.1f}",
                     "eye_height_m": 3.0, "dr_lat": f"{dr_lat:.4f} {'S' if k in dr_south_rows else 'N'}", "dr_lon": f"{-dr_lon:.4f} W",
                     "fix_group": groups[k]})
    pd.DataFrame(rows).to_csv(path, index=False)
    return path


def fixes_of(path) -> dict:
    voyage = process_log(path, plan=False)
    return {g.name: g.fix for g in voyage.groups}, voyage


# --- F2: a fix with no sight to spare, one of whose sights carries a diagnosed slip --------------------------

def test_a_two_sight_fix_with_a_degree_slip_is_not_trusted_anywhere(tmp_path, ts, eph):
    # Altair's Hs written 1° low, Arcturus right, the DR right: two sights for two unknowns cannot check each
    # other, and Altair's 60-nm intercept fits "Hs 1° too low" (undone it leaves under 15 nm): the fix is no
    # position to plot, naming row 2 and the slip, in the table, the CSV, GPX and GeoJSON (every output reads the one
    # verdict, FixResult.trusted: tests/test_fix_trust.py)
    path = write_log(ts, eph, tmp_path / "pair.csv", names=STARS[:2], hs_slip_deg={0: -1})
    fixes, voyage = fixes_of(path)
    fix = fixes["stars"]
    assert fix.is_fix and fix.redundant == 0
    assert float(distance_bearing(fix.lat_deg, fix.lon_deg, LAT, LON)[0]) > 30.0  # the slip moved it
    assert not fix.trusted and fix.untrusted_cause == Distrust.UNCHECKED_SLIP
    assert "row 2 (Altair) carries a probable slip, Hs 1° too low" in fix.untrusted
    assert "no sight to spare" in fix.untrusted
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout), keep_default_na=False)
    assert str(table.trusted[0]) == "False" and table.untrusted_cause[0] == "a gross sight unchecked"
    gpx, geojson = write_voyage_gpx(voyage, tmp_path / "w.gpx"), write_voyage_geojson(voyage, tmp_path / "w.geojson")
    assert "<name>UNTRUSTED fix stars</name>" in gpx.read_text()
    point = next(f for f in json.loads(geojson.read_text())["features"] if f["properties"].get("kind") == "fix")
    assert point["properties"]["trusted"] is False
    assert point["properties"]["untrusted_cause"] == "a gross sight unchecked"
    # the same two sights written right: a fix to plot, at the truth
    right, _ = fixes_of(write_log(ts, eph, tmp_path / "right.csv", names=STARS[:2]))
    assert right["stars"].trusted
    assert float(distance_bearing(right["stars"].lat_deg, right["stars"].lon_deg, LAT, LON)[0]) < 0.5


# --- F7: a large intercept the latest fix explains is the DR's, and no slip is offered ------------------------

def test_a_large_intercept_the_latest_fix_explains_names_the_dr_not_a_slip(tmp_path, ts, eph):
    # the DR 45 nm north of the truth on every row (a stale DR: the current); a round of four stars fixes the ship
    # (trusted: 45 nm is within three times what a day-old DR may be out), then two more stars make a fix of their
    # own. Their intercepts over 30 nm are the DR's: from the star fix run on by the DR they are a mile or so; the
    # pair stays trusted and its warning names the DR, with the fix it was tested from
    names = STARS[:6]
    groups = ["round"] * 4 + ["pair"] * 2
    path = write_log(ts, eph, tmp_path / "stale.csv", names=names, groups=groups, dr_north_nm=45.0)
    fixes, voyage = fixes_of(path)
    assert fixes["round"].trusted
    pair = fixes["pair"]
    assert pair.trusted, pair.untrusted
    said = [w for w in pair.warnings if "is the DR's error, not the sight's" in w]
    assert said, pair.warnings
    assert all("from the fix at 2024-09-15 19:56 UTC (rows 2-5)" in w and "no slip is offered" in w for w in said)
    rows = [int(w.split()[1]) - 2 for w in said]  # 'row 6 (Vega): ...' -> index 4
    assert all("possible cause" not in str(voyage.reduced.message.iloc[r]) for r in rows)
    assert not any("possible cause" in w for w in pair.warnings), pair.warnings  # not for its other sight either
    # the pair alone, with no fix before it to test its intercepts from: nothing checks them, not trusted
    alone, _ = fixes_of(write_log(ts, eph, tmp_path / "alone.csv", names=names[4:], groups=["pair"] * 2,
                                  dr_north_nm=45.0))
    big = [w for w in alone["pair"].untrusted.split("; ")]
    assert alone["pair"].untrusted_cause == Distrust.UNCHECKED_SLIP, big


# --- F5: a sight left out sets neither the fix's time nor the run of the others ------------------------------

def test_a_sight_left_out_for_its_date_does_not_set_the_fix_time(tmp_path, ts, eph):
    # five stars, the last (Vega, row 6) with its date a day late: it is left out as a gross error, the fix is at
    # the last sight used (Antares, 19:56 UTC: the round's time is its last sight's, common practice), at the
    # truth, and the group's 24-h span is laid on row 6, not on the round
    path = write_log(ts, eph, tmp_path / "day.csv", names=STARS[:5], time_slip_h={4: 24})
    fixes, _ = fixes_of(path)
    fix = fixes["stars"]
    assert bool(fix.left_out[4]) and fix.trusted
    assert pd.Timestamp(fix.utc) == pd.Timestamp("2024-09-15T19:56:00")
    assert float(distance_bearing(fix.lat_deg, fix.lon_deg, LAT, LON)[0]) < 0.5
    assert any("row 6, left out, sets neither its time nor the time the others are run to" in w for w in fix.warnings)
    assert any("span 24.1 h only because of row 6" in w for w in fix.warnings), fix.warnings
    assert not any(w.startswith("the sights used span") for w in fix.warnings)


def test_a_sight_left_out_for_its_hour_is_named_as_the_span(tmp_path, ts, eph):
    # the same round with Vega's zone time written an hour late: the fix is at 19:56 UTC, not 20:58, and the
    # hour is laid on row 6 (the round's sights span 6 min; common practice)
    fixes, _ = fixes_of(write_log(ts, eph, tmp_path / "hour.csv", names=STARS[:5], time_slip_h={4: 1}))
    fix = fixes["stars"]
    assert bool(fix.left_out[4])
    assert pd.Timestamp(fix.utc) == pd.Timestamp("2024-09-15T19:56:00")
    assert any("only because of row 6" in w and "the sights used span 6 min" in w for w in fix.warnings), fix.warnings


# --- F6: one row's DR in the other hemisphere from its neighbours --------------------------------------------

def test_one_rows_dr_in_the_other_hemisphere_is_named_first(tmp_path, ts, eph):
    # Arcturus (row 3) with its DR latitude written S where rows 2 and 4, two minutes either side, say N: its
    # intercept is thousands of miles; the hemisphere is the likely cause, named first (worked from the DR with
    # its latitude N the intercept is within a mile or so), not "no single slip"; the twilight note, worked at the
    # DR as logged, says so (a DR does not change hemisphere between the sights of a round: common practice)
    path = write_log(ts, eph, tmp_path / "hemi.csv", dr_north_nm=2.0, dr_south_rows=(1,))
    note = str(reduce_sights(read_sight_log(path)).message.iloc[1])
    assert "likely cause: row 3's DR latitude S where row 2 and row 4 say N" in note, note
    assert "no single slip" not in note
    rest = float(note.split("the intercept is ")[1].split(" nm")[0])
    assert rest < 3.0  # the DR 2 nm north of the truth
    if "twilight" in note or "horizon cannot be made out" in note:
        assert "whose hemisphere the likely cause above puts in doubt" in note


# --- 11: what the fix standard error is, said beside it ------------------------------------------------------

def test_the_fix_standard_error_says_it_is_the_one_sigma_radial_drms(tmp_path, ts, eph):
    # the drms (1σ radial) is √(σ₁² + σ₂²) of the error ellipse's axes (common practice): the 95 % semi-axes
    # over the ellipse's own scale; about 63 % (a round error) to 68 % (a long thin one) of fixes fall within it
    # (from memory: 1 − e⁻¹ and the 1σ of one axis), checked here by drawing errors from the fix's covariance
    path = write_log(ts, eph, tmp_path / "round.csv", dr_north_nm=2.0)
    fixes, _ = fixes_of(path)
    fix = fixes["stars"]
    drms = float(np.hypot(fix.ellipse_semi_major_nm, fix.ellipse_semi_minor_nm) / fix.confidence_scale)
    assert abs(fix.standard_error_nm - drms) < 1e-9
    draws = np.random.default_rng(7).multivariate_normal([0.0, 0.0], fix.covariance_nm2, 20000)
    within = float(np.mean(np.hypot(draws[:, 0], draws[:, 1]) <= fix.standard_error_nm))
    assert 0.62 < within < 0.69
    printed = runner.invoke(app, ["fix", str(path)]).stdout
    line = next(t for t in printed.splitlines() if "fix standard error" in t)
    assert f"fix standard error {fix.standard_error_nm:.2f} nm (1σ radial, the drms" in line
    assert "95 % ellipse" in line
