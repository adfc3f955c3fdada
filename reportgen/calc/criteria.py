"""The criteria library: published (or a firm's own) criteria that any calc type cites by
name, registered by plugins through ``reportgen_register_criteria``.

The core knows nothing of what a criterion means: it keeps each object a plugin registers
under its ``name`` (looked up ignoring case, spaces, '-' and '_'), with its ``title`` and
``source`` for ``reportgen criteria``, and hands the library to the calcs. A calc type that
declares an input of kind "criterion" gets the name checked against the library when the
job is loaded, and looks the criterion up with ``ctx.criteria_library.get(name)``.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

__all__ = ["CriteriaLibrary", "RegisteredCriterion", "normalise"]


def normalise(name: str) -> str:
    """The lookup key of a criterion name: case, spaces, '-' and '_' do not count."""
    return re.sub(r"[\s_-]+", "", name).casefold()


@dataclass(frozen=True)
class RegisteredCriterion:
    criterion: Any  # the plugin's own object: it has name, title and source
    plugin: str
    package: str

    @property
    def name(self) -> str:
        return str(self.criterion.name)


#: A firm's own criteria files live in this folder of its template folder. A criterion
#: read from such a file carries ``origin_file = (file name, bytes)``; a package that uses
#: it embeds the file at ``criteria/<file name>`` beside its job, and an archived job is
#: loaded with its own folder as the template folder, so verify reads the same curve.
FIRM_CRITERIA_FOLDER = "criteria"


def origin_file(criterion: Any) -> tuple[str, bytes] | None:
    """(file name, bytes) of the firm's file a criterion was read from, if any."""
    found = getattr(criterion, "origin_file", None)
    if (isinstance(found, tuple) and len(found) == 2 and isinstance(found[0], str)
            and isinstance(found[1], bytes)):
        return found
    return None


@dataclass
class CriteriaLibrary:
    """Every registered criterion by normalised name (and alias), with what went wrong."""

    entries: dict[str, RegisteredCriterion] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)

    def add(self, criterion: Any, plugin: str, package: str) -> None:
        names = [getattr(criterion, "name", "")] + list(getattr(criterion, "aliases", ()))
        if not names[0] or not all(isinstance(getattr(criterion, a, None), str)
                                   for a in ("name", "title", "source")):
            self.problems.append(f"plugin '{plugin}' (package {package}) registered a"
                                 f" criterion without a name, title and source: {criterion!r}")
            return
        entry = RegisteredCriterion(criterion, plugin, package)
        for name in names:
            key = normalise(name)
            other = self.entries.get(key)
            if other is not None and other.criterion is not criterion:
                self.problems.append(f"criterion '{name}' is registered by plugin"
                                     f" '{plugin}' (package {package}) and by plugin"
                                     f" '{other.plugin}' (package {other.package})")
                continue
            self.entries[key] = entry

    def get(self, name: str) -> Any | None:
        entry = self.entries.get(normalise(name))
        return None if entry is None else entry.criterion

    def nearest(self, name: str) -> list[str]:
        shown = {normalise(e.name): e.name for e in self}
        close = difflib.get_close_matches(normalise(name), list(shown), n=3, cutoff=0.5)
        return [shown[c] for c in close]

    def __iter__(self) -> Iterator[RegisteredCriterion]:
        seen: set[int] = set()
        for entry in sorted(self.entries.values(), key=lambda e: normalise(e.name)):
            if id(entry.criterion) not in seen:
                seen.add(id(entry.criterion))
                yield entry

    def names(self) -> list[str]:
        return [e.name for e in self]


def load_criteria(plugins: Any, template_dir: Path | None = None,
                  extra: Iterable[tuple[Any, str, str]] = ()) -> CriteriaLibrary:
    """Ask every plugin for its criteria (``context['template_dir']``: a firm's folder,
    where a plugin may find the firm's own curves). One plugin's failure is recorded as a
    problem, never hides the others'."""
    library = CriteriaLibrary()
    pm = getattr(plugins, "pm", None)
    if pm is not None:
        caller = pm.hook.reportgen_register_criteria
        # the version from the hookspec module itself: importing it here would close a
        # cycle (hookspecs -> types -> sheet, whose CalcContext carries the library)
        api = getattr(caller.spec.namespace, "API_VERSION", None) if caller.spec else None
        context = {"api_version": api, "template_dir": template_dir}
        for impl in caller.get_hookimpls():
            package = plugins.packages.get(impl.plugin_name, ("?", "?"))[0]
            try:
                kwargs = {"context": context}
                found = impl.function(**{k: kwargs[k] for k in impl.argnames})
                for criterion in found or ():
                    library.add(criterion, impl.plugin_name, package)
            except Exception as exc:  # noqa: BLE001 - named, not raised: others still load
                library.problems.append(f"plugin '{impl.plugin_name}' (package {package}):"
                                        f" reportgen_register_criteria raised"
                                        f" {type(exc).__name__}: {exc}")
    for criterion, plugin, package in extra:
        library.add(criterion, plugin, package)
    return library
