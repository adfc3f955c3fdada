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
                " natural frequency (the stiffest corner) meets the target",
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
    rated_data(s, p, crit, iso, ld, units)
    if "rigid_body_limit" in p:
        s.check("rigid-body-validity", "Forcing frequency within the stated rigid-body"
                " validity limit of machine and base", value=iso.f,
                limit=p["rigid_body_limit"], comparison="<=", dimension="frequency",
                note="above it the base flexes and the one-mass model does not hold")
    passage(s, crit, iso, peak, zeta)


def passage(s: Sheet, crit: Mapping[str, float], iso: Isolator, peak: float,
            zeta: float) -> None:
    """Passage through resonance: a check when the job gives a passage criterion, else
    stated as not assessed. The value is the steady peak a dwell at resonance reaches."""
    fn = iso.f_n
    where = (f"peak at about {format_number(fn * peak_ratio(zeta), 3)} Hz"
             f" ({format_number(fn * peak_ratio(zeta) * 60, 3)} rpm), reached by a dwell"
             " at resonance; the machine passes it at every start and stop" if zeta > 0
             else "undamped mounts: unbounded at resonance; state the isolator's damping")
    if "max_passage_transmissibility" in crit:
        s.check("resonance-passage", "Peak transmissibility while passing through resonance"
                " within the limit", value=peak, limit=crit["max_passage_transmissibility"],
                comparison="<=", note=where)
    else:
        s.check("resonance-passage", "Passage through resonance not assessed",
                status="info", value=peak if zeta > 0 else None,
                note=where + "; no passage criterion (max_passage_transmissibility) given")


def rated_data(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, float], iso: Isolator,
               ld: Loads, units: str) -> None:
    """Cross-checks of the isolator maker's data (common practice): spring rate × rated
    deflection within ±10 % of the rated load; travel to solid beyond the operating
    deflection by the stated allowance."""
    if "rated_load_per_mount" in p and "rated_deflection" in p:
        implied = iso.k_m * p["rated_deflection"]
        s.check("rated-data-consistency", "Isolator data agree: spring rate × rated"
                " deflection within ±10 % of the rated load", value=abs(
                    implied / p["rated_load_per_mount"] - 1.0), limit=RATED_DATA_TOLERANCE,
                comparison="<=",
                note=f"k_m·δ_rated = {quantity_text(implied, 'force', units)} against a rated"
                     f" {quantity_text(p['rated_load_per_mount'], 'force', units)}"
                     " (common practice: confirm the data sheet)")
    if "solid_deflection" in p:
        allowance = crit["min_travel_allowance"]
        s.check("travel-to-solid", "Travel to solid beyond the largest operating deflection"
                f" by at least {format_number(allowance * 100, 3)} %", value=(
                    p["solid_deflection"] - ld.delta_max) / ld.delta_max, limit=allowance,
                comparison=">=",
                note=f"solid at {quantity_text(p['solid_deflection'], 'length', units, 3)};"
                     f" operating {quantity_text(ld.delta_max, 'length', units, 3)}"
                     " (common practice)")


#: spring rate × rated deflection may differ from the rated load by this fraction
RATED_DATA_TOLERANCE = 0.10
