"""Every command of the command line: build, demo, plugins, check, schema, verify,
extract, diff.

Functions here return exit codes and print for a person; errors are raised as
ReportgenErrors for :mod:`reportgen.cli` to report. The work itself is done by the layers
below (the pipeline builds, the package layer verifies and compares).
"""

from __future__ import annotations

import json
import math
import os
import sys
from importlib import resources
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import load_plugin_set, load_plugins
from reportgen.errors import ExitCode, JobError, Problem, ReportgenError
from reportgen.job.load import job_files
from reportgen.units import DIMENSIONS


def list_plugins() -> int:
    plugins = load_plugin_set()
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
                    f"default {sp.default!r}" if isinstance(sp.default, str) else
                    f"default {sp.default:g}{' ' + dim.si_label if dim.si_label else ''}"
                    if isinstance(sp.default, (int, float)) else f"default {sp.default}"
                    if sp.default is not None else "optional")
                print(f"      {sp.name:<24}{sp.description}{unit}; {need}")
    for b in plugins.broken:
        print(f"BROKEN plugin '{b.plugin}' (package {b.package}): {b.error}")
    for c in plugins.conflicts:
        print(f"CONFLICT: {c}")
    if not plugins.calcs and not plugins.broken:
        print("no calc plugins installed")
    return int(ExitCode.INVALID_INPUT if plugins.conflicts else ExitCode.OK)


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


def default_workers() -> int:
    return max(1, os.cpu_count() or 1)


def sample_jobs_dir() -> Path:
    return Path(str(resources.files("reportgen_samples")))


def _schedule_rows(path: Path) -> int:
    """How many rows the job's schedule has (for the progress bar; 0 if unknown)."""
    from reportgen.job.load import load_job

    try:
        return len(load_job(path, load_plugins()).schedule)
    except ReportgenError:
        return 0  # build_split loads it again and reports the problem


def build_command(args) -> int:
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
    if getattr(args, "seal_key", None) is not None:
        from reportgen.cli.seal import build_sealer

        opts = BuildOptions(**{**opts.__dict__, "seal": build_sealer(args, target)})
    if executor == "dask":
        from reportgen.pipeline.dask import require_dask

        require_dask()  # the install hint now, before anything is built
    split = bool(getattr(args, "split", False))
    if split and not target.is_file():
        raise JobError(Problem(str(target), "--split builds the rows of one job file's"
                               " equipment schedule; name the job file"))
    if args.command == "demo":
        from reportgen.cli.seal import demo_refuse_existing

        demo_refuse_existing(args.out, force)
    if target.is_dir() or split:
        from reportgen.cli.progress import Progress
        from reportgen.pipeline.register import REGISTER_JSON, REGISTER_PDF
        from reportgen.pipeline.sets import build_folder, build_split

        if split:
            progress = Progress(_schedule_rows(target), "building rows")
        else:
            progress = Progress(len(job_files([target])), "building")
        try:
            if split:
                done = build_split(target, opts, workers=jobs, executor=executor,
                                   scheduler=scheduler, on_done=progress.update)
            else:
                done = build_folder(target, opts, workers=jobs, executor=executor,
                                    scheduler=scheduler, demo=args.command == "demo",
                                    on_done=progress.update)
        finally:
            progress.close()
        for note in done.notes:
            print(f"note: {note}", file=sys.stderr)
        for o in done.outcomes:
            if not o.get("ok"):
                for line in o["error"].splitlines():
                    print(f"error: {line}", file=sys.stderr)
        built = done.built
        if built:
            print(f"register: {args.out / REGISTER_PDF}  {args.out / REGISTER_JSON}")
        n_bad = len(done.outcomes) - len(built)
        print(f"{len(built)} of {len(done.outcomes)} packages built"
              + (f"; {n_bad} not built" if n_bad else "")
              + f"; {sum(1 for o in built if o['checks_failed'])} with failing checks")
        if args.command == "demo":
            from reportgen.cli.seal import demo_seal

            demo_seal(args.out, built)
        _prune_cache(opts)
        return done.exit_code
    if not target.exists():
        raise JobError(Problem(str(target), "no such job file"))
    if executor != "local":
        raise JobError("--executor dask applies to folder builds")
    from reportgen.pipeline.plan import build_job

    plugins = load_plugins()
    opts = BuildOptions(**{**opts.__dict__, "workers": jobs, "split": True})
    result = build_job(target, plugins, opts)
    for note in result.notes:
        print(f"note: {note}", file=sys.stderr)
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


