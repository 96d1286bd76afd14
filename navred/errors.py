"""Exceptions and warnings raised by navred's core.

The core never prints: it raises a :class:`NavredError` (a ``ValueError``) whose
message names the bad value, what is accepted and, for arrays, which elements
failed; and it issues a :class:`NavredWarning` for results that are usable but
need the navigator's attention. Only the command line prints.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:  # numpy is imported when an error is described, so that the command line starts quickly
    import numpy as np


class NavredError(ValueError):
    """Base class of every error navred raises on bad input."""


class TimeInputError(NavredError):
    """An instant that cannot be read, has no zone, or lies outside the ephemeris."""


class BodyNameError(NavredError):
    """A body name that is not in navred's catalogue."""


class AngleInputError(NavredError):
    """An angle that cannot be read or lies outside its accepted range."""


class SightInputError(NavredError):
    """A sight value (altitude, height of eye, limb, ...) that is not accepted."""


class NavredInternalError(NavredError):
    """A failure navred did not foresee, met at its public front: a fault of navred's, to be reported; the
    original exception is its ``__cause__``."""


def api_boundary(function):
    """The public front of navred: an exception other than navred's own (a TypeError, a ValueError, an
    IndexError from a library) comes out as a :class:`NavredInternalError` naming it, so that a caller
    catching :class:`NavredError` is never surprised; navred's own errors, warnings, interruptions and
    memory errors pass unchanged."""
    import functools

    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        try:
            return function(*args, **kwargs)
        except NavredError:
            raise
        except (TypeError, ValueError, IndexError, KeyError, AttributeError, ZeroDivisionError, OverflowError,
                LookupError, ArithmeticError) as exc:
            text = " ".join(str(exc).split())[:200]
            raise NavredInternalError(
                f"an unexpected failure in {function.__name__} ({type(exc).__name__}: {text}); this is a fault in "
                "navred: please report it with the input (docs/security.md)") from exc

    return wrapper


class NavredWarning(UserWarning):
    """A usable result that the navigator should check (low sight, stale table, ...)."""


class InstantsWarning(NavredWarning):
    """A warning about some instants of a batch (after the end of the IERS table, after the leap-second table's
    expiry): the message names them by their place in the batch, counted from 1; ``about`` is the same warning
    without them ('instants after 2027-11-12, ...') and ``positions`` their places counted from 0, so that a caller
    that knows which row of a log each instant is can name the rows instead (:class:`RowsWarning`)."""

    def __init__(self, message: str = "", about: str = "", positions=()) -> None:
        super().__init__(message)
        self.about = about
        self.positions = positions


class RowsWarning(NavredWarning):
    """A warning about some rows of a log, said once for a whole run: ``about`` is what is wrong
    ('instants after 2027-11-12, ...'), ``rows`` the rows it is about (a table with the columns row and source),
    so that the warnings of a log's blocks, each about its own rows, are put together into one
    (:func:`navred.cli.common.print_warnings`)."""

    def __init__(self, message: str = "", about: str = "", rows=None) -> None:
        super().__init__(message)
        self.about = about
        self.rows = rows


def failed_elements(mask: np.ndarray, limit: int = 10) -> str:
    """Describe which values of an array failed a check, for an error message a person reads: 'the value'
    for one, else which of them counted from 1 (never a program's indices from 0).

    >>> import numpy as np
    >>> failed_elements(np.array([False, True, True]))
    'values 2 and 3 of 3'
    >>> failed_elements(np.array([True]))
    'the value'
    >>> failed_elements(np.array([True, False]))
    'value 1 of 2'
    >>> failed_elements(np.arange(30) > 5)
    'values 7, 8, 9, 10, 11, 12, 13, 14, 15, 16 and 14 more of 30'
    """
    import numpy as np

    mask = np.asarray(mask, dtype=bool)
    if mask.size == 1:
        return "the value"
    flat = np.flatnonzero(mask.ravel()) + 1
    shown = [str(i) for i in flat[:limit].tolist()]
    if flat.size > limit:
        return f"values {', '.join(shown)} and {flat.size - limit} more of {mask.size}"
    if len(shown) == 1:
        return f"value {shown[0]} of {mask.size}"
    return f"values {', '.join(shown[:-1])} and {shown[-1]} of {mask.size}"


def first_bad(values: np.ndarray, mask: np.ndarray) -> object:
    """Return the first offending value of ``values`` where ``mask`` is true."""
    import numpy as np

    values = np.asarray(values)
    mask = np.broadcast_to(np.asarray(mask, dtype=bool), values.shape)
    return values[mask].ravel()[0] if mask.any() else None
