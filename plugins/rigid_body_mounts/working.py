"""rigid_body_mounts' working on the Sheet, in reading order: the body, the 6 × 6 matrices,
the modes, the statics mount by mount and the forces passed on. The Sheet evaluates each
printed formula, so the values that follow are the printed ones."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from reportgen import Matrix, Paragraph, Quantity, Sheet, Table
from reportgen.units import STANDARD_GRAVITY, format_number

from . import text
from .analysis import Analysis
from .method import COORDINATES

#: Row and column labels of the 6 × 6 matrices (coordinates at the centre of gravity).
LABELS = ("x", "y", "z", "θx", "θy", "θz")


def body(s: Sheet, p: Mapping[str, Any], a: Analysis) -> None:
    m = a.model.body.mass
    s.equation("W", "m*g_n", "force", m=m, g_n=STANDARD_GRAVITY, key="weight",
               description="Weight of the equipment")
    if not a.model.body.inertia_estimated:
        return
    s.add(Paragraph(title="Moments of inertia estimated from a box", text=text.BOX))
    dims = {"a": p["box_length"], "b": p["box_width"], "h": p["box_height"]}
    for axis, expr in (("xx", "m*(b**2 + h**2)/12"), ("yy", "m*(a**2 + h**2)/12"),
                       ("zz", "m*(a**2 + b**2)/12")):
        ops = {k: v for k, v in dims.items() if k in expr}
        s.equation(f"I_{axis}", expr, "moment_of_inertia", m=m, **ops,
                   description=f"Moment of inertia about the {axis[0]} axis through the"
                               " centre of gravity (uniform box estimate)")


def _dimensions(block: tuple[str, str, str]) -> tuple[tuple[str, ...], ...]:
    top, couple, rot = block
    return tuple((top,) * 3 + (couple,) * 3 for _ in range(3)) + tuple(
        (couple,) * 3 + (rot,) * 3 for _ in range(3))


def matrices(s: Sheet, a: Analysis, units: str) -> None:
    s.add(Paragraph(title="Mass and stiffness matrices", text=text.MATRICES))
    m, k = a.model.mass_matrix, a.vibrating.stiffness_matrix
    s.add(Matrix(title="Mass matrix about the centre of gravity", symbol="M",
                 values=tuple(tuple(float(v) for v in row) for row in m),
                 row_labels=LABELS, column_labels=LABELS,
                 dimensions=_dimensions(("mass", "mass_length", "moment_of_inertia"))),
          Matrix(title="Stiffness matrix about the centre of gravity", symbol="K",
                 values=tuple(tuple(float(v) for v in row) for row in k),
                 row_labels=LABELS, column_labels=LABELS,
                 dimensions=_dimensions(("stiffness", "force", "rotational_stiffness")),
                 caption="Translation rows and columns in N/m, couplings in N/rad (= N),"
                         " rotations in N·m/rad; K = Σ T_iᵀ·K_i·T_i over the mounts."))
    kz = [float(r) for r in a.model.mount_stiffness[:, 2, 2]]
    names = {f"k_z{i}": v for i, v in enumerate(kz, start=1)}
    if a.dynamic is None:
        total = s.equation("K_z", " + ".join(names), "stiffness", **names,
                           description="Total vertical stiffness of the mounts")
    else:  # the mounts' static rates times κ_d = k_dyn/k_st
        total = s.equation("K_z", f"kappa_d*({' + '.join(names)})", "stiffness", **names,
                           kappa_d=a.stiffness_ratio, description="Total vertical dynamic stiffness"
                           " of the mounts: κ_d times their static rates")
    s.equation("f_z0", "sqrt(K_z/m)/(2*pi)", "frequency", K_z=total, m=a.model.body.mass,
               key="uncoupled_vertical_frequency",
               description="Vertical frequency as if the vertical mode were uncoupled (a"
                           " reference for the eigenvalues below)")


def modes(s: Sheet, a: Analysis) -> None:
    s.add(Paragraph(title="Natural frequencies and mode shapes", text=text.MODES))
    md = a.modes
    for i, f in enumerate(md.frequencies, start=1):
        lam = (2.0 * math.pi * float(f)) ** 2
        s.equation(f"f_{i}", f"sqrt(lambda_{i})/(2*pi)", "frequency", **{f"lambda_{i}": lam},
                   key=f"natural_frequency_{i}", key_result=True,
                   description=f"Natural frequency of mode {i} (eigenvalue λ = ω² in rad²/s²"
                               " of K·φ = λ·M·φ)")
    for i, share in enumerate(md.dominant_share, start=1):
        s.result(f"mode_{i}_dominant_share", float(share), "dimensionless", f"E_{i}",
                 f"Mode {i}: largest kinetic-energy share"
                 f" ({_word(md.dominant_coordinate[i - 1])})")
    header = ("Coordinate",) + tuple(f"Mode {i} ({format_number(float(f), 3)} Hz)"
                                      for i, f in enumerate(md.frequencies, start=1))
    rows = tuple((LABELS[j],) + tuple(_percent(float(md.energy_fractions[j, i]))
                                      for i in range(6))
                 for j in range(6))
    s.add(Table(title="Kinetic-energy distribution of each mode [%] (columns sum to 100)",
                header=header, rows=rows))


def _percent(share: float) -> str:
    """A share in percent to 0.1 % (a negative one, possible with products of inertia, shown
    with its sign only when it reaches 0.05 %)."""
    text = f"{100.0 * share:.1f}"
    return "0.0" if text == "-0.0" else text


def _word(coordinate: str) -> str:
    return {"x": "translation x", "y": "translation y", "z": "vertical",
            "rx": "rotation about x", "ry": "rotation about y",
            "rz": "rotation about z"}[coordinate]


def statics(s: Sheet, a: Analysis, units: str) -> None:
    st = a.static
    u = st.displacement
    s.add(Paragraph(title="Static equilibrium under the weight", text=text.STATICS))
    w = s.result("static_heave", float(u[2]), "length", "w",
                 "Vertical displacement of the centre of gravity (up positive)")
    tx = s.result("tilt_x", st.tilt_x, "angle", "theta_x",
                  "Static rotation about x (right-handed)", key_result=True)
    ty = s.result("tilt_y", st.tilt_y, "angle", "theta_y",
                  "Static rotation about y (right-handed)", key_result=True)
    xg, yg = a.model.body.cg[0], a.model.body.cg[1]
    loads = {}
    for i, mount in enumerate(a.model.mounts, start=1):
        d = s.equation(f"delta_{i}", f"-(w + theta_x*(y_{i} - y_G) - theta_y*(x_{i} - x_G))",
                       "length", w=w, theta_x=tx, theta_y=ty, x_G=xg, y_G=yg,
                       **{f"x_{i}": mount.x, f"y_{i}": mount.y},
                       key=f"mount_deflection_{i}",
                       description=f"Static deflection of mount {i} (down positive)")
        loads[f"P_{i}"] = s.equation(f"P_{i}", f"k_z{i}*delta_{i}", "force",
                                     **{f"k_z{i}": mount.k_z, f"delta_{i}": d},
                                     key=f"mount_load_{i}", key_result=i == 1,
                                     description=f"Static load in mount {i} (compression"
                                                 " positive)")
    s.equation("W", " + ".join(loads), "force", **loads,
               description="Vertical equilibrium: the mount loads add up to the weight")


def response(s: Sheet, p: Mapping[str, Any], a: Analysis) -> None:
    s.add(Paragraph(title="Forces passed to the structure", text=text.RESPONSE))
    f = float(a.running_speed or 0.0)
    for e in a.excitations:
        if e.kind == "unbalance":
            s.equation("F_U", "U*(2*pi*f_run)**2", "force", U=e.amplitude, f_run=f,
                       key="unbalance_force",
                       description="Amplitude of the rotating unbalance force")
    peaks = a.transmitted_force
    assert peaks is not None
    for i, v in enumerate(peaks, start=1):
        s.result(f"transmitted_force_{i}", float(v), "force", f"F_T{i}",
                 f"Largest dynamic force through mount {i} over one cycle")
    s.result("total_transmitted_force", float(a.total_transmitted_force or 0.0), "force",
             "F_T", "Largest magnitude of the vector sum of the mount forces over one cycle",
             key_result=True)
    amp = np.sum([np.abs(r.displacement[0]) for r in a.responses], axis=0)
    s.add(Table(title="Amplitude of the motion at the centre of gravity at the running speed"
                      " (summed over the excitations)",
                header=("Coordinate", "Amplitude"),
                rows=tuple((LABELS[j], Quantity(value=float(amp[j]), dimension="angle"
                                                if COORDINATES[j].startswith("r") else "length"))
                           for j in range(6))))
