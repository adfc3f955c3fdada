"""The work behind each CLI command (build, demo, plugins, check, schema).

Functions here return exit codes and print for a person; errors are raised as
ReportgenErrors for :mod:`reportgen.cli` to report.
"""

from __future__ import annotations

import json
import sys
from importlib import resources
from pathlib import Path

from reportgen.calc.plugin_set import PluginSet, get_plugin_manager
from reportgen.errors import ExitCode, JobError, PluginError, Problem, ReportgenError
from reportgen.units import DIMENSIONS


def load_plugins() -> PluginSet:
    plugins = get_plugin_manager()
    plugins.raise_for_conflicts()
    return plugins


def list_plugins() -> int:
    plugins = get_plugin_manager()
    for name in plugins.names():
        reg = plugins.calcs[name]
        ct = reg.calc_type
        print(f"{name}  {ct.version}  (package {reg.package} {reg.package_version},"
              f" plugin '{reg.plugin}', API {ct.api_version})")
        print(f"    {ct.title}")
        for label, specs in (("inputs", ct.inputs), ("criteria", ct.criteria)):
            if not specs:
                continue
            print(f"    {label}:")
            for sp in specs:
                dim = DIMENSIONS[sp.dimension]
                unit = f" [{dim.si_label or '-'}]" if sp.dimension != "dimensionless" else ""
                need = "required" if sp.required and sp.default is None else (
                    f"default {sp.default:g}{' ' + dim.si_label if dim.si_label else ''}"
                    if sp.default is not None else "optional")
                print(f"      {sp.name:<24}{sp.description}{unit}; {need}")
    for b in plugins.broken:
        print(f"BROKEN plugin '{b.plugin}' (package {b.package}): {b.error}")
    for c in plugins.conflicts:
        print(f"CONFLICT: {c}")
    if not plugins.calcs and not plugins.broken:
        print("no calc plugins installed")
    return int(ExitCode.INVALID_INPUT if plugins.conflicts else ExitCode.OK)


def job_files(targets: list[Path]) -> list[Path]:
    out: list[Path] = []
    for t in targets:
        if t.is_dir():
            out.extend(sorted(p for p in t.glob("*.toml") if p.is_file()))
        elif t.exists():
            out.append(t)
        else:
            raise JobError(Problem(str(t), "no such file or folder"))
    if not out:
        raise JobError(Problem(", ".join(map(str, targets)), "no *.toml job files found"))
    return out


def check_jobs(targets: list[Path]) -> int:
    from reportgen.job.load import load_job

    plugins = load_plugins()
    problems: list[Problem] = []
    files = job_files(targets)
    for path in files:
        try:
            job = load_job(path, plugins)
            print(f"ok: {path} ({len(job.calcs)} calcs)")
        except JobError as exc:
            problems.extend(exc.problems)
    if problems:
        raise JobError(problems)
    return int(ExitCode.OK)


def print_schema() -> int:
    from reportgen.job.schema import job_schema

    json.dump(job_schema(load_plugins()), sys.stdout, indent=2)
    print()
    return int(ExitCode.OK)


def sample_jobs_dir() -> Path:
    return Path(str(resources.files("reportgen_samples")))


def build_command(args) -> int:
    from reportgen.cli import default_workers
    from reportgen.pipeline.plan import BuildOptions

    if args.command == "demo":
        target = sample_jobs_dir()
        force, final, html, use_cache, tdir = args.force, False, False, True, None
        executor, scheduler = "local", None
    else:
        target = args.target
        force, final, html = args.force, args.final, args.html
        use_cache, tdir = not args.no_cache, args.template_dir
        executor, scheduler = args.executor, args.scheduler
    jobs = args.jobs if args.jobs is not None else default_workers()
    if jobs < 1:
        raise JobError("--jobs must be at least 1")
    if tdir is not None and not tdir.is_dir():
        raise JobError(Problem(str(tdir), "--template-dir is not a folder"))
    opts = BuildOptions(out_dir=args.out, force=force, final=final, html=html,
                        use_cache=use_cache, template_dir=tdir.resolve() if tdir else None,
                        workers=1)
    if executor == "dask":
        from reportgen.pipeline.dask import require_dask

        require_dask()  # the install hint now, before anything is built
    if target.is_dir():
        from reportgen.pipeline.sets import build_folder

        code = build_folder(target, opts, workers=jobs, executor=executor,
                            scheduler=scheduler, demo=args.command == "demo")
        _prune_cache(opts)
        return code
    if not target.exists():
        raise JobError(Problem(str(target), "no such job file"))
    if executor != "local":
        raise JobError("--executor dask applies to folder builds")
    from reportgen.pipeline.plan import build_job

    plugins = load_plugins()
    opts = BuildOptions(**{**opts.__dict__, "workers": jobs, "split": True})
    result = build_job(target, plugins, opts)
    print(summary_line(result))
    _prune_cache(opts)
    return int(result.exit_code)


def _prune_cache(opts) -> None:
    """Keep the cache under its cap (REPORTGEN_CACHE_MAX_MB) once the outputs are written."""
    if opts.use_cache:
        from reportgen.store import default_cache_dir, prune_cache

        prune_cache(opts.cache_dir or default_cache_dir())


def summary_line(result) -> str:
    verdict = ("all checks pass" if not result.checks_failed else
               f"{result.checks_failed} of {result.checks_total} checks FAIL")
    return f"{result.pdf}  [{verdict}; {result.review_state}]\n{result.results}"


def error_text(exc: BaseException) -> str:
    if isinstance(exc, JobError):
        return "\n".join(str(p).lstrip(": ") for p in exc.problems)
    if isinstance(exc, (PluginError, ReportgenError)):
        return str(exc)
    return f"internal error: {type(exc).__name__}: {exc}"
