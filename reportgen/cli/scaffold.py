"""``reportgen new-plugin NAME``: write a pip-installable in-house calc plugin package.

The package holds one small, verified example calc, its tests (using the test kit), an
example job and a README; it is written into a temporary folder and renamed into place.
"""

from __future__ import annotations

import importlib.util
import keyword
import os
import re
import shutil
import tempfile
from pathlib import Path
from string import Template

from reportgen.errors import ExitCode, JobError, Problem

__all__ = ["new_plugin", "plugin_files", "validate_name"]

_NAME = re.compile(r"[a-z][a-z0-9_]*\Z")
MAX_NAME = 40


def validate_name(name: str) -> str:
    """Why ``name`` cannot name a new plugin, or '' when it can."""
    if not _NAME.match(name):
        return ("must be a lowercase Python identifier: a letter a-z, then letters a-z,"
                " digits and underscores (for example acme_pump_base)")
    if len(name) > MAX_NAME:
        return f"is {len(name)} characters long; keep it to {MAX_NAME}"
    if keyword.iskeyword(name) or keyword.issoftkeyword(name):
        return "is a Python keyword"
    if name.endswith("_") or "__" in name:
        return "must not end with an underscore or contain a double underscore"
    try:
        taken = importlib.util.find_spec(name) is not None
    except (ImportError, ValueError):
        taken = True
    if taken:
        # an installed module of the same name would shadow the plugin (or be shadowed)
        return "is already the name of an importable Python module; choose another"
    return ""


def _installed_calc_types() -> set[str]:
    from reportgen.calc.plugin_set import load_plugin_set

    return set(load_plugin_set().calcs)


def _class_name(name: str) -> str:
    return "".join(part.capitalize() for part in name.split("_"))


def _requirement() -> str:
    from reportgen._version import __version__

    m = re.match(r"(\d+)\.(\d+)", __version__)
    if not m or __version__.startswith("0.0.0"):
        return "reportgen"
    return f"reportgen>={m.group(1)}.{m.group(2)}"


def plugin_files(name: str) -> dict[str, str]:
    """The files of a new plugin package, relative path -> text."""
    from reportgen.calc.hookspecs import API_VERSION

    values = {"name": name, "cls": _class_name(name), "dist": name.replace("_", "-"),
              "requirement": _requirement(), "api": str(API_VERSION)}
    return {Template(path).substitute(values): Template(text).substitute(values)
            for path, text in _FILES.items()}


def new_plugin(name: str, directory: Path | None = None) -> int:
    """Write the plugin package ``name`` into ``directory`` (default ``./name``)."""
    problem = validate_name(name)
    if problem:
        raise JobError(Problem("new-plugin", f"plugin name '{name}' {problem}", field="NAME"))
    target = Path(directory) if directory is not None else Path(name)
    if target.exists() and (not target.is_dir() or any(target.iterdir())):
        what = "a folder that is not empty" if target.is_dir() else "a file"
        raise JobError(Problem(str(target), f"is {what}; new-plugin writes only into a new or"
                               " empty folder", field="--dir"))
    if name in _installed_calc_types():
        raise JobError(Problem("new-plugin", f"a calc type named '{name}' is already"
                               " installed; two plugins may not declare the same calc type",
                               field="NAME"))
    parent = target.absolute().parent
    if not parent.is_dir():
        raise JobError(Problem(str(target), f"parent folder {parent} does not exist",
                               field="--dir"))
    staging = Path(tempfile.mkdtemp(prefix=f".{target.name}.", dir=parent))
    try:
        for rel, text in plugin_files(name).items():
            path = staging / rel
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_text(text, encoding="utf-8")
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(staging, 0o777 & ~umask)  # mkdtemp makes it private
        os.replace(staging, target)  # POSIX rename replaces an empty folder
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    print(f"wrote in-house calc plugin '{name}' to {target}:")
    for rel in sorted(plugin_files(name)):
        print(f"  {rel}")
    print("next:")
    # a bare name would make pip ask a package index for an in-house name: say it is a path
    local = str(target) if target.is_absolute() or str(target).startswith(("./", "../")) \
        else f"./{target}"
    print(f"  pip install -e {local}")
    print(f"  pytest {target}")
    print(f"  reportgen build {target / 'example_job.toml'} --out {target / 'out'}")
    return int(ExitCode.OK)


# ----------------------------------------------------------------------- the files
# string.Template placeholders: $name (module and calc type), $cls (class), $dist
# (distribution), $requirement, $api. A literal dollar sign is written $$.

