"""free_vibration's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from collections.abc import Mapping

from reportgen import Sheet
from reportgen.units import format_number


def static_deflection_agreement(s: Sheet, f_check: float, fn: float, f_hb: float) -> None:
    s.check("fn-static-deflection", "f_n from the static deflection agrees with √(k/m)/2π",
            status="info", value=f_check, limit=fn, dimension="frequency", comparison="≈",
            note=f"handbook form gives {format_number(f_hb, 4)} Hz")


def criteria(s: Sheet, crit: Mapping[str, float], fn: float, dst: float) -> None:
    if "min_natural_frequency" in crit:
        s.check("min-natural-frequency", "Natural frequency not below the minimum",
                value=fn, limit=crit["min_natural_frequency"], comparison=">=",
                dimension="frequency")
    if "max_natural_frequency" in crit:
        s.check("max-natural-frequency", "Natural frequency not above the maximum",
                value=fn, limit=crit["max_natural_frequency"], comparison="<=",
                dimension="frequency")
    if "max_static_deflection" in crit:
        s.check("max-static-deflection", "Static deflection within the limit",
                value=dst, limit=crit["max_static_deflection"], comparison="<=",
                dimension="length")
