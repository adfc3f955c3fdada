"""Fixture plugin: the core capabilities the next calc types need, used once each.

- ``fixture_counted``: counts every call of its compute and verify (a line in the file
  named by ``REPORTGEN_TEST_COUNT``), to prove a build computes each calc once, whatever
  processes it uses; it has an equation and a figure, so the drawing pool is used.
- ``fixture_rows``: a table input (rows of quantities and text), a data-file input, a
  choice, a quantity table, a matrix and a curve from the printed formula.
"""

from __future__ import annotations

import csv
import io
import os
from dataclasses import dataclass

from reportgen import (
    CalcType,
    Column,
    Figure,
    InputSpec,
    Matrix,
    Panel,
    Series,
    Sheet,
    Source,
    Table,
    VerificationRow,
    hookimpl,
)

FIXTURE = Source(key="fixture", citation="Test fixture; no published method.")


def _count(what: str, calc_id: str) -> None:
    path = os.environ.get("REPORTGEN_TEST_COUNT")
    if path:
        with open(path, "a", encoding="utf-8") as fh:
            fh.write(f"{what} {calc_id} {os.getpid()}\n")


class Counted(CalcType):
    name = "fixture_counted"
    title = "Fixture: counted calls"
    version = "0.0.1"
    purpose = "Compute k/m and count the calls."
    inputs = (InputSpec(name="mass", symbol="m", description="Mass", dimension="mass",
                        positive=True),
              InputSpec(name="stiffness", symbol="k", description="Stiffness",
                        dimension="stiffness", positive=True))
    sources = (FIXTURE,)

    def compute(self, ctx):
        _count("compute", ctx.calc_id)
        s = Sheet(self.inputs)
        w2 = s.equation("omega_n", "sqrt(k/m)", "angular_frequency", k=ctx.inputs["stiffness"],
                        m=ctx.inputs["mass"], key="omega_n", key_result=True,
                        description="Natural circular frequency")
        x = tuple(float(i) for i in range(5))
        s.add(Figure(key="line", caption=f"A line of slope {w2:.3g}", alt="a line", x_label="x",
                     panels=(Panel(series=(Series(x=x, y=tuple(w2 * v for v in x)),),
                                   y_label="y"),)))
        return s.output()

    def verify(self, ctx, output):
        _count("verify", ctx.calc_id)
        value = next(r.quantity.value for r in output.results if r.key == "omega_n")
        again = (ctx.inputs["stiffness"] / ctx.inputs["mass"]) ** 0.5
        return [VerificationRow(quantity="omega_n", closed_form=value, independent=again,
                                tolerance=1e-12, method="power 1/2", unit="angular_frequency")]


class Rows(CalcType):
    name = "fixture_rows"
    title = "Fixture: rows, a data file, a matrix"
    version = "0.0.1"
    purpose = "Sum the stiffness of the rows and read the data file."
    inputs = (
        InputSpec(name="springs", symbol="k_i", description="Springs", kind="table",
                  min_rows=1, max_rows=12, columns=(
                      Column(name="x", description="Position", dimension="length"),
                      Column(name="k", description="Stiffness", dimension="stiffness",
                             positive=True),
                      Column(name="label", description="Label", kind="text", required=False),
                  )),
        InputSpec(name="record", symbol="D", description="Readings", kind="file",
                  formats=(".csv",), required=False),
        InputSpec(name="mode", symbol="M", description="Mode", kind="choice",
                  choices=("sum", "mean"), default="sum"),
    )
    sources = (FIXTURE,)

    def compute(self, ctx):
        rows = ctx.inputs["springs"]
        s = Sheet()
        total = sum(r["k"] for r in rows)
        if ctx.inputs["mode"] == "mean":
            total /= len(rows)
        s.result("total_stiffness", total, "stiffness", "K", "Total stiffness", key_result=True)
        if "record" in ctx.files:
            readings = list(csv.reader(io.TextIOWrapper(ctx.files["record"].open(), "utf-8")))
            s.result("readings", float(len(readings) - 1), "dimensionless", "n", "Readings")
        s.add(Table(title="Springs again", header=("Position", "Stiffness", "Note"),
                    units=("length", "stiffness", ""),
                    rows=tuple((r["x"], r["k"], r.get("label", "")) for r in rows)))
        n = len(rows)
        s.add(Matrix(title="Stiffness matrix", symbol="K",
                     values=tuple(tuple(r["k"] if i == j else 0.0 for j in range(n))
                                  for i, r in enumerate(rows)),
                     row_labels=tuple(f"{i + 1}" for i in range(n)),
                     column_labels=tuple(f"{i + 1}" for i in range(n)),
                     dimensions=(("stiffness",) * n,)))
        r = [0.5 + 0.25 * i for i in range(9)]
        t = s.curve("1/abs(1 - r**2)", r=r)
        s.add(Figure(key="curve", caption="A curve from the printed formula", alt="curve",
                     x_label="r", panels=(Panel(series=(Series(x=tuple(r),
                                                               y=tuple(float(v) for v in t)),),
                                                y_label="T", y_scale="log"),)))
        return s.output()

    def verify(self, ctx, output):
        value = next(r.quantity.value for r in output.results if r.key == "total_stiffness")
        ks = [r["k"] for r in ctx.inputs["springs"]]
        again = float(sum(sorted(ks))) / (len(ks) if ctx.inputs["mode"] == "mean" else 1)
        return [VerificationRow(quantity="total_stiffness", closed_form=value,
                                independent=again, tolerance=1e-12, method="sorted sum",
                                unit="stiffness")]


@dataclass(frozen=True)
class Limit:
    """A criterion as a plugin may register one: the core needs name, title, source."""

    name: str
    title: str
    source: str
    value: float
    aliases: tuple[str, ...] = ()


@hookimpl
def reportgen_register_criteria(context):
    return [Limit(name="Fixture-limit-A", title="A fixture limit", source="Test fixture",
                  value=1.0, aliases=("fixture a",))]


@hookimpl
def reportgen_register_calc_types(context):
    return [Counted(), Rows()]
