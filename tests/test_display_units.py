"""Numbers a checker can redo (issue 16): every equation of the sample set, in SI and in US
customary, re-evaluated from its printed substituted values (each read back with its printed
unit through the job parser) gives its printed result to the printed figures; one symbol
keeps one meaning in a section; display and parsing round-trip."""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reportgen.calc.plugin_set import load_plugin_set
from reportgen.document.compute import compute_document
from reportgen.formula import evaluate
from reportgen.job.load import load_job
from reportgen.model import Equation, InputsTable, ResultsTable
from reportgen.render.math import equation_latex, printed_operands, printed_result
from reportgen.units import (
    DIMENSIONS,
    SI_LADDERS,
    DisplayUnits,
    display_units,
    group_digits,
    parse_quantity,
    ungroup,
)

SAMPLES = sorted((Path(__file__).parents[1] / "sample_jobs").glob("*.toml"))


@pytest.fixture(scope="module")
def documents():
    plugins = load_plugin_set()
    docs = []
    for path in SAMPLES:
        job = load_job(path, plugins)
        for system in ("SI", "US"):
            info = dataclasses.replace(job.info, units=system)
            docs.append((f"{path.stem}-{system}",
                         compute_document(dataclasses.replace(job, info=info), plugins)))
    return docs


def read_back(text: str, label: str, dimension: str) -> float:
    """What a checker reads: the printed number in its printed unit, to SI (the job parser)."""
    number = ungroup(text)
    if not label:
        return float(number)
    unit = (label.replace("·", "*").replace("²", "**2").replace("³", "**3")
            .replace("µ", "u").replace("°", "deg"))
    return parse_quantity(f"{number} {unit}", dimension)


def last_place(text: str) -> float:
    """One unit in the last printed place, relative to the printed value."""
    digits = ungroup(text).lstrip("-").replace(".", "").lstrip("0").split("e")[0]
    return 10.0 ** (1 - max(len(digits), 1))


def test_every_printed_result_follows_from_the_printed_substitution(documents):
    # a checker with a calculator: printed values (with units) in, printed result out,
    # within one unit in the last printed figure (plus what the operands' own rounding
    # carries through the formula: their relative half-place, weighted by a sensitivity
    # estimated by finite differences)
    count = 0
    for name, doc in documents:
        key = doc.info.display
        for section in doc.sections:
            for eq in (b for b in section.blocks if isinstance(b, Equation)):
                dims = dict(eq.operand_dimensions)
                assert all(dims.values()), f"{name}: {eq.name} has an operand of no dimension"
                shown = printed_operands(eq, key)
                values = {n: read_back(t, u, dims[n]) for n, (t, u) in shown.items()}
                again = evaluate(eq.expression, values)
                text, label = printed_result(eq, key)
                printed = read_back(text, label, eq.result.dimension)
                carried = 0.0
                for n, v in values.items():
                    h = 1e-7 * (abs(v) or 1.0)
                    bumped = evaluate(eq.expression, {**values, n: v + h})
                    carried += abs((bumped - again) / h) * abs(v) * 0.5 * last_place(
                        shown[n][0])
                tol = abs(printed) * last_place(text) + carried + 1e-12
                assert abs(again - printed) <= tol, (
                    f"{name} {section.calc_id}: {eq.name} = {eq.expression}: printed"
                    f" {shown} give {again}, printed result {text} {label}")
                count += 1
    assert count > 200


SI_UNITS = {"m", "mm", "µm", "kg", "g", "t", "N", "kN", "MN", "N/m", "kN/m", "MN/m",
            "mm/s", "µm/s", "m/s", "m/s²", "mm/s²", "kg·mm", "kg·m", "g·mm", "N·s/m",
            "kN·s/m", "N·m", "kN·m", "Pa", "kPa", "MPa"}


def test_a_us_package_prints_no_si_unit_the_job_did_not_give():
    du = display_units("US")
    for dimension in DIMENSIONS:
        for value in (1e-6, 3e-3, 0.4, 25.0, 1.5e4, 2e8):
            for equation in (False, True):
                assert du.show(value, dimension, equation=equation)[1] not in SI_UNITS


@pytest.mark.parametrize(("value", "dimension", "shown"), [
    # issue 16's examples: the prefix keeps four digits at most before the point
    (0.05, "length", ("50", "mm")),
    (2.355e-5, "length", ("23.55", "µm")),
    (5.193e-6, "velocity", ("5.193", "µm/s")),
    (3e-6, "velocity", ("3", "µm/s")),
    (101e6, "stiffness", ("101", "MN/m")),
    (45e3, "force", ("45", "kN")),
    (0.0012, "mass_length", ("1.2", "kg·mm")),
    (19.5, "rotational_speed", ("1170", "rpm")),
])
def test_si_prefixes(value, dimension, shown):
    assert display_units("SI").show(value, dimension) == shown


