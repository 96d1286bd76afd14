"""The lines every method shares, judged from the cadet's own earlier lines: the time, the almanac, Hs to Ho.

Core code (numpy, ERFA through the almanac). Conventions of the working (common practice; the
navigation manuals):

- UTC = zone time + zone description (ZD, hours, + west of Greenwich), after the watch's error
  is taken off (a watch fast reads late).
- GHA = GHA at the whole hour + increment (the body's base rate times the minutes and seconds:
  15° an hour for the Sun and planets, 14° 19.0′ for the Moon, 15° 02.46′ for Aries) + v
  correction (the Moon's and planets' excess over the base rate, v per hour times the part of
  the hour); a star's GHA is GHA Aries (hour and increment) + its SHA. For Polaris worked by the
  Polaris tables, the GHA line is GHA Aries (the tables are entered with LHA Aries).
- Dec = Dec at the whole hour + d correction (d per hour times the part of the hour, signed
  as the declination moves).
- The printed v and d corrections are read for the whole minute, at its middle: v·(m + ½)/60
  rounded to 0.1′ (from memory).
- Ho = Hs + IC + dip (Ha) + refraction + SD (+ lower limb, − upper) + parallax + additional
  (the phase of Venus and Mars); a combined main correction is refraction + SD + parallax. The
  Moon worked with the two-part table: Ha + first (main) correction + HP correction (− 30′ for the
  upper limb), the first correction the table's for the lower limb at a horizontal parallax of
  54.0′ (refraction, its semi-diameter and parallax), the HP correction what the day's HP adds
  (the almanac's Moon tables, from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .almanac import places
from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, SECONDS_PER_DAY, SECONDS_PER_HOUR
from .corrections import (
    DIP_ARCMIN_PER_SQRT_M,
    correct_altitudes,
    limb_sign,
    parallax_in_altitude_arcmin,
    planet_phases,
    refraction_correction_arcmin,
)
from .handtables import INCREMENT_RATE_DEG_PER_HOUR, hourly_d_arcmin, hourly_v_arcmin
from .marking_judge import (
    CAUSES,
    LINES,
    MOON_HO_TOLERANCE_ARCMIN,
    RIGHT,
    TOLERANCES,
    WRONG,
    ZONE_OR_DATE,
    Judge,
    SightsToMark,
    tenth,
)
from .stars import SOLAR_SYSTEM
from .timescales import instants, instants_from_utc_jd
from .triangle import computed_altitude_azimuth

#: Base rates of the increment tables, degrees per hour (navred.handtables, where v is defined on them)
BASE_RATE_DEG_PER_HOUR = INCREMENT_RATE_DEG_PER_HOUR
#: The Moon's two-part altitude table (from memory): the first correction is worked for the lower limb at
#: a standard horizontal parallax of 54.0′, the semi-diameter 0.2724 HP (the Moon's radius over the
#: Earth's equatorial radius, 1737.4 / 6378.137, IAU), and the upper limb takes off 30′ besides.
MOON_TABLE_HP_ARCMIN = 54.0
MOON_SD_PER_HP = 1737.4 / 6378.137
MOON_UPPER_LIMB_ARCMIN = -30.0


def kind_of(body: np.ndarray) -> np.ndarray:
    """'sun', 'moon', 'planet' or 'star' for each catalogue name."""
    solar = set(SOLAR_SYSTEM.values())
    return np.array(["sun" if b == "Sun" else "moon" if b == "Moon" else "planet" if b in solar else "star"
                     for b in np.asarray(body, dtype=object).tolist()], dtype=object)


@dataclass
class Sky:
    """The almanac behind a sight: at the cadet's UTC (and its whole hour and the next) for the lines,
    and at the log's UTC for what the sight truly was (its visibility, the cost of a slip)."""

    t: np.ndarray  # the cadet's UTC (carried forward), datetime64[ns]
    fraction: np.ndarray  # the part of the hour past the whole hour
    middle_of_minute: np.ndarray  # (m + ½)/60: where the printed v and d tables are read
    gha_t: np.ndarray
    gha_hour: np.ndarray
    gha_next: np.ndarray
    dec_t: np.ndarray
    dec_hour: np.ndarray
    dec_next: np.ndarray
    aries_t: np.ndarray
    aries_hour: np.ndarray
    aries_next: np.ndarray
    sha_t: np.ndarray
    sd_arcmin: np.ndarray
    hp_arcmin: np.ndarray
    true_gha: np.ndarray  # at the log's UTC
    true_dec: np.ndarray
    sun_gha: np.ndarray  # the Sun at the log's UTC
    sun_dec: np.ndarray


