"""rigid_body_mounts physics (method.py, response.py, analysis.py, views.py) against closed
forms, the reference cases R1–R3 and physical invariants; each check names its source."""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reportgen_plugins.rigid_body_mounts import method as method_module
from reportgen_plugins.rigid_body_mounts.analysis import (
    analyse,
    analyse_inputs,
    body_from_inputs,
    mounts_from_rows,
    result_values,
)
from reportgen_plugins.rigid_body_mounts.method import (
    SQRT2,
    Body,
    Mount,
    MountingError,
    assemble,
    box_inertia,
    frequency_limit,
    inertia_tensor,
    natural_modes,
)
from reportgen_plugins.rigid_body_mounts.response import (
    cycle_peak,
    forced_response,
    harmonic_force,
    rotating_unbalance,
)
from reportgen_plugins.rigid_body_mounts.statics import static_equilibrium
from reportgen_plugins.rigid_body_mounts.views import (
    frequency_chart,
    mode_views,
    plan_view,
    support_outline,
)
from rigid_body_cases import case_inputs, expected, layouts, rotation, wave2_case

G = 9.80665
TWO_PI = 2.0 * math.pi
COORDS = ("x", "y", "z", "rx", "ry", "rz")


def solve(inputs: dict):
    model = assemble(body_from_inputs(inputs), mounts_from_rows(inputs["mounts"]))
    return model, natural_modes(model), static_equilibrium(model)


def within(actual, case: dict, key: str) -> None:
    """The case's own rule: |actual − expected| ≤ max(rel_tol·|expected|, abs_tol)."""
    e = case["expected"][key]
    want = np.asarray(e["value"], dtype=float)
    tol = np.maximum(e["rel_tol"] * np.abs(want), e["abs_tol"])
    assert np.all(np.abs(np.asarray(actual, dtype=float) - want) <= tol), (key, actual, want)


# ------------------------------------------------------------------ R1: fully decoupled
# Source: Harris' Shock and Vibration Handbook, Ch. 3 (Himelblau & Rubin), equations of
# motion Eqs. 3.31 with every coupling term zero, f_z Eq. 3.37; status in the file:
# formula_confirmed_example_invented (the formula is the book's, the fan set invented).

R1 = wave2_case("R1_")


def test_r1_decoupled_frequencies_against_the_handbook_closed_forms():
    model, modes, static = solve(case_inputs(R1, datum=(1.3, 0.9, 0.75)))
    m = R1["inputs"]["m"]["value"]
    inertia = R1["inputs"]["inertia_about_CG"]["value"]
    mounts = R1["inputs"]["mounts"]["value"]
    kx, ky, kz = (sum(mt["k"][a] for mt in mounts) for a in range(3))
    # the closed forms written out here, as in the case's formula field
    f_rx = math.sqrt(sum(mt["k"][2] * mt["r"][1] ** 2 for mt in mounts) / inertia["Ixx"])
    f_ry = math.sqrt(sum(mt["k"][2] * mt["r"][0] ** 2 for mt in mounts) / inertia["Iyy"])
    f_rz = math.sqrt(sum(mt["k"][0] * mt["r"][1] ** 2 + mt["k"][1] * mt["r"][0] ** 2
                         for mt in mounts) / inertia["Izz"])
    closed = {"x": math.sqrt(kx / m), "y": math.sqrt(ky / m), "z": math.sqrt(kz / m),
              "rx": f_rx, "ry": f_ry, "rz": f_rz}
    for f, coord in zip(modes.frequencies, modes.dominant_coordinate, strict=True):
        assert f == pytest.approx(closed[coord] / TWO_PI, rel=1e-12)
    within(modes.frequencies, R1, "f_sorted")
    assert ",".join(modes.dominant_coordinate) == expected(R1, "dominant_dof_of_sorted_modes")
    within(100.0 * modes.dominant_share, R1, "max_ke_fraction_each_mode")
    # the kinetic-energy shares form a permutation matrix: decoupled
    assert np.allclose(np.sort(modes.energy_fractions, axis=0)[-1], 1.0, atol=1e-12)


def test_r1_static_loads_and_deflections():
    _, _, static = solve(case_inputs(R1))
    within(static.loads, R1, "static_load_per_mount")
    within(static.deflections, R1, "static_deflection")
    assert static.tilt_x == pytest.approx(0.0, abs=1e-15)
    assert static.tilt_y == pytest.approx(0.0, abs=1e-15)


