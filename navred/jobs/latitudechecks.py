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
#: An ex-meridian latitude further than this (degrees) from the DR latitude it was reduced with cannot be trusted:
#: the reduction's factor a is entered with the DR latitude, and the ex-meridian tables with whole degrees of
#: latitude (the ex-meridian tables of the navigation manuals; from memory), so a latitude a degree or more off
#: the DR means the table was entered at the wrong latitude, the DR is wrong, or the sight is.
EX_MERIDIAN_DR_DEG = 1.0

#: The rule the ex-meridian limit follows, as the outputs cite it.
EX_MERIDIAN_RULE = ("the ex-meridian limit: no more minutes of time from meridian passage than the meridian zenith "
                    "distance has degrees (the rule of thumb of the navigation manuals; from memory)")


def ex_meridian_flags(minutes_from_meridian: np.ndarray, lat_deg: np.ndarray, dr_lat_deg: np.ndarray,
                      dec_deg: np.ndarray) -> np.ndarray:
    """Why each ex-meridian latitude cannot be trusted, in the trade's words ('' where it can): the sight lies
    beyond the ex-meridian limit once the zenith distance is taken from the latitude found (the DR's put it
    within), or the latitude found is :data:`EX_MERIDIAN_DR_DEG` or more from the DR latitude it was reduced
    with. Vectorised over sights."""
    minutes = np.asarray(minutes_from_meridian, dtype=float)
    lat, dr_lat = np.asarray(lat_deg, dtype=float), np.asarray(dr_lat_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    found_limit = ex_meridian_limit_minutes(np.abs(lat - dec))
    beyond = minutes > found_limit
    apart = np.abs(lat - dr_lat) * 60.0
    wild = apart >= EX_MERIDIAN_DR_DEG * 60.0
    out = np.full(minutes.size, "", dtype=object)
    for k in np.flatnonzero(beyond | wild).tolist():
        why = []
        if beyond[k]:
            why.append(f"beyond the ex-meridian limit: {minutes[k]:.1f} min from meridian passage, and the "
                       f"zenith distance from the latitude found is {abs(lat[k] - dec[k]):.1f}° (limit "
                       f"{found_limit[k]:.1f} min; {EX_MERIDIAN_RULE}); the DR's latitude put it within")
        if wild[k]:
            why.append(f"the latitude found is {apart[k]:.0f}′ from the DR latitude the reduction was worked with "
                       f"(the reduction is entered with the DR latitude: {EX_MERIDIAN_DR_DEG:g}° or more off means "
                       "the DR or the sight is wrong)")
        out[k] = ("CANNOT BE TRUSTED: " + "; and ".join(why)
                  + ": not used as a latitude; the sight's line of position (the intercept, exact) is kept")
    return out


def latitude_checks(reduced: pd.DataFrame) -> pd.DataFrame:
    """Latitude by meridian altitude (a sight within :data:`MERIDIAN_LHA_DEG` of LHA 0), by ex-meridian (a Sun,
    Moon, planet or star sight further from the meridian but within its limit, :func:`ex_meridian_limit_minutes`:
    as many minutes of time as the meridian zenith distance has degrees) and by Polaris: one row per such sight with
    its ``row`` label, ``index`` (its row of the table), ``body``, ``method`` ('meridian', 'ex-meridian' or
    'Polaris'), ``lat_deg``, the sight's ``dr_lat_deg``, ``minutes_from_meridian``, ``limit_minutes`` (the
    ex-meridian's), ``flag`` (why an ex-meridian latitude cannot be trusted, :func:`ex_meridian_flags`; ''
    for none), the sight's ``dr_lon_deg``, and for an ex-meridian, whose hour angle comes from that longitude,
    ``lat_per_10_lon_arcmin``: how far (arcminutes, signed: + north) its latitude moves for 10′ of error in that
    longitude (east), ten times :func:`navred.latitudes.ex_meridian_longitude_sensitivity`, and ``longitude_note``,
    that in words (:func:`longitude_words`), flagged where it is large; NaN and '' for the others."""
    columns = ["row", "index", "body", "method", "lat_deg", "dr_lat_deg", "minutes_from_meridian", "limit_minutes",
               "flag", "dr_lon_deg", "lat_per_10_lon_arcmin", "longitude_note"]
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
    flags = np.concatenate([np.full(meridian.size, "", dtype=object),
                            ex_meridian_flags(minutes[ex], np.atleast_1d(by_ex), dr_lat[ex], dec[ex]),
                            np.full(north.size, "", dtype=object)])
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
                         "flag": flags,
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


__all__ = ["latitude_checks", "longitude_words", "ex_meridian_flags", "MERIDIAN_LHA_DEG", "EX_MERIDIAN_DR_DEG",
           "EX_MERIDIAN_RULE"]
