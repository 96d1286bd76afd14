"""The pictures: the palette and the files, the voyage's track, a sight series, the sky of a sight plan. Edge code.

The plotting sheet of a fix is :mod:`navred.figures.plotsheet`'s. The voyage picture and the series are drawn on
navred's light canvas (:mod:`navred.figures.drawing`, SVG or PNG in a few milliseconds, so a workbook can hold
hundreds), and so is the sky of a sight plan.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..angles import format_angle, wrap_180
from ..constants import NIL_DRIFT_KN
from ..stats import chi_square_2_quantile
from .drawing import text_width_pt
from .placing import Placer, place_mark_label, rect_corners, segment_box, segment_boxes
from .symbols import (  # noqa: F401  (the palette, also for the other figures)
    CHART,
    ELLIPSE,
    FIX,
    FLAGGED,
    GRID,
    INK,
    PAPER,
    SHEET_PT,
    ep_symbol,
    fix_symbol,
    grid_step,
    nice_length,
    position_symbol,
)

#: the width of a plotting sheet saved as PNG (the page is 8 inches: 110 pixels an inch)
SHEET_PNG_PX = 880


def canvas_bytes(canvas, suffix: str, *, png_width_px: int = SHEET_PNG_PX) -> bytes:
    """A :class:`navred.figures.drawing.Canvas` as the contents of an SVG or PNG file (by ``suffix``)."""
    if suffix.lower().lstrip(".") == "svg":
        return canvas.to_svg().encode("utf-8")
    return canvas.to_png(png_width_px)


def write_canvas(canvas, path, *, png_width_px: int = SHEET_PNG_PX) -> None:
    """Write a :class:`navred.figures.drawing.Canvas` as SVG or PNG, by the file's suffix."""
    Path(path).write_bytes(canvas_bytes(canvas, Path(path).suffix, png_width_px=png_width_px))


def save_figure(figure, path) -> None:
    """Save a figure as PNG or SVG (by suffix); SVG keeps its text as text, searchable and editable. A
    :class:`navred.figures.drawing.Canvas` is written by :func:`write_canvas`."""
    if hasattr(figure, "to_svg"):
        write_canvas(figure, path)
        return
    import matplotlib

    target = Path(path)
    fmt = target.suffix.lstrip(".").lower() or "png"
    # no date in the file: the same plan draws the same file (the committed demo is checked against a redraw)
    metadata = {"Date": None} if fmt in ("svg", "pdf") else None
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "navred"}):
        figure.savefig(target, facecolor=figure.get_facecolor(), format=fmt, metadata=metadata)


#: the sky picture's page (points): its width, the disk's radius, the disk's centre below the page's top
SKY_WIDTH_PT, SKY_RADIUS_PT = 540.0, 215.0
#: the ring round a recommended body and the halo of the sky's colour round every dot (points)
SKY_RING_PT, SKY_HALO_PT = 8.0, 0.7
SKY_DISK = "#e9eef5"


def _sky_xy(cx: float, cy: float, zn_deg, hc_deg):
    """A body's place on the disk: azimuth clockwise from north at the top, the zenith at the centre and the
    horizon at the rim (the distance from the centre proportional to the zenith distance)."""
    r = (90.0 - np.asarray(hc_deg, dtype=float)) / 90.0 * SKY_RADIUS_PT
    zn = np.radians(np.asarray(zn_deg, dtype=float))
    return cx + r * np.sin(zn), cy - r * np.cos(zn)


