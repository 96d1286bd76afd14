"""The statistics of a fix: the sights' σ, the 95 % ellipse or band, the blunder test, and what they mean.

σ is estimated from the residuals with no floor (with a run between the sights, by the restricted
likelihood that weighs out the DR error's share, :func:`sight_variance`); the ellipse is scaled by
√(2 F(2, ν)), ν the redundant sights, where the residuals alone judge σ, and by chi-square(2) on a σ taken as
at least the a priori 1′ where the DR's error over the run has a say in them (:func:`ellipse_sigma`); the blunder test is the largest externally studentized residual against Student's t with
Bonferroni's correction (:func:`blunder_test`). Every quantile comes from :mod:`navred.stats`.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .angles import wrap_axial
from .stats import chi_square_2_quantile, f_2_quantile, student_t_quantile

#: Assumed standard error of one sight when a fix has no redundancy (two sights), arcminutes:
#: a good sight at sea is good to about 1′ (common practice).
A_PRIORI_SIGMA_ARCMIN = 1.0


#: The DR's own error over a run (common practice; set with dr_error_kn / dr_error_fraction):
#: an unknown current and leeway of this many knots, and this fraction of the distance run for
#: the log and the steering. The run from each sight to the fix time is displaced by one unknown
#: amount, isotropic, of standard deviation DR_ERROR_KN·hours + DR_ERROR_FRACTION·miles run.
DR_ERROR_KN = 0.3


DR_ERROR_FRACTION = 0.02


#: The blunder test: the chance that a fix of sights with no blunder has one flagged, whatever the number
#: of sights (the largest externally studentized residual against Student's t at BLUNDER_ALPHA / n, two-sided:
#: Bonferroni's correction for testing every sight).
BLUNDER_ALPHA = 0.05


#: A flagged sight is a clear blunder, left out of the headline fix, when the same test flags it at this
#: false-alarm rate too: a good round has a sight left out in at most this share of fixes (leaving out the largest
#: residual of a good round shrinks its ellipse, so that one misses the truth more often than one in twenty).
BLUNDER_CLEAR_ALPHA = 0.01


#: A sight is flagged only when its line also lies this far from the fix of the others (arcminutes): a
#: smaller miss is within a good sight's own error, whatever the test says of sights that agree too well
#: (common practice).
BLUNDER_MIN_ARCMIN = 1.0


#: A flagged sight whose line lies this far from the fix of the others (arcminutes) is a gross error beyond
#: doubt (a misnamed body, a slip of degrees or of minutes, a wrong time): no sextant error, refraction
#: anomaly or abnormal dip comes near a third of a degree (common practice). It is left out of the fix.
GROSS_ARCMIN = 20.0


#: A group of more sights than this (a whole day's sights given one fix group, say) is not searched sight by
#: sight for a gross error, and its σ is the residuals' sum of squares less the run's expected share rather
#: than the restricted likelihood (both cost the cube of the sights).
MAX_SIGHTS_SEARCHED = 60


CONFIDENCE = 0.95


#: Lines of position crossing at less than this make a weak fix (a warning).
WEAK_CROSSING_DEG = 30.0


#: The DR's own 95 % radius over a run, in units of its standard deviation: √chi-square(2; 0.95), the circle of
#: one isotropic displacement (the running fix's ellipse is compared with it).
DR_ALONE_SCALE = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))


#: What every 95 % ellipse of navred covers, and what it cannot.
ELLIPSE_COVERS = ("covers the sights' random error and the DR's error over the run as allowed for (an unknown "
                  f"current and leeway of {DR_ERROR_KN} kn and {DR_ERROR_FRACTION * 100:.0f} % of the miles run, unless set otherwise: a stronger current, or a "
                  "wrong course or speed, is not covered); it cannot cover an error common to every sight (the clock: 1 s of time is 0.25′ of longitude; a wrong height of eye or "
                  "index error; abnormal dip), nor a misnamed body")


def error_ellipse(covariance_nm2: ArrayLike, scale: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Semi-major and semi-minor axes (nm) and true bearing of the major axis (0-180°).

    ``covariance_nm2`` (..., 2, 2) in (north, east); ``scale`` multiplies the standard
    deviations (the confidence factor).
    """
    c = np.asarray(covariance_nm2, dtype=float)
    nn, ee, ne = c[..., 0, 0], c[..., 1, 1], c[..., 0, 1]
    mean = (nn + ee) / 2.0
    radius = np.sqrt(((nn - ee) / 2.0) ** 2 + ne**2)
    major = scale * np.sqrt(np.maximum(mean + radius, 0.0))
    minor = scale * np.sqrt(np.maximum(mean - radius, 0.0))
    orientation = np.degrees(0.5 * np.arctan2(2.0 * ne, nn - ee))  # from north toward east
    return major, minor, wrap_axial(orientation)