def test_equal_horizontal_stiffness_repeats_a_frequency_and_stays_decoupled():
    # k_x = k_y on a pattern symmetric about the CG: f_x = f_y = √(Σk_h/m)/2π (Harris Ch. 3,
    # Eqs. 3.31 uncoupled). The two modes of a repeated frequency are any combination; the
    # method turns them to the axes, so each is 100 % one coordinate.
    rows = [{"x": sx * 0.6, "y": sy * 0.45, "z": 0.0, "k_vertical": 3.0e5,
             "k_horizontal": 2.0e5} for sx in (-1, 1) for sy in (-1, 1)]
    inputs = {"mass": 900.0, "inertia_xx": 120.0, "inertia_yy": 210.0, "inertia_zz": 260.0,
              "mounts": rows}
    _, modes, _ = solve(inputs)
    f_h = math.sqrt(4 * 2.0e5 / 900.0) / TWO_PI
    pairs = [f for f, c in zip(modes.frequencies, modes.dominant_coordinate, strict=True)
             if c in ("x", "y")]
    assert pairs == pytest.approx([f_h, f_h], rel=1e-12)
    assert sorted(modes.dominant_coordinate) == sorted(COORDS)
    assert np.allclose(modes.dominant_share, 1.0, atol=1e-9)
    assert np.allclose(modes.shapes.T @ assemble(
        body_from_inputs(inputs), mounts_from_rows(rows)).mass_matrix @ modes.shapes,
        np.eye(6), atol=1e-12)


# ------------------------------------------------------------------ R2: coupled rocking
# Source: Harris Ch. 3, the coupled x–θy and y–θx pairs for two planes of symmetry; the
# file's status is from_memory (the two-frequency formula is recalled, re-derived from the
# equations of motion; the equation number is not checked). The closed form used below is
# the stiffness form of the same pair: ω⁴ − ω²[(K_r + K_x h²)/I + K_x/m] + K_x·K_r/(m·I) = 0.

R2 = wave2_case("R2_")


def _pair(m: float, inertia: float, k_h: float, k_r: float, h: float) -> list[float]:
    b = (k_r + k_h * h * h) / inertia + k_h / m
    c = k_h * k_r / (m * inertia)
    root = math.sqrt(b * b - 4.0 * c)
    return [math.sqrt((b - root) / 2.0) / TWO_PI, math.sqrt((b + root) / 2.0) / TWO_PI]


def test_r2_coupled_lateral_rocking_pairs_against_the_two_dof_closed_form():
    _, modes, static = solve(case_inputs(R2, datum=(-0.4, 2.0, 1.1)))
    mounts = R2["inputs"]["mounts"]["value"]
    inertia = R2["inputs"]["inertia_about_CG"]["value"]
    m = R2["inputs"]["m"]["value"]
    h = -mounts[0]["r"][2]
    kx, ky = (sum(mt["k"][a] for mt in mounts) for a in range(2))
    k_ry = sum(mt["k"][2] * mt["r"][0] ** 2 for mt in mounts)
    k_rx = sum(mt["k"][2] * mt["r"][1] ** 2 for mt in mounts)
    x_ry = _pair(m, inertia["Iyy"], kx, k_ry, h)
    y_rx = _pair(m, inertia["Ixx"], ky, k_rx, h)
    assert x_ry == pytest.approx([expected(R2, "f_x_ry_low"), expected(R2, "f_x_ry_high")],
                                 rel=1e-6)
    assert y_rx == pytest.approx([expected(R2, "f_y_rx_low"), expected(R2, "f_y_rx_high")],
                                 rel=1e-6)
    f_z = math.sqrt(sum(mt["k"][2] for mt in mounts) / m) / TWO_PI
    f_rz = math.sqrt(sum(mt["k"][0] * mt["r"][1] ** 2 + mt["k"][1] * mt["r"][0] ** 2
                         for mt in mounts) / inertia["Izz"]) / TWO_PI
    assert sorted(x_ry + y_rx + [f_z, f_rz]) == pytest.approx(list(modes.frequencies),
                                                              rel=1e-12)
    within(modes.frequencies, R2, "f_sorted")
    within(100.0 * modes.energy_fractions, R2,
           "ke_fractions_percent_rows_x_y_z_rx_ry_rz_cols_sorted_modes")
    within(static.loads, R2, "static_load_per_mount")


