"""Packaging, plugins and cache: what a fresh machine and a long-lived one see.

The wheel is built by calling the build backend that pyproject.toml declares, exactly as
pip or `python -m build` would (PEP 517 hooks), without build isolation: setuptools from
the test extras is used, so no index is asked.
"""

from __future__ import annotations

import ast
import importlib
import os
import shutil
import subprocess
import sys
import time
import tomllib
import zipfile
from pathlib import Path

import pytest

from reportgen import store as rg_cache
from reportgen.calc.plugin_set import load_plugin_set
from reportgen.cli import main

REPO = Path(__file__).resolve().parent.parent
FIXTURES = Path(__file__).resolve().parent / "plugins"
SKIP = shutil.ignore_patterns(".git", ".venv", "build", "dist", "*.egg-info", "__pycache__",
                              ".cache-rg", ".hypothesis", ".ruff_cache", "out", "tests",
                              "benchmarks")

BUILD_WHEEL = """
import importlib, sys, tomllib
system = tomllib.load(open("pyproject.toml", "rb"))["build-system"]
sys.path[:0] = system.get("backend-path", [])
backend = importlib.import_module(system["build-backend"])
print(backend.build_wheel(sys.argv[1]))
"""


@pytest.fixture(scope="module")
def wheel(tmp_path_factory) -> tuple[Path, str]:
    """A wheel of a copy of the source whose in-tree build/lib holds a stale module."""
    root = tmp_path_factory.mktemp("pkg")
    src = root / "src"
    shutil.copytree(REPO, src, ignore=SKIP)
    stale = src / "build" / "lib" / "reportgen"
    stale.mkdir(parents=True)
    (stale / "stale_leftover.py").write_text("LEFT = 'from an old build'\n")
    out = root / "dist"
    out.mkdir()
    env = {k: v for k, v in os.environ.items() if k != "DIST_EXTRA_CONFIG"}
    run = subprocess.run([sys.executable, "-c", BUILD_WHEEL, str(out)], cwd=src, env=env,
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stdout + run.stderr
    return out / run.stdout.strip().splitlines()[-1], run.stdout + run.stderr


def test_stale_build_folder_files_do_not_ship(wheel):
    path, _ = wheel
    names = zipfile.ZipFile(path).namelist()
    assert "reportgen/cli/__init__.py" in names
    assert not [n for n in names if "stale_leftover" in n]


def test_license_is_an_spdx_expression_with_its_file(wheel):
    # PEP 639: License-Expression and License-File replace the deprecated table form
    path, log = wheel
    z = zipfile.ZipFile(path)
    meta = next(n for n in z.namelist() if n.endswith(".dist-info/METADATA"))
    lines = z.read(meta).decode().splitlines()
    assert "License-Expression: MIT" in lines
    assert "License-File: LICENSE" in lines
    assert any(n.endswith(".dist-info/licenses/LICENSE") for n in z.namelist())
    assert "the reportgen developers" in (REPO / "LICENSE").read_text()
    project = tomllib.loads((REPO / "pyproject.toml").read_text())
    assert project["project"]["license"] == "MIT"


def test_sample_data_ships_as_declared_packages_without_warnings(wheel):
    path, log = wheel
    names = set(zipfile.ZipFile(path).namelist())
    for rel in ("reportgen_samples/history/qep-101-pump-p1-revA.toml",
                "reportgen_samples/quillmoor_theme/cover.html",
                "reportgen_samples/quillmoor_theme/logo.svg",
                "reportgen_samples/qep-101-pump-p1.toml"):
        assert rel in names, rel
    for sample in (REPO / "sample_jobs").rglob("*"):  # every sample file ships
        if sample.is_file() and "__pycache__" not in sample.parts:
            rel = "reportgen_samples/" + sample.relative_to(REPO / "sample_jobs").as_posix()
            assert rel in names, rel
    # setuptools' complaints: an undeclared data package, a deprecated license table
    assert "is absent from the `packages` configuration" not in log
    assert "SetuptoolsDeprecationWarning" not in log
    assert "License classifiers are deprecated" not in log


# ---------------------------------------------------------------- new-plugin


def _third_party_imports(folder: Path) -> set[str]:
    found = set()
    for py in folder.rglob("*.py"):
        for node in ast.walk(ast.parse(py.read_text())):
            if isinstance(node, ast.Import):
                found |= {a.name.split(".")[0] for a in node.names}
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                found.add(node.module.split(".")[0])
    return {m for m in found if m not in sys.stdlib_module_names}


def test_new_plugin_declares_what_it_imports_and_names_a_local_path(tmp_path, monkeypatch,
                                                                    capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["new-plugin", "qep_pack_check"]) == 0
    out = capsys.readouterr().out
    # a bare name would send pip to a package index for an in-house name
    assert "pip install -e ./qep_pack_check" in out
    assert "pip install qep_pack_check" not in out and "pip install -e qep_pack" not in out
    target = tmp_path / "qep_pack_check"
    project = tomllib.loads((target / "pyproject.toml").read_text())["project"]
    declared = {d.split(">")[0].split("=")[0].split("<")[0].strip().lower()
                for d in project["dependencies"]}
    imported = _third_party_imports(target / "src") - {"qep_pack_check"}
    assert imported == {"numpy", "scipy", "reportgen"}
    assert imported <= declared, imported - declared
    test_imports = _third_party_imports(target / "tests") - {"qep_pack_check"}
    assert test_imports <= declared | {"pytest"}
    assert any(t.startswith("pytest") for t in project["optional-dependencies"]["test"])


def test_new_plugin_with_an_absolute_dir_prints_that_path(tmp_path, capsys):
    target = tmp_path / "elsewhere"
    assert main(["new-plugin", "qep_pack_abs", "--dir", str(target)]) == 0
    assert f"pip install -e {target}\n" in capsys.readouterr().out


# ---------------------------------------------------------------- REPORTGEN_PLUGINS_DISABLE


def _installed_fixture(tmp_path: Path, monkeypatch) -> Path:
    site = tmp_path / "site"
    info = site / "rg_side_effect-0.1.dist-info"
    info.mkdir(parents=True)
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: rg-side-effect\n"
                                   "Version: 0.1\n")
    (info / "entry_points.txt").write_text("[reportgen.calcs]\n"
                                           "side_effect = import_side_effect\n")
    monkeypatch.syspath_prepend(str(site))
    monkeypatch.syspath_prepend(str(FIXTURES))
    mark = tmp_path / "imported.txt"
    monkeypatch.setenv("RG_TEST_IMPORT_MARK", str(mark))
    monkeypatch.delitem(sys.modules, "import_side_effect", raising=False)
    importlib.invalidate_caches()
    return mark