def azimuth_spread_deg(zn_deg: ArrayLike) -> float:
    """The widest angle at which the lines of position cross (azimuths taken modulo 180°)."""
    zn = np.asarray(zn_deg, dtype=float)
    directions = np.sort(wrap_axial(zn[np.isfinite(zn)]))
    if directions.size < 2:
        return 0.0
    gaps = np.diff(np.concatenate([directions, directions[:1] + 180.0]))
    return float(180.0 - gaps.max())


def azimuth_spread_many(zn_deg: np.ndarray, use: np.ndarray) -> np.ndarray:
    """:func:`azimuth_spread_deg` of each row of (groups, sights) azimuths, using the sights ``use`` marks."""
    directions = np.sort(np.where(use, wrap_axial(zn_deg), np.inf), axis=1)
    count = use.sum(axis=1)
    padded = np.empty((directions.shape[0], directions.shape[1] + 1))
    padded[:, :-1] = directions
    padded[:, -1] = np.inf
    # the wrap-around gap closes the circle after the last used direction
    padded[np.arange(len(count)), count] = directions[:, 0] + 180.0
    with np.errstate(invalid="ignore"):
        gaps = padded[:, 1:] - padded[:, :-1]  # (np.diff) inf − inf beyond the used directions, masked next
    valid = np.arange(gaps.shape[1])[None, :] < count[:, None]
    widest = np.where(valid, gaps, -np.inf).max(axis=1)
    return np.where(count >= 2, 180.0 - widest, 0.0)


def run_error_covariance(zn_deg: ArrayLike, dt_hours: ArrayLike, run_nm: ArrayLike, dr_error_kn: float = DR_ERROR_KN,
                         dr_error_fraction: float = DR_ERROR_FRACTION) -> np.ndarray:
    """Covariance (nm², sights × sights) that the DR's error over each run adds to the altitude residuals.

    Each sight's position is carried from its time to the fix time; the carrying is wrong by one
    unknown displacement, isotropic, of standard deviation s = dr_error_kn·|hours| +
    dr_error_fraction·miles run (common practice). Its component along each sight's azimuth
    moves that line: cov_ij = s_i s_j cos(Zn_i − Zn_j). Arrays (..., sights) give (..., sights, sights).
    """
    zn = np.radians(np.asarray(zn_deg, dtype=float))
    s = dr_error_kn * np.abs(np.asarray(dt_hours, dtype=float)) + dr_error_fraction * np.asarray(run_nm, dtype=float)
    return s[..., :, None] * s[..., None, :] * np.cos(zn[..., :, None] - zn[..., None, :])


def plural(count: int) -> str:
    return "s" if count != 1 else ""


#: the likelihood's root is sought to this share of itself (the bracket's halving gave about 1e-16)
ROOT_TOLERANCE = 1e-14
#: the halvings of the bracket that left it 2⁻⁸⁰ of its first width (the root's search before Newton's steps)
ROOT_STEPS = 80


