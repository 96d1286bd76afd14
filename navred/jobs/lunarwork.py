"""A lunar distance worked: the cleared distance, the UTC it gives, the chronometer's error and the longitude
(:func:`navred.lunar.lunar_distance`, the core), as one result with the observation as it was given, a table
of its figures and a small workbook of the working."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..io.output import atomic_write
from ..io.workbook import cell_value, fit_pages, front_sheet, write_text_safe
from ..lunar import LunarResult, lunar_distance


def _time_text(value) -> str:
    if value is None or (isinstance(value, np.datetime64) and np.isnat(value)):
        return "-"
    return str(value)[:19].replace("T", " ")


@dataclass(frozen=True)
class LunarWorking:
    """One lunar distance worked: the core's result and the observation as it was written."""

    result: LunarResult
    #: the observation as given (the distance, the bodies, the limbs, the time, the DR), for the workbook
    observation: Mapping[str, str]

    @property
    def values(self) -> dict[str, object]:
        """The result's figures by their snake_case names (the --csv row and the workbook's Result block)."""
        r = self.result
        return {"utc": _time_text(r.utc), "cleared_distance_deg": r.cleared_distance_deg,
                "apparent_distance_deg": r.apparent_distance_deg, "chronometer_error_s": r.chronometer_error_s,
                "seconds_per_tenth_arcmin": r.seconds_per_tenth_arcmin, "longitude_deg": r.longitude_deg,
                "longitude_from": r.longitude_from}


def work_lunar(distance_deg: float, other: str, utc: str, lat_deg: float, lon_deg: float, *,
               moon_limb: str = "near", other_limb: str = "centre", index_error_arcmin: float = 0.0,
               moon_altitude_deg: float | None = None, other_altitude_deg: float | None = None,
               as_given: Mapping[str, str] | None = None) -> LunarWorking:
    """A lunar distance worked (see :func:`navred.lunar.lunar_distance` for the arguments); ``as_given``: the
    observation as the navigator wrote it, kept for the workbook."""
    result = lunar_distance(distance_deg, other, utc, lat_deg, lon_deg, moon_limb=moon_limb, other_limb=other_limb,
                            index_error_arcmin=index_error_arcmin, moon_apparent_altitude_deg=moon_altitude_deg,
                            other_apparent_altitude_deg=other_altitude_deg)
    return LunarWorking(result, dict(as_given or {}))


def write_lunar_workbook(working: LunarWorking, path: str | Path) -> Path:
    """A small workbook of one lunar distance: the caution, the observation and every result line."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    book = Workbook()
    sheet = front_sheet(book, "Lunar distance", "navred lunar distance")
    line = 5
    for title, block in (("Observation", working.observation), ("Result", working.values)):
        sheet.cell(row=line, column=1, value=title).font = Font(bold=True)
        for key, value in block.items():
            line += 1
            write_text_safe(sheet.cell(row=line, column=1), str(key).replace("_", " "))
            write_text_safe(sheet.cell(row=line, column=2), cell_value(value) if value is not None else "")
        line += 2
    sheet.column_dimensions["A"].width = 32
    sheet.column_dimensions["B"].width = 60
    fit_pages(book)
    return atomic_write(path, book.save)


__all__ = ["LunarWorking", "work_lunar", "write_lunar_workbook"]
