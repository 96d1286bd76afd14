"""Angles: the navigational form, wrapping, RA and SHA."""

from __future__ import annotations

import re

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from navred.angles import (
    format_angle,
    format_hms,
    hours_from_hms,
    parse_angle,
    ra_hours_from_sha_deg,
    ra_hours_to_deg,
    sha_deg_from_ra_hours,
    wrap_180,
    wrap_360,
)
from navred.errors import AngleInputError


@pytest.mark.parametrize("text, kind, expected", [
    ("47° 12.4′ N", "lat", 47 + 12.4 / 60),
    ("47 12.4 N", "lat", 47 + 12.4 / 60),
    ("47°12.4'N", "lat", 47 + 12.4 / 60),
    ("N 47 12.4", "lat", 47 + 12.4 / 60),
    ("47 12.4 s", "lat", -(47 + 12.4 / 60)),
    ("005° 31.9′ W", "lon", -(5 + 31.9 / 60)),
    ("5 31.9 E", "lon", 5 + 31.9 / 60),
    ("-5.5317", "lon", -5.5317),
    (-5.5317, "lon", -5.5317),
    ("354.5", "lon", -5.5),
    ("47:12:24 N", "lat", 47 + 12 / 60 + 24 / 3600),
    ("44° 10'.1 N", "lat", 44 + 10.1 / 60),  # the point after the minute mark, as often written
    ("44 10′.1 N", "lat", 44 + 10.1 / 60),
    ("44 10'.1", "angle", 44 + 10.1 / 60),
    ("−5.5317", "lon", -5.5317),  # a typographic minus
    ("4 W", "variation", -4.0),
    ("3.5 E", "variation", 3.5),
    ("3 30 E", "variation", 3.5),
    ("47d 12m 24s N", "lat", 47 + 12 / 60 + 24 / 3600),
    ("23 26.2 S", "dec", -(23 + 26.2 / 60)),
    ("123 45.6", "angle", 123.76),
])
def test_parse_accepts_the_forms_navigators_write(text, kind, expected):
    # the navigational form DDD° MM.m′ with hemisphere letters (common practice)
    assert parse_angle(text, kind) == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize("text, kind, fragment", [
    ("47 72.4 N", "lat", "below 60"),
    ("95 00 N", "lat", "outside -90 to 90"),
    ("47 12.4 E", "lat", "E is a hemisphere of a longitude"),
    ("013 03.7 S", "lon", "S is a hemisphere of a latitude"),  # not a seconds mark
    ("44 30", "lat", "could be N or S"),
    ("013 03.8", "lon", "could be E or W"),
    ("-013 03.8", "lon", "a sign but no hemisphere letter: 013 03.8 W .west negative.* or 013 03.8 E .east negative"),
    ("23 26.2", "dec", "could be N or S"),
    ("44 30", "variation", "could be E or W"),
    ("43 -14.1 N", "lat", "sign inside the minutes"),
    ("29 -53.4", "angle", "sign inside the minutes"),
    ("30,5", "angle", "comma here is ambiguous"),
    ("N 47 12 S", "lat", "both ends"),
    ("-47 12 N", "lat", "sign or a hemisphere"),
    ("abc", "lon", "accepted"),
    ("181 W", "lon", "outside"),
    (float("nan"), "lat", "not a finite number"),
])
def test_parse_refuses_with_a_reason_and_the_accepted_forms(text, kind, fragment):
    with pytest.raises(AngleInputError, match=fragment):
        parse_angle(text, kind)


@pytest.mark.parametrize("text, kind, expected", [
    ("30,5", "angle", 30.5), ("43 14,1 N", "lat", 43 + 14.1 / 60), ("-5,25", "lon", -5.25),
])
def test_decimal_commas_are_read_where_the_file_allows_them(text, kind, expected):
    # a ;- or tab-separated file leaves a decimal comma unambiguous (common practice in much of Europe)
    assert parse_angle(text, kind, decimal_comma=True) == pytest.approx(expected, abs=1e-12)
    with pytest.raises(AngleInputError, match="both a decimal comma and a point"):
        parse_angle("1.013,2", "angle", decimal_comma=True)


def test_parse_array_names_the_failing_elements():
    with pytest.raises(AngleInputError, match=r"values 1 and 3 of 3"):
        parse_angle(["x", "10 30 N", "91 N"], "lat")
    assert parse_angle(np.array(["10 30 N", "10 30 S"]), "lat").tolist() == [10.5, -10.5]


