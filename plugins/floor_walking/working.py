"""floor_walking's working: the bay's modes and the walking check written onto the Sheet in
reading order, each step a printed equation. The method modules compute the same numbers;
the two must agree (a disagreement is a bug, not a result)."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from reportgen import Paragraph, Sheet
from reportgen.units import STANDARD_GRAVITY

from . import text
from .bay import (
    BEAM_COEFFICIENTS,
    DYNAMIC_CONCRETE_FACTOR,
    FREQUENCY_COEFFICIENT,
    GIRDER_COEFFICIENTS,
    BayModes,
    bay_modes,
    dynamic_modular_ratio,
)
from .equipment import (
    IMPULSE_BODY_WEIGHT,
    IMPULSE_DIVISOR,
    EquipmentResponse,
    equipment_response,
)
from .method import FLOOR_EXCITATION, FORCE_DECAY, WalkingResponse, walking_response

#: Printed and method values must agree to this relative difference (both are float64).
_AGREE = 1e-9


def _agree(printed: float, method: float, what: str) -> None:
    if not math.isclose(printed, method, rel_tol=_AGREE, abs_tol=1e-300):
        raise AssertionError(f"floor_walking: printed {what} {printed!r} differs from the"
                             f" method's {method!r}")


def modular_ratio(p: Mapping[str, Any], given: frozenset[str]) -> float:
    """n as stated, else the dynamic modular ratio from the concrete's density and strength."""
    if "modular_ratio" in given:
        return p["modular_ratio"]
    return dynamic_modular_ratio(p["elastic_modulus"], p["concrete_density"],
                                 p["concrete_strength"])


def bay_inputs(p: Mapping[str, Any], given: frozenset[str]) -> dict[str, Any]:
    """The keyword arguments of bay.bay_modes from the job's inputs."""
    return dict(beam_span=p["beam_span"], beam_spacing=p["beam_spacing"],
                beam_inertia=p["beam_inertia"], girder_span=p["girder_span"],
                girder_inertia=p["girder_inertia"], elastic_modulus=p["elastic_modulus"],
                dead_load=p["dead_load"], live_load_present=p["live_load_present"],
                slab_depth=p["slab_depth"], modular_ratio=modular_ratio(p, given),
                bay_position=p["bay_position"], girder_connection=p["girder_connection"],
                floor_width=p.get("floor_width"), floor_length=p.get("floor_length"))


