"""Reference cases R1–R3 (tests/data/check_cases_wave2.json) as calc inputs, and random
mount layouts for the property tests of rigid_body_mounts."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
from hypothesis import strategies as st

WAVE2 = Path(__file__).resolve().parent / "data" / "check_cases_wave2.json"


def wave2_case(prefix: str) -> dict:
    """The case whose id starts with ``prefix`` ("R1_", "R2_", "R3_")."""
    cases = json.loads(WAVE2.read_text(encoding="utf-8"))["cases"]
    (case,) = [c for c in cases if c["id"].startswith(prefix)]
    return case


def expected(case: dict, key: str):
    return case["expected"][key]["value"]


def case_inputs(case: dict, datum=(0.0, 0.0, 0.0)) -> dict:
    """SI calc inputs for a case. The case gives positions relative to the CG; ``datum``
    is where the CG sits in the calc's datum frame. A case mount's R has the mount's local
    axes as columns; the calc's ``axes`` lists them as rows."""
    i = case["inputs"]["inertia_about_CG"]["value"]
    dx, dy, dz = datum
    rows = []
    for m in case["inputs"]["mounts"]["value"]:
        row = {"x": m["r"][0] + dx, "y": m["r"][1] + dy, "z": m["r"][2] + dz,
               "k_x": m["k"][0], "k_y": m["k"][1], "k_z": m["k"][2]}
        if "R" in m:
            row["axes"] = np.asarray(m["R"]).T.tolist()
        rows.append(row)
    return {"mass": case["inputs"]["m"]["value"], "cg_x": dx, "cg_y": dy, "cg_z": dz,
            "inertia_xx": i["Ixx"], "inertia_yy": i["Iyy"], "inertia_zz": i["Izz"],
            "inertia_xy": i["Ixy"], "inertia_xz": i["Ixz"], "inertia_yz": i["Iyz"],
            "mounts": rows}


def rotation(axis: str, angle: float) -> np.ndarray:
    c, s = math.cos(angle), math.sin(angle)
    if axis == "x":
        return np.array([[1, 0, 0], [0, c, -s], [0, s, c]])
    if axis == "y":
        return np.array([[c, 0, s], [0, 1, 0], [-s, 0, c]])
    return np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])


@st.composite
def layouts(draw, with_axes: bool = True) -> dict:
    """A physically possible body on 3–7 mounts spread around its CG (never on one line),
    a sound mass, inertia with products, and unequal mount stiffnesses, some inclined."""
    mass = draw(st.floats(50.0, 20_000.0))
    # principal second moments S = m·diag(a², b², c²)/12 of some box, turned: J = tr(S)·I − S
    # is then always a possible inertia
    dims = [draw(st.floats(0.3, 4.0)) for _ in range(3)]
    turn = (rotation("z", draw(st.floats(-0.6, 0.6))) @ rotation("x", draw(st.floats(-0.4, 0.4))))
    s = turn @ np.diag(np.square(dims) * mass / 12.0) @ turn.T
    j = np.trace(s) * np.eye(3) - s
    cg = [draw(st.floats(-2.0, 2.0)) for _ in range(3)]
    n = draw(st.integers(3, 7))
    # stiffness scaled to the mass (mount frequencies of about 1.5–15 Hz), as real isolators
    # are chosen; this also keeps the layouts clear of tipping over
    rate = mass * (2.0 * math.pi) ** 2 / n
    start = draw(st.floats(0.0, 2.0 * math.pi))
    rows = []
    for k in range(n):
        angle = start + 2.0 * math.pi * (k + draw(st.floats(-0.3, 0.3))) / n
        radius = draw(st.floats(0.4, 2.0))
        row = {"x": cg[0] + radius * math.cos(angle), "y": cg[1] + radius * math.sin(angle),
               "z": cg[2] - draw(st.floats(-0.2, 1.0)),
               "k_x": rate * draw(st.floats(2.0, 100.0)),
               "k_y": rate * draw(st.floats(2.0, 100.0)),
               "k_z": rate * draw(st.floats(9.0, 225.0))}
        if with_axes and draw(st.booleans()):
            tilt = rotation("x", draw(st.floats(-0.5, 0.5))) @ rotation(
                "y", draw(st.floats(-0.5, 0.5)))
            row["axes"] = tilt.T.tolist()  # rows: the tilted local axes
        rows.append(row)
    return {"mass": mass, "cg_x": cg[0], "cg_y": cg[1], "cg_z": cg[2],
            "inertia_xx": j[0, 0], "inertia_yy": j[1, 1], "inertia_zz": j[2, 2],
            "inertia_xy": -j[0, 1], "inertia_xz": -j[0, 2], "inertia_yz": -j[1, 2],
            "mounts": rows}
