"""A firm's own criteria from a data file (CSV or TOML), e.g. an instrument maker's floor
specification; every problem raises DataFileError naming the file, line and column.

CSV: optional ``# key: value`` lines (title, source, quantity, interpolation, name), then a
header ``frequency [Hz], NAME [um/s]`` (one criterion per value column, named by its header),
then one row per point. TOML: ``[[criterion]]`` tables with name, title, source, quantity,
interpolation and ``points = [["4 Hz", "25 um/s"], …]``.
"""

from __future__ import annotations

import csv
import io
import math
import re
import tomllib
from pathlib import PurePath

from reportgen.units import UnitProblem, parse_quantity

from .errors import DataFileError
from .library import BAND_VELOCITY, INTERPOLATIONS, QUANTITIES, Criterion

__all__ = ["read_criteria_file"]

_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
_META_KEYS = ("name", "title", "source", "quantity", "interpolation", "family", "notes")
_DEFAULT_SOURCE = "supplied by the firm in {file}"


def read_criteria_file(name: str, data: bytes) -> tuple[Criterion, ...]:
    """The criteria defined in the file called ``name`` (its suffix picks the format)."""
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise DataFileError(name, f"is not UTF-8 text ({exc.reason} at byte {exc.start})"
                            ) from None
    suffix = PurePath(name).suffix.lower()
    if suffix == ".toml":
        return _from_toml(name, text)
    if suffix in (".csv", ".txt"):
        return _from_csv(name, text)
    raise DataFileError(name, f"unknown criteria file type {suffix or '(none)'!r}: expected"
                              " .csv or .toml")


def _unit_factor(file: str, unit: str, dimension: str, column: str,
                 row: int | None = None) -> float:
    try:
        return parse_quantity(f"1 {unit}", dimension)
    except UnitProblem as exc:
        raise DataFileError(file, f"the unit {unit!r} is not a {dimension} ({exc})",
                            column=column, row=row) from None


def _build(file: str, column: str, row: int | None, **fields) -> Criterion:
    fields.setdefault("status", "user_supplied")
    try:
        return Criterion(**fields)
    except ValueError as exc:
        message = str(exc).split(": ", 1)[-1]
        raise DataFileError(file, message, column=column, row=row) from None


def _from_csv(file: str, text: str) -> tuple[Criterion, ...]:
    meta: dict[str, str] = {}
    rows = list(csv.reader(io.StringIO(text)))
    header_at = None
    for i, row in enumerate(rows):
        joined = ",".join(row).strip()
        if not joined:
            continue
        if joined.startswith("#"):
            key, sep, value = joined.lstrip("#").partition(":")
            key = key.strip().lower()
            if sep and key in _META_KEYS:
                meta[key] = value.strip()
            continue
        header_at = i
        break
    if header_at is None:
        raise DataFileError(file, "no header row: expected e.g. 'frequency [Hz], LAB-1 [um/s]'")
    header = [c.strip() for c in rows[header_at]]
    line = header_at + 1
    if len(header) < 2:
        raise DataFileError(file, "the header needs a frequency column and at least one value"
                                  " column, e.g. 'frequency [Hz], LAB-1 [um/s]'", row=line)
    parsed = []
    for cell in header:
        m = _HEADER.match(cell)
        if m is None or not m["name"]:
            raise DataFileError(file, f"cannot read the header cell {cell!r}", row=line)
        parsed.append((m["name"], (m["unit"] or "").strip()))
    f_name, f_unit = parsed[0]
    if f_name.lower() not in ("frequency", "f", "freq"):
        raise DataFileError(file, "the first column must be the frequency, e.g."
                                  " 'frequency [Hz]'", column=header[0], row=line)
    f_factor = _unit_factor(file, f_unit or "Hz", "frequency", header[0], line)
    quantity = meta.get("quantity", BAND_VELOCITY)
    if quantity not in QUANTITIES:
        raise DataFileError(file, f"quantity must be one of {', '.join(QUANTITIES)}",
                            column="quantity")
    interpolation = meta.get("interpolation", "loglog")
    if interpolation not in INTERPOLATIONS:
        raise DataFileError(file, f"interpolation must be one of {', '.join(INTERPOLATIONS)}",
                            column="interpolation")
    columns = []
    for (vname, vunit), cell in zip(parsed[1:], header[1:], strict=True):
        if not vunit:
            raise DataFileError(file, "the value column needs a unit in brackets, e.g."
                                      " 'LAB-1 [um/s]'", column=cell, row=line)
        factor = _unit_factor(file, vunit, "velocity", cell, line)
        cname = meta.get("name", PurePath(file).stem) if vname.lower() in (
            "velocity", "value", "limit") else vname
        columns.append((cname, cell, factor, [], []))
    for number, row in enumerate(rows[header_at + 1:], start=line + 1):
        cells = [c.strip() for c in row]
        if not any(cells) or cells[0].startswith("#"):
            continue
        if len(cells) != len(header):
            raise DataFileError(file, f"the row has {len(cells)} cells, the header"
                                      f" {len(header)}", row=number)
        f = _number(file, cells[0], header[0], number) * f_factor
        for (_, cell, factor, fs, vs), raw in zip(columns, cells[1:], strict=True):
            fs.append(f)
            vs.append(_number(file, raw, cell, number) * factor)
    out = []
    for cname, cell, _, fs, vs in columns:
        if not fs:
            raise DataFileError(file, "no points below the header", column=cell)
        out.append(_build(
            file, cell, None, name=cname, title=meta.get("title", cname),
            quantity=quantity, frequencies=tuple(fs), values=tuple(vs),
            interpolation=interpolation, family=meta.get("family", ""),
            source=meta.get("source", _DEFAULT_SOURCE.format(file=file)),
            notes=meta.get("notes", ""),
        ))
    return tuple(out)


