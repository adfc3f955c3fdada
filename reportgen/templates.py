"""Firm templates: find a firm's logo and let plugins adjust the Jinja2 environment.

A firm's folder (``[package] template_dir`` or ``--template-dir``) may hold any of
``cover.html``, ``running.html``, ``style.css``, ``firm.css`` and ``logo.svg`` /
``logo.png``; everything not there falls back to the built-in templates.
"""

from __future__ import annotations

import base64
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
                data = _sanitise_svg(data)
            return f"data:{mime};base64," + base64.b64encode(data).decode("ascii")
    return None


def _sanitise_svg(data: bytes) -> bytes:
    """Refuse SVG that can fetch or script: WeasyPrint swallows fetch errors inside SVG."""
    low = data.lower()
    for bad in (b"<script", b"xlink:href=\"http", b"href=\"http", b"href=\"file",
                b"xlink:href=\"file", b"<image", b"@import", b"<!entity", b"<foreignobject"):
        if bad in low:
            from .errors import RenderError

            raise RenderError(f"firm logo SVG contains {bad.decode()!r}; only self-contained"
                              " vector logos are accepted")
    return data


def jinja_hook(doc: Document, plugins: PluginSet | None) -> Any:
    """A callable that runs every plugin's ``reportgen_prepare_jinja_env`` on the env."""
    from .hookspecs import API_VERSION

    if plugins is None or plugins.pm is None:
        return None

    context = {"api_version": API_VERSION, "units": doc.info.units}

    def hook(env: Any) -> None:
        # Call each implementation on its own, as pluggy's loop would stop at the first
        # exception without saying whose it was.
        for impl in plugins.pm.hook.reportgen_prepare_jinja_env.get_hookimpls():
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
