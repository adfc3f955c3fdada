"""forced_response's working: the equations written onto the Sheet in reading order. The
Sheet evaluates each printed formula, so the values that follow are the printed ones."""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from reportgen_plugins.mechanics import (
    absolute_phase_lag_formula,
    amplification_formula,
    amplification_text,
    critical_damping_formula,
    phase_lag_formula,
    quantity_text,
    transmissibility,
    transmission_level,
)
from reportgen_plugins.mechanics.passage import MAX_CYCLES, run_up_cycles, run_up_peak

from reportgen import Sheet
from reportgen.units import format_number

from . import text
from .method import unbalance


@dataclass(frozen=True, slots=True, kw_only=True)
class Printed:
    """The printed values the checks, text and figures read."""

    omega_n: float
    f_n: float
    zeta: float
    c: float
    f: float
    omega: float
    r: float
    D: float
    phi: float
    F_0: float
    X: float
    V: float
    V_rms: float
    F_T: float
    margin: float
    margin_f: float


def write(s: Sheet, kind: str, p: Mapping[str, Any], given: frozenset[str]) -> Printed:
    m, k = p["mass"], p["stiffness"]
    wn = s.equation("omega_n", "sqrt(k/m)", "angular_frequency", k=k, m=m,
                    description="Undamped angular natural frequency")
    fn = s.equation("f_n", "omega_n/(2*pi)", "frequency", omega_n=wn,
                    key="natural_frequency", key_result=True,
                    description="Undamped natural frequency")
    cc = s.equation("c_c", critical_damping_formula(), "damping", k=k, m=m,
                    description="Critical damping coefficient")
    if "damping_coefficient" in given:
        c = p["damping_coefficient"]
        zeta = s.equation("zeta", "c/c_c", key="damping_ratio", c=c, c_c=cc,
                          description="Damping ratio")
    else:
        zeta = p.get("damping_ratio", 0.0)
        s.result("damping_ratio", zeta, "dimensionless", "zeta", "Damping ratio")
        c = s.equation("c", "zeta*c_c", "damping", zeta=zeta, c_c=cc,
                       key="damping_coefficient", description="Damping coefficient")

    if kind == "unbalance":
        f = s.equation("f", "N", "frequency", N=p["speed"],
                       key="forcing_frequency", key_result=True,
                       description="Forcing frequency from the running speed N in rpm"
                                   " (revolutions per minute)")
    else:
        f = s.result("forcing_frequency", p["frequency"], "frequency", "f",
                     "Forcing frequency", key_result=True)
    w = s.equation("omega", "2*pi*f", "angular_frequency", f=f,
                   description="Angular forcing frequency")
    r = s.equation("r", "omega/omega_n", omega=w, omega_n=wn, key="frequency_ratio",
                   key_result=True, description="Frequency ratio")
    dyn = s.equation("D", amplification_formula(), r=r, zeta=zeta,
                     key="dynamic_amplification", key_result=True,
                     description="Dynamic amplification factor")
    if kind == "support":
        phi, x = _support_motion(s, p, given, zeta, r, w, dyn)
        f0 = 0.0
    else:
        phi, x, f0 = _force(s, kind, p, given, m, k, zeta, r, w, dyn)
    v = s.equation("V", "omega*X", "velocity", omega=w, X=x, key="velocity_amplitude",
                   key_result=True, description="Vibration velocity, peak (zero-to-peak)")
    v_rms = s.equation("V_rms", "V/sqrt(2)", "velocity", V=v, key="velocity_rms",
                       description="Vibration velocity, RMS (peak/√2)")
    s.equation("A", "omega**2*X", "acceleration", omega=w, X=x,
               key="acceleration_amplitude", description="Acceleration amplitude")
    if kind == "support":
        f_t = s.equation("F_T", "m*omega**2*X", "force", m=m, omega=w, X=x,
                         key="transmitted_force", key_result=True,
                         description="Force amplitude in the spring and damper,"
                                     " k·Z·√(1 + (2ζr)²), equal to the mass's inertia"
                                     " force m·ω²·X")
    else:
        t_f = s.equation("T_F", "sqrt(1 + (2*zeta*r)**2)*D", zeta=zeta, r=r, D=dyn,
                         key="force_transmissibility",
                         description="Force transmissibility F_T/F_0"
                                     + (f": {amplification_text(transmissibility(r, zeta))}"
                                        if transmissibility(r, zeta) > 1.0 else ""))
        transmission_level(s, t_f, operand="T_F", what="T_F", key="force_transmission_level")
        f_t = s.equation("F_T", "T_F*F_0", "force", T_F=t_f, F_0=f0,
                         key="transmitted_force", key_result=True,
                         description="Amplitude of the force through spring and damper"
                                     " into the support")
    margin = s.equation("M_r", "abs(f - f_n)/f_n", f=f, f_n=fn, key="resonance_margin",
                        key_result=True,
                        description="Resonance margin, relative to the natural frequency")
    margin_f = s.equation("M_f", "abs(f - f_n)/f", f=f, f_n=fn,
                          description="The same separation relative to the forcing"
                                      " frequency, as some practice defines it (for"
                                      " information; not checked)")
    return Printed(omega_n=wn, f_n=fn, zeta=zeta, c=c, f=f, omega=w, r=r, D=dyn, phi=phi,
                   F_0=f0, X=x, V=v, V_rms=v_rms, F_T=f_t, margin=margin, margin_f=margin_f)


