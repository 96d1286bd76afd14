"""The reduction of a log as a command runs it: every sight to Ho, Hc, Zn and the intercept, read through the
one reader (:func:`navred.io.logbook.read_sight_log`), with a DR carried along the log's track carried from
the last fix before the sight as every command that fixes carries it (:func:`navred.jobs.voyage.process_log`),
so that the intercepts agree. A long plain log is reduced block by block, the blocks shared among the cores
(:func:`reduce_log_csv`), so that a fleet's archive never sits in memory whole."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import pandas as pd

from ..errors import NavredError
from ..io.logbook import LogBlocks, LogSource, SightLog, read_sight_log, sight_log_blocks
from ..io.output import csv_bytes
from ..io.timesignals import Ratings
from ..status import SightStatus
from .forking import cores, forked_map
from .sights import reduce_sights
from .voyage import process_log

#: rows of a long log reduced together by :func:`reduce_log_csv` (each core holds one block's working)
REDUCE_BLOCK_ROWS = 25_000


def count_reduced(reduced: pd.DataFrame) -> int:
    """How many sights of a reduced table were reduced (with or without a warning)."""
    return int((reduced["status"] != SightStatus.ERROR).sum()) if len(reduced) else 0


def require_reduced(rows: int, reduced: int, where: str = "navred reduce names each row and why") -> None:
    """Refuse a run that reduced no sight, in one line: a log with no sight rows, or none readable
    (``where``: where the navigator finds each row's reason)."""
    if rows == 0:
        raise NavredError("nothing could be reduced: the log holds no sights, only a header (and perhaps empty rows)")
    if reduced == 0:
        raise NavredError(f"nothing could be reduced: {'the one row was' if rows == 1 else f'every one of the {rows} rows was'} "
                          f"rejected; {where}")


def reduced_sights(log: SightLog, navigators: tuple[str, ...] = ()) -> pd.DataFrame:
    """A log's sights reduced; a DR the reader carried along the log's track is carried from the last of the
    ship's fixes before the sight (``navigators``: whose fixes are the ship's), as
    :func:`navred.jobs.voyage.process_log` carries it."""
    if len(log.table) and (log.table["dr_carried_from"] != "").any():
        return process_log(log, plan=False, navigators=navigators).reduced
    if navigators:  # a group mixing the navigators' sights and another observer's is split, as process_log does
        from .shipsfixes import split_mixed_groups

        log = split_mixed_groups(log, tuple(navigators))
    return reduce_sights(log)


@dataclass(frozen=True)
class ReducedLog:
    """A log read and reduced: the log as read (its notes, empty rows, rejections) and one reduced row per sight."""

    log: SightLog
    reduced: pd.DataFrame
    ratings: Ratings | None = None

    @property
    def notes(self) -> tuple[str, ...]:
        """What the readers noted about the files as a whole (the rating log's, then the log's)."""
        ratings = tuple(self.ratings.notes) if self.ratings is not None else ()
        return tuple(dict.fromkeys([*ratings, *self.log.notes]))

    @property
    def n_reduced(self) -> int:
        return count_reduced(self.reduced)


def reduce_log(source: LogSource, *, dates: str | None = None, rates: Ratings | None = None,
               navigators: tuple[str, ...] = ()) -> ReducedLog:
    """Read a log (or several) and reduce every sight (see the module); ``navigators`` as navred days takes them
    (whose fixes carry a sight's DR)."""
    log = read_sight_log(source, dates=dates, rates=rates)
    if navigators:  # refused when it names no observer, whether or not a DR is carried
        from .shipsfixes import check_navigators

        navigators = check_navigators(set(log.table["observer"].tolist()) if len(log.table) else set(), navigators)
    return ReducedLog(log, reduced_sights(log, tuple(navigators)), rates)


#: the columns of a sight refused or warned about that :class:`ReducedCount` keeps (its row, body and why)
FLAGGED_COLUMNS = ("source", "row", "body_name", "status", "message")


@dataclass(frozen=True)
class ReducedCount:
    """What a reduction came to, for the run's closing lines when the sights themselves went out as CSV: how many
    sights were read, reduced and warned about, the empty rows skipped, and every sight refused or warned about
    (its source, row, body, status and message: :data:`FLAGGED_COLUMNS`). Counts of blocks add up (``+``)."""

    rows: int = 0
    reduced: int = 0
    warned: int = 0
    empty_rows: int = 0
    flagged: pd.DataFrame | None = None
    #: what the reader noted of the block (a row repeating the header, skipped), in order
    notes: tuple[str, ...] = ()

    @classmethod
    def of(cls, reduced: pd.DataFrame, empty_rows: int = 0, notes: tuple[str, ...] = ()) -> ReducedCount:
        if not len(reduced):
            return cls(empty_rows=empty_rows, notes=tuple(notes))
        status = reduced["status"]
        flagged = reduced.loc[status != SightStatus.OK, [c for c in FLAGGED_COLUMNS if c in reduced.columns]]
        return cls(len(reduced), count_reduced(reduced), int((status == SightStatus.WARNING).sum()), empty_rows,
                   flagged.reset_index(drop=True), tuple(notes))

    @property
    def refused(self) -> int:
        return self.rows - self.reduced

    def __add__(self, other: ReducedCount) -> ReducedCount:
        parts = [f for f in (self.flagged, other.flagged) if f is not None and len(f)]
        return ReducedCount(self.rows + other.rows, self.reduced + other.reduced, self.warned + other.warned,
                            self.empty_rows + other.empty_rows,
                            pd.concat(parts, ignore_index=True) if len(parts) > 1 else (parts[0] if parts else None),
                            tuple(dict.fromkeys((*self.notes, *other.notes))))


def _block_csv(plan: LogBlocks, k: int) -> tuple[bytes, ReducedCount]:
    """Block ``k`` of a long log read, reduced and written as CSV (UTF-8; the header with the first), with what
    its reduction came to."""
    log = plan.read(k)
    reduced = reduced_sights(log)
    return csv_bytes(reduced, header=k == 0), ReducedCount.of(reduced, log.empty_rows, log.notes)


@dataclass(frozen=True)
class ReducedCsv:
    """A log to be reduced and written as CSV: :meth:`blocks` gives its text (UTF-8 bytes) block by block, in
    order, with what each block's reduction came to (:class:`ReducedCount`: add them up for the whole log); a
    log that must be read whole is one block."""

    ratings: Ratings | None
    #: the long log's blocks, or None when the log was read whole (``whole``)
    plan: LogBlocks | None
    whole: ReducedLog | None

    @property
    def notes(self) -> tuple[str, ...]:
        if self.whole is not None:
            return self.whole.notes
        ratings = tuple(self.ratings.notes) if self.ratings is not None else ()
        return tuple(dict.fromkeys([*ratings, *self.plan.notes]))

    def blocks(self) -> Iterator[tuple[bytes, ReducedCount]]:
        if self.whole is not None:
            yield csv_bytes(self.whole.reduced), ReducedCount.of(self.whole.reduced, self.whole.log.empty_rows)
            return
        yield from forked_map(_block_csv, range(len(self.plan)), context=self.plan, workers=cores())


def reduce_log_csv(source: LogSource, *, dates: str | None = None, rates: Ratings | None = None,
                   navigators: tuple[str, ...] = ()) -> ReducedCsv:
    """A log's reduction as CSV text (every column of every sight, reduced or not), a long plain CSV log block
    by block (:data:`REDUCE_BLOCK_ROWS` rows each, shared among the cores): the same text as one process
    reading the log whole (tested). With ``navigators`` the log is read whole (the ship's fixes anywhere in it
    carry each sight's DR)."""
    plan = None if navigators else sight_log_blocks(source, dates=dates, rates=rates, block_rows=REDUCE_BLOCK_ROWS)
    return ReducedCsv(rates, plan, reduce_log(source, dates=dates, rates=rates, navigators=navigators)
                      if plan is None else None)


__all__ = ["REDUCE_BLOCK_ROWS", "ReducedLog", "ReducedCsv", "ReducedCount", "reduce_log", "reduce_log_csv", "reduced_sights",
           "require_reduced", "count_reduced"]
