"""A blank plotting sheet for a band of latitude, to print and plot on by hand. Edge code.

navred's own arrangement, drawn on the light canvas (:mod:`navred.figures.drawing`): a square of
one degree of latitude, parallels every 10′ labelled, meridians every 10′ of longitude set for the
band's middle latitude (so that a minute of longitude is cos φ of a minute of latitude, as on a
Mercator chart there), the longitudes left blank to be written in, a mile scale up the side (a
minute of latitude is a nautical mile) and a scale of longitude minutes along the foot, a bearing
ring round the middle for laying off azimuths and courses, and boxes for the fix.
"""

from __future__ import annotations

import math

import numpy as np

from .plotting import FIX, GRID, INK

#: The sheet's size in points (it fits an A4 page inside the margins and the page heading).
SHEET_WIDTH_PT, SHEET_HEIGHT_PT = 535.0, 690.0


def blank_plotting_sheet(lat_deg: float):
    """The sheet for the degree of latitude from ``lat_deg`` (its floor, towards the equator's side: the
    band 43° to 44° N for 43.6) as a :class:`navred.figures.drawing.Canvas`."""
    from .drawing import Canvas

    south = lat_deg < 0
    low = math.floor(abs(lat_deg))
    hemisphere = "S" if south else "N"
    middle = low + 0.5
    cos_mid = math.cos(math.radians(middle))
    canvas = Canvas(SHEET_WIDTH_PT, SHEET_HEIGHT_PT)
    x0, y0, side = 40.0, 60.0, 470.0  # the plotting square (one degree of latitude up the page)
    per_minute = side / 60.0
    canvas.text(x0, 20, f"Plotting sheet: latitude {low}° to {low + 1}° {hemisphere}", 12, INK, bold=True)
    canvas.text(x0, 36, f"Meridians drawn for {middle:.1f}° {hemisphere} (10′ of longitude is {10 * cos_mid:.2f} nm "
                "there); good within this band. Write the longitudes in the boxes at the foot.", 7.5, INK)
    canvas.polygon([x0, x0 + side, x0 + side, x0], [y0, y0, y0 + side, y0 + side], outline=INK, width=1.0)
    # parallels every 10′ (the top is the pole side in the north, the equator side in the south)
    for k in range(7):
        y = y0 + k * 10 * per_minute
        minutes = 60 - 10 * k if not south else 10 * k
        degree = low if minutes < 60 else low + 1
        label = f"{degree}° {minutes % 60:02d}′ {hemisphere}"
        canvas.line([x0, x0 + side], [y, y], INK if k in (0, 6) else GRID, 0.9 if k in (0, 3, 6) else 0.6)
        canvas.text(x0 + side + 4, y, label, 7, INK, baseline="middle")
    # meridians every 10′ of longitude, from the middle outward
    step = 10 * per_minute * cos_mid
    centre = x0 + side / 2
    columns = int((side / 2) // step)
    for j in range(-columns, columns + 1):
        x = centre + j * step
        canvas.line([x, x], [y0, y0 + side], INK if j == 0 else GRID, 0.9 if j == 0 else 0.6)
        canvas.polygon([x - 15, x + 15, x + 15, x - 15], [y0 + side + 6, y0 + side + 6, y0 + side + 20,
                                                          y0 + side + 20], outline=GRID, width=0.5)
        canvas.text(x, y0 + side + 31, "′" if j else "° ′", 6, INK, anchor="middle")
    # the mile scale up the left side: a minute of latitude is a nautical mile
    for minute in range(61):
        y = y0 + side - minute * per_minute
        length = 7 if minute % 10 == 0 else 4.5 if minute % 5 == 0 else 2.5
        canvas.line([x0 - length, x0], [y, y], INK, 0.5)
        if minute % 10 == 0:
            canvas.text(x0 - 9, y, f"{minute}", 6.5, INK, anchor="end", baseline="middle")
    canvas.text(x0 - 30, y0 + side / 2, "nautical miles (minutes of latitude)", 7, INK, anchor="middle",
                baseline="middle", rotation=90)
    # the longitude scale along the foot: minutes of longitude at the middle latitude
    base = y0 + side + 44
    canvas.line([centre - 30 * per_minute * cos_mid, centre + 30 * per_minute * cos_mid], [base, base], INK, 0.6)
    for minute in range(-30, 31):
        x = centre + minute * per_minute * cos_mid
        length = 6 if minute % 10 == 0 else 4 if minute % 5 == 0 else 2.2
        canvas.line([x, x], [base, base + length], INK, 0.5)
        if minute % 10 == 0:
            canvas.text(x, base + 14, f"{abs(minute)}′", 6.5, INK, anchor="middle")
    canvas.text(centre, base + 26, f"minutes of longitude at {middle:.1f}° {hemisphere}", 7, INK, anchor="middle")
    # the bearing ring: ticks every 2°, figures every 30°, north up
    cy = y0 + side / 2
    radius = 150.0
    for bearing in range(0, 360, 2):
        a = math.radians(bearing)
        inner = radius - (9 if bearing % 10 == 0 else 5)
        canvas.line([centre + inner * math.sin(a), centre + radius * math.sin(a)],
                    [cy - inner * math.cos(a), cy - radius * math.cos(a)], INK if bearing % 10 == 0 else GRID, 0.5)
        if bearing % 30 == 0:
            canvas.text(centre + (radius + 9) * math.sin(a), cy - (radius + 9) * math.cos(a), f"{bearing:03d}", 7,
                        INK, anchor="middle", baseline="middle", box="#ffffff")
    canvas.circle(centre, cy, radius, outline=INK, width=0.6)
    canvas.circle(centre, cy, 2.0, fill=INK)
    # boxes for the fix
    boxes = ("fix time (UTC)", "fix latitude", "fix longitude", "sights used")
    width = side / len(boxes)
    for k, label in enumerate(boxes):
        bx = x0 + k * width
        canvas.polygon([bx, bx + width - 6, bx + width - 6, bx], [SHEET_HEIGHT_PT - 40, SHEET_HEIGHT_PT - 40,
                                                                   SHEET_HEIGHT_PT - 14, SHEET_HEIGHT_PT - 14],
                       outline=GRID, width=0.6)
        canvas.text(bx + 3, SHEET_HEIGHT_PT - 32, label, 6.5, FIX)
    return canvas


def plotting_bands(lat_deg) -> list[float]:
    """The degrees of latitude (a point inside each band) a passage's DR latitudes (in time order) pass through, in
    the order she reaches them."""
    values = np.asarray(lat_deg, dtype=float)
    bands = dict.fromkeys(math.floor(v) for v in values[np.isfinite(values)])
    return [b + 0.5 for b in bands]


__all__ = ["blank_plotting_sheet", "plotting_bands", "SHEET_WIDTH_PT", "SHEET_HEIGHT_PT"]
