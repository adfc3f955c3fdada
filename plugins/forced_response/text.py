"""forced_response's wording: assumptions, method, regime, notes and cautions."""

from __future__ import annotations

import math

from reportgen_plugins.mechanics import DAMPING_INPUTS, quantity_text

from reportgen.units import format_number

from .method import MASS_CONTROLLED_ABOVE, MAX_ODE_COST, STIFFNESS_CONTROLLED_BELOW


def assumptions(kind: str, given: frozenset[str]) -> tuple[str, ...]:
    damped = bool(set(DAMPING_INPUTS) & given)
    return (
        "Single degree of freedom: the mass moves as a rigid body in the direction of"
        " the excitation.",
        "Linear spring and linear viscous damping; no friction, hysteresis or stops.",
        "Rigid support: the structure under the mounts does not move or take part in the"
        " motion" + (", other than the prescribed support motion." if kind == "support"
                     else "."),
        "Steady state: the start-up transient has died away and only the response at the"
        " forcing frequency remains; amplitudes are zero-to-peak.",
        {"force": "The applied force F_0·cos ωt has constant amplitude.",
         "unbalance": "The unbalance m_e·e rotates at the running speed, giving a force"
                      " m_e·e·ω² in the direction considered; the mass m is the whole"
                      " machine with its rotor.",
         "support": "The support moves harmonically, y = Y·cos ωt, whatever the mass"
                    " does (the support is not loaded back by the mass)."}[kind],
        "Damping as stated in the inputs." if damped else
        "No damping given: the response is undamped (conservative near resonance).",
    )


def method(kind: str) -> str:
    law = {
        "force": "an applied force F(t) = F_0·cos ωt",
        "unbalance": "a rotating unbalance U = m_e·e, whose force m_e·e·ω²·cos ωt grows with"
                     " the square of the speed",
        "support": "a harmonic support motion y = Y·cos ωt, which acts on the mass through"
                   " the spring and the damper",
    }[kind]
    return ("The steady-state solution of m·x'' + c·x' + k·x = F(t) for " + law + " is a"
            " harmonic motion at the forcing frequency, X·cos(ωt − φ), whose amplitude and"
            " phase lag follow in closed form from the frequency ratio r = ω/ω_n and the"
            " damping ratio ζ. Each value is substituted in the package's units, with its"
            " unit; amplitudes are zero-to-peak.")


def regime(kind: str, r: float, zeta: float, phi: float, k: float, cw: float,
           mw2: float, units: str) -> str:
    terms = (f"At the operating point the three terms of the dynamic stiffness are k ="
             f" {quantity_text(k, 'stiffness', units)}, c·ω ="
             f" {quantity_text(cw, 'stiffness', units)} and"
             f" m·ω² = {quantity_text(mw2, 'stiffness', units)}.")
    deg = format_number(math.degrees(phi))
    low, high = format_number(STIFFNESS_CONTROLLED_BELOW, 6), format_number(
        MASS_CONTROLLED_ABOVE, 6)
    r_text = format_number(r, 3)
    if r < STIFFNESS_CONTROLLED_BELOW:
        text = (f"Below resonance (r = {r_text} < {low}):"
                " stiffness-controlled. The spring carries most of the excitation and the mass"
                f" moves nearly in phase with it (φ = {deg}°)")
        text += {"force": "; the amplitude is close to the static displacement F_0/k.",
                 "unbalance": "; the amplitude is small and grows with the square of speed.",
                 "support": "; the mass follows the support almost rigidly (X ≈ Y)."}[kind]
    elif r <= MASS_CONTROLLED_ABOVE:
        text = (f"Near resonance ({low} ≤ r = {r_text} ≤ {high}): damping-controlled."
                " Stiffness and inertia largely cancel, so the amplitude is limited mainly by"
                " damping"
                + (f" (at r = 1 the amplification is 1/(2ζ) = {format_number(1 / (2 * zeta), 3)})"
                   if zeta > 0 else " (none is given, so only the distance from r = 1"
                                    " limits it)")
                + f"; the phase lag passes through 90° at r = 1 (here φ = {deg}°).")
    else:
        anti = ("nearly in anti-phase with it" if phi > math.radians(150) else
                "well behind it, towards anti-phase")
        text = (f"Above resonance (r = {r_text} > {high}): mass-controlled."
                f" The inertia of the mass resists the excitation and the mass moves {anti}"
                f" (phase lag φ = {deg}°)")
        text += {"force": "; the amplitude tends to F_0/(m·ω²).",
                 "unbalance": "; the amplitude tends to m_e·e/m, independent of speed.",
                 "support": "; the mass stays nearly still while the support moves."}[kind]
        text += " Above r = √2 the transmissibility is below 1 (isolation)."
    return (text + " " + terms + f" Regime limits r < {low} and"
            f" r > {high}: common practice.")


def velocity_and_margin(margin_f: float, min_margin: float, band: tuple[float, float]) -> str:
    return (
        "Velocity is reported as a peak (zero-to-peak) value, V = ω·X, and as an rms value,"
        " V_rms = V/√2 (a single tone). A peak criterion is compared with the peak value and"
        " an rms criterion (as in machinery vibration standards) with the rms value."
        " Resonance margin: this package uses |f − f_n|/f_n; practice also uses"
        f" |f − f_n|/f (here {format_number(margin_f, 4)}), shown for information only. The"
        f" resonance band is f_n·(1 ± {format_number(min_margin, 6)}) ="
        f" {format_number(band[0], 4)} to {format_number(band[1], 4)} Hz.")


def margin_note(margin_f: float, band: tuple[float, float]) -> str:
    return (f"band {format_number(band[0], 4)} to {format_number(band[1], 4)} Hz;"
            f" |f − f_n|/f = {format_number(margin_f, 4)}")


def passage_lead(kind: str, r: float, fn: float) -> str:
    """Why the excitation meets the natural frequency on its way to the operating point."""
    where = f"{format_number(fn, 4)} Hz = {format_number(fn * 60, 4)} rpm"
    if kind == "unbalance":
        return (f"The running speed is above the natural frequency ({where}): every start-up"
                " and run-down passes through resonance." if r > 1 else
                f"The stated speed range crosses the natural frequency ({where}).")
    return (f"The stated frequency range crosses the natural frequency ({where}): an"
            " excitation whose frequency rises from below it passes through resonance."
            if r <= 1 else f"The forcing frequency is above the natural frequency ({where}):"
            " if it rises from rest when the equipment starts, it passes through resonance.")


def passage_note(lead: str, how: str) -> str:
    return f"{lead} {how}"


def band_caution(margin: float, min_margin: float, dyn: float) -> str:
    return (f"The forcing frequency lies inside the resonance band (margin"
            f" {format_number(margin, 3)} < {format_number(min_margin, 6)}). Near resonance the"
            " amplitude depends on damping, which is rarely known well, and on small changes"
            " in mass, stiffness or speed; the computed amplification D ="
            f" {format_number(dyn, 3)} is not a reliable upper bound. Re-tune the support"
            " (stiffness or mass) rather than rely on damping.")


RATED_DATA = (
    "Take the support stiffness and damping from the isolator or mount maker's rated"
    " data at the working load, not from catalogue nominal values. Seismic restraint"
    " of the supported equipment and its anchorage is outside this calc and is to be"
    " designed to the governing local code.")


def no_integration_note(cost: float) -> str:
    return ("The independent check by time integration is not run here: one forcing period"
            f" spans {cost:.0f} natural periods or decay times"
            f" (more than {format_number(MAX_ODE_COST, 6)}). The transfer-function check"
            " (Appendix A) stands alone.")
