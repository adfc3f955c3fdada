"""The criteria library as every calc sees it: built-ins registered through the hook by the
installed vibration_criteria plugin, a firm's own curves from its template folder, the
"criterion" input kind checked at job load, ctx.criteria_library (also across a process
boundary) and `reportgen criteria`."""

from __future__ import annotations

import json
import pickle
import types
from pathlib import Path

import pytest

from reportgen import CalcType, InputSpec, Sheet, hookimpl
from reportgen.calc.criteria import load_criteria
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.calc.spec import Column
from reportgen.cli import main
from reportgen.document.compute import compute_document
from reportgen.errors import JobError
from reportgen.job.load import load_job
from reportgen.testing import job_toml, make_job


class Probe(CalcType):
    """Reports the limit of the criterion it is given, found through ctx.criteria_library."""

    name = "criterion_probe"
    title = "Criterion probe"
    version = "1.0.0"
    inputs = (InputSpec(name="x", symbol="x", description="a number"),)
    criteria = (InputSpec(name="curve", symbol="", description="vibration criterion",
                          kind="criterion", required=False,
                          columns=(Column(name="frequency", description="frequency",
                                          dimension="frequency", positive=True),
                                   Column(name="velocity", description="rms velocity",
                                          dimension="velocity", positive=True))),)

    def compute(self, ctx):
        sheet = Sheet()
        curve = ctx.criteria.get("curve")
        if isinstance(curve, str):
            limit = ctx.criteria_library.get(curve).values[-1]
        else:
            limit = curve[-1]["velocity"]
        sheet.result("limit", limit, "velocity", "v", "limit at the top of the curve")
        return sheet.output()


PROBE = types.ModuleType("criterion_probe_plugin")
PROBE.reportgen_register_calc_types = hookimpl(lambda: [Probe()])


@pytest.fixture(scope="module")
def plugins():
    return load_plugin_set(extra=[("criterion_probe", PROBE)])


def _job(folder: Path, curve, **package) -> Path:
    calc = {"plugin": "criterion_probe", "inputs": {"x": 1}}
    if curve is not None:
        calc["criteria"] = {"curve": curve}
    path = folder / "job.toml"
    path.write_text(job_toml(make_job(calc, **package)), encoding="utf-8")
    return path


def test_the_installed_plugin_registers_the_builtin_curves_through_the_hook(plugins):
    library = load_criteria(plugins)
    assert not library.problems
    vc_c = library.get("vc c")  # any spelling of the name
    # VC-C: 12.5 µm/s rms in one-third-octave bands (Gordon, Proc. SPIE 1619, 1991; the
    # 500 µin/s of IEST-RP-CC012) - common practice in the trade's tables
    assert vc_c is not None and vc_c.values[-1] == pytest.approx(12.5e-6)
    assert library.entries["vcc"].plugin == "vibration_criteria"


def test_a_named_criterion_reaches_the_calc_through_ctx(plugins, tmp_path):
    job = load_job(_job(tmp_path, "vc-e"), plugins)
    assert job.calcs[0].criteria["curve"] == "VC-E"  # the name as registered
    doc = compute_document(job, plugins)
    limit = next(r for r in doc.sections[0].results if r.key == "limit")
    assert limit.quantity.value == pytest.approx(3.12e-6)  # VC-E, 125 µin/s (as VC-C)


def test_a_curve_of_the_job_s_own_is_read_as_a_table(plugins, tmp_path):
    own = [{"frequency": "4 Hz", "velocity": "30 um/s"},
           {"frequency": "80 Hz", "velocity": "6 um/s"}]
    job = load_job(_job(tmp_path, own), plugins)
    doc = compute_document(job, plugins)
    limit = next(r for r in doc.sections[0].results if r.key == "limit")
    assert limit.quantity.value == pytest.approx(6e-6)


def test_an_unknown_criterion_is_refused_naming_file_calc_field_and_the_nearest(
        plugins, tmp_path):
    path = _job(tmp_path, "VC-H")
    with pytest.raises(JobError) as err:
        load_job(path, plugins)
    (p,) = err.value.problems
    assert p.file == str(path) and p.calc == "calc-1" and p.field == "criteria.curve"
    assert "unknown criterion 'VC-H'" in p.message and "VC-" in p.message


def test_check_exits_2_on_an_unknown_criterion(plugins, tmp_path, capsys, monkeypatch):
    import reportgen.cli.commands as commands

    monkeypatch.setattr(commands, "load_plugins", lambda: plugins)
    path = _job(tmp_path, "VC-Q")
    assert main(["check", str(path)]) == 2
    assert "criteria.curve" in capsys.readouterr().err


FIRM_CSV = """# title: Imaging suite floor specification (invented maker)
# source: Invented instrument maker's site planning guide, floor vibration table
frequency [Hz], IMG-FLOOR-1 [um/s]
1, 20
10, 8
100, 8
"""