def test_r2_mode_shape_ratios_and_rotation_centres():
    # x/θy of each x–θy mode: from the first row of (K − ω²M)φ = 0, x/θy = −K_xθ/(K_x − ω²m)
    # = −K_x·h'/(K_x − ω²m) with h' the mounts' z offset (negative: below the CG).
    _, modes, _ = solve(case_inputs(R2))
    x_modes = [i for i, c in enumerate(modes.dominant_coordinate) if c in ("x", "ry")]
    ratios = [modes.shapes[0, i] / modes.shapes[4, i] for i in x_modes]
    within(ratios, R2, "x_over_ry_low_high")
    y_modes = [i for i, c in enumerate(modes.dominant_coordinate) if c in ("y", "rx")]
    within([modes.shapes[1, i] / modes.shapes[3, i] for i in y_modes], R2, "y_over_rx_low_high")
    mounts = R2["inputs"]["mounts"]["value"]
    kx = sum(mt["k"][0] for mt in mounts)
    m = R2["inputs"]["m"]["value"]
    for i, ratio in zip(x_modes, ratios, strict=True):
        w2 = (TWO_PI * modes.frequencies[i]) ** 2
        assert ratio == pytest.approx(-kx * mounts[0]["r"][2] / (kx - w2 * m), rel=1e-9)


# ------------------------------------------------------------------ R3: asymmetric skid
# Source: no closed form; status numerical_reference_only (values agree between an
# eigen-solution, a finite-difference Hessian of the mount energy with finite rotations and
# free-decay time integration, as the case records). Harris Ch. 3 for the model; kinetic-
# energy shares after Jeong & Singh, J. Sound Vib. 234(1), 2000.

R3 = wave2_case("R3_")


def _r3_force(datum=(0.0, 0.0, 0.0)):
    point = np.asarray(R3["inputs"]["force_point_rel_CG"]["value"]) + np.asarray(datum)
    return harmonic_force(R3["inputs"]["force_amplitude"]["value"],
                          R3["inputs"]["force_direction_unit"]["value"], point)


def test_r3_frequencies_modes_and_energy_shares():
    model, modes, _ = solve(case_inputs(R3, datum=(2.0, -1.0, 0.6)))
    for i in range(6):
        within(modes.frequencies[i], R3, f"f_{i + 1}")
    within(modes.shapes, R3, "mode_shapes_mass_normalised_columns")
    within(100.0 * modes.energy_fractions, R3,
           "ke_fractions_percent_rows_x_y_z_rx_ry_rz_cols_sorted_modes")
    within(100.0 * modes.dominant_share, R3, "max_ke_fraction_each_mode")
    assert ",".join(modes.dominant_coordinate) == expected(R3, "dominant_dof_of_sorted_modes")
    # invariants of any mass-normalised modal set: ΦᵀMΦ = I, ΦᵀKΦ = diag(ω²), shares sum to 1
    assert np.allclose(modes.shapes.T @ model.mass_matrix @ modes.shapes, np.eye(6), atol=1e-12)
    assert np.allclose(modes.shapes.T @ model.stiffness_matrix @ modes.shapes,
                       np.diag((TWO_PI * modes.frequencies) ** 2), rtol=1e-10, atol=1e-6)
    assert np.allclose(modes.energy_fractions.sum(axis=0), 1.0, atol=1e-12)
    assert modes.energy_fractions.min() < 0.0  # products of inertia: one share is negative


def test_r3_static_equilibrium_with_inclined_mounts():
    _, _, static = solve(case_inputs(R3, datum=(0.5, 0.5, 0.5)))
    within(static.displacement, R3, "static_CG_displacement_under_gravity")
    within(static.mount_forces, R3, "static_mount_force_on_body_global")
    within(static.loads, R3, "static_mount_vertical_load")
    within(static.axial_loads, R3, "static_mount_axial_load_along_local_r")
    within(static.loads.sum(), R3, "static_sum_vertical_loads")
    within(static.weight, R3, "weight")
    # hand statics: the mount forces balance the weight and have no moment about the CG
    assert np.allclose(static.mount_forces.sum(axis=0), [0.0, 0.0, static.weight], atol=1e-8)
    offsets = np.asarray([mt["r"] for mt in R3["inputs"]["mounts"]["value"]])
    assert np.allclose(np.cross(offsets, static.mount_forces).sum(axis=0), 0.0, atol=1e-8)


