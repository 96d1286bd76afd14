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
from dataclasses import dataclass, field

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
    ("Body", "body", "the body you took"),
    ("Limb", "limb", "lower or upper"),
    ("Sextant altitude (Hs)", "hs", "35° 15.2′, 35 15.2"),
    ("Index error", "index_error", "1.2 on, 0.8 off"),
    ("Height of eye (m)", "eye_height_m", "3.5"),
    ("Horizon", "horizon", "sea (the default), artificial, bubble"),
    ("DR latitude", "dr_lat", "35° 12.0′ N"),
    ("DR longitude", "dr_lon", "012° 48.0′ W"),
    ("Round", "fix_group", "the same words on every sight you cross as one fix"),
)
COMPASS_SIGHT_LINES = (("Compass bearing", "compass_bearing", "262.5 (degrees by the compass)"),
                       ("Variation", "variation", "4 W, 3° 30′ E (from the chart)"))
REMARKS_LINE = ("Instructor's remarks", "remarks", "the instructor's; navred keeps them")
#: Labels of earlier templates, still read back.
LEGACY_LABELS = {"Fix group": "fix_group"}

TIME = ("utc_worked",)
FIX = ("fix_lat_worked", "fix_lon_worked")
POSITION = ("The position worked from (the AP, or the DR)", ("ap_lat", "ap_lon", "lha_worked"))
TABLES = ("The tables (from an AP) or the calculator", ("tab_hc_worked", "tab_d_worked", "tab_z_worked",
                                                        "z_interpolated_worked", "hc_correction_worked", "hc_worked",
                                                        "zn_worked"))
LINE_AND_FIX = (("The line", ("intercept_worked",)), ("The fix you plotted (on the round's last sight)", FIX))
#: What a page says of a line beside it where the line's general note (navred.io.workings.WORKED_FORMS) speaks
#: of other bodies or methods: the note every page gives, unless the page gives its own.
HINTS = {
    "gha_hour_worked": "GHA at the whole hour: 123° 45.6′",
    "v_corr_worked": "v correction, ′, for the minutes past the hour: +3.1",
    "gha_worked": "GHA: 123° 45.6′",
    "parallax_worked": "parallax in altitude, ′: HP × cos of the altitude: +0.1",
    "main_worked": "main correction, ′: refraction, SD and parallax together: +14.0",
    "hp_corr_worked": "HP correction, ′ (the table's second part, the L or U column): +4.6",
    "upper_limb_worked": "the upper limb: −30",
    "additional_worked": "additional correction, ′ (the phase): +0.1",
    "ap_lat": "assumed latitude (the DR's, worked from the DR): 44° N, 44 00.0 N",
    "ap_lon": "assumed longitude (the DR's, worked from the DR): 012° 04.7′ W",
    "lha_worked": "LHA = GHA + longitude (east +, west −): 304, 304° 00.0′",
}


@dataclass(frozen=True)
class SightBookPage:
    """A page of the sight book: the method and body filled in, the sections of lines down a block, the
    labels and notes of its own (where a line's sight-book name and note do not fit the page), and the
    sight's lines it leaves out."""

    method: str
    body: str
    sections: tuple[tuple[str, tuple[str, ...]], ...]
    labels: dict = field(default_factory=dict)
    hints: dict = field(default_factory=dict)
    leaves_out: tuple[str, ...] = ()


