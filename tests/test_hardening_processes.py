"""Processes and signals: nothing outlives the command, nothing is committed after it is
killed, Ctrl-C leaves the disk as the message says, two builds of one package never both
write it, and the small process-level faults (a closed stdout, Dask missing, a Dask
scheduler in another folder, shell completion).

Invariants checked (no outside reference applies): after SIGKILL of the command no
process it started is alive 2 s later and the output folder does not change; every PDF
under a final name carries the results.json beside it and the register's SHA-256 values
match the PDFs (hashlib as the independent check).
"""

from __future__ import annotations

import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from hardening_c_support import (
    assert_not_torn,
    finals,
    job_text,
    snapshot,
    start,
    wait_gone,
    write_jobs,
)

from reportgen.cli import main

pytestmark = pytest.mark.skipif(not sys.platform.startswith("linux"),
                                reason="reads /proc to find the processes a command left")

SETTLE = 3.0  # seconds the output folder is watched after a kill


@pytest.fixture(scope="module")
def earlier(tmp_path_factory) -> tuple[Path, Path]:
    """Three small jobs and their packages built once (mass 1200 kg); each test starts
    from a copy of these packages and rebuilds with other inputs, so an old and a new
    file can be told apart."""
    root = tmp_path_factory.mktemp("earlier")
    jobs = root / "jobs"
    write_jobs(jobs, 3, mass=1200)
    out = root / "out"
    assert main(["build", str(jobs), "--out", str(out), "--jobs", "1"]) in (0, 1)
    write_jobs(jobs, 3, mass=1500)  # what the tests build: different numbers
    return jobs, out


def _fresh(earlier, tmp_path: Path) -> tuple[Path, Path]:
    jobs, built = earlier
    out = tmp_path / "out"
    shutil.copytree(built, out)
    return jobs, out


def _command(mode: str, jobs: Path, out: Path) -> list[str]:
    if mode == "single":  # forked child, drawing pool, layout here
        return ["build", str(jobs / "job-0.toml"), "--out", str(out), "--force", "--jobs", "2"]
    if mode == "folder":  # spawned set workers
        return ["build", str(jobs), "--out", str(out), "--force", "--jobs", "2"]
    return ["build", str(jobs), "--out", str(out), "--force", "--jobs", "2",
            "--executor", "dask"]  # a LocalCluster's worker processes


# (mode, seed): the kill lands at a moment drawn from the seed
KILLS = [("single", 1), ("single", 2), ("folder", 3), ("folder", 5), ("dask", 24)]
LATEST = {"single": 4.0, "folder": 8.0, "dask": 10.0}


@pytest.mark.parametrize("mode,seed", KILLS)
def test_sigkill_of_the_command_leaves_no_process_and_no_late_write(mode, seed, earlier,
                                                                   tmp_path):
    if mode == "dask":
        pytest.importorskip("dask.distributed")
    jobs, out = _fresh(earlier, tmp_path)
    delay = random.Random(seed).uniform(0.3, LATEST[mode])
    proc = start(_command(mode, jobs, out))
    time.sleep(delay)
    proc.kill()  # the command alone, as the OOM killer or `kill -9 PID` would
    proc.wait()
    killed = snapshot(out)
    left = wait_gone(proc.mark, 2.0)
    assert not left, f"{len(left)} processes outlived the command by 2 s (kill at {delay:.2f} s)"
    time.sleep(SETTLE)
    assert snapshot(out) == killed, "the output folder changed after the command was killed"
    from reportgen.pipeline.commit import recover

    recover(out)  # what the next build or verify does with a commit cut short
    assert_not_torn(out)


INTERRUPTS = [("single", 5), ("single", 15), ("folder", 1), ("folder", 6)]
COMMITTED = re.compile(r"interrupted after committing (.*); nothing else was written")


