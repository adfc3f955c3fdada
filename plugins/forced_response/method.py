"""forced_response's method: the excitation a job describes and the closed-form steady-state
response swept over frequency; pure functions of SI floats and arrays (no document model)."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from reportgen_plugins.mechanics import (
    absolute_phase_lag,
    damping_ratio,
    dynamic_amplification,
    phase_lag,
)

#: The three excitation groups and the inputs that belong to each.
EXCITATIONS: dict[str, tuple[str, ...]] = {
    "force": ("force_amplitude",),
    "unbalance": ("unbalance", "unbalance_mass", "eccentricity"),
    "support": ("base_displacement", "base_acceleration"),
}
EXCITATION_NAMES = {"force": "applied force", "unbalance": "rotating unbalance",
                    "support": "support motion"}
#: Undamped and |r - 1| below this: the steady state does not exist (unbounded growth).
RESONANCE_TOLERANCE = 1e-6
#: Frequency-ratio limits of the regime statement (common practice, no source).
STIFFNESS_CONTROLLED_BELOW = 0.5
MASS_CONTROLLED_ABOVE = 1.5
#: Above this many natural periods per forcing period the time-integration check is not run
#: (it would take seconds); the transfer-function check still is.
MAX_ODE_COST = 20.0


def excitation_kind(given: frozenset[str] | set[str]) -> str:
    """"force", "unbalance" or "support": the one excitation group present in ``given``."""
    kinds = [g for g, names in EXCITATIONS.items() if set(names) & set(given)]
    if len(kinds) != 1:
        raise ValueError(f"expected exactly one excitation, found {kinds}")
    return kinds[0]


def stated_damping_ratio(inputs: Mapping[str, Any], given: frozenset[str], m: float,
                         k: float) -> float:
    """ζ from whichever of damping_ratio and damping_coefficient the job gives (0: none)."""
    if "damping_coefficient" in given:
        return damping_ratio(inputs["damping_coefficient"], k, m)
    return inputs.get("damping_ratio", 0.0)


def unbalance(p: Mapping[str, Any]) -> float:
    """U = m_e·e (kg·m), as given or from its two parts."""
    return p["unbalance"] if "unbalance" in p else p["unbalance_mass"] * p["eccentricity"]


def time_integration_cost(r: float, zeta: float) -> float:
    """Natural periods (or fast decay times) the integrator resolves per forcing period."""
    return max(1.0, 2.0 * zeta) / r


def passes_resonance(r: float, fn: float, speed_range: tuple[float, float] | None) -> bool:
    """Whether start-up or run-down crosses f_n: running above it, or a stated speed range
    spanning it."""
    low, high = speed_range if speed_range is not None else (math.inf, -math.inf)
    return r > 1 or low < fn < high


@dataclass(frozen=True, slots=True, kw_only=True)
class FrequencyResponse:
    """Steady-state response at each frequency of a sweep (SI; phases in rad). ``Y``, ``T``,
    ``Z`` and ``phi_z`` belong to a support motion only. ``resp["X"]`` reads a field."""

    r: np.ndarray
    D: np.ndarray
    X: np.ndarray
    V: np.ndarray
    F_T: np.ndarray
    phi: np.ndarray
    Y: np.ndarray | None = None
    T: np.ndarray | None = None
    Z: np.ndarray | None = None
    phi_z: np.ndarray | None = None

    def __getitem__(self, key: str) -> np.ndarray:
        value = getattr(self, key)
        if value is None:
            raise KeyError(key)
        return value


def response(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float, k: float,
             zeta: float, freqs: np.ndarray) -> FrequencyResponse:
    """Closed-form steady-state response at the frequencies ``freqs`` (Hz), vectorised.

    The excitation keeps its physical law across frequency: constant force, unbalance force
    growing with ω², constant support displacement or constant support acceleration.
    """
    wn = math.sqrt(k / m)
    w = 2 * np.pi * np.asarray(freqs, dtype=float)
    r = w / wn
    d = dynamic_amplification(r, zeta)
    t_f = np.sqrt(1 + (2 * zeta * r) ** 2) * d
    if kind == "support":
        if "base_displacement" in p:
            y = np.full_like(w, p["base_displacement"])
        else:
            with np.errstate(divide="ignore"):
                y = p["base_acceleration"] / w**2
        x = t_f * y
        return FrequencyResponse(r=r, D=d, Y=y, T=t_f, X=x, Z=r**2 * d * y,
                                 phi=absolute_phase_lag(r, zeta), phi_z=phase_lag(r, zeta),
                                 F_T=m * w**2 * x, V=w * x)
    f0 = np.full_like(w, p["force_amplitude"]) if kind == "force" else unbalance(p) * w**2
    x = f0 / k * d
    return FrequencyResponse(r=r, D=d, X=x, F_T=f0 * t_f, phi=phase_lag(r, zeta), V=w * x)
