"""free_vibration's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from collections.abc import Mapping

from reportgen import Sheet


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
