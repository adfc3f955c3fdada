"""Build one job file into its package: compute, render, self-check, commit.

Nothing is written under a final name until the whole package exists and has passed
its self-check; then the command's process commits its files together (reportgen.outputs).
"""

from __future__ import annotations

import sys
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import PluginSet
from reportgen.document.compute import compute_document
from reportgen.document.results import results_bytes
from reportgen.errors import ExitCode, JobError, Problem
from reportgen.job.load import Job, load_job
from reportgen.model import Document
from reportgen.package.archive import embedded_files
from reportgen.pipeline.commit import (  # noqa: F401 - STALE_PART_SECONDS, atomic_write: used from here
    STALE_PART_SECONDS,
    Claim,
    atomic_write,
    commit_outputs,
    journal_path,
    package_files,
    package_names,
    preflight,
    recover,
    refuse_existing,
    sweep_stale_parts,
)
from reportgen.pipeline.fork import Later


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
    from reportgen.package.archive import manifest_bytes
    from reportgen.render.assets import start_assets
    from reportgen.render.html import render_html
    from reportgen.render.logo import firm_logo, jinja_hook

    template_dir = opts.template_dir or job.template_dir
    pending = start_assets(doc, cache_dir=opts.cache_dir, use_cache=opts.use_cache,
                           workers=opts.workers, pool=pool, prefetched=prefetched)
    if preload and pending.parallel:
        from reportgen.render.pdf import preload_renderer

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
    from reportgen.render.pdf import RefusedResource, write_pdf

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
        from reportgen.errors import ThemeError

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
        refuse_existing(path, [pdf_path, results_path])
    preflight(path, [pdf_path, results_path])
    pool = None
    if opts.split and opts.workers > 1:
        from reportgen.render.assets import warm_pool

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
        from reportgen.render.assets import prefetch
        from reportgen.store import EarlyVerification

        verify = EarlyVerification(verify, pool)
        verify.start(job, plugins)
        prefetched = prefetch((b for out in verify.outputs for b in out.blocks),
                              job.info.units, cache_dir=opts.cache_dir,
                              use_cache=opts.use_cache, pool=pool)
    doc = compute_document(job, plugins, verify=verify)
    if job.previous_package is not None:
        from reportgen.package.archive import changes_since

        doc = changes_since(doc, job)
    if opts.final:
        refuse_final(doc, job)
    results = results_bytes(doc)
    return package_html(doc, job, opts, results, plugins, preload=preload, pool=pool,
                        prefetched=prefetched, later=later)


@dataclass(frozen=True, kw_only=True)
class MadePackage:
    """A package's bytes, made but not written: the command commits them."""

    job: Path
    calc_number: str
    revision: str
    stem: str
    outputs: list[tuple[str, bytes]]  # (file name in the output folder, bytes)
    status: str
    exit_code: ExitCode
    checks_total: int
    checks_failed: int
    review_state: str
    title: str
    date: str


def make_package(path: Path, plugins: PluginSet, opts: BuildOptions,
                 before=None) -> MadePackage:
    """Compute, render and self-check one job; write nothing (see :func:`commit_package`).

    ``before()`` runs here before the compute, or, with a split, while the child starts it.
    """
    from reportgen.pipeline.fork import can_split, run_split_stream

    later: Later | None = None
    if opts.split and can_split():
        # compute in a forked child while WeasyPrint imports here; the figures it is
        # still drawing arrive while the layout runs (reportgen.split)
        from reportgen.render.pdf import preload_renderer

        def meanwhile() -> None:
            preload_renderer()
            if before is not None:  # while the child still computes: off the critical path
                before()

        prep, later = run_split_stream(
            lambda: prepare_package(path, plugins, opts, later=True), meanwhile)
    else:
        if before is not None:
            before()
        prep, rest = prepare_package(path, plugins, opts, preload=True)
        for _ in rest:  # nothing is left for later here; this stops the workers
            pass
    try:
        pdf, payloads = package_pdf(prep, later)
    except BaseException:
        if later is not None:
            later.kill()  # the child ignores Ctrl-C: the command stops it
            later = None
        raise
    finally:
        if later is not None:
            later.close()
    job, doc = prep.job, prep.doc
    if opts.self_check:
        from reportgen.render.selfcheck import self_check

        self_check(pdf, doc, embedded=[f.name for f in prep.files])
    outputs = [(f"{job.stem}.results.json", prep.results), (f"{job.stem}.pdf", pdf)]
    if opts.html:
        from reportgen.render.assets import inline_assets

        outputs.insert(0, (f"{job.stem}.html",
                           inline_assets(prep.html, payloads).encode("utf-8")))
    return MadePackage(job=path, calc_number=job.info.calc_number, revision=job.info.revision,
                       stem=job.stem, outputs=outputs, status=doc.status,
                       exit_code=ExitCode.CHECKS_FAIL if doc.failed else ExitCode.OK,
                       checks_total=len(doc.design_checks), checks_failed=len(doc.failed),
                       review_state=doc.review_state, title=job.info.title,
                       date=job.info.date)


