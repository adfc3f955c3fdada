"""block_foundation's second method: independent of the method (by its imports), right on
the reference cases F1 and F2, and in agreement with the method on random blocks and soils.

F1/F2: tests/data/check_cases_wave2.json (Richart, Hall & Woods 1970; Lysmer & Richart 1966;
Hall 1967; source_status corroborated_secondary, several constants from_memory: see the
method's tests for the per-constant status).
"""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest
from conftest import assert_case
from hypothesis import given, settings
from hypothesis import strategies as st
from reportgen_plugins.block_foundation import verify
from reportgen_plugins.block_foundation.method import RESULT_KEYS, analyse_block_foundation
from reportgen_plugins.block_foundation.verify import second_method
from scipy.integrate import solve_ivp
from test_block_foundation_method import F1, F2, f1_inputs, f2_inputs

FOLDER = Path(verify.__file__).parent
#: What the second method may import: the standard library's maths and the two libraries.
ALLOWED = {"__future__", "math", "re", "dataclasses", "numpy", "scipy"}


def _imports(path: Path) -> set[str]:
    names: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            names.add("." * node.level + (node.module or ""))
    return names


def test_second_method_imports_nothing_of_the_method():
    # independence by construction: no relative import, nothing from reportgen_plugins or
    # reportgen, only numpy, scipy and the standard library's maths (inner imports included)
    names = _imports(FOLDER / "verify.py")
    assert all(not n.startswith(".") for n in names), names
    assert {n.split(".")[0] for n in names} <= ALLOWED, names


def test_method_does_not_import_the_second_method():
    # only the calc type (__init__.py) calls the second method, to fill the verification
    for path in FOLDER.glob("*.py"):
        if path.name not in ("verify.py", "__init__.py"):
            assert not any("verify" in n for n in _imports(path)), path.name


# --------------------------------------------------------------- reference cases
F1_KEYS = {"m_total": "total_mass", "k_z": "vertical_stiffness", "D_z": "vertical_damping_ratio",
           "f_n_vertical": "vertical_natural_frequency", "k_x": "horizontal_stiffness",
           "k_rock": "rocking_stiffness", "f_n_torsion": "torsional_natural_frequency",
           "vertical_amplitude": "vertical_amplitude"}
F2_KEYS = {**F1_KEYS, "k_rock_y": "rocking_stiffness", "f_coupled_1": "coupled_frequency_1",
           "f_coupled_2": "coupled_frequency_2",
           "horizontal_amplitude_at_shaft": "horizontal_amplitude_at_force"}
del F2_KEYS["k_rock"]


@pytest.mark.parametrize("case_key, ours", sorted(F1_KEYS.items()))
def test_second_method_on_f1(case_key, ours):
    assert_case(second_method(**f1_inputs()).values[ours], F1, case_key)


@pytest.mark.parametrize("case_key, ours", sorted(F2_KEYS.items()))
def test_second_method_on_f2(case_key, ours):
    assert_case(second_method(**f2_inputs()).values[ours], F2, case_key)


def test_lysmer_mass_ratio_form_is_the_eigenvalue():
    # Lysmer's mass-ratio form a₀ = ω·r/Vs = 1/√B_z (Richart, Hall & Woods 1970, Ch. 7) and
    # the eigenvalue of the assembled model give the same vertical natural frequency
    for inputs in (f1_inputs, f2_inputs):
        v = second_method(**inputs()).values
        assert v["vertical_natural_frequency"] == pytest.approx(
            v["vertical_natural_frequency_eigen"], rel=1e-12)


# --------------------------------------------------------------- agreement with the method
def _agree(kw: dict, rel: float = 1e-9) -> None:
    a = analyse_block_foundation(**kw)
    v = second_method(**kw).values
    for key in (*RESULT_KEYS, "horizontal_amplitude_at_force"):
        assert v[key] == pytest.approx(getattr(a, key), rel=rel, abs=1e-300), key


@pytest.mark.parametrize("inputs", [f1_inputs, f2_inputs])
def test_method_and_second_method_agree_on_the_cases(inputs):
    _agree(inputs())


_random = st.fixed_dictionaries({
    "block_length": st.floats(1.5, 12.0), "block_width": st.floats(1.0, 8.0),
    "block_height": st.floats(0.6, 3.0), "concrete_density": st.floats(2200.0, 2500.0),
    "machine_mass": st.floats(500.0, 60000.0), "machine_cg_height": st.floats(0.8, 5.0),
    "machine_inertia_x": st.floats(0.0, 2e4), "machine_inertia_y": st.floats(0.0, 2e4),
    "machine_inertia_z": st.floats(0.0, 2e4), "force_height": st.floats(0.5, 5.0),
    "shear_wave_velocity": st.floats(80.0, 600.0), "soil_density": st.floats(1500.0, 2300.0),
    "poisson_ratio": st.floats(0.0, 0.5), "running_speed": st.floats(5.0, 60.0),
    "shaft_axis": st.sampled_from(["x", "y"]),
    "unbalance": st.floats(0.001, 2.0)})


