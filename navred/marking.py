"""Marking a hand reduction: every line of a cadet's working recomputed, the first wrong one named with its cause.

A sight reduced by hand goes through the time working, the almanac (GHA and Dec at the
whole hour, the increment, the v and d corrections), the altitude corrections from Hs to Ho,
an assumed position that makes LHA and the latitude whole degrees, the sight reduction
tables (tabulated Hc, d and Z at whole-degree arguments, the d correction of Hc) and the
intercept. Each line of the working (:data:`LINES`) is recomputed here the way the cadet
should have done it *from the cadet's own earlier lines* (carry-forward: a slip is counted
once, where it happened), both exactly and as the printed almanac and tables give it
(tabulated to 0.1′ at whole-degree arguments, the published interpolation), and judged within
a tolerance that allows legitimate rounding (:data:`TOLERANCES`, docs/marking.md). A wrong line
is matched against the catalogue of the trade's classic mistakes (:data:`CAUSES`), each
recognised from the numbers; a wrong line that fits none is still named, with its expected
value and the difference.

Core code: arrays in, arrays out, one element per sight; vectorised (the bodies of a class
are worked together, no loop over sights).

Conventions of the working (common practice; the navigation manuals):

- UTC = zone time + zone description (ZD, hours, + west of Greenwich), after the watch's error
  is taken off (a watch fast reads late).
- GHA = GHA at the whole hour + increment (the body's base rate times the minutes and seconds:
  15° an hour for the Sun and planets, 14° 19.0′ for the Moon, 15° 02.46′ for Aries) + v
  correction (the Moon's and planets' excess over the base rate, v per hour times the part of
  the hour); a star's GHA is GHA Aries (hour and increment) + its SHA.
- Dec = Dec at the whole hour + d correction (d per hour times the part of the hour, signed
  as the declination moves).
- The printed v and d corrections are read for the whole minute, at its middle: v·(m + ½)/60
  rounded to 0.1′ (from memory).
- Assumed position: the latitude the whole degree nearest the DR; the longitude within 30′ of
  the DR that makes LHA = GHA + longitude (east +) a whole degree.
- Tables: Hc, d (the change of Hc for 1° of Dec, in ′) and Z at the whole LHA, the whole
  assumed latitude and the whole degrees of Dec; Hc = tabulated Hc + d × (minutes of Dec)/60.
- Zn from Z: north latitude, LHA over 180°: Zn = Z, under: Zn = 360° − Z; south latitude,
  LHA over 180°: Zn = 180° − Z, under: Zn = 180° + Z.
- Ho = Hs + IC + dip (Ha) + refraction + SD (+ lower limb, − upper) + parallax + additional
  (the phase of Venus and Mars); a combined main correction is refraction + SD + parallax.
- Intercept = 60 (Ho − Hc) nautical miles, TOWARD when Ho is the greater.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG
from .corrections import (
    DIP_ARCMIN_PER_SQRT_M,
    correct_altitudes,
    limb_sign,
    parallax_in_altitude_arcmin,
    planet_phases,
)
from .errors import NavredError
from .stars import SOLAR_SYSTEM
from .timescales import instants, instants_from_utc_jd
from .triangle import computed_altitude_azimuth

#: The lines of a hand working, in the order they are judged (the first wrong one is named).
LINES = (
    "utc_worked",
    "gha_hour_worked", "increment_worked", "v_corr_worked", "sha_worked", "gha_worked",
    "dec_hour_worked", "d_corr_worked", "dec_worked",
    "ic_worked", "dip_worked", "ha_worked", "refraction_worked", "sd_worked", "parallax_worked", "main_worked",
    "additional_worked", "ho_worked",
    "ap_lat", "ap_lon", "lha_worked",
    "tab_hc_worked", "tab_d_worked", "tab_z_worked", "hc_correction_worked", "hc_worked", "zn_worked",
    "intercept_worked",
)
#: The lines every working must give (the last three of the issue's list).
REQUIRED_LINES = ("zn_worked", "ho_worked", "intercept_worked")

#: Lines given in degrees (every other angle line is a correction, in arcminutes; the time is a
#: datetime64 UTC, the intercept nautical miles, + TOWARD).
DEGREE_LINES = ("gha_hour_worked", "sha_worked", "gha_worked", "dec_hour_worked", "dec_worked", "ha_worked",
                "ho_worked", "ap_lat", "ap_lon", "lha_worked", "tab_hc_worked", "hc_worked", "zn_worked",
                "tab_z_worked")
#: The unit of each line's difference (given minus expected) and tolerance: seconds for the time,
#: degrees for Zn and Z, nautical miles for the intercept, arcminutes for every other line.
UNITS = {line: "s" if line == "utc_worked" else "°" if line in ("zn_worked", "tab_z_worked")
         else "nm" if line == "intercept_worked" else "′" for line in LINES}

#: How far a line may stand from what it should be and still be right (in its unit: seconds for the
#: time, ° for Zn and Z, nautical miles for the intercept, ′ for the rest). Each allows the rounding
#: the printed almanac and tables carry (0.1′, and 0.1° for Z); docs/marking.md gives the reasons.
TOLERANCES = {
    "utc_worked": 1.0,
    "gha_hour_worked": 0.1, "increment_worked": 0.1, "v_corr_worked": 0.1, "sha_worked": 0.2, "gha_worked": 0.2,
    "dec_hour_worked": 0.1, "d_corr_worked": 0.1, "dec_worked": 0.2,
    "ic_worked": 0.05, "dip_worked": 0.1, "ha_worked": 0.1, "refraction_worked": 0.2, "sd_worked": 0.1,
    "parallax_worked": 0.2, "main_worked": 0.3, "additional_worked": 0.1, "ho_worked": 0.3,
    "ap_lat": 0.05, "ap_lon": 0.05, "lha_worked": 0.05,
    "tab_hc_worked": 0.1, "tab_d_worked": 0.1, "tab_z_worked": 0.1, "hc_correction_worked": 0.1,
    "hc_worked": 0.3, "zn_worked": 0.3, "intercept_worked": 0.15,
}
#: The Moon's altitude lines allow more: its tables are coarser and its parallax moves fastest.
MOON_HO_TOLERANCE_ARCMIN = 0.5

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
    "toward away": "TOWARD and AWAY swapped",
}
#: At zone description ±12 the zone's sign reversed and the zone date kept give the same UTC.
ZONE_OR_DATE = ("zone description applied with the wrong sign, or the Greenwich date wrong "
                "(at ZD ±12 the two give the same UTC)")
RIGHT, WRONG, NOT_GIVEN = "right", "wrong", "not given"

#: Base rates of the increment tables, degrees per hour (common practice; from memory): the Sun and
#: planets 15°, the Moon 14° 19.0′, Aries 15° 02.46′ (a sidereal day in 23 h 56 m 04.09 s).
BASE_RATE_DEG_PER_HOUR = {"sun": 15.0, "moon": 14.0 + 19.0 / 60.0, "aries": 15.0 + 2.46 / 60.0, "planet": 15.0}


def tenth(arcmin: ArrayLike) -> np.ndarray:
    """Arcminutes rounded to 0.1′, as the almanac and the tables print them."""
    return np.round(np.asarray(arcmin, dtype=float), 1)


def zn_from_z(z_deg: ArrayLike, lat_deg: ArrayLike, lha_deg: ArrayLike) -> np.ndarray:
    """True azimuth Zn from the tables' azimuth angle Z (0-180°), by the hemisphere and LHA (the rule above)."""
    z = np.asarray(z_deg, dtype=float)
    north = np.asarray(lat_deg, dtype=float) >= 0
    east = np.mod(np.asarray(lha_deg, dtype=float), 360.0) > 180.0  # LHA over 180°: the body is east
    return np.where(north, np.where(east, z, 360.0 - z), np.where(east, 180.0 - z, 180.0 + z)) % 360.0


