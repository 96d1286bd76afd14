"""The words results are sorted by: a sight's status, what a group of sights gives, how its run was found.

Each is a small enum whose members are the very words written in every table and message
(``SightStatus.ERROR == "error"``), with a code and a meaning kept in one table beside it, as ERFA
keeps its status codes (0 good, + a warning, − an error). Compare with the members, never with
the words written out: a new status is one edit here.

Pure data: no I/O, and nothing heavier than the standard library at import (the command line reads it).

>>> SightStatus.ERROR == "error", SightStatus.ERROR.code, FixKind.LINE.code
(True, -1, 1)
>>> print(FixKind.LATITUDE)
latitude
"""

from __future__ import annotations

from enum import Enum
from typing import Any


class _Word(str, Enum):
    """An enum of words: each member is the word it stands for (it prints, compares and is written as that
    word), with the code and the meaning its table gives."""

    def __str__(self) -> str:
        return str.__str__(self)

    @property
    def code(self) -> int:
        return _TABLES[type(self)][self][0]

    @property
    def meaning(self) -> str:
        return _TABLES[type(self)][self][1]


class SightStatus(_Word):
    """A sight's status after reduction (the ``status`` column)."""

    OK = "ok"
    WARNING = "warning"
    ERROR = "error"


class FixKind(_Word):
    """What a group of sights gives (``FixResult.kind``)."""

    FIX = "fix"
    LINE = "line of position"
    LATITUDE = "latitude"


class RunFrom(_Word):
    """How the run between a fix's sights was found (``FixResult.run_from``)."""

    NONE = "none"
    COURSE_AND_SPEED = "course and speed"
    COURSE_SPEED_AND_CURRENT = "course, speed and current"
    CURRENT = "current"
    OWN_DRS = "the rows' own DRs"
    SOLVED = "solved (course and speed made good)"


class Distrust(_Word):
    """Why a fix cannot be trusted as the position to plot (``FixResult.untrusted_cause``; the ``untrusted_cause``
    column of every table of fixes). Decided in one place, :func:`navred.grosserrors.mark_untrusted` (and
    :func:`navred.grosserrors.misread_rounds` for Hs written as a decimal, :func:`navred.grosserrors.mirrored_drs`
    for a DR in the wrong hemisphere, :func:`navred.grosserrors.distrust` for a slip every sight fits or a gross
    sight in a fix with none to spare, :func:`navred.jobs.zoneslips.unchecked_slips`)."""

    HS_AS_DECIMAL = "Hs as a decimal"
    COMMON_ERROR = "common error"
    SCATTER = "scatter"
    DR_HEMISPHERE = "DR hemisphere"
    FAR_FROM_DR = "far from the DR"
    SLIP = "a slip every sight fits"
    UNCHECKED_SLIP = "a gross sight unchecked"


#: code and meaning of every member, one table per enum (0: as expected; > 0: to be read with care; < 0: refused).
SIGHT_STATUS_TABLE = {
    SightStatus.OK: (0, "reduced; nothing to note"),
    SightStatus.WARNING: (1, "reduced, with a caveat in its message (a low sight, a limb ignored, a star out of "
                             "twilight...): read it before using the sight"),
    SightStatus.ERROR: (-1, "not reduced: its message says why; its figures are blank and no fix uses it"),
}
FIX_KIND_TABLE = {
    FixKind.FIX: (0, "lines of position that cross well: a position, with its 95 % ellipse"),
    FixKind.LINE: (1, "lines of position that cross at a small angle: one line, the position along it the DR's"),
    FixKind.LATITUDE: (2, "lines of position all near the meridian: a latitude, the longitude the DR's"),
}
RUN_FROM_TABLE = {
    RunFrom.NONE: (0, "sights taken together, or a ship taken as stopped"),
    RunFrom.COURSE_AND_SPEED: (0, "the course and speed in force after each sight"),
    RunFrom.COURSE_SPEED_AND_CURRENT: (0, "the course and speed in force after each sight and the current"),
    RunFrom.CURRENT: (0, "the current alone (no course or speed given)"),
    RunFrom.OWN_DRS: (1, "no course or speed given: the run between the rows' own DRs"),
    RunFrom.SOLVED: (0, "the course and speed made good, solved with the position"),
}
DISTRUST_TABLE = {
    Distrust.HS_AS_DECIMAL: (-1, "the Hs read as degrees and minutes written as a decimal make the sights agree"),
    Distrust.COMMON_ERROR: (-2, "the sights scatter beyond a sextant, every one off by about the same (index error)"),
    Distrust.SCATTER: (-3, "the sights scatter beyond a sextant: an altitude, time, body name or the run is wrong"),
    Distrust.DR_HEMISPHERE: (-4, "the DR mirrored (N for S, E for W) fits the sights: the DR was written wrongly"),
    Distrust.FAR_FROM_DR: (-5, "over three times as far from the DR as the DR could be out: a slip is likelier"),
    Distrust.SLIP: (-6, "far from its DR, and one slip (the date, am/pm, the hour, the ZD...) fits every sight"),
    Distrust.UNCHECKED_SLIP: (-7, "no sight to spare, and one it rests on has an intercept over 30 nm (a probable "
                                  "slip, named where one fits) that the latest fix run on does not explain"),
}
_TABLES = {SightStatus: SIGHT_STATUS_TABLE, FixKind: FIX_KIND_TABLE, RunFrom: RUN_FROM_TABLE,
           Distrust: DISTRUST_TABLE}


def usable(status: Any) -> Any:
    """A boolean array, True for each sight whose status is not :attr:`SightStatus.ERROR` (a reduced sight, warned
    or not).

    >>> usable(["ok", "error", "warning"]).tolist()
    [True, False, True]
    """
    import numpy as np  # here, so that the command line starts without numpy

    return np.asarray(status, dtype=object) != SightStatus.ERROR


__all__ = ["SightStatus", "FixKind", "RunFrom", "Distrust", "SIGHT_STATUS_TABLE", "FIX_KIND_TABLE", "RUN_FROM_TABLE",
           "DISTRUST_TABLE", "usable"]
