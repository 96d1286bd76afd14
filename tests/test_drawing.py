"""The light drawing path (navred.figures.drawing) and the workbook's picture options."""

from __future__ import annotations

import xml.etree.ElementTree as ET
import zipfile

import numpy as np
import pytest
from PIL import Image
from typer.testing import CliRunner

from navred.cli import app
from navred.figures.drawing import Canvas, blend, clip_polygon, clip_segment
from navred.io.workbook import Pictures
from navred.jobs.plotfiles import plot_file_stems
from navred.jobs.voyage import process_log
from navred.jobs.voyagebook import write_workbook

runner = CliRunner()
DEMO = "sample_sights/demo_sights.csv"
RECT = (0.0, 0.0, 10.0, 5.0)


@pytest.mark.parametrize("segment", [(-5, 2, 15, 2), (2, -3, 8, 9), (1, 1, 3, 4), (-2, -2, -1, 8), (-4, 6, 14, -2)])
def test_a_clipped_segment_is_the_part_inside(segment):
    # Liang and Barsky (1984): the clipped segment is the set of the segment's points inside the rectangle;
    # checked here by sampling the segment densely (brute force)
    t = np.linspace(0.0, 1.0, 20001)
    x = segment[0] + t * (segment[2] - segment[0])
    y = segment[1] + t * (segment[3] - segment[1])
    inside = (x >= RECT[0]) & (x <= RECT[2]) & (y >= RECT[1]) & (y <= RECT[3])
    cut = clip_segment(*map(float, segment), RECT)
    if not inside.any():
        assert cut is None
        return
    first, last = np.flatnonzero(inside)[[0, -1]]
    assert cut == pytest.approx((x[first], y[first], x[last], y[last]), abs=2e-3)


def shoelace(points):
    x, y = np.array(points).T
    return 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def test_a_clipped_polygon_keeps_the_area_inside():
    # Sutherland and Hodgman (1974); areas by the shoelace formula
    square = [(-2.0, -2.0), (2.0, -2.0), (2.0, 2.0), (-2.0, 2.0)]
    assert shoelace(clip_polygon(square, RECT)) == pytest.approx(4.0)  # the quarter in the rectangle
    t = np.linspace(0, 2 * np.pi, 721)[:-1]
    circle = list(zip(5 + 3 * np.cos(t), 5 + 3 * np.sin(t)))  # centred on the top edge: half inside
    assert shoelace(clip_polygon(circle, RECT)) == pytest.approx(np.pi * 9 / 2, rel=1e-4)
    assert clip_polygon([(20.0, 20.0), (30.0, 20.0), (30.0, 30.0)], RECT) == []


def test_blend_is_the_colour_over_its_background():
    # alpha compositing, Porter and Duff, "Compositing digital images", SIGGRAPH 1984: c = a·top + (1 − a)·under
    assert blend("#d1495b", "#f7f3e8", 1.0) == "#d1495b"
    assert blend("#d1495b", "#f7f3e8", 0.0) == "#f7f3e8"
    assert blend("#000000", "#ffffff", 0.5) == "#808080"


def test_text_from_a_log_is_escaped_in_svg():
    # W3C XML 1.0: < and & in character data must be escaped, or the document is not well-formed
    page = Canvas(100, 50)
    page.text(10, 20, 'Star <script>alert("x")</script> & co', 8, "#000000", rotation=30, box="#ffffff")
    root = ET.fromstring(page.to_svg())
    texts = [e.text for e in root.iter("{http://www.w3.org/2000/svg}text")]
    assert texts == ['Star <script>alert("x")</script> & co']
    assert not list(root.iter("{http://www.w3.org/2000/svg}script"))


def dark(png: bytes):
    with Image.open(__import__("io").BytesIO(png)) as image:
        pixels = np.asarray(image.convert("L"))
    return np.argwhere(pixels < 128)  # (row, column) of the ink


