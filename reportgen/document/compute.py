"""Compute a job into a Document: call each calc's compute and verify, wrapped per plugin.

This module runs plugins and assembles the document tree; it never renders.
"""

from __future__ import annotations

import dataclasses
import math
import platform
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from reportgen._version import __version__
from reportgen.calc.plugin_set import PluginSet, RegisteredCalc
from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.calc.spec import InputSpec
from reportgen.document import envelope
from reportgen.document.transforms import apply_transforms
from reportgen.errors import JobError, PluginError, Problem, ReportgenError, VerificationError
from reportgen.job.load import CalcSpec, Job
from reportgen.model import (
    BLOCK_TYPES,
    Block,
    Check,
    Document,
    Equation,
    Figure,
    InputRow,
    InputsTable,
    Quantity,
    ResultList,
    ResultRow,
    Section,
    Table,
    VerificationRow,
)
from reportgen.units import DIMENSIONS, input_note, preferences, written_unit

VerifyHook = Callable[[RegisteredCalc, CalcContext, CalcOutput], Any]


@dataclass(frozen=True, kw_only=True)
class Computed:
    """One calc computed (its output checked), waiting for its verification rows."""

    spec: CalcSpec
    reg: RegisteredCalc
    ctx: CalcContext
    output: CalcOutput
    #: the operating envelope it was judged over (its output already carries the governed
    #: checks); None for a calc without ranges, tolerances or orders
    envelope: envelope.Outcome | None = None
    display: str = "SI"  # the display units' key its drawings are made in


def compute_document(job: Job, plugins: PluginSet, *, verify: VerifyHook | None = None,
                     on_computed: Callable[[Computed], None] | None = None) -> Document:
    """Run every calc of ``job`` once and return the transformed document.

    Every calc is computed first, ``on_computed`` hearing of each as it is done (a
    scheduler starts its verification and its drawings then); then each calc's rows come
    from ``verify`` (a cache, or a scheduler collecting what it started), or from the
    calc type's own ``verify``. Raises PluginError when a plugin raises or returns
    malformed output, and VerificationError when an independent check disagrees.
    """
    computed = []
    display = job_display(job, plugins)
    for spec in job.calcs:
        c = compute_calc(spec, plugins.calcs[spec.plugin], job.info.units, display)
        if on_computed is not None:
            on_computed(c)
        computed.append(c)
    sections = [finish_section(c, verify) for c in computed]
    software = [("reportgen", "reportgen", __version__),
                ("Python", platform.python_implementation(), platform.python_version())]
    seen = set()
    for spec in job.calcs:
        reg = plugins.calcs[spec.plugin]
        if reg.name not in seen:
            seen.add(reg.name)
            software.append((f"calc type {reg.name}", reg.package,
                             reg.calc_type.version))
    check_deviations(job, sections)
    doc = Document(info=dataclasses.replace(job.info, display=display),
                   revision_history=job.revision_history,
                   sections=tuple(sections), software=tuple(software),
                   schedule=job.schedule, schedule_source=job.schedule_source,
                   schedule_results=_schedule_results(job, plugins, sections),
                   deviations=job.deviations)
    return apply_transforms(doc)


def check_deviations(job: Job, sections: list[Section]) -> None:
    """Refuse a deviation whose check the named calc does not report, or reports as
    information (only a pass/fail check can be accepted)."""
    problems = []
    by_id = {s.calc_id: s for s in sections}
    for i, d in enumerate(job.deviations):
        section = by_id.get(d.calc)
        if section is None:
            continue  # the loader has refused it
        ids = {c.id: c for c in section.checks}
        where = f"package.deviations[{i}].check"
        if d.check not in ids:
            known = ", ".join(c.id for c in section.checks if c.status != "info")
            problems.append(Problem(str(job.path), f"calc '{d.calc}' has no check"
                                    f" '{d.check}'; its checks are: {known or 'none'}",
                                    field=where))
        elif ids[d.check].status == "info":
            problems.append(Problem(str(job.path), f"'{d.check}' of calc '{d.calc}' is"
                                    " information, not a pass/fail check: there is nothing"
                                    " to accept", field=where))
    if problems:
        raise JobError(problems)


