"""Weights from the log: a sight's own σ (the log's sigma column) weighs it in the fix by 1/σ².

The reference is weighted least squares worked in the test itself from the published normal equations
(Gauss; e.g. P. D. Ghilani, *Adjustment Computations*, 6th ed., ch. 10 and 11; from memory): the
linearised altitude equations a = A x + e, A's rows (cos Zn, sin Zn) (the Marcq St Hilaire method: one
arcminute of altitude is one nautical mile along the azimuth; Bowditch, NGA Pub. No. 9, ch. 20), solved by
(AᵀWA) x = AᵀW a and iterated until the step vanishes; Hc and Zn by the sight reduction formula
(sin Hc = sin φ sin δ + cos φ cos δ cos LHA; Bowditch ch. 20). The unit-weight variance σ̂² = rᵀWr / (n − 2),
the covariance σ̂²(AᵀWA)⁻¹, and the 95 % ellipse √(2 F(2, n − 2; 0.95)) times its axes (scipy's F quantile);
the blunder test's externally studentized residuals of the whitened equations against scipy's Student's t
with Bonferroni's correction (Belsley, Kuh and Welsch, *Regression Diagnostics*, 1980; from memory).
Each case (sight count, weights) is checked on its own.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.errors import NavredError
from navred.fix import fix_from_sights
from navred.fixstats import BLUNDER_ALPHA, BLUNDER_MIN_ARCMIN

UTC = np.datetime64("2026-03-26T19:45:00", "ns")
TRUE_LAT, TRUE_LON = 43.30, -13.20


def _hc_zn(lat, lon, gha, dec):
    """The sight reduction formula (Bowditch ch. 20), worked in the test."""
    phi, delta = np.radians(lat), np.radians(dec)
    lha = np.radians(gha + lon)
    sin_h = np.sin(phi) * np.sin(delta) + np.cos(phi) * np.cos(delta) * np.cos(lha)
    hc = np.degrees(np.arcsin(sin_h))
    zn = np.degrees(np.arctan2(-np.cos(delta) * np.sin(lha),
                               np.sin(delta) * np.cos(phi) - np.cos(delta) * np.sin(phi) * np.cos(lha))) % 360.0
    return hc, zn


def _bodies(n):
    """n geographical positions round the horizon at altitudes 20-65° (invented; the test's own geometry)."""
    azimuths = np.linspace(10.0, 370.0, n, endpoint=False) % 360.0
    altitudes = 20.0 + 45.0 * (np.arange(n) % 4) / 3.0
    # the body's GP from the observer: along the azimuth, 90° − altitude away (the navigational triangle)
    p, z = np.radians(90.0 - altitudes), np.radians(azimuths)
    phi = np.radians(TRUE_LAT)
    dec = np.degrees(np.arcsin(np.sin(phi) * np.cos(p) + np.cos(phi) * np.sin(p) * np.cos(z)))
    dlon = np.degrees(np.arctan2(np.sin(z) * np.sin(p) * np.cos(phi), np.cos(p) - np.sin(phi) * np.sin(np.radians(dec))))
    gp_lon = TRUE_LON + dlon
    return (-gp_lon) % 360.0, dec


def reference_wls(gha, dec, ho, weight, lat, lon):
    """Weighted least squares from the normal equations, iterated in the test: (lat, lon, residuals ′, A, W)."""
    w = np.diag(weight)
    for _ in range(50):
        hc, zn = _hc_zn(lat, lon, gha, dec)
        a = (ho - hc) * 60.0
        design = np.stack([np.cos(np.radians(zn)), np.sin(np.radians(zn))], axis=1)
        north, east = np.linalg.solve(design.T @ w @ design, design.T @ w @ a)
        lat, lon = lat + north / 60.0, lon + east / 60.0 / np.cos(np.radians(lat))
        if np.hypot(north, east) < 1e-9:
            break
    hc, zn = _hc_zn(lat, lon, gha, dec)
    design = np.stack([np.cos(np.radians(zn)), np.sin(np.radians(zn))], axis=1)
    return lat, lon, (ho - hc) * 60.0, design, w


CASES = {  # sight count, each sight's σ (′; NaN: none given), the errors planted (′)
    "4 sights, one low sight at 3′": (4, [np.nan, np.nan, 3.0, np.nan], [0.4, -0.3, 2.5, 0.2]),
    "6 sights, the Moon at 2′ and a doubtful horizon at 1.5′": (6, [2.0, np.nan, np.nan, 1.5, np.nan, np.nan],
                                                                [1.2, 0.3, -0.4, -1.0, 0.5, -0.2]),
    "9 sights, every one given": (9, [0.5, 0.8, 1.0, 1.2, 2.0, 0.7, 3.0, 1.0, 0.6],
                                  [0.3, -0.5, 0.8, -1.1, 1.9, 0.4, -2.6, 0.2, -0.4]),
}


def _sights(n, errors):
    gha, dec = _bodies(n)
    hc, _ = _hc_zn(TRUE_LAT, TRUE_LON, gha, dec)
    return gha, dec, hc + np.asarray(errors) / 60.0


@pytest.mark.parametrize("case", list(CASES))
def test_the_weighted_fix_is_the_weighted_least_squares_solution(case):
    n, sigma, errors = CASES[case]
    gha, dec, ho = _sights(n, errors)
    sigma = np.asarray(sigma, dtype=float)
    weight = np.where(np.isnan(sigma), 1.0, 1.0 / sigma**2)  # 1′ for a sight the log gives no σ
    fix = fix_from_sights(gha, dec, ho, np.full(n, UTC), TRUE_LAT + 0.1, TRUE_LON - 0.15, sigma_arcmin=sigma)
    lat, lon, residual, design, w = reference_wls(gha, dec, ho, weight, TRUE_LAT + 0.1, TRUE_LON - 0.15)
    # the position: the normal equations' solution (within 0.001 nm)
    assert fix.lat_deg == pytest.approx(lat, abs=0.001 / 60)
    assert fix.lon_deg == pytest.approx(lon, abs=0.001 / 60 / np.cos(np.radians(lat)))
    assert np.allclose(fix.residual_arcmin, residual, atol=0.002)
    assert np.allclose(fix.weight, weight) and fix.weighted
    # σ of a sight of unit weight, rᵀWr / (n − 2); each sight's own, σ/√w
    s2 = float(residual @ w @ residual) / (n - 2)
    assert fix.sigma_arcmin == pytest.approx(np.sqrt(s2), rel=1e-3)
    assert np.allclose(fix.sight_sigma_arcmin, np.sqrt(s2 / weight), rtol=1e-3)
    # the 95 % ellipse: σ̂²(AᵀWA)⁻¹ scaled by √(2 F(2, n − 2)) (scipy)
    covariance = s2 * np.linalg.inv(design.T @ w @ design)
    # scipy.stats imported where used: it takes most of a second to import
    from scipy import stats as sps
    scale = np.sqrt(2.0 * sps.f.ppf(0.95, 2, n - 2))
    axes = scale * np.sqrt(np.linalg.eigvalsh(covariance))
    assert fix.ellipse_semi_major_nm == pytest.approx(axes[1], rel=2e-3)
    assert fix.ellipse_semi_minor_nm == pytest.approx(axes[0], rel=2e-3)
    assert np.allclose(fix.covariance_nm2, covariance, rtol=2e-3, atol=1e-6)


def _reference_flags(residual, design, weight):
    """The blunder test of the whitened equations, in the test: each sight's externally studentized residual
    against Student's t(n − 3) at 1 − α/(2n), and its line at least BLUNDER_MIN_ARCMIN from the fix of the
    others."""
    root = np.sqrt(weight)
    a = design * root[:, None]
    r = residual * root
    n = r.size
    hat = np.diag(a @ np.linalg.inv(a.T @ a) @ a.T)
    deleted = (r @ r - r**2 / (1 - hat)) / (n - 3)
    t = np.abs(r) / np.sqrt(deleted * (1 - hat))
    from scipy import stats as sps
    critical = sps.t.ppf(1 - BLUNDER_ALPHA / (2 * n), n - 3)
    off = np.abs(residual) / (1 - hat)
    return (t > critical) & (off > BLUNDER_MIN_ARCMIN)


@pytest.mark.parametrize("sigma_of_the_bad_one", [np.nan, 1.0, 6.0])
def test_the_blunder_test_weighs_each_sight_by_its_sigma(sigma_of_the_bad_one):
    """A 5′ slip on one of seven sights: flagged as a sight as good as any (no σ, or 1′), not flagged when the
    log says that sight is good to 6′ only; navred flags exactly what the test's own whitened statistic does."""
    errors = [0.3, -0.2, 5.0, 0.1, -0.4, 0.2, -0.1]
    gha, dec, ho = _sights(7, errors)
    sigma = np.array([np.nan, np.nan, sigma_of_the_bad_one, np.nan, np.nan, np.nan, np.nan])
    weight = np.where(np.isnan(sigma), 1.0, 1.0 / sigma**2)
    fix = fix_from_sights(gha, dec, ho, np.full(7, UTC), TRUE_LAT, TRUE_LON, sigma_arcmin=sigma)
    lat, lon, residual, design, _ = reference_wls(gha, dec, ho, weight, TRUE_LAT, TRUE_LON)
    expected = _reference_flags(residual, design, weight)
    assert expected[2] == (sigma_of_the_bad_one != 6.0)  # the reference's own verdict, per case
    flagged = fix.outlier if fix.all_sights is None else fix.all_sights.outlier
    assert flagged.tolist() == expected.tolist()


def test_a_log_without_sigma_gives_the_same_fix_bit_for_bit():
    """No σ, a σ column left blank, and every σ 1′ give the same fix to the last bit (the weight is 1)."""
    n, _, errors = CASES["6 sights, the Moon at 2′ and a doubtful horizon at 1.5′"]
    gha, dec, ho = _sights(n, errors)
    args = (gha, dec, ho, np.full(n, UTC), TRUE_LAT + 0.1, TRUE_LON - 0.15)
    plain = fix_from_sights(*args)
    for sigma in (np.full(n, np.nan), np.ones(n)):
        other = fix_from_sights(*args, sigma_arcmin=sigma)
        assert (other.lat_deg, other.lon_deg, other.sigma_arcmin) == (plain.lat_deg, plain.lon_deg, plain.sigma_arcmin)
        assert (other.ellipse_semi_major_nm, other.ellipse_semi_minor_nm) == (plain.ellipse_semi_major_nm,
                                                                              plain.ellipse_semi_minor_nm)
        assert np.array_equal(other.residual_arcmin, plain.residual_arcmin) and not other.weighted
        assert other.sigma_source == plain.sigma_source


def test_a_sigma_that_is_not_positive_is_refused():
    gha, dec, ho = _sights(4, [0, 0, 0, 0])
    with pytest.raises(NavredError, match=r"positive number of arcminutes; not so for 3 \(0′\)"):
        fix_from_sights(gha, dec, ho, np.full(4, UTC), TRUE_LAT, TRUE_LON, sigma_arcmin=[np.nan, 1.0, 0.0, 1.0])


def _demo_log(tmp_path, sigma=None, name="weighted.csv"):
    frame = pd.read_csv("sample_sights/demo_sights.csv")
    if sigma is not None:
        frame["sigma"] = sigma
    path = tmp_path / name
    frame.to_csv(path, index=False)
    return path


def test_the_log_column_weighs_the_fix_everywhere(tmp_path):
    """The demo with Sirius (row 7, the lowest star) given σ 2′ and Regulus (row 11) 1.5′: the voyage's fix
    is the weighted one fix_from_sights gives; the Working sheet shows each sight's σ given, weight and σ
    taken; the Fixes sheet and `navred fix` say the sights are weighted; without the column the workbook is
    the same as with it left blank."""
    from navred.jobs.voyage import process_log

    sigma = [""] * 11
    sigma[5], sigma[9] = "2.0", "1.5"
    path = _demo_log(tmp_path, sigma)
    voyage = process_log(path)
    group = next(g for g in voyage.groups if g.name == "evening-stars")
    weights = group.fix.weight
    assert weights.tolist() == [0.25, 1.0, 1.0, 1.0, 1.0 / 1.5**2, 1.0]
    plain = next(g for g in process_log(_demo_log(tmp_path, name="plain.csv")).groups if g.name == "evening-stars").fix
    blank = next(g for g in process_log(_demo_log(tmp_path, [""] * 11, "blank.csv")).groups if g.name == "evening-stars").fix
    assert (blank.lat_deg, blank.lon_deg, blank.sigma_arcmin) == (plain.lat_deg, plain.lon_deg, plain.sigma_arcmin)
    assert (group.fix.lat_deg, group.fix.lon_deg) != (plain.lat_deg, plain.lon_deg)
    assert "weighted by the σ the log gives them" in group.fix.sigma_source

    runner = CliRunner()
    result = runner.invoke(app, ["fix", str(path), "--group", "evening-stars"])
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    assert any("σ taken" in x for x in lines), result.stdout
    sirius = next(x for x in lines if x.strip().startswith("row 7 "))
    assert "weighted by its σ in the log" in sirius
    assert f"{2.0 * group.fix.sigma_arcmin:.2f}′" in sirius  # σ 2′: twice a sight of weight 1
    assert "weighted by the σ the log gives them" in result.stdout
    import io

    table = pd.read_csv(io.StringIO(runner.invoke(app, ["fix", str(path), "--csv"]).stdout)).set_index("fix_group")
    assert table.loc["evening-stars", "weighted"] == "row 7 row 11"  # the rows the log weighs (σ not 1′)
    assert table.loc["evening-stars", "sigma_arcmin"] == pytest.approx(group.fix.sigma_arcmin)

    book = tmp_path / "v.xlsx"
    assert runner.invoke(app, ["workbook", str(path), "-o", str(book)]).exit_code == 0
    working = pd.read_excel(book, sheet_name="Working").set_index("row in log")
    assert working.loc[7, "sight σ given (′)"] == 2.0 and working.loc[8, "sight σ given (′)"] == "not given: as any sight"
    assert working.loc[7, "weight in the fix"] == pytest.approx(0.25)
    assert working.loc[7, "σ the fix takes (′)"] == pytest.approx(2.0 * group.fix.sigma_arcmin)
    fixes = pd.read_excel(book, sheet_name="Fixes").set_index("fix group")
    assert "weighted by the σ the log gives them" in fixes.loc["evening-stars", "σ from"]
    assert "weighted" not in fixes.loc["sun-run-sun", "σ from"]


def test_a_weighted_line_of_position_is_the_weighted_mean_line():
    """Three lines whose azimuths lie within 12° (no fix, one line): the combined line lies p = Σ w a c / Σ w c²
    from the DR across the weighted axial mean azimuth Z (c = cos(Zn − Z)), its σ² = Σ w r² / (n − 1) and its 95 %
    band t(0.975, n − 1) σ / √(Σ w c²) (scipy's t), all worked here from the sight reduction formula at the DR."""
    gha, dec = _bodies(60)  # bodies every 6° of azimuth round the horizon: three neighbours
    gha, dec = gha[[0, 1, 2]], dec[[0, 1, 2]]
    hc_true, _ = _hc_zn(TRUE_LAT, TRUE_LON, gha, dec)
    ho = hc_true + np.array([0.6, -0.5, 0.9]) / 60.0
    sigma = np.array([np.nan, 2.0, 0.8])
    weight = np.where(np.isnan(sigma), 1.0, 1.0 / sigma**2)
    dr_lat, dr_lon = TRUE_LAT + 0.05, TRUE_LON + 0.08
    fix = fix_from_sights(gha, dec, ho, np.full(3, UTC), dr_lat, dr_lon, sigma_arcmin=sigma)
    assert not fix.is_fix
    hc, zn = _hc_zn(dr_lat, dr_lon, gha, dec)
    a = (ho - hc) * 60.0
    doubled = np.radians(2 * zn)
    z = np.degrees(np.arctan2(np.sum(weight * np.sin(doubled)), np.sum(weight * np.cos(doubled)))) / 2.0
    c = np.cos(np.radians(zn - z))
    p = np.sum(weight * a * c) / np.sum(weight * c**2)
    if p < 0:
        p, z = -p, z + 180.0
    assert fix.line_offset_nm == pytest.approx(p, abs=0.002)
    assert (fix.line_toward_deg - z % 360.0 + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=0.01)
    r = a - p * np.cos(np.radians(zn - z))
    s = np.sqrt(np.sum(weight * r**2) / 2)
    assert fix.sigma_arcmin == pytest.approx(s, rel=1e-3)
    from scipy import stats as sps
    half = sps.t.ppf(0.975, 2) * s / np.sqrt(np.sum(weight * c**2))
    assert fix.ellipse_semi_minor_nm == pytest.approx(half, rel=1e-3)
