"""The calc set register as a one-table PDF (one row per package)."""

from __future__ import annotations

from typing import Any


def register_pdf(rows: list[dict[str, Any]]) -> bytes:
    from reportgen.render.html import make_env
    from reportgen.render.pdf import write_pdf

    env = make_env(None, "SI", {})
    html = env.get_template("register.html").render(rows=rows)
    date = max((r.get("date") or "" for r in rows), default="") or "2000-01-01"
    return write_pdf(html, base_dir=None, attachments=[], date=date)