def time_lines(j: Judge, sights: SightsToMark) -> np.ndarray:
    """Judge the UTC line and return the UTC carried forward (the cadet's where given)."""
    n = j.n
    expected_utc = np.asarray(sights.utc, dtype="datetime64[ns]")
    has_utc = j.has("utc_worked")
    worked_utc = j.given.get("utc_worked", np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]"))
    seconds = np.where(has_utc, (worked_utc - expected_utc).astype("timedelta64[ns]").astype(np.int64) / 1e9, np.nan)
    k = LINES.index("utc_worked")
    j.exact["utc_worked"] = j.expected["utc_worked"] = expected_utc
    j.tabular["utc_worked"] = np.full(n, np.datetime64("NaT"), "datetime64[ns]")
    right_utc = has_utc & (np.abs(seconds) <= TOLERANCES["utc_worked"])
    wrong_utc = has_utc & ~right_utc
    j.verdict[has_utc, k] = np.where(right_utc[has_utc], RIGHT, WRONG)
    j.difference[has_utc, k] = seconds[has_utc]
    zone_s = np.nan_to_num(np.asarray(sights.zone_description_h, dtype=float)) * SECONDS_PER_HOUR
    watch_s = np.nan_to_num(np.asarray(sights.watch_error_s, dtype=float))
    cause = np.full(n, "", dtype=object)
    fitting = {}
    for key, shift, applies in (("zone sign", 2.0 * zone_s, zone_s != 0), ("greenwich date", SECONDS_PER_DAY, True),
                                ("watch error", 2.0 * watch_s, watch_s != 0)):
        fitting[key] = wrong_utc & applies & (np.abs(np.abs(seconds) - np.abs(shift)) <= TOLERANCES["utc_worked"])
        cause[fitting[key] & (cause == "")] = CAUSES[key]
    cause[fitting["zone sign"] & fitting["greenwich date"]] = ZONE_OR_DATE  # at ZD ±12 both give the same UTC
    j.cause[wrong_utc, k] = cause[wrong_utc]
    return np.where(has_utc, worked_utc, expected_utc)


def sky_of(sights: SightsToMark, t: np.ndarray) -> Sky:
    """navred's almanac at the cadet's UTC, its whole hour and the next, and at the log's UTC (the body
    and the Sun), in one call."""
    n = len(t)
    true_t = np.asarray(sights.utc, dtype="datetime64[ns]")
    hour = t.astype("datetime64[h]").astype("datetime64[ns]")
    minutes_past = (t - hour).astype("timedelta64[ns]").astype(np.int64) / 6e10
    stacked = instants(np.concatenate([t, hour, hour + np.timedelta64(3600, "s"), true_t, true_t]))
    dut1 = np.asarray(sights.dut1_s, dtype=float)
    if np.isfinite(dut1).any():  # DUT1 from a radio signal where the log gives it, else the IERS table
        stacked = instants_from_utc_jd(stacked.utc1, stacked.utc2, np.concatenate([dut1] * 5))
    names = np.concatenate([np.asarray(sights.body, dtype=object)] * 4 + [np.full(n, "Sun", dtype=object)])
    almanac = places(names, stacked)
    gha = almanac.gha_deg.reshape(5, n)
    dec = almanac.dec_deg.reshape(5, n)
    aries = almanac.gha_aries_deg.reshape(5, n)
    return Sky(t=t, fraction=minutes_past / 60.0, middle_of_minute=(np.floor(minutes_past) + 0.5) / 60.0,
               gha_t=gha[0], gha_hour=gha[1], gha_next=gha[2], dec_t=dec[0], dec_hour=dec[1], dec_next=dec[2],
               aries_t=aries[0], aries_hour=aries[1], aries_next=aries[2],
               sha_t=almanac.sha_deg.reshape(5, n)[0], sd_arcmin=almanac.sd_arcmin.reshape(5, n)[0],
               hp_arcmin=almanac.hp_arcmin.reshape(5, n)[0], true_gha=gha[3], true_dec=dec[3], sun_gha=gha[4],
               sun_dec=dec[4])


