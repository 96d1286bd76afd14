"""The lines of each method after Ho, judged from the cadet's own earlier lines.

Core code (numpy). The methods and their conventions (common practice; the navigation manuals):

- **Intercept from an assumed position** (the sight reduction tables, or a calculator): the AP's
  latitude the whole degree nearest the DR, its longitude within 30′ of the DR making LHA =
  GHA + longitude (east +) a whole degree; the tables' Hc, d and Z at the whole LHA, latitude and
  degrees of Dec, Hc = tabulated Hc + d × (minutes of Dec)/60; Zn from Z (north latitude, LHA over
  180°: Zn = Z, under: 360° − Z; south latitude, LHA over 180°: 180° − Z, under: 180° + Z), Z as
  tabulated or interpolated for the minutes of Dec (written in the one Z line, or on a line of its own);
  intercept = Ho − Hc, TOWARD when Ho is the greater.
- **Intercept from the DR** (a calculator): LHA = GHA + DR longitude, Hc and Zn at the DR by the
  cosine and azimuth formulas, each rounded as written (0.1′ and 0.1°).
- **Latitude by meridian altitude**: the body bears north at meridian passage when its declination
  is north of the latitude, else south; zenith distance = 90° − Ho, named opposite to that bearing
  (N when the body bears south; the cadet's own bearing where written); latitude = Dec + zenith distance, the names as signs (same
  names add, contrary names subtract).
- **Ex-meridian**: the meridian angle t (minutes of time) from LHA = GHA + DR longitude; the
  reduction to the meridian a·t², a = 1.9635″ cos L cos d / sin(L ∼ d) the change of altitude in
  the first minute from meridian passage (the second-order term of sin h = sin L sin d +
  cos L cos d cos t about t = 0: (π/720)²/2 radians per minute² is 1.9635″; Bowditch, "reduction
  to the meridian"); meridian altitude = Ho + reduction, then as the meridian altitude.
- **Polaris**: LHA Aries = GHA Aries + DR longitude; latitude = Ho + the Polaris correction
  (the tables' a0 + a1 + a2 − 1°), which is −p cos t + ½ p² sin² t tan Ho to the second order (p the
  polar distance, t Polaris's LHA; Smart, Textbook on Spherical Astronomy, the pole-star problem,
  from memory); navred also takes the exact latitude from the spherical triangle.
- **Compass error by amplitude**: sin A = sin Dec / cos latitude (the body's centre on the
  celestial horizon), named E when rising, W when setting, and N or S as the declination; the true
  bearing 090° − A rising, 270° + A setting; by **azimuth**: Zn at the DR from LHA and Dec. Compass
  error = true − compass bearing (east when the compass reads less: "compass least, error east");
  deviation = compass error − variation (east +).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG
from .marking_judge import TOLERANCES, Judge, SightsToMark, tenth
from .marking_sight import Places
from .triangle import computed_altitude_azimuth

#: The change of altitude in the first minute of time from meridian passage, for cos L cos d / sin z = 1
#: (arcseconds): (2π / 1440)² / 2 radians, derived above.
EX_MERIDIAN_ARCSEC = (np.pi / 720.0) ** 2 / 2.0 * 180.0 / np.pi * 3600.0
#: The ex-meridian's factor a is read from tables entered with whole degrees of latitude and declination:
#: it is allowed 3 % and 0.1″ (common practice).
EX_MERIDIAN_A_SHARE = 0.03


def zn_from_z(z_deg, lat_deg, lha_deg) -> np.ndarray:
    """True azimuth Zn from the tables' azimuth angle Z (0-180°), by the hemisphere and LHA (the rule above)."""
    z = np.asarray(z_deg, dtype=float)
    north = np.asarray(lat_deg, dtype=float) >= 0
    east = wrap_360(lha_deg) > 180.0  # LHA over 180°: the body is east
    return wrap_360(np.where(north, np.where(east, z, 360.0 - z), np.where(east, 180.0 - z, 180.0 + z)))


