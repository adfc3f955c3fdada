"""Reopen a freshly written PDF and confirm it says what the document says.

Page count against "Page X of Y", every section title, every check status and every
key result as displayed must be in the extracted text; fonts must be embedded; the
embedded files must be exactly the manifest's; the file must open cleanly. Any failure
is a RenderError (exit 3, nothing written).
"""

from __future__ import annotations

import io
import re
import unicodedata
from collections import Counter
from collections.abc import Iterable, Iterator
from typing import Any

from reportgen.errors import RenderError
from reportgen.model import Document
from reportgen.render.html import quantity_parts


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


class _TwoByteTable(dict):
    """A two-byte CMap as a str.translate table: {code: text}, unknown codes dropped."""

    def __missing__(self, code: int) -> str:
        return ""


def _fast_map(cmap: dict[bytes, str] | None):
    if cmap and all(len(k) == 2 for k in cmap):
        return _TwoByteTable({int.from_bytes(k, "big"): v for k, v in cmap.items()})
    return cmap


def _decode(raw: bytes, cmap) -> str:
    if cmap is None:
        return raw.decode("latin-1")
    if isinstance(cmap, _TwoByteTable):
        if len(raw) % 2:
            raw = raw[:-1]
        # each code unit becomes one character (surrogates too), then the table maps it
        return raw.decode("utf-16-be", "surrogatepass").translate(cmap)
    width = len(next(iter(cmap))) if cmap else 1
    return "".join(cmap.get(raw[i:i + width], "") for i in range(0, len(raw), width))


#: The text a page shows, as the renderer writes it: font selections, hex-string text
#: operators and form drawings. A stream with anything else that can hold text (literal
#: strings, the quote operators, inline images) goes through the full content parser.
_NAME = rb"/([^\s/\[\]<>()%{}]+)"
_OPS = re.compile(_NAME + rb"\s+[-+\d.]+\s+Tf(?![A-Za-z*])"
                  rb"|\[([^\]]*)\]\s*TJ(?![A-Za-z*])"
                  rb"|<([0-9a-fA-F\s]*)>\s*Tj(?![A-Za-z*])"
                  rb"|" + _NAME + rb"\s+Do(?![A-Za-z*])")
_HEX_STRING = re.compile(rb"<([0-9a-fA-F\s]*)>")
_GAP = re.compile(rb"-(\d+\.?\d*|\.\d+)")


def _tj_segments(array: bytes) -> list[bytes | None]:
    """A TJ array's strings, joined between spaces (None): a gap of more than a quarter
    em reads as a space; a smaller kerning or spacing adjustment does not."""
    out: list[bytes | None] = []
    start = 0
    for m in _GAP.finditer(array):  # only gaps are negative: hex strings have no sign
        if float(m.group(1)) > 250:
            out += [_hex_bytes(array[start:m.start()]), None]
            start = m.end()
    out.append(_hex_bytes(array[start:]))
    return out


def _hex_bytes(segment: bytes) -> bytes:
    return bytes.fromhex(b"".join(_HEX_STRING.findall(segment)).decode("ascii"))


_INLINE_IMAGE = re.compile(rb"(?<![A-Za-z])BI(?![A-Za-z])")


def _plain(data: bytes) -> bool:
    return not (b"(" in data or b"'" in data or b'"' in data
                or (b"BI" in data and _INLINE_IMAGE.search(data)))


def _content_bytes(obj) -> bytes:
    import pikepdf

    if isinstance(obj, pikepdf.Stream):  # a form drawing
        return obj.read_bytes()
    contents = obj.get("/Contents")  # a page: one stream or an array of them
    if contents is None:
        return b""
    parts = contents if isinstance(contents, pikepdf.Array) else [contents]
    return b"\n".join(c.read_bytes() for c in parts)


def _pattern_ops(data: bytes) -> Iterator[tuple[str, Any]]:
    """("font", name), ("text", segments) and ("form", name), read by pattern."""
    for m in _OPS.finditer(data):
        font_name, array, hex_text, xo_name = m.groups()
        if font_name is not None:
            yield "font", "/" + font_name.decode("latin-1")
        elif array is not None:
            yield "text", _tj_segments(array)
        elif hex_text is not None:
            yield "text", [_hex_bytes(b"<" + hex_text + b">")]
        else:
            yield "form", "/" + xo_name.decode("latin-1")