@pytest.mark.parametrize("rotation, where", [(0, "right"), (90, "up"), (-90, "down"), (180, "left")])
def test_a_turned_label_starts_at_its_anchor(rotation, where):
    # a label anchored at its start turns about that point, counter-clockwise on the page (common practice,
    # as text rotation is specified in SVG 1.1 and in every plotting library)
    page = Canvas(200, 200)
    page.text(100, 100, "MMMMMMMM", 10, "#000000", anchor="start", baseline="middle", rotation=rotation)
    ink = dark(page.to_png(200))
    rows, columns = ink[:, 0], ink[:, 1]
    if where == "right":
        assert columns.min() >= 98 and columns.max() > 140 and abs(np.median(rows) - 100) < 4
    elif where == "left":
        assert columns.max() <= 102 and columns.min() < 60 and abs(np.median(rows) - 100) < 4
    elif where == "up":
        assert rows.max() <= 102 and rows.min() < 60 and abs(np.median(columns) - 100) < 4
    else:
        assert rows.min() >= 98 and rows.max() > 140 and abs(np.median(columns) - 100) < 4


def test_the_png_is_the_size_asked_and_lines_are_drawn_where_asked():
    page = Canvas(100, 50, "#ffffff")
    page.line([0, 100], [25, 25], "#000000", 2.0)
    page.line([50, 50], [-10, 80], "#000000", 1.0, clip=(0.0, 0.0, 40.0, 50.0))  # clipped away entirely
    ink = dark(page.to_png(300))
    assert Image.open(__import__("io").BytesIO(page.to_png(300))).size == (300, 150)
    assert set(np.unique(ink[:, 0])) <= set(range(72, 79)) and ink[:, 1].min() == 0 and ink[:, 1].max() == 299


def test_plot_file_names_never_collide():
    # two group names with the same letters and digits would write one file over the other
    assert plot_file_stems(["a b", "a-b", "A/B", "", "évening"]) == ["a-b", "a-b-2", "A-B-3", "fix", "vening"]


def media(path) -> list[str]:
    with zipfile.ZipFile(path) as archive:
        return [n for n in archive.namelist() if n.startswith("xl/media/")]


def test_pictures_beyond_the_limit_are_counted_never_dropped_silently(tmp_path):
    import openpyxl

    voyage = process_log(DEMO)
    fixed = sum(g.fix is not None for g in voyage.groups)
    book = write_workbook(voyage, tmp_path / "two.xlsx", plots=Pictures(limit=2))
    # two plotting sheets, the sight plan's sky and the voyage picture of the Day's work
    assert fixed == 3 and len(media(book)) == 2 + 1 + 1
    texts = [c.value for row in openpyxl.load_workbook(book)["Fixes"].iter_rows() for c in row if c.value]
    assert "The first 2 of 3 plotting sheets are pictured here; 1 is not: write every plotting sheet as a file " \
           "with navred workbook --plots FOLDER." in texts
    none = write_workbook(voyage, tmp_path / "none.xlsx", plots=False)
    assert media(none) == []
    texts = [c.value for row in openpyxl.load_workbook(none)["Fixes"].iter_rows() for c in row if c.value]
    assert any(str(t).startswith("Pictures left out of this workbook (3 plotting sheets)") for t in texts)


def test_the_picture_options_of_the_workbook_command(tmp_path):
    embedded = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "e.xlsx")])
    assert embedded.exit_code == 0 and len(media(tmp_path / "e.xlsx")) == 5  # 3 sheets, the sky, the voyage
    files = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "f.xlsx"), "--pictures", "files",
                                "--plot-formats", "svg"])
    assert files.exit_code == 0, files.output
    folder = tmp_path / "f-plots"  # beside the workbook
    assert sorted(p.suffix for p in folder.glob("plot-*")) == [".svg"] * 3
    assert [p.suffix for p in folder.glob("track-*")] == [".svg"]  # the voyage picture
    assert media(tmp_path / "f.xlsx") == [] and "every one is in" in files.output
    for bad in (["--pictures", "some"], ["--plot-formats", "gif"], ["--plot-formats", ","]):
        result = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "b.xlsx"), *bad])
        assert result.exit_code == 1 and "Traceback" not in result.output and bad[0] in result.output


