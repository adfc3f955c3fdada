"""Calc sets: build every job of a folder (in worker processes or on a Dask cluster)
and write the set's register (register.json and register PDF) beside the packages.
"""

from __future__ import annotations

import hashlib
import os
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, JobError, Problem, ReportgenError
from reportgen.pipeline.commit import refuse_existing
from reportgen.pipeline.plan import BuildOptions
from reportgen.pipeline.register import (
    REGISTER_JSON,
    REGISTER_PDF,
    register_files,
    register_rows,
)


def build_one(path: str, opts: dict[str, Any], label: str | None = None) -> dict[str, Any]:
    """Make one job's package in this process and return its bytes in the outcome; never
    raises (the outcome is data) and writes nothing: the command commits. ``label``
    names the package in the outcome (a schedule's row: the job file and the tag)."""
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.errors import error_text
    from reportgen.pipeline.plan import make_package

    values: dict[str, Any] = {k: (Path(v) if k in ("out_dir", "cache_dir", "template_dir")
                                  and v is not None else v) for k, v in opts.items()}
    options = BuildOptions(**values)
    try:
        made = make_package(Path(path), load_plugins(), options)
    except ReportgenError as exc:
        return {"job": label or path, "ok": False, "exit_code": int(exc.exit_code),
                "error": error_text(exc)}
    except Exception as exc:  # a bug in one job must not stop the set
        return {"job": label or path, "ok": False, "exit_code": int(ExitCode.FAILURE),
                "error": error_text(exc)}
    pdf = dict(made.outputs)[f"{made.stem}.pdf"]
    return {"job": label or path, "ok": True, "exit_code": int(made.exit_code), "stem": made.stem,
            "outputs": made.outputs, "calc_number": made.calc_number,
            "revision": made.revision, "title": made.title, "status": made.status,
            "checks_total": made.checks_total, "checks_failed": made.checks_failed,
            "checks_passed": made.checks_total - made.checks_failed,
            "review_state": made.review_state, "sha256": hashlib.sha256(pdf).hexdigest(),
            "date": made.date}


def run_tasks(func: Callable[..., dict[str, Any]], items: list[tuple], *, workers: int,
              executor: str = "local", scheduler: str | None = None,
              on_done: Callable[[dict[str, Any]], None] | None = None,
              cost: Callable[[tuple], float] | None = None) -> list[dict[str, Any]]:
    """Run ``func(*item)`` for each item; return outcomes in item order.

    With ``cost``, local workers take the costliest items first, so the set does not end
    with one worker on a large package while the others wait. The workers die with this
    process and ignore Ctrl-C: on an interrupt or error here they are stopped at once.
    """
    outcomes: dict[int, dict[str, Any]] = {}
    if executor == "dask":
        from reportgen.pipeline.dask import run_on_dask

        return run_on_dask(func, items, scheduler=scheduler, on_done=on_done, workers=workers)
    if workers <= 1 or len(items) <= 1:
        for i, item in enumerate(items):
            outcomes[i] = func(*item)
            if on_done:
                on_done(outcomes[i])
    else:
        import multiprocessing

        from reportgen.pipeline.lifeline import children_start_deaf, pool_initializer

        ctx = multiprocessing.get_context("spawn")
        order = list(range(len(items)))
        if cost is not None:
            order.sort(key=lambda i: -cost(items[i]))
        pool = ProcessPoolExecutor(max_workers=min(workers, len(items)), mp_context=ctx,
                                   initializer=pool_initializer,
                                   initargs=(os.getpid(), _leave_fast))
        try:
            with children_start_deaf():  # the workers start on these submissions
                futures = {pool.submit(func, *items[i]): i for i in order}
            for fut in as_completed(futures):
                outcomes[futures[fut]] = fut.result()
                if on_done:
                    on_done(outcomes[futures[fut]])
        except BaseException:
            stop_pool(pool)
            raise
        pool.shutdown(wait=True)
    return [outcomes[i] for i in range(len(items))]


def stop_pool(pool: ProcessPoolExecutor) -> None:
    """End a pool's workers now, mid-task (they commit nothing), and reap them."""
    for proc in list((getattr(pool, "_processes", None) or {}).values()):
        try:
            proc.kill()
        except (OSError, AttributeError):
            pass
    pool.shutdown(wait=True, cancel_futures=True)


def _leave_fast() -> None:
    """In a set worker: once the pool lets it go (every result sent), end the process
    without the interpreter's teardown, which collects every package's laid-out garbage
    (~0.6 s measured) while the set waits for its workers."""
    import atexit

    from reportgen.pipeline.lifeline import leave_now

    atexit.register(leave_now, 0)  # runs first: atexit handlers run last-registered first