def calc_context(spec: CalcSpec, units: str, display: str = "") -> CalcContext:
    return CalcContext(calc_id=spec.id, title=spec.title, inputs=dict(spec.inputs),
                       given=spec.given, criteria=dict(spec.criteria),
                       criteria_given=spec.criteria_given, units=units,
                       files=dict(spec.files), criteria_library=spec.criteria_library,
                       display=display or units)


def _failure(c_reg: RegisteredCalc, calc_id: str, message: str, stage: str,
             cause: BaseException | None = None) -> PluginError:
    # name the plugin as installed (its entry point), and the calc type when it differs
    about = "" if c_reg.plugin == c_reg.name else f"calc type '{c_reg.name}': "
    err = PluginError(about + message, plugin=c_reg.plugin, package=c_reg.package,
                      calc=calc_id, stage=stage)
    err.__cause__ = cause
    return err


def job_display(job: Job, plugins: PluginSet) -> str:
    """The key of the units the package prints in: the job's system, the unit each
    quantity family was first given in (job order), then the firm's ``units.toml`` (a
    table per system, ``length = "mm"``) in its template folder."""
    written = []
    for spec in job.calcs:  # inputs only: a limit's unit does not restate the working
        reg = plugins.calcs.get(spec.plugin)
        if reg is None:
            continue
        for sp in reg.calc_type.inputs:
            raw = spec.raw_inputs.get(sp.name)
            if isinstance(raw, dict):
                raw = raw.get("value")
            if sp.name in spec.given and sp.kind == "quantity":
                written.append((sp.dimension, written_unit(raw)))
    return preferences(written, job.info.units, firm_units(job.template_dir,
                                                            job.info.units)).key


#: Largest units.toml a theme may hold (bytes); a larger one is not read.
FIRM_UNITS_LIMIT = 64 * 1024


def firm_units(template_dir: Path | None, system: str) -> dict[str, str]:
    """A firm's display units for ``system`` from ``units.toml`` in its template folder."""
    if template_dir is None:
        return {}
    path = Path(template_dir) / "units.toml"
    try:  # a theme arrives with a job from anyone: a small regular file, or nothing
        if path.is_symlink() or not path.is_file() or path.stat().st_size > FIRM_UNITS_LIMIT:
            return {}
        table = tomllib.loads(path.read_text(encoding="utf-8")).get(system, {})
    except (OSError, ValueError):
        return {}
    if not isinstance(table, dict):
        return {}
    return {str(k): str(v) for k, v in table.items() if isinstance(v, str)}


def compute_calc(spec: CalcSpec, reg: RegisteredCalc, units: str,
                 display: str = "") -> Computed:
    """Call the calc's compute once, wrapped so a failure names its plugin; check the
    output is well formed."""
    ctx = calc_context(spec, units, display)
    try:
        out = reg.calc_type.compute(ctx)
    except ReportgenError:
        raise
    except Exception as exc:
        raise _failure(reg, spec.id, f"compute raised {type(exc).__name__}: {exc}", "compute",
                       exc) from exc
    problem = check_output(out)
    if problem:
        raise _failure(reg, spec.id, f"compute returned malformed output: {problem}",
                       "compute")
    if not envelope.wanted(spec):
        return Computed(spec=spec, reg=reg, ctx=ctx, output=out, display=display or units)

    def failed(at: str, exc: BaseException) -> Exception:
        return _failure(reg, spec.id, f"compute raised {type(exc).__name__} {at} in the"
                        f" operating envelope: {exc}", "envelope", exc)

    env = envelope.evaluate(spec, reg, ctx, out, failed)
    return Computed(spec=spec, reg=reg, ctx=ctx, output=env.output, envelope=env,
                    display=display or units)