def likelihood_root(z2: np.ndarray, lam: np.ndarray, inside: np.ndarray) -> np.ndarray:
    """σ² where the restricted likelihood's slope Σ (z_j² − (σ² + λ_j))/(σ² + λ_j)² (over ``inside``) is nil,
    for each row (groups, components); 0 where the slope is not positive at σ² = 0.

    The root lies in (0, max z_j²]: the slope is positive at its left end and not at its right. The bracket is
    halved (the slope's sign at its middle) until the slope is shown to fall all through it, each term's rate
    of change bounded above over the bracket, so that one root is left in it: the very root the halving
    would come to. From there Newton's steps are taken, kept within the bracket that each step's sign narrows
    (W. H. Press et al., Numerical Recipes, 3rd ed., 2007, §9.4, "rtsafe"; from memory): a handful of steps
    where 80 halvings were taken (the same root to 1e-9, tested). A slope with several roots is halved as
    before, to the root the halving picks.

    The halvings whose middle lies at twice the largest z_j² or more are not worked: every term's numerator
    z_j² − (σ² + λ_j) is then below −(σ² + λ_j)/2 (λ_j ≥ 0), so the slope there is negative and the halving
    only lowers the top of the bracket to that middle (:func:`halvings_above`). Sights with no noise at all
    (z² of 1e-25 in a bracket 1e-12 wide) took 40 such halvings.

    One row (one fix's) is worked in plain floats by :func:`_likelihood_root_one`, the same operations in the
    same order, numpy's pairwise sums included: the very same number (tested on many rows), in a fifth of the
    time that a dozen small array steps take.
    """
    if z2.shape[0] == 1 and 0 < z2.shape[1] <= _PLAIN_WIDTH:
        return np.array([_likelihood_root_one(z2[0].tolist(), lam[0].tolist(), inside[0].tolist())])
    rows = z2.shape[0]
    present = inside & np.isfinite(z2)

    def slope(v, derivative=False):
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            total = v[:, None] + lam
            terms = (z2 - total) / (total * total)
            if not np.isfinite(terms).all():
                terms = np.nan_to_num(terms, nan=0.0, posinf=1e300)
            terms = np.where(inside, terms, 0.0).sum(axis=1)
            if not derivative:
                return terms
            # d/dσ² of each term: (σ² + λ − 2 z²)/(σ² + λ)³
            change = (total - 2.0 * z2) / (total * total * total)
            if not np.isfinite(change).all():
                change = np.nan_to_num(change, nan=0.0)
            change = np.where(inside, change, 0.0).sum(axis=1)
        return terms, change

    def falling(lo, hi):
        """Whether the slope falls all through [lo, hi]: the sum of each term's greatest rate of change there,
        (t − 2z²)/t³ over t = σ² + λ in [lo + λ, hi + λ], at an end or at its peak t = 3z² (1/(27 z⁴)), is below 0."""
        a, b = lo[:, None] + lam, hi[:, None] + lam
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            ends = np.maximum((a - 2.0 * z2) / (a * a * a), (b - 2.0 * z2) / (b * b * b))
            peak = np.where((z2 > 0) & (3.0 * z2 >= a) & (3.0 * z2 <= b), 1.0 / (27.0 * (z2 * z2)), -np.inf)
            most = np.maximum(ends, peak)
            if not np.isfinite(most).all():
                most = np.nan_to_num(most, nan=np.inf)
            return np.where(present, most, 0.0).sum(axis=1) < 0

    lo = np.zeros(rows)
    top = np.max(z2, axis=1) + 1e-12 if z2.size else np.full(rows, 1e-12)
    resolution = top * 2.0**-ROOT_STEPS  # where 80 halvings stop
    positive = slope(np.full(rows, 1e-300)) > 0
    hi = np.ldexp(top, -halvings_above(z2, lam, inside, top))
    v = (lo + hi) / 2.0
    settled = ~positive
    single = np.zeros(rows, dtype=bool)
    for _ in range(2 * ROOT_STEPS):
        value, change = slope(v, derivative=True)
        up = value > 0
        lo, hi = np.where(up, v, lo), np.where(up, hi, v)
        if not (single | settled).all():
            single |= falling(lo, hi)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = v - value / change
        close = single & (change < 0) & (np.abs(newton - v) <= ROOT_TOLERANCE * v)  # at the root: the last step
        inward = close | (single & (change < 0) & np.isfinite(newton) & (newton > lo) & (newton < hi))
        nxt = np.where(inward, newton, (lo + hi) / 2.0)
        now = ~settled & (close | (hi - lo <= resolution) | (value == 0.0))
        v = np.where(settled | (value == 0.0), v, nxt)
        settled |= now
        if settled.all():
            break
    return np.where(positive, v, 0.0)


def halvings_above(z2: np.ndarray, lam: np.ndarray, inside: np.ndarray, top: np.ndarray) -> np.ndarray:
    """How many of the first halvings of (0, top] (middles top/2, top/4, ...) have their middle at twice the largest
    z² inside or above, where the slope of :func:`likelihood_root` is negative (its every term's numerator below
    minus half its denominator, no term rounding to nil): those halvings only lower the bracket's top. The largest
    such count k (top·2⁻ᵏ ≥ 2 max z², exactly), at most 79 (80 halvings end the search); none for a row with a
    negative λ, a z² not finite, or a bracket beyond 1e150 (where a term could round to nil)."""
    with np.errstate(invalid="ignore"):
        largest = np.max(np.where(inside, z2, 0.0), axis=1) if z2.size else np.zeros(top.shape)
        plain = (np.all(~inside | (lam >= 0), axis=1) & np.all(~inside | np.isfinite(z2), axis=1)
                 & (largest > 0) & (top <= 1e150))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        guess = np.floor(np.log2(top / (2.0 * largest)))
    guess = np.where(plain & np.isfinite(guess), np.clip(guess, 0, ROOT_STEPS - 1), 0).astype(int)
    # the logarithm may round either way: the count is set by the exact test of each middle
    more = plain & (guess < ROOT_STEPS - 1) & (np.ldexp(top, -(guess + 1)) >= 2.0 * largest)
    guess = np.where(more, guess + 1, guess)
    fewer = plain & (guess > 0) & (np.ldexp(top, -guess) < 2.0 * largest)
    return np.where(fewer, guess - 1, guess)


#: One row this wide or narrower is worked in plain floats (:func:`_likelihood_root_one`).
_PLAIN_WIDTH = 128
_MAX_FLOAT = float(np.finfo(float).max)
_NAN, _INF = float("nan"), float("inf")


