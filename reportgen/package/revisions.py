"""Revisions side by side: a package or a job file read as one side of a comparison, and
the "Changes since revision X" section a new revision gains from its previous package."""

from __future__ import annotations

import dataclasses
import tempfile
from pathlib import Path
from typing import TYPE_CHECKING, Any

from reportgen.errors import JobError, Problem
from reportgen.model import Document
from reportgen.package.archive import load_embedded_job, open_package
from reportgen.package.change_table import change_table
from reportgen.package.compare import Side, compare, describe_changes

if TYPE_CHECKING:
    from reportgen.job.load import Job


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


def changes_since(doc: Document, job: Job) -> Document:
    """Add a "Changes since revision X" section from the previous package's embedded files.

    The previous revision's name goes into ``doc.extra`` as ``previous_revision`` for the
    section title; the lines compare its embedded job and results with this build.
    """
    from reportgen.document.results import results_data
    from reportgen.document.transforms import with_changes

    assert job.previous_package is not None
    try:
        previous = open_package(job.previous_package)
    except JobError as exc:
        raise JobError([Problem(str(job.path), f"previous package {pr.file}: {pr.message}",
                                field="package.previous_package")
                        for pr in exc.problems]) from None
    lines = describe_changes(previous.results, results_data(doc),
                             previous_job=previous.job_raw, new_job=dict(job.raw))
    table = change_table(compare(Side(label="previous", job_raw=previous.job_raw,
                                      results=previous.results),
                                 Side(label="this revision", job_raw=dict(job.raw),
                                      results=results_data(doc))), doc)
    prev_pkg = previous.results.get("package", {})
    if prev_pkg.get("calc_number") != job.info.calc_number:
        lines.insert(0, f"The previous package is calc {prev_pkg.get('calc_number', '?')},"
                        f" not {job.info.calc_number}: check [package] previous_package.")
    if doc.schedule:
        from reportgen.package.compare import schedule_changes

        doc = dataclasses.replace(doc, schedule_changes=schedule_changes(
            previous.results, results_data(doc)))
        # the rows' changes are the table's: the lines keep the rest of the job
        ids = doc.schedule_ids | {r.get("calc") for r in (previous.results.get("schedule")
                                                          or {}).get("rows", [])}
        lines = [ln for ln in lines if not any(ln.startswith((f"{i}: ", f"Calc {i} "))
                                               for i in ids)]
        table = None  # row by row the schedule's table says it; the rest as lines
    label = str(prev_pkg.get("revision", "")) or "?"
    if prev_pkg.get("date"):
        label += f" ({prev_pkg['date']})"
    doc = with_changes(doc, tuple(lines) or ("No inputs, results or check statuses"
                                              " changed.",), label)
    return dataclasses.replace(doc, changes_table=table if table and table.rows else None)