@pytest.mark.parametrize("freq,tag", [(24.5, "24.5Hz"), (5.0, "5Hz")])
def test_r3_response_to_a_harmonic_force_with_structural_damping(freq, tag):
    # R3 damps with a loss factor η = 0.10 in every mount, (1 + iη)·K_i: ζ = η/2 = 0.05.
    model, modes, _ = solve(case_inputs(R3))
    resp = forced_response(model, modes, _r3_force(), freq, damping_ratio=0.05)
    within(np.abs(resp.displacement[0]), R3, f"frf_{tag}_eta0.1_abs_q")
    within(np.abs(resp.mount_forces[0]), R3, f"frf_{tag}_eta0.1_abs_mount_force_components")
    within(np.abs(resp.total_force[0]), R3, f"frf_{tag}_eta0.1_abs_total_transmitted_force")
    resultant = np.asarray(expected(R3, f"frf_{tag}_eta0.1_mount_force_resultant"))
    # the peak over a cycle lies between ‖A‖/√2 (a circle) and ‖A‖ (a line)
    assert np.all(resp.mount_peaks[0] <= resultant * (1 + 1e-9))
    assert np.all(resp.mount_peaks[0] >= resultant / SQRT2 * (1 - 1e-9))
    ratio = np.linalg.norm(np.abs(resp.total_force[0])) / 800.0
    within(ratio, R3, f"frf_{tag}_eta0.1_force_transmissibility")


def test_forced_response_is_vectorised_over_frequency_and_balances_the_body():
    model, modes, _ = solve(case_inputs(R3))
    force = _r3_force()
    freqs = np.linspace(0.5, 40.0, 157)
    many = forced_response(model, modes, force, freqs, 0.05)
    for k in (0, 60, 156):
        one = forced_response(model, modes, force, freqs[k], 0.05)
        assert np.allclose(many.displacement[k], one.displacement[0], rtol=1e-13, atol=0.0)
    # Newton for the body, harmonic: −ω²·m·x_G = F − Σ(forces to the support), so
    # Σ(forces to the support) = F + ω²·m·x_G (the case's note for the total force)
    omega = TWO_PI * freqs
    f = force.force_vector(omega)
    m = R3["inputs"]["m"]["value"]
    assert np.allclose(many.total_force, f + (omega**2 * m)[:, None] * many.displacement[:, :3],
                       rtol=1e-10, atol=1e-9)


# ------------------------------------------------------------------ single-axis limits


def _symmetric_body(kz=2.5e5, kh=1.5e5, m=1000.0):
    rows = [{"x": sx * 0.7, "y": sy * 0.5, "z": 0.0, "k_vertical": kz, "k_horizontal": kh}
            for sx in (-1, 1) for sy in (-1, 1)]
    body = Body(mass=m, cg=(0.0, 0.0, 0.0), inertia=(150.0, 220.0, 300.0, 0.0, 0.0, 0.0))
    return body, mounts_from_rows(rows)


@pytest.mark.parametrize("r", [0.5, 1.0, 2.0, 4.0])
def test_vertical_force_at_the_cg_gives_the_structural_damping_transmissibility(r):
    # Single degree of freedom with hysteretic damping (1 + iη)k, η = 2ζ:
    # T = √(1 + η²)/√((1 − r²)² + η²) (Thomson & Dahleh §3.5 and §3.9; Rao §9.10)
    zeta = 0.05
    body, mounts = _symmetric_body()
    f_z = math.sqrt(4 * 2.5e5 / 1000.0) / TWO_PI
    model = assemble(body, mounts)
    modes = natural_modes(model)
    resp = forced_response(model, modes, harmonic_force(1000.0, "z", (0, 0, 0)), r * f_z, zeta)
    eta = 2 * zeta
    t = math.sqrt(1 + eta**2) / math.sqrt((1 - r * r) ** 2 + eta**2)
    assert resp.total_peak[0] == pytest.approx(1000.0 * t, rel=1e-12)
    assert resp.mount_peaks[0] == pytest.approx([250.0 * t] * 4, rel=1e-12)


