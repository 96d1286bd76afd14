"""Marking hand reductions by every method taught: correct workings marked right, planted mistakes named,
the examiner's sense, the cadet's words, the sight book, the template, the CLI.

The workings are synthesized outside navred by scripts/make_class_workings.py, which names each
reference beside its line: the almanac from skyfield (DE421) rounded to 0.1′ as printed, the
increments at the tables' base rates, the altitude corrections by their published formulas (dip
1.76′√h, Bennett's refraction via skyfield, SD and HP from skyfield's distance, HP·cos h, the Moon's
two-part table), the assumed position by the trade's rule, Hc and Z from the spherical triangle at
the whole degrees of Dec rounded as the tables print them (or at the AP or the DR as a calculator
gives them), Zn by the tables' rule from Z as tabulated or interpolated, the meridian altitude and
the ex-meridian (a = 1.9635″ cos L cos d / sin z), Polaris by the script's own solution of the
triangle, the amplitude (sin A = sin d / cos L) and the azimuth. The sights make sense: stars and
planets in nautical twilight, the Sun by day, the noon sights at meridian passage.
"""

from __future__ import annotations

import io
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from navred.errors import NavredError
from navred.jobs.workings import (
    WORKED_FORMS,
    mark_workings,
    marking_csv,
    parse_worked,
    read_workings,
    write_marking_pdf,
    write_marking_workbook,
    write_template,
)
from navred.marking import (
    CAUSES,
    LINE_NAMES,
    LINES,
    METHODS,
    ZONE_OR_DATE,
    catalogue_cause,
    mark,
    tenth,
    z_from_zn,
    zn_from_z,
)

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_class_workings as hand  # noqa: E402  (the independent synthesizer of hand workings)

PLANTED_EACH = 50


@pytest.fixture(scope="module")
def pools(ts, eph):
    """Sights of every method, chosen to make sense (scripts/make_class_workings.py)."""
    return {
        "intercept": hand.make_sights(ts, eph, 500, seed=11),
        "moon": hand.make_sights(ts, eph, 120, seed=21, bodies=["Moon"]),
        "meridian": hand.make_latitude_sights(ts, eph, 200, seed=12),
        "ex-meridian": hand.make_latitude_sights(ts, eph, 200, seed=13, ex=True),
        "polaris": hand.make_polaris_sights(ts, eph, 300, seed=14),
        "amplitude": hand.make_compass_sights(ts, eph, 200, seed=15, amplitude=True),
        "azimuth": hand.make_compass_sights(ts, eph, 400, seed=16, amplitude=False),
    }


def _write(rows: list[dict], folder: Path, stem: str = "workings") -> list[Path]:
    """The workings as hand-kept CSV files, one for heights of eye in metres and one in feet (a header names
    the unit), every other column the same."""
    paths = []
    for feet in (False, True):
        part = [r for r in rows if ("Height of eye (ft)" in r) == feet]
        if part:
            path = folder / f"{stem}_{'ft' if feet else 'm'}.csv"
            pd.DataFrame(part).to_csv(path, index=False)
            paths.append(path)
    return paths


def _correct(ts, eph, pools):
    """A few hundred correct workings: every method in each of its styles (scripts/make_class_workings.py)."""
    rng = np.random.default_rng(3)
    rows, sights, styles = [], [], []
    plan = [("intercept", style, 40) for style in hand.STYLES["intercept"] if style != "two-part"]
    plan += [("moon", "two-part", 40), ("moon", "main", 20)]
    plan += [(m, style, 25) for m in ("meridian", "ex-meridian", "polaris", "amplitude", "azimuth")
             for style in hand.STYLES[m]]
    for pool, style, count in plan:
        for sight in pools[pool][:count] if pool != "intercept" else pools[pool][len(rows) % 97:][:count]:
            lines = hand.work(ts, eph, sight, None, style)
            rows.append(hand.log_row(sight, lines, rng))
            sights.append(sight)
            styles.append(style)
    return rows, sights, styles


def test_correct_workings_by_every_method_are_marked_right_and_nothing_is_noticed(ts, eph, pools, tmp_path):
    """Correct workings by every method (intercept from an AP by the tables with Z tabulated or interpolated,
    the interpolated Z written in the one Z line or on its own line, by a calculator, from the DR; the Moon's one combined or two-part correction; the meridian altitude, the
    ex-meridian, Polaris, the amplitude and the azimuth; every line or only the required ones), read from
    hand-kept files: no line wrong, nothing noticed, the method told from the lines."""
    rows, sights, styles = _correct(ts, eph, pools)
    report = mark_workings(_write(rows, tmp_path))
    assert len(report.rows) == len(rows) >= 600 and report.workings.log.n_rejected_rows == 0
    wrong = report.rows[report.rows.verdict != "right"]
    assert wrong.empty, wrong[["row", "body", "way", "first_wrong_line", "cause", "given", "expected",
                               "noticed"]].head(10).to_string()
    assert report.share_right == 1.0
    assert set(report.rows.method) == set(METHODS)
    ways = report.rows.way.value_counts()
    for words in ("from an AP by the tables", "from an AP", "from the DR by calculator", "the two-part table",
                  "one combined correction", "latitude by Polaris", "compass error by amplitude"):
        assert ways[[words in w for w in ways.index]].sum() >= 20, (words, ways)
    # the spread the issue asks for
    kinds = pd.Series([hand.kind_of(s.body) for s in sights]).value_counts()
    assert set(kinds.index) == {"sun", "moon", "planet", "star"} and kinds.min() >= 20, kinds
    assert sum(s.dr_lat < 0 for s in sights) >= 100 and sum(s.dr_lat > 0 for s in sights) >= 100
    assert sum(s.dr_lon < 0 for s in sights) >= 100 and sum(s.dr_lon > 0 for s in sights) >= 100
    assert sum(s.crosses_midnight for s in sights) >= 30


def _named(cause: str, plant: str) -> bool:
    return cause == CAUSES[plant] or (cause == ZONE_OR_DATE and plant in ("zone sign", "greenwich date"))


def _style_for(plant: str, method: str, rng) -> str:
    """A style in which the planted line is written (a two-part Moon for its own mistakes, some from the DR)."""
    if method != "intercept":
        # the reduction taken off: written positive and subtracted, or written negative and added
        return str(rng.choice(["full", "signed"])) if plant == "reduction sign" else "full"
    return {"upper limb": "two-part", "moon parallax": str(rng.choice(["full", "main", "two-part"])),
            "sd sign": str(rng.choice(["full", "main"])), "lha sign": str(rng.choice(["full", "dr"])),
            "zn rule": str(rng.choice(["full", "interpolated", "z-line", "z-interpolated", "calculator"]))}.get(
        plant, "full")


def test_each_catalogued_mistake_is_named_on_its_line_in_each_method(ts, eph, pools):
    """Every mistake of the catalogue planted 50 times in each method it can be made in (later lines carried
    forward as the cadet would carry them, scripts/make_class_workings.py): named as the first wrong line with
    that cause in at least 95 % of cases, method by method."""
    rng = np.random.default_rng(7)
    sights, workings, planted = [], [], []
    right = {}  # a sight's correct working in a style, worked once for every mistake tried on it (it is the same)
    for plant, methods in hand.PLANTS.items():
        for method in methods:
            pool = pools["moon"] if plant in ("upper limb", "moon parallax") and method == "intercept" else \
                pools[method]
            candidates = []
            for sight in pool:
                style = _style_for(plant, method, rng)
                if (id(sight), style) not in right:
                    right[id(sight), style] = hand.work(ts, eph, sight, None, style)
                if hand.eligible(sight, right[id(sight), style], plant, style):
                    candidates.append((sight, style))
            assert len(candidates) >= PLANTED_EACH, (plant, method, len(candidates))
            for i in rng.choice(len(candidates), size=PLANTED_EACH, replace=False):
                sight, style = candidates[i]
                sights.append(sight)
                workings.append(hand.work(ts, eph, sight, plant, style))
                planted.append((plant, method))
    marks = mark(hand.sights_to_mark(sights), hand.given_arrays(workings))
    table = pd.DataFrame(planted, columns=["plant", "method"])
    table["named"] = [_named(c, p) for c, p in zip(marks.first_cause, table.plant)]
    unseen = table[marks.first_wrong_line == ""]
    assert unseen.empty, unseen.value_counts().to_dict()
    scores = table.groupby(["plant", "method"]).named.mean()
    assert len(scores) == sum(len(m) for m in hand.PLANTS.values())
    assert set(table.plant) == set(CAUSES) - set(hand.PLOT_PLANTS)
    assert (scores >= 0.95).all(), scores[scores < 0.95].to_dict()


