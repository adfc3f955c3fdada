"""Build one job file into its package: compute, render, self-check, write atomically.

Nothing is written under a final name until the whole package exists and has passed
its self-check; outputs go to temporary files in the output folder and are renamed.
"""

from __future__ import annotations

import contextlib
import glob
import os
import signal
import tempfile
import threading
import time
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .archive import embedded_files
from .build import compute_document
from .errors import ExitCode, JobError, Problem
from .jobfile import Job, load_job
from .model import Document
from .plugins import PluginSet
from .results import results_bytes
from .split import Later


@dataclass(frozen=True, kw_only=True)
class BuildOptions:
    out_dir: Path
    force: bool = False
    final: bool = False
    html: bool = False
    use_cache: bool = True
    cache_dir: Path | None = None
    workers: int = 1
    template_dir: Path | None = None  # overrides the job's [package] template_dir
    self_check: bool = True
    split: bool = False  # compute in a forked child, lay out here (reportgen.split)


@dataclass(frozen=True, kw_only=True)
class BuildResult:
    job: Path
    pdf: Path
    results: Path
    status: str
    exit_code: ExitCode
    checks_total: int = 0
    checks_failed: int = 0
    review_state: str = ""
    title: str = ""
    calc_number: str = ""
    revision: str = ""
    html: Path | None = None
    extra: dict = field(default_factory=dict)


def output_paths(job: Job, out_dir: Path) -> tuple[Path, Path]:
    return out_dir / f"{job.stem}.pdf", out_dir / f"{job.stem}.results.json"


def refuse_final(doc: Document, job: Job) -> None:
    problems = []
    if doc.review_state != "approved":
        state = {"preliminary": "has not been checked",
                 "checked": "has been checked but not approved"}[doc.review_state]
        problems.append(Problem(str(job.path), f"--final refused: the package {state}"
                                " (set checked_by and approved_by)", field="package"))
    if doc.failed:
        ids = ", ".join(f"{s.calc_id}/{c.id}" for s, c in doc.failed)
        problems.append(Problem(str(job.path), f"--final refused: design checks fail: {ids}"))
    unverified = [s.calc_id for s in doc.sections if s.verification is None]
    if unverified:
        problems.append(Problem(str(job.path), "--final refused: calcs not independently"
                                f" verified: {', '.join(unverified)}"))
    if problems:
        raise JobError(problems)


@dataclass(frozen=True)
class Prepared:
    """Everything a package needs before its layout (sent whole from a split child)."""

    job: Job
    doc: Document
    results: bytes
    html: str
    files: list
    roots: tuple[Path, ...]
    images: Any  # render.assets.StagedAssets


def package_html(doc: Document, job: Job, opts: BuildOptions, results: bytes,
                 plugins: PluginSet | None = None, *, preload: bool = False, pool=None,
                 prefetched=None, later: bool = False) -> tuple[Prepared, Iterator]:
    """Draw the assets and write the final HTML.

    Returns the prepared package and an iterator over the figures still being drawn
    (empty unless ``later``): with ``later`` the layout may start before they exist.
    """
    from .archive import manifest_bytes
    from .render.assets import start_assets
    from .render.html import render_html
    from .templates import firm_logo, jinja_hook

    template_dir = opts.template_dir or job.template_dir
    pending = start_assets(doc, cache_dir=opts.cache_dir, use_cache=opts.use_cache,
                           workers=opts.workers, pool=pool, prefetched=prefetched)
    if preload and pending.parallel:
        from .render.pdf import preload_renderer

        preload_renderer()  # import WeasyPrint while the workers draw
    staged, rest = pending.stage(later=later and pending.parallel)
    html = render_html(doc, staged.assets, template_dir=template_dir,
                       logo=firm_logo(template_dir), extra_hook=jinja_hook(doc, plugins))
    files = embedded_files(job, results, manifest_bytes(doc, job, results))
    roots = (template_dir,) if template_dir else ()
    return Prepared(job=job, doc=doc, results=results, html=html, files=files, roots=roots,
                    images=staged), rest


