"""Bad data files and settings: each raises DataFileError naming the file and the column, line
or field, with the numbers an engineer needs to mend it."""

from __future__ import annotations

import numpy as np
import pytest
from reportgen_plugins.measured_vibration.method import (
    NYQUIST_FRACTION,
    analyse_record,
    check_length,
    make_plan,
)
from reportgen_plugins.measured_vibration.readers import iter_chunks, open_record
from reportgen_plugins.vibration_criteria import DataFileError, UnknownCriterionError, lookup
from scipy.io import wavfile


def _csv(tmp_path, text: str, name: str = "survey.csv"):
    path = tmp_path / name
    path.write_text(text)
    return path


def _rows(n: int, fs: float = 100.0, start: int = 0) -> list[str]:
    return [f"{(start + i) / fs:.4f},{np.sin(i):.4f}" for i in range(n)]


def _read_all(record):
    for _ in iter_chunks(record, 64):
        pass


def _fails(call, *, column=None, row=None, words=()):
    with pytest.raises(DataFileError) as info:
        call()
    err = info.value
    if column is not None:
        assert err.column == column, str(err)
    if row is not None:
        assert err.row == row, str(err)
    for w in words:
        assert w in str(err), str(err)
    return err


def test_missing_file_and_unknown_type(tmp_path):
    _fails(lambda: open_record(tmp_path / "gone.csv"), words=("gone.csv", "does not exist"))
    other = _csv(tmp_path, "x", "data.xlsx")
    _fails(lambda: open_record(other), words=("data.xlsx", ".csv, .wav or .npy"))


def test_a_column_that_does_not_exist(tmp_path):
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(_rows(10)))
    _fails(lambda: open_record(path, channels=["x"]), column="x", words=("'z'",))
    _fails(lambda: open_record(path, time_column="clock"), column="clock")


def test_time_going_backwards_names_its_line(tmp_path):
    rows = _rows(300)
    rows[199] = rows[197]  # line 201 of the file (header is line 1)
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), column="t [s]", row=201,
           words=("does not increase",))


def test_irregular_time_names_its_line(tmp_path):
    rows = _rows(150) + _rows(150, start=151)  # one sample missing after line 151
    path = _csv(tmp_path, "time,z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), column="time", row=152,
           words=("irregular sampling", "0.02 s", "0.01 s"))


def test_a_slow_drift_off_the_grid_is_irregular(tmp_path):
    # each step 3 % long: within the step tolerance, but off the regular grid after a while
    times = np.cumsum(np.r_[0.0, np.full(5000, 0.01), np.full(5000, 0.0103)])
    text = "\n".join(f"{t:.6f},1.0" for t in times)
    path = _csv(tmp_path, "t,z [mm/s]\n" + text)
    _fails(lambda: _read_all(open_record(path)), column="t", words=("off the regular grid",))


def test_nan_empty_and_unreadable_samples(tmp_path):
    rows = _rows(100)
    rows[40] = "0.4000,nan"
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), column="z", row=42, words=("not a number",))
    rows[40] = "0.4000,"
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), column="z [mm/s]", row=42,
           words=("empty sample",))
    rows[40] = "0.4000,1.2.3"
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), row=42, words=("'1.2.3'",))
    rows[40] = ""
    path = _csv(tmp_path, "t [s],z [mm/s]\n" + "\n".join(rows))
    _fails(lambda: _read_all(open_record(path)), row=42, words=("empty row",))


def test_trailing_blank_lines_and_comments_are_fine(tmp_path):
    path = _csv(tmp_path, "# logger 7, invented\nt [s],z [mm/s]\n" + "\n".join(_rows(50))
                + "\n\n\n")
    record = open_record(path)
    assert record.sample_rate == 100.0
    assert sum(c.shape[0] for _, c in iter_chunks(record, 16)) == 50


