"""The pictures: the plotting sheet of a fix, the sky of a sight plan, a sight series. Edge code.

The plotting sheet is drawn on navred's light canvas (:mod:`navred.figures.drawing`, SVG or PNG in a
few milliseconds, so a workbook can hold hundreds); the sky and the series pictures use
matplotlib, imported lazily.

A local chart of the fix: a grid of latitude and longitude minutes scaled as on a Mercator
chart at the fix's latitude (one minute of latitude is one nautical mile up the page, one
minute of longitude cos φ miles across), the DR at the fix time, each line of position
advanced or retired to the fix time and labelled with its body and time, the fix and its
95 % ellipse, the chart position when there is one, a scale bar in nautical miles and a
north arrow.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..angles import format_angle, wrap_180, wrap_axial
from ..stats import chi_square_2_quantile
from ..status import FixKind

# navred's own palette: sea-chart paper, ink-blue lines, a vermilion fix
PAPER, GRID, INK, FIX, CHART, ELLIPSE, FLAGGED = ("#f7f3e8", "#c9c2ad", "#1d3557", "#d1495b",
                                                  "#2a9d8f", "#d1495b", "#8d99ae")
_STEPS_ARCMIN = (0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600)


def _grid_step(span_nm: float) -> float:
    for step in _STEPS_ARCMIN:
        if span_nm / step <= 8:
            return step
    return _STEPS_ARCMIN[-1]


_ELLIPSE_STEPS = (np.cos(np.linspace(0.0, 2.0 * np.pi, 73)[:-1]), np.sin(np.linspace(0.0, 2.0 * np.pi, 73)[:-1]))
#: the page of a plotting sheet, in points: 8 inches square, the plotting area a square inside it
SHEET_PT = 576.0
_AREA = (70.0, 58.0, 540.0, 528.0)  # x0, y0, x1, y1


def plotting_sheet(fix, bodies, times, *, title: str = "", chart=None, rows=None):
    """The fix's plotting sheet as a :class:`navred.figures.drawing.Canvas` (render it with ``to_svg`` or ``to_png``).

    ``fix`` is a :class:`navred.fix.FixResult`; ``bodies`` and ``times`` label its sights
    (input-row order, as ``fix.residual_arcmin``), ``rows`` name them in notes ('row 9'); ``chart``
    is an optional (lat, lon). A sight left out of the fix as a gross error does not set the sheet's
    extent (its line may lie a hundred miles off); the sheet names it, and marks the fix from every
    sight where it falls on the sheet.
    """
    from .drawing import Canvas, blend

    bodies, times = list(bodies), list(times)
    rows = list(rows) if rows is not None else [f"sight {k + 1}" for k in range(len(bodies))]
    left_out = (np.asarray(fix.left_out, dtype=bool) if np.size(fix.left_out) == len(bodies)
                else np.zeros(len(bodies), dtype=bool))
    lat0, lon0 = float(fix.dr_lat_deg), float(fix.dr_lon_deg)
    cos_lat = math.cos(math.radians(lat0))

    def plane(lat, lon):
        """Positions to sheet miles east and north of the DR (numbers or arrays)."""
        if isinstance(lat, float) and isinstance(lon, float):
            return float(wrap_180(lon - lon0)) * 60.0 * cos_lat, (lat - lat0) * 60.0
        d_lon = wrap_180(np.asarray(lon) - lon0)
        return d_lon * 60.0 * cos_lat, (np.asarray(lat) - lat0) * 60.0

    fix_xy = plane(float(fix.lat_deg), float(fix.lon_deg))
    points = [(0.0, 0.0), fix_xy]
    if chart is not None:
        chart_xy = plane(float(chart[0]), float(chart[1]))
        points.append(chart_xy)
    used = np.flatnonzero(np.isfinite(fix.lop_intercept_nm))
    z = np.radians(fix.lop_zn_deg[used])
    feet = np.stack(plane(fix.lop_foot_lat_deg[used], fix.lop_foot_lon_deg[used]), axis=1)
    tangent = np.radians(fix.lop_tangent_deg[used])
    xs, ys = zip(*points, *map(tuple, feet[~left_out[used]]))
    extent = fix.ellipse_semi_major_nm if fix.is_fix else fix.ellipse_semi_minor_nm
    half = max(np.ptp(xs), np.ptp(ys), 4.0 * extent, 2.0) * 0.75 + 1.0
    cx, cy = (max(xs) + min(xs)) / 2.0, (max(ys) + min(ys)) / 2.0
    ax0, ay0, ax1, ay1 = _AREA
    per_nm = (ax1 - ax0) / (2.0 * half)

    left, bottom = cx - half, cy - half

    def page(x, y):
        """Sheet miles (east, north of the DR) to points on the page (numbers, lists or arrays)."""
        if isinstance(x, list):
            return [ax0 + (v - left) * per_nm for v in x], [ay1 - (v - bottom) * per_nm for v in y]
        if isinstance(x, np.ndarray) or isinstance(y, np.ndarray):
            return ax0 + (np.asarray(x) - left) * per_nm, ay1 - (np.asarray(y) - bottom) * per_nm
        return ax0 + (x - left) * per_nm, ay1 - (y - bottom) * per_nm

    def inside(px, py):
        return ax0 <= px <= ax1 and ay0 <= py <= ay1

    sheet = Canvas(SHEET_PT, SHEET_PT, PAPER)
    area = _AREA
    if fix.is_fix:  # the ellipse's tint first, so that the grid and the lines show through it
        turn = math.radians(fix.ellipse_orientation_deg)
        cos_t, sin_t = _ELLIPSE_STEPS
        a, b = fix.ellipse_semi_major_nm, fix.ellipse_semi_minor_nm
        ex = fix_xy[0] + a * cos_t * math.sin(turn) + b * sin_t * math.cos(turn)
        ey = fix_xy[1] + a * cos_t * math.cos(turn) - b * sin_t * math.sin(turn)
        ellipse = page(ex, ey)
        sheet.polygon(*ellipse, fill=blend(ELLIPSE, PAPER, 0.15), clip=area)

    # the grid: whole multiples of the step in latitude and in longitude, labelled outside the area
    step = _grid_step(2 * half)
    lat_lo, lat_hi = lat0 + (cy - half) / 60, lat0 + (cy + half) / 60
    lon_lo, lon_hi = lon0 + (cx - half) / 60 / cos_lat, lon0 + (cx + half) / 60 / cos_lat
    lat_ticks = np.arange(np.ceil(lat_lo * 60 / step), np.floor(lat_hi * 60 / step) + 1) * step / 60
    lon_ticks = np.arange(np.ceil(lon_lo * 60 / step), np.floor(lon_hi * 60 / step) + 1) * step / 60
    _, lat_rows = page(0.0, plane(lat_ticks, lon0)[1])
    for py, text in zip(np.atleast_1d(lat_rows).tolist(), [format_angle(v, "lat") for v in lat_ticks.tolist()]):
        sheet.line([ax0, ax1], [py, py], GRID, 0.7)
        sheet.text(ax0 - 4, py, text, 7, INK, anchor="end", baseline="middle")
    lon_columns, _ = page(plane(lat0, lon_ticks)[0], 0.0)
    for px, text in zip(np.atleast_1d(lon_columns).tolist(), [format_angle(v, "lon") for v in lon_ticks.tolist()]):
        sheet.line([px, px], [ay0, ay1], GRID, 0.7)
        sheet.text(px, ay1 + 6, text, 7, INK, anchor="end", baseline="top", rotation=30)

    # the lines of position, tangent to their circles at the foot, drawn across the sheet, labelled
    length = 2.2 * half
    count = max(len(used) - 1, 1)
    dr_page = page(0.0, 0.0)
    labels = []
    outliers = fix.outlier.tolist()
    for k, (row, (fx, fy), turn, azimuth) in enumerate(zip(used.tolist(), feet.tolist(), tangent.tolist(),
                                                          z.tolist())):
        dx, dy = math.sin(turn), math.cos(turn)
        flagged = bool(outliers[row])
        colour = FLAGGED if flagged else INK
        if left_out[row] and abs(fx - cx) + abs(fy - cy) > 4 * half:
            continue  # a gross error's line, far off the sheet: named in the note below
        # a short azimuth tick from the DR toward the body, as on a hand plot
        tip = page(0.35 * half * math.sin(azimuth), 0.35 * half * math.cos(azimuth))
        sheet.line([dr_page[0], tip[0]], [dr_page[1], tip[1]], blend(colour, PAPER, 0.5), 0.6, clip=area)
        ends = page([fx - dx * length, fx + dx * length], [fy - dy * length, fy + dy * length])
        sheet.line(*ends, colour, 1.3, dash=(5.0, 3.0) if flagged else None, clip=area)
        label = f"{bodies[row]} {times[row]}" + ("  (left out)" if left_out[row] else "  (flagged)" if flagged else "")
        # the label sits on the line near the middle of the sheet, staggered so labels do not pile up
        nearest = (cx - fx) * dx + (cy - fy) * dy
        along = nearest + (-0.6 + 1.2 * k / count) * half
        lx, ly = page(fx + dx * along, fy + dy * along)
        labels.append((lx, ly, label, colour, float(wrap_axial(math.degrees(math.atan2(dy, dx)) + 90.0)) - 90.0))

    # the DR, the fix and its ellipse (or the combined line and its band), the chart position
    if fix.is_fix:
        sheet.polygon(*ellipse, outline=ELLIPSE, width=1.2, clip=area)
    else:
        along = np.radians(fix.line_bearing_deg)
        across = np.radians(fix.line_toward_deg)
        dx, dy = np.sin(along), np.cos(along)
        for offset, dash in ((0.0, None), (fix.ellipse_semi_minor_nm, (1.5, 2.5)), (-fix.ellipse_semi_minor_nm, (1.5, 2.5))):
            ox, oy = fix_xy[0] + offset * np.sin(across), fix_xy[1] + offset * np.cos(across)
            ends = page([ox - dx * length, ox + dx * length], [oy - dy * length, oy + dy * length])
            sheet.line(*ends, FIX, 2.2 if offset == 0 else 1.0, dash=dash, clip=area)
    for lx, ly, label, colour, angle in labels:
        if inside(lx, ly):
            sheet.text(lx, ly, label, 7, colour, anchor="middle", baseline="bottom", rotation=angle, box=PAPER)
    sheet.circle(*dr_page, 4.5, outline=INK, width=1.4)
    sheet.text(dr_page[0] + 6, dr_page[1] + 12, "DR", 8, INK)
    fx_page = page(*fix_xy)

    def fix_label(text: str, size: float) -> None:
        """The fix's label beside it, on the side where it fits inside the area, else centred above it."""
        width = 0.6 * size * len(text) + 10
        fits_right, fits_left = fx_page[0] + width <= ax1, fx_page[0] - width >= ax0
        if fits_right and not (fits_left and fx_page[0] > (ax0 + ax1) / 2 + 0.3 * (ax1 - ax0) / 2):
            x, anchor = fx_page[0] + 10, "start"
        elif fits_left:
            x, anchor = fx_page[0] - 10, "end"
        else:
            x, anchor = min(max(fx_page[0], ax0 + width / 2), ax1 - width / 2), "middle"
        sheet.text(x, fx_page[1] - 8, text, size, FIX, anchor=anchor, bold=True, box=PAPER)

    if fix.is_fix:
        sheet.line([fx_page[0] - 8, fx_page[0] + 8], [fx_page[1], fx_page[1]], FIX, 2.2)
        sheet.line([fx_page[0], fx_page[0]], [fx_page[1] - 8, fx_page[1] + 8], FIX, 2.2)
        sheet.circle(*fx_page, 2.5, fill=FIX)
        fix_label(f"fix {format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}", 8)
    else:
        sheet.circle(*fx_page, 2.5, fill=FIX)
        what = str(fix.kind)
        text = (f"{what} {format_angle(fix.lat_deg, 'lat')}" if fix.kind == FixKind.LATITUDE
                else f"{what} through {format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}")
        fix_label(f"{text}: not a fix", 8)
    every = fix.all_sights
    if every is not None:
        ex_, ey_ = page(*plane(float(every.lat_deg), float(every.lon_deg)))
        if inside(ex_, ey_):
            sheet.circle(ex_, ey_, 5.0, outline=FLAGGED, width=1.4)
            sheet.text(ex_ + 8, ey_ + 12, "every sight (not the fix)", 7, FLAGGED)
    check = fix.without_outliers
    if check is not None:
        cx_, cy_ = page(*plane(float(check.lat_deg), float(check.lon_deg)))
        if inside(cx_, cy_):
            sheet.polygon([cx_, cx_ + 5, cx_, cx_ - 5], [cy_ - 5, cy_, cy_ + 5, cy_], outline=FLAGGED, width=1.4)
            sheet.text(cx_ + 8, cy_ + 12, "check fix (without the flagged)", 7, FLAGGED)
    if chart is not None:
        px, py = page(*chart_xy)
        sheet.polygon([px - 3.5, px + 3.5, px + 3.5, px - 3.5], [py - 3.5, py - 3.5, py + 3.5, py + 3.5],
                      outline=CHART, width=1.6)
        sheet.text(px + 8, py + 12, "chart", 8, CHART)

    # scale bar (nautical miles) and north arrow
    bar = _nice_length(half * 0.5)
    x0, y0 = page(cx - half * 0.92, cy - half * 0.9)
    sheet.line([x0, x0 + bar * per_nm], [y0, y0], INK, 3.0)
    sheet.text(x0 + bar * per_nm / 2, y0 - 5, f"{bar:g} nautical mile{'s' if bar != 1 else ''}", 8, INK,
               anchor="middle")
    nx, ny = page(cx + half * 0.86, cy + half * 0.72)
    top = ny - 0.18 * half * per_nm
    sheet.line([nx, nx], [ny, top + 6], INK, 1.6)
    sheet.polygon([nx - 4, nx, nx + 4], [top + 8, top, top + 8], fill=INK, outline=INK, width=0.5)
    sheet.text(nx, top - 2, "N", 11, INK, anchor="middle", bold=True)
    sheet.line([ax0, ax1, ax1, ax0, ax0], [ay0, ay0, ay1, ay1, ay0], INK, 0.8)

    sheet.text(ax0 - 12, 24, title or "Plotting sheet", 11, INK, bold=True)
    extent_text = (f"95 % ellipse {fix.ellipse_text()}" if fix.is_fix
                   else f"the lines cross at {fix.spread_deg:.0f}°: 95 % band {fix.ellipse_text()}")
    sheet.text(ax0 - 12, 40, f"{str(fix.utc)[:19].replace('T', ' ')} UTC · {extent_text} · σ {fix.sigma_arcmin:.2f}′ · "
               "grid: minutes of latitude and longitude", 8, INK)
    from ..triangle import distance_bearing

    warning_y = 52
    if fix.untrusted:
        sheet.text(ax0 - 12, warning_y, "CANNOT BE TRUSTED as the position to plot: " + fix.untrusted.split(":")[0]
                   + " (the fix's warnings say why)",
                   8, FIX, bold=True)
        warning_y += 12
    if every is not None and left_out.any():
        by_test = (np.asarray(fix.blunder_left_out, dtype=bool) if np.size(fix.blunder_left_out) == len(bodies)
                   else np.zeros(len(bodies), dtype=bool))
        miles, bearing = distance_bearing(fix.lat_deg, fix.lon_deg, every.lat_deg, every.lon_deg)
        names = ", ".join(f"{rows[k]} {bodies[k]} ({abs(float(fix.residual_arcmin[k])):.0f}′ off, "
                          f"{'the blunder test' if by_test[k] else 'a gross error'})"
                          for k in np.flatnonzero(left_out))
        sheet.text(ax0 - 12, warning_y, f"LEFT OUT: {names}; the fix from every sight lies "
                   f"{float(miles):.1f} nm {float(bearing):03.0f}° from this one", 8, FIX, bold=True)
        warning_y += 12
    if check is not None:
        flagged_rows = ", ".join(f"{rows[k]} {bodies[k]}" for k in np.flatnonzero(np.asarray(fix.outlier, bool)
                                                                                  & ~left_out))
        miles, bearing = distance_bearing(fix.lat_deg, fix.lon_deg, check.lat_deg, check.lon_deg)
        sheet.text(ax0 - 12, warning_y, f"BLUNDER? {flagged_rows}: the check fix without it lies {float(miles):.1f} nm "
                   f"{float(bearing):03.0f}° from this one", 8, FIX, bold=True)
    dr_miles = float(np.hypot(*fix_xy))
    if dr_miles > 30.0 and fix.is_fix:
        sheet.text(ax0 - 12, SHEET_PT - 14, f"The DR is {dr_miles:.0f} nm from the fix: straight lines of position "
                   "drawn from it are approximate this far out; the fix itself is solved on the sphere.", 7, FIX)
    sheet.text(ax0 - 12, SHEET_PT - 4, "An aid to navigation, not a sole means: check against the official almanac "
               "and keep a DR plot.", 7, INK, italic=True)
    return sheet


