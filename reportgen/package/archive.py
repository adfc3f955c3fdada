"""The PDF as its own archive: embedded job file, results.json and manifest.json.

This module decides what goes into a package's attachments and reads them back.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import json
import mimetypes
import os
import platform
import re
import sys
import zlib
from importlib import metadata
from pathlib import Path
from typing import TYPE_CHECKING, Any

from reportgen.errors import JobError, Problem
from reportgen.model import Document

if TYPE_CHECKING:
    from reportgen.job.load import Job
    from reportgen.render.pdf import EmbeddedFile

MANIFEST_FORMAT = "reportgen.manifest/1"
JOB_NAME = "job.toml"
RESULTS_NAME = "results.json"
MANIFEST_NAME = "manifest.json"
LOCK_NAME = "environment.lock"
#: Reading a package back never inflates more than this: one embedded file, all of them
#: together, and how many. A package holds its job (1 MB at most), results, manifest, lock
#: and up to 20 attachments of 25 MB in total, well inside these.
MAX_EMBEDDED_BYTES = 64 * 1024 * 1024
MAX_EMBEDDED_TOTAL = 128 * 1024 * 1024
MAX_EMBEDDED_FILES = 32
LIBRARIES = ("numpy", "scipy", "matplotlib", "pint", "jinja2", "weasyprint", "pluggy",
             "ziamath")


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def library_version(dist: str) -> str:
    try:
        return metadata.version(dist)
    except metadata.PackageNotFoundError:
        return "not installed"


def normalized_name(name: str) -> str:
    return re.sub(r"[-_.]+", "-", name).lower()


def _installed_from_index(dist: metadata.Distribution) -> bool:
    """False for a distribution installed from a local folder or file (PEP 610)."""
    try:
        direct = json.loads(dist.read_text("direct_url.json") or "{}")
    except (ValueError, OSError):
        return True
    return not str(direct.get("url", "")).startswith("file:")


#: Left out of the lock, as pip freeze leaves them out: a new venv brings its own.
INSTALLER_TOOLS = frozenset({"pip", "setuptools", "wheel", "distribute"})


@functools.lru_cache(maxsize=1)
def environment_lock() -> bytes:
    """A pip requirements file of every distribution installed here, with exact versions.

    Deterministic for one environment: sorted, no paths, no clock, nothing of the output
    folder. The working folder is left out of the search (``python -m`` puts it on the
    path, and a source checkout there holds its own egg-info). reportgen itself and
    anything installed from a local folder are comment lines: pip must not ask a package
    index for an in-house name; they are installed from their own source or wheel.
    """
    from reportgen._version import __version__

    cwd = os.getcwd()
    path = [p for p in sys.path if p and os.path.abspath(p) != cwd]
    found: dict[str, tuple[str, str, bool]] = {}
    for dist in metadata.distributions(path=path):
        name = dist.metadata["Name"] if dist.metadata else None
        if not name or not dist.version:
            continue
        if normalized_name(name) in INSTALLER_TOOLS:
            continue
        # the first one on the path is the one imported, as pip freeze does
        found.setdefault(normalized_name(name), (name, dist.version, _installed_from_index(dist)))
    lines = [
        "# reportgen environment lock: the Python distributions installed when this"
        " package was built.",
        f"# Python {platform.python_version()} ({platform.python_implementation()}),"
        f" {platform.platform(terse=True)}",
        f"# reportgen=={__version__} is installed from reportgen's own source or wheel of"
        " that version, not from a package index:",
        f"#   pip install -r environment.lock ./reportgen-{__version__}",
    ]
    for key in sorted(found):
        name, version, from_index = found[key]
        if key == "reportgen" or not from_index:
            lines.append(f"# {name}=={version}  (installed from a local source)")
        else:
            lines.append(f"{name}=={version}")
    return ("\n".join(lines) + "\n").encode("utf-8")


def manifest_data(doc: Document, job: Job, results: bytes,
                  templates: str = "built-in") -> dict[str, Any]:
    """``templates``: "built-in", or "firm" when a firm's template folder (not embedded)
    laid the pages out; verify can rebuild the pages only from the built-in ones."""
    from reportgen._version import __version__

    plugins = {}
    for s in doc.sections:
        plugins[s.plugin] = {"package": s.plugin_package, "version": s.plugin_version}
    return {
        "format": MANIFEST_FORMAT,
        "job_file": {"name": JOB_NAME, "original_name": job.path.name,
                     "sha256": sha256(job.source)},
        "results": {"name": RESULTS_NAME, "sha256": sha256(results)},
        "environment_lock": {"name": LOCK_NAME, "sha256": sha256(environment_lock())},
        "attachments": [{"name": a.name, "path": a.path, "sha256": sha256(a.data),
                         "size": len(a.data)} for a in sorted(job.attachments,
                                                               key=lambda a: a.name)],
        "build_date": job.info.date,
        "reportgen": __version__,
        "python": platform.python_version(),
        "platform": platform.platform(terse=True),
        "plugins": dict(sorted(plugins.items())),
        "libraries": {name: library_version(name) for name in LIBRARIES},
        "templates": templates,
    }


def manifest_bytes(doc: Document, job: Job, results: bytes,
                   templates: str = "built-in") -> bytes:
    return (json.dumps(manifest_data(doc, job, results, templates), indent=2,
                       sort_keys=True) + "\n").encode("utf-8")


def embedded_files(job: Job, results: bytes, manifest: bytes) -> list[EmbeddedFile]:
    from reportgen.render.pdf import EmbeddedFile

    # sorted by name: PDF name trees must be sorted, and WeasyPrint keeps the given order
    files = [
        EmbeddedFile(name=JOB_NAME, data=job.source, mime="application/toml",
                     description=f"Job file {job.path.name}, byte for byte"),
        EmbeddedFile(name=RESULTS_NAME, data=results, mime="application/json",
                     description="Results and check statuses (SI)", relationship="Data"),
        EmbeddedFile(name=MANIFEST_NAME, data=manifest, mime="application/json",
                     description="Hashes and software versions of this build",
                     relationship="Supplement"),
        EmbeddedFile(name=LOCK_NAME, data=environment_lock(), mime="text/plain",
                     description="The Python distributions installed at this build"
                                 " (pip requirements)",
                     relationship="Supplement"),
    ]
    for a in job.attachments:
        files.append(EmbeddedFile(
            name=a.name, data=a.data, relationship="Data",
            mime=mimetypes.guess_type(a.name, strict=False)[0] or "application/octet-stream",
            description=f"File {a.path} from the job folder, listed in [package] attachments"))
    return sorted(files, key=lambda f: f.name)


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


def _refuse(path: Path, message: str) -> NotAPackage:
    return NotAPackage(Problem(str(path), f"refused to read: {message}"))


def _decoded(stream: Any, path: Path, name: str, budget: int) -> bytes:
    """The embedded file's data, inflated by us with a cap; never more than ``budget``.

    qpdf would inflate the whole stream into memory before we could look at it, so the
    raw (encoded) bytes are read, which cannot exceed the PDF's own size, and inflated
    here. Only FlateDecode or no filter: this tool writes nothing else.
    """
    import pikepdf

    cap = min(MAX_EMBEDDED_BYTES, budget)
    params = stream.get("/Params")
    declared = params.get("/Size") if isinstance(params, pikepdf.Dictionary) else None
    if isinstance(declared, int) and declared > MAX_EMBEDDED_BYTES:
        raise _refuse(path, f"embedded file {name!r} declares {int(declared)} bytes; the"
                            f" limit is {MAX_EMBEDDED_BYTES} bytes")
    filters = stream.get("/Filter")
    if filters is None:
        names: list[str] = []
    elif isinstance(filters, pikepdf.Array):
        names = [str(f) for f in filters]
    else:
        names = [str(filters)]
    if names not in ([], ["/FlateDecode"]) or (names and stream.get("/DecodeParms")):
        raise _refuse(path, f"embedded file {name!r} is encoded with"
                            f" {' '.join(names) or 'parameters'}; packages use FlateDecode only")
    raw = stream.read_raw_bytes()
    if not names:
        data = raw
    else:
        inflater = zlib.decompressobj()
        chunks: list[bytes] = []
        size = 0
        pending = raw
        try:
            while pending and not inflater.eof:
                # at most cap + 1 bytes leave zlib in all: one more than allowed tells us
                chunk = inflater.decompress(pending, cap + 1 - size)
                chunks.append(chunk)
                size += len(chunk)
                if size > cap:
                    break
                pending = inflater.unconsumed_tail
            if size <= cap and not inflater.eof:
                chunk = inflater.flush()
                size += len(chunk)
                chunks.append(chunk)
        except zlib.error as exc:
            raise NotAPackage(Problem(str(path), f"embedded file {name!r} is damaged: {exc}")
                              ) from None
        data = b"".join(chunks)
    if len(data) > cap:
        if cap < MAX_EMBEDDED_BYTES:
            raise _refuse(path, f"the embedded files inflate to more than"
                                f" {MAX_EMBEDDED_TOTAL} bytes in all (at {name!r})")
        raise _refuse(path, f"embedded file {name!r} inflates to more than"
                            f" {MAX_EMBEDDED_BYTES} bytes")
    return data


def embedded_of(path: Path) -> dict[str, bytes]:
    """Every embedded file of the PDF at ``path``, by name. NotAPackage if not a PDF.

    Bounded: more than MAX_EMBEDDED_FILES files, one file inflating beyond
    MAX_EMBEDDED_BYTES or all beyond MAX_EMBEDDED_TOTAL refuse the PDF (NotAPackage).
    """
    import pikepdf

    try:
        with pikepdf.open(path) as pdf:
            specs = pdf.attachments
            if len(specs) > MAX_EMBEDDED_FILES:
                raise _refuse(path, f"the PDF embeds {len(specs)} files; the limit is"
                                    f" {MAX_EMBEDDED_FILES}")
            out: dict[str, bytes] = {}
            budget = MAX_EMBEDDED_TOTAL
            for name, spec in specs.items():
                data = _decoded(spec.get_file().obj, path, str(name), budget)
                budget -= len(data)
                out[str(name)] = data
            return out
    except FileNotFoundError:
        raise NotAPackage(Problem(str(path), "no such file")) from None
    except (pikepdf.PdfError, OSError, ValueError, KeyError, AttributeError) as exc:
        raise NotAPackage(Problem(str(path), f"not a PDF file, or damaged beyond reading:"
                                  f" {exc}")) from None


def _page_attachments_of(path: Path) -> list[str]:
    import pikepdf

    from reportgen.render.selfcheck import page_attachments

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
    if "environment_lock" in manifest:  # packages from before the lock file have none
        expected[LOCK_NAME] = listed_hash(manifest["environment_lock"])
    attachments = manifest.get("attachments", [])
    if not isinstance(attachments, list) or not all(
            isinstance(a, dict) and safe_name(str(a.get("name", ""))) == a.get("name")
            and safe_relative(str(a.get("path", "")))
            and a["name"] not in (JOB_NAME, RESULTS_NAME, MANIFEST_NAME, LOCK_NAME)
            for a in attachments):
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
    from reportgen.job.load import parse_job_toml

    try:
        job_raw = parse_job_toml(where, files[JOB_NAME])
    except JobError:
        job_raw = {}  # the rebuild reports what is wrong with it
    return Package(path=path, files=files, manifest=manifest, results=results,
                   job_source=files[JOB_NAME], job_raw=job_raw)


def load_embedded_job(pkg: Package, plugins: Any, folder: Path) -> Job:
    """Write the package's job and attachments into ``folder`` and load the job from there.

    Loaded as an archived job: a previous package or template folder it names need not
    exist. Raises JobError when the job no longer loads with the installed plugins.
    """
    from reportgen.job.load import load_job

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
