"""Lean equation SVG: ziamath lays the equation out, glyphs are written as text in an
embedded subset of its math font, so the PDF renderer draws fonts, not outlines.

Measured (DEVELOPERS.md, "Performance notes"): WeasyPrint parses every outline point of
an SVG path in Python, so an equation drawn as glyph outlines costs about twice as much
layout as the same equation as text, and makes a PDF six times larger. Glyphs that have
no Unicode code point (stretched delimiters, radical parts) stay outlines.
"""

from __future__ import annotations

import hashlib
import io
import xml.etree.ElementTree as ET
from functools import lru_cache

#: The family name the equation SVGs ask for; private, so no installed font can stand in.
MATH_FAMILY = "reportgen-math"
_SVG_NS = "{http://www.w3.org/2000/svg}"
_FONT_PREFIX = "STIXTwoMath"
#: ziamath versions whose layout the speed-up below was checked against (byte-identical
#: output, tests/test_mathsvg.py). Other versions run unpatched.
_PATCHED_VERSIONS = ("0.13",)


def _could_stretch(el: ET.Element, names: set[str], table: dict) -> bool:
    if el.tag not in ("mo", "mi"):
        return False
    if el.get("stretchy", "false") != "false" or "minsize" in el.attrib:
        return True
    text = "".join(el.itertext()).strip()
    if el.tag == "mi" and text not in names:
        return False
    return any(table.get((text, form), {}).get("stretchy", "false") != "false"
               for form in ("prefix", "infix", "postfix"))


@lru_cache(maxsize=1)
def install_speedups() -> bool:
    """Skip ziamath's height pre-pass where its result cannot be used.

    ziamath lays every row out twice, once without stretchy operators to learn how far
    to stretch them; nested rows repeat that at every level, so an equation of depth d
    costs about 2**d layouts. The pre-pass only feeds stretchy operators, and inside a
    pre-pass stretchy operators are left out of every height, so it is skipped there and
    for rows with no operator that could stretch. Output is unchanged (tested).
    """
    try:
        from importlib import metadata

        import ziamath  # noqa: F401
        from ziamath import operators
        from ziamath.nodes.mrow import Mrow
    except ImportError:
        return False
    if metadata.version("ziamath") not in _PATCHED_VERSIONS:
        return False
    original = Mrow._get_height_nostretch
    names, table = operators.names, operators.operators

    def _get_height_nostretch(self, line, **kwargs):
        if kwargs.get("nostretch"):
            return (0.0, 0.0)
        if not any(_could_stretch(el, names, table) for child in line for el in child.iter()):
            return (0.0, 0.0)
        return original(self, line, **kwargs)

    _get_height_nostretch.original = original  # type: ignore[attr-defined]  # for tests
    Mrow._get_height_nostretch = _get_height_nostretch  # type: ignore[method-assign]
    _skip_text_outlines()
    return True


_TEXT_MODE = {"on": False}


def _skip_text_outlines() -> None:
    """While :func:`latex_svg` runs, glyphs that will become text get no outline path.

    Formatting the outline of every glyph is a fifth of ziamath's time here, and
    :func:`glyphs_to_text` drops the outline of each glyph written as text.
    """
    from ziafont.glyph import SimpleGlyph

    original = SimpleGlyph.svgsymbol

    def svgsymbol(self):
        if not _TEXT_MODE["on"] or _char_for(self.id, self.font.cmap) is None:
            return original(self)
        xmin, xmax, ymin, ymax = self.viewbox
        sym = ET.Element("symbol")
        sym.attrib["id"] = self.id
        sym.attrib["viewBox"] = (f"{_zfmt(xmin)} {_zfmt(-ymax)} {_zfmt(xmax - xmin)}"
                                 f" {_zfmt(ymax - ymin)}")
        return sym

    SimpleGlyph.svgsymbol = svgsymbol  # type: ignore[method-assign]


def _zfmt(v: float) -> str:
    from ziafont.glyph import fmt

    return fmt(v)


def _num(text: str | None) -> float:
    return float(text) if text else 0.0


def _fmt(v: float) -> str:
    text = f"{v:.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


@lru_cache(maxsize=1)
def _math_font():
    import ziamath

    return ziamath.Latex("x").font  # the loaded default math font (STIX Two Math)


def latex_svg(latex: str, size: float = 12.5) -> bytes:
    """Typeset ``latex`` with ziamath; return SVG whose glyphs are text where possible."""
    import ziamath

    install_speedups()
    ziamath.config.svg2 = True  # glyphs as <symbol>/<use>: positions are easy to read back
    _TEXT_MODE["on"] = True
    try:
        svg = ziamath.Latex(latex, size=size).svg()
    finally:
        _TEXT_MODE["on"] = False
    return glyphs_to_text(svg, _math_font().cmap)


