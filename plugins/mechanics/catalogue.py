"""Isolator catalogues: a firm's series of isolators read from CSV or TOML into SI rows,
every problem located by file, row and column (the choice of a model: isolator_selection).
"""

from __future__ import annotations

import csv
import io
import math
import re
import tomllib
from dataclasses import dataclass

from reportgen.units import DIMENSIONS, UnitProblem, parse_quantity

__all__ = ["COLUMNS", "Catalogue", "CatalogueError", "CatalogueRow", "read_catalogue"]

#: The columns every catalogue has, with the dimension of their values.
COLUMNS = {
    "model": None,
    "rated_load": "force",
    "spring_rate": "stiffness",
    "rated_deflection": "length",
    "solid_deflection": "length",
    "horizontal_ratio": "dimensionless",
}
_WORDS = {"rated_load": "rated load", "spring_rate": "spring rate",
          "rated_deflection": "rated deflection", "solid_deflection": "solid deflection",
          "horizontal_ratio": "horizontal stiffness ratio"}
_NUMBER = re.compile(r"^\s*[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_HEADER = re.compile(r"^\s*([^\[\]]*?)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")


class CatalogueError(ValueError):
    """A problem in a catalogue file, located by file, row and column.

    ``row``: the line in a CSV file (the header is row 1) or the 1-based ``[[model]]``
    entry in a TOML file; ``column``: the header text (CSV) or key (TOML); either may be
    None when the problem is the whole file.
    """

    def __init__(self, file: str, row: int | None, column: str | None, message: str) -> None:
        self.file, self.row, self.column, self.message = file, row, column, message
        toml = file.lower().endswith(".toml")
        where = [file]
        if row is not None:
            where.append(f"[[model]] entry {row}" if toml else f"row {row}")
        if column is not None:
            where.append(f"{'key' if toml else 'column'} '{column}'")
        super().__init__(f"{', '.join(where)}: {message}")


@dataclass(frozen=True, slots=True, kw_only=True)
class CatalogueRow:
    """One isolator model in SI: loads in N, rate in N/m, deflections in m. ``row`` is
    where it stands in the file (as :class:`CatalogueError` counts)."""

    model: str
    rated_load: float
    spring_rate: float
    rated_deflection: float
    solid_deflection: float
    horizontal_ratio: float
    row: int

    @property
    def k_vertical(self) -> float:
        return self.spring_rate

    @property
    def k_horizontal(self) -> float:
        """Horizontal stiffness = horizontal_ratio × the vertical spring rate."""
        return self.horizontal_ratio * self.spring_rate


@dataclass(frozen=True, slots=True, kw_only=True)
class Catalogue:
    """A series of isolator models as read from ``name`` (``maker`` and ``series`` from a
    TOML file's top-level keys, empty for CSV)."""

    name: str
    rows: tuple[CatalogueRow, ...]
    maker: str = ""
    series: str = ""
    model_label: str = "model"  # the model column's header as the file writes it

    def model(self, name: str) -> CatalogueRow:
        for row in self.rows:
            if row.model.casefold() == name.strip().casefold():
                return row
        raise CatalogueError(self.name, None, "model", f"no model {name!r} in the catalogue")


# ------------------------------------------------------------------ reading


def read_catalogue(name: str, data: bytes) -> Catalogue:
    """Read a catalogue from its bytes; ``name`` is the file name (its suffix, .csv or
    .toml, says the form; it also names the file in every error).

    CSV: lines starting with ``#`` are comments; a header row naming :data:`COLUMNS`, units
    in brackets (``rated_load [lbf]``), then plain numbers; a column without a unit in its
    header takes quantities in the cells (``"450 lbf"``). TOML: optional ``maker``,
    ``series`` and a ``[units]`` table (the unit of each key's plain numbers), then one
    ``[[model]]`` table per model.
    Raises :class:`CatalogueError`.
    """
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CatalogueError(name, None, None, f"not UTF-8 text (byte {exc.start})") from None
    if not text.strip():
        raise CatalogueError(name, None, None, "the catalogue is empty")
    suffix = name.lower().rsplit(".", 1)[-1] if "." in name else ""
    if suffix == "csv":
        catalogue = _read_csv(name, text)
    elif suffix == "toml":
        catalogue = _read_toml(name, text)
    else:
        raise CatalogueError(name, None, None, "a catalogue is a .csv or a .toml file")
    seen: dict[str, CatalogueRow] = {}
    for row in catalogue.rows:
        key = row.model.casefold()
        if key in seen:
            raise CatalogueError(name, row.row, catalogue.model_label,
                                 f"duplicate model {row.model!r} (also at"
                                 f" {_row_word(name)} {seen[key].row})")
        seen[key] = row
    return catalogue


def _row_word(name: str) -> str:
    return "entry" if name.lower().endswith(".toml") else "row"


def _key(header: str) -> str:
    return re.sub(r"[\s\-]+", "_", header.strip().lower())


def _unit_scale(name: str, row: int | None, column: str, unit: str, dim: str) -> float:
    """SI value of one ``unit`` of dimension ``dim`` (header or [units] table)."""
    if unit in ("", "-") and dim == "dimensionless":
        return 1.0
    try:
        return parse_quantity(f"1 {unit}", dim)
    except UnitProblem as exc:
        raise CatalogueError(name, row, column, _unit_message(unit, dim, str(exc))) from None


def _unit_kind(unit: str) -> str | None:
    """The dimension (of :data:`DIMENSIONS`) that ``unit`` measures, if any."""
    for dim in DIMENSIONS:
        try:
            parse_quantity(f"1 {unit}", dim)
        except UnitProblem:
            continue
        return dim
    return None


def _unit_message(unit: str, dim: str, problem: str = "") -> str:
    kind = _unit_kind(unit)
    if kind is not None and kind != dim:
        return (f"{unit!r} is a unit of {kind.replace('_', ' ')}, not of"
                f" {dim.replace('_', ' ')} (for example {DIMENSIONS[dim].us_label or '0.8'})")
    if "with dimension" in problem:
        return f"{unit!r} is not a unit of {dim.replace('_', ' ')}"
    return f"unknown unit {unit!r}"


def _cell(name: str, row: int, column: str, key: str, raw: object,
          scale: float | None) -> float:
    """One value in SI. ``scale`` is the SI size of the column's unit (None: no unit given
    for the column, so a dimensional cell must carry its own)."""
    dim = COLUMNS[key] or "dimensionless"
    if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
        raise CatalogueError(name, row, column, f"expected a number, found {raw!r}")
    text = str(raw).strip()
    if not text:
        raise CatalogueError(name, row, column, "the cell is empty")
    match = _NUMBER.match(text)
    rest = text[match.end():].strip() if match else text
    if match is None:
        raise CatalogueError(name, row, column, f"{text!r} is not a number")
    if scale is not None or dim == "dimensionless":
        if rest:
            if dim != "dimensionless" and _unit_kind(rest) is not None:
                where = "[units]" if name.lower().endswith(".toml") else "the header"
                msg = f"{text!r}: {where} already gives the unit; write the number alone"
            else:
                msg = f"{text!r} is not a number"
            raise CatalogueError(name, row, column, msg)
        value = float(match.group(0)) * (1.0 if scale is None else scale)
    elif not rest:
        raise CatalogueError(name, row, column,
                             f"the plain number {text} needs a unit: give it in the header,"
                             f" e.g. '{column} [{DIMENSIONS[dim].us_label}]', or in the"
                             " cell")
    else:
        try:
            value = parse_quantity(text, dim)
        except UnitProblem as exc:
            finite = "finite" in str(exc)
            msg = (f"{text!r} is not a finite number" if finite
                   else _unit_message(rest, dim, str(exc)))
            raise CatalogueError(name, row, column, msg) from None
    if not math.isfinite(value):
        raise CatalogueError(name, row, column, f"{text!r} is not a finite number")
    if value <= 0.0:
        word = _WORDS[key]
        raise CatalogueError(name, row, column, f"the {word} must be positive, found {text}")
    return value


def _make_row(name: str, row: int, model: object, values: dict[str, float],
              labels: dict[str, str]) -> CatalogueRow:
    text = str(model).strip() if isinstance(model, (str, int, float)) else ""
    if not text:
        raise CatalogueError(name, row, labels["model"], "the model name is empty")
    if values["solid_deflection"] < values["rated_deflection"]:
        raise CatalogueError(name, row, labels["solid_deflection"],
                             "the solid deflection is below the rated deflection: the spring"
                             " would close before it reaches its rated load")
    return CatalogueRow(model=text, row=row, **values)


def _read_csv(name: str, text: str) -> Catalogue:
    first = next((ln for ln in text.splitlines()
                  if ln.strip() and not ln.lstrip().startswith("#")), "")
    delimiter = ";" if first.count(";") > first.count(",") else ","
    reader = csv.reader(io.StringIO(text), delimiter=delimiter)
    header: list[str] | None = None
    header_row = 0
    columns: dict[str, tuple[int, str, float | None]] = {}
    rows: list[CatalogueRow] = []
    try:
        for cells in reader:
            line = reader.line_num
            if not any(c.strip() for c in cells) or cells[0].lstrip().startswith("#"):
                continue  # blank and comment lines keep their line numbers
            if header is None:
                header, header_row = cells, line
                columns = _csv_header(name, line, cells)
                continue
            if len(cells) != len(header):
                raise CatalogueError(name, line, None,
                                     f"{len(cells)} cells, but the header has {len(header)}")
            values = {}
            for key, (index, label, scale) in columns.items():
                if key == "model":
                    continue
                values[key] = _cell(name, line, label, key, cells[index], scale)
            labels = {key: label for key, (_, label, _) in columns.items()}
            rows.append(_make_row(name, line, cells[columns["model"][0]], values, labels))
    except csv.Error as exc:
        raise CatalogueError(name, reader.line_num, None, f"not readable as CSV ({exc})") from None
    if not rows:
        raise CatalogueError(name, header_row or None, None,
                             "the catalogue has a header but no models")
    return Catalogue(name=name, rows=tuple(rows), model_label=columns["model"][1])


def _csv_header(name: str, line: int, cells: list[str]) -> dict[str, tuple[int, str, float | None]]:
    columns: dict[str, tuple[int, str, float | None]] = {}
    for index, cell in enumerate(cells):
        match = _HEADER.match(cell)
        label = cell.strip()
        if match is None:
            raise CatalogueError(name, line, label, "a header is a name with an optional"
                                 " [unit], e.g. 'rated_load [lbf]'")
        key, unit = _key(match.group(1)), match.group(2)
        if key in columns:
            raise CatalogueError(name, line, label, f"the column {key!r} appears twice")
        if key not in COLUMNS:
            continue  # other columns (notes, colour codes) are the firm's own
        dim = COLUMNS[key]
        if dim is None:
            scale = None
        elif unit is None:
            scale = 1.0 if dim == "dimensionless" else None
        else:
            scale = _unit_scale(name, line, label, unit, dim)
        columns[key] = (index, label, scale)
    missing = [k for k in COLUMNS if k not in columns]
    if missing:
        raise CatalogueError(name, line, missing[0],
                             f"missing column{'s' if len(missing) > 1 else ''}:"
                             f" {', '.join(missing)}")
    return columns


def _read_toml(name: str, text: str) -> Catalogue:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CatalogueError(name, None, None, f"not valid TOML ({exc})") from None
    units = doc.get("units", {})
    if not isinstance(units, dict):
        raise CatalogueError(name, None, "units", "[units] must be a table")
    scales: dict[str, float | None] = {}
    for key, dim in COLUMNS.items():
        if dim is None:
            continue
        unit = units.get(key)
        if unit is None:
            scales[key] = 1.0 if dim == "dimensionless" else None
        elif not isinstance(unit, str):
            raise CatalogueError(name, None, f"units.{key}", "a unit is a string, e.g. \"lbf\"")
        else:
            scales[key] = _unit_scale(name, None, f"units.{key}", unit, dim)
    entries = doc.get("model")
    if not isinstance(entries, list) or not entries:
        raise CatalogueError(name, None, "model", "no [[model]] tables: the catalogue is empty")
    rows = []
    for number, entry in enumerate(entries, start=1):
        if not isinstance(entry, dict):
            raise CatalogueError(name, number, None, "each [[model]] must be a table")
        missing = [k for k in COLUMNS if k not in entry]
        if missing:
            raise CatalogueError(name, number, missing[0],
                                 f"missing key{'s' if len(missing) > 1 else ''}:"
                                 f" {', '.join(missing)}")
        values = {key: _cell(name, number, key, key, entry[key], scales[key])
                  for key, dim in COLUMNS.items() if dim is not None}
        rows.append(_make_row(name, number, entry["model"], values, {k: k for k in COLUMNS}))
    return Catalogue(name=name, rows=tuple(rows), maker=str(doc.get("maker", "")),
                     series=str(doc.get("series", "")))
