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
    """(pages, text) by pypdf's layout-aware extraction: thorough, for tests and tools."""
    from pypdf import PdfReader

    reader = PdfReader(io.BytesIO(pdf), strict=True)
    pages = [p.extract_text() or "" for p in reader.pages]
    return len(pages), _norm("\n".join(pages))


_HEX4 = re.compile(rb"<([0-9a-fA-F]+)>")


def _to_unicode_map(font) -> dict[bytes, str] | None:
    """A font's /ToUnicode CMap as {code bytes: text} (bfchar and bfrange sections)."""
    cmap = font.get("/ToUnicode")
    if cmap is None:
        return None
    data = cmap.read_bytes()
    out: dict[bytes, str] = {}
    for block in re.findall(rb"beginbfchar(.*?)endbfchar", data, re.S):
        vals = _HEX4.findall(block)
        for src, dst in zip(vals[0::2], vals[1::2], strict=False):
            out[bytes.fromhex(src.decode())] = bytes.fromhex(dst.decode()).decode("utf-16-be")
    for block in re.findall(rb"beginbfrange(.*?)endbfrange", data, re.S):
        for line in block.splitlines():
            parts = _HEX4.findall(line)
            if len(parts) < 3:
                continue
            lo, hi = int(parts[0], 16), int(parts[1], 16)
            width = len(parts[0]) // 2
            if b"[" in line:  # <lo> <hi> [<dst> <dst> ...]
                for i, dst in enumerate(parts[2:]):
                    out[(lo + i).to_bytes(width, "big")] = bytes.fromhex(
                        dst.decode()).decode("utf-16-be")
                continue
            base = int(parts[2], 16)
            for i in range(hi - lo + 1):
                out[(lo + i).to_bytes(width, "big")] = chr(base + i)
    return out


def _decode(raw: bytes, cmap: dict[bytes, str] | None) -> str:
    if cmap is None:
        return raw.decode("latin-1")
    width = len(next(iter(cmap))) if cmap else 1
    return "".join(cmap.get(raw[i:i + width], "") for i in range(0, len(raw), width))


def _stream_text(obj, resources, maps: dict, seen: set) -> list[str]:
    import pikepdf

    fonts = resources.get("/Font", {}) if resources is not None else {}
    xobjects = resources.get("/XObject", {}) if resources is not None else {}
    current = None
    runs: list[str] = []
    for operands, op in pikepdf.parse_content_stream(obj, "Tf Tj TJ ' \" Do"):  # type: ignore[misc]
        name = str(op)
        if name == "Tf":
            font = fonts.get(str(operands[0]))
            if font is None:
                current = None
                continue
            if font.objgen not in maps:  # fonts are shared by pages: parse each CMap once
                maps[font.objgen] = _to_unicode_map(font)
            current = maps[font.objgen]
        elif name in ("Tj", "'", '"'):
            runs.append(_decode(bytes(operands[-1]), current))
        elif name == "TJ":
            parts = []
            for item in operands[0]:
                if isinstance(item, pikepdf.String):
                    parts.append(_decode(bytes(item), current))
                elif float(item) < -250:  # a gap of a quarter em or more reads as a space
                    parts.append(" ")
            runs.append("".join(parts))
        elif name == "Do":
            xo = xobjects.get(str(operands[0]))
            if xo is not None and xo.get("/Subtype") == "/Form" and xo.objgen not in seen:
                seen.add(xo.objgen)
                runs += _stream_text(xo, xo.get("/Resources", resources), maps, seen)
    return runs


def fast_text(pdf: bytes) -> tuple[int, list[str]]:
    """(pages, text of each page) from the content streams' text operators (pikepdf).

    About 10x faster than layout-aware extraction: the self-check needs only to know
    which strings each page shows, so runs are joined with spaces, not laid out.
    """
    import pikepdf

    with pikepdf.open(io.BytesIO(pdf)) as p:
        return len(p.pages), _pages_text(p)


def _pages_text(p, start: int = 0, stop: int | None = None) -> list[str]:
    maps: dict = {}
    pages = list(p.pages)[start:stop]
    return [_norm(" ".join(_stream_text(page.obj, page.obj.get("/Resources"), maps, set())))
            for page in pages]


