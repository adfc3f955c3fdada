"""``reportgen criteria``: every criterion the installed plugins register (and a firm's own,
from ``--template-dir``), with its quantity and source; ``--json`` for programs.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

from reportgen.calc.criteria import CriteriaLibrary, RegisteredCriterion, load_criteria
from reportgen.calc.plugin_set import load_plugins
from reportgen.errors import ExitCode

__all__ = ["criteria_command", "describe"]

# the core does not interpret a criterion; these optional attributes are shown when present
_OPTIONAL = ("quantity", "family", "aliases", "frequencies", "values", "zones",
             "interpolation", "on_boundary", "notes")


def describe(entry: RegisteredCriterion) -> dict[str, Any]:
    c = entry.criterion
    out: dict[str, Any] = {"name": entry.name, "title": str(c.title), "source": str(c.source),
                           "plugin": entry.plugin, "package": entry.package}
    for key in _OPTIONAL:
        value = getattr(c, key, None)
        if isinstance(value, tuple):
            value = list(value)
        if value not in (None, "", []):
            out[key] = value
    return out


def criteria_command(template_dir: Path | None, as_json: bool) -> int:
    library = load_criteria(load_plugins(), template_dir)
    rows = [describe(e) for e in library]
    if as_json:
        json.dump({"criteria": rows, "problems": library.problems}, sys.stdout, indent=2,
                  ensure_ascii=False)
        print()
    else:
        _print(library, rows)
    for problem in library.problems:
        print(f"error: {problem}", file=sys.stderr)
    return int(ExitCode.INVALID_INPUT if library.problems else ExitCode.OK)


def _print(library: CriteriaLibrary, rows: list[dict[str, Any]]) -> None:
    if not rows:
        print("no criteria registered")
    for row in rows:
        quantity = str(row.get("quantity", "")).replace("_", " ")
        print(f"{row['name']}  ({quantity or 'quantity not stated'};"
              f" plugin '{row['plugin']}')")
        print(f"    {row['title']}")
        print(f"    source: {row['source']}")