@pytest.mark.parametrize("value, kind, text", [
    (47 + 12.4 / 60, "lat", "47° 12.4′ N"),
    (-(5 + 31.9 / 60), "lon", "005° 31.9′ W"),
    (359.99999, "angle", "000° 00.0′"),
    (-0.5, "dec", "00° 30.0′ S"),
    (12.999999, "lat", "13° 00.0′ N"),
])
def test_format_navigational_form(value, kind, text):
    # carrying 59.95′ into the next degree, three-digit longitudes (common practice)
    assert format_angle(value, kind) == text


def test_format_is_vectorised_and_blank_for_nan():
    out = format_angle(np.array([1.5, np.nan]), "lat")
    assert out.tolist() == ["01° 30.0′ N", ""]


@given(st.floats(min_value=-90, max_value=90, allow_nan=False))
def test_latitude_text_round_trips_to_a_tenth_of_a_minute(lat):
    back = parse_angle(format_angle(lat, "lat"), "lat")
    assert abs(back - lat) <= 0.05 / 60 + 1e-9


@given(st.floats(min_value=-179.999, max_value=179.999, allow_nan=False))
def test_longitude_text_round_trips(lon):
    back = parse_angle(format_angle(lon, "lon"), "lon")
    assert abs(wrap_180(back - lon)) <= 0.05 / 60 + 1e-9


def test_wrapping():
    assert float(wrap_360(-1e-15)) < 360.0
    assert np.allclose(wrap_360([-10, 370, 360]), [350, 10, 0])
    assert np.allclose(wrap_180([190, -190, 180]), [-170, 170, -180])


def test_ra_facts_of_the_trade():
    # 24 h of RA = 360°, 1 h = 15°, 1 m = 15′, 1 s = 15″ (common practice)
    assert float(ra_hours_to_deg(24.0)) == 360.0
    assert float(ra_hours_to_deg(1.0)) == 15.0
    assert float(ra_hours_to_deg(1 / 60)) * 60 == pytest.approx(15.0)
    assert float(ra_hours_to_deg(1 / 3600)) * 3600 == pytest.approx(15.0)


@given(st.floats(min_value=0.0, max_value=23.9999, allow_nan=False))
def test_sha_plus_ra_is_360(ra_hours):
    # SHA + RA = 360° (common practice)
    sha = float(sha_deg_from_ra_hours(ra_hours))
    assert (sha + ra_hours * 15.0) % 360.0 == pytest.approx(0.0, abs=1e-9) or \
        (sha + ra_hours * 15.0) == pytest.approx(360.0)
    assert float(ra_hours_from_sha_deg(sha)) == pytest.approx(ra_hours, abs=1e-9)


def test_hms_text():
    assert format_hms(5.575539) == "05h 34m 31.94s"
    assert hours_from_hms("05h 34m 31.94s") == pytest.approx(5.575539, abs=1e-6)
    assert hours_from_hms("5 34 31.94") == pytest.approx(5.575539, abs=1e-6)
    with pytest.raises(AngleInputError, match="below 60"):
        hours_from_hms("5 64 00")


def test_one_angle_is_written_as_the_same_angle_in_an_array():
    # format_angle has a plain-Python path for one number (a plotting sheet writes dozens); it must round
    # exactly as the array path, half-way minutes included (numpy's round: scale, half to even, unscale)
    rng = np.random.default_rng(11)
    values = np.concatenate([rng.uniform(-400, 400, 3000), np.round(rng.uniform(-90, 90, 3000) * 1200) / 1200,
                             [0.0, -0.0, -1e-20, 359.99999, -180.0, 180.0, 89.999999, np.nan]])
    for kind in ("lat", "lon", "angle", "signed"):
        for decimals in (0, 1, 2):
            together = format_angle(values, kind, decimals)
            assert [format_angle(v, kind, decimals) for v in values.tolist()] == together.tolist()