_PYPROJECT = '''\
[build-system]
requires = ["setuptools>=61"]
build-backend = "setuptools.build_meta"

[project]
name = "$dist"
version = "0.1.0"
description = "In-house reportgen calc plugin: $name"
readme = "README.md"
requires-python = ">=3.11"
# everything src/ imports: reportgen, numpy (the method), scipy (its verification)
dependencies = ["$requirement", "numpy>=1.26", "scipy>=1.11"]

[project.optional-dependencies]
test = ["pytest>=8"]

# reportgen finds calc plugins through this entry-point group; the name on the left is
# the plugin's name in `reportgen plugins` and in error messages.
[project.entry-points."reportgen.calcs"]
$name = "$name.calc"

[tool.setuptools.packages.find]
where = ["src"]

[tool.pytest.ini_options]
testpaths = ["tests"]

[tool.ruff]
line-length = 100
src = ["src"]

[tool.ruff.lint]
select = ["E", "F", "I", "B", "UP"]
'''

_INIT = '''\
"""$name: an in-house reportgen calc plugin (mount loads and static deflection).

The calc type lives in :mod:`$name.calc`; reportgen loads it through the entry point.
"""

__version__ = "0.1.0"
'''

_CALC = '''\
"""$name calc type: load per mount, static deflection and natural frequency on mounts.

Example in-house method from the reportgen scaffold: rigid machine on n identical mounts.
"""

from __future__ import annotations

import math

import numpy as np
from reportgen import (
    Assumptions,
    CalcContext,
    CalcOutput,
    CalcType,
    Caution,
    Figure,
    InputSpec,
    Marker,
    Panel,
    Paragraph,
    Series,
    Sheet,
    Source,
    VerificationCase,
    VerificationRow,
    hookimpl,
)
from reportgen.units import STANDARD_GRAVITY

from . import __version__

THOMSON = Source(key="thomson", citation=(
    "W.T. Thomson & M.D. Dahleh, Theory of Vibration with Applications, 5th ed.,"
    " Prentice Hall, 1998: Ch. 2, static deflection and natural frequency of a"
    " spring-mass system."))


class $cls(CalcType):
    name = "$name"  # what a job's `plugin = "..."` names
    title = "Machine on identical mounts: load per mount, static deflection, natural frequency"
    version = __version__
    api_version = $api  # the reportgen hook API this plugin is written for
    purpose = ("Find the load on each mount, the static deflection of the mounts and the"
               " vertical natural frequency of a rigid machine on identical mounts, and check"
               " them against the mount maker's rated load and a deflection limit.")
    inputs = (
        InputSpec(name="mass", symbol="m", dimension="mass", positive=True, maximum=1e7,
                  description="Supported mass (machine, base and allowances)"),
        InputSpec(name="mounts", symbol="n", kind="integer", minimum=1, maximum=64,
                  description="Number of identical mounts"),
        InputSpec(name="mount_stiffness", symbol="k", dimension="stiffness", positive=True,
                  maximum=1e10, description="Vertical stiffness of one mount"),
    )
    criteria = (
        InputSpec(name="rated_load", symbol="P_rated", dimension="force", required=False,
                  positive=True, description="Mount maker's rated load for one mount"),
        InputSpec(name="max_static_deflection", symbol="delta_max", dimension="length",
                  required=False, positive=True,
                  description="Largest acceptable static deflection"),
    )
    sources = (THOMSON,)
    verification_cases = (
        VerificationCase(id="A6_static_deflection_natural_frequency",
                         description="f_n from the static deflection (15.76/sqrt(delta[mm]))",
                         source=THOMSON.citation, status="corroborated_secondary"),
    )

    def validate(self, inputs, given, criteria):
        # Cross-field checks go here, as (field, message) pairs; each input has already
        # passed its own dimension and range checks.
        return []

    def compute(self, ctx: CalcContext) -> CalcOutput:
        p = ctx.inputs  # SI floats; "mounts" is an int
        m, n, k = p["mass"], float(p["mounts"]), p["mount_stiffness"]
        s = Sheet(self.inputs)  # knows the inputs' symbols and dimensions (m, n, k)
        s.add(Assumptions(items=(
            "The machine is rigid and its centre of gravity lies over the centroid of the"
            " mounts, so every mount carries the same load.",
            "The mounts are linear springs over the working range, with the vertical"
            " stiffness stated by the maker.",
            "Vertical motion only (one degree of freedom); rocking modes are not checked.",
            "Standard gravity g_n = 9.80665 m/s².",
        )))
        s.add(Paragraph(title="Method", text=(
            "The weight is shared equally by the mounts, which act as springs in parallel."
            " Values are substituted in coherent SI units.")))
        w = s.equation("W", "m*g_n", "force", m=m, g_n=STANDARD_GRAVITY, key="weight",
                       description="Weight of the supported mass")
        load = s.equation("P", "W/n", "force", W=w, n=n, key="load_per_mount",
                          key_result=True, description="Load on each mount")
        deflection = s.equation("delta_st", "P/k", "length", P=load, k=k,
                                key="static_deflection", key_result=True,
                                description="Static deflection of each mount")
        total = s.equation("K", "n*k", "stiffness", n=n, k=k, key="total_stiffness",
                           description="Total vertical stiffness of the mounts in parallel")
        s.equation("f_n", "sqrt(K/m)/(2*pi)", "frequency", K=total, m=m,
                   key="natural_frequency", key_result=True,
                   description="Vertical natural frequency on the mounts")

        crit = ctx.criteria
        if "rated_load" in crit:
            s.check("mount-load", "Load per mount within the maker's rated load",
                    value=load, limit=crit["rated_load"], comparison="<=", dimension="force")
        if "max_static_deflection" in crit:
            s.check("static-deflection", "Static deflection within the limit",
                    value=deflection, limit=crit["max_static_deflection"], comparison="<=",
                    dimension="length")
        if not crit:
            s.check("mount-load", "Load per mount (no rated load given)", status="info",
                    value=load, dimension="force", note="give criteria.rated_load to check it")

        # One mount's load-deflection line with the operating point; the figure is data
        # only: reportgen draws it.
        top = 1.5 * max(deflection, crit.get("rated_load", 0.0) / k)
        x = np.linspace(0.0, top, 50)
        hlines = ((crit["rated_load"] / 1000, "rated load"),) if "rated_load" in crit else ()
        s.add(Figure(
            key="mount-line", caption="Load against deflection of one mount",
            alt="Straight load-deflection line of one mount with the operating point marked",
            x_label="Deflection [mm]",
            panels=(Panel(series=(Series(x=_r(x * 1000), y=_r(k * x / 1000),
                                         label="mount, k", emphasis=True),),
                          y_label="Load [kN]", hlines=hlines,
                          markers=(Marker(x=deflection * 1000, y=load / 1000,
                                          label="operating point"),)),)))
        s.add(Caution(text=(
            "Mount loads and stiffness must be confirmed against the isolator maker's rated"
            " data. Seismic and wind restraint of the mounted machine is a separate design"
            " required by the local codes; this calc does not cover it.")))
        return s.output(purpose=self.purpose)

    def verify(self, ctx: CalcContext, output: CalcOutput):
        """A second route to the key results, shown in the package's verification appendix."""
        from scipy.optimize import brentq

        p = ctx.inputs
        m, n, k = p["mass"], int(p["mounts"]), p["mount_stiffness"]
        res = {r.key: r.quantity.value for r in output.results}
        weight = m * STANDARD_GRAVITY

        def residual(x: float) -> float:
            # the sum of the mount forces minus the weight: zero at static equilibrium
            return sum(k * x for _ in range(n)) - weight

        x_eq = brentq(residual, 0.0, 2.0 * weight / k, xtol=1e-15, rtol=1e-13)
        lam = np.linalg.eigvals(np.array([[0.0, 1.0], [-n * k / m, 0.0]]))
        f_eig = float(np.max(np.abs(lam.imag))) / (2 * math.pi)
        return [
            VerificationRow(quantity="static_deflection", closed_form=res["static_deflection"],
                            independent=float(x_eq), tolerance=1e-9, unit="length",
                            method="root of the equilibrium n·k·x − m·g_n = 0"
                                   " (scipy.optimize.brentq)"),
            VerificationRow(quantity="natural_frequency", closed_form=res["natural_frequency"],
                            independent=f_eig, tolerance=1e-9, unit="frequency",
                            method="eigenvalues of the state matrix of m·x'' + n·k·x = 0"
                                   " (numpy.linalg.eigvals)"),
        ]


def _r(a) -> tuple[float, ...]:
    return tuple(float(v) for v in np.round(np.asarray(a, dtype=float), 12))


@hookimpl
def reportgen_register_calc_types(context):
    """reportgen calls this once at start-up; return this plugin's calc types."""
    return [$cls()]
'''

