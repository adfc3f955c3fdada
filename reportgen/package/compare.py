"""The one comparer of two revisions of a package (or a package and its rebuild): the
package's facts, calcs added or removed, inputs as written (and in SI), results, check
statuses, values and limits, operating envelopes and where each check governs, and the
independent verification's agreement.

``reportgen diff``, the "Changes since revision X" section and ``reportgen verify`` all
read the same :class:`Changes`; each shows the part it needs. Pure data in, data out.
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass, field
from typing import Any

#: results closer than this (relative) have not moved: float noise is not a change
MOVE_RTOL = 1e-9
#: the package facts compared (diff shows the first nine, verify the last four)
PACKAGE_KEYS = ("title", "calc_number", "revision", "date", "prepared_by", "checked_by",
                "approved_by", "review_state", "status", "checks_total", "checks_failed")
DIFF_KEYS = PACKAGE_KEYS[:9]
VERIFY_KEYS = ("status", "review_state", "checks_total", "checks_failed")


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
    #: the calcs both sides have, in order
    common: list[str] = field(default_factory=list)
    # (calc id, "inputs.mass", kind added|removed|changed, old raw, new raw, old SI, new SI)
    inputs: list[tuple[str, str, str, Any, Any, Any, Any]] = field(default_factory=list)
    # (calc id, key, old value, new value, unit, relative change or None)
    results: list[tuple[str, str, float | None, float | None, str, float | None]] = field(
        default_factory=list)
    # (calc id, key, old unit, new unit)
    units: list[tuple[str, str, Any, Any]] = field(default_factory=list)
    # (calc id, check id, old status, new status)
    checks: list[tuple[str, str, str, str]] = field(default_factory=list)
    # (calc id, check id, "value"|"limit", old, new)
    check_values: list[tuple[str, str, str, Any, Any]] = field(default_factory=list)
    # (calc id, old agreement flags, new agreement flags)
    verification: list[tuple[str, list, list]] = field(default_factory=list)
    # (calc id, old envelope in words or None, new envelope in words or None)
    envelope: list[tuple[str, str | None, str | None]] = field(default_factory=list)
    # (calc id, check id, old governing value, new, old point in words, new, unit)
    governing: list[tuple[str, str, Any, Any, str, str, str]] = field(default_factory=list)


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


def _close(a: Any, b: Any, rtol: float) -> bool:
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(
            a, bool) and not isinstance(b, bool):
        return math.isclose(a, b, rel_tol=rtol, abs_tol=0.0)
    return a == b


def _qv(q: Any) -> Any:
    return q.get("value") if isinstance(q, dict) else q


def compare(old: Side, new: Side, rtol: float = MOVE_RTOL) -> Changes:
    """Everything that differs between ``old`` and ``new`` (numbers within ``rtol``
    relative count as equal)."""
    ch = Changes()
    old_pkg, new_pkg = old.results.get("package", {}), new.results.get("package", {})
    for key in PACKAGE_KEYS:
        if old_pkg.get(key) != new_pkg.get(key):
            ch.package.append((key, old_pkg.get(key), new_pkg.get(key)))
    old_jc, new_jc = _calcs(old.job_raw), _calcs(new.job_raw)
    old_rc, new_rc = _result_calcs(old.results), _result_calcs(new.results)
    ids_old = list(dict.fromkeys([*old_jc, *old_rc]))
    ids_new = list(dict.fromkeys([*new_jc, *new_rc]))
    ch.calcs_removed = [c for c in ids_old if c not in ids_new]
    ch.calcs_added = [c for c in ids_new if c not in ids_old]
    ch.common = [c for c in ids_old if c in ids_new]
    for cid in (c for c in ids_new if c in ids_old):
        _compare_inputs(ch, cid, old, new, old_jc.get(cid, {}), new_jc.get(cid, {}))
        oc, nc = old_rc.get(cid, {}), new_rc.get(cid, {})
        _compare_results(ch, cid, oc.get("results", {}), nc.get("results", {}), rtol)
        _compare_checks(ch, cid, oc.get("checks", []), nc.get("checks", []), rtol)
        _compare_envelopes(ch, cid, oc, nc, rtol)
        o_ver = [v.get("agrees") for v in oc.get("verification") or []]
        n_ver = [v.get("agrees") for v in nc.get("verification") or []]
        if o_ver != n_ver:
            ch.verification.append((cid, o_ver, n_ver))
    return ch


def _flat(res: dict) -> dict:
    """A list result (band levels) compared field by field: key[i].field."""
    out: dict = {}
    for key, value in res.items():
        if isinstance(value, list):
            for i, row in enumerate(value, start=1):
                for field_name, v in (row.items() if isinstance(row, dict) else ()):
                    out[f"{key}[{i}].{field_name}"] = {"value": v, "unit": ""}
        else:
            out[key] = value
    return out


def _compare_results(ch: Changes, cid: str, o_res: dict, n_res: dict, rtol: float) -> None:
    o_res, n_res = _flat(o_res), _flat(n_res)
    for key in dict.fromkeys([*o_res, *n_res]):
        a, b = o_res.get(key), n_res.get(key)
        unit = (b or a or {}).get("unit", "")
        va = a.get("value") if a else None
        vb = b.get("value") if b else None
        if a and b and a.get("unit") != b.get("unit"):
            ch.units.append((cid, key, a.get("unit"), b.get("unit")))
        if va is None or vb is None:
            if va != vb:
                ch.results.append((cid, key, va, vb, unit, None))
        elif not _close(va, vb, rtol):
            ch.results.append((cid, key, va, vb, unit, relative_change(va, vb)
                               if isinstance(va, (int, float)) and isinstance(vb, (int, float))
                               else None))


def _compare_checks(ch: Changes, cid: str, o_list: list, n_list: list, rtol: float) -> None:
    o_chk = {c.get("id"): c for c in o_list}
    n_chk = {c.get("id"): c for c in n_list}
    for key in dict.fromkeys([*o_chk, *n_chk]):
        a, b = o_chk.get(key), n_chk.get(key)
        if (a and a.get("status")) != (b and b.get("status")):
            ch.checks.append((cid, key, (a or {}).get("status") or "absent",
                              (b or {}).get("status") or "absent"))
        if a is None or b is None:
            continue
        for part in ("value", "limit"):
            va, vb = _qv(a.get(part)), _qv(b.get(part))
            if not _close(va, vb, rtol):
                ch.check_values.append((cid, key, part, va, vb))


def envelope_text(env: dict[str, Any] | None) -> str | None:
    """An envelope's extent in words: its inputs as written and its orders."""
    if not env:
        return None
    parts = [f"{name} {e.get('written', '')}".strip()
             for name, e in (env.get("inputs") or {}).items()]
    orders = [o.get("order") for o in env.get("orders") or []]
    if len(orders) > 1:
        parts.append("orders " + ", ".join(num(o) for o in orders))
    return "; ".join(parts)


