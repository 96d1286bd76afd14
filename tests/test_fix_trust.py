"""How far a fix may be trusted, said the same way everywhere, and the causes named for a fix far from its DR.

- One verdict, FixResult.trusted (False for a position marked CANNOT BE TRUSTED, decided by
  navred.grosserrors.mark_untrusted), read by navred fix --csv, fix_positions().table(), the Fixes sheet, GPX
  and GeoJSON, with the kind of reason beside it.
- A DR written in the wrong hemisphere (E for W, N for S) is named: the sight worked from the DR's longitude
  mirrored where the zone description's sign disagrees with the DR, the fix found again from the mirrored DR.
- A round whose sights agree names the DR; no sight's own note contradicts it.
- Sights that agree too well: one rule (navred.sensechecks.too_good), tested per sight count.

Reference: skyfield's altitudes (tests/conftest.py skyfield_sight: DE421, skyfield's refraction) of stars at a
true position; the log is then written as a navigator writes it, in zone time, with one slip made in it.
"""

from __future__ import annotations

import io
import json
import math
import re

import numpy as np
import openpyxl
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred import fix_positions, process_log, reduce_sights
from navred.cli import app
from navred.io.logbook import read_sight_log
from navred.jobs.voyagebook import write_workbook
from navred.sensechecks import (
    SCATTER_CONFIDENCE,
    SEXTANT_READING_ARCMIN,
    SEXTANT_SIGMA_BEST_ARCMIN,
    too_good,
)
from navred.status import Distrust
from navred.triangle import distance_bearing
from tests.conftest import offset_position, skyfield_sight

runner = CliRunner()

#: evening twilight at 45° 15′ N 20° 30′ W, 2024-09-15 (as tests/test_not_a_fix.py); the ship keeps zone +1,
#: the DR's nautical zone (20.5° W / 15°, rounded; common practice)
LAT, LON, WHEN = 45.25, -20.5, pd.Timestamp("2024-09-15T19:50:00Z")
STARS = ["Altair", "Arcturus", "Deneb", "Antares", "Vega", "Alkaid", "Kochab", "Rasalhague"]


def _log(ts, eph, tmp_path, *, dr_lat, dr_lon, names=STARS[:4], zd=1, name="log.csv", noise=None,
         when=WHEN, lat=LAT, lon=LON, days_off=0):
    """A log of ``names`` taken 2 minutes apart at the true position, written in zone time under ZD ``zd`` (the
    ship's true zone +1), with the DR as given and the Hs to 0.1′ as a sextant is read; the date written
    ``days_off`` days out."""
    noise = [0.0] * len(names) if noise is None else noise
    rows = []
    for k, (body, e) in enumerate(zip(names, noise, strict=True)):
        utc = when + pd.Timedelta(minutes=2 * k)
        sight = skyfield_sight(ts, eph, body, utc, lat, lon, noise_arcmin=e)
        zone_time = utc.tz_convert(None) - pd.Timedelta(hours=round(-lon / 15.0)) + pd.Timedelta(days=days_off)
        degrees = int(sight["hs"])
        rows.append({"date": zone_time.strftime("%Y-%m-%d"), "zone time": zone_time.strftime("%H:%M:%S"),
                     "zone description": f"{zd:+d}", "body": body,
                     "hs": f"{degrees} {(sight['hs'] - degrees) * 60:04.1f}", "eye_height_m": 3.0,
                     "dr_lat": f"{abs(dr_lat):.4f} {'N' if dr_lat >= 0 else 'S'}",
                     "dr_lon": f"{abs(dr_lon):.4f} {'E' if dr_lon >= 0 else 'W'}", "fix_group": "stars"})
    path = tmp_path / name
    pd.DataFrame(rows).to_csv(path, index=False)
    return path


def _only_fix(path):
    voyage = process_log(path, plan=False)
    (group,) = voyage.groups
    return voyage, group.fix


# --- 1. one verdict, read by every table and file ---------------------------------------------------------

