"""The plotting sheet (navred.figures.plotsheet), read back from its SVG as a navigator reads the page: the
symbols of the plotting convention by kind, every line labelled with its body, time, intercept and Zn, a moved
line marked and labelled with both times, no label over another or over the scale, every element inside its
frame. Text extents come from the canvas's own font metrics (navred.figures.drawing.text_width_pt and the
font's ascent and descent); the boxes are turned as SVG 1.1 specifies ``rotate(a cx cy)`` and tested for
overlap by the separating axis theorem, both written here."""

from __future__ import annotations

import math
import re
import xml.etree.ElementTree as ET

import numpy as np
import pandas as pd
import pytest

from navred.figures.drawing import FONT_ASCENT_EM, FONT_DESCENT_EM, text_width_pt
from navred.figures.plotsheet import SheetSights, plotting_sheet, save_plotting_sheet
from navred.jobs.frames import fix_position
from navred.jobs.plotfiles import plotting_figure
from navred.jobs.voyage import process_log
from tests.conftest import offset_position, skyfield_sight

SVG = "{http://www.w3.org/2000/svg}"
DEMO = "sample_sights/demo_sights.csv"
#: what is drawn on the chart: inside its frame
CHART_KINDS = {"ellipse", "ellipse tint", "band", "grid", "azimuth", "run", "line before advance", "advance mark",
               "fix", "running fix", "dr", "ep", "chart position", "every sight fix", "check fix", "north", "scale"}
CHART_LABELS = {"line label", "line tag", "fix label", "dr label", "chart label", "every sight label",
                "check fix label"}
LABEL = re.compile(r"^(?P<body>.+?) (?P<time>\d\d:\d\d)(?:→(?P<to>\d\d:\d\d))? · (?P<a>\d+\.\d) nm(?: (?P<ta>[TA]))? · "
                   r"Zn (?P<zn>\d{3}\.\d)°")


def rotate(points: np.ndarray, degrees: float, cx: float, cy: float) -> np.ndarray:
    """SVG 1.1 ``rotate(a cx cy)``: translate(cx, cy) rotate(a) translate(−cx, −cy), rotate(a) being the
    matrix [cos a, −sin a; sin a, cos a] in the user space (y down)."""
    a = math.radians(degrees)
    m = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
    return (points - (cx, cy)) @ m.T + (cx, cy)


def text_box(element) -> np.ndarray:
    """The corners of a <text>'s box: its advance from x by text-anchor, the font's ascent above the baseline
    y and descent below, turned by its transform."""
    x, y, size = float(element.get("x")), float(element.get("y")), float(element.get("font-size"))
    bold, italic = element.get("font-weight") == "bold", element.get("font-style") == "italic"
    width = text_width_pt(element.text or "", size, bold, italic)
    left = x - {"start": 0.0, "middle": width / 2, "end": width}[element.get("text-anchor", "start")]
    box = np.array([(left, y - FONT_ASCENT_EM * size), (left + width, y - FONT_ASCENT_EM * size),
                    (left + width, y + FONT_DESCENT_EM * size), (left, y + FONT_DESCENT_EM * size)])
    turn = element.get("transform")
    if turn:
        a, cx, cy = map(float, re.fullmatch(r"rotate\(([-\d.]+) ([-\d.]+) ([-\d.]+)\)", turn).groups())
        box = rotate(box, a, cx, cy)
    return box


def overlap(a: np.ndarray, b: np.ndarray, slack: float = 0.05) -> bool:
    """Separating axis theorem for two convex quadrilaterals, ``slack`` points of touching allowed."""
    for poly in (a, b):
        for k in range(len(poly)):
            edge = poly[(k + 1) % len(poly)] - poly[k]
            axis = np.array([-edge[1], edge[0]]) / (np.hypot(*edge) or 1.0)
            pa, pb = a @ axis, b @ axis
            if pa.max() <= pb.min() + slack or pb.max() <= pa.min() + slack:
                return False
    return True


def points_of(element) -> np.ndarray:
    return np.array([[float(v) for v in p.split(",")] for p in element.get("points").split()])


