"""The base class of a calc type: what a plugin subclasses and registers."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any, ClassVar

from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.calc.spec import InputSpec, VerificationCase
from reportgen.model import Source, VerificationRow

__all__ = ["CalcType"]


class CalcType:
    """Base class for a calc type. Subclass, set the class attributes, implement compute.

    ``name`` is what a job's ``plugin = "..."`` names; ``api_version`` is the hook API
    version the plugin targets (see :data:`reportgen.calc.hookspecs.API_VERSION`).
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
    #: The result keys an equipment schedule's summary shows for each row (empty: the
    #: calc's first three key results).
    schedule_results: ClassVar[tuple[str, ...]] = ()

    def validate(self, inputs: Mapping[str, Any], given: frozenset[str],
                 criteria: Mapping[str, Any]) -> Sequence[tuple[str, str]]:
        """Cross-field checks after each input passed its own: (field, message) pairs."""
        return ()

    def compute(self, ctx: CalcContext) -> CalcOutput:  # pragma: no cover - abstract
        raise NotImplementedError

    def verify(self, ctx: CalcContext, output: CalcOutput) -> Sequence[VerificationRow] | None:
        """Second, independent route to the key results. None: not independently verified."""
        return None

