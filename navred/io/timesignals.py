"""The timepieces' rating log: time-signal comparisons read, each timepiece's error and daily rate fitted,
and the error predicted at a sight. Edge code over :mod:`navred.rating` (the core).

A rating log is a table (CSV or .xlsx), one row a comparison, read through navred's bounded reader
(docs/security.md) under the sight log's rules for its cells:

- ``utc``: the instant of the time signal, ISO 8601 with Z or an offset (a spreadsheet date-time cell is
  taken as UTC, as in a sight log);
- ``reading``: what the timepiece showed at the signal, hh:mm:ss (a decimal second allowed);
- ``timepiece``: which timepiece (may be left out when the log rates one only);
- ``zone_description``: the zone the timepiece keeps (blank: 0, a chronometer keeping UTC).

The error of a comparison is the reading less the signal's time in the timepiece's zone, taken within
±12 hours (fast +); an error of more than 6 hours is refused (the zone description is wrong, most likely). A row that cannot be read is rejected with its row number, column and reason, as a
sight log's; the others are fitted (:func:`navred.rating.fit_rate`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..constants import NS_PER_DAY
from ..errors import NavredError, api_boundary
from ..rating import RateChange, RateFit, error_in_half_day, fit_rate, rate_change, residuals_s
from ..timescales import utc_jd_to_datetime64, utc_julian_date, utc_julian_date_from_components
from ..timework import DATE_ORDERS, iso_instant_text, parse_time_of_day, parse_zone_description
from ..vocabulary import normalise_header, unknown_header_refusal
from .readers import REJECTED_COLUMNS, LogbookError, LogSource, read_table

#: The rating log's columns and the headers that name them.
RATING_COLUMNS = {
    "utc": ("utc", "signal_utc", "signal", "time_signal", "utc_of_signal", "signal_time_utc"),
    "reading": ("reading", "timepiece_reading", "chronometer_reading", "watch_reading", "reads"),
    "timepiece": ("timepiece", "chronometer", "chronometer_name", "watch_name"),
    "zone_description": ("zone_description", "zd", "zone"),
}
_HEADERS = {spelling: key for key, spellings in RATING_COLUMNS.items() for spelling in spellings}
#: A prediction further than this beyond the comparisons (days) is noted: the rate may have changed.
EXTRAPOLATION_NOTE_DAYS = 30.0
_EPOCH = np.datetime64("2000-01-01T00:00:00", "ns")


def days_of(utc64: np.ndarray) -> np.ndarray:
    """Instants (datetime64[ns] UTC) as days since 2000-01-01 (the rating's time scale)."""
    return (np.asarray(utc64, dtype="datetime64[ns]") - _EPOCH).astype(np.int64) / NS_PER_DAY


@dataclass(frozen=True)
class Timepiece:
    """One timepiece: its comparisons (in time order), the fitted line and the test for a change of rate."""

    name: str
    comparisons: pd.DataFrame  # source, row, signal_utc, reading, zone_description_h, error_s, residual_s
    fit: RateFit
    change: RateChange

    @property
    def last_signal(self) -> pd.Timestamp:
        return self.comparisons.signal_utc.iloc[-1]

    def summary(self) -> str:
        f = self.fit
        n = int(f.n)
        last = self.comparisons.iloc[-1]
        error_now = float(f.error_s(days_of(np.array([last.signal_utc.tz_convert(None).to_datetime64()]))[0]))
        if n < 2:
            rate = "rate unknown (one comparison)"
        elif not float(f.spread_days) > 0:
            rate = "rate unknown (every comparison at one instant)"
        elif n == 2:
            rate = f"{rate_words(f.rate_s_per_day)} (two comparisons: no uncertainty)"
        else:
            rate = (f"{rate_words(f.rate_s_per_day, f.rate_95_s_per_day)} (95 %), scatter {f.sigma_s:.2f} s")
        text = (f"{self.name or 'the timepiece'}: {n} comparison{'s' if n != 1 else ''} from "
                f"{self.comparisons.signal_utc.iloc[0]:%Y-%m-%d} to {last.signal_utc:%Y-%m-%d}; error "
                f"{abs(error_now):.1f} s {'fast' if error_now >= 0 else 'slow'} at the last signal; {rate}")
        if self.change.changed:
            at = self.comparisons.signal_utc.iloc[self.change.split_index]
            text += (f". RATE CHANGED after {at:%Y-%m-%d %H:%M} UTC: {rate_words(self.change.rate_before_s_per_day)} "
                     f"before, {rate_words(self.change.rate_after_s_per_day)} after (F {self.change.f_statistic:.1f} > "
                     f"{self.change.f_critical:.1f}); rate it again from the later signals")
        return text


def rate_words(rate_s_per_day: float, interval_95_s: float | None = None) -> str:
    """A timepiece's daily rate as the trade says it: 'gaining 0.46 s a day' (a rate that makes it fast),
    'losing 1.20 s a day', with its 95 % interval when given ('gaining 0.46 ± 0.10 s a day')."""
    rate = float(rate_s_per_day)
    spread = f" ± {float(interval_95_s):.2f}" if interval_95_s is not None else ""
    if f"{abs(rate):.2f}" == "0.00":
        return f"neither gaining nor losing (0.00{spread} s a day)"
    return f"{'gaining' if rate > 0 else 'losing'} {abs(rate):.2f}{spread} s a day"


@dataclass(frozen=True)
class Ratings:
    """The rating log read: every timepiece, and the rows that could not be read."""

    timepieces: dict[str, Timepiece]
    rejected: pd.DataFrame
    sources: tuple[str, ...] = ()
    notes: list[str] = field(default_factory=list)

    def comparisons_table(self) -> pd.DataFrame:
        """Every comparison of every timepiece with its error and residual (the --csv table), the signal's
        instant as ISO 8601 with Z."""
        frames = [p.comparisons.assign(signal_utc=p.comparisons.signal_utc.dt.strftime("%Y-%m-%dT%H:%M:%SZ"))
                  for p in self.timepieces.values()]
        return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()

    def predict(self, names: np.ndarray, utc64: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Each sight's predicted error (seconds, fast +), its standard error, and the note that says where it
        came from ('' and NaN where the timepiece is not rated). ``names`` '' means the one rated timepiece."""
        names = np.asarray(names, dtype=object)
        days = days_of(utc64)
        error, se = np.full(names.size, np.nan), np.full(names.size, np.nan)
        note = np.full(names.size, "", dtype=object)
        only = next(iter(self.timepieces)) if len(self.timepieces) == 1 else None
        for name in dict.fromkeys(names.tolist()):
            key = name or only
            piece = self.timepieces.get(key) if key is not None else None
            if piece is None:
                continue
            rows = np.flatnonzero(names == name)
            error[rows] = piece.fit.error_s(days[rows])
            se[rows] = piece.fit.error_se_at(days[rows])
            last = float(days_of(np.array([piece.last_signal.tz_convert(None).to_datetime64()]))[0])
            rate = "no rate" if int(piece.fit.n) < 2 or not float(piece.fit.spread_days) > 0 \
                else rate_words(float(piece.fit.rate_s_per_day))
            for i in rows.tolist():
                beyond = days[i] - last
                text = f"{piece.name or 'the timepiece'} rated: {rate}"
                if beyond > EXTRAPOLATION_NOTE_DAYS:
                    text += f", {beyond:.0f} days after its last signal (check it against a signal)"
                if piece.change.changed:
                    text += ", its rate changed (see the Timepieces sheet)"
                note[i] = text
        return error, se, note


def _cell_text(value) -> str:
    if value is None or (isinstance(value, float) and np.isnan(value)):
        return ""
    return str(value).strip()


@api_boundary
def read_rating_log(source: LogSource, *, dates: str | None = None) -> Ratings:
    """Read a rating log (one file, several, or a folder) and fit each timepiece's error and rate.

    ``dates``: the order of numeric dates (``'day-first'`` or ``'month-first'``), as for a sight log;
    without it such a date is refused with both of its readings."""
    if dates is not None and dates not in DATE_ORDERS:
        raise LogbookError(f"dates {dates!r} is not one of {', '.join(DATE_ORDERS)}")
    tables = read_table(source)
    rows, problems, notes = [], [], []
    for table in tables:
        keys = {}
        unread = []
        for k, header in enumerate(table.header):
            key = _HEADERS.get(normalise_header(header))
            if key is not None:
                if key in keys:
                    raise LogbookError(f"{table.source}: two columns give the {key}: {table.header[keys[key]]!r} and "
                                       f"{header!r}; keep one")
                keys[key] = k
            elif header.strip():
                refusal = unknown_header_refusal(header, _HEADERS)
                if refusal:
                    raise LogbookError(f"{table.source}: {refusal}")
                unread.append(header)
        if unread:
            notes.append(f"{Path(table.source).name}: column{'s' if len(unread) > 1 else ''} of the rating log navred "
                         f"does not read, kept aside: {', '.join(repr(h) for h in unread)}")
        notes.extend(table.notes)
        missing = [k for k in ("utc", "reading") if k not in keys]
        if missing:
            raise LogbookError(f"{table.source} is not a rating log: it has no {' or '.join(missing)} column; a rating "
                               "log gives the utc of each time signal and the reading of the timepiece at it "
                               "(docs/timepieces.md)")
        for index, number in enumerate(table.row_numbers.tolist()):
            if index in table.row_problems:
                header, reason = table.row_problems[index]
                problems.append((table.source, number, header or "(row)", "", reason))
                continue
            cells = {key: table.columns[k].iloc[index] for key, k in keys.items()}
            row, trouble = _comparison(cells, dates)
            for column, value, reason in trouble:
                header = table.header[keys[column]] if column in keys else column
                problems.append((table.source, number, header, value, reason))
            if not trouble:
                rows.append({"source": table.source, "row": number, **row})
    frame = pd.DataFrame(rows, columns=["source", "row", "timepiece", "signal_utc", "reading", "zone_description_h",
                                        "error_s"])
    frame, twice = _one_comparison_an_instant(frame)
    rejected = pd.DataFrame(problems + twice, columns=REJECTED_COLUMNS).sort_values(["source", "row"], kind="stable")
    rejected = rejected.reset_index(drop=True)
    pieces = {}
    for name, part in frame.groupby("timepiece", sort=False):
        part = part.sort_values("signal_utc", kind="stable").reset_index(drop=True)
        days = days_of(part.signal_utc.dt.tz_convert(None).to_numpy())
        errors = part.error_s.to_numpy(dtype=float)
        fit = fit_rate(days, errors)
        part["residual_s"] = residuals_s(fit, days, errors)
        pieces[str(name)] = Timepiece(str(name), part, fit, rate_change(days, errors))
    if not pieces:
        raise LogbookError("the rating log has no comparison that could be read: "
                           + "; ".join(f"row {r.row}: {r.column}: {r.reason}" for r in rejected.head(5).itertuples()))
    return Ratings(pieces, rejected, tuple(t.source for t in tables), notes)


def _one_comparison_an_instant(frame: pd.DataFrame) -> tuple[pd.DataFrame, list[tuple]]:
    """One comparison of a timepiece at one instant: two that agree are one (the later row is refused as a
    repeat); two that disagree are both refused, neither trusted (as two positions of a track at one instant)."""
    if frame.empty:
        return frame, []
    key = ["timepiece", "signal_utc"]
    repeated = frame.duplicated(key, keep=False)
    if not repeated.any():
        return frame, []
    refused = []
    drop = np.zeros(len(frame), dtype=bool)
    for _, part in frame[repeated].groupby(key, sort=False):
        rows = part.index.to_numpy()
        labels = ", ".join(f"row {r}" for r in part.row)
        when = f"{part.signal_utc.iloc[0]:%Y-%m-%d %H:%M:%S}"
        if np.ptp(part.error_s.to_numpy(dtype=float)) < 0.05:
            for index in rows[1:]:
                drop[frame.index.get_loc(index)] = True
                refused.append((frame.source[index], int(frame.row[index]), "utc", when,
                                f"the same comparison as row {int(part.row.iloc[0])} (one signal, one reading): "
                                "counted once"))
        else:
            for index in rows:
                drop[frame.index.get_loc(index)] = True
                refused.append((frame.source[index], int(frame.row[index]), "reading", frame.reading[index],
                                f"{labels} compare the timepiece with the one signal at {when} UTC and disagree: "
                                "neither is used; keep the right one"))
    return frame[~drop].reset_index(drop=True), refused


def _comparison(cells: dict, dates: str | None = None) -> tuple[dict, list[tuple[str, str, str]]]:
    """One row: the signal's instant, the reading and the zone, the error; or the problems found."""
    trouble = []
    signal = cells.get("utc")
    stamp = None
    if _cell_text(signal) == "":
        trouble.append(("utc", "", "no signal time: give the utc of the time signal"))
    else:
        try:
            if isinstance(signal, (pd.Timestamp, np.datetime64)) or hasattr(signal, "year"):
                stamp = pd.Timestamp(signal)
                stamp = stamp.tz_localize("UTC") if stamp.tzinfo is None else stamp.tz_convert("UTC")
            else:
                jd1, jd2 = utc_julian_date(iso_instant_text(_cell_text(signal), dates))
                stamp = pd.Timestamp(utc_jd_to_datetime64(jd1, jd2)[()]).tz_localize("UTC")
        except (NavredError, ValueError, TypeError) as exc:
            trouble.append(("utc", _cell_text(signal), str(exc)))
    reading = cells.get("reading")
    clock = None
    if _cell_text(reading) == "":
        trouble.append(("reading", "", "no reading: give what the timepiece showed at the signal (hh:mm:ss)"))
    else:
        try:
            clock = parse_time_of_day(reading)
        except (NavredError, ValueError, TypeError) as exc:
            trouble.append(("reading", _cell_text(reading), str(exc)))
    zone = 0
    if _cell_text(cells.get("zone_description")):
        try:
            zone = parse_zone_description(cells["zone_description"])
        except (NavredError, ValueError, TypeError) as exc:
            trouble.append(("zone_description", _cell_text(cells["zone_description"]), str(exc)))
    name = _cell_text(cells.get("timepiece"))  # text: written as text wherever it goes
    if trouble:
        return {}, trouble
    # the signal's time of day in the timepiece's zone (ZT = UTC − ZD), against the reading
    local = stamp - pd.Timedelta(hours=zone)
    signal_s = local.hour * 3600 + local.minute * 60 + local.second + local.microsecond / 1e6
    hours, minutes, seconds = clock
    jd1, jd2, reason = utc_julian_date_from_components(2000, 1, 1, hours, minutes, seconds)
    if str(np.asarray(reason).item()):
        return {}, [("reading", _cell_text(reading), str(np.asarray(reason).item()))]
    reading_s = hours * 3600 + minutes * 60 + seconds
    error = float(error_in_half_day(reading_s - signal_s))
    if abs(error) > 6 * 3600:
        return {}, [("reading", _cell_text(reading), f"the reading is {abs(error) / 3600:.1f} hours from the signal's time "
                     "in the timepiece's zone: is the zone description right?")]
    return {"timepiece": name, "signal_utc": stamp, "reading": _cell_text(reading), "zone_description_h": zone,
            "error_s": error}, []


__all__ = ["rate_words", "Ratings", "Timepiece", "read_rating_log", "RATING_COLUMNS", "days_of", "EXTRAPOLATION_NOTE_DAYS"]
