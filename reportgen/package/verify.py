"""`verify`: rebuild a package's results from its embedded job and compare; `extract`.

A package is trusted only as far as its manifest hashes hold; extraction never writes
outside the folder it is given, whatever names the PDF carries.
"""

from __future__ import annotations

import math
import platform
import sys
import tempfile
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, JobError, Problem, ReportgenError
from reportgen.package.archive import (
    LIBRARIES,
    LOCK_NAME,
    AlteredPackage,
    NotAPackage,
    embedded_of,
    environment_lock,
    library_version,
    load_embedded_job,
    normalized_name,
    open_package,
    safe_name,
)

# ---------------------------------------------------------------- comparing results


def _close(a: Any, b: Any, rtol: float) -> bool:
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(
            a, bool) and not isinstance(b, bool):
        return math.isclose(a, b, rel_tol=rtol, abs_tol=0.0)
    return a == b


def _qv(q: Any) -> Any:
    return q.get("value") if isinstance(q, dict) else q


def compare_results(embedded: dict[str, Any], rebuilt: dict[str, Any],
                    rtol: float) -> list[tuple[str, str, str, str, str]]:
    """Rows (calc, item, embedded, rebuilt, note) for every result or check that differs."""
    rows: list[tuple[str, str, str, str, str]] = []

    def fmt(v: Any) -> str:
        if v is None:
            return "-"
        return f"{v:.10g}" if isinstance(v, float) else str(v)

    def rel(a: Any, b: Any) -> str:
        if isinstance(a, (int, float)) and isinstance(b, (int, float)) and a:
            return f"relative change {(b - a) / abs(a):+.2e}"
        return ""

    e_pkg, r_pkg = embedded.get("package", {}), rebuilt.get("package", {})
    for key in ("status", "review_state", "checks_total", "checks_failed"):
        if e_pkg.get(key) != r_pkg.get(key):
            rows.append(("package", key, fmt(e_pkg.get(key)), fmt(r_pkg.get(key)), ""))
    e_calcs = {c.get("id"): c for c in embedded.get("calcs", [])}
    r_calcs = {c.get("id"): c for c in rebuilt.get("calcs", [])}
    for cid in dict.fromkeys([*e_calcs, *r_calcs]):
        ec, rc = e_calcs.get(cid), r_calcs.get(cid)
        if ec is None or rc is None:
            rows.append((str(cid), "(calc)", "present" if ec else "absent",
                         "present" if rc else "absent", ""))
            continue
        e_res, r_res = ec.get("results", {}), rc.get("results", {})
        for key in dict.fromkeys([*e_res, *r_res]):
            a, b = e_res.get(key), r_res.get(key)
            if a is None or b is None:
                rows.append((cid, f"result {key}", fmt(_qv(a)), fmt(_qv(b)),
                             "missing from the rebuild" if b is None else "new in the rebuild"))
                continue
            if a.get("unit") != b.get("unit"):
                rows.append((cid, f"result {key} unit", fmt(a.get("unit")), fmt(b.get("unit")),
                             ""))
            if not _close(a.get("value"), b.get("value"), rtol):
                rows.append((cid, f"result {key}", fmt(a.get("value")), fmt(b.get("value")),
                             rel(a.get("value"), b.get("value"))))
        e_chk = {c.get("id"): c for c in ec.get("checks", [])}
        r_chk = {c.get("id"): c for c in rc.get("checks", [])}
        for key in dict.fromkeys([*e_chk, *r_chk]):
            a, b = e_chk.get(key), r_chk.get(key)
            if a is None or b is None:
                rows.append((cid, f"check {key}", a.get("status") if a else "absent",
                             b.get("status") if b else "absent", ""))
                continue
            if a.get("status") != b.get("status"):
                rows.append((cid, f"check {key} status", str(a.get("status")).upper(),
                             str(b.get("status")).upper(), "status flipped"))
            for part in ("value", "limit"):
                va, vb = _qv(a.get(part)), _qv(b.get(part))
                if not _close(va, vb, rtol):
                    rows.append((cid, f"check {key} {part}", fmt(va), fmt(vb), rel(va, vb)))
        e_ver = [v.get("agrees") for v in ec.get("verification") or []]
        r_ver = [v.get("agrees") for v in rc.get("verification") or []]
        if e_ver != r_ver:
            rows.append((cid, "independent verification", fmt(e_ver), fmt(r_ver), ""))
    return rows


def lock_versions(lock: bytes) -> dict[str, str]:
    """{normalized name: version} of the pinned lines of an environment lock file."""
    out = {}
    for line in lock.decode("utf-8", "replace").splitlines():
        line = line.strip()
        if line.startswith("#") and "==" in line and "(installed from" in line:
            line = line.lstrip("#").strip().split()[0]  # reportgen or a local source
        name, sep, version = line.partition("==")
        if sep and name and not name.startswith("#"):
            out[normalized_name(name)] = version.strip()
    return out


