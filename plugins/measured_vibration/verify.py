"""The independent second method for measured vibration: band levels from FFT spectra summed
over each band with the analog Butterworth weighting; numpy only, never method.py.

Where method.py filters the time signal (digital IIR bank, FIR integration), this route
transforms non-overlapping, lightly tapered segments (Parseval: band energy from lines),
integrates by dividing the acceleration spectrum by (2πf)², and weights each spectral line
by the analog prototype |H|² = 1/(1 + Ω⁶), Ω = (f² − f₁f₂)/(f (f₂ − f₁)), f₁,₂ = f_m·10^(∓1/20).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

__all__ = ["MIN_LINES", "RANGE_DB", "TAPER", "TOLERANCE", "BandCheck", "SpectralLevels",
           "compare", "spectral_levels"]

#: Agreement required per band between the filter bank and this route. Both use the same
#: digital filter response and drift high-pass; what differs is how each weighs the span in
#: time: the filters (and the integrating FIR) carry memory of the samples before the span
#: and lose the response to its last instants, while a tapered segment treats its span as
#: one period. The difference is statistical and shrinks as 1/√(B·T). Measured on tones,
#: white noise and the sample survey (60–600 s, 200–1024 samples/s, velocity and
#: acceleration): ≤ 3.3 % in every band with at least MIN_LINES lines within RANGE_DB of the
#: channel's highest band; 5 % leaves room for other records.
TOLERANCE = 0.05
#: A band is compared only when the segment length T gives it at least this many spectral
#: lines (B·T ≥ 32): with fewer, the routes' different memories of the span's edges set them
#: up to 20 % apart on a 60 s acceleration record (1/√(B·T) statistics, not a defect).
MIN_LINES = 32
_SEGMENT_LINES = 16  # lines in the lowest band that a full-length segment aims at
#: Each segment is tapered by a Tukey window (cosine over 1 % at each end): far less leakage
#: from strong tones into quiet bands than a plain cut, while 98 % of the samples keep
#: weight 1 (a transient counts fully unless it falls in a segment's outer 1 %).
TAPER = 0.05
#: Bands more than this far below the channel's highest band are shown, not compared: there
#: the two routes measure mostly the skirts of stronger neighbours (filter skirts against
#: spectral leakage), not the band's own content.
RANGE_DB = 20.0


def _taper(n: int) -> np.ndarray:
    if n < 3:
        return np.ones(n)
    k = np.arange(n)
    edge = TAPER * (n - 1) / 2.0
    w = np.ones(n)
    rise = k < edge
    w[rise] = 0.5 * (1.0 - np.cos(np.pi * k[rise] / edge))
    fall = k > (n - 1) - edge
    w[fall] = 0.5 * (1.0 - np.cos(np.pi * ((n - 1) - k[fall]) / edge))
    return w


@dataclass(frozen=True, slots=True, kw_only=True)
class SpectralLevels:
    """Band rms velocities (bands × channels, m/s) and the spectral lines behind each band."""

    centres: np.ndarray
    levels: np.ndarray
    overall: np.ndarray  # energetic sum over the bands, per channel
    lines: np.ndarray  # lines per band in the shortest segment (B·T)


def _bands(low: float, high: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    # IEC 61260-1 base-ten bands, written out again here so that this route shares no code
    # with the method: f_m = 1000·10^(x/10), edges f_m·10^(∓1/20).
    x = np.arange(round(10 * np.log10(low / 1000.0)), round(10 * np.log10(high / 1000.0)) + 1)
    centre = 1000.0 * 10.0 ** (x / 10.0)
    return centre, centre * 10.0 ** -0.05, centre * 10.0 ** 0.05


def _weights(f: np.ndarray, f1: np.ndarray, f2: np.ndarray, fs: float) -> np.ndarray:
    """|H(f)|² of the 3rd-order Butterworth band-pass per band (bands × lines), digital by the
    bilinear transform with pre-warped edges: the analog prototype evaluated at the warped
    frequencies f → (fs/π)·tan(πf/fs) (e.g. Oppenheim & Schafer, Discrete-Time Signal
    Processing, §7.1)."""
    warp = fs / np.pi
    f, f1, f2 = warp * np.tan(f / warp), warp * np.tan(f1 / warp), warp * np.tan(f2 / warp)
    with np.errstate(divide="ignore", invalid="ignore"):
        omega = (f[None, :] ** 2 - (f1 * f2)[:, None]) / (f[None, :] * (f2 - f1)[:, None])
        w = 1.0 / (1.0 + omega ** 6)
    w[:, f == 0.0] = 0.0
    return w


def _segment_energy(x: np.ndarray, fs: float, acceleration: bool, f1, f2,
                    floor: float) -> np.ndarray:
    """Σ over the segment of the band-weighted velocity squared, per band × channel."""
    n = x.shape[0]
    w = _taper(n)
    spectrum = np.fft.rfft(x * w[:, None], axis=0)
    f = np.fft.rfftfreq(n, 1.0 / fs)
    # Parseval: Σ (w x)² = (1/n) Σ_k |X_k|²; dividing by mean(w²) restores the segment's energy
    power = np.abs(spectrum) ** 2 / n / np.mean(w * w)
    power[1:] *= 2.0
    if n % 2 == 0:
        power[-1] /= 2.0
    if acceleration:
        # Integration by division by (2πf)², with the drift high-pass that defines the
        # measured velocity (|HP|² = x⁸/(1 + x⁸), x = f/f_c; method.py states the same
        # definition): without it the 1/f² growth of an integrated spectrum would reach the
        # lowest bands through their skirts.
        with np.errstate(divide="ignore", invalid="ignore"):
            x8 = (f / floor) ** 8
            power = power * (x8 / (1.0 + x8) / (2.0 * np.pi * f) ** 2)[:, None]
        power[0] = 0.0
    return _weights(f, f1, f2, fs) @ power


def spectral_levels(
    samples: np.ndarray | Iterable[np.ndarray],
    *,
    sample_rate: float,
    acceleration: bool,
    band_low: float = 1.0,
    band_high: float = 80.0,
    averaging_time: float | None = None,
) -> SpectralLevels:
    """Band rms velocity of ``samples`` (samples × channels SI array, or an iterable of such
    chunks, already cut to the span the method analysed).

    Without an averaging time: tapered segments (TAPER) of about 16/B_low seconds (a power of
    two in samples; the last one up to twice as long) tile the span; band mean square =
    Σ segment band energies / samples. With one: each block of that length is one segment,
    and each band's level is its maximum over the full blocks. Integrated acceleration passes
    the drift high-pass whose corner is a third of the lowest band's lower edge.
    """
    centre, f1, f2 = _bands(band_low, band_high)
    fs = float(sample_rate)
    floor = f1[0] / 3.0
    if averaging_time is None:
        seg = 1 << int(np.ceil(np.log2(_SEGMENT_LINES * fs / (f2[0] - f1[0]))))
    else:
        seg = max(1, int(round(averaging_time * fs)))
    chunks = [samples] if isinstance(samples, np.ndarray) else samples
    buffer = np.zeros((0, 0))
    total = None
    best = best_overall = None
    count = 0
    shortest = None
    for chunk in chunks:
        chunk = np.asarray(chunk, dtype=np.float64)
        if chunk.ndim == 1:
            chunk = chunk[:, None]
        buffer = chunk if buffer.size == 0 else np.concatenate((buffer, chunk))
        # Without averaging, the tail joins the last segment (seg to 2·seg long), so that no
        # short segment leaves a band with too few lines.
        keep = seg if averaging_time is None else 0
        while buffer.shape[0] >= seg + keep:
            e = _segment_energy(buffer[:seg], fs, acceleration, f1, f2, floor)
            total = e if total is None else total + e
            best = e / seg if best is None else np.maximum(best, e / seg)
            block_overall = (e / seg).sum(axis=0)
            best_overall = block_overall if best_overall is None else np.maximum(
                best_overall, block_overall)
            count += seg
            shortest = seg
            buffer = buffer[seg:]
    if buffer.shape[0] and (averaging_time is None or count == 0):
        e = _segment_energy(buffer, fs, acceleration, f1, f2, floor)
        total = e if total is None else total + e
        if best is None:  # shorter than one block: the whole span is the only block
            best = e / buffer.shape[0]
            best_overall = best.sum(axis=0)
        count += buffer.shape[0]
        shortest = min(shortest or buffer.shape[0], buffer.shape[0])
    if total is None or shortest is None:
        raise ValueError("no samples to analyse")
    ms = total / count if averaging_time is None else best
    overall = np.sqrt(ms.sum(axis=0) if averaging_time is None else best_overall)
    return SpectralLevels(centres=centre, levels=np.sqrt(ms), overall=overall,
                          lines=(f2 - f1) * shortest / fs)


@dataclass(frozen=True, slots=True, kw_only=True)
class BandCheck:
    """One band of one channel: the method's level, this route's, and whether they agree."""

    centre: float
    method: float
    second: float
    relative_difference: float
    compared: bool  # False: too few lines, or too far below the highest band
    agrees: bool


def compare(method_levels: np.ndarray, second: SpectralLevels, channel: int = 0,
            tolerance: float = TOLERANCE, min_lines: float = MIN_LINES,
            range_db: float = RANGE_DB) -> tuple[BandCheck, ...]:
    """Band-by-band comparison, |a − b| / max(a, b) ≤ ``tolerance``; bands with fewer than
    ``min_lines`` lines or more than ``range_db`` below the channel's highest band (in the
    second route) are shown, not compared."""
    rows = []
    top = float(np.max(second.levels[:, channel]))
    floor = top * 10.0 ** (-range_db / 20.0)
    for k, centre in enumerate(second.centres):
        a, b = float(method_levels[k]), float(second.levels[k, channel])
        ref = max(abs(a), abs(b))
        rel = abs(a - b) / ref if ref > 0 else 0.0
        compared = bool(second.lines[k] >= min_lines) and b >= floor
        ok = (not compared) or rel <= tolerance
        rows.append(BandCheck(centre=float(centre), method=a, second=b,
                              relative_difference=rel, compared=compared, agrees=ok))
    return tuple(rows)
