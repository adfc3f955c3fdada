"""The PDF as its own archive: embedded job file, results.json and manifest.json.

This module decides what goes into a package's attachments and reads them back.
"""

from __future__ import annotations

import hashlib
import json
import platform
from importlib import metadata
from typing import TYPE_CHECKING, Any

from .model import Document

if TYPE_CHECKING:
    from .jobfile import Job
    from .render.pdf import EmbeddedFile

MANIFEST_FORMAT = "reportgen.manifest/1"
JOB_NAME = "job.toml"
RESULTS_NAME = "results.json"
MANIFEST_NAME = "manifest.json"
LIBRARIES = ("numpy", "scipy", "matplotlib", "pint", "jinja2", "weasyprint", "pluggy",
             "ziamath")


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _version(dist: str) -> str:
    try:
        return metadata.version(dist)
    except metadata.PackageNotFoundError:
        return "not installed"


def manifest_data(doc: Document, job: Job, results: bytes) -> dict[str, Any]:
    from . import __version__

    plugins = {}
    for s in doc.sections:
        plugins[s.plugin] = {"package": s.plugin_package, "version": s.plugin_version}
    return {
        "format": MANIFEST_FORMAT,
        "job_file": {"name": JOB_NAME, "original_name": job.path.name,
                     "sha256": sha256(job.source)},
        "results": {"name": RESULTS_NAME, "sha256": sha256(results)},
        "build_date": job.info.date,
        "reportgen": __version__,
        "python": platform.python_version(),
        "platform": platform.platform(terse=True),
        "plugins": dict(sorted(plugins.items())),
        "libraries": {name: _version(name) for name in LIBRARIES},
    }


def manifest_bytes(doc: Document, job: Job, results: bytes) -> bytes:
    return (json.dumps(manifest_data(doc, job, results), indent=2, sort_keys=True) + "\n"
            ).encode("utf-8")


def embedded_files(job: Job, results: bytes, manifest: bytes) -> list[EmbeddedFile]:
    from .render.pdf import EmbeddedFile

    # sorted by name: PDF name trees must be sorted, and WeasyPrint keeps the given order
    files = [
        EmbeddedFile(name=JOB_NAME, data=job.source, mime="application/toml",
                     description=f"Job file {job.path.name}, byte for byte"),
        EmbeddedFile(name=RESULTS_NAME, data=results, mime="application/json",
                     description="Results and check statuses (SI)", relationship="Data"),
        EmbeddedFile(name=MANIFEST_NAME, data=manifest, mime="application/json",
                     description="Hashes and software versions of this build",
                     relationship="Supplement"),
    ]
    return sorted(files, key=lambda f: f.name)


def changes_since(doc: Document, job: Job) -> Document:
    """Add a "Changes since revision X" section from the previous package's results."""
    from .diff import describe_changes, read_package

    previous = read_package(job.previous_package)
    from .build import with_changes
    from .results import results_data

    return with_changes(doc, tuple(describe_changes(previous, results_data(doc))))
