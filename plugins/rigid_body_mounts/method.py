"""A rigid body on resilient mounts in six degrees of freedom: the body and mount values,
the 6 × 6 mass and stiffness matrices about the CG, the modes and the static equilibrium.

Conventions (every function below follows them):

- Datum frame chosen by the user: x and y horizontal, z vertical upward, right-handed.
- Coordinates q = [x, y, z, θx, θy, θz] of the body at its centre of gravity (CG); small
  rotations about axes through the CG, so a body point at offset r from the CG moves
  u = t + θ × r = T·q with T = [I, −skew(r)].
- Products of inertia I_xy = ∫(x − x_G)(y − y_G) dm; the inertia tensor carries −I_xy.
- Mounts are point springs (no rotational stiffness) with principal stiffnesses along three
  orthogonal axes, by default the datum axes; gravity (overturning) stiffness is left out of
  the frequencies, as in the handbook model, and used only for the tip-over check.
- Signs of forces (statics.py, response.py): static ``mount_forces`` are exerted BY the
  mounts ON the equipment; ``loads`` are compression-positive loads IN the mounts; dynamic
  forces are those the mounts pass TO the support (their magnitudes are reported).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import linalg

__all__ = [
    "COORDINATES",
    "DEFAULT_DAMPING_RATIO",
    "SQRT2",
    "Body",
    "Modes",
    "Mount",
    "MountingError",
    "RigidBodyModel",
    "assemble",
    "box_inertia",
    "frequency_limit",
    "inertia_tensor",
    "natural_modes",
]

COORDINATES = ("x", "y", "z", "rx", "ry", "rz")
_COORDINATE_WORDS = (
    "translate along x", "translate along y", "translate along z",
    "rotate about x", "rotate about y", "rotate about z",
)
#: The frequency ratio above which isolation begins (Thomson & Dahleh §3.5).
SQRT2 = math.sqrt(2.0)
#: Structural damping ratio of each mount when the job gives none (common practice for
#: steel springs with a damping element; the package states it as an assumption).
DEFAULT_DAMPING_RATIO = 0.05
# Eigenvalues closer than this (relative) are one repeated frequency: their modes are then
# any combination, and the basis is turned to the coordinate axes (see _align_repeated).
_REPEATED = 1e-8
# A stiffness eigenvalue below this share of the largest is a free motion (a mechanism).
_SINGULAR = 1e-9


class MountingError(ValueError):
    """Physical input that the job validator cannot judge: the mounts or the body are
    impossible (a free motion, an inertia no body can have, a layout that tips over).

    ``field`` names the input to blame ("mounts", "inertia", ...) and ``row`` the 1-based
    mount row when one row is at fault, so the wiring can turn it into a field error.
    """

    def __init__(self, message: str, *, field: str = "", row: int | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.field = field
        self.row = row


# ------------------------------------------------------------------ inputs


@dataclass(frozen=True, slots=True, kw_only=True)
class Body:
    """The rigid equipment: mass (kg), CG in the datum frame (m) and inertia about the CG.

    ``inertia`` is (I_xx, I_yy, I_zz, I_xy, I_xz, I_yz) in kg·m², products defined as
    I_xy = ∫(x − x_G)(y − y_G) dm. ``inertia_estimated`` marks a uniform-box estimate.
    """

    mass: float
    cg: tuple[float, float, float]
    inertia: tuple[float, float, float, float, float, float]
    inertia_estimated: bool = False

    def tensor(self) -> np.ndarray:
        """The inertia tensor about the CG (:func:`inertia_tensor`)."""
        return inertia_tensor(*self.inertia)


@dataclass(frozen=True, slots=True, kw_only=True)
class Mount:
    """One mount: its elastic centre (m, datum frame) and principal stiffnesses (N/m).

    ``k_x``, ``k_y``, ``k_z`` act along the datum axes, or along ``axes`` when given: three
    orthonormal unit vectors (p, q, r) in datum components, for an inclined mount.
    """

    x: float
    y: float
    z: float
    k_x: float
    k_y: float
    k_z: float
    axes: tuple[tuple[float, float, float], ...] | None = None
    model: str = ""
    rated_load: float | None = None

    def stiffness_matrix(self) -> np.ndarray:
        """K_i = Aᵀ·diag(k_p, k_q, k_r)·A, A's rows the mount's axes (a rotated tensor)."""
        k = np.diag([self.k_x, self.k_y, self.k_z])
        if self.axes is None:
            return k
        a = np.asarray(self.axes, dtype=float)
        return a.T @ k @ a

    def axis_r(self) -> np.ndarray:
        """The mount's own compression axis (the datum z axis unless ``axes`` is given)."""
        if self.axes is None:
            return np.array([0.0, 0.0, 1.0])
        return np.asarray(self.axes[2], dtype=float)


