"""isolation's design checks, written onto the Sheet from the printed values."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen_plugins.mechanics import floor_check, quantity_text
from reportgen_plugins.mechanics.passage import MAX_CYCLES, run_up_cycles, run_up_peak

from reportgen import Sheet, linear_validity_check
from reportgen.units import STANDARD_GRAVITY, format_number

from .method import SQRT2, peak_ratio, transmissibility
from .working import Isolator, Loads, Target


def write(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, Any], iso: Isolator,
          ld: Loads, tg: Target, peak: float, uneven: bool, units: str,
          given: frozenset[str] = frozenset()) -> None:
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
    passage(s, p, crit, iso, tg, peak, zeta, given)
    rocking(s, p, ld)
    floor_check(s, p, iso.f, fn)


def rocking(s: Sheet, p: Mapping[str, Any], ld: Loads) -> None:
    """A failing check where the one vertical mode is not enough: fewer than three mounts,
    or mount loads that differ by more than ROCKING_SPREAD of their mean (the centre of
    gravity off the mounts' centroid couples heave with rocking)."""
    n = p["mounts"]
    what = ("Rocking of the mount set is not modelled: check it with rigid_body_mounts")
    if n < 3:
        s.check("rocking-not-modelled", what, status="fail",
                note=f"{'one mount' if n == 1 else 'two mounts'} cannot keep the machine from"
                     " rocking; this calc models the vertical mode only")
    elif "mount_positions" in p:
        mean = p["mass"] * STANDARD_GRAVITY / n
        spread = (ld.P_max - ld.P_min) / mean
        s.check("rocking-not-modelled", what, value=spread, limit=ROCKING_SPREAD,
                comparison="<=",
                note="mount load spread (P_max − P_min)/(W/n): beyond"
                     f" {format_number(ROCKING_SPREAD * 100, 3)} % (common practice) heave and"
                     " rocking couple")


def passage(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, Any], iso: Isolator,
            tg: Target, peak: float, zeta: float, given: frozenset[str]) -> None:
    """Passage through resonance: a check against max_passage_transmissibility, or against
    the steady limit T_req = 1 − η_min when the job says the steady limits apply; else
    stated as not assessed. The value is the transient peak of the stated run-up, or, with
    no run-up time, the steady peak a dwell at resonance reaches."""
    fn = iso.f_n
    where = (f"peak at about {format_number(fn * peak_ratio(zeta), 3)} Hz"
             f" ({format_number(fn * peak_ratio(zeta) * 60, 3)} rpm), reached by a dwell"
             " at resonance; the machine passes it at every start and stop" if zeta > 0
             else "undamped mounts: unbounded at resonance; state the isolator's damping")
    if zeta > 0 and "run_up_time" in given:
        peak, where = _run_up(s, p, iso, zeta, peak, where)
    if "max_passage_transmissibility" in crit:
        s.check("resonance-passage", "Peak transmissibility while passing through resonance"
                " within the limit", value=peak, limit=crit["max_passage_transmissibility"],
                comparison="<=", note=where)
    elif crit.get("passage_uses_steady_limits") == "yes":
        s.check("resonance-passage", "Peak transmissibility while passing through resonance"
                " within the steady limit T_req = 1 − η_min", value=peak, limit=tg.T_req,
                comparison="<=", note=where + "; the job applies the steady-state limit to"
                " the passage")
    else:
        s.check("resonance-passage", "Passage through resonance not assessed",
                status="info", value=peak if zeta > 0 else None,
                note=where + "; no passage criterion (max_passage_transmissibility or"
                             " passage_uses_steady_limits) given")


def _run_up(s: Sheet, p: Mapping[str, Any], iso: Isolator, zeta: float, dwell: float,
            dwell_text: str) -> tuple[float, str]:
    """The transient transmissibility peak of a run-up from rest at constant acceleration
    to the running speed in the stated time (force of constant amplitude), or the dwell
    peak where the run-up is too long to integrate."""
    f_end, t_ramp = iso.f, p["run_up_time"]
    if run_up_cycles(f_end, iso.f_n, t_ramp, zeta) > MAX_CYCLES:
        return dwell, "run-up too long to integrate within the cost bound: " + dwell_text
    run = run_up_peak(f_end, iso.f_n, zeta, t_ramp, 0)
    value = s.result("passage_transmissibility", run.force_ratio, "dimensionless", "T_pass",
                     "Largest transmissibility while passing through resonance (transient"
                     " run-up, integrated)")
    return value, (f"transient of the stated run-up from rest at constant acceleration"
                   f" ({format_number(f_end / t_ramp, 3)} Hz/s), integrated in time: the"
                   f" response peaks near"
                   f" {format_number(run.peak_frequency, 3)} Hz, against a steady peak"
                   f" T_p = {format_number(dwell, 4)} for a dwell at resonance")


def rated_data(s: Sheet, p: Mapping[str, Any], crit: Mapping[str, float], iso: Isolator,
               ld: Loads, units: str) -> None:
    """Cross-checks of the isolator maker's data (common practice): spring rate × rated
    deflection within ±10 % of the rated load; travel to solid beyond the operating
    deflection by the stated allowance."""
    if "rated_load_per_mount" in p and "rated_deflection" in p:
        implied = iso.k_m * p["rated_deflection"]
        mismatch = abs(implied / p["rated_load_per_mount"] - 1.0)
        if mismatch < 1e-12:  # data that agree exactly print 0, not the round-off
            mismatch = 0.0
        s.check("rated-data-consistency", "Isolator data agree: spring rate × rated"
                " deflection within ±10 % of the rated load", value=mismatch,
                limit=RATED_DATA_TOLERANCE,
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


#: mount loads spread beyond this fraction of their mean: rocking must be modelled
ROCKING_SPREAD = 0.10
#: spring rate × rated deflection may differ from the rated load by this fraction
RATED_DATA_TOLERANCE = 0.10