_TEST = '''\
"""Tests of the $name calc plugin, written with reportgen's test kit.

The kit is a pytest plugin installed with reportgen: rg_plugins and rg_build need no conftest.
"""

import math

import pytest
from reportgen.testing import assert_calc_contract, compute, make_job, result

from $name.calc import $cls

EXAMPLE = {
    "id": "fan-mounts", "plugin": "$name", "title": "Supply fan on four spring mounts",
    "inputs": {"mass": "620 kg", "mounts": 4, "mount_stiffness": "60 kN/m"},
    "criteria": {"rated_load": "2.0 kN", "max_static_deflection": "40 mm"},
}


def test_registered_through_the_entry_point(rg_plugins):
    reg = rg_plugins.get("$name")
    assert reg is not None, [b.error for b in rg_plugins.broken]
    assert reg.package == "$dist"


def test_contract(tmp_path, rg_plugins):
    # dimensions declared, equations reproduce, verification agrees, HTML and PDF render
    assert_calc_contract($cls(), EXAMPLE, tmp_path, plugins=rg_plugins)


def test_values_against_a_hand_calculation(rg_plugins):
    # delta_st = m*g_n/(n*k) and f_n = sqrt(n*k/m)/(2*pi): W.T. Thomson & M.D. Dahleh,
    # Theory of Vibration with Applications, 5th ed., Ch. 2. g_n = 9.80665 m/s^2.
    doc = compute(make_job(EXAMPLE), rg_plugins)
    assert result(doc, "load_per_mount") == pytest.approx(620 * 9.80665 / 4, rel=1e-12)
    delta = 620 * 9.80665 / (4 * 60_000)
    assert result(doc, "static_deflection") == pytest.approx(delta, rel=1e-12)
    fn = math.sqrt(4 * 60_000 / 620) / (2 * math.pi)
    assert result(doc, "natural_frequency") == pytest.approx(fn, rel=1e-12)
    # handbook form f_n = 15.76/sqrt(delta[mm]) (same source; constant rounded to 4 figures)
    assert result(doc, "natural_frequency") == pytest.approx(
        15.76 / math.sqrt(delta * 1000), rel=1e-3)


def test_an_overloaded_mount_fails_its_check(rg_plugins):
    doc = compute(make_job({**EXAMPLE, "criteria": {"rated_load": "1.0 kN"}}), rg_plugins)
    (check,) = [c for c in doc.sections[0].checks if c.id == "mount-load"]
    assert check.status == "fail"
'''

