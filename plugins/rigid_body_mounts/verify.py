"""The independent second method for rigid_body_mounts: numpy, scipy and the inputs only.

Assembles its own matrices (virtual work mount by mount, the inertia tensor from second
moments), finds the frequencies without an eigen-solver (Sylvester inertia counts and
roots of det(K − λM)), the static loads by solving force and moment equilibrium, and the
response by a real 12 × 12 solve with the cycle peak found by search in time.
It never imports the method's modules: a test parses this file's imports to keep it so.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from scipy import linalg, optimize

__all__ = ["TOLERANCES", "Independent", "SteadyState", "independent_results",
           "peak_over_cycle", "pencil_frequencies", "steady_state", "system_matrices"]

G_N = 9.80665  # standard gravity, m/s² (CGPM 1901): stated again, not imported

#: Agreement the wiring demands between the two routes, per result family:
#: (relative, absolute in SI). Frequencies by bisection and root finding agree to ~1e-12;
#: 1e-9 leaves room for the conditioning of stiff layouts.
TOLERANCES: dict[str, tuple[float, float]] = {
    "natural_frequency": (1e-9, 0.0),
    "mode_dominant_share": (0.0, 1e-7),
    "mount_load": (1e-8, 1e-6),
    "mount_deflection": (1e-8, 1e-12),
    "tilt": (1e-8, 1e-12),
    "transmitted_force": (1e-7, 1e-9),
}


@dataclass(frozen=True, slots=True)
class _Spring:
    offset: np.ndarray     # from the CG, m
    matrix: np.ndarray     # 3 × 3 in datum axes, N/m


def _springs(inputs: Mapping[str, object], cg: np.ndarray) -> list[_Spring]:
    out = []
    for row in inputs["mounts"]:
        if row.get("k_x") is not None:
            k = [float(row["k_x"]), float(row["k_y"]), float(row["k_z"])]
        else:
            k = [float(row["k_horizontal"])] * 2 + [float(row["k_vertical"])]
        axes = row.get("axes")
        directions = np.eye(3) if axes is None else np.asarray(axes, dtype=float)
        # a spring of rate k along the unit n stores ½k(n·u)²: its matrix is k·n·nᵀ
        matrix = sum(ki * np.outer(n, n) for ki, n in zip(k, directions, strict=True))
        pos = np.array([float(row["x"]), float(row["y"]), float(row["z"])])
        out.append(_Spring(offset=pos - cg, matrix=np.asarray(matrix)))
    return out


def _inertia(inputs: Mapping[str, object], mass: float) -> np.ndarray:
    """J = tr(S)·I − S from the second moments S = ∫ρρᵀ dm (Goldstein §5.3): the moments
    give S_xx = (I_yy + I_zz − I_xx)/2 and the products S_xy = I_xy; a uniform box gives
    S = m·diag(a², b², h²)/12."""
    if inputs.get("inertia_xx") is not None:
        ixx, iyy, izz = (float(inputs[f"inertia_{a}"]) for a in ("xx", "yy", "zz"))
        pxy, pxz, pyz = (float(inputs.get(f"inertia_{a}") or 0.0) for a in ("xy", "xz", "yz"))
        s = np.array([[(iyy + izz - ixx) / 2, pxy, pxz],
                      [pxy, (ixx + izz - iyy) / 2, pyz],
                      [pxz, pyz, (ixx + iyy - izz) / 2]])
    else:
        dims = [float(inputs[f"box_{a}"]) for a in ("length", "width", "height")]
        s = mass * np.diag(np.square(dims)) / 12.0
    return np.trace(s) * np.eye(3) - s


def _virtual_displacements(offset: np.ndarray) -> np.ndarray:
    """Columns: the spring point's displacement for a unit value of each coordinate,
    three translations then three small rotations (e_j × r)."""
    cols = [np.eye(3)[j] for j in range(3)] + [np.cross(np.eye(3)[j], offset) for j in range(3)]
    return np.column_stack(cols)


def system_matrices(inputs: Mapping[str, object]) -> tuple[np.ndarray, np.ndarray]:
    """(M, K) about the CG. K_jk is the virtual work of the springs' forces for unit
    coordinate j through the virtual displacements of unit coordinate k (Lagrange)."""
    mass = float(inputs["mass"])
    cg = np.array([float(inputs.get(f"cg_{a}") or 0.0) for a in "xyz"])
    m = np.zeros((6, 6))
    m[0, 0] = m[1, 1] = m[2, 2] = mass
    m[3:, 3:] = _inertia(inputs, mass)
    k = np.zeros((6, 6))
    for spring in _springs(inputs, cg):
        v = _virtual_displacements(spring.offset)
        for j in range(6):
            for i in range(6):
                k[j, i] += v[:, j] @ spring.matrix @ v[:, i]
    return m, k


# ------------------------------------------------------------------ frequencies


def _below(k: np.ndarray, m: np.ndarray, lam: float) -> int:
    """How many eigenvalues of K·φ = λ·M·φ lie below ``lam``: the negative inertia of
    K − lam·M (Sylvester's law of inertia; the Sturm-sequence count of Bathe, Finite
    Element Procedures, §8.2.5), read from the block-diagonal factor of its LDLᵀ."""
    _, d, _ = linalg.ldl(k - lam * m)
    count, i = 0, 0
    while i < 6:
        if i + 1 < 6 and d[i + 1, i] != 0.0:
            count += int(np.sum(np.linalg.eigvalsh(d[i:i + 2, i:i + 2]) < 0.0))
            i += 2
        else:
            count += int(d[i, i] < 0.0)
            i += 1
    return count


def pencil_frequencies(m: np.ndarray, k: np.ndarray) -> np.ndarray:
    """The six frequencies (Hz) of K·φ = ω²·M·φ without an eigen-solver: each λ = ω² is
    bracketed by bisection on the inertia count, then a simple root is polished with
    scipy.optimize.brentq on det(K − λM) (a repeated one by bisection to the end)."""
    upper = float(np.trace(np.linalg.solve(m, k))) * 1.001 + 1e-30  # ≥ the largest λ
    scale = 1.0 / abs(np.linalg.det(m))

    def det(lam: float) -> float:
        return float(np.linalg.det(k - lam * m)) * scale

    lams = []
    for n in range(6):
        lo, hi = 0.0, upper
        while hi - lo > 1e-7 * hi:  # isolate: count(lo) ≤ n < count(hi)
            mid = 0.5 * (lo + hi)
            if _below(k, m, mid) > n:
                hi = mid
            else:
                lo = mid
        multiplicity = _below(k, m, hi) - _below(k, m, lo)
        if multiplicity == 1:
            lam = optimize.brentq(det, lo, hi,
                                  xtol=1e-300, rtol=1e-15, maxiter=400)
        else:
            while hi - lo > 4e-16 * hi:
                mid = 0.5 * (lo + hi)
                if mid in (lo, hi):
                    break
                if _below(k, m, mid) > n:
                    hi = mid
                else:
                    lo = mid
            lam = 0.5 * (lo + hi)
        lams.append(lam)
    return np.sqrt(np.array(lams)) / (2.0 * math.pi)


def _dominant_shares(m: np.ndarray, k: np.ndarray, freqs: np.ndarray) -> list[float | None]:
    """Each simple mode by inverse iteration with np.linalg.solve near its λ, then the
    largest kinetic-energy share φ_j(Mφ)_j/(φᵀMφ); None for a repeated frequency, whose
    modes are not unique."""
    lam = (2.0 * math.pi * freqs) ** 2
    out: list[float | None] = []
    for i, li in enumerate(lam):
        near = [abs(li - lj) <= 1e-8 * li for j, lj in enumerate(lam) if j != i]
        if any(near):
            out.append(None)
            continue
        shift = li * (1.0 - 1e-9)
        x = np.ones(6)
        for _ in range(6):
            x = np.linalg.solve(k - shift * m, m @ x)
            x /= np.linalg.norm(x)
        share = x * (m @ x) / (x @ m @ x)
        out.append(float(np.max(share)))
    return out


# ------------------------------------------------------------------ statics


def _equilibrium(m: np.ndarray, springs: Sequence[_Spring], gravity: float) -> np.ndarray:
    """The CG displacement at which the springs' forces and moments balance the weight:
    Σf_i = (0, 0, m·g) and Σ r_i × f_i = 0, f_i = −K_i(t + θ × r_i) the force on the body,
    solved as a root (scipy.optimize.root, hybrid Powell)."""
    weight = m[0, 0] * gravity
    size = max(1.0, max(float(np.linalg.norm(s.offset)) for s in springs))

    def residual(u: np.ndarray) -> np.ndarray:
        force = np.array([0.0, 0.0, -weight])
        moment = np.zeros(3)
        for s in springs:
            f = -s.matrix @ (u[:3] + np.cross(u[3:], s.offset))
            force += f
            moment += np.cross(s.offset, f)
        return np.concatenate([force / weight, moment / (weight * size)])

    # A linear residual: one Newton step from its Jacobian by differences is exact; the
    # root finder then polishes it.
    jac = np.column_stack([residual(np.eye(6)[j]) - residual(np.zeros(6)) for j in range(6)])
    start = np.linalg.solve(jac, -residual(np.zeros(6)))
    sol = optimize.root(residual, start, method="hybr", tol=1e-15)
    return sol.x


# ------------------------------------------------------------------ response


def _load(inputs: Mapping[str, object], omega: float, cg: np.ndarray,
          kind: str) -> tuple[np.ndarray, np.ndarray]:
    """The load's cos and sin parts F(t) = Fc·cos ωt + Fs·sin ωt as generalised forces
    (force and its moment r × F about the CG)."""
    if kind == "force":
        given = inputs.get("force_direction") or "z"
        if isinstance(given, str):
            direction = np.eye(3)["xyz".index(given)]
        else:  # a vector, for tests beyond the job inputs
            direction = np.asarray(given, dtype=float) / np.linalg.norm(given)
        fc = float(inputs["force_amplitude"]) * direction
        fs = np.zeros(3)
        point = [inputs.get(f"force_{a}") for a in "xyz"]
    else:
        # right-handed spin about the axis: the force points along e1 at t = 0, along e2 a
        # quarter turn later, (e1, e2, axis) right-handed
        spin = str(inputs.get("rotor_axis") or "z")
        e1, e2 = {"x": ("y", "z"), "y": ("z", "x"), "z": ("x", "y")}[spin]
        amp = float(inputs["unbalance"]) * omega**2
        fc = amp * np.eye(3)["xyz".index(e1)]
        fs = amp * np.eye(3)["xyz".index(e2)]
        point = [inputs.get(f"rotor_{a}") for a in "xyz"]
    r = np.array([float(p or 0.0) for p in point]) - cg
    return np.concatenate([fc, np.cross(r, fc)]), np.concatenate([fs, np.cross(r, fs)])


def peak_over_cycle(cos_part: np.ndarray, sin_part: np.ndarray) -> float:
    """max over t of |c·cos ωt + s·sin ωt|, by sampling a cycle and a bounded search."""
    def size(phase: float) -> float:
        return float(np.linalg.norm(cos_part * math.cos(phase) + sin_part * math.sin(phase)))

    phases = np.linspace(0.0, 2.0 * math.pi, 721)
    best = phases[int(np.argmax([size(p) for p in phases]))]
    step = phases[1] - phases[0]
    res = optimize.minimize_scalar(lambda p: -size(p), bounds=(best - step, best + step),
                                   method="bounded", options={"xatol": 1e-12})
    return max(size(best), -float(res.fun))


@dataclass(frozen=True, slots=True, kw_only=True)
class SteadyState:
    """One excitation's steady state: q(t) = a·cos ωt + b·sin ωt at the CG, and each
    mount's force to the support f_i(t) = c_i·cos ωt + s_i·sin ωt (rows in input order)."""

    a: np.ndarray
    b: np.ndarray
    mount_cos: np.ndarray
    mount_sin: np.ndarray

    @property
    def amplitudes(self) -> np.ndarray:
        """|q_j|: each coordinate's amplitude √(a_j² + b_j²)."""
        return np.hypot(self.a, self.b)


