"""Marking a hand reduction: every line of a cadet's working recomputed, the first wrong one named with its cause.

A sight reduced by hand goes through the time working, the almanac (GHA and Dec at the whole
hour, the increment, the v and d corrections), the altitude corrections from Hs to Ho, and then
the method the syllabus teaches for it: the intercept (from an assumed position with the sight
reduction tables, or from the DR with a calculator), the latitude by meridian altitude, by
ex-meridian or by Polaris, or the compass error by amplitude or by azimuth; a round of sights
ends in the fix the cadet plots. Each line (:data:`LINES`, named as a sight book names it in
:data:`LINE_NAMES`) is recomputed the way the cadet should have done it *from the cadet's own
earlier lines* (carry-forward: a slip is counted once, where it happened), exactly and as the
printed almanac and tables give it, and judged within a tolerance that allows legitimate
rounding (:data:`TOLERANCES`, docs/marking.md). A wrong line is matched against the catalogue of
the trade's classic mistakes (:data:`CAUSES`); a wrong line that fits none is still named, with
its expected value and the difference. Beyond the arithmetic, each working is checked as an
examiner would (:mod:`navred.marking_checks`: an intercept beyond 30 nm, a fix far from the DR, a
body that cannot have been seen), and a slip is costed in miles.

Core code: arrays in, arrays out, one element per sight; vectorised (a class's sights are worked
together; only the fix groups are crossed one by one). The lines shared by every method are in
:mod:`navred.marking_sight`, each method's in :mod:`navred.marking_methods`, the judge and the
catalogue in :mod:`navred.marking_judge`.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .constants import ARCMIN_PER_DEG
from .errors import NavredError
from .marking_checks import GroupFix, any_wrong, fix_lines, sense_checks, slip_costs
from .marking_judge import (
    CAUSES,
    DEGREE_LINES,
    FINAL_LINES,
    LINE,
    LINE_NAMES,
    LINE_TABLE,
    LINES,
    METHODS,
    NOT_GIVEN,
    NOT_JUDGED,
    REQUIRED,
    RIGHT,
    TOLERANCES,
    UNITS,
    WRONG,
    ZONE_OR_DATE,
    Judge,
    Marks,
    SightsToMark,
    catalogue_cause,
    tenth,
)
from .marking_methods import (
    Lines,
    compass_lines,
    intercept_lines,
    latitude_lines,
    z_from_zn,
    zn_from_z,
)
from .marking_sight import (
    BASE_RATE_DEG_PER_HOUR,
    almanac_lines,
    altitude_lines,
    kind_of,
    sky_of,
    time_lines,
)

#: The lines every intercept working gives (the method's required lines; :data:`REQUIRED` has each method's).
REQUIRED_LINES = REQUIRED["intercept"]


def method_of(given: dict[str, np.ndarray], body: np.ndarray, stated: np.ndarray | None = None) -> np.ndarray:
    """Each working's method: as stated (a key of :data:`METHODS`), else told from the lines it gives: an
    amplitude, a compass error, a Polaris correction (or a latitude from Polaris), a reduction to the
    meridian, a latitude, else the intercept method."""
    n = len(body)

    def has(line):
        value = given.get(line)
        if value is None:
            return np.zeros(n, dtype=bool)
        if np.issubdtype(np.asarray(value).dtype, np.datetime64):
            return ~np.isnat(value)
        return np.isfinite(np.asarray(value, dtype=float))

    polaris = np.asarray(body, dtype=object) == "Polaris"
    latitude = has("latitude_worked") | has("zenith_distance_worked") | has("meridian_altitude_worked") | \
        has("bearing_worked")
    told = np.select(
        [has("amplitude_worked"), has("compass_error_worked") | has("deviation_worked"),
         has("polaris_corr_worked") | (polaris & has("latitude_worked") & ~has("zenith_distance_worked")),
         has("reduction_worked") | has("ex_meridian_a_worked"), latitude],
        ["amplitude", "azimuth", "polaris", "ex-meridian", "meridian"], "intercept").astype(object)
    if stated is None:
        return told
    stated = np.asarray(stated, dtype=object)
    unknown = sorted(set(stated[(stated != "") & ~np.isin(stated, list(METHODS))].tolist()))
    if unknown:
        raise NavredError(f"no such method: {', '.join(map(repr, unknown))}; the methods are "
                          f"{', '.join(METHODS)}")
    return np.where(stated != "", stated, told)


def _judging_units(given: dict[str, ArrayLike]) -> dict[str, np.ndarray]:
    cadet = {}
    for key, value in given.items():
        if key not in LINE:
            raise NavredError(f"no such line of a working: {key}; the lines are {', '.join(LINES)}")
        if LINE[key].given_in == "utc":
            cadet[key] = np.asarray(value, dtype="datetime64[ns]")
        else:
            cadet[key] = np.asarray(value, dtype=float) * (ARCMIN_PER_DEG if LINE[key].given_in == "deg" else 1.0)
    return cadet


def mark(sights: SightsToMark, given: dict[str, ArrayLike]) -> Marks:
    """Judge every line of every hand working (see the module's notes), by each working's method.

    ``given`` maps line names of :data:`LINES` to the cadet's values (``utc_worked`` as datetime64
    UTC; the lines of :data:`DEGREE_LINES` in degrees (latitudes and declinations north +,
    longitudes east +); Z (tabulated or interpolated), Zn, the amplitude (north +), the compass error
    and the deviation (east +) in degrees; the body's bearing at meridian passage 0° (N) or 180° (S); every correction (increment, v, d, IC, dip, refraction, SD, parallax, main, HP
    correction, upper limb, additional, the tables' d, the Hc correction, the reduction and the
    Polaris correction) in arcminutes, signed as added; ``a`` in arcseconds; the intercept in
    nautical miles, + TOWARD); a missing line is absent or NaN/NaT.
    """
    n = len(sights.body)
    cadet = _judging_units(given)
    method = method_of(cadet, np.asarray(sights.body, dtype=object), sights.method)
    j = Judge(n, cadet)
    kind = kind_of(np.asarray(sights.body, dtype=object))
    aries_only = (method == "polaris") & (np.asarray(sights.body, dtype=object) == "Polaris")

    t = time_lines(j, sights)
    sky = sky_of(sights, t)
    places = almanac_lines(j, sky, kind, aries_only)
    gha_c, dec_c = places.gha_deg, places.dec_deg
    altitudes = altitude_lines(j, sights, sky, kind, gha_c, dec_c)
    intercept = intercept_lines(j, sights, method == "intercept", places, altitudes.ho_c)
    latitudes = latitude_lines(j, sights, method, sky.sha_t, places, altitudes.ho_c)
    bearings = compass_lines(j, sights, method, gha_c, dec_c)
    for name, needed in REQUIRED.items():  # a line the method needs, not given, is wrong
        for line in needed:
            k = LINES.index(line)
            absent = (method == name) & (j.verdict[:, k] == NOT_GIVEN)
            j.verdict[absent, k] = WRONG
            j.cause[absent, k] = (f"not given: every working by {METHODS[name]} gives "
                                  f"{', '.join(LINE_NAMES[x] for x in needed)}")
    # the lines of the fix: intercepts from their positions, latitudes as lines running east and west
    latitude_rows = np.isfinite(latitudes.lat_deg)
    lines = Lines(np.where(latitude_rows, latitudes.lat_deg, intercept.lat_deg),
                  np.where(latitude_rows, np.asarray(sights.dr_lon_deg, dtype=float), intercept.lon_deg),
                  np.where(latitude_rows, 0.0, intercept.zn_deg), np.where(latitude_rows, 0.0, intercept.intercept_nm),
                  intercept.from_dr | latitude_rows, intercept.way)
    times_s = np.asarray(sights.utc, dtype="datetime64[ns]").astype(np.int64) / 1e9
    fixes = fix_lines(j, sights, lines, times_s, method)
    j.verdict[(j.verdict == NOT_GIVEN) & np.stack([j.has(line) for line in LINES], axis=1)] = NOT_JUDGED

    marks = _in_given_units(j, n)
    marks.method = method
    marks.way = _ways(method, intercept.way, kind, altitudes.two_part, j.has("main_worked"))
    marks.refresh_first()
    marks.noticed = sense_checks(sights, kind, method, sky, lines, latitudes, fixes)
    marks.cost_nm, marks.cost_deg = slip_costs(sights, method, sky, altitudes, lines, latitudes, bearings,
                                               any_wrong(marks.verdict))
    plotted = np.isin(marks.first_wrong_line, ["fix_lat_worked", "fix_lon_worked"])
    for fix in fixes:  # a slip of the plot costs the distance of the plotted fix from the lines' crossing
        if fix.charged >= 0 and plotted[fix.charged]:
            marks.cost_nm[fix.charged] = fix.apart_nm
    marks.fixes = fixes
    return marks


def _in_given_units(j: Judge, n: int) -> Marks:
    """The marks with every value back in the units the lines are given in (degrees for the lines of
    :data:`DEGREE_LINES`); differences stay in each line's unit (:data:`UNITS`)."""
    given_out, exact, tabular, expected = {}, {}, {}, {}
    for line in LINE_TABLE:
        key = line.key
        if line.given_in == "utc":
            missing = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
            given_out[key] = j.given.get(key, missing)
            for store, source in ((exact, j.exact), (tabular, j.tabular), (expected, j.expected)):
                store[key] = source.get(key, missing)
            continue
        scale = ARCMIN_PER_DEG if line.given_in == "deg" else 1.0
        given_out[key] = np.asarray(j.given.get(key, np.full(n, np.nan)), dtype=float) / scale
        for store, source in ((exact, j.exact), (tabular, j.tabular), (expected, j.expected)):
            store[key] = np.asarray(source.get(key, np.full(n, np.nan)), dtype=float) / scale
    return Marks(LINES, given_out, exact, tabular, j.verdict, j.cause, j.difference, expected)


