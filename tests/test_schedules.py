"""Equipment schedules: a spreadsheet's rows become calcs exactly as the same calcs written
as job files would; .xlsx and .csv give the same package; every bad cell is named by
file, sheet and cell; the summary is the schedule, row by row as results.json has it.

Physics anchor: an item on springs of static deflection δ has f_n = √(g/δ)/2π
(Thomson & Dahleh, Theory of Vibration with Applications, Ch. 2); 25 mm gives 3.152 Hz.
"""

from __future__ import annotations

import csv
import math
import random
import re
import subprocess
import sys
from pathlib import Path

import pytest

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.document.compute import compute_document
from reportgen.document.results import results_data
from reportgen.errors import JobError
from reportgen.job.load import load_job
from reportgen.testing import DEFAULT_PACKAGE, compute, job_toml, make_job

openpyxl = pytest.importorskip("openpyxl")

HEADER = ["tag", "description", "location", "mounting", "mass [kg]", "speed [rpm]",
          "mounts", "static_deflection [mm]", "notes"]
ROWS = [
    ["P-1", "Chilled-water pump", "Plant room", "inertia base", 1200, 1480, 4, 25, ""],
    ["P-10", "Booster pump", "Basement", "springs", 420, 2900, 4, 25, "skid"],
    ["AHU-2", "Air handler", "Roof", "springs", 3400, 900, 6, 10, ""],
    ["EF-3", "Extract fan", "Roof", "hanging springs", 340, 960, 4, None, ""],  # template δ
]
TEMPLATE = {"plugin": "isolation", "title": "{tag} {description}: isolation",
            "inputs": {"damping_ratio": 0.05, "static_deflection": "50 mm"},
            "criteria": {"min_efficiency": 0.9}}


@pytest.fixture(scope="module")
def plugins():
    return load_plugin_set()


def write_csv(path: Path, header=HEADER, rows=ROWS) -> Path:
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(header)
        for r in rows:
            w.writerow(["" if v is None else v for v in r])
    return path


def write_xlsx(path: Path, header=HEADER, rows=ROWS, sheet="Plant") -> Path:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = sheet
    ws.append(header)
    for r in rows:
        ws.append(r)
    wb.save(path)
    return path


def schedule_job(folder: Path, file: str, sheet: str | None = None,
                 template=TEMPLATE, calcs=()) -> Path:
    table = {"file": file} | ({"sheet": sheet} if sheet else {}) | {"calc": template}
    job = {"package": dict(DEFAULT_PACKAGE), "schedule": table}
    if calcs:
        job["calc"] = list(calcs)
    path = folder / "job.toml"
    path.write_text(job_toml(job), encoding="utf-8")
    return path


def _calcs(doc) -> dict[str, dict]:
    return {c["id"]: c for c in results_data(doc)["calcs"]}


def test_each_row_is_the_calc_its_job_file_would_be(tmp_path, plugins):
    write_csv(tmp_path / "equipment.csv")
    doc = compute_document(load_job(schedule_job(tmp_path, "equipment.csv"), plugins),
                           plugins)
    got = _calcs(doc)
    assert list(got) == ["p-1", "p-10", "ahu-2", "ef-3"]  # ids from tags, sheet order
    for row in ROWS:
        tag, desc, _, _, mass, speed, mounts, delta, _ = row
        inputs = {"mass": f"{mass} kg", "speed": f"{speed} rpm", "mounts": mounts,
                  "damping_ratio": 0.05, "static_deflection": f"{delta or 50} mm"}
        alone = compute(make_job({"id": "x", "plugin": "isolation", "title": "t",
                                  "inputs": inputs, "criteria": {"min_efficiency": 0.9}}),
                        plugins)
        mine = got[re.sub(r"[^a-z0-9]+", "-", tag.lower())]
        assert mine["results"] == _calcs(alone)["x"]["results"]
        assert [(c["id"], c["status"]) for c in mine["checks"]] == [
            (c["id"], c["status"]) for c in _calcs(alone)["x"]["checks"]]
    # δ = 25 mm: f_n = √(g/δ)/2π = 3.152 Hz (Thomson & Dahleh, Ch. 2)
    fn = got["p-1"]["results"]["natural_frequency"]["value"]
    assert fn == pytest.approx(math.sqrt(9.80665 / 0.025) / (2 * math.pi), rel=1e-9)


