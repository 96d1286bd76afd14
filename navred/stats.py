"""The few distributions the fix needs: their quantiles, exact, without scipy.

The ellipse of a fix is scaled by a quantile of the F distribution (two numerator degrees of
freedom, closed form); a line of position's band by one of Student's t; the blunder test by
Student's t at the level corrected for testing every sight; the check on a round's scatter by
the chi-square distribution. Every function takes scalars or arrays and broadcasts; degrees of
freedom may be fractional (an effective number, see :mod:`navred.fix`).

Methods: the regularized incomplete beta and gamma functions by their continued fractions and
series (W. H. Press et al., Numerical Recipes, 3rd ed., 2007, §6.2 and §6.4, modified Lentz
method; from memory), Student's t and the chi-square distribution through them (M. Abramowitz
and I. A. Stegun, Handbook of Mathematical Functions, 1964, 26.5.27 and 26.4.19), each quantile
by Newton's method on its distribution function, kept inside a bracket, to full double precision. The tests check them against
scipy.stats.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

_TINY = 1e-300
_EPS = 1e-15
_MAX_TERMS = 400
#: quantiles worked out already, by (distribution, p, degrees of freedom): a batch of fixes asks for few
#: distinct ones, again and again
_CACHE: dict[tuple, float] = {}
_CACHE_LIMIT = 20_000
#: up to this many (p, dof) pairs are looked up one by one (a sort to find the distinct ones costs more)
_LOOKED_UP = 64


def _log_beta(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    lgamma = np.vectorize(math.lgamma, otypes=[float])
    return lgamma(a) + lgamma(b) - lgamma(a + b)


def _beta_fraction(x: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """The continued fraction of the incomplete beta function (modified Lentz)."""
    qab, qap, qam = a + b, a + 1.0, a - 1.0
    c = np.ones_like(x)
    d = 1.0 - qab * x / qap
    d = 1.0 / np.where(np.abs(d) < _TINY, _TINY, d)
    h = d.copy()
    for m in range(1, _MAX_TERMS + 1):
        m2 = 2.0 * m
        for aa in (m * (b - m) * x / ((qam + m2) * (a + m2)),
                   -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2))):
            d = 1.0 + aa * d
            d = 1.0 / np.where(np.abs(d) < _TINY, _TINY, d)
            c = 1.0 + aa / c
            c = np.where(np.abs(c) < _TINY, _TINY, c)
            step = d * c
            h = h * step
        if np.all(np.abs(step - 1.0) < _EPS):
            break
    return h


def regularized_beta(x: ArrayLike, a: ArrayLike, b: ArrayLike) -> np.ndarray:
    """I_x(a, b), the regularized incomplete beta function, for 0 ≤ x ≤ 1 and a, b > 0."""
    x, a, b = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (x, a, b)))
    shape = x.shape
    x, a, b = (v.ravel() for v in (x, a, b))
    out = np.where(x <= 0.0, 0.0, 1.0)
    inside = (x > 0.0) & (x < 1.0)
    if inside.any():
        xi, ai, bi = x[inside], a[inside], b[inside]
        # the fraction converges fast below (a + 1)/(a + b + 2); above it, by symmetry I_x(a, b) = 1 − I_(1−x)(b, a)
        swap = xi >= (ai + 1.0) / (ai + bi + 2.0)
        xs, as_, bs = np.where(swap, 1.0 - xi, xi), np.where(swap, bi, ai), np.where(swap, ai, bi)
        front = np.exp(as_ * np.log(xs) + bs * np.log1p(-xs) - _log_beta(as_, bs))
        value = front * _beta_fraction(xs, as_, bs) / as_
        out[inside] = np.where(swap, 1.0 - value, value)
    return out.reshape(shape)


def regularized_gamma(a: ArrayLike, x: ArrayLike) -> np.ndarray:
    """P(a, x), the regularized lower incomplete gamma function, for a > 0 and x ≥ 0."""
    a, x = (np.atleast_1d(v).astype(float) for v in np.broadcast_arrays(np.asarray(a, float), np.asarray(x, float)))
    out = np.zeros_like(x)
    lgamma = np.vectorize(math.lgamma, otypes=[float])
    series = (x > 0.0) & (x < a + 1.0)
    if series.any():  # the series, below a + 1
        aa, xx = a[series], x[series]
        term = 1.0 / aa
        total = term.copy()
        n = aa.copy()
        for _ in range(_MAX_TERMS):
            n = n + 1.0
            term = term * xx / n
            total = total + term
            if np.all(np.abs(term) < np.abs(total) * _EPS):
                break
        out[series] = total * np.exp(-xx + aa * np.log(xx) - lgamma(aa))
    fraction = x >= a + 1.0
    if fraction.any():  # the continued fraction of Q = 1 − P, above it
        aa, xx = a[fraction], x[fraction]
        b = xx + 1.0 - aa
        c = np.full_like(xx, 1.0 / _TINY)
        d = 1.0 / b
        h = d.copy()
        for i in range(1, _MAX_TERMS + 1):
            an = -i * (i - aa)
            b = b + 2.0
            d = an * d + b
            d = 1.0 / np.where(np.abs(d) < _TINY, _TINY, d)
            c = b + an / c
            c = np.where(np.abs(c) < _TINY, _TINY, c)
            step = d * c
            h = h * step
            if np.all(np.abs(step - 1.0) < _EPS):
                break
        out[fraction] = 1.0 - np.exp(-xx + aa * np.log(xx) - lgamma(aa)) * h
    return out


def student_t_sf(t: ArrayLike, dof: ArrayLike) -> np.ndarray:
    """P(T > t) for Student's t with ``dof`` degrees of freedom (A&S 26.5.27 through the incomplete beta)."""
    t, dof = (np.atleast_1d(v).astype(float) for v in np.broadcast_arrays(np.asarray(t, float), np.asarray(dof, float)))
    half = 0.5 * regularized_beta(dof / (dof + t * t), dof / 2.0, 0.5)
    return np.where(t >= 0.0, half, 1.0 - half)


