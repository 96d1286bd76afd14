"""A reduced sight worked again as a cadet works it by hand from an assumed position, line by line.

Core code (numpy and navred's own almanac). The same sights, Ho and almanac as the reduction, in the order
and the rounding of a hand working with the almanac's hourly pages and the sight reduction tables (common
practice; the conventions of :mod:`navred.marking_sight` and :mod:`navred.marking_methods`, which mark
such workings):

- GHA = GHA at the whole hour (of Aries, for a star) + increment (the base rate times the minutes and
  seconds: 15° an hour for the Sun and planets, 14° 19.0′ for the Moon, 15° 02.46′ for Aries) + v
  correction (the Moon and the planets: v, the hourly excess over the base rate, times the part of the hour)
  + SHA (a star); Dec = Dec at the whole hour + d correction (d the hourly change, signed as Dec moves:
  north +). The printed v and d corrections are read for the whole minute at its middle.
- The assumed position (AP): the whole degree of latitude nearest the DR; the longitude within 30′ of the
  DR that makes LHA = GHA + longitude (east +) a whole degree.
- The tables, entered with the AP's latitude, the whole LHA and the whole degrees of Dec (toward zero):
  tabulated Hc, d (the change of Hc for one degree more of Dec) and Z; Hc = tabulated Hc + d × minutes of
  Dec / 60; Z interpolated for the minutes of Dec, and Zn from Z by the hemisphere and LHA.
- Intercept = Ho − Hc from the AP (TOWARD when Ho is the greater).

Each line is rounded as the page prints it (0.1′, Z and Zn to 0.1°), so that a cadet's page can be
checked against it line by line; the working from the DR (the Working sheet) and this one give the same
line of position within the tables' rounding.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .almanac import places
from .angles import wrap_180, wrap_360
from .constants import ARCMIN_PER_DEG, NS_PER_HOUR
from .marking_judge import tenth
from .marking_methods import z_from_zn, zn_from_z
from .marking_sight import BASE_RATE_DEG_PER_HOUR, kind_of
from .timescales import instants
from .triangle import computed_altitude_azimuth


@dataclass(frozen=True)
class HandWorking:
    """Each sight's hand working from an assumed position (degrees for angles, arcminutes for corrections,
    NaN where a line is not part of the sight's working: v for the Sun and a star, SHA but for a star)."""

    kind: np.ndarray  # 'sun', 'moon', 'planet' or 'star'
    gha_hour_deg: np.ndarray  # of Aries for a star
    increment_arcmin: np.ndarray
    v_arcmin: np.ndarray
    v_correction_arcmin: np.ndarray
    sha_deg: np.ndarray
    gha_deg: np.ndarray
    dec_hour_deg: np.ndarray
    d_arcmin: np.ndarray
    d_correction_arcmin: np.ndarray
    dec_deg: np.ndarray
    hp_arcmin: np.ndarray
    ap_lat_deg: np.ndarray
    ap_lon_deg: np.ndarray
    lha_deg: np.ndarray  # a whole degree
    tab_dec_deg: np.ndarray  # the whole degrees of Dec the tables are entered with
    tab_hc_deg: np.ndarray
    tab_d_arcmin: np.ndarray
    tab_z_deg: np.ndarray
    hc_correction_arcmin: np.ndarray
    hc_deg: np.ndarray
    z_deg: np.ndarray  # interpolated for the minutes of Dec
    zn_deg: np.ndarray
    ho_deg: np.ndarray  # to 0.1′
    intercept_nm: np.ndarray  # toward +


def _almanac_lines(utc: np.ndarray, names: np.ndarray, kind: np.ndarray, dut1_s) -> dict[str, np.ndarray]:
    """GHA and Dec as the hourly pages and the increment, v and d tables give them."""
    n = utc.size
    hour = utc.astype("datetime64[h]").astype("datetime64[ns]")
    minutes = (utc - hour).astype(np.int64) / (NS_PER_HOUR / 60.0)
    stacked = np.concatenate([hour, hour + np.timedelta64(NS_PER_HOUR, "ns"), utc])
    dut1 = None if dut1_s is None else np.tile(np.broadcast_to(np.asarray(dut1_s, dtype=float), (n,)), 3)
    almanac = places(np.tile(names, 3), instants(stacked, dut1))
    gha, dec = almanac.gha_deg.reshape(3, n), almanac.dec_deg.reshape(3, n)
    aries = almanac.gha_aries_deg.reshape(3, n)
    star = kind == "star"
    base = np.array([BASE_RATE_DEG_PER_HOUR["aries" if k == "star" else k] for k in kind.tolist()], dtype=float)
    hour_gha = np.where(star, aries[0], gha[0])
    next_gha = np.where(star, aries[1], gha[1])
    middle = (np.floor(minutes) + 0.5) / 60.0  # the v and d tables' minute
    out = {"gha_hour_deg": tenth(hour_gha * ARCMIN_PER_DEG) / ARCMIN_PER_DEG,
           "increment_arcmin": tenth(base * minutes),  # base degrees an hour is base arcminutes a minute
           "v_arcmin": np.where(star | (kind == "sun"), np.nan,
                                tenth(wrap_180(next_gha - hour_gha - base) * ARCMIN_PER_DEG)),
           "sha_deg": np.where(star, tenth(almanac.sha_deg.reshape(3, n)[2] * ARCMIN_PER_DEG) / ARCMIN_PER_DEG,
                               np.nan),
           "dec_hour_deg": tenth(dec[0] * ARCMIN_PER_DEG) / ARCMIN_PER_DEG,
           "d_arcmin": np.where(star, np.nan, tenth((dec[1] - dec[0]) * ARCMIN_PER_DEG)),
           "hp_arcmin": np.where(star, np.nan, tenth(almanac.hp_arcmin.reshape(3, n)[2]))}
    out["v_correction_arcmin"] = tenth(out["v_arcmin"] * middle)
    out["d_correction_arcmin"] = tenth(out["d_arcmin"] * middle)
    parts = (out["gha_hour_deg"] * ARCMIN_PER_DEG + out["increment_arcmin"]
             + np.nan_to_num(out["v_correction_arcmin"]) + np.nan_to_num(out["sha_deg"] * ARCMIN_PER_DEG))
    out["gha_deg"] = wrap_360(parts / ARCMIN_PER_DEG)
    # a star's Dec is the day's, printed with its SHA; the others' the hour's and the d correction
    out["dec_deg"] = np.where(star, tenth(dec[2] * ARCMIN_PER_DEG) / ARCMIN_PER_DEG,
                              out["dec_hour_deg"] + np.nan_to_num(out["d_correction_arcmin"]) / ARCMIN_PER_DEG)
    out["dec_hour_deg"] = np.where(star, np.nan, out["dec_hour_deg"])
    return out