@pytest.mark.parametrize("off_nm, trusted, cause", [((3.0, -2.0), True, ""), ((300.0, 0.0), False, "far from the DR")])
def test_the_trust_verdict_is_one_column_in_every_table_and_file(tmp_path, ts, eph, off_nm, trusted, cause):
    # a DR 3.6 nm out gives a fix to plot; one 300 nm out (beyond three times the ~31 nm a day-old DR may be out at
    # rest: grosserrors.FAR_UNTRUSTED_FACTOR, common practice) a position marked CANNOT BE TRUSTED: the same
    # verdict in the CSV, the API's table, the Fixes sheet, the GPX waypoint and the GeoJSON point
    path = _log(ts, eph, tmp_path, dr_lat=offset_position(LAT, LON, *off_nm)[0],
                dr_lon=offset_position(LAT, LON, *off_nm)[1])
    _, fix = _only_fix(path)
    assert fix.is_fix and fix.trusted is trusted and fix.trusted == (not fix.untrusted)
    assert (fix.untrusted_cause or "") == cause
    # the fix itself is the true position either way (skyfield's sights)
    assert float(distance_bearing(fix.lat_deg, fix.lon_deg, LAT, LON)[0]) < 0.5
    result = runner.invoke(app, ["fix", str(path), "--csv"])
    assert result.exit_code == 0, result.output
    table = pd.read_csv(io.StringIO(result.stdout), keep_default_na=False)
    assert list(table.columns[:5]) == ["fix_group", "utc", "kind", "trusted", "untrusted_cause"]
    assert table.kind[0] == "fix" and str(table.trusted[0]) == str(trusted) and table.untrusted_cause[0] == cause
    assert ("CANNOT BE TRUSTED" in table.note[0]) is (not trusted)
    api = fix_positions(reduce_sights(read_sight_log(path))).table()
    assert bool(api.trusted[0]) is trusted and api.untrusted_cause[0] == cause
    out = tmp_path / "out"
    out.mkdir()
    made = runner.invoke(app, ["workbook", str(path), "-o", str(out / "w.xlsx"), "-o", str(out / "w.gpx"),
                               "-o", str(out / "w.geojson")])
    assert made.exit_code == 0, made.output
    sheet = openpyxl.load_workbook(out / "w.xlsx")["Fixes"]
    header = [c.value for c in sheet[1]]
    cell = sheet.cell(2, header.index("trusted to plot") + 1).value
    assert cell == ("yes" if trusted else f"NO ({cause}): see the note")
    gpx = (out / "w.gpx").read_text()
    if trusted:
        assert "<name>fix stars</name>" in gpx and "<type>fix</type>" in gpx
    else:
        assert "<name>UNTRUSTED fix stars</name>" in gpx and f"<type>untrusted fix ({cause})</type>" in gpx
    point = next(f for f in json.loads((out / "w.geojson").read_text())["features"]
                 if f["properties"].get("kind") == "fix")
    assert point["properties"]["trusted"] is trusted and point["properties"]["untrusted_cause"] == cause


@pytest.mark.parametrize("off_nm, trusted", [((3.0, -2.0), True), ((300.0, 0.0), False)])
def test_the_sight_plan_starts_from_the_last_trusted_position(tmp_path, ts, eph, off_nm, trusted):
    # a plan is never carried on from a position marked CANNOT BE TRUSTED: the DR is kept on and the fix looked
    # into (common practice); the log gives no course or speed, so the plan's position is its start itself
    dr = offset_position(LAT, LON, *off_nm)
    path = _log(ts, eph, tmp_path, dr_lat=dr[0], dr_lon=dr[1])
    voyage = process_log(path)
    (group,) = voyage.groups
    start = voyage.plan_presets[""].start
    plan = voyage.next_plan
    assert start.kind == ("fix" if trusted else "DR") and start.group == "stars"
    # the DR as the log writes it (to 0.0001°, the test's own rounding), or the fix (skyfield's true position)
    expected = (LAT, LON) if trusted else (round(dr[0], 4), round(dr[1], 4))
    assert float(distance_bearing(plan.lat_deg, plan.lon_deg, *expected)[0]) < (0.5 if trusted else 0.01)
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "w.xlsx", plots=False))
    where = list(book["Sight plan"].values)[0][1]
    if trusted:
        assert "from the fix 'stars' at 2024-09-15 19:56 UTC" in where and "TRUSTED" not in where
    else:  # which position, and why the fix was not used, beside the plan
        assert "from the DR at 2024-09-15 19:56 UTC (50° 15.0′ N 020° 30.0′ W)" in where
        assert "not from the fix 'stars'" in where and "CANNOT BE TRUSTED (far from the DR;" in where


# --- 2. a DR in the wrong hemisphere ------------------------------------------------------------------------