def steady_state(inputs: Mapping[str, object], kind: str) -> SteadyState:
    """Structural damping ζ: the mount force is K_i·u + (2ζ/ω)·K_i·u̇ in steady harmonic
    motion; a and b solve the real system
    [[K − ω²M, 2ζK], [−2ζK, K − ω²M]]·[a; b] = [Fc; Fs] (the cos and sin balances).
    ``kind``: "force" or "unbalance"."""
    m, k = system_matrices(inputs)
    zeta = inputs.get("damping_ratio")
    zeta = 0.05 if zeta is None else float(zeta)
    omega = 2.0 * math.pi * float(inputs["running_speed"])
    cg = np.array([float(inputs.get(f"cg_{a}") or 0.0) for a in "xyz"])
    fc, fs = _load(inputs, omega, cg, kind)
    dyn = k - omega**2 * m
    block = np.block([[dyn, 2 * zeta * k], [-2 * zeta * k, dyn]])
    ab = np.linalg.solve(block, np.concatenate([fc, fs]))
    a, b = ab[:6], ab[6:]
    cos_parts, sin_parts = [], []
    for s in _springs(inputs, cg):
        v = _virtual_displacements(s.offset)
        ua, ub = v @ a, v @ b
        # u̇ = ω(−ua·sin + ub·cos): the damping force (2ζ/ω)·K·u̇ adds 2ζK(ub·cos − ua·sin)
        cos_parts.append(s.matrix @ (ua + 2 * zeta * ub))
        sin_parts.append(s.matrix @ (ub - 2 * zeta * ua))
    return SteadyState(a=a, b=b, mount_cos=np.array(cos_parts), mount_sin=np.array(sin_parts))


