"""isolation's working: the equations written onto the Sheet in reading order. The Sheet
evaluates each printed formula, so the values that follow are the printed ones."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from reportgen_plugins.mechanics import (
    amplification_text,
    frequency_from_deflection_formula,
    peak_ratio_formula,
    transmissibility_formula,
    transmission_level,
)

from reportgen import Paragraph, Sheet
from reportgen.units import STANDARD_GRAVITY

from . import text
from .method import required_ratio, second_moments


@dataclass(frozen=True, slots=True, kw_only=True)
class Isolator:
    """The operating point as printed."""

    f: float
    k: float
    k_m: float
    f_n: float
    delta_st: float
    r: float
    T: float
    eta: float
    k_dyn: float


@dataclass(frozen=True, slots=True, kw_only=True)
class Loads:
    """The mount loads as printed: largest and smallest load, the largest deflection and the
    natural frequencies of the most and least loaded mounts."""

    P_max: float
    P_min: float
    delta_max: float
    f_n_min: float
    f_n_max: float


@dataclass(frozen=True, slots=True, kw_only=True)
class Target:
    """What the isolation target needs, as printed."""

    T_req: float
    r_req: float
    f_n_req: float
    delta_req: float
    k_m_req: float


def operating_point(s: Sheet, p: Mapping[str, Any], given: frozenset[str]) -> Isolator:
    m, n, zeta, g = p["mass"], p["mounts"], p["damping_ratio"], STANDARD_GRAVITY
    if "speed" in given:
        f = s.equation("f", "N", "frequency", N=p["speed"],
                       key="forcing_frequency", key_result=True,
                       description="Forcing frequency (running speed N in rpm)")
    else:
        f = s.result("forcing_frequency", p["frequency"], "frequency", "f",
                     "Forcing frequency", key_result=True)
    k, km = _stiffness(s, p, given, m, n, g)
    kd = k
    if shows_ratio(p):
        kd = s.equation("k_dyn", "kappa_d*k", "stiffness", kappa_d=p["dynamic_stiffness_ratio"],
                        k=k, key="dynamic_stiffness",
                        description="Total dynamic stiffness: the stiffness the vibration"
                                    " sees (static stiffness × dynamic-to-static ratio)")
        fn = s.equation("f_n", "sqrt(k_dyn/m)/(2*pi)", "frequency", k_dyn=kd, m=m,
                        key="natural_frequency", key_result=True,
                        description="Vertical natural frequency on the mounts (dynamic"
                                    " stiffness)")
    else:
        fn = s.equation("f_n", "sqrt(k/m)/(2*pi)", "frequency", k=k, m=m,
                        key="natural_frequency", key_result=True,
                        description="Vertical natural frequency on the mounts")
    dst = s.equation("delta_st", "m*g_n/k", "length", m=m, g_n=g, k=k,
                     key="static_deflection", key_result=True,
                     description="Static deflection (mean over the mounts)")
    s.result("damping_ratio", zeta, "dimensionless", "zeta", "Damping ratio of the mounts")
    r = s.equation("r", "f/f_n", f=f, f_n=fn, key="frequency_ratio",
                   description="Frequency ratio")
    t = s.equation("T", transmissibility_formula(), zeta=zeta, r=r, key="transmissibility",
                   key_result=True, description="Transmissibility at the running speed")
    amplifies = t > 1.0
    eta = s.equation("eta", "1 - T", T=t, key="isolation_efficiency", key_result=True,
                     description=(f"Isolation efficiency: none, the mounts give"
                                  f" {amplification_text(t)}" if amplifies else
                                  "Isolation efficiency"))
    transmission_level(s, t, key="isolation_db")
    return Isolator(f=f, k=k, k_m=km, f_n=fn, delta_st=dst, r=r, T=t, eta=eta, k_dyn=kd)


def _stiffness(s: Sheet, p: Mapping[str, Any], given: frozenset[str], m: float, n: int,
               g: float) -> tuple[float, float]:
    if "stiffness" in given:
        k = s.result("stiffness", p["stiffness"], "stiffness", "k",
                     "Total vertical stiffness")
        km = s.equation("k_m", "k/n", "stiffness", k=k, n=n, key="stiffness_per_mount",
                        description="Stiffness of each mount (equal mounts)")
    elif "stiffness_per_mount" in given:
        km = s.result("stiffness_per_mount", p["stiffness_per_mount"], "stiffness", "k_m",
                      "Stiffness of each mount")
        k = s.equation("k", "n*k_m", "stiffness", n=n, k_m=km, key="stiffness",
                       description="Total vertical stiffness (mounts in parallel)")
    else:
        if "static_deflection" in given:
            k = s.equation("k", "m*g_n/delta_st", "stiffness", m=m, g_n=g,
                           delta_st=p["static_deflection"], key="stiffness",
                           description="Total vertical stiffness from the stated static"
                                       " deflection")
        elif shows_ratio(p):
            k = s.equation("k", "m*(2*pi*f_n)**2/kappa_d", "stiffness", m=m,
                           f_n=p["natural_frequency"], kappa_d=p["dynamic_stiffness_ratio"],
                           key="stiffness",
                           description="Total vertical static stiffness from the stated"
                                       " natural frequency (a dynamic value)")
        else:
            k = s.equation("k", "m*(2*pi*f_n)**2", "stiffness", m=m,
                           f_n=p["natural_frequency"], key="stiffness",
                           description="Total vertical stiffness from the stated natural"
                                       " frequency")
        km = s.equation("k_m", "k/n", "stiffness", k=k, n=n, key="stiffness_per_mount",
                        description="Stiffness of each mount (equal mounts)")
    return k, km


def mount_loads(s: Sheet, p: Mapping[str, Any], loads: tuple[float, ...], iso: Isolator,
                uneven: bool, units: str) -> Loads:
    m, n, g, km = p["mass"], p["mounts"], STANDARD_GRAVITY, iso.k_m
    s.declare(P_max="force", P_min="force")
    w = s.equation("W", "m*g_n", "force", m=m, g_n=g, key="weight",
                   description="Weight carried by the mounts")
    pmax, pmin = max(loads), min(loads)
    if not uneven:
        s.equation("P_m", "W/n", "force", W=w, n=n, key="load_per_mount",
                   key_result=True, description="Load on each mount (equal sharing)")
        dmax = s.result("largest_static_deflection", iso.delta_st, "length", "delta_max",
                        "Static deflection of the most heavily loaded mount")
        s.result("mount_natural_frequency_min", iso.f_n, "frequency", "f_n_min",
                 "Natural frequency from the largest mount deflection")
        s.result("mount_natural_frequency_max", iso.f_n, "frequency", "f_n_max",
                 "Natural frequency from the smallest mount deflection")
        return Loads(P_max=pmax, P_min=pmin, delta_max=dmax, f_n_min=iso.f_n,
                     f_n_max=iso.f_n)
    s.add(Paragraph(title="Load sharing", text=text.sharing(p, loads, units)))
    pmax = _sharing_equation(s, p, loads, w)
    s.result("minimum_load_per_mount", pmin, "force", "P_min",
             "Smallest mount load (by statics)")
    dmax = s.equation("delta_max", "P_max/k_m", "length", P_max=pmax, k_m=km,
                      key="largest_static_deflection",
                      description="Static deflection of the most heavily loaded mount")
    if shows_ratio(p):  # elastomer: f_n = √(κ_d·g/δ_st)/2π (the dynamic stiffness)
        kap = {"kappa_d": p["dynamic_stiffness_ratio"]}
        fn_lo = s.equation("f_n_min", "sqrt(kappa_d*g_n/delta_max)/(2*pi)", "frequency",
                           g_n=g, delta_max=dmax, key="mount_natural_frequency_min",
                           description="Natural frequency from the largest mount"
                                       " deflection (dynamic stiffness)", **kap)
        fn_hi = s.equation("f_n_max", "sqrt(kappa_d*g_n*k_m/P_min)/(2*pi)", "frequency",
                           g_n=g, k_m=km, P_min=pmin, key="mount_natural_frequency_max",
                           description="Natural frequency from the least loaded mount's"
                                       " deflection (dynamic stiffness)", **kap)
        return Loads(P_max=pmax, P_min=pmin, delta_max=dmax, f_n_min=fn_lo, f_n_max=fn_hi)
    fn_lo = s.equation("f_n_min", frequency_from_deflection_formula("delta_max"), "frequency",
                       g_n=g, delta_max=dmax, key="mount_natural_frequency_min",
                       description="Natural frequency from the largest mount"
                                   " deflection")
    fn_hi = s.equation("f_n_max", "sqrt(g_n*k_m/P_min)/(2*pi)", "frequency",
                       g_n=g, k_m=km, P_min=pmin, key="mount_natural_frequency_max",
                       description="Natural frequency from the least loaded mount's"
                                   " deflection")
    return Loads(P_max=pmax, P_min=pmin, delta_max=dmax, f_n_min=fn_lo, f_n_max=fn_hi)


def _sharing_equation(s: Sheet, p: Mapping[str, Any], loads: tuple[float, ...],
                      w: float) -> float:
    pts = np.asarray(p["mount_positions"], dtype=float)
    s.declare(e_x="length", e_y="length", S_xx="area", S_yy="area", S_xy="area",
              x_c="length", y_c="length",
              **{f"{a}_{i + 1}": "length" for i in range(len(pts)) for a in "xy"})
    xc, yc = float(pts[:, 0].mean()), float(pts[:, 1].mean())
    sxx, syy, sxy = second_moments(pts)
    ex, ey = p["cg_x"] - xc, p["cg_y"] - yc
    # a load gradient (N per m of position) has the units of a stiffness
    bx = s.equation("b_x", "W*(e_x*S_yy - e_y*S_xy)/(S_xx*S_yy - S_xy**2)", "stiffness",
                    W=w, e_x=ex, e_y=ey, S_xx=sxx, S_yy=syy, S_xy=sxy,
                    description="Change of mount load per metre in x (moment equilibrium)")
    by = s.equation("b_y", "W*(e_y*S_xx - e_x*S_xy)/(S_xx*S_yy - S_xy**2)", "stiffness",
                    W=w, e_x=ex, e_y=ey, S_xx=sxx, S_yy=syy, S_xy=sxy,
                    description="Change of mount load per metre in y (moment equilibrium)")
    i = int(np.argmax(loads))
    xi, yi = f"x_{i + 1}", f"y_{i + 1}"
    return s.equation(
        f"P_{i + 1}", f"W/n + b_x*({xi} - x_c) + b_y*({yi} - y_c)", "force",
        key="load_per_mount", key_result=True, symbol="P_max",
        description=f"Largest mount load (mount {i + 1}, by statics)",
        **{"W": w, "n": len(loads), "b_x": bx, "b_y": by, xi: pts[i, 0], yi: pts[i, 1],
           "x_c": xc, "y_c": yc})


def target(s: Sheet, p: Mapping[str, Any], eta_min: float, f: float) -> Target:
    m, n, zeta, g = p["mass"], p["mounts"], p["damping_ratio"], STANDARD_GRAVITY
    s.declare(eta_min="dimensionless", r_req="dimensionless")
    s.add(Paragraph(title="Mounts the isolation target needs", text=text.TARGET))
    t_req = s.equation("T_req", "1 - eta_min", eta_min=eta_min,
                       description="Largest transmissibility the target allows")
    r0 = s.equation("r_0", "sqrt(1 + 1/T_req)", T_req=t_req,
                    key="undamped_required_frequency_ratio",
                    description="Undamped handbook form: T = 1/(r² − 1) gives"
                                " r² = 1 + 1/T (ζ = 0 only)")
    kap = p["dynamic_stiffness_ratio"] if shows_ratio(p) else None
    if kap is None:
        s.equation("delta_0", "g_n*(r_0/(2*pi*f))**2", "length", g_n=g, r_0=r0, f=f,
                   key="undamped_required_static_deflection",
                   description="Required static deflection by the undamped handbook form")
    else:
        s.equation("delta_0", "kappa_d*g_n*(r_0/(2*pi*f))**2", "length", g_n=g, r_0=r0, f=f,
                   kappa_d=kap, key="undamped_required_static_deflection",
                   description="Required static deflection by the undamped handbook form"
                               " (elastomer: f_n = √(κ_d·g/δ_st)/2π)")
    r_req = required_ratio(t_req, zeta)
    s.add(Paragraph(text=text.root(zeta, r_req)))
    s.result("required_frequency_ratio", r_req, "dimensionless", "r_req",
             "Frequency ratio that just meets the target (stated damping)")
    s.equation("T_req", transmissibility_formula("r_req"), zeta=zeta, r_req=r_req,
               description="Damped transmissibility at the root (equals T_req)")
    fn_req = s.equation("f_n_req", "f/r_req", "frequency", f=f, r_req=r_req,
                        key="required_natural_frequency", key_result=True,
                        description="Highest natural frequency that meets the target")
    if kap is None:
        d_req = s.equation("delta_req", "g_n/(2*pi*f_n_req)**2", "length", g_n=g,
                           f_n_req=fn_req, key="required_static_deflection", key_result=True,
                           description="Smallest mean static deflection that meets the"
                                       " target")
        km_req = s.equation("k_m_req", "m*(2*pi*f_n_req)**2/n", "stiffness", m=m,
                            f_n_req=fn_req, n=n, key="required_stiffness_per_mount",
                            key_result=True,
                            description="Largest stiffness of each mount (n equal mounts)")
    else:
        d_req = s.equation("delta_req", "kappa_d*g_n/(2*pi*f_n_req)**2", "length", g_n=g,
                           f_n_req=fn_req, kappa_d=kap, key="required_static_deflection",
                           key_result=True, description="Smallest mean static deflection"
                           " that meets the target (static stiffness)")
        kd_req = s.equation("k_dyn_m_req", "m*(2*pi*f_n_req)**2/n", "stiffness", m=m,
                            f_n_req=fn_req, n=n, key="required_dynamic_stiffness_per_mount",
                            description="Largest dynamic stiffness of each mount (n equal"
                                        " mounts)")
        km_req = s.equation("k_m_req", "k_dyn_m_req/kappa_d", "stiffness",
                            k_dyn_m_req=kd_req, kappa_d=kap,
                            key="required_stiffness_per_mount", key_result=True,
                            description="Largest static stiffness of each mount (the"
                                        " maker's rate): required dynamic stiffness / κ_d")
    s.result("required_stiffness", km_req * n, "stiffness", "k_req",
             "Largest total vertical stiffness that meets the target")
    return Target(T_req=t_req, r_req=r_req, f_n_req=fn_req, delta_req=d_req, k_m_req=km_req)


def shows_ratio(p: Mapping[str, Any]) -> bool:
    """The dynamic stiffness is written out for elastomers and for any stated ratio ≠ 1;
    steel springs at ratio 1 print as they always have."""
    return (p.get("mount_type") == "elastomer"
            or (p.get("dynamic_stiffness_ratio") or 1.0) != 1.0)


def peak(s: Sheet, zeta: float) -> float:
    """The transmissibility peak passed at start-up and shut-down (inf undamped)."""
    if zeta == 0:
        s.add(Paragraph(title="Resonance at start-up and shut-down", text=text.UNDAMPED_PEAK))
        return math.inf
    s.add(Paragraph(title="Resonance at start-up and shut-down", text=text.PEAK))
    rp = s.equation("r_p", peak_ratio_formula(), zeta=zeta,
                    key="peak_frequency_ratio",
                    description="Frequency ratio of the transmissibility peak")
    return s.equation("T_p", transmissibility_formula("r_p"), zeta=zeta, r_p=rp,
                      key="peak_transmissibility", description="Peak transmissibility (exact)")
