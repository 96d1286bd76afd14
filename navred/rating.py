"""A timepiece's error and daily rate from time-signal comparisons, by least squares.

Each comparison is the timepiece's error at the instant of a time signal (seconds, fast +). Over days
a good chronometer or deck watch gains or loses at a nearly steady daily rate, so its error is a
straight line in time,

    error(t) = error(t0) + rate × (t − t0)          (t in days; rate in seconds a day, gaining +)

fitted by ordinary least squares (any regression text: the slope, the intercept at the mean time,
their standard errors from the residual scatter with n − 2 degrees of freedom). The error at a
sight is predicted from the line, with its standard error (the line's, and the scatter of one
comparison for a reading the line does not know). A change of rate is tested by splitting the
comparisons at each one in turn and fitting a line to each side (the Chow test, F with 2 and n − 4
degrees of freedom), at 99 % with a Bonferroni correction for the splits tried. A change found is then
told apart: when the two sides' rates agree (Student's t on their difference, at 99 %) the timepiece was
reset (a step in its error, the rate unchanged: the common rate and the step are fitted together);
otherwise its rate changed. Either way its error after the change is the later side's.

Core code: arrays in, arrays out; every function broadcasts over leading axes (many timepieces, or
many trials, at once).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .constants import SECONDS_PER_DAY
from .errors import NavredError
from .stats import f_2_quantile, student_t_quantile

#: The confidence of the rate-change test, before the correction for the number of splits tried.
CHANGE_CONFIDENCE = 0.99
#: Fewer comparisons either side of a split cannot show a change of rate.
MIN_EACH_SIDE = 2


class RatingError(NavredError):
    """Time-signal comparisons that cannot give a rate."""


@dataclass(frozen=True)
class RateFit:
    """The fitted line of each timepiece (arrays over the leading axes)."""

    epoch_days: np.ndarray  # the mean time of the comparisons (days, on the caller's scale)
    error_at_epoch_s: np.ndarray
    rate_s_per_day: np.ndarray
    sigma_s: np.ndarray  # the scatter of one comparison about the line (NaN with two or fewer)
    rate_se_s_per_day: np.ndarray  # NaN with two or fewer comparisons
    error_se_s: np.ndarray  # of the line at its epoch
    n: np.ndarray
    spread_days: np.ndarray  # Σ (t − mean)²

    @property
    def rate_95_s_per_day(self) -> np.ndarray:
        """The half-width of the rate's 95 % interval (Student's t with n − 2 degrees of freedom)."""
        return student_t_quantile(0.975, self.n - 2) * self.rate_se_s_per_day

    def error_s(self, days: ArrayLike) -> np.ndarray:
        """The predicted error (seconds, fast +) at the times (days, on the fit's scale)."""
        return self.error_at_epoch_s + self.rate_s_per_day * (np.asarray(days, dtype=float) - self.epoch_days)

    def error_se_at(self, days: ArrayLike) -> np.ndarray:
        """The standard error of the predicted error at the times: the line's (the epoch's and the rate's)."""
        dt = np.asarray(days, dtype=float) - self.epoch_days
        return np.sqrt(self.error_se_s**2 + (dt * self.rate_se_s_per_day) ** 2)


def fit_rate(days: ArrayLike, error_s: ArrayLike, use: ArrayLike | None = None) -> RateFit:
    """Least-squares error and rate of each row of comparisons (the last axis): ``days`` their times,
    ``error_s`` the timepiece's error at each (fast +); ``use`` masks the comparisons to fit. One
    comparison gives the error and no rate (0, NaN uncertainty); none raises."""
    t = np.asarray(days, dtype=float)
    e = np.asarray(error_s, dtype=float)
    t, e = np.broadcast_arrays(t, e)
    w = np.ones(t.shape, dtype=bool) if use is None else np.broadcast_to(np.asarray(use, dtype=bool), t.shape)
    w = w & np.isfinite(t) & np.isfinite(e)
    n = w.sum(axis=-1)
    if np.any(n == 0):
        raise RatingError("a timepiece with no usable comparison: its error cannot be known")
    tw, ew = np.where(w, t, 0.0), np.where(w, e, 0.0)
    mean_t = tw.sum(axis=-1) / n
    mean_e = ew.sum(axis=-1) / n
    dt = np.where(w, t - mean_t[..., None], 0.0)
    sxx = np.sum(dt**2, axis=-1)
    sxy = np.sum(dt * np.where(w, e - mean_e[..., None], 0.0), axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        rate = np.where(sxx > 0, sxy / np.where(sxx > 0, sxx, 1.0), 0.0)
        residual = np.where(w, e - (mean_e[..., None] + rate[..., None] * (t - mean_t[..., None])), 0.0)
        dof = n - 2
        sigma = np.where(dof > 0, np.sqrt(np.sum(residual**2, axis=-1) / np.maximum(dof, 1)), np.nan)
        rate_se = np.where((dof > 0) & (sxx > 0), sigma / np.sqrt(np.where(sxx > 0, sxx, 1.0)), np.nan)
        error_se = np.where(dof > 0, sigma / np.sqrt(n), np.nan)
    return RateFit(mean_t, mean_e, rate, sigma, rate_se, error_se, n, sxx)


def residuals_s(fit: RateFit, days: ArrayLike, error_s: ArrayLike) -> np.ndarray:
    """Each comparison's error less the fitted line's at its time (seconds)."""
    return np.asarray(error_s, dtype=float) - fit.error_s(days)


@dataclass(frozen=True)
class RateChange:
    """The most likely change of rate in a series of comparisons, and whether it is significant."""

    changed: bool
    split_index: int  # the comparison after which the rate changed (-1 when it cannot be tested)
    rate_before_s_per_day: float
    rate_after_s_per_day: float
    f_statistic: float
    f_critical: float
    #: 'rate' (the rate changed), 'reset' (a step in the error, the rate unchanged) or '' (no change)
    kind: str = ""
    #: a reset's step (seconds, the later error less the earlier at one instant; NaN for a change of rate)
    step_s: float = float("nan")
    #: a reset's common rate (s a day) and its 95 % half-width (NaN otherwise)
    common_rate_s_per_day: float = float("nan")
    common_rate_95_s_per_day: float = float("nan")


def rate_change(days: ArrayLike, error_s: ArrayLike) -> RateChange:
    """Test one timepiece's comparisons (1-D, in time order) for a change of rate (the Chow test at each
    split, the largest F against the 99 % point corrected for the number of splits tried)."""
    t = np.asarray(days, dtype=float)
    e = np.asarray(error_s, dtype=float)
    n = t.size
    if n < 2 * MIN_EACH_SIDE + 1 or np.ptp(t) <= 0:
        return RateChange(False, -1, np.nan, np.nan, np.nan, np.nan)
    whole = fit_rate(t, e)
    rss_whole = float(np.sum(residuals_s(whole, t, e) ** 2))
    splits = np.arange(MIN_EACH_SIDE, n - MIN_EACH_SIDE + 1)  # the first side holds comparisons [0, k)
    index = np.arange(n)
    before = index[None, :] < splits[:, None]
    tt = np.broadcast_to(t, before.shape)
    ee = np.broadcast_to(e, before.shape)
    first = fit_rate(tt, ee, use=before)
    second = fit_rate(tt, ee, use=~before)
    def off(fit, side):  # each split's residuals on its side (the fits run over the splits)
        line = fit.error_at_epoch_s[:, None] + fit.rate_s_per_day[:, None] * (tt - fit.epoch_days[:, None])
        return np.sum(np.where(side, ee - line, 0.0) ** 2, axis=1)

    rss = off(first, before) + off(second, ~before)
    dof = n - 4
    with np.errstate(divide="ignore", invalid="ignore"):
        f = ((rss_whole - rss) / 2.0) / (rss / dof)
    best = int(np.nanargmax(np.where(np.isfinite(f), f, -np.inf)))
    critical = float(f_2_quantile(1.0 - (1.0 - CHANGE_CONFIDENCE) / splits.size, dof))
    changed = bool(np.isfinite(f[best]) and f[best] > critical)
    split = int(splits[best]) - 1
    before_rate, after_rate = float(first.rate_s_per_day[best]), float(second.rate_s_per_day[best])
    if not changed:
        return RateChange(False, split, before_rate, after_rate, float(f[best]), critical)
    # the rates either side: the same within their uncertainty (a reset) or not (a change of rate)
    sigma = np.sqrt(rss[best] / dof) if dof > 0 else np.nan
    spread = float(first.spread_days[best]), float(second.spread_days[best])
    with np.errstate(divide="ignore", invalid="ignore"):
        t_rates = abs(after_rate - before_rate) / (sigma * np.sqrt(1.0 / spread[0] + 1.0 / spread[1]))
    same_rate = bool(min(spread) > 0 and np.isfinite(t_rates)
                     and t_rates <= float(student_t_quantile(CHANGE_CONFIDENCE + (1 - CHANGE_CONFIDENCE) / 2, dof)))
    if not same_rate:
        return RateChange(True, split, before_rate, after_rate, float(f[best]), critical, "rate")
    step = fit_step(t, e, split)
    return RateChange(True, split, before_rate, after_rate, float(f[best]), critical, "reset", step.step_s,
                      step.rate_s_per_day, step.rate_95_s_per_day)


@dataclass(frozen=True)
class StepFit:
    """One rate with a step in the error after a comparison (a timepiece reset): the line before and after."""

    rate_s_per_day: float
    rate_95_s_per_day: float
    before: RateFit  # the common-rate line through the comparisons before the step
    after: RateFit  # and after it
    step_s: float  # after less before, at any one instant


def fit_step(days: ArrayLike, error_s: ArrayLike, split_index: int) -> StepFit:
    """Least squares of one rate and two errors (before and after comparison ``split_index``): the model of a
    timepiece reset at a time signal and running on at its rate. 1-D comparisons in time order."""
    t = np.asarray(days, dtype=float)
    e = np.asarray(error_s, dtype=float)
    side = np.arange(t.size) > split_index
    parts = [~side, side]
    means = [(t[p].mean(), e[p].mean()) for p in parts]
    sxx = sum(float(np.sum((t[p] - m[0]) ** 2)) for p, m in zip(parts, means))
    sxy = sum(float(np.sum((t[p] - m[0]) * (e[p] - m[1]))) for p, m in zip(parts, means))
    if not sxx > 0:
        raise RatingError("a step cannot be fitted: the comparisons either side are each at one instant")
    rate = sxy / sxx
    residual = np.concatenate([e[p] - (m[1] + rate * (t[p] - m[0])) for p, m in zip(parts, means)])
    dof = t.size - 3
    sigma = float(np.sqrt(np.sum(residual**2) / dof)) if dof > 0 else np.nan
    rate_se = sigma / np.sqrt(sxx)
    lines = []
    for p, m in zip(parts, means):
        count = int(p.sum())
        lines.append(RateFit(np.asarray(m[0]), np.asarray(m[1]), np.asarray(rate), np.asarray(sigma),
                             np.asarray(rate_se), np.asarray(sigma / np.sqrt(count)), np.asarray(count),
                             np.asarray(float(np.sum((t[p] - m[0]) ** 2)))))
    step = float(lines[1].error_s(0.0) - lines[0].error_s(0.0))
    return StepFit(rate, float(student_t_quantile(0.975, max(dof, 1)) * rate_se) if dof > 0 else np.nan,
                   lines[0], lines[1], step)


def error_in_half_day(reading_minus_signal_s: ArrayLike) -> np.ndarray:
    """A reading less the signal's time, as an error within ±12 hours (seconds): a watch that reads
    23:59:57 at a signal at 00:00:01 is 4 s slow, not 86,396 s fast."""
    d = np.asarray(reading_minus_signal_s, dtype=float)
    half_day = SECONDS_PER_DAY / 2.0
    return (d + half_day) % SECONDS_PER_DAY - half_day


def error_on_twelve_hour_dial(reading_minus_signal_s: ArrayLike) -> np.ndarray:
    """A 12-hour dial's reading less the signal's time, as an error within ±6 hours (seconds): a chronometer
    dial that reads 3:15:22 at a signal at 15:15:20 UTC is 2 s fast (its hands go round twice a day)."""
    d = np.asarray(reading_minus_signal_s, dtype=float)
    quarter_day = SECONDS_PER_DAY / 4.0
    return (d + quarter_day) % (SECONDS_PER_DAY / 2.0) - quarter_day


__all__ = ["RateFit", "fit_rate", "residuals_s", "RateChange", "rate_change", "error_in_half_day",
           "error_on_twelve_hour_dial", "StepFit", "fit_step", "RatingError", "CHANGE_CONFIDENCE"]
