"""The plan of one build, read top to bottom: load → compute → transforms → results →
HTML → layout → self-check → commit (:func:`make_package`, then :func:`commit_package`).

Each step is a plain function of plain values; how they are spread over processes is the
scheduler's business (reportgen.pipeline.scheduler). Nothing is written under a final name
until the whole package exists and has passed its self-check; then the command's process
commits its files together (reportgen.pipeline.commit).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from reportgen.calc.plugin_set import PluginSet
from reportgen.document.compute import compute_document
from reportgen.document.results import results_bytes
from reportgen.errors import ExitCode, JobError, Problem, ThemeError
from reportgen.job.load import Job, load_job
from reportgen.model import Document
from reportgen.package.archive import embedded_files, manifest_bytes
from reportgen.package.revisions import changes_since
from reportgen.pipeline.commit import (
    Claim,
    commit_outputs,
    journal_path,
    package_files,
    package_names,
    preflight,
    recover,
    refuse_existing,
    sweep_stale_parts,
)
from reportgen.pipeline.scheduler import Front, Scheduler
from reportgen.render.assets import inline_assets
from reportgen.render.html import render_html
from reportgen.render.logo import firm_logo, jinja_hook
from reportgen.render.pdf import ImageSource, RefusedResource, preload_renderer, write_pdf
from reportgen.render.selfcheck import self_check


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
    split: bool = False  # compute in a forked child, lay out here (pipeline.scheduler)
    row: str | None = None  # an equipment schedule's row (its tag), built as its own package
    archived: bool = False  # the job came out of a package (load_job's archived)
    seal: Callable[[bytes], bytes] | None = None  # signs the PDF before it is committed


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
    notes: list[str] = field(default_factory=list)  # what the output folder needed done


def output_paths(job: Job, out_dir: Path) -> tuple[Path, Path]:
    return out_dir / f"{job.stem}.pdf", out_dir / f"{job.stem}.results.json"


def refuse_final(doc: Document, job: Job) -> None:
    problems = []
    if doc.review_state != "approved":
        state = {"preliminary": "has not been checked",
                 "checked": "has been checked but not approved"}[doc.review_state]
        problems.append(Problem(str(job.path), f"--final refused: the package {state}"
                                " (set checked_by and approved_by)", field="package"))
    if doc.unaccepted:
        ids = ", ".join(f"{s.calc_id}/{c.id}" for s, c in doc.unaccepted)
        problems.append(Problem(str(job.path), f"--final refused: design checks fail without"
                                f" an accepted deviation: {ids} (record each in"
                                " [[package.deviations]] or change the design)",
                                field="package.deviations"))
    unverified = [s.calc_id for s in doc.sections if s.verification is None]
    if unverified:
        problems.append(Problem(str(job.path), "--final refused: calcs not independently"
                                f" verified: {', '.join(unverified)}"))
    if problems:
        raise JobError(problems)


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
    """Build one job into its package's bytes; write nothing (the command commits them).

    The steps, in order: load → compute → transforms → results → HTML (the front half,
    :func:`front_half`) → layout → self-check. How they use processes is the scheduler's
    business; ``before()`` runs here while the front half starts (the command claims the
    output folder then).
    """
    sched = Scheduler(workers=opts.workers, split=opts.split, cache_dir=opts.cache_dir,
                      use_cache=opts.use_cache)

    def meanwhile() -> None:
        preload_renderer()  # ~0.6 s, while the front half computes elsewhere
        if before is not None:
            before()

    front = sched.front(lambda: front_half(path, plugins, opts, sched), meanwhile)
    images = sched.images(front)
    try:
        with sched.layout():
            pdf = layout(front, images)
    except BaseException:
        sched.stop()  # the child ignores Ctrl-C: the command stops it
        raise
    sched.finish()
    if opts.self_check:
        self_check(pdf, front.doc, embedded=[f.name for f in front.files])
    if opts.seal is not None:
        pdf = opts.seal(pdf)
    return made_package(path, front, pdf, images.payloads() if opts.html else None)


def front_half(path: Path, plugins: PluginSet, opts: BuildOptions,
               sched: Scheduler) -> Front:
    """Load the job, compute every calc once, apply the transforms, write the results and
    the HTML: everything before the layout."""
    job = load_job(path, plugins, template_dir=opts.template_dir, archived=opts.archived)
    if opts.row is not None:
        from reportgen.job.split import row_job

        job = row_job(job, opts.row, plugins, template_dir=opts.template_dir,
                      archived=opts.archived)
    check_out_dir(opts.out_dir, path)
    pdf_path, results_path = output_paths(job, opts.out_dir)
    if not opts.force:
        refuse_existing(path, [pdf_path, results_path])
    preflight(path, [pdf_path, results_path])
    sched.warm()
    doc = compute_document(job, plugins, verify=sched.verify, on_computed=sched.on_computed)
    if job.previous_package is not None:
        doc = changes_since(doc, job)
    if opts.final:
        refuse_final(doc, job)
    results = results_bytes(doc)
    staged = sched.assets(doc)
    theme = opts.template_dir or job.template_dir
    html = render_html(doc, staged.assets, template_dir=theme, logo=firm_logo(theme),
                       extra_hook=jinja_hook(doc, plugins))
    files = embedded_files(job, results, manifest_bytes(
        doc, job, results, templates="firm" if theme else "built-in"))
    return Front(job=job, doc=doc, results=results, html=html, files=files,
                 roots=(theme,) if theme else (), ready=staged.ready, pending=staged.pending,
                 jobs=staged.jobs)


def layout(front: Front, images: ImageSource) -> bytes:
    """The package's pages: the HTML laid out (WeasyPrint) into PDF/A-3b bytes."""
    try:
        return write_pdf(front.html, base_dir=front.job.folder, attachments=front.files,
                         date=front.job.info.date, extra_roots=front.roots, images=images)
    except RefusedResource as exc:
        if not front.roots:  # the built-in templates ask for nothing of the kind
            raise
        # only a firm theme's templates can ask for a file or an embedding (job text is
        # escaped): the theme is at fault
        raise ThemeError(Problem(str(front.roots[0]), f"a template of this theme: {exc}")
                         ) from exc


