"""The sample imaging-suite survey as a package (issue 19): it builds, its results and pages
say what a checker looks for, `reportgen verify` recomputes it from the embedded record, and a
folder of monitoring records builds as a set."""

from __future__ import annotations

import json
import subprocess

import numpy as np
import pytest
from conftest import REPO

from reportgen.cli import main
from reportgen.testing import job_toml, make_job

SAMPLE = REPO / "sample_jobs" / "qep-107-imaging-survey.toml"


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    out = tmp_path_factory.mktemp("survey") / "out"
    assert main(["build", str(SAMPLE), "--out", str(out), "--jobs", "1"]) == 0
    return out


def test_the_sample_survey_builds_with_every_key_of_the_issue(built):
    data = json.loads((built / "QEP-2431-V-107-A.results.json").read_text(encoding="utf-8"))
    (calc,) = data["calcs"]
    res = calc["results"]
    for key in ("overall_velocity_rms", "peak_velocity", "max_band_velocity",
                "max_band_frequency", "criterion_ratio", "governing_band_frequency"):
        assert {key, f"{key}_x", f"{key}_y", f"{key}_z"} <= set(res)
    # the chiller tone at 29.5 Hz governs z in the 31.5 Hz band (make_survey_data.py)
    assert res["governing_band_frequency"]["value"] == pytest.approx(10 ** 1.5)
    assert res["criterion_ratio"] == res["criterion_ratio_z"]
    bands = res["band_levels"]
    assert [b["nominal"] for b in bands][:4] == [1.0, 1.25, 1.6, 2.0] and len(bands) == 20
    assert bands == res["band_levels_z"]
    assert all(c["status"] in ("pass", "info") for c in calc["checks"])
    assert calc["verification"] and all(v["agrees"] for v in calc["verification"])


def test_the_pages_show_the_criterion_its_source_and_the_figures(built):
    pdf = built / "QEP-2431-V-107-A.pdf"
    text = subprocess.run(["pdftotext", "-layout", str(pdf), "-"], capture_output=True,
                          text=True, check=True).stdout
    for words in ("Criterion: VC-D", "Proc. SPIE 1619", "One-third-octave band rms velocity",
                  "minimum and maximum of each", "Narrow-band velocity spectrum",
                  "survey_imaging_suite.csv", "licensed professional practice"):
        assert words in " ".join(text.split()), words
    # the envelope keeps the figure small whatever the record's length: the whole package,
    # with the embedded 0.9 MB record (compressed), stays under 1 MB
    assert pdf.stat().st_size < 1024 * 1024


def test_verify_recomputes_the_package_from_the_embedded_record(built, capsys):
    assert main(["verify", str(built / "QEP-2431-V-107-A.pdf")]) == 0
    assert "OK" in capsys.readouterr().out


def test_a_folder_of_monitoring_records_builds_as_a_set(tmp_path):
    fs = 512.0
    t = np.arange(int(6 * fs)) / fs
    for k, peak in enumerate((2.0, 3.0), start=1):
        v = peak * np.exp(-((t - 3.0) / 0.2) ** 2) * np.cos(2 * np.pi * 25.0 * (t - 3.0))
        np.savetxt(tmp_path / f"event-{k}.csv", np.column_stack((t, v)), delimiter=",",
                   header="time [s],vertical [mm/s]", comments="", fmt="%.9g")
        job = make_job({"id": f"event-{k}", "plugin": "measured_vibration",
                        "title": f"Piling event {k}",
                        "inputs": {"data_file": f"event-{k}.csv"},
                        "criteria": {"criterion": "BS7385-2-line2"}},
                       calc_number=f"MON-{k}")
        (tmp_path / f"event-{k}.toml").write_text(job_toml(job), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["build", str(tmp_path), "--out", str(out), "--jobs", "2"]) == 0
    for k, peak in enumerate((2.0, 3.0), start=1):
        res = json.loads(next(out.glob(f"MON-{k}-*.results.json")).read_text())
        assert res["calcs"][0]["results"]["peak_velocity"]["value"] == pytest.approx(
            peak * 1e-3, rel=1e-3)
    assert (out / "register.json").is_file()