def _divide(a: float, b: float) -> float:
    """a / b as numpy divides floats (a nil divisor gives an infinity, or NaN for 0/0 and NaN/0)."""
    if b != 0.0:
        return a / b
    if a != a or a == 0.0:
        return _NAN
    return math.copysign(_INF, a) * math.copysign(1.0, b)


def _pairwise_sum(values: list[float]) -> float:
    """The sum numpy gives a row of float64 (``np.add.reduce``: pairwise, eight partial sums; its
    ``pairwise_sum`` in loops_utils.h), in the same order, so that the same numbers come out."""
    n = len(values)
    if n < 8:
        total = 0.0
        for value in values:
            total += value
        return total
    if n <= 128:
        r = values[:8]
        i = 8
        while i < n - n % 8:
            for j in range(8):
                r[j] += values[i + j]
            i += 8
        total = ((r[0] + r[1]) + (r[2] + r[3])) + ((r[4] + r[5]) + (r[6] + r[7]))
        for value in values[i:]:
            total += value
        return total
    half = n // 2
    half -= half % 8
    return _pairwise_sum(values[:half]) + _pairwise_sum(values[half:])


def _halvings_above_one(z2: list[float], lam: list[float], inside: list[bool], top: float) -> int:
    """:func:`halvings_above` of one row in plain floats (the count is exact, so the same whichever logarithm
    guessed it)."""
    chosen = [z if i else 0.0 for z, i in zip(z2, inside)]
    largest = _NAN if any(z != z for z in chosen) else max(chosen)
    plain = (all(a >= 0 for a, i in zip(lam, inside) if i) and all(math.isfinite(z) for z, i in zip(z2, inside) if i)
             and largest > 0 and top <= 1e150)
    if not plain:
        return 0
    ratio = math.log2(top / (2.0 * largest))
    guess = min(max(math.floor(ratio), 0), ROOT_STEPS - 1) if math.isfinite(ratio) else 0
    if guess < ROOT_STEPS - 1 and math.ldexp(top, -(guess + 1)) >= 2.0 * largest:
        guess += 1
    if guess > 0 and math.ldexp(top, -guess) < 2.0 * largest:
        guess -= 1
    return guess


def _likelihood_root_one(z2: list[float], lam: list[float], inside: list[bool]) -> float:
    """:func:`likelihood_root` of one row in plain floats: each step as the arrays take it (the same operations on
    the same numbers in the same order, NaN and infinities replaced as ``np.nan_to_num`` replaces them)."""
    present = [i and math.isfinite(z) for i, z in zip(inside, z2)]

    def slope(v, derivative=False):
        terms, change = [], []  # each component's term and its rate of change (0 outside)
        for z, shift, i in zip(z2, lam, inside):
            if not i:
                terms.append(0.0)
                change.append(0.0)
                continue
            t = v + shift
            d = t * t
            x = (z - t) / d if d else _divide(z - t, d)
            if not -_INF < x < _INF:  # np.nan_to_num(nan=0.0, posinf=1e300)
                x = 0.0 if x != x else 1e300 if x > 0 else -_MAX_FLOAT
            terms.append(x)
            if derivative:
                d *= t
                y = (t - 2.0 * z) / d if d else _divide(t - 2.0 * z, d)
                if not -_INF < y < _INF:  # np.nan_to_num(nan=0.0)
                    y = 0.0 if y != y else _MAX_FLOAT if y > 0 else -_MAX_FLOAT
                change.append(y)
        return _pairwise_sum(terms), _pairwise_sum(change) if derivative else 0.0

    def falling(lo, hi):
        most = []
        for z, shift, p in zip(z2, lam, present):
            if not p:
                most.append(0.0)
                continue
            a, b = lo + shift, hi + shift
            da, db = a * a * a, b * b * b
            low = (a - 2.0 * z) / da if da else _divide(a - 2.0 * z, da)
            high = (b - 2.0 * z) / db if db else _divide(b - 2.0 * z, db)
            ends = _NAN if low != low or high != high else (low if low >= high else high)  # np.maximum
            if z > 0 and 3.0 * z >= a and 3.0 * z <= b:
                peak = 1.0 / d if (d := 27.0 * (z * z)) else _divide(1.0, d)
            else:
                peak = -_INF
            m = _NAN if ends != ends or peak != peak else (ends if ends >= peak else peak)
            if not -_INF < m < _INF:  # np.nan_to_num(nan=np.inf)
                m = _INF if m != m else _MAX_FLOAT if m > 0 else -_MAX_FLOAT
            most.append(m)
        return _pairwise_sum(most) < 0

    top = (_NAN if any(z != z for z in z2) else max(z2)) + 1e-12
    resolution = top * 2.0**-ROOT_STEPS
    positive = slope(1e-300)[0] > 0
    skip = _halvings_above_one(z2, lam, inside, top)
    lo, hi = 0.0, math.ldexp(top, -skip)
    v = (lo + hi) / 2.0
    settled, single = not positive, False
    for _ in range(2 * ROOT_STEPS):
        value, change = slope(v, derivative=True)
        if value > 0:
            lo = v
        else:
            hi = v
        if not (single or settled):
            single = falling(lo, hi)
        newton = v - _divide(value, change)
        close = single and change < 0 and abs(newton - v) <= ROOT_TOLERANCE * v
        inward = close or (single and change < 0 and math.isfinite(newton) and lo < newton < hi)
        nxt = newton if inward else (lo + hi) / 2.0
        now = not settled and (close or hi - lo <= resolution or value == 0.0)
        if not (settled or value == 0.0):
            v = nxt
        settled = settled or now
        if settled:
            break
    return v if positive else 0.0


