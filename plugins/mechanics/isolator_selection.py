"""Isolator choice from a catalogue: the self-consistency and travel cross-checks of a model
and the lightest adequate model for each mount's static load.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from reportgen.units import STANDARD_GRAVITY

from .catalogue import Catalogue, CatalogueRow
from .display import quantity_text

__all__ = [
    "CONSISTENCY_TOLERANCE",
    "TRAVEL_ALLOWANCE",
    "Consistency",
    "Selection",
    "TravelCheck",
    "consistency",
    "required_static_deflection",
    "select",
    "select_for_loads",
    "settle_selection",
    "travel_check",
]

#: Spring rate × rated deflection may differ from the rated load by this share (the
#: tolerance the calc states; makers' tables round both).
CONSISTENCY_TOLERANCE = 0.10
#: Travel left to solid at least this share of the operating deflection (common practice:
#: at least 50 % additional travel, so a spring never closes under a surge or misloading).
TRAVEL_ALLOWANCE = 0.5


# ------------------------------------------------------------------ checks


@dataclass(frozen=True, slots=True, kw_only=True)
class Consistency:
    """spring_rate × rated_deflection against rated_load: ``ratio`` = k·δ_rated/P_rated."""

    model: str
    product: float
    rated_load: float
    ratio: float
    tolerance: float
    passes: bool


def consistency(row: CatalogueRow, tolerance: float = CONSISTENCY_TOLERANCE) -> Consistency:
    """A linear spring carries P = k·δ (Hooke), so a model's spring rate times its rated
    deflection must give its rated load, within ``tolerance`` (±10 % by default)."""
    product = row.spring_rate * row.rated_deflection
    ratio = product / row.rated_load
    return Consistency(model=row.model, product=product, rated_load=row.rated_load,
                       ratio=ratio, tolerance=tolerance,
                       passes=abs(ratio - 1.0) <= tolerance * (1.0 + 1e-12))


@dataclass(frozen=True, slots=True, kw_only=True)
class TravelCheck:
    """Travel left to solid (``remaining`` = solid − operating deflection) against the
    allowance (``required`` = allowance × operating deflection)."""

    operating_deflection: float
    remaining: float
    required: float
    allowance: float
    passes: bool


def travel_check(row: CatalogueRow, operating_deflection: float,
                 allowance: float = TRAVEL_ALLOWANCE) -> TravelCheck:
    """solid − δ_op ≥ allowance·δ_op, i.e. the solid deflection is at least
    (1 + allowance) × the operating deflection (common practice: allowance 0.5)."""
    remaining = row.solid_deflection - operating_deflection
    required = allowance * operating_deflection
    return TravelCheck(operating_deflection=operating_deflection, remaining=remaining,
                       required=required, allowance=allowance,
                       passes=remaining >= required * (1.0 - 1e-12))


def required_static_deflection(natural_frequency: float,
                               gravity: float = STANDARD_GRAVITY) -> float:
    """The static deflection of a linear spring whose mass-spring frequency is f_n:
    δ_st = g/(2π·f_n)² (Thomson & Dahleh, Ch. 2: ω_n = √(g/δ_st))."""
    return gravity / (2.0 * math.pi * natural_frequency) ** 2


# ------------------------------------------------------------------ selection


@dataclass(frozen=True, slots=True, kw_only=True)
class Selection:
    """The model chosen for one static load, or None with the reason.

    ``code``: "ok", "tension" (no compressive load to carry), "overload" (no model rated for
    the load), "deflection" (the models that carry it are too stiff for the required
    deflection) or "travel" (those left would run out of travel). ``rejected``: every
    other model with why it was passed over.
    """

    static_load: float
    required_deflection: float | None
    row: CatalogueRow | None
    operating_deflection: float | None
    utilisation: float | None
    travel: TravelCheck | None
    code: str
    reason: str
    rejected: tuple[tuple[str, str], ...]


def _mm(x: float, units: str) -> str:
    return quantity_text(x, "length", units, 3)


def _kn(x: float, units: str) -> str:
    return quantity_text(x, "force", units, 3)


def select(catalogue: Catalogue, static_load: float, required_deflection: float | None = None,
           *, travel_allowance: float = TRAVEL_ALLOWANCE, min_utilisation: float = 0.0,
           units: str = "SI") -> Selection:
    """The lightest adequate model for a mount's static load (N).

    Adequate: it is rated for the load (min_utilisation ≤ P/P_rated ≤ 1), its operating
    deflection P/k reaches ``required_deflection`` (m) when one is given, and it keeps the
    travel allowance to solid (:func:`travel_check`). Of those, the smallest rated load
    wins (best used), then the softer, then the one listed first.
    """
    rejected: list[tuple[str, str]] = []
    fits: list[tuple[float, float, int, CatalogueRow, float, TravelCheck]] = []
    if not static_load > 0.0:
        return Selection(static_load=static_load, required_deflection=required_deflection,
                         row=None, operating_deflection=None, utilisation=None, travel=None,
                         code="tension", rejected=(),
                         reason="the mount carries no compressive load"
                                f" ({_kn(static_load, units)}):"
                                " no spring can be chosen")
    codes = set()
    for order, row in enumerate(catalogue.rows):
        use = static_load / row.rated_load
        defl = static_load / row.spring_rate
        travel = travel_check(row, defl, travel_allowance)
        if use > 1.0:
            codes.add("overload")
            rejected.append((row.model,
                             f"rated {_kn(row.rated_load, units)}, below the load"))
        elif use < min_utilisation:
            codes.add("underload")
            rejected.append((row.model, f"loaded to {use:.0%} of its rating, below"
                                        f" {min_utilisation:.0%}"))
        elif required_deflection is not None and defl < required_deflection:
            codes.add("deflection")
            rejected.append((row.model, f"deflects {_mm(defl, units)}, less than"
                                        f" {_mm(required_deflection, units)}"))
        elif not travel.passes:
            codes.add("travel")
            rejected.append((row.model, f"{_mm(travel.remaining, units)} travel left to"
                                        f" solid, less than {_mm(travel.required, units)}"))
        else:
            fits.append((row.rated_load, row.spring_rate, order, row, use, travel))
    if fits:
        fits.sort(key=lambda f: f[:3])
        _, _, _, row, use, travel = fits[0]
        for other in fits[1:]:
            rejected.append((other[3].model, "adequate, but a lighter model suffices"))
        return Selection(static_load=static_load, required_deflection=required_deflection,
                         row=row, operating_deflection=travel.operating_deflection,
                         utilisation=use, travel=travel, code="ok",
                         reason=f"the lightest model rated for {_kn(static_load, units)}"
                                + ("" if required_deflection is None else
                                   f" that deflects at least {_mm(required_deflection, units)}"),
                         rejected=tuple(rejected))
    biggest = max(catalogue.rows, key=lambda r: r.rated_load)
    if codes == {"overload"}:
        code = "overload"
        reason = (f"no model is rated for {_kn(static_load, units)} (the largest,"
                  f" {biggest.model}, is rated {_kn(biggest.rated_load, units)})")
    elif "deflection" in codes:
        code = "deflection"
        most = max((static_load / r.spring_rate for r in catalogue.rows
                    if static_load <= r.rated_load), default=0.0)
        reason = (f"the models rated for {_kn(static_load, units)} deflect at most"
                  f" {_mm(most, units)}, {_mm(required_deflection or 0.0, units)} needed")
    elif "travel" in codes:
        code = "travel"
        reason = "the models rated for the load would leave too little travel to solid"
    else:
        code = "underload"
        reason = (f"every model rated for {_kn(static_load, units)} would be loaded too"
                  " lightly")
    return Selection(static_load=static_load, required_deflection=required_deflection,
                     row=None, operating_deflection=None, utilisation=None, travel=None,
                     code=code, reason=reason, rejected=tuple(rejected))


def select_for_loads(catalogue: Catalogue, loads: Sequence[float],
                     required_deflection: float | None = None, **options) -> tuple[Selection, ...]:
    """:func:`select` for each mount's load, in mount order."""
    return tuple(select(catalogue, p, required_deflection, **options) for p in loads)


def settle_selection(catalogue: Catalogue, loads: Sequence[float],
                     loads_for: Callable[[tuple[CatalogueRow, ...]], Sequence[float]],
                     required_deflection: float | None = None, *, max_rounds: int = 20,
                     **options) -> tuple[tuple[Selection, ...], int]:
    """Select, recompute the loads with the chosen springs (``loads_for``: e.g. the rigid
    body's statics, where a stiffer spring draws more load), and select again until the
    models stop changing. Returns the last selections and the rounds taken; stops early
    when a mount has no model. Raises ValueError if it has not settled in ``max_rounds``.
    """
    current = select_for_loads(catalogue, loads, required_deflection, **options)
    for rounds in range(1, max_rounds + 1):
        if any(s.row is None for s in current):
            return current, rounds
        chosen = tuple(s.row for s in current if s.row is not None)
        again = select_for_loads(catalogue, loads_for(chosen), required_deflection, **options)
        if [s.row for s in again] == list(chosen):
            return again, rounds
        current = again
    raise ValueError(f"the selection did not settle in {max_rounds} rounds: the loads"
                     " move between models; choose the springs by hand")