def _round_workings(ts, eph, rounds, plant=None):
    """Each round's three workings (from an AP by the tables) with the fix the cadet plotted on the last."""
    rows, sights, groups = [], [], []
    for k, members in enumerate(rounds):
        lines = [hand.work(ts, eph, s, None, "full") for s in members]
        fix = hand.plotted_fix(lines, plant, 0, (members[0].dr_lat, members[0].dr_lon))
        lines[-1] = {**lines[-1], "fix_lat_worked": fix[0], "fix_lon_worked": fix[1]}
        rows += lines
        sights += members
        groups += [f"round {k}"] * len(members)
    return rows, sights, groups


def test_the_plotted_fix_is_judged_against_the_fix_of_the_cadets_own_lines(ts, eph):
    """Rounds of three stars (scripts/make_class_workings.py plots each round by its own least squares): a fix
    plotted from the lines is right; one plotted with an intercept laid off the wrong way, or a line from the
    DR, is named with the line it was made on ("your Sirius line"), each in at least 95 % of rounds."""
    def distinct(members):
        """Each slip moves the plotted fix 2.5 nm or more, from the right fix and from the other slip's fix."""
        lines = [hand.work(ts, eph, s, None, "full") for s in members]
        dr = (members[0].dr_lat, members[0].dr_lon)
        fixes = [np.array(hand.plotted_fix(lines, plant, 0, dr)) for plant in (None, *hand.PLOT_PLANTS)]
        scale = np.array([60.0, 60.0 * np.cos(np.radians(dr[0]))])
        return all(np.hypot(*((a - b) * scale)) >= 2.5 for k, a in enumerate(fixes) for b in fixes[k + 1:])

    rounds = [r for r in hand.make_rounds(ts, eph, 80, seed=31) if distinct(r)]
    assert len(rounds) >= 40
    for plant in (None, *hand.PLOT_PLANTS):
        workings, sights, groups = _round_workings(ts, eph, rounds, plant)
        marks = mark(hand.sights_to_mark(sights, groups), hand.given_arrays(workings))
        last = np.arange(2, len(sights), 3)
        assert len(marks.fixes) == len(rounds) and all(f.lines == 3 for f in marks.fixes)
        if plant is None:
            assert (marks.first_wrong_line == "").all() and (marks.noticed == "").all()
            assert max(f.apart_nm for f in marks.fixes) <= 1.0
        else:
            # the slip is planted on each round's first line (hand.plotted_fix's ``which``)
            named = np.array([cause == f"{CAUSES[plant]} (your {r[0].body} line)"
                              for cause, r in zip(marks.first_cause[last], rounds)])
            assert named.mean() >= 0.95, (plant, marks.first_wrong_line[last][~named], marks.first_cause[last][~named])
            assert set(marks.first_wrong_line[last]) <= {"fix_lat_worked", "fix_lon_worked"}


def test_the_sense_checks_fire_on_what_an_examiner_would_notice(ts, eph, pools):
    """A DR 1,000 nm out (the arithmetic right), a star in daylight, a star after dark, a body below the horizon,
    an ex-meridian too far from noon, a meridian altitude taken off the meridian, an amplitude with the Sun up,
    and a round whose lines cross far from the DR: each marked 'should have been noticed', none wrong."""
    sun = next(s for s in pools["intercept"] if s.body == "Sun" and abs(s.dr_lat) < 40)
    stars = [s for s in pools["intercept"] if hand.kind_of(s.body) == "star"]

    def shifted(wanted):
        """A star's sight moved by whole hours to a time when the Sun's altitude at the DR is ``wanted``."""
        for star in stars:
            for hours in range(1, 24):
                when = star.utc_ns + hours * hand.HOUR_NS
                sun_alt = hand.altitude_at(ts, eph, "Sun", when, star.dr_lat, star.dr_lon)
                if wanted(sun_alt) and hand.altitude_at(ts, eph, star.body, when, star.dr_lat, star.dr_lon) > 10.0:
                    return hand.replace(star, utc_ns=when)
        raise AssertionError("no such time")

    cases = {
        # the DR 1,000 nm (about 16.7°) from where the ship was, the working right from it
        "lies": hand.replace(sun, dr_lat=hand.written(sun.dr_lat + (16.7 if sun.dr_lat < 0 else -16.7))),
        "stars and planets are shot": shifted(lambda h: h > 10.0),  # a star with the Sun up
        "after nautical twilight": shifted(lambda h: h < -20.0),  # a star in the dark
        "below the horizon": hand.replace(sun, utc_ns=sun.utc_ns + 12 * hand.HOUR_NS),
        "too far for an ex-meridian": hand.replace(pools["ex-meridian"][0],
                                                   utc_ns=pools["ex-meridian"][0].utc_ns + 90 * 60 * hand.SECOND_NS),
        "work it as an ex-meridian": hand.replace(pools["meridian"][0],
                                                  utc_ns=pools["meridian"][0].utc_ns + 25 * 60 * hand.SECOND_NS),
        "an amplitude is taken": hand.replace(pools["amplitude"][0],
                                              utc_ns=pools["amplitude"][0].utc_ns + 3 * hand.HOUR_NS),
    }
    sights = list(cases.values())
    workings = [hand.work(ts, eph, s, None, "full") for s in sights]
    marks = mark(hand.sights_to_mark(sights), hand.given_arrays(workings))
    assert (marks.first_wrong_line == "").all(), marks.first_wrong_line
    for k, words in enumerate(cases):
        assert words in marks.noticed[k], (words, marks.noticed[k])
    assert "1,0" in marks.noticed[0] or "9" in marks.noticed[0]  # the miles, written out
    # a round whose lines cross 60 nm from the DR
    rounds = hand.make_rounds(ts, eph, 3, seed=41)
    moved = [[hand.replace(s, dr_lat=hand.written(s.dr_lat + 1.0)) for s in r] for r in rounds]
    workings, sights, groups = _round_workings(ts, eph, moved)
    marks = mark(hand.sights_to_mark(sights, groups), hand.given_arrays(workings))
    assert all("cross" in marks.noticed[i] and "from the DR" in marks.noticed[i] for i in range(2, len(sights), 3))
    assert all(f.from_dr_nm > 30 for f in marks.fixes)


def test_a_slip_is_costed_in_miles(ts, eph, pools):
    """The cost of a slip is how far it moves the position line or the latitude: a 2′ index slip about 2.4 nm
    (twice the index error), a zenith distance named the wrong way twice the zenith distance."""
    sight = next(s for s in pools["intercept"] if abs(s.ie_arcmin) >= 1.0 and s.body == "Sun")
    noon = next(s for s in pools["meridian"])
    workings = [hand.work(ts, eph, sight, "index on off"), hand.work(ts, eph, noon, "zenith name")]
    marks = mark(hand.sights_to_mark([sight, noon]), hand.given_arrays(workings))
    assert abs(abs(marks.cost_nm[0]) - 2 * abs(sight.ie_arcmin)) < 0.5, marks.cost_nm[0]
    zenith = abs(workings[1]["zenith_distance_worked"]) * 60.0
    assert abs(abs(marks.cost_nm[1]) - 2 * zenith) < 1.0, (marks.cost_nm[1], zenith)


def test_the_issues_examples_are_marked_as_an_examiner_marks_them(ts, eph, pools, tmp_path):
    """Tabulated Z then Zn interpolated for the minutes of Dec; a working from the DR ("5.2 A" with no AP); the
    Moon by the two-part table: all right. The parallax line is the full parallax, and says so."""
    rng = np.random.default_rng(5)
    rows = []
    for sight in pools["intercept"][:24]:
        rows.append(hand.log_row(sight, hand.work(ts, eph, sight, None, "interpolated"), rng))
        rows.append(hand.log_row(sight, hand.work(ts, eph, sight, None, "dr-minimal"), rng))
    for sight in pools["moon"][:12]:
        rows.append(hand.log_row(sight, hand.work(ts, eph, sight, None, "two-part"), rng))
    report = mark_workings(_write(rows, tmp_path))
    assert (report.rows.verdict == "right").all(), report.rows[report.rows.verdict != "right"].head().to_string()
    assert "full parallax" in WORKED_FORMS["parallax_worked"][1] or "HP × cos" in WORKED_FORMS["parallax_worked"][1]