def sky_picture(plan, *, title: str = ""):
    """A picture of the sky for a sight plan, as a :class:`navred.figures.drawing.Canvas`: azimuth around,
    altitude inward.

    The zenith is at the centre and the horizon at the rim; bearings run clockwise from north at the top, as
    on a compass card. Every candidate is a dot sized by its brightness and labelled with its name; the
    recommended set is ringed and joined to the centre. The labels are placed as the plotting sheet's are
    (:func:`navred.figures.placing.place_mark_label`): beside the dot where there is room, clear of every other
    label, dot and ring and of the lines to the centre; else at the nearest free place with a leader line;
    else smaller; a name with no room at all is listed under the disk.
    """
    from .drawing import Canvas, blend, text_corners, wrap_text
    from .placing import Spot, place_mark_label, segment_box

    sheet = Canvas(SKY_WIDTH_PT, 600.0, PAPER)
    placer = Placer()
    width = SKY_WIDTH_PT - 2 * 36.0
    y = 12.0
    for line in wrap_text(title or "Sight plan", 11, width, True):
        y += 14.0
        sheet.text(36.0, y, line, 11, INK, bold=True, kind="title")
    for line in wrap_text(f"{str(plan.utc)[:16].replace('T', ' ')} UTC at {format_angle(plan.lat_deg, 'lat')} "
                          f"{format_angle(plan.lon_deg, 'lon')} · ringed: the recommended set (DOP {plan.dop:.2f})",
                          8, width):
        y += 10.4
        sheet.text(36.0, y, line, 8, INK, kind="subtitle")
    cx, cy = SKY_WIDTH_PT / 2.0, y + 34.0 + SKY_RADIUS_PT
    steps = np.linspace(0.0, 2.0 * np.pi, 181)[:-1]
    sheet.polygon(cx + SKY_RADIUS_PT * np.sin(steps), cy - SKY_RADIUS_PT * np.cos(steps), fill=SKY_DISK, outline=GRID,
                  width=0.9, kind="disk")
    for alt in (20, 45, 70):
        r = (90.0 - alt) / 90.0 * SKY_RADIUS_PT
        sheet.line(cx + r * np.sin(steps), cy - r * np.cos(steps), GRID, 0.7, kind="grid")
    names = ("N 000°", "045°", "E 090°", "135°", "S 180°", "225°", "W 270°", "315°")
    for k, name in enumerate(names):
        zn = math.radians(45.0 * k)
        sheet.line([cx, cx + SKY_RADIUS_PT * math.sin(zn)], [cy, cy - SKY_RADIUS_PT * math.cos(zn)], GRID, 0.7,
                   kind="grid")
        tx, ty = cx + (SKY_RADIUS_PT + 12.0) * math.sin(zn), cy - (SKY_RADIUS_PT + 12.0) * math.cos(zn)
        sheet.text(tx, ty, name, 8, INK, anchor="middle", baseline="middle", kind="grid label")
        placer.take(text_corners(tx, ty, name, 8, anchor="middle", baseline="middle", pad=placer.gap_pt))
    shown = np.isfinite(plan.hc_deg) & np.isfinite(plan.zn_deg)
    x, y_ = _sky_xy(cx, cy, plan.zn_deg, np.clip(plan.hc_deg, 0.0, 90.0))
    chosen = np.asarray(plan.recommended, dtype=bool) & shown
    lines = []
    for k in np.flatnonzero(chosen):  # the recommended set joined to the centre
        sheet.line([cx, x[k]], [cy, y_[k]], blend(FIX, SKY_DISK, 0.6), 0.8, kind="line to the centre")
        lines.append(segment_box(cx, cy, float(x[k]), float(y_[k]), 0.9))
    # the rim: no name's box runs over it (a box of the sky's colour spilling onto the paper hid the horizon)
    rim = np.linspace(0.0, 2.0 * np.pi, 121)
    lines += [segment_box(cx + SKY_RADIUS_PT * math.sin(a), cy - SKY_RADIUS_PT * math.cos(a),
                          cx + SKY_RADIUS_PT * math.sin(b), cy - SKY_RADIUS_PT * math.cos(b), 0.9)
              for a, b in zip(rim[:-1], rim[1:])]
    # matplotlib's scatter sizes of the picture this replaces: an area of 60 − 14 m square points, 8 to 140
    radius = np.sqrt(np.clip(60 - 14 * np.nan_to_num(plan.magnitude, nan=2.0), 8, 140)) / 2.0
    marks = []
    # every body's dot stays in sight (a star 2° from the Moon sits on the Moon's dot and inside its ring): the
    # rings first, under every dot; then the dots from the biggest to the smallest, each on a thin halo of the
    # sky's colour, so a small dot drawn over a big one shows as a dot of its own
    for k in np.flatnonzero(chosen):
        sheet.circle(float(x[k]), float(y_[k]), SKY_RING_PT, outline=FIX, width=1.8, kind="ring")
    for k in sorted(np.flatnonzero(shown).tolist(), key=lambda k: -float(radius[k])):
        sheet.circle(float(x[k]), float(y_[k]), float(radius[k]) + SKY_HALO_PT, fill=SKY_DISK, kind="body halo")
        sheet.circle(float(x[k]), float(y_[k]), float(radius[k]), fill=INK, outline=INK, width=0.5, kind="body")
    for k in np.flatnonzero(shown):
        reach = float(radius[k]) + (7.0 if chosen[k] else 1.5)
        placer.take(rect_corners(x[k] - reach, y_[k] - reach, x[k] + reach, y_[k] + reach))
        marks.append((k, placer.taken[-1], reach))
    unplaced = []
    frame = (12.0, cy - SKY_RADIUS_PT - 24.0, SKY_WIDTH_PT - 12.0, cy + SKY_RADIUS_PT + 24.0)
    dots = [m[1] for m in marks]  # a leader may pass over another body's dot (a cluster), never over a name
    for k, _, reach in sorted(marks, key=lambda m: (not chosen[m[0]], m[0])):  # the set's names first
        name, bold, colour = str(plan.body[k]), bool(chosen[k]), FIX if chosen[k] else INK
        # only close beside the dot: a name farther off is joined to its dot by a leader (a name 26 pt from a
        # star sitting on the Moon's dot read as nobody's)
        spots = _beside(float(x[k]), float(y_[k]), reach + 2.0, rings=2)
        placed = place_mark_label(placer, name, 7.5, spots, (float(x[k]), float(y_[k])), frame, lines=lines,
                                  own=dots, bold=bold)
        if placed is None:
            unplaced.append(name)
            continue
        if placed.leader is not None:
            sheet.line(placed.leader[0::2], placed.leader[1::2], colour, 0.6, kind="leader")
        spot: Spot = placed.spot
        sheet.text(spot.x, spot.y, name, placed.size, colour, anchor=spot.anchor, baseline=spot.baseline, bold=bold,
                   box=SKY_DISK, kind="body label")
    for alt in (20, 45, 70):  # the altitude of each ring, where it is clear of the bodies and their names
        r = (90.0 - alt) / 90.0 * SKY_RADIUS_PT
        spots = [Spot(cx + r * math.sin(math.radians(zn)), cy - r * math.cos(math.radians(zn)), "middle", "middle")
                 for zn in (22.5, 337.5, 157.5, 202.5, 67.5, 292.5, 112.5, 247.5)]
        spot = placer.place(f"{alt}°", 7, spots, frame)
        if spot is not None:
            sheet.text(spot.x, spot.y, f"{alt}°", 7, INK, anchor="middle", baseline="middle", box=SKY_DISK,
                       kind="grid label")
    y = cy + SKY_RADIUS_PT + 34.0
    notes = ([f"No room on the picture for: {', '.join(unplaced)}."] if unplaced else []) + [
        "Zenith at the centre, horizon at the rim; the rings at altitudes 20°, 45° and 70°; the dots sized by "
        "brightness. An aid, not a sole means of "
        "navigation."]
    for note in notes:
        for line in wrap_text(note, 7, width, italic=True):
            y += 9.5
            sheet.text(36.0, y, line, 7, INK, italic=True, kind="caution")
    sheet.height = math.ceil(y + 12.0)
    return sheet


