"""An equipment schedule of N rows (default 200) in one package, against the floor.

Writes an invented schedule of N pumps, fans and air handlers (never committed), builds
it cold into one package, then times the floor on the package's own final HTML (one
process that imports WeasyPrint and writes the PDF: what benchmarks/run.py calls the
floor). Reports seconds per item, seconds per page, and the build over the floor: the
same ratio as any other package means a schedule costs what its pages cost. With
``--split`` it also times ``--split --jobs J``.

    python benchmarks/schedule_bench.py [--rows 200] [--split --jobs 2]
"""

from __future__ import annotations

import argparse
import random
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from run import REPORTGEN, env_with, final_html, floor, pdf_pages, run  # noqa: E402

KINDS = [("P", "Pump", 1480, 25), ("P", "Pump", 2900, 25), ("EF", "Extract fan", 1450, 25),
         ("SF", "Supply fan", 960, 25), ("AHU", "Air handler", 1170, 50)]


def write_schedule(folder: Path, rows: int) -> Path:
    rnd = random.Random(2026)
    lines = ["tag,description,location,mounting,mass [kg],speed [rpm],mounts,"
             "static_deflection [mm]"]
    counts: dict[str, int] = {}
    for _ in range(rows):
        prefix, what, rpm, delta = rnd.choice(KINDS)
        counts[prefix] = counts.get(prefix, 0) + 1
        mass = rnd.randrange(150, 4000, 10)
        lines.append(f"{prefix}-{counts[prefix]},{what},Level {rnd.randint(0, 9)},springs,"
                     f"{mass},{rpm},{4 if mass < 2000 else 6},{delta}")
    (folder / "schedule.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    job = folder / "schedule-job.toml"
    job.write_text("""[package]
title = "Benchmark schedule"
job_number = "B-1"
calc_number = "B-1-V-900"
revision = "A"
date = "2026-12-01"
units = "SI"
prepared_by = "Benchmark"
[schedule]
file = "schedule.csv"
[schedule.calc]
plugin = "isolation"
title = "{tag} {description}: isolation"
[schedule.calc.inputs]
damping_ratio = 0.05
[schedule.calc.criteria]
min_efficiency = 0.9
""", encoding="utf-8")
    return job


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=200)
    ap.add_argument("--split", action="store_true")
    ap.add_argument("--jobs", type=int, default=2)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        job = write_schedule(work, args.rows)
        cold = run([*REPORTGEN, "build", str(job), "--out", str(work / "out"), "--no-cache"],
                   env_with(None))
        html, pages = final_html(job, work)
        floor_s = floor(html, work / "floor.pdf")
        print(f"{args.rows} rows, {pages} pages in one package")
        print(f"  build (cold, no cache) {cold:7.1f} s  = {cold / args.rows:.3f} s per item,"
              f" {cold / pages:.3f} s per page")
        print(f"  floor (WeasyPrint on the final HTML) {floor_s:7.1f} s"
              f"  -> build / floor = {cold / floor_s:.2f}")
        if args.split:
            t = run([*REPORTGEN, "build", str(job), "--split", "--jobs", str(args.jobs),
                     "--out", str(work / "split"), "--no-cache"], env_with(None))
            n = len(list((work / "split").glob("B-1-V-900-*.pdf")))
            print(f"  --split --jobs {args.jobs}: {n} packages in {t:.1f} s"
                  f" = {t / n:.3f} s per package; pages of one:"
                  f" {pdf_pages(next((work / 'split').glob('B-1-V-900-*.pdf')))}")


if __name__ == "__main__":
    main()
