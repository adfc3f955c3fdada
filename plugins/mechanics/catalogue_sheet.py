"""The isolator choice as the package shows it, for any calc that takes springs from a
catalogue: the selection paragraph and table, and the catalogue's cross-checks as checks."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from reportgen import Paragraph, Sheet, Table
from reportgen.units import format_number

from .catalogue import Catalogue, CatalogueRow
from .display import quantity_text
from .isolator_selection import Selection, consistency, travel_check

__all__ = ["SELECTION", "MountSpring", "catalogue_checks", "required_deflection_text",
           "selection_paragraph", "selection_table"]

SELECTION = (
    "Each mount without its own stiffness gets a spring from the catalogue: the lightest"
    " model rated for its static load that reaches the required static deflection and"
    " keeps the travel allowance to solid. Cross-checks on the catalogue data: spring"
    " rate × rated deflection within ±10 % of the rated load (Hooke's law; makers' tables"
    " round both), and travel left to solid at least 50 % of the operating deflection"
    " (common practice).")
_SETTLE = (" A stiffer spring draws more load, so the loads are recomputed with the chosen"
           " springs and the choice repeated until it stops changing.")
_HOW = {"job": "stiffness given", "named": "model named", "selected": "chosen"}


@dataclass(frozen=True, slots=True, kw_only=True)
class MountSpring:
    """One mount's spring as analysed: ``how`` it was fixed ("job", "named", "selected"),
    the catalogue ``model`` (None: the job's own stiffness), the last ``selection`` made for
    it, its static ``load`` (N) and ``deflection`` (m) under that spring."""

    number: int
    how: str
    model: CatalogueRow | None
    selection: Selection | None
    load: float
    deflection: float


def required_deflection_text(delta: float | None, parts: Sequence[str], units: str) -> str:
    """``parts``: where the requirement comes from, each phrase naming its value."""
    if delta is None:
        return "No isolation target: springs are chosen by load alone."
    head = ("Required static deflection of a chosen spring:"
            f" {quantity_text(delta, 'length', units, 4)}")
    if len(parts) > 1:
        return f"{head}, the larger of {' and '.join(parts)}."
    return f"{head} ({parts[0]})." if parts else f"{head}."


def selection_paragraph(catalogue: Catalogue, need: str, rounds: int = 0) -> Paragraph:
    label = ", ".join(x for x in (catalogue.maker, catalogue.series) if x)
    return Paragraph(
        title="Isolator selection from the catalogue",
        text=f"{SELECTION}{_SETTLE if rounds else ''} Catalogue: {catalogue.name}"
             f"{f' ({label})' if label else ''}, {len(catalogue.rows)} models. {need}"
             + (f" The choice settled in {rounds} round(s)." if rounds else ""))


def selection_table(springs: Sequence[MountSpring]) -> Table:
    rows = []
    for sp in springs:
        mdl, sel = sp.model, sp.selection
        note = ("" if sel is None or sel.row is not None
                else f"none meets the need: {sel.reason}")
        rows.append((str(sp.number), _HOW[sp.how], mdl.model if mdl else "—", sp.load,
                     mdl.rated_load if mdl else None,
                     format_number(100 * sp.load / mdl.rated_load, 3) if mdl else "—",
                     mdl.spring_rate if mdl else None, sp.deflection,
                     mdl.solid_deflection if mdl else None,
                     (mdl.solid_deflection - sp.deflection) if mdl else None, note))
    return Table(title="Spring selection per mount",
                 header=("Mount", "How", "Model", "Load", "Rated load", "Use [%]",
                         "Spring rate", "Deflection", "Solid deflection", "Travel left",
                         "Note"),
                 units=("", "", "", "force", "force", "", "stiffness", "length", "length",
                        "length", ""),
                 rows=tuple(rows))


def catalogue_checks(s: Sheet, springs: Sequence[MountSpring], catalogue: Catalogue,
                     required_deflection: float | None) -> None:
    """A failing check where no model meets a mount's need; per mount the travel left to
    solid (and, for a model the job named, the required deflection); per model used the
    consistency of its data; an informative check naming unused models whose data
    contradict themselves."""
    used: dict[str, CatalogueRow] = {}
    for sp in springs:
        i, mdl, sel = sp.number, sp.model, sp.selection
        if sel is not None and sel.row is None:
            s.check(f"selection-{i}", f"Mount {i}: a catalogue model meets its need",
                    status="fail", note=sel.reason + (
                        f"; analysed with {mdl.model}, the nearest" if mdl else ""))
        if mdl is None:
            continue
        used.setdefault(mdl.model, mdl)
        if sp.deflection > 0.0:
            t = travel_check(mdl, sp.deflection)
            s.check(f"travel-{i}", f"Mount {i} ({mdl.model}): travel left to solid at"
                    f" least {format_number(100 * t.allowance, 3)} % of the operating"
                    " deflection (common practice)", value=t.remaining, limit=t.required,
                    comparison=">=", dimension="length")
        if required_deflection is not None and sp.how == "named":
            s.check(f"deflection-{i}", f"Mount {i} ({mdl.model}): static deflection"
                    " reaches the required deflection", value=sp.deflection,
                    limit=required_deflection, comparison=">=", dimension="length")
    for name, row in used.items():
        k = consistency(row)
        s.check(f"catalogue-{name}", f"Catalogue data of {name}: spring rate × rated"
                f" deflection within ±{format_number(100 * k.tolerance, 3)} % of the rated"
                " load", value=round(abs(k.ratio - 1.0), 9), limit=k.tolerance,
                comparison="<=", note=f"k·δ_rated/P_rated = {format_number(k.ratio, 4)}")
    bad = [r.model for r in catalogue.rows if r.model not in used and not consistency(r).passes]
    if bad:
        s.check("catalogue-other-models", "Catalogue models not used here whose spring rate ×"
                " rated deflection contradicts their rated load", status="info",
                note=", ".join(bad) + ": confirm with the maker before using them")
