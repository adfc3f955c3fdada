"""Accepted deviations and review states (issue 15): a failing check stays a failing check;
its acceptance is recorded, shown and never hides it."""

from __future__ import annotations

from pathlib import Path

import pytest

from reportgen.cli import main
from reportgen.testing import build_package, job_toml, make_job

PUMP = {"id": "pump-p1", "title": "Pump P1 on springs", "plugin": "free_vibration",
        "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05},
        # f_n = √(350e3/1200)/2π = 2.718 Hz (Thomson Ch. 2): fails a 2 Hz maximum
        "criteria": {"max_natural_frequency": "2 Hz"}}
SIGNED = {"checked_by": "L. Okafor-Reid", "approved_by": "S. Brannock"}
ACCEPT = {"calc": "pump-p1", "check": "max-natural-frequency",
          "justification": "Plant on grade; 2.7 Hz is acceptable for this duty.",
          "accepted_by": "S. Brannock", "date": "2026-12-02"}


def _write(tmp_path: Path, job: dict) -> Path:
    path = tmp_path / "job.toml"
    path.write_text(job_toml(job), encoding="utf-8")
    return path


def test_accepted_failing_check_is_fit_to_issue_but_still_fails(tmp_path):
    built = build_package(make_job([PUMP], deviations=[ACCEPT], **SIGNED), tmp_path)
    assert built.exit_code == 1  # an accepted failing check is still a failing check
    pkg = built.data["package"]
    assert pkg["checks_failed"] == 1 and pkg["checks_failed_unaccepted"] == 0
    assert pkg["fit_to_issue"] is True
    assert pkg["deviations"][0]["justification"] == ACCEPT["justification"]
    assert built.data["calcs"][0]["checks"][0]["accepted_deviation"] is True
    text = built.text()
    assert "FIT TO ISSUE" in text and "NOT FIT TO ISSUE" not in text
    assert "1 of 1 design checks fail (1 accepted as a deviation)" in text
    assert text.count(ACCEPT["justification"]) >= 3  # cover, summary, section
    assert "FAIL" in text and "ACCEPTED" in text


def test_approved_failing_check_without_deviation_is_not_fit(tmp_path):
    built = build_package(make_job([PUMP], **SIGNED), tmp_path)
    text = built.text()
    assert built.data["package"]["fit_to_issue"] is False
    assert "NOT FIT TO ISSUE" in text
    assert "Checked and approved for issue" not in text


@pytest.mark.parametrize("change,field,words", [
    ({"calc": "pump-p2"}, "package.deviations[0].calc", "no calc with id 'pump-p2'"),
    ({"check": "max-mass"}, "package.deviations[0].check", "has no check 'max-mass'"),
    ({"justification": ""}, "package.deviations[0].justification", "is empty"),
])
def test_bad_deviation_is_exit_2_naming_the_field(tmp_path, capsys, change, field, words):
    job = make_job([PUMP], deviations=[{**ACCEPT, **change}], **SIGNED)
    out = tmp_path / "out"
    assert main(["build", str(_write(tmp_path, job)), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert field in err and words in err and "Traceback" not in err
    assert not out.exists() or not any(out.glob("*.pdf"))


def test_missing_justification_is_exit_2(tmp_path, capsys):
    dev = {k: v for k, v in ACCEPT.items() if k != "justification"}
    job = make_job([PUMP], deviations=[dev], **SIGNED)
    assert main(["check", str(_write(tmp_path, job))]) == 2
    assert "package.deviations[0].justification" in capsys.readouterr().err


def test_final_needs_every_failing_check_accepted(tmp_path, capsys):
    out = tmp_path / "out"
    refused = _write(tmp_path, make_job([PUMP], **SIGNED))
    assert main(["build", str(refused), "--out", str(out), "--final"]) == 2
    assert "without an accepted deviation" in capsys.readouterr().err
    accepted = _write(tmp_path, make_job([PUMP], deviations=[ACCEPT], **SIGNED))
    assert main(["build", str(accepted), "--out", str(out), "--final"]) == 1


def test_no_invented_prepared_date(tmp_path):
    built = build_package(make_job([{**PUMP, "criteria": {}}], prepared_by="T. Marsh",
                                   date="2026-12-09"), tmp_path)
    cover = built.text().split("Page 1 of")[0]
    assert "2026-12-09" in cover  # the revision date, in the facts
    assert cover.count("2026-12-09") == 1  # and not again as a prepared date