def test_a_firm_s_own_curves_come_from_its_template_folder(plugins, tmp_path):
    firm = tmp_path / "firm"
    (firm / "criteria").mkdir(parents=True)
    (firm / "criteria" / "lab.csv").write_text(FIRM_CSV, encoding="utf-8")
    library = load_criteria(plugins, firm)
    own = library.get("img floor 1")
    assert own is not None and own.source.startswith("Invented instrument maker")
    job = load_job(_job(tmp_path, "IMG-FLOOR-1", template_dir="firm"), plugins)
    assert job.calcs[0].criteria["curve"] == "IMG-FLOOR-1"
    # --template-dir on the command line stands for the job's own folder
    job = load_job(_job(tmp_path, "IMG-FLOOR-1"), plugins, template_dir=firm)
    doc = compute_document(job, plugins)
    assert doc.sections[0].results[0].quantity.value == pytest.approx(8e-6)


def test_a_firm_s_curve_travels_with_the_package_and_reruns_without_the_firm_folder(
        plugins, tmp_path):
    """A package must re-run years later (archival): a curve from the firm's folder is
    embedded at criteria/<file> beside the job, and the archived job (loaded from its own
    unpacked folder, as verify does) reads the same curve back."""
    firm = tmp_path / "firm"
    (firm / "criteria").mkdir(parents=True)
    (firm / "criteria" / "lab.csv").write_text(FIRM_CSV, encoding="utf-8")
    job = load_job(_job(tmp_path, "IMG-FLOOR-1", template_dir="firm"), plugins)
    (embedded,) = [a for a in job.attachments if a.path == "criteria/lab.csv"]
    assert embedded.data == FIRM_CSV.encode("utf-8")
    built = compute_document(job, plugins)
    unpacked = tmp_path / "unpacked"  # what load_embedded_job writes, without the firm
    (unpacked / "criteria").mkdir(parents=True)
    (unpacked / "criteria" / "lab.csv").write_bytes(embedded.data)
    (unpacked / "job.toml").write_bytes(job.source)
    again = load_job(unpacked / "job.toml", plugins, archived=True)
    rerun = compute_document(again, plugins)
    assert [r.quantity for r in rerun.sections[0].results] == [
        r.quantity for r in built.sections[0].results]
    # a built-in curve embeds nothing
    plain = load_job(_job(tmp_path, "VC-C"), plugins)
    assert not [a for a in plain.attachments if a.path.startswith("criteria/")]


def test_a_broken_or_clashing_firm_file_is_an_error_naming_it(plugins, tmp_path):
    firm = tmp_path / "firm"
    (firm / "criteria").mkdir(parents=True)
    (firm / "criteria" / "lab.csv").write_text(
        "frequency [Hz], VC-A [um/s]\n1, 20\n", encoding="utf-8")
    with pytest.raises(JobError) as err:
        load_job(_job(tmp_path, "VC-B"), plugins, template_dir=firm)
    message = err.value.problems[0].message
    assert "lab.csv" in message and "built-in criterion 'VC-A'" in message
    (firm / "criteria" / "lab.csv").write_text(
        "frequency [Hz], OWN [um/s]\n1, abc\n", encoding="utf-8")
    with pytest.raises(JobError) as err:
        load_job(_job(tmp_path, "VC-B"), plugins, template_dir=firm)
    message = err.value.problems[0].message
    assert "lab.csv, line 2, column 'OWN [um/s]'" in message


def test_the_library_pickles_for_verification_in_worker_processes(plugins, tmp_path):
    job = load_job(_job(tmp_path, "VC-A"), plugins)
    from reportgen.document.compute import calc_context

    ctx = calc_context(job.calcs[0], "SI")
    back = pickle.loads(pickle.dumps(ctx))
    assert back.criteria_library.get("VC-A") == ctx.criteria_library.get("VC-A")
    assert len(back.criteria_library.names()) == len(ctx.criteria_library.names()) > 20


def test_criteria_command_lists_every_criterion_with_quantity_and_source(capsys):
    assert main(["criteria", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["criteria"]
    by_name = {r["name"]: r for r in rows}
    assert {"VC-A", "VC-G", "DIN4150-3-line1", "BS7385-2-line2"} <= set(by_name)
    assert all(r["source"] and r["title"] and r["quantity"] for r in rows)
    assert main(["criteria"]) == 0
    text = capsys.readouterr().out
    assert "VC-D" in text and "source: " in text


def test_the_hook_gets_the_api_version_and_the_template_folder(plugins, tmp_path):
    from reportgen.calc import hookspecs

    seen = []
    spy = types.ModuleType("criteria_spy")
    spy.reportgen_register_criteria = hookimpl(lambda context: seen.append(context) or [])
    load_criteria(load_plugin_set(extra=[("spy", spy)], entry_points=False), tmp_path)
    assert seen == [{"api_version": hookspecs.API_VERSION, "template_dir": tmp_path}]


def test_criteria_command_lists_a_firm_s_curves_and_refuses_a_missing_folder(tmp_path, capsys):
    (tmp_path / "criteria").mkdir()
    (tmp_path / "criteria" / "lab.csv").write_text(FIRM_CSV, encoding="utf-8")
    assert main(["criteria", "--json", "--template-dir", str(tmp_path)]) == 0
    rows = json.loads(capsys.readouterr().out)["criteria"]
    assert any(r["name"] == "IMG-FLOOR-1" and "Invented instrument maker" in r["source"]
               for r in rows)
    assert main(["criteria", "--template-dir", str(tmp_path / "nope")]) == 2
    assert "not a folder" in capsys.readouterr().err
