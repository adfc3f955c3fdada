"""floor_walking as a calc type: job file to results.json against the reference cases, the
sample's two revisions, verify re-runs, sensitive equipment and bad input.

Reference cases (tests/data/check_cases.json):
- I1–I4: AISC Design Guide 11, 2nd ed. (2016), Ch. 4 Eq. 4-1 with Table 4-1 tolerances and P0;
  invented numbers; status formula_confirmed_example_invented (P0 = 0.29 kN, R = 0.5 and the
  9 Hz limit seen in an excerpt; the Table 4-1 limits and 0.41 kN from memory).
- I5: P0 = R·0.83·P and the modal oscillator of mass W/(2g); status from_memory.
- I6: f_n = 0.18·√(g/(Δ_j + Δ_g)), DG11 Ch. 3; status from_memory.
- F_beam_ss_static_deflection_estimate: Thomson & Dahleh App. D simply supported beam and its
  static deflection (formula_confirmed_example_invented); 0.18·√(g/Δ) from memory of DG11.
"""

from __future__ import annotations

import math

import pytest
from conftest import REPO, assert_case

from reportgen.cli import main
from reportgen.testing import build_package, job_toml, make_job
from reportgen.units import STANDARD_GRAVITY

G = STANDARD_GRAVITY
SAMPLE_B = REPO / "sample_jobs" / "qep-201-office-floor.toml"
SAMPLE_A = REPO / "sample_jobs" / "history" / "qep-201-office-floor-revA.toml"
#: A bay whose beam is the reference beam of the F cases: EI = 1.75e7 N·m² (E = 200 GPa,
#: I = 8.75e-5 m⁴), 42 kg/m (42·g N/m² at a spacing of 1 m), L = 6 m; the girder spans 8 m.
F_BEAM = {"beam_span": "6 m", "beam_spacing": "1 m", "beam_inertia": "8.75e-5 m^4",
          "girder_span": "8 m", "elastic_modulus": "200 GPa",
          "dead_load": f"{42.0 * G!r} Pa", "live_load_present": "0 Pa", "slab_depth": "100 mm",
          "modular_ratio": 8.0, "damping_ratio": 0.03, "occupancy": "office"}


def _girder_for(total_deflection: float) -> str:
    """I_g that makes Δ_j + Δ_g equal the target for F_BEAM (Δ = 5wL⁴/(384EI), the same
    elastic formula on both members)."""
    w = 42.0 * G
    d_j = 5 * w * 6.0**4 / (384 * 200e9 * 8.75e-5)
    i_g = 5 * (w * 6.0) * 8.0**4 / (384 * 200e9 * (total_deflection - d_j))
    return f"{i_g!r} m^4"


def _direct(f: str, w: str, beta: float, occupancy: str) -> dict:
    return {"natural_frequency": f, "effective_weight": w, "damping_ratio": beta,
            "occupancy": occupancy}


CALCS = {
    "i1": _direct("5 Hz", "250 kN", 0.03, "office"),
    "i2": _direct("6 Hz", "400 kN", 0.03, "office"),
    "i3": _direct("4 Hz", "80 kN", 0.01, "outdoor_footbridge"),
    "i4": _direct("4.5 Hz", "600 kN", 0.02, "shopping_mall"),
    "i6-10mm": {**F_BEAM, "girder_inertia": _girder_for(0.010)},
    "i6-20mm": {**F_BEAM, "girder_inertia": _girder_for(0.020)},
    "lab": {"natural_frequency": "12 Hz", "effective_weight": "900 kN", "damping_ratio": 0.03,
            "criterion": "VC-A", "walking_pace": "slow"},
    "lab-resonant": {**_direct("6 Hz", "400 kN", 0.03, "office"), "criterion": "VC-A"},
}


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    job = make_job([{"id": k, "plugin": "floor_walking", "inputs": v}
                    for k, v in CALCS.items()])
    return build_package(job, tmp_path_factory.mktemp("floor"), html=False)