def _transmitted(inputs: Mapping[str, object], kind: str) -> tuple[np.ndarray, float]:
    st = steady_state(inputs, kind)
    peaks = np.array([peak_over_cycle(c, s) for c, s in zip(st.mount_cos, st.mount_sin,
                                                             strict=True)])
    return peaks, peak_over_cycle(st.mount_cos.sum(axis=0), st.mount_sin.sum(axis=0))


# ------------------------------------------------------------------ the whole


@dataclass(frozen=True, slots=True, kw_only=True)
class Independent:
    """The second route's numbers, keyed like the method's results by :meth:`values`."""

    frequencies: np.ndarray
    dominant_shares: tuple[float | None, ...]
    loads: np.ndarray
    deflections: np.ndarray
    tilt_x: float
    tilt_y: float
    weight: float
    transmitted_force: np.ndarray | None
    total_transmitted_force: float | None

    def values(self) -> dict[str, float]:
        out = {f"natural_frequency_{i}": float(f)
               for i, f in enumerate(self.frequencies, start=1)}
        for i, s in enumerate(self.dominant_shares, start=1):
            if s is not None:
                out[f"mode_{i}_dominant_share"] = s
        out.update({f"mount_load_{i}": float(p) for i, p in enumerate(self.loads, start=1)})
        out.update({f"mount_deflection_{i}": float(d)
                    for i, d in enumerate(self.deflections, start=1)})
        out["tilt_x"], out["tilt_y"] = self.tilt_x, self.tilt_y
        if self.transmitted_force is not None:
            out.update({f"transmitted_force_{i}": float(f)
                        for i, f in enumerate(self.transmitted_force, start=1)})
            out["total_transmitted_force"] = float(self.total_transmitted_force or 0.0)
        return out