def test_row_order_does_not_change_any_calc(tmp_path, plugins):
    write_csv(tmp_path / "equipment.csv")
    a = _calcs(compute_document(load_job(schedule_job(tmp_path, "equipment.csv"), plugins),
                                plugins))
    shuffled = list(ROWS)
    random.Random(7).shuffle(shuffled)
    other = tmp_path / "b"
    other.mkdir()
    write_csv(other / "equipment.csv", rows=shuffled)
    b = _calcs(compute_document(load_job(schedule_job(other, "equipment.csv"), plugins),
                                plugins))
    assert {k: v["results"] for k, v in a.items()} == {k: v["results"] for k, v in b.items()}


def test_each_value_names_its_row_as_its_source_and_empty_cells_take_the_template(
        tmp_path, plugins):
    write_csv(tmp_path / "equipment.csv")
    job = load_job(schedule_job(tmp_path, "equipment.csv"), plugins)
    p1 = next(c for c in job.calcs if c.id == "p-1")
    assert p1.sources["inputs.mass"] == "schedule equipment.csv, row 2, tag P-1"
    ef3 = next(c for c in job.calcs if c.id == "ef-3")
    assert ef3.inputs["static_deflection"] == pytest.approx(0.050)  # the template's
    assert "inputs.static_deflection" not in ef3.sources
    assert ef3.title == "EF-3 Extract fan: isolation"
    # the schedule file travels with the package, as a data file does
    assert [a.path for a in job.attachments] == ["equipment.csv"]


def test_xlsx_and_csv_give_the_same_calcs(tmp_path, plugins):
    (tmp_path / "x").mkdir()
    (tmp_path / "c").mkdir()
    write_xlsx(tmp_path / "x" / "equipment.xlsx")
    write_csv(tmp_path / "c" / "equipment.csv")
    dx = compute_document(load_job(schedule_job(tmp_path / "x", "equipment.xlsx",
                                                sheet="Plant"), plugins), plugins)
    dc = compute_document(load_job(schedule_job(tmp_path / "c", "equipment.csv"), plugins),
                          plugins)
    rx, rc = results_data(dx), results_data(dc)
    assert rx["calcs"] == rc["calcs"]
    assert rx["schedule"]["rows"] == rc["schedule"]["rows"]
    assert rx["schedule"]["source"] == "equipment.xlsx, sheet 'Plant'"
    assert rc["schedule"]["source"] == "equipment.csv"


def test_summary_is_the_schedule_row_by_row_as_results_json_has_it(tmp_path, plugins):
    from reportgen.render.assets import render_assets
    from reportgen.render.html import render_html

    write_csv(tmp_path / "equipment.csv")
    doc = compute_document(load_job(schedule_job(tmp_path, "equipment.csv"), plugins),
                           plugins)
    html = render_html(doc, render_assets(doc, use_cache=False))
    table = re.search(r'<table class="grid schedule">(.*?)</table>', html, re.S).group(1)
    shown = re.findall(r'<td class="mono nowrap">([^<]+)</td>.*?badge-(\w+)', table, re.S)
    rows = results_data(doc)["schedule"]["rows"]
    assert shown == [(r["tag"], r["status"]) for r in rows]
    # tags in their natural order: P-10 after P-1, not before it
    assert [r["tag"] for r in rows] == ["AHU-2", "EF-3", "P-1", "P-10"]
    fails = {r["tag"] for r in rows if r["status"] == "fail"}
    # AHU-2: 900 rpm on 10 mm: f_n 4.98 Hz, r = 3.01, T = 1/(r² − 1) ≈ 0.12 (ζ small),
    # so 1 − T < 0.9 fails; the others sit far above resonance (Thomson & Dahleh, Ch. 3)
    assert fails == {"AHU-2"}


def _problems(tmp_path, plugins, header=HEADER, rows=ROWS, xlsx=None) -> str:
    if xlsx is None:
        write_csv(tmp_path / "equipment.csv", header, rows)
        name = "equipment.csv"
    else:
        name = "equipment.xlsx"
    with pytest.raises(JobError) as err:
        load_job(schedule_job(tmp_path, name), plugins)
    return "\n".join(str(p) for p in err.value.problems)


