"""The measured-vibration method: integration to velocity, one-third-octave band levels (a
Butterworth filter bank), peak and its frequency, envelope and narrow-band spectrum.

Two routes give the same numbers: analyse_record streams a file in chunks with bounded memory;
analyse_array works on a whole array in memory. Pure functions over SI floats and arrays.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from reportgen_plugins.vibration_criteria.errors import DataFileError
from scipy import signal

from .bands import BandTable, band_filters, third_octave_bands
from .readers import DEFAULT_CHUNK, Record, iter_chunks
from .stream import BandBlocks, Envelope, Integrator, PeakTracker, WelchSums

__all__ = [
    "ENVELOPE_BUCKETS",
    "NYQUIST_FRACTION",
    "PERIODS_REQUIRED",
    "Analysis",
    "ChannelLevels",
    "Plan",
    "analyse_array",
    "analyse_record",
    "check_length",
    "integrator_taps",
    "make_plan",
]

#: The upper edge of the highest band must lie below this fraction of the sample rate, where
#: the digital band filters still follow the analog prototype and aliasing is remote.
NYQUIST_FRACTION = 0.45
#: The analysed part of a record must span at least this many periods of the lowest band's
#: centre frequency (common practice: a band level needs several cycles of its frequency).
PERIODS_REQUIRED = 10.0
#: Buckets of the min/max envelope: at most 2 × 1000 points per channel in a figure.
ENVELOPE_BUCKETS = 1000
#: Band filters are taken as settled when the energy left in the lowest band's impulse
#: response is below this fraction: the band mean square then reads at most ~0.1 % low.
SETTLE_ENERGY = 1e-3
# Drift removal before integration: a Butterworth-magnitude high-pass of this order, at this
# fraction of the lowest band's lower edge (its effect there: 0.5·(1/3)^8 ≈ 8e-5 in amplitude).
_HP_ORDER = 4
_HP_FRACTION = 1.0 / 3.0
# Integrator length in periods of the lowest band's lower edge: with the Tukey taper the
# response stays within 0.04 % of 1/(j2πf) from that edge to 0.45·fs (measured with freqz).
_FIR_PERIODS = 12.0


@dataclass(frozen=True, slots=True, kw_only=True)
class Plan:
    """Everything the analysis fixes before reading a sample."""

    sample_rate: float
    quantity: str
    channels: tuple[str, ...]
    bands: BandTable
    sos: tuple[np.ndarray, ...]
    taps: np.ndarray | None  # the integrating FIR (None for a velocity record)
    half: int  # M: samples lost at each end by integration (0 for velocity)
    settle: int  # samples for the band filters to settle, after the first velocity sample
    block: int | None  # samples per averaging block, None for one rms over the record
    nperseg: int  # Welch segment length
    file: str = ""
    ppv_only: bool = False  # peak values only: no settling, no minimum span of band periods

    @property
    def start(self) -> int:
        """First record sample counted in the band levels."""
        return self.half + self.settle

    def required_samples(self) -> int:
        """The shortest record this plan can analyse (see ``check_length``)."""
        if self.ppv_only:
            return 2 * self.half + 2
        span = math.ceil(PERIODS_REQUIRED * self.sample_rate / float(self.bands.centre[0]))
        return self.start + max(span, self.block or 0) + self.half


def integrator_taps(sample_rate: float, lowest_edge: float) -> np.ndarray:
    """FIR taps (2M + 1, centred) with response HP(f)/(j2πf): integration in the frequency
    domain realised as a convolution.

    HP is a zero-phase Butterworth-magnitude high-pass, |HP| = (f/f_c)^4 / √(1 + (f/f_c)^8),
    f_c = lowest_edge/3, which removes the drift that integration makes of offsets and
    low-frequency noise. Designed by frequency sampling (irfft of the response on a grid 8×
    the length), truncated to 12 periods of ``lowest_edge`` with a Tukey(0.5) taper.
    Method: integration by division by j2πf (e.g. Bendat & Piersol, Random Data, ch. 11).
    """
    fc = lowest_edge * _HP_FRACTION
    half = int(_FIR_PERIODS / lowest_edge * sample_rate / 2.0)
    length = 2 * half + 1
    nfft = 1 << int(math.ceil(math.log2(8 * length)))
    f = np.fft.rfftfreq(nfft, 1.0 / sample_rate)[1:]
    x = (f / fc) ** _HP_ORDER
    response = np.zeros(nfft // 2 + 1, dtype=complex)
    response[1:] = x / np.sqrt(1.0 + x * x) / (2j * np.pi * f)
    h = np.fft.irfft(response, nfft)
    return np.roll(h, half)[:length] * signal.windows.tukey(length, 0.5)


def _settle_samples(sos: np.ndarray, sample_rate: float, centre: float, lower: float,
                    upper: float) -> int:
    """Samples until the impulse response of ``sos`` keeps < SETTLE_ENERGY of its energy."""
    n = int(40.0 / (upper - lower) * sample_rate) + 16  # ≫ the decay time of the band
    impulse = np.zeros(n)
    impulse[0] = 1.0
    energy = signal.sosfilt(sos, impulse) ** 2
    tail = np.cumsum(energy[::-1])[::-1]
    return int(np.argmax(tail < SETTLE_ENERGY * tail[0]))


def make_plan(
    *,
    sample_rate: float,
    quantity: str,
    channels: tuple[str, ...],
    band_low: float = 1.0,
    band_high: float = 80.0,
    averaging_time: float | None = None,
    file: str = "",
    ppv_only: bool = False,
) -> Plan:
    """Check the settings against the sample rate and design the filters.

    ``ppv_only`` (construction vibration, where an event may last a few seconds): the record
    need only outlast the integration; band levels are then indicative (filters unsettled).
    Raises DataFileError naming the field when the upper band edge is not below
    NYQUIST_FRACTION × sample rate, or an averaging time is not positive.
    """
    try:
        bands = third_octave_bands(band_low, band_high)
    except ValueError as exc:
        raise DataFileError(file, str(exc), column="band_high") from None
    top = float(bands.upper[-1])
    if top >= NYQUIST_FRACTION * sample_rate:
        raise DataFileError(
            file, f"the sample rate {sample_rate:g} samples/s is too low for band_high ="
                  f" {band_high:g} Hz: the upper edge of the {bands.nominal[-1]:g} Hz band,"
                  f" {top:.4g} Hz, must lie below {NYQUIST_FRACTION} × the sample rate ="
                  f" {NYQUIST_FRACTION * sample_rate:.4g} Hz (needs at least"
                  f" {top / NYQUIST_FRACTION:.4g} samples/s)", column="band_high")
    block = None
    if averaging_time is not None:
        if not (math.isfinite(averaging_time) and averaging_time > 0):
            raise DataFileError(file, "averaging_time must be a positive time",
                                column="averaging_time")
        block = max(1, int(round(averaging_time * sample_rate)))
    sos = band_filters(bands, sample_rate)
    lower = float(bands.lower[0])
    taps = integrator_taps(sample_rate, lower) if quantity == "acceleration" else None
    half = 0 if taps is None else taps.size // 2
    settle = 0 if ppv_only else _settle_samples(sos[0], sample_rate, float(bands.centre[0]),
                                                lower, float(bands.upper[0]))
    # Welch resolution: about half the lowest band's width, a power-of-two segment.
    nperseg = 1 << max(4, int(math.floor(math.log2(sample_rate / ((float(bands.upper[0])
                                                                   - lower) / 2.0)))))
    return Plan(sample_rate=sample_rate, quantity=quantity, channels=channels, bands=bands,
                sos=sos, taps=taps, half=half, settle=settle, block=block, nperseg=nperseg,
                file=file, ppv_only=ppv_only)


def check_length(plan: Plan, n_samples: int, file: str | None = None) -> None:
    """A record must hold: the integration half-length M at each end, the filters' settling
    time, and then at least PERIODS_REQUIRED periods of the lowest band centre (and one full
    averaging block). Raises DataFileError saying the numbers."""
    need = plan.required_samples()
    if n_samples < need:
        fs = plan.sample_rate
        parts = [f"{plan.settle / fs:.3g} s for the band filters to settle"]
        if plan.half:
            parts.insert(0, f"2 × {plan.half / fs:.3g} s lost to the integration at the ends")
        span = max(PERIODS_REQUIRED / float(plan.bands.centre[0]), (plan.block or 0) / fs)
        if plan.ppv_only:
            raise DataFileError(file or plan.file, f"the record is {n_samples / fs:.4g} s long;"
                                f" integration needs at least {need / fs:.4g} s",
                                column="band_low")
        block = ", or one averaging block" if plan.block else ""
        raise DataFileError(
            file or plan.file,
            f"the record is {n_samples / fs:.4g} s long ({n_samples} samples); with band_low ="
            f" {plan.bands.nominal[0]:g} Hz it must be at least {need / fs:.4g} s:"
            f" {', '.join(parts)}, then {span:.4g} s analysed ({PERIODS_REQUIRED:g} periods of"
            f" {plan.bands.centre[0]:.4g} Hz{block})",
            column="band_low")


@dataclass(frozen=True, slots=True, kw_only=True)
class ChannelLevels:
    """Results of one channel; velocities in m/s, frequencies in Hz, times in s."""

    channel: str
    band_levels: np.ndarray  # rms per band (over the record, or the maximum over blocks)
    overall_velocity_rms: float  # energetic sum of the band levels
    peak_velocity: float
    peak_time: float
    peak_frequency: float  # from the zero crossings of the half cycle holding the peak; NaN
    max_band_velocity: float
    max_band_frequency: float  # exact centre of that band


@dataclass(frozen=True, slots=True, kw_only=True)
class Analysis:
    """The whole analysis of a record."""

    plan: Plan
    channels: tuple[ChannelLevels, ...]
    n_samples: int
    blocks: int  # averaging blocks used (1 without an averaging time)
    analysed_from: float  # s from the first sample, start of the band levels
    analysed_to: float
    envelope_step: float  # s per envelope bucket
    envelope_start: float  # s, time of the first bucket
    envelope_min: np.ndarray  # channels × buckets
    envelope_max: np.ndarray
    spectrum_frequencies: np.ndarray  # Hz, up to 1.25 × the top band edge
    spectrum_psd: np.ndarray  # channels × lines, (m/s)²/Hz, Welch (Hann, 50 % overlap)
    spectrum_amplitude: np.ndarray  # channels × lines, rms of a tone on a line, m/s


def _assemble(plan: Plan, n: int, ms: np.ndarray, overall_ms: np.ndarray, blocks: int,
              peak: np.ndarray, peak_at: np.ndarray, peak_freq: np.ndarray,
              env: tuple[int, np.ndarray, np.ndarray], freqs: np.ndarray,
              psd: np.ndarray, window_n: int) -> Analysis:
    fs = plan.sample_rate
    levels = np.sqrt(ms)
    out = []
    for c, name in enumerate(plan.channels):
        k = int(np.argmax(levels[:, c]))
        out.append(ChannelLevels(
            channel=name, band_levels=levels[:, c].copy(),
            overall_velocity_rms=float(math.sqrt(overall_ms[c])),
            peak_velocity=float(peak[c]), peak_time=float(peak_at[c] / fs),
            peak_frequency=float(peak_freq[c]), max_band_velocity=float(levels[k, c]),
            max_band_frequency=float(plan.bands.centre[k]),
        ))
    keep = freqs <= 1.25 * float(plan.bands.upper[-1])
    window = signal.get_window("hann", window_n)
    enbw = fs * np.sum(window ** 2) / np.sum(window) ** 2  # Hz
    end = n - plan.half
    last = end if plan.block is None else plan.start + blocks * plan.block
    size, mins, maxs = env
    return Analysis(
        plan=plan, channels=tuple(out), n_samples=n, blocks=blocks,
        analysed_from=plan.start / fs, analysed_to=last / fs, envelope_step=size / fs,
        envelope_start=plan.half / fs, envelope_min=mins, envelope_max=maxs,
        spectrum_frequencies=freqs[keep], spectrum_psd=psd[:, keep],
        spectrum_amplitude=np.sqrt(psd[:, keep] * enbw),
    )


def analyse_record(record: Record, plan: Plan, chunk: int = DEFAULT_CHUNK) -> Analysis:
    """Stream ``record`` through the analysis in chunks of ``chunk`` samples.

    Memory is bounded by the chunk, the integrator's length, one Welch segment and the
    envelope (≤ 2 × ENVELOPE_BUCKETS values per channel), whatever the record's length.
    """
    if record.n_samples is not None:
        check_length(plan, record.n_samples, plan.file or record.file)
    ch = len(plan.channels)
    integrator = Integrator(plan.taps, ch) if plan.taps is not None else None
    bank = BandBlocks(plan.sos, ch, plan.start, plan.block)
    peaks = PeakTracker(ch, plan.sample_rate)
    envelope = Envelope(ch, ENVELOPE_BUCKETS)
    welch = WelchSums(ch, plan.nperseg)
    n = 0
    produced = 0  # velocity samples so far; velocity sample k is record sample half + k
    for _, x in iter_chunks(record, chunk):
        n += x.shape[0]
        v = np.ascontiguousarray(x.T)
        if integrator is not None:
            v = integrator.push(v)
        if not v.shape[1]:
            continue
        first = plan.half + produced
        produced += v.shape[1]
        bank.push(v, first)
        peaks.push(v, first)
        envelope.push(v)
        welch.push(v)
    check_length(plan, n, plan.file or record.file)
    ms, overall, blocks = bank.finish()
    freqs, psd = welch.finish(plan.sample_rate)
    window_n = plan.nperseg if welch.segments else welch.buffer.shape[1]
    return _assemble(plan, n, ms.copy(), overall.copy(), blocks, peaks.peak.copy(),
                     peaks.at.copy(), peaks.frequency(), envelope.finish(), freqs, psd,
                     window_n)


def analyse_array(samples: np.ndarray, plan: Plan) -> Analysis:
    """The same analysis on a whole (samples × channels) SI array held in memory: one
    convolution, one filter pass per band, one reshape into blocks (the reference for the
    streaming route, and the route for short records)."""
    x = np.asarray(samples, dtype=np.float64)
    if x.ndim == 1:
        x = x[:, None]
    n = x.shape[0]
    check_length(plan, n)
    fs = plan.sample_rate
    v = x.T
    if plan.taps is not None:
        v = signal.fftconvolve(v, plan.taps[None, :], mode="valid", axes=1)
    skip = plan.settle
    bands = []
    for sos in plan.sos:
        bands.append(signal.sosfilt(sos, v, axis=1)[:, skip:] ** 2)
    squares = np.stack(bands)  # bands × channels × samples
    if plan.block is None:
        ms = squares.mean(axis=2)
        overall = ms.sum(axis=0)
        blocks = 1
    else:
        blocks = squares.shape[2] // plan.block
        shaped = squares[:, :, :blocks * plan.block].reshape(
            squares.shape[0], squares.shape[1], blocks, plan.block)
        block_ms = shaped.mean(axis=3)
        ms = block_ms.max(axis=2)
        overall = block_ms.sum(axis=0).max(axis=1)
    a = np.abs(v)
    at = np.argmax(a, axis=1)
    peak = a[np.arange(v.shape[0]), at]
    freq = np.array([_half_cycle_frequency(v[c], int(at[c]), fs) for c in range(v.shape[0])])
    env = _envelope(v)
    nper = min(plan.nperseg, v.shape[1])
    freqs, psd = signal.welch(v, fs=fs, window="hann", nperseg=nper, noverlap=nper // 2,
                              detrend=False, axis=1)
    return _assemble(plan, n, ms, overall, blocks, peak, at + plan.half, freq, env, freqs,
                     psd, nper)


def _half_cycle_frequency(v: np.ndarray, at: int, fs: float) -> float:
    """1/(2·T_half), T_half between the zero crossings (linearly interpolated) that bracket
    sample ``at``: the zero-crossing frequency of the half cycle holding the peak, the
    convention of blast-vibration monitoring practice (e.g. US Bureau of Mines RI 8507,
    1980), which DIN 4150-3 and BS 7385-2 users commonly follow."""
    i = np.flatnonzero(np.sign(v[:-1]) != np.sign(v[1:]))  # zeros bound half cycles too
    t = i + v[i] / (v[i] - v[i + 1])
    before, after = t[t < at], t[t > at]
    if not before.size or not after.size:
        return math.nan
    return fs / (2.0 * (after[0] - before[-1]))


def _envelope(v: np.ndarray) -> tuple[int, np.ndarray, np.ndarray]:
    n = v.shape[1]
    size = 1
    while n // size > ENVELOPE_BUCKETS:
        size *= 2
    full = n // size
    shaped = v[:, :full * size].reshape(v.shape[0], full, size)
    mins, maxs = shaped.min(axis=2), shaped.max(axis=2)
    if full * size < n:
        mins = np.concatenate((mins, v[:, full * size:].min(axis=1, keepdims=True)), axis=1)
        maxs = np.concatenate((maxs, v[:, full * size:].max(axis=1, keepdims=True)), axis=1)
    return size, mins, maxs
