"""Input declarations every single-degree-of-freedom calc type shares: viscous damping given
as a ratio or as a coefficient, never both."""

from __future__ import annotations

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