def _compare_envelopes(ch: Changes, cid: str, oc: dict[str, Any], nc: dict[str, Any],
                       rtol: float) -> None:
    """The envelope's extent, and where and at what value each check governs."""
    a, b = envelope_text(oc.get("envelope")), envelope_text(nc.get("envelope"))
    if a != b:
        ch.envelope.append((cid, a, b))
    o_chk = {c.get("id"): c.get("governing") for c in oc.get("checks", [])}
    n_chk = {c.get("id"): c.get("governing") for c in nc.get("checks", [])}
    for key in dict.fromkeys([*o_chk, *n_chk]):
        ga, gb = o_chk.get(key), n_chk.get(key)
        if not ga and not gb:
            continue
        va, vb = _qv(ga), _qv(gb)
        wa = (ga or {}).get("where", "") if ga else "(no envelope)"
        wb = (gb or {}).get("where", "") if gb else "(no envelope)"
        if not _close(va, vb, rtol) or wa != wb:
            unit = (gb or ga or {}).get("unit") or ""
            ch.governing.append((cid, key, va, vb, wa or "at nominal", wb or "at nominal",
                                 unit))


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

def num(v: Any) -> str:
    if isinstance(v, float):
        return f"{v:.6g}"
    if isinstance(v, (tuple, list)):
        return "[" + ", ".join(num(x) for x in v) + "]"
    return str(v)