# ---------------------------------------------------------------- verify, extract, diff

def _print_outcome(o: dict[str, Any], rtol: float) -> None:
    from reportgen.cli.seal import print_shown

    if o.get("error"):
        print(f"error: {o['error']}", file=sys.stderr)
        print_shown(o)
        return
    head = f"{o['package']}: {o['label']}"
    if o.get("altered") and not o["differences"]:
        print(f"{head}: ALTERED: the results agree with a fresh rebuild, but what the"
              " package shows or its seal does not (below)")
    elif not o["differences"]:
        print(f"{head}: OK: manifest hashes match the {o['files']} embedded files; all"
              f" {o['results']} results (relative tolerance {rtol:g}) and {o['checks']}"
              " check statuses agree with a fresh rebuild")
    else:
        print(f"{head}: DIFFERS: {len(o['differences'])} differences between the embedded"
              f" results and a fresh rebuild (relative tolerance {rtol:g})")
        header = ("calc", "item", "embedded", "rebuilt", "")
        rows = [header, *o["differences"]]
        widths = [max(len(str(r[i])) for r in rows) for i in range(4)]
        for r in rows:
            print("  " + "  ".join(str(r[i]).ljust(widths[i]) for i in range(4))
                  + (f"  {r[4]}" if r[4] else ""))
    print_shown(o)
    for line in o["environment"]:
        print(f"  info: environment differs: {line}")


def pdf_files(targets: list[Path]) -> list[Path]:
    out: list[Path] = []
    for t in targets:
        if t.is_dir():
            out.extend(sorted(p for p in t.glob("*.pdf") if p.is_file()))
        elif t.exists():
            out.append(t)
        else:
            raise JobError(Problem(str(t), "no such file or folder"))
    return out


def verify_command(args: Any) -> int:
    """Verify each package (or each PDF in a folder); exit with the worst outcome."""
    from reportgen.pipeline.seal import verify_package
    from reportgen.pipeline.sets import run_tasks

    rtol = float(args.rtol)
    if not (rtol >= 0 and math.isfinite(rtol)):
        raise JobError(f"--rtol must be a finite number ≥ 0, found {args.rtol}")
    targets = list(args.packages)
    from reportgen.pipeline.commit import recover

    for folder in dict.fromkeys(t if t.is_dir() else t.parent for t in targets):
        for note in recover(folder):  # a commit a killed build left half done
            print(f"note: {note}", file=sys.stderr)
    files = pdf_files(targets)
    folder_mode = any(t.is_dir() for t in targets)
    if not files:
        raise JobError(Problem(", ".join(map(str, targets)), "no *.pdf packages found"))
    workers = args.jobs if getattr(args, "jobs", None) is not None else default_workers()
    if workers < 1:
        raise JobError("--jobs must be at least 1")
    outcomes = run_tasks(verify_package, [(str(p), rtol) for p in files], workers=workers,
                         executor=getattr(args, "executor", "local") or "local",
                         scheduler=getattr(args, "scheduler", None))
    counted = []
    for o in outcomes:
        if folder_mode and o.get("kind") == "not_package":
            # a folder also holds the set's register and other PDFs: skip, don't fail
            print(f"skipped: {o['package']}: not a reportgen package")
            continue
        _print_outcome(o, rtol)
        counted.append(o)
    if not counted:
        raise JobError(Problem(", ".join(map(str, targets)),
                               "no reportgen packages found among the PDFs"))
    if len(outcomes) > 1:
        ok = sum(1 for o in counted if o["exit_code"] == 0)
        differ = sum(1 for o in counted if o["exit_code"] == 1)
        bad = len(counted) - ok - differ
        print(f"verified {len(counted)} packages: {ok} agree, {differ} differ,"
              f" {bad} could not be verified")
    return max(int(o["exit_code"]) for o in counted)