def sight_variance(residual: np.ndarray, projector: np.ndarray, run_cov: np.ndarray, dof: np.ndarray
                   ) -> SightVariance:
    """The sights' variance (arcmin²) of each group of a batch: the residuals' own estimate σ̂², the variance the
    ellipse is built on, its Fisher information, and the weight of the residuals in it, when the residuals also
    carry the DR's known error over the run.

    The residuals r = M e (M the residual projector, rank ν) of errors e with covariance σ²I + C: in the
    eigenvectors of M C M within the residual space, the components z_j are independent with variances
    σ² + λ_j. σ̂² maximises their (restricted) likelihood, Σ (z_j² − (σ² + λ_j))/(σ² + λ_j)² = 0, σ² ≥ 0
    (H. D. Patterson and R. Thompson, "Recovery of inter-block information when block sizes are unequal",
    Biometrika 58(3), 1971; from memory): a component the run's error swamps says little of σ and weighs
    little. With no run (C = 0) it is Σr²/ν exactly.

    How many of the ν redundant sights judge σ at all: m = Σ (σ₀²/(σ₀² + λ_j))², σ₀ the a priori
    A_PRIORI_SIGMA_ARCMIN (ν with no run; near 0 where the run's error swamps every component). The rest say
    nothing of σ, and count as sights of σ₀ (a good sight at sea; the assumption a fix of two sights makes):
    the ellipse's σ² = w σ̂² + (1 − w) σ₀², w = m/ν, and its information Σ 1/(2(σ² + λ_j)²) / w². With no run
    w = 1 and everything is the residuals' alone (the F(2, ν) ellipse is then exact). Without it, a 3-sight
    running fix over 7 h got an ellipse 80 nm long (ν clamped at 1) and one over 3 h, σ̂ = 0 at the likelihood's
    boundary, covered the truth two times in three. Arrays (groups, sights), (groups, sights, sights).
    """
    r = residual if np.isfinite(residual).all() else np.nan_to_num(residual)
    nu = np.maximum(np.asarray(dof, dtype=float), 0.0)
    plain = ~run_cov.any(axis=(1, 2))
    sigma2 = np.where(nu > 0, np.sum(r**2, axis=1) / np.maximum(nu, 1.0), 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        information = np.where(sigma2 > 0, nu / (2.0 * sigma2**2), np.inf)
    working = sigma2.copy()
    weight = np.ones(nu.shape)
    prior = A_PRIORI_SIGMA_ARCMIN**2
    large = np.sum(np.any(run_cov != 0, axis=2), axis=1) > MAX_SIGHTS_SEARCHED
    if large.any():  # the moment estimate, E[r'r] = σ²ν + tr MC, and its information as if C were nil
        trace_mc = np.einsum("fij,fji->f", projector[large], run_cov[large])
        sigma2[large] = np.maximum(np.sum(r[large] ** 2, axis=1) - trace_mc, 0.0) / np.maximum(nu[large], 1.0)
        working[large] = sigma2[large]
        with np.errstate(divide="ignore", invalid="ignore"):
            information[large] = np.where(sigma2[large] > 0, nu[large] / (2.0 * sigma2[large] ** 2), np.inf)
    rows = np.flatnonzero(~plain & (nu > 0) & ~large)
    if rows.size:
        m, c = projector[rows], run_cov[rows]
        outside = np.trace(c, axis1=1, axis2=2)[:, None, None] * 1e6 + 1.0  # the directions M removes, set apart
        lam, vec = np.linalg.eigh(m @ c @ m + outside * (np.eye(m.shape[1])[None] - m))
        inside = lam < outside[:, :, 0] / 2.0
        lam = np.where(inside, np.maximum(lam, 0.0), 0.0)
        z2 = np.where(inside, np.einsum("fsj,fs->fj", vec, r[rows]) ** 2, 0.0)

        found = likelihood_root(z2, lam, inside)
        sigma2[rows] = found
        judging = np.where(inside, 1.0 / (1.0 + (lam / prior) ** 2), 0.0).sum(axis=1)
        weight[rows] = np.minimum(np.maximum(judging / nu[rows], 0.0), 1.0)  # (np.clip's values)
        working[rows] = weight[rows] * found + (1.0 - weight[rows]) * prior
        with np.errstate(divide="ignore", invalid="ignore"):
            information[rows] = (np.where(inside, 0.5 / (working[rows][:, None] + lam) ** 2, 0.0).sum(axis=1)
                                 / weight[rows] ** 2)
    return SightVariance(sigma2, working, information, weight)


#: The weight of the residuals in the sights' σ (:class:`SightVariance`) at or above which the residuals alone judge
#: σ and the ellipse is the F(2, ν) one, ν the redundant sights (exact for Gaussian errors; the run's share, a few
#: hundredths of the sights' at most, scaled alike). Below it the DR's error over the run has a say in the
#: residuals, and the ellipse takes the sights' σ as known (:func:`ellipse_sigma`).
JUDGED_WEIGHT = 0.995


def ellipse_sigma(working_sigma2: ArrayLike, weight: ArrayLike, dof: ArrayLike,
                  run_included: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The sights' σ² the 95 % ellipse (or band) is built on, the degrees of freedom of its quantile, and where
    that σ is taken rather than judged, per group.

    Where the residuals alone judge σ (no run, or a run whose error the residuals do not feel: weight ≥
    JUDGED_WEIGHT) the ellipse is σ̂² P scaled by F(2, ν), ν = n − k the redundant sights: the exact
    statistic for Gaussian sight errors, whatever σ. Where the DR's error over the run has a say in the
    residuals, they cannot tell the sights' error from the run's, and no count of degrees of freedom is honest
    for their blend: the sights' σ is then taken as known, the larger of the residuals' estimate and
    A_PRIORI_SIGMA_ARCMIN (a good sight at sea), and the whole ellipse, sights' share and run's share, is
    scaled by chi-square(2) (ν infinite). It covers the truth 19 times in 20 when the sights are no worse than
    that σ and the run no worse than the DR's error model (tests/test_honest_ellipse.py); it was F(2, ν) with
    Satterthwaite's ν worked at the residuals' own σ̂², which a σ̂ near nil from one redundant sight made
    194, and a running fix's ellipse 0.3 nm across. With no redundancy (ν ≤ 0) σ is the a priori
    one and the quantile chi-square(2).
    """
    working = np.asarray(working_sigma2, dtype=float)
    dof = np.asarray(dof)
    taken = (np.asarray(run_included, dtype=bool) & (dof >= 1)
             & (np.asarray(weight, dtype=float) < JUDGED_WEIGHT))
    prior = A_PRIORI_SIGMA_ARCMIN**2
    sigma2 = np.where(dof >= 1, np.where(taken, np.maximum(working, prior), working), prior)
    nu = np.where((dof >= 1) & ~taken, dof.astype(float), np.inf)
    return sigma2, nu, taken


@dataclass(frozen=True)
class SightVariance:
    """:func:`sight_variance`: per group, the residuals' own σ̂² (arcmin²), the σ² the ellipse is built on, its
    Fisher information, and the weight w of the residuals in it (1: the residuals alone; 0: σ₀ alone)."""

    residuals: np.ndarray
    working: np.ndarray
    information: np.ndarray
    weight: np.ndarray


def blunder_test(residual, leverage, use, dof, sigma, root_w=None):
    """The blunder test of every sight of a batch of groups (groups, sights): flags, gross errors, clear
    blunders (flagged at BLUNDER_CLEAR_ALPHA too), and the smallest blunder the test finds about half the time
    (per group).

    Each sight's externally studentized residual t_i = r_i / (s_(i) √(1 − h_ii)), with s_(i) the scatter of
    the others (so that a blunder cannot hide by inflating it) and h_ii its leverage, is Student's t with
    ν − 1 degrees of freedom when the sights have Gaussian errors (D. A. Belsley, E. Kuh and R. E. Welsch,
    Regression Diagnostics, 1980; from memory). The largest of the n is judged against t(ν − 1) at
    1 − α/(2n), two-sided (Bonferroni's correction): a clean fix has a sight flagged in at most α of
    fixes, whatever n. A sight is flagged only if its line also lies BLUNDER_MIN_ARCMIN from the fix of
    the others (r_i / (1 − h_ii)), and is gross beyond doubt beyond GROSS_ARCMIN. Three sights for two
    unknowns (ν = 1) cannot single one out: their residuals are one misfit seen from each.

    Weighted sights (``root_w``, √ of each weight) come whitened (residuals times √w, leverages of the
    whitened rows): t_i is then the same statistic, and a line's distance from the fix of the others, in
    arcminutes, is r_i / (√w_i (1 − h_ii)); the smallest blunder found is that of a sight of unit weight.
    """
    r = np.where(use, residual, 0.0)
    root = np.ones(r.shape) if root_w is None else np.where(use, root_w, 1.0)
    miss = np.minimum(np.maximum(1.0 - leverage, 1e-12), 1.0)  # (np.clip's values)
    n = use.sum(axis=1)
    total = np.sum(r**2, axis=1, keepdims=True)
    testable = dof >= 2
    with np.errstate(invalid="ignore", divide="ignore"):
        deleted = np.maximum((total - r**2 / miss) / (dof[:, None] - 1.0), 0.0)
        t = np.abs(r) / (np.sqrt(deleted) * np.sqrt(miss))
    t = np.where(np.abs(r) > 0, t if np.isfinite(t).all() else np.nan_to_num(t, nan=np.inf, posinf=np.inf), 0.0)
    critical = np.where(testable, student_t_quantile(1.0 - BLUNDER_ALPHA / (2.0 * np.maximum(n, 1)),
                                                     np.where(testable, dof - 1.0, 1.0)), np.inf)
    off = np.abs(r) / miss / root  # the line's distance from the fix of the others (arcminutes)
    outlier = use & testable[:, None] & (t > critical[:, None]) & (off > BLUNDER_MIN_ARCMIN)
    gross = outlier & (off > GROSS_ARCMIN)
    strict = np.where(testable, student_t_quantile(1.0 - BLUNDER_CLEAR_ALPHA / (2.0 * np.maximum(n, 1)),
                                                   np.where(testable, dof - 1.0, 1.0)), np.inf)
    clear = outlier & (t > strict[:, None])
    detectable = np.full(len(r), np.nan)
    if testable.any():
        per_sight = (critical[testable, None] * np.asarray(sigma)[testable, None] / np.sqrt(miss[testable])
                     / root[testable])
        detectable[testable] = _row_median(np.where(use[testable], per_sight, np.nan))
    return outlier, gross, clear, np.maximum(detectable, BLUNDER_MIN_ARCMIN)


def _row_median(values: np.ndarray) -> np.ndarray:
    """Each row's median of its numbers (NaN left out; NaN for a row of none): ``np.nanmedian(values, axis=1)``
    to the bit (tested), without its masked-array path, which cost a small fix a tenth of its time."""
    ordered = np.sort(values, axis=1)  # NaN sorts last
    count = (~np.isnan(values)).sum(axis=1)
    last = max(values.shape[1] - 1, 0)
    rows = np.arange(values.shape[0])
    low = ordered[rows, np.minimum(np.maximum((count - 1) // 2, 0), last)]  # (np.clip's, in fewer calls)
    high = ordered[rows, np.minimum(np.maximum(count // 2, 0), last)]
    with np.errstate(invalid="ignore", over="ignore"):
        return np.where(count == 0, np.nan, np.where(count % 2 == 1, low, (low + high) / 2.0))


@functools.lru_cache(maxsize=256)
def _scale_ratio(d: int) -> tuple[float, float]:
    """The ellipse's scale with ν redundant sights and with one more, each over the known-σ scale."""
    known = float(np.sqrt(chi_square_2_quantile(CONFIDENCE)))
    return (float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, d))) / known,
            float(np.sqrt(2.0 * f_2_quantile(CONFIDENCE, d + 1))) / known)


