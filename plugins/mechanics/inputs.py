"""Input declarations the calc types share: viscous damping given as a ratio or as a
coefficient, never both; the mount type and its dynamic-to-static stiffness ratio."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen import InputSpec

DAMPING_INPUTS = ("damping_ratio", "damping_coefficient")


def damping_inputs() -> tuple[InputSpec, ...]:
    return (
        InputSpec(name="damping_ratio", symbol="zeta", description="Viscous damping ratio c/c_c",
                  required=False, minimum=0.0, maximum=10.0),
        InputSpec(name="damping_coefficient", symbol="c",
                  description="Viscous damping coefficient", dimension="damping",
                  required=False, minimum=0.0),
    )


def damping_problems(given: frozenset[str] | set[str]) -> list[tuple[str, str]]:
    """The (field, message) a job that states damping both ways gets."""
    if set(DAMPING_INPUTS) <= given:
        return [("inputs.damping_coefficient",
                 "give damping as damping_ratio or as damping_coefficient, not both")]
    return []


MOUNT_TYPES = ("steel_spring", "elastomer")


def mount_type_inputs() -> tuple[InputSpec, ...]:
    """``mount_type`` and ``dynamic_stiffness_ratio`` (k_dyn/k_st, symbol κ_d): elastomers are
    stiffer in vibration than under their static load; steel springs are not. Both are
    optional (steel springs, ratio 1), so a package shows them only where the job states
    them."""
    return (
        InputSpec(name="mount_type", symbol="type", description="Kind of mount: steel"
                  " springs, or elastomer (rubber or neoprene), which is stiffer in"
                  " vibration than under its static load (steel_spring if not stated)",
                  kind="choice", choices=MOUNT_TYPES, required=False),
        InputSpec(name="dynamic_stiffness_ratio", symbol="kappa_d", description="Dynamic to"
                  " static stiffness ratio k_dyn/k_st of the mounts (required for"
                  " elastomer; 1 if not stated, as for steel springs)", required=False,
                  minimum=1.0, maximum=3.0),
    )


def mount_type_problems(inputs: Mapping[str, Any], given: frozenset[str] | set[str]
                        ) -> list[tuple[str, str]]:
    """An elastomer without its ratio: the static rate would make the dynamics too soft."""
    if inputs.get("mount_type") == "elastomer" and "dynamic_stiffness_ratio" not in given:
        return [("inputs.dynamic_stiffness_ratio",
                 "elastomer mounts are stiffer in vibration than under their static load:"
                 " give dynamic_stiffness_ratio, the dynamic-to-static stiffness ratio"
                 " k_dyn/k_st from the maker's data (for example 1.4; natural rubber and"
                 " neoprene commonly 1.2–1.8)")]
    return []


def stiffness_ratio(inputs: Mapping[str, Any]) -> float:
    """k_dyn/k_st: 1 unless the job states it."""
    return float(inputs.get("dynamic_stiffness_ratio") or 1.0)
