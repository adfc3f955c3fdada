"""Measured levels against criteria: band spectra against a curve, PPV against guideline values,
and the result keys of the calc (worst channel unsuffixed, each channel suffixed).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from reportgen_plugins.vibration_criteria.library import (
    BAND_VELOCITY,
    PPV,
    Criterion,
    limit_at,
    ratios,
)

from .method import Analysis, ChannelLevels

__all__ = [
    "ChannelAssessment",
    "PpvAssessment",
    "assess_bands",
    "assess_ppv",
    "band_rows",
    "channel_key",
    "result_values",
    "worst_channel",
]


@dataclass(frozen=True, slots=True, kw_only=True)
class ChannelAssessment:
    """A channel's band spectrum against a band-velocity criterion."""

    channel: str
    criterion: str
    criterion_ratio: float  # largest band level / limit at that band; ≤ 1 meets it
    governing_band_frequency: float  # exact centre of that band, Hz
    ratios: np.ndarray  # per band


def assess_bands(analysis: Analysis, criterion: Criterion) -> tuple[ChannelAssessment, ...]:
    """Ratio of each band level to the criterion at the band's exact centre frequency."""
    if criterion.quantity != BAND_VELOCITY:
        raise ValueError(f"criterion {criterion.name!r} is not a one-third-octave velocity"
                         " curve")
    centres = analysis.plan.bands.centre
    out = []
    for ch in analysis.channels:
        r = ratios(criterion, centres, ch.band_levels)
        k = int(np.argmax(r))
        out.append(ChannelAssessment(channel=ch.channel, criterion=criterion.name,
                                     criterion_ratio=float(r[k]),
                                     governing_band_frequency=float(centres[k]), ratios=r))
    return tuple(out)


def worst_channel(analysis: Analysis,
                  assessments: tuple[ChannelAssessment, ...] | None = None) -> int:
    """Index of the worst channel: by criterion ratio, or without a criterion by the largest
    band level (the first of equals)."""
    if assessments:
        return int(np.argmax([a.criterion_ratio for a in assessments]))
    return int(np.argmax([c.max_band_velocity for c in analysis.channels]))


def band_rows(analysis: Analysis, channel: int) -> list[dict[str, float]]:
    """The band levels of one channel as results.json rows: exact centre (Hz), nominal label,
    rms velocity (m/s)."""
    bands = analysis.plan.bands
    levels = analysis.channels[channel].band_levels
    return [{"frequency": float(f), "nominal": float(n), "value": float(v)}
            for f, n, v in zip(bands.centre, bands.nominal, levels, strict=True)]


def _values(ch: ChannelLevels, a: ChannelAssessment | None) -> dict[str, float]:
    out = {
        "overall_velocity_rms": ch.overall_velocity_rms,
        "peak_velocity": ch.peak_velocity,
        "max_band_velocity": ch.max_band_velocity,
        "max_band_frequency": ch.max_band_frequency,
    }
    if a is not None:
        out["criterion_ratio"] = a.criterion_ratio
        out["governing_band_frequency"] = a.governing_band_frequency
    return out


def result_values(analysis: Analysis, criterion: Criterion | None = None) -> dict[str, object]:
    """The calc's results (SI): the keys as named for one channel; with several, each key again
    with the suffix ``_<channel>`` and the unsuffixed keys from the worst channel.
    ``band_levels`` (and ``band_levels_<channel>``) are lists of band rows."""
    assessments = assess_bands(analysis, criterion) if criterion is not None else None
    worst = worst_channel(analysis, assessments)
    out: dict[str, object] = dict(_values(analysis.channels[worst],
                                          assessments[worst] if assessments else None))
    out["band_levels"] = band_rows(analysis, worst)
    if len(analysis.channels) > 1:
        for i, ch in enumerate(analysis.channels):
            suffix = channel_key(ch.channel)
            for key, value in _values(ch, assessments[i] if assessments else None).items():
                out[f"{key}_{suffix}"] = value
            out[f"band_levels_{suffix}"] = band_rows(analysis, i)
    return out


def channel_key(channel: str) -> str:
    """A channel name as a result-key suffix: letters, digits and '_' ("z axis" → "z_axis")."""
    return re.sub(r"\W+", "_", channel).strip("_") or "channel"


@dataclass(frozen=True, slots=True, kw_only=True)
class PpvAssessment:
    """A channel's peak particle velocity against a frequency-dependent guideline value."""

    channel: str
    criterion: str
    ppv: float  # m/s
    frequency: float  # Hz, dominant frequency of the peak (NaN when not determined)
    limit: float  # m/s
    ratio: float  # ppv / limit; ≤ 1 meets the guideline
    frequency_determined: bool
    below_range: bool  # the frequency lies below the lowest frequency the source gives


def assess_ppv(analysis: Analysis, criterion: Criterion) -> tuple[PpvAssessment, ...]:
    """PPV of each channel against the guideline value at its dominant frequency.

    When the frequency of the peak's half cycle cannot be found (the peak in the first or last
    half cycle of the record), the lowest guideline value of the curve is used: the most
    cautious reading.
    """
    if criterion.quantity != PPV:
        raise ValueError(f"criterion {criterion.name!r} is not a peak-particle-velocity"
                         " guideline")
    out = []
    lowest = min(criterion.values)
    for ch in analysis.channels:
        f = ch.peak_frequency
        known = math.isfinite(f)
        limit = float(limit_at(criterion, f)) if known else lowest
        out.append(PpvAssessment(
            channel=ch.channel, criterion=criterion.name, ppv=ch.peak_velocity, frequency=f,
            limit=limit, ratio=ch.peak_velocity / limit, frequency_determined=known,
            below_range=known and f < criterion.valid_from,
        ))
    return tuple(out)
