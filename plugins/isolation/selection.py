"""isolation's spring choice from a firm's catalogue (``catalogue = "<file>"``): for each
mount the lightest model that carries its load and reaches the deflection the target needs.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from reportgen_plugins.mechanics import quantity_text
from reportgen_plugins.mechanics.catalogue import CatalogueError, read_catalogue
from reportgen_plugins.mechanics.catalogue_sheet import (
    MountSpring,
    catalogue_checks,
    required_deflection_text,
    selection_paragraph,
    selection_table,
)
from reportgen_plugins.mechanics.isolator_selection import select_for_loads

from reportgen import InputSpec, Note, Sheet

CATALOGUE_INPUT = InputSpec(
    name="catalogue", symbol="C", description="Isolator catalogue to choose the springs"
    " from (CSV or TOML; beside the job file or in the firm's template folder)",
    kind="file", formats=(".csv", ".toml"), required=False, max_bytes=1024 * 1024)

UNEQUAL_NOTE = (
    "The loads above come from equal springs under a rigid base. Springs of different rates"
    " share the weight differently (a stiffer spring draws more load); where the chosen"
    " models differ, the rigid_body_mounts calc type recomputes the loads with them.")


def problems(inputs: Mapping[str, Any]) -> list[tuple[str, str]]:
    """A catalogue that cannot be read, named by file, row and column (exit 2)."""
    f = inputs.get("catalogue")
    if f is None:
        return []
    try:
        read_catalogue(f.name, f.read_bytes())
    except CatalogueError as exc:
        return [("inputs.catalogue", str(exc))]
    return []


def write(s: Sheet, p: Mapping[str, Any], loads: Sequence[float], delta_req: float,
          units: str) -> None:
    """The selection paragraph, table and cross-checks, when the job names a catalogue."""
    f = p.get("catalogue")
    if f is None:
        return
    cat = read_catalogue(f.name, f.read_bytes())
    picks = select_for_loads(cat, loads, delta_req, units=units)
    springs = tuple(MountSpring(number=i, how="selected", model=sel.row, selection=sel,
                                load=load, deflection=(load / sel.row.spring_rate
                                                       if sel.row is not None else 0.0))
                    for i, (sel, load) in enumerate(zip(picks, loads, strict=True), start=1))
    need = required_deflection_text(delta_req, [
        "the static deflection the isolation target needs,"
        f" {quantity_text(delta_req, 'length', units, 4)}"], units)
    s.add(selection_paragraph(cat, need), selection_table(springs))
    if len({sp.model.model for sp in springs if sp.model is not None}) > 1:
        s.add(Note(text=UNEQUAL_NOTE))
    catalogue_checks(s, springs, cat, delta_req)
