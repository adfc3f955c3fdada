"""Streaming readers for measured vibration records: CSV, WAV and NumPy .npy.

Each reader checks a file once (open_record) and then yields SI float64 chunks (iter_chunks).
"""

from __future__ import annotations

import math
import os
import re
import warnings
from collections.abc import Iterator, Sequence
from pathlib import Path

import numpy as np
from reportgen_plugins.vibration_criteria.errors import DataFileError

from .csvfile import csv_chunks, open_csv
from .record import (
    DEFAULT_CHUNK,
    QUANTITIES,
    Record,
    check_finite,
    select_channels,
    unit_scale,
)

__all__ = ["DEFAULT_CHUNK", "QUANTITIES", "Record", "iter_chunks", "open_record", "unit_scale"]


def open_record(
    path: str | os.PathLike[str],
    *,
    name: str | None = None,
    channels: Sequence[str] | None = None,
    time_column: str | None = None,
    sample_rate: float | None = None,
    quantity: str | None = None,
    unit: str | None = None,
    calibration: str | None = None,
) -> Record:
    """Check a data file and describe it; raises DataFileError naming file, column or field.

    CSV: a header row names the columns, each optionally with a unit in brackets
    (``z [mm/s]``); ``time_column`` (default ``time`` or ``t``) or ``sample_rate``.
    WAV: channels ``ch1``, ``ch2``…; ``calibration`` is the value of full scale ("10 mm/s").
    .npy: 1-D or 2-D (samples × channels) array; ``sample_rate``, ``quantity``/``unit``.
    """
    path = Path(path)
    file = name or path.name
    if quantity is not None and quantity not in QUANTITIES:
        raise DataFileError(file, f"quantity must be 'velocity' or 'acceleration', found"
                                  f" {quantity!r}", column="quantity")
    if sample_rate is not None and not (math.isfinite(sample_rate) and sample_rate > 0):
        raise DataFileError(file, f"sample_rate must be a positive frequency, found"
                                  f" {sample_rate!r} Hz", column="sample_rate")
    if not path.is_file():
        raise DataFileError(file, "the data file does not exist or is not a file")
    if not os.access(path, os.R_OK):
        raise DataFileError(file, "the data file cannot be read (permission denied)")
    suffix = path.suffix.lower()
    if suffix in (".csv", ".txt"):
        return open_csv(path, file, channels, time_column, sample_rate, quantity, unit)
    if suffix == ".wav":
        return _open_wav(path, file, channels, quantity, calibration)
    if suffix == ".npy":
        return _open_npy(path, file, channels, sample_rate, quantity, unit)
    raise DataFileError(file, f"unknown data file type {suffix or '(none)'!r}: expected .csv,"
                              " .wav or .npy")


def iter_chunks(record: Record, chunk: int = DEFAULT_CHUNK) -> Iterator[tuple[int, np.ndarray]]:
    """Yield (index of the first sample, samples × channels float64 in SI) for the record.

    Memory stays bounded by ``chunk``; bad samples (NaN, empty, irregular time) raise
    DataFileError naming the line and column as they are met.
    """
    if record.format == "csv":
        yield from csv_chunks(record, chunk)
        return
    data, _ = _open_array(record)
    scale = np.asarray(record.scale)
    columns = list(record.columns)
    for start, raw in _array_blocks(record, data, chunk):
        block = np.asarray(raw[:, columns], dtype=np.float64)
        if record.offset:
            block -= record.offset
        block *= scale
        check_finite(record, block, start, 0)
        yield start, block


def _array_blocks(record: Record, data: np.ndarray, chunk: int):
    """Row blocks of a mapped array, read with plain file reads where the rows lie contiguous
    in the file: pages of a mapping stay resident and would count against the memory bound."""
    offset = getattr(data, "offset", None)
    base = getattr(data, "filename", None)
    contiguous = data.flags.c_contiguous or data.shape[1] == 1
    if offset is None or base is None or not contiguous:
        for start in range(0, data.shape[0], chunk):
            yield start, data[start:start + chunk]
        return
    n, width, dtype = data.shape[0], data.shape[1], data.dtype
    del data
    with open(record.path, "rb") as fh:
        for start in range(0, n, chunk):
            rows = min(chunk, n - start)
            fh.seek(offset + start * width * dtype.itemsize)
            raw = np.fromfile(fh, dtype=dtype, count=rows * width)
            if raw.size != rows * width:
                raise DataFileError(record.file, f"the file ends early, at sample {start}")
            yield start, raw.reshape(rows, width)


