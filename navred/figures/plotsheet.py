"""The plotting sheet of a fix, drawn in the trade's conventions on navred's light canvas. Edge code.

A local chart of the fix: a grid of latitude and longitude minutes scaled as on a Mercator chart at the DR's
latitude (one minute of latitude is one nautical mile up the page, one minute of longitude cos φ miles
across), the DR at the fix time, each line of position advanced or retired to the fix time, the fix and its
95 % ellipse (or the line and its band, with the estimated position on it), the chart position when there
is one, a scale bar in nautical miles and a north arrow.

The symbols are the plotting convention of common practice (as taught, and as Bowditch's *American Practical
Navigator*, NGA Pub. No. 9, describes the plot of a DR track; from memory): a fix is a circle with a dot, a
DR a half circle with a dot, an estimated position a square with a dot; a position from outside the
sights (the chart's, a satellite receiver's) is a triangle here. A line of position is labelled with its
body, the time of its sight and, when it was moved to the fix time, the time it was advanced (or retired)
to, its intercept toward or away (T/A) and its azimuth Zn; a line moved by the run carries a double chevron
pointing the way it was moved, and where the line at its own time falls on the sheet it is drawn dotted
with the run that moved it. Every label is placed where it overlaps no other label, symbol, the scale or
the north arrow (:mod:`navred.figures.placing`); a line whose label finds no room carries a number, and
its label is written under the chart. Notes and warnings are wrapped, never cut.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..angles import format_angle, wrap_180, wrap_axial
from ..status import FixKind, RunFrom
from .drawing import Canvas, blend, clip_segment, text_corners, text_width_pt, wrap_text
from .placing import Placer, Spot, place_mark_label, rect_corners, segment_box
from .symbols import (
    CHART,
    ELLIPSE,
    FIX,
    FLAGGED,
    GRID,
    INK,
    LEFT_OUT,
    PAPER,
    SHEET_PT,
    check_fix_symbol,
    dr_symbol,
    ep_symbol,
    every_sight_symbol,
    fix_symbol,
    grid_step,
    nice_length,
    position_symbol,
)

#: the plotting area: a square this many points wide, this far from the page's left edge
AREA_PT, AREA_LEFT_PT = 476.0, 70.0
MARGIN_PT = 18.0
#: A fix whose lines were taken further apart than this is a running fix (common practice: a round of stars
#: taken within the twilight is a fix, a morning and an afternoon Sun a running fix).
RUNNING_FIX_MINUTES = 30.0
#: A line moved to the fix time by the run across at least a minute of time is marked as advanced (or retired).
ADVANCED_MINUTES = 1.0

_CIRCLE_STEPS = np.linspace(0.0, 2.0 * np.pi, 73)[:-1]
LABEL_PT, NOTE_PT = 6.5, 8.0
#: the clear margin every label on the chart keeps from any other label, line or arrowhead (points: the
#: placer's pad on each box); a line's label beside its own line (from the line's middle to the text's
#: edge) and the least distance from its text to any other line, so that a label is plainly its own line's
CLEAR_PT, BESIDE_PT, OTHERS_PT = 2.0, 3.0, 10.0
_WEIGHTED = " (of a sight of weight 1: the log's σ weighs the sights)"


@dataclass(frozen=True)
class SheetSights:
    """The sights of a plotting sheet, in the fix's input-row order: each one's body, UTC, its name in notes
    ('row 9') and, to draw a line as it was before it was advanced, its DR, intercept and Zn at its own time."""

    body: Sequence[str]
    utc: np.ndarray
    rows: Sequence[str] | None = None
    dr_lat_deg: np.ndarray | None = None
    dr_lon_deg: np.ndarray | None = None
    intercept_nm: np.ndarray | None = None
    zn_deg: np.ndarray | None = None
    #: the group's rows the fix could not use because they were not reduced (refused), each named with why
    #: ('row 8 Capella: refused, not reduced (hs: ...)'): listed under the chart, having no line to draw
    refused: Sequence[str] = ()


def _hhmm(utc) -> str:
    return "" if np.isnat(np.datetime64(utc, "ns")) else str(np.datetime64(utc, "m"))[11:16]


class _Frame:
    """The chart's geometry: positions to sheet miles east and north of the DR (``plane``), sheet miles to
    points on the page (``page``), and the area the chart is drawn in."""

    def __init__(self, fix, chart, top: float, feet_xy: np.ndarray):
        self.lat0, self.lon0 = float(fix.dr_lat_deg), float(fix.dr_lon_deg)
        self.cos_lat = math.cos(math.radians(self.lat0))
        self.fix_xy = self.plane(float(fix.lat_deg), float(fix.lon_deg))
        points = [(0.0, 0.0), self.fix_xy] + ([self.plane(float(chart[0]), float(chart[1]))] if chart else [])
        xs, ys = zip(*points, *map(tuple, feet_xy))
        extent = fix.ellipse_semi_major_nm if fix.is_fix else fix.ellipse_semi_minor_nm
        self.half = max(np.ptp(xs), np.ptp(ys), 4.0 * extent, 2.0) * 0.75 + 1.0
        self.cx, self.cy = (max(xs) + min(xs)) / 2.0, (max(ys) + min(ys)) / 2.0
        self.area = (AREA_LEFT_PT, top, AREA_LEFT_PT + AREA_PT, top + AREA_PT)
        self.per_nm = AREA_PT / (2.0 * self.half)

    def plane(self, lat, lon):
        if isinstance(lat, float) and isinstance(lon, float):
            return float(wrap_180(lon - self.lon0)) * 60.0 * self.cos_lat, (lat - self.lat0) * 60.0
        return (wrap_180(np.asarray(lon) - self.lon0) * 60.0 * self.cos_lat,
                (np.asarray(lat) - self.lat0) * 60.0)

    def page(self, x, y):
        x0, _, _, y1 = self.area
        left, bottom = self.cx - self.half, self.cy - self.half
        if isinstance(x, (list, np.ndarray)) or isinstance(y, (list, np.ndarray)):
            return (x0 + (np.asarray(x, dtype=float) - left) * self.per_nm,
                    y1 - (np.asarray(y, dtype=float) - bottom) * self.per_nm)
        return x0 + (x - left) * self.per_nm, y1 - (y - bottom) * self.per_nm

    def inside(self, px: float, py: float, margin: float = 0.0) -> bool:
        x0, y0, x1, y1 = self.area
        return x0 + margin <= px <= x1 - margin and y0 + margin <= py <= y1 - margin

    def line_across(self, fx: float, fy: float, bearing_deg: float):
        """The part inside the area of the line through (fx, fy) sheet miles at a true bearing: page ends or None."""
        dx, dy = math.sin(math.radians(bearing_deg)), math.cos(math.radians(bearing_deg))
        length = 4.0 * self.half + abs(fx - self.cx) + abs(fy - self.cy)
        (ax, bx), (ay, by) = self.page([fx - dx * length, fx + dx * length], [fy - dy * length, fy + dy * length])
        return clip_segment(float(ax), float(ay), float(bx), float(by), self.area)


@dataclass
class _Lop:
    """One line of position as the sheet draws it."""

    row: int
    label: str
    colour: str
    dashed: bool
    ends: tuple[float, float, float, float] | None  # on the page, inside the area
    moved: str  # 'advanced', 'retired' or ''
    run_page: tuple[float, float] | None  # the run's direction on the page (unit), for the chevrons
    before: tuple[float, float, float, float] | None = None  # the line at its own time, on the page
    run_arrow: tuple[float, float, float, float] | None = None
    tag: str = ""
    #: a sight left out of the fix: drawn grey and dashed (LEFT_OUT_DASH), labelled by its row, not used
    left_out: bool = False
    #: a line left out that lies off the chart: ``ends`` is then its intercept from the DR to the frame, the
    #: way to the line, with an arrowhead at the frame
    pointer: bool = False


#: the dashes of a line left out of the fix (points), apart from a flagged line's (5, 3)
LEFT_OUT_DASH = (2.0, 2.5)


def plotting_sheet(fix, sights: SheetSights, *, title: str = "", chart=None) -> Canvas:
    """The fix's plotting sheet as a :class:`navred.figures.drawing.Canvas` (render it with ``to_svg`` or ``to_png``).

    ``fix`` is a :class:`navred.fixresult.FixResult`; ``sights`` its sights (:class:`SheetSights`); ``chart``
    an optional (lat, lon). A sight left out of the fix as a gross error does not set the sheet's extent (its
    line may lie a hundred miles off); the sheet names it, and marks the fix from every sight where it falls
    on the sheet.
    """
    n = len(sights.body)
    rows = list(sights.rows) if sights.rows is not None else [f"sight {k + 1}" for k in range(n)]
    left_out = (np.asarray(fix.left_out, dtype=bool) if np.size(fix.left_out) == n else np.zeros(n, dtype=bool))
    used = np.flatnonzero(np.isfinite(fix.lop_intercept_nm))
    probe = _Frame(fix, chart, 0.0, np.zeros((0, 2)))
    feet = np.stack(probe.plane(fix.lop_foot_lat_deg[used], fix.lop_foot_lon_deg[used]), axis=1)

    sheet = Canvas(SHEET_PT, SHEET_PT, PAPER)
    placer = Placer(gap_pt=CLEAR_PT)
    top = _header(sheet, placer, fix, sights, rows, left_out, title, probe)
    frame = _Frame(fix, chart, top, feet[~left_out[used]])
    # a line left out near enough widens the sheet to show it (up to twice as wide); one farther is pointed to
    near = left_out[used] & (np.max(np.abs(feet - (frame.cx, frame.cy)), axis=1) <= 2.0 * frame.half)
    if near.any():
        frame = _Frame(fix, chart, top, feet[~left_out[used] | near])
    ellipse = _ellipse_page(fix, frame) if fix.is_fix else None
    if ellipse is not None:  # the tint first, so that the grid and the lines show through it
        sheet.polygon(*ellipse, fill=blend(ELLIPSE, PAPER, 0.15), clip=frame.area, kind="ellipse tint")
    _grid(sheet, placer, frame)
    lops = _lines(fix, sights, frame, used, feet, left_out)
    _draw_lines(sheet, frame, lops)
    band = []
    if ellipse is not None:
        sheet.polygon(*ellipse, outline=ELLIPSE, width=1.2, clip=frame.area, kind="ellipse")
    else:
        band = [_segment_box(*ends, 1.6) for ends in _band(sheet, fix, frame)]
    _scale_and_north(sheet, placer, frame)
    for lop in lops:
        if lop.run_arrow is not None:
            placer.take(_segment_box(*lop.run_arrow, 3.0))
    marks = _symbols(sheet, placer, fix, sights, frame, chart)
    marks[0][-1].append(_zone_of_the_fix(placer, frame))
    for lop in lops:  # the way to a line left out off the chart: named at the frame, its full label listed below
        if lop.pointer and lop.ends is not None:
            tip = (lop.ends[2], lop.ends[3])
            marks.append((f"{lop.label.rsplit(' (', 1)[1].split(',')[0]} left out", 7, LEFT_OUT,
                          _around(*tip, 7.0), "left out label", False, tip, []))
    for lop in lops:
        if lop.moved and lop.run_page is not None and lop.ends is not None:
            _chevrons(sheet, placer, frame, lop)
    # the lines no label may overprint (a label is boxed on paper: it would cut the line)
    strokes = _stroke_boxes(sheet, ("azimuth",))
    for box in _stroke_boxes(sheet, ("azimuth",), heads_only=True):
        placer.take(box)  # the intercepts' arrowheads: no label over them
    line_boxes = _line_boxes(lops) + band + strokes
    unplaced = [mark for mark in marks if not _place_mark(sheet, placer, frame, line_boxes, *mark)]
    listed = _line_labels(sheet, placer, frame, lops, band + strokes)
    sheet.line(*_frame_lines(frame.area), INK, 0.8, kind="frame")
    _footer(sheet, frame, lops, listed, [mark[0] for mark in unplaced], sights.refused)
    return sheet


def _line_boxes(lops: list[_Lop], but: _Lop | None = None, half: float = 1.2) -> list[np.ndarray]:
    """The boxes of the lines of position drawn (and of the lines at their own time), ``but`` one's, ``half``
    points either side of each."""
    ends = [e for lop in lops if lop is not but for e in (lop.ends, lop.before) if e is not None]
    return [_segment_box(*e, half) for e in ends]


def _stroke_boxes(sheet, kinds, heads_only: bool = False) -> list[np.ndarray]:
    """The boxes of the thin lines of ``kinds`` drawn so far (the intercepts from the DR and their arrowheads),
    as wide as their stroke; ``heads_only``: only the arrowheads' (the short strokes)."""
    boxes = []
    for item in sheet.items:
        if getattr(item, "kind", None) not in kinds or not hasattr(item, "width"):
            continue
        for (x0, y0), (x1, y1) in zip(item.points[:-1], item.points[1:]):
            if heads_only and math.hypot(x1 - x0, y1 - y0) > 8.0:
                continue
            boxes.append(_segment_box(x0, y0, x1, y1, item.width / 2.0))
    return boxes