def _nice_length(target: float) -> float:
    for value in (0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500, 1000):
        if value >= target * 0.5:
            return value
    return 1000.0


#: the width of a plotting sheet saved as PNG (the page is 8 inches: 110 pixels an inch)
SHEET_PNG_PX = 880


def save_plotting_sheet(fix, bodies, times, path, *, title: str = "", chart=None) -> Path:
    """Draw the plotting sheet and save it (PNG or SVG by the file's suffix)."""
    from ..io.output import atomic_write

    target = Path(path)
    sheet = plotting_sheet(fix, bodies, times, title=title, chart=chart)
    return atomic_write(target, lambda p: write_canvas(sheet, p))


def canvas_bytes(canvas, suffix: str, *, png_width_px: int = SHEET_PNG_PX) -> bytes:
    """A :class:`navred.figures.drawing.Canvas` as the contents of an SVG or PNG file (by ``suffix``)."""
    if suffix.lower().lstrip(".") == "svg":
        return canvas.to_svg().encode("utf-8")
    return canvas.to_png(png_width_px)


def write_canvas(canvas, path, *, png_width_px: int = SHEET_PNG_PX) -> None:
    """Write a :class:`navred.figures.drawing.Canvas` as SVG or PNG, by the file's suffix."""
    Path(path).write_bytes(canvas_bytes(canvas, Path(path).suffix, png_width_px=png_width_px))