def _fix_at(text: str) -> tuple[float, float]:
    """The position after 'fix at' in a warning, read by the test's own pattern (degrees and minutes)."""
    m = re.search(r"fix at (\d+)° (\d+\.\d)′ ([NS]) (\d+)° (\d+\.\d)′ ([EW])", text)
    assert m, text
    lat = (int(m[1]) + float(m[2]) / 60) * (1 if m[3] == "N" else -1)
    lon = (int(m[4]) + float(m[5]) / 60) * (1 if m[6] == "E" else -1)
    return lat, lon


def test_a_dr_longitude_written_east_for_west_is_named(tmp_path, ts, eph):
    # the DR "20° 30′ E" for 20° 30′ W under the ship's ZD +1 (a west zone): the ZD's sign undone fits no sight,
    # the DR's longitude mirrored does, in each sight's note; the fix from the DR as logged is no position to plot,
    # and the fix from the DR mirrored is the true one (skyfield)
    dr_lat, dr_lon = offset_position(LAT, LON, 4.0, -3.0)
    path = _log(ts, eph, tmp_path, dr_lat=dr_lat, dr_lon=-dr_lon)
    reduced = reduce_sights(read_sight_log(path))
    assert reduced.message.str.contains("likely cause: the DR's longitude written E for W").all(), reduced.message
    assert not reduced.message.str.contains("a ZD of the wrong sign").any()
    voyage, fix = _only_fix(path)
    assert not fix.trusted and fix.untrusted_cause == Distrust.DR_HEMISPHERE
    assert fix.untrusted.startswith("the DR's longitude written E for W?") and "check the DR's E/W" in fix.untrusted
    assert fix.warnings[0] == f"CANNOT BE TRUSTED as the position to plot: {fix.untrusted}"
    assert float(distance_bearing(*_fix_at(fix.untrusted), LAT, LON)[0]) < 0.5
    console = runner.invoke(app, ["fix", str(path)])
    assert "CANNOT BE TRUSTED" in console.stdout and "the DR's longitude written E for W?" in console.stdout


def test_a_dr_latitude_written_south_for_north_is_named(tmp_path, ts, eph):
    # the DR "45° 15′ S" for N: the zone description agrees with the DR's longitude, so no sight names the zone;
    # the fix found again from the DR mirrored across the equator fits its sights and lies at the truth (skyfield)
    dr_lat, dr_lon = offset_position(LAT, LON, 4.0, -3.0)
    _, fix = _only_fix(_log(ts, eph, tmp_path, dr_lat=-dr_lat, dr_lon=dr_lon))
    assert not fix.trusted and fix.untrusted_cause == Distrust.DR_HEMISPHERE
    assert fix.untrusted.startswith("the DR's latitude written S for N?") and "check the DR's N/S" in fix.untrusted
    assert float(distance_bearing(*_fix_at(fix.untrusted), LAT, LON)[0]) < 0.5


def test_a_dr_out_by_two_degrees_is_not_called_a_wrong_hemisphere(tmp_path, ts, eph):
    # a DR 2° of latitude out (120 nm) and nothing mirrored: far from its DR, untrusted as such, no hemisphere named
    dr_lat, dr_lon = offset_position(LAT, LON, 120.0, 0.0)
    _, fix = _only_fix(_log(ts, eph, tmp_path, dr_lat=dr_lat, dr_lon=dr_lon))
    assert fix.untrusted_cause == Distrust.FAR_FROM_DR
    assert not any("written" in w and ("N for S" in w or "E for W" in w or "S for N" in w) for w in fix.warnings)


def test_a_slip_every_sight_fits_makes_the_fix_untrusted(tmp_path, ts, eph):
    # the trial's case: the date written a day late, the DR right (three stars at 17° 30′ S 149° 30′ W, skyfield):
    # the fix lands some 56 nm west, within three times what the DR could be out, but every sight fits the one
    # slip (worked 24 h earlier each intercept is within 15 nm): the fix is not a position to plot
    names = ["Canopus", "Achernar", "Fomalhaut"]
    path = _log(ts, eph, tmp_path, dr_lat=-17.5, dr_lon=-149.5, names=names, zd=10, days_off=1,
                when=pd.Timestamp("2026-12-05T05:05:00Z"), lat=-17.5, lon=-149.5)
    _, fix = _only_fix(path)
    assert float(distance_bearing(fix.lat_deg, fix.lon_deg, -17.5, -149.5)[0]) > 30.0  # moved by the slip
    assert not fix.trusted and fix.untrusted_cause == Distrust.SLIP
    assert "every one of its 3 sights fits one slip, the date a day out" in fix.untrusted
    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout), keep_default_na=False)
    assert str(table.trusted[0]) == "False" and table.untrusted_cause[0] == "a slip every sight fits"
    # the same log with the date right: a fix to plot, at the truth
    _, right = _only_fix(_log(ts, eph, tmp_path, dr_lat=-17.5, dr_lon=-149.5, names=names, zd=10,
                              when=pd.Timestamp("2026-12-05T05:05:00Z"), lat=-17.5, lon=-149.5, name="right.csv"))
    assert right.trusted and float(distance_bearing(right.lat_deg, right.lon_deg, -17.5, -149.5)[0]) < 0.5