# --- WAV and npy -------------------------------------------------------------------------


def _open_array(record: Record) -> tuple[np.ndarray, float]:
    """The samples as a (samples × channels) array, memory-mapped where the format allows."""
    try:
        if record.format == "npy":
            data = np.load(record.path, mmap_mode="r", allow_pickle=False)
            rate = record.sample_rate
        else:
            from scipy.io import wavfile

            with warnings.catch_warnings():  # chunks other than the samples (LIST…) are fine
                warnings.simplefilter("ignore", wavfile.WavFileWarning)
                try:
                    rate, data = wavfile.read(record.path, mmap=True)
                except ValueError:  # 24-bit samples cannot be mapped: read them whole
                    rate, data = wavfile.read(record.path)
    except (OSError, ValueError, EOFError) as exc:
        raise DataFileError(record.file, f"cannot be read as {record.format.upper()} ({exc})"
                            ) from None
    if data.ndim == 1:
        data = data[:, None]
    return data, float(rate)


def _open_npy(path, file, channels, sample_rate, quantity, unit) -> Record:
    if sample_rate is None:
        raise DataFileError(file, "a .npy record needs the sample_rate", column="sample_rate")
    if unit is None:
        raise DataFileError(file, "a .npy record needs the unit of its values (and quantity)",
                            column="unit")
    probe = Record(file=file, path=path, format="npy", channels=(), quantity="velocity",
                   sample_rate=sample_rate, scale=(), n_samples=None)
    data, _ = _open_array(probe)
    if data.ndim != 2 or data.dtype.kind not in "fiu":
        raise DataFileError(file, f"expected a 1-D or 2-D numeric array (samples × channels),"
                                  f" found {np.load(path, mmap_mode='r').ndim}-D {data.dtype}")
    available = [f"ch{i + 1}" for i in range(data.shape[1])]
    picked = select_channels(file, available, channels)
    q, factor = unit_scale(file, unit, quantity, "unit")
    return Record(file=file, path=path, format="npy", channels=tuple(available[i] for i in picked),
                  quantity=q, sample_rate=float(sample_rate), scale=(factor,) * len(picked),
                  n_samples=int(data.shape[0]), columns=tuple(picked))


def _open_wav(path, file, channels, quantity, calibration) -> Record:
    if calibration is None:
        raise DataFileError(file, "a WAV record needs its calibration: the value of full scale,"
                                  " e.g. '10 mm/s' or '9.81 m/s**2'", column="calibration")
    probe = Record(file=file, path=path, format="wav", channels=(), quantity="velocity",
                   sample_rate=0.0, scale=(), n_samples=None)
    data, rate = _open_array(probe)
    kind, size = data.dtype.kind, data.dtype.itemsize
    if kind == "f":
        full_scale, offset = 1.0, 0.0
    elif kind == "u" and size == 1:
        full_scale, offset = 128.0, 128.0
    elif kind == "i":
        full_scale, offset = float(2 ** (8 * size - 1)), 0.0
    else:
        raise DataFileError(file, f"unsupported WAV sample type {data.dtype}")
    text = str(calibration).strip()
    m = re.match(r"^\s*([-+0-9.eE]+)\s*(.+)$", text)
    if m is None:
        raise DataFileError(file, f"cannot read the calibration {text!r}: expected a value and"
                                  " a unit, e.g. '10 mm/s'", column="calibration")
    q, factor = unit_scale(file, m[2], quantity, "calibration")
    try:
        value = float(m[1]) * factor
    except ValueError:
        raise DataFileError(file, f"cannot read the calibration {text!r}",
                            column="calibration") from None
    if not (math.isfinite(value) and value > 0):
        raise DataFileError(file, "the calibration must be positive", column="calibration")
    available = [f"ch{i + 1}" for i in range(data.shape[1])]
    picked = select_channels(file, available, channels)
    return Record(file=file, path=path, format="wav", channels=tuple(available[i] for i in picked),
                  quantity=q, sample_rate=rate, scale=(value / full_scale,) * len(picked),
                  n_samples=int(data.shape[0]), columns=tuple(picked), offset=offset)