def blunder_note(n: int, d: int, detectable: float, k: int) -> str:
    """What the blunder test can do with these sights, in words."""
    if d <= 0:
        return f"{n} sights for {k} unknowns: no check on a blunder at all"
    if d == 1:
        return (f"{n} sights for {k} unknowns cannot single out a bad sight: each residual is the same misfit "
                "seen from one sight; take another sight to check them")
    why = (" (so large because each sight is checked by few others in its direction: a blunder in one moves the "
           "fix more than it shows in the residuals; take more sights, spread round the horizon)"
           if detectable >= WEAK_CHECK_ARCMIN else "")
    return (f"{n} sights find a blunder of about {detectable:.0f}′ in half the rounds and a larger one in most (from "
            f"the sights' own scatter){why}; a smaller one only now and then")


#: A blunder the test finds only when it is this large (arcminutes) or larger is said to be so because the sights
#: check each other little (a ten-minute slip of the vernier, the commonest slip, should be found; common practice).
WEAK_CHECK_ARCMIN = 10.0


#: The weight of the residuals in the sights' σ (:class:`SightVariance`) below which σ is said to be assumed.
SWAMPED_WEIGHT = 0.05


def sigma_source(d: int, weight: float, run_included: bool, ellipse_sigma_arcmin: float = float("nan")) -> str:
    """Where the sights' σ comes from, in words (``d`` ≥ 1 redundant sights, the residuals' ``weight`` in it), and
    the σ the ellipse takes where it is taken rather than judged (:func:`ellipse_sigma`)."""
    if weight >= JUDGED_WEIGHT:
        return (f"from the residuals, {d} redundant sight{plural(d)}"
                + (", the DR's error over the run taken out" if run_included else ""))
    taken = (f"; the ellipse takes {ellipse_sigma_arcmin:.1f}′ (never less than {A_PRIORI_SIGMA_ARCMIN}′, a good sight "
             "at sea)"
             if ellipse_sigma_arcmin == ellipse_sigma_arcmin and weight >= SWAMPED_WEIGHT else "")
    if weight < SWAMPED_WEIGHT:
        return (f"assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight, a good sight at sea: the DR's error over the run swamps "
                f"the {d} redundant sight{plural(d)}, which cannot judge it")
    return (f"from the residuals ({d} redundant sight{plural(d)}, worth {weight * d:.1f} against the DR's error over "
            f"the run) and an assumed {A_PRIORI_SIGMA_ARCMIN}′ per sight for the rest{taken}")