def bay(s: Sheet, p: Mapping[str, Any], given: frozenset[str]) -> BayModes:
    """The bay route: deflections, member and combined frequencies, widths and weights."""
    modes = bay_modes(**bay_inputs(p, given))
    s.add(Paragraph(title="Natural frequency and effective weight of the bay",
                    text=text.BAY_METHOD))
    g, e_s = STANDARD_GRAVITY, p["elastic_modulus"]
    s.result("elastic_modulus", e_s, "pressure", "E_s", "Elastic modulus of the steel"
             + (" (stated)" if "elastic_modulus" in given else " (structural steel, 200 GPa,"
                " not stated)"))
    l_j, s_j, l_g = p["beam_span"], p["beam_spacing"], p["girder_span"]
    w = s.equation("w", "D + L_p", "pressure", D=p["dead_load"], L_p=p["live_load_present"],
                   description="Supported load per unit area in service (dead load and the"
                               " live load present)")
    w_j = s.equation("w_j", "w*S", "force_per_length", w=w, S=s_j,
                     description="Uniform load on a beam")
    d_j = s.equation("Delta_j", "5*w_j*L_j**4/(384*E_s*I_j)", "length", w_j=w_j, L_j=l_j,
                     E_s=e_s, I_j=p["beam_inertia"], key="beam_deflection",
                     description="Midspan deflection of a beam under its load")
    f_j = s.equation("f_j", f"{FREQUENCY_COEFFICIENT}*sqrt(g_n/Delta_j)", "frequency",
                     g_n=g, Delta_j=d_j, key="beam_frequency",
                     description="Beam panel-mode frequency")
    w_g = s.equation("w_g", "w*L_j", "force_per_length", w=w, L_j=l_j,
                     description="Uniform load on a girder (the beams' reactions)")
    d_g = s.equation("Delta_g", "5*w_g*L_g**4/(384*E_s*I_g)", "length", w_g=w_g, L_g=l_g,
                     E_s=e_s, I_g=p["girder_inertia"], key="girder_deflection",
                     description="Midspan deflection of a girder under its load")
    f_g = s.equation("f_g", f"{FREQUENCY_COEFFICIENT}*sqrt(g_n/Delta_g)", "frequency",
                     g_n=g, Delta_g=d_g, key="girder_frequency",
                     description="Girder panel-mode frequency")
    for printed, method, what in ((d_j, modes.beam_deflection, "beam deflection"),
                                  (d_g, modes.girder_deflection, "girder deflection"),
                                  (f_j, modes.beam_frequency, "beam frequency"),
                                  (f_g, modes.girder_frequency, "girder frequency")):
        _agree(printed, method, what)
    n = _modular(s, p, given)
    d_s = s.equation("D_s", "d_e**3/(12*n)", "second_moment_of_area", d_e=p["slab_depth"],
                     n=n, description="Transformed slab moment of inertia per unit width"
                                      " (m⁴/m, printed per metre of width)")
    d_jw = s.equation("D_j", "I_j/S", "second_moment_of_area", I_j=p["beam_inertia"], S=s_j,
                      description="Beam moment of inertia per unit width (m⁴/m)")
    d_gw = s.equation("D_g", "I_g/L_j", "second_moment_of_area", I_g=p["girder_inertia"],
                      L_j=l_j, description="Girder moment of inertia per unit width (m⁴/m)")
    b_j = _width(s, "B_j", "C_j", BEAM_COEFFICIENTS[p["bay_position"]], "D_s", d_s, "D_j",
                 d_jw, "L_j", l_j, p.get("floor_width"), "B_floor",
                 f"Beam panel effective width ({p['bay_position']} bay)")
    b_g = _width(s, "B_g", "C_g", GIRDER_COEFFICIENTS[p["girder_connection"]], "D_j", d_jw,
                 "D_g", d_gw, "L_g", l_g, p.get("floor_length"), "L_floor",
                 f"Girder panel effective width (beams framed into the girder"
                 f" {p['girder_connection']})")
    _agree(b_j, modes.beam_width.width, "beam panel width")
    _agree(b_g, modes.girder_width.width, "girder panel width")
    wt_j = s.equation("W_j", "w*B_j*L_j", "force", w=w, B_j=b_j, L_j=l_j,
                      description="Effective weight of the beam panel")
    wt_g = s.equation("W_g", "w*B_g*L_g", "force", w=w, B_g=b_g, L_g=l_g,
                      description="Effective weight of the girder panel")
    d_gu = d_g
    if modes.girder_deflection_factor != 1.0:
        d_gu = s.equation("Delta_g_r", "max(0.5, min(1, L_g/B_j))*Delta_g", "length",
                          L_g=l_g, B_j=b_j, Delta_g=d_g,
                          description="Girder deflection reduced: the girder span is less"
                                      " than the beam panel width, which restrains the"
                                      " combined mode (0.5 ≤ L_g/B_j ≤ 1)")
    dg = "Delta_g" if d_gu is d_g else "Delta_g_r"
    f_n = s.equation("f_n", f"{FREQUENCY_COEFFICIENT}*sqrt(g_n/(Delta_j + {dg}))",
                     "frequency", g_n=g, Delta_j=d_j, key="natural_frequency", **{dg: d_gu},
                     key_result=True, description="Fundamental frequency of the combined"
                                                  " beam-and-girder mode")
    w_eff = s.equation("W", f"(Delta_j*W_j + {dg}*W_g)/(Delta_j + {dg})", "force",
                       Delta_j=d_j, W_j=wt_j, W_g=wt_g, key="effective_weight", **{dg: d_gu},
                       key_result=True, description="Effective weight of the combined mode")
    _agree(f_n, modes.natural_frequency, "natural frequency")
    _agree(w_eff, modes.effective_weight, "effective weight")
    return modes


def _modular(s: Sheet, p: Mapping[str, Any], given: frozenset[str]) -> float:
    if "modular_ratio" in given:
        return s.result("modular_ratio", p["modular_ratio"], "dimensionless", "n",
                        "Dynamic modular ratio (stated)")
    e_c = s.equation("E_c", "43*rho_c**1.5*sqrt(f_c)", "pressure",
                     rho_c=p["concrete_density"], f_c=p["concrete_strength"],
                     description="Static modulus of the concrete, ACI 318-19 Eq. 19.2.2.1.a"
                                 " (0.043·w_c^1.5·√f'c in MPa, written here in Pa)")
    return s.equation("n", f"E_s/({DYNAMIC_CONCRETE_FACTOR}*E_c)", E_s=p["elastic_modulus"],
                      E_c=e_c, key="modular_ratio",
                      description="Dynamic modular ratio (concrete 1.35 times stiffer under"
                                  " vibration than under sustained load)")


def _width(s: Sheet, name: str, coef: str, c: float, top: str, d_top: float, bottom: str,
           d_bottom: float, span: str, length: float, floor: float | None, floor_name: str,
           description: str) -> float:
    ops = {coef: c, top: d_top, bottom: d_bottom, span: length}
    expr = f"{coef}*({top}/{bottom})**0.25*{span}"
    if floor is None:
        return s.equation(name, expr, "length", description=description, **ops)
    ops[floor_name] = floor
    return s.equation(name, f"min({expr}, 2/3*{floor_name})", "length",
                      description=description + ", not more than ⅔ of the floor's extent",
                      **ops)


