"""The second method (verify.py): independent of method.py (checked on its imports), right on
closed forms by itself, and in agreement with the filter bank within its stated tolerance."""

from __future__ import annotations

import ast
import json
import math
from pathlib import Path

import numpy as np
import pytest
from conftest import REPO
from reportgen_plugins.measured_vibration import verify
from reportgen_plugins.measured_vibration.method import analyse_array, make_plan
from reportgen_plugins.measured_vibration.readers import iter_chunks, open_record
from reportgen_plugins.measured_vibration.verify import (
    MIN_LINES,
    TOLERANCE,
    compare,
    spectral_levels,
)

CASES = {c["id"].split("_")[0]: c for c in json.loads(
    (REPO / "tests" / "data" / "check_cases_wave2.json").read_text(encoding="utf-8"))["cases"]}
SAMPLE = REPO / "sample_jobs" / "data" / "survey_imaging_suite.csv"


def test_verify_imports_nothing_of_the_method():
    # Every import in verify.py, those inside functions too: only the standard library,
    # numpy and scipy; never a module of this package (method, stream, bands, readers …).
    tree = ast.parse(Path(verify.__file__).read_text(encoding="utf-8"))
    allowed = {"__future__", "collections", "dataclasses", "math", "typing", "numpy", "scipy"}
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            assert node.level == 0, f"relative import of {node.module} in verify.py"
            names = [node.module or ""]
        elif isinstance(node, ast.Import):
            names = [a.name for a in node.names]
        else:
            continue
        for name in names:
            assert name.split(".")[0] in allowed, f"verify.py imports {name}"
    source = Path(verify.__file__).read_text(encoding="utf-8")
    assert "importlib" not in source and "__import__" not in source


def test_second_method_alone_on_a_sine_at_a_centre():
    # A/√2 in the band of the tone's exact centre (kinematics; IEC 61260-1 band), and the
    # analog Butterworth skirt values of T1 in the neighbours (formula_confirmed_example_
    # invented): 2 % and 0.5 % (digital warping at 2048/s is 1e-4).
    fs, a = 2048.0, CASES["T1"]["inputs"]["A_peak_velocity"]["value"]
    f0 = CASES["T1"]["inputs"]["tone_frequencies"]["value"][0]
    t = np.arange(int(40 * fs)) / fs
    s = spectral_levels(a * np.sin(2 * np.pi * f0 * t), sample_rate=fs, acceleration=False,
                        band_high=100.0)
    k = int(np.argmin(np.abs(s.centres - f0)))
    assert abs(s.levels[k, 0] / (a / math.sqrt(2)) - 1) < 0.02
    for j, nominal in ((k - 1, "10"), (k + 1, "16")):
        expected = CASES["T1"]["expected"][f"centre_12.5_band{nominal}_butterworth3"]["value"]
        assert abs(s.levels[j, 0] / expected - 1) < 5e-3


def test_second_method_alone_on_white_noise():
    # sqrt(S·B·π/3) per band (T2: the Butterworth noise bandwidth, standard result): 5 %.
    fs, s_psd = 256.0, CASES["T2"]["inputs"]["psd_velocity_one_sided"]["value"]
    x = np.random.default_rng(11).standard_normal(int(3600 * fs)) * math.sqrt(s_psd * fs / 2)
    s = spectral_levels(x, sample_rate=fs, acceleration=False, band_high=100.0)
    expected = np.array(CASES["T2"]["expected"]["band_rms_butterworth3"]["value"])
    assert np.all(np.abs(s.levels[:, 0] / expected - 1) < 0.05)


def test_second_method_converts_acceleration_by_2_pi_f():
    # T4 tone: v = a/(2π f) at the 31.5 Hz band centre (common_practice_no_source).
    fs, a_rms = 1024.0, CASES["T4"]["inputs"]["a_rms_tone"]["value"]
    f0 = CASES["T4"]["expected"]["f_m"]["value"]
    t = np.arange(int(40 * fs)) / fs
    s = spectral_levels(a_rms * math.sqrt(2) * np.cos(2 * np.pi * f0 * t), sample_rate=fs,
                        acceleration=True)
    k = int(np.argmin(np.abs(s.centres - f0)))
    assert abs(s.levels[k, 0] / CASES["T4"]["expected"]["tone_v_rms"]["value"] - 1) < 0.02


def _agree(x, fs, quantity, averaging=None):
    plan = make_plan(sample_rate=fs, quantity=quantity, channels=tuple(
        f"c{i}" for i in range(x.shape[1])), averaging_time=averaging)
    result = analyse_array(x, plan)
    stop = (plan.start + result.blocks * plan.block) if plan.block else x.shape[0] - plan.half
    second = spectral_levels(x[plan.start:stop], sample_rate=fs,
                             acceleration=quantity == "acceleration", averaging_time=averaging)
    compared = 0
    for c, ch in enumerate(result.channels):
        rows = compare(ch.band_levels, second, channel=c)
        bad = [r for r in rows if not r.agrees]
        assert not bad, bad
        compared += sum(r.compared for r in rows)
    return compared


@pytest.mark.parametrize("quantity,fs,seconds,averaging", [
    ("velocity", 1024.0, 60.0, None),
    ("acceleration", 1024.0, 60.0, None),
    ("velocity", 200.0, 120.0, None),  # the upper band edge near 0.45·fs
    ("acceleration", 512.0, 300.0, None),
    ("velocity", 1024.0, 90.0, 8.0),  # 8 s blocks: bands from 20 Hz have 32 lines
])
def test_filter_bank_and_spectra_agree_on_tones_and_noise(quantity, fs, seconds, averaging):
    rng = np.random.default_rng(5)
    n = int(seconds * fs)
    t = np.arange(n) / fs
    x = np.empty((n, 2))
    x[:, 0] = sum(a * np.sin(2 * np.pi * f * t + rng.uniform(0, 6))
                  for f, a in ((1.07, 3e-5), (14.0, 5e-5), (29.5, 2e-5), (63.0, 1e-5)))
    x[:, 1] = rng.standard_normal(n) * 1e-5
    assert _agree(x, fs, quantity, averaging) >= 4


def test_filter_bank_and_spectra_agree_on_the_sample_survey():
    record = open_record(SAMPLE)
    x = np.concatenate([c for _, c in iter_chunks(record)])
    # ~50 s analysed: bands from 3.15 Hz have 32 lines or more
    assert _agree(x, record.sample_rate, "velocity") >= 30


def test_chunks_or_array_give_the_same_second_method():
    x = np.random.default_rng(3).standard_normal((300 * 512 + 77, 2))  # 2.3 segments
    whole = spectral_levels(x, sample_rate=512.0, acceleration=False)
    parts = spectral_levels((x[i:i + 7000] for i in range(0, x.shape[0], 7000)),
                            sample_rate=512.0, acceleration=False)
    assert np.allclose(whole.levels, parts.levels, rtol=1e-12)
    # the odd tail joins the last segment: the lowest band keeps its 16 lines and more
    assert whole.lines[0] >= 16 and TOLERANCE <= 0.05 and MIN_LINES >= 16
