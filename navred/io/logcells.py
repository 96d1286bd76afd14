"""A sight log's cells read: one parser per kind of column (angles, times, dates, units, words), every value
checked against the vocabulary's range, and every problem named by its row, its column and its value as written.

Plain numbers and ISO instants are read in bulk; anything else each distinct (value, unit, comma rule) once, by
the parsers of the core and of :mod:`navred.timework`. Used by :mod:`navred.io.logbook` (the one reader).
"""

from __future__ import annotations

import datetime as _dt
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..angles import parse_angle, parse_angles_fast, wrap_180
from ..corrections import parse_index_error_arcmin
from ..errors import NavredError
from ..stars import canonical_body_name
from ..timescales import instant_components, iso_z_datetime64, iso_zone_missing
from ..timework import (
    iso_instant_text,
    parse_date,
    parse_time_of_day,
    parse_watch_error_s,
    parse_zone_description,
)
from ..vocabulary import (
    COLUMN,
    ENTRIES,
    HORIZONS,
    LIMBS,
    NO_HORIZON,
    ROLES,
    SIDES,
    UNIT_CONVERSIONS,
    UNIT_NAMES,
    convert_to_working_unit,
    normalise_header,
)
from .readers import MissingFormulaValue, blank_mask

#: The reasons given for one row, at most: a row that is wrong in every column (a shifted or pasted line) is
#: named by its first few, and the rest counted, rather than by a dozen lines (and megabytes a row).
MAX_REASONS_PER_ROW = 3


class Problems:
    """The problems found, one entry per (row, column), collected column by column; at most
    :data:`MAX_REASONS_PER_ROW` kept a row (the first found), the others counted by their columns (so that a
    log wrong in every cell costs a few entries a row, not a dozen)."""

    def __init__(self, n: int):
        self.n = n
        self.rows: list[np.ndarray] = []
        self.columns: list[np.ndarray] = []
        self.values: list[np.ndarray] = []
        self.reasons: list[np.ndarray] = []
        self.count = np.zeros(n, dtype=np.int32)
        self.more: dict[int, list[str]] = {}  # row -> the columns of its problems not kept

    def add(self, rows, column, value, reason) -> None:
        rows = np.asarray(rows, dtype=int).ravel()
        if rows.size == 0:
            return
        items = []
        for item in (column, value, reason):
            array = np.empty(rows.size, dtype=object)
            array[:] = item if isinstance(item, str) else list(np.asarray(item, dtype=object).ravel())
            items.append(array)
        before = self.count[rows]
        np.add.at(self.count, rows, 1)
        keep = before < MAX_REASONS_PER_ROW
        if not keep.all():
            for row, name in zip(rows[~keep].tolist(), items[0][~keep].tolist()):
                self.more.setdefault(row, []).append(str(name))
            rows = rows[keep]
            items = [a[keep] for a in items]
        self.rows.append(rows)
        for target, array in zip((self.columns, self.values, self.reasons), items):
            target.append(array)

    def mask(self) -> np.ndarray:
        """The rows with a problem so far."""
        return self.count > 0

    def frame(self) -> pd.DataFrame:
        """Every problem kept, in row order (within a row, in the order found); the last kept of a row with more
        counts the others and names their columns."""
        if not self.rows:
            return pd.DataFrame({"index": np.zeros(0, dtype=int), "column": [], "value": [], "reason": []})
        frame = pd.DataFrame({"index": np.concatenate(self.rows), "column": np.concatenate(self.columns),
                              "value": np.concatenate(self.values), "reason": np.concatenate(self.reasons)})
        frame = frame.sort_values(["index"], kind="stable").reset_index(drop=True)
        if self.more:
            index = frame["index"].to_numpy()
            last = np.flatnonzero(np.append(index[1:] != index[:-1], True))
            reasons = frame["reason"].to_numpy(dtype=object).copy()
            for at in last.tolist():
                others = self.more.get(int(index[at]))
                if others:
                    names = ", ".join(dict.fromkeys(others))
                    reasons[at] = (f"{reasons[at]} (and {len(others)} more column{'s' if len(others) > 1 else ''} "
                                   f"with a problem: {names})")
            frame["reason"] = reasons
        return frame


def cell_text(value) -> str:
    """A cell as text, the way a person typed it (a whole number without '.0'; a missing value blank)."""
    if value is None or (isinstance(value, float) and value != value):
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if isinstance(value, _dt.datetime):
        return value.isoformat(sep=" ")
    return str(value)


def cell_texts(values: pd.Series | np.ndarray) -> np.ndarray:
    """Every cell of a column as text, as :func:`_text` writes it (each distinct value once)."""
    if pd.api.types.is_datetime64_any_dtype(getattr(values, "dtype", None)):
        stamps = values.dt.tz_convert(None) if values.dt.tz is not None else values
        if not len(values):  # (numpy's replace cannot size an empty array's texts)
            return np.zeros(0, dtype=object)
        text = np.datetime_as_string(stamps.to_numpy().astype("datetime64[us]")).astype(object)
        return np.where(values.isna().to_numpy(), "", np.char.replace(text.astype(str), "T", " ")).astype(object)
    if len(values) > 1000 and pd.api.types.infer_dtype(values, skipna=False) == "datetime":
        aware = _instant_texts(values)  # a DataFrame's column of instants: every text at once
        if aware is not None:
            return aware
    codes, uniques = pd.factorize(values, use_na_sentinel=True)
    if pd.api.types.infer_dtype(uniques, skipna=False) == "string":  # texts (a file's cells): as they are
        texts = np.empty(len(uniques) + 1, dtype=object)
        texts[:-1] = uniques  # (cell_text of a text is the text)
        texts[-1] = ""
    else:
        texts = np.array([cell_text(u) for u in uniques] + [""], dtype=object)
    return texts[codes]


