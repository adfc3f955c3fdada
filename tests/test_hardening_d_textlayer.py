"""The text layer of equations: superscripts and subscripts read back as Unicode
superscript and subscript characters (ω², 10⁻⁵, m/s², f₀), and the page looks exactly as
it did when those glyphs were drawn as outlines.
"""

from __future__ import annotations

import io
import shutil
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from hardening_d_support import job_text, run, write_job

from reportgen.formula import to_latex
from reportgen.render.mathsvg import (
    _math_font,
    font_face_css,
    glyphs_to_text,
    latex_svg,
    math_font,
    script_glyphs,
)

EQUATIONS = [
    r"A = \omega^{2}\,X = 151.844^{2} \times 0.000150777 = 3.476\ \mathrm{m/s^{2}}",
    r"X = 3.47826 \times 10^{-5} \times 4.33485 = 0.0001508\ \mathrm{m}",
    r"f_{n} = \dfrac{\omega_{n}}{2\,\pi} = "
    + to_latex("sqrt(b**2 + a**2)", {"a": 1.27006e-5, "b": 0.00127}) + r" = 22.03\ \mathrm{Hz}",
    r"\phi = 1 \times 10^{-6}\ \mathrm{rad}\ \left({5.73 \times 10^{-5}}^{\circ}\right)",
    r"k_{m} = x_{i}^{3} + y_{0} - a_{12}",
]


def _texts(svg: bytes) -> str:
    root = ET.fromstring(svg)
    return "".join(t.text or "" for t in root.iter("{http://www.w3.org/2000/svg}text"))


def test_scripts_become_unicode_characters():
    assert "𝜔²" in _texts(latex_svg(EQUATIONS[0])) and "m/s²" in _texts(latex_svg(EQUATIONS[0]))
    assert "10⁻⁵" in _texts(latex_svg(EQUATIONS[1]))
    assert "𝑓ₙ" in _texts(latex_svg(EQUATIONS[2])) and "𝜔ₙ" in _texts(latex_svg(EQUATIONS[2]))
    assert "10⁻⁵)²" in _texts(latex_svg(EQUATIONS[2]))
    assert "10⁻⁶" in _texts(latex_svg(EQUATIONS[3])) and "10⁻⁵°" in _texts(latex_svg(EQUATIONS[3]))
    assert "𝑥ᵢ³" in _texts(latex_svg(EQUATIONS[4])) and "₁₂" in _texts(latex_svg(EQUATIONS[4]))


def test_font_draws_each_script_character_with_the_glyph_set_for_it():
    """The embedded font maps ² to a copy of the very glyph the typesetter drew."""
    from importlib import resources

    from fontTools.pens.recordingPen import RecordingPen
    from fontTools.ttLib import TTFont

    original = TTFont(str(resources.files("ziamath") / "fonts" / "STIXTwoMath-Regular.ttf"))
    embedded = TTFont(io.BytesIO(math_font()))
    names, cmap = original.getGlyphOrder(), embedded.getBestCmap()
    gs_o, gs_e = original.getGlyphSet(), embedded.getGlyphSet()
    for (_kind, gid), ch in script_glyphs().items():
        a, b = RecordingPen(), RecordingPen()
        gs_o[names[gid]].draw(a)
        gs_e[cmap[ord(ch)]].draw(b)
        assert a.value == b.value, ch
        assert gs_o[names[gid]].width == gs_e[cmap[ord(ch)]].width


def _raster(svgs: list[bytes], tmp: Path, name: str) -> np.ndarray:
    import weasyprint
    from PIL import Image

    from reportgen.render.assets import data_uri

    css = font_face_css(data_uri(math_font(), "font/ttf"))
    body = "".join(f"<p>{s.decode('utf-8')}</p>" for s in svgs)
    pdf = tmp / f"{name}.pdf"
    weasyprint.HTML(string=f"<style>{css} body {{ margin: 10px }}</style>{body}").write_pdf(pdf)
    subprocess.run(["pdftoppm", "-r", "150", "-gray", "-singlefile", str(pdf),
                    str(tmp / name)], check=True)
    return np.asarray(Image.open(tmp / f"{name}.pgm"), dtype=int)


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_page_looks_the_same_as_with_outlined_scripts(tmp_path):
    import ziamath

    new = [latex_svg(tex) for tex in EQUATIONS]
    ziamath.config.svg2 = True
    old = [glyphs_to_text(ziamath.Latex(tex, size=12.5).svg(), _math_font().cmap, {})
           for tex in EQUATIONS]  # scripts as outlines, as before
    assert all("²" not in _texts(s) for s in old) and new != old
    a, b = _raster(old, tmp_path, "old"), _raster(new, tmp_path, "new")
    assert a.shape == b.shape
    diff = np.abs(a - b)
    # the same outlines, filled once as a path and once as a glyph: anti-aliasing may
    # differ at an edge pixel, nothing moves
    assert diff.mean() < 0.5 and (diff > 128).mean() < 2e-4, (diff.mean(), (diff > 128).sum())


def test_extracted_text_of_a_package_reads_the_scripts(tmp_path):
    """A forced-response package: A = ω²X (Thomson & Dahleh §3.1 form), substituted as
    (151.8 rad/s)² × 0.1508 mm; pypdf and pdftotext both read the superscripts, never a
    bare "× 10" before a number. (Display units pick a prefix, so X prints in mm, not in
    powers of ten; pdftotext sets the ² raised over a bracket on a line of its own.)"""
    import re

    from pypdf import PdfReader

    calc = {"id": "pump-p2", "plugin": "forced_response", "title": "Pump P2 forced response",
            "inputs": {"mass": "600 kg", "stiffness": "11500 kN/m", "damping_ratio": 0.05,
                       "force_amplitude": "400 N", "frequency": "1450 rpm"}}
    path = write_job(tmp_path, job_text(calcs=[calc]))
    code, _, err = run(["build", str(path), "--out", str(tmp_path / "out"), "--jobs", "1"])
    assert code in (0, 1), err
    pdf = tmp_path / "out" / "QEP-2417-V-301-A.pdf"
    texts = {"pypdf": "\n".join(p.extract_text() for p in PdfReader(pdf).pages)}
    if shutil.which("pdftotext"):
        texts["pdftotext"] = subprocess.run(["pdftotext", str(pdf), "-"], check=True,
                                            capture_output=True, text=True).stdout
    for tool, text in texts.items():
        assert "𝜔²" in text and "m/s²" in text, tool
        assert ("rad/s)²" in text) if tool == "pypdf" else ("rad/s)" in text), tool
        assert not re.search(r"× 10(?![⁰¹²³⁴⁵⁶⁷⁸⁹⁻\d])", text), tool