@pytest.mark.parametrize("mode,seed", INTERRUPTS)
def test_ctrl_c_message_and_disk_agree_and_no_worker_traceback(mode, seed, earlier,
                                                              tmp_path):
    jobs, out = _fresh(earlier, tmp_path)
    before = finals(snapshot(out))
    delay = random.Random(seed).uniform(0.3, LATEST[mode])
    proc = start(_command(mode, jobs, out))
    time.sleep(delay)
    os.killpg(proc.pid, signal.SIGINT)  # what Ctrl-C sends: the whole process group
    _, err = proc.communicate(timeout=240)
    assert "Traceback" not in err, err
    assert not wait_gone(proc.mark, 2.0)
    after = finals(snapshot(out))
    changed = {name for name in after if before.get(name) != after[name]}
    if proc.returncode == 130:
        if "nothing was committed" in err:
            assert after == before, "the message says nothing was committed"
        else:
            match = COMMITTED.search(err)
            assert match, err
            named = {Path(p).name for p in match.group(1).split(", ")}
            assert changed == named
    else:
        assert proc.returncode in (0, 1), err  # it had finished before the signal
    assert_not_torn(out)


def test_two_builds_of_one_package_at_once_one_builds_the_other_exits_2(tmp_path):
    job = tmp_path / "job.toml"
    job.write_text(job_text(), encoding="utf-8")
    locked = 0
    for run in range(3):
        out = tmp_path / f"out{run}"
        procs = [start(["build", str(job), "--out", str(out)]) for _ in range(2)]
        errs = [p.communicate(timeout=240)[1] for p in procs]
        codes = [p.returncode for p in procs]
        assert sorted(codes)[0] in (0, 1) and sorted(codes)[1] == 2, (codes, errs)
        loser = errs[codes.index(2)]
        assert "Traceback" not in loser
        if "another build of QEP-2417-V-301 revision A is writing into" in loser:
            locked += 1
        else:  # the other had already finished: then it is the existing package
            assert "already exists" in loser and "--force" in loser, loser
        assert sorted(p.name for p in out.iterdir()) == [
            "QEP-2417-V-301-A.pdf", "QEP-2417-V-301-A.results.json"]  # no lock file left
        assert_not_torn(out)
    assert locked, "the two builds never overlapped"


def test_a_held_lock_refuses_at_once_and_writes_nothing(tmp_path):
    job = tmp_path / "job.toml"
    job.write_text(job_text(), encoding="utf-8")
    out = tmp_path / "out"
    out.mkdir()
    holder = subprocess.Popen([sys.executable, "-c", (
        "import sys, time; from filelock import FileLock;"
        " lock = FileLock(sys.argv[1]); lock.acquire(); print('held', flush=True);"
        " time.sleep(60)"), str(out / ".QEP-2417-V-301-A.lock")], stdout=subprocess.PIPE,
        text=True)
    try:
        assert holder.stdout.readline().strip() == "held"
        t0 = time.monotonic()
        proc = start(["build", str(job), "--out", str(out)])
        _, err = proc.communicate(timeout=120)
        took = time.monotonic() - t0
    finally:
        holder.kill()
        holder.wait()
    assert proc.returncode == 2, err
    assert f"another build of QEP-2417-V-301 revision A is writing into {out}" in err
    assert [p.name for p in out.iterdir()] == [".QEP-2417-V-301-A.lock"]  # the holder's
    assert took < 30, "refused before the compute, not after"


def test_dask_executor_without_dask_gives_the_install_hint(tmp_path):
    jobs = tmp_path / "jobs"
    write_jobs(jobs, 2)
    out = tmp_path / "out"
    hide = ("import sys; sys.modules['dask'] = None; sys.modules['distributed'] = None;"
            " from reportgen.cli import main; sys.exit(main(sys.argv[1:]))")
    for args in (["build", str(jobs), "--out", str(out), "--executor", "dask"],
                 ["build", str(jobs / "job-0.toml"), "--out", str(out), "--executor", "dask"]):
        proc = subprocess.run([sys.executable, "-c", hide, *args], capture_output=True,
                              text=True, timeout=120)
        assert proc.returncode == 2, proc.stderr
        assert "pip install 'reportgen[dask]'" in proc.stderr
        assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr
        assert not out.exists()


@pytest.mark.parametrize("args", [["plugins"], ["schema"], ["--help"]])
def test_output_into_a_closed_pipe_ends_quietly(args):
    read, write = os.pipe()
    os.close(read)  # the reader has gone, as `reportgen plugins | head -1` after one line
    try:
        proc = subprocess.run([sys.executable, "-m", "reportgen.cli", *args], stdout=write,
                              stderr=subprocess.PIPE, text=True, timeout=120)
    finally:
        os.close(write)
    assert proc.stderr == "", proc.stderr
    assert proc.returncode in (0, 141)  # --help's one short write may not notice