def _instant_texts(values) -> np.ndarray | None:
    """The texts :func:`cell_text` gives a column of instants that all share one zone (``isoformat``: seconds,
    the fraction where there is one, to the microsecond or the nanosecond, then the offset), made at once;
    None for anything else."""
    try:
        stamps = pd.DatetimeIndex(pd.Series(values, dtype=object).tolist())
    except (TypeError, ValueError):
        return None
    zone = stamps.tz
    if zone is not None and str(zone) not in ("UTC", "utc"):
        return None
    naive = (stamps.tz_convert(None) if zone is not None else stamps).to_numpy().astype("datetime64[ns]")
    whole = np.datetime_as_string(naive.astype("datetime64[s]")).astype(object)
    ns = (naive - naive.astype("datetime64[s]")).astype(np.int64)
    micro = np.char.zfill((ns // 1000).astype(str), 6).astype(object)
    nano = np.char.zfill(ns.astype(str), 9).astype(object)
    text = np.char.replace(whole.astype(str), "T", " ").astype(object)
    text = np.where(ns == 0, text, np.where(ns % 1000 == 0, text + "." + micro, text + "." + nano))
    return (text + "+00:00" if zone is not None else text).astype(object)


def with_decimal_point(text: str, decimal_comma: bool) -> str:
    """A number's text with its decimal comma made a point, where the file's separator allows a decimal
    comma; elsewhere a comma is refused as ambiguous (a decimal comma, or two values?)."""
    if "," not in text:
        return text
    if not decimal_comma:
        raise NavredError(f"{text!r}: a comma here is ambiguous (a decimal comma, or two values?); write the "
                          "decimal with a point")
    if "." in text or text.count(",") > 1:
        raise NavredError(f"{text!r} has both a decimal comma and a point")
    return text.replace(",", ".")


def _number(value, decimal_comma: bool) -> float:
    if isinstance(value, bool) or isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r} is not a number")
    if isinstance(value, (int, float)):
        number = float(value)
    else:
        text = with_decimal_point(str(value).strip(), decimal_comma)
        try:
            number = float(text)
        except ValueError:
            raise NavredError(f"{value!r} is not a number") from None
    if not np.isfinite(number):
        raise NavredError(f"{value!r} is not a finite number")
    return number


def _word(value, table: dict, what: str) -> str:
    word = normalise_header(cell_text(value))
    if word not in table:
        accepted = ", ".join(sorted({k for k in table if k}))
        raise NavredError(f"{what} {value!r} is not one navred knows; accepted: {accepted}")
    return table[word]


def _horizon(value) -> str:
    """The horizon a sight was taken on; a word saying there was none is refused with what to write."""
    if normalise_header(cell_text(value)) in NO_HORIZON:
        raise NavredError(f"horizon {value!r}: every altitude is measured from a horizon of some kind: write bubble "
                          "(a bubble or other built-in horizon), artificial (a reflecting one), or sea (or leave the "
                          "cell blank) for the sea horizon")
    return _word(value, HORIZONS, "horizon")


def _ranged(number: float, key: str, unit: str | None) -> float:
    column = COLUMN[key]
    used = convert_to_working_unit(number, unit)
    if (column.low is not None and used < column.low) or (column.high is not None and used > column.high):
        working = UNIT_NAMES.get(column.units[0], "") if column.units else "°"
        shown = f"{number:g} {UNIT_NAMES[unit]} ({used:.4g} {working})" if unit and unit != column.units[0] \
            else f"{number:g}"
        raise NavredError(f"{key.replace('_', ' ')} {shown} is outside {column.low:g} to {column.high:g} {working}")
    return used


#: a time of day and nothing else, perhaps with a zone: '22:15:00', '22:15', '221500', '22:15:00Z', '22:15 UTC'
_TIME_OF_DAY_ONLY = re.compile(r"^\d{1,2}:?\d{2}(?::?\d{2}(?:\.\d+)?)?\s*(?:z|utc|gmt|ut)?$", re.IGNORECASE)


def time_without_date(written: str) -> str:
    """The refusal of a UTC (or GMT) cell that holds a time of day and no date: what is missing, and the two
    ways to give it."""
    clock = re.sub(r"\s*(?:z|utc|gmt|ut)$", "", written.strip(), flags=re.IGNORECASE)
    if ":" not in clock and len(clock) in (4, 6):
        clock = ":".join(clock[k:k + 2] for k in range(0, len(clock), 2))
    if clock.count(":") == 1:
        clock += ":00"
    return (f"{written!r} is a time of day with no date: a UTC (GMT) cell is the whole instant, date and time; "
            f"write the date in it, YYYY-MM-DDT{clock}Z (2026-12-04T{clock}Z for 4 December 2026), or keep this "
            "time in a 'Zone time' column beside a 'Date' column and a 'ZD' column of 0 (zone Z: the time is UTC)")


def _utc_components(value, dates):
    """(y, m, d, h, mi, s, offset minutes) of a value in the utc column."""
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}: the instant is unknown")
    if isinstance(value, _dt.datetime):
        if value.tzinfo is None:  # a spreadsheet date-time cell: the column's name says UTC
            value = value.replace(tzinfo=_dt.timezone.utc)
    elif isinstance(value, _dt.date):
        raise NavredError(f"{value} is a date without a time of day; give the instant in the utc column "
                          "(2026-03-26T19:41:00Z), or zone_time with zone_description")
    elif isinstance(value, (int, float)):
        raise NavredError(f"{value!r} is a number, not an instant: format the cell as a date-time, or write "
                          "2026-03-26T19:41:00Z")
    elif isinstance(value, _dt.time):
        raise NavredError(time_without_date(value.strftime("%H:%M:%S")))
    elif isinstance(value, str):
        written = value.strip()
        if _TIME_OF_DAY_ONLY.match(written):
            raise NavredError(time_without_date(written))
        try:
            value = iso_instant_text(written, dates)
            made = value
            if iso_zone_missing(value):  # text in the utc column is read as a date-time cell is: UTC, as named
                value += "Z"
            return tuple(float(np.asarray(c)) for c in instant_components(value))
        except (NavredError, ValueError) as exc:
            # the reason quotes the cell as the file holds it, never the text navred made of it
            reason = str(exc)
            for made_text in dict.fromkeys((value, locals().get("made", written))):
                if made_text != written:
                    reason = reason.replace(repr(made_text), repr(written))
            raise NavredError(reason if repr(written) in reason else f"{written!r}: {reason}") from None
    return tuple(float(np.asarray(c)) for c in instant_components(value))


