"""The plotting sheet of a fix (matplotlib, imported lazily): edge code that draws and saves.

A local chart of the fix: a grid of latitude and longitude minutes scaled as on a Mercator
chart at the fix's latitude (one minute of latitude is one nautical mile up the page, one
minute of longitude cos φ miles across), the DR at the fix time, each line of position
advanced or retired to the fix time and labelled with its body and time, the fix and its
95 % ellipse, the chart position when there is one, a scale bar in nautical miles and a
north arrow.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .angles import format_angle

# navred's own palette: sea-chart paper, ink-blue lines, a vermilion fix
PAPER, GRID, INK, FIX, CHART, ELLIPSE, FLAGGED = ("#f7f3e8", "#c9c2ad", "#1d3557", "#d1495b",
                                                  "#2a9d8f", "#d1495b", "#8d99ae")
_STEPS_ARCMIN = (0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600)


def _grid_step(span_nm: float) -> float:
    for step in _STEPS_ARCMIN:
        if span_nm / step <= 8:
            return step
    return _STEPS_ARCMIN[-1]


def plotting_sheet(fix, bodies, times, *, title: str = "", chart=None):
    """A matplotlib Figure of the fix's plotting sheet.

    ``fix`` is a :class:`navred.fix.FixResult`; ``bodies`` and ``times`` label its sights
    (input-row order, as ``fix.residual_arcmin``); ``chart`` is an optional (lat, lon).
    """
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure
    from matplotlib.patches import Ellipse

    lat0, lon0 = fix.dr_lat_deg, fix.dr_lon_deg
    cos_lat = np.cos(np.radians(lat0))

    def plane(lat, lon):
        d_lon = (np.asarray(lon) - lon0 + 180.0) % 360.0 - 180.0
        return d_lon * 60.0 * cos_lat, (np.asarray(lat) - lat0) * 60.0

    fix_xy = plane(fix.lat_deg, fix.lon_deg)
    points = [(0.0, 0.0), fix_xy]
    if chart is not None:
        chart_xy = plane(*chart)
        points.append(chart_xy)
    used = np.flatnonzero(np.isfinite(fix.lop_intercept_nm))
    z = np.radians(fix.lop_zn_deg[used])
    feet = np.stack(plane(fix.lop_foot_lat_deg[used], fix.lop_foot_lon_deg[used]), axis=1)
    tangent = np.radians(fix.lop_tangent_deg[used])
    xs, ys = zip(*points, *map(tuple, feet))
    extent = fix.ellipse_semi_major_nm if fix.is_fix else fix.ellipse_semi_minor_nm
    half = max(np.ptp(xs), np.ptp(ys), 4.0 * extent, 2.0) * 0.75 + 1.0
    cx, cy = (max(xs) + min(xs)) / 2.0, (max(ys) + min(ys)) / 2.0

    figure = Figure(figsize=(8.0, 8.0), dpi=110, facecolor=PAPER)
    ax = figure.add_axes([0.1, 0.09, 0.86, 0.83], facecolor=PAPER)
    ax.set_xlim(cx - half, cx + half)
    ax.set_ylim(cy - half, cy + half)
    ax.set_aspect("equal")

    # the grid: whole multiples of the step in latitude and in longitude
    step = _grid_step(2 * half)
    lat_lo, lat_hi = lat0 + (cy - half) / 60, lat0 + (cy + half) / 60
    lon_lo, lon_hi = lon0 + (cx - half) / 60 / cos_lat, lon0 + (cx + half) / 60 / cos_lat
    lat_ticks = np.arange(np.ceil(lat_lo * 60 / step), np.floor(lat_hi * 60 / step) + 1) * step / 60
    lon_ticks = np.arange(np.ceil(lon_lo * 60 / step), np.floor(lon_hi * 60 / step) + 1) * step / 60
    for lat in lat_ticks:
        ax.axhline(plane(lat, lon0)[1], color=GRID, lw=0.7, zorder=0)
    for lon in lon_ticks:
        ax.axvline(plane(lat0, lon)[0], color=GRID, lw=0.7, zorder=0)
    ax.set_yticks([plane(lat, lon0)[1] for lat in lat_ticks])
    ax.set_yticklabels([format_angle(lat, "lat") for lat in lat_ticks], fontsize=7)
    ax.set_xticks([plane(lat0, lon)[0] for lon in lon_ticks])
    ax.set_xticklabels([format_angle(lon, "lon") for lon in lon_ticks], fontsize=7, rotation=30)
    for side in ax.spines.values():
        side.set_color(INK)

    # the lines of position, tangent to their circles at the foot, drawn across the sheet, labelled
    length = 2.2 * half
    count = max(len(used) - 1, 1)
    for k, row in enumerate(used):
        fx, fy = feet[k]
        dx, dy = np.sin(tangent[k]), np.cos(tangent[k])
        flagged = bool(fix.outlier[row])
        colour = FLAGGED if flagged else INK
        ax.plot([fx - dx * length, fx + dx * length], [fy - dy * length, fy + dy * length],
                color=colour, lw=1.3, ls="--" if flagged else "-", zorder=2)
        # a short azimuth tick from the DR toward the body, as on a hand plot
        ax.plot([0, 0.35 * half * np.sin(z[k])], [0, 0.35 * half * np.cos(z[k])], color=colour, lw=0.6,
                alpha=0.5, zorder=1)
        label = f"{bodies[row]} {times[row]}" + ("  (flagged)" if flagged else "")
        # the label sits on the line near the middle of the sheet, staggered so labels do not pile up
        nearest = (cx - fx) * dx + (cy - fy) * dy
        along = nearest + (-0.6 + 1.2 * k / count) * half
        lx, ly = fx + dx * along, fy + dy * along
        ax.annotate(label, (lx, ly), fontsize=7, color=colour, ha="center", va="bottom", annotation_clip=False,
                    rotation=(np.degrees(np.arctan2(dy, dx)) + 90) % 180 - 90, rotation_mode="anchor",
                    bbox={"boxstyle": "round,pad=0.15", "fc": PAPER, "ec": "none", "alpha": 0.8}, zorder=4)

    # the DR, the fix and its ellipse (or the combined line and its band), the chart position
    ax.plot(0, 0, marker="o", ms=9, mfc="none", mec=INK, mew=1.4, zorder=5)
    ax.annotate("DR", (0, 0), xytext=(6, -12), textcoords="offset points", fontsize=8, color=INK)
    if fix.is_fix:
        angle = 90.0 - fix.ellipse_orientation_deg  # from the x axis (east) counter-clockwise
        ax.add_patch(Ellipse(fix_xy, 2 * fix.ellipse_semi_major_nm, 2 * fix.ellipse_semi_minor_nm, angle=angle,
                             fc=ELLIPSE, alpha=0.15, ec=ELLIPSE, lw=1.2, zorder=3))
        ax.plot(*fix_xy, marker="+", ms=16, mew=2.2, color=FIX, zorder=6)
        ax.plot(*fix_xy, marker="o", ms=5, color=FIX, zorder=6)
        right = fix_xy[0] > cx + half * 0.3
        ax.annotate(f"fix {format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}", fix_xy,
                    xytext=(-10 if right else 10, 8), textcoords="offset points", fontsize=8, color=FIX,
                    weight="bold", ha="right" if right else "left", zorder=7)
    else:
        along = np.radians(fix.line_bearing_deg)
        across = np.radians(fix.line_toward_deg)
        dx, dy = np.sin(along), np.cos(along)
        for offset, style in ((0.0, "-"), (fix.ellipse_semi_minor_nm, ":"), (-fix.ellipse_semi_minor_nm, ":")):
            ox, oy = fix_xy[0] + offset * np.sin(across), fix_xy[1] + offset * np.cos(across)
            ax.plot([ox - dx * length, ox + dx * length], [oy - dy * length, oy + dy * length], color=FIX,
                    lw=2.2 if offset == 0 else 1.0, ls=style, zorder=3)
        ax.plot(*fix_xy, marker="o", ms=5, color=FIX, zorder=6)
        what = "latitude" if fix.kind == "latitude" else "line of position"
        text = (f"{what} {format_angle(fix.lat_deg, 'lat')}" if fix.kind == "latitude"
                else f"{what} through {format_angle(fix.lat_deg, 'lat')} {format_angle(fix.lon_deg, 'lon')}")
        right = fix_xy[0] > cx
        ax.annotate(f"{text}: not a fix", fix_xy, xytext=(-10 if right else 10, 8), textcoords="offset points",
                    fontsize=8, color=FIX, weight="bold", ha="right" if right else "left", zorder=7,
                    bbox={"boxstyle": "round,pad=0.2", "fc": PAPER, "ec": "none", "alpha": 0.85})
    if chart is not None:
        ax.plot(*chart_xy, marker="s", ms=7, mfc="none", mec=CHART, mew=1.6, zorder=6)
        ax.annotate("chart", chart_xy, xytext=(8, -12), textcoords="offset points", fontsize=8, color=CHART)

    # scale bar (nautical miles) and north arrow
    bar = _nice_length(half * 0.5)
    x0, y0 = cx - half * 0.92, cy - half * 0.9
    ax.plot([x0, x0 + bar], [y0, y0], color=INK, lw=3, solid_capstyle="butt", zorder=8)
    ax.annotate(f"{bar:g} nautical mile{'s' if bar != 1 else ''}", (x0 + bar / 2, y0), xytext=(0, 5),
                textcoords="offset points", ha="center", fontsize=8, color=INK)
    nx, ny = cx + half * 0.86, cy + half * 0.72
    ax.annotate("", (nx, ny + half * 0.18), (nx, ny), arrowprops={"arrowstyle": "-|>", "color": INK, "lw": 1.6})
    ax.annotate("N", (nx, ny + half * 0.2), ha="center", va="bottom", fontsize=11, color=INK, weight="bold")

    heading = title or "Plotting sheet"
    figure.suptitle(heading, x=0.1, ha="left", fontsize=11, color=INK, weight="bold")
    extent_text = (f"95 % ellipse {fix.ellipse_semi_major_nm:.1f} × {fix.ellipse_semi_minor_nm:.1f} nm" if fix.is_fix
                   else f"the lines cross at {fix.spread_deg:.0f}°: 95 % band ±{fix.ellipse_semi_minor_nm:.1f} nm")
    figure.text(0.1, 0.935, f"{str(fix.utc)[:19].replace('T', ' ')} UTC · {extent_text} · σ {fix.sigma_arcmin:.2f}′ · "
                "grid: minutes of latitude and longitude", fontsize=8, color=INK)
    dr_miles = float(np.hypot(*fix_xy))
    if dr_miles > 30.0 and fix.is_fix:
        figure.text(0.1, 0.04, f"The DR is {dr_miles:.0f} nm from the fix: straight lines of position drawn "
                    "from it are approximate this far out; the fix itself is solved on the sphere.",
                    fontsize=7, color=FIX)
    figure.text(0.1, 0.015, "An aid to navigation, not a sole means: check against the official almanac "
                "and keep a DR plot.", fontsize=7, color=INK, style="italic")
    return figure


def _nice_length(target: float) -> float:
    for value in (0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500, 1000):
        if value >= target * 0.5:
            return value
    return 1000.0


def save_plotting_sheet(fix, bodies, times, path, *, title: str = "", chart=None) -> Path:
    """Draw the plotting sheet and save it (PNG or SVG by the file's suffix)."""
    target = Path(path)
    figure = plotting_sheet(fix, bodies, times, title=title, chart=chart)
    from .output import atomic_write

    return atomic_write(target, lambda p: save_figure(figure, p))


def save_figure(figure, path) -> None:
    """Save a figure as PNG or SVG (by suffix); SVG keeps its text as text, searchable and editable."""
    import matplotlib

    target = Path(path)
    fmt = target.suffix.lstrip(".").lower() or "png"
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        figure.savefig(target, facecolor=figure.get_facecolor(), format=fmt)


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


def series_plot(times, ho_deg, flagged, curve_times, curve_ho_deg, best_index, *, title: str = ""):
    """A small plot of one sight series: the sights, the fitted curve, the flagged ones."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    figure = Figure(figsize=(5.0, 3.2), dpi=100, facecolor=PAPER)
    ax = figure.add_axes([0.16, 0.18, 0.8, 0.68], facecolor=PAPER)
    t0 = np.asarray(curve_times, dtype="datetime64[ns]")[0]

    def minutes(values):
        return (np.asarray(values, dtype="datetime64[ns]") - t0).astype(np.int64) / 6e10

    base = float(np.nanmin(curve_ho_deg))
    ax.plot(minutes(curve_times), (np.asarray(curve_ho_deg) - base) * 60, color=INK, lw=1.2, label="predicted curve")
    flagged = np.asarray(flagged, dtype=bool)
    x, y = minutes(times), (np.asarray(ho_deg) - base) * 60
    ax.plot(x[~flagged], y[~flagged], "o", color=INK, ms=5, label="sights")
    if flagged.any():
        ax.plot(x[flagged], y[flagged], "X", color=FIX, ms=8, label="flagged")
    if best_index is not None:
        ax.plot(x[best_index], y[best_index], "o", ms=11, mfc="none", mec=CHART, mew=1.6, label="best sight")
    ax.set_xlabel(f"minutes after {str(t0)[11:19]} UTC", fontsize=7)
    ax.set_ylabel(f"Ho − {base:.2f}° (′)", fontsize=7)
    ax.tick_params(labelsize=7)
    ax.grid(color=GRID, lw=0.5)
    ax.legend(fontsize=6, loc="best", frameon=False)
    figure.suptitle(title, fontsize=8, color=INK, x=0.16, ha="left")
    return figure
