"""The vibration criteria as a hook-only plugin: the built-ins, and a firm's own curves
from ``criteria/*.csv`` and ``criteria/*.toml`` in its template folder.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
from typing import Any

from reportgen import hookimpl
from reportgen.calc.criteria import FIRM_CRITERIA_FOLDER

from .builtin import BUILTIN
from .errors import DataFileError
from .files import read_criteria_file
from .library import normalise_name

__all__ = ["FOLDER", "firm_criteria", "reportgen_register_criteria"]

#: the folder of a firm's template folder that holds its own criteria files
FOLDER = FIRM_CRITERIA_FOLDER
SUFFIXES = (".csv", ".toml")
#: a criteria file is a few points per curve; anything larger is not one
MAX_BYTES = 1024 * 1024


def firm_criteria(template_dir: Path | None) -> tuple[Any, ...]:
    """The criteria defined in ``template_dir/criteria/*.csv|*.toml`` (file names sorted,
    so a build reads them in one order). A bad file raises DataFileError naming it."""
    if template_dir is None:
        return ()
    folder = Path(template_dir) / FOLDER
    if not folder.is_dir():
        return ()
    out: list[Any] = []
    for path in sorted(folder.iterdir(), key=lambda p: p.name):
        if path.suffix.lower() not in SUFFIXES or not path.is_file():
            continue
        shown = str(path)
        try:
            size = path.stat().st_size
            if size > MAX_BYTES:
                raise DataFileError(shown, f"is {size} bytes; a criteria file holds at most"
                                           f" {MAX_BYTES}")
            data = path.read_bytes()
        except OSError as exc:
            raise DataFileError(shown, f"cannot be read ({exc.strerror or exc})") from None
        for criterion in read_criteria_file(shown, data):
            taken = _builtin_names().get(normalise_name(criterion.name))
            if taken is not None:
                raise DataFileError(shown, f"the curve {criterion.name!r} takes the name of"
                                           f" the built-in criterion {taken!r}; give it a"
                                           " name of the firm's own", column=criterion.name)
            out.append(dataclasses.replace(criterion, origin_file=(path.name, data)))
    return tuple(out)


def _builtin_names() -> dict[str, str]:
    return {normalise_name(n): c.name for c in BUILTIN for n in (c.name, *c.aliases)}


@hookimpl
def reportgen_register_criteria(context: dict[str, Any]) -> list[Any]:
    return [*BUILTIN, *firm_criteria(context.get("template_dir"))]