@settings(max_examples=80, deadline=None)
@given(_random)
def test_method_and_second_method_agree_on_random_blocks(kw):
    # two assemblies, two solvers (closed-form quadratic and Cramer's rule against eigh and a
    # 6 × 6 complex solve): the same model must give the same numbers
    _agree(kw, rel=1e-7)


@settings(max_examples=20, deadline=None)
@given(st.sampled_from(["G1", "G2.5", "G6.3", "G16"]), st.floats(10.0, 5000.0))
def test_agreement_with_a_balance_grade(grade, rotor):
    _agree({**f2_inputs(), "unbalance": None, "balance_grade": grade, "rotor_mass": rotor})


def test_square_base_with_coinciding_planes():
    # a square base and a machine with equal x and y inertias: both sliding-rocking planes
    # have the same frequencies, and the second method must still sort its modes right
    kw = {**f2_inputs(), "block_width": 5.0, "machine_inertia_x": 9500.0}
    v = second_method(**kw)
    assert sorted(v.mode_labels) == sorted(["x-plane", "x-plane", "y-plane", "y-plane", "z",
                                            "rz"])
    _agree(kw)
    _agree({**kw, "shaft_axis": "x"})


# --------------------------------------------------------------- time domain
def test_f2_steady_state_by_time_integration():
    # scipy's solve_ivp (DOP853) of the coupled sliding-rocking pair from rest, the amplitude
    # read from a least-squares cos/sin fit over the last cycles: the frequency-domain
    # amplitudes of both methods are the steady state of the equations of motion
    a = analyse_block_foundation(**f2_inputs())
    p, h, m = a.plane_x, a.mass_properties.z, a.total_mass
    kx, cx = p.horizontal.stiffness, p.horizontal.damping
    kp, cp = p.rocking.stiffness, p.rocking.damping
    w, f0, e = 2 * math.pi * a.excitation.running_speed, a.running_force, a.force_height - h
    kk = np.array([[kx, -kx * h], [-kx * h, kp + kx * h * h]])
    cc = np.array([[cx, -cx * h], [-cx * h, cp + cx * h * h]])
    minv = np.diag([1 / m, 1 / p.inertia_cg])

    def rhs(t, y):
        q, v = y[:2], y[2:]
        load = f0 * math.cos(w * t) * np.array([1.0, e])
        return np.concatenate([v, minv @ (load - cc @ v - kk @ q)])

    period = 2 * math.pi / w
    t_end = 40 * period
    t = np.linspace(t_end - 8 * period, t_end, 801)
    sol = solve_ivp(rhs, (0.0, t_end), np.zeros(4), method="DOP853", t_eval=t, rtol=1e-10,
                    atol=1e-16)
    top = sol.y[0] + (a.block_height - h) * sol.y[1]
    basis = np.column_stack([np.cos(w * t), np.sin(w * t)])
    coef, *_ = np.linalg.lstsq(basis, top, rcond=None)
    assert math.hypot(*coef) == pytest.approx(a.horizontal_amplitude, rel=1e-6)
    assert second_method(**f2_inputs()).values["horizontal_amplitude"] == pytest.approx(
        math.hypot(*coef), rel=1e-6)


# --------------------------------------------------------------- the eccentricity assumption
def test_full_model_reduces_to_the_stated_one_without_offsets():
    # invariant: with the machine on the block's axis the springs are already below the
    # centre of gravity and there are no products of inertia
    plain = second_method(**f2_inputs()).values
    full = second_method(**f2_inputs(), springs_below_cg=False, products_of_inertia=True).values
    for key in plain:
        assert full[key] == pytest.approx(plain[key], rel=1e-12), key


def test_five_per_cent_eccentricity_moves_frequencies_little():
    # measured here (no source): at the 5 % eccentricity that common practice allows, keeping
    # the offsets (springs at the base centre, full inertia tensor) moves every natural
    # frequency of F2's block by under 2 %; amplitudes move more (about 10 % at the top)
    mb = 2400 * 5.0 * 3.2 * 1.6
    x_m = 0.05 * 5.0 * (mb + 9000) / 9000  # puts the combined centre of gravity at 5 % of L
    kw = {**f2_inputs(), "machine_cg_x": x_m}
    a = analyse_block_foundation(**kw)
    assert a.cg_eccentricity == pytest.approx(0.05, rel=1e-12)
    full = second_method(**kw, springs_below_cg=False, products_of_inertia=True).values
    for key in ("vertical_natural_frequency_eigen", "coupled_frequency_1",
                "coupled_frequency_2", "torsional_natural_frequency"):
        ours = a.vertical_natural_frequency if key.startswith("vertical") else getattr(a, key)
        assert abs(full[key] / ours - 1) < 0.02, key
