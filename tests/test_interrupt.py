"""Interrupted builds leave the previous package or a complete new one, never a torn PDF;
folder builds survive a bad job; --force is needed to replace a package.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from reportgen.cli import main
from reportgen.pipeline.commit import STALE_PART_SECONDS, sweep_stale_parts

STEM = "QEP-2417-V-192-A"

# Demo scenario (invented): Quillmoor Engineering Partners, job QEP-2417.
GOOD = """\
[package]
title = "Pump P1 on spring mounts: natural frequency"
client = "Ferrow Quay Developments"
project = "Ferrow Quay Data Centre, plant room B"
job_number = "QEP-2417"
calc_number = "QEP-2417-V-192"
revision = "A"
date = "2026-12-01"
prepared_by = "T. Marsh"

[[calc]]
id = "pump-p1"
plugin = "free_vibration"
title = "Pump P1 free vibration"
[calc.inputs]
mass = "1200 kg"
stiffness = "350 kN/m"
damping_ratio = 0.05
"""

# The child build, with a hook that stops or interrupts it at a chosen moment:
#   kill-at-pdf-sync  the PDF's temporary file is being synced: write a marker and wait
#   int-at-write      SIGINT to itself while the first temporary file is synced
#   int-at-commit     SIGINT to itself just before the first rename into place
CHILD = r"""
import os, signal, sys, time
from pathlib import Path

mode, marker, job, out = sys.argv[1:5]
real_fsync, real_replace = os.fsync, os.replace
state = {"done": False}

def fsync(fd):
    real_fsync(fd)
    try:
        name = os.readlink(f"/proc/self/fd/{fd}")
    except OSError:
        return
    if not name.endswith(".part") or state["done"]:
        return
    if mode == "kill-at-pdf-sync" and ".pdf." in name:
        state["done"] = True
        Path(marker).write_text(name)
        time.sleep(120)
    elif mode == "int-at-write":
        state["done"] = True
        Path(marker).write_text(name)
        os.kill(os.getpid(), signal.SIGINT)

def replace(src, dst, *a, **k):
    if mode == "int-at-commit" and not state["done"] and str(src).endswith(".part"):
        state["done"] = True
        Path(marker).write_text(str(dst))
        os.kill(os.getpid(), signal.SIGINT)
    return real_replace(src, dst, *a, **k)

