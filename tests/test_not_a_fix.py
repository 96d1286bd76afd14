"""One rule makes a fix: a least-squares position whose lines cross at less than 15° where it lies, whose iteration
did not settle, or whose 95 % ellipse is longer than a fix's is never headlined as a fix; it is given as what it is
(a line of position, with the foot nearest the DR an EP on it) in the same words on the console, --csv, the Fixes
sheet, GPX and GeoJSON. Each case on its own, with sights synthesized by skyfield (named beside each check)."""

from __future__ import annotations

import io
import json

import numpy as np
import openpyxl
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred import reduce_sights
from navred.cli import app
from navred.fixkinds import not_a_fix
from navred.fixresult import FIX_ELLIPSE_LIMIT_NM, LINE_ONLY_RATIO, angle_words
from navred.jobs.frames import fix_position
from navred.triangle import distance_bearing
from tests.conftest import offset_position, rhumb_integrated, skyfield_sight

runner = CliRunner()


def test_an_angle_below_a_limit_never_reads_as_the_limit():
    # whole degrees, but an angle just below the limit is written in tenths cut down: never "15° ... below 15°"
    assert angle_words(3.2, 15.0) == "3°"
    assert angle_words(14.74, 15.0) == "14.7°"
    assert angle_words(14.96, 15.0) == "14.9°"
    assert angle_words(29.6, 30.0) == "29.6°"
    assert angle_words(14.4, 15.0) == "14°"
    assert angle_words(40.0, 15.0) == "40°"


def test_the_rule_case_by_case():
    # each case alone: the angle of cut (15°, common practice), the iteration, the ellipse's length and shape
    spread = np.array([3.0, 14.96, 40.0, 40.0, 40.0, 40.0, 40.0, 3.0])
    settled = np.array([True, True, False, True, True, True, True, False])
    major = np.array([145.0, 5.0, 2.0, 145.0, 40.0, 5.0, FIX_ELLIPSE_LIMIT_NM, 1.0])
    minor = np.array([0.4, 1.0, 1.0, 0.44, 35.0, 0.2, 0.1, 1.0])
    singular = np.array([False] * 7 + [True])
    why = not_a_fix(spread, settled, major, minor, singular)
    assert why[0] == "the lines of position cross at 3° at most (below 15°)"
    assert why[1] == "the lines of position cross at 14.9° at most (below 15°)"
    assert why[2].startswith("the least-squares position did not settle to 0.01 nm")
    assert why[3].startswith("its 95 % ellipse would be 290 × 0.9 nm, beyond the 60 nm of a position to plot")
    assert major[3] > LINE_ONLY_RATIO * minor[3] and round(LINE_ONLY_RATIO, 2) == 7.6  # cot 7.5°
    assert why[4] == ""  # long but round: a position not to be trusted (below), not a line
    assert why[5] == ""  # narrow but short: a fix (a weak one, warned as such)
    assert why[6] == ""  # at the bound itself: still a fix
    assert why[7] == ""  # parallel lines: no position at all (said elsewhere)


def _sun_run_sun_near_the_zenith(ts, eph):
    """Reference: skyfield's altitudes of the Sun's lower limb from a ship on 302° at 15.7 kn near 4° N 132° W on
    2025-09-12 (the Sun's declination about 4° N): two sights in the morning (Zn 088°), two at noon 87° up
    (Zn 269° at the sight, but another azimuth at the DR three hours on), two in the afternoon (Zn 271°): the
    lines cross at 3°, a line of longitude, no fix. Each row's DR is 5 nm off the truth."""
    start = pd.Timestamp("2025-09-12T17:46:32Z")
    course, speed = 302.4, 15.7
    rows, truth = [], []
    for minutes in (0.0, 7.75, 186.5, 190.2, 353.0, 356.4):
        lat, lon = rhumb_integrated(3.41, -131.49, course, speed * minutes / 60.0)  # the truth, on WGS 84
        sight = skyfield_sight(ts, eph, "Sun", start + pd.Timedelta(minutes=minutes), float(lat), float(lon),
                               limb="lower", eye_height_m=14.8)
        dr_lat, dr_lon = offset_position(float(lat), float(lon), 3.0, -4.0)
        rows.append({"utc": sight["utc"].strftime("%Y-%m-%dT%H:%M:%SZ"), "body": "Sun", "limb": "lower",
                     "hs": round(sight["hs"], 5), "eye_height_m": 14.8, "dr_lat": round(dr_lat, 5),
                     "dr_lon": round(dr_lon, 5), "course_deg": course, "speed_kn": speed, "fix_group": "S059"})
        truth.append((float(lat), float(lon)))
    return rows, truth


