"""Figures in the package's display units (issue 16): an axis shows the unit the job gave
(µm in an SI package, mil in a US one) and its numbers are the SI values times that unit's
factor, pint being the independent conversion."""

from __future__ import annotations

import math

import numpy as np
import pint
import pytest

from reportgen.model import Figure
from reportgen.testing import compute, make_job
from reportgen.units import axis_unit

UREG = pint.UnitRegistry()


def _figure(doc, key: str) -> Figure:
    figs = [b for b in doc.sections[0].blocks if isinstance(b, Figure) and b.key == key]
    assert figs, f"no figure {key!r}"
    return figs[0]


# pint's own registry reads "mil" as an angle: its "thou" is the trade's mil (0.001 in)
@pytest.mark.parametrize(("system", "x0", "pint_unit", "label"), [
    ("SI", "250 um", "micrometer", "µm"),
    ("US", "12 mil", "thou", "mil"),
])
def test_free_response_axis_in_the_unit_the_job_gave(system, x0, pint_unit, label):
    m, k = 500.0, 2.0e6
    doc = compute(make_job({"plugin": "free_vibration",
                            "inputs": {"mass": f"{m} kg", "stiffness": f"{k} N/m",
                                       "damping_ratio": 0.0, "initial_displacement": x0}},
                           units=system))
    fig = _figure(doc, "time-history")
    panel = fig.panels[0]
    assert panel.y_label == f"Displacement x [{label}]"
    series = panel.series[0]
    # undamped free response x(t) = x0·cos(ωn·t), ωn = √(k/m) (Thomson & Dahleh, Theory of
    # Vibration with Applications, 5th ed., §2.1), in SI, then to the axis unit by pint
    x0_si = UREG.Quantity(float(x0.split()[0]), pint_unit).to("m").magnitude
    t = np.asarray(series.x)
    expected = UREG.Quantity(x0_si * np.cos(math.sqrt(k / m) * t), "m").to(pint_unit).magnitude
    assert np.allclose(series.y, expected, rtol=1e-9, atol=1e-9 * abs(expected).max())


def test_a_firm_or_job_unit_sets_the_axis_factor():
    # pint as the independent conversion of 1 SI unit into the chosen one
    for key, dimension, unit, pint_si, pint_unit in (
            ("SI;stiffness=N/mm", "stiffness", "N/mm", "N/m", "N/mm"),
            ("SI;length=µm", "length", "µm", "m", "micrometer"),
            ("US;length=mil", "length", "mil", "m", "thou"),
            ("US", "force", "lbf", "N", "lbf"),
            ("SI", "velocity", "mm/s", "m/s", "mm/s")):
        factor, label = axis_unit(key, dimension)
        assert label == unit
        assert factor == pytest.approx(UREG.Quantity(1.0, pint_si).to(pint_unit).magnitude,
                                       rel=1e-12)


def test_forced_response_axes_follow_the_job_length_unit():
    # an eccentricity given in µm makes the package's lengths µm: the displacement axis is
    # in µm and the operating point sits at the printed X (SI) converted by pint
    doc = compute(make_job({"plugin": "forced_response",
                            "inputs": {"mass": "800 kg", "stiffness": "3.2e6 N/m",
                                       "damping_ratio": 0.05, "speed": "1480 rpm",
                                       "unbalance_mass": "0.2 kg",
                                       "eccentricity": "300 um"}}))
    fig = _figure(doc, "frequency-response")
    panel = fig.panels[0]
    assert panel.y_label == "Displacement X [µm]"
    x_si = next(r.quantity.value for r in doc.sections[0].results
                if r.key == "displacement_amplitude")
    point = next(mk for mk in panel.markers if mk.label == "operating point")
    assert point.y == pytest.approx(UREG.Quantity(x_si, "m").to("micrometer").magnitude,
                                    rel=1e-9)
