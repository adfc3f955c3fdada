"""forced_response: steady-state response of m·x'' + c·x' + k·x = F(t) to a harmonic excitation.

An applied force, a rotating unbalance or a harmonic support motion; amplitude, phase,
velocity, acceleration, transmitted force and the resonance margin, verified independently
by the transfer function (scipy.signal.freqresp) and by time integration (solve_ivp).
"""

from __future__ import annotations

import math

from reportgen_plugins.mechanics import (
    damping_inputs,
    damping_problems,
    natural_frequency,
    support_inputs,
)

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    InputSpec,
    Note,
    Paragraph,
    Sheet,
    Source,
    VerificationCase,
    hookimpl,
)
from reportgen.units import format_number

from . import checks, figures, text, working
from .method import (
    EXCITATION_NAMES,
    EXCITATIONS,
    MAX_ODE_COST,
    RESONANCE_TOLERANCE,
    excitation_kind,
    passes_resonance,
    response,
    stated_damping_ratio,
    time_integration_cost,
)
from .verify import second_method

__version__ = "0.2.0"

THOMSON = Source(key="thomson-ch3", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed.,"
    " Prentice Hall, 1998: Ch. 3, harmonically excited vibration (forced damped response,"
    " rotating unbalance, support motion, transmissibility)."))
RAO = Source(key="rao-ch3", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: Ch. 3, harmonically excited"
    " vibration (Secs. 3.4-3.7)."))


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
                  description="Vibrating mass (the whole supported machine, any rotor"
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
                  dimension="rotational_speed", required=False, positive=True, maximum=1e4),
        InputSpec(name="speed_range", symbol="N_range",
                  description="Speed range of the run-up plot", dimension="frequency",
                  required=False, kind="pair", minimum=0.0, maximum=1e4),
        *support_inputs(),
        InputSpec(name="run_up_time", symbol="t_run",
                  description="Time from rest to the operating frequency at constant"
                              " acceleration (start-up; run-down taken as no slower)",
                  dimension="time", required=False, positive=True, maximum=3600.0),
    )
    criteria = (
        InputSpec(name="min_resonance_margin", symbol="M_min",
                  description="Least separation |f − f_n|/f_n of forcing and natural frequency",
                  default=0.2, minimum=0.0, maximum=1.0,
                  default_note="common practice"),
        InputSpec(name="max_displacement", symbol="X_max",
                  description="Largest acceptable displacement amplitude (zero-to-peak)",
                  dimension="length", required=False, positive=True),
        InputSpec(name="max_velocity", symbol="V_max",
                  description="Largest acceptable vibration velocity, peak (zero-to-peak)",
                  dimension="velocity", required=False, positive=True),
        InputSpec(name="max_velocity_rms", symbol="V_rms,max",
                  description="Largest acceptable vibration velocity, rms (as machinery"
                              " vibration standards state it)",
                  dimension="velocity", required=False, positive=True),
        InputSpec(name="max_passage_displacement", symbol="X_pass,max",
                  description="Largest acceptable displacement amplitude while passing"
                              " through resonance at start-up and run-down",
                  dimension="length", required=False, positive=True),
        InputSpec(name="max_transmitted_force", symbol="F_T,max",
                  description="Largest acceptable force amplitude into the support",
                  dimension="force", required=False, positive=True),
        InputSpec(name="passage_uses_steady_limits", symbol="steady",
                  description="The steady-state limits (max_displacement,"
                              " max_transmitted_force) apply to the passage through"
                              " resonance too",
                  kind="choice", choices=("yes", "no"), required=False),
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

    def validate(self, inputs, given, criteria):
        problems = damping_problems(given)
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
            kinds = " and ".join(EXCITATION_NAMES[g] for g in present)
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
        zeta = stated_damping_ratio(inputs, given, m, k)
        field = "speed" if kind == "unbalance" else "frequency"
        f = inputs[field]
        fn = natural_frequency(k, m)
        if zeta == 0 and abs(f / fn - 1.0) <= RESONANCE_TOLERANCE:
            problems.append((f"inputs.{field}", (
                f"{field} {format_number(f, 6)} Hz equals the natural frequency √(k/m)/2π ="
                f" {format_number(fn, 6)} Hz and no damping is given: the undamped response"
                " at resonance grows without bound and has no steady state; give"
                " damping_ratio or damping_coefficient above zero, or a"
                f" {field} away from the natural frequency")))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, given, crit = ctx.inputs, ctx.given, ctx.criteria
        kind = excitation_kind(given)
        m, k = p["mass"], p["stiffness"]
        s = Sheet(self.inputs)
        s.add(Assumptions(items=text.assumptions(kind, given)),
              Paragraph(title="Method", text=text.method(kind)))
        v = working.write(s, kind, p, given)
        passes = passes_resonance(v.r, v.f_n, p.get("speed_range"))
        min_margin = crit["min_resonance_margin"]
        band = (v.f_n * (1 - min_margin), v.f_n * (1 + min_margin))
        s.add(Paragraph(title="Regime", text=text.regime(kind, v.r, v.zeta, v.phi, k,
                                                         v.c * v.omega, m * v.omega**2,
                                                         ctx.display)),
              Paragraph(text=text.velocity_and_margin(v.margin_f, min_margin, band)))
        checks.write(s, kind, crit, v, band, ctx.display)
        if passes:
            working.passage(s, kind, p, given, crit, v, ctx.display)
        checks.support(s, p, v)
        if v.margin < min_margin:
            s.add(Caution(text=text.band_caution(v.margin, min_margin, v.D)))
        s.add(Note(text=text.RATED_DATA))
        if time_integration_cost(v.r, v.zeta) > MAX_ODE_COST:
            s.add(Note(text=text.no_integration_note(time_integration_cost(v.r, v.zeta))))
        s.add(figures.frequency_response(kind, p, given, m, k, v.zeta, v.f_n, v.f, band,
                                         ctx.display))
        if "speed_range" in p:
            s.add(figures.run_up(kind, p, given, m, k, v.zeta, v.f_n, v.f, band, crit,
                                 ctx.display))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput):
        p = ctx.inputs
        kind = excitation_kind(ctx.given)
        zeta = next(r.quantity.value for r in output.results if r.key == "damping_ratio")
        w = 2 * math.pi * (p["speed"] if kind == "unbalance" else p["frequency"])
        cost = time_integration_cost(w / math.sqrt(p["stiffness"] / p["mass"]), zeta)
        return second_method(ctx, output, kind, integrate=not cost > MAX_ODE_COST)


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
    what = EXCITATION_NAMES[kind]
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


__all__ = ["EXCITATIONS", "ForcedResponse", "RAO", "THOMSON", "excitation_kind", "response",
           "time_integration_cost"]


@hookimpl
def reportgen_register_calc_types(context):
    return [ForcedResponse()]
