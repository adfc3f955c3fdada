"""rigid_body_mounts' wording: assumptions, method, the paragraphs of the working, the
selection notes and the cautions."""

from __future__ import annotations

import math

from reportgen_plugins.mechanics import quantity_text
from reportgen_plugins.mechanics.catalogue_sheet import required_deflection_text

from reportgen.units import STANDARD_GRAVITY, format_number


def assumptions(given: frozenset[str], estimated: bool) -> tuple[str, ...]:
    items = [
        "The equipment is one rigid body; the supporting structure is rigid (see the"
        " caution on structural flexibility).",
        "Axes: x and y horizontal, z vertical upward, right-handed, in the datum frame the"
        " job states; every position is in that frame. Rotations θx, θy, θz are small and"
        " about axes through the centre of gravity.",
        "Each mount is a point spring at its elastic centre with linear stiffnesses along"
        " the datum axes and no rotational stiffness of its own.",
        "Structural damping: each mount's stiffness is complex, k·(1 + 2iζ), with the same"
        " ζ for every mount and direction. This keeps the undamped modes uncoupled, so the"
        " steady response is the exact sum over the modes.",
        "The weight's overturning (gravity) stiffness is left out of the frequencies, as in"
        " the handbook model; it is used only to confirm that the equipment cannot tip"
        " over on its mounts.",
    ]
    if "damping_ratio" not in given:
        items.append("Damping ratio ζ = 0.05 assumed (common practice for steel springs"
                     " with a damping element); state the isolator's value.")
    if estimated:
        items.append("Moments of inertia estimated as a uniform box about the centre of"
                     " gravity (see the caution).")
    else:
        items.append("Moments and products of inertia as stated, about axes through the"
                     " centre of gravity parallel to the datum axes; the inertia tensor"
                     " carries −I_xy, −I_xz, −I_yz off its diagonal.")
    if {"force_amplitude", "unbalance"} & given:
        items.append("Excitation harmonic at the running speed (1 ×). With two excitations"
                     " their relative phase is unknown: their force peaks are added, a bound"
                     " for any phase (common practice).")
    for load, axis, point, default in (
            ("force_amplitude", "force_direction", "force", "the force acts along z (vertical)"),
            ("unbalance", "rotor_axis", "rotor", "the rotor spins about z (vertical)")):
        if load not in given:
            continue
        if axis not in given:
            items.append(f"No {axis} stated: {default}.")
        missing = [f"{point}_{a}" for a in "xyz" if f"{point}_{a}" not in given]
        if missing:
            items.append(f"{', '.join(missing)} not stated: taken at the centre of gravity.")
    return tuple(items)


METHOD = (
    "The equipment moves in six coordinates q = [x, y, z, θx, θy, θz] at its centre of"
    " gravity. A mount at offset r_i from the centre of gravity moves u_i = t + θ × r_i ="
    " T_i·q, so its stiffness K_i adds T_iᵀ·K_i·T_i to the 6 × 6 stiffness matrix about the"
    " centre of gravity; the mass matrix is diag(m, m, m, J), J the inertia tensor. The"
    " undamped modes solve K·φ = ω²·M·φ; static equilibrium solves K·u = [0, 0, −W, 0, 0, 0]"
    " (the weight acts at the centre of gravity); the steady response to a harmonic load Q"
    " solves [(1 + 2iζ)·K − ω²·M]·q = Q, and each mount passes (1 + 2iζ)·K_i·T_i·q to the"
    " structure (Harris' Shock and Vibration Handbook, Ch. 3; Thomson & Dahleh, Ch. 6)."
    " Values are in coherent SI units (g_n = 9.80665 m/s²).")

BOX = (
    "No moments of inertia were given: they are estimated for a uniform rectangular box of"
    " the stated length a (along x), width b (along y) and height h (along z) about its"
    " own centre, placed at the centre of gravity (tables of solid bodies, e.g. Meriam &"
    " Kraige, Dynamics, Appendix D). Products of inertia are taken as zero.")

