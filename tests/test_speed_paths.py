"""The fast paths give the same package: ziamath's skipped pre-pass (byte-identical
equations), glyphs as text (every glyph kept), the verification cache (same rows, corrupt
entries ignored), and the self-check's text extraction (same text as pypdf's).
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from conftest import REPO

from reportgen.build import compute_document
from reportgen.cache import VerificationCache
from reportgen.commands import load_plugins
from reportgen.jobfile import load_job
from reportgen.render.assets import iter_asset_blocks
from reportgen.render.math import equation_latex

SAMPLES = sorted((REPO / "sample_jobs").glob("qep-10[1-5]*.toml"))
# Hand-made cases with nesting, fences and radicals (no source needed: the check is that
# the speed-up changes nothing, compared with ziamath's own unpatched layout).
NESTED = [
    r"X = \frac{F_0}{k \sqrt{\left(1 - r^{2}\right)^{2} + \left(2 \zeta r\right)^{2}}}",
    r"T = \sqrt{\frac{1 + \left(2 \zeta r\right)^{2}}{\left(1 - r^{2}\right)^{2}"
    r" + \left(2 \zeta r\right)^{2}}} = 0.01182",
    r"a = \left(\left(\left(x + 1\right) \times 2\right) - 3\right)^{2}",
    r"y = x_0 + \frac{v_0}{\omega_n} \sin\left(\omega_n t\right)",
]


@pytest.fixture(scope="module")
def plugins():
    return load_plugins()


@pytest.fixture(scope="module")
def latex_corpus(plugins) -> list[str]:
    out = list(NESTED)
    for path in SAMPLES:
        doc = compute_document(load_job(path, plugins), plugins)
        out += [equation_latex(b, doc.info.units) for k, b in iter_asset_blocks(doc)
                if k == "equation"]
    return out


def test_ziamath_speedup_changes_no_equation(latex_corpus):
    import ziamath
    from ziamath.nodes.mrow import Mrow

    from reportgen.render.mathsvg import install_speedups

    if not install_speedups():
        pytest.skip("ziamath version not patched")
    patched = Mrow._get_height_nostretch
    ziamath.config.svg2 = True
    fast = [ziamath.Latex(t, size=12.5).svg() for t in latex_corpus]
    Mrow._get_height_nostretch = patched.original
    try:
        slow = [ziamath.Latex(t, size=12.5).svg() for t in latex_corpus]
    finally:
        Mrow._get_height_nostretch = patched
    assert len(latex_corpus) > 40
    assert fast == slow


def test_every_glyph_is_kept_as_text_or_outline(latex_corpus):
    import ziamath

    from reportgen.render.mathsvg import MATH_FAMILY, latex_svg

    ns = "{http://www.w3.org/2000/svg}"
    for tex in latex_corpus[:30]:
        ziamath.config.svg2 = True
        before = ET.fromstring(ziamath.Latex(tex, size=12.5).svg())
        after = ET.fromstring(latex_svg(tex))
        n_before = len(before.findall(ns + "use"))
        texts = after.findall(ns + "text")
        n_text = sum(len(t.text or "") for t in texts)
        assert n_text + len(after.findall(ns + "use")) == n_before, tex
        for t in texts:
            assert t.get("font-family") == MATH_FAMILY
            assert len(t.get("x").split()) == len(t.text) == len(t.get("y").split())
        assert n_text > len(after.findall(ns + "use")), tex  # most glyphs became text


def test_math_font_subset_is_deterministic_and_covers_the_glyphs():
    import io

    from fontTools.ttLib import TTFont

    from reportgen.render.mathsvg import subset_font

    chars = "0123456789=+×" + "\U0001d45a\U0001d458\U0001d714"  # digits, 𝑚 𝑘 𝜔
    a, b = subset_font(chars), subset_font(chars)
    assert a == b
    cmap = TTFont(io.BytesIO(a)).getBestCmap()
    assert {ord(c) for c in chars} <= set(cmap)


def _free_job(plugins, tmp_path: Path):
    return load_job(REPO / "sample_jobs" / "qep-101-pump-p1.toml", plugins)


def test_verification_cache_reuses_rows_and_ignores_corrupt_entries(plugins, tmp_path,
                                                                    monkeypatch):
    job = _free_job(plugins, tmp_path)
    reg = plugins.calcs["free_vibration"]
    calls = []
    real = type(reg.calc_type).verify
    monkeypatch.setattr(type(reg.calc_type), "verify",
                        lambda self, ctx, out: calls.append(1) or real(self, ctx, out))
    plain = compute_document(job, plugins)
    first = VerificationCache(tmp_path)
    doc1 = compute_document(job, plugins, verify=first)
    second = VerificationCache(tmp_path)
    doc2 = compute_document(job, plugins, verify=second)
    assert (first.misses, second.hits, second.misses) == (1, 1, 0)
    assert doc1 == doc2 == plain  # cached rows rebuild exactly (floats round-trip)
    assert len(calls) == 2  # the plain build and the first cached build; not the hit
    for entry in (tmp_path / "verify").rglob("*.json"):
        entry.write_bytes(entry.read_bytes().replace(b"solve_ivp", b"solve_XXX"))
    third = VerificationCache(tmp_path)
    assert compute_document(job, plugins, verify=third) == plain
    assert third.misses == 1  # the tampered entry failed its hash and was recomputed


def test_verification_key_follows_inputs_and_plugin_version(plugins, tmp_path, monkeypatch):
    from reportgen.build import calc_context
    from reportgen.cache import verification_key

    job = _free_job(plugins, tmp_path)
    reg = plugins.calcs["free_vibration"]
    ctx = calc_context(job.calcs[0], job.info.units)
    out = reg.calc_type.compute(ctx)
    key = verification_key(reg, ctx, out)
    moved = dict(ctx.inputs, mass=ctx.inputs["mass"] * (1 + 1e-12))
    assert verification_key(reg, type(ctx)(**{**ctx.__dict__, "inputs": moved}), out) != key
    monkeypatch.setattr(type(reg.calc_type), "version", "99.0")
    assert verification_key(reg, ctx, out) != key


def test_self_check_text_matches_pypdf(tmp_path):
    from reportgen.selfcheck import extract_text, fast_text

    assert main_build(tmp_path) in (0, 1)
    pdf = next(tmp_path.glob("*.pdf")).read_bytes()
    n_fast, pages = fast_text(pdf)
    n_slow, slow = extract_text(pdf)
    squash = lambda s: re.sub(r"\s+", "", s)  # noqa: E731
    assert n_fast == n_slow
    assert squash(" ".join(pages)) == squash(slow)


def main_build(out: Path) -> int:
    from reportgen.cli import main

    return main(["build", str(REPO / "sample_jobs" / "qep-104-chiller-ch1.toml"), "--out",
                 str(out), "--force"])


def test_outlines_skipped_for_text_glyphs_change_nothing(latex_corpus):
    import ziamath

    from reportgen.render.mathsvg import _math_font, glyphs_to_text, latex_svg

    for tex in latex_corpus[:40]:
        fast = latex_svg(tex)  # outlines of text glyphs never formatted
        ziamath.config.svg2 = True
        full = glyphs_to_text(ziamath.Latex(tex, size=12.5).svg(), _math_font().cmap)
        assert fast == full, tex


def test_self_check_reads_the_same_text_in_two_processes(tmp_path, monkeypatch):
    import io

    import pikepdf

    from reportgen import selfcheck

    assert main_build(tmp_path) in (0, 1)
    pdf = next(tmp_path.glob("*.pdf")).read_bytes()
    monkeypatch.setattr(selfcheck, "SPLIT_PAGES", 2)
    with pikepdf.open(io.BytesIO(pdf)) as p:
        assert len(p.pages) >= 4
        assert selfcheck._pages_text_split(p, pdf) == selfcheck._pages_text(p)
