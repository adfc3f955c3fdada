"""One-third-octave bands and band levels against closed forms: reference cases T0–T4
(tests/data/check_cases_wave2.json; each case's source and status beside its test)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from conftest import REPO
from reportgen_plugins.measured_vibration.bands import (
    band_filters,
    band_index,
    nominal_label,
    third_octave_bands,
)
from reportgen_plugins.measured_vibration.method import analyse_array, make_plan
from scipy import signal

CASES = {c["id"].split("_")[0]: c for c in json.loads(
    (REPO / "tests" / "data" / "check_cases_wave2.json").read_text(encoding="utf-8"))["cases"]}


def _expected(case: str, key: str):
    return CASES[case]["expected"][key]["value"]


def _centre(nominal: float) -> float:
    return 1000.0 * 10.0 ** (band_index(nominal) / 10.0)


def _levels(x: np.ndarray, fs: float, quantity: str = "velocity", **kw):
    plan = make_plan(sample_rate=fs, quantity=quantity, channels=("v",), **kw)
    result = analyse_array(x, plan)
    return plan, result.channels[0]


# --- T0: the band table (IEC 61260-1:2014 base-ten; corroborated_secondary) --------------


def test_t0_band_table_exact_centres_edges_and_labels():
    bands = third_octave_bands(1.0, 100.0)
    assert list(bands.index) == CASES["T0"]["inputs"]["band_index_x"]["value"]
    for key, values in (("f_mid_exact", bands.centre), ("f_lower_edge", bands.lower),
                        ("f_upper_edge", bands.upper),
                        ("bandwidth", bands.upper - bands.lower)):
        assert np.allclose(values, _expected("T0", key), rtol=1e-12, atol=0), key
    assert list(bands.nominal) == CASES["T0"]["inputs"]["nominal_labels"]["value"]
    assert math.isclose(bands.upper[0] / bands.lower[0], _expected("T0", "edge_ratio_f2_over_f1"),
                        rel_tol=1e-12)


def test_t0_nominal_labels_find_their_exact_band():
    for label, key in ((12.5, "f_mid_nominal_12.5"), (31.5, "f_mid_nominal_31.5"),
                       (63.0, "f_mid_nominal_63")):
        assert math.isclose(_centre(label), _expected("T0", key), rel_tol=1e-12)
    # labels outside the case's decade follow the same R10 series (IEC 61260-1)
    assert nominal_label(band_index(1250.0)) == 1250.0 and nominal_label(-33) == 0.5


def test_digital_band_filters_are_minus_3_db_at_the_exact_edges():
    # T1 "edge_attenuation_dB_butterworth3": -3.0103 dB at f1 and f2 (standard Butterworth
    # theory; scipy.signal.butter pre-warps the edges of the bilinear design).
    bands = third_octave_bands(1.0, 80.0)
    for sos, lo, hi, mid in zip(band_filters(bands, 1024.0), bands.lower, bands.upper,
                                bands.centre, strict=True):
        _, h = signal.sosfreqz(sos, worN=[lo, mid, hi], fs=1024.0)
        db = 20 * np.log10(np.abs(h))
        assert abs(db[0] - _expected("T1", "edge_attenuation_dB_butterworth3")) < 1e-6
        assert abs(db[2] - _expected("T1", "edge_attenuation_dB_butterworth3")) < 1e-6
        assert abs(db[1]) < 1e-6


# --- T1: a sine at a centre, at an edge and near it (formula_confirmed_example_invented) ---


@pytest.mark.parametrize("tone,label", [(0, "centre_12.5"), (1, "upper_edge_12.5"),
                                        (2, "inside_near_edge_14.0")])
def test_t1_sine_band_levels_through_the_butterworth_bank(tone, label):
    # Expected values: the analog 3rd-order Butterworth prototype (T1 formula). Our digital
    # filters at 2048 samples/s differ from it by ≤ 2e-4 (T1 independent_check: sosfilt vs
    # analog), and the band rms of a sine over a span that is not a whole number of periods
    # by ≤ 1/(2π f T) ≈ 3e-4: 1e-3 here.
    fs, a = 2048.0, CASES["T1"]["inputs"]["A_peak_velocity"]["value"]
    f0 = CASES["T1"]["inputs"]["tone_frequencies"]["value"][tone]
    t = np.arange(int(60 * fs)) / fs
    plan, ch = _levels(a * np.sin(2 * np.pi * f0 * t), fs, band_low=1.0, band_high=100.0)
    for nominal in (10, 12.5, 16):
        k = plan.bands.nominal.index(nominal)
        expected = _expected("T1", f"{label}_band{nominal:g}_butterworth3")
        assert abs(ch.band_levels[k] / expected - 1) < 1e-3, nominal
    total = math.sqrt(float(np.sum(ch.band_levels ** 2)))
    assert abs(total / _expected("T1", f"{label}_all_bands_power_sum_rms_butterworth3") - 1
               ) < 1e-3


def test_t1_sine_at_a_centre_gives_a_over_root_2_in_its_band():
    # Closed form: a sine of amplitude A has rms A/√2 (kinematics); at the exact centre of a
    # band the filter passes it with gain 1 (IEC 61260-1 band, Butterworth): within 2 %.
    fs = 1024.0
    for nominal in (1.0, 4.0, 31.5, 80.0):
        f0 = _centre(nominal)
        t = np.arange(int(80 * fs)) / fs
        plan, ch = _levels(3e-4 * np.sin(2 * np.pi * f0 * t + 0.3), fs)
        k = plan.bands.nominal.index(nominal)
        assert abs(ch.band_levels[k] / (3e-4 / math.sqrt(2)) - 1) < 0.02, nominal
        assert ch.max_band_frequency == plan.bands.centre[k]


# --- T2: white noise of known density (formula_confirmed_example_invented) ----------------


def test_t2_white_noise_band_levels_follow_the_noise_bandwidth():
    # sqrt(S·(f2−f1)·π/3): the noise bandwidth of a 3rd-order Butterworth band-pass is π/3 of
    # the nominal width (T2; standard filter theory). A one-sided density S comes from
    # samples of variance S·fs/2. One hour at 256 samples/s: the statistical 1σ error of a
    # band level is ≤ 1.8 % (1 Hz band) and falls as 1/√(B·T); 5 % is ~3σ at 1 Hz.
    fs, s = 256.0, CASES["T2"]["inputs"]["psd_velocity_one_sided"]["value"]
    x = np.random.default_rng(2026).standard_normal(int(3600 * fs)) * math.sqrt(s * fs / 2)
    plan, ch = _levels(x, fs, band_low=1.0, band_high=100.0)
    expected = np.array(_expected("T2", "band_rms_butterworth3"))
    rel = ch.band_levels / expected - 1
    assert np.all(np.abs(rel) < 0.05), rel
    # above 20 Hz the 1σ error is < 0.5 %: 1.5 % there
    assert np.all(np.abs(rel[plan.bands.centre > 20]) < 0.015)
    ideal = np.array(_expected("T2", "band_rms_ideal"))
    assert math.isclose(float(np.mean((ch.band_levels / ideal) ** 2)),
                        _expected("T2", "noise_bandwidth_ratio_butterworth3"), rel_tol=0.01)


# --- T3: three tones, two in one band (formula_confirmed_example_invented) ----------------


def test_t3_two_tones_in_one_band_add_in_mean_square():
    # Blocks of 10 s hold whole periods of the 0.5 s beat; each block's level is then the
    # mean-square sum (T3 formula). Expected: analog Butterworth values; the digital filter at
    # 2048/s is within 0.85 % in bands above 0.1 µm/s (T3 independent_check): 1 % here.
    fs = 2048.0
    t = np.arange(int(60 * fs)) / fs
    x = sum(a * np.sin(2 * np.pi * f * t)
            for f, a in CASES["T3"]["inputs"]["tones_frequency_peak"]["value"])
    plan, ch = _levels(x, fs, band_low=1.0, band_high=100.0, averaging_time=10.0)
    expected = np.array(_expected("T3", "band_rms_butterworth3_all_bands"))
    big = expected > 1e-7
    assert np.all(np.abs(ch.band_levels[big] / expected[big] - 1) < 0.01)
    k20, k50 = plan.bands.nominal.index(20), plan.bands.nominal.index(50)
    assert abs(ch.band_levels[k20] / _expected("T3", "band20_butterworth3") - 1) < 0.01
    assert abs(ch.band_levels[k50] / _expected("T3", "band50_ideal") - 1) < 0.01


# --- T4: acceleration to velocity (common_practice_no_source) ------------------------------


def test_t4_acceleration_tone_converts_by_2_pi_f():
    # v = a/(2π f) for a tone (kinematics of harmonic motion, T4 tone_v_rms).
    fs, a_rms = 1024.0, CASES["T4"]["inputs"]["a_rms_tone"]["value"]
    f0 = _centre(31.5)
    t = np.arange(int(60 * fs)) / fs
    plan, ch = _levels(a_rms * math.sqrt(2) * np.cos(2 * np.pi * f0 * t), fs, "acceleration")
    k = plan.bands.nominal.index(31.5)
    assert abs(ch.band_levels[k] / _expected("T4", "tone_v_rms") - 1) < 2e-3
    assert abs(ch.peak_velocity / (_expected("T4", "tone_v_rms") * math.sqrt(2)) - 1) < 2e-3
    assert abs(ch.peak_frequency / f0 - 1) < 1e-3


def test_t4_flat_acceleration_density_gives_the_exact_band_velocity():
    # Flat S_a: v² = S_a (f2 − f1)/(2π f_m)² exactly for an ideal band (T4); the Butterworth
    # band's weighting adds its noise-bandwidth factor, evaluated here by quadrature of
    # S_a·|H|²/(2πf)² (scipy.integrate.quad, the T4 independent check's method). Half an hour
    # at 512/s: statistical 1σ ≤ 1.5 % in the 31.5 Hz band; 3 % here.
    from scipy.integrate import quad

    fs, s_a = 512.0, CASES["T4"]["inputs"]["S_a_flat"]["value"]
    x = np.random.default_rng(31).standard_normal(int(1800 * fs)) * math.sqrt(s_a * fs / 2)
    plan, ch = _levels(x, fs, "acceleration")
    k = plan.bands.nominal.index(31.5)
    f1, f2 = plan.bands.lower[k], plan.bands.upper[k]

    def integrand(f):
        om = (f * f - f1 * f2) / (f * (f2 - f1))
        return s_a / (1 + om ** 6) / (2 * math.pi * f) ** 2

    exact = math.sqrt(quad(integrand, 1.0, 250.0, points=[f1, f2], limit=200)[0])
    assert abs(ch.band_levels[k] / exact - 1) < 0.03
    ideal = _expected("T4", "flatSa_band_v_rms_exact")
    assert 1.0 < exact / ideal < math.sqrt(math.pi / 3) * 1.01  # skirts add, by ≤ π/3