def test_rotating_unbalance_on_isotropic_mounts_turns_in_a_circle():
    # F = m·e·ω² turning in the x–y plane (Thomson & Dahleh §3.3); with k_x = k_y the body
    # follows a circle, and each direction is the SDOF above: the transmitted force's
    # magnitude is constant, m·e·ω²·|(1 + iη)k/((1 + iη)k − mω²)|.
    body, mounts = _symmetric_body()
    model = assemble(body, mounts)
    modes = natural_modes(model)
    speed = 24.0
    w = TWO_PI * speed
    resp = forced_response(model, modes, rotating_unbalance(0.02, (0, 0, 0), "z"), speed, 0.05)
    k = 4 * 1.5e5 * (1 + 0.1j)
    expected_peak = 0.02 * w * w * abs(k / (k - 1000.0 * w * w))
    assert resp.total_peak[0] == pytest.approx(expected_peak, rel=1e-12)
    total = resp.total_force[0]
    assert abs(total[0]) == pytest.approx(abs(total[1]), rel=1e-12)  # a circle
    assert abs(total[2]) < 1e-9 * expected_peak
    # the right-handed sense about +z: y lags x by a quarter turn
    assert np.angle(total[1] / total[0]) == pytest.approx(-math.pi / 2, abs=1e-12)


def test_cycle_peak_against_sampling_the_cycle():
    # definition: max over t of |Re{A·e^{iωt}}|, here by brute force over 200 001 phases
    rng = np.random.default_rng(7)
    phases = np.linspace(0.0, 2 * math.pi, 200_001)
    for _ in range(5):
        a = rng.normal(size=3) + 1j * rng.normal(size=3)
        sampled = np.max(np.linalg.norm(np.real(a[None, :] * np.exp(1j * phases)[:, None]),
                                        axis=1))
        assert cycle_peak(a) == pytest.approx(sampled, rel=1e-9)
    assert cycle_peak(np.array([3.0 + 0j, 4.0j, 0.0])) == pytest.approx(math.sqrt(12.5 + 3.5))


# ------------------------------------------------------------------ statics by hand


def test_three_mounts_are_statically_determinate():
    # three supports not on one line carry a rigid body by statics alone (Meriam & Kraige,
    # Statics, Ch. 3, equilibrium in three dimensions): ΣP = W, ΣP·x = W·x_G, ΣP·y = W·y_G,
    # whatever the mounts' stiffnesses
    pos = [(0.0, 0.0), (2.0, 0.0), (0.5, 1.6)]
    rows = [{"x": x, "y": y, "z": -0.3, "k_x": kx, "k_y": ky, "k_z": kz}
            for (x, y), kx, ky, kz in zip(pos, (1e5, 3e5, 2e5), (2e5, 1e5, 4e5),
                                          (5e5, 9e5, 3e5), strict=True)]
    inputs = {"mass": 800.0, "cg_x": 0.9, "cg_y": 0.5, "cg_z": 0.4, "inertia_xx": 90.0,
              "inertia_yy": 150.0, "inertia_zz": 200.0, "inertia_xy": 5.0, "mounts": rows}
    _, _, static = solve(inputs)
    w = 800.0 * G
    a = np.array([[1.0, 1.0, 1.0], [p[0] for p in pos], [p[1] for p in pos]])
    hand = np.linalg.solve(a, [w, w * 0.9, w * 0.5])
    assert static.loads == pytest.approx(hand, rel=1e-10)
    assert static.deflections == pytest.approx(hand / np.array([5e5, 9e5, 3e5]), rel=1e-10)


def test_a_mount_in_tension_is_a_result_not_an_error():
    # the CG outside the mounts' outline: the far mounts must pull (statics as above)
    rows = [{"x": x, "y": y, "z": 0.0, "k_vertical": 4e5, "k_horizontal": 2e5}
            for x in (0.0, 1.0) for y in (0.0, 1.0)]
    inputs = {"mass": 500.0, "cg_x": 1.6, "cg_y": 0.5, "cg_z": 0.2, "inertia_xx": 60.0,
              "inertia_yy": 60.0, "inertia_zz": 80.0, "mounts": rows}
    model, _, static = solve(inputs)
    w = 500.0 * G
    # two rows of equal mounts at x = 0 and x = 1: each x = 0 mount carries W(1 − 1.6)/2
    assert static.loads[:2] == pytest.approx([w * (1 - 1.6) / 2] * 2, rel=1e-10)
    assert static.in_tension == (True, True, False, False)
    assert static.loads.sum() == pytest.approx(w, rel=1e-12)
    plan = plan_view(model, static)
    assert not plan.cg_inside