def z_from_zn(zn_deg: ArrayLike, lat_deg: ArrayLike) -> np.ndarray:
    """The tables' azimuth angle Z (0-180°, from the elevated pole) of a true azimuth."""
    zn = np.mod(np.asarray(zn_deg, dtype=float), 360.0)
    north = np.asarray(lat_deg, dtype=float) >= 0
    return np.where(north, np.where(zn <= 180.0, zn, 360.0 - zn), np.where(zn <= 180.0, 180.0 - zn, zn - 180.0))


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


@dataclass
class Marks:
    """Every line of every working: what was given, what it should be, the verdict and the cause.

    ``given``, ``exact``, ``tabular`` map each line to an array (one element per sight; the time
    line in datetime64, the rest in the line's unit, see :data:`UNITS`; NaN where there is no
    value); ``verdict`` and ``cause`` are (sights, lines) arrays of text, ``difference`` the
    given value minus the nearer of the exact and tabular values, in the line's unit.
    """

    lines: tuple[str, ...]
    given: dict[str, np.ndarray]
    exact: dict[str, np.ndarray]
    tabular: dict[str, np.ndarray]
    verdict: np.ndarray
    cause: np.ndarray
    difference: np.ndarray
    first_wrong_line: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))
    first_cause: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=object))

    def column(self, line: str) -> int:
        return self.lines.index(line)