def zoneless_utc(values: np.ndarray, ok: np.ndarray, dates: str | None) -> np.ndarray:
    """Which cells of the utc column (read ``ok``) gave no zone: a spreadsheet date-time cell, or text with
    no Z or offset. Both are taken as UTC, as the column's name says; the log's notes say how many."""
    out = np.zeros(len(values), dtype=bool)
    cells = values.to_numpy(dtype=object) if isinstance(values, pd.Series) else np.asarray(values, dtype=object)
    seen: dict = {}  # each distinct text once
    rows = np.flatnonzero(ok)
    try:  # a column of texts: those ending in Z (the usual ISO form) told at once
        zoned = np.strings.endswith(np.array(cells[rows].tolist(), dtype=np.dtypes.StringDType(coerce=False)), "Z")
        rows = rows[~zoned]
    except (TypeError, ValueError, AttributeError):
        pass  # (not every cell a text, or numpy before 2.0: one by one)
    for k in rows.tolist():
        value = cells[k]
        if isinstance(value, str):
            if value.endswith("Z"):  # (the ISO form ends in its zone: only the zone's group takes a letter)
                continue
            missing = seen.get(value)
            if missing is None:
                missing = seen[value] = iso_zone_missing(iso_instant_text(value.strip(), dates))
            out[k] = missing
        elif isinstance(value, _dt.datetime):
            out[k] = value.tzinfo is None
    return out


def _parse_time_cell(value):
    """(h, m, s, y, mo, d) of a zone-time cell (a date-time cell carries its date; NaN for none)."""
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        raise NavredError(f"{value!r} is a number, not a time of day: write 19:41:30, or format the cell as a time")
    hour, minute, second = parse_time_of_day(value)
    if isinstance(value, _dt.datetime) and value.date() not in _SPREADSHEET_EPOCHS:
        return hour, minute, second, value.year, value.month, value.day
    return hour, minute, second, np.nan, np.nan, np.nan


#: A time typed into a date-time cell comes back on the spreadsheet's day zero: no date at all.
_SPREADSHEET_EPOCHS = (_dt.date(1899, 12, 30), _dt.date(1899, 12, 31), _dt.date(1904, 1, 1))


def _not_formula(value):
    if isinstance(value, MissingFormulaValue):
        raise NavredError(f"{value!r}")
    return value


def _decimal_text(value, decimal_comma):
    return value if isinstance(value, (int, float)) else with_decimal_point(cell_text(value), decimal_comma)


#: The sign convention a watch error's header states, by the unit it was read as (vocabulary.WATCH_SIGN_WORDS).
_WATCH_SIGN_STATED = {"s_fast": "fast", "s_slow": "slow"}
#: The sign convention an index error's header states, by the unit it was read as (vocabulary.INDEX_SIGN_WORDS).
_INDEX_SIGN_STATED = {"arcmin_on": "on", "arcmin_off": "off"}


_EAST_WEST = re.compile(r"^\s*(?:([EW])\s*)?([+-]?\d+(?:\.\d*)?)\s*°?\s*([EW])?\s*$", re.IGNORECASE)


