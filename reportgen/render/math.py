"""Typeset an :class:`~reportgen.model.Equation` as vector math (LaTeX -> SVG via ziamath).

The symbolic and substituted forms both come from the one expression tree in
:mod:`reportgen.formula`; the printed result is the equation's stored result.
"""

from __future__ import annotations

import math

from reportgen.formula import is_scientific, number_latex, symbol_latex, to_latex
from reportgen.model import Equation
from reportgen.units import DIMENSIONS, display


def unit_latex(label: str) -> str:
    if not label:
        return ""
    text = label.replace("·", r"{\cdot}").replace("²", "^{2}").replace("°", r"^{\circ}")
    return r"\ \mathrm{" + text + "}"


def value_latex(value: float, digits: int = 4) -> str:
    return number_latex(value, digits)


def equation_latex(eq: Equation, units: str = "SI") -> str:
    """``lhs = symbolic = substituted = result unit`` (plus the US value when US)."""
    lhs = symbol_latex(eq.name)
    parts = [lhs]
    symbolic = to_latex(eq.expression)
    values = dict(eq.operands)
    parts.append(symbolic)
    if values:
        substituted = to_latex(eq.expression, values)
        if substituted != symbolic:
            parts.append(substituted)
    dim = DIMENSIONS[eq.result.dimension]
    result = value_latex(eq.result.value) + unit_latex(dim.si_label)
    if units == "US" and dim.us_label and dim.us_label != dim.si_label:
        us_value, us_label = display(eq.result.value, eq.result.dimension, "US")
        result += r"\ \left(" + value_latex(us_value) + unit_latex(us_label) + r"\right)"
    elif dim.name == "angle":
        degrees = value_latex(math.degrees(eq.result.value))
        if is_scientific(degrees):  # one superscript per base: brace the whole number
            degrees = "{" + degrees + "}"
        result += r"\ \left(" + degrees + r"^{\circ}\right)"
    parts.append(result)
    return " = ".join(parts)