def z_from_zn(zn_deg, lat_deg) -> np.ndarray:
    """The tables' azimuth angle Z (0-180°, from the elevated pole) of a true azimuth."""
    zn = wrap_360(zn_deg)
    north = np.asarray(lat_deg, dtype=float) >= 0
    return np.where(north, np.where(zn <= 180.0, zn, 360.0 - zn), np.where(zn <= 180.0, 180.0 - zn, zn - 180.0))


def latitude_from_altitude_deg(ho_deg, lha_deg, dec_deg, near_lat_deg) -> np.ndarray:
    """The latitude (degrees) at which a body of LHA and Dec stands at altitude Ho: the root of
    sin Ho = sin L sin d + cos L cos d cos LHA nearer ``near_lat_deg`` (the spherical triangle)."""
    h, t, d = (np.radians(np.asarray(v, dtype=float)) for v in (ho_deg, lha_deg, dec_deg))
    a, b = np.sin(d), np.cos(d) * np.cos(t)
    r = np.hypot(a, b)
    phase = np.arctan2(b, a)  # sin Ho = r sin(L + phase)
    base = np.arcsin(np.clip(np.sin(h) / r, -1.0, 1.0))
    roots = np.stack([base - phase, np.pi - base - phase])
    roots = (roots + np.pi) % (2 * np.pi) - np.pi
    near = np.radians(np.asarray(near_lat_deg, dtype=float))
    pick = np.argmin(np.abs(roots - near), axis=0)
    return np.degrees(np.take_along_axis(roots, pick[None], axis=0)[0])


def polaris_correction_arcmin(ho_deg, lha_deg, dec_deg) -> np.ndarray:
    """Latitude − Ho (arcminutes) to the second order in the polar distance p:
    −p cos t + ½ p² sin² t tan Ho (Smart, the pole-star problem; from memory)."""
    p = (90.0 - np.asarray(dec_deg, dtype=float)) * ARCMIN_PER_DEG
    t = np.radians(np.asarray(lha_deg, dtype=float))
    ho = np.radians(np.asarray(ho_deg, dtype=float))
    return -p * np.cos(t) + 0.5 * (p * np.sin(t)) ** 2 * np.tan(ho) * np.radians(1.0 / ARCMIN_PER_DEG)


