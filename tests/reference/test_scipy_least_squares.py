"""The fits' least-squares solver (analyses/least_squares.hpp, exposed as _core.levenberg_marquardt)
against scipy.optimize.least_squares (an independent implementation) on the same problem: a coil's
R and L from a noisy first-order step response i(t) = V/R·(1 − e^(−t·R/L)) (Nilsson & Riedel,
Electric Circuits, 10th ed., ch. 7). Invented demo values: 24 V, 48 Ω, 0.35 H, 1 mA of noise.
scipy's standard errors are computed here the usual way, s²·(JᵀJ)⁻¹ from its own Jacobian."""
import numpy as np
import pytest
from scipy.optimize import least_squares

from coilkick import _core

V, R, L = 24.0, 48.0, 0.35


def test_parameters_and_standard_errors_agree_with_scipy():
    t = np.arange(200) * 150e-6
    rng = np.random.default_rng(7)
    i = V / R * (1 - np.exp(-t * R / L)) + rng.normal(0.0, 1e-3, t.size)

    def residuals(p):
        return V / p[0] * (1 - np.exp(-t * p[0] / p[1])) - i

    ours = _core.levenberg_marquardt(residuals, np.array([40.0, 0.5]), np.array([10.0, 0.1]))
    theirs = least_squares(residuals, [40.0, 0.5], method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    assert ours["converged"] and theirs.success
    s2 = 2 * theirs.cost / (t.size - 2)
    se = np.sqrt(np.diag(s2 * np.linalg.inv(theirs.jac.T @ theirs.jac)))
    # The same minimum: both stop within ~1e-10 of it (their tolerances); 1e-7 of the values.
    assert ours["parameters"] == pytest.approx(theirs.x, rel=1e-7)
    # Standard errors from two finite-difference Jacobians (forward differences of 1e-6 relative
    # here, scipy's own 2-point steps of ~1.5e-8): they agree to about the differences' error, 1e-4.
    assert ours["standard_errors"] == pytest.approx(se, rel=1e-4)
    # And the truth lies within 3 of them (a check of the estimate itself, not only of agreement).
    assert abs(ours["parameters"][0] - R) < 3 * ours["standard_errors"][0]
    assert abs(ours["parameters"][1] - L) < 3 * ours["standard_errors"][1]


def test_a_residual_function_error_reaches_python():
    def bad(p):
        raise ValueError("model not defined here")

    with pytest.raises(ValueError, match="model not defined here"):
        _core.levenberg_marquardt(bad, np.array([1.0]), np.array([1.0]))
