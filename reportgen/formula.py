"""Formulas: one arithmetic expression, evaluated once, printed twice.

A plugin writes ``sqrt(k/m)`` with named operands; :func:`evaluate` computes the
result from those operands, and :func:`to_latex` prints the symbolic form and the
substituted form from the same expression tree. A small, safe grammar (numbers,
names, + - * / **, a few functions) keeps formulas checkable by hand.
"""

from __future__ import annotations

import ast
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from reportgen.units import GROUP_SPACE, format_number

__all__ = ["FormulaError", "evaluate", "evaluate_array", "has_unit", "is_scientific", "names_in",
           "number_latex", "symbol_latex", "to_latex"]

CONSTANTS = {"pi": math.pi}
FUNCTIONS: dict[str, Callable[..., float]] = {
    "sqrt": math.sqrt, "exp": math.exp, "ln": math.log, "log10": math.log10,
    "sin": math.sin, "cos": math.cos, "tan": math.tan, "atan": math.atan,
    "atan2": math.atan2, "abs": abs, "sinh": math.sinh, "cosh": math.cosh,
    "min": min, "max": max, "acos": math.acos, "asin": math.asin,
}
_GREEK = {
    "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "kappa", "lambda",
    "mu", "nu", "xi", "pi", "rho", "sigma", "tau", "phi", "chi", "psi", "omega", "Gamma",
    "Delta", "Theta", "Lambda", "Phi", "Psi", "Omega",
}
_FUNC_LATEX = {
    "exp": r"\exp", "ln": r"\ln", "log10": r"\log_{10}", "sin": r"\sin", "cos": r"\cos",
    "tan": r"\tan", "atan": r"\arctan", "sinh": r"\sinh", "cosh": r"\cosh", "min": r"\min",
    "max": r"\max", "acos": r"\arccos", "asin": r"\arcsin",
}


class FormulaError(ValueError):
    """An expression outside the formula grammar, or one that cannot be evaluated."""


@lru_cache(maxsize=512)
def _parse(expression: str) -> ast.expr:
    try:
        tree = ast.parse(expression, mode="eval").body
    except SyntaxError as exc:
        raise FormulaError(f"formula {expression!r} is not valid: {exc.msg}") from None
    for node in ast.walk(tree):
        ok = isinstance(node, (ast.BinOp, ast.UnaryOp, ast.Constant, ast.Name, ast.Call,
                               ast.Load, ast.Add, ast.Sub, ast.Mult, ast.Div, ast.Pow,
                               ast.USub, ast.UAdd))
        if isinstance(node, ast.Constant) and not isinstance(node.value, (int, float)):
            ok = False
        if isinstance(node, ast.Call) and (not isinstance(node.func, ast.Name)
                                           or node.func.id not in FUNCTIONS or node.keywords):
            ok = False
        if not ok:
            raise FormulaError(f"formula {expression!r} uses {type(node).__name__},"
                               " which the formula grammar does not allow")
    return tree


def names_in(expression: str) -> set[str]:
    """Operand names an expression needs (constants and functions excluded)."""
    return set(_names(expression))


@lru_cache(maxsize=512)
def _names(expression: str) -> frozenset[str]:
    # cached: an operating envelope computes the same equations hundreds of times
    tree = _parse(expression)
    called = {n.func.id for n in ast.walk(tree)
              if isinstance(n, ast.Call) and isinstance(n.func, ast.Name)}
    return frozenset({n.id for n in ast.walk(tree) if isinstance(n, ast.Name)} - called
                     - set(CONSTANTS))


@dataclass(frozen=True)
class _Arithmetic:
    """What the operators and functions of the grammar mean: on floats (exact, checked) or
    elementwise on numpy arrays (for a figure's curve)."""

    operand: Callable[[Any], Any]
    add: Callable[[Any, Any], Any]
    sub: Callable[[Any, Any], Any]
    div: Callable[[Any, Any], Any]
    pow: Callable[[Any, Any], Any]
    call: Callable[[str, list[Any]], Any]


