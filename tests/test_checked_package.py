"""A checked package: check summary, verification appendix, review states, --final,
the self-check of the written PDF, software identification and the calc set register."""

from __future__ import annotations

import hashlib
import json
import re
import types
from pathlib import Path

import pytest

from reportgen import CalcType, InputSpec, Sheet, VerificationRow, hookimpl
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import main
from reportgen.errors import RenderError
from reportgen.render.selfcheck import self_check
from reportgen.testing import build_package, compute, job_toml, make_job

TESTS = Path(__file__).resolve().parent

PUMP = {"id": "pump-p1", "title": "Pump P1 on springs", "plugin": "free_vibration",
        "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05},
        # f_n = sqrt(350e3/1200)/2pi = 2.718 Hz (Thomson Ch. 2): a 2 Hz limit fails
        "criteria": {"max_natural_frequency": "2 Hz", "max_static_deflection": "50 mm"}}


def _write(tmp_path: Path, job: dict, name: str = "job.toml") -> Path:
    path = tmp_path / name
    path.write_text(job_toml(job), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def failing(tmp_path_factory):
    folder = tmp_path_factory.mktemp("failing")
    return build_package(make_job([PUMP]), folder)


def test_failing_check_exit_1_and_summary_shows_fail(failing):
    assert failing.exit_code == 1
    text = failing.text()
    assert "1 of 2 design checks fail" in text
    assert "FAIL" in text and "PASS" in text
    summary = text[text.index("Summary of results and design checks"):]
    assert "Natural frequency not above the maximum" in summary
    assert failing.data["package"]["status"] == "fail"
    checks = {c["id"]: c["status"] for c in failing.data["calcs"][0]["checks"]}
    assert checks["max-natural-frequency"] == "fail"
    assert checks["max-static-deflection"] == "pass"  # 33.6 mm <= 50 mm


def test_verification_appendix_lists_every_comparison(failing):
    text = failing.text()
    appendix = text[text.index("Independent verification", text.index("Appendix D")):]
    assert "solve_ivp" in appendix and "eigenvalues" in appendix
    rows = failing.data["calcs"][0]["verification"]
    assert rows and all(r["agrees"] for r in rows)


def test_software_identification_names_program_plugins_and_sources(failing):
    text = failing.text()
    section = text[text.index("Software identification", text.index("Appendix D")):]
    assert "reportgen" in section and "free_vibration" in section
    assert "Thomson" in section and "A1_sdof_free_underdamped" in section


def test_printed_key_results_match_results_json(failing):
    # f_n printed to 4 significant figures equals the SI value in results.json.
    fn = failing.data["calcs"][0]["results"]["natural_frequency"]["value"]
    assert f"{fn:.4g}" in failing.text()


# ---------------------------------------------------------------- verification off


class _OffByOne(CalcType):
    name = "test_off_verification"
    title = "A calc whose second method disagrees"
    version = "9.9.9"
    inputs = (InputSpec(name="mass", symbol="m", description="Mass", dimension="mass"),)

    def compute(self, ctx):
        s = Sheet(self.inputs)
        s.equation("w", "m*g_n", "force", key="weight", key_result=True, m=ctx.inputs["mass"],
                   g_n=9.80665)
        return s.output("Weight")

    def verify(self, ctx, output):
        w = output.results[0].quantity.value
        return [VerificationRow(quantity="weight", closed_form=w, independent=w * 1.01,
                                tolerance=1e-6, method="deliberately wrong")]


class _NoVerify(_OffByOne):
    name = "test_no_verification"

    def verify(self, ctx, output):
        return None


def _test_plugins():
    module = types.SimpleNamespace(
        reportgen_register_calc_types=hookimpl(lambda: [_OffByOne(), _NoVerify()]))
    return load_plugin_set(extra=[("test_plugins", module)])


def test_disagreeing_verification_is_exit_3_and_writes_nothing(tmp_path):
    job = make_job([{"plugin": "test_off_verification", "inputs": {"mass": "10 kg"}}])
    plugins = _test_plugins()
    from reportgen.errors import VerificationError

    with pytest.raises(VerificationError) as err:
        build_package(job, tmp_path, plugins=plugins)
    assert err.value.exit_code == 3
    assert "test_off_verification" in str(err.value) and "calc-1" in str(err.value)
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())


def test_calc_without_verification_is_marked_not_verified(tmp_path):
    job = make_job([{"plugin": "test_no_verification", "inputs": {"mass": "10 kg"}}])
    built = build_package(job, tmp_path, plugins=_test_plugins())
    text = built.text()
    assert "not independently verified" in text.lower()
    assert "NOT VERIFIED" in text
    assert built.data["calcs"][0]["verification"] is None


# ---------------------------------------------------------------- review states