def environment_differences(manifest: dict[str, Any], rebuilt: dict[str, Any],
                            lock: bytes | None = None) -> list[str]:
    """Software that differs between the build recorded in the package and this machine.

    The manifest names the main libraries; the lock file, when the package has one, every
    distribution that was installed.
    """
    from reportgen import __version__

    out = []
    now = {"python": platform.python_version(), "reportgen": __version__,
           "platform": platform.platform(terse=True)}
    for key, value in now.items():
        if manifest.get(key) != value:
            out.append(f"{key}: {manifest.get(key, 'not recorded')} at build, {value} here")
    libs = manifest.get("libraries", {}) or {}
    for name in sorted(set(libs) | set(LIBRARIES)):
        here = library_version(name)
        if libs.get(name) != here:
            out.append(f"{name}: {libs.get(name, 'not recorded')} at build, {here} here")
    built = manifest.get("plugins", {}) or {}
    current = {c.get("plugin"): c for c in rebuilt.get("calcs", [])}
    for name in sorted(set(built) | set(current)):
        b = built.get(name) or {}
        c = current.get(name) or {}
        then = f"{b.get('version', '?')} ({b.get('package', '?')})" if b else "not recorded"
        here = (f"{c.get('plugin_version', '?')} ({c.get('plugin_package', '?')})" if c
                else "not used")
        if then != here:
            out.append(f"calc type {name}: {then} at build, {here} here")
    if lock is not None:
        said = {normalized_name(n) for n in set(libs) | set(LIBRARIES)} | {"reportgen"}
        pinned = lock_versions(lock)
        here_all = lock_versions(environment_lock())
        for name in sorted(set(pinned) | set(here_all)):
            if name in said or pinned.get(name) == here_all.get(name):
                continue
            out.append(f"{name}: {pinned.get(name, 'not installed')} at build,"
                       f" {here_all.get(name, 'not installed')} here")
    return out


# ---------------------------------------------------------------- one package


def verify_one(path: str, rtol: float) -> dict[str, Any]:
    """Verify one package in this process; never raises (the outcome is data)."""
    from reportgen.cli.commands import error_text, load_plugins
    from reportgen.document.compute import compute_document
    from reportgen.document.results import results_data

    out: dict[str, Any] = {"package": path, "differences": [], "environment": [],
                           "kind": "package"}
    try:
        pkg = open_package(path)
        plugins = load_plugins()
        with tempfile.TemporaryDirectory(prefix="reportgen-verify-") as tmp:
            job = load_embedded_job(pkg, plugins, Path(tmp))
            rebuilt = results_data(compute_document(job, plugins))
    except NotAPackage as exc:
        return {**out, "kind": "not_package", "exit_code": int(exc.exit_code),
                "error": error_text(exc)}
    except AlteredPackage as exc:
        return {**out, "kind": "altered", "exit_code": int(exc.exit_code),
                "error": error_text(exc)}
    except ReportgenError as exc:
        return {**out, "exit_code": int(exc.exit_code),
                "error": "cannot rebuild the embedded job here: " + error_text(exc)}
    except Exception as exc:  # a bug while rebuilding must not stop a folder's run
        return {**out, "exit_code": int(ExitCode.FAILURE),
                "error": "cannot rebuild the embedded job here: " + error_text(exc)}
    diffs = compare_results(pkg.results, rebuilt, rtol)
    n_results = sum(len(c.get("results", {})) for c in rebuilt.get("calcs", []))
    n_checks = sum(len(c.get("checks", [])) for c in rebuilt.get("calcs", []))
    files = len(pkg.files)
    return {**out, "exit_code": int(ExitCode.CHECKS_FAIL if diffs else ExitCode.OK),
            "differences": diffs,
            "environment": environment_differences(pkg.manifest, rebuilt,
                                                   pkg.files.get(LOCK_NAME)),
            "results": n_results, "checks": n_checks, "files": files,
            "label": f"{pkg.results.get('package', {}).get('calc_number', '?')} revision"
                     f" {pkg.results.get('package', {}).get('revision', '?')}"}


def _print_outcome(o: dict[str, Any], rtol: float) -> None:
    if o.get("error"):
        print(f"error: {o['error']}", file=sys.stderr)
        return
    head = f"{o['package']}: {o['label']}"
    if not o["differences"]:
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
    for line in o["environment"]:
        print(f"  info: environment differs: {line}")


def package_files(targets: list[Path]) -> list[Path]:
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
    from reportgen.cli import default_workers
    from reportgen.pipeline.sets import run_tasks

    rtol = float(args.rtol)
    if not (rtol >= 0 and math.isfinite(rtol)):
        raise JobError(f"--rtol must be a finite number ≥ 0, found {args.rtol}")
    targets = list(args.packages)
    from reportgen.pipeline.commit import recover

    for folder in dict.fromkeys(t if t.is_dir() else t.parent for t in targets):
        for note in recover(folder):  # a commit a killed build left half done
            print(f"note: {note}", file=sys.stderr)
    files = package_files(targets)
    folder_mode = any(t.is_dir() for t in targets)
    if not files:
        raise JobError(Problem(", ".join(map(str, targets)), "no *.pdf packages found"))
    workers = args.jobs if getattr(args, "jobs", None) is not None else default_workers()
    if workers < 1:
        raise JobError("--jobs must be at least 1")
    outcomes = run_tasks(verify_one, [(str(p), rtol) for p in files], workers=workers,
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
    from reportgen.pipeline.plan import atomic_write

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
