"""The PDF as its own archive: embedded job file, results.json and manifest.json.

This module decides what goes into a package's attachments and reads them back.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import mimetypes
import platform
import tomllib
from importlib import metadata
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .errors import JobError, Problem
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


def library_version(dist: str) -> str:
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
        "attachments": [{"name": a.name, "path": a.path, "sha256": sha256(a.data),
                         "size": len(a.data)} for a in sorted(job.attachments,
                                                               key=lambda a: a.name)],
        "build_date": job.info.date,
        "reportgen": __version__,
        "python": platform.python_version(),
        "platform": platform.platform(terse=True),
        "plugins": dict(sorted(plugins.items())),
        "libraries": {name: library_version(name) for name in LIBRARIES},
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
    for a in job.attachments:
        files.append(EmbeddedFile(
            name=a.name, data=a.data, relationship="Data",
            mime=mimetypes.guess_type(a.name, strict=False)[0] or "application/octet-stream",
            description=f"File {a.path} from the job folder, listed in [package] attachments"))
    return sorted(files, key=lambda f: f.name)


def changes_since(doc: Document, job: Job) -> Document:
    """Add a "Changes since revision X" section from the previous package's embedded files.

    The previous revision's name goes into ``doc.extra`` as ``previous_revision`` for the
    section title; the lines compare its embedded job and results with this build.
    """
    from .build import with_changes
    from .diff import describe_changes, read_package_files
    from .results import results_data

    assert job.previous_package is not None
    try:
        previous = read_package_files(job.previous_package)
    except JobError as exc:
        raise JobError([Problem(str(job.path), f"previous package {pr.file}: {pr.message}",
                                field="package.previous_package")
                        for pr in exc.problems]) from None
    lines = describe_changes(previous.results, results_data(doc),
                             previous_job=previous.job_raw, new_job=dict(job.raw))
    prev_pkg = previous.results.get("package", {})
    if prev_pkg.get("calc_number") != job.info.calc_number:
        lines.insert(0, f"The previous package is calc {prev_pkg.get('calc_number', '?')},"
                        f" not {job.info.calc_number}: check [package] previous_package.")
    label = str(prev_pkg.get("revision", "")) or "?"
    if prev_pkg.get("date"):
        label += f" ({prev_pkg['date']})"
    doc = with_changes(doc, tuple(lines) or ("No inputs, results or check statuses changed.",))
    extra = tuple(kv for kv in doc.extra if kv[0] != "previous_revision")
    return dataclasses.replace(doc, extra=extra + (("previous_revision", label),))


# ---------------------------------------------------------------- reading a package back

class NotAPackage(JobError):
    """The file is not a package of this tool (no PDF, or no manifest/job/results)."""


class AlteredPackage(JobError):
    """An embedded file does not match the manifest's hash: the package was altered."""


@dataclasses.dataclass(frozen=True, kw_only=True)
class Package:
    path: Path
    files: dict[str, bytes]  # every embedded file, by its name in the PDF
    manifest: dict[str, Any]
    results: dict[str, Any]
    job_source: bytes
    job_raw: dict[str, Any]  # the parsed job TOML ({} if it no longer parses)

    @property
    def job_name(self) -> str:
        """The job file's original name, if it is a safe base name; else job.toml."""
        name = str(self.manifest.get("job_file", {}).get("original_name", ""))
        return name if safe_name(name) == name and name.endswith(".toml") else JOB_NAME

    def attachment_paths(self) -> list[tuple[str, str]]:
        """(embedded name, relative path in the job folder) of each listed attachment."""
        return [(a["name"], a["path"]) for a in self.manifest.get("attachments", [])]


def safe_name(name: str) -> str:
    """``name`` reduced to a base name that cannot leave a folder; '' when it is unsafe.

    Refused outright: empty names, NUL or other control characters, absolute paths
    (POSIX or Windows), and any '..' component. Otherwise only the last component is kept.
    """
    if not isinstance(name, str) or not name or any(ord(ch) < 32 for ch in name):
        return ""
    parts = name.replace("\\", "/").split("/")
    if name.startswith(("/", "\\")) or ":" in name or ".." in parts:
        return ""
    base = parts[-1]
    return "" if base in ("", ".", "..") else base


def safe_relative(path: str) -> tuple[str, ...]:
    """The components of a relative path that stays inside its folder; () when unsafe."""
    if not isinstance(path, str) or not path or any(ord(ch) < 32 for ch in path):
        return ()
    parts = tuple(path.replace("\\", "/").split("/"))
    if path.startswith(("/", "\\")) or ":" in path or any(p in ("", ".", "..") for p in parts):
        return ()
    return parts


def embedded_of(path: Path) -> dict[str, bytes]:
    """Every embedded file of the PDF at ``path``, by name. NotAPackage if not a PDF."""
    import pikepdf

    try:
        with pikepdf.open(path) as pdf:
            return {str(name): spec.get_file().read_bytes()
                    for name, spec in pdf.attachments.items()}
    except FileNotFoundError:
        raise NotAPackage(Problem(str(path), "no such file")) from None
    except (pikepdf.PdfError, OSError, ValueError) as exc:
        raise NotAPackage(Problem(str(path), f"not a PDF file, or damaged beyond reading:"
                                  f" {exc}")) from None