def chi_square_cdf(x: ArrayLike, dof: ArrayLike) -> np.ndarray:
    """P(χ² ≤ x) with ``dof`` degrees of freedom: P(ν/2, x/2) (A&S 26.4.19)."""
    x, dof = (np.atleast_1d(v).astype(float) for v in np.broadcast_arrays(np.asarray(x, float), np.asarray(dof, float)))
    return regularized_gamma(dof / 2.0, np.maximum(x, 0.0) / 2.0)


def normal_cdf(z: ArrayLike) -> np.ndarray:
    """Φ(z), the standard normal distribution function: (1 + sign(z) P(1/2, z²/2)) / 2."""
    z = np.atleast_1d(np.asarray(z, dtype=float))
    return 0.5 * (1.0 + np.sign(z) * regularized_gamma(0.5, z * z / 2.0))


def _cached(kind: str, p: np.ndarray, dof: np.ndarray, solve) -> np.ndarray:
    """Each distinct (p, dof) solved once (and kept), in one vectorised call for those not known yet."""
    p, dof = np.asarray(p, dtype=float), np.asarray(dof, dtype=float)
    if p.size <= _LOOKED_UP and dof.size <= _LOOKED_UP and (p.ndim == 0 or dof.ndim == 0 or p.shape == dof.shape):
        # a few pairs (one fix's): each looked up, when all are known already
        shape = dof.shape if p.ndim == 0 else p.shape
        ps = [float(p)] * dof.size if p.ndim == 0 else p.ravel().tolist()
        dofs = [float(dof)] * p.size if dof.ndim == 0 else dof.ravel().tolist()
        known = [_CACHE.get((kind, a, b)) for a, b in zip(ps, dofs)]
        if None not in known:
            return np.array(known, dtype=float).reshape(shape)
    p, dof = np.broadcast_arrays(p, dof)
    shape = p.shape
    pairs = np.stack([p.ravel(), dof.ravel()], axis=1)
    distinct, inverse = np.unique(pairs, axis=0, return_inverse=True)
    values = np.array([_CACHE.get((kind, a, b), np.nan) for a, b in distinct.tolist()])
    valid = (distinct[:, 0] > 0) & (distinct[:, 0] < 1) & (distinct[:, 1] >= 0) & np.isfinite(distinct).all(axis=1)
    todo = np.isnan(values) & valid & ((distinct[:, 1] > 0) | (kind == "normal"))
    if todo.any():
        values[todo] = solve(distinct[todo, 0], distinct[todo, 1])
        if len(_CACHE) > _CACHE_LIMIT:
            _CACHE.clear()
        for (a, b), v in zip(distinct[todo].tolist(), values[todo].tolist()):
            _CACHE[(kind, a, b)] = v
    return values[inverse.ravel()].reshape(shape)


def _newton(value, slope, target, x, lo, hi, iterations: int = 60):
    """Solve value(x) = target (value increasing in x) by Newton's method kept inside the bracket [lo, hi]
    (a step that leaves it bisects it instead), to full double precision."""
    for _ in range(iterations):
        miss = value(x) - target
        hi = np.where(miss > 0, x, hi)
        lo = np.where(miss > 0, lo, x)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            step = x - miss / slope(x)
        inside = np.isfinite(step) & (step > lo) & (step < hi)
        new = np.where(inside, step, (lo + hi) / 2.0)
        if np.all(np.abs(new - x) <= 1e-15 * np.maximum(np.abs(x), 1e-300)):
            return new
        x = new
    return x


