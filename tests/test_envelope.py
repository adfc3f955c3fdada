"""Operating envelopes: checks judged over ranges, tolerances and excitation orders."""

from __future__ import annotations

import json
import math

import pytest

from reportgen.document import envelope
from reportgen.errors import JobError
from reportgen.testing import compute, make_job

STEEL_FORCED = {
    "id": "fan", "plugin": "forced_response", "title": "Fan on springs",
    "inputs": {"mass": "1000 kg", "stiffness": "1000 kN/m", "damping_ratio": 0.05,
               "force_amplitude": "100 N", "frequency": "1.3 to 9.7 Hz"},
    "criteria": {"min_resonance_margin": 0.2, "max_displacement": "10 mm"},
}


def _check(doc, cid, calc=0):
    return next(c for c in doc.sections[calc].checks if c.id == cid)


def _isolation(speed, **extra):
    inputs = {"mass": "1200 kg", "speed": speed, "mounts": 4,
              "stiffness_per_mount": "150 kN/m", "damping_ratio": 0.05}
    inputs.update(extra)
    return {"id": "iso", "plugin": "isolation", "title": "Fan isolation", "inputs": inputs,
            "criteria": {"min_efficiency": 0.9}}


def _transmissibility(r, zeta):
    # T = sqrt((1 + (2ζr)²) / ((1 − r²)² + (2ζr)²)): Thomson & Dahleh, 5th ed., §3.5
    return math.sqrt((1 + (2 * zeta * r) ** 2) / ((1 - r * r) ** 2 + (2 * zeta * r) ** 2))


@pytest.mark.parametrize("zeta", [0.05, 0.02, 0.2])
def test_resonance_peak_inside_a_range_is_found_within_half_a_per_cent(rg_plugins, zeta):
    # Peak dynamic amplification of a force-excited SDOF system, reached at
    # r = sqrt(1 − 2ζ²): D_max = 1/(2ζ·sqrt(1 − ζ²)). Thomson & Dahleh, 5th ed., Ch. 3 (§3.1).
    calc = json.loads(json.dumps(STEEL_FORCED))
    calc["inputs"]["damping_ratio"] = zeta
    doc = compute(make_job(calc), rg_plugins)
    x = _check(doc, "max-displacement")
    static = 100.0 / 1.0e6  # F0/k
    d_max = 1 / (2 * zeta * math.sqrt(1 - zeta**2))
    assert x.governing.value.value / static == pytest.approx(d_max, rel=5e-3)
    # the sweep alone would not do: the peak lies between two of its points
    fn = math.sqrt(1e6 / 1000) / (2 * math.pi)
    f_peak = fn * math.sqrt(1 - 2 * zeta**2)
    f_gov = dict(x.governing.inputs)["frequency"].value
    assert f_gov == pytest.approx(f_peak, rel=0.05)
    assert x.value.value != x.governing.value.value  # the check's value stays nominal


def test_efficiency_governs_at_the_lowest_speed_of_a_range_above_resonance(rg_plugins):
    # Above r = √2 the transmissibility falls as r rises (Thomson & Dahleh, §3.5): the
    # isolation efficiency 1 − T is lowest at the lowest speed of the range.
    doc = compute(make_job(_isolation("900 to 1800 rpm")), rg_plugins)
    eff = _check(doc, "efficiency")
    inputs = dict(eff.governing.inputs)
    assert set(inputs) == {"speed"}
    assert inputs["speed"].value == pytest.approx(15.0, rel=1e-12)  # 900 rpm in Hz
    fn = math.sqrt(4 * 150e3 / 1200) / (2 * math.pi)
    assert eff.governing.value.value == pytest.approx(
        1 - _transmissibility(15.0 / fn, 0.05), rel=1e-9)
    assert eff.governing.where == "at 900 rpm"
    # nominal is mid-range: 1350 rpm = 22.5 Hz
    assert eff.value.value == pytest.approx(1 - _transmissibility(22.5 / fn, 0.05), rel=1e-9)