#: From this many pages the text is read in two processes (forked), half each.
SPLIT_PAGES = 24


def _pages_text_split(p, pdf: bytes) -> list[str]:
    """Both halves of the page list at once on two cores; the same text as one pass."""
    import os

    from .split import run_split

    n = len(p.pages)
    if n < SPLIT_PAGES or not hasattr(os, "fork"):
        return _pages_text(p)
    half = n // 2
    first: list[str] = []

    def second_half() -> list[str]:
        import pikepdf

        with pikepdf.open(io.BytesIO(pdf)) as mine:
            return _pages_text(mine, half)

    # the second half in a forked child while this process reads the first half
    rest = run_split(second_half, lambda: first.extend(_pages_text(p, 0, half)))
    if not isinstance(rest, list) or len(rest) != n - half:
        rest = _pages_text(p, half)  # the helper failed: read those pages here
    return first + rest


def _squash(text: str) -> str:
    return re.sub(r"\s+", "", text.replace("\u00ad", ""))


def self_check(pdf: bytes, doc: Document) -> None:
    import pikepdf

    problems: list[str] = []
    try:
        with pikepdf.open(io.BytesIO(pdf)) as p:
            problems += _syntax_problems(p)
            pages = _pages_text_split(p, pdf)
            problems += _font_problems(p)
    except Exception as exc:
        raise RenderError(f"self-check: the written PDF cannot be read back: {exc}") from None
    n_pages = len(pages)
    # Compared without white space: text runs split a line wherever the font or the
    # position changes, so where a space falls between runs is not the PDF's content.
    text = _squash(" ".join(pages))
    if f"of{n_pages}" not in text or f"of{n_pages + 1}" in text:
        problems.append(f"the page footer does not count {n_pages} pages")
    for s in doc.sections:
        if _squash(_norm(s.title)[:60]) not in text:
            problems.append(f"section title {s.title!r} is missing from the text")
        for r in s.results:
            if r.key_result:
                value, _ = quantity_parts(r.quantity, doc.info.units)
                if _squash(value) not in text:
                    problems.append(f"key result {s.calc_id}/{r.key} = {value} is not shown")
    for status in {c.status for _, c in doc.checks}:
        if status.upper() not in text:
            problems.append(f"check status {status.upper()} is missing from the text")
    if problems:
        raise RenderError("self-check of the written PDF failed: " + "; ".join(problems))


def _syntax_problems(p) -> list[str]:
    """What ``qpdf --check`` reports, without its token-by-token Python callback.

    qpdf's check is: document structures, decode every stream, parse every page's
    content. The first two run here; the page contents are parsed (in C++) by the text
    extraction that follows, which raises on a malformed stream.
    """
    structures = getattr(p, "_check_document_structures", None)
    decode = getattr(p, "_decode_all_streams_and_discard", None)
    if structures is None or decode is None:  # another pikepdf: the full public check
        return [f"PDF structure: {m}" for m in p.check_pdf_syntax()[:3]]
    structures()
    decode(None)
    return [f"PDF structure: WARNING: {w}" for w in p.get_warnings()[:3]]


def _font_problems(p) -> list[str]:
    out = []
    seen: set = set()

    def walk(resources, depth: int = 0) -> None:
        if resources is None or depth > 8:
            return
        for _, font in resources.get("/Font", {}).items():
            if font.objgen in seen:
                continue
            seen.add(font.objgen)
            desc = font.get("/FontDescriptor")
            if desc is None and "/DescendantFonts" in font:
                desc = font["/DescendantFonts"][0].get("/FontDescriptor")
            if desc is None or not any(k in desc for k in
                                       ("/FontFile", "/FontFile2", "/FontFile3")):
                out.append(f"font {font.get('/BaseFont', '?')} is not embedded")
        for _, xo in resources.get("/XObject", {}).items():  # figures and equations
            if xo.get("/Subtype") == "/Form" and xo.objgen not in seen:
                seen.add(xo.objgen)
                walk(xo.get("/Resources"), depth + 1)

    for page in p.pages:
        walk(page.obj.get("/Resources"))
    return out