def save_figure(figure, path) -> None:
    """Save a figure as PNG or SVG (by suffix); SVG keeps its text as text, searchable and editable."""
    import matplotlib

    target = Path(path)
    fmt = target.suffix.lstrip(".").lower() or "png"
    # no date in the file: the same plan draws the same file (the committed demo is checked against a redraw)
    metadata = {"Date": None} if fmt in ("svg", "pdf") else None
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "navred"}):
        figure.savefig(target, facecolor=figure.get_facecolor(), format=fmt, metadata=metadata)


def figure_png(figure, dpi: int = 160) -> bytes:
    """A matplotlib figure as PNG bytes (for a printed page)."""
    import io

    out = io.BytesIO()
    figure.savefig(out, facecolor=figure.get_facecolor(), format="png", dpi=dpi)
    return out.getvalue()


def sky_picture(plan, *, title: str = ""):
    """A polar picture of the sky for a sight plan: azimuth around, altitude inward.

    The zenith is at the centre and the horizon at the rim; bearings run clockwise from
    north at the top, as on a compass card. Every candidate is labelled; the recommended
    set is ringed and joined to the centre.
    """
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    figure = Figure(figsize=(7.5, 8.0), dpi=110, facecolor=PAPER)
    ax = figure.add_axes([0.08, 0.1, 0.84, 0.78], projection="polar", facecolor="#e9eef5")
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.set_rlim(0, 90)
    ax.set_rticks([20, 45, 70, 90])
    ax.set_yticklabels(["70°", "45°", "20°", "0°"], fontsize=7, color=INK)
    ax.set_xticks(np.radians(np.arange(0, 360, 45)))
    ax.set_xticklabels(["N 000°", "045°", "E 090°", "135°", "S 180°", "225°", "W 270°", "315°"], fontsize=8)
    ax.grid(color=GRID, lw=0.7)
    theta = np.radians(plan.zn_deg)
    radius = 90.0 - plan.hc_deg
    size = np.clip(60 - 14 * np.nan_to_num(plan.magnitude, nan=2.0), 8, 140)
    ax.scatter(theta, radius, s=size, c=INK, zorder=3)
    for t, r, name, chosen in zip(theta, radius, plan.body, plan.recommended):
        ax.annotate(str(name), (t, r), xytext=(5, 4), textcoords="offset points", fontsize=7,
                    color=FIX if chosen else INK, weight="bold" if chosen else "normal")
        if chosen:
            ax.scatter([t], [r], s=260, facecolors="none", edgecolors=FIX, linewidths=1.8, zorder=4)
            ax.plot([0, t], [0, r], color=FIX, lw=0.8, alpha=0.6, zorder=2)
    figure.suptitle(title or "Sight plan", x=0.08, ha="left", fontsize=11, color=INK, weight="bold")
    figure.text(0.08, 0.935, f"{str(plan.utc)[:16].replace('T', ' ')} UTC at {format_angle(plan.lat_deg, 'lat')} "
                f"{format_angle(plan.lon_deg, 'lon')} · ringed: the recommended set (DOP {plan.dop:.2f})",
                fontsize=8, color=INK)
    figure.text(0.08, 0.02, "Zenith at the centre, horizon at the rim. An aid, not a sole means of navigation.",
                fontsize=7, color=INK, style="italic")
    return figure


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