def _number(file: str, raw: str, column: str, row: int) -> float:
    if not raw:
        raise DataFileError(file, "an empty cell", column=column, row=row)
    try:
        value = float(raw)
    except ValueError:
        raise DataFileError(file, f"cannot read {raw!r} as a number", column=column,
                            row=row) from None
    if not math.isfinite(value):
        raise DataFileError(file, f"{raw!r} is not a finite number", column=column, row=row)
    return value


def _from_toml(file: str, text: str) -> tuple[Criterion, ...]:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DataFileError(file, f"is not valid TOML ({exc})") from None
    tables = doc.get("criterion")
    if not isinstance(tables, list) or not tables:
        raise DataFileError(file, "expected one or more [[criterion]] tables",
                            column="criterion")
    out = []
    for k, table in enumerate(tables, start=1):
        where = f"criterion[{k}]"
        if not isinstance(table, dict):
            raise DataFileError(file, "expected a table", column=where)
        for key in ("name", "title", "points"):
            if key not in table:
                raise DataFileError(file, f"the key {key!r} is missing", column=where)
        unknown = sorted(set(table) - {*_META_KEYS, "points", "status"})
        if unknown:
            raise DataFileError(file, f"unknown key {unknown[0]!r}; known keys: name, title,"
                                      " source, quantity, interpolation, family, notes, points",
                                column=f"{where}.{unknown[0]}")
        for key in (*_META_KEYS, "status"):
            if key in table and not isinstance(table[key], str):
                raise DataFileError(file, "expected text", column=f"{where}.{key}")
        points = table["points"]
        if not isinstance(points, list) or not points:
            raise DataFileError(file, "points must be a list of [frequency, value] pairs, e.g."
                                      " [[\"4 Hz\", \"25 um/s\"]]", column=f"{where}.points")
        fs, vs = [], []
        for j, point in enumerate(points, start=1):
            col = f"{where}.points[{j}]"
            if not (isinstance(point, list) and len(point) == 2):
                raise DataFileError(file, "expected a [frequency, value] pair, e.g."
                                          " [\"4 Hz\", \"25 um/s\"]", column=col)
            fs.append(_quantity(file, point[0], "frequency", col))
            vs.append(_quantity(file, point[1], "velocity", col))
        out.append(_build(
            file, where, None, name=table["name"], title=table["title"],
            quantity=table.get("quantity", BAND_VELOCITY), frequencies=tuple(fs),
            values=tuple(vs), interpolation=table.get("interpolation", "loglog"),
            family=table.get("family", ""),
            source=table.get("source", _DEFAULT_SOURCE.format(file=file)),
            status=table.get("status", "user_supplied"), notes=table.get("notes", ""),
        ))
    return tuple(out)


def _quantity(file: str, raw: object, dimension: str, column: str) -> float:
    try:
        return parse_quantity(raw, dimension)
    except UnitProblem as exc:
        raise DataFileError(file, str(exc), column=column) from None
