"""reportgen: vibration calculation packages from TOML job files.

The public API for calc-plugin authors is importable from here: :data:`hookimpl`,
:class:`CalcType`, :class:`InputSpec`, :class:`Sheet`, the block types and the errors.
"""

from importlib import metadata as _metadata

from reportgen.calc.hookspecs import API_VERSION, hookimpl
from reportgen.calc.sheet import (
    CalcContext,
    CalcOutput,
    CalcType,
    InputSpec,
    Sheet,
    VerificationCase,
)
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

try:
    __version__ = _metadata.version("reportgen")
except _metadata.PackageNotFoundError:  # running from a source tree
    __version__ = "0.0.0+source"

__all__ = [
    "API_VERSION", "Assumptions", "Band", "CalcContext", "CalcOutput", "CalcType", "Caution",
    "Check", "Equation", "Figure", "InputSpec", "InputsTable", "JobError", "Marker", "Note",
    "Panel", "Paragraph", "PluginError", "Quantity", "Reference", "RenderError",
    "ReportgenError", "ResultRow", "ResultsTable", "Series", "Sheet", "Source", "Table",
    "VerificationCase", "VerificationError", "VerificationRow", "hookimpl",
]
