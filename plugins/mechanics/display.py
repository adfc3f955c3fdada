"""What every calc type's figures and text share: the values a figure series holds, a
quantity written into a sentence in the package's units, and how a ratio above 1 is named."""

from __future__ import annotations

from typing import Any

import numpy as np

from reportgen import Sheet
from reportgen.units import display_units, format_number

#: Decimals a figure series keeps: below a drawing's resolution, and it clears the last-bit
#: noise that would otherwise change a drawing's bytes (and cache key) from run to run.
SERIES_DECIMALS = 12


def series_values(values: Any, decimals: int | None = SERIES_DECIMALS) -> tuple[float, ...]:
    """A figure series as a tuple of floats, rounded to ``decimals`` (None: as computed)."""
    a = np.asarray(values, dtype=float)
    if decimals is not None:
        a = np.round(a, decimals)
    return tuple(float(v) for v in a)


def quantity_text(value: float, dimension: str, units: str, digits: int = 4) -> str:
    """``value`` (SI) as text in the package's display units (``units``: "SI", "US" or a
    display key), prefixed as a table prints it: "12.5 mm", "23.6 µm", "0.49 in"."""
    shown, unit = display_units(units).show(value, dimension, digits)
    return f"{shown} {unit}".strip()


def amplification_text(ratio: float) -> str:
    """A transmissibility or force ratio above 1 named for what it is, never as isolation:
    "amplification × 1.35 (no isolation)"."""
    return f"amplification × {format_number(ratio, 3)} (no isolation)"


def transmission_level(s: Sheet, ratio: float, *, symbol: str = "L_T", operand: str = "T",
                       key: str = "", what: str = "T") -> float:
    """Write L = −20·log10(ratio) in dB: the isolation in decibels, or, where the ratio
    exceeds 1, a negative level named as the amplification it is."""
    return s.equation(symbol, f"-20*log10({operand})", "level", key=key,
                      dims={operand: "dimensionless"}, **{operand: ratio},
                      description=(f"Transmission level, −20·log10 {what}: negative,"
                                   f" {amplification_text(ratio)}" if ratio > 1.0 else
                                   f"Isolation in decibels, −20·log10 {what}"))