def glyphs_to_text(svg: str, cmap) -> bytes:
    """Rewrite each ``<use>`` of a math-font glyph that has a code point as a text run.

    Runs of one font size and colour become one ``<text>`` with per-glyph x and y lists,
    so the renderer handles one node, not one per glyph.
    """
    root = ET.fromstring(svg)
    symbols = {s.get("id"): s for s in root.iter(_SVG_NS + "symbol")}
    out = ET.Element(_SVG_NS + "svg", dict(root.attrib))
    kept: list[ET.Element] = []
    runs: dict[tuple[str, str], list[tuple[float, float, str]]] = {}
    for el in list(root):
        if el.tag == _SVG_NS + "symbol":
            continue
        if el.tag != _SVG_NS + "use":
            kept.append(el)
            continue
        sid = (el.get("href") or el.get("{http://www.w3.org/1999/xlink}href") or "")[1:]
        sym = symbols.get(sid)
        char = _char_for(sid, cmap)
        if sym is None or char is None:
            kept.append(el)
            continue
        vb = [float(v) for v in (sym.get("viewBox") or "0 0 0 0").split()]
        if not vb[3]:
            kept.append(el)
            continue
        scale = _num(el.get("height")) / vb[3]
        x = _num(el.get("x")) - vb[0] * scale  # glyph origin: the box starts at min(xmin, 0)
        y = _num(el.get("y")) - vb[1] * scale  # baseline: the box top is ymax above it
        key = (_fmt(12 * scale), el.get("fill", "black"))  # symbols are drawn at 12 units
        runs.setdefault(key, []).append((x, y, char))
    used = {(u.get("href") or "")[1:] for u in kept if u.tag == _SVG_NS + "use"}
    for sid in sorted(used):
        if sid in symbols:
            out.append(symbols[sid])
    for el in kept:
        out.append(el)
    for (font_size, fill), glyphs in runs.items():
        t = ET.SubElement(out, _SVG_NS + "text", {
            "x": " ".join(_fmt(g[0]) for g in glyphs),
            "y": " ".join(_fmt(g[1]) for g in glyphs),
            "font-family": MATH_FAMILY, "font-size": font_size, "fill": fill})
        t.text = "".join(g[2] for g in glyphs)
    ET.register_namespace("", "http://www.w3.org/2000/svg")
    return ET.tostring(out, encoding="utf-8", xml_declaration=False)


def _char_for(sid: str, cmap) -> str | None:
    if not sid.startswith(_FONT_PREFIX):
        return None
    try:
        gid = int(sid.rsplit("_", 1)[1])
    except (IndexError, ValueError):
        return None
    # One glyph may serve several code points; any that maps back to it will do, but a
    # space or control character would be collapsed by the renderer, and one outside the
    # embedded font's alphabet would not be drawn at all (that glyph stays an outline).
    for ch in sorted(cmap.char(gid)):
        if (ch.isprintable() and not ch.isspace() and cmap.glyphid(ch) == gid
                and in_alphabet(ch)):
            return ch
    return None


#: The characters the embedded math font keeps (Unicode blocks): Latin, Latin-1, Greek,
#: punctuation, letterlike symbols, arrows, operators, technical symbols and the bold and
#: italic math alphabets. The same font for every package; a glyph outside is an outline.
MATH_ALPHABET = ((0x20, 0x7E), (0xA0, 0xFF), (0x370, 0x3FF), (0x2000, 0x206F),
                 (0x2100, 0x214F), (0x2190, 0x21FF), (0x2200, 0x22FF), (0x2300, 0x23FF),
                 (0x1D400, 0x1D4CF), (0x1D6A8, 0x1D7CB))


def in_alphabet(ch: str) -> bool:
    c = ord(ch)
    return any(lo <= c <= hi for lo, hi in MATH_ALPHABET)


def math_font_key() -> str:
    """Cache key of :func:`math_font`: the typesetter's version and the alphabet."""
    from importlib import metadata

    try:
        version = metadata.version("ziamath")
    except metadata.PackageNotFoundError:
        version = "?"
    return hashlib.sha256(f"mathfont/2\0{version}\0{MATH_ALPHABET}".encode()).hexdigest()


@lru_cache(maxsize=1)
def math_font() -> bytes:
    """The embedded math font: ziamath's font cut to :data:`MATH_ALPHABET`, unshaped.

    The equations' text places one glyph per position itself, so the renderer must not
    shape it (no substitutions, no kerning): without GSUB, GPOS, GDEF, kern and MATH it
    draws exactly the glyphs named. The same font serves every package (about 190 KB,
    deterministic: no timestamp is recalculated), so the HTML needs it before any
    equation is set; the PDF writer embeds only the glyphs a package uses.
    """
    from importlib import resources

    from fontTools import subset
    from fontTools.ttLib import TTFont

    path = str(resources.files("ziamath") / "fonts" / "STIXTwoMath-Regular.ttf")
    font = TTFont(path, lazy=True, recalcTimestamp=False)
    cmap = font.getBestCmap()
    opts = subset.Options()
    opts.layout_features = []  # one glyph per text position: nothing to shape
    opts.drop_tables += ["MATH", "GSUB", "GPOS", "GDEF", "kern"]
    opts.hinting = False
    opts.notdef_outline = True
    sub = subset.Subsetter(opts)
    sub.populate(unicodes=[c for c in sorted(cmap) if in_alphabet(chr(c))])
    sub.subset(font)
    buf = io.BytesIO()
    font.save(buf)
    return buf.getvalue()


def font_face_css(url: str) -> str:
    return f"@font-face {{ font-family: '{MATH_FAMILY}'; src: url({url}); }}"
