"""The thin WeasyPrint adapter: final HTML -> archival PDF (PDF/A-3b) bytes.

Only ``data:`` URIs, the package's own figures and equations (``reportgen-asset:`` URLs,
served from memory) and files inside the job's own folder are ever fetched; any other
URL (other files, symlinks out of the folder, the network) stops the build.
WeasyPrint is imported here only, lazily, so the command line starts fast.

Figures still being drawn when the layout starts are *later* images: their size is known
in advance (the figure's page size), so WeasyPrint lays the pages out with a stand-in and
asks for the drawing only when it paints the page, by which time a worker has drawn it.
The PDF is byte-identical to one laid out with every image present from the start
(tested); if a drawing does not have the size announced, the layout is redone with all
images present.
"""

from __future__ import annotations

import datetime as _dt
import logging
import os
from collections.abc import Callable, Collection, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Protocol
from urllib.parse import unquote, urlparse

from reportgen.errors import RenderError

PDF_VARIANT = "pdf/a-3b"
#: the most the renderer reads of one file from the job's or the theme's folder
FETCH_LIMIT = 10_000_000
#: URL scheme of the package's figures and equations in the HTML handed to the renderer
ASSET_SCHEME = "reportgen-asset:"


def asset_mime(payload: bytes) -> str:
    """The drawings are SVG; the one other asset is the math font (TrueType)."""
    return "image/svg+xml" if payload.lstrip()[:1] == b"<" else "font/ttf"


class RefusedResource(RenderError):
    """The HTML asks for a file or URL a package may not use, or asks to embed a file."""


@dataclass(frozen=True, slots=True)
class EmbeddedFile:
    name: str
    data: bytes
    description: str
    mime: str = "application/octet-stream"
    relationship: str = "Source"


def _fetcher_class():
    from weasyprint.urls import FatalURLFetchingError, URLFetcher, URLFetcherResponse

    from reportgen.job.paths import TooLarge, UnsafePath, open_inside, read_fd

    class JobFolderFetcher(URLFetcher):
        """Serve data: URIs and regular files under the job folder; refuse the rest."""

        def __init__(self, root: Path | None, extra_roots: tuple[Path, ...] = (),
                     assets: Callable[[str], bytes | None] | None = None):
            super().__init__(allowed_protocols={"data", "file"}, allow_redirects=False)
            roots = (r.resolve() for r in ((root,) if root else ()) + extra_roots)
            # a job saved at the top of the file system must not open the whole machine
            self.roots = tuple(r for r in roots if r != Path(r.anchor))
            self.refused: list[str] = []
            self.assets = assets

        def fetch(self, url, headers=None):
            scheme = url.split(":", 1)[0].lower()
            if url.startswith(ASSET_SCHEME) and self.assets is not None:
                payload = self.assets(url)
                if payload is not None:
                    return URLFetcherResponse(url, payload,
                                              {"Content-Type": asset_mime(payload)})
            if scheme == "data":
                return super().fetch(url, headers)
            why = ("a package may only use its generated figures and files inside the"
                   " job's own folder")
            if scheme == "file":
                path = Path(unquote(urlparse(url).path))
                for root in (r for r in self.roots if path.is_relative_to(r)):
                    # the one safe-path rule: no link, no '..', a regular file, bounded
                    try:
                        fd = open_inside(root, path.relative_to(root).parts)
                        data = read_fd(fd, FETCH_LIMIT)
                    except TooLarge as exc:
                        why = f"the file holds {exc.size} bytes; the limit is {exc.limit}"
                        break
                    except (UnsafePath, OSError):
                        break
                    return URLFetcherResponse(url, data, {})
            self.refused.append(url)
            raise FatalURLFetchingError(f"refused to fetch {url!r}: {why}")

    return JobFolderFetcher


def _data_url(a: EmbeddedFile) -> str:
    import base64

    return f"data:{a.mime};base64,{base64.b64encode(a.data).decode('ascii')}"


def preload_renderer() -> None:
    """Import WeasyPrint now (about 0.6 s), e.g. while worker processes draw figures."""
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    import weasyprint  # noqa: F401


class _LaterSizeMismatch(Exception):
    """A later image's drawing does not have the size its stand-in announced."""


def _svg_number(x: float) -> str:
    return f"{x:f}".rstrip("0").rstrip(".")


def _later_image_class():
    from xml.etree import ElementTree

    from weasyprint.images import SVGImage

    class _SVGContext:
        """What an SVG image uses of the layout: the fonts; it loads no images itself."""

        def __init__(self, font_config):
            self.font_config = font_config

        def get_image_from_uri(self, **_kw):
            return None

    class LaterSVG:
        """An SVG image whose drawing may arrive after the layout has started.

        With its size known beforehand (a figure), layout is answered from a stand-in of
        that size and only painting waits for the drawing; otherwise (an equation) the
        layout waits for it when it reaches it.
        """

        def __init__(self, url, size_pt, get_payload, url_fetcher, font_config):
            self.url = url
            self._context = _SVGContext(font_config)
            self._fetcher = url_fetcher
            self._get = get_payload
            self._real = None
            self._stub = None
            if size_pt is not None:
                w, h = (_svg_number(v) for v in size_pt)
                stub = (f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}pt"'
                        f' height="{h}pt" viewBox="0 0 {w} {h}"/>')
                self._stub = SVGImage(ElementTree.fromstring(stub), url, url_fetcher,
                                      self._context)

        def _load(self):
            if self._real is None:
                tree = ElementTree.fromstring(self._get(self.url))
                real = SVGImage(tree, self.url, self._fetcher, self._context)
                if self._stub is not None and any(
                        real.get_intrinsic_size(1, fs) != self._stub.get_intrinsic_size(1, fs)
                        for fs in (12, 16)):
                    raise _LaterSizeMismatch(self.url)
                self._real = real
            return self._real

        def get_intrinsic_size(self, image_resolution, font_size):
            image = self._stub if self._stub is not None else self._load()
            return image.get_intrinsic_size(image_resolution, font_size)

        def draw(self, stream, concrete_width, concrete_height, style):
            self._load().draw(stream, concrete_width, concrete_height, style)

    return LaterSVG


