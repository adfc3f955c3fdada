"""The independent second method of rigid_body_mounts (verify.py): its independence, its
values against R1–R3 and closed forms, and its agreement with the method on random layouts."""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from reportgen_plugins.rigid_body_mounts import verify
from reportgen_plugins.rigid_body_mounts.analysis import analyse_inputs, result_values
from rigid_body_cases import case_inputs, expected, layouts, wave2_case

PLUGIN = Path(verify.__file__).resolve().parent
PACKAGE = "reportgen_plugins.rigid_body_mounts"
TWO_PI = 2.0 * math.pi
R1, R2, R3 = (wave2_case(p) for p in ("R1_", "R2_", "R3_"))


# ------------------------------------------------------------------ independence


def method_imports(source: str) -> list[str]:
    """Imports (anywhere in the module, functions included) that reach the method's side:
    any relative import, or any module of the plugin's own package."""
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.ImportFrom):
            if node.level > 0:
                found.append("." * node.level + (node.module or ""))
            elif node.module and node.module.startswith(PACKAGE):
                found.append(node.module)
        elif isinstance(node, ast.Import):
            found += [a.name for a in node.names if a.name.startswith(PACKAGE)]
        elif (isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(
                node.func, "id", "")) in ("import_module", "__import__")):
            found.append(ast.unparse(node))
    return found


def test_verify_never_imports_the_method():
    source = (PLUGIN / "verify.py").read_text(encoding="utf-8")
    assert method_imports(source) == []
    top = {(n.module or "").split(".")[0] if isinstance(n, ast.ImportFrom) else a.name.split(".")[0]
           for n in ast.walk(ast.parse(source)) if isinstance(n, (ast.Import, ast.ImportFrom))
           for a in n.names}
    assert top <= {"__future__", "math", "collections", "dataclasses", "numpy", "scipy"}


@pytest.mark.parametrize("line", [
    "from .method import assemble",
    "from . import method",
    "import reportgen_plugins.rigid_body_mounts.method as m",
    "from reportgen_plugins.rigid_body_mounts.response import cycle_peak",
    "def f():\n    from .analysis import analyse\n",
    "import importlib\nimportlib.import_module('reportgen_plugins.rigid_body_mounts.method')",
])
def test_the_import_check_catches_every_route(line):
    assert method_imports(line)


# ------------------------------------------------------------------ against the cases
# Sources and statuses as in test_rigid_body_mounts_method.py: R1 Harris Ch. 3 closed forms
# (formula_confirmed_example_invented), R2 the coupled pairs (from_memory), R3 numerical
# reference only.


@pytest.mark.parametrize("case", [R1, R2, R3], ids=["R1", "R2", "R3"])
def test_frequencies_without_an_eigen_solver_match_the_cases(case):
    m, k = verify.system_matrices(case_inputs(case, datum=(0.3, -0.7, 1.2)))
    freqs = verify.pencil_frequencies(m, k)
    key = "f_sorted" if "f_sorted" in case["expected"] else None
    want = expected(case, key) if key else [expected(case, f"f_{i}") for i in range(1, 7)]
    assert freqs == pytest.approx(want, rel=1e-6)  # the case's stated tolerance


@pytest.mark.parametrize("case,key", [(R1, "static_load_per_mount"),
                                      (R2, "static_load_per_mount"),
                                      (R3, "static_mount_vertical_load")], ids=["R1", "R2", "R3"])
def test_static_loads_by_equilibrium_match_the_cases(case, key):
    got = verify.independent_results(case_inputs(case, datum=(5.0, 5.0, -1.0)))
    assert got.loads == pytest.approx(np.broadcast_to(expected(case, key), got.loads.shape),
                                      rel=1e-6)
    assert got.loads.sum() == pytest.approx(got.weight, rel=1e-12)


@pytest.mark.parametrize("freq,tag", [(24.5, "24.5Hz"), (5.0, "5Hz")])
def test_r3_response_by_the_real_block_solve(freq, tag):
    inputs = case_inputs(R3)
    given = R3["inputs"]
    point = given["force_point_rel_CG"]["value"]
    # R3's loss factor η = 0.10 in every mount is ζ = η/2 = 0.05
    inputs.update(running_speed=freq, damping_ratio=0.05,
                  force_amplitude=given["force_amplitude"]["value"],
                  force_direction=given["force_direction_unit"]["value"],
                  force_x=point[0], force_y=point[1], force_z=point[2])
    state = verify.steady_state(inputs, "force")
    rel = R3["expected"][f"frf_{tag}_eta0.1_abs_q"]["rel_tol"]
    assert state.amplitudes == pytest.approx(expected(R3, f"frf_{tag}_eta0.1_abs_q"), rel=rel)
    components = np.hypot(state.mount_cos, state.mount_sin)
    assert components == pytest.approx(
        np.asarray(expected(R3, f"frf_{tag}_eta0.1_abs_mount_force_components")), rel=1e-6)
    total = np.hypot(state.mount_cos.sum(axis=0), state.mount_sin.sum(axis=0))
    assert total == pytest.approx(
        expected(R3, f"frf_{tag}_eta0.1_abs_total_transmitted_force"), rel=1e-6)