def test_words_a_cadet_reads(ts, eph, pools, tmp_path):
    """Lines named as a sight book names them, no folders in the sources, an increment over a degree in degrees
    and minutes, TOWARD/AWAY in the cadet's own words, a tie named as a tie, a single line named as such."""
    rng = np.random.default_rng(9)
    stars = [s for s in pools["intercept"] if hand.kind_of(s.body) == "star" and not s.eye_in_feet]
    increment = next(s for s in stars if hand.work(ts, eph, s)["increment_worked"] >= 60.0)
    lines = hand.work(ts, eph, increment)
    lines["increment_worked"] += 0.7  # 0.7′ out, written in degrees and minutes
    swapped = next(s for s in stars[5:] if abs(hand.work(ts, eph, s)["intercept_worked"]) > 1.0)
    away = hand.work(ts, eph, swapped, "toward away")
    rows = [hand.log_row(increment, lines, rng, **{"Fix group": "alone"}),
            {**hand.log_row(swapped, away, rng), "intercept_worked": hand.texts(away)["intercept_worked"]
             .replace("T", "toward").replace("A", "away")}]
    folder = tmp_path / "deep" / "folder"
    folder.mkdir(parents=True)
    report = mark_workings(_write(rows, folder))
    first, second = report.rows.iloc[0], report.rows.iloc[1]
    assert first.first_wrong_line_name == "GHA increment" and first.given.count("°") == 1
    assert first.expected.count("°") == 1 and "′" in first.expected
    assert second.first_wrong_line_name == "Intercept"
    assert second.expected.split()[-1] in ("toward", "away")
    assert not any("/" in s for s in report.rows.source) and "deep" not in report.provenance["workings"]
    assert (report.fixes.note == "a single line of position: no fix").any()
    from navred.jobs.workings import commonest

    assert commonest(pd.Series(["a", "b", "a", "b"])) == "a; b (tied, 2 each)"
    assert commonest(pd.Series(["a", "b", "a"])) == "a"
    from navred.jobs.workings import describe

    text = describe(report.rows.iloc[0].to_dict())
    assert "GHA increment is wrong" in text and "_worked" not in text


def _filled_pages(ts, eph, pools, path: Path) -> tuple[list[dict], list]:
    """The template's pages filled by a script (openpyxl), as a cadet fills them, and the same workings' rows."""
    from openpyxl import load_workbook

    from navred.io.sightbook import LABELS, PAGES

    write_template(path)
    book = load_workbook(path)
    def first(pool, kind, skip=0):
        return [s for s in pools[pool] if hand.kind_of(s.body) == kind and not s.eye_in_feet][skip]

    # the intercept method a page per kind of body, each working by another way
    chosen = {"Sun": [(first("intercept", "sun"), "full")],
              "Stars": [(first("intercept", "star"), "dr"), (first("intercept", "star", 1), "z-interpolated")],
              "Planets": [(first("intercept", "planet"), "calculator")],
              "Moon": [(pools["moon"][0], "two-part")],
              "Noon": [(first("meridian", "sun"), "full"), (first("ex-meridian", "sun"), "full")],
              "Polaris": [(pools["polaris"][0], "full")],
              "Compass": [(pools["amplitude"][0], "full"), (pools["azimuth"][0], "full")]}
    rows, order = [], []
    for title, entries in chosen.items():
        sheet = book[title]
        blocks = [r for r in range(1, sheet.max_row + 1) if str(sheet.cell(r, 1).value or "").startswith("Working ")]
        for (sight, style), start in zip(entries, blocks):
            lines = hand.work(ts, eph, sight, None, style)
            row = hand.log_row(sight, lines, None, Observer="Cadet Test", Remarks=f"seen {title}")
            values = {"method": sight.method, "observer": "Cadet Test", "date": row["Date"],
                      "zone_time": row["Watch time"], "zone_description": row["ZD"], "watch_error": row["Watch error"],
                      "body": sight.body, "limb": sight.limb, "hs": row["Hs"], "index_error": row["IE"],
                      "eye_height_m": sight.eye_m, "dr_lat": row["DR lat"], "dr_lon": row["DR lon"],
                      "compass_bearing": row.get("Compass bearing"), "variation": row.get("Variation"),
                      "remarks": f"seen {title}", **hand.texts(lines)}
            r = start + 1
            while r <= sheet.max_row and not str(sheet.cell(r, 1).value or "").startswith("Working "):
                label = str(sheet.cell(r, 1).value or "")
                from navred.vocabulary import normalise_header

                key = LABELS.get(normalise_header(label))
                if key in values and values[key] not in (None, ""):
                    sheet.cell(r, 2, values[key])
                r += 1
            rows.append({**{k: v for k, v in row.items() if k not in ("Height of eye (ft)",)},
                         "Height of eye (m)": sight.eye_m, "Method": sight.method})
            order.append(sight)
        assert PAGES[title]
    book.save(path)
    return rows, order


def test_the_sight_book_template_read_back_gives_the_marks_of_the_table_form(ts, eph, pools, tmp_path):
    """The template (a page per method, workings down the page) filled by a script, read back and marked: the
    same verdicts and line by line the same marks as the same workings in a table; the remarks kept."""
    from openpyxl import load_workbook

    rows, _ = _filled_pages(ts, eph, pools, tmp_path / "book.xlsx")
    pages = mark_workings(tmp_path / "book.xlsx")
    table = mark_workings(pd.DataFrame(rows))
    assert len(pages.rows) == len(rows) == 10
    assert (pages.rows.verdict == "right").all(), pages.rows[["row", "way", "first_wrong_line", "cause"]]
    key = ["method", "body", "utc", "verdict", "first_wrong_line"]
    left = pages.rows.sort_values(["method", "utc"])[key].reset_index(drop=True)
    right = table.rows.sort_values(["method", "utc"])[key].reset_index(drop=True)
    pd.testing.assert_frame_equal(left, right)
    # line by line: every line of a page marked as in the table (a page leaves out what its method does not
    # need, Polaris's Dec)
    per_line = ["utc", "line", "verdict", "expected"]
    both = pages.rows[["source", "row", "utc"]].merge(pages.lines, on=["source", "row"])[per_line].merge(
        table.rows[["source", "row", "utc"]].merge(table.lines, on=["source", "row"])[per_line],
        on=["utc", "line"], how="outer", indicator=True, suffixes=("_page", "_table"))
    assert (both._merge != "left_only").all()
    assert set(both[both._merge == "right_only"].line) <= {"dec_worked"}, both[both._merge == "right_only"]
    common = both[both._merge == "both"]
    assert (common.verdict_page == common.verdict_table).all() and (common.expected_page ==
                                                                     common.expected_table).all()
    assert set(pages.rows.remarks) == {f"seen {page}" for page in ("Sun", "Stars", "Planets", "Moon", "Noon", "Polaris",
                                                                  "Compass")}
    assert pages.lines.sheet_row.notna().all()  # each line's own row on the page
    from navred.jobs.workings import describe

    # a page's working is cited by its sheet (the page) and row, on the screen and the printed page
    assert all(describe(r).startswith(f"Cadet Test, sheet '{r['remarks'][5:]}', row {r['row']}, ")
               for r in pages.rows.to_dict("records"))
    # the template: a sight-book page, down the page in the order of a hand reduction, in the trade's words
    book = load_workbook(tmp_path / "book.xlsx")
    assert {"Sun", "Moon", "Stars", "Planets", "Noon", "Polaris", "Compass", "How to fill it in"} <= set(
        book.sheetnames)
    labels = [str(c.value) for c in book["Sun"]["A"] if c.value]
    for earlier, later in (("UTC", "GHA increment"), ("GHA increment", "Ho"), ("Ho", "LHA"), ("LHA", "Zn"),
                           ("Zn", "Intercept")):
        assert labels.index(earlier) < labels.index(later)
    assert not any(label.endswith("_worked") for label in labels)
    assert "safety" in str(book["How to fill it in"].cell(book["How to fill it in"].max_row, 1).value).lower()


