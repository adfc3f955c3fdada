"""forced_response against published formulas, the reference check cases, scipy and solve_ivp.

Sources are named beside each check. Cases B1-B4 come from tests/data/check_cases.json
(Thomson & Dahleh 5th ed. Ch. 3; Rao 6th ed. Ch. 3; textbook formulas, invented numbers).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from conftest import REPO, assert_case
from reportgen_plugins.forced_response import ForcedResponse, response
from scipy import signal
from scipy.integrate import solve_ivp
from scipy.optimize import minimize_scalar

from reportgen import Caution, Check, Equation, Figure, InputsTable, JobError, Note, Paragraph
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import main
from reportgen.document.compute import compute_document
from reportgen.job.load import load_job
from reportgen.testing import (
    assert_calc_contract,
    compute,
    compute_calc,
    job_toml,
    make_job,
    result,
    section_results,
)
from reportgen.units import STANDARD_GRAVITY

SAMPLES = REPO / "sample_jobs"
_FN = math.sqrt(4e5 / 100) / (2 * math.pi)  # f_n of the 100 kg, 400 kN/m examples
COMMON_KEYS = {
    "natural_frequency", "forcing_frequency", "frequency_ratio", "dynamic_amplification",
    "phase_lag", "displacement_amplitude", "velocity_amplitude", "velocity_rms",
    "acceleration_amplitude", "transmitted_force", "resonance_margin",
}


def _calc(inputs: dict, criteria: dict | None = None) -> dict:
    calc = {"plugin": "forced_response", "inputs": inputs}
    if criteria:
        calc["criteria"] = criteria
    return calc


def _doc(inputs: dict, criteria: dict | None = None):
    return compute_calc("forced_response", inputs, criteria)


def _results(doc) -> dict[str, float]:
    return section_results(doc.sections[0])


def _blocks(doc, kind):
    return [b for b in doc.sections[0].blocks if isinstance(b, kind)]


def _equation(doc, name: str) -> Equation:
    return next(b for b in _blocks(doc, Equation) if b.name == name)


def _checks(doc) -> dict[str, str]:
    return {c.id: c.status for c in doc.sections[0].checks}


def _b1_inputs(case: dict) -> dict:
    i = case["inputs"]
    return {"mass": f"{i['m']['value']!r} kg", "stiffness": f"{i['k']['value']!r} N/m",
            "damping_ratio": i["zeta"]["value"], "force_amplitude": f"{i['F0']['value']!r} N",
            "frequency": f"{i['f']['value']!r} Hz"}


# ------------------------------------------------------------------ reference cases


def test_b1_applied_force_against_thomson_ch3(check_cases):
    # B1_forced_applied_force: Thomson & Dahleh 5th ed. Ch. 3 / Rao 6th ed. Ch. 3 formulas,
    # invented numbers (status formula_confirmed_example_invented).
    case = check_cases["B1_forced_applied_force"]
    doc = _doc(_b1_inputs(case))
    r = _results(doc)
    assert COMMON_KEYS | {"static_displacement", "force_transmissibility"} <= set(r)
    assert_case(r["damping_coefficient"], case, "c")
    assert_case(r["natural_frequency"], case, "f_n")
    assert_case(r["frequency_ratio"], case, "r")
    assert_case(r["static_displacement"], case, "x_static")
    assert_case(r["dynamic_amplification"], case, "DAF")
    assert_case(r["displacement_amplitude"], case, "X")
    assert_case(r["phase_lag"], case, "phase_lag")
    assert_case(math.degrees(r["phase_lag"]), case, "phase_lag_deg")
    assert_case(r["force_transmissibility"], case, "TR_force")
    assert_case(r["transmitted_force"], case, "F_transmitted")
    # The case's separation margin is |f - f_n|/f (relative to the forcing frequency); this
    # project checks |f - f_n|/f_n and prints the other definition for information.
    assert_case(_equation(doc, "M_f").result.value, case, "separation_margin")
    f, fn = case["inputs"]["f"]["value"], r["natural_frequency"]
    assert r["resonance_margin"] == pytest.approx(abs(f - fn) / fn, rel=1e-12)
    assert r["resonance_margin"] == pytest.approx(0.205233, rel=1e-5)  # the case's note


def test_b2_resonance_amplification_and_phase_exactly_90_degrees(check_cases):
    # B2_resonance_amplification: D(r=1) = 1/(2ζ), φ = 90° at r = 1, displacement peak at
    # r = √(1 − 2ζ²); Thomson & Dahleh Ch. 3 / Rao Ch. 3 (formula_confirmed_example_invented).
    case = check_cases["B2_resonance_amplification"]
    zeta = case["inputs"]["zeta"]["value"]
    m, k = 100.0, 4e5
    fn = math.sqrt(k / m) / (2 * math.pi)
    doc = _doc({"mass": f"{m} kg", "stiffness": f"{k} N/m", "damping_ratio": zeta,
                "force_amplitude": "500 N", "frequency": f"{fn!r} Hz"})
    r = _results(doc)
    assert r["frequency_ratio"] == pytest.approx(1.0, abs=1e-14)
    assert_case(r["dynamic_amplification"], case, "DAF_at_r1")
    assert_case(math.degrees(r["phase_lag"]), case, "phase_at_r1_deg")
    assert r["phase_lag"] == pytest.approx(math.pi / 2, abs=1e-12)  # exactly π/2 at r = 1
    assert _checks(doc)["resonance-margin"] == "fail"

    # The peaks of the plugin's own closed-form curves (the ones plotted), found numerically.
    p = {"force_amplitude": 1.0}
    wn = math.sqrt(k / m)

    def curve(ratio, key):
        return float(response("force", p, frozenset(p), m, k, zeta,
                              np.array([ratio * wn / (2 * math.pi)]))[key][0])

    peak = minimize_scalar(lambda q: -curve(q, "D"), bounds=(0.9, 1.1), method="bounded",
                           options={"xatol": 1e-10})
    assert_case(peak.x, case, "r_peak_displacement")
    assert_case(-peak.fun, case, "DAF_max")
    tr = minimize_scalar(lambda q: -curve(q, "F_T"), bounds=(0.9, 1.1), method="bounded",
                         options={"xatol": 1e-10})
    assert_case(tr.x, case, "r_peak_TR")
    assert_case(-tr.fun, case, "TR_max")
    # And the package's results at the published peak ratios.
    r_pk = case["expected"]["r_peak_TR"]["value"]
    at_peak = _results(_doc({"mass": f"{m} kg", "stiffness": f"{k} N/m",
                             "damping_ratio": zeta, "force_amplitude": "1 N",
                             "frequency": f"{r_pk * fn!r} Hz"}))
    assert_case(at_peak["force_transmissibility"], case, "TR_max")


def test_b3_rotating_unbalance_against_thomson_ch3(check_cases):
    # B3_forced_rotating_unbalance: X = (m_e e/M) r² D; Thomson & Dahleh Ch. 3, Rao Ch. 3
    # (formula_confirmed_example_invented). The speed is given in rpm as the case states.
    case = check_cases["B3_forced_rotating_unbalance"]
    i = case["inputs"]
    doc = _doc({"mass": f"{i['M_total']['value']} kg", "stiffness": f"{i['k']['value']} N/m",
                "damping_ratio": i["zeta"]["value"],
                "unbalance": f"{i['unbalance_me_e']['value']} kg*m",
                "speed": f"{i['speed']['value']} rpm"})
    r = _results(doc)
    assert COMMON_KEYS | {"unbalance_force"} <= set(r)
    assert_case(_equation(doc, "omega").result.value, case, "omega")
    assert_case(r["frequency_ratio"], case, "r")
    assert_case(r["unbalance_force"], case, "F_unbalance")
    assert_case(r["displacement_amplitude"], case, "X")
    assert_case(r["displacement_amplitude"] * i["M_total"]["value"]
                / i["unbalance_me_e"]["value"], case, "MX_over_me_e")
    assert_case(math.degrees(r["phase_lag"]), case, "phase_lag_deg")
    assert_case(r["force_transmissibility"], case, "TR_force")
    assert_case(r["transmitted_force"], case, "F_transmitted")


def test_b3_unbalance_mass_with_eccentricity_is_the_same_unbalance(check_cases):
    # B3_forced_rotating_unbalance again, with m_e and e given separately (m_e·e = 0.01 kg·m).
    case = check_cases["B3_forced_rotating_unbalance"]
    doc = _doc({"mass": "200 kg", "stiffness": "800 kN/m", "damping_ratio": 0.1,
                "unbalance_mass": "500 g", "eccentricity": "20 mm", "speed": "1500 rpm"})
    r = _results(doc)
    assert r["unbalance"] == pytest.approx(0.01, rel=1e-12)  # "500 g" is 0.5 kg
    assert_case(r["displacement_amplitude"], case, "X")


@pytest.mark.parametrize("form", ["base_displacement", "base_acceleration"])
def test_b4_support_motion_against_rao_ch3(check_cases, form):
    # B4_forced_base_motion: X/Y = √(1+(2ζr)²)·D, Z/Y = r²D, phase of X behind Y =
    # atan2(2ζr³, 1 − r² + (2ζr)²), F_T = mω²X; Rao 6th ed. Ch. 3 / Thomson & Dahleh Ch. 3
    # (formula_confirmed_example_invented).
    case = check_cases["B4_forced_base_motion"]
    i = case["inputs"]
    m, fn, f, y = i["m"]["value"], i["f_n"]["value"], i["f"]["value"], i["Y"]["value"]
    k = m * (2 * math.pi * fn) ** 2
    inputs = {"mass": f"{m} kg", "stiffness": f"{k!r} N/m", "damping_ratio": i["zeta"]["value"],
              "frequency": f"{f} Hz"}
    if form == "base_displacement":
        inputs[form] = f"{y} m"
    else:  # the same motion given as its acceleration amplitude Y·ω²
        inputs[form] = f"{y * (2 * math.pi * f) ** 2!r} m/s**2"
    doc = _doc(inputs)
    r = _results(doc)
    assert COMMON_KEYS | {"relative_displacement", "motion_transmissibility"} <= set(r)
    assert_case(r["frequency_ratio"], case, "r")
    assert_case(r["motion_transmissibility"], case, "T_motion_abs")
    assert_case(r["displacement_amplitude"], case, "X_abs")
    assert_case(r["relative_displacement"], case, "Z_rel")
    assert_case(math.degrees(r["phase_lag"]), case, "phase_abs_deg")
    assert_case(r["transmitted_force"], case, "F_transmitted")
    # The force in the spring and damper, written out: k·Z·√(1 + (2ζr)²) (Rao Ch. 3).
    zeta, ratio = i["zeta"]["value"], r["frequency_ratio"]
    assert r["transmitted_force"] == pytest.approx(
        k * r["relative_displacement"] * math.sqrt(1 + (2 * zeta * ratio) ** 2), rel=1e-12)


# ------------------------------------------------------------------ independent methods


def test_closed_form_against_scipy_signal_freqresp(check_cases):
    # B1_forced_applied_force inputs; the transfer function 1/(ms² + cs + k) evaluated by
    # scipy.signal.freqresp is the reference library here, independent of the plugin.
    case = check_cases["B1_forced_applied_force"]
    r = _results(_doc(_b1_inputs(case)))
    i = case["inputs"]
    m, k, f0 = i["m"]["value"], i["k"]["value"], i["F0"]["value"]
    c = r["damping_coefficient"]
    w = 2 * math.pi * i["f"]["value"]
    _, h = signal.freqresp(signal.lti([1.0], [m, c, k]), w=[w])
    _, t = signal.freqresp(signal.lti([c, k], [m, c, k]), w=[w])
    assert r["displacement_amplitude"] == pytest.approx(f0 * abs(h[0]), rel=1e-9)
    assert r["phase_lag"] == pytest.approx(-np.angle(h[0]), rel=1e-9)
    assert r["dynamic_amplification"] == pytest.approx(k * abs(h[0]), rel=1e-9)
    assert r["transmitted_force"] == pytest.approx(f0 * abs(t[0]), rel=1e-9)


def test_closed_form_against_long_solve_ivp_from_rest(check_cases):
    # B1_forced_applied_force: integrate m x'' + c x' + k x = F0 cos ωt from rest until the
    # transient has decayed (e^(−ζω_n t) < 1e-7), then fit amplitude and phase over the last
    # whole forcing cycle. No closed form enters the integration.
    case = check_cases["B1_forced_applied_force"]
    r = _results(_doc(_b1_inputs(case)))
    i = case["inputs"]
    m, k, f0 = i["m"]["value"], i["k"]["value"], i["F0"]["value"]
    c = r["damping_coefficient"]
    w, wn, zeta = 2 * math.pi * i["f"]["value"], math.sqrt(k / m), i["zeta"]["value"]
    period = 2 * math.pi / w
    cycles = math.ceil(math.log(1e7) / (zeta * wn) / period) + 1
    n = 256
    t_eval = (cycles - 1) * period + period * np.arange(n) / n
    sol = solve_ivp(lambda t, y: [y[1], (f0 * math.cos(w * t) - c * y[1] - k * y[0]) / m],
                    (0, cycles * period), [0.0, 0.0], method="DOP853", rtol=1e-10,
                    atol=1e-14, t_eval=t_eval)
    a = 2 / n * sol.y[0] @ np.cos(w * t_eval)
    b = 2 / n * sol.y[0] @ np.sin(w * t_eval)
    assert math.hypot(a, b) == pytest.approx(r["displacement_amplitude"], rel=1e-5)
    assert math.atan2(b, a) == pytest.approx(r["phase_lag"], rel=1e-5)
    assert_case(math.hypot(a, b), case, "X")  # and the case's value, from its own integration


@pytest.mark.parametrize("inputs", [
    {"damping_ratio": 0.05, "force_amplitude": "500 N", "frequency": "8 Hz"},
    {"damping_ratio": 0.0, "force_amplitude": "500 N", "frequency": "5 Hz"},  # r ≈ 1/2
    {"damping_ratio": 0.0, "force_amplitude": "500 N", "frequency": f"{_FN / 2!r} Hz"},  # 1/2
    {"damping_ratio": 0.0, "force_amplitude": "500 N", "frequency": "30 Hz"},  # φ = π
    {"damping_coefficient": "900 N*s/m", "unbalance": "0.01 kg*m", "speed": "1500 rpm"},
    {"damping_ratio": 0.1, "base_acceleration": "0.1 g", "frequency": "15 Hz"},
    {"damping_ratio": 0.05, "base_displacement": "1 mm", "frequency": "9.5 Hz"},
])
def test_verification_rows_agree_for_every_excitation(inputs):
    # The plugin's own second method (scipy.signal.freqresp and a solve_ivp periodic steady
    # state) must agree with its closed forms, undamped cases included.
    doc = _doc({"mass": "100 kg", "stiffness": "400 kN/m", **inputs})
    rows = doc.sections[0].verification
    assert rows and all(row.agrees for row in rows)
    methods = " ".join(row.method for row in rows)
    assert "freqresp" in methods and "solve_ivp" in methods
    covered = {row.quantity for row in rows}
    assert {"displacement_amplitude", "phase_lag", "transmitted_force"} <= covered


def test_verification_catches_a_wrong_closed_form(check_cases, tmp_path):
    # A verifier that cannot fail proves nothing: a 0.1 % error in X must be caught.
    case = check_cases["B1_forced_applied_force"]
    plugins = load_plugin_set()
    from reportgen.document.compute import calc_context
    from reportgen.testing import load_job_dict

    job = load_job_dict(make_job([_calc(_b1_inputs(case))]), plugins, tmp_path)
    ctx = calc_context(job.calcs[0], "SI")
    ct = ForcedResponse()
    out = ct.compute(ctx)
    bad = tuple(dataclasses.replace(row, quantity=dataclasses.replace(
        row.quantity, value=row.quantity.value * 1.001))
        if row.key == "displacement_amplitude" else row for row in out.results)
    rows = ct.verify(ctx, dataclasses.replace(out, results=bad))
    wrong = [row for row in rows if row.quantity == "displacement_amplitude"]
    assert len(wrong) == 2 and not any(row.agrees for row in wrong)


# ------------------------------------------------------------------ limits and conversions


def test_limit_r_to_zero_gives_the_static_deflection():
    # r → 0: X → F0/k (Thomson & Dahleh Ch. 3: the response is stiffness-controlled).
    r = _results(_doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                       "force_amplitude": "500 N", "frequency": "0.001 Hz"}))
    assert r["frequency_ratio"] < 1e-3
    assert r["displacement_amplitude"] == pytest.approx(500 / 4e5, rel=1e-6)
    assert r["transmitted_force"] == pytest.approx(500, rel=1e-6)
    assert r["phase_lag"] == pytest.approx(0.0, abs=1e-5)


def test_time_integration_is_skipped_with_a_note_where_it_would_be_too_slow():
    # r = 1e-4: one forcing period spans 10 000 natural periods; only freqresp rows remain.
    doc = _doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                "force_amplitude": "500 N", "frequency": "0.001 Hz"})
    rows = doc.sections[0].verification
    assert rows and all(row.agrees and "freqresp" in row.method for row in rows)
    assert any("time integration is not run" in n.text for n in _blocks(doc, Note))


def test_limit_r_large_unbalance_tends_to_me_e_over_m():
    # r ≫ 1: X → m_e·e/m for a rotating unbalance (Thomson & Dahleh Ch. 3, rotating unbalance).
    doc = _doc({"mass": "200 kg", "stiffness": "8 kN/m", "damping_ratio": 0.1,
                "unbalance": "0.01 kg*m", "speed": "60000 rpm"})
    r = _results(doc)
    assert r["frequency_ratio"] > 150
    assert r["displacement_amplitude"] == pytest.approx(0.01 / 200, rel=1e-4)
    assert r["phase_lag"] == pytest.approx(math.pi, abs=2e-3)
    assert "mass-controlled" in _blocks(doc, Paragraph)[1].text


def test_limit_r_large_force_tends_to_f0_over_m_omega_squared():
    # r ≫ 1 with a constant force: X → F0/(m ω²) (mass-controlled; Rao Ch. 3).
    r = _results(_doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                       "force_amplitude": "500 N", "frequency": "2000 Hz"}))
    w = 2 * math.pi * 2000
    assert r["displacement_amplitude"] == pytest.approx(500 / (100 * w**2), rel=1e-4)


def test_undamped_phase_is_zero_below_and_pi_above_resonance():
    # Undamped: the response is in phase below resonance, in anti-phase above (Rao Ch. 3).
    base = {"mass": "100 kg", "stiffness": "400 kN/m", "force_amplitude": "500 N"}
    below = _results(_doc({**base, "frequency": "5 Hz"}))
    above = _results(_doc({**base, "frequency": "20 Hz"}))
    assert below["phase_lag"] == 0.0 and below["damping_ratio"] == 0.0
    assert above["phase_lag"] == pytest.approx(math.pi, abs=1e-15)


def test_rpm_is_revolutions_per_minute_not_radians():
    # 1500 rpm is 25 Hz (1500 rev / 60 s), not pint's radian-based 157 Hz.
    base = {"mass": "200 kg", "stiffness": "800 kN/m", "damping_ratio": 0.1}
    via_speed = _results(_doc({**base, "unbalance": "0.01 kg*m", "speed": "1500 rpm"}))
    via_freq = _results(_doc({**base, "force_amplitude": "100 N", "frequency": "1500 rpm"}))
    assert via_speed["forcing_frequency"] == pytest.approx(25.0, rel=1e-12)
    assert via_freq["forcing_frequency"] == pytest.approx(25.0, rel=1e-12)


def test_g_is_standard_gravity_for_acceleration_and_grams_for_mass():
    # "0.1 g" as an acceleration is 0.1 × 9.80665 m/s² (standard gravity, CGPM 1901);
    # "500 g" as a mass is 0.5 kg.
    doc = _doc({"mass": "500 g", "stiffness": "2 kN/m", "damping_ratio": 0.05,
                "base_acceleration": "0.1 g", "frequency": "20 Hz"})
    rows = {row.name: row.quantity.value for t in _blocks(doc, InputsTable) for row in t.rows}
    assert rows["base_acceleration"] == pytest.approx(0.980665, rel=1e-12)
    assert rows["mass"] == pytest.approx(0.5, rel=1e-12)
    r = _results(doc)
    assert r["natural_frequency"] == pytest.approx(math.sqrt(2000 / 0.5) / (2 * math.pi))
    w = 2 * math.pi * 20
    y = 0.1 * STANDARD_GRAVITY / w**2
    assert _equation(doc, "Y").result.value == pytest.approx(y, rel=1e-12)
    assert r["acceleration_amplitude"] == pytest.approx(
        r["motion_transmissibility"] * 0.1 * STANDARD_GRAVITY, rel=1e-12)


# ------------------------------------------------------------------ input errors


def _job_errors(inputs: dict) -> str:
    with pytest.raises(JobError) as err:
        _doc(inputs)
    return str(err.value)


def test_undamped_excitation_at_resonance_is_an_input_error(tmp_path, capsys):
    # Undamped at r = 1 the steady state does not exist: exit 2, message names the field.
    fn = math.sqrt(4e5 / 100) / (2 * math.pi)
    job = tmp_path / "job.toml"
    from reportgen.testing import job_toml

    job.write_text(job_toml(make_job([_calc({
        "mass": "100 kg", "stiffness": "400000 N/m", "force_amplitude": "500 N",
        "frequency": f"{fn!r} Hz"})])), encoding="utf-8")
    out = tmp_path / "out"
    code = main(["build", str(job), "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert "inputs.frequency" in err and "damping" in err and "resonance" in err
    assert "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())
    # the same for a rotating unbalance names the speed
    text = _job_errors({"mass": "100 kg", "stiffness": "400000 N/m", "damping_ratio": 0.0,
                        "unbalance": "0.01 kg*m", "speed": f"{fn * 60!r} rpm"})
    assert "inputs.speed" in text


def test_two_excitations_are_an_input_error_naming_both():
    text = _job_errors({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                        "force_amplitude": "500 N", "base_displacement": "1 mm",
                        "frequency": "8 Hz"})
    assert "exactly one excitation" in text
    assert "force_amplitude" in text and "base_displacement" in text


@pytest.mark.parametrize(("inputs", "field", "words"), [
    ({"damping_ratio": 0.05}, "'inputs'", "no excitation"),
    ({"unbalance": "0.01 kg*m", "unbalance_mass": "1 kg", "speed": "900 rpm"},
     "inputs.unbalance_mass", "not both"),
    ({"unbalance_mass": "1 kg", "speed": "900 rpm"}, "inputs.eccentricity", "needs"),
    ({"unbalance": "0.01 kg*m", "frequency": "15 Hz"}, "inputs.frequency", "speed"),
    ({"force_amplitude": "5 N", "speed": "900 rpm"}, "inputs.speed", "frequency"),
    ({"force_amplitude": "5 N"}, "inputs.frequency", "needs its frequency"),
    ({"base_displacement": "1 mm", "base_acceleration": "0.1 g", "frequency": "9 Hz"},
     "inputs.base_acceleration", "not both"),
    ({"damping_ratio": 0.05, "damping_coefficient": "100 N*s/m", "force_amplitude": "5 N",
      "frequency": "9 Hz"}, "inputs.damping_coefficient", "not both"),
])
def test_conflicting_or_missing_inputs_name_the_field(inputs, field, words):
    text = _job_errors({"mass": "100 kg", "stiffness": "400 kN/m", **inputs})
    assert field in text and words in text


# ------------------------------------------------------------------ document content


def test_regime_statement_follows_the_frequency_ratio():
    base = {"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
            "force_amplitude": "500 N"}
    texts = {}
    for f in ("3 Hz", "10 Hz", "20 Hz"):  # r = 0.30, 0.99, 1.99
        doc = _doc({**base, "frequency": f})
        regime = next(p for p in _blocks(doc, Paragraph) if p.title == "Regime")
        texts[f] = regime.text
        # the regime limits are common practice (no source): the package says "common
        # practice" and never prints "no source"
        assert "common practice" in regime.text and "no source" not in regime.text
    assert "stiffness-controlled" in texts["3 Hz"]
    assert "damping-controlled" in texts["10 Hz"]
    assert "mass-controlled" in texts["20 Hz"]


def test_velocity_peak_and_rms_and_the_criterion_uses_the_peak():
    doc = _doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                "force_amplitude": "500 N", "frequency": "8 Hz"},
               {"max_velocity": "150 mm/s"})
    r = _results(doc)
    # Peak = ω·X, RMS = peak/√2 for a sine (definition); 150 mm/s lies between the two.
    assert r["velocity_amplitude"] == pytest.approx(2 * math.pi * 8 * r["displacement_amplitude"])
    assert r["velocity_rms"] == pytest.approx(r["velocity_amplitude"] / math.sqrt(2))
    assert r["velocity_rms"] < 0.150 < r["velocity_amplitude"]
    assert _checks(doc)["max-velocity"] == "fail"
    text = " ".join(p.text for p in _blocks(doc, Paragraph))
    assert "rms" in text and "A peak criterion is compared with the peak value" in text


def test_resonance_band_check_and_figures_mark_operating_point_and_band():
    # default min_resonance_margin 0.2 (common practice, no source): f_n = 10.07 Hz, 11 Hz is
    # inside the band 8.05-12.08 Hz; 14 Hz is outside.
    base = {"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
            "force_amplitude": "500 N"}
    inside = _doc({**base, "frequency": "11 Hz"})
    outside = _doc({**base, "frequency": "14 Hz"})
    assert _checks(inside)["resonance-margin"] == "fail"
    assert _checks(outside)["resonance-margin"] == "pass"
    assert any("inside the resonance band" in c.text for c in _blocks(inside, Caution))
    fig = next(b for b in _blocks(inside, Figure) if b.key == "frequency-response")
    fn = result(inside, "natural_frequency")
    band = fig.panels[0].bands[0]
    assert (band.x_low, band.x_high) == pytest.approx((0.8 * fn, 1.2 * fn))
    points = [mk for mk in fig.panels[0].markers if mk.y is not None]
    assert points[0].x == pytest.approx(11.0)
    assert points[0].y == pytest.approx(result(inside, "displacement_amplitude") * 1000)
    assert [p.y_label for p in fig.panels][2].startswith("Phase")
    # a margin criterion of 0.5 moves 14 Hz inside the band
    wide = _doc({**base, "frequency": "14 Hz"}, {"min_resonance_margin": 0.5})
    assert _checks(wide)["resonance-margin"] == "fail"


def test_unbalance_plots_against_speed_with_a_run_up_and_the_passage_row():
    doc = _doc({"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
                "unbalance": "0.0075 kg*m", "speed": "980 rpm",
                "speed_range": ["0 rpm", "1100 rpm"]}, {"max_velocity": "2.5 mm/s"})
    figs = {f.key: f for f in _blocks(doc, Figure)}
    assert set(figs) == {"frequency-response", "run-up"}
    assert "rpm" in figs["frequency-response"].x_label
    assert figs["run-up"].x_range == (0.0, 1100.0)
    assert figs["run-up"].panels[1].hlines[0][0] == pytest.approx(2.5)
    op = [mk for mk in figs["frequency-response"].panels[0].markers if mk.y is not None]
    assert op[0].x == pytest.approx(980.0)
    passage = next(c for c in _blocks(doc, Check) if c.id == "resonance-passage")
    assert "start-up" in passage.note and "resonance" in passage.note
    assert passage.description == "Passage through resonance not assessed"
    # the passage amplitude quoted is the steady state at r = 1: (m_e e/m)/(2ζ) (Thomson Ch. 3)
    assert _equation(doc, "X_res").result.value == pytest.approx(0.0075 / 850 / 0.04)


def test_no_start_up_caution_below_resonance():
    doc = _doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                "force_amplitude": "500 N", "frequency": "3 Hz"})
    assert not _blocks(doc, Caution)
    assert not any(b.name == "X_res" for b in _blocks(doc, Equation))
    assert "resonance-passage" not in _checks(doc)


# ------------------------------------------------------------------ samples and contract


def test_fan_sf2_at_980_rpm_against_hand_formulas():
    # sample_jobs/qep-102: the hand formulas of Thomson & Dahleh Ch. 3 for rotating unbalance,
    # written out here from the job's inputs.
    plugins = load_plugin_set()
    doc = compute_document(load_job(SAMPLES / "qep-102-fan-sf2.toml", plugins), plugins)
    r = _results(doc)
    m, k, zeta, u = 850.0, 330e3, 0.02, 0.0075
    w = 2 * math.pi * 980 / 60
    wn = math.sqrt(k / m)
    ratio = w / wn
    d = 1 / math.sqrt((1 - ratio**2) ** 2 + (2 * zeta * ratio) ** 2)
    x = u / m * ratio**2 * d
    f_t = u * w**2 * d * math.sqrt(1 + (2 * zeta * ratio) ** 2)
    assert r["forcing_frequency"] == pytest.approx(980 / 60, rel=1e-12)
    assert r["natural_frequency"] == pytest.approx(wn / (2 * math.pi), rel=1e-12)
    assert r["frequency_ratio"] == pytest.approx(ratio, rel=1e-12)
    assert r["displacement_amplitude"] == pytest.approx(x, rel=1e-12)
    assert r["velocity_amplitude"] == pytest.approx(w * x, rel=1e-12)
    assert r["velocity_rms"] == pytest.approx(w * x / math.sqrt(2), rel=1e-12)
    assert r["acceleration_amplitude"] == pytest.approx(w**2 * x, rel=1e-12)
    assert r["transmitted_force"] == pytest.approx(f_t, rel=1e-12)
    assert r["resonance_margin"] == pytest.approx(abs(w - wn) / wn, rel=1e-12)
    # rounded figures for the reader, worked by hand: f_n ≈ 3.136 Hz, r ≈ 5.21, X ≈ 9.16 µm
    assert (r["natural_frequency"], r["frequency_ratio"]) == pytest.approx((3.136, 5.208),
                                                                           rel=2e-4)
    assert r["displacement_amplitude"] == pytest.approx(9.161e-6, rel=2e-4)
    assert doc.status == "pass"


def test_pump_p2_in_the_resonance_band_builds_and_exits_1(tmp_path, capsys):
    # sample_jobs/qep-103: 1450 rpm = 24.17 Hz against f_n = 22.03 Hz, inside f_n(1 ± 0.2).
    out = tmp_path / "out"
    code = main(["build", str(SAMPLES / "qep-103-pump-p2-force.toml"), "--out", str(out)])
    assert code == 1, capsys.readouterr().err
    import json

    data = json.loads((out / "QEP-2417-V-103-A.results.json").read_text(encoding="utf-8"))
    calc = data["calcs"][0]
    checks = {c["id"]: c["status"] for c in calc["checks"]}
    assert checks["resonance-margin"] == "fail"
    assert calc["results"]["forcing_frequency"]["value"] == pytest.approx(1450 / 60)
    assert calc["results"]["resonance_margin"]["value"] < 0.2
    assert (out / "QEP-2417-V-103-A.pdf").read_bytes().startswith(b"%PDF")


def test_contract_and_real_pdf(tmp_path):
    # Support motion with a run-up, through the whole kit contract (builds one real PDF).
    built = assert_calc_contract(ForcedResponse(), {"inputs": {
        "mass": "50 kg", "stiffness": "49.35 kN/m", "damping_ratio": 0.05,
        "base_acceleration": "0.05 g", "frequency": "15 Hz",
        "speed_range": ["60 rpm", "1200 rpm"]},
        "criteria": {"max_displacement": "1 mm", "max_transmitted_force": "100 N"}},
        tmp_path)
    assert built is not None and built.exit_code == 0
    text = built.text()
    assert "Caution" in text and "seismic restraint" in text.lower()
    assert "rated" in text


def test_us_customary_package_plots_in_inches_and_pounds_force():
    # 1 in = 25.4 mm exactly, 1 lbf = 4.4482216152605 N (international definitions).
    calc = _calc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                  "force_amplitude": "500 N", "frequency": "8 Hz"})
    in_lbf = _calc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                    "force_amplitude": f"{500 / 4.4482216152605} lbf", "frequency": "8 Hz"})
    si = compute(make_job([calc]))
    us = compute(make_job([in_lbf], units="US"))
    us_n = compute(make_job([calc], units="US"))
    fig_si, fig_us, fig_us_n = (next(b for b in _blocks(d, Figure)) for d in (si, us, us_n))
    assert fig_us.panels[0].y_label == "Displacement X [in]"
    assert fig_us.panels[1].y_label.endswith("[lbf]")
    assert fig_si.panels[1].y_label.endswith("[N]")  # the unit the job gave the force in
    assert fig_us_n.panels[1].y_label.endswith("[N]")  # ... kept in a US package (issue 16)
    assert fig_us.panels[0].series[0].y[50] == pytest.approx(
        fig_si.panels[0].series[0].y[50] / 25.4, rel=1e-9)
    assert fig_us.panels[1].series[0].y[50] == pytest.approx(
        fig_si.panels[1].series[0].y[50] / 4.4482216152605, rel=1e-9)
    assert _results(us_n) == _results(si)  # results stay SI whatever the display


def test_rms_criterion_is_compared_with_the_rms_value():
    # Machinery vibration criteria are rms (ISO 10816/20816 family, broadband velocity rms;
    # from memory); for one tone v_rms = v_peak/√2 (definition of rms of a sinusoid).
    doc = _doc({"mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
                "force_amplitude": "500 N", "frequency": "8 Hz"},
               {"max_velocity_rms": "150 mm/s"})
    r = _results(doc)
    assert r["velocity_rms"] < 0.150 < r["velocity_amplitude"]
    assert _checks(doc)["max-velocity-rms"] == "pass"  # the peak would have failed
    check = next(c for c in _blocks(doc, Check) if c.id == "max-velocity-rms")
    assert check.value.value == pytest.approx(r["velocity_amplitude"] / math.sqrt(2))
    assert "/√2" in check.note


def test_passage_without_criterion_is_information_not_assessed():
    doc = _doc({"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
                "unbalance": "0.0075 kg*m", "speed": "980 rpm"})
    c = next(c for c in _blocks(doc, Check) if c.id == "resonance-passage")
    assert c.status == "info" and c.description == "Passage through resonance not assessed"
    assert c.limit is None


def test_passage_criterion_makes_a_check_dwell_then_transient():
    inputs = {"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
              "unbalance": "0.0075 kg*m", "speed": "980 rpm"}
    # dwell at resonance: X = U/(2ζm) (Rao §3.7, rotating unbalance at r = 1)
    dwell = _doc(inputs, {"max_passage_displacement": "100 um"})
    c = next(c for c in _blocks(dwell, Check) if c.id == "resonance-passage")
    assert c.value.value == pytest.approx(0.0075 / (2 * 0.02 * 850), rel=1e-9)
    assert c.status == "fail"  # 221 µm > 100 µm
    # a 5 s run-up passes quickly: the transient peak is well below the dwell value
    # (physical invariant of a swept linear oscillator) and above the running amplitude
    fast = _doc({**inputs, "run_up_time": "5 s"}, {"max_passage_displacement": "100 um"})
    c = next(c for c in _blocks(fast, Check) if c.id == "resonance-passage")
    r = _results(fast)
    assert r["displacement_amplitude"] < c.value.value < 0.0075 / (2 * 0.02 * 850)


def test_steady_limit_applied_to_passage_makes_a_check():
    # Rotating unbalance dwelt at resonance: X = U/(2ζm) (Rao §3.7); the flag applies the
    # steady max_displacement to it. 221 µm against 100 µm fails, against 300 µm passes.
    inputs = {"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
              "unbalance": "0.0075 kg*m", "speed": "980 rpm"}
    x_dwell = 0.0075 / (2 * 0.02 * 850)
    for limit, status in (("100 um", "fail"), ("300 um", "pass")):
        doc = _doc(inputs, {"max_displacement": limit, "passage_uses_steady_limits": True})
        c = next(c for c in _blocks(doc, Check) if c.id == "resonance-passage")
        assert c.status == status
        assert c.value.value == pytest.approx(x_dwell, rel=1e-9)
        assert c.limit.value == pytest.approx(float(limit.split()[0]) * 1e-6)
    # without a steady displacement limit the flag has nothing to apply: not assessed
    doc = _doc(inputs, {"passage_uses_steady_limits": "yes"})
    c = next(c for c in _blocks(doc, Check) if c.id == "resonance-passage")
    assert c.status == "info" and "max_displacement" in c.note


def test_steady_force_limit_applied_to_passage_makes_a_check():
    # A dwell at resonance passes F_0·T(r = 1) into the support, T(1) = √(1 + 4ζ²)/(2ζ)
    # (force transmissibility, Thomson & Dahleh §3.5); for an unbalance the force at
    # resonance is U·ω_n², so F = k·X_res·√(1 + 4ζ²) with X_res = U/(2ζm) (Rao §3.7).
    inputs = {"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
              "unbalance": "0.0075 kg*m", "speed": "980 rpm"}
    x_res = 0.0075 / (2 * 0.02 * 850)
    f_pass = 330e3 * x_res * math.sqrt(1 + (2 * 0.02) ** 2)
    wn2 = 330e3 / 850
    assert f_pass == pytest.approx(0.0075 * wn2 * math.sqrt(1 + 4 * 0.02**2) / (2 * 0.02))
    for limit, status in (("50 N", "fail"), ("100 N", "pass")):
        doc = _doc(inputs, {"max_transmitted_force": limit,
                            "passage_uses_steady_limits": "yes"})
        checks = {c.id: c for c in _blocks(doc, Check)}
        c = checks["resonance-passage-force"]
        assert c.status == status and c.value.value == pytest.approx(f_pass, rel=1e-9)
        assert "resonance-passage" not in checks  # no displacement limit: one check only
        assert _results(doc)["passage_force"] == pytest.approx(f_pass, rel=1e-9)
    # a 5 s run-up: the integrated force |k·x + c·x'| peaks below the dwell's (a finite
    # sweep never builds the full resonant amplitude: physical invariant) and above the
    # force at the running speed
    fast = _doc({**inputs, "run_up_time": "5 s"},
                {"max_transmitted_force": "100 N", "passage_uses_steady_limits": "yes"})
    running = _results(fast)["transmitted_force"]
    assert running < _results(fast)["passage_force"] < f_pass


def test_suspended_floor_near_the_forcing_is_a_failing_check():
    # 980 rpm = 16.33 Hz; a 30 Hz floor is within a factor 2 of it (factor 2: common
    # practice, no source): floor flexibility is not modelled by m·x'' + c·x' + k·x = F
    inputs = {"mass": "850 kg", "stiffness": "330 kN/m", "damping_ratio": 0.02,
              "unbalance": "0.0075 kg*m", "speed": "980 rpm", "support": "structure"}
    for floor, status in (("30 Hz", "fail"), ("40 Hz", "pass"), (None, "fail")):
        doc = _doc({**inputs, **({"support_natural_frequency": floor} if floor else {})})
        c = next(c for c in _blocks(doc, Check) if c.id == "floor-flexibility")
        assert c.status == status
    assert "floor-flexibility" not in _checks(_doc({**inputs, "support": "grade"}))


@pytest.mark.parametrize("flag,ok", [(True, True), (False, True), ("yes", True),
                                     ("maybe", False), (1, False)])
def test_the_passage_switch_reads_as_a_toml_boolean_in_check_and_schema(tmp_path, flag, ok):
    # a yes/no switch may be written as TOML true/false (TOML 1.0 booleans); `reportgen
    # check` and the JSON Schema (jsonschema, draft 2020-12) agree on what is accepted
    import tomllib

    jsonschema = pytest.importorskip("jsonschema")
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.job.schema import job_schema

    job = make_job({"plugin": "forced_response", "inputs": {
        "mass": "100 kg", "stiffness": "400 kN/m", "damping_ratio": 0.05,
        "force_amplitude": "500 N", "frequency": "8 Hz"},
        "criteria": {"passage_uses_steady_limits": flag}})
    path = tmp_path / "job.toml"
    path.write_text(job_toml(job))
    plugins = load_plugins()
    try:
        load_job(path, plugins)
        loaded = True
    except JobError as exc:
        loaded = False
        assert "passage_uses_steady_limits" in str(exc)
    schema_ok = jsonschema.Draft202012Validator(job_schema(plugins)).is_valid(
        tomllib.loads(path.read_text()))
    assert loaded == schema_ok == ok