def ex_meridian_a_arcsec(lat_deg, dec_deg) -> np.ndarray:
    """The change of altitude (arcseconds) in the first minute of time from meridian passage."""
    lat, dec = np.radians(np.asarray(lat_deg, dtype=float)), np.radians(np.asarray(dec_deg, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):
        return EX_MERIDIAN_ARCSEC * np.cos(lat) * np.cos(dec) / np.abs(np.sin(lat - dec))


@dataclass
class Lines:
    """A position line from a working: through (lat, lon) on the plotting sheet, laid off ``intercept_nm``
    along ``zn_deg`` (a latitude: Zn 000°, intercept 0, through the latitude); NaN where none."""

    lat_deg: np.ndarray
    lon_deg: np.ndarray
    zn_deg: np.ndarray
    intercept_nm: np.ndarray
    from_dr: np.ndarray  # laid off from the DR (no assumed position)
    way: np.ndarray  # how the working was done, in words


def _wrapped_arcmin(value):
    return wrap_180(np.asarray(value, dtype=float) / ARCMIN_PER_DEG) * ARCMIN_PER_DEG


def _way_of_working(j: Judge, lat_dr, lon_dr, gha_c) -> tuple[np.ndarray, np.ndarray]:
    """Which sights were worked from the DR (the DR written as the position, or the LHA the DR gives), and
    which give nothing to tell (no position, LHA or tables: from an AP or the DR, both accepted)."""
    n = j.n
    tolerance = TOLERANCES["ap_lat"] + 1e-9
    lat_given = np.asarray(j.given.get("ap_lat", np.full(n, np.nan)), dtype=float)
    lon_given = np.asarray(j.given.get("ap_lon", np.full(n, np.nan)), dtype=float)
    lha_given = np.asarray(j.given.get("lha_worked", np.full(n, np.nan)), dtype=float)
    dr_lat_whole = np.abs(lat_dr - np.round(lat_dr)) * ARCMIN_PER_DEG <= tolerance
    lha_dr = wrap_360(gha_c + lon_dr)
    lha_dr_whole = np.abs(wrap_180(lha_dr - np.round(lha_dr))) * ARCMIN_PER_DEG <= tolerance
    tables = j.has("tab_hc_worked") | j.has("tab_d_worked") | j.has("tab_z_worked") | j.has("hc_correction_worked") | \
        j.has("z_interpolated_worked")
    lat_at_dr = j.has("ap_lat") & (np.abs(lat_given - lat_dr * ARCMIN_PER_DEG) <= tolerance)
    lon_is_dr = j.has("ap_lon") & (np.abs(_wrapped_arcmin(lon_given - lon_dr * ARCMIN_PER_DEG)) <= tolerance)
    lha_is_dr = j.has("lha_worked") & (np.abs(_wrapped_arcmin(lha_given - lha_dr * ARCMIN_PER_DEG)) <= tolerance) \
        & ~lha_dr_whole
    no_position = ~j.has("ap_lat") & ~j.has("ap_lon")
    # the DR's latitude (when not a whole degree, an AP's could not be it), or the DR written whole
    from_dr = (lat_at_dr & ~dr_lat_whole) | (lat_at_dr & lon_is_dr) | (~j.has("ap_lat") & lon_is_dr) | \
        (no_position & lha_is_dr)
    return from_dr, no_position & ~j.has("lha_worked") & ~tables


def _position_lines(j: Judge, on, lat_dr, lon_dr, gha_c, from_dr) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Judge the assumed (or DR) latitude and longitude and the LHA; return them carried forward (degrees)."""
    n = j.n
    ap_lat_rule = np.round(lat_dr)
    ap_lon_rule = wrap_180(np.round(gha_c + lon_dr) - gha_c)
    lat_expected = np.where(from_dr, lat_dr, ap_lat_rule)
    j.judge("ap_lat", lat_expected * ARCMIN_PER_DEG, only=on)
    j.name_cause("ap_lat", ~from_dr, "ap lat")
    lat_c = j.value("ap_lat", lat_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    lon_expected = np.where(from_dr, lon_dr, ap_lon_rule)
    j.judge("ap_lon", lon_expected * ARCMIN_PER_DEG, also=(np.where(from_dr, ap_lon_rule * ARCMIN_PER_DEG, np.nan),),
            angle=True, only=on)
    given_lon = np.asarray(j.given.get("ap_lon", np.full(n, np.nan)), dtype=float) / ARCMIN_PER_DEG
    lha_whole = np.abs(wrap_180(gha_c + given_lon - np.round(gha_c + given_lon))) * ARCMIN_PER_DEG <= 0.05
    # an AP longitude that makes GHA − longitude whole was chosen for LHA with the longitude's sign reversed
    reversed_whole = np.abs(wrap_180(gha_c - given_lon - np.round(gha_c - given_lon))) * ARCMIN_PER_DEG <= 0.05
    j.name_cause("ap_lon", ~lha_whole & reversed_whole, "lha sign")
    j.name_cause("ap_lon", ~lha_whole & ~reversed_whole, "ap lon")
    lon_c = j.value("ap_lon", lon_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    lha_expected = wrap_360(gha_c + lon_c)
    j.judge("lha_worked", lha_expected * ARCMIN_PER_DEG, angle=True, only=on,
            causes=(("lha sign", wrap_360(gha_c - lon_c) * ARCMIN_PER_DEG),))
    return lat_c, lon_c, j.value("lha_worked", lha_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG


@dataclass
class _Tables:
    """What the tables (or a calculator) give at the cadet's position: Hc carried forward and as tabulated, the
    exact Hc and Zn, the tabulated Z and Z interpolated for the minutes of Dec."""

    hc_c: np.ndarray
    hc_tab: np.ndarray
    hc_exact: np.ndarray
    zn_exact: np.ndarray
    tab_z: np.ndarray
    z_interpolated: np.ndarray
    own_tables: np.ndarray


def _table_lines(j: Judge, on, by_tables, lat_c, lha_c, dec_c, hc_other) -> _Tables:
    """Judge the tables' Hc, d and Z at whole degrees of Dec, the d correction of Hc, and Hc."""
    whole_dec = np.sign(dec_c) * np.floor(np.abs(dec_c))
    step = np.where(dec_c >= 0, 1.0, -1.0)
    hc_whole, zn_whole = computed_altitude_azimuth(lat_c, 0.0, lha_c, whole_dec)
    hc_next, zn_next = computed_altitude_azimuth(lat_c, 0.0, lha_c, np.clip(whole_dec + step, -90.0, 90.0))
    tab_hc = tenth(hc_whole * ARCMIN_PER_DEG)
    tab_d = tenth((hc_next - hc_whole) * ARCMIN_PER_DEG)
    tab_z = np.round(z_from_zn(zn_whole, lat_c), 1)

    def tables_only(values):
        return np.where(by_tables, values, np.nan)

    j.judge("tab_hc_worked", tables_only(hc_whole * ARCMIN_PER_DEG), tables_only(tab_hc), only=on)
    j.judge("tab_d_worked", tables_only((hc_next - hc_whole) * ARCMIN_PER_DEG), tables_only(tab_d), only=on)
    dec_minutes = np.abs(dec_c - whole_dec) * ARCMIN_PER_DEG
    hc_exact, zn_exact = computed_altitude_azimuth(lat_c, 0.0, lha_c, dec_c)
    z_next = np.round(z_from_zn(zn_next, lat_c), 1)
    z_exact = z_from_zn(zn_exact, lat_c)
    # Z interpolated for the minutes of Dec is a Z as good as the tabulated one: a working with one Z line
    # may write either there
    j.judge("tab_z_worked", tables_only(z_from_zn(zn_whole, lat_c)), tables_only(tab_z),
            also=(tables_only(tab_z + (z_next - tab_z) * dec_minutes / ARCMIN_PER_DEG), tables_only(z_exact)),
            only=on)
    own_z = j.value("tab_z_worked", tab_z)  # the interpolation from the cadet's own tabulated Z
    j.judge("z_interpolated_worked", tables_only(z_exact),
            tables_only(own_z + (z_next - tab_z) * dec_minutes / ARCMIN_PER_DEG), only=on)
    correction_exact = (hc_exact - hc_whole) * ARCMIN_PER_DEG
    correction_tab = tenth(j.value("tab_d_worked", tab_d) * dec_minutes / ARCMIN_PER_DEG)
    j.judge("hc_correction_worked", tables_only(correction_exact), tables_only(correction_tab), only=on,
            causes=(("hc d sign", -correction_tab), ("hc d sign", -correction_exact)))
    own_tables = by_tables & (j.has("tab_hc_worked") | j.has("hc_correction_worked"))
    hc_tab = j.value("tab_hc_worked", tab_hc) + j.value("hc_correction_worked", correction_tab)
    hc_expected = np.where(own_tables, hc_tab, hc_exact * ARCMIN_PER_DEG)
    j.judge("hc_worked", hc_expected, np.where(by_tables, hc_tab, tenth(hc_exact * ARCMIN_PER_DEG)),
            also=(hc_other,), only=on, causes=(
                ("hc d sign", hc_expected - 2.0 * j.value("hc_correction_worked", correction_tab)),
                ("hc d sign", hc_exact * ARCMIN_PER_DEG - 2.0 * correction_exact)))
    return _Tables(j.value("hc_worked", hc_expected), hc_tab, hc_exact, zn_exact, tab_z,
                   tab_z + (z_next - tab_z) * dec_minutes / ARCMIN_PER_DEG, own_tables)


def _zn_line(j: Judge, on, by_tables, undecided, lat_c, lha_c, tables: _Tables, zn_dr) -> np.ndarray:
    """Judge Zn: from Z as tabulated, or interpolated for the minutes of Dec, or exact; return it carried."""
    z_c = j.value("z_interpolated_worked", j.value("tab_z_worked", z_from_zn(tables.zn_exact, lat_c)))
    own_z = j.has("tab_z_worked") | j.has("z_interpolated_worked")
    from_z = np.where(by_tables & own_z, zn_from_z(z_c, lat_c, lha_c), np.nan)
    interpolated = np.where(by_tables, zn_from_z(tables.z_interpolated, lat_c, lha_c), np.nan)
    north = lat_c >= 0
    right_zn = np.where(own_z, from_z, tables.zn_exact)
    alternatives = []
    for z in (z_c, np.where(by_tables, tables.z_interpolated, np.nan)):  # the rule misapplied to either Z
        for rule in (np.where(north, z, 180.0 - z), np.where(north, 360.0 - z, 180.0 + z),
                     np.where(north, 180.0 - z, z), np.where(north, 180.0 + z, 360.0 - z)):
            alternatives.append(("zn rule", np.where(np.abs(wrap_180(rule - right_zn)) > TOLERANCES["zn_worked"],
                                                     wrap_360(rule), np.nan)))
    j.judge("zn_worked", tables.zn_exact, np.where(by_tables, tenth(zn_from_z(tables.tab_z, lat_c, lha_c)),
                                                   tenth(tables.zn_exact)),
            also=(from_z, interpolated, np.where(undecided, zn_dr, np.nan)), angle=True, only=on,
            causes=tuple(alternatives))
    return j.value("zn_worked", np.where(own_z, from_z, tables.zn_exact))


def _intercept_line(j: Judge, on, undecided, ho_c, tables: _Tables, hc_dr, hc_dr_tab,
                    hc_ap_tab) -> tuple[np.ndarray, np.ndarray]:
    """Judge the intercept (Ho − Hc, TOWARD when Ho is the greater); return it carried forward, and which
    workings that give nothing but Ho, Zn and the intercept were laid off from the DR (it fits the DR better).
    Such a working may also have taken its AP from the printed GHA, which near half a degree of LHA rounds
    the other way: ``hc_ap_tab`` is Hc at that AP."""
    intercept_expected = ho_c - tables.hc_c
    intercept_tab = ho_c - np.where(j.has("hc_worked"), tables.hc_c, tables.hc_tab)
    bare = undecided & ~j.has("hc_worked")
    intercept_dr = np.where(bare, ho_c - hc_dr * ARCMIN_PER_DEG, np.nan)
    intercept_dr_tab = np.where(bare, ho_c - tenth(hc_dr_tab * ARCMIN_PER_DEG), np.nan)
    intercept_ap_tab = np.where(bare, ho_c - hc_ap_tab * ARCMIN_PER_DEG, np.nan)
    j.judge("intercept_worked", intercept_expected, intercept_tab,
            also=(intercept_dr, intercept_dr_tab, intercept_ap_tab), only=on,
            causes=(("toward away", -intercept_expected, intercept_expected), ("toward away", -intercept_tab, intercept_tab),
                    ("toward away", -intercept_dr, intercept_dr), ("toward away", -intercept_dr_tab, intercept_dr_tab)))
    j.clear_cause("intercept_worked", np.abs(intercept_expected) <= TOLERANCES["intercept_worked"])  # no direction
    intercept_c = j.value("intercept_worked", intercept_expected)
    nearer_dr = bare & np.isfinite(intercept_dr) & (
        np.minimum(np.abs(intercept_c - intercept_dr), np.abs(intercept_c - intercept_dr_tab))
        < np.minimum(np.abs(intercept_c - intercept_expected), np.abs(intercept_c - intercept_tab)))
    return intercept_c, nearer_dr


def intercept_lines(j: Judge, sights: SightsToMark, on: np.ndarray, places: Places, ho_c: np.ndarray) -> Lines:
    """Judge the position, LHA, tables, Hc, Zn and intercept of the intercept method (``on``: its sights),
    from an AP or from the DR; returns each sight's line as the cadet's own lines give it."""
    gha_c, dec_c = places.gha_deg, places.dec_deg
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    from_dr, undecided = _way_of_working(j, lat_dr, lon_dr, gha_c)
    lat_c, lon_c, lha_c = _position_lines(j, on, lat_dr, lon_dr, gha_c, from_dr)
    by_tables = on & ~from_dr
    # a working with no position, LHA or tables may be from the DR: its Hc and Zn there are accepted too
    hc_dr, zn_dr = computed_altitude_azimuth(lat_dr, lon_dr, gha_c, dec_c)
    hc_dr_tab, _ = computed_altitude_azimuth(lat_dr, lon_dr, places.gha_tab_deg, places.dec_tab_deg)
    tables = _table_lines(j, on, by_tables, lat_c, lha_c, dec_c, np.where(undecided, hc_dr * ARCMIN_PER_DEG, np.nan))
    zn_c = _zn_line(j, on, by_tables, undecided, lat_c, lha_c, tables, zn_dr)
    lha_tab = np.round(places.gha_tab_deg + lon_dr)  # the AP the printed GHA gives (its LHA whole)
    hc_ap_tab, _ = computed_altitude_azimuth(np.round(lat_dr), 0.0, lha_tab, places.dec_tab_deg)
    intercept_c, nearer_dr = _intercept_line(j, on, undecided, ho_c, tables, hc_dr, hc_dr_tab, hc_ap_tab)
    from_dr = from_dr | nearer_dr
    way = np.where(from_dr, "from the DR by calculator",
                   np.where(tables.own_tables | (by_tables & (j.has("tab_z_worked") | j.has("z_interpolated_worked"))),
                            "from an AP by the tables",
                            "from an AP"))
    nan = np.full(j.n, np.nan)
    return Lines(np.where(on, np.where(nearer_dr, lat_dr, lat_c), nan), np.where(on, np.where(nearer_dr, lon_dr, lon_c),
                                                                                 nan),
                 np.where(on, zn_c, nan), np.where(on, intercept_c, nan), on & from_dr, np.where(on, way, ""))


@dataclass
class Latitudes:
    """What the latitude methods give per sight: the latitude carried forward (degrees, NaN for other
    methods), the meridian angle (minutes of time) and the zenith distance (degrees) of the sight."""

    lat_deg: np.ndarray
    t_minutes: np.ndarray
    zenith_deg: np.ndarray
    a_arcsec: np.ndarray


def latitude_lines(j: Judge, sights: SightsToMark, method: np.ndarray, sky_sha_deg: np.ndarray, places: Places,
                   ho_c: np.ndarray) -> Latitudes:
    """Judge the lines of the meridian altitude, the ex-meridian and Polaris (the method of each sight
    in ``method``)."""
    gha_c, dec_c = places.gha_deg, places.dec_deg
    meridian, ex_meridian, polaris = (method == m for m in ("meridian", "ex-meridian", "polaris"))
    on = meridian | ex_meridian | polaris
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    # LHA from the DR (LHA Aries for Polaris)
    lha_expected = wrap_360(gha_c + lon_dr)
    j.judge("lha_worked", lha_expected * ARCMIN_PER_DEG, angle=True, only=on,
            causes=(("lha sign", wrap_360(gha_c - lon_dr) * ARCMIN_PER_DEG),))
    lha_c = j.value("lha_worked", lha_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    t_minutes = np.abs(wrap_180(lha_c)) * 4.0

    # --- ex-meridian: a, the reduction, the meridian altitude ----------------------------------
    a_exact = ex_meridian_a_arcsec(lat_dr, dec_c)
    a_tab = np.round(ex_meridian_a_arcsec(np.round(lat_dr), np.round(dec_c)), 1)
    j.judge("ex_meridian_a_worked", np.where(ex_meridian, a_exact, np.nan), np.where(ex_meridian, a_tab, np.nan),
            tolerance=TOLERANCES["ex_meridian_a_worked"] + EX_MERIDIAN_A_SHARE * np.nan_to_num(a_exact), only=on)
    a_c = j.value("ex_meridian_a_worked", a_exact)
    reduction_table = a_c * t_minutes**2 / 60.0
    on_meridian, _ = computed_altitude_azimuth(lat_dr, 0.0, 0.0, dec_c)
    at_sight, _ = computed_altitude_azimuth(lat_dr, 0.0, lha_c, dec_c)
    reduction_exact = (on_meridian - at_sight) * ARCMIN_PER_DEG
    # a reduction whose a is not written was worked from a read from the tables: it carries a's allowance
    slack = np.where(j.has("ex_meridian_a_worked"), 0.0, EX_MERIDIAN_A_SHARE * np.abs(np.nan_to_num(reduction_table)))
    reduction_a_tab = np.round(a_exact, 1) * t_minutes**2 / 60.0
    # the reduction is added: written negative (and added) or taken off, it was applied the wrong way; what
    # it should be is what the cadet's own a gives
    j.judge("reduction_worked", np.where(ex_meridian, reduction_table, np.nan),
            np.where(ex_meridian, reduction_exact, np.nan),
            also=(np.where(ex_meridian, reduction_a_tab, np.nan),),
            tolerance=TOLERANCES["reduction_worked"] + slack, only=on,
            causes=(("reduction sign", -reduction_table, reduction_table),
                    ("reduction sign", -reduction_exact, reduction_table),
                    ("reduction sign", -reduction_a_tab, reduction_table)))
    reduction_c = np.where(ex_meridian, j.value("reduction_worked", reduction_table), 0.0)
    meridian_altitude = ho_c + reduction_c
    j.judge("meridian_altitude_worked", np.where(meridian | ex_meridian, meridian_altitude, np.nan), only=on,
            causes=(("reduction sign", np.where(ex_meridian, ho_c - reduction_c, np.nan)),))
    meridian_altitude_c = j.value("meridian_altitude_worked", meridian_altitude)

    # --- the body's bearing, the zenith distance named opposite to it; latitude = Dec + zenith distance -----
    bears_south = lat_dr >= dec_c  # the body bears south of a DR north of it
    bearing = np.where(bears_south, 180.0, 0.0)
    j.judge("bearing_worked", np.where(meridian | ex_meridian, bearing, np.nan), angle=True, only=on,
            causes=(("bearing name", 180.0 - bearing),))
    bearing_c = j.value("bearing_worked", bearing)  # the cadet's bearing names their zenith distance
    name = np.where(np.abs(wrap_180(bearing_c - 180.0)) < 90.0, 1.0, -1.0)  # bearing south: z named N
    zenith = name * (90.0 * ARCMIN_PER_DEG - meridian_altitude_c)
    j.judge("zenith_distance_worked", np.where(meridian | ex_meridian, zenith, np.nan), only=on,
            causes=(("zenith name", -zenith),))
    zenith_c = j.value("zenith_distance_worked", zenith)

    # --- Polaris: the correction from the tables' formula, or exact from the triangle -------------
    t_polaris = wrap_360(lha_c + sky_sha_deg)
    polaris_formula = polaris_correction_arcmin(ho_c / ARCMIN_PER_DEG, t_polaris, dec_c)
    polaris_exact = (latitude_from_altitude_deg(ho_c / ARCMIN_PER_DEG, t_polaris, dec_c, lat_dr)
                     * ARCMIN_PER_DEG - ho_c)
    j.judge("polaris_corr_worked", np.where(polaris, polaris_exact, np.nan), np.where(polaris, polaris_formula,
                                                                                         np.nan), only=on,
            causes=(("polaris degree", polaris_exact + ARCMIN_PER_DEG),
                    ("polaris degree", polaris_formula + ARCMIN_PER_DEG)))
    correction_c = j.value("polaris_corr_worked", polaris_exact)

    latitude = np.where(polaris, ho_c + correction_c, dec_c * ARCMIN_PER_DEG + zenith_c)
    # the Dec the printed almanac gives, where the cadet did not write theirs
    latitude_tab = np.where(polaris, np.nan, places.dec_tab_deg * ARCMIN_PER_DEG + zenith_c)
    j.judge("latitude_worked", latitude, latitude_tab, only=on, causes=(
        ("zenith name", np.where(polaris, np.nan, dec_c * ARCMIN_PER_DEG - zenith_c)),
        ("polaris degree", np.where(polaris, latitude + ARCMIN_PER_DEG, np.nan))))
    lat_c = j.value("latitude_worked", latitude) / ARCMIN_PER_DEG
    zenith_deg = np.abs(lat_dr - dec_c)
    return Latitudes(np.where(on, lat_c, np.nan), np.where(on, t_minutes, np.nan), zenith_deg,
                     np.where(on, a_c, np.nan))


@dataclass
class Bearings:
    """What the compass methods give: the true bearing and the compass error (degrees) carried forward."""

    zn_deg: np.ndarray
    error_deg: np.ndarray
    deviation_deg: np.ndarray


def compass_lines(j: Judge, sights: SightsToMark, method: np.ndarray, gha_c: np.ndarray,
                  dec_c: np.ndarray) -> Bearings:
    """Judge the amplitude or azimuth, the true bearing, the compass error and the deviation."""
    n = j.n
    amplitude, azimuth = method == "amplitude", method == "azimuth"
    on = amplitude | azimuth
    lat_dr = np.asarray(sights.dr_lat_deg, dtype=float)
    lon_dr = np.asarray(sights.dr_lon_deg, dtype=float)
    bearing = np.full(n, np.nan) if sights.compass_bearing_deg is None else \
        np.asarray(sights.compass_bearing_deg, dtype=float)
    variation = np.full(n, np.nan) if sights.variation_deg is None else np.asarray(sights.variation_deg, dtype=float)
    # amplitude: sin A = sin Dec / cos latitude, named as the declination
    with np.errstate(invalid="ignore"):
        a_exact = np.degrees(np.arcsin(np.sin(np.radians(dec_c)) / np.cos(np.radians(lat_dr))))
    j.judge("amplitude_worked", np.where(amplitude, a_exact, np.nan), np.where(amplitude, np.round(a_exact, 1),
                                                                                np.nan),
            only=on, causes=(("amplitude name", -a_exact),))
    a_c = j.value("amplitude_worked", a_exact)
    rising = wrap_360(gha_c + lon_dr) > 180.0  # the body east of the meridian
    zn_amplitude = wrap_360(np.where(rising, 90.0 - a_c, 270.0 + a_c))
    wrong_sides = (np.where(rising, 90.0 + a_c, 270.0 - a_c), np.where(rising, 270.0 + a_c, 90.0 - a_c),
                   np.where(rising, 270.0 - a_c, 90.0 + a_c))
    # azimuth: LHA from the DR, Zn at the DR
    lha_expected = wrap_360(gha_c + lon_dr)
    j.judge("lha_worked", lha_expected * ARCMIN_PER_DEG, angle=True, only=azimuth,
            causes=(("lha sign", wrap_360(gha_c - lon_dr) * ARCMIN_PER_DEG),))
    lha_c = j.value("lha_worked", lha_expected * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    _, zn_azimuth = computed_altitude_azimuth(lat_dr, 0.0, lha_c, dec_c)
    zn_expected = np.where(amplitude, zn_amplitude, zn_azimuth)
    j.judge("zn_worked", zn_expected, tenth(zn_expected), angle=True, only=on,
            tolerance=np.where(amplitude, TOLERANCES["amplitude_worked"], TOLERANCES["zn_worked"]),
            causes=tuple(("amplitude name", np.where(amplitude, wrap_360(side), np.nan)) for side in wrong_sides))
    zn_c = j.value("zn_worked", zn_expected)
    error = wrap_180(zn_c - bearing)
    j.judge("compass_error_worked", error, angle=True, only=on, causes=(("error name", -error),))
    error_c = j.value("compass_error_worked", error)
    deviation = wrap_180(error_c - variation)
    j.judge("deviation_worked", deviation, angle=True, only=on,
            causes=(("variation sign", wrap_180(error_c + variation)),))
    nan = np.full(n, np.nan)
    return Bearings(np.where(on, zn_c, nan), np.where(on, error_c, nan),
                    np.where(on, j.value("deviation_worked", deviation), nan))


__all__ = ["zn_from_z", "z_from_zn", "latitude_from_altitude_deg", "polaris_correction_arcmin", "ex_meridian_a_arcsec",
           "EX_MERIDIAN_ARCSEC", "Lines", "Latitudes", "Bearings", "intercept_lines", "latitude_lines", "compass_lines"]
