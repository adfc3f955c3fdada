"""Firm templates: a firm's cover, header, stylesheet and logo override the built-in ones.

Anything the firm's folder does not hold falls back to the built-in templates.
"""

from __future__ import annotations

import re
import shutil
import tomllib
from pathlib import Path

import pytest
from conftest import REPO
from pypdf import PdfReader

from reportgen import cli
from reportgen.testing import job_toml, make_job

SAMPLES = REPO / "sample_jobs"
THEME = SAMPLES / "quillmoor_theme"


def pages(pdf: Path) -> list[str]:
    return [re.sub(r"\s+", " ", p.extract_text() or "") for p in PdfReader(pdf).pages]


def build(args: list[str]) -> Path:
    assert cli.main(["build", *args]) == 0
    out = Path(args[args.index("--out") + 1])
    (pdf,) = out.glob("*.pdf")
    return pdf


@pytest.fixture(scope="module")
def branded(tmp_path_factory) -> list[str]:
    out = tmp_path_factory.mktemp("branded")
    return pages(build([str(SAMPLES / "qep-106-branded.toml"), "--out", str(out)]))


def test_sample_job_names_the_theme():
    job = tomllib.loads((SAMPLES / "qep-106-branded.toml").read_text(encoding="utf-8"))
    assert job["package"]["template_dir"] == "quillmoor_theme"
    assert {p.name for p in THEME.iterdir()} >= {"cover.html", "running.html", "firm.css",
                                                 "logo.svg"}


def test_firm_cover_replaces_the_built_in_one(branded):
    cover = branded[0]
    assert "Quiet structures, steady machines." in cover  # only in the firm's cover.html
    assert "VIBRATION AND DYNAMICS GROUP" in cover.upper()
    # what every cover must keep
    for text in ("All 2 design checks pass", "FIT TO ISSUE. Checked and approved",
                 "Engineer's seal or stamp", "Prepared", "T. Marsh", "Checked",
                 "L. Okafor-Reid", "Approved", "S. Brannock", "QEP-2417-V-106",
                 "do not replace local codes"):
        assert text in cover, text
    assert "Calculation package · Vibration".upper() not in cover.upper()  # built-in band


def test_firm_header_and_footer_on_every_later_page(branded):
    for text in branded[1:]:
        assert "QEP | Job QEP-2417 · Calc QEP-2417-V-106 · Rev. A" in text
        assert "Ferrow Quay Data Centre, plant room B" in text
        assert "QEP calc package form CP-1" in text  # firm.css footer
        assert re.search(r"Page \d+ of \d+", text)


def test_templates_not_overridden_come_from_the_built_ins(branded):
    text = " ".join(branded)
    for heading in ("Revision history", "Contents", "Appendix A", "Cautions and limitations"):
        assert heading in text, heading


def test_cli_flag_overrides_the_job_and_a_partial_theme_falls_back(tmp_path):
    shutil.copytree(THEME, tmp_path / "quillmoor_theme")
    theme = tmp_path / "partial_theme"
    theme.mkdir()
    (theme / "firm.css").write_text(
        '@page { @bottom-left { content: "Partial theme footer"; } }\n', encoding="utf-8")
    job = tmp_path / "job.toml"
    job.write_text(job_toml(make_job(
        {"plugin": "free_vibration", "title": "Mounted pump",
         "inputs": {"mass": "100 kg", "stiffness": "400 kN/m"}}, firm="Test Firm",
        template_dir="quillmoor_theme")), encoding="utf-8")
    pdf = build([str(job), "--out", str(tmp_path / "out"), "--template-dir", str(theme)])
    text = pages(pdf)
    assert "Partial theme footer" in text[1]  # the flag's stylesheet applies ...
    assert "Quiet structures" not in text[0]  # ... not the job's theme ...
    assert "CALCULATION PACKAGE · VIBRATION" in text[0].upper()  # ... the cover is built in
    assert "Engineer's seal or stamp" in text[0]
    assert "Job T-1 · Calc T-1-001 · Rev. A" in text[1] and "QEP |" not in text[1]


def test_a_missing_theme_folder_is_refused(tmp_path, capsys):
    job = tmp_path / "job.toml"
    shutil.copy(SAMPLES / "qep-106-branded.toml", job)
    assert cli.main(["check", str(job)]) == 2  # quillmoor_theme is not beside this copy
    err = capsys.readouterr().err
    assert "template_dir" in err and "quillmoor_theme" in err
    assert cli.main(["build", str(job), "--out", str(tmp_path / "out"),
                     "--template-dir", str(tmp_path / "nowhere")]) == 2
    assert "--template-dir is not a folder" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_wheel_package_data_covers_the_theme():
    # pyproject ships reportgen_samples "*.toml" and "*/*"; every theme file must match
    meta = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))
    patterns = meta["tool"]["setuptools"]["package-data"]["reportgen_samples"]
    for path in THEME.iterdir():
        rel = path.relative_to(SAMPLES)
        assert any(rel.match(p) for p in patterns), rel


def test_logo_is_self_contained_vector():
    from reportgen.render.logo import firm_logo

    svg = (THEME / "logo.svg").read_text(encoding="utf-8")
    assert "<image" not in svg and "href" not in svg and "<script" not in svg
    assert firm_logo(THEME).startswith("data:image/svg+xml;base64,")
