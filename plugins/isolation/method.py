"""isolation's method (pure functions of SI floats, no document model): the stiffness a job
describes, each mount's load and table values; transmissibility itself is the mechanics'."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from reportgen_plugins.mechanics import (
    frequency_from_deflection,
    peak_ratio,
    required_ratio,
    stiffness_ratio,
    transmissibility,
)

from reportgen.units import STANDARD_GRAVITY

__all__ = ["COMPARISON_DAMPING", "EXCITATION_INPUTS", "ISOLATOR_INPUTS", "SQRT2",
           "MountRow", "dynamic_stiffness", "forcing_frequency", "lifted_mounts", "loads",
           "mount_loads", "mount_rows", "peak_ratio", "required_ratio", "second_moments",
           "total_stiffness", "transmissibility"]

SQRT2 = math.sqrt(2.0)
#: The other damping ratios drawn beside the stated one (typical isolator range).
COMPARISON_DAMPING = (0.01, 0.05, 0.1, 0.2)
ISOLATOR_INPUTS = ("stiffness", "stiffness_per_mount", "static_deflection", "natural_frequency")
EXCITATION_INPUTS = ("speed", "frequency")


def total_stiffness(inputs: Mapping[str, Any], given: frozenset[str] | set[str]) -> float:
    """Total vertical static stiffness from whichever isolator description the job gives
    (a stated natural frequency is a dynamic one: divided by the dynamic stiffness ratio)."""
    m, n = inputs["mass"], inputs["mounts"]
    if "stiffness" in given:
        return float(inputs["stiffness"])
    if "stiffness_per_mount" in given:
        return float(n * inputs["stiffness_per_mount"])
    if "static_deflection" in given:
        return float(m * STANDARD_GRAVITY / inputs["static_deflection"])
    return float(m * (2.0 * math.pi * inputs["natural_frequency"]) ** 2
                 / stiffness_ratio(inputs))


def dynamic_stiffness(inputs: Mapping[str, Any], given: frozenset[str] | set[str]) -> float:
    """The stiffness the vibration sees: k_dyn = (k_dyn/k_st)·k_st."""
    return stiffness_ratio(inputs) * total_stiffness(inputs, given)


def forcing_frequency(inputs: Mapping[str, Any]) -> float:
    return float(inputs["speed"] if "speed" in inputs else inputs["frequency"])


def mount_loads(weight: float, positions: Sequence[Sequence[float]],
                cg: tuple[float, float]) -> tuple[float, ...]:
    """Vertical load on each mount of a rigid base on equal mounts (N).

    Equal stiffness under a rigid base makes each mount's deflection, and so its
    load, linear in its position: P_i = a + b·(x_i − x̄) + c·(y_i − ȳ). Vertical
    equilibrium gives a = W/n; moment equilibrium about the mount centroid gives
    [S_xx S_xy; S_xy S_yy]·[b; c] = W·[e_x; e_y] with e the cg offset from the
    centroid and S the second moments of the positions about it. For three mounts
    this is the statically determinate solution.
    """
    pts = np.asarray(positions, dtype=float)
    n = len(pts)
    xm, ym = pts[:, 0].mean(), pts[:, 1].mean()
    dx, dy = pts[:, 0] - xm, pts[:, 1] - ym
    sxx, syy, sxy = second_moments(pts)
    det = sxx * syy - sxy**2
    if n < 3:
        raise ValueError(f"{'one mount' if n == 1 else 'two mounts'} cannot carry an"
                         " off-centre load (no resistance to tilting); give at least three"
                         " positions, or leave out mount_positions for equal sharing")
    if det <= 1e-12 * (sxx + syy) ** 2:
        raise ValueError("the mount positions are collinear: they cannot carry a moment")
    ex, ey = cg[0] - xm, cg[1] - ym
    b = weight * (ex * syy - ey * sxy) / det
    c = weight * (ey * sxx - ex * sxy) / det
    return tuple(float(v) for v in weight / n + b * dx + c * dy)


def second_moments(pts: np.ndarray) -> tuple[float, float, float]:
    """S_xx, S_yy, S_xy of the positions about their centroid (round-off in S_xy cleared)."""
    dx, dy = pts[:, 0] - pts[:, 0].mean(), pts[:, 1] - pts[:, 1].mean()
    sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
    if abs(sxy) < 1e-12 * math.sqrt(sxx * syy):
        sxy = 0.0  # symmetric layouts: keep the printed substitution free of 1e-17 noise
    return sxx, syy, sxy


def loads(inputs: Mapping[str, Any]) -> tuple[float, ...]:
    """Each mount's load: by statics on a rigid base where positions are given, else equal."""
    w = inputs["mass"] * STANDARD_GRAVITY
    if "mount_positions" in inputs:
        return mount_loads(w, inputs["mount_positions"], (inputs["cg_x"], inputs["cg_y"]))
    return (w / inputs["mounts"],) * inputs["mounts"]


def lifted_mounts(mass: float, mount_loads_: Sequence[float]) -> list[tuple[int, float]]:
    """(mount number, load) of each mount not in compression; a load within round-off of
    zero (centre of gravity on the edge of the region the mounts carry) is 0."""
    zero = 1e-9 * mass * STANDARD_GRAVITY
    return [(i + 1, p if abs(p) > zero else 0.0) for i, p in enumerate(mount_loads_)
            if p <= zero]


@dataclass(frozen=True, slots=True, kw_only=True)
class MountRow:
    """One mount under its own load: share of the weight, static deflection, natural
    frequency, and the stiffness at which it alone would deflect the required amount."""

    load: float
    share: float
    deflection: float
    natural_frequency: float
    stiffness_for_target: float


def mount_rows(mount_loads_: Sequence[float], km: float, fn_req: float,
               equal: bool, ratio: float = 1.0) -> tuple[MountRow, ...]:
    """The mount table's rows: one for all mounts when they share equally. ``km`` is the
    static stiffness; frequencies use ratio·km, and the stiffness for target is static."""
    g = STANDARD_GRAVITY
    w = sum(mount_loads_)
    wr2 = (2 * math.pi * fn_req) ** 2
    chosen = mount_loads_[:1] if equal else mount_loads_
    rows = []
    for load in chosen:
        d = load / km
        rows.append(MountRow(load=load,
                             share=100.0 / len(mount_loads_) if equal else 100.0 * load / w,
                             deflection=d,
                             natural_frequency=frequency_from_deflection(d / ratio),
                             stiffness_for_target=load * wr2 / g / ratio))
    return tuple(rows)
