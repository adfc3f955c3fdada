"""What every calc type's figures and text share: the values a figure series holds and a
quantity written into a sentence in the package's units."""

from __future__ import annotations

from typing import Any

import numpy as np

from reportgen.units import display_units

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
