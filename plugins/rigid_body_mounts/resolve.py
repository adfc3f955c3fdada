"""The mounts as the calc analyses them: each table row completed from the job's own
stiffness, a catalogue model it names, or a model chosen from the catalogue for its load.

A chosen spring changes the loads (a stiffer spring draws more), so the choice is repeated
with the rigid body's statics until the models stop changing.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from reportgen_plugins.mechanics.catalogue import Catalogue, CatalogueRow, read_catalogue
from reportgen_plugins.mechanics.isolator_selection import (
    Selection,
    required_static_deflection,
    select,
)

from reportgen.units import STANDARD_GRAVITY

from .analysis import body_from_inputs, mounts_from_rows
from .method import SQRT2, MountingError, assemble
from .statics import static_equilibrium

__all__ = ["MAX_ROUNDS", "Choice", "Resolved", "analysed_inputs", "catalogue_of",
           "required_deflection", "resolve"]

#: Rounds of choose-then-recompute-the-loads before the choice is declared unsettled.
MAX_ROUNDS = 20
_STIFFNESS = ("k_vertical", "k_horizontal", "k_x", "k_y", "k_z")


@dataclass(frozen=True, slots=True, kw_only=True)
class Choice:
    """How one mount's spring was fixed: "job" (its stiffness given in the table), "named"
    (a catalogue model it names) or "selected" (chosen from the catalogue for its load).
    ``model``: the catalogue row, where there is one; ``selection``: the last choice made
    for a selected mount (``selection.row`` None: no model met the need, and ``model`` is
    the nearest one, analysed so that the package can show why)."""

    how: str
    model: CatalogueRow | None
    selection: Selection | None = None


@dataclass(frozen=True, slots=True, kw_only=True)
class Resolved:
    rows: tuple[dict[str, Any], ...]
    choices: tuple[Choice, ...]
    catalogue: Catalogue | None
    required_deflection: float | None
    rounds: int


def catalogue_of(inputs: Mapping[str, Any]) -> Catalogue | None:
    """The catalogue the ``catalogue`` file input names, read (CatalogueError if bad)."""
    f = inputs.get("catalogue")
    return None if f is None else read_catalogue(f.name, f.read_bytes())


def required_deflection(inputs: Mapping[str, Any], criteria: Mapping[str, Any]) -> float | None:
    """The static deflection a selected spring must reach: the one whose mass-spring
    frequency (dynamic stiffness) is the isolation limit running_speed/min_frequency_ratio,
    or the stated
    ``min_static_deflection`` if that is more; None without either."""
    need = []
    speed = inputs.get("running_speed")
    if speed:
        # an elastomer's f_n = √(κ_d·g/δ_st)/2π: it needs κ_d times the deflection
        need.append(float(inputs.get("dynamic_stiffness_ratio") or 1.0)
                    * required_static_deflection(
                        speed / criteria.get("min_frequency_ratio", SQRT2)))
    if criteria.get("min_static_deflection"):
        need.append(float(criteria["min_static_deflection"]))
    return max(need) if need else None


def _has_stiffness(row: Mapping[str, Any]) -> bool:
    return any(row.get(k) is not None for k in _STIFFNESS)


def _with_model(row: Mapping[str, Any], model: CatalogueRow) -> dict[str, Any]:
    out = dict(row)
    out["k_vertical"], out["k_horizontal"] = model.k_vertical, model.k_horizontal
    if out.get("rated_load") is None:
        out["rated_load"] = model.rated_load
    out["model"] = model.model
    return out


def _nearest(catalogue: Catalogue, sel: Selection) -> CatalogueRow:
    """The model analysed where none meets the need: the largest for an overload, the
    softest one rated for the load where the deflection or travel falls short, the
    smallest where the mount carries (almost) nothing."""
    rows = catalogue.rows
    if sel.code in ("tension", "underload"):
        return min(rows, key=lambda r: r.rated_load)
    rated = [r for r in rows if r.rated_load >= sel.static_load]
    if sel.code in ("deflection", "travel") and rated:
        return max(rated, key=lambda r: sel.static_load / r.spring_rate)
    return max(rows, key=lambda r: r.rated_load)


def resolve(inputs: Mapping[str, Any], criteria: Mapping[str, Any],
            units: str = "SI") -> Resolved:
    """Complete every mount row. Raises MountingError (field "mounts", with the row) for a
    row that cannot be completed and CatalogueError for a bad catalogue file."""
    catalogue = catalogue_of(inputs)
    need = required_deflection(inputs, criteria)
    rows: list[dict[str, Any]] = []
    how: list[str] = []
    named: dict[int, CatalogueRow] = {}
    for i, row in enumerate(inputs["mounts"], start=1):
        name = str(row.get("model") or "").strip()
        if _has_stiffness(row):
            rows.append(dict(row))
            how.append("job")
            if catalogue is not None and name:
                named[i - 1] = _model(catalogue, name, i)
                if row.get("rated_load") is None:
                    rows[-1]["rated_load"] = named[i - 1].rated_load
            continue
        if catalogue is None:
            raise MountingError("the mount has no stiffness: give k_vertical and"
                                " k_horizontal (or k_x, k_y and k_z), or name a catalogue"
                                " (catalogue = \"<file>\") to take the spring from",
                                field="mounts", row=i)
        if name:
            named[i - 1] = _model(catalogue, name, i)
            rows.append(_with_model(row, named[i - 1]))
            how.append("named")
        else:
            rows.append(dict(row))
            how.append("selected")
    auto = [i for i, h in enumerate(how) if h == "selected"]
    picks: dict[int, Selection] = {}
    rounds = 0
    if auto:
        assert catalogue is not None
        weight_share = float(inputs["mass"]) * STANDARD_GRAVITY / len(rows)
        chosen = {i: _pick(catalogue, select(catalogue, weight_share, need, units=units))
                  for i in auto}
        body = body_from_inputs(inputs)
        for rounds in range(1, MAX_ROUNDS + 1):  # noqa: B007 (rounds is reported)
            trial = [(_with_model(r, chosen[i]) if i in chosen else r)
                     for i, r in enumerate(rows)]
            loads = static_equilibrium(assemble(body, mounts_from_rows(trial))).loads
            picks = {i: select(catalogue, float(loads[i]), need, units=units) for i in auto}
            again = {i: _pick(catalogue, picks[i]) for i in auto}
            if again == chosen:
                break
            chosen = again
        else:
            raise MountingError(f"the spring selection did not settle in {MAX_ROUNDS}"
                                " rounds: the loads move between models as the springs"
                                " change; name the models in the mounts table",
                                field="mounts")
        rows = [(_with_model(r, chosen[i]) if i in chosen else r) for i, r in enumerate(rows)]
        named.update(chosen)
    choices = tuple(Choice(how=h, model=named.get(i), selection=picks.get(i))
                    for i, h in enumerate(how))
    return Resolved(rows=tuple(rows), choices=choices, catalogue=catalogue,
                    required_deflection=need, rounds=rounds)


def _pick(catalogue: Catalogue, sel: Selection) -> CatalogueRow:
    return sel.row if sel.row is not None else _nearest(catalogue, sel)


def _model(catalogue: Catalogue, name: str, row: int) -> CatalogueRow:
    for model in catalogue.rows:
        if model.model.casefold() == name.casefold():
            return model
    known = ", ".join(r.model for r in catalogue.rows[:12])
    raise MountingError(f"model {name!r} is not in the catalogue {catalogue.name}"
                        f" (its models: {known}{', ...' if len(catalogue.rows) > 12 else ''})",
                        field="mounts", row=row)


def analysed_inputs(inputs: Mapping[str, Any], rows: Sequence[Mapping[str, Any]]
                    ) -> dict[str, Any]:
    """The calc's inputs with the mounts table replaced by the completed rows."""
    out = dict(inputs)
    out["mounts"] = tuple(dict(r) for r in rows)
    return out