def _support_motion(s: Sheet, p: Mapping[str, Any], given: frozenset[str], zeta: float,
                    r: float, w: float, dyn: float) -> tuple[float, float]:
    """Phases, support amplitude, motion transmissibility, X and Z; returns (φ, X)."""
    phi = s.equation("phi", absolute_phase_lag_formula(), "angle", zeta=zeta, r=r,
                     key="phase_lag",
                     description="Phase lag of the mass's absolute motion behind the"
                                 " support motion (0 to π)")
    s.equation("phi_z", phase_lag_formula(), "angle", zeta=zeta, r=r,
               key="relative_phase_lag",
               description="Phase lag of the relative displacement z = x − y behind"
                           " the support motion")
    if "base_acceleration" in given:
        y_amp = s.equation("Y", "a_b/omega**2", "length", a_b=p["base_acceleration"],
                           omega=w, description="Support displacement amplitude from"
                                                " the acceleration amplitude")
    else:
        y_amp = p["base_displacement"]
    tr = s.equation("T", "sqrt(1 + (2*zeta*r)**2)*D", zeta=zeta, r=r, D=dyn,
                    key="motion_transmissibility", key_result=True,
                    description="Motion transmissibility X/Y (absolute motion)"
                                + (f": {amplification_text(transmissibility(r, zeta))}"
                                   if transmissibility(r, zeta) > 1.0 else ""))
    transmission_level(s, tr, key="motion_transmission_level")
    x = s.equation("X", "T*Y", "length", T=tr, Y=y_amp, key="displacement_amplitude",
                   key_result=True,
                   description="Absolute displacement amplitude of the mass")
    s.equation("Z", "r**2*D*Y", "length", r=r, D=dyn, Y=y_amp,
               key="relative_displacement",
               description="Relative displacement amplitude z = x − y (deflection of"
                           " the spring)")
    return phi, x


def _force(s: Sheet, kind: str, p: Mapping[str, Any], given: frozenset[str], m: float,
           k: float, zeta: float, r: float, w: float, dyn: float
           ) -> tuple[float, float, float]:
    """Phase, force amplitude and X of an applied force or unbalance; returns (φ, X, F_0)."""
    phi = s.equation("phi", phase_lag_formula(), "angle", zeta=zeta, r=r,
                     key="phase_lag",
                     description="Phase lag of the displacement behind the force"
                                 " (0 to π)")
    if kind == "force":
        f0 = p["force_amplitude"]
        x_st = s.equation("X_st", "F_0/k", "length", F_0=f0, k=k,
                          key="static_displacement",
                          description="Displacement under a static force F_0")
        x = s.equation("X", "X_st*D", "length", X_st=x_st, D=dyn,
                       key="displacement_amplitude", key_result=True,
                       description="Displacement amplitude")
        return phi, x, f0
    if "unbalance" in given:
        u = p["unbalance"]
    else:
        u = s.equation("U", "m_e*e", "mass_length", m_e=p["unbalance_mass"],
                       e=p["eccentricity"], key="unbalance",
                       description="Rotating unbalance")
    f0 = s.equation("F_0", "U*omega**2", "force", U=u, omega=w,
                    key="unbalance_force",
                    description="Amplitude of the rotating unbalance force")
    x = s.equation("X", "U*r**2*D/m", "length", U=u, m=m, r=r, D=dyn,
                   key="displacement_amplitude", key_result=True,
                   description="Displacement amplitude")
    return phi, x, f0


def passage_amplitude(s: Sheet, kind: str, p: Mapping[str, Any], given: frozenset[str],
                      m: float, k: float, zeta: float, wn: float, f0: float) -> float:
    """The steady-state amplitude at r = 1: what a slow passage through resonance nears."""
    what = "Steady-state amplitude if the excitation dwelt at resonance (r = 1, D = 1/(2ζ))"
    if kind == "unbalance":
        return s.equation("X_res", "U/(2*zeta*m)", "length", U=unbalance(p), m=m,
                          zeta=zeta, description=what)
    if kind == "force":
        return s.equation("X_res", "F_0/(2*zeta*k)", "length", F_0=f0, k=k, zeta=zeta,
                          description=what)
    if "base_displacement" in given:
        return s.equation("X_res", "sqrt(1 + (2*zeta)**2)/(2*zeta)*Y", "length", zeta=zeta,
                          Y=p["base_displacement"], description=what)
    return s.equation("X_res", "sqrt(1 + (2*zeta)**2)/(2*zeta)*a_b/omega_n**2", "length",
                      zeta=zeta, a_b=p["base_acceleration"], omega_n=wn, description=what)


