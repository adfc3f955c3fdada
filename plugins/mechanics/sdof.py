"""Single-degree-of-freedom mechanics, each quantity once: the formula a Sheet prints and the
numpy function that sweeps it, with the same operations in the same order.

m·x'' + c·x' + k·x = F(t), r = ω/ω_n, ζ = c/(2√(km)) (Thomson & Dahleh, Ch. 2-3; Rao §3.4-3.7,
§9.10). The ``*_formula`` helpers take the operand name a calc prints (``r_req``,
``delta_max``); the functions take floats (and return floats) or numpy arrays.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from reportgen.units import STANDARD_GRAVITY


def _out(value: Any) -> Any:
    """A float for a scalar argument, the array otherwise."""
    out = np.asarray(value)
    return float(out) if out.ndim == 0 else out


# ------------------------------------------------------------------ natural frequency


def natural_frequency(k: float, m: float) -> float:
    """f_n = √(k/m)/2π (Hz)."""
    return math.sqrt(k / m) / (2 * math.pi)


def natural_period(k: float, m: float) -> float:
    """T_n = 2π·√(m/k) (s)."""
    return 2 * math.pi * math.sqrt(m / k)


def frequency_from_deflection(delta: Any) -> Any:
    """f_n = √(g_n/δ_st)/2π (Hz) of a linear spring that deflects δ_st under the weight."""
    return _out(np.sqrt(STANDARD_GRAVITY / np.asarray(delta, dtype=float)) / (2 * math.pi))


def frequency_from_deflection_formula(delta: str = "delta_st") -> str:
    return f"sqrt(g_n/{delta})/(2*pi)"


def critical_damping_formula() -> str:
    """c_c = 2√(km)."""
    return "2*sqrt(k*m)"


def damping_ratio(c: float, k: float, m: float) -> float:
    """ζ = c/c_c = c/(2√(km))."""
    return c / (2 * math.sqrt(k * m))


# ------------------------------------------------------------------ harmonic response


def dynamic_amplification(r: Any, zeta: float) -> Any:
    """D = 1/√((1 − r²)² + (2ζr)²): displacement over the static displacement F_0/k.
    Infinite at r = 1 when ζ = 0 (no warning: a figure's grid leaves that point out)."""
    r = np.asarray(r, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(1 / np.sqrt((1 - r**2) ** 2 + (2 * zeta * r) ** 2))


def amplification_formula(r: str = "r") -> str:
    return f"1/sqrt((1 - {r}**2)**2 + (2*zeta*{r})**2)"


def phase_lag(r: Any, zeta: float) -> Any:
    """φ = atan2(2ζr, 1 − r²) in [0, π]: displacement behind the force (or the relative
    displacement z = x − y behind a support motion)."""
    r = np.asarray(r, dtype=float)
    return _out(np.arctan2(2 * zeta * r, 1 - r**2))


def phase_lag_formula(r: str = "r") -> str:
    return f"atan2(2*zeta*{r}, 1 - {r}**2)"


def absolute_phase_lag(r: Any, zeta: float) -> Any:
    """φ = atan2(2ζr³, 1 − r² + (2ζr)²): absolute motion of the mass behind a support motion."""
    r = np.asarray(r, dtype=float)
    return _out(np.arctan2(2 * zeta * r**3, 1 - r**2 + (2 * zeta * r) ** 2))


def absolute_phase_lag_formula(r: str = "r") -> str:
    return f"atan2(2*zeta*{r}**3, 1 - {r}**2 + (2*zeta*{r})**2)"


def transmissibility(r: Any, zeta: float) -> Any:
    """T = √((1 + (2ζr)²)/((1 − r²)² + (2ζr)²)): force transmissibility (force on the support
    over the exciting force) and motion transmissibility (absolute over support motion)."""
    r = np.asarray(r, dtype=float)
    two_zr = (2.0 * zeta * r) ** 2
    return _out(np.sqrt((1.0 + two_zr) / ((1.0 - r**2) ** 2 + two_zr)))


def transmissibility_formula(r: str = "r") -> str:
    return f"sqrt((1 + (2*zeta*{r})**2)/((1 - {r}**2)**2 + (2*zeta*{r})**2))"


def peak_ratio(zeta: float) -> float:
    """Frequency ratio of the transmissibility peak: r_p² = (√(1 + 8ζ²) − 1)/(4ζ²); 1 for
    ζ = 0 (the undamped peak is at resonance)."""
    if zeta == 0.0:
        return 1.0
    return math.sqrt((math.sqrt(1.0 + 8.0 * zeta**2) - 1.0) / (4.0 * zeta**2))


def peak_ratio_formula() -> str:
    return "sqrt((sqrt(1 + 8*zeta**2) - 1)/(4*zeta**2))"


def required_ratio(target: float, zeta: float) -> float:
    """The frequency ratio r > √2 at which T(r, ζ) equals ``target`` (0 < target < 1).

    T² = (1 + 4ζ²x)/((1 − x)² + 4ζ²x) with x = r² is a quadratic in x:
    T²·x² + (4ζ²T² − 2T² − 4ζ²)·x + (T² − 1) = 0. Its constant term is negative and its
    leading one positive, so exactly one root is positive; the middle coefficient is
    negative, so −b + √(b² − 4ac) adds two positive numbers (no cancellation).
    For ζ = 0 it is the handbook r² = 1 + 1/T.
    """
    if not 0.0 < target < 1.0:
        raise ValueError(f"target transmissibility {target} is not between 0 and 1")
    t2 = target * target
    a4 = 4.0 * zeta * zeta
    b = a4 * t2 - 2.0 * t2 - a4
    x = (-b + math.sqrt(b * b - 4.0 * t2 * (t2 - 1.0))) / (2.0 * t2)
    return math.sqrt(x)