class _Judge:
    """Accumulates each line's verdict, expected values and cause, line by line in :data:`LINES` order."""

    def __init__(self, n: int, given: dict[str, np.ndarray]):
        self.n = n
        self.given = given
        self.exact: dict[str, np.ndarray] = {}
        self.tabular: dict[str, np.ndarray] = {}
        self.verdict = np.full((n, len(LINES)), NOT_GIVEN, dtype=object)
        self.cause = np.full((n, len(LINES)), "", dtype=object)
        self.difference = np.full((n, len(LINES)), np.nan)

    def has(self, line: str) -> np.ndarray:
        value = self.given.get(line)
        if value is None:
            return np.zeros(self.n, dtype=bool)
        if np.issubdtype(np.asarray(value).dtype, np.datetime64):
            return ~np.isnat(value)
        return np.isfinite(np.asarray(value, dtype=float))

    def value(self, line: str, otherwise: np.ndarray) -> np.ndarray:
        """The cadet's value of a line where given, else ``otherwise`` (carry-forward)."""
        return np.where(self.has(line), self.given.get(line, otherwise), otherwise)

    def judge(self, line: str, exact, tabular=None, tolerance=None, *, angle: bool = False,
              causes: tuple[tuple[str, np.ndarray], ...] = ()) -> np.ndarray:
        """Judge a line against its exact and (if any) tabular value; match a wrong one against ``causes``
        (each a catalogue key and the value that mistake would give). Returns the right mask."""
        k = LINES.index(line)
        exact = np.broadcast_to(np.asarray(exact, dtype=float), (self.n,))
        tab = None if tabular is None else np.broadcast_to(np.asarray(tabular, dtype=float), (self.n,))
        self.exact[line] = np.array(exact)
        self.tabular[line] = np.full(self.n, np.nan) if tab is None else np.array(tab)
        tol = np.broadcast_to(np.asarray(TOLERANCES[line] if tolerance is None else tolerance, dtype=float),
                              (self.n,))
        given = self.has(line)
        value = np.asarray(self.given.get(line, np.full(self.n, np.nan)), dtype=float)

        def off(target):
            d = value - target
            return np.asarray(wrap_180(d / ARCMIN_PER_DEG) * ARCMIN_PER_DEG if angle else d)

        d_exact = off(exact)
        d_tab = off(tab) if tab is not None else np.full(self.n, np.inf)
        nearer = np.where(np.abs(d_tab) < np.abs(d_exact), d_tab, d_exact)
        right = given & (np.minimum(np.abs(d_exact), np.abs(d_tab)) <= tol + 1e-9)
        wrong = given & ~right
        self.verdict[given, k] = np.where(right[given], RIGHT, WRONG)
        self.difference[given, k] = nearer[given]
        cause = np.full(self.n, "", dtype=object)
        for key, alternative in causes:
            alternative = np.broadcast_to(np.asarray(alternative, dtype=float), (self.n,))
            fits = wrong & (cause == "") & np.isfinite(alternative) & (np.abs(off(alternative)) <= tol + 1e-9)
            cause[fits] = CAUSES[key]
        self.cause[wrong, k] = cause[wrong]
        return right


def _hour_of(times: np.ndarray) -> np.ndarray:
    return times.astype("datetime64[h]").astype("datetime64[ns]")


def _kind_of(body: np.ndarray) -> np.ndarray:
    """'sun', 'moon', 'planet' or 'star' for each catalogue name."""
    solar = set(SOLAR_SYSTEM.values())
    return np.array(["sun" if b == "Sun" else "moon" if b == "Moon" else "planet" if b in solar else "star"
                     for b in body.tolist()], dtype=object)


