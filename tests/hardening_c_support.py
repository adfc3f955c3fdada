"""Helpers for the process and output-folder tests: small jobs, commands started as a
user would (own process group, SIGINT at its default), the processes they leave, and
what the output folder holds."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
import uuid
from pathlib import Path

MARK = "REPORTGEN_TEST_MARK"

# Demo scenario (invented): Quillmoor Engineering Partners, job QEP-2417.
JOB = """\
[package]
title = "Pump {n} on spring mounts: natural frequency"
client = "Ferrow Quay Developments"
project = "Ferrow Quay Data Centre, plant room B"
job_number = "QEP-2417"
calc_number = "{calc}"
revision = "{rev}"
date = "2026-12-01"
prepared_by = "T. Marsh"

[[calc]]
id = "pump-{n}"
plugin = "free_vibration"
title = "Pump {n} free vibration"
[calc.inputs]
mass = "{mass} kg"
stiffness = "350 kN/m"
damping_ratio = 0.05
initial_displacement = "2 mm"
"""


def job_text(calc: str = "QEP-2417-V-301", rev: str = "A", mass: float = 1200,
             n: str = "p1") -> str:
    return JOB.format(calc=calc, rev=rev, mass=mass, n=n)


def write_jobs(folder: Path, count: int, mass: float = 1200) -> list[Path]:
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for i in range(count):
        path = folder / f"job-{i}.toml"
        path.write_text(job_text(calc=f"QEP-2417-V-3{i:02d}", mass=mass + 10 * i,
                                 n=f"p{i}"), encoding="utf-8")
        paths.append(path)
    return paths


def _sigint_default() -> None:
    # a suite run in a background shell hands its children SIGINT ignored
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def start(args: list[str], cwd: Path | None = None, mark: str | None = None,
          **kw) -> subprocess.Popen:
    """``reportgen ARGS`` in its own process group (as a shell starts a job), marked by
    an environment variable that every process it starts inherits."""
    mark = mark or uuid.uuid4().hex
    env = {**os.environ, "PYTHONDONTWRITEBYTECODE": "1", MARK: mark}
    proc = subprocess.Popen([sys.executable, "-m", "reportgen.cli", *args], cwd=cwd, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            start_new_session=True, preexec_fn=_sigint_default, **kw)
    proc.mark = mark  # type: ignore[attr-defined]
    return proc


def marked(mark: str) -> list[int]:
    """Every live process whose environment carries ``mark`` (Linux /proc)."""
    needle = f"{MARK}={mark}".encode()
    found = []
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/environ", "rb") as fh:
                env = fh.read()
            with open(f"/proc/{entry}/stat", "rb") as fh:
                state = fh.read().rsplit(b")", 1)[1].split()[0]
        except OSError:
            continue
        if needle in env.split(b"\0") and state != b"Z":  # a zombie is already dead
            found.append(int(entry))
    return found


def wait_gone(mark: str, seconds: float) -> list[int]:
    """Poll until no marked process is left or ``seconds`` pass; return those left."""
    end = time.monotonic() + seconds
    while True:
        left = marked(mark)
        if not left or time.monotonic() > end:
            return left
        time.sleep(0.02)


def snapshot(folder: Path) -> dict[str, tuple[int, int, int]]:
    """name -> (size, mtime, inode) of every entry in ``folder``."""
    if not folder.is_dir():
        return {}
    out = {}
    for p in folder.iterdir():
        try:
            st = p.lstat()
        except FileNotFoundError:
            continue
        out[p.name] = (st.st_size, st.st_mtime_ns, st.st_ino)
    return out


def finals(snap: dict[str, tuple[int, int, int]]) -> dict[str, tuple[int, int, int]]:
    """The entries under final names (not temporaries, locks or journals)."""
    return {k: v for k, v in snap.items() if not k.startswith(".")}


def assert_not_torn(out: Path) -> None:
    """Every PDF under a final name opens and carries the results.json that lies beside
    it; the register's hashes are those of the PDFs it names."""
    import hashlib

    import pikepdf

    for pdf in sorted(out.glob("*.pdf")):
        if pdf.name == "register.pdf":
            continue
        assert pdf.read_bytes().rstrip().endswith(b"%%EOF"), f"{pdf} is truncated"
        with pikepdf.open(pdf) as doc:
            embedded = doc.attachments["results.json"].get_file().read_bytes()
        beside = pdf.with_name(pdf.stem + ".results.json")
        if beside.exists():
            assert beside.read_bytes() == embedded, f"{beside} is not the one inside {pdf}"
    register = out / "register.json"
    if register.exists():
        for row in json.loads(register.read_text(encoding="utf-8"))["packages"]:
            data = (out / row["file"]).read_bytes()
            assert hashlib.sha256(data).hexdigest() == row["sha256"], row["file"]