def test_a_cadets_sight_book_over_a_voyage_keeps_remarks_and_shows_progress_and_personal_error(ts, eph, tmp_path):
    """Workings over several days with the instructor's remarks, marked against the ship's track (navred
    training's personal error): the remarks kept in every output, a row a day of progress, and each cadet's
    personal error the one `navred training` gives for the same sights."""
    import make_training_voyage as voyage_maker

    sights, track = voyage_maker.frozen_voyage(ts, eph, days=3, seed=77)  # (frozen by the script: --freeze)
    track_path = tmp_path / "track.csv"
    track.assign(utc=track.utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ")).to_csv(track_path, index=False)
    log = sights.drop(columns=["true_error_arcmin"])
    # each sight worked minimally: the intercept from the DR, Ho and Zn, by navred's own reduction
    from navred.jobs.sights import reduce_sights
    from navred.jobs.voyage import process_log

    reduced = reduce_sights(__import__("navred").read_sight_log(log))
    log["ho_worked"] = [hand.dm(v) for v in reduced.ho_deg]
    log["zn_worked"] = [f"{v:.1f}" for v in reduced.zn_deg]
    log["intercept_worked"] = [f"{abs(v):.1f} {'T' if v >= 0 else 'A'}" for v in reduced.intercept_nm]
    log["remarks"] = [f"remark {k}" if k % 7 == 0 else "" for k in range(len(log))]
    report = mark_workings(log, track=track_path)
    assert (report.rows.remarks != "").sum() == (log.remarks != "").sum()
    assert set(report.progress.date) == set(sights.utc.str[:10])
    assert set(report.progress.cadet) == set(voyage_maker.OBSERVERS)
    from navred.io.track import read_track
    from navred.jobs.training import training_report

    voyage = process_log(log)
    training = training_report(voyage.reduced, read_track(track_path), voyage.groups).observers
    for row in report.personal.to_dict("records"):
        same = training[training.observer == row["cadet"]].iloc[0]
        assert row["personal_error_arcmin"] == pytest.approx(same["personal_error_arcmin"], abs=1e-9)
    workbook = write_marking_workbook(report, tmp_path / "book.xlsx")
    from openpyxl import load_workbook

    book = load_workbook(workbook)
    assert {"Progress", "Personal error"} <= set(book.sheetnames)
    text = " ".join(str(c.value) for s in book.worksheets if s.title.startswith("Marks") for r in s.iter_rows()
                    for c in r if c.value)
    assert "remark 7" in text
    pdf = write_marking_pdf(report, tmp_path / "book.pdf")
    assert pdf.read_bytes().startswith(b"%PDF")


def test_zn_from_z_follows_the_tables_rule_in_all_four_cases():
    """The rule printed with the sight reduction tables (common practice), and its inverse."""
    assert zn_from_z(60.0, 40.0, 300.0) == pytest.approx(60.0)  # N, LHA > 180
    assert zn_from_z(60.0, 40.0, 60.0) == pytest.approx(300.0)  # N, LHA < 180
    assert zn_from_z(60.0, -40.0, 300.0) == pytest.approx(120.0)  # S, LHA > 180
    assert zn_from_z(60.0, -40.0, 60.0) == pytest.approx(240.0)  # S, LHA < 180
    zn = np.arange(0.5, 360.0, 7.0)
    for lat in (35.0, -35.0):
        lha = np.where(zn < 180.0, 300.0, 60.0)  # a body east of the meridian has LHA over 180°
        assert np.allclose(zn_from_z(z_from_zn(zn, lat), lat, lha), zn)


def test_tenth_rounds_as_printed():
    assert tenth([12.34, 12.36, -0.04]).tolist() == [12.3, 12.4, -0.0]


@pytest.mark.parametrize("line, text, value", [
    ("intercept_worked", "3.2 toward", 3.2), ("intercept_worked", "3.2 T", 3.2), ("intercept_worked", "6.3 A", -6.3),
    ("intercept_worked", "0.0", 0.0),
    ("v_corr_worked", "+3.1", 3.1), ("d_corr_worked", "-0.2", -0.2), ("increment_worked", "2° 23.5′", 143.5),
    ("zn_worked", "113.5", 113.5), ("zn_worked", "113° 30′", 113.5),
    ("ap_lon", "012° 04.7′ W", -(12 + 4.7 / 60)), ("dec_worked", "2 14.9 S", -(2 + 14.9 / 60)),
    ("amplitude_worked", "E 12.3 N", 12.3), ("amplitude_worked", "W 5° 06′ S", -5.1),
    ("compass_error_worked", "2.5 E", 2.5), ("deviation_worked", "1° 30′ W", -1.5),
    ("zenith_distance_worked", "37° 45.4′ N", 37 + 45.4 / 60), ("latitude_worked", "43 12.3 S", -(43 + 12.3 / 60)),
    ("ex_meridian_a_worked", "6.4", 6.4), ("upper_limb_worked", "-30", -30.0),
])
def test_worked_lines_are_read_in_navreds_forms(line, text, value):
    assert parse_worked(line, text) == pytest.approx(value)


@pytest.mark.parametrize("line, text, says", [
    ("intercept_worked", "3.2", "no direction"),
    ("intercept_worked", "3.2 sideways", "cannot read"),
    ("utc_worked", "09:10:07", "no date"),
    ("ap_lon", "12 04.7", "E or W"),
    ("compass_error_worked", "2.5", "E or W"),
])
def test_a_line_that_cannot_be_read_is_refused_with_the_forms_accepted(line, text, says):
    with pytest.raises(NavredError, match=says):
        parse_worked(line, text)


def test_an_unreadable_line_is_marked_wrong_with_the_reason(ts, eph, pools):
    sight = pools["intercept"][1]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "short"))
    row["intercept_worked"] = "4.1"  # no direction
    report = mark_workings(pd.DataFrame([row]))
    assert report.rows.iloc[0].first_wrong_line == "intercept_worked"
    assert "no direction" in report.rows.iloc[0].cause
    assert len(report.workings.unreadable) == 1


def test_each_methods_required_lines_are_required(ts, eph, pools):
    sight = pools["intercept"][2]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "minimal"))
    with pytest.raises(NavredError, match="intercept, a latitude or a compass error"):
        mark_workings(pd.DataFrame([{k: v for k, v in row.items() if k != "intercept_worked"}]))
    row["zn_worked"] = ""
    report = mark_workings(pd.DataFrame([row]))
    assert report.rows.iloc[0].first_wrong_line == "zn_worked"
    assert "not given" in report.rows.iloc[0].cause and "Zn" in report.rows.iloc[0].cause
    noon = pools["meridian"][1]
    row = hand.log_row(noon, hand.work(ts, eph, noon, None, "minimal"))
    report = mark_workings(pd.DataFrame([{**row, "latitude_worked": ""}]))
    assert report.rows.iloc[0].first_wrong_line == "latitude_worked"
    unknown = mark_workings(pd.DataFrame([{**row, "Method": "astrolabe"}]))
    assert unknown.rows.empty and "no such method" in unknown.rejected.reason.iloc[0]


def test_the_method_is_told_from_the_lines_when_not_stated(ts, eph, pools):
    """A working with no method column: a latitude and a zenith distance is a meridian altitude, a reduction an
    ex-meridian, an amplitude an amplitude, a compass error an azimuth, Polaris's correction Polaris."""
    cases = [(pools["meridian"][3], "meridian"), (pools["ex-meridian"][3], "ex-meridian"),
             (pools["polaris"][3], "polaris"), (pools["amplitude"][3], "amplitude"), (pools["azimuth"][3], "azimuth")]
    rows = [{**hand.log_row(s, hand.work(ts, eph, s, None, "full")), "Method": ""} for s, _ in cases]
    report = mark_workings(pd.DataFrame(rows))
    assert report.rows.method.tolist() == [m for _, m in cases]
    assert (report.rows.verdict == "right").all()


