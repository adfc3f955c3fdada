"""floor_walking footfall: sensitive equipment, and the footstep transient of high-frequency floors.

Owns the walking paces, the effective footstep impulse, the floor's velocity under a walker
compared with a criterion velocity, and the refusal-free check of floors above 9 Hz.

The floor is its fundamental mode: a single degree of freedom of modal mass M = W/(2g), with
W the DG11 effective weight (the modal mass under which the steady resonant response equals
DG11 Eq. 4-1 with R = 0.5, P = 0.7 kN and α = 0.83·exp(−0.35 f); DG11 Ch. 2 and 4).
Footstep impulse: M.R. Willford, C. Field & P. Young, "Improved methodologies for the
prediction of footfall-induced vibration", 2007, as used in DG11 2nd ed. for floors above 9 Hz.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from reportgen.units import STANDARD_GRAVITY

from .method import (
    FLOOR_EXCITATION,
    FORCE_DECAY,
    LOW_FREQUENCY_LIMIT,
    FloorMethodError,
    OutOfMethodRange,
    require_positive,
)

__all__ = [
    "HARMONICS",
    "IMPULSE_BODY_WEIGHT",
    "WALKING_PACES",
    "EquipmentResponse",
    "FootstepResponse",
    "HighFrequencyResponse",
    "WalkingPace",
    "effective_impulse",
    "equipment_response",
    "footstep_response",
    "high_frequency_response",
    "modal_mass",
    "pace_of",
]

#: The walking harmonics DG11 Ch. 2 tabulates; a floor at most 4·f_step can be resonated.
HARMONICS = 4
#: Body weight Q of the effective impulse, 168 lb (747 N) in DG11 2nd ed.; I_eff = … ·Q/17.8.
IMPULSE_BODY_WEIGHT = 747.3
IMPULSE_DIVISOR = 17.8
#: Vibration criteria curves are stated in one-third-octave bands from 1 to 80 Hz.
EQUIPMENT_FREQUENCY_LIMIT = 80.0
#: Fastest footstep frequency of DG11 Ch. 4's walking range (1.6–2.2 Hz): the worst footstep
#: for a high-frequency floor, since the effective impulse grows with the step frequency.
FASTEST_STEP = 2.2


@dataclass(frozen=True, slots=True, kw_only=True)
class WalkingPace:
    """A walking pace of the sensitive-equipment check."""

    key: str
    steps_per_minute: float
    description: str

    @property
    def step_frequency(self) -> float:
        return self.steps_per_minute / 60.0


WALKING_PACES: dict[str, WalkingPace] = {p.key: p for p in (
    WalkingPace(key="slow", steps_per_minute=75.0,
                description="Slow walking, 75 steps/min: laboratories and rooms with few people"),
    WalkingPace(key="moderate", steps_per_minute=100.0,
                description="Moderate walking, 100 steps/min: offices and rooms in general use"),
    WalkingPace(key="fast", steps_per_minute=125.0,
                description="Fast walking, 125 steps/min: corridors and open circulation"),
)}


def pace_of(key: str) -> WalkingPace:
    """The pace of a keyword (see WALKING_PACES)."""
    try:
        return WALKING_PACES[key]
    except KeyError:
        raise FloorMethodError(
            f"unknown walking pace {key!r}; expected one of {', '.join(WALKING_PACES)}"
        ) from None


def modal_mass(effective_weight: float) -> float:
    """Modal mass of the floor's fundamental mode: M = W/(2·g_n) (see the module docstring)."""
    return effective_weight / (2.0 * STANDARD_GRAVITY)


def effective_impulse(step_frequency: float, natural_frequency: float) -> float:
    """Effective impulse of one footstep on a mode (Willford, Field & Young 2007; DG11 2nd ed.):

        I_eff = (f_step^1.43 / f_n^1.30)·(Q/17.8),  Q = 747 N,  N·s with frequencies in Hz
    """
    return (step_frequency**1.43 / natural_frequency**1.30) * IMPULSE_BODY_WEIGHT / IMPULSE_DIVISOR