def _east_west(value, decimal_comma) -> float:
    """Degrees east (+) or west (−) as written: '3 E', '2.5 W', 'W 4', '+3', '-2.5'; a bare number other than
    0 is refused with both readings (a deviation or variation written without its side)."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        number = float(value)
        if number and number == number:
            raise NavredError(f"{number:g} is a number with neither E nor W: {abs(number):g} E or {abs(number):g} W? "
                              f"write it with its side ('{abs(number):g} E'), or signed east + as text")
        return number
    text = with_decimal_point(cell_text(value), decimal_comma).replace("−", "-")
    match = _EAST_WEST.match(text)
    if not match:
        raise NavredError(f"cannot read {value!r} as degrees east or west; accepted: '3 E', '2.5 W', or signed "
                          "(east +)")
    before, number_text, after = match.groups()
    side = (before or after or "").upper()
    number = float(number_text)
    signed = number_text.startswith(("+", "-"))
    if (before and after) or (side and signed):
        raise NavredError(f"{value!r} gives its side twice: write '3 E' or '+3'")
    if side:
        return number if side == "E" else -number
    if number and not signed:
        raise NavredError(f"{value!r} has neither E nor W: {number:g} E or {number:g} W? write it with its side "
                          f"('{number:g} E'), or signed east +")
    return number


_LEEWAY = re.compile(r"^\s*(\d+(?:\.\d*)?)\s*°?\s*(?:to\s+)?([a-z]*)\s*$", re.IGNORECASE)


def _leeway(value, decimal_comma) -> tuple[float, float]:
    """Leeway as written: (degrees, the side it sets the ship to: +1 starboard, −1 port, NaN not said): '5 port',
    '4° to stbd', '3' (with the wind's side in wind_side). A signed number is refused: which side?"""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        if value < 0:
            raise NavredError(f"leeway {value:g} is signed: to port or to starboard? write '{abs(value):g} port' or "
                              f"'{abs(value):g} stbd', or give the wind's side (wind_side)")
        return float(value), float("nan")
    text = with_decimal_point(cell_text(value), decimal_comma).replace("−", "-").strip()
    if text[:1] in "+-" and text[1:2].isdigit():
        raise NavredError(f"leeway {value!r} is signed: to port or to starboard? write '{text[1:]} port' or "
                          f"'{text[1:]} stbd', or give the wind's side (wind_side)")
    match = _LEEWAY.match(text)
    if not match:
        raise NavredError(f"cannot read {value!r} as a leeway; accepted: '5 port', '4 stbd', '3° to starboard', or "
                          "degrees with the wind's side in wind_side")
    number, side = float(match.group(1)), normalise_header(match.group(2))
    if side and side not in SIDES:
        raise NavredError(f"leeway {value!r}: {match.group(2)!r} is not a side; accepted: port, starboard (stbd)")
    return number, (float("nan") if not side else (1.0 if SIDES[side] == "starboard" else -1.0))


_CLOCK_CHANGE = re.compile(r"^\s*(advance|advanced|retard|retarded|put\s+forward|put\s+back|forward|back)\s*(?:by\s*)?"
                           r"(\d+(?:\.\d*)?)?\s*(?:h|hr|hrs|hour|hours)?\s*$", re.IGNORECASE)


def _clocks(value) -> tuple[float, float]:
    """A clocks entry's cell: (the zone the clocks keep from then, NaN) for a zone description ('+3', '-12 M'), or
    (NaN, the change in hours, + advanced) for 'advance 1 h' / 'retard 1 h' (1 h when no number is written)."""
    text = cell_text(value)
    match = _CLOCK_CHANGE.match(text)
    if match:
        hours = float(match.group(2)) if match.group(2) else 1.0
        if hours != round(hours) or not 0 < hours <= 24:
            raise NavredError(f"clocks {value!r}: the ship's clocks are changed by whole hours, 1 to 24")
        forward = match.group(1).lower().startswith(("advance", "put forward", "forward"))
        return float("nan"), hours if forward else -hours
    try:
        return float(parse_zone_description(value)), float("nan")
    except NavredError as exc:
        raise NavredError(f"clocks {value!r}: give the zone the clocks keep from then ('+3', '-12 M') or the change "
                          f"('advance 1 h', 'retard 1 h'): {exc}") from None


#: One parser per kind of column: (value, decimal comma allowed, unit, declared date order) -> result.
PARSERS = {
    "body": lambda v, dc, unit, dates: canonical_body_name(cell_text(_not_formula(v))),
    "limb": lambda v, dc, unit, dates: _word(_not_formula(v), LIMBS, "limb"),
    "entry": lambda v, dc, unit, dates: _word(_not_formula(v), ENTRIES, "entry"),
    "horizon": lambda v, dc, unit, dates: _horizon(_not_formula(v)),
    "altitude": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "angle", dc)),
    "lat": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "lat", dc)),
    "lon": lambda v, dc, unit, dates: float(parse_angle(_not_formula(v), "lon", dc)),
    "index_error": lambda v, dc, unit, dates: float(parse_index_error_arcmin(
        _decimal_text(_not_formula(v), dc), _INDEX_SIGN_STATED.get(unit))),
    "number": lambda v, dc, unit, dates: _number(_not_formula(v), dc),
    "watch_error": lambda v, dc, unit, dates: parse_watch_error_s(_decimal_text(_not_formula(v), dc),
                                                                  _WATCH_SIGN_STATED.get(unit)),
    "utc": lambda v, dc, unit, dates: _utc_components(v, dates),
    "date": lambda v, dc, unit, dates: parse_date(_not_formula(v), dates),
    "time": lambda v, dc, unit, dates: _parse_time_cell(v),
    "zone": lambda v, dc, unit, dates: float(parse_zone_description(_not_formula(v))),
    "text": lambda v, dc, unit, dates: cell_text(_not_formula(v)).strip(),
    "name": lambda v, dc, unit, dates: " ".join(cell_text(_not_formula(v)).split()),
    "role": lambda v, dc, unit, dates: _word(_not_formula(v), ROLES, "role"),
    "side": lambda v, dc, unit, dates: _word(_not_formula(v), SIDES, "side"),
    "east_west": lambda v, dc, unit, dates: _east_west(_not_formula(v), dc),
    "leeway": lambda v, dc, unit, dates: _leeway(_not_formula(v), dc),
    "clocks": lambda v, dc, unit, dates: _clocks(_not_formula(v)),
}
#: Kinds read from a text by a text's own method, as :data:`PARSERS` reads a cell that is a text (the same result)
_PLAIN_TEXT_KINDS = {"text": str.strip, "name": lambda v: " ".join(v.split())}
#: Kinds whose result is several numbers (a row of an array), and how many.
TUPLE_KINDS = {"utc": 7, "date": 3, "time": 6, "leeway": 2, "clocks": 2}
#: Kinds whose result is one number.
FLOAT_KINDS = {"altitude", "lat", "lon", "index_error", "number", "watch_error", "zone", "east_west"}


def _parse_one(column, value, decimal_comma, unit, dates):
    """One value of a column parsed, converted to navred's unit and checked against the range; or raise."""
    result = PARSERS[column.kind](value, decimal_comma, unit, dates)
    if column.kind in ("number", "altitude", "east_west") and column.low is not None:
        result = _ranged(float(result), column.key, unit if column.kind == "number" else None)
    elif column.kind == "leeway":
        result = (_ranged(float(result[0]), column.key, None), result[1])
    return result


