"""Generate the sample floor-vibration survey (an invented scenario) as CSV.

Imaging Suite 2 of the invented Tarrowvale Clinic, floor slab beside the scanner pad: three
velocity channels (x, y, z) for 60 s at 512 samples/s. Content: broadband floor noise of a few
µm/s shaped by the slab's first mode near 17 Hz, a tone at 29.5 Hz from the invented building's
chiller CH-3 (strongest vertically), and footfall transients of two walking passes along the
corridor (heel impacts at 1.9 Hz, each a decaying 8.2 Hz floor response).

    python make_survey_data.py [OUT.csv]     (default: survey_imaging_suite.csv beside it)

Deterministic (fixed seed, recursive filters only, fixed print format): a rerun writes the same
bytes. The file is the sample's data file; keep it under 2 MB.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy import signal

SAMPLE_RATE = 512
DURATION = 60.0
SEED = 20260315
CHANNELS = ("x", "y", "z")
DEFAULT_NAME = "survey_imaging_suite.csv"


def _floor_noise(rng: np.random.Generator, n: int, rms: float, mode_hz: float) -> np.ndarray:
    """White noise through a band-pass (1–100 Hz) and a lightly damped floor mode."""
    white = rng.standard_normal(n)
    b, a = signal.butter(2, [1.0, 100.0], btype="bandpass", fs=SAMPLE_RATE)
    shaped = signal.lfilter(b, a, white)
    w0 = 2 * np.pi * mode_hz / SAMPLE_RATE
    zeta = 0.05
    r = np.exp(-zeta * w0)
    resonant = signal.lfilter([1.0 - r], [1.0, -2 * r * np.cos(w0), r * r], shaped)
    mixed = shaped + 4.0 * resonant
    return rms * mixed / np.sqrt(np.mean(mixed ** 2))


def _footfalls(t: np.ndarray, start: float, steps: int, scale: float) -> np.ndarray:
    """Heel impacts every 1/1.9 s, each exciting a decaying 8.2 Hz floor response that grows
    as the walker nears the sensor and fades as they pass."""
    out = np.zeros_like(t)
    for k in range(steps):
        t0 = start + k / 1.9
        nearness = np.sin(np.pi * (k + 0.5) / steps)
        after = t - t0
        on = after >= 0
        out[on] += scale * nearness * np.exp(-2 * np.pi * 0.06 * 8.2 * after[on]) * np.sin(
            2 * np.pi * 8.2 * after[on])
    return out


def make(path: Path) -> Path:
    rng = np.random.default_rng(SEED)
    n = int(DURATION * SAMPLE_RATE)
    t = np.arange(n) / SAMPLE_RATE
    data = np.empty((n, 3))
    # (noise rms, slab mode, chiller tone amplitude, footfall amplitude), µm/s
    setup = {"x": (1.2, 15.5, 0.8, 2.0), "y": (1.4, 16.5, 1.1, 2.5), "z": (2.4, 17.2, 4.2, 9.0)}
    for c, name in enumerate(CHANNELS):
        noise_rms, mode_hz, tone, steps = setup[name]
        noise = _floor_noise(rng, n, noise_rms, mode_hz)
        phase = rng.uniform(0, 2 * np.pi)
        chiller = tone * np.sin(2 * np.pi * 29.5 * t + phase)
        walking = _footfalls(t, 14.0, 12, steps) + _footfalls(t, 38.5, 14, 0.8 * steps)
        data[:, c] = noise + chiller + walking
    lines = ["time [s],x [um/s],y [um/s],z [um/s]"]
    lines += [f"{ti:.6f},{x:.3f},{y:.3f},{z:.3f}" for ti, (x, y, z) in zip(t, data, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8", newline="\n")
    return path


if __name__ == "__main__":
    target = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).with_name(DEFAULT_NAME)
    written = make(target)
    print(f"wrote {written} ({written.stat().st_size} bytes)")