def nice_ticks(low: float, high: float, most: int = 7) -> np.ndarray:
    """Round tick values (1, 2 or 5 times a power of ten apart) covering low..high, at most ``most``
    of them (common practice for chart axes)."""
    span = max(high - low, 1e-9)
    for power in range(int(np.floor(np.log10(span / most))) - 1, 12):
        for factor in (1.0, 2.0, 5.0):
            step = factor * 10.0 ** power
            ticks = np.arange(np.ceil(low / step), np.floor(high / step) + 1) * step
            if len(ticks) <= most:
                return ticks + 0.0  # no "-0"
    return np.array([low, high])


#: the page of a series picture, in points (5 by 3.2 inches)
SERIES_PT = (360.0, 230.0)


def series_plot(times, ho_deg, flagged, curve_times, curve_ho_deg, best_index, *, title: str = ""):
    """A small picture of one sight series on a :class:`navred.figures.drawing.Canvas`: the predicted
    altitude curve, the sights, the flagged ones crossed, the best sight ringed."""
    from .drawing import Canvas

    t0 = np.asarray(curve_times, dtype="datetime64[ns]")[0]

    def minutes(values):
        return (np.asarray(values, dtype="datetime64[ns]") - t0).astype(np.int64) / 6e10

    base = float(np.nanmin(curve_ho_deg))
    cx, cy = minutes(curve_times), (np.asarray(curve_ho_deg, dtype=float) - base) * 60
    flagged = np.asarray(flagged, dtype=bool)
    x, y = minutes(times), (np.asarray(ho_deg, dtype=float) - base) * 60
    xs, ys = np.concatenate([cx, x]), np.concatenate([cy, y])
    xs, ys = xs[np.isfinite(xs)], ys[np.isfinite(ys)]
    x_lo, x_hi = float(xs.min()), float(xs.max())
    y_lo, y_hi = float(ys.min()), float(ys.max())
    x_pad, y_pad = max((x_hi - x_lo) * 0.05, 0.1), max((y_hi - y_lo) * 0.08, 0.2)
    x_lo, x_hi, y_lo, y_hi = x_lo - x_pad, x_hi + x_pad, y_lo - y_pad, y_hi + y_pad
    width, height = SERIES_PT
    ax0, ay0, ax1, ay1 = 58.0, 34.0, width - 12.0, height - 40.0
    area = (ax0, ay0, ax1, ay1)

    def page(u, v):
        return (ax0 + (np.asarray(u) - x_lo) / (x_hi - x_lo) * (ax1 - ax0),
                ay1 - (np.asarray(v) - y_lo) / (y_hi - y_lo) * (ay1 - ay0))

    picture = Canvas(width, height, PAPER)
    for tick in nice_ticks(x_lo, x_hi):
        px, _ = page(tick, y_lo)
        picture.line([px, px], [ay0, ay1], GRID, 0.5)
        picture.text(px, ay1 + 4, f"{tick:g}", 7, INK, anchor="middle", baseline="top")
    for tick in nice_ticks(y_lo, y_hi, 6):
        _, py = page(x_lo, tick)
        picture.line([ax0, ax1], [py, py], GRID, 0.5)
        picture.text(ax0 - 4, py, f"{tick:g}", 7, INK, anchor="end", baseline="middle")
    picture.line(*page(cx, cy), INK, 1.2, clip=area)
    for u, v in zip(*page(x[~flagged], y[~flagged])):
        picture.circle(u, v, 2.6, fill=INK)
    for u, v in zip(*page(x[flagged], y[flagged])):
        picture.line([u - 4, u + 4], [v - 4, v + 4], FIX, 2.0)
        picture.line([u - 4, u + 4], [v + 4, v - 4], FIX, 2.0)
    if best_index is not None:
        u, v = page(x[best_index], y[best_index])
        picture.circle(float(u), float(v), 5.5, outline=CHART, width=1.6)
    picture.line([ax0, ax1, ax1, ax0, ax0], [ay0, ay0, ay1, ay1, ay0], INK, 0.7)
    picture.text((ax0 + ax1) / 2, height - 8, f"minutes after {str(t0)[11:19]} UTC", 7, INK, anchor="middle")
    picture.text(24, (ay0 + ay1) / 2, f"Ho − {base:.2f}° (′)", 7, INK, anchor="middle", baseline="middle",
                 rotation=90)
    picture.text(ax0, 14, title, 8, INK, bold=True)
    # the key, in the top right corner of the page
    key_x = ax1 - 150
    picture.line([key_x, key_x + 12], [26, 26], INK, 1.2)
    picture.text(key_x + 15, 26, "predicted", 6, INK, baseline="middle")
    picture.circle(key_x + 56, 26, 2.6, fill=INK)
    picture.text(key_x + 61, 26, "sights", 6, INK, baseline="middle")
    picture.line([key_x + 89, key_x + 95], [23, 29], FIX, 1.6)
    picture.line([key_x + 89, key_x + 95], [29, 23], FIX, 1.6)
    picture.text(key_x + 98, 26, "flagged", 6, INK, baseline="middle")
    picture.circle(key_x + 128, 26, 4.0, outline=CHART, width=1.3)
    picture.text(key_x + 134, 26, "best", 6, INK, baseline="middle")
    return picture


#: On the voyage picture a label goes no farther than this from its mark (points, a leader joining them): farther,
#: on a crowded passage, its leader crosses the track and other marks and the label reads as another's; it is
#: listed above the chart instead (and the search of the whole sheet for each label took a minute).
VOYAGE_LABEL_REACH_PT = 120.0
#: The voyage picture spans at least this many miles each way.
VOYAGE_MIN_SPAN_NM = 10.0