def _place_mark(sheet, placer: Placer, frame: _Frame, line_boxes, text, size, colour, spots, kind, bold, at,
                own) -> bool:
    """A mark's label placed clear of every label, symbol and line (:func:`navred.figures.placing.place_mark_label`:
    beside its symbol, else nearest with a leader line, else smaller); whether it found a place (else it is
    listed under the chart)."""
    placed = place_mark_label(placer, text, size, spots, at, _inner(frame.area), lines=line_boxes, own=own,
                              bold=bold)
    if placed is None:
        return False
    if placed.leader is not None:
        sheet.line(placed.leader[0::2], placed.leader[1::2], colour, 0.6, kind="leader")
    spot = placed.spot
    sheet.text(spot.x, spot.y, text, placed.size, colour, anchor=spot.anchor, baseline=spot.baseline, bold=bold,
               box=PAPER, kind=kind)
    return True


def _inner(area, margin: float = 2.0):
    return (area[0] + margin, area[1] + margin, area[2] - margin, area[3] - margin)


def _frame_lines(area):
    x0, y0, x1, y1 = area
    return [x0, x1, x1, x0, x0], [y0, y0, y1, y1, y0]


def _text_lines(sheet, x: float, y: float, text: str, size: float, colour: str, width: float, *, kind: str,
                bold: bool = False, italic: bool = False) -> float:
    """A note wrapped to ``width`` from (x, y) down; the y below its last line."""
    for line in wrap_text(text, size, width, bold, italic):
        y += 1.3 * size
        sheet.text(x, y, line, size, colour, bold=bold, italic=italic, kind=kind)
    return y


