"""The time working as written (navred.timework): a time of day on the 24-hour clock or with am/pm.

The 12-hour clock's reading (common practice): 1 to 11 am are the hours 01 to 11, 1 to 11 pm are 13 to 23;
"12 am" and "12 pm" are read as midnight and noon by some and the other way by others (usage differs), so
they are refused naming both readings, never guessed."""

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
])
def test_a_time_with_am_or_pm_is_read_on_the_twelve_hour_clock(written, expected):
    assert parse_time_of_day(written) == expected


@pytest.mark.parametrize("written, words", [
    ("12:30 am", "has two readings: 00:30, just after midnight, or 12:30, just after noon"),
    ("12:30 pm", "has two readings: 00:30, just after midnight, or 12:30, just after noon"),
    ("12:00:00 PM", "has two readings: 00:00:00, just after midnight, or 12:00:00, just after noon"),
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
    through the one reader; a row at 12:xx pm is refused by its row naming both readings, the others read."""
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
    noon = written.copy()
    noon.loc[1, "Watch time"] = "12:05:56 pm"
    noon.to_csv(tmp_path / "noon.csv", index=False)
    refused = read_sight_log(tmp_path / "noon.csv")
    assert list(refused.rejected.row) == [3]
    assert "00:05:56, just after midnight, or 12:05:56, just after noon" in refused.rejected.reason.iloc[0]
    assert len(refused.sights) == len(plain.sights) - 1