def test_tip_over_factor_against_the_inverted_pendulum_limit():
    # Derived here from the potential energy (no handbook equation checked): a body on
    # vertical springs a depth h below its CG loses W·h of rocking stiffness, so in the
    # x–θy pair the factor is μ = 1 − W·h/Σk_z·x², and the body tips when W·h ≥ Σk_z·x².
    def inputs(h):
        rows = [{"x": sx * 0.5, "y": sy * 0.8, "z": -h, "k_vertical": 2e5,
                 "k_horizontal": 1e5} for sx in (-1, 1) for sy in (-1, 1)]
        return {"mass": 1000.0, "inertia_xx": 150.0, "inertia_yy": 150.0,
                "inertia_zz": 200.0, "mounts": rows}

    k_r = 4 * 2e5 * 0.5**2
    w = 1000.0 * G
    _, _, static = solve(inputs(1.5))
    assert static.stability_factor == pytest.approx(1 - w * 1.5 / k_r, rel=1e-9)
    with pytest.raises(MountingError, match="tip over") as err:
        solve(inputs(1.05 * k_r / w))
    assert err.value.field == "mounts"


# ------------------------------------------------------------------ bad physical input


@pytest.mark.parametrize("rows,words", [
    ([{"x": x, "y": 0.0, "z": 0.0, "k_vertical": 1e5, "k_horizontal": 1e5}
      for x in (-1.0, 0.0, 1.0)], "rotate about x"),
    ([{"x": x, "y": y, "z": 0.0, "k_vertical": 1e5, "k_horizontal": 0.0}
      for x in (-1.0, 1.0) for y in (-1.0, 1.0)], "free to"),
])
def test_a_free_motion_is_an_error_that_names_it(rows, words):
    inputs = {"mass": 100.0, "inertia_xx": 10.0, "inertia_yy": 10.0, "inertia_zz": 15.0,
              "mounts": rows}
    with pytest.raises(MountingError, match=words) as err:
        solve(inputs)
    assert err.value.field == "mounts"


@pytest.mark.parametrize("inertia", [(10.0, 10.0, 25.0, 0, 0, 0), (10.0, 10.0, 15.0, 11.0, 0, 0)])
def test_an_impossible_inertia_is_an_error(inertia):
    # principal moments of a real body obey I1 + I2 ≥ I3 and are positive (Goldstein §5.3)
    body = Body(mass=100.0, cg=(0.0, 0.0, 0.0), inertia=inertia)
    mounts = mounts_from_rows([{"x": x, "y": y, "z": 0.0, "k_vertical": 1e5,
                                "k_horizontal": 1e5} for x in (-1, 1) for y in (-1, 1)])
    with pytest.raises(MountingError) as err:
        assemble(body, mounts)
    assert err.value.field == "inertia"


def test_mount_rows_name_the_row_at_fault():
    with pytest.raises(MountingError, match="k_horizontal") as err:
        mounts_from_rows([{"x": 0, "y": 0, "z": 0, "k_vertical": 1.0, "k_horizontal": 1.0},
                          {"x": 0, "y": 0, "z": 0, "k_vertical": 1.0}])
    assert err.value.row == 2
    with pytest.raises(MountingError, match="not both"):
        mounts_from_rows([{"x": 0, "y": 0, "z": 0, "k_vertical": 1.0, "k_x": 1.0}])
    with pytest.raises(MountingError, match="orthogonal"):
        assemble(Body(mass=1.0, cg=(0, 0, 0), inertia=(1, 1, 1, 0, 0, 0)),
                 [Mount(x=0, y=0, z=0, k_x=1, k_y=1, k_z=1, axes=((1, 0, 0), (1, 0, 0),
                                                                   (0, 0, 1)))])


# ------------------------------------------------------------------ frame invariance


