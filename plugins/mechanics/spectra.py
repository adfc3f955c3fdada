"""Frequency grids for the figures: the points a response curve is drawn at, dense where the
curve turns (the resonance peak), with the undamped singularity left out."""

from __future__ import annotations

import numpy as np


def ratio_grid(r_high: float) -> np.ndarray:
    """Frequency ratios 0.1 to ``r_high``: 200 log-spaced points plus 81 across 0.9-1.1, with
    r = 1 itself left out (the undamped curve is unbounded there)."""
    # few points keep the PDF lean; the band around r = 1 resolves light-damping peaks
    r = np.unique(np.concatenate([np.geomspace(0.1, r_high, 200),
                                  np.linspace(0.9, 1.1, 81)]))
    return r[np.abs(r - 1.0) > 1e-6]


def resonance_grid(low: float, high: float, fn: float, zeta: float,
                   points: int = 600) -> np.ndarray:
    """Frequencies (Hz) from ``low`` to ``high``: ``points`` uniform, plus 161 within
    ±4·max(ζ, 0.002)·f_n of f_n so the peak is drawn; undamped, a gap of ±0.2 % at f_n."""
    base = np.linspace(low, high, points)
    width = max(zeta, 0.002) * fn
    dense = fn + width * np.linspace(-4, 4, 161)
    g = np.unique(np.concatenate([base, dense[(dense >= low) & (dense <= high)]]))
    if zeta == 0:  # the undamped peak is infinite: leave a gap rather than an inf
        g = g[np.abs(g / fn - 1) > 2e-3]
    return g[g > 0] if low <= 0 else g
