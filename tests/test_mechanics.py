"""The shared mechanics (reportgen_plugins.mechanics) against sources outside it: the transfer
functions of m·x'' + c·x' + k·x = F evaluated by scipy.signal, numerical roots and maxima
(scipy.optimize), handbook forms, and the printed formulas as the Sheet evaluates them."""

from __future__ import annotations

import math

import numpy as np
import pytest
from reportgen_plugins import mechanics as mech
from scipy import signal
from scipy.optimize import brentq, minimize_scalar

from reportgen.formula import evaluate
from reportgen.units import STANDARD_GRAVITY

RATIOS = np.array([0.05, 0.3, 0.7, 0.99, 1.0, 1.01, 1.3, math.sqrt(2.0), 2.0, 3.0, 10.0, 80.0])
DAMPING = (0.0, 0.005, 0.02, 0.05, 0.1, 0.3, 0.7, 1.0)


def _h(num, r: np.ndarray, zeta: float) -> np.ndarray:
    """H(jr) of num/(s² + 2ζs + 1), the dimensionless SDOF (s = jω/ω_n), by scipy.signal."""
    return signal.freqs(num, [1.0, 2.0 * zeta, 1.0], worN=r)[1]


@pytest.mark.parametrize("zeta", [z for z in DAMPING if z > 0])
def test_harmonic_response_against_the_transfer_functions(zeta):
    # Thomson & Dahleh Ch. 3; Rao §3.4-3.6: D = |1/(1 − r² + 2jζr)|, φ = −arg of it,
    # T = |(1 + 2jζr)/(1 − r² + 2jζr)|, absolute motion lag = −arg of that
    h_disp = _h([1.0], RATIOS, zeta)
    h_trans = _h([2.0 * zeta, 1.0], RATIOS, zeta)
    np.testing.assert_allclose(mech.dynamic_amplification(RATIOS, zeta), np.abs(h_disp),
                               rtol=1e-12)
    np.testing.assert_allclose(mech.transmissibility(RATIOS, zeta), np.abs(h_trans),
                               rtol=1e-12)
    np.testing.assert_allclose(mech.phase_lag(RATIOS, zeta), -np.angle(h_disp), atol=1e-12)
    lag = np.mod(-np.angle(h_trans), 2 * math.pi)
    np.testing.assert_allclose(mech.absolute_phase_lag(RATIOS, zeta), lag, atol=1e-12)


@pytest.mark.parametrize("zeta", DAMPING)
def test_transmissibility_is_one_at_root_two(zeta):
    # Thomson & Dahleh §3.5: every curve passes T = 1 at r = √2 (check_cases C3)
    assert mech.transmissibility(math.sqrt(2.0), zeta) == pytest.approx(1.0, rel=1e-14)


def test_scalar_in_float_out_array_in_array_out():
    assert type(mech.transmissibility(2.0, 0.1)) is float
    assert type(mech.dynamic_amplification(0.5, 0.1)) is float
    assert mech.phase_lag(np.array([0.5, 2.0]), 0.1).shape == (2,)


@pytest.mark.parametrize("zeta", [0.01, 0.05, 0.1, 0.3, 0.6])
def test_peak_ratio_is_where_the_transfer_function_peaks(zeta):
    # r_p² = (√(1 + 8ζ²) − 1)/(4ζ²) (Rao §9.10); the maximum of |H| found numerically
    opt = minimize_scalar(lambda r: -abs(_h([2.0 * zeta, 1.0], [r], zeta)[0]),
                          bounds=(0.3, 1.2), method="bounded", options={"xatol": 1e-12})
    assert mech.peak_ratio(zeta) == pytest.approx(opt.x, rel=1e-6)
    assert mech.peak_ratio(0.0) == 1.0


@pytest.mark.parametrize("target", [0.5, 0.1, 0.02])
@pytest.mark.parametrize("zeta", [0.0, 0.05, 0.2])
def test_required_ratio_meets_the_target(target, zeta):
    # the root of |H(jr)| = T_req above √2, found by bracketing (scipy.optimize.brentq)
    root = brentq(lambda r: abs(_h([2.0 * zeta, 1.0], [r], zeta)[0]) - target,
                  math.sqrt(2.0), 1e4, xtol=1e-14, rtol=1e-15)
    assert mech.required_ratio(target, zeta) == pytest.approx(root, rel=1e-10)
    if zeta == 0.0:  # handbook form r² = 1 + 1/T (Thomson & Dahleh §3.5)
        assert mech.required_ratio(target, 0.0) == pytest.approx(math.sqrt(1 + 1 / target),
                                                                 rel=1e-14)
    with pytest.raises(ValueError):
        mech.required_ratio(1.0, zeta)


