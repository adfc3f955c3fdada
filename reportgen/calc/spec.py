"""What a calc type declares: its inputs and criteria (scalars, choices, tables of rows,
data files) and its verification cases; the CalcType base class is in calc.types.

The job loader validates a job against these declarations and hands the calc SI values;
the JSON Schema of the job format is generated from the same declarations.
"""

from __future__ import annotations

import hashlib
import io
from dataclasses import dataclass, field
from pathlib import PurePosixPath
from typing import IO, Any, Literal

__all__ = ["Column", "DataFile", "InputSpec", "VerificationCase"]

Kind = Literal["quantity", "integer", "pair", "points", "choice", "text", "table", "file",
               "criterion"]


@dataclass(frozen=True, kw_only=True, slots=True)
class Column:
    """One column of a table input: each row gives a value for it, validated like a
    scalar input (a quantity of ``dimension``, a whole number, or text)."""

    name: str
    description: str
    dimension: str = "dimensionless"
    kind: Literal["quantity", "integer", "text"] = "quantity"
    required: bool = True
    minimum: float | None = None
    maximum: float | None = None
    positive: bool = False
    symbol: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class InputSpec:
    """One input (or criterion) a calc type accepts.

    ``dimension`` is a name from :data:`reportgen.units.DIMENSIONS`. ``default`` is in SI;
    ``required=False`` with no default means optional and absent unless given.
    ``kind``:

    - "quantity" (the default), "integer": one value;
    - "pair": two quantities (a range), "points": a list of [x, y] pairs;
    - "choice": one of ``choices`` (text); "text": free text (``max_length``);
    - "table": an array of tables (``[[calc.inputs.NAME]]``), one per row, each with the
      ``columns`` (at least ``min_rows``, at most ``max_rows`` rows); the calc gets a tuple
      of rows, each a dict of SI values (text for text columns), absent optional columns
      left out;
    - "file": a data file in the job's folder (one of ``formats``, by suffix); the calc
      gets a :class:`DataFile`, read-only; the file is hashed into the cache key and
      embedded in the package, so ``reportgen verify`` recomputes from it;
    - "criterion": the name of a criterion in the criteria library
      (:mod:`reportgen.calc.criteria`), checked when the job is loaded (an unknown name is
      refused with the nearest names); the calc gets the name as registered. With
      ``columns`` the job may instead give its own curve as an array of tables, read like
      a "table" input (the calc gets the tuple of rows).
    """

    name: str
    symbol: str
    description: str
    dimension: str = "dimensionless"
    default: Any = None
    required: bool = True
    minimum: float | None = None
    maximum: float | None = None
    positive: bool = False  # strictly greater than zero
    kind: Kind = "quantity"
    default_note: str = ""  # why the default is what it is (shown as an assumption)
    choices: tuple[str, ...] = ()
    max_length: int = 200
    columns: tuple[Column, ...] = ()
    min_rows: int = 1
    max_rows: int = 500
    formats: tuple[str, ...] = ()
    max_bytes: int = 64 * 1024 * 1024
    #: a quantity input may be given as a range or with a tolerance (an operating
    #: envelope); False where one value is all the method can take (a count, a code)
    rangeable: bool = True


@dataclass(frozen=True, kw_only=True, slots=True)
class DataFile:
    """A data file a job names (a "file" input), as the calc sees it: read-only bytes.

    ``name`` is the path as the job wrote it, relative to the job's folder; ``data`` are
    the bytes read once when the job was loaded, exactly those the package embeds and
    ``sha256`` hashes (read them through :meth:`open` or :meth:`read_bytes`, never from
    the folder again: the file there may have changed since).
    """

    name: str
    sha256: str
    size: int
    data: bytes = field(repr=False, compare=False)

    def open(self) -> IO[bytes]:
        return io.BytesIO(self.data)

    def read_bytes(self) -> bytes:
        return self.data

    @property
    def suffix(self) -> str:
        return PurePosixPath(self.name).suffix.lower()

    @classmethod
    def of(cls, name: str, data: bytes) -> DataFile:
        return cls(name=name, sha256=hashlib.sha256(data).hexdigest(), size=len(data),
                   data=data)


@dataclass(frozen=True, kw_only=True, slots=True)
class VerificationCase:
    """A published check value that a plugin's own test suite exercises."""

    id: str
    description: str
    source: str
    status: str  # e.g. "formula_confirmed_example_invented", "from_memory"
