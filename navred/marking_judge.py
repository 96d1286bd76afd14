"""The lines of a hand working, the catalogue of mistakes, and the judge that marks a line.

Core code (numpy only). A hand working is judged line by line (:mod:`navred.marking`): each line
has a name in the words a sight book uses, a unit, and a tolerance that allows the rounding the
printed almanac and tables carry (docs/marking.md gives the reasons); each line is compared with
every value the cadet could legitimately have written (the exact value, the printed tables' value,
the value another accepted way of working gives) and, when wrong, with what each catalogued mistake
would have given there.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_180
from .constants import ARCMIN_PER_DEG


@dataclass(frozen=True)
class Line:
    """One line of a hand working: its key (the column a working gives it in), its name in a sight
    book, the unit of its difference and tolerance, the tolerance, and how it is given."""

    key: str
    name: str
    unit: str  # "′", "°", "s", "nm", "″"
    tolerance: float
    #: how the value is given to :func:`navred.marking.mark`: "deg" (degrees, judged in arcminutes),
    #: "arcmin", "zn" (degrees, judged in degrees), "utc", "nm", "arcsec"
    given_in: str


#: Every line of every method, in the order of a hand reduction (the first wrong one is named).
LINE_TABLE: tuple[Line, ...] = (
    Line("utc_worked", "UTC", "s", 1.0, "utc"),
    Line("gha_hour_worked", "GHA at the whole hour", "′", 0.1, "deg"),
    Line("increment_worked", "GHA increment", "′", 0.1, "arcmin"),
    Line("v_corr_worked", "v correction", "′", 0.1, "arcmin"),
    Line("sha_worked", "SHA", "′", 0.2, "deg"),
    Line("gha_worked", "GHA", "′", 0.2, "deg"),
    Line("dec_hour_worked", "Dec at the whole hour", "′", 0.1, "deg"),
    Line("d_corr_worked", "d correction", "′", 0.1, "arcmin"),
    Line("dec_worked", "Dec", "′", 0.2, "deg"),
    Line("ic_worked", "Index correction", "′", 0.05, "arcmin"),
    Line("dip_worked", "Dip", "′", 0.1, "arcmin"),
    Line("ha_worked", "Apparent altitude (Ha)", "′", 0.1, "deg"),
    Line("refraction_worked", "Refraction", "′", 0.2, "arcmin"),
    Line("sd_worked", "Semi-diameter", "′", 0.1, "arcmin"),
    Line("parallax_worked", "Parallax in altitude", "′", 0.2, "arcmin"),
    Line("main_worked", "Main correction", "′", 0.3, "arcmin"),
    Line("hp_corr_worked", "HP correction", "′", 0.3, "arcmin"),
    Line("upper_limb_worked", "Upper limb −30′", "′", 0.05, "arcmin"),
    Line("additional_worked", "Additional correction", "′", 0.1, "arcmin"),
    Line("ho_worked", "Ho", "′", 0.3, "deg"),
    Line("amplitude_worked", "Amplitude", "°", 0.1, "zn"),
    Line("ap_lat", "AP latitude", "′", 0.05, "deg"),
    Line("ap_lon", "AP longitude", "′", 0.05, "deg"),
    Line("lha_worked", "LHA", "′", 0.05, "deg"),
    Line("ex_meridian_a_worked", "Change of altitude in one minute (a)", "″", 0.1, "arcsec"),
    Line("reduction_worked", "Reduction to the meridian", "′", 0.2, "arcmin"),
    Line("meridian_altitude_worked", "Meridian altitude", "′", 0.1, "deg"),
    Line("bearing_worked", "Bearing at meridian passage", "°", 1.0, "zn"),
    Line("zenith_distance_worked", "Zenith distance", "′", 0.1, "deg"),
    Line("polaris_corr_worked", "Polaris correction (a0 + a1 + a2 − 1°)", "′", 0.3, "arcmin"),
    Line("latitude_worked", "Latitude", "′", 0.1, "deg"),
    Line("tab_hc_worked", "Tabulated Hc", "′", 0.1, "deg"),
    Line("tab_d_worked", "Tables' d", "′", 0.1, "arcmin"),
    Line("tab_z_worked", "Tabulated Z", "°", 0.1, "zn"),
    Line("z_interpolated_worked", "Z interpolated", "°", 0.1, "zn"),
    Line("hc_correction_worked", "d correction of Hc", "′", 0.1, "arcmin"),
    Line("hc_worked", "Hc", "′", 0.3, "deg"),
    Line("zn_worked", "Zn", "°", 0.3, "zn"),
    Line("compass_error_worked", "Compass error", "°", 0.1, "zn"),
    Line("deviation_worked", "Deviation", "°", 0.1, "zn"),
    Line("intercept_worked", "Intercept", "nm", 0.15, "nm"),
    Line("fix_lat_worked", "Your fix: latitude", "′", 1.0, "deg"),
    Line("fix_lon_worked", "Your fix: longitude", "′", 1.0, "deg"),
)
LINE = {line.key: line for line in LINE_TABLE}
#: The lines, in order.
LINES = tuple(line.key for line in LINE_TABLE)
#: Each line's name in a sight book ("GHA increment", "Zn"): what cadets and instructors read.
LINE_NAMES = {line.key: line.name for line in LINE_TABLE}
#: Lines given in degrees and judged in arcminutes (every other angle line is a correction in
#: arcminutes, or Z, Zn, an amplitude, a compass error, a deviation or a bearing (N 0°, S 180°) in degrees).
DEGREE_LINES = tuple(line.key for line in LINE_TABLE if line.given_in == "deg")
#: The unit of each line's difference (given minus expected) and tolerance.
UNITS = {line.key: line.unit for line in LINE_TABLE}
#: How far a line may stand from what it should be and still be right, in its unit.
TOLERANCES = {line.key: line.tolerance for line in LINE_TABLE}
#: The Moon's Ho allows more: its tables are coarser and its parallax moves fastest.
MOON_HO_TOLERANCE_ARCMIN = 0.5

#: The methods the syllabus teaches, as a working names them (the `method` column), and what each is.
METHODS = {
    "intercept": "the intercept method (from an assumed position with the tables, or from the DR with a calculator)",
    "meridian": "latitude by meridian altitude",
    "ex-meridian": "latitude by ex-meridian altitude (reduction to the meridian)",
    "polaris": "latitude by Polaris",
    "amplitude": "compass error by amplitude",
    "azimuth": "compass error by azimuth",
}
#: The lines every working of a method must give.
REQUIRED = {
    "intercept": ("ho_worked", "zn_worked", "intercept_worked"),
    "meridian": ("ho_worked", "latitude_worked"),
    "ex-meridian": ("ho_worked", "latitude_worked"),
    "polaris": ("ho_worked", "latitude_worked"),
    "amplitude": ("compass_error_worked",),
    "azimuth": ("zn_worked", "compass_error_worked"),
}
#: The lines that finish a working of some method: a file of workings gives at least one of them.
FINAL_LINES = ("intercept_worked", "latitude_worked", "compass_error_worked")

#: The catalogue of the trade's classic mistakes (common practice), each recognised from the numbers.
CAUSES = {
    "zone sign": "zone description applied with the wrong sign",
    "greenwich date": "Greenwich date wrong (UTC crosses midnight)",
    "watch error": "watch error fast/slow reversed",
    "increment": "increment left out",
    "v sign": "v correction with the wrong sign",
    "d sign": "d correction with the wrong sign",
    "lha sign": "east longitude subtracted (or west added) for LHA",
    "ap lon": "assumed longitude does not make LHA a whole degree",
    "ap lat": "assumed latitude is not the whole degree nearest the DR",
    "zn rule": "Z-to-Zn rule misapplied for the hemisphere and LHA",
    "hc d sign": "Hc d-correction with the wrong sign",
    "dip added": "dip added instead of subtracted",
    "feet as metres": "height of eye in feet used as metres for the dip",
    "index on off": "index error on/off reversed",
    "sd sign": "semi-diameter applied with the wrong sign for the limb",
    "moon parallax": "the Moon's parallax (HP correction) left out",
    "upper limb": "the upper limb's 30′ not taken off (the Moon's two-part table)",
    "toward away": "TOWARD and AWAY swapped",
    "reduction sign": "reduction to the meridian taken off instead of added",
    "bearing name": "the body's bearing at meridian passage named the wrong way (it bears north when its "
                    "declination is north of your latitude)",
    "zenith name": "zenith distance named the wrong way (same names add, contrary names subtract)",
    "polaris degree": "the 1° of the Polaris tables not taken off",
    "amplitude name": "amplitude named or laid off from the wrong cardinal point",
    "error name": "compass error named the wrong way (compass least, error east)",
    "variation sign": "variation applied the wrong way for the deviation",
    "plotted away": "an intercept laid off the wrong way on the plot",
    "plotted from dr": "a line plotted from the DR instead of its assumed position",
}
#: At zone description ±12 the zone's sign reversed and the zone date kept give the same UTC.
ZONE_OR_DATE = ("zone description applied with the wrong sign, or the Greenwich date wrong "
                "(at ZD ±12 the two give the same UTC)")
RIGHT, WRONG, NOT_GIVEN = "right", "wrong", "not given"
#: A line given for a method it is not part of (a Zn beside a noon latitude): read, not judged.
NOT_JUDGED = "not part of this method"


def catalogue_cause(cause: str) -> str:
    """The catalogue's words of a cause, without the detail :meth:`Judge.name_cause` may add."""
    for words in CAUSES.values():
        if cause.startswith(words):
            return words
    return cause