class Page:
    """A plotting sheet's SVG, parsed."""

    def __init__(self, svg: str):
        self.root = ET.fromstring(svg)
        self.width, self.height = (float(v) for v in self.root.get("viewBox").split()[2:])
        self.texts = list(self.root.iter(f"{SVG}text"))
        self.shapes = [e for e in self.root if e.tag in (f"{SVG}polyline", f"{SVG}polygon")]
        frame = points_of(next(e for e in self.shapes if e.get("class") == "frame"))
        self.frame = (frame[:, 0].min(), frame[:, 1].min(), frame[:, 0].max(), frame[:, 1].max())

    def kinds(self) -> set[str]:
        return {e.get("class") for e in self.root if e.get("class")}

    def of(self, kind: str) -> list:
        return [e for e in self.texts if e.get("class") == kind]


def inside(points: np.ndarray, rect, slack: float = 0.01) -> bool:
    return bool((points[:, 0] >= rect[0] - slack).all() and (points[:, 0] <= rect[2] + slack).all()
                and (points[:, 1] >= rect[1] - slack).all() and (points[:, 1] <= rect[3] + slack).all())


#: the lines no label may overprint: lines of position, a line's 95 % band, a line at its own time, a run, a
#: label's leader line, the intercepts from the DR and every arrowhead (of an intercept, a run, a moved line)
LINE_KINDS = ("line of position", "band", "line before advance", "run", "leader", "azimuth", "advance mark")
#: the clear margin a label on the chart keeps from every line, arrowhead and other label (points; common
#: practice: a label is read apart from what it does not name), and how many times nearer its own line a
#: line's label (or number) lies than any other line of position (common practice: a label is plainly its
#: own line's)
MARGIN_PT, OWN_LINE_RATIO = 1.0, 2.0


def grown(box: np.ndarray, margin: float) -> np.ndarray:
    """A rectangle's corners (in order) moved ``margin`` outward along its own sides."""
    u = (box[1] - box[0]) / (np.hypot(*(box[1] - box[0])) or 1.0)
    v = (box[3] - box[0]) / (np.hypot(*(box[3] - box[0])) or 1.0)
    return np.array([box[0] - margin * (u + v), box[1] + margin * (u - v), box[2] + margin * (u + v),
                     box[3] - margin * (u - v)])


def distance_to_segment(box: np.ndarray, a: np.ndarray, b: np.ndarray) -> float:
    """The least distance from a rectangle (not crossed by the segment) to the segment a-b."""
    def point_segment(p, q0, q1):
        d = q1 - q0
        t = float(np.clip((p - q0) @ d / (d @ d or 1.0), 0.0, 1.0))
        return float(np.hypot(*(p - q0 - t * d)))

    edges = [(box[k], box[(k + 1) % 4]) for k in range(4)]
    return min([point_segment(p, a, b) for p in box] + [point_segment(a, *e) for e in edges]
               + [point_segment(b, *e) for e in edges])


def strokes(root, kinds=LINE_KINDS) -> list[tuple[str, np.ndarray, float]]:
    """Each drawn line's segments (of the ``kinds``) as boxes of its stroke's width (kind, corners, the segment's
    angle on the page, degrees counter-clockwise, 0-180)."""
    out = []
    for e in root:
        kind = e.get("class") or ""
        if e.tag != f"{SVG}polyline" or not kind.startswith(kinds):
            continue
        half = float(e.get("stroke-width", "1")) / 2
        ends = points_of(e)
        for (x0, y0), (x1, y1) in zip(ends[:-1], ends[1:]):
            length = math.hypot(x1 - x0, y1 - y0) or 1.0
            nx, ny = -(y1 - y0) / length * half, (x1 - x0) / length * half
            box = np.array([(x0 + nx, y0 + ny), (x1 + nx, y1 + ny), (x1 - nx, y1 - ny), (x0 - nx, y0 - ny)])
            out.append((kind, box, math.degrees(math.atan2(-(y1 - y0), x1 - x0)) % 180.0))
    return out


def beside_its_own_line(label, box: np.ndarray, stroke: np.ndarray, angle: float) -> bool:
    """A line's label runs along its own line, beside it (common practice: a line is labelled along it): the
    label turned as the line and its box's middle within its height of the line."""
    turn = label.get("transform")
    rotation = float(re.fullmatch(r"rotate\(([-\d.]+) .*\)", turn).group(1)) if turn else 0.0
    if abs((-rotation - angle + 90.0) % 180.0 - 90.0) > 0.5:  # SVG turns clockwise on the page, y down
        return False
    (x0, y0), (x1, y1) = (stroke[0] + stroke[3]) / 2, (stroke[1] + stroke[2]) / 2
    cx, cy = box.mean(axis=0)
    across = abs((x1 - x0) * (cy - y0) - (y1 - y0) * (cx - x0)) / (math.hypot(x1 - x0, y1 - y0) or 1.0)
    return across < float(label.get("font-size")) * 1.5


