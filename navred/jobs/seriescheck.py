"""navred series as a job: each series of sights of one body against its predicted altitude curve, the sights
reduced and fixed as every command does (:func:`navred.jobs.voyage.process_log`), the series checked at the
threshold asked for (:func:`navred.jobs.frames.series_columns`)."""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from ..io.logbook import LogSource
from ..io.timesignals import Ratings
from ..series import THRESHOLD_ARCMIN
from .frames import series_columns
from .voyage import VoyageResult, process_log


@dataclass(frozen=True)
class SeriesReport:
    """The voyage, and its reduced sights with the series columns at the threshold asked for."""

    voyage: VoyageResult
    sights: pd.DataFrame
    threshold_arcmin: float

    @property
    def series(self) -> pd.DataFrame:
        """The sights of every series of two or more."""
        return self.sights[self.sights.series_size >= 2] if len(self.sights) else self.sights


def check_series_log(source: LogSource, *, dates: str | None = None, rates: Ratings | None = None,
                     threshold_arcmin: float = THRESHOLD_ARCMIN) -> SeriesReport:
    """Read and reduce a log and check each series of sights, flagging a sight more than ``threshold_arcmin``
    off its series' curve (or three times the scatter of the others)."""
    voyage = process_log(source, dates=dates, plan=False, rates=rates)
    sights = voyage.reduced.copy()
    if len(sights):
        for column, values in series_columns(sights, threshold_arcmin=threshold_arcmin).items():
            sights[column] = values
    return SeriesReport(voyage, sights, threshold_arcmin)


__all__ = ["SeriesReport", "check_series_log"]