def tenth(arcmin: ArrayLike) -> np.ndarray:
    """Arcminutes rounded to 0.1′, as the almanac and the tables print them (0.0, never minus nought)."""
    return np.round(np.asarray(arcmin, dtype=float), 1) + 0.0


@dataclass(frozen=True)
class SightsToMark:
    """The sights of the workings, one element per sight, as navred reads them from the log."""

    body: np.ndarray  # catalogue names
    limb: np.ndarray
    horizon: np.ndarray
    hs_deg: np.ndarray
    index_error_arcmin: np.ndarray
    eye_height_m: np.ndarray
    eye_height_ft: np.ndarray  # the height of eye as given in feet (NaN unless it was)
    temperature_c: np.ndarray
    pressure_hpa: np.ndarray
    utc: np.ndarray  # datetime64[ns]: the UTC the time working gives
    zone_description_h: np.ndarray  # NaN when the log gave UTC
    watch_error_s: np.ndarray  # the watch's error taken off, seconds (fast +)
    dr_lat_deg: np.ndarray
    dr_lon_deg: np.ndarray
    dut1_s: np.ndarray  # NaN: the IERS table
    #: the method of each working (a key of :data:`METHODS`; "" to tell it from the lines given)
    method: np.ndarray | None = None
    #: the compass bearing of the body (degrees) and the chart's variation (degrees, east +), for the
    #: compass methods; NaN where not given
    compass_bearing_deg: np.ndarray | None = None
    variation_deg: np.ndarray | None = None
    #: the round (fix group) of each sight ("" for none): the cadet's fix is judged from the round's lines
    fix_group: np.ndarray | None = None
    #: where the cadet named the round (False: a group of sights taken close together, made by the log's
    #: reader, which forms a round only where the cadet plotted a fix from it); None: every group named
    fix_group_given: np.ndarray | None = None


