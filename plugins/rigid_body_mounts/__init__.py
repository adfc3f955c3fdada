"""rigid_body_mounts: equipment on resilient mounts in six degrees of freedom.

The six rigid-body modes, the static load and deflection of every mount, the forces the
mounts pass on under a harmonic excitation, and the choice of springs from a catalogue.
"""

from __future__ import annotations

from reportgen_plugins.mechanics import mount_type_inputs, mount_type_problems
from reportgen_plugins.mechanics.catalogue import CatalogueError

from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    Column,
    InputSpec,
    Note,
    Paragraph,
    Sheet,
    Source,
    VerificationCase,
    VerificationRow,
    hookimpl,
)

from . import checks, figures, text, working
from .analysis import analyse_inputs
from .method import DEFAULT_DAMPING_RATIO, SQRT2, MountingError
from .resolve import analysed_inputs, resolve
from .verification import second_method

__version__ = "0.2.0"

HARRIS = Source(key="harris-rigid-body", citation=(
    "Harris' Shock and Vibration Handbook (C.M. Harris & A.G. Piersol, eds.), 5th ed.,"
    " McGraw-Hill, 2002, Ch. 3, vibration of a resiliently supported rigid body: equations"
    " of motion (Eqs. 3.31), decoupling by symmetry, response (Eqs. 3.55–3.56)."))
THOMSON = Source(key="thomson-mdof", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed., Prentice"
    " Hall, 1998: §3.5 vibration isolation (T < 1 only above r = √2); Ch. 5–6, systems with"
    " several degrees of freedom, the eigenvalue problem, modal superposition."))
JEONG = Source(key="jeong-singh-2000", citation=(
    "T. Jeong & R. Singh, Analytical methods of decoupling the automotive engine torque roll"
    " axis, J. Sound Vib. 234(1), 2000, 85–114: the modal kinetic-energy distribution as a"
    " measure of decoupling."))

_CASES = ("Harris' Shock and Vibration Handbook, Ch. 3 (decoupled and coupled rigid-body"
          " frequencies); Thomson & Dahleh Ch. 6")
_M, _L, _K, _F = "mass", "length", "stiffness", "force"
_POS = dict(dimension=_L, minimum=-1000.0, maximum=1000.0)


def _length(name: str, symbol: str, description: str, **kw) -> InputSpec:
    return InputSpec(name=name, symbol=symbol, description=description, **{**_POS, **kw})