def test_a_15_per_cent_stiffness_tolerance_moves_fn_by_the_square_roots(rg_plugins):
    # f_n = sqrt(k/m)/2π (Thomson & Dahleh, Ch. 2): k × 1.15 gives f_n × √1.15 exactly.
    calc = {"id": "pump", "plugin": "free_vibration", "title": "Pump",
            "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m ± 15 %",
                       "damping_ratio": 0.05, "initial_displacement": "2 mm"},
            "criteria": {"max_natural_frequency": "5 Hz", "min_natural_frequency": "2 Hz"}}
    doc = compute(make_job(calc), rg_plugins)
    fn = math.sqrt(350e3 / 1200) / (2 * math.pi)
    high = _check(doc, "max-natural-frequency").governing
    low = _check(doc, "min-natural-frequency").governing
    assert high.value.value == pytest.approx(fn * math.sqrt(1.15), rel=1e-12)
    assert low.value.value == pytest.approx(fn * math.sqrt(0.85), rel=1e-12)
    assert dict(high.inputs)["stiffness"].value == pytest.approx(350e3 * 1.15, rel=1e-12)
    assert high.where == "with stiffness + 15 %"
    assert low.where == "with stiffness − 15 %"
    env = doc.sections[0].envelope
    assert env.evaluations == 3  # nominal and the two corners of a one-input box


def test_pass_at_nominal_fail_in_the_envelope_is_a_failing_check(rg_plugins):
    calc = _isolation("600 to 1200 rpm", stiffness_per_mount="150 kN/m ± 15 %")
    doc = compute(make_job(calc), rg_plugins)
    eff = _check(doc, "efficiency")
    fn_hi = math.sqrt(4 * 150e3 * 1.15 / 1200) / (2 * math.pi)
    # nominal 900 rpm passes; 600 rpm with the stiffest springs fails (Thomson & Dahleh §3.5)
    assert eff.governing.nominal_status == "pass"
    assert eff.status == "fail" and doc.status == "fail"
    assert eff.governing.value.value == pytest.approx(
        1 - _transmissibility(10.0 / fn_hi, 0.05), rel=1e-9)
    assert eff.governing.where == "at 600 rpm with stiffness per mount + 15 %"


def test_orders_are_each_assessed(rg_plugins):
    # a half order excites at half the running speed: the efficiency is lowest there
    calc = _isolation("1500 rpm", orders=[1, 0.5, {"order": 9, "label": "blade pass"}])
    doc = compute(make_job(calc), rg_plugins)
    eff = _check(doc, "efficiency")
    fn = math.sqrt(4 * 150e3 / 1200) / (2 * math.pi)
    assert eff.governing.value.value == pytest.approx(
        1 - _transmissibility(12.5 / fn, 0.05), rel=1e-9)
    assert dict(eff.governing.inputs)["order"].value == 0.5
    assert eff.governing.where == "at order 0.5"
    assert doc.sections[0].envelope.orders == ((1.0, ""), (0.5, ""), (9.0, "blade pass"))


@pytest.mark.parametrize("orders,field,words", [
    ([0], "inputs.orders[0]", "above 0"),
    ([1, 1], "inputs.orders[1]", "twice"),
    ([{"order": 2, "colour": "red"}], "inputs.orders[0]", "unknown key 'colour'"),
    ("2", "inputs.orders", "expected a list"),
])
def test_bad_orders_are_refused_naming_the_field(rg_plugins, orders, field, words):
    with pytest.raises(JobError) as err:
        compute(make_job(_isolation("1500 rpm", orders=orders)), rg_plugins)
    problems = [(p.field, p.message) for p in err.value.problems]
    assert any(f == field and words in m for f, m in problems), problems


def test_orders_need_a_running_speed(rg_plugins):
    calc = _isolation("1500 rpm", orders=[1, 2])
    del calc["inputs"]["speed"]
    calc["inputs"]["frequency"] = "25 Hz"
    with pytest.raises(JobError) as err:
        compute(make_job(calc), rg_plugins)
    assert any(p.field == "inputs.orders" and "give speed" in p.message
               for p in err.value.problems)


