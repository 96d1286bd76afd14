"""The deviation card: the compass checks of one ship kept in a CSV file, one row per check.

Edge code. A card may come from another ship like a log does, so it is read through the same
bounded table reader (:func:`navred.io.readers.read_table`), checked column by column, and written
back whole or not at all (:func:`navred.io.output.atomic_write`).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import NavredError, api_boundary
from .output import atomic_write, check_output, csv_safe
from .readers import read_table

#: the card's columns, in order; the numeric ones must read as numbers
CARD_COLUMNS = ["utc", "body", "lat_deg", "lon_deg", "compass_heading_deg", "compass_bearing_deg",
                "true_bearing_deg", "compass_error_deg", "variation_deg", "deviation_deg"]
NUMERIC_COLUMNS = CARD_COLUMNS[2:]
#: a card of a few hundred checks is large; this bounds what is read
MAX_CARD_BYTES = 4 * 1024 * 1024
MAX_CARD_ROWS = 20_000


class CardError(NavredError):
    """A deviation card that cannot be read or added to."""


@api_boundary
def read_deviation_card(path: str | Path) -> pd.DataFrame:
    """The checks of a deviation card (an empty card when the file does not exist yet)."""
    if not isinstance(path, (str, Path)) or not str(path).strip() or "\x00" in str(path):
        raise CardError(f"a deviation card is a CSV file: give its name, not {str(path)[:40]!r}")
    path = Path(path)
    if not path.exists():
        return pd.DataFrame({c: pd.Series(dtype=float if c in NUMERIC_COLUMNS else object) for c in CARD_COLUMNS})
    if path.is_file() and path.stat().st_size > MAX_CARD_BYTES:
        raise CardError(f"{path} is {path.stat().st_size / 2**20:.1f} MiB; a deviation card navred keeps is at "
                        f"most {MAX_CARD_BYTES // 2**20} MiB: start a new card file")
    table = read_table(path)[0]
    missing = [c for c in CARD_COLUMNS if c not in table.header]
    if missing:
        raise CardError(f"{path} is not a deviation card navred keeps (no column {', '.join(missing)}); "
                        "give --card a new file name, or the card an earlier check wrote")
    if table.n_rows > MAX_CARD_ROWS:
        raise CardError(f"{path} holds {table.n_rows:,} checks, more than {MAX_CARD_ROWS:,}: start a new card file")
    if table.row_problems:
        index, (column, reason) = min(table.row_problems.items())
        raise CardError(f"{path} row {table.row_numbers[index]}: {reason}; mend the card or start a new one")
    cells = {h: c for h, c in zip(table.header, table.columns)}
    card = pd.DataFrame({c: cells[c].to_numpy(dtype=object) for c in CARD_COLUMNS})
    for column in NUMERIC_COLUMNS:
        text = card[column].map(lambda v: "" if v is None else str(v).strip())
        numbers = pd.to_numeric(text.where(text != "", None), errors="coerce").to_numpy(dtype=float)
        bad = (text != "").to_numpy() & ~np.isfinite(numbers)
        if bad.any():
            rows = table.row_numbers[bad]
            shown = ", ".join(str(r) for r in rows[:5]) + (" ..." if len(rows) > 5 else "")
            raise CardError(f"{path} row {shown}: {column} {text[bad].iloc[0]!r} is not a number; "
                            "mend the card or start a new one")
        card[column] = numbers
    return card


def deviation_curve(path: str | Path):
    """The deviation curve of a card (:func:`navred.compass.deviation_coefficients` fitted to its checks on the
    magnetic compass), to make a compass course true; a card with no such check is refused."""
    from ..compass import deviation_coefficients

    if not Path(path).exists():
        raise CardError(f"no deviation card {str(path)!r}: give the card navred compass --card keeps")
    card = read_deviation_card(path)
    checked = np.isfinite(card["compass_heading_deg"].to_numpy(float)) & np.isfinite(card["deviation_deg"].to_numpy(float))
    if not checked.any():
        raise CardError(f"{path} holds no deviation on a compass heading: it cannot give the deviation of a course")
    return deviation_coefficients(card["compass_heading_deg"].to_numpy(float)[checked],
                                  card["deviation_deg"].to_numpy(float)[checked])


def add_check(path: str | Path, check: dict, *, inputs=()) -> pd.DataFrame:
    """Add one compass check to a card and write the card back whole; the card with the check is returned."""
    path = Path(path)
    check_output(path, inputs=inputs)
    card = read_deviation_card(path)
    unknown = set(check) - set(CARD_COLUMNS)
    if unknown:
        raise CardError(f"a deviation-card check has no column {', '.join(sorted(unknown))}")
    row = pd.DataFrame([{c: check.get(c) for c in CARD_COLUMNS}])
    card = pd.concat([card, row], ignore_index=True) if len(card) else row
    atomic_write(path, lambda p: csv_safe(card).to_csv(p, index=False), inputs=inputs)
    return card


__all__ = ["CARD_COLUMNS", "CardError", "add_check", "read_deviation_card", "deviation_curve", "MAX_CARD_BYTES", "MAX_CARD_ROWS"]