def finish_section(c: Computed, verify: VerifyHook | None = None) -> Section:
    """The calc's section: its verification rows (which must agree), its inputs tables
    and the blocks it computed."""
    spec, reg, ctx, out = c.spec, c.reg, c.ctx, c.output
    ct = reg.calc_type
    try:
        rows = verify(reg, ctx, out) if verify else ct.verify(ctx, out)
    except ReportgenError:
        raise
    except Exception as exc:
        raise _failure(reg, spec.id, f"verify raised {type(exc).__name__}: {exc}", "verify",
                       exc) from exc
    verification = _agreed(reg, spec, rows)
    if verification is not None and c.envelope is not None:
        verification += _envelope_rows(c, verify)
    inputs_block = InputsTable(rows=_input_rows(ct.inputs, spec.inputs, spec.given,
                                                spec.raw_inputs, spec.sources, "inputs"))
    blocks: tuple[Block, ...] = (inputs_block, *_input_tables(ct.inputs, spec.inputs))
    if spec.criteria or ct.criteria:
        crit_rows = _input_rows(ct.criteria, spec.criteria, spec.criteria_given,
                                spec.raw_criteria, spec.sources, "criteria")
        if crit_rows:
            blocks += (InputsTable(rows=crit_rows, title="Design criteria"),)
        blocks += _input_tables(ct.criteria, spec.criteria)
    return Section(
        calc_id=spec.id, plugin=reg.name, plugin_version=ct.version,
        plugin_package=reg.package, title=spec.title, purpose=out.purpose or ct.purpose,
        blocks=blocks + tuple(out.blocks), results=tuple(out.results),
        checks=tuple(out.checks), verification=verification, notes=spec.notes,
        sources=tuple(ct.sources), verification_cases=tuple(c.id for c in ct.verification_cases),
        envelope=None if c.envelope is None else c.envelope.envelope,
        result_lists=tuple(out.result_lists))


def _envelope_rows(c: Computed, verify: VerifyHook | None) -> tuple[VerificationRow, ...]:
    """The second method again at the governing point of each failing or tightest check,
    each row naming its point."""
    assert c.envelope is not None
    out: tuple[VerificationRow, ...] = ()
    for ctx, output, at, inputs in c.envelope.verify_at:
        try:
            rows = verify(c.reg, ctx, output) if verify else c.reg.calc_type.verify(ctx, output)
        except ReportgenError:
            raise
        except Exception as exc:
            raise _failure(c.reg, c.spec.id, f"verify raised {type(exc).__name__} {at} in the"
                           f" operating envelope: {exc}", "verify", exc) from exc
        agreed = _agreed(c.reg, c.spec, rows, at)
        out += tuple(dataclasses.replace(r, point=at, point_inputs=inputs)
                     for r in agreed or ())
    return out


def _agreed(reg: RegisteredCalc, spec: CalcSpec, rows: Any, at: str = ""
            ) -> tuple[VerificationRow, ...] | None:
    """The rows, checked: VerificationRows that agree, or a failure naming the calc."""
    verification: tuple[VerificationRow, ...] | None = None
    if rows is not None:
        rows = tuple(rows)
        bad = [r for r in rows if not isinstance(r, VerificationRow)]
        if bad:
            raise _failure(reg, spec.id, f"verify returned {type(bad[0]).__name__}, not"
                           " VerificationRow", "verify")
        disagree = [r for r in rows if not r.agrees]
        if disagree:
            about = "" if reg.plugin == reg.name else f"calc type '{reg.name}': "
            text = "; ".join(
                f"{r.quantity}: closed form {r.closed_form:.6g}, independent {r.independent:.6g}"
                f" (relative difference {r.rel_difference:.2e} > tolerance {r.tolerance:.1e})"
                for r in disagree)
            where = f" {at} in the operating envelope" if at else ""
            raise VerificationError(f"{about}independent verification disagrees{where}: {text};"
                                    " a package whose two methods disagree is not issued",
                                    plugin=reg.plugin, package=reg.package, calc=spec.id,
                                    stage="verify")
        verification = rows
    return verification


