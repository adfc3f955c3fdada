"""The changes since the previous revision as a table in display units and plain words
(issue 15), from the two-revision pump scenario."""

from __future__ import annotations

import shutil
import subprocess

from conftest import REPO

from reportgen.cli import main

SCENARIOS = REPO / "sample_jobs" / "scenarios"


def test_changes_since_revision_a_are_a_table_in_display_units(tmp_path):
    for rev in ("A", "B"):
        shutil.copy(SCENARIOS / f"s3-pump-rev{rev}.toml", tmp_path)
    assert main(["build", str(tmp_path / "s3-pump-revA.toml"), "--out",
                 str(tmp_path / "prev")]) == 1
    job_b = tmp_path / "s3-pump-revB.toml"
    job_b.write_text(job_b.read_text(encoding="utf-8").replace(
        'units = "SI"', 'units = "SI"\nprevious_package = "prev/BD-0931-V-003-A.pdf"'),
        encoding="utf-8")
    assert main(["build", str(job_b), "--out", str(tmp_path / "out")]) == 0
    text = subprocess.run(["pdftotext", "-layout", str(tmp_path / "out" / "BD-0931-V-003-B.pdf"),
                           "-"], capture_output=True, text=True, check=True).stdout
    section = text[text.index("Changes since revision A (2026-11-20)", text.index("Contents")
                              + 200):]
    section = section[:section.index("Purpose")]
    # the stiffness input, written "30 MN/m" then "1.2 MN/m", shown in the unit the job
    # gave (the package's display unit for stiffness)
    assert "Total support stiffness" in section
    assert "30 MN/m" in section and "1.2 MN/m" in section
    # f_n = √(k/m)/2π (Thomson Ch. 2): √(30e6/900)/2π = 29.06 Hz, √(1.2e6/900)/2π = 5.812 Hz
    assert "29.06 Hz" in section and "5.812 Hz" in section and "down 80 %" in section
    assert "FAIL" in section and "PASS" in section  # the check statuses, in words
    for parser_notation in ("**", "e+0", "m/s**2", "inputs.", "+1."):
        assert parser_notation not in section
