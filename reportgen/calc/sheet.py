"""What a calc computes with: the context the core hands it (SI inputs, data files),
and the Sheet it writes its working onto, in reading order, into a CalcOutput.

A calc type (:mod:`reportgen.calc.spec`) is registered through the
``reportgen_register_calc_types`` hook; the core calls its ``compute`` with a
:class:`CalcContext`, then its ``verify`` for the independent second method.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

from reportgen import formula as _formula
from reportgen.calc.criteria import CriteriaLibrary
from reportgen.calc.spec import DataFile
from reportgen.model import (
    Block,
    Check,
    Equation,
    Quantity,
    ResultList,
    ResultRow,
    Status,
)

__all__ = ["CalcContext", "CalcOutput", "Sheet", "linear_validity_check", "on_limit"]


@dataclass(frozen=True, kw_only=True)
class CalcContext:
    """What the core hands to :meth:`CalcType.compute` and :meth:`CalcType.verify`."""

    calc_id: str
    title: str
    inputs: Mapping[str, Any]  # SI floats (tuples for pairs and points), defaults filled
    given: frozenset[str]  # input names that came from the job file
    criteria: Mapping[str, Any]
    criteria_given: frozenset[str] = frozenset()
    units: str = "SI"
    #: the data files the job names ("file" inputs), by input name; read them, never write
    files: Mapping[str, DataFile] = field(default_factory=dict)
    #: every criterion the plugins registered (and the firm's own, from its template
    #: folder); look one up with ``ctx.criteria_library.get(name)``. It pickles, so a
    #: verification run in a worker process sees the same library.
    criteria_library: CriteriaLibrary = field(default_factory=CriteriaLibrary)
    #: the key of the package's display units ("SI;length=µm"): figures and tables show
    #: their axes in it (``reportgen.units.axis_unit``); the system when not given, so a
    #: context made by hand keeps working
    display: str = ""

    def __post_init__(self) -> None:
        if not self.display:
            object.__setattr__(self, "display", self.units)

    def file_hashes(self) -> dict[str, str]:
        """{input name: SHA-256} of the data files: what the files add to a cache key."""
        return {name: f.sha256 for name, f in sorted(self.files.items())}


@dataclass(frozen=True, kw_only=True, slots=True)
class CalcOutput:
    blocks: tuple[Block, ...]
    results: tuple[ResultRow, ...]
    checks: tuple[Check, ...]
    purpose: str = ""
    result_lists: tuple[ResultList, ...] = ()


class Sheet:
    """A scratch pad a calc writes its working onto, in reading order.

    ``equation`` evaluates a formula once and records the block, so the printed
    substitution and the printed result always come from the same numbers.
    """

    #: symbols every calc may use without declaring them
    CONVENTIONAL = {"g_n": "acceleration", "g": "acceleration"}

    def __init__(self, inputs: Iterable[Any] = ()) -> None:
        self._blocks: list[Block] = []
        self._results: dict[str, ResultRow] = {}
        self._checks: list[Check] = []
        self._lists: dict[str, ResultList] = {}
        self._dims: dict[str, str] = dict(self.CONVENTIONAL)
        self.declare(inputs)

    def declare(self, inputs: Iterable[Any] = (), **dims: str) -> None:
        """Tell the sheet what the operand names mean: input specs (their symbols and
        dimensions) or ``name=dimension``. An equation's own name is known once written."""
        for spec in inputs:
            symbol, dimension = getattr(spec, "symbol", ""), getattr(spec, "dimension", "")
            if symbol and getattr(spec, "kind", "quantity") in ("quantity", "integer"):
                self._dims.setdefault(symbol, dimension or "dimensionless")
        self._dims.update(dims)

    def add(self, *blocks: Block) -> None:
        self._blocks.extend(blocks)

    def equation(self, name: str, expression: str, dimension: str = "dimensionless", *,
                 description: str = "", key: str = "", key_result: bool = False,
                 symbol: str = "", dims: Mapping[str, str] | None = None,
                 **operands: float) -> float:
        """Evaluate ``expression`` with ``operands`` and record it; returns the value.

        With ``key`` the value is also recorded as a result under that key. ``dims`` names
        the dimension of operands the sheet does not know (see :meth:`declare`); a named
        operand whose dimension is nowhere declared raises FormulaError (plain numbers in
        the expression need none).
        """
        needed = _formula.names_in(expression)
        missing = needed - operands.keys()
        if missing:
            raise _formula.FormulaError(f"formula {expression!r} needs {sorted(missing)}")
        known = {**self._dims, **(dims or {})}
        undeclared = sorted(needed - known.keys())
        if undeclared:  # it would print without a unit: a checker could not redo it
            raise _formula.FormulaError(
                f"formula {name} = {expression!r}: no dimension declared for"
                f" {', '.join(undeclared)} (declare it with Sheet.declare, an input spec or"
                " dims=...; a pure ratio is 'dimensionless')")
        ordered = tuple((n, float(operands[n])) for n in sorted(needed))
        value = _formula.evaluate(expression, dict(ordered))
        self._blocks.append(Equation(name=name, expression=expression, operands=ordered,
                                     result=Quantity(value=value, dimension=dimension),
                                     description=description, result_key=key,
                                     operand_dimensions=tuple((n, known.get(n, ""))
                                                              for n, _ in ordered)))
        self._dims[name] = dimension
        if key:
            self.result(key, value, dimension, symbol or name, description,
                        key_result=key_result)
        return value

    def curve(self, expression: str, **operands: Any) -> Any:
        """``expression`` over arrays (for a figure): the same formula an equation prints,
        evaluated elementwise (see :func:`reportgen.formula.evaluate_array`)."""
        missing = _formula.names_in(expression) - operands.keys()
        if missing:
            raise _formula.FormulaError(f"formula {expression!r} needs {sorted(missing)}")
        return _formula.evaluate_array(expression, operands)

    def result(self, key: str, value: float, dimension: str, symbol: str, description: str,
               *, key_result: bool = False) -> float:
        self._results[key] = ResultRow(key=key, symbol=symbol, description=description,
                                       quantity=Quantity(value=float(value),
                                                         dimension=dimension),
                                       key_result=key_result)
        return value

    def result_list(self, key: str, description: str, fields: dict[str, str],
                    rows: list[tuple[float, ...]] | tuple[tuple[float, ...], ...]) -> None:
        """Record a result that is a list of records (``fields``: name -> dimension, each
        row one SI number per field), written to results.json as a list of objects."""
        self._lists[key] = ResultList(key=key, description=description,
                                      fields=tuple(fields), units=tuple(fields.values()),
                                      rows=tuple(tuple(float(v) for v in r) for r in rows))

    def check(self, id: str, description: str, *, value: float | None = None,
              limit: float | None = None, dimension: str = "dimensionless",
              comparison: str = "", status: Status | None = None, note: str = "") -> Check:
        """Record a design check; status follows from value, limit and comparison."""
        if status == "info" and limit is not None:
            raise ValueError(f"check {id!r}: a row with a criterion is pass or fail; leave"
                             " out the status, or the limit for information")
        if status is None:
            if value is None or limit is None:
                raise ValueError("a check needs a status, or a value, a limit and a comparison")
            status = "pass" if _compare(value, limit, comparison) else "fail"
            if on_limit(value, limit):
                note = f"{ON_LIMIT_NOTE}; {note}" if note else ON_LIMIT_NOTE
        c = Check(id=id, description=description, status=status,
                  value=None if value is None else Quantity(value=float(value),
                                                            dimension=dimension),
                  limit=None if limit is None else Quantity(value=float(limit),
                                                            dimension=dimension),
                  comparison=comparison, note=note)
        self._checks.append(c)
        self._blocks.append(c)
        return c

    def output(self, purpose: str = "") -> CalcOutput:
        return CalcOutput(blocks=tuple(self._blocks), results=tuple(self._results.values()),
                          checks=tuple(self._checks), purpose=purpose,
                          result_lists=tuple(self._lists.values()))