@settings(max_examples=40, deadline=None)
@given(layout=layouts(), angle=st.floats(-math.pi, math.pi),
       shift=st.tuples(*[st.floats(-50.0, 50.0)] * 3))
def test_turning_and_moving_the_datum_leaves_the_frequencies(layout, angle, shift):
    # physical invariant: the frequencies do not depend on the frame the user chooses
    turn = rotation("z", angle)
    base = natural_modes(assemble(body_from_inputs(layout),
                                  mounts_from_rows(layout["mounts"]))).frequencies
    j = inertia_tensor(layout["inertia_xx"], layout["inertia_yy"], layout["inertia_zz"],
                       layout["inertia_xy"], layout["inertia_xz"], layout["inertia_yz"])
    jt = turn @ j @ turn.T
    cg = turn @ [layout["cg_x"], layout["cg_y"], layout["cg_z"]] + np.asarray(shift)
    rows = []
    for row in layout["mounts"]:
        p = turn @ [row["x"], row["y"], row["z"]] + np.asarray(shift)
        axes = np.asarray(row.get("axes", np.eye(3))) @ turn.T  # each axis turned
        rows.append({"x": p[0], "y": p[1], "z": p[2], "k_x": row["k_x"], "k_y": row["k_y"],
                     "k_z": row["k_z"], "axes": axes.tolist()})
    moved = {"mass": layout["mass"], "cg_x": cg[0], "cg_y": cg[1], "cg_z": cg[2],
             "inertia_xx": jt[0, 0], "inertia_yy": jt[1, 1], "inertia_zz": jt[2, 2],
             "inertia_xy": -jt[0, 1], "inertia_xz": -jt[0, 2], "inertia_yz": -jt[1, 2],
             "mounts": rows}
    again = natural_modes(assemble(body_from_inputs(moved), mounts_from_rows(rows))).frequencies
    assert again == pytest.approx(base, rel=1e-9)


# ------------------------------------------------------------------ small helpers


def test_box_inertia_and_the_box_estimate():
    # uniform box about its centre, I_xx = m(b² + h²)/12 ... (Meriam & Kraige, Dynamics,
    # Appendix D); a cube of mass 12 and side 1 has I = 2 about every axis
    assert box_inertia(12.0, 1.0, 1.0, 1.0) == pytest.approx((2.0, 2.0, 2.0))
    assert box_inertia(12.0, 3.0, 2.0, 1.0) == pytest.approx((5.0, 10.0, 13.0))
    body = body_from_inputs({"mass": 12.0, "box_length": 3.0, "box_width": 2.0,
                             "box_height": 1.0})
    assert body.inertia_estimated and body.inertia[:3] == pytest.approx((5.0, 10.0, 13.0))
    with pytest.raises(MountingError, match="box_length"):
        body_from_inputs({"mass": 12.0, "inertia_xx": 1.0})


def test_frequency_limit_is_the_running_speed_over_root_two():
    # isolation only above r = √2 (Thomson & Dahleh §3.5): 1450 rpm = 24.17 Hz → 17.09 Hz
    assert frequency_limit(1450 / 60) == pytest.approx(1450 / 60 / math.sqrt(2), rel=1e-15)
    assert frequency_limit(30.0, 3.0) == pytest.approx(10.0)


def test_results_carry_the_specified_keys():
    inputs = case_inputs(R3, datum=(1.0, 1.0, 0.5))
    inputs.update(running_speed=24.5, force_amplitude=800.0, force_direction="z",
                  force_x=1.7, force_y=0.75, force_z=1.05, unbalance=0.05, rotor_x=1.2,
                  rotor_y=1.0, rotor_z=1.3, rotor_axis="y")
    analysis = analyse_inputs(inputs)
    values = result_values(analysis)
    n = len(inputs["mounts"])
    keys = ({f"natural_frequency_{i}" for i in range(1, 7)}
            | {f"mode_{i}_dominant_share" for i in range(1, 7)}
            | {f"mount_load_{i}" for i in range(1, n + 1)}
            | {f"mount_deflection_{i}" for i in range(1, n + 1)}
            | {f"transmitted_force_{i}" for i in range(1, n + 1)}
            | {"tilt_x", "tilt_y", "total_transmitted_force"})
    assert set(values) == keys
    assert all(math.isfinite(v) for v in values.values())
    # two excitations of unknown relative phase: their peaks add (a bound for any phase)
    force_only = analyse(analysis.model.body, analysis.model.mounts,
                         excitations=analysis.excitations[:1], running_speed=24.5)
    unbalance_only = analyse(analysis.model.body, analysis.model.mounts,
                             excitations=analysis.excitations[1:], running_speed=24.5)
    assert values["total_transmitted_force"] == pytest.approx(
        force_only.total_transmitted_force + unbalance_only.total_transmitted_force)
    no_speed = dict(inputs, running_speed=None)
    with pytest.raises(MountingError, match="running speed"):
        analyse_inputs(no_speed)


