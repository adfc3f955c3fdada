"""The data behind the block-foundation figures: amplitude against running speed with the
separation band, and the numbers a sketch of the block needs. Arrays only, no drawing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

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