os.fsync, os.replace = fsync, replace
from reportgen.cli import main
sys.exit(main(["build", job, "--out", out, "--force"]))
"""


def _env() -> dict[str, str]:
    return {**os.environ, "PYTHONDONTWRITEBYTECODE": "1"}


def _sigint_default() -> None:
    # A suite run in a background shell hands its children SIGINT ignored (and Python
    # keeps an inherited SIG_IGN); the command under test gets Ctrl-C as a terminal would.
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _assert_package_whole(out: Path) -> None:
    """Under the final names: nothing, or a PDF that opens and ends, and valid JSON."""
    import pikepdf

    pdf = out / f"{STEM}.pdf"
    results = out / f"{STEM}.results.json"
    if pdf.exists():
        data = pdf.read_bytes()
        assert data.rstrip().endswith(b"%%EOF"), "truncated PDF under the final name"
        with pikepdf.open(pdf) as doc:
            assert len(doc.pages) >= 1
            assert "results.json" in doc.attachments
    if results.exists():
        assert json.loads(results.read_text(encoding="utf-8"))["calcs"]
    for part in out.glob("*.part"):
        assert part.name.startswith("."), part  # a temporary never takes a final name


@pytest.fixture(scope="module")
def calc_set(tmp_path_factory):
    """A folder of one good job and two bad ones, built once; the package is the 'old' one."""
    root = tmp_path_factory.mktemp("calcset")
    jobs = root / "jobs"
    jobs.mkdir()
    (jobs / "a-good.toml").write_text(GOOD, encoding="utf-8")
    (jobs / "b-negative-mass.toml").write_text(GOOD.replace('"1200 kg"', '"-1200 kg"')
                                               .replace("V-192", "V-193"), encoding="utf-8")
    (jobs / "c-broken-toml.toml").write_text(GOOD.replace('"350 kN/m"', '"350 kN/m')
                                             .replace("V-192", "V-194"), encoding="utf-8")
    out = root / "out"
    return jobs, out


def test_folder_build_with_bad_jobs_builds_the_others(calc_set, capsys):
    jobs, out = calc_set
    code = main(["build", str(jobs), "--out", str(out), "--jobs", "1"])
    cap = capsys.readouterr()
    assert code == 2, cap.err
    assert (out / f"{STEM}.pdf").is_file() and (out / f"{STEM}.results.json").is_file()
    assert not list(out.glob("QEP-2417-V-193*")) and not list(out.glob("QEP-2417-V-194*"))
    assert "b-negative-mass.toml" in cap.err and "field 'inputs.mass'" in cap.err
    assert "c-broken-toml.toml" in cap.err and "line" in cap.err
    assert "1 of 3 packages built" in cap.out
    register = json.loads((out / "register.json").read_text(encoding="utf-8"))
    assert [r["calc_number"] for r in register["packages"]] == ["QEP-2417-V-192"]
    _assert_package_whole(out)


def test_existing_package_needs_force(calc_set, capsys):
    jobs, out = calc_set
    pdf, results = out / f"{STEM}.pdf", out / f"{STEM}.results.json"
    assert pdf.is_file(), "runs after the folder build"
    before = (pdf.read_bytes(), results.read_bytes(), pdf.stat().st_mtime_ns)
    code = main(["build", str(jobs / "a-good.toml"), "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert "already exists" in err and "--force" in err
    assert (pdf.read_bytes(), results.read_bytes(), pdf.stat().st_mtime_ns) == before


def _child(mode: str, tmp: Path, job: Path, out: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-c", CHILD, mode, str(tmp / "marker"), str(job),
                             str(out)], env=_env(), stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, preexec_fn=_sigint_default)


def _wait_for(path: Path, proc: subprocess.Popen, seconds: float = 120) -> None:
    end = time.monotonic() + seconds
    while not path.exists():
        assert proc.poll() is None, proc.communicate()
        assert time.monotonic() < end, "the child never reached the moment"
        time.sleep(0.02)


def test_sigkill_while_the_new_pdf_is_synced_leaves_the_old_package(calc_set, tmp_path):
    jobs, out = calc_set
    pdf = out / f"{STEM}.pdf"
    old = (pdf.read_bytes(), pdf.stat().st_ino)
    proc = _child("kill-at-pdf-sync", tmp_path, jobs / "a-good.toml", out)
    try:
        _wait_for(tmp_path / "marker", proc)
        proc.send_signal(signal.SIGKILL)
    finally:
        proc.wait(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    assert (pdf.read_bytes(), pdf.stat().st_ino) == old, "the previous package must be untouched"
    left = Path((tmp_path / "marker").read_text())
    assert left.exists() and left.name.startswith(f".{STEM}.pdf.") and left.suffix == ".part"
    _assert_package_whole(out)
    # a later build sweeps what the killed one left, once it is clearly stale
    stale = time.time() - STALE_PART_SECONDS - 5
    for part in out.glob(f".{STEM}.*.part"):  # the results' temporary too
        os.utime(part, (stale, stale))


def test_sigint_during_the_commit_still_gives_a_complete_new_package(calc_set, tmp_path):
    jobs, out = calc_set
    pdf = out / f"{STEM}.pdf"
    old_inode = pdf.stat().st_ino
    stale_before = list(out.glob(f".{STEM}.pdf.*.part"))
    proc = _child("int-at-commit", tmp_path, jobs / "a-good.toml", out)
    _, err = proc.communicate(timeout=240)
    assert (tmp_path / "marker").exists(), err
    assert proc.returncode == 130, err
    assert "interrupted" in err and "Traceback" not in err
    # the interrupt was held back until every output had its final name
    assert pdf.stat().st_ino != old_inode
    _assert_package_whole(out)
    assert not list(out.glob("*.part")), "the sweep removes stale temporaries" if (
        stale_before) else "no temporary may be left"


def test_sigint_while_writing_cleans_up_and_keeps_the_old_package(calc_set, tmp_path):
    jobs, out = calc_set
    pdf, results = out / f"{STEM}.pdf", out / f"{STEM}.results.json"
    old = (pdf.read_bytes(), pdf.stat().st_ino, results.stat().st_ino)
    proc = _child("int-at-write", tmp_path, jobs / "a-good.toml", out)
    _, err = proc.communicate(timeout=240)
    assert (tmp_path / "marker").exists(), err
    assert proc.returncode == 130, err
    assert "Traceback" not in err
    assert (pdf.read_bytes(), pdf.stat().st_ino, results.stat().st_ino) == old
    assert not list(out.glob("*.part")), "temporary files are removed on SIGINT"


@pytest.mark.parametrize("sig,after", [(signal.SIGKILL, 0.5), (signal.SIGKILL, 1.5),
                                       (signal.SIGKILL, 3.0), (signal.SIGINT, 3.0),
                                       (signal.SIGTERM, 2.0)])
def test_signal_at_a_random_moment_never_tears_the_package(sig, after, calc_set):
    jobs, out = calc_set
    parts_before = set(out.glob("*.part"))
    proc = subprocess.Popen([sys.executable, "-m", "reportgen.cli", "build",
                             str(jobs / "a-good.toml"), "--out", str(out), "--force"],
                            env=_env(), stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, preexec_fn=_sigint_default)
    time.sleep(after)
    proc.send_signal(sig)
    _, err = proc.communicate(timeout=240)
    if sig != signal.SIGKILL and proc.returncode == 130:
        assert "Traceback" not in err and "interrupted" in err
    _assert_package_whole(out)
    if sig != signal.SIGKILL:  # (a SIGKILL before may have left its own)
        assert set(out.glob("*.part")) <= parts_before, "SIGINT cleans up its temporaries"


def test_sweep_removes_only_stale_temporaries(tmp_path):
    target = tmp_path / f"{STEM}.pdf"
    old = tmp_path / f".{STEM}.pdf.abc123.part"
    young = tmp_path / f".{STEM}.pdf.def456.part"
    other = tmp_path / ".someone-else.pdf.xyz.part"
    for p in (old, young, other):
        p.write_bytes(b"%PDF-1.7 partial")
    now = time.time()
    for p in (old, other):
        os.utime(p, (now - 3600, now - 3600))
    removed = sweep_stale_parts(tmp_path, [target], now=now)
    assert removed == [old]
    assert not old.exists() and young.exists() and other.exists()
