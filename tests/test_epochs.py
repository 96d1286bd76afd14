"""Mean places between epochs, and the facts of precession."""

from __future__ import annotations

import math

import erfa
import numpy as np
import pytest

from navred.epochs import mean_place
from navred.errors import NavredError


def test_equatorial_star_at_the_equinox_gains_about_3_1_seconds_of_ra_a_year():
    # The RA of a star on the equator at the equinox grows by m = 3.075 s a year (Lieske 1977
    # precession constant, from memory). The brief's "about 3.3 s" is the general precession in
    # longitude, 50.3″ = 3.35 s a year, which the same star gains in ecliptic longitude
    # (common practice): the check keeps both within 3.0-3.4 s.
    ra0, _ = mean_place(0.0, 0.0, "J2000", "J2000")
    ra1, _ = mean_place(0.0, 0.0, "J2000", "J2100")
    per_year_s = float(ra1 - ra0) * 3600 / 100
    assert per_year_s == pytest.approx(3.075, abs=0.01)
    assert 3.0 < per_year_s < 3.4


def test_general_precession_turns_the_pole_in_about_26000_years():
    # precession turns the pole once in about 26,000 years (common practice): the ecliptic
    # longitude of a fixed direction grows by about 50.3″ a year
    ecl0 = erfa.ecm06(*erfa.epj2jd(2000.0))
    ecl1 = erfa.ecm06(*erfa.epj2jd(2100.0))
    vector = erfa.s2c(*np.radians([0.0, 0.0]))
    lon0 = math.atan2(*(ecl0 @ vector)[[1, 0]])
    lon1 = math.atan2(*(ecl1 @ vector)[[1, 0]])
    per_year_arcsec = math.degrees(lon1 - lon0) * 3600 / 100
    assert 360 * 3600 / per_year_arcsec == pytest.approx(26000, rel=0.02)
    # and navred's own precession moves the equator's pole by the same 20″ a year in Dec
    # (n = 20.04″/yr, from memory): a star at RA 0h gains it in declination
    _, dec1 = mean_place(0.0, 0.0, "J2000", "J2001")
    assert float(dec1) * 3600 == pytest.approx(20.04, abs=0.05)


@pytest.mark.parametrize("year", [1950.0, 2026.0, 2100.0, 2500.0])
def test_north_ecliptic_pole_stays_at_18h_and_south_at_6h(year):
    # the ecliptic poles lie at RA 18 h (north) and 6 h (south) in the equinox of any date
    # (common practice): the ecliptic pole of the epoch, taken back to J2000, precessed forward
    ecm = erfa.ecm06(*erfa.epj2jd(year))
    for sign, expected_hours in ((1, 18.0), (-1, 6.0)):
        pole_icrs = sign * ecm[2]
        ra_rad, dec_rad = erfa.c2s(erfa.bp06(*erfa.epj2jd(2000.0))[0] @ pole_icrs)
        ra, _ = mean_place(np.degrees(erfa.anp(ra_rad)) / 15.0, np.degrees(dec_rad), "J2000", f"J{year}")
        assert float(ra) == pytest.approx(expected_hours, abs=1e-6)


def test_b1950_to_j2000_against_pyephem():
    # Reference: PyEphem precession between equinoxes (independent code). FK4 -> FK5 adds the
    # E-terms and the equinox correction, so agreement is to about 1″; check within 0.05′.
    import ephem

    for ra_h, dec_d in [(5.0, 20.0), (18.6, 38.7), (12.0, -60.0), (0.1, 0.0)]:
        ours_ra, ours_dec = mean_place(ra_h, dec_d, "B1950", "J2000")
        old = ephem.Equatorial(math.radians(ra_h * 15), math.radians(dec_d), epoch=ephem.B1950)
        new = ephem.Equatorial(old, epoch=ephem.J2000)
        cos_dec = math.cos(new.dec)
        assert abs(((float(ours_ra) * 15 - math.degrees(new.ra) + 180) % 360 - 180) * cos_dec) * 60 < 0.05
        assert abs(float(ours_dec) - math.degrees(new.dec)) * 60 < 0.05
        back_ra, back_dec = mean_place(ours_ra, ours_dec, "J2000", "B1950")
        assert float(back_ra) == pytest.approx(ra_h, abs=1e-7)
        assert float(back_dec) == pytest.approx(dec_d, abs=1e-6)


def test_mean_of_date_against_pyephem():
    # Reference: PyEphem precession J2000 -> mean equinox of 2030 (its own IAU 1976 model)
    import ephem

    ours_ra, ours_dec = mean_place(6.75, -16.7, "J2000", "date", utc="2030-01-01T12:00Z")
    old = ephem.Equatorial(math.radians(6.75 * 15), math.radians(-16.7), epoch=ephem.J2000)
    new = ephem.Equatorial(old, epoch="2030/1/1 12:00")
    assert abs(float(ours_ra) * 15 - math.degrees(new.ra)) * 60 < 0.02
    assert abs(float(ours_dec) - math.degrees(new.dec)) * 60 < 0.02


def test_bad_epochs_are_refused():
    with pytest.raises(NavredError, match="unknown epoch"):
        mean_place(1.0, 1.0, "J20X0", "J2000")
    with pytest.raises(NavredError, match="needs the instant"):
        mean_place(1.0, 1.0, "J2000", "date")
    with pytest.raises(NavredError, match="-90 to 90"):
        mean_place(1.0, 100.0)
