"""measured_vibration's wiring: the job's data file read through the readers (once per
build, cached by its hash and settings), the criterion it is assessed against, and the
independent second route for the Verification appendix.
"""

from __future__ import annotations

import math
import tempfile
from collections import OrderedDict
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path, PurePosixPath
from typing import Any

import numpy as np
from reportgen_plugins.vibration_criteria import (
    BAND_VELOCITY,
    PPV,
    Criterion,
    DataFileError,
    UnknownCriterionError,
    lookup,
)

from reportgen import VerificationRow

from . import text
from .method import Analysis, Plan, analyse_record, make_plan
from .readers import Record, iter_chunks, open_record
from .verify import MIN_LINES, TOLERANCE, compare, spectral_levels

__all__ = ["Settings", "analysis_of", "criterion_of", "field_of", "mode_of", "opened",
           "second_method", "settings_of"]

#: The inputs a data-file problem may name as its field (else it is the data file's).
SETTING_FIELDS = ("time_column", "sample_rate", "channels", "quantity", "unit",
                  "calibration", "band_low", "band_high", "averaging_time")
#: The FFT route for a peak reads the record whole: beyond this many samples it is skipped.
PPV_FFT_LIMIT = 1 << 24
PPV_TOLERANCE = 0.02


@dataclass(frozen=True, slots=True)
class Settings:
    sha256: str
    time_column: str | None
    sample_rate: float | None
    channels: tuple[str, ...] | None
    quantity: str | None
    unit: str | None
    calibration: str | None
    band_low: float
    band_high: float
    averaging_time: float | None
    ppv: bool


def settings_of(inputs: Mapping[str, Any], ppv: bool) -> Settings:
    return Settings(sha256=inputs["data_file"].sha256, time_column=inputs.get("time_column"),
                    sample_rate=inputs.get("sample_rate"), channels=inputs.get("channels"),
                    quantity=inputs.get("quantity"), unit=inputs.get("unit"),
                    calibration=inputs.get("calibration"), band_low=inputs["band_low"],
                    band_high=inputs["band_high"], averaging_time=inputs.get("averaging_time"),
                    ppv=ppv)


def field_of(exc: DataFileError) -> str:
    """The job field a data-file problem belongs to."""
    return f"inputs.{exc.column}" if exc.column in SETTING_FIELDS else "inputs.data_file"


@contextmanager
def opened(inputs: Mapping[str, Any]) -> Iterator[Record]:
    """The data file's bytes (those the package embeds) as a checked Record. The readers
    stream from a file, so the bytes are written to a private temporary folder."""
    data = inputs["data_file"]
    with tempfile.TemporaryDirectory(prefix="reportgen-measured-") as tmp:
        path = Path(tmp) / (PurePosixPath(data.name).name or "record")
        path.write_bytes(data.read_bytes())
        yield open_record(path, name=data.name, channels=inputs.get("channels"),
                          time_column=inputs.get("time_column"),
                          sample_rate=inputs.get("sample_rate"),
                          quantity=inputs.get("quantity"), unit=inputs.get("unit"),
                          calibration=inputs.get("calibration"))


def _plan(record: Record, s: Settings) -> Plan:
    return make_plan(sample_rate=record.sample_rate, quantity=record.quantity,
                     channels=record.channels, band_low=s.band_low, band_high=s.band_high,
                     averaging_time=s.averaging_time, file=record.file, ppv_only=s.ppv)


# validate reads the record once; compute (in the same process) takes the analysis from here
_CACHE: OrderedDict[Settings, Analysis] = OrderedDict()
_CACHE_SIZE = 4


def analysis_of(inputs: Mapping[str, Any], ppv: bool) -> Analysis:
    """The analysis of the job's record; raises DataFileError naming file, column, field."""
    s = settings_of(inputs, ppv)
    found = _CACHE.get(s)
    if found is not None:
        _CACHE.move_to_end(s)
        return found
    with opened(inputs) as record:
        result = analyse_record(record, _plan(record, s))
    _CACHE[s] = result
    while len(_CACHE) > _CACHE_SIZE:
        _CACHE.popitem(last=False)
    return result


def custom_curve(rows) -> Criterion:
    return Criterion(name="job curve", title="Criterion curve given in the job",
                     quantity=BAND_VELOCITY, frequencies=tuple(r["frequency"] for r in rows),
                     values=tuple(r["velocity"] for r in rows), interpolation="loglog",
                     source=text.CUSTOM_SOURCE, status="user_supplied")


def criterion_of(given: Any, library: Any = None) -> Criterion | None:
    """The criterion object: the job's own curve (rows), or a library name (the build's
    library, else the built-ins; None when the name is a firm's curve not known here)."""
    if given is None:
        return None
    if not isinstance(given, str):
        return custom_curve(given)
    found = library.get(given) if library is not None else None
    if found is not None:
        return found
    try:
        return lookup(given)
    except UnknownCriterionError:
        return None