def package_pdf(prep: Prepared, later: Later | None = None) -> tuple[bytes, dict[str, bytes]]:
    """Lay the package out: (PDF bytes, every image's SVG by URL).

    Figures still being drawn come through ``later`` when the renderer paints them; one
    that does not come (its worker failed) is drawn here.
    """
    from .render.pdf import RefusedResource, write_pdf

    images = prep.images
    got: dict[str, bytes] = {}

    def get_later(url: str) -> bytes:
        if url not in got:
            payload = later.get(url) if later is not None else None
            got[url] = payload if payload is not None else images.draw_here(url)
        return got[url]

    try:
        pdf = write_pdf(prep.html, base_dir=prep.job.folder, attachments=prep.files,
                        date=prep.job.info.date, extra_roots=prep.roots, images=images.ready,
                        later=images.later, get_later=get_later)
    except RefusedResource as exc:
        if not prep.roots:  # the built-in templates ask for nothing of the kind
            raise
        # only a firm theme's templates can ask for a file or an embedding (job text is
        # escaped): the theme is at fault
        from .errors import ThemeError

        raise ThemeError(Problem(str(prep.roots[0]), f"a template of this theme: {exc}")
                         ) from exc
    payloads = dict(images.ready)
    payloads.update((url, get_later(url)) for url in images.later)
    return pdf, payloads


def prepare_package(path: Path, plugins: PluginSet, opts: BuildOptions, *,
                    preload: bool = False, later: bool = False) -> tuple[Prepared, Iterator]:
    """Everything before the layout, and the figures still being drawn (see package_html).

    The drawing workers stop when the iterator is exhausted or closed.
    """
    job = load_job(path, plugins)
    check_out_dir(opts.out_dir, path)
    pdf_path, results_path = output_paths(job, opts.out_dir)
    if not opts.force:
        existing = [p for p in (pdf_path, results_path) if p.exists()]
        if existing:
            raise JobError(Problem(str(path), f"{existing[0]} already exists; a package of the"
                                   " same calc number and revision is replaced only with"
                                   " --force"))
    pool = None
    if opts.split and opts.workers > 1:
        from .render.assets import warm_pool

        pool = warm_pool(opts.workers)  # drawing workers load the typesetter meanwhile
    try:  # the drawings stop the pool at their end (render.assets.Drawings)
        return _prepare(job, plugins, opts, preload, pool, later)
    except BaseException:
        if pool is not None:  # wait: a worker left behind would outlive the build
            pool.shutdown(wait=True, cancel_futures=True)
        raise


def _prepare(job: Job, plugins: PluginSet, opts: BuildOptions, preload: bool, pool,
             later: bool) -> tuple[Prepared, Iterator]:
    verify = verification_cache(opts)
    prefetched = None
    if pool is not None:
        # Verification and drawing start in the workers now, side by side, instead of
        # one after the other (reportgen.cache.EarlyVerification, render.assets.prefetch).
        from .cache import EarlyVerification
        from .render.assets import prefetch

        verify = EarlyVerification(verify, pool)
        verify.start(job, plugins)
        prefetched = prefetch((b for out in verify.outputs for b in out.blocks),
                              job.info.units, cache_dir=opts.cache_dir,
                              use_cache=opts.use_cache, pool=pool)
    doc = compute_document(job, plugins, verify=verify)
    if job.previous_package is not None:
        from .archive import changes_since

        doc = changes_since(doc, job)
    if opts.final:
        refuse_final(doc, job)
    results = results_bytes(doc)
    return package_html(doc, job, opts, results, plugins, preload=preload, pool=pool,
                        prefetched=prefetched, later=later)


def build_job(path: Path, plugins: PluginSet, opts: BuildOptions) -> BuildResult:
    from .split import can_split, run_split_stream

    later: Later | None = None
    if opts.split and can_split():
        # compute in a forked child while WeasyPrint imports here; the figures it is
        # still drawing arrive while the layout runs (reportgen.split)
        from .render.pdf import preload_renderer

        prep, later = run_split_stream(
            lambda: prepare_package(path, plugins, opts, later=True), preload_renderer)
    else:
        prep, rest = prepare_package(path, plugins, opts, preload=True)
        for _ in rest:  # nothing is left for later here; this stops the workers
            pass
    try:
        pdf, payloads = package_pdf(prep, later)
    finally:
        if later is not None:
            later.close()
    job, doc = prep.job, prep.doc
    pdf_path, results_path = output_paths(job, opts.out_dir)
    if opts.self_check:
        from .selfcheck import self_check

        self_check(pdf, doc, embedded=[f.name for f in prep.files])
    outputs = [(results_path, prep.results), (pdf_path, pdf)]
    html_path = None
    if opts.html:
        from .render.assets import inline_assets

        html_path = opts.out_dir / f"{job.stem}.html"
        outputs.insert(0, (html_path, inline_assets(prep.html, payloads).encode("utf-8")))
    try:
        sweep_stale_parts(opts.out_dir, [p for p, _ in outputs])
        commit_outputs(outputs)
    except OSError as exc:
        raise JobError(Problem(str(path), f"cannot write the package into {opts.out_dir}:"
                               f" {exc.strerror or exc}",
                               field="--out")) from None
    code = ExitCode.CHECKS_FAIL if doc.failed else ExitCode.OK
    return BuildResult(job=path, pdf=pdf_path, results=results_path, status=doc.status,
                       exit_code=code, checks_total=len(doc.design_checks),
                       checks_failed=len(doc.failed), review_state=doc.review_state,
                       title=job.info.title, calc_number=job.info.calc_number,
                       revision=job.info.revision, html=html_path,
                       extra={"date": job.info.date})


