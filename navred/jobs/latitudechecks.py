"""Latitude from single sights by the methods of the trade, as checks and for noon: by meridian altitude, by
ex-meridian within its limit, and by Polaris (:mod:`navred.latitudes`, the core), one row per sight of a reduced
table. Used by navred fix (the latitude checks) and the day's work (the latitude at noon)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..angles import wrap_180
from ..latitudes import (
    ex_meridian_latitude,
    ex_meridian_limit_minutes,
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
    ex-meridian's)."""
    columns = ["row", "index", "body", "method", "lat_deg", "dr_lat_deg", "minutes_from_meridian", "limit_minutes"]
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
    north = np.flatnonzero(polaris)
    by_polaris = latitude_by_polaris(ho[north], reduced.gha_deg.to_numpy(dtype=float)[north], dec[north],
                                     reduced.dr_lon_deg.to_numpy(dtype=float)[north])
    rows = np.concatenate([meridian, ex, north])
    labels = row_labels(reduced)
    return pd.DataFrame({"row": labels[rows], "index": rows, "body": bodies[rows],
                         "method": ["meridian"] * meridian.size + ["ex-meridian"] * ex.size + ["Polaris"] * north.size,
                         "lat_deg": np.concatenate([np.atleast_1d(by_meridian), np.atleast_1d(by_ex),
                                                    np.atleast_1d(by_polaris)]),
                         "dr_lat_deg": dr_lat[rows],
                         "minutes_from_meridian": np.where(np.isin(rows, north), np.nan, minutes[rows]),
                         "limit_minutes": np.where(np.isin(rows, ex), limit[rows], np.nan)}, columns=columns)


__all__ = ["latitude_checks", "MERIDIAN_LHA_DEG"]
