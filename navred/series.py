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

from .constants import ARCMIN_PER_DEG

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
    gap = np.diff(t[order]) > SERIES_GAP_MINUTES * 60e9
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
    offset_arcmin: np.ndarray  # fitted intercept of the series (from the other sights, for each)
    deviation_arcmin: np.ndarray  # the sight's distance from the fitted curve
    scatter_arcmin: np.ndarray  # scatter of the other sights of its series
    flagged: np.ndarray
    best: np.ndarray  # True for each series' best sight
    best_ho_deg: np.ndarray  # the fitted curve's Ho at the best sight's time (NaN elsewhere)


def check_series(series: object, ho_deg: ArrayLike, hc_deg: ArrayLike, *, threshold_arcmin: float = THRESHOLD_ARCMIN,
                 sigmas: float = SIGMAS, times_ns: ArrayLike | None = None) -> SeriesCheck:
    """Check every series: fit the offset, flag sights off the curve, pick the best sight.

    ``hc_deg`` is each sight's Hc at its DR (the predicted curve sampled at the sight), so the
    residual Ho − Hc of a good sight is the series' common offset. Each sight is judged
    against the others of its series (the offset and scatter without it: a blunder cannot
    drag the curve to itself). Vectorised over series with sorting and group sums.
    """
    labels = np.asarray(series, dtype=object)
    residual = (np.asarray(ho_deg, dtype=float) - np.asarray(hc_deg, dtype=float)) * ARCMIN_PER_DEG
    ok = np.isfinite(residual)
    names, group = np.unique(labels.astype(str), return_inverse=True)
    count = np.bincount(group, weights=ok, minlength=names.size)
    total = np.bincount(group, weights=np.where(ok, residual, 0.0), minlength=names.size)
    square = np.bincount(group, weights=np.where(ok, residual**2, 0.0), minlength=names.size)
    others = count[group] - ok
    # leave-one-out mean and standard deviation of the other sights of the series
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_other = (total[group] - np.where(ok, residual, 0.0)) / others
        var_other = (square[group] - np.where(ok, residual**2, 0.0) - others * mean_other**2) / (others - 1)
    scatter = np.sqrt(np.maximum(np.nan_to_num(var_other, nan=0.0), SCATTER_FLOOR_ARCMIN**2))
    scatter = np.where(others >= 2, scatter, np.nan)
    deviation = residual - mean_other
    flagged = ok & (others >= 1) & ((np.abs(deviation) > threshold_arcmin)
                                    | ((others >= 2) & (np.abs(deviation) > sigmas * scatter)))
    # the fitted offset of each series from its unflagged sights
    good = ok & ~flagged
    good_count = np.bincount(group, weights=good, minlength=names.size)
    with np.errstate(invalid="ignore", divide="ignore"):
        offset = np.bincount(group, weights=np.where(good, residual, 0.0), minlength=names.size) / good_count
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
    return SeriesCheck(labels, offset[group], np.where(ok, residual - offset[group], np.nan),
                       scatter, flagged, best, best_ho)


__all__ = ["series_ids", "check_series", "SeriesCheck", "SERIES_GAP_MINUTES", "THRESHOLD_ARCMIN"]
