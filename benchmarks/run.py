"""Speed and scale benchmark: each target as a ratio against its baseline measured in the
same run, plus absolute times on this machine. Timings live here, never in unit tests.

    python benchmarks/run.py            # full run (about 15 minutes on 2 cores)
    python benchmarks/run.py --quick    # smoke run: one repeat, small sets, no verdicts

Every time is a whole process (subprocess) wall time, median of ``--runs`` repeats, runs
interleaved with their baseline so a load change on the machine hits both alike.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
BENCH_JOB = HERE / "bench_12.toml"
SAMPLES = REPO / "sample_jobs"
BIN = Path(sys.executable).parent
REPORTGEN = [str(BIN / "reportgen")] if (BIN / "reportgen").exists() else [
    sys.executable, "-m", "reportgen.cli"]

#: The floor: one process that imports WeasyPrint and writes the PDF from the final HTML.
FLOOR = """
import sys, weasyprint
html = open(sys.argv[1], encoding="utf-8").read()
weasyprint.HTML(string=html).write_pdf(sys.argv[2], pdf_variant="pdf/a-3b")
"""

#: For information only: the floor with the interpreter settings the build itself uses
#: around the layout (cyclic garbage collection paused, no teardown at exit), so the report
#: shows how much of the margin over the floor comes from those settings.
FLOOR_TUNED = """
import gc, os, sys, weasyprint
html = open(sys.argv[1], encoding="utf-8").read()
gc.disable()
weasyprint.HTML(string=html).write_pdf(sys.argv[2], pdf_variant="pdf/a-3b")
os._exit(0)
"""

#: Runs a command and prints the peak resident memory of its processes (KiB): the largest
#: single process (getrusage of children, as /usr/bin/time reports) and, sampled every
#: 20 ms, the largest sum of proportional set sizes (PSS) over the whole process tree
#: (the build plus its forked helpers; shared pages counted once).
MEASURE = """
import json, resource, subprocess, sys, threading, time
proc = subprocess.Popen(sys.argv[1:], stdout=subprocess.DEVNULL)
peak_tree = 0
def sample():
    global peak_tree
    try:
        import psutil
    except ImportError:
        return
    try:
        root = psutil.Process(proc.pid)
        while proc.poll() is None:
            procs = [root] + root.children(recursive=True)
            total = 0
            for p in procs:
                try:  # PSS: pages a fork shares with its parent are counted once
                    total += p.memory_full_info().pss
                except (psutil.Error, AttributeError):
                    try:
                        total += p.memory_info().rss
                    except psutil.Error:
                        pass
            peak_tree = max(peak_tree, total // 1024)
            time.sleep(0.02)
    except psutil.Error:
        pass
t = threading.Thread(target=sample, daemon=True)
t.start()
code = proc.wait()
t.join()
print(json.dumps({"code": code, "max_process_kib":
                  resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss,
                  "tree_kib": peak_tree}))
"""


def run(cmd: list[str], env: dict[str, str] | None = None, ok=(0, 1)) -> float:
    t0 = time.perf_counter()
    proc = subprocess.run(cmd, env=env, capture_output=True, text=True)
    elapsed = time.perf_counter() - t0
    if proc.returncode not in ok:
        sys.exit(f"benchmark command failed ({proc.returncode}): {' '.join(cmd)}\n"
                 f"{proc.stdout[-2000:]}\n{proc.stderr[-2000:]}")
    return elapsed


def env_with(cache: Path | None) -> dict[str, str]:
    env = dict(os.environ)
    if cache is not None:
        env["REPORTGEN_CACHE_DIR"] = str(cache)
    return env


def build(job: Path, out: Path, cache: Path | None, *extra: str) -> float:
    args = [*REPORTGEN, "build", str(job), "--out", str(out), "--force", *extra]
    if cache is None:
        args.append("--no-cache")
    return run(args, env_with(cache))


def floor(html: Path, pdf: Path, script: str = FLOOR) -> float:
    return run([sys.executable, "-c", script, str(html), str(pdf)])


def final_html(job: Path, work: Path) -> tuple[Path, int]:
    out = work / "html"
    build(job, out, None, "--html")
    html = next(out.glob("*.html"))
    pdf = next(out.glob("*.pdf"))
    return html, pdf_pages(pdf)


def pdf_pages(pdf: Path) -> int:
    from pypdf import PdfReader

    return len(PdfReader(pdf).pages)


def median(xs: list[float]) -> float:
    return statistics.median(xs)


def fmt_s(x: float) -> str:
    return f"{x:.2f} s"


# -- targets -------------------------------------------------------------------------------

def bench_cold_warm(work: Path, runs: int) -> dict:
    job = work / "bench.toml"
    shutil.copy(BENCH_JOB, job)
    html, pages = final_html(job, work)
    floors, colds, warms, tuned = [], [], [], []
    warm_cache = work / "warm-cache"
    build(job, work / "prime", warm_cache)  # the warm cache holds the unchanged package
    text = job.read_text(encoding="utf-8")
    for i in range(runs):
        floors.append(floor(html, work / "floor.pdf"))
        cold_cache = work / f"cold-cache-{i}"  # empty: nothing drawn, nothing verified yet
        colds.append(build(job, work / "cold", cold_cache))
        # one input of one calc changes (a new value each run, so it is never cached)
        changed = re.sub(r'mass = "1200 kg"', f'mass = "{1201 + i} kg"', text, count=1)
        assert changed != text
        warm_job = work / "warm" / "bench.toml"
        warm_job.parent.mkdir(exist_ok=True)
        warm_job.write_text(changed, encoding="utf-8")
        warms.append(build(warm_job, work / "warm" / "out", warm_cache))
        tuned.append(floor(html, work / "floor-tuned.pdf", FLOOR_TUNED))
    f = median(floors)
    # Each run's build against the floor measured just before it (the machine's speed
    # drifts by tens of per cent over minutes here), then the median of those ratios.
    return {"pages": pages, "floor_s": f, "floor_runs": floors, "cold_s": median(colds),
            "cold_runs": colds, "warm_s": median(warms), "warm_runs": warms,
            "cold_ratio": median([c / fl for c, fl in zip(colds, floors, strict=True)]),
            "warm_ratio": median([w / fl for w, fl in zip(warms, floors, strict=True)]),
            "cold_ratio_of_medians": median(colds) / f,
            "warm_ratio_of_medians": median(warms) / f,
            "tuned_floor_s": median(tuned), "tuned_floor_runs": tuned,
            "warm_over_tuned_floor": median([w / t for w, t in zip(warms, tuned, strict=True)]),
            "cold_over_tuned_floor": median([c / t for c, t in zip(colds, tuned, strict=True)])}


ENVELOPE_JOB = SAMPLES / "qep-107-fan-ef3-vsd.toml"
#: the same package at one point: nominal speed, catalogue stiffness, order 1 only
ENVELOPE_PLAIN = {'speed = "700 to 1500 rpm"': 'speed = "1100 rpm"',
                  'orders = [1, { order = 9, label = "blade pass" }]\n': "",
                  'tolerance = "± 15 %", ': ""}


def bench_envelope(work: Path, runs: int) -> dict:
    """A package judged over an envelope of several hundred evaluations against the same
    package at one point; both cold (no cache), interleaved."""
    text = ENVELOPE_JOB.read_text(encoding="utf-8")
    plain_text = text
    for old, new in ENVELOPE_PLAIN.items():
        assert old in plain_text, old
        plain_text = plain_text.replace(old, new)
    (work / "envelope").mkdir(exist_ok=True)
    env_job, plain_job = work / "envelope" / "env.toml", work / "envelope" / "plain.toml"
    env_job.write_text(text, encoding="utf-8")
    plain_job.write_text(plain_text, encoding="utf-8")
    results = work / "envelope" / "out-env"
    build(env_job, results, None)
    data = json.loads(next(results.glob("*.results.json")).read_text(encoding="utf-8"))
    evaluations = data["calcs"][0]["envelope"]["evaluations"]
    plains, envs = [], []
    for _ in range(runs):
        plains.append(build(plain_job, work / "envelope" / "out-plain", None))
        envs.append(build(env_job, results, None))
    return {"evaluations": evaluations, "plain_s": median(plains), "plain_runs": plains,
            "envelope_s": median(envs), "envelope_runs": envs,
            "ratio": median([e / p for e, p in zip(envs, plains, strict=True)])}


def bench_startup(work: Path, runs: int, build_s: float) -> dict:
    job = work / "bench.toml"
    cmds = {"--help": [*REPORTGEN, "--help"], "plugins": [*REPORTGEN, "plugins"],
            "check": [*REPORTGEN, "check", str(job)]}
    out = {}
    for name, cmd in cmds.items():
        t = median([run(cmd, ok=(0,)) for _ in range(max(3, runs))])
        out[name] = {"s": t, "fraction_of_build": t / build_s}
    return out


def make_set(folder: Path, n: int) -> list[Path]:
    """``n`` jobs from the sample jobs, each with its own calc number (the same size mix)."""
    folder.mkdir(parents=True, exist_ok=True)
    samples = sorted(p for p in SAMPLES.glob("qep-10[1-5]*.toml"))
    made = []
    for i in range(n):
        src = samples[i % len(samples)]
        text = src.read_text(encoding="utf-8")
        text, count = re.subn(r'calc_number = "[^"]+"', f'calc_number = "QEP-2417-V-3{i:02d}"',
                              text, count=1)
        assert count == 1
        dst = folder / f"set-{i:02d}-{src.name}"
        dst.write_text(text, encoding="utf-8")
        made.append(dst)
    return made


def bench_set(work: Path, n: int, runs: int) -> dict:
    folder = work / "set"
    make_set(folder, n)
    one, two = [], []
    for _ in range(runs):
        # --no-cache: every package is drawn and verified from scratch in both runs
        one.append(build(folder, work / "set-out-1", None, "--jobs", "1"))
        two.append(build(folder, work / "set-out-2", None, "--jobs", "2"))
    t1, t2 = median(one), median(two)
    return {"packages": n, "jobs1_s": t1, "jobs2_s": t2, "speedup": t1 / t2,
            "jobs1_runs": one, "jobs2_runs": two}


def big_job(work: Path, calcs: int) -> Path:
    """The benchmark package's calcs repeated (new ids) until it has ``calcs`` calcs."""
    text = BENCH_JOB.read_text(encoding="utf-8")
    head, _, body = text.partition("[[calc]]")
    blocks = ["[[calc]]" + b for b in body.split("[[calc]]")]
    out = [head.replace("QEP-2417-V-190", "QEP-2417-V-191")]
    for i in range(calcs):
        block = blocks[i % len(blocks)]
        out.append(re.sub(r'^id = "([^"]+)"', rf'id = "\1-{i:02d}"', block, count=1,
                          flags=re.M))
    job = work / "big.toml"
    job.write_text("".join(out), encoding="utf-8")
    return job


def peak(cmd: list[str], env: dict[str, str] | None = None) -> dict:
    proc = subprocess.run([sys.executable, "-c", MEASURE, *cmd], env=env,
                          stdout=subprocess.PIPE, text=True, check=True)
    return json.loads(proc.stdout.strip().splitlines()[-1])


def bench_memory(work: Path, calcs: int) -> dict:
    job = big_job(work, calcs)
    html, pages = final_html(job, work / "big")
    fl = peak([sys.executable, "-c", FLOOR, str(html), str(work / "big-floor.pdf")])
    bl = peak([*REPORTGEN, "build", str(job), "--out", str(work / "big-out"), "--force",
               "--no-cache"])
    if bl["code"] not in (0, 1):
        sys.exit("the 200-page build failed")
    return {"pages": pages, "calcs": calcs, "floor": fl, "build": bl,
            "ratio_process": bl["max_process_kib"] / fl["max_process_kib"],
            "ratio_tree": (bl["tree_kib"] / fl["tree_kib"]) if fl["tree_kib"] else None}


# -- report --------------------------------------------------------------------------------

def verdict(ok: bool, quick: bool) -> str:
    return "(smoke)" if quick else ("MET" if ok else "NOT MET")


def report(r: dict, quick: bool) -> list[str]:
    cw, st, ps, mem = r["cold_warm"], r["startup"], r["set"], r["memory"]
    lines = [f"machine: {os.cpu_count()} cores, load average {r['load_before']} before,"
             f" {r['load_after']} after; runs per figure: {r['runs']}",
             "ratios 1 and 2: median over the runs of build time / the floor timed just"
             " before it",
             f"benchmark package: {BENCH_JOB.name}, 12 calcs, {cw['pages']} pages", ""]
    rows = [
        ("1 cold build / floor", cw["cold_ratio"], "<= 1.40", cw["cold_ratio"] <= 1.40,
         f"cold {fmt_s(cw['cold_s'])}, floor {fmt_s(cw['floor_s'])} (medians; ratio of"
         f" medians {cw['cold_ratio_of_medians']:.3f})"),
        ("2 warm rebuild / floor", cw["warm_ratio"], "<= 1.05", cw["warm_ratio"] <= 1.05,
         f"warm {fmt_s(cw['warm_s'])}, one input of one calc changed (ratio of medians"
         f" {cw['warm_ratio_of_medians']:.3f})"),
    ]
    rows.append(("1b/2b the same against a tuned floor", cw["warm_over_tuned_floor"],
                 "(reported)", True,
                 f"cold {cw['cold_over_tuned_floor']:.3f}, warm {cw['warm_over_tuned_floor']:.3f};"
                 f" tuned floor {fmt_s(cw['tuned_floor_s'])} (GC paused, no teardown)"))
    worst = max(v["fraction_of_build"] for v in st.values())
    rows.append(("3 start-up / cold build", worst, "small", worst <= 0.1,
                 ", ".join(f"{k} {fmt_s(v['s'])}" for k, v in st.items())))
    rows.append((f"4 {ps['packages']}-package set: jobs 1 / jobs 2", ps["speedup"], ">= 1.70",
                 ps["speedup"] >= 1.70,
                 f"--jobs 1 {fmt_s(ps['jobs1_s'])}, --jobs 2 {fmt_s(ps['jobs2_s'])}"))
    rows.append((f"5 peak RSS, {mem['pages']}-page build / floor", mem["ratio_process"],
                 "<= 1.10", mem["ratio_process"] <= 1.10,
                 f"build {mem['build']['max_process_kib'] / 1024:.0f} MiB, floor"
                 f" {mem['floor']['max_process_kib'] / 1024:.0f} MiB (largest process)"))
    if mem["ratio_tree"]:
        rows.append(("5b peak RSS, whole process tree", mem["ratio_tree"], "(reported)", True,
                     f"build {mem['build']['tree_kib'] / 1024:.0f} MiB, floor"
                     f" {mem['floor']['tree_kib'] / 1024:.0f} MiB (PSS sum, sampled every 20 ms)"))
    ev = r["envelope"]
    rows.append((f"6 envelope of {ev['evaluations']} evaluations / one point", ev["ratio"],
                 "<= 1.20", ev["ratio"] <= 1.20,
                 f"envelope {fmt_s(ev['envelope_s'])}, one point {fmt_s(ev['plain_s'])}"
                 f" ({ENVELOPE_JOB.name}, cold)"))
    width = max(len(r[0]) for r in rows)
    for name, ratio, limit, ok, detail in rows:
        shown = "info" if limit == "(reported)" else verdict(ok, quick)
        lines.append(f"{name:<{width}}  {ratio:6.3f}  {limit:>10}  {shown:8}  {detail}")
    return lines


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="smoke run: 1 repeat, small sets")
    ap.add_argument("--runs", type=int, default=None, help="repeats per figure (default 5)")
    ap.add_argument("--json", type=Path, default=None, help="also write the numbers here")
    ap.add_argument("--keep", action="store_true", help="keep the work folder")
    args = ap.parse_args(argv)
    runs = args.runs or (1 if args.quick else 5)
    work = Path(tempfile.mkdtemp(prefix="reportgen-bench-"))
    r: dict = {"runs": runs, "load_before": _load(), "quick": args.quick}
    try:
        print("cold and warm builds against the floor ...", flush=True)
        r["cold_warm"] = bench_cold_warm(work, runs)
        print("start-up ...", flush=True)
        r["startup"] = bench_startup(work, runs, r["cold_warm"]["cold_s"])
        print("calc set, --jobs 1 and --jobs 2 ...", flush=True)
        r["set"] = bench_set(work, 4 if args.quick else 16, 1 if args.quick else 2)
        print("operating envelope against one point ...", flush=True)
        r["envelope"] = bench_envelope(work, runs)
        print("peak memory of a large package ...", flush=True)
        r["memory"] = bench_memory(work, 8 if args.quick else 34)
        r["load_after"] = _load()
    finally:
        if args.keep:
            print(f"work folder kept: {work}")
        else:
            shutil.rmtree(work, ignore_errors=True)
    print()
    print("\n".join(report(r, args.quick)))
    if args.json:
        args.json.write_text(json.dumps(r, indent=2) + "\n", encoding="utf-8")
    return 0


def _load() -> str:
    try:
        return " ".join(f"{x:.2f}" for x in os.getloadavg())
    except OSError:
        return "?"


if __name__ == "__main__":
    threading.excepthook = lambda a: None  # a sampler thread racing process exit is noise
    sys.exit(main())
