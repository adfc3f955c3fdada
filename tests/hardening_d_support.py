"""Job files for the hardening tests (text, numbers, hostile corpus): TOML written from
Python values with every character escaped the way TOML requires.

Demo scenario (invented): Quillmoor Engineering Partners for Ferrow Quay Developments.
"""

from __future__ import annotations

import datetime as dt
import io
import math
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

from reportgen.cli import main

PACKAGE = {
    "title": "Pump P1 on spring mounts", "client": "Ferrow Quay Developments",
    "project": "Ferrow Quay Data Centre, plant room B", "job_number": "QEP-2417",
    "calc_number": "QEP-2417-V-301", "revision": "A", "date": "2026-12-01",
    "prepared_by": "T. Marsh",
}
FREE = {"id": "pump-p1", "plugin": "free_vibration", "title": "Pump P1 free vibration",
        "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05}}


def toml_str(s: str) -> str:
    out = []
    for ch in s:
        c = ord(ch)
        if ch in '"\\':
            out.append("\\" + ch)
        elif c < 0x20 or c == 0x7F:
            out.append(f"\\u{c:04x}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return toml_str(v)
    if isinstance(v, (dt.date, dt.time)):
        return v.isoformat()
    if isinstance(v, list):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{toml_str(k)} = {toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def job_text(package: dict | None = None, calcs: list[dict] | None = None,
             drop: tuple[str, ...] = ()) -> str:
    """A job file: [package] then [[calc]] tables; a value None drops the key."""
    pkg = {k: v for k, v in {**PACKAGE, **(package or {})}.items()
           if v is not None and k not in drop}
    lines = ["[package]"] + [f"{k} = {toml_value(v)}" for k, v in pkg.items()]
    for calc in calcs if calcs is not None else [FREE]:
        lines += ["", "[[calc]]"]
        lines += [f"{k} = {toml_value(v)}" for k, v in calc.items()
                  if v is not None and not isinstance(v, dict)]
        for k, v in calc.items():  # inputs and criteria as sub-tables, as people write them
            if isinstance(v, dict):
                lines += [f"[calc.{k}]"] + [f"{toml_str(n)} = {toml_value(x)}"
                                            for n, x in v.items()]
    return "\n".join(lines) + "\n"


def free_calc(**inputs) -> dict:
    return {**FREE, "inputs": {**FREE["inputs"], **inputs}}


def run(args: list[str]) -> tuple[int, str, str]:
    """``reportgen ARGS`` in this process: (exit code, stdout, stderr)."""
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(args)
    return code, out.getvalue(), err.getvalue()


def write_job(folder: Path, text: str, name: str = "job.toml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path
