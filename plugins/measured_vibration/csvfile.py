"""CSV records: a header row naming the columns (units in brackets), a regular time column or a
sample rate, read in blocks with every line checked as it is met.
"""

from __future__ import annotations

import itertools
import re
from dataclasses import replace
from pathlib import Path

import numpy as np
from reportgen_plugins.vibration_criteria.errors import DataFileError

from reportgen.units import UnitProblem, parse_quantity

from .record import Record, check_finite, one_quantity, select_channels, unit_scale

__all__ = ["csv_chunks", "open_csv"]

_TIME_NAMES = ("time", "t")
_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
# A sampled time column printed with a few digits is not exactly regular: a step may differ
# from the mean step by the rounding of two values. 10 % of a step still catches a dropped,
# repeated or reordered sample.
_STEP_TOLERANCE = 0.1
_SNAP = 1e-5


def _csv_header(path: Path, file: str) -> tuple[int, str, list[str]]:
    try:
        with path.open("r", encoding="utf-8-sig", newline="") as fh:
            for number, line in enumerate(fh, start=1):
                text = line.strip()
                if text and not text.startswith("#"):
                    delimiter = next((d for d in (",", ";", "\t") if d in text), ",")
                    return number, delimiter, [c.strip() for c in text.split(delimiter)]
    except (OSError, UnicodeDecodeError) as exc:
        raise DataFileError(file, f"cannot be read as text ({exc})") from None
    raise DataFileError(file, "the file is empty: expected a header row naming the columns")


def open_csv(path, file, channels, time_column, sample_rate, quantity, unit) -> Record:
    header_line, delimiter, cells = _csv_header(path, file)
    names, units = [], []
    for cell in cells:
        m = _HEADER.match(cell)
        if m is None or not m["name"]:
            raise DataFileError(file, f"cannot read the header cell {cell!r}: expected a name"
                                      " with an optional unit in brackets, e.g. 'z [mm/s]'",
                                row=header_line)
        names.append(m["name"])
        units.append((m["unit"] or "").strip())
    lowered = [n.lower() for n in names]
    if len(set(lowered)) != len(lowered):
        raise DataFileError(file, "two columns have the same name", row=header_line)
    if time_column is not None:
        if time_column.lower() not in lowered:
            raise DataFileError(file, f"no time column named {time_column!r}; the file has"
                                      f" {', '.join(repr(n) for n in names)}",
                                column=time_column)
        t_index: int | None = lowered.index(time_column.lower())
    else:
        t_index = next((lowered.index(t) for t in _TIME_NAMES if t in lowered), None)
    if t_index is None and sample_rate is None:
        raise DataFileError(file, "no time column (named 'time' or 't') and no sample_rate:"
                                  " give one of them", column="sample_rate")
    time_scale = 1.0
    if t_index is not None and units[t_index]:
        try:
            time_scale = parse_quantity(f"1 {units[t_index]}", "time")
        except UnitProblem:
            raise DataFileError(file, f"the time unit {units[t_index]!r} is not a time",
                                column=cells[t_index]) from None
    others = [i for i in range(len(names)) if i != t_index]
    picked = [others[i] for i in select_channels(file, [names[i] for i in others], channels)]
    if not picked:
        raise DataFileError(file, "the file has no data column beside the time column")
    per_channel = []
    for i in picked:
        if units[i]:
            if unit is not None:
                given = unit_scale(file, unit, quantity, "unit")
                head = unit_scale(file, units[i], quantity, cells[i])
                if abs(given[1] - head[1]) > 1e-12 * head[1] or given[0] != head[0]:
                    raise DataFileError(file, f"the header gives the unit {units[i]!r} but the"
                                              f" calc gives unit = {unit!r}", column=cells[i])
            q, f = unit_scale(file, units[i], quantity, cells[i])
        elif unit is not None:
            q, f = unit_scale(file, unit, quantity, "unit")
        else:
            raise DataFileError(file, "the column has no unit in its header (e.g. 'z [mm/s]'):"
                                      " give the unit (and quantity) in the calc",
                                column=cells[i])
        per_channel.append((cells[i], q, f))
    record = Record(
        file=file, path=path, format="csv", channels=tuple(names[i] for i in picked),
        quantity=one_quantity(file, per_channel), sample_rate=sample_rate or 0.0,
        scale=tuple(f for _, _, f in per_channel), n_samples=None, columns=tuple(picked),
        time_column=t_index, time_scale=time_scale, delimiter=delimiter,
        header_line=header_line, header=tuple(cells),
    )
    if t_index is None:
        return record
    # The sample rate comes from the time column: read the first rows once.
    start, step = _csv_time_base(record)
    if sample_rate is not None and abs(sample_rate * step - 1.0) > 1e-3:
        raise DataFileError(file, f"the time column steps by {step:.6g} s ({1 / step:.6g}"
                                  f" samples/s), but sample_rate = {sample_rate:g} Hz",
                            column=cells[t_index])
    rate = 1.0 / step
    if abs(rate - round(rate)) <= _SNAP * rate:
        # time stamps printed with few digits blur the mean step; a rate within 10 ppm of a
        # whole number of samples per second is that number (0.9 s over a day)
        rate = float(round(rate))
    return replace(record, sample_rate=rate, start_time=start)


