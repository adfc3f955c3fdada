"""The plugin manager: load calc plugins from entry points and call them safely.

pluggy cannot say which plugin returned a value, so each registered calc type carries
its own name, version and package, and the core calls calc methods one by one,
wrapped so that a failure names its plugin and cannot hide another.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from dataclasses import dataclass, field
from importlib import metadata
from typing import Any

import pluggy

from reportgen.calc import hookspecs
from reportgen.calc.types import CalcType
from reportgen.errors import ExitCode, PluginError


@dataclass(frozen=True, slots=True)
class RegisteredCalc:
    calc_type: CalcType
    plugin: str  # the entry point / plugin name
    package: str  # distribution name
    package_version: str

    @property
    def name(self) -> str:
        return self.calc_type.name


@dataclass(slots=True)
class BrokenPlugin:
    plugin: str
    package: str
    error: str
    #: calc type names the plugin declared but that were refused (so a job naming one
    #: can say why it is unavailable)
    calc_types: tuple[str, ...] = ()


@dataclass(slots=True)
class PluginSet:
    """The calc types available to a build, with the plugins that failed to load."""

    calcs: dict[str, RegisteredCalc] = field(default_factory=dict)
    broken: list[BrokenPlugin] = field(default_factory=list)
    conflicts: list[str] = field(default_factory=list)
    pm: pluggy.PluginManager | None = None
    #: plugin name -> (distribution, version), for naming a plugin in hook errors
    packages: dict[str, tuple[str, str]] = field(default_factory=dict)

    def get(self, name: str) -> RegisteredCalc | None:
        return self.calcs.get(name)

    def names(self) -> list[str]:
        return sorted(self.calcs)

    def raise_for_conflicts(self) -> None:
        if self.conflicts:
            raise PluginError("; ".join(self.conflicts), stage="load",
                              exit_code=ExitCode.INVALID_INPUT)


def _context() -> dict[str, Any]:
    from reportgen._version import __version__

    return {"api_version": hookspecs.API_VERSION, "reportgen_version": __version__}


def load_plugin_set(extra: Iterable[tuple[str, object]] = (), *,
                       entry_points: bool = True) -> PluginSet:
    """Load every plugin of the entry-point group (and ``extra`` (name, module) pairs).

    A plugin that fails to import is recorded in :attr:`PluginSet.broken`, never raised.
    """
    pm = pluggy.PluginManager(hookspecs.PROJECT)
    pm.add_hookspecs(hookspecs)
    result = PluginSet(pm=pm)
    sources: list[tuple[str, str, str, object]] = []
    # disabled plugins are skipped before anything of them is imported: disabling one is
    # how a user steps around a plugin whose import misbehaves
    skip = {n.strip() for n in os.environ.get("REPORTGEN_PLUGINS_DISABLE", "").split(",")
            if n.strip()}
    if entry_points:
        for ep in sorted(metadata.entry_points(group=hookspecs.ENTRY_POINT_GROUP),
                         key=lambda e: e.name):
            if ep.name in skip:
                continue
            dist = ep.dist.name if ep.dist else "?"
            dver = ep.dist.version if ep.dist else "?"
            try:
                module = ep.load()
            except Exception as exc:  # a broken in-house package must not stop the others
                result.broken.append(BrokenPlugin(ep.name, dist, f"{type(exc).__name__}: {exc}"))
                continue
            sources.append((ep.name, dist, dver, module))
    for name, module in extra:
        sources.append((name, getattr(module, "__package_name__", name),
                        str(getattr(module, "__version__", "0")), module))
    sources = [s for s in sources if s[0] not in skip]
    for name, dist, dver, module in sources:
        try:
            pm.register(module, name=name)
        except Exception as exc:
            result.broken.append(BrokenPlugin(name, dist, f"{type(exc).__name__}: {exc}"))
            continue
        unknown = sorted(hc.name for hc in pm.get_hookcallers(module) or () if not hc.has_spec())
        if unknown:
            # pluggy's check_pending would raise for the whole set; name the one plugin
            pm.unregister(module)
            known = ", ".join(sorted(n for n in dir(hookspecs) if n.startswith("reportgen_")))
            result.broken.append(BrokenPlugin(
                name, dist, f"implements unknown hook(s) {', '.join(unknown)}"
                f" (misspelled?); the hooks are: {known}"))
            continue
        result.packages[name] = (dist, dver)
        impl = getattr(module, "reportgen_register_calc_types", None)
        if impl is None:
            continue
        try:
            types = impl(context=_context()) if _takes_context(impl) else impl()
            types = list(types or ())
        except Exception as exc:
            result.broken.append(BrokenPlugin(name, dist, f"{type(exc).__name__}: {exc}"))
            pm.unregister(module)
            continue
        for ct in types:
            problem = _check_calc_type(ct, name, dist)
            if problem:
                result.broken.append(BrokenPlugin(
                    name, dist, problem, calc_types=(str(getattr(ct, "name", "") or ""),)))
                continue
            if ct.name in result.calcs:
                other = result.calcs[ct.name]
                result.conflicts.append(
                    f"calc type '{ct.name}' is declared by plugin '{name}' (package {dist})"
                    f" and by plugin '{other.plugin}' (package {other.package})")
                continue
            result.calcs[ct.name] = RegisteredCalc(ct, name, dist, dver)
    pm.check_pending()
    return result


def _takes_context(func: Any) -> bool:
    import inspect

    try:
        return "context" in inspect.signature(func).parameters
    except (TypeError, ValueError):
        return False


def _check_calc_type(ct: object, plugin: str, dist: str) -> str:
    if not isinstance(ct, CalcType):
        return f"registered {type(ct).__name__!s}, which is not a reportgen.CalcType"
    if not ct.name:
        return f"calc type {type(ct).__name__} has no name"
    api = getattr(ct, "api_version", None)
    if api not in hookspecs.SUPPORTED_API_VERSIONS:
        from reportgen._version import __version__

        supported = ", ".join(str(v) for v in sorted(hookspecs.SUPPORTED_API_VERSIONS))
        return (f"calc type '{ct.name}' of plugin '{plugin}' (package {dist}) targets"
                f" reportgen hook API {api!r}, but reportgen {__version__} supports API"
                f" {supported}; refused (install a release of {dist} built for API"
                f" {hookspecs.API_VERSION}, or a reportgen that supports API {api!r})")
    return ""



def load_plugins() -> PluginSet:
    """The installed plugin set, refused (exit 2) if two plugins declare one calc type."""
    plugins = load_plugin_set()
    plugins.raise_for_conflicts()
    return plugins