@dataclass
class Places:
    """GHA and Dec (degrees) as the cadet carries them forward (their own lines where given, else the
    almanac's exact values), and as the printed almanac gives them (their own lines where given)."""

    gha_deg: np.ndarray
    dec_deg: np.ndarray
    gha_tab_deg: np.ndarray
    dec_tab_deg: np.ndarray


def almanac_lines(j: Judge, sky: Sky, kind: np.ndarray, aries_only: np.ndarray) -> Places:
    """Judge the GHA and Dec lines; return GHA and Dec (degrees) carried forward.

    ``aries_only``: the GHA line is GHA Aries (Polaris by its tables)."""
    is_star = kind == "star"
    by_aries = is_star | aries_only
    base = np.array([BASE_RATE_DEG_PER_HOUR["aries" if s else k_] for s, k_ in zip(by_aries.tolist(), kind.tolist())])
    hour_gha = np.where(by_aries, sky.aries_hour, sky.gha_hour)  # the tabulated hour value: Aries for a star
    next_gha = np.where(by_aries, sky.aries_next, sky.gha_next)
    at_t = np.where(aries_only, sky.aries_t, sky.gha_t)
    increment_exact = base * sky.fraction * ARCMIN_PER_DEG
    v_rate = np.where(by_aries | (kind == "sun"), 0.0, hourly_v_arcmin(hour_gha, next_gha, base))
    v_exact = np.where(by_aries, 0.0, wrap_180(sky.gha_t - hour_gha - base * sky.fraction) * ARCMIN_PER_DEG)
    d_rate = hourly_d_arcmin(sky.dec_hour, sky.dec_next)
    d_exact = (sky.dec_t - sky.dec_hour) * ARCMIN_PER_DEG

    hour_tab = tenth(hour_gha * ARCMIN_PER_DEG)
    j.judge("gha_hour_worked", hour_gha * ARCMIN_PER_DEG, hour_tab, angle=True)
    increment_tab = tenth(increment_exact)
    j.judge("increment_worked", increment_exact, increment_tab)
    v_tab = tenth(tenth(v_rate) * sky.middle_of_minute)
    star_or_sun = by_aries | (kind == "sun")
    j.judge("v_corr_worked", np.where(star_or_sun, np.nan, v_exact), np.where(star_or_sun, np.nan, v_tab),
            causes=(("v sign", -v_exact), ("v sign", -v_tab)))
    sha_tab = tenth(sky.sha_t * ARCMIN_PER_DEG)
    star = is_star & ~aries_only
    j.judge("sha_worked", np.where(star, sky.sha_t * ARCMIN_PER_DEG, np.nan), np.where(star, sha_tab, np.nan),
            angle=True)
    # GHA from the cadet's own parts where given (each judged above), else from the almanac
    third = np.where(star, j.value("sha_worked", sha_tab), np.where(aries_only, 0.0, j.value("v_corr_worked", v_tab)))
    parts = j.value("gha_hour_worked", hour_tab) + j.value("increment_worked", increment_tab) + third
    gha_tab = wrap_360(parts / ARCMIN_PER_DEG)
    own_parts = j.has("gha_hour_worked") | j.has("increment_worked") | j.has("v_corr_worked") | j.has("sha_worked")
    gha_expected = np.where(own_parts, gha_tab, at_t) * ARCMIN_PER_DEG
    # the right GHA is right too, whatever a slip in a part of it (the slip is that part's)
    gha_true_tab = wrap_360((hour_tab + increment_tab + np.where(star, sha_tab, np.where(aries_only, 0.0, v_tab)))
                            / ARCMIN_PER_DEG) * ARCMIN_PER_DEG
    j.judge("gha_worked", gha_expected, gha_tab * ARCMIN_PER_DEG, angle=True,
            also=(at_t * ARCMIN_PER_DEG, gha_true_tab), causes=(
        ("increment", gha_expected - increment_exact), ("increment", gha_tab * ARCMIN_PER_DEG - increment_tab),
        ("v sign", gha_expected - 2.0 * v_exact), ("v sign", gha_tab * ARCMIN_PER_DEG - 2.0 * v_tab)))
    gha_c = j.value("gha_worked", gha_expected) / ARCMIN_PER_DEG

    dec_hour_tab = tenth(sky.dec_hour * ARCMIN_PER_DEG)
    j.judge("dec_hour_worked", sky.dec_hour * ARCMIN_PER_DEG, dec_hour_tab)
    d_tab = tenth(tenth(d_rate) * sky.middle_of_minute)
    j.judge("d_corr_worked", d_exact, d_tab, causes=(("d sign", -d_exact), ("d sign", -d_tab)))
    own_dec = j.has("dec_hour_worked") | j.has("d_corr_worked")
    dec_tab = j.value("dec_hour_worked", dec_hour_tab) + j.value("d_corr_worked", d_tab)
    dec_expected = np.where(own_dec, dec_tab, sky.dec_t * ARCMIN_PER_DEG)
    j.judge("dec_worked", dec_expected, dec_tab, also=(sky.dec_t * ARCMIN_PER_DEG, dec_hour_tab + d_tab),
            causes=(("d sign", dec_expected - 2.0 * d_exact),
                                                         ("d sign", dec_tab - 2.0 * d_tab)))
    return Places(gha_c, j.value("dec_worked", dec_expected) / ARCMIN_PER_DEG,
                  j.value("gha_worked", gha_tab * ARCMIN_PER_DEG) / ARCMIN_PER_DEG,
                  j.value("dec_worked", dec_tab) / ARCMIN_PER_DEG)