def made_package(path: Path, front: Front, pdf: bytes,
                 payloads: dict[str, bytes] | None) -> MadePackage:
    """The package's files: results.json, the PDF (and the self-contained HTML)."""
    job, doc = front.job, front.doc
    outputs = [(f"{job.stem}.results.json", front.results), (f"{job.stem}.pdf", pdf)]
    if payloads is not None:
        outputs.insert(0, (f"{job.stem}.html",
                           inline_assets(front.html, payloads).encode("utf-8")))
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
    claim.notes += recover(opts.out_dir)
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
        claim.notes += recover(out_dir)
        if not opts.force:
            refuse_existing(made.job, [out_dir / f"{made.stem}.pdf",
                                       out_dir / f"{made.stem}.results.json"])
        preflight(made.job, [target for target, _ in outputs])
        journal = journal_path(out_dir, made.stem)
        sweep_stale_parts(out_dir, [*(target for target, _ in outputs), journal])
        locks = [lock]
        if (out_dir / "register.json").exists():  # a set's register that lists it, too
            from reportgen.pipeline.register import register_with

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
                       revision=made.revision, html=html, extra={"date": made.date},
                       notes=list(claim.notes))


def build_job(path: Path, plugins: PluginSet, opts: BuildOptions) -> BuildResult:
    """Build one job and commit its files (the command's process does both)."""
    claim = Claim.open(opts.out_dir)
    try:
        made = make_package(path, plugins, opts, before=lambda: claim_package(path, opts, claim))
        return commit_package(made, opts, claim)
    finally:
        claim.release()


def check_out_dir(out_dir: Path, job_path: Path) -> None:
    """Refuse an output folder that is a file (or lies under one) before any work is done."""
    for folder in (out_dir, *out_dir.parents):
        if folder.exists():
            if not folder.is_dir():
                raise JobError(Problem(str(job_path), f"the output folder {out_dir} cannot be"
                                       f" created: {folder} is a file, not a folder",
                                       field="--out"))
            return
