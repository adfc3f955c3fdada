"""Core pieces: units at the edges, the formula grammar, the document model, templates."""

from __future__ import annotations

import json
import math
import re

import pytest
from conftest import assert_case

from reportgen.formula import FormulaError, evaluate, names_in, symbol_latex, to_latex
from reportgen.model import BLOCK_TYPES, Document, from_json, to_json
from reportgen.render.html import builtin_templates
from reportgen.testing import compute, make_job
from reportgen.units import STANDARD_GRAVITY, UnitProblem, format_number, parse_quantity

# ---------------------------------------------------------------- units


@pytest.mark.parametrize("text,dim,expected", [
    ("1500 rpm", "frequency", 25.0),          # revolutions per minute: 1500/60 Hz
    ("980 rpm", "frequency", 980 / 60),
    ("25 Hz", "frequency", 25.0),
    ("157.07963267948966 rad/s", "frequency", 25.0),  # an angular value given for f
    ("0.1 g", "acceleration", 0.1 * 9.80665),  # standard gravity (CGPM 1901)
    ("500 g", "mass", 0.5),                    # "g" stays grams for a mass
    ("350 kN/m", "stiffness", 350e3),
    ("1 kip/in", "stiffness", 4448.2216152605 / 0.0254),  # NIST SP 811 factors
    ("1 lbf", "force", 4.4482216152605),
    ("1 lb", "mass", 0.45359237),
    ("2 in", "length", 0.0508),
    ("0.02 kg*m", "mass_length", 0.02),
    ("10 g*mm", "mass_length", 1e-5),
    ("90 deg", "angle", math.pi / 2),
])
def test_parse_quantity_si(text, dim, expected):
    assert parse_quantity(text, dim) == pytest.approx(expected, rel=1e-12)


def test_rpm_never_goes_through_radians():
    # pint's own conversion gives 1500 rpm = 157 Hz; a speed is revolutions per minute.
    assert parse_quantity("1500 rpm", "frequency") != pytest.approx(157.08, rel=1e-3)


@pytest.mark.parametrize("raw,dim,fragment", [
    ("350 kg", "stiffness", "stiffness"),
    (350, "stiffness", "plain number"),
    ("abc", "mass", "cannot read"),
    ("nan kg", "mass", "finite"),
    (True, "dimensionless", "boolean"),
    ("5 mm", "dimensionless", "expected dimensionless"),
])
def test_parse_quantity_errors_say_what_was_expected(raw, dim, fragment):
    with pytest.raises(UnitProblem, match=fragment):
        parse_quantity(raw, dim)


def test_single_tone_conversions_j4(check_cases):
    # J4_single_tone_unit_conversions (common practice, no source): v_pk = sqrt(2) v_rms,
    # d_pk = v_pk / (2 pi f), through the formula evaluator.
    case = check_cases["J4_single_tone_unit_conversions"]
    f, v_rms = case["inputs"]["f"]["value"], case["inputs"]["v_rms"]["value"]
    v_pk = evaluate("sqrt(2)*v_rms", {"v_rms": v_rms})
    assert_case(v_pk, case, "v_peak")
    assert_case(evaluate("v_pk/(2*pi*f)", {"v_pk": v_pk, "f": f}), case, "d_peak")
    assert_case(evaluate("v_pk*2*pi*f/9.80665", {"v_pk": v_pk, "f": f}),
                case, "a_peak_g")


@pytest.mark.parametrize("value,text", [(2.71828, "2.718"), (0.0336228, "0.03362"),
                                        (350000.0, "350000"), (1.0e-7, "1e-7"),
                                        (9.9996, "10"), (-0.05, "-0.05")])
def test_format_number_significant_figures(value, text):
    assert format_number(value, 4) == text


# ---------------------------------------------------------------- formula


def test_formula_evaluates_and_prints_both_forms():
    values = {"k": 350000.0, "m": 1200.0}
    assert evaluate("sqrt(k/m)", values) == pytest.approx(math.sqrt(350000 / 1200))
    assert to_latex("sqrt(k/m)") == r"\sqrt{\dfrac{k}{m}}"
    assert to_latex("sqrt(k/m)", values) == r"\sqrt{\dfrac{350000}{1200}}"
    assert names_in("omega_n/(2*pi)") == {"omega_n"}
    assert symbol_latex("delta_st") == r"\delta_{\mathrm{st}}"
    assert symbol_latex("omega_n") == r"\omega_{n}"


def test_formula_precedence_parenthesises():
    tex = to_latex("(1 - r**2)**2 + (2*zeta*r)**2")
    assert r"{\left(1 - {r}^{2}\right)}^{2}" in tex
    assert to_latex("a - (b - c)") == r"a - \left(b - c\right)"
    assert to_latex("x", {"x": -2.0}) == r"\left(-2\right)"


@pytest.mark.parametrize("expr", ["__import__('os')", "a.b", "[1]", "lambda: 1", "f(x)",
                                  "'text'", "a if b else c"])
def test_formula_grammar_refuses_anything_else(expr):
    with pytest.raises(FormulaError):
        evaluate(expr, {"a": 1.0, "b": 1.0, "c": 1.0, "x": 1.0})


def test_formula_division_by_zero_is_a_formula_error():
    with pytest.raises(FormulaError):
        evaluate("1/(1 - r)", {"r": 1.0})


# ---------------------------------------------------------------- model


def _doc() -> Document:
    return compute(make_job([{"plugin": "free_vibration", "inputs": {
        "mass": "100 kg", "stiffness": "100 kN/m", "damping_ratio": 0.02,
        "initial_displacement": "1 mm"}}]))


def test_model_is_immutable_and_round_trips_json():
    doc = _doc()
    with pytest.raises(AttributeError):
        doc.info.title = "changed"  # type: ignore[misc]
    data = json.loads(json.dumps(to_json(doc)))
    assert from_json(data) == doc


def test_every_equation_prints_the_result_of_its_own_operands():
    from reportgen.testing import assert_equations_reproduce

    assert assert_equations_reproduce(_doc()) >= 10


def test_every_block_type_has_a_template_macro():
    text = (builtin_templates() / "blocks.html").read_text(encoding="utf-8")
    macros = set(re.findall(r"macro block_(\w+)\(", text))
    assert {t.__name__ for t in BLOCK_TYPES} <= macros


def test_templates_never_mark_job_text_safe():
    for path in builtin_templates().glob("*.html"):
        assert "|safe" not in path.read_text(encoding="utf-8").replace(" ", ""), path


def test_standard_gravity_value():
    # CGPM 1901 / ISO 80000-3: g_n = 9.80665 m/s² exactly.
    assert STANDARD_GRAVITY == 9.80665
