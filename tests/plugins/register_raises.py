"""Fixture plugin: the registration hook itself raises.

The plugin is listed as broken with its error; the other plugins still load.
"""

from reportgen import hookimpl


@hookimpl
def reportgen_register_calc_types(context):
    raise RuntimeError("licence server for the in-house calc set is unreachable")
