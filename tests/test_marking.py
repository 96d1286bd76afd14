"""Marking hand reductions: correct workings marked right, planted mistakes named, the template, the CLI.

The workings are synthesized outside navred by scripts/make_class_workings.py: the almanac from
skyfield (DE421) rounded to 0.1′ as printed, the increments at the tables' base rates, the altitude
corrections by their published formulas (dip 1.76′√h, Bennett's refraction via skyfield, SD and HP
from skyfield's distance, HP·cos h), the assumed position by the trade's rule, Hc and Z from the
spherical triangle at the whole degrees of Dec rounded as the tables print them, and Zn by the
tables' rule. The references are named in that script beside each line.
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
from navred.marking import CAUSES, LINES, ZONE_OR_DATE, tenth, z_from_zn, zn_from_z

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "scripts"))
import make_class_workings as hand  # noqa: E402  (the independent synthesizer of hand workings)

N_CORRECT = 500
PLANTED_EACH = 50


@pytest.fixture(scope="module")
def pool(ts, eph):
    """700 sights (the first 500 are the correct workings) and each one's correct working."""
    sights = hand.make_sights(ts, eph, 700, seed=11)
    return sights, [hand.work(ts, eph, s) for s in sights]


def _write(rows_by_feet: dict[bool, list[dict]], folder: Path) -> list[Path]:
    """The workings as two hand-kept CSV files: heights of eye in metres, and in feet (a header names the unit)."""
    paths = []
    for feet, rows in rows_by_feet.items():
        if rows:
            path = folder / ("workings_ft.csv" if feet else "workings_m.csv")
            pd.DataFrame(rows).to_csv(path, index=False)
            paths.append(path)
    return paths


def test_correct_hand_workings_are_marked_with_no_wrong_line(ts, eph, pool, tmp_path):
    """500 correct workings (stars, Sun, Moon, planets; both hemispheres; east and west; UTC crossing
    midnight; every line given, the main correction combined, the main lines only, the three required)
    from skyfield's almanac rounded as printed (scripts/make_class_workings.py names each reference)."""
    sights = pool[0][:N_CORRECT]
    rng = np.random.default_rng(3)
    rows: dict[bool, list[dict]] = {False: [], True: []}
    for i, sight in enumerate(sights):
        lines = hand.work(ts, eph, sight, None, hand.STYLES[i % len(hand.STYLES)])
        rows[sight.eye_in_feet].append(hand.log_row(sight, lines, rng))
    report = mark_workings(_write(rows, tmp_path))
    assert len(report.rows) == N_CORRECT and report.workings.log.n_rejected_rows == 0
    wrong = report.rows[report.rows.first_wrong_line != ""]
    assert wrong.empty, wrong[["row", "body", "first_wrong_line", "cause", "given", "expected"]].to_string()
    # the spread the issue asks for
    kinds = pd.Series([hand.kind_of(s.body) for s in sights]).value_counts()
    assert set(kinds.index) == {"sun", "moon", "planet", "star"} and kinds.min() >= 40, kinds
    assert sum(s.dr_lat < 0 for s in sights) >= 100 and sum(s.dr_lat > 0 for s in sights) >= 100
    assert sum(s.dr_lon < 0 for s in sights) >= 100 and sum(s.dr_lon > 0 for s in sights) >= 100
    assert sum(s.crosses_midnight for s in sights) >= 50
    assert report.share_right == 1.0


def _named(cause: str, plant: str) -> bool:
    return cause == CAUSES[plant] or (cause == ZONE_OR_DATE and plant in ("zone sign", "greenwich date"))


