"""free_vibration's method: the free response of m·x'' + c·x' + k·x = 0 in its three regimes
as a time history, and the plotted span; pure functions of SI floats (no document model)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

#: |ζ − 1| below this is treated as critically damped.
CRITICAL_BAND = 1e-9
#: Smallest non-zero initial displacement (m) or velocity (m/s) accepted.
TINY_START = 1e-12
#: Most natural periods the plotted history may span.
MAX_PERIODS = 1000
#: Fewest points of the plotted history, and points per natural period.
MIN_POINTS, POINTS_PER_PERIOD = 400, 60

Regime = Literal["critical", "overdamped", "undamped", "underdamped"]


def regime(zeta: float) -> Regime:
    if abs(zeta - 1.0) <= CRITICAL_BAND:
        return "critical"
    if zeta > 1.0:
        return "overdamped"
    return "undamped" if zeta == 0 else "underdamped"


@dataclass(frozen=True, slots=True, kw_only=True)
class FreeResponse:
    """x(t) from the initial conditions; the coefficients are those the working prints.

    critical: (x_0 + (v_0 + ω_n x_0)·t)·e^(−ω_n t); overdamped: A_1·e^(s_1 t) + A_2·e^(s_2 t);
    undamped: A·cos(ω_n t + φ); underdamped: A·e^(−ζω_n t)·cos(ω_d t + φ) (Thomson & Dahleh
    Ch. 2; Rao §2.6).
    """

    regime: Regime
    omega_n: float
    zeta: float
    x0: float = 0.0
    v0: float = 0.0
    a1: float = 0.0
    a2: float = 0.0
    s1: float = 0.0
    s2: float = 0.0
    amplitude: float = 0.0
    phase: float = 0.0
    omega_d: float = 0.0

    def displacement(self, t: np.ndarray) -> np.ndarray:
        wn, zeta = self.omega_n, self.zeta
        if self.regime == "critical":
            x0, v0 = self.x0, self.v0
            return (x0 + (v0 + wn * x0) * t) * np.exp(-wn * t)
        if self.regime == "overdamped":
            return self.a1 * np.exp(self.s1 * t) + self.a2 * np.exp(self.s2 * t)
        if self.regime == "undamped":
            return self.amplitude * np.cos(wn * t + self.phase)
        return self.amplitude * np.exp(-zeta * wn * t) * np.cos(self.omega_d * t + self.phase)

    def envelope(self, t: np.ndarray) -> np.ndarray | None:
        """±A·e^(−ζω_n t) of an underdamped response; None for the other regimes."""
        if self.regime != "underdamped":
            return None
        return self.amplitude * np.exp(-self.zeta * self.omega_n * t)


def default_duration(wn: float, zeta: float) -> float:
    """The plotted span when the job gives none: six periods undamped, else about four decay
    times, between 3 and 30 natural periods."""
    periods = 2 * math.pi / wn
    if zeta <= 0:
        return 6 * periods
    return float(min(max(4.0 / (zeta * wn), 3 * periods), 30 * periods))


def history_times(duration: float, fn: float, max_points: int) -> np.ndarray:
    """The plotted instants: 60 per natural period, at least 400, at most ``max_points``."""
    n = int(min(max(MIN_POINTS, POINTS_PER_PERIOD * duration * fn), max_points))
    return np.linspace(0.0, duration, n)
