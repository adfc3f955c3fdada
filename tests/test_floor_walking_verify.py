"""floor_walking second method (verify.py) against closed forms of uniform beams, Dunkerley's
bound, scipy's ODE integration, and the method modules it must agree with.

Sources beside each check. Beam cases F_beam_* come from tests/data/check_cases.json
(Thomson & Dahleh, Appendix D, confirmed; free-free, fixed-pinned and pinned-free are the
characteristic equations with invented numbers). Case I5's walking-force ingredients
(P = 0.7 kN, α = 0.83·e^(−0.35 f), R = 0.5) are from memory of DG11 Ch. 2.
"""

from __future__ import annotations

import ast
import math

import numpy as np
import pytest
from conftest import REPO, assert_case
from hypothesis import given, settings
from hypothesis import strategies as st
from reportgen_plugins.floor_walking import bay, equipment, method, verify
from scipy.integrate import solve_ivp

from reportgen.units import STANDARD_GRAVITY

G = STANDARD_GRAVITY
VERIFY = REPO / "plugins" / "floor_walking" / "verify.py"
SIBLINGS = {"method", "bay", "equipment", "figures", "checks", "text"}
BAY = dict(beam_span=9.0, beam_spacing=3.0, beam_inertia=9.0e-4, girder_span=9.0,
           girder_inertia=2.2e-3, elastic_modulus=200e9, dead_load=3.5e3,
           live_load_present=0.5e3)


