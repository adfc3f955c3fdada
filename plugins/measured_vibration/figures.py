"""measured_vibration's figures and table: the band spectrum against the criterion and its
neighbours, the time-history envelope, the narrow-band spectrum and the band-level table."""

from __future__ import annotations

import numpy as np
from reportgen_plugins.vibration_criteria import Criterion, limit_at

from reportgen import Figure, Panel, Series, Table
from reportgen.units import axis_unit, display_units, format_number

from .method import Analysis

_STYLES = ("dashed", "dotted", "dashed", "dotted")


def _velocity_unit(display: str, small: bool) -> tuple[float, str]:
    """Scale from m/s and the label of a velocity axis: the unit the package shows velocities
    in where the job or the firm chose one, else µm/s for quiet floors."""
    du = display_units(display)
    if "velocity" in dict(du.preferred):
        return axis_unit(display, "velocity")
    if du.system == "US":
        return (1.0 / 25.4e-9, "µin/s") if small else (1.0 / 25.4e-3, "in/s")
    return (1e6, "µm/s") if small else (1e3, "mm/s")


def _round(values, scale: float = 1.0) -> tuple[float, ...]:
    return tuple(float(f"{v:.6g}") for v in np.asarray(values, dtype=float) * scale)


def band_spectrum(analysis: Analysis, criterion: Criterion | None,
                  neighbours: tuple[Criterion, ...], units: str) -> Figure:
    bands = analysis.plan.bands
    f = bands.centre
    top = max(float(np.max(c.band_levels)) for c in analysis.channels)
    scale, unit = _velocity_unit(units, top < 1e-3)
    series = []
    for ch in analysis.channels:
        series.append(Series(x=_round(f), y=_round(np.maximum(ch.band_levels, 1e-12), scale),
                             label=f"channel {ch.channel}", style="line"))
    curves = [c for c in neighbours if criterion is None or c is not criterion]
    if criterion is not None:
        series.append(Series(x=_round(f), y=_round(limit_at(criterion, f), scale),
                             label=criterion.name, emphasis=True))
    for i, c in enumerate(curves):
        series.append(Series(x=_round(f), y=_round(limit_at(c, f), scale), label=c.name,
                             style=_STYLES[i % len(_STYLES)]))
    ys = [y for s in series for y in s.y if y > 0]
    lo, hi = min(ys) / 2.0, max(ys) * 2.0
    what = (f"against {criterion.name} and its neighbours" if criterion is not None else
            "against the building criterion curves")
    return Figure(
        key="band-spectrum",
        caption=f"One-third-octave band rms velocity of each channel {what}",
        alt="Log-log chart of one-third-octave band velocity against band centre frequency,"
            " one line per channel, with the criterion curves for comparison",
        x_label="One-third-octave band centre frequency [Hz]", x_scale="log",
        x_range=(float(bands.lower[0]), float(bands.upper[-1])),
        panels=(Panel(series=tuple(series), y_label=f"Band rms velocity [{unit}]",
                      y_scale="log", y_range=(lo, hi)),))


def envelope(analysis: Analysis, units: str) -> Figure:
    """Min/max of each bucket of the velocity signal: at most 2 × 1000 points a channel,
    whatever the record's length, yet every peak is drawn."""
    top = float(max(np.max(np.abs(analysis.envelope_max)), np.max(np.abs(
        analysis.envelope_min))))
    scale, unit = _velocity_unit(units, top < 1e-3)
    buckets = analysis.envelope_max.shape[1]
    t = analysis.envelope_start + analysis.envelope_step * (np.arange(buckets) + 0.5)
    panels = []
    for c, ch in enumerate(analysis.channels):
        panels.append(Panel(series=(
            Series(x=_round(t), y=_round(analysis.envelope_max[c], scale), label="maximum"),
            Series(x=_round(t), y=_round(analysis.envelope_min[c], scale), label="minimum",
                   style="dashed")), y_label=f"{ch.channel} [{unit}]"))
    return Figure(
        key="time-history",
        caption=f"Velocity time history, minimum and maximum of each"
                f" {format_number(analysis.envelope_step, 3)} s interval",
        alt="Envelope of the velocity signal of each channel against time",
        x_label="Time from the first sample [s]", panels=tuple(panels),
        x_range=(0.0, float(t[-1] + analysis.envelope_step / 2)))


def narrow_band(analysis: Analysis, units: str) -> Figure:
    f = analysis.spectrum_frequencies
    keep = f > 0
    amp = analysis.spectrum_amplitude[:, keep]
    scale, unit = _velocity_unit(units, float(np.max(amp)) < 1e-3)
    floor = max(float(np.max(amp)) * 1e-5, 1e-15)
    series = tuple(Series(x=_round(f[keep]), y=_round(np.maximum(amp[c], floor), scale),
                          label=f"channel {ch.channel}")
                   for c, ch in enumerate(analysis.channels))
    df = float(f[1] - f[0]) if f.size > 1 else 0.0
    return Figure(
        key="narrow-band",
        caption=f"Narrow-band velocity spectrum (Welch, Hann window, 50 % overlap,"
                f" {format_number(df, 3)} Hz lines): rms of a tone on a line",
        alt="Log-log chart of the narrow-band velocity spectrum of each channel",
        x_label="Frequency [Hz]", x_scale="log",
        x_range=(float(f[keep][0]), float(f[-1])),
        panels=(Panel(series=series, y_label=f"Velocity, rms per line [{unit}]",
                      y_scale="log"),))


def band_table(analysis: Analysis, criterion: Criterion | None) -> Table:
    bands = analysis.plan.bands
    limits = limit_at(criterion, bands.centre) if criterion is not None else None
    header = ["Band [Hz]", "Exact centre",
              *(f"Channel {c.channel}" for c in analysis.channels)]
    units = ["", "frequency", *("velocity" for _ in analysis.channels)]
    if limits is not None:
        header += [f"Limit ({criterion.name})", "Largest ratio"]
        units += ["velocity", "dimensionless"]
    rows = []
    for k, nominal in enumerate(bands.nominal):
        levels = [float(c.band_levels[k]) for c in analysis.channels]
        row = [format_number(nominal, 3), float(bands.centre[k]), *levels]
        if limits is not None:
            row += [float(limits[k]), max(levels) / float(limits[k])]
        rows.append(tuple(row))
    return Table(title="One-third-octave band rms velocity", header=tuple(header),
                 units=tuple(units), rows=tuple(rows))
