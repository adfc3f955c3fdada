"""block_foundation as a calc type: job file to results.json against the wave-2 foundation
case F2, statics, ISO 21940-11, the mass scaling of Lysmer's analog, the samples, verify
re-runs and bad input.

F2 (tests/data/check_cases_wave2.json): Richart, Hall & Woods 1970, Ch. 7 and 10 (lumped
analogs, equivalent radii, coupled sliding and rocking); status corroborated_secondary, several
constants from memory (see test_block_foundation_method.py for each constant's status). F1 is
a circular plinth, which this calc type's inputs (length and width) do not describe; the
method's own tests hold it.
"""

from __future__ import annotations

import json
import math

import pytest
from conftest import REPO, assert_case

from reportgen.cli import main
from reportgen.testing import build_package, compute, job_toml, make_job, result
from reportgen.units import STANDARD_GRAVITY

G = STANDARD_GRAVITY
SAMPLES = REPO / "sample_jobs"
CASES = json.loads((REPO / "tests" / "data" / "check_cases_wave2.json").read_text("utf-8"))
F2 = next(c for c in CASES["cases"]
          if c["id"] == "F2_rectangular_block_equivalent_radius_coupled_rocking")

F2_JOB = {
    "block_length": "5.0 m", "block_width": "3.2 m", "block_height": "1.6 m",
    "concrete_density": "2400 kg/m^3", "machine_mass": "9000 kg", "machine_cg_height": "2.5 m",
    "machine_inertia_x": "4200 kg*m^2", "machine_inertia_y": "9500 kg*m^2",
    "machine_inertia_z": "10500 kg*m^2", "shear_wave_velocity": "180 m/s",
    "soil_density": "1900 kg/m^3", "poisson_ratio": 0.33, "unbalance": "0.45 kg*m",
    "running_speed": "1480 rpm", "force_height": "2.9 m", "shaft_axis": "y",
}
#: case key -> results.json key
F2_KEYS = {"m_total": "total_mass", "k_z": "vertical_stiffness", "D_z": "vertical_damping_ratio",
           "f_n_vertical": "vertical_natural_frequency", "k_x": "horizontal_stiffness",
           "k_rock_y": "rocking_stiffness", "f_coupled_1": "coupled_frequency_1",
           "f_coupled_2": "coupled_frequency_2", "f_n_torsion": "torsional_natural_frequency",
           "vertical_amplitude": "vertical_amplitude",
           "horizontal_amplitude_at_shaft": "horizontal_amplitude_at_force",
           "G": "shear_modulus", "unbalance_force_amplitude": "force_amplitude"}
ISSUE_KEYS = ("total_mass", "static_bearing_pressure", "vertical_stiffness",
              "vertical_damping_ratio", "vertical_natural_frequency", "vertical_amplitude",
              "horizontal_stiffness", "rocking_stiffness", "coupled_frequency_1",
              "coupled_frequency_2", "horizontal_amplitude", "torsional_natural_frequency",
              "mass_ratio", "cg_eccentricity")


def _calc(inputs: dict, criteria: dict | None = None, cid: str = "calc-1") -> dict:
    calc = {"id": cid, "plugin": "block_foundation",
            "inputs": {k: v for k, v in inputs.items() if v is not None}}
    if criteria:
        calc["criteria"] = criteria
    return calc


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    job = make_job([_calc(F2_JOB, cid="f2"),
                    _calc({**F2_JOB, "unbalance": None, "balance_grade": "G6.3",
                           "rotor_mass": "1200 kg", "machine_cg_x": "0.4 m"}, cid="graded")])
    return build_package(job, tmp_path_factory.mktemp("foundation"), html=False)


@pytest.mark.parametrize("case_key, ours", sorted(F2_KEYS.items()))
def test_f2_through_the_build(built, case_key, ours):
    # Richart, Hall & Woods 1970 Ch. 7 and 10 (case F2, corroborated_secondary)
    assert_case(built.results("f2")[ours], F2, case_key)


def test_the_issue_fixes_the_result_keys(built):
    assert set(ISSUE_KEYS) <= set(built.results("f2"))


def test_statics(built):
    # bearing pressure m·g/(L·B) and the mass ratio, by statics; the offset of the combined
    # centre of gravity m_m·x_m/(m·L) (first moment of mass)
    r = built.results("f2")
    m_b = 2400 * 5.0 * 3.2 * 1.6
    assert r["static_bearing_pressure"] == pytest.approx((m_b + 9000) * G / 16.0, rel=1e-12)
    assert r["mass_ratio"] == pytest.approx(m_b / 9000, rel=1e-12)
    assert r["cg_eccentricity"] == 0.0
    g = built.results("graded")
    assert g["cg_eccentricity"] == pytest.approx(9000 * 0.4 / ((m_b + 9000) * 5.0), rel=1e-12)


def test_balance_grade_gives_the_iso_unbalance(built):
    # ISO 21940-11: G = e·ω, so m·e = m_rotor·G/ω; G6.3 is 6.3 mm/s
    g = built.results("graded")
    w = 2 * math.pi * 1480 / 60
    assert g["unbalance"] == pytest.approx(1200 * 6.3e-3 / w, rel=1e-12)
    assert g["force_amplitude"] == pytest.approx(1200 * 6.3e-3 * w, rel=1e-12)