def texts_apart(texts) -> list:
    """No text's box overlaps another's (the separating axis theorem above); (each text, its box)."""
    boxes = [(e, text_box(e)) for e in texts]
    for i, (a, box_a) in enumerate(boxes):
        for b, box_b in boxes[i + 1:]:
            assert not overlap(box_a, box_b), f"{a.text!r} ({a.get('class')}) overlaps {b.text!r} ({b.get('class')})"
            if a.get("class") in CHART_LABELS and b.get("class") in CHART_LABELS:
                assert not overlap(grown(box_a, MARGIN_PT), box_b), f"{a.text!r} touches {b.text!r}"
    return boxes


def check_page(page: Page) -> None:
    """What every plotting sheet must be: no text over another or over the scale, everything on the page, the
    chart's elements and labels inside its frame."""
    boxes = texts_apart(page.texts)
    scale = [points_of(e) for e in page.shapes if e.get("class") == "scale"]
    assert scale, "a scale bar"
    for bar in scale:
        bar_box = np.array([(bar[:, 0].min(), bar[:, 1].min() - 1.5), (bar[:, 0].max(), bar[:, 1].min() - 1.5),
                            (bar[:, 0].max(), bar[:, 1].max() + 1.5), (bar[:, 0].min(), bar[:, 1].max() + 1.5)])
        for e, box in boxes:
            assert e.get("class") == "scale" or not overlap(bar_box, box), f"{e.text!r} lies over the scale"
    # no label on the chart comes within the margin of a line or an arrowhead (labels are boxed on paper: they
    # would cut it), not even of its own line
    lines = strokes(page.root)
    for e, box in boxes:
        if e.get("class") not in CHART_LABELS:
            continue
        for kind, stroke, _ in lines:
            assert not overlap(grown(box, MARGIN_PT), stroke, slack=0.0), \
                f"{e.text!r} ({e.get('class')}) lies on or against a {kind}"
    # a line's label (or number) is plainly its own line's: the nearest line of position runs along it (a label)
    # and every other lies OWN_LINE_RATIO times as far
    lops = [(stroke, angle) for kind, stroke, angle in lines if kind.startswith("line of position")]
    for e, box in boxes:
        if e.get("class") not in ("line label", "line tag") or len(lops) < 2:
            continue
        reach = sorted((distance_to_segment(box, (s[0] + s[3]) / 2, (s[1] + s[2]) / 2), s, a) for s, a in lops)
        nearest, second = reach[0], next(r for r in reach[1:] if r[0] > reach[0][0] + 1e-6 or r[2] != reach[0][2])
        assert second[0] >= OWN_LINE_RATIO * max(nearest[0], MARGIN_PT), \
            f"{e.text!r} is {nearest[0]:.1f} pt from one line and {second[0]:.1f} pt from another"
        if e.get("class") == "line label":
            assert beside_its_own_line(e, box, nearest[1], nearest[2]), f"{e.text!r} does not run along its line"
    whole = (0.0, 0.0, page.width, page.height)
    for e, box in boxes:
        assert inside(box, whole), f"{e.text!r} runs off the page"
        if e.get("class") in CHART_LABELS:
            assert inside(box, page.frame), f"{e.text!r} runs out of the chart's frame"
    for e in page.shapes:
        assert inside(points_of(e), whole), f"a {e.get('class')} runs off the page"
        if e.get("class") in CHART_KINDS or (e.get("class") or "").startswith("line of position"):
            assert inside(points_of(e), page.frame), f"a {e.get('class')} runs out of the chart's frame"


def line_labels(page: Page) -> list[dict]:
    """Every line's label, on the line or, where it found no room, in the list under the chart."""
    texts = [e.text for e in page.of("line label")]
    listed = " ".join(e.text for e in page.of("line list"))  # a listed label may wrap onto two lines
    # a line left out ends '(row 6, left out: not used)' and is tagged by its row: 'line (row 6 left out)'
    texts += [m.group(1) for m in re.finditer(r"(?:line \((?:\d+|row \d+ left out)\)|line \(no room to mark it\)|off the "
                                               r"chart): (.+?(?:°(?: \((?:[^()]*left out[^()]*|flagged)\))?))"
                                               r"(?= line \(| off the chart:| not used, no line:|$)", listed)]
    return [LABEL.match(t).groupdict() | {"text": t} for t in texts]