def mode_of(inputs: Mapping[str, Any], criterion: Criterion | None) -> str:
    """"ppv" or "bands": as the job says, else from the criterion's quantity."""
    if inputs.get("mode"):
        return str(inputs["mode"])
    return "ppv" if criterion is not None and criterion.quantity == PPV else "bands"


def _span(plan: Plan, analysis: Analysis) -> tuple[int, int]:
    if plan.block:
        return plan.start, plan.start + analysis.blocks * plan.block
    return plan.start, analysis.n_samples - plan.half


def _cut(record: Record, start: int, stop: int) -> Iterator[np.ndarray]:
    for first, x in iter_chunks(record):
        lo, hi = max(start - first, 0), min(stop - first, x.shape[0])
        if hi > lo:
            yield x[lo:hi]


def second_method(inputs: Mapping[str, Any], analysis: Analysis,
                  ppv: bool) -> list[VerificationRow] | None:
    """Band levels by FFT spectra summed over each band (verify.py, numpy only) against the
    filter bank, band by band; for a PPV record the peak by integration in the frequency
    domain over the whole record against the FIR route."""
    plan = analysis.plan
    with opened(inputs) as record:
        if ppv:
            return _ppv_rows(record, analysis)
        start, stop = _span(plan, analysis)
        second = spectral_levels(_cut(record, start, stop), sample_rate=plan.sample_rate,
                                 acceleration=plan.quantity == "acceleration",
                                 band_low=inputs["band_low"], band_high=inputs["band_high"],
                                 averaging_time=inputs.get("averaging_time"))
    rows = []
    nominal = plan.bands.nominal
    how = ("FFT of tapered segments, |X|² summed over each band with the Butterworth weight"
           " (Parseval)" + (", acceleration divided by (2πf)²" if plan.quantity ==
                            "acceleration" else ""))
    for c, ch in enumerate(analysis.channels):
        bands = compare(ch.band_levels, second, channel=c)
        checked = [r for r in bands if r.compared]
        if not checked:
            # too short a record for any band to hold MIN_LINES lines (or every band far
            # below the top): the total over the bands still holds many lines, and the
            # two routes' differing memories of the span's edges largely cancel in it
            total = (float(np.sqrt(sum(r.method**2 for r in bands))),
                     float(np.sqrt(sum(r.second**2 for r in bands))))
            if total[0] > 0.0 or total[1] > 0.0:
                rows.append(VerificationRow(
                    quantity=f"band total (root-sum-square of the {len(bands)} bands),"
                             f" channel {ch.channel}: no single band has {MIN_LINES}"
                             " spectral lines in this record",
                    closed_form=total[0], independent=total[1], tolerance=TOLERANCE,
                    method=how, unit="velocity"))
            continue
        k = max(range(len(checked)), key=lambda i: checked[i].method)
        worst = max(range(len(checked)), key=lambda i: checked[i].relative_difference)
        for label, i in (("highest compared band", k), ("largest difference", worst)):
            r = checked[i]
            band = nominal[int(np.argmin(np.abs(plan.bands.centre - r.centre)))]
            rows.append(VerificationRow(
                quantity=f"band level, channel {ch.channel}, {band:g} Hz ({label} of"
                         f" {len(checked)} compared)",
                closed_form=r.method, independent=r.second, tolerance=TOLERANCE,
                method=how, unit="velocity"))
    return rows or None


def _ppv_rows(record: Record, analysis: Analysis) -> list[VerificationRow] | None:
    n = analysis.n_samples
    if n > PPV_FFT_LIMIT:
        return None
    x = np.concatenate([c for _, c in iter_chunks(record)])
    plan = analysis.plan
    if plan.quantity == "acceleration":
        v = _integrate_fft(x, plan.sample_rate, float(plan.bands.lower[0]) / 3.0)
        v = v[plan.half:n - plan.half]
        how = ("whole-record FFT, divided by j2πf with the same high-pass |HP| = x⁴/√(1 + x⁸),"
               " peak of the inverse transform")
    else:
        v = x
        how = "largest absolute sample read directly from the whole record"
    rows = []
    for c, ch in enumerate(analysis.channels):
        rows.append(VerificationRow(
            quantity=f"peak velocity, channel {ch.channel}", closed_form=ch.peak_velocity,
            independent=float(np.max(np.abs(v[:, c]))), tolerance=PPV_TOLERANCE,
            method=how, unit="velocity"))
    return rows


def _integrate_fft(a: np.ndarray, fs: float, corner: float) -> np.ndarray:
    n = a.shape[0]
    m = 1 << int(math.ceil(math.log2(2 * n)))  # zero-padded: no wrap-around into the span
    spectrum = np.fft.rfft(a, m, axis=0)
    f = np.fft.rfftfreq(m, 1.0 / fs)
    x = (f / corner) ** 4
    with np.errstate(divide="ignore", invalid="ignore"):
        h = x / np.sqrt(1.0 + x * x) / (2j * np.pi * f)
    h[0] = 0.0
    return np.fft.irfft(spectrum * h[:, None], m, axis=0)[:n]