#: A value within this relative distance of its limit is on the limit (see on_limit).
ON_LIMIT_REL = 1e-9
ON_LIMIT_NOTE = ("on the limit (equal to it within 1 part in 10⁹): a non-strict criterion"
                 " (≤, ≥) passes, a strict one (<, >) fails")


#: Largest steady-state amplification a linear viscously damped model is trusted for:
#: 1/(2ζ) at ζ = 0.005, about the least damping of bolted or welded steel structures
#: (common practice). Above it supports yield, slip or stiffen before the linear peak.
MAX_LINEAR_AMPLIFICATION = 100.0


def linear_validity_check(sheet: Sheet, amplification: float, what: str) -> None:
    """Record a failing check when a linear SDOF amplitude has run beyond the model's
    validity (near resonance with little or no damping); nothing when within it."""
    if not amplification > MAX_LINEAR_AMPLIFICATION:
        return
    sheet.check("linear-validity", f"Response within the linear model's validity ({what}"
                f" at most {MAX_LINEAR_AMPLIFICATION:g})", value=amplification,
                limit=MAX_LINEAR_AMPLIFICATION, comparison="<=",
                note="the linear model is outside its validity here: the excitation is at or"
                     " very near resonance with little or no damping, and the printed"
                     " amplitudes are not physical. Real damping, support nonlinearity and the"
                     " finite run-up limit the response; state the damping and move the"
                     " natural frequency away from the excitation")


def on_limit(value: float, limit: float) -> bool:
    """Whether ``value`` equals ``limit`` up to round-off. Such a value prints as the
    limit, so one bit of rounding must not decide the status: it passes ≤ and ≥ and
    fails < and > (README, "Design checks")."""
    return abs(value - limit) <= ON_LIMIT_REL * max(abs(value), abs(limit))


def _compare(value: float, limit: float, comparison: str) -> bool:
    if comparison not in ("<=", ">=", "<", ">"):
        raise ValueError(f"unknown comparison {comparison!r}")
    if on_limit(value, limit):
        return comparison in ("<=", ">=")
    ops = {"<=": value <= limit, ">=": value >= limit, "<": value < limit, ">": value > limit}
    return ops[comparison]
