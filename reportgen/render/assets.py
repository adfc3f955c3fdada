"""Render a document's figures and equations to SVG, in parallel and through a cache.

Each asset is keyed by a SHA-256 of what it depends on (the block's JSON, the display
system and the renderer versions). A cache entry stores its own payload hash and is
ignored unless that hash matches: a corrupt or stale entry is never trusted.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Iterable
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path
from typing import Any

from ..model import Document, Equation, Figure, to_json
from .html import data_uri

#: Bump when the drawing code changes, so cached assets of the old look are not reused.
RENDERER_TAG = "assets/3"


def default_cache_dir() -> Path:
    env = os.environ.get("REPORTGEN_CACHE_DIR")
    if env:
        return Path(env)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "reportgen"


def _versions() -> str:
    from importlib import metadata

    parts = []
    for dist in ("matplotlib", "ziamath"):
        try:
            parts.append(f"{dist}={metadata.version(dist)}")
        except metadata.PackageNotFoundError:
            parts.append(f"{dist}=?")
    return ",".join(parts)


def asset_key(block: Equation | Figure, units: str) -> str:
    payload = json.dumps([RENDERER_TAG, _versions(), units, to_json(block)], sort_keys=True,
                         separators=(",", ":"))
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def _render_one(job: tuple[str, Any, str]) -> bytes:
    kind, block, units = job
    if kind == "figure":
        from .figures import figure_svg

        return figure_svg(block, units)
    from .math import equation_latex, latex_svg

    return latex_svg(equation_latex(block, units))


class AssetCache:
    def __init__(self, folder: Path | None):
        self.folder = folder

    def get(self, key: str) -> bytes | None:
        if self.folder is None:
            return None
        path = self.folder / key[:2] / f"{key}.svg"
        try:
            raw = path.read_bytes()
        except OSError:
            return None
        head, sep, body = raw.partition(b"\n")
        if not sep or head != hashlib.sha256(body).hexdigest().encode("ascii"):
            return None  # corrupt or truncated: ignore, it will be rewritten
        return body

    def put(self, key: str, payload: bytes) -> None:
        if self.folder is None:
            return
        folder = self.folder / key[:2]
        try:
            folder.mkdir(parents=True, exist_ok=True)
            tmp = folder / f".{key}.{os.getpid()}.tmp"
            tmp.write_bytes(hashlib.sha256(payload).hexdigest().encode("ascii") + b"\n" + payload)
            os.replace(tmp, folder / f"{key}.svg")
        except OSError:
            pass  # a read-only or full cache folder only costs speed


def iter_asset_blocks(doc: Document) -> Iterable[tuple[str, Equation | Figure]]:
    for section in doc.sections:
        for block in section.blocks:
            if isinstance(block, Figure):
                yield "figure", block
            elif isinstance(block, Equation):
                yield "equation", block


def render_assets(doc: Document, *, cache_dir: Path | None = None, use_cache: bool = True,
                  workers: int = 1) -> dict[Any, str]:
    """Return {block: data URI} for every figure and equation of ``doc``."""
    units = doc.info.units
    cache = AssetCache((cache_dir or default_cache_dir()) if use_cache else None)
    out: dict[Any, str] = {}
    todo: dict[str, tuple[str, Any]] = {}
    keys: dict[Any, str] = {}
    for kind, block in iter_asset_blocks(doc):
        if block in keys:
            continue
        key = asset_key(block, units)
        keys[block] = key
        cached = cache.get(key)
        if cached is not None:
            out[block] = data_uri(cached)
        else:
            todo.setdefault(key, (kind, block))
    if todo:
        jobs = [(kind, block, units) for kind, block in todo.values()]
        n_fig = sum(1 for j in jobs if j[0] == "figure")
        if workers > 1 and n_fig >= 3:
            payloads = _parallel(jobs, workers)
        else:
            payloads = [_render_one(j) for j in jobs]
        rendered = dict(zip(todo, payloads, strict=True))
        for key, payload in rendered.items():
            cache.put(key, payload)
        for block, key in keys.items():
            if block not in out:
                out[block] = data_uri(rendered[key])
    return out


def _parallel(jobs: list[tuple[str, Any, str]], workers: int) -> list[bytes]:
    import multiprocessing

    # Figures are the slow part (~0.1 s each); equations are cheap, keep them here.
    figs = [j for j in jobs if j[0] == "figure"]
    ctx = multiprocessing.get_context("fork") if hasattr(os, "fork") else None
    with ProcessPoolExecutor(max_workers=min(workers, len(figs)), mp_context=ctx) as pool:
        fig_futures = [pool.submit(_render_one, j) for j in figs]
        eqs = {id(j): _render_one(j) for j in jobs if j[0] != "figure"}
        fig_results = iter([f.result() for f in fig_futures])
    return [next(fig_results) if j[0] == "figure" else eqs[id(j)] for j in jobs]