@dataclass
class Altitudes:
    """What the altitude lines give: Ho carried forward (arcminutes) and navred's exact Ho (degrees)."""

    ho_c: np.ndarray
    ho_exact_deg: np.ndarray
    ha_deg: np.ndarray
    two_part: np.ndarray  # the Moon worked by its two-part table


@dataclass
class _Parts:
    """Every correction of Hs to Ho for each sight, exact (navred's chain) and as the tables give them."""

    working: object  # the AltitudeCorrections of navred's chain
    hs: np.ndarray  # arcminutes
    ic: np.ndarray
    dip: np.ndarray  # with the horizon's own line (an artificial or back horizon)
    dip_feet_as_metres: np.ndarray
    refraction: np.ndarray
    sd: np.ndarray
    parallax: np.ndarray
    sd_tab: np.ndarray
    parallax_tab: np.ndarray
    sd_flipped: np.ndarray  # the change of SD + parallax with the SD's sign reversed, the tables' way
    additional: np.ndarray
    upper: np.ndarray  # the upper limb

    @property
    def main(self):
        return self.refraction + self.sd + self.parallax

    @property
    def main_tab(self):
        return self.refraction + self.sd_tab + self.parallax_tab


def _parts(sights: SightsToMark, sky: Sky, kind: np.ndarray, gha_c: np.ndarray, dec_c: np.ndarray) -> _Parts:
    """navred's chain of corrections with the almanac's SD and HP at the cadet's UTC, and the tables' parts."""
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    hc_dr, zn_dr = computed_altitude_azimuth(lat_dr, lon_dr, gha_c, dec_c)
    limb = np.where(np.asarray(sights.limb, dtype=object) == "", "centre", sights.limb)
    _, phase = planet_phases(np.asarray(sights.body, dtype=object), sky.t, lat_dr, lon_dr, hc_dr, zn_dr)
    working = correct_altitudes(
        sights.hs_deg, index_error_arcmin=sights.index_error_arcmin, eye_height_m=sights.eye_height_m,
        horizon=sights.horizon, temperature_c=sights.temperature_c, pressure_hpa=sights.pressure_hpa,
        limb=limb, sd_arcmin=sky.sd_arcmin, hp_arcmin=sky.hp_arcmin, augment_sd=kind == "moon", lat_deg=lat_dr,
        zn_deg=zn_dr, phase_arcmin=phase)
    feet = np.asarray(sights.eye_height_ft, dtype=float)
    refraction = np.asarray(working.refraction_arcmin, dtype=float)
    sd = np.asarray(working.sd_arcmin, dtype=float)
    # as the tables give them: the daily page's (geocentric) SD, unaugmented, and the spherical parallax
    # HP cos h at the altitude of the centre (the almanac's tables leave out the Earth's flattening)
    sd_tab = np.where(np.isfinite(sd), limb_sign(limb) * np.nan_to_num(sky.sd_arcmin), np.nan)
    centre_deg = (np.asarray(working.ha_deg, dtype=float) * ARCMIN_PER_DEG + refraction + sd) / ARCMIN_PER_DEG
    hp = np.nan_to_num(sky.hp_arcmin)
    parallax_tab = np.where(hp > 0, parallax_in_altitude_arcmin(centre_deg, hp), 0.0)
    # with the SD's sign reversed the centre stands 2 SD lower or higher, and so does the parallax's altitude
    parallax_flipped = np.where(hp > 0, parallax_in_altitude_arcmin(centre_deg - 2.0 * sd / ARCMIN_PER_DEG, hp), 0.0)
    return _Parts(working, np.asarray(sights.hs_deg, dtype=float) * ARCMIN_PER_DEG,
                  np.asarray(working.ic_arcmin, dtype=float),
                  np.asarray(working.dip_arcmin, dtype=float) + np.asarray(working.horizon_arcmin, dtype=float),
                  np.where(np.isfinite(feet), -DIP_ARCMIN_PER_SQRT_M * np.sqrt(np.abs(feet)), np.nan),
                  refraction, sd, np.asarray(working.parallax_arcmin, dtype=float), sd_tab, parallax_tab,
                  -2.0 * sd + parallax_flipped - parallax_tab, np.asarray(working.phase_arcmin, dtype=float),
                  limb_sign(limb) < 0)