def is_running_fix(fix, utc) -> bool:
    """Whether a fix is a running fix: its sights (``utc``, in its input-row order) taken more than
    RUNNING_FIX_MINUTES apart, the lines carried by a run to the fix time (common practice)."""
    return _is_running_fix(fix, SheetSights([""] * len(utc), np.asarray(utc, dtype="datetime64[ns]")))


def _is_running_fix(fix, sights: SheetSights) -> bool:
    utc = np.asarray(sights.utc, dtype="datetime64[ns]")[np.asarray(fix.used, dtype=bool)]
    utc = utc[~np.isnat(utc)]
    if fix.run_from == RunFrom.NONE or utc.size < 2:
        return False
    return float((utc.max() - utc.min()) / np.timedelta64(1, "m")) > RUNNING_FIX_MINUTES


def _what(fix, sights: SheetSights) -> str:
    if fix.is_fix:
        return "running fix" if _is_running_fix(fix, sights) else "fix"
    return "EP on the latitude (not a fix)" if fix.kind == FixKind.LATITUDE else "EP on the line (not a fix)"


def _taken_words(fix) -> str:
    """' (the ellipse takes 1.00′)' where the ellipse is built on a σ other than the residuals' (taken as known, at
    least 1′: :func:`navred.fixstats.ellipse_sigma`), else ''."""
    taken = fix.ellipse_sigma_arcmin
    return f" (the ellipse takes {taken:.2f}′)" if taken == taken and abs(taken - fix.sigma_arcmin) >= 0.005 else ""


def _header(sheet, placer, fix, sights, rows, left_out, title, frame) -> float:
    """The title, what the sheet shows and every warning of the fix, wrapped; the top of the area below them."""
    width = SHEET_PT - 2 * MARGIN_PT
    y = _text_lines(sheet, MARGIN_PT, 12.0, title or "Plotting sheet", 11, INK, width, kind="title", bold=True)
    extent = (f"95 % ellipse {fix.ellipse_text()}" if fix.is_fix else
              f"angle of cut {fix.angle_of_cut_deg:.0f}°: 95 % band {fix.ellipse_text()}")
    y = _text_lines(sheet, MARGIN_PT, y + 2, f"{_what(fix, sights)} at {str(fix.utc)[:19].replace('T', ' ')} UTC · "
                    f"{extent} · σ {fix.sigma_arcmin:.2f}′{_taken_words(fix)}{_WEIGHTED if fix.weighted else ''} · "
                    f"{_grid_words(frame)}",
                    NOTE_PT, INK, width, kind="subtitle")
    for warning in _warnings(fix, sights, rows, left_out, frame):
        y = _text_lines(sheet, MARGIN_PT, y, warning, NOTE_PT, FIX, width, kind="warning", bold=True)
    return y + 12.0


def _warnings(fix, sights, rows, left_out, frame) -> list[str]:
    """What the sheet must say before anything is plotted from it: a round that cannot be trusted, sights left
    out (and why), a flagged sight's check fix, the fix's other warnings, a DR far enough off that straight
    lines are only approximate."""
    from ..triangle import distance_bearing

    out = []
    warnings = list(fix.warnings)
    if fix.untrusted:
        out += [w for w in warnings if w.startswith("CANNOT BE TRUSTED")] or [
            f"CANNOT BE TRUSTED as the position to plot: {fix.untrusted}"]
    every = fix.all_sights
    if every is not None and left_out.any():
        n = len(sights.body)
        by_test = (np.asarray(fix.blunder_left_out, dtype=bool) if np.size(fix.blunder_left_out) == n
                   else np.zeros(n, dtype=bool))
        miles, bearing = distance_bearing(fix.lat_deg, fix.lon_deg, every.lat_deg, every.lon_deg)
        names = ", ".join(f"{rows[k]} {sights.body[k]} ({abs(float(fix.residual_arcmin[k])):.0f}′ off, "
                          f"{'the blunder test' if by_test[k] else 'a gross error'})"
                          for k in np.flatnonzero(left_out))
        out.append(f"LEFT OUT: {names}; the fix from every sight lies {float(miles):.1f} nm "
                   f"{float(bearing):03.0f}° from this one.")
    check = fix.without_outliers
    if check is not None:
        flagged = ", ".join(f"{rows[k]} {sights.body[k]}"
                            for k in np.flatnonzero(np.asarray(fix.outlier, dtype=bool) & ~left_out))
        miles, bearing = distance_bearing(fix.lat_deg, fix.lon_deg, check.lat_deg, check.lon_deg)
        out.append(f"BLUNDER? {flagged}: the check fix without it lies {float(miles):.1f} nm {float(bearing):03.0f}° "
                   "from this one.")
    out += [f"Warning: {w}" for w in warnings
            if not w.startswith("CANNOT BE TRUSTED") and not (left_out.any() and w.startswith("LEFT OUT of this"))]
    dr_miles = float(np.hypot(*frame.fix_xy))
    if dr_miles > 30.0 and fix.is_fix:
        out.append(f"The DR is {dr_miles:.0f} nm from the fix: straight lines of position drawn from it are "
                   "approximate this far out; the fix itself is solved on the sphere.")
    return out


