"""Every process decision of a build, in one object: the :class:`Scheduler`.

The steps of a build (reportgen.pipeline.plan) are plain functions; how they are spread
over processes is decided here, and nowhere else:

- **fork before the renderer loads**: the front half of a build (load, compute, HTML)
  runs in a forked child while this process imports WeasyPrint (~0.6 s); the calc
  libraries and drawings then never weigh on the process that lays out (~3 MB a page);
- **one pool of drawing workers**, started (and warmed up with the math typesetter)
  before the job is even read, its workers bound to the command (reportgen.pipeline
  .lifeline) and lowered in priority once the layout starts;
- **work submitted as soon as it exists**: each calc's independent verification and its
  figures and equations go to the pool as soon as that calc is computed;
- **images during the layout**: the HTML refers to each image by URL; what is not drawn
  by the time the layout starts reaches it later (from the child, over a pipe), a figure
  standing in by its known size until it is painted (:class:`Images`);
- **the collector paused** during the layout (:meth:`Scheduler.layout`) and **leaving
  without teardown** (:func:`leave_now`).

None of this changes a byte of the package (tests/test_speed_paths.py,
tests/test_parallel.py): serial, pooled and split builds give the same PDF.
"""

from __future__ import annotations

import contextlib
import gc
import hashlib
import os
from collections.abc import Callable, Iterator
from concurrent.futures import Future, ProcessPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import RegisteredCalc
from reportgen.calc.sheet import CalcContext, CalcOutput
from reportgen.document.compute import Computed
from reportgen.document.verification import MISSING, VerificationCache
from reportgen.model import Document
from reportgen.pipeline.lifeline import leave_now
from reportgen.render.assets import (
    AssetJob,
    Assets,
    asset_jobs,
    asset_key,
    asset_store,
    asset_url,
    draw,
    draw_many,
    iter_asset_blocks,
    make_math_font,
    math_font,
    math_font_css,
    math_font_key,
    warm_up,
)
from reportgen.render.figures import figure_points

__all__ = ["Front", "Images", "Scheduler", "leave_now"]

#: Below this many drawings a pool's start-up (~50 ms a worker) costs more than it saves.
MIN_PARALLEL = 6


def _noop() -> None:
    return None


def _verify_remote(reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput):
    rows = reg.calc_type.verify(ctx, output)
    return None if rows is None else list(rows)


def start_pool(workers: int, warm: bool) -> ProcessPoolExecutor | None:
    """``workers`` forked processes, bound to this one; ``warm``: started now, each
    loading the math typesetter, before there is anything to draw."""
    if workers <= 1 or not hasattr(os, "fork"):
        return None
    import multiprocessing

    from reportgen.pipeline.lifeline import pool_initializer

    pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(
        "fork"), initializer=pool_initializer, initargs=(os.getpid(), warm_up if warm else None))
    if warm:
        for _ in range(workers):
            pool.submit(_noop)  # workers start on the first submissions
    return pool


def lower_priority(pool: ProcessPoolExecutor | None) -> None:
    """Let the layout process have the CPU first: the drawing left is not in its way
    until the layout paints the pages, so the workers may yield to it meanwhile."""
    pids = list(getattr(pool, "_processes", None) or {}) if pool is not None else []
    for pid in pids:
        try:
            os.setpriority(os.PRIO_PROCESS, pid, 10)
        except (OSError, AttributeError):
            pass


@dataclass
class Staged:
    """A document's images as the HTML and the layout get them (see Scheduler.assets)."""

    assets: Assets
    ready: dict[str, bytes]
    pending: dict[str, tuple[float, float] | None]
    jobs: dict[str, AssetJob]


@dataclass
class Front:
    """The front half of a build, done: everything the layout needs (sent whole from a
    forked child). ``ready`` holds the images drawn by now (and the math font);
    ``pending`` those still being drawn, with their size in points where known; ``jobs``
    how to draw each pending one here, should its worker fail."""

    job: Any
    doc: Document
    results: bytes
    html: str
    files: list
    roots: tuple[Path, ...]
    ready: dict[str, bytes]
    pending: dict[str, tuple[float, float] | None] = field(default_factory=dict)
    jobs: dict[str, AssetJob] = field(default_factory=dict)