def test_a_header_naming_no_input_is_named_by_its_cell(tmp_path, plugins):
    text = _problems(tmp_path, plugins, header=HEADER[:4] + ["weight [kg]"] + HEADER[5:])
    assert "equipment.csv, cell E1" in text and "'weight [kg]'" in text
    assert "names no input or criterion of calc type 'isolation'" in text


def test_a_unit_that_does_not_fit_is_named_by_its_cell(tmp_path, plugins):
    text = _problems(tmp_path, plugins, header=HEADER[:5] + ["speed [mm]"] + HEADER[6:])
    # every row's speed cell is wrong: the first is F2
    assert "equipment.csv, cell F2: calc 'p-1': field 'inputs.speed'" in text


def test_a_duplicate_tag_names_both_rows_and_an_empty_tag_its_row(tmp_path, plugins):
    rows = [list(r) for r in ROWS] + [["p 1", "again", "", "", 100, 1480, 4, 25, ""]]
    text = _problems(tmp_path, plugins, rows=rows)
    assert "cell A6" in text and "row 6" in text and "row 2" in text
    rows = [list(r) for r in ROWS]
    rows[1][0] = ""
    (tmp_path / "e").mkdir()
    text = _problems(tmp_path / "e", plugins, rows=rows)
    assert "cell A3" in text and "row 3 has no tag" in text


def test_xlsx_formula_without_a_value_merged_and_hidden_rows_are_named(tmp_path, plugins):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Plant"
    ws.append(HEADER)
    for r in ROWS:
        ws.append(r)
    ws["E3"] = "=E2*2"  # openpyxl stores the formula with no cached value
    ws.merge_cells("B4:C4")
    ws.row_dimensions[5].hidden = True
    wb.save(tmp_path / "equipment.xlsx")
    text = _problems(tmp_path, plugins, xlsx=True)
    assert "equipment.xlsx, sheet 'Plant', cell E3: a formula without a stored value" in text
    assert "cell B4: merged cells B4:C4" in text
    assert "cell A5: row 5 is hidden" in text


def test_bad_schedule_on_the_command_line_is_exit_2_and_writes_nothing(tmp_path):
    write_csv(tmp_path / "equipment.csv", HEADER[:4] + ["weight [kg]"] + HEADER[5:])
    job = schedule_job(tmp_path, "equipment.csv")
    out = tmp_path / "out"
    r = subprocess.run([sys.executable, "-m", "reportgen", "build", str(job), "--out",
                        str(out)], capture_output=True, text=True, timeout=300)
    assert r.returncode == 2, r.stderr
    assert "cell E1" in r.stderr and "Traceback" not in r.stderr
    assert not out.exists() or not any(out.iterdir())


def test_a_schedule_outside_the_job_folder_is_refused(tmp_path, plugins):
    (tmp_path / "jobs").mkdir()
    write_csv(tmp_path / "equipment.csv")
    with pytest.raises(JobError) as err:
        load_job(schedule_job(tmp_path / "jobs", "../equipment.csv"), plugins)
    assert "schedule.file" in str(err.value.problems[0])


def test_split_builds_a_package_per_row_that_verify_reruns(tmp_path):
    rows = ROWS[:2]
    write_csv(tmp_path / "equipment.csv", rows=rows)
    job = schedule_job(tmp_path, "equipment.csv")
    out = tmp_path / "out"
    r = subprocess.run([sys.executable, "-m", "reportgen", "build", str(job), "--split",
                        "--jobs", "2", "--out", str(out)], capture_output=True, text=True,
                       timeout=600)
    assert r.returncode == 0, r.stderr
    cn = DEFAULT_PACKAGE["calc_number"]
    rev = DEFAULT_PACKAGE["revision"]
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted([f"{cn}-P-1-{rev}.pdf", f"{cn}-P-1-{rev}.results.json",
                            f"{cn}-P-10-{rev}.pdf", f"{cn}-P-10-{rev}.results.json",
                            "register.json", "register.pdf"])
    v = subprocess.run([sys.executable, "-m", "reportgen", "verify",
                        str(out / f"{cn}-P-10-{rev}.pdf")], capture_output=True, text=True,
                       timeout=300)
    assert v.returncode == 0, v.stdout + v.stderr
    import json

    alone = json.loads((out / f"{cn}-P-10-{rev}.results.json").read_text(encoding="utf-8"))
    assert alone["package"]["calc_number"] == f"{cn}-P-10"
    assert [c["id"] for c in alone["calcs"]] == ["p-10"]