def claim_package(path: Path, opts: BuildOptions, claim: Claim) -> None:
    """Before the build: finish what a killed build left in the output folder, take the
    package's lock, and refuse at once what the commit would refuse."""
    names = package_names(path)
    if names is None:
        return  # the job cannot name its files: loading it reports why
    check_out_dir(opts.out_dir, path)
    for note in recover(opts.out_dir):
        print(f"note: {note}", file=sys.stderr)
    calc, rev, stem = names
    claim.package(path, calc, rev, stem)
    results, pdf, *html = package_files(opts.out_dir, stem, opts.html)
    if not opts.force:
        refuse_existing(path, [pdf, results])
    preflight(path, [pdf, results, *html])


def commit_package(made: MadePackage, opts: BuildOptions, claim: Claim) -> BuildResult:
    """Write a made package's files into the output folder as one commit, under its lock
    (the existence check is made again there, just before the commit)."""
    out_dir = opts.out_dir
    check_out_dir(out_dir, made.job)
    lock = claim.package(made.job, made.calc_number, made.revision, made.stem)
    outputs = [(out_dir / name, data) for name, data in made.outputs]
    try:
        for note in recover(out_dir):
            print(f"note: {note}", file=sys.stderr)
        if not opts.force:
            refuse_existing(made.job, [out_dir / f"{made.stem}.pdf",
                                       out_dir / f"{made.stem}.results.json"])
        preflight(made.job, [target for target, _ in outputs])
        journal = journal_path(out_dir, made.stem)
        sweep_stale_parts(out_dir, [*(target for target, _ in outputs), journal])
        locks = [lock]
        if (out_dir / "register.json").exists():  # a set's register that lists it, too
            from reportgen.pipeline.sets import register_with

            locks.append(claim.wait("register"))
            outputs += register_with(out_dir, made)
        commit_outputs(outputs, journal=journal, locks=locks)
    except OSError as exc:
        raise JobError(Problem(str(made.job), f"cannot write the package into {out_dir}:"
                               f" {exc.strerror or exc}", field="--out")) from None
    html = out_dir / f"{made.stem}.html" if opts.html else None
    return BuildResult(job=made.job, pdf=out_dir / f"{made.stem}.pdf",
                       results=out_dir / f"{made.stem}.results.json", status=made.status,
                       exit_code=made.exit_code, checks_total=made.checks_total,
                       checks_failed=made.checks_failed, review_state=made.review_state,
                       title=made.title, calc_number=made.calc_number,
                       revision=made.revision, html=html, extra={"date": made.date})


def build_job(path: Path, plugins: PluginSet, opts: BuildOptions) -> BuildResult:
    """Build one job and commit its files (the command's process does both)."""
    claim = Claim.open(opts.out_dir)
    try:
        made = make_package(path, plugins, opts, before=lambda: claim_package(path, opts, claim))
        return commit_package(made, opts, claim)
    finally:
        claim.release()


def verification_cache(opts: BuildOptions):
    """Reuse independent-check rows from the cache folder unless --no-cache."""
    from reportgen.store import VerificationCache, default_cache_dir

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
