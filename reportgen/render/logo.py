"""Firm templates: find and screen a firm's logo, let plugins adjust the Jinja2 environment.

A firm's folder (``[package] template_dir`` or ``--template-dir``) may hold any of
``cover.html``, ``running.html``, ``style.css``, ``firm.css`` and ``logo.svg`` /
``logo.png``; everything not there falls back to the built-in templates.
"""

from __future__ import annotations

import base64
import re
from pathlib import Path
from typing import Any

from reportgen.calc.plugin_set import PluginSet
from reportgen.model import Document

LOGO_NAMES = (("logo.svg", "image/svg+xml"), ("logo.png", "image/png"))


def firm_logo(template_dir: Path | None) -> str | None:
    """The theme's logo as a data: URI, screened; None when the folder holds none.

    A logo that is a symbolic link, not a regular file, over the theme file limit, or
    not plain vector art / a PNG is refused (ThemeError, exit 2), never skipped.
    """
    from reportgen.job.paths import TooLarge, UnsafePath, read_inside
    from reportgen.render.theme import THEME_FILE_LIMIT, theme_error

    if template_dir is None:
        return None
    for name, mime in LOGO_NAMES:
        path = template_dir / name
        try:
            data = read_inside(template_dir, name, THEME_FILE_LIMIT)
        except FileNotFoundError:
            continue
        except UnsafePath as exc:
            raise theme_error(path, f"firm logo refused: {exc}") from None
        except TooLarge as exc:
            raise theme_error(path, f"firm logo refused: {exc.size} bytes; a theme file may"
                                    f" hold at most {exc.limit} bytes") from None
        except OSError as exc:
            raise theme_error(path, f"cannot read the firm logo: {exc.strerror}") from None
        if mime == "image/svg+xml":
            data = _sanitise_svg(data, path)
        else:
            _check_png(data, path)
        return f"data:{mime};base64," + base64.b64encode(data).decode("ascii")
    return None


_SVG_NS = "http://www.w3.org/2000/svg"
_XLINK_HREF = "{http://www.w3.org/1999/xlink}href"
_XML_NS = "{http://www.w3.org/XML/1998/namespace}"
#: what a logo may be made of: shapes, paths, text, groups, gradients, clips, simple
#: filters. No image, script, foreignObject, feImage, link (a), animation or font.
_SVG_ELEMENTS = frozenset("""
    svg g defs symbol use title desc metadata style switch
    path rect circle ellipse line polyline polygon text tspan textPath
    linearGradient radialGradient stop clipPath mask pattern marker
    filter feOffset feBlend feFlood feGaussianBlur feColorMatrix feComposite feMerge
    feMergeNode feDropShadow
""".split())
_SVG_ATTRIBUTES = frozenset("""
    id class style transform version baseProfile viewBox preserveAspectRatio
    x y x1 y1 x2 y2 cx cy r rx ry fx fy fr width height d points pathLength
    dx dy rotate textLength lengthAdjust startOffset method spacing side
    fill fill-opacity fill-rule stroke stroke-width stroke-linecap stroke-linejoin
    stroke-miterlimit stroke-dasharray stroke-dashoffset stroke-opacity opacity
    color display visibility overflow clip clip-path clip-rule mask filter
    paint-order vector-effect shape-rendering text-rendering color-interpolation
    color-interpolation-filters mix-blend-mode isolation transform-origin
    font font-family font-size font-size-adjust font-weight font-style font-variant
    font-stretch text-anchor text-decoration dominant-baseline alignment-baseline
    baseline-shift letter-spacing word-spacing writing-mode direction unicode-bidi
    offset stop-color stop-opacity gradientUnits gradientTransform spreadMethod
    clipPathUnits maskUnits maskContentUnits patternUnits patternContentUnits
    patternTransform marker-start marker-mid marker-end markerWidth markerHeight
    markerUnits refX refY orient filterUnits primitiveUnits in in2 result
    stdDeviation mode type values operator k1 k2 k3 k4 flood-color flood-opacity
    media lang href requiredFeatures requiredExtensions systemLanguage
""".split())
_XML_ATTRIBUTES = frozenset({"space", "lang"})
#: deeper nesting than a logo needs; the renderer draws SVG recursively
_SVG_MAX_DEPTH = 64
_CSS_URL = re.compile(r"url\(\s*([\"']?)\s*([^\s\"')]*)", re.IGNORECASE)
_CSS_FETCHING = re.compile(r"@|\\|(?:image-set|image|cross-fade|element|src)\s*\(",
                           re.IGNORECASE)


def _css_problem(text: str) -> str | None:
    """What in a style text or attribute value could fetch something, or None."""
    bad = _CSS_FETCHING.search(text)
    if bad is not None:
        return {"@": "a CSS at-rule", "\\": "a CSS escape"}.get(bad.group(0),
                                                              repr(bad.group(0)))
    for m in _CSS_URL.finditer(text):
        if not m.group(2).startswith("#"):
            return f"a link outside the logo: url({m.group(2)})"
    return None


