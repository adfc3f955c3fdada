"""An input as a table { value, source, tolerance }, as a range ("900 to 1800 rpm") or with
a tolerance ("350 kN/m ± 15 %", "+10 % / -5 %", "± 0.5 mm"): read by check and by the
schema alike, every problem naming the field.

Values against hand arithmetic: 1 lb = 0.45359237 kg exactly (NIST SP 811);
1500 rpm = 25 Hz; a tolerance of ±15 % on 350 kN/m spans 297.5 to 402.5 kN/m.
"""

from __future__ import annotations

import jsonschema
import pytest

from reportgen.calc.plugin_set import load_plugins
from reportgen.errors import JobError
from reportgen.job.load import load_job
from reportgen.job.schema import job_schema
from reportgen.testing import job_toml, make_job

BASE = {"mass": "1200 kg", "speed": "1500 rpm", "stiffness_per_mount": "350 kN/m"}


@pytest.fixture(scope="module")
def plugins():
    return load_plugins()


@pytest.fixture(scope="module")
def schema(plugins):
    return job_schema(plugins)


def load(tmp_path, plugins, inputs, criteria=None):
    calc = {"plugin": "isolation", "inputs": {**BASE, **inputs}}
    if criteria:
        calc["criteria"] = criteria
    job = make_job(calc)
    path = tmp_path / "job.toml"
    path.write_text(job_toml(job), encoding="utf-8")
    return job, load_job(path, plugins).calcs[0]


def test_a_source_travels_with_its_input(tmp_path, plugins, schema):
    job, c = load(tmp_path, plugins, {"mass": {"value": "9400 lb",
                                               "source": "Maker's data sheet DS-114 rev 3"}})
    assert c.inputs["mass"] == pytest.approx(9400 * 0.45359237)
    assert c.sources == {"inputs.mass": "Maker's data sheet DS-114 rev 3"}
    jsonschema.validate(job, schema)


@pytest.mark.parametrize("written, nominal, low, high", [
    ("900 to 1800 rpm", 22.5, 15.0, 30.0),  # mid-range nominal
    ("15 Hz to 30 Hz", 22.5, 15.0, 30.0),
])
def test_a_range_has_its_mid_point_as_nominal(tmp_path, plugins, schema, written, nominal,
                                              low, high):
    job, c = load(tmp_path, plugins, {"speed": written})
    assert c.inputs["speed"] == pytest.approx(nominal)
    s = c.spreads["speed"]
    assert (s.low, s.high, s.kind) == (pytest.approx(low), pytest.approx(high), "range")
    jsonschema.validate(job, schema)


@pytest.mark.parametrize("value, low, high", [
    ("350 kN/m ± 15 %", 297.5e3, 402.5e3),
    ({"value": "350 kN/m", "tolerance": "+10 % / -5 %"}, 332.5e3, 385e3),
    ({"value": "350 kN/m", "tolerance": "± 20 kN/m"}, 330e3, 370e3),
    ("350 kN/m +/- 20 kN/m", 330e3, 370e3),
])
def test_a_tolerance_keeps_the_stated_value(tmp_path, plugins, schema, value, low, high):
    job, c = load(tmp_path, plugins, {"stiffness_per_mount": value})
    assert c.inputs["stiffness_per_mount"] == pytest.approx(350e3)
    s = c.spreads["stiffness_per_mount"]
    assert (s.low, s.high) == (pytest.approx(low), pytest.approx(high))
    jsonschema.validate(job, schema)


@pytest.mark.parametrize("inputs, criteria, field, words", [
    ({"speed": "1800 to 900 rpm"}, None, "inputs.speed", "smaller value to the larger"),
    ({"stiffness_per_mount": "350 kN/m ± 100 %"}, None, "inputs.stiffness_per_mount",
     "under 100 %"),
    ({"mass": {"value": "1200 kg", "tolerance": "15 %"}}, None, "inputs.mass.tolerance",
     "cannot read the tolerance"),
    ({"mounts": {"value": 4, "tolerance": "± 1 %"}}, None, "inputs.mounts.tolerance",
     "applies to a quantity"),
    ({"mass": {"value": "1200 kg", "sauce": "x"}}, None, "inputs.mass", "unknown key 'sauce'"),
    ({"mass": {"source": "x"}}, None, "inputs.mass.value", "needs 'value'"),
    ({"mass": {"value": "1200 kg", "source": ""}}, None, "inputs.mass.source", "empty"),
    ({}, {"min_efficiency": "0.8 to 0.9"}, "criteria.min_efficiency", "one value"),
    ({"speed": "0 to 1500 rpm"}, None, "inputs.speed", "leaves the accepted values"),
])
def test_bad_spreads_name_the_field(tmp_path, plugins, inputs, criteria, field, words):
    with pytest.raises(JobError) as err:
        load(tmp_path, plugins, inputs, criteria)
    assert any(p.field == field and words in p.message for p in err.value.problems), \
        err.value.problems


def test_the_schema_refuses_what_check_refuses_in_the_new_forms(plugins, schema):
    bad = make_job({"plugin": "isolation", "inputs": {**BASE, "mass": {"value": "1 kg",
                                                                       "unit": "kg"}}})
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(bad, schema)
    crit = make_job({"plugin": "isolation", "inputs": BASE,
                     "criteria": {"min_efficiency": "0.8 to 0.9"}})
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(crit, schema)