def _ellipse_page(fix, frame: _Frame):
    turn = math.radians(fix.ellipse_orientation_deg)
    cos_t, sin_t = np.cos(_CIRCLE_STEPS), np.sin(_CIRCLE_STEPS)
    a, b = fix.ellipse_semi_major_nm, fix.ellipse_semi_minor_nm
    ex = frame.fix_xy[0] + a * cos_t * math.sin(turn) + b * sin_t * math.cos(turn)
    ey = frame.fix_xy[1] + a * cos_t * math.cos(turn) - b * sin_t * math.sin(turn)
    return frame.page(ex, ey)


def _grid(sheet, placer, frame: _Frame) -> None:
    """Whole multiples of the step in latitude and in longitude, labelled outside the area."""
    ax0, ay0, ax1, ay1 = frame.area
    step = _longitude_step(2 * frame.half)  # (a sheet of thousands of miles too gets eight lines or fewer)
    lat_lo, lat_hi = frame.lat0 + (frame.cy - frame.half) / 60, frame.lat0 + (frame.cy + frame.half) / 60
    lat_lo, lat_hi = max(lat_lo, -90.0), min(lat_hi, 90.0)  # a sheet reaching past a pole: no latitude beyond it
    lon_lo = frame.lon0 + (frame.cx - frame.half) / 60 / frame.cos_lat
    lon_hi = frame.lon0 + (frame.cx + frame.half) / 60 / frame.cos_lat
    lat_ticks = np.arange(np.ceil(lat_lo * 60 / step), np.floor(lat_hi * 60 / step) + 1) * step / 60
    # the meridians by a step of their own: a minute of longitude is cos φ miles, so that near a pole the
    # latitude's step would crowd them (about eight lines or fewer); none on a sheet that spans every meridian
    lon_step = _longitude_step((lon_hi - lon_lo) * 60)
    lon_ticks = (np.arange(np.ceil(lon_lo * 60 / lon_step), np.floor(lon_hi * 60 / lon_step) + 1) * lon_step / 60
                 if lon_hi - lon_lo < 360.0 else np.zeros(0))
    _, lat_rows = frame.page(np.zeros(lat_ticks.size), frame.plane(lat_ticks, frame.lon0)[1])
    for py, text in zip(np.atleast_1d(lat_rows).tolist(), [format_angle(v, "lat") for v in lat_ticks.tolist()]):
        sheet.line([ax0, ax1], [py, py], GRID, 0.7, kind="grid")
        sheet.text(ax0 - 4, py, text, 7, INK, anchor="end", baseline="middle", kind="grid label")
        placer.take(text_corners(ax0 - 4, py, text, 7, anchor="end", baseline="middle"))
    lon_columns, _ = frame.page(frame.plane(np.full(lon_ticks.size, frame.lat0), lon_ticks)[0],
                                np.zeros(lon_ticks.size))
    for px, text in zip(np.atleast_1d(lon_columns).tolist(), [format_angle(v, "lon") for v in lon_ticks.tolist()]):
        sheet.line([px, px], [ay0, ay1], GRID, 0.7, kind="grid")
        sheet.text(px, ay1 + 6, text, 7, INK, anchor="end", baseline="top", rotation=30, kind="grid label")
        placer.take(text_corners(px, ay1 + 6, text, 7, anchor="end", baseline="top", rotation=30))


#: steps of the grid beyond the plotting sheet's usual (minutes of arc): 20°, 30°, 45°, 60°, 90°
_WIDE_STEPS_ARCMIN = (1200.0, 1800.0, 2700.0, 3600.0, 5400.0)


def _arc_words(arcmin: float) -> str:
    return f"{arcmin / 60:g}°" if arcmin >= 60 else f"{arcmin:g}′"


def _grid_words(frame: _Frame) -> str:
    """What the grid's lines are, as the sheet draws them: 'grid: every 5′ of latitude, 10′ of longitude'."""
    lat_step = _longitude_step(2 * frame.half)
    lon_span = 2 * frame.half / frame.cos_lat
    if lon_span >= 360.0 * 60:
        return f"grid: every {_arc_words(lat_step)} of latitude (the sheet spans every meridian)"
    lon_step = _longitude_step(lon_span)
    if lon_step == lat_step:
        return f"grid: every {_arc_words(lat_step)} of latitude and longitude"
    return f"grid: every {_arc_words(lat_step)} of latitude, {_arc_words(lon_step)} of longitude"


def _longitude_step(span_arcmin: float) -> float:
    """The grid's step for a sheet ``span_arcmin`` of longitude (or latitude) across: about eight lines or fewer."""
    step = grid_step(span_arcmin)
    for wide in _WIDE_STEPS_ARCMIN:
        if span_arcmin / step <= 8:
            break
        step = wide
    return step


def _line_text(fix, sights: SheetSights, row: int, moved: str, left_out: bool, name: str = "") -> str:
    """'Sun 09:10→15:40 · 6.2 nm A · Zn 113.5°': body, time (and the time moved to), intercept, Zn; a line left
    out of the fix ends '(row 6, left out: not used)'."""
    intercept = float(fix.lop_intercept_nm[row])
    when = _hhmm(sights.utc[row]) + (f"→{_hhmm(fix.utc)}" if moved else "")
    side = "" if round(abs(intercept), 1) == 0.0 else " T" if intercept > 0 else " A"  # a nil intercept has no side
    text = f"{sights.body[row]} {when} · {abs(intercept):.1f} nm{side} · Zn {float(fix.lop_zn_deg[row]) % 360:05.1f}°"
    if left_out:
        return text + f" ({name + ', ' if name else ''}left out: not used)"
    return text + (" (flagged)" if bool(fix.outlier[row]) else "")


def _minutes_moved(fix, sights: SheetSights, row: int) -> float:
    """How many minutes the line was moved across: from its sight's time to the fix's (negative: retired)."""
    return float((np.datetime64(fix.utc, "ns") - np.datetime64(sights.utc[row], "ns")) / np.timedelta64(1, "m"))


def _moved(fix, sights: SheetSights, row: int) -> str:
    """Whether the line was advanced (taken before the fix time) or retired (after) by the run, or neither."""
    if fix.run_from == RunFrom.NONE or _no_run(fix, sights, row):
        return ""
    minutes = _minutes_moved(fix, sights, row)
    if not np.isfinite(minutes) or abs(minutes) < ADVANCED_MINUTES:
        return ""
    return "advanced" if minutes > 0 else "retired"