def test_each_planted_mistake_is_named_with_its_cause(ts, eph, pool, tmp_path):
    """Every catalogued mistake planted 50 times, later lines carried forward from it as the cadet would
    (scripts/make_class_workings.py): named as the first wrong line with that cause in at least 95 %."""
    sights, rights = pool
    rng = np.random.default_rng(7)
    rows: dict[bool, list[dict]] = {False: [], True: []}
    for plant in hand.PLANTS:
        candidates = [i for i, s in enumerate(sights) if hand.eligible(s, rights[i], plant)]
        assert len(candidates) >= PLANTED_EACH, (plant, len(candidates))
        for i in rng.choice(candidates, size=PLANTED_EACH, replace=False):
            style = "main" if plant in ("sd sign", "moon parallax") and rng.random() < 0.5 else "full"
            lines = hand.work(ts, eph, sights[i], plant, style)
            rows[sights[i].eye_in_feet].append(hand.log_row(sights[i], lines, rng, Remarks=plant))
    report = mark_workings(_write(rows, tmp_path))
    planted = report.workings.log.table["remarks"].to_numpy()
    named = np.array([_named(c, p) for c, p in zip(report.rows.cause, planted)])
    assert (report.rows.first_wrong_line != "").all()
    scores = pd.Series(named).groupby(planted).mean()
    assert len(scores) == len(CAUSES) == len(hand.PLANTS)
    assert (scores >= 0.95).all(), scores[scores < 0.95].to_dict()


def test_a_wrong_line_with_no_catalogued_cause_is_named_with_its_expected_value(ts, eph, pool):
    """A GHA off by 10′ for no catalogued reason: the line is named, with the expected value and the difference."""
    sight = pool[0][0]
    lines = hand.work(ts, eph, sight, None, "short")
    lines["gha_worked"] = (lines["gha_worked"] + 10.0 / 60.0) % 360.0
    report = mark_workings(pd.DataFrame([hand.log_row(sight, lines)]))
    row = report.rows.iloc[0]
    assert row.first_wrong_line == "gha_worked" and row.cause == ""
    assert row.difference == pytest.approx(10.0, abs=0.25) and row.unit == "′"
    assert row.expected.endswith("′")


def test_carry_forward_counts_one_slip_once(ts, eph, pool):
    """An index error applied the wrong way: only the IC line is wrong, every later line was carried from it."""
    sight = next(s for s, r in zip(*pool) if hand.eligible(s, r, "index on off"))
    lines = hand.work(ts, eph, sight, "index on off", "full")
    report = mark_workings(pd.DataFrame([hand.log_row(sight, lines)]))
    assert report.rows.iloc[0]["lines wrong"] == 1
    assert report.rows.iloc[0].first_wrong_line == "ic_worked"


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
])
def test_worked_lines_are_read_in_navreds_forms(line, text, value):
    assert parse_worked(line, text) == pytest.approx(value)


@pytest.mark.parametrize("line, text, says", [
    ("intercept_worked", "3.2", "no direction"),
    ("intercept_worked", "3.2 sideways", "cannot read"),
    ("utc_worked", "09:10:07", "no date"),
    ("ap_lon", "12 04.7", "E or W"),
])
def test_a_line_that_cannot_be_read_is_refused_with_the_forms_accepted(line, text, says):
    with pytest.raises(NavredError, match=says):
        parse_worked(line, text)


def test_an_unreadable_line_is_marked_wrong_with_the_reason(ts, eph, pool):
    sight = pool[0][1]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "short"))
    row["intercept_worked"] = "4.1"  # no direction
    report = mark_workings(pd.DataFrame([row]))
    assert report.rows.iloc[0].first_wrong_line == "intercept_worked"
    assert "no direction" in report.rows.iloc[0].cause
    assert len(report.workings.unreadable) == 1


def test_the_required_lines_are_required(ts, eph, pool):
    sight = pool[0][2]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "minimal"))
    with pytest.raises(NavredError, match="intercept_worked"):
        mark_workings(pd.DataFrame([{k: v for k, v in row.items() if k != "intercept_worked"}]))
    row["zn_worked"] = ""
    report = mark_workings(pd.DataFrame([row]))
    assert report.rows.iloc[0].first_wrong_line == "zn_worked"
    assert "not given" in report.rows.iloc[0].cause


