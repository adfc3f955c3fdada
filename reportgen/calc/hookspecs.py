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
    from reportgen.calc.types import CalcType

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
def reportgen_register_calc_types(context: dict[str, Any]) -> list[CalcType]:  # type: ignore[empty-body]
    """Return the calc types this plugin provides.

    Called once per plugin when the plugin manager loads, outside pluggy's hook loop,
    so one plugin's failure cannot hide another's. Each calc type is an instance of a
    :class:`reportgen.CalcType` subclass with a unique ``name`` (what a job file's
    ``plugin = "..."`` names), a ``version``, an ``api_version``, its ``inputs`` and
    ``criteria`` as :class:`reportgen.InputSpec`, and a ``compute`` method. Add
    ``verify`` for the independent second method that fills the Verification appendix,
    and ``sources`` / ``verification_cases`` for the software identification section.

    Example::

        @hookimpl
        def reportgen_register_calc_types(context):
            return [MountLoads()]

    What the core does with the answer:

    - a calc type whose ``api_version`` is not in :data:`SUPPORTED_API_VERSIONS` is
      refused and listed as broken by ``reportgen plugins``, with both versions;
    - a calc type name declared by two plugins is a conflict: builds refuse to start
      (exit 2) and the message names both plugins and their packages;
    - if this hook raises, or the module fails to import, the plugin is listed as
      broken with its error and every other plugin still loads.

    :param context: read-only facts about the core: ``{"api_version": int,
        "reportgen_version": str}``. It may gain keys; ignore the ones you do not use.
        The implementation may also omit the argument.
    :returns: a list of calc type instances (may be empty).

    .. versionadded:: API 1
    """


@hookspec
def reportgen_register_criteria(context: dict[str, Any]) -> list[Any]:  # type: ignore[empty-body]
    """Return the criteria this plugin provides (curves, zone tables, guideline values).

    Each is the plugin's own object with at least ``name``, ``title`` and ``source`` (text
    to print), and optionally ``aliases``. Calc types look criteria up by name through
    ``ctx.criteria_library``; ``reportgen criteria`` lists them with their sources. Called
    for each build with the firm's template folder, so a plugin may add the firm's own
    curves from a data file there. A name registered twice is an error naming both
    plugins; one plugin raising does not stop the others.

    :param context: ``{"api_version": int, "template_dir": Path | None}``.
    :returns: a list of criteria (may be empty).

    .. versionadded:: API 1
    """


# ------------------------------------------------------------------ rendering


@hookspec
def reportgen_prepare_jinja_env(env: Any, context: dict[str, Any]) -> None:
    """Adjust the Jinja2 environment before the package is rendered.

    Called once per package, after the built-in globals and filters are installed and
    before any template is loaded. Use it to add filters or globals that a firm's own
    templates (``cover.html``, ``running.html``, see :mod:`reportgen.render.theme`) need.
    Do not turn autoescaping off and do not mark job text safe: job files are untrusted.
    Each plugin's implementation is called on its own; if one raises, the build stops
    with a PluginError naming that plugin and its package (exit 3, nothing written).

    Example::

        @hookimpl
        def reportgen_prepare_jinja_env(env, context):
            env.globals["firm_tagline"] = "Vibration and acoustics since 1994"

    :param env: the :class:`jinja2.Environment` (autoescaping, ``StrictUndefined``,
        loading the firm's template folder first, then the built-in templates).
    :param context: ``{"api_version": int, "units": "SI" | "US"}``.
    :returns: nothing; modify ``env`` in place.

    .. versionadded:: API 1
    """
