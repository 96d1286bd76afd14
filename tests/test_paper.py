"""navred paper: the printed backup checked as a navigator would use it, from the PDF's own text.

References: skyfield (apparent places of date, GAST, topocentric altitudes; tests/conftest.py) for the
hourly values and the stars, and for the sextant readings of the whole reductions; the PDF's text is
read back with pypdf. Every number a check uses is parsed from the page, never taken from navred.
"""

from __future__ import annotations

import hashlib
import math
import re

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from navred.cli import app
from navred.io.cautions import CAUTION
from tests.conftest import (
    ARCMIN,
    angle_diff_deg,
    frozen,
    offset_position,
    rhumb_integrated,
    sky_star,
    skyfield_sight,
)

FIRST, LAST = "2025-06-10", "2025-06-11"
START_LAT, START_LON = 40.0, -20.0  # the DR at 00:00 zone time of the first date (ZD +1 at 20° W: 01:00 UTC)
COURSE, SPEED = 90.0, 5.0
EYE_M, INDEX_ERROR = 2.8, 1.4
#: the ship is 3 nm north-east of her DR all the passage (the truth the reductions must find)
TRUTH_BEARING, TRUTH_OFFSET_NM = 45.0, 3.0
PLANETS = ("Venus", "Mars", "Jupiter", "Saturn")
ANGLE = re.compile(r"^(−?)(\d+)° (\d\d\.\d)′(?: ([NSEW]))?$")


def angle(text: str) -> float:
    """A printed angle ('123° 45.6′', '02° 07.4′ S', '−0° 12.0′') in signed degrees (north and east +)."""
    match = ANGLE.match(text.strip())
    assert match, f"not a printed angle: {text!r}"
    sign, degrees, minutes, side = match.groups()
    value = int(degrees) + float(minutes) / 60.0
    return -value if sign or side in ("S", "W") else value


def number(text: str) -> float:
    return float(text.replace("−", "-"))


@pytest.fixture(scope="module")
def paper(tmp_path_factory):
    """The paper of a two-day passage, made by the command line, with its PDF's text page by page."""
    from pypdf import PdfReader

    folder = tmp_path_factory.mktemp("paper")
    pdf, tables = folder / "passage.pdf", folder / "tables"
    result = CliRunner().invoke(app, [
        "paper", "--from", FIRST, "--to", LAST, "--lat", "40 00 N", "--lon", "020 00 W", "--course", str(COURSE),
        "--speed", str(SPEED), "--eye", f"{EYE_M} m", "--index-error", f"{INDEX_ERROR} on", "-o", str(pdf),
        "--tables", str(tables)])
    assert result.exit_code == 0, result.output
    pages = [page.extract_text() for page in PdfReader(str(pdf)).pages]
    return {"pdf": pdf, "tables": tables, "pages": pages, "output": result.output}


def lines_of(page: str) -> list[str]:
    return [line.strip() for line in page.split("\n") if line.strip()]


def page_titled(paper, title: str) -> list[str]:
    # a line that begins with the title (the cover names the pages by their titles, within its lines)
    found = [lines_of(p) for p in paper["pages"] if any(line.startswith(title) for line in lines_of(p))]
    assert found, f"no page titled {title!r}"
    return found[0]


# --- reading the printed tables back -------------------------------------------------------------

def hourly_rows(paper, date: str) -> list[list[str]]:
    """The 25 rows of a date's hourly page, 17 cells each (the Moon's two changes empty at hour 24)."""
    import datetime as dt

    long_date = dt.date.fromisoformat(date).strftime("%A %d %B %Y").replace(" 0", " ")
    lines = page_titled(paper, f"Hourly GHA and Dec, {long_date}")
    start = lines.index("00")
    rows, k = [], start
    for hour in range(25):
        assert lines[k] == f"{hour:02d}", lines[k]
        width = 17 if hour < 24 else 15
        cells = lines[k:k + width]
        if hour == 24:
            cells = cells[:5] + [""] + cells[5:6] + [""] + cells[6:]
        rows.append(cells)
        k += width
    return rows


COLUMN = {"Aries": 1, "Sun": 2, "Moon": 4, "Venus": 9, "Mars": 11, "Jupiter": 13, "Saturn": 15}


def printed_hourly(paper) -> dict:
    """{body: (hours UTC as datetime64, GHA printed, Dec printed)} over the passage, read from the pages."""
    out = {body: ([], [], []) for body in COLUMN}
    days = pd.date_range(FIRST, LAST, freq="D")
    for d, day in enumerate(days):
        rows = hourly_rows(paper, str(day.date()))
        for hour, row in enumerate(rows):
            if hour == 24 and d < len(days) - 1:
                continue  # the next page begins with the same instant
            when = np.datetime64(str(day.date()), "ns") + np.timedelta64(hour, "h")
            for body, column in COLUMN.items():
                out[body][0].append(when)
                out[body][1].append(angle(row[column]))
                out[body][2].append(angle(row[column + (2 if body == "Moon" else 1)]) if body != "Aries" else np.nan)
    return {body: (np.array(t), np.array(g), np.array(d)) for body, (t, g, d) in out.items()}


