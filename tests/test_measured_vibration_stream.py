"""The streaming route equals the in-memory route (1e-9 relative), whatever the chunk size and
file format; the envelope, spectrum and peak frequency against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from reportgen_plugins.measured_vibration.assess import assess_ppv, result_values
from reportgen_plugins.measured_vibration.method import (
    ENVELOPE_BUCKETS,
    analyse_array,
    analyse_record,
    integrator_taps,
    make_plan,
)
from reportgen_plugins.measured_vibration.readers import iter_chunks, open_record
from reportgen_plugins.vibration_criteria import lookup
from scipy import signal
from scipy.io import wavfile

FS = 512.0


def _signal(seconds: float, channels: int = 2, seed: int = 7) -> np.ndarray:
    rng = np.random.default_rng(seed)
    n = int(seconds * FS)
    t = np.arange(n) / FS
    x = rng.standard_normal((n, channels)) * 2e-6
    x[:, 0] += 5e-6 * np.sin(2 * np.pi * 29.5 * t) + 3e-6 * np.sin(2 * np.pi * 3.3 * t)
    burst = (t > 20) & (t < 21)
    x[burst, -1] += 2e-5 * np.sin(2 * np.pi * 8.0 * (t[burst] - 20))
    return x


def _same(a, b, rel=1e-9):
    assert a.n_samples == b.n_samples and a.blocks == b.blocks
    for ca, cb in zip(a.channels, b.channels, strict=True):
        assert np.allclose(ca.band_levels, cb.band_levels, rtol=rel, atol=0)
        for key in ("overall_velocity_rms", "peak_velocity", "peak_time", "peak_frequency",
                    "max_band_velocity", "max_band_frequency"):
            x, y = getattr(ca, key), getattr(cb, key)
            assert math.isclose(x, y, rel_tol=rel) or (math.isnan(x) and math.isnan(y)), key
    scale = np.abs(a.envelope_max).max()
    assert a.envelope_min.shape == b.envelope_min.shape
    assert np.allclose(a.envelope_min, b.envelope_min, rtol=0, atol=rel * scale)
    assert np.allclose(a.envelope_max, b.envelope_max, rtol=0, atol=rel * scale)
    assert np.allclose(a.spectrum_psd, b.spectrum_psd, rtol=0,
                       atol=rel * a.spectrum_psd.max())


@pytest.mark.parametrize("quantity,unit,averaging,chunk", [
    ("velocity", "m/s", None, 65536),
    ("velocity", "m/s", 2.0, 1000),
    ("acceleration", "m/s**2", None, 4097),
    ("acceleration", "m/s**2", 1.0, 777),  # chunks far shorter than the integrator
])
def test_streaming_equals_in_memory(tmp_path, quantity, unit, averaging, chunk):
    x = _signal(70.0)
    path = tmp_path / "r.npy"
    np.save(path, x)
    record = open_record(path, sample_rate=FS, unit=unit)
    plan = make_plan(sample_rate=FS, quantity=quantity, channels=record.channels,
                     averaging_time=averaging)
    _same(analyse_array(x, plan), analyse_record(record, plan, chunk=chunk))


def test_csv_wav_and_npy_read_the_same_samples(tmp_path):
    x = np.round(_signal(40.0, 3) * 1e6, 3)  # µm/s with three decimals: exact in CSV text
    t = np.arange(x.shape[0]) / FS
    csv = tmp_path / "r.csv"
    rows = [f"{ti:.6f},{a:.3f},{b:.3f},{c:.3f}" for ti, (a, b, c) in zip(t, x, strict=True)]
    csv.write_text("time [s],x [um/s],y [um/s],z [um/s]\n" + "\n".join(rows) + "\n")
    npy = tmp_path / "r.npy"
    np.save(npy, x)
    scale = 64.0  # µm/s at full scale
    wav = tmp_path / "r.wav"
    wavfile.write(wav, int(FS), (x / scale).astype(np.float32))
    from_csv = open_record(csv)
    assert from_csv.sample_rate == FS and from_csv.channels == ("x", "y", "z")
    assert from_csv.quantity == "velocity"
    from_npy = open_record(npy, sample_rate=FS, unit="um/s")
    from_wav = open_record(wav, calibration=f"{scale} um/s")
    assert from_wav.sample_rate == FS and from_wav.channels == ("ch1", "ch2", "ch3")
    a = np.concatenate([c for _, c in iter_chunks(from_csv, 1000)])
    b = np.concatenate([c for _, c in iter_chunks(from_npy, 999)])
    w = np.concatenate([c for _, c in iter_chunks(from_wav, 5000)])
    assert np.array_equal(a, b)
    assert np.allclose(w, b, rtol=1e-6, atol=0)  # float32 in the WAV file
    plan = make_plan(sample_rate=FS, quantity="velocity", channels=from_csv.channels)
    _same(analyse_record(from_csv, plan, chunk=3000), analyse_array(b, plan))


def test_wav_integer_samples_scale_by_full_scale(tmp_path):
    # 16-bit PCM: full scale is 32768 counts (WAV convention); calibration 10 mm/s.
    counts = np.array([0, 16384, -32768, 32767], dtype=np.int16)
    path = tmp_path / "a.wav"
    wavfile.write(path, 1000, np.repeat(counts, 100))
    record = open_record(path, calibration="10 mm/s")
    (_, data), = list(iter_chunks(record))
    assert data[100, 0] == pytest.approx(5e-3) and data[200, 0] == pytest.approx(-10e-3)
    accel = open_record(path, calibration="2 g")
    assert accel.quantity == "acceleration" and accel.scale[0] == pytest.approx(
        2 * 9.80665 / 32768)


def test_integrator_response_is_one_over_j_2_pi_f_across_the_bands():
    # Integration in the frequency domain: H = 1/(j2πf) (kinematics); the drift high-pass
    # and truncation leave ≤ 0.04 % from the lowest band edge to 0.45·fs (scipy.signal.freqz).
    for fs in (256.0, 1024.0):
        taps = integrator_taps(fs, 1.0 * 10 ** -0.05)
        f = np.geomspace(10 ** -0.05, 0.45 * fs, 400)
        _, h = signal.freqz(taps, worN=f, fs=fs)
        h = h * np.exp(2j * np.pi * f * (taps.size // 2) / fs)  # the centred delay
        assert np.max(np.abs(h * 2j * np.pi * f - 1)) < 4e-4
        # and the drift: a constant acceleration offset gives no velocity ramp
        _, dc = signal.freqz(taps, worN=[0.0, 0.01], fs=fs)
        assert abs(dc[0]) < 1e-9 and abs(dc[1]) < 1e-3 * 1 / (2 * np.pi * 0.01)


def test_envelope_is_bounded_and_holds_the_signal():
    x = _signal(300.0, 1)
    plan = make_plan(sample_rate=FS, quantity="velocity", channels=("v",))
    result = analyse_array(x, plan)
    assert result.envelope_min.shape[1] <= ENVELOPE_BUCKETS + 1
    assert result.envelope_min.min() == x.min() and result.envelope_max.max() == x.max()
    step = int(round(result.envelope_step * FS))
    k = 37
    assert result.envelope_max[0, k] == x[k * step:(k + 1) * step, 0].max()


def test_spectrum_is_a_few_thousand_lines_and_reads_a_tone():
    # A tone of amplitude A reads A/√2 rms at its line (Welch with Hann window scaled by the
    # window's equivalent noise bandwidth; the tone is placed on a line).
    fs = 1024.0
    plan = make_plan(sample_rate=fs, quantity="velocity", channels=("v",))
    df = fs / plan.nperseg
    f0 = round(29.5 / df) * df
    t = np.arange(int(60 * fs)) / fs
    result = analyse_array(1e-5 * np.sin(2 * np.pi * f0 * t), plan)
    assert result.spectrum_frequencies.size <= 4000
    k = int(np.argmax(result.spectrum_amplitude[0]))
    assert result.spectrum_frequencies[k] == pytest.approx(f0)
    assert result.spectrum_amplitude[0, k] == pytest.approx(1e-5 / math.sqrt(2), rel=1e-3)


def test_peak_frequency_from_the_half_cycle_holding_the_peak():
    # A sine's half period is 1/(2f): the zero-crossing frequency equals f. A Hann-shaped
    # burst of 12 Hz on a weak 4 Hz background: the peak lies mid-burst and its half cycle
    # reads 12 Hz (the envelope and background shift the crossings by < 1 %).
    fs = 1000.0
    t = np.arange(int(60 * fs)) / fs
    x = 1e-5 * np.sin(2 * np.pi * 4.0 * t + 0.2)
    burst = (t >= 30) & (t < 30.5)
    x[burst] += 5e-3 * np.hanning(burst.sum()) * np.sin(2 * np.pi * 12.0 * (t[burst] - 30))
    plan = make_plan(sample_rate=fs, quantity="velocity", channels=("v",))
    ch = analyse_array(x, plan).channels[0]
    assert 30 < ch.peak_time < 30.5
    assert ch.peak_frequency == pytest.approx(12.0, rel=0.01)
    pure = analyse_array(1e-3 * np.sin(2 * np.pi * 12.0 * t + 0.2), plan).channels[0]
    assert pure.peak_frequency == pytest.approx(12.0, rel=1e-3)
    guide = assess_ppv(analyse_array(x, plan), lookup("DIN4150-3-line2"))[0]
    # DIN 4150-3 line 2 at 12 Hz: 5 + (12 − 10)·10/40 mm/s (straight line, from memory)
    assert guide.limit == pytest.approx((5 + 2 * 10 / 40) * 1e-3, rel=0.02)
    assert guide.ratio == pytest.approx(ch.peak_velocity / guide.limit)


def test_result_keys_for_one_and_several_channels():
    x = _signal(60.0, 2)
    plan = make_plan(sample_rate=FS, quantity="velocity", channels=("x", "z"))
    result = analyse_array(x, plan)
    values = result_values(result, lookup("VC-D"))
    worst = max(("x", "z"), key=lambda c: values[f"criterion_ratio_{c}"])
    for key in ("overall_velocity_rms", "peak_velocity", "max_band_velocity",
                "max_band_frequency", "criterion_ratio", "governing_band_frequency"):
        assert values[key] == values[f"{key}_{worst}"]
    rows = values["band_levels"]
    assert rows[0] == {"frequency": plan.bands.centre[0], "nominal": 1.0,
                       "value": rows[0]["value"]}
    single = result_values(analyse_array(x[:, :1], make_plan(
        sample_rate=FS, quantity="velocity", channels=("x",))))
    assert "criterion_ratio" not in single and "peak_velocity_x" not in single
    # energetic sum of the bands (acoustics practice for an overall level from bands)
    ch = result.channels[0]
    assert ch.overall_velocity_rms == pytest.approx(math.sqrt(np.sum(ch.band_levels ** 2)))


def test_ppv_mode_takes_a_short_event_record(tmp_path):
    # A 3 s blast-like event (decaying 20 Hz, invented): too short for band levels, enough
    # for the peak. PPV is the largest |v| (DIN 4150-3 / BS 7385-2 definition of the peak
    # component particle velocity); its half cycle gives 20 Hz.
    fs = 1000.0
    t = np.arange(int(3 * fs)) / fs
    v = 8e-3 * np.exp(-3 * (t - 1.0).clip(0)) * np.sin(2 * np.pi * 20 * (t - 1.0)) * (t >= 1)
    plan = make_plan(sample_rate=fs, quantity="velocity", channels=("v",), ppv_only=True)
    path = tmp_path / "event.npy"
    np.save(path, v)
    streamed = analyse_record(open_record(path, sample_rate=fs, unit="m/s"), plan, chunk=500)
    _same(analyse_array(v, plan), streamed)
    ch = streamed.channels[0]
    assert ch.peak_velocity == pytest.approx(np.abs(v).max()) and ch.peak_frequency == (
        pytest.approx(20.0, rel=0.01))
    (line1,) = assess_ppv(streamed, lookup("DIN4150-3-line1"))
    assert line1.limit == pytest.approx(25e-3) and line1.ratio == pytest.approx(
        ch.peak_velocity / 25e-3)  # 20 + (20 − 10)·20/40 mm/s at 20 Hz (from memory)
    with pytest.raises(Exception, match="integration needs"):
        accel = make_plan(sample_rate=fs, quantity="acceleration", channels=("v",),
                          ppv_only=True)
        analyse_array(v, accel)
