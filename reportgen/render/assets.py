"""A document's figures and equations as SVG, by content address: what each is keyed by,
how one is drawn, where drawn ones are kept, and how the HTML refers to them.

Each asset is keyed by a SHA-256 of what it depends on (the block's JSON, the display
system and the renderer versions) and kept in the content-addressed store. Where and
when assets are drawn (worker processes, during the layout) is the pipeline scheduler's
business; this module draws one when asked.
"""

from __future__ import annotations

import hashlib
import json
import re
from collections.abc import Callable, Iterable
from functools import lru_cache
from pathlib import Path
from typing import Any

from reportgen.model import Document, Equation, Figure, to_json
from reportgen.render.html import data_uri
from reportgen.render.pdf import ASSET_SCHEME, asset_mime
from reportgen.store import Store, default_cache_dir

#: Bump when the drawing code changes, so cached assets of the old look are not reused.
RENDERER_TAG = "assets/7"  # 7: equal-aspect panels with fixed limits keep them (box adjusts)

#: One asset to draw: ("figure" | "equation", the block, the display system).
AssetJob = tuple[str, Any, str]


@lru_cache(maxsize=1)
def _versions() -> str:
    from importlib import metadata

    parts = []
    for dist in ("matplotlib", "ziamath", "fonttools"):
        try:
            parts.append(f"{dist}={metadata.version(dist)}")
        except metadata.PackageNotFoundError:
            parts.append(f"{dist}=?")
    return ",".join(parts)


@lru_cache(maxsize=4096)  # blocks are frozen (hashable): equal blocks, equal keys
def asset_key(block: Equation | Figure, units: str) -> str:
    payload = json.dumps([RENDERER_TAG, _versions(), units, to_json(block)], sort_keys=True,
                         separators=(",", ":"))
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def asset_url(key: str) -> str:
    return ASSET_SCHEME + key


def asset_store(cache_dir: Path | None, use_cache: bool = True) -> Store:
    """Where drawn assets are kept: ``KEY[:2]/KEY.svg`` in the cache folder."""
    return Store((cache_dir or default_cache_dir()) if use_cache else None, ".svg")


def draw(job: AssetJob) -> bytes:
    """Draw one figure (matplotlib) or typeset one equation (ziamath) to SVG."""
    kind, block, units = job
    if kind == "figure":
        from reportgen.render.figures import figure_svg

        return figure_svg(block, units)
    from reportgen.render.math import equation_latex
    from reportgen.render.mathsvg import latex_svg

    return latex_svg(equation_latex(block, units))


def draw_many(jobs: list[AssetJob]) -> list[bytes]:
    return [draw(j) for j in jobs]


def warm_up() -> None:
    """Load the math typesetter and its font (~0.15 s): what a drawing worker does first,
    so the first equation is set as soon as it is asked for. matplotlib (~0.5 s) loads
    with the first figure: a warm rebuild seldom needs it."""
    from reportgen.render.mathsvg import _math_font, install_speedups

    install_speedups()
    _math_font()


def make_math_font() -> bytes:
    from reportgen.render.mathsvg import math_font

    return math_font()


def math_font_key() -> str:
    from reportgen.render.mathsvg import math_font_key as key

    return key()


def math_font_css(url: str) -> str:
    from reportgen.render.mathsvg import font_face_css

    return font_face_css(url)


class Assets(dict):
    """{block: image URL}, plus the style sheet the equations need (their math font)."""

    css: str = ""


def asset_jobs(blocks: Iterable[Any], units: str) -> dict[str, AssetJob]:
    """{key: job} of the figures and equations among ``blocks`` (each once)."""
    out: dict[str, AssetJob] = {}
    for block in blocks:
        kind = ("figure" if isinstance(block, Figure) else
                "equation" if isinstance(block, Equation) else None)
        if kind is not None:
            out.setdefault(asset_key(block, units), (kind, block, units))
    return out


def iter_asset_blocks(doc: Document) -> Iterable[tuple[str, Equation | Figure]]:
    for section in doc.sections:
        for block in section.blocks:
            if isinstance(block, Figure):
                yield "figure", block
            elif isinstance(block, Equation):
                yield "equation", block


def inline_assets(html: str, payloads: dict[str, bytes]) -> str:
    """The HTML with every ``reportgen-asset:`` URL replaced by its data URI: the
    self-contained page that ``--html`` writes."""
    if ASSET_SCHEME not in html:
        return html
    pattern = re.compile(re.escape(ASSET_SCHEME) + r"[0-9a-f]{64}")

    def inline(m: re.Match) -> str:
        payload = payloads.get(m.group(0))
        if payload is None:
            return m.group(0)
        return data_uri(payload, asset_mime(payload))

    return pattern.sub(inline, html)


def render_assets(doc: Document, *, cache_dir: Path | None = None,
                  use_cache: bool = True) -> Assets:
    """{block: data URI} for every figure and equation of ``doc``, drawn here one by one
    (the plugin kit's form: one HTML string with everything in it)."""
    out, _ = drawn_assets(doc, asset_store(cache_dir, use_cache),
                          lambda payload, key, mime: data_uri(payload or b"", mime))
    return out


def drawn_assets(doc: Document, store: Store,
                 url_for: Callable[[bytes | None, str, str], str],
                 later: dict[str, AssetJob] | None = None,
                 ) -> tuple[Assets, dict[str, bytes]]:
    """Every figure and equation of ``doc`` drawn here (or taken from ``store``):
    ({block: ``url_for(payload, key, mime)``}, {key: payload}), and the math font's style
    sheet pointing at its own URL. With ``later``, what the store does not hold is not
    drawn but listed there by key (payload None): the live preview draws it when the
    page asks for it, so the numbers show before the drawings are done."""
    out = Assets()
    drawn: dict[str, bytes] = {}
    units = doc.info.display or doc.info.units
    for kind, block in iter_asset_blocks(doc):
        key = asset_key(block, units)
        if key not in drawn and (later is None or key not in later):
            payload = store.get(key)
            if payload is None and later is not None:
                later[key] = (kind, block, units)
            elif payload is None:
                payload = draw((kind, block, units))
                store.put(key, payload)
            if payload is not None:
                drawn[key] = payload
        out[block] = url_for(drawn.get(key), key, "image/svg+xml")
    if any(kind == "equation" for kind, _ in iter_asset_blocks(doc)):
        font = math_font(store)
        drawn[math_font_key()] = font
        out.css = math_font_css(url_for(font, math_font_key(), "font/ttf"))
    return out, drawn


def math_font(store: Store) -> bytes:
    """The math font: from the store, or made here (and kept)."""
    key = math_font_key()
    font = store.get(key)
    if font is None:
        font = make_math_font()
        store.put(key, font)
    return font