def _apparent_altitude_lines(j: Judge, p: _Parts) -> np.ndarray:
    """Judge the index correction, the dip and Ha; return Ha carried forward (arcminutes)."""
    j.judge("ic_worked", p.ic, causes=(("index on off", -p.ic),))
    j.judge("dip_worked", p.dip, causes=(("dip added", -p.dip), ("feet as metres", p.dip_feet_as_metres)))
    ha_expected = p.hs + j.value("ic_worked", p.ic) + j.value("dip_worked", p.dip)
    j.judge("ha_worked", ha_expected, also=(p.hs + p.ic + p.dip,))
    return j.value("ha_worked", ha_expected)


@dataclass
class _Moon:
    """How a working took its main correction: the Moon's two-part table or not, the first correction at the
    table's HP, and the cadet's main correction and upper limb's 30′ carried forward."""

    two_part: np.ndarray
    first_part: np.ndarray
    main_c: np.ndarray
    upper_limb_c: np.ndarray


def _correction_lines(j: Judge, p: _Parts, kind: np.ndarray, ha_c: np.ndarray) -> _Moon:
    """Judge refraction, SD, parallax, the main correction (or the Moon's first), the HP correction, the upper
    limb's −30′ and the additional correction."""
    moon = kind == "moon"
    j.judge("refraction_worked", p.refraction, tenth(p.refraction))
    has_sd = (kind == "sun") | moon
    j.judge("sd_worked", np.where(has_sd, p.sd, np.nan), np.where(has_sd, p.sd_tab, np.nan),
            causes=(("sd sign", -p.sd), ("sd sign", -p.sd_tab)))
    star = kind == "star"
    j.judge("parallax_worked", np.where(star, np.nan, p.parallax), np.where(star, np.nan, p.parallax_tab),
            causes=(("moon parallax", np.where(moon, 0.0, np.nan)),))
    # the Moon's two-part table: the first correction at the standard HP, for the lower limb, at Ha; a working
    # that gives that first correction alone (not the whole correction) took the table and left out the rest
    first_part = moon_first_correction_arcmin(ha_c / ARCMIN_PER_DEG)
    main, main_tab = p.main, p.main_tab
    main_given = np.asarray(j.given.get("main_worked", np.full(j.n, np.nan)), dtype=float)
    within = TOLERANCES["main_worked"] + 1e-9
    first_only = j.has("main_worked") & (np.minimum(np.abs(main_given - first_part),
                                                    np.abs(main_given - tenth(first_part))) <= within) & \
        ~(np.minimum(np.abs(main_given - main), np.abs(main_given - main_tab)) <= within)
    two_part = moon & (j.has("hp_corr_worked") | j.has("upper_limb_worked") | first_only)
    j.judge("main_worked", np.where(two_part, first_part, main), np.where(two_part, tenth(first_part), main_tab),
            causes=(
                ("sd sign", main - 2.0 * p.sd), ("sd sign", main_tab - 2.0 * p.sd_tab),
                ("sd sign", main + p.sd_flipped), ("sd sign", main_tab + p.sd_flipped),
                ("moon parallax", np.where(moon & ~two_part, main - p.parallax, np.nan)),
                ("moon parallax", np.where(moon & ~two_part, main_tab - p.parallax_tab, np.nan)),
                ("moon parallax", np.where(moon & ~two_part, first_part, np.nan))))
    main_c = j.value("main_worked", np.where(two_part, first_part, main))
    upper_limb_c = np.where(two_part & p.upper, j.value("upper_limb_worked", MOON_UPPER_LIMB_ARCMIN), 0.0)
    # the HP correction: what the day's HP adds to the cadet's first correction (and the upper limb's 30′)
    hp_exact = np.where(two_part, main - main_c - upper_limb_c, np.nan)
    hp_tab = np.where(two_part, main_tab - main_c - upper_limb_c, np.nan)
    j.judge("hp_corr_worked", hp_exact, hp_tab, causes=(("sd sign", hp_exact - 2.0 * p.sd),
                                                       ("sd sign", hp_tab - 2.0 * p.sd_tab)))
    # the table's second part left out where it adds more than its tolerance: the line is missing
    j.missing("hp_corr_worked", two_part & (np.abs(np.nan_to_num(hp_exact)) > TOLERANCES["hp_corr_worked"]),
              "moon parallax")
    j.judge("upper_limb_worked", np.where(two_part & p.upper, MOON_UPPER_LIMB_ARCMIN, np.nan))
    j.judge("additional_worked", np.where(kind == "planet", p.additional, np.nan))
    return _Moon(two_part, first_part, main_c, upper_limb_c)


