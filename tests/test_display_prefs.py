"""Display units chosen per package: the job's own units, a firm's units.toml, defaults."""

from __future__ import annotations

from reportgen.document.compute import firm_units
from reportgen.units import display_units, preferences


def test_the_unit_the_job_gave_becomes_the_familys_display_unit():
    du = preferences([("stiffness", "N/mm"), ("stiffness", "kN/m"), ("mass", "lbf"),
                      ("length", "mils")], "US")
    assert du.show(350e3, "stiffness") == ("350", "N/mm")  # the first given wins
    assert du.show(2.54e-5, "length") == ("1", "mil")
    assert du.family_unit("mass") == "lb"  # a weight for a mass sets no mass unit


def test_a_firms_units_toml_sets_what_the_job_does_not(tmp_path):
    (tmp_path / "units.toml").write_text('[SI]\nforce = "N"\nlength = "kg"\n'
                                         'stiffness = "MN/m"\n', encoding="utf-8")
    firm = firm_units(tmp_path, "SI")
    du = preferences([("stiffness", "kN/m")], "SI", firm)
    assert du.family_unit("force") == "N"
    assert du.family_unit("stiffness") == "kN/m"  # the job's own unit first
    assert du.family_unit("length") == "mm"  # a unit that is not a length is ignored
    assert firm_units(tmp_path / "absent", "SI") == {}


def test_keys_round_trip():
    du = preferences([("length", "mm"), ("stiffness", "N/mm")], "SI")
    assert display_units(du.key) == du
