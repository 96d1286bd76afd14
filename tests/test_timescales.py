"""Time scales: reading instants, leap seconds, TT, UT1 and where UT1 came from."""

from __future__ import annotations

import datetime as dt
import warnings

import numpy as np
import pandas as pd
import pytest

from navred import timescales
from navred.errors import NavredWarning, TimeInputError
from navred.timescales import instants, utc_julian_date


def total_jd(a, b):
    return np.asarray(a) + np.asarray(b)


def test_j2000_is_2000_january_1_12h_tt():
    # J2000.0 = 2000 January 1, 12 h TT (common practice; IAU definition); TT - UTC was 64.184 s
    inst = instants("2000-01-01T11:58:55.816Z")
    assert float(inst.tt1 - 2451545.0 + inst.tt2) * 86400 == pytest.approx(0.0, abs=1e-6)


def test_tt_minus_utc_matches_skyfield(ts):
    # skyfield's own leap-second table (builtin) is an independent reading of the IERS table
    t = ts.utc(np.array([1975, 1990, 2005, 2017, 2026]), 3, 1, 12)
    inst = instants(np.array(["1975-03-01T12:00Z", "1990-03-01T12:00Z", "2005-03-01T12:00Z",
                              "2017-03-01T12:00Z", "2026-03-01T12:00Z"]))
    ours = (inst.tt1 - t.whole) + (inst.tt2 - t.tt_fraction)
    assert np.allclose(ours * 86400, 0.0, atol=1e-5)


def test_accepts_every_documented_instant_form():
    expected = total_jd(*utc_julian_date("2026-03-20T18:42:10Z"))
    forms = [
        "2026-03-20T18:42:10Z",
        "2026-03-20 21:42:10+03:00",
        "2026-03-20T08:42:10-1000",
        dt.datetime(2026, 3, 20, 18, 42, 10, tzinfo=dt.timezone.utc),
        dt.datetime(2026, 3, 20, 13, 42, 10, tzinfo=dt.timezone(dt.timedelta(hours=-5))),
        pd.Timestamp("2026-03-20T18:42:10Z"),
        np.datetime64("2026-03-20T18:42:10"),
    ]
    for form in forms:
        assert float(total_jd(*utc_julian_date(form))) == pytest.approx(float(expected), abs=1e-9), form
    series = pd.Series(pd.to_datetime(["2026-03-20T21:42:10+03:00"] * 2))
    assert np.allclose(total_jd(*utc_julian_date(series)), expected, atol=1e-9)
    index = pd.DatetimeIndex(["2026-03-20T18:42:10"]).tz_localize("UTC")
    assert np.allclose(total_jd(*utc_julian_date(index)), expected, atol=1e-9)


@pytest.mark.parametrize("value, fragment", [
    ("2026-03-20T18:42:10", "no time zone"),
    (dt.datetime(2026, 3, 20, 18, 42, 10), "naive datetime"),
    (pd.Series(pd.to_datetime(["2026-03-20T18:42:10"])), "no time zone"),
    ("20/03/2026 18:42", "cannot read"),
    ("2026-02-30T10:00Z", "not a valid calendar"),
    ("2026-03-20T25:00Z", "not a valid calendar"),
    ("1899-12-31T12:00Z", "outside 1900-2050"),
    ("2051-01-01T00:00Z", "outside 1900-2050"),
    (dt.date(2026, 3, 20), "without a time of day"),
    (np.datetime64("NaT"), "NaT"),
    (12.5, "cannot read"),
])
def test_refuses_with_a_clear_reason(value, fragment):
    with pytest.raises(TimeInputError, match=fragment):
        instants(value)


def test_array_errors_say_how_many_and_which():
    with pytest.raises(TimeInputError, match=r"could not be read: values 2 and 4 of 4"):
        instants(["2026-01-01T00:00Z", "2026-01-01T00:00", "2026-01-02T00:00Z", "nonsense"])
    with pytest.raises(TimeInputError, match=r"1900-2050.*value 2 of 2"):
        instants(["2026-01-01T00:00Z", "2060-01-01T00:00Z"])


def test_scalar_and_array_give_the_same_numbers_and_errors():
    one = instants("2026-03-20T18:42:10Z")
    many = instants(["2026-03-20T18:42:10Z"] * 3)
    for field in ("tt1", "tt2", "ut11", "ut12", "dut1_s"):
        assert np.all(np.asarray(getattr(many, field)) == getattr(one, field))
    with pytest.raises(TimeInputError, match="no time zone"):
        instants("2026-03-20T18:42:10")
    with pytest.raises(TimeInputError, match="no time zone"):
        instants(["2026-03-20T18:42:10"])


