"""The support under an SDOF calc's mounts or spring: on grade (rigid, as the models assume)
or a suspended structure, whose flexibility none of them models; the check that says so."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen import InputSpec, Sheet
from reportgen.units import format_number

#: A floor's natural frequency within this factor of the forcing or of the mounted natural
#: frequency couples with them (common practice: at least a factor 2 apart).
FLOOR_SEPARATION = 2.0
SUPPORTS = ("grade", "structure")


def support_inputs() -> tuple[InputSpec, ...]:
    return (
        InputSpec(name="support", symbol="support", description="What carries the mounts:"
                  " grade (a slab on ground, rigid) or structure (a suspended floor or"
                  " frame); grade if not stated", kind="choice", choices=SUPPORTS,
                  required=False),
        InputSpec(name="support_natural_frequency", symbol="f_floor", description="Lowest"
                  " vertical natural frequency of the supporting structure",
                  dimension="frequency", required=False, positive=True, maximum=1e4),
    )


def floor_check(s: Sheet, p: Mapping[str, Any], f: float, f_n: float) -> None:
    """On a suspended structure, a failing check unless its natural frequency is given and
    lies at least FLOOR_SEPARATION from both the forcing and the mounted natural frequency:
    the one-mass model on a rigid support cannot say what the floor adds."""
    if p.get("support") != "structure":
        return
    what = ("Floor flexibility is not modelled: the supporting structure's natural frequency"
            f" at least a factor {format_number(FLOOR_SEPARATION, 2)} from the forcing and the"
            " mounted natural frequency")
    why = ("the one-mass model assumes a rigid support; a suspended floor near either"
           " frequency changes the response and the isolation (factor"
           f" {format_number(FLOOR_SEPARATION, 2)}: common practice). Model the floor, or"
           " have the structural engineer confirm its natural frequency")
    if "support_natural_frequency" not in p:
        s.check("floor-flexibility", what, status="fail",
                note="the support is a suspended structure and its natural frequency"
                     f" (support_natural_frequency) is not given; {why}")
        return
    ff = p["support_natural_frequency"]
    sep = min(max(ff / x, x / ff) for x in (f, f_n))
    s.check("floor-flexibility", what, value=sep, limit=FLOOR_SEPARATION, comparison=">=",
            note=f"floor {format_number(ff, 4)} Hz; forcing {format_number(f, 4)} Hz;"
                 f" mounted natural frequency {format_number(f_n, 4)} Hz; the value is the"
                 f" smaller of the two frequency ratios (larger over smaller); {why}")