def test_a_revision_lists_added_removed_and_changed_tags(tmp_path, plugins):
    from reportgen.package.compare import schedule_changes

    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    write_csv(tmp_path / "a" / "equipment.csv")
    before = results_data(compute_document(
        load_job(schedule_job(tmp_path / "a", "equipment.csv"), plugins), plugins))
    rows = [list(r) for r in ROWS if r[0] != "EF-3"]  # EF-3 removed
    rows[2][7] = 50  # AHU-2 on 50 mm springs: passes now
    rows.append(["CT-1", "Cooling tower fan", "Roof", "springs", 5200, 480, 8, 50, ""])
    write_csv(tmp_path / "b" / "equipment.csv", rows=rows)
    after = results_data(compute_document(
        load_job(schedule_job(tmp_path / "b", "equipment.csv"), plugins), plugins))
    changes = {tag: (what, moved) for tag, what, moved in schedule_changes(before, after)}
    assert set(changes) == {"AHU-2", "CT-1", "EF-3"}
    assert changes["EF-3"][0] == "removed" and changes["CT-1"][0] == "added"
    what, moved = changes["AHU-2"]
    assert what == "changed" and "status FAIL → PASS" in moved
    assert "static deflection 0.01 → 0.05 m (SI)" in moved


def test_a_sheet_shows_every_equation_behind_its_checks_and_schedule_results(tmp_path,
                                                                              plugins):
    """The sheet's key working is closed: every operand an equation on it uses that some
    equation computes is computed on the sheet too, and every check value and schedule
    result comes from an equation on the sheet (so a checker redoes them by hand); the
    design aid the checks do not use (the mounts a target would need) is left to the
    item's own package (invariants of the selection, no outside source needed)."""
    from reportgen.model import Equation

    write_csv(tmp_path / "equipment.csv")
    doc = compute_document(load_job(schedule_job(tmp_path, "equipment.csv"), plugins),
                           plugins)
    for s in doc.sections:
        working = doc.sheet_working(s)
        every = [b for b in s.blocks if isinstance(b, Equation)]
        names = {e.name for e in working}
        computed = {e.name for e in every}
        for e in working:
            assert {n for n, _ in e.operands} & computed <= names, e.name
        values = [e.result.value for e in working]
        for c in s.checks:
            if c.value is not None and c.status != "info":
                assert any(math.isclose(c.value.value, v, rel_tol=1e-12) for v in values), c.id
        assert {r.key for r in doc.sheet_results(s)} >= set(doc.schedule_results)
        assert len(working) < len(every)
        assert "required_static_deflection" not in {e.result_key for e in working}


def test_each_item_sheet_is_one_page(tmp_path):
    """One page per item, each starting its own page (issue 22: "one compact sheet per
    item, one page where the calc allows")."""
    import pikepdf

    from reportgen.render.selfcheck import _pages_text

    write_csv(tmp_path / "equipment.csv")
    job = schedule_job(tmp_path, "equipment.csv")
    out = tmp_path / "out"
    r = subprocess.run([sys.executable, "-m", "reportgen", "build", str(job), "--out",
                        str(out)], capture_output=True, text=True, timeout=600)
    assert r.returncode in (0, 1), r.stderr
    with pikepdf.open(next(out.glob("*.pdf"))) as pdf:
        pages = [re.sub(r"\s+", " ", t) for t in _pages_text(pdf)]
    for number in range(1, len(ROWS) + 1):
        starts = [i for i, t in enumerate(pages) if f"{number}.1 Inputs and Design" in t]
        assert len(starts) == 1, number
        page = pages[starts[0]]
        assert f"{number}.4 Design checks" in page or f"{number}.3 Design checks" in page
        following = pages[starts[0] + 1]
        # the next page starts the next item, or the method printed once (its title has
        # a colon; every sheet's header says "Method common to every item (last section)")
        assert (f"{number + 1}.1 Inputs" in following or "Method common to every item:" in
                following), f"item {number} runs onto a second page"
