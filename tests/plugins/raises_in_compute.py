"""Fixture plugin: compute raises ZeroDivisionError for a zero input.

The error must name the plugin, its package and the calc id (exit 3, nothing written).
"""

from reportgen import CalcType, InputSpec, Sheet, Source, hookimpl


class RaisesInCompute(CalcType):
    name = "fixture_raises_in_compute"
    title = "Fixture: raises in compute"
    version = "0.0.1"
    purpose = "Divide by an input that is allowed to be zero."
    inputs = (InputSpec(name="x", symbol="x", description="A number"),)
    sources = (Source(key="none", citation="fixture, no source"),)

    def compute(self, ctx):
        s = Sheet()
        s.result("inverse", 1.0 / ctx.inputs["x"], "dimensionless", "y", "Inverse")
        return s.output()


@hookimpl
def reportgen_register_calc_types(context):
    return [RaisesInCompute()]
