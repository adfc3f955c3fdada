"""A named operand prints with its unit or not at all: the Sheet refuses one whose dimension
is nowhere declared (issue 16), and the core reports it as the calc's plugin error. Ratios
above 1 are named as amplification, with the level in dB (forced_response, isolation)."""

from __future__ import annotations

import math

import pytest

from reportgen import CalcOutput, CalcType, InputSpec, Sheet
from reportgen.calc.plugin_set import RegisteredCalc
from reportgen.document.compute import compute_calc
from reportgen.errors import PluginError
from reportgen.formula import FormulaError
from reportgen.job.load import CalcSpec
from reportgen.model import Equation, Figure
from reportgen.testing import compute, make_job


def test_an_undeclared_operand_is_refused_naming_it_and_the_formula():
    s = Sheet()
    with pytest.raises(FormulaError) as err:
        s.equation("F", "k*x", "force", k=2.0e5, x=0.01)
    assert "k, x" in str(err.value) and "k*x" in str(err.value)


def test_declared_operands_and_plain_numbers_are_fine():
    # every way the Sheet learns a dimension: input spec, declare, dims=, an earlier result
    s = Sheet([InputSpec(name="stiffness", symbol="k", description="k",
                         dimension="stiffness")])
    s.declare(x="length")
    f = s.equation("F", "k*x", "force", k=2.0e5, x=0.01)
    w = s.equation("W", "F*2*pi", "force", F=f)  # plain numbers and constants need nothing
    s.equation("n", "W/F_0", dims={"F_0": "force"}, W=w, F_0=1000.0)
    eq = next(b for b in s.output().blocks if isinstance(b, Equation) and b.name == "F")
    assert dict(eq.operand_dimensions) == {"k": "stiffness", "x": "length"}


class _Careless(CalcType):
    name = "careless"
    title = "A calc with an undeclared operand"
    version = "0"
    inputs = ()

    def compute(self, ctx):
        s = Sheet()
        s.equation("y", "a + 1", a=1.0)
        return s.output()

    def verify(self, ctx, output: CalcOutput):
        return None


def test_the_core_reports_it_as_a_plugin_error_naming_the_calc():
    spec = CalcSpec(id="c-1", plugin="careless", title="t", notes="", inputs={},
                    given=frozenset(), criteria={}, criteria_given=frozenset(), raw_inputs={},
                    raw_criteria={})
    reg = RegisteredCalc(calc_type=_Careless(), plugin="careless", package="x",
                         package_version="0")
    with pytest.raises(PluginError) as err:
        compute_calc(spec, reg, "SI")
    assert err.value.calc == "c-1" and "no dimension declared for a" in str(err.value)


def _equations(doc) -> dict[str, Equation]:
    return {b.name: b for b in doc.sections[0].blocks if isinstance(b, Equation)}


@pytest.mark.parametrize(("frequency", "amplifies"), [("12 Hz", True), ("40 Hz", False)])
def test_forced_response_names_a_force_ratio_above_one_as_amplification(frequency, amplifies):
    # f_n = √(k/m)/2π = √(4e5/100)/2π = 10.07 Hz: at 12 Hz r < √2 and T_F > 1, at 40 Hz
    # r > √2 and T_F < 1 (Thomson & Dahleh, Theory of Vibration, 5th ed., §3.5: T = 1 at
    # r = √2); L_T = −20·log10 T_F in dB (definition of the transmission level)
    doc = compute(make_job({"plugin": "forced_response",
                            "inputs": {"mass": "100 kg", "stiffness": "400 kN/m",
                                       "damping_ratio": 0.05, "force_amplitude": "500 N",
                                       "frequency": frequency}}))
    eqs = _equations(doc)
    t_f, level = eqs["T_F"], eqs["L_T"]
    assert (t_f.result.value > 1.0) is amplifies
    assert level.result.dimension == "level"  # printed in dB
    assert level.result.value == pytest.approx(-20 * math.log10(t_f.result.value), rel=1e-12)
    if amplifies:
        assert "amplification ×" in t_f.description and "(no isolation)" in t_f.description
        assert "amplification ×" in level.description and level.result.value < 0
    else:
        assert "amplification" not in t_f.description
        assert level.description.startswith("Isolation in decibels")


def test_support_motion_ratio_above_one_is_amplification():
    # base excitation near resonance: T = X/Y > 1 for r < √2 (Rao, Mechanical Vibrations,
    # 6th ed., §3.6.2)
    doc = compute(make_job({"plugin": "forced_response",
                            "inputs": {"mass": "100 kg", "stiffness": "400 kN/m",
                                       "damping_ratio": 0.05, "frequency": "11 Hz",
                                       "base_displacement": "0.1 mm"}}))
    eqs = _equations(doc)
    assert eqs["T"].result.value > 1.0
    assert "amplification ×" in eqs["T"].description and "(no isolation)" in eqs["T"].description
    assert eqs["L_T"].result.value < 0 and eqs["L_T"].result.dimension == "level"


def test_isolation_on_amplifying_mounts_uses_the_same_wording():
    # f_n = √(4·2000e3/3200)/2π = 7.96 Hz, f = 1480/60 = 24.7 Hz: r = 3.1 > √2 isolates; at
    # 600 rpm, r = 1.26 < √2, T > 1 (Thomson & Dahleh §3.5)
    doc = compute(make_job({"plugin": "isolation",
                            "inputs": {"mass": "3200 kg", "speed": "600 rpm", "mounts": 4,
                                       "stiffness_per_mount": "2000 kN/m"}}))
    eqs = _equations(doc)
    assert eqs["T"].result.value > 1.0
    assert "amplification ×" in eqs["eta"].description
    assert "(no isolation)" in eqs["eta"].description
    assert "amplification ×" in eqs["L_T"].description and eqs["L_T"].result.value < 0
    # its charts: the point is inside the axes and the caption names no negative efficiency
    figs = {b.key: b for b in doc.sections[0].blocks if isinstance(b, Figure)}
    chart = figs["selection-chart"]
    assert "amplification ×" in chart.caption and "η = -" not in chart.caption
    lo, hi = chart.panels[0].y_range
    point = next(m for m in chart.panels[0].markers if m.label == "selected")
    assert lo <= point.y <= hi
    t_chart = figs["transmissibility"]
    (x_lo, x_hi), (y_lo, y_hi) = t_chart.x_range, t_chart.panels[0].y_range
    op = next(m for m in t_chart.panels[0].markers if m.label == "operating point")
    assert x_lo <= op.x <= x_hi and y_lo <= op.y <= y_hi


def test_forced_response_point_stays_inside_a_capped_axis():
    # nearly undamped (ζ = 0.001) just off resonance: the log axis is capped for the curve's
    # sake, yet the operating point (|X| = F_0/k·D, D = 1/|1 − r²| nearly, Thomson §3.1)
    # stays inside it
    doc = compute(make_job({"plugin": "forced_response",
                            "inputs": {"mass": "100 kg", "stiffness": "400 kN/m",
                                       "damping_ratio": 0.001, "force_amplitude": "500 N",
                                       "frequency": "10.06 Hz"}}))  # the old cap fell below it
    fig = next(b for b in doc.sections[0].blocks
               if isinstance(b, Figure) and b.key == "frequency-response")
    for panel in fig.panels[:2]:
        if panel.y_range is None:
            continue
        lo, hi = panel.y_range
        for mk in panel.markers:
            if mk.y is not None:
                assert lo <= mk.y <= hi, (panel.y_label, mk)