def _no_run(fix, sights: SheetSights, row: int) -> bool:
    """Whether the ship's run moved the line by nothing: its sight's DR is the DR at the fix time (a ship
    stopped, or a speed of 0), so the line is its own and is labelled with its own time only."""
    if sights.dr_lat_deg is None or sights.dr_lon_deg is None or not np.isfinite(sights.dr_lat_deg[row]):
        return False
    dlat = float(sights.dr_lat_deg[row]) - float(fix.dr_lat_deg)
    dlon = float(wrap_180(float(sights.dr_lon_deg[row]) - float(fix.dr_lon_deg)))
    return abs(dlat) < 1e-5 and abs(dlon) < 1e-5  # within about a metre


def _lines(fix, sights: SheetSights, frame: _Frame, used, feet, left_out) -> list[_Lop]:
    """Each line of position of the fix as the sheet draws it, tangent to its circle at the foot; a line left out
    of the fix grey and dashed, labelled by its row."""
    lops = []
    names = list(sights.rows) if sights.rows is not None else [f"sight {k + 1}" for k in range(len(sights.body))]
    for row in used.tolist():
        fx, fy = (float(v) for v in frame.plane(float(fix.lop_foot_lat_deg[row]), float(fix.lop_foot_lon_deg[row])))
        flagged = bool(fix.outlier[row])
        moved = _moved(fix, sights, row)
        if left_out[row] and _off_chart(frame, fx, fy, float(fix.lop_tangent_deg[row])):
            # a gross error's line, off the sheet: its intercept from the DR drawn to the frame, the way to it
            text = _line_text(fix, sights, row, moved, True, names[row])[:-1] + "; its line off the chart)"
            lops.append(_Lop(row, text, LEFT_OUT, True,
                             _pointer(frame, fx, fy), moved, None, left_out=True, pointer=True))
            continue
        out = bool(left_out[row])
        lop = _Lop(row, _line_text(fix, sights, row, moved, out, names[row]),
                   LEFT_OUT if out else FLAGGED if flagged else INK, flagged or out,
                   frame.line_across(fx, fy, float(fix.lop_tangent_deg[row])), moved, None, left_out=out)
        if moved:
            _before(lop, fix, sights, frame, row, (fx, fy), _minutes_moved(fix, sights, row) > RUNNING_FIX_MINUTES)
        lops.append(lop)
    return lops


def _off_chart(frame: _Frame, fx: float, fy: float, tangent_deg: float) -> bool:
    """Whether a line through (fx, fy) sheet miles misses the chart, or only grazes its corner."""
    ends = frame.line_across(fx, fy, tangent_deg)
    return ends is None or math.hypot(ends[2] - ends[0], ends[3] - ends[1]) < 0.2 * AREA_PT


def _pointer(frame: _Frame, fx: float, fy: float):
    """From the DR toward the foot of a line off the chart (along its intercept), to the chart's frame: page ends
    or None."""
    dr = frame.page(0.0, 0.0)
    miles = math.hypot(fx, fy)
    if miles == 0.0:
        return None
    far = frame.page(fx / miles * 4.0 * frame.half, fy / miles * 4.0 * frame.half)
    return clip_segment(float(dr[0]), float(dr[1]), float(far[0]), float(far[1]), _inner(frame.area, 3.0))


def _before(lop: _Lop, fix, sights: SheetSights, frame: _Frame, row: int, foot, far: bool) -> None:
    """The run's direction on the page, and for a line moved ``far`` (a running fix's, not a round's) where
    the sheet shows it, the line at its own time (from the DR, intercept and Zn at its time) with the run that
    moved it: an arrow from that line to the moved one."""
    if sights.dr_lat_deg is None or not np.isfinite(sights.dr_lat_deg[row]):
        return
    sx, sy = frame.plane(float(sights.dr_lat_deg[row]), float(sights.dr_lon_deg[row]))
    run = np.array([-sx, -sy])  # from the DR at the sight's time to the DR at the fix time (0, 0)
    miles = float(np.hypot(*run))
    if miles == 0.0:
        return
    lop.run_page = (float(run[0] / miles), float(-run[1] / miles))  # page y runs down
    if not far or sights.intercept_nm is None or not np.isfinite(sights.intercept_nm[row]):
        return
    from ..triangle import destination

    lat, lon = destination(sights.dr_lat_deg[row], sights.dr_lon_deg[row], sights.zn_deg[row],
                           sights.intercept_nm[row])
    bx, by = frame.plane(float(lat), float(lon))
    tangent = math.radians(float(fix.lop_tangent_deg[row]))
    normal = np.array([math.cos(tangent), -math.sin(tangent)])  # across the line, in sheet miles
    across = float((np.array([foot[0] - bx, foot[1] - by])) @ normal)
    if abs(across) * frame.per_nm < 8.0:
        return  # the run moved the line too little to show
    lop.before = frame.line_across(bx, by, float(fix.lop_tangent_deg[row]))
    along = float(run @ normal)
    if lop.before is None or abs(along) < 1e-9:
        return
    # the arrow of the run: from the point of the line at its own time nearest the middle of the sheet, along
    # the run, to the moved line
    direction = np.array([math.sin(tangent), math.cos(tangent)])
    start = np.array([bx, by]) + direction * float((np.array([frame.cx - bx, frame.cy - by])) @ direction)
    tip = start + run * (across / along)
    start_page, tip_page = frame.page(float(start[0]), float(start[1])), frame.page(float(tip[0]), float(tip[1]))
    if frame.inside(*start_page, 4.0) and frame.inside(*tip_page, 4.0):
        lop.run_arrow = (start_page[0], start_page[1], tip_page[0], tip_page[1])


def _arrow_head(sheet, x: float, y: float, ux: float, uy: float, colour: str, size: float, kind: str) -> None:
    """An open arrowhead at (x, y) pointing along (ux, uy) (page units)."""
    for side in (0.45, -0.45):
        c, s = math.cos(side), math.sin(side)
        bx, by = -(ux * c - uy * s), -(ux * s + uy * c)
        sheet.line([x + size * bx, x], [y + size * by, y], colour, 1.0, kind=kind)


