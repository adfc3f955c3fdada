"""The command line end to end: help, version, plugins, build, exit codes, the demo set."""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from reportgen import __version__
from reportgen.cli import main
from reportgen.testing import job_toml, make_job

SCRIPT = Path(sys.executable).with_name("reportgen")
COMMANDS = ["build", "demo", "plugins", "check", "schema", "verify", "extract", "diff",
            "new-plugin"]


def _run(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    cmd = [str(SCRIPT)] if SCRIPT.exists() else [sys.executable, "-m", "reportgen.cli"]
    return subprocess.run([*cmd, *args], capture_output=True, text=True, cwd=cwd, timeout=600)


def test_version_and_help(capsys):
    with pytest.raises(SystemExit) as e:
        main(["--version"])
    assert e.value.code == 0 and __version__ in capsys.readouterr().out
    for cmd in COMMANDS:
        with pytest.raises(SystemExit) as e:
            main([cmd, "--help"])
        assert e.value.code == 0
        assert "usage: reportgen " + cmd in capsys.readouterr().out


def test_plugins_lists_calc_types_with_package_version_and_inputs(capsys):
    assert main(["plugins"]) == 0
    out = capsys.readouterr().out
    assert "free_vibration  0.1.0" in out and "package reportgen" in out
    assert "stiffness" in out and "[N/m]" in out


def _job(tmp_path: Path, **inputs) -> Path:
    calc = {"id": "pump-p1-free", "plugin": "free_vibration", "title": "Pump P1",
            "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", **inputs}}
    path = tmp_path / "job.toml"
    path.write_text(job_toml(make_job([calc])), encoding="utf-8")
    return path


def test_bad_dimension_names_file_calc_field_and_expected_unit(tmp_path, capsys):
    job = _job(tmp_path, stiffness="350 kg")
    out = tmp_path / "out"
    assert main(["build", str(job), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert str(job) in err and "pump-p1-free" in err and "inputs.stiffness" in err
    assert "expected stiffness" in err and "kN" in err
    assert "Traceback" not in err
    assert not out.exists()


def test_build_one_job_writes_pdf_and_results(tmp_path, capsys):
    job = _job(tmp_path, damping_ratio=0.05)
    out = tmp_path / "out"
    assert main(["build", str(job), "--out", str(out)]) == 0
    pdf, res = out / "T-1-001-A.pdf", out / "T-1-001-A.results.json"
    assert pdf.read_bytes().startswith(b"%PDF-")
    data = json.loads(res.read_text())
    assert data["format"] == "reportgen.results/1"
    r = data["calcs"][0]["results"]
    # f_n = sqrt(k/m)/2pi (Thomson & Dahleh Ch. 2)
    assert r["natural_frequency"] == {"value": pytest.approx(math.sqrt(350e3 / 1200) / 2 / math.pi),
                                      "unit": "Hz"}
    assert r["angular_natural_frequency"]["unit"] == "rad/s"
    assert r["static_deflection"]["unit"] == "m"
    assert r["damping_ratio"]["unit"] == "1"
    # a second build of the same calc number and revision needs --force
    before = pdf.read_bytes()
    assert main(["build", str(job), "--out", str(out)]) == 2
    assert "--force" in capsys.readouterr().err
    assert pdf.read_bytes() == before
    assert main(["build", str(job), "--out", str(out), "--force"]) == 0


def test_internal_errors_never_show_a_traceback_without_debug(tmp_path, capsys, monkeypatch):
    import reportgen.cli.commands as commands

    def boom(*_a, **_k):
        raise RuntimeError("simulated bug")

    monkeypatch.setattr(commands, "list_plugins", boom)
    assert main(["plugins"]) == 3
    err = capsys.readouterr().err
    assert "simulated bug" in err and "Traceback" not in err and "--debug" in err
    assert main(["--debug", "plugins"]) == 3
    assert "Traceback" in capsys.readouterr().err


def test_demo_end_to_end(tmp_path):
    """The README's first line, after install: build the sample set, read it back."""
    from pypdf import PdfReader

    proc = _run("demo", "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert proc.returncode in (0, 1), proc.stderr  # the demo set holds failing designs
    assert "Traceback" not in proc.stderr
    out = tmp_path / "out"
    pdfs = sorted(out.glob("*.pdf"))
    packages = [p for p in pdfs if p.name != "register.pdf"]
    assert len(packages) >= 1 and (out / "register.json").is_file()
    statuses = []
    for pdf in packages:
        data = json.loads(pdf.with_suffix("").with_suffix(".results.json").read_text()
                          if pdf.with_suffix(".results.json").exists() else
                          (out / (pdf.stem + ".results.json")).read_text())
        text = " ".join(p.extract_text() for p in PdfReader(pdf).pages)
        assert data["package"]["calc_number"] in text
        for calc in data["calcs"]:
            assert calc["id"] in text
        statuses.append(data["package"]["status"])
    assert proc.returncode == (1 if "fail" in statuses else 0)
    from test_layout import lone_pages  # every demo page carries a body (issue 15)

    assert not [p for pdf in packages for p in lone_pages(pdf)]
    pump = json.loads((out / "QEP-2417-V-101-B.results.json").read_text())
    fn = pump["calcs"][0]["results"]["natural_frequency"]["value"]
    assert fn == pytest.approx(math.sqrt(350e3 / 1200) / (2 * math.pi), rel=1e-12)
