"""Sight series: several sights of one body by one observer within minutes, judged against
the altitude curve the almanac predicts.

Over a few minutes a body's altitude follows the curve Hc(t) computed at the DR (its slope
and curvature come from the almanac and the triangle); a series of good sights lies along
that curve shifted by one constant, the intercept. Only that offset is fitted. A sight off
the curve by more than a threshold (default 2′) or by more than three times the scatter of
the other sights is flagged, and never dropped. The series' best sight is the fitted
curve at the unflagged sight nearest the middle of the series: its time and its observed
altitude (Ho) to carry into the fix.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .constants import ARCMIN_PER_DEG, NS_PER_MINUTE

#: sights of one body by one observer closer together than this make a series (common practice)
SERIES_GAP_MINUTES = 5.0
THRESHOLD_ARCMIN = 2.0
SIGMAS = 3.0
SCATTER_FLOOR_ARCMIN = 0.25  # no series is credited with less scatter than this (common practice)


def series_ids(times_ns: ArrayLike, body: ArrayLike, observer: ArrayLike, given: object | None = None) -> np.ndarray:
    """Series number of each sight: the ``given`` label where there is one, otherwise
    consecutive sights of the same body and observer less than 5 minutes apart."""
    t = np.asarray(times_ns, dtype="datetime64[ns]").astype(np.int64)
    body = np.asarray(body, dtype=object)
    observer = np.asarray(observer, dtype=object)
    n = t.size
    labels = np.empty(n, dtype=object)
    order = np.lexsort((t, body, observer))
    gap = np.diff(t[order]) > SERIES_GAP_MINUTES * NS_PER_MINUTE
    new = np.concatenate([[True], gap | (body[order][1:] != body[order][:-1])
                          | (observer[order][1:] != observer[order][:-1])])
    ids = np.empty(n, dtype=int)
    ids[order] = np.cumsum(new) - 1
    labels[:] = [f"auto-{i + 1}" for i in ids]
    if given is not None:
        given = np.asarray(given, dtype=object)
        has = np.array([isinstance(g, str) and g.strip() != "" for g in given])
        labels[has] = [f"{g.strip()}" for g in given[has]]
    return labels


@dataclass
class SeriesCheck:
    """Per sight: the series, the fitted offset, the deviation from the curve and the flag."""

    series: np.ndarray
    offset_arcmin: np.ndarray  # fitted intercept of the series (the mean of its unflagged sights)
    deviation_arcmin: np.ndarray  # the sight's distance from the fitted curve
    scatter_arcmin: np.ndarray  # the series' robust scatter (1.4826 × the median absolute deviation)
    flagged: np.ndarray
    best: np.ndarray  # True for each series' best sight
    best_ho_deg: np.ndarray  # the fitted curve's Ho at the best sight's time (NaN elsewhere)


#: The median absolute deviation times this estimates the standard deviation of normal errors.
MAD_TO_SIGMA = 1.4826


def group_medians(values: ArrayLike, group: ArrayLike, n_groups: int) -> np.ndarray:
    """The median of the finite values of each group (NaN for a group with none), vectorised by sorting."""
    v = np.asarray(values, dtype=float)
    g = np.asarray(group, dtype=int)
    keep = np.isfinite(v)
    v, g = v[keep], g[keep]
    order = np.lexsort((v, g))
    v, g = v[order], g[order]
    counts = np.bincount(g, minlength=n_groups)
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]])
    out = np.full(n_groups, np.nan)
    has = counts > 0
    low = starts[has] + (counts[has] - 1) // 2
    high = starts[has] + counts[has] // 2
    out[has] = (v[low] + v[high]) / 2.0
    return out


def check_series(series: object, ho_deg: ArrayLike, hc_deg: ArrayLike, *, threshold_arcmin: float = THRESHOLD_ARCMIN,
                 sigmas: float = SIGMAS, times_ns: ArrayLike | None = None) -> SeriesCheck:
    """Check every series: fit the offset robustly, flag sights off the curve, pick the best sight.

    ``hc_deg`` is each sight's Hc at its DR (the predicted curve sampled at the sight), so the
    residual Ho − Hc of a good sight is the series' common offset. The fit is robust, so that
    one blunder cannot drag the curve to itself: each sight's deviation is taken from the
    series' median residual, and the scatter is 1.4826 times the median absolute deviation
    (never below 0.25′). A sight is flagged when it lies more than ``threshold_arcmin`` off
    the curve and, in a series of three or more, more than ``sigmas`` times the scatter. The
    offset is then the mean of the unflagged sights (the median when every sight is flagged),
    so it is never NaN. Vectorised over series with sorting and group sums.
    """
    labels = np.asarray(series, dtype=object)
    residual = (np.asarray(ho_deg, dtype=float) - np.asarray(hc_deg, dtype=float)) * ARCMIN_PER_DEG
    ok = np.isfinite(residual)
    names, group = np.unique(labels.astype(str), return_inverse=True)
    group = group.ravel()
    count = np.bincount(group, weights=ok, minlength=names.size)
    median = group_medians(np.where(ok, residual, np.nan), group, names.size)
    spread = group_medians(np.where(ok, np.abs(residual - median[group]), np.nan), group, names.size)
    scatter = np.maximum(MAD_TO_SIGMA * np.nan_to_num(spread), SCATTER_FLOOR_ARCMIN)
    deviation_from_median = residual - median[group]
    limit = np.where(count[group] >= 3, np.maximum(threshold_arcmin, sigmas * scatter[group]), threshold_arcmin)
    flagged = ok & (count[group] >= 2) & (np.abs(deviation_from_median) > limit)
    good = ok & ~flagged
    good_count = np.bincount(group, weights=good, minlength=names.size)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_good = np.bincount(group, weights=np.where(good, residual, 0.0), minlength=names.size) / good_count
    offset = np.where(good_count > 0, mean_good, median)
    # best sight: the unflagged sight nearest the middle of its series in time
    t = (np.arange(labels.size, dtype=float) if times_ns is None
         else np.asarray(times_ns, dtype="datetime64[ns]").astype(np.int64).astype(float))
    with np.errstate(invalid="ignore", divide="ignore"):
        middle = np.bincount(group, weights=np.where(good, t, 0.0), minlength=names.size) / good_count
    distance = np.where(good, np.abs(t - middle[group]), np.inf)
    best = np.zeros(labels.size, dtype=bool)
    order = np.lexsort((distance, group))
    first = np.concatenate([[True], group[order][1:] != group[order][:-1]])
    candidates = order[first]
    best[candidates[np.isfinite(distance[candidates])]] = True
    best_ho = np.where(best, np.asarray(hc_deg, dtype=float) + offset[group] / ARCMIN_PER_DEG, np.nan)
    return SeriesCheck(labels, np.where(ok, offset[group], np.nan), np.where(ok, residual - offset[group], np.nan),
                       np.where(count[group] >= 2, scatter[group], np.nan), flagged, best, best_ho)


__all__ = ["series_ids", "check_series", "SeriesCheck", "SERIES_GAP_MINUTES", "THRESHOLD_ARCMIN"]