def test_the_template_round_trips(ts, eph, pool, tmp_path):
    """The empty template written, filled by a script (openpyxl) as a cadet would, read back and marked."""
    from openpyxl import load_workbook

    path = write_template(tmp_path / "blank.xlsx")
    book = load_workbook(path)
    sheet = book["Working"]
    headers = [c.value for c in sheet[1]]
    assert headers[-len(LINES):] == list(LINES)
    for cell in sheet[1]:
        assert cell.comment is not None and cell.comment.text.strip()
    assert "Accepted: 3.2 toward" in sheet.cell(row=1, column=headers.index("intercept_worked") + 1).comment.text
    validated = {str(r.sqref).split(":")[0].rstrip("0123456789") for r in sheet.data_validations.dataValidation}
    letters = {name: sheet.cell(row=1, column=headers.index(name) + 1).column_letter for name in ("body", "limb",
                                                                                                    "horizon")}
    assert set(letters.values()) <= validated
    assert book["Lists"].sheet_state == "hidden"
    assert "safety" in book["How to fill it in"]["A5"].value.lower() or "caution" in \
        book["How to fill it in"]["A5"].value.lower()
    # fill it in: three sights, the sight's columns by the template's own headers
    sights = [s for s in pool[0] if not s.eye_in_feet][:3]
    for r, sight in enumerate(sights, start=2):
        lines = hand.texts(hand.work(ts, eph, sight, None, "full"))
        zone = sight.zone_time
        values = {"date": zone.strftime("%Y-%m-%d"), "zone_time": zone.strftime("%H:%M:%S"),
                  "zone_description": f"{sight.zd_h:+d}" if sight.zd_h else "0",
                  "watch_error": "", "body": sight.body, "limb": sight.limb or None, "hs": hand.dm(sight.hs_arcmin / 60),
                  "index_error": f"{abs(sight.ie_arcmin):.1f} {'on' if sight.ie_arcmin > 0 else 'off'}"
                  if sight.ie_arcmin else "0", "eye_height_m": sight.eye_m, "horizon": "sea",
                  "dr_lat": hand.dm(sight.dr_lat, "lat"), "dr_lon": hand.dm(sight.dr_lon, "lon"),
                  "observer": "Cadet Test", "fix_group": "round 1", **lines}
        for k, name in enumerate(headers, start=1):
            if values.get(name) not in (None, ""):
                sheet.cell(row=r, column=k, value=values[name])
    book.save(tmp_path / "filled.xlsx")
    report = mark_workings(tmp_path / "filled.xlsx")
    assert len(report.rows) == 3 and (report.rows.first_wrong_line == "").all()
    assert set(report.rows.cadet) == {"Cadet Test"}


def _class_workbook(ts, eph, pool, path: Path) -> dict[str, list[str]]:
    """A class workbook, a sheet per cadet (no observer column: the sheet names the cadet)."""
    sights = [s for s in pool[0] if not s.eye_in_feet][:9]
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


def test_a_class_workbook_gives_a_sheet_per_cadet_a_summary_and_pages(ts, eph, pool, tmp_path):
    planted = _class_workbook(ts, eph, pool, tmp_path / "class.xlsx")
    report = mark_workings(tmp_path / "class.xlsx")
    assert sorted(report.rows.cadet.unique()) == ["Ansel", "Birch", "Corrie"]
    by_cadet = report.by_cadet.set_index("cadet")
    assert by_cadet.loc["Birch", "no mistake"] == 3 and by_cadet.loc["Ansel", "no mistake"] == 2
    assert by_cadet.loc["the class", "no mistake (%)"] == pytest.approx(100 * 7 / 9, abs=0.05)
    assert set(report.by_cause.cause) == {CAUSES["zone sign"], CAUSES["toward away"]}
    # the workbook: About with the caution, the class, the mistakes, the fixes, a sheet per cadet
    from openpyxl import load_workbook

    out = write_marking_workbook(report, tmp_path / "marks.xlsx")
    book = load_workbook(out)
    assert {"About", "Class", "Mistakes", "Fixes", "Marks Ansel", "Marks Birch", "Marks Corrie"} <= set(
        book.sheetnames)
    about_text = " ".join(str(c.value) for row in book["About"].iter_rows() for c in row if c.value)
    assert "navigation" in about_text.lower() and "almanac" in about_text.lower()
    # the printable pages: one per cadet
    pdf = write_marking_pdf(report, tmp_path / "marks.pdf")
    assert pdf.read_bytes().count(b"/Type /Page\n") + pdf.read_bytes().count(b"/Type /Page ") >= 3
    assert len(planted) == 3


def test_exam_mode_leaves_out_the_expected_fix_and_reference(ts, eph, pool, tmp_path):
    _class_workbook(ts, eph, pool, tmp_path / "class.xlsx")
    full = mark_workings(tmp_path / "class.xlsx")
    exam = mark_workings(tmp_path / "class.xlsx", exam=True)
    assert "expected fix" in full.fixes.columns
    assert not any("expected" in c or "reference" in c for c in exam.fixes.columns)
    assert exam.provenance["exam mode"].startswith("yes")
    pd.testing.assert_frame_equal(full.rows, exam.rows)


