"""The dynamic force of a rotating machine: a stated unbalance, a balance quality grade with
the rotor's mass (ISO 21940-11), or a stated force amplitude.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from .errors import FoundationError

#: The balance quality grades of ISO 21940-11 (G in mm/s); each step is a factor of about 2.5.
BALANCE_GRADES_MM_S = (0.4, 1.0, 2.5, 6.3, 16.0, 40.0, 100.0, 250.0, 630.0, 1600.0, 4000.0)
_GRADE = re.compile(r"^\s*G\s*(\d+(?:\.\d+)?)\s*$", re.IGNORECASE)


@dataclass(frozen=True, slots=True, kw_only=True)
class Excitation:
    """The machine's dynamic force.

    With an ``unbalance`` U (kg·m) the force grows with speed, F = U·ω²; a stated force
    amplitude is held constant over a speed sweep. The force rotates with the shaft, so its
    vertical and its horizontal component (perpendicular to the shaft) both have amplitude F.
    """

    running_speed: float
    unbalance: float | None = None
    force: float | None = None
    source: str

    def force_amplitude(self, frequency: float | np.ndarray) -> float | np.ndarray:
        """Force amplitude (N) at a running speed in Hz (scalar or array)."""
        if self.unbalance is not None:
            return self.unbalance * (2.0 * math.pi * np.asarray(frequency, dtype=float)) ** 2
        assert self.force is not None
        return self.force * np.ones_like(np.asarray(frequency, dtype=float))

    @property
    def running_force(self) -> float:
        return float(self.force_amplitude(self.running_speed))


def parse_balance_grade(text: str) -> float:
    """"G6.3" → 6.3e-3 m/s: a balance quality grade of ISO 21940-11 as a velocity.

    Only the standard's grades are accepted, so that a slip such as "G63" is caught.
    """
    match = _GRADE.match(str(text))
    if match is None:
        raise FoundationError("balance_grade",
                              f"'{text}' is not a balance quality grade; write it as \"G6.3\"")
    grade = float(match.group(1))
    if grade not in BALANCE_GRADES_MM_S:
        listed = ", ".join(f"G{g:g}" for g in BALANCE_GRADES_MM_S)
        raise FoundationError("balance_grade",
                              f"G{grade:g} is not one of the ISO 21940-11 grades ({listed})")
    return grade * 1e-3


def unbalance_from_grade(*, rotor_mass: float, grade: float, running_speed: float) -> float:
    """Permissible residual unbalance U = m_rotor·e with e = G/ω (ISO 21940-11: the grade is
    G = e·ω); ``grade`` in m/s, ``running_speed`` in Hz."""
    return rotor_mass * grade / (2.0 * math.pi * running_speed)


def excitation(*, running_speed: float, unbalance: float | None = None,
               balance_grade: str | None = None, rotor_mass: float | None = None,
               force_amplitude: float | None = None,
               machine_mass: float | None = None) -> Excitation:
    """The excitation from exactly one of: ``unbalance``; ``balance_grade`` with
    ``rotor_mass``; ``force_amplitude``."""
    if not running_speed > 0.0:
        raise FoundationError("running_speed", "must be greater than zero")
    given = [n for n, v in (("unbalance", unbalance), ("balance_grade", balance_grade),
                            ("force_amplitude", force_amplitude)) if v is not None]
    if len(given) != 1:
        raise FoundationError(
            "unbalance", "give exactly one of unbalance, balance_grade (with rotor_mass) or"
            f" force_amplitude (given: {', '.join(given) or 'none'})")
    if unbalance is not None:
        if not unbalance > 0.0:
            raise FoundationError("unbalance", "must be greater than zero")
        return Excitation(running_speed=running_speed, unbalance=unbalance,
                          source="stated unbalance")
    if force_amplitude is not None:
        if not force_amplitude > 0.0:
            raise FoundationError("force_amplitude", "must be greater than zero")
        return Excitation(running_speed=running_speed, force=force_amplitude,
                          source="stated force amplitude")
    grade = parse_balance_grade(str(balance_grade))
    if rotor_mass is None or not rotor_mass > 0.0:
        raise FoundationError("rotor_mass", "a balance_grade needs the rotor's mass")
    if machine_mass is not None and rotor_mass > machine_mass:
        raise FoundationError("rotor_mass",
                              f"the rotor ({rotor_mass:g} kg) cannot be heavier than the"
                              f" machine ({machine_mass:g} kg)")
    u = unbalance_from_grade(rotor_mass=rotor_mass, grade=grade, running_speed=running_speed)
    return Excitation(running_speed=running_speed, unbalance=u,
                      source=f"balance grade G{grade * 1e3:g} (ISO 21940-11)")
