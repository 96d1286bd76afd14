"""Zones and the date line in the plan and the paper: the nautical zone of a longitude by one stated rule, a DR
run back only when said (and not too far), a zone kept that is not the DR's, the date line announced before the
twilight it changes, the paper's dates as the ship's, and every round's name its own."""

from __future__ import annotations

import re

import numpy as np
import pytest

from navred.reckoning import DATE_LINE_ZONE_H, zone_description_h


@pytest.mark.parametrize(("lon_deg", "zd"), [
    (0.0, 0.0), (7.49, 0.0), (-7.49, 0.0), (7.5, -1.0), (-7.5, 1.0),  # common practice: 7° 30′ the first boundary
    (22.5, -2.0), (37.5, -3.0), (-37.5, 3.0), (52.5, -4.0),  # common practice: farther from Greenwich, every one
    (172.5, -12.0), (-172.5, 12.0), (179.99, -12.0), (-179.99, 12.0),
    (180.0, -12.0), (-180.0, -12.0),  # the 180° meridian: ZD −12 (the rule stated in docs/plan.md)
    (190.0, 11.0),  # 0–360°: 190° is 170° W, zone +11 (common practice)
])
def test_zone_rule_boundaries_one_side(lon_deg, zd):
    assert float(zone_description_h(lon_deg)) == zd


def test_zone_rule_no_negative_zero():
    # common practice: Greenwich's zone is 0; a −0 prints as '-0.0' in a table
    zones = zone_description_h(np.array([-0.0, -0.4, -7.0, 0.3]))
    assert not np.any(np.signbit(zones))
    assert DATE_LINE_ZONE_H == -12.0
    assert "-0" not in repr(zones.tolist())


# --- navred plan: a plan before the DR's time, a zone kept that is not the DR's -----------------------------

from typer.testing import CliRunner  # noqa: E402

from navred.cli import app  # noqa: E402

BASE = ["plan", "--date", "2026-12-10", "--lat", "20 00 S", "--lon", "150 00 W", "--eye", "10 m"]


def plan_text(*extra: str):
    return CliRunner().invoke(app, BASE + list(extra))


def test_plan_before_the_dr_time_says_the_run_back_and_the_zone_date():
    # 00:00 ZD +10 on 10 Dec is 10:00 UTC 10 Dec (ZT + ZD = UTC, common practice); 06:00 UTC is 4 h before it,
    # 48 nm at 12 kn; 06:00 UTC at about 149° W (ZD +10) is 20:00 zone time on 9 Dec, not 10 Dec (common practice)
    result = plan_text("--course", "270", "--speed", "12", "--utc", "2026-12-10T06:00Z")
    assert result.exit_code == 0, result.output
    assert ("Note: DR run back 4.0 h (48.0 nm back along 270.0° at 12.0 kn) from 00:00 zone time (ZD +10) of "
            "2026-12-10 = 10:00 UTC 10 Dec") in result.stdout
    assert "Sight plan, 2026-12-09: 20:00 zone (+10), 06:00 UTC 10 Dec" in result.stdout


def test_plan_far_before_the_dr_time_is_refused_with_the_hours():
    # 06:00 UTC 8 Dec is 52 h before 10:00 UTC 10 Dec (common practice), past the 24 h a plan runs back
    result = plan_text("--course", "270", "--speed", "12", "--utc", "2026-12-08T06:00Z")
    assert result.exit_code == 1
    assert "52.0 h before the DR's time" in result.output and "at most 24 h" in result.output
    assert "--date, --lat, --lon" in result.output


def test_plan_before_a_fixed_position_or_after_the_dr_runs_nothing_back():
    for extra in (["--utc", "2026-12-08T06:00Z"], ["--course", "270", "--speed", "12", "--utc", "2026-12-10T18:00Z"]):
        result = plan_text(*extra)
        assert result.exit_code == 0, result.output
        assert "run back" not in result.stdout


def test_plan_zone_kept_that_is_not_the_dr_zone_is_accepted_and_said():
    # 150° W is zone +10 (common practice); a ship keeping −10 there is told so, the times by the zone kept
    result = plan_text("--zone", "-10")
    assert result.exit_code == 0, result.output
    assert ("Note: Zone kept −10 (--zone), not the nautical zone of the DR's longitude 150° 00.0′ W, which is +10"
            in result.stdout)
    assert re.search(r"^2026-12-\d\d\s+−10 ", result.stdout, re.M), result.stdout  # the day's times by it
    same = plan_text("--zone", "+10")
    assert same.exit_code == 0 and "Zone kept" not in same.stdout


def test_plan_on_the_180_meridian_states_the_zone_taken():
    # the 180° meridian: ZD −12 by navred's stated rule (docs/plan.md); +12 is the other reading
    result = CliRunner().invoke(app, ["plan", "--date", "2026-12-10", "--lat", "20 00 S", "--lon", "180 00 W",
                                      "--eye", "10 m"])
    assert result.exit_code == 0, result.output
    assert "on the 180° meridian: ZD −12 taken" in result.stdout and "give --zone +12" in result.stdout