@dataclass
class Marks:
    """Every line of every working: what was given, what it should be, the verdict and the cause.

    ``given``, ``exact``, ``tabular`` and ``expected`` map each line to an array (one element per
    sight; the time line in datetime64, the rest in the units of :func:`navred.marking.mark`'s
    input; NaN where there is no value): ``exact`` is navred's exact value, ``tabular`` what the
    printed almanac and tables give, ``expected`` the accepted value nearest the cadet's.
    ``verdict`` and ``cause`` are (sights, lines) arrays of text, ``difference`` the given value
    minus the nearest accepted value, in the line's unit. Per sight: ``method`` (the method it was
    judged by), ``way`` (how: "from an AP by tables", "from the DR by calculator", ...),
    ``first_wrong_line`` and ``first_cause``; ``noticed`` (what an examiner would have wanted
    noticed although the arithmetic follows: "" when nothing), ``cost_nm`` (how far the slip puts the
    position line or latitude from where it should be near the DR, nautical miles, or a compass slip's miles
    off the track in a run) and ``cost_deg`` (how far it turns the position line, or how far off a course
    steered by the cadet's compass error or deviation is, degrees);
    ``fixes``: each fix group's fix from the cadet's own lines beside the fix they plotted.
    """

    lines: tuple[str, ...]
    given: dict[str, np.ndarray]
    exact: dict[str, np.ndarray]
    tabular: dict[str, np.ndarray]
    verdict: np.ndarray
    cause: np.ndarray
    difference: np.ndarray
    expected: dict[str, np.ndarray] = field(default_factory=dict)
    method: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    way: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    first_wrong_line: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    first_cause: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    noticed: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    cost_nm: np.ndarray = field(default_factory=lambda: np.zeros(0))
    cost_deg: np.ndarray = field(default_factory=lambda: np.zeros(0))
    #: each fix group's fix from the cadet's own lines and the fix they plotted (marking_checks.GroupFix)
    fixes: list = field(default_factory=list)

    def column(self, line: str) -> int:
        return self.lines.index(line)

    def refresh_first(self) -> None:
        """Recompute each sight's first wrong line and its cause from the verdicts."""
        wrong = self.verdict == WRONG
        first = np.where(wrong.any(axis=1), np.argmax(wrong, axis=1), -1)
        self.first_wrong_line = np.array([self.lines[f] if f >= 0 else "" for f in first.tolist()], dtype=object)
        self.first_cause = np.array([self.cause[i, f] if f >= 0 else "" for i, f in enumerate(first.tolist())],
                                    dtype=object)