def _parsed_ops(obj) -> Iterator[tuple[str, Any]]:
    """The same operations by pikepdf's content-stream parser (any content stream)."""
    import pikepdf

    for operands, op in pikepdf.parse_content_stream(obj, "Tf Tj TJ ' \" Do"):  # type: ignore[misc]
        name = str(op)
        if name == "Tf":
            yield "font", str(operands[0])
        elif name in ("Tj", "'", '"'):
            yield "text", [bytes(operands[-1])]
        elif name == "TJ":
            segments: list[bytes | None] = []
            run = b""
            for item in operands[0]:
                if isinstance(item, pikepdf.String):
                    run += bytes(item)
                elif float(item) < -250:
                    segments += [run, None]
                    run = b""
            yield "text", segments + [run]
        elif name == "Do":
            yield "form", str(operands[0])


def _stream_text(obj, resources, maps: dict, seen: set, parse: bool = False) -> list[str]:
    """The text runs a page or form shows, forms drawn from it included. The renderer's
    own plain streams are read by pattern; anything else (or ``parse``) by pikepdf."""
    data = b"" if parse else _content_bytes(obj)
    ops = _parsed_ops(obj) if parse or not _plain(data) else _pattern_ops(data)
    fonts = resources.get("/Font", {}) if resources is not None else {}
    xobjects = resources.get("/XObject", {}) if resources is not None else {}
    current = None
    runs: list[str] = []
    for kind, value in ops:
        if kind == "font":
            font = fonts.get(value)
            if font is None:
                current = None
                continue
            if font.objgen not in maps:  # fonts are shared by pages: parse each CMap once
                maps[font.objgen] = _fast_map(_to_unicode_map(font))
            current = maps[font.objgen]
        elif kind == "text":
            runs.append("".join(" " if seg is None else _decode(seg, current)
                                for seg in value))
        else:
            xo = xobjects.get(value)
            if xo is not None and xo.get("/Subtype") == "/Form" and xo.objgen not in seen:
                seen.add(xo.objgen)
                runs += _stream_text(xo, xo.get("/Resources", resources), maps, seen, parse)
    return runs


def fast_text(pdf: bytes) -> tuple[int, list[str]]:
    """(pages, text of each page) from the content streams' text operators.

    About 100x faster than layout-aware extraction: the self-check needs only to know
    which strings each page shows, so runs are joined with spaces, not laid out; the
    renderer's own plain streams are read by pattern, anything else by pikepdf's parser.
    """
    import pikepdf

    with pikepdf.open(io.BytesIO(pdf)) as p:
        return len(p.pages), _pages_text(p)


def _pages_text(p, start: int = 0, stop: int | None = None) -> list[str]:
    maps: dict = {}
    pages = list(p.pages)[start:stop]
    return [_norm(" ".join(_stream_text(page.obj, page.obj.get("/Resources"), maps, set())))
            for page in pages]


def _squash(text: str) -> str:
    return re.sub(r"\s+", "", text.replace("\u00ad", ""))


def _comparable(text: str) -> str:
    """Text as the self-check compares it: NFKC (a ligature glyph may read back as "fi"
    or "ﬁ", an Arabic letter as its contextual form), then without white space."""
    return _squash(unicodedata.normalize("NFKC", text))


#: Right-to-left letters (Hebrew, Arabic, Syriac, Thaana, N'Ko ... and their presentation
#: forms) and the punctuation between them, which takes their direction; digits end a run.
_RTL_CHARS = ("\u0590-\u08ff\ufb1d-\ufdff\ufe70-\ufefc\U00010800-\U00010fff"
              "\U0001e800-\U0001efff")
_RTL_RUN = re.compile(f"([{_RTL_CHARS}](?:[^\\w]*[{_RTL_CHARS}])*)")


