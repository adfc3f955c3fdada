"""The mechanics every built-in calc type shares, one definition each: SDOF response
(``sdof``), figure grids (``spectra``), figure and text values (``display``), damping inputs,
the support (``support``)."""

from .display import amplification_text, quantity_text, series_values, transmission_level
from .inputs import (
    DAMPING_INPUTS,
    MOUNT_TYPES,
    damping_inputs,
    damping_problems,
    mount_type_inputs,
    mount_type_problems,
    stiffness_ratio,
)
from .sdof import (
    absolute_phase_lag,
    absolute_phase_lag_formula,
    amplification_formula,
    critical_damping_formula,
    damping_ratio,
    dynamic_amplification,
    frequency_from_deflection,
    frequency_from_deflection_formula,
    natural_frequency,
    natural_period,
    peak_ratio,
    peak_ratio_formula,
    phase_lag,
    phase_lag_formula,
    required_ratio,
    transmissibility,
    transmissibility_formula,
)
from .spectra import ratio_grid, resonance_grid
from .support import FLOOR_SEPARATION, floor_check, support_inputs

__all__ = [
    "DAMPING_INPUTS", "FLOOR_SEPARATION", "amplification_text", "damping_inputs",
    "damping_problems", "floor_check", "support_inputs", "transmission_level", "MOUNT_TYPES",
    "mount_type_inputs", "mount_type_problems", "stiffness_ratio",
    "absolute_phase_lag", "absolute_phase_lag_formula", "amplification_formula",
    "critical_damping_formula", "damping_ratio", "dynamic_amplification",
    "frequency_from_deflection", "frequency_from_deflection_formula", "natural_frequency",
    "natural_period", "peak_ratio", "peak_ratio_formula", "phase_lag", "phase_lag_formula",
    "quantity_text", "ratio_grid", "required_ratio", "resonance_grid", "series_values",
    "transmissibility", "transmissibility_formula",
]