WATERMARKS = {"preliminary": "PRELIMINARY – NOT CHECKED", "checked": "CHECKED – NOT APPROVED"}
PASSING = {**PUMP, "criteria": {"max_natural_frequency": "5 Hz"}}


@pytest.mark.parametrize("state,people", [
    ("preliminary", {}),
    ("checked", {"checked_by": "L. Okafor-Reid"}),
    ("approved", {"checked_by": "L. Okafor-Reid", "approved_by": "S. Brannock"}),
])
def test_review_state_marks(tmp_path, state, people):
    built = build_package(make_job([PASSING], **people), tmp_path)
    text = built.text()
    assert built.data["package"]["review_state"] == state
    for other, mark in WATERMARKS.items():
        if other == state:
            # on the cover, and in the mark on every page (diagonal graphic + footer text)
            assert text.count(mark) >= 1 + len(re.findall(r"Page \d+ of", text))
        else:
            assert mark not in text
    assert "Engineer's seal or stamp" in text


def test_final_refuses_unchecked_and_failing_packages(tmp_path, capsys):
    out = tmp_path / "out"
    unchecked = _write(tmp_path, make_job([PASSING]), "unchecked.toml")
    assert main(["build", str(unchecked), "--out", str(out), "--final"]) == 2
    assert "not been checked" in capsys.readouterr().err
    failing = _write(tmp_path, make_job([PUMP], checked_by="L. Okafor-Reid",
                                        approved_by="S. Brannock"), "failing.toml")
    assert main(["build", str(failing), "--out", str(out), "--final"]) == 2
    assert "design checks fail" in capsys.readouterr().err
    assert not out.exists() or not any(out.iterdir())
    good = _write(tmp_path, make_job([PASSING], checked_by="L. Okafor-Reid",
                                     approved_by="S. Brannock"), "good.toml")
    assert main(["build", str(good), "--out", str(out), "--final"]) == 0
    assert (out / "T-1-001-A.pdf").is_file()


# ---------------------------------------------------------------- self-check


def test_self_check_catches_a_pdf_that_disagrees_with_the_document(failing):
    import dataclasses

    doc = compute(make_job([PUMP]))
    sec = doc.sections[0]
    rows = tuple(dataclasses.replace(r, quantity=dataclasses.replace(r.quantity, value=9.87654))
                 if r.key == "natural_frequency" else r for r in sec.results)
    tampered = dataclasses.replace(doc, sections=(dataclasses.replace(sec, results=rows),))
    with pytest.raises(RenderError, match="natural_frequency"):
        self_check(failing.pdf.read_bytes(), tampered)
    self_check(failing.pdf.read_bytes(), doc)  # the honest document passes


# ---------------------------------------------------------------- register


def test_folder_build_writes_register(tmp_path, capsys):
    jobs = tmp_path / "jobs"
    jobs.mkdir()
    _write(jobs, make_job([PASSING], calc_number="T-1-001"), "a.toml")
    _write(jobs, make_job([PUMP], calc_number="T-1-002"), "b.toml")
    out = tmp_path / "out"
    code = main(["build", str(jobs), "--out", str(out), "--jobs", "1"])
    assert code == 1  # one package has a failing check
    reg = json.loads((out / "register.json").read_text())
    rows = {r["calc_number"]: r for r in reg["packages"]}
    assert set(rows) == {"T-1-001", "T-1-002"}
    for number, row in rows.items():
        pdf = out / row["file"]
        assert row["sha256"] == hashlib.sha256(pdf.read_bytes()).hexdigest()
        data = json.loads((out / f"{number}-A.results.json").read_text())
        assert row["status"] == data["package"]["status"]
        assert row["checks_failed"] == data["package"]["checks_failed"]
        assert row["review_state"] == "preliminary"
    assert rows["T-1-002"]["status"] == "fail" and rows["T-1-001"]["status"] == "pass"
    from reportgen.render.selfcheck import extract_text

    text = extract_text((out / "register.pdf").read_bytes())[1]
    assert "T-1-001" in text and "T-1-002" in text and "FAIL" in text


# ---------------------------------------------------------------- meta


def test_every_declared_verification_case_is_exercised_by_the_plugin_tests():
    plugins = load_plugin_set()
    for name, reg in plugins.calcs.items():
        if reg.package != "reportgen":
            continue
        test_file = TESTS / f"test_{name}.py"
        assert test_file.is_file(), f"built-in calc type {name} has no tests/test_{name}.py"
        text = test_file.read_text(encoding="utf-8")
        for case in reg.calc_type.verification_cases:
            assert case.id in text, f"{name}: declared case {case.id} is not in {test_file.name}"
        assert reg.calc_type.sources, f"{name} declares no sources"