def test_peak_over_a_cycle_for_a_line_and_a_circle():
    # a force along one line peaks at its amplitude; one turning in a circle of radius F is
    # F at every instant (definition of the harmonic vector)
    assert verify.peak_over_cycle(np.array([3.0, 4.0, 0.0]),
                                  np.zeros(3)) == pytest.approx(5.0, rel=1e-12)
    assert verify.peak_over_cycle(np.array([2.0, 0.0, 0.0]),
                                  np.array([0.0, 2.0, 0.0])) == pytest.approx(2.0, rel=1e-12)


def test_repeated_frequencies_are_found_by_the_counts():
    # k_x = k_y on a symmetric pattern in the CG plane: f_x = f_y = √(Σk_h/m)/2π
    # (Harris Ch. 3, Eqs. 3.31 uncoupled); det(K − λM) does not change sign at a double
    # root, so only the inertia count brackets it
    rows = [{"x": sx * 0.6, "y": sy * 0.45, "z": 0.0, "k_vertical": 3.0e5,
             "k_horizontal": 2.0e5} for sx in (-1, 1) for sy in (-1, 1)]
    inputs = {"mass": 900.0, "inertia_xx": 120.0, "inertia_yy": 210.0, "inertia_zz": 260.0,
              "mounts": rows}
    got = verify.independent_results(inputs)
    f_h = math.sqrt(4 * 2.0e5 / 900.0) / TWO_PI
    assert sorted(got.frequencies)[:2] == pytest.approx([f_h, f_h], rel=1e-12)
    assert got.dominant_shares.count(None) == 2


def test_box_estimate_by_second_moments():
    # S = m·diag(a², b², h²)/12 → J = tr(S)·I − S: the uniform-box moments of inertia
    # (Meriam & Kraige, Dynamics, Appendix D); a single vertical mode checks the mass too
    rows = [{"x": sx * 1.0, "y": sy * 1.0, "z": 0.0, "k_vertical": 1e5, "k_horizontal": 1e5}
            for sx in (-1, 1) for sy in (-1, 1)]
    m, _ = verify.system_matrices({"mass": 12.0, "box_length": 3.0, "box_width": 2.0,
                                   "box_height": 1.0, "mounts": rows})
    assert np.diag(m) == pytest.approx([12, 12, 12, 5.0, 10.0, 13.0])


# ------------------------------------------------------------------ the two routes agree


def _family(key: str) -> str:
    if key.startswith("mode_"):
        return "mode_dominant_share"
    if key.startswith("tilt"):
        return "tilt"
    if "transmitted_force" in key:
        return "transmitted_force"
    return key.rstrip("_0123456789")


def _agree(method_values: dict, independent: dict, weight: float) -> None:
    """Every value of the second route within verify.TOLERANCES of the method's; a load's
    absolute tolerance grows with the weight (a load near zero has no relative scale)."""
    assert set(independent) <= set(method_values)
    for key, value in independent.items():
        rel, absolute = verify.TOLERANCES[_family(key)]
        if key.startswith("mount_load"):
            absolute = max(absolute, 1e-10 * weight)
        want = method_values[key]
        assert abs(value - want) <= max(rel * abs(want), absolute), (key, value, want)


@pytest.mark.parametrize("case", [R1, R2, R3], ids=["R1", "R2", "R3"])
def test_method_and_verify_agree_on_the_cases(case):
    inputs = case_inputs(case, datum=(0.1, 0.2, 0.3))
    inputs.update(running_speed=24.5, force_amplitude=800.0, force_direction="y",
                  force_x=0.9, force_y=-0.05, force_z=0.85, unbalance=0.01, rotor_x=0.4,
                  rotor_y=0.1, rotor_z=0.9, rotor_axis="x")
    got = verify.independent_results(inputs)
    _agree(result_values(analyse_inputs(inputs)), got.values(), got.weight)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(layout=layouts())
def test_method_and_verify_agree_on_random_layouts(layout):
    cg = (layout["cg_x"], layout["cg_y"], layout["cg_z"])
    layout = dict(layout, running_speed=19.0, damping_ratio=0.07, force_amplitude=500.0,
                  force_direction="x", force_x=cg[0] + 0.3, force_y=cg[1] - 0.2,
                  force_z=cg[2] + 0.5, unbalance=0.03, rotor_x=cg[0] - 0.1,
                  rotor_y=cg[1] + 0.2, rotor_z=cg[2] + 0.3, rotor_axis="z")
    got = verify.independent_results(layout)
    _agree(result_values(analyse_inputs(layout)), got.values(), got.weight)
