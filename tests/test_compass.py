"""For the watch's compass: the azimuth table and the amplitudes against skyfield, the gyro and magnetic errors,
the deviation curve against planted coefficients, and the compass error book from the command line."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.compass import (
    amplitudes,
    azimuth_table,
    deviation_card,
    deviation_coefficients,
    gyro_error_deg,
    twilight_bearing_bodies,
)
from navred.errors import NavredError
from navred.io.cautions import CAUTION
from navred.plan import voyage_events
from navred.reckoning import steady_track
from tests.conftest import angle_diff_deg, frozen

BOOK = "sample_sights/compass_book.csv"
#: what scripts/make_compass_book.py planted (its docstring states them)
PLANTED = {"gyro_high": 1.0, "A": 0.5, "B": 3.0, "C": -2.0, "D": 1.0, "E": 0.3}


def skyfield_altaz(ts, eph, body, when, lat, lon):
    from skyfield.api import wgs84

    def compute():
        t = ts.from_datetimes(pd.DatetimeIndex(when).tz_localize("UTC").to_pydatetime())
        alt, az, _ = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(eph[body]).apparent().altaz()
        return list(alt.degrees) + list(az.degrees)

    key = f"compass-altaz|{body}|{int(when[0].astype(np.int64))}|{len(when)}|{lat!r}|{lon!r}"
    values = np.asarray(frozen(key, compute))
    return values[:len(when)], values[len(when):]


def test_the_azimuth_table_matches_skyfield(ts, eph):
    """Reference: skyfield's topocentric azimuth and airless altitude of the Sun (a fixed position): within 0.1°."""
    track = steady_track(36.0, -20.0, np.datetime64("2025-06-10T00:00", "ns"))
    times, zn, hc = azimuth_table(["Sun"], track, "2025-06-10T07:00", "2025-06-10T19:00", 20)
    assert times.size == 37 and zn.shape == (1, 37)
    alt, az = skyfield_altaz(ts, eph, "sun", times, 36.0, -20.0)
    assert np.abs(angle_diff_deg(zn[0], az)).max() <= 0.1
    assert np.abs(hc[0] - alt).max() <= 0.02  # geocentric against topocentric: the Sun's parallax, 0.15′
    with pytest.raises(NavredError, match="1 to 240 minutes"):
        azimuth_table(["Sun"], track, "2025-06-10T07:00", "2025-06-10T19:00", 0.5)


@pytest.mark.parametrize("lat, lon, date", [(36.0, -20.0, "2025-06-10"), (-33.9, 18.4, "2025-01-15"),
                                            (52.0, 4.0, "2025-12-21")])
def test_amplitudes_against_skyfield_and_the_formula(ts, eph, lat, lon, date):
    """Reference: skyfield's search for the Sun's centre crossing the celestial horizon (airless topocentric altitude
    0°, find_discrete), and its azimuth there: our instant within 30 s, our true bearing within 0.1°; and the
    amplitude sin A = sin δ / cos φ (common practice)."""
    from skyfield import almanac
    from skyfield.api import wgs84

    events = voyage_events(date, 1, lat, lon)
    found = amplitudes(events)

    def crossings():
        place = eph["earth"] + wgs84.latlon(lat, lon)
        t0 = ts.from_datetime(pd.Timestamp(date, tz="UTC").to_pydatetime()) - lon / 360.0
        t1 = t0 + 1.0

        def up(t):
            return place.at(t).observe(eph["sun"]).apparent().altaz()[0].degrees > 0.0

        up.step_days = 0.02
        times, states = almanac.find_discrete(t0, t1, up)
        azimuths = place.at(times).observe(eph["sun"]).apparent().altaz()[1].degrees
        return [t.timestamp() for t in times.utc_datetime()] + list(states.astype(float)) + list(azimuths)

    values = np.asarray(frozen(f"compass-amplitude|{date}|{lat!r}|{lon!r}", crossings)).reshape(3, -1)
    for seconds, state, azimuth in values.T:
        rising = state == 1.0
        ours = found.rising_utc[0] if rising else found.setting_utc[0]
        ours_zn = found.rising_zn_deg[0] if rising else found.setting_zn_deg[0]
        theirs = np.datetime64("1970-01-01", "ns") + np.timedelta64(int(round(seconds * 1e9)), "ns")
        assert abs((ours - theirs) / np.timedelta64(1, "s")) <= 30.0
        assert abs(angle_diff_deg(ours_zn, azimuth)) <= 0.1
    def declination():  # skyfield's apparent declination of the Sun at our rising instant
        t = ts.from_datetime(pd.Timestamp(found.rising_utc[0]).round("us").tz_localize("UTC").to_pydatetime())
        return [eph["earth"].at(t).observe(eph["sun"]).apparent().radec(epoch="date")[1].degrees]

    dec = frozen(f"compass-amplitude-dec|{found.rising_utc[0]}", declination)[0]
    assert found.rising_amplitude_deg[0] == pytest.approx(np.degrees(np.arcsin(np.sin(np.radians(dec))
                                                                              / np.cos(np.radians(lat)))), abs=0.05)