def test_units_decide_the_quantity_and_must_agree(tmp_path):
    path = _csv(tmp_path, "t [s],x [g],z [mm/s]\n" + "\n".join(f"{i / 100},1,2"
                                                                for i in range(20)))
    _fails(lambda: open_record(path), words=("same quantity", "'x [g]' is acceleration"))
    record = open_record(path, channels=["x"])
    assert record.quantity == "acceleration" and record.scale == (9.80665,)
    _fails(lambda: open_record(path, channels=["z"], quantity="acceleration"),
           column="z [mm/s]", words=("velocity",))
    _fails(lambda: open_record(path, channels=["z"], unit="in/s"), column="z [mm/s]")
    bare = _csv(tmp_path, "t,z\n" + "\n".join(_rows(20)), "bare.csv")
    _fails(lambda: open_record(bare), column="z", words=("no unit",))
    assert open_record(bare, unit="mm/s").scale == (1e-3,)
    odd = _csv(tmp_path, "t,z [kg]\n" + "\n".join(_rows(20)), "odd.csv")
    _fails(lambda: open_record(odd), column="z [kg]", words=("neither a velocity",))


def test_no_time_column_needs_a_sample_rate(tmp_path):
    path = _csv(tmp_path, "x [mm/s],z [mm/s]\n" + "\n".join("1,2" for _ in range(20)))
    _fails(lambda: open_record(path), column="sample_rate")
    assert open_record(path, sample_rate=200.0).sample_rate == 200.0
    timed = _csv(tmp_path, "t,z [mm/s]\n" + "\n".join(_rows(20)), "timed.csv")
    _fails(lambda: open_record(timed, sample_rate=150.0), column="t",
           words=("100 samples/s", "150 Hz"))


def test_npy_and_wav_need_their_settings(tmp_path):
    npy = tmp_path / "r.npy"
    np.save(npy, np.zeros((100, 2)))
    _fails(lambda: open_record(npy, unit="mm/s"), column="sample_rate")
    _fails(lambda: open_record(npy, sample_rate=100.0), column="unit")
    np.save(npy, np.zeros((4, 4, 4)))
    _fails(lambda: open_record(npy, sample_rate=100.0, unit="mm/s"), words=("3-D",))
    wav = tmp_path / "r.wav"
    wavfile.write(wav, 1000, np.zeros(100, dtype=np.int16))
    _fails(lambda: open_record(wav), column="calibration")
    _fails(lambda: open_record(wav, calibration="10 kg"), column="calibration")
    broken = tmp_path / "broken.wav"
    broken.write_bytes(b"RIFF0000WAVEjunk")
    _fails(lambda: open_record(broken, calibration="1 mm/s"), words=("broken.wav",))


def test_sample_rate_too_low_for_band_high_says_the_numbers():
    err = _fails(lambda: make_plan(sample_rate=150.0, quantity="velocity", channels=("z",),
                                   band_high=80.0), column="band_high",
                 words=("150 samples/s", "89.13 Hz", f"{NYQUIST_FRACTION * 150:.4g} Hz",
                        "198.1 samples/s"))
    assert "80 Hz band" in err.message
    make_plan(sample_rate=200.0, quantity="velocity", channels=("z",))  # 89.1 < 90: fine


def test_a_record_too_short_says_the_numbers(tmp_path):
    plan = make_plan(sample_rate=100.0, quantity="acceleration", channels=("z",),
                     band_high=31.5, file="short.npy")
    need = plan.required_samples()
    # the rule: integration half-length at both ends + filter settling + 10 periods of the
    # lowest band centre
    assert need == 2 * plan.half + plan.settle + 1000
    err = _fails(lambda: check_length(plan, need - 1), column="band_low",
                 words=("short.npy", "10 periods of 1 Hz"))
    assert f"{need / 100:.4g} s" in err.message
    check_length(plan, need)
    path = tmp_path / "short.npy"
    np.save(path, np.zeros((need - 1, 1)))
    record = open_record(path, sample_rate=100.0, unit="m/s**2")
    _fails(lambda: analyse_record(record, plan), column="band_low")


def test_averaging_time_must_be_positive_and_fit():
    _fails(lambda: make_plan(sample_rate=100.0, quantity="velocity", channels=("z",),
                             band_high=31.5, averaging_time=0.0), column="averaging_time")
    plan = make_plan(sample_rate=100.0, quantity="velocity", channels=("z",), band_high=31.5,
                     averaging_time=600.0)
    assert plan.required_samples() == plan.settle + 60000


def test_an_unknown_criterion_name_suggests_the_nearest():
    with pytest.raises(UnknownCriterionError) as info:
        lookup("ISO-ofice")
    assert info.value.suggestions[0] == "ISO-office" and "ISO-ofice" in str(info.value)
