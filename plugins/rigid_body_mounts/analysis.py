"""From the calc's SI inputs to the rigid-body results: the body, the mounts and the
excitations read from the inputs, one analysis, and the values results.json carries.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

import numpy as np

from reportgen.units import STANDARD_GRAVITY

from .method import (
    DEFAULT_DAMPING_RATIO,
    Body,
    Modes,
    Mount,
    MountingError,
    RigidBodyModel,
    assemble,
    box_inertia,
    natural_modes,
)
from .response import (
    Excitation,
    ForcedResponse,
    forced_response,
    harmonic_force,
    rotating_unbalance,
)
from .statics import StaticResult, static_equilibrium

__all__ = [
    "Analysis",
    "analyse",
    "analyse_inputs",
    "body_from_inputs",
    "excitations_from_inputs",
    "mounts_from_rows",
    "result_values",
]


def _num(value: object) -> float:
    return float(value)


def body_from_inputs(inputs: Mapping[str, object]) -> Body:
    """The body from the calc's SI inputs: ``mass``, ``cg_x/y/z`` and either
    ``inertia_xx/yy/zz`` (with optional ``inertia_xy/xz/yz``, default 0) or
    ``box_length/width/height`` (a uniform-box estimate about the CG, flagged as such)."""
    names = ("inertia_xx", "inertia_yy", "inertia_zz")
    box = ("box_length", "box_width", "box_height")
    mass = _num(inputs["mass"])
    cg = tuple(_num(inputs.get(f"cg_{a}") or 0.0) for a in "xyz")
    if all(inputs.get(n) is not None for n in names):
        products = tuple(_num(inputs.get(f"inertia_{p}") or 0.0) for p in ("xy", "xz", "yz"))
        inertia = tuple(_num(inputs[n]) for n in names) + products
        estimated = False
    elif all(inputs.get(n) is not None for n in box):
        inertia = box_inertia(mass, *(_num(inputs[n]) for n in box)) + (0.0, 0.0, 0.0)
        estimated = True
    else:
        raise MountingError("give the moments of inertia inertia_xx, inertia_yy and"
                            " inertia_zz, or box_length, box_width and box_height for an"
                            " estimate", field="inertia_xx")
    return Body(mass=mass, cg=cg, inertia=inertia,
                inertia_estimated=estimated)


def mounts_from_rows(rows: Sequence[Mapping[str, object]]) -> tuple[Mount, ...]:
    """Mounts from the table rows (SI): ``x, y, z`` and ``k_vertical`` + ``k_horizontal``
    (horizontal along both x and y) or ``k_x, k_y, k_z``; optional ``axes`` (three unit
    vectors for an inclined mount), ``model`` and ``rated_load``."""
    split = {"k_x", "k_y", "k_z"}
    pair = {"k_vertical", "k_horizontal"}
    out = []
    for i, row in enumerate(rows, start=1):
        given = {k for k, v in row.items() if v is not None and v != ""}
        if given & split and given & pair:
            raise MountingError("give k_vertical and k_horizontal, or k_x, k_y and k_z, not"
                                " both", field="mounts", row=i)
        if split <= given:
            k = (row["k_x"], row["k_y"], row["k_z"])
        elif pair <= given:
            k = (row["k_horizontal"], row["k_horizontal"], row["k_vertical"])
        else:
            missing = sorted((split if given & split else pair) - given)
            raise MountingError(f"the mount's stiffness is incomplete: {', '.join(missing)}"
                                " missing", field="mounts", row=i)
        for name in ("x", "y", "z"):
            if name not in given:
                raise MountingError(f"the mount's position {name} is missing",
                                    field="mounts", row=i)
        axes = row.get("axes")
        rated = row.get("rated_load")
        out.append(Mount(
            x=_num(row["x"]), y=_num(row["y"]), z=_num(row["z"]),
            k_x=_num(k[0]), k_y=_num(k[1]), k_z=_num(k[2]),
            axes=None if axes is None else tuple(
                tuple(_num(c) for c in v) for v in axes),
            model=str(row.get("model") or ""),
            rated_load=None if rated is None else _num(rated)))
    return tuple(out)


def excitations_from_inputs(inputs: Mapping[str, object]) -> tuple[Excitation, ...]:
    """The excitations the SI inputs give: ``force_amplitude`` along ``force_direction``
    at ``force_x/y/z``, and/or ``unbalance`` at ``rotor_x/y/z`` about ``rotor_axis``."""
    out = []
    if inputs.get("force_amplitude") is not None:
        out.append(harmonic_force(
            _num(inputs["force_amplitude"]), str(inputs.get("force_direction") or "z"),
            [_num(inputs.get(f"force_{a}") or 0.0) for a in "xyz"]))
    if inputs.get("unbalance") is not None:
        out.append(rotating_unbalance(
            _num(inputs["unbalance"]), [_num(inputs.get(f"rotor_{a}") or 0.0) for a in "xyz"],
            str(inputs.get("rotor_axis") or "z")))
    return tuple(out)


@dataclass(frozen=True, slots=True, kw_only=True)
class Analysis:
    """Everything the calc reports, computed once.

    ``responses``: one per excitation at the running speed. ``transmitted_force`` (N,) and
    ``total_transmitted_force``: the largest magnitude over one cycle of each mount's force
    and of their vector sum, summed over the excitations: the excitations' relative phase is
    unknown, so adding their peaks is the bound that holds for any phase (common practice).
    """

    model: RigidBodyModel  # the mounts at their static rates: statics, loads, the table
    modes: Modes  # of ``vibrating``
    static: StaticResult
    damping_ratio: float
    running_speed: float | None
    excitations: tuple[Excitation, ...]
    responses: tuple[ForcedResponse, ...]
    transmitted_force: np.ndarray | None
    total_transmitted_force: float | None
    #: the mounts at their dynamic stiffness (elastomers: κ_d × the static rates), which the
    #: modes and the response use; None when it is the static model (κ_d = 1)
    dynamic: RigidBodyModel | None = None
    stiffness_ratio: float = 1.0

    @property
    def vibrating(self) -> RigidBodyModel:
        return self.model if self.dynamic is None else self.dynamic


def analyse(body: Body, mounts: Sequence[Mount], *,
            damping_ratio: float = DEFAULT_DAMPING_RATIO,
            excitations: Sequence[Excitation] = (), running_speed: float | None = None,
            gravity: float = STANDARD_GRAVITY, stiffness_ratio: float = 1.0) -> Analysis:
    """Assemble, find the modes and the static equilibrium, and, with excitations, the
    response at ``running_speed`` (Hz). ``mounts`` carry their static rates; the modes and
    the response use ``stiffness_ratio`` (k_dyn/k_st) times them. Raises
    :class:`MountingError` for impossible input."""
    model = assemble(body, mounts)
    r = stiffness_ratio
    dynamic = None if r == 1.0 else assemble(body, [
        replace(m, k_x=m.k_x * r, k_y=m.k_y * r, k_z=m.k_z * r) for m in mounts])
    vibrating = model if dynamic is None else dynamic
    modes = natural_modes(vibrating)
    static = static_equilibrium(model, gravity)
    excitations = tuple(excitations)
    responses: tuple[ForcedResponse, ...] = ()
    per_mount = total = None
    if excitations:
        if running_speed is None or not running_speed > 0.0:
            raise MountingError("an excitation needs the running speed", field="running_speed")
        responses = tuple(forced_response(vibrating, modes, e, running_speed, damping_ratio)
                          for e in excitations)
        per_mount = np.sum([r.mount_peaks[0] for r in responses], axis=0)
        total = float(sum(r.total_peak[0] for r in responses))
    return Analysis(model=model, modes=modes, static=static, damping_ratio=damping_ratio,
                    running_speed=running_speed, excitations=excitations,
                    responses=responses, transmitted_force=per_mount,
                    total_transmitted_force=total, dynamic=dynamic, stiffness_ratio=r)


def analyse_inputs(inputs: Mapping[str, object]) -> Analysis:
    """:func:`analyse` from the calc's SI inputs (``mounts`` a list of row mappings, at
    their static rates; ``dynamic_stiffness_ratio`` scales them for the dynamics)."""
    damping = inputs.get("damping_ratio")
    speed = inputs.get("running_speed")
    return analyse(body_from_inputs(inputs),
                   mounts_from_rows(inputs["mounts"]),
                   stiffness_ratio=float(inputs.get("dynamic_stiffness_ratio") or 1.0),
                   damping_ratio=DEFAULT_DAMPING_RATIO if damping is None else _num(damping),
                   excitations=excitations_from_inputs(inputs),
                   running_speed=None if speed is None else _num(speed))


def result_values(analysis: Analysis) -> dict[str, float]:
    """The results.json values (SI), keyed as the calc type's specification names them."""
    out: dict[str, float] = {}
    for i, (f, share) in enumerate(zip(analysis.modes.frequencies,
                                       analysis.modes.dominant_share, strict=True), start=1):
        out[f"natural_frequency_{i}"] = float(f)
        out[f"mode_{i}_dominant_share"] = float(share)
    static = analysis.static
    for i, load in enumerate(static.loads, start=1):
        out[f"mount_load_{i}"] = float(load)
    for i, d in enumerate(static.deflections, start=1):
        out[f"mount_deflection_{i}"] = float(d)
    out["tilt_x"] = static.tilt_x
    out["tilt_y"] = static.tilt_y
    if analysis.transmitted_force is not None:
        for i, f in enumerate(analysis.transmitted_force, start=1):
            out[f"transmitted_force_{i}"] = float(f)
        out["total_transmitted_force"] = float(analysis.total_transmitted_force or 0.0)
    return out
