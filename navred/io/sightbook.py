"""The sight-book page: navred's template for a hand working, laid out down the page, and its reading back.

Edge code. A page of the template is a sheet of three columns: the line, the cadet's working and the
forms accepted. Down it run blocks, one working each ("Working 1", "Working 2", ...), each printed on
a page of its own: the sight (the method, the cadet, the time as kept, the body, Hs, the index error,
the height of eye, the DR), the time worked to UTC, the almanac, the altitude corrections to Ho, and
then the lines of the method, in the order of a hand reduction and in the trade's words. A page per
method: the intercept, the noon sight (meridian and ex-meridian), Polaris, the compass check. The
reader turns each filled block into one row of the table form (:mod:`navred.io.workings`), the
sight named by the spreadsheet row of its block's title.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from ..marking import LINE_NAMES
from ..vocabulary import normalise_header
from .readers import RawTable

#: The page's header row (the reader knows a page by it).
PAGE_HEADER = ("Line", "Your working", "Forms accepted")
#: The sight's own lines of a block: (label, the column of the table form, the forms accepted).
SIGHT_LINES = (
    ("Method", "method", "intercept, meridian, ex-meridian, polaris, amplitude or azimuth"),
    ("Cadet", "observer", "your name"),
    ("Date (ship's, zone)", "date", "2026-10-06"),
    ("Watch time", "zone_time", "06:51:45"),
    ("Zone description", "zone_description", "+1 (or +1 N): UTC = zone time + ZD"),
    ("Watch error", "watch_error", "7 s fast, 3 s slow"),
    ("Body", "body", "Sun, Moon, Venus, Mars, Jupiter, Saturn or a navigational star"),
    ("Limb", "limb", "lower or upper (Sun and Moon)"),
    ("Sextant altitude (Hs)", "hs", "35° 15.2′, 35 15.2"),
    ("Index error", "index_error", "1.2 on, 0.8 off"),
    ("Height of eye (m)", "eye_height_m", "3.5"),
    ("Horizon", "horizon", "sea (the default), artificial, bubble"),
    ("DR latitude", "dr_lat", "35° 12.0′ N"),
    ("DR longitude", "dr_lon", "012° 48.0′ W"),
    ("Fix group", "fix_group", "the same words on every sight of one fix"),
)
COMPASS_SIGHT_LINES = (("Compass bearing", "compass_bearing", "262.5 (degrees by the compass)"),
                       ("Variation", "variation", "4 W, 3° 30′ E (from the chart)"))
REMARKS_LINE = ("Instructor's remarks", "remarks", "the instructor's; navred keeps them")

TIME = ("utc_worked",)
ALMANAC = ("gha_hour_worked", "increment_worked", "v_corr_worked", "sha_worked", "gha_worked", "dec_hour_worked",
           "d_corr_worked", "dec_worked")
ALTITUDE = ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "sd_worked", "parallax_worked",
            "main_worked", "hp_corr_worked", "upper_limb_worked", "additional_worked", "ho_worked")
FIX = ("fix_lat_worked", "fix_lon_worked")
#: Each page: its sheet name, the method filled in, the sections of lines, and labels of its own.
PAGES = {
    "Intercept": ("intercept", (
        ("The time", TIME), ("The almanac", ALMANAC), ("Hs to Ho", ALTITUDE),
        ("The position worked from (the AP, or the DR)", ("ap_lat", "ap_lon", "lha_worked")),
        ("The tables (from an AP) or the calculator", ("tab_hc_worked", "tab_d_worked", "tab_z_worked",
                                                       "hc_correction_worked", "hc_worked", "zn_worked")),
        ("The line", ("intercept_worked",)), ("The fix you plotted (on the round's last sight)", FIX)), {}),
    "Noon": ("meridian", (
        ("The time", TIME), ("The almanac", ("gha_hour_worked", "increment_worked", "v_corr_worked", "gha_worked",
                                             "dec_hour_worked", "d_corr_worked", "dec_worked")),
        ("Hs to Ho", ALTITUDE),
        ("Ex-meridian only (method ex-meridian)", ("lha_worked", "ex_meridian_a_worked", "reduction_worked")),
        ("The latitude", ("meridian_altitude_worked", "zenith_distance_worked", "latitude_worked")),
        ("The fix you plotted (on the round's last sight)", FIX)), {}),
    "Polaris": ("polaris", (
        ("The time", TIME), ("The almanac", ("gha_hour_worked", "increment_worked", "gha_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "main_worked", "ho_worked")),
        ("The Polaris tables", ("lha_worked", "polaris_corr_worked", "latitude_worked")),
        ("The fix you plotted (on the round's last sight)", FIX)),
        {"gha_hour_worked": "GHA Aries at the whole hour", "gha_worked": "GHA Aries", "lha_worked": "LHA Aries"}),
    "Compass": ("amplitude", (
        ("The time", TIME), ("The almanac", ALMANAC),
        ("Amplitude (at rising or setting)", ("amplitude_worked",)),
        ("Azimuth (method azimuth)", ("lha_worked",)),
        ("The error", ("zn_worked", "compass_error_worked", "deviation_worked"))),
        {"zn_worked": "True bearing (Zn)"}),
}
#: Blocks (workings) on each page of the template.
BLOCKS_PER_PAGE = 6
_BLOCK = re.compile(r"^\s*working\s*(\d+)\s*$", re.IGNORECASE)


def _labels() -> dict[str, str]:
    """Every label a page may give, normalised, and the column it fills."""
    table = {normalise_header(label): key for label, key, _ in (*SIGHT_LINES, *COMPASS_SIGHT_LINES, REMARKS_LINE)}
    for _, sections, own in PAGES.values():
        for _, keys in sections:
            for key in keys:
                table[normalise_header(own.get(key, LINE_NAMES[key]))] = key
                table[normalise_header(LINE_NAMES[key])] = key
    return table


LABELS = _labels()
SECTION_TITLES = {normalise_header(title) for _, sections, _ in PAGES.values() for title, _ in sections}


def is_page(table: RawTable) -> bool:
    """Whether a table read from a sheet is a sight-book page (its header row is navred's page header)."""
    return [normalise_header(h) for h in table.header[:2]] == [normalise_header(h) for h in PAGE_HEADER[:2]]


def _blank(value) -> bool:
    return value is None or (isinstance(value, float) and value != value) or (isinstance(value, str)
                                                                             and not value.strip())


def page_sights(table: RawTable) -> tuple[RawTable | None, dict]:
    """A page's filled blocks as the table form: one row per working, named by its block's title row.

    Returns the table (None for a page with no filled working) and, for each working ((source, row)), the
    spreadsheet row of each of its lines. A label navred does not know is kept as a column of its own, as a
    log's extra column is."""
    labels, entries = table.columns[0].tolist(), table.columns[1].tolist()
    blocks: list[dict] = []
    block_rows: list[int] = []
    line_rows: dict = {}
    problems: dict[int, tuple[str, str]] = {}
    for i, (label, entry) in enumerate(zip(labels, entries)):
        row = int(table.row_numbers[i])
        text = "" if _blank(label) else str(label)
        if _BLOCK.match(text):
            blocks.append({})
            block_rows.append(row)
            continue
        if not blocks or not text or normalise_header(text) in SECTION_TITLES:
            continue
        key = LABELS.get(normalise_header(re.sub(r"\s*\(.*\)\s*$", "", text)), LABELS.get(normalise_header(text)))
        column = key or text
        if i in table.row_problems:
            problems[len(blocks) - 1] = (column, table.row_problems[i][1])
        if not _blank(entry):
            blocks[-1][column] = entry
            line_rows.setdefault((table.source, block_rows[-1]), {})[column] = row
    prefilled = {"method", "body"}
    keep = [k for k, block in enumerate(blocks) if set(block) - prefilled or k in problems]
    if not keep:
        return None, {}
    header: list[str] = []
    for k in keep:
        header += [c for c in blocks[k] if c not in header]
    for _, column in problems.items():
        if column[0] not in header:
            header.append(column[0])
    columns = [pd.Series([blocks[k].get(c) for k in keep], dtype=object) for c in header]
    kept_problems = {keep.index(k): problem for k, problem in problems.items() if k in keep}
    numbers = np.array([block_rows[k] for k in keep], dtype=int)
    sights = RawTable(table.source, header or ["method", "body"], columns or [pd.Series([], dtype=object)] * 2,
                      numbers, kept_problems)
    return sights, {key: rows for key, rows in line_rows.items() if key[1] in set(numbers.tolist())}


__all__ = ["PAGE_HEADER", "PAGES", "SIGHT_LINES", "COMPASS_SIGHT_LINES", "REMARKS_LINE", "BLOCKS_PER_PAGE", "LABELS",
           "is_page", "page_sights"]