def sheet(path, name):
    values = list(openpyxl.load_workbook(path, read_only=True)[name].values)
    return pd.DataFrame(values[1:], columns=values[0])


def test_lines_crossing_at_3_degrees_are_a_line_of_position_everywhere(tmp_path, ts, eph):
    """Was: 'fix' to 0.1′ with a 330 × 0.1 nm ellipse and 'weak fix: cross at 3°', the angle judged at the DR of the
    fix time (where the noon Sun, three hours back along the track, has another azimuth). Now the angle is judged
    at each sight's own DR, as the solution works it, and the group is a line everywhere."""
    rows, truth = _sun_run_sun_near_the_zenith(ts, eph)
    path = tmp_path / "zenith.csv"
    pd.DataFrame(rows).to_csv(path, index=False)
    line = fix_position(reduce_sights(pd.read_csv(path, dtype=str)))
    assert line.kind == "line of position" and not line.is_fix and np.isinf(line.ellipse_semi_major_nm)
    assert line.spread_deg < 5 and line.not_fix_reason == "the lines of position cross at 3° at most (below 15°)"
    # the true position at the last sight (skyfield's track) lies in the line's 95 % band
    assert abs(line.distance_off_line_nm(*truth[-1])) <= line.ellipse_semi_minor_nm
    assert not any("weak fix" in w or "did not settle" in w for w in line.warnings)
    words = "not a fix: the lines of position cross at 3° at most (below 15°), so the sights give a line of position"
    console = runner.invoke(app, ["fix", str(path)])
    assert console.exit_code == 0, console.output
    assert 'No fix in "S059": 6 sights give a line of position' in console.stdout and words in console.stdout
    assert 'Fix "S059"' not in console.stdout
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout))
    assert table.kind[0] == "line of position" and words in table.note[0]
    book, gpx, geojson = tmp_path / "z.xlsx", tmp_path / "z.gpx", tmp_path / "z.geojson"
    done = runner.invoke(app, ["workbook", str(path), "-o", str(book), "-o", str(gpx), "-o", str(geojson)])
    assert done.exit_code == 0, done.output
    fixes = sheet(book, "Fixes").set_index("fix group")
    assert fixes.loc["S059", "kind"] == "line of position (not a fix)" and words in fixes.loc["S059", "note"]
    import gpxpy

    names = [w.name for w in gpxpy.parse(gpx.read_text()).waypoints]
    assert "EP S059 on the line of position, not a fix" in names and "fix S059" not in names
    features = json.loads(geojson.read_text())["features"]
    assert not any(f["properties"].get("kind") == "fix" for f in features)
    assert any(f["properties"].get("kind") == "line of position (not a fix)" for f in features)


def _stars(ts, eph, names, noise_arcmin, dr_offset):
    """Reference: skyfield's altitudes of stars in evening twilight at 45° 15′ N 20° 30′ W (2024-09-15), with the
    given errors added; the DR ``dr_offset`` (north, east nm) off the truth."""
    when = pd.Timestamp("2024-09-15T19:50:00Z")
    dr_lat, dr_lon = offset_position(45.25, -20.5, *dr_offset)
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=2 * k), 45.25, -20.5, noise_arcmin=e)
            for k, (name, e) in enumerate(zip(names, noise_arcmin, strict=True))]
    return pd.DataFrame(rows).assign(dr_lat=dr_lat, dr_lon=dr_lon, fix_group="stars")


