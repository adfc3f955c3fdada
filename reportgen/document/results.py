"""results.json: the stable, machine-readable contract of a package (always SI)."""

from __future__ import annotations

import json
import math
from typing import Any

from reportgen.model import Document, Quantity
from reportgen.units import DIMENSIONS

RESULTS_FORMAT = "reportgen.results/1"


def si_unit(dimension: str) -> str:
    return DIMENSIONS[dimension].si_unit or "1"


def _q(q: Quantity | None) -> dict[str, Any] | None:
    if q is None:
        return None
    return {"value": q.value, "unit": si_unit(q.dimension)}


def results_data(doc: Document) -> dict[str, Any]:
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
                "results": {r.key: _q(r.quantity) for r in s.results},
                "checks": [
                    {"id": c.id, "description": c.description, "status": c.status,
                     "value": _q(c.value), "limit": _q(c.limit), "comparison": c.comparison,
                     "accepted_deviation": doc.deviation(s.calc_id, c.id) is not None}
                    for c in s.checks
                ],
                "verification": None if s.verification is None else [
                    {"quantity": v.quantity, "closed_form": v.closed_form,
                     "independent": v.independent,
                     "rel_difference": v.rel_difference if math.isfinite(v.rel_difference)
                     else None,
                     "tolerance": v.tolerance, "agrees": v.agrees, "method": v.method}
                    for v in s.verification
                ],
            }
            for s in doc.sections
        ],
    }


def results_bytes(doc: Document) -> bytes:
    return (json.dumps(results_data(doc), indent=2, ensure_ascii=False, allow_nan=False)
            + "\n").encode("utf-8")