def test_second_method_agrees_in_the_appendix(built):
    for calc in built.data["calcs"]:
        rows = {r["quantity"]: r for r in calc["verification"]}
        assert {"vertical_natural_frequency", "coupled_frequency_1", "vertical_amplitude",
                "horizontal_amplitude"} <= set(rows)
        assert all(r["agrees"] for r in calc["verification"]), calc["id"]


def test_default_criteria_are_marked_common_practice(built):
    checks = {c["id"]: c for c in built.data["calcs"][0]["checks"]}
    for cid in ("mass-ratio", "eccentricity", "separation-vertical"):
        assert "common practice" in checks[cid]["description"], cid
    assert checks["separation-vertical"]["limit"]["value"] == 0.20
    assert checks["mass-ratio"]["limit"]["value"] == 3.0


def test_a_block_twice_as_heavy_lowers_the_vertical_frequency_by_root_two():
    # k_z = 4Gr/(1 − ν) depends on the base, not on the mass, so f = √(k/m)/2π scales as
    # 1/√m (Lysmer's analog, Richart, Hall & Woods 1970 Ch. 7): a block twice as tall on the
    # same base, carrying a machine twice as heavy, is twice the mass
    base = F2_JOB
    heavy = {**F2_JOB, "block_height": "3.2 m", "machine_mass": "18000 kg"}
    f = [result(compute(make_job([_calc(x)])), "vertical_natural_frequency")
         for x in (base, heavy)]
    assert f[0] / f[1] == pytest.approx(math.sqrt(2), rel=1e-12)


def test_undamped_limit_of_the_vertical_response():
    # far below resonance the amplitude tends to the static F0/k_z (any vibration text, e.g.
    # Thomson & Dahleh Ch. 3); a stated force at a very low speed shows it
    doc = compute(make_job([_calc({**F2_JOB, "unbalance": None, "force_amplitude": "10 kN",
                                   "running_speed": "6 rpm"})]))
    k_z = result(doc, "vertical_stiffness")
    assert result(doc, "vertical_amplitude") == pytest.approx(10e3 / k_z, rel=1e-3)


# ------------------------------------------------------------------ the samples

@pytest.fixture(scope="module")
def samples(tmp_path_factory):
    out = tmp_path_factory.mktemp("samples")
    codes = {name: main(["build", str(SAMPLES / f"{name}.toml"), "--out", str(out)])
             for name in ("qep-202-compressor-block", "qep-203-compressor-block-soft")}
    return out, codes


def test_sample_on_stiff_clay_passes_and_on_soft_soil_fails_separation(samples):
    out, codes = samples
    assert codes == {"qep-202-compressor-block": 0, "qep-203-compressor-block-soft": 1}
    soft = json.loads((out / "QEP-2440-F-203-A.results.json").read_text())
    failed = {c["id"] for c in soft["calcs"][0]["checks"] if c["status"] == "fail"}
    assert failed and all(c.startswith("separation-") for c in failed)
    stiff = json.loads((out / "QEP-2440-F-202-A.results.json").read_text())
    assert all(c["status"] != "fail" for c in stiff["calcs"][0]["checks"])


def test_sample_package_carries_the_cautions_and_rebuilds(samples, capsys):
    from pypdf import PdfReader

    out, _ = samples
    pdf = out / "QEP-2440-F-202-A.pdf"
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(pdf).pages).split())
    for words in ("site investigation", "lumped model", "local building code",
                  "maker's allowable", "G6.3"):
        assert words in text, words
    assert main(["verify", str(pdf)]) == 0
    assert "OK" in capsys.readouterr().out


# ------------------------------------------------------------------ bad input

@pytest.mark.parametrize("change, field, words", [
    ({"block_length": "0 m"}, "inputs.block_length", "greater than zero"),
    ({"embedment_depth": "1.2 m"}, "inputs.embedment_depth", "not supported"),
    ({"unbalance": None, "balance_grade": "G63"}, "inputs.balance_grade", "G6.3"),
    ({"unbalance": None, "balance_grade": "G6.3"}, "inputs.rotor_mass", "rotor's mass"),
    ({"unbalance": None}, "inputs.unbalance", "exactly one of"),
    ({"poisson_ratio": 0.7}, "inputs.poisson_ratio", "0.5"),
    ({"shear_modulus": "10 MPa"}, "inputs.shear_wave_velocity", "contradicts"),
])
def test_bad_input_exits_2_naming_file_calc_and_field(tmp_path, capsys, change, field, words):
    inputs = {k: v for k, v in {**F2_JOB, **change}.items() if v is not None}
    path = tmp_path / "block.toml"
    path.write_text(job_toml(make_job([_calc(inputs, cid="k9")])), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    line = next((ln for ln in err.splitlines() if field in ln), "")
    assert "block.toml" in err and "k9" in err and words in line, err
    assert "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.parametrize("criteria", [None, {"max_amplitude": "20 um", "limit_measure": "rms",
                                             "allowable_bearing_pressure": "100 kPa"}])
def test_calc_contract(tmp_path, criteria):
    # the plugin kit's contract: symbols and dimensions declared, every printed equation
    # reproduces its printed result, the second method agrees, the section renders
    from reportgen_plugins.block_foundation import BlockFoundation

    from reportgen.testing import assert_calc_contract

    calc = {"inputs": {**F2_JOB, "machine_cg_x": "0.3 m"}}
    if criteria:
        calc["criteria"] = criteria
    assert_calc_contract(BlockFoundation(), calc, tmp_path, pdf=False)
