"""Mixed fixes at landfall: a visual bearing or a radar range of a charted object as a line in the fix beside the
celestial lines, weighed by its own σ, in the same ellipse.

The references: the ship's true position and the mark's are chosen here (an invented mark, not a charted light);
the true bearing and distance between them from geographiclib (the geodesic on WGS 84); the star sights from
skyfield at the true position (tests/conftest.py); the ellipse's axes from the covariance of two lines crossing at
a right angle (σ along each normal: any least-squares text; chi-square(2) 95 %: −2 ln 0.05).
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
from navred.landmarks import bearing_body, range_body
from navred.triangle import computed_altitude_azimuth

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_passage as passage  # noqa: E402  (the navigational stars a round is chosen from)

GEOD = Geodesic.WGS84
NM = 1852.0
TRUE = (49.84, -5.42)  # the ship at dawn, stopped off the land (invented)
MARK = (49.9583, -5.2017)  # the mark on the chart (invented)
WHEN = pd.Timestamp("2026-05-20T03:40:00Z")  # morning nautical twilight there


def test_a_mark_on_the_sphere_is_the_geodesic_line_on_the_ellipsoid():
    """The body of a bearing and of a range passes through the true position: its Hc there equals its Ho within
    0.01′, from a DR 4 nm away (geographiclib's bearing and distance)."""
    line = GEOD.Inverse(*TRUE, *MARK)
    dr = (TRUE[0] + 0.05, TRUE[1] - 0.04)
    gha, dec, ho = bearing_body(*MARK, line["azi1"] % 360, *dr)
    hc, zn = computed_altitude_azimuth(*TRUE, gha, dec)
    assert abs(float(ho - hc)) * 60 < 0.01
    assert abs((float(zn) - line["azi1"]) % 180.0 - 90.0) < 0.5  # the line's normal is square to the bearing
    gha, dec, ho = range_body(*MARK, line["s12"] / NM, *dr)
    hc, _ = computed_altitude_azimuth(*TRUE, gha, dec)
    assert abs(float(ho - hc)) * 60 < 0.01


def _landfall_log(ts, eph, *, sigma_deg=None, with_range=False):
    from tests.conftest import skyfield_sight

    line = GEOD.Inverse(*TRUE, *MARK)
    bearing = line["azi1"] % 360
    best = None
    for star in passage.STARS:
        sight = skyfield_sight(ts, eph, star, WHEN, *TRUE, eye_height_m=12.0)
        if not 20.0 <= sight["true_alt_deg"] <= 70.0:
            continue
        # the star's line square to the bearing's: its azimuth along the bearing or its reciprocal
        square = abs((sight["true_az_deg"] - bearing + 90.0) % 180.0 - 90.0)
        if best is None or square < best[0]:
            best = (square, star, sight)
    _, star, sight = best
    dr = {"dr_lat": TRUE[0] + 0.06, "dr_lon": TRUE[1] - 0.05}  # the DR 4.3 nm off the truth
    utc = WHEN.strftime("%Y-%m-%dT%H:%M:%SZ")
    rows = [{"utc": utc, "body": star, "hs": sight["hs"], "eye_height_m": 12.0, **dr, "fix_group": "landfall"},
            {"utc": utc, "mark": "Carn light (invented)", "mark_lat": MARK[0], "mark_lon": MARK[1],
             "bearing": round(bearing, 2), **dr, "fix_group": "landfall"}]
    if sigma_deg is not None:
        rows[1]["bearing_sigma"] = sigma_deg
    if with_range:
        rows.append({"utc": utc, "mark": "Carn light (invented)", "mark_lat": MARK[0], "mark_lon": MARK[1],
                     "range": round(line["s12"] / NM, 2), "range_sigma": 0.05, **dr, "fix_group": "landfall"})
    return pd.DataFrame(rows), star, sight, bearing, line["s12"] / NM


def test_a_bearing_and_a_star_fix_the_ship_within_a_tenth_of_a_mile(ts, eph, tmp_path):
    """A visual bearing of a charted mark (geographiclib) and a star (skyfield) at dawn, from a DR 4 nm off: the
    fix lies within 0.1 nm of the truth, its ellipse the stated σ of each line (the bearing's 0.5° at the mark's
    distance across one axis, the star's a priori 1′ across the other, the lines crossing near a right angle),
    and the same fix comes out of navred fix, navred days and the workbook."""
    log, star, sight, bearing, distance = _landfall_log(ts, eph, sigma_deg=0.5)
    voyage = process_log(log, plan=False)
    reduced = voyage.reduced
    assert list(reduced.status) == ["ok", "ok"], list(reduced.message)
    # the σ across the line at the mark's distance from the DR (4 nm off the truth): within 5 % of the truth's
    assert reduced.line_sigma_nm.iloc[1] == pytest.approx(distance * np.radians(0.5), rel=0.05)
    fix = voyage.group("landfall").fix
    off = GEOD.Inverse(*TRUE, fix.lat_deg, fix.lon_deg)["s12"] / NM
    assert off < 0.1, off
    crossing = abs((sight["true_az_deg"] - bearing + 90.0) % 180.0 - 90.0)
    assert crossing < 25.0  # the star's line was chosen nearly square to the bearing's
    scale = np.sqrt(-2.0 * np.log(0.05))
    axes = sorted([fix.ellipse_semi_major_nm, fix.ellipse_semi_minor_nm])
    expected = sorted([scale * distance * np.radians(0.5), scale * 1.0])
    # two lines at a right angle: the axes are each line's σ; at the crossing found, within the obliquity's share
    assert axes[0] == pytest.approx(expected[0], rel=0.25) and axes[1] == pytest.approx(expected[1], rel=0.25)
    assert fix.quantile == "chi-square(2)" and fix.sigma_source.startswith("stated:")
    log.to_csv(tmp_path / "landfall.csv", index=False)
    runner = CliRunner()
    text = runner.invoke(app, ["fix", str(tmp_path / "landfall.csv")])
    assert text.exit_code == 0, text.output
    assert 'Fix "landfall": 2 sights' in text.stdout
    days = runner.invoke(app, ["days", str(tmp_path / "landfall.csv")])
    assert days.exit_code == 0, days.output
    book = tmp_path / "landfall.xlsx"
    made = runner.invoke(app, ["workbook", str(tmp_path / "landfall.csv"), "-o", str(book), "--pictures", "none"])
    assert made.exit_code == 0, made.output
    from openpyxl import load_workbook

    working = load_workbook(book, read_only=True)["Working"]
    cells = [c for row in working.iter_rows(values_only=True) for c in row if isinstance(c, str)]
    assert "Carn light (invented) (bearing)" in cells
    assert "row 3 (Carn light (invented) (bearing))" in text.stdout or "Carn light (invented) (bearing)" in text.stdout


def test_a_mark_weighs_by_its_own_sigma(ts, eph):
    """Each line weighs 1/σ²: a bearing stated to 0.1° makes the ellipse across it 0.1° at the mark's distance, one
    stated to 5° fifty times that; with a range (σ 0.05 nm) and the bearing beside a star 3′ out, the marks hold the
    fix within 0.15 nm of the truth; stated as loose as the star (1 nm each), the star's 3′ pulls the fix over a mile
    (the range's circle and the star's line lie along one another, and share the error)."""
    log, star, sight, bearing, distance = _landfall_log(ts, eph, sigma_deg=0.1)
    shifted = log.copy()
    shifted.loc[1, "bearing"] = (bearing + 1.0) % 360  # a bearing 1° out: 0.16 nm across at the mark's distance
    tight = process_log(shifted, plan=False).group("landfall").fix
    loose_log = shifted.copy()
    loose_log.loc[1, "bearing_sigma"] = 5.0
    loose = process_log(loose_log, plan=False).group("landfall").fix
    # two lines and two unknowns: both lines are met whatever their σ; the σ shows in the ellipse, not the fix
    scale = np.sqrt(-2.0 * np.log(0.05))
    assert tight.ellipse_semi_minor_nm == pytest.approx(scale * distance * np.radians(0.1), rel=0.25)
    assert loose.ellipse_semi_minor_nm > 10 * tight.ellipse_semi_minor_nm
    three, *_ = _landfall_log(ts, eph, sigma_deg=1.0, with_range=True)
    three.loc[0, "hs"] = three.loc[0, "hs"] + 3.0 / 60.0  # the star 3′ out: the range and bearing (σ 0.05 nm) hold
    fix = process_log(three, plan=False).group("landfall").fix
    off = GEOD.Inverse(*TRUE, fix.lat_deg, fix.lon_deg)["s12"] / NM
    assert off < 0.15, off
    even = three.copy()
    even.loc[1, "bearing_sigma"], even.loc[2, "range_sigma"] = np.degrees(1.0 / distance), 1.0
    fix = process_log(even, plan=False).group("landfall").fix
    assert GEOD.Inverse(*TRUE, fix.lat_deg, fix.lon_deg)["s12"] / NM > 1.0
    # a σ on a sight's row is refused: it belongs to a mark
    stray = three.copy()
    stray.loc[0, "range_sigma"] = 0.1
    reduced = process_log(stray, plan=False).reduced
    assert reduced.status.iloc[0] == "error" and "range sigma belongs to a mark row" in reduced.message.iloc[0]