def test_sheets_drawn_by_several_processes_are_the_files_drawn_by_one(tmp_path, monkeypatch):
    """A fleet's hundreds of plotting sheets are drawn by forked processes; each file must be byte for byte
    the one a single process draws, under the same name, none missing."""
    import navred.jobs.plotfiles as workbook

    voyage = process_log("sample_sights/demo_sights.csv", plan=False)
    monkeypatch.setattr(workbook, "PLOTS_PER_WRITE", 1)  # a batch per sheet, so that the drawers share them
    one = workbook.write_plots(voyage, tmp_path / "one", ("svg",), workers=1)
    two = workbook.write_plots(voyage, tmp_path / "two", ("svg",), workers=2)  # where it cannot fork: one drawer
    assert [p.name for p in one] == [p.name for p in two] and len(one) == voyage.n_fixes + 1  # and the track
    for a, b in zip(one, two):
        assert a.read_bytes() == b.read_bytes(), a.name
    assert workbook.drawers_for(10_000, None) >= 1 and workbook.drawers_for(10, None) == 1


def test_a_drawing_process_that_dies_leaves_its_sheets_to_the_first(tmp_path, monkeypatch):
    """Should a forked drawer die (out of memory, killed), the sheets not yet written are drawn by the
    first process: every file is still written, the same as one process writes it."""
    import os

    import navred.jobs.plotfiles as workbook

    voyage = process_log("sample_sights/demo_sights.csv", plan=False)
    monkeypatch.setattr(workbook, "PLOTS_PER_WRITE", 1)
    one = workbook.write_plots(voyage, tmp_path / "one", ("svg",), workers=1)
    parent = os.getpid()
    figure = workbook.plotting_figure

    def dies_in_a_drawer(*args):
        if os.getpid() != parent:
            os._exit(1)  # the drawer dies without a word
        return figure(*args)

    monkeypatch.setattr(workbook, "plotting_figure", dies_in_a_drawer)  # the forked drawers inherit it
    two = workbook.write_plots(voyage, tmp_path / "two", ("svg",), workers=2)
    assert [p.name for p in two] == [p.name for p in one]
    assert all(a.read_bytes() == b.read_bytes() for a, b in zip(one, two))


def test_a_run_of_many_picture_files_says_how_many_and_how_long_and_shows_its_progress(tmp_path, monkeypatch):
    """More than a few hundred picture files: a line first (how many, what, where, about how long, and that
    SVG alone is quicker), then a progress bar, on stderr; the count said is the count written. A short run
    says nothing of it."""
    import navred.jobs.plotfiles as plotfiles

    voyage = process_log("sample_sights/demo_sights.csv", plan=False)
    plan = plotfiles.plot_plan(voyage, ("png", "svg"))
    seen = []
    written = plotfiles.write_plots(voyage, tmp_path / "p", ("png", "svg"), progress=lambda d, t: seen.append((d, t)))
    assert plan.files == len(written) and plan.sheets == voyage.n_fixes and not plan.announced
    assert seen[0] == (0, voyage.n_fixes) and seen[-1] == (voyage.n_fixes, voyage.n_fixes)
    assert plan.seconds > 0 and plotfiles.plot_plan(voyage, ("svg",)).seconds < plan.seconds / 10

    quiet = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "a.xlsx"), "--plots", str(tmp_path / "a")])
    assert quiet.exit_code == 0 and "picture files to" not in quiet.stderr.split("wrote")[0]
    monkeypatch.setattr(plotfiles, "ANNOUNCE_FILES_FROM", 2)  # the demo's 8 files taken for a fleet's thousands
    loud = runner.invoke(app, ["workbook", DEMO, "-o", str(tmp_path / "b.xlsx"), "--plots", str(tmp_path / "b")])
    assert loud.exit_code == 0, loud.output
    line = next(x for x in loud.stderr.splitlines() if x.startswith("writing "))
    assert f"writing {plan.files} picture files to {tmp_path / 'b'}" in line
    assert f"{voyage.n_fixes} plotting sheets as PNG and SVG" in line and "about" in line and "--plot-formats svg" in line
    assert "longer on a busy one" in line and "Ctrl-C stops it" in line  # (a trial's run took twice the estimate)
    assert "drawing plotting sheets" in loud.stderr  # the progress bar
    assert f"wrote {plan.files} picture files" in loud.stdout
