"""The block-foundation figures: amplitude against running speed with the separation band,
and the block with its centres of gravity and equivalent radii (data, then the Figure blocks).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from reportgen import Band, Figure, Marker, Panel, Series
from reportgen.units import axis_unit, display_units, format_number

from .method import DEFAULT_FREQUENCY_SEPARATION, FoundationAnalysis, separation_band

#: How far past the running speed and the highest natural frequency a default sweep runs.
_SWEEP_MARGIN = 1.5


@dataclass(frozen=True, slots=True, kw_only=True)
class ResponseCurves:
    """Zero-to-peak amplitudes (m) at each running speed (Hz) of ``frequency``."""

    frequency: np.ndarray
    vertical_amplitude: np.ndarray
    horizontal_amplitude_top: np.ndarray
    horizontal_amplitude_at_force: np.ndarray
    running_speed: float
    band: tuple[float, float]
    vertical_natural_frequency: float
    coupled_frequencies: tuple[float, float]


@dataclass(frozen=True, slots=True, kw_only=True)
class BlockSketch:
    """Dimensions (m) and points (x, y, z from the centre of the base) for a sketch; a
    circular plinth has length = width = its diameter."""

    circular: bool
    length: float
    width: float
    height: float
    block_cg: tuple[float, float, float]
    machine_cg: tuple[float, float, float]
    combined_cg: tuple[float, float, float]
    force_height: float
    shaft_axis: str
    radius_translation: float
    radius_rocking_x: float
    radius_rocking_y: float
    radius_torsion: float


def response_curves(analysis: FoundationAnalysis, *, frequency: np.ndarray | None = None,
                    points: int = 401,
                    band: float = DEFAULT_FREQUENCY_SEPARATION) -> ResponseCurves:
    """Vertical and coupled amplitudes over a speed sweep, by default from rest to 1.5 times
    the larger of the running speed and the highest natural frequency in the plot."""
    plane = analysis.excited_plane
    if frequency is None:
        top = _SWEEP_MARGIN * max(analysis.excitation.running_speed,
                                  analysis.vertical_natural_frequency, plane.frequency_2)
        frequency = np.linspace(0.0, top, points)
    f = np.asarray(frequency, dtype=float)
    vz = analysis.vertical_sweep(f)
    co = analysis.coupled_sweep(f)
    return ResponseCurves(
        frequency=f, vertical_amplitude=np.asarray(vz.amplitude),
        horizontal_amplitude_top=np.asarray(co.horizontal_amplitude(analysis.block_height)),
        horizontal_amplitude_at_force=np.asarray(co.horizontal_amplitude(analysis.force_height)),
        running_speed=analysis.excitation.running_speed,
        band=separation_band(analysis.excitation.running_speed, band),
        vertical_natural_frequency=analysis.vertical_natural_frequency,
        coupled_frequencies=(plane.frequency_1, plane.frequency_2))


def block_sketch(analysis: FoundationAnalysis) -> BlockSketch:
    """The block with its centres of gravity, the force's height and the equivalent radii."""
    p, r = analysis.mass_properties, analysis.radii
    return BlockSketch(
        circular=analysis.circular_base, length=analysis.block_length,
        width=analysis.block_width, height=analysis.block_height,
        block_cg=(0.0, 0.0, analysis.block_height / 2.0), machine_cg=analysis.machine_cg,
        combined_cg=(p.x, p.y, p.z), force_height=analysis.force_height,
        shaft_axis=analysis.shaft_axis, radius_translation=r.translation,
        radius_rocking_x=r.rocking_x, radius_rocking_y=r.rocking_y, radius_torsion=r.torsion)


# ------------------------------------------------------------------ the drawings

def _v(values) -> tuple[float, ...]:
    return tuple(float(v) for v in values)


