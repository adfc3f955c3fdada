"""reportgen: vibration calculation packages from TOML job files.

The public API for calc-plugin authors is importable from here: :data:`hookimpl`,
:class:`CalcType`, :class:`InputSpec` (with :class:`Column` for table inputs and
:class:`DataFile` for data files), :class:`Sheet`, the block types and the errors. The
other public modules are :mod:`reportgen.units` (parsing and standard gravity) and
:mod:`reportgen.testing` (the plugin authors' test kit); everything else is internal.
"""

from reportgen._version import __version__
from reportgen.calc import (
    CalcContext,
    CalcOutput,
    CalcType,
    Column,
    DataFile,
    InputSpec,
    Sheet,
    VerificationCase,
    linear_validity_check,
    on_limit,
)
from reportgen.calc.hookspecs import API_VERSION, hookimpl
from reportgen.errors import JobError, PluginError, RenderError, ReportgenError, VerificationError
from reportgen.model import (
    Assumptions,
    Band,
    Caution,
    Check,
    Equation,
    Figure,
    InputsTable,
    Marker,
    Matrix,
    Note,
    Panel,
    Paragraph,
    Quantity,
    Reference,
    ResultRow,
    ResultsTable,
    Series,
    Source,
    Table,
    VerificationRow,
)

__all__ = [
    "API_VERSION", "Assumptions", "Band", "CalcContext", "CalcOutput", "CalcType", "Caution",
    "Check", "Column", "DataFile", "Equation", "Figure", "InputSpec", "InputsTable",
    "JobError", "Marker", "Matrix", "Note", "Panel", "Paragraph", "PluginError", "Quantity",
    "Reference", "RenderError", "ReportgenError", "ResultRow", "ResultsTable", "Series",
    "Sheet", "Source", "Table", "VerificationCase", "VerificationError", "VerificationRow",
    "__version__", "hookimpl", "linear_validity_check", "on_limit",
]