def _draw_lines(sheet, frame: _Frame, lops: list[_Lop]) -> None:
    """The lines of position, the azimuth from the DR to each (the intercept), the chevrons of a moved line
    and the line at its own time with its run."""
    dr = frame.page(0.0, 0.0)
    for lop in lops:
        if lop.before is not None:
            sheet.line(lop.before[0::2], lop.before[1::2], blend(lop.colour, PAPER, 0.55), 0.8, dash=(1.2, 2.4),
                       kind="line before advance")
        if lop.run_arrow is not None:
            x0, y0, x1, y1 = lop.run_arrow
            sheet.line([x0, x1], [y0, y1], CHART, 0.9, kind="run")
            length = math.hypot(x1 - x0, y1 - y0)
            _arrow_head(sheet, x1, y1, (x1 - x0) / length, (y1 - y0) / length, CHART, 5.0, "run")
        if lop.ends is None:
            continue
        dash = LEFT_OUT_DASH if lop.left_out else (5.0, 3.0) if lop.dashed else None
        if lop.pointer:  # the way to a line off the chart: its intercept from the DR, an arrowhead at the frame
            x0, y0, x1, y1 = lop.ends
            length = math.hypot(x1 - x0, y1 - y0) or 1.0
            sheet.line([x0, x1], [y0, y1], lop.colour, 1.0, dash=dash, kind="line of position left out pointer")
            _arrow_head(sheet, x1, y1, (x1 - x0) / length, (y1 - y0) / length, lop.colour, 6.0,
                        "line of position left out pointer")
            continue
        sheet.line(lop.ends[0::2], lop.ends[1::2], lop.colour, 1.0 if lop.left_out else 1.3, dash=dash,
                   kind="line of position" + (f" {lop.moved}" if lop.moved else "") + (" left out" if lop.left_out
                                                                                      else ""))
    for lop in lops:
        if not lop.pointer:
            _azimuth(sheet, frame, lop, dr)


def _chevrons(sheet, placer, frame: _Frame, lop: _Lop) -> None:
    """A double chevron on a moved line, pointing the way the run moved it, where it is clear of the symbols
    and labels (kept clear of later labels)."""
    x0, y0, x1, y1 = lop.ends
    ux, uy = lop.run_page
    if lop.moved == "retired":
        ux, uy = -ux, -uy
    for f in (1 / 3, 2 / 3, 1 / 4, 3 / 4, 1 / 5, 4 / 5, 1 / 2, 1 / 8, 7 / 8):
        mx, my = x0 + f * (x1 - x0), y0 + f * (y1 - y0)
        box = rect_corners(mx - 8.0, my - 8.0, mx + 8.0, my + 8.0)
        if placer.free(box, _inner(frame.area)):
            placer.take(box)
            for shift in (-2.6, 2.6):
                _arrow_head(sheet, mx + shift * ux, my + shift * uy, ux, uy, lop.colour, 6.0, "advance mark")
            return


def _azimuth(sheet, frame: _Frame, lop: _Lop, dr) -> None:
    """From the DR along Zn to the line's foot: the intercept as it is plotted by hand, the arrow toward the
    body (a foot within a few points of the DR gets a short stub toward the body)."""
    if lop.ends is None:
        return
    x0, y0, x1, y1 = lop.ends
    ex, ey = x1 - x0, y1 - y0
    length = math.hypot(ex, ey)
    if length == 0.0:
        return
    ux, uy = ex / length, ey / length
    t = (dr[0] - x0) * ux + (dr[1] - y0) * uy
    foot = (x0 + t * ux, y0 + t * uy)  # the foot of the perpendicular from the DR
    text = lop.label
    toward = " T " in text
    dx, dy = foot[0] - dr[0], foot[1] - dr[1]
    miles = math.hypot(dx, dy)
    if miles < 10.0:  # the line passes by the DR: a stub toward the body shows its Zn
        zn = math.radians(float(text.split("Zn ")[1].split("°")[0]))
        dx, dy = 10.0 * math.sin(zn), -10.0 * math.cos(zn)
        end = (dr[0] + dx, dr[1] + dy)
        toward = True
    else:
        end = foot
    colour = blend(lop.colour, PAPER, 0.6)
    cut = clip_segment(dr[0], dr[1], end[0], end[1], frame.area)
    if cut is None:
        return
    sheet.line([cut[0], cut[2]], [cut[1], cut[3]], colour, 0.7, kind="azimuth")
    reach = math.hypot(dx, dy)
    ux, uy = (dx / reach, dy / reach) if toward else (-dx / reach, -dy / reach)
    if frame.inside(cut[2], cut[3], 3.0) and (cut[2], cut[3]) == (end[0], end[1]):
        _arrow_head(sheet, end[0] if toward else end[0] + 4 * ux, end[1] if toward else end[1] + 4 * uy, ux, uy,
                    colour, 3.5, "azimuth")


def _band(sheet, fix, frame: _Frame) -> list:
    """A line (or latitude) and its 95 % band; the ends of the lines drawn."""
    drawn = []
    across = math.radians(fix.line_toward_deg)
    for offset, dash in ((0.0, None), (fix.ellipse_semi_minor_nm, (1.5, 2.5)), (-fix.ellipse_semi_minor_nm, (1.5, 2.5))):
        ox, oy = frame.fix_xy[0] + offset * math.sin(across), frame.fix_xy[1] + offset * math.cos(across)
        ends = frame.line_across(ox, oy, float(fix.line_bearing_deg))
        if ends is not None:
            sheet.line(ends[0::2], ends[1::2], FIX, 2.2 if offset == 0 else 1.0, dash=dash, kind="band")
            drawn.append(ends)
    return drawn


def _scale_and_north(sheet, placer, frame: _Frame) -> None:
    """A scale bar in nautical miles (bottom left) and a north arrow (top right), both kept free of labels."""
    ax0, ay0, ax1, ay1 = frame.area
    bar = nice_length(frame.half * 0.5)
    x0, y0 = ax0 + 16.0, ay1 - 18.0
    text = f"{bar:g} nautical mile{'s' if bar != 1 else ''}"
    sheet.line([x0, x0 + bar * frame.per_nm], [y0, y0], INK, 3.0, kind="scale")
    sheet.text(x0 + bar * frame.per_nm / 2, y0 - 5, text, 8, INK, anchor="middle", box=PAPER, kind="scale")
    box = text_corners(x0 + bar * frame.per_nm / 2, y0 - 5, text, 8, anchor="middle")
    placer.take(_hull(box, x0 - 2, y0 - 3, x0 + bar * frame.per_nm + 2, y0 + 3))
    nx, ny = ax1 - 22.0, ay0 + 58.0
    top = ny - 36.0
    sheet.line([nx, nx], [ny, top + 6], INK, 1.6, kind="north")
    sheet.polygon([nx - 4, nx, nx + 4], [top + 8, top, top + 8], fill=INK, outline=INK, width=0.5, kind="north")
    sheet.text(nx, top - 2, "N", 11, INK, anchor="middle", bold=True, kind="north")
    placer.take(rect_corners(nx - 9, top - 2 - 12, nx + 9, ny + 2))