class _VoyageChart:
    """The voyage picture's Mercator chart about the middle latitude: ``plane`` takes positions to miles east
    and north of the chart's reference, ``page`` takes miles to the sheet's points."""

    def __init__(self, lats: np.ndarray, lons: np.ndarray, box: tuple[float, float, float, float]):
        self.ax0, self.ay0, self.ax1, self.ay1 = box
        self.lat_mid = float(np.mean([lats.min(), lats.max()]))
        self.lon_ref = float(lons[0])
        self.cos_lat = math.cos(math.radians(self.lat_mid))
        xs, ys = self.plane(lats, lons)
        # at least a few miles each way: a voyage of one position is not drawn to a tenth of a mile's scale
        self.width_nm = max(float(np.ptp(xs)), VOYAGE_MIN_SPAN_NM)
        self.height_nm = max(float(np.ptp(ys)), VOYAGE_MIN_SPAN_NM)
        self.per_nm = min((self.ax1 - self.ax0) / (self.width_nm * 1.15), (self.ay1 - self.ay0) / (self.height_nm * 1.15))
        self.cx, self.cy = (xs.max() + xs.min()) / 2.0, (ys.max() + ys.min()) / 2.0

    def plane(self, lat, lon):
        d_lon = wrap_180(np.asarray(lon, dtype=float) - self.lon_ref)
        return d_lon * 60.0 * self.cos_lat, (np.asarray(lat, dtype=float) - self.lat_mid) * 60.0

    def page(self, x, y):
        return ((self.ax0 + self.ax1) / 2.0 + (np.asarray(x) - self.cx) * self.per_nm,
                (self.ay0 + self.ay1) / 2.0 - (np.asarray(y) - self.cy) * self.per_nm)

    def at(self, lat, lon) -> tuple[float, float]:
        return tuple(float(v) for v in self.page(*self.plane(lat, lon)))


def voyage_track_picture(days, vessel: str | None = None, *, title: str = ""):
    """A vessel's voyage on one sheet (a :class:`navred.figures.drawing.Canvas`): the DR legs from each known
    position (dashed), the fixes with their 95 % ellipses, the estimated positions, an arrow of the set
    and drift found at each fix, and the noon positions with their dates. ``days`` is a
    :class:`navred.jobs.dayswork.DaysWork`; ``vessel`` picks one of its vessels (default: the first).

    Drawn as a Mercator chart about the voyage's middle latitude: a minute of latitude is a nautical
    mile up the page, a minute of longitude cos φ miles across (good to a few per cent over a passage
    of some hundreds of miles; the positions themselves are exact)."""
    from .drawing import Canvas

    vessels = list(days.tracks)
    vessel = vessel if vessel is not None else (vessels[0] if vessels else "")
    points, fixes, estimated, noons = days.of_vessel(vessel)
    noons = noons[np.isfinite(noons["lat_deg"].astype(float))]
    track = days.tracks.get(vessel)
    reach_lat, reach_lon = _ellipse_reach(track, days.ellipse_scales)
    # an EP that cannot be trusted sets the chart's scale only within FLAGGED_REACH_NM of the voyage (one 4000 nm
    # off would shrink the voyage to a dot)
    trusted = ~_flagged(estimated, "check") | _near(estimated, points)
    lats = np.concatenate([points.lat_deg.to_numpy(float), estimated["lat_deg"].to_numpy(float)[trusted], reach_lat])
    lons = np.concatenate([points.lon_deg.to_numpy(float), estimated["lon_deg"].to_numpy(float)[trusted], reach_lon])
    sheet = Canvas(SHEET_PT * 1.5, SHEET_PT, PAPER)
    box = (70.0, 58.0, SHEET_PT * 1.5 - 40.0, SHEET_PT - 84.0)
    sheet.text(box[0] - 12, 24, title or f"Voyage track: {vessel or 'the ship'}", 11, INK, bold=True)
    if lats.size == 0:
        sheet.text(box[0], 100, "No known position: nothing to draw (give the departure as an entry row).", 9, INK)
        return sheet
    chart = _VoyageChart(lats, lons, box)
    _voyage_grid(sheet, chart)
    # the DR legs, one per known position (the sheet is drawn to hold every point: nothing to clip)
    legs = points.leg.to_numpy()
    px_all, py_all = chart.page(*chart.plane(points.lat_deg.to_numpy(float), points.lon_deg.to_numpy(float)))
    cuts = np.flatnonzero(np.diff(legs) != 0) + 1
    lines = []  # the boxes of the lines no label may overprint: the DR legs, the set and drift arrows
    for xs_leg, ys_leg in zip(np.split(px_all, cuts), np.split(py_all, cuts)):
        if xs_leg.size >= 2:
            sheet.line(xs_leg.tolist(), ys_leg.tolist(), INK, 1.1, dash=(5.0, 3.0), kind="dr leg")
            lines.extend(segment_boxes(xs_leg[:-1], ys_leg[:-1], xs_leg[1:], ys_leg[1:], 1.0))
    placer = Placer()
    labels = _voyage_known_positions(sheet, placer, chart, track, days.ellipse_scales) if track is not None else []
    labels += _voyage_marks(sheet, placer, chart, fixes, estimated, noons, lines)
    if track is not None:
        labels += _logged_dr_gaps(sheet, chart, points, track, lines)
    frame = (chart.ax0 + 2, chart.ay0 + 2, chart.ax1 - 2, chart.ay1 - 2)
    unplaced = []
    for text, colour, x, y in labels:  # the plotting sheets' rule: beside, else nearest with a leader, else smaller
        own = [t for t in placer.taken if (t.min(axis=0) <= (x, y)).all() and (t.max(axis=0) >= (x, y)).all()]
        placed = place_mark_label(placer, text, 7, _beside(x, y), (x, y), frame, lines=lines, own=own,
                                  max_reach_pt=VOYAGE_LABEL_REACH_PT)
        if placed is None:
            unplaced.append(text)
            continue
        if placed.leader is not None:
            sheet.line(placed.leader[0::2], placed.leader[1::2], colour, 0.6, kind="leader")
        spot = placed.spot
        sheet.text(spot.x, spot.y, text, placed.size, colour, anchor=spot.anchor, baseline=spot.baseline, box=PAPER,
                   kind="label")
    # the fixes left out (they cannot be trusted) are named, never silently missing
    left_out = [name for name, _ in getattr(days, "left_out", {}).get(vessel, ())]
    missing = (f"Not drawn: the fix{'es' if len(left_out) > 1 else ''} {', '.join(left_out)}, which cannot be "
               "trusted (see the warnings); the DR is not restarted from "
               f"{'them' if len(left_out) > 1 else 'it'}. " if left_out else "")
    beyond = _beyond_chart(chart, estimated, noons)
    if beyond:
        missing += f"Not drawn, beyond the chart (cannot be trusted: see the day's work): {', '.join(beyond)}. "
    if unplaced or missing:
        width = SHEET_PT * 1.5 - 20.0 - (box[0] - 12)
        sheet.text(box[0] - 12, 51, missing + (no_room_text(unplaced, width - text_width_pt(missing, 7, italic=True))
                                               if unplaced else ""), 7, INK, italic=True, kind="mark list")
    sheet.line([chart.ax0, chart.ax1, chart.ax1, chart.ax0, chart.ax0],
               [chart.ay0, chart.ay0, chart.ay1, chart.ay1, chart.ay0], INK, 0.8)
    _voyage_key(sheet, chart)
    return sheet