_JOB = '''\
# Example job for the $name calc plugin (an invented scenario: Quillmoor Engineering
# Partners for Ferrow Quay Developments). Build it with
#   reportgen build example_job.toml --out out
[package]
title = "Supply fan SF-3 on spring mounts: mount load and static deflection"
client = "Ferrow Quay Developments"
project = "Ferrow Quay Data Centre, plant room B"
job_number = "QEP-2417"
calc_number = "QEP-2417-V-190"
revision = "A"
date = "2026-12-01"
firm = "Quillmoor Engineering Partners"
prepared_by = "T. Marsh"

[[calc]]
id = "sf3-mounts"
plugin = "$name"
title = "Supply fan SF-3 on four spring mounts"
notes = "Mass from the fan maker's certified data plus 5 % for the base frame."
[calc.inputs]
mass = "620 kg"
mounts = 4
mount_stiffness = "60 kN/m"
[calc.criteria]
rated_load = "2.0 kN"
max_static_deflection = "40 mm"
'''

_README = '''\
# $dist: an in-house reportgen calc plugin

Calc type `$name`: load per mount, static deflection and vertical natural frequency of
a rigid machine on identical mounts, checked against the maker's rated load and a
deflection limit, with an independent verification (numerical root of the equilibrium
and eigenvalues of the equation of motion).

It was written by `reportgen new-plugin $name` as a worked example: replace the method
with your firm's own and keep the pattern.

## Use

    pip install -e ".[test]"           # from this folder; reportgen must be installed
    pytest                              # the tests use reportgen's test kit
    reportgen plugins                   # lists `$name` and this package
    reportgen build example_job.toml --out out

## Layout

- `pyproject.toml`: the `reportgen.calcs` entry point `$name = "$name.calc"`.
- `src/$name/calc.py`: the calc type `$cls` (inputs, criteria, compute, verify,
  sources) and the `reportgen_register_calc_types` hook.
- `tests/test_$name.py`: the kit's contract assertion and a check against a hand
  calculation.
- `example_job.toml`: a job that uses the calc.

## Changing it

1. Declare every input as an `InputSpec` with a dimension; values arrive in SI.
2. Write the working with `Sheet.equation` so the printed substitution reproduces the
   printed result; record design checks with `Sheet.check`.
3. Give `verify` a genuinely different route to the key results.
4. Cite the published source of the method in `sources`; add a test against a value from
   that source, naming it beside the check.
5. Bump `version` when the method changes: the package's software appendix shows it.

See "Writing a calc plugin" in reportgen's DEVELOPERS.md for the whole API. The package
produced is a calculation aid: it defers to local codes, standards and licensed practice.
'''

_GITIGNORE = '''\
__pycache__/
*.egg-info/
build/
dist/
out/
'''

_FILES = {
    "pyproject.toml": _PYPROJECT,
    "README.md": _README,
    ".gitignore": _GITIGNORE,
    "example_job.toml": _JOB,
    "src/$name/__init__.py": _INIT,
    "src/$name/calc.py": _CALC,
    "tests/test_$name.py": _TEST,
}
