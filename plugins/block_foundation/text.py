"""block_foundation's wording: assumptions, the method, the coupled solve, and the cautions."""

from __future__ import annotations

METHOD = (
    "The block and the machine are one rigid body resting on the surface of a uniform elastic"
    " half-space. The soil under the base is represented by frequency-independent springs and"
    " dashpots of the equivalent circular footing for each motion (Richart, Hall & Woods,"
    " 1970): Lysmer's analog for vertical motion, Hall's analogs for sliding and rocking, and"
    " the torsional analog. Vertical and torsional motion are single degrees of freedom;"
    " sliding and rocking in the plane of the horizontal force are coupled and solved as two"
    " degrees of freedom about the combined centre of gravity. The steady-state amplitudes"
    " are those at the running speed under the machine's rotating force. Values are"
    " substituted in coherent SI units (g_n = 9.80665 m/s²).")

RADII = (
    "A rectangular base L × B is replaced by a circle for each motion: of equal area for"
    " vertical and horizontal motion, of equal second moment of area about the rocking axis"
    " for rocking, and of equal polar moment for torsion (Richart, Hall & Woods, Ch. 10).")

COUPLED = (
    "Sliding x of the centre of gravity and rocking ψ about it, with the springs at the base a"
    " height z_G below the centre of gravity, under the horizontal force F_0 at the height"
    " h_F (arm e = h_F − z_G): [k_x* − mω², −z_G·k_x*; −z_G·k_x*, k_ψ* + z_G²·k_x* − I_G·ω²]"
    "·[x; ψ] = [F_0; e·F_0], with k* = k + iωc. The undamped natural frequencies solve"
    " ω⁴ − ω²(ω_x² + ω_ψ²)/γ + ω_x²ω_ψ²/γ = 0 with ω_x² = k_x/m, ω_ψ² = k_ψ/I_0,"
    " I_0 = I_G + m·z_G² and γ = I_G/I_0. The complex pair of equations is solved at the"
    " running speed; the horizontal amplitude at a height z is |x + (z − z_G)·ψ|.")


def assumptions(embedded: bool) -> tuple[str, ...]:
    del embedded  # an embedded block is refused before compute
    return (
        "The block is rigid and rests on the soil surface (no embedment); the soil is a"
        " uniform, elastic half-space of the stated shear modulus, Poisson's ratio and"
        " density, with no layering and no rock at shallow depth.",
        "Frequency-independent springs and dashpots (the lumped-parameter analogs), valid"
        " for the low dimensionless frequencies of machine foundations.",
        "The springs act at the base directly below the combined centre of gravity; the"
        " principal axes of inertia are parallel to the block's edges (the eccentricity"
        " check keeps this close to true).",
        "The machine is a rigid body fixed to the block; its rotating force has the same"
        " amplitude vertically and horizontally (perpendicular to the shaft).",
        "Gravity's overturning term in rocking (m·g_n·z_G) is left out, as in the method's"
        " source; the calc refuses a soil too soft for it to be small.",
    )


def measure_words(measure: str) -> str:
    return {"peak": "zero-to-peak", "rms": "rms", "peak_to_peak": "peak-to-peak"}[measure]


CAUTIONS = (
    "Soil properties (shear modulus or shear-wave velocity, Poisson's ratio, density) must"
    " come from a site investigation by a geotechnical engineer, at the strain level of"
    " machine vibration; the results are sensitive to them. Where the soil is layered or"
    " rock lies within about two base widths, the half-space model does not apply.",
    "The lumped model is a simplification: it gives no higher modes of the block, treats the"
    " block as rigid and the soil as uniform and linear. Frequencies are estimates; the"
    " separation margin is there to cover their uncertainty. Consider a bounding range of"
    " soil stiffness (for example half and twice the stated shear modulus).",
    "Defer to the local building code, to ACI 351.3R or the local equivalent, and to licensed"
    " practice. The machine maker's allowable amplitudes and velocities govern; the limits"
    " stated in this package must be confirmed against the maker's data, and the bearing"
    " pressure against the geotechnical engineer's allowable value.",
    "Settlement, the block's reinforcement, anchorage of the machine, grouting and the"
    " structural design of the block are separate checks.",
)