def _voyage_grid(sheet, chart: _VoyageChart) -> None:
    """The grid: degrees and minutes of latitude and longitude."""
    half_w, half_h = (chart.ax1 - chart.ax0) / 2.0 / chart.per_nm, (chart.ay1 - chart.ay0) / 2.0 / chart.per_nm
    step = grid_step(2 * max(half_w, half_h))
    lat_lo, lat_hi = chart.lat_mid + (chart.cy - half_h) / 60.0, chart.lat_mid + (chart.cy + half_h) / 60.0
    lon_lo = chart.lon_ref + (chart.cx - half_w) / 60.0 / chart.cos_lat
    lon_hi = chart.lon_ref + (chart.cx + half_w) / 60.0 / chart.cos_lat
    for value in np.arange(np.ceil(lat_lo * 60 / step), np.floor(lat_hi * 60 / step) + 1) * step / 60:
        _, py = chart.page(0.0, chart.plane(value, chart.lon_ref)[1])
        sheet.line([chart.ax0, chart.ax1], [float(py), float(py)], GRID, 0.6)
        sheet.text(chart.ax0 - 4, float(py), format_angle(float(value), "lat"), 7, INK, anchor="end",
                   baseline="middle")
    for value in np.arange(np.ceil(lon_lo * 60 / step), np.floor(lon_hi * 60 / step) + 1) * step / 60:
        px, _ = chart.page(chart.plane(chart.lat_mid, value)[0], 0.0)
        sheet.line([float(px), float(px)], [chart.ay0, chart.ay1], GRID, 0.6)
        sheet.text(float(px), chart.ay1 + 6, format_angle(float(value), "lon"), 7, INK, anchor="end", baseline="top",
                   rotation=30)


def _ellipse_reach(track, scales: dict[str, float]) -> tuple[np.ndarray, np.ndarray]:
    """The known positions and, for a fix, the north, south, east and west reach of its 95 % ellipse (at the
    fix's own quantile): the voyage picture is drawn to hold them whole."""
    if track is None:
        return np.zeros(0), np.zeros(0)
    lat, lon = np.asarray(track.known_lat, dtype=float), np.asarray(track.known_lon, dtype=float)
    cov = np.asarray(track.known_cov_nm2, dtype=float).reshape(-1, 2, 2)
    known = math.sqrt(chi_square_2_quantile(0.95))
    scale = np.array([scales.get(label, known) for label in track.known_label], dtype=float)
    with np.errstate(invalid="ignore"):
        north = np.nan_to_num(scale * np.sqrt(np.maximum(cov[:, 0, 0], 0.0)) / 60.0)
        east = np.nan_to_num(scale * np.sqrt(np.maximum(cov[:, 1, 1], 0.0)) / 60.0
                             / np.maximum(np.cos(np.radians(lat)), 0.01))
    return (np.concatenate([lat, lat + north, lat - north, lat, lat]),
            np.concatenate([lon, lon, lon, lon + east, lon - east]))


def _beside(x: float, y: float, gap: float = 7.0, rings: int = 4) -> list:
    """Spots for a label beside a mark, nearest first, in ``rings`` rings (at most 4) round it."""
    from .placing import Spot

    spots = []
    for far in (gap, gap + 7.0, gap + 19.0, gap + 35.0)[:rings]:
        spots += [Spot(x + far, y + 3, "start", "top"), Spot(x + far, y - 3, "start", "bottom"),
                  Spot(x - far, y - 3, "end", "bottom"), Spot(x - far, y + 3, "end", "top"),
                  Spot(x, y - far, "middle", "bottom"), Spot(x, y + far, "middle", "top")]
    return spots


