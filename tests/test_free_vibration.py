"""free_vibration against published formulas, the reference check cases and scipy.

Sources are named beside each check. Cases A1-A6 come from tests/data/check_cases.json
(Thomson & Dahleh 5th ed. Ch. 2; Rao 6th ed. Ch. 2; invented numbers, textbook formulas).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from conftest import assert_case
from scipy.integrate import solve_ivp

from reportgen.testing import assert_calc_contract, compute, make_job, result
from reportgen.units import STANDARD_GRAVITY


def _calc(case: dict, **extra) -> dict:
    i = case["inputs"]
    inputs = {
        "mass": f"{i['m']['value']} kg",
        "stiffness": f"{i['k']['value']} N/m",
        "initial_displacement": f"{i['x0']['value']} m",
        "initial_velocity": f"{i['v0']['value']} m/s",
    }
    if i["c"]["value"]:
        inputs["damping_coefficient"] = f"{i['c']['value']} N*s/m"
    inputs.update(extra)
    return {"plugin": "free_vibration", "inputs": inputs}


def _doc(calc: dict):
    return compute(make_job([calc]))


def _x_at(doc, t: float) -> float:
    """Rebuild x(t) from the published closed form with the package's own results."""
    sec = doc.sections[0]
    r = {row.key: row.quantity.value for row in sec.results}
    wn, zeta = r["angular_natural_frequency"], r["damping_ratio"]
    if "amplitude" in r:
        wd = wn * math.sqrt(1 - zeta**2)
        return r["amplitude"] * math.exp(-zeta * wn * t) * math.cos(wd * t + r["phase"])
    raise AssertionError("no amplitude for this regime")


def test_a1_underdamped_against_thomson_ch2(check_cases):
    # A1_sdof_free_underdamped: Thomson & Dahleh Ch. 2 / Rao Ch. 2 formulas, invented numbers.
    case = check_cases["A1_sdof_free_underdamped"]
    doc = _doc(_calc(case))
    assert_case(result(doc, "angular_natural_frequency"), case, "omega_n")
    assert_case(result(doc, "natural_frequency"), case, "f_n")
    assert_case(result(doc, "natural_period"), case, "T_n")
    assert_case(result(doc, "critical_damping"), case, "c_critical")
    assert_case(result(doc, "damping_ratio"), case, "zeta")
    assert_case(result(doc, "damped_natural_frequency"), case, "f_d")
    assert_case(result(doc, "logarithmic_decrement"), case, "log_decrement")
    assert_case(result(doc, "amplitude"), case, "amplitude_C")
    assert_case(result(doc, "phase"), case, "phase_phi")
    for key, t in (("x_at_t_0.05s", 0.05), ("x_at_t_0.2s", 0.2), ("x_at_t_0.5s", 0.5)):
        assert_case(_x_at(doc, t), case, key)


def test_a2_undamped_amplitude_phase(check_cases):
    # A2_sdof_free_undamped_amplitude_phase: A = sqrt(x0^2 + (v0/wn)^2), phi = -45 deg.
    case = check_cases["A2_sdof_free_undamped_amplitude_phase"]
    doc = _doc(_calc(case))
    assert_case(result(doc, "amplitude"), case, "amplitude_A")
    assert_case(result(doc, "phase"), case, "phase_phi")
    assert_case(math.degrees(result(doc, "phase")), case, "phase_phi_deg")
    assert_case(_x_at(doc, 0.1), case, "x_at_t_0.1s")
    assert_case(_x_at(doc, 0.25), case, "x_at_t_0.25s")
    assert result(doc, "logarithmic_decrement") == 0.0


def _figure_history(doc):
    fig = next(b for b in doc.sections[0].blocks if type(b).__name__ == "Figure")
    s = fig.panels[0].series[0]
    # the axis is in the unit the job gave lengths in (SI prefixes, by definition)
    unit = fig.panels[0].y_label.rsplit("[", 1)[1].rstrip("]")
    return np.array(s.x), np.array(s.y) * {"m": 1.0, "mm": 1e-3, "µm": 1e-6}[unit]