def passage(s: Sheet, kind: str, p: Mapping[str, Any], given: frozenset[str],
            crit: Mapping[str, Any], v: Printed, units: str) -> None:
    """Passage through resonance: a check against max_passage_displacement, with the
    transient of a constant-acceleration run-up when run_up_time is given (else the
    steady amplitude of a dwell at resonance); information when no criterion is given."""
    lead = text.passage_lead(kind, v.r, v.f_n)
    if v.zeta == 0:
        judged = "max_passage_displacement" in crit or (
            crit.get("passage_uses_steady_limits") == "yes" and "max_displacement" in crit)
        s.check("resonance-passage", "Passage through resonance: undamped, the amplitude is"
                " unbounded", status="fail" if judged else "info",
                note=text.passage_note(lead, "State the damping."))
        return
    x_res = passage_amplitude(s, kind, p, given, p["mass"], p["stiffness"], v.zeta,
                              v.omega_n, v.F_0)
    how = ("Steady-state amplitude of a dwell at resonance (no run-up time stated: the"
           " slowest passage).")
    value = x_res
    force_run = None  # the run-up's integrated force into the support, when integrated
    if "run_up_time" in given and kind in ("force", "unbalance"):
        f_end = v.f
        rng = p.get("speed_range")
        if v.r <= 1 and rng is not None and rng[1] > v.f_n:
            f_end = rng[1]  # the run-up crosses f_n on its way to the top of the range
        t_ramp = p["run_up_time"] * f_end / v.f  # the same acceleration, to f_end
        if run_up_cycles(f_end, v.f_n, t_ramp, v.zeta) <= MAX_CYCLES:
            power = 2 if kind == "unbalance" else 0
            run = run_up_peak(f_end, v.f_n, v.zeta, t_ramp, power)
            f_static = (unbalance(p) * (2 * math.pi * f_end) ** 2 if kind == "unbalance"
                        else v.F_0)
            value = s.result("passage_displacement",
                             run.displacement_ratio * f_static / p["stiffness"], "length",
                             "X_pass", "Largest displacement while passing through resonance"
                             " (transient run-up, integrated)")
            force_run = run.force_ratio * f_static
            how = (f"Transient of a run-up from rest at constant acceleration"
                   f" ({format_number(f_end / t_ramp, 3)} Hz/s, from the stated run-up time),"
                   f" integrated in time; the largest displacement occurs at"
                   f" {format_number(run.peak_frequency, 3)} Hz, against"
                   f" {quantity_text(x_res, 'length', units)} for a dwell at resonance.")
        else:
            how = ("Run-up too long to integrate within the cost bound: " + how)
    steady = crit.get("passage_uses_steady_limits") == "yes"
    judged = False
    if steady and "max_transmitted_force" in crit and kind in ("force", "unbalance"):
        passage_force(s, p, v, x_res, force_run, crit["max_transmitted_force"],
                      text.passage_note(lead, how))
        judged = True
    if "max_passage_displacement" in crit:
        s.check("resonance-passage", "Displacement while passing through resonance within"
                " the limit", value=value, limit=crit["max_passage_displacement"],
                comparison="<=", dimension="length", note=text.passage_note(lead, how))
    elif steady and "max_displacement" in crit:
        s.check("resonance-passage", "Displacement while passing through resonance within"
                " the steady-state limit", value=value, limit=crit["max_displacement"],
                comparison="<=", dimension="length",
                note=text.passage_note(lead, how + " The job applies the steady-state"
                                       " displacement limit to the passage."))
    elif not judged:
        s.check("resonance-passage", "Passage through resonance not assessed",
                status="info", value=value, dimension="length",
                note=text.passage_note(lead, how + (
                    " The job applies the steady-state limits to the passage, but gives no"
                    " steady displacement or force limit (max_displacement,"
                    " max_transmitted_force)." if steady else
                    " No passage criterion (max_passage_displacement, or"
                    " passage_uses_steady_limits with max_displacement) is given.")))


def passage_force(s: Sheet, p: Mapping[str, Any], v: Printed, x_res: float,
                  force_run: float | None, limit: float, note: str) -> None:
    """The force into the support while passing resonance, against the steady-state force
    limit: for a dwell at resonance the spring and damper force of its amplitude,
    F = k·X_res·√(1 + (2ζ)²) (Rao §3.6); for a stated run-up the largest |k·x + c·x'| of
    the integrated transient."""
    if force_run is None:
        value = s.equation("F_pass", "k*X_res*sqrt(1 + (2*zeta)**2)", "force",
                           k=p["stiffness"], X_res=x_res, zeta=v.zeta, key="passage_force",
                           description="Force into the support for a dwell at resonance"
                                       " (spring and damper)")
    else:
        value = s.result("passage_force", force_run, "force", "F_pass",
                         "Largest force into the support while passing through resonance"
                         " (transient run-up, integrated: |k·x + c·x'|)")
    s.check("resonance-passage-force", "Force into the support while passing through"
            " resonance within the steady-state limit", value=value, limit=limit,
            comparison="<=", dimension="force",
            note=note + " The job applies the steady-state force limit to the passage.")
