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
from concurrent.futures import Future, ProcessPoolExecutor
from functools import lru_cache
from pathlib import Path
from typing import Any

from ..cache import default_cache_dir
from ..model import Document, Equation, Figure, to_json
from .html import data_uri

#: Bump when the drawing code changes, so cached assets of the old look are not reused.
RENDERER_TAG = "assets/4"
#: Below this many assets a pool's start-up (~50 ms a worker) costs more than it saves.
MIN_PARALLEL = 6


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


def asset_key(block: Equation | Figure, units: str) -> str:
    payload = json.dumps([RENDERER_TAG, _versions(), units, to_json(block)], sort_keys=True,
                         separators=(",", ":"))
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def _render_one(job: tuple[str, Any, str]) -> bytes:
    kind, block, units = job
    if kind == "figure":
        from .figures import figure_svg

        return figure_svg(block, units)
    from .math import equation_latex
    from .mathsvg import latex_svg

    return latex_svg(equation_latex(block, units))


def _render_many(jobs: list[tuple[str, Any, str]]) -> list[bytes]:
    return [_render_one(j) for j in jobs]


def _warm_up() -> None:
    # Runs as each worker starts: the drawing libraries load (~0.7 s) while the parent
    # is still computing, so the first figure is drawn as soon as it is asked for.
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot  # noqa: F401

    from .mathsvg import _math_font, install_speedups

    install_speedups()
    _math_font()


def _noop() -> None:
    return None


def warm_pool(workers: int) -> ProcessPoolExecutor | None:
    """Start ``workers`` drawing processes now (fork), before the document exists."""
    if workers <= 1 or not hasattr(os, "fork"):
        return None
    import multiprocessing

    pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(
        "fork"), initializer=_warm_up)
    for _ in range(workers):
        pool.submit(_noop)  # workers start on the first submissions
    return pool


class AssetCache:
    """Content-addressed files ``KEY[:2]/KEY.svg``: a SHA-256 line, then the payload."""

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


class Assets(dict):
    """{block: data URI}, plus the style sheet the equations need (their math font)."""

    css: str = ""


def iter_asset_blocks(doc: Document) -> Iterable[tuple[str, Equation | Figure]]:
    for section in doc.sections:
        for block in section.blocks:
            if isinstance(block, Figure):
                yield "figure", block
            elif isinstance(block, Equation):
                yield "equation", block


