"""What the pages show, compared: a package's pages against a rebuild of its embedded job
(each page's drawing as a digest of everything it draws with; or its text), and the
embedded results against the numbers the summary prints.

Digests are of decoded content, not of file bytes: a package re-saved by qpdf or pikepdf,
or linearised, draws the same pages and gives the same digests.
"""

from __future__ import annotations

import dataclasses
import difflib
import hashlib
import io
from typing import Any

#: Stream dictionary keys that say how a stream is stored, not what it holds.
_STORAGE_KEYS = frozenset({"/Length", "/Filter", "/DecodeParms", "/DL"})
#: Keys that point back up the tree, or are bookkeeping of the file rather than drawing.
_SKIP_KEYS = frozenset({"/Parent", "/P", "/StructParents", "/StructParent"})


@dataclasses.dataclass(frozen=True)
class Page:
    content: str  # digest of the content streams
    resources: str  # digest of everything the page draws with (fonts, forms, images)
    annotations: tuple[str, ...]  # a digest per annotation (signature widgets left out)
    text: str


class _Digester:
    def __init__(self, pages: dict[tuple[int, int], int]):
        self.pages = pages
        self.memo: dict[tuple[int, int], bytes] = {}
        self.stack: set[tuple[int, int]] = set()

    def __call__(self, obj: Any) -> bytes:
        import pikepdf

        og = obj.objgen if isinstance(obj, pikepdf.Object) and obj.is_indirect else None
        if og is not None and og != (0, 0):
            if og in self.pages:
                return f"page:{self.pages[og]}".encode()
            if og in self.memo:
                return self.memo[og]
            if og in self.stack:
                return b"cycle"
            self.stack.add(og)
        h = hashlib.sha256()
        if isinstance(obj, pikepdf.Stream):
            h.update(b"S")
            for k in sorted(obj.keys()):
                if k not in _STORAGE_KEYS and k not in _SKIP_KEYS:
                    h.update(k.encode() + self(obj[k]))
            try:
                h.update(obj.read_bytes())
            except pikepdf.PdfError:
                h.update(obj.read_raw_bytes())  # an image filter not decoded here
        elif isinstance(obj, pikepdf.Dictionary):
            h.update(b"D")
            for k in sorted(obj.keys()):
                if k not in _SKIP_KEYS:
                    h.update(k.encode() + self(obj[k]))
        elif isinstance(obj, pikepdf.Array):
            h.update(b"A")
            for item in obj:
                h.update(self(item))
        else:
            h.update(repr(obj).encode())
        out = h.digest()
        if og is not None and og != (0, 0):
            self.stack.discard(og)
            self.memo[og] = out
        return out


def pages_of(data: bytes) -> list[Page]:
    """The digests and text of every page of the PDF in ``data``."""
    import pikepdf

    from reportgen.package.seal import SealError, seal_box
    from reportgen.render.selfcheck import _pages_text

    try:
        box = seal_box(data)[1]
    except SealError:
        box = None
    with pikepdf.open(io.BytesIO(data)) as pdf:
        index = {p.objgen: i + 1 for i, p in enumerate(pdf.pages)}
        dig = _Digester(index)
        texts = _pages_text(pdf)
        out = []
        for page, text in zip(pdf.pages, texts, strict=True):
            obj = page.obj
            content = hashlib.sha256(b"".join(
                c.read_bytes() for c in _contents(obj))).hexdigest()
            rest = hashlib.sha256()
            for k in sorted(obj.keys()):
                if k not in _SKIP_KEYS | {"/Contents", "/Annots"}:
                    rest.update(k.encode() + dig(obj[k]))
            annots = tuple(dig(a).hex() for a in obj.get("/Annots", ())
                           if not _seal_widget(a, box))
            out.append(Page(content=content, resources=rest.hexdigest(), annotations=annots,
                            text=text))
        return out


def _seal_widget(annot: Any, box: tuple[float, ...] | None) -> bool:
    """A signed signature field inside the cover's seal box: the seal's own face, which
    verify checks as a seal. Any other annotation counts as drawn over the page."""
    if box is None or annot.get("/FT") != "/Sig" or "/V" not in annot:
        return False
    try:
        x1, y1, x2, y2 = (float(v) for v in annot.get("/Rect"))
    except (TypeError, ValueError):
        return False
    tol = 0.5
    return (min(x1, x2) >= box[0] - tol and max(x1, x2) <= box[2] + tol
            and min(y1, y2) >= box[1] - tol and max(y1, y2) <= box[3] + tol)