_segment_box = segment_box


def _hull(box: np.ndarray, x0: float, y0: float, x1: float, y1: float) -> np.ndarray:
    """The upright rectangle holding a text's box and another rectangle."""
    return rect_corners(min(box[:, 0].min(), x0), min(box[:, 1].min(), y0), max(box[:, 0].max(), x1),
                        max(box[:, 1].max(), y1))


def _around(x: float, y: float, gap: float) -> list[Spot]:
    """Spots for a symbol's label, nearest first: right, left, above and below, then further out."""
    spots = []
    for far in (gap, gap + 10.0, gap + 24.0, gap + 44.0):
        spots += [Spot(x + far, y - 2, "start", "bottom"), Spot(x + far, y + 2, "start", "top"),
                  Spot(x - far, y - 2, "end", "bottom"), Spot(x - far, y + 2, "end", "top"),
                  Spot(x, y - far, "middle", "bottom"), Spot(x, y + far, "middle", "top")]
    return spots


def _symbols(sheet, placer, fix, sights, frame: _Frame, chart) -> list:
    """The DR, the fix (or the EP on the line), the fix from every sight, the chart position: drawn, their
    boxes taken, and their labels to place (the fix's first)."""
    marks = []
    when = _hhmm(fix.utc)
    dr = frame.page(0.0, 0.0)
    placer.take(dr_symbol(sheet, *dr))
    dr_box = placer.taken[-1]
    at = frame.page(*frame.fix_xy)
    position = f"{format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}"
    what = _what(fix, sights)
    if fix.is_fix:
        placer.take(fix_symbol(sheet, *at, kind="running fix" if what == "running fix" else "fix"))
        fix_box = placer.taken[-1]
        text = f"{what} {when}  {position}"
    else:
        placer.take(ep_symbol(sheet, *at))
        fix_box = placer.taken[-1]
        text = f"EP {when}  {position} on the {'latitude' if fix.kind == FixKind.LATITUDE else 'line'} (not a fix)"
    marks.append((text, 8, FIX, _around(*at, 9.0), "fix label", True, at, [fix_box]))
    marks.append((f"DR {when}", 7.5, INK, _around(*dr, 8.0), "dr label", False, dr, [dr_box]))
    every = fix.all_sights
    if every is not None:
        ex, ey = frame.page(*frame.plane(float(every.lat_deg), float(every.lon_deg)))
        if frame.inside(ex, ey, 8.0):
            placer.take(every_sight_symbol(sheet, ex, ey))
            marks.append(("fix from every sight (not the fix)", 7, FLAGGED, _around(ex, ey, 9.0), "every sight label",
                          False, (ex, ey), [placer.taken[-1]]))
    check = fix.without_outliers
    if check is not None:
        kx, ky = frame.page(*frame.plane(float(check.lat_deg), float(check.lon_deg)))
        if frame.inside(kx, ky, 8.0):
            placer.take(check_fix_symbol(sheet, kx, ky))
            marks.append(("check fix (without the flagged)", 7, FLAGGED, _around(kx, ky, 9.0), "check fix label",
                          False, (kx, ky), [placer.taken[-1]]))
    if chart is not None:
        px, py = frame.page(*frame.plane(float(chart[0]), float(chart[1])))
        if frame.inside(px, py, 8.0):
            placer.take(position_symbol(sheet, px, py))
            marks.append(("chart or GNSS position", 7, CHART, _around(px, py, 9.0), "chart label", False, (px, py),
                          [placer.taken[-1]]))
    return marks


def _zone_of_the_fix(placer, frame: _Frame) -> np.ndarray:
    """Line labels keep clear of the fix itself, where the lines cross (the fix's own leader may cross it)."""
    x, y = frame.page(*frame.fix_xy)
    placer.take(rect_corners(x - 16.0, y - 16.0, x + 16.0, y + 16.0))
    return placer.taken[-1]


def _readable(ux: float, uy: float) -> float:
    """The turn (degrees counter-clockwise) of a label along a page direction, kept upright."""
    angle = math.degrees(math.atan2(-uy, ux))
    return float(wrap_axial(angle + 90.0)) - 90.0


def _line_spots(lop: _Lop, k: int, count: int) -> list[Spot]:
    """Spots along a line for its label, beside the line on either side (never on it), from a place staggered
    per line outward."""
    x0, y0, x1, y1 = lop.ends
    angle = _readable(x1 - x0, y1 - y0)
    turn = math.radians(angle)
    nx, ny = -math.sin(turn), -math.cos(turn)  # the text's up, on the page
    first = 0.3 + 0.4 * (k / max(count - 1, 1))
    fractions = sorted(np.arange(0.04, 0.97, 0.02), key=lambda f: abs(f - first))
    spots = []
    for f in fractions:
        px, py = x0 + f * (x1 - x0), y0 + f * (y1 - y0)
        spots.append(Spot(px + BESIDE_PT * nx, py + BESIDE_PT * ny, "middle", "bottom", angle))
        spots.append(Spot(px - BESIDE_PT * nx, py - BESIDE_PT * ny, "middle", "top", angle))
    return spots


def _line_labels(sheet, placer, frame: _Frame, lops: list[_Lop], band) -> list[_Lop]:
    """Each line's label beside it, clear of its own line, where it overlaps no label, symbol, arrowhead or
    thin line and no other line comes within OTHERS_PT of it (so that it is plainly this line's); else a
    number beside the line by the same rule (the label goes under the chart); the lines so listed. ``band``:
    the boxes of a line's band and of the intercepts drawn from the DR."""
    listed = []
    area = _inner(frame.area)
    drawn = [lop for lop in lops if lop.ends is not None and not lop.pointer]
    own_half = 0.65  # half the line's stroke: the placer's pad keeps CLEAR_PT beyond it
    for k, lop in enumerate(drawn):
        spots = _line_spots(lop, k, len(drawn))
        own = [_segment_box(*lop.ends, own_half)]
        others = _line_boxes(lops, but=lop, half=own_half + OTHERS_PT - CLEAR_PT)
        clear = placer.with_also(own + others + band)
        base = len(clear.taken)
        spot = clear.place(lop.label, LABEL_PT, spots, area)
        if spot is not None:
            placer.taken.extend(clear.taken[base:])
            sheet.text(spot.x, spot.y, lop.label, LABEL_PT, lop.colour, anchor=spot.anchor, baseline=spot.baseline,
                       rotation=spot.rotation, box=PAPER, kind="line label")
            continue
        # a line left out is tagged by its row (the sheet's warning and the Fixes sheet name it so)
        tag = f"({lop.label.rsplit(' (', 1)[1].split(',')[0]} left out)" if lop.left_out else f"({len(listed) + 1})"
        spot = clear.place(tag, LABEL_PT, spots, area, bold=True)
        if spot is not None:
            lop.tag = tag
            placer.taken.extend(clear.taken[base:])
            sheet.text(spot.x, spot.y, lop.tag, LABEL_PT, lop.colour, anchor=spot.anchor, baseline=spot.baseline,
                       rotation=spot.rotation, bold=True, box=PAPER, kind="line tag")
        listed.append(lop)
    listed += [lop for lop in lops if lop.ends is None or lop.pointer]
    return listed


