"""vibration_criteria: the library of vibration criteria any calc type can cite by name.

Built-in curves, zones and guideline values with their sources (builtin.py); the data model and
its evaluation (library.py); a firm's own curves from a data file (files.py).
"""

from .builtin import BUILTIN, lookup
from .errors import DataFileError, UnknownCriterionError
from .files import read_criteria_file
from .library import (
    BAND_VELOCITY,
    OVERALL_VELOCITY,
    PPV,
    Classification,
    Criterion,
    classify,
    limit_at,
    neighbours,
    ratios,
    stringency,
    zone_of,
)

__all__ = [
    "BAND_VELOCITY",
    "BUILTIN",
    "OVERALL_VELOCITY",
    "PPV",
    "Classification",
    "Criterion",
    "DataFileError",
    "UnknownCriterionError",
    "classify",
    "limit_at",
    "lookup",
    "neighbours",
    "ratios",
    "read_criteria_file",
    "stringency",
    "zone_of",
]
