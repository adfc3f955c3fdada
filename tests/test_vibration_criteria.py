"""The criteria library against the reference cases K1–K3, J1–J3 and T5 (sources in each case),
the standards' own statements of the curve shapes, and the library's rules (lookup, files)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from conftest import REPO
from reportgen_plugins.vibration_criteria import (
    BAND_VELOCITY,
    BUILTIN,
    OVERALL_VELOCITY,
    PPV,
    Criterion,
    DataFileError,
    UnknownCriterionError,
    classify,
    limit_at,
    lookup,
    neighbours,
    read_criteria_file,
    zone_of,
)
from reportgen_plugins.vibration_criteria.library import STATUSES

UM = 1e-6
MM = 1e-3
UIN = 25.4e-9  # m per micro-inch (exact, by the definition of the inch)


def _cases(name: str) -> dict[str, dict]:
    data = json.loads((REPO / "tests" / "data" / name).read_text(encoding="utf-8"))
    return {c["id"].split("_")[0]: c for c in data["cases"]}


CASES = _cases("check_cases.json")
WAVE2 = _cases("check_cases_wave2.json")

# --- K1: flat levels of the building and VC curves --------------------------------------
# Source: Gordon, Proc. SPIE 1619 (1991); IEST-RP-CC012; ASHRAE TC 2.6 table; ISO 2631-2:1989
# base curve × 1/2/4/8 (status corroborated_secondary in the reference file).
K1_NAMES = {
    "workshop_ISO": "ISO-workshop", "office_ISO": "ISO-office",
    "residential_day_ISO": "ISO-residential-day", "operating_theatre_ISO": "ISO-theatre",
    **{f"VC-{x}": f"VC-{x}" for x in "ABCDEFG"},
}


@pytest.mark.parametrize("key,name", sorted(K1_NAMES.items()))
def test_k1_flat_levels_above_8_hz(key, name):
    case = CASES["K1"]
    level = case["expected"][f"{key}_um_per_s"]["value"] * UM
    criterion = lookup(name)
    assert criterion.quantity == BAND_VELOCITY
    # flat from 8 Hz to 80 Hz at the tabulated level, exactly (rel_tol 0 in the case)
    assert np.allclose(limit_at(criterion, [8.0, 10.0, 16.0, 31.5, 63.0, 80.0]), level,
                       rtol=1e-12, atol=0)
    # the µin/s column is the same curve in US units: metric values are the rounded ones
    uin = case["expected"][f"{key}_uin_per_s"]["value"] * UIN
    assert abs(uin / level - 1) < 0.02
    # the reference's dB re 1e-8 m/s column
    assert math.isclose(20 * math.log10(level / 1e-8),
                        case["expected"][f"{key}_dB_re_1e-8_m_per_s"]["value"], rel_tol=1e-4)


def test_k1_each_vc_letter_halves_the_previous():
    # Source: K1 formula "each VC letter halves the previous (VC-A = 50 um/s)"; VC-E..G are
    # printed rounded (3.12, 1.56, 0.78) in the sources, hence 1 % here.
    levels = [float(limit_at(lookup(f"VC-{x}"), 16.0)) for x in "ABCDEFG"]
    for a, b in zip(levels, levels[1:], strict=False):
        assert abs(a / b - 2.0) < 0.01


def test_k2_classification_of_an_invented_spectrum():
    # Source: K2 (Gordon 1991 / IEST-RP-CC012 curves; invented spectrum), status
    # formula_confirmed_example_invented.
    case = CASES["K2"]
    f = case["inputs"]["band_centres"]["value"]
    v = [x * UM for x in case["inputs"]["v_rms_bands"]["value"]]
    result = classify(list(zip(f, v, strict=True)))
    assert result.met == case["expected"]["most_stringent_curve_met"]["value"]
    assert result.next == "VC-D" and not case["expected"]["meets_VC-D"]["value"]
    assert math.isclose(result.margin_db, case["expected"]["margin_to_VC-C_dB"]["value"],
                        rel_tol=1e-4)
    assert result.governing_frequency == case["expected"]["band_of_max"]["value"]


def test_k3_vc_a_as_acceleration():
    # Source: K3, kinematics a = 2π f v (common practice, no source).
    case = CASES["K3"]
    vc_a = lookup("VC-A")
    for f, key in ((8.0, "a_rms_8Hz"), (4.0, "a_rms_4Hz")):
        a = 2 * math.pi * f * float(limit_at(vc_a, f))
        assert math.isclose(a, case["expected"][key]["value"], rel_tol=1e-4)


@pytest.mark.parametrize("spectrum", ["A", "B"])
def test_t5_classification_against_iso_and_vc_curves(spectrum):
    # Source: T5 (Gordon 1991; IEST-RP-CC012; ASHRAE TC 2.6; ISO 2631-2:1989), status
    # corroborated_secondary; the answer does not depend on the curves' shape below 8 Hz.
    case = WAVE2["T5"]
    f = case["inputs"]["band_centres"]["value"]
    v = [x * UM for x in case["inputs"][f"spectrum_{spectrum}_v_rms"]["value"]]
    e = case["expected"]
    result = classify(list(zip(f, v, strict=True)))
    assert lookup(result.met) is lookup(e[f"spectrum_{spectrum}_most_stringent_curve_met"]
                                         ["value"])
    assert lookup(result.next) is lookup(e[f"spectrum_{spectrum}_next_curve"]["value"])
    assert math.isclose(result.margin_db, e[f"spectrum_{spectrum}_margin_to_met_curve_dB"]
                        ["value"], rel_tol=1e-4)
    assert math.isclose(result.exceedance_db,
                        e[f"spectrum_{spectrum}_exceedance_of_next_curve_dB"]["value"],
                        rel_tol=1e-4)
    assert result.governing_frequency == e[f"spectrum_{spectrum}_governing_band"]["value"]
    assert list(result.exceeding_next) == e[f"spectrum_{spectrum}_bands_exceeding_next_curve"][
        "value"]


def test_a_spectrum_exactly_on_a_curve_meets_it():
    # VERIFICATION.md: a value exactly on a limit meets it (T5 formula: "exactly on a curve
    # passes").
    f = [8.0, 16.0, 31.5]
    result = classify([(x, 12.5 * UM) for x in f])
    assert result.met == "VC-C" and result.margin_db == 0.0


def test_nothing_met_names_the_least_stringent_curve_as_next():
    result = classify([(10.0, 2000 * UM)])
    assert result.met is None and result.next == "ISO-workshop"
    assert math.isclose(result.exceedance_db, 20 * math.log10(2000 / 800))


# --- shapes below 8 Hz and the construction curves: the standards as recalled -------------


def test_iso_base_curve_shape_below_8_hz():
    # ISO 2631-2:1989 z-axis base curve (from memory, status from_memory): constant
    # acceleration 4–8 Hz, acceleration ∝ f^-1/2 from 1 to 4 Hz.
    base = lookup("ISO-theatre")
    f = np.array([4.0, 5.0, 6.3, 8.0])
    accel = 2 * np.pi * f * limit_at(base, f)
    assert np.allclose(accel, accel[0], rtol=1e-12)
    f = np.array([1.0, 2.0, 4.0])
    accel = 2 * np.pi * f * limit_at(base, f)
    assert np.allclose(accel * np.sqrt(f), accel[0], rtol=1e-12)
    assert math.isclose(float(limit_at(lookup("ISO-office"), 2.0)),
                        4 * float(limit_at(base, 2.0)), rel_tol=1e-12)


def test_din_4150_3_table_values_and_straight_lines():
    # DIN 4150-3:2016 Table 1 (from memory, status from_memory): line 1 20 mm/s below 10 Hz,
    # 20→40 mm/s 10–50 Hz, 40→50 mm/s 50–100 Hz; lines 2 and 3 the same way.
    line1, line2, line3 = (lookup(f"din4150-3-line{i}") for i in (1, 2, 3))
    assert np.allclose(limit_at(line1, [5, 10, 30, 50, 75, 100, 200]),
                       np.array([20, 20, 30, 40, 45, 50, 50]) * MM, rtol=1e-12)
    assert np.allclose(limit_at(line2, [5, 30, 100]), np.array([5, 10, 20]) * MM, rtol=1e-12)
    assert np.allclose(limit_at(line3, [5, 30, 100]), np.array([3, 5.5, 10]) * MM,
                       rtol=1e-12)
    assert all(c.quantity == PPV and c.status == "from_memory" for c in (line1, line2, line3))


def test_bs_7385_2_line2_and_its_displacement_part():
    # BS 7385-2:1993 Table 1 (from memory): 15 mm/s at 4 Hz, 20 at 15 Hz, 50 at 40 Hz and
    # above; below 4 Hz 0.6 mm zero-to-peak displacement, v = 2π f d (kinematics).
    line2 = lookup("BS7385-2-line2")
    assert np.allclose(limit_at(line2, [4, 15, 40, 100]), np.array([15, 20, 50, 50]) * MM,
                       rtol=1e-12)
    for f in (1.0, 2.0, 3.0):
        # drawn through the table's 15 mm/s at 4 Hz, i.e. 0.597 mm: 0.6 % of the 0.6 mm note
        d = float(limit_at(line2, f)) / (2 * math.pi * f)
        assert abs(d - 0.6e-3) < 0.006 * 0.6e-3
    assert float(limit_at(lookup("BS7385-2-line1"), 10.0)) == 50 * MM


# --- J1–J3: machinery zones --------------------------------------------------------------

J1_NAMES = {
    "group1_rigid": "ISO10816-3-group1-rigid", "group1_flexible": "ISO10816-3-group1-flexible",
    "group2_rigid": "ISO10816-3-group2-rigid", "group2_flexible": "ISO10816-3-group2-flexible",
}


@pytest.mark.parametrize("key,name", sorted(J1_NAMES.items()))
def test_j1_iso_10816_3_boundaries(key, name):
    # Source: J1, ISO 10816-3:2009 Annex A (corroborated_secondary).
    case = CASES["J1"]
    c = lookup(name)
    expected = [case["expected"][f"{key}_{b}"]["value"] * MM for b in ("AB", "BC", "CD")]
    assert c.quantity == OVERALL_VELOCITY and list(c.values) == pytest.approx(expected,
                                                                            rel=1e-12)
    assert c.zones == ("A", "B", "C", "D") and c.status == case["source_status"]


def test_j2_iso_10816_3_classification():
    # Source: J2 (ISO 10816-3:2009, values from memory as labelled there).
    case = CASES["J2"]
    for value, group, support in case["inputs"]["readings"]["value"]:
        key = f"v{value:g}_{group}_{support}"
        zone = zone_of(value * MM, lookup(f"ISO10816-3-{group}-{support}"))
        assert zone == case["expected"][key]["value"], key


def test_j3_iso_10816_1_classes():
    # Source: J3, ISO 10816-1:1995 Annex B (corroborated_secondary).
    case = CASES["J3"]
    for cls in ("I", "II", "III", "IV"):
        c = lookup(f"iso10816-1-class-{cls}")
        assert list(c.values) == pytest.approx(
            [x * MM for x in case["expected"][f"class_{cls}_AB_BC_CD"]["value"]], rel=1e-12)
    assert zone_of(2.0 * MM, lookup("ISO10816-1-class-I")) == case["expected"]["v2.0_class_I"][
        "value"]
    assert zone_of(2.0 * MM, lookup("ISO10816-1-class-III")) == case["expected"][
        "v2.0_class_III"]["value"]


def test_a_value_on_a_zone_boundary_belongs_to_the_lower_zone():
    # VERIFICATION.md: "a value exactly on a boundary belongs to the lower zone".
    c = lookup("ISO10816-3-group2-rigid")
    assert zone_of(c.values[0], c) == "A"
    assert zone_of(math.nextafter(c.values[0], 1.0), c) == "B"
    assert zone_of(c.values[2], c) == "C" and zone_of(1.0, c) == "D"


# --- the library's rules ---------------------------------------------------------------


def test_every_builtin_names_its_source_and_an_honest_status():
    names = [c.name.casefold() for c in BUILTIN]
    assert len(set(names)) == len(names)
    for c in BUILTIN:
        assert c.source and c.title and c.status in STATUSES and c.status != "user_supplied"
        # printed text never says "from memory"; the status label carries that
        assert "memory" not in (c.source + c.title + c.notes).lower()


def test_lookup_is_case_insensitive_with_aliases_and_suggests_near_names():
    assert lookup("vc-a") is lookup("VC-A") is lookup("VC_A")
    assert lookup("Workshop_ISO") is lookup("iso-workshop")
    with pytest.raises(UnknownCriterionError) as info:
        lookup("VC-H")
    assert "VC-G" in info.value.suggestions and "VC-H" in str(info.value)
    with pytest.raises(UnknownCriterionError) as info:
        lookup("zzz")
    assert "VC-A" in str(info.value)  # no near name: the known names are listed


def test_lookup_finds_extra_curves_and_refuses_a_clash():
    own = Criterion(name="LAB-1", title="Lab floor", quantity=BAND_VELOCITY,
                    frequencies=(1.0, 80.0), values=(3 * UM, 3 * UM), source="invented",
                    status="user_supplied")
    assert lookup("lab-1", extra=(own,)) is own
    clash = Criterion(name="VC-A", title="Other", quantity=BAND_VELOCITY, values=(1 * UM,),
                      source="invented", status="user_supplied")
    with pytest.raises(ValueError, match="more than once"):
        lookup("VC-A", extra=(clash,))


def test_neighbours_for_the_figure():
    assert [c.name for c in neighbours(lookup("VC-C"))] == ["VC-B", "VC-C", "VC-D"]
    assert [c.name for c in neighbours(lookup("VC-G"))] == ["VC-F", "VC-G"]
    assert [c.name for c in neighbours(lookup("ISO-theatre"))] == [
        "ISO-residential-night", "ISO-theatre", "VC-A"]
    own = Criterion(name="LAB-1", title="Lab floor", quantity=BAND_VELOCITY,
                    frequencies=(1.0, 80.0), values=(10 * UM, 10 * UM), source="invented",
                    status="user_supplied")
    assert [c.name for c in neighbours(own)] == ["VC-C", "LAB-1", "VC-D"]  # 12.5 > 10 > 6.25


def test_criterion_checks_its_own_data():
    with pytest.raises(ValueError, match="ascend"):
        Criterion(name="X", title="X", quantity=BAND_VELOCITY, frequencies=(8.0, 4.0),
                  values=(1.0, 1.0), source="s", status="user_supplied")
    with pytest.raises(ValueError, match="one value per frequency"):
        Criterion(name="X", title="X", quantity=BAND_VELOCITY, frequencies=(4.0, 8.0),
                  values=(1.0,), source="s", status="user_supplied")
    with pytest.raises(ValueError, match="status"):
        Criterion(name="X", title="X", quantity=PPV, values=(1.0,), source="s", status="ok")


# --- a firm's own curves -----------------------------------------------------------------

CSV_OK = b"""# title: Scanner floor specification (invented maker Veskar Imaging)
# source: Veskar Imaging site planning guide, rev. C (invented)
frequency [Hz],VESKAR-MR7 [um/s],VESKAR-CT2 [um/s]
1,40,80
8,20,40
80,20,40
"""


def test_read_criteria_csv():
    a, b = read_criteria_file("maker.csv", CSV_OK)
    assert a.name == "VESKAR-MR7" and b.name == "VESKAR-CT2" and a.status == "user_supplied"
    assert a.source.startswith("Veskar Imaging") and a.frequencies == (1.0, 8.0, 80.0)
    # log-log interpolation: half way (geometrically) between 1 and 8 Hz
    assert math.isclose(float(limit_at(a, math.sqrt(8.0))), math.sqrt(40 * 20) * UM,
                        rel_tol=1e-12)
    assert lookup("veskar-ct2", extra=(a, b)) is b


def test_read_criteria_toml():
    data = b"""
