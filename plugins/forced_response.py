"""forced_response: steady-state response of m·x'' + c·x' + k·x = F(t) to a harmonic excitation.

An applied force, a rotating unbalance or a harmonic support motion; amplitude, phase,
velocity, acceleration, transmitted force and the resonance margin, verified independently
by the transfer function (scipy.signal.freqresp) and by time integration (solve_ivp).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
from reportgen_plugins.free_vibration import damping_inputs

from reportgen import (
    Assumptions,
    Band,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    Figure,
    InputSpec,
    Marker,
    Note,
    Panel,
    Paragraph,
    Series,
    Sheet,
    Source,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.calc import linear_validity_check
from reportgen.units import format_number, table_display

__version__ = "0.1.0"

THOMSON = Source(key="thomson-ch3", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed.,"
    " Prentice Hall, 1998: Ch. 3, harmonically excited vibration (forced damped response,"
    " rotating unbalance, support motion, transmissibility)."))
RAO = Source(key="rao-ch3", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: Ch. 3, harmonically excited"
    " vibration (Secs. 3.4-3.7)."))

#: The three excitation groups and the inputs that belong to each.
EXCITATIONS: dict[str, tuple[str, ...]] = {
    "force": ("force_amplitude",),
    "unbalance": ("unbalance", "unbalance_mass", "eccentricity"),
    "support": ("base_displacement", "base_acceleration"),
}
_EXCITATION_NAMES = {"force": "applied force", "unbalance": "rotating unbalance",
                     "support": "support motion"}
#: Undamped and |r - 1| below this: the steady state does not exist (unbounded growth).
RESONANCE_TOLERANCE = 1e-6
#: Frequency-ratio limits of the regime statement (common practice, no source).
STIFFNESS_CONTROLLED_BELOW = 0.5
MASS_CONTROLLED_ABOVE = 1.5
_PLOT_POINTS = 600
#: Above this many natural periods per forcing period the time-integration check is not run
#: (it would take seconds); the transfer-function check still is.
MAX_ODE_COST = 20.0


class ForcedResponse(CalcType):
    name = "forced_response"
    title = "Steady-state forced response of a single-degree-of-freedom system"
    version = __version__
    api_version = 1
    purpose = ("Determine the steady-state vibration of the supported mass at its running"
               " speed and the force it passes into the support, modelled as"
               " m·x'' + c·x' + k·x = F(t) with a harmonic excitation.")
    inputs = (
        InputSpec(name="mass", symbol="m",
                  description="Vibrating mass (for an unbalance: the whole machine, rotor"
                              " included)", dimension="mass", positive=True, minimum=1e-3,
                  maximum=1e8),
        InputSpec(name="stiffness", symbol="k", description="Total support stiffness",
                  dimension="stiffness", positive=True, minimum=1.0, maximum=1e13),
        *damping_inputs(),
        InputSpec(name="force_amplitude", symbol="F_0",
                  description="Amplitude of the applied harmonic force", dimension="force",
                  required=False, positive=True, maximum=1e9),
        InputSpec(name="unbalance", symbol="U", description="Rotating unbalance m_e·e",
                  dimension="mass_length", required=False, positive=True, maximum=1e4),
        InputSpec(name="unbalance_mass", symbol="m_e", description="Unbalance mass",
                  dimension="mass", required=False, positive=True, maximum=1e6),
        InputSpec(name="eccentricity", symbol="e",
                  description="Eccentricity of the unbalance mass", dimension="length",
                  required=False, positive=True, maximum=10.0),
        InputSpec(name="base_displacement", symbol="Y",
                  description="Amplitude of the support displacement (zero-to-peak)",
                  dimension="length", required=False, positive=True, maximum=10.0),
        InputSpec(name="base_acceleration", symbol="a_b",
                  description="Amplitude of the support acceleration (zero-to-peak)",
                  dimension="acceleration", required=False, positive=True, maximum=1e5),
        InputSpec(name="frequency", symbol="f",
                  description="Forcing frequency (applied force or support motion)",
                  dimension="frequency", required=False, positive=True, maximum=1e5),
        InputSpec(name="speed", symbol="N",
                  description="Running speed of the rotating unbalance",
                  dimension="frequency", required=False, positive=True, maximum=1e4),
        InputSpec(name="speed_range", symbol="N_range",
                  description="Speed range of the run-up plot", dimension="frequency",
                  required=False, kind="pair", minimum=0.0, maximum=1e4),
    )
    criteria = (
        InputSpec(name="min_resonance_margin", symbol="M_min",
                  description="Least separation |f − f_n|/f_n of forcing and natural frequency",
                  default=0.2, minimum=0.0, maximum=1.0,
                  default_note="common practice, no source"),
        InputSpec(name="max_displacement", symbol="X_max",
                  description="Largest acceptable displacement amplitude (zero-to-peak)",
                  dimension="length", required=False, positive=True),
        InputSpec(name="max_velocity", symbol="V_max",
                  description="Largest acceptable vibration velocity, peak (zero-to-peak)",
                  dimension="velocity", required=False, positive=True),
        InputSpec(name="max_transmitted_force", symbol="F_T,max",
                  description="Largest acceptable force amplitude into the support",
                  dimension="force", required=False, positive=True),
    )
    sources = (THOMSON, RAO)
    verification_cases = (
        VerificationCase(id="B1_forced_applied_force",
                         description="Harmonic force below resonance: r, D, X, phase, F_T",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="B2_resonance_amplification",
                         description="Amplification 1/(2ζ) and phase 90° at r = 1",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="B3_forced_rotating_unbalance",
                         description="Rotating unbalance above resonance: X, phase, F_T",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="B4_forced_base_motion",
                         description="Support motion at r = 3: absolute and relative motion,"
                                     " phase, force in spring and damper",
                         source=RAO.citation, status="formula_confirmed_example_invented"),
    )

    # ------------------------------------------------------------------ validation

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        if {"damping_ratio", "damping_coefficient"} <= given:
            problems.append(("inputs.damping_coefficient",
                             "give damping as damping_ratio or as damping_coefficient, not both"))
        present = {g: [n for n in names if n in given] for g, names in EXCITATIONS.items()}
        present = {g: names for g, names in present.items() if names}
        if not present:
            problems.append(("inputs", "no excitation given: give exactly one of"
                             " force_amplitude (with frequency); unbalance, or unbalance_mass"
                             " with eccentricity (with speed); base_displacement or"
                             " base_acceleration (with frequency)"))
            return problems
        if len(present) > 1:
            found = [n for names in present.values() for n in names]
            kinds = " and ".join(_EXCITATION_NAMES[g] for g in present)
            second = list(present.values())[1][0]
            problems.append((f"inputs.{second}", "give exactly one excitation; found "
                             + ", ".join(found) + f" ({kinds})"))
            return problems
        kind = next(iter(present))
        problems += _excitation_problems(kind, given)
        if problems:
            return problems
        m, k = inputs.get("mass"), inputs.get("stiffness")
        if m is None or k is None:
            return problems
        zeta = _damping_ratio(inputs, given, m, k)
        field = "speed" if kind == "unbalance" else "frequency"
        f = inputs[field]
        fn = math.sqrt(k / m) / (2 * math.pi)
        if zeta == 0 and abs(f / fn - 1.0) <= RESONANCE_TOLERANCE:
            problems.append((f"inputs.{field}", (
                f"{field} {f:.6g} Hz equals the natural frequency √(k/m)/2π = {fn:.6g} Hz and"
                " no damping is given: the undamped response at resonance grows without"
                " bound and has no steady state; give damping_ratio or damping_coefficient"
                f" above zero, or a {field} away from the natural frequency")))
        return problems

    # ------------------------------------------------------------------ compute

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, given, crit = ctx.inputs, ctx.given, ctx.criteria
        kind = excitation_kind(given)
        m, k = p["mass"], p["stiffness"]
        s = Sheet()
        damped = bool({"damping_ratio", "damping_coefficient"} & given)
        s.add(Assumptions(items=(
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
        )))
        s.add(Paragraph(title="Method", text=_method_text(kind)))

        wn = s.equation("omega_n", "sqrt(k/m)", "angular_frequency", k=k, m=m,
                        description="Undamped angular natural frequency")
        fn = s.equation("f_n", "omega_n/(2*pi)", "frequency", omega_n=wn,
                        key="natural_frequency", key_result=True,
                        description="Undamped natural frequency")
        cc = s.equation("c_c", "2*sqrt(k*m)", "damping", k=k, m=m,
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
            f = s.equation("f", "N/60", "frequency", N=p["speed"] * 60.0,
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
        dyn = s.equation("D", "1/sqrt((1 - r**2)**2 + (2*zeta*r)**2)", r=r, zeta=zeta,
                         key="dynamic_amplification", key_result=True,
                         description="Dynamic amplification factor")

        f0 = 0.0
        if kind == "support":
            phi = s.equation("phi", "atan2(2*zeta*r**3, 1 - r**2 + (2*zeta*r)**2)", "angle",
                             zeta=zeta, r=r, key="phase_lag",
                             description="Phase lag of the mass's absolute motion behind the"
                                         " support motion (0 to π)")
            s.equation("phi_z", "atan2(2*zeta*r, 1 - r**2)", "angle", zeta=zeta, r=r,
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
                            description="Motion transmissibility X/Y (absolute motion)")
            x = s.equation("X", "T*Y", "length", T=tr, Y=y_amp, key="displacement_amplitude",
                           key_result=True,
                           description="Absolute displacement amplitude of the mass")
            s.equation("Z", "r**2*D*Y", "length", r=r, D=dyn, Y=y_amp,
                       key="relative_displacement",
                       description="Relative displacement amplitude z = x − y (deflection of"
                                   " the spring)")
        else:
            phi = s.equation("phi", "atan2(2*zeta*r, 1 - r**2)", "angle", zeta=zeta, r=r,
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
            else:
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
                             description="Force transmissibility F_T/F_0")
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

        low, high = p.get("speed_range", (math.inf, -math.inf))
        passes = r > 1 or low < fn < high
        x_res = None
        if passes and zeta > 0:
            x_res = _passage_amplitude(s, kind, p, given, m, k, zeta, wn, f0)

        min_margin = crit["min_resonance_margin"]
        band = (fn * (1 - min_margin), fn * (1 + min_margin))
        s.add(Paragraph(title="Regime", text=_regime_text(kind, r, zeta, phi, k, c * w,
                                                          m * w**2, ctx.units)))
        s.add(Paragraph(text=(
            "Velocity is reported as a peak (zero-to-peak) value, V = ω·X, and as an RMS value,"
            " V/√2; the max_velocity criterion, where given, is compared with the peak value."
            " Resonance margin: this package uses |f − f_n|/f_n; practice also uses"
            f" |f − f_n|/f (here {margin_f:.4g}), shown for information only. The resonance"
            f" band is f_n·(1 ± {min_margin:g}) = {band[0]:.4g} to {band[1]:.4g} Hz.")))
        linear_validity_check(s, dyn, "dynamic amplification D")
        s.check("resonance-margin",
                "Resonance margin |f − f_n|/f_n not below the minimum (forcing frequency"
                " outside the resonance band)",
                value=margin, limit=min_margin, comparison=">=",
                note=f"band {band[0]:.4g} to {band[1]:.4g} Hz; |f − f_n|/f = {margin_f:.4g}")
        if "max_displacement" in crit:
            s.check("max-displacement",
                    "Displacement amplitude" + (" of the mass (absolute)" if kind == "support"
                                                else "") + " within the limit",
                    value=x, limit=crit["max_displacement"], comparison="<=",
                    dimension="length")
        if "max_velocity" in crit:
            s.check("max-velocity", "Vibration velocity (peak) within the limit",
                    value=v, limit=crit["max_velocity"], comparison="<=",
                    dimension="velocity",
                    note=f"RMS {_show(v_rms, 'velocity', ctx.units)}; the criterion is compared"
                         " with the peak")
        if "max_transmitted_force" in crit:
            s.check("max-transmitted-force", "Force into the support within the limit",
                    value=f_t, limit=crit["max_transmitted_force"], comparison="<=",
                    dimension="force")

        if passes:
            lead = ("The forcing frequency is above the natural frequency" if r > 1 else
                    "The speed range crosses the natural frequency")
            dwell = (" With no damping the resonance amplitude is unbounded." if zeta == 0 else
                     " A slow passage approaches the steady-state resonance amplitude"
                     f" X_res = {_show(x_res, 'length', ctx.units)}." if x_res is not None else "")
            s.add(Caution(text=(
                f"{lead} ({fn:.4g} Hz = {fn * 60:.4g} rpm), so the system passes through"
                " resonance at every start-up and run-down. The response while passing is"
                " transient and is not covered by this steady-state calc." + dwell
                + " Check the start-up and run-down times, and provide snubbers or travel"
                " limits where the passage amplitude is not acceptable.")))
        if margin < min_margin:
            s.add(Caution(text=(
                f"The forcing frequency lies inside the resonance band (margin {margin:.3g}"
                f" < {min_margin:g}). Near resonance the amplitude depends on damping, which is"
                " rarely known well, and on small changes in mass, stiffness or speed;"
                f" the computed amplification D = {dyn:.3g} is not a reliable upper bound."
                " Re-tune the support (stiffness or mass) rather than rely on damping.")))
        s.add(Note(text=(
            "Take the support stiffness and damping from the isolator or mount maker's rated"
            " data at the working load, not from catalogue nominal values. Seismic restraint"
            " of the supported equipment and its anchorage is outside this calc and is to be"
            " designed to the governing local code.")))
        if time_integration_cost(r, zeta) > MAX_ODE_COST:
            s.add(Note(text=(
                "The independent check by time integration is not run here: one forcing period"
                f" spans {time_integration_cost(r, zeta):.0f} natural periods or decay times"
                f" (more than {MAX_ODE_COST:g}). The transfer-function check (Appendix A)"
                " stands alone.")))
        s.add(self._frequency_figure(kind, p, given, m, k, zeta, fn, f, band, ctx.units))
        if "speed_range" in p:
            s.add(self._run_up_figure(kind, p, given, m, k, zeta, fn, f, band, crit,
                                      ctx.units))
        return s.output(purpose=self.purpose)

    # ------------------------------------------------------------------ figures

    @staticmethod
    def _frequency_figure(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float,
                          k: float, zeta: float, fn: float, f: float,
                          band: tuple[float, float], units: str) -> Figure:
        (lf, lu), (ff, fu) = _axis("length", units), _axis("force", units)
        rpm = kind == "unbalance"
        scale = 60.0 if rpm else 1.0
        x_hi = max(2.5 * fn, 1.5 * f, p["speed_range"][1] if "speed_range" in p else 0.0)
        x_lo = 0.25 * min(fn, f) if rpm else x_hi / 300
        freqs = _grid(x_lo, x_hi, fn, zeta)
        resp = response(kind, p, given, m, k, zeta, freqs)
        op = response(kind, p, given, m, k, zeta, np.array([f]))
        xs = _r(freqs * scale)
        band_s = Band(x_low=max(band[0], 0.0) * scale, x_high=band[1] * scale,
                      label="resonance band")
        fn_mark = Marker(x=fn * scale, label="f_n")
        if kind == "support":
            mag_series = (Series(x=xs, y=_r(resp["T"]), label="X/Y, absolute motion",
                                 emphasis=True),
                          Series(x=xs, y=_r(resp["Z"] / resp["Y"]), style="dashed",
                                 label="Z/Y, relative motion"))
            mag_label, mag_op = "Motion ratio [-]", float(op["T"][0])
        else:
            mag_series = (Series(x=xs, y=_r(resp["X"] * lf), label="displacement X",
                                 emphasis=True),)
            mag_label, mag_op = f"Displacement X [{lu}]", float(op["X"][0]) * lf
        phase_series = [Series(x=xs, y=_r(np.degrees(resp["phi"])), emphasis=True,
                               label="absolute motion" if kind == "support" else "")]
        if kind == "support":
            phase_series.append(Series(x=xs, y=_r(np.degrees(resp["phi_z"])), style="dashed",
                                       label="relative motion"))
        opx = f * scale
        panels = (
            Panel(series=mag_series, y_label=mag_label, y_scale="log", bands=(band_s,),
                  markers=(fn_mark, Marker(x=opx, y=mag_op, label="operating point")),
                  y_range=_log_range(mag_series[0].y, zeta)),
            Panel(series=(Series(x=xs, y=_r(resp["F_T"] * ff), label="", emphasis=True),),
                  y_label=f"Transmitted force F_T [{fu}]", y_scale="log", bands=(band_s,),
                  markers=(fn_mark, Marker(x=opx, y=float(op["F_T"][0]) * ff)),
                  y_range=_log_range(_r(resp["F_T"] * ff), zeta)),
            Panel(series=tuple(phase_series), y_label="Phase lag φ [°]",
                  bands=(band_s,), markers=(fn_mark, Marker(
                      x=opx, y=float(np.degrees(op["phi"][0])))),
                  y_range=(-5.0, 185.0)),
        )
        what = {"force": "an applied force of constant amplitude",
                "unbalance": "the rotating unbalance (force growing with the square of speed)",
                "support": ("a support displacement of constant amplitude"
                            if "base_displacement" in given else
                            "a support acceleration of constant amplitude")}[kind]
        return Figure(
            key="frequency-response",
            caption=f"Steady-state response to {what} against "
                    + ("running speed" if rpm else "forcing frequency")
                    + ", with the operating point and the resonance band f_n·(1 ± margin)",
            alt="Amplitude, transmitted force and phase lag against "
                + ("speed" if rpm else "frequency")
                + "; the amplitude peaks at the natural frequency inside the shaded band",
            x_label="Speed N [rpm]" if rpm else "Forcing frequency f [Hz]",
            panels=panels, x_range=(0.0, x_hi * scale))

    @staticmethod
    def _run_up_figure(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float,
                       k: float, zeta: float, fn: float, f: float,
                       band: tuple[float, float], crit: Mapping[str, Any],
                       units: str) -> Figure:
        low, high = p["speed_range"]
        freqs = _grid(low, high, fn, zeta)
        resp = response(kind, p, given, m, k, zeta, freqs)
        xs = _r(freqs * 60)
        bands: tuple[Band, ...] = ()
        if band[1] > low and band[0] < high:
            bands = (Band(x_low=max(band[0], low) * 60, x_high=min(band[1], high) * 60,
                          label="resonance band"),)
        markers: tuple[Marker, ...] = ()
        if low <= f <= high:
            markers = (Marker(x=f * 60, label="operating speed"),)
        if low < fn < high:
            markers += (Marker(x=fn * 60, label="f_n"),)

        def panel(values, label, limit_key, factor):
            y = _r(values * factor)
            hl = ((crit[limit_key] * factor, "design limit"),) if limit_key in crit else ()
            return Panel(series=(Series(x=xs, y=y, emphasis=True),), y_label=label,
                         markers=markers, bands=bands, hlines=hl,
                         y_range=_linear_range(y, zeta, hl))

        (lf, lu), (vf, vu), (ff, fu) = (_axis(d, units) for d in ("length", "velocity",
                                                                  "force"))
        panels = (panel(resp["X"], f"Displacement X [{lu}]", "max_displacement", lf),
                  panel(resp["V"], f"Velocity, peak [{vu}]", "max_velocity", vf),
                  panel(resp["F_T"], f"Transmitted force F_T [{fu}]", "max_transmitted_force",
                        ff))
        held = {"force": "force amplitude held constant over the range",
                "unbalance": "unbalance force m_e·e·ω² growing with speed",
                "support": "support " + ("displacement" if "base_displacement" in given
                                         else "acceleration") + " amplitude held constant"}[kind]
        return Figure(
            key="run-up",
            caption=f"Steady-state response over the speed range ({held}), with the design"
                    " limits where given",
            alt="Displacement, peak velocity and transmitted force against speed in rpm",
            x_label="Speed N [rpm]", panels=panels, x_range=(low * 60, high * 60))

    # ------------------------------------------------------------------ verification

    def verify(self, ctx: CalcContext, output: CalcOutput):
        from scipy import signal

        p, given = ctx.inputs, ctx.given
        kind = excitation_kind(given)
        res = {r.key: r.quantity.value for r in output.results}
        m, k = p["mass"], p["stiffness"]
        c = res["damping_coefficient"] if "damping_coefficient" in res else p[
            "damping_coefficient"]
        w = 2 * math.pi * (p["speed"] if kind == "unbalance" else p["frequency"])
        fr = "scipy.signal.freqresp of "
        rows: list[VerificationRow] = []

        def row(key: str, value: float, method: str, tol: float, abs_tol: float = 0.0,
                unit: str = "dimensionless") -> None:
            rows.append(VerificationRow(quantity=key, closed_form=res[key],
                                        independent=float(value), tolerance=tol,
                                        abs_tolerance=abs_tol, unit=unit, method=method))

        h_disp = _freqresp(signal.lti([1.0], [m, c, k]), w)  # X/F
        # (cs + k)/(ms² + cs + k); undamped, the leading zero would make scipy warn
        h_spring = _freqresp(signal.lti([c, k] if c else [k], [m, c, k]), w)
        if kind == "support":
            y_amp = p.get("base_displacement") or p["base_acceleration"] / w**2
            h_rel = _freqresp(signal.lti([-m, 0.0, 0.0], [m, c, k]), w)  # Z/Y
            row("motion_transmissibility", abs(h_spring), fr + "(cs + k)/(ms² + cs + k)", 1e-6)
            row("phase_lag", _lag(h_spring), fr + "(cs + k)/(ms² + cs + k)", 1e-6, 1e-9,
                "angle")
            row("displacement_amplitude", abs(h_spring) * y_amp,
                fr + "(cs + k)/(ms² + cs + k) times Y", 1e-6, unit="length")
            row("relative_displacement", abs(h_rel) * y_amp, fr + "−ms²/(ms² + cs + k) times Y",
                1e-6, unit="length")
            row("transmitted_force", abs(complex(k, c * w) * h_rel) * y_amp,
                "|k + jωc|·|Z| from " + fr + "−ms²/(ms² + cs + k)", 1e-6, unit="force")
        else:
            f0 = p["force_amplitude"] if kind == "force" else _unbalance(p) * w**2
            row("dynamic_amplification", k * abs(h_disp), "k·|H(jω)|, " + fr
                + "H = 1/(ms² + cs + k)", 1e-6)
            row("phase_lag", _lag(h_disp), "−arg H(jω), " + fr + "1/(ms² + cs + k)", 1e-6,
                1e-9, "angle")
            row("displacement_amplitude", f0 * abs(h_disp), "F_0·|H(jω)|, " + fr
                + "1/(ms² + cs + k)", 1e-6, unit="length")
            row("transmitted_force", f0 * abs(h_spring), "F_0·|(cs + k)/(ms² + cs + k)|, "
                + fr + "that transfer function", 1e-6, unit="force")
        if time_integration_cost(w / math.sqrt(k / m), res["damping_ratio"]) > MAX_ODE_COST:
            return rows  # compute says so in a note: the integration would take too long
        sim = _periodic_response(kind, p, m, c, k, w)
        ode = ("scipy.integrate.solve_ivp (DOP853) of the equation of motion over one forcing"
               " period from the periodic state (shooting: y(T) = y(0) with exp(A·T) of the"
               " state matrix); amplitude and phase fitted over that period")
        row("displacement_amplitude", sim["X"], ode, 1e-4, unit="length")
        row("velocity_amplitude", sim["V"], ode, 1e-4, unit="velocity")
        row("phase_lag", sim["phi"], ode, 1e-4, 1e-6, "angle")
        row("transmitted_force", sim["F_T"], ode, 1e-4, unit="force")
        if kind == "support":
            row("relative_displacement", sim["Z"], ode, 1e-4, unit="length")
        return rows


# ---------------------------------------------------------------------- helpers


def excitation_kind(given: frozenset[str] | set[str]) -> str:
    """"force", "unbalance" or "support": the one excitation group present in ``given``."""
    kinds = [g for g, names in EXCITATIONS.items() if set(names) & set(given)]
    if len(kinds) != 1:
        raise ValueError(f"expected exactly one excitation, found {kinds}")
    return kinds[0]


def _excitation_problems(kind: str, given: frozenset[str]) -> list[tuple[str, str]]:
    out: list[tuple[str, str]] = []
    if kind == "unbalance":
        if "unbalance" in given and {"unbalance_mass", "eccentricity"} & given:
            extra = sorted({"unbalance_mass", "eccentricity"} & given)
            out.append((f"inputs.{extra[0]}", "give the unbalance either as unbalance"
                        " (m_e·e) or as unbalance_mass with eccentricity, not both; found"
                        " unbalance and " + " and ".join(extra)))
        elif "unbalance" not in given:
            for have, need in (("unbalance_mass", "eccentricity"),
                               ("eccentricity", "unbalance_mass")):
                if have in given and need not in given:
                    out.append((f"inputs.{need}", f"{have} needs {need} (or give unbalance"
                                " = m_e·e instead)"))
        if "frequency" in given:
            out.append(("inputs.frequency", "a rotating unbalance turns at its running speed:"
                        " give speed (for example \"980 rpm\") instead of frequency"))
        elif "speed" not in given:
            out.append(("inputs.speed", "a rotating unbalance needs its running speed: give"
                        " speed (for example \"980 rpm\")"))
        return out
    what = _EXCITATION_NAMES[kind]
    if kind == "support" and {"base_displacement", "base_acceleration"} <= given:
        out.append(("inputs.base_acceleration", "give the support motion either as"
                    " base_displacement or as base_acceleration, not both"))
    if "speed" in given:
        out.append(("inputs.speed", f"speed is the running speed of a rotating unbalance; for"
                    f" an {what} give frequency (Hz or rpm) instead"))
    elif "frequency" not in given:
        out.append(("inputs.frequency", f"an {what} needs its frequency: give frequency"
                    " (for example \"25 Hz\" or \"1500 rpm\")"))
    return out


def _damping_ratio(inputs: Mapping[str, Any], given: frozenset[str], m: float,
                   k: float) -> float:
    if "damping_coefficient" in given:
        return inputs["damping_coefficient"] / (2 * math.sqrt(k * m))
    return inputs.get("damping_ratio", 0.0)


def _unbalance(p: Mapping[str, Any]) -> float:
    return p["unbalance"] if "unbalance" in p else p["unbalance_mass"] * p["eccentricity"]


def _passage_amplitude(s: Sheet, kind: str, p: Mapping[str, Any], given: frozenset[str],
                       m: float, k: float, zeta: float, wn: float, f0: float) -> float:
    """The steady-state amplitude at r = 1: what a slow passage through resonance nears."""
    what = "Steady-state amplitude if the excitation dwelt at resonance (r = 1, D = 1/(2ζ))"
    if kind == "unbalance":
        return s.equation("X_res", "U/(2*zeta*m)", "length", U=_unbalance(p), m=m,
                          zeta=zeta, description=what)
    if kind == "force":
        return s.equation("X_res", "F_0/(2*zeta*k)", "length", F_0=f0, k=k, zeta=zeta,
                          description=what)
    if "base_displacement" in given:
        return s.equation("X_res", "sqrt(1 + (2*zeta)**2)/(2*zeta)*Y", "length", zeta=zeta,
                          Y=p["base_displacement"], description=what)
    return s.equation("X_res", "sqrt(1 + (2*zeta)**2)/(2*zeta)*a_b/omega_n**2", "length",
                      zeta=zeta, a_b=p["base_acceleration"], omega_n=wn, description=what)


def response(kind: str, p: Mapping[str, Any], given: frozenset[str], m: float, k: float,
             zeta: float, freqs: np.ndarray) -> dict[str, np.ndarray]:
    """Closed-form steady-state response at the frequencies ``freqs`` (Hz), vectorised.

    The excitation keeps its physical law across frequency: constant force, unbalance force
    growing with ω², constant support displacement or constant support acceleration.
    """
    wn = math.sqrt(k / m)
    w = 2 * np.pi * np.asarray(freqs, dtype=float)
    r = w / wn
    with np.errstate(divide="ignore", invalid="ignore"):
        d = 1 / np.sqrt((1 - r**2) ** 2 + (2 * zeta * r) ** 2)
    t_f = np.sqrt(1 + (2 * zeta * r) ** 2) * d
    out = {"r": r, "D": d}
    if kind == "support":
        if "base_displacement" in p:
            y = np.full_like(w, p["base_displacement"])
        else:
            with np.errstate(divide="ignore"):
                y = p["base_acceleration"] / w**2
        out.update(Y=y, T=t_f, X=t_f * y, Z=r**2 * d * y,
                   phi=np.arctan2(2 * zeta * r**3, 1 - r**2 + (2 * zeta * r) ** 2),
                   phi_z=np.arctan2(2 * zeta * r, 1 - r**2))
        out["F_T"] = m * w**2 * out["X"]
    else:
        f0 = (np.full_like(w, p["force_amplitude"]) if kind == "force"
              else _unbalance(p) * w**2)
        out.update(X=f0 / k * d, F_T=f0 * t_f, phi=np.arctan2(2 * zeta * r, 1 - r**2))
    out["V"] = w * out["X"]
    return out


def _grid(lo: float, hi: float, fn: float, zeta: float) -> np.ndarray:
    """Plot frequencies: uniform, plus a dense cluster around f_n so the peak is drawn."""
    base = np.linspace(lo, hi, _PLOT_POINTS)
    width = max(zeta, 0.002) * fn
    dense = fn + width * np.linspace(-4, 4, 161)
    g = np.unique(np.concatenate([base, dense[(dense >= lo) & (dense <= hi)]]))
    if zeta == 0:  # the undamped peak is infinite: leave a gap rather than an inf
        g = g[np.abs(g / fn - 1) > 2e-3]
    return g[g > 0] if lo <= 0 else g


def _log_range(y: tuple[float, ...], zeta: float) -> tuple[float, float] | None:
    vals = np.array([v for v in y if v > 0])
    if zeta >= 0.0025 or not len(vals):
        return None
    # undamped or nearly so: cap the peak so the rest of the curve stays readable
    med = float(np.median(vals))
    return float(vals.min()) * 0.5, med * 300


def _linear_range(y: tuple[float, ...], zeta: float,
                  hlines: tuple[tuple[float, str], ...]) -> tuple[float, float] | None:
    if zeta >= 0.0025:
        return None
    vals = np.sort(np.asarray(y))
    top = max(float(vals[int(0.9 * (len(vals) - 1))]) * 3,
              max((h for h, _ in hlines), default=0.0) * 1.5)
    return 0.0, top


def _axis(dimension: str, units: str) -> tuple[float, str]:
    """Factor from SI and unit label for a plotted quantity (mm, mm/s, N or in, in/s, lbf)."""
    return table_display(1.0, dimension, units)


def _show(value: float, dimension: str, units: str) -> str:
    factor, label = _axis(dimension, units)
    return f"{format_number(value * factor)} {label}"


def _freqresp(system: Any, w: float) -> complex:
    from scipy import signal

    _, h = signal.freqresp(system, w=[w])
    return complex(h[0])


def _lag(h: complex) -> float:
    """Phase lag −arg(h) in [0, π] (a lag of exactly π may come back as −π)."""
    lag = -math.atan2(h.imag, h.real)
    return lag + 2 * math.pi if lag < -1e-12 else max(lag, 0.0)


def time_integration_cost(r: float, zeta: float) -> float:
    """Natural periods (or fast decay times) the integrator resolves per forcing period."""
    return max(1.0, 2.0 * zeta) / r


def _periodic_response(kind: str, p: Mapping[str, Any], m: float, c: float, k: float,
                       w: float) -> dict[str, float]:
    """Integrate the equation of motion numerically over its periodic steady state.

    The state after one forcing period T is y(T) = Φ·y(0) + b, with Φ = exp(A·T) of the
    state matrix and b integrated from rest; solving y(T) = y(0) gives the periodic state
    without waiting for the transient to decay (and works undamped). One period from that
    state is then integrated and fitted.
    """
    from scipy.integrate import solve_ivp
    from scipy.linalg import expm

    period = 2 * math.pi / w
    if kind == "support":
        y_amp = p.get("base_displacement") or p["base_acceleration"] / w**2
        scale = y_amp

        def rhs(t, s):
            yb, vb = y_amp * math.cos(w * t), -y_amp * w * math.sin(w * t)
            return [s[1], -(c * (s[1] - vb) + k * (s[0] - yb)) / m]
    else:
        f0 = p["force_amplitude"] if kind == "force" else _unbalance(p) * w**2
        scale = f0 / max(k, m * w**2)

        def rhs(t, s):
            return [s[1], (f0 * math.cos(w * t) - c * s[1] - k * s[0]) / m]

    atol = [1e-12 * scale, 1e-12 * scale * w]

    def integrate(s0, t_eval=None):
        return solve_ivp(rhs, (0.0, period), s0, method="DOP853", rtol=1e-10, atol=atol,
                         t_eval=t_eval)

    b = integrate([0.0, 0.0]).y[:, -1]
    phi = expm(np.array([[0.0, 1.0], [-k / m, -c / m]]) * period)
    # Undamped at r = 1/n the free motion is T-periodic too and I − Φ is singular; solved
    # in scaled (dimensionless) states, the pseudo-inverse drops that free motion, which is
    # orthogonal to the fitted harmonic over the period anyway.
    d = np.array([1.0, math.sqrt(k / m)])
    lhs = (np.eye(2) - phi) * d[np.newaxis, :] / d[:, np.newaxis]
    s0 = d * (np.linalg.pinv(lhs, rcond=1e-9) @ (b / d))
    n = 128
    t_eval = period * np.arange(n) / n
    x, v = integrate(s0, t_eval).y
    cos, sin = np.cos(w * t_eval), np.sin(w * t_eval)

    def fit(sig):  # discrete Fourier coefficients over exactly one period
        a, bb = 2 / n * float(sig @ cos), 2 / n * float(sig @ sin)
        return math.hypot(a, bb), math.atan2(bb, a)

    amp_x, lag = fit(x)
    if lag < -math.pi / 2:  # a lag near π may come back as near −π
        lag += 2 * math.pi
    out = {"X": amp_x, "V": fit(v)[0], "phi": max(lag, 0.0)}
    if kind == "support":
        yb, vb = scale * cos, -scale * w * sin
        out["Z"] = fit(x - yb)[0]
        out["F_T"] = fit(k * (x - yb) + c * (v - vb))[0]
    else:
        out["F_T"] = fit(k * x + c * v)[0]
    return out


def _method_text(kind: str) -> str:
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
            " damping ratio ζ. Values are substituted in coherent SI units; amplitudes are"
            " zero-to-peak.")


def _regime_text(kind: str, r: float, zeta: float, phi: float, k: float, cw: float,
                 mw2: float, units: str) -> str:
    terms = (f"At the operating point the three terms of the dynamic stiffness are k ="
             f" {_show(k, 'stiffness', units)}, c·ω = {_show(cw, 'stiffness', units)} and"
             f" m·ω² = {_show(mw2, 'stiffness', units)}.")
    deg = format_number(math.degrees(phi))
    if r < STIFFNESS_CONTROLLED_BELOW:
        text = (f"Below resonance (r = {r:.3g} < {STIFFNESS_CONTROLLED_BELOW:g}):"
                " stiffness-controlled. The spring carries most of the excitation and the mass"
                f" moves nearly in phase with it (φ = {deg}°)")
        text += {"force": "; the amplitude is close to the static displacement F_0/k.",
                 "unbalance": "; the amplitude is small and grows with the square of speed.",
                 "support": "; the mass follows the support almost rigidly (X ≈ Y)."}[kind]
    elif r <= MASS_CONTROLLED_ABOVE:
        text = (f"Near resonance ({STIFFNESS_CONTROLLED_BELOW:g} ≤ r = {r:.3g} ≤"
                f" {MASS_CONTROLLED_ABOVE:g}): damping-controlled. Stiffness and inertia"
                " largely cancel, so the amplitude is limited mainly by damping"
                + (f" (at r = 1 the amplification is 1/(2ζ) = {1 / (2 * zeta):.3g})"
                   if zeta > 0 else " (none is given, so only the distance from r = 1"
                                    " limits it)")
                + f"; the phase lag passes through 90° at r = 1 (here φ = {deg}°).")
    else:
        text = (f"Above resonance (r = {r:.3g} > {MASS_CONTROLLED_ABOVE:g}): mass-controlled."
                " The inertia of the mass resists the excitation and the mass moves nearly in"
                f" anti-phase (φ = {deg}°)")
        text += {"force": "; the amplitude tends to F_0/(m·ω²).",
                 "unbalance": "; the amplitude tends to m_e·e/m, independent of speed.",
                 "support": "; the mass stays nearly still while the support moves."}[kind]
        text += " Above r = √2 the transmissibility is below 1 (isolation)."
    return (text + " " + terms + f" Regime limits r < {STIFFNESS_CONTROLLED_BELOW:g} and"
            f" r > {MASS_CONTROLLED_ABOVE:g}: common practice, no source.")


def _r(a) -> tuple[float, ...]:
    return tuple(float(v) for v in np.asarray(a, dtype=float))


@hookimpl
def reportgen_register_calc_types(context):
    return [ForcedResponse()]
