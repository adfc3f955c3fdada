"""The test kit for calc-plugin authors (also a pytest plugin, registered as ``reportgen``).

Helpers build a package from a Python dict, fetch results, and assert a calc type's
contract: every input declares a known dimension, every equation's printed
substitution reproduces its printed result, verification agrees, and the section
renders to HTML and to PDF. The built-in plugins' own tests use the same kit.

Fixtures: ``rg_plugins`` (the installed plugin set), ``rg_build`` (build a job dict
into a temporary folder, returning :class:`Built`).
"""

from __future__ import annotations

import json
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pytest

from reportgen.calc.plugin_set import PluginSet, load_plugin_set
from reportgen.calc.sheet import CalcOutput
from reportgen.calc.types import CalcType
from reportgen.document.compute import compute_document
from reportgen.formula import evaluate, names_in
from reportgen.job.load import Job, load_job
from reportgen.model import Document, Equation, Section
from reportgen.units import DIMENSIONS, format_number

__all__ = [
    "Built", "assert_calc_contract", "assert_equations_reproduce", "build_package",
    "compute", "compute_calc", "job_toml", "make_job", "result", "section_checks",
    "section_results",
]

DEFAULT_PACKAGE = {
    "title": "Test package", "job_number": "T-1", "calc_number": "T-1-001", "revision": "A",
    "date": "2026-12-01", "prepared_by": "Test",
}


def make_job(calcs: list[Mapping[str, Any]] | Mapping[str, Any], **package: Any
             ) -> dict[str, Any]:
    """A job dict: ``{"package": {...}, "calc": [...]}`` with test defaults filled in."""
    if isinstance(calcs, Mapping):
        calcs = [calcs]
    out_calcs = []
    for i, c in enumerate(calcs):
        c = dict(c)
        c.setdefault("id", f"calc-{i + 1}")
        c.setdefault("title", f"Calc {i + 1}")
        out_calcs.append(c)
    return {"package": {**DEFAULT_PACKAGE, **package}, "calc": out_calcs}


def job_toml(job: Mapping[str, Any]) -> str:
    """Serialise a job dict to TOML (strings, numbers, booleans, lists, tables)."""
    lines: list[str] = []

    def val(v: Any) -> str:
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, float)):
            if isinstance(v, float) and not math.isfinite(v):
                return "nan" if math.isnan(v) else ("inf" if v > 0 else "-inf")
            return repr(v)
        if isinstance(v, str):
            return json.dumps(v, ensure_ascii=False)
        if isinstance(v, (list, tuple)):
            return "[" + ", ".join(val(x) for x in v) + "]"
        if isinstance(v, Mapping):  # an inline table inside an array
            return "{ " + ", ".join(f"{json.dumps(k)} = {val(x)}" for k, x in v.items()) + " }"
        raise TypeError(f"cannot write {type(v).__name__} to TOML")

    def table(prefix: str, t: Mapping[str, Any]) -> None:
        subs: list[tuple[str, Any]] = []
        for k, v in t.items():
            if isinstance(v, Mapping):
                subs.append((k, v))
            elif isinstance(v, list) and v and all(isinstance(x, Mapping) for x in v):
                subs.append((k, v))
            else:
                lines.append(f"{json.dumps(k) if not k.isidentifier() else k} = {val(v)}")
        for k, v in subs:
            if isinstance(v, Mapping):
                lines.append(f"[{prefix}{k}]")
                table(f"{prefix}{k}.", v)
            else:
                for item in v:
                    lines.append(f"[[{prefix}{k}]]")
                    table(f"{prefix}{k}.", item)

    for key, value in job.items():
        if isinstance(value, Mapping):
            lines.append(f"[{key}]")
            table(f"{key}.", value)
        elif isinstance(value, list):
            for item in value:
                lines.append(f"[[{key}]]")
                table(f"{key}.", item)
    return "\n".join(lines) + "\n"


def load_job_dict(job: Mapping[str, Any], plugins: PluginSet, folder: Path) -> Job:
    text = job_toml(job)
    tomllib.loads(text)  # the kit must write valid TOML
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "job.toml"
    path.write_text(text, encoding="utf-8")
    return load_job(path, plugins)


def compute(job: Mapping[str, Any], plugins: PluginSet | None = None,
            folder: Path | None = None) -> Document:
    """Load and compute a job dict (no rendering); returns the Document."""
    import tempfile

    plugins = plugins or load_plugin_set()
    if folder is None:
        with tempfile.TemporaryDirectory() as tmp:
            return compute_document(load_job_dict(job, plugins, Path(tmp)), plugins)
    return compute_document(load_job_dict(job, plugins, folder), plugins)


def compute_calc(plugin: str, inputs: Mapping[str, Any],
                 criteria: Mapping[str, Any] | None = None,
                 plugins: PluginSet | None = None) -> Document:
    """Compute a one-calc package of calc type ``plugin`` (no rendering)."""
    calc: dict[str, Any] = {"plugin": plugin, "inputs": dict(inputs)}
    if criteria:
        calc["criteria"] = dict(criteria)
    return compute(make_job([calc]), plugins)


def section_checks(section: Section) -> dict[str, str]:
    """{check id: status} of a section."""
    return {c.id: c.status for c in section.checks}


def section_results(section: Section) -> dict[str, float]:
    return {r.key: r.quantity.value for r in section.results}


def result(doc: Document, key: str, calc: int | str = 0) -> float:
    """The SI value of result ``key`` of calc ``calc`` (index or id)."""
    sec = doc.sections[calc] if isinstance(calc, int) else next(
        s for s in doc.sections if s.calc_id == calc)
    return section_results(sec)[key]