class _VoyageChart:
    """The voyage picture's Mercator chart about the middle latitude: ``plane`` takes positions to miles east
    and north of the chart's reference, ``page`` takes miles to the sheet's points."""

    def __init__(self, lats: np.ndarray, lons: np.ndarray, box: tuple[float, float, float, float]):
        self.ax0, self.ay0, self.ax1, self.ay1 = box
        self.lat_mid = float(np.mean([lats.min(), lats.max()]))
        self.lon_ref = float(lons[0])
        self.cos_lat = math.cos(math.radians(self.lat_mid))
        xs, ys = self.plane(lats, lons)
        self.width_nm = max(float(np.ptp(xs)), 1.0)
        self.height_nm = max(float(np.ptp(ys)), 1.0)
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
    lats = np.concatenate([points.lat_deg.to_numpy(float), estimated["lat_deg"].to_numpy(float),
                           track.known_lat if track is not None else []])
    lons = np.concatenate([points.lon_deg.to_numpy(float), estimated["lon_deg"].to_numpy(float),
                           track.known_lon if track is not None else []])
    sheet = Canvas(SHEET_PT * 1.5, SHEET_PT, PAPER)
    box = (70.0, 58.0, SHEET_PT * 1.5 - 40.0, SHEET_PT - 84.0)
    sheet.text(box[0] - 12, 24, title or f"Voyage track: {vessel or 'the vessel'}", 11, INK, bold=True)
    if lats.size == 0:
        sheet.text(box[0], 100, "No known position: nothing to draw (give the departure as an entry row).", 9, INK)
        return sheet
    chart = _VoyageChart(lats, lons, box)
    _voyage_grid(sheet, chart)
    # the DR legs, one per known position (the sheet is drawn to hold every point: nothing to clip)
    legs = points.leg.to_numpy()
    px_all, py_all = chart.page(*chart.plane(points.lat_deg.to_numpy(float), points.lon_deg.to_numpy(float)))
    cuts = np.flatnonzero(np.diff(legs) != 0) + 1
    for xs_leg, ys_leg in zip(np.split(px_all, cuts), np.split(py_all, cuts)):
        if xs_leg.size >= 2:
            sheet.line(xs_leg.tolist(), ys_leg.tolist(), INK, 1.1, dash=(5.0, 3.0))
    arrow_nm = 0.06 * max(chart.width_nm, chart.height_nm) / 1.0  # an arrow this long stands for one knot
    if track is not None:
        _voyage_known_positions(sheet, chart, track, days.ellipse_scales)
    _voyage_marks(sheet, chart, fixes, estimated, noons, arrow_nm)
    sheet.line([chart.ax0, chart.ax1, chart.ax1, chart.ax0, chart.ax0],
               [chart.ay0, chart.ay0, chart.ay1, chart.ay1, chart.ay0], INK, 0.8)
    _voyage_key(sheet, chart, arrow_nm)
    return sheet