def check_lines(page: Page, fix, bodies) -> list[dict]:
    """Every line the fix used is labelled with its body, intercept toward or away, and Zn (as the fix's lines
    give them, to the tenth)."""
    labels = line_labels(page)
    used = np.flatnonzero(np.isfinite(fix.lop_intercept_nm))
    assert sorted(d["body"] for d in labels) == sorted(str(bodies[k]) for k in used)
    for k in used:  # the body's label whose Zn is this line's (the Sun of a running fix has three)
        label = min((d for d in labels if d["body"] == str(bodies[k])),
                    key=lambda d: abs(float(d["zn"]) - float(fix.lop_zn_deg[k]) % 360))
        a = float(fix.lop_intercept_nm[k])
        # toward or away (a nil intercept, 0.0 nm, is neither: common practice)
        assert float(label["a"]) == pytest.approx(abs(a), abs=0.051)
        assert label["ta"] == (None if round(abs(a), 1) == 0.0 else "T" if a > 0 else "A")
        assert float(label["zn"]) == pytest.approx(float(fix.lop_zn_deg[k]) % 360, abs=0.051)
    return labels


@pytest.fixture(scope="module")
def demo():
    return process_log(DEMO, plan=False)


def test_the_demo_sheets_in_the_plotting_convention(demo):
    # the symbols: a fix a circle with a dot, a DR a half circle with a dot (common practice)
    bodies = demo.reduced.body_name.to_numpy()
    for group in demo.groups:
        page = Page(plotting_figure(demo, group).to_svg())
        check_page(page)
        kinds = page.kinds()
        assert "dr" in kinds and {"fix", "running fix"} & kinds and "ep" not in kinds, group.name
        check_lines(page, group.fix, bodies[group.rows])
        assert len(page.of("fix label")) == 1 and len(page.of("dr label")) == 1
    # check_page: on every sheet of the demo (the running fix's too) no label overprints a line or another label


def test_a_running_fix_marks_its_advanced_lines_with_both_times(demo):
    # a line advanced for a running fix is labelled with the time it was taken and the time it was advanced to,
    # and marked (common practice: a running fix's advanced line carries both times)
    group = demo.group("sun-run-sun")
    page = Page(plotting_figure(demo, group).to_svg())
    assert "running fix" in page.kinds() and "fix" not in page.kinds()
    labels = {d["time"]: d for d in line_labels(page)}
    assert labels["09:10"]["to"] == "15:40" and labels["12:56"]["to"] == "15:40"
    assert labels["15:40"]["to"] is None  # the last sight, at the fix time, was not moved
    assert "line of position advanced" in page.kinds() and "advance mark" in page.kinds()
    assert any(e.text.startswith("running fix 15:40 ") for e in page.of("fix label"))
    # the line at its own time and the run that advanced it, where the sheet holds them
    assert "line before advance" in page.kinds() and "run" in page.kinds()
    key = " ".join(e.text or "" for e in page.of("key"))  # the key names the green arrow it draws
    assert "the green arrow: the run that advanced it" in " ".join(key.split())


def _frame(rows, dr_north_nm, dr_east_nm, group="g", **columns):
    frame = pd.DataFrame(rows)  # sights from one place (a ship stopped)
    lat, lon = offset_position(float(frame.dr_lat[0]), float(frame.dr_lon[0]), dr_north_nm, dr_east_nm)
    frame["dr_lat"], frame["dr_lon"], frame["fix_group"] = lat, lon, group
    for name, value in columns.items():
        frame[name] = value
    return frame.drop(columns=["true_alt_deg", "true_az_deg"])


@pytest.fixture(scope="module")
def date_line(ts, eph):
    """Reference: skyfield's stars at evening twilight over a ship stopped astride the 180th meridian
    (17° 12′ S, 179° 58.2′ E); the DR 4 nm north and 6 nm east of her, across the date line."""
    when = pd.Timestamp("2026-06-15T06:40:00Z")
    names = ["Arcturus", "Spica", "Antares", "Acrux", "Regulus", "Canopus", "Rigil Kentaurus"]
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=2 * k), -17.2, 179.97)
            for k, name in enumerate(names)]
    return process_log(_frame(rows, 4.0, 6.0, "date line"), plan=False)