def test_a_disabled_plugin_is_never_imported(tmp_path, monkeypatch):
    mark = _installed_fixture(tmp_path, monkeypatch)
    monkeypatch.setenv("REPORTGEN_PLUGINS_DISABLE", "other, side_effect")
    plugins = load_plugin_set()
    assert not mark.exists(), "the disabled plugin's module was imported"
    assert "import_side_effect" not in sys.modules
    assert "free_vibration" in plugins.calcs  # the others still load
    assert "side_effect" not in plugins.packages


def test_an_enabled_fixture_plugin_is_imported(tmp_path, monkeypatch):
    # the control: without the variable the same fixture is imported and registered
    mark = _installed_fixture(tmp_path, monkeypatch)
    monkeypatch.delenv("REPORTGEN_PLUGINS_DISABLE", raising=False)
    plugins = load_plugin_set()
    assert mark.read_text() == "imported\n"
    assert plugins.packages["side_effect"] == ("rg-side-effect", "0.1")
    sys.modules.pop("import_side_effect", None)


def test_plugins_disable_is_documented():
    for doc in ("README.md", "DEVELOPERS.md"):
        assert "REPORTGEN_PLUGINS_DISABLE" in (REPO / doc).read_text(), doc


# ---------------------------------------------------------------- the cache


