"""One-third-octave bands (IEC 61260-1 base-ten system) and the digital band filters.

Owns the band table (exact centres, edges, nominal labels) and the filter design.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import signal

__all__ = [
    "FILTER_ORDER",
    "BandTable",
    "band_filters",
    "band_index",
    "nominal_label",
    "third_octave_bands",
]

#: Order of the Butterworth band-pass prototype (six poles per band): the usual design for
#: ANSI S1.11 "order 3" / IEC 61260-1 class-1 one-third-octave filters.
FILTER_ORDER = 3

# Preferred-number labels (R10 series) of one decade of one-third-octave centres; IEC 61260-1
# labels each exact base-ten centre by these rounded values.
_DECADE_LABELS = (1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0)


@dataclass(frozen=True, slots=True, kw_only=True)
class BandTable:
    """A contiguous run of one-third-octave bands; all arrays are in Hz, one entry per band."""

    index: tuple[int, ...]  # x in f_m = 1000 * 10**(x/10)
    centre: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    nominal: tuple[float, ...]

    def __len__(self) -> int:
        return len(self.index)


def band_index(frequency: float) -> int:
    """Index x of the base-ten band whose exact centre is nearest to ``frequency`` (Hz).

    f_m = 1000 · 10^(x/10) (IEC 61260-1:2014, base-ten, b = 3), so x = round(10 log10(f/1000)).
    A nominal label (12.5, 31.5, 63 …) therefore maps to its exact band.
    """
    if not frequency > 0.0:
        raise ValueError(f"a band frequency must be positive, found {frequency!r}")
    return int(round(10.0 * np.log10(frequency / 1000.0)))


def nominal_label(index: int) -> float:
    """The nominal (preferred-number) centre label of band ``index`` (IEC 61260-1, R10)."""
    decade, step = divmod(index, 10)
    return float(round(_DECADE_LABELS[step] * 10.0 ** (decade + 3), 6))


def third_octave_bands(low: float, high: float) -> BandTable:
    """Bands from the one nearest ``low`` to the one nearest ``high`` (both in Hz).

    Exact centre f_m = 1000 · 10^(x/10) Hz, edges f_1,2 = f_m · 10^(∓1/20)
    (IEC 61260-1:2014 base-ten system; ANSI S1.11-2004 the same).
    """
    first, last = band_index(low), band_index(high)
    if last < first:
        raise ValueError(f"band_high ({high} Hz) is below band_low ({low} Hz)")
    index = np.arange(first, last + 1)
    centre = 1000.0 * 10.0 ** (index / 10.0)
    return BandTable(
        index=tuple(int(i) for i in index),
        centre=centre,
        lower=centre * 10.0 ** -0.05,
        upper=centre * 10.0 ** 0.05,
        nominal=tuple(nominal_label(int(i)) for i in index),
    )


def band_filters(bands: BandTable, sample_rate: float) -> tuple[np.ndarray, ...]:
    """Second-order sections of a digital Butterworth band-pass of order ``FILTER_ORDER`` per band.

    scipy.signal.butter pre-warps the edges, so the digital filter is -3.01 dB exactly at f_1
    and f_2, like the analog prototype |H|² = 1/(1 + Ω^(2N)), Ω = (f² − f_1 f_2)/(f (f_2 − f_1))
    (standard filter theory: low-pass to band-pass by s → (s² + ω_0²)/(s B)).
    """
    return tuple(
        signal.butter(FILTER_ORDER, [lo, hi], btype="bandpass", fs=sample_rate, output="sos")
        for lo, hi in zip(bands.lower, bands.upper, strict=True)
    )
