"""Firm templates: find a firm's logo and let plugins adjust the Jinja2 environment.

A firm's folder (``[package] template_dir`` or ``--template-dir``) may hold any of
``cover.html``, ``running.html``, ``style.css``, ``firm.css`` and ``logo.svg`` /
``logo.png``; everything not there falls back to the built-in templates.
"""

from __future__ import annotations

import base64
import re
from pathlib import Path
from typing import Any

from .model import Document
from .plugins import PluginSet

LOGO_NAMES = (("logo.svg", "image/svg+xml"), ("logo.png", "image/png"))


def firm_logo(template_dir: Path | None) -> str | None:
    if template_dir is None:
        return None
    for name, mime in LOGO_NAMES:
        path = template_dir / name
        if path.is_file() and not path.is_symlink() and path.stat().st_size < 2_000_000:
            data = path.read_bytes()
            if mime == "image/svg+xml":
                data = _sanitise_svg(data, path)
            return f"data:{mime};base64," + base64.b64encode(data).decode("ascii")
    return None


# What lets an SVG fetch or run something. Any href or url() must point inside the
# logo itself ("#id"); quotes, case and spacing vary, so match loosely.
_SVG_REFUSED = re.compile(
    rb"<\s*(?:script|image|foreignobject|feimage|iframe|object|embed|audio|video)\b"
    rb"|<!\s*entity|@import"
    rb"|\bhref\s*=\s*[\"']?\s*(?!#)[^\s\"'>]"
    rb"|url\(\s*[\"']?\s*(?!#)[^\s\"')]",
    re.IGNORECASE)


def _sanitise_svg(data: bytes, path: Path | None = None) -> bytes:
    """Refuse SVG that can fetch or script: WeasyPrint swallows fetch errors inside SVG."""
    bad = _SVG_REFUSED.search(data)
    if bad is not None:
        from .errors import RenderError

        found = bad.group(0).decode("utf-8", "replace")
        raise RenderError(f"firm logo {path or 'SVG'} contains {found!r}: only self-contained"
                          " vector logos"
                          " are accepted (no images, scripts, imports or links outside the"
                          " file)")
    return data


def jinja_hook(doc: Document, plugins: PluginSet | None) -> Any:
    """A callable that runs every plugin's ``reportgen_prepare_jinja_env`` on the env."""
    from .hookspecs import API_VERSION

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
                from .errors import PluginError

                package = plugins.packages.get(impl.plugin_name, ("?", "?"))[0]
                raise PluginError(f"raised {type(exc).__name__}: {exc}",
                                  plugin=impl.plugin_name, package=package,
                                  stage="reportgen_prepare_jinja_env") from exc

    return hook
