"""The calc layer: what a plugin declares (calc types, inputs, tables, data files), what
it computes with (the context and the Sheet), the hooks, and the plugin set.

Plugin authors import these names from :mod:`reportgen` itself.
"""

from reportgen.calc.sheet import (
    CalcContext,
    CalcOutput,
    Sheet,
    linear_validity_check,
    on_limit,
)
from reportgen.calc.spec import Column, DataFile, InputSpec, VerificationCase
from reportgen.calc.types import CalcType

__all__ = ["CalcContext", "CalcOutput", "CalcType", "Column", "DataFile", "InputSpec", "Sheet",
           "VerificationCase", "linear_validity_check", "on_limit"]
