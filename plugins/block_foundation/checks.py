"""block_foundation's design checks: frequency separation, amplitude or velocity, bearing
pressure, mass ratio and eccentricity, written onto the Sheet from the printed values."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from reportgen import Sheet
from reportgen.units import format_number

from .method import FoundationAnalysis, frequency_separation, separation_band
from .text import measure_words

#: Factor from a zero-to-peak amplitude to the stated measure of a steady sinusoid.
MEASURE_FACTOR = {"peak": 1.0, "rms": 1.0 / math.sqrt(2.0), "peak_to_peak": 2.0}


def write(s: Sheet, crit: Mapping[str, Any], given: frozenset[str],
          a: FoundationAnalysis) -> None:
    f_run = a.excitation.running_speed
    band = crit["min_frequency_separation"]
    lo, hi = separation_band(f_run, band)
    common = "" if "min_frequency_separation" in given else " (common practice)"
    for name, f in a.natural_frequencies():
        s.check(f"separation-{name.replace(', ', '-').replace(' ', '-')}",
                f"Natural frequency ({name}) outside ±{format_number(100 * band, 3)} % of the"
                f" running speed{common}", value=frequency_separation(f, f_run), limit=band,
                comparison=">=", note=f"{format_number(f, 4)} Hz against the band"
                f" {format_number(lo, 4)} to {format_number(hi, 4)} Hz")
    factor = MEASURE_FACTOR[crit["limit_measure"]]
    words = measure_words(crit["limit_measure"])
    if "max_amplitude" in crit:
        s.check("amplitude", f"Largest amplitude at the machine ({words}) within the limit",
                value=a.bearing_amplitude * factor, limit=crit["max_amplitude"],
                comparison="<=", dimension="length",
                note="vertical, or horizontal at the force's height, whichever is larger")
    if "max_velocity" in crit:
        s.check("velocity", f"Largest vibration velocity at the machine ({words}) within the"
                " limit", value=a.bearing_velocity * factor, limit=crit["max_velocity"],
                comparison="<=", dimension="velocity")
    if not ({"max_amplitude", "max_velocity"} & set(crit)):
        s.check("amplitude", "Amplitudes to be compared with the machine maker's allowable"
                " values", status="info", note="no max_amplitude or max_velocity stated")
    if "allowable_bearing_pressure" in crit:
        s.check("bearing-pressure", "Static bearing pressure within the allowable",
                value=a.static_bearing_pressure, limit=crit["allowable_bearing_pressure"],
                comparison="<=", dimension="pressure")
    s.check("mass-ratio", "Mass of the foundation at least the stated multiple of the"
            " machine's" + ("" if "min_mass_ratio" in given else " (common practice)"),
            value=a.mass_ratio, limit=crit["min_mass_ratio"], comparison=">=")
    s.check("eccentricity", "Centre of gravity over the centre of the base (offset as a"
            " fraction of the base dimension)" + ("" if "max_eccentricity" in given
                                                   else " (common practice)"),
            value=a.cg_eccentricity, limit=crit["max_eccentricity"], comparison="<=")
