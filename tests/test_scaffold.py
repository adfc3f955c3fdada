"""``reportgen new-plugin``: name checks, the files written, the example calc, the round trip.

The round trip (pip install, pytest, build in a fresh virtual environment) is the slow test.
"""

from __future__ import annotations

import importlib
import importlib.util
import os
import site
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
from conftest import assert_case

from reportgen import cli
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import scaffold
from reportgen.job.load import load_job
from reportgen.testing import assert_calc_contract, compute, make_job, result


def scaffold_into(tmp_path: Path, name: str) -> Path:
    target = tmp_path / name
    assert cli.main(["new-plugin", name, "--dir", str(target)]) == 0
    return target


@pytest.fixture
def imported(monkeypatch):
    """``imported(target, name)``: import a scaffolded plugin's calc module from its src/."""
    loaded = []

    def load(target: Path, name: str):
        monkeypatch.syspath_prepend(str(target / "src"))
        loaded.append(name)
        return importlib.import_module(f"{name}.calc")

    yield load
    for name in loaded:
        for mod in [m for m in sys.modules if m == name or m.startswith(name + ".")]:
            del sys.modules[mod]


@pytest.mark.parametrize(("name", "why"), [
    ("MountCheck", "lowercase Python identifier"),
    ("1st_check", "lowercase Python identifier"),
    ("mount-check", "lowercase Python identifier"),
    ("class", "Python keyword"),
    ("mount__check", "double underscore"),
    ("json", "importable Python module"),
    ("free_vibration", "calc type named 'free_vibration' is already installed"),
    ("m" * 41, "keep it to 40"),
])
def test_bad_names_are_refused(tmp_path, capsys, name, why):
    assert cli.main(["new-plugin", name, "--dir", str(tmp_path / "p")]) == 2
    err = capsys.readouterr().err
    assert why in err and "NAME" in err and "Traceback" not in err
    assert list(tmp_path.iterdir()) == []


def test_a_non_empty_folder_or_a_file_is_refused(tmp_path, capsys):
    folder = tmp_path / "taken"
    folder.mkdir()
    (folder / "notes.txt").write_text("keep me", encoding="utf-8")
    assert cli.main(["new-plugin", "qep_taken", "--dir", str(folder)]) == 2
    assert "not empty" in capsys.readouterr().err
    assert [p.name for p in folder.iterdir()] == ["notes.txt"]
    (tmp_path / "afile").write_text("", encoding="utf-8")
    assert cli.main(["new-plugin", "qep_taken", "--dir", str(tmp_path / "afile")]) == 2
    assert "is a file" in capsys.readouterr().err


def test_an_empty_folder_is_filled(tmp_path):
    (tmp_path / "qep_empty").mkdir()
    target = scaffold_into(tmp_path, "qep_empty")
    assert (target / "pyproject.toml").is_file()
    assert [p.name for p in tmp_path.iterdir()] == ["qep_empty"]  # no staging left over


