"""The words of a marking: values as the cadet wrote theirs, differences, what a slip costs, a working described.

Edge code, shared by the marking job, its workbook and its printed pages: lines are named as a sight
book names them (:data:`navred.marking.LINE_NAMES`), angles in degrees and minutes where the cadet
wrote them so (and every correction of a degree or more), TOWARD and AWAY in the cadet's own words,
times out in hours, minutes and seconds.
"""

from __future__ import annotations

import re

import numpy as np

from ..angles import format_angle, wrap_180, wrap_360
from ..marking import UNITS
from ..marking_checks import COMPASS_RUN_NM, PLOTTING_SPAN_NM
from .workings import WORKED_FORMS

#: The verdicts of a whole working.
RIGHT_WORKING, WRONG_WORKING, NOTICE_WORKING = "right", "wrong", "should have been noticed"


def _style_of(given_text: str) -> str:
    """How the cadet wrote a number: 'dm' (degrees and minutes), 'decimal', or '' (nothing written)."""
    text = str(given_text or "").strip()
    if not text:
        return ""
    return "dm" if ("°" in text or re.search(r"\d\s+\d", text)) else "decimal"


#: The lines that hold the tables' azimuth angle Z, written named from the elevated pole toward the body's side.
Z_LINES = ("tab_z_worked", "z_interpolated_worked")


def z_names(lat_deg: float, lha_deg: float) -> tuple[str, str]:
    """How Z is named: from the elevated pole (N in north latitude) toward east or west (east when LHA is
    over 180°), as "N 79.3° E"."""
    if lat_deg != lat_deg or lha_deg != lha_deg:
        return "", ""
    return ("N" if lat_deg >= 0 else "S"), ("E" if float(wrap_360(lha_deg)) > 180.0 else "W")


def value_text(line: str, value, given_text: str = "", names: tuple[str, str] = ("", "")) -> str:
    """A line's value written as the cadet wrote theirs: degrees and minutes where they wrote them (and for
    every correction of a degree or more), TOWARD/AWAY in their words, compass errors named E or W, Z named
    from the elevated pole (``names``: :func:`z_names`)."""
    if line == "utc_worked":
        return "" if value is None or np.isnat(value) else str(np.datetime64(value, "s")).replace("T", " ")
    if value is None or value != value:
        return ""
    if line in Z_LINES and names[0]:
        return f"{names[0]} {value:.1f}° {names[1]}"
    text = _value_text(line, value, given_text)
    if _style_of(given_text) == "dm" and "°" not in str(given_text):  # written without the marks: 104 55.2
        text = text.replace("° ", " ").replace("°", "").replace("′", "")
    return text


def _value_text(line: str, value, given_text: str) -> str:
    kind = WORKED_FORMS[line][0]
    style = _style_of(given_text)
    if line == "intercept_worked":
        words = ("TOWARD", "AWAY")
        written = str(given_text).strip().lower()
        if re.search(r"\b(t|a)\s*$", written):
            words = ("T", "A")
        elif re.search(r"(toward|towards|away)\s*$", written):
            words = ("toward", "away")
        return f"{abs(value):.1f} {words[0] if value >= 0 else words[1]}"
    if kind in ("lat", "lon", "dec"):
        return format_angle(value, kind)
    if kind == "named":
        return f"{abs(value):.1f}° {'E' if value >= 0 else 'W'}"
    if kind == "amplitude":
        return f"{abs(value):.1f}° {'N' if value >= 0 else 'S'}"
    if kind == "bearing":
        return "N" if abs(float(wrap_180(value))) < 90.0 else "S"
    if kind == "degrees":
        return format_angle(value, "angle") if style == "dm" else f"{float(wrap_360(value)):05.1f}°"
    if kind == "arcsec":
        return f"{value:.1f}″"
    if kind == "arcmin":
        signed = str(given_text).strip()[:1] in ("+", "-", "−") or not str(given_text).strip()
        if abs(value) >= 60.0 or style == "dm":
            return ("+" if value >= 0 and signed else "") + format_angle(value / 60.0, "signed")
        return f"{value:+.1f}′" if signed or value < 0 else f"{value:.1f}′"
    if line == "lha_worked" and style == "decimal":
        return f"{float(wrap_360(value)):.1f}°"
    if style == "decimal":
        return f"{value:.2f}°" if kind == "signed" else f"{float(wrap_360(value)):.2f}°"
    return format_angle(value, "signed" if kind == "signed" else "angle")


