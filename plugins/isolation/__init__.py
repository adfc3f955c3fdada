"""isolation: select or check vibration isolators for a machine on n mounts.

Single vertical degree of freedom on linear viscously damped mounts: transmissibility,
isolation efficiency, the mounts the target needs, and each mount's share of the weight.
"""

from __future__ import annotations

from reportgen_plugins.mechanics import (
    mount_type_inputs,
    mount_type_problems,
    natural_frequency,
    stiffness_ratio,
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
    VerificationRow,
    hookimpl,
)
from reportgen.units import STANDARD_GRAVITY

from . import checks, figures, selection, text, working
from .method import (
    EXCITATION_INPUTS,
    ISOLATOR_INPUTS,
    dynamic_stiffness,
    forcing_frequency,
    lifted_mounts,
    loads,
    mount_loads,
    mount_rows,
    peak_ratio,
    required_ratio,
    total_stiffness,
    transmissibility,
)
from .verify import second_method

__version__ = "0.3.0"

THOMSON = Source(key="thomson-3.5", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed., Prentice"
    " Hall, 1998: §3.5 vibration isolation (transmissibility, isolation only for r > √2);"
    " Ch. 2, springs in parallel and static deflection."))
RAO = Source(key="rao-9.10", citation=(
    "S.S. Rao, Mechanical Vibrations, 6th ed., Pearson, 2017: §9.10 vibration isolation"
    " (force and motion transmissibility, peak transmissibility)."))
HARRIS = Source(key="harris", citation=(
    "Harris' Shock and Vibration Handbook, 6th ed. (A.G. Piersol & T.L. Paez, eds.),"
    " McGraw-Hill, 2010: the chapters on vibration isolation."))

_CASE_SOURCE = f"{THOMSON.citation} {RAO.citation}"


