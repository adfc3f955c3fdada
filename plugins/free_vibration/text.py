"""free_vibration's wording: assumptions, the method and the regime paragraphs."""

from __future__ import annotations

from reportgen_plugins.mechanics import DAMPING_INPUTS

from reportgen.units import format_number

from .method import FreeResponse


def assumptions(given: frozenset[str]) -> tuple[str, ...]:
    return (
        "Single degree of freedom: the mass moves as a rigid body in one direction.",
        "Linear spring and linear viscous damping; no friction or hysteresis.",
        "Displacement measured from static equilibrium, so gravity drops out of the"
        " equation of motion.",
        "Rigid support; the supporting structure does not take part in the motion.",
        "Undamped unless a damping ratio or coefficient is given." if
        not (set(DAMPING_INPUTS) & given) else "Damping as stated in the inputs.",
    )


METHOD = ("The equation of motion m·x'' + c·x' + k·x = 0 is solved in closed form from the"
          " initial conditions. Each value is substituted in the package's units, with its unit.")

DECAY = ("Free response x(t) = A·e^(−ζω_n t)·cos(ω_d t + φ). The decay envelope"
         " ±A·e^(−ζω_n t) is shown dashed in the figure.")


def regime(resp: FreeResponse) -> str:
    zeta = resp.zeta
    if resp.regime == "critical":
        return ("Critically damped (ζ = 1): the mass returns to equilibrium without"
                " oscillating, in the shortest time of any non-oscillating system."
                " x(t) = (x_0 + (v_0 + ω_n x_0)·t)·e^(−ω_n t).")
    if resp.regime == "overdamped":
        return (f"Overdamped (ζ = {format_number(zeta, 4)} > 1): no oscillation; the motion is"
                " the sum of two decaying exponentials x(t) = A_1·e^(s_1 t) + A_2·e^(s_2 t).")
    if resp.regime == "undamped":
        return ("Undamped (ζ = 0): the mass oscillates at the natural frequency with constant"
                " amplitude; x(t) = C_1 cos ω_n t + C_2 sin ω_n t = A cos(ω_n t + φ).")
    return (f"Underdamped (0 < ζ = {format_number(zeta, 4)} < 1): the mass oscillates at the"
            " damped natural frequency with an amplitude that decays exponentially.")
