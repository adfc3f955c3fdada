"""What the next calc types need from the core, each used through a real build:

- table inputs (rows with a dimension per column), validated like scalars, every problem
  naming the row and the column;
- data-file inputs, under the safe-path rule, read-only to the calc, hashed into the
  verification key and embedded, so ``verify`` recomputes from them;
- table cells carrying quantities, shown in the package's display units by the renderer;
- a matrix block; one formula that is printed and also evaluated over arrays;
- every calc computed exactly once per build, however the build uses processes.

The checks are invariants of the core (no physics): sums, hashes, unit conversions
(1 in = 25.4 mm exactly, NIST SP 811), counts.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pikepdf
import pytest
from test_plugin_kit import FIXTURES, fake_distribution, load_fixture

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.errors import JobError
from reportgen.formula import evaluate, evaluate_array
from reportgen.job.load import load_job
from reportgen.testing import job_toml, make_job

ROWS = [{"x": "0 mm", "k": "100 kN/m", "label": "front"},
        {"x": "1.2 m", "k": "250 kN/m"},
        {"x": "48 in", "k": "1200 lbf/in", "label": "rear"}]


@pytest.fixture
def plugins():
    return load_plugin_set(extra=[("core_capabilities", load_fixture("core_capabilities"))])


def write(folder: Path, inputs: dict, **package) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    job = make_job({"id": "rows-1", "plugin": "fixture_rows", "title": "Rows",
                    "inputs": inputs}, **package)
    path = folder / "job.toml"
    path.write_text(job_toml(job), encoding="utf-8")
    return path


def test_a_table_input_reaches_the_calc_as_rows_of_si_values(tmp_path, plugins):
    job = load_job(write(tmp_path, {"springs": ROWS}), plugins)
    rows = job.calcs[0].inputs["springs"]
    assert [r["x"] for r in rows] == pytest.approx([0.0, 1.2, 48 * 0.0254])  # NIST: 1 in
    assert rows[2]["k"] == pytest.approx(1200 * 4.4482216152605 / 0.0254)  # lbf/in in N/m
    assert rows[0]["label"] == "front" and "label" not in rows[1]


@pytest.mark.parametrize("bad, field, words", [
    ([{"x": "0 mm"}], "inputs.springs[1].k", "row 1: column 'k'"),
    ([{"x": "0 mm", "k": "5 kg"}], "inputs.springs[1].k", "row 1, column 'k'"),
    ([{"x": "0 mm", "k": "1 kN/m"}, {"x": "1 m", "k": "-3 kN/m"}], "inputs.springs[2].k",
     "greater than zero"),
    ([{"x": "0 mm", "k": "1 kN/m", "stifness": "2"}], "inputs.springs[1].stifness",
     "unknown column"),
    ([{"x": "0 mm", "k": "1 kN/m", "label": 7}], "inputs.springs[1].label", "expected text"),
    ([], "inputs.springs", "0 rows"),
    ("not rows", "inputs.springs", "array of tables"),
])
def test_table_problems_name_the_row_and_the_column(tmp_path, plugins, bad, field, words):
    with pytest.raises(JobError) as err:
        load_job(write(tmp_path, {"springs": bad}), plugins)
    problems = err.value.problems
    assert any(p.field == field and words in p.message for p in problems), problems
    assert all(p.calc == "rows-1" for p in problems)


def test_a_choice_outside_its_list_is_refused_with_the_list(tmp_path, plugins):
    with pytest.raises(JobError) as err:
        load_job(write(tmp_path, {"springs": ROWS[:1], "mode": "median"}), plugins)
    assert "one of sum, mean" in str(err.value)


def test_a_data_file_is_read_once_hashed_and_refused_outside_the_folder(tmp_path, plugins):
    data = tmp_path / "survey" / "rec.csv"
    data.parent.mkdir(parents=True)
    data.write_bytes(b"t,v\n0,1\n1,2\n2,3\n")
    job = load_job(write(tmp_path, {"springs": ROWS[:1], "record": "survey/rec.csv"}), plugins)
    f = job.calcs[0].files["record"]
    import hashlib

    assert f.name == "survey/rec.csv" and f.sha256 == hashlib.sha256(data.read_bytes()
                                                                     ).hexdigest()
    assert [a.path for a in job.attachments] == ["survey/rec.csv"]  # embedded with the job
    (tmp_path / "outside.csv").write_bytes(b"t\n")
    for text, words in (("../outside.csv", "'..'"), ("/etc/x.csv", "absolute"),
                        ("survey/rec.txt", "file types")):
        with pytest.raises(JobError) as err:
            load_job(write(tmp_path / "j2", {"springs": ROWS[:1], "record": text}), plugins)
        assert err.value.problems[0].field == "inputs.record", text
        assert words in str(err.value), (text, str(err.value))


def _built(tmp_path: Path, inputs: dict, units: str = "SI") -> Path:
    site = fake_distribution(tmp_path, "core_capabilities")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(FIXTURES)]),
           "REPORTGEN_CACHE_DIR": str(tmp_path / "cache")}
    job = write(tmp_path / "job", inputs, units=units)
    run = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(job), "--out",
                          str(tmp_path / "out"), "--jobs", "2"], env=env, capture_output=True,
                         text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    return next((tmp_path / "out").glob("*.pdf"))


def test_a_package_carries_its_data_file_and_verify_recomputes_from_it(tmp_path):
    folder = tmp_path / "job"
    folder.mkdir()
    (folder / "rec.csv").write_bytes(b"t,v\n0,1\n1,2\n")
    pdf = _built(tmp_path, {"springs": ROWS, "record": "rec.csv"})
    with pikepdf.open(pdf) as p:
        names = sorted(str(n) for n in p.attachments)
        manifest = json.loads(p.attachments["manifest.json"].get_file().read_bytes())
    assert "rec.csv" in names
    assert [a["path"] for a in manifest["attachments"]] == ["rec.csv"]
    results = json.loads(pdf.with_suffix("").with_suffix(".results.json").read_bytes())
    assert results["calcs"][0]["results"]["readings"]["value"] == 2.0
    (folder / "rec.csv").write_bytes(b"t,v\n")  # the folder's copy changes afterwards:
    site = tmp_path / "site"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(FIXTURES)])}
    run = subprocess.run([sys.executable, "-m", "reportgen.cli", "verify", str(pdf)], env=env,
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0 and "OK" in run.stdout, run.stdout + run.stderr  # the embedded


@pytest.mark.parametrize("units, unit, value", [("SI", "kN/m", "210.2"),
                                                ("US", "lbf/in", "1200")])
def test_quantity_cells_show_in_the_display_unit_named_in_the_header(tmp_path, units, unit,
                                                                     value):
    from reportgen.render.selfcheck import extract_text

    pdf = _built(tmp_path, {"springs": ROWS}, units=units)
    _, text = extract_text(pdf.read_bytes())
    assert f"Stiffness ({unit})" in text
    assert value in text  # 1200 lbf/in = 210.2 kN/m (NIST SP 811 factors)
    assert "Stiffness matrix" in text


def test_one_formula_prints_and_draws(tmp_path):
    # the curve is the printed formula evaluated elementwise: the same numbers
    expr = "sqrt((1 + (2*zeta*r)**2)/((1 - r**2)**2 + (2*zeta*r)**2))"
    r = np.linspace(0.1, 5.0, 50)
    curve = evaluate_array(expr, {"r": r, "zeta": 0.05})
    assert curve == pytest.approx([evaluate(expr, {"r": float(v), "zeta": 0.05}) for v in r],
                                  rel=1e-14)
    assert np.isnan(evaluate_array("sqrt(x)", {"x": [-1.0]})[0])  # a curve may leave a domain


@pytest.mark.parametrize("extra", [[], ["--jobs", "1"], ["--no-cache"]])
def test_each_calc_is_computed_once_per_build(tmp_path, extra):
    """compute and verify run once per calc, in the forked child, its pool or here."""
    site = fake_distribution(tmp_path, "core_capabilities")
    count = tmp_path / "count.txt"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(FIXTURES)]),
           "REPORTGEN_CACHE_DIR": str(tmp_path / "cache"), "REPORTGEN_TEST_COUNT": str(count)}
    calcs = [{"id": f"c-{i}", "plugin": "fixture_counted", "title": f"C {i}",
              "inputs": {"mass": f"{10 + i} kg", "stiffness": "4 kN/m"}} for i in range(3)]
    job = tmp_path / "job.toml"
    job.write_text(job_toml(make_job(calcs)), encoding="utf-8")
    run = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(job), "--out",
                          str(tmp_path / "out"), *extra], env=env, capture_output=True,
                         text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    lines = count.read_text(encoding="utf-8").split("\n")[:-1]
    computes = sorted(line.split()[1] for line in lines if line.startswith("compute"))
    verifies = sorted(line.split()[1] for line in lines if line.startswith("verify"))
    assert computes == ["c-0", "c-1", "c-2"]
    assert verifies == ["c-0", "c-1", "c-2"]

