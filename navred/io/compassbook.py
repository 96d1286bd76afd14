"""The compass error book: a log of bearings of bodies taken on the ship's compasses, read bounded and checked
row by row.

Edge code. A book may come from another ship like a sight log, so it is read through the same bounded
table reader (:func:`navred.io.readers.read_table`). Its columns (a header may carry spaces or capitals):

- ``utc``: the instant, ISO 8601 with a zone (a numeric day/month date needs ``dates``);
- ``body``: the body whose bearing was taken;
- ``compass``: ``gyro`` (or ``repeater``) or ``magnetic`` (or ``standard``, ``steering``); no default: a
  bearing whose compass is not named cannot be judged;
- ``bearing``: the reading on that compass, degrees;
- ``heading``: the ship's head by that compass, degrees (needed for a magnetic compass's deviation);
- ``variation``: the chart's variation, '4 W', '3.5 E' (needed for a magnetic compass);
- ``lat``, ``lon``: the DR;
- ``remarks``: anything, kept as text.

Each row is named by its row number as a spreadsheet shows it (the header is row 1); a row that
cannot be read is set aside with the reason, never guessed.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..angles import parse_angle, wrap_360
from ..errors import NavredError
from ..timework import iso_instant_text
from .readers import read_table

COMPASS_WORDS = {"gyro": "gyro", "gyro compass": "gyro", "repeater": "gyro", "magnetic": "magnetic",
                 "standard": "magnetic", "steering": "magnetic", "magnetic compass": "magnetic"}
REQUIRED = ("utc", "body", "compass", "bearing", "lat", "lon")
OPTIONAL = ("heading", "variation", "remarks")
#: a book of a few thousand bearings is large; this bounds what is read
MAX_BOOK_ROWS = 20_000


@dataclass(frozen=True)
class BookRows:
    """The rows read (``table``: row, source, utc, body, compass, bearing_deg, heading_deg, variation_deg,
    lat_deg, lon_deg, remarks) and those set aside (``rejected``: row, source, column, reason)."""

    table: pd.DataFrame
    rejected: pd.DataFrame
    sources: tuple[str, ...]


def _key(header: str) -> str:
    return "_".join(str(header).strip().lower().replace("(", " ").replace(")", " ").split())


def read_compass_book(source: str | Path, *, dates: str | None = None) -> BookRows:
    """The compass error book's rows, each read by the rules above."""
    from ..stars import canonical_body_name

    tables = read_table(source)
    rows, rejected = [], []
    for raw in tables:
        if raw.n_rows > MAX_BOOK_ROWS:
            raise NavredError(f"{raw.source} holds {raw.n_rows:,} rows, more than {MAX_BOOK_ROWS:,}: split the book")
        cells = {_key(h): c for h, c in zip(raw.header, raw.columns)}
        missing = [c for c in REQUIRED if c not in cells]
        if missing:
            raise NavredError(f"{raw.source} is not a compass error book: no column {', '.join(missing)} (a book has "
                              f"{', '.join(REQUIRED)}, and heading and variation for a magnetic compass)")
        for index, row_number in enumerate(raw.row_numbers):
            if index in raw.row_problems:
                rejected.append({"row": int(row_number), "source": raw.source, "column": raw.row_problems[index][0],
                                 "reason": raw.row_problems[index][1]})
                continue

            def cell(name, index=index, cells=cells):
                value = cells[name].iloc[index] if name in cells else None
                return "" if value is None or (isinstance(value, float) and value != value) else str(value).strip()

            try:
                row = _read_row(cell, dates, canonical_body_name)
            except NavredError as exc:
                column, _, reason = str(exc).partition(": ")
                rejected.append({"row": int(row_number), "source": raw.source, "column": column, "reason": reason})
                continue
            rows.append({"row": int(row_number), "source": raw.source, **row})
    columns = ["row", "source", "utc", "body", "compass", "compass_written", "bearing_deg", "heading_deg",
               "variation_deg", "lat_deg", "lon_deg", "remarks"]
    table = pd.DataFrame(rows, columns=columns)
    return BookRows(table, pd.DataFrame(rejected, columns=["row", "source", "column", "reason"]),
                    tuple(t.source for t in tables))


def _degrees(text: str, column: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise NavredError(f"{column}: {text!r} is not a bearing in degrees (0-360)") from None
    if not (np.isfinite(value) and 0.0 <= value <= 360.0):
        raise NavredError(f"{column}: {text!r} is outside 0-360°")
    return float(wrap_360(value))


def _read_row(cell, dates, canonical_body_name) -> dict:
    from ..timescales import utc_datetime64

    for name in REQUIRED:
        if not cell(name):
            raise NavredError(f"{name}: empty; every bearing needs {', '.join(REQUIRED)}")
    try:
        utc = utc_datetime64(iso_instant_text(cell("utc"), dates))
    except NavredError as exc:
        raise NavredError(f"utc: {exc}") from None
    try:
        body = canonical_body_name(cell("body"))
    except NavredError as exc:
        raise NavredError(f"body: {exc}") from None
    compass = COMPASS_WORDS.get(cell("compass").lower())
    if compass is None:
        raise NavredError(f"compass: {cell('compass')!r} is not a compass navred knows; give gyro or magnetic")
    bearing = _degrees(cell("bearing"), "bearing")
    heading = _degrees(cell("heading"), "heading") if cell("heading") else np.nan
    variation = np.nan
    if cell("variation"):
        try:
            variation = float(parse_angle(cell("variation"), "variation"))
        except NavredError as exc:
            raise NavredError(f"variation: {exc}") from None
    if compass == "magnetic" and (np.isnan(heading) or np.isnan(variation)):
        raise NavredError("heading: a magnetic compass's bearing needs the ship's heading by it and the variation "
                          "(its deviation is by heading)")
    try:
        lat, lon = float(parse_angle(cell("lat"), "lat")), float(parse_angle(cell("lon"), "lon"))
    except NavredError as exc:
        raise NavredError(f"lat/lon: {exc}") from None
    return {"utc": utc, "body": body, "compass": compass, "compass_written": " ".join(cell("compass").lower().split()),
            "bearing_deg": bearing, "heading_deg": heading,
            "variation_deg": variation, "lat_deg": lat, "lon_deg": lon, "remarks": cell("remarks")}


__all__ = ["BookRows", "read_compass_book", "COMPASS_WORDS", "REQUIRED", "OPTIONAL", "MAX_BOOK_ROWS"]