def test_a_fix_across_the_date_line(date_line):
    group = date_line.groups[0]
    fix = group.fix
    assert fix.is_fix and abs(fix.lon_deg) > 179.9
    page = Page(plotting_figure(date_line, group).to_svg())
    check_page(page)
    check_lines(page, fix, date_line.reduced.body_name.to_numpy()[group.rows])
    grid = [e.text for e in page.of("grid label")]
    assert any(t.endswith(" E") for t in grid) and any(t.endswith(" W") for t in grid)  # both sides of 180°


def test_a_line_that_is_not_a_fix_shows_its_estimated_position(ts, eph):
    """Reference: skyfield's Sun twice ten minutes apart from a ship stopped: the lines cross at about 2°, so
    the sights give a line, and the sheet marks the estimated position on it with a square (common practice)."""
    when = pd.Timestamp("2024-03-20T15:00:00Z")
    rows = [skyfield_sight(ts, eph, "Sun", when + pd.Timedelta(minutes=10 * k), 40.0, -30.0, limb="lower")
            for k in range(2)]
    voyage = process_log(_frame(rows, 3.0, -2.0, "sun line", limb="lower"), plan=False)
    group = voyage.groups[0]
    assert not group.fix.is_fix
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    assert "ep" in page.kinds() and "band" in page.kinds() and not {"fix", "running fix"} & page.kinds()
    assert page.of("fix label")[0].text.startswith("EP ") and "(not a fix)" in page.of("fix label")[0].text


def test_a_gross_error_left_out_is_named_and_the_fix_from_every_sight_marked(ts, eph):
    """Reference: skyfield's stars from a ship stopped, one of them logged under another star's name (Vega's
    altitude written as Deneb's): the line lies far off, is left out of the fix and named in the warning."""
    when = pd.Timestamp("2024-09-15T19:05:00Z")
    names = ["Vega", "Altair", "Arcturus", "Antares", "Dubhe", "Kochab"]
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 45.25, -20.5)
            for k, name in enumerate(names)]
    rows[0]["body"] = "Deneb"
    voyage = process_log(_frame(rows, 2.0, 3.0, "misnamed"), plan=False)
    group = voyage.groups[0]
    assert group.fix.left_out.any()
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    warnings = " ".join(e.text for e in page.of("warning"))
    assert "LEFT OUT" in warnings and "Deneb" in warnings
    # its line, far off the chart, is not drawn but its label is listed under the chart with the others
    labels = check_lines(page, group.fix, voyage.reduced.body_name.to_numpy()[group.rows])
    row = voyage.reduced.row.iloc[group.rows[0]]
    assert any(d["body"] == "Deneb" and d["text"].endswith(f"(row {row}, left out: not used; its line off the chart)")
               for d in labels)
    # the way to it drawn from the DR to the frame, grey and dashed, named by its row at the frame
    assert "line of position left out pointer" in page.kinds()
    assert [e.text for e in page.of("left out label")] == [f"row {row} left out"]


def test_rows_not_used_are_drawn_apart_and_listed_with_why(ts, eph, tmp_path):
    """Reference: skyfield's stars from a ship stopped (as above), one altitude written 12′ high (a slip of the
    minutes) and one row whose Hs cannot be read: the first is left out of the fix yet drawn, grey and dashed,
    tagged by its row, the legend saying it is not used; the second, which has no line, is listed under the chart;
    the Fixes sheet names both with why (common practice: a plot shows every sight taken, and which were used)."""
    import openpyxl

    from navred.figures.symbols import LEFT_OUT
    from navred.jobs.voyagebook import write_workbook

    when = pd.Timestamp("2024-09-15T19:05:00Z")
    names = ["Vega", "Altair", "Arcturus", "Antares", "Dubhe", "Kochab"]
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 45.25, -20.5)
            for k, name in enumerate(names)]
    rows[1]["hs"] += 12.0 / 60.0
    rows.append(dict(rows[5], body="Deneb", hs="61 72.4"))  # minutes past 60: refused by the reader
    voyage = process_log(_frame(rows, 6.0, -6.0, "slipped"), plan=False)
    group = voyage.groups[0]
    left = np.flatnonzero(group.fix.left_out)
    assert left.tolist() == [1]  # Altair, row 2 (a table's first row is row 1)
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    dashed = [e for e in page.root if e.get("class") == "line of position left out"]
    assert len(dashed) == 1 and dashed[0].get("stroke") == LEFT_OUT and dashed[0].get("stroke-dasharray")
    texts = " ".join(e.text or "" for e in page.texts)
    assert "row 2, left out: not used" in texts
    # named by its row on the chart itself: its label, or its tag where the label finds no room
    assert any("row 2" in e.text for e in page.texts if e.get("class") in ("line label", "line tag"))
    assert "NOT used in the fix" in " ".join(e.text for e in page.of("key"))
    refused = " ".join(e.text for e in page.of("refused list"))
    assert refused.startswith("not used, no line: row 7 Deneb: refused, not reduced (hs: cannot read '61 72.4'")
    book = openpyxl.load_workbook(write_workbook(voyage, tmp_path / "w.xlsx", plots=False))
    values = list(book["Fixes"].values)
    cell = values[1][list(values[0]).index("rows not used (why)")]
    assert cell.startswith("row 2 Altair: left out of the fix (12′ off the fix, ")
    assert "; row 7 Deneb: refused, not reduced (hs: cannot read '61 72.4'" in cell


