"""block_foundation: a rotating machine on a rigid concrete block on soil, by the lumped
half-space analogs: natural frequencies, amplitudes at the running speed, and the checks.
"""

from __future__ import annotations

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
    Table,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.units import format_number

from . import checks, figures, text, working
from .errors import FoundationError
from .excitation import BALANCE_GRADES_MM_S
from .method import (
    DEFAULT_FREQUENCY_SEPARATION,
    DEFAULT_MAX_ECCENTRICITY,
    DEFAULT_MIN_MASS_RATIO,
    SHAFT_AXES,
    frequency_separation,
)
from .verify import second_method

__version__ = "0.1.0"

RHW = Source(key="richart-hall-woods-1970", citation=(
    "F.E. Richart Jr., J.R. Hall Jr. & R.D. Woods, Vibrations of Soils and Foundations,"
    " Prentice-Hall, 1970: Ch. 7 (lumped analogs: Lysmer's vertical, Hall's sliding and"
    " rocking, torsion) and Ch. 10 (equivalent radii, coupled rocking and sliding)."))
LYSMER = Source(key="lysmer-richart-1966", citation=(
    "J. Lysmer & F.E. Richart Jr., Dynamic response of footings to vertical loading, ASCE"
    " Journal of the Soil Mechanics and Foundations Division 92(SM1), 1966."))
ACI351 = Source(key="aci-351-3r", citation=(
    "ACI 351.3R, Report on Foundations for Dynamic Equipment, American Concrete Institute"
    " (practice: frequency separation, mass ratio, eccentricity)."))
ISO21940 = Source(key="iso-21940-11", citation=(
    "ISO 21940-11, Mechanical vibration, Rotor balancing, Part 11: Procedures and tolerances"
    " for rotors with rigid behaviour (balance quality grades, G = e·ω)."))

_CASE_RHW = RHW.citation


def _q(name, symbol, description, dimension, **kw) -> InputSpec:
    return InputSpec(name=name, symbol=symbol, description=description, dimension=dimension,
                     required=kw.pop("required", True), **kw)


