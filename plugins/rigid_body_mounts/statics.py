"""The mounted body at rest under its weight: the displacement at the centre of gravity,
each mount's load and deflection, and the check that the weight cannot tip it over.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import linalg

from reportgen.units import STANDARD_GRAVITY

from .method import MountingError, RigidBodyModel

__all__ = ["StaticResult", "static_equilibrium"]


@dataclass(frozen=True, slots=True, kw_only=True)
class StaticResult:
    """The body at rest under its weight.

    ``displacement``: q at the CG (m, rad). ``mount_forces``: force of each mount on the
    equipment (N, datum axes). ``loads``: vertical load in each mount, compression positive
    (= the upward force on the equipment; negative means tension). ``axial_loads``: the same
    along each mount's own r axis. ``deflections``: vertical deflection of each mount point,
    positive downward. ``stability_factor``: the share of the mounts' restoring stiffness
    left, in the weakest direction, after the weight's overturning effect (1: none lost;
    ≤ 0: the body tips).
    """

    displacement: np.ndarray
    mount_forces: np.ndarray
    loads: np.ndarray
    axial_loads: np.ndarray
    deflections: np.ndarray
    tilt_x: float
    tilt_y: float
    weight: float
    stability_factor: float

    @property
    def in_tension(self) -> tuple[bool, ...]:
        return tuple(bool(p < 0.0) for p in self.loads)

    @property
    def tilt(self) -> float:
        """The base's tilt from level, √(θx² + θy²) (rad): for small rotations the angle
        between the body's z axis and the vertical, whatever the direction."""
        return math.hypot(self.tilt_x, self.tilt_y)


def static_equilibrium(model: RigidBodyModel, gravity: float = STANDARD_GRAVITY) -> StaticResult:
    """K·u = [0, 0, −m·g, 0, 0, 0] (the weight acts at the CG, so it has no moment about it);
    each mount's force on the equipment f_i = −K_i·T_i·u.

    A mount in tension is a result, not an error. Raises :class:`MountingError` when the
    weight would tip the body over: the overturning stiffness of the mount preloads,
    G_i = (f_i·r_i)·I − ½(f_i r_iᵀ + r_i f_iᵀ) on the rotations (the second-order work of a
    constant force at a rotating point, derived from the potential energy), added to K must
    leave it positive definite (Lagrange–Dirichlet).
    """
    weight = model.body.mass * gravity
    load = np.array([0.0, 0.0, -weight, 0.0, 0.0, 0.0])
    u = linalg.solve(model.stiffness_matrix, load, assume_a="pos")
    point = model.transforms @ u  # (N, 3) displacement of each mount point
    forces = -np.einsum("nab,nb->na", model.mount_stiffness, point)
    axes_r = np.array([m.axis_r() for m in model.mounts])
    factor = _stability_factor(model, forces)
    if factor <= 0.0:
        raise MountingError(
            "the equipment would tip over on these mounts: the weight's overturning moment"
            " about the mounts exceeds their restoring stiffness (centre of gravity too high"
            " for the mount spacing and vertical stiffness); spread the mounts, stiffen them"
            " or lower the centre of gravity", field="mounts")
    return StaticResult(
        displacement=u, mount_forces=forces, loads=forces[:, 2].copy(),
        axial_loads=np.einsum("na,na->n", forces, axes_r), deflections=-point[:, 2],
        tilt_x=float(u[3]), tilt_y=float(u[4]), weight=weight, stability_factor=factor)


def _stability_factor(model: RigidBodyModel, forces: np.ndarray) -> float:
    """Smallest μ of (K + K_g)·φ = μ·K·φ, K_g the preloads' overturning stiffness."""
    r = model.offsets
    fr = np.einsum("na,na->n", forces, r)
    g_rot = (fr.sum() * np.eye(3)
             - 0.5 * (np.einsum("na,nb->ab", forces, r) + np.einsum("na,nb->ab", r, forces)))
    k = model.stiffness_matrix
    k_total = k.copy()
    k_total[3:, 3:] += g_rot
    return float(linalg.eigh(k_total, k, eigvals_only=True)[0])


