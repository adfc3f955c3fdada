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
from typing import Any

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


_DIGITS = "0123456789+−=()"
#: Characters as the typesetter draws them (math italic letters, U+2212 minus, the ring
#: operator of ^{\circ}) and the Unicode character the text layer gives them as a
#: superscript or subscript. Unicode has these forms only; others keep their character.
SUPERSCRIPTS = {**dict(zip(_DIGITS, "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻⁼⁽⁾", strict=True)), "∘": "°",
                "\U0001d45b": "ⁿ", "\U0001d456": "ⁱ"}
SUBSCRIPTS = {**dict(zip(_DIGITS, "₀₁₂₃₄₅₆₇₈₉₊₋₌₍₎", strict=True)),
              **dict(zip("\U0001d44e\U0001d452\U0001d45c\U0001d465\u210e\U0001d458"
                         "\U0001d459\U0001d45a\U0001d45b\U0001d45d\U0001d460\U0001d461"
                         "\U0001d456\U0001d457\U0001d45f\U0001d462\U0001d463",
                         "ₐₑₒₓₕₖₗₘₙₚₛₜᵢⱼᵣᵤᵥ", strict=True)),
              **dict(zip("\U0001d6fd\U0001d6fe\U0001d70c\U0001d711\U0001d712", "ᵦᵧᵨᵩᵪ",
                         strict=True))}


@lru_cache(maxsize=1)
def script_glyphs() -> dict[tuple[str, int], str]:
    """{("sup" or "sub", glyph id the typesetter draws at script size): character}.

    At script size the typesetter draws a character's script variant (the font's ssty
    substitution), a glyph with no code point of its own; the embedded font maps the
    Unicode superscript or subscript character to a copy of that glyph (:func:`math_font`).
    """
    font = _math_font()
    out: dict[tuple[str, int], str] = {}
    for kind, table in (("sup", SUPERSCRIPTS), ("sub", SUBSCRIPTS)):
        for base, script in table.items():
            gid = font.cmap.glyphid(base)
            if not gid:
                continue
            if font.gsub:
                gid = font.gsub.sub([gid], font.features)[0]
            out[(kind, gid)] = script
    return out


def glyphs_to_text(svg: str, cmap, scripts: dict[tuple[str, int], str] | None = None
                   ) -> bytes:
    """Rewrite each ``<use>`` of a math-font glyph that has a code point as a text run.

    Runs of one font size and colour become one ``<text>`` with per-glyph x and y lists,
    so the renderer handles one node, not one per glyph. With ``scripts`` (from
    :func:`script_glyphs`), a glyph set as a superscript or subscript is written as its
    Unicode superscript or subscript character, which the embedded font draws with that
    very glyph: the page is unchanged and its text reads ω², 10⁻⁵, m/s², f₀. A run
    breaks where the size changes, so the text runs keep the reading order. ``scripts``
    defaults to that table; ``{}`` leaves script glyphs as outlines.
    """
    if scripts is None:
        scripts = script_glyphs()
    root = ET.fromstring(svg)
    symbols = {s.get("id"): s for s in root.iter(_SVG_NS + "symbol")}
    out = ET.Element(_SVG_NS + "svg", dict(root.attrib))
    kept: list[ET.Element] = []
    glyphs: list[tuple[tuple[str, str], float, float, str, Any, float]] = []
    for el in list(root):
        if el.tag == _SVG_NS + "symbol":
            continue
        if el.tag != _SVG_NS + "use":
            kept.append(el)
            continue
        sid = (el.get("href") or el.get("{http://www.w3.org/1999/xlink}href") or "")[1:]
        sym = symbols.get(sid)
        char = _char_for(sid, cmap)
        gid = _glyph_id(sid)
        if sym is None or (char is None and not (scripts and any(
                (kind, gid) in scripts for kind in ("sup", "sub")))):
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
        glyphs.append((key, x, y, char or "", el, 12 * scale))
    if scripts:
        glyphs = _script_chars(glyphs, scripts, kept)
    runs: dict[tuple[str, str], list[tuple[float, float, str]]] = {}
    order: list[tuple[tuple[str, str], list[tuple[float, float, str]]]] = []
    for key, x, y, char, _el, _size in glyphs:
        if not scripts:  # one run per size: the form before scripts became text
            run = runs.setdefault(key, [])
            if len(run) == 0:
                order.append((key, run))
        elif order and order[-1][0] == key:
            run = order[-1][1]
        else:
            run = []
            order.append((key, run))
        run.append((x, y, char))
    used = {(u.get("href") or "")[1:] for u in kept if u.tag == _SVG_NS + "use"}
    for sid in sorted(used):
        if sid in symbols:
            out.append(symbols[sid])
    for el in kept:
        out.append(el)
    for (font_size, fill), run in order:
        t = ET.SubElement(out, _SVG_NS + "text", {
            "x": " ".join(_fmt(g[0]) for g in run),
            "y": " ".join(_fmt(g[1]) for g in run),
            "font-family": MATH_FAMILY, "font-size": font_size, "fill": fill})
        t.text = "".join(g[2] for g in run)
    ET.register_namespace("", "http://www.w3.org/2000/svg")
    return ET.tostring(out, encoding="utf-8", xml_declaration=False)