def _voyage_known_positions(sheet, placer, chart: _VoyageChart, track, scales: dict[str, float]) -> list:
    """The fixes with the 95 % ellipses they state (each at its own quantile, F(2, ν) or chi-square(2); cut to
    the chart), and the departure and position entries; their labels to place."""
    from .drawing import blend

    known = math.sqrt(chi_square_2_quantile(0.95))  # a fix whose scale is not given: chi-square(2) 95 %
    box = (chart.ax0, chart.ay0, chart.ax1, chart.ay1)
    labels = []
    for lat, lon, label, cov in zip(track.known_lat, track.known_lon, track.known_label, track.known_cov_nm2):
        fx, fy = chart.at(lat, lon)
        scale = scales.get(label, known)
        if label.startswith("fix "):
            # the ellipse where it shows (a fleet's tiny ellipses on a chart of a thousand miles are dots)
            if np.all(np.isfinite(cov)) and np.trace(cov) > 0 and scale * math.sqrt(np.trace(cov)) * chart.per_nm > 1.5:
                values, vectors = np.linalg.eigh(cov)
                t = np.linspace(0, 2 * np.pi, 48)
                ring = (vectors @ np.vstack([np.sqrt(max(values[0], 0)) * np.cos(t),
                                             np.sqrt(max(values[1], 0)) * np.sin(t)])) * scale
                ex, ey = chart.page(chart.plane(lat, lon)[0] + ring[1], chart.plane(lat, lon)[1] + ring[0])
                sheet.polygon(ex.tolist(), ey.tolist(), fill=blend(ELLIPSE, PAPER, 0.2), outline=ELLIPSE, width=0.8,
                              clip=box, kind="ellipse")
            placer.take(fix_symbol(sheet, fx, fy))
        else:
            placer.take(position_symbol(sheet, fx, fy, INK, kind="position entry"))
            labels.append((label.split(" at ")[0], INK, fx, fy))
    return labels


def no_room_text(unplaced: list[str], width_pt: float) -> str:
    """The line above the voyage picture naming the labels with no room on it: as many as the line holds in
    ``width_pt`` (7 pt italic), then how many more."""
    for shown in range(len(unplaced), 0, -1):
        more = f" and {len(unplaced) - shown} more" if shown < len(unplaced) else ""
        text = f"No room on the sheet for the labels of: {', '.join(unplaced[:shown])}{more}."
        if text_width_pt(text, 7, italic=True) <= width_pt:
            return text
    return f"No room on the sheet for {len(unplaced)} labels."


def ep_label(ep: str, note: str = "") -> str:
    """An estimated position's label on the voyage picture, short for a crowded chart: its time and the log rows
    its name gives ('EP 22:00 (row 4)' for 'EP from one Sun line (row 4), 22:00 UTC'), and where its sights carry
    a warning, the rows whose warnings to read (each warning names its row, in every output): 'EP 22:00 (row 4:
    see its warning)'."""
    import re

    named = re.fullmatch(r"EP from .* \((rows? [\d, -]+)\), (\d\d:\d\d) UTC", str(ep))
    if not named:
        return str(ep)
    rows, time = named.group(1), named.group(2)
    warned = list(dict.fromkeys(re.findall(r"(?:^|; )row (\d+):", note)))
    if not warned:
        return f"EP {time} ({rows})"
    if rows == f"row {warned[0]}" and len(warned) == 1:
        return f"EP {time} ({rows}: see its warning)"
    which = f"row {warned[0]}'s warning" if len(warned) == 1 else f"the warnings of rows {', '.join(warned)}"
    return f"EP {time} ({rows}: see {which})"


def _undetermined_gap(sheet, chart: _VoyageChart, f: dict, lines: list | None) -> list:
    """A fix whose set and drift is not determined: the DR's gap to it as a dotted line with no head, labelled
    with its miles and why it is no current ('drift under 1.8 kn, its set not determined'; 'not a current:
    check this fix');
    nothing where the run was too short for a current to show. Without it the fix stood off the DR's end
    unexplained."""
    from ..sailings import rhumb_inverse

    note = str(f.get("note") or "")
    if "more than any current" in note or "not a current of the sea" in note:
        words = "not a current: check this fix"
    elif note.startswith("drift under"):
        words = f"{note.split(',')[0]}, its set not determined"
    elif "a current is worth stating to" in note:
        words = "too uncertain to give a current"
    else:
        return []  # too short a run: the gap is the fixes' own error
    if not (np.isfinite(f.get("kept_dr_lat_deg", np.nan)) and np.isfinite(f.get("kept_dr_lon_deg", np.nan))):
        return []
    gap_nm = float(rhumb_inverse(f["kept_dr_lat_deg"], f["kept_dr_lon_deg"], f["fix_lat_deg"], f["fix_lon_deg"])[0])
    sx, sy = chart.at(f["kept_dr_lat_deg"], f["kept_dr_lon_deg"])
    fx, fy = chart.at(f["fix_lat_deg"], f["fix_lon_deg"])
    if math.hypot(fx - sx, fy - sy) >= 4.0:
        sheet.line([sx, fx], [sy, fy], CHART, 0.9, dash=(1.5, 2.5), kind="undetermined gap")
        if lines is not None:
            lines.append(segment_box(sx, sy, fx, fy, 3.0))
    return [(f"DR to fix {gap_nm:.1f} nm in {f['hours']:.1f} h: {words}", CHART, (sx + fx) / 2.0, (sy + fy) / 2.0)]