@dataclass(frozen=True, slots=True, kw_only=True)
class FootstepResponse:
    """Decaying free vibration of the mode after one footstep impulse."""

    impulse: float  # I_eff, N·s
    modal_mass: float  # M, kg
    peak_velocity: float  # v_p = I_eff/M, m/s
    cycles_per_step: float  # h = f_n/f_step
    rms_factor: float  # √((1 − e^(−4πβh))/(4πβh))
    velocity_rms: float  # rms over one step period, m/s
    equivalent_peak_acceleration: float  # a_ESPM = √2·2πf_n·v_rms, m/s²


def footstep_response(*, natural_frequency: float, effective_weight: float,
                      damping_ratio: float, step_frequency: float) -> FootstepResponse:
    """Response of the mode to one footstep, averaged over the step period T = 1/f_step:

        v(t) ≈ v_p·e^(−2πβf_n t)·sin(2πf_n t),  v_p = I_eff/M
        v_rms = (v_p/√2)·√((1 − e^(−4πβh))/(4πβh)),  h = f_n/f_step
        a_ESPM = √2·(2πf_n)·v_rms   (equivalent sinusoidal peak acceleration)

    the rms of a lightly damped decaying sinusoid over h cycles (β ≪ 1).
    """
    for name, value, unit in (("natural frequency", natural_frequency, "Hz"),
                              ("effective weight", effective_weight, "N"),
                              ("damping ratio", damping_ratio, ""),
                              ("step frequency", step_frequency, "Hz")):
        require_positive(name, value, unit, "footstep method")
    mass = modal_mass(effective_weight)
    impulse = effective_impulse(step_frequency, natural_frequency)
    v_p = impulse / mass
    h = natural_frequency / step_frequency
    x = 4.0 * math.pi * damping_ratio * h
    factor = math.sqrt(-math.expm1(-x) / x)
    v_rms = v_p / math.sqrt(2.0) * factor
    return FootstepResponse(
        impulse=impulse, modal_mass=mass, peak_velocity=v_p, cycles_per_step=h,
        rms_factor=factor, velocity_rms=v_rms,
        equivalent_peak_acceleration=math.sqrt(2.0) * 2.0 * math.pi * natural_frequency * v_rms)


@dataclass(frozen=True, slots=True, kw_only=True)
class HighFrequencyResponse:
    """Comfort check of a floor above 9 Hz from the footstep transient."""

    natural_frequency: float
    step_frequency: float
    footstep: FootstepResponse
    peak_acceleration: float  # a_ESPM, m/s²
    peak_acceleration_ratio: float  # a_ESPM/g
    limit_acceleration_ratio: float
    ratio_to_limit: float
    passes: bool


def high_frequency_response(*, natural_frequency: float, effective_weight: float,
                            damping_ratio: float, limit_ratio: float,
                            step_frequency: float = FASTEST_STEP) -> HighFrequencyResponse:
    """Floors above 9 Hz: the equivalent sinusoidal peak acceleration of one footstep
    (footstep_response) against a0/g; refuses floors at or below 9 Hz, which resonate."""
    method = "high-frequency footstep method"
    require_positive("natural frequency", natural_frequency, "Hz", method)
    require_positive("acceleration limit a0/g", limit_ratio, "", method)
    if natural_frequency <= LOW_FREQUENCY_LIMIT:
        raise OutOfMethodRange("natural frequency", natural_frequency, LOW_FREQUENCY_LIMIT,
                               "Hz", method, above=False)
    step = footstep_response(natural_frequency=natural_frequency,
                             effective_weight=effective_weight, damping_ratio=damping_ratio,
                             step_frequency=step_frequency)
    ratio = step.equivalent_peak_acceleration / STANDARD_GRAVITY
    return HighFrequencyResponse(
        natural_frequency=natural_frequency, step_frequency=step_frequency, footstep=step,
        peak_acceleration=step.equivalent_peak_acceleration, peak_acceleration_ratio=ratio,
        limit_acceleration_ratio=limit_ratio, ratio_to_limit=ratio / limit_ratio,
        passes=ratio <= limit_ratio)


# ------------------------------------------------------------------ sensitive equipment

@dataclass(frozen=True, slots=True, kw_only=True)
class EquipmentResponse:
    """Floor velocity under a walker compared with a criterion velocity (m/s rms)."""

    pace: str
    step_frequency: float  # Hz
    regime: str  # "resonant" (f_n ≤ 4·f_step) or "transient"
    harmonic: int  # the harmonic of the pace nearest f_n (resonant), 0 for transient
    natural_frequency: float
    modal_mass: float  # kg
    peak_velocity: float  # m/s
    velocity_rms: float  # m/s
    criterion_velocity: float  # m/s rms at f_n
    ratio_to_limit: float
    passes: bool
    limits: tuple[str, ...]  # the method's assumptions and limits, ready to print