def _voyage_grid(sheet, chart: _VoyageChart) -> None:
    """The grid: degrees and minutes of latitude and longitude."""
    half_w, half_h = (chart.ax1 - chart.ax0) / 2.0 / chart.per_nm, (chart.ay1 - chart.ay0) / 2.0 / chart.per_nm
    step = _grid_step(2 * max(half_w, half_h))
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


def _voyage_known_positions(sheet, chart: _VoyageChart, track, scales: dict[str, float]) -> None:
    """The fixes with the 95 % ellipses they state (each at its own quantile, F(2, ν) or chi-square(2)), and the
    departure and position entries."""
    from .drawing import blend

    known = math.sqrt(chi_square_2_quantile(0.95))  # a fix whose scale is not given: chi-square(2) 95 %
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
                sheet.polygon(ex.tolist(), ey.tolist(), fill=blend(ELLIPSE, PAPER, 0.2), outline=ELLIPSE, width=0.8)
            sheet.line([fx - 5, fx + 5], [fy, fy], FIX, 1.8)
            sheet.line([fx, fx], [fy - 5, fy + 5], FIX, 1.8)
        else:
            sheet.polygon([fx - 4, fx + 4, fx + 4, fx - 4], [fy - 4, fy - 4, fy + 4, fy + 4], outline=INK, width=1.4)
            sheet.text(fx + 7, fy + 10, label.split(" at ")[0], 7, INK)