def raw_text(v: Any) -> str:
    if v is None:
        return "(not given)"
    try:
        return json.dumps(v, ensure_ascii=False, default=str)
    except (TypeError, ValueError):
        return repr(v)


def rel_text(r: float | None) -> str:
    return "from zero" if r is None else f"{r * 100:+.3g} %"


def moved_text(x: float | None, y: float | None, r: float | None) -> str:
    if x is None or y is None:
        return "added" if x is None else "removed"
    return rel_text(r)


def change_lines(ch: Changes, *, si: bool = True) -> list[str]:
    """One sentence a change, in a fixed order: calcs, inputs, results, checks."""
    lines = [f"Calc {c} added." for c in ch.calcs_added]
    lines += [f"Calc {c} removed." for c in ch.calcs_removed]
    for cid, key, kind, a, b, a_si, b_si in ch.inputs:
        si_text = ""
        if si and (a_si is not None or b_si is not None) and (a_si != b_si):
            si_text = f" (SI {num(a_si) if a_si is not None else '-'} → " \
                      f"{num(b_si) if b_si is not None else '-'})"
        if kind == "added":
            lines.append(f"{cid}: {key} added: {raw_text(b)}{si_text}.")
        elif kind == "removed":
            lines.append(f"{cid}: {key} removed (was {raw_text(a)}){si_text}.")
        else:
            lines.append(f"{cid}: {key} changed from {raw_text(a)} to {raw_text(b)}{si_text}.")
    for cid, key, a, b, unit, rel in ch.results:
        u = f" {unit}" if unit and unit != "1" else ""
        if a is None or b is None:
            what = "new result" if a is None else "result no longer given"
            lines.append(f"{cid}: {what} {key} ({num(b if a is None else a)}{u}).")
        else:
            lines.append(f"{cid}: result {key} moved from {num(a)} to {num(b)}{u}"
                         f" ({rel_text(rel)}).")
    for cid, key, a, b in ch.checks:
        lines.append(f"{cid}: check {key} {a.upper()} → {b.upper()}.")
    lines += envelope_lines(ch)
    return lines


def envelope_lines(ch: Changes) -> list[str]:
    """One sentence per change of an operating envelope or of where a check governs."""
    lines = []
    for cid, a, b in ch.envelope:
        if a is None:
            lines.append(f"{cid}: operating envelope added: {b}.")
        elif b is None:
            lines.append(f"{cid}: operating envelope removed (was {a}).")
        else:
            lines.append(f"{cid}: operating envelope changed from {a} to {b}.")
    for cid, key, a, b, wa, wb, unit in ch.governing:
        u = f" {unit}" if unit and unit != "1" else ""
        if wa == "(no envelope)" or wb == "(no envelope)":
            continue  # said by the envelope's own line
        lines.append(f"{cid}: check {key} governs at {num(b)}{u} {wb} (was {num(a)}{u}"
                     f" {wa}).")
    return lines


def describe_changes(previous_results: dict[str, Any], new_results: dict[str, Any], *,
                     previous_job: dict[str, Any] | None = None,
                     new_job: dict[str, Any] | None = None) -> list[str]:
    """Lines for the "Changes since revision X" section (results in SI, inputs as written)."""
    old = Side(label="previous", job_raw=previous_job or {}, results=previous_results)
    new = Side(label="this revision", job_raw=new_job or {}, results=new_results)
    return change_lines(compare(old, new), si=False)