def _calc(built, cid: str) -> dict:
    return next(c for c in built.data["calcs"] if c["id"] == cid)


def _status(built, cid: str, check: str) -> str:
    return next(c["status"] for c in _calc(built, cid)["checks"] if c["id"] == check)


def _row(built, cid: str, quantity: str) -> dict:
    return next(r for r in _calc(built, cid)["verification"] if r["quantity"] == quantity)


@pytest.mark.parametrize("cid, case_id", [("i1", "I1_dg11_office_fails"),
                                          ("i2", "I2_dg11_office_passes"),
                                          ("i3", "I3_dg11_outdoor_footbridge"),
                                          ("i4", "I4_dg11_mall")])
def test_walking_cases_i1_to_i4(built, check_cases, cid, case_id):
    # DG11 Ch. 4 Eq. 4-1 and Table 4-1 (cases I1–I4, formula confirmed, numbers invented)
    case = check_cases[case_id]
    r = built.results(cid)
    assert_case(r["peak_acceleration_ratio"], case, "ap_over_g")
    assert_case(r["peak_acceleration"], case, "ap")
    assert_case(r["ratio_to_limit"], case, "ratio_to_limit")
    assert r["limit_acceleration_ratio"] == case["inputs"]["ao_over_g_limit"]["value"]
    assert r["excitation_force"] == case["inputs"]["Po"]["value"]  # 0.29 or 0.41 kN exactly
    passes = case["expected"]["passes"]["value"]
    assert _status(built, cid, "walking") == ("pass" if passes else "fail")


def test_the_package_fails_when_a_floor_fails(built):
    assert built.exit_code == 1 and built.data["package"]["status"] == "fail"


def test_i5_the_modal_oscillator_reproduces_the_walking_equation(built, check_cases):
    # case I5 (from memory of DG11 Ch. 2): R·0.83·P = 0.2905 kN on a mode of modal mass
    # W/(2g) gives a/g = 0.006731 for I1's floor; the verification appendix holds it
    row = _row(built, "i1", "peak_acceleration_ratio (from the walker)")
    assert_case(row["independent"], check_cases["I5_dg11_Po_derivation_check"], "ap_over_g_DG11")
    assert row["agrees"]
    exact = _row(built, "i1", "peak_acceleration_ratio")
    assert exact["rel_difference"] < 1e-9  # with P0 itself, the oscillator is Eq. 4-1 exactly


@pytest.mark.parametrize("cid, case_id", [("i6-10mm", "I6_dg11_fn_from_deflection_10mm"),
                                          ("i6-20mm", "I6_dg11_fn_from_deflection_20mm")])
def test_i6_combined_frequency_from_deflections(built, check_cases, cid, case_id):
    # DG11 Ch. 3: f_n = 0.18·√(g/(Δ_j + Δ_g)) (case I6, from memory)
    r = built.results(cid)
    case = check_cases[case_id]
    assert r["beam_deflection"] + r["girder_deflection"] == pytest.approx(
        case["inputs"]["Delta_total"]["value"], rel=1e-12)
    assert_case(r["natural_frequency"], case, "f_n")


def test_f_case_beam_in_the_bay(built, check_cases):
    # the reference beam (Thomson & Dahleh App. D; F_beam_ss_static_deflection_estimate):
    # its midspan deflection under its own weight, the guide's 0.18·√(g/Δ) frequency, and the
    # second method's finite-element frequency equal to the exact (π/2)·√(EI/(m L⁴))
    case = check_cases["F_beam_ss_static_deflection_estimate"]
    r = built.results("i6-10mm")
    assert_case(r["beam_deflection"], case, "delta_midspan")
    assert_case(r["beam_frequency"], case, "f1_DG11_0.18sqrt(g/delta)")
    row = _row(built, "i6-10mm", "beam_frequency")
    assert_case(row["independent"], case, "f1_exact")
    assert_case(row["independent"], check_cases["F_beam_simply_supported"], "f_1")
    assert row["agrees"]


