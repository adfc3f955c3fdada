"""Fixture plugin: verify returns an independent value 10 % away from the closed form.

A package whose two methods disagree must not be written (VerificationError, exit 3).
"""

from reportgen import CalcType, InputSpec, Sheet, Source, VerificationRow, hookimpl


class VerifyDisagrees(CalcType):
    name = "fixture_verify_disagrees"
    title = "Fixture: disagreeing verification"
    version = "0.0.1"
    purpose = "Square a length."
    inputs = (InputSpec(name="x", symbol="x", description="A length", dimension="length"),)
    sources = (Source(key="none", citation="fixture, no source"),)

    def compute(self, ctx):
        s = Sheet(self.inputs)
        s.equation("A", "x**2", "dimensionless", x=ctx.inputs["x"], key="area",
                   description="Square")
        return s.output()

    def verify(self, ctx, output):
        closed = output.results[0].quantity.value
        return [VerificationRow(quantity="area", closed_form=closed, independent=1.1 * closed,
                                tolerance=1e-6, method="a deliberately wrong second method")]


@hookimpl
def reportgen_register_calc_types(context):
    return [VerifyDisagrees()]
