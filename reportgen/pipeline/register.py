"""A set's register: one row per package (calc number, revision, title, status, the PDF's
SHA-256), as register.json and a register PDF beside the packages."""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable
from pathlib import Path
from typing import Any

REGISTER_FORMAT = "reportgen.register/1"
REGISTER_JSON, REGISTER_PDF = "register.json", "register.pdf"


def register_rows(built: Iterable[dict[str, Any]]) -> list[dict[str, Any]]:
    keys = ("calc_number", "revision", "date", "title", "status", "checks_passed",
            "checks_failed", "review_state", "sha256")
    rows = [{k: o[k] for k in keys} | {"file": Path(o["pdf"]).name} for o in built]
    return sorted(rows, key=lambda r: (r["calc_number"], r["revision"]))


def superseded(rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """``rows`` with ``superseded_by``: for each calc number, every revision but the newest
    names the revision that follows it (newest by date, then by revision mark: B after A,
    AA after Z); the newest has None."""
    def order(r: dict[str, Any]) -> tuple[str, int, str]:
        rev = str(r.get("revision") or "")
        return (str(r.get("date") or ""), len(rev), rev)

    after: dict[int, str] = {}
    numbers = {r["calc_number"] for r in rows}
    for number in numbers:
        same = sorted((r for r in rows if r["calc_number"] == number), key=order)
        for older, newer in zip(same, same[1:], strict=False):
            after[id(older)] = newer["revision"]
    return [r | {"superseded_by": after.get(id(r))} for r in rows]


def register_files(out_dir: Path, rows: list[dict[str, Any]]) -> list[tuple[Path, bytes]]:
    """A register of ``rows`` (see register_rows): (path, bytes) of its JSON and its PDF."""
    from reportgen.render.register import register_pdf

    rows = superseded(rows)
    data = {"format": REGISTER_FORMAT, "packages": rows}
    return [(out_dir / REGISTER_JSON,
             (json.dumps(data, indent=2, ensure_ascii=False) + "\n").encode("utf-8")),
            (out_dir / REGISTER_PDF, register_pdf(rows))]


def register_with(out_dir: Path, made) -> list[tuple[Path, bytes]]:
    """The folder's register with the row of the package ``made`` brought up to date,
    or [] if the folder has no register that lists it. A single build of one package of
    a set commits this with the package, so the register's hashes stay those on disk."""
    try:
        data = json.loads((out_dir / REGISTER_JSON).read_bytes())
        rows = list(data["packages"])
        index = [r.get("file") for r in rows].index(f"{made.stem}.pdf")
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return []
    if data.get("format") != REGISTER_FORMAT:
        return []
    pdf = dict(made.outputs)[f"{made.stem}.pdf"]
    rows[index] = register_rows([{
        "calc_number": made.calc_number, "revision": made.revision, "date": made.date,
        "title": made.title, "status": made.status,
        "checks_passed": made.checks_total - made.checks_failed,
        "checks_failed": made.checks_failed, "review_state": made.review_state,
        "sha256": hashlib.sha256(pdf).hexdigest(), "pdf": f"{made.stem}.pdf"}])[0]
    return register_files(out_dir, rows)
