"""The plugin author's API: declare a calc type's inputs, compute into blocks, verify.

A calc type is an object registered through the ``reportgen_register_calc_types``
hook. The core validates the job's inputs against :attr:`CalcType.inputs`, calls
:meth:`CalcType.compute` with a :class:`CalcContext` and then
:meth:`CalcType.verify` for the independent second method.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, ClassVar, Literal

from reportgen import formula as _formula
from reportgen.model import (
    Block,
    Check,
    Equation,
    Quantity,
    ResultRow,
    Source,
    Status,
    VerificationRow,
)

__all__ = ["CalcContext", "CalcOutput", "CalcType", "InputSpec", "Sheet", "VerificationCase",
           "linear_validity_check", "on_limit"]


@dataclass(frozen=True, kw_only=True, slots=True)
class InputSpec:
    """One input (or criterion) a calc type accepts.

    ``dimension`` is a name from :data:`reportgen.units.DIMENSIONS`. ``default`` is in SI;
    ``required=False`` with no default means optional and absent unless given.
    ``kind`` "pair" is two quantities (a range), "points" a list of [x, y] pairs,
    "integer" a whole number.
    """

    name: str
    symbol: str
    description: str
    dimension: str = "dimensionless"
    default: float | None = None
    required: bool = True
    minimum: float | None = None
    maximum: float | None = None
    positive: bool = False  # strictly greater than zero
    kind: Literal["quantity", "integer", "pair", "points"] = "quantity"
    default_note: str = ""  # why the default is what it is (shown as an assumption)

    @property
    def optional(self) -> bool:
        return not self.required or self.default is not None


@dataclass(frozen=True, kw_only=True, slots=True)
class VerificationCase:
    """A published check value that a plugin's own test suite exercises."""

    id: str
    description: str
    source: str
    status: str  # e.g. "formula_confirmed_example_invented", "from_memory"


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
    options: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True, kw_only=True, slots=True)
class CalcOutput:
    blocks: tuple[Block, ...]
    results: tuple[ResultRow, ...]
    checks: tuple[Check, ...]
    purpose: str = ""


class Sheet:
    """A scratch pad a calc writes its working onto, in reading order.

    ``equation`` evaluates a formula once and records the block, so the printed
    substitution and the printed result always come from the same numbers.
    """

    def __init__(self) -> None:
        self._blocks: list[Block] = []
        self._results: dict[str, ResultRow] = {}
        self._checks: list[Check] = []

    def add(self, *blocks: Block) -> None:
        self._blocks.extend(blocks)

    def equation(self, name: str, expression: str, dimension: str = "dimensionless", *,
                 description: str = "", key: str = "", key_result: bool = False,
                 symbol: str = "", **operands: float) -> float:
        """Evaluate ``expression`` with ``operands`` and record it; returns the value.

        With ``key`` the value is also recorded as a result under that key.
        """
        needed = _formula.names_in(expression)
        missing = needed - operands.keys()
        if missing:
            raise _formula.FormulaError(f"formula {expression!r} needs {sorted(missing)}")
        ordered = tuple((n, float(operands[n])) for n in sorted(needed))
        value = _formula.evaluate(expression, dict(ordered))
        self._blocks.append(Equation(name=name, expression=expression, operands=ordered,
                                     result=Quantity(value=value, dimension=dimension),
                                     description=description, result_key=key))
        if key:
            self.result(key, value, dimension, symbol or name, description,
                        key_result=key_result)
        return value

    def result(self, key: str, value: float, dimension: str, symbol: str, description: str,
               *, key_result: bool = False) -> float:
        self._results[key] = ResultRow(key=key, symbol=symbol, description=description,
                                       quantity=Quantity(value=float(value),
                                                         dimension=dimension),
                                       key_result=key_result)
        return value

    def check(self, id: str, description: str, *, value: float | None = None,
              limit: float | None = None, dimension: str = "dimensionless",
              comparison: str = "", status: Status | None = None, note: str = "") -> Check:
        """Record a design check; status follows from value, limit and comparison."""
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
                          checks=tuple(self._checks), purpose=purpose)


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


class CalcType:
    """Base class for a calc type. Subclass, set the class attributes, implement compute.

    ``name`` is what a job's ``plugin = "..."`` names; ``api_version`` is the hook API
    version the plugin targets (see :data:`reportgen.hookspecs.API_VERSION`).
    """

    name: ClassVar[str] = ""
    title: ClassVar[str] = ""
    version: ClassVar[str] = "0.0.0"
    api_version: ClassVar[int] = 1
    purpose: ClassVar[str] = ""
    inputs: ClassVar[tuple[InputSpec, ...]] = ()
    criteria: ClassVar[tuple[InputSpec, ...]] = ()
    sources: ClassVar[tuple[Source, ...]] = ()
    verification_cases: ClassVar[tuple[VerificationCase, ...]] = ()
    #: Largest number of points in any generated time or frequency series.
    max_points: ClassVar[int] = 20000

    def validate(self, inputs: Mapping[str, Any], given: frozenset[str],
                 criteria: Mapping[str, Any]) -> Sequence[tuple[str, str]]:
        """Cross-field checks after each input passed its own: (field, message) pairs."""
        return ()

    def compute(self, ctx: CalcContext) -> CalcOutput:  # pragma: no cover - abstract
        raise NotImplementedError

    def verify(self, ctx: CalcContext, output: CalcOutput) -> Sequence[VerificationRow] | None:
        """Second, independent route to the key results. None: not independently verified."""
        return None