def _ways(method: np.ndarray, intercept_way: np.ndarray, kind: np.ndarray, two_part: np.ndarray,
          has_main: np.ndarray) -> np.ndarray:
    """How each working was done, in words: the method, and for the intercept and the Moon how it was worked."""
    words = {"meridian": "latitude by meridian altitude", "ex-meridian": "latitude by ex-meridian",
             "polaris": "latitude by Polaris", "amplitude": "compass error by amplitude",
             "azimuth": "compass error by azimuth"}
    named = np.array([words.get(m, "") for m in method.tolist()], dtype=object)
    text = np.where(method == "intercept", "intercept " + intercept_way.astype(object), named)
    moon = kind == "moon"
    combined = has_main & ~two_part
    text = np.where(moon & two_part, text + "; the Moon by the two-part table", text)
    return np.where(moon & combined, text + "; the Moon by one combined correction", text).astype(object)


__all__ = ["LINES", "LINE_NAMES", "LINE_TABLE", "REQUIRED_LINES", "REQUIRED", "FINAL_LINES", "DEGREE_LINES",
           "TOLERANCES", "CAUSES", "ZONE_OR_DATE", "UNITS", "METHODS", "SightsToMark", "Marks", "GroupFix", "mark",
           "method_of", "zn_from_z", "z_from_zn", "tenth", "catalogue_cause", "BASE_RATE_DEG_PER_HOUR", "RIGHT", "WRONG", "NOT_GIVEN",
           "NOT_JUDGED"]