_COMMON_LIMITS = (
    "The floor responds in its fundamental mode alone, a single degree of freedom of modal"
    " mass M = W/(2g) and damping ratio β; higher modes and the distance between walker and"
    " equipment are not modelled (walker and equipment at the point of largest motion).",
    "The response lies at the floor frequency, within one one-third-octave band; the criterion"
    " is read at that frequency.",
    "A prediction from estimated properties: a finite-element model of the floor, or a"
    " measurement of the built floor, refines it where the margin is small.",
)


def equipment_response(*, natural_frequency: float, effective_weight: float,
                       damping_ratio: float, walking_pace: str,
                       criterion_velocity: float) -> EquipmentResponse:
    """Floor velocity (rms) under one walker at a pace, compared with the criterion at f_n.

    Resonant floors (f_n ≤ 4·f_step, a walking harmonic can match f_n): the steady resonant
    response of DG11 Eq. 4-1 (P0 = 0.29 kN, R = 0.5) in velocity, sinusoidal,

        v_p = a_p/(2π·f_n) = P0·exp(−0.35 f_n)·g/(β·W·2π·f_n),  v_rms = v_p/√2

    Higher floors (f_n > 4·f_step): the rms over one step of the footstep transient
    (footstep_response) at the pace's step frequency.
    """
    method = "sensitive-equipment walking method"
    for name, value, unit in (("natural frequency", natural_frequency, "Hz"),
                              ("effective weight", effective_weight, "N"),
                              ("damping ratio", damping_ratio, ""),
                              ("criterion velocity", criterion_velocity, "m/s")):
        require_positive(name, value, unit, method)
    if natural_frequency > EQUIPMENT_FREQUENCY_LIMIT:
        raise OutOfMethodRange("natural frequency", natural_frequency,
                               EQUIPMENT_FREQUENCY_LIMIT, "Hz",
                               f"{method} (criteria are stated from 1 to 80 Hz)")
    pace = pace_of(walking_pace)
    f_step = pace.step_frequency
    mass = modal_mass(effective_weight)
    if natural_frequency <= HARMONICS * f_step:
        harmonic = min(HARMONICS, max(1, round(natural_frequency / f_step)))
        a_p = (FLOOR_EXCITATION * math.exp(-FORCE_DECAY * natural_frequency)
               * STANDARD_GRAVITY / (damping_ratio * effective_weight))
        v_p = a_p / (2.0 * math.pi * natural_frequency)
        v_rms = v_p / math.sqrt(2.0)
        regime = "resonant"
        text = (f"Resonant floor: f_n is at most 4 × {f_step:.3g} Hz, so a walking harmonic"
                " (up to the fourth) can match it; the steady resonant response of the guide's"
                " walking equation (P0 = 0.29 kN, R = 0.5) is taken in velocity,"
                " v = a_p/(2π f_n), and its rms v/√2. This response does not depend on the pace.")
    else:
        harmonic = 0
        step = footstep_response(natural_frequency=natural_frequency,
                                 effective_weight=effective_weight,
                                 damping_ratio=damping_ratio, step_frequency=f_step)
        v_p, v_rms = step.peak_velocity, step.velocity_rms
        regime = "transient"
        text = (f"High-frequency floor: f_n is above 4 × {f_step:.3g} Hz, so no walking harmonic"
                " matches it; each footstep is an effective impulse"
                " I_eff = (f_step^1.43/f_n^1.30)·Q/17.8 with Q = 747 N, and the velocity is the"
                " rms over one step period of the decaying vibration it starts.")
    ratio = v_rms / criterion_velocity
    return EquipmentResponse(
        pace=pace.key, step_frequency=f_step, regime=regime, harmonic=harmonic,
        natural_frequency=natural_frequency, modal_mass=mass, peak_velocity=v_p,
        velocity_rms=v_rms, criterion_velocity=criterion_velocity, ratio_to_limit=ratio,
        passes=ratio <= 1.0, limits=(text, pace.description + ".", *_COMMON_LIMITS))
