"""Fixture plugin: an Equation block built by hand whose stated result is tampered.

Its substitution 2 × 3 does not give the 7 it states; the core must refuse the output.
"""

from reportgen import CalcType, Equation, InputSpec, Quantity, Sheet, VerificationRow, hookimpl
from reportgen.model import Source


class BrokenEquation(CalcType):
    name = "fixture_broken_equation"
    title = "Fixture: tampered equation"
    version = "0.0.1"
    purpose = "Double a length."
    inputs = (InputSpec(name="x", symbol="x", description="A length", dimension="length"),)
    sources = (Source(key="none", citation="fixture, no source"),)

    def compute(self, ctx):
        s = Sheet()
        x = ctx.inputs["x"]
        s.result("doubled", 2 * x, "length", "y", "Doubled length")
        # written by hand instead of with Sheet.equation, and wrong by one
        s.add(Equation(name="y", expression="2*x", operands=(("x", x),),
                       result=Quantity(value=2 * x + 1, dimension="length"),
                       result_key="doubled"))
        return s.output()

    def verify(self, ctx, output):
        return [VerificationRow(quantity="doubled", closed_form=2 * ctx.inputs["x"],
                                independent=ctx.inputs["x"] + ctx.inputs["x"],
                                tolerance=1e-12, method="addition")]


@hookimpl
def reportgen_register_calc_types(context):
    return [BrokenEquation()]
