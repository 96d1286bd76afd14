"""The entry rows' own working: a compass course made true and a leeway applied (the course through the water),
and the speed through the water from the log's readings. Used by :mod:`navred.io.logdr` (the entries read).

- **Compass course** (common practice, the navigation manuals' rule): true = compass + deviation + variation,
  each east + and west −; the deviation is the row's, or the deviation card's on that compass heading
  (:class:`navred.compass.DeviationCurve`, fitted to the card's checks).
- **Leeway**: the wind sets a sailing ship to leeward of her heading; the course through the water is the true
  heading turned by the leeway toward the side away from the wind (+ to starboard, − to port).
- **Log readings**: the distance the log gives between two readings over the time between them is the speed
  through the water from the first reading until the second (it replaces the speed written between them; a
  sight's own speed, if given, is in force from that sight).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..compass import true_course_deg
from ..constants import NS_PER_HOUR
from ..reckoning import leeway_track_deg
from ..timescales import utc_jd_to_datetime64


def _side(value: float) -> str:
    return f"{abs(value):g}° {'E' if value >= 0 else 'W'}"


def entry_courses(frame: pd.DataFrame, deviation=None) -> pd.DataFrame:
    """The entries' courses through the water: a compass course made true, a leeway applied; the working in
    ``course_working`` ('compass 240° + deviation 3° E + variation 12° W = 231° T; leeway 5° to port: 226°')."""
    compass = frame["compass_course_deg"].to_numpy(dtype=float)
    dev = frame["deviation_deg"].to_numpy(dtype=float).copy()
    from_card = np.isfinite(compass) & ~np.isfinite(dev)
    if from_card.any() and deviation is not None:
        dev[from_card] = deviation.deviation_deg(compass[from_card])
    variation = frame["variation_deg"].to_numpy(dtype=float)
    leeway = frame["leeway_deg"].to_numpy(dtype=float)
    course = frame["course_deg"].to_numpy(dtype=float).copy()
    heading = np.where(np.isfinite(compass), true_course_deg(compass, dev, variation), course)
    water = np.where(np.isfinite(leeway), leeway_track_deg(heading, np.nan_to_num(leeway)), heading)
    working = np.full(len(frame), "", dtype=object)
    for i in np.flatnonzero(np.isfinite(compass) | np.isfinite(leeway)).tolist():
        parts = []
        if np.isfinite(compass[i]):
            card = " (the card's)" if from_card[i] else ""
            parts.append(f"compass {compass[i]:05.1f}° + deviation {_side(dev[i])}{card} + variation "
                         f"{_side(variation[i])} = {heading[i]:05.1f}° T")
        else:
            parts.append(f"heading {heading[i]:05.1f}° T")
        if np.isfinite(leeway[i]) and leeway[i]:
            parts.append(f"leeway {abs(leeway[i]):g}° to {'starboard' if leeway[i] > 0 else 'port'}: "
                         f"{water[i]:05.1f}° through the water")
        working[i] = "; ".join(parts)
    out = frame.copy()
    out["deviation_deg"] = dev
    out["course_deg"] = water
    out["course_working"] = working
    return out


def check_log_readings(is_entry, reading_nm, times, vessels, rows, problems) -> None:
    """A vessel's log readings must not go back, nor two differ at one instant: such a row is refused by name."""
    given = is_entry & np.isfinite(reading_nm) & times["ok"] & ~problems.mask()
    if given.sum() < 2:
        return
    index = np.flatnonzero(given)
    when = utc_jd_to_datetime64(times["jd1"][index], times["jd2"][index]).astype(np.int64)
    for vessel in dict.fromkeys(vessels[index].tolist()):
        mine = index[vessels[index] == vessel]
        t = when[vessels[index] == vessel]
        order = np.argsort(t, kind="stable")
        mine, t = mine[order], t[order]
        r = reading_nm[mine]
        back = np.flatnonzero((np.diff(r) < 0) | ((np.diff(t) == 0) & (np.diff(r) != 0))) + 1
        for k in back.tolist():
            problems.add([mine[k]], "log_reading", f"{r[k]:g}",
                         f"the log reads {r[k]:g} nm here and {r[k - 1]:g} nm at row {rows[mine[k - 1]]} before: a "
                         "log does not run back (a log reset? start its readings again with a departure or "
                         "position entry)")


def log_speeds(frame: pd.DataFrame) -> pd.DataFrame:
    """Each log reading's speed through the water to the vessel's next reading: (reading₂ − reading₁) / hours,
    in ``speed_kn`` from the first reading (replacing a speed written on that row), with its working."""
    readings = frame["log_reading_nm"].to_numpy(dtype=float)
    if np.isfinite(readings).sum() < 2:
        return frame
    out = frame.copy()
    speed = out["speed_kn"].to_numpy(dtype=float).copy()
    working = out["speed_working"].to_numpy(dtype=object).copy()
    when = out["utc"].dt.tz_convert(None).to_numpy().astype("datetime64[ns]").astype(np.int64)
    vessels = out["vessel"].to_numpy(dtype=object)
    for vessel in dict.fromkeys(vessels[np.isfinite(readings)].tolist()):
        mine = np.flatnonzero(np.isfinite(readings) & (vessels == vessel))
        mine = mine[np.argsort(when[mine], kind="stable")]
        hours = np.diff(when[mine]) / NS_PER_HOUR
        run = np.diff(readings[mine])
        for k, i in enumerate(mine[:-1].tolist()):
            if hours[k] <= 0:
                continue
            speed[i] = run[k] / hours[k]
            working[i] = (f"log {readings[i]:g} to {readings[mine[k + 1]]:g} nm (row {out['row'].iat[mine[k + 1]]}): "
                          f"{run[k]:.1f} nm in {hours[k]:.2f} h = {speed[i]:.2f} kn through the water")
    out["speed_kn"] = speed
    out["speed_working"] = working
    return out


__all__ = ["entry_courses", "check_log_readings", "log_speeds"]