class Images:
    """The layout's image source (reportgen.render.pdf.ImageSource) in the process that
    lays out: the images of the front, and the pending ones as they arrive."""

    def __init__(self, front: Front, later: Any | None):
        self._front = front
        self._later = later
        self._got: dict[str, bytes] = {}
        self.pending = tuple(front.pending)

    def get(self, url: str) -> bytes | None:
        if url in self._front.ready:
            return self._front.ready[url]
        if url not in self._front.pending:
            return None
        if url not in self._got:
            payload = self._later.get(url) if self._later is not None else None
            # a drawing that does not come (its worker failed) is made here
            self._got[url] = payload if payload is not None else draw(self._front.jobs[url])
        return self._got[url]

    def size(self, url: str) -> tuple[float, float] | None:
        return self._front.pending.get(url)

    def payloads(self) -> dict[str, bytes]:
        """Every image by URL, waiting for the pending ones (for ``--html``)."""
        out = dict(self._front.ready)
        out.update((url, self.get(url)) for url in self._front.pending)  # type: ignore[misc]
        return out


class Scheduler:
    """How one build (or one package of a set) uses processes; see the module docstring.

    ``workers``: processes it may use for drawing and verification; ``split``: run the
    front half in a forked child while this process loads the renderer.
    """

    def __init__(self, *, workers: int = 1, split: bool = False,
                 cache_dir: Path | None = None, use_cache: bool = True):
        self.workers = workers
        self.split = split
        self.store = asset_store(cache_dir, use_cache)
        self.verification = VerificationCache(
            (cache_dir or _default_dir()) if use_cache else None)
        self.pool: ProcessPoolExecutor | None = None
        self._verifying: dict[str, tuple[str | None, Future]] = {}
        self._points: dict[int, tuple[CalcContext, str | None, Future | None]] = {}
        self._drawing: dict[str, Future] = {}  # asset key (or the font job) -> future
        self._queued: dict[str, AssetJob] = {}  # drawings waiting for the last compute
        self._chunks: list[tuple[list[str], Future]] = []
        self._ready: dict[str, bytes] = {}  # asset key -> SVG
        self._font: bytes | None = None
        self._later: Any = None

    # ------------------------------------------------------------ the front half

    def front(self, work: Callable[[], Front], meanwhile: Callable[[], None]) -> Front:
        """Run the front half of a build: in a forked child while ``meanwhile()`` runs
        here (importing the renderer), or here. The pending images follow through
        :meth:`images`."""
        from reportgen.pipeline.fork import can_split, local_later, run_split_stream

        if self.split and can_split():
            first, self._later = run_split_stream(lambda: (work(), self.drawings()),
                                                  meanwhile)
            return first
        meanwhile()
        try:
            first = work()
        except BaseException:
            self.close()
            raise
        self._later = local_later(self.drawings())
        return first

    def warm(self) -> None:
        """Start the drawing workers now, before the job is computed (split builds)."""
        if self.split and self.pool is None:
            self.pool = start_pool(self.workers, warm=True)

    def on_computed(self, c: Computed) -> None:
        """A calc is computed: start its verification in the pool now, and line up its
        drawings, which start as soon as the last calc is computed (milliseconds later)
        behind every verification: the HTML waits for the rows, the layout can start
        without the figures."""
        if self.pool is None:
            return
        key = self.verification.key(c.reg, c.ctx, c.output)
        if key is None or self.verification.get(key) is MISSING:
            self._verifying[c.spec.id] = (key, self.pool.submit(
                _verify_remote, c.reg, c.ctx, c.output))
        for ctx, output, _at, _inputs in (c.envelope.verify_at if c.envelope else ()):
            # the governing points of its operating envelope, by their context object
            key = self.verification.key(c.reg, ctx, output)
            fut = (self.pool.submit(_verify_remote, c.reg, ctx, output)
                   if key is None or self.verification.get(key) is MISSING else None)
            self._points[id(ctx)] = (ctx, key, fut)
        for key_, job in asset_jobs(c.output.blocks, c.display).items():
            if key_ not in self._drawing and key_ not in self._ready:
                self._queued.setdefault(key_, job)

    def _start_queued(self) -> None:
        """Start the lined-up drawings: the math font first (the layout's first need),
        then the equations (the layout waits for them), then the figures."""
        if self.pool is None or not self._queued:
            return
        jobs = [(k, j) for k, j in self._queued.items() if self.store.get(k) is None]
        self._queued.clear()
        if any(j[0] == "equation" for _k, j in jobs):
            self._start_font()
        for key, job in sorted(jobs, key=lambda kv: kv[1][0] == "figure"):
            self._drawing[key] = self.pool.submit(draw, job)

    def verify(self, reg: RegisteredCalc, ctx: CalcContext, output: CalcOutput):
        """The calc's verification rows: from the worker that started them, the cache, or
        computed here (``verify=`` of compute_document)."""
        self._start_queued()  # every calc is computed by now: the drawings may start
        point = self._points.pop(id(ctx), None)
        if point is not None and point[0] is ctx:  # an envelope point (None: in the cache)
            started = None if point[2] is None else (point[1], point[2])
        else:
            started = self._verifying.pop(ctx.calc_id, None)
        if started is None:
            return self.verification(reg, ctx, output)
        key, fut = started
        rows = fut.result()  # the worker's exception, if any, is re-raised here
        self.verification.record(key, rows)
        return rows

    def assets(self, doc: Document) -> Staged:
        """Every figure and equation of ``doc`` by URL (and the math font's style sheet);
        what is drawn by now, what is pending (with its size where known) and how to draw
        it. What is neither cached nor started is started (or, without a pool, drawn)."""
        self._start_queued()
        units = doc.info.display or doc.info.units
        assets = Assets()
        todo: dict[str, AssetJob] = {}
        kinds: dict[str, AssetJob] = {}
        for kind, block in iter_asset_blocks(doc):
            key = asset_key(block, units)
            assets[block] = asset_url(key)
            kinds.setdefault(key, (kind, block, units))
            if key in self._ready or key in self._drawing or key in todo:
                continue
            cached = self.store.get(key)
            if cached is not None:
                self._ready[key] = cached
            else:
                todo[key] = (kind, block, units)
        if self.pool is None and self.workers > 1 and len(todo) >= MIN_PARALLEL:
            self.pool = start_pool(min(self.workers, len(todo)), warm=False)
            self._submit_chunks(todo)
        elif self.pool is not None:
            for key, job in todo.items():
                self._drawing[key] = self.pool.submit(draw, job)
        else:
            for key, job in todo.items():
                self._ready[key] = draw(job)
                self.store.put(key, self._ready[key])
        ready = {asset_url(k): v for k, v in self._ready.items() if k in kinds}
        if any(kind == "equation" for kind, _b, _u in kinds.values()):
            font = self._math_font()
            url = asset_url(hashlib.sha256(font).hexdigest())
            ready[url] = font
            assets.css = math_font_css(url)
        pending: dict[str, tuple[float, float] | None] = {}
        jobs: dict[str, AssetJob] = {}
        for key, job in kinds.items():
            if key in self._ready:
                continue
            url = asset_url(key)
            pending[url] = figure_points(job[1]) if job[0] == "figure" else None
            jobs[url] = job
        return Staged(assets=assets, ready=ready, pending=pending, jobs=jobs)

    def render_assets(self, doc: Document) -> Assets:
        """{block: data URI} for every figure and equation of ``doc``, drawn by this
        scheduler's workers (what reportgen.render.assets.render_assets draws here)."""
        from reportgen.render.html import data_uri

        staged = self.assets(doc)
        payloads = dict(staged.ready)
        payloads.update(self.drawings())
        out = Assets((block, data_uri(payloads[url])) for block, url in staged.assets.items())
        if staged.assets.css:
            out.css = math_font_css(data_uri(self._math_font(), "font/ttf"))
        return out

    def _submit_chunks(self, todo: dict[str, AssetJob]) -> None:
        # Equations first, in chunks: the page text cannot be laid out without them.
        # Then the figures one by one, in page order: the layout can start without them.
        assert self.pool is not None
        n = self.pool._max_workers  # type: ignore[attr-defined]
        eqs = [(k, j) for k, j in todo.items() if j[0] != "figure"]
        figs = [(k, j) for k, j in todo.items() if j[0] == "figure"]
        size = max(1, len(eqs) // (n * 3) or 1)
        for chunk in [eqs[i:i + size] for i in range(0, len(eqs), size)] + [[f] for f in figs]:
            self._chunks.append(([k for k, _ in chunk],
                                 self.pool.submit(draw_many, [j for _, j in chunk])))

    def _start_font(self) -> None:
        if "font" not in self._drawing and self._font is None and self.pool is not None:
            if self.store.get(math_font_key()) is None:  # the layout's first need
                self._drawing["font"] = self.pool.submit(make_math_font)

    def _math_font(self) -> bytes:
        """The math font: from the cache, from a worker that made it, or made here."""
        if self._font is None:
            fut = self._drawing.pop("font", None)
            if fut is not None and self.store.get(math_font_key()) is None:
                self._font = fut.result()
                self.store.put(math_font_key(), self._font)
            else:
                self._font = math_font(self.store)
        return self._font

    def drawings(self) -> Iterator[tuple[str, bytes]]:
        """The images still being drawn, as (URL, SVG) in the order they are done, each
        kept in the store as it comes. Taking the first lowers the workers' priority (the
        layout has started and comes first); the end, an error or ``close()`` stops the
        pool."""
        from concurrent.futures import as_completed

        try:
            keys_of: dict[Future, list[str]] = {
                fut: [key] for key, fut in self._drawing.items() if key != "font"}
            keys_of.update((fut, keys) for keys, fut in self._chunks)
            if keys_of:
                lower_priority(self.pool)
            for fut in as_completed(keys_of):
                got = fut.result()
                for key, payload in zip(keys_of[fut], [got] if isinstance(got, bytes) else got,
                                        strict=True):
                    self.store.put(key, payload)
                    self._ready[key] = payload
                    yield asset_url(key), payload
        finally:
            self.close()

    # ------------------------------------------------------------ the layout

    def images(self, front: Front) -> Images:
        """The layout's image source for ``front`` (pending images arrive as drawn)."""
        return Images(front, self._later)

    @contextlib.contextmanager
    def layout(self):
        """The layout's conditions: WeasyPrint builds a large graph of boxes and the
        cyclic garbage collector would re-scan it again and again as the layout allocates
        (~25 % of the layout's time, measured); collection waits until the layout is done,
        for a few per cent more peak memory."""
        collecting = gc.isenabled()
        gc.disable()
        try:
            yield
        finally:
            if collecting:
                gc.enable()

    def stop(self) -> None:
        """An interrupt or an error: stop the child (which ignores Ctrl-C) and the pool."""
        if self._later is not None:
            self._later.kill()
            self._later = None
        self.close()

    def finish(self) -> None:
        """The layout is done: wait for the child (it has sent everything)."""
        if self._later is not None:
            self._later.close()
            self._later = None

    def close(self) -> None:
        """Stop the pool (waiting: a worker left behind would outlive the build)."""
        pool, self.pool = self.pool, None
        if pool is not None:
            pool.shutdown(wait=True, cancel_futures=True)


def _default_dir() -> Path:
    from reportgen.store import default_cache_dir

    return default_cache_dir()