def test_a_bright_low_body_is_offered_at_twilight():
    track = steady_track(36.0, -20.0, np.datetime64("2025-06-10T00:00", "ns"))
    body, zn, hc = twilight_bearing_bodies(np.array(["2025-06-10T21:40"], dtype="datetime64[ns]"), track)
    assert body[0] and 3.0 <= hc[0] <= 25.0


def test_gyro_high_is_positive_and_low_negative():
    assert float(gyro_error_deg(101.5, 100.0)) == pytest.approx(1.5)  # reads more than true: high
    assert float(gyro_error_deg(359.0, 1.0)) == pytest.approx(-2.0)  # low, across north


def test_the_deviation_curve_recovers_its_coefficients():
    """The five coefficients from eight headings 45° apart, exactly without noise; three headings give A, B, C."""
    headings = np.arange(0.0, 360.0, 45.0)
    h = np.radians(headings)
    truth = 0.5 + 3.0 * np.sin(h) - 2.0 * np.cos(h) + 1.0 * np.sin(2 * h) + 0.3 * np.cos(2 * h)
    curve = deviation_coefficients(headings, truth)
    assert np.allclose([curve.a_deg, curve.b_deg, curve.c_deg, curve.d_deg, curve.e_deg], [0.5, 3.0, -2.0, 1.0, 0.3])
    assert curve.rms_deg < 1e-9 and curve.unfitted == ()
    card_headings, card = deviation_card(curve)
    assert card_headings.size == 24 and card[0] == pytest.approx(0.5 - 2.0 + 0.3)
    three = deviation_coefficients([0.0, 120.0, 240.0], [1.0, 2.0, 3.0])
    assert three.unfitted == ("D", "E")
    one = deviation_coefficients([90.0, 95.0], [2.0, 3.0])
    assert one.unfitted == ("B", "C", "D", "E") and one.a_deg == pytest.approx(2.5)


def test_the_compass_book_finds_the_planted_errors():
    """The sample book (scripts/make_compass_book.py: skyfield's true bearings with a gyro 1.0° high and a steering
    compass with variation 4° W and planted deviation coefficients, readings noisy): the gyro's mean error within
    0.2° and every coefficient within 0.4° of what was planted."""
    result = CliRunner().invoke(app, ["compass-book", BOOK])
    assert result.exit_code == 0, result.output
    text = result.stdout
    assert "gyro: mean error 1.0° high over 8 bearings" in text
    import re

    found = dict(re.findall(r"([ABCDE]) (−?\d+\.\d\d)°", text.split("deviation curve:")[1].split("\n")[0]))
    for name in "ABCDE":
        assert abs(float(found[name].replace("−", "-")) - PLANTED[name]) <= 0.4, name
    assert "deviation card (by compass heading): 000°" in text
    assert result.stderr.count(CAUTION) == 1