def _script_chars(glyphs: list, scripts: dict[tuple[str, int], str], kept: list) -> list:
    """Superscript and subscript glyphs as their Unicode characters.

    A glyph smaller than the last full-size glyph before it and set above (below) that
    glyph's baseline is a superscript (subscript). Where Unicode has no such character,
    or the typesetter drew another glyph than the font maps it to, the glyph keeps its
    own character, or stays an outline if it has none.
    """
    out = []
    base: tuple[float, float] | None = None  # (baseline, size) of the last full-size glyph
    for key, x, y, char, el, size in glyphs:
        kind = None
        if base is not None and size < 0.95 * base[1] and abs(y - base[0]) > 0.05 * base[1]:
            kind = "sup" if y < base[0] else "sub"
        else:
            base = (y, size)
        sid = (el.get("href") or el.get("{http://www.w3.org/1999/xlink}href") or "")[1:]
        script = scripts.get((kind, _glyph_id(sid))) if kind else None
        if script is not None:
            out.append((key, x, y, script, el, size))
        elif char:
            out.append((key, x, y, char, el, size))
        else:  # a script variant with no Unicode form here: drawn as its outline
            kept.append(el)
    return out


def _glyph_id(sid: str) -> int:
    try:
        return int(sid.rsplit("_", 1)[1]) if sid.startswith(_FONT_PREFIX) else -1
    except (IndexError, ValueError):
        return -1


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
    scripts = sorted(SUPERSCRIPTS.items()) + sorted(SUBSCRIPTS.items())
    return hashlib.sha256(f"mathfont/3\0{version}\0{MATH_ALPHABET}\0{scripts}".encode()
                          ).hexdigest()


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
    names = font.getGlyphOrder()
    scripts = sorted(script_glyphs().items(), key=lambda item: item[1])
    opts = subset.Options()
    opts.layout_features = []  # one glyph per text position: nothing to shape
    opts.drop_tables += ["MATH", "GSUB", "GPOS", "GDEF", "kern"]
    opts.hinting = False
    opts.notdef_outline = True
    sub = subset.Subsetter(opts)
    sub.populate(unicodes=[c for c in sorted(cmap) if in_alphabet(chr(c))],
                 glyphs=sorted({names[gid] for (_kind, gid), _ch in scripts}))
    sub.subset(font)
    _add_script_glyphs(font, [(names[gid], ch) for (_kind, gid), ch in scripts])
    buf = io.BytesIO()
    font.save(buf)
    return buf.getvalue()


def _add_script_glyphs(font, pairs: list[tuple[str, str]]) -> None:
    """Map each superscript or subscript character to a copy of the glyph drawn for it.

    A copy, not the glyph itself: the PDF's text map gives one text per glyph, and the
    same script variant serves both the superscript and the subscript of a character.
    """
    import copy

    glyf, hmtx = font["glyf"], font["hmtx"]
    order = list(font.getGlyphOrder())
    for name, ch in pairs:
        dup = f"{name}.u{ord(ch):04X}"
        glyf.glyphs[dup] = copy.deepcopy(glyf[name])
        hmtx.metrics[dup] = hmtx.metrics[name]
        order.append(dup)
        for table in font["cmap"].tables:
            if table.isUnicode():
                table.cmap[ord(ch)] = dup
    font.setGlyphOrder(order)
    glyf.setGlyphOrder(order)


def font_face_css(url: str) -> str:
    return f"@font-face {{ font-family: '{MATH_FAMILY}'; src: url({url}); }}"