def _table_lines(ap_lat: np.ndarray, lha: np.ndarray, dec: np.ndarray) -> dict[str, np.ndarray]:
    """The sight reduction tables at the AP's latitude, the whole LHA and the whole degrees of Dec."""
    whole = np.sign(dec) * np.floor(np.abs(dec))
    step = np.where(dec >= 0, 1.0, -1.0)
    hc0, zn0 = computed_altitude_azimuth(ap_lat, 0.0, lha, whole)
    hc1, zn1 = computed_altitude_azimuth(ap_lat, 0.0, lha, np.clip(whole + step, -90.0, 90.0))
    minutes = np.abs(dec - whole) * ARCMIN_PER_DEG
    tab_hc = tenth(hc0 * ARCMIN_PER_DEG)
    tab_d = tenth((hc1 - hc0) * ARCMIN_PER_DEG)
    tab_z, next_z = np.round(z_from_zn(zn0, ap_lat), 1), np.round(z_from_zn(zn1, ap_lat), 1)
    correction = tenth(tab_d * minutes / ARCMIN_PER_DEG)
    z = np.round(tab_z + (next_z - tab_z) * minutes / ARCMIN_PER_DEG, 1)
    return {"tab_dec_deg": whole, "tab_hc_deg": tab_hc / ARCMIN_PER_DEG, "tab_d_arcmin": tab_d, "tab_z_deg": tab_z,
            "hc_correction_arcmin": correction, "hc_deg": (tab_hc + correction) / ARCMIN_PER_DEG, "z_deg": z,
            "zn_deg": np.round(zn_from_z(z, ap_lat, lha), 1) % 360.0}


def hand_working(utc: ArrayLike, body: ArrayLike, ho_deg: ArrayLike, dr_lat_deg: ArrayLike, dr_lon_deg: ArrayLike,
                 dut1_s: ArrayLike | None = None) -> HandWorking:
    """Each sight worked by hand from an assumed position: its UTC (datetime64), body, Ho (degrees) and DR
    (degrees, east +), DUT1 as the reduction used it (seconds; default the IERS table). Arrays of one length.

    >>> w = hand_working(np.array(["2024-06-21T12:00"], dtype="datetime64[ns]"), ["Sun"], [60.0], [40.3], [-0.6])
    >>> float(w.ap_lat_deg[0]), float(w.lha_deg[0]) % 1.0
    (40.0, 0.0)
    """
    utc64 = np.atleast_1d(np.asarray(utc, dtype="datetime64[ns]"))
    names = np.atleast_1d(np.asarray(body, dtype=object))
    kind = kind_of(names)
    lines = _almanac_lines(utc64, names, kind, dut1_s)
    lat = np.atleast_1d(np.asarray(dr_lat_deg, dtype=float))
    lon = np.atleast_1d(np.asarray(dr_lon_deg, dtype=float))
    ap_lat = np.clip(np.round(lat), -89.0, 89.0)
    lha = np.round(wrap_360(lines["gha_deg"] + lon)) % 360.0
    ap_lon = wrap_180(lha - lines["gha_deg"])
    tables = _table_lines(ap_lat, lha, lines["dec_deg"])
    ho = tenth(np.atleast_1d(np.asarray(ho_deg, dtype=float)) * ARCMIN_PER_DEG) / ARCMIN_PER_DEG
    return HandWorking(kind=kind, **lines, ap_lat_deg=ap_lat, ap_lon_deg=ap_lon, lha_deg=lha, **tables, ho_deg=ho,
                       intercept_nm=tenth((ho - tables["hc_deg"]) * ARCMIN_PER_DEG))


__all__ = ["HandWorking", "hand_working"]