class Isolation(CalcType):
    name = "isolation"
    title = "Vibration isolation of equipment on resilient mounts"
    version = __version__
    api_version = 1
    purpose = ("Check that the resilient mounts under the equipment isolate the dominant"
               " excitation at the running speed, find the mounts the isolation target"
               " needs, and find the load and static deflection of each mount.")
    inputs = (
        InputSpec(name="mass", symbol="m", description="Total supported mass (machine and base)",
                  dimension="mass", positive=True, minimum=1e-3, maximum=1e7),
        InputSpec(name="speed", symbol="N", description="Running speed of the dominant"
                  " excitation (1500 rpm = 25 Hz)", dimension="rotational_speed", required=False,
                  positive=True, maximum=1e4),
        InputSpec(name="frequency", symbol="f", description="Frequency of the dominant"
                  " excitation", dimension="frequency", required=False, positive=True,
                  maximum=1e4),
        InputSpec(name="mounts", symbol="n", description="Number of mounts", kind="integer",
                  default=4, minimum=1, maximum=64),
        InputSpec(name="stiffness", symbol="k", description="Total vertical stiffness of the"
                  " mounts", dimension="stiffness", required=False, positive=True, minimum=1.0,
                  maximum=1e12),
        InputSpec(name="stiffness_per_mount", symbol="k_m", description="Vertical stiffness"
                  " of each mount", dimension="stiffness", required=False, positive=True,
                  maximum=1e12),
        InputSpec(name="static_deflection", symbol="delta_st", description="Static deflection"
                  " of the mounts under the weight (mean over the mounts)", dimension="length",
                  required=False, positive=True, maximum=1.0),
        InputSpec(name="natural_frequency", symbol="f_n", description="Vertical natural"
                  " frequency of the machine on its mounts", dimension="frequency",
                  required=False, positive=True, maximum=1e3),
        InputSpec(name="damping_ratio", symbol="zeta", description="Viscous damping ratio of"
                  " the mounts", default=0.05, minimum=0.0, maximum=1.0,
                  default_note="assumed; state the isolator's value"),
        InputSpec(name="mount_positions", symbol="x_i, y_i", description="Mount positions"
                  " in plan", dimension="length", kind="points", required=False,
                  minimum=-1000.0, maximum=1000.0),
        InputSpec(name="cg_x", symbol="x_G", description="Centre of gravity, x (axes of"
                  " mount_positions)", dimension="length", required=False, minimum=-1000.0,
                  maximum=1000.0),
        InputSpec(name="cg_y", symbol="y_G", description="Centre of gravity, y (axes of"
                  " mount_positions)", dimension="length", required=False, minimum=-1000.0,
                  maximum=1000.0),
        InputSpec(name="rated_load_per_mount", symbol="P_rated", description="Rated load of"
                  " the selected mount (maker's data)", dimension="force", required=False,
                  positive=True),
        InputSpec(name="rated_deflection", symbol="delta_rated", description="Rated"
                  " deflection of the selected mount (maker's data)", dimension="length",
                  required=False, positive=True, maximum=1.0),
        *mount_type_inputs(),
        selection.CATALOGUE_INPUT,
        InputSpec(name="solid_deflection", symbol="delta_solid", description="Deflection"
                  " of the mount at which the spring goes solid (maker's data)",
                  dimension="length", required=False, positive=True, maximum=1.0),
        *support_inputs(),
        InputSpec(name="run_up_time", symbol="t_run",
                  description="Time from rest to the running speed at constant"
                              " acceleration (start-up; run-down taken as no slower)",
                  dimension="time", required=False, positive=True, maximum=3600.0),
        InputSpec(name="rigid_body_limit", symbol="f_rigid", description="Highest frequency"
                  " at which machine and base act as one rigid body (below the base's first"
                  " flexural mode)", dimension="frequency", required=False, positive=True,
                  maximum=1e4),
    )
    criteria = (
        InputSpec(name="min_efficiency", symbol="eta_min", description="Required isolation"
                  " efficiency 1 − T at the running speed", default=0.90, minimum=0.01,
                  maximum=0.999, default_note="common practice"),
        InputSpec(name="max_static_deflection", symbol="delta_allow", description="Largest"
                  " acceptable static deflection of any mount", dimension="length",
                  required=False, positive=True),
        InputSpec(name="max_passage_transmissibility", symbol="T_pass,max",
                  description="Largest acceptable transmissibility while passing through"
                              " resonance at start-up and shut-down", required=False,
                  positive=True, maximum=1e3),
        InputSpec(name="passage_uses_steady_limits", symbol="steady",
                  description="The steady-state limit applies to the passage through"
                              " resonance too (T ≤ 1 − η_min)", kind="choice",
                  choices=("yes", "no"), required=False),
        InputSpec(name="min_travel_allowance", symbol="a_travel", description="Travel to"
                  " solid beyond the operating deflection, as a fraction of it",
                  default=0.5, minimum=0.0, maximum=10.0, default_note="common practice"),
    )
    sources = (THOMSON, RAO, HARRIS)
    schedule_results = ("static_deflection", "natural_frequency", "isolation_efficiency")
    verification_cases = (
        VerificationCase(id="C1_required_isolation_90pct_zeta0",
                         description="Undamped mounts for 90 % isolation at 1450 rpm",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C1_required_isolation_90pct_zeta0.05",
                         description="Mounts with ζ = 0.05 for 90 % isolation at 1450 rpm",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C2_isolation_efficiency_given_deflection",
                         description="Efficiency of 25 mm mounts at 1750 rpm, ζ = 0, 0.05, 0.1",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C3_sqrt2_rule", description="T = 1 at r = √2 for any damping",
                         source=_CASE_SOURCE, status="confirmed_in_source"),
        VerificationCase(id="C4_multiple_mounts",
                         description="Unequal mount loads, stiffness for equal deflection",
                         source=_CASE_SOURCE, status="formula_confirmed_example_invented"),
        VerificationCase(id="C5_recommended_static_deflection_classes",
                         description="f_n of the usual static-deflection steps",
                         source="HVAC isolator selection tables (common practice)",
                         status="from_memory"),
    )

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        excitation = [k for k in EXCITATION_INPUTS if k in given]
        if len(excitation) != 1:
            problems.append(("inputs.speed", "give the excitation as exactly one of speed"
                             " (for example \"1480 rpm\") or frequency (for example \"25 Hz\")"
                             + (f"; found both {' and '.join(excitation)}" if excitation
                                else "")))
        isolator = [k for k in ISOLATOR_INPUTS if k in given]
        if len(isolator) != 1:
            problems.append((f"inputs.{isolator[-1] if isolator else 'stiffness'}",
                             "describe the mounts by exactly one of " + ", ".join(
                                 ISOLATOR_INPUTS) + (f"; found {', '.join(isolator)}"
                                                     if isolator else "")))
        problems += mount_type_problems(inputs, given)
        problems += _layout_problems(inputs, given)
        problems += selection.problems(inputs)
        if not problems:
            f = forcing_frequency(inputs)
            fn = natural_frequency(dynamic_stiffness(inputs, given), inputs["mass"])
            if inputs["damping_ratio"] == 0.0 and abs(f / fn - 1.0) < 1e-9:
                problems.append(("inputs.damping_ratio", "the excitation is at the natural"
                                 " frequency and the damping is zero: the transmissibility is"
                                 " unbounded. State the isolator's damping or change the mounts"))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, crit, units = ctx.inputs, ctx.criteria, ctx.display  # text in the package's units
        uneven = "mount_positions" in ctx.given
        s = Sheet(self.inputs)
        s.add(Assumptions(items=text.assumptions(ctx.given, uneven)),
              Paragraph(title="Method", text=text.METHOD))
        iso = working.operating_point(s, p, ctx.given)
        if working.shows_ratio(p):
            s.add(Note(text=text.ratio_note(p.get("mount_type", "steel_spring"),
                                            stiffness_ratio(p))))
        mount = loads(p)
        ld = working.mount_loads(s, p, mount, iso, uneven, units)
        tg = working.target(s, p, crit["min_efficiency"], iso.f)
        ratio = stiffness_ratio(p)
        s.add(figures.mount_table(mount_rows(mount, iso.k_m, tg.f_n_req, equal=not uneven,
                                             ratio=ratio),
                                  p.get("mount_positions"), len(mount), ctx.display))
        if uneven and ld.P_min > 0:
            s.add(Note(text=text.per_position_note(ld.P_min, tg.delta_req, tg.k_m_req, units)))
        selection.write(s, p, mount, tg.delta_req, units)
        peak = working.peak(s, p["damping_ratio"])
        checks.write(s, p, crit, iso, ld, tg, peak, uneven, units, ctx.given)
        s.add(figures.transmissibility_chart(iso.r, iso.T, p["damping_ratio"], tg.T_req,
                                             tg.r_req),
              figures.selection_chart(iso.f, p["damping_ratio"], iso.delta_st, iso.eta,
                                      tg.delta_req, crit["min_efficiency"], ctx.display,
                                      ratio=ratio),
              *(Caution(text=t) for t in text.CAUTIONS))
        if "damping_ratio" not in ctx.given:  # guidance where the damping is assumed
            s.add(Paragraph(title="Typical damping of isolators", text=text.TYPICAL_DAMPING))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
        return second_method(ctx, output)