def shown(text: str, expected: str) -> bool:
    """Whether ``expected`` is in ``text`` (both :func:`_comparable`), allowing for what a
    correct PDF does to right-to-left text: its glyphs are drawn, and so read back, in
    visual order. Each right-to-left run must appear as written, reversed, or (where
    shaping joined letters into one glyph) as the same letters in one stretch of text;
    everything else must appear as written. A title that is not on the page still fails.
    """
    if expected in text:
        return True
    pieces = _RTL_RUN.split(expected)
    for i, piece in enumerate(pieces):
        if not piece:
            continue
        if i % 2 == 0:  # left-to-right text between runs
            if piece not in text:
                return False
        elif piece not in text and piece[::-1] not in text and not _anagram_in(text, piece):
            return False
    return True


def _anagram_in(text: str, word: str) -> bool:
    """Whether some stretch of ``text`` holds exactly the letters of ``word`` (any order)."""
    n = len(word)
    if n > len(text):
        return False
    want = Counter(word)
    have = Counter(text[:n])
    if have == want:
        return True
    for i in range(n, len(text)):
        have[text[i]] += 1
        old = text[i - n]
        have[old] -= 1
        if not have[old]:
            del have[old]
        if have == want:
            return True
    return False


def self_check(pdf: bytes, doc: Document, embedded: Iterable[str] | None = None) -> None:
    """Raise RenderError unless ``pdf`` says what ``doc`` says (see the module docstring).

    ``embedded``: the names of the files the package must embed (its manifest's list);
    the PDF must embed exactly those, and attach none to a page.
    """
    import pikepdf

    problems: list[str] = []
    try:
        with pikepdf.open(io.BytesIO(pdf)) as p:
            problems += _syntax_problems(p)
            pages = _pages_text(p)
            problems += _font_problems(p)
            if embedded is not None:
                problems += _embedded_problems(p, sorted(embedded))
    except Exception as exc:
        raise RenderError(f"self-check: the written PDF cannot be read back: {exc}") from None
    n_pages = len(pages)
    # Compared without white space: text runs split a line wherever the font or the
    # position changes, so where a space falls between runs is not the PDF's content.
    text = _comparable(" ".join(pages))
    if f"of{n_pages}" not in text or f"of{n_pages + 1}" in text:
        problems.append(f"the page footer does not count {n_pages} pages")
    for s in doc.sections:
        if not shown(text, _comparable(_norm(s.title)[:60])):
            problems.append(f"section title {s.title!r} is missing from the text")
        sheet = s.calc_id in doc.schedule_ids  # a schedule item's sheet: its own selection
        for r in doc.sheet_results(s) if sheet else s.results:
            if r.key_result:
                value, _ = quantity_parts(r.quantity, doc.info.display or doc.info.units)
                if _comparable(value) not in text:
                    problems.append(f"key result {s.calc_id}/{r.key} = {value} is not shown")
    for status in {c.status for _, c in doc.design_checks}:  # information rows have none
        if status.upper() not in text:
            problems.append(f"check status {status.upper()} is missing from the text")
    if problems:
        raise RenderError("self-check of the written PDF failed: " + "; ".join(problems))


def page_attachments(pdf: Any) -> list[str]:
    """Files attached to pages of an open ``pikepdf.Pdf`` (annotations), as "NAME (page N)".

    They are embedded files too, outside the document's list of attachments; a package
    of this tool has none.
    """
    found = []
    for number, page in enumerate(pdf.pages, start=1):
        for annot in page.obj.get("/Annots", ()):
            if annot.get("/Subtype") == "/FileAttachment":
                spec = annot.get("/FS", {})
                name = spec.get("/UF", spec.get("/F", "?")) if hasattr(spec, "get") else "?"
                found.append(f"{name} (page {number})")
    return found



def _embedded_problems(p, expected: list[str]) -> list[str]:
    names = sorted(str(n) for n in p.attachments)
    out = [f"file {n} is attached to a page" for n in page_attachments(p)]
    if names != expected:
        out.append(f"the PDF embeds {names}, the manifest lists {expected}")
    return out


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