def page_attachments(pdf: Any) -> list[str]:
    """Files attached to pages of an open ``pikepdf.Pdf`` (annotations), as "NAME (page N)".

    They are embedded files too, outside the document's list of attachments; a package
    of this tool has none.
    """
    found = []
    for number, page in enumerate(pdf.pages, start=1):
        for annot in page.obj.get("/Annots", ()):
            if annot.get("/Subtype") == "/FileAttachment":
                spec = annot.get("/FS", {})
                name = spec.get("/UF", spec.get("/F", "?")) if hasattr(spec, "get") else "?"
                found.append(f"{name} (page {number})")
    return found


def _page_attachments_of(path: Path) -> list[str]:
    import pikepdf

    with pikepdf.open(path) as pdf:
        return page_attachments(pdf)


def open_package(path: Path | str) -> Package:
    """Read a package's embedded files and check them against its manifest.

    Raises NotAPackage when the PDF lacks the manifest, job or results of this tool, and
    AlteredPackage when an embedded file's SHA-256 differs from the manifest's.
    """
    path = Path(path)
    files = embedded_of(path)
    where = str(path)
    missing = [n for n in (MANIFEST_NAME, JOB_NAME, RESULTS_NAME) if n not in files]
    if missing:
        raise NotAPackage(Problem(where, "not a reportgen package: it has no embedded "
                                  + ", ".join(missing)))
    try:
        manifest = json.loads(files[MANIFEST_NAME])
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise NotAPackage(Problem(where, f"not a reportgen package: {MANIFEST_NAME} is not"
                                  f" JSON ({exc})")) from None
    if not isinstance(manifest, dict) or not str(manifest.get("format", "")).startswith(
            MANIFEST_FORMAT.split("/")[0] + "/"):
        raise NotAPackage(Problem(where, f"not a reportgen package: {MANIFEST_NAME} has no"
                                  f" '{MANIFEST_FORMAT}' format tag"))
    problems = []

    def listed_hash(entry: Any) -> str:
        return str(entry.get("sha256", "")) if isinstance(entry, dict) else ""

    expected = {JOB_NAME: listed_hash(manifest.get("job_file")),
                RESULTS_NAME: listed_hash(manifest.get("results"))}
    attachments = manifest.get("attachments", [])
    if not isinstance(attachments, list) or not all(
            isinstance(a, dict) and safe_name(str(a.get("name", ""))) == a.get("name")
            and safe_relative(str(a.get("path", "")))
            and a["name"] not in (JOB_NAME, RESULTS_NAME, MANIFEST_NAME) for a in attachments):
        raise AlteredPackage(Problem(where, f"{MANIFEST_NAME} lists attachments with unsafe"
                                     " or missing names"))
    for a in attachments:
        expected[a["name"]] = listed_hash(a)
    for name, digest in expected.items():
        if name not in files:
            problems.append(f"{name} is listed in the manifest but not embedded")
        elif sha256(files[name]) != digest:
            problems.append(f"{name} does not match its SHA-256 in the manifest (embedded"
                            f" {sha256(files[name])[:12]}…, manifest {digest[:12] or 'none'}…)")
    for name in sorted(set(files) - set(expected) - {MANIFEST_NAME}):
        problems.append(f"embedded file {name!r} is not listed in the manifest")
    for name in _page_attachments_of(path):
        problems.append(f"file {name} is attached to a page and not listed in the manifest")
    if problems:
        raise AlteredPackage(Problem(where, "embedded files were altered after the build: "
                                     + "; ".join(problems)))
    try:
        results = json.loads(files[RESULTS_NAME])
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise NotAPackage(Problem(where, f"{RESULTS_NAME} is not JSON ({exc})")) from None
    if not isinstance(results, dict) or not str(results.get("format", "")).startswith(
            "reportgen.results/"):
        raise NotAPackage(Problem(where, f"{RESULTS_NAME} is not a reportgen results file"))
    try:
        job_raw = tomllib.loads(files[JOB_NAME].decode("utf-8"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError):
        job_raw = {}
    return Package(path=path, files=files, manifest=manifest, results=results,
                   job_source=files[JOB_NAME], job_raw=job_raw)


def load_embedded_job(pkg: Package, plugins: Any, folder: Path) -> Job:
    """Write the package's job and attachments into ``folder`` and load the job from there.

    Loaded as an archived job: a previous package or template folder it names need not
    exist. Raises JobError when the job no longer loads with the installed plugins.
    """
    from .jobfile import load_job

    folder = folder.resolve()
    for name, rel in pkg.attachment_paths():
        target = folder.joinpath(*safe_relative(rel))
        # open_package vetted the path; re-check after joining, as a second lock
        if not target.resolve().is_relative_to(folder):
            raise AlteredPackage(Problem(str(pkg.path), f"attachment path {rel!r} leaves"
                                         " the folder"))
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_bytes(pkg.files[name])
    job_path = folder / pkg.job_name
    job_path.write_bytes(pkg.job_source)
    try:
        return load_job(job_path, plugins, source=pkg.job_source, archived=True)
    except JobError as exc:
        # name the package, not the temporary folder the job was unpacked into
        label = f"{pkg.path} (embedded {pkg.job_name})"
        raise JobError([dataclasses.replace(pr, file=label) for pr in exc.problems]) from None
