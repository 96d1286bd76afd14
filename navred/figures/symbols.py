"""navred's palette and the symbols of a plot, shared by the plotting sheet and the voyage picture. Edge code.

The symbols are the plotting convention of common practice (as taught, and as Bowditch's *American Practical
Navigator*, NGA Pub. No. 9, describes the plot of a DR track; from memory): a fix is a circle with a dot, a
DR position a half circle with a dot, an estimated position a square with a dot. A position from outside the
sights (a chart's, a satellite receiver's, a departure) is a triangle with a dot here. Each drawer returns the
box the symbol covers, for the placing of labels.
"""

from __future__ import annotations

import numpy as np

from .placing import rect_corners

# navred's own palette: sea-chart paper, ink-blue lines, a vermilion fix
PAPER, GRID, INK, FIX, CHART, ELLIPSE, FLAGGED = ("#f7f3e8", "#c9c2ad", "#1d3557", "#d1495b",
                                                  "#2a9d8f", "#d1495b", "#8d99ae")
#: a sight's line drawn though the fix does not use it (left out as a gross error or by the blunder test): grey,
#: dashed apart from a flagged line's dashes
LEFT_OUT = "#8a8a84"
_STEPS_ARCMIN = (0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600)


def grid_step(span_nm: float) -> float:
    """The grid's step in minutes of arc for a chart ``span_nm`` across: about eight lines or fewer."""
    for step in _STEPS_ARCMIN:
        if span_nm / step <= 8:
            return step
    return _STEPS_ARCMIN[-1]


#: the width of a plotting sheet's page (and the voyage picture's height), in points: 8 inches
SHEET_PT = 576.0


def nice_length(target: float) -> float:
    """A round length (1, 2 or 5 times a power of ten) of at least half ``target``: a scale bar's."""
    for value in (0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500, 1000):
        if value >= target * 0.5:
            return value
    return 1000.0



def fix_symbol(sheet, x: float, y: float, colour: str = FIX, kind: str = "fix") -> np.ndarray:
    """A fix: a circle with a dot (common practice). Its box."""
    sheet.circle(x, y, 5.5, outline=colour, width=1.5, kind=kind)
    sheet.circle(x, y, 1.6, fill=colour, kind=kind)
    return rect_corners(x - 6.5, y - 6.5, x + 6.5, y + 6.5)


def dr_symbol(sheet, x: float, y: float, colour: str = INK, kind: str = "dr") -> np.ndarray:
    """A DR position: a half circle with a dot (common practice). Its box."""
    t = np.linspace(0.0, np.pi, 25)
    sheet.polygon(x + 5.5 * np.cos(t), y - 5.5 * np.sin(t), outline=colour, width=1.4, kind=kind)
    sheet.circle(x, y, 1.5, fill=colour, kind=kind)
    return rect_corners(x - 6.5, y - 6.5, x + 6.5, y + 2.5)


def ep_symbol(sheet, x: float, y: float, colour: str = FIX, kind: str = "ep") -> np.ndarray:
    """An estimated position: a square with a dot (common practice). Its box."""
    sheet.polygon([x - 5, x + 5, x + 5, x - 5], [y - 5, y - 5, y + 5, y + 5], outline=colour, width=1.4, kind=kind)
    sheet.circle(x, y, 1.5, fill=colour, kind=kind)
    return rect_corners(x - 6.5, y - 6.5, x + 6.5, y + 6.5)


def position_symbol(sheet, x: float, y: float, colour: str = CHART, kind: str = "chart position") -> np.ndarray:
    """A position from outside the sights (chart, satellite receiver, a departure): a triangle with a dot."""
    sheet.polygon([x - 6, x + 6, x], [y + 4.5, y + 4.5, y - 6.5], outline=colour, width=1.4, kind=kind)
    sheet.circle(x, y, 1.5, fill=colour, kind=kind)
    return rect_corners(x - 7.5, y - 7.5, x + 7.5, y + 6)


def every_sight_symbol(sheet, x: float, y: float, kind: str = "every sight fix") -> np.ndarray:
    """The fix from every sight, a gross error among them (not the fix): a grey diamond."""
    sheet.polygon([x - 6, x, x + 6, x], [y, y - 6, y, y + 6], outline=FLAGGED, width=1.3, kind=kind)
    return rect_corners(x - 7, y - 7, x + 7, y + 7)


def check_fix_symbol(sheet, x: float, y: float, kind: str = "check fix") -> np.ndarray:
    """The check fix, the flagged sights left out (not the fix): a grey circle with a cross. Its box."""
    sheet.circle(x, y, 5.5, outline=FLAGGED, width=1.3, kind=kind)
    sheet.line([x - 3.9, x + 3.9], [y - 3.9, y + 3.9], FLAGGED, 1.1, kind=kind)
    sheet.line([x - 3.9, x + 3.9], [y + 3.9, y - 3.9], FLAGGED, 1.1, kind=kind)
    return rect_corners(x - 6.5, y - 6.5, x + 6.5, y + 6.5)


__all__ = ["PAPER", "GRID", "INK", "FIX", "CHART", "ELLIPSE", "FLAGGED", "LEFT_OUT", "SHEET_PT", "grid_step", "nice_length",
           "fix_symbol", "dr_symbol", "ep_symbol", "position_symbol", "every_sight_symbol",
           "check_fix_symbol"]
