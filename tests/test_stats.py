"""The quantiles of navred.stats against scipy.stats (a general-purpose reference library, test-only) and the
statistical tables."""

from __future__ import annotations

import numpy as np
import pytest

from navred.stats import (
    chi_square_2_quantile,
    chi_square_cdf,
    chi_square_quantile,
    f_2_quantile,
    normal_cdf,
    normal_quantile,
    regularized_beta,
    regularized_gamma,
    student_t_quantile,
    student_t_sf,
)

DOF = [1, 2, 3, 4, 5, 7, 12, 30, 1.5, 4.3, 250.0]
P = [0.5, 0.9, 0.95, 0.975, 0.99, 0.99375, 0.999, 0.9999, 0.01, 0.2]


def test_student_t_against_scipy():
    # scipy.stats imported here, where used: it takes most of a second to import
    from scipy import stats as reference
    # the blunder test's points reach 1 − 0.05/(2·8) and beyond; fractional dof for a line's effective ν
    p, dof = np.meshgrid(P, DOF)
    assert np.allclose(student_t_quantile(p, dof), reference.t.ppf(p, dof), rtol=1e-9, atol=1e-12)
    t = np.array([0.0, 0.5, 2.0, 12.7, 60.0])
    for nu in DOF:
        assert np.allclose(student_t_sf(t, nu), reference.t.sf(t, nu), rtol=1e-9, atol=1e-15)
    # the tables: t(1; 0.975) = 12.706, t(4; 0.975) = 2.776, t(30; 0.975) = 2.042 (from memory)
    assert student_t_quantile(0.975, [1, 4, 30]) == pytest.approx([12.706, 2.776, 2.042], abs=1e-3)
    assert float(student_t_quantile(0.975, np.inf)) == pytest.approx(1.959964, abs=1e-6)


def test_chi_square_and_normal_against_scipy():
    from scipy import stats as reference
    p, dof = np.meshgrid(P, DOF)
    assert np.allclose(chi_square_quantile(p, dof), reference.chi2.ppf(p, dof), rtol=1e-9)
    x = np.array([0.1, 1.0, 3.84, 10.83, 40.0])
    for nu in DOF:
        assert np.allclose(chi_square_cdf(x, nu), reference.chi2.cdf(x, nu), rtol=1e-9, atol=1e-15)
    assert np.allclose(normal_quantile(P), reference.norm.ppf(P), atol=1e-12)
    assert np.allclose(normal_cdf([-3.0, -1.0, 0.0, 1.96]), reference.norm.cdf([-3.0, -1.0, 0.0, 1.96]), atol=1e-14)
    assert chi_square_2_quantile(0.95) == pytest.approx(reference.chi2.ppf(0.95, 2), abs=1e-12)


def test_the_closed_form_f_quantile_and_the_special_functions_against_scipy():
    from scipy import stats as reference
    p, dof = np.meshgrid([0.5, 0.95, 0.99], DOF)
    assert np.allclose(f_2_quantile(p, dof), reference.f.ppf(p, 2, dof), rtol=1e-9)
    # as ν grows without end, F(2, ν) becomes chi-square(2) / 2
    assert float(f_2_quantile(0.95, np.inf)) == pytest.approx(reference.chi2.ppf(0.95, 2) / 2, abs=1e-12)
    x, a, b = np.meshgrid([0.01, 0.3, 0.7, 0.999], [0.5, 1.0, 3.5, 40.0], [0.5, 2.0, 15.0])
    from scipy import special

    assert np.allclose(regularized_beta(x, a, b), special.betainc(a, b, x), rtol=1e-10, atol=1e-15)
    assert np.allclose(regularized_gamma(a, x * 50), special.gammainc(a, x * 50), rtol=1e-10, atol=1e-15)


def test_shapes_broadcast():
    assert student_t_quantile(0.975, 4).shape == ()
    assert student_t_quantile([0.9, 0.975], 4).shape == (2,)
    assert chi_square_quantile(0.95, np.ones((2, 3))).shape == (2, 3)
    assert np.isnan(student_t_quantile(0.975, 0.0)) and np.isnan(chi_square_quantile(1.0, 3))


def _halved_root(z2, lam, inside):
    """The restricted likelihood's root as navred sought it before (80 halvings of (0, max z²]), kept here as
    the previous answer the quicker search must give."""
    def slope(v):
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            terms = (z2 - (v[:, None] + lam)) / (v[:, None] + lam) ** 2
            return np.where(inside, np.nan_to_num(terms, nan=0.0, posinf=1e300), 0.0).sum(axis=1)

    lo, hi = np.zeros(z2.shape[0]), np.max(z2, axis=1) + 1e-12
    positive = slope(np.full(z2.shape[0], 1e-300)) > 0
    for _ in range(80):
        mid = (lo + hi) / 2.0
        up = slope(mid) > 0
        lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
    return np.where(positive, (lo + hi) / 2.0, 0.0)


