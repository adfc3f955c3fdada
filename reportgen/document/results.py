"""results.json: the stable, machine-readable contract of a package (always SI)."""

from __future__ import annotations

import json
import math
from typing import Any

from reportgen.model import Check, Document, Quantity, Section
from reportgen.units import DIMENSIONS

RESULTS_FORMAT = "reportgen.results/1"


def si_unit(dimension: str) -> str:
    return DIMENSIONS[dimension].si_unit or "1"


def _q(q: Quantity | None) -> dict[str, Any] | None:
    if q is None:
        return None
    return {"value": q.value, "unit": si_unit(q.dimension)}


def results_data(doc: Document) -> dict[str, Any]:
    out = _results(doc)
    if doc.schedule:
        out["schedule"] = schedule_rows(doc)
    return out


def schedule_rows(doc: Document) -> dict[str, Any]:
    """The schedule as its summary shows it: one row per tag, in tag order."""
    rows = []
    for item in doc.schedule_by_tag:
        s = doc.section_of(item.calc_id)
        assert s is not None
        g = s.governing_check
        rows.append({
            "tag": item.tag, "calc": item.calc_id, "row": item.row,
            "description": item.description, "location": item.location,
            "mounting": item.mounting, "notes": item.notes,
            "results": {k: _q(r.quantity) for k in doc.schedule_results
                        if (r := s.result(k)) is not None},
            "governing_check": None if g is None else g.id,
            "status": "info" if g is None else g.status,
        })
    return {"source": doc.schedule_source, "results": list(doc.schedule_results),
            "rows": rows}


def _results(doc: Document) -> dict[str, Any]:
    info = doc.info
    checks = doc.design_checks
    return {
        "format": RESULTS_FORMAT,
        "package": {
            "title": info.title, "client": info.client, "project": info.project,
            "job_number": info.job_number, "calc_number": info.calc_number,
            "revision": info.revision, "date": info.date, "units": info.units,
            "prepared_by": info.prepared_by, "checked_by": info.checked_by,
            "approved_by": info.approved_by, "review_state": doc.review_state,
            "status": doc.status,
            "checks_total": len(checks),
            "checks_failed": len(doc.failed),
            "checks_failed_unaccepted": len(doc.unaccepted),
            "fit_to_issue": doc.fit_to_issue,
            "deviations": [
                {"calc": d.calc, "check": d.check, "justification": d.justification,
                 "accepted_by": d.accepted_by, "date": d.date or None}
                for d in doc.deviations],
        },
        "calcs": [
            {
                "id": s.calc_id, "plugin": s.plugin, "plugin_version": s.plugin_version,
                "plugin_package": s.plugin_package, "title": s.title,
                "results": {**{r.key: _q(r.quantity) for r in s.results},
                            **{rl.key: [dict(zip(rl.fields, row, strict=True))
                                        for row in rl.rows] for rl in s.result_lists}},
                "checks": [
                    {"id": c.id, "description": c.description, "status": c.status,
                     "value": _q(c.value), "limit": _q(c.limit), "comparison": c.comparison,
                     "accepted_deviation": doc.deviation(s.calc_id, c.id) is not None,
                     **_governing(c)}
                    for c in s.checks
                ],
                "verification": None if s.verification is None else [
                    {"quantity": v.quantity, "closed_form": v.closed_form,
                     "independent": v.independent,
                     "rel_difference": v.rel_difference if math.isfinite(v.rel_difference)
                     else None,
                     "tolerance": v.tolerance, "agrees": v.agrees, "method": v.method,
                     **({} if s.envelope is None else {"point": _inputs(v.point_inputs)})}
                    for v in s.verification
                ],
                **_envelope(s),
            }
            for s in doc.sections
        ],
    }


def _inputs(inputs: tuple[tuple[str, Quantity], ...]) -> dict[str, Any]:
    return {name: _q(q) for name, q in inputs}


def _governing(c: Check) -> dict[str, Any]:
    """A check judged over an envelope: its worst value and the inputs (SI) where it
    governs, those that differ from nominal; its ``value`` stays the nominal one."""
    g = c.governing
    if g is None:
        return {}
    value = _q(g.value) or {"value": None, "unit": None}
    return {"governing": {**value, "status": g.status, "nominal_status": g.nominal_status,
                          "where": g.where, "inputs": _inputs(g.inputs)}}


def _envelope(s: Section) -> dict[str, Any]:
    """The extent of the calc's operating envelope (SI), when it has one."""
    e = s.envelope
    if e is None:
        return {}
    return {"envelope": {
        "inputs": {i.name: {"kind": i.kind, "written": i.text, "low": i.low.value,
                            "nominal": i.nominal.value, "high": i.high.value,
                            "unit": si_unit(i.low.dimension)} for i in e.inputs},
        "orders": [{"order": k, "label": label} for k, label in e.orders],
        "evaluations": e.evaluations}}


def results_bytes(doc: Document) -> bytes:
    return (json.dumps(results_data(doc), indent=2, ensure_ascii=False, allow_nan=False)
            + "\n").encode("utf-8")
