"""isolation with an isolator catalogue (issue 18): the spring chosen for each mount is the
lightest that carries its load and reaches the deflection the target needs (checked here by
brute force over the catalogue), the catalogue's cross-checks are checks, and a bad catalogue
is exit 2 naming the file, row and column."""

from __future__ import annotations

import shutil

import pytest
from conftest import REPO

from reportgen.errors import JobError
from reportgen.testing import compute, make_job, result, section_checks

CATALOGUE = REPO / "sample_jobs" / "catalogues" / "tollbrook-ts.csv"
INCH, LBF = 0.0254, 0.45359237 * 9.80665  # exact (NIST SP 811, App. B)
# the catalogue's models: (name, rated load N, rate N/m, solid deflection m)
MODELS = [(c[0], float(c[1]) * LBF, float(c[2]) * LBF / INCH, float(c[4]) * INCH)
          for c in (line.split(",") for line in CATALOGUE.read_text().splitlines()[2:])]


def chiller(catalogue: str = "tollbrook-ts.csv") -> dict:
    # an invented chiller on four springs with its compressor end heavier
    return {"plugin": "isolation", "inputs": {
        "mass": "3200 kg", "speed": "1480 rpm", "mounts": 4,
        "stiffness_per_mount": "300 kN/m", "damping_ratio": 0.01,
        "mount_positions": [["0 mm", "0 mm"], ["3600 mm", "0 mm"], ["3600 mm", "1400 mm"],
                            ["0 mm", "1400 mm"]],
        "cg_x": "1550 mm", "cg_y": "620 mm", "catalogue": catalogue},
        "criteria": {"min_efficiency": 0.95}}


def test_each_mount_gets_the_lightest_adequate_spring(tmp_path, rg_plugins):
    shutil.copy(CATALOGUE, tmp_path / "tollbrook-ts.csv")
    doc = compute(make_job(chiller()), rg_plugins, folder=tmp_path)
    sec = doc.sections[0]
    table = next(b for b in sec.blocks if getattr(b, "title", "") == "Spring selection per mount")
    need = result(doc, "required_static_deflection")
    for row in table.rows:
        load = row[3]
        # brute force: models rated for the load whose deflection P/k reaches the need and
        # whose travel to solid keeps 50 % more (common practice), lightest first
        fit = [m for m in MODELS if m[1] >= load and load / m[2] >= need
               and m[3] - load / m[2] >= 0.5 * load / m[2]]
        assert row[2] == min(fit, key=lambda m: m[1])[0]
    checks = section_checks(sec)
    assert all(checks[f"travel-{i}"] == "pass" for i in range(1, 5))
    assert any(k.startswith("catalogue-TS-") for k in checks)


def test_a_catalogue_contradicting_itself_fails_its_check(tmp_path, rg_plugins):
    # TS-1600 (chosen for the light corner) and TS-120 (not used) rewritten with twice
    # their spring rate: k·δ_rated = 2 × P_rated, against Hooke's law P = k·δ
    text = (CATALOGUE.read_text().replace("TS-1600,1600,790,", "TS-1600,1600,1580,")
            .replace("TS-120,120,60,", "TS-120,120,120,"))
    (tmp_path / "tollbrook-ts.csv").write_text(text)
    doc = compute(make_job(chiller()), rg_plugins, folder=tmp_path)
    checks = section_checks(doc.sections[0])
    assert checks["catalogue-TS-1600"] == "fail"
    assert checks["catalogue-TS-2100"] == "pass"
    other = next(c for c in doc.sections[0].checks if c.id == "catalogue-other-models")
    assert other.status == "info" and "TS-120" in other.note


def test_a_bad_catalogue_is_an_input_error(tmp_path, rg_plugins):
    text = CATALOGUE.read_text().replace("TS-650,650,325,2.00,3.10,0.9", "TS-650,650,325,2.00,3.10")
    (tmp_path / "tollbrook-ts.csv").write_text(text)
    with pytest.raises(JobError) as exc:
        compute(make_job(chiller()), rg_plugins, folder=tmp_path)
    msg = str(exc.value)
    assert "inputs.catalogue" in msg and "tollbrook-ts.csv, row 7" in msg
