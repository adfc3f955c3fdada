"""floor_walking: floors and footbridges under walking, by the design guide's low-frequency
method, from a stated frequency and weight or from the bay's beams and girders.
"""

from __future__ import annotations

from reportgen_plugins.vibration_criteria.library import BAND_VELOCITY, limit_at

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    InputSpec,
    Paragraph,
    Sheet,
    Source,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.units import format_number

from . import checks, figures, text, working
from .bay import BEAM_COEFFICIENTS, GIRDER_COEFFICIENTS, bay_modes, bay_sketch
from .equipment import EQUIPMENT_FREQUENCY_LIMIT, WALKING_PACES
from .method import (
    DAMPING_DEFAULTS,
    LOW_FREQUENCY_LIMIT,
    OCCUPANCIES,
    FloorMethodError,
    damping_default,
    limit_curve,
    walking_criterion,
)
from .verify import second_method

__version__ = "0.1.0"

DG11 = Source(key="aisc-dg11", citation=(
    "T.M. Murray, D.E. Allen, E.E. Ungar & D.B. Davis, Vibrations of Steel-Framed Structural"
    " Systems Due to Human Activity, AISC Steel Design Guide 11, 2nd ed., AISC, 2016: Ch. 3"
    " (natural frequencies of beams and bays), Ch. 4 (walking excitation, Eq. 4-1, Table 4-1)."))
ALLEN_MURRAY = Source(key="allen-murray-1993", citation=(
    "D.E. Allen & T.M. Murray, Design criterion for vibrations due to walking, AISC"
    " Engineering Journal 30(4), 1993 (recommended damping ratios by fit-out)."))
ACI318 = Source(key="aci-318-19", citation=(
    "ACI 318-19, Building Code Requirements for Structural Concrete, §19.2.2.1 (modulus of"
    " elasticity of concrete)."))
ISO2631 = Source(key="iso-2631-2-1989", citation=(
    "ISO 2631-2:1989, Evaluation of human exposure to whole-body vibration, Part 2: continuous"
    " and shock-induced vibration in buildings (1 to 80 Hz): the base curve of the"
    " tolerance figure."))
THOMSON_D = Source(key="thomson-appendix-d", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed., 1998,"
    " Appendix D (normal modes of uniform beams): tests of the second method's beam model."))

_CASE_DG11 = DG11.citation
BAY_INPUTS = ("beam_span", "beam_spacing", "beam_inertia", "girder_span", "girder_inertia",
              "dead_load", "live_load_present", "slab_depth")
DIRECT_INPUTS = ("natural_frequency", "effective_weight")


def _q(name, symbol, description, dimension, **kw) -> InputSpec:
    return InputSpec(name=name, symbol=symbol, description=description, dimension=dimension,
                     required=kw.pop("required", False), **kw)