def ellipse_note(n: int, k: int, d: int, nu: float = float("nan"), weight: float = 1.0,
                 run_included: bool = False, ellipse_sigma_arcmin: float = float("nan")) -> str:
    """What the ellipse's size means with few redundant sights, in words a navigator reads, for the quantile
    actually used (:func:`ellipse_sigma`): F(2, ν), ν the redundant sights, where the residuals alone judge the
    sights' error; chi-square(2) on a σ taken as known where the DR's error over the run has a say in them."""
    if d <= 0:
        return (f"{n} sights for {k} unknowns leave none to judge the sights by: the ellipse rests on an assumed "
                f"{A_PRIORI_SIGMA_ARCMIN}′ per sight")
    if run_included and weight < JUDGED_WEIGHT:
        sigma = ellipse_sigma_arcmin if ellipse_sigma_arcmin == ellipse_sigma_arcmin else A_PRIORI_SIGMA_ARCMIN
        worth = ("swamped by" if weight < SWAMPED_WEIGHT else f"worth {weight * d:.1f} against")
        return (f"{n} sights for {k} unknowns leave {d} redundant sight{plural(d)}, {worth} the DR's error over the "
                f"run: they cannot tell the sights' error from the run's, so the sights' error is taken as "
                f"{sigma:.1f}′ (the larger of their own estimate and {A_PRIORI_SIGMA_ARCMIN}′, a good sight at sea) "
                f"and the ellipse is scaled by {quantile_name(nu, d)} as for a known error: it holds the ship 19 "
                f"times in 20 if the sights are no worse than {sigma:.1f}′ and the run no worse than the DR's error "
                f"allowed for; worse sights, or a current or leeway beyond it, put her outside more often")
    if d > 3:
        return ""
    ratio, next_ratio = _scale_ratio(d)
    return (f"{n} sights for {k} unknowns leave {d} redundant sight{plural(d)} to judge the sights' error by "
            f"({quantile_name(nu, d)}), so that error is known only roughly and the ellipse allows for it being "
            f"larger than it looks: the sights' share of it is {ratio:.1f} times the size a known error would give; "
            f"one more sight would make that {next_ratio:.1f} times")


def quantile_name(nu: float, d: int) -> str:
    if not np.isfinite(nu) or nu > 1000.0:  # F(2, ν) is then chi-square(2)/2 to 0.3 %
        return "chi-square(2)"
    return f"F(2, {d})" if abs(nu - d) < 0.05 else f"F(2, {nu:.1f})" if nu < 100 else f"F(2, {nu:.0f})"


__all__ = ["A_PRIORI_SIGMA_ARCMIN", "WEAK_CHECK_ARCMIN", "DR_ERROR_KN", "DR_ERROR_FRACTION", "BLUNDER_ALPHA", "BLUNDER_CLEAR_ALPHA", "BLUNDER_MIN_ARCMIN",
           "GROSS_ARCMIN", "MAX_SIGHTS_SEARCHED", "CONFIDENCE", "WEAK_CROSSING_DEG", "DR_ALONE_SCALE", "SWAMPED_WEIGHT", "ELLIPSE_COVERS",
           "sigma_source", "error_ellipse",
           "azimuth_spread_deg", "azimuth_spread_many", "run_error_covariance", "plural", "sight_variance", "SightVariance",
           "ellipse_sigma", "JUDGED_WEIGHT", "blunder_test", "blunder_note", "ellipse_note", "quantile_name"]
