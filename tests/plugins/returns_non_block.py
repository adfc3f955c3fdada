"""Fixture plugin: two calc types whose compute returns malformed output.

One puts a plain string among its blocks, the other returns a dict instead of a CalcOutput.
"""

from reportgen import CalcOutput, CalcType, InputSpec, Sheet, Source, hookimpl


class _Base(CalcType):
    version = "0.0.1"
    purpose = "Return something that is not a reportgen block."
    inputs = (InputSpec(name="x", symbol="x", description="A number"),)
    sources = (Source(key="none", citation="fixture, no source"),)


class StringBlock(_Base):
    name = "fixture_string_block"
    title = "Fixture: a string among the blocks"

    def compute(self, ctx):
        s = Sheet()
        s.result("x", ctx.inputs["x"], "dimensionless", "x", "Echo")
        out = s.output()
        return CalcOutput(blocks=(*out.blocks, "<p>raw HTML</p>"), results=out.results,
                          checks=out.checks)


class DictOutput(_Base):
    name = "fixture_dict_output"
    title = "Fixture: a dict instead of a CalcOutput"

    def compute(self, ctx):
        return {"results": {"x": ctx.inputs["x"]}}


@hookimpl
def reportgen_register_calc_types(context):
    return [StringBlock(), DictOutput()]