def verification_cache(opts: BuildOptions):
    """Reuse independent-check rows from the cache folder unless --no-cache."""
    from .cache import VerificationCache, default_cache_dir

    return VerificationCache((opts.cache_dir or default_cache_dir()) if opts.use_cache else None)


def check_out_dir(out_dir: Path, job_path: Path) -> None:
    """Refuse an output folder that is a file (or lies under one) before any work is done."""
    for folder in (out_dir, *out_dir.parents):
        if folder.exists():
            if not folder.is_dir():
                raise JobError(Problem(str(job_path), f"the output folder {out_dir} cannot be"
                                       f" created: {folder} is a file, not a folder",
                                       field="--out"))
            return


#: temporary files older than this are left over from a killed build, not in progress
STALE_PART_SECONDS = 60.0


def sweep_stale_parts(out_dir: Path, targets: list[Path], *,
                      now: float | None = None) -> list[Path]:
    """Remove ``.NAME.*.part`` files a killed build left beside ``targets``; return them.

    Only old ones go: a younger one may belong to a build running at the same time.
    """
    if not out_dir.is_dir():
        return []
    now = time.time() if now is None else now
    removed = []
    for target in targets:
        for part in out_dir.glob(f".{glob.escape(target.name)}.*.part"):
            try:
                if part.is_file() and not part.is_symlink() and (
                        now - part.stat().st_mtime > STALE_PART_SECONDS):
                    part.unlink()
                    removed.append(part)
            except OSError:
                pass  # another build swept it first
    return removed


def commit_outputs(outputs: list[tuple[Path, bytes]]) -> None:
    """Write every output to a synced temporary file, then rename them all into place.

    The renames run with SIGINT and SIGTERM held back, so an interrupt lands before the
    first rename (old package untouched) or after the last (new package complete).
    """
    temps: list[tuple[str, Path]] = []
    try:
        for target, data in outputs:
            temps.append((_write_temp(target, data), target))
        with _interrupts_held():
            for tmp, target in temps:
                os.replace(tmp, target)
            _fsync_dir(outputs[0][0].parent)
    except BaseException:
        for tmp, _ in temps:
            _discard(tmp)  # already renamed ones are simply gone
        raise


@contextlib.contextmanager
def _interrupts_held():
    """Hold SIGINT and SIGTERM back for the block, then act on them as usual.

    A Python-level handler, not a signal mask: the mask is per thread, and a signal sent
    to the process may land on any thread (the renderer's, the pool's).
    """
    if threading.current_thread() is not threading.main_thread():
        yield  # only the main thread may set handlers; worker builds are not signalled
        return
    caught: list[int] = []
    held = (signal.SIGINT, signal.SIGTERM)
    previous = {s: signal.signal(s, lambda signum, frame: caught.append(signum)) for s in held}
    try:
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, handler)
        if caught:
            handler = previous[caught[0]]
            if callable(handler):
                handler(caught[0], None)
            elif handler == signal.SIG_DFL:
                signal.raise_signal(caught[0])


def _write_temp(target: Path, data: bytes) -> str:
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        umask = os.umask(0)
        os.umask(umask)
        os.fchmod(fd, 0o666 & ~umask)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException:
        _discard(tmp)
        raise
    return tmp


def _discard(tmp: str) -> None:
    try:
        os.unlink(tmp)
    except OSError:
        pass


def _fsync_dir(folder: Path) -> None:
    # the renames themselves reach the disk only once the folder is synced
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def atomic_write(target: Path, data: bytes) -> None:
    """Write ``data`` to a temporary file beside ``target``, fsync, then rename over it."""
    tmp = _write_temp(target, data)
    try:
        os.replace(tmp, target)
    except BaseException:
        _discard(tmp)
        raise