def test_the_compass_book_sets_aside_what_it_cannot_judge(tmp_path):
    book = tmp_path / "book.csv"
    book.write_text("utc,body,compass,bearing,heading,variation,lat,lon\n"
                    "2026-03-25T09:00:00Z,Sun,gyro,115.5,,,43 20 N,008 25 W\n"
                    "2026-03-25T09:00:00Z,Sun,binnacle,115.5,,,43 20 N,008 25 W\n"
                    "2026-03-25T09:00:00Z,Sun,magnetic,115.5,,4 W,43 20 N,008 25 W\n"
                    "2026-03-25T23:00:00Z,Sun,gyro,115.5,,,43 20 N,008 25 W\n", encoding="utf-8")
    result = CliRunner().invoke(app, ["compass-book", str(book)])
    assert result.exit_code == 0, result.output
    assert "row 3 of" in result.stdout and "binnacle" in result.stdout and "give gyro or magnetic" in result.stdout
    assert "row 4 of" in result.stdout and "heading" in result.stdout
    assert "row 5 of" in result.stdout and "below the horizon" in result.stdout
    csv = CliRunner().invoke(app, ["compass-book", str(book), "--csv"])
    table = pd.read_csv(__import__("io").StringIO(csv.stdout))
    assert list(table.row) == [2] and table.gyro_error_deg[0] > 0


def test_the_azimuths_command_prints_and_writes(tmp_path):
    result = CliRunner().invoke(app, ["azimuths", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W",
                                      "--course", "215", "--speed", "6.5", "--every", "30", "-o", str(tmp_path / "a.pdf"),
                                      "-o", str(tmp_path / "a.csv")])
    assert result.exit_code == 0, result.output
    assert "amplitude E " in result.stdout and "amplitude W " in result.stdout
    assert "At twilight: a bright body" in result.stdout
    # where and when the DR is, by the ship's clock (ZD +1 at 12° W: −round(λ/15°), common practice) and in UTC
    start = "at 00:00 zone time (ZD +1) of 2026-03-26 = 01:00 UTC 26 Mar, then 215.0° at 6.5 kn"
    assert start in result.stdout.splitlines()[0]
    table = pd.read_csv(tmp_path / "a.csv")
    assert {"utc", "zone_time", "zn_deg", "hc_deg"} <= set(table.columns) and len(table) > 20
    from pypdf import PdfReader

    page = " ".join(PdfReader(str(tmp_path / "a.pdf")).pages[0].extract_text().split())
    assert " ".join(CAUTION.split()) in page and "true amplitude" in page and start in page


def test_the_compass_book_prints_its_bearings_and_card_under_the_caution(tmp_path):
    """The printed book: every page headed with the caution, every bearing's row with its error (gyro high or
    low, magnetic east or west) as the console gives it, and the deviation card every 15° of compass heading."""
    from pypdf import PdfReader

    result = CliRunner().invoke(app, ["compass-book", BOOK, "-o", str(tmp_path / "book.pdf")])
    assert result.exit_code == 0, result.output
    csv = pd.read_csv(__import__("io").StringIO(CliRunner().invoke(app, ["compass-book", BOOK, "--csv"]).stdout))
    pages = [" ".join(page.extract_text().split()) for page in PdfReader(str(tmp_path / "book.pdf")).pages]
    assert pages and all(" ".join(CAUTION.split()) in page for page in pages)
    text = " ".join(pages)
    assert "Deviation card" in text and all(f"{heading:03d}°" in text for heading in range(0, 360, 15))
    gyro = csv[csv.compass == "gyro"]
    assert len(gyro) == 8 and all(f"{abs(e):.1f}° {'high' if e > 0 else 'low'}" in text for e in gyro.gyro_error_deg)
    magnetic = csv[csv.compass == "magnetic"]  # compass least, error east  # common practice
    assert len(magnetic) == 8 and all(f"{abs(e):.1f}° {'E' if e > 0 else 'W'}" in text
                                      for e in magnetic.compass_error_deg)


