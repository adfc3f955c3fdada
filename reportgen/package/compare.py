"""Compare two revisions (packages or job files): inputs, results and check statuses.

Also reads a previous package's embedded results for the "Changes since revision X" section.
"""

from __future__ import annotations

import json
import math
import sys
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, JobError, Problem
from reportgen.package.archive import Package, open_package

#: results closer than this (relative) have not moved: float noise is not a change
MOVE_RTOL = 1e-9


@dataclass(frozen=True, kw_only=True)
class Side:
    """One revision: its raw job, SI inputs per calc (None if unknown) and results."""

    label: str
    job_raw: dict[str, Any]
    results: dict[str, Any]
    si_inputs: dict[str, dict[str, Any]] | None = None


@dataclass(kw_only=True)
class Changes:
    package: list[tuple[str, Any, Any]] = field(default_factory=list)
    calcs_added: list[str] = field(default_factory=list)
    calcs_removed: list[str] = field(default_factory=list)
    # (calc id, "inputs.mass", kind added|removed|changed, old raw, new raw, old SI, new SI)
    inputs: list[tuple[str, str, str, Any, Any, Any, Any]] = field(default_factory=list)
    # (calc id, key, old value, new value, unit, relative change or None)
    results: list[tuple[str, str, float | None, float | None, str, float | None]] = field(
        default_factory=list)
    # (calc id, check id, old status, new status)
    checks: list[tuple[str, str, str, str]] = field(default_factory=list)


# ---------------------------------------------------------------- reading

def read_package(path: Path | str) -> dict[str, Any]:
    """The embedded results.json of a package (its hashes checked against the manifest)."""
    return open_package(path).results


def read_package_files(path: Path | str) -> Package:
    """Every embedded file of a package, hash-checked (see :func:`archive.open_package`)."""
    return open_package(path)


def _is_pdf(path: Path) -> bool:
    try:
        with path.open("rb") as fh:
            return fh.read(5) == b"%PDF-"
    except OSError:
        raise JobError(Problem(str(path), "no such file, or it cannot be read")) from None


def load_side(path: Path, plugins: Any) -> Side:
    """A package (its embedded job and results) or a job file (computed, not rendered)."""
    from reportgen.document.compute import compute_document
    from reportgen.document.results import results_data
    from reportgen.job.load import load_job

    if _is_pdf(path):
        pkg = open_package(path)
        si = None
        with tempfile.TemporaryDirectory(prefix="reportgen-diff-") as tmp:
            from reportgen.package.archive import load_embedded_job

            try:
                job = load_embedded_job(pkg, plugins, Path(tmp))
                si = _si_inputs(job)
            except JobError:
                si = None  # e.g. a plugin no longer installed: compare raw values only
        return Side(label=_label(pkg.results, path), job_raw=pkg.job_raw,
                    results=pkg.results, si_inputs=si)
    job = load_job(path, plugins)
    results = results_data(compute_document(job, plugins))
    return Side(label=_label(results, path), job_raw=dict(job.raw), results=results,
                si_inputs=_si_inputs(job))


def _si_inputs(job: Any) -> dict[str, dict[str, Any]]:
    out: dict[str, dict[str, Any]] = {}
    for c in job.calcs:
        values = {f"inputs.{k}": v for k, v in c.inputs.items()}
        values.update({f"criteria.{k}": v for k, v in c.criteria.items()})
        out[c.id] = values
    return out


def _label(results: dict[str, Any], path: Path) -> str:
    pkg = results.get("package", {})
    rev = pkg.get("revision", "?")
    date = f" ({pkg['date']})" if pkg.get("date") else ""
    return f"{pkg.get('calc_number', path.name)} revision {rev}{date}"


# ---------------------------------------------------------------- comparing

def _calcs(job_raw: dict[str, Any]) -> dict[str, dict[str, Any]]:
    calcs = job_raw.get("calc", [])
    if not isinstance(calcs, list):
        return {}
    return {c["id"]: c for c in calcs if isinstance(c, dict) and isinstance(c.get("id"), str)}


def _result_calcs(results: dict[str, Any]) -> dict[str, dict[str, Any]]:
    return {c.get("id", f"#{i + 1}"): c for i, c in enumerate(results.get("calcs", []))}