def inertia_tensor(ixx: float, iyy: float, izz: float, ixy: float = 0.0, ixz: float = 0.0,
                   iyz: float = 0.0) -> np.ndarray:
    """J = [[I_xx, −I_xy, −I_xz], [−I_xy, I_yy, −I_yz], [−I_xz, −I_yz, I_zz]].

    With I_xy = ∫xy dm the off-diagonal terms of the tensor are negative (Meriam & Kraige,
    Engineering Mechanics: Dynamics, §7/7; Goldstein, Classical Mechanics, §5.3).
    """
    return np.array([[ixx, -ixy, -ixz], [-ixy, iyy, -iyz], [-ixz, -iyz, izz]], dtype=float)


def box_inertia(mass: float, length: float, width: float,
                height: float) -> tuple[float, float, float]:
    """Uniform rectangular box about its own centre: I_xx = m(b² + h²)/12,
    I_yy = m(a² + h²)/12, I_zz = m(a² + b²)/12, with a the length along x, b the width
    along y and h the height along z (tables of solid bodies, e.g. Meriam & Kraige,
    Dynamics, Appendix D; an estimate only: real equipment is not uniform)."""
    return (mass * (width**2 + height**2) / 12.0, mass * (length**2 + height**2) / 12.0,
            mass * (length**2 + width**2) / 12.0)


# ------------------------------------------------------------------ assembly


@dataclass(frozen=True, slots=True, kw_only=True)
class RigidBodyModel:
    """The assembled 6 × 6 matrices about the CG and, per mount, what links it to them.

    ``offsets[i]`` = mount position − CG; ``transforms[i]`` = T_i = [I, −skew(r_i)] (3 × 6)
    maps q to the mount point's displacement; ``mount_stiffness[i]`` is K_i (3 × 3).
    """

    body: Body
    mounts: tuple[Mount, ...]
    mass_matrix: np.ndarray
    stiffness_matrix: np.ndarray
    offsets: np.ndarray
    transforms: np.ndarray
    mount_stiffness: np.ndarray


def _skew(r: np.ndarray) -> np.ndarray:
    """skew(r)·v = r × v, stacked over the leading axes."""
    z = np.zeros(r.shape[:-1])
    return np.stack([np.stack([z, -r[..., 2], r[..., 1]], -1),
                     np.stack([r[..., 2], z, -r[..., 0]], -1),
                     np.stack([-r[..., 1], r[..., 0], z], -1)], -2)


def _point_transform(offsets: np.ndarray) -> np.ndarray:
    """T = [I, −skew(r)]: u = t + θ × r = t − r × θ (small rotations)."""
    eye = np.broadcast_to(np.eye(3), offsets.shape[:-1] + (3, 3))
    return np.concatenate([eye, -_skew(offsets)], axis=-1)


def assemble(body: Body, mounts: Sequence[Mount]) -> RigidBodyModel:
    """M = diag(m, m, m, J) and K = Σ T_iᵀ·K_i·T_i about the CG.

    The stiffness is the sum of each point spring's potential energy ½(T_i q)ᵀK_i(T_i q)
    (Harris' Shock and Vibration Handbook, Ch. 3, equations of motion of a resiliently
    supported rigid body, Eqs. 3.31, there written out term by term for springs along the
    axes). Raises :class:`MountingError` for an inertia no body can have and for mounts that
    leave a free motion.
    """
    mounts = tuple(mounts)
    if not mounts:
        raise MountingError("at least one mount is needed", field="mounts")
    _check_inertia(body)
    for i, m in enumerate(mounts, start=1):
        if m.axes is not None:
            a = np.asarray(m.axes, dtype=float)
            if a.shape != (3, 3) or not np.allclose(a @ a.T, np.eye(3), atol=1e-6):
                raise MountingError("the mount's axes must be three orthogonal unit vectors",
                                    field="mounts", row=i)
        if min(m.k_x, m.k_y, m.k_z) < 0.0:
            raise MountingError("a mount stiffness is negative", field="mounts", row=i)
    mass = np.zeros((6, 6))
    mass[:3, :3] = body.mass * np.eye(3)
    mass[3:, 3:] = body.tensor()
    positions = np.array([[m.x, m.y, m.z] for m in mounts], dtype=float)
    offsets = positions - np.asarray(body.cg, dtype=float)
    transforms = _point_transform(offsets)
    k_mounts = np.array([m.stiffness_matrix() for m in mounts])
    stiffness = np.einsum("nai,nab,nbj->ij", transforms, k_mounts, transforms)
    stiffness = 0.5 * (stiffness + stiffness.T)
    model = RigidBodyModel(body=body, mounts=mounts, mass_matrix=mass,
                           stiffness_matrix=stiffness, offsets=offsets,
                           transforms=transforms, mount_stiffness=k_mounts)
    for arr in (mass, stiffness, offsets, transforms, k_mounts):
        arr.setflags(write=False)
    _check_restrained(model)
    return model