def test_a_book_of_two_magnetic_compasses_is_refused(tmp_path):
    """A steering and a standard compass have each their own deviation: one card fitted to both would fit neither
    (a trial's two compasses gave B 0.5° for B 3° and B −2°), so the book is refused, naming each compass's rows."""
    book = tmp_path / "book.csv"
    lines = ["utc,body,compass,bearing,heading,variation,lat,lon"]
    for k, heading in enumerate(range(0, 360, 45)):
        lines.append(f"2026-03-25T09:{k:02d}:00Z,Sun,steering,{116 + k % 3},{heading},4 W,43 20 N,008 25 W")
        lines.append(f"2026-03-25T09:{k:02d}:30Z,Sun,Standard,{117 - k % 2},{heading},4 W,43 20 N,008 25 W")
    book.write_text("\n".join(lines) + "\n", encoding="utf-8")
    result = CliRunner().invoke(app, ["compass-book", str(book)])
    assert result.exit_code == 1 and "2 compasses (standard, steering)" in result.output, result.output
    assert "standard: rows 3, 5," in result.output and "steering: rows 2, 4," in result.output


def test_a_card_from_too_few_headings_and_a_huge_deviation_are_flagged(tmp_path):
    """Two bearings on one heading (a latitude typed S for N in one: its 'deviation' some 30°) give no card to steer
    by, and the large deviation is named with its row, on the console and on the printed page."""
    from pypdf import PdfReader

    book = tmp_path / "book.csv"
    book.write_text("utc,body,compass,bearing,heading,variation,lat,lon\n"
                    "2026-03-25T09:00:00Z,Sun,steering,119.7,135,4 W,43 20 N,008 25 W\n"
                    "2026-03-25T09:10:00Z,Sun,steering,121.0,135,4 W,43 20 S,008 25 W\n", encoding="utf-8")
    result = CliRunner().invoke(app, ["compass-book", str(book), "-o", str(tmp_path / "b.pdf")])
    assert result.exit_code == 0, result.output
    assert "WARNING: NOT A CARD TO STEER BY" in result.stdout
    assert re.search(r"WARNING: row 3: deviation \d\d\.\d° [EW] on 135\.0°, more than 10°", result.stdout), result.stdout
    assert "WARNING: row 2" not in result.stdout
    page = " ".join(PdfReader(str(tmp_path / "b.pdf")).pages[0].extract_text().split())
    assert "NOT A CARD TO STEER BY" in page and "row 3: deviation" in page
    sample = CliRunner().invoke(app, ["compass-book", BOOK])
    assert "WARNING" not in sample.stdout  # a swing through eight headings, deviations of a few degrees


def test_one_compass_check_with_a_huge_deviation_says_so():
    """navred compass with a bearing 20° off the Sun's true azimuth: the deviation is printed and flagged (a wrong
    time, DR, body, variation or heading is likelier than such a compass); a bearing 2° off is not flagged."""
    base = ["compass", "Sun", "--utc", "2026-03-26T17:30:00Z", "--lat", "43 20 N", "--lon", "013 10 W",
            "--variation", "-4", "--heading", "215"]
    from navred.jobs.compasswork import bearing_check

    true = bearing_check("Sun", "2026-03-26T17:30:00Z", 43 + 20 / 60, -(13 + 10 / 60)).zn_deg
    for off, flagged in ((20.0, True), (-2.0, False)):
        result = CliRunner().invoke(app, base + ["--compass-bearing", f"{(true + 4.0 + off) % 360:.1f}"])
        assert result.exit_code == 0, result.output
        assert ("WARNING: a deviation over 10°" in result.stdout) == flagged, result.stdout


