"""free_vibration: the single-degree-of-freedom model m·x'' + c·x' + k·x = 0.

Natural frequency, damping, static deflection and the free response from initial
conditions, in the underdamped, critically damped and overdamped regimes, with an
independent check by integrating the equation of motion (scipy.integrate.solve_ivp).
"""

from __future__ import annotations

from reportgen_plugins.mechanics import (
    damping_inputs,
    damping_problems,
    natural_period,
)

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    InputSpec,
    Paragraph,
    Sheet,
    Source,
    VerificationCase,
    hookimpl,
)

from . import checks, figures, text, working
from .method import CRITICAL_BAND, MAX_PERIODS, TINY_START, default_duration
from .verify import second_method

__version__ = "0.1.0"

THOMSON = Source(key="thomson", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed.,"
    " Prentice Hall, 1998: Ch. 2, free vibration, viscous damping, logarithmic decrement."))
RAO = Source(key="rao", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: Ch. 2, free vibration of"
    " single-degree-of-freedom systems."))


class FreeVibration(CalcType):
    name = "free_vibration"
    title = "Free vibration of a single-degree-of-freedom system"
    version = __version__
    api_version = 1
    purpose = ("Determine the natural frequency, damping and free response of the supported"
               " mass about its static equilibrium, modelled as m·x'' + c·x' + k·x = 0.")
    inputs = (
        InputSpec(name="mass", symbol="m", description="Vibrating mass", dimension="mass",
                  positive=True, minimum=1e-3, maximum=1e8),
        InputSpec(name="stiffness", symbol="k", description="Total spring stiffness",
                  dimension="stiffness", positive=True, minimum=1.0, maximum=1e13),
        *damping_inputs(),
        InputSpec(name="initial_displacement", symbol="x_0",
                  description="Initial displacement from equilibrium", dimension="length",
                  default=0.0, minimum=-10.0, maximum=10.0),
        InputSpec(name="initial_velocity", symbol="v_0", description="Initial velocity",
                  dimension="velocity", default=0.0, minimum=-1e3, maximum=1e3),
        InputSpec(name="duration", symbol="t_end", description="Length of the plotted history",
                  dimension="time", required=False, positive=True, maximum=3600.0),
    )
    criteria = (
        InputSpec(name="min_natural_frequency", symbol="f_min",
                  description="Lowest acceptable natural frequency", dimension="frequency",
                  required=False, positive=True),
        InputSpec(name="max_natural_frequency", symbol="f_max",
                  description="Highest acceptable natural frequency", dimension="frequency",
                  required=False, positive=True),
        InputSpec(name="max_static_deflection", symbol="delta_allow",
                  description="Largest acceptable static deflection", dimension="length",
                  required=False, positive=True),
    )
    sources = (THOMSON, RAO)
    verification_cases = (
        VerificationCase(id="A1_sdof_free_underdamped",
                         description="Underdamped response, decrement, amplitude and phase",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="A2_sdof_free_undamped_amplitude_phase",
                         description="Undamped amplitude and phase", source=THOMSON.citation,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="A3_sdof_free_critically_damped",
                         description="Critically damped response", source=RAO.citation,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="A4_sdof_free_overdamped", description="Overdamped response",
                         source=RAO.citation, status="formula_confirmed_example_invented"),
        VerificationCase(id="A6_static_deflection_natural_frequency",
                         description="f_n from static deflection (handbook form √(g_n/δ_st)/2π)",
                         source=THOMSON.citation, status="formula_confirmed_example_invented"),
    )

    def validate(self, inputs, given, criteria):
        problems = damping_problems(given)
        if "duration" in inputs and "mass" in inputs and "stiffness" in inputs:
            periods = inputs["duration"] / natural_period(inputs["stiffness"], inputs["mass"])
            if periods > MAX_PERIODS:
                problems.append(("inputs.duration",
                                 f"duration covers {periods:.0f} natural periods; the limit is"
                                 f" {MAX_PERIODS} (the plot would be unreadable and the time"
                                 " history too large)"))
        # below a picometre (per second) a start is no motion a sensor or a structure
        # shows, and the closed form's squares of it underflow
        for key, unit in (("initial_displacement", "m"), ("initial_velocity", "m/s")):
            if 0.0 < abs(inputs.get(key, 0.0)) < TINY_START:
                problems.append((f"inputs.{key}", f"{inputs[key]:g} {unit} is below"
                                 f" {TINY_START:g} {unit}: give 0 for no initial {key[8:]},"
                                 " or a value a structure can show"))
        lo, hi = criteria.get("min_natural_frequency"), criteria.get("max_natural_frequency")
        if lo is not None and hi is not None and lo >= hi:
            problems.append(("criteria.max_natural_frequency",
                             "max_natural_frequency must be above min_natural_frequency"))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p = ctx.inputs
        m, k = p["mass"], p["stiffness"]
        x0, v0 = p["initial_displacement"], p["initial_velocity"]
        s = Sheet(self.inputs)
        s.add(Assumptions(items=text.assumptions(ctx.given)),
              Paragraph(title="Method", text=text.METHOD))
        wn, fn = working.natural_frequency(s, m, k)
        zeta = working.damping(s, p, ctx.given, m, k)
        dst, _, _ = working.static_deflection(s, m, k, ctx.units)  # the same f_n two more ways

        resp = working.response(s, wn, zeta, x0, v0)
        s.add(Paragraph(title="Regime", text=text.regime(resp)))
        if zeta < 1 - CRITICAL_BAND and (x0 or v0):
            s.add(Paragraph(text=text.DECAY))
        checks.criteria(s, ctx.criteria, fn, dst)

        duration = p.get("duration") or default_duration(wn, zeta)
        s.add(figures.time_history(resp, duration, fn, self.max_points, ctx.display))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput):
        # the closed form is this package's own (the working on a scratch Sheet); the
        # independent side is verify.py's, which never sees the method
        def closed_form(wn: float, zeta: float, x0: float, v0: float):
            return working.response(Sheet(), wn, zeta, x0, v0).displacement

        res = {r.key: r.quantity.value for r in output.results}
        duration = ctx.inputs.get("duration") or default_duration(
            res["angular_natural_frequency"], res["damping_ratio"])
        return second_method(ctx, output, closed_form, duration)


__all__ = ["FreeVibration", "RAO", "THOMSON", "damping_inputs"]


@hookimpl
def reportgen_register_calc_types(context):
    return [FreeVibration()]