def test_the_likelihood_root_is_the_halvings_and_scipys():
    # issue 26: the sights' σ² of a round over a run (navred.fixstats.sight_variance) is the root of the restricted
    # likelihood's slope (Patterson and Thompson 1971), now sought by bracketed Newton steps; per case (each number
    # of components, each spread of the run's variances) it must be the 80 halvings' root to 1e-9, and the root
    # scipy.optimize.brentq (a general-purpose reference library) finds where the slope changes sign once
    from scipy.optimize import brentq

    from navred.fixstats import likelihood_root

    rng = np.random.default_rng(26)
    for components in (1, 2, 3, 5, 8):
        for run_scale in (0.0, 0.1, 1.0, 30.0, 1e4):
            rows = 400
            sigma2 = rng.uniform(0.05, 4.0, (rows, 1))
            lam = run_scale * rng.exponential(1.0, (rows, components)) * (rng.random((rows, components)) < 0.8)
            z2 = (sigma2 + lam) * rng.chisquare(1, (rows, components))
            z2[:5] = 0.0  # no residual at all: σ² = 0
            inside = rng.random((rows, components)) < 0.95
            inside[:, 0] = True
            found, halved = likelihood_root(z2, lam, inside), _halved_root(z2, lam, inside)
            apart = np.abs(found - halved) > 1e-9 * np.abs(halved) + 1e-15 * (1.0 + np.max(z2, axis=1))
            assert not apart.any(), (components, run_scale, found[apart][:3], halved[apart][:3])
            assert (found[:5] == 0.0).all()
            for k in np.flatnonzero(found > 0)[:12].tolist():
                def slope(v, z=z2[k, inside[k]], run=lam[k, inside[k]]):
                    return float(np.sum((z - (v + run)) / (v + run) ** 2))

                grid = np.geomspace(1e-9, np.max(z2[k]) + 1e-12, 200)
                if np.count_nonzero(np.diff(np.sign([slope(v) for v in grid]))) == 1:
                    reference_root = brentq(slope, 1e-12, np.max(z2[k]) + 1e-12, xtol=1e-15, rtol=1e-14)
                    assert found[k] == pytest.approx(reference_root, rel=1e-9, abs=1e-12)


def test_one_rows_likelihood_root_in_plain_floats_is_the_arrays_to_the_bit():
    # issue 26: one fix's root is worked in plain Python floats (navred.fixstats._likelihood_root_one); a row of a
    # batch goes through the arrays. Both must give the very same number (batched and single fixes are identical
    # field by field), per case: each number of components, each scale of the residuals and of the run's
    # variances, and rows with no residual, NaN, infinite or subnormal z², a negative λ, nothing inside. The
    # reference is numpy's own arithmetic (the same steps on arrays; its pairwise sums are mirrored)
    import warnings

    from navred.fixstats import likelihood_root

    rng = np.random.default_rng(2026)
    for components in (1, 2, 3, 5, 8, 9, 10, 12, 16, 17, 40):
        for run_scale in (0.0, 1e-12, 0.1, 30.0, 1e4, 1e200):
            for residual_scale in (1.0, 1e-25, 1e-300, 1e160):
                rows = 24
                lam = run_scale * rng.exponential(1.0, (rows, components)) * (rng.random((rows, components)) < 0.8)
                z2 = (rng.uniform(0.05, 4.0, (rows, 1)) * residual_scale + lam) * rng.chisquare(1, (rows, components))
                z2[:2] = 0.0
                z2[2, 0], z2[3, -1], lam[4, 0], z2[5], lam[6] = np.nan, np.inf, -0.5, 5e-324, 0.0
                inside = rng.random((rows, components)) < 0.9
                inside[:, 0] = True
                inside[7] = False
                with warnings.catch_warnings():
                    warnings.simplefilter("error")  # no floating-point warning on either way
                    together = likelihood_root(z2, lam, inside)
                    alone = np.array([likelihood_root(z2[k:k + 1], lam[k:k + 1], inside[k:k + 1])[0]
                                      for k in range(rows)])
                assert np.array_equal(together, alone, equal_nan=True), (components, run_scale, residual_scale)


def test_the_blunder_tests_median_is_numpys_nanmedian():
    # issue 26: the smallest blunder a fix finds is each group's median over its sights; navred takes it without
    # numpy's masked-array path and must give numpy.nanmedian's value (the general-purpose reference) to the bit,
    # per number of sights, gaps, infinities and huge values included
    import warnings

    from navred.fixstats import BLUNDER_ALPHA, BLUNDER_MIN_ARCMIN, blunder_test

    rng = np.random.default_rng(26)
    for sights in range(3, 13):
        residual = rng.normal(0, 1, (300, sights))
        leverage = rng.uniform(0, 0.9, (300, sights))
        use = rng.random((300, sights)) < 0.85
        dof = use.sum(axis=1) - 2.0
        sigma = rng.uniform(0.1, 3, 300) * 10.0 ** rng.integers(-3, 200, 300)
        *_, detectable = blunder_test(residual, leverage, use, dof, sigma)
        testable = dof >= 2
        n = np.maximum(use.sum(axis=1), 1)
        critical = student_t_quantile(1.0 - BLUNDER_ALPHA / (2.0 * n), np.where(testable, dof - 1.0, 1.0))
        per_sight = critical[:, None] * sigma[:, None] / np.sqrt(np.clip(1.0 - leverage, 1e-12, 1.0))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            expected = np.nanmedian(np.where(use, per_sight, np.nan), axis=1)
        expected = np.maximum(np.where(testable, expected, np.nan), BLUNDER_MIN_ARCMIN)
        assert np.array_equal(detectable, expected, equal_nan=True), sights