def _parse_fast(column, originals: list, unit) -> tuple[np.ndarray, np.ndarray] | None:
    """The values of an angle column in the common written forms, read in bulk
    (:func:`navred.angles.parse_angles_fast`: only what the careful parser reads to the same
    value): (values, which were read); None for a column of another kind. A decimal comma is left to the
    careful parser."""
    kind = {"altitude": "angle", "lat": "lat", "lon": "lon"}.get(column.kind)
    if kind is None:
        return None
    values, done = parse_angles_fast(originals, kind)
    if column.kind == "altitude" and column.low is not None:  # out of range: the careful parser gives the reason
        low, high = column.low, column.high
        with np.errstate(invalid="ignore"):
            done &= (values >= low) if high is None else (values >= low) & (values <= high)
    return values, done


@dataclass
class Cells:
    """One column key across every table: the cells, their units and header names, row by row."""

    values: pd.Series  # index 0..n-1; None where the row gives nothing
    blank: np.ndarray
    units: np.ndarray
    headers: np.ndarray
    decimal_comma: np.ndarray
    present: bool
    #: the rows whose header declares its angles decimal degrees ('Hs (deg)'): None when none does
    decimal_degrees: np.ndarray | None = None


@dataclass
class Parsed:
    """The parsed values of one key: a mask of the rows with a good value, and the values
    (n,) for one number or word per row, (k, n) for kinds that give several numbers."""

    ok: np.ndarray
    value: np.ndarray


def gather(tables, layouts, key) -> Cells:
    """The cells of one key across all tables (blank where a table lacks it); two columns of one
    table that give the same key are combined row by row (one value at most). An angle's rows say whether
    their header declares decimal degrees (:attr:`Cells.decimal_degrees`)."""
    cells = _gathered(tables, layouts, key)
    if COLUMN[key].kind in ANGLE_KINDS:
        declared = [bool(layout.keys.get(key)) and all(k in layout.decimal_degrees or _writes_decimal_degrees(
            table.columns[k]) for k in layout.keys[key]) for table, layout in zip(tables, layouts)]
        if any(declared):
            cells.decimal_degrees = np.repeat(np.array(declared, dtype=bool), [t.n_rows for t in tables])
    return cells


def _gathered(tables, layouts, key) -> Cells:
    """The cells of one key across all tables (see :func:`gather`).

    The tables' cells are joined first and looked at once, so a folder of many small logs costs
    about what one log of all their rows would."""
    values, units, headers = [], [], []
    present = False
    counts = np.array([t.n_rows for t in tables], dtype=int)
    typed = _typed_column(tables, layouts, key)
    if typed is not None:  # a DataFrame's column of numbers or instants: kept as it is (no cell made an object)
        table, index = tables[0], layouts[0].keys[key][0]
        return Cells(typed, typed.isna().to_numpy(dtype=bool), np.full(table.n_rows, layouts[0].units[index],
                                                                       dtype=object),
                     np.full(table.n_rows, table.header[index], dtype=object),
                     np.full(table.n_rows, table.decimal_comma, dtype=bool), True)
    if not any(layout.keys.get(key) for layout in layouts):  # no table gives this key: every cell blank, at once
        total = int(counts.sum())
        return Cells(pd.Series(texts_of(total, None), dtype=object), np.ones(total, dtype=bool),
                     texts_of(total, COLUMN[key].default_unit), texts_of(total, key),
                     np.repeat(np.array([t.decimal_comma for t in tables], dtype=bool), counts), False)
    for table, layout in zip(tables, layouts):
        n = table.n_rows
        indices = layout.keys.get(key, [])
        if not indices:
            values.append(np.full(n, None, dtype=object))
            units.append(COLUMN[key].default_unit)
            headers.append(key)
            continue
        present = True
        first = indices[0]
        column = table.columns[first].to_numpy(dtype=object)
        if len(indices) == 1:
            values.append(column)
            units.append(layout.units[first])
            headers.append(table.header[first])
            continue
        # two columns of one table give this key: combined row by row, with their units and names
        blank = blank_mask(pd.Series(column, dtype=object))
        unit = np.full(n, layout.units[first], dtype=object)
        header = np.full(n, table.header[first], dtype=object)
        for k in indices[1:]:
            cells = table.columns[k].to_numpy(dtype=object)
            filled = ~blank_mask(pd.Series(cells, dtype=object))
            for i in np.flatnonzero(filled & ~blank):
                if layout.units[k] == unit[i] and cell_text(cells[i]).strip() == cell_text(column[i]).strip():
                    continue  # the same value twice, in the same unit (a column repeated): one value
                table.row_problems.setdefault(int(i), (table.header[k], (
                    f"two values for {key.replace('_', ' ')}: {header[i]!r} {cell_text(column[i])!r} and "
                    f"{table.header[k]!r} {cell_text(cells[i])!r}; keep one")))
            column = np.where(filled, cells, column)
            unit = np.where(filled & blank, layout.units[k], unit)
            header = np.where(filled & blank, table.header[k], header)
            blank = blank & ~filled
        values.append(column)
        units.append(unit)
        headers.append(header)
    joined = pd.Series(np.concatenate(values) if values else np.zeros(0, dtype=object), dtype=object)

    def per_row(parts):
        if all(not isinstance(p, np.ndarray) for p in parts):
            return np.repeat(np.array(parts, dtype=object), counts)
        return np.concatenate([p if isinstance(p, np.ndarray) else np.full(c, p, dtype=object)
                               for p, c in zip(parts, counts)]) if parts else np.zeros(0, dtype=object)

    commas = np.repeat(np.array([t.decimal_comma for t in tables], dtype=bool), counts)
    indices = layouts[0].keys.get(key, []) if len(tables) == 1 else []
    if len(indices) == 1 and indices[0] in tables[0].filled_columns:  # known to hold no blank cell
        blank = np.zeros(len(joined), dtype=bool)
    else:
        blank = blank_mask(joined)
    return Cells(joined, blank, per_row(units), per_row(headers), commas, present)


