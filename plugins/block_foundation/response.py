"""Steady-state response of the lumped block: vertical (one degree of freedom) and coupled
sliding–rocking (two), vectorised over an array of running speeds.

Complex amplitudes q mean q(t) = Re{q·e^(iωt)}; a phase lag is positive when the motion
lags the force.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .halfspace import ModeConstants

TWO_PI = 2.0 * math.pi


def _omega(frequency: float | np.ndarray) -> np.ndarray:
    return TWO_PI * np.asarray(frequency, dtype=float)


def _plain(value: np.ndarray) -> float | np.ndarray:
    """A 0-d array back to a float, so a scalar call returns a scalar."""
    return float(value) if np.ndim(value) == 0 else value


def undamped_frequency(stiffness: float, inertia: float) -> float:
    """f = √(k/m)/2π (any vibration text, e.g. Thomson & Dahleh, Ch. 2)."""
    return math.sqrt(stiffness / inertia) / TWO_PI


@dataclass(frozen=True, slots=True, kw_only=True)
class VerticalResponse:
    """Vertical motion of the block at each frequency (arrays, or floats for a scalar call)."""

    frequency: float | np.ndarray
    force: float | np.ndarray
    amplitude: float | np.ndarray
    phase_lag: float | np.ndarray
    velocity: float | np.ndarray
    force_to_soil: float | np.ndarray


def vertical_response(*, constants: ModeConstants, force: float | np.ndarray,
                      frequency: float | np.ndarray) -> VerticalResponse:
    """Single degree of freedom, z = F/(k_z − m·ω² + i·ω·c_z) (Richart, Hall & Woods 1970,
    Ch. 2 and 7; Thomson & Dahleh, Ch. 3); the force to the soil is |k_z + i·ω·c_z|·|z|.
    """
    w = _omega(frequency)
    f = np.asarray(force, dtype=float)
    k, c, m = constants.stiffness, constants.damping, constants.inertia
    z = f / (k - m * w**2 + 1j * w * c)
    amp = np.abs(z)
    return VerticalResponse(
        frequency=_plain(np.asarray(frequency, dtype=float)), force=_plain(f * np.ones_like(w)),
        amplitude=_plain(amp), phase_lag=_plain(-np.angle(z)), velocity=_plain(w * amp),
        force_to_soil=_plain(np.abs(k + 1j * w * c) * amp))


def coupled_frequencies(*, horizontal_stiffness: float, rocking_stiffness: float, mass: float,
                        inertia_cg: float, cg_height: float) -> tuple[float, float]:
    """Undamped natural frequencies of coupled sliding and rocking (Hz, low then high).

    ω⁴ − ω²·(ω_x² + ω_ψ²)/γ + ω_x²·ω_ψ²/γ = 0, ω_x² = k_x/m, ω_ψ² = k_ψ/I₀,
    γ = I_cg/I₀, I₀ = I_cg + m·h² (Richart, Hall & Woods 1970, Ch. 10; the equation form
    from memory, re-derived from the equations of motion about the centre of gravity with
    the springs at the base, h the height of the centre of gravity above it). Gravity's
    overturning term −m·g_n·h is left out, as in the method's source: for ordinary blocks on
    soil it is a fraction of a per cent of k_ψ.
    """
    i0 = inertia_cg + mass * cg_height**2
    wx2, wp2, gamma = horizontal_stiffness / mass, rocking_stiffness / i0, inertia_cg / i0
    s = wx2 + wp2
    high = (s + math.sqrt(s * s - 4.0 * gamma * wx2 * wp2)) / (2.0 * gamma)
    low = wx2 * wp2 / gamma / high  # product of the roots: no cancellation for the low one
    return math.sqrt(low) / TWO_PI, math.sqrt(high) / TWO_PI


def pole_height(*, horizontal_stiffness: float, mass: float, cg_height: float,
                frequency: float) -> float:
    """Height above the base of the point a coupled mode rocks about (no horizontal motion):
    h·m·ω²/(m·ω² − k_x), from the sliding equation's mode shape x/ψ = k_x·h/(k_x − m·ω²)."""
    mw2 = mass * (TWO_PI * frequency) ** 2
    return cg_height * mw2 / (mw2 - horizontal_stiffness)


@dataclass(frozen=True, slots=True, kw_only=True)
class CoupledResponse:
    """Sliding of the centre of gravity and rocking about it, complex, at each frequency."""

    frequency: float | np.ndarray
    force: float | np.ndarray
    sliding: complex | np.ndarray
    rocking: complex | np.ndarray
    cg_height: float

    def horizontal_amplitude(self, height: float) -> float | np.ndarray:
        """|x + (z − h)·ψ|: the horizontal amplitude at ``height`` above the base."""
        return _plain(np.abs(np.asarray(self.sliding)
                             + (height - self.cg_height) * np.asarray(self.rocking)))

    def rocking_amplitude(self) -> float | np.ndarray:
        return _plain(np.abs(np.asarray(self.rocking)))


def coupled_response(*, horizontal: ModeConstants, rocking: ModeConstants, mass: float,
                     inertia_cg: float, cg_height: float, force: float | np.ndarray,
                     force_height: float, frequency: float | np.ndarray) -> CoupledResponse:
    """A horizontal force F at ``force_height`` on the block with a horizontal spring and
    dashpot and a rocking spring and dashpot at the base, h below the centre of gravity
    (Richart, Hall & Woods 1970, Ch. 10, coupled rocking and sliding):

        [k_x* − m·ω²      −h·k_x*               ] [x]   [F    ]
        [−h·k_x*          k_ψ* + h²·k_x* − I·ω²] [ψ] = [e·F  ],   k* = k + i·ω·c,

    x the sliding of the centre of gravity, ψ the rocking, I about the centre of gravity,
    e = force_height − h. Solved by Cramer's rule, element by element over the frequencies.
    """
    w = _omega(frequency)
    f = np.asarray(force, dtype=float) * np.ones_like(w)
    h, e = cg_height, force_height - cg_height
    kx = horizontal.stiffness + 1j * w * horizontal.damping
    kp = rocking.stiffness + 1j * w * rocking.damping
    a11 = kx - mass * w**2
    a12 = -h * kx
    a22 = kp + h * h * kx - inertia_cg * w**2
    det = a11 * a22 - a12 * a12
    x = (a22 * f - a12 * e * f) / det
    psi = (a11 * e * f - a12 * f) / det
    return CoupledResponse(frequency=_plain(np.asarray(frequency, dtype=float)),
                           force=_plain(f), sliding=x if np.ndim(x) else complex(x),
                           rocking=psi if np.ndim(psi) else complex(psi), cg_height=h)
