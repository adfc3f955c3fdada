"""A generated corpus of hostile job files (seeded, so every run sees the same cases).

Each case is a valid job with one thing broken: a wrong type in any field, a quantity
with arithmetic or an absurd exponent, a look-alike character, a control character, deep
nesting, a huge string, a duplicate key, a missing table, a path out of the folder. Every
case must exit 2 with a message naming the file and the field (the file alone when the
TOML itself is invalid), print no traceback and write nothing. Cases run in-process; a
handful also run as real subprocesses. tests/test_bad_input.py and tests/test_hostile.py
hold the hand-written tables; this corpus is generated beyond them.
"""

from __future__ import annotations

import datetime as dt
import os
import random
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest
from hardening_d_support import job_text, run, toml_str

from reportgen.cli import _visible

SEED = 2417
CALC = {"id": "pump-p1", "plugin": "free_vibration", "title": "Pump P1 free vibration",
        "inputs": {"mass": "1200 kg", "stiffness": "350 kN/m", "damping_ratio": 0.05}}
ISO = {"id": "chiller", "plugin": "isolation", "title": "Chiller CH1 isolation",
       "inputs": {"mass": "4200 kg", "speed": "1480 rpm", "stiffness": "2 MN/m",
                  "damping_ratio": 0.05}}
CRITERIA = {"max_natural_frequency": "5 Hz"}


@dataclass(frozen=True)
class Case:
    id: str
    text: str
    field: str | None  # the field the message must name; None: the file is enough


# ---------------------------------------------------------------- value pools

WRONG_FOR_TEXT = [123, 4.5, True, [1, 2], {"a": 1}, ["x"], [[["deep"]]]]
WRONG_FOR_QUANTITY = [
    True, [1200, "kg"], {"value": 1200, "unit": "kg"}, dt.date(2026, 1, 1), "",
    "kg", "1200", "twelve hundred kg", "1200 kg kg", "1200 potatoes", "1200 m",
    "nan kg", "inf kg", "-inf kg", "1e400 kg", "1e99999 kg", "0x4B0 kg",
]
ARITHMETIC = ["1200*2 kg", "10**9**9 kg", "(1200 + 5) kg", "1200 kg * 3", "2^64 kg",
              "1200 kg / 0", "1200 kg + 3 kg", "1_200 * kg", "1200e kg", "1200 kg**2",
              "1200 kg**1000", "9**9**9 N/m", "1200 kg * 10**400"]
CONFUSABLE_QUANTITIES = ["１２００ kg", "1200 кg", "1200 κg", "1200 ｋｇ", "1２00 kg",
                         "1200 kɡ", "١٢٠٠ kg", "1200 k\u200bg"]
CONFUSABLE_PLUGINS = ["free_vibrаtion", "free_vibratіon", "ｆree_vibration", "free-vibration",
                      "Free_Vibration", "free_vibration\u200b"]
CONFUSABLE_IDS = ["pump-р1", "pump_p1", "Pump-P1", "pump--p1", "-pump", "pump-p1-",
                  "pump p1", "pump-p1\u200b", "ｐump"]
CONTROLS = ["\x00", "\x01", "\x07", "\x08", "\x0b", "\x0c", "\x1b", "\x1f", "\x7f", "\x80",
            "\x9f", "\ufffe", "\uffff", "\U0010ffff", "\u202e", "\u2066"]
BAD_DATES = ["", "yesterday", "2026-13-01", "2026-02-30", "26-12-01", "2026/12/01",
             "2026-12-01T25:00", 20261201, True, [2026, 12, 1]]


