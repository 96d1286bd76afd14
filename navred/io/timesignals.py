"""The timepieces' rating log: time-signal comparisons read, each timepiece's error and daily rate fitted,
and the error predicted at a sight. Edge code over :mod:`navred.rating` (the core).

A rating log is a table (CSV or .xlsx), one row a comparison, read through navred's bounded reader
(docs/security.md) under the sight log's rules for its cells:

- ``utc``: the instant of the time signal, ISO 8601 with Z or an offset (a spreadsheet date-time cell is
  taken as UTC, as in a sight log);
- ``reading``: what the timepiece showed at the signal, hh:mm:ss (a decimal second allowed);
- ``timepiece``: which timepiece (may be left out when the log rates one only);
- ``zone_description``: the zone the timepiece keeps (blank: 0, a chronometer keeping UTC);
- ``dial``: 12 for a 12-hour dial (a marine chronometer's), 24 (or blank) for a 24-hour one.

The error of a comparison is the reading less the signal's time in the timepiece's zone, taken within
±12 hours (fast +), within ±6 hours on a 12-hour dial; an error of more than 6 hours is refused (the zone description is wrong, most likely). A row that cannot be read is rejected with its row number, column and reason, as a
sight log's; the others are fitted (:func:`navred.rating.fit_rate`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..constants import NS_PER_DAY
from ..errors import NavredError, api_boundary
from ..rating import (
    RateChange,
    RateFit,
    error_in_half_day,
    error_on_twelve_hour_dial,
    fit_rate,
    fit_step,
    rate_change,
)
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
    "dial": ("dial", "dial_hours", "dial_h"),
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
    """One timepiece: its comparisons (in time order), the fitted line and the test for a change of rate.

    ``fit`` is the line through every comparison; after a change (``change.changed``) a sight takes the line
    of its own side of it (:meth:`lines`): the later side's rate after a change of rate, the common rate with
    the step after a reset."""

    name: str
    comparisons: pd.DataFrame  # source, row, signal_utc, reading, zone_description_h, error_s, residual_s
    fit: RateFit
    change: RateChange

    @property
    def last_signal(self) -> pd.Timestamp:
        return self.comparisons.signal_utc.iloc[-1]

    def days(self) -> np.ndarray:
        return days_of(self.comparisons.signal_utc.dt.tz_convert(None).to_numpy())

    def lines(self) -> tuple[RateFit, RateFit]:
        """The line before the change and the line after it (both the one line when nothing changed)."""
        if not self.change.changed:
            return self.fit, self.fit
        days, errors = self.days(), self.comparisons.error_s.to_numpy(dtype=float)
        split = self.change.split_index
        if self.change.kind == "reset":
            step = fit_step(days, errors, split)
            return step.before, step.after
        return fit_rate(days[:split + 1], errors[:split + 1]), fit_rate(days[split + 1:], errors[split + 1:])

    def line_of(self, days: np.ndarray) -> np.ndarray:
        """For each time (days), whether the later line is the one in force (at or after the first signal past
        the change)."""
        if not self.change.changed:
            return np.zeros(np.shape(days), dtype=bool)
        return np.asarray(days) >= self.days()[self.change.split_index + 1]

    def change_text(self) -> str:
        """What changed, when, in words ('' when nothing did)."""
        c = self.change
        if not c.changed:
            return ""
        before = self.comparisons.signal_utc.iloc[c.split_index]
        after = self.comparisons.signal_utc.iloc[c.split_index + 1]
        between = f"between the signals of {before:%Y-%m-%d %H:%M} and {after:%Y-%m-%d %H:%M} UTC"
        if c.kind == "reset":
            step = f"{abs(c.step_s):.1f} s {'fast' if c.step_s > 0 else 'slow'}er" if c.step_s else "0.0 s"
            return (f"RESET {between}: its error stepped {step}, the rate unchanged "
                    f"({rate_words(c.common_rate_s_per_day, c.common_rate_95_s_per_day)}, 95 %; the rates either "
                    f"side, {rate_words(c.rate_before_s_per_day)} and {rate_words(c.rate_after_s_per_day)}, agree); "
                    "sights after it take the error after the step")
        return (f"RATE CHANGED {between}: {rate_words(c.rate_before_s_per_day)} before, "
                f"{rate_words(c.rate_after_s_per_day)} after (a change beyond the signals' own scatter, at 99 %); "
                "sights after it take the later signals' line")

    def summary(self) -> str:
        f = self.lines()[1]
        n = int(self.fit.n)
        last = self.comparisons.iloc[-1]
        error_now = float(f.error_s(days_of(np.array([last.signal_utc.tz_convert(None).to_datetime64()]))[0]))
        if int(f.n) < 2:
            rate = "rate unknown (one comparison)"
        elif not float(f.spread_days) > 0:
            rate = "rate unknown (every comparison at one instant)"
        elif int(f.n) == 2:
            rate = f"{rate_words(f.rate_s_per_day)} (two comparisons: no uncertainty)"
        else:
            rate = (f"{rate_words(f.rate_s_per_day, f.rate_95_s_per_day)} (95 %), scatter {float(f.sigma_s):.2f} s")
        read = float(last.error_s)
        read_text = (f" by the rated line (the signal read {abs(read):.1f} s {'fast' if read >= 0 else 'slow'})"
                     if abs(read - error_now) >= 0.05 else "")
        text = (f"{self.name or 'the timepiece'}: {n} comparison{'s' if n != 1 else ''} from "
                f"{self.comparisons.signal_utc.iloc[0]:%Y-%m-%d} to {last.signal_utc:%Y-%m-%d}; error "
                f"{abs(error_now):.1f} s {'fast' if error_now >= 0 else 'slow'} at the last signal{read_text}; {rate}")
        if self.change.changed:
            text += ". " + self.change_text()
        return text


def rate_words(rate_s_per_day: float, interval_95_s: float | None = None) -> str:
    """A timepiece's daily rate as the trade says it: 'gaining 0.46 s a day' (a rate that makes it fast),
    'losing 1.20 s a day', with its 95 % interval when given ('gaining 0.46 ± 0.10 s a day')."""
    rate = float(rate_s_per_day)
    spread = f" ± {float(interval_95_s):.2f}" if interval_95_s is not None else ""
    if f"{abs(rate):.2f}" == "0.00":
        return f"neither gaining nor losing (0.00{spread} s a day)"
    return f"{'gaining' if rate > 0 else 'losing'} {abs(rate):.2f}{spread} s a day"


def _span_text(days: float) -> str:
    return f"{days * 24:.1f} h" if days < 2 else f"{days:.1f} days"


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
        came from ('' and NaN where the timepiece is not rated). ``names`` '' means the one rated timepiece.
        The warnings (:meth:`predict_warnings`) say which errors are extrapolated."""
        error, se, note, _ = self.predict_with_warnings(names, utc64)
        return error, se, note

    def change_notes(self, names) -> list[str]:
        """A note for each timepiece among ``names`` ('' the one rated) whose rate changed or that was reset, for
        every command that takes a sight's error from it."""
        only = next(iter(self.timepieces)) if len(self.timepieces) == 1 else None
        notes = []
        for name in dict.fromkeys(list(names)):
            piece = self.timepieces.get(name or only) if (name or only) is not None else None
            if piece is not None and piece.change.changed:
                notes.append(f"timepiece {piece.name or 'the timepiece'}: {piece.change_text()}")
        return list(dict.fromkeys(notes))

    def predict_with_warnings(self, names: np.ndarray, utc64: np.ndarray):
        """As :meth:`predict`, and a fourth array: the warning of each sight whose error is extrapolated (before
        the first signal, past the last, or across a change of rate or a reset), '' for the others."""
        names = np.asarray(names, dtype=object)
        days = days_of(utc64)
        error, se = np.full(names.size, np.nan), np.full(names.size, np.nan)
        note = np.full(names.size, "", dtype=object)
        warning = np.full(names.size, "", dtype=object)
        only = next(iter(self.timepieces)) if len(self.timepieces) == 1 else None
        for name in dict.fromkeys(names.tolist()):
            key = name or only
            piece = self.timepieces.get(key) if key is not None else None
            if piece is None:
                continue
            rows = np.flatnonzero(names == name)
            before, after = piece.lines()
            later = piece.line_of(days[rows])
            error[rows] = np.where(later, after.error_s(days[rows]), before.error_s(days[rows]))
            se[rows] = np.where(later, after.error_se_at(days[rows]), before.error_se_at(days[rows]))
            signals = piece.days()
            label = piece.name or "the timepiece"
            for k, i in enumerate(rows.tolist()):
                line = after if later[k] else before
                rate = ("no rate" if int(line.n) < 2 or not float(line.spread_days) > 0
                        else rate_words(float(line.rate_s_per_day)))
                text = f"{label} rated: {rate}"
                if piece.change.changed:
                    text += (f", {'after' if later[k] else 'before'} its "
                             f"{'reset' if piece.change.kind == 'reset' else 'change of rate'}")
                note[i] = text
                warning[i] = self._warning(piece, days[i], signals, before, after, bool(later[k]), se[i])
        return error, se, note, warning

    @staticmethod
    def _warning(piece: Timepiece, day: float, signals: np.ndarray, before: RateFit, after: RateFit, later: bool,
                 se: float) -> str:
        label = piece.name or "the timepiece"
        # what the rating's ± covers: the signals' scatter about their rate, not a rate that changes unseen; below
        # the tenth of a second the comparisons are read to it is not claimed
        uncertainty = ((f" (±{1.96 * se:.1f} s, 95 %" if 1.96 * se >= 0.05 else " (within ±0.1 s, 95 %")
                       + ", from the signals' scatter about their rate; not a change of rate since)"
                       if np.isfinite(se) else " (its uncertainty unknown)")
        change = piece.change
        if change.changed and signals[change.split_index] < day < signals[change.split_index + 1]:
            taken, other = float(before.error_s(day)), float(after.error_s(day))
            what = "reset" if change.kind == "reset" else "change of rate"
            return (f"watch error across the {what} of {label}: the sight lies between the signals either side of "
                    f"it; the earlier rating gives {taken:+.1f} s (taken), the later {other:+.1f} s: "
                    f"{abs(other - taken):.1f} s apart, {abs(other - taken) / 4.0:.2f}′ of longitude; time it by a "
                    "signal")
        if day > signals[-1]:
            text = (f"watch error extrapolated {_span_text(day - signals[-1])} past {label}'s last time signal "
                    f"({piece.last_signal:%Y-%m-%d %H:%M} UTC){uncertainty}")
            if day - signals[-1] > EXTRAPOLATION_NOTE_DAYS:
                text += ": check it against a signal"
            return text
        if day < signals[0]:
            return (f"watch error extrapolated back {_span_text(signals[0] - day)} before {label}'s first time signal "
                    f"({piece.comparisons.signal_utc.iloc[0]:%Y-%m-%d %H:%M} UTC){uncertainty}")
        return ""


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
                                        "dial_h", "error_s"])
    frame, twice = _one_comparison_an_instant(frame)
    rejected = pd.DataFrame(problems + twice, columns=REJECTED_COLUMNS).sort_values(["source", "row"], kind="stable")
    rejected = rejected.reset_index(drop=True)
    pieces = {}
    for name, part in frame.groupby("timepiece", sort=False):
        part = part.sort_values("signal_utc", kind="stable").reset_index(drop=True)
        days = days_of(part.signal_utc.dt.tz_convert(None).to_numpy())
        errors = part.error_s.to_numpy(dtype=float)
        fit = fit_rate(days, errors)
        piece = Timepiece(str(name), part, fit, rate_change(days, errors))
        before, after = piece.lines()
        later = piece.line_of(days)
        # each comparison against the line of its own side of a change
        part["residual_s"] = errors - np.where(later, after.error_s(days), before.error_s(days))
        pieces[str(name)] = Timepiece(str(name), part, fit, piece.change)
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
    dial_text = _cell_text(cells.get("dial")).lower().replace(" ", "").replace("-", "")
    dial_text = dial_text[:-2] if dial_text.endswith(".0") else dial_text
    dials = {"": 24, "24": 24, "24h": 24, "24hour": 24, "24hours": 24, "12": 12, "12h": 12, "12hour": 12,
             "12hours": 12}
    dial = dials.get(dial_text)
    if dial is None:
        trouble.append(("dial", _cell_text(cells.get("dial")), "the dial is 12 (a 12-hour dial, as a marine "
                        "chronometer's) or 24 (hours); blank is 24"))
    elif dial == 12 and clock is not None and not 0 <= clock[0] <= 12:
        trouble.append(("reading", _cell_text(reading), f"a 12-hour dial reads 0 to 12 hours, not {clock[0]:g}: is "
                        "the dial right?"))
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
    if dial == 12:  # the hands go round twice a day: the error within ±6 hours
        error = float(error_on_twelve_hour_dial(reading_s - signal_s))
    else:
        error = float(error_in_half_day(reading_s - signal_s))
    if abs(error) > 6 * 3600:
        hint = ("; or, if the timepiece has a 12-hour dial (a marine chronometer's), give dial 12"
                if hours <= 12 and abs(abs(error) - 12 * 3600) < 6 * 3600 else "")
        return {}, [("reading", _cell_text(reading), f"the reading is {abs(error) / 3600:.1f} hours from the signal's "
                     f"time in the timepiece's zone: is the zone description right{hint}?")]
    return {"timepiece": name, "signal_utc": stamp, "reading": _cell_text(reading), "zone_description_h": zone,
            "dial_h": dial, "error_s": error}, []


__all__ = ["rate_words", "Ratings", "Timepiece", "read_rating_log", "RATING_COLUMNS", "days_of", "EXTRAPOLATION_NOTE_DAYS"]