def as_the_page_instructs(hours, values, when, gha: bool):
    """value = value at the hour + f × (next − this), f the fraction of the hour; for a GHA add 360° to the
    next when it is the smaller (the rule printed on the cover and on every hourly page)."""
    row = ((when - hours[0]) // np.timedelta64(1, "h")).astype(int)
    f = ((when - hours[row]) / np.timedelta64(1, "s")) / 3600.0
    this, following = values[row], values[row + 1]
    if gha:
        following = np.where(following < this, following + 360.0, following)
        return (this + f * (following - this)) % 360.0
    return this + f * (following - this)


def random_instants(n: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    start = np.datetime64(FIRST, "ns")
    span_s = (np.datetime64(LAST, "ns") + np.timedelta64(1, "D") - start) / np.timedelta64(1, "s")
    return start + (rng.uniform(0, span_s - 1, n) * 1e9).astype("timedelta64[ns]")


def sky_gha_dec(ts, eph, target, body: str, when: np.ndarray):
    """skyfield's apparent GHA and Dec of date (GHA = GAST − RA), frozen per batch of instants."""
    digest = hashlib.sha1(when.astype(np.int64).tobytes()).hexdigest()[:16]

    def compute():
        t = ts.from_datetimes(pd.DatetimeIndex(when).tz_localize("UTC").to_pydatetime())
        if body == "Aries":
            return list((t.gast * 15.0) % 360.0) + [0.0] * len(when)
        ra, dec, _ = eph["earth"].at(t).observe(target).apparent().radec(epoch="date")
        return list((t.gast * 15.0 - ra.hours * 15.0) % 360.0) + list(dec.degrees)

    values = np.asarray(frozen(f"paper-gha-dec|{body}|{digest}", compute))
    return values[:len(when)], values[len(when):]


def sky_targets(eph):
    return {"Sun": eph["sun"], "Moon": eph["moon"], "Venus": eph["venus"], "Mars": eph["mars"],
            "Jupiter": eph["jupiter barycenter"], "Saturn": eph["saturn barycenter"], "Aries": None}


# --- the checks --------------------------------------------------------------------------------

def test_interpolating_the_printed_hours_reproduces_skyfield(paper, ts, eph):
    """Reference: skyfield's apparent GHA (GAST − RA of date) and Dec at 300 random instants of the passage,
    against the printed hourly values read from the PDF and interpolated as the page instructs: within
    0.1′ for the Sun, Aries and the planets, 0.3′ for the Moon (the issue's tolerances)."""
    printed = printed_hourly(paper)
    targets = sky_targets(eph)
    worst = {}
    for body in COLUMN:
        when = random_instants(300, seed=len(body))
        hours, gha, dec = printed[body]
        ours_gha = as_the_page_instructs(hours, gha, when, gha=True)
        sky_gha, sky_dec = sky_gha_dec(ts, eph, targets[body], body, when)
        tolerance = 0.3 if body == "Moon" else 0.1
        gha_error = np.abs(angle_diff_deg(ours_gha, sky_gha)) / ARCMIN
        worst[body] = gha_error.max()
        assert gha_error.max() <= tolerance, (body, gha_error.max())
        if body != "Aries":
            dec_error = np.abs(as_the_page_instructs(hours, dec, when, gha=False) - sky_dec) / ARCMIN
            assert dec_error.max() <= tolerance, (body, dec_error.max())
    assert worst["Moon"] > 0.02  # the check sees the rounding: it is not comparing a table with itself


def star_places_printed(paper) -> dict:
    """{star: (SHA, Dec)} from the stars page (one block of dates for this two-day passage)."""
    lines = page_titled(paper, "The stars: SHA and Dec")
    from navred.stars import star_table

    names = set(star_table().name)
    out = {}
    for k, line in enumerate(lines):
        if line in names and k + 3 < len(lines) and ANGLE.match(lines[k + 2]):
            out[line] = (angle(lines[k + 2]), angle(lines[k + 3]))
    assert len(out) == len(names)
    return out


def test_stars_from_the_printed_aries_and_sha_reproduce_skyfield(paper, ts, eph):
    """Reference: skyfield's apparent GHA and Dec of every navigational star (a skyfield Star from the same
    Hipparcos 2 row), at 300 random (star, instant) pairs: GHA Aries interpolated from the hourly pages
    plus the printed SHA, and the printed Dec, within 0.1′. Polaris is the exception the page names: its
    SHA moves 0.4′ a day, so its GHA is checked by what it does to its altitude, at most 0.01′."""
    printed = printed_hourly(paper)
    stars = star_places_printed(paper)
    rng = np.random.default_rng(5)
    names = np.array(sorted(stars))
    chosen = names[rng.integers(names.size, size=300)]
    when = random_instants(300, seed=9)
    hours, aries, _ = printed["Aries"]
    gha_aries = as_the_page_instructs(hours, aries, when, gha=True)
    errors = []
    for star in np.unique(chosen):
        rows = chosen == star
        sky_gha, sky_dec = sky_gha_dec(ts, eph, sky_star(ts, star), star, when[rows])
        sha, dec = stars[star]
        gha_error = np.abs(angle_diff_deg((gha_aries[rows] + sha) % 360.0, sky_gha)) / ARCMIN
        if star == "Polaris":
            gha_error = gha_error * math.cos(math.radians(dec))
        errors.append(gha_error.max())
        assert gha_error.max() <= 0.1, (star, gha_error.max())
        assert np.abs(dec - sky_dec).max() / ARCMIN <= 0.1, star
    assert max(errors) > 0.02


@pytest.mark.parametrize("which", ["paper", "route_paper", "log_paper"])
def test_every_page_is_headed_with_its_dates_provenance_and_caution(which, request):
    """Every page of the departure's, the route's and the log's paper, the DR's page and the blank forms too."""
    made = request.getfixturevalue(which)
    assert len(made["pages"]) >= 12
    for number_, page in enumerate(made["pages"], start=1):
        flat = " ".join(page.split())
        assert f"valid {FIRST} to {LAST} (UTC dates)" in flat, number_
        assert "JPL DE421" in flat and "ERFA" in flat and "Hipparcos 2" in flat, number_
        assert " ".join(CAUTION.split()) in flat, number_
        assert f"page {number_}" in flat


@pytest.mark.parametrize("which", ["paper", "route_paper", "log_paper"])
def test_the_csv_tables_carry_the_printed_values(which, request):
    """Every row of every CSV table appears, cell by cell in order, in the PDF's extracted text (the route's legs
    and the log's DR changes too)."""
    paper = request.getfixturevalue(which)
    text = "\n".join(lines for page in paper["pages"] for lines in [page])
    compact = "\n".join(line.strip() for line in text.split("\n") if line.strip())
    files = sorted(paper["tables"].glob("*.csv"))
    assert {"paper": "noon-sun", "route_paper": "route", "log_paper": "dr-changes"}[which] in {f.stem for f in files}
    assert {f.stem.split("-")[0] for f in files} >= {"hourly", "stars", "dip", "refraction", "moon", "sights", "noon",
                                                      "polaris", "sun"}
    checked = 0
    for path in files:
        table = pd.read_csv(path, dtype=str, keep_default_na=False)
        assert all(re.fullmatch(r"[a-z0-9_]+", c) for c in table.columns), path.name
        for row in table.itertuples(index=False):
            cells = [c for c in row if c]
            assert "\n".join(cells) in compact, (path.name, cells)
            checked += 1
    assert checked > 300


def test_the_pdf_text_is_extractable_with_its_symbols(paper):
    flat = "\n".join(paper["pages"])
    for symbol in ("°", "′", "−", "Δ", "●"):
        assert symbol in flat, symbol


def truth(when) -> tuple[float, float]:
    """The ship's true position: her DR (the track the paper was planned on: from 00:00 zone time at 20° W, the
    ship's clock, ZD = −round(λ / 15°) = +1 (common practice), 01:00 UTC, on the course and speed) moved 3 nm on
    045°; sailed in the test on WGS 84 and offset by the spherical direct formula (tests/conftest.py), not by
    navred."""
    start = np.datetime64(FIRST, "ns") + np.timedelta64(int(-round(START_LON / 15)) * 3600, "s")
    hours = (np.datetime64(when, "ns") - start) / np.timedelta64(1, "h")
    lat, lon = rhumb_integrated(START_LAT, START_LON, COURSE, SPEED * hours)
    bearing = np.radians(TRUTH_BEARING)
    return offset_position(float(lat), float(lon), TRUTH_OFFSET_NM * np.cos(bearing), TRUTH_OFFSET_NM * np.sin(bearing))


def interpolated_row(rows: list[list[str]], x: float) -> float:
    """Linear interpolation in a printed two-column table (argument, value)."""
    xs = np.array([number(r[0]) for r in rows])
    ys = np.array([number(r[1]) for r in rows])
    return float(np.interp(x, xs, ys))


def two_column_table(lines: list[str], title: str, rows_after: int = 2) -> list[list[str]]:
    k = lines.index(title) + 1 + rows_after
    rows = []
    while k + 1 < len(lines) and re.fullmatch(r"[0-9.]+", lines[k]) and re.fullmatch(r"[0-9.]+", lines[k + 1]):
        rows.append([lines[k], lines[k + 1]])
        k += 2
    return rows


def reduced_from_the_pages(paper, ts, eph, truth_of, run_of, sights_title: str, noon_date: str) -> tuple[float, float]:
    """A star fix and a noon Sun worked only from the PDF's text, as a navigator with a pencil would: the evening
    twilight's recommended stars and DR from ``sights_title``'s page, the hourly GHA Aries, the stars' SHA and
    Dec, the dip and refraction tables, the calculator's formulas; the noon Sun of ``noon_date`` from the noon
    page, the hourly Sun's Dec and the Sun's SD. The sextant readings are skyfield's at ``truth_of(when)``;
    ``run_of(when)`` is the (course, speed) the pages give for the run between sights. Returns the misses (nm)
    of the star fix and of the noon latitude."""
    lines = page_titled(paper, "Altitude corrections: dip and refraction")
    dip = interpolated_row(two_column_table(lines, "Dip (subtract)"), EYE_M)
    refraction_rows = two_column_table(lines, "Refraction at 10 °C, 1010 hPa (subtract)")
    printed = printed_hourly(paper)
    stars = star_places_printed(paper)
    sights = page_titled(paper, sights_title)
    heading = next(line for line in sights if line.startswith("Evening twilight: planned"))
    utc_text = re.search(r"(\d\d):(\d\d) UTC, from DR (.+′ [NS]) (.+′ [EW])", heading)
    planned = np.datetime64(f"{FIRST}T{utc_text.group(1)}:{utc_text.group(2)}", "ns")
    ap_lat, ap_lon = angle(utc_text.group(3)), angle(utc_text.group(4))
    start = sights.index(heading)
    chosen = [sights[k - 1] for k in range(start, len(sights)) if sights[k] == "●" and sights[k - 1] in stars]
    assert len(chosen) >= 3, chosen
    hours, aries, _ = printed["Aries"]
    intercepts, azimuths, late_h = [], [], []
    for k, star in enumerate(chosen):
        when = planned + np.timedelta64(2 + 2 * k, "m")
        true_lat, true_lon = truth_of(when)
        sight = skyfield_sight(ts, eph, star, when, true_lat, true_lon, eye_height_m=EYE_M,
                               index_error_arcmin=INDEX_ERROR)
        hs = round(sight["hs"] * 600) / 600  # read to 0.1′
        ha = hs - (INDEX_ERROR + dip) / 60.0
        ho = ha - interpolated_row(refraction_rows, ha) / 60.0
        gha = (as_the_page_instructs(hours, aries, np.array([when]), gha=True)[0] + stars[star][0]) % 360.0
        lha, dec = math.radians((gha + ap_lon) % 360.0), math.radians(stars[star][1])
        phi = math.radians(ap_lat)
        sin_hc = math.sin(phi) * math.sin(dec) + math.cos(phi) * math.cos(dec) * math.cos(lha)
        hc = math.asin(sin_hc)
        z = math.degrees(math.acos((math.sin(dec) - math.sin(phi) * sin_hc) / (math.cos(phi) * math.cos(hc))))
        zn = z if math.degrees(lha) > 180.0 else 360.0 - z
        intercepts.append((ho - math.degrees(hc)) * 60.0)
        azimuths.append(zn)
        late_h.append((when - planned) / np.timedelta64(1, "h"))
    # every line moved to the last sight's time for the run on the course and speed the pages give
    course, speed = run_of(planned)
    fix_time_h = max(late_h)
    zn = np.radians(azimuths)
    run = [(fix_time_h - t) * speed for t in late_h]
    advanced = np.array(intercepts) + np.array(run) * np.cos(zn - math.radians(course))
    # the lines' crossing by least squares: intercept = north cos Zn + east sin Zn
    design = np.column_stack([np.cos(zn), np.sin(zn)])
    north, east = np.linalg.lstsq(design, advanced, rcond=None)[0]  # from the DR the lines were worked from
    fix_lat = ap_lat + north / 60.0
    fix_lon = ap_lon + east / 60.0 / math.cos(math.radians(fix_lat))
    true_lat, true_lon = truth_of(planned + np.timedelta64(int(fix_time_h * 3600), "s"))
    star_miss = math.hypot((fix_lat - true_lat) * 60.0, (fix_lon - true_lon) * 60.0 * math.cos(math.radians(true_lat)))
    # the noon Sun: the time and the Sun's Dec and SD from the pages
    noon_lines = page_titled(paper, "The noon Sun: local apparent noon along the DR")
    k = noon_lines.index(noon_date)
    noon_utc = np.datetime64(f"{noon_lines[k + 4]}T{noon_lines[k + 3]}", "ns")  # the UTC and its UTC date
    bearing = noon_lines[k + 10]
    figures = page_titled(paper, "Altitude corrections: the Moon, the Sun and the planets")
    sun_sd = number(figures[figures.index(noon_date) + 1])
    # the highest reading of the lower limb, a reading every 10 s for 20 minutes about the printed noon
    readings = []
    for seconds in range(-600, 601, 10):
        when = noon_utc + np.timedelta64(seconds, "s")
        true_lat, true_lon = truth_of(when)
        readings.append((skyfield_sight(ts, eph, "Sun", when, true_lat, true_lon, limb="lower", eye_height_m=EYE_M,
                                        index_error_arcmin=INDEX_ERROR)["hs"], when))
    hs, when = max(readings, key=lambda r: r[0])
    hs = round(hs * 600) / 600
    ha = hs - (INDEX_ERROR + dip) / 60.0
    ho = ha + (-interpolated_row(refraction_rows, ha) + sun_sd + 0.15 * math.cos(math.radians(ha))) / 60.0
    hours, _, sun_dec = printed["Sun"]
    dec = float(as_the_page_instructs(hours, sun_dec, np.array([when]), gha=False)[0])
    latitude = dec + (90.0 - ho) if bearing == "S" else dec - (90.0 - ho)
    return star_miss, abs(latitude - truth_of(when)[0]) * 60.0


def test_a_star_fix_and_a_noon_sun_worked_only_from_the_pdf_land_within_a_mile(paper, ts, eph):
    """Reference: skyfield's sextant readings (tests/conftest.py skyfield_sight: topocentric altitude,
    skyfield's refraction, dip 1.76′ √h, the index error) at the ship's true position; every number of
    the reduction read from the PDF's text: the twilight's recommended stars and DR, the hourly GHA
    Aries, the stars' SHA and Dec, the dip and refraction tables, the noon time, the Sun's Dec and SD;
    the calculator's formulas of the formulas page. Within 1 nm of the truth (the issue's check)."""
    cover = " ".join(paper["pages"][0].split())
    course, speed = (float(v) for v in re.search(r"then (\d+\.\d)° true at (\d+\.\d) kn", cover).groups())
    star_miss, noon_miss = reduced_from_the_pages(paper, ts, eph, truth, lambda when: (course, speed),
                                                  "Sights for Tuesday 10 June 2025", LAST)
    print(f"star fix {star_miss:.2f} nm, noon latitude {noon_miss:.2f} nm from the truth")
    assert star_miss < 1.0 and noon_miss < 1.0, (star_miss, noon_miss)


def test_the_command_refuses_before_the_work(tmp_path):
    runner = CliRunner()
    base = ["paper", "--from", FIRST, "--to", LAST, "--lat", "40 N", "--lon", "20 W"]
    for extra, words in (
            (["-o", str(tmp_path / "a.xlsx")], "accepted: .pdf"),
            (["-o", str(tmp_path / "missing" / "a.pdf")], "does not exist"),
            (["--eye", "3", "-o", str(tmp_path / "a.pdf")], "metres or feet"),
            ([], "give -o FILE.pdf"),
            (["--count", "7", "-o", str(tmp_path / "a.pdf")], "3, 4 or 5")):
        result = runner.invoke(app, base + extra)
        assert result.exit_code == 1 and words in result.output, (extra, result.output)
        assert not (tmp_path / "a.pdf").exists()
    result = runner.invoke(app, ["paper", "--from", LAST, "--to", FIRST, "--lat", "40 N", "--lon", "20 W", "-o",
                                 str(tmp_path / "a.pdf")])
    assert result.exit_code == 1 and "before it begins" in result.output


def test_the_caution_goes_to_stderr_once(paper):
    assert paper["output"].count(CAUTION) == 1


# --- A route passage and a log passage: the pages follow the DR sailed in the test's own code ------------------

#: The route sailed from (40° N, 20° W), each leg (course °T, nautical miles) steered as a rhumb line; the waypoints
#: are where the test's own integration of each leg ends (tests/conftest.py rhumb_integrated, RK4 on WGS 84).
ROUTE_LEGS = ((120.0, 36.0), (60.0, 108.0), (200.0, 150.0))
ROUTE_SPEED = 6.0
#: She leaves the first waypoint at 00:00 zone time of the first date at 20° W (ZD +1, −round(λ / 15°): common
#: practice): 01:00 UTC.
ROUTE_DEPART = np.datetime64(FIRST, "ns") + np.timedelta64(60, "m")


def route_waypoints() -> list[tuple[float, float]]:
    points = [(START_LAT, START_LON)]
    for course, distance in ROUTE_LEGS:
        points.append(tuple(float(v) for v in rhumb_integrated(*points[-1], course, distance)))
    return points


def sailed(when, start_ns, start_lat, start_lon, legs) -> tuple[float, float]:
    """The DR at ``when`` of a ship at (start_lat, start_lon) at ``start_ns`` (before it: lying there), then on each
    leg (hours, course °T, speed kn over the ground; the last runs on): the test's own RK4 rhumb line of each."""
    hours = (np.datetime64(when, "ns") - start_ns) / np.timedelta64(1, "h")
    lat, lon = start_lat, start_lon
    for duration, course, speed in legs:
        if hours <= 0:
            break
        step = min(hours, duration)
        lat, lon = (float(v) for v in rhumb_integrated(lat, lon, course, speed * step))
        hours -= step
    return lat, lon


def route_dr_truth(when) -> tuple[float, float]:
    """The route's DR: lying at the first waypoint until she leaves it, each leg at the route's speed, lying at the
    last waypoint after she arrives."""
    legs = [(distance / ROUTE_SPEED, course, ROUTE_SPEED) for course, distance in ROUTE_LEGS] + [(1e9, 0.0, 0.0)]
    return sailed(when, ROUTE_DEPART, START_LAT, START_LON, legs)


def route_ship_truth(when) -> tuple[float, float]:
    """The ship on the route: 3 nm north-east of her DR, as the departure passage's ship."""
    lat, lon = route_dr_truth(when)
    bearing = np.radians(TRUTH_BEARING)
    return offset_position(lat, lon, TRUTH_OFFSET_NM * np.cos(bearing), TRUTH_OFFSET_NM * np.sin(bearing))


def water_and_current(course, speed, set_, drift) -> tuple[float, float]:
    """Course and speed over the ground of a ship's course and speed through the water and a current: the sum of
    the two velocities (the current triangle, common practice)."""
    north = speed * math.cos(math.radians(course)) + drift * math.cos(math.radians(set_))
    east = speed * math.sin(math.radians(course)) + drift * math.sin(math.radians(set_))
    return math.degrees(math.atan2(east, north)) % 360.0, math.hypot(north, east)


#: A log kept with entry rows: the departure after the paper begins (she lies at her berth before it), changes of
#: course and speed, a current, and a position entered that restarts the DR.
LOG_ROWS = (
    ("2025-06-10T06:00:00Z", "departure", "40 00.0 N", "020 00.0 W", "70", "6.0", "", ""),
    ("2025-06-10T15:30:00Z", "course", "", "", "130", "7.0", "", ""),
    ("2025-06-10T23:00:00Z", "current", "", "", "", "", "200", "1.2"),
    ("2025-06-11T09:00:00Z", "position", "40 05.0 N", "018 10.0 W", "", "", "", ""),
    ("2025-06-11T12:00:00Z", "course", "", "", "250", "5.0", "", ""),
)


def log_dr_truth(when) -> tuple[float, float]:
    """The log's DR sailed in the test: the legs between its entries, over the ground, restarted at the position
    entered."""
    at = {row[0][:16]: np.datetime64(row[0][:19], "ns") for row in LOG_ROWS}
    restart = at["2025-06-11T09:00"]
    current = water_and_current(130.0, 7.0, 200.0, 1.2)
    if np.datetime64(when, "ns") < restart:
        legs = [(9.5, 70.0, 6.0), (7.5, 130.0, 7.0), (1e9, *current)]
        return sailed(when, at["2025-06-10T06:00"], START_LAT, START_LON, legs)
    legs = [(3.0, *current), (1e9, *water_and_current(250.0, 5.0, 200.0, 1.2))]
    return sailed(when, restart, 40.0 + 5.0 / 60.0, -(18.0 + 10.0 / 60.0), legs)


def make_paper(folder, extra: list[str]) -> dict:
    """A two-day paper made by the command line, with its PDF's text page by page and its tables' folder."""
    from pypdf import PdfReader

    pdf, tables = folder / "passage.pdf", folder / "tables"
    result = CliRunner().invoke(app, ["paper", "--from", FIRST, "--to", LAST, "--eye", f"{EYE_M} m", "--index-error",
                                      f"{INDEX_ERROR} on", "-o", str(pdf), "--tables", str(tables)] + extra)
    assert result.exit_code == 0, result.output
    pages = [page.extract_text() for page in PdfReader(str(pdf)).pages]
    return {"pdf": pdf, "tables": tables, "pages": pages, "output": result.output}


@pytest.fixture(scope="module")
def route_paper(tmp_path_factory):
    """The paper of the route, given as a list of waypoints written by hand (degrees and minutes to 0.0001′)."""
    folder = tmp_path_factory.mktemp("route")
    lines = ["name,lat,lon"]
    for k, (lat, lon) in enumerate(route_waypoints()):
        lines.append(f"{['Start', 'Turn one', 'Turn two', 'Far end'][k]},"
                     f"{int(abs(lat))} {abs(lat) % 1 * 60:.4f} {'N' if lat >= 0 else 'S'},"
                     f"{int(abs(lon)):03d} {abs(lon) % 1 * 60:.4f} {'E' if lon >= 0 else 'W'}")
    (folder / "waypoints.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return make_paper(folder, ["--route", str(folder / "waypoints.csv"), "--speed", str(ROUTE_SPEED)])


@pytest.fixture(scope="module")
def log_paper(tmp_path_factory):
    """The paper of the log kept with entry rows."""
    folder = tmp_path_factory.mktemp("log")
    rows = ["utc,entry,dr_lat,dr_lon,course,speed,set,drift"] + [",".join(row) for row in LOG_ROWS]
    (folder / "log.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    return make_paper(folder, ["--log", str(folder / "log.csv")])


def nearest_instant(hhmm: str, near: np.datetime64) -> np.datetime64:
    """The instant of a printed UTC hh:mm on the date that puts it nearest ``near``."""
    candidates = [np.datetime64(f"{near.astype('datetime64[D]') + np.timedelta64(d, 'D')}T{hhmm}", "ns")
                  for d in (-1, 0, 1)]
    return min(candidates, key=lambda c: abs(c - near))


def printed_rounds(paper) -> list[dict]:
    """Every twilight planned on the sight pages: its UTC, the DR printed with it, its nautical and civil twilight
    (from the page's text), and its bodies (from the page's table, whose CSV carries the printed cells)."""
    flat = " ".join(" ".join(page.split()) for page in paper["pages"])
    out = []
    for path in sorted(paper["tables"].glob("sights-*.csv")):
        stamp = path.stem[len("sights-"):]
        utc = np.datetime64(f"{stamp[:10]}T{stamp[11:13]}:{stamp[13:15]}", "ns")
        hhmm = f"{stamp[11:13]}:{stamp[13:15]}"
        where = re.search(rf"planned \d\d:\d\d zone time \([^)]*\), {hhmm} UTC, from DR (\S+ \S+ [NS]) (\S+ \S+ [EW])",
                          flat)
        times = re.search(rf"(Nautical|Civil) twilight (\d\d:\d\d) UTC, (?:civil|nautical) (\d\d:\d\d) UTC\. For a "
                          rf"sight m minutes after {hhmm} UTC", flat)
        assert where and times, stamp

        out.append({"utc": utc, "lat": angle(where.group(1)), "lon": angle(where.group(2)),
                    "nautical": nearest_instant(times.group(2 if times.group(1) == "Nautical" else 3), utc),
                    "civil": nearest_instant(times.group(3 if times.group(1) == "Nautical" else 2), utc),
                    "bodies": pd.read_csv(path, dtype=str, keep_default_na=False)})
    return out


def printed_noons(paper) -> pd.DataFrame:
    return pd.read_csv(paper["tables"] / "noon-sun.csv", dtype=str, keep_default_na=False)


def miss_nm(lat1, lon1, lat2, lon2) -> float:
    return math.hypot((lat1 - lat2) * 60.0, (lon1 - lon2) * 60.0 * math.cos(math.radians(lat2)))


def check_the_pages_follow(paper, dr_of, ts, eph) -> dict:
    """The DR printed with every twilight and noon against ``dr_of`` (the test's own), and what is planned there
    against skyfield at that DR (the references are named at each check). Returns counts, for the caller to
    require that each kind of check was made."""
    counts = {"rounds": 0, "stars": 0, "bodies": 0, "noons": 0}
    for round_ in printed_rounds(paper):
        lat, lon = dr_of(round_["utc"])
        # the DR printed is the test's, to its printing (0.1′)
        assert miss_nm(round_["lat"], round_["lon"], lat, lon) <= 0.08, (round_["utc"], round_["lat"], round_["lon"])
        # the twilights printed to the minute: skyfield's Sun (its centre's altitude, topocentric, airless) at the
        # test's DR is then within half a minute's change of −12° and −6°
        for key, level in (("nautical", -12.0), ("civil", -6.0)):
            when = round_[key]
            at_lat, at_lon = dr_of(when)
            now = skyfield_sight(ts, eph, "Sun", when, at_lat, at_lon)["true_alt_deg"]
            later = skyfield_sight(ts, eph, "Sun", when + np.timedelta64(1, "m"), *dr_of(
                when + np.timedelta64(1, "m")))["true_alt_deg"]
            assert abs(now - level) <= 0.5 * abs(later - now) + 0.01, (key, when, now)
        for row in round_["bodies"].itertuples(index=False):
            limb = row.limb.split(" ")[0] if row.body in ("Sun", "Moon") else ""
            # skyfield's sextant reading at the test's DR at the planned minute (tests/conftest.py skyfield_sight)
            sight = skyfield_sight(ts, eph, row.body, round_["utc"], lat, lon, limb=limb, eye_height_m=EYE_M,
                                   index_error_arcmin=INDEX_ERROR)
            assert abs(angle(row.hs_preset) - sight["hs"]) / ARCMIN <= 1.0, (row.body, round_["utc"])
            assert abs(angle_diff_deg(float(row.zn_deg), sight["true_az_deg"])) <= 0.1, (row.body, round_["utc"])
            if row.body not in ("Moon", "Venus", "Mars", "Jupiter", "Saturn"):
                # a star: the printed Hc is skyfield's airless altitude at the test's DR (no parallax)
                assert abs(angle(row.hc) - sight["true_alt_deg"]) / ARCMIN <= 0.2, (row.body, round_["utc"])
                counts["stars"] += 1
            counts["bodies"] += 1
        counts["rounds"] += 1
    for noon in printed_noons(paper).itertuples(index=False):
        when = np.datetime64(f"{noon.date}T{noon.utc}", "ns")
        lat, lon = dr_of(when)
        assert miss_nm(angle(noon.dr_lat), angle(noon.dr_lon), lat, lon) <= 0.08, noon
        # skyfield: the Sun's hour angle at the test's DR at the printed minute is within half a minute of time
        gha, _ = sky_gha_dec(ts, eph, eph["sun"], "Sun", np.array([when]))
        assert abs(angle_diff_deg(gha[0] + lon, 0.0)) <= 0.5 * 0.25 + 0.01, (noon.date, gha[0] + lon)
        sight = skyfield_sight(ts, eph, "Sun", when, lat, lon, limb="lower", eye_height_m=EYE_M,
                               index_error_arcmin=INDEX_ERROR)
        assert abs(angle(noon.hs_preset_lower_limb) - sight["hs"]) / ARCMIN <= 1.0, noon.date
        counts["noons"] += 1
    return counts


def test_a_route_passage_follows_the_legs_sailed_in_the_test(route_paper, ts, eph):
    """The route's DR sailed in the test (RK4 on WGS 84, tests/conftest.py rhumb_integrated) against every DR
    printed, and skyfield at that DR against the twilights, noons, Hs to preset, Hc and Zn printed."""
    counts = check_the_pages_follow(route_paper, route_dr_truth, ts, eph)
    assert counts["rounds"] == 4 and counts["noons"] == 2 and counts["stars"] > 40, counts
    # the ship moved: the twilights are planned on different legs, away from the first waypoint
    rounds = printed_rounds(route_paper)
    assert miss_nm(rounds[0]["lat"], rounds[0]["lon"], rounds[-1]["lat"], rounds[-1]["lon"]) > 80.0


def test_the_route_page_lists_the_legs_and_their_times(route_paper):
    """The route page: each waypoint as written, the rhumb course and length of each leg, and the time she
    reaches it at the speed; the course and length checked against the legs the test sailed (RK4)."""
    table = pd.read_csv(route_paper["tables"] / "route.csv", dtype=str, keep_default_na=False)
    assert table.waypoint.tolist() == ["Start", "Turn one", "Turn two", "Far end"]
    for k, (course, distance) in enumerate(ROUTE_LEGS):
        assert abs(float(table.course_to_next_deg[k]) - course) <= 0.05, k
        assert abs(float(table.leg_nm[k]) - distance) <= 0.05, k
    arrive = ROUTE_DEPART + np.timedelta64(int(sum(d for _, d in ROUTE_LEGS) / ROUTE_SPEED * 3600), "s")
    assert table.utc.iloc[-1] == str(arrive.astype("datetime64[m]")).replace("T", " ")
    assert table.utc.iloc[0] == "2025-06-10 01:00"


def test_a_sight_worked_from_a_route_passages_pages_lands_within_a_mile(route_paper, ts, eph):
    """As the departure passage's check (skyfield's sextant readings at the ship's true position, 3 nm from the
    route's DR; every number read from the PDF's text), the lines advanced on the leg the route page gives."""
    table = pd.read_csv(route_paper["tables"] / "route.csv", dtype=str, keep_default_na=False)
    leaves = np.array([np.datetime64(t.replace(" ", "T"), "ns") for t in table.utc])

    def run_of(when):
        k = int(np.searchsorted(leaves, when, side="right")) - 1
        return float(table.course_to_next_deg[k]), ROUTE_SPEED

    star_miss, noon_miss = reduced_from_the_pages(route_paper, ts, eph, route_ship_truth, run_of,
                                                  "Sights for Tuesday 10 June 2025", LAST)
    print(f"route passage: star fix {star_miss:.2f} nm, noon latitude {noon_miss:.2f} nm from the truth")
    assert star_miss < 1.0 and noon_miss < 1.0, (star_miss, noon_miss)


def test_a_log_passage_follows_the_dr_the_log_keeps(log_paper, ts, eph):
    """The log's DR sailed in the test between its entries (RK4, the current added as the current triangle, the
    DR restarted at the position entered) against every DR printed, and skyfield at that DR against the
    twilights, noons, Hs to preset, Hc and Zn printed. The first morning is before the departure: she lies at
    the departure position."""
    counts = check_the_pages_follow(log_paper, log_dr_truth, ts, eph)
    assert counts["rounds"] == 4 and counts["noons"] == 2 and counts["stars"] > 40, counts
    first = printed_rounds(log_paper)[0]
    assert first["utc"] < np.datetime64("2025-06-10T06:00", "ns")
    assert miss_nm(first["lat"], first["lon"], START_LAT, START_LON) < 0.01
    changes = pd.read_csv(log_paper["tables"] / "dr-changes.csv", dtype=str, keep_default_na=False)
    assert changes.utc.tolist() == [row[0][:16].replace("T", " ") for row in LOG_ROWS]
    assert changes.what[0] == "departure at row 2" and changes.what[3] == "position at row 5"


def test_a_two_waypoint_route_gives_the_departure_passages_sight_pages(paper, tmp_path):
    """One DR, two ways in: a route of two waypoints on the departure passage's rhumb line, at its speed and
    leaving at its time, prints the same twilights, DRs, sights and noons."""
    far = rhumb_integrated(START_LAT, START_LON, COURSE, 2000.0)
    (tmp_path / "two.csv").write_text(f"lat_deg,lon_deg\n{START_LAT},{START_LON}\n{far[0]:.10f},{far[1]:.10f}\n",
                                      encoding="utf-8")
    route = make_paper(tmp_path, ["--route", str(tmp_path / "two.csv"), "--speed", str(SPEED)])
    assert sorted(p.name for p in route["tables"].glob("sights-*")) == sorted(
        p.name for p in paper["tables"].glob("sights-*"))
    for path in paper["tables"].glob("sights-*.csv"):
        assert path.read_text() == (route["tables"] / path.name).read_text(), path.name
    assert (paper["tables"] / "noon-sun.csv").read_text() == (route["tables"] / "noon-sun.csv").read_text()


def test_the_dr_is_given_one_way_and_refused_two(tmp_path):
    """Two DRs at once, or a route without its speed, or a course that a route or log already gives: refused
    before the work, in one line saying what to give."""
    (tmp_path / "r.csv").write_text("lat,lon\n40 N,20 W\n41 N,19 W\n", encoding="utf-8")
    (tmp_path / "log.csv").write_text("utc,entry,dr_lat,dr_lon,course,speed,vessel\n"
                                      "2025-06-10T06:00:00Z,departure,40 N,20 W,90,6,Alpha\n"
                                      "2025-06-10T06:00:00Z,departure,41 N,20 W,90,6,Bravo\n", encoding="utf-8")
    pdf = str(tmp_path / "a.pdf")
    base = ["paper", "--from", FIRST, "--to", LAST, "-o", pdf]
    for extra, words in (
            (["--lat", "40 N", "--lon", "20 W", "--route", str(tmp_path / "r.csv"), "--speed", "6"], "give one"),
            (["--route", str(tmp_path / "r.csv")], "give --speed"),
            (["--route", str(tmp_path / "r.csv"), "--speed", "6", "--course", "90"], "leave out --course"),
            (["--log", str(tmp_path / "log.csv"), "--speed", "6"], "leave out --course and --speed"),
            (["--log", str(tmp_path / "log.csv")], "name the one to plan for with --vessel"),
            (["--log", str(tmp_path / "log.csv"), "--vessel", "Charlie"], "it keeps Alpha, Bravo"),
            (["--lat", "40 N", "--lon", "20 W", "--depart", "2025-06-10T06:00Z"], "a fixed position does not depart"),
            (["--log", str(tmp_path / "log.csv"), "--vessel", "Bravo", "--depart", "2025-06-10T06:00Z"],
             "a log gives its own departure"),
            (["--lat", "40 N", "--lon", "20 W", "--vessel", "Alpha"], "give it with --log"),
            (["--lat", "40 N"], "needs both --lat and --lon"),
            (["--lat", "40 N", "--lon", "20 W", "--course", "225"], "--course without --speed"),
            (["--lat", "40 N", "--lon", "20 W", "--speed", "6"], "--speed without --course"),
            ([], "give the DR to plan along"),
            (["--route", str(tmp_path / "r.csv"), "--speed", "6", "-o", str(tmp_path / "r.csv")], "inputs")):
        result = CliRunner().invoke(app, base + extra)
        assert result.exit_code == 1 and words in result.output, (extra, result.output)
        assert not (tmp_path / "a.pdf").exists()
    result = CliRunner().invoke(app, base + ["--log", str(tmp_path / "log.csv"), "--vessel", "Bravo"])
    assert result.exit_code == 0, result.output
    assert "warning: no --eye given: every Hs to preset is for a height of eye of 0 m" in result.stderr


# --- The blank hand-working forms: the sight book's pages, printed -------------------------------------------------

def test_the_blank_forms_are_the_sight_books_pages_line_for_line(paper, tmp_path):
    """Each blank form of the paper holds, in order, the lines of one working of its page of the sight book that
    `navred mark --template` writes (read back from the workbook): the two cannot drift apart. Every page of the
    sight book is printed (the Sun, the Moon, stars, planets, noon, Polaris, the compass check), and its lines
    are in the PDF's text in that order."""
    from openpyxl import load_workbook

    from navred.io.printed import Side, Table
    from navred.jobs.paper import passage_paper

    result = CliRunner().invoke(app, ["mark", "--template", str(tmp_path / "book.xlsx")])
    assert result.exit_code == 0, result.output
    book = load_workbook(tmp_path / "book.xlsx")
    document = passage_paper(FIRST, LAST, START_LAT, START_LON, course_deg=COURSE, speed_kn=SPEED).document
    forms = [page for page in document.pages if page.title.startswith("Hand working: ")]
    titles = ["Sun", "Moon", "Stars", "Planets", "Noon", "Polaris", "Compass"]
    assert len(forms) == len(titles)
    for title, form in zip(titles, forms):
        # the template's first working: column A from "Working 1" to the row before "Working 2"
        labels = [row[0] for row in book[title].iter_rows(min_col=1, max_col=2, values_only=True)]
        first = labels.index("Working 1")
        template = [label for label in labels[first + 1:labels.index("Working 2")] if label]
        prefilled = {row[0]: row[1] for row in book[title].iter_rows(min_row=first + 2, max_col=2, values_only=True)
                     if row[0] in ("Method", "Body")}
        halves = next(block for block in form.blocks if isinstance(block, Side)).blocks
        assert all(isinstance(h, Table) for h in halves)
        printed = [row[0] for half in halves for row in half.rows]
        assert printed == template, title
        for half in halves:
            for row in half.rows:
                if row[0] in prefilled:
                    assert row[1:] == (prefilled[row[0]] or "",) * 3, (title, row)
        assert f"sight book's {title} page" in " ".join(b.text for b in form.blocks if hasattr(b, "text"))
    # in the PDF's text, each form's labels in the template's order
    for title, form in zip(titles, forms):
        page = next(lines_of(p) for p in paper["pages"] if form.title in " ".join(p.split()))
        halves = next(block for block in form.blocks if isinstance(block, Side)).blocks
        labels = [row[0] for half in halves for row in half.rows]
        text = iter(page)
        assert all(any(label == line for line in text) for label in labels), title


def test_the_forms_say_how_this_paper_gives_the_almanacs_lines(paper):
    """A line an almanac gives otherwise (the increment, the v correction, the Polaris correction) is explained on
    the form where it appears, and only there."""
    flat = {title: " ".join(p.split()) for p in paper["pages"] for title in
            ("the Sun, by the intercept method", "latitude by Polaris", "stars, by the intercept method")
            if f"Hand working: {title}" in " ".join(p.split())}
    assert "f × (next hour − this hour)" in flat["the Sun, by the intercept method"]
    assert "no 1° to take off" in flat["latitude by Polaris"]
    assert "no 1° to take off" not in flat["the Sun, by the intercept method"]
    assert "the stars page" in flat["stars, by the intercept method"]


def test_the_sight_book_prints_blank_as_the_papers_forms(paper, tmp_path):
    """`navred mark --template book.pdf`: the same forms, without the paper's notes, each form's lines in the PDF's
    text in the template's order (pypdf)."""
    from pypdf import PdfReader

    from navred.io.markingbook import block_lines
    from navred.io.markingpages import FORM_TITLES
    from navred.io.sightbook import PAGES

    result = CliRunner().invoke(app, ["mark", "--template", str(tmp_path / "book.pdf")])
    assert result.exit_code == 0, result.output
    pages = [" ".join(p.extract_text().split()) for p in PdfReader(str(tmp_path / "book.pdf")).pages]
    assert len(pages) == 1 + len(PAGES)
    for title, text in zip(PAGES, pages[1:]):
        assert f"Hand working: {FORM_TITLES[title]}" in text and "With this paper" not in text
        position = 0
        for line in block_lines(PAGES[title]):
            found = text.find(line.label, position)
            assert found >= 0, (title, line.label)
            position = found + len(line.label)
        assert " ".join(CAUTION.split()) in text


def test_a_dr_that_misses_the_papers_dates_is_warned_of(tmp_path, paper):
    """A route left after the paper's last day or finished before its first, a log that begins after it or whose
    last known position is days old: the paper is made, and says so on the console and on its first page, under
    a warning heading (every page would be planned at one place, or from a DR far from the ship). A passage
    whose DR covers its dates has no such heading."""
    from navred.errors import NavredWarning
    from navred.jobs.paper import passage_paper

    def cover(made) -> str:
        return " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))

    (tmp_path / "r.csv").write_text("lat,lon\n40 N,20 W\n40 N,19 W\n", encoding="utf-8")
    (tmp_path / "log.csv").write_text("utc,entry,dr_lat,dr_lon,course,speed\n"
                                      "2025-06-01T06:00:00Z,departure,40 N,20 W,90,6\n", encoding="utf-8")
    for words, call in (
            ("after the paper's last day", lambda: passage_paper(FIRST, FIRST, route=tmp_path / "r.csv", speed_kn=6.0,
                                                                 depart="2025-06-12T00:00Z")),
            ("before the paper's first day", lambda: passage_paper(FIRST, FIRST, route=tmp_path / "r.csv",
                                                                   speed_kn=6.0, depart="2025-06-01T00:00Z")),
            ("carried 8.7 days", lambda: passage_paper(FIRST, FIRST, log=tmp_path / "log.csv")),
            ("comes after the paper's last day", lambda: passage_paper("2025-05-20", "2025-05-21",
                                                                       log=tmp_path / "log.csv"))):
        with pytest.warns(NavredWarning, match=words):
            made = call()
        assert made.dr.warnings and words in made.dr.warnings[0]
        printed = cover(made)
        assert "WARNING: check the DR before using these pages" in printed and words in printed, printed
    assert "WARNING" not in " ".join(paper["pages"][0].split())


@pytest.mark.parametrize("lat, lon, date, words, extreme", [
    (60.17, -5.0, "2026-06-20", "does not go 12° below the horizon at the DR (no nautical twilight)",
     ("lowest", -12.0, -6.0)),
    (70.0, 20.0, "2026-06-20", "the Sun does not set at the DR", ("lowest", 0.0, 90.0)),
    (75.0, 20.0, "2026-12-20", "does not come up to 6° below the horizon at the DR (no civil twilight)",
     ("highest", -12.0, -6.0)),
    (85.0, 20.0, "2026-12-20", "stays more than 12° below the horizon at the DR all day", ("highest", -90.0, -12.0))])
def test_a_day_without_a_twilight_round_says_why(lat, lon, date, words, extreme, ts, eph):
    """A day's sight page with no twilight round says which twilight does not happen (never a page that is
    silently empty). Reference: skyfield's geometric altitude of the Sun's centre at the position every 5 minutes
    of the local day: its lowest within the range the page's words imply (above −12° but below −6°; above the
    horizon), or, in the polar night, its highest (between −12° and −6°; below −12°)."""
    from skyfield.api import wgs84

    from navred.jobs.paper import passage_paper

    made = passage_paper(date, date, lat, lon)
    page = next(p for p in made.document.pages if p.title.startswith("Sights for"))
    text = " ".join(block.text for block in page.blocks if hasattr(block, "text"))
    assert text.count(words) == 2, text  # morning and evening
    assert "No morning twilight round" in text and "No evening twilight round" in text
    start = np.datetime64(date, "ns") - np.timedelta64(int(lon / 15.0 * 3600), "s")
    when = start + np.arange(0, 24 * 60 + 1, 5) * np.timedelta64(60, "s")
    digest = hashlib.sha1(when.astype(np.int64).tobytes()).hexdigest()[:16]

    def compute():
        t = ts.from_datetimes(pd.DatetimeIndex(when).tz_localize("UTC").to_pydatetime())
        altitude, _, _ = (eph["earth"] + wgs84.latlon(lat, lon)).at(t).observe(eph["sun"]).apparent().altaz()
        return list(altitude.degrees)

    altitude = np.asarray(frozen(f"paper-sun-altitude|{lat}|{lon}|{digest}", compute))
    which, low, high = extreme
    found = altitude.min() if which == "lowest" else altitude.max()
    assert low < found < high, (which, found)


@pytest.mark.parametrize("lon, first_table_date, last_table_date", [
    (150.0, "2026-12-13", "2026-12-15"), (179.0, "2026-12-13", "2026-12-15"), (-170.0, "2026-12-14", "2026-12-16")])
def test_far_east_or_west_the_hourly_pages_take_in_every_planned_sight(lon, first_table_date, last_table_date):
    """At 150° E the first local morning's twilight falls on the UTC date before the first (the paper failed
    there), at 170° W the last evening's on the date after: the hourly pages take that date in, every planned
    round and noon lies within them, the header and the cover say which UTC dates, and the worked sight is made."""
    from navred.jobs.paper import passage_paper

    made = passage_paper("2026-12-14", "2026-12-15", -17.5, lon)
    hours = made.hourly.hours
    assert str(hours[0].astype("datetime64[D]")) == first_table_date
    assert str((hours[-1] - np.timedelta64(1, "h")).astype("datetime64[D]")) == last_table_date
    times = [t.presets.utc for t in made.twilights] + [n.utc for n in made.noons]
    assert len(made.twilights) == 4 and len(made.noons) == 2
    assert all(hours[0] <= t and t + np.timedelta64(15, "m") <= hours[-1] for t in times)
    assert made.document.valid_for == f"{first_table_date} to {last_table_date} (UTC dates)"
    cover = " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))
    assert f"The hourly pages run over the UTC dates {first_table_date} to {last_table_date}" in cover
    titles = [page.title for page in made.document.pages]
    assert sum(title.startswith("Hourly GHA and Dec") for title in titles) == 3
    formulas = next(page for page in made.document.pages if page.title.startswith("The calculator's formulas"))
    assert any("intercept" in getattr(block, "text", "") and "nm" in getattr(block, "text", "")
               for block in formulas.blocks)


def test_the_moons_change_of_dec_is_printed_with_its_sign(paper):
    """ΔDec beside the Moon's Dec carries its sign both ways (north +), and is the next hour's printed Dec less this
    hour's (so that f × ΔDec is added as printed, in north or south declination)."""
    checked = 0
    for day in (FIRST, LAST):
        rows = hourly_rows(paper, day)
        for this, following in zip(rows[:-1], rows[1:]):
            cell = this[7]
            assert re.fullmatch(r"[+−]\d+\.\d|0\.0", cell), cell
            change = (angle(following[6]) - angle(this[6])) * 60.0
            assert abs(float(cell.replace("−", "-")) - change) <= 0.051, (cell, change)
            checked += 1
    assert checked == 48


DEPART = np.datetime64("2025-06-10T09:30", "ns")


def test_a_departure_at_the_hour_she_sails(tmp_path, ts, eph):
    """--depart with a position, course and speed: she lies at the position until then (the first morning is
    planned there), then sails on; every DR printed follows the one sailed in the test (RK4), and what is planned
    there is skyfield's (as for the route and the log)."""
    made = make_paper(tmp_path, ["--lat", "40 N", "--lon", "20 W", "--course", str(COURSE), "--speed", str(SPEED),
                                 "--depart", "2025-06-10T10:30+01:00"])

    def truth(when):
        return sailed(when, DEPART, START_LAT, START_LON, [(1e9, COURSE, SPEED)])

    counts = check_the_pages_follow(made, truth, ts, eph)
    assert counts["rounds"] == 4 and counts["noons"] == 2, counts
    first = printed_rounds(made)[0]
    assert first["utc"] < DEPART and miss_nm(first["lat"], first["lon"], START_LAT, START_LON) < 0.01
    assert "where she lies until she departs at 2025-06-10 09:30 UTC" in " ".join(made["pages"][0].split())


def test_the_sight_pages_say_the_rate_holds_either_side_of_the_planned_time(paper):
    """The rate and bend are centred on the planned time: each round's note says how to work a sight before it
    (m negative), and each body's span is printed both ways (±N) or 'do not use'."""
    rounds = printed_rounds(paper)
    for page in paper["pages"]:
        flat = " ".join(page.split())
        if "Morning twilight: planned" in flat or "Evening twilight: planned" in flat:
            count = flat.count("Morning twilight: planned") + flat.count("Evening twilight: planned")
            assert flat.count("(m negative before it): Hc = Hc + m × (Hc ′/min + m × bend)") == count, flat[:200]
            assert "Only after the planned time" not in flat
    for round_ in rounds:
        holds = round_["bodies"]["rate_holds_minutes"]
        assert holds.str.fullmatch(r"±\d+|do not use: formulas").all(), holds.tolist()
    assert len(rounds) == 4


def test_a_log_kept_in_zone_time_gives_the_paper_its_zone(tmp_path):
    """A log whose sights are written in zone time with ZD +2 (not the +1 of its longitude): the paper's zone times
    are the log's clocks (ZT = UTC − 2 h), and the cover says so; --zone still chooses another."""
    from navred.jobs.paper import passage_paper

    (tmp_path / "log.csv").write_text("date,zone_time,zone_description,entry,dr_lat,dr_lon,course,speed,body,limb,hs,"
                                      "eye_height_m\n"
                                      "2025-06-10,08:00,+2,departure,40 N,20 W,90,6,,,,\n"
                                      "2025-06-10,10:00,+2,,,,,,Sun,lower,45 00.0,3\n", encoding="utf-8")
    made = passage_paper(FIRST, LAST, log=tmp_path / "log.csv")
    assert made.dr.zone_h == 2.0
    for noon in made.noons:
        assert noon.zone_h == 2.0
    cover = " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))
    assert "zone description +2 throughout (the zone the log keeps" in cover, cover
    page = next(p for p in made.document.pages if p.title.startswith("Sights for"))
    text = " ".join(block.text for block in page.blocks if hasattr(block, "text"))
    found = re.search(r"Noon: the Sun on the meridian at (\d\d):(\d\d) zone time \(\+2\), (\d\d):(\d\d) UTC", text)
    assert found, text
    zone_h, zone_m, utc_h, utc_m = (int(v) for v in found.groups())
    assert (utc_h * 60 + utc_m) - (zone_h * 60 + zone_m) == 120
    other = passage_paper(FIRST, LAST, log=tmp_path / "log.csv", zone_description_h=1.0)
    assert all(noon.zone_h == 1.0 for noon in other.noons)


@pytest.mark.parametrize("course, lon, titles", [
    (90.0, 179.0, ["Sights for Monday 14 December 2026",
                   "Sights for Sunday 13 December 2026 (over the date line: the date goes back a day)",
                   "Sights for Monday 14 December 2026 (the date again: over the date line)"]),
    (270.0, -179.0, ["Sights for Monday 14 December 2026",
                     "Sights for Tuesday 15 December 2026 (over the date line: the date goes forward a day)",
                     "Sights for Wednesday 16 December 2026"]),
])
def test_over_the_date_line_the_paper_dates_each_round_by_its_zone_date_as_the_plan_does(course, lon, titles):
    """Trial finding: at 180° the paper grouped its pages by the ship's local day while the plan dated each round
    by its zone date. Both now keep one rule: each event on the page of the zone date of its own instant in its
    own zone (ZT = UTC − ZD; ZD −12 east of 180°, +12 west of it: common practice), eastbound the date going back
    (a date lived twice), westbound forward. 17° 30′ S, 1° from the line, at 8 kn both ways; the plan
    (navred.jobs.bridge.bridge_plan) of the same passage names each round by the same date and zone."""
    from navred.jobs.bridge import bridge_plan, hm, zone_date, zone_time
    from navred.jobs.paper import passage_paper

    made = passage_paper("2026-12-14", "2026-12-16", -17.5, lon, course_deg=course, speed_kn=8.0, eye_height_m=3.0)
    pages = [p for p in made.document.pages if p.title.startswith("Sights for")]
    assert [p.title for p in pages][:3] == titles
    plan = bridge_plan("2026-12-14", 3, -17.5, lon, course_deg=course, speed_kn=8.0, eye_height_m=3.0)
    by_plan = {str(r.presets.utc.astype("datetime64[m]")): (r.label.split(", ", 1)[1].split(" (ZD ")[0], r.zone_h) for r in plan.rounds}
    planned, differs = [], 0
    texts = [" ".join(block.text for block in page.blocks if hasattr(block, "text")) for page in pages]
    # the zone of each page's events (the ZD printed with each round and noon), and the pages the date line
    # touches: a page whose zone is 12 h or more from the page before or after it (ZD −12 against +12), and the
    # second page of a date lived twice (the trial's second "Thursday 10 December" page)
    zones = [{float(z.replace("−", "-")) for z in re.findall(r"zone time \(([+−]\d+)\)", text)} for text in texts]
    dates = [page.title[len("Sights for "):].split(" (")[0] for page in pages]
    touched = [any(abs(a - b) >= 12 for m in (k - 1, k + 1) if 0 <= m < len(zones) for a in zones[k] for b in zones[m])
               or dates[k] in dates[:k] for k in range(len(zones))]
    assert sum(touched) >= 2, [p.title for p in pages]
    for page, text, line_page in zip(pages, texts, touched):
        date = page.title[len("Sights for "):].split(" (")[0]
        for hhmm, zone, utc, on in re.findall(r"twilight: planned (\d\d:\d\d) zone time \(([+−]\d+)\), (\d\d:\d\d) "
                                              r"UTC( \d+ \w\w\w)?, from DR", text):
            twilight = next(t for t in made.twilights if hm(t.presets.utc) == utc
                            and long_date_of(zone_date(t.presets.utc, t.zone_h)) == date)
            assert hm(zone_time(twilight.presets.utc, twilight.zone_h)) == hhmm
            # the UTC carries its UTC date wherever that is not the page's (zone) date, and on every page the
            # date line touches (trial finding: there a time alone is read on the wrong date), and the page
            # names the hourly page to open: that of the UTC date (ZT = UTC − ZD, common practice)
            when = pd.Timestamp(twilight.presets.utc).round("min")
            dated = line_page or long_date_of(when.date()) != date
            assert on == (f" {when.day} {when:%b}" if dated else ""), (date, utc, on)
            differs += bool(on)
            assert f"GHA and Dec: the hourly page of {long_date_of(when.date())}" in text
            assert float(zone.replace("−", "-")) == twilight.zone_h
            key = str(twilight.presets.utc.astype("datetime64[m]"))
            planned.append(key)
            if key in by_plan:  # the plan names the same round by the same date and zone
                assert by_plan[key] == (date, twilight.zone_h), (key, by_plan[key], date)
        for hhmm, zone, on in re.findall(r"Noon: the Sun on the meridian at (\d\d:\d\d) zone time \(([+−]\d+)\), "
                                         r"\d\d:\d\d UTC( \d+ \w\w\w)?", text):
            noon = next(n for n in made.noons if hm(zone_time(n.utc, n.zone_h)) == hhmm
                        and float(zone.replace("−", "-")) == n.zone_h)
            assert long_date_of(noon.zone_date) == date
            when = pd.Timestamp(noon.utc).round("min")
            dated = line_page or long_date_of(when.date()) != date
            assert on == (f" {when.day} {when:%b}" if dated else ""), (date, hhmm, on)
            differs += bool(on)
        # no UTC time on the page without its date where that is another, or anywhere on a page the line
        # touches (the civil and nautical times too)
        for stamp, on in re.findall(r"(\d\d:\d\d) UTC( \d+ \w\w\w)?", text):
            assert line_page <= bool(on), (date, stamp)
            assert any(pd.Timestamp(t).round("min").strftime("%H:%M") == stamp
                       and (line_page or long_date_of(pd.Timestamp(t).round("min").date()) != date) == bool(on)
                       for t in [x for tw in made.twilights for x in (tw.presets.utc, tw.nautical, tw.civil)]
                       + [n.utc for n in made.noons]), (date, stamp, on)
    assert differs >= 2  # the line cuts the days: a round or noon on another UTC date than its page, each way
    # the noon Sun page dates each noon the same way
    noon_page = next(p for p in made.document.pages if p.title.startswith("The noon Sun"))
    table = next(block for block in noon_page.blocks if hasattr(block, "rows"))
    # ZT = UTC − ZD (common practice), worked here
    assert [row[0] for row in table.rows] == [str((pd.Timestamp(n.utc) - pd.Timedelta(hours=n.zone_h)).date())
                                              for n in made.noons]
    assert [row[2] for row in table.rows] == [f"ZD {'+' if n.zone_h > 0 else '−'}{abs(n.zone_h):g}"
                                              for n in made.noons]
    # and gives each noon's UTC date beside its UTC (the Dec comes from the hourly page of that date)
    assert [(row[3], row[4]) for row in table.rows] == [
        (f"{pd.Timestamp(n.utc).round('min'):%H:%M}", str(pd.Timestamp(n.utc).round("min").date())) for n in made.noons]
    assert table.csv_columns[3:5] == ("utc", "utc_date")
    # a page the line cuts says where its other round and noon are
    first = " ".join(block.text for block in pages[0].blocks if hasattr(block, "text"))
    assert f"round: on the page of {titles[1][len('Sights for '):].split(' (')[0]}, across the date line" in first
    # every round once, on one page; each day's zone east of 180° −12, west of it +12
    assert len(planned) == len(set(planned)) == len(made.twilights)
    assert len(set(planned) & set(by_plan)) >= 4
    for t in made.twilights:
        assert t.zone_h == (-12.0 if t.presets.lon_deg > 172.5 else 12.0 if t.presets.lon_deg < -172.5 else t.zone_h)


def long_date_of(day) -> str:
    from navred.jobs.bridge import long_date

    return long_date(day)


def test_a_change_signed_plus_is_written_to_the_csv_and_anything_else_formula_like_is_refused():
    """Trial finding: a passage whose Moon moves north (its hourly Dec change printed +15.8) lost every CSV table
    ('could be taken for a formula'). A cell that is only a signed number is what a spreadsheet reads as that
    number (common practice); a cell that could run as a formula is still refused, never written changed."""
    from navred.errors import NavredError
    from navred.io.printed import Table, table_csv

    table = Table(columns=("hour", "Δ Dec"), rows=(("00", "+15.8"), ("01", "−3.8")), name="moon",
                  csv_columns=("hour", "d_dec_arcmin"))
    assert table_csv(table).splitlines() == ["hour,d_dec_arcmin", "00,+15.8", "01,−3.8"]
    for bad in ("+15.8+cmd|' /C calc'!A0", "=1+1", "-2+3", "@SUM(1)"):
        with pytest.raises(NavredError, match="could be taken for a formula"):
            table_csv(Table(columns=("a",), rows=((bad,),), name="x", csv_columns=("a",)))


@pytest.mark.parametrize("lat, course, speed, kept", [
    (-14.0, 250.0, 7.0, False),  # the trial's passage: 14° S to 17° S, Polaris never up
    (-6.0, 0.0, 0.0, False),  # at anchor 6° S: south of the rule's 5° S
    (-4.0, 0.0, 0.0, True),  # at anchor 4° S: Polaris still below, but within the margin
    (-8.0, 0.0, 10.0, True),  # from 8° S north at 10 kn: past 5° S within the four days
    (40.0, 90.0, 6.0, True),
])
def test_the_polaris_page_and_form_are_left_out_where_polaris_never_rises(lat, course, speed, kept):
    """Trial finding: a passage at 14°-17° S carried the Polaris table and its working form, though Polaris is
    never above the horizon there. Its altitude is the latitude within its polar distance, about 0.6° (common
    practice), so south of about 0.6° S it is below the horizon; the paper prints its page and form where the DR
    comes as far north as 5° S at any hour of the passage (a margin for a DR a few degrees out), and otherwise
    says in one line why they are left out (on the cover; the stars page no longer points to them)."""
    from navred.jobs.paper import POLARIS_FROM_LAT_DEG, passage_paper

    assert POLARIS_FROM_LAT_DEG == -5.0
    made = passage_paper("2026-12-06", "2026-12-09", lat, -173.5, course_deg=course, speed_kn=speed,
                         eye_height_m=3.0)
    titles = [page.title for page in made.document.pages]
    cover = " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))
    stars = " ".join(block.text for page in made.document.pages if page.title == "The stars: SHA and Dec"
                     for block in page.blocks if hasattr(block, "text"))
    note = "No Polaris page or Polaris form: the DR stays south of 5° S all passage"
    # the DR's northernmost latitude, by the test: 4 days at 10 kn north is 960′ = 16° (common practice: a
    # minute of latitude is a mile)
    northmost = lat + (speed * 24 * 4 / 60.0 if course == 0.0 else 0.0)
    assert (northmost >= -5.0) == kept
    assert ("Latitude by Polaris" in titles) == kept
    assert ("Hand working: latitude by Polaris" in titles) == kept
    assert (note in cover) == (not kept)
    assert ("Latitude by Polaris ·" in cover) == kept
    assert ("for its latitude use the Polaris table" in stars) == kept
    assert ("Polaris is below the horizon all this passage" in stars) == (not kept)
    assert "Hand working: stars, by the intercept method" in titles  # the other forms stay


def parallel_dr_lon_deg(lat_deg: float, lon0_deg: float, course_deg: float, speed_kn: float, hours) -> np.ndarray:
    """The rhumb-line DR due east or west (090° or 270°): the rhumb line is the parallel, so the ship makes
    speed × hours miles along it, and Δλ = distance / (ν cos φ), ν = a / √(1 − e² sin² φ) the radius of curvature
    in the prime vertical (the radius of a parallel is ν cos φ: Snyder 1987, Map Projections — A Working Manual,
    USGS Professional Paper 1395, ch. 3-4); a and f of WGS 84 from geographiclib, 1852 m to the mile."""
    from geographiclib.geodesic import Geodesic

    a, f = Geodesic.WGS84.a, Geodesic.WGS84.f
    e2 = f * (2.0 - f)
    phi = math.radians(lat_deg)
    radius_m = a * math.cos(phi) / math.sqrt(1.0 - e2 * math.sin(phi) ** 2)
    east = 1.0 if course_deg == 90.0 else -1.0
    lon = lon0_deg + east * np.degrees(speed_kn * np.asarray(hours, dtype=float) * 1852.0 / radius_m)
    return (lon + 180.0) % 360.0 - 180.0


@pytest.mark.parametrize("lon0, course, zone_words, start_utc", [
    (177.0, 90.0, "ZD −12) of 2026-12-10 = 12:00 UTC 9 Dec", "2026-12-09T12:00"),
    (-177.0, 270.0, "ZD +12) of 2026-12-10 = 12:00 UTC 10 Dec", "2026-12-10T12:00"),
])
def test_a_departure_is_at_00_00_zone_time_across_the_date_line(lon0, course, zone_words, start_utc):
    """Trial finding (17° S 177° E 090° 12 kn, and 177° W 270°): the paper's DR from --lat/--lon "at 00:00 local
    time" started at 00:00 local mean time (12:12 and 11:48 UTC), every DR 2.5′ off a DR from the ship's clock.
    It starts at 00:00 zone time (ZD −12 east of 180°, +12 west: −round(λ/15°), common practice), stated on the
    first page in zone time and UTC; every DR printed with a twilight round and a noon is an independent rhumb-line
    DR from that instant (the parallel sailed on the WGS 84 ellipsoid, parallel_dr_lon_deg) to 0.05′, on both sides
    of 180°, and a DR from local mean time would miss it by over 2′."""
    from navred.jobs.paper import passage_paper

    lat0, speed = -17.0, 12.0
    made = passage_paper("2026-12-10", "2026-12-11", lat0, lon0, course_deg=course, speed_kn=speed)
    cover = " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))
    assert f"DR from 17° 00.0′ S {dm_text(lon0)} at 00:00 zone time ({zone_words}, then {course:05.1f}° true" in cover
    start = np.datetime64(start_utc, "ns")
    lmt = np.datetime64("2026-12-10", "ns") - np.timedelta64(int(round(lon0 / 15.0 * 3600)), "s")
    points = [(r.presets.utc, r.presets.lat_deg, r.presets.lon_deg) for r in made.twilights] + [
        (n.utc, n.lat_deg, n.lon_deg) for n in made.noons]
    sides = set()
    for utc, lat, lon in points:
        hours = (np.datetime64(utc, "ns") - start) / np.timedelta64(1, "h")
        expected = float(parallel_dr_lon_deg(lat0, lon0, course, speed, hours))
        assert lat == pytest.approx(lat0, abs=1e-9)
        miss_arcmin = abs(angle_diff_deg(lon, expected)) * 60.0
        assert miss_arcmin < 0.05, (utc, lon, expected)
        by_mean_time = float(parallel_dr_lon_deg(lat0, lon0, course, speed, (np.datetime64(utc, "ns") - lmt)
                                                 / np.timedelta64(1, "h")))
        assert abs(angle_diff_deg(lon, by_mean_time)) * 60.0 > 2.0
        sides.add(lon > 0)
    # DRs on both sides of the line were checked; westbound the 11th is lived from the crossing (about 14:20) on:
    # its noon (12:00 ZD −12) falls before the crossing, never lived, and the 12th is past the last date given
    assert sides == {True, False} and len(made.noons) >= 1
    # the noon page prints the same DR (to its 0.1′)
    noon_table = next(block for page in made.document.pages if page.title.startswith("The noon Sun")
                      for block in page.blocks if hasattr(block, "rows"))
    for row, noon in zip(noon_table.rows, made.noons):
        hours = (np.datetime64(noon.utc, "ns") - start) / np.timedelta64(1, "h")
        printed = parse_lon_text(row[6])
        assert abs(angle_diff_deg(printed, float(parallel_dr_lon_deg(lat0, lon0, course, speed, hours)))) * 60 <= 0.06


def test_a_departure_keeps_the_zone_given_for_its_00_00():
    """With --zone the ship's clock is that zone: 00:00 ZD −11 on the 10th is 13:00 UTC on the 9th, whatever the
    longitude's zone (ZT + ZD = UTC, common practice); the help says the time is zone time, not local."""
    result = CliRunner().invoke(app, ["paper", "--help"], terminal_width=400)
    help_text = " ".join(result.output.split())
    assert "DR latitude at 00:00 zone time of the first date" in help_text and "local time" not in help_text
    from navred.jobs.paper import passage_paper

    made = passage_paper("2026-12-10", "2026-12-10", -17.0, 177.0, course_deg=90.0, speed_kn=12.0,
                         zone_description_h=-11.0)
    cover = " ".join(block.text for block in made.document.pages[0].blocks if hasattr(block, "text"))
    assert "at 00:00 zone time (ZD −11) of 2026-12-10 = 13:00 UTC 9 Dec" in cover
    noon = made.noons[0]
    hours = (np.datetime64(noon.utc, "ns") - np.datetime64("2026-12-09T13:00", "ns")) / np.timedelta64(1, "h")
    assert abs(angle_diff_deg(noon.lon_deg, float(parallel_dr_lon_deg(-17.0, 177.0, 90.0, 12.0, hours)))) * 60 < 0.05


def dm_text(lon: float) -> str:
    """A longitude as the cover prints it: 177° 00.0′ E (whole degrees only, as the tests give them)."""
    return f"{abs(lon):03.0f}° 00.0′ {'E' if lon > 0 else 'W'}"


def parse_lon_text(text: str) -> float:
    """'179° 29.1′ E' as signed degrees (east positive)."""
    found = re.match(r"(\d+)° (\d+\.\d)′ ([EW])", text)
    value = int(found.group(1)) + float(found.group(2)) / 60.0
    return value if found.group(3) == "E" else -value
