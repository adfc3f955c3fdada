"""The trade's spellings of units (issue 16's parsing table): each is read by the parser to
the SI value an independent definition gives, and matched by the job schema's pattern."""

from __future__ import annotations

import math
import re

import pytest

from reportgen.job.schema import unit_pattern
from reportgen.units import (
    STANDARD_GRAVITY,
    UnitProblem,
    input_note,
    parse_quantity,
    parse_spread,
)

INCH = 0.0254  # exact, international yard and pound agreement (1959)
POUND = 0.45359237  # kg, exact, same agreement
OUNCE = POUND / 16  # avoirdupois ounce
LBF = POUND * STANDARD_GRAVITY  # N, pound-force by standard gravity (NIST SP 811, B.8)
FOOT = 12 * INCH

# (written, dimension, SI value) — the definitions above, NIST SP 811 appendix B
TABLE = [
    ("1 mil", "length", 1e-3 * INCH),  # a mil is 0.001 in (NIST SP 811 B.8 "mil")
    ("3 mils", "length", 3e-3 * INCH),
    ("2.5 mils/s", "velocity", 2.5e-3 * INCH),
    ("1480 rpm", "frequency", 1480 / 60),  # revolutions per minute, one cycle per revolution
    ("1480 RPM", "frequency", 1480 / 60),
    ("1480 r/min", "frequency", 1480 / 60),  # SI brochure's spelling of rev/min
    ("1480 rev/min", "frequency", 1480 / 60),
    ("1480 cpm", "frequency", 1480 / 60),  # cycles per minute
    ("1480 CPM", "frequency", 1480 / 60),
    ("1500 rpm", "angular_frequency", 2 * math.pi * 1500 / 60),
    ("25 Hz", "angular_frequency", 2 * math.pi * 25),
    ("157 rad/s", "frequency", 157 / (2 * math.pi)),
    ("14800 lb/in", "stiffness", 14800 * LBF / INCH),  # a spring rate in pounds per inch
    ("1200 lb/ft", "stiffness", 1200 * LBF / FOOT),
    ("14800 lbf/in", "stiffness", 14800 * LBF / INCH),
    ("9400 lbf", "mass", 9400 * LBF / STANDARD_GRAVITY),  # weight ÷ standard gravity
    ("2 kip", "mass", 2000 * LBF / STANDARD_GRAVITY),
    ("500 g", "mass", 0.5),  # grams where a mass is expected
    ("0.1 g", "acceleration", 0.1 * STANDARD_GRAVITY),  # g where an acceleration is expected
    ("0.3 g rms", "acceleration", 0.3 * STANDARD_GRAVITY * math.sqrt(2)),
    ("2 oz·in", "mass_length", 2 * OUNCE * INCH),  # unbalance
    ("2 oz*in", "mass_length", 2 * OUNCE * INCH),
    ("1200 g·mm", "mass_length", 1.2e-3),
    ("40 g·in", "mass_length", 0.040 * INCH),
    ("0.5 lb·in", "mass_length", 0.5 * POUND * INCH),
    # amplitude conventions; zero-to-peak when none is given. rms = peak/√2 and
    # peak-to-peak = 2 × peak for a sinusoid (any vibration text, e.g. Harris' Shock and
    # Vibration Handbook ch. 1)
    ("4.5 mm/s rms", "velocity", 4.5e-3 * math.sqrt(2)),
    ("4.5 mm/s", "velocity", 4.5e-3),
    ("4.5 mm/s pk", "velocity", 4.5e-3),
    ("0.2 mm pk-pk", "length", 0.1e-3),
    ("2 mils pk-pk", "length", 1e-3 * INCH),
]


@pytest.mark.parametrize(("text", "dimension", "si"), TABLE)
def test_trade_spelling_is_read_and_matched_by_the_schema(text, dimension, si):
    assert math.isclose(parse_quantity(text, dimension), si, rel_tol=1e-12)
    assert re.search(unit_pattern(dimension), text), (dimension, text)


@pytest.mark.parametrize(("text", "dimension", "note"), [
    ("9400 lbf", "mass", "weight ÷ standard gravity"),
    ("4263 kg", "mass", ""),
    ("14800 lb/in", "stiffness", "pound per length read as pound-force per length"),
    ("4.5 mm/s rms", "velocity", "rms × √2 (sinusoid)"),
    ("0.2 mm pk-pk", "length", "peak-to-peak ÷ 2"),
])
def test_the_inputs_table_says_how_a_value_was_read(text, dimension, note):
    assert input_note(text, dimension) == note


@pytest.mark.parametrize(("text", "dimension", "suggested"), [
    ("1480 revs", "frequency", "'rpm'"),
    ("5 furlongz", "length", "for example m, mm"),
    ("350 KN/m", "stiffness", "'kN/m'"),
])
def test_an_unknown_spelling_names_the_one_that_works(text, dimension, suggested):
    with pytest.raises(UnitProblem) as err:
        parse_quantity(text, dimension)
    assert suggested in str(err.value) and repr(text) in str(err.value), str(err.value)


@pytest.mark.parametrize(("text", "dimension"), [
    ("12 N", "mass"),  # an SI job states the mass; only lbf/kip weights are read as mass
    ("350 kg", "stiffness"),
    ("3 kg", "force"),
    ("25 Hz rms", "frequency"),  # a convention qualifies an amplitude only
    ("1 mil", "angle"),  # the trade's mil is a length
])
def test_what_stays_refused(text, dimension):
    with pytest.raises(UnitProblem):
        parse_quantity(text, dimension)


def test_ranges_and_tolerances_take_the_trade_spellings():
    s = parse_spread("900 to 1800 RPM", "frequency")
    assert math.isclose(s.low, 15.0) and math.isclose(s.high, 30.0)
    t = parse_spread("14800 lb/in ± 15 %", "stiffness")
    assert math.isclose(t.high, 1.15 * 14800 * LBF / INCH, rel_tol=1e-12)
    a = parse_spread("0.1 to 0.2 mm pk-pk", "length")
    assert math.isclose(a.low, 0.05e-3) and math.isclose(a.high, 0.1e-3)