def _class_workbook(ts, eph, pools, path: Path) -> dict[str, list[str]]:
    """A class workbook, a sheet per cadet (no observer column: the sheet names the cadet)."""
    sights = [s for s in pools["intercept"] if not s.eye_in_feet][:9]
    planted = {"Ansel": [None, "zone sign", None], "Birch": [None, None, None], "Corrie": ["toward away", None, None]}
    with pd.ExcelWriter(path, engine="openpyxl") as writer:
        k = 0
        for cadet, plants in planted.items():
            rows = []
            for plant in plants:
                sight = sights[k]
                k += 1
                rows.append(hand.log_row(sight, hand.work(ts, eph, sight, plant, "short"), Group=f"{cadet} round"))
            pd.DataFrame(rows).to_excel(writer, sheet_name=cadet, index=False)
        pd.DataFrame({"note": ["instructions only"]}).to_excel(writer, sheet_name="Notes", index=False)
    return planted


def test_a_class_workbook_gives_a_sheet_per_cadet_a_summary_and_pages(ts, eph, pools, tmp_path):
    planted = _class_workbook(ts, eph, pools, tmp_path / "class.xlsx")
    report = mark_workings(tmp_path / "class.xlsx")
    assert sorted(report.rows.cadet.unique()) == ["Ansel", "Birch", "Corrie"]
    by_cadet = report.by_cadet.set_index("cadet")
    assert by_cadet.loc["Birch", "no_mistake"] == 3 and by_cadet.loc["Ansel", "no_mistake"] == 2
    assert by_cadet.loc["the class", "no_mistake_pct"] == pytest.approx(100 * 7 / 9, abs=0.05)
    assert set(report.by_cause.cause) == {CAUSES["zone sign"], CAUSES["toward away"]}
    from openpyxl import load_workbook

    out = write_marking_workbook(report, tmp_path / "marks.xlsx")
    book = load_workbook(out)
    assert {"About", "Class", "Mistakes", "Fixes", "Progress", "Marks Ansel", "Marks Birch", "Marks Corrie"} <= set(
        book.sheetnames)
    about_text = " ".join(str(c.value) for row in book["About"].iter_rows() for c in row if c.value)
    assert "navigation" in about_text.lower() and "almanac" in about_text.lower()
    headers = [c.value for c in book["Marks Ansel"][1]]
    assert "first wrong line" in headers and not any(str(h).endswith("_worked") for h in headers)
    pdf = write_marking_pdf(report, tmp_path / "marks.pdf")
    assert pdf.read_bytes().count(b"/Type /Page\n") + pdf.read_bytes().count(b"/Type /Page ") >= 6
    assert len(planted) == 3


def test_exam_mode_leaves_out_navreds_fix_and_reference(ts, eph, pools, tmp_path):
    _class_workbook(ts, eph, pools, tmp_path / "class.xlsx")
    full = mark_workings(tmp_path / "class.xlsx")
    exam = mark_workings(tmp_path / "class.xlsx", exam=True)
    assert "navred_fix" in full.fixes.columns
    assert not any("navred" in c or "reference" in c for c in exam.fixes.columns)
    assert exam.provenance["exam mode"].startswith("yes")
    pd.testing.assert_frame_equal(full.rows, exam.rows)


def test_csv_form_has_row_verdict_first_wrong_line_and_cause(ts, eph, pools, tmp_path):
    _class_workbook(ts, eph, pools, tmp_path / "class.xlsx")
    frame = marking_csv(mark_workings(tmp_path / "class.xlsx"))
    assert {"row", "verdict", "first_wrong_line", "first_wrong_line_name", "cause", "noticed", "remarks"} <= set(
        frame.columns)
    assert set(frame.first_wrong_line) == {"", "utc_worked", "intercept_worked"}
    assert all(c == c.lower() and " " not in c for c in frame.columns)


def test_cli_and_api_give_the_same_marks(ts, eph, pools, tmp_path):
    from typer.testing import CliRunner

    from navred.cli import app

    _class_workbook(ts, eph, pools, tmp_path / "class.xlsx")
    runner = CliRunner()
    result = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "-o", str(tmp_path / "marks.xlsx"),
                                 "-o", str(tmp_path / "marks.pdf"), "-o", str(tmp_path / "marks.csv")])
    assert result.exit_code == 0, result.output
    assert "9 workings of 3 cadets marked: 7 with no mistake" in result.output
    assert "Ansel, row 3, " in result.output and CAUSES["zone sign"] in result.output
    assert "UTC is wrong" in result.output and "_worked" not in result.output
    as_csv = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "--csv"])
    assert as_csv.exit_code == 0, as_csv.output
    from_cli = pd.read_csv(io.StringIO(as_csv.stdout), keep_default_na=False)
    api = marking_csv(mark_workings(tmp_path / "class.xlsx"))
    for column in ("first_wrong_line", "cause", "row", "verdict"):
        assert from_cli[column].tolist() == api[column].tolist()
    written = pd.read_csv(tmp_path / "marks.csv", keep_default_na=False)
    assert written["first_wrong_line"].tolist() == api["first_wrong_line"].tolist()
    assert (tmp_path / "marks.xlsx").exists() and (tmp_path / "marks.pdf").exists()
    old = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "--pdf", str(tmp_path / "old.pdf")])
    assert old.exit_code == 0 and (tmp_path / "old.pdf").exists()
    wrong = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "-o", str(tmp_path / "marks.docx")])
    assert wrong.exit_code == 1 and ".docx" in wrong.output and not (tmp_path / "marks.docx").exists()
    template = runner.invoke(app, ["mark", "--template", str(tmp_path / "blank.xlsx")])
    assert template.exit_code == 0 and (tmp_path / "blank.xlsx").exists()


def test_marking_reads_the_sight_through_the_one_reader(ts, eph, pools, tmp_path):
    """The same sight columns give the same UTC and DR whether read as a sight log or as a working."""
    from navred import read_sight_log

    _class_workbook(ts, eph, pools, tmp_path / "class.xlsx")
    workings = read_workings(tmp_path / "class.xlsx")
    log = read_sight_log(tmp_path / "class.xlsx", all_sheets=True)
    pd.testing.assert_series_equal(workings.log.table["sight_utc"], log.table["sight_utc"])
    pd.testing.assert_series_equal(workings.log.table["dr_lon_deg"], log.table["dr_lon_deg"])


def test_text_from_a_working_is_written_as_text_never_a_formula(ts, eph, pools, tmp_path):
    from openpyxl import load_workbook

    sight = pools["intercept"][3]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "short"))
    row["intercept_worked"] = '=HYPERLINK("http://example.invalid","3.2 T")'
    row["Observer"] = "=1+1"
    row["Remarks"] = "=2+2"
    path = write_marking_workbook(mark_workings(pd.DataFrame([row])), tmp_path / "m.xlsx")
    book = load_workbook(path)
    for sheet in book.worksheets:
        for cells in sheet.iter_rows():
            for cell in cells:
                assert cell.data_type != "f", (sheet.title, cell.coordinate, cell.value)


def test_every_line_has_a_form_a_tolerance_a_unit_and_a_name():
    from navred.marking import TOLERANCES, UNITS

    assert tuple(WORKED_FORMS) == LINES == tuple(TOLERANCES) == tuple(UNITS) == tuple(LINE_NAMES)
    assert not any("_" in name for name in LINE_NAMES.values())


def test_a_semicolon_export_with_decimal_commas_marks_as_the_same_working_with_points(ts, eph, pools, tmp_path):
    """A spreadsheet's export where the separator is ';' writes 25° 03,1′: every line reads as with a point
    (the log's rule, docs/sight-log.md); in a comma-separated file a comma stays refused as ambiguous."""
    sights = [s for s in pools["intercept"] if not s.eye_in_feet][:6]
    rows = [hand.log_row(s, hand.work(ts, eph, s, None, hand.STYLES["intercept"][k % 4])) for k, s in enumerate(sights)]
    frame = pd.DataFrame(rows)
    frame.to_csv(tmp_path / "points.csv", index=False)
    commas = frame.apply(lambda column: column.astype(str).str.replace(".", ",", regex=False)
                         if column.name not in ("Date", "Watch time", "utc_worked") else column)
    commas.to_csv(tmp_path / "commas.csv", index=False, sep=";")
    with_points = mark_workings(tmp_path / "points.csv")
    with_commas = mark_workings(tmp_path / "commas.csv")
    assert (with_points.rows.first_wrong_line == "").all() and (with_commas.rows.first_wrong_line == "").all()
    assert with_commas.workings.unreadable.empty
    for line in ("ho_worked", "hc_worked", "intercept_worked", "zn_worked"):
        assert np.array_equal(with_points.marks.given[line], with_commas.marks.given[line], equal_nan=True)
    assert "ambiguous" in parse_worked_refusal("25° 03,1′")
    assert parse_worked("intercept_worked", "6,3 away", decimal_comma=True) == pytest.approx(-6.3)


