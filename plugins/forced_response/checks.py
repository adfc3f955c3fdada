"""forced_response's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics import floor_check, quantity_text

from reportgen import Sheet, linear_validity_check

from . import text
from .working import Printed


def write(s: Sheet, kind: str, crit: Mapping[str, float], v: Printed,
          band: tuple[float, float], units: str) -> None:
    linear_validity_check(s, v.D, "dynamic amplification D")
    s.check("resonance-margin",
            "Resonance margin |f − f_n|/f_n not below the minimum (forcing frequency"
            " outside the resonance band)",
            value=v.margin, limit=crit["min_resonance_margin"], comparison=">=",
            note=text.margin_note(v.margin_f, band))
    if "max_displacement" in crit:
        s.check("max-displacement",
                "Displacement amplitude" + (" of the mass (absolute)" if kind == "support"
                                            else "") + " within the limit",
                value=v.X, limit=crit["max_displacement"], comparison="<=",
                dimension="length")
    if "max_velocity" in crit:
        s.check("max-velocity", "Vibration velocity (peak) within the limit",
                value=v.V, limit=crit["max_velocity"], comparison="<=",
                dimension="velocity",
                note=f"peak criterion; rms {quantity_text(v.V_rms, 'velocity', units)}"
                     " = peak/√2")
    if "max_velocity_rms" in crit:
        s.check("max-velocity-rms", "Vibration velocity (rms) within the limit",
                value=v.V_rms, limit=crit["max_velocity_rms"], comparison="<=",
                dimension="velocity",
                note=f"rms criterion: V_rms = V/√2 = {quantity_text(v.V, 'velocity', units)}"
                     "/√2 for a single tone")
    if "max_transmitted_force" in crit:
        s.check("max-transmitted-force", "Force into the support within the limit",
                value=v.F_T, limit=crit["max_transmitted_force"], comparison="<=",
                dimension="force")


def support(s: Sheet, p: Mapping[str, Any], v: Printed) -> None:
    """The model's rigid support: a check when the job says the support is a structure."""
    floor_check(s, p, v.f, v.f_n)