def _logged_dr_gaps(sheet, chart: _VoyageChart, points, track, lines: list | None) -> list:
    """The gap from the DR run on from a logged DR (a log with no departure: the navigator's DR written on a
    sight's row) to the first fix after it, dotted with no head, labelled with its miles and hours and why no
    current is found from it: the logged DR is itself a DR, its own error unknown. Without it the fix stood off
    the DR's end unexplained (the demo's sun-run-sun fix, 6 nm off)."""
    from ..sailings import rhumb_inverse

    labels = []
    kinds = points["kind"].to_numpy(dtype=object)
    times = np.asarray(_naive_utc64(points["utc"]), dtype="datetime64[ns]").astype(np.int64)
    lat, lon = points["lat_deg"].to_numpy(dtype=float), points["lon_deg"].to_numpy(dtype=float)
    for i in np.flatnonzero(kinds[:-1] == "DR at a known position").tolist():
        j = int(np.searchsorted(track.known_ns, times[i]))
        if not (0 < j < len(track.known_label) and int(track.known_ns[j]) == times[i]):
            continue
        before, after = str(track.known_label[j - 1]), str(track.known_label[j])
        if not (before.startswith("logged DR") and after.startswith("fix ")):
            continue
        gap_nm = float(rhumb_inverse(lat[i], lon[i], track.known_lat[j], track.known_lon[j])[0])
        hours = (int(track.known_ns[j]) - int(track.known_ns[j - 1])) / 3.6e12
        sx, sy = chart.at(lat[i], lon[i])
        fx, fy = chart.at(track.known_lat[j], track.known_lon[j])
        if math.hypot(fx - sx, fy - sy) >= 4.0:
            sheet.line([sx, fx], [sy, fy], CHART, 0.9, dash=(1.5, 2.5), kind="logged DR gap")
            if lines is not None:
                lines.append(segment_box(sx, sy, fx, fy, 3.0))
        labels.append((f"DR to {after} {gap_nm:.1f} nm in {hours:.1f} h from the {before}: no current found "
                       "from a DR", CHART, (sx + fx) / 2.0, (sy + fy) / 2.0))
    return labels


def _naive_utc64(values):
    """A column of instants (text, datetime64 or Timestamps, aware or not) as naive UTC datetime64[ns]."""
    import pandas as pd

    stamps = pd.to_datetime(values, utc=True)
    return stamps.dt.tz_convert(None).to_numpy(dtype="datetime64[ns]")


def _voyage_marks(sheet, placer, chart: _VoyageChart, fixes, estimated, noons, lines: list | None = None) -> list:
    """The DR's gap to each fix (an arrow from the DR kept at the fix's time to the fix, to the chart's scale;
    its box added to ``lines``), the estimated positions and the noon positions; their labels."""
    labels = []
    for f in fixes.to_dict("records"):
        if not np.isfinite(f["set_deg"]):
            labels += _undetermined_gap(sheet, chart, f, lines)
            continue
        # the gap from the DR kept to the fix, drawn where it lies (common practice: the current is the vector
        # from the DR to the fix at the same time): where the DR carried a current, the unaccounted rest, labelled
        # with the whole current it completes
        split = bool(f.get("current_in_dr")) and f.get("unaccounted_drift_kn") == f.get("unaccounted_drift_kn")
        set_deg, drift_kn = ((f["unaccounted_set_deg"], f["unaccounted_drift_kn"]) if split
                             else (f["set_deg"], f["drift_kn"]))
        gap_nm = drift_kn * f["hours"]
        sx, sy = chart.at(f["kept_dr_lat_deg"], f["kept_dr_lon_deg"])
        fx, fy = chart.at(f["fix_lat_deg"], f["fix_lon_deg"])
        length = math.hypot(fx - sx, fy - sy)
        if length >= 4.0:  # under 4 points the arrow is a blot: the label says the gap
            # the head stops at the fix's ring where the arrow is long enough to spare it
            stop = min(5.0, max(length - 8.0, 0.0)) / length
            ex_, ey_ = fx - (fx - sx) * stop, fy - (fy - sy) * stop
            sheet.line([sx, ex_], [sy, ey_], CHART, 1.6, kind="set and drift")
            if lines is not None:
                lines.append(segment_box(sx, sy, ex_, ey_, 4.0))
            back = math.atan2(sy - ey_, sx - ex_)
            size = min(6.0, length * 0.5)
            head = [(ex_ + size * math.cos(back + a), ey_ + size * math.sin(back + a)) for a in (0.45, -0.45)]
            sheet.polygon([ex_, head[0][0], head[1][0]], [ey_, head[0][1], head[1][1]], fill=CHART,
                          outline=CHART, width=0.5, kind="set and drift")
        gap = f"DR to fix {gap_nm:.1f} nm in {f['hours']:.1f} h"
        if split:
            whole = (f"current {f['set_deg']:03.0f}° {f['drift_kn']:.1f}, {f['current_in_dr']} "
                     f"{f['dr_set_deg']:03.0f}° {f['dr_drift_kn']:.1f}")
            text = (f"{gap}: nothing unaccounted ({whole})" if drift_kn < NIL_DRIFT_KN
                    else f"{gap}: unaccounted {set_deg:03.0f}° {drift_kn:.1f} kn ({whole})")
        else:
            text = f"{gap}: current {set_deg:03.0f}° {drift_kn:.1f} kn"
        labels.append((text, CHART, (sx + fx) / 2.0, (sy + fy) / 2.0))
    eps = []
    for e, bad in zip(estimated.to_dict("records"), _flagged(estimated, "check")):
        px, py = chart.at(e["lat_deg"], e["lon_deg"])
        if bad:  # drawn distinctly, and only where it falls on the chart (else named above it)
            if _on_chart(chart, px, py):
                placer.take(ep_symbol(sheet, px, py, FLAGGED, kind="flagged ep"))
                eps.append((ep_label(e["ep"], e.get("note") or "") + ": CANNOT BE TRUSTED", FLAGGED, px, py))
            continue
        placer.take(ep_symbol(sheet, px, py))
        eps.append((ep_label(e["ep"], e.get("note") or ""), FIX, px, py))
    seen: set = set()
    for n, bad in zip(noons.to_dict("records"), _flagged(noons, "noon_check")):
        px, py = chart.at(n["lat_deg"], n["lon_deg"])
        if bad:
            if _on_chart(chart, px, py):
                sheet.circle(px, py, 4.0, outline=FLAGGED, width=1.4, kind="flagged noon")
                placer.take(rect_corners(px - 5, py - 5, px + 5, py + 5))
                labels.append((f"noon {n['date'][5:]}: CANNOT BE TRUSTED", FLAGGED, px, py))
            continue
        sheet.circle(px, py, 3.2, fill=INK, kind="noon")
        placer.take(rect_corners(px - 4, py - 4, px + 4, py + 4))
        # a date lived twice (eastbound over the date line) has two noons: the second is named so
        labels.append((f"noon {n['date'][5:]}" + (" again" if n["date"] in seen else ""), INK, px, py))
        seen.add(n["date"])
    return labels + eps  # the noons' labels placed before the EPs' on a crowded sheet (the noon is the day's)