def parse_worked_refusal(text: str) -> str:
    with pytest.raises(NavredError) as refused:
        parse_worked("ho_worked", text)
    return str(refused.value)


def test_the_sample_class_is_marked_as_planted():
    """The invented class (sample_sights/class_workings.xlsx, every method of one invented day): each planted
    mistake named where sample_sights/class_workings_planted.csv says, every other working right."""
    report = mark_workings("sample_sights/class_workings.xlsx")
    planted = pd.read_csv("sample_sights/class_workings_planted.csv")
    assert set(report.rows.method) == set(METHODS)
    marked = report.rows.set_index(["cadet", "row"])
    for item in planted.itertuples():
        row = marked.loc[(item.cadet, item.row)]
        assert row.verdict == "wrong" and catalogue_cause(row.cause) == CAUSES[item.planted], (
            item, row.cause, row.first_wrong_line)
    others = report.rows[~report.rows.set_index(["cadet", "row"]).index.isin(
        list(zip(planted.cadet, planted.row)))]
    # the plot's mistake shows on the round's last sight; its other sights and every other working are right
    plot_rows = {(p.cadet, p.row) for p in planted.itertuples() if p.planted in hand.PLOT_PLANTS}
    assert (others.verdict == "right").sum() >= len(others) - len(plot_rows) * 3


def test_workings_timed_by_a_rated_timepiece_take_its_error_from_the_rating_log(ts, eph, pools, tmp_path):
    """--rates on navred mark as on every command that reads sights: a working kept by "Chrono A" with no watch
    error written takes the error its time signals predict (an invented chronometer 12.0 s fast, steady)."""
    from typer.testing import CliRunner

    from navred.cli import app

    sights = [hand.replace(s, eye_in_feet=False) for s in hand.make_rounds(ts, eph, 3, seed=41)[0]]
    rows = []
    for sight in sights:
        row = hand.log_row(hand.replace(sight, watch_error_s=12), hand.work(ts, eph, sight, None, "short"))
        row["Watch error"] = ""
        row["Timepiece"] = "Chrono A"
        rows.append(row)
    pd.DataFrame(rows).to_csv(tmp_path / "w.csv", index=False)
    first = sights[0].utc - pd.Timedelta(days=2)
    signals = pd.DataFrame({"timepiece": "Chrono A",
                            "utc": [(first + pd.Timedelta(days=k)).strftime("%Y-%m-%dT%H:%M:%SZ") for k in range(4)],
                            "reading": [(first + pd.Timedelta(days=k, seconds=12)).strftime("%H:%M:%S.0")
                                        for k in range(4)]})
    signals.to_csv(tmp_path / "signals.csv", index=False)
    result = CliRunner().invoke(app, ["mark", str(tmp_path / "w.csv"), "--rates", str(tmp_path / "signals.csv"),
                                      "--csv"])
    assert result.exit_code == 0, result.output
    marks = pd.read_csv(io.StringIO(result.stdout), keep_default_na=False)
    assert len(marks) == 3 and (marks.verdict == "right").all(), marks[["row", "first_wrong_line", "cause"]]


def test_a_sight_book_with_some_pages_empty_is_read_and_an_empty_one_refused(ts, eph, pools, tmp_path):
    """Only the pages a cadet filled are workings; a book with nothing filled is refused in one line."""
    from openpyxl import load_workbook

    from navred.io.sightbook import LABELS
    from navred.vocabulary import normalise_header

    write_template(tmp_path / "empty.xlsx")
    with pytest.raises(NavredError, match="no working is filled in"):
        mark_workings(tmp_path / "empty.xlsx")
    book = load_workbook(tmp_path / "empty.xlsx")
    sight = [s for s in pools["intercept"] if not s.eye_in_feet and hand.kind_of(s.body) == "star"][0]
    sheet = book["Stars"]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "full"))
    values = {"date": row["Date"], "zone_time": row["Watch time"], "zone_description": row["ZD"],
              "watch_error": row["Watch error"], "body": sight.body, "limb": sight.limb, "hs": row["Hs"],
              "index_error": row["IE"], "eye_height_m": sight.eye_m, "dr_lat": row["DR lat"],
              "dr_lon": row["DR lon"], **hand.texts(hand.work(ts, eph, sight, None, "full"))}
    r = 3
    while not str(sheet.cell(r, 1).value or "").startswith("Working "):
        key = LABELS.get(normalise_header(str(sheet.cell(r, 1).value or "")))
        if values.get(key) not in (None, ""):
            sheet.cell(r, 2, values[key])
        r += 1
    book.save(tmp_path / "one.xlsx")
    report = mark_workings(tmp_path / "one.xlsx")
    assert len(report.rows) == 1 and report.rows.verdict.iloc[0] == "right" and report.rejected.empty
    assert report.rows.cadet.iloc[0] == "one"  # no cadet written: the book's file names the cadet


# --- an examiner's second trial: the rounds, the cost of a slip, Z, the reduction, the Moon, the plot, the pages ----

def _moved(sight, degrees: float = 1.0):
    """The sight with its DR moved north by ``degrees`` (the working right from that DR)."""
    return hand.replace(sight, dr_lat=hand.written(sight.dr_lat + degrees))


def _dawn(ts, eph):
    """A round of three stars in morning twilight from one DR (scripts/make_class_workings.py, skyfield) and the
    Sun's amplitude at sunrise from the same DR within the hour and a half after it (the centre on the celestial
    horizon, skyfield), the DR of each moved 60 nm north (so that the round's lines cross far from it)."""
    for members in hand.make_rounds(ts, eph, 80, seed=31):
        first = _moved(members[0])
        if first.eye_in_feet:
            continue
        now = hand.altitude_at(ts, eph, "Sun", first.utc_ns, first.dr_lat, first.dr_lon)
        rate = (hand.altitude_at(ts, eph, "Sun", first.utc_ns + 600 * hand.SECOND_NS, first.dr_lat, first.dr_lon)
                - now) / 600.0  # degrees a second: the Sun climbing, a morning round
        if rate <= 0:
            continue
        sunrise = hand._altitude_zero(ts, eph, "Sun", first.utc_ns + int(-now / rate) * hand.SECOND_NS,
                                      first.dr_lat, first.dr_lon)
        if not 0 < sunrise - members[-1].utc_ns < 1.5 * hand.HOUR_NS:
            continue
        a = hand.sky_almanac(ts, eph, "Sun", sunrise)
        zn = hand.hc_zn(first.dr_lat, (a["gha"][0] + first.dr_lon) % 360.0, a["dec"][0])[1]
        amplitude = hand.replace(first, body="Sun", utc_ns=sunrise, hs_arcmin=float("nan"), method="amplitude",
                                 compass_deg=round(((zn + 6.0 - 1.5) % 360.0) * 2) / 2, variation_deg=-6.0)
        return [_moved(s) for s in members], amplitude
    raise AssertionError("no morning round with sunrise soon after")