def test_figure_data():
    model, modes, static = solve(case_inputs(R2))
    plan = plan_view(model, static)
    assert plan.cg_inside and len(plan.outline) == 5 and plan.outline[0] == plan.outline[-1]
    assert plan.loads == pytest.approx(tuple(static.loads))
    # the hull of a square and a point inside it is the square
    assert len(support_outline([(0, 0), (1, 0), (1, 1), (0, 1), (0.5, 0.5)])) == 5
    views = mode_views(model, modes, scale=0.2)
    size = 1.3  # the mounts span 1.3 m in x, the most of any axis here
    for v in views:
        assert len(v.views) == 2
        moved = max(float(np.linalg.norm(d - u, axis=1).max())
                    for u, d in zip(v.undeformed, v.displaced, strict=True))
        assert moved <= 0.2 * size * (1 + 1e-12)
    z_mode = views[modes.dominant_coordinate.index("z")]
    assert z_mode.views == ("front", "side")  # a bounce does not show in plan
    chart = frequency_chart(modes, 24.0, orders=(1, 2))
    assert chart.orders == ((1.0, 24.0), (2.0, 48.0))
    assert chart.limit == pytest.approx(24.0 / SQRT2)


def test_excitation_input_errors_name_their_field():
    with pytest.raises(MountingError) as err:
        rotating_unbalance(0.1, (0, 0, 0), "w")
    assert err.value.field == "rotor_axis"
    with pytest.raises(MountingError) as err:
        harmonic_force(10.0, "up", (0, 0, 0))
    assert err.value.field == "force_direction"


def test_tilt_is_the_angle_of_the_base_from_level():
    # two rows of mounts of different stiffness, CG midway: each row carries W/2 and
    # sinks δ = load/k (hand statics of a rigid bar on two springs); the body turns about y
    rows = [{"x": x, "y": y, "z": 0.0, "k_vertical": k, "k_horizontal": 1e5}
            for x, k in ((0.0, 2e5), (2.0, 4e5)) for y in (-0.5, 0.5)]
    inputs = {"mass": 600.0, "cg_x": 1.0, "inertia_xx": 50.0, "inertia_yy": 80.0,
              "inertia_zz": 100.0, "mounts": rows}
    _, _, static = solve(inputs)
    w = 600.0 * G
    d1, d2 = w / 4 / 2e5, w / 4 / 4e5
    # the soft x = 0 side sinks more; right-handed, u_z = t_z − θy·(x − x_G), so
    # θy = (d2 − d1)/span < 0 (the +x side is the higher)
    assert static.tilt_y == pytest.approx((d2 - d1) / 2.0, rel=1e-10)
    assert static.tilt_x == pytest.approx(0.0, abs=1e-15)
    assert static.tilt == pytest.approx(abs(static.tilt_y), rel=1e-12)


LAYERS = {  # module → what it may import from reportgen (the plugin's physics stays pure)
    "method.py": {},
    "response.py": {},
    "analysis.py": {"reportgen.units": {"STANDARD_GRAVITY"}},
    "views.py": {},
    "statics.py": {"reportgen.units": {"STANDARD_GRAVITY"}},
}


@pytest.mark.parametrize("name", sorted(LAYERS))
def test_the_physics_modules_import_only_units_from_the_core(name):
    # DESIGN.md: method modules are pure functions; no document model, no renderer
    tree = ast.parse((Path(method_module.__file__).parent / name).read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            assert not any(a.name.split(".")[0] == "reportgen" for a in node.names), name
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module and \
                node.module.split(".")[0] == "reportgen":
            allowed = LAYERS[name].get(node.module, set())
            assert {a.name for a in node.names} <= allowed, (name, node.module)
