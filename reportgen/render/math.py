"""Typeset an :class:`~reportgen.model.Equation` as vector math (LaTeX -> SVG via ziamath).

The symbolic and substituted forms both come from the one expression tree in
:mod:`reportgen.formula`; every substituted value and the result are printed in the
package's display units, each with its unit (the one place SI values are converted).
"""

from __future__ import annotations

import math

from reportgen.formula import is_scientific, number_latex, symbol_latex, to_latex
from reportgen.model import Equation
from reportgen.units import DisplayUnits, display_units, format_number

#: Significant figures of every number in an equation's substituted line and result: a
#: value printed as a result is substituted later exactly as printed.
EQUATION_DIGITS = 5


def unit_latex(label: str) -> str:
    if not label:
        return ""
    text = (label.replace("·", r"{\cdot}").replace("²", "^{2}").replace("³", "^{3}")
            .replace("⁴", "^{4}").replace("°", r"^{\circ}"))
    return r"\ \mathrm{" + text + "}"


def value_latex(value: float, digits: int = 4) -> str:
    return number_latex(value, digits)


def _units(units: str | DisplayUnits) -> DisplayUnits:
    return units if isinstance(units, DisplayUnits) else display_units(units or "SI")


def printed_operands(eq: Equation, units: str | DisplayUnits = "SI"
                     ) -> dict[str, tuple[str, str]]:
    """Each operand as the substituted line prints it: (number text, unit label)."""
    du = _units(units)
    dims = dict(eq.operand_dimensions)
    out = {}
    for name, value in eq.operands:
        dim = dims.get(name, "")
        if not dim:  # not declared: the SI number, as before display units
            out[name] = (format_number(value, 6), "")
        else:
            out[name] = du.show(value, dim, EQUATION_DIGITS, equation=True)
    return out


def printed_result(eq: Equation, units: str | DisplayUnits = "SI") -> tuple[str, str]:
    return _units(units).show(eq.result.value, eq.result.dimension, EQUATION_DIGITS,
                              equation=True)


def equation_latex(eq: Equation, units: str | DisplayUnits = "SI") -> str:
    """``lhs = symbolic = substituted = result unit``, in the package's display units."""
    du = _units(units)
    parts = [symbol_latex(eq.name)]
    symbolic = to_latex(eq.expression)
    parts.append(symbolic)
    if eq.operands:
        shown = {n: number_latex(t) + unit_latex(u)
                 for n, (t, u) in printed_operands(eq, du).items()}
        substituted = to_latex(eq.expression, shown=shown)
        if substituted != symbolic:
            parts.append(substituted)
    text, label = printed_result(eq, du)
    result = number_latex(text) + unit_latex(label)
    if eq.result.dimension == "angle" and label == "rad":
        degrees = value_latex(math.degrees(eq.result.value))
        if is_scientific(degrees):  # one superscript per base: brace the whole number
            degrees = "{" + degrees + "}"
        result += r"\ \left(" + degrees + r"^{\circ}\right)"
    parts.append(result)
    return " = ".join(parts)
