"""The set register: superseded revisions marked, and the page header's rule across the
full table width (issue 15, point 11)."""

from __future__ import annotations

import json
import re
from pathlib import Path

from reportgen.pipeline.register import register_files, superseded
from reportgen.render.html import make_env


def _row(number: str, rev: str, date: str) -> dict:
    return {"calc_number": number, "revision": rev, "date": date, "title": f"{number} {rev}",
            "status": "pass", "checks_passed": 1, "checks_failed": 0,
            "review_state": "preliminary", "sha256": "0" * 64, "file": f"{number}-{rev}.pdf"}


def test_older_revision_names_the_one_that_supersedes_it():
    # invariant of any register: each calc number has exactly one current revision, and
    # every other names the next in issue order (date, then revision mark)
    rows = superseded([_row("X-1", "A", "2026-11-01"), _row("X-1", "B", "2026-12-01"),
                       _row("X-1", "C", "2026-12-02"), _row("X-2", "A", "2026-11-05")])
    by = {(r["calc_number"], r["revision"]): r["superseded_by"] for r in rows}
    assert by == {("X-1", "A"): "B", ("X-1", "B"): "C", ("X-1", "C"): None,
                  ("X-2", "A"): None}


def test_same_date_orders_by_revision_mark():
    rows = superseded([_row("X-1", "AA", "2026-12-01"), _row("X-1", "Z", "2026-12-01")])
    assert {r["revision"]: r["superseded_by"] for r in rows} == {"Z": "AA", "AA": None}


def test_register_json_carries_superseded_by(tmp_path: Path):
    files = dict(register_files(tmp_path, [_row("X-1", "A", "2026-11-01"),
                                           _row("X-1", "B", "2026-12-01")]))
    data = json.loads(files[tmp_path / "register.json"])
    assert [(r["revision"], r["superseded_by"]) for r in data["packages"]] == [
        ("A", "B"), ("B", None)]
    assert files[tmp_path / "register.pdf"].startswith(b"%PDF")


def test_register_html_marks_superseded_and_rules_the_full_width():
    rows = superseded([_row("X-1", "A", "2026-11-01"), _row("X-1", "B", "2026-12-01")])
    html = make_env(None, "SI", {}).get_template("register.html").render(rows=rows)
    assert html.count("superseded by B") == 1
    assert 'class="status-pass superseded"' in html
    # the header rule is the margin box's bottom border: the box that carries it spans the
    # page (width 100 %), and the empty right box takes no width (it cut the rule at 62 %)
    page = re.search(r"@page \{ size: A4 landscape[^\n]*", html).group(0)
    assert re.search(r"@top-left \{[^}]*width: 100%", page)
    assert re.search(r"@top-right \{[^}]*width: 0", page)