# ---------------------------------------------------------------- extract


def extract_command(package: Path, folder: Path) -> int:
    """Write every embedded file of ``package`` into ``folder``, never outside it.

    Names are reduced to base names; a name that is empty, absolute, contains '..' or a
    control character, or collides with another, refuses the whole extraction (exit 2,
    nothing written): such a file was not made by this tool.
    """
    from reportgen.package.archive import NotAPackage, embedded_of, open_package, safe_name
    from reportgen.pipeline.commit import atomic_write

    package = Path(package)
    files = embedded_of(package)
    if not files:
        raise NotAPackage(Problem(str(package), "the PDF has no embedded files"))
    names: dict[str, str] = {}
    refused = []
    for name in files:
        base = safe_name(name)
        if not base:
            refused.append(f"{name!r} (unsafe name)")
        elif base in names:
            refused.append(f"{name!r} (same base name as {names[base]!r})")
        else:
            names[base] = name
    if refused:
        raise JobError(Problem(str(package), "refused to extract: embedded file names would"
                               f" leave {folder} or collide: " + ", ".join(refused)
                               + "; nothing was written"))
    root = folder.resolve()
    for base, name in sorted(names.items()):
        target = root / base
        if target.parent != root:  # belt and braces: safe_name already forbids this
            raise JobError(Problem(str(package), f"refused to extract {name!r}"))
        atomic_write(target, files[name])
        print(target)
    try:
        open_package(package)
    except ReportgenError as exc:
        print(f"warning: {exc}", file=sys.stderr)
    return int(ExitCode.OK)


def diff_command(old: Path, new: Path) -> int:
    """Print what changed from ``old`` to ``new``; exit 0 (2 when either is invalid)."""
    from reportgen.package.compare import (
        DIFF_KEYS,
        compare,
        envelope_lines,
        moved_text,
        num,
        raw_text,
    )
    from reportgen.package.revisions import load_side

    plugins = load_plugins()
    a, b = load_side(Path(old), plugins), load_side(Path(new), plugins)
    ch = compare(a, b)
    out = sys.stdout
    print(f"{a.label}  →  {b.label}", file=out)
    print(f"  old: {old}\n  new: {new}", file=out)
    package = [row for row in ch.package if row[0] in DIFF_KEYS]
    if package:
        print("\nPackage", file=out)
        for key, x, y in package:
            print(f"  {key:<14}{raw_text(x)} → {raw_text(y)}", file=out)
    sections = (
        ("Calcs", [f"  added    {c}" for c in ch.calcs_added]
         + [f"  removed  {c}" for c in ch.calcs_removed]),
        ("Inputs and criteria (as written; SI in brackets)", [
            f"  {kind:<8} {cid:<20} {key:<30} {raw_text(x)} → {raw_text(y)}"
            + (f"  [{num(xs) if xs is not None else '-'} → {num(ys) if ys is not None else '-'}]"
               if xs != ys else "")
            for cid, key, kind, x, y, xs, ys in ch.inputs]),
        ("Results that moved (SI)", [
            f"  {cid:<20} {key:<30} {num(x) if x is not None else '-':>12} →"
            f" {num(y) if y is not None else '-':>12} {unit if unit != '1' else '':<8}"
            f" {moved_text(x, y, r)}" for cid, key, x, y, unit, r in ch.results]),
        ("Check statuses that flipped", [
            f"  {cid:<20} {key:<30} {x.upper()} → {y.upper()}" for cid, key, x, y in ch.checks]),
        ("Operating envelopes", [f"  {line}" for line in envelope_lines(ch)]),
    )
    for title, rows in sections:
        print(f"\n{title}", file=out)
        print("\n".join(rows) if rows else "  none", file=out)
    if a.si_inputs is None or b.si_inputs is None:
        print("\nnote: SI input values are unavailable for a package whose calc types are not"
              " installed here; raw job values are compared", file=out)
    return int(ExitCode.OK)
