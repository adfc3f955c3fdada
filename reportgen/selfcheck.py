"""Reopen a freshly written PDF and confirm it says what the document says.

Page count against "Page X of Y", every section title, every check status and every
key result as displayed must be in the extracted text; fonts must be embedded; the
file must open cleanly. Any failure is a RenderError (exit 3, nothing written).
"""

from __future__ import annotations

import io
import re

from .errors import RenderError
from .model import Document
from .render.html import quantity_parts


def _norm(text: str) -> str:
    return re.sub(r"\s+", " ", text.replace("\u00ad", ""))


def extract_text(pdf: bytes) -> tuple[int, str]:
    from pypdf import PdfReader

    reader = PdfReader(io.BytesIO(pdf), strict=True)
    pages = [p.extract_text() or "" for p in reader.pages]
    return len(pages), _norm("\n".join(pages))


def self_check(pdf: bytes, doc: Document) -> None:
    problems: list[str] = []
    try:
        n_pages, text = extract_text(pdf)
    except Exception as exc:
        raise RenderError(f"self-check: the written PDF cannot be read back: {exc}") from None
    if f"of {n_pages}" not in text or f"of {n_pages + 1}" in text:
        problems.append(f"the page footer does not count {n_pages} pages")
    for s in doc.sections:
        if _norm(s.title)[:60] not in text:
            problems.append(f"section title {s.title!r} is missing from the text")
        for r in s.results:
            if r.key_result:
                value, _ = quantity_parts(r.quantity, doc.info.units)
                if value not in text:
                    problems.append(f"key result {s.calc_id}/{r.key} = {value} is not shown")
    for status in {c.status for _, c in doc.checks}:
        if status.upper() not in text:
            problems.append(f"check status {status.upper()} is missing from the text")
    problems += _font_problems(pdf)
    if problems:
        raise RenderError("self-check of the written PDF failed: " + "; ".join(problems))


def _font_problems(pdf: bytes) -> list[str]:
    import pikepdf

    out = []
    try:
        with pikepdf.open(io.BytesIO(pdf)) as p:
            for problem in p.check_pdf_syntax()[:3]:
                out.append(f"PDF structure: {problem}")
            seen = set()
            for page in p.pages:
                fonts = page.obj.get("/Resources", {}).get("/Font", {})
                for _, font in fonts.items():
                    name = str(font.get("/BaseFont", "?"))
                    if name in seen:
                        continue
                    seen.add(name)
                    desc = font.get("/FontDescriptor")
                    if desc is None and "/DescendantFonts" in font:
                        desc = font["/DescendantFonts"][0].get("/FontDescriptor")
                    if desc is None or not any(k in desc for k in
                                               ("/FontFile", "/FontFile2", "/FontFile3")):
                        out.append(f"font {name} is not embedded")
    except pikepdf.PdfError as exc:
        out.append(f"PDF structure: {exc}")
    return out