def _as_array(value, n: int) -> np.ndarray:
    return np.array(np.broadcast_to(np.asarray(value, dtype=float), (n,)))


class Judge:
    """Each line's verdict, accepted values and cause, judged line by line (any order; the first wrong
    line is taken in :data:`LINES` order at the end).

    ``given`` maps line keys to the cadet's values in judging units (arcminutes for the lines of
    :data:`DEGREE_LINES`, degrees for Z, Zn and the compass lines, nautical miles for the intercept,
    seconds of arc for ``a``; the UTC in datetime64)."""

    def __init__(self, n: int, given: dict[str, np.ndarray]):
        self.n = n
        self.given = given
        self.exact: dict[str, np.ndarray] = {}
        self.tabular: dict[str, np.ndarray] = {}
        self.expected: dict[str, np.ndarray] = {}
        self.verdict = np.full((n, len(LINES)), NOT_GIVEN, dtype=object)
        self.cause = np.full((n, len(LINES)), "", dtype=object)
        self.difference = np.full((n, len(LINES)), np.nan)

    def has(self, line: str) -> np.ndarray:
        """Where the cadet gave the line."""
        value = self.given.get(line)
        if value is None:
            return np.zeros(self.n, dtype=bool)
        if np.issubdtype(np.asarray(value).dtype, np.datetime64):
            return ~np.isnat(value)
        return np.isfinite(np.asarray(value, dtype=float))

    def value(self, line: str, otherwise) -> np.ndarray:
        """The cadet's value of a line where given, else ``otherwise`` (carry-forward)."""
        otherwise = _as_array(otherwise, self.n)
        return np.where(self.has(line), self.given.get(line, otherwise), otherwise)

    def judge(self, line: str, exact, tabular=None, *, also: tuple = (), tolerance=None, angle: bool = False,
              causes: tuple[tuple, ...] = (), only=None) -> np.ndarray:
        """Judge a line: right within its tolerance of the exact value, the tables' value or any of ``also``
        (other accepted values); NaN where a value does not apply, and a line with no accepted value at
        all is not judged (not part of the sight's method). A wrong line is matched against ``causes``
        (each a key of :data:`CAUSES`, the value that mistake would give and, optionally, the right value
        the mistake was made on), first fit first; a wrong line's expected value is that right value where
        a cause names one, else the accepted value nearest the cadet's. ``angle``: differences wrap at 360°
        (in the line's judging unit). ``only``: judge these sights only (a method's; the others keep what
        another method gave them). Returns the mask of lines judged right."""
        k = LINES.index(line)
        n = self.n
        mask = np.ones(n, dtype=bool) if only is None else np.asarray(only, dtype=bool)
        exact_ = _as_array(exact, n)
        tab = np.full(n, np.nan) if tabular is None else _as_array(tabular, n)
        full_turn = 360.0 * (1.0 if LINE[line].given_in == "zn" else ARCMIN_PER_DEG)
        tol = _as_array(TOLERANCES[line] if tolerance is None else tolerance, n)
        given = self.has(line)
        value = np.asarray(self.given.get(line, np.full(n, np.nan)), dtype=float)

        def off(target):
            d = value - target
            return np.asarray(wrap_180(d * 360.0 / full_turn) * full_turn / 360.0 if angle else d)

        candidates = np.stack([exact_, tab, *(_as_array(a, n) for a in also)])
        offsets = np.where(np.isfinite(candidates), off(candidates), np.inf)
        offsets = np.where(np.isnan(offsets), np.inf, offsets)  # a line given as NaN is not given
        best = np.argmin(np.abs(offsets), axis=0)
        nearest = offsets[best, np.arange(n)]
        applies = np.isfinite(candidates).any(axis=0)
        first_finite = np.argmax(np.isfinite(candidates), axis=0)
        shown = np.where(given, candidates[best, np.arange(n)], candidates[first_finite, np.arange(n)])
        judged = given & applies & mask
        right = judged & (np.abs(nearest) <= tol + 1e-9)
        wrong = judged & ~right
        cause = np.full(n, "", dtype=object)
        for key, alternative, *intended in causes:
            alternative = _as_array(alternative, n)
            fits = wrong & (cause == "") & np.isfinite(alternative) & (np.abs(off(alternative)) <= tol + 1e-9)
            cause[fits] = CAUSES[key]
            if intended:  # the right value this mistake was made on: what the line should have been
                right_value = _as_array(intended[0], n)
                named = fits & np.isfinite(right_value)
                shown = np.where(named, right_value, shown)
                nearest = np.where(named, off(right_value), nearest)
        for store, new in ((self.exact, exact_), (self.tabular, tab), (self.expected, shown)):
            store[line] = np.where(mask, new, store.get(line, np.full(n, np.nan)))
        self.verdict[judged, k] = np.where(right[judged], RIGHT, WRONG)
        self.verdict[given & ~applies & mask, k] = NOT_JUDGED
        self.difference[judged, k] = nearest[judged]
        self.cause[wrong, k] = cause[wrong]
        return right

    def name_cause(self, line: str, mask: np.ndarray, key: str, detail: str = "") -> None:
        """Name ``key`` as the cause of the line where it is wrong under ``mask`` and has no cause yet;
        ``detail`` (which line of a round, say) follows the catalogue's words in brackets."""
        k = LINES.index(line)
        fits = (self.verdict[:, k] == WRONG) & (self.cause[:, k] == "") & mask
        words = CAUSES[key] if key in CAUSES else key
        self.cause[fits, k] = f"{words} ({detail})" if detail else words

    def missing(self, line: str, mask: np.ndarray, key: str) -> None:
        """Mark a line the working needed but left out (under ``mask``, where not given) wrong, with the cause."""
        k = LINES.index(line)
        absent = mask & ~self.has(line)
        self.verdict[absent, k] = WRONG
        self.cause[absent, k] = CAUSES[key] if key in CAUSES else key

    def clear_cause(self, line: str, mask: np.ndarray) -> None:
        self.cause[mask & (self.verdict[:, LINES.index(line)] == WRONG), LINES.index(line)] = ""


__all__ = ["Line", "LINE_TABLE", "LINE", "LINES", "LINE_NAMES", "DEGREE_LINES", "UNITS", "TOLERANCES", "METHODS",
           "REQUIRED", "FINAL_LINES", "CAUSES", "ZONE_OR_DATE", "RIGHT", "WRONG", "NOT_GIVEN", "NOT_JUDGED",
           "MOON_HO_TOLERANCE_ARCMIN", "SightsToMark", "Marks", "Judge", "tenth", "catalogue_cause"]