def _check_inertia(body: Body) -> None:
    """A real body's principal moments are positive and obey I₁ + I₂ ≥ I₃ (each is a sum
    of two of the three second moments ∫x², ∫y², ∫z² dm)."""
    if not body.mass > 0.0:
        raise MountingError("the mass must be positive", field="mass")
    principal = np.linalg.eigvalsh(body.tensor())
    if principal[0] <= 0.0:
        raise MountingError("the inertia tensor is not positive definite: the products of"
                            " inertia are too large for the moments of inertia",
                            field="inertia")
    if principal[0] + principal[1] < principal[2] * (1.0 - 1e-9):
        raise MountingError(
            f"no body has these moments of inertia: the principal moments {principal[0]:.4g},"
            f" {principal[1]:.4g} and {principal[2]:.4g} kg·m² break I₁ + I₂ ≥ I₃",
            field="inertia")


def _check_restrained(model: RigidBodyModel) -> None:
    # Scaled by the mass so translations and rotations compare: the eigenvalues are ω².
    lam, vec = linalg.eigh(model.stiffness_matrix, model.mass_matrix)
    if lam[-1] <= 0.0 or lam[0] <= _SINGULAR * lam[-1]:
        free = vec[:, 0]
        share = free * (model.mass_matrix @ free)
        raise MountingError(
            "the mounts leave the equipment free to"
            f" {_COORDINATE_WORDS[int(np.argmax(share))]} (nothing resists that motion):"
            " check that the mounts do not all lie on one line and that they have"
            " stiffness in every direction", field="mounts")


# ------------------------------------------------------------------ modes


@dataclass(frozen=True, slots=True, kw_only=True)
class Modes:
    """The six rigid-body modes, ascending in frequency.

    ``shapes`` columns are mass-normalised (ΦᵀMΦ = I), signed so that the coordinate with the
    largest kinetic-energy share is positive; ``energy_fractions[j, l]`` is coordinate j's
    share of mode l's kinetic energy (columns sum to 1).
    """

    frequencies: np.ndarray
    shapes: np.ndarray
    energy_fractions: np.ndarray
    dominant_share: np.ndarray
    dominant_coordinate: tuple[str, ...]


def natural_modes(model: RigidBodyModel) -> Modes:
    """Undamped modes: K·φ = ω²·M·φ, f = ω/2π (Harris Ch. 3; Thomson & Dahleh Ch. 6).

    Kinetic-energy shares: E_jl = φ_jl·(M·φ_l)_j / (φ_lᵀ·M·φ_l), the modal kinetic-energy
    distribution used to judge decoupling (Jeong & Singh, J. Sound Vib. 234(1), 2000); with
    products of inertia one share can be slightly negative. For a repeated frequency the
    modes are any combination: the basis is turned to lie as close to the coordinate axes
    as it can, so a symmetric layout reports the decoupled modes it really has.
    """
    k, m = model.stiffness_matrix, model.mass_matrix
    lam, phi = linalg.eigh(k, m)
    phi = _align_repeated(lam, phi, m)
    energy = phi * (m @ phi) / np.einsum("il,ij,jl->l", phi, m, phi)
    dominant = np.argmax(energy, axis=0)
    signs = np.where(phi[dominant, np.arange(6)] < 0.0, -1.0, 1.0)
    phi = phi * signs
    freqs = np.sqrt(np.clip(lam, 0.0, None)) / (2.0 * math.pi)
    share = energy[dominant, np.arange(6)]
    for arr in (freqs, phi, energy, share):
        arr.setflags(write=False)
    return Modes(frequencies=freqs, shapes=phi, energy_fractions=energy,
                 dominant_share=share,
                 dominant_coordinate=tuple(COORDINATES[j] for j in dominant))


def _align_repeated(lam: np.ndarray, phi: np.ndarray, m: np.ndarray) -> np.ndarray:
    """Within each cluster of equal eigenvalues, pick M-orthonormal basis vectors one at a
    time, each the M-projection of the coordinate axis that lies most inside what is left
    of the cluster's space (Gram-Schmidt in the M inner product)."""
    phi = phi.copy()
    start = 0
    while start < len(lam):
        end = start + 1
        while end < len(lam) and lam[end] - lam[end - 1] <= _REPEATED * abs(lam[end]):
            end += 1
        if end - start > 1:
            basis = phi[:, start:end]
            chosen = []
            for _ in range(end - start):
                coeff = basis.T @ m  # column j: the cluster components of e_j's projection
                weight = np.sum(coeff**2, axis=0) / np.diag(m)
                j = int(np.argmax(weight))
                a = coeff[:, j] / np.linalg.norm(coeff[:, j])
                chosen.append((j, basis @ a))
                q, _ = np.linalg.qr(np.column_stack([a, np.eye(len(a))]))
                basis = basis @ q[:, 1:]
            chosen.sort(key=lambda c: c[0])
            phi[:, start:end] = np.column_stack([v for _, v in chosen])
        start = end
    return phi


def frequency_limit(running_speed: float, min_ratio: float = SQRT2) -> float:
    """The highest natural frequency that still isolates: f ≤ f_run / r_min, with r_min = √2
    by default because transmissibility falls below 1 only above r = √2 (Thomson & Dahleh,
    §3.5)."""
    return running_speed / min_ratio
