"""Fixture plugin: an in-house package whose own dependency is not installed.

Importing it raises ModuleNotFoundError; `reportgen plugins` must list it and go on.
"""

from qep_missing_site_library import mount_tables  # noqa: F401  (deliberately absent)

from reportgen import hookimpl


@hookimpl
def reportgen_register_calc_types(context):  # pragma: no cover - never imported
    return []