def test_only_the_rounds_a_cadet_named_or_plotted_are_crossed_and_nothing_else_is_charged(ts, eph, tmp_path):
    """Workings written with no round: a dawn round of three stars and the Sun's amplitude at sunrise, each from a
    DR 60 nm out (skyfield's sky, scripts/make_class_workings.py). Unplotted, they are no round: no fix, no
    working charged with where lines cross. Plotted (the fix on the last star), the stars are a round named by
    its time, the amplitude outside it. Named as one round, the amplitude still gives no line and is not
    charged: the star that closes the round is."""
    stars, amplitude = _dawn(ts, eph)
    lines = [hand.work(ts, eph, s, None, "full") for s in stars]
    rows = [hand.log_row(s, w) for s, w in zip(stars, lines)]
    rows.append(hand.log_row(amplitude, hand.work(ts, eph, amplitude, None, "full")))
    loose = mark_workings(pd.DataFrame(rows))
    assert loose.fixes.empty and not any("cross" in n for n in loose.rows.noticed), loose.rows.noticed.tolist()
    fix = hand.plotted_fix(lines, None, 0, (stars[0].dr_lat, stars[0].dr_lon))
    plotted = [dict(r) for r in rows]
    plotted[2].update({"fix_lat_worked": hand.dm(fix[0], "lat"), "fix_lon_worked": hand.dm(fix[1], "lon")})
    timed = mark_workings(pd.DataFrame(plotted))
    assert len(timed.fixes) == 1 and timed.fixes.sights.iloc[0] == 3, timed.fixes
    assert timed.fixes.fix_group.iloc[0].startswith("your sights from ")
    assert "cross" in timed.rows.noticed.iloc[2] and "cross" not in timed.rows.noticed.iloc[3]
    named = mark_workings(pd.DataFrame([{**r, "Fix group": "dawn"} for r in rows]))
    assert len(named.fixes) == 1 and named.fixes.sights.iloc[0] == 3 and named.fixes.fix_group.iloc[0] == "dawn"
    assert "cross" in named.rows.noticed.iloc[2] and "cross" not in named.rows.noticed.iloc[3]
    assert (named.rows.verdict.iloc[:3] != "wrong").all() and named.rows.verdict.iloc[3] != "wrong"


def _plane_line(lines: dict, dr: tuple[float, float]):
    """A working's line on the plotting sheet about the DR (this test's own plane, the scale cos latitude): its
    foot and its unit normal (toward the body), in nautical miles east and north."""
    scale = np.cos(np.radians(dr[0]))
    position = np.array([(lines["ap_lon"] - dr[1]) * 60.0 * scale, (lines["ap_lat"] - dr[0]) * 60.0])
    normal = np.array([np.sin(np.radians(lines["zn_worked"])), np.cos(np.radians(lines["zn_worked"]))])
    return position + lines["intercept_worked"] * normal, normal


def test_a_slip_is_costed_by_what_it_does_to_the_plot_or_the_course(ts, eph, pools):
    """A Zn slip turns the line: the cost is the angle (against the body's true Zn from the AP, skyfield) and the
    farthest the line stands from the right working's line within 10 nm of the DR (this test's own plane). A
    deviation slip is a course steered that far wrong (100 sin of it off the track in 100 miles). A zone slip's
    cost agrees with how far the line is said to lie from the DR."""
    def z_of(s):
        return hand.work(ts, eph, s, None, "full").get("tab_z_worked", 0.0)

    turned = [s for s in pools["intercept"] if 25.0 <= z_of(s) <= 65.0][:10]
    sights = turned + [next(s for s in pools["azimuth"] if abs(s.variation_deg) >= 3.0),
                       next(s for s in pools["intercept"] if abs(s.zd_h) >= 4 and not s.eye_in_feet)]
    plants = ["zn rule"] * len(turned) + ["variation sign", "zone sign"]
    workings = [hand.work(ts, eph, s, p, "full") for s, p in zip(sights, plants)]
    marks = mark(hand.sights_to_mark(sights), hand.given_arrays(workings))
    for k, sight in enumerate(turned):
        right = hand.work(ts, eph, sight, None, "full")
        a = hand.sky_almanac(ts, eph, sight.body, sight.utc_ns)
        true_zn = hand.hc_zn(right["ap_lat"], (a["gha"][0] + right["ap_lon"]) % 360.0, a["dec"][0])[1]
        assert abs(hand.wrap180(workings[k]["zn_worked"] - true_zn - marks.cost_deg[k])) < 0.2, (k, marks.cost_deg[k])
        dr = (sight.dr_lat, sight.dr_lon)
        (right_foot, right_n), (foot, normal) = _plane_line(right, dr), _plane_line(workings[k], dr)
        nearest = right_n * (right_foot @ right_n)  # the right line's point nearest the DR
        along = np.array([right_n[1], -right_n[0]])
        facing = 1.0 if normal @ right_n >= 0 else -1.0
        expected = max(((foot - (nearest + s * along)) @ normal * facing for s in (-10.0, 0.0, 10.0)), key=abs)
        assert abs(marks.cost_nm[k] - expected) < 1.0, (k, marks.cost_nm[k], expected)
    azimuth = len(turned)
    variation = sights[azimuth].variation_deg
    assert abs(abs(marks.cost_deg[azimuth]) - 2.0 * abs(variation)) < 0.15, marks.cost_deg[azimuth]
    assert abs(marks.cost_nm[azimuth] - 100.0 * np.sin(np.radians(2.0 * abs(variation)))) < 0.3
    zone = azimuth + 1
    said = float(marks.noticed[zone].split("your position line lies ")[1].split(" nm")[0].replace(",", ""))
    assert abs(abs(marks.cost_nm[zone]) - said) < 20.0, (marks.cost_nm[zone], said)


def test_z_interpolated_is_right_in_the_z_line_or_on_its_own_and_a_later_slip_still_shows(ts, eph, pools):
    """Z interpolated for the minutes of Dec (scripts/make_class_workings.py, skyfield's sky) written in the only
    Z line, or on its own line below the tabulated Z: right, Zn from it right; a later slip (TOWARD and AWAY
    swapped) is still the one named."""
    sights = [s for s in pools["intercept"] if "tab_z_worked" in hand.work(ts, eph, s, None, "full")][:24]
    moved = [abs(hand.work(ts, eph, s, None, "z-line")["tab_z_worked"] - hand.work(ts, eph, s)["tab_z_worked"])
             for s in sights]
    assert sum(m >= 0.2 for m in moved) >= 6  # the interpolated Z is not the tabulated one
    swapped = [s for s in sights if hand.eligible(s, hand.work(ts, eph, s, None, "z-line"), "toward away", "z-line")]
    workings = [hand.work(ts, eph, s, None, "z-line") for s in sights]
    workings += [hand.work(ts, eph, s, "toward away", "z-line") for s in swapped]
    marks = mark(hand.sights_to_mark(sights + swapped), hand.given_arrays(workings))
    right = len(sights)
    assert (marks.first_wrong_line[:right] == "").all(), marks.first_wrong_line[:right]
    assert (marks.first_wrong_line[right:] == "intercept_worked").all()
    assert (marks.first_cause[right:] == CAUSES["toward away"]).all()
    assert "z_interpolated_worked" in LINES and LINE_NAMES["z_interpolated_worked"] == "Z interpolated"
    own_line = [hand.work(ts, eph, s, None, "z-interpolated") for s in sights]
    marks = mark(hand.sights_to_mark(sights), hand.given_arrays(own_line))
    assert (marks.first_wrong_line == "").all(), marks.first_wrong_line
    assert (marks.verdict[:, LINES.index("z_interpolated_worked")] == "right").all()


def test_a_reduction_taken_off_is_named_on_its_line_however_it_is_signed(ts, eph, pools):
    """The reduction to the meridian written negative and added (signed as the sight book asks, the sign wrong),
    with the cadet's a and without it: named on the reduction's line, and what it should be is what the cadet's
    own a gives, a t² (t in minutes of time from the cadet's LHA; Bowditch, reduction to the meridian)."""
    sights = [s for s in pools["ex-meridian"]
              if hand.eligible(s, hand.work(ts, eph, s), "reduction sign")][:20]
    # (the body's bearing left out, as the sight book had no line for it)
    signed = [{k: v for k, v in hand.work(ts, eph, s, "reduction sign", "signed").items() if k != "bearing_worked"}
              for s in sights]
    without_a = [{k: v for k, v in w.items() if k != "ex_meridian_a_worked"} for w in signed]
    marks = mark(hand.sights_to_mark(sights * 2), hand.given_arrays(signed + without_a))
    assert (marks.first_wrong_line == "reduction_worked").all(), marks.first_wrong_line
    assert (marks.first_cause == CAUSES["reduction sign"]).all(), marks.first_cause
    own = np.array([w["ex_meridian_a_worked"] * (abs(hand.wrap180(w["lha_worked"])) * 4.0) ** 2 / 60.0
                    for w in signed])
    assert np.allclose(marks.expected["reduction_worked"][:len(sights)], own, atol=0.05)