@pytest.mark.parametrize("delta_mm", [2.5, 6.0, 25.0, 50.0])
def test_frequency_from_deflection_and_stiffness(delta_mm):
    # handbook f_n = 15.76/√δ[mm] (constant rounded: 1e-3), and √(k/m)/2π with k = m·g_n/δ
    delta = delta_mm / 1000.0
    f = mech.frequency_from_deflection(delta)
    assert f == pytest.approx(15.76 / math.sqrt(delta_mm), rel=1e-3)
    m = 750.0
    assert mech.natural_frequency(m * STANDARD_GRAVITY / delta, m) == pytest.approx(f,
                                                                                   rel=1e-14)
    assert mech.natural_period(2.0e5, 80.0) * mech.natural_frequency(2.0e5, 80.0) == (
        pytest.approx(1.0, rel=1e-15))


def test_damping_ratio_against_the_eigenvalues():
    # m·x'' + c·x' + k·x = 0: the eigenvalues λ of the state matrix give ζ = −Re λ/|λ|
    m, k, c = 120.0, 3.0e5, 900.0
    lam = np.linalg.eigvals(np.array([[0.0, 1.0], [-k / m, -c / m]]))[0]
    assert mech.damping_ratio(c, k, m) == pytest.approx(-lam.real / abs(lam), rel=1e-12)


def _ulps(a: float, b: float) -> float:
    return abs(a - b) / math.ulp(max(abs(a), abs(b)))


@pytest.mark.parametrize("zeta", DAMPING)
def test_printed_and_swept_forms_agree(zeta):
    # one definition: the formula a Sheet prints, evaluated as the Sheet does, and the numpy
    # function the figures sweep agree to within 2 units in the last place (the same
    # operations in the same order; numpy's and libm's atan2 may differ in the last bit)
    pairs = ((mech.transmissibility, mech.transmissibility_formula("r")),
             (mech.phase_lag, mech.phase_lag_formula("r")),
             (mech.absolute_phase_lag, mech.absolute_phase_lag_formula("r")),
             (mech.dynamic_amplification, mech.amplification_formula()))
    for r in RATIOS:
        if zeta == 0 and r == 1.0:
            continue  # unbounded: the formula refuses, the figures leave the point out
        for function, formula in pairs:
            value = evaluate(formula, {"r": float(r), "zeta": zeta})
            assert _ulps(function(r, zeta), value) <= 2, (function.__name__, r, zeta)
    if zeta > 0:
        assert _ulps(mech.peak_ratio(zeta),
                     evaluate(mech.peak_ratio_formula(), {"zeta": zeta})) <= 2
    for d in (0.001, 0.025):
        assert _ulps(mech.frequency_from_deflection(d), evaluate(
            mech.frequency_from_deflection_formula("d"), {"d": d, "g_n": STANDARD_GRAVITY})
        ) <= 2


def test_ratio_grid():
    r = mech.ratio_grid(25.0)
    assert r[0] == pytest.approx(0.1) and r[-1] == pytest.approx(25.0)
    assert np.all(np.diff(r) > 0) and np.all(np.abs(r - 1.0) > 1e-6)
    assert np.count_nonzero((r > 0.9) & (r < 1.1)) >= 80  # the peak is resolved


@pytest.mark.parametrize("zeta", [0.0, 0.001, 0.05])
def test_resonance_grid(zeta):
    fn = 12.0
    g = mech.resonance_grid(0.0, 40.0, fn, zeta, points=300)
    assert np.all(np.diff(g) > 0) and g[0] > 0 and g[-1] == 40.0
    near = g[np.abs(g - fn) <= 4 * max(zeta, 0.002) * fn]
    assert len(near) >= 100  # dense where the curve turns
    if zeta == 0:  # no point on the unbounded undamped peak
        assert np.all(np.abs(g / fn - 1) > 2e-3)


def test_series_values_and_quantity_text():
    assert mech.series_values([0.1 + 0.2, 1.0]) == (0.3, 1.0)  # last-bit noise cleared
    assert mech.series_values([0.1 + 0.2], decimals=None) == (0.30000000000000004,)
    # 25.4 mm = 1 in exactly (NIST SP 811)
    assert mech.quantity_text(0.0254, "length", "SI") == "25.4 mm"
    assert mech.quantity_text(0.0254, "length", "US") == "1 in"
    assert mech.quantity_text(2.5e5, "stiffness", "SI", 3) == "250 kN/m"


def test_damping_inputs_refuse_both_forms():
    names = [spec.name for spec in mech.damping_inputs()]
    assert names == ["damping_ratio", "damping_coefficient"]
    assert mech.damping_problems({"damping_ratio"}) == []
    assert mech.damping_problems({"damping_ratio", "damping_coefficient"})[0][0] == (
        "inputs.damping_coefficient")