def _contents(page: Any) -> list[Any]:
    import pikepdf

    c = page.get("/Contents")
    if c is None:
        return []
    return list(c) if isinstance(c, pikepdf.Array) else [c]


def _text_change(a: str, b: str) -> str:
    """The first stretch of text that differs, as 'shows X where the rebuild shows Y'."""
    wa, wb = a.split(), b.split()
    for op, i1, i2, j1, j2 in difflib.SequenceMatcher(None, wa, wb, autojunk=False
                                                       ).get_opcodes():
        if op == "equal":
            continue
        shows = " ".join(wa[i1:i2][:8]) or "nothing"
        built = " ".join(wb[j1:j2][:8]) or "nothing"
        return f"shows '{shows}' where the rebuild shows '{built}'"
    return "its text is the same, its drawing is not"


def compare_pages(package: bytes, rebuilt: bytes, *, exact: bool) -> list[str]:
    """How the package's pages differ from the rebuild's, a line per page ([] if none).

    ``exact``: the environment matches the build's, so every page must draw the same
    (content, fonts, figures and annotations); otherwise only the text of each page is
    compared, as another version of a library may lay out a page differently.
    """
    mine, theirs = pages_of(package), pages_of(rebuilt)
    out = []
    if len(mine) != len(theirs):
        out.append(f"the package has {len(mine)} pages, the rebuild {len(theirs)}")
    for n, (a, b) in enumerate(zip(mine, theirs, strict=False), start=1):
        what = []
        if a.text.split() != b.text.split():
            what.append(_text_change(a.text, b.text))
        if exact:
            if a.content != b.content and not what:
                what.append("its drawing (content stream) differs from the rebuild's")
            if a.resources != b.resources:
                what.append("the fonts, figures or images it draws with differ from the"
                            " rebuild's")
        extra = [x for x in a.annotations if x not in b.annotations]
        if extra:
            what.append(f"{len(extra)} annotation(s) drawn over the page that the rebuild"
                        " does not have")
        if what:
            out.append(f"page {n}: " + "; ".join(what))
    return out


def printed_numbers(package: bytes, doc: Any) -> list[str]:
    """Numbers of ``doc`` (the document the embedded job computes, whose results verify
    has matched with the embedded results) that the package's summary does not print:
    every key result and every check's value, in order."""
    import pikepdf

    from reportgen.render.html import quantity_parts
    from reportgen.render.selfcheck import _comparable, _pages_text

    with pikepdf.open(io.BytesIO(package)) as pdf:
        text = _comparable(" ".join(_pages_text(pdf)))
    title = _comparable("Summary of results and design checks")
    start = max(text.rfind(title), 0)  # the contents page lists the title first
    end = -1
    if doc.sections:  # the summary ends where the first calc's section begins (its key
        # results table may name the calc too: look after the summary's checks heading)
        heads = [i for h in ("Design checks", "Failing design checks")
                 if (i := text.find(_comparable(h), start)) >= 0]
        end = text.find(_comparable(doc.sections[0].title[:60]), min(heads, default=start)
                        + len(title))
    summary = text[start:end] if end > start else text[start:]
    units = doc.info.units
    wanted = []
    scheduled = set(getattr(doc, "schedule_ids", ()) or ())
    for s in doc.sections:
        for r in s.results:
            shown = (r.key in doc.schedule_results if s.calc_id in scheduled
                     else r.key_result)
            if shown:
                value, unit = quantity_parts(r.quantity, units)
                wanted.append((f"{s.calc_id}/{r.key}", value, unit))
    for s, c in doc.checks:
        # the summary lists design checks (a schedule: the failing ones and each row's
        # governing check); information rows stay in their sections
        if c.value is None or c.status == "info":
            continue
        if s.calc_id in scheduled and c.status != "fail" and c is not s.governing_check:
            continue
        value, unit = quantity_parts(c.value, units)
        wanted.append((f"{s.calc_id}/{c.id} (check)", value, unit))
    out = []
    at = 0
    for label, value, unit in wanted:
        found = summary.find(_comparable(value), at)
        if found < 0:
            out.append(f"the embedded results give {label} = {value} {unit}".rstrip()
                       + ", which the summary does not print")
        elif not scheduled:  # in the summary's order (a schedule's table is in tag order)
            at = found
    return out
