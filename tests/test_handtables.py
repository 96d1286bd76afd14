"""The printed tables' numbers: each against its published formula or an independent reference, and the
interpolation a navigator does between printed rows."""

from __future__ import annotations

import numpy as np
import pytest

from navred.corrections import bennett_refraction_arcmin, parallax_in_altitude_arcmin
from navred.errors import NavredError
from navred.handtables import (
    POLARIS_BLOCK_DAYS,
    dip_rows,
    hourly_table,
    hourly_value_at,
    interpolate_printed,
    moon_augmentation_grid,
    moon_parallax_grid,
    moon_sd_rows,
    polaris_latitude_from_table,
    polaris_table,
    printed_deg,
    refraction_factor_grid,
    refraction_rows,
    star_blocks,
)
from tests.conftest import ARCMIN, frozen


def test_printed_values_are_rounded_to_the_tenth_of_a_minute():
    values = printed_deg(np.array([12.3456789, -0.0008, 359.99999]))
    assert np.allclose(values * 600, np.round(values * 600))
    assert abs(values[0] - 12.3456789) * 60 <= 0.05


def test_interpolation_rule_wraps_the_gha_and_keeps_the_dec_signed():
    assert float(interpolate_printed(359.0, 14.0, 0.2, gha=True)) == pytest.approx(2.0)
    assert float(interpolate_printed(-0.5, 0.5, 0.25)) == pytest.approx(-0.25)
    table = hourly_table("2025-06-10", 1, bodies=("Sun",))
    hours = table.hours
    middle = hours[3] + np.timedelta64(30, "m")
    assert float(hourly_value_at(table, "Sun", np.array([middle]))[0]) == pytest.approx(
        float(interpolate_printed(table.gha_deg[0, 3], table.gha_deg[0, 4], 0.5, gha=True)))
    with pytest.raises(NavredError, match="outside the hourly table"):
        hourly_value_at(table, "Sun", np.array([hours[-1] + np.timedelta64(1, "h")]))


def test_dip_table_follows_its_formula():
    """The dip coefficient 1.76′ √(m) (0.97′ √(ft)) printed with the nautical almanac's dip table (from memory)."""
    metres, dip_m, feet, dip_ft = dip_rows()
    assert np.abs(dip_m - 1.76 * np.sqrt(metres)).max() <= 0.05
    assert np.abs(dip_ft - 0.97 * np.sqrt(feet)).max() <= 0.06  # 0.97 is the metres coefficient rounded


def test_refraction_rows_interpolate_within_three_hundredths_of_bennett():
    """Bennett's formula (Journal of Navigation 35, 1982; from memory) between printed rows: the interpolation
    adds at most 0.03′ to the printed rounding, 0.025′ from 1° up."""
    altitudes, printed = refraction_rows()
    fine = np.linspace(0.0, 90.0, 9001)
    exact_rows = bennett_refraction_arcmin(altitudes, 10.0, 1010.0)
    assert np.abs(printed - exact_rows).max() <= 0.05
    between = np.abs(np.interp(fine, altitudes, exact_rows) - bennett_refraction_arcmin(fine, 10.0, 1010.0))
    assert between.max() <= 0.031 and between[fine >= 1.0].max() <= 0.025


def test_refraction_factor_is_the_density_ratio():
    temperatures, pressures, factor = refraction_factor_grid()
    k = np.argmin(np.abs(temperatures - 10.0))
    j = np.argmin(np.abs(pressures - 1010.0))
    assert factor[k, j] == 1.0
    # the factor times the standard refraction is Bennett's refraction in that air, within the rounding
    for t, p in ((-20.0, 1040.0), (40.0, 960.0)):
        i, m = np.flatnonzero(temperatures == t)[0], np.flatnonzero(pressures == p)[0]
        assert abs(factor[i, m] * bennett_refraction_arcmin(10.0, 10.0, 1010.0)
                   - bennett_refraction_arcmin(10.0, t, p)) <= 0.03


def test_moon_tables_against_the_spherical_formulas():
    """sin PA = sin HP cos h and SD = 0.2725 HP (common practice), the growth of the SD ≈ SD sin HP sin h."""
    altitudes, hps, parallax = moon_parallax_grid()
    h, hp = np.meshgrid(altitudes, hps, indexing="ij")
    spherical = np.degrees(np.arcsin(np.sin(np.radians(hp / 60.0)) * np.cos(np.radians(h)))) * 60.0
    assert np.abs(parallax - spherical).max() <= 0.06
    # linear interpolation between rows stays within 0.03′ of the rigorous value (plus the printed rounding)
    mid = altitudes[:-1] + 1.5
    between = (parallax_in_altitude_arcmin(altitudes[:-1], 57.0, 0.0, 90.0)
               + parallax_in_altitude_arcmin(altitudes[1:], 57.0, 0.0, 90.0)) / 2
    assert np.abs(between - parallax_in_altitude_arcmin(mid, 57.0, 0.0, 90.0)).max() <= 0.03
    sd_hp, sd = moon_sd_rows()
    assert np.abs(sd - 0.2725 * sd_hp).max() <= 0.06
    aug_h, aug_hp, growth = moon_augmentation_grid()
    h, hp = np.meshgrid(aug_h, aug_hp, indexing="ij")
    approx = 0.2725 * hp * np.sin(np.radians(hp / 60.0)) * np.sin(np.radians(h))
    assert np.abs(growth - approx).max() <= 0.06