def _layout_problems(inputs, given) -> list[tuple[str, str]]:
    """Mount positions and centre of gravity: given together, consistent, in compression."""
    problems: list[tuple[str, str]] = []
    n = inputs.get("mounts", 4)
    has_pos = "mount_positions" in given
    cg_given = [k for k in ("cg_x", "cg_y") if k in given]
    if cg_given and not has_pos:
        problems.append((f"inputs.{cg_given[0]}", "a centre-of-gravity offset needs"
                         " mount_positions (a list of [x, y] per mount) in the same axes"))
    if not has_pos:
        return problems
    pts = inputs["mount_positions"]
    if len(pts) != n:
        problems.append(("inputs.mount_positions",
                         f"mount_positions lists {len(pts)} mounts but mounts is {n}"
                         + ("" if "mounts" in given else " (the default)")
                         + f"; set mounts = {len(pts)} or list {n} positions"))
    elif len(cg_given) != 2:
        problems.append(("inputs.cg_x", "mount_positions needs both cg_x and cg_y,"
                         " the centre of gravity in the same axes"))
    else:
        try:
            each = mount_loads(inputs["mass"] * STANDARD_GRAVITY, pts,
                               (inputs["cg_x"], inputs["cg_y"]))
        except ValueError as exc:
            problems.append(("inputs.mount_positions", str(exc)))
        else:
            lifted = lifted_mounts(inputs["mass"], each)
            if lifted:
                problems.append(("inputs.cg_x", text.lifted(lifted)))
    return problems


__all__ = ["HARRIS", "Isolation", "RAO", "THOMSON", "mount_loads", "peak_ratio",
           "required_ratio", "total_stiffness", "transmissibility"]


@hookimpl
def reportgen_register_calc_types(context):
    return [Isolation()]