def test_verify_never_imports_the_method():
    # the second method must be independent: no import of any floor_walking module, relative
    # or absolute, at module level or inside a function
    tree = ast.parse(VERIFY.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            module = node.module or ""
            assert node.level == 0, f"relative import from {module!r}"
            assert "floor_walking" not in module, module
            assert not ({a.name for a in node.names} & SIBLINGS), module
        elif isinstance(node, ast.Import):
            for alias in node.names:
                assert "floor_walking" not in alias.name, alias.name
        elif isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
            assert node.func.id not in {"__import__", "import_module"}
    imported = {n.module.split(".")[0] for n in ast.walk(tree)
                if isinstance(n, ast.ImportFrom) and n.module}
    assert imported <= {"__future__", "math", "dataclasses", "numpy", "scipy", "reportgen"}


# ------------------------------------------------------------------ finite-element beams

@pytest.mark.parametrize("supports", list(verify.SUPPORTS))
def test_fe_beam_against_closed_forms(check_cases, supports):
    # Thomson & Dahleh App. D normal modes of uniform beams: first three modes of each case
    case = check_cases[f"F_beam_{supports}"]
    i = case["inputs"]
    f = verify.beam_frequencies(i["EI"]["value"], i["mass_per_length"]["value"],
                                i["L"]["value"], supports)
    assert len(f) == 3
    for mode in range(3):
        assert_case(float(f[mode]), case, f"f_{mode + 1}")


def test_fe_converges_from_above():
    # Consistent-mass Hermite elements are conforming: Rayleigh-Ritz upper bounds that fall
    # monotonically with refinement (Cook et al., Concepts and Applications of FEA, §11)
    exact = math.pi / 2 / 36 * math.sqrt(1.75e7 / 42)  # (π/2)·√(EI/m)/L², Thomson App. D
    coarse = [verify.beam_frequencies(1.75e7, 42.0, 6.0, "simply_supported", modes=1,
                                      elements=n)[0] for n in (2, 4, 8, 16)]
    assert all(a > b > exact for a, b in zip(coarse, coarse[1:], strict=False))


def test_member_frequency_is_the_simply_supported_closed_form():
    # f = (π/2)·√(E I g/(w L⁴)) for a uniform simply supported beam (Thomson App. D, DG11 Eq. 3-1)
    f = verify.member_frequency(12e3, 9.0, 200e9, 9e-4)
    assert f == pytest.approx(math.pi / 2 * math.sqrt(200e9 * 9e-4 * G / (12e3 * 9.0**4)),
                              rel=1e-6)


# ------------------------------------------------------------------ the bay

def test_guide_frequency_is_dunkerley_of_fe_members_times_its_coefficient():
    # DG11's f_n = 0.18·√(g/(Δ_j+Δ_g)) is Dunkerley's combination of the two member frequencies
    # with 0.18 in place of the exact (π/2)·√(5/384) = 0.17924
    modes = bay.bay_modes(**BAY, slab_depth=0.1, modular_ratio=6.0)
    check = verify.bay_check(**BAY)
    assert check.beam_frequency == pytest.approx(modes.beam_frequency / 1.00423, rel=1e-5)
    assert check.girder_frequency == pytest.approx(modes.girder_frequency / 1.00423, rel=1e-5)
    assert modes.natural_frequency == pytest.approx(check.dunkerley_frequency * 1.00423,
                                                    rel=1e-5)


def test_grillage_reduces_to_each_member():
    # a rigid girder leaves the strips on fixed supports: the beam alone (8 elements a strip)
    rigid_girder = verify.coupled_bay_frequency(**{**_grillage(), "girder_inertia": 1e3})
    assert rigid_girder == pytest.approx(verify.member_frequency(12e3, 9.0, 200e9, 9e-4),
                                         rel=1e-4)
    # rigid beams: the girder carries point masses at the strip centres, which converge to the
    # uniform mass w·L_j/g as the strips get narrow
    girder = verify.member_frequency(36e3, 9.0, 200e9, 2.2e-3)
    for strips, tol in ((4, 5e-3), (24, 2e-4)):
        f = verify.point_mass_girder_frequency(**{**_grillage(), "strips": strips})
        assert f == pytest.approx(girder, rel=tol)


def _grillage(**over: float) -> dict:
    base = {k: v for k, v in BAY.items() if k not in ("dead_load", "live_load_present")}
    return {**base, "area_load": 4000.0, **over}


@settings(max_examples=15, deadline=None)
@given(lj=st.floats(6.0, 14.0), s=st.floats(2.0, 4.0), lg=st.floats(6.0, 12.0),
       ij=st.floats(3e-4, 2e-3), ig=st.floats(8e-4, 6e-3))
def test_grillage_lies_above_dunkerley_and_near_it(lj, s, lg, ij, ig):
    # Dunkerley's bound (Thomson & Dahleh, Dunkerley's equation; λ_max of a sum of flexibility
    # operators is at most the sum of their λ_max): the grillage's f is at least Dunkerley of its
    # own two subsystems (beam on rigid girders, girder under rigid beams), and for a one-way
    # panel on a girder it stays within 3 % of it (coupling 2√2/π of the two mode shapes)
    g = _grillage(beam_span=lj, beam_spacing=s, girder_span=lg, beam_inertia=ij,
                  girder_inertia=ig, strips=8, beam_elements=6)
    coupled = verify.coupled_bay_frequency(**g)
    f_beam = verify.member_frequency(4000.0 * s, lj, 200e9, ij)
    f_girder = verify.point_mass_girder_frequency(**g)
    lower = verify.dunkerley(f_beam, f_girder)
    assert lower * (1 - 1e-9) <= coupled <= lower * 1.03


def test_verification_tolerance_between_the_guide_and_the_grillage():
    # the package's row: the guide's f_n against the grillage eigenvalue; 0.18 puts the guide
    # 0.42 % above Dunkerley and the grillage lies 0-2.6 % above it, so 3 % bounds the gap
    for over in ({}, {"girder_inertia": 6e-3}, {"beam_inertia": 4e-4}, {"beam_span": 12.0}):
        b = {**BAY, **over}
        modes = bay.bay_modes(**b, slab_depth=0.1, modular_ratio=6.0)
        check = verify.bay_check(**b)
        assert check.coupled_frequency == pytest.approx(modes.natural_frequency, rel=0.03)
        assert check.coupled_frequency >= check.dunkerley_frequency


# ------------------------------------------------------------------ the modal oscillator

def test_resonant_response_reproduces_case_i5(check_cases):
    # Case I5 (from memory): the steady resonant response of the modal oscillator (M = W/2g)
    # under R·α·P equals Eq. 4-1 with P0 = R·0.83·P = 290.5 N
    case = check_cases["I5_dg11_Po_derivation_check"]
    i = case["inputs"]
    ratio = verify.resonant_acceleration_ratio(
        natural_frequency=i["f_n"]["value"], effective_weight=i["W_effective"]["value"],
        damping_ratio=i["beta"]["value"])
    assert_case(ratio, case, "ap_over_g_DG11")
    # and agrees with the method's Eq. 4-1 at P0 = 290 N within the rounding 290.5 → 290
    r = method.walking_response(natural_frequency=5.0, effective_weight=250e3,
                                damping_ratio=0.03, excitation_force=290.0, limit_ratio=0.005)
    assert r.peak_acceleration_ratio == pytest.approx(ratio, rel=0.002)


def test_resonant_response_against_time_integration():
    # scipy.integrate.solve_ivp of M x'' + C x' + K x = F sin(ω_n t) run to steady state: the
    # acceleration amplitude over the last cycles equals the frequency-response value
    f_n, w, beta = 4.0, 300e3, 0.05
    m = w / (2 * G)
    omega = 2 * math.pi * f_n
    force = 0.5 * 0.83 * math.exp(-0.35 * f_n) * 700.0
    sol = solve_ivp(lambda t, y: [y[1], (force * math.sin(omega * t) - 2 * beta * m * omega
                                         * y[1] - m * omega**2 * y[0]) / m],
                    (0.0, 12.0), [0.0, 0.0], rtol=1e-10, atol=1e-14, max_step=0.002,
                    dense_output=True)
    t = np.linspace(11.0, 12.0, 4001)
    x, v = sol.sol(t)
    acc = (force * np.sin(omega * t) - 2 * beta * m * omega * v - m * omega**2 * x) / m
    ratio = verify.resonant_acceleration_ratio(natural_frequency=f_n, effective_weight=w,
                                               damping_ratio=beta)
    assert acc.max() / G == pytest.approx(ratio, rel=1e-3)


@pytest.mark.parametrize(("f_n", "beta", "step"), [(12.0, 0.03, 2.0), (20.0, 0.01, 1.25),
                                                   (35.0, 0.05, 125 / 60)])
def test_footstep_rms_closed_form_against_impulse_response(f_n, beta, step):
    # the method's v_rms = (v_p/√2)·√((1−e^(−4πβh))/(4πβh)) approximates the decaying sinusoid;
    # scipy.signal.impulse and Simpson quadrature give the exact rms of the damped oscillator
    r = equipment.footstep_response(natural_frequency=f_n, effective_weight=200e3,
                                    damping_ratio=beta, step_frequency=step)
    exact = verify.footstep_velocity_rms(natural_frequency=f_n, effective_weight=200e3,
                                         damping_ratio=beta, impulse=r.impulse,
                                         step_frequency=step)
    assert r.velocity_rms == pytest.approx(exact, rel=0.005)


def test_dunkerley_definition():
    # Thomson & Dahleh, Dunkerley's equation: 1/f² = Σ 1/f_i²; equal parts give f/√2
    assert verify.dunkerley(5.0, 5.0) == pytest.approx(5.0 / math.sqrt(2))
    assert verify.dunkerley(3.0, 4.0) == pytest.approx(12.0 / 5.0)
