"""The display labels of navred's tables: the words a navigator reads in a sheet, a printed page or the
console, beside the snake_case names (with units) of the library's tables and of ``--csv``.

A table is labelled only where it is shown (a workbook sheet, a PDF): :func:`labelled` renames the
columns it knows and leaves the others as they are. One entry per column name, whichever table holds it (a
class's marking speaks to cadets in words of its own: :data:`navred.io.markingbook.SHEET_LABELS`).
"""

from __future__ import annotations

import pandas as pd

#: snake_case column -> its display label (the unit in brackets, as the workbook's number formats read it)
LABELS = {
    # the day's work (navred.jobs.dayswork)
    "fix_group": "fix group", "fix_utc": "fix (UTC)", "dr_at_fix": "DR at the fix", "set_deg": "set (deg)",
    "set_95_deg": "set ±95 % (deg)", "drift_kn": "drift (kn)", "drift_95_kn": "drift ±95 % (kn)",
    "fix_lat_deg": "fix lat (deg)", "fix_lon_deg": "fix lon (deg)", "dr_lat_deg": "DR lat (deg)",
    "dr_lon_deg": "DR lon (deg)", "utc": "UTC", "estimated_position": "estimated position", "ep": "EP (what it rests on, its time)", "lat_deg": "lat (deg)",
    "lon_deg": "lon (deg)", "zone_h": "zone (h)", "noon_utc": "noon (UTC)", "noon_position": "noon position",
    "noon_from": "noon from", "noon_95_nm": "noon ±95 % circle (nm)", "noon_uncertainty": "noon uncertainty",
    "noon_check": "noon position check", "run_check": "day's run check", "dr_used": "DR used",
    "across_95_nm": "across the line ±95 % (nm)", "along_95_nm": "along the line ±95 % (nm)",
    "uncertainty": "uncertainty", "check": "check", "run_nm": "run (nm)", "course_made_good_deg": "course made good (deg)",
    "speed_made_good_kn": "speed made good (kn)", "through_water_nm": "through the water (nm)",
    "fixes_that_day": "fixes that day", "zone": "ship's zone", "dr_to_fix_nm": "DR to fix (nm)",
    "current_set_deg": "current set (deg)", "current_set_95_deg": "current set ±95 % (deg)",
    "current_drift_kn": "current drift (kn)", "current_in_dr": "current in the DR",
    "dr_set_deg": "DR's current set (deg)", "dr_drift_kn": "DR's current drift (kn)",
    "unaccounted_set_deg": "unaccounted set (deg)", "unaccounted_drift_kn": "unaccounted drift (kn)",
    "kept_dr_lat_deg": "DR kept lat (deg)", "kept_dr_lon_deg": "DR kept lon (deg)",
    "current_95_kn": "current ±95 % (kn)", "current_note": "current from", "to": "steering for",
    "to_go_nm": "to go (nm)", "eta_utc": "ETA (UTC)", "eta_ship_time": "ETA (zone time)", "eta_basis": "ETA by",
    "clock_changes": "clock changes since the last noon", "ship_position": "ship's position",
    "ship_from": "ship's position from", "off_nm": "off the ship (nm)", "bearing_deg": "bearing from the ship (deg)",
    "course_working": "course: the working", "speed_working": "speed: the working",
    "minutes_from_meridian": "from the meridian (min)", "limit_minutes": "ex-meridian limit (min)",
    "lat_per_10_lon_arcmin": "latitude moved by 10′ of DR longitude (′)",
    "longitude_note": "resting on the DR longitude",
    # the DR's entries (navred.io.logdr)
    "course_deg": "course (deg)", "speed_kn": "speed (kn)", "compass_course_deg": "compass course (deg)",
    "deviation_deg": "deviation (deg, E +)", "variation_deg": "variation (deg, E +)", "leeway_deg": "leeway (deg)",
    "log_reading_nm": "log reading (nm)", "clocks_zone_h": "clocks to zone (h)", "clocks_change_h": "clocks changed (h)",
    "body_name": "body", "lat_by": "latitude by",
    # training records (navred.jobs.training)
    "body_kind": "body kind", "blunder_rate": "blunder rate", "personal_error_arcmin": "personal error (′)",
    "standard_error_arcmin": "standard error (′)", "interval_95_arcmin": "95 % interval (′)",
    "scatter_arcmin": "scatter (′)", "trend_arcmin_per_day": "trend (′ per day)",
    "trend_standard_error_arcmin_per_day": "trend standard error (′ per day)",
    "distance_from_reference_nm": "distance from reference (nm)",
    "bearing_to_reference_deg": "bearing from fix to reference (deg)",
    "reference_inside_95": "reference inside 95 % ellipse", "ellipse_semi_major_95_nm": "95 % semi-major (nm)",
    "trend_note": "why no trend", "sight_utc": "UTC", "reference_lat_deg": "reference lat (deg)",
    "reference_lon_deg": "reference lon (deg)", "hc_reference_deg": "Hc at the reference (deg)", "ho_deg": "Ho (deg)",
    "error_arcmin": "error Ho − Hc (′)", "within_track": "within the track",
    # a route's waypoints (navred.jobs.routes)
    "from_start_nm": "from start (nm)", "rhumb_course_to_next_deg": "rhumb course to next (deg)",
    "rhumb_distance_to_next_nm": "rhumb distance to next (nm)",
    # a timepiece's comparisons (navred.io.timesignals)
    "signal_utc": "signal (UTC)", "zone_description_h": "zone (h)", "error_s": "error (s, fast +)",
    "residual_s": "residual (s)", "dial_h": "dial (h)",
}


def label(name: str) -> str:
    """The display label of a column (its own name when it has none)."""
    return LABELS.get(name, name)


def labelled(frame: pd.DataFrame) -> pd.DataFrame:
    """The table with its columns' display labels, for a sheet or a page."""
    return frame.rename(columns={c: LABELS[c] for c in frame.columns if c in LABELS})


__all__ = ["LABELS", "label", "labelled"]