class FloorWalking(CalcType):
    name = "floor_walking"
    title = "Floor vibration under walking"
    version = __version__
    api_version = 1
    purpose = ("Check that the floor's peak acceleration under a person walking stays within"
               " the tolerance of its occupancy, by the design guide's method for floors of"
               " low natural frequency.")
    inputs = (
        _q("natural_frequency", "f_n", "Fundamental natural frequency of the floor (stated,"
           " e.g. from a finite-element model)", "frequency", positive=True, maximum=1e3),
        _q("effective_weight", "W", "Effective weight of the floor's fundamental mode"
           " (stated)", "force", positive=True, maximum=1e9),
        _q("beam_span", "L_j", "Beam span", "length", positive=True, maximum=100.0),
        _q("beam_spacing", "S", "Beam spacing", "length", positive=True, maximum=20.0),
        _q("beam_inertia", "I_j", "Beam moment of inertia (effective composite)",
           "second_moment_of_area", positive=True, maximum=10.0),
        _q("girder_span", "L_g", "Girder span", "length", positive=True, maximum=100.0),
        _q("girder_inertia", "I_g", "Girder moment of inertia (effective composite)",
           "second_moment_of_area", positive=True, maximum=10.0),
        _q("elastic_modulus", "E_s", "Elastic modulus of the steel (bay route; 200 GPa if not"
           " stated)", "pressure", positive=True, maximum=1e12),
        _q("dead_load", "D", "Dead load per unit area, including slab and self weight",
           "pressure", positive=True, maximum=1e6),
        _q("live_load_present", "L_p", "Part of the live load present in service",
           "pressure", minimum=0.0, maximum=1e6),
        _q("slab_depth", "d_e", "Effective slab depth", "length", positive=True, maximum=2.0),
        _q("concrete_density", "rho_c", "Density of the slab's concrete (with"
           " concrete_strength; 2400 kg/m³ if not stated)", "density", minimum=1440.0,
           maximum=2560.0),
        _q("concrete_strength", "f_c", "Specified compressive strength of the concrete",
           "pressure", positive=True, maximum=2e8),
        _q("modular_ratio", "n", "Dynamic modular ratio E_s/(1.35·E_c)", "dimensionless",
           positive=True, maximum=100.0),
        InputSpec(name="bay_position", symbol="pos", description="Position of the bay: interior,"
                  " or along a free edge parallel to the beams (interior if not stated)",
                  kind="choice", choices=tuple(BEAM_COEFFICIENTS), required=False),
        InputSpec(name="girder_connection", symbol="conn", description="Beams framed into the"
                  " girder web, or seated on its flange (web if not stated)", kind="choice",
                  choices=tuple(GIRDER_COEFFICIENTS), required=False),
        _q("floor_width", "B_floor", "Extent of the floor across the beams (limits B_j to ⅔"
           " of it)", "length", positive=True, maximum=1000.0),
        _q("floor_length", "L_floor", "Extent of the floor along the beams (limits B_g to ⅔"
           " of it)", "length", positive=True, maximum=1000.0),
        InputSpec(name="fit_out", symbol="fit", description="Fit-out that sets the recommended"
                  " damping ratio", kind="choice", choices=tuple(DAMPING_DEFAULTS),
                  default="furnished", default_note="confirm the fit-out in service"),
        _q("damping_ratio", "beta", "Modal damping ratio (overrides the fit-out's value)",
           "dimensionless", positive=True, maximum=0.2),
        InputSpec(name="occupancy", symbol="occ", description="Occupancy that sets the tolerance"
                  " a0/g and the excitation P0", kind="choice", choices=tuple(OCCUPANCIES),
                  required=False),
        InputSpec(name="structure", symbol="kind", description="Floor or footbridge (sets P0 when"
                  " no occupancy is named; floor if not stated)", kind="choice",
                  choices=("floor", "footbridge"), required=False),
        _q("max_acceleration_ratio", "A_0", "Stated tolerance a0/g (overrides the"
           " occupancy's)", "dimensionless", positive=True, maximum=1.0),
        InputSpec(name="criterion", symbol="crit", description="Vibration criterion of sensitive"
                  " equipment on the floor (a curve of the criteria library, e.g. VC-A)",
                  kind="criterion", required=False),
        InputSpec(name="walking_pace", symbol="pace", description="Walking pace near the"
                  " equipment (slow 75, moderate 100, fast 125 steps/min; moderate if not"
                  " stated)", kind="choice", choices=tuple(WALKING_PACES), required=False),
    )
    #: the tolerance may also be written among the criteria (it is one)
    criteria = (
        _q("max_acceleration_ratio", "A_0", "Stated tolerance a0/g (overrides the"
           " occupancy's)", "dimensionless", positive=True, maximum=1.0),
    )
    sources = (DG11, ALLEN_MURRAY, ACI318, ISO2631, THOMSON_D)
    verification_cases = (
        *(VerificationCase(id=i, description=d, source=_CASE_DG11,
                           status="formula_confirmed_example_invented") for i, d in (
            ("I1_dg11_office_fails", "Office floor, 5 Hz, 250 kN, β = 0.03: fails"),
            ("I2_dg11_office_passes", "Office floor, 6 Hz, 400 kN, β = 0.03: passes"),
            ("I3_dg11_outdoor_footbridge", "Outdoor footbridge, 4 Hz, 80 kN, β = 0.01"),
            ("I4_dg11_mall", "Shopping mall, 4.5 Hz, 600 kN, β = 0.02"))),
        VerificationCase(id="I5_dg11_Po_derivation_check", description="P0 = R·0.83·P and"
                         " the modal oscillator of mass W/(2g)", source=_CASE_DG11,
                         status="from_memory"),
        VerificationCase(id="I6_dg11_fn_from_deflection_10mm", description="f_n from a"
                         " combined deflection of 10 mm", source=_CASE_DG11,
                         status="from_memory"),
        VerificationCase(id="F_beam_simply_supported", description="Uniform simply supported"
                         " beam (second method's beam model)", source=THOMSON_D.citation,
                         status="confirmed_in_source"),
    )

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        direct = [k for k in DIRECT_INPUTS if k in given]
        bay = [k for k in BAY_INPUTS if k in given]
        if direct and bay:
            return [(f"inputs.{direct[0]}", "give either natural_frequency and"
                     " effective_weight, or the bay (beams and girders), not both; found "
                     + ", ".join(direct + bay))]
        if direct:
            missing = [k for k in DIRECT_INPUTS if k not in given]
        else:
            missing = [k for k in BAY_INPUTS if k not in given]
            if not ({"modular_ratio", "concrete_strength"} & given):
                missing.append("modular_ratio")
        if missing:
            problems.append((f"inputs.{missing[0]}", "missing: " + ", ".join(missing) + (
                "" if direct or bay else "; give natural_frequency and effective_weight, or"
                " the bay's beams and girders")))
        if "max_acceleration_ratio" in criteria and "max_acceleration_ratio" in given:
            return [("criteria.max_acceleration_ratio", "give max_acceleration_ratio once,"
                     " among the inputs or among the criteria")]
        if "max_acceleration_ratio" in criteria:
            inputs, given = _with_limit(inputs, given, criteria)
        inputs = _with_defaults(inputs)
        comfort = bool({"occupancy", "max_acceleration_ratio"} & given)
        if not comfort and "criterion" not in given:
            problems.append(("inputs.occupancy", "give an occupancy (one of "
                             + ", ".join(OCCUPANCIES) + ") or max_acceleration_ratio, or a"
                             " criterion for sensitive equipment"))
        if problems:
            return problems
        if direct:
            f_n, field = inputs["natural_frequency"], "inputs.natural_frequency"
            what = "natural frequency"
        else:
            try:
                f_n = bay_modes(**working.bay_inputs(inputs, given)).natural_frequency
            except FloorMethodError as exc:
                return [("inputs.beam_span", str(exc))]
            field, what = "inputs.girder_inertia", "the bay's natural frequency"
        if comfort and f_n > LOW_FREQUENCY_LIMIT:
            problems.append((field, f"{what} {format_number(f_n, 4)} Hz "
                             + text.FREQUENCY_REFUSED.format(limit=format_number(
                                 LOW_FREQUENCY_LIMIT, 2))))
        elif f_n > EQUIPMENT_FREQUENCY_LIMIT:
            problems.append((field, f"{what} {format_number(f_n, 4)} Hz is above the"
                             f" {format_number(EQUIPMENT_FREQUENCY_LIMIT, 2)} Hz limit of the"
                             " sensitive-equipment method (criteria are stated from 1 to"
                             " 80 Hz)"))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, given = _with_limit(ctx.inputs, ctx.given, ctx.criteria)
        p = _with_defaults(p)
        bay = "beam_span" in given
        beta, note = damping(p, given)
        s = Sheet(self.inputs + self.criteria)
        s.declare(C_j="dimensionless", C_g="dimensionless", P_0="force")
        s.add(Assumptions(items=text.assumptions(bay, note)))
        if bay:
            modes = working.bay(s, p, given)
            f_n, weight = modes.natural_frequency, modes.effective_weight
        else:
            s.add(Paragraph(title="Natural frequency and effective weight", text=text.DIRECT))
            modes = None
            f_n = s.result("natural_frequency", p["natural_frequency"], "frequency", "f_n",
                           "Fundamental natural frequency (stated)", key_result=True)
            weight = s.result("effective_weight", p["effective_weight"], "force", "W",
                              "Effective weight (stated)", key_result=True)
        s.result("damping_ratio", beta, "dimensionless", "beta", "Modal damping ratio")
        if {"occupancy", "max_acceleration_ratio"} & given:
            crit = walking_criterion(p.get("occupancy"), p.get("max_acceleration_ratio"),
                                     p["structure"])
            s.result("excitation_force", crit.excitation_force, "force", "P_0",
                     "Walking excitation force P0 (design guide Table 4-1)")
            resp = working.walking(s, f_n, weight, beta, crit.excitation_force,
                                   crit.limit_ratio)
            tol = tolerance_text(crit)
            checks.write(s, resp, tol, modes)
            s.add(figures.limit_chart(limit_curve(crit.limit_ratio, tol, point_frequency=f_n,
                                                  point_ratio=resp.peak_acceleration_ratio)))
        if "criterion" in given:
            sensitive_equipment(s, ctx, f_n, weight, beta)
        if modes is not None:
            s.add(figures.bay_plan(bay_sketch(modes, beam_span=p["beam_span"],
                                              girder_span=p["girder_span"],
                                              beam_spacing=p["beam_spacing"]),
                                   p["bay_position"], ctx.display))
        s.add(*(Caution(text=t) for t in text.CAUTIONS))
        purpose = self.purpose if {"occupancy", "max_acceleration_ratio"} & given else ""
        if "criterion" in given:
            purpose += (" " if purpose else "") + text.EQUIPMENT_PURPOSE
        return s.output(purpose=purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
        return second_method(ctx, output)


#: What an absent optional input stands for (left out of the inputs table when it is not
#: given, since most of them belong to one route only).
ROUTE_DEFAULTS = {"elastic_modulus": 200e9, "concrete_density": 2400.0,
                  "bay_position": "interior", "girder_connection": "web",
                  "structure": "floor", "walking_pace": "moderate"}


def _with_defaults(inputs):
    return {**ROUTE_DEFAULTS, **{k: v for k, v in inputs.items() if v is not None}}


def _with_limit(inputs, given, criteria):
    """The inputs with a tolerance written among the criteria moved in with them."""
    if "max_acceleration_ratio" not in criteria:
        return inputs, given
    return ({**inputs, "max_acceleration_ratio": criteria["max_acceleration_ratio"]},
            frozenset(given) | {"max_acceleration_ratio"})


def sensitive_equipment(s: Sheet, ctx: CalcContext, f_n: float, weight: float,
                        beta: float) -> None:
    """The floor's velocity under a walker against the criterion read at f_n."""
    name = ctx.inputs["criterion"]
    curve = ctx.criteria_library.get(name)
    if getattr(curve, "zones", ()) or getattr(curve, "quantity", "") != BAND_VELOCITY:
        s.check("equipment", f"Sensitive equipment: criterion {name}", status="info",
                note="not a one-third-octave band velocity curve, so not compared here")
        return
    v_crit = float(limit_at(curve, f_n))
    pace = ctx.inputs.get("walking_pace") or ROUTE_DEFAULTS["walking_pace"]
    resp = working.equipment(s, f_n, weight, beta, pace, name, v_crit)
    s.check("equipment", f"Floor velocity under walking within the criterion {name}",
            value=resp.velocity_rms, limit=v_crit, comparison="<=", dimension="velocity",
            note=f"{curve.title}; read at {format_number(f_n, 3)} Hz; {resp.regime} response"
                 f" at {format_number(resp.step_frequency * 60, 3)} steps/min")
    s.add(Caution(text=text.CRITERION_CAUTION))


def damping(p, given) -> tuple[float, str]:
    """β as stated, else the fit-out's recommended value, with the sentence that says which."""
    if "damping_ratio" in given:
        beta = p["damping_ratio"]
    else:
        beta = damping_default(p["fit_out"]).damping_ratio
    return beta, text.damping_note("damping_ratio" in given, p["fit_out"], beta)


def tolerance_text(crit) -> str:
    limit = format_number(100.0 * crit.limit_ratio, 3)
    if crit.occupancy and not crit.limit_given:
        return f"{crit.description}: a0/g = {limit} %g (design guide Table 4-1)"
    if crit.occupancy:
        return f"stated tolerance a0/g = {limit} %g ({crit.description.lower()})"
    return f"stated tolerance a0/g = {limit} %g"


__all__ = ["DG11", "FloorWalking"]


@hookimpl
def reportgen_register_calc_types(context):
    return [FloorWalking()]