def relative_change(old: float, new: float) -> float | None:
    """(new - old) / |old|; None when old is zero (a change from zero has no ratio)."""
    if old == 0:
        return None
    return (new - old) / abs(old)


def compare(old: Side, new: Side, rtol: float = MOVE_RTOL) -> Changes:
    ch = Changes()
    old_pkg, new_pkg = old.results.get("package", {}), new.results.get("package", {})
    for key in ("title", "calc_number", "revision", "date", "prepared_by", "checked_by",
                "approved_by", "review_state", "status"):
        if old_pkg.get(key) != new_pkg.get(key):
            ch.package.append((key, old_pkg.get(key), new_pkg.get(key)))
    old_jc, new_jc = _calcs(old.job_raw), _calcs(new.job_raw)
    old_rc, new_rc = _result_calcs(old.results), _result_calcs(new.results)
    ids_old = list(dict.fromkeys([*old_jc, *old_rc]))
    ids_new = list(dict.fromkeys([*new_jc, *new_rc]))
    ch.calcs_removed = [c for c in ids_old if c not in ids_new]
    ch.calcs_added = [c for c in ids_new if c not in ids_old]
    for cid in (c for c in ids_new if c in ids_old):
        _compare_inputs(ch, cid, old, new, old_jc.get(cid, {}), new_jc.get(cid, {}))
        oc, nc = old_rc.get(cid, {}), new_rc.get(cid, {})
        o_res, n_res = oc.get("results", {}), nc.get("results", {})
        for key in dict.fromkeys([*o_res, *n_res]):
            a, b = o_res.get(key), n_res.get(key)
            unit = (b or a or {}).get("unit", "")
            va = a.get("value") if a else None
            vb = b.get("value") if b else None
            if va is None or vb is None:
                if va != vb:
                    ch.results.append((cid, key, va, vb, unit, None))
            elif not math.isclose(va, vb, rel_tol=rtol, abs_tol=0.0):
                ch.results.append((cid, key, va, vb, unit, relative_change(va, vb)))
        o_chk = {c.get("id"): c.get("status") for c in oc.get("checks", [])}
        n_chk = {c.get("id"): c.get("status") for c in nc.get("checks", [])}
        for key in dict.fromkeys([*o_chk, *n_chk]):
            if o_chk.get(key) != n_chk.get(key):
                ch.checks.append((cid, key, o_chk.get(key) or "absent",
                                  n_chk.get(key) or "absent"))
    return ch


def _compare_inputs(ch: Changes, cid: str, old: Side, new: Side, oc: dict[str, Any],
                    nc: dict[str, Any]) -> None:
    for key in ("plugin", "title"):
        if oc.get(key) != nc.get(key):
            ch.inputs.append((cid, key, "changed", oc.get(key), nc.get(key), None, None))
    o_raw = {f"{t}.{k}": v for t in ("inputs", "criteria")
             for k, v in (oc.get(t) or {}).items()}
    n_raw = {f"{t}.{k}": v for t in ("inputs", "criteria")
             for k, v in (nc.get(t) or {}).items()}
    o_si = (old.si_inputs or {}).get(cid, {})
    n_si = (new.si_inputs or {}).get(cid, {})
    for key in dict.fromkeys([*o_raw, *n_raw, *o_si, *n_si]):
        a_raw, b_raw = o_raw.get(key), n_raw.get(key)
        a_si, b_si = o_si.get(key), n_si.get(key)
        if a_raw == b_raw and a_si == b_si:
            continue
        if a_raw is None and b_raw is None:
            kind = "changed"  # a default of the calc type moved between versions
        elif a_raw is None:
            kind = "added"
        elif b_raw is None:
            kind = "removed"
        else:
            kind = "changed"
        ch.inputs.append((cid, key, kind, a_raw, b_raw, a_si, b_si))


# ---------------------------------------------------------------- describing

def _num(v: Any) -> str:
    if isinstance(v, float):
        return f"{v:.6g}"
    if isinstance(v, (tuple, list)):
        return "[" + ", ".join(_num(x) for x in v) + "]"
    return str(v)


def _raw(v: Any) -> str:
    if v is None:
        return "(not given)"
    try:
        return json.dumps(v, ensure_ascii=False, default=str)
    except (TypeError, ValueError):
        return repr(v)


def _rel(r: float | None) -> str:
    return "from zero" if r is None else f"{r * 100:+.3g} %"