def _voyage_marks(sheet, chart: _VoyageChart, fixes, estimated, noons, arrow_nm: float) -> None:
    """The set and drift arrows at the fixes, the estimated positions and the noon positions."""
    for f in fixes.to_dict("records"):
        if not np.isfinite(f["set_deg"]):
            continue
        fx, fy = chart.plane(f["fix_lat_deg"], f["fix_lon_deg"])
        length = f["drift_kn"] * arrow_nm
        turn = math.radians(f["set_deg"])
        tx, ty = float(fx) + length * math.sin(turn), float(fy) + length * math.cos(turn)
        (sx, sy), (ex_, ey_) = chart.page(float(fx), float(fy)), chart.page(tx, ty)
        sheet.line([float(sx), float(ex_)], [float(sy), float(ey_)], CHART, 1.6)
        back = math.atan2(float(sy) - float(ey_), float(sx) - float(ex_))
        head = [(float(ex_) + 6 * math.cos(back + s), float(ey_) + 6 * math.sin(back + s)) for s in (0.45, -0.45)]
        sheet.polygon([float(ex_), head[0][0], head[1][0]], [float(ey_), head[0][1], head[1][1]], fill=CHART,
                      outline=CHART, width=0.5)
    for e in estimated.to_dict("records"):
        px, py = chart.at(e["lat_deg"], e["lon_deg"])
        sheet.polygon([px - 4, px + 4, px + 4, px - 4], [py - 4, py - 4, py + 4, py + 4], outline=FIX, width=1.2)
        sheet.text(px + 7, py - 6, f"EP {e['utc'][11:16]}" + (" (see its warning)" if e.get("note") else ""), 7, FIX)
    for n in noons.to_dict("records"):
        px, py = chart.at(n["lat_deg"], n["lon_deg"])
        sheet.circle(px, py, 3.2, fill=INK)
        sheet.text(px + 7, py + 13, f"noon {n['date'][5:]}", 7, INK)


