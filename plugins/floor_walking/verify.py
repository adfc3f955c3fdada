"""floor_walking second method: finite-element beams and the bay as a grillage, and the modal
oscillator's response by scipy.signal, from the inputs alone (never the method modules).

Euler–Bernoulli elements with Hermite cubic shape functions and consistent mass (J.S.
Przemieniecki, Theory of Matrix Structural Analysis, 1968, Ch. 5 and 11; R.D. Cook et al.,
Concepts and Applications of Finite Element Analysis, 4th ed., 2002, §2.x and §11.3).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import integrate, linalg, signal

from reportgen.units import STANDARD_GRAVITY

__all__ = [
    "SUPPORTS",
    "BayCheck",
    "bay_check",
    "beam_frequencies",
    "beam_matrices",
    "coupled_bay_frequency",
    "dunkerley",
    "footstep_velocity_rms",
    "member_frequency",
    "point_mass_girder_frequency",
    "resonant_acceleration_ratio",
]

#: Restrained DOFs (deflection w, rotation θ) at the (left, right) end of each support case.
SUPPORTS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "simply_supported": (("w",), ("w",)),
    "cantilever": (("w", "t"), ()),
    "fixed_fixed": (("w", "t"), ("w", "t")),
    "free_free": ((), ()),
    "fixed_pinned": (("w", "t"), ("w",)),
    "pinned_free": (("w",), ()),
}
#: Frequencies below this fraction of the element-scale frequency are rigid-body modes.
_RIGID = 1e-6


def _element(ei: float, m: float, le: float) -> tuple[np.ndarray, np.ndarray]:
    """Hermite cubic bending element: stiffness and consistent mass, DOFs (w1, θ1, w2, θ2)."""
    k = ei / le**3 * np.array([
        [12.0, 6 * le, -12.0, 6 * le],
        [6 * le, 4 * le**2, -6 * le, 2 * le**2],
        [-12.0, -6 * le, 12.0, -6 * le],
        [6 * le, 2 * le**2, -6 * le, 4 * le**2]])
    mm = m * le / 420.0 * np.array([
        [156.0, 22 * le, 54.0, -13 * le],
        [22 * le, 4 * le**2, 13 * le, -3 * le**2],
        [54.0, 13 * le, 156.0, -22 * le],
        [-13 * le, -3 * le**2, -22 * le, 4 * le**2]])
    return k, mm


def beam_matrices(ei: float, mass_per_length: float, length: float,
                  elements: int) -> tuple[np.ndarray, np.ndarray]:
    """Global stiffness and mass of a uniform beam of n equal elements, DOFs (w_i, θ_i)."""
    n = 2 * (elements + 1)
    k_g, m_g = np.zeros((n, n)), np.zeros((n, n))
    k_e, m_e = _element(ei, mass_per_length, length / elements)
    for e in range(elements):
        s = slice(2 * e, 2 * e + 4)
        k_g[s, s] += k_e
        m_g[s, s] += m_e
    return k_g, m_g


def beam_frequencies(ei: float, mass_per_length: float, length: float, supports: str,
                     *, modes: int = 3, elements: int = 40) -> np.ndarray:
    """The first flexible natural frequencies (Hz) of a uniform beam by FE (scipy.linalg.eigh);
    rigid-body modes of free or pinned-free beams are dropped."""
    left, right = SUPPORTS[supports]
    k_g, m_g = beam_matrices(ei, mass_per_length, length, elements)
    fixed = {"w": 0, "t": 1}
    last = 2 * elements
    restrained = {fixed[d] for d in left} | {last + fixed[d] for d in right}
    keep = [i for i in range(k_g.shape[0]) if i not in restrained]
    lam = linalg.eigh(k_g[np.ix_(keep, keep)], m_g[np.ix_(keep, keep)], eigvals_only=True)
    scale = ei / (mass_per_length * (length / elements) ** 4)
    flexible = lam[lam > _RIGID * scale]
    return np.sqrt(flexible[:modes]) / (2.0 * math.pi)


def member_frequency(load: float, span: float, elastic_modulus: float, inertia: float,
                     *, elements: int = 40) -> float:
    """First frequency of a simply supported member carrying its uniform load as mass (w/g)."""
    return float(beam_frequencies(elastic_modulus * inertia, load / STANDARD_GRAVITY, span,
                                  "simply_supported", modes=1, elements=elements)[0])


def dunkerley(*frequencies: float) -> float:
    """Dunkerley's combination 1/f² = Σ 1/f_i², a lower bound of the combined system's
    fundamental frequency (Thomson & Dahleh, 5th ed., Ch. 6/7, Dunkerley's equation)."""
    return 1.0 / math.sqrt(sum(1.0 / f**2 for f in frequencies))


def _condensed_frequency(k: np.ndarray, m: np.ndarray) -> float:
    """Fundamental frequency with the massless DOFs condensed out exactly (static condensation:
    massless DOFs carry no inertia, so Guyan reduction onto the massed ones is exact)."""
    massed = np.flatnonzero(np.abs(m).sum(axis=1) > 0.0)
    free = np.setdiff1d(np.arange(k.shape[0]), massed)
    k_red = k[np.ix_(massed, massed)]
    if free.size:
        k_red = k_red - k[np.ix_(massed, free)] @ np.linalg.solve(k[np.ix_(free, free)],
                                                                   k[np.ix_(free, massed)])
    lam = linalg.eigh(k_red, m[np.ix_(massed, massed)], eigvals_only=True, subset_by_index=[0, 0])
    return float(np.sqrt(lam[0]) / (2.0 * math.pi))


def coupled_bay_frequency(*, beam_span: float, beam_spacing: float, beam_inertia: float,
                          girder_span: float, girder_inertia: float, elastic_modulus: float,
                          area_load: float, strips: int = 12, beam_elements: int = 8,
                          rigid_beams: bool = False) -> float:
    """Fundamental frequency of an interior bay as a grillage: the beam panel as ``strips``
    parallel strips (width b = L_g/strips, EI = E·I_j·b/S, mass w·b/g per length, pinned ends)
    standing on the girder at their centre lines; the girders on both sides of the bay deflect
    alike (repeated bays), so both ends of a strip follow one girder DOF, and that girder carries
    one strip mass per strip, as an interior girder does. Girder massless, simply supported.

    ``rigid_beams`` replaces the strips by point masses: the girder-only subsystem.
    """
    b = girder_span / strips
    girder_elements = 2 * strips
    k_gird, _ = beam_matrices(elastic_modulus * girder_inertia, 0.0, girder_span,
                              girder_elements)
    n_girder = k_gird.shape[0]
    strip_mass = area_load * b / STANDARD_GRAVITY
    if rigid_beams:
        k, m = k_gird.copy(), np.zeros_like(k_gird)
        for s in range(strips):
            w_dof = 2 * (2 * s + 1)
            m[w_dof, w_dof] += strip_mass * beam_span
    else:
        k_s, m_s = beam_matrices(elastic_modulus * beam_inertia * b / beam_spacing,
                                 strip_mass, beam_span, beam_elements)
        n_strip_own = k_s.shape[0] - 2  # every strip DOF except its two end deflections
        n = n_girder + strips * n_strip_own
        k, m = np.zeros((n, n)), np.zeros((n, n))
        k[:n_girder, :n_girder] = k_gird
        last = 2 * beam_elements
        for s in range(strips):
            base = n_girder + s * n_strip_own
            own = [i for i in range(k_s.shape[0]) if i not in (0, last)]
            index = np.empty(k_s.shape[0], dtype=int)
            index[own] = base + np.arange(n_strip_own)
            index[[0, last]] = 2 * (2 * s + 1)  # both ends on the girder node under the strip
            # both ends share one DOF: np.add.at accumulates repeated indices, += would not
            rows, cols = np.ix_(index, index)
            np.add.at(k, (rows, cols), k_s)
            np.add.at(m, (rows, cols), m_s)
    keep = [i for i in range(k.shape[0]) if i not in (0, 2 * girder_elements)]
    return _condensed_frequency(k[np.ix_(keep, keep)], m[np.ix_(keep, keep)])


def point_mass_girder_frequency(**bay: float) -> float:
    """The girder subsystem of coupled_bay_frequency (rigid beams, same inputs)."""
    return coupled_bay_frequency(**bay, rigid_beams=True)  # type: ignore[arg-type]


@dataclass(frozen=True, slots=True, kw_only=True)
class BayCheck:
    """The independent frequencies of a bay."""

    beam_frequency: float  # FE, beam with its uniform mass, Hz
    girder_frequency: float  # FE, girder with the beams' mass as a uniform mass, Hz
    dunkerley_frequency: float  # Dunkerley of the two
    coupled_frequency: float  # grillage eigenvalue, Hz


def bay_check(*, beam_span: float, beam_spacing: float, beam_inertia: float, girder_span: float,
              girder_inertia: float, elastic_modulus: float, dead_load: float,
              live_load_present: float) -> BayCheck:
    """Member frequencies by FE, their Dunkerley combination and the grillage's frequency."""
    w = dead_load + live_load_present
    f_j = member_frequency(w * beam_spacing, beam_span, elastic_modulus, beam_inertia)
    f_g = member_frequency(w * beam_span, girder_span, elastic_modulus, girder_inertia)
    coupled = coupled_bay_frequency(
        beam_span=beam_span, beam_spacing=beam_spacing, beam_inertia=beam_inertia,
        girder_span=girder_span, girder_inertia=girder_inertia,
        elastic_modulus=elastic_modulus, area_load=w)
    return BayCheck(beam_frequency=f_j, girder_frequency=f_g,
                    dunkerley_frequency=dunkerley(f_j, f_g), coupled_frequency=coupled)


# ------------------------------------------------------------------ the modal oscillator

def _oscillator(natural_frequency: float, effective_weight: float,
                damping_ratio: float) -> tuple[float, float, float]:
    """Mass, damping and stiffness of the mode: modal mass W/(2g) (DG11 Ch. 2's derivation of
    the walking equation, reference case I5)."""
    mass = effective_weight / (2.0 * STANDARD_GRAVITY)
    omega = 2.0 * math.pi * natural_frequency
    return mass, 2.0 * damping_ratio * mass * omega, mass * omega**2


def resonant_acceleration_ratio(*, natural_frequency: float, effective_weight: float,
                                damping_ratio: float, walker_weight: float = 700.0,
                                force_coefficient: float = 0.83, force_decay: float = 0.35,
                                reduction: float = 0.5) -> float:
    """a/g of the modal oscillator driven at f_n by the walking harmonic R·α·P, α = 0.83·e^(−0.35f)
    (DG11 Ch. 2, P = 0.7 kN, R = 0.5), from its frequency response (scipy.signal.freqresp of
    the force-to-acceleration transfer function s²/(M s² + C s + K))."""
    mass, damping, stiffness = _oscillator(natural_frequency, effective_weight, damping_ratio)
    omega = 2.0 * math.pi * natural_frequency
    system = signal.lti([1.0, 0.0, 0.0], [mass, damping, stiffness])
    _, response = signal.freqresp(system, w=[omega])
    alpha = force_coefficient * math.exp(-force_decay * natural_frequency)
    force = reduction * alpha * walker_weight
    return float(abs(response[0]) * force / STANDARD_GRAVITY)


def footstep_velocity_rms(*, natural_frequency: float, effective_weight: float,
                          damping_ratio: float, impulse: float, step_frequency: float,
                          samples: int = 20001) -> float:
    """rms over one step period of the modal oscillator's velocity after an impulse, from its
    impulse response (scipy.signal.impulse of s/(M s² + C s + K)) and numerical quadrature."""
    mass, damping, stiffness = _oscillator(natural_frequency, effective_weight, damping_ratio)
    period = 1.0 / step_frequency
    t = np.linspace(0.0, period, samples)
    _, v = signal.impulse(signal.lti([1.0, 0.0], [mass, damping, stiffness]), T=t)
    mean_square = integrate.simpson((impulse * v) ** 2, x=t) / period
    return float(math.sqrt(mean_square))


# ------------------------------------------------------------------ the calc type's rows

def second_method(ctx, output) -> list:
    """The verification rows of a floor_walking calc: the walking equation as the steady
    resonance of the modal oscillator, and for the bay route the members and the bay by
    finite elements (the guide's 0.18 is 0.42 % above the exact (π/2)·√(5/384) = 0.1792)."""
    from reportgen import VerificationRow

    res = {row.key: row.quantity.value for row in output.results}
    p = ctx.inputs
    f_n, weight, beta = res["natural_frequency"], res["effective_weight"], res["damping_ratio"]
    rows = []
    if "excitation_force" in res:
        p0 = res["excitation_force"]
        rows.append(VerificationRow(
            quantity="peak_acceleration_ratio", closed_form=res["peak_acceleration_ratio"],
            independent=resonant_acceleration_ratio(
                natural_frequency=f_n, effective_weight=weight, damping_ratio=beta,
                walker_weight=p0, force_coefficient=1.0, reduction=1.0),
            tolerance=1e-9, method="steady resonance of the modal oscillator (mass W/(2g),"
            " damping ratio β) under P0·exp(−0.35 f_n) at f_n: scipy.signal.freqresp of"
            " s²/(M s² + C s + K)"))
        if p0 == 290.0:
            rows.append(VerificationRow(
                quantity="peak_acceleration_ratio (from the walker)",
                closed_form=res["peak_acceleration_ratio"],
                independent=resonant_acceleration_ratio(
                    natural_frequency=f_n, effective_weight=weight, damping_ratio=beta),
                tolerance=2e-3, method="the same oscillator under R·α·P, α = 0.83·exp(−0.35"
                " f), P = 0.7 kN, R = 0.5 (the guide's derivation of P0; R·0.83·P = 0.2905 kN"
                " against the tabulated 0.29 kN, hence the tolerance)"))
    if "velocity_rms" in res:
        rows.append(_equipment_row(res, f_n, weight, beta))
    if "beam_span" not in ctx.given:
        return rows
    w = p["dead_load"] + p["live_load_present"]
    bay = dict(beam_span=p["beam_span"], beam_spacing=p["beam_spacing"],
               beam_inertia=p["beam_inertia"], girder_span=p["girder_span"],
               girder_inertia=p["girder_inertia"], elastic_modulus=res["elastic_modulus"])
    f_j = member_frequency(w * p["beam_spacing"], p["beam_span"], res["elastic_modulus"],
                           p["beam_inertia"])
    f_g = member_frequency(w * p["beam_span"], p["girder_span"], res["elastic_modulus"],
                           p["girder_inertia"])
    fe = "finite elements (40 Hermite beam elements, consistent mass w/g, scipy.linalg.eigh)"
    rows += [
        VerificationRow(quantity="beam_frequency", closed_form=res["beam_frequency"],
                        independent=f_j, tolerance=6e-3, unit="frequency",
                        method=f"simply supported beam by {fe}; the guide's 0.18 is 0.42 %"
                        " above the exact coefficient"),
        VerificationRow(quantity="girder_frequency", closed_form=res["girder_frequency"],
                        independent=f_g, tolerance=6e-3, unit="frequency",
                        method=f"simply supported girder by {fe}")]
    if "Delta_g_r" not in _symbols(output):  # the grillage has no restrained girder
        rows.append(VerificationRow(
            quantity="natural_frequency", closed_form=res["natural_frequency"],
            independent=coupled_bay_frequency(**bay, area_load=w), tolerance=0.03,
            unit="frequency", method="eigenvalue of the bay as a grillage: 12 beam strips"
            " standing on a finite-element girder, repeated bays (the guide's combination is"
            " a Dunkerley-type estimate; agreement within 3 % expected)"))
    return rows


def _equipment_row(res, f_n: float, weight: float, beta: float):
    """The floor velocity by the modal oscillator: steady resonance (frequency response) or
    the footstep's impulse response integrated over one step (scipy)."""
    from reportgen import VerificationRow

    f_s = res["step_frequency"]
    if f_n <= 4 * f_s:  # a walking harmonic reaches f_n: resonant build-up
        a = resonant_acceleration_ratio(natural_frequency=f_n, effective_weight=weight,
                                        damping_ratio=beta, walker_weight=290.0,
                                        force_coefficient=1.0, reduction=1.0) * STANDARD_GRAVITY
        v = a / (2.0 * math.pi * f_n) / math.sqrt(2.0)
        return VerificationRow(
            quantity="velocity_rms", closed_form=res["velocity_rms"], independent=v,
            tolerance=1e-9, unit="velocity", method="steady resonance of the modal oscillator"
            " under P0·exp(−0.35 f_n), P0 = 0.29 kN (scipy.signal.freqresp), in velocity")
    impulse = f_s**1.43 / f_n**1.30 * 747.3 / 17.8  # the footstep's effective impulse
    v = footstep_velocity_rms(natural_frequency=f_n, effective_weight=weight,
                              damping_ratio=beta, impulse=impulse, step_frequency=f_s)
    return VerificationRow(
        quantity="velocity_rms", closed_form=res["velocity_rms"], independent=v,
        tolerance=5e-3, unit="velocity", method="impulse response of the modal oscillator"
        " (scipy.signal.impulse) squared and integrated over one step period (Simpson); the"
        " closed form is the light-damping approximation of the decaying sinusoid")


def _symbols(output) -> set[str]:
    """Names of the printed equations (to see whether the girder deflection was reduced)."""
    return {getattr(b, "name", "") for b in output.blocks}
