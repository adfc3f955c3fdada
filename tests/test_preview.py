"""``reportgen preview``: the served page carries the package's own numbers and checks,
follows every save, shows a bad save as the command line would, serves nothing outside
the job's folder and writes nothing there; and in a real browser (headless Chromium).

The numbers are checked against the same job computed by the library (the preview must
show the PDF's numbers), and the physics behind them against the closed form
f_n = √(k/m)/2π (Thomson & Dahleh, Ch. 2).
"""

from __future__ import annotations

import math
import os
import re
import shutil
import signal
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.document.compute import compute_document
from reportgen.job.load import load_job

SAMPLE = Path(__file__).resolve().parents[1] / "sample_jobs" / "qep-101-pump-p1.toml"
WAIT = 60.0  # generous: the speed target (one second) is measured in benchmarks/


def _fn_text(mass_kg: float, k: float = 350e3) -> str:
    """The natural frequency as the package prints it (4 significant figures)."""
    fn = math.sqrt(k / mass_kg) / (2 * math.pi)  # Thomson & Dahleh, Ch. 2
    return f"{fn:.4g}"


class Server:
    def __init__(self, job: Path, *extra: str, tmpdir: Path | None = None):
        env = {**os.environ, "PYTHONUNBUFFERED": "1"}
        if tmpdir is not None:
            env["TMPDIR"] = str(tmpdir)
        self.proc = subprocess.Popen(
            [sys.executable, "-m", "reportgen", "preview", str(job), *extra],
            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
        line = self.proc.stdout.readline()
        m = re.search(r"(http://\S+/)", line)
        assert m, f"no address printed: {line!r} {self.proc.stderr.read() if not line else ''}"
        self.url = m.group(1)

    def get(self, path: str = "", headers: dict | None = None) -> tuple[int, str]:
        req = urllib.request.Request(self.url + path.lstrip("/"), headers=headers or {})
        try:
            with urllib.request.urlopen(req, timeout=30) as r:
                return r.status, r.read().decode("utf-8", "replace")
        except urllib.error.HTTPError as exc:
            return exc.code, ""

    def generation(self) -> int:
        m = re.search(r'data-generation="(\d+)"', self.get()[1])
        return int(m.group(1)) if m else -1

    def wait_generation(self, above: int) -> str:
        end = time.monotonic() + WAIT
        while time.monotonic() < end:
            status, page = self.get()
            m = re.search(r'data-generation="(\d+)"', page)
            if m and int(m.group(1)) > above:
                return page
            time.sleep(0.1)
        raise AssertionError("the preview was not rebuilt in time")

    def stop(self) -> int:
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGINT)
        try:
            return self.proc.wait(timeout=30)
        finally:
            if self.proc.poll() is None:
                self.proc.kill()


@pytest.fixture
def job(tmp_path: Path) -> Path:
    folder = tmp_path / "jobs"
    folder.mkdir()
    path = folder / SAMPLE.name
    shutil.copy(SAMPLE, path)
    return path


@pytest.fixture
def server(job: Path):
    s = Server(job)
    s.wait_generation(0)
    yield s
    s.stop()


def _listing(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*"))
            if p.is_file()}


def test_page_shows_the_packages_numbers_and_every_check_without_script(server, job):
    doc = compute_document(load_job(job, load_plugin_set()), load_plugin_set())
    page = server.get()[1]
    assert _fn_text(1200.0) in page  # 2.717 Hz: √(350 kN/m / 1200 kg)/2π
    shown = re.findall(r'data-check="([^"]+)" data-status="(\w+)"', page)
    assert shown == [(c.id, c.status) for _, c in doc.design_checks]
    assert "calc-pump-p1-free" in page and 'id="rg-banner"' not in page


def test_a_save_rebuilds_and_a_bad_save_keeps_the_last_good_page_under_a_banner(server, job):
    before = _listing(job.parent)
    text = job.read_text(encoding="utf-8")
    g = server.generation()
    job.write_text(text.replace('mass = "1200 kg"', 'mass = "1500 kg"'), encoding="utf-8")
    page = server.wait_generation(g)
    assert _fn_text(1500.0) in page and _fn_text(1200.0) not in page

    g = server.generation()
    job.write_text(text.replace('mass = "1200 kg"', 'mass = "-5 kg"'), encoding="utf-8")
    page = server.wait_generation(g)
    banner = re.search(r'id="rg-banner">(.*?)</div>', page, re.S).group(1)
    # the command line's message: the file, the calc and the field
    assert "pump-p1-free" in banner and "mass" in banner
    assert _fn_text(1500.0) in page  # the last good build stays up

    g = server.generation()
    job.write_text(text, encoding="utf-8")
    page = server.wait_generation(g)
    assert 'id="rg-banner"' not in page and _fn_text(1200.0) in page
    # nothing was written in the job's folder but the job file itself
    assert _listing(job.parent).keys() == before.keys()


