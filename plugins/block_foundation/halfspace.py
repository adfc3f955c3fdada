"""Frequency-independent springs and dashpots of a rigid circular footing on an elastic
half-space (the lumped-parameter analogs), one function per motion.

Each returns the spring, the dashpot, the mass (or inertia) ratio B and the damping ratio D
of the summary table in Richart, Hall & Woods (1970), Ch. 7, for a footing of radius r on
soil of shear modulus G, Poisson's ratio ν and density ρ.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import FoundationError

#: How closely a stated shear modulus and shear-wave velocity must agree (G = ρ·Vs²).
_G_VS_AGREEMENT = 0.01


@dataclass(frozen=True, slots=True, kw_only=True)
class ModeConstants:
    """Spring k, dashpot c, the inertia they act on, ratio B, damping ratio D = c/(2√(k·I))."""

    radius: float
    stiffness: float
    damping: float
    inertia: float
    mass_ratio: float
    damping_ratio: float


def soil_shear_modulus(*, soil_density: float, shear_modulus: float | None = None,
                  shear_wave_velocity: float | None = None) -> float:
    """The soil's shear modulus, given or from G = ρ·Vs² (elasticity; Richart, Hall & Woods
    1970, Ch. 3). Both given: they must agree within 1 %, else the input is contradictory."""
    if not soil_density > 0.0:
        raise FoundationError("soil_density", "must be greater than zero")
    if shear_modulus is None and shear_wave_velocity is None:
        raise FoundationError("shear_modulus", "give shear_modulus or shear_wave_velocity")
    from_vs = None if shear_wave_velocity is None else soil_density * shear_wave_velocity**2
    if shear_modulus is None:
        assert from_vs is not None
        if not from_vs > 0.0:
            raise FoundationError("shear_wave_velocity", "must be greater than zero")
        return from_vs
    if not shear_modulus > 0.0:
        raise FoundationError("shear_modulus", "must be greater than zero")
    if from_vs is not None and abs(from_vs - shear_modulus) > _G_VS_AGREEMENT * shear_modulus:
        raise FoundationError(
            "shear_wave_velocity",
            f"contradicts shear_modulus: ρ·Vs² = {from_vs / 1e6:.4g} MPa but shear_modulus is"
            f" {shear_modulus / 1e6:.4g} MPa; give one of them")
    return shear_modulus


def check_poisson(nu: float) -> None:
    """The analogs hold for a soil's Poisson's ratio, 0 ≤ ν ≤ 0.5 (0.5: saturated, undrained)."""
    if not 0.0 <= nu <= 0.5:
        raise FoundationError("poisson_ratio",
                              f"{nu:g} is not a soil's Poisson's ratio (0 to 0.5)")


def _sqrt_g_rho(g: float, rho: float) -> float:
    return math.sqrt(g * rho)


def vertical_constants(*, g: float, nu: float, rho: float, radius: float,
                       mass: float) -> ModeConstants:
    """Lysmer's analog (Lysmer & Richart 1966; Richart, Hall & Woods 1970, Ch. 7):

    k_z = 4·G·r/(1 − ν), c_z = 3.4·r²·√(G·ρ)/(1 − ν), B_z = (1 − ν)/4 · m/(ρ·r³),
    D_z = 0.425/√B_z (= c_z/(2√(k_z·m)) exactly).
    """
    check_poisson(nu)
    k = 4.0 * g * radius / (1.0 - nu)
    c = 3.4 * radius**2 * _sqrt_g_rho(g, rho) / (1.0 - nu)
    b = (1.0 - nu) / 4.0 * mass / (rho * radius**3)
    return ModeConstants(radius=radius, stiffness=k, damping=c, inertia=mass, mass_ratio=b,
                         damping_ratio=0.425 / math.sqrt(b))


def horizontal_constants(*, g: float, nu: float, rho: float, radius: float,
                         mass: float) -> ModeConstants:
    """Hall's analog for sliding (Hall 1967; Richart, Hall & Woods 1970, Ch. 7):

    k_x = 32(1 − ν)·G·r/(7 − 8ν), c_x = 18.4(1 − ν)·r²·√(G·ρ)/(7 − 8ν),
    B_x = (7 − 8ν)/(32(1 − ν)) · m/(ρ·r³), D_x = 0.2875/√B_x.
    """
    check_poisson(nu)
    k = 32.0 * (1.0 - nu) * g * radius / (7.0 - 8.0 * nu)
    c = 18.4 * (1.0 - nu) * radius**2 * _sqrt_g_rho(g, rho) / (7.0 - 8.0 * nu)
    b = (7.0 - 8.0 * nu) / (32.0 * (1.0 - nu)) * mass / (rho * radius**3)
    return ModeConstants(radius=radius, stiffness=k, damping=c, inertia=mass, mass_ratio=b,
                         damping_ratio=0.2875 / math.sqrt(b))


def rocking_constants(*, g: float, nu: float, rho: float, radius: float,
                      base_inertia: float) -> ModeConstants:
    """Hall's analog for rocking (Hall 1967; Richart, Hall & Woods 1970, Ch. 7):

    k_ψ = 8·G·r³/(3(1 − ν)), B_ψ = 3(1 − ν)/8 · I_ψ/(ρ·r⁵),
    c_ψ = 0.8·r⁴·√(G·ρ)/((1 − ν)(1 + B_ψ)), D_ψ = 0.15/((1 + B_ψ)·√B_ψ),
    with I_ψ the mass moment of inertia about the rocking axis through the base.
    """
    check_poisson(nu)
    k = 8.0 * g * radius**3 / (3.0 * (1.0 - nu))
    b = 3.0 * (1.0 - nu) / 8.0 * base_inertia / (rho * radius**5)
    c = 0.8 * radius**4 * _sqrt_g_rho(g, rho) / ((1.0 - nu) * (1.0 + b))
    return ModeConstants(radius=radius, stiffness=k, damping=c, inertia=base_inertia,
                         mass_ratio=b, damping_ratio=0.15 / ((1.0 + b) * math.sqrt(b)))


def torsional_constants(*, g: float, rho: float, radius: float,
                        inertia: float) -> ModeConstants:
    """Torsion about the vertical axis (Richart, Hall & Woods 1970, Ch. 7):

    k_θ = 16·G·r³/3, B_θ = I_θ/(ρ·r⁵), D_θ = 0.5/(1 + 2·B_θ),
    c_θ = 2·D_θ·√(k_θ·I_θ) = (4/√3)·√B_θ·r⁴·√(G·ρ)/(1 + 2·B_θ).
    """
    k = 16.0 * g * radius**3 / 3.0
    b = inertia / (rho * radius**5)
    d = 0.5 / (1.0 + 2.0 * b)
    return ModeConstants(radius=radius, stiffness=k, damping=2.0 * d * math.sqrt(k * inertia),
                         inertia=inertia, mass_ratio=b, damping_ratio=d)


def dimensionless_frequency(*, frequency: float, radius: float, g: float, rho: float) -> float:
    """a₀ = ω·r/Vs with Vs = √(G/ρ): the frequency the half-space solutions are tabulated
    against; the constant springs and dashpots follow them for low a₀ (Richart, Hall & Woods
    1970, Ch. 7)."""
    return 2.0 * math.pi * frequency * radius / math.sqrt(g / rho)