def response_chart(c: ResponseCurves, band: float, display: str = "SI") -> Figure:
    """Amplitude against running speed, vertical and coupled, with the separation band; the
    amplitudes in the package's length unit stepped to their size (µm or mil, as a table
    prints them: a few micrometres read badly as 0.004 mm)."""
    top = max(float(np.max(a, initial=0.0)) for a in (
        c.vertical_amplitude, c.horizontal_amplitude_top, c.horizontal_amplitude_at_force))
    um, unit = display_units(display).unit(top, "length")
    f = c.frequency
    run = Marker(x=c.running_speed, label=f"running speed {format_number(c.running_speed, 4)}"
                                          " Hz")
    pct = format_number(100 * band, 3)
    bands = (Band(x_low=c.band[0], x_high=c.band[1], label=f"±{pct} % of the running speed"),)
    vertical = Panel(
        series=(Series(x=_v(f), y=_v(c.vertical_amplitude * um), label="vertical",
                       emphasis=True),),
        y_label=f"Vertical amplitude [{unit}]", bands=bands,
        markers=(run, Marker(x=c.vertical_natural_frequency, label="f_z")))
    coupled = Panel(
        series=(Series(x=_v(f), y=_v(c.horizontal_amplitude_top * um),
                       label="horizontal, top of block", emphasis=True),
                Series(x=_v(f), y=_v(c.horizontal_amplitude_at_force * um),
                       label="horizontal, at the force's height", style="dashed")),
        y_label=f"Horizontal amplitude [{unit}]", bands=bands,
        markers=(run, Marker(x=c.coupled_frequencies[0], label="f_1"),
                 Marker(x=c.coupled_frequencies[1], label="f_2")))
    return Figure(
        key="foundation-response",
        caption="Zero-to-peak amplitude against running speed under the machine's force"
                " (the force follows the speed for an unbalance, constant if stated), with"
                " the separation band around the running speed and the natural frequencies",
        alt="Two panels of amplitude against speed, vertical and horizontal, each with a"
            " resonance peak and the running speed marked",
        x_label="Running speed [Hz]", x_range=(0.0, float(f[-1])), panels=(vertical, coupled))


def block_figure(sk: BlockSketch, display: str = "SI") -> Figure:
    """The block in elevation (x, z) and in plan (x, y) with the equivalent circles, in the
    package's length unit."""
    s, u = axis_unit(display, "length")

    def ln(value: float) -> str:
        return f"{format_number(value * s, 3)} {u}"

    half_l, half_b = sk.length / 2.0 * s, sk.width / 2.0 * s
    elev = (Series(x=(-half_l, half_l, half_l, -half_l, -half_l),
                   y=(0.0, 0.0, sk.height * s, sk.height * s, 0.0), label="block",
                   emphasis=True),
            Series(x=(sk.machine_cg[0] * s,), y=(sk.machine_cg[2] * s,), style="points",
                   label="machine's centre of gravity"),
            Series(x=(sk.combined_cg[0] * s,), y=(sk.combined_cg[2] * s,), style="points",
                   label="combined centre of gravity"),
            Series(x=(-half_l, half_l), y=(sk.force_height * s, sk.force_height * s),
                   style="dotted", label=f"force height {ln(sk.force_height)}"))
    t = [2 * math.pi * i / 72 for i in range(73)]
    circles = [Series(x=(-half_l, half_l, half_l, -half_l, -half_l),
                      y=(-half_b, -half_b, half_b, half_b, -half_b), label="base",
                      emphasis=True)]
    for r, name, style in ((sk.radius_translation, "r_z (vertical, horizontal)", "dashed"),
                           (sk.radius_torsion, "r_t (torsion)", "dotted")):
        circles.append(Series(x=_v(r * s * math.cos(a) for a in t),
                              y=_v(r * s * math.sin(a) for a in t),
                              label=f"{name} = {ln(r)}", style=style))
    return Figure(
        key="foundation-block",
        caption="The block in elevation and in plan: centres of gravity, the height of the"
                " force, and the equivalent circles of the base (rocking radii: about x"
                f" {ln(sk.radius_rocking_x)}, about y {ln(sk.radius_rocking_y)}).",
        alt="Elevation of the block with the centres of gravity, and plan of the base with"
            " its equivalent circles",
        x_label=f"x, along the block's length [{u}]",
        panels=(Panel(series=elev, y_label=f"z, height above the base [{u}]",
                      markers=(Marker(x=0.0, label="centre of the base"),)),
                Panel(series=tuple(circles), y_label=f"y, across the block [{u}]")))
