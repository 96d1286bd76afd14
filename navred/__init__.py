"""navred: celestial-navigation sight reduction from first principles.

An aid to navigation, not a sole means: verify against the official nautical
almanac and publications, keep a DR plot, and defer to local regulations, the
master and licensed practice.

The front for a notebook (docs/api.md): the functions a user calls, the results they return and the errors and
warnings they raise, each imported when first asked for (so that ``import navred`` loads no heavy library).

>>> import navred
>>> "read_sight_log" in dir(navred) and "NavredError" in dir(navred)
True
"""

from __future__ import annotations

__version__ = "0.1.0"

#: The functions a user calls (each a public front: navred's own errors only, see navred.errors.api_boundary).
FUNCTIONS = {
    "read_sight_log": "io.logbook",  # sight logs (CSV, .xlsx, folders, a DataFrame) -> SightLog
    "reduce_sights": "jobs.sights",  # sights -> Ho, Hc, Zn and the intercept, a row per sight
    "process_log": "jobs.voyage",  # the whole job: read, reduce, fix every group -> VoyageResult
    "fix_position": "jobs.frames",  # one fix group's reduced sights -> FixResult
    "fix_positions": "jobs.frames",  # every fix group's reduced sights at once -> GroupedFixes
    "body_positions": "jobs.frames",  # the almanac as a table
    "sun_events": "plan",  # twilights, sunrise, meridian passage and sunset of a date
    "mark_workings": "jobs.workings",  # a cadet's hand working marked line by line -> MarkingReport
    "read_track": "io.track",  # a reference track (GPX, NMEA, CSV) -> ReferenceTrack
    "read_rating_log": "io.timesignals",  # time signals -> Ratings of each timepiece
    "read_deviation_card": "io.cards",  # a deviation card (CSV) -> a table
    "passage_paper": "jobs.paper",  # the printed backup of a passage along a DR -> PassagePaper
}
#: The results those functions return (frozen dataclasses).
RESULTS = {
    "SightLog": "io.logbook", "VoyageResult": "jobs.voyage", "GroupFix": "jobs.voyage", "FixResult": "fix", "GroupedFixes": "jobs.frames",
    "Places": "almanac", "MarkingReport": "jobs.workings", "ReferenceTrack": "io.track", "Ratings": "io.timesignals",
    "PassagePaper": "jobs.paper",
}
#: The errors navred raises (all NavredError, a ValueError) and the warning it gives.
ERRORS = {
    "NavredError": "errors", "NavredWarning": "errors", "NavredInternalError": "errors", "TimeInputError": "errors",
    "BodyNameError": "errors", "AngleInputError": "errors", "SightInputError": "errors",
    "LogbookError": "io.readers", "TrackError": "io.track", "CardError": "io.cards", "OutputError": "io.output",
}
#: The words results are sorted by (enums whose members are the words written: SightStatus.ERROR == "error").
WORDS = {"SightStatus": "status", "FixKind": "status", "RunFrom": "status", "Distrust": "status"}
_FRONT = {**FUNCTIONS, **RESULTS, **ERRORS, **WORDS}

__all__ = ["__version__", *_FRONT]


def __getattr__(name: str):
    # the front, imported only when asked for (pandas stays unloaded until then)
    if name in _FRONT:
        import importlib

        value = getattr(importlib.import_module(f".{_FRONT[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'navred' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(__all__)
