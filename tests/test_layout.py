"""Layout of the checker scenarios (issue 15): no wrapped unit cell, no page whose body is a lone
table row or heading, no overlapping or clipped plot text, and at most 12 pages for a
package of two or three single-degree-of-freedom calcs."""

from __future__ import annotations

import re
import subprocess
import tomllib
from pathlib import Path

import matplotlib.pyplot as plt
import pytest
from conftest import REPO

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import main
from reportgen.document.compute import compute_document
from reportgen.job.load import load_job
from reportgen.model import Figure
from reportgen.render.figures import draw, text_overlaps

SAMPLES = REPO / "sample_jobs"
SCENARIOS = sorted((SAMPLES / "scenarios").glob("*.toml"))
JOBS = sorted(SAMPLES.glob("*.toml")) + SCENARIOS
SDOF = {"free_vibration", "forced_response", "isolation"}


@pytest.fixture(scope="module")
def built(tmp_path_factory) -> dict[Path, Path]:
    # the scenarios hold every built-in SDOF calc type, US and SI units, cited sources,
    # two revisions and accepted checks; the demo set is built by its own tests
    out = tmp_path_factory.mktemp("layout")
    assert main(["build", str(SAMPLES / "scenarios"), "--out", str(out)]) in (0, 1)
    pdfs = {}
    for job in SCENARIOS:
        pkg = tomllib.loads(job.read_text(encoding="utf-8"))["package"]
        pdfs[job] = out / f"{pkg['calc_number']}-{pkg['revision']}.pdf"
    return pdfs


def _pages(pdf: Path) -> list[str]:
    text = subprocess.run(["pdftotext", "-layout", str(pdf), "-"], capture_output=True,
                          text=True, check=True).stdout
    return text.split("\f")[:-1]


def test_no_unit_cell_wraps(built):
    # a unit broken at its slash leaves a line ending in "/" (mm/ s, kN/ m)
    for pdf in built.values():
        for i, page in enumerate(_pages(pdf), start=1):
            for line in page.splitlines():
                assert not re.search(r"\b(mm|kN|MN|m|N|lbf|in|µm|kg|rad)/\s*$", line), (
                    f"{pdf.name} page {i}: wrapped unit in {line.strip()!r}")


def lone_pages(pdf: Path) -> list[str]:
    """Pages whose body (without the running header and footer) holds at most two lines:
    a lone table row, a heading, or the tail of the page before."""
    found = []
    for i, page in enumerate(_pages(pdf), start=1):
        lines = [ln for ln in page.splitlines() if ln.strip()]
        body = [ln for ln in lines[1:] if not re.search(r"Page \d+ of \d+", ln)
                and "calc package" not in ln]
        if len(body) <= 2:
            found.append(f"{pdf.name} page {i} holds only {body!r}")
    return found


def test_no_page_body_is_a_lone_row_or_heading(built):
    for pdf in built.values():
        assert not lone_pages(pdf)


def test_no_overlapping_or_clipped_plot_text():
    plugins = load_plugin_set()
    for job in JOBS:
        doc = compute_document(load_job(job, plugins), plugins)
        for s in doc.sections:
            for b in s.blocks:
                if isinstance(b, Figure):
                    f = draw(b)
                    try:
                        assert not text_overlaps(f), (job.name, b.key, text_overlaps(f))
                    finally:
                        plt.close(f)


def test_two_or_three_sdof_calcs_fit_in_twelve_pages(built):
    for job, pdf in built.items():
        calcs = tomllib.loads(job.read_text(encoding="utf-8"))["calc"]
        if len(calcs) <= 3 and {c["plugin"] for c in calcs} <= SDOF:
            assert len(_pages(pdf)) <= 12, f"{pdf.name}: {len(_pages(pdf))} pages"