class BlockFoundation(CalcType):
    name = "block_foundation"
    title = "Block foundation for a rotating machine"
    version = __version__
    api_version = 1
    purpose = ("Find the natural frequencies of the machine's block foundation on the soil and"
               " its vibration amplitude at the running speed, and check them against the"
               " separation, amplitude, bearing-pressure, mass-ratio and eccentricity"
               " criteria.")
    inputs = (
        _q("block_length", "L", "Block length (along x)", "length", positive=True,
           maximum=100.0),
        _q("block_width", "B", "Block width (along y)", "length", positive=True,
           maximum=100.0),
        _q("block_height", "H", "Block height", "length", positive=True, maximum=20.0),
        _q("concrete_density", "rho_c", "Density of the concrete", "density", default=2400.0,
           minimum=1500.0, maximum=3000.0, default_note="normal-weight reinforced concrete"),
        _q("machine_mass", "m_m", "Machine mass", "mass", positive=True, maximum=1e7),
        _q("machine_cg_height", "h_m", "Machine's centre of gravity above the block's base",
           "length", positive=True, maximum=50.0),
        _q("machine_cg_x", "x_m", "Machine's centre of gravity from the centre of the base,"
           " along x", "length", default=0.0, minimum=-50.0, maximum=50.0),
        _q("machine_cg_y", "y_m", "Machine's centre of gravity from the centre of the base,"
           " along y", "length", default=0.0, minimum=-50.0, maximum=50.0),
        _q("machine_inertia_x", "I_mx", "Machine's moment of inertia about x through its"
           " centre of gravity", "moment_of_inertia", default=0.0, minimum=0.0, maximum=1e9,
           default_note="machine taken as a point mass"),
        _q("machine_inertia_y", "I_my", "Machine's moment of inertia about y through its"
           " centre of gravity", "moment_of_inertia", default=0.0, minimum=0.0, maximum=1e9,
           default_note="machine taken as a point mass"),
        _q("machine_inertia_z", "I_mz", "Machine's moment of inertia about the vertical"
           " through its centre of gravity", "moment_of_inertia", default=0.0, minimum=0.0,
           maximum=1e9, default_note="machine taken as a point mass"),
        _q("shear_modulus", "G", "Shear modulus of the soil (small strain)", "pressure",
           required=False, positive=True, maximum=1e11),
        _q("shear_wave_velocity", "V_s", "Shear-wave velocity of the soil", "velocity",
           required=False, positive=True, maximum=5000.0),
        _q("poisson_ratio", "nu", "Poisson's ratio of the soil", "dimensionless",
           minimum=0.0, maximum=0.5),
        _q("soil_density", "rho_s", "Density of the soil", "density", positive=True,
           minimum=800.0, maximum=3500.0),
        _q("embedment_depth", "D_e", "Depth of the base below grade", "length", default=0.0,
           minimum=0.0, maximum=20.0, default_note="block on the surface"),
        _q("running_speed", "f", "Running speed", "frequency", positive=True, maximum=1000.0),
        _q("unbalance", "U", "Unbalance m·e", "mass_length", required=False, positive=True,
           maximum=1e3),
        InputSpec(name="balance_grade", symbol="G", description="Balance quality grade"
                  " (ISO 21940-11), written \"G6.3\"", kind="choice", required=False,
                  choices=tuple(f"G{g:g}" for g in BALANCE_GRADES_MM_S)),
        _q("rotor_mass", "m_r", "Rotor mass (with balance_grade)", "mass", required=False,
           positive=True, maximum=1e7),
        _q("force_amplitude", "F_0", "Force amplitude at the running speed (stated)", "force",
           required=False, positive=True, maximum=1e9),
        _q("force_height", "h_F", "Height of the force above the base", "length",
           required=False, minimum=0.0, maximum=50.0),
        InputSpec(name="shaft_axis", symbol="shaft", description="Direction of the shaft (the"
                  " horizontal force is perpendicular to it)", kind="choice",
                  choices=SHAFT_AXES, default="y"),
    )
    criteria = (
        _q("min_frequency_separation", "s_min", "Band around the running speed that every"
           " natural frequency must stay out of (fraction)", "dimensionless",
           default=DEFAULT_FREQUENCY_SEPARATION, minimum=0.0, maximum=1.0,
           default_note="common practice"),
        _q("max_amplitude", "A_lim", "Largest amplitude at the machine", "length",
           required=False, positive=True),
        _q("max_velocity", "v_lim", "Largest vibration velocity at the machine", "velocity",
           required=False, positive=True),
        InputSpec(name="limit_measure", symbol="meas", description="How max_amplitude and"
                  " max_velocity are stated", kind="choice",
                  choices=("peak", "rms", "peak_to_peak"), default="peak"),
        _q("allowable_bearing_pressure", "q_a", "Allowable bearing pressure (geotechnical)",
           "pressure", required=False, positive=True),
        _q("min_mass_ratio", "mu_min", "Least mass ratio, foundation to machine",
           "dimensionless", default=DEFAULT_MIN_MASS_RATIO, positive=True, maximum=100.0,
           default_note="common practice for rotating machines"),
        _q("max_eccentricity", "e_max", "Largest offset of the combined centre of gravity,"
           " fraction of the base dimension", "dimensionless",
           default=DEFAULT_MAX_ECCENTRICITY, minimum=0.0, maximum=0.5,
           default_note="common practice"),
    )
    sources = (RHW, LYSMER, ACI351, ISO21940)
    verification_cases = (
        VerificationCase(id="F2_rectangular_block_equivalent_radius_coupled_rocking",
                         description="Rectangular block: equivalent radii, coupled sliding"
                         " and rocking", source=_CASE_RHW, status="corroborated_secondary"),
    )

    def validate(self, inputs, given, criteria):
        try:  # the method refuses what it cannot model (embedment too) and names the field
            working.analysis(_method_inputs(inputs, given))
        except FoundationError as exc:
            return [(f"inputs.{exc.field}", exc.message)]
        return []

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p = _method_inputs(ctx.inputs, ctx.given)
        a = working.analysis(p)
        s = Sheet(self.inputs + self.criteria)
        s.declare(b="length", l="length", I_G="moment_of_inertia", I_z="moment_of_inertia",
                  G_b="velocity", A_max="length")
        s.add(Assumptions(items=text.assumptions(False)),
              Paragraph(title="Method", text=text.METHOD))
        z_g = working.masses(s, p, a)
        v = working.soil(s, p, ctx.given, a, z_g)
        s.add(frequency_table(a))
        working.response(s, p, ctx.given, a, v)
        checks.write(s, ctx.criteria, frozenset(ctx.criteria_given), a)
        band = ctx.criteria["min_frequency_separation"]
        s.add(figures.response_chart(figures.response_curves(a, band=band), band, ctx.display),
              figures.block_figure(figures.block_sketch(a), ctx.display),
              *(Caution(text=t) for t in text.CAUTIONS))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
        return verification_rows(ctx, output)


