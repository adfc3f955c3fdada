"""The document model: a typed, immutable, renderer-agnostic tree of a calc package.

Plugins build blocks; transforms return new trees; renderers only translate.
Every node is a frozen dataclass and serialises to JSON (:func:`to_json`).
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass, field
from typing import Any, Literal

MODEL_VERSION = 1

Status = Literal["pass", "fail", "info"]
_frozen = dict(frozen=True, kw_only=True, slots=True)


@dataclass(**_frozen)
class Quantity:
    """An SI value with its dimension name (see :mod:`reportgen.units`)."""

    value: float
    dimension: str = "dimensionless"


# ---------------------------------------------------------------- blocks


@dataclass(**_frozen)
class InputRow:
    name: str
    symbol: str  # LaTeX-free plain symbol text, e.g. "m", "ζ"
    description: str
    quantity: Quantity | None  # None: a text value (a choice, a file), in ``text``
    source: str  # "job file", "default", "derived" ...
    text: str = ""


@dataclass(**_frozen)
class InputsTable:
    rows: tuple[InputRow, ...]
    title: str = "Inputs"


@dataclass(**_frozen)
class Assumptions:
    items: tuple[str, ...]
    title: str = "Assumptions"


@dataclass(**_frozen)
class Equation:
    """One evaluated formula.

    ``expression`` is an arithmetic expression over ``operands`` (names to SI
    quantities); ``result`` was computed from exactly those operands by
    :func:`reportgen.formula.evaluate`, so the printed substitution reproduces
    the printed result.
    """

    name: str  # result name, e.g. "omega_n"
    expression: str  # e.g. "sqrt(k/m)"
    operands: tuple[tuple[str, float], ...]  # SI values, in the expression's order
    result: Quantity
    description: str = ""
    result_key: str = ""  # key in the calc's results, if it is one
    #: each operand's dimension name ("" where the sheet does not know it), so that the
    #: renderer substitutes every value in the package's units, with its unit
    operand_dimensions: tuple[tuple[str, str], ...] = ()


@dataclass(**_frozen)
class ResultRow:
    key: str
    symbol: str
    description: str
    quantity: Quantity
    key_result: bool = False


@dataclass(**_frozen)
class ResultList:
    """A result that is a list of records (a spectrum's band levels): results.json writes
    ``key: [{field: value, ...}, ...]`` with the numbers in SI (``units``: one dimension
    per field). The package shows such a list in a Table block of the calc's own."""

    key: str
    description: str
    fields: tuple[str, ...]
    units: tuple[str, ...]
    rows: tuple[tuple[float, ...], ...]


@dataclass(**_frozen)
class ResultsTable:
    rows: tuple[ResultRow, ...]
    title: str = "Results"


@dataclass(**_frozen)
class Check:
    """A design check: ``value`` compared with ``limit`` by ``comparison``."""

    id: str
    description: str
    status: Status
    value: Quantity | None = None
    limit: Quantity | None = None
    comparison: str = ""  # "<=", ">=", "<", ">", "outside", "" for info
    note: str = ""
    #: where the check governs over the operating envelope (None: no envelope)
    governing: Governing | None = None


@dataclass(**_frozen)
class Governing:
    """A check judged over the operating envelope: its worst value, the status there, the
    status at nominal, and the point's inputs that differ from nominal (SI; empty at
    nominal) with the same point in words ("at 912 rpm with k + 15 %")."""

    value: Quantity | None
    status: Status
    nominal_status: Status
    where: str = ""
    inputs: tuple[tuple[str, Quantity], ...] = ()


@dataclass(**_frozen)
class Series:
    x: tuple[float, ...]
    y: tuple[float, ...]
    label: str = ""
    style: Literal["line", "dashed", "dotted", "points"] = "line"
    emphasis: bool = False


@dataclass(**_frozen)
class Marker:
    """A vertical line (``y`` is None) or a labelled point."""

    x: float
    y: float | None = None
    label: str = ""


@dataclass(**_frozen)
class Band:
    x_low: float
    x_high: float
    label: str = ""


@dataclass(**_frozen)
class Fill:
    x: tuple[float, ...]
    low: tuple[float, ...]
    high: tuple[float, ...]
    label: str = ""


@dataclass(**_frozen)
class Panel:
    series: tuple[Series, ...]
    y_label: str
    y_scale: Literal["linear", "log"] = "linear"
    markers: tuple[Marker, ...] = ()
    bands: tuple[Band, ...] = ()
    hlines: tuple[tuple[float, str], ...] = ()
    y_range: tuple[float, float] | None = None
    #: shaded regions between two curves over the same x (a tolerance band)
    fills: tuple[Fill, ...] = ()
    x_label: str = ""  # the panel's own x axis, in a grid (Figure.columns > 1)
    equal_aspect: bool = False  # one unit on x as long as one on y (plans, mode shapes)
    title: str = ""  # a small multiple's own heading


@dataclass(**_frozen)
class Figure:
    """A declarative plot: panels stacked vertically, sharing the x axis; with ``columns``
    above 1, small multiples: a grid filled row by row, each panel with its own x axis."""

    key: str
    caption: str
    alt: str
    x_label: str
    panels: tuple[Panel, ...]
    x_scale: Literal["linear", "log"] = "linear"
    x_range: tuple[float, float] | None = None
    columns: int = 1


@dataclass(**_frozen)
class Paragraph:
    text: str
    title: str = ""


@dataclass(**_frozen)
class Note:
    text: str


@dataclass(**_frozen)
class Caution:
    text: str


Cell = str | float | int | Quantity | None


@dataclass(**_frozen)
class Table:
    """A table of cells (for example the mount-load table).

    A cell is text, or a number: with ``units`` (one dimension name per column, "" for a
    text column) a number is an SI value that the renderer shows in the package's display
    unit of that column, named in the column's header; a :class:`Quantity` cell carries
    its own dimension and is shown with its unit. None is an empty cell. Plugins never
    format units themselves.
    """

    title: str
    header: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    units: tuple[str, ...] = ()
    digits: int = 4


@dataclass(**_frozen)
class Matrix:
    """A matrix (a stiffness or mass matrix, mode shapes) with labelled rows and columns.

    ``values`` are SI; ``dimensions`` gives each entry's dimension name (rows of names),
    or one row of names applying to every row (by column), or is empty (dimensionless).
    """

    title: str
    symbol: str
    values: tuple[tuple[float, ...], ...]
    row_labels: tuple[str, ...] = ()
    column_labels: tuple[str, ...] = ()
    dimensions: tuple[tuple[str, ...], ...] = ()
    caption: str = ""
    digits: int = 4

    def dimension(self, i: int, j: int) -> str:
        if not self.dimensions:
            return "dimensionless"
        row = self.dimensions[i] if len(self.dimensions) > 1 else self.dimensions[0]
        return row[j]


@dataclass(**_frozen)
class Reference:
    text: str


Block = (InputsTable | Assumptions | Equation | ResultsTable | Check | Figure | Paragraph
         | Note | Caution | Table | Matrix | Reference)
BLOCK_TYPES: tuple[type, ...] = (
    InputsTable, Assumptions, Equation, ResultsTable, Check, Figure, Paragraph, Note,
    Caution, Table, Matrix, Reference,
)


# ---------------------------------------------------------------- document


@dataclass(**_frozen)
class VerificationRow:
    quantity: str
    closed_form: float
    independent: float
    tolerance: float  # relative
    method: str
    abs_tolerance: float = 0.0
    unit: str = "dimensionless"
    #: the envelope point it ran at, in words and as the inputs that differ from nominal
    #: (SI); empty at nominal
    point: str = ""
    point_inputs: tuple[tuple[str, Quantity], ...] = ()

    @property
    def rel_difference(self) -> float:
        scale = abs(self.closed_form)
        diff = abs(self.independent - self.closed_form)
        if scale == 0:
            return 0.0 if diff == 0 else math.inf
        return diff / scale

    @property
    def agrees(self) -> bool:
        diff = abs(self.independent - self.closed_form)
        return diff <= max(self.tolerance * abs(self.closed_form), self.abs_tolerance)


@dataclass(**_frozen)
class Source:
    """A published source a plugin's method follows."""

    key: str
    citation: str


@dataclass(**_frozen)
class EnvelopeInput:
    """One input given with a range or a tolerance, as evaluated (SI)."""

    name: str
    symbol: str
    kind: str  # "range" | "tolerance"
    text: str  # as written
    low: Quantity
    nominal: Quantity
    high: Quantity


@dataclass(**_frozen)
class Envelope:
    """The extent of an operating envelope and the number of evaluations it took."""

    inputs: tuple[EnvelopeInput, ...]
    orders: tuple[tuple[float, str], ...]  # (order, label); order 1 is the stated speed
    evaluations: int


@dataclass(**_frozen)
class Section:
    calc_id: str
    plugin: str
    plugin_version: str
    plugin_package: str
    title: str
    purpose: str
    blocks: tuple[Block, ...]
    results: tuple[ResultRow, ...]
    checks: tuple[Check, ...]
    verification: tuple[VerificationRow, ...] | None  # None: not independently verified
    notes: str = ""
    number: str = ""
    sources: tuple[Source, ...] = ()
    verification_cases: tuple[str, ...] = ()
    #: the operating envelope it was judged over (None: inputs without ranges or orders)
    envelope: Envelope | None = None

    result_lists: tuple[ResultList, ...] = ()

    def result(self, key: str) -> ResultRow | None:
        return next((r for r in self.results if r.key == key), None)

    @property
    def governing_check(self) -> Check | None:
        """The check that decides the calc: the most exceeded failing one, else the
        passing one closest to its limit (value over limit, or limit over value for a
        minimum); None without design checks."""
        design = [c for c in self.checks if c.status != "info"]
        pool = [c for c in design if c.status == "fail"] or design
        return max(pool, key=_utilisation) if pool else None


@dataclass(**_frozen)
class RevisionEntry:
    revision: str
    date: str
    description: str
    by: str = ""


@dataclass(**_frozen)
class PackageInfo:
    title: str
    job_number: str
    calc_number: str
    revision: str
    date: str
    client: str = ""
    project: str = ""
    units: Literal["SI", "US"] = "SI"
    #: the display units' key (reportgen.units.DisplayUnits): the system and the unit per
    #: quantity family the job's inputs chose; "" means the system's defaults
    display: str = ""
    prepared_by: str = ""
    prepared_date: str = ""
    checked_by: str = ""
    checked_date: str = ""
    approved_by: str = ""
    approved_date: str = ""
    firm: str = ""


def _utilisation(c: Check) -> float:
    if c.value is None or c.limit is None:
        return 0.0
    v, lim = abs(c.value.value), abs(c.limit.value)
    if c.comparison in ("<=", "<"):
        return v / lim if lim else math.inf
    if c.comparison in (">=", ">"):
        return lim / v if v else math.inf
    return 0.0


@dataclass(**_frozen)
class ScheduleItem:
    """One row of an equipment schedule: the calc it became and the columns the
    schedule shows but never computes with."""

    tag: str
    calc_id: str
    row: int
    description: str = ""
    location: str = ""
    mounting: str = ""
    notes: str = ""


@dataclass(**_frozen)
class Deviation:
    """A failing check the job accepts, with who accepted it, when and why."""

    calc: str
    check: str
    justification: str
    accepted_by: str = ""
    date: str = ""


@dataclass(**_frozen)
class Document:
    info: PackageInfo
    revision_history: tuple[RevisionEntry, ...]
    sections: tuple[Section, ...]
    software: tuple[tuple[str, str, str], ...] = ()  # (component, package, version)
    changes: tuple[str, ...] = ()
    model_version: int = MODEL_VERSION
    extra: tuple[tuple[str, str], ...] = field(default=())
    #: an equipment schedule's rows, in the sheet's order, where it came from, and the
    #: result keys its summary shows for each row
    schedule: tuple[ScheduleItem, ...] = ()
    schedule_source: str = ""
    schedule_results: tuple[str, ...] = ()
    #: against the previous revision: (tag, what happened, what moved) per changed tag
    schedule_changes: tuple[tuple[str, str, str], ...] = ()

    deviations: tuple[Deviation, ...] = ()
    changes_table: Table | None = None  # the changes since the previous revision, tabulated

    @property
    def schedule_ids(self) -> frozenset[str]:
        return frozenset(i.calc_id for i in self.schedule)

    @property
    def schedule_methods(self) -> tuple[Section, ...]:
        """The first schedule item of each calc type: whose method is printed once."""
        seen: dict[str, Section] = {}
        for s in self.sections:
            if s.calc_id in self.schedule_ids and s.plugin not in seen:
                seen[s.plugin] = s
        return tuple(seen.values())

    def section_of(self, calc_id: str) -> Section | None:
        return next((s for s in self.sections if s.calc_id == calc_id), None)

    def sheet_working(self, section: Section) -> tuple[Equation, ...]:
        """The key equations of one schedule item's sheet: those that lead to a result the
        schedule shows or to a value a check compares, with every equation they use, in
        the section's order (all of them when none is found). The item's full working is
        its own package (``--split``)."""
        eqs = [b for b in section.blocks if isinstance(b, Equation)]
        wanted = set(self.schedule_results)
        values = [c.value.value for c in section.checks if c.value is not None]

        def seed(e: Equation) -> bool:
            v = e.result.value
            return e.result_key in wanted or any(
                v == x or abs(v - x) <= 1e-12 * max(abs(v), abs(x)) for x in values)

        keep = {i for i, e in enumerate(eqs) if seed(e)}
        todo = list(keep)
        while todo:  # each operand's latest equation before its use
            i = todo.pop()
            for name, _ in eqs[i].operands:
                j = next((j for j in range(i - 1, -1, -1) if eqs[j].name == name), None)
                if j is not None and j not in keep:
                    keep.add(j)
                    todo.append(j)
        return tuple(e for i, e in enumerate(eqs) if i in keep) if keep else tuple(eqs)

    def sheet_results(self, section: Section) -> tuple[ResultRow, ...]:
        """The key results one schedule item's sheet shows: those its key working
        computes (see :meth:`sheet_working`) and those the schedule's summary shows."""
        keys = {e.result_key for e in self.sheet_working(section)} | set(
            self.schedule_results)
        return tuple(r for r in section.results if r.key_result and r.key in keys)

    @property
    def schedule_by_tag(self) -> tuple[ScheduleItem, ...]:
        """The schedule's rows in the order of their tags (P-2 before P-10)."""
        def natural(item: ScheduleItem) -> list[Any]:
            return [(0, int(t), "") if t.isdigit() else (1, 0, t.casefold())
                    for t in re.split(r"(\d+)", item.tag) if t]
        return tuple(sorted(self.schedule, key=natural))

    @property
    def checks(self) -> tuple[tuple[Section, Check], ...]:
        return tuple((s, c) for s in self.sections for c in s.checks)

    @property
    def design_checks(self) -> tuple[tuple[Section, Check], ...]:
        return tuple((s, c) for s, c in self.checks if c.status != "info")

    @property
    def failed(self) -> tuple[tuple[Section, Check], ...]:
        return tuple((s, c) for s, c in self.checks if c.status == "fail")

    def deviation(self, calc_id: str, check_id: str) -> Deviation | None:
        """The accepted deviation for a check, if the job records one."""
        for d in self.deviations:
            if d.calc == calc_id and d.check == check_id:
                return d
        return None

    @property
    def unaccepted(self) -> tuple[tuple[Section, Check], ...]:
        """Failing checks without an accepted deviation."""
        return tuple((s, c) for s, c in self.failed if self.deviation(s.calc_id, c.id) is None)

    @property
    def fit_to_issue(self) -> bool:
        """Checked, approved, and every failing check accepted by a recorded deviation."""
        return self.review_state == "approved" and not self.unaccepted

    @property
    def status(self) -> Status:
        return "fail" if self.failed else "pass"

    @property
    def review_state(self) -> Literal["preliminary", "checked", "approved"]:
        if not self.info.checked_by.strip():
            return "preliminary"
        if not self.info.approved_by.strip():
            return "checked"
        return "approved"


# ---------------------------------------------------------------- JSON

_TYPES = {cls.__name__: cls for cls in (*BLOCK_TYPES, Quantity, InputRow, ResultRow, Series,
                                        ResultList, Marker, Band, Panel, VerificationRow,
                                        Source, Section, RevisionEntry, PackageInfo, Deviation,
                                        Document, Governing, Fill, EnvelopeInput, Envelope)}


def to_json(node: Any) -> Any:
    """Serialise a model node to JSON-compatible data (with a ``type`` tag)."""
    if dataclasses.is_dataclass(node) and not isinstance(node, type):
        out: dict[str, Any] = {"type": type(node).__name__}
        for f in dataclasses.fields(node):
            out[f.name] = to_json(getattr(node, f.name))
        return out
    if isinstance(node, (tuple, list)):
        return [to_json(x) for x in node]
    return node


def from_json(data: Any) -> Any:
    """Rebuild a model node from :func:`to_json` output."""
    if isinstance(data, dict) and "type" in data:
        cls = _TYPES[data["type"]]
        kwargs = {k: _tuplify(from_json(v)) for k, v in data.items() if k != "type"}
        return cls(**kwargs)
    if isinstance(data, list):
        return tuple(from_json(x) for x in data)
    return data


def _tuplify(value: Any) -> Any:
    if isinstance(value, list):
        return tuple(_tuplify(v) for v in value)
    return value