def _ho_line(j: Judge, p: _Parts, kind: np.ndarray, ha_c: np.ndarray, m: _Moon) -> np.ndarray:
    """Judge Ho, the sum of the cadet's own lines (or the right Ho); return it carried forward."""
    moon = kind == "moon"
    own_main = j.has("main_worked")

    def total(refraction_, sd_, parallax_, main_):
        two = m.main_c + j.value("hp_corr_worked", main_ - m.main_c - m.upper_limb_c) + m.upper_limb_c
        parts = j.value("refraction_worked", refraction_) + j.value("sd_worked", sd_) + \
            j.value("parallax_worked", parallax_)
        return ha_c + j.value("additional_worked", p.additional) + np.where(
            m.two_part, two, np.where(own_main, j.value("main_worked", main_), parts))

    ho_expected = total(p.refraction, p.sd, p.parallax, p.main)
    ho_tab = total(tenth(p.refraction), tenth(p.sd_tab), tenth(p.parallax_tab), tenth(p.main_tab))
    hp_part = p.main - m.first_part - m.upper_limb_c  # what the Moon's HP correction adds
    ho_right = np.asarray(p.working.ho_deg, dtype=float) * ARCMIN_PER_DEG  # the right Ho is right too
    j.judge("ho_worked", ho_expected, ho_tab, also=(ho_right,), tolerance=np.where(
        moon, MOON_HO_TOLERANCE_ARCMIN, TOLERANCES["ho_worked"]), causes=(
        ("upper limb", np.where(m.two_part & p.upper & ~j.has("upper_limb_worked"),
                                ho_expected - MOON_UPPER_LIMB_ARCMIN, np.nan)),
        ("dip added", ho_expected - 2.0 * p.dip),
        ("feet as metres", ho_expected - p.dip + p.dip_feet_as_metres),
        ("index on off", ho_expected - 2.0 * p.ic),
        ("sd sign", ho_expected - 2.0 * p.sd),
        ("sd sign", ho_tab - 2.0 * p.sd_tab),
        ("sd sign", ho_expected + p.sd_flipped),
        ("sd sign", ho_tab + p.sd_flipped),
        ("moon parallax", np.where(moon & m.two_part & ~j.has("hp_corr_worked"), ho_expected - hp_part, np.nan)),
        ("moon parallax", np.where(moon & ~m.two_part, ho_expected - p.parallax, np.nan)),
        ("moon parallax", np.where(moon & ~m.two_part, ho_tab - p.parallax_tab, np.nan)),
        ("moon parallax", np.where(moon & ~m.two_part & ~own_main, ho_expected - p.main + m.first_part, np.nan))))
    return j.value("ho_worked", ho_expected)