def _typed_column(tables, layouts, key) -> pd.Series | None:
    """The one column that gives ``key`` in a lone table, when it holds numbers or instants as such (a
    DataFrame's float, integer or datetime column, never a file's text): its cells are read in bulk as they
    are, with no object made per cell. None otherwise."""
    if len(tables) != 1 or len(layouts[0].keys.get(key, [])) != 1:
        return None
    column = tables[0].columns[layouts[0].keys[key][0]]
    if column.dtype.kind not in "fiuM":
        return None
    return column.reset_index(drop=True)


def _numeric_checks(column, numbers: np.ndarray, units: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Plain numbers of a column checked (and converted) in bulk: (values used, refused mask).

    The refused ones are parsed again one by one, which gives their reasons."""
    kind = column.kind
    used = numbers.astype(float)
    if kind == "number" and column.units:
        factors = np.ones(numbers.size)
        offsets = np.zeros(numbers.size)
        for unit in set(units) - {None}:
            factors[units == unit], offsets[units == unit] = UNIT_CONVERSIONS[unit]
        used = numbers * factors + offsets
    bad = ~np.isfinite(used)
    with np.errstate(invalid="ignore"):
        if kind in ("number", "altitude") and column.low is not None:
            bad |= (used < column.low) | (used > column.high)
        elif kind == "lat":
            bad |= np.abs(used) > 90.0
        elif kind == "lon":
            bad |= (used < -180.0) | (used > 360.0)
            used = wrap_180(used)  # 354.47 east of Greenwich is 5.53 west
        elif kind == "index_error":
            # a number has no on or off: read only under a header that states the sign (or the API's name,
            # index_error_arcmin, ON the arc +); otherwise judged one by one and refused with both readings
            stated = np.isin(units.astype(str), list(_INDEX_SIGN_STATED))
            used = np.where(units.astype(str) == "arcmin_off", 0.0 - used, used)
            bad |= (used < column.low) | (used > column.high) | ((used != 0.0) & ~stated)
        elif kind == "watch_error":
            stated = np.isin(units.astype(str), list(_WATCH_SIGN_STATED))
            used = np.where(units.astype(str) == "s_slow", -used, used)  # + is a slow watch: a correction, added
            # without a stated sign a number has two readings (a spreadsheet drops a +; - is an error's slow or a
            # correction's fast): judged one by one, and refused
            bad |= (used < column.low) | (used > column.high) | ((used != 0.0) & ~stated)
        elif kind == "zone":
            bad |= True  # a number cell of a zone description: each is judged one by one
        elif kind == "east_west":
            bad |= used != 0.0  # a number cell east or west: refused one by one, with both readings
    return used, bad


_ISO_Z = r"^\s*(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2}(?:\.\d+)?)\s*Z\s*$"


def parse_key(cells: Cells, key: str, problems: Problems, dates) -> Parsed:
    """Parse one key: plain numbers and ISO instants in bulk, anything else each distinct
    (value, unit, comma rule) once; converted to navred's unit and checked against the range."""
    column = COLUMN[key]
    n = len(cells.values)
    width = TUPLE_KINDS.get(column.kind)
    if width:
        value = np.full((width, n), np.nan)
    elif column.kind in FLOAT_KINDS:
        value = np.full(n, np.nan)
    else:
        value = np.full(n, None, dtype=object)
    todo = ~cells.blank
    if not todo.any():
        return Parsed(np.zeros(n, dtype=bool), value)
    _parse_in_bulk(column, cells, value, todo)
    refused = np.zeros(n, dtype=bool)
    rows = np.flatnonzero(todo)
    if rows.size:
        units = cells.units[rows]
        commas = np.asarray(cells.decimal_comma[rows], dtype=bool)
        if (units == units[0]).all() and (commas == commas[0]).all():
            batches = [(units[0], bool(commas[0]), rows)]  # the usual case: one unit and one comma rule
        else:
            keys = np.array([f"{u}|{c}" for u, c in zip(units, commas)])
            batches = [(units[keys == k][0], bool(commas[keys == k][0]), rows[keys == k]) for k in dict.fromkeys(keys)]
        for unit, comma, members in batches:
            _parse_each_distinct(column, cells, members, unit, comma, dates, value, refused, problems)
    if column.kind in ANGLE_KINDS:
        _refuse_minutes_as_decimals(column, cells, refused, problems)
    return Parsed(~cells.blank & ~refused, value)


#: the kinds of column whose cells are angles in degrees, where '35.30' may be 35° 30′ written with a point
ANGLE_KINDS = ("altitude", "lat", "lon")
#: an angle written as a decimal with two decimals, 01 to 59, which may be minutes, or three whose first two are
#: (degrees, minutes and tenths keyed with one point, as calculators and sight books do: '76.380' for 76° 38.0′):
#: an Hs '35.30' or '35.305', a latitude or longitude with its letter '20.35 N', 'N 20.355' (a bare or signed one,
#: '-17.45', is ISO 6709's decimal degrees, as the log's rule has it; a decimal whose fraction is .00 (.000) or .60 and
#: more, or of one or four and more decimals, is decimal degrees; so is a number cell of a spreadsheet, or any cell
#: under a header that declares degrees)
_MINUTES_AS_DECIMALS = re.compile(r"^\s*([+\-−]?)\s*([NSEWnsew]?)\s*(\d{1,3})\.([0-5]\d{0,2})\s*([NSEWnsew]?)\s*$")


def minutes_as_decimal_refusal(text: str, kind: str, declare: str | None = None) -> str | None:
    """Why an angle written ``text`` is refused as having two readings (decimal degrees, or degrees and minutes
    written with a point), naming both and how to write each; None when it has one. ``kind``: altitude, lat or
    lon (the message's example takes its hemisphere letter); ``declare``: how to declare decimal degrees where
    there is no header (a command-line option), instead of the header's unit. One to three decimals whose first
    two (a lone one with a 0 after it: '76.3' is '76.30' with its trailing zero dropped) are 00 to 59, not all 0.

    >>> minutes_as_decimal_refusal("35.30", "altitude")[:60]
    "'35.30' has two readings: 35.30° (= 35° 18.0′) or 35° 30.0′ "
    >>> minutes_as_decimal_refusal("35.7", "altitude") is None, minutes_as_decimal_refusal("35.75", "altitude") is None
    (True, True)
    """
    found = _MINUTES_AS_DECIMALS.match(text)
    if not found or set(found.group(4)) == {"0"} or (found.group(2) and found.group(5)):
        return None
    sign, before, degrees, fraction, after = found.groups()
    if kind != "altitude" and not (before or after):
        return None  # a bare or signed number of a latitude or longitude is ISO 6709's decimal degrees
    letter = (before or after).upper()
    minutes = (fraction + "0")[:2]
    tenth = fraction[2:] or "0"
    minutes_as_decimal = int(fraction) / 10 ** len(fraction) * 60.0  # .30 of a degree is 18.0′
    lead = "-" if sign in ("-", "−") else ""
    tail = f" {letter}" if letter else ""
    if declare is not None:
        pass
    elif kind == "altitude":
        declare = "head the column 'Hs (deg)' (or hs_deg)"
    else:
        declare = f"head the column with its unit, 'DR {kind} (deg)' (or dr_{kind}_deg)"
    dropped = f" ('{degrees}.{minutes}' with its trailing zero dropped)" if len(fraction) == 1 else ""
    return (f"{text.strip()!r} has two readings: {lead}{degrees}.{fraction}°{tail} (= {lead}{int(degrees)}° "
            f"{minutes_as_decimal:04.1f}′{tail}) or {lead}{int(degrees)}° {minutes}.{tenth}′{tail} written "
            f"with a point{dropped}? for degrees and minutes write '{lead}{degrees} {minutes}.{tenth}{tail}' or "
            f"'{lead}{degrees}° {minutes}.{tenth}′{tail}'; for decimal degrees {declare + ', or ' if declare else ''}"
            f"write it with four decimals ('{lead}{degrees}.{fraction}{'0' * (4 - len(fraction))}{tail}')")


def _writes_decimal_degrees(column: pd.Series) -> bool:
    """Whether a table's column of angles is decimal degrees as it stands: a DataFrame's column of numbers (a
    program's floats). A spreadsheet's cells (numbers typed by hand among them) and a column of text are judged
    cell by cell, never by their other cells: a long log read in blocks must read every cell as the log read whole
    does, whatever block it falls in."""
    return column.dtype.kind in "fiu"


def _refuse_minutes_as_decimals(column, cells: Cells, refused: np.ndarray, problems: Problems) -> None:
    """The angles read that have two readings (:func:`minutes_as_decimal_refusal`) refused, each distinct text
    once, but under a header that declares decimal degrees."""
    look = ~cells.blank & ~refused
    if cells.decimal_degrees is not None:
        look &= ~cells.decimal_degrees
    rows = np.flatnonzero(look)
    if not rows.size:
        return
    originals = cells.values.iloc[rows]
    codes, uniques = pd.factorize(originals, use_na_sentinel=True)
    reasons = {}
    for u, text in enumerate(uniques.tolist() if hasattr(uniques, "tolist") else list(uniques)):
        if type(text) is float and np.isfinite(text):
            # a spreadsheet's number cell among text (a column of numbers alone is decimal degrees as it is,
            # _writes_decimal_degrees): typed 76.38 for 76° 38′ it keeps no trailing zero, so its shortest text
            # is judged as a written one is
            text = repr(text)
        if type(text) is str and "." in text:
            reason = minutes_as_decimal_refusal(text, column.kind)
            if reason:
                reasons[u] = reason
    if not reasons:
        return
    bad = np.isin(codes, list(reasons))
    where = rows[bad]
    refused[where] = True
    texts = np.array([cell_text(uniques[c]) for c in codes[bad]], dtype=object)
    why = np.array([reasons[c] for c in codes[bad]], dtype=object)
    problems.add(where, cells.headers[where], texts, why)


def _parse_in_bulk(column, cells: Cells, value: np.ndarray, todo: np.ndarray) -> None:
    """Plain numbers, ISO 'Z' instants and date-time cells read at once into ``value``, their rows taken off
    ``todo``."""
    rows = np.flatnonzero(todo)
    subset = cells.values.iloc[rows]
    inferred = pd.api.types.infer_dtype(subset, skipna=True)
    if column.kind in FLOAT_KINDS and inferred in ("floating", "integer", "mixed-integer-float"):
        used, bad = _numeric_checks(column, subset.to_numpy(dtype=float, na_value=np.nan), cells.units[rows])
        value[rows[~bad]] = used[~bad]
        todo[rows[~bad]] = False
    elif column.kind == "utc" and inferred == "string":
        stamps = iso_z_datetime64(subset.to_numpy(dtype=object))  # every cell a real 'Z' instant: numpy reads them
        if stamps is not None:
            value[:, rows] = np.vstack(instant_components(stamps))
            todo[rows] = False
        else:
            parts = subset.str.extract(_ISO_Z).to_numpy(dtype=object)
            matched = ~pd.isna(parts[:, 0])
            if matched.any():
                value[:6, rows[matched]] = parts[matched].astype(float).T
                value[6, rows[matched]] = 0.0
                todo[rows[matched]] = False
    elif column.kind == "utc" and inferred in ("datetime", "datetime64"):
        try:
            stamps = pd.to_datetime(subset)
            stamps = stamps.dt.tz_convert("UTC") if stamps.dt.tz is not None else stamps
        except (TypeError, ValueError):
            return  # naive and aware mixed: one by one
        fraction = stamps.dt.microsecond.to_numpy() / 1e6 + stamps.dt.nanosecond.to_numpy() / 1e9
        value[:, rows] = np.vstack([stamps.dt.year, stamps.dt.month, stamps.dt.day, stamps.dt.hour,
                                    stamps.dt.minute, stamps.dt.second.to_numpy() + fraction, np.zeros(rows.size)])
        todo[rows] = False


def _parse_each_distinct(column, cells: Cells, members: np.ndarray, unit, comma: bool, dates, value: np.ndarray,
                         refused: np.ndarray, problems: Problems) -> None:
    """The cells of ``members`` (one unit, one comma rule) parsed each distinct value once into ``value``; the
    refused ones marked in ``refused`` and added to ``problems`` with their value as written and their reason."""
    originals = cells.values.iloc[members]
    # each distinct value once (TRUE/FALSE cells were made text by the reader, so that True is not 1)
    codes, uniques = pd.factorize(originals, use_na_sentinel=False)
    first = np.full(len(uniques), -1)
    first[codes[::-1]] = np.arange(codes.size)[::-1]
    distinct = originals.to_numpy(dtype=object)[first].tolist()
    quick = _parse_fast(column, distinct, unit)
    if quick is not None and value.ndim == 1 and value.dtype == float:  # the values read in bulk stay in numpy
        numbers, good = quick
        numbers, good = np.where(good, numbers, np.nan), good.copy()
        reasons = {}
        for u in np.flatnonzero(~good).tolist():
            try:
                numbers[u] = _parse_one(column, distinct[u], bool(comma), unit, dates)
                good[u] = True
            except (NavredError, ValueError, TypeError) as exc:
                reasons[u] = _reason(exc, distinct[u])
        value[members] = numbers[codes]
        _refuse(cells, members, codes, good, distinct, reasons, refused, problems)
        return
    if column.kind in _PLAIN_TEXT_KINDS and all(type(v) is str for v in distinct):  # texts: no reading can fail
        results = [_PLAIN_TEXT_KINDS[column.kind](v) for v in distinct]
        table = np.empty(len(uniques), dtype=object)
        table[:] = results
        value[members] = table[codes]
        return
    results, reasons = [], {}
    for u, original in enumerate(distinct):
        if quick is not None and quick[1][u]:
            results.append(float(quick[0][u]))
            continue
        try:
            results.append(_parse_one(column, original, bool(comma), unit, dates))
        except (NavredError, ValueError, TypeError) as exc:
            results.append(None)
            reasons[u] = _reason(exc, original)
    good = np.array([r is not None for r in results], dtype=bool)
    if value.ndim == 2:
        table = np.full((value.shape[0], len(uniques)), np.nan)
        for u in np.flatnonzero(good):
            table[:, u] = results[u]
        value[:, members] = table[:, codes]
    else:
        table = np.empty(len(uniques), dtype=value.dtype)
        table[:] = [r if r is not None else (np.nan if value.dtype == float else None) for r in results]
        value[members] = table[codes]
    _refuse(cells, members, codes, good, distinct, reasons, refused, problems)


def _refuse(cells: Cells, members, codes, good, distinct, reasons, refused, problems) -> None:
    """The cells whose distinct value was refused marked in ``refused`` and added to ``problems``."""
    refused[members[~good[codes]]] = True
    if reasons:  # every refused cell with its value as written and its reason, in one go
        bad = ~good[codes]
        where = members[bad]
        texts = np.array([cell_text(distinct[u]) if u in reasons else "" for u in range(len(distinct))], dtype=object)
        why = np.array([reasons.get(u, "") for u in range(len(distinct))], dtype=object)
        problems.add(where, cells.headers[where], texts[codes[bad]], why[codes[bad]])


def _reason(exc: Exception, value) -> str:
    if isinstance(value, MissingFormulaValue):
        return (f"a formula ({value.formula}) with no saved value: open and save the file in a spreadsheet program "
                "so that its value is stored, or type the value")
    return str(exc)


def floats(parsed: Parsed, default=np.nan) -> np.ndarray:
    return np.where(parsed.ok, parsed.value, default).astype(float)


def words(parsed: Parsed, default="") -> np.ndarray:
    out = np.asarray(parsed.value, dtype=object).copy()
    out[~np.asarray(parsed.ok, dtype=bool)] = default  # (one text object shared by every row that takes it)
    return out


def texts_of(n: int, text: str = "") -> np.ndarray:
    """``n`` rows of one text, every row holding the same object (``np.full`` makes an object per row)."""
    out = np.empty(n, dtype=object)
    out[:] = text
    return out


def chosen_texts(index: np.ndarray, choices: list[str]) -> np.ndarray:
    """Each row's text ``choices[index]``, every row holding one of the few objects (``np.where`` between
    texts makes an object per row, which a long table pays for)."""
    return np.array(choices, dtype=object)[np.asarray(index, dtype=np.intp)]