def test_us_digits_are_grouped_and_the_job_unit_is_kept():
    k = 14800 * 4.4482216152605 / 0.0254  # 14 800 lbf/in (NIST SP 811 factors)
    assert display_units("US").show(k, "stiffness", 3) == (group_digits("14800"), "lbf/in")
    assert group_digits("14800") == "14\u202f800" and group_digits("2500") == "2500"
    mils = display_units("US;length=mil")
    assert mils.show(2.54e-5, "length") == ("1", "mil")


def test_powers_of_ten_and_units_are_bracketed_inside_a_power():
    sheet_eq = Equation(name="A", expression="sqrt(x**2 + y**2)", operands=(("x", 1.27e-3),
                        ("y", 1.27006e-5)), result=_q(1.27006e-3, "length"),
                        operand_dimensions=(("x", "length"), ("y", "length")))
    latex = equation_latex(sheet_eq, "SI;length=m")
    assert r"{(1.27\ \mathrm{mm})}^{2}" in latex and r"{(12.701\ \mathrm{µm})}^{2}" in latex
    plain = equation_latex(dataclasses.replace(sheet_eq, operand_dimensions=(
        ("x", "dimensionless"), ("y", "dimensionless")), result=_q(1.27006e-3)), "SI")
    assert r"{(1.2701 \times 10^{-5})}^{2}" in plain


def _q(value, dimension="dimensionless"):
    from reportgen.model import Quantity

    return Quantity(value=value, dimension=dimension)


def test_one_symbol_one_meaning_in_every_section(documents):
    # a symbol bound in the inputs, the equations or the results of one section names one
    # dimension and one value (results and equations of the same quantity agree to the
    # printed figures; a symbol recomputed a second way, like f_n from δ_st, may differ
    # only by the rounding of its constant)
    for name, doc in documents:
        for section in doc.sections:
            seen: dict[str, tuple[str, float, str]] = {}

            def bind(symbol, dimension, value, where, section=section, seen=seen,
                     name=name):
                if not symbol or "," in symbol:
                    return
                if symbol in seen:
                    dim0, v0, where0 = seen[symbol]
                    assert dim0 == dimension, (
                        f"{name} {section.calc_id}: {symbol} is {dim0} in {where0} and"
                        f" {dimension} in {where}")
                    assert math.isclose(v0, value, rel_tol=2e-3, abs_tol=1e-12), (
                        f"{name} {section.calc_id}: {symbol} = {v0} in {where0} and"
                        f" {value} in {where}")
                else:
                    seen[symbol] = (dimension, value, where)

            for block in section.blocks:
                if isinstance(block, InputsTable):
                    for row in block.rows:
                        if row.quantity is not None and "[" not in row.name:  # not a pair
                            bind(row.symbol, row.quantity.dimension, row.quantity.value,
                                 f"the table {block.title!r}")
                if isinstance(block, Equation):
                    dims = dict(block.operand_dimensions)
                    for n, v in block.operands:
                        bind(n, dims[n], v, f"the equation for {block.name}")
                    bind(block.name, block.result.dimension, block.result.value,
                         f"the equation for {block.name}")
                if isinstance(block, ResultsTable):
                    for row in block.rows:
                        bind(row.symbol, row.quantity.dimension, row.quantity.value,
                             "the results")


# ---------------------------------------------------------------- round trips

FAMILIES = sorted(set(SI_LADDERS) | {"frequency", "rotational_speed", "angular_frequency",
                                     "dimensionless"})


@settings(max_examples=300, deadline=None)
@given(st.sampled_from(FAMILIES), st.floats(min_value=1e-7, max_value=1e9),
       st.booleans(), st.sampled_from(["SI", "US"]))
def test_display_then_parse_round_trips_to_the_printed_precision(dimension, value, negative,
                                                                 system):
    # what a package prints, read back by the job parser, is the value to within half a
    # unit in the last printed figure (4 significant figures: 5e-4 relative at most)
    v = -value if negative else value
    du = DisplayUnits(system=system)
    text, label = du.show(v, dimension, 4)
    back = read_back(text.replace("e", "e"), label, dimension)
    assert math.isclose(back, v, rel_tol=5.01e-4), (v, text, label, back)