@pytest.mark.parametrize("lat, spread", [(89.67, 30.0), (-60.0, 3000.0)])
def test_a_sheet_near_a_pole_or_of_thousands_of_miles_keeps_its_grid_readable(ts, eph, lat, spread):
    """Reference: skyfield's stars over a ship stopped at 89° 40′ N in the polar night (a minute of longitude is
    0.006 nm there), and over one at 60° S whose log names three stars wrongly, drawing a fix miles off: the
    meridians get a step of their own, no latitude beyond a pole is labelled, no grid label overlaps another."""
    when = pd.Timestamp("2026-10-20T02:00:00Z")
    names = (["Vega", "Capella", "Deneb", "Dubhe", "Mirfak", "Arcturus"] if lat > 0 else
             ["Canopus", "Achernar", "Rigil Kentaurus", "Acrux", "Peacock", "Sirius"])
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=2 * k), lat, 45.0)
            for k, name in enumerate(names)]
    if spread > 100:  # three altitudes logged against the wrong stars' names: the fix lies far off
        for k, other in ((0, "Fomalhaut"), (2, "Hadar"), (4, "Miaplacidus")):
            rows[k]["body"] = other
    voyage = process_log(_frame(rows, 3.0, -4.0, "far"), plan=False)
    group = voyage.groups[0]
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    grid = [e.text for e in page.of("grid label")]
    meridians = sum(t.endswith((" E", " W")) for t in grid)
    assert (2 if spread < 100 else 0) <= meridians <= 9  # (none on a sheet that spans every meridian)
    assert 2 <= len(grid) - meridians <= 10
    # the subtitle says what the grid's lines are: minutes near the pole's small sheet, degrees on the large one
    subtitle = " ".join(e.text for e in page.of("subtitle"))
    step = re.search(r"grid: every (\d+)([′°]) of latitude", subtitle)
    assert step and step.group(2) == ("′" if spread < 100 else "°")
    assert all(int(t.split("°")[0]) <= 90 for t in grid if t.endswith((" N", " S")))


def test_a_flagged_sight_kept_in_the_fix_has_its_check_fix_marked(ts, eph, tmp_path):
    """Reference: skyfield's stars from a ship stopped, each Hs off by a few tenths (invented scatter) and
    Arcturus' by 3.5′ more: the blunder test flags it but does not find it clear, so it stays in the fix; the
    sheet says BLUNDER? naming it, marks the check fix without it with its own symbol, names that in the key,
    and keeps every label apart and inside the frame."""
    when = pd.Timestamp("2024-09-15T19:05:00Z")
    names = ["Vega", "Altair", "Arcturus", "Antares", "Dubhe", "Kochab", "Deneb"]
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 45.25, -20.5)
            for k, name in enumerate(names)]
    errors = np.array([0.5, -0.6, 0.4 + 3.5, -0.3, 0.6, -0.5, 0.2]) / 60.0
    for row, error in zip(rows, errors):
        row["hs"] += error
    voyage = process_log(_frame(rows, 2.0, 3.0, "flagged"), plan=False)
    group = voyage.groups[0]
    fix = group.fix
    assert fix.outlier.tolist() == [False, False, True, False, False, False, False] and not fix.left_out.any()
    assert fix.without_outliers is not None
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    assert "check fix" in page.kinds() and page.of("check fix label")
    warnings = " ".join(e.text for e in page.of("warning"))
    assert "BLUNDER? row 3 Arcturus: the check fix without it lies" in warnings
    assert any("check fix, the flagged sights left out" in e.text for e in page.of("key"))


