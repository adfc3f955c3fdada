"""block_foundation's working: masses, soil constants, frequencies and amplitudes written onto
the Sheet in reading order, each step a printed equation. The method (method.py) computes
the same numbers; the two must agree (a disagreement is a bug, not a result)."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from reportgen import Paragraph, Sheet
from reportgen.units import STANDARD_GRAVITY

from . import text
from .excitation import parse_balance_grade
from .method import FoundationAnalysis, analyse_block_foundation

_AGREE = 1e-9

#: The job's inputs that analyse_block_foundation takes under the same name.
METHOD_INPUTS = (
    "block_length", "block_width", "block_height", "concrete_density", "machine_mass",
    "machine_cg_height", "machine_cg_x", "machine_cg_y", "machine_inertia_x",
    "machine_inertia_y", "machine_inertia_z", "shear_modulus", "shear_wave_velocity",
    "poisson_ratio", "soil_density", "embedment_depth", "running_speed", "unbalance",
    "balance_grade", "rotor_mass", "force_amplitude", "force_height", "shaft_axis",
)


def analysis(p: Mapping[str, Any]) -> FoundationAnalysis:
    """The method's whole calc from the job's inputs (SI)."""
    return analyse_block_foundation(**{k: p[k] for k in METHOD_INPUTS if k in p})


def _agree(printed: float, method: float, what: str) -> None:
    if not math.isclose(printed, method, rel_tol=_AGREE, abs_tol=1e-300):
        raise AssertionError(f"block_foundation: printed {what} {printed!r} differs from the"
                             f" method's {method!r}")


def masses(s: Sheet, p: Mapping[str, Any], a: FoundationAnalysis) -> float:
    """Block and total mass, mass ratio, centre of gravity, bearing pressure; returns z_G."""
    s.add(Paragraph(title="Masses and centre of gravity", text=(
        "The block is solid concrete; the combined centre of gravity and the moments of"
        " inertia follow from the parallel-axis theorem (a solid rectangular prism about its"
        " centroid: m(b² + h²)/12 about each axis).")))
    L, B, H = p["block_length"], p["block_width"], p["block_height"]
    m_b = s.equation("m_b", "rho_c*L*B*H", "mass", rho_c=p["concrete_density"], L=L, B=B,
                     H=H, key="block_mass", description="Mass of the concrete block")
    m = s.equation("m", "m_b + m_m", "mass", m_b=m_b, m_m=p["machine_mass"],
                   key="total_mass", key_result=True, description="Total vibrating mass")
    mu = s.equation("mu", "m_b/m_m", m_b=m_b, m_m=p["machine_mass"], key="mass_ratio",
                    key_result=True, description="Mass ratio, foundation to machine")
    z_g = s.equation("z_G", "(m_b*H/2 + m_m*h_m)/m", "length", m_b=m_b, H=H,
                     m_m=p["machine_mass"], h_m=p["machine_cg_height"], m=m,
                     description="Height of the combined centre of gravity above the base")
    ecc = [s.equation(f"e_{ax}", f"abs(m_m*{ax}_m)/(m*{dim})", m_m=p["machine_mass"], m=m,
                      description=f"Offset of the combined centre of gravity along {ax}, as a"
                                  f" fraction of the base's {dim}",
                      **{f"{ax}_m": p[f"machine_cg_{ax}"], dim: size})
           for ax, dim, size in (("x", "L", L), ("y", "B", B)) if p[f"machine_cg_{ax}"]]
    s.result("cg_eccentricity", max(ecc, default=0.0), "dimensionless", "e_G",
             "Centre-of-gravity eccentricity (the larger fraction)", key_result=True)
    q = s.equation("q", "m*g_n/(L*B)", "pressure", m=m, g_n=STANDARD_GRAVITY, L=L, B=B,
                   key="static_bearing_pressure", key_result=True,
                   description="Average static bearing pressure under the base")
    for printed, method, what in ((m, a.total_mass, "total mass"), (mu, a.mass_ratio,
                                   "mass ratio"), (z_g, a.mass_properties.z, "z_G"),
                                  (q, a.static_bearing_pressure, "bearing pressure"),
                                  (max(ecc, default=0.0), a.cg_eccentricity, "eccentricity")):
        _agree(printed, method, what)
    return z_g


def soil(s: Sheet, p: Mapping[str, Any], given: frozenset[str], a: FoundationAnalysis,
         z_g: float) -> dict[str, float]:
    """Shear modulus, equivalent radii, the four springs, dashpots and natural frequencies."""
    L, B = p["block_length"], p["block_width"]
    nu, rho = p["poisson_ratio"], p["soil_density"]
    s.add(Paragraph(title="Soil springs and dashpots", text=text.RADII))
    if "shear_modulus" in given:
        g = s.result("shear_modulus", p["shear_modulus"], "pressure", "G",
                     "Shear modulus of the soil (stated)")
    else:
        g = s.equation("G", "rho_s*V_s**2", "pressure", rho_s=rho, V_s=p["shear_wave_velocity"],
                       key="shear_modulus", description="Shear modulus of the soil")
    _agree(g, a.shear_modulus, "shear modulus")
    # the rocking plane is the plane of the horizontal force: along L when the shaft is along y
    along_l = a.shaft_axis == "y"
    l_r, b_r = (L, B) if along_l else (B, L)
    m, props = a.total_mass, a.mass_properties
    r_z = s.equation("r_z", "sqrt(L*B/pi)", "length", L=L, B=B,
                     description="Equivalent radius, vertical and horizontal (equal area)")
    r_p = s.equation("r_psi", "(b*l**3/(3*pi))**0.25", "length", b=b_r, l=l_r,
                     description="Equivalent radius for rocking (equal second moment; l the"
                                 " side in the plane of rocking)")
    r_t = s.equation("r_t", "(L*B*(L**2 + B**2)/(6*pi))**0.25", "length", L=L, B=B,
                     description="Equivalent radius for torsion (equal polar moment)")
    k_z = s.equation("k_z", "4*G*r_z/(1 - nu)", "stiffness", G=g, r_z=r_z, nu=nu,
                     key="vertical_stiffness", key_result=True,
                     description="Vertical stiffness (Lysmer's analog)")
    s.equation("c_z", "3.4*r_z**2*sqrt(G*rho_s)/(1 - nu)", "damping", r_z=r_z, G=g,
               rho_s=rho, nu=nu, key="vertical_damping",
               description="Vertical dashpot (Lysmer's analog)")
    b_z = s.equation("B_z", "(1 - nu)/4*m/(rho_s*r_z**3)", nu=nu, m=m, rho_s=rho, r_z=r_z,
                     description="Modified mass ratio, vertical")
    d_z = s.equation("D_z", "0.425/sqrt(B_z)", B_z=b_z, key="vertical_damping_ratio",
                     key_result=True, description="Damping ratio, vertical")
    f_z = s.equation("f_z", "sqrt(k_z/m)/(2*pi)", "frequency", k_z=k_z, m=m,
                     key="vertical_natural_frequency", key_result=True,
                     description="Vertical natural frequency (undamped)")
    k_x = s.equation("k_x", "32*(1 - nu)*G*r_z/(7 - 8*nu)", "stiffness", nu=nu, G=g, r_z=r_z,
                     key="horizontal_stiffness", key_result=True,
                     description="Horizontal stiffness (Hall's analog)")
    b_x = s.equation("B_x", "(7 - 8*nu)/(32*(1 - nu))*m/(rho_s*r_z**3)", nu=nu, m=m,
                     rho_s=rho, r_z=r_z, description="Modified mass ratio, horizontal")
    s.equation("D_x", "0.2875/sqrt(B_x)", B_x=b_x, key="horizontal_damping_ratio",
               description="Damping ratio, horizontal")
    k_p = s.equation("k_psi", "8*G*r_psi**3/(3*(1 - nu))", "rotational_stiffness", G=g,
                     r_psi=r_p, nu=nu, key="rocking_stiffness", key_result=True,
                     description="Rocking stiffness (Hall's analog)")
    plane = a.excited_plane
    i_g = plane.inertia_cg
    i_0 = s.equation("I_0", "I_G + m*z_G**2", "moment_of_inertia", I_G=i_g, m=m, z_G=z_g,
                     description="Mass moment of inertia about the rocking axis in the base"
                                 " (I_G about the centre of gravity, from the parallel-axis"
                                 " theorem)")
    b_p = s.equation("B_psi", "3*(1 - nu)/8*I_0/(rho_s*r_psi**5)", nu=nu, I_0=i_0, rho_s=rho,
                     r_psi=r_p, description="Modified inertia ratio, rocking")
    s.equation("D_psi", "0.15/((1 + B_psi)*sqrt(B_psi))", B_psi=b_p,
               key="rocking_damping_ratio", description="Damping ratio, rocking")
    s.add(Paragraph(title="Coupled sliding and rocking", text=text.COUPLED))
    gam = s.equation("gamma", "I_G/I_0", I_G=i_g, I_0=i_0,
                     description="Ratio of the inertias about the centre of gravity and the"
                                 " base")
    w_x = s.equation("omega_x", "sqrt(k_x/m)", "angular_frequency", k_x=k_x, m=m,
                     description="Uncoupled sliding frequency (circular)")
    w_p = s.equation("omega_psi", "sqrt(k_psi/I_0)", "angular_frequency", k_psi=k_p, I_0=i_0,
                     description="Uncoupled rocking frequency about the base (circular)")
    f_2 = s.equation("f_2", "sqrt((omega_x**2 + omega_psi**2 + sqrt((omega_x**2 + omega_psi**2)**2"
                     " - 4*gamma*omega_x**2*omega_psi**2))/(2*gamma))/(2*pi)", "frequency",
                     omega_x=w_x, omega_psi=w_p, gamma=gam, key="coupled_frequency_2",
                     key_result=True, description="Upper coupled natural frequency")
    f_1 = s.equation("f_1", "omega_x*omega_psi/(sqrt(gamma)*2*pi*f_2)/(2*pi)", "frequency",
                     omega_x=w_x, omega_psi=w_p, gamma=gam, f_2=f_2,
                     key="coupled_frequency_1", key_result=True,
                     description="Lower coupled natural frequency (the product of the roots"
                                 " over the upper root)")
    k_t = s.equation("k_t", "16*G*r_t**3/3", "rotational_stiffness", G=g, r_t=r_t,
                     key="torsional_stiffness", description="Torsional stiffness")
    f_t = s.equation("f_t", "sqrt(k_t/I_z)/(2*pi)", "frequency", k_t=k_t,
                     I_z=props.inertia_z, key="torsional_natural_frequency", key_result=True,
                     description="Torsional natural frequency (I_z about the vertical axis"
                                 " through the centre of gravity)")
    for printed, method, what in (
            (k_z, a.vertical_stiffness, "k_z"), (d_z, a.vertical_damping_ratio, "D_z"),
            (f_z, a.vertical_natural_frequency, "f_z"), (k_x, a.horizontal_stiffness, "k_x"),
            (k_p, a.rocking_stiffness, "k_psi"), (f_1, a.coupled_frequency_1, "f_1"),
            (f_2, a.coupled_frequency_2, "f_2"), (f_t, a.torsional_natural_frequency, "f_t")):
        _agree(printed, method, what)
    return {"f_z": f_z, "D_z": d_z, "k_z": k_z}


def response(s: Sheet, p: Mapping[str, Any], given: frozenset[str], a: FoundationAnalysis,
             v: Mapping[str, float]) -> None:
    """The running force and the steady amplitudes at the running speed."""
    s.add(Paragraph(title="Response at the running speed", text=(
        "The rotating force of amplitude F_0 acts vertically and horizontally (perpendicular"
        " to the shaft). Amplitudes are single (zero-to-peak) amplitudes.")))
    f = s.result("running_speed", p["running_speed"], "frequency", "f",
                 "Running speed")
    w = s.equation("omega", "2*pi*f", "angular_frequency", f=f,
                   description="Circular frequency of the running speed")
    if "force_amplitude" in given:
        f0 = s.result("force_amplitude", p["force_amplitude"], "force", "F_0",
                      "Force amplitude (stated)")
    else:
        if "unbalance" in given:
            u = s.result("unbalance", p["unbalance"], "mass_length", "U",
                         "Unbalance m·e (stated)")
        else:
            grade = parse_balance_grade(p["balance_grade"])
            u = s.equation("U", "m_r*G_b/omega", "mass_length", m_r=p["rotor_mass"],
                           G_b=grade, omega=w, key="unbalance",
                           description=f"Permissible residual unbalance for balance grade"
                                       f" {p['balance_grade'].strip().upper()}"
                                       " (ISO 21940-11: G = e·ω, G_b in m/s)")
        f0 = s.equation("F_0", "U*omega**2", "force", U=u, omega=w, key="force_amplitude",
                        description="Amplitude of the rotating force at the running speed")
    _agree(f0, a.running_force, "force amplitude")
    r = s.equation("r", "f/f_z", f=f, f_z=v["f_z"], description="Frequency ratio, vertical")
    a_z = s.equation("A_z", "F_0/k_z/sqrt((1 - r**2)**2 + (2*D_z*r)**2)", "length", F_0=f0,
                     k_z=v["k_z"], r=r, D_z=v["D_z"], key="vertical_amplitude",
                     key_result=True, description="Vertical amplitude")
    _agree(a_z, a.vertical_amplitude, "vertical amplitude")
    s.result("horizontal_amplitude", a.horizontal_amplitude, "length", "A_x",
             "Horizontal amplitude at the top of the block (coupled solve)", key_result=True)
    s.result("horizontal_amplitude_at_force", a.horizontal_amplitude_at_force, "length",
             "A_xF", "Horizontal amplitude at the height of the force (coupled solve)")
    s.result("rocking_amplitude", a.rocking_amplitude, "angle", "psi",
             "Rocking amplitude (coupled solve)")
    s.result("bearing_amplitude", a.bearing_amplitude, "length", "A_max",
             "Largest amplitude at the machine: vertical, or horizontal at the force's height")
    s.equation("v_max", "2*pi*f*A_max", "velocity", f=f, A_max=a.bearing_amplitude,
               key="bearing_velocity", description="Largest vibration velocity at the"
                                                   " machine (zero-to-peak)")
