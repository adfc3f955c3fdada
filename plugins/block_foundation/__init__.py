"""block_foundation: rotating-machine foundations on soil (in progress)."""

from reportgen import hookimpl


@hookimpl
def reportgen_register_calc_types(context):
    return []