def _svg_problem(data: bytes) -> str | None:
    """Why the SVG ``data`` is not plain, self-contained vector art; None if it is.

    Parsed as XML whatever its encoding (declaration, byte order mark) by the same
    parser the renderer uses, with DTDs and entities refused; then every element and
    attribute must be on the allow-lists above, every link must point inside the logo
    ('#id') and no style may import or fetch.
    """
    from xml.etree.ElementTree import ParseError

    import defusedxml.ElementTree as SafeET
    from defusedxml import DefusedXmlException

    try:
        root = SafeET.fromstring(data, forbid_dtd=True)
    except DefusedXmlException as exc:
        return f"a DTD or entity ({type(exc).__name__})"
    except (ParseError, ValueError) as exc:
        return f"XML that does not parse ({exc})"
    stack = [(root, 1)]
    while stack:
        element, depth = stack.pop()
        if not isinstance(element.tag, str):
            continue
        ns, _, local = element.tag.rpartition("}")
        if ns.lstrip("{") not in ("", _SVG_NS) or local not in _SVG_ELEMENTS:
            other = ns.lstrip("{") not in ("", _SVG_NS)
            return f"the element <{local}>" + (f" (namespace {ns.lstrip('{')})" if other else "")
        if depth == 1 and local != "svg":
            return f"<{local}> at the top instead of <svg>"
        if depth > _SVG_MAX_DEPTH:
            return f"elements nested more than {_SVG_MAX_DEPTH} deep"
        for key, value in element.attrib.items():
            if key == _XLINK_HREF or key == "href":
                if not value.strip().startswith("#"):
                    return f"a link outside the logo: <{local} href={value!r}>"
                continue
            if key.startswith(_XML_NS):
                if key[len(_XML_NS):] not in _XML_ATTRIBUTES:
                    return f"the attribute xml:{key[len(_XML_NS):]} on <{local}>"
            elif key not in _SVG_ATTRIBUTES:
                return f"the attribute {key!r} on <{local}>"
            problem = _css_problem(value)
            if problem is not None:
                return f"{problem} in the attribute {key!r} on <{local}>"
        if local == "style":
            problem = _css_problem("".join(element.itertext()))
            if problem is not None:
                return f"{problem} in a <style> element"
        stack.extend((child, depth + 1) for child in element)
    return None


def _sanitise_svg(data: bytes, path: Path | None = None) -> bytes:
    """``data`` itself if it passes the logo screen; ThemeError (exit 2) naming what not.

    The bytes are kept as they are (the renderer parses them with the same parser the
    screen used): the screen refuses, it never rewrites.
    """
    from reportgen.render.theme import theme_error

    problem = _svg_problem(data)
    if problem is not None:
        raise theme_error(path or "logo.svg",
                          f"firm logo refused: it contains {problem}; a logo must be"
                          " self-contained vector art (shapes, paths, text, gradients), with"
                          " no scripts, images, links outside the file, imports or events")
    return data


_PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
#: a small PNG can announce a huge picture: bound what the renderer would decode
_PNG_MAX_PIXELS = 25_000_000


def _check_png(data: bytes, path: Path) -> None:
    from reportgen.render.theme import theme_error

    if data[:8] != _PNG_SIGNATURE or data[12:16] != b"IHDR" or len(data) < 33:
        raise theme_error(path, "firm logo refused: not a PNG file (no PNG signature)")
    width, height = int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")
    if width * height > _PNG_MAX_PIXELS:
        raise theme_error(path, f"firm logo refused: {width} × {height} pixels; a logo may"
                                f" have at most {_PNG_MAX_PIXELS} pixels")


def jinja_hook(doc: Document, plugins: PluginSet | None) -> Any:
    """A callable that runs every plugin's ``reportgen_prepare_jinja_env`` on the env."""
    from reportgen.calc.hookspecs import API_VERSION

    if plugins is None or plugins.pm is None:
        return None

    context = {"api_version": API_VERSION, "units": doc.info.units}

    pm = plugins.pm

    def hook(env: Any) -> None:
        # Call each implementation on its own, as pluggy's loop would stop at the first
        # exception without saying whose it was.
        for impl in pm.hook.reportgen_prepare_jinja_env.get_hookimpls():
            kwargs = {"env": env, "context": context}
            try:
                impl.function(**{k: kwargs[k] for k in impl.argnames})
            except Exception as exc:
                from reportgen.errors import PluginError

                package = plugins.packages.get(impl.plugin_name, ("?", "?"))[0]
                raise PluginError(f"raised {type(exc).__name__}: {exc}",
                                  plugin=impl.plugin_name, package=package,
                                  stage="reportgen_prepare_jinja_env") from exc

    return hook