def test_csv_form_has_row_first_wrong_line_and_cause(ts, eph, pool, tmp_path):
    _class_workbook(ts, eph, pool, tmp_path / "class.xlsx")
    frame = marking_csv(mark_workings(tmp_path / "class.xlsx"))
    assert {"row", "first_wrong_line", "cause"} <= set(frame.columns)
    assert set(frame.first_wrong_line) == {"", "utc_worked", "intercept_worked"}


def test_cli_and_api_give_the_same_marks(ts, eph, pool, tmp_path):
    from typer.testing import CliRunner

    from navred.cli import app

    _class_workbook(ts, eph, pool, tmp_path / "class.xlsx")
    runner = CliRunner()
    result = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "-o", str(tmp_path / "marks.xlsx"),
                                 "-o", str(tmp_path / "marks.pdf")])
    assert result.exit_code == 0, result.output
    assert "9 workings of 3 cadets marked: 7 with no mistake" in result.output
    assert "Ansel: row 3 (" in result.output and CAUSES["zone sign"] in result.output
    as_csv = runner.invoke(app, ["mark", str(tmp_path / "class.xlsx"), "--csv"])
    assert as_csv.exit_code == 0, as_csv.output
    from_cli = pd.read_csv(io.StringIO(as_csv.stdout), keep_default_na=False)
    api = marking_csv(mark_workings(tmp_path / "class.xlsx"))
    assert from_cli["first_wrong_line"].tolist() == api["first_wrong_line"].tolist()
    assert from_cli["cause"].tolist() == api["cause"].tolist()
    assert from_cli["row"].tolist() == api["row"].tolist()
    assert (tmp_path / "marks.xlsx").exists() and (tmp_path / "marks.pdf").exists()
    template = runner.invoke(app, ["mark", "--template", str(tmp_path / "blank.xlsx")])
    assert template.exit_code == 0 and (tmp_path / "blank.xlsx").exists()


def test_marking_reads_the_sight_through_the_one_reader(ts, eph, pool, tmp_path):
    """The same sight columns give the same UTC and DR whether read as a sight log or as a working."""
    from navred import read_sight_log

    _class_workbook(ts, eph, pool, tmp_path / "class.xlsx")
    workings = read_workings(tmp_path / "class.xlsx")
    log = read_sight_log(tmp_path / "class.xlsx", all_sheets=True)
    pd.testing.assert_series_equal(workings.log.table["sight_utc"], log.table["sight_utc"])
    pd.testing.assert_series_equal(workings.log.table["dr_lon_deg"], log.table["dr_lon_deg"])


def test_text_from_a_working_is_written_as_text_never_a_formula(ts, eph, pool, tmp_path):
    from openpyxl import load_workbook

    sight = pool[0][3]
    row = hand.log_row(sight, hand.work(ts, eph, sight, None, "short"))
    row["intercept_worked"] = '=HYPERLINK("http://example.invalid","3.2 T")'
    row["Observer"] = "=1+1"
    path = write_marking_workbook(mark_workings(pd.DataFrame([row])), tmp_path / "m.xlsx")
    book = load_workbook(path)
    for sheet in book.worksheets:
        for cells in sheet.iter_rows():
            for cell in cells:
                assert cell.data_type != "f", (sheet.title, cell.coordinate, cell.value)


def test_every_line_has_a_form_a_tolerance_and_a_unit():
    from navred.marking import TOLERANCES, UNITS

    assert tuple(WORKED_FORMS) == LINES == tuple(TOLERANCES) == tuple(UNITS)


def test_a_semicolon_export_with_decimal_commas_marks_as_the_same_working_with_points(ts, eph, pool, tmp_path):
    """A spreadsheet's export where the separator is ';' writes 25° 03,1′: every line reads as with a point
    (the log's rule, docs/sight-log.md); in a comma-separated file a comma stays refused as ambiguous."""
    sights = [s for s in pool[0] if not s.eye_in_feet][:6]
    rows = [hand.log_row(s, hand.work(ts, eph, s, None, hand.STYLES[k % 4])) for k, s in enumerate(sights)]
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