def test_an_iteration_that_does_not_settle_is_no_fix(tmp_path, ts, eph, monkeypatch):
    # the same stars fix well from a DR 140 nm out in 25 steps; allowed one step, the position has not settled, and
    # the group is given as a line of position saying so, on the console and in --csv alike
    frame = _stars(ts, eph, ["Altair", "Arcturus", "Deneb", "Antares"], [0.0] * 4, (80.0, -120.0))
    settled = fix_position(reduce_sights(frame))
    assert settled.is_fix and float(distance_bearing(settled.lat_deg, settled.lon_deg, 45.25, -20.5)[0]) < 0.2
    monkeypatch.setattr("navred.leastsquares.MAX_ITERATIONS", 1)
    unsettled = fix_position(reduce_sights(frame))
    assert unsettled.kind == "line of position" and not unsettled.is_fix
    assert unsettled.not_fix_reason.startswith("the least-squares position did not settle")
    path = tmp_path / "far.csv"
    frame.drop(columns=["true_alt_deg", "true_az_deg"]).to_csv(path, index=False)
    console = runner.invoke(app, ["fix", str(path)])
    assert 'No fix in "stars"' in console.stdout and "did not settle" in console.stdout
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout))
    assert table.kind[0] == "line of position" and "not a fix: the least-squares position did not settle" in table.note[0]


def test_a_long_round_ellipse_is_a_wide_fix_said_first(ts, eph):
    # three stars crossing well, each 1.5′ high: the residuals give σ about 2.6′ on one redundant sight, and the
    # F(2, 1) ellipse (its quantile 199.5, Fisher-Snedecor; navred.stats) runs beyond 30 nm both ways: no
    # line, and a fix said first to be no better than its wide ellipse (the sights scatter as a sextant's may,
    # so it is not called untrustworthy: a 5-nm cocked hat is plotted at sea, common practice)
    frame = _stars(ts, eph, ["Altair", "Arcturus", "Deneb"], [1.5, 1.5, 1.5], (4.0, -6.0))
    fix = fix_position(reduce_sights(frame))
    assert fix.ellipse_semi_major_nm > FIX_ELLIPSE_LIMIT_NM and fix.ellipse_semi_minor_nm > 10.0
    assert fix.is_fix and not fix.untrusted
    assert fix.warnings[0].startswith("a wide fix: its 95 % ellipse")
    # with good sights the same three stars are a fix to plot
    good = fix_position(reduce_sights(_stars(ts, eph, ["Altair", "Arcturus", "Deneb"], [0.3, -0.2, 0.1], (4.0, -6.0))))
    assert good.is_fix and not good.untrusted and good.ellipse_semi_major_nm < FIX_ELLIPSE_LIMIT_NM


@pytest.mark.parametrize("field", ["kind", "not_fix_reason"])
def test_a_fix_says_nothing_of_not_being_one(ts, eph, field):
    fix = fix_position(reduce_sights(_stars(ts, eph, ["Altair", "Arcturus", "Deneb", "Antares"], [0.2, -0.3, 0.1, 0.0],
                                            (4.0, -6.0))))
    assert getattr(fix, field) == {"kind": "fix", "not_fix_reason": ""}[field]


def test_sights_that_agree_closer_than_a_sextant_gives_are_said_to_make_the_ellipse_too_small(ts, eph):
    # trial finding: six stars worked from computed altitudes (skyfield's, no error) gave "95 % ellipse 0.3 × 0.2
    # nm" on σ 0.03′ with no word; the best sextant work at sea is about 0.3′ (common practice), and a σ below
    # that at 99.9 % (chi-square, navred.stats) is said. Sights with a sextant's scatter (0.2-0.7′) are not.
    names = ["Altair", "Arcturus", "Deneb", "Antares", "Vega", "Alkaid"]
    exact = fix_position(reduce_sights(_stars(ts, eph, names, [0.0] * 6, (4.0, -6.0))))
    assert exact.is_fix and exact.sigma_arcmin < 0.05
    assert any(w.startswith(f"the sights agree to σ {exact.sigma_arcmin:.2f}′, closer than sights observed")
               for w in exact.warnings), exact.warnings
    observed = fix_position(reduce_sights(_stars(ts, eph, names, [0.6, -0.4, 0.3, -0.7, 0.5, -0.2], (4.0, -6.0))))
    assert observed.is_fix and not any("closer than sights observed" in w for w in observed.warnings)