def test_default_cache_folder_comes_from_platformdirs(monkeypatch, tmp_path):
    import platformdirs

    monkeypatch.delenv("REPORTGEN_CACHE_DIR", raising=False)
    monkeypatch.setattr(platformdirs, "user_cache_dir",
                        lambda name, appauthor=None, **k: str(tmp_path / f"pd-{name}"))
    assert rg_cache.default_cache_dir() == tmp_path / "pd-reportgen"
    monkeypatch.setenv("REPORTGEN_CACHE_DIR", str(tmp_path / "mine"))
    assert rg_cache.default_cache_dir() == tmp_path / "mine"  # the variable comes first


def _entry(folder: Path, name: str, size: int, age_s: float) -> Path:
    path = folder / name[:2] / name
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_bytes(b"x" * size)
    t = time.time() - age_s
    os.utime(path, (t, t))
    return path


def test_prune_deletes_least_recently_used_down_to_80_percent(tmp_path):
    folder = tmp_path / "c"
    # ten 100 kB entries, entry 0 used longest ago; cap 800 kB -> keep at most 640 kB
    paths = [_entry(folder, f"{i:02d}aa.svg", 100_000, age_s=1000 - i) for i in range(10)]
    freed = rg_cache.prune_cache(folder, max_bytes=800_000)
    kept = [p for p in paths if p.exists()]
    assert freed == 400_000
    assert kept == paths[4:]  # the six most recently used survive
    assert rg_cache.prune_cache(folder, max_bytes=800_000) == 0  # under the cap: no work


def test_a_cache_hit_marks_the_entry_as_used(tmp_path):
    import hashlib

    from reportgen.store import Store

    c = Store(tmp_path, ".svg")
    key = hashlib.sha256(b"k").hexdigest()
    c.put(key, b"<svg/>")
    path = tmp_path / key[:2] / f"{key}.svg"
    os.utime(path, (1_000_000, 1_000_000))
    assert c.get(key) == b"<svg/>"
    assert path.stat().st_mtime > time.time() - 60


def test_the_cache_max_variable(monkeypatch, capsys):
    monkeypatch.setenv("REPORTGEN_CACHE_MAX_MB", "2.5")
    assert rg_cache.cache_max_bytes() == 2_500_000
    monkeypatch.delenv("REPORTGEN_CACHE_MAX_MB")
    assert rg_cache.cache_max_bytes() == 500_000_000
    monkeypatch.setenv("REPORTGEN_CACHE_MAX_MB", "lots")
    assert rg_cache.cache_max_bytes() == 500_000_000
    assert "REPORTGEN_CACHE_MAX_MB" in capsys.readouterr().err


def test_a_build_keeps_the_cache_under_its_cap(tmp_path):
    cache = tmp_path / "cache"
    old = [_entry(cache, f"{i:02d}old.svg", 200_000, age_s=86_400) for i in range(10)]
    env = {**os.environ, "REPORTGEN_CACHE_DIR": str(cache), "REPORTGEN_CACHE_MAX_MB": "1",
           "MPLBACKEND": "Agg"}
    run = subprocess.run([sys.executable, "-m", "reportgen.cli", "build",
                          str(REPO / "sample_jobs" / "qep-101-pump-p1.toml"), "--out",
                          str(tmp_path / "out"), "--jobs", "1"], env=env,
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    total = sum(p.stat().st_size for p in cache.rglob("*") if p.is_file())
    assert total <= 800_000
    assert not any(p.exists() for p in old[:5])  # the oldest went first
    fresh = [p for p in cache.rglob("*.svg") if "old" not in p.name]
    assert fresh, "this build's own figures, just written, are kept"