@pytest.mark.parametrize("case_id", ["A3_sdof_free_critically_damped", "A4_sdof_free_overdamped"])
def test_a3_a4_critical_and_overdamped_regimes(check_cases, case_id):
    # A3 / A4: Rao Ch. 2 closed forms for zeta = 1 and zeta > 1 (invented numbers).
    case = check_cases[case_id]
    calc = _calc(case, duration="0.6 s")
    doc = _doc(calc)
    assert_case(result(doc, "damping_ratio"), case, "zeta")
    assert "amplitude" not in {r.key for r in doc.sections[0].results}
    regime = " ".join(b.text for b in doc.sections[0].blocks if type(b).__name__ == "Paragraph")
    assert ("Critically damped" if case_id.startswith("A3") else "Overdamped") in regime
    t, x = _figure_history(doc)
    for key, tt in (("x_at_t_0.1s", 0.1), ("x_at_t_0.5s", 0.5)):
        assert_case(float(np.interp(tt, t, x)), {**case, "expected": {
            key: {**case["expected"][key], "rel_tol": 2e-3}}}, key)
    if case_id.startswith("A4"):
        eqs = {b.name: b.result.value for b in doc.sections[0].blocks
               if type(b).__name__ == "Equation"}
        assert_case(eqs["s_1"], case, "s1")
        assert_case(eqs["s_2"], case, "s2")


@pytest.mark.parametrize("delta_mm,key", [(1, "f_n_for_delta_1mm"), (5, "f_n_for_delta_5mm"),
                                          (25, "f_n_for_delta_25mm")])
def test_a6_static_deflection_handbook_relation(check_cases, delta_mm, key):
    # A6_static_deflection_natural_frequency: f_n = (1/2pi) sqrt(g/delta) = 15.76/sqrt(delta[mm]).
    case = check_cases["A6_static_deflection_natural_frequency"]
    m = 1000.0
    k = m * STANDARD_GRAVITY / (delta_mm / 1000.0)
    doc = _doc({"plugin": "free_vibration", "inputs": {"mass": f"{m} kg",
                                                       "stiffness": f"{k!r} N/m"}})
    assert result(doc, "static_deflection") == pytest.approx(delta_mm / 1000.0, rel=1e-12)
    assert_case(result(doc, "natural_frequency"), case, key)
    # handbook form (rounded constant 15.76) printed beside it agrees to 0.01 %
    assert 15.76 / math.sqrt(delta_mm) == pytest.approx(result(doc, "natural_frequency"),
                                                        rel=1e-4)


def test_closed_form_against_solve_ivp_independently():
    # Independent check: integrate m x'' + c x' + k x = 0 with scipy (not the plugin's own
    # verification) and compare the plugin's plotted response.
    m, k, zeta, x0, v0 = 1200.0, 350e3, 0.05, 0.002, 0.0
    doc = _doc({"plugin": "free_vibration", "inputs": {
        "mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": zeta,
        "initial_displacement": "2 mm", "initial_velocity": "0 m/s"}})
    c = zeta * 2 * math.sqrt(k * m)
    t, x = _figure_history(doc)
    sol = solve_ivp(lambda _t, y: [y[1], -(c * y[1] + k * y[0]) / m], (0, t[-1]), [x0, v0],
                    t_eval=t, rtol=1e-10, atol=1e-13, method="DOP853")
    assert np.max(np.abs(sol.y[0] - x)) < 1e-8
    # decay: successive peaks ratio = exp(logarithmic decrement), Thomson Ch. 2
    delta = result(doc, "logarithmic_decrement")
    assert delta == pytest.approx(2 * math.pi * zeta / math.sqrt(1 - zeta**2), rel=1e-12)


def test_verification_rows_agree_and_cover_decay():
    doc = _doc({"plugin": "free_vibration", "inputs": {
        "mass": "50 kg", "stiffness": "200000 N/m", "damping_coefficient": "200 N*s/m",
        "initial_displacement": "5 mm", "initial_velocity": "0.1 m/s"}})
    rows = doc.sections[0].verification
    assert rows is not None and all(r.agrees for r in rows)
    names = " ".join(r.quantity for r in rows)
    assert "logarithmic_decrement" in names and "natural_frequency" in names


def test_us_customary_inputs_convert():
    # 1 lb = 0.45359237 kg, 1 lbf/in = 175.126835 N/m (NIST SP 811 conversion factors).
    doc = _doc({"plugin": "free_vibration", "inputs": {
        "mass": "2645.55 lb", "stiffness": "2 kip/in"}})
    m = 2645.55 * 0.45359237
    k = 2000 * 175.12683524647636
    assert result(doc, "natural_frequency") == pytest.approx(math.sqrt(k / m) / (2 * math.pi),
                                                             rel=1e-9)


def test_contract_and_real_pdf(tmp_path):
    # The test kit's full contract: dimensions, equations reproduce, verification, HTML, PDF.
    from reportgen_plugins.free_vibration import FreeVibration

    built = assert_calc_contract(FreeVibration(), {"inputs": {
        "mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05,
        "initial_displacement": "2 mm"}}, tmp_path)
    assert built is not None
    text = built.text()
    assert "Underdamped" in text and "2.718" in text  # f_n = sqrt(350e3/1200)/2pi = 2.718 Hz