# --- the date line before the first twilight, the paper's ship's dates, each round named once -------------------

@pytest.mark.parametrize(("lon", "course", "crossing", "dates"), [
    # 10′ of longitude at 20° S is 10 × cos 20° = 9.4 nm, 37.6 min at 15 kn (mid-latitude sailing, common
    # practice) after 00:00 zone time: ZD +12 is 12:00 UTC 10 Dec, ZD −12 is 12:00 UTC 9 Dec (ZT + ZD = UTC)
    ("179 50 W", "270", "2026-12-10 12:3[78] UTC", "the ship's date 10 Dec becomes 11 Dec"),  # westbound: forward
    ("179 50 E", "090", "2026-12-09 12:3[78] UTC", "the ship's date 10 Dec becomes 9 Dec"),  # eastbound: back
])
def test_plan_announces_a_date_line_before_the_first_twilight(lon, course, crossing, dates):
    result = CliRunner().invoke(app, ["plan", "--date", "2026-12-10", "--lat", "20 00 S", "--lon", lon, "--course",
                                      course, "--speed", "15", "--eye", "10 m"])
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    first_round = next(k for k, line in enumerate(lines) if re.match(r"(Morning|Evening) twilight, ", line))
    before = lines[first_round - 1]
    assert before.startswith("Before this round: About ") and re.search(crossing, before), before
    assert "the date line" in before and dates in before


def rounds_of(course: float, lon: float):
    from navred.jobs.paper import passage_paper

    return passage_paper("2026-12-10", "2026-12-12", -20.0, lon, course_deg=course, speed_kn=15.0,
                         eye_height_m=10.0)


def test_paper_dates_are_the_ship_dates_westbound():
    # from 178° W at 15 kn west the line is 2° × 60 × cos 20° / 15 = 7.5 h on (common practice): 07:30 on the 10th
    # becomes 07:30 on the 11th; the ship lives the 10th's morning, the 11th from then, the 12th; never the 13th
    made = rounds_of(270.0, -178.0)
    dates = [str(t.zone_date) for t in made.twilights] + [str(n.zone_date) for n in made.noons]
    assert max(dates) == "2026-12-12" and "2026-12-13" not in dates
    assert {str(t.zone_date) for t in made.twilights} == {"2026-12-10", "2026-12-11", "2026-12-12"}
    titles = [p.title for p in made.document.pages if p.title.startswith("Sights for")]
    assert not any("13 December" in title for title in titles), titles


def test_paper_dates_are_the_ship_dates_eastbound_and_each_round_named_once():
    # from 178° E at 15 kn east the line is 7.5 h on: 07:30 on the 10th becomes 07:30 on the 9th (common
    # practice); the 9th's evening and the 10th again are lived, and the paper still runs to the 12th
    made = rounds_of(90.0, 178.0)
    dates = [str(t.zone_date) for t in made.twilights]
    assert dates[:3] == ["2026-12-10", "2026-12-09", "2026-12-10"]
    assert max(dates) == "2026-12-12" and dates.count("2026-12-12") == 2  # its morning and evening
    assert "2026-12-12" in {str(n.zone_date) for n in made.noons}
    labels = [t.label for t in made.twilights]
    assert len(set(labels)) == len(labels), labels
    assert "Morning twilight, Thursday 10 December 2026 (ZD −12)" in labels
    assert "Morning twilight, Thursday 10 December 2026 (ZD +12)" in labels


def test_plan_tables_at_greenwich_never_print_a_negative_zero():
    # common practice: the zone at 0° 10′ E is 0; −round(0.011) was −0.0, printed "-0.000000" in the CSV
    from navred.io.output import csv_text
    from navred.jobs.bridge import bridge_plan

    plan = bridge_plan("2026-03-26", 1, 50.0, 10.0 / 60.0, eye_height_m=3.0)
    for table in (plan.events_table(), plan.plans_table()):
        text = csv_text(table)
        assert ",0.000000," in text and "-0.0" not in text


def test_plan_with_a_zone_kept_says_the_dr_crosses_the_line_without_changing_the_date():
    # the crossing as above (12:38 UTC 9 Dec eastbound, mid-latitude sailing, common practice); with --zone −12
    # kept the dates stay by −12 (ZT + ZD = UTC): the plan says the line is crossed and the date does not change
    result = CliRunner().invoke(app, ["plan", "--date", "2026-12-10", "--lat", "20 00 S", "--lon", "179 50 E",
                                      "--course", "090", "--speed", "15", "--eye", "10 m", "--zone", "-12"])
    assert result.exit_code == 0, result.output
    assert re.search(r"Note: The DR crosses the date line about 2026-12-09 12:3[78] UTC .*the zone kept \(−12, "
                     r"--zone\) stays", result.stdout), result.stdout[:600]
    assert "Before this round" not in result.stdout  # no date change announced: the clocks keep −12
    assert re.search(r"^2026-12-10\s+−12 ", result.stdout, re.M)
