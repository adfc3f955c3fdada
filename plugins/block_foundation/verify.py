"""The block foundation by a second, independent route: the same lumped half-space model
assembled from the inputs as a six-degree-of-freedom rigid body and solved numerically.

Nothing here comes from the method's modules: the equivalent radii, the inertia tensor (by
the tensor form of the parallel-axis theorem), the dashpots (from the tabulated damping
ratios, c = 2·D·√(k·I)), the 6 × 6 mass, stiffness and damping matrices, the natural
frequencies (generalised symmetric eigenproblem, scipy.linalg.eigh) and the steady state
(complex linear solve of (K − ω²M + iωC)·q = F) are all its own. The vertical natural
frequency is taken from the mass-ratio form of Lysmer's analog, a₀ = ω·r/Vs = 1/√B_z.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from scipy import linalg, optimize

_ISO_GRADES = (0.4, 1.0, 2.5, 6.3, 16.0, 40.0, 100.0, 250.0, 630.0, 1600.0, 4000.0)


@dataclass(frozen=True, slots=True, kw_only=True)
class SecondMethod:
    """Results by the second method, keyed like the method's results where they overlap."""

    values: dict[str, float]
    frequencies: tuple[float, ...]
    mode_labels: tuple[str, ...]


def _skew(v: np.ndarray) -> np.ndarray:
    return np.array([[0.0, -v[2], v[1]], [v[2], 0.0, -v[0]], [-v[1], v[0], 0.0]])


def _shift(inertia: np.ndarray, mass: float, d: np.ndarray) -> np.ndarray:
    """Tensor parallel-axis theorem: J_O = J_G + m·(|d|²·1 − d·dᵀ)."""
    return inertia + mass * (float(d @ d) * np.eye(3) - np.outer(d, d))


def _point_map(p: np.ndarray) -> np.ndarray:
    """Displacement of a point at p from the centre of gravity: u = t + θ × p = [1, −[p]×]·q."""
    return np.hstack([np.eye(3), -_skew(p)])


def _unbalance(running_speed: float, unbalance: float | None, balance_grade: str | None,
               rotor_mass: float | None, force_amplitude: float | None) -> float:
    w = 2.0 * math.pi * running_speed
    if force_amplitude is not None:
        return force_amplitude
    if unbalance is None:
        m = re.fullmatch(r"\s*[Gg]\s*([0-9.]+)\s*", str(balance_grade))
        if m is None or float(m.group(1)) not in _ISO_GRADES or rotor_mass is None:
            raise ValueError(f"balance grade {balance_grade!r} with rotor mass {rotor_mass!r}")
        unbalance = rotor_mass * float(m.group(1)) / 1000.0 / w  # e = G/ω, ISO 21940-11
    return unbalance * w * w