def test_leap_second_instant_is_handled():
    # 2016 December 31 ended with a leap second (IERS Bulletin C 52; common practice)
    before = instants("2016-12-31T23:59:59Z")
    leap = instants("2016-12-31T23:59:60.5Z")
    after = instants("2017-01-01T00:00:00Z")
    tt = [float((i.tt1 - 2457754.0) + i.tt2) * 86400 for i in (before, leap, after)]
    assert tt[1] - tt[0] == pytest.approx(1.5, abs=1e-5)
    assert tt[2] - tt[0] == pytest.approx(2.0, abs=1e-5)
    with pytest.raises(TimeInputError, match="leap second"):
        instants("2016-12-30T23:59:60Z")
    # the same leap second written in a zone east of Greenwich
    zoned = instants("2017-01-01T00:59:60.5+01:00")
    assert float(((zoned.tt1 - 2457754.0) + zoned.tt2) * 86400) == pytest.approx(tt[1], abs=1e-5)


def test_two_part_dates_keep_microseconds():
    a = instants("2024-07-01T00:00:00.000000Z")
    b = instants("2024-07-01T00:00:00.000010Z")
    step = ((b.tt1 - a.tt1) + (b.tt2 - a.tt2)) * 86400e6
    assert float(step) == pytest.approx(10.0, abs=0.01)


def test_ut1_source_is_recorded():
    table = timescales.iers_table()
    measured = instants("2020-06-01T00:00Z")
    assert measured.ut1_source.item() == timescales.UT1_MEASURED
    given = instants("2020-06-01T00:00Z", dut1_s=-0.2)
    assert given.ut1_source.item() == timescales.UT1_GIVEN
    assert float(given.dut1_s) == -0.2
    predicted_day = np.datetime64(int(table.last_measured_mjd) - 40587 + 30, "D")
    with warnings.catch_warnings():
        warnings.simplefilter("error", NavredWarning)
        pred = instants(np.datetime64(predicted_day, "ns"))
    assert pred.ut1_source.item() == timescales.UT1_PREDICTED


def finals_ut1_minus_utc_s(mjd: int) -> float:
    """UT1 − UTC (s) of one day read straight from the IERS finals2000A.all file installed by astropy-iers-data:
    its fixed columns (ReadMe.finals2000A: bytes 8-15 the MJD, byte 58 the I/P flag, bytes 59-68 Bulletin A's
    UT1-UTC). The test's own reading, independent of navred's parser."""
    import importlib.resources

    text = (importlib.resources.files("astropy_iers_data") / "data" / "finals2000A.all").read_text()
    for line in text.splitlines():
        if len(line) >= 68 and line[7:15].strip() and float(line[7:15]) == mjd:
            assert line[57] in "IP"
            return float(line[58:68])
    raise AssertionError(f"MJD {mjd} is not in finals2000A.all")


@pytest.mark.parametrize("day", ["2020-06-01", "2024-03-15", "2016-12-30"])
def test_dut1_matches_the_iers_file(day):
    # Reference: the IERS Bulletin A value of UT1 − UTC in finals2000A.all, read from the file's fixed columns in
    # the test (not through navred): at 0h UTC exactly, and at noon halfway between two days (linear in UT1 − UTC
    # between two days with no leap second, the way the daily table is meant to be read; common practice)
    mjd = int((np.datetime64(day) - np.datetime64("1858-11-17")).astype(int))  # MJD 0 is 1858-11-17
    midnight, next_day = finals_ut1_minus_utc_s(mjd), finals_ut1_minus_utc_s(mjd + 1)
    assert float(instants(f"{day}T00:00Z").dut1_s) == pytest.approx(midnight, abs=1e-7)
    assert float(instants(f"{day}T12:00Z").dut1_s) == pytest.approx((midnight + next_day) / 2, abs=1e-6)


def test_beyond_the_table_warns_once_with_the_possible_error():
    with pytest.warns(NavredWarning) as record:
        inst = instants(["2040-01-01T00:00Z", "2041-01-01T00:00Z"])
    assert any("0.225′" in str(w.message) for w in record)
    table_warnings = [w for w in record if "IERS table" in str(w.message)]
    assert len(table_warnings) == 1
    assert set(inst.ut1_source) == {timescales.UT1_BEYOND}
    assert np.all(inst.dut1_s == timescales.iers_table().dut1_s[-1])


def test_after_leap_second_expiry_warns():
    expires = timescales.leap_second_table().expires
    later = f"{expires.year + 1}-01-15T00:00Z"
    with pytest.warns(NavredWarning, match=r"leap second may have been announced.*0\.5″ of the Moon"):
        instants(later, dut1_s=0.0)
    # the words a navigator reads: which instants without '(the value)', and the risk to GHA named
    with pytest.warns(NavredWarning) as record:
        instants([later, later], dut1_s=0.0)
    text = " ".join(str(w.message) for w in record)
    assert "Values 1 and 2 of 2 are instants after" in text and "(the value)" not in text
    assert "0.25′ of longitude" in text


