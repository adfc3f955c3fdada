"""The "Changes since revision X" section as a table: what changed, in plain words, with
the values in the package's display units (the renderer converts the Quantity cells)."""

from __future__ import annotations

from typing import Any

from reportgen.model import Document, InputsTable, Quantity, Table
from reportgen.package.compare import Changes
from reportgen.units import UnitProblem, parse_quantity

PACKAGE_WORDS = {"title": "Title", "date": "Revision date", "revision": "Revision",
                 "prepared_by": "Prepared by", "checked_by": "Checked by",
                 "approved_by": "Approved by", "calc_number": "Calc number",
                 "client": "Client", "project": "Project", "review_state": "Review state",
                 "status": "Design checks", "checks_failed": "Failing checks",
                 "checks_total": "Design checks in all", "units": "Units shown"}


def _raw(value: Any) -> Any:
    return value.get("value") if isinstance(value, dict) else value


def _source(raw: Any) -> str:
    return str(raw.get("source") or "job file") if isinstance(raw, dict) else "job file"


def _input_cell(raw: Any, dimension: str | None) -> Any:
    raw = _raw(raw)
    if raw is None:
        return "—"
    if dimension and isinstance(raw, (str, int, float)) and not isinstance(raw, bool):
        try:
            return Quantity(value=parse_quantity(raw, dimension), dimension=dimension)
        except (UnitProblem, KeyError, ValueError, TypeError):
            pass
    return str(raw)


def _percent(rel: float | None) -> str:
    if rel is None:
        return ""
    if rel == 0:
        return "unchanged"
    if rel >= 9:  # a factor reads better than thousands of per cent
        return f"{1 + rel:.3g} times"
    return f"{'up' if rel > 0 else 'down'} {abs(rel) * 100:.3g} %"


def change_table(ch: Changes, doc: Document) -> Table:
    """One row per change: calc (number), what, previous, this revision, change."""
    sections = {s.calc_id: s for s in doc.sections}
    rows: list[tuple[Any, ...]] = []
    for key, a, b in ch.package:
        rows.append(("—", PACKAGE_WORDS.get(key, key.replace("_", " ")),
                     "—" if a in (None, "") else str(a), "—" if b in (None, "") else str(b),
                     ""))
    for cid in ch.calcs_removed:
        rows.append(("—", f"Calc removed: {cid}", "present", "—", ""))
    for cid in ch.calcs_added:
        s = sections.get(cid)
        rows.append((s.number if s else "—", f"Calc added: {s.title if s else cid}", "—",
                     "present", ""))
    for cid, name, kind, old_raw, new_raw, _o, _n in ch.inputs:
        s = sections.get(cid)
        table, dot, key = name.partition(".")
        if not dot:  # a calc's own field: title, notes, calc type
            rows.append((s.number if s else "—", f"Calc {table.replace('_', ' ')}",
                         str(_raw(old_raw) or "—"), str(_raw(new_raw) or "—"), "changed"))
            continue
        spec = _input_row(s, key)
        words = spec.description if spec is not None else key.replace("_", " ")
        dim = spec.quantity.dimension if spec is not None and spec.quantity else None
        if table == "criteria":
            words = f"Criterion: {words}"
        before, after = _input_cell(old_raw, dim), _input_cell(new_raw, dim)
        if kind == "changed" and before == after:  # the same value, from another document
            rows.append((s.number if s else "—", f"{words}: source",
                         _source(old_raw), _source(new_raw), "source changed"))
            continue
        rows.append((s.number if s else "—", words, before, after,
                     {"added": "given", "removed": "no longer given"}.get(kind, "changed")))
    for cid, key, a, b, _unit, rel in ch.results:
        s = sections.get(cid)
        r = next((r for r in s.results if r.key == key), None) if s else None
        dim = r.quantity.dimension if r else "dimensionless"
        rows.append((s.number if s else "—", r.description if r else key.replace("_", " "),
                     "—" if a is None else Quantity(value=float(a), dimension=dim),
                     "—" if b is None else Quantity(value=float(b), dimension=dim),
                     _percent(rel)))
    for cid, key, sa, sb in ch.checks:
        s = sections.get(cid)
        c = next((c for c in s.checks if c.id == key), None) if s else None
        rows.append((s.number if s else "—", c.description if c else key.replace("-", " "),
                     sa.upper() if sa != "absent" else "—",
                     sb.upper() if sb != "absent" else "—", "check status"))
    return Table(title="Changes", header=("Calc", "What changed", "Previous", "This revision",
                                          "Change"), rows=tuple(rows))


def _input_row(section: Any, key: str):
    if section is None:
        return None
    for b in section.blocks:
        if isinstance(b, InputsTable):
            for row in b.rows:
                if row.name == key:
                    return row
    return None
