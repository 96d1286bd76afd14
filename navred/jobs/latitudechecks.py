"""Latitude from single sights by the methods of the trade, as checks and for noon: by meridian altitude, by
ex-meridian within its limit, and by Polaris (:mod:`navred.latitudes`, the core), one row per sight of a reduced
table. Used by navred fix (the latitude checks) and the day's work (the latitude at noon)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..angles import wrap_180
from ..latitudes import (
    EX_MERIDIAN_SENSITIVE_LAT_PER_LON,
    ex_meridian_latitude,
    ex_meridian_limit_minutes,
    ex_meridian_longitude_sensitivity,
    latitude_by_meridian_altitude,
    latitude_by_polaris,
)
from ..status import SightStatus
from .frames import row_labels

#: A sight within this many degrees of LHA 0 (either side) is on the meridian: its Ho gives the latitude
#: (a fixed arc is common practice: the altitude changes by under 0.1′ within about 1° of LHA at sea).
MERIDIAN_LHA_DEG = 0.25


def latitude_checks(reduced: pd.DataFrame) -> pd.DataFrame:
    """Latitude by meridian altitude (a sight within :data:`MERIDIAN_LHA_DEG` of LHA 0), by ex-meridian (a Sun,
    Moon, planet or star sight further from the meridian but within its limit, :func:`ex_meridian_limit_minutes`:
    as many minutes of time as the meridian zenith distance has degrees) and by Polaris: one row per such sight with
    its ``row`` label, ``index`` (its row of the table), ``body``, ``method`` ('meridian', 'ex-meridian' or
    'Polaris'), ``lat_deg``, the sight's ``dr_lat_deg``, ``minutes_from_meridian`` and ``limit_minutes`` (the
    ex-meridian's), the sight's ``dr_lon_deg``, and for an ex-meridian, whose hour angle comes from that longitude,
    ``lat_per_10_lon_arcmin``: how far (arcminutes, signed: + north) its latitude moves for 10′ of error in that
    longitude (east), ten times :func:`navred.latitudes.ex_meridian_longitude_sensitivity`, and ``longitude_note``,
    that in words (:func:`longitude_words`), flagged where it is large; NaN and '' for the others."""
    columns = ["row", "index", "body", "method", "lat_deg", "dr_lat_deg", "minutes_from_meridian", "limit_minutes",
               "dr_lon_deg", "lat_per_10_lon_arcmin", "longitude_note"]
    if not len(reduced):
        return pd.DataFrame(columns=columns)
    usable = reduced.status.to_numpy() != SightStatus.ERROR
    lha = reduced.lha_deg.to_numpy(dtype=float)
    bodies = reduced.body_name.to_numpy(dtype=object)
    ho, dec = reduced.ho_deg.to_numpy(dtype=float), reduced.dec_deg.to_numpy(dtype=float)
    dr_lat = reduced.dr_lat_deg.to_numpy(dtype=float)
    minutes = np.abs(wrap_180(lha)) * 4.0
    zenith = np.abs(dr_lat - dec)
    limit = ex_meridian_limit_minutes(zenith)
    not_polaris = usable & (bodies != "Polaris") & np.isfinite(lha)
    on_meridian = not_polaris & ((lha < MERIDIAN_LHA_DEG) | (lha > 360.0 - MERIDIAN_LHA_DEG))
    ex_meridian = not_polaris & ~on_meridian & (minutes <= limit) & (zenith > 1.0)
    polaris = usable & (bodies == "Polaris")
    zn = reduced.zn_deg.to_numpy(dtype=float)
    bearing = np.where((zn > 90.0) & (zn < 270.0), "S", "N")
    meridian = np.flatnonzero(on_meridian)
    by_meridian = latitude_by_meridian_altitude(ho[meridian], dec[meridian], bearing[meridian])
    ex = np.flatnonzero(ex_meridian)
    by_ex = ex_meridian_latitude(ho[ex], dec[ex], lha[ex], dr_lat[ex], bearing[ex])
    slope = ex_meridian_longitude_sensitivity(dec[ex], lha[ex], dr_lat[ex], bearing[ex])
    north = np.flatnonzero(polaris)
    by_polaris = latitude_by_polaris(ho[north], reduced.gha_deg.to_numpy(dtype=float)[north], dec[north],
                                     reduced.dr_lon_deg.to_numpy(dtype=float)[north])
    rows = np.concatenate([meridian, ex, north])
    labels = row_labels(reduced)
    ex_lon = reduced.dr_lon_deg.to_numpy(dtype=float)[ex]
    notes = [""] * meridian.size + [longitude_words(10.0 * d, lon) for d, lon in
                                    zip(np.atleast_1d(slope).tolist(), ex_lon.tolist())] + [""] * north.size
    return pd.DataFrame({"row": labels[rows], "index": rows, "body": bodies[rows],
                         "method": ["meridian"] * meridian.size + ["ex-meridian"] * ex.size + ["Polaris"] * north.size,
                         "lat_deg": np.concatenate([np.atleast_1d(by_meridian), np.atleast_1d(by_ex),
                                                    np.atleast_1d(by_polaris)]),
                         "dr_lat_deg": dr_lat[rows],
                         "minutes_from_meridian": np.where(np.isin(rows, north), np.nan, minutes[rows]),
                         "limit_minutes": np.where(np.isin(rows, ex), limit[rows], np.nan),
                         "dr_lon_deg": reduced.dr_lon_deg.to_numpy(dtype=float)[rows],
                         "lat_per_10_lon_arcmin": np.concatenate([np.full(meridian.size, np.nan),
                                                                  10.0 * np.atleast_1d(slope),
                                                                  np.full(north.size, np.nan)]),
                         "longitude_note": notes}, columns=columns)


def longitude_words(lat_per_10_lon_arcmin: float, dr_lon_deg: float) -> str:
    """What an ex-meridian latitude rests on, beside it: 'rests on the DR longitude 012° 45.1′ W: 10′ of error in
    it moves the latitude 0.4′' and, where that is large (EX_MERIDIAN_SENSITIVE_LAT_PER_LON), a caution."""
    from ..angles import format_angle

    per_ten = abs(float(lat_per_10_lon_arcmin))
    words = (f"rests on the DR longitude {format_angle(float(dr_lon_deg), 'lon')}: 10′ of error in it moves the "
             f"latitude {per_ten:.1f}′")
    if round(per_ten, 1) >= 10.0 * EX_MERIDIAN_SENSITIVE_LAT_PER_LON:  # as it is written: 1.0′ is flagged
        words += " (LONGITUDE-SENSITIVE: check the longitude, or take the sight nearer the meridian)"
    return words


__all__ = ["latitude_checks", "longitude_words", "MERIDIAN_LHA_DEG"]