def compute_section(spec: CalcSpec, reg: RegisteredCalc, units: str,
                    verify: VerifyHook | None = None) -> Section:
    """One calc, computed and verified (the test kit's way to look at a section alone)."""
    return finish_section(compute_calc(spec, reg, units), verify)


def _input_tables(specs: tuple[InputSpec, ...], values: Mapping[str, Any]
                  ) -> tuple[Table, ...]:
    """A table input is shown as a table of its own, one row per row given, each cell in
    its column's display unit."""
    out = []
    for sp in specs:
        if sp.name not in values or not (sp.kind == "table" or (
                sp.kind == "criterion" and not isinstance(values[sp.name], str))):
            continue
        cols = sp.columns
        out.append(Table(
            title=sp.description, header=("#", *(c.description for c in cols)),
            units=("", *("" if c.kind == "text" else c.dimension for c in cols)),
            rows=tuple((str(i), *(row.get(c.name) for c in cols))
                       for i, row in enumerate(values[sp.name], start=1))))
    return tuple(out)


def _input_rows(specs: tuple[InputSpec, ...], values: Mapping[str, Any],
                given: frozenset[str], raw: Mapping[str, Any], sources: Mapping[str, str],
                table: str) -> tuple[InputRow, ...]:
    rows = []
    for sp in specs:
        if sp.name not in values:
            continue
        value = values[sp.name]
        written = raw.get(sp.name)
        if isinstance(written, dict):  # { value = ..., source = ..., tolerance = ... }
            written = written.get("value")
        named = sources.get(f"{table}.{sp.name}")
        source = "job file" if sp.name in given else (
            "default" + (f" ({sp.default_note})" if sp.default_note else ""))
        note = input_note(written, sp.dimension) if sp.name in given else ""
        if note:
            source = f"{source} ({note})"
        if named:
            source = named + (f" ({note})" if note else "")
        if sp.kind == "table" or (sp.kind == "criterion" and not isinstance(value, str)):
            continue  # a table of its own (_input_tables)
        if sp.kind in ("choice", "text", "file", "criterion", "texts"):
            text = (f"{value.name} ({value.size} bytes, SHA-256 {value.sha256[:12]}…)"
                    if sp.kind == "file" else ", ".join(value) if sp.kind == "texts"
                    else str(value))
            rows.append(InputRow(name=sp.name, symbol=sp.symbol, description=sp.description,
                                 quantity=None, text=text,
                                 source=named or ("job file" if sp.name in given else source)))
            continue
        if sp.kind == "points" and isinstance(written, list):
            # one row for all the points, as the job writes them (x, y); a calc type that
            # tabulates them by position shows them again with its results
            text = "; ".join("(" + ", ".join(str(c) for c in pt) + ")" if isinstance(
                pt, list) else str(pt) for pt in written)
            rows.append(InputRow(name=sp.name, symbol=sp.symbol, description=sp.description,
                                 quantity=None, text=text, source=source))
            continue
        if sp.kind in ("pair", "points"):
            flat = [v for v in _flatten(value)]
            for i, v in enumerate(flat):
                rows.append(InputRow(name=f"{sp.name}[{i}]", symbol=sp.symbol,
                                     description=f"{sp.description} ({_ordinal(sp, i)})",
                                     quantity=Quantity(value=v, dimension=sp.dimension),
                                     source=source))
            continue
        rows.append(InputRow(name=sp.name, symbol=sp.symbol, description=sp.description,
                             quantity=Quantity(value=float(value), dimension=sp.dimension),
                             source=source))
    return tuple(rows)


def _ordinal(sp: InputSpec, i: int) -> str:
    if sp.kind == "pair":
        return ("from", "to")[i]
    return f"point {i // 2 + 1}, {'xy'[i % 2]}"