def walking(s: Sheet, f_n: float, weight: float, beta: float, p0: float,
            limit: float) -> WalkingResponse:
    """The walking check of DG11 Eq. 4-1 as printed, and the method's evaluation of it."""
    resp = walking_response(natural_frequency=f_n, effective_weight=weight, damping_ratio=beta,
                            excitation_force=p0, limit_ratio=limit)
    s.add(Paragraph(title="Peak acceleration under walking", text=text.METHOD))
    ratio = s.equation("A_p", f"P_0*exp(-{FORCE_DECAY}*f_n)/(beta*W)", P_0=p0, f_n=f_n,
                       beta=beta, W=weight, key="peak_acceleration_ratio", key_result=True,
                       description="Peak acceleration as a fraction of g, a_p/g")
    a_p = s.equation("a_p", "A_p*g_n", "acceleration", A_p=ratio, g_n=STANDARD_GRAVITY,
                     key="peak_acceleration", key_result=True,
                     description="Peak acceleration")
    s.result("limit_acceleration_ratio", limit, "dimensionless", "A_0",
             "Tolerance a0/g of the occupancy", key_result=True)
    rl = s.equation("R_lim", "A_p/A_0", A_p=ratio, A_0=limit, key="ratio_to_limit",
                    key_result=True, description="Ratio of the peak acceleration to the"
                                                 " tolerance")
    _agree(ratio, resp.peak_acceleration_ratio, "a_p/g")
    _agree(a_p, resp.peak_acceleration, "a_p")
    _agree(rl, resp.ratio_to_limit, "ratio to limit")
    return resp


def equipment(s: Sheet, f_n: float, weight: float, beta: float, pace: str, name: str,
              v_crit: float) -> EquipmentResponse:
    """The sensitive-equipment check as printed (the guide's Ch. 6 approach through the
    floor's modal oscillator), and the method's evaluation of it."""
    resp = equipment_response(natural_frequency=f_n, effective_weight=weight,
                              damping_ratio=beta, walking_pace=pace,
                              criterion_velocity=v_crit)
    s.add(Paragraph(title="Sensitive equipment: floor velocity under a walker",
                    text=" ".join(resp.limits)))
    g = STANDARD_GRAVITY
    m = s.equation("M", "W/(2*g_n)", "mass", W=weight, g_n=g, key="modal_mass",
                   description="Modal mass of the floor's fundamental mode")
    f_s = s.result("step_frequency", resp.step_frequency, "frequency", "f_s",
                   f"Footstep frequency ({pace} walking)")
    if resp.regime == "resonant":
        a_e = s.equation("a_e", f"P_0*exp(-{FORCE_DECAY}*f_n)*g_n/(beta*W)", "acceleration",
                         P_0=FLOOR_EXCITATION, f_n=f_n, g_n=g, beta=beta, W=weight,
                         description="Steady resonant acceleration under walking (the guide's"
                                     " walking equation, P0 = 0.29 kN)")
        v_p = s.equation("v_p", "a_e/(2*pi*f_n)", "velocity", a_e=a_e, f_n=f_n,
                         description="Peak velocity of the resonant response")
        v = s.equation("v_rms", "v_p/sqrt(2)", "velocity", v_p=v_p, key="velocity_rms",
                       key_result=True, description="rms velocity of the floor")
    else:
        i_eff = s.equation("I_eff", f"f_s**1.43/f_n**1.30*Q/{IMPULSE_DIVISOR}",
                           f_s=f_s, f_n=f_n, Q=IMPULSE_BODY_WEIGHT,
                           dims={"f_s": "frequency", "Q": "dimensionless"},  # Q in N: empirical
                           description="Effective footstep impulse (N·s; frequencies in Hz,"
                                       " Q = 747 N)")
        v_p = s.equation("v_p", "I_eff/M", "velocity", I_eff=i_eff, M=m,
                         description="Peak velocity after one footstep")
        h = s.equation("h", "f_n/f_s", f_n=f_n, f_s=f_s, dims={"f_s": "frequency"},
                       description="Cycles of the floor per footstep")
        v = s.equation("v_rms", "v_p/sqrt(2)*sqrt((1 - exp(-4*pi*beta*h))/(4*pi*beta*h))",
                       "velocity", v_p=v_p, beta=beta, h=h, key="velocity_rms",
                       key_result=True, description="rms velocity over one step period")
    s.result("criterion_velocity", v_crit, "velocity", "V_c",
             f"Criterion {name} at the floor's frequency (one-third-octave band rms)",
             key_result=True)
    ratio = s.equation("R_v", "v_rms/V_c", v_rms=v, V_c=v_crit,
                       key="velocity_ratio_to_limit", key_result=True, dims={"V_c": "velocity"},
                       description="Ratio of the floor velocity to the criterion")
    _agree(v, resp.velocity_rms, "floor velocity")
    _agree(ratio, resp.ratio_to_limit, "velocity ratio")
    return resp