def test_bay_route_keys_and_a_grillage_within_three_per_cent(built):
    r = built.results("i6-10mm")
    for key in ("natural_frequency", "effective_weight", "peak_acceleration",
                "peak_acceleration_ratio", "limit_acceleration_ratio", "ratio_to_limit",
                "beam_frequency", "girder_frequency", "beam_deflection", "girder_deflection"):
        assert key in r, key
    row = _row(built, "i6-10mm", "natural_frequency")
    assert row["agrees"] and row["rel_difference"] < 0.03


# ------------------------------------------------------------------ the sample's revisions

@pytest.fixture(scope="module")
def revisions(tmp_path_factory):
    root = tmp_path_factory.mktemp("revisions")
    out_a = root / "jobs" / "prev"
    assert main(["build", str(SAMPLE_A), "--out", str(out_a)]) == 1
    text = SAMPLE_B.read_text(encoding="utf-8")
    head, sep, rest = text.partition("\n[[package.revision_history]]")
    job_b = root / "jobs" / "floor.toml"
    job_b.write_text(head.rstrip("\n") + '\nprevious_package = "prev/QEP-2431-S-201-A.pdf"\n'
                     + sep + rest, encoding="utf-8")
    code_b = main(["build", str(job_b), "--out", str(root / "b")])
    return root, code_b


def test_sample_revision_a_fails_and_b_passes_with_a_stiffer_girder(revisions):
    import json

    from pypdf import PdfReader

    root, code_b = revisions
    a = json.loads((root / "jobs" / "prev" / "QEP-2431-S-201-A.results.json").read_text())
    b = json.loads((root / "b" / "QEP-2431-S-201-B.results.json").read_text())
    ra, rb = a["calcs"][0], b["calcs"][0]
    assert [c["status"] for c in ra["checks"] if c["id"] == "walking"] == ["fail"]
    assert code_b == 0 and all(c["status"] != "fail" for c in rb["checks"])
    # the stiffer girder raises f_n and lowers the girder's deflection, the beams unchanged
    assert rb["results"]["girder_deflection"]["value"] < ra["results"]["girder_deflection"][
        "value"]
    assert rb["results"]["beam_deflection"] == ra["results"]["beam_deflection"]
    assert (rb["results"]["natural_frequency"]["value"]
            > ra["results"]["natural_frequency"]["value"])
    text = " ".join(p.extract_text() for p in PdfReader(root / "b" / "QEP-2431-S-201-B.pdf")
                    .pages)
    assert "Changes since revision A" in text and "Girder moment of inertia" in text
    for words in ("structural engineer of record", "few_components", "Table 4-1"):
        assert words in " ".join(text.split()), words


def test_verify_rebuilds_the_sample_package(revisions, capsys):
    root, _ = revisions
    assert main(["verify", str(root / "b" / "QEP-2431-S-201-B.pdf")]) == 0
    assert "OK" in capsys.readouterr().out


# ------------------------------------------------------------------ sensitive equipment

def test_sensitive_equipment_on_a_high_frequency_floor(built):
    # a 12 Hz floor is above 4 × 1.25 Hz (slow walking): the footstep transient; the effective
    # impulse (f_s^1.43/f_n^1.30)·Q/17.8 with Q = 747 N and v_rms of a decaying sinusoid over a
    # step (Willford, Field & Young 2007, as used by DG11 2nd ed. Ch. 6 for high-frequency
    # floors; from memory), hand-computed here; VC-A is 50 µm/s (criteria library, recalled)
    r = built.results("lab")
    f_s, f_n, beta = 75 / 60, 12.0, 0.03
    impulse = f_s**1.43 / f_n**1.30 * 747.3 / 17.8
    v_p = impulse / (900e3 / (2 * G))
    x = 4 * math.pi * beta * f_n / f_s
    v_rms = v_p / math.sqrt(2) * math.sqrt((1 - math.exp(-x)) / x)
    assert r["velocity_rms"] == pytest.approx(v_rms, rel=1e-12)
    assert r["criterion_velocity"] == pytest.approx(50e-6, rel=1e-12)
    assert "peak_acceleration_ratio" not in r  # no comfort check was asked for above 9 Hz
    assert _row(built, "lab", "velocity_rms")["agrees"]
    assert _status(built, "lab", "equipment") == "pass"