def _cases() -> list[Case]:
    rng = random.Random(SEED)
    out: list[Case] = []

    def add(kind: str, text: str, field: str | None) -> None:
        out.append(Case(f"{kind}-{len(out)}", text, field))

    # wrong types in every package text field and every calc field
    for key in ("title", "job_number", "calc_number", "revision", "client", "project",
                "prepared_by", "checked_by", "approved_by", "firm"):
        for value in rng.sample(WRONG_FOR_TEXT, 3):
            add("type", job_text({key: value}, calcs=[CALC]), f"package.{key}")
    for key in ("date", "prepared_date", "checked_date", "approved_date"):
        for value in rng.sample(BAD_DATES, 4):
            add("date", job_text({key: value}, calcs=[CALC]), f"package.{key}")
    for key, pool in (("units", ["si", "metric", 1, ["SI"], "SI\n"]),
                      ("revision_history", ["A", 1, [1], [{"revision": 1}]]),
                      ("attachments", ["x.csv", 1, [1], [["x"]]]),
                      ("previous_package", [1, ["x.pdf"], "missing.pdf", "../../no.pdf"])):
        for value in pool:
            field = f"package.{key}"
            add("type", job_text({key: value}, calcs=[CALC]), field)
    for key in ("id", "plugin", "title", "notes"):
        for value in rng.sample(WRONG_FOR_TEXT, 3):
            add("type", job_text(calcs=[{**CALC, key: value}]), key)
    for key in ("inputs", "criteria"):
        for value in ("mass", 5, [1, 2], True):
            add("type", job_text(calcs=[{**CALC, key: value}]), key)

    # quantities: wrong types, arithmetic, absurd exponents, look-alikes, controls
    for calc, names in ((CALC, ("mass", "stiffness")), (ISO, ("mass", "speed", "stiffness"))):
        for name in names:
            for value in rng.sample(WRONG_FOR_QUANTITY, 8) + rng.sample(ARITHMETIC, 5):
                inputs = {**calc["inputs"], name: value}
                add("quantity", job_text(calcs=[{**calc, "inputs": inputs}]),
                    f"inputs.{name}")
            for value in rng.sample(CONFUSABLE_QUANTITIES, 4):
                inputs = {**calc["inputs"], name: value}
                add("confusable", job_text(calcs=[{**calc, "inputs": inputs}]),
                    f"inputs.{name}")
    for value in ("abc", "0.05 kg", -0.5, 11.0, True, [0.05], "1e999"):
        inputs = {**CALC["inputs"], "damping_ratio": value}
        add("quantity", job_text(calcs=[{**CALC, "inputs": inputs}]), "inputs.damping_ratio")
    for value in ("5 kg", "-5 Hz", "0 Hz", 5, "5 Hz Hz", "1e400 Hz"):
        add("criteria", job_text(calcs=[{**CALC, "criteria": {"max_natural_frequency": value}}]),
            "criteria.max_natural_frequency")
    for value in CONFUSABLE_PLUGINS:
        add("confusable", job_text(calcs=[{**CALC, "plugin": value}]), "plugin")
    for value in CONFUSABLE_IDS:
        add("confusable", job_text(calcs=[{**CALC, "id": value}]), "id")
    for key in ("mаss", "Mass", "mass ", "stiffness\u00ad"):  # look-alike input names
        inputs = {**CALC["inputs"], key: "1 kg"}
        add("confusable", job_text(calcs=[{**CALC, "inputs": inputs}]), f"inputs.{key}")

    # control characters in a random text field, and in keys
    text_fields = ["title", "client", "project", "prepared_by", "job_number", "revision"]
    for ch in CONTROLS:
        key = rng.choice(text_fields)
        add("control", job_text({key: f"Ferrow{ch}Quay"}, calcs=[CALC]), f"package.{key}")
        add("control", job_text(calcs=[{**CALC, "title": f"Pump{ch}P1"}]), "title")
        inputs = {**CALC["inputs"], "mass": f"1200{ch}kg"}
        add("control", job_text(calcs=[{**CALC, "inputs": inputs}]), "inputs.mass")
    for ch in ("\x1b", "\x07", "\u202e"):  # in a (quoted) key: an unknown field
        add("control", job_text(calcs=[CALC]).replace(
            "[package]\n", f"[package]\n{toml_str('title' + ch)} = \"x\"\n"), "package.title")

    # deep nesting (arrays and inline tables) at random depths in random places
    for _ in range(12):
        depth = rng.choice([40, 120, 900, 3000, 20000])
        arr = "[" * depth + "]" * depth if rng.random() < 0.5 else \
            "{a = " * depth + "1" + "}" * depth
        where = rng.choice(["title", "mass", "notes"])
        base = job_text()
        if where == "mass":
            text = base.replace('"mass" = "1200 kg"', f"mass = {arr}")
            field = "inputs.mass"
        elif where == "notes":
            text = base.replace('title = "Pump P1 free vibration"',
                                f'title = "Pump P1"\nnotes = {arr}')
            field = "notes"
        else:
            text = base.replace('title = "Pump P1 on spring mounts"', f"title = {arr}")
            field = "package.title"
        assert text != base
        add("nesting", text, field)

    # huge strings
    for size in (4001, 50_000, 400_000):
        add("huge", job_text({"title": "T" * size}, calcs=[CALC]), "package.title")
        add("huge", job_text(calcs=[{**CALC, "notes": "N" * size}]), "notes")
        inputs = {**CALC["inputs"], "mass": "1" * min(size, 300) + " kg"}
        add("huge", job_text(calcs=[{**CALC, "inputs": inputs}]), "inputs.mass")
    add("huge", job_text(calcs=[{**CALC, "inputs": {**CALC["inputs"], "x" * 5000: 1}}]),
        "inputs." + "x" * 50)

    # duplicate keys and tables, missing tables, broken TOML (the file is named)
    base = job_text()
    add("duplicate", base.replace('revision = "A"', 'revision = "A"\nrevision = "B"'),
        "package.revision")
    add("duplicate", base.replace('"mass" = "1200 kg"', '"mass" = "1200 kg"\nmass = "1 kg"'),
        None)
    add("duplicate", base + "\n[package]\ntitle = \"again\"\n", None)
    add("duplicate", job_text(calcs=[CALC, CALC]), "id")
    add("missing", job_text(calcs=[]), "calc")
    add("missing", "\n".join(line for line in base.splitlines()
                             if not line.startswith("[package]")), None)
    add("missing", base.split("[[calc]]")[0], "calc")
    add("missing", job_text(drop=("title",), calcs=[CALC]), "package.title")
    add("missing", job_text(drop=("date",), calcs=[CALC]), "package.date")
    add("missing", job_text(calcs=[{k: v for k, v in CALC.items() if k != "plugin"}]),
        "plugin")
    add("missing", job_text(calcs=[{**CALC, "inputs": {"mass": "1200 kg"}}]),
        "inputs.stiffness")
    add("broken", base.replace("[[calc]]", "[[calc]"), None)
    add("broken", base.replace('"1200 kg"', '"1200 kg'), None)
    add("broken", base + "\n= 5\n", None)
    add("broken", "\ufeff" + "\x00" * 10, None)
    add("broken", base.replace("[package]", "[package]]"), None)
    add("broken", "[calc]\nid = 1\n" + base, None)
    add("table", base.replace("[[calc]]", "[calc]"), "calc")
    add("table", base + "\n[extra]\nx = 1\n", "extra")

    # paths out of the job's folder
    for rel in ("../outside.csv", "/etc/passwd", "sub/../../x.csv", "C:/x.csv", "..",
                "./", "", "a\x00b.csv", "~/x.csv", "\\\\server\\x.csv"):
        add("path", job_text({"attachments": [rel]}, calcs=[CALC]), "package.attachments")
    for rel in ("../../../../etc/passwd", "/etc/passwd", "../nowhere.pdf", "/dev/zero"):
        add("path", job_text({"previous_package": rel}, calcs=[CALC]),
            "package.previous_package")
    for rel in ("no-such-folder", "../../no-such-folder"):
        add("path", job_text({"template_dir": rel}, calcs=[CALC]), "package.template_dir")
    unique: dict[str, Case] = {}
    for case in out:  # two pools may hold the same value
        unique.setdefault(case.text, case)
    return list(unique.values())