def _csv_time_base(record: Record) -> tuple[float, float]:
    """(time of the first sample, mean step) from the first rows of the time column."""
    for _, _, times, numbers in _csv_blocks(record, 1 << 16, with_time=True):
        if times.size < 2:
            break
        # The mean step over the block: printed time stamps make single steps uneven, and a
        # gap or a step back shows in the checks against it.
        mean = float((times[-1] - times[0]) / (times.size - 1))
        _check_times(record, times, numbers, 0, float(times[0]),
                     mean if mean > 0 else float(np.max(np.abs(np.diff(times)))) or 1.0, None)
        return float(times[0]), float((times[-1] - times[0]) / (times.size - 1))
    raise DataFileError(record.file, "fewer than two samples: cannot tell the sample rate",
                        column=record.header[record.time_column or 0])


def _csv_blocks(record: Record, chunk: int, *, with_time: bool):
    """Yield (first data line, values, times, line numbers) per block of ``chunk`` rows."""
    cols = list(record.columns) + ([record.time_column] if with_time else [])
    line_no = record.header_line
    blank_line: int | None = None  # blank lines may only end the file
    try:
        fh = record.path.open("r", encoding="utf-8-sig", newline="")
    except OSError as exc:
        raise DataFileError(record.file, f"cannot be read ({exc})") from None
    with fh:
        for _ in range(record.header_line):
            next(fh)
        while True:
            raw = list(itertools.islice(fh, chunk))
            if not raw:
                return
            first = line_no + 1
            line_no += len(raw)
            keep = []
            for i, text in enumerate(raw):
                if text.strip():
                    if blank_line is not None:
                        raise DataFileError(record.file, "an empty row inside the data",
                                            row=blank_line)
                    keep.append(i)
                elif blank_line is None:
                    blank_line = first + i
            if not keep:
                continue
            lines = raw if len(keep) == len(raw) else [raw[i] for i in keep]
            numbers = first + np.asarray(keep)
            values = _parse_rows(record, lines, numbers, cols)
            check_finite(record, values[:, :len(record.columns)], 0, 0, lines=numbers)
            times = values[:, -1] * record.time_scale if with_time else None
            yield int(numbers[0]), values[:, :len(record.columns)], times, numbers


def _parse_rows(record: Record, lines: list[str], numbers: np.ndarray, cols: list[int]):
    try:
        return np.loadtxt(lines, delimiter=record.delimiter, usecols=cols, ndmin=2,
                          dtype=np.float64, comments=None)
    except ValueError:
        pass
    # The fast parser only says that something failed: find the line and column.
    header = record.header
    for text, number in zip(lines, numbers, strict=True):
        cells = text.rstrip("\r\n").split(record.delimiter)
        for c in cols:
            if c >= len(cells):
                raise DataFileError(record.file, f"the row has {len(cells)} cells, the header"
                                                 f" {len(header)}", row=int(number))
            cell = cells[c].strip()
            if not cell:
                raise DataFileError(record.file, "an empty sample", column=header[c],
                                    row=int(number))
            try:
                float(cell)
            except ValueError:
                raise DataFileError(record.file, f"cannot read {cell!r} as a number",
                                    column=header[c], row=int(number)) from None
    raise DataFileError(record.file, "the rows cannot be read as numbers")


def csv_chunks(record: Record, chunk: int, step: float | None = None):
    with_time = record.time_column is not None
    step = step if step is not None else (1.0 / record.sample_rate if record.sample_rate else 1)
    index = 0
    t0 = record.start_time
    previous: tuple[float, int] | None = None
    for _, values, times, numbers in _csv_blocks(record, chunk, with_time=with_time):
        if with_time:
            step = _check_times(record, times, numbers, index, t0, step, previous)
            previous = (float(times[-1]), int(numbers[-1]))
        scaled = values * np.asarray(record.scale)
        yield index, scaled
        index += values.shape[0]


def _check_times(record, times, numbers, index, t0, step, previous) -> float:
    """Check a block of the time column; returns the refined mean step."""
    name = record.header[record.time_column]
    full = times if previous is None else np.concatenate(([previous[0]], times))
    lines = numbers if previous is None else np.concatenate(([previous[1]], numbers))
    diffs = np.diff(full)
    backwards = np.flatnonzero(diffs <= 0.0)
    if backwards.size:
        i = backwards[0]
        raise DataFileError(record.file, f"the time does not increase ({full[i]:.9g} s, then"
                                         f" {full[i + 1]:.9g} s)", column=name,
                            row=int(lines[i + 1]))
    odd = np.flatnonzero(np.abs(diffs - step) > _STEP_TOLERANCE * step)
    if odd.size:
        i = odd[0]
        usual = float(np.median(diffs))
        raise DataFileError(record.file, f"irregular sampling: the time steps by"
                                         f" {diffs[i]:.6g} s here, {usual:.6g} s elsewhere"
                                         f" ({1 / usual:.6g} samples/s)", column=name,
                            row=int(lines[i + 1]))
    # Against the grid t0 + i·step too, so that a slow drift cannot pass step by step.
    last = index + times.size - 1
    grid = t0 + (index + np.arange(times.size)) * step
    drift = np.flatnonzero(np.abs(times - grid) > 0.5 * step)
    if drift.size:
        i = drift[0]
        raise DataFileError(record.file, f"irregular sampling: the time {times[i]:.9g} s is"
                                         f" {times[i] - grid[i]:+.3g} s off the regular grid of"
                                         f" {1 / step:.6g} samples/s", column=name,
                            row=int(numbers[i]))
    return (float(times[-1]) - t0) / last if last > 0 else step


# --- WAV and npy -------------------------------------------------------------------------

