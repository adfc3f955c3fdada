"""isolation's wording: assumptions, method, load sharing, the target, the resonance
passage, notes and cautions."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics import quantity_text

from reportgen.units import format_number


def assumptions(given: frozenset[str], uneven: bool) -> tuple[str, ...]:
    items = [
        "Rigid supporting structure: the floor does not move under the mounts (see the"
        " caution on floor flexibility).",
        "Single vertical degree of freedom: the machine and its base move as one rigid"
        " mass, vertically; rocking and horizontal modes are not analysed.",
        "Linear isolators with linear viscous damping; all mounts of one type (equal"
        " stiffness and damping ratio).",
        "Harmonic excitation at 1 × running speed in the working shown; orders the job"
        " lists are judged over the envelope.",
        "Force transmissibility (machine force to floor) and motion transmissibility"
        " (floor motion to machine) are the same function for this model.",
    ]
    if "damping_ratio" not in given:
        items.append("Damping ratio ζ = 0.05 assumed; state the isolator's value.")
    if uneven:
        items.append(
            "Load sharing by statics on a rigid base over equal mounts: mount loads are"
            " linear in position (exact for three mounts; for four or more mounts, which"
            " are statically indeterminate, this is the rigid-base assumption). The"
            " vertical mode is treated as uncoupled from rocking, which is exact only when"
            " the centre of gravity lies over the mounts' centroid.")
    else:
        items.append("Equal load sharing: the centre of gravity lies over the centroid of"
                     " the mounts.")
    return tuple(items)


METHOD = (
    "The machine and its base are one rigid mass on n equal mounts, moving vertically"
    " (one degree of freedom). The fraction of the exciting force passed to the floor"
    " is the transmissibility T = √((1 + (2ζr)²)/((1 − r²)² + (2ζr)²)), r = f/f_n,"
    " which is also the ratio of machine to floor motion under base excitation;"
    " isolation efficiency is 1 − T. Isolation exists only above r = √2, where T < 1"
    " for any damping. The mounts the target needs come from solving T(r, ζ) = 1 −"
    " η_min exactly for the stated damping. Each value is substituted in the"
    " package's units, with its unit (g_n is standard gravity, 9.80665 m/s²).")


def sharing(p: Mapping[str, Any], loads: tuple[float, ...], units: str) -> str:
    n = len(loads)
    pts = p["mount_positions"]
    xc, yc = sum(q[0] for q in pts) / n, sum(q[1] for q in pts) / n
    ex, ey = p["cg_x"] - xc, p["cg_y"] - yc
    kind = ("Three mounts are statically determinate: vertical and moment equilibrium"
            " alone give the loads." if n == 3 else
            f"{n} mounts are statically indeterminate. With equal mounts under a rigid"
            " base, the base translates and tilts, so each mount's deflection, and so its"
            " load, is linear in its position.")
    return (f"{kind} Vertical equilibrium and moment equilibrium about the mounts' centroid"
            f" (x_c, y_c) = ({quantity_text(xc, 'length', units)},"
            f" {quantity_text(yc, 'length', units)})"
            " then give P_i = W/n + b_x·(x_i − x_c) + b_y·(y_i − y_c), with b_x and b_y below,"
            " where (e_x, e_y) ="
            f" ({quantity_text(ex, 'length', units)}, {quantity_text(ey, 'length', units)})"
            " is the centre of gravity's offset from the centroid and S_xx = Σ(x_i − x_c)²,"
            " S_yy = Σ(y_i − y_c)², S_xy = Σ(x_i − x_c)(y_i − y_c). The loads satisfy"
            " ΣP_i = W and ΣP_i·(x_i, y_i) = W·(x_G, y_G); all are in compression.")


TARGET = (
    "The target efficiency sets the largest transmissibility allowed. The undamped"
    " handbook form gives the frequency ratio directly; with damping, T(r, ζ) = T_req"
    " is solved exactly, which asks for slightly softer mounts. The required stiffness"
    " per mount is defined here as that of each of n equal mounts which together put"
    " the machine's vertical natural frequency at the required value:"
    " k_m,req = (W/n)·(2π·f_n,req)²/g.")


def root(zeta: float, r_req: float) -> str:
    return (f"With the stated damping ζ = {format_number(zeta, 4)}, T(r, ζ) = T_req is a"
            " quadratic in x = r²: T²·x² + (4ζ²T² − 2T² − 4ζ²)·x + T² − 1 = 0, whose one"
            f" positive root gives r_req = {format_number(r_req, 6)} (r > √2)."
            " Substituting the root back:")


UNDAMPED_PEAK = (
    "With no damping the transmissibility is unbounded at r = 1, which the"
    " machine passes on every start and stop. Real mounts have some damping:"
    " state it.")
PEAK = (
    "The machine passes through r ≈ 1 on every start and stop. The transmissibility"
    " peaks where d T/d r = 0, at r_p² = (√(1 + 8ζ²) − 1)/(4ζ²); for light damping"
    " the peak is close to 1/(2ζ).")


def per_position_note(pmin: float, d_req: float, km_req: float, units: str) -> str:
    return (
        "Deflection and natural frequency are each mount's own, under its load, with"
        " all mounts of the stated stiffness. \"Stiffness for target\" is the stiffness"
        " at which that mount alone would deflect the required static deflection under"
        " its own load (P_i/δ_req). Choosing springs per position by that column levels"
        " the machine and gives every position the required natural frequency. One"
        " spring type for all positions should be no stiffer than the least loaded"
        f" position's value, {quantity_text(pmin / d_req, 'stiffness', units)}; the equal-"
        f"sharing value {quantity_text(km_req, 'stiffness', units)} meets the target for the"
        " machine's vertical mode only.")


TYPICAL_DAMPING = (
    "Steel springs ζ ≈ 0.005–0.01; elastomeric mounts and pads ζ ≈ 0.02–0.10 (common"
    " practice). Damping raises the transmissibility above r = √2 and"
    " limits the peak when the machine runs up and down through resonance.")

CAUTIONS = (
    "Seismic and wind restraint: isolated equipment must be restrained against"
    " seismic and wind loads by restrained mounts or snubbers designed to the local"
    " code. Restraints must keep their working clearance so that they do not bridge"
    " the isolators in normal running.",
    "Floor flexibility: the result assumes a rigid floor. The mounts should deflect at"
    " least 10 times more than the floor under the same load (common practice); on long"
    " or light spans the floor's own resonances may lie near the running speed and the"
    " isolation is less. Check the floor separately.",
    "Mount selection must follow the isolator maker's rated data (rated load and"
    " deflection, spring rate, lateral stability, damping) and the local codes.",
)


def lifted(lifted_mounts: list[tuple[int, float]]) -> str:
    """The validation message for mounts out of compression."""
    which = ", ".join(
        f"mount {i} would be unloaded (0 kN)" if p == 0.0 else
        f"mount {i} would carry {format_number(p / 1000, 3)} kN (uplift/tension)"
        for i, p in lifted_mounts)
    where = "on the edge of" if all(p == 0.0 for _, p in lifted_mounts) else "outside"
    return (f"the centre of gravity lies {where} the region the mounts can carry in"
            f" compression: {which}. Check cg_x, cg_y and mount_positions, or add or move"
            " mounts")


def ratio_note(mount_type: str, ratio: float) -> str:
    """What the dynamic-to-static stiffness ratio changes, and for steel springs that the
    stated ratio is used as given."""
    head = (f"The mounts' dynamic stiffness is κ_d = {format_number(ratio, 3)} times their"
            " static stiffness.")
    if mount_type != "elastomer":
        head += (" A ratio other than 1 is stated for steel springs, whose dynamic and"
                 " static stiffness are normally equal; it is used as stated.")
    return (head + " Static deflection and mount loads use the static stiffness (the maker's"
            " rate); the natural frequency, transmissibility, efficiency and the stiffness the"
            " target needs use the dynamic stiffness, so that f_n = √(κ_d·g/δ_st)/2π.")
