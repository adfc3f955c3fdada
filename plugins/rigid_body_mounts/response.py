"""Steady harmonic response of the mounted rigid body and the forces its mounts pass on.

Owns the excitations (a force at a point, a rotating unbalance), the response vectorised
over frequency and the largest magnitude of a harmonic force vector over one cycle.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .method import DEFAULT_DAMPING_RATIO, Modes, MountingError, RigidBodyModel

__all__ = [
    "Excitation",
    "ForcedResponse",
    "cycle_peak",
    "forced_response",
    "harmonic_force",
    "rotating_unbalance",
]

_AXES = {"x": 0, "y": 1, "z": 2}


@dataclass(frozen=True, slots=True, kw_only=True)
class Excitation:
    """A harmonic load at the running frequency, as the complex amplitude it applies.

    ``kind`` "force": amplitude (N) along the unit ``direction``; "unbalance": m·e (kg·m)
    rotating about ``axis`` in the right-handed sense, force m·e·ω². ``point`` is where it
    acts (m, datum frame).
    """

    kind: str
    amplitude: float
    point: tuple[float, float, float]
    direction: tuple[float, float, float] = (0.0, 0.0, 1.0)
    axis: str = "z"

    def force_vector(self, omega: np.ndarray) -> np.ndarray:
        """Complex force amplitude F (…, 3), the load being Re{F·e^{iωt}}."""
        omega = np.asarray(omega, dtype=float)
        if self.kind == "force":
            f = self.amplitude * np.asarray(self.direction, dtype=float).astype(complex)
            return np.broadcast_to(f, omega.shape + (3,)).copy()
        # Rotating about the axis a, from e1 to e2 with (e1, e2, a) right-handed:
        # F(t) = m·e·ω²(cos ωt·e1 + sin ωt·e2) = Re{m·e·ω²(e1 − i·e2)·e^{iωt}}.
        a = _AXES[self.axis]
        e1, e2 = np.eye(3)[(a + 1) % 3], np.eye(3)[(a + 2) % 3]
        return (self.amplitude * omega**2)[..., None] * (e1 - 1j * e2)

    def generalised_load(self, omega: np.ndarray, cg: Sequence[float]) -> np.ndarray:
        """Q = T_Pᵀ·F = [F, r_P × F] about the CG (…, 6)."""
        f = self.force_vector(omega)
        r = np.asarray(self.point, dtype=float) - np.asarray(cg, dtype=float)
        return np.concatenate([f, np.cross(r, f)], axis=-1)


def harmonic_force(amplitude: float, direction: str | Sequence[float],
                   point: Sequence[float]) -> Excitation:
    """A force of the given amplitude along "x", "y", "z" or a vector, acting at ``point``."""
    if isinstance(direction, str):
        if direction not in _AXES:
            raise MountingError(f"the force direction is \"x\", \"y\" or \"z\", not"
                                f" {direction!r}", field="force_direction")
        vec = np.eye(3)[_AXES[direction]]
    else:
        vec = np.asarray(direction, dtype=float)
        if vec.shape != (3,) or not np.linalg.norm(vec) > 0.0:
            raise MountingError("the force direction must be a non-zero vector",
                                field="force_direction")
        vec = vec / np.linalg.norm(vec)
    return Excitation(kind="force", amplitude=float(amplitude),
                      point=tuple(float(c) for c in point),
                      direction=tuple(float(c) for c in vec))


def rotating_unbalance(unbalance: float, point: Sequence[float], axis: str) -> Excitation:
    """A rotor's unbalance m·e (kg·m) at ``point`` spinning about "x", "y" or "z": the force
    m·e·ω² turns with the rotor (Thomson & Dahleh §3.3)."""
    if axis not in _AXES:
        raise MountingError(f"the rotor axis is \"x\", \"y\" or \"z\", not {axis!r}",
                            field="rotor_axis")
    return Excitation(kind="unbalance", amplitude=float(unbalance),
                      point=tuple(float(c) for c in point), axis=axis)


@dataclass(frozen=True, slots=True, kw_only=True)
class ForcedResponse:
    """Steady response over an array of frequencies (leading axis F).

    ``displacement`` (F, 6) complex q at the CG; ``mount_forces`` (F, N, 3) complex force
    each mount passes to the support; ``mount_peaks`` (F, N) the largest magnitude of that
    force vector over one cycle; ``total_force`` (F, 3) its sum over the mounts and
    ``total_peak`` (F,) the largest magnitude of the sum over one cycle.
    """

    frequencies: np.ndarray
    displacement: np.ndarray
    mount_forces: np.ndarray
    mount_peaks: np.ndarray
    total_force: np.ndarray
    total_peak: np.ndarray


def forced_response(model: RigidBodyModel, modes: Modes, excitation: Excitation,
                    frequencies: float | Sequence[float] | np.ndarray,
                    damping_ratio: float = DEFAULT_DAMPING_RATIO) -> ForcedResponse:
    """[(1 + 2iζ)·K − ω²·M]·q = Q, solved by modal superposition, which is exact here
    because structural damping proportional to K keeps the modes uncoupled:
    q = Σ_r φ_r·φ_rᵀ·Q / (ω_r²(1 + 2iζ) − ω²) (Thomson & Dahleh Ch. 6; Harris Ch. 3,
    Eqs. 3.55–3.56). Mount force to the support: (1 + 2iζ)·K_i·T_i·q.
    Vectorised over ``frequencies`` (Hz).
    """
    freqs = np.atleast_1d(np.asarray(frequencies, dtype=float))
    omega = 2.0 * math.pi * freqs
    load = excitation.generalised_load(omega, model.body.cg)  # (F, 6)
    phi = modes.shapes
    lam = (2.0 * math.pi * modes.frequencies) ** 2
    complex_k = 1.0 + 2j * damping_ratio
    modal = (load @ phi) / (lam[None, :] * complex_k - omega[:, None] ** 2)
    q = modal @ phi.T
    # K_i·T_i stacked as one (3N × 6) matrix: one product for every frequency at once
    kt = np.einsum("nab,nbj->naj", model.mount_stiffness, model.transforms)
    n = kt.shape[0]
    forces = (complex_k * (q @ kt.reshape(3 * n, 6).T)).reshape(len(freqs), n, 3)
    total = forces.sum(axis=1)
    return ForcedResponse(frequencies=freqs, displacement=q, mount_forces=forces,
                          mount_peaks=cycle_peak(forces), total_force=total,
                          total_peak=cycle_peak(total))


def cycle_peak(amplitude: np.ndarray) -> np.ndarray:
    """Largest |Re{A·e^{iωt}}| over one cycle for complex vector amplitudes A (last axis).

    |F(t)|² = ½‖A‖² + ½·Re{(A·A)·e^{2iωt}} (A·A without conjugation), so the peak is
    √(½(‖A‖² + |A·A|)): ‖A‖ for a force that keeps its direction, ‖A‖/√2 for one that turns
    in a circle (the semi-major axis of the ellipse the vector traces; e.g. Born & Wolf,
    Principles of Optics, §1.4.2, polarisation ellipse).
    """
    a = np.asarray(amplitude)
    norm2 = np.sum(np.abs(a) ** 2, axis=-1)
    self_dot = np.abs(np.sum(a * a, axis=-1))
    return np.sqrt(0.5 * (norm2 + self_dot))
