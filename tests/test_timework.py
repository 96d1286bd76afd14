"""The time working as written (navred.timework): a time of day on the 24-hour clock or with am/pm.

The 12-hour clock's reading (common practice): 1 to 11 am are the hours 01 to 11, 1 to 11 pm are 13 to 23, and
12 is the first hour of each half: 12:31 am is 00:31 (just after midnight), 12:31 pm is 12:31 (just after noon),
as every usage of the 12-hour clock and a spreadsheet's export of it agree. Exactly "12:00 am" and "12:00 pm" are
said of noon by some and of midnight by others (usage differs), so they are refused naming both readings, never
guessed."""

from __future__ import annotations

import pandas as pd
import pytest

from navred.errors import NavredError
from navred.io.logbook import read_sight_log
from navred.timework import parse_time_of_day


@pytest.mark.parametrize("written, expected", [
    ("7:15 pm", (19, 15, 0.0)), ("7:15 PM", (19, 15, 0.0)), ("7:15pm", (19, 15, 0.0)), ("7:15 p.m.", (19, 15, 0.0)),
    ("8:09:53 am", (8, 9, 53.0)), ("8:09:53 a.m.", (8, 9, 53.0)), ("11:59:59 pm", (23, 59, 59.0)),
    ("1:00 am", (1, 0, 0.0)), ("1:00 pm", (13, 0, 0.0)), ("7:15:30.5 pm", (19, 15, 30.5)),
    ("19:41:30", (19, 41, 30.0)), ("1941", (19, 41, 0.0)),  # the 24-hour clock as before
    # 12 past the hour: the first hour of its half (common practice), a spreadsheet's noon sight included
    ("12:31:00 PM", (12, 31, 0.0)), ("12:31 pm", (12, 31, 0.0)), ("12:31:00 AM", (0, 31, 0.0)),
    ("12:31 a.m.", (0, 31, 0.0)), ("12:00:01 pm", (12, 0, 1.0)), ("12:00:30 AM", (0, 0, 30.0)),
    ("12:59:59 pm", (12, 59, 59.0)), ("12:01 am", (0, 1, 0.0)), ("12:00:00.5 pm", (12, 0, 0.5)),
])
def test_a_time_with_am_or_pm_is_read_on_the_twelve_hour_clock(written, expected):
    assert parse_time_of_day(written) == expected


@pytest.mark.parametrize("written, words", [
    # exactly 12 o'clock: noon or midnight? (common practice: usage differs)
    ("12:00 am", "has two readings: noon (12:00) or midnight (00:00 at the start of the date, or 24:00 at its end)"),
    ("12:00 pm", "has two readings: noon (12:00) or midnight (00:00 at the start of the date, or 24:00 at its end)"),
    ("12:00:00 PM", "has two readings: noon (12:00) or midnight"),
    ("12:00:00.0 a.m.", "has two readings: noon (12:00) or midnight"),
    ("1200 pm", "has two readings: noon (12:00) or midnight"),
    ("0:30 am", "hour 0 with am, but the 12-hour clock runs 1 to 12: write it on the 24-hour clock (00:30)"),
    ("13:15 pm", "hour 13 with pm, but the 12-hour clock runs 1 to 12: write it on the 24-hour clock (13:15)"),
    ("7:75 pm", "is not a time of day"),
    ("pm", "cannot read 'pm' as a time of day"),
])
def test_twelve_oclock_and_contradictions_with_am_or_pm_are_refused_naming_the_readings(written, words):
    with pytest.raises(NavredError) as caught:
        parse_time_of_day(written)
    assert words in str(caught.value)


def test_a_hand_kept_log_written_with_am_and_pm_reads_as_the_same_log_on_the_24_hour_clock(tmp_path):
    """The demo's hand-kept log (sample_sights/demo_sights_hand_kept.csv, invented) with its watch times
    rewritten as a navigator writes them on the 12-hour clock ('2:39:53 pm'): the same instants, row for row,
    through the one reader; a row at 12:05:56 pm is read as 12:05:56 (the 12-hour clock's first hour of the
    afternoon, common practice), a row at exactly 12:00:00 pm is refused by its row naming both readings."""
    log = pd.read_csv("sample_sights/demo_sights_hand_kept.csv", dtype=str, keep_default_na=False)

    def twelve(text: str) -> str:
        hour, minute, second = (int(v) for v in text.split(":"))
        return f"{hour % 12 or 12}:{minute:02d}:{second:02d} {'am' if hour < 12 else 'pm'}"

    assert not log["Watch time"].str.startswith(("12:", "00:")).any()
    written = log.assign(**{"Watch time": log["Watch time"].map(twelve)})
    assert written["Watch time"].str.endswith(" pm").any() and written["Watch time"].str.endswith(" am").any()
    written.to_csv(tmp_path / "twelve.csv", index=False)
    plain, twelve_hour = read_sight_log("sample_sights/demo_sights_hand_kept.csv"), read_sight_log(
        tmp_path / "twelve.csv")
    assert twelve_hour.rejected.empty
    pd.testing.assert_series_equal(plain.sights.sight_utc, twelve_hour.sights.sight_utc)
    noon, on_24 = written.copy(), log.copy()
    noon.loc[1, "Watch time"], on_24.loc[1, "Watch time"] = "12:05:56 pm", "12:05:56"
    noon.to_csv(tmp_path / "noon.csv", index=False)
    on_24.to_csv(tmp_path / "noon24.csv", index=False)
    read = read_sight_log(tmp_path / "noon.csv")
    assert read.rejected.empty
    pd.testing.assert_series_equal(read_sight_log(tmp_path / "noon24.csv").sights.sight_utc, read.sights.sight_utc)
    noon.loc[1, "Watch time"] = "12:00:00 pm"
    noon.to_csv(tmp_path / "twelve_sharp.csv", index=False)
    refused = read_sight_log(tmp_path / "twelve_sharp.csv")
    assert list(refused.rejected.row) == [3]
    assert "two readings: noon (12:00) or midnight" in refused.rejected.reason.iloc[0]
    assert len(refused.sights) == len(plain.sights) - 1


@pytest.mark.parametrize("text, hours", [("+10h", 10), ("+10 h", 10), ("-3 hrs", -3), ("-3 Hrs.", -3),
                                         ("+5 hours", 5), ("-8 h", -8), ("0h", 0), ("−11 hr", -11)])
def test_a_signed_zone_description_in_hours_is_read_as_hours(text, hours):
    """'+10h' is ten hours, ZT + 10 h = UTC (common practice: the zone description is written in hours); the
    h after a signed number is hours, never the zone letter H (-8), which stands alone or after its number in
    capitals ('-8 H')."""
    from navred.timework import parse_zone_description

    assert parse_zone_description(text) == hours


@pytest.mark.parametrize("text", ["10h", "8 h", "3 hrs"])
def test_a_zone_description_in_hours_with_no_sign_is_refused_naming_both(text):
    from navred.timework import parse_zone_description

    number = text.split()[0].rstrip("h")
    with pytest.raises(NavredError, match=rf"{number} hours with no sign: \+{number} .* or -{number} \(east\)"):
        parse_zone_description(text)


def test_the_zone_letter_h_is_still_checked_against_its_number():
    """A capital H after the number is the zone letter (H is -8, from memory: the nautical zone letters), checked
    as '+1 N' is; the refusal says how hours are written."""
    from navred.timework import parse_zone_description

    assert parse_zone_description("-8 H") == -8
    with pytest.raises(NavredError, match=r"the letter H is zone -8, but the number says \+10 .*write '\+10 h'"):
        parse_zone_description("+10 H")