_KEY = (("fix", "fix"), ("running fix", "running fix"), ("dr", "DR"), ("ep", "estimated position (EP)"),
        ("chart position", "chart or GNSS position"), ("every sight fix", "fix from every sight (not the fix)"),
        ("check fix", "check fix, the flagged sights left out (not the fix)"))


def _footer(sheet, frame: _Frame, lops: list[_Lop], listed: list[_Lop], marks: list[str],
            refused: Sequence[str] = ()) -> None:
    """Under the chart: the labels that found no room on it, the group's rows refused (no line to draw), the key
    to the symbols and lines on this sheet, how a line is labelled, and the caution; the page's height set to
    hold them."""
    width = SHEET_PT - 2 * MARGIN_PT
    y = frame.area[3] + 46.0
    for text in marks:
        y = _text_lines(sheet, MARGIN_PT, y, f"no room on the chart: {text}", 7, INK, width, kind="mark list")
    for lop in listed:
        where = (f"line {lop.tag}" if lop.tag else "off the chart" if lop.ends is None or lop.pointer
                 else "line (no room to mark it)")
        y = _text_lines(sheet, MARGIN_PT, y, f"{where}: {lop.label}", 7, lop.colour, width, kind="line list")
    for text in refused:
        y = _text_lines(sheet, MARGIN_PT, y, f"not used, no line: {text}", 7, LEFT_OUT, width, kind="refused list")
    y = _key(sheet, y + 6.0, {item.kind for item in sheet.items if item.kind}, lops)
    y = _line_key(sheet, y, lops)
    if any(lop.moved for lop in lops):
        text = ("A line with a double chevron was moved by the ship's run to the fix time, the chevron pointing the "
                "way: advanced from its sight's time (or retired), labelled with both times.")
        if any(lop.before is not None for lop in lops):
            text += " Dotted: a running fix's line at its own time"
            text += ("; the green arrow: the run that advanced it." if any(lop.run_arrow is not None for lop in lops)
                     else " (the run that advanced it falls outside the sheet).")
        y = _text_lines(sheet, MARGIN_PT, y, text, 7, INK, width, kind="key")
    y = _text_lines(sheet, MARGIN_PT, y, "Each line: body, sight time in UTC (→ time moved to), intercept toward (T) or away "
                    "(A) and Zn from the DR at the fix time (a moved line's differ from the Working sheet's, worked "
                    "from the DR at its own time). The thin line from the DR to each line of position is its intercept along "
                    "Zn, the arrow toward the body.", 7, INK, width, kind="key")
    y = _text_lines(sheet, MARGIN_PT, y + 2, "An aid to navigation, not a sole means: check against the official "
                    "almanac and keep a DR plot.", 7, INK, width, kind="caution", italic=True)
    sheet.height = math.ceil(y + 10.0)


def _key(sheet, y: float, kinds: set, lops: list[_Lop]) -> float:
    """A row of the symbols drawn on this sheet with their words; the y below it."""
    drawers = {"fix": fix_symbol, "running fix": fix_symbol, "dr": dr_symbol, "ep": ep_symbol,
               "chart position": position_symbol, "every sight fix": every_sight_symbol,
               "check fix": check_fix_symbol}
    x, y = MARGIN_PT + 6.0, y + 8.0
    for kind, words in _KEY:
        if kind not in kinds:
            continue
        step = 20.0 + text_width_pt(words, 7)
        if x + step > SHEET_PT - MARGIN_PT:
            x, y = MARGIN_PT + 6.0, y + 16.0
        drawers[kind](sheet, x, y + (2.0 if kind == "dr" else 0.0), kind="key")
        sheet.text(x + 10, y, words, 7, INK, baseline="middle", kind="key")
        x += step
    return y + 6.0


def _line_key(sheet, y: float, lops: list[_Lop]) -> float:
    """The lines that are not plain on this sheet, each a short stroke as drawn with its words: a line left out
    of the fix (not used) and a flagged one (used); the y below them."""
    rows = []
    if any(lop.left_out and lop.ends is not None for lop in lops):
        rows.append((LEFT_OUT, LEFT_OUT_DASH, 1.0, "grey dashes: a sight LEFT OUT of the fix (a gross error or the "
                                                   "blunder test), labelled by its row: NOT used in the fix" +
                     ("; an arrow from the DR: the way to such a line off the chart, along its intercept"
                      if any(lop.pointer and lop.ends is not None for lop in lops) else "")))
    if any(lop.dashed and not lop.left_out for lop in lops):
        rows.append((FLAGGED, (5.0, 3.0), 1.3, "long dashes: a flagged sight, kept in the fix (see the check fix)"))
    for colour, dash, width, words in rows:
        y += 12.0
        x = MARGIN_PT + 6.0
        sheet.line([x - 4.0, x + 22.0], [y, y], colour, width, dash=dash, kind="key")
        y = _text_lines(sheet, x + 28.0, y - 1.3 * 7 + 2.5, words, 7, INK, SHEET_PT - MARGIN_PT - x - 28.0,
                        kind="key") - 2.5
    return y + (6.0 if rows else 0.0)


def save_plotting_sheet(fix, sights: SheetSights, path, *, title: str = "", chart=None) -> Path:
    """Draw the plotting sheet and save it (PNG or SVG by the file's suffix)."""
    from ..io.output import atomic_write
    from .plotting import write_canvas

    sheet = plotting_sheet(fix, sights, title=title, chart=chart)
    return atomic_write(Path(path), lambda p: write_canvas(sheet, p))


__all__ = ["SheetSights", "plotting_sheet", "is_running_fix", "save_plotting_sheet", "RUNNING_FIX_MINUTES", "ADVANCED_MINUTES"]
