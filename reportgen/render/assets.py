"""Render a document's figures and equations to SVG, in parallel and through a cache.

Each asset is keyed by a SHA-256 of what it depends on (the block's JSON, the display
system and the renderer versions). A cache entry stores its own payload hash and is
ignored unless that hash matches: a corrupt or stale entry is never trusted.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
from collections.abc import Generator, Iterable, Iterator
from concurrent.futures import Future, ProcessPoolExecutor
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

from reportgen.model import Document, Equation, Figure, to_json
from reportgen.render.figures import figure_points
from reportgen.render.html import data_uri
from reportgen.render.pdf import ASSET_SCHEME, asset_mime
from reportgen.store import default_cache_dir, touch

#: Bump when the drawing code changes, so cached assets of the old look are not reused.
RENDERER_TAG = "assets/5"  # 5: superscripts and subscripts as text
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


@lru_cache(maxsize=4096)  # blocks are frozen (hashable): equal blocks, equal keys
def asset_key(block: Equation | Figure, units: str) -> str:
    payload = json.dumps([RENDERER_TAG, _versions(), units, to_json(block)], sort_keys=True,
                         separators=(",", ":"))
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def _render_one(job: tuple[str, Any, str]) -> bytes:
    kind, block, units = job
    if kind == "figure":
        from reportgen.render.figures import figure_svg

        return figure_svg(block, units)
    from reportgen.render.math import equation_latex
    from reportgen.render.mathsvg import latex_svg

    return latex_svg(equation_latex(block, units))


#: prefetch's key for the math font job (not a content hash: it cannot clash with one)
FONT_JOB = "math-font"


def _make_font() -> bytes:
    from reportgen.render.mathsvg import math_font

    return math_font()


def _render_many(jobs: list[tuple[str, Any, str]]) -> list[bytes]:
    return [_render_one(j) for j in jobs]


def _warm_up() -> None:
    # Runs as each worker starts: the math typesetter and its font load (~0.15 s) while
    # the parent is still computing, so the first equation is set as soon as it is asked
    # for. matplotlib (~0.5 s) loads with the first figure: a warm rebuild seldom needs it.
    from reportgen.render.mathsvg import _math_font, install_speedups

    install_speedups()
    _math_font()


def lower_priority(pool: ProcessPoolExecutor | None) -> None:
    """Let the layout process have the CPU first: the drawing left is not in its way
    until the layout paints the pages, so the workers may yield to it meanwhile."""
    pids = list(getattr(pool, "_processes", None) or {}) if pool is not None else []
    for pid in pids:
        try:
            os.setpriority(os.PRIO_PROCESS, pid, 10)
        except (OSError, AttributeError):
            pass


def _noop() -> None:
    return None


def warm_pool(workers: int) -> ProcessPoolExecutor | None:
    """Start ``workers`` drawing processes now (fork), before the document exists."""
    if workers <= 1 or not hasattr(os, "fork"):
        return None
    import multiprocessing

    from reportgen.pipeline.lifeline import pool_initializer

    pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(
        "fork"), initializer=pool_initializer, initargs=(os.getpid(), _warm_up))
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
        touch(path)  # least recently used goes first when the cache is pruned
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
    """{block: image URL}, plus the style sheet the equations need (their math font)."""

    css: str = ""


def asset_url(key: str) -> str:
    return ASSET_SCHEME + key


@dataclass
class StagedAssets:
    """A package's images as the layout gets them: ``assets`` maps each block to its
    ``reportgen-asset:`` URL; ``ready`` holds the drawings that exist (and the math
    font); ``later`` names those still being drawn, with the size in points where it is
    known beforehand (figures), and ``jobs`` how to draw each of them here should their
    worker fail."""

    assets: Assets
    ready: dict[str, bytes]
    later: dict[str, tuple[float, float] | None] = field(default_factory=dict)
    jobs: dict[str, tuple[str, Any, str]] = field(default_factory=dict)

    def draw_here(self, url: str) -> bytes:
        return _render_one(self.jobs[url])


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
        self._font_future: Future | None = None
        for key, fut in (prefetched or {}).items():
            if key == FONT_JOB:
                self._font_future = fut
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

        # Equations first, in chunks: the page text cannot be laid out without them.
        # Then the figures one by one, in page order: the layout can start without them.
        # Fork: workers inherit the loaded modules.
        ctx = multiprocessing.get_context("fork") if hasattr(os, "fork") else None
        n = workers if pool is not None else min(workers, len(jobs))
        if pool is None:
            from reportgen.pipeline.lifeline import pool_initializer

            pool = ProcessPoolExecutor(max_workers=n, mp_context=ctx,
                                       initializer=pool_initializer, initargs=(os.getpid(),))
        self._pool = pool
        chunks: list[list[tuple[str, Any]]] = []
        figs = [j for j in jobs if j[1][0] == "figure"]
        eqs = [j for j in jobs if j[1][0] != "figure"]
        size = max(1, len(eqs) // (n * 3) or 1)
        chunks += [eqs[i:i + size] for i in range(0, len(eqs), size)]
        chunks += [[j] for j in figs]
        for chunk in chunks:
            fut = self._pool.submit(_render_many, [j for _, j in chunk])
            self._futures.append(([k for k, _ in chunk], fut))

    def stage(self, later: bool = False) -> tuple[StagedAssets, Iterator[tuple[str, bytes]]]:
        """Return the images the layout starts with, and an iterator over the rest.

        Unless ``later``, every image is waited for first and the iterator is empty.
        With ``later``, the images still being drawn are left to the iterator, which
        yields (URL, SVG) as each is drawn (in any order) and stores it in the cache. Its
        end (or ``close()``) stops the drawing pool, its own or the one it was given.
        A figure's size is known before it is drawn; an equation's is not, so the layout
        waits for an equation when it reaches it, and for a figure only when it paints it.
        """
        fresh: dict[str, bytes] = {}
        pending: list[tuple[list[str], Future]] = []
        try:
            for keys, fut in self._futures:
                if later:
                    pending.append((keys, fut))
                    continue
                got = fut.result()
                fresh.update(zip(keys, [got] if isinstance(got, bytes) else got, strict=True))
            for key, job in self._serial:
                fresh[key] = _render_one(job)
        except BaseException:
            self._stop_pool()
            raise
        for key, payload in fresh.items():
            self.cache.put(key, payload)
        self.payloads.update(fresh)
        assets = Assets()
        for block, (_kind, key) in self.keys.items():
            assets[block] = asset_url(key)
        staged = StagedAssets(assets=assets, ready={asset_url(k): v for k, v in
                                                    self.payloads.items()})
        if any(kind == "equation" for kind, _key in self.keys.values()):
            from reportgen.render.mathsvg import font_face_css

            font = self.font()
            url = asset_url(hashlib.sha256(font).hexdigest())
            staged.ready[url] = font
            assets.css = font_face_css(url)
        block_of = {key: (kind, block) for block, (kind, key) in self.keys.items()}
        for keys, _fut in pending:
            for key in keys:
                kind, block = block_of[key]
                staged.later[asset_url(key)] = (figure_points(block) if kind == "figure"
                                                else None)
                staged.jobs[asset_url(key)] = (kind, block, self.units)
        return staged, Drawings(self, pending)

    def font(self) -> bytes:
        """The math font: from the cache, from a worker that made it, or made here."""
        from reportgen.render.mathsvg import math_font, math_font_key

        key = math_font_key()
        font = self.cache.get(key)
        if font is None:
            fut = self._font_future
            font = fut.result() if fut is not None else math_font()
            self.cache.put(key, font)
        return font

    def _stop_pool(self) -> None:
        if self._pool is not None:  # wait: a worker left behind would outlive the build
            self._pool.shutdown(wait=True, cancel_futures=True)
        self._pool = None

    def result(self) -> Assets:
        """{block: data URI}: every image drawn and embedded (the plugin kit's form)."""
        staged, rest = self.stage(later=False)
        for _ in rest:
            pass
        out = Assets()
        for block, url in staged.assets.items():
            out[block] = data_uri(staged.ready[url])
        if staged.assets.css:
            from reportgen.render.mathsvg import font_face_css

            out.css = font_face_css(data_uri(self.font(), "font/ttf"))
        return out


class Drawings:
    """The images still being drawn, as (URL, SVG) in the order they are done; each is
    stored in the cache as it comes. Taking the first lowers the workers' priority (the
    layout has started and comes first); the end, an error or ``close()`` stops the
    pool, whether or not anything was taken."""

    def __init__(self, owner: PendingAssets, pending: list[tuple[list[str], Future]]):
        self._owner = owner
        self._pending = pending
        self._it: Generator[tuple[str, bytes], None, None] | None = None

    def __iter__(self) -> Drawings:
        return self

    def __next__(self) -> tuple[str, bytes]:
        if self._it is None:
            if self._pending:
                lower_priority(self._owner._pool)
            self._it = self._each()
        try:
            return next(self._it)
        except BaseException:
            self.close()
            raise

    def _each(self) -> Generator[tuple[str, bytes], None, None]:
        from concurrent.futures import as_completed

        keys_of = {fut: keys for keys, fut in self._pending}
        for fut in as_completed(keys_of):
            got = fut.result()
            for key, payload in zip(keys_of[fut], [got] if isinstance(got, bytes) else got,
                                    strict=True):
                self._owner.cache.put(key, payload)
                self._owner.payloads[key] = payload
                yield asset_url(key), payload

    def close(self) -> None:
        if self._it is not None:
            self._it.close()
        self._owner._stop_pool()


def start_assets(doc: Document, *, cache_dir: Path | None = None, use_cache: bool = True,
                 workers: int = 1, pool: ProcessPoolExecutor | None = None,
                 prefetched: dict[str, Future] | None = None) -> PendingAssets:
    """Look assets up in the cache and start drawing the rest (in ``pool`` if given,
    which the assets then stop when their drawings are done)."""
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
    if eqs:
        from reportgen.render.mathsvg import math_font_key

        if cache.get(math_font_key()) is None:  # the layout's first need, cheap to make
            out[FONT_JOB] = pool.submit(_make_font)
    for key, job in eqs.items():  # the layout waits for these
        out[key] = pool.submit(_render_one, job)
    for key, job in figs.items():  # and can start without these
        out[key] = pool.submit(_render_one, job)
    return out


def render_assets(doc: Document, *, cache_dir: Path | None = None, use_cache: bool = True,
                  workers: int = 1) -> Assets:
    """Return {block: data URI} for every figure and equation of ``doc``."""
    return start_assets(doc, cache_dir=cache_dir, use_cache=use_cache,
                        workers=workers).result()