[[criterion]]
name = "LAB-QUIET"
title = "Metrology room (invented)"
source = "client brief (invented)"
points = [["1 Hz", "6 um/s"], ["4 Hz", "3 um/s"], ["100 Hz", "3 um/s"]]
"""
    (c,) = read_criteria_file("firm.toml", data)
    assert c.quantity == BAND_VELOCITY and float(limit_at(c, 50.0)) == pytest.approx(3 * UM)


@pytest.mark.parametrize("name,data,row,column,words", [
    ("x.csv", b"frequency [Hz],A [um/s]\n1,40\n8,abc\n", 3, "A [um/s]", "abc"),
    ("x.csv", b"frequency [Hz],A [um/s]\n1,40\n8,\n", 3, "A [um/s]", "empty"),
    ("x.csv", b"frequency [Hz],A [um/s]\n8,40\n1,20\n", None, "A [um/s]", "ascend"),
    ("x.csv", b"frequency [Hz],A [kg]\n1,40\n", 1, "A [kg]", "velocity"),
    ("x.csv", b"frequency [Hz],A\n1,40\n", 1, "A", "unit"),
    ("x.csv", b"frequency [Hz],A [um/s]\n1,40,3\n", 2, "", "cells"),
    ("x.toml", b"[[criterion]]\nname='A'\ntitle='A'\npoints=[['1 Hz','3 kg']]\n", None,
     "criterion[1].points[1]", "velocity"),
    ("x.toml", b"[[criterion]]\nname='A'\npoints=[]\n", None, "criterion[1]", "title"),
    ("x.toml", b"not toml =", None, "", "TOML"),
    ("x.xlsx", b"", None, "", "unknown criteria file type"),
])
def test_bad_criteria_files_name_file_row_and_column(name, data, row, column, words):
    with pytest.raises(DataFileError) as info:
        read_criteria_file(name, data)
    err = info.value
    assert err.file == name and err.row == row and err.column == column
    assert words in err.message and name in str(err)
