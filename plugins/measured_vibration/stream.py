"""Chunk-by-chunk accumulators of the streaming analysis, each carrying its state across chunks:
integration (overlap-save), band sums of squares per block, running peak, envelope, Welch sums.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import signal

__all__ = ["BandBlocks", "Envelope", "Integrator", "PeakTracker", "WelchSums"]


class Integrator:
    """Overlap-save convolution with the centred integrating FIR (2M + 1 taps).

    Input sample i (acceleration) → output velocity at sample i − M once sample i has been
    read: the first M and last M samples of a record have no complete output and are not used.
    """

    def __init__(self, taps: np.ndarray, channels: int):
        self.taps = taps[None, :]
        self.tail = np.zeros((channels, 0))
        self.length = taps.size

    def push(self, x: np.ndarray) -> np.ndarray:
        """``x`` channels × n → the velocity samples it completes (channels × m)."""
        ext = np.concatenate((self.tail, x), axis=1)
        self.tail = ext[:, max(0, ext.shape[1] - self.length + 1):]
        if ext.shape[1] < self.length:
            return np.zeros((x.shape[0], 0))
        return signal.fftconvolve(ext, self.taps, mode="valid", axes=1)


class BandBlocks:
    """The band filter bank with carried state, and sums of squares per averaging block.

    Samples before ``start`` only run the filters in (settling); block k then covers
    [start + k·B, start + (k + 1)·B). The running maximum of each band's block mean square is
    kept, and of the block's energetic sum over bands.
    """

    def __init__(self, sos: tuple[np.ndarray, ...], channels: int, start: int,
                 block: int | None):
        self.sos = sos
        self.zi = [np.zeros((s.shape[0], channels, 2)) for s in sos]
        self.start = start
        self.block = block
        self.current = np.zeros((len(sos), channels))
        self.filled = 0  # samples in the current block
        self.max_ms = np.full((len(sos), channels), -1.0)
        self.max_overall_ms = np.full(channels, -1.0)
        self.blocks = 0

    def push(self, v: np.ndarray, first: int) -> None:
        """``v`` channels × n velocity samples, the first being record sample ``first``."""
        n = v.shape[1]
        skip = min(n, max(0, self.start - first))  # settling samples: filter, do not count
        squares = np.empty((len(self.sos), v.shape[0], n - skip))
        for b, sos in enumerate(self.sos):
            y, self.zi[b] = signal.sosfilt(sos, v, axis=1, zi=self.zi[b])
            np.square(y[:, skip:], out=squares[b])
        self._accumulate(squares)

    def _accumulate(self, squares: np.ndarray) -> None:
        pos, n = 0, squares.shape[2]
        while pos < n:
            room = n - pos if self.block is None else min(n - pos, self.block - self.filled)
            self.current += squares[:, :, pos:pos + room].sum(axis=2)
            self.filled += room
            pos += room
            if self.block is not None and self.filled == self.block:
                self._close()

    def _close(self) -> None:
        ms = self.current / self.filled
        np.maximum(self.max_ms, ms, out=self.max_ms)
        np.maximum(self.max_overall_ms, ms.sum(axis=0), out=self.max_overall_ms)
        self.blocks += 1
        self.current[:] = 0.0
        self.filled = 0

    def finish(self) -> tuple[np.ndarray, np.ndarray, int]:
        """(band mean squares bands × channels, overall mean square, blocks used)."""
        if self.block is None and self.filled:
            self._close()
        return self.max_ms, self.max_overall_ms, self.blocks


class PeakTracker:
    """Largest |v| per channel and the zero crossings either side of it (half-cycle period)."""

    def __init__(self, channels: int, sample_rate: float):
        self.fs = sample_rate
        self.peak = np.full(channels, -1.0)
        self.at = np.zeros(channels, dtype=np.int64)
        self.before = np.full(channels, math.nan)  # crossing time (in samples) before the peak
        self.after = np.full(channels, math.nan)
        self.last_crossing = np.full(channels, math.nan)
        self.previous: np.ndarray | None = None  # last sample of the previous chunk

    def push(self, v: np.ndarray, first: int) -> None:
        for c in range(v.shape[0]):
            x = v[c] if self.previous is None else np.concatenate(([self.previous[c]], v[c]))
            origin = first - (0 if self.previous is None else 1)
            i = np.flatnonzero(np.sign(x[:-1]) != np.sign(x[1:]))  # zeros bound half cycles too
            crossings = origin + i + x[i] / (x[i] - x[i + 1])  # linear interpolation
            j = int(np.argmax(np.abs(v[c])))
            if abs(v[c, j]) > self.peak[c]:
                self.peak[c], self.at[c] = abs(v[c, j]), first + j
                earlier = crossings[crossings < first + j]
                self.before[c] = earlier[-1] if earlier.size else self.last_crossing[c]
                later = crossings[crossings > first + j]
                self.after[c] = later[0] if later.size else math.nan
            elif math.isnan(self.after[c]):
                later = crossings[crossings > self.at[c]]
                if later.size:
                    self.after[c] = later[0]
            if crossings.size:
                self.last_crossing[c] = crossings[-1]
        self.previous = v[:, -1].copy()

    def frequency(self) -> np.ndarray:
        """1 / (2 × half-cycle duration) per channel; NaN when the peak's half cycle is not
        closed by a crossing on both sides within the record."""
        return self.fs / (2.0 * (self.after - self.before))


class Envelope:
    """Min/max per bucket of b samples, b the smallest power of two leaving ≤ ``buckets``
    full buckets (merged pairwise as the record grows), plus the last partial bucket."""

    def __init__(self, channels: int, buckets: int):
        self.limit = buckets
        self.size = 1
        self.mins = np.zeros((channels, 0))
        self.maxs = np.zeros((channels, 0))
        self.count = 0  # samples in the unfinished bucket
        self.pmin = np.full(channels, np.inf)
        self.pmax = np.full(channels, -np.inf)

    def push(self, v: np.ndarray) -> None:
        take = min(self.size - self.count, v.shape[1])
        if take:
            self.pmin = np.minimum(self.pmin, v[:, :take].min(axis=1))
            self.pmax = np.maximum(self.pmax, v[:, :take].max(axis=1))
            self.count += take
        if self.count == self.size:
            self._append(self.pmin[:, None], self.pmax[:, None])
            self._reset_partial()
        rest = v[:, take:]
        full = rest.shape[1] // self.size
        cut = full * self.size
        if full:
            shaped = rest[:, :cut].reshape(rest.shape[0], full, self.size)
            self._append(shaped.min(axis=2), shaped.max(axis=2))
        if cut < rest.shape[1]:
            self.pmin = np.minimum(self.pmin, rest[:, cut:].min(axis=1))
            self.pmax = np.maximum(self.pmax, rest[:, cut:].max(axis=1))
            self.count += rest.shape[1] - cut
        while self.mins.shape[1] > self.limit:
            self._merge()

    def _append(self, mins: np.ndarray, maxs: np.ndarray) -> None:
        self.mins = np.concatenate((self.mins, mins), axis=1)
        self.maxs = np.concatenate((self.maxs, maxs), axis=1)

    def _reset_partial(self) -> None:
        self.count = 0
        self.pmin = np.full(self.mins.shape[0], np.inf)
        self.pmax = np.full(self.mins.shape[0], -np.inf)

    def _merge(self) -> None:
        n = self.mins.shape[1]
        even = n - n % 2
        if n % 2:  # the odd last bucket joins the partial one, which stays below 2·size
            self.pmin = np.minimum(self.pmin, self.mins[:, -1])
            self.pmax = np.maximum(self.pmax, self.maxs[:, -1])
            self.count += self.size
        ch = self.mins.shape[0]
        self.mins = self.mins[:, :even].reshape(ch, even // 2, 2).min(axis=2)
        self.maxs = self.maxs[:, :even].reshape(ch, even // 2, 2).max(axis=2)
        self.size *= 2

    def finish(self) -> tuple[int, np.ndarray, np.ndarray]:
        """(bucket size in samples, mins, maxs) with the partial bucket last if any."""
        if not self.count:
            return self.size, self.mins, self.maxs
        return (self.size, np.concatenate((self.mins, self.pmin[:, None]), axis=1),
                np.concatenate((self.maxs, self.pmax[:, None]), axis=1))


class WelchSums:
    """Sum of Hann-windowed periodograms over segments of ``nperseg`` overlapping by half."""

    def __init__(self, channels: int, nperseg: int):
        self.nperseg = nperseg
        self.step = nperseg // 2
        self.window = signal.get_window("hann", nperseg)
        self.buffer = np.zeros((channels, 0))
        self.sums = np.zeros((channels, nperseg // 2 + 1))
        self.segments = 0
        self.total = 0

    def push(self, v: np.ndarray) -> None:
        self.total += v.shape[1]
        data = np.concatenate((self.buffer, v), axis=1)
        count = 0 if data.shape[1] < self.nperseg else (
            (data.shape[1] - self.nperseg) // self.step + 1)
        if count:
            view = np.lib.stride_tricks.sliding_window_view(data, self.nperseg, axis=1)
            segs = view[:, :count * self.step:self.step] * self.window
            self.sums += (np.abs(np.fft.rfft(segs, axis=2)) ** 2).sum(axis=1)
            self.segments += count
        self.buffer = data[:, count * self.step:]

    def finish(self, sample_rate: float) -> tuple[np.ndarray, np.ndarray]:
        """(frequencies, one-sided PSD channels × lines), scipy.signal.welch's density
        scaling; a record shorter than one segment is taken as one segment of its length."""
        sums, segments, window = self.sums, self.segments, self.window
        if not segments:
            window = signal.get_window("hann", self.buffer.shape[1])
            sums = np.abs(np.fft.rfft(self.buffer * window, axis=1)) ** 2
            segments = 1
        n = window.size
        psd = sums / segments / (sample_rate * np.sum(window ** 2))
        psd[:, 1:] *= 2.0
        if n % 2 == 0:
            psd[:, -1] /= 2.0
        return np.fft.rfftfreq(n, 1.0 / sample_rate), psd