@pytest.mark.parametrize("text, kind, expected", [
    ("30' W", "variation", -0.5),          # issue 20: a minute mark is minutes (it was read as 30°)
    ("30′ E", "variation", 0.5),
    ("4° 30' W", "variation", -4.5),
    ("10'30\"", "angle", 10.5 / 60),
    ("44° 10′ 30″ N", "lat", 44.175),
    ("44 10 30 N", "lat", 44.175),          # no marks: degrees, minutes, seconds by place, as before
    ("44°10.1'N", "lat", 44 + 10.1 / 60),
    ("5d 30m", "angle", 5.5),
])
def test_degree_minute_and_second_marks_are_honoured(text, kind, expected):
    # common practice: ° degrees, ′ (or ') minutes, ″ (or ") seconds
    assert parse_angle(text, kind) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize("text, kind, fragment", [
    ("30' 12° N", "lat", "marks are out of order"),
    ("12° 30°", "angle", "marks are out of order"),
    ("30\" 12'", "angle", "marks are out of order"),
    ("75'", "angle", "below 60"),
    ("30'", "lat", "could be N or S: write 30' N or 30' S"),
    ("nan", "lat", "latitude 'nan' is not a number"),  # not a hemisphere problem
    ("NaN", "variation", "is not a number"),
    ("-inf", "lon", "is not a number"),
])
def test_misplaced_marks_and_words_that_are_not_numbers_are_refused(text, kind, fragment):
    with pytest.raises(AngleInputError, match=re.escape(fragment)):
        parse_angle(text, kind)


@pytest.mark.parametrize("text, kind, readings", [
    # a double quote (or a seconds mark) after the first number past the degrees: minutes, or seconds with the
    # minutes left out? 42° 12.9′ and 42° 00′ 12.9″ are 12.7′ apart (common practice: ′ minutes, ″ seconds)
    ('42°12.9"', "angle", "42° 12.9′ (the mark meant for minutes) or 42° 00′ 12.9″ (the minutes left out)"),
    ("42° 12.9″", "angle", "42° 12.9′ (the mark meant for minutes) or 42° 00′ 12.9″ (the minutes left out)"),
    ("42°12.9”", "angle", "42° 12.9′ (the mark meant for minutes) or 42° 00′ 12.9″ (the minutes left out)"),
    ('42 12.9"', "angle", "42° 12.9′ (the mark meant for minutes) or 42° 00′ 12.9″ (the minutes left out)"),
    ('20°27.7"N', "lat", "20° 27.7′ N (the mark meant for minutes) or 20° 00′ 27.7″ N (the minutes left out)"),
    ('12.9"', "angle", "12.9′ (the mark meant for minutes) or 0° 00′ 12.9″ (the minutes left out)"),
    ('-0°30"', "signed", "-0° 30′ (the mark meant for minutes) or -0° 00′ 30″ (the minutes left out)"),
])
def test_a_seconds_mark_with_no_minutes_is_refused_naming_both_readings(text, kind, readings):
    with pytest.raises(AngleInputError) as caught:
        parse_angle(text, kind)
    assert f"a seconds mark with no minutes: {readings}?" in str(caught.value)


def test_seconds_after_minutes_are_still_seconds():
    # common practice: with the minutes written, the double quote can only be seconds
    assert parse_angle('42°12\'54"') == pytest.approx(42 + 12 / 60 + 54 / 3600, abs=1e-12)
    assert parse_angle('42°00\'12.9"') == pytest.approx(42 + 12.9 / 3600, abs=1e-12)


@pytest.mark.parametrize("text, kind, first, second", [
    ("-160°19.3'", "lon", "160°19.3' W (west negative, as ISO 6709 signs a decimal)", "160°19.3' E (east negative)"),
    ("+160 19.3", "lon", "160 19.3 E (east positive, as ISO 6709 signs a decimal)", "160 19.3 W (west positive)"),
])
def test_signed_degrees_and_minutes_without_a_letter_are_refused_naming_both_signs(text, kind, first, second):
    """A sign says which way only under a convention: logs sign degrees and minutes west negative (as ISO 6709
    signs a decimal) and west positive (as hour angles run) (common practice). Both readings are named."""
    with pytest.raises(AngleInputError) as refusal:
        parse_angle(text, kind)
    message = str(refusal.value)
    assert "a sign but no hemisphere letter" in message and first in message and second in message


def test_a_signed_latitude_in_degrees_and_minutes_is_read_as_a_signed_decimal_is():
    # a latitude's sign has one convention (south negative, ISO 6709; no log signs north negative: common
    # practice): "-20 27.7" is 20° 27.7′ S as "-20.4617" is; a longitude's sign stays refused (above)
    assert parse_angle("-20 27.7", "lat") == pytest.approx(-(20 + 27.7 / 60), abs=1e-12)
    assert parse_angle("+20 27.7", "lat") == pytest.approx(20 + 27.7 / 60, abs=1e-12)
    assert parse_angle("-17°30'", "lat") == pytest.approx(-17.5, abs=1e-12)
