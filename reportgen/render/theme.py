"""A firm's theme folder as the template engine sees it: a loader confined to the folder
with bounded reads, and template failures turned into messages naming file and line.
"""

from __future__ import annotations

import re
from pathlib import Path
from types import TracebackType
from typing import Any

import jinja2

from reportgen.errors import Problem, RenderError, ThemeError
from reportgen.job.paths import TooLarge, UnsafePath, open_inside, path_parts, read_fd

#: templates, stylesheets and logos of a theme: text and small pictures
THEME_FILE_LIMIT = 2_000_000

# WeasyPrint embeds whatever such an element points at; the package embeds only what its
# manifest lists. The renderer refuses the element whatever its origin (render.pdf); this
# finds the literal case early, so the message can name the theme file and its line.
_REL_ATTACHMENT = re.compile(r"""\brel\s*=\s*["']?[^"'>]*\battachment\b""", re.IGNORECASE)


def theme_error(file: Path | str, message: str) -> ThemeError:
    return ThemeError(Problem(str(file), message))


class ThemeLoader(jinja2.BaseLoader):
    """Templates from one folder, by the one safe-path rule (reportgen.job.paths).

    A name that leaves the folder, a file that is a symbolic link (or lies under one)
    or is not a regular file, or one over ``limit`` bytes is refused (ThemeError), never
    passed on to the built-in templates; a name the folder does not hold is not found.
    """

    def __init__(self, folder: Path, limit: int = THEME_FILE_LIMIT):
        self.folder = folder
        self.limit = limit

    def get_source(self, environment: jinja2.Environment,
                   template: str) -> tuple[str, str, Any]:
        try:
            parts = path_parts(template)
        except UnsafePath:
            raise theme_error(self.folder, f"template name {template!r} leaves the theme"
                                           " folder: a theme may only name its own files"
                                           " (no '..', no absolute path)") from None
        path = self.folder.joinpath(*parts)
        try:
            data = read_fd(open_inside(self.folder, parts, text=template), self.limit)
        except (FileNotFoundError, NotADirectoryError):
            raise jinja2.TemplateNotFound(template) from None
        except UnsafePath as exc:
            raise theme_error(path, f"refused: {exc}") from None
        except TooLarge as exc:
            raise theme_error(path, f"refused: {exc.size} bytes; a theme file may hold at"
                                    f" most {exc.limit} bytes") from None
        except OSError as exc:
            raise theme_error(path, f"cannot read: {exc.strerror}") from None
        try:
            source = data.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise theme_error(path, f"not UTF-8 text (byte 0x{data[exc.start]:02x} at"
                                    f" offset {exc.start})") from None
        found = _REL_ATTACHMENT.search(source)
        if found is not None:
            line = source.count("\n", 0, found.start()) + 1
            raise theme_error(path, f"line {line}: {found.group(0)!r}: a template may not"
                                    " embed files (rel=\"attachment\"); a package embeds"
                                    " only its job, results, manifest and the files"
                                    " [package] attachments lists")
        return source, str(path), lambda: True


def template_failure(exc: Exception, theme: Path | None, builtin: Path) -> Exception:
    """The error to raise for ``exc``, raised while rendering templates.

    A failure located in a theme file is the theme's (ThemeError, exit 2), naming the
    file and line, and for a template not found or refused, the template that named it;
    one located in a built-in template is ours (RenderError, exit 3).
    """
    where = _innermost_template(exc.__traceback__, tuple(r for r in (theme, builtin) if r))
    if isinstance(exc, jinja2.TemplateSyntaxError) and exc.filename:
        where = (exc.filename, exc.lineno)
    in_theme = theme is not None and where is not None and _under(where[0], theme)
    at = f"line {where[1]}: " if where else ""
    if isinstance(exc, ThemeError):  # refused by the loader: say which template named it
        problem = exc.problems[0]
        if where is None or where[0] == problem.file:
            return exc
        if theme is not None and problem.file == str(theme):
            return theme_error(where[0], f"{at}{problem.message}")
        return theme_error(problem.file, f"{problem.message} (named in {where[0]}, line"
                                         f" {where[1]})")
    if isinstance(exc, jinja2.TemplatesNotFound | jinja2.TemplateNotFound):
        message = (f"{at}template {exc.name!r} not found in the theme folder or the"
                   " built-in templates")
    elif isinstance(exc, jinja2.exceptions.SecurityError):
        message = (f"{at}refused: {exc} Templates run sandboxed: they may use the"
                   " document and the display helpers only")
    elif isinstance(exc, jinja2.TemplateSyntaxError):
        message = f"{at}template syntax error: {exc.message}"
    else:
        message = f"{at}{type(exc).__name__}: {exc}"
    if in_theme:
        assert where is not None
        return theme_error(where[0], message)
    file = where[0] if where else "templates"
    return RenderError(f"template {file}: {message}")


def _under(file: str, folder: Path) -> bool:
    return Path(file).is_relative_to(folder)


def _innermost_template(tb: TracebackType | None,
                        roots: tuple[Path, ...]) -> tuple[str, int] | None:
    # the template engine rewrites its tracebacks: a template's frames carry the
    # template's file name and line
    found = None
    while tb is not None:
        name = tb.tb_frame.f_code.co_filename
        if any(_under(name, r) for r in roots):
            found = (name, tb.tb_lineno)
        tb = tb.tb_next
    return found