def student_t_quantile(p: ArrayLike, dof: ArrayLike) -> np.ndarray:
    """The p-quantile of Student's t with ``dof`` (> 0, fractional allowed) degrees of freedom.

    >>> round(float(student_t_quantile(0.975, 1)), 4)  # tan(0.475π)
    12.7062
    """
    def solve(prob, nu):
        tail = 1.0 - np.maximum(prob, 1.0 - prob)
        log_norm = (np.vectorize(math.lgamma, otypes=[float])((nu + 1.0) / 2.0) - 0.5 * np.log(nu * np.pi)
                    - np.vectorize(math.lgamma, otypes=[float])(nu / 2.0))

        # in θ, t = √ν tan θ: the half-line folded onto [0, π/2), where the tail is smooth
        def beyond(theta):  # 1 − P(T > t): increasing in θ
            return -0.5 * regularized_beta(np.cos(theta) ** 2, nu / 2.0, 0.5)

        def slope(theta):
            t = np.sqrt(nu) * np.tan(theta)
            return np.exp(log_norm - (nu + 1.0) / 2.0 * np.log1p(t * t / nu)) * np.sqrt(nu) / np.cos(theta) ** 2

        theta = _newton(beyond, slope, -tail, np.full_like(nu, 1.0), np.zeros_like(nu), np.full_like(nu, np.pi / 2))
        t = np.sqrt(nu) * np.tan(theta)
        return np.where(prob == 0.5, 0.0, np.where(prob > 0.5, t, -t))

    p = np.asarray(p, dtype=float)
    dof = np.asarray(dof, dtype=float)
    out = _cached("t", p, dof, solve)
    if np.any(np.isinf(dof) & (dof > 0)):
        out = np.where(np.isinf(dof) & (dof > 0), normal_quantile(p), out)
    return np.where((dof > 0) & (p > 0) & (p < 1), out, np.nan)


def chi_square_quantile(p: ArrayLike, dof: ArrayLike) -> np.ndarray:
    """The p-quantile of the chi-square distribution with ``dof`` (> 0) degrees of freedom.

    >>> round(float(chi_square_quantile(0.95, 2)), 4)  # −2 ln 0.05
    5.9915
    """
    def solve(prob, nu):
        k = nu / 2.0
        log_norm = -k * np.log(2.0) - np.vectorize(math.lgamma, otypes=[float])(k)

        def density(x):
            return np.exp(log_norm + (k - 1.0) * np.log(x) - x / 2.0)

        start = np.maximum(nu + 2.0 * np.sqrt(2.0 * nu) * (2.0 * prob - 1.0), 1e-3)
        return _newton(lambda x: chi_square_cdf(x, nu), density, prob, start, np.zeros_like(nu),
                       np.full_like(nu, 1e4))

    p = np.asarray(p, dtype=float)
    dof = np.asarray(dof, dtype=float)
    out = _cached("chi2", p, dof, solve)
    return np.where((dof > 0) & (p > 0) & (p < 1), out, np.nan)


def normal_quantile(p: ArrayLike) -> np.ndarray:
    """The p-quantile of the standard normal distribution.

    >>> round(float(normal_quantile(0.975)), 5)
    1.95996
    """
    def solve(prob, _):
        def density(z):
            return np.exp(-z * z / 2.0) / np.sqrt(2.0 * np.pi)

        return _newton(normal_cdf, density, prob, np.zeros_like(prob), np.full_like(prob, -40.0),
                       np.full_like(prob, 40.0))

    p = np.asarray(p, dtype=float)
    out = _cached("normal", p, np.zeros_like(p), solve)
    return np.where((p > 0) & (p < 1), out, np.nan)


def f_2_quantile(p: ArrayLike, dof: ArrayLike) -> np.ndarray:
    """The p-quantile of the F distribution with (2, dof) degrees of freedom, closed form.

    For two numerator degrees of freedom the distribution function is 1 − (1 + 2x/ν)^(−ν/2), so
    x_p = (ν/2)((1 − p)^(−2/ν) − 1) (a standard identity of the F distribution); as ν grows it
    tends to −ln(1 − p), half the chi-square(2) quantile. ``dof`` may be fractional or infinite.

    >>> round(float(f_2_quantile(0.95, 4)), 3)
    6.944
    """
    dof = np.asarray(dof, dtype=float)
    p = np.asarray(p, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        finite = dof / 2.0 * np.expm1(-2.0 / dof * np.log1p(-p))
    return np.where(np.isinf(dof) & (dof > 0), -np.log1p(-p), np.where(dof > 0, finite, np.nan))


def chi_square_2_quantile(p: float) -> float:
    """Quantile of the chi-square distribution with 2 degrees of freedom: −2 ln(1 − p)."""
    return float(-2.0 * np.log1p(-p))


__all__ = ["regularized_beta", "regularized_gamma", "student_t_sf", "student_t_quantile", "chi_square_cdf",
           "chi_square_quantile", "normal_cdf", "normal_quantile", "f_2_quantile", "chi_square_2_quantile"]