CASES = _cases()


def test_the_corpus_is_a_few_hundred_distinct_cases():
    assert len(CASES) >= 250
    assert len({c.text for c in CASES}) == len(CASES)


def _check(case: Case, code: int, err: str, path: Path, out: Path) -> None:
    assert code == 2, (case.id, code, err[-500:])
    assert "Traceback" not in err, case.id
    assert str(path) in err, (case.id, err[:500])
    if case.field is not None:  # as the message prints it: controls escaped
        assert f"field '{_visible(case.field)}" in err, (case.id, case.field, err[:500])
    assert not out.exists() or not any(out.iterdir()), case.id
    # nothing a terminal would act on: control characters are escaped in messages
    assert not any(ch in err for ch in "\x1b\x07\x00\x9b\u202e"), case.id


@pytest.fixture(scope="module")
def corpus_dir(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("corpus")


@pytest.mark.parametrize("kind", sorted({c.id.rsplit("-", 1)[0] for c in CASES}))
def test_hostile_jobs_exit_2_naming_file_and_field(corpus_dir, kind):
    for case in (c for c in CASES if c.id.rsplit("-", 1)[0] == kind):
        folder = corpus_dir / case.id
        folder.mkdir()
        path = folder / "job.toml"
        path.write_bytes(case.text.encode("utf-8", "surrogatepass"))
        out = folder / "out"
        code, _, err = run(["build", str(path), "--out", str(out)])
        _check(case, code, err, path, out)


def test_a_handful_as_real_processes(tmp_path):
    rng = random.Random(SEED)
    env = {**os.environ, "PYTHONIOENCODING": "utf-8"}
    for case in rng.sample(CASES, 6):
        folder = tmp_path / case.id
        folder.mkdir()
        path = folder / "job.toml"
        path.write_text(case.text, encoding="utf-8")
        out = folder / "out"
        proc = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(path),
                               "--out", str(out)], capture_output=True, text=True, env=env,
                              timeout=120)
        _check(case, proc.returncode, proc.stderr, path, out)