def second_method(
    *, block_height: float, concrete_density: float, machine_mass: float,
    machine_cg_height: float, poisson_ratio: float, soil_density: float, running_speed: float,
    block_length: float | None = None, block_width: float | None = None,
    block_diameter: float | None = None, shear_modulus: float | None = None,
    shear_wave_velocity: float | None = None, machine_cg_x: float = 0.0,
    machine_cg_y: float = 0.0, machine_inertia_x: float = 0.0, machine_inertia_y: float = 0.0,
    machine_inertia_z: float = 0.0, unbalance: float | None = None,
    balance_grade: str | None = None, rotor_mass: float | None = None,
    force_amplitude: float | None = None, force_height: float | None = None,
    shaft_axis: str = "y", springs_below_cg: bool = True, products_of_inertia: bool = False,
) -> SecondMethod:
    """The block foundation as a 6-DOF rigid body on base springs and dashpots.

    By default it is the method's stated model (springs directly below the combined centre
    of gravity, principal axes parallel to the block's). ``springs_below_cg=False`` puts
    the springs at the centre of the base and ``products_of_inertia=True`` keeps the full
    inertia tensor: together they show what the eccentricity assumption leaves out.
    """
    nu, rho = poisson_ratio, soil_density
    g = shear_modulus if shear_modulus is not None else rho * shear_wave_velocity**2
    vs = math.sqrt(g / rho)
    hz = block_height
    if block_diameter is None:
        lx, ly = float(block_length), float(block_width)  # type: ignore[arg-type]
        area = lx * ly
        mb = concrete_density * area * hz
        jb = mb / 12.0 * np.diag([ly**2 + hz**2, lx**2 + hz**2, lx**2 + ly**2])
        # equivalent circles: equal area, equal second moment, equal polar moment
        r_t = math.sqrt(area / math.pi)
        r_rx = (4.0 * (lx * ly**3 / 12.0) / math.pi) ** 0.25  # pi r^4 / 4 = I_area about x
        r_ry = (4.0 * (ly * lx**3 / 12.0) / math.pi) ** 0.25
        r_tz = (2.0 * (lx * ly * (lx**2 + ly**2) / 12.0) / math.pi) ** 0.25  # pi r^4 / 2 = J
    else:
        lx = ly = block_diameter
        r_t = r_rx = r_ry = r_tz = block_diameter / 2.0
        area = math.pi * r_t**2
        mb = concrete_density * area * hz
        # solid cylinder: about a diameter through its centroid, and about its axis
        jb = mb * np.diag([r_t**2 / 4.0 + hz**2 / 12.0, r_t**2 / 4.0 + hz**2 / 12.0,
                           r_t**2 / 2.0])

    # mass and inertia tensor about the combined centre of gravity
    jm = np.diag([machine_inertia_x, machine_inertia_y, machine_inertia_z])
    pb = np.array([0.0, 0.0, hz / 2.0])
    pm = np.array([machine_cg_x, machine_cg_y, machine_cg_height])
    m = mb + machine_mass
    cg = (mb * pb + machine_mass * pm) / m
    j = _shift(jb, mb, pb - cg) + _shift(jm, machine_mass, pm - cg)
    if not products_of_inertia:
        j = np.diag(np.diag(j))

    # springs, and dashpots from the mass ratios and damping ratios of the summary table
    spring_at = np.array([0.0, 0.0, 0.0]) if not springs_below_cg else np.array(
        [cg[0], cg[1], 0.0])
    arm = spring_at - cg
    base_j = _shift(j, m, arm)  # about axes through the spring point in the base
    k_z = 4.0 * g * r_t / (1.0 - nu)
    b_z = (1.0 - nu) * m / (4.0 * rho * r_t**3)
    k_h = 32.0 * (1.0 - nu) * g * r_t / (7.0 - 8.0 * nu)
    b_h = (7.0 - 8.0 * nu) * m / (32.0 * (1.0 - nu) * rho * r_t**3)
    ks, cs = [k_h, k_h, k_z], [0.0, 0.0, 0.0]
    cs[0] = cs[1] = 2.0 * (0.2875 / math.sqrt(b_h)) * math.sqrt(k_h * m)
    cs[2] = 2.0 * (0.425 / math.sqrt(b_z)) * math.sqrt(k_z * m)
    kr, cr = [0.0, 0.0, 0.0], [0.0, 0.0, 0.0]
    for axis, r in ((0, r_rx), (1, r_ry)):
        kr[axis] = 8.0 * g * r**3 / (3.0 * (1.0 - nu))
        b = 3.0 * (1.0 - nu) * base_j[axis, axis] / (8.0 * rho * r**5)
        cr[axis] = 2.0 * (0.15 / ((1.0 + b) * math.sqrt(b))) * math.sqrt(kr[axis]
                                                                         * base_j[axis, axis])
    kr[2] = 16.0 * g * r_tz**3 / 3.0
    b_t = j[2, 2] / (rho * r_tz**5)
    cr[2] = 2.0 * (0.5 / (1.0 + 2.0 * b_t)) * math.sqrt(kr[2] * j[2, 2])

    t = _point_map(arm)
    kk = t.T @ np.diag(ks) @ t
    cc = t.T @ np.diag(cs) @ t
    kk[3:, 3:] += np.diag(kr)
    cc[3:, 3:] += np.diag(cr)
    mm = np.zeros((6, 6))
    mm[:3, :3] = m * np.eye(3)
    mm[3:, 3:] = j

    # natural frequencies, each mode given to the motion that holds most of its kinetic
    # energy; an assignment (two modes per sliding-rocking plane) stays right when a square
    # base makes the two planes' modes coincide and eigh mixes them
    lam, phi = linalg.eigh(kk, mm)
    freqs = np.sqrt(lam) / (2.0 * math.pi)
    share = phi * (mm @ phi)  # share[dof, mode]; each column sums to 1
    groups = {"x-plane": (0, 4), "y-plane": (1, 3), "z": (2,), "rz": (5,)}
    slots = ["x-plane", "x-plane", "y-plane", "y-plane", "z", "rz"]
    weight = np.array([[share[list(groups[g]), i].sum() for g in slots] for i in range(6)])
    rows, cols = optimize.linear_sum_assignment(-weight)
    labels = tuple(slots[c] for _, c in sorted(zip(rows, cols, strict=True)))

    # steady state under the rotating force: horizontal component perpendicular to the shaft,
    # vertical component a quarter-turn behind it
    w = 2.0 * math.pi * running_speed
    f0 = _unbalance(running_speed, unbalance, balance_grade, rotor_mass, force_amplitude)
    fh = machine_cg_height if force_height is None else force_height
    h_dir = 0 if shaft_axis == "y" else 1
    force = np.zeros(3, dtype=complex)
    force[h_dir], force[2] = f0, -1j * f0
    p_force = np.array([machine_cg_x, machine_cg_y, fh]) - cg
    q = np.linalg.solve(kk - w * w * mm + 1j * w * cc, _point_map(p_force).T @ force)
    top = _point_map(np.array([0.0, 0.0, hz - cg[2]])) @ q
    at_force = _point_map(np.array([0.0, 0.0, fh - cg[2]])) @ q

    def mode(label: str) -> list[float]:
        return sorted(float(f) for f, lab in zip(freqs, labels, strict=True) if lab == label)

    coupled = mode("x-plane" if h_dir == 0 else "y-plane")
    values = {
        "total_mass": m,
        "static_bearing_pressure": m * 9.80665 / area,
        "vertical_stiffness": k_z,
        "vertical_damping_ratio": 0.425 / math.sqrt(b_z),
        # the mass-ratio form of Lysmer's analog: a0 = w r / Vs = 1 / sqrt(B_z)
        "vertical_natural_frequency": vs / (r_t * math.sqrt(b_z)) / (2.0 * math.pi),
        "vertical_amplitude": float(abs(q[2])),
        "horizontal_stiffness": k_h,
        "rocking_stiffness": kr[1 - h_dir],
        "horizontal_amplitude": float(abs(top[h_dir])),
        "horizontal_amplitude_at_force": float(abs(at_force[h_dir])),
        "mass_ratio": mb / machine_mass,
        "cg_eccentricity": max(abs(cg[0]) / lx, abs(cg[1]) / ly),
        "coupled_frequency_1": coupled[0],
        "coupled_frequency_2": coupled[1],
        "torsional_natural_frequency": mode("rz")[0],
        "vertical_natural_frequency_eigen": mode("z")[0],
    }
    return SecondMethod(values=values, frequencies=tuple(float(f) for f in freqs),
                        mode_labels=labels)