def _walk(expression: str, operands: Mapping[str, Any], arith: _Arithmetic) -> Any:
    """The one evaluator of the grammar :func:`_parse` admits."""
    tree = _parse(expression)

    def ev(node: ast.expr) -> Any:
        if isinstance(node, ast.Constant):
            return float(node.value)  # type: ignore[arg-type]  # _parse admits numbers only
        if isinstance(node, ast.Name):
            if node.id in operands:
                return arith.operand(operands[node.id])
            if node.id in CONSTANTS:
                return CONSTANTS[node.id]
            raise FormulaError(f"formula {expression!r} needs operand {node.id!r}")
        if isinstance(node, ast.UnaryOp):
            v = ev(node.operand)
            return -v if isinstance(node.op, ast.USub) else v
        if isinstance(node, ast.BinOp):
            a, b = ev(node.left), ev(node.right)
            op = node.op
            if isinstance(op, ast.Add):
                return arith.add(a, b)
            if isinstance(op, ast.Sub):
                return arith.sub(a, b)
            if isinstance(op, ast.Mult):
                return a * b
            if isinstance(op, ast.Div):
                return arith.div(a, b)
            return arith.pow(a, b)
        assert isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
        return arith.call(node.func.id, [ev(a) for a in node.args])

    return ev(tree)


_SCALAR = _Arithmetic(
    operand=float, add=lambda a, b: _sum(a, b), sub=lambda a, b: _sum(a, -b),
    div=lambda a, b: a / b, pow=lambda a, b: a**b,
    call=lambda name, args: float(FUNCTIONS[name](*args)))


def evaluate(expression: str, operands: Mapping[str, float]) -> float:
    """Evaluate ``expression`` with ``operands`` (plain floats)."""
    try:
        value = _walk(expression, operands, _SCALAR)
    except (ZeroDivisionError, ValueError, OverflowError) as exc:
        raise FormulaError(f"formula {expression!r} cannot be evaluated: {exc}") from None
    if isinstance(value, complex) or not math.isfinite(value):
        raise FormulaError(f"formula {expression!r} gives a non-finite value")
    return value


#: A sum within this many units in the last place of its larger term is round-off.
ROUNDOFF_ULPS = 4


def _sum(a: float, b: float) -> float:
    """a + b, or exactly 0 where the terms cancel to within round-off: 1 − T at T = 1
    prints 0, not −4.441 × 10⁻¹⁶ (the digits below a few ulps carry no information)."""
    total = a + b
    if abs(total) <= ROUNDOFF_ULPS * math.ulp(max(abs(a), abs(b))):
        return 0.0
    return total


_ARRAY_FUNCTIONS = {
    "sqrt": "sqrt", "exp": "exp", "ln": "log", "log10": "log10", "sin": "sin", "cos": "cos",
    "tan": "tan", "atan": "arctan", "atan2": "arctan2", "abs": "abs", "sinh": "sinh",
    "cosh": "cosh", "min": "minimum", "max": "maximum", "acos": "arccos", "asin": "arcsin",
}


@lru_cache(maxsize=1)
def _array_arithmetic() -> _Arithmetic:
    import numpy as np  # only a figure's curve needs numpy here

    def call(name: str, args: list[Any]) -> Any:
        fn = getattr(np, _ARRAY_FUNCTIONS[name])
        if name in ("min", "max") and len(args) > 2:
            out = args[0]
            for a in args[1:]:
                out = fn(out, a)
            return out
        return fn(*args)

    return _Arithmetic(operand=lambda v: np.asarray(v, dtype=float),
                       add=lambda a, b: a + b, sub=lambda a, b: a - b, div=np.divide,
                       pow=np.power, call=call)


def evaluate_array(expression: str, operands: Mapping[str, Any]) -> Any:
    """Evaluate ``expression`` elementwise over numpy arrays (operands broadcast), so the
    one expression that is printed also draws the curve a figure plots. Values outside
    a function's domain become NaN rather than an error (a curve may cross them)."""
    import numpy as np

    with np.errstate(all="ignore"):
        return _walk(expression, operands, _array_arithmetic())


def symbol_latex(name: str) -> str:
    """``omega_n`` -> ``\\omega_{n}``; ``delta_st`` -> ``\\delta_{\\mathrm{st}}``."""
    base, _, sub = name.partition("_")
    head = "\\" + base if base in _GREEK else base
    if len(base) > 1 and base not in _GREEK:
        head = r"\mathrm{" + base + "}"
    if not sub:
        return head
    parts = sub.split("_")
    subs = ",".join(("\\" + p) if p in _GREEK else (p if len(p) == 1 or p.isdigit()
                                                    else r"\mathrm{" + p + "}") for p in parts)
    return f"{head}_{{{subs}}}"


_PREC = {ast.Add: 1, ast.Sub: 1, ast.Mult: 2, ast.Div: 2, ast.Pow: 4}


def _prec(node: ast.expr) -> int:
    if isinstance(node, ast.BinOp):
        if isinstance(node.op, ast.Div):
            return 5  # a fraction is self-delimiting
        return _PREC[type(node.op)]
    if isinstance(node, ast.UnaryOp):
        return 3
    return 6