def altitude_lines(j: Judge, sights: SightsToMark, sky: Sky, kind: np.ndarray, gha_c: np.ndarray,
                   dec_c: np.ndarray) -> Altitudes:
    """Judge Hs to Ho with the almanac's SD and HP at the cadet's UTC; return Ho carried forward."""
    p = _parts(sights, sky, kind, gha_c, dec_c)
    ha_c = _apparent_altitude_lines(j, p)
    moon = _correction_lines(j, p, kind, ha_c)
    ho_c = _ho_line(j, p, kind, ha_c, moon)
    return Altitudes(ho_c, np.asarray(p.working.ho_deg, dtype=float), np.asarray(p.working.ha_deg, dtype=float),
                     moon.two_part)


def moon_first_correction_arcmin(ha_deg: np.ndarray) -> np.ndarray:
    """The first part of the Moon's two-part altitude correction (arcminutes) at an apparent altitude:
    refraction at the standard 10 °C and 1010 hPa, the semi-diameter and the parallax of the lower limb at
    the table's standard horizontal parallax (:data:`MOON_TABLE_HP_ARCMIN`), the parallax HP cos h at the
    altitude of the centre (the almanac's Moon tables, from memory)."""
    ha = np.asarray(ha_deg, dtype=float)
    refraction = refraction_correction_arcmin(np.clip(ha, -0.9, 90.0))
    sd = MOON_SD_PER_HP * MOON_TABLE_HP_ARCMIN
    centre = ha + (refraction + sd) / ARCMIN_PER_DEG
    return refraction + sd + parallax_in_altitude_arcmin(centre, MOON_TABLE_HP_ARCMIN)


__all__ = ["BASE_RATE_DEG_PER_HOUR", "MOON_TABLE_HP_ARCMIN", "MOON_SD_PER_HP", "MOON_UPPER_LIMB_ARCMIN", "Sky",
           "Altitudes", "Places", "kind_of", "time_lines", "sky_of", "almanac_lines", "altitude_lines",
           "moon_first_correction_arcmin"]
