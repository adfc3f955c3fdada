"""Fixture plugin: a calc type written for a hook API this reportgen does not provide.

It must be refused at load, listed as broken with both API versions.
"""

from reportgen import CalcType, hookimpl


class FromTheFuture(CalcType):
    name = "fixture_future_api"
    title = "Fixture: targets hook API 99"
    version = "0.0.1"
    api_version = 99

    def compute(self, ctx):  # never reached: refused at load
        raise AssertionError


@hookimpl
def reportgen_register_calc_types(context):
    return [FromTheFuture()]
