"""Shared fixtures: the reference check cases and the repository paths."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
_CASES_CANDIDATES = [REPO / "tests" / "data" / "check_cases.json"]


def load_check_cases() -> dict[str, dict]:
    for path in _CASES_CANDIDATES:
        if path.is_file():
            data = json.loads(path.read_text(encoding="utf-8"))
            return {c["id"]: c for c in data["cases"]}
    raise FileNotFoundError("tests/data/check_cases.json is missing")


@pytest.fixture(scope="session")
def check_cases() -> dict[str, dict]:
    """The published-formula check cases (tests/data/check_cases.json, with sources)."""
    return load_check_cases()


@pytest.fixture(autouse=True)
def _isolated_cache(tmp_path_factory, monkeypatch):
    monkeypatch.setenv("REPORTGEN_CACHE_DIR", str(tmp_path_factory.getbasetemp() / "cache"))
    yield


def case_value(case: dict, key: str) -> float:
    return case["expected"][key]["value"]


def case_tol(case: dict, key: str) -> tuple[float, float]:
    e = case["expected"][key]
    return e.get("rel_tol", 1e-4), e.get("abs_tol", 0.0)


def assert_case(actual: float, case: dict, key: str) -> None:
    rel, abs_ = case_tol(case, key)
    expected = case_value(case, key)
    assert abs(actual - expected) <= max(rel * abs(expected), abs_), (
        f"{case['id']} {key}: {actual} vs {expected} (source: {case['source']})")


os.environ.setdefault("MPLBACKEND", "Agg")