def to_latex(expression: str, values: Mapping[str, float] | None = None,
             symbols: Mapping[str, str] | None = None, digits: int = 6,
             shown: Mapping[str, str] | None = None) -> str:
    """LaTeX of ``expression``: symbolic, or with ``values`` substituted, or with ``shown``
    (LaTeX of each operand as printed, a number and its unit) substituted."""
    tree = _parse(expression)
    symbols = symbols or {}
    shown = shown or {}
    if shown and values is None:
        values = {}

    def paren(s: str) -> str:
        return r"\left(" + s + r"\right)"

    def paren_number(s: str) -> str:
        # fixed-size brackets: a stretched one is drawn as an outline, absent from the
        # PDF's text, which would then read 1.27×10⁻⁵² for (1.27×10⁻⁵)²
        return "(" + s + ")" if is_scientific(s) or has_unit(s) else paren(s)

    def tex(node: ast.expr) -> str:
        if isinstance(node, ast.Constant):
            return number_latex(float(node.value), digits)  # type: ignore[arg-type]
        if isinstance(node, ast.Name):
            if node.id in shown:
                text = shown[node.id]
                return paren_number(text) if text.startswith("-") else text
            if values is not None and node.id in values:
                text = number_latex(float(values[node.id]), digits)
                return paren_number(text) if text.startswith("-") else text
            if node.id == "pi":
                return r"\pi"
            return symbols.get(node.id) or symbol_latex(node.id)
        if isinstance(node, ast.UnaryOp):
            inner = tex(node.operand)
            if _prec(node.operand) < 3:
                inner = paren(inner)
            return ("-" if isinstance(node.op, ast.USub) else "+") + inner
        if isinstance(node, ast.BinOp):
            op = node.op
            if isinstance(op, ast.Div):
                return r"\dfrac{" + tex(node.left) + "}{" + tex(node.right) + "}"
            left, right = tex(node.left), tex(node.right)
            p = _PREC[type(op)]
            if isinstance(op, ast.Pow):
                # a number in powers of ten keeps its own exponent: (1.27 × 10⁻⁵)², never
                # 1.27 × 10⁻⁵², which reads as ten to the power −52
                if (is_scientific(left) or has_unit(left)) and not left.startswith(
                        ("(", r"\left(")):
                    left = paren_number(left)  # (157.1 rad/s)², not 157.1 rad/s²
                elif _prec(node.left) <= 5 or left.startswith("-"):
                    left = paren(left)
                return "{" + left + "}^{" + right + "}"
            if _prec(node.left) < p:
                left = paren(left)
            if _prec(node.right) < p or (isinstance(op, ast.Sub) and _prec(node.right) == p):
                right = paren(right)
            if isinstance(op, ast.Add):
                return f"{left} + {right}"
            if isinstance(op, ast.Sub):
                return f"{left} - {right}"
            if values is not None or isinstance(node.right, ast.Constant):
                return f"{left} \\times {right}"
            if _is_fraction(node.left) or _is_fraction(node.right):
                return f"{left} \\cdot {right}"  # "U/m r²" would read ambiguously
            return f"{left}\\,{right}"
        assert isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
        fname = node.func.id
        args = [tex(a) for a in node.args]
        if fname == "sqrt":
            return r"\sqrt{" + args[0] + "}"
        if fname == "abs":
            return r"\left|" + args[0] + r"\right|"
        if fname == "atan2":
            return r"\operatorname{atan2}" + paren(", ".join(args))
        return _FUNC_LATEX[fname] + paren(", ".join(args))

    return tex(tree)


def _is_fraction(node: ast.expr) -> bool:
    return isinstance(node, ast.BinOp) and isinstance(node.op, ast.Div)


def has_unit(latex: str) -> bool:
    """Whether a printed operand carries its unit (it then needs brackets under a power)."""
    return r"\mathrm{" in latex and r"\ \mathrm{" in latex


def is_scientific(latex: str) -> bool:
    """Whether a printed number is in powers of ten (it then needs brackets under a power)."""
    return r"\times 10^{" in latex


def number_latex(value: float | str, digits: int = 6) -> str:
    """A number (or its printed text) as LaTeX: plain where readable, else
    ``m \\times 10^{e}``; groups of digits keep a thin space."""
    text = value if isinstance(value, str) else format_number(value, digits)
    text = text.replace(GROUP_SPACE, r"\,")
    if "e" in text:
        mant, exp = text.split("e")
        return f"{mant} \\times 10^{{{int(exp)}}}"
    return text
