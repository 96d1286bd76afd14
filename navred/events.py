"""When does it happen: the one search for the instant a quantity crosses a level.

Every "when" navred finds goes through here: sunrise, sunset and the twilights, meridian passage,
the Sun on the celestial horizon for an amplitude, the UTC of a lunar distance. As skyfield keeps
one ``find_discrete`` for all its almanac events, the caller gives a function of instants and the
search does the rest:

1. the function is sampled on a grid of instants, one row per window (a day, a pass), and every
   sign change of ``f − level`` in the direction wanted brackets one crossing;
2. all the brackets, of every window and every level, are refined at once by false position with
   the Illinois modification (M. Dowell and P. Jarratt, "A modified regula falsi method for
   computing the root of an equation", BIT 11, 1971; from memory): superlinear on the smooth
   functions of the sky, never leaving its bracket, so that it cannot wander off to another
   crossing as a Newton step can.

Instants are int64 nanoseconds of UTC (numpy datetime64[ns] viewed as int64); the function takes
an int64 array of any shape and returns floats of that shape. A window whose crossing is not found
gives :data:`NO_INSTANT` (NaT as int64: ``.astype('datetime64[ns]')`` shows it as NaT). Core code: numpy only.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike

from .constants import NS_PER_MILLISECOND

#: An instant not found (numpy's NaT as int64).
NO_INSTANT = np.iinfo(np.int64).min
#: The search stops when each crossing is bracketed this closely (1 ms: a thousandth of the second every
#: time navred prints).
TOLERANCE_NS = NS_PER_MILLISECOND
#: False position needs a few steps on these smooth functions; the bound only guards against a function
#: that is not smooth within its bracket (each step still shrinks the bracket by the tolerance).
MAX_STEPS = 100

Function = Callable[[np.ndarray], np.ndarray]


def refine_crossings(f: Function, lo_ns: ArrayLike, hi_ns: ArrayLike, *, level: ArrayLike = 0.0,
                     f_lo: ArrayLike | None = None, f_hi: ArrayLike | None = None,
                     tolerance_ns: int = TOLERANCE_NS) -> np.ndarray:
    """The instant (int64 ns) where ``f`` crosses ``level`` inside each bracket [lo, hi].

    ``f − level`` must have opposite signs (or a zero) at the two ends: ``f_lo`` and ``f_hi``, the
    function's values there, save two evaluations when the caller has them. Every bracket is refined
    at once (one call of ``f`` a step, on the brackets not yet settled) to within ``tolerance_ns``;
    the middle of the last bracket is returned.

    >>> line = lambda t: (t - 1234.0) / 1000.0
    >>> int(refine_crossings(line, 0, 10_000, tolerance_ns=2)[()])
    1234
    """
    lo, hi = (np.array(a) for a in np.broadcast_arrays(np.asarray(lo_ns, dtype=np.int64),
                                                        np.asarray(hi_ns, dtype=np.int64)))
    shape = lo.shape
    level = np.broadcast_to(np.asarray(level, dtype=float), shape)
    g_lo = np.broadcast_to(f(lo) if f_lo is None else np.asarray(f_lo, dtype=float), shape) - level
    g_hi = np.broadcast_to(f(hi) if f_hi is None else np.asarray(f_hi, dtype=float), shape) - level
    lo, hi, level, g_lo, g_hi = (np.array(a, copy=True).reshape(-1) for a in (lo, hi, level, g_lo, g_hi))
    half = max(int(tolerance_ns) // 2, 1)
    last_side = np.zeros(lo.size, dtype=np.int8)  # which end moved last: −1 the low end, +1 the high end
    active = np.flatnonzero((hi - lo > tolerance_ns) & (g_lo != 0) & (g_hi != 0))
    for _ in range(MAX_STEPS):
        if active.size == 0:
            break
        a, b, ga, gb = lo[active], hi[active], g_lo[active], g_hi[active]
        with np.errstate(invalid="ignore", divide="ignore"):
            fraction = np.nan_to_num(ga / (ga - gb), nan=0.5)
        step = np.rint((b - a) * np.clip(fraction, 0.0, 1.0)).astype(np.int64)
        # each trial stands at least half the tolerance inside the bracket, so that the bracket closes
        c = np.clip(a + step, a + half, b - half)
        gc = f(c) - level[active]
        low_side = np.sign(gc) == np.sign(ga)
        exact = gc == 0
        # Illinois: an end kept twice running has its value halved, so that the next trial steps past the root
        keep_high = low_side & (last_side[active] == -1)
        keep_low = ~low_side & (last_side[active] == 1)
        g_hi[active] = np.where(keep_high, gb / 2.0, np.where(low_side, gb, gc))
        g_lo[active] = np.where(keep_low, ga / 2.0, np.where(low_side, gc, ga))
        lo[active] = np.where(low_side | exact, c, a)
        hi[active] = np.where(~low_side | exact, c, b)
        last_side[active] = np.where(low_side, -1, 1)
        settled = exact | (hi[active] - lo[active] <= tolerance_ns)
        active = active[~settled]
    found = np.where(g_lo == 0, lo, np.where(g_hi == 0, hi, lo + (hi - lo) // 2))
    return found.reshape(shape)


def first_crossings(f: Function, grid_ns: ArrayLike, levels: ArrayLike = 0.0, *, values: ArrayLike | None = None,
                    rising: bool = True, falling: bool = True, tolerance_ns: int = TOLERANCE_NS
                    ) -> tuple[np.ndarray, np.ndarray]:
    """The first instant in each window that ``f`` rises through each level, and the first it falls through it.

    ``grid_ns`` (windows, samples): each window's sample instants in time order (int64 ns), close enough
    that no window's function crosses a level twice between two samples. ``levels``: one level, or an
    array of levels (each searched in every window; a level may also be given per window as an array of
    shape (levels, windows)). ``values``: ``f`` at the grid when the caller has it. Rising is from at or
    below the level to above it; a step with an end where ``f`` is NaN (no value there) brackets nothing. Returns (rising, falling), each of shape levels.shape + (windows,)
    (int64 ns, :data:`NO_INSTANT` where the window has no such crossing); every bracket of every window,
    level and direction is refined in one :func:`refine_crossings`.
    """
    grid = np.atleast_2d(np.asarray(grid_ns, dtype=np.int64))
    sampled = np.asarray(f(grid) if values is None else values, dtype=float).reshape(grid.shape)
    level_array = np.asarray(levels, dtype=float)
    windows = grid.shape[0]
    if level_array.ndim < 2:
        per_window = np.broadcast_to(np.atleast_1d(level_array)[:, None], (level_array.size, windows))
    else:
        per_window = np.broadcast_to(level_array, (level_array.shape[0], windows))
    above = sampled[None, :, :] > per_window[:, :, None]  # (levels, windows, samples)
    # a step with an end where the function has no value (NaN) brackets nothing
    defined = np.isfinite(sampled[:, :-1]) & np.isfinite(sampled[:, 1:])
    wanted = []
    if rising:
        wanted.append(("rising", ~above[..., :-1] & above[..., 1:] & defined))
    if falling:
        wanted.append(("falling", above[..., :-1] & ~above[..., 1:] & defined))
    brackets, slots = [], []
    results = {"rising": np.full(per_window.shape, NO_INSTANT, dtype=np.int64),
               "falling": np.full(per_window.shape, NO_INSTANT, dtype=np.int64)}
    for name, change in wanted:
        has = change.any(axis=-1)
        first = np.argmax(change, axis=-1)
        level_index, window = np.nonzero(has)
        sample = first[level_index, window]
        brackets.append((window, sample, per_window[level_index, window]))
        slots.append((name, level_index, window))
    if brackets:
        window = np.concatenate([b[0] for b in brackets])
        sample = np.concatenate([b[1] for b in brackets])
        level = np.concatenate([b[2] for b in brackets])
        found = refine_crossings(f, grid[window, sample], grid[window, sample + 1], level=level,
                                 f_lo=sampled[window, sample], f_hi=sampled[window, sample + 1],
                                 tolerance_ns=tolerance_ns) if window.size else np.zeros(0, dtype=np.int64)
        start = 0
        for name, level_index, win in slots:
            results[name][level_index, win] = found[start:start + win.size]
            start += win.size
    shape = per_window.shape if level_array.ndim else per_window.shape[1:]
    return results["rising"].reshape(shape), results["falling"].reshape(shape)


__all__ = ["refine_crossings", "first_crossings", "NO_INSTANT", "TOLERANCE_NS"]
