"""The thin WeasyPrint adapter: final HTML -> archival PDF (PDF/A-3b) bytes.

Only ``data:`` URIs and files inside the job's own folder are ever fetched; any other
URL (other files, symlinks out of the folder, the network) stops the build.
WeasyPrint is imported here only, lazily, so the command line starts fast.
"""

from __future__ import annotations

import datetime as _dt
import logging
import os
from dataclasses import dataclass
from pathlib import Path
from urllib.parse import unquote, urlparse

from ..errors import RenderError

PDF_VARIANT = "pdf/a-3b"


@dataclass(frozen=True, slots=True)
class EmbeddedFile:
    name: str
    data: bytes
    description: str
    mime: str = "application/octet-stream"
    relationship: str = "Source"


def _fetcher_class():
    from weasyprint.urls import FatalURLFetchingError, URLFetcher, URLFetcherResponse

    class JobFolderFetcher(URLFetcher):
        """Serve data: URIs and regular files under the job folder; refuse the rest."""

        def __init__(self, root: Path | None, extra_roots: tuple[Path, ...] = ()):
            super().__init__(allowed_protocols={"data", "file"}, allow_redirects=False)
            roots = (r.resolve() for r in ((root,) if root else ()) + extra_roots)
            # a job saved at the top of the file system must not open the whole machine
            self.roots = tuple(r for r in roots if r != Path(r.anchor))
            self.refused: list[str] = []

        def fetch(self, url, headers=None):
            scheme = url.split(":", 1)[0].lower()
            if scheme == "data":
                return super().fetch(url, headers)
            if scheme == "file":
                path = Path(unquote(urlparse(url).path))
                try:
                    real = path.resolve(strict=True)
                except OSError:
                    real = None
                if real is not None and real.is_file() and any(
                        real.is_relative_to(r) for r in self.roots):
                    return URLFetcherResponse(url, real.read_bytes(), {})
            self.refused.append(url)
            raise FatalURLFetchingError(
                f"refused to fetch {url!r}: a package may only use its generated figures"
                " and files inside the job's own folder")

    return JobFolderFetcher


def _data_url(a: EmbeddedFile) -> str:
    import base64

    return f"data:{a.mime};base64,{base64.b64encode(a.data).decode('ascii')}"


def preload_renderer() -> None:
    """Import WeasyPrint now (about 0.6 s), e.g. while worker processes draw figures."""
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    import weasyprint  # noqa: F401


def write_pdf(html: str, *, base_dir: Path | None, attachments: list[EmbeddedFile],
              date: str, extra_roots: tuple[Path, ...] = ()) -> bytes:
    """Lay out ``html`` and return the PDF bytes (PDF/A-3b, deterministic)."""
    # fontTools (used when HarfBuzz subsetting is not installed) stamps the clock into
    # each embedded font unless SOURCE_DATE_EPOCH is set: pin it to the revision date.
    stamp = _dt.datetime.fromisoformat((date or "2000-01-01") + "T00:00:00+00:00")
    os.environ["SOURCE_DATE_EPOCH"] = str(int(stamp.timestamp()))
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    import weasyprint
    from weasyprint.urls import FatalURLFetchingError

    fetcher = _fetcher_class()(base_dir, extra_roots)
    try:
        # a data: URL carries the MIME type into the file's /Subtype (PDF/A-3 wants it);
        # WeasyPrint ignores a type given any other way
        atts = [weasyprint.Attachment(url=_data_url(a), name=a.name, description=a.description,
                                      created=stamp, modified=stamp,
                                      relationship=a.relationship, url_fetcher=fetcher)
                for a in attachments]
        base_url = (base_dir.resolve().as_uri() + "/") if base_dir else None
        doc = weasyprint.HTML(string=html, base_url=base_url, url_fetcher=fetcher)
        pdf = doc.write_pdf(attachments=atts, pdf_variant=PDF_VARIANT, uncompressed_pdf=False)
    except FatalURLFetchingError as exc:
        raise RenderError(str(exc).strip('"')) from None
    except RenderError:
        raise
    except Exception as exc:
        raise RenderError(f"the PDF renderer failed: {type(exc).__name__}: {exc}") from exc
    if fetcher.refused:
        raise RenderError(f"refused to fetch {fetcher.refused[0]!r}: a package may only use its"
                          " generated figures and files inside the job's own folder")
    return pdf