def test_a_real_plugins_pipe_into_head():
    proc = subprocess.run(f"{sys.executable} -m reportgen.cli plugins | head -c 1",
                          shell=True, capture_output=True, text=True, timeout=120)
    assert proc.stderr == "" and len(proc.stdout) == 1


def test_shell_completion_comes_from_the_real_parser(capsys):
    assert main(["completion", "bash"]) == 0
    bash = capsys.readouterr().out
    for word in ("build", "verify", "completion", "--executor", "--template-dir", "--force"):
        assert word in bash
    if shutil.which("bash"):
        check = subprocess.run(["bash", "-n"], input=bash, capture_output=True, text=True)
        assert check.returncode == 0, check.stderr
    assert main(["completion", "zsh"]) == 0
    zsh = capsys.readouterr().out
    assert zsh.startswith("#compdef reportgen") and "--executor" in zsh


def test_start_up_does_not_load_the_completion_library():
    code = ("import sys\nfrom reportgen.cli import main\ntry:\n    main(['--help'])\n"
            "except SystemExit:\n    pass\nprint('shtab' in sys.modules, file=sys.stderr)")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60)
    assert proc.stderr.strip() == "False"


def test_dask_scheduler_in_another_folder_with_relative_paths(tmp_path):
    """The README's Dask example, as written: scheduler and worker started in another
    folder, the command given relative job and output paths."""
    pytest.importorskip("dask.distributed")
    cluster, work = tmp_path / "cluster", tmp_path / "work"
    cluster.mkdir()
    write_jobs(work / "jobs", 2)
    started = []

    def launch(*args: str) -> subprocess.Popen:
        proc = subprocess.Popen([sys.executable, "-m", *args], cwd=cluster,
                                stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                start_new_session=True)
        started.append(proc)
        return proc

    try:
        launch("distributed.cli.dask_scheduler", "--scheduler-file", "sched.json",
               "--port", "0", "--no-dashboard", "--host", "127.0.0.1")
        end = time.monotonic() + 90
        address = None
        while address is None:
            assert time.monotonic() < end, "the scheduler did not start"
            time.sleep(0.1)
            try:
                address = json.loads((cluster / "sched.json").read_text())["address"]
            except (OSError, ValueError, KeyError):
                pass  # not written yet, or not whole yet
        launch("distributed.cli.dask_worker", address, "--nworkers", "1", "--nthreads", "1",
               "--no-dashboard")
        proc = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", "jobs",
                               "--out", "out", "--executor", "dask", "--scheduler", address],
                              cwd=work, capture_output=True, text=True, timeout=300)
    finally:
        for p in started:  # only what this test started, by process group
            try:
                os.killpg(p.pid, signal.SIGTERM)
            except ProcessLookupError:
                pass
        for p in started:
            try:
                p.wait(timeout=20)
            except subprocess.TimeoutExpired:
                os.killpg(p.pid, signal.SIGKILL)
                p.wait()
    assert proc.returncode in (0, 1), proc.stderr
    assert "2 of 2 packages built" in proc.stdout
    assert sorted(p.name for p in (work / "out").glob("*.pdf")) == [
        "QEP-2417-V-300-A.pdf", "QEP-2417-V-301-A.pdf", "register.pdf"]
    assert not (cluster / "out").exists() and not (cluster / "jobs").exists()
    assert "out/QEP-2417-V-300-A.pdf" in proc.stdout  # reported as the user named it
    assert_not_torn(work / "out")


WATCHED_CHILD = r"""
import os, sys, time
from reportgen.pipeline import lifeline

lifeline._set_death_signal = lambda: False  # as where the kernel has no death signal
parent = os.getpid()
pid = os.fork()
if pid == 0:
    lifeline.bind_to_parent(parent)
    time.sleep(60)
    os._exit(0)
print(pid, flush=True)
os._exit(0)  # the parent dies at once
"""


def test_the_portable_watcher_ends_a_helper_whose_parent_died():
    from hardening_c_support import MARK

    mark = f"watch-{os.getpid()}-{time.monotonic_ns()}"
    proc = subprocess.run([sys.executable, "-c", WATCHED_CHILD], capture_output=True,
                          text=True, timeout=60, env={**os.environ, MARK: mark})
    assert proc.returncode == 0 and proc.stdout.strip().isdigit(), proc.stderr
    assert not wait_gone(mark, 2.0), "the helper outlived its parent by 2 s"