def difference_text(line: str, difference: float) -> str:
    """A difference in words: '7 s late', '2 h 00 min 00 s early', '+0.7′', '−39.1°', '+23.4 nm'."""
    if difference != difference:
        return ""
    unit = UNITS[line]
    if unit == "s":
        seconds = abs(difference)
        if seconds >= 60:
            h, rest = divmod(int(round(seconds)), 3600)
            m, s = divmod(rest, 60)
            span = (f"{h} h {m:02d} min {s:02d} s" if h else f"{m} min {s:02d} s")
        else:
            span = f"{seconds:.0f} s"
        return f"{span} {'late' if difference > 0 else 'early'}"
    if unit == "′" and abs(difference) >= 60:
        return ("+" if difference >= 0 else "−") + format_angle(abs(difference) / 60.0, "signed")
    sign = "+" if difference >= 0 else "−"
    return f"{sign}{abs(difference):.1f}{unit}" if unit in ("′", "°", "″") else f"{sign}{abs(difference):.1f} {unit}"


def cost_text(method: str, cost_nm: float, cost_deg: float, line: str = "") -> str:
    """What a slip does to what the cadet would plot or steer, in words ("" when nothing is wrong)."""
    if cost_nm != cost_nm or (abs(cost_nm) < 0.05 and not abs(cost_deg) >= 0.05):
        return ""  # the slip went no further than its line
    if line in ("fix_lat_worked", "fix_lon_worked"):
        return f"your plotted fix stands {abs(cost_nm):,.1f} nm from where your own lines cross"
    if method in ("amplitude", "azimuth"):
        what = "deviation" if line == "deviation_worked" else "compass error"
        return (f"your {what} is {abs(cost_deg):.1f}° out: a course steered by it would take the ship "
                f"{abs(cost_nm):.1f} nm off her track in a {COMPASS_RUN_NM:.0f}-mile run")
    if method in ("meridian", "ex-meridian", "polaris"):
        return f"this moves your latitude {abs(cost_nm):,.1f} nm"
    if cost_deg == cost_deg:  # the slip turned the line (navred.marking_checks.SMALLEST_TURN_DEG or more)
        return (f"this turns your position line {abs(cost_deg):.1f}° and, within {PLOTTING_SPAN_NM:.0f} nm of the "
                f"DR, puts it up to {abs(cost_nm):,.1f} nm from where it should lie")
    return f"this moves your position line {abs(cost_nm):,.1f} nm"


def where_text(row: dict) -> str:
    """Where a working is: its row, and its sheet where the sheet is not the cadet's own ("row 7", "sheet
    'Sun', row 116")."""
    sheet = re.search(r"\s\(sheet '(.*)'\)$", str(row.get("source", "")))
    if sheet and sheet.group(1) != row.get("cadet"):
        return f"sheet '{sheet.group(1)}', row {row['row']}"
    return f"row {row['row']}"


#: What the marking says of a wrong line that fits no catalogued mistake.
NO_CATALOGUED_CAUSE = "It is not one of the usual mistakes: work the line again from the lines before it."


def describe(row: dict) -> str:
    """One working's marking in words, for the screen and the printed page."""
    head = f"{row['cadet']}, {where_text(row)}, {row['body']} at {row['utc'][11:16]} UTC ({row['way']})"
    if row["first_wrong_line"]:
        off = difference_text(row["first_wrong_line"], row["difference"])
        if row["given"]:
            text = (f"{head}: {row['first_wrong_line_name']} is wrong: you wrote {row['given']}, "
                    f"it should be {row['expected'] or 'given'}" + (f" ({off})" if off else "") + ". ")
        else:
            text = f"{head}: {row['first_wrong_line_name']} is missing" + (
                f": it should be {row['expected']}. " if row["expected"] else ". ")
        text += f"Probable cause: {row['cause']}." if row["cause"] else NO_CATALOGUED_CAUSE
        cost = cost_text(row["method"], row.get("cost_nm", np.nan), row.get("cost_deg", np.nan),
                         row["first_wrong_line"])
        if cost:
            text += f" Left uncorrected, {cost}."
        later = int(row["lines_wrong"]) - 1
        if later > 0:
            text += f" {later} later line{'s' if later > 1 else ''} wrong as well."
    else:
        text = f"{head}: every line right."
    if row["noticed"]:
        text += f" Should have been noticed: {row['noticed']}."
    return text


__all__ = ["RIGHT_WORKING", "WRONG_WORKING", "NOTICE_WORKING", "NO_CATALOGUED_CAUSE", "Z_LINES", "value_text",
           "z_names", "difference_text", "cost_text", "where_text", "describe"]