def test_the_moons_first_correction_alone_is_the_two_part_table_with_its_hp_correction_missing(ts, eph, pools):
    """The Moon worked by its two-part table with the HP correction left out (the first correction right, Ho
    short by the HP correction; scripts/make_class_workings.py from skyfield's distance): the working is the
    two-part table's, the first correction right, and the missing line is the HP correction, with its value."""
    sights = [s for s in pools["moon"] if s.limb == "lower" and
              hand.eligible(s, hand.work(ts, eph, s, None, "two-part"), "moon parallax", "two-part")][:20]
    assert len(sights) >= 10
    workings = [hand.work(ts, eph, s, "moon parallax", "two-part") for s in sights]
    assert not any("hp_corr_worked" in w or "upper_limb_worked" in w for w in workings)
    marks = mark(hand.sights_to_mark(sights), hand.given_arrays(workings))
    assert (marks.first_wrong_line == "hp_corr_worked").all(), marks.first_wrong_line
    assert (marks.first_cause == CAUSES["moon parallax"]).all()
    assert (marks.verdict[:, LINES.index("main_worked")] == "right").all()
    right = np.array([hand.work(ts, eph, s, None, "two-part")["hp_corr_worked"] for s in sights])
    assert np.allclose(marks.expected["hp_corr_worked"], right, atol=0.3)
    assert all("two-part table" in w for w in marks.way)


def _overruns(pdf: Path) -> list:
    """Text printed past the page's right edge: each run's start (pypdf) plus its width in the font it is set in
    (reportlab's metrics of the same DejaVu fonts)."""
    from pypdf import PdfReader
    from reportlab.pdfbase import pdfmetrics

    from navred.io.printed import _FONTS

    for name, file in _FONTS.values():
        if name not in pdfmetrics.getRegisteredFontNames():
            import matplotlib
            from reportlab.pdfbase.ttfonts import TTFont

            pdfmetrics.registerFont(TTFont(name, str(Path(matplotlib.get_data_path()) / "fonts" / "ttf" / file)))
    out = []
    for number, page in enumerate(PdfReader(str(pdf)).pages, start=1):
        width = float(page.mediabox.width)

        def visit(text, cm, tm, font, size, number=number, width=width):
            base = str((font or {}).get("/BaseFont", ""))
            name = _FONTS["bold" if "Bold" in base else "mono" if "Mono" in base else
                          "italic" if "Oblique" in base else "regular"][0]
            right = tm[4] * cm[0] + cm[4] + pdfmetrics.stringWidth(text.rstrip("\n"), name, size * tm[0] * cm[0])
            if text.strip() and right > width:
                out.append((number, text[:50]))

        page.extract_text(visitor_text=visit)
    return out


def test_the_printed_sight_book_and_the_workbook_read_as_a_cadet_reads(ts, eph, pools, tmp_path):
    """A cadet's workings with many different slips (skyfield's sky, scripts/make_class_workings.py): Z is written
    as an azimuth angle named from the elevated pole ("N 79.3° E"); an LHA 92° out is out by degrees and minutes
    in the workbook; the progress is by the ship's date (a sight whose UTC is the next day's counts on the zone
    date written); a day with every catalogued slip wraps within the page; every page is headed with the
    workings' dates, not "valid"; no notice carries "(common practice)"."""
    from openpyxl import load_workbook
    from pypdf import PdfReader

    day = [s for s in pools["intercept"] if "tab_z_worked" in hand.work(ts, eph, s) and not s.eye_in_feet]
    plants = ["zone sign", "increment", "dip added", "index on off", "toward away", "hc d sign", "zn rule",
              "ap lat", "watch error", None]
    chosen = []
    for plant in plants:
        chosen.append(next(s for s in day if s not in chosen and (plant is not None or s.crosses_midnight) and
                           (plant is None or hand.eligible(s, hand.work(ts, eph, s), plant))))
    rows = [hand.log_row(s, hand.work(ts, eph, s, p, "full"), Observer="Cadet Tern") for s, p in zip(chosen, plants)]
    z_row, lha_row = rows[-1], dict(rows[-1])
    z_row["tab_z_worked"] = f"{float(z_row['tab_z_worked']) + 1.0:.1f}"  # 1° out
    lha_row["lha_worked"] = str((int(lha_row["lha_worked"]) + 92) % 360)  # 92° out
    report = mark_workings(pd.DataFrame(rows[:-1] + [z_row, lha_row]))
    # Z named from the elevated pole (the AP's latitude) toward the body's side (east when LHA is over 180°)
    working = hand.work(ts, eph, chosen[-1])
    z = report.rows.iloc[-2]
    assert z.first_wrong_line == "tab_z_worked"
    assert z.expected == (f"{'N' if working['ap_lat'] >= 0 else 'S'} {working['tab_z_worked']:.1f}° "
                          f"{'E' if working['lha_worked'] % 360 > 180 else 'W'}"), z.expected
    assert report.rows.iloc[-1].first_wrong_line == "lha_worked"
    assert not any("common practice" in n for n in report.rows.noticed)
    # the ship's date: the date written with the zone time, whatever the UTC's date
    zone_dates = [s.zone_time.strftime("%Y-%m-%d") for s in chosen] + [chosen[-1].zone_time.strftime("%Y-%m-%d")]
    assert report.rows.date.tolist() == zone_dates
    assert set(report.progress.date) == set(zone_dates)
    assert chosen[-1].utc.strftime("%Y-%m-%d") not in set(report.progress.date[report.progress.workings == 2])
    book = load_workbook(write_marking_workbook(report, tmp_path / "marks.xlsx"))
    sheet = book["Marks Cadet Tern"]
    header = [c.value for c in sheet[1]]
    lha = [r for r in sheet.iter_rows(min_row=2, values_only=True) if r[header.index("first wrong line")] == "LHA"]
    assert lha and "°" in lha[0][header.index("out by")] and "′" in lha[0][header.index("out by")], lha
    # a day on which every catalogued slip was made: its list is longer than a line of the page
    report.progress.loc[0, "mistakes"] = "; ".join(f"{cause} (1)" for cause in CAUSES.values())
    pdf = write_marking_pdf(report, tmp_path / "marks.pdf")
    assert _overruns(pdf) == []
    heads = [page.extract_text().splitlines()[0] for page in PdfReader(str(pdf)).pages]
    assert all("workings of" in h and "valid" not in h for h in heads), heads


def test_the_sight_books_pages_hold_each_bodys_lines_and_their_own_notes(tmp_path):
    """The template: the intercept method a page per kind of body with only the lines it takes, Z interpolated on
    its own line, the body's bearing at meridian passage on the noon page, and no page's notes speaking of
    another page's body or method."""
    from openpyxl import load_workbook

    book = load_workbook(write_template(tmp_path / "blank.xlsx"))

    def page(title):
        sheet = book[title]
        return ([str(r[0]) for r in sheet.iter_rows(values_only=True) if r[0]],
                " ".join(str(r[2]) for r in sheet.iter_rows(values_only=True) if r[2]))

    labels, notes = page("Stars")
    assert "Z interpolated" in labels and "Tabulated Z" in labels
    for other in ("v correction", "Semi-diameter", "HP correction", "Upper limb −30′", "Limb"):
        assert other not in labels, other
    for title, foreign in (("Polaris", ("Moon", "Venus")), ("Compass", ("Polaris", "Moon")),
                           ("Stars", ("Moon", "Polaris")), ("Sun", ("Moon", "Aries", "Polaris")),
                           ("Noon", ("Polaris", "Aries"))):
        _, notes = page(title)
        assert not any(word in notes for word in foreign), (title, [w for w in foreign if w in notes])
    labels, _ = page("Noon")
    assert labels.index("Meridian altitude") < labels.index("Bearing at meridian passage") < labels.index(
        "Zenith distance")
    labels, _ = page("Moon")
    assert {"First correction", "HP correction", "Upper limb −30′"} <= set(labels)