def _dynamic(inputs: Mapping[str, object]) -> dict[str, object]:
    """The inputs with every mount rate times dynamic_stiffness_ratio (k_dyn/k_st)."""
    ratio = float(inputs.get("dynamic_stiffness_ratio") or 1.0)  # type: ignore[arg-type]
    keys = ("k_vertical", "k_horizontal", "k_x", "k_y", "k_z")
    out = dict(inputs)
    out["mounts"] = tuple({k: (float(v) * ratio if k in keys and v is not None else v)
                           for k, v in row.items()} for row in inputs["mounts"])
    return out


def independent_results(inputs: Mapping[str, object],
                        gravity: float = G_N) -> Independent:
    """All the second route's numbers from the calc's SI inputs (``mounts`` as row
    mappings with x, y, z and k_x/k_y/k_z or k_vertical/k_horizontal, optional axes)."""
    # the modes and the response see the dynamic stiffness; the statics the static rates
    vibrating = _dynamic(inputs)
    m, k = system_matrices(vibrating)
    cg = np.array([float(inputs.get(f"cg_{a}") or 0.0) for a in "xyz"])
    springs = _springs(inputs, cg)
    freqs = pencil_frequencies(m, k)
    u = _equilibrium(m, springs, gravity)
    loads, deflections = [], []
    for s in springs:
        point = u[:3] + np.cross(u[3:], s.offset)
        loads.append(float(-(s.matrix @ point)[2]))
        deflections.append(float(-point[2]))
    kinds = [kind for kind, key in (("force", "force_amplitude"), ("unbalance", "unbalance"))
             if inputs.get(key) is not None]
    per_mount = total = None
    if kinds:
        parts = [_transmitted(vibrating, kind) for kind in kinds]
        per_mount = np.sum([p[0] for p in parts], axis=0)
        total = float(sum(p[1] for p in parts))
    return Independent(frequencies=freqs, dominant_shares=tuple(_dominant_shares(m, k, freqs)),
                       loads=np.array(loads), deflections=np.array(deflections),
                       tilt_x=float(u[3]), tilt_y=float(u[4]), weight=m[0, 0] * gravity,
                       transmitted_force=per_mount, total_transmitted_force=total)