def _method_inputs(inputs, given) -> dict:
    """The inputs as the method takes them: absent optional inputs left out, the force's
    height defaulting to the machine's centre of gravity."""
    p = {k: v for k, v in inputs.items() if v is not None}
    for k in ("shear_modulus", "shear_wave_velocity", "unbalance", "balance_grade",
              "rotor_mass", "force_amplitude", "force_height"):
        if k not in given:
            p.pop(k, None)
    if "force_height" not in p:
        p["force_height"] = p["machine_cg_height"]
    return p


def frequency_table(a) -> Table:
    f_run = a.excitation.running_speed
    rows = tuple((name, format_number(f, 4), format_number(f * 60.0, 4),
                  format_number(100.0 * frequency_separation(f, f_run), 3))
                 for name, f in a.natural_frequencies())
    return Table(title=f"Natural frequencies against the running speed"
                       f" ({format_number(f_run, 4)} Hz, {format_number(f_run * 60, 4)} rpm)",
                 header=("Mode", "f [Hz]", "f [rpm]", "Separation from running speed [%]"),
                 rows=rows)


# ------------------------------------------------------------------ the calc type's rows

#: Inputs of second_method, by the job's input names.
_SECOND_INPUTS = (
    "block_length", "block_width", "block_height", "concrete_density", "machine_mass",
    "machine_cg_height", "machine_cg_x", "machine_cg_y", "machine_inertia_x",
    "machine_inertia_y", "machine_inertia_z", "shear_modulus", "shear_wave_velocity",
    "poisson_ratio", "soil_density", "running_speed", "unbalance", "balance_grade",
    "rotor_mass", "force_amplitude", "force_height", "shaft_axis",
)
_ROWS = (
    ("total_mass", "mass", 1e-12, "sum of the block (ρ·L·B·H) and the machine"),
    ("static_bearing_pressure", "pressure", 1e-12, "m·g_n over the base area"),
    ("vertical_natural_frequency", "frequency", 1e-9,
     "mass-ratio form of Lysmer's analog, a₀ = ω·r/Vs = 1/√B_z"),
    ("vertical_natural_frequency_eigen", "frequency", 1e-9,
     "eigenvalue of the 6-DOF rigid body on its base springs (scipy.linalg.eigh), the"
     " vertical mode picked by its kinetic energy"),
    ("coupled_frequency_1", "frequency", 1e-7, "the same eigenproblem: lower mode of the"
     " sliding-rocking plane of the force"),
    ("coupled_frequency_2", "frequency", 1e-7, "the same eigenproblem: upper mode of that"
     " plane"),
    ("torsional_natural_frequency", "frequency", 1e-7, "the same eigenproblem: torsional"
     " mode"),
    ("vertical_amplitude", "length", 1e-6, "complex 6 × 6 solve of (K − ω²M + iωC)·q = F"
     " (numpy.linalg.solve), dashpots from the tabulated damping ratios"),
    ("horizontal_amplitude", "length", 1e-6, "the same complex solve, at the top of the"
     " block"),
    ("mass_ratio", "dimensionless", 1e-12, "block mass over machine mass"),
)


def verification_rows(ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
    """The second method's rows for a block_foundation calc (the method's own model, solved
    as a 6-DOF rigid body); a centre of gravity off the axis couples the motions a little
    in the 6-DOF model, hence a looser tolerance on the amplitudes then."""
    res = {row.key: row.quantity.value for row in output.results}
    p = ctx.inputs
    second = second_method(**{k: p[k] for k in _SECOND_INPUTS if k in p}).values
    offset = bool(p.get("machine_cg_x") or p.get("machine_cg_y"))
    rows = []
    for key, unit, tol, how in _ROWS:
        closed = res[key.removesuffix("_eigen")]
        if offset and key.endswith("amplitude"):
            tol, how = 0.02, how + "; the centre of gravity's offset couples the motions here"
        rows.append(VerificationRow(quantity=key.removesuffix("_eigen"), closed_form=closed,
                                    independent=second[key], tolerance=tol, method=how,
                                    unit=unit))
    return rows


__all__ = ["RHW", "BlockFoundation"]


@hookimpl
def reportgen_register_calc_types(context):
    return [BlockFoundation()]