#: The pages: the intercept method a page per kind of body (only the lines that body takes), then the noon
#: sight (meridian and ex-meridian), Polaris and the compass check.
PAGES = {
    "Sun": SightBookPage("intercept", "Sun", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "gha_worked", "dec_hour_worked", "d_corr_worked",
                         "dec_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "sd_worked", "parallax_worked",
                      "main_worked", "ho_worked")),
        POSITION, TABLES, *LINE_AND_FIX),
        hints={"main_worked": "or, from the Sun's table, the main correction, ′: refraction, SD and parallax "
                              "together: +14.0"}),
    "Moon": SightBookPage("intercept", "Moon", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "v_corr_worked", "gha_worked", "dec_hour_worked",
                         "d_corr_worked", "dec_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked")),
        ("By the Moon's two-part table", ("main_worked", "hp_corr_worked", "upper_limb_worked")),
        ("Or by calculator", ("refraction_worked", "sd_worked", "parallax_worked")),
        ("The observed altitude", ("ho_worked",)),
        POSITION, TABLES, *LINE_AND_FIX),
        labels={"main_worked": "First correction"},
        hints={"main_worked": "the table's first correction, ′, for Ha: +56.4, +1° 02.3′",
               "upper_limb_worked": "the upper limb only: −30",
               "parallax_worked": "parallax in altitude, ′: HP × cos of the altitude: +54.3"}),
    "Stars": SightBookPage("intercept", "", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "sha_worked", "gha_worked", "dec_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "ho_worked")),
        POSITION, TABLES, *LINE_AND_FIX),
        labels={"gha_hour_worked": "GHA Aries at the whole hour", "increment_worked": "Increment (Aries)"},
        hints={"gha_hour_worked": "GHA Aries at the whole hour: 123° 45.6′",
               "increment_worked": "for the minutes and seconds, from the Aries column: 2° 23.9′",
               "gha_worked": "GHA of the star: GHA Aries + increment + SHA: 123° 45.6′",
               "refraction_worked": "refraction, ′ (the stars' table): −1.1"},
        leaves_out=("limb",)),
    "Planets": SightBookPage("intercept", "", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "v_corr_worked", "gha_worked", "dec_hour_worked",
                         "d_corr_worked", "dec_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "parallax_worked",
                      "additional_worked", "ho_worked")),
        POSITION, TABLES, *LINE_AND_FIX),
        hints={"refraction_worked": "refraction, ′ (the planets' table): −1.1",
               "parallax_worked": "Venus and Mars: parallax in altitude, ′, HP × cos of the altitude: +0.1",
               "additional_worked": "Venus and Mars: the additional correction for the phase, ′: +0.1"},
        leaves_out=("limb",)),
    "Noon": SightBookPage("meridian", "Sun", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "v_corr_worked", "gha_worked", "dec_hour_worked",
                         "d_corr_worked", "dec_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "sd_worked", "parallax_worked",
                      "main_worked", "ho_worked")),
        ("Ex-meridian only (method ex-meridian)", ("lha_worked", "ex_meridian_a_worked", "reduction_worked")),
        ("The latitude", ("meridian_altitude_worked", "bearing_worked", "zenith_distance_worked",
                          "latitude_worked")),
        ("The fix you plotted (on the round's last sight)", FIX)),
        hints={"v_corr_worked": "v correction, ′ (the Moon only): +3.1",
               "gha_worked": "GHA (for the ex-meridian's LHA): 123° 45.6′",
               "lha_worked": "LHA = GHA + DR longitude (east +, west −): 357° 12.4′",
               "main_worked": "or, from the Sun's table, the main correction, ′: refraction, SD and parallax "
                              "together: +14.0"}),
    "Polaris": SightBookPage("polaris", "Polaris", (
        ("The time", TIME), ("The almanac", ("gha_hour_worked", "increment_worked", "gha_worked")),
        ("Hs to Ho", ("ic_worked", "dip_worked", "ha_worked", "refraction_worked", "ho_worked")),
        ("The Polaris tables", ("lha_worked", "polaris_corr_worked", "latitude_worked")),
        ("The fix you plotted (on the round's last sight)", FIX)),
        labels={"gha_hour_worked": "GHA Aries at the whole hour", "gha_worked": "GHA Aries",
                "lha_worked": "LHA Aries"},
        hints={"gha_hour_worked": "GHA Aries at the whole hour: 123° 45.6′",
               "increment_worked": "for the minutes and seconds, from the Aries column: 2° 23.9′",
               "gha_worked": "GHA Aries: 123° 45.6′",
               "lha_worked": "LHA Aries = GHA Aries + DR longitude (east +, west −): 304° 12.4′",
               "refraction_worked": "refraction, ′ (the stars' table): −1.1"},
        leaves_out=("limb",)),
    "Compass": SightBookPage("amplitude", "Sun", (
        ("The time", TIME),
        ("The almanac", ("gha_hour_worked", "increment_worked", "gha_worked", "dec_hour_worked", "d_corr_worked",
                         "dec_worked")),
        ("Amplitude (at rising or setting)", ("amplitude_worked",)),
        ("Azimuth (method azimuth)", ("lha_worked",)),
        ("The error", ("zn_worked", "compass_error_worked", "deviation_worked"))),
        labels={"zn_worked": "True bearing (Zn)"},
        hints={"gha_worked": "GHA (for the azimuth's LHA): 123° 45.6′",
               "lha_worked": "LHA = GHA + DR longitude (east +, west −), for the azimuth: 304° 12.4′"},
        leaves_out=("limb", "hs", "index_error", "eye_height_m", "horizon")),
}


#: Blocks (workings) on each page of the template.
BLOCKS_PER_PAGE = 6
_BLOCK = re.compile(r"^\s*working\s*(\d+)\s*$", re.IGNORECASE)


#: The labels of earlier templates' pages of their own, still read back (a page's label of a line).
LEGACY_LINE_LABELS = {"GHA Aries at the whole hour": "gha_hour_worked", "GHA Aries": "gha_worked",
                      "LHA Aries": "lha_worked", "True bearing (Zn)": "zn_worked"}


def _labels() -> dict[str, str]:
    """Every label a page may give, normalised, and the column it fills."""
    table = {normalise_header(label): key for label, key, _ in (*SIGHT_LINES, *COMPASS_SIGHT_LINES, REMARKS_LINE)}
    table.update({normalise_header(label): key for label, key in {**LEGACY_LABELS, **LEGACY_LINE_LABELS}.items()})
    for key, name in LINE_NAMES.items():
        table[normalise_header(name)] = key
    for page in PAGES.values():
        for _, keys in page.sections:
            for key in keys:
                table[normalise_header(page.labels.get(key, LINE_NAMES[key]))] = key
    return table


LABELS = _labels()
SECTION_TITLES = {normalise_header(title) for page in PAGES.values() for title, _ in page.sections} | {
    normalise_header(t) for t in ("The almanac", "Hs to Ho", "The fix you plotted (on the round's last sight)",
                                  "Amplitude (at rising or setting)", "Azimuth (method azimuth)", "The error",
                                  "The latitude", "The Polaris tables", "The time", "The line")}


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


__all__ = ["PAGE_HEADER", "PAGES", "SightBookPage", "SIGHT_LINES", "COMPASS_SIGHT_LINES", "REMARKS_LINE", "HINTS",
           "BLOCKS_PER_PAGE", "LABELS", "is_page", "page_sights"]
