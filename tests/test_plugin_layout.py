"""The layout of the calc-type folders under plugins/ (issue 14, point 3), read from the source.

A calc-type folder is one with a ``verify.py`` (the independent second method). Every import
of every module, including imports inside functions, is parsed with ``ast``:
- ``verify.py`` imports none of its own package's modules and not the shared mechanics (the
  second method must not share the first method's formulas);
- no calc-type folder imports another; the shared mechanics imports no calc type;
- ``method.py`` imports neither the document model nor the Sheet (its physics is tested
  alone);
- no module of a calc type is longer than MAX_LINES, apart from the listed exceptions;
- a calc type registered through the ``reportgen.calcs`` entry points has the standard
  modules, so a new one can start as a copy of any of them.
"""

from __future__ import annotations

import ast
import sys
import tomllib
from dataclasses import dataclass
from pathlib import Path

import pytest
from conftest import REPO

import reportgen.model

PLUGINS = REPO / "plugins"
PACKAGE = "reportgen_plugins"
SHARED = f"{PACKAGE}.mechanics"
MAX_LINES = 400
#: Modules allowed past MAX_LINES, each with its reason. Both are phase-1 physics modules of a
#: calc type not yet wired into the build, owned by the work that wires it (split it then).
LONG_MODULES = {
    "rigid_body_mounts/catalogue.py": "phase-1 module (isolator catalogue reader and"
                                      " selection), to be split when the calc type is wired",
    "rigid_body_mounts/method.py": "phase-1 module (rigid-body model and modes), to be split"
                                   " when the calc type is wired",
}
#: What every registered calc type's folder holds (DEVELOPERS.md, "one folder per calc type").
STANDARD_MODULES = ("__init__.py", "method.py", "checks.py", "figures.py", "text.py",
                    "verify.py")
#: Names a method module may not import: the document model's and the Sheet.
MODEL_NAMES = frozenset(n for n in dir(reportgen.model) if not n.startswith("_")) | {"Sheet"}


@dataclass(frozen=True)
class Import:
    module: str  # absolute dotted name ("" for a bare relative "from . import x")
    names: tuple[str, ...]  # the names of a from-import
    line: int


def imports_of(source: str, package: str) -> list[Import]:
    """Every import in ``source`` (at any depth), relative ones resolved against the
    module's ``package`` (dotted)."""
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found += [Import(a.name, (), node.lineno) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parts = package.split(".")
                keep = len(parts) - (node.level - 1)
                base = ".".join(parts[:keep] + ([base] if base else []))
            names = tuple(a.name for a in node.names)
            found.append(Import(base, names, node.lineno))
            # "from pkg import sub" may import a submodule: record pkg.sub too
            found += [Import(f"{base}.{n}", (), node.lineno) for n in names]
    return found


def _within(module: str, package: str) -> bool:
    return module == package or module.startswith(package + ".")


def calc_type_folders() -> list[Path]:
    return sorted(d for d in PLUGINS.iterdir() if (d / "verify.py").is_file())


def _modules(folder: Path) -> list[Path]:
    return sorted(folder.rglob("*.py"))


def _package_of(path: Path) -> str:
    rel = path.relative_to(PLUGINS).with_suffix("")
    parts = [PACKAGE, *rel.parts]
    return ".".join(parts[:-1])


def layout_problems(folder: Path, calc_names: set[str]) -> list[str]:
    """Every breach of the rules above in one calc-type folder, as readable lines."""
    own = f"{PACKAGE}.{folder.name}"
    others = {f"{PACKAGE}.{n}" for n in calc_names - {folder.name}}
    problems = []
    for path in _modules(folder):
        rel = path.relative_to(PLUGINS).as_posix()
        source = path.read_text(encoding="utf-8")
        lines = len(source.splitlines())
        if lines > MAX_LINES and rel not in LONG_MODULES:
            problems.append(f"{rel}: {lines} lines (at most {MAX_LINES})")
        for imp in imports_of(source, _package_of(path)):
            where = f"{rel}:{imp.line}"
            for other in others:
                if _within(imp.module, other):
                    problems.append(f"{where}: imports another calc type ({imp.module})")
            if path.name == "verify.py" and path.parent == folder:
                if _within(imp.module, own):
                    problems.append(f"{where}: verify.py imports its own package's"
                                    f" {imp.module}")
                if _within(imp.module, SHARED):
                    problems.append(f"{where}: verify.py imports the shared mechanics")
            if path.name == "method.py":
                if _within(imp.module, "reportgen.model"):
                    problems.append(f"{where}: method.py imports the document model")
                if imp.module in ("reportgen", "reportgen.calc") and (
                        set(imp.names) & MODEL_NAMES):
                    problems.append(f"{where}: method.py imports"
                                    f" {sorted(set(imp.names) & MODEL_NAMES)}")
    return problems


# ------------------------------------------------------------------ the tree as it is


def test_there_are_calc_type_folders():
    names = {d.name for d in calc_type_folders()}
    assert {"free_vibration", "forced_response", "isolation"} <= names
    assert not (PLUGINS / "mechanics" / "verify.py").exists()  # shared, not a calc type


@pytest.mark.parametrize("folder", calc_type_folders(), ids=lambda d: d.name)
def test_calc_type_folder_follows_the_layout(folder):
    names = {d.name for d in calc_type_folders()}
    assert layout_problems(folder, names) == []


def test_the_shared_mechanics_imports_no_calc_type():
    names = {f"{PACKAGE}.{d.name}" for d in calc_type_folders()}
    for path in _modules(PLUGINS / "mechanics"):
        for imp in imports_of(path.read_text(encoding="utf-8"), _package_of(path)):
            assert not any(_within(imp.module, n) for n in names), (path, imp)


def test_listed_long_modules_exist_and_are_long():
    # an exception that no longer applies must leave the list
    for rel in LONG_MODULES:
        path = PLUGINS / rel
        assert path.is_file(), rel
        assert len(path.read_text(encoding="utf-8").splitlines()) > MAX_LINES, rel


def test_registered_calc_types_have_the_standard_modules():
    project = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))
    entry = project["project"]["entry-points"]["reportgen.calcs"]
    packages = project["tool"]["setuptools"]["packages"]
    assert SHARED in packages
    for name, target in entry.items():
        if target == f"{PACKAGE}.{name}.register":  # a hook-only plugin: no calc type
            assert f"{PACKAGE}.{name}" in packages
            continue
        assert target == f"{PACKAGE}.{name}"
        assert target in packages, f"{target} missing from [tool.setuptools] packages"
        folder = PLUGINS / name
        missing = [m for m in STANDARD_MODULES if not (folder / m).is_file()]
        assert not missing, f"{name}: missing {missing}"


