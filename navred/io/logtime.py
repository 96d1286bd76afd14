"""The time working of a sight log as written: each row's instant from utc, or from the date, the zone time and
the zone description (ZT + ZD = UTC), less the watch error (given, or predicted by a timepiece's rating).
Used by :mod:`navred.io.logbook`."""

from __future__ import annotations

import numpy as np

from ..constants import SECONDS_PER_DAY
from ..timescales import utc_jd_to_datetime64, utc_julian_date_from_components, utc_minus_seconds
from .logcells import cell_text, cell_texts, chosen_texts, floats, texts_of, words

#: A utc and a zone time given for one sight must agree this closely (seconds).
TIME_AGREEMENT_S = 1.0


def time_working(parsed, gathered, problems, rates=None) -> dict:
    """Each row's instant from utc, or from date, zone_time and zone_description, less the watch error."""
    utc, zone_time, date, zd = parsed["utc"], parsed["zone_time"], parsed["date"], parsed["zone_description"]
    n = utc.ok.size
    has_utc = utc.ok
    utc_blank, zone_blank = gathered["utc"].blank, gathered["zone_time"].blank
    cell_date = np.isfinite(zone_time.value[3])
    day = np.where(date.ok[None, :], date.value, zone_time.value[3:6])
    day_known = date.ok | cell_date
    conflict = zone_time.ok & date.ok & cell_date & np.any(date.value != zone_time.value[3:6], axis=0)
    for i in np.flatnonzero(conflict):
        problems.add([i], gathered["zone_time"].headers[i], cell_text(gathered["zone_time"].values.iloc[i]),
                     f"the zone time's own date differs from the date column "
                     f"({cell_text(gathered['date'].values.iloc[i])})")
    wanted = zone_time.ok & ~has_utc & ~conflict
    missing_date = wanted & ~day_known & gathered["date"].blank
    problems.add(np.flatnonzero(missing_date), "date", "", "a zone time needs its date: give the date column")
    missing_zone = wanted & ~zd.ok & gathered["zone_description"].blank
    problems.add(np.flatnonzero(missing_zone), "zone_description", "",
                 "a zone time needs its zone description (ZT + ZD = UTC)")
    complete = zone_time.ok & day_known & zd.ok & ~conflict
    zone = np.vstack([day, zone_time.value[:3], -60.0 * zd.value[None, :]])
    if gathered["utc"].present or gathered["zone_time"].present:
        no_time = utc_blank & zone_blank
        problems.add(np.flatnonzero(no_time), "utc" if gathered["utc"].present else "zone_time", "",
                     "no time: give utc, or date with zone_time and zone_description")
    else:
        problems.add(np.arange(n), "utc", "", "required column utc (or date, zone_time and zone_description) "
                                              "is missing")
    use_zone = ~has_utc & complete
    usable = has_utc | use_zone
    chosen = np.where(use_zone[None, :], zone, utc.value)
    jd1, jd2, reasons = utc_julian_date_from_components(*np.where(usable[None, :], chosen, 0.0))
    refused = usable & (reasons != "")
    for i in np.flatnonzero(refused):
        key = "utc" if has_utc[i] else "zone_time"
        written = cell_text(gathered[key].values.iloc[i])
        problems.add([i], gathered[key].headers[i], written, f"{written.strip()!r}: {reasons[i]}")
    ok = usable & ~refused
    both = ok & has_utc & complete
    if both.any():
        z1, z2, _ = utc_julian_date_from_components(*zone[:, both])
        apart = np.abs(((jd1[both] - z1) + (jd2[both] - z2)) * SECONDS_PER_DAY)
        for i in np.flatnonzero(both)[~(apart <= TIME_AGREEMENT_S)]:
            problems.add([i], gathered["zone_time"].headers[i], cell_text(gathered["zone_time"].values.iloc[i]),
                         f"utc {cell_text(gathered['utc'].values.iloc[i])} and the zone time disagree: give one, or "
                         "correct it")
    error = floats(parsed["watch_error"], 0.0)
    error_from = chosen_texts(parsed["watch_error"].ok, ["", "given"])
    error_warning = np.full(n, "", dtype=object)
    rating_notes: list[str] = []
    # a timepiece's error from its rating, where the log keeps zone time and gives no watch error
    piece = words(parsed["timepiece"])
    unrated = use_zone & ~parsed["watch_error"].ok & ok
    if rates is not None and unrated.any():
        rows = np.flatnonzero(unrated)
        when = utc_jd_to_datetime64(jd1[rows], jd2[rows])
        predicted, _, note, warning = rates.predict_with_warnings(piece[rows], when)
        found = np.isfinite(predicted)
        error[rows[found]] = predicted[found]
        error_from[rows[found]] = note[found]
        error_warning[rows[found]] = warning[found]
        rating_notes = rates.change_notes(piece[rows[found]].tolist())
        named = rows[~found & (piece[rows] != "")]
        problems.add(named, gathered["timepiece"].headers[named], piece[named],
                     "this timepiece has no time signals in the rating log: give its watch_error, or its signals")
    elif rates is None:
        named = np.flatnonzero(unrated & (piece != ""))
        problems.add(named, gathered["timepiece"].headers[named], piece[named],
                     "a timepiece is named but no rating log was given (--rates FILE): give its watch_error, or "
                     "the rating log of its time signals")
    jd1, jd2 = np.where(ok, jd1, np.nan), np.where(ok, jd2, np.nan)
    moved = ok & (error != 0.0)
    if moved.any():
        jd1[moved], jd2[moved] = utc_minus_seconds(jd1[moved], jd2[moved], error[moved])
    # the time as written, for the time working
    as_read = np.where(~utc_blank, cell_texts(gathered["utc"].values), cell_texts(gathered["zone_time"].values))
    shown_zone = use_zone | both
    zone_date = texts_of(n, "")
    if shown_zone.any():
        zone_date[shown_zone] = [f"{int(y):04d}-{int(m):02d}-{int(d):02d}" for y, m, d in day[:, shown_zone].T]
    return {"jd1": jd1, "jd2": jd2, "ok": ok, "watch_error_s": error, "watch_error_from": error_from,
            "watch_error_warning": error_warning, "notes": rating_notes,
            "zd": np.where(shown_zone, zd.value, np.nan), "zone_date": zone_date,
            "time_given": chosen_texts(np.where(has_utc, 2, np.where(use_zone, 1, 0)), ["", "zone time", "utc"]),
            "as_read": as_read}