def _voyage_key(sheet, chart: _VoyageChart, arrow_nm: float) -> None:
    """The key, the scale bar and the north arrow."""
    ax0, ay0, ax1 = chart.ax0, chart.ay0, chart.ax1
    key_y = SHEET_PT - 16
    sheet.line([ax0, ax0 + 22], [key_y, key_y], INK, 1.1, dash=(5.0, 3.0))
    sheet.text(ax0 + 26, key_y + 3, "DR from each known position", 7, INK)
    sheet.line([ax0 + 150, ax0 + 172], [key_y, key_y], CHART, 1.6)
    sheet.text(ax0 + 176, key_y + 3, f"set and drift at a fix ({arrow_nm:.0f} nm of arrow a knot)", 7, CHART)
    kx = ax0 + 360
    sheet.line([kx - 5, kx + 5], [key_y, key_y], FIX, 1.8)
    sheet.line([kx, kx], [key_y - 5, key_y + 5], FIX, 1.8)
    sheet.text(kx + 9, key_y + 3, "fix (and its 95 % ellipse)", 7, FIX)
    kx += 120
    sheet.polygon([kx - 4, kx + 4, kx + 4, kx - 4], [key_y - 4, key_y - 4, key_y + 4, key_y + 4], outline=FIX, width=1.2)
    sheet.text(kx + 9, key_y + 3, "estimated position", 7, FIX)
    kx += 95
    sheet.polygon([kx - 4, kx + 4, kx + 4, kx - 4], [key_y - 4, key_y - 4, key_y + 4, key_y + 4], outline=INK, width=1.4)
    sheet.text(kx + 9, key_y + 3, "departure or position entry", 7, INK)
    kx += 125
    sheet.circle(kx, key_y, 3.2, fill=INK)
    sheet.text(kx + 8, key_y + 3, "noon", 7, INK)
    bar = _nice_length(max(chart.width_nm, chart.height_nm) * 0.2)
    bx, by = ax0 + 14, ay0 + 18
    sheet.line([bx, bx + bar * chart.per_nm], [by, by], INK, 3.0)
    sheet.text(bx + bar * chart.per_nm / 2, by - 5, f"{bar:g} nautical mile{'s' if bar != 1 else ''}", 8, INK,
               anchor="middle", box=PAPER)
    nx, ny = ax1 - 20, ay0 + 50
    sheet.line([nx, nx], [ny, ny - 28], INK, 1.6)
    sheet.polygon([nx - 4, nx, nx + 4], [ny - 26, ny - 34, ny - 26], fill=INK, outline=INK, width=0.5)
    sheet.text(nx, ny - 37, "N", 11, INK, anchor="middle", bold=True)
    sheet.text(ax0 - 12, 40, "Each fix restarts the DR; set and drift are found against the DR through the water. "
               "An aid to navigation, not a sole means.", 8, INK)
