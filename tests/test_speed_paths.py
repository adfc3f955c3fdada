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

from reportgen.calc.plugin_set import load_plugins
from reportgen.document.compute import compute_document
from reportgen.document.verification import VerificationCache
from reportgen.job.load import load_job
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


def test_math_font_is_deterministic_unshaped_and_covers_the_equation_glyphs():
    import io

    from fontTools.ttLib import TTFont

    from reportgen.render.mathsvg import latex_svg, math_font

    a = math_font()
    math_font.cache_clear()
    assert math_font() == a  # same bytes every time: the PDF does not depend on the run
    font = TTFont(io.BytesIO(a))
    # nothing left for the renderer to shape: the SVG text names its glyphs one by one
    assert not {"GSUB", "GPOS", "GDEF", "kern", "MATH"} & set(font.keys())
    svg = latex_svg(r"\omega_n = \sqrt{\frac{k}{m}} = 2 \pi f_n").decode("utf-8")
    import re

    chars = set("".join(re.findall(r"<text [^>]*>([^<]*)</text>", svg)))
    assert chars and {ord(c) for c in chars} <= set(font.getBestCmap())
    # a glyph outside the font's alphabet (a Fraktur g) is drawn as its outline instead
    svg = latex_svg(r"\mathfrak{g} + x").decode("utf-8")
    assert re.findall(r"<text [^>]*>([^<]*)</text>", svg) == ["+\U0001d465"]
    assert svg.count("<use") == 1 and svg.count("<symbol") == 1


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
    from reportgen.document.compute import calc_context
    from reportgen.document.verification import verification_key

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
    from reportgen.render.selfcheck import extract_text, fast_text

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


def test_self_check_pattern_reader_matches_the_content_parser(tmp_path):
    import io

    import pikepdf

    from reportgen.render import selfcheck

    assert main_build(tmp_path) in (0, 1)
    pdf = next(tmp_path.glob("*.pdf")).read_bytes()
    with pikepdf.open(io.BytesIO(pdf)) as p:
        assert len(p.pages) >= 4
        maps: dict = {}
        parsed = [selfcheck._norm(" ".join(selfcheck._stream_text(
            page.obj, page.obj.get("/Resources"), maps, set(), parse=True)))
            for page in p.pages]
        assert selfcheck._pages_text(p) == parsed
    # a stream the pattern reader does not know (a literal string) goes to the parser
    assert not selfcheck._plain(b"BT /F1 12 Tf (Hello) Tj ET")
    assert selfcheck._plain(b"BT /F1 12 Tf [<0026>-59<0024>] TJ ET")


def _figure(panels: int):
    from reportgen.model import Figure, Panel, Series

    panel = Panel(series=(Series(x=(0.0, 1.0, 2.0), y=(1.0, 0.5, 0.25), label="a"),),
                  y_label="y")
    return Figure(key=f"f{panels}", caption="c", alt="a", x_label="x",
                  panels=(panel,) * panels)


@pytest.mark.parametrize("panels", [1, 2, 3])
def test_a_figure_has_the_size_announced_before_it_is_drawn(panels):
    # The layout starts before the figures are drawn, with stand-ins of this size.
    from reportgen.render.figures import figure_points, figure_svg
    from reportgen.render.pdf import _svg_number

    fig = _figure(panels)
    root = ET.fromstring(figure_svg(fig))
    w, h = figure_points(fig)
    assert (root.get("width"), root.get("height")) == (f"{_svg_number(w)}pt",
                                                       f"{_svg_number(h)}pt")


def test_images_drawn_during_the_layout_give_the_same_pdf():
    """Figures and equations handed over while WeasyPrint lays out (and a figure whose
    announced size is wrong, which makes the layout start again) give the bytes of a
    layout with every image present from the start."""
    import dataclasses

    from reportgen.pipeline.fork import local_later
    from reportgen.pipeline.plan import BuildOptions, front_half, layout
    from reportgen.pipeline.scheduler import Images, Scheduler

    plugins = load_plugins()
    opts = BuildOptions(out_dir=Path("unused"), use_cache=False)
    front = front_half(REPO / "sample_jobs" / "qep-104-chiller-ch1.toml", plugins, opts,
                       Scheduler(use_cache=False))
    assert not list(front.pending)
    images = Images(front, None)
    eager, payloads = layout(front, images), images.payloads()
    kinds = dict(_kinds(front))
    assert {"figure", "equation"} <= set(kinds.values())
    fonts = {u: b for u, b in front.ready.items() if u not in kinds}
    for wrong in (False, True):
        later = {url: (None if kind == "equation" else _size_of(front, url, wrong))
                 for url, kind in kinds.items()}
        staged = dataclasses.replace(front, ready=dict(fonts), pending=later,
                                     jobs={u: (k, None, "SI") for u, k in kinds.items()})
        feed = local_later((u, payloads[u]) for u in kinds)
        drawn = Images(staged, feed)
        pdf, got = layout(staged, drawn), drawn.payloads()
        assert pdf == eager, f"wrong size announced: {wrong}"
        assert got == payloads


def _blocks(front):
    from reportgen.render.assets import asset_key, asset_url, iter_asset_blocks

    return {asset_url(asset_key(b, front.doc.info.display or front.doc.info.units)): b
            for _k, b in iter_asset_blocks(front.doc)}


def _kinds(front):
    block_kind = {}
    for url, block in _blocks(front).items():
        block_kind[url] = "figure" if type(block).__name__ == "Figure" else "equation"
    return block_kind.items()


def _size_of(front, url, wrong: bool):
    from reportgen.render.figures import figure_points

    block = _blocks(front)[url]
    w, h = figure_points(block)
    return (w, h + 36.0) if wrong else (w, h)


def test_html_written_beside_the_pdf_is_self_contained_and_lays_out_the_same(tmp_path):
    # The benchmark's floor lays out this HTML alone: it must be the package's own input.
    import weasyprint

    from reportgen.cli import main
    from reportgen.render.selfcheck import fast_text

    job = REPO / "sample_jobs" / "qep-104-chiller-ch1.toml"
    assert main(["build", str(job), "--out", str(tmp_path), "--force", "--html",
                 "--no-cache"]) in (0, 1)
    html = next(tmp_path.glob("*.html")).read_text(encoding="utf-8")
    assert "reportgen-asset:" not in html and "data:font/ttf;base64," in html
    ours = fast_text(next(tmp_path.glob("*.pdf")).read_bytes())
    alone = fast_text(weasyprint.HTML(string=html).write_pdf(pdf_variant="pdf/a-3b"))
    assert alone == ours


def test_the_command_ends_fast_but_keeps_its_output_and_exit_code(tmp_path):
    # reportgen.cli.run leaves by os._exit (no teardown): what was printed into a pipe
    # must still arrive, and the exit code is the build's.
    import os
    import subprocess
    import sys

    env = dict(os.environ, REPORTGEN_CACHE_DIR=str(tmp_path / "cache"))
    env.pop("PYTHONUNBUFFERED", None)  # a pipe is block-buffered, as in a CI log
    failing = REPO / "sample_jobs" / "qep-103-pump-p2-force.toml"  # fails on purpose
    proc = subprocess.run([sys.executable, "-m", "reportgen.cli", "build", str(failing),
                           "--out", str(tmp_path / "out")], env=env, capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 1, proc.stderr
    assert "checks FAIL" in proc.stdout and proc.stdout.rstrip().endswith(".results.json")
    assert list((tmp_path / "out").glob("*.pdf"))
