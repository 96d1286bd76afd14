"""Altitude corrections against published formulas, handbook values and skyfield."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from navred.corrections import (
    correct_altitudes,
    dip_angle_arcmin,
    dip_correction_arcmin,
    dip_short_of_horizon_arcmin,
    horizon_distance_nm,
    index_correction_arcmin,
    moon_augmentation,
    parallax_in_altitude_arcmin,
    parse_index_error_arcmin,
    refraction_angle_arcmin,
    refraction_correction_arcmin,
    semi_diameter_correction_arcmin,
)
from navred.errors import SightInputError


def bennett_published_arcmin(h_deg):
    # G. G. Bennett, J. Navigation 35 (1982): R = cot(h + 7.31/(h + 4.4)) arcmin (citation from memory)
    return 1.0 / np.tan(np.radians(h_deg + 7.31 / (h_deg + 4.4)))


def test_refraction_is_bennetts_formula_at_standard_conditions():
    heights = np.linspace(-1.0, 89.0, 500)
    assert np.allclose(refraction_angle_arcmin(heights), bennett_published_arcmin(heights), atol=1e-12)


@pytest.mark.parametrize("ha_deg, expected_arcmin, tolerance", [
    (0.0, 34.5, 0.2),   # mean refraction at the horizon, about 34.5′ (common practice)
    (10.0, 5.4, 0.1),   # about 5.3-5.4′ at 10° (common practice)
    (45.0, 1.0, 0.05),  # about 1′ at 45° (common practice)
    (90.0, 0.0, 0.01),
])
def test_refraction_matches_the_mean_refraction_table(ha_deg, expected_arcmin, tolerance):
    assert float(refraction_angle_arcmin(ha_deg)) == pytest.approx(expected_arcmin, abs=tolerance)


def test_refraction_against_skyfield():
    # Reference: skyfield.earthlib.refraction, Bennett's formula with 0.28 P / (T + 273)
    from skyfield.earthlib import refraction as sky_refraction

    for t_c, p_hpa in [(10.0, 1010.0), (-10.0, 1030.0), (30.0, 990.0)]:
        heights = np.linspace(-1.0, 89.0, 200)
        sky = sky_refraction(heights, t_c, p_hpa) * 60
        ours = refraction_angle_arcmin(heights, t_c, p_hpa)
        # the two density scalings differ by 0.07 % (0.03′ at the horizon)
        assert np.all(np.abs(ours - sky) < 0.001 * sky + 0.001)


def test_refraction_scales_with_density():
    # colder, denser air refracts more (common practice)
    assert refraction_angle_arcmin(5.0, -10.0, 1030.0) > refraction_angle_arcmin(5.0, 10.0, 1010.0) > \
        refraction_angle_arcmin(5.0, 35.0, 990.0)


def test_refraction_refuses_below_minus_one_and_above_90():
    with pytest.raises(SightInputError, match="-1° to 90°"):
        refraction_angle_arcmin(-1.5)
    with pytest.raises(SightInputError, match=r"value 2 of"):
        refraction_angle_arcmin([10.0, 91.0])


def test_dip_formula_and_rule_of_thumb():
    # dip = 1.76′ √h(m) (almanac dip table coefficient, from memory)
    heights_m = np.array([0.0, 1.0, 2.4, 10.0, 25.0])
    assert np.allclose(dip_angle_arcmin(heights_m), 1.76 * np.sqrt(heights_m))
    # rule of thumb: dip in arcminutes is close to √(height in feet) (common practice)
    feet = heights_m / 0.3048
    assert np.allclose(dip_angle_arcmin(heights_m), np.sqrt(feet), rtol=0.04)
    assert float(dip_angle_arcmin(10.0, "artificial")) == 0.0 and float(dip_angle_arcmin(10.0, "bubble")) == 0.0
    assert float(dip_angle_arcmin(10.0, "back")) == float(dip_angle_arcmin(10.0))  # the horizon behind is as low
    with pytest.raises(SightInputError, match="0-1000 m"):
        dip_angle_arcmin(-2.0)
    with pytest.raises(SightInputError, match="sea, artificial, bubble, back, waterline"):
        dip_angle_arcmin(2.0, "cloud")


def test_the_working_lines_are_the_signed_corrections():
    """Each line of the working is its correction, signed and added, from the function of the same name (the
    published formulas: dip 1.76′ √h, from memory; Bennett's refraction; an artificial horizon reads twice the
    altitude, common practice)."""
    heights_m = np.array([2.4, 10.0, 25.0])
    assert np.allclose(dip_correction_arcmin(heights_m), -1.76 * np.sqrt(heights_m))
    assert np.allclose(dip_correction_arcmin(heights_m, "back"), 1.76 * np.sqrt(heights_m))
    assert float(dip_correction_arcmin(10.0, "bubble")) == 0.0
    assert float(dip_correction_arcmin(10.0, measured_dip_arcmin=4.8)) == -4.8
    assert float(dip_correction_arcmin(10.0, "waterline", waterline_nm=1.0)) == pytest.approx(
        -float(dip_short_of_horizon_arcmin(10.0, 1.0)))
    assert float(refraction_correction_arcmin(10.0)) == pytest.approx(-bennett_published_arcmin(10.0))
    with pytest.raises(SightInputError, match="waterline's distance"):
        dip_correction_arcmin(10.0, "waterline")
    with pytest.raises(SightInputError, match="sea horizon or a back sight"):
        dip_correction_arcmin(10.0, "artificial", measured_dip_arcmin=3.0)
    chain = correct_altitudes(np.array([30.0, 60.0, 120.0]), index_error_arcmin=1.2, eye_height_m=10.0,
                              horizon=np.array(["sea", "artificial", "back"]), limb="lower", sd_arcmin=16.0)
    assert np.allclose(chain.ic_arcmin, -1.2)
    assert np.allclose(chain.dip_arcmin, [-1.76 * np.sqrt(10.0), 0.0, 1.76 * np.sqrt(10.0)])
    reading = np.array([30.0, 60.0, 120.0]) - 1.2 / 60
    assert np.allclose(chain.horizon_arcmin, [0.0, -reading[1] / 2 * 60, (180.0 - 2 * reading[2]) * 60])
    assert np.allclose(chain.refraction_arcmin, -bennett_published_arcmin(chain.ha_deg))
    assert np.allclose(chain.sd_arcmin, 16.0)
    total = chain.hs_deg * 60 + chain.ic_arcmin + chain.horizon_arcmin + chain.dip_arcmin
    assert np.allclose(total, chain.ha_deg * 60)


def test_dip_short_of_the_horizon():
    # Bowditch's table of dip of the sea short of the horizon, tan Ds = h/(6076.1 d) + d/8268 with h in
    # feet (from memory): 35 ft at 1 nm gives about 20′ (tabulated 20.6′), 10 ft at 0.5 nm about 11.5′
    feet, miles = np.array([35.0, 10.0, 100.0]), np.array([1.0, 0.5, 2.0])
    published = np.degrees(np.arctan(feet / (6076.1 * miles) + miles / 8268.0)) * 60
    assert np.allclose(dip_short_of_horizon_arcmin(feet * 0.3048, miles), published, rtol=1e-4)
    assert published[1] == pytest.approx(11.5, abs=0.2)
    # near the visible horizon (2.07 √h nm) the waterline's dip tends to the sea horizon's (within 10 %)
    height = 9.0
    far = horizon_distance_nm(height) * 0.999
    assert float(dip_short_of_horizon_arcmin(height, far)) == pytest.approx(float(dip_angle_arcmin(height)), rel=0.1)


def test_index_error_on_and_off_the_arc():
    # ON the arc the sextant reads high, so the correction is negative (common practice)
    assert parse_index_error_arcmin("2.1 on") == 2.1
    assert parse_index_error_arcmin("1.5 OFF") == -1.5
    assert parse_index_error_arcmin("1.5′ off the arc") == -1.5
    assert float(index_correction_arcmin(parse_index_error_arcmin("2.1 on"))) == -2.1
    assert list(parse_index_error_arcmin(["0.4 on", 1.0])) == [0.4, 1.0]
    for bad in ("two on", "-1 on", "45"):
        with pytest.raises(SightInputError):
            parse_index_error_arcmin(bad)


def test_semi_diameter_signs():
    assert float(semi_diameter_correction_arcmin(16.0, "lower")) == 16.0
    assert float(semi_diameter_correction_arcmin(16.0, "UL")) == -16.0
    assert float(semi_diameter_correction_arcmin(16.0, "centre")) == 0.0
    with pytest.raises(SightInputError, match="lower, upper or centre"):
        semi_diameter_correction_arcmin(16.0, "middle")


def test_moon_augmentation_and_parallax_against_the_spherical_formulas():
    # augmentation ≈ 1 + sin HP sin h and parallax sin p = sin HP cos h on a sphere (common practice);
    # the first-order augmentation falls short of the exact one by up to sin²HP/2 ≈ 3e-4 (0.005′ of SD)
    h = np.linspace(0.0, 90.0, 19)
    assert np.allclose(moon_augmentation(h, 57.0, 0.0, 90.0),
                       1 + np.sin(np.radians(57 / 60)) * np.sin(np.radians(h)), atol=3.5e-4)
    spherical = np.degrees(np.arcsin(np.sin(np.radians(57 / 60)) * np.cos(np.radians(h)))) * 60
    # at the equator the WGS 84 radius is the equatorial one: exact agreement
    assert np.allclose(parallax_in_altitude_arcmin(h, 57.0, 0.0, 90.0), spherical, atol=0.002)
    # at 60° N the radius is 0.25 % shorter and the vertical is tilted 10′ from the radius:
    # first order p = HP ρ (cos h + (φ − φ′) sin h cos Zn) (common practice; Explanatory Supplement)
    # (below 85°: at the zenith the geocentric place passes over to the other azimuth)
    h = h[h <= 85.0]
    rho, tilt = 0.99749, np.radians(10.0 / 60)  # WGS 84 at 60° (from memory)
    first_order = 57.0 * rho * (np.cos(np.radians(h)) + tilt * np.sin(np.radians(h)))
    assert np.allclose(parallax_in_altitude_arcmin(h, 57.0, 60.0, 0.0), first_order, atol=0.01)


def test_the_chain_returns_every_line():
    result = correct_altitudes(np.array([30.0, 0.5, 95.0]), index_error_arcmin=2.0, eye_height_m=4.0,
                               limb="lower", sd_arcmin=16.0, hp_arcmin=0.15)
    # every correction is signed and added: Hs + IC + dip = Ha, Ha + R + SD + PA = Ho
    assert result.ic_arcmin[0] == -2.0
    assert result.dip_arcmin[0] == pytest.approx(-1.76 * 2.0)
    assert result.refraction_arcmin[0] < 0 and result.sd_arcmin[0] == 16.0 and result.parallax_arcmin[0] > 0
    assert result.ha_deg[0] == pytest.approx(30.0 + (-2.0 - 3.52) / 60)
    total = (result.ic_arcmin + result.horizon_arcmin + result.dip_arcmin + result.refraction_arcmin
             + result.sd_arcmin + result.parallax_arcmin + result.phase_arcmin)
    assert result.ho_deg[0] == pytest.approx(30.0 + total[0] / 60, abs=1e-12)
    assert "low sight" in result.warning[1]
    assert "outside the readings" in result.error[2] and np.isnan(result.ho_deg[2])
    assert result.error_column[2] == "hs"
    with pytest.raises(SightInputError, match=r"value 3 of"):
        result.raise_errors()


@given(st.floats(min_value=1.0, max_value=89.0), st.floats(min_value=0.0, max_value=40.0))
def test_chain_scalar_equals_array(hs, eye):
    one = correct_altitudes(hs, eye_height_m=eye)
    many = correct_altitudes(np.array([hs, hs]), eye_height_m=eye)
    assert np.all(many.ho_deg == one.ho_deg)


def test_an_index_error_over_ten_minutes_is_used_and_warned_about():
    # common practice: a sextant's index error is adjusted out when over a few minutes, so 14′ ("14 on", a slip
    # for 1.4) is read as written, used, and warned about by its value; 10′ itself and less pass without a word
    ie = np.array([parse_index_error_arcmin(v) for v in ("14 on", "12.5 off", "10 on", "1.4 on", "-10")])
    result = correct_altitudes(np.full(5, 42.0), index_error_arcmin=ie, eye_height_m=3.0)
    assert result.ic_arcmin.tolist() == [-14.0, 12.5, -10.0, -1.4, 10.0]  # the correction is the one written
    assert "index error 14.0′ on the arc is unusually large (over 10′" in result.warning[0]
    assert "index error 12.5′ off the arc is unusually large" in result.warning[1]
    assert result.warning[2:].tolist() == ["", "", ""]
    assert result.error.tolist() == [""] * 5 and np.isfinite(result.ho_deg).all()
