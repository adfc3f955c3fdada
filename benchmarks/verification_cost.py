"""Compute-and-verify time of the built-in calc types over extreme but valid inputs.

Log-uniform samples across each calc type's declared bounds (seeded), plus the cases that
once hung or took a minute (isolation at r = 2·10⁶ and r = 30 300, a 1 g mass). Prints
the slowest cases and the largest time; no rendering. Usage:
``python benchmarks/verification_cost.py [--samples N]``.
"""

from __future__ import annotations

import argparse
import math
import random
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from hardening_d_support import job_text  # noqa: E402

from reportgen.calc.plugin_set import load_plugin_set  # noqa: E402
from reportgen.document.compute import compute_document  # noqa: E402
from reportgen.errors import JobError  # noqa: E402
from reportgen.job.load import load_job  # noqa: E402


def _log(rng: random.Random, lo: float, hi: float) -> float:
    return 10 ** rng.uniform(math.log10(lo), math.log10(hi))


def _sample(rng: random.Random, plugin: str) -> dict:
    zeta = 0.0 if rng.random() < 0.15 else _log(rng, 1e-4, 1.0 if plugin == "isolation"
                                                 else 10.0)
    m = f"{_log(rng, 1e-3, 1e7):.6g} kg"
    k = f"{_log(rng, 1.0, 1e12):.6g} N/m"
    if plugin == "isolation":
        return {"mass": m, "stiffness": k, "frequency": f"{_log(rng, 1e-3, 1e4):.6g} Hz",
                "damping_ratio": zeta}
    if plugin == "forced_response":
        return {"mass": m, "stiffness": k, "damping_ratio": zeta,
                "frequency": f"{_log(rng, 1e-3, 1e5):.6g} Hz",
                "force_amplitude": f"{_log(rng, 1e-6, 1e9):.6g} N"}
    return {"mass": m, "stiffness": k, "damping_ratio": zeta,
            "initial_displacement": f"{_log(rng, 1e-12, 10.0):.6g} m"}


FIXED = [
    ("isolation", {"mass": "1e7 kg", "stiffness": "1 N/m", "frequency": "1e4 Hz"}),
    ("isolation", {"mass": "1200 kg", "stiffness": "2.07 N/m", "frequency": "24.7 Hz"}),
    ("isolation", {"mass": "0.001 kg", "stiffness": "700 kN/m", "frequency": "24.7 Hz"}),
    ("free_vibration", {"mass": "0.001 kg", "stiffness": "1e13 N/m", "damping_ratio": 10.0}),
    ("forced_response", {"mass": "0.001 kg", "stiffness": "1e13 N/m", "damping_ratio": 0.0,
                         "frequency": "1e-3 Hz", "force_amplitude": "1 N"}),
]


def main() -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--samples", type=int, default=40)
    args = parser.parse_args()
    plugins = load_plugin_set()
    rng = random.Random(2417)
    cases = list(FIXED) + [(p, _sample(rng, p)) for p in ("isolation", "free_vibration",
                                                          "forced_response")
                           for _ in range(args.samples)]
    times: list[tuple[float, str, dict, str]] = []
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "job.toml"
        for plugin, inputs in cases:
            path.write_text(job_text(calcs=[{"id": "c", "plugin": plugin, "title": "Cost",
                                             "inputs": inputs}]), encoding="utf-8")
            start = time.perf_counter()
            try:
                compute_document(load_job(path, plugins), plugins)
                outcome = "ok"
            except JobError:
                outcome = "refused (exit 2)"
            times.append((time.perf_counter() - start, plugin, inputs, outcome))
    times.sort(key=lambda t: -t[0])
    for seconds, plugin, inputs, outcome in times[:8]:
        print(f"{seconds:7.3f} s  {plugin:16s} {outcome:17s} {inputs}")
    spent = [t[0] for t in times]
    median = sorted(spent)[len(spent) // 2]
    print(f"{len(times)} cases: largest {max(spent):.2f} s, median {median:.3f} s,"
          f" refused {sum(t[3] != 'ok' for t in times)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
