"""Fixture plugin: calc types that build, but each breaks one clause of the kit's contract.

The core accepts them; reportgen.testing.assert_calc_contract must not.
"""

from reportgen import CalcType, InputSpec, Sheet, Source, VerificationRow, hookimpl

SOURCE = Source(key="none", citation="fixture, no source")
X = InputSpec(name="x", symbol="x", description="A number")


class _Good(CalcType):
    version = "0.0.1"
    purpose = "Difference of two nearly equal numbers."
    inputs = (X,)
    sources = (SOURCE,)

    def compute(self, ctx):
        s = Sheet()
        s.declare(x="dimensionless")  # also where the input spec lacks its symbol
        s.equation("y", "x + 1", x=ctx.inputs["x"], key="y", description="Shifted")
        return s.output()

    def verify(self, ctx, output):
        return [VerificationRow(quantity="y", closed_form=output.results[0].quantity.value,
                                independent=ctx.inputs["x"] + 1.0, tolerance=1e-12,
                                method="addition")]


class Unprintable(_Good):
    name = "fixture_unprintable"
    title = "Fixture: an equation whose printed figures do not reproduce"

    def compute(self, ctx):
        s = Sheet()
        # exact in floating point, but at 6 printed figures both operands read 1.00000
        s.equation("d", "a - b", a=1.0 + 1e-7, b=1.0, key="d", description="Difference",
                   dims={"a": "dimensionless", "b": "dimensionless"})
        return s.output()

    def verify(self, ctx, output):
        return [VerificationRow(quantity="d", closed_form=output.results[0].quantity.value,
                                independent=(1.0 + 1e-7) - 1.0, tolerance=1e-9, method="same")]


class Unverified(_Good):
    name = "fixture_unverified"
    title = "Fixture: no independent verification"

    def verify(self, ctx, output):
        return None


class NoSymbol(_Good):
    name = "fixture_no_symbol"
    title = "Fixture: an input without a symbol"
    inputs = (InputSpec(name="x", symbol="", description="A number"),)


class NoSources(_Good):
    name = "fixture_no_sources"
    title = "Fixture: no published source"
    sources = ()


class NoEquations(_Good):
    name = "fixture_no_equations"
    title = "Fixture: results without working"

    def compute(self, ctx):
        s = Sheet()
        s.result("y", ctx.inputs["x"] + 1, "dimensionless", "y", "Shifted")
        return s.output()


@hookimpl
def reportgen_register_calc_types(context):
    return [Unprintable(), Unverified(), NoSymbol(), NoSources(), NoEquations()]