def test_results_json_carries_governing_and_the_envelope(rg_build):
    calc = _isolation("600 to 1200 rpm", stiffness_per_mount="150 kN/m ± 15 %")
    built = rg_build(make_job(calc))
    assert built.exit_code == 1
    data = built.data["calcs"][0]
    eff = next(c for c in data["checks"] if c["id"] == "efficiency")
    assert eff["value"]["value"] > 0.9  # the nominal value stays the check's value
    gov = eff["governing"]
    assert gov["inputs"] == {"speed": {"value": 10.0, "unit": "Hz"},
                             "stiffness_per_mount": {"value": pytest.approx(172.5e3),
                                                     "unit": "N/m"}}
    assert data["envelope"]["inputs"]["speed"] == {
        "kind": "range", "written": "600 to 1200 rpm", "low": 10.0, "nominal": 15.0,
        "high": 20.0, "unit": "Hz"}
    # the nominal rows name no point; the rows at the governing point name its inputs
    points = [v["point"] for v in data["verification"]]
    assert {} in points and gov["inputs"] in points
    text = built.text()
    assert "Operating envelope" in text and "passes at nominal" in text


def test_without_ranges_the_envelope_is_never_entered(rg_build, monkeypatch):
    def refuse(*args, **kwargs):
        raise AssertionError("envelope evaluated for a job without ranges")

    monkeypatch.setattr(envelope, "evaluate", refuse)
    built = rg_build(make_job(_isolation("1500 rpm")))
    data = built.data["calcs"][0]
    assert "envelope" not in data
    assert all("governing" not in c for c in data["checks"])
    assert all("point" not in v for v in data["verification"])


def test_diff_reports_envelope_changes(tmp_path, capsys):
    from reportgen.cli import main
    from reportgen.testing import job_toml

    paths = []
    for name, speed in (("a", "900 rpm"), ("b", "600 to 1200 rpm"), ("c", "750 to 1200 rpm")):
        path = tmp_path / f"{name}.toml"
        path.write_text(job_toml(make_job(_isolation(speed))), encoding="utf-8")
        paths.append(str(path))
    assert main(["diff", paths[0], paths[1]]) == 0
    out = capsys.readouterr().out
    assert "iso: operating envelope added: speed 600 to 1200 rpm." in out
    assert main(["diff", paths[1], paths[2]]) == 0
    out = capsys.readouterr().out
    assert ("iso: operating envelope changed from speed 600 to 1200 rpm to speed 750 to 1200"
            " rpm.") in out
    # the efficiency governs at the lowest speed (Thomson & Dahleh §3.5), which moved
    assert "iso: check efficiency governs at" in out and "at 750 rpm (was" in out


def test_a_check_that_arises_only_near_a_peak_fails_the_calc(rg_plugins):
    # ζ = 0.004: D_max = 1/(2ζ·sqrt(1 − ζ²)) ≈ 125 (Thomson & Dahleh, Ch. 3) exceeds the
    # linear model's trusted 100 (common practice, no source) only within ±0.1 % of f_n,
    # between two sweep points; nominal (5.5 Hz) is far from it
    calc = json.loads(json.dumps(STEEL_FORCED))
    calc["inputs"]["damping_ratio"] = 0.004
    doc = compute(make_job(calc), rg_plugins)
    validity = _check(doc, "linear-validity")
    assert validity.status == "fail" and validity.value is None
    assert validity.governing.nominal_status == "pass"
    assert validity.governing.value.value == pytest.approx(
        1 / (2 * 0.004 * math.sqrt(1 - 0.004**2)), rel=5e-3)
    assert doc.status == "fail"


def test_an_envelope_too_large_to_evaluate_is_refused(rg_plugins):
    calc = _isolation("1000 to 1500 rpm", mass="1000 to 1400 kg",
                      stiffness_per_mount="140 to 160 kN/m",
                      orders=[1, *[k + 0.5 for k in range(19)]])
    with pytest.raises(JobError) as err:
        compute(make_job(calc), rg_plugins)
    assert any(p.field == "inputs" and "evaluations (at most 20000)" in p.message
               for p in err.value.problems)
