"""Hook specifications: what the core asks of a plugin.

A plugin is a module (or object) registered under the ``reportgen.calcs`` entry-point
group whose functions are marked with :data:`reportgen.hookimpl`. Hook names start
with ``reportgen_``. An implementation may accept fewer arguments than the spec.

API version: :data:`API_VERSION`. Every calc type states the version it targets in
``CalcType.api_version``; the core refuses calc types whose version it does not
support (see :data:`SUPPORTED_API_VERSIONS`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import pluggy

if TYPE_CHECKING:
    from .calc import CalcType

PROJECT = "reportgen"
ENTRY_POINT_GROUP = "reportgen.calcs"
#: The hook API this core provides.
API_VERSION = 1
#: The API versions of calc types this core can run.
SUPPORTED_API_VERSIONS = frozenset({1})

hookspec = pluggy.HookspecMarker(PROJECT)
hookimpl = pluggy.HookimplMarker(PROJECT)


# ------------------------------------------------------------------ registration


@hookspec
def reportgen_register_calc_types(context: dict[str, Any]) -> list[CalcType]:
    """Return the calc types this plugin provides.

    Called once when the plugin manager loads. Each calc type is an instance of a
    :class:`reportgen.CalcType` subclass with a unique ``name`` (what a job file's
    ``plugin = "..."`` names), a ``version``, an ``api_version``, its ``inputs`` and
    ``criteria`` as :class:`reportgen.InputSpec`, and a ``compute`` method. Add
    ``verify`` for the independent second method that fills the Verification appendix,
    and ``sources`` / ``verification_cases`` for the software identification section.

    A calc type name declared by two plugins is refused at load (exit 2).

    :param context: read-only facts about the core: ``{"api_version": int,
        "reportgen_version": str}``.
    :returns: a list of calc type instances (may be empty).

    .. versionadded:: API 1
    """


# ------------------------------------------------------------------ rendering


@hookspec
def reportgen_prepare_jinja_env(env: Any, context: dict[str, Any]) -> None:
    """Adjust the Jinja2 environment before the package is rendered.

    Use it to add filters or globals that a firm's own templates need. Do not turn
    autoescaping off and do not mark job text safe: job files are untrusted.

    :param env: the :class:`jinja2.Environment` (sandboxed, autoescaping, strict).
    :param context: ``{"api_version": int, "units": "SI" | "US"}``.
    :returns: nothing; modify ``env`` in place.

    .. versionadded:: API 1
    """