def test_the_compass_books_card_is_read_by_days_card(tmp_path):
    """Trial finding: the card `navred compass-book ... -o card.csv` wrote was refused by `navred days --card`
    ("not a deviation card navred keeps"): the ship's own swing could not feed her DR. One format now: the book's CSV
    holds the card's columns. Round trip: a compass course of 265° C entered without its deviation is made true by
    the book's card: the deviation within 0.5° of the one planted at 265° (scripts/make_compass_book.py; the book's
    readings are noisy); the gyro's rows give none; `navred compass --card` adds a check to the same file and keeps
    the book's columns."""
    import math
    import re

    card = tmp_path / "card.csv"
    made = CliRunner().invoke(app, ["compass-book", BOOK, "-o", str(card)])
    assert made.exit_code == 0, made.output
    log = tmp_path / "dr.csv"
    log.write_text("utc,entry,dr_lat,dr_lon,compass_course,variation,speed\n"
                   "2026-07-01T00:00:00Z,departure,50 00.0 N,020 00.0 W,265,12 W,6\n"
                   "2026-07-01T14:00:00Z,course,,,265,12 W,6\n")
    days = CliRunner().invoke(app, ["days", str(log), "--card", str(card)])
    assert days.exit_code == 0, days.output
    from navred import read_sight_log
    from navred.io.cards import deviation_curve

    entries = read_sight_log(log, deviation=deviation_curve(card)).entries
    working = entries.iloc[0]["course_working"]
    found = re.search(r"deviation (\d+\.?\d*)° ([EW]) \(the card's\)", working)
    assert found, working
    value = float(found.group(1)) * (1 if found.group(2) == "E" else -1)
    h = math.radians(265.0)
    planted = (PLANTED["A"] + PLANTED["B"] * math.sin(h) + PLANTED["C"] * math.cos(h) + PLANTED["D"] * math.sin(2 * h)
               + PLANTED["E"] * math.cos(2 * h))
    assert abs(value - planted) <= 0.5, (value, planted)
    assert entries.iloc[0]["course_deg"] == pytest.approx(265.0 + value - 12.0, abs=0.051)
    # the same card takes a check of navred compass, the book's columns kept
    added = CliRunner().invoke(app, ["compass", "Sun", "--utc", "2026-03-25T12:00:00Z", "--lat", "43 20 N", "--lon",
                                     "008 25 W", "--compass-bearing", "170", "--heading", "90", "--variation", "4 W",
                                     "--card", str(card)])
    assert added.exit_code == 0, added.output
    again = pd.read_csv(card)
    assert len(again) == 17 and "remarks" in again.columns and "compass" in again.columns


def test_the_azimuth_tables_at_the_date_line_carry_each_rows_own_zone_and_date():
    """179° E steering 090° at 8 kn (she crosses 180° in the morning): every row's ZD is the nautical zone of the
    DR at its instant (−round(λ/15°), ±12 either side of 180°; common practice; the DR sailed by the test,
    tests/conftest.py rhumb_integrated), and zone date and time + ZD = its UTC."""
    from navred.jobs.compasswork import watch_azimuths
    from tests.conftest import rhumb_integrated

    made = watch_azimuths("2026-12-14", 2, -17.5, 179.0, course_deg=90.0, speed_kn=8.0, eye_height_m=3.0)
    # the DR given is for 00:00 zone time of the date, the ship's clock (ZD −12 at 179° E): 12:00 UTC the day before
    start = np.datetime64("2026-12-14T00:00", "ns") + np.timedelta64(int(-round(179.0 / 15.0)), "h")
    assert "at 00:00 zone time (ZD −12) of 2026-12-14 = 12:00 UTC 13 Dec, then 090.0° at 8.0 kn" in made.start
    zones = set()
    for table in (made.sun, made.twilight):
        for r in table.to_dict("records"):
            utc = np.datetime64(r["utc"].replace(" ", "T"), "ns")
            _, lon = rhumb_integrated(-17.5, 179.0, 90.0, 8.0 * (utc - start) / np.timedelta64(1, "h"))
            lon = (float(lon) + 180.0) % 360.0 - 180.0
            assert r["zone_description_h"] == float(np.clip(-np.round(lon / 15.0), -12, 12)), (r, lon)
            back = np.datetime64(f"{r['zone_date']}T{r['zone_time']}", "ns") + np.timedelta64(
                int(r["zone_description_h"] * 60), "m")
            assert back == utc, r
            zones.add(r["zone_description_h"])
    assert zones == {-12.0, 12.0}