# ------------------------------------------------------------------ the rules can fail


def _folder(tmp_path: Path, name: str, files: dict[str, str]) -> Path:
    folder = tmp_path / name
    folder.mkdir()
    for file, text in files.items():
        (folder / file).write_text(text, encoding="utf-8")
    return folder


@pytest.fixture
def sandbox(tmp_path, monkeypatch):
    monkeypatch.setattr(sys.modules[__name__], "PLUGINS", tmp_path)
    return tmp_path


@pytest.mark.parametrize("verify_source, expected", [
    ("def f():\n    from .method import g\n", "verify.py imports its own package's"),
    ("from . import method\n", "verify.py imports its own package's"),
    ("import reportgen_plugins.calc_a.method as m\n", "verify.py imports its own package's"),
    ("from reportgen_plugins.mechanics import transmissibility\n", "shared mechanics"),
    ("from reportgen_plugins import mechanics\n", "shared mechanics"),
    ("from reportgen_plugins.calc_b import helper\n", "imports another calc type"),
    ("from ..calc_b.method import x\n", "imports another calc type"),
])
def test_a_breach_in_verify_is_reported(sandbox, verify_source, expected):
    folder = _folder(sandbox, "calc_a", {"__init__.py": "", "verify.py": verify_source})
    _folder(sandbox, "calc_b", {"__init__.py": "", "verify.py": ""})
    problems = layout_problems(folder, {"calc_a", "calc_b"})
    assert any(expected in p for p in problems), problems


@pytest.mark.parametrize("method_source", [
    "from reportgen import Sheet\n",
    "from reportgen.calc import Sheet\n",
    "from reportgen import Figure, InputSpec\n",
    "import reportgen.model\n",
    "def f():\n    from reportgen.model import Equation\n",
])
def test_a_method_that_reaches_the_document_is_reported(sandbox, method_source):
    folder = _folder(sandbox, "calc_a", {"method.py": method_source, "verify.py": ""})
    assert any("method.py imports" in p for p in layout_problems(folder, {"calc_a"}))


def test_a_long_module_and_a_clean_folder(sandbox):
    long = "x = 1\n" * (MAX_LINES + 1)
    folder = _folder(sandbox, "calc_a", {"figures.py": long, "verify.py": "import numpy\n",
                                         "method.py": "from reportgen.units import"
                                                      " STANDARD_GRAVITY\n"})
    assert layout_problems(folder, {"calc_a"}) == [
        f"calc_a/figures.py: {MAX_LINES + 1} lines (at most {MAX_LINES})"]
    (folder / "figures.py").write_text("x = 1\n" * MAX_LINES, encoding="utf-8")
    assert layout_problems(folder, {"calc_a"}) == []
