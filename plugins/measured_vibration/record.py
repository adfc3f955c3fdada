"""What a checked data file holds (Record), and the unit, channel and sample rules that every
format shares."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from reportgen_plugins.vibration_criteria.errors import DataFileError

from reportgen.units import UnitProblem, parse_quantity

__all__ = ["DEFAULT_CHUNK", "QUANTITIES", "Record", "check_finite", "one_quantity",
           "select_channels", "unit_scale"]

QUANTITIES = ("velocity", "acceleration")
DEFAULT_CHUNK = 1 << 16  # samples per chunk: ~1.5 MB for three channels


@dataclass(frozen=True, slots=True, kw_only=True)
class Record:
    """A checked data file: what it holds, and how to read it in chunks."""

    file: str  # the name messages use
    path: Path
    format: str  # "csv", "wav" or "npy"
    channels: tuple[str, ...]
    quantity: str  # "velocity" or "acceleration", the same for every channel
    sample_rate: float  # Hz
    scale: tuple[float, ...]  # SI value of one file unit, per channel
    n_samples: int | None  # None for a CSV file until it has been read through
    start_time: float = 0.0  # s, time of the first sample
    # where the channels are: CSV column indices, WAV/npy channel indices
    columns: tuple[int, ...] = ()
    time_column: int | None = None  # CSV only
    time_scale: float = 1.0
    delimiter: str = ","
    header_line: int = 1  # 1-based line of the CSV header
    offset: float = 0.0  # WAV unsigned 8-bit midpoint, in file units
    header: tuple[str, ...] = ()  # CSV header cells as written

def unit_scale(file: str, unit: str, quantity: str | None, column: str) -> tuple[str, float]:
    """(quantity, SI value of one ``unit``); the unit decides the quantity when none is given."""
    found = []
    for dim in QUANTITIES:
        try:
            found.append((dim, parse_quantity(f"1 {unit}", dim)))
        except UnitProblem:
            continue
    if not found:
        raise DataFileError(file, f"unit {unit!r} is neither a velocity (mm/s, m/s, um/s, in/s)"
                                  " nor an acceleration (m/s**2, g)", column=column)
    dim, factor = found[0]
    if quantity is not None and quantity != dim:
        raise DataFileError(file, f"unit {unit!r} is a {dim}, but quantity = {quantity!r}",
                            column=column)
    return dim, factor


def one_quantity(file: str, per_channel: list[tuple[str, str, float]]) -> str:
    kinds = {q for _, q, _ in per_channel}
    if len(kinds) > 1:
        listing = ", ".join(f"{c!r} is {q}" for c, q, _ in per_channel)
        raise DataFileError(file, f"all channels must hold the same quantity ({listing})")
    return per_channel[0][1]


def select_channels(file: str, available: Sequence[str], wanted: Sequence[str] | None) -> list[int]:
    if wanted is None:
        return list(range(len(available)))
    if isinstance(wanted, str) or not wanted:
        raise DataFileError(file, "channels must be a non-empty list of column names",
                            column="channels")
    lowered = [a.lower() for a in available]
    picked = []
    for w in wanted:
        if w.lower() not in lowered:
            raise DataFileError(file, f"no column named {w!r}; the file has"
                                      f" {', '.join(repr(a) for a in available)}", column=w)
        picked.append(lowered.index(w.lower()))
    if len(set(picked)) != len(picked):
        raise DataFileError(file, "a channel is named twice", column="channels")
    return picked


def check_finite(record: Record, block: np.ndarray, start: int, first_line: int,
                  lines: np.ndarray | None = None) -> None:
    bad = ~np.isfinite(block)
    if bad.any():
        r, c = np.argwhere(bad)[0]
        where = (int(lines[r]) if lines is not None else None)
        what = "sample" if record.format == "csv" else f"sample {start + int(r)}"
        raise DataFileError(record.file, f"{what} is not a number (NaN or infinite)",
                            column=record.channels[int(c)], row=where)


# --- CSV ---------------------------------------------------------------------------------