def test_star_blocks_cover_every_date_once():
    blocks = star_blocks("2025-06-10", 8)
    dates = [d for b in blocks for d in np.arange(b.first, b.last + np.timedelta64(1, "D"))]
    assert dates == list(np.arange(np.datetime64("2025-06-10"), np.datetime64("2025-06-18")))
    assert all(b.first.astype("datetime64[ns]") <= b.epoch <= (b.last + 1).astype("datetime64[ns]") for b in blocks)
    with pytest.raises(NavredError, match="1 to 62 days"):
        star_blocks("2025-06-10", 70)


def test_polaris_table_gives_the_latitude_within_fifteen_hundredths(ts, eph):
    """Reference: skyfield's topocentric altitude of Polaris (airless, at the true position) as Ho, at 300
    random places (0-68° N) and instants within the table's ten days: latitude = Ho + the two printed terms
    (interpolated as the page says) within 0.15′ of the true latitude."""
    from skyfield.api import wgs84

    from tests.conftest import sky_star

    epoch = np.datetime64("2025-06-15", "ns")
    table = polaris_table(epoch)
    rng = np.random.default_rng(8)
    lat = rng.uniform(0.0, 68.0, 300)
    lon = rng.uniform(-180.0, 180.0, 300)
    seconds = rng.uniform(-POLARIS_BLOCK_DAYS / 2, POLARIS_BLOCK_DAYS / 2, 300) * 86400.0
    when = epoch + (seconds * 1e9).astype("timedelta64[ns]")

    def altitudes():
        import pandas as pd

        out = []
        polaris = sky_star(ts, "Polaris")
        for la, lo, w in zip(lat, lon, when):
            t = ts.from_datetime(pd.Timestamp(w).tz_localize("UTC").round("us").to_pydatetime())
            place = (eph["earth"] + wgs84.latlon(la, lo)).at(t)
            alt, _, _ = place.observe(polaris).apparent().altaz()
            out += [alt.degrees, (t.gast * 15.0 + lo) % 360.0]
        return out

    values = np.asarray(frozen(f"polaris-table|{int(epoch.astype(np.int64))}|300", altitudes)).reshape(-1, 2)
    errors = [abs(polaris_latitude_from_table(table, ho, lha) - la) / ARCMIN for (ho, lha), la in zip(values, lat)]
    assert max(errors) <= 0.15, max(errors)
    assert max(errors) > 0.02


@pytest.mark.parametrize("utc", ["2026-03-20T18:42:10Z", "2025-11-02T05:59:59Z", "2027-01-14T00:00:00Z"])
def test_v_and_d_against_skyfields_hourly_values(ts, eph, sky_bodies, utc):
    """v and d of the Sun, Moon and planets over the hour of UTC that holds the instant, against skyfield's
    apparent places (same DE421 file, independent reduction) at the two whole hours: v the excess of the
    hour's change of GHA over the increments table's rate (15° 00.0′, the Moon 14° 19.0′: common practice),
    d the hour's change of Dec. Within 0.01′; a star and Aries have neither."""
    from navred.handtables import almanac_at

    names = ["Sun", "Moon", "Venus", "Mars", "Jupiter", "Saturn"]
    stamp = np.datetime64(utc[:-1], "ns")
    hour = stamp.astype("datetime64[h]")
    when = [hour.astype(object), (hour + np.timedelta64(1, "h")).astype(object)]
    t = ts.utc(*zip(*[(w.year, w.month, w.day, w.hour, w.minute, w.second) for w in when]))
    ours = almanac_at(names + ["Vega", "Aries"], utc, dut1_s=float(t.dut1[0]))
    for k, name in enumerate(names):
        def hourly(name=name):
            ra, dec, _ = eph["earth"].at(t).observe(sky_bodies[name]).apparent().radec(epoch="date")
            return [*((t.gast - ra.hours) * 15.0), *dec.degrees]
        gha0, gha1, dec0, dec1 = frozen(f"hourly v d {name} {utc}", hourly)
        rate = 14.0 + 19.0 / 60.0 if name == "Moon" else 15.0  # common practice: the increments tables' rates
        sky_v = ((gha1 - gha0 - rate + 180.0) % 360.0 - 180.0) / ARCMIN
        sky_d = (dec1 - dec0) / ARCMIN
        assert ours.v_arcmin[k] == pytest.approx(sky_v, abs=0.01), name
        assert ours.d_arcmin[k] == pytest.approx(sky_d, abs=0.01), name
    assert np.isnan(ours.v_arcmin[-2:]).all() and np.isnan(ours.d_arcmin[-2:]).all()
    # the Moon's v is some minutes (its GHA gains 14° 19′ to 14° 37′ an hour), the planets' a few tenths
    assert 0.0 < ours.v_arcmin[1] < 20.0
    assert ours.body[-1] == "Aries" and ours.gha_deg[-1] == pytest.approx(ours.gha_aries_deg)
    assert ours.dec_deg[-1] == 0.0 and ours.sha_deg[-1] == 0.0


def test_aries_is_a_body_of_the_almanac_and_its_gha_is_skyfields(ts):
    """Reference: skyfield's t.gast (apparent sidereal time) is GHA Aries."""
    from navred.handtables import almanac_at

    t = ts.utc(2026, 3, 20, 18, 42, 10)
    for name in ("Aries", "aries", "First Point of Aries"):
        ours = almanac_at([name], "2026-03-20T18:42:10Z", dut1_s=float(t.dut1))
        assert ours.body == ("Aries",)
        assert abs(ours.gha_deg[0] - float(t.gast) * 15.0) / ARCMIN < 0.001