class ImageSource(Protocol):
    """Where the layout gets the package's figures and equations (``reportgen-asset:``
    URLs): ``get`` gives an image's SVG, waiting if it is still being drawn (None: not an
    asset of this package); ``size`` gives, for an image still being drawn, its size in
    points where that is known beforehand (a figure), else None; ``pending`` names the
    images still being drawn when the layout starts."""

    @property
    def pending(self) -> Collection[str]: ...

    def get(self, url: str) -> bytes | None: ...

    def size(self, url: str) -> tuple[float, float] | None: ...


class ReadyImages:
    """An image source with every image present (nothing pending)."""

    pending: Collection[str] = ()

    def __init__(self, payloads: Mapping[str, bytes] | None = None):
        self.payloads = dict(payloads or {})

    def get(self, url: str) -> bytes | None:
        return self.payloads.get(url)

    def size(self, url: str) -> tuple[float, float] | None:
        return None


def write_pdf(html: str, *, base_dir: Path | None, attachments: list[EmbeddedFile],
              date: str, extra_roots: tuple[Path, ...] = (),
              images: ImageSource | None = None) -> bytes:
    """Lay out ``html`` and return the PDF bytes (PDF/A-3b, deterministic).

    The images still being drawn when the layout starts get stand-ins (of their size,
    where it is known), so layout need not wait for them; if one turns out to be another
    size, the layout is done again with every image present.
    """
    source = images or ReadyImages()
    try:
        return _write_pdf(html, base_dir, attachments, date, extra_roots, source,
                          tuple(source.pending))
    except _LaterSizeMismatch:
        return _write_pdf(html, base_dir, attachments, date, extra_roots, source, ())


def _write_pdf(html, base_dir, attachments, date, extra_roots, images: ImageSource,
               later: tuple[str, ...]) -> bytes:
    # fontTools (used when HarfBuzz subsetting is not installed) stamps the clock into
    # each embedded font unless SOURCE_DATE_EPOCH is set: pin it to the revision date.
    # The variable is a count of seconds from 1970 and may not be negative (fontTools
    # writes it as an unsigned count from 1904 and fails before then): revision dates
    # before 1970 stamp the fonts with 1970-01-01, still the same for every build.
    stamp = _dt.datetime.fromisoformat((date or "2000-01-01") + "T00:00:00+00:00")
    os.environ["SOURCE_DATE_EPOCH"] = str(max(int(stamp.timestamp()), 0))
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    import weasyprint
    from weasyprint.text.fonts import FontConfiguration
    from weasyprint.urls import FatalURLFetchingError

    fetcher = _fetcher_class()(base_dir, extra_roots, images.get)
    font_config = FontConfiguration()
    if later:
        lazy = _later_image_class()
        cache: dict | None = {url: lazy(url, images.size(url), images.get, fetcher,
                                        font_config) for url in later}
    else:
        cache = None
    try:
        # a data: URL carries the MIME type into the file's /Subtype (PDF/A-3 wants it);
        # WeasyPrint ignores a type given any other way
        atts = [weasyprint.Attachment(url=_data_url(a), name=a.name, description=a.description,
                                      created=stamp, modified=stamp,
                                      relationship=a.relationship, url_fetcher=fetcher)
                for a in attachments]
        base_url = (base_dir.resolve().as_uri() + "/") if base_dir else None
        doc = weasyprint.HTML(string=html, base_url=base_url, url_fetcher=fetcher)
        _refuse_attachment_elements(doc)
        pdf = doc.write_pdf(attachments=atts, pdf_variant=PDF_VARIANT, uncompressed_pdf=False,
                            cache=cache, font_config=font_config)
    except FatalURLFetchingError as exc:
        raise RefusedResource(str(exc).strip('"')) from None
    except (RenderError, _LaterSizeMismatch):
        raise
    except Exception as exc:
        raise RenderError(f"the PDF renderer failed: {type(exc).__name__}: {exc}") from exc
    if fetcher.refused:
        raise RefusedResource(f"refused to fetch {fetcher.refused[0]!r}: a package may only use"
                              " its generated figures and files inside the job's own folder")
    return pdf


def _refuse_attachment_elements(document) -> None:
    """Refuse ``<a rel="attachment">`` and ``<link rel="attachment">`` in the HTML.

    WeasyPrint embeds whatever such an element points at (in the PDF's attachments, or
    as a page annotation that readers of the embedded files do not list); a package
    embeds exactly the files its manifest lists, passed in by :func:`write_pdf`. The
    test is WeasyPrint's own, on the tree it lays out, over every namespace.
    """
    from weasyprint.html import element_has_link_type

    for element in document.etree_element.iter():
        tag = element.tag.rsplit("}", 1)[-1] if isinstance(element.tag, str) else ""
        if tag in ("a", "link") and element_has_link_type(element, "attachment"):
            raise RefusedResource(
                f"refused to embed {element.get('href', '')!r} named by a <{tag}"
                f" rel=\"{element.get('rel')}\"> element: a package embeds only its job,"
                " results, manifest and the files [package] attachments lists")
