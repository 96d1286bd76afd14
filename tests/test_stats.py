"""The quantiles of navred.stats against scipy.stats (a general-purpose reference library, test-only) and the
statistical tables."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats as reference

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
    p, dof = np.meshgrid(P, DOF)
    assert np.allclose(chi_square_quantile(p, dof), reference.chi2.ppf(p, dof), rtol=1e-9)
    x = np.array([0.1, 1.0, 3.84, 10.83, 40.0])
    for nu in DOF:
        assert np.allclose(chi_square_cdf(x, nu), reference.chi2.cdf(x, nu), rtol=1e-9, atol=1e-15)
    assert np.allclose(normal_quantile(P), reference.norm.ppf(P), atol=1e-12)
    assert np.allclose(normal_cdf([-3.0, -1.0, 0.0, 1.96]), reference.norm.cdf([-3.0, -1.0, 0.0, 1.96]), atol=1e-14)
    assert chi_square_2_quantile(0.95) == pytest.approx(reference.chi2.ppf(0.95, 2), abs=1e-12)


def test_the_closed_form_f_quantile_and_the_special_functions_against_scipy():
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
