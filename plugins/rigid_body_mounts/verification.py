"""rigid_body_mounts' verification rows: every result the second method (verify.py) can
reach, set beside the printed one with the tolerance of its family."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from reportgen import CalcOutput, VerificationRow

from .verify import TOLERANCES, independent_results

#: result family -> (dimension, how the second method reaches it)
_FAMILIES = {
    "natural_frequency": ("frequency", "eigenvalues without an eigen-solver: Sylvester"
                          " inertia counts of the LDLᵀ of K − λM bisected, roots of"
                          " det(K − λM) polished by scipy.optimize.brentq; K assembled"
                          " again by virtual work, J from the second moments"),
    "mode_dominant_share": ("dimensionless", "the mode by inverse iteration (numpy.linalg."
                            "solve) near its eigenvalue, then φ_j(Mφ)_j/(φᵀMφ)"),
    "mount_load": ("force", "force and moment equilibrium of the weight and the spring"
                   " forces, solved as a root (scipy.optimize.root, hybrid Powell)"),
    "mount_deflection": ("length", "the same equilibrium: the mount point's vertical"
                         " displacement"),
    "tilt": ("angle", "the same equilibrium: the rotations of the body"),
    "transmitted_force": ("force", "a real 12 × 12 solve of the cos and sin balances with"
                          " structural damping, the peak over one cycle found by sampling"
                          " and scipy.optimize.minimize_scalar"),
}


def _family(key: str) -> str:
    if key.startswith("natural_frequency"):
        return "natural_frequency"
    if key.startswith("mode_"):
        return "mode_dominant_share"
    if key.startswith("mount_load"):
        return "mount_load"
    if key.startswith("mount_deflection"):
        return "mount_deflection"
    if key.startswith("tilt"):
        return "tilt"
    return "transmitted_force"


def second_method(inputs: Mapping[str, Any], output: CalcOutput) -> list[VerificationRow]:
    """``inputs``: the calc's SI inputs with the mounts table completed (the springs the
    catalogue supplied filled in), exactly as the method analysed them."""
    printed = {row.key: row.quantity.value for row in output.results}
    rows = []
    for key, value in independent_results(inputs).values().items():
        if key not in printed:
            continue
        family = _family(key)
        rel, absolute = TOLERANCES[family]
        dimension, method = _FAMILIES[family]
        rows.append(VerificationRow(quantity=key, closed_form=printed[key], independent=value,
                                    tolerance=rel, abs_tolerance=absolute, unit=dimension,
                                    method=method))
    return rows
