"""Start-up stays light: --help, plugins and check never import the renderer or plotting.

Checked by inspecting sys.modules in a fresh interpreter (not timed: timings live in
benchmarks/run.py).
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from conftest import REPO

HEAVY = ("weasyprint", "matplotlib")

PROBE = """
import json, sys
from reportgen.cli import main
try:
    code = main(sys.argv[1:])
except SystemExit as exc:  # argparse's --help exits
    code = exc.code
print("\\n" + json.dumps({"code": code, "loaded": sorted(
    m for m in sys.modules if m.split(".")[0] in ("weasyprint", "matplotlib"))}))
"""


def _loaded(*args: str) -> dict:
    proc = subprocess.run([sys.executable, "-c", PROBE, *args], capture_output=True,
                          text=True, cwd=REPO, timeout=120)
    return json.loads(proc.stdout.strip().splitlines()[-1])


@pytest.mark.parametrize("args", [
    ("--help",),
    ("plugins",),
    ("check", str(REPO / "sample_jobs" / "qep-101-pump-p1.toml")),
    ("check", str(REPO / "benchmarks" / "bench_12.toml")),
], ids=["help", "plugins", "check-sample", "check-benchmark"])
def test_light_commands_never_import_the_renderer_or_matplotlib(args):
    out = _loaded(*args)
    assert out["code"] == 0
    assert out["loaded"] == [], f"{args[0]} imported {out['loaded']}"


def test_the_probe_would_see_a_heavy_import():
    # The probe must be able to fail: a build does import both.
    code = ("import sys, reportgen.render.pdf as p;"
            "p.preload_renderer(); import matplotlib.pyplot;"
            f"print([m for m in {HEAVY!r} if m in sys.modules])")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120)
    assert proc.stdout.strip() == str(list(HEAVY))