def _flatten(value: Any):
    if isinstance(value, (tuple, list)):
        for v in value:
            yield from _flatten(v)
    else:
        yield float(value)


def check_output(out: Any) -> str:
    """Why a plugin's CalcOutput is malformed, or '' when it is well formed."""
    if not isinstance(out, CalcOutput):
        return f"expected CalcOutput, got {type(out).__name__}"
    for b in out.blocks:
        if not isinstance(b, BLOCK_TYPES):
            return f"block of type {type(b).__name__} is not a reportgen block"
        if isinstance(b, Equation):
            if not math.isfinite(b.result.value) or b.result.dimension not in DIMENSIONS:
                return f"equation {b.name} has a bad result {b.result!r}"
            problem = _equation_problem(b)
            if problem:
                return problem
        if isinstance(b, Figure):
            for p in b.panels:
                for s in p.series:
                    if len(s.x) != len(s.y):
                        return f"figure {b.key}: series '{s.label}' has x and y of unequal length"
                    if len(s.x) > 50000:
                        return f"figure {b.key}: series '{s.label}' has {len(s.x)} points"
    for r in out.results:
        if not isinstance(r, ResultRow):
            return f"result of type {type(r).__name__} is not a ResultRow"
        q = r.quantity
        if q.dimension not in DIMENSIONS:
            return f"result {r.key} has unknown dimension {q.dimension!r}"
        if not isinstance(q.value, float) or not math.isfinite(q.value):
            return f"result {r.key} is not a finite number ({q.value!r})"
    for rl in out.result_lists:
        if not isinstance(rl, ResultList) or len(rl.fields) != len(rl.units) or any(
                len(r) != len(rl.fields) or not all(isinstance(v, float) and math.isfinite(v)
                                                    for v in r) for r in rl.rows):
            return f"malformed result list {getattr(rl, 'key', rl)!r}"
        if any(u not in DIMENSIONS for u in rl.units):
            return f"result list {rl.key} has an unknown dimension"
    keys = [r.key for r in out.results] + [rl.key for rl in out.result_lists]
    if len(keys) != len(set(keys)):
        return "duplicate result keys"
    for c in out.checks:
        if not isinstance(c, Check) or c.status not in ("pass", "fail", "info"):
            return f"malformed check {c!r}"
    ids = [c.id for c in out.checks]
    if len(ids) != len(set(ids)):
        return "duplicate check ids"
    return ""


def _equation_problem(eq: Equation) -> str:
    """An equation block whose substitution does not give its printed result is refused:
    a reader re-doing the arithmetic must get the number the package states."""
    from reportgen.formula import FormulaError, evaluate, names_in

    try:
        names = names_in(eq.expression)
        operands = dict(eq.operands)
        if names != operands.keys():
            return (f"equation {eq.name} = {eq.expression}: operands {sorted(operands)}"
                    f" do not match the names in the expression {sorted(names)}")
        again = evaluate(eq.expression, operands)
    except (FormulaError, ArithmeticError, ValueError, TypeError) as exc:
        return f"equation {eq.name} = {eq.expression} cannot be evaluated: {exc}"
    if not math.isclose(again, eq.result.value, rel_tol=1e-9, abs_tol=1e-300):
        return (f"equation {eq.name} = {eq.expression}: its operands give {again:.6g}, but"
                f" the block states {eq.result.value:.6g}")
    return ""


def _schedule_results(job: Job, plugins: PluginSet, sections: list[Section]) -> tuple[str, ...]:
    """The result keys a schedule's summary shows: what the calc type names, else the
    first three key results of its first row."""
    if not job.schedule:
        return ()
    first = next(s for s in sections if s.calc_id == job.schedule[0].calc_id)
    named = plugins.calcs[first.plugin].calc_type.schedule_results
    return tuple(named) or tuple(r.key for r in first.results if r.key_result)[:3]
