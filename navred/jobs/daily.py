"""navred days as a job: the day's work of a log (:mod:`navred.jobs.dayswork`) with the voyage it comes from,
built once; the voyage's picture written by :func:`navred.jobs.plotfiles.write_track_picture`."""

from __future__ import annotations

from dataclasses import dataclass

from ..io.logbook import LogSource
from ..io.timesignals import Ratings
from .dayswork import DaysWork
from .voyage import VoyageResult, process_log


@dataclass(frozen=True)
class DaysReport:
    """The voyage (every sight reduced and fixed) and its day's work."""

    voyage: VoyageResult
    days: DaysWork

    @property
    def nothing_reduced(self) -> bool:
        """The log held sight rows, and none could be reduced."""
        return len(self.voyage.reduced) > 0 and self.voyage.n_reduced == 0


def days_log(source: LogSource, *, dates: str | None = None, rates: Ratings | None = None,
             carry_current: bool = False, navigators: tuple[str, ...] | list[str] = (), route: str | None = None,
             card: str | None = None) -> DaysReport:
    """The day's work of a log: the DR kept from the departure through every course and speed and restarted at
    each of the ship's fixes (``carry_current``: the set and drift found at each fix carried on), the set and
    drift at each fix, the estimated positions, the noon positions and the noon report. ``navigators``: the
    observers whose sights are the ship's (the others are exercises); ``route``: a route file (``navred route``'s
    CSV) whose waypoints give the distance to go; ``card``: the deviation card that makes compass courses true."""
    from ..io.cards import deviation_curve
    from ..io.waypoints import read_route

    waypoints = read_route(route) if route else None
    deviation = deviation_curve(card) if card else None
    voyage = process_log(source, dates=dates, plan=False, carry_current=carry_current, rates=rates,
                         navigators=navigators, route=waypoints, deviation=deviation)
    return DaysReport(voyage, voyage.days_work())


__all__ = ["DaysReport", "days_log"]