@pytest.mark.parametrize("names, offset", [
    (["Vega", "Arcturus"], (3.0, -4.0)),
    (["Vega", "Arcturus", "Antares"], (3.0, -4.0)),
    (["Vega", "Altair", "Arcturus", "Deneb", "Antares", "Dubhe", "Kochab", "Alphecca", "Rasalhague",
      "Eltanin", "Alkaid", "Polaris"], (3.0, -4.0)),
    (["Vega", "Arcturus", "Antares", "Dubhe"], (60.0, 90.0)),  # a fix 110 nm from the DR
])
def test_sheets_of_few_and_many_lines_keep_their_labels_apart(ts, eph, tmp_path, names, offset):
    """Reference: skyfield's stars over a stopped ship, the DR given off by ``offset``; the chart position is the
    truth (a triangle)."""
    from navred import reduce_sights

    when = pd.Timestamp("2024-09-15T19:05:00Z")
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 45.25, -20.5)
            for k, name in enumerate(names)]
    frame = pd.DataFrame(rows)
    lat, lon = offset_position(45.25, -20.5, *offset)
    frame["dr_lat"], frame["dr_lon"] = float(lat), float(lon)
    reduced = reduce_sights(frame)
    fix = fix_position(reduced, at_utc=when)
    sights = SheetSights(reduced.body_name.to_numpy(), reduced.sight_utc.dt.tz_convert(None).to_numpy())
    sheet = plotting_sheet(fix, sights, title=f"{len(names)} lines", chart=(45.25, -20.5))
    page = Page(sheet.to_svg())
    check_page(page)
    check_lines(page, fix, reduced.body_name.to_numpy())
    assert "chart position" in page.kinds() and page.of("chart label")
    if offset[0] > 50:  # the note on a far DR is there, wrapped, not cut
        notes = " ".join(e.text for e in page.of("warning"))
        assert "straight lines of position drawn from it are approximate" in notes
    for suffix in ("png", "svg"):
        save_plotting_sheet(fix, sights, tmp_path / f"sheet.{suffix}", title=f"{len(names)} lines",
                            chart=(45.25, -20.5))
    from PIL import Image

    with Image.open(tmp_path / "sheet.png") as png:  # a real picture, as wide as asked, in the page's proportion
        assert png.format == "PNG" and png.size[0] == 880
        assert abs(png.size[1] - 880 * sheet.height / sheet.width) <= 1
        assert len(png.convert("RGB").getcolors(1 << 20)) > 50


def test_the_placers_test_of_many_boxes_at_once_agrees_with_the_theorem_written_here():
    """navred.figures.placing.overlaps (every pair at once) against this file's separating axis theorem, on
    turned rectangles of every size and angle (invented, seeded)."""
    from navred.figures.placing import overlaps, segment_box

    rng = np.random.default_rng(27)
    a = np.stack([segment_box(*rng.uniform(0, 100, 4), rng.uniform(0.3, 6)) for _ in range(120)])
    b = np.stack([segment_box(*rng.uniform(0, 100, 4), rng.uniform(0.3, 6)) for _ in range(30)])
    found = overlaps(a, b)
    expected = np.array([[overlap(p, q, slack=1e-9) for q in b] for p in a])
    assert 0 < found.sum() < found.size and (found == expected).all()


def test_a_placers_test_of_one_box_is_the_test_of_many_boxes_at_once():
    """Placer.free works one box in plain floats; it must say what navred.figures.placing.overlaps (every pair at
    once, checked against this file's theorem above) says, on upright boxes of a 4-point grid that touch edge to
    edge, or nearly (1e-10 either way: the slack decides), and on turned ones (invented, seeded)."""
    from navred.figures.placing import Placer, overlaps, rect_corners, segment_box

    rng = np.random.default_rng(29)

    def box():
        if rng.random() < 0.5:
            x0, y0 = rng.integers(0, 40, 2) * 4.0 + rng.choice([0.0, 1e-10, -1e-10, 0.5])
            return rect_corners(x0, y0, x0 + rng.integers(1, 10) * 4.0, y0 + rng.integers(1, 5) * 4.0)
        return segment_box(*rng.uniform(0, 160, 4), rng.uniform(0.3, 6))

    frame = (-1e9, -1e9, 1e9, 1e9)
    said = []
    for _ in range(50):
        placer = Placer()
        boxes = rng.integers(1, 60)
        for k in range(boxes):
            placer.take(box())
            # a box tested now and then as boxes are taken (the placer keeps their bounds), ten at the end
            for candidate in [box() for _ in range(10 if k == boxes - 1 else int(rng.random() < 0.2))]:
                free = placer.free(candidate, frame)
                assert free == (not overlaps(candidate[None], np.array(placer.taken)).any())
                said.append(free)
    assert len(said) > 700 and 0.1 < np.mean(said) < 0.9  # both answers met


