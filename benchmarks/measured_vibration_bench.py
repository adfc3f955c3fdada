"""Throughput and peak memory of the streaming measured-vibration analysis on a long record.

Writes a 24-hour, three-channel record at 1024 samples/s (265 million samples, float32, ~1 GB)
to a temporary .npy in chunks, streams it through the analysis in a child process, prints
samples per second per core and the child's peak resident memory, and deletes the file.

    python benchmarks/measured_vibration_bench.py            # 24 h (a few minutes)
    python benchmarks/measured_vibration_bench.py --quick    # 1 h
    options: --hours H, --quantity velocity|acceleration, --averaging SECONDS, --keep-dir DIR
Target: peak memory ≤ 400 MB whatever the length (it must not grow with the record).
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

FS = 1024.0
CHANNELS = 3


def write_record(path: Path, hours: float, seed: int = 1) -> int:
    """Floor-like content, written one minute at a time so that memory stays small."""
    n = int(hours * 3600 * FS)
    out = np.lib.format.open_memmap(path, mode="w+", dtype=np.float32, shape=(n, CHANNELS))
    rng = np.random.default_rng(seed)
    step = int(60 * FS)
    for start in range(0, n, step):
        stop = min(n, start + step)
        t = np.arange(start, stop) / FS
        block = rng.standard_normal((stop - start, CHANNELS)) * 2e-6
        block[:, 2] += 3e-6 * np.sin(2 * np.pi * 29.5 * t)
        out[start:stop] = block
    out.flush()
    del out
    return n


def _peak_rss_mb() -> float:
    """This process's own peak resident memory. VmHWM belongs to the process image started by
    exec; getrusage's ru_maxrss also keeps the parent's peak when the child was spawned by
    vfork (as subprocess does), which here held the freshly written 1 GB record."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def analyse(path: str, quantity: str, averaging: float | None) -> dict:
    """Runs in the child: open, plan, stream; returns timings and the child's peak memory."""
    from reportgen_plugins.measured_vibration.method import analyse_record, make_plan
    from reportgen_plugins.measured_vibration.readers import open_record

    unit = "m/s" if quantity == "velocity" else "m/s**2"
    wall, cpu = time.perf_counter(), time.process_time()
    record = open_record(path, sample_rate=FS, unit=unit)
    plan = make_plan(sample_rate=FS, quantity=record.quantity, channels=record.channels,
                     averaging_time=averaging)
    result = analyse_record(record, plan)
    wall, cpu = time.perf_counter() - wall, time.process_time() - cpu
    samples = result.n_samples * len(result.channels)
    return {
        "samples": samples, "wall_s": wall, "cpu_s": cpu,
        "samples_per_s": samples / wall, "samples_per_cpu_s": samples / cpu,
        "peak_rss_mb": _peak_rss_mb(),
        "max_band_velocity": [c.max_band_velocity for c in result.channels],
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="a 1-hour record")
    parser.add_argument("--hours", type=float, default=None)
    parser.add_argument("--quantity", default="velocity", choices=("velocity", "acceleration"))
    parser.add_argument("--averaging", type=float, default=None, help="averaging time, s")
    parser.add_argument("--keep-dir", default=None, help="folder for the temporary record")
    parser.add_argument("--child", default=None, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.child:
        print(json.dumps(analyse(args.child, args.quantity, args.averaging)))
        return 0
    hours = args.hours if args.hours is not None else (1.0 if args.quick else 24.0)
    with tempfile.TemporaryDirectory(dir=args.keep_dir) as folder:
        path = Path(folder) / "record.npy"
        started = time.perf_counter()
        n = write_record(path, hours)
        print(f"record: {hours:g} h, {CHANNELS} channels at {FS:g}/s = {n * CHANNELS:,} samples"
              f" ({path.stat().st_size / 2**20:,.0f} MiB), written in"
              f" {time.perf_counter() - started:.1f} s")
        command = [sys.executable, __file__, "--child", str(path), "--quantity", args.quantity]
        if args.averaging:
            command += ["--averaging", str(args.averaging)]
        env = dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1")
        done = subprocess.run(command, capture_output=True, text=True, env=env, check=False)
        if done.returncode:
            print(done.stderr, file=sys.stderr)
            return done.returncode
        r = json.loads(done.stdout.strip().splitlines()[-1])
    print(f"analysis ({args.quantity}, averaging {args.averaging or 'none'}):"
          f" {r['wall_s']:.1f} s wall, {r['cpu_s']:.1f} s CPU (one core)")
    print(f"throughput: {r['samples_per_s']:,.0f} samples/s wall,"
          f" {r['samples_per_cpu_s']:,.0f} samples per CPU-second (per core)")
    print(f"peak memory of the analysis process: {r['peak_rss_mb']:.0f} MB (target ≤ 400 MB)")
    return 0 if r["peak_rss_mb"] <= 400 else 1


if __name__ == "__main__":
    sys.exit(main())