@dataclass
class Built:
    folder: Path
    pdf: Path
    results_path: Path
    exit_code: int
    html: Path | None = None
    data: dict[str, Any] = field(default_factory=dict)

    def results(self, calc: int | str = 0) -> dict[str, float]:
        c = self.data["calcs"][calc] if isinstance(calc, int) else next(
            x for x in self.data["calcs"] if x["id"] == calc)
        return {k: v["value"] for k, v in c["results"].items()}

    def text(self) -> str:
        from reportgen.render.selfcheck import extract_text

        return extract_text(self.pdf.read_bytes())[1]


def build_package(job: Mapping[str, Any], folder: Path, *, plugins: PluginSet | None = None,
                  html: bool = True, **options: Any) -> Built:
    """Build a job dict into ``folder`` (job.toml, out/...) through the real pipeline."""
    from reportgen.pipeline.plan import BuildOptions, build_job

    plugins = plugins or load_plugin_set()
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "job.toml"
    path.write_text(job_toml(job), encoding="utf-8")
    opts = BuildOptions(out_dir=folder / "out", html=html, use_cache=False, **options)
    res = build_job(path, plugins, opts)
    return Built(folder=folder, pdf=res.pdf, results_path=res.results,
                 exit_code=int(res.exit_code), html=res.html,
                 data=json.loads(res.results.read_text(encoding="utf-8")))


# ------------------------------------------------------------------ contract


def assert_equations_reproduce(doc: Document | CalcOutput, rel: float = 2e-3) -> int:
    """Every equation, re-evaluated from its operands rounded as printed (6 significant
    figures), reproduces its printed result (4 significant figures). Returns the count.

    ``doc`` is a computed Document, or the CalcOutput of a direct ``compute(ctx)`` call.
    """
    count = 0
    if isinstance(doc, CalcOutput):
        groups = [("compute output", doc.blocks, {r.key for r in doc.results})]
    else:
        groups = [(s.calc_id, s.blocks, set(section_results(s))) for s in doc.sections]
    for calc_id, blocks, result_keys in groups:
        for block in blocks:
            if not isinstance(block, Equation):
                continue
            assert names_in(block.expression) == {n for n, _ in block.operands}, block
            printed_ops = {n: float(format_number(v, 6)) for n, v in block.operands}
            again = evaluate(block.expression, printed_ops)
            printed = float(format_number(block.result.value, 4))
            exact = evaluate(block.expression, dict(block.operands))
            assert math.isclose(exact, block.result.value, rel_tol=1e-12, abs_tol=1e-300), (
                f"{calc_id}: {block.name} = {block.expression}: stored result"
                f" {block.result.value} is not the expression's value {exact}")
            tol = max(rel * abs(printed), 1e-12 + 5e-4 * abs(printed))
            assert abs(again - printed) <= tol or abs(again - block.result.value) <= tol, (
                f"{calc_id}: {block.name} = {block.expression}: printed operands give"
                f" {again}, printed result is {printed}")
            if block.result_key:
                assert block.result_key in result_keys, (
                    f"{calc_id}: {block.name} names result {block.result_key!r}, which the"
                    " calc does not report")
            count += 1
    return count


def assert_calc_contract(calc_type: CalcType, job_calc: Mapping[str, Any], folder: Path, *,
                         plugins: PluginSet | None = None, pdf: bool = True) -> Built | None:
    """Assert the whole contract of a calc type on one example calc table.

    Every input and criterion declares a known dimension and a symbol; the calc
    computes; each equation reproduces its result; verification exists and agrees;
    the section renders to HTML (and to PDF with ``pdf=True``) showing its title.
    """
    assert calc_type.name and calc_type.version and calc_type.api_version
    for spec in (*calc_type.inputs, *calc_type.criteria):
        assert spec.dimension in DIMENSIONS, f"{spec.name}: unknown dimension {spec.dimension}"
        assert spec.symbol, f"{spec.name}: no symbol"
        assert spec.description, f"{spec.name}: no description"
    assert calc_type.sources, f"{calc_type.name} declares no published sources"
    job = make_job([{**job_calc, "plugin": calc_type.name}])
    plugins = plugins or load_plugin_set()
    doc = compute(job, plugins, folder)
    section = doc.sections[0]
    assert section.results, "no results"
    assert assert_equations_reproduce(doc) > 0, "no equations"
    assert section.verification is not None, f"{calc_type.name} provides no verification"
    assert all(v.agrees for v in section.verification)
    from reportgen.render.assets import render_assets
    from reportgen.render.html import render_html

    html = render_html(doc, render_assets(doc, use_cache=False))
    assert section.title in html
    if not pdf:
        return None
    built = build_package(job, folder / "build", plugins=plugins)
    assert built.pdf.is_file() and built.pdf.read_bytes().startswith(b"%PDF")
    assert section.title[:40] in built.text()
    return built


# ------------------------------------------------------------------ pytest fixtures


@pytest.fixture
def rg_plugins() -> PluginSet:
    """The installed plugin set, loaded fresh for the test."""
    return load_plugin_set()


@pytest.fixture
def rg_build(tmp_path: Path, rg_plugins: PluginSet):
    """``rg_build(job_dict, **options)`` builds through the real pipeline into tmp_path."""
    counter = iter(range(10_000))

    def run(job: Mapping[str, Any], **options: Any) -> Built:
        return build_package(job, tmp_path / f"build-{next(counter)}", plugins=rg_plugins,
                             **options)

    return run