# --- 3. a round's verdict and its sights' notes agree --------------------------------------------------------

def test_a_round_that_names_the_dr_has_no_sight_contradicting_it(tmp_path, ts, eph):
    # the trial's case: three stars at 17° 30′ S 149° 30′ W (2026-12-05 05:05 UTC, zone +10), the DR 2° out in
    # latitude and 2° 20′ in longitude; worked alone, a sight may fit a slip (a day out); the round agrees, so its
    # fix names the DR, says once what that sight alone would suggest, and no sight's note under it names a cause
    names = ["Canopus", "Achernar", "Fomalhaut"]
    path = _log(ts, eph, tmp_path, dr_lat=-19.5, dr_lon=-147.1667, names=names, zd=10,
                when=pd.Timestamp("2026-12-05T05:05:00Z"), lat=-17.5, lon=-149.5)
    alone = reduce_sights(read_sight_log(path))
    suggested = [i for i, m in enumerate(alone.message) if "possible cause" in m]
    assert suggested, alone.message.tolist()  # the case is there: a sight alone suggests a slip
    voyage, fix = _only_fix(path)
    verdict = [w for w in fix.warnings if "agree among themselves" in w]
    assert len(verdict) == 1 and "the DR is the likely cause" in verdict[0]
    assert "only what a sight alone would suggest, the DR taken as right (not the round's cause)" in verdict[0]
    for i in suggested:
        cause = alone.message[i].split("): ", 1)[1].split(";")[0]
        assert f"row {alone.row[i]}, {cause}" in verdict[0]
        assert "possible cause" not in voyage.reduced.message[i]
    assert not any(w.startswith("possible cause") for w in fix.warnings)
    console = runner.invoke(app, ["fix", str(path)]).stdout
    assert "possible cause" not in console
    for i in suggested:
        assert console.count(alone.message[i].split("): ", 1)[1].split(" (")[0]) == 1, console


# --- 4. too good to be true: one rule, per sight count ------------------------------------------------------

def _chi_square_cdf(x: float, nu: int) -> float:
    """P(χ²_ν ≤ x) in closed form (Abramowitz & Stegun 26.4.4 and 26.4.5: ν = 1 by erf, ν = 2 by exp, then
    P(ν + 2) = P(ν) − (x/2)^(ν/2) e^(−x/2) / Γ(ν/2 + 1)); the test's own, independent of navred.stats."""
    p = math.erf(math.sqrt(x / 2)) if nu % 2 else 1.0 - math.exp(-x / 2)
    k = 1 if nu % 2 else 2
    while k < nu:
        p -= (x / 2) ** (k / 2) * math.exp(-x / 2) / math.gamma(k / 2 + 1)
        k += 2
    return p


@pytest.mark.parametrize("nu", [1, 2, 3, 4, 5, 6])
def test_too_good_rule_per_redundant_sight(nu):
    # σ 0.04′ (the trial's three stars) and 0.0, 0.08, 0.5′ against the best sextant work (0.3′, common practice),
    # each ν alone: a warning only under 0.1 % (chi-square, the closed form above); else, under the 0.1′ a sextant
    # is read to, 'cannot be judged'; a sextant's scatter says nothing
    sigma = np.array([0.0, 0.04, 0.08, 0.5])
    chance, words = too_good(sigma, np.full(sigma.size, nu))
    for s, p, w in zip(sigma.tolist(), chance.tolist(), words.tolist()):
        reference = _chi_square_cdf(nu * (s / SEXTANT_SIGMA_BEST_ARCMIN) ** 2, nu)
        assert p == pytest.approx(reference, rel=1e-6, abs=1e-12)
        warned = reference < 1.0 - SCATTER_CONFIDENCE
        assert ("closer than sights observed at sea agree" in w) is warned
        assert ("cannot judge whether that is too good to be true" in w) is (not warned and s < SEXTANT_READING_ARCMIN)
        if w:
            assert f"chi-square, {nu} degree{'' if nu == 1 else 's'} of freedom" in w
    # the trial's case: three stars (ν 1) at σ 0.04′ agree so in 11 % of rounds of the best sights: no warning
    if nu == 1:
        assert "cannot judge" in words[1] and "in 11 % of rounds" in words[1]
    # two sights estimate no σ: nothing
    assert too_good(np.array([0.0]), np.array([0]))[1][0] == ""