MATRICES = (
    "Rows and columns in the order x, y, z, θx, θy, θz at the centre of gravity. Mounts"
    " below the centre of gravity put terms in the blocks that couple translation and"
    " rotation: horizontal motion and rocking then share their modes.")

MODES = (
    "The eigenvalues λ = ω² of K·φ = λ·M·φ give the natural frequencies f = √λ/(2π),"
    " ascending. Each mode's kinetic energy splits over the six coordinates as"
    " E_j = φ_j·(M·φ)_j/(φᵀ·M·φ) (the modal kinetic-energy distribution, Jeong & Singh"
    " 2000): the shares sum to 1, a share of 1 is a fully decoupled mode, and with"
    " products of inertia one may be slightly negative. The dominant share is reported.")

STATICS = (
    "K·u = [0, 0, −W, 0, 0, 0] gives the heave w and tilts θx, θy of the centre of gravity"
    " (the horizontal terms vanish unless the mounts couple them). A mount at (x_i, y_i)"
    " moves vertically by w + θx·(y_i − y_G) − θy·(x_i − x_G); its deflection (down"
    " positive) times its vertical stiffness is its load, compression positive. A negative"
    " load is a mount in tension: a failing check, since an isolator is not made to hold"
    " the equipment down.")

RESPONSE = (
    "The steady response at the running speed by modal superposition with structural"
    " damping; each mount's force is a vector turning through an ellipse over one cycle,"
    " and its largest magnitude over the cycle is reported, √(½(‖A‖² + |A·A|)) for the"
    " complex amplitude A (A·A without conjugation). The total is the same for the vector"
    " sum of the mount forces.")

def required_deflection(delta: float | None, f_limit: float | None,
                        stated: float | None, units: str) -> str:
    parts = []
    if f_limit:
        parts.append(f"the deflection at which a spring alone on its load has f_n ="
                     f" √(g/δ)/(2π) = f_run/r_min = {format_number(f_limit, 4)} Hz,"
                     f" {_len(STANDARD_GRAVITY / (2 * math.pi * f_limit) ** 2, units)}")
    if stated:
        parts.append(f"the stated minimum, {_len(stated, units)}")
    return required_deflection_text(delta, parts, units)


def _len(value: float, units: str) -> str:
    return quantity_text(value, "length", units, 4)


BOX_CAUTION = (
    "The moments of inertia are a uniform-box estimate. Real equipment concentrates its"
    " mass (fans, motors, coils, compressors): the rocking and torsional frequencies can"
    " differ noticeably from these. Obtain the equipment maker's mass properties before"
    " the isolation is finalised.")

CAUTIONS = (
    "Seismic and wind restraint: isolated equipment, especially on a roof, must be"
    " restrained against seismic and wind loads by restrained mounts or snubbers designed to"
    " the local code. Restraints must keep their working clearance so that they do not"
    " bridge the isolators in normal running.",
    "Mount selection must follow the isolator maker's rated data (rated load, spring rate,"
    " rated and solid deflection, lateral stability and damping) and the local codes;"
    " catalogue values used here are as the firm's catalogue file states them.",
    "Structural flexibility: the supports are taken as rigid. On a roof or a long floor"
    " span the structure deflects and has its own resonances; the springs should deflect"
    " many times more than the structure under the same load (common practice), and the"
    " structure is to be checked separately by the structural engineer.",
    "Start-up and shut-down pass through the rigid-body resonances: confirm that the"
    " mounts' damping or restraints limit the motion there, and that flexible connections"
    " (ducts, pipes, cables) allow the motion computed here.",
)


def ratio_note(mount_type: str, ratio: float) -> str:
    """What the dynamic-to-static stiffness ratio changes here."""
    steel = (" A ratio other than 1 is stated for steel springs, whose dynamic and static"
             " stiffness are normally equal; it is used as stated." if mount_type != "elastomer"
             else "")
    return (f"The mounts' dynamic stiffness is κ_d = {format_number(ratio, 3)} times the rates"
            f" in the mounts table, which are static (the maker's).{steel} The static loads,"
            " deflections and tilts use the static rates; the stiffness matrix K, the six"
            " modes and the forces passed to the structure use the dynamic stiffness.")
