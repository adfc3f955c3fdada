"""Verify one package: open it (its manifest hashes must hold), rebuild its embedded job
here, and compare the rebuilt results with the embedded ones; report which software
differs from the build's (the manifest and the embedded environment lock).
"""

from __future__ import annotations

import platform
import tempfile
from pathlib import Path
from typing import Any

from reportgen.errors import ExitCode, ReportgenError
from reportgen.package.archive import (
    LIBRARIES,
    LOCK_NAME,
    AlteredPackage,
    NotAPackage,
    environment_lock,
    library_version,
    load_embedded_job,
    normalized_name,
    open_package,
)
from reportgen.package.compare import verify_rows


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
    from reportgen._version import __version__

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
    from reportgen.calc.plugin_set import load_plugins
    from reportgen.document.compute import compute_document
    from reportgen.document.results import results_data
    from reportgen.errors import error_text

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
    diffs = verify_rows(pkg.results, rebuilt, rtol)
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