#: A position flagged as not to be trusted is drawn to the voyage's scale within this many miles of its known
#: positions; farther, it is left off the chart and named above it.
FLAGGED_REACH_NM = 100.0


def _near(table, points) -> np.ndarray:
    """Which rows of a table lie within FLAGGED_REACH_NM of a point of the DR track (a flat measure, ample here)."""
    if not len(table) or not len(points):
        return np.zeros(len(table), dtype=bool)
    lat = table["lat_deg"].to_numpy(float)[:, None]
    lon = table["lon_deg"].to_numpy(float)[:, None]
    p_lat = points["lat_deg"].to_numpy(float)[None, :]
    p_lon = points["lon_deg"].to_numpy(float)[None, :]
    north = (lat - p_lat) * 60.0
    east = wrap_180(lon - p_lon) * 60.0 * np.cos(np.radians(p_lat))
    with np.errstate(invalid="ignore"):
        return (np.hypot(north, east) <= FLAGGED_REACH_NM).any(axis=1)


def _flagged(table, column: str) -> np.ndarray:
    """Which rows of a day's-work table are flagged as not to be trusted (their ``column`` says so)."""
    if column not in table.columns:
        return np.zeros(len(table), dtype=bool)
    return table[column].fillna("").astype(str).str.startswith("CANNOT BE TRUSTED").to_numpy(dtype=bool)


def _on_chart(chart: _VoyageChart, x: float, y: float) -> bool:
    return bool(np.isfinite(x) and np.isfinite(y) and chart.ax0 <= x <= chart.ax1 and chart.ay0 <= y <= chart.ay1)


def _beyond_chart(chart: _VoyageChart, estimated, noons) -> list[str]:
    """The flagged EPs and noons that fall off the chart, each named (never silently missing)."""
    out = []
    for table, column, name in ((noons, "noon_check", lambda r: f"noon {r['date'][5:]}"),
                                (estimated, "check", lambda r: ep_label(r["ep"], r.get("note") or ""))):
        for r, bad in zip(table.to_dict("records"), _flagged(table, column)):
            if bad and not _on_chart(chart, *chart.at(r["lat_deg"], r["lon_deg"])):
                out.append(f"{name(r)} at {format_angle(r['lat_deg'], 'lat')} {format_angle(r['lon_deg'], 'lon')}")
    return out


def _voyage_key(sheet, chart: _VoyageChart) -> None:
    """The key, the scale bar and the north arrow."""
    ax0, ay0, ax1 = chart.ax0, chart.ay0, chart.ax1
    key_y = SHEET_PT - 16
    sheet.line([ax0, ax0 + 22], [key_y, key_y], INK, 1.1, dash=(5.0, 3.0))
    sheet.text(ax0 + 26, key_y + 3, "DR from each known position", 7, INK)
    sheet.line([ax0 + 150, ax0 + 172], [key_y, key_y], CHART, 1.6)
    sheet.text(ax0 + 176, key_y + 3, "the DR's gap to the fix (to scale)", 7, CHART)
    kx = ax0 + 360
    fix_symbol(sheet, kx, key_y, kind="key")
    sheet.text(kx + 9, key_y + 3, "fix (and its 95 % ellipse)", 7, FIX)
    kx += 120
    ep_symbol(sheet, kx, key_y, kind="key")
    sheet.text(kx + 9, key_y + 3, "EP (time, log row)", 7, FIX)
    kx += 95
    position_symbol(sheet, kx, key_y, INK, kind="key")
    sheet.text(kx + 10, key_y + 3, "departure, position entry or logged DR", 7, INK)
    kx += 170
    sheet.circle(kx, key_y, 3.2, fill=INK)
    sheet.text(kx + 8, key_y + 3, "noon", 7, INK)
    bar = nice_length(max(chart.width_nm, chart.height_nm) * 0.2)
    bx, by = ax0 + 14, ay0 + 18
    sheet.line([bx, bx + bar * chart.per_nm], [by, by], INK, 3.0)
    sheet.text(bx + bar * chart.per_nm / 2, by - 5, f"{bar:g} nautical mile{'s' if bar != 1 else ''}", 8, INK,
               anchor="middle", box=PAPER, kind="scale")
    nx, ny = ax1 - 20, ay0 + 50
    sheet.line([nx, nx], [ny, ny - 28], INK, 1.6)
    sheet.polygon([nx - 4, nx, nx + 4], [ny - 26, ny - 34, ny - 26], fill=INK, outline=INK, width=0.5)
    sheet.text(nx, ny - 37, "N", 11, INK, anchor="middle", bold=True)
    sheet.text(ax0 - 12, 40, "Each fix restarts the DR; each arrow runs from the DR at a fix's time to the fix, to the chart's "
               "scale: the miles the current set her over the run. An aid to navigation, not a sole means.", 8, INK)