def verify_rows(embedded: dict[str, Any], rebuilt: dict[str, Any],
                rtol: float) -> list[tuple[str, str, str, str, str]]:
    """Rows (calc, item, embedded, rebuilt, note) for every result or check that differs
    between a package's embedded results and its rebuild, calc by calc."""
    ch = compare(Side(label="embedded", job_raw={}, results=embedded),
                 Side(label="rebuilt", job_raw={}, results=rebuilt), rtol)

    def fmt(v: Any) -> str:
        if v is None:
            return "-"
        return f"{v:.10g}" if isinstance(v, float) else str(v)

    def rel(a: Any, b: Any) -> str:
        if isinstance(a, (int, float)) and isinstance(b, (int, float)) and a:
            return f"relative change {(b - a) / abs(a):+.2e}"
        return ""

    rows = [("package", key, fmt(a), fmt(b), "") for key, a, b in ch.package
            if key in VERIFY_KEYS]
    rows.sort(key=lambda r: VERIFY_KEYS.index(r[1]))
    order = list(dict.fromkeys([*ch.common, *ch.calcs_removed, *ch.calcs_added]))
    for cid in order:
        if cid in ch.calcs_removed or cid in ch.calcs_added:
            rows.append((str(cid), "(calc)", "present" if cid in ch.calcs_removed else
                         "absent", "present" if cid in ch.calcs_added else "absent", ""))
            continue
        units = {key: (a, b) for c, key, a, b in ch.units if c == cid}
        moved = {key: (a, b) for c, key, a, b, _u, _r in ch.results if c == cid}
        for key in dict.fromkeys([*units, *moved]):
            if key in moved and (moved[key][0] is None or moved[key][1] is None):
                a, b = moved[key]
                rows.append((cid, f"result {key}", fmt(a), fmt(b),
                             "missing from the rebuild" if b is None else "new in the rebuild"))
                continue
            if key in units:
                rows.append((cid, f"result {key} unit", fmt(units[key][0]),
                             fmt(units[key][1]), ""))
            if key in moved:
                a, b = moved[key]
                rows.append((cid, f"result {key}", fmt(a), fmt(b), rel(a, b)))
        statuses = {key: (sa, sb) for c, key, sa, sb in ch.checks if c == cid}
        values = [(key, part, va, vb) for c, key, part, va, vb in ch.check_values if c == cid]
        for key in dict.fromkeys([*statuses, *(k for k, *_ in values)]):
            if key in statuses:
                sa, sb = statuses[key]
                if "absent" in (sa, sb):
                    rows.append((cid, f"check {key}", sa, sb, ""))
                    continue
                rows.append((cid, f"check {key} status", sa.upper(), sb.upper(),
                             "status flipped"))
            for k, part, va, vb in values:
                if k == key:
                    rows.append((cid, f"check {key} {part}", fmt(va), fmt(vb), rel(va, vb)))
        for c, key, va, vb, wa, wb, _unit in ch.governing:
            if c == cid:
                rows.append((cid, f"check {key} governing", f"{fmt(va)} {wa}",
                             f"{fmt(vb)} {wb}", rel(va, vb)))
        for c, fa, fb in ch.verification:
            if c == cid:
                rows.append((cid, "independent verification", fmt(fa), fmt(fb), ""))
    return rows


def schedule_changes(previous: dict[str, Any], new: dict[str, Any]
                     ) -> tuple[tuple[str, str, str], ...]:
    """Tag by tag, against the previous revision's schedule: (tag, "added" | "removed" |
    "changed", what moved in words: the status and each result the schedule shows)."""
    def rows(results: dict[str, Any]) -> dict[str, dict[str, Any]]:
        return {r["tag"]: r for r in (results.get("schedule") or {}).get("rows", [])}

    old, cur = rows(previous), rows(new)
    out: list[tuple[str, str, str]] = []
    for tag in sorted(set(old) | set(cur), key=_natural):
        a, b = old.get(tag), cur.get(tag)
        if a is None and b is not None:
            out.append((tag, "added", f"status {b['status'].upper()}"))
        elif b is None and a is not None:
            out.append((tag, "removed", f"was {a['status'].upper()}"))
        elif a is not None and b is not None:
            moved = []
            if a["status"] != b["status"]:
                moved.append(f"status {a['status'].upper()} → {b['status'].upper()}")
            for key, q in b["results"].items():
                p = a["results"].get(key)
                if p is None or p.get("value") is None or q.get("value") is None:
                    continue
                if not math.isclose(p["value"], q["value"], rel_tol=1e-9):
                    unit = "" if q.get("unit") in (None, "", "1") else f" {q['unit']}"
                    moved.append(f"{key.replace('_', ' ')} {num(p['value'])} →"
                                 f" {num(q['value'])}{unit} (SI)")
            if moved:
                out.append((tag, "changed", "; ".join(moved)))
    return tuple(out)


def _natural(tag: str) -> list[tuple[int, int, str]]:
    return [(0, int(t), "") if t.isdigit() else (1, 0, t.casefold())
            for t in re.split(r"(\d+)", tag) if t]