def set_names(files: list[Path]) -> dict[Path, tuple[str, str, str]]:
    """Each job's (calc number, revision, stem); refuse (exit 2, before anything is built)
    jobs that would write the same file, or names that differ only in case (one file on a
    case-insensitive file system)."""
    from reportgen.pipeline.commit import package_names

    names = {p: n for p in files if (n := package_names(p)) is not None}
    by_stem: dict[str, list[Path]] = {}
    for path, (_calc, _rev, stem) in names.items():
        by_stem.setdefault(stem.casefold(), []).append(path)
    problems = []
    for paths in by_stem.values():
        if len(paths) > 1:
            calc, rev, stem = names[paths[0]]
            same = all(names[p][2] == stem for p in paths)
            what = (f"calc {calc} revision {rev} (file {stem}.pdf)" if same else
                    "file names that differ only in case ("
                    + ", ".join(sorted({names[p][2] + '.pdf' for p in paths})) + ")")
            problems.append(Problem(", ".join(map(str, paths)),
                                    f"these jobs share {what}; each package of a set needs"
                                    " its own calc number and revision"))
    if problems:
        raise JobError(problems)
    return names


@dataclass
class SetResult:
    """What a folder build did: one outcome per job (in job order), the packages
    committed, and what finishing killed builds' commits in the folder did."""

    outcomes: list[dict[str, Any]]
    built: list[dict[str, Any]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def exit_code(self) -> int:
        return max((int(o["exit_code"]) for o in self.outcomes), default=0)


def build_folder(folder: Path, opts: BuildOptions, *, workers: int, executor: str = "local",
                 scheduler: str | None = None, demo: bool = False,
                 on_done: Callable[[dict[str, Any]], None] | None = None) -> SetResult:
    """Build every job of ``folder`` and commit the packages and the register together.

    The workers hand back each package's bytes; they are staged here as they come, and
    the one commit at the end renames every package and the register into place. An
    interrupt or failure before it leaves the output folder as it was. ``on_done`` hears
    of each package as it is made (the command's progress).
    """
    from reportgen.job.load import job_files
    from reportgen.pipeline.commit import (
        Claim,
        package_files,
        preflight,
        recover,
        sweep_stale_parts,
    )
    from reportgen.pipeline.plan import check_out_dir

    files = job_files([folder])
    names = set_names(files)
    out_dir = opts.out_dir
    check_out_dir(out_dir, folder)
    claim = Claim.open(out_dir)
    staged: dict[str, list] = {}
    targets: list[Path] = []
    try:
        claim.notes += recover(out_dir)
        for path, (calc, rev, stem) in names.items():
            claim.package(path, calc, rev, stem)
            results, pdf, *html = package_files(out_dir, stem, opts.html)
            preflight(path, [pdf, results, *html])
            targets += [pdf, results, *html]
        registers = [out_dir / REGISTER_JSON, out_dir / REGISTER_PDF]
        preflight(folder, registers)
        sweep_stale_parts(out_dir, targets)  # what killed builds of these packages left
        if demo and not opts.force:  # the demo writes into ./out: never over a user's files
            for target in [*targets, *registers]:
                if os.path.lexists(target):
                    raise JobError(Problem(str(target), "already exists; reportgen demo"
                                           " replaces files only with --force (or give"
                                           " another --out folder)"))
        opts_dict = worker_options(opts)
        items = [(str(p.absolute()), opts_dict, str(p)) for p in files]
        return _build_set(items, opts, workers, executor, scheduler, claim, staged, on_done)
    finally:
        from reportgen.pipeline.commit import discard

        for items in staged.values():  # whatever was not committed
            for s in items:
                discard(s.temp)
        claim.release()


def _build_set(items: list[tuple[str, dict[str, Any], str]], opts: BuildOptions,
               workers: int, executor: str, scheduler: str | None, claim,
               staged: dict[str, list],
               on_done: Callable[[dict[str, Any]], None] | None) -> SetResult:
    """Build ``items`` (job path, worker options, label) and commit them as one."""
    from reportgen.pipeline.commit import stage

    out_dir = opts.out_dir
    if workers > 1 or executor != "local":
        # The packages are built elsewhere; this process lays out only the register at
        # the end. Its renderer loads meanwhile (~0.6 s of CPU spread over the build,
        # instead of a second of waiting after the last package).
        import threading

        from reportgen.render.pdf import preload_renderer

        threading.Thread(target=preload_renderer, name="reportgen-preload",
                         daemon=True).start()
    def done(outcome: dict[str, Any]) -> None:
        outputs = outcome.pop("outputs", None)
        if outcome.get("ok"):
            outcome["pdf"] = str(out_dir / f"{outcome['stem']}.pdf")
            outcome["results"] = str(out_dir / f"{outcome['stem']}.results.json")
            # staged as it comes: the bytes do not pile up here
            items = staged[outcome["job"]] = []
            try:
                for name, data in outputs:
                    items.append(stage(out_dir / name, data))
            except OSError as exc:
                outcome.update(ok=False, exit_code=int(ExitCode.INVALID_INPUT),
                               error=f"cannot write the package into {out_dir}:"
                               f" {exc.strerror or exc}")
        if on_done is not None:
            on_done(outcome)

    outcomes = run_tasks(build_one, items, workers=workers, executor=executor,
                         scheduler=scheduler, on_done=done, cost=_job_size)
    built = _commit_set(outcomes, opts, claim, staged)
    return SetResult(outcomes=outcomes, built=built, notes=list(claim.notes))


def worker_options(opts: BuildOptions) -> dict[str, Any]:
    """The build options as a worker gets them: every path absolute, the cache folder
    named, so a worker in another folder (a Dask worker) reads and writes the same."""
    from reportgen.store import default_cache_dir

    values = asdict(opts)
    if opts.use_cache and opts.cache_dir is None:
        values["cache_dir"] = default_cache_dir()
    return {k: (str(v.absolute()) if isinstance(v, Path) else v) for k, v in values.items()}


def _commit_set(outcomes: list[dict[str, Any]], opts: BuildOptions, claim,
                staged: dict[str, list]) -> list[dict[str, Any]]:
    """Commit every built package and the register as one; return the committed ones.

    A package that cannot be committed (it appeared meanwhile without --force, or its job
    file changed its name) is reported as not built instead.
    """
    from reportgen.errors import ExitCode
    from reportgen.pipeline.commit import (
        commit_staged,
        journal_path,
        recover,
        stage,
        sweep_stale_parts,
    )

    out_dir = opts.out_dir
    claim.notes += recover(out_dir)
    built, seen = [], set()
    for o in outcomes:
        if not o.get("ok"):
            continue
        try:
            if o["stem"].casefold() in seen:
                raise JobError(Problem(o["job"], f"another job of the set also writes"
                                       f" {o['stem']}.pdf"))
            claim.package(Path(o["job"]), o["calc_number"], o["revision"], o["stem"])
            if not opts.force:
                refuse_existing(Path(o["job"]), [Path(o["pdf"]), Path(o["results"])])
        except JobError as exc:
            from reportgen.errors import error_text

            o.update(ok=False, exit_code=int(ExitCode.INVALID_INPUT), error=error_text(exc))
            continue
        seen.add(o["stem"].casefold())
        built.append(o)
    if not built:
        return built
    claim.wait("register")
    register = register_files(out_dir, register_rows(built))
    items = [s for o in built for s in staged[o["job"]]]
    journal = journal_path(out_dir, "register")
    # the register's leftovers only (under its lock): the packages' own temporaries
    # were staged here, some longer ago than a stale one is
    sweep_stale_parts(out_dir, [p for p, _ in register] + [journal])
    try:
        staged["register"] = [stage(p, d) for p, d in register]
        commit_staged(items + staged["register"], journal=journal, locks=claim.locks)
    except OSError as exc:
        raise JobError(Problem(str(out_dir), f"cannot write the packages and the register:"
                               f" {exc.strerror or exc}", field="--out")) from None
    staged.clear()
    return built


def _job_size(item: tuple) -> float:
    """A package's build time grows with its job file (calcs, figures): a cheap proxy."""
    try:
        return float(Path(item[0]).stat().st_size)
    except OSError:
        return 0.0


def build_split(path: Path, opts: BuildOptions, *, workers: int, executor: str = "local",
                scheduler: str | None = None,
                on_done: Callable[[dict[str, Any]], None] | None = None) -> SetResult:
    """Build each row of the equipment schedule of job ``path`` as its own package (calc
    number ``<calc_number>-<tag>``), in parallel, and commit them and the register as one.
    The job is loaded (so checked, row by row) once here first."""
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.job.load import file_stem, load_job
    from reportgen.pipeline.commit import (
        Claim,
        discard,
        package_files,
        preflight,
        recover,
        sweep_stale_parts,
    )
    from reportgen.pipeline.plan import check_out_dir

    job = load_job(path, load_plugins())
    if not job.schedule:
        raise JobError(Problem(str(path), "--split builds an equipment schedule's rows as"
                               " packages of their own; this job has no [schedule]",
                               field="schedule"))
    rows = []
    for item in job.schedule:
        calc = f"{job.info.calc_number}-{item.tag}"
        stem = file_stem(calc, job.info.revision)
        if stem is None:
            raise JobError(Problem(job.schedule_source, f"tag {item.tag!r} (row {item.row})"
                                   " cannot be part of a calc number and a file name; use"
                                   " letters, digits, '-', '.' and '_'", field="tag"))
        rows.append((item.tag, calc, stem))
    out_dir = opts.out_dir
    check_out_dir(out_dir, path)
    claim = Claim.open(out_dir)
    staged: dict[str, list] = {}
    targets: list[Path] = []
    try:
        claim.notes += recover(out_dir)
        for _tag, calc, stem in rows:
            claim.package(path, calc, job.info.revision, stem)
            results, pdf, *html = package_files(out_dir, stem, opts.html)
            preflight(path, [pdf, results, *html])
            targets += [pdf, results, *html]
        preflight(path, [out_dir / REGISTER_JSON, out_dir / REGISTER_PDF])
        sweep_stale_parts(out_dir, targets)
        base = worker_options(opts)
        items = [(str(path.absolute()), {**base, "row": tag}, f"{path}, tag {tag}")
                 for tag, _, _ in rows]
        return _build_set(items, opts, workers, executor, scheduler, claim, staged, on_done)
    finally:
        for items_ in staged.values():
            for st in items_:
                discard(st.temp)
        claim.release()