def test_a_label_with_no_room_beside_its_mark_goes_further_with_a_leader():
    """A mark in a narrow pen of lines open at the top: its label goes to the nearest free place, above the
    pen, and a leader joins it to the mark, neither over anything taken (this file's theorem)."""
    from navred.figures.placing import Placer, segment_box

    placer = Placer()
    walls = [segment_box(85, 40, 85, 140, 1.0), segment_box(115, 40, 115, 140, 1.0),
             segment_box(85, 140, 115, 140, 1.0)]
    for wall in walls:
        placer.take(wall)
    frame = (0.0, 0.0, 200.0, 200.0)
    spot, leader = placer.place_far("a label far too wide", 8, 100.0, 100.0, frame)
    label, lead = placer.taken[-2], placer.taken[-1]
    assert all(not overlap(label, wall) and not overlap(lead, wall) for wall in walls)
    assert math.hypot(leader[0] - 100.0, leader[1] - 100.0) == pytest.approx(7.0)  # from just off the mark
    assert label[:, 1].max() <= 40.0 + 1.0 and leader[3] == pytest.approx(label[:, 1].max())  # above the pen


def test_the_voyage_picture_places_its_labels_by_the_same_rule():
    """The invented passage's voyage picture (navred.figures.plotting.voyage_track_picture): its labels by the
    plotting sheet's rule, checked by this file's overlap test: no label over another, over a DR leg, a set and
    drift arrow or a leader; every fix's noon and EP labelled."""
    from navred.figures.plotting import voyage_track_picture

    days = process_log("sample_sights/passage_log.csv", plan=False).days_work()
    root = ET.fromstring(voyage_track_picture(days).to_svg())
    texts = list(root.iter(f"{SVG}text"))
    boxes = texts_apart(texts)
    labels = [(e, box) for e, box in boxes if e.get("class") == "label"]
    assert {e.text for e, _ in labels} >= {"noon 04-14", "noon 04-15", "noon 04-16", "departure"}
    lines = strokes(root, ("dr leg", "set and drift", "leader"))
    assert lines
    for e, box in labels:
        assert not any(overlap(box, stroke, slack=0.0) for _, stroke, _ in lines), f"{e.text!r} lies over a line"


def test_a_crowded_round_of_nine_keeps_each_label_clear_and_plainly_its_own_lines(ts, eph):
    """Reference: skyfield's Sun-less dawn over a ship stopped at 20° 30′ N 160° 15′ W (nine bodies, the Moon's
    lower limb, two stars 2° apart in Zn, Polaris and Dubhe 3° apart), the DR 10 nm north and 7 nm east,
    course 0 and speed 0 logged. Every label keeps the margin from every line (its own too), arrowhead and
    other label, sits nearer its own line than any other by OWN_LINE_RATIO (else the line carries a number,
    its label listed under the chart), and with no run no line is labelled as moved."""
    when = pd.Timestamp("2026-12-04T16:36:00Z")
    names = ["Dubhe", "Polaris", "Kochab", "Spica", "Venus", "Moon", "Procyon", "Betelgeuse", "Sirius"]
    rows = [skyfield_sight(ts, eph, name, when + pd.Timedelta(minutes=k), 20.5, -160.25,
                           limb="lower" if name == "Moon" else "") for k, name in enumerate(names)]
    voyage = process_log(_frame(rows, 10.2, 6.7, "crowded dawn", course_deg=0.0, speed_kn=0.0), plan=False)
    group = voyage.groups[0]
    page = Page(plotting_figure(voyage, group).to_svg())
    check_page(page)
    labels = check_lines(page, group.fix, np.array(names))
    assert all(d["to"] is None for d in labels), [d["text"] for d in labels if d["to"]]  # no run, no "→"
    assert not any(k.startswith("line of position ") for k in page.kinds())  # no line drawn as advanced
    assert not page.of("advance mark") and "advance mark" not in page.kinds()
    # the arrowheads of the intercepts are drawn (and so were checked above)
    assert sum(1 for e in page.root if e.get("class") == "azimuth") > len(names)