@pytest.mark.parametrize("nu", [1, 2, 3, 5, 8, 20, 60])
def test_too_good_remarks_only_gives_the_same_words(nu):
    # the fix's sense checks work the chance only under the best sextant work's σ (0.3′): at or above it ν s²/σ²
    # is at least ν, above the chi-square's median, a chance over one half (the closed form above says so for
    # each ν here), so no remark is lost; the words are the same, the chance where it is worked the same
    sigma = np.array([0.0, 0.01, 0.04, 0.1, 0.2, 0.29, 0.3, 0.31, 0.5, 1.0, 3.0, np.nan])
    dof = np.full(sigma.size, nu)
    chance, words = too_good(sigma, dof)
    some, fewer = too_good(sigma, dof, remarks_only=True)
    assert fewer.tolist() == words.tolist()
    worked = sigma < SEXTANT_SIGMA_BEST_ARCMIN
    # (the chance to 1e-12: the series behind it stops when every element of its call has settled)
    assert np.allclose(some[worked], chance[worked], rtol=1e-12, atol=0) and np.isnan(some[~worked]).all()
    assert _chi_square_cdf(float(nu), nu) > 0.5


@pytest.mark.parametrize("count", [3, 4, 5, 6, 8])
def test_too_good_remark_per_sight_count(tmp_path, ts, eph, count):
    # rounds of ``count`` stars with no sextant error (skyfield's altitudes, Hs to 0.1′): whatever σ each gets,
    # the fix's remark is the rule's at its ν (count − 2), and a sextant's scatter (0.4-0.7′) gets none
    path = _log(ts, eph, tmp_path, dr_lat=LAT + 0.05, dr_lon=LON - 0.05, names=STARS[:count])
    _, fix = _only_fix(path)
    assert fix.is_fix and fix.redundant == count - 2
    warned = _chi_square_cdf(fix.redundant * (fix.sigma_arcmin / SEXTANT_SIGMA_BEST_ARCMIN) ** 2,
                             fix.redundant) < 1.0 - SCATTER_CONFIDENCE
    remarks = [w for w in fix.warnings if w.startswith("the sights agree to σ")]
    if warned:
        assert len(remarks) == 1 and "closer than sights observed at sea agree" in remarks[0]
    elif fix.sigma_arcmin < SEXTANT_READING_ARCMIN:
        assert len(remarks) == 1 and "cannot judge whether that is too good to be true" in remarks[0]
    else:
        assert not remarks
    # these rounds (σ 0.02-0.04′): three and four stars cannot judge it, five and more are warned
    assert remarks and ("cannot judge" in remarks[0]) is (count <= 4), (fix.sigma_arcmin, remarks)
    noisy = [0.5, -0.6, 0.4, -0.7, 0.6, -0.5, 0.45, -0.4][:count]
    _, rough = _only_fix(_log(ts, eph, tmp_path, dr_lat=LAT + 0.05, dr_lon=LON - 0.05, names=STARS[:count],
                              noise=noisy, name="rough.csv"))
    assert not any(w.startswith("the sights agree to σ") for w in rough.warnings), rough.warnings


def test_fix_and_days_give_the_same_too_good_remark(tmp_path, ts, eph):
    # one rule for both commands: the remark navred fix prints for a round is the one navred days prints for it
    path = _log(ts, eph, tmp_path, dr_lat=LAT + 0.05, dr_lon=LON - 0.05, names=STARS[:3])
    fix = runner.invoke(app, ["fix", str(path)])
    days = runner.invoke(app, ["days", str(path)])
    assert fix.exit_code == 0 and days.exit_code == 0, (fix.output, days.output)
    remark = next(line.split("warning: ", 1)[1] for line in fix.output.splitlines()
                  if "warning: the sights agree to σ" in line)
    assert "cannot judge whether that is too good to be true" in remark
    assert f"warning: group stars: {remark}" in days.output