def mark(sights: SightsToMark, given: dict[str, ArrayLike]) -> Marks:
    """Judge every line of every hand working (see the module's notes).

    ``given`` maps line names of :data:`LINES` to the cadet's values (``utc_worked`` as
    datetime64 UTC; the lines of :data:`DEGREE_LINES` in degrees; every correction (increment,
    v, d, IC, dip, refraction, SD, parallax, main, additional, the tables' d and the Hc
    correction) in arcminutes, signed as added; the intercept in nautical miles, + TOWARD); a
    missing line is absent or NaN/NaT.
    """
    n = len(sights.body)
    cadet = {k: (np.asarray(v, dtype="datetime64[ns]") if k == "utc_worked" else np.asarray(v, dtype=float))
             for k, v in given.items()}
    for line in DEGREE_LINES:  # every angle is judged in arcminutes
        if line in cadet:
            cadet[line] = cadet[line] * ARCMIN_PER_DEG
    unknown = set(cadet) - set(LINES)
    if unknown:
        raise NavredError(f"no such line of a working: {', '.join(sorted(unknown))}; the lines are {', '.join(LINES)}")
    j = _Judge(n, cadet)
    kind = _kind_of(np.asarray(sights.body, dtype=object))
    is_star = kind == "star"

    # --- the time ---------------------------------------------------------------------------
    expected_utc = np.asarray(sights.utc, dtype="datetime64[ns]")
    has_utc = j.has("utc_worked")
    worked_utc = cadet.get("utc_worked", np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]"))
    seconds = np.where(has_utc, (worked_utc - expected_utc).astype("timedelta64[ns]").astype(np.int64) / 1e9, np.nan)
    k = LINES.index("utc_worked")
    j.exact["utc_worked"], j.tabular["utc_worked"] = expected_utc, np.full(n, np.datetime64("NaT"), "datetime64[ns]")
    right_utc = has_utc & (np.abs(seconds) <= TOLERANCES["utc_worked"])
    wrong_utc = has_utc & ~right_utc
    j.verdict[has_utc, k] = np.where(right_utc[has_utc], RIGHT, WRONG)
    j.difference[has_utc, k] = seconds[has_utc]
    zone_s = np.nan_to_num(np.asarray(sights.zone_description_h, dtype=float)) * 3600.0
    watch_s = np.nan_to_num(np.asarray(sights.watch_error_s, dtype=float))
    cause = np.full(n, "", dtype=object)
    fitting = {}
    for key, shift, applies in (("zone sign", 2.0 * zone_s, zone_s != 0), ("greenwich date", 86400.0, True),
                                ("watch error", 2.0 * watch_s, watch_s != 0)):
        fitting[key] = wrong_utc & applies & (np.abs(np.abs(seconds) - np.abs(shift)) <= TOLERANCES["utc_worked"])
        cause[fitting[key] & (cause == "")] = CAUSES[key]
    # at ZD ±12 the two mistakes give the same UTC: both are named
    both = fitting["zone sign"] & fitting["greenwich date"]
    cause[both] = ZONE_OR_DATE
    j.cause[wrong_utc, k] = cause[wrong_utc]
    t = np.where(has_utc, worked_utc, expected_utc)  # carry-forward: the cadet's UTC

    # --- the almanac at the cadet's UTC, at its whole hour and the next -----------------------
    hour = _hour_of(t)
    minutes_past = (t - hour).astype("timedelta64[ns]").astype(np.int64) / 6e10
    fraction = minutes_past / 60.0
    middle_of_minute = (np.floor(minutes_past) + 0.5) / 60.0  # the printed v and d tables (see notes)
    dut1 = np.asarray(sights.dut1_s, dtype=float)
    stacked = instants(np.concatenate([t, hour, hour + np.timedelta64(3600, "s")]))
    if np.isfinite(dut1).any():  # DUT1 from a radio signal where the log gives it, else the IERS table
        stacked = instants_from_utc_jd(stacked.utc1, stacked.utc2, np.concatenate([dut1] * 3))
    names = np.concatenate([sights.body] * 3)
    almanac = places(names, stacked)
    gha_all, dec_all = almanac.gha_deg.reshape(3, n), almanac.dec_deg.reshape(3, n)
    aries_all = almanac.gha_aries_deg.reshape(3, n)
    sha_t = almanac.sha_deg.reshape(3, n)[0]
    sd_t, hp_t = almanac.sd_arcmin.reshape(3, n)[0], almanac.hp_arcmin.reshape(3, n)[0]
    gha_t, gha_h, gha_next = gha_all
    dec_t, dec_h, dec_next = dec_all
    base = np.array([BASE_RATE_DEG_PER_HOUR["aries" if s else k_] for s, k_ in zip(is_star.tolist(), kind.tolist())])
    hour_gha = np.where(is_star, aries_all[1], gha_h)  # the tabulated hour value: Aries for a star
    next_gha = np.where(is_star, aries_all[2], gha_next)
    increment_exact = base * fraction * ARCMIN_PER_DEG
    v_rate = np.where(is_star | (kind == "sun"), 0.0,
                      (wrap_180(next_gha - hour_gha - base) * ARCMIN_PER_DEG))  # ′ an hour
    v_exact = np.where(is_star, 0.0, wrap_180(gha_t - hour_gha - base * fraction) * ARCMIN_PER_DEG)
    d_rate = (dec_next - dec_h) * ARCMIN_PER_DEG
    d_exact = (dec_t - dec_h) * ARCMIN_PER_DEG

    hour_tab = tenth(hour_gha * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    j.judge("gha_hour_worked", hour_gha * ARCMIN_PER_DEG, hour_tab * ARCMIN_PER_DEG, angle=True)
    increment_tab = tenth(increment_exact)
    j.judge("increment_worked", increment_exact, increment_tab)
    v_tab = tenth(tenth(v_rate) * middle_of_minute)
    j.judge("v_corr_worked", v_exact, v_tab, causes=(("v sign", -v_exact), ("v sign", -v_tab)))
    sha_tab = tenth(sha_t * ARCMIN_PER_DEG)
    j.judge("sha_worked", np.where(is_star, sha_t * ARCMIN_PER_DEG, np.nan),
            np.where(is_star, sha_tab, np.nan), angle=True)
    # GHA from the cadet's own parts where given (each judged above), else from the almanac
    parts = (j.value("gha_hour_worked", hour_tab * ARCMIN_PER_DEG) + j.value("increment_worked", increment_tab)
             + np.where(is_star, j.value("sha_worked", sha_tab), j.value("v_corr_worked", v_tab)))
    gha_tab = wrap_360(parts / ARCMIN_PER_DEG)
    own_parts = j.has("gha_hour_worked") | j.has("increment_worked") | j.has("v_corr_worked") | j.has("sha_worked")
    gha_expected = np.where(own_parts, gha_tab, gha_t)
    right_gha = j.judge("gha_worked", gha_expected * ARCMIN_PER_DEG, gha_tab * ARCMIN_PER_DEG, angle=True, causes=(
        ("increment", (gha_expected * ARCMIN_PER_DEG - increment_exact)),
        ("increment", (gha_tab * ARCMIN_PER_DEG - increment_tab)),
        ("v sign", gha_expected * ARCMIN_PER_DEG - 2.0 * v_exact),
        ("v sign", gha_tab * ARCMIN_PER_DEG - 2.0 * v_tab)))
    del right_gha
    gha_c = j.value("gha_worked", gha_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG

    dec_hour_tab = tenth(dec_h * ARCMIN_PER_DEG)
    j.judge("dec_hour_worked", dec_h * ARCMIN_PER_DEG, dec_hour_tab)
    d_tab = tenth(tenth(d_rate) * middle_of_minute)
    j.judge("d_corr_worked", d_exact, d_tab, causes=(("d sign", -d_exact), ("d sign", -d_tab)))
    own_dec = j.has("dec_hour_worked") | j.has("d_corr_worked")
    dec_tab = j.value("dec_hour_worked", dec_hour_tab) + j.value("d_corr_worked", d_tab)
    dec_expected = np.where(own_dec, dec_tab, dec_t * ARCMIN_PER_DEG)
    j.judge("dec_worked", dec_expected, dec_tab, causes=(("d sign", dec_expected - 2.0 * d_exact),
                                                         ("d sign", dec_tab - 2.0 * d_tab)))
    dec_c = j.value("dec_worked", dec_expected) / ARCMIN_PER_DEG

    # --- Hs to Ho, with the almanac's SD and HP at the cadet's UTC ------------------------------
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    hc_dr, zn_dr = computed_altitude_azimuth(lat_dr, lon_dr, gha_c, dec_c)
    limb = np.where(np.asarray(sights.limb, dtype=object) == "", "centre", sights.limb)
    _, phase = planet_phases(np.asarray(sights.body, dtype=object), t, lat_dr, lon_dr, hc_dr, zn_dr)
    working = correct_altitudes(
        sights.hs_deg, index_error_arcmin=sights.index_error_arcmin, eye_height_m=sights.eye_height_m,
        horizon=sights.horizon, temperature_c=sights.temperature_c, pressure_hpa=sights.pressure_hpa,
        limb=limb, sd_arcmin=sd_t, hp_arcmin=hp_t, augment_sd=kind == "moon", lat_deg=lat_dr, zn_deg=zn_dr,
        phase_arcmin=phase)
    hs = np.asarray(sights.hs_deg, dtype=float) * ARCMIN_PER_DEG
    ic = np.asarray(working.ic_arcmin, dtype=float)
    j.judge("ic_worked", ic, causes=(("index on off", -ic),))
    dip = np.asarray(working.dip_arcmin, dtype=float) + np.asarray(working.horizon_arcmin, dtype=float)
    feet = np.asarray(sights.eye_height_ft, dtype=float)
    dip_feet_as_metres = np.where(np.isfinite(feet), -DIP_ARCMIN_PER_SQRT_M * np.sqrt(np.abs(feet)), np.nan)
    j.judge("dip_worked", dip, causes=(("dip added", -dip), ("feet as metres", dip_feet_as_metres)))
    ic_c, dip_c = j.value("ic_worked", ic), j.value("dip_worked", dip)
    ha_expected = hs + ic_c + dip_c
    j.judge("ha_worked", ha_expected)
    refraction = np.asarray(working.refraction_arcmin, dtype=float)
    sd = np.asarray(working.sd_arcmin, dtype=float)
    parallax = np.asarray(working.parallax_arcmin, dtype=float)
    # as the tables give them: the daily page's (geocentric) SD, unaugmented, and the spherical parallax
    # HP cos h at the altitude of the centre (the almanac's tables leave out the Earth's flattening)
    sd_tab = np.where(np.isfinite(sd), limb_sign(limb) * np.nan_to_num(sd_t), np.nan)
    centre_deg = (np.asarray(working.ha_deg, dtype=float) * ARCMIN_PER_DEG + refraction + sd) / ARCMIN_PER_DEG
    parallax_tab = np.where(np.nan_to_num(hp_t) > 0, parallax_in_altitude_arcmin(centre_deg, np.nan_to_num(hp_t)), 0.0)
    j.judge("refraction_worked", refraction, tenth(refraction))
    j.judge("sd_worked", sd, sd_tab, causes=(("sd sign", -sd), ("sd sign", -sd_tab)))
    moon = kind == "moon"
    j.judge("parallax_worked", parallax, parallax_tab,
            causes=(("moon parallax", np.where(moon, 0.0, np.nan)),))
    main = refraction + sd + parallax
    main_tab = refraction + sd_tab + parallax_tab
    # with the SD's sign reversed the centre stands 2 SD lower or higher, and so does the parallax's altitude
    parallax_flipped = np.where(np.nan_to_num(hp_t) > 0, parallax_in_altitude_arcmin(
        centre_deg - 2.0 * sd / ARCMIN_PER_DEG, np.nan_to_num(hp_t)), 0.0)
    sd_flipped = -2.0 * sd + parallax_flipped - parallax_tab  # the change of SD + parallax, tables' way
    j.judge("main_worked", main, main_tab, causes=(
        ("sd sign", main - 2.0 * sd), ("sd sign", main_tab - 2.0 * sd_tab),
        ("sd sign", main + sd_flipped), ("sd sign", main_tab - 2.0 * sd_tab + parallax_flipped - parallax_tab),
        ("moon parallax", np.where(moon, main - parallax, np.nan)),
        ("moon parallax", np.where(moon, main_tab - parallax_tab, np.nan))))
    additional = np.asarray(working.phase_arcmin, dtype=float)
    j.judge("additional_worked", additional)
    own_main = j.has("main_worked")
    ha_c = j.value("ha_worked", ha_expected)

    def altitude_lines(refraction_, sd_, parallax_, main_):
        return ha_c + j.value("additional_worked", additional) + np.where(
            own_main, j.value("main_worked", main_),
            j.value("refraction_worked", refraction_) + j.value("sd_worked", sd_) + j.value("parallax_worked", parallax_))

    ho_expected = altitude_lines(refraction, sd, parallax, main)
    ho_tab = altitude_lines(tenth(refraction), tenth(sd_tab), tenth(parallax_tab), tenth(main_tab))
    ho_tolerance = np.where(moon, MOON_HO_TOLERANCE_ARCMIN, TOLERANCES["ho_worked"])
    j.judge("ho_worked", ho_expected, ho_tab, ho_tolerance, causes=(
        ("dip added", ho_expected - 2.0 * dip),
        ("feet as metres", ho_expected - dip + dip_feet_as_metres),
        ("index on off", ho_expected - 2.0 * ic),
        ("sd sign", ho_expected - 2.0 * sd),
        ("sd sign", ho_tab - 2.0 * sd_tab),
        ("sd sign", ho_expected + sd_flipped),
        ("sd sign", ho_tab - 2.0 * sd_tab + parallax_flipped - parallax_tab),
        ("moon parallax", np.where(moon, ho_expected - parallax, np.nan)),
        ("moon parallax", np.where(moon, ho_tab - parallax_tab, np.nan))))
    ho_c = j.value("ho_worked", ho_expected)

    # --- the assumed position and LHA ---------------------------------------------------------
    ap_lat_expected = np.round(lat_dr)
    j.judge("ap_lat", ap_lat_expected * ARCMIN_PER_DEG, causes=())
    k = LINES.index("ap_lat")
    wrong = j.verdict[:, k] == WRONG
    j.cause[wrong, k] = CAUSES["ap lat"]
    lat_c = j.value("ap_lat", ap_lat_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    dr_lon = np.asarray(sights.dr_lon_deg, dtype=float)
    ap_lon_expected = wrap_180(np.round(gha_c + dr_lon) - gha_c)
    j.judge("ap_lon", ap_lon_expected * ARCMIN_PER_DEG, angle=True)
    k = LINES.index("ap_lon")
    given_lon = np.asarray(cadet.get("ap_lon", np.full(n, np.nan)), dtype=float) / ARCMIN_PER_DEG
    lha_whole = np.abs(wrap_180(gha_c + given_lon - np.round(gha_c + given_lon))) * ARCMIN_PER_DEG <= 0.05
    # an AP longitude that makes GHA − longitude whole was chosen for LHA with the longitude's sign reversed
    reversed_whole = np.abs(wrap_180(gha_c - given_lon - np.round(gha_c - given_lon))) * ARCMIN_PER_DEG <= 0.05
    wrong_lon = j.verdict[:, k] == WRONG
    j.cause[wrong_lon & ~lha_whole & reversed_whole, k] = CAUSES["lha sign"]
    j.cause[wrong_lon & ~lha_whole & ~reversed_whole, k] = CAUSES["ap lon"]
    lon_c = j.value("ap_lon", ap_lon_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    lha_expected = wrap_360(gha_c + lon_c)
    j.judge("lha_worked", lha_expected * ARCMIN_PER_DEG, angle=True,
            causes=(("lha sign", wrap_360(gha_c - lon_c) * ARCMIN_PER_DEG),))
    lha_c = j.value("lha_worked", lha_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG

    # --- the tables, Hc and Zn ----------------------------------------------------------------
    whole_dec = np.sign(dec_c) * np.floor(np.abs(dec_c))
    step = np.where(dec_c >= 0, 1.0, -1.0)
    hc_whole, zn_whole = computed_altitude_azimuth(lat_c, 0.0, lha_c, whole_dec)
    hc_next, _ = computed_altitude_azimuth(lat_c, 0.0, lha_c, np.clip(whole_dec + step, -90.0, 90.0))
    tab_hc = tenth(hc_whole * ARCMIN_PER_DEG)
    tab_d = tenth((hc_next - hc_whole) * ARCMIN_PER_DEG)
    tab_z = np.round(z_from_zn(zn_whole, lat_c), 1)
    j.judge("tab_hc_worked", hc_whole * ARCMIN_PER_DEG, tab_hc)
    j.judge("tab_d_worked", (hc_next - hc_whole) * ARCMIN_PER_DEG, tab_d)
    j.judge("tab_z_worked", z_from_zn(zn_whole, lat_c) * ARCMIN_PER_DEG, tab_z * ARCMIN_PER_DEG,
            TOLERANCES["tab_z_worked"] * ARCMIN_PER_DEG)
    dec_minutes = np.abs(dec_c - whole_dec) * ARCMIN_PER_DEG
    hc_exact, zn_exact = computed_altitude_azimuth(lat_c, 0.0, lha_c, dec_c)
    correction_exact = (hc_exact - hc_whole) * ARCMIN_PER_DEG
    correction_tab = tenth(j.value("tab_d_worked", tab_d) * dec_minutes / ARCMIN_PER_DEG)
    j.judge("hc_correction_worked", correction_exact, correction_tab,
            causes=(("hc d sign", -correction_tab), ("hc d sign", -correction_exact)))
    own_tables = j.has("tab_hc_worked") | j.has("hc_correction_worked")
    hc_tab = j.value("tab_hc_worked", tab_hc) + j.value("hc_correction_worked", correction_tab)
    hc_expected = np.where(own_tables, hc_tab, hc_exact * ARCMIN_PER_DEG)
    j.judge("hc_worked", hc_expected, hc_tab, angle=False, causes=(
        ("hc d sign", hc_expected - 2.0 * j.value("hc_correction_worked", correction_tab)),
        ("hc d sign", hc_exact * ARCMIN_PER_DEG - 2.0 * correction_exact)))
    hc_c = j.value("hc_worked", hc_expected)
    z_c = j.value("tab_z_worked", z_from_zn(zn_exact, lat_c) * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    north = lat_c >= 0
    wrong_rules = [np.where(north, z_c, 180.0 - z_c), np.where(north, 360.0 - z_c, 180.0 + z_c),
                   np.where(north, 180.0 - z_c, z_c), np.where(north, 180.0 + z_c, 360.0 - z_c)]
    zn_expected = np.where(j.has("tab_z_worked"), zn_from_z(z_c, lat_c, lha_c), zn_exact)
    zn_tab = np.where(j.has("tab_z_worked"), zn_expected, zn_from_z(tab_z, lat_c, lha_c))
    alternatives = tuple(("zn rule", np.where(np.abs(wrap_180(rule - zn_expected)) > TOLERANCES["zn_worked"],
                                              rule % 360.0, np.nan)) for rule in wrong_rules)
    j.judge("zn_worked", zn_expected * ARCMIN_PER_DEG, zn_tab * ARCMIN_PER_DEG, tolerance=TOLERANCES["zn_worked"] * ARCMIN_PER_DEG,
            angle=True, causes=tuple((key, alt * ARCMIN_PER_DEG) for key, alt in alternatives))

    # --- the intercept ------------------------------------------------------------------------
    intercept_expected = ho_c - hc_c
    # a cadet who gave Hc or Ho without its parts may have taken either from the tables
    intercept_tab = np.where(j.has("hc_worked"), ho_c, j.value("ho_worked", ho_tab)) - \
        np.where(j.has("hc_worked"), hc_c, hc_tab)
    j.judge("intercept_worked", intercept_expected, intercept_tab,
            causes=(("toward away", -intercept_expected), ("toward away", -intercept_tab)))
    k = LINES.index("intercept_worked")
    swapped = (j.verdict[:, k] == WRONG) & (np.abs(intercept_expected) <= TOLERANCES["intercept_worked"])
    j.cause[swapped, k] = ""  # a zero intercept has no direction to swap

    # back to the units the lines are written in: degrees for the angle lines, and for Zn and Z their
    # differences too (every other difference stays in arcminutes)
    given_out = {line: cadet.get(line, _missing(line, n)) for line in LINES}
    for line in DEGREE_LINES:
        given_out[line] = given_out[line] / ARCMIN_PER_DEG
        j.exact[line] = j.exact[line] / ARCMIN_PER_DEG
        j.tabular[line] = j.tabular[line] / ARCMIN_PER_DEG
    for line in ("zn_worked", "tab_z_worked"):
        j.difference[:, LINES.index(line)] /= ARCMIN_PER_DEG
    marks = Marks(LINES, given_out, j.exact, j.tabular, j.verdict, j.cause, j.difference)
    wrong = marks.verdict == WRONG
    first = np.where(wrong.any(axis=1), np.argmax(wrong, axis=1), -1)
    marks.first_wrong_line = np.array([LINES[f] if f >= 0 else "" for f in first.tolist()], dtype=object)
    marks.first_cause = np.array([marks.cause[i, f] if f >= 0 else "" for i, f in enumerate(first.tolist())],
                                 dtype=object)
    return marks


def _missing(line: str, n: int) -> np.ndarray:
    return np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]") if line == "utc_worked" else np.full(n, np.nan)


__all__ = ["LINES", "REQUIRED_LINES", "DEGREE_LINES", "TOLERANCES", "CAUSES", "UNITS", "SightsToMark", "Marks", "mark", "zn_from_z",
           "z_from_zn", "tenth", "BASE_RATE_DEG_PER_HOUR", "RIGHT", "WRONG", "NOT_GIVEN"]