class PendingAssets:
    """Assets being drawn in worker processes; :meth:`result` waits and assembles them.

    Started before the PDF renderer is imported, so the workers draw while the main
    process imports WeasyPrint (about 0.6 s of work that would otherwise come first).
    """

    def __init__(self, doc: Document, cache: AssetCache, workers: int,
                 pool: ProcessPoolExecutor | None = None,
                 prefetched: dict[str, Future] | None = None):
        self.units = doc.info.units
        self.cache = cache
        self.payloads: dict[str, bytes] = {}
        self.keys: dict[Any, tuple[str, str]] = {}
        todo: dict[str, tuple[str, Any]] = {}
        for kind, block in iter_asset_blocks(doc):
            if block in self.keys:
                continue
            key = asset_key(block, self.units)
            self.keys[block] = (kind, key)
            if key in self.payloads or key in todo:
                continue
            cached = cache.get(key)
            if cached is not None:
                self.payloads[key] = cached
            else:
                todo[key] = (kind, block)
        self._pool: ProcessPoolExecutor | None = None
        self._futures: list[tuple[list[str], Future]] = []
        for key, fut in (prefetched or {}).items():
            if key in todo:  # already being drawn (started before the document existed)
                del todo[key]
                self._futures.append(([key], fut))
        self.todo = todo
        jobs = [(key, (kind, block, self.units)) for key, (kind, block) in todo.items()]
        self._serial: list = []
        if pool is not None:
            self._start(jobs, pool._max_workers, pool)  # type: ignore[attr-defined]
        elif workers > 1 and len(jobs) >= MIN_PARALLEL:
            self._start(jobs, workers)
        else:
            self._serial = jobs

    @property
    def parallel(self) -> bool:
        return self._pool is not None or bool(self._futures)

    def _start(self, jobs: list[tuple[str, Any]], workers: int,
               pool: ProcessPoolExecutor | None = None) -> None:
        import multiprocessing

        # Figures cost ~10x an equation: deal them out first, then equations in chunks,
        # so the workers finish together. Fork: workers inherit the loaded modules.
        jobs = sorted(jobs, key=lambda j: j[1][0] != "figure")
        ctx = multiprocessing.get_context("fork") if hasattr(os, "fork") else None
        n = workers if pool is not None else min(workers, len(jobs))
        self._pool = pool or ProcessPoolExecutor(max_workers=n, mp_context=ctx)
        chunks: list[list[tuple[str, Any]]] = []
        figs = [j for j in jobs if j[1][0] == "figure"]
        eqs = [j for j in jobs if j[1][0] != "figure"]
        chunks += [[j] for j in figs]
        size = max(1, len(eqs) // (n * 3) or 1)
        chunks += [eqs[i:i + size] for i in range(0, len(eqs), size)]
        for chunk in chunks:
            fut = self._pool.submit(_render_many, [j for _, j in chunk])
            self._futures.append(([k for k, _ in chunk], fut))

    def result(self) -> Assets:
        fresh: dict[str, bytes] = {}
        try:
            for keys, fut in self._futures:
                got = fut.result()
                fresh.update(zip(keys, [got] if isinstance(got, bytes) else got, strict=True))
        finally:
            if self._pool is not None:
                self._pool.shutdown(wait=True, cancel_futures=True)
                self._pool = None
        for key, job in self._serial:
            fresh[key] = _render_one(job)
        for key, payload in fresh.items():
            self.cache.put(key, payload)
        self.payloads.update(fresh)
        out = Assets()
        for block, (_kind, key) in self.keys.items():
            out[block] = data_uri(self.payloads[key])
        out.css = self._math_css()
        return out

    def _math_css(self) -> str:
        from .mathsvg import font_face_css, font_key, subset_font, used_chars

        eq_keys = {key for kind, key in self.keys.values() if kind == "equation"}
        chars = used_chars(self.payloads[k] for k in sorted(eq_keys))
        if not chars:
            return ""
        key = font_key(chars)
        font = self.cache.get(key)
        if font is None:
            font = subset_font(chars)
            self.cache.put(key, font)
        return font_face_css(font)


def start_assets(doc: Document, *, cache_dir: Path | None = None, use_cache: bool = True,
                 workers: int = 1, pool: ProcessPoolExecutor | None = None,
                 prefetched: dict[str, Future] | None = None) -> PendingAssets:
    """Look assets up in the cache and start drawing the rest (in ``pool`` if given)."""
    cache = AssetCache((cache_dir or default_cache_dir()) if use_cache else None)
    return PendingAssets(doc, cache, workers, pool, prefetched)


def prefetch(blocks: Iterable[Any], units: str, *, cache_dir: Path | None, use_cache: bool,
             pool: ProcessPoolExecutor) -> dict[str, Future]:
    """Start drawing the uncached figures and equations among ``blocks`` in ``pool``."""
    cache = AssetCache((cache_dir or default_cache_dir()) if use_cache else None)
    figs: dict[str, Any] = {}
    eqs: dict[str, Any] = {}
    for block in blocks:
        kind = "figure" if isinstance(block, Figure) else (
            "equation" if isinstance(block, Equation) else None)
        if kind is None:
            continue
        key = asset_key(block, units)
        if key in figs or key in eqs or cache.get(key) is not None:
            continue
        (figs if kind == "figure" else eqs)[key] = (kind, block, units)
    out: dict[str, Future] = {}
    for key, job in figs.items():  # the slow ones first
        out[key] = pool.submit(_render_one, job)
    for key, job in eqs.items():
        out[key] = pool.submit(_render_one, job)
    return out


def render_assets(doc: Document, *, cache_dir: Path | None = None, use_cache: bool = True,
                  workers: int = 1) -> Assets:
    """Return {block: data URI} for every figure and equation of ``doc``."""
    return start_assets(doc, cache_dir=cache_dir, use_cache=use_cache,
                        workers=workers).result()

