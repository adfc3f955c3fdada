"""floor_walking method: the walking check of low-frequency floors and footbridges (DG11 Ch. 4).

Owns the occupancy tolerances, excitation forces, damping defaults, the tolerance curve and the
method's refusal outside its range; the bay route is in bay.py, sensitive equipment in equipment.py.

Source: T.M. Murray, D.E. Allen, E.E. Ungar & D.B. Davis, *Vibrations of Steel-Framed Structural
Systems Due to Human Activity*, AISC Steel Design Guide 11, 2nd ed., AISC, 2016 (here "DG11").
Equation and table numbers below are as we know them; the tests carry the status of each value.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportgen.units import STANDARD_GRAVITY

__all__ = [
    "DAMPING_DEFAULTS",
    "FLOOR_EXCITATION",
    "FOOTBRIDGE_EXCITATION",
    "LOW_FREQUENCY_LIMIT",
    "OCCUPANCIES",
    "DampingDefault",
    "FloorMethodError",
    "LimitCurve",
    "Occupancy",
    "OutOfMethodRange",
    "WalkingCriterion",
    "WalkingResponse",
    "damping_default",
    "excitation_force",
    "limit_curve",
    "limit_curve_shape",
    "occupancy",
    "walking_criterion",
    "walking_response",
]

#: DG11 Ch. 4: Eq. 4-1 applies to floors whose fundamental frequency is at most 9 Hz.
LOW_FREQUENCY_LIMIT = 9.0
#: DG11 Table 4-1: P0 = 0.29 kN (65 lb) for floors, 0.41 kN (92 lb) for footbridges; the kN
#: values are the guide's SI figures and are used exactly.
FLOOR_EXCITATION = 290.0
FOOTBRIDGE_EXCITATION = 410.0
#: DG11 Eq. 4-1: the exponent of the walking-force fit α = 0.83·exp(−0.35 f).
FORCE_DECAY = 0.35


class FloorMethodError(ValueError):
    """A floor-walking input the method cannot take (an unknown keyword or a value outside
    the method's range)."""


class OutOfMethodRange(FloorMethodError):
    """A physical quantity outside the range of the method; names the quantity, its value and
    the limit so the message can be shown as it is."""

    def __init__(self, quantity: str, value: float, limit: float, unit: str, method: str,
                 *, above: bool = True) -> None:
        self.quantity = quantity
        self.value = value
        self.limit = limit
        self.unit = unit
        self.method = method
        sep = " " if unit else ""
        if above:
            text = f"is above the {limit:.4g}{sep}{unit} limit of the"
        elif limit == 0.0:
            text = "must be positive for the"
        else:
            text = f"is not above the {limit:.4g}{sep}{unit} lower limit of the"
        super().__init__(f"{quantity} {value:.4g}{sep}{unit} {text} {method}")


def require_positive(quantity: str, value: float, unit: str, method: str) -> None:
    """Refuse a value that must be positive for the formula to mean anything."""
    if not (value > 0.0 and math.isfinite(value)):
        raise OutOfMethodRange(quantity, value, 0.0, unit, method, above=False)


# ------------------------------------------------------------------ occupancies and damping

@dataclass(frozen=True, slots=True, kw_only=True)
class Occupancy:
    """One row of DG11 Table 4-1: the tolerance a0/g and the excitation force P0."""

    key: str
    description: str
    limit_ratio: float  # a0/g
    excitation_force: float  # P0, N
    structure: str  # "floor" or "footbridge"


OCCUPANCIES: dict[str, Occupancy] = {o.key: o for o in (
    Occupancy(key="office", description="Offices", limit_ratio=0.005,
              excitation_force=FLOOR_EXCITATION, structure="floor"),
    Occupancy(key="residence", description="Residences", limit_ratio=0.005,
              excitation_force=FLOOR_EXCITATION, structure="floor"),
    Occupancy(key="quiet_space", description="Quiet spaces: churches, schools, quiet areas",
              limit_ratio=0.005, excitation_force=FLOOR_EXCITATION, structure="floor"),
    Occupancy(key="shopping_mall", description="Shopping malls, dining and dancing",
              limit_ratio=0.015, excitation_force=FLOOR_EXCITATION, structure="floor"),
    Occupancy(key="indoor_footbridge", description="Indoor footbridges", limit_ratio=0.015,
              excitation_force=FOOTBRIDGE_EXCITATION, structure="footbridge"),
    Occupancy(key="outdoor_footbridge", description="Outdoor footbridges", limit_ratio=0.05,
              excitation_force=FOOTBRIDGE_EXCITATION, structure="footbridge"),
)}


def occupancy(key: str) -> Occupancy:
    """The DG11 Table 4-1 row of an occupancy keyword (see OCCUPANCIES)."""
    try:
        return OCCUPANCIES[key]
    except KeyError:
        raise FloorMethodError(
            f"unknown occupancy {key!r}; expected one of {', '.join(OCCUPANCIES)}") from None


def excitation_force(structure: str) -> float:
    """P0 of DG11 Table 4-1 for a 'floor' (290 N) or a 'footbridge' (410 N)."""
    forces = {"floor": FLOOR_EXCITATION, "footbridge": FOOTBRIDGE_EXCITATION}
    try:
        return forces[structure]
    except KeyError:
        raise FloorMethodError(
            f"unknown structure {structure!r}; expected 'floor' or 'footbridge'") from None


@dataclass(frozen=True, slots=True, kw_only=True)
class DampingDefault:
    """A recommended modal damping ratio β for a fit-out, with the words to print beside it."""

    key: str
    damping_ratio: float
    description: str
    source: str


_DAMPING_SOURCE = ("DG11 Ch. 4 recommended damping ratios (after D.E. Allen & T.M. Murray,"
                   " AISC Engineering Journal 30(4), 1993)")
DAMPING_DEFAULTS: dict[str, DampingDefault] = {d.key: d for d in (
    DampingDefault(key="few_components", damping_ratio=0.02, source=_DAMPING_SOURCE,
                   description="Structure with few non-structural components (ceilings, ducts,"
                   " partitions), as in open work areas and churches"),
    DampingDefault(key="furnished", damping_ratio=0.03, source=_DAMPING_SOURCE,
                   description="Non-structural components and furnishings with only small"
                   " demountable partitions, as in many modular office areas"),
    DampingDefault(key="full_height_partitions", damping_ratio=0.05, source=_DAMPING_SOURCE,
                   description="Full-height partitions between floors within the bay"),
    DampingDefault(key="footbridge", damping_ratio=0.01, source=_DAMPING_SOURCE,
                   description="Footbridge: structure only, few non-structural components"),
)}


def damping_default(fit_out: str) -> DampingDefault:
    """The recommended β of a fit-out keyword (see DAMPING_DEFAULTS)."""
    try:
        return DAMPING_DEFAULTS[fit_out]
    except KeyError:
        raise FloorMethodError(
            f"unknown fit-out {fit_out!r}; expected one of {', '.join(DAMPING_DEFAULTS)}"
        ) from None


@dataclass(frozen=True, slots=True, kw_only=True)
class WalkingCriterion:
    """The tolerance and excitation a check uses, and where each came from."""

    limit_ratio: float  # a0/g
    excitation_force: float  # P0, N
    occupancy: str  # the keyword, or "" when only an explicit limit was given
    description: str
    limit_given: bool  # True when max_acceleration_ratio overrode the occupancy's a0/g


def walking_criterion(occupancy_key: str | None = None,
                      max_acceleration_ratio: float | None = None,
                      structure: str = "floor") -> WalkingCriterion:
    """a0/g and P0 from an occupancy (DG11 Table 4-1) or an explicit limit.

    An explicit ``max_acceleration_ratio`` overrides the occupancy's a0/g; P0 then follows the
    occupancy, or ``structure`` ('floor', 0.29 kN; 'footbridge', 0.41 kN) when none is named.
    """
    if occupancy_key is None and max_acceleration_ratio is None:
        raise FloorMethodError("give an occupancy or an explicit max_acceleration_ratio")
    if max_acceleration_ratio is not None:
        require_positive("acceleration limit a0/g", max_acceleration_ratio, "",
                         "walking check")
    if occupancy_key is not None:
        occ = occupancy(occupancy_key)
        limit = occ.limit_ratio if max_acceleration_ratio is None else max_acceleration_ratio
        return WalkingCriterion(limit_ratio=limit, excitation_force=occ.excitation_force,
                                occupancy=occ.key, description=occ.description,
                                limit_given=max_acceleration_ratio is not None)
    assert max_acceleration_ratio is not None
    return WalkingCriterion(limit_ratio=max_acceleration_ratio,
                            excitation_force=excitation_force(structure), occupancy="",
                            description=f"Stated limit ({structure})", limit_given=True)


# ------------------------------------------------------------------ the walking check

@dataclass(frozen=True, slots=True, kw_only=True)
class WalkingResponse:
    """DG11 Eq. 4-1 evaluated: field names are the results.json keys (SI)."""

    natural_frequency: float  # f_n, Hz
    effective_weight: float  # W, N
    damping_ratio: float  # β
    excitation_force: float  # P0, N
    force_factor: float  # exp(−0.35 f_n)
    peak_acceleration_ratio: float  # a_p/g
    peak_acceleration: float  # a_p, m/s²
    limit_acceleration_ratio: float  # a0/g
    ratio_to_limit: float  # (a_p/g)/(a0/g)
    passes: bool


def walking_response(*, natural_frequency: float, effective_weight: float,
                     damping_ratio: float, excitation_force: float,
                     limit_ratio: float) -> WalkingResponse:
    """Peak acceleration of a low-frequency floor under walking, DG11 Ch. 4 Eq. 4-1:

        a_p/g = P0·exp(−0.35 f_n)/(β·W) ≤ a0/g,   a_p = (a_p/g)·g_n

    valid for f_n ≤ 9 Hz (DG11 Ch. 4). Above 9 Hz the resonant build-up the equation assumes
    does not occur and the method refuses rather than return a number (OutOfMethodRange).
    """
    method = "low-frequency walking method (DG11 Eq. 4-1)"
    require_positive("natural frequency", natural_frequency, "Hz", method)
    require_positive("effective weight", effective_weight, "N", method)
    require_positive("damping ratio", damping_ratio, "", method)
    require_positive("excitation force P0", excitation_force, "N", method)
    require_positive("acceleration limit a0/g", limit_ratio, "", method)
    if natural_frequency > LOW_FREQUENCY_LIMIT:
        raise OutOfMethodRange("natural frequency", natural_frequency, LOW_FREQUENCY_LIMIT,
                               "Hz", method)
    factor = math.exp(-FORCE_DECAY * natural_frequency)
    ratio = excitation_force * factor / (damping_ratio * effective_weight)
    return WalkingResponse(
        natural_frequency=natural_frequency, effective_weight=effective_weight,
        damping_ratio=damping_ratio, excitation_force=excitation_force, force_factor=factor,
        peak_acceleration_ratio=ratio, peak_acceleration=ratio * STANDARD_GRAVITY,
        limit_acceleration_ratio=limit_ratio, ratio_to_limit=ratio / limit_ratio,
        passes=ratio <= limit_ratio)


# ------------------------------------------------------------------ the tolerance curve

#: ISO 2631-2:1989 base curve for vertical vibration in buildings, reproduced as the shape of
#: DG11 Fig. 2-1 (recommended tolerance for human comfort): flat between 4 and 8 Hz, rising
#: as f^(−1/2) below 4 Hz and as f above 8 Hz; drawn from 1 to 80 Hz.
CURVE_RANGE = (1.0, 80.0)
CURVE_SOURCE = ("Shape of DG11 Fig. 2-1 (recommended peak acceleration for human comfort),"
                " from the ISO 2631-2:1989 base curve for vertical vibration: flat between 4 and"
                " 8 Hz, rising as f^-1/2 below 4 Hz and in proportion to f above 8 Hz")


def limit_curve_shape(frequency: float) -> float:
    """Multiplier on the flat 4–8 Hz tolerance at a frequency (ISO 2631-2:1989 base curve):

        √(4/f) for 1 ≤ f < 4 Hz;  1 for 4 ≤ f ≤ 8 Hz;  f/8 for 8 < f ≤ 80 Hz
    """
    low, high = CURVE_RANGE
    if not low <= frequency <= high:
        raise OutOfMethodRange("frequency", frequency, high if frequency > high else low, "Hz",
                               "tolerance curve (1 to 80 Hz)", above=frequency > high)
    if frequency < 4.0:
        return math.sqrt(4.0 / frequency)
    if frequency <= 8.0:
        return 1.0
    return frequency / 8.0


@dataclass(frozen=True, slots=True, kw_only=True)
class LimitCurve:
    """Data of the figure: the occupancy's tolerance against frequency and the floor's point."""

    frequency: tuple[float, ...]  # Hz, log-spaced 1–80 Hz with the 4 and 8 Hz corners
    limit_ratio: tuple[float, ...]  # a0/g at each frequency
    flat_limit_ratio: float  # a0/g between 4 and 8 Hz
    label: str
    point_frequency: float | None
    point_ratio: float | None
    source: str


def limit_curve(flat_limit_ratio: float, label: str, *, point_frequency: float | None = None,
                point_ratio: float | None = None, points_per_decade: int = 24) -> LimitCurve:
    """The tolerance curve a0/g(f) = a0/g · shape(f) (see limit_curve_shape) for the figure."""
    require_positive("acceleration limit a0/g", flat_limit_ratio, "", "tolerance curve")
    low, high = CURVE_RANGE
    n = int(round(points_per_decade * math.log10(high / low)))
    grid = {low * (high / low) ** (i / n) for i in range(n + 1)} | {4.0, 8.0}
    freqs = tuple(sorted(min(max(f, low), high) for f in grid))
    return LimitCurve(
        frequency=freqs,
        limit_ratio=tuple(flat_limit_ratio * limit_curve_shape(f) for f in freqs),
        flat_limit_ratio=flat_limit_ratio, label=label, point_frequency=point_frequency,
        point_ratio=point_ratio, source=CURVE_SOURCE)
