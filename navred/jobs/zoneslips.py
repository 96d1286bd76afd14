"""The likeliest cause named when a sight's intercept is huge or a fix lands far from its DR: a zone description
that is not the DR longitude's nautical zone, above all one of the wrong sign (the time 2 h out at ZD -1 for +1).
Used by the reduction (each flagged row's note) and by every fix (the fix's warning), alike for every command
and the API."""

from __future__ import annotations

import numpy as np
import pandas as pd


def zone_sign_suspects(frame: pd.DataFrame, flagged: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The rows among ``flagged`` (a huge intercept, a body below the horizon, a fix far from its DR) kept in
    zone time whose zone description is not the nautical zone of their DR longitude (ZD = longitude west / 15°,
    rounded; common practice), and for each the words that name the likeliest cause: above all a ZD of the
    wrong sign, which puts the time out by twice the zone (−1 at 20° W is 2 h, 30° of longitude). Only
    flagged rows: a ship may keep a zone other than her nautical one (a port's summer time), so a zone alone
    is not an error."""
    rows = np.flatnonzero(flagged)
    if "zone_description_used_h" not in frame.columns or not rows.size:
        return rows[:0], np.zeros(0, dtype=object)
    zd = frame["zone_description_used_h"].to_numpy(dtype=float)[rows]
    lon = frame["dr_lon_deg"].to_numpy(dtype=float)[rows]
    with np.errstate(invalid="ignore"):
        nautical = np.rint(-lon / 15.0) + 0.0  # + 0.0: no −0
        other = np.isfinite(zd) & np.isfinite(lon) & (zd != nautical) & (np.abs(lon) < 172.5)  # not by the date line
    texts = np.array([_zone_words(z, x, m) for z, x, m in
                      zip(zd[other].tolist(), lon[other].tolist(), nautical[other].tolist())], dtype=object)
    return rows[other], texts


def _zone_words(zd: float, lon: float, nautical: float) -> str:
    where = f"the DR, {abs(lon):.0f}° {'W' if lon < 0 else 'E'}, is in zone {nautical:+.0f}"
    if zd * nautical < 0:
        return (f"likely cause: the zone description {zd:+.0f} is a zone {'east' if zd < 0 else 'west'} of "
                f"Greenwich, but {where}: a ZD of the wrong sign puts the time {2 * abs(zd):.0f} h out; check its "
                "sign (ZT + ZD = UTC: + west of Greenwich, − east)")
    return (f"possible cause: the zone description {zd:+.0f} is not the DR's zone ({where}): if the watch keeps "
            f"zone {nautical:+.0f}, the time is {abs(zd - nautical):.0f} h out; check the ZD")


def name_zone_slips(results: list, reduced: pd.DataFrame, group: np.ndarray) -> None:
    """A fix far from its DR (``result.dr_distance_nm`` beyond ``dr_allowed_nm``) whose sights keep a zone other
    than their DR's nautical zone gets the likeliest cause added to its warnings (:func:`zone_sign_suspects`):
    the same words for every command and the API. ``group``: each row's index into ``results`` (−1: none)."""
    far = [k for k, result in enumerate(results) if result is not None and
           np.isfinite(result.dr_distance_nm) and result.dr_distance_nm > result.dr_allowed_nm]
    if not far or "zone_description_used_h" not in reduced.columns:
        return
    rows, texts = zone_sign_suspects(reduced, np.isin(group, far))
    named: dict[int, str] = {}
    for row, text in zip(rows.tolist(), texts.tolist()):
        named.setdefault(int(group[row]), text)
    for k, text in named.items():
        results[k].warnings.append(text)


__all__ = ["zone_sign_suspects", "name_zone_slips"]
