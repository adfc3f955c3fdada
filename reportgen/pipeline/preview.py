"""The live preview's build: a job file to the package's HTML, computed and rendered
in this process with no layout, and the files whose change makes it stale.

The same steps as the package's front half (load, compute, transforms, changes, HTML
through the same templates), so the preview shows the PDF's numbers; the PDF's layout,
embedding and self-check are left out. Drawn figures and equations are kept in a store
the caller owns (a temporary folder), so an edit redraws only what it changed.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from reportgen.calc.plugin_set import PluginSet
from reportgen.document.compute import compute_document
from reportgen.document.verification import VerificationCache
from reportgen.job.load import Job, load_job
from reportgen.model import Document
from reportgen.package.revisions import changes_since
from reportgen.render.assets import AssetJob, asset_store, draw, drawn_assets
from reportgen.render.html import render_html
from reportgen.render.logo import firm_logo, jinja_hook

__all__ = ["ASSET_PATH", "Preview", "draw_later", "make_preview", "named_files"]

#: Where the page finds its figures, equations and math font: ``/asset/<key>``.
ASSET_PATH = "/asset/"


@dataclass(frozen=True)
class Preview:
    """One good build: the document, its HTML, the drawn assets by key and those still
    to draw (:func:`draw_later` draws one when the page asks for it)."""

    job: Job
    doc: Document
    html: str
    payloads: dict[str, bytes] = field(repr=False)
    mimes: dict[str, str] = field(repr=False)
    later: dict[str, AssetJob] = field(repr=False, default_factory=dict)


def make_preview(path: Path, plugins: PluginSet, work_dir: Path) -> Preview:
    """Build ``path`` to HTML. Raises what a build raises (JobError, PluginError, ...)
    before anything is shown; ``work_dir`` keeps the drawings and verification rows."""
    job = load_job(path, plugins)
    doc = compute_document(job, plugins, verify=VerificationCache(work_dir))
    if job.previous_package is not None:
        doc = changes_since(doc, job)
    mimes: dict[str, str] = {}

    def url_for(payload: bytes | None, key: str, mime: str) -> str:
        mimes[key] = mime
        return ASSET_PATH + key

    later: dict[str, AssetJob] = {}
    assets, payloads = drawn_assets(doc, asset_store(work_dir), url_for, later)
    theme = job.template_dir
    html = render_html(doc, assets, template_dir=theme, logo=firm_logo(theme),
                       extra_hook=jinja_hook(doc, plugins))
    return Preview(job=job, doc=doc, html=html, payloads=payloads, mimes=mimes, later=later)


def draw_later(preview: Preview, key: str, work_dir: Path) -> bytes:
    """Draw one asset the page asked for and keep it (in the preview and the store)."""
    payload = preview.payloads.get(key)
    if payload is None:
        payload = draw(preview.later[key])
        asset_store(work_dir).put(key, payload)
        preview.payloads[key] = payload
    return payload


def named_files(job: Job) -> tuple[set[Path], set[Path]]:
    """(files, folders) whose change makes a preview of ``job`` stale: the job file, the
    data files and attachments it names, its previous package, its theme folder."""
    files = {job.path.resolve()}
    for spec in job.calcs:
        files.update((job.folder / f.name).resolve() for f in spec.files.values())
    files.update((job.folder / a.path).resolve() for a in job.attachments)
    if job.previous_package is not None:
        files.add(job.previous_package.resolve())
    folders = {job.template_dir.resolve()} if job.template_dir is not None else set()
    return files, folders
