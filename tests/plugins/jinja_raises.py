"""Fixture plugin: its Jinja2 hook raises.

The error must name this plugin, not stop silently inside pluggy's hook loop.
"""

from reportgen import hookimpl


@hookimpl
def reportgen_prepare_jinja_env(env):
    raise KeyError("firm_colours")
