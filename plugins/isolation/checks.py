"""isolation's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics import quantity_text

from reportgen import Sheet, linear_validity_check
from reportgen.units import format_number

from .method import SQRT2, peak_ratio, transmissibility
from .working import Isolator, Loads, Target


def write(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, float], iso: Isolator,
          ld: Loads, tg: Target, peak: float, uneven: bool, units: str) -> None:
    zeta, fn = p["damping_ratio"], iso.f_n
    s.check("isolation-exists", "Isolation exists: frequency ratio above √2", value=iso.r,
            limit=SQRT2, comparison=">")
    s.check("efficiency", "Isolation efficiency at the running speed meets the target",
            value=iso.eta, limit=crit["min_efficiency"], comparison=">=",
            note=f"the target needs a natural frequency of at most"
                 f" {quantity_text(tg.f_n_req, 'frequency', units)}, a static deflection of"
                 f" at least {quantity_text(tg.delta_req, 'length', units, 3)} with"
                 f" ζ = {format_number(zeta, 3)}")
    if uneven:
        eta_worst = 1.0 - transmissibility(iso.f / ld.f_n_max, zeta)
        s.check("efficiency-lightest-mount", "Efficiency from the least loaded mount's"
                " natural frequency (the stiffest corner)", status="info",
                value=eta_worst, limit=crit["min_efficiency"], comparison=">=",
                note=f"per-mount natural frequencies {format_number(ld.f_n_min, 3)} to"
                     f" {format_number(ld.f_n_max, 3)} Hz; the machine's vertical mode is"
                     f" {format_number(fn, 4)} Hz")
    linear_validity_check(s, iso.T, "transmissibility T")
    if "max_static_deflection" in crit:
        s.check("max-static-deflection", "Largest mount static deflection within the"
                " limit", value=ld.delta_max, limit=crit["max_static_deflection"],
                comparison="<=", dimension="length")
    if "rated_load_per_mount" in p:
        s.check("rated-load", "Largest mount load within the mount's rated load",
                value=ld.P_max, limit=p["rated_load_per_mount"], comparison="<=",
                dimension="force")
    if "rated_deflection" in p:
        s.check("rated-deflection", "Largest mount static deflection within the mount's"
                " rated deflection", value=ld.delta_max, limit=p["rated_deflection"],
                comparison="<=", dimension="length")
    if zeta > 0:
        s.check("resonance-passage", "Passing through resonance at start-up and"
                " shut-down: peak transmissibility", status="info", value=peak,
                note=f"≈ 1/(2ζ) = {format_number(1 / (2 * zeta), 3)} for light damping,"
                     f" at about {format_number(fn * peak_ratio(zeta), 3)} Hz"
                     f" ({format_number(fn * peak_ratio(zeta) * 60, 3)} rpm)")
    else:
        s.check("resonance-passage", "Passing through resonance at start-up and"
                " shut-down: undamped mounts, peak transmissibility unbounded",
                status="info", note="state the isolator's damping")