def test_serves_nothing_outside_the_job_folder_nor_to_another_host_name(server, job):
    (job.parent.parent / "secret.txt").write_text("not for the page", encoding="utf-8")
    for path in ("../secret.txt", "%2e%2e/secret.txt", "..%2fsecret.txt", "/etc/passwd",
                 "%2fetc%2fpasswd"):
        status, body = server.get(path)
        assert status == 404 and "not for the page" not in body, path
    assert server.get(job.name)[0] == 200  # the job's own files are the page's to ask for
    assert server.get(headers={"Host": "attacker.example:80"})[0] == 403


def test_ctrl_c_stops_cleanly_and_leaves_no_temporary_folder(job, tmp_path):
    tmp = tmp_path / "tmp"
    tmp.mkdir()
    s = Server(job, tmpdir=tmp)
    s.wait_generation(0)
    assert [p.name for p in tmp.iterdir()][0].startswith("reportgen-preview-")
    assert s.stop() == 0
    assert list(tmp.iterdir()) == []  # the drawings went with the server
    assert "stopped; nothing was written" in s.proc.stderr.read()


def test_another_host_needs_asking_for_and_warns(job):
    s = Server(job, "--host", "0.0.0.0")
    try:
        s.wait_generation(0)
    finally:
        assert s.stop() == 0
    assert "warning: serving on 0.0.0.0" in s.proc.stderr.read()


def test_a_missing_job_file_is_exit_2(tmp_path):
    r = subprocess.run([sys.executable, "-m", "reportgen", "preview",
                        str(tmp_path / "none.toml")], capture_output=True, text=True,
                       timeout=60)
    assert r.returncode == 2 and "no such job file" in r.stderr and "Traceback" not in r.stderr


# ------------------------------------------------------------------ a real browser


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        found = shutil.which(name)
        if found:
            return found
    return None


@pytest.fixture
def browser():
    exe = _chromium()
    if exe is None:
        pytest.skip("no Chromium on this machine (Debian: apt-get install chromium)")
    sync_api = pytest.importorskip("playwright.sync_api")
    with sync_api.sync_playwright() as p:
        b = p.chromium.launch(executable_path=exe, args=["--no-sandbox"])
        yield b
        b.close()


def test_in_a_browser_the_page_follows_each_save_and_keeps_its_scroll(server, job, browser,
                                                                       tmp_path):
    page = browser.new_page(viewport={"width": 1400, "height": 900})
    page.goto(server.url)
    page.wait_for_selector("#rg-total")
    doc = compute_document(load_job(job, load_plugin_set()), load_plugin_set())
    statuses = page.eval_on_selector_all(
        ".rg-check", "els => els.map(e => [e.dataset.check, e.dataset.status])")
    assert statuses == [[c.id, c.status] for _, c in doc.design_checks]
    assert _fn_text(1200.0) in page.inner_text(".rg-doc")
    page.screenshot(path=str(tmp_path / "preview-before.png"))

    page.evaluate("window.scrollTo(0, 900)")
    text = job.read_text(encoding="utf-8")
    job.write_text(text.replace('mass = "1200 kg"', 'mass = "1500 kg"'), encoding="utf-8")
    page.wait_for_function(f"document.body.innerText.includes('{_fn_text(1500.0)}')",
                           timeout=WAIT * 1000)
    assert page.evaluate("window.scrollY") == 900

    job.write_text(text.replace('stiffness = "350 kN/m"', 'stiffness = "350 kg"'),
                   encoding="utf-8")
    page.wait_for_selector("#rg-banner", timeout=WAIT * 1000)
    assert "stiffness" in page.inner_text("#rg-banner")
    assert _fn_text(1500.0) in page.inner_text(".rg-doc")  # the last good one stays up
    page.screenshot(path=str(tmp_path / "preview-banner.png"))
    shots = os.environ.get("REPORTGEN_SCREENSHOTS")
    if shots:  # to look at them: REPORTGEN_SCREENSHOTS=/some/folder pytest ...
        for png in tmp_path.glob("preview-*.png"):
            shutil.copy(png, Path(shots) / png.name)

    job.write_text(text, encoding="utf-8")
    page.wait_for_selector("#rg-banner", state="detached", timeout=WAIT * 1000)
    assert _fn_text(1200.0) in page.inner_text(".rg-doc")
