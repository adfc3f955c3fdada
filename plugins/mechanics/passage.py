"""Passage through resonance: the transient response of a viscously damped SDOF whose
forcing frequency rises linearly from rest to the running speed (a run-up at constant
acceleration; a run-down at the same rate gives the same peak for a linear system)."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: integration steps per cycle of the highest frequency met (forcing or natural)
STEPS_PER_CYCLE = 40
#: after reaching speed, keep integrating this many decay times 1/(ζω_n) (at most)
SETTLE_DECAYS = 3.0
#: the longest run-up integrated, in cycles of the highest frequency (cost bound)
MAX_CYCLES = 5_000


@dataclass(frozen=True, slots=True)
class Passage:
    """Peak transient response over the run-up, as ratios to the static response
    F_end/k of the force amplitude at the running speed."""

    displacement_ratio: float  # max |x| · k / F_end
    force_ratio: float  # max |k·x + c·x'| / F_end (force into the support)
    peak_time: float  # s, when |x| peaks
    peak_frequency: float  # Hz, the forcing frequency at that moment


def run_up_cycles(f_end: float, f_n: float, t_ramp: float, zeta: float) -> float:
    """Cycles of the highest frequency the integration covers (its cost)."""
    settle = min(SETTLE_DECAYS / (zeta * 2 * math.pi * f_n), 10 * t_ramp) if zeta > 0 else 0.0
    return max(f_end, f_n) * (t_ramp + settle)


def run_up_peak(f_end: float, f_n: float, zeta: float, t_ramp: float,
                power: int) -> Passage:
    """Integrate x'' + 2ζω_n·x' + ω_n²·x = (F(t)/m)·cos φ(t) with f(t) = f_end·t/t_ramp and
    F(t) = F_end·(f/f_end)^power (0: constant force; 2: a rotating unbalance), from rest.

    A fixed-step classical Runge-Kutta scheme at STEPS_PER_CYCLE steps per cycle of the
    highest frequency; the result is exact to the step's order (tests compare it with
    scipy's adaptive integrator and with the slow-sweep limit 1/(2ζ)).
    """
    if not (f_end > 0 and f_n > 0 and t_ramp > 0 and zeta >= 0):
        raise ValueError("run-up needs positive frequencies and ramp time, ζ ≥ 0")
    if run_up_cycles(f_end, f_n, t_ramp, zeta) > MAX_CYCLES:
        raise ValueError("run-up too long to integrate")
    wn = 2 * math.pi * f_n
    settle = min(SETTLE_DECAYS / (zeta * wn), 10 * t_ramp) if zeta > 0 else 0.0
    t_end = t_ramp + settle
    h = 1.0 / (STEPS_PER_CYCLE * max(f_end, f_n))
    n = int(math.ceil(t_end / h))
    h = t_end / n
    a_end = wn**2  # force per unit mass giving x_static = 1 at the running speed

    def accel(t: float, x: float, v: float) -> float:
        tt = min(t, t_ramp)
        f = f_end * tt / t_ramp
        phase = math.pi * f_end * tt * tt / t_ramp + (2 * math.pi * f_end * (t - t_ramp)
                                                     if t > t_ramp else 0.0)
        amp = a_end * (f / f_end) ** power
        return amp * math.cos(phase) - 2 * zeta * wn * v - wn * wn * x

    x = v = t = 0.0
    xs = np.empty(n + 1)
    vs = np.empty(n + 1)
    xs[0] = vs[0] = 0.0
    for i in range(1, n + 1):
        k1x, k1v = v, accel(t, x, v)
        k2x, k2v = v + 0.5 * h * k1v, accel(t + 0.5 * h, x + 0.5 * h * k1x, v + 0.5 * h * k1v)
        k3x, k3v = v + 0.5 * h * k2v, accel(t + 0.5 * h, x + 0.5 * h * k2x, v + 0.5 * h * k2v)
        k4x, k4v = v + h * k3v, accel(t + h, x + h * k3x, v + h * k3v)
        x += h / 6 * (k1x + 2 * k2x + 2 * k3x + k4x)
        v += h / 6 * (k1v + 2 * k2v + 2 * k3v + k4v)
        t += h
        xs[i], vs[i] = x, v
    force = np.abs(xs + 2 * zeta / wn * vs)  # (k·x + c·x')/k
    i = int(np.argmax(np.abs(xs)))
    t_peak = i * h
    return Passage(displacement_ratio=float(np.abs(xs).max()), force_ratio=float(force.max()),
                   peak_time=t_peak, peak_frequency=f_end * min(t_peak, t_ramp) / t_ramp)