class RigidBodyMounts(CalcType):
    name = "rigid_body_mounts"
    title = "Equipment on resilient mounts: six rigid-body modes, mount loads and isolator choice"
    version = __version__
    api_version = 1
    purpose = ("Find the six natural frequencies of the equipment on its mounts and check them"
               " against the running speed, find the static load and deflection of every"
               " mount and the forces passed to the structure, and choose each mount's spring"
               " from the isolator catalogue.")
    inputs = (
        InputSpec(name="mass", symbol="m", description="Mass of the equipment on the mounts",
                  dimension=_M, positive=True, minimum=1e-3, maximum=1e7),
        _length("cg_x", "x_G", "Centre of gravity, x (datum frame)"),
        _length("cg_y", "y_G", "Centre of gravity, y (datum frame)"),
        _length("cg_z", "z_G", "Centre of gravity, z (up, datum frame)"),
        *(InputSpec(name=f"inertia_{a}{a}", symbol=f"I_{a}{a}", description=f"Moment of"
                    f" inertia about the {a} axis through the centre of gravity",
                    dimension="moment_of_inertia", required=False, positive=True,
                    maximum=1e9) for a in "xyz"),
        *(InputSpec(name=f"inertia_{p}", symbol=f"I_{p}", description=f"Product of inertia"
                    f" I_{p} = ∫({p[0]} − {p[0]}_G)({p[1]} − {p[1]}_G) dm", default=0.0,
                    dimension="moment_of_inertia", minimum=-1e9, maximum=1e9,
                    default_note="principal axes parallel to the datum axes")
          for p in ("xy", "xz", "yz")),
        *(InputSpec(name=f"box_{d}", symbol=f"{s}_box", description=f"Box {d} along {a} for"
                    " an inertia estimate (a uniform box about the centre of gravity)",
                    dimension=_L, required=False, positive=True, maximum=1000.0)
          for d, s, a in (("length", "a", "x"), ("width", "b", "y"), ("height", "h", "z"))),
        InputSpec(name="mounts", symbol="i", description="The mounts, one row each",
                  kind="table", min_rows=1, max_rows=64, columns=(
                      Column(name="x", description="Elastic centre, x", dimension=_L,
                             minimum=-1000.0, maximum=1000.0),
                      Column(name="y", description="Elastic centre, y", dimension=_L,
                             minimum=-1000.0, maximum=1000.0),
                      Column(name="z", description="Elastic centre, z (up)", dimension=_L,
                             minimum=-1000.0, maximum=1000.0),
                      *(Column(name=n, description=d, dimension=_K, required=False,
                               minimum=0.0, maximum=1e12)
                        for n, d in (("k_vertical", "Vertical stiffness (along z)"),
                                     ("k_horizontal", "Horizontal stiffness (along x and y)"),
                                     ("k_x", "Stiffness along x"), ("k_y", "Stiffness along y"),
                                     ("k_z", "Stiffness along z"))),
                      Column(name="model", description="Isolator model (catalogue name)",
                             kind="text", required=False),
                      Column(name="rated_load", description="Rated load of the isolator",
                             dimension=_F, required=False, positive=True, maximum=1e9))),
        *mount_type_inputs(),
        InputSpec(name="damping_ratio", symbol="zeta", description="Damping ratio of each"
                  " mount (structural damping, k·(1 + 2iζ))", default=DEFAULT_DAMPING_RATIO,
                  minimum=0.0, maximum=0.5, default_note="assumed; state the isolator's value"),
        InputSpec(name="running_speed", symbol="f_run", description="Running speed (1 ×"
                  " rpm) of the equipment", dimension="frequency", required=False,
                  positive=True, maximum=1e4),
        InputSpec(name="force_amplitude", symbol="F_0", description="Amplitude of a harmonic"
                  " force at the running speed", dimension=_F, required=False, positive=True,
                  maximum=1e9),
        InputSpec(name="force_direction", symbol="e_F", description="Direction of the"
                  " harmonic force (z, vertical, if not stated)", kind="choice",
                  choices=("x", "y", "z"), required=False),
        _length("force_x", "x_F", "Point of the harmonic force, x", required=False),
        _length("force_y", "y_F", "Point of the harmonic force, y", required=False),
        _length("force_z", "z_F", "Point of the harmonic force, z", required=False),
        InputSpec(name="unbalance", symbol="U", description="Rotor unbalance m·e",
                  dimension="mass_length", required=False, positive=True, maximum=1e6),
        _length("rotor_x", "x_R", "Rotor's unbalance plane, x", required=False),
        _length("rotor_y", "y_R", "Rotor's unbalance plane, y", required=False),
        _length("rotor_z", "z_R", "Rotor's unbalance plane, z", required=False),
        InputSpec(name="rotor_axis", symbol="e_R", description="Axis the rotor spins about"
                  " (z, vertical, if not stated)", kind="choice", choices=("x", "y", "z"),
                  required=False),
        InputSpec(name="catalogue", symbol="C", description="Isolator catalogue (CSV or TOML;"
                  " beside the job file or in the firm's template folder)", kind="file",
                  formats=(".csv", ".toml"), required=False, max_bytes=1024 * 1024),
    )
    criteria = (
        InputSpec(name="min_frequency_ratio", symbol="r_min", description="Smallest ratio of"
                  " the running speed to any natural frequency", default=SQRT2, minimum=1.0,
                  maximum=20.0, default_note="√2: transmissibility falls below 1 only above"
                  " r = √2 (Thomson & Dahleh §3.5); a job may ask for more"),
        InputSpec(name="min_mount_load", symbol="P_min", description="Smallest acceptable"
                  " static load in any mount", dimension=_F, required=False, minimum=0.0),
        InputSpec(name="max_tilt", symbol="theta_max", description="Largest acceptable static"
                  " tilt of the base", dimension="angle", required=False, positive=True),
        InputSpec(name="min_decoupling_share", symbol="E_min", description="Smallest"
                  " acceptable dominant kinetic-energy share of every mode", required=False,
                  positive=True, maximum=1.0),
        InputSpec(name="min_static_deflection", symbol="delta_min", description="Smallest"
                  " static deflection a spring chosen from the catalogue must reach",
                  dimension=_L, required=False, positive=True, maximum=1.0),
    )
    sources = (HARRIS, THOMSON, JEONG)
    verification_cases = (
        VerificationCase(id="R1_rigid_body_4_mounts_CG_plane_decoupled",
                         description="Symmetric mounts in the plane of the centre of gravity:"
                         " six decoupled modes", source=_CASES,
                         status="formula_confirmed_example_invented"),
        VerificationCase(id="R2_rigid_body_4_mounts_below_CG_coupled_rocking",
                         description="Mounts below the centre of gravity: coupled lateral and"
                         " rocking pairs", source=_CASES, status="from_memory"),
    )

    def validate(self, inputs, given, criteria):
        problems: list[tuple[str, str]] = []
        inertia = [k for k in ("inertia_xx", "inertia_yy", "inertia_zz") if k in given]
        box = [k for k in ("box_length", "box_width", "box_height") if k in given]
        if len(inertia) not in (0, 3) or len(box) not in (0, 3) or not (inertia or box):
            problems.append((f"inputs.{(inertia or box or ['inertia_xx'])[0]}",
                             "give all three moments of inertia inertia_xx, inertia_yy and"
                             " inertia_zz, or all three of box_length, box_width and"
                             " box_height for an estimate"))
        elif inertia and box:
            problems.append(("inputs.box_length", "give the moments of inertia or the box"
                             " for an estimate, not both"))
        problems += mount_type_problems(inputs, given)
        if ({"force_amplitude", "unbalance"} & given) and "running_speed" not in given:
            problems.append(("inputs.running_speed", "an excitation needs the running speed"
                             " (for example \"1180 rpm\")"))
        if problems:
            return problems
        try:
            done = resolve(inputs, criteria)
            analyse_inputs(_with_points(analysed_inputs(inputs, done.rows)))
        except CatalogueError as exc:
            problems.append(("inputs.catalogue", str(exc)))
        except MountingError as exc:
            problems.append(_where(exc))
        return problems

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p, crit, units = ctx.inputs, ctx.criteria, ctx.display  # text in the package's units
        done = resolve(p, crit, units)
        a = analyse_inputs(_with_points(analysed_inputs(p, done.rows)))
        s = Sheet(self.inputs + self.criteria)
        n_mounts = len(done.rows)
        # operands of the printed working: box sides, each mount's stiffness and place,
        # the static displacements; an eigenvalue λ = ω² (rad²/s²)
        s.declare(a="length", b="length", h="length", w="length", theta_x="angle",
                  theta_y="angle",
                  **{f"k_z{i}": "stiffness" for i in range(1, n_mounts + 1)},
                  **{f"{c}_{i}": "length" for i in range(1, n_mounts + 1) for c in "xy"},
                  **{f"lambda_{i}": "angular_frequency_squared" for i in range(1, 7)})
        s.add(Assumptions(items=text.assumptions(ctx.given, a.model.body.inertia_estimated)),
              Paragraph(title="Method", text=text.METHOD))
        if p.get("mount_type") == "elastomer" or a.stiffness_ratio != 1.0:
            s.add(Note(text=text.ratio_note(p.get("mount_type", "steel_spring"),
                                            a.stiffness_ratio)))
        working.body(s, p, a)
        working.matrices(s, a, units)
        working.modes(s, a)
        working.statics(s, a, units)
        if done.catalogue is not None:
            figures.selection_table_into(s, done, a, crit, units)
        if a.transmitted_force is not None:
            working.response(s, p, a)
        s.add(figures.mount_table(a, units))
        checks.write(s, p, crit, a, done, units)
        s.add(*figures.all_figures(a, p, crit, ctx.display))
        if a.model.body.inertia_estimated:
            s.add(Caution(text=text.BOX_CAUTION))
        s.add(*(Caution(text=t) for t in text.CAUTIONS))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput) -> list[VerificationRow]:
        done = resolve(ctx.inputs, ctx.criteria)
        return second_method(_with_points(analysed_inputs(ctx.inputs, done.rows)), output)


def _with_points(inputs: dict) -> dict:
    """A force or rotor point not given sits at the centre of gravity."""
    for prefix in ("force", "rotor"):
        for a in "xyz":
            if inputs.get(f"{prefix}_{a}") is None:
                inputs[f"{prefix}_{a}"] = inputs.get(f"cg_{a}") or 0.0
    return inputs


def _where(exc: MountingError) -> tuple[str, str]:
    field = {"inertia": "inertia_xx", "": "mounts"}.get(exc.field, exc.field)
    if exc.row is not None:
        return f"inputs.{field}[{exc.row}]", f"row {exc.row}: {exc.message}"
    return f"inputs.{field}", exc.message


__all__ = ["HARRIS", "JEONG", "THOMSON", "RigidBodyMounts"]


@hookimpl
def reportgen_register_calc_types(context):
    return [RigidBodyMounts()]