def _moved(x: float | None, y: float | None, r: float | None) -> str:
    if x is None or y is None:
        return "added" if x is None else "removed"
    return _rel(r)


def change_lines(ch: Changes, *, si: bool = True) -> list[str]:
    """One sentence a change, in a fixed order: calcs, inputs, results, checks."""
    lines = [f"Calc {c} added." for c in ch.calcs_added]
    lines += [f"Calc {c} removed." for c in ch.calcs_removed]
    for cid, key, kind, a, b, a_si, b_si in ch.inputs:
        si_text = ""
        if si and (a_si is not None or b_si is not None) and (a_si != b_si):
            si_text = f" (SI {_num(a_si) if a_si is not None else '-'} → " \
                      f"{_num(b_si) if b_si is not None else '-'})"
        if kind == "added":
            lines.append(f"{cid}: {key} added: {_raw(b)}{si_text}.")
        elif kind == "removed":
            lines.append(f"{cid}: {key} removed (was {_raw(a)}){si_text}.")
        else:
            lines.append(f"{cid}: {key} changed from {_raw(a)} to {_raw(b)}{si_text}.")
    for cid, key, a, b, unit, rel in ch.results:
        u = f" {unit}" if unit and unit != "1" else ""
        if a is None or b is None:
            what = "new result" if a is None else "result no longer given"
            lines.append(f"{cid}: {what} {key} ({_num(b if a is None else a)}{u}).")
        else:
            lines.append(f"{cid}: result {key} moved from {_num(a)} to {_num(b)}{u}"
                         f" ({_rel(rel)}).")
    for cid, key, a, b in ch.checks:
        lines.append(f"{cid}: check {key} {a.upper()} → {b.upper()}.")
    return lines


def describe_changes(previous_results: dict[str, Any], new_results: dict[str, Any], *,
                     previous_job: dict[str, Any] | None = None,
                     new_job: dict[str, Any] | None = None) -> list[str]:
    """Lines for the "Changes since revision X" section (results in SI, inputs as written)."""
    old = Side(label="previous", job_raw=previous_job or {}, results=previous_results)
    new = Side(label="this revision", job_raw=new_job or {}, results=new_results)
    return change_lines(compare(old, new), si=False)


def diff_command(old: Path, new: Path) -> int:
    """Print what changed from ``old`` to ``new``; exit 0 (2 when either is invalid)."""
    from reportgen.cli.commands import load_plugins

    plugins = load_plugins()
    a, b = load_side(Path(old), plugins), load_side(Path(new), plugins)
    ch = compare(a, b)
    out = sys.stdout
    print(f"{a.label}  →  {b.label}", file=out)
    print(f"  old: {old}\n  new: {new}", file=out)
    if ch.package:
        print("\nPackage", file=out)
        for key, x, y in ch.package:
            print(f"  {key:<14}{_raw(x)} → {_raw(y)}", file=out)
    sections = (
        ("Calcs", [f"  added    {c}" for c in ch.calcs_added]
         + [f"  removed  {c}" for c in ch.calcs_removed]),
        ("Inputs and criteria (as written; SI in brackets)", [
            f"  {kind:<8} {cid:<20} {key:<30} {_raw(x)} → {_raw(y)}"
            + (f"  [{_num(xs) if xs is not None else '-'} → {_num(ys) if ys is not None else '-'}]"
               if xs != ys else "")
            for cid, key, kind, x, y, xs, ys in ch.inputs]),
        ("Results that moved (SI)", [
            f"  {cid:<20} {key:<30} {_num(x) if x is not None else '-':>12} →"
            f" {_num(y) if y is not None else '-':>12} {unit if unit != '1' else '':<8}"
            f" {_moved(x, y, r)}" for cid, key, x, y, unit, r in ch.results]),
        ("Check statuses that flipped", [
            f"  {cid:<20} {key:<30} {x.upper()} → {y.upper()}" for cid, key, x, y in ch.checks]),
    )
    for title, rows in sections:
        print(f"\n{title}", file=out)
        print("\n".join(rows) if rows else "  none", file=out)
    if a.si_inputs is None or b.si_inputs is None:
        print("\nnote: SI input values are unavailable for a package whose calc types are not"
              " installed here; raw job values are compared", file=out)
    return int(ExitCode.OK)