def test_sensitive_equipment_on_a_resonant_floor_fails(built):
    # 6 Hz is within 4 × 1.667 Hz: the resonant response of Eq. 4-1 in velocity,
    # v_rms = a_p/(2π f_n)/√2 with a_p = 0.29 kN·e^(−0.35·6)·g/(β W) (DG11 Eq. 4-1, case I2)
    r = built.results("lab-resonant")
    a_p = 290 * math.exp(-0.35 * 6) * G / (0.03 * 400e3)
    assert r["velocity_rms"] == pytest.approx(a_p / (2 * math.pi * 6) / math.sqrt(2), rel=1e-12)
    assert _status(built, "lab-resonant", "walking") == "pass"
    assert _status(built, "lab-resonant", "equipment") == "fail"
    assert _row(built, "lab-resonant", "velocity_rms")["agrees"]


# ------------------------------------------------------------------ bad input

@pytest.mark.parametrize("inputs, field, words", [
    ({**F_BEAM, "girder_inertia": "1e-4 m^4", "beam_span": "0 m"}, "inputs.beam_span",
     "greater than zero"),
    (_direct("12 Hz", "300 kN", 0.03, "office"), "inputs.natural_frequency",
     "above the 9 Hz limit"),
    ({**F_BEAM, "girder_inertia": "1 m^4"}, "inputs.girder_inertia", "above the 9 Hz limit"),
    (_direct("5 Hz", "300 kN", 0.03, "warehouse"), "inputs.occupancy", "office"),
    ({"natural_frequency": "5 Hz", "effective_weight": "300 kN"}, "inputs.occupancy",
     "give an occupancy"),
    ({**_direct("5 Hz", "300 kN", 0.03, "office"), "beam_span": "9 m"},
     "inputs.natural_frequency", "not both"),
])
def test_bad_input_exits_2_naming_file_calc_and_field(tmp_path, capsys, inputs, field, words):
    path = tmp_path / "floor.toml"
    path.write_text(job_toml(make_job([{"id": "bay-x", "plugin": "floor_walking",
                                        "inputs": inputs}])), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    line = next((ln for ln in err.splitlines() if field in ln), "")
    assert "floor.toml" in err and "bay-x" in err and words in line, err
    assert "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())



@pytest.mark.parametrize("inputs", [CALCS["i2"], CALCS["i6-10mm"], CALCS["lab"]])
def test_calc_contract(tmp_path, inputs):
    # the plugin kit's contract: symbols and dimensions declared, every printed equation
    # reproduces its printed result, the second method agrees, the section renders
    from reportgen_plugins.floor_walking import FloorWalking

    from reportgen.testing import assert_calc_contract

    assert_calc_contract(FloorWalking(), {"inputs": inputs}, tmp_path, pdf=False)


def test_a_stated_tolerance_among_the_criteria(check_cases):
    # case I1 with a0/g written as a criterion instead of an occupancy: the same a_p/g
    # (DG11 Eq. 4-1; P0 falls back to the floor's 0.29 kN)
    from reportgen.testing import compute_calc, result

    doc = compute_calc("floor_walking", {"natural_frequency": "5 Hz",
                                         "effective_weight": "250 kN", "damping_ratio": 0.03},
                       {"max_acceleration_ratio": 0.005})
    case = check_cases["I1_dg11_office_fails"]
    assert_case(result(doc, "peak_acceleration_ratio"), case, "ap_over_g")
    assert_case(result(doc, "ratio_to_limit"), case, "ratio_to_limit")
