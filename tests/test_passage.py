"""Passage through resonance: the run-up transient of plugins/mechanics/passage.py against
scipy's adaptive integrator and the limits a swept linear oscillator must meet."""

from __future__ import annotations

import math

import numpy as np
import pytest
from reportgen_plugins.mechanics.passage import run_up_peak
from scipy.integrate import solve_ivp


def _scipy_peak(f_end, f_n, zeta, t_ramp, power):
    wn = 2 * math.pi * f_n

    def rhs(t, y):
        f = f_end * t / t_ramp
        amp = wn**2 * (f / f_end) ** power
        return [y[1], amp * math.cos(math.pi * f_end * t * t / t_ramp)
                - 2 * zeta * wn * y[1] - wn**2 * y[0]]

    sol = solve_ivp(rhs, (0, t_ramp), [0.0, 0.0], method="DOP853", rtol=1e-9, atol=1e-12,
                    max_step=1 / (50 * f_end))
    return np.abs(sol.y[0]).max()


@pytest.mark.parametrize("power", [0, 2])
def test_run_up_peak_agrees_with_scipy(power):
    # reference library: scipy.integrate.solve_ivp (DOP853) on the same equation; the ramp
    # ends well past resonance, so the peak falls inside the ramp both integrate
    ours = run_up_peak(4.0, 1.0, 0.05, 8.0, power).displacement_ratio
    assert ours == pytest.approx(_scipy_peak(4.0, 1.0, 0.05, 8.0, power), rel=2e-3)


def test_slow_passage_nears_the_steady_resonance_peak_and_fast_passage_stays_below():
    # physical limits: a slow sweep tends to the steady peak 1/(2ζ) (Thomson §3.1, D at
    # r = 1); any sweep stays below the steady peak 1/(2ζ√(1−ζ²)); faster is lower
    zeta = 0.05
    slow = run_up_peak(2.0, 1.0, zeta, 400.0, 0).displacement_ratio
    fast = run_up_peak(2.0, 1.0, zeta, 5.0, 0).displacement_ratio
    assert 0.9 / (2 * zeta) < slow <= 1 / (2 * zeta * math.sqrt(1 - zeta**2))
    assert fast < slow