@pytest.mark.parametrize("dut1, fragment", [
    (np.nan, "must be finite"), (500.0, "within ±100"), ([0.1, 0.2], "shape"),
])
def test_bad_dut1_is_refused(dut1, fragment):
    with pytest.raises(TimeInputError, match=fragment):
        instants(["2020-01-01T00:00Z"] * 3, dut1_s=dut1)


def test_early_twentieth_century_uses_delta_t():
    # Espenak & Meeus (2006) give ΔT about 23.9 s in 1930 (from memory)
    inst = instants("1930-01-01T00:00Z")
    delta_t = float((inst.tt1 - inst.ut11) + (inst.tt2 - inst.ut12)) * 86400
    assert delta_t == pytest.approx(24.0, abs=1.0)
    assert inst.ut1_source.item() == timescales.UT1_PRE_UTC


def test_datetime64_round_trip_of_utc():
    inst = instants(["2026-03-20T18:42:10.123456789Z", "2016-12-31T23:59:60.2Z"])
    out = inst.utc_datetime64()
    assert out[0] == np.datetime64("2026-03-20T18:42:10.123456789")
    assert out[1] == np.datetime64("2016-12-31T23:59:59.999999999")


def test_iso_strings_read_in_bulk_match_the_careful_reader():
    # issue 13: a column of ISO 8601 'Z' instants is read by numpy's parser; every instant must be what the
    # careful one-by-one reader gives (utc_julian_date_from_components), and anything else must still be
    # refused by the careful reader with its own words
    from navred.timescales import (
        instant_components,
        iso_z_datetime64,
        utc_julian_date_from_components,
    )

    rng = np.random.default_rng(21)
    seconds = rng.uniform(0, 78 * 365.25 * 86400, 5000)
    stamps = (np.datetime64("1972-01-01", "ns") + (seconds * 1e9).astype("timedelta64[ns]")).astype("datetime64[ms]")
    texts = [t + "Z" for t in stamps.astype(str)]
    texts[::7] = [t.replace("T", " ") for t in texts[::7]]
    assert iso_z_datetime64(texts) is not None
    fast1, fast2 = utc_julian_date(texts)
    slow1, slow2, reasons = utc_julian_date_from_components(*instant_components(texts))
    assert (reasons == "").all()
    assert np.abs((fast1 - slow1) + (fast2 - slow2)).max() * 86400 < 1e-6  # a microsecond
    for odd in ("2026-02-30T10:00:00Z", "2016-12-31T23:59:60Z", "2026-03-26T09:10Z", "2026-03-26T09:10:00+03:00",
                "2026-03-26T09:10:00.Z", "2026-03-26T09:1a:00Z"):
        assert iso_z_datetime64([odd, texts[0]]) is None
    old = utc_julian_date(["1950-06-01T00:00:00Z", texts[0]])  # before 1972: the careful path's time scale
    assert old[0][0] + old[1][0] == utc_julian_date_from_components(1950, 6, 1, 0, 0, 0.0)[0] \
        + utc_julian_date_from_components(1950, 6, 1, 0, 0, 0.0)[1]
    with pytest.raises(TimeInputError, match="not a valid calendar instant"):
        utc_julian_date(["2026-02-30T10:00:00Z", texts[0]])
    leap = instants(["2016-12-31T23:59:60Z", "2017-01-01T00:00:00Z"])  # a real leap second: one SI second apart
    assert ((leap.tt1[1] - leap.tt1[0]) + (leap.tt2[1] - leap.tt2[0])) * 86400 == pytest.approx(1.0, abs=1e-6)


def test_a_leap_second_is_written_as_second_60():
    # IERS Bulletin C 52: a positive leap second was inserted at the end of 2016 December 31 (23:59:60 UTC)
    from typer.testing import CliRunner

    from navred.cli import app
    from navred.timescales import instants

    texts = instants(np.array(["2016-12-31T23:59:59.5Z", "2016-12-31T23:59:60.25Z", "2017-01-01T00:00:00Z"],
                              dtype=object)).utc_text(2)
    assert texts.tolist() == ["2016-12-31T23:59:59.50", "2016-12-31T23:59:60.25", "2017-01-01T00:00:00.00"]
    result = CliRunner().invoke(app, ["almanac", "Sun", "--utc", "2016-12-31T23:59:60.5Z", "--csv"])
    assert result.exit_code == 0 and ",2016-12-31T23:59:60.500000Z," in result.stdout
    text = CliRunner().invoke(app, ["almanac", "Sun", "--utc", "2016-12-31T23:59:60Z"])
    assert text.stdout.startswith("UTC 2016-12-31 23:59:60 ")
