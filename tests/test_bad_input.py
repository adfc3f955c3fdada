"""Bad job files: each gives exit 2, writes nothing, and names the file, calc and field.

A table of hand-written bad jobs run through the command line in-process (and a few
in a real subprocess), plus `reportgen check`, `reportgen schema` and the size limits.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

from reportgen.cli import main
from reportgen.job.load import MAX_CALCS, MAX_JOB_BYTES

REPO = Path(__file__).resolve().parent.parent

# The demo scenario (invented): Quillmoor Engineering Partners, job QEP-2417.
PACKAGE = {
    "title": '"Pump P1 on spring mounts: natural frequency"',
    "client": '"Ferrow Quay Developments"',
    "project": '"Ferrow Quay Data Centre, plant room B"',
    "job_number": '"QEP-2417"',
    "calc_number": '"QEP-2417-V-190"',
    "revision": '"A"',
    "date": '"2026-12-01"',
    "prepared_by": '"T. Marsh"',
}
INPUTS = {"mass": '"1200 kg"', "stiffness": '"350 kN/m"', "damping_ratio": "0.05"}


def job(*, package: dict | None = None, inputs: dict | None = None,
        criteria: dict | None = None, calc: dict | None = None, tail: str = "",
        calc_id: str | None = "pump-p1", plugin: str | None = "free_vibration") -> str:
    """A job file text: the demo job with keys replaced (value None drops the key)."""
    pkg = {**PACKAGE, **(package or {})}
    lines = ["[package]"] + [f"{k} = {v}" for k, v in pkg.items() if v is not None]
    fields = {"id": None if calc_id is None else f'"{calc_id}"',
              "plugin": None if plugin is None else f'"{plugin}"',
              "title": '"Pump P1 free vibration"', **(calc or {})}
    lines += ["", "[[calc]]"] + [f"{k} = {v}" for k, v in fields.items() if v is not None]
    lines += ["[calc.inputs]"] + [f"{k} = {v}" for k, v in {**INPUTS, **(inputs or {})}.items()
                                  if v is not None]
    if criteria:
        lines += ["[calc.criteria]"] + [f"{k} = {v}" for k, v in criteria.items()]
    return "\n".join(lines) + "\n" + tail


def calc_block(cid: str, mass: str = '"1200 kg"') -> str:
    return (f'\n[[calc]]\nid = "{cid}"\nplugin = "free_vibration"\ntitle = "Mount {cid}"\n'
            f'[calc.inputs]\nmass = {mass}\nstiffness = "350 kN/m"\n')


@dataclass(frozen=True)
class Bad:
    id: str
    text: str | bytes
    calc: str | None  # the calc id the message must name (None: a package-level problem)
    field: str | None  # the field the message must name
    says: tuple[str, ...] = ()  # further fragments: what was expected and what was found


def _bytes_cases() -> list[Bad]:
    good = job()
    padded = good + "# " + "x" * (2 * MAX_JOB_BYTES) + "\n"  # a 2 MB file
    many = job() + "".join(calc_block(f"mount-{i}") for i in range(499))  # 500 calcs
    return [
        Bad("not-utf8", good.encode() .replace(b"T. Marsh", b"T. M\xe4rsh"), None, None,
            ("not UTF-8", "line 9", "0xe4")),
        Bad("empty-file", "", None, "package", ("empty",)),
        Bad("only-whitespace", "\n\n   \n", None, "package", ("empty",)),
        Bad("two-megabytes", padded, None, None, ("bytes", f"limit is {MAX_JOB_BYTES}")),
        Bad("five-hundred-calcs", many, None, "calc", ("500 calcs", f"limit is {MAX_CALCS}")),
    ]


BAD: list[Bad] = [
    # ---- TOML syntax: line and column, and the calc and key the line belongs to
    Bad("toml-unclosed-string", job(inputs={"mass": '"1200 kg'}), "pump-p1", "inputs.mass",
        ("TOML syntax error", "line 16", "column")),
    Bad("toml-missing-equals", job(calc={"notes": None}).replace('stiffness = "350 kN/m"',
                                                               'stiffness "350 kN/m"'),
        "pump-p1", "inputs.stiffness", ("TOML syntax error", "line 17", "column", "'='")),
    Bad("toml-unit-outside-quotes", job(inputs={"mass": "1200 kg"}), "pump-p1", "inputs.mass",
        ("TOML syntax error", "line 16", "column")),
    Bad("toml-key-given-twice", job(tail='mass = "1300 kg"\n'), "pump-p1", "inputs.mass",
        ("TOML syntax error", "line 19", "twice")),
    Bad("toml-unclosed-header", job().replace("[calc.inputs]", "[calc.inputs"), "pump-p1",
        "inputs", ("TOML syntax error", "line 15", "column")),
    Bad("toml-package-typo-value", job(package={"revision": "A"}), None, "package.revision",
        ("TOML syntax error", "line 7")),
    # ---- plugins and keys
    Bad("unknown-plugin", job(plugin="free_vibraton"), "pump-p1", "plugin",
        ("unknown calc type 'free_vibraton'", "did you mean 'free_vibration'",
         "known calc types:", "free_vibration")),
    Bad("plugin-missing", job(plugin=None), "pump-p1", "plugin",
        ("'plugin' is missing", "free_vibration")),
    Bad("plugin-not-text", job(plugin=None, calc={"plugin": "3"}), "pump-p1", "plugin",
        ("expected the name of a calc type", "found int 3")),
    Bad("unknown-input", job(inputs={"stifness": '"350 kN/m"', "stiffness": None}), "pump-p1",
        "inputs.stifness", ("unknown input 'stifness'", "did you mean 'stiffness'")),
    Bad("unknown-criterion", job(criteria={"max_natural_frequncy": '"5 Hz"'}), "pump-p1",
        "criteria.max_natural_frequncy", ("did you mean 'max_natural_frequency'",)),
    Bad("unknown-calc-field", job(calc={"note": '"typo"'}), "pump-p1", "note",
        ("unknown field 'note'", "did you mean 'notes'")),
    Bad("unknown-package-field", job(package={"revison": '"B"'}), None, "package.revison",
        ("unknown field 'revison'", "did you mean 'revision'")),
    Bad("unknown-top-level", job(tail='[pakage]\ntitle = "x"\n'), None, "pakage",
        ("did you mean 'package'",)),
    # ---- required inputs
    Bad("missing-mass", job(inputs={"mass": None}), "pump-p1", "inputs.mass",
        ("required input 'mass'", "missing", '"1 kg"')),
    Bad("missing-stiffness", job(inputs={"stiffness": None}), "pump-p1", "inputs.stiffness",
        ("required input 'stiffness'", "missing")),
    # ---- dimensions: expected dimension and an example unit, and what was found
    Bad("mass-as-stiffness", job(inputs={"mass": '"1200 N/m"'}), "pump-p1", "inputs.mass",
        ("expected mass", '"1 kg"', "'1200 N/m'")),
    Bad("stiffness-as-mass", job(inputs={"stiffness": '"350 kg"'}), "pump-p1",
        "inputs.stiffness", ("expected stiffness", '"1 kN/m"', "'350 kg'", "[mass]")),
    Bad("mass-without-unit", job(inputs={"mass": "1200"}), "pump-p1", "inputs.mass",
        ("unit of mass", '"1 kg"', "plain number 1200")),
    Bad("mass-unit-only", job(inputs={"mass": '"kg"'}), "pump-p1", "inputs.mass",
        ("expected a number followed by a unit of mass", "'kg'")),
    Bad("damping-ratio-with-unit", job(inputs={"damping_ratio": '"5 mm"'}), "pump-p1",
        "inputs.damping_ratio", ("expected dimensionless", "'5 mm'")),
    Bad("mass-is-boolean", job(inputs={"mass": "true"}), "pump-p1", "inputs.mass",
        ("boolean True",)),
    Bad("mass-is-list", job(inputs={"mass": '["1200 kg"]'}), "pump-p1", "inputs.mass",
        ("found list",)),
    Bad("mass-is-table", job(inputs={"mass": '{ value = 1200, unit = "kg" }'}), "pump-p1",
        "inputs.mass", ("found dict",)),
    Bad("mass-arithmetic", job(inputs={"mass": '"10**9**9 kg"'}), "pump-p1", "inputs.mass",
        ("arithmetic",)),
    Bad("mass-unknown-unit", job(inputs={"mass": '"1200 kgs_of_steel"'}), "pump-p1",
        "inputs.mass", ("cannot read '1200 kgs_of_steel'",)),
    # ---- signs, non-finite values and the plugin's stated ranges (expected vs found)
    Bad("zero-mass", job(inputs={"mass": '"0 kg"'}), "pump-p1", "inputs.mass",
        ("greater than zero", "found 0 kg")),
    Bad("negative-mass", job(inputs={"mass": '"-5 kg"'}), "pump-p1", "inputs.mass",
        ("greater than zero", "found -5 kg")),
    Bad("zero-stiffness", job(inputs={"stiffness": '"0 kN/m"'}), "pump-p1",
        "inputs.stiffness", ("greater than zero", "found 0 N/m")),
    Bad("negative-stiffness", job(inputs={"stiffness": '"-350 kN/m"'}), "pump-p1",
        "inputs.stiffness", ("greater than zero", "found -350000 N/m")),
    Bad("negative-damping-ratio", job(inputs={"damping_ratio": "-0.1"}), "pump-p1",
        "inputs.damping_ratio", ("at least 0", "found -0.1")),
    Bad("negative-damping-coefficient",
        job(inputs={"damping_ratio": None, "damping_coefficient": '"-10 N*s/m"'}), "pump-p1",
        "inputs.damping_coefficient", ("at least 0", "found -10")),
    Bad("toml-nan-ratio", job(inputs={"damping_ratio": "nan"}), "pump-p1",
        "inputs.damping_ratio", ("finite", "found nan")),
    Bad("toml-inf-ratio", job(inputs={"damping_ratio": "inf"}), "pump-p1",
        "inputs.damping_ratio", ("finite", "found inf")),
    Bad("toml-minus-inf-ratio", job(inputs={"damping_ratio": "-inf"}), "pump-p1",
        "inputs.damping_ratio", ("finite", "found -inf")),
    Bad("toml-nan-mass", job(inputs={"mass": "nan"}), "pump-p1", "inputs.mass",
        ("unit of mass", "found the plain number nan")),
    Bad("string-nan-mass", job(inputs={"mass": '"nan kg"'}), "pump-p1", "inputs.mass",
        ("finite", "'nan kg'")),
    Bad("string-inf-stiffness", job(inputs={"stiffness": '"inf kN/m"'}), "pump-p1",
        "inputs.stiffness", ("finite", "'inf kN/m'")),
    Bad("overflowing-mass", job(inputs={"mass": '"1e400 kg"'}), "pump-p1", "inputs.mass",
        ("finite", "'1e400 kg'")),
    Bad("huge-integer-ratio", job(inputs={"damping_ratio": "1" + "0" * 400}), "pump-p1",
        "inputs.damping_ratio", ("finite",)),
    Bad("damping-ratio-above-range", job(inputs={"damping_ratio": "20"}), "pump-p1",
        "inputs.damping_ratio", ("at most 10", "found 20")),
    Bad("mass-above-range", job(inputs={"mass": '"1e9 kg"'}), "pump-p1", "inputs.mass",
        ("at most 1e+08 kg", "found 1e+09 kg")),
    Bad("displacement-above-range", job(inputs={"initial_displacement": '"20 m"'}), "pump-p1",
        "inputs.initial_displacement", ("at most 10 m", "found 20 m")),
    Bad("duration-above-range", job(inputs={"duration": '"2 h"'}), "pump-p1",
        "inputs.duration", ("at most 3600 s", "found 7200 s")),
    Bad("criterion-not-positive", job(criteria={"max_static_deflection": '"-5 mm"'}),
        "pump-p1", "criteria.max_static_deflection", ("greater than zero", "found -0.005 m")),
    # ---- conflicts across inputs (the plugin's own validation)
    Bad("two-damping-inputs", job(inputs={"damping_coefficient": '"2000 N*s/m"'}), "pump-p1",
        "inputs.damping_coefficient", ("damping_ratio", "damping_coefficient", "not both")),
    Bad("criteria-min-above-max",
        job(criteria={"min_natural_frequency": '"6 Hz"', "max_natural_frequency": '"5 Hz"'}),
        "pump-p1", "criteria.max_natural_frequency", ("above min_natural_frequency",)),
    Bad("absurd-time-history", job(inputs={"mass": '"1 kg"', "stiffness": '"1000 kN/m"',
                                           "duration": '"3000 s"'}), "pump-p1",
        "inputs.duration", ("natural periods", "limit is 1000")),
    # ---- calc ids
    Bad("duplicate-calc-id", job() + calc_block("pump-p1"), "pump-p1", "id",
        ("duplicate calc id 'pump-p1'",)),
    Bad("bad-calc-id", job(calc_id="Pump P1"), "Pump P1", "id", ("lowercase",)),
    Bad("calc-id-missing", job(calc_id=None), "#1", "id", ("'id' is missing",)),
    Bad("calc-id-not-text", job(calc_id=None, calc={"id": "7"}), "#1", "id",
        ("expected text", "found int 7")),
    Bad("calc-title-missing", job(calc={"title": None}), "pump-p1", "title",
        ("'title' is missing",)),
    Bad("calc-notes-too-long", job(calc={"notes": '"' + "n" * 5000 + '"'}), "pump-p1",
        "notes", ("5000 characters", "limit is")),
    Bad("calc-not-array", 'calc = "pump-p1"\n' + job().split("[[calc]]")[0], None, "calc",
        ("array of tables",)),
    Bad("no-calcs", job().split("[[calc]]")[0], None, "calc", ("no [[calc]]",)),
    # ---- the [package] table
    Bad("package-title-missing", job(package={"title": None}), None, "package.title",
        ("'title' is missing",)),
    Bad("package-job-number-missing", job(package={"job_number": None}), None,
        "package.job_number", ("'job_number' is missing",)),
    Bad("package-calc-number-empty", job(package={"calc_number": '""'}), None,
        "package.calc_number", ("empty",)),
    Bad("package-date-missing", job(package={"date": None}), None, "package.date",
        ("'date' is missing",)),
    Bad("package-title-not-text", job(package={"title": "42"}), None, "package.title",
        ("expected text", "found int 42")),
    Bad("bad-date-month-13", job(package={"date": '"2026-13-01"'}), None, "package.date",
        ("ISO date", "'2026-13-01'")),
    Bad("bad-date-words", job(package={"date": '"1 December 2026"'}), None, "package.date",
        ("ISO date", "'1 December 2026'")),
    Bad("calc-number-with-slash", job(package={"calc_number": '"QEP/2417/V/190"'}), None,
        "package.calc_number", ("cannot name a file", "QEP/2417/V/190")),
    Bad("revision-with-dots-only", job(package={"revision": '".."'}), None, "package.revision",
        ("cannot name a file",)),
    Bad("units-not-known", job(package={"units": '"metric"'}), None, "package.units",
        ('"SI" or "US"', "'metric'")),
    Bad("package-missing", job().split("[[calc]]", 1)[1].join(["[[calc]]", ""]), None,
        "package", ("missing [package]",)),
    Bad("history-without-current-revision",
        job(package={"revision": '"B"'}, tail="") .replace(
            "[[calc]]", '[[package.revision_history]]\nrevision = "A"\ndate = "2026-11-12"\n'
            'description = "First issue"\n\n[[calc]]', 1), None, "package.revision_history",
        ("no entry for the current revision 'B'",)),
    *_bytes_cases(),
]


def test_the_table_is_big_enough():
    assert len(BAD) >= 40
    assert len({b.id for b in BAD}) == len(BAD)


def _write(folder: Path, bad: Bad) -> Path:
    path = folder / "job.toml"
    if isinstance(bad.text, bytes):
        path.write_bytes(bad.text)
    else:
        path.write_text(bad.text, encoding="utf-8")
    return path


def _assert_names(err: str, path: Path, bad: Bad) -> None:
    lines = [ln for ln in err.splitlines() if ln.startswith("error: ")]
    assert lines, err
    assert all(ln.startswith(f"error: {path}") for ln in lines), err
    # one line must carry the whole story: file, calc, field and what was expected/found
    for ln in lines:
        if bad.calc is not None and f"calc '{bad.calc}'" not in ln:
            continue
        if bad.field is not None and f"field '{bad.field}'" not in ln:
            continue
        if all(s in ln for s in bad.says):
            break
    else:
        pytest.fail(f"no message names calc {bad.calc!r}, field {bad.field!r} and says"
                    f" {bad.says}:\n{err}")
    assert "Traceback" not in err


@pytest.mark.parametrize("bad", BAD, ids=[b.id for b in BAD])
def test_bad_job_build(bad, tmp_path, capsys):
    job_dir = tmp_path / "job"
    job_dir.mkdir()
    path = _write(job_dir, bad)
    out = tmp_path / "out"
    code = main(["build", str(path), "--out", str(out), "--no-cache"])
    cap = capsys.readouterr()
    assert code == 2, cap.err
    assert not out.exists() or not any(out.iterdir()), "nothing may be written"
    assert sorted(p.name for p in job_dir.iterdir()) == ["job.toml"]
    _assert_names(cap.err, path, bad)


@pytest.mark.parametrize("bad", [b for b in BAD if b.id in {
    "unknown-plugin", "toml-unclosed-string", "negative-mass", "not-utf8"}],
    ids=lambda b: b.id)
def test_bad_job_check(bad, tmp_path, capsys):
    path = _write(tmp_path, bad)
    assert main(["check", str(path)]) == 2
    _assert_names(capsys.readouterr().err, path, bad)


def test_three_problems_three_messages(tmp_path, capsys):
    text = job(package={"date": '"2026-02-30"'},
               inputs={"mass": '"-5 kg"', "stiffness": '"350 kg"'})
    path = tmp_path / "three.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    lines = [ln for ln in err.splitlines() if ln.startswith("error: ")]
    assert len(lines) == 3, err
    assert any("field 'package.date'" in ln for ln in lines)
    assert any("field 'inputs.mass'" in ln for ln in lines)
    assert any("field 'inputs.stiffness'" in ln for ln in lines)
    assert "3 problems; nothing was written" in err
    assert not (tmp_path / "out").exists()


def test_problems_in_two_calcs_are_all_reported(tmp_path, capsys):
    text = job(inputs={"mass": '"0 kg"'}) + calc_block("pump-p2", mass='"12 N"')
    path = tmp_path / "two.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "calc 'pump-p1': field 'inputs.mass'" in err
    assert "calc 'pump-p2': field 'inputs.mass'" in err


def _forced_response_inputs() -> set[str]:
    from reportgen.calc.plugin_set import load_plugin_set

    reg = load_plugin_set().get("forced_response")
    return set() if reg is None else {s.name for s in reg.calc_type.inputs}


@pytest.mark.parametrize("extra,field", [
    ({"unbalance": '"0.01 kg*m"', "speed": '"1500 rpm"'}, "inputs.unbalance"),
    ({"base_displacement": '"0.1 mm"'}, "inputs.base_displacement"),
])
def test_forced_response_two_excitations(extra, field, tmp_path, capsys):
    """Two excitations at once in the forced_response plugin."""
    needed = {"force_amplitude", "frequency", *extra}
    assert needed <= _forced_response_inputs()
    text = job(plugin="forced_response", inputs={
        "damping_ratio": "0.05", "force_amplitude": '"500 N"', "frequency": '"8 Hz"', **extra})
    path = tmp_path / "fr.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert f"calc 'pump-p1': field '{field}'" in err, err
    assert "force_amplitude" in err and "one excitation" in err, err
    assert not (tmp_path / "out").exists()


# ---------------------------------------------------------------- real processes


def _run(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONDONTWRITEBYTECODE": "1"}
    return subprocess.run([sys.executable, "-m", "reportgen.cli", *args], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=120)


@pytest.mark.parametrize("case_id", ["toml-unclosed-string", "two-damping-inputs",
                                     "mass-arithmetic"])
def test_bad_job_subprocess(case_id, tmp_path):
    bad = next(b for b in BAD if b.id == case_id)
    path = _write(tmp_path, bad)
    proc = _run("build", str(path), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr
    assert not (tmp_path / "out").exists()
    _assert_names(proc.stderr, path, bad)


def test_missing_job_file_subprocess(tmp_path):
    proc = _run("build", str(tmp_path / "nope.toml"), "--out", str(tmp_path / "out"),
                cwd=tmp_path)
    assert proc.returncode == 2
    assert "nope.toml" in proc.stderr and "Traceback" not in proc.stderr


def test_device_is_not_read(tmp_path, capsys):
    # /dev/zero reports size 0 and never ends: it must be refused, not read
    assert main(["check", "/dev/zero"]) == 2
    assert "not a regular file" in capsys.readouterr().err


def test_out_folder_that_is_a_file(tmp_path, capsys):
    path = tmp_path / "job.toml"
    path.write_text(job(), encoding="utf-8")
    (tmp_path / "out").write_text("not a folder")
    assert main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "out" in err and "folder" in err and "Traceback" not in err
    assert (tmp_path / "out").read_text() == "not a folder"


# ---------------------------------------------------------------- check and schema


def test_check_never_builds(tmp_path):
    good = tmp_path / "good.toml"
    good.write_text(job(), encoding="utf-8")
    bad = tmp_path / "bad.toml"
    bad.write_text(job(inputs={"mass": '"0 kg"'}), encoding="utf-8")
    code = (
        "import sys\n"
        "from reportgen.cli import main\n"
        "codes = [main(['check', sys.argv[1]]), main(['check', sys.argv[2]])]\n"
        "assert 'weasyprint' not in sys.modules, 'check imported the renderer'\n"
        "assert 'matplotlib' not in sys.modules, 'check imported matplotlib'\n"
        "print(codes)\n")
    proc = subprocess.run([sys.executable, "-c", code, str(good), str(bad)], cwd=tmp_path,
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip().splitlines()[-1] == "[0, 2]"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad.toml", "good.toml"]


def _schema(capsys) -> dict:
    assert main(["schema"]) == 0
    return json.loads(capsys.readouterr().out)


def test_schema_is_valid_json_schema_and_accepts_the_sample_jobs(capsys):
    import tomllib

    jsonschema = pytest.importorskip("jsonschema")
    schema = _schema(capsys)
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    samples = sorted((REPO / "sample_jobs").glob("*.toml"))
    assert samples
    from reportgen.calc.plugin_set import load_plugin_set

    known = set(load_plugin_set().names())
    for sample in samples:
        data = tomllib.loads(sample.read_text(encoding="utf-8"))
        if not {c.get("plugin") for c in data.get("calc", [])} <= known:
            continue  # a sample for a plugin that is not installed here
        errors = [e.message for e in validator.iter_errors(data)]
        assert not errors, f"{sample.name}: {errors}"


def test_schema_rejects_what_check_rejects(capsys):
    import tomllib

    jsonschema = pytest.importorskip("jsonschema")
    validator = jsonschema.Draft202012Validator(_schema(capsys))
    for case_id in ("unknown-input", "missing-mass", "unknown-plugin", "unknown-package-field",
                    "calc-id-not-text", "package-title-missing"):
        data = tomllib.loads(next(b for b in BAD if b.id == case_id).text)
        assert list(validator.iter_errors(data)), case_id


def test_schema_lists_every_installed_calc_type_and_its_inputs(capsys):
    from reportgen.calc.plugin_set import load_plugin_set

    schema = _schema(capsys)
    plugins = load_plugin_set()
    calc = schema["properties"]["calc"]["items"]
    assert sorted(calc["properties"]["plugin"]["enum"]) == plugins.names()
    text = json.dumps(schema)
    for name in plugins.names():
        for spec in plugins.get(name).calc_type.inputs:
            assert f'"{spec.name}"' in text
