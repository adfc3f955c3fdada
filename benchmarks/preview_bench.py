"""Live preview: time from a save of the job file to the updated page in a browser.

Starts ``reportgen preview`` on a copy of each sample job, opens it in headless Chromium
(Debian's ``chromium``; Playwright drives it), then saves the job file N times with a
changed input and measures, for each save, the wall time until the page's text shows the
new value. Reports the median and the largest per job. The target: within one second
for the sample jobs.

    python benchmarks/preview_bench.py [--saves 15] [JOB.toml ...]
"""

from __future__ import annotations

import argparse
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _edit(text: str, i: int) -> tuple[str, str]:
    """The job with its first mass (or weight) changed, and a marker of the new page:
    the generation number the server gives each build."""
    m = re.search(r'^(\s*mass\s*=\s*")([0-9.]+)(\s*\w+")', text, re.M)
    if m is None:
        m = re.search(r'^(\s*\w*mass\w*\s*=\s*")([0-9.]+)(\s*\w+")', text, re.M)
    assert m, "no mass input to change"
    value = float(m.group(2)) * (1.0 + 0.01 * (i % 7 + 1))
    return text[:m.start(2)] + f"{value:.6g}" + text[m.end(2):], f"{value:.6g}"


def bench(job: Path, saves: int, chromium: str) -> list[float]:
    from playwright.sync_api import sync_playwright

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "job"
        shutil.copytree(job.parent, folder, ignore=shutil.ignore_patterns("out", "*.pdf"))
        path = folder / job.name
        proc = subprocess.Popen([sys.executable, "-m", "reportgen", "preview", str(path)],
                                stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
        try:
            url = re.search(r"(http://\S+/)", proc.stdout.readline()).group(1)
            original = path.read_text(encoding="utf-8")
            times = []
            with sync_playwright() as p:
                browser = p.chromium.launch(executable_path=chromium, args=["--no-sandbox"])
                page = browser.new_page()
                page.goto(url)
                page.wait_for_function("document.body.dataset.generation >= 1",
                                       timeout=120_000)
                for i in range(saves):
                    gen = int(page.evaluate("document.body.dataset.generation"))
                    text, _ = _edit(original, i)
                    t0 = time.perf_counter()
                    path.write_text(text, encoding="utf-8")
                    page.wait_for_function(
                        f"Number(document.body.dataset.generation) > {gen}", timeout=60_000,
                        polling="raf")
                    times.append(time.perf_counter() - t0)
                    time.sleep(0.3)  # let the watcher settle between saves
                browser.close()
            return times
        finally:
            proc.terminate()
            proc.wait(timeout=30)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("jobs", nargs="*", type=Path)
    ap.add_argument("--saves", type=int, default=15)
    args = ap.parse_args()
    chromium = shutil.which("chromium") or shutil.which("chromium-browser")
    if chromium is None:
        sys.exit("no Chromium found (Debian: apt-get install chromium)")
    jobs = args.jobs or sorted((ROOT / "sample_jobs").glob("qep-10[1-5]-*.toml"))
    print(f"{'job':40} {'median s':>9} {'max s':>7}  (save -> updated page, {args.saves}"
          " saves)")
    for job in jobs:
        times = bench(job, args.saves, chromium)
        print(f"{job.name:40} {statistics.median(times):9.3f} {max(times):7.3f}")


if __name__ == "__main__":
    main()