def test_default_folder_is_the_name(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert cli.main(["new-plugin", "qep_here"]) == 0
    assert (tmp_path / "qep_here" / "src" / "qep_here" / "calc.py").is_file()


def test_a_failure_while_writing_leaves_nothing(tmp_path, monkeypatch):
    monkeypatch.setattr(scaffold, "_FILES", {"a.txt": "fine", "b.txt": "$not_a_placeholder"})
    with pytest.raises(KeyError):
        scaffold.new_plugin("qep_half", tmp_path / "qep_half")
    assert list(tmp_path.iterdir()) == []


def test_files_of_the_package(tmp_path):
    target = scaffold_into(tmp_path, "qep_files")
    names = sorted(str(p.relative_to(target)) for p in target.rglob("*") if p.is_file())
    assert names == [".gitignore", "README.md", "example_job.toml", "pyproject.toml",
                     "src/qep_files/__init__.py", "src/qep_files/calc.py",
                     "tests/test_qep_files.py"]
    meta = tomllib.loads((target / "pyproject.toml").read_text(encoding="utf-8"))
    assert meta["project"]["name"] == "qep-files"
    assert meta["project"]["entry-points"]["reportgen.calcs"] == {"qep_files": "qep_files.calc"}
    assert any(d.startswith("reportgen") for d in meta["project"]["dependencies"])
    assert meta["build-system"]["build-backend"] == "setuptools.build_meta"
    test_text = (target / "tests" / "test_qep_files.py").read_text(encoding="utf-8")
    assert "assert_calc_contract" in test_text and "rg_plugins" in test_text
    assert not (target / "tests" / "conftest.py").exists()  # the kit's fixtures suffice
    for path in target.rglob("*.py"):
        compile(path.read_text(encoding="utf-8"), str(path), "exec")
    job = tomllib.loads((target / "example_job.toml").read_text(encoding="utf-8"))
    assert job["calc"][0]["plugin"] == "qep_files"
    calc = (target / "src" / "qep_files" / "calc.py").read_text(encoding="utf-8")
    assert "Figure(" in calc and "s.check(" in calc and "def verify" in calc
    assert "isolator maker's rated" in calc and "Seismic" in calc  # the isolator cautions


def test_scaffolded_calc_meets_the_contract(tmp_path, imported):
    target = scaffold_into(tmp_path, "qep_contract")
    module = imported(target, "qep_contract")
    plugins = load_plugin_set(extra=[("qep_contract", module)])
    job = load_job(target / "example_job.toml", plugins)
    (spec,) = job.calcs
    table = {"inputs": {"mass": "620 kg", "mounts": 4, "mount_stiffness": "60 kN/m"},
             "criteria": {"rated_load": "2 kN"}}
    assert spec.inputs == {"mass": 620.0, "mounts": 4, "mount_stiffness": 60e3}
    assert_calc_contract(module.QepContract(), table, tmp_path / "c", plugins=plugins,
                         pdf=False)


@pytest.mark.parametrize("mm", [1, 5, 25])
def test_scaffolded_calc_against_the_static_deflection_case(tmp_path, imported, check_cases,
                                                            mm):
    # A6 (Thomson & Dahleh 5th ed., Ch. 2: f_n = sqrt(g/delta_st)/2pi): choose the mount
    # stiffness so that 1000 kg on 4 mounts deflects exactly `mm`.
    case = check_cases["A6_static_deflection_natural_frequency"]
    target = scaffold_into(tmp_path, "qep_case_a6")
    plugins = load_plugin_set(extra=[("qep_case_a6", imported(target, "qep_case_a6"))])
    k = 1000 * 9.80665 / (4 * mm / 1000)
    doc = compute(make_job({"plugin": "qep_case_a6", "inputs": {
        "mass": "1000 kg", "mounts": 4, "mount_stiffness": f"{k!r} N/m"},
        "criteria": {"rated_load": "3 kN"}}), plugins)
    assert result(doc, "static_deflection") == pytest.approx(mm / 1000, rel=1e-12)
    assert_case(result(doc, "natural_frequency"), case, f"f_n_for_delta_{mm}mm")
    # 1000 kg x 9.80665 / 4 = 2451.66 N on each mount, within the 3 kN rating
    (check,) = doc.sections[0].checks
    assert check.id == "mount-load" and check.status == "pass"
    assert result(doc, "load_per_mount") == pytest.approx(2451.6625, rel=1e-12)
    assert all(v.agrees for v in doc.sections[0].verification)


# ------------------------------------------------------------------ the round trip (slow)


def _can_build_wheels_offline() -> bool:
    """setuptools before 70.1 needs the separate `wheel` package to build a wheel."""
    from importlib import metadata

    try:  # not imported: importing setuptools warns about distutils on some versions
        version = metadata.version("setuptools")
    except metadata.PackageNotFoundError:
        return False
    major, minor = (int(x) for x in version.split(".")[:2])
    return (major, minor) >= (70, 1) or importlib.util.find_spec("wheel") is not None


def fresh_venv(path: Path) -> Path:
    """A new virtual environment that sees this interpreter's packages (reportgen and its
    heavy dependencies) without reinstalling them."""
    with_pip = importlib.util.find_spec("pip") is None
    cmd = [sys.executable, "-m", "venv", "--system-site-packages", str(path)]
    subprocess.run(cmd if with_pip else [*cmd, "--without-pip"], check=True, timeout=120)
    python = path / "bin" / "python"
    if sys.prefix != sys.base_prefix:
        # We run inside a venv: --system-site-packages reaches the base interpreter's
        # site-packages, not ours, so add ours through a .pth line (which also runs the
        # .pth files there, such as an editable reportgen's).
        purelib = subprocess.run(
            [python, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
            check=True, capture_output=True, text=True, timeout=60).stdout.strip()
        dirs = [d for d in site.getsitepackages() if os.path.isdir(d)]
        line = "import site; " + "; ".join(f"site.addsitedir({d!r})" for d in dirs)
        Path(purelib, "_reportgen_parent_site.pth").write_text(line + "\n", encoding="utf-8")
    return python


@pytest.mark.slow
def test_round_trip_in_a_fresh_virtual_environment(tmp_path):
    name = "qep_round_trip"
    target = scaffold_into(tmp_path, name)
    python = fresh_venv(tmp_path / "venv")
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME")}
    env["REPORTGEN_CACHE_DIR"] = str(tmp_path / "cache")

    def run(*args: str, cwd: Path = tmp_path) -> subprocess.CompletedProcess:
        return subprocess.run([str(python), *args], cwd=cwd, env=env, capture_output=True,
                              text=True, timeout=300)

    # build isolation would fetch setuptools from an index; avoid it where we can
    isolation = ["--no-build-isolation"] if _can_build_wheels_offline() else []
    pip = run("-m", "pip", "install", "--no-deps", *isolation, str(target))
    assert pip.returncode == 0, pip.stdout + pip.stderr
    where = run("-c", f"import {name}; print({name}.__file__)")
    assert where.stdout.strip().startswith(str(tmp_path / "venv")), where  # not the source

    tests = run("-m", "pytest", "-q", "-p", "no:cacheprovider", str(target), cwd=target)
    assert tests.returncode == 0, tests.stdout + tests.stderr
    assert "4 passed" in tests.stdout

    listed = run("-m", "reportgen.cli", "plugins")
    assert listed.returncode == 0, listed.stderr
    assert f"{name}  0.1.0  (package qep-round-trip 0.1.0, plugin '{name}'" in listed.stdout

    out = tmp_path / "out"
    built = run("-m", "reportgen.cli", "build", str(target / "example_job.toml"), "--out",
                str(out))
    assert built.returncode == 0, built.stdout + built.stderr
    pdf = out / "QEP-2417-V-190-A.pdf"
    assert pdf.read_bytes().startswith(b"%PDF")
    assert (out / "QEP-2417-V-190-A.results.json").is_file()
