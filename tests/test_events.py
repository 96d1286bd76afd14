"""The one event search against functions whose crossings are known in closed form."""

from __future__ import annotations

import numpy as np
import pytest

from navred.constants import NS_PER_HOUR, NS_PER_MILLISECOND
from navred.events import NO_INSTANT, first_crossings, refine_crossings

PERIOD_NS = 24 * NS_PER_HOUR


def wave(t_ns):
    """sin(2π t / 24 h): zero at 0 h and 12 h (rising, falling), +1/2 at 2 h and 10 h (arcsin; exact)."""
    return np.sin(2.0 * np.pi * np.asarray(t_ns, dtype=float) / PERIOD_NS)


def hours(n):
    return (np.asarray(n) * NS_PER_HOUR).astype(np.int64)


def test_refine_crossings_finds_each_root_within_the_tolerance():
    # brackets around the roots of sin at 12 h and 24 h, and of sin − 1/2 at 2 h and 10 h (2π t/24 = π/6, 5π/6)
    lo = hours([11.0, 23.5, 1.0, 9.0])
    hi = hours([13.0, 24.5, 3.0, 11.0])
    found = refine_crossings(wave, lo, hi, level=[0.0, 0.0, 0.5, 0.5])
    exact = hours([12.0, 24.0, 2.0, 10.0])
    assert np.all(np.abs(found - exact) <= NS_PER_MILLISECOND)


def test_refine_crossings_takes_an_end_that_is_the_root():
    def line(t_ns):  # exactly zero at 12 h
        return (np.asarray(t_ns) - hours(12.0)).astype(float)

    assert int(refine_crossings(line, hours(12.0), hours(13.0))[()]) == hours(12.0)
    assert int(refine_crossings(line, hours(11.0), hours(12.0))[()]) == hours(12.0)


def test_first_crossings_by_window_level_and_direction():
    # two windows (day 0 and day 1), sampled every 2 h over 26 h; levels 0 and 1/2
    grid = hours(np.arange(0.0, 26.5, 2.0))[None, :] + np.array([[0], [PERIOD_NS]])
    rising, falling = first_crossings(wave, grid, [0.0, 0.5])
    assert rising.shape == falling.shape == (2, 2)
    # level 0 rises at the window's start (sin is 0 there: at or below, then above) and falls at 12 h
    assert np.all(np.abs(rising[0] - grid[:, 0]) <= NS_PER_MILLISECOND)
    assert np.all(np.abs(falling[0] - (grid[:, 0] + hours(12.0))) <= NS_PER_MILLISECOND)
    assert np.all(np.abs(rising[1] - (grid[:, 0] + hours(2.0))) <= NS_PER_MILLISECOND)
    assert np.all(np.abs(falling[1] - (grid[:, 0] + hours(10.0))) <= NS_PER_MILLISECOND)
    # one level gives one row; a level never reached gives NO_INSTANT
    up, down = first_crossings(wave, grid, 2.0)
    assert up.shape == (2,) and np.all(up == NO_INSTANT) and np.all(down == NO_INSTANT)


def test_first_crossings_only_the_direction_asked_for_and_no_bracket_across_nan():
    grid = hours(np.arange(0.0, 26.5, 2.0))[None, :]
    _, falling = first_crossings(wave, grid, 0.0, rising=False)
    assert abs(int(falling[0]) - hours(12.0)) <= NS_PER_MILLISECOND

    def holed(t_ns):  # no value between 11 h and 13 h: the fall through zero there cannot be bracketed
        values = wave(t_ns)
        t = np.asarray(t_ns)
        return np.where((t > hours(11.0)) & (t < hours(13.0)), np.nan, values)

    _, falling = first_crossings(holed, grid, 0.0)
    assert falling[0] == NO_INSTANT


@pytest.mark.parametrize("tolerance_ms", [1, 100])
def test_the_tolerance_is_kept_for_a_steep_and_a_flat_crossing(tolerance_ms):
    # a cubic with a triple-flat start (t³: slow to bracket by false position) and a line
    def cubic(t_ns):
        x = (np.asarray(t_ns, dtype=float) - hours(5.0)) / NS_PER_HOUR
        return x**3

    found = refine_crossings(cubic, hours(0.0), hours(7.0), tolerance_ns=tolerance_ms * NS_PER_MILLISECOND)
    assert abs(int(found[()]) - hours(5.0)) <= tolerance_ms * NS_PER_MILLISECOND
